//! Every figure of every shipped demo (`scenarios/*.yaml`), checked from its
//! layout as drawn (`kit/layout.rs`): each title line inside the canvas, no
//! legend over a curve, band, shaded stretch or marker, and no label, title
//! or legend over another. Text boxes are estimated at 0.6 of the font size
//! per character, on the wide side, so a pass leaves room to spare.

use super::kit::layout::{Layout, PixelBox, recording};
use super::projection::example::provenance;
use super::{ComparedPlan, Comparison, Kind, Report, ReportError};
use crate::binning::scan_binning;
use crate::model::Model;
use crate::projection::{Projection, ProjectionSettings, project};
use crate::reach::{ReachSettings, reach};
use crate::scenario::Scenario;
use crate::spectrum::pseudo_data_spectrum;
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

/// The demo's projection with `toys` pseudo-experiments per point (none:
/// Asimov only), limits included.
fn projection_of(scenario: &Scenario, toys: usize) -> Projection {
    let settings = ProjectionSettings {
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
        look_elsewhere_toys: 0,
    };
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

#[test]
fn every_figure_of_every_demo_keeps_its_text_clear() {
    for (name, scenario) in demos() {
        let mut figures = Vec::new();
        let toys = if name == "narrow_peak.yaml" { 40 } else { 0 };
        let projection = projection_of(&scenario, toys);
        figures.extend(figures_of(|| super::render_all(&projection, &provenance())));
        let last_day = *scenario.plan.days.days().last().unwrap();
        let days = [(last_day / 10.0).max(1.0), last_day];
        let spectrum = pseudo_data_spectrum(&scenario, &days, 3);
        figures.extend(figures_of(|| {
            super::render_spectrum(&spectrum, &provenance())
        }));
        if let Ok(binning) = scan_binning(&scenario, last_day) {
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
            let reach = reach(&scenario, &settings, &|_| {}).unwrap();
            figures.extend(figures_of(|| super::render_reach(&reach, &provenance())));
        }
        let named: Vec<(String, Layout)> = figures
            .into_iter()
            .map(|(figure, layout)| (format!("{name} {figure}"), layout))
            .collect();
        assert_clear(&named);
    }
}

#[test]
fn the_comparison_of_two_demos_keeps_its_text_clear() {
    let demos = demos();
    let plan = |file: &str| {
        let (_, scenario) = demos.iter().find(|(name, _)| name == file).unwrap();
        ComparedPlan {
            file: file.to_string(),
            label: scenario.title.clone(),
            projection: projection_of(scenario, 0),
        }
    };
    let comparison = Comparison {
        plans: vec![plan("narrow_peak.yaml"), plan("narrow_peak_upgrade.yaml")],
    };
    let figures = figures_of(|| super::render_comparison(&comparison, &provenance()));
    assert_eq!(figures.len(), 3);
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
