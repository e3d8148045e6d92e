//! The four classifications a coder needs: NYHA class, HF type, acuity and volume status,
//! each with the span it came from.
//!
//! Only present, current statements about the patient count, and the most recent one wins
//! (latest assessment first, then the later position in the note).
//!
//! - `hf_type`: a stated type (`hfref`, `hfmref`, `hfpef`, `hfimpef`) beats one derived from
//!   the latest LVEF (<= 40 % hfref, 41–49 % hfmref, >= 50 % hfpef: Universal Definition of
//!   Heart Failure, Bozkurt et al. 2021; 2022 AHA/ACC/HFSA guideline); the source says which
//!   (`stated` or `derived`). See [`super::derived::classify_lvef`] for decimals, ranges and
//!   bounds. A derived type never becomes `hfimpef`: that needs the clinician's words.
//! - `acuity`: `acute`, `chronic`, `acute_on_chronic`. A `decompensated` statement is a
//!   worsening of known heart failure (AHA Coding Clinic 3Q 2008: an acute flare-up of a
//!   chronic condition), so it maps to `acute_on_chronic` when the note documents chronic
//!   heart failure (a chronic or acute-on-chronic statement, heart failure mentioned as past
//!   history, or words such as "known", "chronic", "worsening", "established" in a heart
//!   failure statement), and to `acute` otherwise; the source notes the mapping.
//! - `nyha_class`: `I`..`IV` from roman or arabic numerals or words.
//!
//! The type and the NYHA class describe a lasting state: when no current statement gives
//! them, a historical one about the patient (a past-history section, "NYHA III at baseline")
//! is used and its source says so. Acuity and volume status are never taken from history.
//! - `volume_status`: the clinician's own word (`overloaded`, `euvolemic`, `depleted`), even
//!   when it contradicts the examination (the profile reports that as a conflict).

use serde::Serialize;

use super::derived::{classify_lvef, latest_lvef};
use super::timeline::{Timeline, When};
use super::{counts, Counts};
use crate::model::{Experiencer, Extraction, Statement, StatementKind, Temporality};
use crate::span::Span;

/// Where a classification came from.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ClassSource {
    /// `stated` in the text or `derived` from a value (hf_type from LVEF).
    pub basis: &'static str,
    pub text: String,
    pub span: Span,
    /// How the words became the value, when that took a rule (decompensated, a range).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
}

/// The four classifications, as plain strings, with their sources beside them.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Classifications {
    pub nyha_class: Option<String>,
    pub hf_type: Option<String>,
    pub acuity: Option<String>,
    pub volume_status: Option<String>,
    pub sources: ClassSources,
}

#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct ClassSources {
    pub nyha_class: Option<ClassSource>,
    pub hf_type: Option<ClassSource>,
    pub acuity: Option<ClassSource>,
    pub volume_status: Option<ClassSource>,
}

fn stated(s: &Statement, note: Option<String>) -> ClassSource {
    ClassSource {
        basis: "stated",
        text: s.text.clone(),
        span: s.span,
        note,
    }
}

fn order(tl: &Timeline, s: &Statement) -> (When, usize) {
    (
        tl.when(s.episode, s.section, s.span.start, None),
        s.span.start,
    )
}

/// The most recent statement of a kind that is present and about the patient but
/// historical (a past-history section, "at baseline"): used for the type and the NYHA class,
/// which describe a lasting state, when no current statement exists.
fn latest_historical<'a, T>(
    ex: &'a Extraction,
    tl: &Timeline,
    kind: StatementKind,
    norm: impl Fn(&str) -> Option<T>,
) -> Option<(&'a Statement, T)> {
    ex.statements
        .iter()
        .filter(|s| {
            s.kind == kind
                && s.assertion == crate::model::Assertion::Present
                && s.experiencer == Experiencer::Patient
                && s.temporality == Temporality::Historical
        })
        .filter_map(|s| norm(&s.value).map(|v| (s, v)))
        .max_by_key(|(s, _)| order(tl, s))
}

const HISTORICAL_NOTE: &str =
    "written as history or baseline; used because no current statement gives it";

/// The most recent counted statement of a kind whose value `norm` accepts.
fn latest<'a, T>(
    ex: &'a Extraction,
    tl: &Timeline,
    kind: StatementKind,
    norm: impl Fn(&str) -> Option<T>,
) -> Option<(&'a Statement, T)> {
    ex.statements
        .iter()
        .filter(|s| {
            s.kind == kind && counts(s.assertion, s.temporality, s.experiencer) == Counts::Present
        })
        .filter_map(|s| norm(&s.value).map(|v| (s, v)))
        .max_by_key(|(s, _)| order(tl, s))
}

/// NYHA class in roman numerals, from roman, arabic or words.
pub fn nyha(v: &str) -> Option<&'static str> {
    let t = v.trim().to_ascii_lowercase();
    let t = t
        .trim_start_matches("nyha")
        .trim_start_matches("class")
        .trim();
    match t {
        "i" | "1" | "one" => Some("I"),
        "ii" | "2" | "two" => Some("II"),
        "iii" | "3" | "three" => Some("III"),
        "iv" | "4" | "four" => Some("IV"),
        _ => None,
    }
}

fn hf_type(v: &str) -> Option<&'static str> {
    match v.trim().to_ascii_lowercase().as_str() {
        "hfref" => Some("hfref"),
        "hfmref" => Some("hfmref"),
        "hfpef" => Some("hfpef"),
        "hfimpef" => Some("hfimpef"),
        _ => None,
    }
}

fn acuity(v: &str) -> Option<&'static str> {
    match v.trim().to_ascii_lowercase().as_str() {
        "acute" => Some("acute"),
        "chronic" => Some("chronic"),
        "acute_on_chronic" => Some("acute_on_chronic"),
        "decompensated" => Some("decompensated"),
        _ => None,
    }
}

fn volume(v: &str) -> Option<&'static str> {
    match v.trim().to_ascii_lowercase().as_str() {
        "overloaded" => Some("overloaded"),
        "euvolemic" => Some("euvolemic"),
        "depleted" => Some("depleted"),
        _ => None,
    }
}

const KNOWN_WORDS: [&str; 8] = [
    "known",
    "background",
    "chronic",
    "worsening",
    "established",
    "long-standing",
    "longstanding",
    "exacerbation",
];

/// Whether the note documents chronic (known) heart failure, for mapping `decompensated`.
fn chronic_documented(ex: &Extraction, decompensated: &Statement) -> Option<String> {
    let own = decompensated.text.to_lowercase();
    if let Some(w) = KNOWN_WORDS.iter().find(|w| own.contains(*w)) {
        return Some(format!("described as {w}"));
    }
    for s in &ex.statements {
        if s.experiencer != Experiencer::Patient || s.assertion != crate::model::Assertion::Present
        {
            continue;
        }
        match s.kind {
            StatementKind::Acuity if matches!(s.value.as_str(), "chronic" | "acute_on_chronic") => {
                return Some(format!("chronic heart failure documented: {}", s.text));
            }
            StatementKind::HeartFailure | StatementKind::HfType | StatementKind::LvFunction => {
                if s.temporality == Temporality::Historical {
                    return Some(format!("heart failure documented in the past: {}", s.text));
                }
                let t = s.text.to_lowercase();
                if let Some(w) = KNOWN_WORDS.iter().find(|w| t.contains(*w)) {
                    return Some(format!("heart failure described as {w}: {}", s.text));
                }
            }
            _ => {}
        }
    }
    None
}

/// Whether the note names heart failure for the patient (affirmed or possible), gives its
/// acuity or a NYHA class. The HF types are categories of heart failure by ejection
/// fraction (Universal Definition of Heart Failure, Bozkurt et al. 2021, section 4): an
/// LVEF of 58 % in a patient without heart failure ("No history of heart failure. Echo:
/// LVEF 58 %") is a normal ventricle, not HFpEF.
fn hf_documented(ex: &Extraction) -> bool {
    use crate::model::Assertion;
    ex.statements.iter().any(|s| {
        s.experiencer == Experiencer::Patient
            && matches!(s.assertion, Assertion::Present | Assertion::Possible)
            && matches!(
                s.kind,
                StatementKind::HeartFailure
                    | StatementKind::HfType
                    | StatementKind::Acuity
                    | StatementKind::Nyha
            )
    })
}

/// A current acute or decompensated statement about the patient, if any.
fn current_acute<'a>(ex: &'a Extraction, tl: &Timeline) -> Option<&'a Statement> {
    latest(ex, tl, StatementKind::Acuity, |v| {
        acuity(v).filter(|a| matches!(*a, "acute" | "decompensated"))
    })
    .map(|(s, _)| s)
}

/// Build the classifications.
pub fn build(ex: &Extraction, tl: &Timeline) -> Classifications {
    let mut c = Classifications::default();
    if let Some((s, v)) = latest(ex, tl, StatementKind::Nyha, nyha) {
        c.nyha_class = Some(v.into());
        c.sources.nyha_class = Some(stated(s, None));
    } else if let Some((s, v)) = latest_historical(ex, tl, StatementKind::Nyha, nyha) {
        c.nyha_class = Some(v.into());
        c.sources.nyha_class = Some(stated(s, Some(HISTORICAL_NOTE.into())));
    }
    if let Some((s, v)) = latest(ex, tl, StatementKind::VolumeStatus, volume) {
        c.volume_status = Some(v.into());
        c.sources.volume_status = Some(stated(s, None));
    }
    // A chronic heart failure written in the history ("Background: chronic HFrEF") is still
    // chronic today; an acute episode in the history is not today's acuity.
    let acuity_found = latest(ex, tl, StatementKind::Acuity, acuity).or_else(|| {
        latest_historical(ex, tl, StatementKind::Acuity, |v| {
            acuity(v).filter(|a| *a == "chronic")
        })
    });
    if let Some((s, v)) = acuity_found {
        let (v, note) = if v == "decompensated" {
            match chronic_documented(ex, s) {
                Some(why) => (
                    "acute_on_chronic",
                    Some(format!("decompensated, {why}: acute on chronic")),
                ),
                None => (
                    "acute",
                    Some(
                        "decompensated with no chronic heart failure documented: acute".to_string(),
                    ),
                ),
            }
        } else if v == "chronic" {
            // "Acute decompensated HF. Known HFrEF.": an acute word and a chronic one written
            // about the patient's heart failure in the same note code as acute on chronic
            // (ICD-10-CM index, "acute and chronic" written together; AHA Coding Clinic 3Q
            // 2008 for decompensated).
            match current_acute(ex, tl) {
                Some(a) => (
                    "acute_on_chronic",
                    Some(format!(
                        "chronic, with \"{}\" documented for this episode: acute on chronic",
                        a.text
                    )),
                ),
                None => (v, None),
            }
        } else {
            (v, None)
        };
        c.acuity = Some(v.into());
        c.sources.acuity = Some(stated(s, note));
    }
    if let Some((s, v)) = latest(ex, tl, StatementKind::HfType, hf_type) {
        c.hf_type = Some(v.into());
        c.sources.hf_type = Some(stated(s, None));
    } else if let Some((s, v)) = latest_historical(ex, tl, StatementKind::HfType, hf_type) {
        c.hf_type = Some(v.into());
        c.sources.hf_type = Some(stated(s, Some(HISTORICAL_NOTE.into())));
    } else if let Some(m) = latest_lvef(ex, tl).filter(|_| hf_documented(ex)) {
        let cat = classify_lvef(m);
        if let Some(k) = cat.category {
            c.hf_type = Some(k.into());
            let mut note = format!(
                "from LVEF {} % (<= 40 hfref, 41-49 hfmref, >= 50 hfpef)",
                super::fmt_num(cat.value, 1)
            );
            for n in &cat.notes {
                note.push_str("; ");
                note.push_str(n);
            }
            c.sources.hf_type = Some(ClassSource {
                basis: "derived",
                text: m.text.clone(),
                span: m.span,
                note: Some(note),
            });
        }
    }
    c
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Assertion, MeasureConcept as M, StatementKind as K, TimeRef};
    use crate::picture::testkit::Note;

    fn run(n: &Note) -> Classifications {
        let ex = n.build();
        build(&ex, &Timeline::new(&ex))
    }

    #[test]
    fn stated_type_beats_lvef() {
        let mut n = Note::new("HFpEF. Echo LVEF 35%.");
        n.state("HFpEF", K::HfType, "hfpef");
        n.measure("LVEF 35%", M::Lvef, 35.0);
        let c = run(&n);
        assert_eq!(c.hf_type.as_deref(), Some("hfpef"));
        assert_eq!(c.sources.hf_type.unwrap().basis, "stated");
    }

    #[test]
    fn type_derived_from_latest_lvef_at_the_boundaries() {
        // Universal Definition 2021 / AHA 2022: 40 -> hfref, 41 -> hfmref, 49 -> hfmref,
        // 50 -> hfpef.
        for (ef, want) in [
            (40.0, "hfref"),
            (41.0, "hfmref"),
            (49.0, "hfmref"),
            (50.0, "hfpef"),
            (40.5, "hfmref"),
        ] {
            let mut n = Note::new("Heart failure. Previous echo LVEF 60%. Echo today LVEF x%.");
            n.state("Heart failure", K::HeartFailure, "hf");
            n.measure("LVEF 60%", M::Lvef, 60.0).time_ref = Some(TimeRef::Previous);
            n.measure("LVEF x%", M::Lvef, ef);
            let c = run(&n);
            assert_eq!(c.hf_type.as_deref(), Some(want), "LVEF {ef}");
            let src = c.sources.hf_type.unwrap();
            assert_eq!(src.basis, "derived");
            assert_eq!(src.text, "LVEF x%");
        }
    }

    #[test]
    fn no_type_is_derived_without_heart_failure() {
        // Universal Definition of Heart Failure (Bozkurt et al. 2021): the EF categories
        // classify heart failure; an LVEF alone, or with heart failure denied, gives none.
        let mut n = Note::new("AF for cardioversion. Echo LVEF 58%.");
        n.measure("LVEF 58%", M::Lvef, 58.0);
        assert_eq!(run(&n).hf_type, None);
        let mut n = Note::new("No history of heart failure. Echo LVEF 58%.");
        n.statement("heart failure", K::HeartFailure, "hf")
            .assertion = Assertion::Absent;
        n.measure("LVEF 58%", M::Lvef, 58.0);
        assert_eq!(run(&n).hf_type, None);
        // A possible heart failure still gets its category, marked as derived.
        let mut n = Note::new("Possible new heart failure. Echo LVEF 35%.");
        n.statement("heart failure", K::HeartFailure, "hf")
            .assertion = Assertion::Possible;
        n.measure("LVEF 35%", M::Lvef, 35.0);
        assert_eq!(run(&n).hf_type.as_deref(), Some("hfref"));
    }

    #[test]
    fn family_historical_and_negated_statements_do_not_classify() {
        let mut n = Note::new("FH: father HFrEF. Not in acute heart failure. Aim NYHA IV never.");
        n.statement("HFrEF", K::HfType, "hfref").experiencer = Experiencer::Other;
        n.statement("acute", K::Acuity, "acute").assertion = Assertion::Absent;
        n.statement("NYHA IV", K::Nyha, "IV").assertion = Assertion::Hypothetical;
        let c = run(&n);
        assert_eq!(c, Classifications::default());
    }

    #[test]
    fn type_nyha_and_chronic_fall_back_to_history_acute_does_not() {
        let mut n = Note::new("PMH: HFpEF, NYHA III at baseline, admission with acute HF 2024.");
        n.statement("HFpEF", K::HfType, "hfpef").temporality = Temporality::Historical;
        n.statement("NYHA III", K::Nyha, "III").temporality = Temporality::Historical;
        n.statement("acute", K::Acuity, "acute").temporality = Temporality::Historical;
        let c = run(&n);
        assert_eq!(c.hf_type.as_deref(), Some("hfpef"));
        assert!(c.sources.hf_type.unwrap().note.unwrap().contains("history"));
        assert_eq!(c.nyha_class.as_deref(), Some("III"));
        assert_eq!(c.acuity, None);
        // Chronic heart failure in the history is still chronic.
        n.statement("HFpEF", K::Acuity, "chronic").temporality = Temporality::Historical;
        assert_eq!(run(&n).acuity.as_deref(), Some("chronic"));
        // A current statement beats the history.
        n.state("NYHA II", K::Nyha, "II");
        assert_eq!(run(&n).nyha_class.as_deref(), Some("II"));
    }

    #[test]
    fn most_recent_statement_wins() {
        let mut n =
            Note::new("On admission fluid overloaded, NYHA 4. Today euvolaemic, NYHA class two.");
        n.state("fluid overloaded", K::VolumeStatus, "overloaded")
            .state("NYHA 4", K::Nyha, "4");
        n.state("euvolaemic", K::VolumeStatus, "euvolemic")
            .state("NYHA class two", K::Nyha, "two");
        let c = run(&n);
        assert_eq!(c.volume_status.as_deref(), Some("euvolemic"));
        assert_eq!(c.nyha_class.as_deref(), Some("II"));
        assert_eq!(c.sources.nyha_class.unwrap().text, "NYHA class two");
        // NYHA criteria: classes I-IV only (check value N05: V is invalid).
        assert_eq!(nyha("V"), None);
        assert_eq!(nyha("iii"), Some("III"));
        assert_eq!(nyha("NYHA 3"), Some("III"));
    }

    #[test]
    fn decompensated_maps_by_documented_chronic_heart_failure() {
        // AHA Coding Clinic 3Q 2008: decompensated = acute flare-up of a chronic condition.
        let mut n = Note::new("Known HFrEF. Decompensated heart failure.");
        n.state("Known HFrEF", K::HfType, "hfref").state(
            "Decompensated",
            K::Acuity,
            "decompensated",
        );
        let c = run(&n);
        assert_eq!(c.acuity.as_deref(), Some("acute_on_chronic"));
        assert!(c.sources.acuity.unwrap().note.unwrap().contains("known"));

        let mut n = Note::new("Decompensated heart failure, first presentation.");
        n.state("Decompensated", K::Acuity, "decompensated");
        let c = run(&n);
        assert_eq!(c.acuity.as_deref(), Some("acute"));

        let mut n = Note::new("PMH: heart failure 2019. Now decompensated.");
        n.statement("heart failure", K::HeartFailure, "hf")
            .temporality = Temporality::Historical;
        n.state("decompensated", K::Acuity, "decompensated");
        assert_eq!(run(&n).acuity.as_deref(), Some("acute_on_chronic"));

        let mut n = Note::new("Chronic HF. Worsening: decompensated.");
        n.state("Chronic", K::Acuity, "chronic")
            .state("decompensated", K::Acuity, "decompensated");
        assert_eq!(run(&n).acuity.as_deref(), Some("acute_on_chronic"));
    }

    #[test]
    fn lvef_from_another_person_or_a_plan_is_not_used() {
        let mut n = Note::new("Brother LVEF 25%. Repeat echo if LVEF < 35%.");
        n.measure("LVEF 25%", M::Lvef, 25.0).experiencer = Experiencer::Other;
        n.measure("LVEF < 35%", M::Lvef, 35.0).assertion = Assertion::Hypothetical;
        assert_eq!(run(&n).hf_type, None);
    }
}
