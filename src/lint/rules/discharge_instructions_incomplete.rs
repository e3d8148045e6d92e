//! `discharge-instructions-incomplete`: see [`RULE`] and its documentation text.

use crate::lint::config::DischargeElement;
use crate::lint::kind::{has_phrase, DocKind};
use crate::lint::{Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::SectionKind;

pub const RULE: Rule = Rule {
    id: "discharge-instructions-incomplete",
    category: Category::Documentation,
    severity: Severity::Warning,
    summary: "Heart-failure discharge instructions lack one or more of the expected elements.",
    doc: DOC,
    kinds: &[DocKind::DischargeSummary],
    check,
};

const DOC: &str = "\
## What
Fires on a heart-failure discharge summary whose instructions do not cover every configured
element: activity level, diet and fluid advice, daily weight monitoring, follow-up, what to do
if symptoms worsen, and the discharge medications. It reads the wording of the discharge
instructions, follow-up, plan and discharge-medication sections (the whole note when it has
none of them), never the clinical findings. One diagnostic lists every missing element. The
element list and extra wording for each element are set in `tidemark.toml` under
`[lint.discharge]`. Only discharge summaries are checked.

## Why
These six elements are what a patient going home with heart failure needs written down; they
were the content of a long-standing US national discharge-instructions quality measure.
Missing instructions are commonly linked to early readmission.

## Fires
```text
Discharge summary ... Discharge medications: furosemide 40 mg od. Follow-up: HF clinic 2 weeks.
```
(activity, diet and fluid, weight monitoring and worsening-symptom advice are missing)

## Does not fire
```text
Discharge advice: walk daily as tolerated; 1.5 L fluid, low salt; weigh every morning; if
weight rises more than 2 kg in 3 days or breathing worsens, call the HF nurse. HF clinic in
2 weeks. Discharge medications: furosemide 40 mg od.
```

## Sources
Elements: The Joint Commission / CMS Specifications Manual for National Hospital Inpatient
Quality Measures, HF-1 discharge instructions (v2010A1): activity level, diet, discharge
medications, follow-up appointment, weight monitoring, what to do if symptoms worsen (the
measure is retired). Readmission link: common practice, no source.
";

/// Default wording that counts for each element (lower case; a trailing `*` matches a prefix).
fn default_words(e: DischargeElement) -> &'static [&'static str] {
    match e {
        DischargeElement::Activity => &[
            "activity",
            "activities",
            "active",
            "exercise*",
            "walk*",
            "mobilis*",
            "mobiliz*",
            "rehab*",
            "driving",
            "drive",
            "lifting",
            "rest",
        ],
        DischargeElement::DietFluid => &[
            "salt", "sodium", "fluid*", "diet*", "drink*", "litre*", "liter*", "low-salt",
        ],
        DischargeElement::WeightMonitoring => &[
            "weigh",
            "weighing",
            "weigh yourself",
            "daily weight*",
            "weight daily",
            "weights daily",
            "scales",
        ],
        DischargeElement::FollowUp => &[
            "follow-up",
            "follow up",
            "followup",
            "clinic",
            "appointment",
            "review in",
            "review by",
            "outpatient",
            "see gp",
            "gp review",
            "nurse visit",
            "telephone review",
        ],
        DischargeElement::WorseningSymptoms => &[
            "if you",
            "if your",
            "if symptoms",
            "if breath*",
            "if short*",
            "if weight",
            "if swelling",
            "worsen*",
            "seek",
            "call",
            "contact",
            "return to",
            "come back",
            "emergency",
            "999",
            "911",
        ],
        DischargeElement::Medications => {
            &["medication*", "medicines", "tablets", "tto", "drug chart"]
        }
    }
}

fn has_word(hay: &str, w: &str) -> bool {
    match w.strip_suffix('*') {
        Some(stem) => {
            let bytes = hay.as_bytes();
            hay.match_indices(stem)
                .any(|(i, _)| i == 0 || !bytes[i - 1].is_ascii_alphanumeric())
        }
        None => has_phrase(hay, w),
    }
}

/// A discharge summary's plain `Meds:` list names the medicines the patient goes home on,
/// unless its heading says they are the admission or usual ones (common practice, no source).
fn discharge_meds_list(cx: &Ctx<'_>) -> bool {
    cx.kind == DocKind::DischargeSummary
        && cx.ex.sections.iter().any(|s| {
            let title = s.title.to_ascii_lowercase();
            s.kind == SectionKind::Medications
                && ![
                    "admission",
                    "preadmission",
                    "drug history",
                    "dh",
                    "regular",
                    "usual",
                ]
                .iter()
                .any(|w| has_phrase(&title, w))
                && cx
                    .ex
                    .medications
                    .iter()
                    .any(|m| s.span.start <= m.span.start && m.span.end <= s.span.end)
        })
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    if !super::hf_relevant(cx.ex) || cx.cfg.discharge.elements.is_empty() {
        return;
    }
    let relevant = |k: SectionKind| {
        matches!(
            k,
            SectionKind::DischargeInstructions
                | SectionKind::FollowUp
                | SectionKind::Plan
                | SectionKind::DischargeMedications
        )
    };
    let sections: Vec<_> = cx.ex.sections.iter().filter(|s| relevant(s.kind)).collect();
    let region: String = if sections.is_empty() {
        cx.text.to_lowercase()
    } else {
        sections
            .iter()
            .filter_map(|s| cx.text.get(s.span.range()))
            .collect::<Vec<_>>()
            .join("\n")
            .to_lowercase()
    };
    let has_section = |k: SectionKind| sections.iter().any(|s| s.kind == k);
    let mut missing = Vec::new();
    for &e in &cx.cfg.discharge.elements {
        let by_section = match e {
            DischargeElement::FollowUp => has_section(SectionKind::FollowUp),
            DischargeElement::Medications => {
                has_section(SectionKind::DischargeMedications) || discharge_meds_list(cx)
            }
            _ => false,
        };
        let extra = cx.cfg.discharge.extra_words.get(&e);
        let by_words = default_words(e).iter().any(|w| has_word(&region, w))
            || extra.is_some_and(|ws| ws.iter().any(|w| has_word(&region, w)));
        if !by_section && !by_words {
            missing.push(e);
        }
    }
    if missing.is_empty() {
        return;
    }
    let labels: Vec<&str> = missing.iter().map(|e| e.label()).collect();
    let anchor = cx
        .ex
        .sections
        .iter()
        .find(|s| s.kind == SectionKind::DischargeInstructions)
        .map(|s| s.header);
    out.push(RULE.diag(
        format!(
            "The heart-failure discharge instructions do not cover: {}. Patients going home \
             with heart failure need written advice on activity, diet and fluids, daily \
             weights, follow-up, what to do if symptoms worsen, and their medications.",
            labels.join("; ")
        ),
        anchor,
    ));
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;
    use crate::lint::LintConfig;
    use crate::model::StatementKind;

    const PARTIAL: &str = "DISCHARGE SUMMARY\nDx: heart failure\nDischarge advice:\n\
        Furosemide 40 mg od.\nFollow-up: HF clinic in 2 weeks.\n";

    const FULL: &str = "DISCHARGE SUMMARY\nDx: heart failure\nDischarge advice:\n\
        Walk daily as tolerated. 1.5 L fluid a day, low salt. Weigh every morning; if weight \
        rises more than 2 kg in 3 days or breathing worsens, call the HF nurse.\n\
        Discharge medications: furosemide 40 mg od.\nFollow-up: HF clinic in 2 weeks.\n";

    fn note(text: &str) -> Note {
        Note::new(text)
            .stmt(StatementKind::HeartFailure, "", "heart failure")
            .section(SectionKind::DischargeInstructions, "Discharge advice:")
    }

    #[test]
    fn lists_every_missing_element() {
        let d = note(PARTIAL).check(&RULE);
        insta::assert_snapshot!(note(PARTIAL).rendered(&d));
        assert_eq!(d.len(), 1);
        let m = &d[0].message;
        for label in [
            "activity level",
            "diet and fluid",
            "daily weight",
            "symptoms worsen",
        ] {
            assert!(m.contains(label), "{label} missing from {m}");
        }
        assert!(!m.contains("follow-up arrangements"), "{m}");
        assert_eq!(d[0].span.unwrap().line, 3);
    }

    #[test]
    fn silent_when_complete_or_not_a_discharge() {
        assert!(note(FULL).check(&RULE).is_empty());
        let n = Note::new("Ward round\nheart failure\n").stmt(
            StatementKind::HeartFailure,
            "",
            "heart failure",
        );
        assert!(n.check(&RULE).is_empty());
    }

    #[test]
    fn a_discharge_weight_is_not_weight_monitoring_advice() {
        let text = PARTIAL.replace("Furosemide", "Discharge weight 70.3 kg. Furosemide");
        let d = note(&text).check(&RULE);
        assert!(
            d[0].message.contains("daily weight monitoring"),
            "{}",
            d[0].message
        );
    }

    #[test]
    fn configured_elements_and_words_apply() {
        let cfg = LintConfig::from_toml_str(
            "[discharge]\nelements = [\"activity\", \"follow-up\"]\n\
             [discharge.words]\nactivity = [\"gentle stroll\"]\n",
        )
        .unwrap();
        let text = PARTIAL.replace("Furosemide", "A gentle stroll daily. Furosemide");
        assert!(note(&text).check_with(&RULE, &cfg).is_empty());
        assert_eq!(note(PARTIAL).check_with(&RULE, &cfg).len(), 1);
    }
}
