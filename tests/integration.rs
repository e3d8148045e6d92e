//! Editor and pipeline integration: the `check`, streaming and FHIR outputs of the real
//! binary, and hand-built fixtures that the Python tests (tests/python/) validate with
//! libraries from outside the project (jsonschema, fhir.resources).

use std::io::Write;
use std::path::PathBuf;
use std::process::{Command, Stdio};

use serde_json::{json, Value};
use tidemark::cli::inputs::Doc;
use tidemark::lint::{self, Fix, Severity};
use tidemark::model::*;
use tidemark::picture::Picture;
use tidemark::span::LineIndex;
use tidemark::Analysis;

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_tidemark"))
}

fn run_with_stdin(args: &[&str], stdin: &str) -> (i32, String) {
    let mut child = bin()
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .expect("binary runs");
    child
        .stdin
        .take()
        .unwrap()
        .write_all(stdin.as_bytes())
        .unwrap();
    let out = child.wait_with_output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8(out.stdout).unwrap(),
    )
}

/// An invented note with non-ASCII text before the values, and the analysis extraction and
/// lint are expected to give for it, built by hand.
pub const NOTE: &str = "Obs 😀: T 37.2 °C, BP 98/60, HR 72, SpO2 95%\n\
Labs: Cr 130 µmol/L, Na 134\n\
Wt 82.4\n\
O/E: no crackles, ?S3, pitting oedema to knees\n";

fn handbuilt() -> (Doc, Analysis) {
    let idx = LineIndex::new(NOTE);
    let at = |s: &str| {
        let i = NOTE.find(s).unwrap_or_else(|| panic!("{s} in note"));
        idx.span(i, i + s.len())
    };
    let m =
        |concept: MeasureConcept, text: &str, value: f64, unit: Option<&'static str>| Measurement {
            concept,
            value,
            unit,
            normalized: unit.map(|u| Quantity { value, unit: u }),
            unit_inferred: false,
            date: Some("2026-03-04".into()),
            time: None,
            assertion: Assertion::Present,
            temporality: Temporality::Current,
            experiencer: Experiencer::Patient,
            time_ref: None,
            range: None,
            qualifier: None,
            unit_text: None,
            text: text.into(),
            span: at(text),
            section: None,
            episode: None,
        };
    let f = |concept: FindingConcept, text: &str, assertion: Assertion| Finding {
        concept,
        assertion,
        experiencer: Experiencer::Patient,
        temporality: Temporality::Current,
        text: text.into(),
        span: at(text),
        detail: FindingDetail::default(),
        cues: Vec::new(),
        section: Some(0),
        episode: None,
    };
    let mut edema = f(
        FindingConcept::PeripheralEdema,
        "pitting oedema to knees",
        Assertion::Present,
    );
    edema.detail.level = Some("knees".into());
    let mut crackles = f(FindingConcept::Crackles, "crackles", Assertion::Absent);
    crackles.cues.push(Cue {
        family: "negation",
        text: "no".into(),
        span: at("no crackles"),
    });
    let mut bp_sys = m(MeasureConcept::SystolicBp, "98/60", 98.0, Some("mm[Hg]"));
    bp_sys.span = at("98");
    let mut bp_dia = m(MeasureConcept::DiastolicBp, "98/60", 60.0, Some("mm[Hg]"));
    let i = NOTE.find("98/60").unwrap() + 3;
    bp_dia.span = idx.span(i, i + 2);
    let weight = m(MeasureConcept::Weight, "Wt 82.4", 82.4, None);
    let wt_end = weight.span.end;
    let extraction = Extraction {
        sections: vec![Section {
            kind: SectionKind::Examination,
            title: "O/E:".into(),
            header: at("O/E:"),
            span: idx.span(NOTE.find("O/E:").unwrap(), NOTE.len()),
        }],
        measurements: vec![
            m(MeasureConcept::Temperature, "T 37.2 °C", 37.2, Some("Cel")),
            bp_sys,
            bp_dia,
            m(MeasureConcept::HeartRate, "HR 72", 72.0, Some("/min")),
            m(MeasureConcept::Spo2, "SpO2 95%", 95.0, Some("%")),
            m(
                MeasureConcept::Creatinine,
                "Cr 130 µmol/L",
                130.0,
                Some("umol/L"),
            ),
            m(MeasureConcept::Sodium, "Na 134", 134.0, Some("mmol/L")),
            weight,
        ],
        findings: vec![
            crackles,
            f(FindingConcept::S3, "S3", Assertion::Possible),
            edema,
        ],
        note_date: Some("2026-03-04".into()),
        ..Extraction::default()
    };
    let diagnostics = vec![lint::Diagnostic {
        rule: "unit-missing",
        severity: Severity::Warning,
        category: "units",
        message: "weight 82.4 has no unit".into(),
        query: Some("Please confirm the unit of the weight 82.4.".into()),
        span: Some(at("Wt 82.4")),
        fix: Some(Fix {
            title: "Add the unit kg".into(),
            span: idx.span(wt_end, wt_end),
            replacement: " kg".into(),
        }),
    }];
    let doc = Doc::from_bytes("invented/ward-note.txt".into(), NOTE.as_bytes());
    let analysis = Analysis {
        extraction,
        picture: Picture::default(),
        kind: tidemark::lint::DocKind::Other,
        diagnostics,
    };
    (doc, analysis)
}

fn fixture_dir() -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("tidemark-fixtures");
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// Writes the FHIR bundle and the check response of the hand-built analysis, for
/// tests/python/test_fhir.py and test_check.py to validate with outside libraries.
#[test]
fn handbuilt_fixtures_are_written_for_outside_validation() {
    let (doc, analysis) = handbuilt();
    let bundle = tidemark::render::fhir::bundle(&[(doc.clone(), Some(analysis.clone()))]);
    let entries = bundle["entry"].as_array().unwrap();
    // Patient, one BP panel, six other observations, three conditions.
    assert_eq!(entries.len(), 11, "{bundle:#}");
    std::fs::write(
        fixture_dir().join("fhir-handbuilt.json"),
        serde_json::to_string_pretty(&bundle).unwrap(),
    )
    .unwrap();

    let response = tidemark::cli::check::response(&doc, Some(&analysis), Some(doc.source.clone()));
    let d = &response["diagnostics"][0];
    // "Wt 82.4" is on line 3 at the line start: columns agree in every unit there.
    assert_eq!(d["span"]["line"], 3);
    assert_eq!(d["span"]["column_utf16"], 1);
    // The temperature follows the emoji: one scalar value, two UTF-16 units.
    let t = &response["document"]["measurements"][0]["span"];
    assert_eq!(t["column"], 8);
    assert_eq!(t["column_utf16"], 9);
    std::fs::write(
        fixture_dir().join("check-handbuilt.json"),
        serde_json::to_string_pretty(&response).unwrap(),
    )
    .unwrap();
    std::fs::write(fixture_dir().join("note.txt"), NOTE).unwrap();
}

#[test]
fn check_answers_errors_in_json_with_exit_code_2() {
    let (code, out) = run_with_stdin(&["check", "--stdin-json"], "{\"path\": 1}");
    assert_eq!(code, 2);
    let v: Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["ok"], false);
    assert_eq!(v["error"]["code"], "invalid-request");
}

#[test]
fn check_answers_a_request() {
    let req = json!({"text": NOTE, "path": "n.txt", "config": {"date_order": "dmy"}});
    let (code, out) = run_with_stdin(&["check", "--stdin-json"], &req.to_string());
    assert_eq!(code, 0);
    let v: Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["schema"], "tidemark-check/1");
    assert_eq!(v["document"]["source"], "n.txt");
    assert_eq!(out.lines().count(), 1);
}

#[test]
fn stream_keeps_order_and_reports_bad_lines() {
    let input =
        "{\"id\": \"a\", \"text\": \"Wt 82.4\"}\nnot json\n{\"id\": 3, \"text\": \"µ°😀\"}\n";
    let (code, out) = run_with_stdin(&["extract", "--input", "jsonl", "--format", "jsonl"], input);
    assert_eq!(code, 1, "an error line makes the exit code 1");
    let lines: Vec<Value> = out
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.len(), 3);
    assert_eq!(lines[0]["id"], "a");
    assert_eq!(lines[0]["schema"], "tidemark-extract/1");
    assert_eq!(lines[1]["error"]["code"], "invalid-json");
    assert_eq!(lines[1]["line"], 2);
    assert_eq!(lines[2]["id"], 3);
}

#[test]
fn stream_needs_jsonl_output_and_no_paths() {
    let (code, _) = run_with_stdin(&["extract", "--input", "jsonl", "--format", "json"], "");
    assert_eq!(code, 2);
    let (code, _) = run_with_stdin(
        &["extract", "--input", "jsonl", "--format", "jsonl", "x.txt"],
        "",
    );
    assert_eq!(code, 2);
}

#[test]
fn fhir_output_reports_a_skipped_document() {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("fhir-empty");
    std::fs::create_dir_all(&dir).unwrap();
    let empty = dir.join("empty.txt");
    std::fs::write(&empty, "").unwrap();
    let out = bin()
        .args(["extract", "--format", "fhir"])
        .arg(&empty)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(3));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["resourceType"], "Bundle");
    assert_eq!(v["type"], "collection");
    assert_eq!(
        v["entry"][0]["resource"]["resourceType"],
        "OperationOutcome"
    );
}
