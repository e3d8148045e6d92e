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
