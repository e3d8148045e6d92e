//! The built binary on batches of hostile input: every bad file gets a per-file warning on
//! stderr and in the JSON, the other files are still processed, and the exit code follows
//! the documented scheme (0 ok, 2 usage, 3 some input skipped; `src/cli/exit.rs`).

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use serde_json::Value;

const OK_NOTE: &str =
    "Ward round day 2.\nBP 118/72, HR 88. Weight 81.4 kg.\nNo peripheral oedema.\n";

fn tidemark(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tidemark"))
        .args(args)
        .output()
        .expect("run tidemark")
}

fn stdout_json(out: &Output) -> Value {
    serde_json::from_slice(&out.stdout).unwrap_or_else(|e| {
        panic!(
            "stdout is not JSON ({e}): {}\nstderr: {}",
            String::from_utf8_lossy(&out.stdout),
            String::from_utf8_lossy(&out.stderr)
        )
    })
}

fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

fn documents(v: &Value) -> &Vec<Value> {
    v["documents"].as_array().expect("documents array")
}

/// The document whose source ends with `name`.
fn doc<'a>(v: &'a Value, name: &str) -> &'a Value {
    documents(v)
        .iter()
        .find(|d| d["source"].as_str().is_some_and(|s| s.ends_with(name)))
        .unwrap_or_else(|| panic!("no document {name} in {v}"))
}

fn warning_codes(d: &Value) -> Vec<String> {
    d["warnings"]
        .as_array()
        .expect("warnings array")
        .iter()
        .map(|w| w["code"].as_str().unwrap().to_string())
        .collect()
}

/// A temp dir with one good note beside whatever the test adds.
fn dir_with_good_note() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("good.txt"), OK_NOTE).unwrap();
    dir
}

fn p(path: &Path) -> &str {
    path.to_str().unwrap()
}

fn assert_good_note_processed(v: &Value) {
    let good = doc(v, "good.txt");
    assert!(warning_codes(good).is_empty(), "{good}");
    // An analysed document carries its profile; a skipped one does not.
    assert!(good.get("profile").is_some(), "{good}");
}

#[test]
fn invalid_utf8_is_decoded_lossily_with_the_offset_of_the_first_bad_byte() {
    let dir = dir_with_good_note();
    // 0xFF can never appear in UTF-8 (RFC 3629, section 1); it is byte 10 here.
    fs::write(
        dir.path().join("latin1.txt"),
        b"BP 120/80 \xff\xfe wt 80 kg\n",
    )
    .unwrap();
    let out = tidemark(&["extract", p(dir.path())]);
    let v = stdout_json(&out);
    let d = doc(&v, "latin1.txt");
    assert_eq!(warning_codes(d), vec!["invalid-utf8"]);
    assert_eq!(d["warnings"][0]["offset"], 10);
    assert!(
        d.get("profile").is_some(),
        "lossily decoded text is still analysed"
    );
    assert!(stderr(&out).contains("latin1.txt: invalid UTF-8 at byte offset 10"));
    assert_good_note_processed(&v);
    // Decoded, not skipped: the run is complete.
    assert_eq!(out.status.code(), Some(0));
}

#[test]
fn nul_bytes_and_binary_files_are_skipped_with_a_warning() {
    let dir = dir_with_good_note();
    fs::write(dir.path().join("nul.txt"), b"BP 120/80\0\0\0HR 70").unwrap();
    let binary: Vec<u8> = (0u8..=255).cycle().take(4096).collect();
    fs::write(dir.path().join("blob.txt"), binary).unwrap();
    let out = tidemark(&["extract", p(dir.path())]);
    let v = stdout_json(&out);
    assert_eq!(warning_codes(doc(&v, "nul.txt")), vec!["binary"]);
    assert_eq!(doc(&v, "nul.txt")["warnings"][0]["offset"], 9);
    assert_eq!(warning_codes(doc(&v, "blob.txt")), vec!["binary"]);
    assert!(doc(&v, "nul.txt").get("profile").is_none());
    assert!(stderr(&out).contains("nul.txt: NUL byte at offset 9"));
    assert_good_note_processed(&v);
    assert_eq!(out.status.code(), Some(3));
}

#[test]
fn empty_files_are_skipped_with_a_warning() {
    let dir = dir_with_good_note();
    fs::write(dir.path().join("empty.txt"), b"").unwrap();
    fs::write(dir.path().join("blank.txt"), b"  \n\n\t\n").unwrap();
    let out = tidemark(&["extract", p(dir.path())]);
    let v = stdout_json(&out);
    assert_eq!(warning_codes(doc(&v, "empty.txt")), vec!["empty"]);
    assert_eq!(warning_codes(doc(&v, "blank.txt")), vec!["empty"]);
    assert!(stderr(&out).contains("empty.txt: the document is empty"));
    assert_good_note_processed(&v);
    assert_eq!(out.status.code(), Some(3));
}

#[test]
fn missing_and_dangling_inputs_are_reported_and_the_run_goes_on() {
    let dir = dir_with_good_note();
    std::os::unix::fs::symlink(dir.path().join("gone.txt"), dir.path().join("dangling.txt"))
        .unwrap();
    let missing = dir.path().join("no-such-note.txt");
    let out = tidemark(&["extract", p(&missing), p(dir.path())]);
    let v = stdout_json(&out);
    assert_eq!(
        warning_codes(doc(&v, "no-such-note.txt")),
        vec!["unreadable"]
    );
    assert_eq!(warning_codes(doc(&v, "dangling.txt")), vec!["unreadable"]);
    assert!(stderr(&out).contains("dangling.txt: cannot read"));
    assert_good_note_processed(&v);
    assert_eq!(out.status.code(), Some(3));
}

#[test]
fn files_over_the_size_limit_are_skipped() {
    let dir = dir_with_good_note();
    fs::write(dir.path().join("big.txt"), "x".repeat(5000)).unwrap();
    fs::write(dir.path().join("edge.txt"), "y".repeat(4096)).unwrap();
    let out = tidemark(&["extract", "--max-file-size", "4K", p(dir.path())]);
    let v = stdout_json(&out);
    assert_eq!(warning_codes(doc(&v, "big.txt")), vec!["too-large"]);
    // Exactly at the limit is allowed.
    assert!(warning_codes(doc(&v, "edge.txt")).is_empty());
    assert!(stderr(&out).contains("big.txt: larger than the 4096-byte limit"));
    assert_good_note_processed(&v);
    assert_eq!(out.status.code(), Some(3));

    // The default limit is 32 MiB: a 33 MiB file is skipped, a small one read.
    let f = fs::File::create(dir.path().join("huge.txt")).unwrap();
    f.set_len(33 * 1024 * 1024).unwrap();
    let out = tidemark(&[
        "extract",
        "--format",
        "jsonl",
        p(&dir.path().join("huge.txt")),
    ]);
    let line: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(line["warnings"][0]["code"], "too-large");
    assert!(stderr(&out).contains("33554432-byte limit"));
    assert_eq!(out.status.code(), Some(3));
}

#[test]
fn symlink_loops_are_reported_once_and_every_note_is_read_once() {
    let dir = dir_with_good_note();
    let sub = dir.path().join("sub");
    fs::create_dir(&sub).unwrap();
    fs::write(sub.join("inner.txt"), OK_NOTE).unwrap();
    std::os::unix::fs::symlink(dir.path(), sub.join("back-to-top")).unwrap();
    std::os::unix::fs::symlink(&sub, sub.join("self")).unwrap();
    let out = tidemark(&["extract", p(dir.path())]);
    let v = stdout_json(&out);
    let sources: Vec<&str> = documents(&v)
        .iter()
        .map(|d| d["source"].as_str().unwrap())
        .collect();
    assert_eq!(
        sources.iter().filter(|s| s.ends_with("inner.txt")).count(),
        1,
        "{sources:?}"
    );
    assert_eq!(
        sources.iter().filter(|s| s.ends_with("good.txt")).count(),
        1,
        "{sources:?}"
    );
    let loops: Vec<&Value> = documents(&v)
        .iter()
        .filter(|d| warning_codes(d) == ["symlink-loop"])
        .collect();
    assert_eq!(loops.len(), 2, "{v}");
    assert!(stderr(&out).contains("symlink loop"));
    assert_eq!(out.status.code(), Some(3));
}

#[test]
fn enormous_numbers_and_deep_brackets_do_not_stop_the_run() {
    let dir = dir_with_good_note();
    let mut text = String::from("Weight 99999999999999999999 kg\nBP 1e308/1e-308 mmHg\n");
    text.push_str(&format!("Na {} mmol/L\n", "9".repeat(5000)));
    text.push_str(&format!("HR 0.{} bpm\n", "0".repeat(5000)));
    text.push_str(&"(".repeat(100_000));
    text.push_str("JVP 4 cm");
    text.push_str(&")".repeat(100_000));
    text.push('\n');
    text.push_str(&"[{<".repeat(30_000));
    text.push_str(&format!("temp 37.{} kg/m2/s/L/mmol\n", "5".repeat(300)));
    fs::write(dir.path().join("hostile.txt"), &text).unwrap();
    let out = tidemark(&["extract", "--jobs", "2", p(dir.path())]);
    let err = stderr(&out);
    assert!(!err.contains("panicked"), "{err}");
    assert!(!err.contains("internal error"), "{err}");
    let v = stdout_json(&out);
    assert!(doc(&v, "hostile.txt").get("profile").is_some());
    assert_good_note_processed(&v);
    assert_eq!(out.status.code(), Some(0), "{err}");
}

/// Notes spread over nested directories, some bad, for the ordering checks.
fn mixed_tree() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    for i in 0..120 {
        let sub = dir
            .path()
            .join(format!("ward-{}", i % 7))
            .join(format!("bay-{}", i % 3));
        fs::create_dir_all(&sub).unwrap();
        let body = match i % 11 {
            0 => Vec::new(),
            5 => b"x\0y".to_vec(),
            7 => b"Na 13\xff5 mmol/L".to_vec(),
            _ => format!("Note {i}\n{}", OK_NOTE.repeat(i % 5 + 1)).into_bytes(),
        };
        fs::write(sub.join(format!("note-{i:03}.txt")), body).unwrap();
    }
    dir
}

#[test]
fn output_order_does_not_depend_on_the_thread_count() {
    let tree = mixed_tree();
    let corpus = concat!(env!("CARGO_MANIFEST_DIR"), "/corpora-synthetic");
    for format in ["json", "jsonl", "text"] {
        let args = |jobs: &'static str| {
            vec![
                "extract",
                "--format",
                format,
                "--jobs",
                jobs,
                p(tree.path()),
                corpus,
            ]
        };
        let one = tidemark(&args("1"));
        let two = tidemark(&args("2"));
        let eight = tidemark(&args("8"));
        assert!(!one.stdout.is_empty());
        assert_eq!(one.stdout, two.stdout, "format {format}");
        assert_eq!(one.stdout, eight.stdout, "format {format}");
        assert_eq!(one.stderr, two.stderr, "format {format}");
        assert_eq!(one.status.code(), Some(3));
        assert_eq!(two.status.code(), Some(3));
    }
    // The order is the sorted walk: paths compare component by component.
    let v = stdout_json(&tidemark(&["extract", "--jobs", "2", p(tree.path())]));
    let sources: Vec<PathBuf> = documents(&v)
        .iter()
        .map(|d| PathBuf::from(d["source"].as_str().unwrap()))
        .collect();
    let mut sorted = sources.clone();
    sorted.sort();
    assert_eq!(sources, sorted);
    assert_eq!(sources.len(), 120);
}

/// Contents, modification time and permissions of every file under `dir`.
fn snapshot(dir: &Path) -> Vec<(PathBuf, Vec<u8>, std::time::SystemTime, u32)> {
    use std::os::unix::fs::PermissionsExt;
    let mut out = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in fs::read_dir(&d).unwrap() {
            let path = e.unwrap().path();
            let m = fs::symlink_metadata(&path).unwrap();
            if m.is_dir() {
                stack.push(path);
            } else if m.is_file() {
                let bytes = fs::read(&path).unwrap();
                out.push((path, bytes, m.modified().unwrap(), m.permissions().mode()));
            }
        }
    }
    out.sort();
    out
}

#[test]
fn inputs_are_never_modified() {
    let tree = mixed_tree();
    let before = snapshot(tree.path());
    let outfile = tempfile::tempdir().unwrap();
    let dest = outfile.path().join("out.json");
    for args in [
        vec!["extract", "--jobs", "2", p(tree.path())],
        vec!["extract", "--format", "text", p(tree.path())],
        vec!["extract", "-o", p(&dest), p(tree.path())],
    ] {
        let out = tidemark(&args);
        assert_eq!(out.status.code(), Some(3));
    }
    assert_eq!(before.len(), 120);
    assert_eq!(snapshot(tree.path()), before);
}

#[test]
fn output_file_is_written_atomically() {
    use std::os::unix::fs::MetadataExt;
    let dir = dir_with_good_note();
    let outdir = tempfile::tempdir().unwrap();
    let dest = outdir.path().join("result.json");
    fs::write(&dest, "old contents").unwrap();
    let old_inode = fs::metadata(&dest).unwrap().ino();

    let to_file = tidemark(&["extract", "--output", p(&dest), p(dir.path())]);
    assert_eq!(to_file.status.code(), Some(0), "{}", stderr(&to_file));
    assert!(to_file.stdout.is_empty(), "nothing on stdout with --output");
    let to_stdout = tidemark(&["extract", p(dir.path())]);
    assert_eq!(fs::read(&dest).unwrap(), to_stdout.stdout);
    // Replaced by a rename, not rewritten in place: a new inode.
    assert_ne!(fs::metadata(&dest).unwrap().ino(), old_inode);
    // No temporary file is left behind.
    let names: Vec<String> = fs::read_dir(outdir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, vec!["result.json"]);

    // An output that cannot be created is a usage-level failure, and nothing is created.
    let bad = outdir.path().join("no-such-dir").join("x.json");
    let out = tidemark(&["extract", "--output", p(&bad), p(dir.path())]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("cannot write"));
    assert!(!bad.exists());
}

#[test]
fn output_may_not_overwrite_an_input() {
    let dir = dir_with_good_note();
    let good = dir.path().join("good.txt");
    let out = tidemark(&["extract", "--output", p(&good), p(&good)]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("is also an input"));
    assert_eq!(fs::read_to_string(&good).unwrap(), OK_NOTE);
    let inside = dir.path().join("summary.txt");
    let out = tidemark(&["extract", "--output", p(&inside), p(dir.path())]);
    assert_eq!(out.status.code(), Some(2));
    assert!(!inside.exists());
}

#[test]
fn usage_errors_exit_2() {
    assert_eq!(tidemark(&["extract", "--jobs", "0"]).status.code(), Some(2));
    assert_eq!(
        tidemark(&["extract", "--max-file-size", "lots"])
            .status
            .code(),
        Some(2)
    );
    assert_eq!(tidemark(&["no-such-command"]).status.code(), Some(2));
}

#[test]
fn stdin_is_read_when_no_path_is_given() {
    use std::io::Write;
    let mut child = Command::new(env!("CARGO_BIN_EXE_tidemark"))
        .args(["extract", "--format", "jsonl"])
        .stdin(std::process::Stdio::piped())
        .stdout(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    child
        .stdin
        .take()
        .unwrap()
        .write_all(OK_NOTE.as_bytes())
        .unwrap();
    let out = child.wait_with_output().unwrap();
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["source"], "-");
    assert_eq!(v["schema"], "tidemark-extract/1");
    assert_eq!(out.status.code(), Some(0));
}

#[test]
fn progress_never_reaches_stdout_and_stderr_has_only_warnings_when_piped() {
    let tree = mixed_tree();
    let out = tidemark(&["extract", "--format", "jsonl", p(tree.path())]);
    for line in out.stdout.split(|&b| b == b'\n').filter(|l| !l.is_empty()) {
        let v: Value = serde_json::from_slice(line).expect("every stdout line is JSON");
        assert_eq!(v["schema"], "tidemark-extract/1");
    }
    for line in stderr(&out).lines() {
        assert!(line.starts_with("tidemark: "), "{line}");
    }
}

#[test]
fn special_files_never_hang_the_run() {
    let dir = dir_with_good_note();
    // A named pipe with a note's name: a walk reads regular files only, so it is passed by
    // instead of blocking on a read that never ends.
    let fifo = dir.path().join("pipe.txt");
    let made = Command::new("mkfifo").arg(&fifo).status();
    assert!(made.is_ok_and(|s| s.success()), "mkfifo");
    let out = tidemark(&["extract", p(dir.path())]);
    let v = stdout_json(&out);
    assert_eq!(documents(&v).len(), 1, "{v}");
    assert_good_note_processed(&v);
    assert_eq!(out.status.code(), Some(0));

    // An endless device named explicitly stops at the size limit.
    let out = tidemark(&[
        "extract",
        "--max-file-size",
        "1K",
        "/dev/zero",
        p(dir.path()),
    ]);
    let v = stdout_json(&out);
    assert_eq!(warning_codes(doc(&v, "/dev/zero")), vec!["too-large"]);
    assert_good_note_processed(&v);
    assert_eq!(out.status.code(), Some(3));
}

#[test]
fn a_closed_stdout_ends_the_run_quietly() {
    use std::io::Read;
    let corpus = Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/corpora-synthetic"));
    let mut notes: Vec<PathBuf> = fs::read_dir(corpus)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "txt"))
        .collect();
    notes.sort();
    // Far more output than a pipe buffer and the writer's buffer hold.
    let many: Vec<&PathBuf> = notes.iter().cycle().take(notes.len() * 40).collect();
    assert!(many.len() > 1000);
    let mut child = Command::new(env!("CARGO_BIN_EXE_tidemark"))
        .args(["extract", "--format", "jsonl"])
        .args(many)
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    let mut first = [0u8; 16];
    child
        .stdout
        .as_mut()
        .unwrap()
        .read_exact(&mut first)
        .unwrap();
    drop(child.stdout.take());
    let out = child.wait_with_output().unwrap();
    assert_eq!(&first[..10], b"{\"source\":");
    assert!(!stderr(&out).contains("cannot write"), "{}", stderr(&out));
    assert!(!stderr(&out).contains("panicked"), "{}", stderr(&out));
    assert_eq!(out.status.code(), Some(0));
}
