//! `hf-acuity-unspecified`: see [`RULE`] and its documentation text.

use crate::lint::icd10cm::{code_and_title, family_of_type, EDITION};
use crate::lint::kind::ANY;
use crate::lint::{quote, statements, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::StatementKind;

pub const RULE: Rule = Rule {
    id: "hf-acuity-unspecified",
    category: Category::Coding,
    severity: Severity::Warning,
    summary: "Heart failure is named without an acuity (acute, chronic, acute on chronic).",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
Fires when heart failure is named and no acuity is stated: none of acute (or new onset, de
novo), chronic (or compensated), acute on chronic, or decompensated / exacerbation (which code
as acute, or acute on chronic when chronic heart failure is documented). When the type is
stated the message names the type's unspecified-acuity code and the three specific ones; when
it is not, it says the note supports only I50.9. A neutral query is offered.

## Why
ICD-10-CM codes systolic, diastolic and combined heart failure by acuity in the fifth
character (0 unspecified, 1 acute, 2 chronic, 3 acute on chronic). Without an acuity word the
most a coder can assign is the unspecified-acuity code, and words such as \"fluid overload\" or
\"congestion\" describe a state, not an acuity.

## Fires
```text
Imp: HFrEF with fluid overload. Plan IV furosemide.
```

## Does not fire
```text
Imp: acute on chronic HFrEF. Plan IV furosemide.
```

## Sources
ICD-10-CM Tabular List FY2026, I50.2- to I50.4- fifth characters (CDC/NCHS). Decompensated as
acute, or acute on chronic with known chronic HF: widely reported coding advice (coder to
confirm). Query practice: AHIMA/ACDIS 2022.
";

pub(crate) const ACUITY_QUERY: &str = "Based on your clinical judgement, can the acuity of the \
heart failure be further specified: acute, chronic, acute on chronic, other (please specify), \
or clinically undetermined?";

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    let Some(hf) = super::hf_for_coding(cx) else {
        return;
    };
    if !statements(cx.ex, StatementKind::Acuity).is_empty()
        || cx.pic.classifications.acuity.is_some()
    {
        return;
    }
    let stated_type = statements(cx.ex, StatementKind::HfType).last().copied();
    let family = stated_type.and_then(|s| family_of_type(&s.value));
    let message = match (stated_type, family) {
        (Some(t), Some(fam)) => format!(
            "Heart failure is documented as \"{}\" without an acuity. As written this supports \
             only {} ({EDITION}); {fam}1 (acute), {fam}2 (chronic) or {fam}3 (acute on \
             chronic) need the clinician to document the acuity.",
            quote(&t.text),
            code_and_title(&format!("{fam}0")),
        ),
        (Some(t), None) => format!(
            "Heart failure is documented as \"{}\" without an acuity. Which subcategory this \
             type codes to is for the coder to decide (for improved EF it depends on the current \
             EF); in each of I50.2-, I50.3- and I50.4- the fifth character needs the acuity: \
             1 acute, 2 chronic, 3 acute on chronic ({EDITION}).",
            quote(&t.text),
        ),
        (None, _) => format!(
            "Heart failure is named (\"{}\") without an acuity (acute, chronic, acute on \
             chronic). As written the note supports only {} ({EDITION}); a specific code in \
             I50.2x-I50.4x needs both the type and the acuity documented.",
            quote(&hf.text),
            code_and_title("I50.9"),
        ),
    };
    let mut d = RULE.diag(message, Some(stated_type.map_or(hf.span, |s| s.span)));
    d.query = Some(ACUITY_QUERY.to_string());
    out.push(d);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;

    #[test]
    fn fires_with_the_types_unspecified_code() {
        let n = Note::new("Imp: HFrEF with fluid overload.\n")
            .stmt(StatementKind::HeartFailure, "", "HFrEF")
            .stmt(StatementKind::HfType, "hfref", "HFrEF");
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 1);
        // ICD-10-CM FY2026: I50.20 Unspecified systolic (congestive) heart failure.
        assert!(
            d[0].message
                .contains("I50.20 Unspecified systolic (congestive) heart failure"),
            "{}",
            d[0].message
        );
        assert!(d[0].message.contains("I50.23 (acute on chronic)"));
        assert!(d[0]
            .query
            .as_deref()
            .unwrap()
            .contains("clinically undetermined"));
    }

    #[test]
    fn fires_with_i50_9_when_untyped() {
        let n = Note::new("Known CCF.\n").stmt(StatementKind::HeartFailure, "", "CCF");
        let d = n.check(&RULE);
        assert!(d[0].message.contains("I50.9 Heart failure, unspecified"));
    }

    #[test]
    fn an_improved_ef_type_leaves_the_subcategory_to_the_coder() {
        let n = Note::new("Known HFimpEF.\n").stmt(StatementKind::HfType, "hfimpef", "HFimpEF");
        let d = n.check(&RULE);
        assert!(d[0].message.contains("fifth character"), "{}", d[0].message);
        assert!(!d[0].message.contains("I50.9"), "{}", d[0].message);
    }

    #[test]
    fn silent_with_an_acuity_word() {
        let n = Note::new("Imp: decompensated HFrEF.\n")
            .stmt(StatementKind::Acuity, "decompensated", "decompensated")
            .stmt(StatementKind::HfType, "hfref", "HFrEF");
        assert!(n.check(&RULE).is_empty());
    }
}
