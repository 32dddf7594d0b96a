use super::*;
use crate::model::Model;
use crate::scenario::Scenario;

/// A scanned Gaussian line of fixed sigma = 1 on a flat, known background
/// over [0, 100] in bins of sigma / 20, with a million background events a
/// day: far from the edges and with large counts.
const FLAT: &str = "\
title: Upcrossing test (invented numbers)
observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 0.05}
signal:
  events_per_day: 50.0
  shape: {gaussian: {mean: 50.0, sigma: 1.0}}
  scan: {from: 30.0, to: 70.0, step: 0.2}
backgrounds:
  - {name: continuum, events_per_day: 1000000, shape: {flat: {}}}
plan:
  days: {first: 1, last: 100, points: 3, spacing: log}
  toys: 10
  seed: 1
  targets: [3, 5]
";

fn geometry_of(model: &Model, scenario: &Scenario, live_days: f64) -> ScanGeometry {
    let scan = scenario.signal_scan().unwrap();
    scan_geometry(&Likelihood::new(model), &scan_path(&scan), live_days).unwrap()
}

/// For a Gaussian signal of width sigma on a flat background with large
/// counts the correlation of Z is exp(-d²/(4 sigma²)), so lambda2 = 1/(2 sigma²)
/// and E N(u0) = L / (2 pi sigma sqrt 2) exp(-u0/2) for q0 (Rice, Bell Syst.
/// Tech. J. 23 (1944) 282; Gross and Vitells, Eur. Phys. J. C 70 (2010) 525).
/// L = 40, sigma = 1, u0 = 1: 2.73035. Bins of sigma/20 widen the template
/// by a relative (1/20)² / 24 = 1e-4, so 1e-3 relative holds.
#[test]
fn flat_background_matches_the_rice_closed_form() {
    let scenario = Scenario::from_yaml(FLAT).unwrap();
    let model = Model::from_scenario(&scenario);
    let geometry = geometry_of(&model, &scenario, 30.0);
    let (length, sigma, u0): (f64, f64, f64) = (40.0, 1.0, 1.0);
    let expected = length / (2.0 * PI * sigma * 2f64.sqrt()) * (-u0 / 2.0).exp();
    let computed = geometry.mean_upcrossings_of_q0(u0);
    assert!(
        (computed / expected - 1.0).abs() < 1e-3,
        "{computed} vs {expected}"
    );
}

/// A scan of a single position has no upcrossings, so the global p-value is
/// the local one (Gross and Vitells 2010 with N = 0).
#[test]
fn one_position_has_no_upcrossings() {
    let scenario = Scenario::from_yaml(FLAT).unwrap();
    let model = Model::from_scenario(&scenario);
    let scan = scenario.signal_scan().unwrap();
    let path = PeakPath {
        interval: [50.0, 50.0],
        parameters_at: Box::new(|m| scan.shape_parameters_at(m)),
        direction_at: Box::new(|_| vec![1.0, 0.0]),
        narrowest_width: 1.0,
    };
    let geometry = scan_geometry(&Likelihood::new(&model), &path, 30.0).unwrap();
    assert_eq!(geometry.mean_upcrossings(0.0), 0.0);
    for z in [1.0, 3.0, 5.0] {
        let global = geometry.global_significance(z);
        assert!((global - z).abs() < 1e-9, "{global} vs {z}");
        assert!((geometry.local_significance_for(z) - z).abs() < 1e-9);
    }
}

/// A falling continuum with a free normalisation and a floated slope, and a
/// resolution growing along the scan, in two identical channels seeing one
/// detector-level signal: each channel's template has the same correlation,
/// and their independent information adds in the metric, so the combined
/// scan has the upcrossings of one channel (Fisher information of
/// independent channels adds: Cowan et al., Eur. Phys. J. C 71 (2011) 1554,
/// sec. 3; elementary).
#[test]
fn two_identical_channels_give_the_same_upcrossings() {
    let channel = |name: &str| {
        format!(
            "  - name: {name}\n    observable: {{name: energy, unit: keV, range: [0.0, 100.0], bin_width: 0.05}}\n    \
             resolution: {{points: [[30.0, 1.0], [70.0, 2.0]]}}\n    backgrounds:\n      - {{name: continuum, \
             events_per_day: 1000, shape: {{exponential: {{slope: -0.02}}}}, norm_uncertainty: free, float_shape: true}}\n"
        )
    };
    let text = |channels: &str| {
        format!(
            "title: Two channels (invented numbers)\nsignal:\n  events_per_day: 50.0\n  \
             shape: {{gaussian: {{mean: 50.0}}}}\n  scan: {{from: 30.0, to: 70.0, step: 0.2}}\nchannels:\n{channels}\
             plan:\n  days: [30]\n  toys: 10\n  seed: 1\n  targets: [3]\n"
        )
    };
    let one = Scenario::from_yaml(&text(&channel("a"))).unwrap();
    let two = Scenario::from_yaml(&text(&(channel("a") + &channel("b")))).unwrap();
    let single = geometry_of(&Model::from_scenario(&one), &one, 30.0).rice_length;
    let stacked = geometry_of(&Model::from_scenario(&two), &two, 30.0).rice_length;
    assert!(
        (stacked / single - 1.0).abs() < 1e-9,
        "{stacked} vs {single}"
    );
}

/// The global p-value is the local one plus E N (Gross and Vitells 2010),
/// and `local_significance_for` inverts `global_significance` (definition).
#[test]
fn global_significance_inverts() {
    let scenario = Scenario::from_yaml(FLAT).unwrap();
    let model = Model::from_scenario(&scenario);
    let geometry = geometry_of(&model, &scenario, 30.0);
    for global in [2.0, 3.0, 5.0] {
        let local = geometry.local_significance_for(global);
        assert!(local > global);
        let back = geometry.global_significance(local);
        assert!((back - global).abs() < 1e-9, "{back} vs {global}");
        let expected = crate::asymptotic::p_value(local) + geometry.mean_upcrossings(local);
        assert!((geometry.global_p_value(local) / expected - 1.0).abs() < 1e-12);
    }
}

/// A line scanned to within three widths of both ends of the range, over a
/// falling continuum with a 5% norm uncertainty and a floated slope and a
/// flat background measured in a control region four times as large, with
/// the signal at half rate for the first 20 days (its own exposure).
const ONE_CHANNEL: &str = "\
title: Table test, one channel (invented numbers)
observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 0.5}
signal:
  events_per_day: 5.0
  shape: {gaussian: {mean: 50.0, sigma: 1.5}}
  scan: {from: 5.0, to: 95.0, step: 0.5}
backgrounds:
  - {name: continuum, events_per_day: 200, shape: {exponential: {slope: -0.03}}, norm_uncertainty: 0.05, float_shape: true}
  - {name: flat, events_per_day: 20, shape: {flat: {}}, control: {ratio: 4.0}}
schedule:
  periods: [{days: 20, signal_scale: 0.5}]
plan:
  days: [30]
  toys: 10
  seed: 1
  targets: [3]
";

/// Two volumes seeing one line with resolutions growing along the scan:
/// a falling continuum with a 10% norm uncertainty in one, a steeper one
/// with a free norm and a floated slope in the other.
const TWO_CHANNELS: &str = "\
title: Table test, two channels (invented numbers)
signal:
  events_per_day: 2.0
  shape: {gaussian: {mean: 50.0}}
  scan: {from: 10.0, to: 90.0, step: 0.5}
channels:
  - name: inner
    observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 1.0}
    resolution: {points: [[0.0, 1.0], [100.0, 3.0]]}
    backgrounds:
      - {name: inner continuum, events_per_day: 50, shape: {exponential: {slope: -0.01}}, norm_uncertainty: 0.1}
  - name: outer
    observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 0.5}
    resolution: {points: [[0.0, 2.0], [100.0, 4.0]]}
    backgrounds:
      - {name: outer continuum, events_per_day: 400, shape: {exponential: {slope: -0.04}}, norm_uncertainty: free, float_shape: true}
plan:
  days: [30]
  toys: 10
  seed: 1
  targets: [3]
";

/// A line of width 1 in bins of 3 over a flat continuum with a narrow
/// background line of width 0.3 at 40: the features of lambda2 are as
/// narrow as the quadrature meets them (a width's scale at each bin edge
/// and at the background line).
const COARSE_BINS: &str = "\
title: Table test, coarse bins (invented numbers)
observable: {name: energy, unit: keV, range: [0.0, 90.0], bin_width: 3.0}
signal:
  events_per_day: 5.0
  shape: {gaussian: {mean: 50.0, sigma: 1.0}}
  scan: {from: 20.0, to: 70.0, step: 0.5}
backgrounds:
  - {name: continuum, events_per_day: 100, shape: {flat: {}}, norm_uncertainty: 0.05}
  - {name: line, events_per_day: 30, shape: {gaussian: {mean: 40.0, sigma: 0.3}}, norm_uncertainty: 0.2}
plan:
  days: [30]
  toys: 10
  seed: 1
  targets: [3]
";

/// Live days from far below to far above the decades the table's rule is
/// refined at (1e-6 to 1e12), through those a plan uses.
const EXPOSURES: [f64; 10] = [1e-8, 1e-3, 0.05, 1.0, 7.3, 30.0, 250.0, 1e4, 1e6, 1e14];

/// The table's geometry at `live_days` and `scan_geometry`'s.
fn table_and_direct(yaml: &str, live_days: &[f64]) -> Vec<(f64, f64)> {
    let scenario = Scenario::from_yaml(yaml).unwrap();
    let model = Model::from_scenario(&scenario);
    let likelihood = Likelihood::new(&model);
    let scan = scenario.signal_scan().unwrap();
    let table = GeometryTable::of_scan(&likelihood, &scan);
    live_days
        .iter()
        .map(|&live_days| {
            let direct = scan_geometry(&likelihood, &scan_path(&scan), live_days).unwrap();
            (table.at(live_days).unwrap().rice_length, direct.rice_length)
        })
        .collect()
}

/// The rice length is an integral; the table and `scan_geometry` each
/// compute it to a relative 1e-10 (`INTEGRATION_TOLERANCE`), the table from
/// inner products scaled exactly with the exposure (module docs of
/// `table.rs`), so they agree to 1e-9 at every exposure, with norm
/// uncertainties, a floated slope, a control region, a signal period of its
/// own, two channels, and bins wider than the line.
#[test]
fn table_equals_the_direct_geometry_at_any_exposure() {
    for yaml in [ONE_CHANNEL, TWO_CHANNELS, COARSE_BINS] {
        for (&live_days, (table, direct)) in
            EXPOSURES.iter().zip(table_and_direct(yaml, &EXPOSURES))
        {
            assert!(
                (table / direct - 1.0).abs() < 1e-9,
                "{live_days} live days: {table} vs {direct}"
            );
        }
    }
}

/// A period that scales one background of a channel and not the other
/// breaks the scaling of the table, which then gives `scan_geometry`'s
/// numbers, bit for bit.
#[test]
fn table_of_a_channel_with_backgrounds_of_different_exposures_is_the_direct_geometry() {
    let yaml = ONE_CHANNEL.replace("signal_scale: 0.5", "background_scale: {flat: 0.5}");
    for (table, direct) in table_and_direct(&yaml, &[0.5, 10.0, 30.0, 1e3]) {
        assert_eq!(table.to_bits(), direct.to_bits(), "{table} vs {direct}");
    }
}
