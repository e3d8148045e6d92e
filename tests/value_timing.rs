//! When a value was taken, as the words around it say, and numbers that look like readings
//! but are goals, identifiers or parts of longer names. Every sentence is invented; each
//! row names its source in the domain reference (`/work/shared/domain/`) or says "common
//! practice, no source".

use tidemark::config::ExtractOptions;
use tidemark::extract::extract;
use tidemark::model::{Extraction, MeasureConcept, TimeRef};

use MeasureConcept as M;

fn ex(text: &str) -> Extraction {
    extract(text, &ExtractOptions::default())
}

/// The trend of a concept from the picture: (first, last, number of points).
fn trend(e: &Extraction, concept: MeasureConcept) -> (Option<f64>, Option<f64>, usize) {
    let t = tidemark::picture::build(e).trends;
    match concept {
        M::Weight => (t.weight.first, t.weight.last, t.weight.points.len()),
        M::Creatinine => (
            t.creatinine.first,
            t.creatinine.last,
            t.creatinine.points.len(),
        ),
        M::Potassium => (
            t.potassium.first,
            t.potassium.last,
            t.potassium.points.len(),
        ),
        _ => (None, None, 0),
    }
}

#[test]
fn an_earlier_value_named_by_its_time_comes_first() {
    // Domain 03 §3.7 lists the ways a weight or result is dated ("last clinic", "on
    // admission", "N days ago"); common practice, no source, for the UK `3/7 ago`
    // (three days) and for weekday names. The value without a time word is today's, so the
    // trend runs from the earlier value to it.
    let rows: &[(&str, MeasureConcept, f64, f64)] = &[
        ("K+ 6.1 mmol/L (5.4 two days ago)", M::Potassium, 5.4, 6.1),
        ("K 5.9 (4.8 3/7 ago)", M::Potassium, 4.8, 5.9),
        ("Cr 171 (was 140 a week ago)", M::Creatinine, 140.0, 171.0),
        ("Creatinine 188, 150 on Monday", M::Creatinine, 150.0, 188.0),
        (
            "Weight 96.3kg (last clinic weight 89 kg in Sept).",
            M::Weight,
            89.0,
            96.3,
        ),
        (
            "She weighed 71.4 kg today, compared with 69.0 kg at her last visit in June.",
            M::Weight,
            69.0,
            71.4,
        ),
        (
            "Weight: 101.2 kg today, admit wt 108 kg",
            M::Weight,
            108.0,
            101.2,
        ),
        (
            "Weight: 214.6 lb today, admission weight 226 lb",
            M::Weight,
            226.0 * 0.45359237,
            214.6 * 0.45359237,
        ),
        ("Wt 80.4 kg; prev wt 83 kg", M::Weight, 83.0, 80.4),
    ];
    let mut failures = Vec::new();
    for &(text, concept, first, last) in rows {
        let (a, b, n) = trend(&ex(text), concept);
        let close = |x: Option<f64>, y: f64| x.is_some_and(|x| (x - y).abs() < 0.05);
        if n != 2 || !close(a, first) || !close(b, last) {
            failures.push(format!(
                "{text:?}: want {first} -> {last}, got {a:?} -> {b:?} ({n} points)"
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn time_words_before_a_label_date_the_value() {
    // Domain 03 §3.7 ("admission weight", "baseline creatinine"); common practice, no
    // source, for the clipped forms (`admit`, `adm`, `prev`).
    let rows: &[(&str, MeasureConcept, TimeRef)] = &[
        ("admit wt 226 lbs", M::Weight, TimeRef::Admission),
        ("On arrival K 6.3", M::Potassium, TimeRef::Admission),
        ("baseline Cr 130", M::Creatinine, TimeRef::Baseline),
        ("last clinic weight 89 kg", M::Weight, TimeRef::Previous),
        ("yesterday's K 3.2", M::Potassium, TimeRef::Yesterday),
    ];
    let mut failures = Vec::new();
    for &(text, concept, want) in rows {
        let e = ex(text);
        let got: Vec<_> = e
            .measurements
            .iter()
            .filter(|m| m.concept == concept)
            .map(|m| m.time_ref)
            .collect();
        if got != [Some(want)] {
            failures.push(format!("{text:?}: want [{want:?}], got {got:?}"));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn days_ago_count_back_from_the_note_date() {
    // Common practice, no source: "two days ago" in a note dated 10/11/2026 is 08/11/2026;
    // "on Monday" in a note of Tuesday 10/11/2026 is 09/11/2026 (the calendar of 2026,
    // from memory: 1 November 2026 is a Sunday).
    let e = ex("Date: 10/11/2026\nK+ 6.1 mmol/L (5.4 two days ago). Cr 150 on Monday.");
    let date = |c: MeasureConcept, v: f64| {
        e.measurements
            .iter()
            .find(|m| m.concept == c && (m.value - v).abs() < 1e-9)
            .and_then(|m| m.date.clone())
    };
    assert_eq!(date(M::Potassium, 5.4).as_deref(), Some("2026-11-08"));
    assert_eq!(date(M::Creatinine, 150.0).as_deref(), Some("2026-11-09"));
}

#[test]
fn goals_and_targets_are_not_readings() {
    // Domain 11 §11.3 (targets and instructions are not observations); common practice, no
    // source, for the ward shorthand of titration and replacement orders.
    let rows: &[(&str, MeasureConcept)] = &[
        ("NTG gtt, titrating to SBP <140", M::SystolicBp),
        ("Replete K >4, Mg >2", M::Potassium),
        ("Wean noradrenaline to MAP >65", M::SystolicBp),
        ("Aiming for K above 4.0 with oral supplements", M::Potassium),
    ];
    let mut failures = Vec::new();
    for &(text, concept) in rows {
        let got: Vec<_> = ex(text)
            .measurements
            .iter()
            .filter(|m| m.concept == concept)
            .map(|m| m.value)
            .collect();
        if !got.is_empty() {
            failures.push(format!("{text:?}: {concept:?} read as {got:?}"));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    // The verb alone is not a goal: a replacement order beside today's value keeps it.
    let e = ex("KCl replacement started, K 3.4 today");
    assert!(e
        .measurements
        .iter()
        .any(|m| m.concept == M::Potassium && m.value == 3.4));
}

#[test]
fn longer_names_and_record_numbers_are_not_short_labels() {
    // Common practice, no source: a specimen word makes a urine or fluid test (not the
    // serum value the label names alone); `Troponin T` is an analyte, not a temperature
    // (ng/L is a concentration, UCUM); a six-digit-or-longer number after a label is a
    // record number.
    let rows: &[(&str, MeasureConcept)] = &[
        ("Troponin T 34 ng/L", M::Temperature),
        ("hs-TnT 41", M::Temperature),
        ("Urine Na 45 mmol/L on spot sample", M::Sodium),
        ("spot urine K 30", M::Potassium),
        ("UR 8812034", M::Urea),
    ];
    let mut failures = Vec::new();
    for &(text, concept) in rows {
        let got: Vec<_> = ex(text)
            .measurements
            .iter()
            .filter(|m| m.concept == concept)
            .map(|m| m.value)
            .collect();
        if !got.is_empty() {
            failures.push(format!("{text:?}: {concept:?} read as {got:?}"));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    // The plain labels still read (domain 05 §5.1 lists `Na`, `K`, `Ur`, `T`).
    let e = ex("Na 134, K 4.1, Ur 8.2, T 37.4");
    for c in [M::Sodium, M::Potassium, M::Urea, M::Temperature] {
        assert!(e.measurements.iter().any(|m| m.concept == c), "{c:?} lost");
    }
}

#[test]
fn a_partial_date_takes_the_notes_year_not_the_birth_year() {
    // Common practice, no source: a date of birth names no year of the note's events.
    let e = ex("DOB: 03/14/1951\nAdmitted 10/28/2026.\nCr peaked at 1.7 on 10/31.");
    let cr = e
        .measurements
        .iter()
        .find(|m| m.concept == M::Creatinine)
        .expect("creatinine read");
    assert_eq!(cr.date.as_deref(), Some("2026-10-31"));
}

#[test]
fn this_admission_is_the_stay_not_the_moment_of_admission() {
    // Common practice, no source: "echo this admission" dates the echo to the stay; only
    // "admission" alone or "on admission" names the moment of admission.
    let e = ex("Echo this admission: LVEF 35%. During admission Cr 150.");
    assert!(
        e.measurements.iter().all(|m| m.time_ref.is_none()),
        "{:?}",
        e.measurements
    );
    let e = ex("Admission weight 80 kg");
    assert_eq!(e.measurements[0].time_ref, Some(TimeRef::Admission));
}

#[test]
fn a_value_restated_in_another_unit_is_one_reading() {
    // Conversion factors: 1 lb = 0.45359237 kg (international avoirdupois pound, UCUM
    // [lb_av]); creatinine 1 mg/dL = 88.4 µmol/L (domain 05 §5.3). A bracketed or slashed
    // restatement that agrees is the same reading written twice.
    for (text, concept) in [
        ("Wt today 204 lbs (92.5 kg)", M::Weight),
        ("Weight 80 kg / 176 lb", M::Weight),
        ("Cr 1.9 mg/dL (168 umol/L)", M::Creatinine),
    ] {
        let n = ex(text)
            .measurements
            .iter()
            .filter(|m| m.concept == concept)
            .count();
        assert_eq!(n, 1, "{text:?}");
    }
    // Two different values in two units stay two readings.
    let e = ex("Wt 204 lbs (was 90 kg at clinic)");
    assert_eq!(
        e.measurements
            .iter()
            .filter(|m| m.concept == M::Weight)
            .count(),
        2
    );
}

#[test]
fn an_order_word_does_not_reach_into_the_next_sentence() {
    // ConText (Harkema et al. 2009): a cue's scope ends at the sentence boundary. An order
    // to recheck, or a threshold, in one sentence says nothing of the values written in the
    // sentences after it; common practice, no source, for the shorthand itself.
    let rows: &[(&str, &[MeasureConcept])] = &[
        (
            "Wt 89.9 kg (scale?) - recheck. FB -0.2 L. Cr 141, K 5.7.",
            &[M::Weight, M::FluidBalance, M::Creatinine, M::Potassium],
        ),
        (
            "Weight 102 kg, recheck. K 5.9, Na 131.",
            &[M::Weight, M::Potassium, M::Sodium],
        ),
        (
            "Hold furosemide if SBP <90. K 4.1, Cr 160.",
            &[M::Potassium, M::Creatinine],
        ),
        (
            "Recheck U&E in am; Cr 188, K 3.2",
            &[M::Creatinine, M::Potassium],
        ),
        (
            "Aim weight 80kg. HR 96, BP 104/62.",
            &[M::HeartRate, M::SystolicBp],
        ),
    ];
    let mut failures = Vec::new();
    for &(text, want) in rows {
        let e = ex(text);
        for c in want {
            if !e.measurements.iter().any(|m| m.concept == *c) {
                failures.push(format!("{text:?}: {c:?} lost"));
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    // Inside its own sentence the order still makes a threshold (`Recheck K 5.2` is not a
    // reading; `if K > 6.0` is a threshold).
    for text in ["Recheck K 5.2 tomorrow.", "Stop spironolactone if K > 6.0."] {
        let e = ex(text);
        assert!(
            !e.measurements.iter().any(|m| m.concept == M::Potassium),
            "{text:?}: threshold read as a value"
        );
    }
}

#[test]
fn a_time_phrase_opening_a_list_dates_every_value() {
    // Common practice, no source: "On arrival BP 168/94, HR 88, SpO2 89%" gives the
    // arrival values; today's values written later are not dated by it.
    let e = ex("On arrival BP 168/94, HR 88, SpO2 89% on RA, bilateral crackles. Today HR 72.");
    let time = |c: MeasureConcept, v: f64| {
        e.measurements
            .iter()
            .find(|m| m.concept == c && (m.value - v).abs() < 1e-9)
            .map(|m| m.time_ref)
    };
    assert_eq!(time(M::HeartRate, 88.0), Some(Some(TimeRef::Admission)));
    assert_eq!(time(M::Spo2, 89.0), Some(Some(TimeRef::Admission)));
    assert_ne!(time(M::HeartRate, 72.0), Some(Some(TimeRef::Admission)));
    let e = ex("At discharge: HR 70, BP 118/70.");
    assert!(e
        .measurements
        .iter()
        .filter(|m| m.concept == M::HeartRate)
        .all(|m| m.time_ref == Some(TimeRef::Discharge)));
}
