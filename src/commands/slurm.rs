//! `runcast slurm`: a sharded projection as a Slurm job array and a dependent merge job.
//!
//! Writes two batch scripts a person can read and edit: `runcast-array.sh`,
//! whose task K runs `runcast project --shard K/N`, and `runcast-merge.sh`,
//! which runs `runcast merge` once every task has succeeded (`afterok`) and
//! is cancelled instead of left waiting when one failed
//! (`--kill-on-invalid-dep=yes`). Both use absolute paths to this binary, the
//! scenario and the output directory. With `--submit` they are submitted with
//! `sbatch --parsable`; otherwise the commands are printed.
//!
//! Every value from the user (the scenario and output paths, `--partition`,
//! `--time`, each `--sbatch-arg`) stays one word where it is written: on the
//! command line in single quotes for the shell ([`quote`]), in an `#SBATCH`
//! line quoted as sbatch reads it ([`sbatch_word`]). `SlurmOptions` has
//! already refused control characters, so no value can start a line.

use crate::cli::SlurmArgs;
use crate::error::Error;
use crate::options::SlurmOptions;
use crate::stdout;
use runcast::created_directories::CreatedDirectories;
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
    let created = CreatedDirectories::create(out).map_err(|source| Error::Write {
        path: out.clone(),
        source,
    })?;
    // Both scripts or neither: a failed run removes the one it wrote, then
    // (dropping `created`) the directory it made.
    for (index, (path, text)) in scripts.iter().enumerate() {
        if let Err(error) = write_script(path, text) {
            for (written, _) in &scripts[..index] {
                let _ = std::fs::remove_file(written);
            }
            return Err(error);
        }
    }
    created.keep();
    for (path, _) in &scripts {
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

/// The `#!` line and the `#SBATCH` lines of a script, one option per line.
fn header(options: &SlurmOptions, job_name: &str, own: &[String]) -> String {
    let mut text = String::from("#!/bin/bash\n");
    let lines = std::iter::once(format!("--job-name={job_name}"))
        .chain(own.iter().cloned())
        .chain(options.sbatch_options.iter().cloned());
    for option in lines {
        text.push_str(&format!("#SBATCH {}\n", sbatch_word(&option)));
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

/// The `--output` option of a script: its log file `name` (with Slurm's
/// replacement symbols, such as `%A`) in the output directory, whose own `%`
/// are doubled so that Slurm keeps them (a `%%` in the pattern is one `%`).
/// `SlurmOptions` refuses a backslash in the directory, which would stop the
/// replacements.
fn log_option(options: &SlurmOptions, name: &str) -> String {
    let directory = options.out.display().to_string().replace('%', "%%");
    format!("--output={directory}/{name}")
}

/// Task K of the array runs shard K of N with the resolved plan.
fn array_script(options: &SlurmOptions) -> String {
    let settings = &options.settings;
    let tasks = options.tasks;
    let mut text = header(
        options,
        &job_name(options),
        &[
            format!("--array=1-{tasks}"),
            log_option(options, "slurm-%A_%a.out"),
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
    let mut text = header(
        options,
        &format!("{}-merge", job_name(options)),
        &[
            "--kill-on-invalid-dep=yes".into(),
            log_option(options, "slurm-merge-%j.out"),
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

/// Writes a new script (never replacing a file), readable and executable;
/// on failure nothing of it stays.
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
    std::fs::set_permissions(path, std::fs::Permissions::from_mode(0o755)).map_err(|source| {
        let _ = std::fs::remove_file(path);
        write_error(source)
    })
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

/// `argument` as one word of an `#SBATCH` line, which sbatch (not the shell)
/// reads: it splits the line at blanks, drops single and double quotes,
/// takes the character after a backslash as it is (also inside quotes) and
/// ignores the line from an unquoted `#` on. A word of letters, digits and
/// `-_.,:=/+@%` is written as it is; any other in single quotes, with each
/// backslash doubled and each quote written as '\'' (as in the shell). Line
/// breaks and other control characters never get here (`SlurmOptions`).
fn sbatch_word(argument: &str) -> String {
    let plain = |c: char| c.is_ascii_alphanumeric() || "-_.,:=/+@%".contains(c);
    if !argument.is_empty() && argument.chars().all(plain) {
        return argument.to_string();
    }
    let escaped = argument.replace('\\', r"\\").replace('\'', r"'\''");
    format!("'{escaped}'")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_are_single_shell_words() {
        assert_eq!(quote(Path::new("/a b/c")), "'/a b/c'");
        assert_eq!(quote(Path::new("/it's")), r"'/it'\''s'");
    }

    #[test]
    fn sbatch_words_are_quoted_unless_plain() {
        assert_eq!(sbatch_word("--time=01:00:00"), "--time=01:00:00");
        assert_eq!(
            sbatch_word("--output=/a/slurm-%j.out"),
            "--output=/a/slurm-%j.out"
        );
        assert_eq!(sbatch_word("--comment=a b#c"), "'--comment=a b#c'");
        assert_eq!(
            sbatch_word(r#"--job-name=it's "\"#),
            r#"'--job-name=it'\''s "\\'"#
        );
        assert_eq!(sbatch_word(""), "''");
    }
}
