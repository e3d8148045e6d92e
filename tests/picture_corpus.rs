//! The clinical picture on invented notes of `corpora-synthetic/`, end to end.
//!
//! Expected values were worked out by hand from each note's text (not from the gold
//! files): the profile by the agreed rules (latest assessment, documented signs decide),
//! eGFR by the CKD-EPI 2021 creatinine equation (Inker et al., N Engl J Med 2021) from the
//! published coefficients, MAP as DBP + (SBP - DBP)/3 (McGee). They need the extraction
//! stage, so they are ignored until it is merged.

use tidemark::{analyze, Config};

fn note(name: &str) -> tidemark::Analysis {
    let path = format!("{}/corpora-synthetic/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).expect("corpus note");
    analyze(&text, &Config::default())
}

fn close(a: Option<f64>, b: f64, tol: f64) -> bool {
    a.is_some_and(|a| (a - b).abs() <= tol)
}

#[test]
fn discharge_summary_is_judged_on_the_discharge_examination() {
    let a = note("03-uk-discharge-summary-hfref.txt");
    let p = &a.picture;
    // Discharge exam: JVP not raised, chest clear, no oedema; warm and well perfused, CRT < 2 s.
    assert_eq!(p.profile.label, "warm-dry");
    assert_eq!(p.classifications.hf_type.as_deref(), Some("hfref"));
    assert_eq!(
        p.classifications.acuity.as_deref(),
        Some("acute_on_chronic")
    );
    assert_eq!(
        p.classifications.volume_status.as_deref(),
        Some("euvolemic")
    );
    assert_eq!(
        (p.patient.age, p.patient.sex.as_deref()),
        (Some(72), Some("female"))
    );
    // BP 112/68: MAP 82.667.
    assert!(close(p.derived.mean_arterial_pressure.value, 82.667, 0.01));
    // Woman, 72, discharge creatinine 134 umol/L: 36.3.
    assert!(close(p.derived.egfr.value, 36.3, 0.05));
    // Admission 78.6 kg -> discharge 72.9 kg.
    assert!(close(p.trends.weight.change, -5.7, 0.05));
    assert!(close(p.trends.creatinine.change, 16.0, 0.5));
}

#[test]
fn daily_weight_table_latest_review_decides() {
    let a = note("07-daily-weight-table-de-novo.txt");
    let p = &a.picture;
    // 13/06 review: orthopnoea resolved, JVP not raised, chest clear, no oedema; warm, CRT < 2 s.
    assert_eq!(p.profile.label, "warm-dry");
    // Echo LVEF 35-40 %: HFrEF derived (no type word in the note).
    assert_eq!(p.classifications.hf_type.as_deref(), Some("hfref"));
    assert_eq!(
        p.classifications.sources.hf_type.as_ref().map(|s| s.basis),
        Some("derived")
    );
    // 97.8 kg on 09/06 to 93.2 kg on 13/06: -4.6 kg over 4 days.
    assert!(close(p.trends.weight.change, -4.6, 0.05));
    assert_eq!(p.trends.weight.days, Some(4));
    assert!(!p.trends.weight.gain_flag);
    // Net balance -1400, -2050, -1700, -1100, -500: cumulative -6750 mL.
    assert!(close(p.trends.fluid_balance.cumulative, -6750.0, 0.5));
    assert!(close(p.trends.creatinine.change, 17.0, 0.5));
}

#[test]
fn euvolaemic_word_against_documented_congestion() {
    let a = note("10-post-take-euvolaemic-contradiction.txt");
    let p = &a.picture;
    // JVP +4 cm, crackles, oedema to mid-shin; warm peripheries, CRT < 2 s.
    assert_eq!(p.profile.label, "warm-wet");
    assert!(p.profile.conflicts.iter().any(|c| c.axis == "congestion"));
    assert_eq!(
        p.classifications.volume_status.as_deref(),
        Some("euvolemic")
    );
    assert_eq!(p.classifications.hf_type.as_deref(), Some("hfpef"));
    assert_eq!(
        (p.patient.age, p.patient.sex.as_deref()),
        (Some(68), Some("female"))
    );
    // BP 146/84: MAP 104.667; woman 68, creatinine 97 umol/L: eGFR 54.9.
    assert!(close(p.derived.mean_arterial_pressure.value, 104.667, 0.01));
    assert!(close(p.derived.egfr.value, 54.9, 0.05));
}

#[test]
fn terse_handover_line() {
    let a = note("13-terse-handover-line.txt");
    let p = &a.picture;
    assert_eq!(p.profile.label, "warm-wet");
    assert_eq!(
        p.classifications.acuity.as_deref(),
        Some("acute_on_chronic")
    );
    assert_eq!(
        p.classifications.volume_status.as_deref(),
        Some("overloaded")
    );
    // wt 79.6 kg (yest 80.9): -1.3 kg.
    assert!(close(p.trends.weight.change, -1.3, 0.05));
    // Man 81, creatinine 152 umol/L: eGFR 39.5.
    assert!(close(p.derived.egfr.value, 39.5, 0.05));
}

#[test]
fn multi_day_record_latest_day_decides() {
    let a = note("15-multi-day-ward-record-deteriorating.txt");
    let p = &a.picture;
    // 14/11: confusion, cold peripheries, CRT 4 s, BP 84/70 (PPP 16.7 %), lactate 3.8;
    // JVP to angle of jaw, creps, oedema to thighs.
    assert_eq!(p.profile.label, "cold-wet");
    assert_eq!(p.classifications.hf_type.as_deref(), Some("hfref"));
    assert_eq!(p.derived.proportional_pulse_pressure.flag, Some("narrow"));
    // 70.2 (12/11) -> 71.4 kg (14/11): +1.2 kg, no flag.
    assert!(close(p.trends.weight.change, 1.2, 0.05));
    assert!(!p.trends.weight.gain_flag);
    assert!(close(p.trends.creatinine.change, 97.0, 0.5));
    assert!(close(p.trends.potassium.change, 1.1, 0.05));
}

#[test]
fn cold_and_dry_hypovolaemic_patient() {
    let a = note("19-us-progress-note-cold-dry.txt");
    let p = &a.picture;
    // JVP not elevated, CTAB, no S3, no edema, orthopnea denied; cool hands and feet, cap
    // refill 3-4 s, lactate 2.8 (> 2).
    assert_eq!(p.profile.label, "cold-dry");
    assert_eq!(p.classifications.volume_status.as_deref(), Some("depleted"));
    // Man 73, creatinine 2.6 mg/dL: eGFR 25.2 (G4).
    assert!(close(p.derived.egfr.value, 25.2, 0.05));
    assert_eq!(p.derived.egfr.category, Some("G4"));
}

#[test]
fn every_corpus_note_gets_a_picture_without_panicking() {
    // Runs today on the stub extraction too: every note builds a picture with a label.
    let dir = format!("{}/corpora-synthetic", env!("CARGO_MANIFEST_DIR"));
    let mut seen = 0;
    for entry in std::fs::read_dir(&dir).expect("corpus dir") {
        let path = entry.expect("entry").path();
        if path.extension().and_then(|e| e.to_str()) != Some("txt") {
            continue;
        }
        let text = std::fs::read_to_string(&path).expect("note");
        let a = analyze(&text, &Config::default());
        assert!(
            ["warm-dry", "warm-wet", "cold-wet", "cold-dry", "unknown"]
                .contains(&a.picture.profile.label.as_str()),
            "{}",
            path.display()
        );
        seen += 1;
    }
    assert_eq!(seen, 36);
}
