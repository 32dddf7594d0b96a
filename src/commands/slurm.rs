//! `runcast slurm`: a sharded projection as a Slurm job array and a dependent merge job.
//!
//! Writes two batch scripts a person can read and edit: `runcast-array.sh`,
//! whose task K runs `runcast project --shard K/N`, and `runcast-merge.sh`,
//! which runs `runcast merge` once every task has succeeded (`afterok`) and
//! is cancelled instead of left waiting when one failed
//! (`--kill-on-invalid-dep=yes`). Both use absolute paths to this binary, the
//! scenario and the output directory. With `--submit` they are submitted with
//! `sbatch --parsable`; otherwise the commands are printed.

use crate::cli::SlurmArgs;
use crate::error::Error;
use crate::options::SlurmOptions;
use crate::stdout;
use runcast::report;
use std::path::Path;
use std::process::Command;

/// The job-array script's file name in the output directory.
pub const ARRAY_SCRIPT: &str = "runcast-array.sh";
/// The merge script's file name in the output directory.
pub const MERGE_SCRIPT: &str = "runcast-merge.sh";

pub fn run(args: &SlurmArgs) -> Result<(), Error> {
    let options = SlurmOptions::resolve(args)?;
    super::print_warnings(&options.loaded);
    let out = &options.out;
    let scripts = [
        (out.join(ARRAY_SCRIPT), array_script(&options)),
        (out.join(MERGE_SCRIPT), merge_script(&options)),
    ];
    if let Some((path, _)) = scripts.iter().find(|(path, _)| path.exists()) {
        return Err(Error::Exists { path: path.clone() });
    }
    std::fs::create_dir_all(out).map_err(|source| Error::Write {
        path: out.clone(),
        source,
    })?;
    for (path, text) in &scripts {
        write_script(path, text)?;
        stdout::print(&format!("wrote {}\n", path.display()))?;
    }
    let [(array, _), (merge, _)] = &scripts;
    if !options.submit {
        return stdout::print(&format!(
            "submit with:\n    array=$(sbatch --parsable {})\n    sbatch --dependency=afterok:${{array%%;*}} {}\n",
            quote(array),
            quote(merge)
        ));
    }
    let array_job = sbatch(&[], array)?;
    stdout::print(&format!(
        "array job {array_job} ({} tasks)\n",
        options.tasks
    ))?;
    let merge_job = sbatch(&[format!("--dependency=afterok:{array_job}")], merge)?;
    stdout::print(&format!("merge job {merge_job}\n"))
}

/// The `#!` line and the `#SBATCH` lines of a script.
fn header(options: &SlurmOptions, job_name: &str, own: &[String]) -> String {
    let mut text = String::from("#!/bin/bash\n");
    let lines = std::iter::once(format!("--job-name={job_name}"))
        .chain(own.iter().cloned())
        .chain(options.sbatch_options.iter().cloned());
    for option in lines {
        text.push_str(&format!("#SBATCH {option}\n"));
    }
    text
}

/// The job name: `runcast-` and the scenario file stem.
fn job_name(options: &SlurmOptions) -> String {
    let stem = options
        .scenario
        .file_stem()
        .map_or_else(|| "scenario".into(), |stem| stem.to_string_lossy());
    format!("runcast-{stem}")
}

/// Task K of the array runs shard K of N with the resolved plan.
fn array_script(options: &SlurmOptions) -> String {
    let settings = &options.settings;
    let tasks = options.tasks;
    let log = options.out.join("slurm-%A_%a.out");
    let mut text = header(
        options,
        &job_name(options),
        &[
            format!("--array=1-{tasks}"),
            format!("--output={}", log.display()),
        ],
    );
    let mut plan = vec![
        format!("--seed {}", settings.seed),
        if settings.toys == 0 {
            "--asimov-only".into()
        } else {
            format!("--toys {}", settings.toys)
        },
    ];
    if settings.calibration_toys > 0 {
        plan.push(format!("--calibrate {}", settings.calibration_toys));
    }
    if settings.scan.is_some() && settings.toys > 0 {
        plan.push(format!("--lee-toys {}", settings.look_elsewhere_toys));
    }
    if settings.cl.is_none() {
        plan.push("--no-limits".into());
    }
    // Display of an f64 is the shortest decimal that reads back to it.
    plan.extend(settings.at_days.iter().map(|day| format!("--at {day}")));
    text.push_str(&format!(
        "\n# Task K runs shard K of {tasks}; rerunning a task writes the same shard file.\n\
         exec {runcast} project {scenario} \\\n    --shard \"$SLURM_ARRAY_TASK_ID/{tasks}\" \
         --out {out} --quiet \\\n    --threads \"${{SLURM_CPUS_PER_TASK:-1}}\" {plan}\n",
        runcast = quote(&options.runcast),
        scenario = quote(&options.scenario),
        out = quote(&options.out),
        plan = plan.join(" "),
    ));
    text
}

/// The merge, submitted with `--dependency=afterok:<array job>`.
fn merge_script(options: &SlurmOptions) -> String {
    let log = options.out.join("slurm-merge-%j.out");
    let mut text = header(
        options,
        &format!("{}-merge", job_name(options)),
        &[
            "--kill-on-invalid-dep=yes".into(),
            format!("--output={}", log.display()),
        ],
    );
    text.push_str(&format!(
        "\n# Submit with --dependency=afterok:<array job id>: runs once every task succeeded.\n\
         exec {runcast} merge {out}\n",
        runcast = quote(&options.runcast),
        out = quote(&options.out),
    ));
    text
}

/// Writes a new script (never replacing a file), readable and executable.
fn write_script(path: &Path, text: &str) -> Result<(), Error> {
    let write_error = |source| Error::Write {
        path: path.to_path_buf(),
        source,
    };
    match report::write_new(path, text.as_bytes()) {
        Err(source) if source.kind() == std::io::ErrorKind::AlreadyExists => {
            return Err(Error::Exists {
                path: path.to_path_buf(),
            });
        }
        result => result.map_err(write_error)?,
    }
    use std::os::unix::fs::PermissionsExt;
    std::fs::set_permissions(path, std::fs::Permissions::from_mode(0o755)).map_err(write_error)
}

/// Runs `sbatch --parsable OPTIONS SCRIPT` and returns the job id.
fn sbatch(options: &[String], script: &Path) -> Result<String, Error> {
    let output = Command::new("sbatch")
        .arg("--parsable")
        .args(options)
        .arg(script)
        .output()
        .map_err(|error| {
            Error::Slurm(format!(
                "cannot run sbatch ({error}); is Slurm installed here? The scripts are written; submit them by hand"
            ))
        })?;
    let reply = String::from_utf8_lossy(&output.stdout);
    // --parsable prints "id" or "id;cluster".
    let id = reply.trim().split(';').next().unwrap_or_default();
    if !output.status.success() || id.is_empty() || !id.chars().all(|c| c.is_ascii_digit()) {
        let message = String::from_utf8_lossy(&output.stderr);
        return Err(Error::Slurm(format!(
            "sbatch {} failed ({}): {}",
            script.display(),
            output.status,
            message.trim().replace('\n', " ")
        )));
    }
    Ok(id.to_string())
}

/// `path` as one shell word: in single quotes, each quote written as '\''.
fn quote(path: &Path) -> String {
    format!("'{}'", path.display().to_string().replace('\'', r"'\''"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_are_single_shell_words() {
        assert_eq!(quote(Path::new("/a b/c")), "'/a b/c'");
        assert_eq!(quote(Path::new("/it's")), r"'/it'\''s'");
    }
}
