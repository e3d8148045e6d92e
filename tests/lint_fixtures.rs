//! One invented note per rule that fires it (`<rule-id>.fires.txt`) and one that does not
//! (`<rule-id>.quiet.txt`), under tests/fixtures/lint/, run through the binary.

use std::path::PathBuf;
use std::process::Command;

fn fixture(id: &str, which: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/lint")
        .join(format!("{id}.{which}.txt"))
}

fn rules_reported(path: &PathBuf) -> Vec<String> {
    let o = Command::new(env!("CARGO_BIN_EXE_tidemark"))
        .args(["lint", "--format", "json", "--fail-on", "never"])
        .arg(path)
        .output()
        .unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    v["documents"][0]["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .map(|d| d["rule"].as_str().unwrap().to_string())
        .collect()
}

#[test]
fn every_rule_has_both_fixtures() {
    for r in tidemark::lint::registry() {
        for which in ["fires", "quiet"] {
            let p = fixture(r.id, which);
            let text = std::fs::read_to_string(&p).unwrap_or_else(|_| panic!("{p:?} missing"));
            assert!(!text.trim().is_empty(), "{p:?} is empty");
        }
    }
}

/// Expected values come from reading each invented note by hand.
#[test]
fn fixtures_fire_and_stay_quiet() {
    let mut failures = Vec::new();
    for r in tidemark::lint::registry() {
        let fires = rules_reported(&fixture(r.id, "fires"));
        if !fires.iter().any(|x| x == r.id) {
            failures.push(format!(
                "{}: did not fire on its .fires fixture ({fires:?})",
                r.id
            ));
        }
        let quiet = rules_reported(&fixture(r.id, "quiet"));
        if quiet.iter().any(|x| x == r.id) {
            failures.push(format!("{}: fired on its .quiet fixture", r.id));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// Wordings that already answer a rule keep it quiet; each note is read by hand.
#[test]
fn rules_stay_quiet_where_the_wording_answers_them() {
    let dir = tempfile::tempdir().unwrap();
    let cases = [
        // An arrow chain is an ordered course (common practice, no source).
        (
            "weight-series-undated",
            "Progress note\nHeart failure. Weight 90.2 kg -> 85.0 kg with IV furosemide.\n",
        ),
        // A discharge summary's plain `Meds:` list is the discharge medication list
        // (discharge-note elements, domain reference 09-discharge-gdmt.md; the heading
        // wording is common practice, no source).
        (
            "discharge-instructions-incomplete",
            "DISCHARGE SUMMARY\nDiagnosis: acute on chronic HFrEF.\nDischarge weight 85.0 kg. \
             Follow up HF clinic 2 weeks. Daily weights, 1.5 L fluid restriction, low salt \
             diet, gentle walking, return if breathless or weight up 2 kg in 3 days.\n\
             Meds: furosemide 40 mg od, bisoprolol 2.5 mg od.\n",
        ),
    ];
    for (i, (rule, text)) in cases.iter().enumerate() {
        let p = dir.path().join(format!("case-{i}.txt"));
        std::fs::write(&p, text).unwrap();
        let reported = rules_reported(&p);
        assert!(
            !reported.iter().any(|r| r == rule),
            "{rule} fired on {text:?}: {reported:?}"
        );
    }
    // The same weights with no course between them still fire.
    let p = dir.path().join("undated.txt");
    std::fs::write(
        &p,
        "Progress note\nHeart failure. Weights 90.2 kg, 85.0 kg.\n",
    )
    .unwrap();
    assert!(rules_reported(&p)
        .iter()
        .any(|r| r == "weight-series-undated"));
}
