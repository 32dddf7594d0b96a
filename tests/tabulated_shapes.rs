//! Tabulated shapes (`{table: ...}`) against closed forms: a table of an
//! exponential's exact bin integrals is that exponential, rows wider than
//! the bins share their content in proportion to the overlap, and a table's
//! scale changes nothing.

mod common;

use common::Scratch;
use runcast::asymptotic::AsimovSignificance;
use runcast::likelihood::Likelihood;
use runcast::model::Model;
use runcast::scenario::Scenario;
use std::fs;

/// A Gaussian peak (3 events per live day at 50, sigma 2) on 200 background
/// events per live day over [0, 100] in 1-wide bins, the background's shape
/// written as `background_shape`; numbers invented for the test.
fn peak_on(background_shape: &str) -> String {
    format!(
        "title: table test (invented numbers)\n\
         observable: {{name: mass, unit: MeV, range: [0.0, 100.0], bin_width: 1.0}}\n\
         signal: {{events_per_day: 3.0, shape: {{gaussian: {{mean: 50.0, sigma: 2.0}}}}}}\n\
         backgrounds:\n  - {{name: continuum, events_per_day: 200.0, shape: {background_shape}, norm_uncertainty: 0.05}}\n\
         plan: {{days: {{first: 1, last: 10, points: 2, spacing: log}}, toys: 1, seed: 1, targets: [3]}}\n"
    )
}

fn asimov_z(model: &Model, live_days: f64) -> f64 {
    AsimovSignificance::new(&Likelihood::new(model))
        .at_live_days(live_days)
        .expect("Asimov fits converge")
}

/// The integral of exp(slope x) over [low, high] (elementary).
fn exponential_integral(slope: f64, low: f64, high: f64) -> f64 {
    ((slope * high).exp() - (slope * low).exp()) / slope
}

/// A table whose rows are the scenario's bins and whose values are the exact
/// bin integrals of exp(-0.02 x) holds the same bin fractions as the
/// analytic exponential (up to rounding), so the median discovery
/// significance Z_A = sqrt(q0 of the Asimov dataset) (Cowan et al., EPJC 71
/// (2011) 1554, sec. 3.2 and eq. 97) agrees to 1e-9 at every exposure.
#[test]
fn table_of_exponential_bin_integrals_gives_the_exponential_z_asimov() {
    let slope = -0.02;
    let edges: Vec<f64> = (0..=100).map(f64::from).collect();
    let values: Vec<f64> = edges
        .windows(2)
        .map(|bin| exponential_integral(slope, bin[0], bin[1]))
        .collect();
    let table = format!("{{table: {{edges: {edges:?}, values: {values:?}}}}}");
    let tabulated = common::model(&peak_on(&table));
    let analytic = common::model(&peak_on(&format!("{{exponential: {{slope: {slope}}}}}")));
    for live_days in [1.0, 30.0, 1000.0] {
        let (from_table, from_formula) = (
            asimov_z(&tabulated, live_days),
            asimov_z(&analytic, live_days),
        );
        assert!(from_formula > 0.5, "a test with some significance");
        assert!(
            (from_table - from_formula).abs() < 1e-9,
            "{live_days} d: table {from_table}, exponential {from_formula}"
        );
    }
}

/// Rows [0, 2), [2, 4), ... twice as wide as the 1-wide bins, contents
/// 1, 2, ..., 5 (total 15), read from a CSV beside the scenario: each bin
/// holds half its row's content, so a background of 30 events per live day
/// expects 30 × r / 30 = r events per live day in each bin of row r
/// (a piecewise-constant density integrates exactly over any sub-interval;
/// elementary). The flat signal adds 3 / 10 per bin.
#[test]
fn rows_twice_as_wide_as_the_bins_give_exact_fractions() {
    let scratch = Scratch::new("table-rows-twice-as-wide");
    let csv = "low,high,value\n0,2,1\n2,4,2\n4,6,3\n6,8,4\n8,10,5\n";
    fs::write(scratch.path.join("continuum.csv"), csv).unwrap();
    let yaml = "title: table file test (invented numbers)\n\
         observable: {name: x, unit: a.u., range: [0.0, 10.0], bin_width: 1.0}\n\
         signal: {events_per_day: 3.0, shape: {flat: {}}}\n\
         backgrounds:\n  - {name: continuum, events_per_day: 30.0, shape: {table: {file: continuum.csv}}}\n\
         plan: {days: {first: 1, last: 10, points: 2, spacing: log}, toys: 1, seed: 1, targets: [3]}\n";
    let path = scratch.path.join("scenario.yaml");
    fs::write(&path, yaml).unwrap();
    let model = Model::from_scenario(&Scenario::load(&path).expect("valid scenario"));
    let likelihood = Likelihood::new(&model);
    let mut work = likelihood.workspace();
    let asimov = likelihood.asimov_dataset(&model.nominal_parameters(), 1.0, &mut work);
    let expected: Vec<f64> = (0..10).map(|bin| (bin / 2 + 1) as f64 + 0.3).collect();
    for (count, expected) in asimov.counts.iter().zip(&expected) {
        assert!((count - expected).abs() < 1e-12, "{:?}", asimov.counts);
    }
}

/// The Asimov projection of a scenario whose background is read from a
/// table with rows [0, 1), [1, 2), [2, 4) holding `values`: `projection.csv`
/// without its provenance line (which holds the table's SHA-256).
fn asimov_projection_with_rows(label: &str, values: [&str; 3]) -> String {
    let scratch = Scratch::new(label);
    let csv = format!(
        "low,high,value\n0,1,{}\n1,2,{}\n2,4,{}\n",
        values[0], values[1], values[2]
    );
    fs::write(scratch.path.join("rows.csv"), csv).unwrap();
    let yaml = "title: table scale test (invented numbers)\n\
         observable: {name: x, unit: a.u., range: [0.0, 4.0], bin_width: 1.0}\n\
         signal: {events_per_day: 2.0, shape: {flat: {}}}\n\
         backgrounds:\n  - {name: b, events_per_day: 10.0, shape: {table: {file: rows.csv}}}\n\
         plan: {days: {first: 1, last: 100, points: 3, spacing: log}, toys: 1, seed: 1, targets: [3]}\n";
    fs::write(scratch.path.join("scenario.yaml"), yaml).unwrap();
    let output = scratch.run(&[
        "project",
        "scenario.yaml",
        "--asimov-only",
        "--out",
        "out",
        "--quiet",
    ]);
    assert!(
        output.status.success(),
        "{values:?}: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    let csv = fs::read_to_string(scratch.path.join("out/projection.csv")).unwrap();
    assert!(csv.starts_with("# provenance: "));
    csv.split_once('\n').unwrap().1.to_string()
}

/// Table values are contents "at any scale": subnormal numbers (1e-320 is
/// 2024 times the smallest f64, so 2e-320 and 4e-320 are exactly twice and
/// four times it) and numbers near the largest f64 give the numbers of the
/// same table at scale 1, digit for digit.
#[test]
fn tables_at_any_scale_give_the_numbers_of_scale_one() {
    let one = asimov_projection_with_rows("table-scale-one", ["1", "2", "4"]);
    let tiny = asimov_projection_with_rows("table-scale-tiny", ["1e-320", "2e-320", "4e-320"]);
    assert_eq!(tiny, one);
    let huge = asimov_projection_with_rows("table-scale-huge", ["4e307", "8e307", "1.6e308"]);
    assert_eq!(huge, one);
}
