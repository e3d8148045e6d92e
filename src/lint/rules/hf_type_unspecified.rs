//! `hf-type-unspecified`: see [`RULE`] and its documentation text.

use super::patient_values;
use crate::lint::icd10cm::{code_and_title, EDITION};
use crate::lint::kind::ANY;
use crate::lint::{at_line, num, quote, statements, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::{MeasureConcept, Measurement, Qualifier, StatementKind};

pub const RULE: Rule = Rule {
    id: "hf-type-unspecified",
    category: Category::Coding,
    severity: Severity::Warning,
    summary: "Heart failure is named without a type; as written only I50.9 is supported.",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
Fires when heart failure is named (HF, CCF, CHF, heart failure, decompensated HF ...) and no
type is stated: not HFrEF / systolic, HFmrEF, HFpEF / diastolic, combined, nor HFimpEF.
With no LVEF in the note either it is a warning. When an LVEF value (or only a qualitative
description such as \"severely impaired LV function\") is documented but no type is written,
it still fires, at info: an EF number alone does not document the type for coding,
and the message says which LVEF category the number falls in so the coder can decide whether
to query. The message names what documentation would allow a code in I50.2- (systolic),
I50.3- (diastolic) or I50.4- (combined) and offers a neutral, non-leading query.

## Why
As written, \"heart failure\" without a type supports only ICD-10-CM I50.9 Heart failure,
unspecified. The type is what the clinician must write; coders may not infer it from an echo
report, so a query is the usual route.

## Fires
```text
Imp: decompensated CCF. Echo last year LVEF 30%.
```
(info: the EF is in the reduced range but no type is stated)

## Does not fire
```text
Imp: decompensated HFrEF, LVEF 30%.
```

## Sources
ICD-10-CM Tabular List FY2026, category I50 (CDC/NCHS); inclusion terms HFrEF under I50.2-,
HFpEF under I50.3-. An EF value alone does not set the type: widely reported coding advice
(coder to confirm). LVEF categories (<= 40 % reduced, 41-49 % mildly reduced, >= 50 %
preserved): Universal Definition of HF 2021; 2022 AHA/ACC/HFSA guideline. Query wording:
AHIMA/ACDIS Guidelines for Achieving a Compliant Query Practice (2022 update): indicators, no
leading, options include other and clinically undetermined.
";

/// The LVEF category of a value: `reduced`, `mildly reduced`, `preserved`, or `None` when a
/// range or bound straddles two categories.
pub(crate) fn lvef_category(m: &Measurement) -> Option<&'static str> {
    fn cat(v: f64) -> &'static str {
        if v <= 40.0 {
            "reduced"
        } else if v < 50.0 {
            "mildly reduced"
        } else {
            "preserved"
        }
    }
    let v = m.normalized.map(|q| q.value).unwrap_or(m.value);
    match (m.range, m.qualifier) {
        (Some((lo, hi)), _) => (cat(lo) == cat(hi)).then(|| cat(lo)),
        (None, Some(Qualifier::UpperBound)) => (v <= 41.0).then_some("reduced"),
        (None, Some(Qualifier::LowerBound)) => (v >= 50.0).then_some("preserved"),
        _ => Some(cat(v)),
    }
}

/// The most recent LVEF in the note (the last one written).
pub(crate) fn latest_lvef<'a>(cx: &Ctx<'a>) -> Option<&'a Measurement> {
    patient_values(cx.ex, MeasureConcept::Lvef).last().copied()
}

pub(crate) const TYPE_QUERY: &str = "Based on your clinical judgement, can the type of heart \
failure be further specified? For example: heart failure with reduced ejection fraction \
(systolic); with mildly reduced ejection fraction; with preserved ejection fraction \
(diastolic); combined systolic and diastolic; other (please specify); or clinically \
undetermined.";

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    let Some(hf) = super::hf_for_coding(cx) else {
        return;
    };
    let stated_in_picture = cx
        .pic
        .classifications
        .sources
        .hf_type
        .as_ref()
        .is_some_and(|s| s.basis == "stated");
    // A type written with doubt ("?HFpEF" in a discharge summary) is still a type named: the
    // message must not call it untyped.
    if !statements(cx.ex, StatementKind::HfType).is_empty()
        || stated_in_picture
        || hf.kind == StatementKind::HfType
    {
        return;
    }
    let named = quote(&hf.text);
    let unspecified = code_and_title("I50.9");
    let families = "A code in I50.2- (systolic, or reduced ejection fraction), I50.3- \
                    (diastolic, or preserved ejection fraction) or I50.4- (combined systolic \
                    and diastolic) needs the clinician to document the type.";
    let lv_words = statements(cx.ex, StatementKind::LvFunction).last().copied();
    let mut d = match (latest_lvef(cx), lv_words) {
        (None, Some(lv)) => {
            let mut d = RULE.diag(
                format!(
                    "Heart failure is named (\"{named}\") without a stated type. LV function is \
                     described (\"{}\", {}) but a description alone does not document the \
                     type for coding: as written the note supports only {unspecified} \
                     ({EDITION}). {families}",
                    quote(&lv.text),
                    at_line(&lv.span),
                ),
                Some(hf.span),
            );
            d.severity = Severity::Info;
            d
        }
        (None, None) => RULE.diag(
            format!(
                "Heart failure is named (\"{named}\") without a type, and no LVEF is given. As \
                 written the note supports only {unspecified} ({EDITION}). {families}"
            ),
            Some(hf.span),
        ),
        (Some(ef), _) => {
            let suggests = match lvef_category(ef) {
                Some(c) => format!("which is in the {c} range"),
                None => "which spans two LVEF categories".to_string(),
            };
            let mut d = RULE.diag(
                format!(
                    "Heart failure is named (\"{named}\") without a stated type. The LVEF \"{}\" \
                     ({}) is documented, {suggests}, but an ejection fraction alone does not \
                     document the type for coding: as written the note supports only \
                     {unspecified} ({EDITION}). {families}",
                    quote(&ef.text),
                    at_line(&ef.span),
                ),
                Some(hf.span),
            );
            d.severity = Severity::Info;
            d
        }
    };
    let indicators: Vec<String> = patient_values(cx.ex, MeasureConcept::Lvef)
        .iter()
        .map(|m| format!("LVEF {}% ({})", num(m.value), at_line(&m.span)))
        .collect();
    d.query = Some(crate::lint::query_with_indicators(TYPE_QUERY, &indicators));
    out.push(d);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;

    #[test]
    fn fires_as_warning_without_type_or_lvef() {
        let n = Note::new("Imp: decompensated CCF.\n").stmt(StatementKind::HeartFailure, "", "CCF");
        let d = n.check(&RULE);
        assert_eq!(d.len(), 1);
        assert_eq!(d[0].severity, Severity::Warning);
        // ICD-10-CM FY2026 tabular list: I50.9 Heart failure, unspecified.
        assert!(d[0].message.contains("I50.9 Heart failure, unspecified"));
        assert!(d[0].message.contains("I50.2-") && d[0].message.contains("I50.4-"));
        let q = d[0].query.as_deref().unwrap();
        // Compliant-query practice (AHIMA/ACDIS 2022): options include other and undetermined.
        assert!(
            q.contains("other") && q.contains("clinically undetermined"),
            "{q}"
        );
    }

    #[test]
    fn an_lvef_alone_still_fires_as_info_and_says_what_it_suggests() {
        let n = Note::new("Imp: decompensated CCF. Echo LVEF 30%.\n")
            .stmt(StatementKind::HeartFailure, "", "CCF")
            .meas(MeasureConcept::Lvef, 30.0, Some("%"), "LVEF 30%");
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 1);
        assert_eq!(d[0].severity, Severity::Info);
        // Universal Definition 2021: <= 40 % is reduced.
        assert!(d[0].message.contains("reduced range"), "{}", d[0].message);
        assert!(d[0].query.as_deref().unwrap().contains("LVEF 30% (line 1)"));
    }

    #[test]
    fn a_qualitative_lv_description_fires_as_info() {
        let n = Note::new("CCF. Severely impaired LV function.\n")
            .stmt(StatementKind::HeartFailure, "", "CCF")
            .stmt(
                StatementKind::LvFunction,
                "severe",
                "Severely impaired LV function",
            );
        let d = n.check(&RULE);
        assert_eq!(d[0].severity, Severity::Info);
        assert!(
            d[0].message.contains("LV function is described"),
            "{}",
            d[0].message
        );
    }

    #[test]
    fn silent_when_a_type_is_stated() {
        let n = Note::new("Imp: decompensated HFrEF.\n")
            .stmt(StatementKind::HeartFailure, "", "HFrEF")
            .stmt(StatementKind::HfType, "hfref", "HFrEF");
        assert!(n.check(&RULE).is_empty());
    }

    #[test]
    fn lvef_categories_follow_the_universal_definition() {
        // Universal Definition 2021 / AHA 2022: 40 reduced, 41 and 49 mildly reduced, 50
        // preserved; a range counts only when it lies in one category.
        let n = Note::new("EF 40 41 49 50 35-40 40-45 <20\n")
            .meas(MeasureConcept::Lvef, 40.0, Some("%"), "40")
            .meas(MeasureConcept::Lvef, 41.0, Some("%"), "41")
            .meas(MeasureConcept::Lvef, 49.0, Some("%"), "49")
            .meas(MeasureConcept::Lvef, 50.0, Some("%"), "50")
            .meas_with(MeasureConcept::Lvef, 37.5, Some("%"), false, "35-40", |m| {
                m.range = Some((35.0, 40.0))
            })
            .meas_with(MeasureConcept::Lvef, 42.5, Some("%"), false, "40-45", |m| {
                m.range = Some((40.0, 45.0))
            })
            .meas_with(MeasureConcept::Lvef, 20.0, Some("%"), false, "<20", |m| {
                m.qualifier = Some(Qualifier::UpperBound)
            });
        let cats: Vec<Option<&str>> = n.ex.measurements.iter().map(lvef_category).collect();
        assert_eq!(
            cats,
            vec![
                Some("reduced"),
                Some("mildly reduced"),
                Some("mildly reduced"),
                Some("preserved"),
                Some("reduced"),
                None,
                Some("reduced"),
            ]
        );
    }
}
