//! The phrasing variety of the field: one invented sentence per row, with the concept,
//! value, unit and assertion a reader of the note would take from it. Each row names the
//! section of the domain reference (`/work/shared/domain/`, files 02-11) that lists the
//! phrasing, or says "common practice, no source" for forms seen on wards but not listed
//! there. Every sentence is invented; every row checks a value the extraction can get wrong.

use tidemark::config::ExtractOptions;
use tidemark::extract::extract;
use tidemark::model::{
    Assertion, Experiencer, Extraction, FindingConcept, MeasureConcept, StatementKind, Temporality,
};

use Assertion::{Absent, Possible, Present};
use Experiencer::{Other, Patient};
use FindingConcept as F;
use MeasureConcept as M;
use Temporality::{Current, Historical};

fn ex(text: &str) -> Extraction {
    extract(text, &ExtractOptions::default())
}

/// A measurement row: the value as written, its UCUM unit, and whether the unit was
/// written (false) or inferred (true).
struct Meas {
    text: &'static str,
    concept: MeasureConcept,
    value: f64,
    unit: &'static str,
    inferred: bool,
    temporality: Temporality,
}

const fn m(
    text: &'static str,
    concept: MeasureConcept,
    value: f64,
    unit: &'static str,
    inferred: bool,
) -> Meas {
    Meas {
        text,
        concept,
        value,
        unit,
        inferred,
        temporality: Current,
    }
}

const MEASUREMENTS: &[Meas] = &[
    // 03 §3.1: no space between label and value.
    m("BP98/60, HR112", M::SystolicBp, 98.0, "mm[Hg]", true),
    m("wt84.2kg this morning", M::Weight, 84.2, "kg", false),
    // 03 §3.1: decimal comma.
    m("temp 37,8 °C", M::Temperature, 37.8, "Cel", false),
    // 03 §3.1: ranges with an en dash give the midpoint (README output contract).
    m("EF 35–40% on TTE", M::Lvef, 37.5, "%", false),
    // 03 §3.6: blood pressure as dictated ("142 over 88"); common practice, no source.
    m(
        "Blood pressure was 142 over 88.",
        M::SystolicBp,
        142.0,
        "mm[Hg]",
        true,
    ),
    m(
        "Blood pressure was 142 over 88.",
        M::DiastolicBp,
        88.0,
        "mm[Hg]",
        true,
    ),
    m("BP 120 over 80 mmHg", M::DiastolicBp, 80.0, "mm[Hg]", false),
    // 03 §3.6: a label followed straight by the next label (`T 38.2 HR 110`) on an obs line.
    m(
        "Obs: T 38.2 HR 110 BP 90/60",
        M::Temperature,
        38.2,
        "Cel",
        true,
    ),
    m(
        "VS: Tmax 38.2 HR 110 BP 90/60 RR 28",
        M::Temperature,
        38.2,
        "Cel",
        true,
    ),
    m(
        "VS: Tmax 38.2 HR 110 BP 90/60",
        M::HeartRate,
        110.0,
        "/min",
        true,
    ),
    // Common practice, no source: an unlabelled vitals line in the conventional order
    // (BP, HR, RR, SpO2, temperature); the labelled form is 03 §3.6.
    m(
        "Vitals: 128/76, 84, 18, 98% RA, 36.8",
        M::HeartRate,
        84.0,
        "/min",
        true,
    ),
    m(
        "Vitals: 128/76, 84, 18, 98% RA, 36.8",
        M::RespiratoryRate,
        18.0,
        "/min",
        true,
    ),
    m(
        "Vitals: 128/76, 84, 18, 98% RA, 36.8",
        M::Temperature,
        36.8,
        "Cel",
        true,
    ),
    m(
        "Obs: 104/68, 96 irreg, 95% on 2L NC, 36.9",
        M::Temperature,
        36.9,
        "Cel",
        true,
    ),
    m(
        "VS: 102/64 88 18 96% 98.4F",
        M::Temperature,
        98.4,
        "[degF]",
        false,
    ),
    m(
        "VS: 102/64 88 18 96% 98.4F",
        M::RespiratoryRate,
        18.0,
        "/min",
        true,
    ),
    m(
        "Obs: BP 128/76 HR 84 RR 18 SpO2 98% RA T 36.8",
        M::RespiratoryRate,
        18.0,
        "/min",
        true,
    ),
    m(
        "Obs: BP 128/76 HR 84 RR 18 SpO2 98% RA T 36.8",
        M::Temperature,
        36.8,
        "Cel",
        true,
    ),
    // 03 §3.6: US temperature and rate forms.
    m("T 99.1F", M::Temperature, 99.1, "[degF]", false),
    m("RR 22 bpm", M::RespiratoryRate, 22.0, "/min", false),
    m(
        "Respirations 20, unlaboured.",
        M::RespiratoryRate,
        20.0,
        "/min",
        true,
    ),
    // 05 §5.0: unit spellings (centigrade, degrees Celsius/Fahrenheit, beats per minute,
    // mM, percent).
    m("Temp 37.2 centigrade", M::Temperature, 37.2, "Cel", false),
    m(
        "Temperature 36.8 degrees Celsius.",
        M::Temperature,
        36.8,
        "Cel",
        false,
    ),
    m(
        "Temp 98.6 degrees Fahrenheit.",
        M::Temperature,
        98.6,
        "[degF]",
        false,
    ),
    m(
        "His pulse was 88 beats per minute.",
        M::HeartRate,
        88.0,
        "/min",
        false,
    ),
    m("Sodium 131 mM", M::Sodium, 131.0, "mmol/L", false),
    m("EF of 20 percent", M::Lvef, 20.0, "%", false),
    m("Sats 92 percent on air", M::Spo2, 92.0, "%", false),
    m("K 4.9 mEq/L", M::Potassium, 4.9, "meq/L", false),
    m("Cr 1.4 mg%", M::Creatinine, 1.4, "mg/dL", false),
    m("JVP 12 cmH20", M::Jvp, 12.0, "cm[H2O]", false),
    // 05 §5.0: `#` after a number is pounds (US).
    m("Wt 185#", M::Weight, 185.0, "[lb_av]", false),
    // Common practice, no source: flowsheet columns name the unit once, in brackets.
    m("Weight (kg): 102.5", M::Weight, 102.5, "kg", false),
    m("Temp (C): 37.2", M::Temperature, 37.2, "Cel", false),
    m("HR (bpm): 88", M::HeartRate, 88.0, "/min", false),
    m("BP (mmHg): 110/70", M::SystolicBp, 110.0, "mm[Hg]", false),
    // 11 §11.3 and 03 §3.7: balance sign words; "negative balance of 1.5 L" is a net loss.
    m(
        "Negative balance of 1.5 L.",
        M::FluidBalance,
        -1.5,
        "L",
        false,
    ),
    m("FB -1.5 L", M::FluidBalance, -1.5, "L", false),
    m("FB 24 hr -1.2 L", M::FluidBalance, -1.2, "L", false),
    // 11 §11.3: intake and output written out ("ins 1200 outs 2700"); net = in - out.
    m(
        "Ins 1.2 L, outs 2.7 L",
        M::FluidBalance,
        -1500.0,
        "mL",
        false,
    ),
    m(
        "Strict I/O: in 1.4 L, out 3.1 L.",
        M::FluidBalance,
        -1700.0,
        "mL",
        false,
    ),
    m(
        "Intake 1400 mL, output 3100 mL.",
        M::FluidBalance,
        -1700.0,
        "mL",
        false,
    ),
    m(
        "Intake 1400 mL, output 3100 mL.",
        M::UrineOutput,
        3100.0,
        "mL",
        false,
    ),
    // 03 §3.7: urine output rates.
    m("UOP 40 ml/hr", M::UrineOutput, 40.0, "mL/h", false),
    // 04 §4.3: "in 2019" is a historical cue.
    Meas {
        temporality: Historical,
        ..m("EF was 30% in 2019.", M::Lvef, 30.0, "%", false)
    },
];

#[test]
fn measurement_phrasings() {
    let mut failures = Vec::new();
    for row in MEASUREMENTS {
        let e = ex(row.text);
        let got: Vec<_> = e
            .measurements
            .iter()
            .filter(|x| x.concept == row.concept)
            .map(|x| (x.value, x.unit, x.unit_inferred, x.temporality))
            .collect();
        let want = (row.value, Some(row.unit), row.inferred, row.temporality);
        let ok = got.iter().any(|&(v, u, i, t)| {
            (v - want.0).abs() < 1e-9 && u == want.1 && i == want.2 && t == want.3
        });
        if !ok {
            failures.push(format!(
                "{:?}: want {:?} {want:?}, got {got:?}",
                row.text, row.concept
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// Sentences whose number is not a reading of the concept.
const NOT_A_READING: &[(&str, MeasureConcept)] = &[
    // 03 §3.1: `wt ↓ 1.2` is a decrease, not a weight of 1.2 kg.
    ("wt ↓ 1.2 kg", M::Weight),
    ("Weight ↓1.3 kg since yesterday", M::Weight),
    // 03 §3.4: "JVP at 90 degrees" gives the patient's position, not a height of 90 cm.
    ("JVP at 90 degrees.", M::Jvp),
    // 11 §11.3: a fluid restriction is an instruction, not an intake or a balance.
    ("FR 1.5 L/day", M::FluidBalance),
    // Common practice, no source: unlabelled numbers are read by position only after a
    // vitals label, from a blood pressure on, and only while each fits its place (18 is
    // no heart rate, so the line is not guessed at).
    ("128/76, 84, 18, 98% RA, 36.8", M::HeartRate),
    ("Vitals: 84, 18, 98% RA, 36.8", M::HeartRate),
    ("Vitals: 128/76, 18, 98% RA", M::HeartRate),
    ("Vitals: 128/76, 18, 98% RA", M::RespiratoryRate),
    ("Obs: 128/76, 84, 18, 98%, 36.8, 5", M::Temperature),
    ("Plan: repeat obs 128/76, 84, 18", M::HeartRate),
];

#[test]
fn numbers_that_are_not_readings() {
    let mut failures = Vec::new();
    for &(text, concept) in NOT_A_READING {
        let got: Vec<_> = ex(text)
            .measurements
            .iter()
            .filter(|x| x.concept == concept)
            .map(|x| x.value)
            .collect();
        if !got.is_empty() {
            failures.push(format!("{text:?}: {concept:?} read as {got:?}"));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// A finding row: the last finding of the concept in the sentence.
struct Find {
    text: &'static str,
    concept: FindingConcept,
    assertion: Assertion,
    temporality: Temporality,
    experiencer: Experiencer,
    /// The oedema grade, where the sentence gives one (03 §3.3).
    grade: Option<f64>,
}

const fn f(text: &'static str, concept: FindingConcept, assertion: Assertion) -> Find {
    Find {
        text,
        concept,
        assertion,
        temporality: Current,
        experiencer: Patient,
        grade: None,
    }
}

const fn g(text: &'static str, grade: f64) -> Find {
    Find {
        grade: Some(grade),
        ..f(text, F::PeripheralEdema, Present)
    }
}

const FINDINGS: &[Find] = &[
    // Pick-lists pasted from an admission proforma: only the answer after the arrow
    // documents anything (common practice, no source).
    f(
        "JVP: raised / not raised / not seen  ->  raised",
        F::RaisedJvp,
        Present,
    ),
    f(
        "JVP: not raised / raised -> not raised",
        F::RaisedJvp,
        Absent,
    ),
    f("Confusion: Y / N  ->  N", F::AlteredMentation, Absent),
    f("Confusion: Y/N -> Y", F::AlteredMentation, Present),
    f(
        "Oedema: none / ankle / shin / knee -> shin",
        F::PeripheralEdema,
        Present,
    ),
    f(
        "Oedema: none / ankle / shin / knee -> none",
        F::PeripheralEdema,
        Absent,
    ),
    f(
        "Chest: clear / crackles / wheeze -> crackles bibasally",
        F::Crackles,
        Present,
    ),
    f(
        "Peripheries: warm / cool -> cool",
        F::CoolPeripheries,
        Present,
    ),
    f(
        "Cap refill: <2s / >2s -> >2s",
        F::ProlongedCapRefill,
        Present,
    ),
    // A ticked box keeps the term (common practice, no source).
    f("HPC: orthopnoea [x]  PND [ ]", F::Orthopnea, Present),
    // 03 §3.1: arrows for raised.
    f("JVP ↑", F::RaisedJvp, Present),
    f("JVP ↑↑, bibasal creps.", F::RaisedJvp, Present),
    // 03 §3.4: the JVP seen with the patient sat up at 90 degrees is markedly raised.
    f("JVP at 90 degrees.", F::RaisedJvp, Present),
    f("JVD to mid-neck.", F::RaisedJvp, Present),
    f("JVP: NR", F::RaisedJvp, Absent),
    f("HJR +ve.", F::HepatojugularReflux, Present),
    // 03 §3.2: US oedema shorthand and examination templates.
    f("BLE edema 2+.", F::PeripheralEdema, Present),
    f("Ext: no c/c/e.", F::PeripheralEdema, Absent),
    f(
        "SOA noted by the district nurse.",
        F::PeripheralEdema,
        Present,
    ),
    f("Lungs: CTAB.", F::Crackles, Absent),
    f("Bibasilar rales R>L.", F::Crackles, Present),
    // 03 §3.2: effusion signs at the bedside.
    f("Reduced air entry R base.", F::PleuralEffusion, Present),
    f("Decreased BS at R base.", F::PleuralEffusion, Present),
    f("Dullness R base.", F::PleuralEffusion, Present),
    f("Abdo: shifting dullness +ve.", F::Ascites, Present),
    // 03 §3.5: perfusion; a refill of 2 s is normal, 3 s or more prolonged.
    f("CRT 2 secs.", F::ProlongedCapRefill, Absent),
    f("Cap refill 3 seconds.", F::ProlongedCapRefill, Present),
    f("CRT <2s.", F::ProlongedCapRefill, Absent),
    f("Peripherally shut down.", F::CoolPeripheries, Present),
    f("WWP.", F::CoolPeripheries, Absent),
    // 03 §3.5: orientation shorthand.
    f("A+Ox3", F::AlteredMentation, Absent),
    f("A&Ox3.", F::AlteredMentation, Absent),
    f("GCS 14 (E4V4M6).", F::AlteredMentation, Present),
    // 03 §3.3: grades written as plus signs, numbers and words.
    g("Oedema ++ to ankles.", 2.0),
    g("+++ oedema to knees.", 3.0),
    g("4+ edema to thighs.", 4.0),
    g("Trace pedal edema.", 0.5),
    g("Minimal ankle oedema.", 0.5),
    g("Mild pitting oedema.", 1.0),
    g("Moderate pitting oedema to knees.", 2.0),
    g("Severe oedema to thighs.", 4.0),
    g("Gross oedema to sacrum.", 4.0),
    g("Oedema: moderate", 2.0),
    // 04 §4.3 and §4.5: negation, pseudo-negation, uncertainty.
    f("No change in ankle oedema.", F::PeripheralEdema, Present),
    f("Denies orthopnoea or PND.", F::Pnd, Absent),
    f("No wheeze but fine bibasal crackles.", F::Crackles, Present),
    f("Oedema resolved.", F::PeripheralEdema, Absent),
    f("Oedema not improved.", F::PeripheralEdema, Present),
    f("Equivocal crackles.", F::Crackles, Possible),
    f("R/o effusion.", F::PleuralEffusion, Possible),
    // 04 §4.4 rule 7: double negation ("not without ...") is possible, not negated.
    f("Chest: not without crackles.", F::Crackles, Possible),
    f(
        "Not without oedema to the ankles.",
        F::PeripheralEdema,
        Possible,
    ),
    f("Legs not w/o oedema.", F::PeripheralEdema, Possible),
    f("Bibasal creps not absent.", F::Crackles, Possible),
    // 03 §3.1: a question mark before or right after the word makes it possible; one
    // glued to the end of a word does not reach the next word.
    f("?S3.", F::S3, Possible),
    f("S3?", F::S3, Possible),
    f("JVP raised? Oedema to ankles.", F::RaisedJvp, Possible),
    f("JVP raised? Oedema to ankles.", F::PeripheralEdema, Present),
    f("Crackles? effusion", F::Crackles, Possible),
    f("Crackles? effusion", F::PleuralEffusion, Present),
    // The plain negations beside them stay negated.
    f("Chest: without crackles.", F::Crackles, Absent),
    f("Not oedematous; no crackles.", F::Crackles, Absent),
    f("Not without difficulty, no crackles.", F::Crackles, Absent),
    f("Nil PND, nil orthopnoea.", F::Orthopnea, Absent),
    f(
        "ROS negative for chest pain, dyspnea, orthopnea.",
        F::Orthopnea,
        Absent,
    ),
    // 03 §3.1 ("CVS: HS I+II+0", a template negative) and 04 §4.3 (negation, template):
    // the heart sounds heard, with "0" for no added sound; 02 §2.2 ("HS I+II+S3"). The
    // spacing, Arabic numerals, `S1`/`S2` and a third sound written `III`: common practice,
    // no source.
    f("CVS: HS I+II+0", F::S3, Absent),
    f("HS I + II + 0", F::S3, Absent),
    f("HS I+II+0", F::S3, Absent),
    f("HS I +II+ 0.", F::S3, Absent),
    f("Heart sounds: I + II + 0", F::S3, Absent),
    f("HS 1+2+0", F::S3, Absent),
    f("HS 1 + 2 + 0", F::S3, Absent),
    f("HS I II 0", F::S3, Absent),
    f("HS S1 + S2 + 0", F::S3, Absent),
    f("HS: I+II+nil", F::S3, Absent),
    f("S1 + S2 + 0, no murmurs", F::S3, Absent),
    f("S1 S2 no added sounds", F::S3, Absent),
    f("HS I + II + S3", F::S3, Present),
    f("HS I+II+S3", F::S3, Present),
    f("HS 1+2+S3", F::S3, Present),
    f("Heart sounds I + II + III", F::S3, Present),
    f("HS I + II + ?S3", F::S3, Possible),
    // 04 §4.3: another person.
    Find {
        experiencer: Other,
        ..f("FH: father HS I+II+S3.", F::S3, Present)
    },
    // 04 §4.3: historical cues, a past year among them.
    Find {
        temporality: Historical,
        ..f("Ascites in 2019.", F::Ascites, Present)
    },
    Find {
        temporality: Historical,
        ..f(
            "In March 2021 he had a pleural effusion.",
            F::PleuralEffusion,
            Present,
        )
    },
    Find {
        temporality: Historical,
        ..f("h/o pleural effusion.", F::PleuralEffusion, Present)
    },
    // 04 §4.3: another person, and a relative who reports (the patient keeps the finding).
    Find {
        experiencer: Other,
        ..f("Her husband has ankle oedema.", F::PeripheralEdema, Present)
    },
    f("Collateral history from daughter: PND.", F::Pnd, Present),
    f(
        "Per wife, he has been sleeping in a chair.",
        F::Orthopnea,
        Present,
    ),
    f(
        "According to his wife he cannot lie flat.",
        F::Orthopnea,
        Present,
    ),
    f(
        "Wife reports he has been sleeping in a chair.",
        F::Orthopnea,
        Present,
    ),
    // Common practice, no source: crackles that clear on coughing are secretions, gone on
    // re-examination.
    f(
        "few basal crackles which cleared on coughing",
        F::Crackles,
        Absent,
    ),
    f("Creps at R base, clear with cough", F::Crackles, Absent),
    // Domain 02 (congestion signs: "sleeping in chair"); common practice, no source, for
    // the other wordings. After "although" the observed sign is read on its own.
    f(
        "No orthopnoea reported by pt, although nurse notes she has been sleeping sat bolt upright in chair",
        F::Orthopnea,
        Present,
    ),
    f("Now sleeps in recliner chair every night", F::Orthopnea, Present),
    f("He sleeps sitting up most nights", F::Orthopnea, Present),
    f(
        "bibasal crackles not cleared by coughing",
        F::Crackles,
        Present,
    ),
];

#[test]
fn a_plus_glued_to_a_sign_marks_it_positive_not_graded() {
    // Common practice of US notes, no source: "+leg swelling" is "leg swelling: yes"; a
    // grade is written "2+", "++ oedema" or "oedema ++" (domain 03 §3.3).
    let e = ex("presents w/ 2d of SOB. +leg swelling. Denies chest pain.");
    let f = e
        .findings
        .iter()
        .find(|f| f.concept == F::PeripheralEdema)
        .expect("oedema read");
    assert_eq!((f.assertion, f.detail.grade), (Present, None));
    let e = ex("++ oedema to knees");
    let f = e
        .findings
        .iter()
        .find(|f| f.concept == F::PeripheralEdema)
        .expect("oedema read");
    assert_eq!(f.detail.grade, Some(2.0));
}

#[test]
fn swelling_with_a_local_cause_is_not_congestion() {
    // Domain 03 §3.3: one-sided swelling suggests a local cause rather than heart failure.
    let local = [
        "R leg post-op swelling with dressing",
        "Swollen left calf ?DVT, for doppler",
        "L ankle swelling from cellulitis",
        "right knee swelling after the fracture",
    ];
    for text in local {
        let e = ex(text);
        let present: Vec<_> = e
            .findings
            .iter()
            .filter(|f| f.concept == F::PeripheralEdema && f.assertion == Present)
            .collect();
        assert!(present.is_empty(), "{text:?}: read as oedema {present:?}");
    }
    // Bilateral oedema stays oedema, even beside a local problem.
    for text in [
        "bilateral ankle swelling, post-op wound clean",
        "Bilateral pitting oedema with cellulitis of the L shin",
        "pitting oedema to knees",
    ] {
        let e = ex(text);
        assert!(
            e.findings
                .iter()
                .any(|f| f.concept == F::PeripheralEdema && f.assertion == Present),
            "{text:?}: oedema lost"
        );
    }
}

#[test]
fn finding_phrasings() {
    let mut failures = Vec::new();
    for row in FINDINGS {
        let e = ex(row.text);
        let got = e
            .findings
            .iter()
            .rev()
            .find(|x| x.concept == row.concept)
            .map(|x| (x.assertion, x.temporality, x.experiencer, x.detail.grade));
        let want = (row.assertion, row.temporality, row.experiencer, row.grade);
        let ok = got.is_some_and(|(a, t, x, gr)| {
            (a, t, x) == (want.0, want.1, want.2) && (want.3.is_none() || gr == want.3)
        });
        if !ok {
            failures.push(format!(
                "{:?}: want {:?} {want:?}, got {got:?}",
                row.text, row.concept
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// What a form offers but the writer did not pick is not documented: an unticked box, the
/// options of a pick-list, an answer that says the sign was not assessed (common practice,
/// no source).
#[test]
fn unpicked_form_options_document_nothing() {
    let cases: &[(&str, FindingConcept)] = &[
        ("HPC: orthopnoea [x]  PND [ ]  palpitations [ ]", F::Pnd),
        ("[ ] PND", F::Pnd),
        (
            "JVP: raised / not raised / not seen -> not seen",
            F::RaisedJvp,
        ),
    ];
    for (text, concept) in cases {
        let e = ex(text);
        let got: Vec<_> = e
            .findings
            .iter()
            .filter(|f| f.concept == *concept)
            .collect();
        assert!(got.is_empty(), "{text:?}: {concept:?} read as {got:?}");
    }
    // The options' crackles are not read; the answer's "clear" is.
    let e = ex("Chest: clear / crackles / wheeze -> clear");
    let crackles: Vec<_> = e
        .findings
        .iter()
        .filter(|f| f.concept == F::Crackles)
        .map(|f| f.assertion)
        .collect();
    assert_eq!(crackles, vec![Absent], "{:?}", e.findings);
}

#[test]
fn heart_sound_shorthand_gives_one_finding_or_none() {
    // 02 §2.2 ("HS I+II+S3"): one third heart sound, not one per term in the shorthand.
    let s3 = |text: &str| -> Vec<(Assertion, String)> {
        ex(text)
            .findings
            .iter()
            .filter(|x| x.concept == F::S3)
            .map(|x| (x.assertion, x.text.clone()))
            .collect()
    };
    assert_eq!(
        s3("HS I + II + S3"),
        [(Present, "HS I + II + S3".to_string())]
    );
    assert_eq!(s3("HS 1+2+0"), [(Absent, "HS 1+2+0".to_string())]);
    // Common practice, no source: an S4 is not an S3, and "hs" without the sounds after it
    // (`furosemide at hs`) is no heart-sound finding.
    assert_eq!(s3("HS I + II + S4"), []);
    assert_eq!(s3("Furosemide 40 mg at hs. HR 80"), []);
}

#[test]
fn the_trend_of_an_unimproved_finding_is_not_improved() {
    // 04 §4.4 rule 6: "not improved" is affirmed; its trend is not an improvement.
    let e = ex("Oedema not improved.");
    let t = e.findings.first().and_then(|x| x.detail.trend.clone());
    assert_eq!(t.as_deref(), Some("unchanged"));
}

#[test]
fn non_pitting_swelling_is_not_graded() {
    // 03 §3.3: "non-pitting" is not the same finding; do not grade.
    let e = ex("Severe non-pitting oedema of the legs.");
    let grades: Vec<_> = e.findings.iter().map(|x| x.detail.grade).collect();
    assert_eq!(grades, [None]);
}

/// Statement rows: kind and value.
const STATEMENTS: &[(&str, StatementKind, &str)] = &[
    // 03 §3.10 and 07 §7.4: acuity wording.
    ("AoC HFrEF.", StatementKind::Acuity, "acute_on_chronic"),
    ("ADHF.", StatementKind::Acuity, "acute"),
    (
        "Worsening heart failure.",
        StatementKind::Acuity,
        "decompensated",
    ),
    ("CHF exacerbation.", StatementKind::Acuity, "decompensated"),
    ("New-onset HF.", StatementKind::Acuity, "acute"),
    // 07 §7.1: older labels kept as synonyms.
    ("HF with mid-range EF.", StatementKind::HfType, "hfmref"),
    ("HFnEF.", StatementKind::HfType, "hfpef"),
    ("HF-REF.", StatementKind::HfType, "hfref"),
    ("HFrecEF.", StatementKind::HfType, "hfimpef"),
    // 03 §3.8 and 07 §7.2: NYHA forms.
    ("FC III.", StatementKind::Nyha, "III"),
    ("Class III symptoms.", StatementKind::Nyha, "III"),
    ("NYHA 2/3.", StatementKind::Nyha, "III"),
    ("NYHA IIIb.", StatementKind::Nyha, "III"),
];

#[test]
fn statement_phrasings() {
    let mut failures = Vec::new();
    for &(text, kind, value) in STATEMENTS {
        let e = ex(text);
        let got: Vec<_> = e
            .statements
            .iter()
            .filter(|s| s.kind == kind)
            .map(|s| (s.value.as_str(), s.assertion))
            .collect();
        if !got.contains(&(value, Present)) {
            failures.push(format!("{text:?}: want {kind:?} {value}, got {got:?}"));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn class_alone_stays_unread_without_heart_failure_context() {
    // Common practice, no source: "class II" alone is also a guideline recommendation
    // class; without NYHA, heart failure or "symptoms" beside it, it is not read.
    let e = ex("Class II indication for the procedure.");
    assert!(e.statements.iter().all(|s| s.kind != StatementKind::Nyha));
}

#[test]
fn question_marks_on_abbreviations() {
    // 04 §4.5 ("?LVF - CXR requested": possible) and 03 §3.1 (`LVF?` is the same).
    for text in ["?LVF - CXR requested", "LVF? CXR requested.", "Imp: CCF?"] {
        let e = ex(text);
        let got: Vec<_> = e
            .statements
            .iter()
            .filter(|s| s.kind == StatementKind::HeartFailure)
            .map(|s| s.assertion)
            .collect();
        assert_eq!(got, [Possible], "{text:?}");
    }
    // The mark after one abbreviation leaves the next one alone.
    let e = ex("LVF? ADHF.");
    let got: Vec<_> = e
        .statements
        .iter()
        .filter(|s| s.kind == StatementKind::Acuity)
        .map(|s| (s.value.as_str(), s.assertion))
        .collect();
    assert_eq!(got, [("acute", Present)]);
}

#[test]
fn decades_are_approximate_lower_bounds() {
    // 03 §3.6 lists "SBP 90s"; 03 §3.1 says keep an approximate value and flag it. The
    // decade's lower bound is the value (common practice, no source: "100s" is 100-109).
    use tidemark::model::Qualifier;
    let rows: &[(&str, MeasureConcept, f64)] = &[
        ("BP 100s/60s", M::SystolicBp, 100.0),
        ("BP 100s/60s", M::DiastolicBp, 60.0),
        ("BP 110s over 70s", M::DiastolicBp, 70.0),
        ("SBP 90s", M::SystolicBp, 90.0),
    ];
    for &(text, concept, value) in rows {
        let e = ex(text);
        let got: Vec<_> = e
            .measurements
            .iter()
            .filter(|x| x.concept == concept)
            .map(|x| (x.value, x.unit, x.qualifier))
            .collect();
        assert_eq!(
            got,
            [(value, Some("mm[Hg]"), Some(Qualifier::Approximate))],
            "{text:?}"
        );
    }
    // Only the number written with the decade is approximate.
    let e = ex("BP 120/80s");
    let q: Vec<_> = e.measurements.iter().map(|x| x.qualifier).collect();
    assert_eq!(q, [None, Some(Qualifier::Approximate)]);
    // A decade gives no unit or plausibility diagnostic the exact numbers do not.
    let cfg = tidemark::Config::default();
    let rules = |text: &str| {
        let mut r: Vec<_> = tidemark::analyze(text, &cfg)
            .diagnostics
            .iter()
            .map(|d| d.rule)
            .collect();
        r.sort_unstable();
        r
    };
    let note = "Ward round, day 3 ADHF.\nObs: BP {sys}/{dia}, SBP {sys} overnight.\nPlan: continue furosemide.\n";
    let with = |sys: &str, dia: &str| note.replace("{sys}", sys).replace("{dia}", dia);
    assert_eq!(rules(&with("100s", "60s")), rules(&with("100", "60")));
}

#[test]
fn the_later_value_of_a_course_is_the_current_one() {
    // A course of two values: both are read and the later is the current one, so the
    // note's trend runs from the first to the second. Sources per row.
    enum S {
        Weight,
        Creatinine,
        Potassium,
    }
    let rows: &[(&str, S, f64, f64)] = &[
        // 01 §1.2 ("Cr 132 -> 149 umol/L") and 03 §3.1: an arrow means "to".
        ("Cr 132 -> 149 umol/L, K 5.3", S::Creatinine, 132.0, 149.0),
        ("Cr 118 → 131.", S::Creatinine, 118.0, 131.0),
        ("K 5.3 -> 4.6", S::Potassium, 5.3, 4.6),
        ("Weight 84.2 -> 82.1 kg", S::Weight, 84.2, 82.1),
        // Common practice, no source: "from X to Y", "was X, now Y".
        ("Creatinine from 132 to 149.", S::Creatinine, 132.0, 149.0),
        ("K went from 5.8 to 4.9.", S::Potassium, 5.8, 4.9),
        ("wt from 84.2 kg to 82.1 kg", S::Weight, 84.2, 82.1),
        ("Cr was 132, now 149.", S::Creatinine, 132.0, 149.0),
        ("K was 5.8 and is now 4.9.", S::Potassium, 5.8, 4.9),
        (
            "Potassium was 5.9, now at 5.1 mmol/L.",
            S::Potassium,
            5.9,
            5.1,
        ),
        ("Wt was 84.2, now 82.1", S::Weight, 84.2, 82.1),
        ("Weight was 84.2 kg, now 82.1 kg.", S::Weight, 84.2, 82.1),
        // 1.2 and 1.6 mg/dL in the canonical µmol/L (x 88.4, 05 §5.3).
        (
            "Creatinine was 1.2 now 1.6 mg/dL.",
            S::Creatinine,
            1.2 * 88.4,
            1.6 * 88.4,
        ),
        // Common practice, no source: the latest value first, then the earlier one it is
        // compared with ("X, was Y"); the first stays the latest.
        ("Wt 82.1 kg, was 84.2 kg", S::Weight, 84.2, 82.1),
        ("Cr 149, was 132", S::Creatinine, 132.0, 149.0),
        ("K 4.1, was 5.2.", S::Potassium, 5.2, 4.1),
        // 04 §4.3 lists "previously" as a historical cue; here it dates the value it stands
        // before, not the one ahead of it (04 §4.2: a trigger's scope runs forward to the
        // end of its clause).
        ("K 4.1, previously 5.2", S::Potassium, 5.2, 4.1),
        ("Cr 149 (previously 132)", S::Creatinine, 132.0, 149.0),
        ("weight 80 kg, previously 84 kg", S::Weight, 84.0, 80.0),
        ("Cr 149, prev 132", S::Creatinine, 132.0, 149.0),
    ];
    let mut failures = Vec::new();
    for (text, s, first, last) in rows {
        let e = ex(text);
        let t = tidemark::picture::build(&e).trends;
        let (a, b, n) = match s {
            S::Weight => (t.weight.first, t.weight.last, t.weight.points.len()),
            S::Creatinine => (
                t.creatinine.first,
                t.creatinine.last,
                t.creatinine.points.len(),
            ),
            S::Potassium => (
                t.potassium.first,
                t.potassium.last,
                t.potassium.points.len(),
            ),
        };
        let close = |x: Option<f64>, y: f64| x.is_some_and(|x| (x - y).abs() < 1e-6);
        if n != 2 || !close(a, *first) || !close(b, *last) {
            failures.push(format!(
                "{text:?}: want {first} -> {last}, got {a:?} -> {b:?} ({n} points)"
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn an_earlier_value_after_the_latest_keeps_the_latest_current() {
    // Common practice, no source ("X, was Y"), and 04 §4.3 ("previously" is a historical
    // cue) with 04 §4.2 (its scope runs forward): the first value is today's, the second
    // is marked as the earlier one.
    use tidemark::model::TimeRef;
    let rows: &[(&str, MeasureConcept, f64, f64)] = &[
        ("Wt 82.1 kg, was 84.2 kg", M::Weight, 82.1, 84.2),
        ("Cr 149, was 132", M::Creatinine, 149.0, 132.0),
        ("K 4.1, previously 5.2", M::Potassium, 4.1, 5.2),
        ("Cr 149 (previously 132)", M::Creatinine, 149.0, 132.0),
        ("weight 80 kg, previously 84 kg", M::Weight, 80.0, 84.0),
    ];
    let mut failures = Vec::new();
    for &(text, concept, latest, earlier) in rows {
        let e = ex(text);
        let got: Vec<_> = e
            .measurements
            .iter()
            .filter(|x| x.concept == concept)
            .map(|x| (x.value, x.temporality, x.time_ref))
            .collect();
        let ok = got.len() == 2
            && got[0].0 == latest
            && got[0].1 == Current
            && got[0].2.is_none()
            && got[1].0 == earlier
            && got[1].2 == Some(TimeRef::Previous);
        if !ok {
            failures.push(format!("{text:?}: got {got:?}"));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn a_comma_was_before_another_test_is_not_an_earlier_value() {
    // Common practice, no source: a number of another size after "was" is not the same
    // test (the same factor-of-three check as a comma value with a time word).
    let e = ex("K 4.2, was 138 on the gas");
    let k: Vec<_> = e
        .measurements
        .iter()
        .filter(|x| x.concept == M::Potassium)
        .map(|x| x.value)
        .collect();
    assert_eq!(k, [4.2]);
}

#[test]
fn now_after_a_value_is_its_time_word() {
    // "K 5.8 now" places 5.8 today; it does not start another value.
    let e = ex("K 5.8 now, recheck in the morning.");
    let got: Vec<_> = e
        .measurements
        .iter()
        .filter(|x| x.concept == M::Potassium)
        .map(|x| (x.value, x.time_ref))
        .collect();
    assert_eq!(got, [(5.8, Some(tidemark::model::TimeRef::Today))]);
}

#[test]
fn heart_failure_of_someone_else_is_not_the_patients() {
    // 04 §4.3 (experiencer other: mother, father, brother, FH, "her husband has") and 04 §4.5
    // ("Mother had heart failure", "FH: father - HFrEF" are experiencer other): reported as
    // another person's, and neither classified nor linted as the patient's heart failure.
    use tidemark::lint::LintConfig;
    const HF_RULES: &[&str] = &[
        "hf-type-unspecified",
        "hf-acuity-unspecified",
        "lvef-missing",
        "nyha-missing",
        "weight-missing",
        "volume-status-missing",
    ];
    let lint = |text: &str| -> (Extraction, Vec<String>) {
        let e = ex(text);
        let pic = tidemark::picture::build(&e);
        let c = &pic.classifications;
        assert!(
            c.hf_type.is_none() && c.acuity.is_none() && c.nyha_class.is_none(),
            "{text:?}: classified {c:?}"
        );
        let rules = tidemark::lint::run(text, &e, &pic, &LintConfig::default())
            .into_iter()
            .map(|d| d.rule.to_string())
            .filter(|r| HF_RULES.contains(&r.as_str()))
            .collect();
        (e, rules)
    };
    let rows = [
        "Ward round\nPatient's brother has heart failure.\nBP 120/80, HR 80.\n",
        "Ward round\nFH: mother had heart failure.\nBP 120/80, HR 80.\n",
        "Ward round\nFH: father - HFrEF, died age 60.\nBP 120/80.\n",
        "Ward round\nHer brother has decompensated HFrEF, NYHA III.\nBP 120/80.\n",
        "Ward round\nMum has CCF.\nBP 120/80.\n",
    ];
    let mut failures = Vec::new();
    for text in rows {
        let (e, rules) = lint(text);
        let hf: Vec<_> = e
            .statements
            .iter()
            .filter(|s| s.kind == StatementKind::HeartFailure)
            .map(|s| s.experiencer)
            .collect();
        if hf.is_empty() || hf.iter().any(|&x| x != Other) || !rules.is_empty() {
            failures.push(format!("{text:?}: heart failure {hf:?}, rules {rules:?}"));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    // The patient's own heart failure, written the same way, is linted.
    let (_, rules) = lint("Ward round\nImp: heart failure.\nBP 120/80.\n");
    assert!(
        rules.contains(&"hf-type-unspecified".to_string()),
        "{rules:?}"
    );
}

#[test]
fn the_reason_a_drug_was_stopped_is_no_finding_of_today() {
    // Common practice, no source: the reason for a drug change is a past event.
    for text in [
        "Bisoprolol - stopped 18/11 (bradycardia, hypotension)",
        "Ramipril held due to hypotension",
        "Spironolactone discontinued (hyperkalaemia and confusion)",
    ] {
        let e = ex(text);
        let today: Vec<_> = e
            .findings
            .iter()
            .filter(|f| f.temporality == Current && f.assertion == Present)
            .map(|f| f.concept)
            .collect();
        assert!(today.is_empty(), "{text:?}: {today:?}");
    }
    // A finding of today after the drug line stays current.
    let e = ex("Bisoprolol stopped. Hypotensive today, BP 84/50.");
    assert!(e
        .findings
        .iter()
        .any(|f| f.concept == F::Hypotension && f.temporality == Current));
}
