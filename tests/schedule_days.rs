//! Days to a target and to exclusion on schedules with a commissioning period
//! and pauses, against the exact roots of a single counting window.
//!
//! One bin with s and b events per live day and no systematic uncertainty:
//! the Asimov discovery Z_A^2 = 2 L ((s+b) ln(1+s/b) - s) (Cowan, Cranmer,
//! Gross, Vitells, EPJC 71 (2011) 1554, eq. 97) and the background-only Asimov
//! q_mu,A = 2 L (mu s - b ln(1 + mu s/b)) (the same paper, eq. 12 with the
//! data n = b) are both proportional to the live days L, so each target is
//! reached after a live time known in closed form, and the calendar day is
//! that live time mapped back through the schedule by hand.

mod common;

use runcast::model::Model;
use runcast::projection::{Projection, ProjectionSettings, project};
use runcast::scenario::{Period, Spacing};
use statrs::distribution::{Continuous, ContinuousCDF, Normal};

/// Signal and background events per live day (invented numbers).
const SIGNAL: f64 = 10.0;
const BACKGROUND: f64 = 1000.0;
const TOYS: usize = 2000;

fn window(schedule: &str) -> Model {
    common::model(&format!(
        "title: counting window on a schedule\n\
         observable: {{name: x, unit: a.u., range: [0.0, 1.0], bin_width: 1.0}}\n\
         signal: {{events_per_day: {SIGNAL}, shape: {{flat: {{}}}}}}\n\
         backgrounds:\n  - {{name: flat, events_per_day: {BACKGROUND}, shape: {{flat: {{}}}}}}\n\
         schedule: {schedule}\n\
         plan: {{days: {{first: 1, last: 10, points: 2, spacing: log}}, toys: 1, seed: 1, targets: [3]}}\n"
    ))
}

fn run(model: &Model, days: &[f64]) -> Projection {
    project(model, &settings(days), &|_| {}).expect("projection")
}

/// Live days to reach Z_A = 3 (eq. 97, proportional to live days).
fn live_days_to_three_sigma() -> f64 {
    let (s, b) = (SIGNAL, BACKGROUND);
    9.0 / (2.0 * ((s + b) * (s / b).ln_1p() - s))
}

/// Live days until the median expected limit on mu is 1: q_1,A =
/// Phi^-1(1 - alpha/2)^2 at alpha = 0.05 (Cowan et al. 2011, eq. 89 with
/// q~ = q for a background-only Asimov dataset, whose fitted mu is 0).
fn live_days_to_exclusion() -> f64 {
    let (s, b) = (SIGNAL, BACKGROUND);
    let level = Normal::standard().inverse_cdf(0.975);
    level * level / (2.0 * (s - b * (s / b).ln_1p()))
}

/// Statistical tolerance on a toy day: the toy median of Z has an error of
/// about 1.25/sqrt(N) (Z spreads by 1 with many counts; common practice), so
/// Z^2 and the live time interpolated from it have a relative error of
/// 2.5/(sqrt(N) Z) at the grid point; four such errors.
fn toy_tolerance(days: f64, z_at_grid: f64) -> f64 {
    4.0 * days * 2.5 / ((TOYS as f64).sqrt() * z_at_grid)
}

/// The toy limits spread by about sigma_A around a median of 1.96 sigma_A
/// (Cowan et al. 2011, eqs. 88-89), so the median limit has the relative
/// error of a toy median Z of 1.96 in [`toy_tolerance`], at any exposure.
const LIMIT_Z: f64 = 1.96;

#[test]
fn toy_days_across_a_pause_agree_with_the_exact_roots() {
    // Live fraction 0.8, commissioning at half rate for 20 days, no beam from
    // day 20 to 120 (invented): 8 live days by day 20, none added until 120,
    // then 0.8 a day. One grid point at day 300 (152 live days).
    let model = window(
        "{live_fraction: 0.8, periods: [{days: 20, rate_scale: 0.5}, {days: 100, rate_scale: 0}]}",
    );
    let calendar = |live: f64| 120.0 + (live / 0.8 - 10.0);
    let projection = run(&model, &[300.0]);
    let point = &projection.points[0];
    assert!((point.live_days - 152.0).abs() < 1e-9);

    let three_sigma = calendar(live_days_to_three_sigma());
    let row = &projection.days_to_target[0];
    let median = row.median_days.expect("toy median reaches 3 sigma");
    let tolerance = toy_tolerance(three_sigma, point.z_median.unwrap());
    assert!(
        (median - three_sigma).abs() < tolerance,
        "toy median at {median} d, exact {three_sigma} d (tolerance {tolerance})"
    );

    let exclusion = calendar(live_days_to_exclusion());
    let median = projection
        .days_to_exclusion
        .median_days
        .expect("toy exclusion");
    let tolerance = toy_tolerance(exclusion, LIMIT_Z);
    assert!(
        (median - exclusion).abs() < tolerance,
        "toy exclusion at {median} d, exact {exclusion} d (tolerance {tolerance})"
    );
}

#[test]
fn no_toy_day_falls_inside_a_pause() {
    // A grid with points before, inside and after the pause: every day found
    // lies where live time accrues (before day 20 or after day 120).
    let model = window(
        "{live_fraction: 0.8, periods: [{days: 20, rate_scale: 0.5}, {days: 100, rate_scale: 0}]}",
    );
    let projection = run(&model, &[5.0, 60.0, 400.0]);
    let row = &projection.days_to_target[0];
    let exclusion = &projection.days_to_exclusion;
    for (name, day) in [
        ("asimov_days", row.asimov_days),
        ("median_days", row.median_days),
        ("p50_days", row.p50_days),
        ("p90_days", row.p90_days),
        ("exclusion asimov_days", exclusion.asimov_days),
        ("exclusion median_days", exclusion.median_days),
    ] {
        let day = day.unwrap_or_else(|| panic!("{name} within the grid"));
        assert!(
            !(day > 20.0 && day < 120.0),
            "{name} at {day} d, inside the pause"
        );
    }
}

#[test]
fn asimov_roots_across_a_pause_are_the_first_day_with_enough_live_time() {
    // The grid points at day 10 and 300 bracket both roots, with the pause
    // between them; root finding must land on the exact calendar day.
    let model = window(
        "{live_fraction: 0.8, periods: [{days: 20, rate_scale: 0.5}, {days: 100, rate_scale: 0}]}",
    );
    let calendar = |live: f64| 120.0 + (live / 0.8 - 10.0);
    let projection = run(&model, &[10.0, 300.0]);
    // Bisection stops at a relative width of 1e-7; the fits are converged far
    // beyond that, so 1e-6 relative is the promised precision with margin.
    for (found, exact) in [
        (
            projection.days_to_target[0].asimov_days,
            calendar(live_days_to_three_sigma()),
        ),
        (
            projection.days_to_exclusion.asimov_days,
            calendar(live_days_to_exclusion()),
        ),
    ] {
        let found = found.expect("root within the grid");
        assert!((found / exact - 1.0).abs() < 1e-6, "{found} d vs {exact} d");
    }
}

#[test]
fn a_leading_pause_keeps_the_toy_days_to_exclusion() {
    // No data for the first 50 days, then full rate (invented): the first two
    // grid points have no live time and no limit, yet the median limit falls
    // below 1 inside the grid, so the toy days to exclusion must be found.
    let model = window("{live_fraction: 1.0, periods: [{days: 50, rate_scale: 0}]}");
    let projection = run(&model, &[10.0, 30.0, 200.0]);
    assert_eq!(projection.points[0].live_days, 0.0);
    assert_eq!(projection.points[1].live_days, 0.0);
    let exclusion = 50.0 + live_days_to_exclusion();
    let median = projection
        .days_to_exclusion
        .median_days
        .expect("toy days to exclusion within the grid");
    let tolerance = toy_tolerance(exclusion, LIMIT_Z);
    assert!(
        (median - exclusion).abs() < tolerance,
        "toy exclusion at {median} d, exact {exclusion} d (tolerance {tolerance})"
    );
    let three_sigma = 50.0 + live_days_to_three_sigma();
    let median = projection.days_to_target[0].median_days.expect("3 sigma");
    let tolerance = toy_tolerance(three_sigma, projection.points[2].z_median.unwrap());
    assert!(
        (median - three_sigma).abs() < tolerance,
        "toy median at {median} d, exact {three_sigma} d (tolerance {tolerance})"
    );
}

#[test]
fn narrow_peak_demo_with_one_grid_point_agrees_with_asimov() {
    // The shipped demo (a commissioning period at half rate for 20 days) with a
    // single grid point at day 100.
    demo_with_one_grid_point_agrees_with_asimov(&[], 100.0);
}

#[test]
fn narrow_peak_demo_with_a_pause_agrees_with_asimov() {
    // The same with no beam from day 20 to 120, one grid point at day 200:
    // every day found lies after the pause.
    let pause = Period::uniform(100.0, 0.0);
    let projection = demo_with_one_grid_point_agrees_with_asimov(&[pause], 200.0);
    for day in [
        projection.days_to_target[0].median_days,
        projection.days_to_target[0].p50_days,
        projection.days_to_exclusion.median_days,
    ] {
        assert!(day.unwrap() > 120.0, "{day:?} d, not after the pause");
    }
}

/// The narrow-peak demo with `periods` added to its schedule and one grid
/// point at `day`: the toy-median days to 3 sigma, the day 50% of the toys
/// reach it, and the days to exclusion agree with the root-found Asimov days
/// within the toy statistics (with many counts the toy medians follow Z_A and
/// the Asimov limit; Cowan et al. 2011, sec. 5.1 and eqs. 88-89).
fn demo_with_one_grid_point_agrees_with_asimov(periods: &[Period], day: f64) -> Projection {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios/narrow_peak.yaml");
    let mut scenario = runcast::scenario::Scenario::load(&path).expect("demo scenario");
    scenario.schedule.periods.extend(periods.iter().cloned());
    let model = Model::from_scenario(&scenario);
    let settings = ProjectionSettings {
        title: scenario.title.clone(),
        days: vec![day],
        day_spacing: Spacing::Log,
        detector_mass_kg: None,
        at_days: Vec::new(),
        toys: TOYS,
        seed: scenario.plan.seed,
        targets: vec![3.0],
        cl: Some(0.95),
        calibration_toys: 0,
        scan: None,
        look_elsewhere_toys: 0,
    };
    let projection = project(&model, &settings, &|_| {}).expect("projection");
    let point = &projection.points[0];
    let row = &projection.days_to_target[0];
    let asimov_three_sigma = row.asimov_days.expect("Asimov 3 sigma within the grid");
    let median = row.median_days.expect("toy 3 sigma within the grid");
    let tolerance = toy_tolerance(asimov_three_sigma, point.z_median.unwrap());
    assert!(
        (median - asimov_three_sigma).abs() < tolerance,
        "toy median at {median} d, Asimov {asimov_three_sigma} d (tolerance {tolerance})"
    );
    // The day 50% of the toys reach 3 sigma is where the median does: the
    // fraction P at the grid point has a binomial error sqrt(P (1 - P)/N),
    // which moves the significance it stands for, 3 + Phi^-1(P) (Cowan et al.
    // 2011, sec. 5.1), by that error over the normal density at Phi^-1(P).
    let normal = Normal::standard();
    let fraction = point.probability[0].toys.unwrap();
    let quantile = normal.inverse_cdf(fraction);
    let spread = (fraction * (1.0 - fraction) / TOYS as f64).sqrt() / normal.pdf(quantile);
    let half = row
        .p50_days
        .expect("50% of toys reach 3 sigma within the grid");
    let tolerance = 4.0 * asimov_three_sigma * 2.0 * spread / (3.0 + quantile);
    assert!(
        (half - asimov_three_sigma).abs() < tolerance,
        "50% of toys at {half} d, Asimov {asimov_three_sigma} d (tolerance {tolerance})"
    );
    let exclusion = &projection.days_to_exclusion;
    let asimov = exclusion
        .asimov_days
        .expect("Asimov exclusion within the grid");
    let median = exclusion
        .median_days
        .expect("toy exclusion within the grid");
    let tolerance = toy_tolerance(asimov, LIMIT_Z);
    assert!(
        (median - asimov).abs() < tolerance,
        "toy exclusion at {median} d, Asimov {asimov} d (tolerance {tolerance})"
    );
    projection
}

/// Z_A of one bin with s signal and b background events and nothing
/// uncertain (Cowan et al., EPJC 71 (2011) 1554, eq. 97).
fn counting_z(s: f64, b: f64) -> f64 {
    (2.0 * ((s + b) * (s / b).ln_1p() - s)).sqrt()
}

#[test]
fn a_background_halved_from_day_t_on_matches_a_hand_computation() {
    // Shielding halves the background from day 40 to the end of the run
    // (invented). By calendar day D > 40 at live fraction 0.8 the window
    // holds s = 0.8 x 10 D and b = 0.8 x 1000 x (40 + (D - 40)/2)
    // (live-time-weighted expectations, common practice), and Z_A is eq. 97
    // at those counts.
    let model =
        window("{live_fraction: 0.8, periods: [{days: 40}, {background_scale: {flat: 0.5}}]}");
    let by_hand = |day: f64| {
        let halved = (day - 40.0).max(0.0);
        (
            0.8 * SIGNAL * day,
            0.8 * BACKGROUND * (day.min(40.0) + 0.5 * halved),
        )
    };
    let grid = [20.0, 100.0, 400.0];
    let mut settings = settings(&grid);
    settings.toys = 0;
    let projection = project(&model, &settings, &|_| {}).expect("projection");
    for point in &projection.points {
        let (s, b) = by_hand(point.days);
        assert!((point.live_days - 0.8 * point.days).abs() < 1e-9);
        assert!(
            (point.signal - s).abs() < 1e-9 * s,
            "{} vs {s}",
            point.signal
        );
        assert!(
            (point.background - b).abs() < 1e-9 * b,
            "{} vs {b}",
            point.background
        );
        let z = counting_z(s, b);
        // The fit converges far below 1e-6 of Z_A (see the roots test above).
        assert!(
            (point.z_asimov / z - 1.0).abs() < 1e-6,
            "{} vs {z}",
            point.z_asimov
        );
    }
    // The day Z_A reaches 3, solved by bisection on the hand counts: the
    // root-found Asimov day agrees to the promised 1e-6.
    let (mut low, mut high) = (grid[0], grid[2]);
    while high - low > 1e-9 * high {
        let middle = 0.5 * (low + high);
        let (s, b) = by_hand(middle);
        if counting_z(s, b) < 3.0 {
            low = middle;
        } else {
            high = middle;
        }
    }
    let found = projection.days_to_target[0].asimov_days.expect("3 sigma");
    assert!(found > 40.0, "the halving must matter: {found} d");
    assert!((found / high - 1.0).abs() < 1e-6, "{found} d vs {high} d");
}

#[test]
fn a_signal_efficiency_change_mid_run_moves_the_toy_days_with_it() {
    // The signal efficiency drops to 0.25 from day 20 to day 60, full rate
    // before and after (invented). The toy median and 50% days agree with
    // the hand-computed Asimov day within the toy statistics, also though the
    // crossing is interpolated in live days across the change.
    let model = window("{periods: [{days: 20}, {days: 40, signal_scale: 0.25}]}");
    let by_hand = |day: f64| {
        let efficiency_days =
            day.min(20.0) + 0.25 * (day.min(60.0) - 20.0).max(0.0) + (day - 60.0).max(0.0);
        (SIGNAL * efficiency_days, BACKGROUND * day)
    };
    // Z_A dips while the efficiency is low (1.30 at day 30, 1.22 at day 60)
    // and passes 3 near day 145; grid points at 140 and 160 bracket it.
    let projection = run(&model, &[30.0, 140.0, 160.0]);
    let (mut low, mut high) = (30.0, 160.0);
    while high - low > 1e-9 * high {
        let middle = 0.5 * (low + high);
        let (s, b) = by_hand(middle);
        if counting_z(s, b) < 3.0 {
            low = middle;
        } else {
            high = middle;
        }
    }
    let row = &projection.days_to_target[0];
    let asimov = row.asimov_days.expect("Asimov 3 sigma");
    assert!((asimov / high - 1.0).abs() < 1e-6, "{asimov} d vs {high} d");
    let median = row.median_days.expect("toy 3 sigma");
    let tolerance = toy_tolerance(high, projection.points[1].z_median.unwrap());
    assert!(
        (median - high).abs() < tolerance,
        "toy median at {median} d, hand {high} d (tolerance {tolerance})"
    );
    let half = row.p50_days.expect("50% of toys reach 3 sigma");
    assert!(
        (half - high).abs() < tolerance,
        "50% of toys at {half} d, hand {high} d (tolerance {tolerance})"
    );
}

#[test]
fn factors_all_one_give_the_very_same_projection_as_no_schedule() {
    // Periods whose rate, signal and background factors are all 1 change
    // nothing: every number of the projection, toys included, bit for bit.
    let plain = window("{}");
    let neutral = window(
        "{periods: [{days: 12.3, rate_scale: 1, signal_scale: 1, background_scale: {flat: 1}}, {days: 7, rate_scale: 1}]}",
    );
    let mut settings = settings(&[5.0, 17.5, 60.0]);
    settings.toys = 200;
    let one = project(&plain, &settings, &|_| {}).expect("projection");
    let other = project(&neutral, &settings, &|_| {}).expect("projection");
    assert_eq!(format!("{one:?}"), format!("{other:?}"));
}

fn settings(days: &[f64]) -> ProjectionSettings {
    ProjectionSettings {
        title: "schedule".to_string(),
        days: days.to_vec(),
        day_spacing: Spacing::Log,
        detector_mass_kg: None,
        at_days: Vec::new(),
        toys: TOYS,
        seed: 20261202,
        targets: vec![3.0],
        cl: Some(0.95),
        calibration_toys: 0,
        scan: None,
        look_elsewhere_toys: 0,
    }
}
