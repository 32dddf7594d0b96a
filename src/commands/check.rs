//! `runcast check`: validate a scenario and print what it implies, asymptotically.

use super::load_scenario;
use crate::error::Error;
use crate::model::{Model, fraction_inside, shape_from_spec};
use crate::projection::{ProjectionSettings, project};
use crate::scenario::{Scenario, ShapeSpec};

pub fn run(path: &std::path::Path) -> Result<(), Error> {
    let scenario = load_scenario(path)?;
    let model = Model::from_scenario(&scenario);
    println!("{}: valid", path.display());
    println!("  {}", scenario.title);
    print_rates(&scenario, &model);

    let settings = ProjectionSettings {
        title: scenario.title.clone(),
        days: scenario.plan.days.days(),
        toys: 0,
        seed: scenario.plan.seed,
        targets: scenario.plan.targets.clone(),
        cl: Some(scenario.plan.cl),
        calibration_toys: 0,
    };
    let projection = project(&model, &settings, &|_| {})?;
    let last_day = settings.days.last().copied().unwrap_or_default();
    println!("  asymptotic days to target:");
    for days in &projection.days_to_target {
        let answer = match (days.asimov_days, days.saturation_z) {
            (Some(days), _) => format!("{days:.1} days"),
            (None, Some(limit)) if limit < days.target => {
                format!("never: systematic uncertainties cap Z at {limit:.2} sigma")
            }
            (None, _) => format!("not within the grid (beyond {last_day} days)"),
        };
        println!("    {} sigma: {answer}", days.target);
    }
    let exclusion = match projection.days_to_exclusion.asimov_days {
        Some(days) => format!("{days:.1} days"),
        None => format!("not within the grid (beyond {last_day} days)"),
    };
    println!(
        "  asymptotic days until the signal is excluded at {}% CL (median expected CLs limit): {exclusion}",
        scenario.plan.cl * 100.0
    );
    Ok(())
}

fn print_rates(scenario: &Scenario, model: &Model) {
    let (signal, background) = model.nominal_rates();
    let observable = &scenario.observable;
    println!("  signal: {signal:.6} events per live day");
    for b in &scenario.backgrounds {
        println!(
            "  background {}: {:.6} events per live day",
            b.name, b.events_per_day
        );
    }
    println!("  background total: {background:.6} events per live day");
    let Some((low, high)) = peak_window(&scenario.signal.shape, observable.range) else {
        println!("  the signal peak ±2 widths lies outside the range: no S/B at the peak");
        return;
    };
    let in_window =
        |spec: &ShapeSpec, rate: f64| rate * fraction_inside(spec, observable.range, low, high);
    let signal_in = in_window(&scenario.signal.shape, signal);
    let background_in: f64 = scenario
        .backgrounds
        .iter()
        .map(|b| in_window(&b.shape, b.events_per_day))
        .sum();
    println!(
        "  within [{low:.6}, {high:.6}] {}: S = {signal_in:.6}, B = {background_in:.6} per live day, S/B = {:.6}",
        observable.unit,
        signal_in / background_in
    );
}

/// The peak ±2 widths of a peaked shape ([`Shape::peak`](crate::model::shapes::Shape::peak): sigma for a
/// Gaussian, half width at half maximum for a Breit-Wigner), clipped to the
/// range; the whole range for other shapes; None when the window lies
/// entirely outside the range.
fn peak_window(shape: &ShapeSpec, range: [f64; 2]) -> Option<(f64, f64)> {
    let Some(peak) = shape_from_spec(shape, range).peak() else {
        return Some((range[0], range[1]));
    };
    let low = (peak.centre - 2.0 * peak.width).max(range[0]);
    let high = (peak.centre + 2.0 * peak.width).min(range[1]);
    (low < high).then_some((low, high))
}
