//! The lint renderers on hand-built models: snapshots of the human and JSON output, the JSON
//! checked against the project's published schema, and the SARIF log validated against the
//! SARIF 2.1.0 JSON schema (tests/data, from the npm package @microsoft/jest-sarif).
//!
//! The note below is invented. Its model is built by hand, as an extractor would report it,
//! so these tests do not depend on the extraction stage.

use serde_json::Value;
use tidemark::cli::inputs::Doc;
use tidemark::lint::{self, LintConfig};
use tidemark::model::*;
use tidemark::picture::{Conflict, Congestion, Evidence, Picture};
use tidemark::render;
use tidemark::span::{LineIndex, Span};
use tidemark::Analysis;

const NOTE: &str = "\
Post-take ward round
Imp: decompensated CCF
O/E: JVP +5 cm, pitting oedema to knees. Clinically euvolaemic.
Obs: BP 80/95, RR 220, Wt 71.2, T 36.8 °C
Bloods: K 5.9 mmol/L, Cr 150 umol/L, later Cr 1.9 mg/dL
Meds: spironolactone 25 mg od
Plan: repeat bloods
";

fn span(text: &str, needle: &str) -> Span {
    let start = text
        .find(needle)
        .unwrap_or_else(|| panic!("{needle:?} not in note"));
    LineIndex::new(text).span(start, start + needle.len())
}

fn meas(
    concept: MeasureConcept,
    value: f64,
    unit: &'static str,
    inferred: bool,
    text: &str,
) -> Measurement {
    let canonical = concept.canonical_unit();
    // Conversions: creatinine mg/dL x 88.4 (molar mass 113.12 g/mol, SI conversion tables).
    let norm = if unit == canonical {
        value
    } else if unit == "mg/dL" {
        value * 88.4
    } else {
        value
    };
    Measurement {
        concept,
        value,
        unit: Some(unit),
        normalized: Some(Quantity {
            value: norm,
            unit: canonical,
        }),
        unit_inferred: inferred,
        date: None,
        time: None,
        assertion: Assertion::Present,
        temporality: Temporality::Current,
        experiencer: Experiencer::Patient,
        time_ref: None,
        range: None,
        qualifier: None,
        unit_text: None,
        text: text.into(),
        span: span(NOTE, text),
        section: None,
        episode: None,
    }
}

fn stmt(kind: StatementKind, value: &str, text: &str) -> Statement {
    Statement {
        kind,
        value: value.into(),
        assertion: Assertion::Present,
        temporality: Temporality::Current,
        experiencer: Experiencer::Patient,
        text: text.into(),
        span: span(NOTE, text),
        section: None,
        episode: None,
    }
}

fn evidence(concept: &str, supports: &'static str, text: &str) -> Evidence {
    Evidence {
        concept: concept.into(),
        supports,
        span: span(NOTE, text),
        note: text.into(),
        item: "finding",
        text: text.into(),
        episode: None,
    }
}

fn model() -> (Extraction, Picture) {
    let mut ex = Extraction::default();
    ex.statements
        .push(stmt(StatementKind::HeartFailure, "", "CCF"));
    ex.statements.push(stmt(
        StatementKind::Acuity,
        "decompensated",
        "decompensated",
    ));
    ex.statements
        .push(stmt(StatementKind::VolumeStatus, "euvolemic", "euvolaemic"));
    ex.measurements.extend([
        meas(MeasureConcept::Jvp, 5.0, "cm[H2O]", false, "JVP +5 cm"),
        meas(MeasureConcept::SystolicBp, 80.0, "mm[Hg]", false, "80"),
        meas(MeasureConcept::DiastolicBp, 95.0, "mm[Hg]", false, "95"),
        meas(
            MeasureConcept::RespiratoryRate,
            220.0,
            "/min",
            false,
            "RR 220",
        ),
        meas(MeasureConcept::Weight, 71.2, "kg", true, "Wt 71.2"),
        meas(MeasureConcept::Temperature, 36.8, "Cel", false, "T 36.8 °C"),
        meas(
            MeasureConcept::Potassium,
            5.9,
            "mmol/L",
            false,
            "K 5.9 mmol/L",
        ),
        meas(
            MeasureConcept::Creatinine,
            150.0,
            "umol/L",
            false,
            "Cr 150 umol/L",
        ),
        meas(
            MeasureConcept::Creatinine,
            1.9,
            "mg/dL",
            false,
            "Cr 1.9 mg/dL",
        ),
    ]);
    ex.medications.push(Medication {
        drug: "spironolactone".into(),
        class: DrugClass::Mra,
        dose: Some(25.0),
        unit: Some("mg".into()),
        route: None,
        frequency: Some("od".into()),
        per_day: Some(1.0),
        daily_dose: Some(25.0),
        note: None,
        change: None,
        starts: None,
        assertion: Assertion::Present,
        text: "spironolactone 25 mg od".into(),
        span: span(NOTE, "spironolactone 25 mg od"),
        section: None,
    });
    let mut pic = Picture::default();
    pic.profile.congestion = Congestion::Wet;
    pic.profile.label = "warm-wet".into();
    let jvp = evidence("raised_jvp", "wet", "JVP +5 cm");
    let oedema = evidence("peripheral_edema", "wet", "pitting oedema to knees");
    pic.profile.evidence = vec![jvp.clone(), oedema.clone()];
    pic.profile.conflicts.push(Conflict {
        axis: "congestion",
        message: "stated euvolaemic against documented congestion".into(),
        stated: vec![evidence("volume_status", "dry", "euvolaemic")],
        documented: vec![jvp, oedema],
        kind: "stated-vs-documented",
    });
    (ex, pic)
}

/// One analysed note plus one skipped input, as the lint command would hold them.
fn run() -> Vec<(Doc, Option<Analysis>)> {
    let (ex, pic) = model();
    let diagnostics = lint::run(NOTE, &ex, &pic, &LintConfig::default());
    let kind = lint::kind::detect(NOTE, &ex);
    let doc = Doc {
        source: "ward/bed 4.txt".into(),
        text: Some(NOTE.into()),
        warnings: vec![],
    };
    let skipped = Doc::from_bytes("empty.txt".into(), b"");
    vec![
        (
            doc,
            Some(Analysis {
                extraction: ex,
                picture: pic,
                kind,
                diagnostics,
            }),
        ),
        (skipped, None),
    ]
}

fn rules_fired(docs: &[(Doc, Option<Analysis>)]) -> Vec<&'static str> {
    let mut v: Vec<&str> = docs[0]
        .1
        .as_ref()
        .unwrap()
        .diagnostics
        .iter()
        .map(|d| d.rule)
        .collect();
    v.sort();
    v.dedup();
    v
}

#[test]
fn the_hand_built_note_fires_the_expected_rules() {
    let docs = run();
    assert_eq!(
        docs[0].1.as_ref().unwrap().kind,
        lint::DocKind::ProgressNote
    );
    // Expected by reading the invented note: BP 80/95 and RR 220 are impossible, Wt 71.2 has
    // no unit, creatinine is in two systems, CCF has no type, the stated euvolaemia
    // contradicts the JVP and oedema, no diuretic is planned for a wet profile, and
    // spironolactone is listed unchanged beside K 5.9. Acuity is stated ("decompensated"),
    // a weight and a volume status are documented.
    assert_eq!(
        rules_fired(&docs),
        vec![
            "diuretic-plan-missing",
            "hf-type-unspecified",
            "lvef-missing",
            "potassium-raising-continued",
            "unit-missing",
            "unit-mixed",
            "value-implausible",
            "volume-status-contradiction",
        ]
    );
}

#[test]
fn human_output_snapshot() {
    let mut out = Vec::new();
    render::lint_human::write(&mut out, &run(), Default::default()).unwrap();
    let text = String::from_utf8(out).unwrap();
    assert!(text.trim_end().ends_with(render::CAUTION));
    insta::assert_snapshot!("lint_human", text);
}

fn schema(path: &str) -> Value {
    let p = format!("{}/{path}", env!("CARGO_MANIFEST_DIR"));
    serde_json::from_str(&std::fs::read_to_string(&p).unwrap()).unwrap()
}

fn assert_valid(schema: &Value, instance: &Value) {
    let validator = jsonschema::validator_for(schema).expect("schema compiles");
    let errors: Vec<String> = validator
        .iter_errors(instance)
        .map(|e| format!("{} at {}", e, e.instance_path))
        .collect();
    assert!(
        errors.is_empty(),
        "schema violations:\n{}",
        errors.join("\n")
    );
}

#[test]
fn json_output_snapshot_and_schema() {
    let docs = run();
    let mut out = Vec::new();
    render::json::write_lint_run(&mut out, &docs).unwrap();
    let v: Value = serde_json::from_slice(&out).unwrap();
    assert_eq!(v["schema"], "tidemark-lint/1");
    assert_eq!(v["documents"][1]["kind"], Value::Null);
    let lint_schema = schema("docs/schema/tidemark-lint-1.schema.json");
    assert_valid(&lint_schema, &v);
    insta::assert_json_snapshot!("lint_json", v);

    // JSON Lines: one document per line, each valid against the same schema.
    let mut out = Vec::new();
    for (d, a) in &docs {
        render::json::write_lint_line(&mut out, d, a.as_ref()).unwrap();
    }
    let text = String::from_utf8(out).unwrap();
    assert_eq!(text.lines().count(), 2);
    for line in text.lines() {
        let v: Value = serde_json::from_str(line).unwrap();
        assert_eq!(v["schema"], "tidemark-lint/1");
        assert_valid(&lint_schema, &v);
    }
}

#[test]
fn the_lint_schema_rejects_broken_output() {
    // The schema check must be able to fail: a misspelt severity and a missing span are
    // violations.
    let lint_schema = schema("docs/schema/tidemark-lint-1.schema.json");
    let bad = serde_json::json!({
        "schema": "tidemark-lint/1",
        "documents": [{"source": "a", "kind": "other", "warnings": [],
            "diagnostics": [{"rule": "x", "severity": "warn", "category": "units",
                              "message": "m"}]}]
    });
    let validator = jsonschema::validator_for(&lint_schema).unwrap();
    assert!(!validator.is_valid(&bad));
}

#[test]
fn sarif_output_validates_against_the_sarif_2_1_0_schema() {
    let docs = run();
    let log = render::sarif::sarif_log(&docs);
    let sarif_schema = schema("tests/data/sarif-2.1.0-rtm.5.json");
    assert_valid(&sarif_schema, &log);
    let run0 = &log["runs"][0];
    assert_eq!(log["version"], "2.1.0");
    let results = run0["results"].as_array().unwrap();
    let n_diags = docs[0].1.as_ref().unwrap().diagnostics.len();
    assert_eq!(results.len(), n_diags);
    // Every result names a rule that tool.driver.rules describes, at the same index.
    let rules = run0["tool"]["driver"]["rules"].as_array().unwrap();
    for r in results {
        let i = r["ruleIndex"].as_u64().unwrap() as usize;
        assert_eq!(rules[i]["id"], r["ruleId"]);
        assert!(
            r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"]
                .as_str()
                .unwrap()
                .starts_with("ward/bed%204.txt")
        );
    }
    // Physical locations are 1-based lines and columns: "RR 220" sits on line 4, column 16.
    let rr = results
        .iter()
        .find(|r| r["message"]["text"].as_str().unwrap().contains("RR 220"))
        .unwrap();
    let region = &rr["locations"][0]["physicalLocation"]["region"];
    assert_eq!(region["startLine"], 4);
    assert_eq!(region["startColumn"], 16);
    assert_eq!(region["endColumn"], 22);
    // The skipped input is a tool execution notification.
    let notes = run0["invocations"][0]["toolExecutionNotifications"]
        .as_array()
        .unwrap();
    assert_eq!(notes.len(), 1);
}

#[test]
fn the_sarif_schema_rejects_an_invalid_log() {
    // The vendored schema must be able to fail: a result level outside the enumeration.
    let sarif_schema = schema("tests/data/sarif-2.1.0-rtm.5.json");
    let mut log = render::sarif::sarif_log(&run());
    log["runs"][0]["results"][0]["level"] = "fatal".into();
    let validator = jsonschema::validator_for(&sarif_schema).unwrap();
    assert!(!validator.is_valid(&log));
}
