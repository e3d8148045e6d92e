//! The coding rules against the ICD-10-CM check values of the domain reference
//! (13-check-values.md, rows I01-I10, I14, I15, I18; sources there: the ICD-10-CM Tabular
//! List and Official Guidelines I.C.9.a). Each note is the documented words of one row,
//! run through the binary.

use std::process::Command;

fn diagnostics(text: &str) -> Vec<(String, String)> {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path().join("note.txt");
    std::fs::write(&p, text).expect("write note");
    let o = Command::new(env!("CARGO_BIN_EXE_tidemark"))
        .args(["lint", "--format", "json", "--fail-on", "never"])
        .arg(&p)
        .output()
        .expect("tidemark runs");
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).expect("json");
    v["documents"][0]["diagnostics"]
        .as_array()
        .expect("diagnostics")
        .iter()
        .map(|d| {
            (
                d["rule"].as_str().unwrap_or("").to_string(),
                d["message"].as_str().unwrap_or("").to_string(),
            )
        })
        .collect()
}

/// The codes the suggestion names, in order (`I13.0`, `I50.33`, `N18.4`).
fn suggested(text: &str) -> Vec<String> {
    let d = diagnostics(text);
    let Some((_, m)) = d.iter().find(|(r, _)| r == "hf-code-suggestion") else {
        return Vec::new();
    };
    let supported = m
        .split("supports ")
        .nth(1)
        .and_then(|s| s.split(" (ICD-10-CM").next())
        .unwrap_or("");
    supported
        .split(" + ")
        .filter_map(|c| c.split_whitespace().next())
        .map(str::to_string)
        .collect()
}

#[test]
fn heart_failure_type_and_acuity_codes() {
    // I01, I02, I03, I05.
    assert_eq!(suggested("Imp: acute on chronic HFrEF.\n"), ["I50.23"]);
    assert_eq!(suggested("Imp: chronic HFpEF.\n"), ["I50.32"]);
    assert_eq!(
        suggested("Imp: acute diastolic heart failure.\n"),
        ["I50.31"]
    );
    assert_eq!(
        suggested("Imp: acute combined systolic and diastolic HF.\n"),
        ["I50.41"]
    );
    // I18: reduced EF with diastolic dysfunction is combined.
    assert_eq!(
        suggested("Imp: chronic HFrEF with diastolic dysfunction.\n"),
        ["I50.42"]
    );
    // I14: HFmrEF as systolic, marked for coder review.
    assert_eq!(suggested("Imp: chronic HFmrEF.\n"), ["I50.22"]);
    let d = diagnostics("Imp: chronic HFmrEF.\n");
    assert!(d
        .iter()
        .any(|(r, m)| r == "hf-code-suggestion" && m.contains("coder review")));
    // I15: decompensated with documented chronic HFpEF.
    assert_eq!(
        suggested("PMH: chronic HFpEF.\nImp: acute decompensated HFpEF.\n"),
        ["I50.33"]
    );
}

#[test]
fn hypertension_and_ckd_combinations() {
    // I06-I09.
    assert_eq!(
        suggested("PMH: HTN.\nImp: chronic systolic HF.\n"),
        ["I11.0", "I50.22"]
    );
    assert_eq!(
        suggested("PMH: HTN. CKD stage 4.\nImp: acute on chronic HFpEF.\n"),
        ["I13.0", "I50.33", "N18.4"]
    );
    assert_eq!(
        suggested("PMH: HTN. ESRD.\nImp: chronic HFrEF.\n"),
        ["I13.2", "I50.22", "N18.6"]
    );
    // A stage and ESRD together: N18.6 only (Official Guidelines I.C.14.a).
    assert_eq!(
        suggested("PMH: HTN. CKD stage 5, now ESRD on dialysis.\nImp: chronic HFrEF.\n"),
        ["I13.2", "I50.22", "N18.6"]
    );
    let text = "PMH: HTN. CKD.\nImp: chronic HFrEF.\n";
    assert_eq!(suggested(text), ["I13.0", "I50.22", "N18.9"]);
    assert!(diagnostics(text)
        .iter()
        .any(|(r, _)| r == "ckd-stage-unspecified"));
    // I10: another cause documented, hypertension coded separately.
    assert_eq!(
        suggested(
            "PMH: HTN.\nImp: chronic systolic heart failure due to alcohol-related \
             cardiomyopathy, not hypertensive.\n"
        ),
        ["I50.22"]
    );
}

#[test]
fn no_suggestion_without_type_and_acuity() {
    // I04: "CHF" only gives no specific code (the type and acuity rules fire instead).
    let d = diagnostics("Imp: CHF.\n");
    assert!(!d.iter().any(|(r, _)| r == "hf-code-suggestion"));
    assert!(d.iter().any(|(r, _)| r == "hf-type-unspecified"));
    assert!(suggested("Imp: HFrEF.\n").is_empty());
}

#[test]
fn a_stage_written_with_ckd_is_read() {
    // Stage wordings (KDIGO 2012 G categories; Roman numerals common practice, no source).
    for (text, code) in [
        ("CKD 3b", "N18.32"),
        ("CKD stage IV", "N18.4"),
        ("stage 3 CKD", "N18.30"),
        ("CKD G3a", "N18.31"),
    ] {
        let note = format!("PMH: HTN. {text}.\nImp: chronic HFrEF.\n");
        assert_eq!(
            suggested(&note).last().map(String::as_str),
            Some(code),
            "{text}"
        );
        assert!(
            !diagnostics(&note)
                .iter()
                .any(|(r, _)| r == "ckd-stage-unspecified"),
            "{text}"
        );
    }
}

#[test]
fn acute_on_chronic_in_index_and_background_wording() {
    // ICD-10-CM Index/Tabular FY2026: "Acute on chronic diastolic (congestive) heart
    // failure" is the title of I50.33, and I50.23 the systolic one; the parenthesised word
    // between type and noun is the index's own wording.
    for (text, want) in [
        (
            "PRINCIPAL DIAGNOSIS: Acute on chronic diastolic (congestive) heart failure\n",
            "I50.33",
        ),
        (
            "Dx: acute on chronic systolic (congestive) heart failure.\n",
            "I50.23",
        ),
        // "acute decompensation of chronic ...": acute on chronic (ICD-10-CM index,
        // acute and chronic written together).
        (
            "Diagnosis: Acute decompensation of chronic heart failure with reduced ejection fraction.\n",
            "I50.23",
        ),
        (
            "Imp: acute exacerbation of chronic HFpEF.\n",
            "I50.33",
        ),
        // Decompensated on a background of / in known heart failure: acute on chronic
        // (AHA Coding Clinic 3Q 2008; domain reference 07 lists "known HF", "background
        // HFrEF" as chronic).
        (
            "I) Acute decompensated CCF on background of HFrEF (EF 35%).\n",
            "I50.23",
        ),
        ("Imp: decompensated HFpEF on a background of HTN.\nKnown HFpEF.\n", "I50.33"),
        ("Known HFrEF. Admitted with decompensated heart failure.\n", "I50.23"),
        // "Chronic" in a sentence of its own continues the heart failure named before it
        // (common practice, no source).
        (
            "HFpEF (EF 60% 2025), AF. Chronic, stable until this month.\nImpression: Decompensated HFpEF.\n",
            "I50.33",
        ),
    ] {
        let codes = suggested(text);
        assert!(codes.iter().any(|c| c == want), "{text}: {codes:?}");
    }
    // Without any chronic evidence decompensated stays acute (AHA Coding Clinic 3Q 2008).
    assert_eq!(
        suggested("Imp: decompensated HFrEF, first presentation.\n"),
        ["I50.21"]
    );
}

#[test]
fn uncertain_heart_failure_and_department_names_ask_for_no_code() {
    // ICD-10-CM Official Guidelines FY2026, Section IV.H: uncertain diagnoses are not coded
    // outside inpatient discharge, so type and acuity are not asked for yet.
    for text in [
        "Cardiology consult.\nImp: Possible new heart failure - not confirmed. TTE this week.\n",
        "Dear Dr Example,\nQuery HFpEF given hypertension and obesity. No echo yet.\n",
        "HF DAY UNIT - IV DIURETIC CLINIC\nSeen for IV furosemide. Weight 80 kg.\n",
    ] {
        let d = diagnostics(text);
        for rule in [
            "hf-acuity-unspecified",
            "hf-type-unspecified",
            "lvef-missing",
            "nyha-missing",
        ] {
            assert!(
                !d.iter().any(|(r, _)| r == rule),
                "{rule} fired on {text}: {d:?}"
            );
        }
    }
    // An affirmed heart failure still asks (ICD-10-CM Tabular I50.9 vs I50.2x-I50.4x).
    let d = diagnostics("Ward round.\nImp: heart failure. Weight 80 kg.\n");
    assert!(d.iter().any(|(r, _)| r == "hf-type-unspecified"), "{d:?}");
}
