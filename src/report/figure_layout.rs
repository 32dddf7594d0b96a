//! Every figure of every shipped demo (`scenarios/*.yaml`), checked from its
//! layout as drawn (`kit/layout.rs`): each title line inside the canvas, no
//! legend over a curve, band, shaded stretch or marker, no text (marker and
//! period labels, footnotes, titles and panel captions) over a curve, a band
//! of quantiles (its outline, not its box), a marker or a leader line, and no
//! label, title or legend over another. Text boxes are estimated at 0.6 of
//! the font size per character, on the wide side, so a pass leaves room to
//! spare.

use super::kit::layout::{ChartBox, Layout, PixelBox, recording};
use super::projection::example::provenance;
use super::{ComparedPlan, Comparison, Kind, Report, ReportError};
use crate::binning::scan_binning;
use crate::levers::{Step, levers};
use crate::model::{Model, shape_from_spec};
use crate::projection::{Projection, ProjectionSettings, project};
use crate::reach::{ReachSettings, reach};
use crate::scenario::Scenario;
use crate::spectrum::pseudo_data_spectrum;
use std::ops::Range;
use std::path::{Path, PathBuf};

/// Every shipped demo scenario, by file name.
fn demos() -> Vec<(String, Scenario)> {
    let folder = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    let mut paths: Vec<PathBuf> = std::fs::read_dir(&folder)
        .unwrap()
        .map(|entry| entry.unwrap().path())
        .filter(|path| {
            path.extension()
                .is_some_and(|extension| extension == "yaml")
        })
        .collect();
    paths.sort();
    paths
        .into_iter()
        .map(|path| {
            let name = path.file_name().unwrap().to_string_lossy().into_owned();
            (name, Scenario::load(&path).unwrap())
        })
        .collect()
}

/// The settings of the demo's projection with `toys` pseudo-experiments per
/// point (none: Asimov only), limits included.
fn projection_settings(scenario: &Scenario, toys: usize) -> ProjectionSettings {
    ProjectionSettings {
        title: scenario.title.clone(),
        days: scenario.plan.days.days(),
        day_spacing: scenario.plan.days.axis_spacing(),
        detector_mass_kg: scenario.detector_mass_kg(),
        at_days: Vec::new(),
        toys,
        seed: 7,
        targets: scenario.plan.targets.clone(),
        cl: Some(scenario.plan.cl),
        calibration_toys: 0,
        scan: scenario.signal_scan(),
        look_elsewhere_toys: toys,
    }
}

/// The demo's projection with `toys` pseudo-experiments per point (none:
/// Asimov only), limits included; with a scan as many look-elsewhere scans.
fn projection_of(scenario: &Scenario, toys: usize) -> Projection {
    let settings = projection_settings(scenario, toys);
    project(&Model::from_scenario(scenario), &settings, &|_| {}).unwrap()
}

/// The figures among `reports`, each with the layout it was drawn with.
fn figures_of(render: impl FnOnce() -> Result<Vec<Report>, ReportError>) -> Vec<(String, Layout)> {
    let (reports, layouts) = recording(render);
    let names = reports
        .unwrap()
        .into_iter()
        .filter(|report| report.kind == Kind::Figure)
        .map(|report| report.name);
    let figures: Vec<(String, Layout)> = names.zip(layouts).collect();
    assert!(!figures.is_empty());
    figures
}

/// Every problem of `layout`, each worded for the failure message.
fn problems(figure: &str, layout: &Layout) -> Vec<String> {
    let mut found = Vec::new();
    let (width, height) = layout.canvas;
    let canvas = (f64::from(width), f64::from(height));
    for title in &layout.titles {
        if title.left < 0.0 || title.top < 0.0 || title.right > canvas.0 || title.bottom > canvas.1
        {
            found.push(format!(
                "{figure}: a title line leaves the canvas: {title:?}"
            ));
        }
    }
    for legend in &layout.legends {
        if layout.curves.iter().any(|curve| legend.meets_path(curve)) {
            found.push(format!("{figure}: the legend {legend:?} covers a curve"));
        }
        if layout.areas.iter().any(|area| legend.overlaps(area)) {
            found.push(format!("{figure}: the legend {legend:?} covers a band"));
        }
        if layout.markers.iter().any(|marker| legend.overlaps(marker)) {
            found.push(format!("{figure}: the legend {legend:?} covers a marker"));
        }
    }
    let mut boxes: Vec<(String, PixelBox)> = layout.texts.clone();
    boxes.extend(
        layout
            .titles
            .iter()
            .map(|title| ("(title)".to_string(), *title)),
    );
    for (text, drawn) in &boxes {
        if layout.curves.iter().any(|curve| drawn.meets_path(curve)) {
            found.push(format!("{figure}: {text:?} {drawn:?} lies on a curve"));
        }
        if layout.bands.iter().any(|band| band.meets(drawn)) {
            found.push(format!("{figure}: {text:?} {drawn:?} lies on a band"));
        }
        if layout.markers.iter().any(|marker| drawn.overlaps(marker)) {
            found.push(format!("{figure}: {text:?} {drawn:?} covers a marker"));
        }
        if layout
            .leaders
            .iter()
            .any(|[from, to]| drawn.meets_segment(*from, *to))
        {
            found.push(format!(
                "{figure}: {text:?} {drawn:?} lies on a leader line"
            ));
        }
    }
    boxes.extend(
        layout
            .legends
            .iter()
            .map(|legend| ("(legend)".to_string(), *legend)),
    );
    for (index, (text, drawn)) in boxes.iter().enumerate() {
        for (other, other_box) in &boxes[index + 1..] {
            if drawn.overlaps(other_box) {
                found.push(format!("{figure}: {text:?} overlaps {other:?}"));
            }
        }
    }
    found
}

fn assert_clear(figures: &[(String, Layout)]) {
    let found: Vec<String> = figures
        .iter()
        .flat_map(|(name, layout)| problems(name, layout))
        .collect();
    assert!(found.is_empty(), "{}", found.join("\n"));
}

/// Every figure type of one demo: the projection's figures with toys and
/// Asimov only, spectra, binning where it applies, reach with a scan, and
/// levers without one (with a scan each lever costs a scan's projection).
fn figures_of_demo(name: &str, scenario: &Scenario) -> Vec<(String, Layout)> {
    let mut figures = Vec::new();
    for toys in [0, 30] {
        let projection = projection_of(scenario, toys);
        let drawn = figures_of(|| super::render_all(&projection, &provenance()));
        figures.extend(
            drawn
                .into_iter()
                .map(|(figure, layout)| (format!("{figure} ({toys} toys)"), layout)),
        );
    }
    let last_day = *scenario.plan.days.days().last().unwrap();
    let days = [(last_day / 10.0).max(1.0), last_day];
    let spectrum = pseudo_data_spectrum(scenario, &days, 3);
    figures.extend(figures_of(|| {
        super::render_spectrum(&spectrum, &provenance())
    }));
    if let Ok(binning) = scan_binning(scenario, last_day) {
        figures.extend(figures_of(|| {
            super::render_binning(&binning, &provenance())
        }));
    }
    if scenario.signal_scan().is_some() {
        let settings = ReachSettings {
            days: days.to_vec(),
            cl: scenario.plan.cl,
            targets: scenario.plan.targets.clone(),
            toys: 0,
            seed: 3,
        };
        let reach = reach(scenario, &settings, &|_| {}).unwrap();
        figures.extend(figures_of(|| super::render_reach(&reach, &provenance())));
    } else {
        let settings = projection_settings(scenario, 0);
        let levers = levers(scenario, &settings, Step::Relative(0.1), &[], &|_| {}).unwrap();
        figures.extend(figures_of(|| super::render_levers(&levers, &provenance())));
    }
    figures
        .into_iter()
        .map(|(figure, layout)| (format!("{name} {figure}"), layout))
        .collect()
}

#[test]
fn every_figure_of_every_demo_keeps_its_text_clear() {
    let figures: Vec<(String, Layout)> = demos()
        .iter()
        .flat_map(|(name, scenario)| figures_of_demo(name, scenario))
        .collect();
    assert_clear(&figures);
}

/// The demo `file` as a plan of a comparison, with its reach after
/// `reach_days` when asked for.
fn compared_plan(
    demos: &[(String, Scenario)],
    file: &str,
    reach_days: Option<f64>,
) -> ComparedPlan {
    let (_, scenario) = demos.iter().find(|(name, _)| name == file).unwrap();
    ComparedPlan {
        file: file.to_string(),
        label: scenario.title.clone(),
        projection: projection_of(scenario, 0),
        reach: reach_days.map(|days| {
            let settings = ReachSettings {
                days: vec![days],
                cl: scenario.plan.cl,
                targets: scenario.plan.targets.clone(),
                toys: 0,
                seed: 3,
            };
            reach(scenario, &settings, &|_| {}).unwrap()
        }),
    }
}

#[test]
fn the_comparison_of_two_demos_keeps_its_text_clear() {
    let demos = demos();
    let comparison = Comparison {
        plans: vec![
            compared_plan(&demos, "narrow_peak.yaml", None),
            compared_plan(&demos, "narrow_peak_upgrade.yaml", None),
        ],
    };
    let figures = figures_of(|| super::render_comparison(&comparison, &provenance()));
    assert_eq!(figures.len(), 3);
    assert_clear(&figures);
}

/// The charts of `layout` whose x axis spans `window`, to rounding.
fn charts_over<'l>(layout: &'l Layout, window: &Range<f64>) -> Vec<&'l ChartBox> {
    let close = |a: f64, b: f64| (a - b).abs() <= 1e-9 * b.abs().max(1.0);
    layout
        .charts
        .iter()
        .filter(|chart| close(chart.x_range.0, window.start) && close(chart.x_range.1, window.end))
        .collect()
}

/// The signal region every demo's spectrum shows beside the full range: the
/// peak's position ± 5 widths (Gaussian sigma at the position, per channel),
/// cut to the range and widened to whole bins, counted here from the range
/// and bin width; drawn right of the full range in every panel (counts and
/// excess). A signal without a peak (the one-bin counting demos) has none.
#[test]
fn every_demo_spectrum_zooms_on_its_signal_region() {
    for (name, scenario) in demos() {
        let last_day = *scenario.plan.days.days().last().unwrap();
        let days = [(last_day / 10.0).max(1.0), last_day];
        let spectrum = pseudo_data_spectrum(&scenario, &days, 3);
        let figures = figures_of(|| super::render_spectrum(&spectrum, &provenance()));
        let (_, layout) = &figures[0];
        for channel in &scenario.channels {
            let [low, high] = channel.observable.range;
            let full = charts_over(layout, &(low..high));
            let peak = shape_from_spec(&channel.signal.shape, [low, high]).peak();
            let Some(peak) = peak else {
                assert_eq!(
                    layout.charts.len(),
                    full.len(),
                    "{name}: a zoom without a peak"
                );
                continue;
            };
            let width = channel.observable.bin_width;
            let edge_below = |x: f64| low + ((x.max(low) - low) / width).floor() * width;
            let edge_above = |x: f64| low + ((x.min(high) - low) / width).ceil() * width;
            let window = edge_below(peak.centre - 5.0 * peak.width)
                ..edge_above(peak.centre + 5.0 * peak.width);
            let zoom = charts_over(layout, &window);
            assert!(
                zoom.len() >= 2 * days.len(),
                "{name} {}: {} charts over {window:?} in {:?}",
                channel.name,
                zoom.len(),
                layout.charts
            );
            for chart in zoom {
                assert!(
                    full.iter()
                        .any(|full| full.plot.right < chart.plot.left
                            && full.plot.top == chart.plot.top),
                    "{name}: the zoom {chart:?} is not beside a full range"
                );
            }
        }
    }
}

/// A line 2.4 keV wide (FWHM, sigma = 2.4/2.3548 keV) on a 740 keV range of
/// 0.5 keV bins: 3 px wide on the full range, a line the reader sees in the
/// zoom: its FWHM spans at least 40 px there, and the expected signal +
/// background rises over at least a third of the counts plot.
#[test]
fn a_narrow_line_on_a_wide_range_shows_in_the_zoom() {
    let scenario = Scenario::from_yaml(
        "title: narrow line on a wide range (invented)\n\
         observable: {name: energy, unit: keV, range: [100.0, 840.0], bin_width: 0.5}\n\
         signal: {events_per_day: 2.0, shape: {gaussian: {mean: 511.0, sigma: 1.0192}}}\n\
         backgrounds:\n  - {name: flat, events_per_day: 30.0, shape: {flat: {}}}\n\
         plan: {days: {first: 1, last: 100, points: 3, spacing: log}, toys: 1, seed: 1, targets: [3]}\n",
    )
    .unwrap();
    let spectrum = pseudo_data_spectrum(&scenario, &[100.0], 5);
    let figures = figures_of(|| super::render_spectrum(&spectrum, &provenance()));
    let (_, layout) = &figures[0];
    let fwhm = 2.4;
    let showing = layout.charts.iter().filter(|chart| {
        let (from, to) = chart.x_range;
        let pixels_per_kev = (chart.plot.right - chart.plot.left) / (to - from);
        let plot = chart.plot;
        let risen = layout
            .curves
            .iter()
            .filter(|curve| {
                curve
                    .iter()
                    .all(|&(x, y)| plot.meets_segment((x, y), (x, y)))
            })
            .map(|curve| {
                let (top, bottom) = curve
                    .iter()
                    .fold((f64::MAX, f64::MIN), |(top, bottom), &(_, y)| {
                        (top.min(y), bottom.max(y))
                    });
                bottom - top
            })
            .fold(0.0, f64::max);
        from <= 511.0
            && 511.0 <= to
            && fwhm * pixels_per_kev >= 40.0
            && risen >= (plot.bottom - plot.top) / 3.0
    });
    assert!(
        showing.count() >= 1,
        "no chart shows the line: {:?}",
        layout.charts
    );
}

#[test]
fn the_reach_comparison_of_the_two_volume_demos_keeps_its_text_clear() {
    let demos = demos();
    let comparison = Comparison {
        plans: vec![
            compared_plan(&demos, "two_volume_line.yaml", Some(365.25)),
            compared_plan(&demos, "two_volume_line_inner.yaml", Some(365.25)),
        ],
    };
    let figures = figures_of(|| super::render_comparison(&comparison, &provenance()));
    assert_eq!(figures.len(), 4);
    assert_clear(&figures);
}

#[test]
fn the_replan_of_the_demo_keeps_its_text_clear() {
    use crate::replan::{Future, ReplanSettings, read_channel_data, replan};
    let demos = demos();
    let (_, scenario) = demos
        .iter()
        .find(|(name, _)| name == "narrow_peak.yaml")
        .unwrap();
    let model = Model::from_scenario(scenario);
    let folder = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    let data = read_channel_data(&folder.join("narrow_peak_60d.csv"), &model.channels[0]).unwrap();
    let settings = ReplanSettings {
        plan: ProjectionSettings {
            title: scenario.title.clone(),
            days: scenario.plan.days.days(),
            day_spacing: scenario.plan.days.axis_spacing(),
            detector_mass_kg: None,
            at_days: Vec::new(),
            toys: 40,
            seed: 7,
            targets: scenario.plan.targets.clone(),
            cl: Some(scenario.plan.cl),
            calibration_toys: 0,
            scan: None,
            look_elsewhere_toys: 0,
        },
        taken_days: 60.0,
        future: Future::Fitted,
        toy_limit: false,
    };
    let replan = replan(&model, None, vec![data], &settings, &|_| {}).unwrap();
    let figures = figures_of(|| super::render_replan(&replan, &provenance()));
    assert_eq!(figures.len(), 1);
    assert_clear(&figures);
}
