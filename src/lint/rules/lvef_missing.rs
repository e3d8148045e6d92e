//! `lvef-missing`: see [`RULE`] and its documentation text.

use super::patient_values;
use crate::lint::kind::ANY;
use crate::lint::{statements, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::{MeasureConcept, StatementKind};

pub const RULE: Rule = Rule {
    id: "lvef-missing",
    category: Category::Documentation,
    severity: Severity::Warning,
    summary: "A heart-failure assessment gives no ejection fraction.",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
Fires when a heart-failure discharge summary, medical assessment or clinic letter gives no
LVEF value. With neither an LVEF nor a stated type (HFrEF, HFpEF ...) it is a warning. When a
type or a qualitative LV function (\"severely impaired LV function\") is stated but no number
is, it fires as info: the type is documented, but the EF value and its date are what the type
rests on. Any LVEF value, even a range or a bound (`EF <20%`), silences it. It applies to
every kind of note that names heart failure, nursing and telephone entries included: whoever
reads the note next needs the EF, and its absence is worth a query.

## Why
LV systolic function drives both treatment and coding: the type of heart failure (I50.2-
systolic, I50.3- diastolic) follows from it, and assessing LV function (or planning it, or
giving a reason not to) is a long-standing heart-failure discharge quality measure.

## Fires
```text
Discharge summary. Admitted with decompensated heart failure. Diuresed 6 kg.
```

## Does not fire
```text
Discharge summary. Admitted with decompensated heart failure. Echo: LVEF 30%.
```

## Sources
LV function assessment as a discharge measure: The Joint Commission / CMS Specifications
Manual for National Hospital Inpatient Quality Measures, HF-2 data element \"LVF Assessment\"
(v2010B; retired). LVEF categories: Universal Definition of HF 2021; 2022 AHA/ACC/HFSA
guideline.
";

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    let Some(hf) = crate::lint::hf_mention(cx.ex) else {
        return;
    };
    if !patient_values(cx.ex, MeasureConcept::Lvef).is_empty() {
        return;
    }
    let typed = statements(cx.ex, StatementKind::HfType).first().copied();
    let lv = statements(cx.ex, StatementKind::LvFunction)
        .first()
        .copied();
    match typed.or(lv) {
        None => out.push(
            RULE.diag(
                "Heart failure is documented with no ejection fraction and no stated type. Record \
             the most recent LVEF with its date and source, or that it is awaited."
                    .into(),
                Some(hf.span),
            ),
        ),
        Some(s) => {
            let mut d = RULE.diag(
                format!(
                    "\"{}\" is stated but no LVEF value is given. Record the most recent LVEF \
                     with its date and source, which the type rests on.",
                    crate::lint::quote(&s.text)
                ),
                Some(s.span),
            );
            d.severity = Severity::Info;
            out.push(d);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;

    const DS: &str = "Discharge summary\nDx: decompensated heart failure, HFrEF.\nLVEF 30%.\n";

    #[test]
    fn fires_without_lvef_or_type() {
        let n = Note::new(DS).stmt(StatementKind::HeartFailure, "", "heart failure");
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 1);
        assert_eq!(d[0].severity, Severity::Warning);
    }

    #[test]
    fn type_without_number_is_info() {
        let n = Note::new(DS)
            .stmt(StatementKind::HeartFailure, "", "heart failure")
            .stmt(StatementKind::HfType, "hfref", "HFrEF");
        let d = n.check(&RULE);
        assert_eq!(d.len(), 1);
        assert_eq!(d[0].severity, Severity::Info);
    }

    #[test]
    fn silent_with_an_lvef_and_checked_in_nursing_entries() {
        let n = Note::new(DS)
            .stmt(StatementKind::HeartFailure, "", "heart failure")
            .meas(MeasureConcept::Lvef, 30.0, Some("%"), "LVEF 30%");
        assert!(n.check(&RULE).is_empty());
        let n = Note::new("Nursing night entry\nKnown heart failure.\n").stmt(
            StatementKind::HeartFailure,
            "",
            "heart failure",
        );
        assert_eq!(n.check(&RULE).len(), 1);
    }
}
