//! `runcast slurm` (without `--submit`) on hostile names: a scenario file
//! name, `--out`, `--partition`, `--time` or `--sbatch-arg` holding quotes,
//! `$()`, backticks, `;`, `#`, `%`, blanks or a backslash gives scripts whose
//! every value is one word, both for bash and for sbatch, and that run
//! nothing but runcast; a line break or another control character is refused
//! naming its option, with nothing written. (`tests/slurm/end_to_end.sh`
//! submits such scripts to a real Slurm.)

mod common;

use common::Scratch;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const DEMO: &str = "counting_window.yaml";

/// Would each run a command of its own if a script let it out of its word:
/// `touch INJECTED` in the directory the script runs in.
const HOSTILE: [&str; 9] = [
    "it's",
    "say \"hi\"",
    "$(touch INJECTED)",
    "`touch INJECTED`",
    "a; touch INJECTED",
    "two  words",
    "100% #not a comment",
    "back\\slash",
    "'\"; touch INJECTED #",
];

/// Control characters a script line cannot hold; the first two would start
/// a line of their own.
const CONTROL: [&str; 4] = [
    "a\ntouch INJECTED",
    "a\rtouch INJECTED",
    "tab\there",
    "escape\u{1b}[2J",
];

/// Where a hostile value goes on the command line.
#[derive(Clone, Copy, Debug)]
enum Place {
    ScenarioName,
    Out,
    Partition,
    Time,
    SbatchArg,
}

const PLACES: [Place; 5] = [
    Place::ScenarioName,
    Place::Out,
    Place::Partition,
    Place::Time,
    Place::SbatchArg,
];

/// One `runcast slurm` run with `value` in `place` and plain values elsewhere.
struct Case {
    scenario: String,
    out: String,
    extra: Vec<String>,
}

impl Case {
    fn new(place: Place, value: &str) -> Case {
        let mut case = Case {
            scenario: DEMO.to_string(),
            out: "cluster".to_string(),
            extra: Vec::new(),
        };
        match place {
            Place::ScenarioName => case.scenario = format!("{value}.yaml"),
            Place::Out => case.out = format!("cluster {value}"),
            Place::Partition => case.extra = vec!["--partition".into(), value.into()],
            Place::Time => case.extra = vec!["--time".into(), value.into()],
            Place::SbatchArg => case.extra = vec![format!("--sbatch-arg=--comment={value}")],
        }
        case
    }

    /// Runs `slurm` in a fresh scratch directory holding the demo under the
    /// case's scenario name.
    fn run(&self, scratch: &Scratch) -> Output {
        let source = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("scenarios")
            .join(DEMO);
        fs::copy(source, scratch.path.join(&self.scenario)).expect("copy demo");
        let mut args: Vec<&str> = vec![
            "slurm",
            &self.scenario,
            "--tasks",
            "2",
            "--out",
            &self.out,
            "--seed",
            "3",
            "--asimov-only",
        ];
        args.extend(self.extra.iter().map(String::as_str));
        scratch.run(&args)
    }

    /// The `#SBATCH` options both scripts must carry after their own.
    fn shared_directives(&self) -> Vec<String> {
        match self.extra.as_slice() {
            [option, value] => vec![format!("{option}={value}")],
            [argument] => vec![argument.trim_start_matches("--sbatch-arg=").to_string()],
            _ => Vec::new(),
        }
    }
}

/// The words of an `#SBATCH` line as sbatch 22.05 reads them (its
/// `_get_argument`; checked against sbatch itself when writing this test):
/// blanks separate words, single and double quotes group and are dropped, a
/// backslash takes the next character as it is (inside quotes too), and an
/// unquoted `#` ends the line.
fn sbatch_words(line: &str) -> Vec<String> {
    let mut words = Vec::new();
    let mut word: Option<String> = None;
    let mut quote: Option<char> = None;
    let mut characters = line.chars();
    while let Some(c) = characters.next() {
        match (quote, c) {
            (_, '\\') => word.get_or_insert_default().extend(characters.next()),
            (Some(open), c) if c == open => quote = None,
            (Some(_), c) => word.get_or_insert_default().push(c),
            (None, '\'' | '"') => {
                quote = Some(c);
                word.get_or_insert_default();
            }
            (None, '#') => break,
            (None, c) if c.is_whitespace() => words.extend(word.take()),
            (None, c) => word.get_or_insert_default().push(c),
        }
    }
    assert_eq!(quote, None, "unmatched quote in {line:?}");
    words.extend(word);
    words
}

/// What a script asks of sbatch and of the shell.
struct Script {
    /// The argument of each `#SBATCH` line.
    directives: Vec<String>,
    /// The one command it runs, word by word, as bash reads it.
    command: Vec<String>,
}

/// Reads `path`, checking its shape line by line: `#!/bin/bash`, `#SBATCH`
/// lines of one sbatch word each, a blank line, one comment line, and the
/// `exec` of runcast over lines each ending in ` \` but the last. bash then
/// checks the syntax (`bash -n`) and runs the script with `exec` defined to
/// print its arguments, in `directory`.
fn read_script(path: &Path, directory: &Path) -> Script {
    let text = fs::read_to_string(path).expect("read script");
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines[0], "#!/bin/bash", "{text}");
    let directives: Vec<String> = lines[1..]
        .iter()
        .map_while(|line| line.strip_prefix("#SBATCH "))
        .map(|line| {
            let words = sbatch_words(line);
            assert_eq!(words.len(), 1, "{line:?} is not one sbatch word");
            words[0].clone()
        })
        .collect();
    let rest = &lines[1 + directives.len()..];
    assert_eq!(rest[0], "", "{text}");
    assert!(rest[1].starts_with("# "), "{text}");
    let command = &rest[2..];
    assert!(command[0].starts_with("exec '"), "{text}");
    for (index, line) in command.iter().enumerate() {
        let continued = index + 1 < command.len();
        assert_eq!(line.ends_with(" \\"), continued, "{line:?} in\n{text}");
    }

    let syntax = Command::new("bash").arg("-n").arg(path).output().unwrap();
    assert!(syntax.status.success(), "bash -n {}", path.display());
    let printed = Command::new("bash")
        .args(["-c", "exec() { printf '%s\\0' \"$@\"; }; . \"$1\"", "bash"])
        .arg(path)
        .current_dir(directory)
        .env("SLURM_ARRAY_TASK_ID", "2")
        .env_remove("SLURM_CPUS_PER_TASK")
        .output()
        .unwrap();
    assert!(
        printed.status.success() && printed.stderr.is_empty(),
        "{}: {}",
        path.display(),
        String::from_utf8_lossy(&printed.stderr)
    );
    let command = String::from_utf8(printed.stdout)
        .unwrap()
        .split_terminator('\0')
        .map(String::from)
        .collect();
    Script {
        directives,
        command,
    }
}

fn text(path: &Path) -> String {
    path.to_str().expect("UTF-8 path").to_string()
}

#[test]
fn hostile_names_stay_single_words_for_bash_and_sbatch() {
    let runcast = text(&fs::canonicalize(env!("CARGO_BIN_EXE_runcast")).unwrap());
    for place in PLACES {
        for value in HOSTILE {
            if matches!(place, Place::Out) && value.contains('\\') {
                continue; // refused: see the next test
            }
            let scratch = Scratch::new("slurm-hostile");
            let case = Case::new(place, value);
            let output = case.run(&scratch);
            assert!(
                output.status.success(),
                "{place:?} {value:?}: {}",
                String::from_utf8_lossy(&output.stderr)
            );
            let scenario: PathBuf = scratch.path.join(&case.scenario);
            let out = scratch.path.join(&case.out);
            let stem = case.scenario.trim_end_matches(".yaml");
            // Slurm reads % in --output as a replacement symbol, %% as one %.
            let log = |name: &str| format!("--output={}/{name}", text(&out).replace('%', "%%"));

            let array = read_script(&out.join("runcast-array.sh"), &scratch.path);
            let mut expected = vec![
                format!("--job-name=runcast-{stem}"),
                "--array=1-2".into(),
                log("slurm-%A_%a.out"),
            ];
            expected.extend(case.shared_directives());
            assert_eq!(array.directives, expected, "{place:?} {value:?}");
            let words = [
                &runcast,
                "project",
                &text(&scenario),
                "--shard",
                "2/2",
                "--out",
                &text(&out),
                "--quiet",
                "--threads",
                "1",
                "--seed",
                "3",
                "--asimov-only",
            ];
            assert_eq!(array.command, words, "{place:?} {value:?}");

            let merge = read_script(&out.join("runcast-merge.sh"), &scratch.path);
            let mut expected = vec![
                format!("--job-name=runcast-{stem}-merge"),
                "--kill-on-invalid-dep=yes".into(),
                log("slurm-merge-%j.out"),
            ];
            expected.extend(case.shared_directives());
            assert_eq!(merge.directives, expected, "{place:?} {value:?}");
            assert_eq!(
                merge.command,
                [&runcast, "merge", &text(&out)],
                "{place:?} {value:?}"
            );
            assert!(!scratch.path.join("INJECTED").exists());
        }
    }
}

#[test]
fn control_characters_are_refused_naming_their_option_with_nothing_written() {
    let mut cases: Vec<(Place, &str)> = PLACES
        .iter()
        .flat_map(|&place| CONTROL.iter().map(move |&value| (place, value)))
        .collect();
    // In the log file pattern a backslash would stop Slurm's replacements.
    cases.push((Place::Out, "back\\slash"));
    for (place, value) in cases {
        let scratch = Scratch::new("slurm-control");
        let case = Case::new(place, value);
        let output = case.run(&scratch);
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(
            output.status.code(),
            Some(2),
            "{place:?} {value:?}: {stderr}"
        );
        assert_eq!(stderr.lines().count(), 1, "{stderr}");
        let named = match place {
            Place::ScenarioName => "runcast: error: the scenario file \"",
            Place::Out => "runcast: error: --out \"",
            Place::Partition => "runcast: error: --partition \"",
            Place::Time => "runcast: error: --time \"",
            Place::SbatchArg => "runcast: error: --sbatch-arg \"",
        };
        assert!(stderr.starts_with(named), "{place:?} {value:?}: {stderr}");
        let mut left: Vec<String> = fs::read_dir(&scratch.path)
            .unwrap()
            .map(|entry| entry.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        left.sort();
        assert_eq!(left, [case.scenario.as_str()], "{place:?} {value:?}");
    }
}

#[test]
fn a_scenario_name_with_a_line_break_is_refused_before_the_default_directory() {
    let scratch = Scratch::new("slurm-default-out");
    let scenario = "a\ntouch INJECTED.yaml";
    let source = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios")
        .join(DEMO);
    fs::copy(source, scratch.path.join(scenario)).unwrap();
    let output = scratch.run(&["slurm", scenario, "--tasks", "2"]);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.starts_with("runcast: error: the scenario file \""),
        "{stderr}"
    );
    assert!(!scratch.path.join("output").exists());
}
