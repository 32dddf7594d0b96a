//! The comparison's files: several run plans (scenarios), each projected as
//! `runcast project` does, on one page. `significance.rs` (`compare.svg`,
//! median expected significance against calendar days), `probability.rs`
//! (`compare-probability.svg`), `limits.rs` (`compare-limits.svg`, only with
//! limits), `csv.rs`, `json.rs`, and `table.rs` for the terminal; with scan
//! plans compared at one exposure (`--reach-days`), `reach/`
//! (`compare-reach.svg`, `.csv`, `.json`). One colour per plan throughout.

mod csv;
mod json;
mod limits;
mod probability;
mod reach;
mod significance;
mod table;

pub use table::comparison_table;

use super::projection::check_projection;
use super::{Kind, Output, Render, Report, ReportError, render};
use crate::message::{show, show_list};
use crate::projection::{Projection, RateStretch};
use crate::provenance::Provenance;
use crate::reach::Reach;
use crate::report::kit::axis::DayScale;
use crate::report::kit::palette::SERIES_COLOURS;
use crate::scenario::Spacing;
use plotters::style::RGBColor;
use std::ops::Range;

/// File name of the significance comparison.
pub const COMPARE_SVG: &str = "compare.svg";
/// File name of the probability comparison.
pub const COMPARE_PROBABILITY_SVG: &str = "compare-probability.svg";
/// File name of the expected-limit comparison (only with limits).
pub const COMPARE_LIMITS_SVG: &str = "compare-limits.svg";
/// File name of the days-per-plan table.
pub const COMPARE_CSV: &str = "compare.csv";
/// File name of the comparison as JSON.
pub const COMPARE_JSON: &str = "compare.json";
/// File name of the reach comparison (only with `--reach-days`).
pub const COMPARE_REACH_SVG: &str = "compare-reach.svg";
/// File name of the reach comparison's table.
pub const COMPARE_REACH_CSV: &str = "compare-reach.csv";
/// File name of the reach comparison as JSON.
pub const COMPARE_REACH_JSON: &str = "compare-reach.json";
/// Every file `render_comparison` can give: the output set of `runcast compare`.
pub const COMPARE_FILES: [&str; 8] = [
    COMPARE_SVG,
    COMPARE_PROBABILITY_SVG,
    COMPARE_LIMITS_SVG,
    COMPARE_CSV,
    COMPARE_JSON,
    COMPARE_REACH_SVG,
    COMPARE_REACH_CSV,
    COMPARE_REACH_JSON,
];

/// One run plan of a comparison: the file it came from, its name in the
/// legend and tables, its projection and, when the plans' reach is
/// compared, its reach at that one exposure.
#[derive(Debug, Clone)]
pub struct ComparedPlan {
    pub file: String,
    pub label: String,
    pub projection: Projection,
    pub reach: Option<Reach>,
}

/// Several run plans sharing targets and confidence level, the first being
/// the one the others are compared with.
#[derive(Debug, Clone)]
pub struct Comparison {
    pub plans: Vec<ComparedPlan>,
}

impl Comparison {
    /// The plans' labels as a figure title names them: "Now vs Upgrade first".
    fn plans_compared(&self) -> String {
        let labels: Vec<&str> = self.plans.iter().map(|plan| plan.label.as_str()).collect();
        labels.join(" vs ")
    }

    fn first(&self) -> &Projection {
        &self.plans[0].projection
    }

    fn with_toys(&self) -> bool {
        self.first().toys > 0
    }

    /// True when some plan scans the signal position: its days in global
    /// significance are compared too.
    fn with_scan(&self) -> bool {
        self.plans.iter().any(|plan| plan.projection.scan.is_some())
    }

    /// The day axis of the figures: linear when every plan's grid asks for
    /// one, logarithmic otherwise.
    fn day_spacing(&self) -> Spacing {
        let linear = self
            .plans
            .iter()
            .all(|plan| plan.projection.day_spacing == Spacing::Linear);
        if linear {
            Spacing::Linear
        } else {
            Spacing::Log
        }
    }

    /// The day axis of the figures: [`Comparison::day_spacing`], dated when
    /// every plan starts on the same date.
    fn day_scale(&self) -> DayScale {
        let start = self.first().start;
        let shared = self.plans.iter().all(|plan| plan.projection.start == start);
        DayScale::new(self.day_spacing(), start.filter(|_| shared))
    }

    /// The stretches at other than nominal rates when every plan has the
    /// same schedule, and none otherwise (the figures shade one schedule).
    fn shared_rate_stretches(&self) -> &[RateStretch] {
        let stretches = &self.first().rate_stretches;
        let shared = self
            .plans
            .iter()
            .all(|plan| plan.projection.rate_stretches == *stretches);
        if shared { stretches } else { &[] }
    }
}

/// Renders every file of the comparison in memory: `compare.svg`,
/// `compare-probability.svg`, `compare-limits.svg` (with limits),
/// `compare.csv`, `compare.json`. Each projection is checked as for
/// `runcast project`, and the plans must share targets, confidence level and
/// the use of pseudo-experiments.
pub fn render_comparison(
    comparison: &Comparison,
    provenance: &Provenance,
) -> Result<Vec<Report>, ReportError> {
    check_comparison(comparison)?;
    type Renderer = fn(&Comparison) -> Result<Vec<u8>, ReportError>;
    let output = |name: &str, kind, render: Renderer| Output::new(name, kind, comparison, render);
    let outputs = [
        Some(output(COMPARE_SVG, Kind::Figure, significance::render)),
        Some(output(
            COMPARE_PROBABILITY_SVG,
            Kind::Figure,
            probability::render,
        )),
        comparison
            .first()
            .cl
            .map(|_| output(COMPARE_LIMITS_SVG, Kind::Figure, limits::render)),
        Some(output(COMPARE_CSV, Kind::Table, csv::render)),
        Some(output(COMPARE_JSON, Kind::Document, json::render)),
    ];
    let with_reach = comparison.plans[0].reach.is_some();
    let reach_outputs = [
        output(COMPARE_REACH_SVG, Kind::Figure, reach::figure::render),
        output(COMPARE_REACH_CSV, Kind::Table, reach::csv::render),
        output(COMPARE_REACH_JSON, Kind::Document, reach::json::render),
    ];
    let reach_outputs = reach_outputs.iter().filter(|_| with_reach);
    let outputs: Vec<&dyn Render> = outputs
        .iter()
        .flatten()
        .chain(reach_outputs)
        .map(|output| output as &dyn Render)
        .collect();
    render(&outputs, provenance)
}

fn check_comparison(comparison: &Comparison) -> Result<(), ReportError> {
    let Some(first) = comparison.plans.first() else {
        return Err(ReportError::InvalidProjection {
            field: "plans".to_string(),
            value: "empty".to_string(),
            expected: "at least one plan",
        });
    };
    for (index, plan) in comparison.plans.iter().enumerate() {
        let shared = |name: &str, value: String, same: bool| {
            if same {
                Ok(())
            } else {
                Err(ReportError::InvalidProjection {
                    field: format!("plans[{index}].{name}"),
                    value,
                    expected: "the same as the first plan's",
                })
            }
        };
        let projection = &plan.projection;
        let reference = &first.projection;
        shared(
            "targets",
            show_list(&projection.targets),
            projection.targets == reference.targets,
        )?;
        shared(
            "cl",
            projection
                .cl
                .map_or_else(|| "none (no limits)".to_string(), show),
            projection.cl == reference.cl,
        )?;
        shared(
            "toys",
            projection.toys.to_string(),
            (projection.toys > 0) == (reference.toys > 0),
        )?;
        check_projection(projection)?;
        check_reach(index, plan, first)?;
    }
    Ok(())
}

/// With reaches, every plan has one, at one exposure, over the first plan's
/// positions and in its rate unit.
fn check_reach(index: usize, plan: &ComparedPlan, first: &ComparedPlan) -> Result<(), ReportError> {
    let invalid = |name: &str, value: String, expected: &'static str| {
        Err(ReportError::InvalidProjection {
            field: format!("plans[{index}].reach{name}"),
            value,
            expected,
        })
    };
    let (reach, reference) = match (&plan.reach, &first.reach) {
        (None, None) => return Ok(()),
        (Some(reach), Some(reference)) => (reach, reference),
        (reach, _) => {
            let value = if reach.is_some() { "a reach" } else { "none" };
            return invalid("", value.to_string(), "a reach for every plan or none");
        }
    };
    if reach.exposures.len() != 1 {
        return invalid(
            ".exposures",
            reach.exposures.len().to_string(),
            "one exposure",
        );
    }
    let positions = |reach: &Reach| -> Vec<f64> {
        reach.exposures[0]
            .positions
            .iter()
            .map(|p| p.position)
            .collect()
    };
    if positions(reach) != positions(reference) {
        return invalid(
            ".positions",
            format!("{} positions", reach.exposures[0].positions.len()),
            "the first plan's positions",
        );
    }
    if reach.rate_unit != reference.rate_unit {
        return invalid(
            ".rate_unit",
            reach.rate_unit.clone(),
            "the first plan's unit",
        );
    }
    Ok(())
}

/// The colour of the plan at `index`.
fn plan_colour(index: usize) -> RGBColor {
    SERIES_COLOURS[index % SERIES_COLOURS.len()]
}

/// Calendar days covered by any plan's grid (a factor of two either side of a
/// single day). Grids are not empty (checked before rendering).
fn day_range(comparison: &Comparison) -> Range<f64> {
    let days = comparison
        .plans
        .iter()
        .flat_map(|plan| plan.projection.points.iter().map(|point| point.days));
    let (low, high) = days.fold((f64::INFINITY, 0.0_f64), |(low, high), day| {
        (low.min(day), high.max(day))
    });
    if high > low {
        low..high
    } else {
        low / 2.0..low * 2.0
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::report::projection::example;

    /// Two invented plans: the example projection and one reaching every
    /// target in half the days.
    pub(crate) fn two_plans(toys: bool) -> Comparison {
        let first = if toys {
            example::with_limits()
        } else {
            example::asimov_only_with_limits()
        };
        let mut faster = first.clone();
        for point in &mut faster.points {
            point.days /= 2.0;
        }
        for row in &mut faster.days_to_target {
            row.asimov_days = row.asimov_days.map(|days| days / 2.0);
            row.median_days = row.median_days.map(|days| days / 2.0);
        }
        let exclusion = &mut faster.days_to_exclusion;
        exclusion.asimov_days = exclusion.asimov_days.map(|days| days / 2.0);
        exclusion.median_days = exclusion.median_days.map(|days| days / 2.0);
        let plan = |file: &str, label: &str, projection: Projection| ComparedPlan {
            file: file.to_string(),
            label: label.to_string(),
            projection,
            reach: None,
        };
        Comparison {
            plans: vec![
                plan("now.yaml", "Now", first),
                plan("upgrade.yaml", "Upgrade", faster),
            ],
        }
    }

    #[test]
    fn every_file_renders_in_order() {
        for toys in [false, true] {
            let reports = render_comparison(&two_plans(toys), &example::provenance()).unwrap();
            let names: Vec<&str> = reports.iter().map(|report| report.name.as_str()).collect();
            assert_eq!(names, COMPARE_FILES[..5]);
            for report in &reports {
                assert!(!report.bytes.is_empty());
            }
        }
    }

    fn shutdown(from: f64) -> RateStretch {
        RateStretch {
            from,
            to: from + 20.0,
            rate_scale: 0.0,
            signal_scale: 1.0,
            background_scale: Vec::new(),
        }
    }

    #[test]
    fn a_schedule_shared_by_every_plan_is_shaded_and_others_are_not() {
        let mut comparison = two_plans(true);
        for plan in &mut comparison.plans {
            plan.projection.rate_stretches = vec![shutdown(100.0)];
        }
        let figure = |comparison: &Comparison| {
            String::from_utf8(significance::render(comparison).unwrap()).unwrap()
        };
        assert!(figure(&comparison).contains("\nno data\n</text>"));
        comparison.plans[1].projection.rate_stretches = vec![shutdown(200.0)];
        assert!(!figure(&comparison).contains("\nno data\n</text>"));
    }

    #[test]
    fn the_day_axis_is_linear_only_when_every_plan_asks_for_it() {
        let mut comparison = two_plans(false);
        assert_eq!(comparison.day_spacing(), Spacing::Log);
        comparison.plans[0].projection.day_spacing = Spacing::Linear;
        assert_eq!(comparison.day_spacing(), Spacing::Log);
        comparison.plans[1].projection.day_spacing = Spacing::Linear;
        assert_eq!(comparison.day_spacing(), Spacing::Linear);
    }

    #[test]
    fn plans_with_other_targets_are_refused() {
        let mut comparison = two_plans(false);
        comparison.plans[1].projection.targets = vec![2.0];
        let error = render_comparison(&comparison, &example::provenance())
            .unwrap_err()
            .to_string();
        assert!(error.contains("plans[1].targets"), "{error}");
    }
}
