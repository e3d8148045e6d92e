//! The picture through the real binary: `extract --format json` documents keep to
//! `docs/schema/picture.schema.json` (checked with the `jsonschema` crate) and
//! `extract --format text` prints the picture summary with the caution.

use std::process::Command;

fn tidemark(args: &[&str]) -> (i32, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_tidemark"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run tidemark");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8(out.stdout).expect("utf-8 output"),
    )
}

#[test]
fn every_corpus_document_keeps_to_the_picture_schema() {
    let schema: serde_json::Value =
        serde_json::from_str(include_str!("../docs/schema/picture.schema.json")).unwrap();
    let validator = jsonschema::validator_for(&schema).expect("schema compiles");
    let (code, stdout) = tidemark(&["extract", "--format", "json", "corpora-synthetic"]);
    assert_eq!(code, 0);
    let run: serde_json::Value = serde_json::from_str(&stdout).expect("one JSON object");
    assert_eq!(run["schema"], "tidemark-extract/1");
    let docs = run["documents"].as_array().expect("documents");
    // 36 notes and the 10 notes of the ward day.
    assert_eq!(docs.len(), 46);
    for d in docs {
        let errors: Vec<String> = validator
            .iter_errors(d)
            .map(|e| format!("{e} at {}", e.instance_path))
            .collect();
        assert!(errors.is_empty(), "{}: {errors:#?}", d["source"]);
    }
}

#[test]
fn text_summary_prints_each_note_and_the_caution() {
    let (code, stdout) = tidemark(&[
        "extract",
        "--format",
        "text",
        "corpora-synthetic/03-uk-discharge-summary-hfref.txt",
        "corpora-synthetic/13-terse-handover-line.txt",
    ]);
    assert_eq!(code, 0);
    assert_eq!(stdout.matches("   profile: ").count(), 2);
    assert!(stdout.contains("== corpora-synthetic/03-uk-discharge-summary-hfref.txt"));
    assert!(stdout.contains("   derived:"));
    assert!(stdout.contains("   trends:"));
    assert!(stdout.contains("it is not a diagnostic device"));
}
