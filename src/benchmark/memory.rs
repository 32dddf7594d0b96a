//! Peak resident memory, measured in child processes of this same program so
//! that each measurement starts from nothing.

use super::BenchmarkError;
use super::models;
use crate::model::Model;
use crate::projection::{ProjectionSettings, project};
use crate::scenario::Scenario;
use std::process::Command;

/// The command-line flag a child process is started with.
pub const PROBE_FLAG: &str = "--memory-probe";

/// Peak resident memory of one projection of the 200-bin model.
#[derive(Debug, Clone, PartialEq)]
pub struct MemoryProbe {
    pub points: usize,
    pub toys: usize,
    pub peak_bytes: u64,
}

/// Peak resident set size of this process so far: the VmHWM line of
/// /proc/self/status (Linux proc(5)), in bytes.
pub fn peak_resident_bytes() -> Result<u64, BenchmarkError> {
    let status =
        std::fs::read_to_string("/proc/self/status").map_err(|source| BenchmarkError::Io {
            what: "read /proc/self/status".into(),
            source,
        })?;
    status
        .lines()
        .find_map(|line| line.strip_prefix("VmHWM:"))
        .and_then(|value| value.trim().strip_suffix("kB"))
        .and_then(|kilobytes| kilobytes.trim().parse::<u64>().ok())
        .map(|kilobytes| kilobytes * 1024)
        .ok_or_else(|| BenchmarkError::Child {
            command: "/proc/self/status".into(),
            message: "no VmHWM line in kB".into(),
        })
}

/// Runs, in this process, a projection of the 200-bin model over `points`
/// exposures with `toys` pseudo-experiments each, and returns the peak
/// resident memory afterwards. This is what a child started with
/// [`PROBE_FLAG`] does.
pub fn probe_in_process(points: usize, toys: usize) -> Result<u64, BenchmarkError> {
    let scenario = Scenario::from_yaml(&models::scenario_text(200, points))?;
    let model = Model::from_scenario(&scenario);
    let settings = ProjectionSettings {
        title: scenario.title.clone(),
        days: scenario.plan.days.days(),
        day_spacing: scenario.plan.days.axis_spacing(),
        detector_mass_kg: scenario.detector_mass_kg(),
        at_days: Vec::new(),
        toys,
        seed: scenario.plan.seed,
        targets: scenario.plan.targets.clone(),
        cl: None,
        calibration_toys: 0,
        scan: None,
        look_elsewhere_toys: 0,
    };
    project(&model, &settings, &|_| {}).map_err(|failure| BenchmarkError::Child {
        command: format!("memory probe {points}:{toys}"),
        message: failure.to_string(),
    })?;
    peak_resident_bytes()
}

/// Starts this program again as `runcast bench --memory-probe POINTS:TOYS` and
/// reads the peak resident memory it prints.
pub fn probe_in_child(points: usize, toys: usize) -> Result<MemoryProbe, BenchmarkError> {
    let argument = format!("{points}:{toys}");
    let output = Command::new(current_program()?)
        .args(["bench", PROBE_FLAG, &argument])
        .output()
        .map_err(|source| BenchmarkError::Io {
            what: format!("start the memory probe {argument}"),
            source,
        })?;
    let command = format!("runcast bench {PROBE_FLAG} {argument}");
    if !output.status.success() {
        return Err(BenchmarkError::Child {
            command,
            message: String::from_utf8_lossy(&output.stderr).trim().to_string(),
        });
    }
    let text = String::from_utf8_lossy(&output.stdout);
    let peak_bytes = text.trim().parse().map_err(|_| BenchmarkError::Child {
        command,
        message: format!("expected a byte count, got {:?}", text.trim()),
    })?;
    Ok(MemoryProbe {
        points,
        toys,
        peak_bytes,
    })
}

/// Parses the POINTS:TOYS argument of [`PROBE_FLAG`].
pub fn parse_probe(argument: &str) -> Option<(usize, usize)> {
    let (points, toys) = argument.split_once(':')?;
    let points = points.parse().ok().filter(|&p| p >= 1)?;
    Some((points, toys.parse().ok()?))
}

/// The path of this program, to start it again.
pub fn current_program() -> Result<std::path::PathBuf, BenchmarkError> {
    std::env::current_exe().map_err(|source| BenchmarkError::Io {
        what: "find the path of this program".into(),
        source,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_a_plausible_peak_of_this_process() {
        // A test process holds at least its own code, well over a megabyte (common practice).
        let peak = peak_resident_bytes().expect("Linux provides VmHWM");
        assert!(peak > 1 << 20, "peak {peak} bytes");
    }

    #[test]
    fn parses_points_and_toys() {
        assert_eq!(parse_probe("100:2000"), Some((100, 2000)));
        assert_eq!(parse_probe("100"), None);
        assert_eq!(parse_probe("0:10"), None);
        assert_eq!(parse_probe("x:10"), None);
    }
}
