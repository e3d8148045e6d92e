//! `hf-type-ef-mismatch`: see [`RULE`] and its documentation text.

use super::hf_type_unspecified::lvef_category;
use crate::lint::kind::ANY;
use crate::lint::{at_line, num, quote, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::{
    Assertion, Experiencer, MeasureConcept, Measurement, Statement, StatementKind, Temporality,
};

pub const RULE: Rule = Rule {
    id: "hf-type-ef-mismatch",
    category: Category::Consistency,
    severity: Severity::Warning,
    summary: "The stated heart-failure type disagrees with the current LVEF.",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
Fires when the heart-failure type the note states (HFrEF, HFmrEF, HFpEF, HFimpEF, or
systolic / diastolic) falls in another LVEF category than the latest current LVEF of the
note: HFpEF written beside an LVEF of 38 %, HFrEF beside an LVEF of 60 %, HFimpEF beside an
LVEF that is still 40 % or less. An LVEF marked as previous or historical, a range that
spans two categories, and a type the note itself corrects or denies do not count.

## Why
The type decides the ICD-10-CM subcategory (I50.2- systolic, I50.3- diastolic). When the
words and the echo disagree (a label carried forward from an earlier letter, a new echo
that changed the picture), the coder cannot choose between them and the clinician should
be asked which is right.

## Fires
```text
Imp: decompensated HFpEF. Echo this admission: LVEF 35%.
```

## Does not fire
```text
Imp: decompensated HFpEF. Echo this admission: LVEF 60%.
Imp: HFimpEF. Previous echo LVEF 30%, now 52%.
```

## Sources
LVEF categories (<= 40 % reduced, 41-49 % mildly reduced, >= 50 % preserved; improved: a
previous LVEF <= 40 % and a follow-up above 40 %): Universal Definition of Heart Failure,
Bozkurt et al. 2021; 2022 AHA/ACC/HFSA guideline. ICD-10-CM Tabular List FY2026, category
I50 (CDC/NCHS). Query wording: AHIMA/ACDIS Guidelines for Achieving a Compliant Query
Practice (2022 update): indicators, no leading, options include other and clinically
undetermined.
";

const QUERY: &str = "The note states one type of heart failure and documents an ejection \
fraction in another category. Based on your clinical judgement, which best describes this \
patient's heart failure? For example: heart failure with reduced ejection fraction \
(systolic); with mildly reduced ejection fraction; with preserved ejection fraction \
(diastolic); with improved ejection fraction; other (please specify); or clinically \
undetermined.";

/// The LVEF categories a stated type is consistent with.
fn fits(hf_type: &str, category: &str) -> bool {
    match hf_type {
        "hfref" => category == "reduced",
        "hfmref" => category == "mildly reduced",
        "hfpef" => category == "preserved",
        // Improved: the follow-up LVEF is above 40 % (Bozkurt et al. 2021).
        "hfimpef" => category != "reduced",
        _ => true,
    }
}

/// The latest stated type about the patient now: present, current, not corrected.
fn stated_type<'a>(cx: &Ctx<'a>) -> Option<&'a Statement> {
    cx.ex
        .statements
        .iter()
        .filter(|s| {
            s.kind == StatementKind::HfType
                && s.assertion == Assertion::Present
                && s.temporality == Temporality::Current
                && s.experiencer == Experiencer::Patient
        })
        .max_by_key(|s| s.span.start)
}

/// The latest current LVEF of the patient (not previous, baseline or historical).
fn current_lvef<'a>(cx: &Ctx<'a>) -> Option<&'a Measurement> {
    super::patient_values(cx.ex, MeasureConcept::Lvef)
        .into_iter()
        .filter(|m| {
            m.assertion == Assertion::Present
                && m.temporality == Temporality::Current
                && !matches!(
                    m.time_ref,
                    Some(
                        crate::model::TimeRef::Previous
                            | crate::model::TimeRef::Baseline
                            | crate::model::TimeRef::Admission
                    )
                )
        })
        .max_by(|a, b| {
            let da = super::value_date(cx.ex, a);
            let db = super::value_date(cx.ex, b);
            da.cmp(&db).then(a.span.start.cmp(&b.span.start))
        })
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    let (Some(t), Some(ef)) = (stated_type(cx), current_lvef(cx)) else {
        return;
    };
    let Some(category) = lvef_category(ef) else {
        return;
    };
    if fits(&t.value, category) {
        return;
    }
    let mut d = RULE.diag(
        format!(
            "The stated type \"{}\" ({}) disagrees with the LVEF \"{}\" ({}), which is in the \
             {category} range. The type decides the ICD-10-CM subcategory (I50.2- systolic, \
             I50.3- diastolic); ask the clinician which describes the patient now.",
            quote(&t.text),
            at_line(&t.span),
            quote(&ef.text),
            at_line(&ef.span),
        ),
        Some(t.span),
    );
    let indicators = vec![
        format!("stated \"{}\" ({})", quote(&t.text), at_line(&t.span)),
        format!("LVEF {}% ({})", num(ef.value), at_line(&ef.span)),
    ];
    d.query = Some(crate::lint::query_with_indicators(QUERY, &indicators));
    out.push(d);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;

    fn hf(text: &str, value: &str, stated: &str, ef: f64, ef_text: &str) -> Note {
        Note::new(text)
            .stmt(StatementKind::HfType, value, stated)
            .meas(MeasureConcept::Lvef, ef, Some("%"), ef_text)
    }

    #[test]
    fn a_type_in_another_lvef_category_fires() {
        // Universal Definition of HF 2021: <= 40 % reduced, >= 50 % preserved.
        let n = hf(
            "Imp: decompensated HFpEF. Echo this admission: LVEF 35%.\n",
            "hfpef",
            "HFpEF",
            35.0,
            "LVEF 35%",
        );
        let d = n.check(&RULE);
        assert_eq!(d.len(), 1);
        assert!(d[0].message.contains("reduced range"), "{}", d[0].message);
        let q = d[0].query.as_deref().expect("query");
        // Compliant-query practice (AHIMA/ACDIS 2022): indicators and non-leading options.
        assert!(q.contains("LVEF 35%") && q.contains("clinically undetermined"));
        let n = hf(
            "HFrEF. TTE: LVEF 60%.\n",
            "hfref",
            "HFrEF",
            60.0,
            "LVEF 60%",
        );
        assert_eq!(n.check(&RULE).len(), 1);
        // Improved EF is a follow-up above 40 % (Bozkurt et al. 2021).
        let n = hf(
            "HFimpEF. Echo LVEF 35%.\n",
            "hfimpef",
            "HFimpEF",
            35.0,
            "LVEF 35%",
        );
        assert_eq!(n.check(&RULE).len(), 1);
    }

    #[test]
    fn matching_previous_or_corrected_types_do_not_fire() {
        let n = hf(
            "HFpEF. Echo LVEF 60%.\n",
            "hfpef",
            "HFpEF",
            60.0,
            "LVEF 60%",
        );
        assert!(n.check(&RULE).is_empty());
        let n = hf(
            "HFimpEF. Echo LVEF 52%.\n",
            "hfimpef",
            "HFimpEF",
            52.0,
            "LVEF 52%",
        );
        assert!(n.check(&RULE).is_empty());
        // A previous echo is not the current LVEF.
        let mut n = hf(
            "HFpEF. Previous echo LVEF 35%.\n",
            "hfpef",
            "HFpEF",
            35.0,
            "LVEF 35%",
        );
        n.ex.measurements[0].temporality = Temporality::Historical;
        assert!(n.check(&RULE).is_empty());
        // A type the note corrects is denied, so it states nothing.
        let mut n = hf(
            "Recorded as \"HFpEF\" - this is incorrect. LVEF 38%.\n",
            "hfpef",
            "HFpEF",
            38.0,
            "LVEF 38%",
        );
        n.ex.statements[0].assertion = Assertion::Absent;
        assert!(n.check(&RULE).is_empty());
    }
}
