//! `tidemark lint corpora-synthetic/` against the corpus's hand-written gold
//! (`corpora-synthetic/gold/*.json`: `lint_expected` rules must be reported, `lint_forbidden`
//! rules must not). The gold was written independently of the rules, by the agreed lint
//! semantics; rules in neither list may go either way.

use std::collections::BTreeSet;
use std::path::Path;
use std::process::Command;

#[test]
fn corpus_meets_its_lint_gold() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("corpora-synthetic");
    let o = Command::new(env!("CARGO_BIN_EXE_tidemark"))
        .args(["lint", "--format", "json", "--fail-on", "never"])
        .arg(&root)
        .output()
        .unwrap();
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let mut problems = Vec::new();
    let mut checked = 0;
    for doc in v["documents"].as_array().unwrap() {
        let source = doc["source"].as_str().unwrap();
        let stem = Path::new(source).file_stem().unwrap().to_str().unwrap();
        let gold_path = root.join("gold").join(format!("{stem}.json"));
        let Ok(gold) = std::fs::read_to_string(&gold_path) else {
            continue; // ward/ notes have no gold
        };
        let gold: serde_json::Value = serde_json::from_str(&gold).unwrap();
        let fired: BTreeSet<&str> = doc["diagnostics"]
            .as_array()
            .unwrap()
            .iter()
            .map(|d| d["rule"].as_str().unwrap())
            .collect();
        for r in gold["lint_expected"].as_array().unwrap() {
            let r = r.as_str().unwrap();
            if !fired.contains(r) {
                problems.push(format!("{stem}: expected {r}"));
            }
        }
        for r in gold["lint_forbidden"].as_array().unwrap() {
            let r = r.as_str().unwrap();
            if fired.contains(r) {
                problems.push(format!("{stem}: forbidden {r} fired"));
            }
        }
        checked += 1;
    }
    assert!(checked >= 30, "only {checked} gold notes checked");
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}
