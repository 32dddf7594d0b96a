//! The terminal summary: days to each target by each method, days until the
//! nominal signal is excluded, the toy calibration of the discovery p-value,
//! failed fits of each ensemble, and a warning when systematic uncertainties
//! cap the significance.

use super::ensembles::Ensemble;
use crate::calendar::CalendarDate;
use crate::message::{show, show_rounded};
use crate::projection::{
    ABSOLUTE_PRECISION, Calibration, DaysToTarget, LookElsewhere, MIN_CONVERGED_FRACTION,
    Projection, RELATIVE_PRECISION, WithheldDay,
};
use crate::report::kit::dates::{dated_days_label, with_date};
use crate::report::kit::format::{
    DAYS_ROUNDING, aligned, fit_percent, percent_label, target_label,
};
use crate::report::kit::vocabulary::{self, NOT_COMPUTED};
use crate::report::warning_text;

/// What the toy columns mean, and which to quote.
const TOY_COLUMNS: &str = "toy median: the day the median pseudo-experiment reaches the target; 50% of toys: the day half of them have (the same question read from P(Z ≥ target), differing only by interpolation) — quote the toy median.\n";

const COLUMNS: [&str; 5] = [
    "target",
    "Asimov",
    "toy median",
    "50% of toys",
    "90% of toys",
];

/// A plain-text table of calendar days to each target, one row per target,
/// then the days until the nominal signal is excluded (when limits were
/// computed), the calibration table (with `--calibrate`), failed-fit counts
/// and warnings. Each cell is calendar days rounded up ("142 d", "3.1 d"),
/// "never" when the saturation limit of Z_A lies below the target, "not
/// within the grid (last point N d)" when the target lies past the grid,
/// "withheld" where too few fits converged, and "—" for toy
/// columns of an Asimov-only run. With a start date in the schedule every
/// calendar day is followed by its date: "58 d (2027-04-28)".
pub fn summary(projection: &Projection) -> String {
    let mut text = format!("{}\n{}\n\n", projection.title, run_line(projection));
    let last_day = projection.points.last().map_or(0.0, |point| point.days);
    let start = projection.start;
    let mut header = COLUMNS.map(str::to_string).to_vec();
    if projection.scan.is_some() {
        header.extend(GLOBAL_COLUMNS.map(str::to_string));
    }
    let mut rows = vec![header];
    rows.extend(projection.days_to_target.iter().map(|row| {
        let cell = |key, days, available| {
            let withheld = row.withheld.iter().find(|withheld| withheld.day == key);
            match withheld {
                Some(withheld) => withheld_cell(withheld),
                None => days_cell(days, available, row, last_day, start),
            }
        };
        let with_toys = projection.toys > 0;
        let mut cells = vec![
            target_label(row.target),
            cell("asimov_days", row.asimov_days, true),
            cell("median_days", row.median_days, with_toys),
            cell("p50_days", row.p50_days, with_toys),
            cell("p90_days", row.p90_days, with_toys),
        ];
        if let Some(global) = &row.global {
            let measured = projection.look_elsewhere_toys() > 0;
            cells.push(cell(
                "global_asimov_days",
                global.global_asimov_days,
                measured,
            ));
            cells.push(cell(
                "global_median_days",
                global.global_median_days,
                measured && with_toys,
            ));
        }
        cells
    }));
    text.push_str("Calendar days to reach each target\n");
    text.push_str(&aligned(&rows));
    if projection.toys > 0 {
        text.push_str(TOY_COLUMNS);
    }
    text.push_str(DAYS_ROUNDING);
    text.push('\n');
    text.push_str(&solving_line(projection));
    if let Some(line) = scan_line(projection) {
        text.push_str(&line);
    }
    if let Some(cl) = projection.cl {
        text.push_str(&exclusion_line(projection, cl, last_day));
    }
    text.push_str(&super::at_summary::at_days_text(projection));
    if let Some(table) = calibration_table(projection) {
        text.push('\n');
        text.push_str(&table);
    }
    let ensembles = Ensemble::ran(projection);
    if !ensembles.is_empty() {
        text.push('\n');
    }
    for ensemble in &ensembles {
        text.push_str(&failed_fits_lines(projection, ensemble));
    }
    if let Some(line) = saturation_line(&projection.days_to_target) {
        text.push_str(&line);
    }
    text
}

/// How the toy days were solved: "Toy days solved with 14 exposure points
/// beside the grid, each with its own pseudo-experiments, to 0.5% of the day
/// or 0.05 d", and why a withheld day has no number.
fn solving_line(projection: &Projection) -> String {
    if projection.toys == 0 {
        return String::new();
    }
    let mut line = format!(
        "Toy days solved with {} exposure point{} beside the grid, each with its own pseudo-experiments, \
         to {} of the day or {} d.\n",
        projection.solving_points,
        if projection.solving_points == 1 {
            ""
        } else {
            "s"
        },
        percent_label(RELATIVE_PRECISION),
        show(ABSOLUTE_PRECISION)
    );
    let withheld = projection
        .days_to_target
        .iter()
        .flat_map(|row| &row.withheld)
        .chain(&projection.days_to_exclusion.withheld)
        .next();
    if withheld.is_some() {
        line.push_str(&format!(
            "withheld: fewer than {} of the fits converged at an exposure the day comes from, \
             so the quantiles there describe the converged minority only; no day is given.\n",
            percent_label(MIN_CONVERGED_FRACTION)
        ));
    }
    line
}

/// A toy day left out: "withheld (62% converged)".
fn withheld_cell(withheld: &WithheldDay) -> String {
    format!(
        "withheld ({} converged)",
        fit_percent(withheld.converged, withheld.toys)
    )
}

/// The global columns beside the local ones, with a scan.
const GLOBAL_COLUMNS: [&str; 2] = ["global Asimov", "global median"];

/// Above this many standard errors between the toys' and the asymptotic
/// N(u0) the summary warns: the large-sample geometry does not describe the
/// scan (few counts, a scan step too coarse to see every upcrossing).
const UPCROSSING_DISTANCE_WARNING: f64 = 3.0;

/// With a scan, one line on what the global columns account for: "Look-
/// elsewhere effect: 201 positions tested from 10 to 90 in steps of 0.4;
/// mean upcrossings of q0 = 1 per scan, N(u0), at the last point: 5.21 asymptotic (used
/// for the global Asimov columns), 5.30 ± 0.07 from 500 background-only scans
/// per point (1.3 standard errors apart) (global p-values of Gross and
/// Vitells 2010)", and a warning line when the two are far apart.
fn scan_line(projection: &Projection) -> Option<String> {
    let scan = projection.scan.as_ref()?;
    let mut line = format!(
        "Look-elsewhere effect: {} positions tested from {} to {} in steps of {}",
        scan.positions,
        show(scan.from),
        show(scan.to),
        show_rounded(scan.step)
    );
    let last = projection
        .points
        .last()
        .and_then(|point| point.global.as_ref()?.look_elsewhere.as_ref());
    let Some(measured) = last else {
        line.push_str("; no live time, so no global days.\n");
        return Some(line);
    };
    line.push_str(&format!(
        "; {} at the last point: ",
        vocabulary::upcrossings_name(&show(measured.reference_level))
    ));
    let toys = measured.mean_upcrossings.map(|mean| {
        let error = measured
            .mean_upcrossings_error
            .map_or_else(String::new, |error| format!(" ± {error:.2}"));
        format!(
            "{mean:.2}{error} from {} background-only scans per point",
            scan.look_elsewhere_toys
        )
    });
    match (measured.mean_upcrossings_asimov, toys) {
        (Some(asymptotic), toys) => {
            line.push_str(&format!(
                "{asymptotic:.2} asymptotic (used for the global Asimov columns)"
            ));
            if let Some(toys) = toys {
                line.push_str(&format!(", {toys}"));
            }
        }
        (None, Some(toys)) => line.push_str(&format!(
            "{toys} (used for every global column; the asymptotic geometry is degenerate)"
        )),
        (None, None) => line.push_str("none measured, so no global days"),
    }
    let distance = upcrossing_distance(measured);
    if let Some(distance) = distance {
        line.push_str(&format!(" ({distance:.1} standard errors apart)"));
    }
    line.push_str(" (global p-values of Gross and Vitells 2010).\n");
    if let Some(distance) = distance.filter(|d| *d > UPCROSSING_DISTANCE_WARNING) {
        line.push_str(&format!(
            "warning: the toys' and the asymptotic upcrossings differ by {distance:.1} standard errors \
             (more than {UPCROSSING_DISTANCE_WARNING}): the large-sample geometry may not describe this scan.\n"
        ));
    }
    Some(line)
}

/// |N_toys - N_asymptotic| / standard error of N_toys, where both exist.
fn upcrossing_distance(measured: &LookElsewhere) -> Option<f64> {
    let toys = measured.mean_upcrossings?;
    let error = measured.mean_upcrossings_error.filter(|e| *e > 0.0)?;
    let asymptotic = measured.mean_upcrossings_asimov?;
    Some((toys - asymptotic).abs() / error)
}

/// "Days until the nominal signal is excluded at 95% CL (median expected CLs
/// limit): Asimov 32 d, toy median 33 d"; the toy part only with toys.
fn exclusion_line(projection: &Projection, cl: f64, last_day: f64) -> String {
    let start = projection.start;
    let exclusion = &projection.days_to_exclusion;
    let cell = |days: Option<f64>| match (days, exclusion.withheld.first()) {
        (Some(days), _) => dated_days_label(days, start),
        (None, Some(withheld)) => withheld_cell(withheld),
        (None, None) => not_within_grid(last_day, start),
    };
    let mut line = format!(
        "Days until the nominal signal is excluded at {} CL (median expected CLs limit): Asimov {}",
        percent_label(cl),
        cell(exclusion.asimov_days)
    );
    if projection.toys > 0 {
        let median = match exclusion.median_days {
            None if exclusion.withheld.is_empty() => not_within_grid(last_day, start),
            days => cell(days),
        };
        line.push_str(&format!(", toy median {median}"));
    }
    line.push('\n');
    line
}

fn run_line(projection: &Projection) -> String {
    let grid = match (projection.points.first(), projection.points.last()) {
        (Some(first), Some(last)) => {
            let start = projection.start;
            format!(
                "; grid {} to {}",
                grid_day(first.days, start),
                grid_day(last.days, start)
            )
        }
        _ => String::new(),
    };
    if projection.toys == 0 {
        format!("Asimov only (no pseudo-experiments){grid}")
    } else {
        format!(
            "{} pseudo-experiments per exposure point, seed {}{grid}",
            projection.toys, projection.seed
        )
    }
}

fn days_cell(
    days: Option<f64>,
    available: bool,
    row: &DaysToTarget,
    last_day: f64,
    start: Option<CalendarDate>,
) -> String {
    match days {
        Some(days) => dated_days_label(days, start),
        None if !available => NOT_COMPUTED.to_string(),
        None if row.never_reached() => "never".to_string(),
        None => not_within_grid(last_day, start),
    }
}

/// A crossing past the last day of the grid: "not within the grid (last
/// point 365 d)"; the grid is for the figures, and the day is not guessed
/// beyond it.
fn not_within_grid(last_day: f64, start: Option<CalendarDate>) -> String {
    vocabulary::not_within_grid(&grid_day(last_day, start))
}

/// A day of the grid as given, to two decimals at most ("1 d", "1.26 d").
/// With a start date, the date of that day follows ("365 d (2028-02-29)").
fn grid_day(days: f64, start: Option<CalendarDate>) -> String {
    with_date(format!("{} d", (days * 100.0).round() / 100.0), days, start)
}

/// Total failed fits of one ensemble of the toys it ran, the points where it
/// ran none, and its warning (worded by [`warning_text`]) when any point lost
/// more than [`FAILED_FRACTION_WARNING`](crate::warning::FAILED_FRACTION_WARNING)
/// of its toys.
fn failed_fits_lines(projection: &Projection, ensemble: &Ensemble) -> String {
    let total_toys = ensemble.total_toys(projection);
    let total_failed = ensemble.total_failed(projection);
    let points = projection.points.len();
    let points_run = projection.points_run(ensemble.kind);
    if points_run == 0 {
        return format!(
            "{}: none run ({} at any of the {points} points).\n",
            ensemble.heading, ensemble.not_run
        );
    }
    let not_run = if points_run < points {
        format!(
            "; none ran at {} of {points} points ({})",
            points - points_run,
            ensemble.not_run
        )
    } else {
        String::new()
    };
    let mut text = format!(
        "{}: {total_failed} of {total_toys} {} ({}), excluded from {}{not_run}.\n",
        ensemble.heading,
        ensemble.thrown,
        fit_percent(total_failed, total_toys),
        ensemble.results
    );
    if let Some(warning) = projection.failed_fit_warning(ensemble.kind) {
        text.push_str(&format!("warning: {}\n", warning_text(&warning)));
    }
    text
}

/// The discovery significance of the Asimov q0 at each calibrated point:
/// asymptotic, from background-only pseudo-experiments, their difference, and
/// the converged toys; then a note on the tail reach of N converged toys,
/// p = 1/N, at the point with the fewest (the reach the points carry). Where
/// no toy reached the Asimov q0, the toy Z is only known to exceed the reach,
/// written "> 3.29", and the difference is bounded accordingly.
fn calibration_table(projection: &Projection) -> Option<String> {
    let calibrated: Vec<(f64, &Calibration)> = projection
        .points
        .iter()
        .filter_map(|point| Some((point.days, point.calibration.as_ref()?)))
        .collect();
    let toys = projection.calibration_toys;
    let shallowest = calibrated
        .iter()
        .map(|(_, calibration)| *calibration)
        .min_by_key(|calibration| calibration.converged_toys)?;
    let reached = shallowest.converged_toys;
    let header = [
        "days",
        "Z asymptotic",
        "Z toys",
        "asymptotic − toys",
        "toys",
    ];
    let mut rows = vec![header.map(str::to_string).to_vec()];
    rows.extend(calibrated.iter().map(|(days, calibration)| {
        let z = calibration.z_asymptotic;
        let (z_toys, difference) = match (calibration.z_toys, calibration.tail_reach_z) {
            (Some(z_toys), _) => (two_decimals(z_toys), two_decimals(z - z_toys)),
            (None, Some(reach)) => (
                format!("> {}", two_decimals(reach)),
                format!("< {}", two_decimals(z - reach)),
            ),
            (None, None) => (NOT_COMPUTED.to_string(), NOT_COMPUTED.to_string()),
        };
        vec![
            grid_day(*days, projection.start),
            two_decimals(z),
            z_toys,
            difference,
            calibration.converged_toys.to_string(),
        ]
    }));
    Some(format!(
        "Discovery Z of the Asimov q0, asymptotic and from {toys} background-only \
         pseudo-experiments per point\n{}{}",
        aligned(&rows),
        tail_reach_note(reached, shallowest.tail_reach_z)
    ))
}

/// The note on the deepest tail `reached` converged toys resolve, p = 1/N at
/// Z ≈ `reach`; fewer than two resolve none.
fn tail_reach_note(reached: usize, reach: Option<f64>) -> String {
    match reach {
        Some(reach) => format!(
            "note: {reached} background-only pseudo-experiments resolve p-values down to 1/{reached}, \
             Z ≈ {}; where none reaches the Asimov q0, the toy Z is only known to lie above that.\n",
            two_decimals(reach)
        ),
        None => format!(
            "note: at one point only {reached} background-only pseudo-experiments converged, \
             too few to resolve any p-value below 1; where none reaches the Asimov q0, \
             the toy Z is unknown (—).\n"
        ),
    }
}

/// A significance to two decimals, without a negative zero.
fn two_decimals(value: f64) -> String {
    format!("{:.2}", (value * 100.0).round() / 100.0 + 0.0)
}

/// One line when systematic uncertainties make Z_A saturate, or when it stays
/// 0 however long the run, naming the targets that are therefore never
/// reached.
fn saturation_line(rows: &[DaysToTarget]) -> Option<String> {
    let (row, limit) = rows.iter().find_map(|row| Some((row, row.saturation_z?)))?;
    let never: Vec<String> = rows
        .iter()
        .filter(|row| row.never_reached())
        .map(|row| target_label(row.target))
        .collect();
    let consequence = if never.is_empty() {
        "longer runs gain less and less".to_string()
    } else {
        format!("never reached: {}", never.join(", "))
    };
    let cause = if row.signal_unseen() {
        "Z_A stays 0 however long the run: the signal is too small to change any fit".to_string()
    } else {
        format!("systematic uncertainties make Z_A saturate at {limit:.2}σ however long the run")
    };
    Some(format!("warning: {cause}; {consequence}.\n"))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::projection::example;

    #[test]
    fn table_of_the_tiny_example() {
        let text = summary(&example::tiny());
        let expected = "\
Invented counting search
200 pseudo-experiments per exposure point, seed 7; grid 10 d to 100 d

Calendar days to reach each target
target   Asimov   toy median   50% of toys   90% of toys
3σ       42 d     44 d         45 d          98 d
5σ       never    never        never         never
toy median: the day the median pseudo-experiment reaches the target; 50% of toys: the day half of them have (the same question read from P(Z ≥ target), differing only by interpolation) — quote the toy median.
Days are rounded up (to three significant digits below a tenth of a day, to the next tenth of a day below 10 days, to the next whole day from there on); projection.csv and .json keep full precision.
Toy days solved with 6 exposure points beside the grid, each with its own pseudo-experiments, to 0.5% of the day or 0.05 d.

Failed fits: 2 of 400 pseudo-experiments (0.50%), excluded from the quantiles.
warning: more than 0.1% of fits failed at 1 of 2 exposure points (worst: 2 of 200 at 100 d, 1.00%); the quantiles there may be biased.
warning: systematic uncertainties make Z_A saturate at 4.50σ however long the run; never reached: 5σ.
";
        assert_eq!(text, expected);
    }

    #[test]
    fn a_target_past_the_grid_is_not_within_it() {
        let mut projection = example::tiny();
        projection.days_to_target[1].saturation_z = None;
        projection.days_to_target[0].saturation_z = None;
        let text = summary(&projection);
        let beyond = "not within the grid (last point 100 d)";
        assert!(
            text.contains(&format!(
                "5σ       {beyond}   {beyond}   {beyond}   {beyond}\n"
            )),
            "{text}"
        );
        assert!(!text.contains("saturate"));
    }

    #[test]
    fn a_day_from_too_few_converged_fits_is_withheld() {
        let mut projection = example::tiny();
        projection.days_to_target[0].median_days = None;
        projection.days_to_target[0].withheld = vec![WithheldDay {
            day: "median_days",
            converged: 124,
            toys: 200,
        }];
        let text = summary(&projection);
        assert!(
            text.contains("3σ       42 d     withheld (62.00% converged)   45 d"),
            "{text}"
        );
        assert!(text.contains("withheld: fewer than 90% of the fits converged"));
    }

    #[test]
    fn asimov_only_leaves_toy_columns_empty() {
        let text = summary(&example::asimov_only());
        assert!(text.contains("Asimov only (no pseudo-experiments); grid 1 d to 1000 d\n"));
        assert!(
            text.contains("5σ       never    —            —             —\n"),
            "{text}"
        );
        assert!(!text.contains("Failed fits"));
        assert!(text.contains("saturate at 4.00σ however long the run; never reached: 5σ.\n"));
    }

    #[test]
    fn few_failures_give_no_warning() {
        let mut projection = example::tiny();
        projection.toys = 5000;
        let text = summary(&projection);
        assert!(text.contains("Failed fits: 2 of 10000 pseudo-experiments (0.02%)"));
        assert!(!text.contains("more than 0.1%"));
    }

    #[test]
    fn days_to_exclusion_follow_the_table() {
        // Invented limits: median 1.96 σ_μ with σ_μ = sqrt(8d + (0.02·8d)²)/(1.6d)
        // reaches 1 at d = 12.48 (13 d); the toy median, 2% higher, at 13.01 d (14 d).
        let text = summary(&example::with_limits());
        let expected = format!(
            "5σ       117 d    123 d        123 d         256 d\n\
             {TOY_COLUMNS}{DAYS_ROUNDING}\n\
             Toy days solved with 0 exposure points beside the grid, each with its own \
             pseudo-experiments, to 0.5% of the day or 0.05 d.\n\
             Days until the nominal signal is excluded at 95% CL (median expected CLs limit): \
             Asimov 13 d, toy median 14 d\n"
        );
        assert!(text.contains(&expected), "{text}");
    }

    #[test]
    fn asimov_only_exclusion_has_no_toy_median() {
        // 3.8415 (8d + (0.05·8d)²) = (1.6d)² at d = 15.80.
        let text = summary(&example::asimov_only_with_limits());
        assert!(
            text.contains("excluded at 95% CL (median expected CLs limit): Asimov 16 d\n"),
            "{text}"
        );
        assert!(!text.contains("toy median 1"));
        assert!(!text.contains("Failed fits"));
    }

    #[test]
    fn exclusion_past_the_grid_is_not_within_it() {
        let mut projection = example::with_limits();
        projection.days_to_exclusion.asimov_days = None;
        projection.days_to_exclusion.median_days = None;
        let text = summary(&projection);
        assert!(text.contains(
            "limit): Asimov not within the grid (last point 1000 d), \
             toy median not within the grid (last point 1000 d)\n"
        ));
    }

    #[test]
    fn without_limits_there_is_no_exclusion_line() {
        let text = summary(&example::with_toys());
        assert!(!text.contains("nominal signal is excluded"));
        assert!(!text.contains("(limits)"));
        assert!(!text.contains("calibration"));
    }

    #[test]
    fn failed_fits_are_counted_per_ensemble() {
        let mut projection = example::with_limits();
        projection.points[0].limit_failed_fits = 5;
        projection.points[7]
            .calibration
            .as_mut()
            .unwrap()
            .failed_fits = 2;
        let text = summary(&projection);
        for expected in [
            "Failed fits: 12 of 62000 pseudo-experiments (0.02%), excluded from the quantiles.\n",
            "Failed fits (limits): 8 of 62000 background-only pseudo-experiments (0.01%), \
             excluded from the limit quantiles.\n",
            "warning: more than 0.1% of limit fits failed at 1 of 31 exposure points \
             (worst: 5 of 2000 at 1.0 d, 0.25%); the limit quantiles there may be biased.\n",
            "Failed fits (q0 calibration): 2 of 155000 background-only pseudo-experiments \
             (<0.01%), excluded from the toy p-values.\n",
        ] {
            assert!(text.contains(expected), "missing {expected:?} in\n{text}");
        }
    }

    #[test]
    fn calibration_table_bounds_the_toy_z_beyond_the_tail_reach() {
        let text = summary(&example::with_limits());
        // Φ⁻¹(1 − 1/5000) = 3.540 (standard normal quantile, from memory).
        for expected in [
            "Discovery Z of the Asimov q0, asymptotic and from 5000 background-only \
             pseudo-experiments per point\n\
             days       Z asymptotic   Z toys   asymptotic − toys   toys\n",
            "note: 5000 background-only pseudo-experiments resolve p-values down to 1/5000, \
             Z ≈ 3.54; where none reaches the Asimov q0, the toy Z is only known to lie above that.\n",
        ] {
            assert!(text.contains(expected), "missing {expected:?} in\n{text}");
        }
        assert!(text.contains("\n1 d        0.55           0.34     0.20                5000\n"));
        assert!(text.contains("\n63.1 d     3.95           > 3.54   < 0.41              5000\n"));
    }

    #[test]
    fn the_tail_reach_is_that_of_the_converged_toys() {
        let mut projection = example::with_limits();
        let calibration = projection.points[3].calibration.as_mut().unwrap();
        calibration.failed_fits = 1000;
        calibration.converged_toys = 4000;
        calibration.tail_reach_z = Calibration::tail_reach(4000);
        let text = summary(&projection);
        // Φ⁻¹(1 − 1/4000) = 3.48 (standard normal quantile, from memory;
        // recomputed with statrs as reference).
        let normal = statrs::distribution::Normal::standard();
        let reach = statrs::distribution::ContinuousCDF::inverse_cdf(&normal, 1.0 - 1.0 / 4000.0);
        assert_eq!(format!("{reach:.2}"), "3.48");
        assert!(
            text.contains(
                "note: 4000 background-only pseudo-experiments resolve p-values down to 1/4000, \
                 Z ≈ 3.48;"
            ),
            "{text}"
        );
    }

    #[test]
    fn one_converged_calibration_toy_resolves_no_tail() {
        // Once a run aborted here on "tail_reach_z is -inf": one converged toy
        // gives p = 1/1, whose Z = Phi^-1(0) is -inf (standard normal quantile).
        let mut projection = example::with_limits();
        let calibration = projection.points[3].calibration.as_mut().unwrap();
        calibration.failed_fits = calibration.converged_toys - 1;
        calibration.converged_toys = 1;
        calibration.exceeding = 0;
        calibration.p_toys = None;
        calibration.z_toys = None;
        calibration.tail_reach_z = Calibration::tail_reach(1);
        let days = grid_day(projection.points[3].days, None);
        crate::report::render_all(
            &projection,
            &crate::report::projection::example::provenance(),
        )
        .unwrap();
        let text = summary(&projection);
        assert!(
            text.contains("note: at one point only 1 background-only pseudo-experiments converged"),
            "{text}"
        );
        let row = text.lines().find(|line| line.starts_with(&days)).unwrap();
        let cells: Vec<&str> = row.split_whitespace().collect();
        assert_eq!(cells[cells.len() - 3..], ["—", "—", "1"], "{row}");
    }

    /// Two points before any live time and one whose Asimov limit is
    /// unbounded: the totals count the toys that ran, not those requested.
    fn with_points_that_ran_no_toys() -> Projection {
        let mut projection = example::with_limits();
        for point in &mut projection.points {
            point.failed_fits = 0;
            point.limit_failed_fits = 0;
        }
        for point in &mut projection.points[..2] {
            point.live_days = 0.0;
            point.calibration = None;
        }
        for point in &mut projection.points[..3] {
            point.limit_asimov = None;
            point.limit_asimov_band = None;
            point.limit_median = None;
            point.limit_band = None;
        }
        projection.points[5].limit_failed_fits = 3;
        projection
    }

    #[test]
    fn failed_fits_count_the_toys_that_ran() {
        // 31 points: discovery and calibration toys at 29, limit toys at 28,
        // of 2000 (limits, discovery) and 5000 (calibration) per point.
        let projection = with_points_that_ran_no_toys();
        let text = summary(&projection);
        for expected in [
            "Failed fits: 0 of 58000 pseudo-experiments (0.00%), excluded from the quantiles; \
             none ran at 2 of 31 points (no live time).\n",
            "Failed fits (limits): 3 of 56000 background-only pseudo-experiments (<0.01%), \
             excluded from the limit quantiles; none ran at 3 of 31 points \
             (no live time, or no bounded Asimov limit).\n",
            "warning: more than 0.1% of limit fits failed at 1 of 28 exposure points \
             (worst: 3 of 2000 at",
            "Failed fits (q0 calibration): 0 of 145000 background-only pseudo-experiments \
             (0.00%), excluded from the toy p-values; none ran at 2 of 31 points (no live time).\n",
        ] {
            assert!(text.contains(expected), "missing {expected:?} in\n{text}");
        }
        let footnote = Ensemble::limits().footnote(&projection).unwrap();
        assert!(
            footnote.starts_with("Failed limit fits: 3 of 56000 "),
            "{footnote}"
        );
    }

    #[test]
    fn an_ensemble_that_never_ran_says_so() {
        let mut projection = with_points_that_ran_no_toys();
        for point in &mut projection.points {
            point.limit_asimov = None;
            point.limit_failed_fits = 0;
        }
        let text = summary(&projection);
        assert!(
            text.contains(
                "Failed fits (limits): none run (no live time, or no bounded Asimov limit \
                 at any of the 31 points).\n"
            ),
            "{text}"
        );
    }
}
