//! `tidemark lint`, `rules` and `explain` through the real binary: exit codes, configuration
//! discovery and errors, colour, formats. Notes here are invented.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin() -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_tidemark"));
    c.env_remove("NO_COLOR");
    c
}

/// A fresh temporary directory for one test.
fn tempdir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("tidemark-cli-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn run_in(dir: &Path, args: &[&str]) -> Output {
    bin().current_dir(dir).args(args).output().unwrap()
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

const NOTE: &str = "Ward round\nJVP not raised. Chest clear. Wt 72.0 kg.\n";

#[test]
fn rules_lists_every_rule_and_explain_prints_its_doc() {
    let dir = tempdir("rules");
    let o = run_in(&dir, &["rules"]);
    assert_eq!(o.status.code(), Some(0));
    let out = stdout(&o);
    for id in [
        "weight-missing",
        "unit-mixed",
        "hf-type-unspecified",
        "lvef-missing",
    ] {
        assert!(out.contains(id), "{id} not listed");
    }
    let ids: Vec<&str> = tidemark::lint::registry().iter().map(|r| r.id).collect();
    let listed = out
        .lines()
        .filter(|l| ids.iter().any(|id| l.starts_with(&format!("{id} "))))
        .count();
    assert_eq!(listed, tidemark::lint::registry().len());
    assert!(out.trim_end().ends_with(tidemark::render::CAUTION));
    let o = run_in(&dir, &["rules", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(
        v.as_array().unwrap().len(),
        tidemark::lint::registry().len()
    );

    let o = run_in(&dir, &["explain", "unit-missing"]);
    assert_eq!(o.status.code(), Some(0));
    assert!(stdout(&o).contains("## Does not fire"));
    let o = run_in(&dir, &["explain", "unit-mising"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        stderr(&o).contains("did you mean \"unit-missing\""),
        "{}",
        stderr(&o)
    );
}

#[test]
fn exit_codes_for_clean_skipped_and_usage_errors() {
    let dir = tempdir("exit");
    std::fs::write(dir.join("note.txt"), NOTE).unwrap();
    std::fs::write(dir.join("empty.txt"), "").unwrap();
    let o = run_in(&dir, &["lint", "note.txt"]);
    assert_eq!(o.status.code(), Some(0), "{}", stdout(&o));
    assert!(stdout(&o).trim_end().ends_with(tidemark::render::CAUTION));
    // A skipped input gives 3 when nothing reached --fail-on.
    let o = run_in(&dir, &["lint", "note.txt", "empty.txt"]);
    assert_eq!(o.status.code(), Some(3));
    assert!(stdout(&o).contains("empty.txt: skipped"));
    let o = run_in(&dir, &["lint", "missing.txt"]);
    assert_eq!(o.status.code(), Some(3));
    // Usage errors give 2.
    let o = run_in(&dir, &["lint", "--fail-on", "sometimes", "note.txt"]);
    assert_eq!(o.status.code(), Some(2));
    let o = run_in(&dir, &["lint", "--format", "xml", "note.txt"]);
    assert_eq!(o.status.code(), Some(2));
}

#[test]
fn config_is_found_upwards_and_errors_name_the_nearest_key() {
    let dir = tempdir("config");
    let sub = dir.join("ward").join("day1");
    std::fs::create_dir_all(&sub).unwrap();
    std::fs::write(sub.join("note.txt"), NOTE).unwrap();
    std::fs::write(
        dir.join("tidemark.toml"),
        "[lint.rules]\nweight-mising = \"off\"\n",
    )
    .unwrap();
    let o = run_in(&sub, &["lint", "note.txt"]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(e.contains("lint.rules.weight-mising"), "{e}");
    assert!(e.contains("did you mean \"weight-missing\""), "{e}");

    // The file next to the input (or above it) is found from any working directory.
    let elsewhere = tempdir("config-cwd");
    let note = sub.join("note.txt");
    let o = run_in(&elsewhere, &["lint", note.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));

    // A good file is used; --config wins over the one found by search.
    std::fs::write(dir.join("tidemark.toml"), "[lint]\nfail-on = \"never\"\n").unwrap();
    let o = run_in(&sub, &["lint", "note.txt"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    std::fs::write(dir.join("other.toml"), "[lint]\nfail-on = \"sometimes\"\n").unwrap();
    let o = run_in(&sub, &["lint", "--config", "../../other.toml", "note.txt"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("\"sometimes\""), "{}", stderr(&o));
    let o = run_in(&sub, &["lint", "--config", "nope.toml", "note.txt"]);
    assert_eq!(o.status.code(), Some(2));
}

#[test]
fn machine_formats_parse_and_human_colour_follows_the_options() {
    let dir = tempdir("formats");
    std::fs::write(dir.join("note.txt"), NOTE).unwrap();
    let o = run_in(&dir, &["lint", "--format", "json", "note.txt"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["schema"], "tidemark-lint/1");
    assert_eq!(v["documents"][0]["kind"], "progress_note");
    let o = run_in(&dir, &["lint", "--format", "jsonl", "note.txt", "note.txt"]);
    assert_eq!(stdout(&o).lines().count(), 2);
    let o = run_in(&dir, &["lint", "--format", "sarif", "note.txt"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["version"], "2.1.0");
    // Output to a pipe is plain; --color always forces escapes; NO_COLOR wins over auto.
    let o = run_in(&dir, &["lint", "note.txt"]);
    assert!(!stdout(&o).contains('\x1b'));
    let o = bin()
        .current_dir(&dir)
        .env("NO_COLOR", "1")
        .args(["lint", "note.txt"])
        .output()
        .unwrap();
    assert!(!stdout(&o).contains('\x1b'));
}

#[test]
fn inputs_are_not_modified() {
    let dir = tempdir("readonly");
    let p = dir.join("note.txt");
    std::fs::write(&p, "Ward round\nheart failure, Wt 71.2\n").unwrap();
    let before = std::fs::read(&p).unwrap();
    for f in ["human", "json", "jsonl", "sarif"] {
        run_in(&dir, &["lint", "--format", f, "note.txt"]);
    }
    assert_eq!(std::fs::read(&p).unwrap(), before);
}

/// Needs the extraction stage: "heart failure" with no weight must be reported and reach the
/// default --fail-on warning.
#[test]
fn a_diagnostic_at_the_threshold_exits_1() {
    let dir = tempdir("fail");
    std::fs::write(
        dir.join("note.txt"),
        "Ward round\nImp: heart failure. Ankles swollen.\n",
    )
    .unwrap();
    let o = run_in(&dir, &["lint", "note.txt"]);
    assert!(
        stdout(&o).contains("warning[weight-missing]"),
        "{}",
        stdout(&o)
    );
    assert_eq!(o.status.code(), Some(1));
    let o = run_in(&dir, &["lint", "--fail-on", "error", "note.txt"]);
    assert_eq!(o.status.code(), Some(0));
}
