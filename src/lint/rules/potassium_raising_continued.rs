//! `potassium-raising-continued`: see [`RULE`] and its documentation text.

use super::patient_values;
use crate::lint::kind::MEDICAL;
use crate::lint::{at_line, num, quote, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::{Assertion, DrugClass, MeasureConcept, MedChange};

pub const RULE: Rule = Rule {
    id: "potassium-raising-continued",
    category: Category::Safety,
    severity: Severity::Warning,
    summary: "Potassium is high while a potassium-raising drug is continued without comment.",
    doc: DOC,
    kinds: MEDICAL,
    check,
};

const DOC: &str = "\
## What
Fires when the most recent potassium in the note is above the threshold (default greater than
5.5 mmol/L) and a potassium-raising drug (an MRA, ACE inhibitor, ARB, ARNI, a potassium
supplement, trimethoprim or co-trimoxazole, amiloride or triamterene) is mentioned as current or continued with no change or comment: not stopped, held,
reduced or switched anywhere in the note. One diagnostic per drug. The threshold is set in
`tidemark.toml` (`[lint.thresholds] potassium-high`).

## Why
Hyperkalaemia is a common reason these drugs are reduced or paused, and a note that
lists them as unchanged beside a high potassium reads as an oversight even when it is a
deliberate decision. The rule asks for the decision to be written, not for any particular
one; it never suggests starting or stopping a drug.

## Fires
```text
K 5.9. Meds: spironolactone 25 mg od, ramipril 5 mg od. Plan: continue.
```

## Does not fire
```text
K 5.9. Spironolactone held, ramipril reduced to 2.5 mg. Recheck U&E tomorrow.
```

## Sources
Threshold: the ESC heart failure guidelines' practical advice on MRAs, to halve the dose
above 5.5 mmol/L and stop above 6.0 mmol/L (from memory; tune locally). That these drug
classes raise potassium: common practice, no source. Trimethoprim (alone or in
co-trimoxazole), amiloride and triamterene: hyperkalaemia is listed among their side effects
and interactions in the BNF (from memory).
";

/// Drugs outside the classes below that raise potassium (BNF side effects and interactions,
/// from memory): trimethoprim acts on the distal tubule as amiloride does.
const POTASSIUM_RAISING_DRUGS: &[&str] =
    &["trimethoprim", "co-trimoxazole", "amiloride", "triamterene"];

fn raises_potassium(c: DrugClass, drug: &str) -> bool {
    POTASSIUM_RAISING_DRUGS.contains(&drug)
        || matches!(
            c,
            DrugClass::Mra
                | DrugClass::AceInhibitor
                | DrugClass::Arb
                | DrugClass::Arni
                | DrugClass::PotassiumSupplement
        )
}

fn class_label(c: DrugClass) -> &'static str {
    match c {
        DrugClass::Mra => "an MRA",
        DrugClass::AceInhibitor => "an ACE inhibitor",
        DrugClass::Arb => "an ARB",
        DrugClass::Arni => "an ARNI",
        DrugClass::PotassiumSupplement => "a potassium supplement",
        _ => "a potassium-raising drug",
    }
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    // The latest potassium: the last one written that no time word places earlier
    // (`K+ 6.1 mmol/L (5.4 two days ago)` is 6.1), else the last one written.
    let ks = patient_values(cx.ex, MeasureConcept::Potassium);
    let earlier = |m: &&crate::model::Measurement| {
        matches!(
            m.time_ref,
            Some(
                crate::model::TimeRef::Previous
                    | crate::model::TimeRef::Baseline
                    | crate::model::TimeRef::Admission
                    | crate::model::TimeRef::Yesterday
            )
        )
    };
    let Some(k) = ks.iter().rev().find(|m| !earlier(m)).or(ks.last()).copied() else {
        return;
    };
    let Some(q) = k.normalized else { return };
    let limit = cx.cfg.thresholds.potassium_high;
    if q.value <= limit || q.value > 10.0 {
        // Above 10 mmol/L is an implausible value, reported by value-implausible instead.
        return;
    }
    let mut seen: Vec<&str> = Vec::new();
    for m in &cx.ex.medications {
        if !raises_potassium(m.class, &m.drug) || m.assertion != Assertion::Present {
            continue;
        }
        if !matches!(m.change, None | Some(MedChange::Continued)) {
            continue;
        }
        let commented =
            cx.ex.medications.iter().any(|o| {
                o.drug == m.drug && !matches!(o.change, None | Some(MedChange::Continued))
            });
        if commented || seen.contains(&m.drug.as_str()) {
            continue;
        }
        seen.push(&m.drug);
        out.push(RULE.diag(
            format!(
                "Potassium is {} mmol/L (\"{}\", {}), above {} mmol/L, while {} ({}) is listed \
                 with no change or comment. Document the decision about {} in the light of the \
                 potassium.",
                num(q.value),
                quote(&k.text),
                at_line(&k.span),
                num(limit),
                m.drug,
                class_label(m.class),
                m.drug,
            ),
            Some(m.span),
        ));
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;

    #[test]
    fn an_earlier_value_written_after_does_not_hide_the_latest() {
        // Common practice, no source: "K+ 6.1 (5.4 two days ago)" is a potassium of 6.1
        // now; the threshold (5.5 mmol/L by default) is the rule's own configuration.
        let n = Note::new("K+ 6.1 mmol/L (5.4 two days ago). Continue spironolactone 25 mg od.\n")
            .meas(
                MeasureConcept::Potassium,
                6.1,
                Some("mmol/L"),
                "K+ 6.1 mmol/L",
            )
            .meas_with(
                MeasureConcept::Potassium,
                5.4,
                Some("mmol/L"),
                false,
                "5.4",
                |m| m.time_ref = Some(crate::model::TimeRef::Previous),
            )
            .med(
                "spironolactone",
                crate::model::DrugClass::Mra,
                Some(MedChange::Continued),
                "spironolactone 25 mg od",
            );
        assert_eq!(n.check(&RULE).len(), 1);
    }

    const NOTE: &str = "K 5.9. Meds: spironolactone 25 mg od, ramipril 5 mg od, bisoprolol.\n";

    fn base(k: f64) -> Note {
        Note::new(NOTE).meas(
            MeasureConcept::Potassium,
            k,
            Some("mmol/L"),
            &format!("K {}", num(k)),
        )
    }

    #[test]
    fn fires_per_raising_drug_continued() {
        let n = base(5.9)
            .med("spironolactone", DrugClass::Mra, None, "spironolactone")
            .med(
                "ramipril",
                DrugClass::AceInhibitor,
                Some(MedChange::Continued),
                "ramipril",
            )
            .med("bisoprolol", DrugClass::BetaBlocker, None, "bisoprolol");
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 2, "{d:?}");
        assert!(d[0].message.contains("an MRA"), "{}", d[0].message);
    }

    #[test]
    fn silent_when_the_drug_is_changed_or_potassium_is_not_high() {
        let n = base(5.9)
            .med("spironolactone", DrugClass::Mra, None, "spironolactone")
            .med(
                "spironolactone",
                DrugClass::Mra,
                Some(MedChange::Held),
                "spironolactone",
            );
        assert!(n.check(&RULE).is_empty());
        // 5.5 is not greater than 5.5.
        let n = Note::new(NOTE)
            .meas(MeasureConcept::Potassium, 5.5, Some("mmol/L"), "K 5.9")
            .med("spironolactone", DrugClass::Mra, None, "spironolactone");
        assert!(n.check(&RULE).is_empty());
    }

    #[test]
    fn trimethoprim_and_potassium_sparing_diuretics_raise_potassium() {
        // Hyperkalaemia is a listed side effect of trimethoprim (alone or as co-trimoxazole),
        // amiloride and triamterene in the BNF (from memory); furosemide lowers potassium.
        for drug in ["trimethoprim", "co-trimoxazole", "amiloride"] {
            let n = Note::new(&format!("K 6.1. Meds: {drug} 200 mg bd.\n"))
                .meas(MeasureConcept::Potassium, 6.1, Some("mmol/L"), "K 6.1")
                .med(drug, DrugClass::Other, None, drug);
            let d = n.check(&RULE);
            assert_eq!(d.len(), 1, "{drug}: {d:?}");
            assert!(d[0].message.contains(drug), "{}", d[0].message);
        }
        let n = Note::new("K 6.1. Meds: furosemide 40 mg od.\n")
            .meas(MeasureConcept::Potassium, 6.1, Some("mmol/L"), "K 6.1")
            .med("furosemide", DrugClass::LoopDiuretic, None, "furosemide");
        assert!(n.check(&RULE).is_empty());
    }
}
