//! End to end over the invented ward day in `corpora-synthetic/ward/` (4 patients, 10
//! notes). Expected values are worked out by hand from the note text; the snapshots are
//! recorded from reviewed output.

use std::process::Command;

fn run(format: &str) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_tidemark"))
        .args(["handover", "--format", format, "corpora-synthetic/ward"])
        // A relative path, so that sources in the snapshots do not depend on the checkout.
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("tidemark runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).expect("utf-8")
}

fn patient<'a>(v: &'a serde_json::Value, mrn: &str) -> &'a serde_json::Value {
    v["patients"]
        .as_array()
        .expect("patients")
        .iter()
        .find(|p| {
            p["identifier"]["text"]
                .as_str()
                .is_some_and(|t| t.contains(mrn))
        })
        .unwrap_or_else(|| panic!("no patient {mrn}"))
}

fn lab<'a>(p: &'a serde_json::Value, concept: &str) -> &'a serde_json::Value {
    p["renal"]
        .as_array()
        .expect("renal")
        .iter()
        .find(|l| l["concept"] == concept)
        .unwrap_or_else(|| panic!("no {concept}"))
}

fn gdmt(p: &serde_json::Value, group: &str) -> String {
    p["gdmt"]
        .as_array()
        .expect("gdmt")
        .iter()
        .find(|g| g["group"] == group)
        .map(|g| g["status"].as_str().unwrap_or("").to_string())
        .unwrap_or_else(|| "absent".into())
}

fn close(v: &serde_json::Value, expected: f64) -> bool {
    v.as_f64().is_some_and(|x| (x - expected).abs() < 0.05)
}

#[test]
fn ward_day_values() {
    let v: serde_json::Value = serde_json::from_str(&run("json")).expect("json");
    assert_eq!(v["patients"].as_array().map(Vec::len), Some(4));

    // Bed 3: three notes 08:45, 14:00, 19:30.
    let b3 = patient(&v, "0000301");
    assert_eq!(b3["notes"].as_array().map(Vec::len), Some(3));
    assert_eq!(b3["notes"][2]["time"], "19:30");
    assert_eq!(b3["age_sex"]["text"], "74 M");
    assert_eq!(b3["heart_failure"]["hf_type"], "hfref");
    assert_eq!(b3["heart_failure"]["nyha"], "III");
    assert_eq!(b3["profile"]["label"], "warm-wet");
    // Weights 13/03 88.9 → 16/03 85.7 kg: -3.2 kg.
    assert!(close(&b3["weight"]["change_kg"], -3.2));
    // Balance 15/03 -1.3 L, 16/03 -950 mL (00:00-14:00): cumulative -2250 mL.
    assert!(close(&b3["fluid_balance"]["today_ml"], -950.0));
    assert!(close(&b3["fluid_balance"]["cumulative_ml"], -2250.0));
    // Cr 131 → 134; K 4.1 (AM) → 3.6.
    assert!(close(&lab(b3, "creatinine")["latest"], 134.0));
    assert!(close(&lab(b3, "creatinine")["change"], 3.0));
    assert!(close(&lab(b3, "potassium")["latest"], 3.6));
    assert!(close(&lab(b3, "potassium")["previous"], 4.1));
    // IV furosemide 80 mg bd = 160 mg/day ≈ 320 mg oral (common practice: IV ≈ 2 × oral).
    assert!(close(
        &b3["diuretics"]["loop_total"]["oral_furosemide_mg"],
        320.0
    ));
    for g in ["beta_blocker", "acei_arb_arni", "mra", "sglt2_inhibitor"] {
        assert_eq!(gdmt(b3, g), "on", "{g}");
    }
    assert!(b3["plan"]["lines"][0]["text"]
        .as_str()
        .is_some_and(|t| t.contains("potassium chloride")));

    // Bed 7: over-diuresed, below a ~69 kg target.
    let b7 = patient(&v, "0000702");
    assert!(close(&b7["weight"]["change_kg"], -6.6));
    assert!(close(&b7["weight"]["above_target_kg"], -1.4));
    assert!(close(&b7["fluid_balance"]["today_ml"], 650.0));
    assert!(close(&lab(b7, "creatinine")["previous"], 161.0));
    assert_eq!(b7["diuretics"]["regime"].as_array().map(Vec::len), Some(0));
    assert_eq!(gdmt(b7, "mra"), "held");
    assert_eq!(gdmt(b7, "sglt2_inhibitor"), "held");

    // Bed 12: furosemide infusion 20 mg/h = 480 mg/day IV ≈ 960 mg oral.
    let b12 = patient(&v, "0001203");
    assert!(b12["profile"]["label"]
        .as_str()
        .is_some_and(|l| l.starts_with("cold")));
    assert!(close(&lab(b12, "creatinine")["change"], 46.0));
    assert!(close(&lab(b12, "potassium")["latest"], 5.6));
    assert!(close(
        &b12["diuretics"]["loop_total"]["oral_furosemide_mg"],
        960.0
    ));
    assert_eq!(gdmt(b12, "beta_blocker"), "held");
    assert_eq!(gdmt(b12, "acei_arb_arni"), "held");

    // Bed 15: oral furosemide 40 mg od from today; ramipril switched to the ARNI.
    let b15 = patient(&v, "0001504");
    assert!(close(&b15["weight"]["change_kg"], -6.4));
    assert!(close(&b15["fluid_balance"]["cumulative_ml"], -600.0));
    assert!(close(
        &b15["diuretics"]["loop_total"]["oral_furosemide_mg"],
        40.0
    ));
    assert_eq!(gdmt(b15, "acei_arb_arni"), "on");
}

#[test]
fn ward_day_snapshots() {
    insta::assert_snapshot!("ward_day_text", run("text"));
    insta::assert_snapshot!("ward_day_markdown", run("markdown"));
    insta::assert_snapshot!("ward_day_json", run("json"));
    let html = run("html");
    assert_eq!(html.matches("<section class=\"card\">").count(), 4);
}

/// An undated note's "yesterday" values are another day than its own: the weight series
/// keeps all three weights and the balance is not shown as today's (worked out by hand).
#[test]
fn an_undated_notes_yesterday_is_its_own_day() {
    let dir = tempfile::tempdir().expect("temp dir");
    let note = dir.path().join("bed14.txt");
    std::fs::write(
        &note,
        "Ward round Bed 14\nWt today 81.2 kg (yest 82.0 kg, adm 85.6 kg). FB -1.4L yesterday.\n",
    )
    .expect("write note");
    let run = |format: &str| {
        let out = Command::new(env!("CARGO_BIN_EXE_tidemark"))
            .args(["handover", "--format", format])
            .arg(&note)
            .output()
            .expect("tidemark runs");
        String::from_utf8(out.stdout).expect("utf-8")
    };
    let v: serde_json::Value = serde_json::from_str(&run("json")).expect("json");
    let p = &v["patients"][0];
    let series: Vec<(String, f64)> = p["weight"]["points"]
        .as_array()
        .expect("weight points")
        .iter()
        .map(|pt| {
            (
                pt["label"].as_str().unwrap_or("").to_string(),
                pt["value"].as_f64().unwrap_or(0.0),
            )
        })
        .collect();
    assert_eq!(
        series,
        [
            ("adm".to_string(), 85.6),
            ("yest".to_string(), 82.0),
            ("note 1".to_string(), 81.2)
        ]
    );
    assert!(
        p["fluid_balance"]["today_ml"].is_null(),
        "{}",
        p["fluid_balance"]
    );
    let text = run("text");
    assert!(text.contains("today not written; yest -1400 mL"), "{text}");
}
