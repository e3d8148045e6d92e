//! What a classification-bearing phrase says and what it does not: oxygen written as `HF`,
//! imaging wording that is no volume status, NYHA classes graded, dated or restated for
//! today, and no HF type from an LVEF when heart failure is not documented. Every sentence
//! is invented; each check names its source or says "common practice, no source".

use tidemark::config::ExtractOptions;
use tidemark::extract::extract;
use tidemark::model::{Assertion, Extraction, StatementKind, Temporality};

fn ex(text: &str) -> Extraction {
    extract(text, &ExtractOptions::default())
}

fn named_hf(e: &Extraction) -> usize {
    e.statements
        .iter()
        .filter(|s| s.kind == StatementKind::HeartFailure)
        .count()
}

#[test]
fn hf_before_an_oxygen_flow_is_high_flow_oxygen() {
    // Domain 03 (abbreviations): "HF 40 L" is oxygen; domain 05 gives oxygen flow in L/min.
    for text in [
        "on HF 50L/min FiO2 0.6",
        "Weaned from HF 40 L 35% to NP 2 L",
        "HF at 60 lpm",
        "HF FiO2 0.45",
        "Remains on HF 30 litres",
    ] {
        assert_eq!(named_hf(&ex(text)), 0, "{text:?} read as heart failure");
    }
    // Heart failure written as HF stays heart failure.
    for text in [
        "HF, on furosemide 40 mg od",
        "Decompensated HF 2nd admission this year",
        "HF: LVEF 30%",
    ] {
        assert!(named_hf(&ex(text)) > 0, "{text:?}: heart failure lost");
    }
}

#[test]
fn imaging_wording_is_no_stated_volume_status() {
    // The stated volume status is the clinician's judgement of the patient (domain 02);
    // an image report is other evidence (common practice, no source).
    let volume = |text: &str| {
        ex(text)
            .statements
            .into_iter()
            .filter(|s| s.kind == StatementKind::VolumeStatus)
            .count()
    };
    for text in [
        "No evidence of fluid overload on CXR per radiology report",
        "CXR: no evidence of fluid overload",
        "Fluid overload seen on chest x-ray",
    ] {
        assert_eq!(volume(text), 0, "{text:?} read as a stated volume status");
    }
    for text in [
        "Clinically fluid overloaded.",
        "LVEF 30% on echo, fluid overloaded today",
        "Appears euvolaemic.",
    ] {
        assert_eq!(volume(text), 1, "{text:?}: volume status lost");
    }
}

#[test]
fn nyha_classes_graded_dated_and_restated() {
    let nyha = |text: &str| -> Vec<(String, Assertion, Temporality)> {
        ex(text)
            .statements
            .into_iter()
            .filter(|s| s.kind == StatementKind::Nyha)
            .map(|s| (s.value, s.assertion, s.temporality))
            .collect()
    };
    // Common practice, no source: "consistent with" grades the symptoms; it does not doubt
    // them. A range gives the higher class (domain 07 §7.2).
    for text in [
        "His symptoms are consistent with NYHA class I-II.",
        "Symptoms in keeping with NYHA II.",
    ] {
        let got = nyha(text);
        assert_eq!(got.len(), 1, "{text:?}: {got:?}");
        assert_eq!(got[0].0, "II");
        assert_eq!(got[0].1, Assertion::Present, "{text:?}");
    }
    // A question mark still doubts it (domain 03 §3.1).
    assert_eq!(nyha("?NYHA III")[0].1, Assertion::Possible);
    // "on adm": the class at admission (common practice, no source).
    let got = nyha("NYHA II-III on adm, now breathless on stairs only.");
    assert_eq!(got[0].0, "III");
    assert_eq!(got[0].2, Temporality::Historical);
    // "usually II, today III": today's class is the later statement.
    for text in [
        "NYHA II usually, today more like III.",
        "NYHA class II at baseline but now class III",
    ] {
        let got = nyha(text);
        assert_eq!(
            got.last().map(|g| g.0.as_str()),
            Some("III"),
            "{text:?}: {got:?}"
        );
        let c = tidemark::picture::build(&ex(text)).classifications;
        assert_eq!(c.nyha_class.as_deref(), Some("III"), "{text:?}");
    }
    // Numbers after "now" that are not classes are not read as one.
    let got = nyha("NYHA II, now 2 kg lighter. Now I think he is better.");
    assert_eq!(got.len(), 1, "{got:?}");
}

#[test]
fn no_hf_type_from_lvef_without_heart_failure() {
    // Universal Definition of Heart Failure (Bozkurt et al. 2021): the EF categories
    // classify heart failure; a normal echo in a patient without it is no HFpEF.
    for text in [
        "No history of heart failure. Echo 10/2026: LVEF 58%.",
        "AF for DCCV work-up. TTE: LVEF 60%, normal valves.",
    ] {
        let c = tidemark::picture::build(&ex(text)).classifications;
        assert_eq!(c.hf_type, None, "{text:?}");
    }
    let c =
        tidemark::picture::build(&ex("Heart failure admission. Echo: LVEF 35%.")).classifications;
    assert_eq!(c.hf_type.as_deref(), Some("hfref"));
}

#[test]
fn a_corrected_label_is_denied() {
    // Common practice, no source: a type the note itself corrects is not the stated type;
    // the heart failure stays named.
    for (text, refuted) in [
        (
            "Note: in the ED letter this was recorded as \"HFpEF\" - this is incorrect, please amend.",
            "hfpef",
        ),
        (
            "Previously labelled HFpEF, which was wrong: LVEF 35% on this echo.",
            "hfpef",
        ),
        ("Erroneously documented as HFrEF in the GP letter.", "hfref"),
        ("HFpEF (in error - please amend to HFrEF)", "hfpef"),
    ] {
        let e = ex(text);
        let types: Vec<_> = e
            .statements
            .iter()
            .filter(|s| s.kind == StatementKind::HfType && s.value == refuted)
            .map(|s| s.assertion)
            .collect();
        assert!(!types.is_empty(), "{text:?}: no type read");
        assert!(
            types.iter().all(|a| *a == Assertion::Absent),
            "{text:?}: {types:?}"
        );
        assert!(named_hf(&e) > 0, "{text:?}: heart failure lost");
    }
    // The type it is corrected to stands.
    let e = ex("HFpEF (in error - please amend to HFrEF)");
    assert!(e.statements.iter().any(|s| s.kind == StatementKind::HfType
        && s.value == "hfref"
        && s.assertion == Assertion::Present));
    // An affirmed type stays affirmed.
    let e = ex("HFpEF, correct diuretic dose confirmed.");
    assert!(e
        .statements
        .iter()
        .any(|s| s.kind == StatementKind::HfType && s.assertion == Assertion::Present));
}

#[test]
fn a_bracketed_date_does_not_stop_a_time_cue_and_an_earlier_state_keeps_the_present() {
    // 04 §4.3 lists "previous" and "previously" as historical cues; common practice, no
    // source, for the bracketed date inside the cue's phrase and for "previously <state>"
    // dating the state after it.
    let lvef = |text: &str| -> Vec<(f64, Temporality)> {
        ex(text)
            .measurements
            .into_iter()
            .filter(|m| m.concept == tidemark::model::MeasureConcept::Lvef)
            .map(|m| (m.value, m.temporality))
            .collect()
    };
    assert_eq!(
        lvef("Previous echo (2022): LVEF 55%, normal LV size."),
        [(55.0, Temporality::Historical)]
    );
    assert_eq!(
        lvef("Prior TTE (outside hospital) - LVEF 60%."),
        [(60.0, Temporality::Historical)]
    );
    assert_eq!(
        lvef("Heart failure - new finding of LVEF 38%, previously normal."),
        [(38.0, Temporality::Current)]
    );
    // A cue at the end of its clause still dates the value before it.
    assert_eq!(
        lvef("LVEF 30% previously."),
        [(30.0, Temporality::Historical)]
    );
    let e = ex("Oedema: trace at ankles, previously to knees");
    let oedema: Vec<_> = e
        .findings
        .iter()
        .filter(|f| f.concept == tidemark::model::FindingConcept::PeripheralEdema)
        .map(|f| (f.assertion, f.temporality))
        .collect();
    assert_eq!(oedema, [(Assertion::Present, Temporality::Current)]);
}

#[test]
fn a_volume_state_not_yet_reached_is_not_stated() {
    // Common practice, no source: "approaching euvolaemia" says the patient is not there
    // yet, so it is no stated volume status to weigh against the findings.
    for text in [
        "Approaching euvolaemia.",
        "Nearly euvolaemic, one more day of IV.",
        "Moving towards euvolaemia.",
    ] {
        let c = tidemark::picture::build(&ex(text)).classifications;
        assert_eq!(c.volume_status, None, "{text:?}");
    }
    let c = tidemark::picture::build(&ex("Euvolaemic today.")).classifications;
    assert!(c.volume_status.is_some());
}
