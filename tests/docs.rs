//! The guides work as written: every command in a shell block of README.md
//! and docs/*.md runs on the shipped demos and succeeds, and every file the
//! text names exists (in the repository, or among the files its commands
//! wrote).

mod common;

use common::Scratch;
use std::fs;
use std::path::{Path, PathBuf};

fn repository() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// README.md, then the guides in docs/ in name order.
fn documents() -> Vec<PathBuf> {
    let mut guides: Vec<PathBuf> = fs::read_dir(repository().join("docs"))
        .expect("docs/")
        .map(|entry| entry.unwrap().path())
        .filter(|path| path.extension().is_some_and(|ext| ext == "md"))
        .collect();
    guides.sort();
    let mut documents = vec![repository().join("README.md")];
    documents.extend(guides);
    documents
}

/// The lines of the ```sh blocks of `text`, without trailing comments.
fn shell_lines(text: &str) -> Vec<String> {
    let mut lines = Vec::new();
    let mut inside = false;
    for line in text.lines() {
        if line.starts_with("```") {
            inside = line == "```sh";
            continue;
        }
        if inside {
            let command = line.split(" # ").next().unwrap_or("").trim();
            if !command.is_empty() {
                lines.push(command.to_string());
            }
        }
    }
    lines
}

/// Splits a command line into words as a shell would for the forms the
/// guides use: words separated by spaces, double quotes grouping words.
fn words(line: &str) -> Vec<String> {
    let mut words = Vec::new();
    let mut word = String::new();
    let mut quoted = false;
    let mut started = false;
    for character in line.chars() {
        match character {
            '"' => {
                quoted = !quoted;
                started = true;
            }
            ' ' if !quoted => {
                if started {
                    words.push(std::mem::take(&mut word));
                    started = false;
                }
            }
            other => {
                word.push(other);
                started = true;
            }
        }
    }
    assert!(!quoted, "unbalanced quotes in {line}");
    if started {
        words.push(word);
    }
    words
}

/// The runcast arguments of a guide's command line; None for a command that
/// is not runcast's own (the test command itself).
fn runcast_arguments(line: &str) -> Option<Vec<String>> {
    let words = words(line);
    match words.first().map(String::as_str) {
        Some("runcast") => Some(words[1..].to_vec()),
        Some("cargo") if words.get(1).map(String::as_str) == Some("run") => {
            let separator = words.iter().position(|word| word == "--")?;
            Some(words[separator + 1..].to_vec())
        }
        Some("cargo") => None,
        _ => panic!("a shell line that is neither runcast nor cargo: {line}"),
    }
}

/// Paths into the repository that `text` names: `scenarios/...`,
/// `output/...`, `docs/...` and the like, ending in a file name with an
/// extension, and relative links.
fn named_files(text: &str) -> Vec<String> {
    let roots = [
        "scenarios/",
        "output/",
        "docs/",
        "src/",
        "tests/",
        "assets/",
        ".ci/",
    ];
    let mut names = Vec::new();
    for (start, _) in text.match_indices(|c: char| c.is_ascii_lowercase() || c == '.') {
        let rest = &text[start..];
        let preceded_by_path = start > 0
            && text[..start].chars().last().is_some_and(|c| {
                c.is_ascii_alphanumeric() || c == '/' || c == '_' || c == '-' || c == '.'
            });
        if preceded_by_path || !roots.iter().any(|root| rest.starts_with(root)) {
            continue;
        }
        let path: String = rest
            .chars()
            .take_while(|c| c.is_ascii_alphanumeric() || matches!(c, '/' | '_' | '-' | '.'))
            .collect();
        let path = path.trim_end_matches('.').to_string();
        let file = path.rsplit('/').next().unwrap_or("");
        if file.contains('.') {
            names.push(path);
        }
    }
    names
}

#[test]
fn every_command_of_the_guides_runs_and_every_named_file_exists() {
    let scratch = Scratch::new("guides");
    copy_folder(
        &repository().join("scenarios"),
        &scratch.path.join("scenarios"),
    );
    let mut ran = 0;
    for document in documents() {
        let text = fs::read_to_string(&document).unwrap();
        let name = document
            .strip_prefix(repository())
            .unwrap()
            .display()
            .to_string();
        for line in shell_lines(&text) {
            let Some(mut arguments) = runcast_arguments(&line) else {
                continue;
            };
            if arguments.first().is_some_and(|command| command != "new") {
                arguments.push("--quiet".to_string());
            }
            let arguments = strip_quiet_where_unknown(arguments);
            let argument_refs: Vec<&str> = arguments.iter().map(String::as_str).collect();
            let output = scratch.run(&argument_refs);
            assert!(
                output.status.success(),
                "{name}: `{line}` failed: {}",
                String::from_utf8_lossy(&output.stderr)
            );
            ran += 1;
        }
        for link in relative_links(&text) {
            let target = document.parent().unwrap().join(&link);
            assert!(
                target.exists(),
                "{name} links to {link}, which does not exist"
            );
        }
        for file in named_files(&text) {
            let found = repository().join(&file).exists() || scratch.path.join(&file).exists();
            assert!(
                found,
                "{name} names {file}, which neither the repository nor its commands hold"
            );
        }
    }
    assert!(ran >= 15, "only {ran} commands found in the guides");
}

/// The targets of the Markdown links of `text` that point into the
/// repository (not to the web, not to an anchor of the same page), without
/// their anchors.
fn relative_links(text: &str) -> Vec<String> {
    text.split("](")
        .skip(1)
        .filter_map(|rest| rest.split(')').next())
        .filter(|target| !target.contains("://") && !target.starts_with('#'))
        .map(|target| target.split('#').next().unwrap_or(target).to_string())
        .collect()
}

/// `--quiet` belongs to the commands with a progress bar only.
fn strip_quiet_where_unknown(mut arguments: Vec<String>) -> Vec<String> {
    let with_progress = ["project", "reach", "compare", "replan"];
    if !arguments
        .first()
        .is_some_and(|command| with_progress.contains(&command.as_str()))
    {
        arguments.retain(|argument| argument != "--quiet");
    }
    arguments
}

fn copy_folder(from: &Path, to: &Path) {
    fs::create_dir_all(to).unwrap();
    for entry in fs::read_dir(from).unwrap() {
        let entry = entry.unwrap();
        let target = to.join(entry.file_name());
        if entry.file_type().unwrap().is_dir() {
            copy_folder(&entry.path(), &target);
        } else {
            fs::copy(entry.path(), target).unwrap();
        }
    }
}

#[test]
fn shell_lines_are_read_as_a_shell_would() {
    assert_eq!(
        words(r#"runcast compare a.yaml b.yaml --label Now --label "Upgrade first""#),
        [
            "runcast",
            "compare",
            "a.yaml",
            "b.yaml",
            "--label",
            "Now",
            "--label",
            "Upgrade first"
        ]
    );
    assert_eq!(
        shell_lines("text\n```sh\nruncast check x.yaml   # a comment\n```\n"),
        ["runcast check x.yaml"]
    );
    assert_eq!(
        named_files(
            "see scenarios/narrow_peak.yaml and [x](docs/cluster.md), not a/scenarios/b.yaml"
        ),
        ["scenarios/narrow_peak.yaml", "docs/cluster.md"]
    );
}
