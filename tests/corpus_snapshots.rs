//! One reviewed snapshot per invented note of `corpora-synthetic/` (ward/ included): a compact
//! projection of `tidemark::analyze` — measurements, findings, statements, the profile, the
//! classifications and the lint rules fired. The snapshots were checked by reading the notes
//! against them (the note text is the reference); a change in any line is a change in what
//! the tool reads from a note and must be reviewed the same way.

use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use serde_json::Value;
use tidemark::{analyze, Config};

fn notes() -> Vec<PathBuf> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("corpora-synthetic");
    let mut out = Vec::new();
    for dir in [root.clone(), root.join("ward")] {
        for entry in std::fs::read_dir(&dir).expect("corpus dir") {
            let path = entry.expect("entry").path();
            if path.extension().and_then(|e| e.to_str()) == Some("txt") {
                out.push(path);
            }
        }
    }
    out.sort();
    out
}

/// A JSON scalar as a short token: strings bare, null as `-`.
fn tok(v: &Value) -> String {
    match v {
        Value::Null => "-".into(),
        Value::String(s) => s.clone(),
        other => other.to_string(),
    }
}

/// A number rounded to 3 decimal places, with no negative zero.
fn dp3(v: &Value) -> String {
    match v.as_f64() {
        Some(x) => {
            let s = format!("{x:.3}");
            if s == "-0.000" {
                "0.000".into()
            } else {
                s
            }
        }
        None => "-".into(),
    }
}

fn span(v: &Value) -> String {
    format!("{}..{}", tok(&v["start"]), tok(&v["end"]))
}

fn project(text: &str) -> String {
    let a = analyze(text, &Config::default());
    let mut s = String::new();
    let ex = serde_json::to_value(&a.extraction).expect("extraction serializes");
    let pic = serde_json::to_value(&a.picture).expect("picture serializes");

    writeln!(s, "measurements:").unwrap();
    for m in ex["measurements"].as_array().into_iter().flatten() {
        writeln!(
            s,
            "  {} {} ({} {}) unit={} {}/{}/{} {:?} {}",
            tok(&m["concept"]),
            tok(&m["value"]),
            dp3(&m["normalized"]["value"]),
            tok(&m["normalized"]["unit"]),
            tok(&m["unit"]),
            tok(&m["assertion"]),
            tok(&m["temporality"]),
            tok(&m["experiencer"]),
            tok(&m["text"]),
            span(&m["span"]),
        )
        .unwrap();
    }
    writeln!(s, "findings:").unwrap();
    for f in ex["findings"].as_array().into_iter().flatten() {
        writeln!(
            s,
            "  {} {}/{}/{} {:?} {}",
            tok(&f["concept"]),
            tok(&f["assertion"]),
            tok(&f["temporality"]),
            tok(&f["experiencer"]),
            tok(&f["text"]),
            span(&f["span"]),
        )
        .unwrap();
    }
    writeln!(s, "statements:").unwrap();
    for st in ex["statements"].as_array().into_iter().flatten() {
        writeln!(
            s,
            "  {} {:?} {} {:?}",
            tok(&st["kind"]),
            tok(&st["value"]),
            tok(&st["assertion"]),
            tok(&st["text"]),
        )
        .unwrap();
    }
    let p = &pic["profile"];
    writeln!(
        s,
        "profile: {} congestion={} perfusion={}",
        tok(&p["label"]),
        tok(&p["congestion"]),
        tok(&p["perfusion"]),
    )
    .unwrap();
    let c = &pic["classifications"];
    writeln!(
        s,
        "classifications: nyha={} type={} acuity={} volume={}",
        tok(&c["nyha_class"]),
        tok(&c["hf_type"]),
        tok(&c["acuity"]),
        tok(&c["volume_status"]),
    )
    .unwrap();
    let mut rules: Vec<&str> = a.diagnostics.iter().map(|d| d.rule).collect();
    rules.sort_unstable();
    rules.dedup();
    writeln!(s, "lint: {}", rules.join(" ")).unwrap();
    s
}

#[test]
fn every_corpus_note_matches_its_reviewed_snapshot() {
    let notes = notes();
    // 36 single notes and the 10 notes of the ward day.
    assert_eq!(notes.len(), 46);
    for path in notes {
        let text = std::fs::read_to_string(&path).expect("note");
        let stem = path.file_stem().and_then(|s| s.to_str()).expect("stem");
        let name = if path.parent().and_then(|p| p.file_name()) == Some("ward".as_ref()) {
            format!("ward-{stem}")
        } else {
            stem.to_string()
        };
        let mut settings = insta::Settings::clone_current();
        settings.set_snapshot_suffix(name);
        settings.set_prepend_module_to_snapshot(false);
        settings.set_omit_expression(true);
        settings.bind(|| insta::assert_snapshot!("note", project(&text)));
    }
}

#[test]
fn the_projection_changes_when_the_note_does() {
    // The snapshot would not catch anything if the projection ignored the note.
    let a = project("Ward round\nWt 80.1 kg. JVP not raised.\n");
    let b = project("Ward round\nWt 82.4 kg. JVP raised.\n");
    assert_ne!(a, b);
    assert!(a.contains("weight 80.1 (80.100 kg)"), "{a}");
    assert!(
        b.contains("jvp_raised present") || b.contains("present/current"),
        "{b}"
    );
}
