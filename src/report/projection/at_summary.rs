//! The terminal text of the `--at` days: for each, the significance, the
//! probability of reaching each target and the expected limits, as a ratio
//! to the nominal signal, in signal events per live day and over the run.

use super::ensembles::Ensemble;
use crate::projection::{AtDay, EventLimits, Projection};
use crate::report::kit::dates::with_date;
use crate::report::kit::format::{
    aligned, fit_percent, percent_label, probability_label, rounded, target_label,
};

/// The block of every `--at` day, or nothing without them.
pub(super) fn at_days_text(projection: &Projection) -> String {
    if projection.at.is_empty() {
        return String::new();
    }
    let mut text = String::from(
        "\nAt the days asked for (--at), each computed at that day, not read off the grid:\n",
    );
    for at in &projection.at {
        text.push_str(&at_day_text(projection, at));
    }
    text
}

fn at_day_text(projection: &Projection, at: &AtDay) -> String {
    let point = &at.point;
    let day = with_date(
        format!("{} d", rounded(point.days)),
        point.days,
        projection.start,
    );
    let mut text = format!("{day}, {} live days\n", rounded(point.live_days));
    let toys = projection.toys > 0;
    let mut significance = format!("  median significance: Asimov {}σ", rounded(point.z_asimov));
    if let Some(z) = point.z_median {
        significance.push_str(&format!(", toy median {}σ", rounded(z)));
    }
    text.push_str(&significance);
    text.push('\n');
    for probability in &point.probability {
        let mut line = format!(
            "  P(Z ≥ {}): Asimov {}",
            target_label(probability.target),
            probability_label(probability.asimov)
        );
        if let Some(p) = probability.toys {
            line.push_str(&format!(", toys {}", probability_label(p)));
        }
        text.push_str(&line);
        text.push('\n');
    }
    for kind in projection.ensembles() {
        let ensemble = Ensemble::of(kind);
        let (failed, run) = (
            point.failed_fits_of(kind),
            projection.toys_run_at(point, kind),
        );
        text.push_str(&format!(
            "  {}: {failed} of {run} {} ({})\n",
            ensemble.heading,
            ensemble.thrown,
            fit_percent(failed, run)
        ));
    }
    if let Some(cl) = projection.cl {
        text.push_str(&limits_text(at, cl, toys));
    }
    text
}

/// The median and band of one method (toys or Asimov) from a point's limits.
type Pick = fn(&EventLimits) -> (Option<f64>, Option<[f64; 4]>);

/// The table of expected limits: one row per method and unit, the median
/// and its ±1σ, ±2σ band.
fn limits_text(at: &AtDay, cl: f64, toys: bool) -> String {
    let point = &at.point;
    let mu = EventLimits::scaled(point, 1.0);
    let mut rows = vec![
        [
            format!("  expected {} CL upper limit", percent_label(cl)),
            "median".into(),
            "−2σ".into(),
            "−1σ".into(),
            "+1σ".into(),
            "+2σ".into(),
        ]
        .to_vec(),
    ];
    let per_kg_day = at
        .limit_events_per_kg_day
        .as_ref()
        .map(|limits| (limits, "signal events per kg·day"));
    let units: Vec<_> = [
        (&mu, "× the nominal signal"),
        (&at.limit_events_per_live_day, "signal events per live day"),
        (&at.limit_events, "signal events over the run"),
    ]
    .into_iter()
    .chain(per_kg_day)
    .collect();
    let toy_limits: Pick = |l| (l.median, l.band);
    let asimov_limits: Pick = |l| (l.asimov, l.asimov_band);
    let methods = if toys {
        vec![("toys", toy_limits), ("Asimov", asimov_limits)]
    } else {
        vec![("Asimov", asimov_limits)]
    };
    for (method, pick) in methods {
        for &(limits, unit) in &units {
            let (median, band) = pick(limits);
            let cell = |value: Option<f64>| value.map_or_else(|| "none".to_string(), rounded);
            let mut row = vec![format!("    {method}: {unit}"), cell(median)];
            row.extend((0..4).map(|quantile| cell(band.map(|band| band[quantile]))));
            rows.push(row);
        }
    }
    let mut text = aligned(&rows);
    if point.limit_asimov.is_none() {
        text.push_str("    none: no signal strength is excluded at this exposure\n");
    }
    text
}
