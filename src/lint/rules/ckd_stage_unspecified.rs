//! `ckd-stage-unspecified`: see [`RULE`] and its documentation text.

use crate::lint::icd10cm::{code_and_title, EDITION};
use crate::lint::kind::ANY;
use crate::lint::{at_line, num, quote, statements, Category, Ctx, Diagnostic, Rule};
use crate::model::{MeasureConcept, StatementKind};

use super::patient_values;

pub const RULE: Rule = Rule {
    id: "ckd-stage-unspecified",
    category: Category::Coding,
    severity: crate::lint::Severity::Warning,
    summary: "Chronic kidney disease is named without a stage.",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
Fires when chronic kidney disease is named (\"CKD\", \"chronic kidney disease\") and no stage
is written with it anywhere in the note (\"CKD 3b\", \"CKD stage 4\", \"stage 3 CKD\", \"CKD
G4\", or end-stage renal disease). A neutral query is offered, with the creatinine values of
the note as clinical indicators.

## Why
ICD-10-CM codes CKD by stage (N18.1 to N18.6); unstaged CKD is N18.9. With hypertension and
heart failure the combination code depends on the stage as well: I13.0 for stages 1 to 4 or
unspecified, I13.2 for stage 5 or end-stage renal disease.

## Fires
```text
PMH: HTN, CKD. Chronic HFrEF.
```

## Does not fire
```text
PMH: HTN, CKD stage 3b. Chronic HFrEF.
```

## Sources
ICD-10-CM Tabular List FY2026, N18 and I13 (CDC/NCHS); domain reference 08-icd10cm.md §8.2
and §8.4 (\"Stage of CKD\" query trigger). Stages 1-5 with 3a/3b: KDIGO 2012. Query practice:
AHIMA/ACDIS 2022.
";

pub(crate) const STAGE_QUERY: &str = "Based on your clinical judgement, can the stage of the \
chronic kidney disease be further specified: stage 1, 2, 3a, 3b, 4 or 5, end-stage renal \
disease, other (please specify), or clinically undetermined?";

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    let ckd = statements(cx.ex, StatementKind::Ckd);
    let Some(first) = ckd.first() else { return };
    if ckd.iter().any(|s| s.value != "unstaged") {
        return;
    }
    let mut d = RULE.diag(
        format!(
            "Chronic kidney disease is named (\"{}\") without a stage. As written it supports \
             only {} ({EDITION}); a stage code (N18.1 to N18.6) needs the clinician to document \
             the stage, and with hypertension and heart failure the stage decides between I13.0 \
             and I13.2.",
            quote(&first.text),
            code_and_title("N18.9"),
        ),
        Some(first.span),
    );
    let indicators: Vec<String> = patient_values(cx.ex, MeasureConcept::Creatinine)
        .iter()
        .map(|m| {
            let (v, u) = m.normalized.map_or((m.value, ""), |q| {
                (q.value, crate::lint::unit_display(q.unit))
            });
            format!("creatinine {} {u} ({})", num(v), at_line(&m.span))
        })
        .collect();
    d.query = Some(crate::lint::query_with_indicators(STAGE_QUERY, &indicators));
    out.push(d);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;

    #[test]
    fn fires_for_unstaged_ckd_with_a_query() {
        let n = Note::new("PMH: HTN, CKD. Chronic HFrEF.\n").stmt(
            StatementKind::Ckd,
            "unstaged",
            "CKD",
        );
        let d = n.check(&RULE);
        assert_eq!(d.len(), 1);
        // ICD-10-CM FY2026 tabular list: N18.9 Chronic kidney disease, unspecified.
        assert!(d[0].message.contains("N18.9"), "{}", d[0].message);
        let q = d[0].query.as_deref().unwrap_or("");
        // Compliant-query practice (AHIMA/ACDIS 2022): options include other and undetermined.
        assert!(
            q.contains("other") && q.contains("clinically undetermined"),
            "{q}"
        );
    }

    #[test]
    fn silent_when_a_stage_is_written_anywhere() {
        let n = Note::new("PMH: CKD. Renal: CKD stage 3b.\n")
            .stmt(StatementKind::Ckd, "unstaged", "CKD")
            .stmt(StatementKind::Ckd, "3b", "CKD stage 3b");
        assert!(n.check(&RULE).is_empty());
    }
}
