//! Scenarios shared by the physics tests: textbook set-ups, not demo data.
#![allow(dead_code)]

use runcast::model::Model;
use runcast::scenario::Scenario;
use std::fs;
use std::path::PathBuf;
use std::process::Output;

/// A single counting window: `signal` and `background` expected events per live
/// day in one bin, the background normalisation line given verbatim (or none).
pub fn counting_window(signal: f64, background: f64, background_extra: &str) -> Model {
    let yaml = format!(
        "title: counting window\n\
         observable: {{name: x, unit: a.u., range: [0.0, 1.0], bin_width: 1.0}}\n\
         signal: {{events_per_day: {signal}, shape: {{flat: {{}}}}}}\n\
         backgrounds:\n  - {{name: flat, events_per_day: {background}, shape: {{flat: {{}}}}{background_extra}}}\n\
         plan: {{days: {{first: 1, last: 10, points: 2, spacing: log}}, toys: 1, seed: 1, targets: [3, 5]}}\n"
    );
    model(&yaml)
}

/// A narrow Gaussian peak on a falling exponential continuum over 100 bins.
pub fn peak_on_continuum(signal: f64, background: f64, background_extra: &str) -> Model {
    let yaml = format!(
        "title: peak on continuum\n\
         observable: {{name: mass, unit: MeV, range: [0.0, 100.0], bin_width: 1.0}}\n\
         signal: {{events_per_day: {signal}, shape: {{gaussian: {{mean: 50.0, sigma: 2.0}}}}}}\n\
         backgrounds:\n  - {{name: continuum, events_per_day: {background}, shape: {{exponential: {{slope: -0.02}}}}{background_extra}}}\n\
         plan: {{days: {{first: 1, last: 10, points: 2, spacing: log}}, toys: 1, seed: 1, targets: [3, 5]}}\n"
    );
    model(&yaml)
}

pub fn model(yaml: &str) -> Model {
    let scenario = Scenario::from_yaml(yaml).unwrap_or_else(|e| panic!("test scenario: {e}"));
    Model::from_scenario(&scenario)
}

/// A single counting window whose background is measured in a signal-free
/// control region of `ratio` times its expected yield.
pub fn on_off(signal: f64, background: f64, ratio: f64) -> Model {
    counting_window(
        signal,
        background,
        &format!(", control: {{ratio: {ratio}}}"),
    )
}

/// A fresh directory under the system temporary directory for one test, in
/// which the built binary runs as a user would; removed when dropped (also
/// when the test fails).
pub struct Scratch {
    pub path: PathBuf,
}

impl Scratch {
    pub fn new(label: &str) -> Scratch {
        let path = std::env::temp_dir().join(format!(
            "runcast-{}-{label}-{}",
            env!("CARGO_CRATE_NAME"),
            std::process::id()
        ));
        let _ = fs::remove_dir_all(&path);
        fs::create_dir_all(&path).expect("create scratch directory");
        Scratch { path }
    }

    /// Runs the binary with `args`, inside the directory.
    pub fn run(&self, args: &[&str]) -> Output {
        std::process::Command::new(env!("CARGO_BIN_EXE_runcast"))
            .args(args)
            .current_dir(&self.path)
            .output()
            .expect("run the runcast binary")
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = fs::remove_dir_all(&self.path);
    }
}
