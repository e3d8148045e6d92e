//! `tidemark extract` carries the medications of a note in its JSON.

use std::process::Command;

#[test]
fn extract_json_lists_medications() {
    let dir = std::env::temp_dir().join(format!("tidemark-meds-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("dir");
    let note = dir.join("note.txt");
    std::fs::write(
        &note,
        "Plan: IV furosemide 80 mg bd -> furosemide infusion 10 mg/h\nno MRA due to K\n",
    )
    .expect("note");
    let out = Command::new(env!("CARGO_BIN_EXE_tidemark"))
        .args(["extract", "--format", "json"])
        .arg(&note)
        .output()
        .expect("runs");
    assert!(out.status.success());
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    let meds = v["documents"][0]["medications"]
        .as_array()
        .expect("medications");
    assert_eq!(meds.len(), 3, "{meds:#?}");
    assert_eq!(meds[0]["drug"], "furosemide");
    assert_eq!(meds[0]["change"], "switched");
    // 10 mg/h × 24 h = 240 mg/day.
    assert_eq!(meds[1]["daily_dose"], 240.0);
    assert_eq!(meds[1]["class"], "loop_diuretic");
    assert_eq!(meds[2]["class"], "mra");
    assert_eq!(meds[2]["assertion"], "absent");
    assert!(meds[1]["span"]["line"] == 1 && meds[2]["span"]["line"] == 2);
    let _ = std::fs::remove_dir_all(&dir);
}

/// Run a tidemark subcommand on one invented note and return its JSON output.
fn run_json(sub: &str, name: &str, text: &str) -> serde_json::Value {
    let dir = std::env::temp_dir().join(format!("tidemark-meds-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("dir");
    let note = dir.join("note.txt");
    std::fs::write(&note, text).expect("note");
    let out = Command::new(env!("CARGO_BIN_EXE_tidemark"))
        .args([sub, "--format", "json"])
        .arg(&note)
        .output()
        .expect("runs");
    let _ = std::fs::remove_dir_all(&dir);
    serde_json::from_slice(&out.stdout).expect("json")
}

fn rules_fired(v: &serde_json::Value) -> Vec<String> {
    let mut out = Vec::new();
    for doc in v["documents"].as_array().into_iter().flatten() {
        for d in doc["diagnostics"].as_array().into_iter().flatten() {
            out.push(format!(
                "{} {}",
                d["rule"].as_str().unwrap_or(""),
                d["message"].as_str().unwrap_or("")
            ));
        }
    }
    out
}

#[test]
fn high_potassium_beside_a_continued_mra_or_trimethoprim_is_flagged() {
    // Spironolactone raises potassium (common practice, no source); trimethoprim does too, as
    // a listed side effect and interaction in the BNF (from memory). K above 5.5 mmol/L: the
    // ESC practical advice on MRAs (from memory), the rule's default threshold.
    let v = run_json(
        "lint",
        "k-high",
        "Renal review 30/11/2026 14:00\nchronic HFrEF, LVEF 28%.\nBloods: K+ 6.1 mmol/L, Na 134 mmol/L.\n\
         Current meds:\n- spironolactone 25mg OD\n- trimethoprim 200mg BD (for UTI, day 3)\n\
         Plan:\n- spironolactone continued\n- repeat K at 16:00\n",
    );
    let fired = rules_fired(&v);
    let k: Vec<&String> = fired
        .iter()
        .filter(|d| d.starts_with("potassium-raising-continued"))
        .collect();
    assert_eq!(k.len(), 2, "{fired:#?}");
    assert!(k.iter().any(|d| d.contains("spironolactone")), "{k:?}");
    assert!(k.iter().any(|d| d.contains("trimethoprim")), "{k:?}");
    // Held: the decision is written, so nothing fires for it.
    let v = run_json(
        "lint",
        "k-held",
        "Renal review 30/11/2026 14:00\nchronic HFrEF, LVEF 28%.\nBloods: K+ 6.1 mmol/L.\n\
         Plan: spironolactone held; trimethoprim stopped, nitrofurantoin instead.\n",
    );
    let fired = rules_fired(&v);
    assert!(
        !fired
            .iter()
            .any(|d| d.starts_with("potassium-raising-continued")),
        "{fired:#?}"
    );
}
