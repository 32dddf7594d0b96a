//! The terminal summary of `runcast replan`: what the data taken say (the
//! fit, the observed significance and limit, each background against the
//! plan, the goodness of fit), then how much longer in each hypothesis, and
//! the probability of reaching each target by each day of the plan.

use crate::calendar::CalendarDate;
use crate::projection::{ExposurePoint, Projection};
use crate::replan::{BackgroundRate, Future, Hypothesis, Replan};
use crate::report::kit::dates::dated_days_label;
use crate::report::kit::format::{
    aligned, fit_percent, percent_label, probability_label, rounded, target_label,
};
use crate::report::kit::vocabulary::{NOT_COMPUTED, not_within_grid};
use crate::report::warning_text;
use crate::warning::Ensemble;

/// The summary as printed.
pub fn replan_summary(replan: &Replan) -> String {
    let signal = replan.projection(Hypothesis::Signal);
    let start = signal.start;
    let mut text = format!("{}\n", replan.title);
    text += &format!(
        "Re-plan from the data taken by {} ({} live days); {} pseudo-experiments per point and hypothesis, seed {}; the future drawn from {}\n\n",
        dated_days_label(replan.taken_days, start),
        rounded(replan.taken_live_days),
        signal.toys,
        signal.seed,
        match replan.future {
            Future::Fitted => "the fit to the data taken (background as measured)",
            Future::Nominal => "the scenario's values (background as planned)",
        }
    );
    text += &observed_block(replan);
    text += "\n";
    text += &days_block(replan, start);
    text += "\n";
    text += &probability_block(replan, start);
    text += &failed_fits_block(replan);
    text += "Days are rounded up as in the summary of runcast project; replan.csv and replan.json keep full precision.\n";
    text
}

fn observed_block(replan: &Replan) -> String {
    let observed = &replan.observed;
    let mut text = String::from("What the data taken say\n");
    let error = observed
        .fitted_mu_error
        .map_or_else(String::new, |error| format!(" ± {}", rounded(error)));
    text += &format!(
        "signal strength: {}{error} (1 = the scenario's signal)\n",
        rounded(observed.fitted_mu)
    );
    let forecast = replan
        .projection(Hypothesis::Signal)
        .points
        .first()
        .map_or(NOT_COMPUTED.to_string(), |point| {
            format!("{}σ", rounded(point.z_asimov))
        });
    text += &format!(
        "local significance: {}σ (q0 = {}); the original forecast expected Z_A = {forecast} by then\n",
        rounded(observed.z_local),
        rounded(observed.q0)
    );
    if let Some(scan) = &observed.scan {
        let global = scan
            .z_global
            .map_or(NOT_COMPUTED.to_string(), |z| format!("{}σ", rounded(z)));
        text += &format!(
            "scan: best position {}, local {}σ, global {global} (look-elsewhere from the Asimov geometry)\n",
            rounded(scan.best_position),
            rounded(scan.z_local)
        );
    }
    if let Some(limit) = observed.limit {
        let shown = |mu: Option<f64>| mu.map_or("none".to_string(), rounded);
        let toys = if limit.toys > 0 {
            format!(
                "; from pseudo-experiments {} ({} per hypothesis and tested value)",
                shown(limit.toys_mu),
                limit.toys
            )
        } else {
            String::new()
        };
        text += &format!(
            "observed {} CL upper limit on the signal strength: {} (median expected {}; asymptotic CLs){toys}\n",
            percent_label(limit.cl),
            shown(limit.mu),
            shown(limit.expected_mu)
        );
    }
    let fit = &observed.goodness_of_fit;
    let p_value = fit
        .p_value
        .map_or(NOT_COMPUTED.to_string(), probability_label);
    text += &format!(
        "goodness of fit: deviance {} over {} bins, p = {p_value} from {} pseudo-experiments drawn at the fit ({} failed)\n",
        rounded(fit.deviance),
        fit.bins,
        fit.toys,
        fit.failed_fits
    );
    let mut rows = vec![
        [
            "background",
            "planned per live day",
            "fitted per live day",
            "pull",
            "reading",
        ]
        .map(String::from)
        .to_vec(),
    ];
    rows.extend(observed.backgrounds.iter().map(background_row));
    text += &aligned(&rows);
    text
}

fn background_row(background: &BackgroundRate) -> Vec<String> {
    let name = if background.channel.is_empty() {
        background.name.clone()
    } else {
        format!("{} ({})", background.name, background.channel)
    };
    let fitted = match background.fitted_error {
        Some(error) => format!(
            "{} ± {}",
            rounded(background.fitted_per_day),
            rounded(error)
        ),
        None => rounded(background.fitted_per_day),
    };
    let (pull, reading) = match background.pull {
        None => (
            NOT_COMPUTED.to_string(),
            "fixed by the scenario".to_string(),
        ),
        Some(_) if background.as_planned() => (
            format!("{:+.1}σ", background.pull.unwrap_or_default()),
            "as planned".to_string(),
        ),
        Some(pull) => (
            format!("{pull:+.1}σ"),
            format!(
                "{} standard deviations {} the plan",
                rounded(pull.abs()),
                if pull > 0.0 { "above" } else { "below" }
            ),
        ),
    };
    vec![
        name,
        rounded(background.planned_per_day),
        fitted,
        pull,
        reading,
    ]
}

/// A solved day: on the day the data stopped it is reached by the data.
fn day_text(days: Option<f64>, replan: &Replan, projection: &Projection) -> String {
    let start = projection.start;
    let last = last_day(projection);
    match days {
        Some(days) if days <= replan.taken_days => "reached by the data taken".to_string(),
        Some(days) => dated_days_label(days, start),
        None => not_within_grid(&dated_days_label(last, start)),
    }
}

fn days_block(replan: &Replan, start: Option<CalendarDate>) -> String {
    let signal = replan.projection(Hypothesis::Signal);
    let background = replan.projection(Hypothesis::NoSignal);
    let mut text = format!(
        "Calendar days to each target with the signal, keeping the data taken and drawing the rest (from {})\n",
        dated_days_label(replan.taken_days, start)
    );
    if last_day(signal) <= replan.taken_days {
        text += &format!(
            "No day of the plan comes after the data taken (plan.days ends at {}): nothing is left to project; extend plan.days to look further.\n",
            dated_days_label(last_day(&replan.forecast), start)
        );
    }
    let mut rows = vec![
        [
            "target",
            "toy median",
            "50% of toys",
            "90% of toys",
            "original forecast (Asimov)",
        ]
        .map(String::from)
        .to_vec(),
    ];
    for (days, forecast) in signal
        .days_to_target
        .iter()
        .zip(&replan.forecast.days_to_target)
    {
        rows.push(vec![
            target_label(days.target),
            day_text(days.median_days, replan, signal),
            day_text(days.p50_days, replan, signal),
            day_text(days.p90_days, replan, signal),
            forecast.asimov_days.map_or_else(
                || not_within_grid(&dated_days_label(last_day(signal), start)),
                |days| dated_days_label(days, start),
            ),
        ]);
    }
    text += &aligned(&rows);
    if signal.cl.is_some() {
        text += &format!(
            "Days until the scenario's signal is excluded if there is none (median limit without signal): {}\n",
            day_text(background.days_to_exclusion.median_days, replan, background)
        );
    }
    text
}

fn last_day(projection: &Projection) -> f64 {
    projection.points.last().map_or(0.0, |point| point.days)
}

fn probability_block(replan: &Replan, start: Option<CalendarDate>) -> String {
    let signal = replan.projection(Hypothesis::Signal);
    let background = replan.projection(Hypothesis::NoSignal);
    let mut text = String::from(
        "By each day of the plan, with the signal and without it: the median Z and P(Z ≥ target)\n",
    );
    let probabilities: Vec<String> = signal
        .targets
        .iter()
        .map(|target| format!("P(Z ≥ {})", target_label(*target)))
        .collect();
    let mut header = vec!["day".to_string(), "with: median Z".to_string()];
    header.extend(probabilities.iter().cloned());
    header.push("without: median Z".to_string());
    header.extend(probabilities);
    let mut rows = vec![header];
    let cells = |point: &ExposurePoint| -> Vec<String> {
        std::iter::once(point.z_median.map_or(NOT_COMPUTED.to_string(), rounded))
            .chain(
                point
                    .probability
                    .iter()
                    .map(|p| p.toys.map_or(NOT_COMPUTED.to_string(), probability_label)),
            )
            .collect()
    };
    for (point, other) in signal.points.iter().zip(&background.points) {
        let mut row = vec![dated_days_label(point.days, start)];
        row.extend(cells(point));
        row.extend(cells(other));
        rows.push(row);
    }
    text += &aligned(&rows);
    text
}

/// The failed fits of each hypothesis's grid pseudo-experiments, never
/// hidden, with the warning of any point that lost more than 0.1% of them
/// (worded by [`warning_text`]).
fn failed_fits_block(replan: &Replan) -> String {
    let mut text = String::new();
    for (hypothesis, projection) in &replan.conditional {
        let name = match hypothesis {
            Hypothesis::Signal => "with the signal",
            Hypothesis::NoSignal => "without signal",
        };
        let counts: Vec<String> = projection
            .ensembles()
            .into_iter()
            .map(|ensemble| {
                let failed: usize = projection
                    .points
                    .iter()
                    .map(|point| point.failed_fits_of(ensemble))
                    .sum();
                let run = projection.toys_run(ensemble);
                let what = match ensemble {
                    Ensemble::Limits => "limit",
                    _ => "significance",
                };
                format!(
                    "{failed} of {run} {what} pseudo-experiments ({})",
                    fit_percent(failed, run)
                )
            })
            .collect();
        text += &format!(
            "Failed fits {name}: {}, excluded from the quantiles.\n",
            counts.join(", ")
        );
        for warning in projection.warnings() {
            text += &format!("warning: {name}: {}\n", warning_text(&warning));
        }
    }
    text
}
