//! The handover sheet: a typed summary of one patient's notes, built from their analyses
//! alone (extraction, picture and lint diagnostics).
//!
//! Every item keeps the spans it was read from, as `{note, start, end, line, column, ...}`
//! where `note` indexes the patient's `notes` list. Values the picture stage does not yet
//! provide (eGFR, weight and balance series, the latest observations) are computed here from
//! the measurements by small functions, so they can later read the picture instead.

use serde::Serialize;

use super::diuretics::{loop_total_tagged, LoopTotal};
use super::patients::{NoteTime, PatientId};
use crate::extract::meds::{class_name, fmt_num, unit_label};
use crate::lint::Severity;
use crate::model::{
    Assertion, DrugClass, Experiencer, FindingConcept, MeasureConcept, Measurement, MedChange,
    Medication, SectionKind, StatementKind, Temporality, TimeRef,
};
use crate::span::{LineIndex, Span};
use crate::Analysis;

/// The schema name of the JSON sheet.
pub const HANDOVER_SCHEMA: &str = "tidemark-handover/1";

/// One analysed note as the sheet reads it.
#[derive(Debug, Clone, Copy)]
pub struct NoteRef<'a> {
    pub source: &'a str,
    pub text: &'a str,
    pub analysis: &'a Analysis,
    pub time: &'a NoteTime,
    pub id: Option<&'a PatientId>,
}

/// A span in one of the patient's notes.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Src {
    /// Index into [`PatientSheet::notes`].
    pub note: usize,
    #[serde(flatten)]
    pub span: Span,
}

/// The whole run: one sheet per patient.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Sheet {
    pub schema: &'static str,
    pub caution: String,
    pub patients: Vec<PatientSheet>,
}

/// A note of the patient, in writing order.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NoteInfo {
    pub source: String,
    pub date: Option<String>,
    pub time: Option<String>,
}

/// A fact written as one line, with its sources.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Fact {
    pub text: String,
    pub sources: Vec<Src>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HeartFailure {
    /// `hfref`, `hfmref`, `hfpef`, `hfimpef`.
    pub hf_type: Option<String>,
    /// How the type was found: `stated` or `from_lvef`.
    pub hf_type_basis: Option<&'static str>,
    pub acuity: Option<String>,
    pub lvef: Option<String>,
    pub nyha: Option<String>,
    pub text: String,
    pub sources: Vec<Src>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ProfileLine {
    /// `warm-wet`, `cold-dry` ...
    pub label: String,
    /// The evidence in one line: `wet: raised JVP, crackles; warm: warm peripheries`.
    pub evidence: String,
    /// The note the profile was read from.
    pub note: usize,
    pub sources: Vec<Src>,
}

/// Direction of a value since the previous one.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    Up,
    Down,
    Same,
}

impl Direction {
    pub fn of(previous: f64, latest: f64) -> Direction {
        if (latest - previous).abs() < 1e-9 {
            Direction::Same
        } else if latest > previous {
            Direction::Up
        } else {
            Direction::Down
        }
    }

    pub fn word(self) -> &'static str {
        match self {
            Direction::Up => "up",
            Direction::Down => "down",
            Direction::Same => "same",
        }
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Observation {
    /// `BP`, `HR`, `RR`, `SpO2`, `T`.
    pub label: &'static str,
    pub value: String,
    pub unit: &'static str,
    pub previous: Option<String>,
    pub direction: Option<Direction>,
    pub sources: Vec<Src>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SeriesPoint {
    /// ISO date, when known.
    pub date: Option<String>,
    /// `adm`, a date, or the note's time, for display.
    pub label: String,
    pub value: f64,
    pub source: Src,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WeightSeries {
    /// One point per day (the last value written for it), in date order.
    pub points: Vec<SeriesPoint>,
    pub first_kg: f64,
    pub latest_kg: f64,
    pub change_kg: Option<f64>,
    pub target_kg: Option<f64>,
    /// Latest minus target.
    pub above_target_kg: Option<f64>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub target_sources: Vec<Src>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FluidBalance {
    /// One balance per day (the last one written for it), in date order, in mL.
    pub days: Vec<SeriesPoint>,
    pub today_ml: Option<f64>,
    /// Sum of the daily balances listed.
    pub cumulative_ml: Option<f64>,
    pub note: String,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LabLine {
    /// `creatinine`, `egfr`, `potassium`.
    pub concept: &'static str,
    pub label: &'static str,
    pub unit: &'static str,
    pub latest: f64,
    pub previous: Option<f64>,
    /// When the previous value was taken: `adm`, `yest`, or a note's date and time.
    pub previous_when: Option<String>,
    pub change: Option<f64>,
    /// How a computed value was computed.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub basis: Option<String>,
    /// What the note says about the latest sample, when it casts doubt on the value
    /// (`haemolysed sample`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub caveat: Option<String>,
    pub sources: Vec<Src>,
}

/// One medication as the sheet shows it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MedLine {
    pub drug: String,
    pub class: DrugClass,
    /// Route, drug, dose and frequency as one phrase: `IV furosemide 80 mg bd`.
    pub summary: String,
    pub change: Option<MedChange>,
    pub assertion: Assertion,
    pub daily_dose: Option<f64>,
    pub unit: Option<String>,
    /// The later day a change is written for ("tomorrow"); today's regime is unchanged.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub starts: Option<String>,
    pub source: Src,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Diuretics {
    /// Loop and thiazide regimes current after the latest note.
    pub regime: Vec<MedLine>,
    pub loop_total: LoopTotal,
    /// Diuretic changes written on the latest day, conditional ones included.
    pub changes_today: Vec<MedLine>,
}

/// Whether the patient is on a GDMT class.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum GdmtStatus {
    On,
    Held,
    Stopped,
    /// The note says the patient is not on it ("no MRA due to K").
    NotOn,
    NotDocumented,
}

impl GdmtStatus {
    pub fn word(self) -> &'static str {
        match self {
            GdmtStatus::On => "on",
            GdmtStatus::Held => "held",
            GdmtStatus::Stopped => "stopped",
            GdmtStatus::NotOn => "not on",
            GdmtStatus::NotDocumented => "not documented",
        }
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GdmtLine {
    /// `beta_blocker`, `acei_arb_arni`, `mra`, `sglt2_inhibitor`.
    pub group: &'static str,
    pub label: &'static str,
    pub status: GdmtStatus,
    /// The mentions that decided the status.
    pub drugs: Vec<MedLine>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlanLine {
    pub text: String,
    pub source: Src,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Plan {
    /// The note the plan was read from.
    pub note: usize,
    pub lines: Vec<PlanLine>,
}

/// A lint diagnostic to check before handing over.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Check {
    pub rule: String,
    pub severity: Severity,
    pub message: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub query: Option<String>,
    pub note: usize,
    pub span: Option<Span>,
}

/// One patient's sheet.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PatientSheet {
    /// The identifier as written (`Ward 7 Bed 3 · MRN 0000301`), or none.
    pub identifier: Option<Fact>,
    pub notes: Vec<NoteInfo>,
    /// The latest note date: the day the sheet is for.
    pub today: Option<String>,
    pub age_sex: Option<Fact>,
    pub heart_failure: Option<HeartFailure>,
    pub profile: Option<ProfileLine>,
    pub observations: Vec<Observation>,
    pub weight: Option<WeightSeries>,
    pub fluid_balance: Option<FluidBalance>,
    pub renal: Vec<LabLine>,
    pub diuretics: Diuretics,
    pub gdmt: Vec<GdmtLine>,
    pub plan: Option<Plan>,
    pub to_check: Vec<Check>,
    pub caution: String,
}

/// Build one patient's sheet from their notes, in writing order.
pub fn build(notes: &[NoteRef], caution: &str) -> PatientSheet {
    let today = notes.iter().rev().find_map(|n| n.time.date.clone());
    let identifier = identifier(notes);
    let (diuretics, gdmt) = medications(notes, today.as_deref());
    PatientSheet {
        identifier,
        notes: notes
            .iter()
            .map(|n| NoteInfo {
                source: n.source.to_string(),
                date: n.time.date.clone(),
                time: n.time.time.clone(),
            })
            .collect(),
        age_sex: age_sex(notes),
        heart_failure: heart_failure(notes),
        profile: profile(notes),
        observations: observations(notes),
        weight: weight_series(notes),
        fluid_balance: fluid_balance(notes, today.as_deref()),
        renal: renal(notes),
        diuretics,
        gdmt,
        plan: plan(notes),
        to_check: to_check(notes),
        today,
        caution: caution.to_string(),
    }
}

fn identifier(notes: &[NoteRef]) -> Option<Fact> {
    let (i, id) = notes
        .iter()
        .enumerate()
        .find_map(|(i, n)| n.id.map(|id| (i, id)))?;
    let mut sources: Vec<Src> = id.spans.iter().map(|s| Src { note: i, span: *s }).collect();
    for (j, n) in notes.iter().enumerate().skip(i + 1) {
        if let Some(other) = n.id {
            sources.extend(other.spans.iter().map(|s| Src { note: j, span: *s }));
        }
    }
    Some(Fact {
        text: id.label.clone(),
        sources,
    })
}

fn age_sex(notes: &[NoteRef]) -> Option<Fact> {
    let mut age: Option<(String, Src)> = None;
    let mut sex: Option<(String, Src)> = None;
    for (i, n) in notes.iter().enumerate() {
        let p = &n.analysis.picture.patient;
        if age.is_none() {
            if let (Some(a), Some(s)) = (p.age, p.spans.first()) {
                age = Some((a.to_string(), Src { note: i, span: *s }));
            }
        }
        if sex.is_none() {
            if let (Some(x), Some(s)) = (&p.sex, p.spans.last()) {
                sex = Some((x.clone(), Src { note: i, span: *s }));
            }
        }
        // Until the picture fills `patient`, read the statements directly.
        for st in &n.analysis.extraction.statements {
            if st.assertion != Assertion::Present || st.experiencer != Experiencer::Patient {
                continue;
            }
            let src = Src {
                note: i,
                span: st.span,
            };
            match st.kind {
                StatementKind::Age if age.is_none() => age = Some((st.value.clone(), src)),
                StatementKind::Sex if sex.is_none() => sex = Some((st.value.clone(), src)),
                _ => {}
            }
        }
    }
    if age.is_none() && sex.is_none() {
        return None;
    }
    let sex_word = |s: &str| match s {
        "female" => "F".to_string(),
        "male" => "M".to_string(),
        other => other.to_string(),
    };
    let text = match (&age, &sex) {
        (Some(a), Some(s)) => format!("{} {}", a.0, sex_word(&s.0)),
        (Some(a), None) => format!("{} (sex not written)", a.0),
        (None, Some(s)) => format!("age not written, {}", sex_word(&s.0)),
        (None, None) => unreachable!("checked above"),
    };
    let mut sources: Vec<Src> = age.iter().chain(sex.iter()).map(|x| x.1).collect();
    sources.dedup();
    Some(Fact { text, sources })
}

/// The stated or LVEF-derived heart-failure type (ESC 2021: ≤ 40 % reduced, 41–49 % mildly
/// reduced, ≥ 50 % preserved; 07-classification.md).
pub fn hf_type_from_lvef(lvef: f64) -> &'static str {
    if lvef <= 40.0 {
        "hfref"
    } else if lvef < 50.0 {
        "hfmref"
    } else {
        "hfpef"
    }
}

pub fn hf_type_label(t: &str) -> String {
    match t {
        "hfref" => "HFrEF".into(),
        "hfmref" => "HFmrEF".into(),
        "hfpef" => "HFpEF".into(),
        "hfimpef" => "HFimpEF".into(),
        other => other.to_string(),
    }
}

fn counts(m: &Measurement) -> bool {
    m.assertion == Assertion::Present
        && m.experiencer == Experiencer::Patient
        && (m.temporality == Temporality::Current || m.time_ref.is_some() || m.date.is_some())
}

fn value_of(m: &Measurement) -> Option<f64> {
    m.normalized.map(|q| q.value).filter(|v| v.is_finite())
}

fn heart_failure(notes: &[NoteRef]) -> Option<HeartFailure> {
    let mut hf_type: Option<(String, &'static str, Src)> = None;
    let mut acuity: Option<(String, Src)> = None;
    let mut nyha: Option<(String, Src)> = None;
    let mut lvef: Option<(String, f64, Src)> = None;
    for (i, n) in notes.iter().enumerate() {
        let c = &n.analysis.picture.classifications;
        let src = |s: &Option<crate::picture::ClassSource>| {
            s.as_ref().map(|s| Src {
                note: i,
                span: s.span,
            })
        };
        if let (Some(t), Some(s)) = (&c.hf_type, src(&c.sources.hf_type)) {
            hf_type = Some((t.clone(), "stated", s));
        }
        if let (Some(a), Some(s)) = (&c.acuity, src(&c.sources.acuity)) {
            acuity = Some((a.clone(), s));
        }
        if let (Some(x), Some(s)) = (&c.nyha_class, src(&c.sources.nyha_class)) {
            nyha = Some((x.clone(), s));
        }
        // Until the picture classifies, read the statements directly.
        for st in &n.analysis.extraction.statements {
            if st.assertion != Assertion::Present || st.experiencer != Experiencer::Patient {
                continue;
            }
            let s = Src {
                note: i,
                span: st.span,
            };
            match st.kind {
                StatementKind::HfType if c.hf_type.is_none() => {
                    hf_type = Some((st.value.clone(), "stated", s))
                }
                StatementKind::Acuity if c.acuity.is_none() => acuity = Some((st.value.clone(), s)),
                StatementKind::Nyha if c.nyha_class.is_none() => nyha = Some((st.value.clone(), s)),
                _ => {}
            }
        }
        for m in &n.analysis.extraction.measurements {
            if m.concept == MeasureConcept::Lvef && counts(m) {
                if let Some(v) = value_of(m).or(Some(m.value)) {
                    let shown = match m.range {
                        Some((lo, hi)) => format!("{}-{}%", fmt_num(lo), fmt_num(hi)),
                        None => format!("{}%", fmt_num(v)),
                    };
                    lvef = Some((
                        shown,
                        v,
                        Src {
                            note: i,
                            span: m.span,
                        },
                    ));
                }
            }
        }
    }
    if hf_type.is_none() {
        if let Some((_, v, s)) = &lvef {
            hf_type = Some((hf_type_from_lvef(*v).to_string(), "from_lvef", *s));
        }
    }
    if hf_type.is_none() && lvef.is_none() && nyha.is_none() && acuity.is_none() {
        return None;
    }
    let mut parts = Vec::new();
    if let Some((t, basis, _)) = &hf_type {
        let mut s = hf_type_label(t);
        if *basis == "from_lvef" {
            s.push_str(" (from LVEF)");
        }
        parts.push(s);
    }
    if let Some((a, _)) = &acuity {
        parts.push(a.replace('_', " "));
    }
    if let Some((l, _, _)) = &lvef {
        parts.push(format!("LVEF {l}"));
    }
    if let Some((x, _)) = &nyha {
        parts.push(format!("NYHA {x}"));
    }
    let mut sources: Vec<Src> = Vec::new();
    for s in [
        hf_type.as_ref().map(|x| x.2),
        acuity.as_ref().map(|x| x.1),
        lvef.as_ref().map(|x| x.2),
        nyha.as_ref().map(|x| x.1),
    ]
    .into_iter()
    .flatten()
    {
        if !sources.contains(&s) {
            sources.push(s);
        }
    }
    Some(HeartFailure {
        hf_type_basis: hf_type.as_ref().map(|x| x.1),
        hf_type: hf_type.map(|x| x.0),
        acuity: acuity.map(|x| x.0),
        lvef: lvef.map(|x| x.0),
        nyha: nyha.map(|x| x.0),
        text: parts.join(" · "),
        sources,
    })
}

fn evidence_label(concept: &str) -> String {
    if let Some(f) = FindingConcept::from_name(concept) {
        return f.label().to_string();
    }
    if let Some(m) = MeasureConcept::ALL.iter().find(|m| m.name() == concept) {
        return m.label().to_string();
    }
    concept.replace('_', " ")
}

fn profile(notes: &[NoteRef]) -> Option<ProfileLine> {
    let (i, n) = notes
        .iter()
        .enumerate()
        .rev()
        .find(|(_, n)| n.analysis.picture.profile.label != "unknown")?;
    let p = &n.analysis.picture.profile;
    let mut parts: Vec<String> = Vec::new();
    for side in ["wet", "dry", "warm", "cold"] {
        let mut items: Vec<String> = Vec::new();
        for e in p.evidence.iter().filter(|e| e.supports == side) {
            // The words as written ("Warm peripheries"), else the concept's label.
            let l = n
                .text
                .get(e.span.range())
                .map(|t| t.split_whitespace().collect::<Vec<_>>().join(" "))
                .filter(|t| !t.is_empty() && t.chars().count() <= 40)
                .unwrap_or_else(|| evidence_label(&e.concept));
            if !items.contains(&l) {
                items.push(l);
            }
        }
        if !items.is_empty() {
            parts.push(format!("{side}: {}", items.join(", ")));
        }
    }
    for c in &p.conflicts {
        parts.push(format!("conflict: {}", c.message));
    }
    Some(ProfileLine {
        label: p.label.clone(),
        evidence: parts.join("; "),
        note: i,
        sources: p
            .evidence
            .iter()
            .map(|e| Src {
                note: i,
                span: e.span,
            })
            .collect(),
    })
}

/// One value of a concept, in writing order.
#[derive(Debug, Clone, Copy)]
struct Entry<'a> {
    note: usize,
    m: &'a Measurement,
    value: f64,
}

fn time_rank(t: Option<TimeRef>) -> u8 {
    match t {
        Some(TimeRef::Baseline) | Some(TimeRef::Admission) => 0,
        Some(TimeRef::Previous) => 1,
        Some(TimeRef::Yesterday) => 2,
        _ => 3,
    }
}

/// All counted values of a concept, ordered by note, then by time reference, then by place.
fn entries<'a>(notes: &[NoteRef<'a>], concept: MeasureConcept) -> Vec<Entry<'a>> {
    let mut out = Vec::new();
    for (i, n) in notes.iter().enumerate() {
        let mut here: Vec<Entry<'a>> = n
            .analysis
            .extraction
            .measurements
            .iter()
            .filter(|m| m.concept == concept && counts(m))
            .filter_map(|m| value_of(m).map(|value| Entry { note: i, m, value }))
            .collect();
        here.sort_by_key(|e| (time_rank(e.m.time_ref), e.m.span.start));
        out.extend(here);
    }
    out
}

fn src(e: &Entry) -> Src {
    Src {
        note: e.note,
        span: e.m.span,
    }
}

fn current<'a>(notes: &[NoteRef<'a>], c: MeasureConcept) -> Vec<Entry<'a>> {
    entries(notes, c)
        .into_iter()
        .filter(|e| time_rank(e.m.time_ref) == 3)
        .collect()
}

fn observations(notes: &[NoteRef]) -> Vec<Observation> {
    let mut out = Vec::new();
    // BP: systolic and diastolic paired by place.
    let sbp = current(notes, MeasureConcept::SystolicBp);
    let dbp = current(notes, MeasureConcept::DiastolicBp);
    let pair = |s: &Entry| -> Option<Entry> {
        dbp.iter()
            .filter(|d| d.note == s.note && d.m.span.start >= s.m.span.start)
            .min_by_key(|d| d.m.span.start - s.m.span.start)
            .copied()
    };
    let bp_text = |s: &Entry| match pair(s) {
        Some(d) => format!("{}/{}", fmt_num(s.value), fmt_num(d.value)),
        None => fmt_num(s.value),
    };
    if let Some(latest) = sbp.last() {
        let prev = sbp.iter().rev().find(|e| e.note < latest.note);
        let mut sources = vec![src(latest)];
        if let Some(d) = pair(latest) {
            if d.m.span != latest.m.span {
                sources.push(src(&d));
            }
        }
        out.push(Observation {
            label: "BP",
            value: bp_text(latest),
            unit: "mmHg",
            previous: prev.map(bp_text),
            direction: prev.map(|p| Direction::of(p.value, latest.value)),
            sources,
        });
    }
    for (label, concept, unit) in [
        ("HR", MeasureConcept::HeartRate, "/min"),
        ("RR", MeasureConcept::RespiratoryRate, "/min"),
        ("SpO2", MeasureConcept::Spo2, "%"),
        ("T", MeasureConcept::Temperature, "°C"),
    ] {
        let es = current(notes, concept);
        let Some(latest) = es.last() else { continue };
        let prev = es.iter().rev().find(|e| e.note < latest.note);
        // A temperature converted from °F (99.2 °F = 37.333 °C) is shown to the 0.1 °C a
        // thermometer reads (common practice, no source); the others are whole numbers.
        let show = |v: f64| {
            if concept == MeasureConcept::Temperature {
                crate::picture::fmt_num(v, 1)
            } else {
                fmt_num(v)
            }
        };
        out.push(Observation {
            label,
            value: show(latest.value),
            unit,
            previous: prev.map(|p| show(p.value)),
            direction: prev.map(|p| Direction::of(p.value, latest.value)),
            sources: vec![src(latest)],
        });
    }
    out
}

/// Days from 1970-01-01 of an ISO date (Howard Hinnant's `days_from_civil`).
fn days_from_iso(iso: &str) -> Option<i64> {
    let mut it = iso.split('-');
    let y: i64 = it.next()?.parse().ok()?;
    let m: i64 = it.next()?.parse().ok()?;
    let d: i64 = it.next()?.parse().ok()?;
    if !(1..=12).contains(&m) || !(1..=31).contains(&d) {
        return None;
    }
    let y = if m <= 2 { y - 1 } else { y };
    let era = if y >= 0 { y } else { y - 399 } / 400;
    let yoe = y - era * 400;
    let mp = (m + 9) % 12;
    let doy = (153 * mp + 2) / 5 + d - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    Some(era * 146097 + doe - 719468)
}

fn iso_from_days(z: i64) -> String {
    let z = z + 719468;
    let era = if z >= 0 { z } else { z - 146096 } / 146097;
    let doe = z - era * 146097;
    let yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = if m <= 2 { y + 1 } else { y };
    format!("{y:04}-{m:02}-{d:02}")
}

/// Shift an ISO date by whole days.
pub fn shift_date(iso: &str, days: i64) -> Option<String> {
    days_from_iso(iso).map(|d| iso_from_days(d + days))
}

/// The day a value belongs to: its own date, else the note's date moved by its time
/// reference; admission and earlier values have none.
fn entry_date(e: &Entry, notes: &[NoteRef]) -> Option<String> {
    if let Some(d) = &e.m.date {
        return Some(d.clone());
    }
    let note_date = notes[e.note].time.date.as_deref()?;
    match e.m.time_ref {
        None | Some(TimeRef::Today) | Some(TimeRef::Discharge) => Some(note_date.to_string()),
        Some(TimeRef::Yesterday) => shift_date(note_date, -1),
        _ => None,
    }
}

fn short_date(iso: &str) -> String {
    // 2026-03-16 → 16/03
    match (iso.get(8..10), iso.get(5..7)) {
        (Some(d), Some(m)) => format!("{d}/{m}"),
        _ => iso.to_string(),
    }
}

/// The sort key of an undated value that belongs to its note's own day.
fn is_note_day_key(key: &str) -> bool {
    key.starts_with('~') && key.ends_with("-3")
}

/// One point per day (the last value written for it), undated admission values first.
fn daily_series(notes: &[NoteRef], concept: MeasureConcept) -> Vec<SeriesPoint> {
    daily_points(notes, concept)
        .into_iter()
        .map(|(_, p)| p)
        .collect()
}

/// [`daily_series`] with each point's sort key: a date, `""` for a baseline value, `" "`
/// for admission, `!NNNN` for an
/// undated earlier value of note NNNN, or for another undated value `~NNNN-R` (note
/// number, then 2 yesterday, 3 the note's day).
fn daily_points(notes: &[NoteRef], concept: MeasureConcept) -> Vec<(String, SeriesPoint)> {
    let mut points: Vec<(String, SeriesPoint)> = Vec::new();
    for e in entries(notes, concept) {
        let date = entry_date(&e, notes);
        // An undated note's "yesterday" and "previous" values are other days than its own.
        let note = if notes.len() == 1 {
            String::new()
        } else {
            format!("note {} ", e.note + 1)
        };
        let (key, label) = match (&date, e.m.time_ref) {
            (Some(d), _) => (d.clone(), short_date(d)),
            // A usual (baseline) weight before the admission weight, each with its label.
            (None, Some(TimeRef::Baseline)) => (String::new(), "baseline".to_string()),
            (None, Some(TimeRef::Admission)) => (" ".to_string(), "adm".to_string()),
            // An undated earlier value (`last clinic weight 89 kg`) precedes the dated
            // values of the stay, after the admission values.
            (None, Some(TimeRef::Previous)) => (format!("!{:04}", e.note), format!("{note}prev")),
            (None, Some(TimeRef::Yesterday)) => {
                (format!("~{:04}-2", e.note), format!("{note}yest"))
            }
            (None, _) => (format!("~{:04}-3", e.note), format!("note {}", e.note + 1)),
        };
        let p = SeriesPoint {
            date,
            label,
            value: e.value,
            source: src(&e),
        };
        match points.iter_mut().find(|(k, _)| *k == key) {
            // A copied-forward value keeps its first source; a new value replaces it.
            Some((_, old)) if (old.value - p.value).abs() < 0.05 => {}
            Some((_, old)) => *old = p,
            None => points.push((key, p)),
        }
    }
    points.sort_by(|a, b| a.0.cmp(&b.0));
    points
}

fn weight_series(notes: &[NoteRef]) -> Option<WeightSeries> {
    let points = daily_series(notes, MeasureConcept::Weight);
    let mut target: Option<(f64, Src)> = None;
    for (i, n) in notes.iter().enumerate() {
        for st in &n.analysis.extraction.statements {
            if st.kind == StatementKind::TargetWeight && st.assertion == Assertion::Present {
                let v: Option<f64> = st
                    .value
                    .trim()
                    .trim_start_matches('~')
                    .trim_end_matches("kg")
                    .trim()
                    .parse()
                    .ok();
                if let Some(v) = v {
                    target = Some((
                        v,
                        Src {
                            note: i,
                            span: st.span,
                        },
                    ));
                }
            }
        }
    }
    let first = points.first()?.value;
    let latest = points.last()?.value;
    Some(WeightSeries {
        change_kg: (points.len() > 1).then_some(latest - first),
        first_kg: first,
        latest_kg: latest,
        target_kg: target.map(|t| t.0),
        above_target_kg: target.map(|t| latest - t.0),
        target_sources: target.iter().map(|t| t.1).collect(),
        points,
    })
}

fn fluid_balance(notes: &[NoteRef], today: Option<&str>) -> Option<FluidBalance> {
    let keyed = daily_points(notes, MeasureConcept::FluidBalance);
    if keyed.is_empty() {
        return None;
    }
    let today_ml = match today {
        Some(t) => keyed
            .iter()
            .find(|(_, d)| d.date.as_deref() == Some(t))
            .map(|(_, d)| d.value),
        // Undated notes: the last balance of a note's own day, not its "yesterday".
        None => keyed
            .iter()
            .rev()
            .find(|(k, _)| is_note_day_key(k))
            .map(|(_, d)| d.value),
    };
    let days: Vec<SeriesPoint> = keyed.into_iter().map(|(_, p)| p).collect();
    let dated: Vec<&SeriesPoint> = days.iter().filter(|d| d.date.is_some()).collect();
    let cumulative_ml = (!dated.is_empty()).then(|| dated.iter().map(|d| d.value).sum());
    let note = format!(
        "cumulative = sum of the last balance written for each of {} day(s); a part-day balance counts as written",
        dated.len()
    );
    Some(FluidBalance {
        days,
        today_ml,
        cumulative_ml,
        note,
    })
}

/// eGFR by the CKD-EPI 2021 creatinine equation (Inker et al., N Engl J Med 2021), in
/// mL/min/1.73 m²; `None` under 18 years or for a non-positive creatinine.
pub fn egfr_ckd_epi_2021(creatinine_umol_l: f64, age: f64, female: bool) -> Option<f64> {
    if age < 18.0 || creatinine_umol_l <= 0.0 || !creatinine_umol_l.is_finite() {
        return None;
    }
    let scr = creatinine_umol_l / 88.4;
    let (k, a, sex) = if female {
        (0.7, -0.241, 1.012)
    } else {
        (0.9, -0.302, 1.0)
    };
    let r = scr / k;
    Some(142.0 * r.min(1.0).powf(a) * r.max(1.0).powf(-1.200) * 0.9938f64.powf(age) * sex)
}

fn renal(notes: &[NoteRef]) -> Vec<LabLine> {
    let mut out = Vec::new();
    // When the previous value was taken: its time word, its own date, "earlier" for an
    // undated value of the latest value's own note (the note's date is the latest's), else
    // its note's date and time.
    let when = |e: &Entry, latest: &Entry| -> String {
        match e.m.time_ref {
            Some(TimeRef::Admission) => "adm".into(),
            Some(TimeRef::Baseline) => "baseline".into(),
            Some(TimeRef::Yesterday) => "yest".into(),
            Some(TimeRef::Previous) => "prev".into(),
            _ if e.m.date.is_some() => short_date(e.m.date.as_deref().unwrap_or_default()),
            _ if e.note == latest.note => "earlier".into(),
            _ => {
                let t = notes[e.note].time;
                match (&t.date, &t.time) {
                    (Some(d), Some(h)) => format!("{} {h}", short_date(d)),
                    (Some(d), None) => short_date(d),
                    (None, Some(h)) => h.clone(),
                    (None, None) => format!("note {}", e.note + 1),
                }
            }
        }
    };
    let mut creat_latest = None;
    for (concept, label, unit) in [
        (MeasureConcept::Creatinine, "Cr", "µmol/L"),
        (MeasureConcept::Potassium, "K", "mmol/L"),
    ] {
        let es = entries(notes, concept);
        let Some(latest) = es.last() else { continue };
        let prev = es.len().checked_sub(2).map(|i| es[i]);
        if concept == MeasureConcept::Creatinine {
            creat_latest = Some(*latest);
        }
        let mut sources = vec![src(latest)];
        if let Some(p) = &prev {
            sources.push(src(p));
        }
        out.push(LabLine {
            concept: concept.name(),
            label,
            unit,
            latest: latest.value,
            previous: prev.map(|p| p.value),
            previous_when: prev.as_ref().map(|p| when(p, latest)),
            change: prev.map(|p| latest.value - p.value),
            basis: None,
            caveat: sample_caveat(notes[latest.note].text, latest.m.span.end),
            sources,
        });
    }
    // eGFR from the latest creatinine, age and sex, until the picture derives it.
    if let Some(c) = creat_latest {
        let (age, sex, mut sources) = age_sex_values(notes);
        if let (Some(age), Some(female)) = (age, sex) {
            if let Some(e) = egfr_ckd_epi_2021(c.value, age, female) {
                sources.insert(0, src(&c));
                out.insert(
                    1,
                    LabLine {
                        concept: "egfr",
                        label: "eGFR",
                        unit: "mL/min/1.73m²",
                        latest: (e * 10.0).round() / 10.0,
                        previous: None,
                        previous_when: None,
                        change: None,
                        basis: Some(
                            "computed by CKD-EPI 2021 from the latest creatinine, age and sex; assumes steady state"
                                .into(),
                        ),
                        caveat: None,
                        sources,
                    },
                );
            }
        }
    }
    out
}

/// `K 5.2 (haemolysed sample - repeat sent)`, `K 6.4 ?haemolysed`, `K 5.9 - lysed`: a
/// note after a result that the sample may have given a false value. Haemolysis releases
/// red-cell potassium and falsely raises serum potassium (common practice, no source).
fn sample_caveat(text: &str, end: usize) -> Option<String> {
    static RE: std::sync::OnceLock<regex::Regex> = std::sync::OnceLock::new();
    let re = RE.get_or_init(|| {
        regex::Regex::new(r"(?i)^[^.;\n]{0,24}?(\?\s*)?(haemoly[sz]ed|hemoly[zs]ed|haemolysis|hemolysis|lysed|clotted sample)")
            .expect("valid regex")
    });
    let mut lim = (end + 48).min(text.len());
    while !text.is_char_boundary(lim) {
        lim -= 1;
    }
    let after = text.get(end..lim)?;
    let c = re.captures(after)?;
    let doubt = if c.get(1).is_some() { "possibly " } else { "" };
    let word = c[2].to_ascii_lowercase();
    Some(if word.contains("clotted") {
        format!("{doubt}clotted sample")
    } else {
        format!("{doubt}haemolysed sample")
    })
}

fn age_sex_values(notes: &[NoteRef]) -> (Option<f64>, Option<bool>, Vec<Src>) {
    let mut age = None;
    let mut female = None;
    let mut sources = Vec::new();
    for (i, n) in notes.iter().enumerate() {
        let p = &n.analysis.picture.patient;
        if age.is_none() {
            age = p.age.map(f64::from);
        }
        if female.is_none() {
            female = p.sex.as_deref().map(|s| s == "female");
        }
        for st in &n.analysis.extraction.statements {
            if st.assertion != Assertion::Present || st.experiencer != Experiencer::Patient {
                continue;
            }
            match st.kind {
                StatementKind::Age if age.is_none() => {
                    age = st.value.parse().ok();
                    sources.push(Src {
                        note: i,
                        span: st.span,
                    });
                }
                StatementKind::Sex if female.is_none() => {
                    female = Some(st.value == "female");
                    sources.push(Src {
                        note: i,
                        span: st.span,
                    });
                }
                _ => {}
            }
        }
    }
    (age, female, sources)
}

/// Route, drug, dose and frequency as one phrase.
pub fn med_summary(m: &Medication) -> String {
    let mut parts: Vec<String> = Vec::new();
    if let Some(r) = &m.route {
        parts.push(r.clone());
    }
    parts.push(m.drug.clone());
    if let Some(d) = m.dose {
        let unit = m.unit.as_deref().map(unit_label).unwrap_or("");
        // A combination keeps its written pair ("24/26 mg"), not the total.
        let pair = m
            .note
            .as_deref()
            .and_then(|n| n.strip_prefix("combination dose "))
            .and_then(|n| n.split_whitespace().next());
        let amount = pair.map(str::to_string).unwrap_or_else(|| fmt_num(d));
        parts.push(format!("{amount} {unit}").trim_end().to_string());
    }
    if let Some(f) = &m.frequency {
        parts.push(f.clone());
    }
    parts.join(" ")
}

/// A regime in force today: one that a switch written for a later day will replace is
/// shown without that change.
fn today_line(m: &Medication, note: usize) -> MedLine {
    let mut line = med_line(m, note);
    if line.starts.is_some() && line.change == Some(MedChange::Switched) {
        line.change = None;
        line.starts = None;
    }
    line
}

fn med_line(m: &Medication, note: usize) -> MedLine {
    // A class mention ("no MRA due to K") is shown as written.
    let summary = if m.drug == class_name(m.class) {
        m.text.split_whitespace().collect::<Vec<_>>().join(" ")
    } else {
        med_summary(m)
    };
    MedLine {
        drug: m.drug.clone(),
        class: m.class,
        summary,
        change: m.change,
        assertion: m.assertion,
        daily_dose: m.daily_dose,
        unit: m.unit.clone(),
        starts: m.starts.clone(),
        source: Src { note, span: m.span },
    }
}

/// The four HFrEF GDMT groups (2022 AHA/ACC/HFSA; 09-discharge-gdmt.md 9.1).
const GDMT_GROUPS: &[(&str, &str, &[DrugClass])] = &[
    ("beta_blocker", "beta-blocker", &[DrugClass::BetaBlocker]),
    (
        "acei_arb_arni",
        "ACEi/ARB/ARNI",
        &[DrugClass::AceInhibitor, DrugClass::Arb, DrugClass::Arni],
    ),
    ("mra", "MRA", &[DrugClass::Mra]),
    ("sglt2_inhibitor", "SGLT2i", &[DrugClass::Sglt2Inhibitor]),
];

fn medications(notes: &[NoteRef], today: Option<&str>) -> (Diuretics, Vec<GdmtLine>) {
    // Walk every mention in writing order, keeping the regimes current after it.
    let mut current: Vec<(&Medication, usize)> = Vec::new();
    let mut events: Vec<(DrugClass, GdmtStatus, MedLine)> = Vec::new();
    let mut changes_today: Vec<MedLine> = Vec::new();
    for (i, n) in notes.iter().enumerate() {
        let is_today = today.is_none() || n.time.date.as_deref() == today;
        for m in &n.analysis.extraction.medications {
            let class_word = m.drug == class_name(m.class);
            let line = med_line(m, i);
            let diuretic = matches!(
                m.class,
                DrugClass::LoopDiuretic | DrugClass::ThiazideDiuretic
            );
            match m.assertion {
                Assertion::Hypothetical | Assertion::Possible => {
                    if is_today && diuretic {
                        changes_today.push(line);
                    }
                    continue;
                }
                Assertion::Absent => {
                    events.push((m.class, GdmtStatus::NotOn, line));
                    if !class_word {
                        current.retain(|(c, _)| c.drug != m.drug);
                    } else {
                        current.retain(|(c, _)| c.class != m.class);
                    }
                    continue;
                }
                Assertion::Present => {}
            }
            if class_word {
                // "on a beta-blocker": the class is on, though no drug is named.
                if matches!(m.change, None | Some(MedChange::Continued)) {
                    events.push((m.class, GdmtStatus::On, line));
                } else if matches!(m.change, Some(MedChange::Stopped | MedChange::Held)) {
                    let status = if m.change == Some(MedChange::Held) {
                        GdmtStatus::Held
                    } else {
                        GdmtStatus::Stopped
                    };
                    current.retain(|(c, _)| c.class != m.class);
                    events.push((m.class, status, line));
                }
                continue;
            }
            let leaving_later = m.starts.is_some() && m.change == Some(MedChange::Switched);
            if is_today
                && diuretic
                && !leaving_later
                && m.change.is_some_and(|c| c != MedChange::Continued)
            {
                changes_today.push(line.clone());
            }
            // A change written for a later day in the latest day's notes leaves today's
            // regime as it is: `switch A to B from tomorrow` keeps A on today (A is written
            // with its dose, so it is also today's regime); B and any other scheduled change
            // wait. On an earlier day the change has since come into force.
            let scheduled = is_today && m.starts.is_some();
            if scheduled {
                if m.change == Some(MedChange::Switched) && m.dose.is_some() {
                    match current.iter().position(|(c, _)| c.drug == m.drug) {
                        Some(p) => current[p] = (m, i),
                        None => current.push((m, i)),
                    }
                    events.push((m.class, GdmtStatus::On, line));
                } else if !current.iter().any(|(c, _)| c.drug == m.drug)
                    && matches!(m.change, Some(MedChange::Stopped | MedChange::Held))
                {
                    events.push((m.class, GdmtStatus::On, line));
                }
                continue;
            }
            // `furosemide 40mg IV BD -> 40mg PO BD`, `PO furosemide 40mg om (switched from
            // IV)`: a switch written with the regime it leaves in force (a dose and a
            // frequency, not introduced by "from") keeps the drug on, at that regime.
            // `switched from IV furosemide 40 mg bd` names the regime left behind.
            // A switch to another drug on the same line (`ramipril 2.5 mg bd -> switch to
            // sacubitril/valsartan`) takes this one off, unless that drug is only planned
            // (`-> transition to torsemide 40 mg PO daily tomorrow if Cr stable`).
            let line_end = n.text[m.span.end.min(n.text.len())..]
                .find('\n')
                .map_or(n.text.len(), |p| m.span.end + p);
            let to_other_drug = n.analysis.extraction.medications.iter().any(|o| {
                o.span.start >= m.span.end
                    && o.span.start < line_end
                    && o.drug != m.drug
                    && o.assertion == Assertion::Present
            });
            let switched_to = m.change == Some(MedChange::Switched)
                && m.dose.is_some()
                && m.frequency.is_some()
                && !to_other_drug
                && !m.text.to_ascii_lowercase().contains("from");
            match m.change {
                Some(MedChange::Stopped) | Some(MedChange::Held) | Some(MedChange::Switched)
                    if !switched_to =>
                {
                    let status = match m.change {
                        Some(MedChange::Held) => GdmtStatus::Held,
                        _ => GdmtStatus::Stopped,
                    };
                    current.retain(|(c, _)| c.drug != m.drug);
                    events.push((m.class, status, line));
                }
                _ => {
                    let existing = current.iter().position(|(c, _)| c.drug == m.drug);
                    // A record of a dose given ("furosemide 40 mg given") keeps the regime.
                    let record_only = m.change.is_none() && m.frequency.is_none();
                    match existing {
                        Some(_) if record_only => {}
                        Some(p) => current[p] = (m, i),
                        None => current.push((m, i)),
                    }
                    events.push((m.class, GdmtStatus::On, line));
                }
            }
        }
    }
    let regime: Vec<MedLine> = current
        .iter()
        .filter(|(m, _)| {
            matches!(
                m.class,
                DrugClass::LoopDiuretic | DrugClass::ThiazideDiuretic
            )
        })
        .map(|(m, i)| today_line(m, *i))
        .collect();
    let loops: Vec<(&Medication, Option<usize>)> =
        current.iter().map(|(m, i)| (*m, Some(*i))).collect();
    let diuretics = Diuretics {
        regime,
        loop_total: loop_total_tagged(&loops),
        changes_today,
    };

    let hfref = heart_failure(notes)
        .and_then(|h| h.hf_type)
        .is_some_and(|t| t == "hfref");
    let mut gdmt = Vec::new();
    for (group, label, classes) in GDMT_GROUPS {
        let on: Vec<MedLine> = current
            .iter()
            .filter(|(m, _)| classes.contains(&m.class))
            .map(|(m, i)| today_line(m, *i))
            .collect();
        let (status, drugs) = if !on.is_empty() {
            (GdmtStatus::On, on)
        } else if let Some((_, s, l)) = events.iter().rev().find(|(c, _, _)| classes.contains(c)) {
            (*s, vec![l.clone()])
        } else {
            (GdmtStatus::NotDocumented, Vec::new())
        };
        // Outside HFrEF only classes the notes mention are listed.
        if status == GdmtStatus::NotDocumented && !hfref {
            continue;
        }
        gdmt.push(GdmtLine {
            group,
            label,
            status,
            drugs,
        });
    }
    (diuretics, gdmt)
}

fn plan(notes: &[NoteRef]) -> Option<Plan> {
    let (i, n) = notes.iter().enumerate().rev().find(|(_, n)| {
        n.analysis
            .extraction
            .sections
            .iter()
            .any(|s| s.kind == SectionKind::Plan)
    })?;
    let index = LineIndex::new(n.text);
    let mut lines = Vec::new();
    // In a record of several days (`=== 07/11/2026 ===` headers), the plan is the latest
    // day's: only the plan sections of the last day that has one, each cut at the next
    // day's header.
    let day_starts: Vec<usize> = n
        .analysis
        .extraction
        .episodes
        .iter()
        .map(|e| e.span.start)
        .collect();
    let day_of = |at: usize| day_starts.partition_point(|&d| d <= at);
    let plans: Vec<_> = n
        .analysis
        .extraction
        .sections
        .iter()
        .filter(|s| s.kind == SectionKind::Plan)
        .collect();
    let last_day = plans
        .iter()
        .map(|s| day_of(s.span.start))
        .max()
        .unwrap_or(0);
    'sections: for s in plans
        .into_iter()
        .filter(|s| day_of(s.span.start) == last_day)
    {
        let start = s.header.end.min(n.text.len());
        let next_day = day_starts
            .iter()
            .copied()
            .find(|&d| d > s.span.start)
            .unwrap_or(usize::MAX);
        let end = s.span.end.min(next_day).min(n.text.len()).max(start);
        let (Some(body), true) = (n.text.get(start..end), n.text.is_char_boundary(start)) else {
            continue;
        };
        let mut offset = start;
        for raw in body.split_inclusive('\n') {
            let line = raw.trim_end_matches(['\n', '\r']);
            let trimmed = line.trim_start_matches([' ', '\t', '-', '*', '•']);
            let lead = line.len() - trimmed.len();
            let text = trimmed.trim_end();
            // A letter's sign-off ends its plan (`Yours sincerely,`, `Kind regards`).
            if is_sign_off(text) {
                break 'sections;
            }
            if !text.is_empty() {
                let a = offset + lead;
                lines.push(PlanLine {
                    text: text.to_string(),
                    source: Src {
                        note: i,
                        span: index.span(a, a + text.len()),
                    },
                });
            }
            offset += raw.len();
        }
    }
    Some(Plan { note: i, lines })
}

/// The closing of a letter or entry, after which no plan item follows (common practice of
/// UK, US and Australian letters, no source).
fn is_sign_off(line: &str) -> bool {
    const CLOSINGS: &[&str] = &[
        "yours sincerely",
        "yours faithfully",
        "yours truly",
        "kind regards",
        "best regards",
        "warm regards",
        "with best wishes",
        "best wishes",
        "many thanks",
        "regards",
        "sincerely",
        "dictated but not",
        "electronically signed",
        "signed:",
        "cc:",
        "cc ",
    ];
    let l = line.to_ascii_lowercase();
    let l = l.trim_end_matches([',', '.', ' ']);
    CLOSINGS
        .iter()
        .any(|c| l == c.trim_end() || (l.starts_with(c) && l.len() <= c.len() + 40))
}

fn to_check(notes: &[NoteRef]) -> Vec<Check> {
    let mut out = Vec::new();
    for (i, n) in notes.iter().enumerate() {
        // A coding suggestion is for the coder, not something to check at handover.
        let suggestion = crate::lint::rules::hf_code_suggestion::RULE.id;
        for d in n
            .analysis
            .diagnostics
            .iter()
            .filter(|d| d.rule != suggestion)
        {
            out.push(Check {
                rule: d.rule.to_string(),
                severity: d.severity,
                message: d.message.clone(),
                query: d.query.clone(),
                note: i,
                span: d.span,
            });
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn egfr_matches_the_ckd_epi_2021_worked_examples() {
        // Worked examples of tidemark domain reference 06-egfr.md, computed from the
        // CKD-EPI 2021 equation (Inker et al., N Engl J Med 2021;385:1737-49).
        let r = |v: Option<f64>| v.map(|v| (v * 10.0).round() / 10.0);
        // Woman, 55 years, 0.9 mg/dL (= 79.56 µmol/L) → 75.5.
        assert_eq!(r(egfr_ckd_epi_2021(0.9 * 88.4, 55.0, true)), Some(75.5));
        // Man, 70 years, 1.4 mg/dL → 54.1.
        assert_eq!(r(egfr_ckd_epi_2021(1.4 * 88.4, 70.0, false)), Some(54.1));
        // Woman, 80 years, 130 µmol/L → 35.9.
        assert_eq!(r(egfr_ckd_epi_2021(130.0, 80.0, true)), Some(35.9));
        assert_eq!(egfr_ckd_epi_2021(100.0, 17.0, true), None);
        assert_eq!(egfr_ckd_epi_2021(0.0, 50.0, true), None);
    }

    #[test]
    fn dates_shift_across_months_and_leap_days() {
        // Gregorian calendar arithmetic.
        assert_eq!(shift_date("2026-03-01", -1).as_deref(), Some("2026-02-28"));
        assert_eq!(shift_date("2024-03-01", -1).as_deref(), Some("2024-02-29"));
        assert_eq!(shift_date("2026-12-31", 1).as_deref(), Some("2027-01-01"));
        assert_eq!(shift_date("not a date", 1), None);
    }

    #[test]
    fn hf_type_boundaries() {
        // ESC 2021 categories (07-classification.md): ≤ 40 reduced, 41–49 mildly reduced,
        // ≥ 50 preserved.
        assert_eq!(hf_type_from_lvef(40.0), "hfref");
        assert_eq!(hf_type_from_lvef(41.0), "hfmref");
        assert_eq!(hf_type_from_lvef(49.0), "hfmref");
        assert_eq!(hf_type_from_lvef(50.0), "hfpef");
    }
}
