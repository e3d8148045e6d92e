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
reads the note next needs the EF, and its absence is worth a query. It is also silent when
the note says an echo is planned or awaited (\"echo in AM\", \"TTE this week\", \"for
echo\", an echo in the plan) or why there is none (\"no echo yet\", \"no prior echo
available\"): the item is assessed, or planned, or a reason is given.

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

/// An echo (or other LV imaging) written with a plan or a time to come, or its absence
/// stated: `echo in AM`, `TTE this week`, `for echo`, `echo requested`, `no echo yet`, `no
/// prior echo available`. The quality measure counts LV function assessed, planned, or a
/// reason for not assessing it (Joint Commission HF-2 data element; domain reference 09).
pub(crate) fn echo_accounted_for(cx: &Ctx<'_>) -> bool {
    use regex::Regex;
    use std::sync::OnceLock;
    const IMG: &str =
        r"(?:echo(?:cardiogram|cardiography|es)?|tte|toe|tee|cardiac mri|cmr|mri heart)";
    static RE: OnceLock<Regex> = OnceLock::new();
    let re = RE.get_or_init(|| {
        Regex::new(&format!(
            r"(?ix)
            \b{IMG}\b [^.;\n]{{0,40}}? \b(?:planned|requested|booked|awaited|pending|arranged|ordered
                |outstanding|to\ follow|to\ be\ done|tomorrow|tmrw|in\ (?:the\ )?(?:am|morning)
                |this\ (?:week|admission)|next\ week|on\ monday|in\ \d+\ (?:days?|weeks?|months?)
                |today|when\ (?:able|stable))\b
            | \b(?:for|request(?:ed)?|order(?:ed)?|arrange(?:d)?|book(?:ed)?|await(?:ing)?|needs?
                |will\ need|plan(?:ned)?|refer(?:red)?\ for|repeat)\b [^.;\n]{{0,24}}? \b{IMG}\b
            | \bno\ (?:prior\ |previous\ |recent\ |old\ |formal\ )?{IMG}\b
            | \bnot\ had\ an?\ {IMG}\b
            | \b{IMG}\ not\ (?:yet\ )?(?:done|performed|available)\b"
        ))
        .expect("echo plan pattern")
    });
    if super::documented(cx.text, re) {
        return true;
    }
    // A bare "echo" in the plan section is an echo ordered.
    static BARE: OnceLock<Regex> = OnceLock::new();
    let bare =
        BARE.get_or_init(|| Regex::new(&format!(r"(?i)\b{IMG}\b")).expect("echo word pattern"));
    cx.ex
        .sections
        .iter()
        .filter(|s| s.kind == crate::model::SectionKind::Plan)
        .filter_map(|s| cx.text.get(s.span.range()))
        .any(|t| bare.is_match(t))
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    let Some(hf) = super::hf_for_coding(cx) else {
        return;
    };
    if !patient_values(cx.ex, MeasureConcept::Lvef).is_empty() || echo_accounted_for(cx) {
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
    fn an_echo_planned_or_not_available_satisfies_the_rule() {
        // Joint Commission HF-2 data element (domain reference 09): LV function assessed,
        // planned, or a reason for not assessing it. Invented sentences in several wordings.
        for plan in [
            "Echo in AM.",
            "TTE this week.",
            "For echo tomorrow.",
            "Echo requested.",
            "No prior echo available.",
            "No echo yet - GP to arrange.",
            "Awaiting echocardiogram.",
        ] {
            let text = format!("Discharge summary\nDx: heart failure.\n{plan}\n");
            let n = Note::new(&text).stmt(StatementKind::HeartFailure, "", "heart failure");
            assert!(n.check(&RULE).is_empty(), "{plan:?}");
        }
        // An echo of the past with nothing planned leaves the LVEF missing.
        let n = Note::new("Discharge summary\nDx: heart failure.\nEcho showed MR.\n").stmt(
            StatementKind::HeartFailure,
            "",
            "heart failure",
        );
        assert_eq!(n.check(&RULE).len(), 1);
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
