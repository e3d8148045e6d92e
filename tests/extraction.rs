//! Extraction on invented phrasings: one or more cases per value rule of the grammar and per
//! assertion trigger family. Expected values are worked by hand from the phrase; unit
//! conversions cite their source.

use tidemark::config::ExtractOptions;
use tidemark::extract::extract;
use tidemark::model::{
    Assertion, Experiencer, Extraction, FindingConcept, MeasureConcept, StatementKind, Temporality,
    TimeRef,
};

fn ex(text: &str) -> Extraction {
    extract(text, &ExtractOptions::default())
}

/// Normalised values of one concept, in document order.
fn values(text: &str, concept: MeasureConcept) -> Vec<f64> {
    ex(text)
        .measurements
        .iter()
        .filter(|m| m.concept == concept && m.assertion == Assertion::Present)
        .map(|m| {
            let v = m.normalized.map(|q| q.value).unwrap_or(m.value);
            (v * 1000.0).round() / 1000.0
        })
        .collect()
}

fn finding(text: &str, concept: FindingConcept) -> Option<(Assertion, Temporality, Experiencer)> {
    ex(text)
        .findings
        .iter()
        .rev()
        .find(|f| f.concept == concept)
        .map(|f| (f.assertion, f.temporality, f.experiencer))
}

fn assertion(text: &str, concept: FindingConcept) -> Option<Assertion> {
    finding(text, concept).map(|f| f.0)
}

use MeasureConcept as M;

#[test]
fn blood_pressure_forms() {
    assert_eq!(values("BP 98/60", M::SystolicBp), [98.0]);
    assert_eq!(values("B/P: 132/84 mmHg", M::DiastolicBp), [84.0]);
    assert_eq!(values("Obs 98/60 sitting", M::SystolicBp), [98.0]);
    assert_eq!(
        values("lying BP 92/58, standing 74/50", M::SystolicBp),
        [92.0, 74.0]
    );
    assert_eq!(values("102/64 mmHg at rest", M::SystolicBp), [102.0]);
    // A date is not a blood pressure.
    assert!(values("seen 12/06/2026", M::SystolicBp).is_empty());
}

#[test]
fn heart_rate_forms() {
    assert_eq!(values("HR 112", M::HeartRate), [112.0]);
    assert_eq!(values("P 88 reg", M::HeartRate), [88.0]);
    assert_eq!(values("pulse 104 irreg", M::HeartRate), [104.0]);
    assert_eq!(values("AF 130s", M::HeartRate), [130.0]);
    assert_eq!(values("rate 72 bpm", M::HeartRate), [72.0]);
    // An age and sex after "A/P:" and an interval after "recheck HR" are not rates.
    assert!(values("A/P: 67M with HFrEF", M::HeartRate).is_empty());
    assert!(values("recheck HR 2h", M::HeartRate).is_empty());
}

#[test]
fn respiratory_rate_and_saturation() {
    assert_eq!(values("RR 22", M::RespiratoryRate), [22.0]);
    assert_eq!(values("SpO2 93% RA", M::Spo2), [93.0]);
    assert_eq!(values("sats 91% on 2L", M::Spo2), [91.0]);
    assert_eq!(values("O2 sat 95% 4L NC", M::Spo2), [95.0]);
    assert_eq!(
        values("sats 88% on air -> 94% on 6 L", M::Spo2),
        [88.0, 94.0]
    );
}

#[test]
fn temperature_units() {
    assert_eq!(values("T 37.2", M::Temperature), [37.2]);
    assert_eq!(values("Temp 37.0C", M::Temperature), [37.0]);
    // °F → °C by definition: (99.1 − 32) × 5/9 = 37.278.
    assert_eq!(values("Temp 99.1F", M::Temperature), [37.278]);
    assert_eq!(values("afebrile, 36.4 °C", M::Temperature), [36.4]);
}

#[test]
fn weights_and_asides() {
    assert_eq!(values("wt 82.4kg", M::Weight), [82.4]);
    // 181 lb × 0.45359237 (NIST SP 811) = 82.100 kg.
    assert_eq!(values("Weight: 181 lb", M::Weight), [82.1]);
    assert_eq!(values("82.4 kg (yesterday 83.1)", M::Weight), [82.4, 83.1]);
    assert_eq!(values("Wt 70.6 kg (up 0.4)", M::Weight), [70.6]);
    // 11 st 9 lb = 163 lb = 73.936 kg (stone = 14 lb).
    assert_eq!(values("Home weight 11 st 9 lb today", M::Weight), [73.936]);
    assert_eq!(
        values("Weights: 01/06 89.0, 02/06 87.4 kg", M::Weight),
        [89.0, 87.4]
    );
    // A change and a target are not weights.
    assert!(values("lost 2.1 kg since Monday", M::Weight).is_empty());
    let e = ex("Target weight 72 kg");
    assert!(e.measurements.is_empty());
    assert!(e
        .statements
        .iter()
        .any(|s| s.kind == StatementKind::TargetWeight && s.value == "72"));
}

/// Each value of a pair of weights with its own time word gets that time, not its
/// neighbour's (common practice, no source: time words sit next to the value they date).
#[test]
fn time_words_date_the_value_they_sit_beside() {
    use tidemark::model::TimeRef as T;
    let times = |text: &str| -> Vec<(f64, Option<T>, Temporality)> {
        ex(text)
            .measurements
            .iter()
            .filter(|m| m.concept == M::Weight)
            .map(|m| (m.value, m.time_ref, m.temporality))
            .collect()
    };
    let (now, hist) = (Temporality::Current, Temporality::Historical);
    assert_eq!(
        times("Weight (standing scale): 88.3 kg  Prev: 89.1 kg"),
        [(88.3, None, now), (89.1, Some(T::Previous), now)]
    );
    assert_eq!(
        times("Weight 88.3 kg, prev 89.1 kg"),
        [(88.3, None, now), (89.1, Some(T::Previous), now)]
    );
    assert_eq!(
        times("weight 71.4 kg (71.9 kg at last visit)"),
        [(71.4, None, now), (71.9, Some(T::Previous), now)]
    );
    assert_eq!(
        times("Weight 80 kg, 84 kg on admission"),
        [(80.0, None, now), (84.0, Some(T::Admission), hist)]
    );
    assert_eq!(
        times("Weight 80 kg, was 84 kg on admission"),
        [(80.0, None, now), (84.0, Some(T::Admission), hist)]
    );
    assert_eq!(
        times("Wt 81.2 kg today, 82.0 kg yesterday"),
        [(81.2, Some(T::Today), now), (82.0, Some(T::Yesterday), now)]
    );
}

/// A second value after a comma with its own time word is the same test at another time,
/// with or without a unit; a number of another size is not (common practice, no source).
#[test]
fn comma_values_with_time_words() {
    assert_eq!(
        values("creatinine peaked at 156, 121 on discharge", M::Creatinine),
        [156.0, 121.0]
    );
    assert_eq!(
        values("Creatinine 132 yesterday, 149 today", M::Creatinine),
        [132.0, 149.0]
    );
    assert_eq!(values("K 4.2, 138 today", M::Potassium), [4.2]);
}

#[test]
fn weight_tables_and_row_blocks() {
    let table = "Date        Weight (kg)  Urine (mL)  Net (mL)\n\
                 01/06/2026  89.0         1800        -1200\n\
                 02/06/2026  87.6         2100        -1500\n";
    assert_eq!(values(table, M::Weight), [89.0, 87.6]);
    assert_eq!(values(table, M::FluidBalance), [-1200.0, -1500.0]);
    let e = ex(table);
    let dated: Vec<_> = e
        .measurements
        .iter()
        .filter(|m| m.concept == M::Weight)
        .map(|m| m.date.clone().unwrap_or_default())
        .collect();
    assert_eq!(dated, ["2026-06-01", "2026-06-02"]);
    let block = "Daily weights (kg):\n  10/04  72.9\n  12/04  73.1\n";
    assert_eq!(values(block, M::Weight), [72.9, 73.1]);
}

#[test]
fn height_forms() {
    assert_eq!(values("Ht 162 cm", M::Height), [162.0]);
    // 5 ft 8 in = 68 in × 2.54 = 172.72 cm (exact inch, 1959 agreement).
    assert_eq!(values("Height 5 ft 8 in", M::Height), [172.72]);
    assert_eq!(values("Ht 5'4\"", M::Height), [162.56]);
}

#[test]
fn jvp_numbers_levels_and_words() {
    assert_eq!(values("JVP +4cm", M::Jvp), [4.0]);
    assert_eq!(values("JVP 8 cm H2O", M::Jvp), [8.0]);
    assert_eq!(
        assertion("JVP +4cm", FindingConcept::RaisedJvp),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion("JVP 2 cm", FindingConcept::RaisedJvp),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion("JVP raised to earlobes", FindingConcept::RaisedJvp),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion("Her JVP was not raised.", FindingConcept::RaisedJvp),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion("JVP: not raised", FindingConcept::RaisedJvp),
        Some(Assertion::Absent)
    );
    // Not seen is neither raised nor normal.
    assert_eq!(assertion("JVP not seen", FindingConcept::RaisedJvp), None);
    assert_eq!(
        assertion("Neck: no JVD", FindingConcept::RaisedJvp),
        Some(Assertion::Absent)
    );
}

#[test]
fn fluid_balance_and_urine_output() {
    assert_eq!(values("I/O 1.2L/2.6L", M::FluidBalance), [-1400.0]);
    assert_eq!(values("net -1.4 L", M::FluidBalance), [-1400.0]);
    assert_eq!(values("balance +850 ml", M::FluidBalance), [850.0]);
    assert_eq!(values("FB negative 1.2 L", M::FluidBalance), [-1200.0]);
    assert_eq!(
        values("Fluid balance since midnight −950 ml", M::FluidBalance),
        [-950.0]
    );
    assert_eq!(values("UO 30 ml/hr", M::UrineOutput), [30.0]);
    assert_eq!(values("UO remains ~300 ml/24 h", M::UrineOutput), [300.0]);
}

#[test]
fn ejection_fraction_forms() {
    assert_eq!(values("EF 25%", M::Lvef), [25.0]);
    // A range gives its midpoint.
    assert_eq!(values("LVEF 35-40%", M::Lvef), [37.5]);
    assert_eq!(values("EF estimated at 30 to 35 percent", M::Lvef), [32.5]);
    assert_eq!(
        values("an LVEF of 45% (38% in 2024)", M::Lvef),
        [45.0, 38.0]
    );
    // A year in brackets is not an EF.
    assert_eq!(values("LVEF 57% (echo 2025)", M::Lvef), [57.0]);
}

#[test]
fn labs_with_and_without_units() {
    assert_eq!(values("BNP 1,840 pg/mL", M::Bnp), [1840.0]);
    assert_eq!(values("NT-proBNP 6420 ng/L", M::NtProbnp), [6420.0]);
    assert_eq!(values("Cr 141 (adm 126)", M::Creatinine), [141.0, 126.0]);
    // Creatinine 1.7 mg/dL × 88.4 (molar mass 113.12 g/mol) = 150.28 µmol/L.
    assert_eq!(
        values("Cr 1.7 (baseline 1.3)", M::Creatinine),
        [150.28, 114.92]
    );
    // BUN 38 mg/dL × 0.357 = 13.566 mmol/L urea.
    assert_eq!(values("BUN 38", M::Urea), [13.566]);
    assert_eq!(values("Na 133, K 3.9", M::Potassium), [3.9]);
    assert_eq!(values("K+ 5.4 mmol/L", M::Potassium), [5.4]);
    assert_eq!(
        values("lactate 3.6 (down from 4.9)", M::Lactate),
        [3.6, 4.9]
    );
    // Hb 12.9 g/dL × 10 = 129 g/L.
    assert_eq!(values("Hgb 12.9", M::Hemoglobin), [129.0]);
    assert_eq!(values("Hb 124", M::Hemoglobin), [124.0]);
    assert_eq!(
        values(
            "Creatinine rose from 84 umol/L to a peak of 109 umol/L",
            M::Creatinine
        ),
        [84.0, 109.0]
    );
    assert_eq!(values("creatinine\n118 umol/L", M::Creatinine), [118.0]);
    // Thresholds and orders are not values.
    assert!(values("if K > 5.5 hold spironolactone", M::Potassium).is_empty());
    assert!(values("repeat lactate 22:00", M::Lactate).is_empty());
}

/// An arrow chain with no unit anywhere gives every value, each in the unit its size and
/// label imply, and the trend runs through all of them in order. 03 §3.1 (an arrow means
/// "to" or "then") and 01 §1.2 ("Cr 132 -> 149 umol/L"); the unit a creatinine of 1-2 is
/// written in (mg/dL) is common practice, no source; 1.2, 1.6 and 1.9 mg/dL x 88.4 (05
/// §5.3, CONVSI) are 106.08, 141.44 and 167.96 umol/L.
#[test]
fn unitless_chains_give_every_value() {
    let rows: &[(&str, MeasureConcept, &str, &[f64])] = &[
        (
            "Creatinine 1.2 -> 1.6 -> 1.9",
            M::Creatinine,
            "mg/dL",
            &[106.08, 141.44, 167.96],
        ),
        (
            "Cr 1.2 → 1.6 → 1.9 → 2.1",
            M::Creatinine,
            "mg/dL",
            &[106.08, 141.44, 167.96, 185.64],
        ),
        (
            "Cr 132 -> 149 -> 161",
            M::Creatinine,
            "umol/L",
            &[132.0, 149.0, 161.0],
        ),
        ("Na 131 -> 134", M::Sodium, "mmol/L", &[131.0, 134.0]),
        ("K 5.3->4.9->4.4", M::Potassium, "mmol/L", &[5.3, 4.9, 4.4]),
        (
            "Creatinine 1.2 -> 1.6 -> 1.9, K 4.1",
            M::Creatinine,
            "mg/dL",
            &[106.08, 141.44, 167.96],
        ),
    ];
    let mut failures = Vec::new();
    for &(text, concept, unit, want) in rows {
        let e = ex(text);
        let units: Vec<_> = e
            .measurements
            .iter()
            .filter(|m| m.concept == concept)
            .map(|m| (m.unit, m.unit_inferred))
            .collect();
        let got = values(text, concept);
        let trend = tidemark::picture::build(&e).trends;
        let points = match concept {
            M::Creatinine => trend.creatinine.points.len(),
            M::Potassium => trend.potassium.points.len(),
            _ => want.len(),
        };
        if got != want
            || units
                .iter()
                .any(|&(u, inferred)| u != Some(unit) || !inferred)
            || points != want.len()
        {
            failures.push(format!(
                "{text:?}: got {got:?} {units:?}, {points} trend points"
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn inferred_units_are_flagged() {
    let e = ex("Wt 71.2. Cr 188.");
    let w = e
        .measurements
        .iter()
        .find(|m| m.concept == M::Weight)
        .unwrap();
    assert!(w.unit_inferred);
    let e = ex("Wt 71.2 kg");
    assert!(!e.measurements[0].unit_inferred);
}

#[test]
fn findings_and_their_detail() {
    let e = ex("3-pillow orthopnoea. Pitting oedema ++ to knees. Bibasal creps.");
    let o = e
        .findings
        .iter()
        .find(|f| f.concept == FindingConcept::Orthopnea)
        .unwrap();
    assert_eq!(o.detail.pillows, Some(3));
    let ed = e
        .findings
        .iter()
        .find(|f| f.concept == FindingConcept::PeripheralEdema)
        .unwrap();
    assert_eq!(ed.detail.grade, Some(2.0));
    assert_eq!(ed.detail.level.as_deref(), Some("knees"));
    let c = e
        .findings
        .iter()
        .find(|f| f.concept == FindingConcept::Crackles)
        .unwrap();
    assert_eq!(c.detail.level.as_deref(), Some("bases"));
    assert_eq!(
        assertion("rales to mid-zones", FindingConcept::Crackles),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion("chest clear", FindingConcept::Crackles),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion("PND most nights", FindingConcept::Pnd),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion("tense ascites", FindingConcept::Ascites),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion("S3 gallop", FindingConcept::S3),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion("HS I+II, no added sounds", FindingConcept::S3),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion("cool peripheries", FindingConcept::CoolPeripheries),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion("warm and well perfused", FindingConcept::CoolPeripheries),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion("CRT 4s", FindingConcept::ProlongedCapRefill),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion("CRT <2 s", FindingConcept::ProlongedCapRefill),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion("confused overnight", FindingConcept::AlteredMentation),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion("GCS 13", FindingConcept::AlteredMentation),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion("A&O x3", FindingConcept::AlteredMentation),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion("now oliguric", FindingConcept::Oliguria),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion("symptomatic hypotension", FindingConcept::Hypotension),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion(
            "bilateral pleural effusions",
            FindingConcept::PleuralEffusion
        ),
        Some(Assertion::Present)
    );
    assert_eq!(
        assertion("positive HJR", FindingConcept::HepatojugularReflux),
        Some(Assertion::Present)
    );
    // Pulmonary oedema is not peripheral oedema; a pericardial effusion is not pleural.
    assert_eq!(
        assertion("pulmonary oedema on CXR", FindingConcept::PeripheralEdema),
        None
    );
    assert_eq!(
        assertion(
            "small pericardial effusion",
            FindingConcept::PleuralEffusion
        ),
        None
    );
    assert_eq!(
        assertion("cannot lie flat", FindingConcept::Orthopnea),
        Some(Assertion::Present)
    );
}

#[test]
fn negation_family() {
    // NegEx (Chapman et al. 2001): forward cues cover a list, backward cues a near target.
    let t = "No orthopnoea, PND or ankle swelling.";
    assert_eq!(
        assertion(t, FindingConcept::Orthopnea),
        Some(Assertion::Absent)
    );
    // A negation nearer the finding than a possibility cue decides (ConText: the nearest
    // trigger's scope; 04-assertions.md), and a "?" does not query past a comma.
    assert_eq!(
        assertion("Possible pneumonia, no crackles.", FindingConcept::Crackles),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion("?LRTI, chest clear", FindingConcept::Crackles),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion("No ?crackles at the bases.", FindingConcept::Crackles),
        Some(Assertion::Possible)
    );
    // "unlikely" negates what it follows ("crackles unlikely") and, as "unlikely to be/have",
    // what comes after it (domain reference 04-assertions.md: "... unlikely", negation).
    assert_eq!(
        assertion("Unlikely to have crackles.", FindingConcept::Crackles),
        Some(Assertion::Absent)
    );
    let e = ex("Unlikely to be fluid overloaded.");
    assert!(
        e.statements
            .iter()
            .any(|s| s.kind == StatementKind::VolumeStatus && s.assertion == Assertion::Absent),
        "{:?}",
        e.statements
    );
    assert_eq!(assertion(t, FindingConcept::Pnd), Some(Assertion::Absent));
    assert_eq!(
        assertion(t, FindingConcept::PeripheralEdema),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion("denies PND", FindingConcept::Pnd),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion("orthopnoea resolved", FindingConcept::Orthopnea),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion("Oedema: nil", FindingConcept::PeripheralEdema),
        Some(Assertion::Absent)
    );
    // A termination term ends the scope.
    assert_eq!(
        assertion("No PND but bibasal crackles", FindingConcept::Crackles),
        Some(Assertion::Present)
    );
}

#[test]
fn possibility_family() {
    // A "?" queries the item it stands before, not the next one after a dash or a comma
    // (common practice, no source).
    let e = ex("4. ?home Friday - target weight 80kg");
    assert!(
        e.statements
            .iter()
            .any(|s| s.kind == StatementKind::TargetWeight && s.assertion == Assertion::Present),
        "{:?}",
        e.statements
    );
    assert_eq!(
        assertion("?S3", FindingConcept::S3),
        Some(Assertion::Possible)
    );
    assert_eq!(
        assertion("?soft S3 at the apex", FindingConcept::S3),
        Some(Assertion::Possible)
    );
    assert_eq!(
        assertion(
            "possible small right effusion",
            FindingConcept::PleuralEffusion
        ),
        Some(Assertion::Possible)
    );
}

#[test]
fn hypothetical_family() {
    assert_eq!(
        assertion(
            "If she develops orthopnoea, call the HF nurse.",
            FindingConcept::Orthopnea
        ),
        Some(Assertion::Hypothetical)
    );
    assert_eq!(
        assertion(
            "Go to the ED for severe shortness of breath.",
            FindingConcept::Dyspnea
        ),
        Some(Assertion::Hypothetical)
    );
}

#[test]
fn historical_and_experiencer_families() {
    let (_, t, _) = finding(
        "PMH: pleural effusion 2019",
        FindingConcept::PleuralEffusion,
    )
    .unwrap();
    assert_eq!(t, Temporality::Historical);
    // The heading of the present illness holds "history of" but names the current story:
    // a pseudo-trigger (ConText's pseudo-historical terms, domain reference 04-assertions.md;
    // the heading wordings are common practice, no source).
    for text in [
        "History of presenting complaint: 3 days of orthopnoea.",
        "History of present illness: worsening orthopnea for a week.",
    ] {
        let (_, t, _) = finding(text, FindingConcept::Orthopnea).unwrap();
        assert_eq!(t, Temporality::Current, "{text}");
    }
    // A family-history heading with its content on its line covers that line only: the
    // examination on the next lines is the patient's (common practice, no source).
    let text = "Ward round\nFH: father - HFrEF, died age 60\nBP 120/80. Oedema to knees.\n";
    let (_, t, x) = finding(text, FindingConcept::PeripheralEdema).unwrap();
    assert_eq!((t, x), (Temporality::Current, Experiencer::Patient));
    let e = ex(text);
    assert!(
        e.measurements
            .iter()
            .all(|m| m.experiencer == Experiencer::Patient),
        "{:?}",
        e.measurements
    );
    // The father's age is not the patient's.
    assert!(!e.statements.iter().any(|s| s.kind == StatementKind::Age));
    // A heading alone on its line keeps its section to the next heading.
    let (_, t, _) = finding(
        "PMH:\nPleural effusion 2019\nAF",
        FindingConcept::PleuralEffusion,
    )
    .unwrap();
    assert_eq!(t, Temporality::Historical);
    let (_, _, x) = finding("Mother had ankle oedema.", FindingConcept::PeripheralEdema).unwrap();
    assert_eq!(x, Experiencer::Other);
    let (_, _, x) = finding(
        "Wife reports he is confused.",
        FindingConcept::AlteredMentation,
    )
    .unwrap();
    assert_eq!(x, Experiencer::Patient);
}

#[test]
fn statements_of_type_acuity_volume_and_nyha() {
    let e = ex("Acute on chronic HFrEF. NYHA class III. Remains fluid overloaded.");
    let kinds: Vec<_> = e
        .statements
        .iter()
        .map(|s| (s.kind, s.value.as_str()))
        .collect();
    assert!(
        kinds.contains(&(StatementKind::HfType, "hfref")),
        "{kinds:?}"
    );
    assert!(
        kinds.contains(&(StatementKind::Acuity, "acute_on_chronic")),
        "{kinds:?}"
    );
    assert!(kinds.contains(&(StatementKind::Nyha, "III")), "{kinds:?}");
    assert!(
        kinds.contains(&(StatementKind::VolumeStatus, "overloaded")),
        "{kinds:?}"
    );
    // "chronic" that does not qualify heart failure is not an acuity.
    let e = ex("Chronic AF, heart failure.");
    assert!(!e.statements.iter().any(|s| s.kind == StatementKind::Acuity));
    let e = ex("NYHA 2-3");
    assert!(e
        .statements
        .iter()
        .any(|s| s.kind == StatementKind::Nyha && s.value == "III"));
}

#[test]
fn age_and_sex() {
    for (text, age, sex) in [
        ("78M, Bed 4", "78", "male"),
        ("82-year-old woman with HFpEF", "82", "female"),
        ("Patient: K.L., F, 67", "67", "female"),
        ("Mrs K.L., 64 years", "64", "female"),
        // A title and name, then the age after a comma (common practice, no source).
        ("Ward round. Mr A.B., 74. Known HFrEF.", "74", "male"),
        ("Ms Example, 58, reviewed on the ward", "58", "female"),
    ] {
        let e = ex(text);
        let get = |k| {
            e.statements
                .iter()
                .find(|s| s.kind == k)
                .map(|s| s.value.clone())
        };
        assert_eq!(get(StatementKind::Age).as_deref(), Some(age), "{text}");
        assert_eq!(get(StatementKind::Sex).as_deref(), Some(sex), "{text}");
    }
}

#[test]
fn a_number_after_a_name_that_is_not_an_age_is_not_read_as_one() {
    // `Mr A.B., 74 kg`: a weight; `Mrs C.D., 2F`: no age either.
    for text in [
        "Mr A.B., 74 kg on the ward scales",
        "Mrs C.D., 12345 hospital no.",
    ] {
        let e = ex(text);
        assert!(
            !e.statements.iter().any(|s| s.kind == StatementKind::Age),
            "{text}"
        );
    }
}

#[test]
fn dated_entries_carry_their_dates() {
    let e = ex("02/06/2026 Ward round\nWt 80.1 kg\n03/06/2026 Review\nWt 79.4 kg\n");
    assert_eq!(e.episodes.len(), 2);
    let dates: Vec<_> = e
        .measurements
        .iter()
        .map(|m| m.date.clone().unwrap())
        .collect();
    assert_eq!(dates, ["2026-06-02", "2026-06-03"]);
    assert_eq!(e.note_date.as_deref(), Some("2026-06-03"));
}

#[test]
fn us_dates_read_month_first_when_the_note_says_so() {
    // 06/24/2026 can only be month first; the note's other dates follow it.
    let e = ex("Seen 06/24/2026.\n07/01/2026 Review\nwt 180 lb\n07/02/2026 Review\nwt 178 lb\n");
    assert_eq!(e.episodes[0].date.as_deref(), Some("2026-07-01"));
}

#[test]
fn shorthand_forms_from_real_practice() {
    // Forms listed in the domain reference's note-language table (invented examples).
    assert_eq!(values("BP98/60 HR112 SpO293%RA wt84.2kg", M::Spo2), [93.0]);
    assert_eq!(values("Cr ↑ 132→149", M::Creatinine), [132.0, 149.0]);
    // Decimal commas: 1,4 mg/dL × 88.4 = 123.76 µmol/L.
    assert_eq!(values("Cr 1,4 mg/dl", M::Creatinine), [123.76]);
    assert_eq!(values("37,8 °C", M::Temperature), [37.8]);
    assert_eq!(values("BNP 1,250 pg/mL", M::Bnp), [1250.0]);
    assert_eq!(values("AF with RVR 140s", M::HeartRate), [140.0]);
    assert_eq!(values("SaO2 (ABG) 91%", M::Spo2), [91.0]);
    assert_eq!(values("EF 0.35", M::Lvef), [35.0]);
    // An empty template slot documents nothing.
    assert_eq!(
        assertion("Oedema: [ ]", FindingConcept::PeripheralEdema),
        None
    );
    assert_eq!(
        assertion("Chest: NAD", FindingConcept::Crackles),
        Some(Assertion::Absent)
    );
    assert_eq!(
        assertion(
            "?small bilateral effusions",
            FindingConcept::PleuralEffusion
        ),
        Some(Assertion::Possible)
    );
}

// Shorthand readings of the ward notes, common practice, no source: a time word between the
// label and the value places it; clock hours after the label are the period, not the value;
// the intake and output in brackets behind a balance are not balances; a bracketed number
// of the same size after a lab value is the earlier value; admission bloods are admission
// values of this stay.
#[test]
fn balance_shorthand_reads_the_balance_and_its_day() {
    let e = ex("FB yesterday -1.3 L. UO ~90 ml/h.");
    let fb: Vec<_> = e
        .measurements
        .iter()
        .filter(|m| m.concept == M::FluidBalance)
        .collect();
    assert_eq!(fb.len(), 1);
    assert_eq!(fb[0].time_ref, Some(tidemark::model::TimeRef::Yesterday));
    assert_eq!(
        values(
            "Fluid balance 08:00-16:00: +650 ml (oral 1.1 L, urine 450 ml).",
            M::FluidBalance
        ),
        [650.0]
    );
}

#[test]
fn bracketed_and_admission_values_are_earlier_values() {
    use tidemark::model::TimeRef;
    let e = ex("Cr 152↑ (148) K 5.1");
    let cr: Vec<_> = e
        .measurements
        .iter()
        .filter(|m| m.concept == M::Creatinine)
        .map(|m| (m.value, m.time_ref))
        .collect();
    assert_eq!(cr, [(152.0, None), (148.0, Some(TimeRef::Previous))]);
    // Another size is the same value in another unit, not an earlier one.
    let e = ex("Wt 80 kg (176 lb)");
    assert!(e
        .measurements
        .iter()
        .all(|m| m.time_ref != Some(TimeRef::Previous)));
    let e = ex("Bloods on admission: creatinine 118 umol/L.\nBloods today: creatinine 134 umol/L.");
    let adm = e
        .measurements
        .iter()
        .find(|m| m.concept == M::Creatinine && m.value == 118.0)
        .expect("admission creatinine");
    assert_eq!(adm.time_ref, Some(TimeRef::Admission));
}

// Common practice, no source: `today` in a dated weight series is not the day before it, and
// a bare `target` is a target weight only with a weight unit.
#[test]
fn series_time_words_and_bare_targets() {
    use tidemark::model::{StatementKind, TimeRef};
    let e = ex("Weights: 13/03 70.1 kg, 15/03 68.4 kg, today 67.6 kg. Target ~69 kg.");
    let today = e
        .measurements
        .iter()
        .find(|m| m.concept == M::Weight && m.value == 67.6)
        .expect("today's weight");
    assert_eq!(today.time_ref, Some(TimeRef::Today));
    assert_ne!(today.date.as_deref(), Some("2026-03-15"));
    let target = e
        .statements
        .iter()
        .find(|s| s.kind == StatementKind::TargetWeight)
        .expect("target weight");
    assert_eq!(target.value, "69");
    let e = ex("Target K > 4.0, Mg > 1.0.");
    assert!(!e
        .statements
        .iter()
        .any(|s| s.kind == StatementKind::TargetWeight));
}

/// A weight series gives every value once, in order, whether or not each value has a date
/// before it: a decimal weight (`82.1`) is not a day and month when no reading follows it.
/// 03 §3.7 lists "Daily weights: 01/06 89.0, 02/06 87.4, 03/06 86.1"; the undated forms
/// with one unit at the end are common practice, no source.
#[test]
fn weight_series_with_and_without_dates() {
    let rows: &[(&str, &[f64])] = &[
        ("Wt 82.1 kg, 84.2 kg", &[82.1, 84.2]),
        ("Weights 82.1, 81.6, 80.9 kg", &[82.1, 81.6, 80.9]),
        ("Weights 82.1; 81.6; 80.9 kg", &[82.1, 81.6, 80.9]),
        ("Wt 86.1, 85.4 kg", &[86.1, 85.4]),
        ("Weights 89.0 -> 87.4 -> 86.1 kg", &[89.0, 87.4, 86.1]),
        (
            "Daily weights: 01/06 89.0, 02/06 87.4, 03/06 86.1",
            &[89.0, 87.4, 86.1],
        ),
        ("Weights: 01.06 89.0, 02.06 87.4 kg", &[89.0, 87.4]),
        // A pressure after the weight is not a second weight.
        ("Wt 82.1, 120/80", &[82.1]),
    ];
    let mut failures = Vec::new();
    for &(text, want) in rows {
        let got = values(text, M::Weight);
        if got != want {
            failures.push(format!("{text:?}: got {got:?}, want {want:?}"));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// A unit written once, at the end of a chain or series or on its first value, is the unit
/// of every value in it: none is marked inferred and `unit-missing` stays quiet. 01 §1.2
/// writes "Cr 132 -> 149 umol/L" and 03 §3.1 reads the arrow as "to" or "then"; a unit on
/// the first value only, and the unit of a weight series written at its end, are common
/// practice, no source. A unit never crosses to another test's value, and a chain with no
/// unit anywhere still has every value flagged.
#[test]
fn a_unit_written_once_covers_its_chain() {
    /// A note, the concept, and each value with the UCUM unit it must carry as written.
    type Row = (&'static str, MeasureConcept, &'static [(f64, &'static str)]);
    let rows: &[Row] = &[
        (
            "Cr 1.2 -> 1.6 -> 1.9 mg/dL",
            M::Creatinine,
            &[(1.2, "mg/dL"), (1.6, "mg/dL"), (1.9, "mg/dL")],
        ),
        (
            "Cr 132 -> 149 umol/L",
            M::Creatinine,
            &[(132.0, "umol/L"), (149.0, "umol/L")],
        ),
        (
            "Cr 132 umol/L -> 149",
            M::Creatinine,
            &[(132.0, "umol/L"), (149.0, "umol/L")],
        ),
        (
            "creatinine 118 to 131 umol/L",
            M::Creatinine,
            &[(118.0, "umol/L"), (131.0, "umol/L")],
        ),
        (
            "K 5.3 → 4.9 → 4.4 mmol/L",
            M::Potassium,
            &[(5.3, "mmol/L"), (4.9, "mmol/L"), (4.4, "mmol/L")],
        ),
        (
            "NT-proBNP 12000 -> 3400 ng/L",
            M::NtProbnp,
            &[(12000.0, "ng/L"), (3400.0, "ng/L")],
        ),
        (
            "Weights 89.0 -> 87.4 -> 86.1 kg",
            M::Weight,
            &[(89.0, "kg"), (87.4, "kg"), (86.1, "kg")],
        ),
        (
            "Weights 82.1, 81.6, 80.9 kg",
            M::Weight,
            &[(82.1, "kg"), (81.6, "kg"), (80.9, "kg")],
        ),
        // The nearest unit after a value is its own: a scale swapped mid-series (03 §3.7).
        (
            "Weights 198, 196 lb, 89.6, 88.9 kg",
            M::Weight,
            &[
                (198.0, "[lb_av]"),
                (196.0, "[lb_av]"),
                (89.6, "kg"),
                (88.9, "kg"),
            ],
        ),
    ];
    let mut failures = Vec::new();
    for &(text, concept, want) in rows {
        let a = tidemark::analyze(text, &Default::default());
        let got: Vec<(f64, &str, bool)> = a
            .extraction
            .measurements
            .iter()
            .filter(|m| m.concept == concept)
            .map(|m| (m.value, m.unit.unwrap_or("-"), m.unit_inferred))
            .collect();
        let want: Vec<(f64, &str, bool)> = want.iter().map(|&(v, u)| (v, u, false)).collect();
        let missing = a
            .diagnostics
            .iter()
            .filter(|d| d.rule == "unit-missing")
            .count();
        if got != want || missing != 0 {
            failures.push(format!("{text:?}: got {got:?}, {missing} unit-missing"));
        }
    }
    // Not across to another test: the creatinine chain has no unit of its own.
    let a = tidemark::analyze("Cr 1.2 -> 1.6, K 4.1 mmol/L", &Default::default());
    let inferred: Vec<(MeasureConcept, bool)> = a
        .extraction
        .measurements
        .iter()
        .map(|m| (m.concept, m.unit_inferred))
        .collect();
    if inferred
        != [
            (M::Creatinine, true),
            (M::Creatinine, true),
            (M::Potassium, false),
        ]
    {
        failures.push(format!("creatinine then potassium: {inferred:?}"));
    }
    // No unit anywhere: every value is still flagged.
    let a = tidemark::analyze("Cr 132 -> 149 -> 161", &Default::default());
    let missing = a
        .diagnostics
        .iter()
        .filter(|d| d.rule == "unit-missing")
        .count();
    if missing != 3 {
        failures.push(format!("unitless chain: {missing} unit-missing, want 3"));
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn day_labels_before_weights_are_not_weights() {
    // A day label (`D5`, `Day 4`, `POD2`) names the day of the number after it; day 1 is
    // the admission day (common practice, no source).
    let e = ex("Wt: 118.3 kg   (D5 119.6, D4 121.0, D1 125.5)\n");
    let ws: Vec<(f64, Option<TimeRef>)> = e
        .measurements
        .iter()
        .filter(|m| m.concept == MeasureConcept::Weight)
        .map(|m| (m.value, m.time_ref))
        .collect();
    assert_eq!(ws.len(), 4, "{ws:?}");
    assert!(ws.iter().all(|(v, _)| *v > 100.0), "{ws:?}");
    assert!(ws.contains(&(125.5, Some(TimeRef::Admission))), "{ws:?}");
    assert!(ws.contains(&(121.0, Some(TimeRef::Previous))), "{ws:?}");
    // The same in a series with the unit written once.
    let mut v = values(
        "Weights: Day 1 82.0, Day 3 80.4, POD4 79.9 kg\n",
        MeasureConcept::Weight,
    );
    v.sort_by(f64::total_cmp);
    assert_eq!(v, vec![79.9, 80.4, 82.0]);
}

#[test]
fn pound_sign_after_every_weight_of_a_list() {
    // `#` after a number is the pound (common practice, no source); 1 lb = 0.45359237 kg
    // (NIST SP 811): 181 lb = 82.100 kg, 182 lb = 82.554 kg.
    let v = values(
        "Home visit 11/16/2026\nWeight: 187# today. Wt log: 11/12 181#, 11/13 182#, 11/14 184#.\n",
        MeasureConcept::Weight,
    );
    assert!(v.contains(&82.1), "{v:?}");
    assert!(v.contains(&82.554), "{v:?}");
    assert!(v.iter().all(|w| *w < 90.0), "{v:?}");
}
