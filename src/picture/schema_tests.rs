//! The picture's JSON against `docs/schema/picture.schema.json`, checked with the
//! `jsonschema` crate (a general-purpose JSON Schema 2020-12 validator from crates.io).

use serde_json::{json, Value};

use super::examples;
use super::testkit::Note;
use crate::model::{FindingConcept as F, MeasureConcept as M, StatementKind as K};

const SCHEMA: &str = include_str!("../../docs/schema/picture.schema.json");

fn schema() -> Value {
    serde_json::from_str(SCHEMA).expect("schema is JSON")
}

fn errors(instance: &Value) -> Vec<String> {
    let validator = jsonschema::validator_for(&schema()).expect("schema compiles");
    validator
        .iter_errors(instance)
        .map(|e| format!("{} at {}", e, e.instance_path))
        .collect()
}

fn notes() -> Vec<Note> {
    let mut lvef_bound = Note::new("EF <45%. Wt 80 kg, height 170 cm.");
    lvef_bound.measure("EF <45%", M::Lvef, 45.0).qualifier =
        Some(crate::model::Qualifier::UpperBound);
    lvef_bound.measure("Wt 80 kg", M::Weight, 80.0);
    lvef_bound.measure("height 170 cm", M::Height, 170.0);
    let mut possible = Note::new("?S3. Warm peripheries. BP 90/72");
    possible.finding("?S3", F::S3, crate::model::Assertion::Possible);
    possible
        .absent("Warm peripheries", F::CoolPeripheries)
        .bp("BP 90/72", 90.0, 72.0);
    let mut stated = Note::new("Euvolaemic. Effusion.");
    stated
        .state("Euvolaemic", K::VolumeStatus, "euvolemic")
        .present("Effusion", F::PleuralEffusion);
    vec![
        examples::ward_record(),
        examples::discharge_summary(),
        lvef_bound,
        possible,
        stated,
        Note::new(""),
    ]
}

#[test]
fn schema_is_valid_json_schema_2020_12() {
    assert!(jsonschema::meta::is_valid(&schema()));
    assert_eq!(
        schema()["$schema"],
        json!("https://json-schema.org/draft/2020-12/schema")
    );
}

#[test]
fn every_example_picture_matches_the_schema() {
    for n in notes() {
        let pic = super::build(&n.build());
        let v = serde_json::to_value(&pic).expect("serialises");
        let errs = errors(&v);
        assert!(errs.is_empty(), "{}: {errs:#?}", n.text);
    }
}

#[test]
fn the_default_picture_matches_the_schema() {
    let v = serde_json::to_value(super::Picture::default()).unwrap();
    assert_eq!(v["profile"]["label"], json!("unknown"));
    let errs = errors(&v);
    assert!(errs.is_empty(), "{errs:#?}");
}

#[test]
fn the_extract_document_carries_the_picture_keys() {
    let n = examples::discharge_summary();
    let ex = n.build();
    let picture = super::build(&ex);
    let analysis = crate::Analysis {
        extraction: ex,
        picture,
        kind: crate::lint::DocKind::Other,
        diagnostics: Vec::new(),
    };
    let doc = crate::cli::inputs::Doc {
        source: "discharge.txt".into(),
        text: Some(n.text.clone()),
        warnings: Vec::new(),
    };
    let v = crate::render::json::extract_document(&doc, Some(&analysis));
    for key in ["profile", "classifications", "patient", "derived", "trends"] {
        assert!(v.get(key).is_some(), "missing {key}");
    }
    let errs = errors(&v);
    assert!(errs.is_empty(), "{errs:#?}");
}

#[test]
fn the_schema_rejects_drift() {
    let pic = super::build(&examples::ward_record().build());
    let mut v = serde_json::to_value(&pic).unwrap();
    v["profile"]["label"] = json!("wet-cold");
    assert!(!errors(&v).is_empty());
    let mut v = serde_json::to_value(&pic).unwrap();
    v["derived"]["egfr"]["unexpected"] = json!(1);
    assert!(!errors(&v).is_empty());
    let mut v = serde_json::to_value(&pic).unwrap();
    v["classifications"]["nyha_class"] = json!("V");
    assert!(!errors(&v).is_empty());
}
