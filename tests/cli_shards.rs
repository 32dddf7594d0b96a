//! `runcast project --shard`, `merge` and `slurm` run as a user runs them:
//! the binary, a copy of a demo, real files. (`tests/shards.rs` checks the
//! merge on every demo through the library; `tests/slurm/end_to_end.sh` on a
//! real Slurm cluster.)

mod common;

use common::Scratch;
use std::fs;
use std::path::Path;
use std::process::Output;

const DEMO: &str = "narrow_peak.yaml";
/// Few toys; 13 and 29 are not multiples of 3.
const PLAN: [&str; 10] = [
    "--toys",
    "13",
    "--calibrate",
    "29",
    "--seed",
    "8",
    "--at",
    "45.5",
    "--at",
    "20",
];

fn setup(label: &str) -> Scratch {
    let scratch = Scratch::new(label);
    let source = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios")
        .join(DEMO);
    fs::copy(source, scratch.path.join(DEMO)).expect("copy demo");
    scratch
}

fn succeeded(output: Output) -> String {
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).expect("UTF-8 stdout")
}

fn failed(output: Output) -> String {
    assert!(!output.status.success(), "succeeded");
    let stderr = String::from_utf8(output.stderr).expect("UTF-8 stderr");
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    stderr
}

fn run_shards(scratch: &Scratch, out: &str, count: usize, plan: &[&str]) {
    for index in 1..=count {
        let shard = format!("{index}/{count}");
        let mut args = vec!["project", DEMO, "--shard", &shard, "--out", out, "--quiet"];
        args.extend_from_slice(plan);
        let stdout = succeeded(scratch.run(&args));
        assert!(
            stdout.starts_with(&format!("wrote shard {shard}: ")),
            "{stdout}"
        );
    }
}

fn sorted_names(directory: &Path) -> Vec<String> {
    let mut names: Vec<String> = fs::read_dir(directory)
        .expect("read directory")
        .map(|entry| entry.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    names
}

#[test]
fn merged_shards_write_the_unsharded_files() {
    let scratch = setup("cli-merge");
    let mut args = vec!["project", DEMO, "--out", "single", "--quiet"];
    args.extend_from_slice(&PLAN);
    let single_stdout = succeeded(scratch.run(&args));
    run_shards(&scratch, "sharded", 3, &PLAN);
    let shards = sorted_names(&scratch.path.join("sharded"));
    assert_eq!(shards.len(), 3, "{shards:?}");
    assert!(shards.iter().all(|name| name.ends_with(".runcast-shard")));

    let merged_stdout = succeeded(scratch.run(&["merge", "sharded"]));
    let names = sorted_names(&scratch.path.join("single"));
    assert!(names.contains(&"at.csv".to_string()), "{names:?}");
    for name in names {
        let single = fs::read(scratch.path.join("single").join(&name)).unwrap();
        let merged = fs::read(scratch.path.join("sharded").join(&name)).unwrap();
        assert!(single == merged, "{name} differs");
    }
    // The same summary, after the merge's own first line.
    let summary = |stdout: &str| stdout.split("wrote").next().unwrap().to_string();
    let merged_summary = merged_stdout.split_once('\n').unwrap().1;
    assert!(merged_stdout.starts_with("merged the shards of narrow_peak.yaml (seed 8)"));
    assert_eq!(summary(merged_summary), summary(&single_stdout));
}

#[test]
fn a_refused_merge_writes_nothing() {
    let scratch = setup("cli-merge-refused");
    run_shards(&scratch, "sharded", 3, &PLAN);
    let directory = scratch.path.join("sharded");
    let shards = sorted_names(&directory);
    fs::remove_file(directory.join(&shards[2])).unwrap();
    let stderr = failed(scratch.run(&["merge", "sharded"]));
    assert!(stderr.contains("missing shard 3/3"), "{stderr}");
    assert_eq!(sorted_names(&directory), shards[..2].to_vec());

    let mut other = PLAN.to_vec();
    other[5] = "9";
    run_shards(&scratch, "other", 3, &other);
    let other_shards = sorted_names(&scratch.path.join("other"));
    fs::copy(
        scratch.path.join("other").join(&other_shards[2]),
        directory.join(&other_shards[2]),
    )
    .unwrap();
    let stderr = failed(scratch.run(&["merge", "sharded"]));
    // Both files named, whichever is read first, and what differs.
    assert!(
        stderr.contains(&other_shards[2])
            && stderr.contains("another run")
            && (stderr.contains("seed 9 instead of 8") || stderr.contains("seed 8 instead of 9")),
        "{stderr}"
    );
    assert_eq!(sorted_names(&directory).len(), 3);
}

#[test]
fn bad_shard_specifications_are_usage_errors() {
    let scratch = setup("cli-bad-shard");
    for bad in ["0/3", "4/3", "3", "1/0"] {
        let output = scratch.run(&["project", DEMO, "--shard", bad, "--out", "x"]);
        assert_eq!(output.status.code(), Some(2), "{bad}");
        let stderr = failed(output);
        assert!(stderr.contains("K/N"), "{stderr}");
    }
    assert!(!scratch.path.join("x").exists());
}

#[test]
fn slurm_writes_both_scripts_once_and_prints_how_to_submit() {
    let scratch = setup("cli-slurm");
    let mut args = vec![
        "slurm",
        DEMO,
        "--tasks",
        "5",
        "--out",
        "cluster",
        "--partition",
        "short",
        "--time",
        "00:10:00",
        "--sbatch-arg=--cpus-per-task=2",
    ];
    args.extend_from_slice(&PLAN);
    let stdout = succeeded(scratch.run(&args));
    assert!(stdout.contains("sbatch --dependency=afterok:"), "{stdout}");
    let directory = fs::canonicalize(scratch.path.join("cluster")).unwrap();
    let array = fs::read_to_string(directory.join("runcast-array.sh")).unwrap();
    let merge = fs::read_to_string(directory.join("runcast-merge.sh")).unwrap();
    for expected in [
        "#SBATCH --array=1-5\n",
        "#SBATCH --partition=short\n",
        "#SBATCH --time=00:10:00\n",
        "#SBATCH --cpus-per-task=2\n",
        "--shard \"$SLURM_ARRAY_TASK_ID/5\"",
        "--threads \"${SLURM_CPUS_PER_TASK:-1}\"",
        "--seed 8 --toys 13 --calibrate 29 --at 20 --at 45.5\n",
        env!("CARGO_BIN_EXE_runcast"),
    ] {
        assert!(array.contains(expected), "{expected} not in\n{array}");
    }
    assert!(array.contains(&format!("--out '{}'", directory.display())));
    assert!(
        merge.contains("#SBATCH --kill-on-invalid-dep=yes\n"),
        "{merge}"
    );
    assert!(
        merge.contains(&format!("merge '{}'", directory.display())),
        "{merge}"
    );

    let stderr = failed(scratch.run(&args));
    assert!(
        stderr.contains("runcast-array.sh already exists"),
        "{stderr}"
    );
    assert_eq!(
        fs::read_to_string(directory.join("runcast-array.sh")).unwrap(),
        array
    );
}

/// Runs the binary in `scratch` with `args` where no file can grow past 0
/// bytes, as on a full disk: writes fail with EFBIG (the file size limit of
/// setrlimit(2), POSIX, with SIGXFSZ ignored so that the write returns the
/// error).
fn run_on_a_full_disk(scratch: &Scratch, args: &[&str]) -> Output {
    std::process::Command::new("sh")
        .args(["-c", "trap '' XFSZ; ulimit -f 0; exec \"$0\" \"$@\""])
        .arg(env!("CARGO_BIN_EXE_runcast"))
        .args(args)
        .current_dir(&scratch.path)
        .output()
        .expect("run sh")
}

#[test]
fn a_shard_or_slurm_run_that_cannot_write_removes_the_folders_it_made_and_only_those() {
    let scratch = setup("cli-full-disk");
    fs::create_dir(scratch.path.join("existing")).unwrap();
    for out in ["made/for/shard", "existing"] {
        let args = [
            "project", DEMO, "--shard", "1/2", "--out", out, "--toys", "3",
        ];
        let stderr = failed(run_on_a_full_disk(&scratch, &args));
        assert!(stderr.contains(&format!("{out}/")), "{stderr}");
        assert_eq!(sorted_names(&scratch.path), ["existing", DEMO]);
        assert!(sorted_names(&scratch.path.join("existing")).is_empty());

        let args = ["slurm", DEMO, "--tasks", "2", "--out", out];
        let stderr = failed(run_on_a_full_disk(&scratch, &args));
        assert!(
            stderr.contains(&format!("/{out}/runcast-array.sh")),
            "{stderr}"
        );
        assert_eq!(sorted_names(&scratch.path), ["existing", DEMO]);
        assert!(sorted_names(&scratch.path.join("existing")).is_empty());
    }
}
