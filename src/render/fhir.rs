//! `extract --format fhir`: a FHIR R4 (4.0.1) `Bundle` of type `collection`.
//!
//! Per document the bundle holds one `Patient` (no identifying data: only what the note says
//! about sex), one `Observation` per measured value and one `Condition` per finding:
//!
//! * Vitals, weights and labs are `Observation`s coded with LOINC (the codes the FHIR R4
//!   vital-signs profile requires for vital signs) plus our own concept code, with a UCUM
//!   `valueQuantity` (`system = http://unitsofmeasure.org`) in the concept's canonical unit.
//!   A systolic and a diastolic value written together (`BP 98/60`) become one blood-pressure
//!   panel (85354-9) with the two as components (8480-6, 8462-4), as the profile lays out.
//!   `effectiveDateTime` is the value's date when the text dates it (a date only: a clock
//!   time without a time zone is not a valid FHIR dateTime).
//! * Findings are `Condition`s whose `verificationStatus` carries the assertion: present is
//!   `confirmed`, absent (`no crackles`) is `refuted`, possible (`?S3`) is `provisional`.
//! * Hypothetical mentions, mentions about someone else and historical findings are left
//!   out: they are not statements about the patient's current state.
//! * Every resource carries the text it came from in the extension [`SPAN_EXTENSION`]
//!   (document, byte offsets, lines and columns, the text): documented in
//!   `docs/integration.md`.
//!
//! The resources do not claim the vital-signs profile in `meta.profile`: the profile needs an
//! `effective[x]`, which a note does not always give.

use std::io::{self, Write};

use serde_json::{json, Map, Value};

use crate::cli::inputs::Doc;
use crate::model::{
    Assertion, Experiencer, Extraction, Finding, MeasureConcept, Measurement, Qualifier,
    Temporality,
};
use crate::span::Span;
use crate::Analysis;

pub const FHIR_VERSION: &str = "4.0.1";
/// Our extension carrying where in the note a resource came from.
pub const SPAN_EXTENSION: &str = "https://tidemark.invalid/fhir/StructureDefinition/source-span";
/// Our code system of concept names (`weight`, `crackles`, ...), used beside LOINC.
pub const CONCEPT_SYSTEM: &str = "https://tidemark.invalid/fhir/CodeSystem/concept";
pub const LOINC: &str = "http://loinc.org";
pub const UCUM: &str = "http://unitsofmeasure.org";
const OBS_CATEGORY: &str = "http://terminology.hl7.org/CodeSystem/observation-category";
const CONDITION_CLINICAL: &str = "http://terminology.hl7.org/CodeSystem/condition-clinical";
const CONDITION_VERIFICATION: &str = "http://terminology.hl7.org/CodeSystem/condition-ver-status";

/// Blood pressure panel, systolic and diastolic (FHIR R4 4.0.1 vital-signs profile, value set
/// observation-vitalsignresult; also the domain reference on vitals, labs and units, §5.1).
pub const BP_PANEL: (&str, &str) = ("85354-9", "Blood pressure panel with all children optional");
pub const BP_SYSTOLIC: (&str, &str) = ("8480-6", "Systolic blood pressure");
pub const BP_DIASTOLIC: (&str, &str) = ("8462-4", "Diastolic blood pressure");

/// LOINC code and display of a concept, where one is used.
///
/// Vital signs: the FHIR R4 (4.0.1) vital-signs profile's value set
/// observation-vitalsignresult (hl7.org/fhir/R4/valueset-observation-vitalsignresult.html),
/// as also listed in the domain reference on vitals, labs and units, §5.1. Labs: the same
/// domain file §5.2; creatinine (substance), sodium, potassium and haemoglobin are marked
/// verified there, urea, BNP, NT-proBNP and LVEF are marked "from memory" there and not
/// verified further. JVP, fluid balance, urine output and lactate carry no LOINC code (the
/// domain file gives none), only our concept code.
pub fn loinc(concept: MeasureConcept) -> Option<(&'static str, &'static str)> {
    use MeasureConcept::*;
    Some(match concept {
        SystolicBp => BP_SYSTOLIC,
        DiastolicBp => BP_DIASTOLIC,
        HeartRate => ("8867-4", "Heart rate"),
        RespiratoryRate => ("9279-1", "Respiratory rate"),
        Spo2 => ("2708-6", "Oxygen saturation in Arterial blood"),
        Temperature => ("8310-5", "Body temperature"),
        Weight => ("29463-7", "Body weight"),
        Height => ("8302-2", "Body height"),
        Creatinine => ("14682-9", "Creatinine [Moles/volume] in Serum or Plasma"),
        Urea => ("22664-7", "Urea [Moles/volume] in Serum or Plasma"),
        Sodium => ("2951-2", "Sodium [Moles/volume] in Serum or Plasma"),
        Potassium => ("2823-3", "Potassium [Moles/volume] in Serum or Plasma"),
        Hemoglobin => ("718-7", "Hemoglobin [Mass/volume] in Blood"),
        Bnp => (
            "30934-4",
            "Natriuretic peptide B [Mass/volume] in Serum or Plasma",
        ),
        NtProbnp => (
            "33762-6",
            "Natriuretic peptide.B prohormone N-Terminal [Mass/volume] in Serum or Plasma",
        ),
        Lvef => ("10230-1", "Left ventricular Ejection fraction"),
        Jvp | FluidBalance | UrineOutput | Lactate => return None,
    })
}

/// The observation-category code of a concept, where one fits.
pub fn category(concept: MeasureConcept) -> Option<(&'static str, &'static str)> {
    use MeasureConcept::*;
    match concept {
        SystolicBp | DiastolicBp | HeartRate | RespiratoryRate | Spo2 | Temperature | Weight
        | Height => Some(("vital-signs", "Vital Signs")),
        Lvef => Some(("imaging", "Imaging")),
        Jvp => Some(("exam", "Exam")),
        c if c.is_lab() => Some(("laboratory", "Laboratory")),
        _ => None,
    }
}

/// Write the bundle for a whole run.
pub fn write_bundle<W: Write>(out: &mut W, docs: &[(Doc, Option<Analysis>)]) -> io::Result<()> {
    let bundle = bundle(docs);
    serde_json::to_writer_pretty(&mut *out, &bundle)?;
    out.write_all(b"\n")
}

/// The bundle for a whole run: every document's resources, in input order.
pub fn bundle(docs: &[(Doc, Option<Analysis>)]) -> Value {
    let mut entries = Vec::new();
    for (i, (doc, analysis)) in docs.iter().enumerate() {
        let prefix = format!("d{}", i + 1);
        match analysis {
            Some(a) => entries.extend(document_entries(
                &prefix,
                &doc.source,
                &a.extraction,
                a.picture.patient.sex.as_deref(),
            )),
            None => entries.push(skipped_entry(&prefix, doc)),
        }
    }
    json!({"resourceType": "Bundle", "type": "collection", "entry": entries})
}

/// The entries of one analysed document.
pub fn document_entries(
    prefix: &str,
    source: &str,
    ex: &Extraction,
    sex: Option<&str>,
) -> Vec<Value> {
    let mut entries = Vec::new();
    let patient_id = format!("{prefix}-patient");
    let patient_url = full_url(source, &patient_id);
    let mut patient = json!({"resourceType": "Patient", "id": patient_id});
    if let Some(g @ ("female" | "male")) = sex {
        patient["gender"] = json!(g);
    }
    entries.push(json!({"fullUrl": patient_url, "resource": patient}));
    let subject = json!({"reference": patient_url});

    let exported: Vec<&Measurement> = ex.measurements.iter().filter(|m| exports(m)).collect();
    let pairs = pair_blood_pressures(&exported);
    let mut paired = vec![false; exported.len()];
    for &(s, d) in &pairs {
        paired[s] = true;
        paired[d] = true;
    }
    let mut n = 0;
    for (i, m) in exported.iter().enumerate() {
        if let Some(&(s, d)) = pairs.iter().find(|(s, _)| *s == i) {
            n += 1;
            let id = format!("{prefix}-obs{n}");
            let r = bp_panel(&id, source, exported[s], exported[d], &subject);
            entries.push(json!({"fullUrl": full_url(source, &id), "resource": r}));
        } else if !paired[i] {
            n += 1;
            let id = format!("{prefix}-obs{n}");
            let r = observation(&id, source, m, &subject);
            entries.push(json!({"fullUrl": full_url(source, &id), "resource": r}));
        }
    }
    let mut k = 0;
    for f in &ex.findings {
        let date = f
            .episode
            .and_then(|e| ex.episodes.get(e))
            .and_then(|e| e.date.as_deref())
            .or(ex.note_date.as_deref());
        if let Some(r) = condition(
            &format!("{prefix}-cond{}", k + 1),
            source,
            f,
            &subject,
            date,
        ) {
            k += 1;
            let id = format!("{prefix}-cond{k}");
            entries.push(json!({"fullUrl": full_url(source, &id), "resource": r}));
        }
    }
    entries
}

/// Whether a measurement is a value of the patient's own (not a target, not someone else's).
/// A value that is not a finite number (never written by a note) is left out too, since a
/// FHIR decimal cannot hold it.
fn exports(m: &Measurement) -> bool {
    m.assertion == Assertion::Present
        && m.experiencer == Experiencer::Patient
        && m.value.is_finite()
        && m.normalized.is_none_or(|q| q.value.is_finite())
        && m.range
            .is_none_or(|(lo, hi)| lo.is_finite() && hi.is_finite())
}

/// Systolic/diastolic pairs written together: a diastolic value starting within a few bytes
/// after a systolic one on the same line, with the same date and time.
fn pair_blood_pressures(ms: &[&Measurement]) -> Vec<(usize, usize)> {
    let mut pairs = Vec::new();
    let mut used = vec![false; ms.len()];
    for (i, s) in ms.iter().enumerate() {
        if s.concept != MeasureConcept::SystolicBp {
            continue;
        }
        let found = ms.iter().enumerate().find(|(j, d)| {
            !used[*j]
                && d.concept == MeasureConcept::DiastolicBp
                && d.span.line == s.span.line
                && d.span.start >= s.span.start
                && d.span.start <= s.span.end + 3
                && d.date == s.date
                && d.time == s.time
        });
        if let Some((j, _)) = found {
            used[j] = true;
            used[i] = true;
            pairs.push((i, j));
        }
    }
    pairs
}

/// A deterministic `urn:uuid:` for a resource (an RFC 9562 version-8 UUID built from two
/// 64-bit FNV-1a hashes of the document and the resource id), so repeated runs agree.
pub fn full_url(source: &str, id: &str) -> String {
    let key = format!("{source}\u{0}{id}");
    let a = fnv1a(key.as_bytes(), 0xcbf2_9ce4_8422_2325);
    let b = fnv1a(key.as_bytes(), 0x6c62_272e_07bb_0142);
    let mut bytes = [0u8; 16];
    bytes[..8].copy_from_slice(&a.to_be_bytes());
    bytes[8..].copy_from_slice(&b.to_be_bytes());
    bytes[6] = (bytes[6] & 0x0f) | 0x80; // version 8
    bytes[8] = (bytes[8] & 0x3f) | 0x80; // RFC variant
    let h: String = bytes.iter().map(|b| format!("{b:02x}")).collect();
    format!(
        "urn:uuid:{}-{}-{}-{}-{}",
        &h[0..8],
        &h[8..12],
        &h[12..16],
        &h[16..20],
        &h[20..32]
    )
}

fn fnv1a(data: &[u8], seed: u64) -> u64 {
    data.iter().fold(seed, |h, &b| {
        (h ^ u64::from(b)).wrapping_mul(0x0000_0100_0000_01b3)
    })
}

/// The source-span extension of one span of one document.
pub fn span_extension(source: &str, span: &Span, text: &str) -> Value {
    let mut parts = vec![
        json!({"url": "source", "valueString": source}),
        json!({"url": "start", "valueInteger": span.start}),
        json!({"url": "end", "valueInteger": span.end}),
        json!({"url": "line", "valueInteger": span.line}),
        json!({"url": "column", "valueInteger": span.column}),
        json!({"url": "endLine", "valueInteger": span.end_line}),
        json!({"url": "endColumn", "valueInteger": span.end_column}),
    ];
    // FHIR strings may not be empty or blank.
    if !text.trim().is_empty() {
        parts.push(json!({"url": "text", "valueString": text}));
    }
    if source.trim().is_empty() {
        parts.remove(0);
    }
    json!({"url": SPAN_EXTENSION, "extension": parts})
}

fn concept_code(m: MeasureConcept) -> Value {
    let mut coding = Vec::new();
    if let Some((code, display)) = loinc(m) {
        coding.push(json!({"system": LOINC, "code": code, "display": display}));
    }
    coding.push(json!({"system": CONCEPT_SYSTEM, "code": m.name(), "display": m.label()}));
    json!({"coding": coding, "text": m.label()})
}

fn category_value(m: MeasureConcept) -> Option<Value> {
    category(m).map(|(code, display)| {
        json!([{"coding": [{"system": OBS_CATEGORY, "code": code, "display": display}]}])
    })
}

/// Clean float noise from conversions (six decimals are far below any tolerance).
fn tidy(x: f64) -> f64 {
    (x * 1e6).round() / 1e6
}

/// The value of a measurement in its canonical unit, or as written when it cannot be
/// converted, as a (key, FHIR value) pair: `valueQuantity` or `valueRange`.
fn value_of(m: &Measurement) -> (&'static str, Value, Vec<String>) {
    let mut notes = Vec::new();
    let (value, unit) = match (m.normalized, m.unit) {
        (Some(q), _) => (q.value, Some(q.unit)),
        (None, Some(u)) => (m.value, Some(u)),
        (None, None) => {
            notes.push("no unit is written and none could be inferred".to_string());
            (m.value, None)
        }
    };
    if m.unit_inferred {
        notes.push("unit inferred: not written in the note".into());
    }
    let quantity = |v: f64| -> Value {
        let mut q = Map::new();
        q.insert("value".into(), json!(tidy(v)));
        if let Some(u) = unit {
            q.insert("unit".into(), json!(u));
            q.insert("system".into(), json!(UCUM));
            q.insert("code".into(), json!(u));
        }
        Value::Object(q)
    };
    if let Some((lo, hi)) = m.range {
        // Convert the range ends by the same factor as the midpoint (never for temperature,
        // whose conversion is not a factor).
        let factor = match m.normalized {
            Some(_) if m.concept == MeasureConcept::Temperature && m.unit != unit => None,
            Some(q) if m.value != 0.0 => Some(q.value / m.value),
            Some(_) => None,
            None => Some(1.0),
        };
        if let Some(f) = factor {
            return (
                "valueRange",
                json!({"low": quantity(lo * f), "high": quantity(hi * f)}),
                notes,
            );
        }
        notes.push(format!("written as a range {lo}-{hi}; midpoint given"));
    }
    let mut q = quantity(value);
    match m.qualifier {
        Some(Qualifier::UpperBound) => q["comparator"] = json!("<"),
        Some(Qualifier::LowerBound) => q["comparator"] = json!(">"),
        Some(Qualifier::Approximate) => notes.push("approximate value".into()),
        None => {}
    }
    ("valueQuantity", q, notes)
}

fn notes_value(notes: &[String]) -> Option<Value> {
    (!notes.is_empty()).then(|| Value::Array(notes.iter().map(|n| json!({"text": n})).collect()))
}

/// One measurement as an Observation.
pub fn observation(id: &str, source: &str, m: &Measurement, subject: &Value) -> Value {
    let mut r = Map::new();
    r.insert("resourceType".into(), json!("Observation"));
    r.insert("id".into(), json!(id));
    r.insert(
        "extension".into(),
        json!([span_extension(source, &m.span, &m.text)]),
    );
    r.insert("status".into(), json!("preliminary"));
    if let Some(c) = category_value(m.concept) {
        r.insert("category".into(), c);
    }
    r.insert("code".into(), concept_code(m.concept));
    r.insert("subject".into(), subject.clone());
    if let Some(d) = m.date.as_deref().filter(|d| is_fhir_date(d)) {
        r.insert("effectiveDateTime".into(), json!(d));
    }
    let (key, value, notes) = value_of(m);
    r.insert(key.into(), value);
    if let Some(n) = notes_value(&notes) {
        r.insert("note".into(), n);
    }
    Value::Object(r)
}

/// A systolic and a diastolic value written together, as one blood-pressure panel.
pub fn bp_panel(
    id: &str,
    source: &str,
    sys: &Measurement,
    dia: &Measurement,
    subject: &Value,
) -> Value {
    let whole = if sys.span.start <= dia.span.start {
        Span {
            end: dia.span.end.max(sys.span.end),
            end_line: dia.span.end_line,
            end_column: dia.span.end_column,
            ..sys.span
        }
    } else {
        dia.span
    };
    let text = if sys.text == dia.text {
        sys.text.clone()
    } else {
        format!("{} {}", sys.text, dia.text)
    };
    let mut notes = Vec::new();
    let component = |m: &Measurement, (code, display): (&str, &str), notes: &mut Vec<String>| {
        let (key, value, n) = value_of(m);
        notes.extend(n);
        let mut c = Map::new();
        c.insert(
            "extension".into(),
            json!([span_extension(source, &m.span, &m.text)]),
        );
        c.insert(
            "code".into(),
            json!({"coding": [{"system": LOINC, "code": code, "display": display}],
                   "text": m.concept.label()}),
        );
        c.insert(key.into(), value);
        Value::Object(c)
    };
    let components = vec![
        component(sys, BP_SYSTOLIC, &mut notes),
        component(dia, BP_DIASTOLIC, &mut notes),
    ];
    notes.dedup();
    let mut r = Map::new();
    r.insert("resourceType".into(), json!("Observation"));
    r.insert("id".into(), json!(id));
    r.insert(
        "extension".into(),
        json!([span_extension(source, &whole, &text)]),
    );
    r.insert("status".into(), json!("preliminary"));
    r.insert(
        "category".into(),
        category_value(MeasureConcept::SystolicBp).unwrap_or(Value::Null),
    );
    r.insert(
        "code".into(),
        json!({"coding": [{"system": LOINC, "code": BP_PANEL.0, "display": BP_PANEL.1}],
               "text": "blood pressure"}),
    );
    r.insert("subject".into(), subject.clone());
    if let Some(d) = sys.date.as_deref().filter(|d| is_fhir_date(d)) {
        r.insert("effectiveDateTime".into(), json!(d));
    }
    r.insert("component".into(), Value::Array(components));
    if let Some(n) = notes_value(&notes) {
        r.insert("note".into(), n);
    }
    Value::Object(r)
}

/// One finding as a Condition, or `None` when it is not about the patient's current state.
pub fn condition(
    id: &str,
    source: &str,
    f: &Finding,
    subject: &Value,
    date: Option<&str>,
) -> Option<Value> {
    if f.experiencer != Experiencer::Patient || f.temporality != Temporality::Current {
        return None;
    }
    let (verification, active) = match f.assertion {
        Assertion::Present => ("confirmed", true),
        Assertion::Absent => ("refuted", false),
        Assertion::Possible => ("provisional", true),
        Assertion::Hypothetical => return None,
    };
    let mut r = Map::new();
    r.insert("resourceType".into(), json!("Condition"));
    r.insert("id".into(), json!(id));
    r.insert(
        "extension".into(),
        json!([span_extension(source, &f.span, &f.text)]),
    );
    if active {
        r.insert(
            "clinicalStatus".into(),
            json!({"coding": [{"system": CONDITION_CLINICAL, "code": "active"}]}),
        );
    }
    r.insert(
        "verificationStatus".into(),
        json!({"coding": [{"system": CONDITION_VERIFICATION, "code": verification}]}),
    );
    r.insert(
        "code".into(),
        json!({"coding": [{"system": CONCEPT_SYSTEM, "code": f.concept.name(),
                           "display": f.concept.label()}],
               "text": f.concept.label()}),
    );
    r.insert("subject".into(), subject.clone());
    if let Some(d) = date.filter(|d| is_fhir_date(d)) {
        r.insert("recordedDate".into(), json!(d));
    }
    let mut notes = Vec::new();
    let d = &f.detail;
    if let Some(g) = d.grade {
        notes.push(format!("grade {g}"));
    }
    if let Some(l) = d.level.as_deref() {
        notes.push(format!("extent: {l}"));
    }
    if let Some(p) = d.pillows {
        notes.push(format!("{p} pillows"));
    }
    if let Some(n) = d.number {
        notes.push(format!("value {n}"));
    }
    if let Some(t) = d.trend.as_deref() {
        notes.push(format!("trend: {t}"));
    }
    if let Some(n) = notes_value(&notes) {
        r.insert("note".into(), n);
    }
    Some(Value::Object(r))
}

/// An OperationOutcome for a document that could not be analysed.
fn skipped_entry(prefix: &str, doc: &Doc) -> Value {
    let id = format!("{prefix}-skipped");
    let issues: Vec<Value> = doc
        .warnings
        .iter()
        .map(|w| {
            json!({"severity": "warning", "code": "processing",
                   "diagnostics": format!("{}: {}", doc.source, w.message)})
        })
        .collect();
    let issues = if issues.is_empty() {
        vec![json!({"severity": "warning", "code": "processing",
                    "diagnostics": format!("{}: not analysed", doc.source)})]
    } else {
        issues
    };
    json!({"fullUrl": full_url(&doc.source, &id),
           "resource": {"resourceType": "OperationOutcome", "id": id, "issue": issues}})
}

/// `YYYY-MM-DD` with plausible month and day (the FHIR date form used here).
fn is_fhir_date(d: &str) -> bool {
    let b = d.as_bytes();
    if b.len() != 10 || b[4] != b'-' || b[7] != b'-' {
        return false;
    }
    let num = |r: std::ops::Range<usize>| d.get(r).and_then(|s| s.parse::<u32>().ok());
    matches!(
        (num(0..4), num(5..7), num(8..10)),
        (Some(y), Some(1..=12), Some(1..=31)) if y >= 1
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{FindingConcept, FindingDetail, Quantity};
    use crate::span::LineIndex;

    fn meas(text: &str, needle: &str, concept: MeasureConcept, value: f64) -> Measurement {
        let idx = LineIndex::new(text);
        let start = text.find(needle).unwrap();
        let unit = concept.canonical_unit();
        Measurement {
            concept,
            value,
            unit: Some(unit),
            normalized: Some(Quantity { value, unit }),
            unit_inferred: false,
            date: None,
            time: None,
            assertion: Assertion::Present,
            temporality: Temporality::Current,
            experiencer: Experiencer::Patient,
            time_ref: None,
            range: None,
            qualifier: None,
            unit_text: None,
            text: needle.to_string(),
            span: idx.span(start, start + needle.len()),
            section: None,
            episode: None,
        }
    }

    fn finding(text: &str, needle: &str, concept: FindingConcept, a: Assertion) -> Finding {
        let idx = LineIndex::new(text);
        let start = text.find(needle).unwrap();
        Finding {
            concept,
            assertion: a,
            experiencer: Experiencer::Patient,
            temporality: Temporality::Current,
            text: needle.to_string(),
            span: idx.span(start, start + needle.len()),
            detail: FindingDetail::default(),
            cues: Vec::new(),
            section: None,
            episode: None,
        }
    }

    fn resources(ex: &Extraction) -> Vec<Value> {
        document_entries("d1", "note.txt", ex, Some("female"))
            .into_iter()
            .map(|e| e["resource"].clone())
            .collect()
    }

    #[test]
    fn bp_pair_becomes_a_panel_with_loinc_components() {
        // LOINC codes: FHIR R4 (4.0.1) vital-signs profile, observation-vitalsignresult.
        let text = "BP 98/60 HR 72";
        let mut sys = meas(text, "98", MeasureConcept::SystolicBp, 98.0);
        let mut dia = meas(text, "60", MeasureConcept::DiastolicBp, 60.0);
        let hr = meas(text, "72", MeasureConcept::HeartRate, 72.0);
        sys.date = Some("2026-03-04".into());
        dia.date = sys.date.clone();
        let ex = Extraction {
            measurements: vec![sys, dia.clone(), hr],
            ..Extraction::default()
        };
        let rs = resources(&ex);
        assert_eq!(rs[0]["resourceType"], "Patient");
        assert_eq!(rs[0]["gender"], "female");
        let bp = &rs[1];
        assert_eq!(bp["code"]["coding"][0]["code"], "85354-9");
        assert_eq!(bp["component"][0]["code"]["coding"][0]["code"], "8480-6");
        assert_eq!(bp["component"][1]["code"]["coding"][0]["code"], "8462-4");
        assert_eq!(bp["component"][1]["valueQuantity"]["value"], 60.0);
        assert_eq!(bp["component"][1]["valueQuantity"]["code"], "mm[Hg]");
        assert_eq!(bp["component"][1]["valueQuantity"]["system"], UCUM);
        assert_eq!(bp["effectiveDateTime"], "2026-03-04");
        assert_eq!(bp["category"][0]["coding"][0]["code"], "vital-signs");
        // The panel's span covers "98/60".
        let ext = &bp["extension"][0];
        assert_eq!(ext["url"], SPAN_EXTENSION);
        let part = |name: &str| {
            ext["extension"]
                .as_array()
                .unwrap()
                .iter()
                .find(|p| p["url"] == name)
                .cloned()
                .unwrap()
        };
        assert_eq!(part("start")["valueInteger"], 3);
        assert_eq!(part("end")["valueInteger"], dia.span.end);
        let hr = &rs[2];
        assert_eq!(hr["code"]["coding"][0]["code"], "8867-4");
        assert_eq!(hr["valueQuantity"]["code"], "/min");
        assert!(hr.get("effectiveDateTime").is_none());
        assert_eq!(rs.len(), 3);
        // Differently dated values are not one reading.
        let mut ex = ex;
        ex.measurements[1].date = Some("2026-03-05".into());
        assert_eq!(resources(&ex).len(), 4);
        // A non-finite value cannot be a FHIR decimal and is left out.
        ex.measurements[2].value = f64::NAN;
        assert_eq!(resources(&ex).len(), 3);
    }

    #[test]
    fn converted_weight_is_in_kg_and_bounds_become_comparators() {
        // 181 lb x 0.45359237 = 82.100219 kg (pound defined exactly; domain file §5.3).
        let text = "Wt 181 lb, EF <20%";
        let mut w = meas(text, "Wt 181 lb", MeasureConcept::Weight, 181.0);
        w.unit = Some("[lb_av]");
        w.normalized = Some(Quantity {
            value: 181.0 * 0.45359237,
            unit: "kg",
        });
        let mut ef = meas(text, "EF <20%", MeasureConcept::Lvef, 20.0);
        ef.qualifier = Some(Qualifier::UpperBound);
        let ex = Extraction {
            measurements: vec![w, ef],
            ..Extraction::default()
        };
        let rs = resources(&ex);
        assert_eq!(rs[1]["code"]["coding"][0]["code"], "29463-7");
        assert_eq!(rs[1]["valueQuantity"]["value"], 82.100219);
        assert_eq!(rs[1]["valueQuantity"]["code"], "kg");
        assert_eq!(rs[2]["valueQuantity"]["comparator"], "<");
        assert_eq!(rs[2]["category"][0]["coding"][0]["code"], "imaging");
    }

    #[test]
    fn a_range_becomes_value_range_and_a_missing_unit_is_noted() {
        let text = "LVEF 35-40% Wt 82.4";
        let mut ef = meas(text, "LVEF 35-40%", MeasureConcept::Lvef, 37.5);
        ef.range = Some((35.0, 40.0));
        let mut w = meas(text, "Wt 82.4", MeasureConcept::Weight, 82.4);
        w.unit = None;
        w.normalized = None;
        let ex = Extraction {
            measurements: vec![ef, w],
            ..Extraction::default()
        };
        let rs = resources(&ex);
        assert_eq!(rs[1]["valueRange"]["low"]["value"], 35.0);
        assert_eq!(rs[1]["valueRange"]["high"]["value"], 40.0);
        assert!(rs[2]["valueQuantity"].get("system").is_none());
        assert_eq!(rs[2]["valueQuantity"]["value"], 82.4);
        assert!(rs[2]["note"][0]["text"]
            .as_str()
            .unwrap()
            .contains("no unit"));
    }

    #[test]
    fn findings_carry_presence_in_verification_status() {
        // condition-ver-status codes: FHIR R4 (4.0.1) CodeSystem condition-ver-status.
        let text = "no crackles, ?S3, oedema to knees, FH: ascites, if orthopnoea";
        let mut other = finding(text, "ascites", FindingConcept::Ascites, Assertion::Present);
        other.experiencer = Experiencer::Other;
        let mut edema = finding(
            text,
            "oedema to knees",
            FindingConcept::PeripheralEdema,
            Assertion::Present,
        );
        edema.detail.level = Some("knees".into());
        let ex = Extraction {
            findings: vec![
                finding(
                    text,
                    "crackles",
                    FindingConcept::Crackles,
                    Assertion::Absent,
                ),
                finding(text, "S3", FindingConcept::S3, Assertion::Possible),
                edema,
                other,
                finding(
                    text,
                    "orthopnoea",
                    FindingConcept::Orthopnea,
                    Assertion::Hypothetical,
                ),
            ],
            note_date: Some("2026-02-30x".into()),
            ..Extraction::default()
        };
        let rs = resources(&ex);
        assert_eq!(rs.len(), 4, "{rs:#?}");
        let status = |r: &Value| r["verificationStatus"]["coding"][0]["code"].clone();
        assert_eq!(status(&rs[1]), "refuted");
        assert!(rs[1].get("clinicalStatus").is_none());
        assert_eq!(status(&rs[2]), "provisional");
        assert_eq!(status(&rs[3]), "confirmed");
        assert_eq!(rs[3]["clinicalStatus"]["coding"][0]["code"], "active");
        assert_eq!(rs[3]["note"][0]["text"], "extent: knees");
        assert_eq!(rs[3]["code"]["coding"][0]["code"], "peripheral_edema");
        assert_eq!(
            rs[3]["subject"]["reference"],
            full_url("note.txt", "d1-patient")
        );
        // A malformed date is not exported.
        assert!(rs[1].get("recordedDate").is_none());
        // Ids are consecutive among the exported conditions.
        assert_eq!(rs[3]["id"], "d1-cond3");
    }

    #[test]
    fn full_urls_are_stable_uuids() {
        let a = full_url("a.txt", "d1-obs1");
        assert_eq!(a, full_url("a.txt", "d1-obs1"));
        assert_ne!(a, full_url("a.txt", "d1-obs2"));
        let hex = a.strip_prefix("urn:uuid:").unwrap();
        let groups: Vec<_> = hex.split('-').map(str::len).collect();
        assert_eq!(groups, [8, 4, 4, 4, 12]);
        assert_eq!(&hex[14..15], "8");
    }

    #[test]
    fn every_vital_sign_concept_has_a_profile_loinc_code() {
        // FHIR R4 (4.0.1) observation-vitalsignresult value set.
        let expected = [
            (MeasureConcept::HeartRate, "8867-4"),
            (MeasureConcept::RespiratoryRate, "9279-1"),
            (MeasureConcept::Spo2, "2708-6"),
            (MeasureConcept::Temperature, "8310-5"),
            (MeasureConcept::Weight, "29463-7"),
            (MeasureConcept::Height, "8302-2"),
            (MeasureConcept::SystolicBp, "8480-6"),
            (MeasureConcept::DiastolicBp, "8462-4"),
        ];
        for (c, code) in expected {
            assert_eq!(loinc(c).map(|l| l.0), Some(code), "{c:?}");
            assert_eq!(category(c).map(|c| c.0), Some("vital-signs"));
        }
    }
}
