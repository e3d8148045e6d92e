//! `extract --format json` on the whole demo corpus keeps to
//! `docs/schema/tidemark-extract-1.schema.json` (checked with the `jsonschema` crate), and the
//! schema is not vacuous: a document with a wrong concept name is rejected.

use std::process::Command;

fn validator() -> jsonschema::Validator {
    let schema: serde_json::Value = serde_json::from_str(include_str!(
        "../docs/schema/tidemark-extract-1.schema.json"
    ))
    .unwrap();
    jsonschema::validator_for(&schema).expect("schema compiles")
}

#[test]
fn the_corpus_run_keeps_to_the_extract_schema() {
    let out = Command::new(env!("CARGO_BIN_EXE_tidemark"))
        .args(["extract", "--format", "json", "corpora-synthetic"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run tidemark");
    assert_eq!(out.status.code(), Some(0));
    let run: serde_json::Value = serde_json::from_slice(&out.stdout).expect("one JSON object");
    let v = validator();
    let errors: Vec<String> = v
        .iter_errors(&run)
        .take(10)
        .map(|e| format!("{e} at {}", e.instance_path))
        .collect();
    assert!(errors.is_empty(), "{errors:#?}");
    // The corpus documents something of every kind.
    let docs = run["documents"].as_array().unwrap();
    assert!(docs
        .iter()
        .all(|d| !d["measurements"].as_array().unwrap().is_empty()
            || !d["findings"].as_array().unwrap().is_empty()));

    let mut broken = run.clone();
    broken["documents"][0]["measurements"][0]["concept"] = "blood_sugar".into();
    assert!(
        !v.is_valid(&broken),
        "the schema must reject an unknown concept"
    );
}
