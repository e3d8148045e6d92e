//! The handover sheet on a hand-built invented ward day: grouping, ordering, the values on
//! the sheet (worked out by hand from the note text), the four renderers and escaping.

mod common;

use tidemark::handover::patients::Matcher;
use tidemark::handover::sheet::{Direction, GdmtStatus, Sheet};
use tidemark::handover::{self, build_sheet};
use tidemark::model::MedChange;

fn sheet() -> Sheet {
    build_sheet(&common::ward(), &Matcher::default())
}

fn render(f: fn(&mut Vec<u8>, &Sheet) -> std::io::Result<()>) -> String {
    let mut out = Vec::new();
    f(&mut out, &sheet()).expect("render");
    String::from_utf8(out).expect("utf-8")
}

#[test]
fn notes_are_grouped_by_patient_and_ordered_by_time() {
    let s = sheet();
    let groups: Vec<Vec<&str>> = s
        .patients
        .iter()
        .map(|p| p.notes.iter().map(|n| n.source.as_str()).collect())
        .collect();
    // Bed 5 (first seen in input 0) with its 08:30 note before its 16:00 note; bed 9; the
    // note without an identifier alone.
    assert_eq!(
        groups,
        vec![
            vec!["ward/bed05-1.txt", "ward/bed05-2.txt"],
            vec!["ward/bed09-1.txt"],
            vec!["ward/phone.txt"],
        ]
    );
    assert_eq!(
        s.patients[0].identifier.as_ref().map(|i| i.text.as_str()),
        Some("Ward 2 Bed 5 · MRN 0000501")
    );
    assert!(s.patients[2].identifier.is_none());
    assert_eq!(s.patients[0].today.as_deref(), Some("2026-04-10"));
}

#[test]
fn a_configured_pattern_groups_by_its_capture() {
    let inputs = vec![
        common::NoteBuilder::new("a.txt", "Ref: QX-17 morning\n").build(),
        common::NoteBuilder::new("b.txt", "Ref: QX-18\n").build(),
        common::NoteBuilder::new("c.txt", "Ref: QX-17 evening\n").build(),
    ];
    let m = Matcher::new(Some(r"Ref: (QX-\d+)")).expect("regex");
    let s = build_sheet(&inputs, &m);
    assert_eq!(s.patients.len(), 2);
    assert_eq!(s.patients[0].notes.len(), 2);
}

#[test]
fn values_on_the_sheet() {
    let s = sheet();
    let p = &s.patients[0];
    assert_eq!(p.age_sex.as_ref().map(|f| f.text.as_str()), Some("70 M"));
    let hf = p.heart_failure.as_ref().expect("hf");
    assert_eq!(hf.text, "HFrEF · acute on chronic · LVEF 30% · NYHA III");

    let prof = p.profile.as_ref().expect("profile");
    assert_eq!(prof.label, "warm-wet");
    assert_eq!(
        prof.evidence,
        "wet: JVP +4 cm, creps; warm: Warm peripheries"
    );

    // Latest observations (16:00) against the 08:30 set.
    let obs = |l: &str| p.observations.iter().find(|o| o.label == l).expect(l);
    assert_eq!(obs("BP").value, "102/64");
    assert_eq!(obs("BP").previous.as_deref(), Some("110/70"));
    assert_eq!(obs("BP").direction, Some(Direction::Down));
    assert_eq!(obs("SpO2").direction, Some(Direction::Up));
    assert_eq!(obs("RR").previous, None);

    // Weights 82.0 → 80.4 kg = -1.6 kg; 2.4 kg above the 78 kg target.
    let w = p.weight.as_ref().expect("weights");
    assert_eq!(w.points.len(), 3);
    assert_eq!(w.points[2].date.as_deref(), Some("2026-04-10"));
    assert!((w.change_kg.expect("change") + 1.6).abs() < 1e-9);
    assert!((w.above_target_kg.expect("target") - 2.4).abs() < 1e-9);

    // Balance: yesterday (09/04) -1200 mL, today (10/04) -800 mL → cumulative -2000 mL.
    let f = p.fluid_balance.as_ref().expect("balance");
    assert_eq!(f.today_ml, Some(-800.0));
    assert_eq!(f.cumulative_ml, Some(-2000.0));
    assert_eq!(f.days[0].date.as_deref(), Some("2026-04-09"));

    // Creatinine 120 (adm 105) → +15; eGFR by CKD-EPI 2021 for a 70-year-old man with
    // 120 µmol/L: 142 × (1.3575/0.9)^-1.200 × 0.9938^70 = 56.1 (computed by hand from the
    // published equation, Inker et al. 2021).
    let lab = |c: &str| p.renal.iter().find(|l| l.concept == c).expect(c);
    assert_eq!(lab("creatinine").change, Some(15.0));
    assert_eq!(lab("creatinine").previous_when.as_deref(), Some("adm"));
    assert_eq!(lab("egfr").latest, 56.1);
    assert_eq!(lab("potassium").previous, None);

    // IV furosemide 80 mg bd = 160 mg/day ≈ 320 mg oral furosemide (common practice, no
    // source: IV ≈ 2 × oral). The nursing "given" record keeps the regime.
    assert_eq!(p.diuretics.regime.len(), 1);
    assert_eq!(p.diuretics.regime[0].summary, "IV furosemide 80 mg bd");
    assert_eq!(p.diuretics.loop_total.oral_furosemide_mg, Some(320.0));
    assert!(p.diuretics.changes_today.is_empty());

    // GDMT for HFrEF: beta-blocker and ACE inhibitor on, MRA stated absent, SGLT2i silent.
    let g = |grp: &str| p.gdmt.iter().find(|g| g.group == grp).expect(grp);
    assert_eq!(g("beta_blocker").status, GdmtStatus::On);
    assert_eq!(g("acei_arb_arni").status, GdmtStatus::On);
    assert_eq!(g("acei_arb_arni").drugs[0].drug, "ramipril");
    assert_eq!(g("mra").status, GdmtStatus::NotOn);
    assert_eq!(g("sglt2_inhibitor").status, GdmtStatus::NotDocumented);

    // Plan lines from the latest note with a plan (the 08:30 round; the 16:00 nursing note
    // has none).
    let plan = p.plan.as_ref().expect("plan");
    assert_eq!(plan.note, 0);
    assert_eq!(plan.lines[0].text, "IV furosemide 80 mg bd, continue");
    assert_eq!(plan.lines.len(), 4);
    assert_eq!(p.to_check.len(), 1);
    assert_eq!(p.to_check[0].note, 1);

    // Bed 9 is HFpEF: only the classes its notes mention are listed.
    let b = &s.patients[1];
    assert_eq!(b.age_sex.as_ref().map(|f| f.text.as_str()), Some("80 F"));
    assert!(b.gdmt.is_empty(), "{:?}", b.gdmt);
    assert_eq!(b.weight.as_ref().map(|w| w.change_kg), Some(None));
    assert_eq!(b.diuretics.loop_total.oral_furosemide_mg, Some(40.0));
}

#[test]
fn every_item_keeps_a_span_into_its_note() {
    let inputs = common::ward();
    let s = build_sheet(&inputs, &Matcher::default());
    let p = &s.patients[0];
    let text_of = |note: usize| {
        let src = &p.notes[note].source;
        &inputs.iter().find(|i| &i.source == src).expect("note").text
    };
    let plan = p.plan.as_ref().expect("plan");
    for l in &plan.lines {
        assert_eq!(&text_of(l.source.note)[l.source.span.range()], l.text);
    }
    let d = &p.diuretics.regime[0];
    assert_eq!(
        &text_of(d.source.note)[d.source.span.range()],
        "IV furosemide 80 mg bd, continue"
    );
    for w in &p.weight.as_ref().expect("w").points {
        assert!(text_of(w.source.note)[w.source.span.range()].contains("kg"));
    }
    let id = p.identifier.as_ref().expect("id");
    assert_eq!(&text_of(0)[id.sources[0].span.range()], "Ward 2 Bed 5");
    // The JSON keeps them, flattened beside the note index.
    let v = handover::json::to_value(&s);
    let src = &v["patients"][0]["plan"]["lines"][0]["source"];
    assert_eq!(src["note"], 0);
    assert!(src["start"].as_u64().is_some() && src["line"].as_u64().is_some());
}

#[test]
fn changes_today_include_conditional_ones() {
    let text = "Bed 4   MRN 0000404   11/04/2026 09:00   HFrEF\n\
P: STOP IV furosemide 40 mg bd. Restart oral furosemide 20 mg od from tomorrow if Cr improving.\n\
   hold spironolactone (K 5.8)\n";
    let n = common::NoteBuilder::new("x.txt", text)
        .st("HFrEF", StatementKind::HfType, "hfref")
        .build();
    let s = build_sheet(&[n], &Matcher::default());
    let p = &s.patients[0];
    assert!(p.diuretics.regime.is_empty());
    let changes: Vec<_> = p
        .diuretics
        .changes_today
        .iter()
        .map(|m| (m.summary.as_str(), m.change))
        .collect();
    assert_eq!(
        changes,
        vec![
            ("IV furosemide 40 mg bd", Some(MedChange::Stopped)),
            ("PO furosemide 20 mg od", Some(MedChange::Started)),
        ]
    );
    let mra = p.gdmt.iter().find(|g| g.group == "mra").expect("mra");
    assert_eq!(mra.status, GdmtStatus::Held);
}

#[test]
fn a_class_named_without_a_drug() {
    let text = "Bed 6   MRN 0000606   11/04/2026 09:00   HFrEF\n\
On a beta-blocker. Not on an ACE inhibitor (angioedema). Spironolactone stopped.\n";
    let n = common::NoteBuilder::new("x.txt", text)
        .st("HFrEF", StatementKind::HfType, "hfref")
        .build();
    let s = build_sheet(&[n], &Matcher::default());
    let status = |grp: &str| {
        s.patients[0]
            .gdmt
            .iter()
            .find(|g| g.group == grp)
            .map(|g| g.status)
            .expect(grp)
    };
    assert_eq!(status("beta_blocker"), GdmtStatus::On);
    assert_eq!(status("acei_arb_arni"), GdmtStatus::NotOn);
    assert_eq!(status("mra"), GdmtStatus::Stopped);
    assert_eq!(status("sglt2_inhibitor"), GdmtStatus::NotDocumented);
}

use tidemark::model::StatementKind;

#[test]
fn text_sheet_fits_80_columns_and_carries_the_caution() {
    let t = render(handover::text::write::<Vec<u8>>);
    for l in t.lines() {
        assert!(l.chars().count() <= 80, "too wide: {l:?}");
        assert!(!l.contains('\u{1b}'), "colour code in {l:?}");
    }
    // Once at the top and once per patient (three patients).
    assert_eq!(t.matches("before handing over").count(), 4);
    assert!(t.contains(tidemark::render::CAUTION.split(';').next().expect("part")));
    insta::assert_snapshot!("ward_text", t);
}

#[test]
fn markdown_sheet() {
    let md = render(handover::markdown::write::<Vec<u8>>);
    assert!(!md.contains("<script>"));
    assert!(md.contains("&lt;script&gt;"));
    assert_eq!(md.matches("before handing over").count(), 4);
    insta::assert_snapshot!("ward_markdown", md);
}

#[test]
fn json_sheet() {
    let j = render(handover::json::write::<Vec<u8>>);
    let v: serde_json::Value = serde_json::from_str(&j).expect("json");
    assert_eq!(v["schema"], "tidemark-handover/1");
    assert_eq!(v["patients"].as_array().map(Vec::len), Some(3));
    for p in v["patients"].as_array().expect("patients") {
        assert!(p["caution"]
            .as_str()
            .expect("caution")
            .contains("before handing over"));
    }
    insta::assert_snapshot!("ward_json", j);
}

#[test]
fn json_matches_the_documented_schema() {
    let schema: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/docs/schema/handover.schema.json"
        ))
        .expect("schema file"),
    )
    .expect("schema is JSON");
    let v = handover::json::to_value(&sheet());
    // Every key the sheet emits is documented, and every required key is emitted.
    fn check(v: &serde_json::Value, s: &serde_json::Value, root: &serde_json::Value, path: &str) {
        let s = match s.get("$ref").and_then(|r| r.as_str()) {
            Some(r) => {
                let name = r.trim_start_matches("#/$defs/");
                &root["$defs"][name]
            }
            None => s,
        };
        if let Some(any) = s.get("anyOf").and_then(|a| a.as_array()) {
            if v.is_null() && any.iter().any(|a| a["type"] == "null") {
                return;
            }
            let non_null = any.iter().find(|a| a["type"] != "null").expect("branch");
            return check(v, non_null, root, path);
        }
        match v {
            serde_json::Value::Object(o) => {
                let props = s["properties"]
                    .as_object()
                    .unwrap_or_else(|| panic!("{path}: schema has no properties for an object"));
                for k in o.keys() {
                    if !props.contains_key(k) && !s["properties"].is_null() {
                        panic!("{path}.{k} is not documented");
                    }
                }
                for r in s["required"].as_array().into_iter().flatten() {
                    let r = r.as_str().expect("name");
                    assert!(o.contains_key(r), "{path}.{r} is required but missing");
                }
                for (k, val) in o {
                    check(val, &props[k], root, &format!("{path}.{k}"));
                }
            }
            serde_json::Value::Array(a) => {
                for (i, item) in a.iter().enumerate() {
                    check(item, &s["items"], root, &format!("{path}[{i}]"));
                }
            }
            _ => {}
        }
    }
    check(&v, &schema, &schema, "$");
}

#[test]
fn html_page_is_self_contained_and_escapes_note_text() {
    let h = render(handover::html::write::<Vec<u8>>);
    // The plan line of bed 5 carries an injected script tag: it must arrive as text.
    assert!(h.contains("daily weights &lt;script&gt;alert(&#39;x&#39;)&lt;/script&gt;"));
    assert!(!h.to_lowercase().contains("<script"));
    // Nothing is loaded from anywhere.
    for banned in ["http://", "https://", "src=", "href=", "@import", "url("] {
        assert!(!h.contains(banned), "{banned} in page");
    }
    // One card per patient; weight and balance charts for bed 5, a weight point for bed 9.
    assert_eq!(h.matches("<section class=\"card\">").count(), 3);
    assert_eq!(h.matches("<svg").count(), 3);
    assert!(h.contains("class=\"chart weight\""));
    assert!(h.contains("class=\"chart balance\""));
    assert_eq!(h.matches("before handing over").count(), 4);
    assert!(h.contains("size: A4 portrait"));
}

#[test]
fn an_empty_run_still_renders() {
    let s = build_sheet(&[], &Matcher::default());
    let mut out = Vec::new();
    handover::text::write(&mut out, &s).expect("text");
    handover::html::write(&mut out, &s).expect("html");
    handover::markdown::write(&mut out, &s).expect("md");
    let t = String::from_utf8(out).expect("utf-8");
    assert!(t.contains("No notes."));
    assert!(t.contains("before handing over"));
}

#[test]
fn command_line_reads_files_and_checks_the_pattern() {
    let dir = std::env::temp_dir().join(format!("tidemark-handover-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("dir");
    let a = dir.join("a.txt");
    let b = dir.join("b.txt");
    std::fs::write(
        &a,
        "Ref QX-1 12/04/2026 10:00\nPlan: bisoprolol 2.5 mg od\n",
    )
    .expect("a");
    std::fs::write(&b, "Ref QX-1 12/04/2026 08:00\nfurosemide 40 mg od\n").expect("b");
    let bin = env!("CARGO_BIN_EXE_tidemark");
    let out = std::process::Command::new(bin)
        .args([
            "handover",
            "--format",
            "json",
            "--patient-id",
            r"Ref (QX-\d+)",
        ])
        .arg(&a)
        .arg(&b)
        .output()
        .expect("runs");
    assert!(out.status.success());
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    // One patient; the 08:00 note first although it was given second.
    assert_eq!(v["patients"].as_array().map(Vec::len), Some(1));
    assert_eq!(v["patients"][0]["notes"][0]["time"], "08:00");
    let bad = std::process::Command::new(bin)
        .args(["handover", "--patient-id", "(unclosed"])
        .arg(&a)
        .output()
        .expect("runs");
    assert_eq!(bad.status.code(), Some(2));
    let _ = std::fs::remove_dir_all(&dir);
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(64))]
    /// Bad input never panics: any note text, grouped and rendered in every format.
    #[test]
    fn any_notes_render_in_every_format(
        a in "\\PC{0,80}", b in "(Bed [0-9]{1,2} |MRN [0-9]{7} |Plan: |P: - |furosemide 40 mg bd|\\n|\\u{a0}|<b>|&){0,12}"
    ) {
        let inputs = vec![
            common::NoteBuilder::new("a.txt", &format!("{b}{a}")).build(),
            common::NoteBuilder::new("b.txt", &format!("{a}\n{b}")).build(),
        ];
        let s = build_sheet(&inputs, &Matcher::default());
        let mut text = Vec::new();
        handover::text::write(&mut text, &s).expect("text");
        let text = String::from_utf8(text).expect("utf-8");
        for l in text.lines() {
            proptest::prop_assert!(l.chars().count() <= 80, "too wide: {:?}", l);
        }
        let mut out = Vec::new();
        handover::markdown::write(&mut out, &s).expect("markdown");
        handover::json::write(&mut out, &s).expect("json");
        handover::html::write(&mut out, &s).expect("html");
        let t = String::from_utf8(out).expect("utf-8");
        proptest::prop_assert!(t.contains("before handing over"));
    }
}

#[test]
fn an_undated_earlier_weight_comes_before_todays() {
    // Common practice, no source: "last clinic weight" names a weight from before this
    // note, so the sheet's series runs from it to today's dated weight (a gain, here).
    let text = "Bed 3   MRN 0000303   09/11/2026 10:00\n\
Weight 96.3 kg (last clinic weight 89 kg in Sept).\n";
    let n = common::NoteBuilder::new("x.txt", text)
        .m(
            "Weight 96.3 kg",
            0,
            tidemark::model::MeasureConcept::Weight,
            96.3,
            None,
            Some("2026-11-09"),
        )
        .m(
            "weight 89 kg",
            0,
            tidemark::model::MeasureConcept::Weight,
            89.0,
            Some(tidemark::model::TimeRef::Previous),
            None,
        )
        .build();
    let s = build_sheet(&[n], &Matcher::default());
    let w = s.patients[0].weight.as_ref().expect("weight series");
    let values: Vec<f64> = w.points.iter().map(|p| p.value).collect();
    assert_eq!(values, [89.0, 96.3]);
    assert_eq!(w.latest_kg, 96.3);
}

#[test]
fn a_converted_temperature_is_shown_to_a_tenth_of_a_degree() {
    // 97.2 °F = (97.2 - 32) x 5/9 = 36.222 °C (the Fahrenheit-Celsius relation, UCUM
    // [degF]); a thermometer reads to 0.1 °C (common practice, no source).
    let text = "Bed 8   MRN 0000808   18/11/2026 10:00\nT 97.2F\n";
    let n = common::NoteBuilder::new("x.txt", text)
        .m(
            "T 97.2F",
            0,
            tidemark::model::MeasureConcept::Temperature,
            (97.2 - 32.0) * 5.0 / 9.0,
            None,
            None,
        )
        .build();
    let s = build_sheet(&[n], &Matcher::default());
    let t = s.patients[0]
        .observations
        .iter()
        .find(|o| o.label == "T")
        .expect("temperature");
    assert_eq!(t.value, "36.2");
}

#[test]
fn a_haemolysed_potassium_carries_its_caveat() {
    // Common practice, no source: haemolysis falsely raises serum potassium, so the sheet
    // keeps the note's caveat beside the value.
    for (line, want) in [
        (
            "K 5.2 (haemolysed sample - repeat sent)",
            Some("haemolysed sample"),
        ),
        (
            "K 6.4 ?haemolysed, repeat",
            Some("possibly haemolysed sample"),
        ),
        ("K 5.2, repeat in the morning", None),
    ] {
        let text = format!("Bed 8   MRN 0000808   18/11/2026 10:00\n{line}\n");
        let n = common::NoteBuilder::new("x.txt", &text)
            .m(
                &line[..5],
                0,
                tidemark::model::MeasureConcept::Potassium,
                line[2..5].parse().expect("number"),
                None,
                None,
            )
            .build();
        let s = build_sheet(&[n], &Matcher::default());
        let k = s.patients[0]
            .renal
            .iter()
            .find(|l| l.concept == "potassium")
            .expect("potassium");
        assert_eq!(k.caveat.as_deref(), want, "{line:?}");
    }
}

/// The JSON sheet of one invented note, run through the binary.
fn sheet_of(name: &str, text: &str) -> serde_json::Value {
    let dir = std::env::temp_dir().join(format!("tidemark-handover-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let path = dir.join(format!("{name}.txt"));
    std::fs::write(&path, text).expect("write note");
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_tidemark"))
        .args(["handover", "--format", "json"])
        .arg(&path)
        .output()
        .expect("tidemark runs");
    let _ = std::fs::remove_dir_all(&dir);
    serde_json::from_slice(&out.stdout).expect("json")
}

fn plan_lines(v: &serde_json::Value) -> Vec<String> {
    v["patients"][0]["plan"]["lines"]
        .as_array()
        .expect("plan lines")
        .iter()
        .map(|l| l["text"].as_str().expect("text").to_string())
        .collect()
}

#[test]
fn the_plan_stops_at_a_sign_off_and_is_the_latest_days() {
    // Common practice, no source: a letter's closing is not a plan item, and in a record of
    // several days the registrar wants today's plan.
    let letter = "Heart Failure Clinic   MRN 0000909   03/12/2026\n\
Dear Dr Example,\n\
Plan:\n\
- Increase bisoprolol to 3.75 mg od.\n\
- Review in 8 weeks.\n\
\n\
Yours sincerely,\n\
\n\
Dr A Example\n\
Consultant Cardiologist\n";
    assert_eq!(
        plan_lines(&sheet_of("letter", letter)),
        ["Increase bisoprolol to 3.75 mg od.", "Review in 8 weeks."]
    );
    let days = "MRN 0000910\n\
=== 06/11/2026 09:00 WR ===\n\
Plan:\n\
- IV furosemide 120 mg bd.\n\
=== 07/11/2026 09:40 WR ===\n\
Wt 88.1 kg. BP 110/70.\n\
Plan:\n\
- Reduce IV furosemide to 80 mg bd.\n\
=== 08/11/2026 08:00 night ===\n\
Settled overnight. Obs stable.\n";
    assert_eq!(
        plan_lines(&sheet_of("days", days)),
        ["Reduce IV furosemide to 80 mg bd."]
    );
}

#[test]
fn a_baseline_weight_is_labelled_baseline_and_comes_before_admission() {
    // Common practice, no source: a usual (baseline) weight is not the admission weight.
    let text = "Bed 2   MRN 0000202   01/12/2026 10:00\n\
Weight 146.2 lbs (baseline 145). Admission weight 68 kg.\n";
    let n = common::NoteBuilder::new("x.txt", text)
        .m(
            "Weight 146.2 lbs",
            0,
            tidemark::model::MeasureConcept::Weight,
            66.3,
            None,
            Some("2026-12-01"),
        )
        .m(
            "baseline 145",
            0,
            tidemark::model::MeasureConcept::Weight,
            65.8,
            Some(tidemark::model::TimeRef::Baseline),
            None,
        )
        .m(
            "Admission weight 68 kg",
            0,
            tidemark::model::MeasureConcept::Weight,
            68.0,
            Some(tidemark::model::TimeRef::Admission),
            None,
        )
        .build();
    let s = build_sheet(&[n], &Matcher::default());
    let w = s.patients[0].weight.as_ref().expect("weight series");
    let labels: Vec<&str> = w.points.iter().map(|p| p.label.as_str()).collect();
    assert_eq!(labels, ["baseline", "adm", "01/12"]);
}

#[test]
fn a_switch_that_names_the_new_regime_keeps_the_drug_on() {
    // Common practice, no source: "IV -> PO" and "PO ... (switched from IV)" give the
    // regime now in force; "switched from IV furosemide" alone names only the old one.
    for (line, want) in [
        (
            "Plan: furosemide 40mg IV BD -> 40mg PO BD today",
            "PO furosemide 40 mg bd",
        ),
        (
            "Plan: PO furosemide 40mg om (switched from IV 26/11)",
            "PO furosemide 40 mg om",
        ),
    ] {
        let text = format!("Bed 4   MRN 0000404   28/11/2026 09:00\n{line}\n");
        let n = common::NoteBuilder::new("x.txt", &text).build();
        let s = build_sheet(&[n], &Matcher::default());
        let regime: Vec<_> = s.patients[0]
            .diuretics
            .regime
            .iter()
            .map(|m| m.summary.as_str())
            .collect();
        assert_eq!(regime, [want], "{line:?}");
    }
}

#[test]
fn a_switch_to_another_drug_takes_the_first_off_unless_only_planned() {
    // Common practice, no source.
    let text = "Bed 4   MRN 0000404   28/11/2026 09:00\n\
Plan: ramipril 2.5 mg bd -> switch to sacubitril/valsartan 24/26 mg bd\n";
    let n = common::NoteBuilder::new("x.txt", text).build();
    let s = build_sheet(&[n], &Matcher::default());
    let acei = s.patients[0]
        .gdmt
        .iter()
        .find(|g| g.group == "acei_arb_arni")
        .expect("group");
    assert!(
        acei.drugs.iter().all(|d| !d.summary.contains("ramipril")),
        "{:?}",
        acei.drugs
    );
    let text = "Bed 4   MRN 0000404   28/11/2026 09:00\n\
Plan: furosemide 80 mg IV BID -> transition to torsemide 40 mg PO daily tomorrow if Cr stable\n";
    let n = common::NoteBuilder::new("x.txt", text).build();
    let s = build_sheet(&[n], &Matcher::default());
    let regime: Vec<_> = s.patients[0]
        .diuretics
        .regime
        .iter()
        .map(|m| m.summary.as_str())
        .collect();
    assert_eq!(regime, ["IV furosemide 80 mg bid"]);
}

#[test]
fn a_change_for_a_later_day_leaves_todays_regime() {
    // Common practice, no source: "switch A to B from tomorrow" keeps A as today's regime
    // and lists B as tomorrow's change; an earlier day's scheduled change is in force.
    let text = "Bed 4   MRN 0000404   28/11/2026 09:00\n\
Plan: Switch IV furosemide 40mg bd to PO furosemide 40mg od from tomorrow\n";
    let n = common::NoteBuilder::new("x.txt", text).build();
    let s = build_sheet(&[n], &Matcher::default());
    let d = &s.patients[0].diuretics;
    let regime: Vec<_> = d.regime.iter().map(|m| m.summary.as_str()).collect();
    assert_eq!(regime, ["IV furosemide 40 mg bd"]);
    let later: Vec<_> = d
        .changes_today
        .iter()
        .map(|m| (m.summary.as_str(), m.starts.as_deref()))
        .collect();
    assert_eq!(later, [("PO furosemide 40 mg od", Some("tomorrow"))]);

    let day1 = common::NoteBuilder::new(
        "a.txt",
        "Bed 4   MRN 0000404   27/11/2026 09:00\n\
Plan: Switch IV furosemide 40mg bd to PO furosemide 40mg od from tomorrow\n",
    )
    .build();
    let day2 = common::NoteBuilder::new(
        "b.txt",
        "Bed 4   MRN 0000404   28/11/2026 09:00\nWeight 80.1 kg\n",
    )
    .build();
    let s = build_sheet(&[day1, day2], &Matcher::default());
    let regime: Vec<_> = s.patients[0]
        .diuretics
        .regime
        .iter()
        .map(|m| m.summary.as_str())
        .collect();
    assert_eq!(regime, ["PO furosemide 40 mg od"]);
}
