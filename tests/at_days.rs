//! Days asked for with `--at`: each is a point computed at that day, equal
//! to a one-point run there, whatever the grid; its own random streams
//! leave every grid number unchanged.
//!
//! The outside reference is the closed form of a single counting window
//! with known background: Z_A = sqrt(2 L ((s+b) ln(1+s/b) - s)) (Cowan,
//! Cranmer, Gross, Vitells, EPJC 71 (2011) 1554, eq. 97) and the median
//! expected CLs limit mu_up = sigma_A Phi^-1(1 - alpha/2) with sigma_A^2 =
//! mu^2 / q_mu,A (the same paper, eqs. 30-32 and 88-89), whose q_mu,A on the
//! background-only Asimov dataset is 2 L (mu s - b ln(1 + mu s/b)) (eq. 12
//! with n = b). A CLs limit on mu is a limit on the signal yield, so the
//! limit in signal events per live day is mu_up s, over the run mu_up s L.

mod common;

use runcast::model::Model;
use runcast::projection::{AtDay, ExposurePoint, Projection, ProjectionSettings, project};
use runcast::scenario::Spacing;
use statrs::distribution::{ContinuousCDF, Normal};

/// Signal and background events per live day (invented numbers).
const SIGNAL: f64 = 2.0;
const BACKGROUND: f64 = 50.0;

fn settings(days: &[f64], at_days: &[f64], toys: usize) -> ProjectionSettings {
    ProjectionSettings {
        title: "at days".to_string(),
        days: days.to_vec(),
        day_spacing: Spacing::Log,
        detector_mass_kg: None,
        at_days: at_days.to_vec(),
        toys,
        seed: 20261202,
        targets: vec![3.0, 5.0],
        cl: Some(0.95),
        calibration_toys: 0,
        scan: None,
        look_elsewhere_toys: 0,
    }
}

fn window() -> Model {
    common::counting_window(SIGNAL, BACKGROUND, "")
}

fn run(model: &Model, days: &[f64], at_days: &[f64], toys: usize) -> Projection {
    project(model, &settings(days, at_days, toys), &|_| {}).expect("projection")
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * b.abs().max(1.0)
}

/// The Asimov numbers of two points agree to 1e-9.
fn assert_same_asimov(at: &ExposurePoint, point: &ExposurePoint) {
    assert_eq!(at.days, point.days);
    assert_eq!(at.live_days, point.live_days);
    assert!(close(at.z_asimov, point.z_asimov), "{at:?} {point:?}");
    assert!(close(at.limit_asimov.unwrap(), point.limit_asimov.unwrap()));
    for (a, b) in at
        .limit_asimov_band
        .unwrap()
        .iter()
        .zip(&point.limit_asimov_band.unwrap())
    {
        assert!(close(*a, *b), "{a} {b}");
    }
    for (a, b) in at.probability.iter().zip(&point.probability) {
        assert!(close(a.asimov, b.asimov), "{a:?} {b:?}");
    }
}

#[test]
fn an_at_day_equals_a_one_point_run_there_on_any_grid() {
    let model = window();
    let day = 182.0;
    let alone = run(&model, &[day], &[], 0);
    for grid in [
        vec![1.0, 10.0, 100.0, 365.0],
        vec![5.0, 181.0, 183.0],
        vec![200.0, 400.0],
    ] {
        let projection = run(&model, &grid, &[day], 0);
        assert_eq!(projection.at.len(), 1);
        assert_same_asimov(&projection.at[0].point, &alone.points[0]);
    }
}

#[test]
fn an_at_day_matches_the_counting_window_closed_forms() {
    let model = window();
    let days = 91.5;
    let projection = run(&model, &[1.0, 365.0], &[days], 0);
    let AtDay {
        point,
        signal_per_live_day,
        limit_events_per_live_day,
        limit_events,
        limit_events_per_kg_day,
    } = &projection.at[0];
    assert_eq!(*limit_events_per_kg_day, None, "no detector mass");
    let (s, b) = (SIGNAL * days, BACKGROUND * days);
    // Cowan et al. 2011, eq. 97.
    let z = (2.0 * ((s + b) * (s / b).ln_1p() - s)).sqrt();
    assert!(
        (point.z_asimov - z).abs() < 1e-6 * z,
        "{} {z}",
        point.z_asimov
    );
    // Cowan et al. 2011, eqs. 12, 30-32, 88-89: mu_up solves
    // q_mu,A(mu_up) = Phi^-1(1 - alpha/2)^2 for the median at alpha = 0.05.
    let level = Normal::standard().inverse_cdf(0.975);
    let q = |mu: f64| 2.0 * (mu * s - b * (mu * s / b).ln_1p());
    let (mut low, mut high) = (0.0, 10.0);
    for _ in 0..200 {
        let mid = 0.5 * (low + high);
        if q(mid) < level * level {
            low = mid;
        } else {
            high = mid;
        }
    }
    let mu_up = point.limit_asimov.unwrap();
    assert!((mu_up - low).abs() < 1e-6 * low, "{mu_up} {low}");
    // A limit on mu is a limit on the signal yield (mu scales it).
    assert_eq!(*signal_per_live_day, SIGNAL);
    assert!(close(
        limit_events_per_live_day.asimov.unwrap(),
        mu_up * SIGNAL
    ));
    assert!(close(limit_events.asimov.unwrap(), mu_up * s));
    assert!(close(
        limit_events.asimov_band.unwrap()[2],
        point.limit_asimov_band.unwrap()[2] * s
    ));
    assert_eq!(limit_events.median, None, "no toys, no toy limit");
}

#[test]
fn at_days_change_no_grid_number_and_the_grid_changes_none_of_theirs() {
    let model = window();
    let grid = [10.0, 30.0, 100.0];
    let plain = run(&model, &grid, &[], 200);
    let with_at = run(&model, &grid, &[30.0, 60.0], 200);
    // Exact equality: the grid's pseudo-experiments use the same streams.
    assert_eq!(
        format!("{:?}", plain.points),
        format!("{:?}", with_at.points)
    );
    assert_eq!(
        format!("{:?}", plain.days_to_target),
        format!("{:?}", with_at.days_to_target)
    );
    let other_grid = run(&model, &[5.0, 500.0], &[30.0, 60.0], 200);
    assert_eq!(format!("{:?}", with_at.at), format!("{:?}", other_grid.at));
    // An --at day on a grid day has its own pseudo-experiments: the same
    // Asimov numbers, other toys.
    assert_same_asimov(&with_at.at[0].point, &with_at.points[1]);
    assert_ne!(with_at.at[0].point.z_median, with_at.points[1].z_median);
}

/// With a detector of mass M the limit per kg·day is the limit per live day
/// divided by M (a rate per kg·day times M is a rate per day: common
/// practice in low-background searches), band and toys alike.
#[test]
fn a_detector_mass_gives_the_limits_per_kg_day() {
    let model = window();
    let mass = 4.5;
    let mut with_mass = settings(&[1.0, 365.0], &[91.5], 200);
    with_mass.detector_mass_kg = Some(mass);
    let projection = project(&model, &with_mass, &|_| {}).expect("projection");
    let at = &projection.at[0];
    let per_day = at.limit_events_per_live_day;
    let per_kg_day = at.limit_events_per_kg_day.expect("a mass was given");
    let divided = |value: Option<f64>| value.map(|v| v / mass);
    let each = |a: Option<f64>, b: Option<f64>| {
        let (a, b) = (a.expect("a limit"), b.expect("a limit"));
        assert!((a - b).abs() <= 1e-12 * b.abs(), "{a} {b}");
    };
    each(per_kg_day.median, divided(per_day.median));
    each(per_kg_day.asimov, divided(per_day.asimov));
    for quantile in 0..4 {
        each(
            per_kg_day.band.map(|band| band[quantile]),
            divided(per_day.band.map(|band| band[quantile])),
        );
        each(
            per_kg_day.asimov_band.map(|band| band[quantile]),
            divided(per_day.asimov_band.map(|band| band[quantile])),
        );
    }
    let without = run(&model, &[1.0, 365.0], &[91.5], 200);
    assert_eq!(
        format!("{:?}", without.at[0].point),
        format!("{:?}", at.point),
        "the mass changes no number"
    );
}
