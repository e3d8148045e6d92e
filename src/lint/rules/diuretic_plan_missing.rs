//! `diuretic-plan-missing`: see [`RULE`] and its documentation text.

use crate::lint::kind::MEDICAL;
use crate::lint::{at_line, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::{Assertion, DrugClass, SectionKind};
use crate::picture::Congestion;

pub const RULE: Rule = Rule {
    id: "diuretic-plan-missing",
    category: Category::Safety,
    severity: Severity::Warning,
    summary: "The congestion profile is wet but no diuretic plan is documented.",
    doc: DOC,
    kinds: MEDICAL,
    check,
};

const DOC: &str = "\
## What
Fires when the picture's congestion axis is wet and the note documents no diuretic plan: no
loop or thiazide diuretic mentioned with a change (started, increased, reduced, held, stopped,
switched or continued), in a plan section, or in the discharge medications, and none as a
conditional instruction (\"if weight rises, take an extra furosemide\"). Nursing observation
entries are not checked.

## Why
Diuretics are the treatment of congestion. A note that documents congestion without saying
what is being done about it leaves the next reader to guess whether the plan was forgotten
or deliberate (for example diuretics held for hypotension, which the note should then say).

## Fires
```text
JVP +4 cm, pitting oedema to mid-shin. Plan: repeat bloods tomorrow.
```

## Does not fire
```text
JVP +4 cm, pitting oedema to mid-shin. Plan: IV furosemide 80 mg bd.
```

## Sources
Diuretic plan as a documentation element: common practice, no source; loop diuretics for
congestion: 2021 ESC and 2022 AHA/ACC/HFSA heart failure guidelines.
";

fn plan_section(cx: &Ctx<'_>, idx: Option<usize>) -> bool {
    idx.and_then(|i| cx.ex.sections.get(i)).is_some_and(|s| {
        matches!(
            s.kind,
            SectionKind::Plan
                | SectionKind::DischargeMedications
                | SectionKind::DischargeInstructions
        )
    })
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    if cx.pic.profile.congestion != Congestion::Wet {
        return;
    }
    let planned = cx.ex.medications.iter().any(|m| {
        matches!(
            m.class,
            DrugClass::LoopDiuretic | DrugClass::ThiazideDiuretic
        ) && (m.change.is_some()
            || plan_section(cx, m.section)
            || m.assertion == Assertion::Hypothetical)
    });
    if planned {
        return;
    }
    let wet: Vec<_> = cx
        .pic
        .profile
        .evidence
        .iter()
        .filter(|e| e.supports == "wet")
        .collect();
    let mut message = String::from("The congestion profile is wet");
    if !wet.is_empty() {
        let signs: Vec<String> = wet
            .iter()
            .take(4)
            .map(|e| {
                format!(
                    "{} ({})",
                    crate::lint::concept_label(&e.concept),
                    at_line(&e.span)
                )
            })
            .collect();
        message.push_str(&format!(" ({})", signs.join(", ")));
    }
    message.push_str(
        " but no diuretic plan is documented. State the diuretic plan, or why diuretics are \
         not being given.",
    );
    out.push(RULE.diag(message, wet.first().map(|e| e.span)));
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;
    use crate::model::MedChange;
    use crate::picture::Evidence;

    const NOTE: &str = "Ward round\nJVP +4 cm, oedema to mid-shin.\nPlan: furosemide 80 mg IV bd\n";

    fn wet(n: Note) -> Note {
        let mut n = n;
        let span = n.span_of("JVP +4 cm");
        n.picture(|p| {
            p.profile.congestion = Congestion::Wet;
            p.profile.evidence.push(Evidence {
                concept: "raised_jvp".into(),
                supports: "wet",
                span,
                note: "JVP +4 cm".into(),
                item: "finding",
                text: "JVP +4 cm".into(),
                episode: None,
            });
        })
    }

    #[test]
    fn fires_when_wet_without_a_diuretic() {
        let n = wet(Note::new(NOTE));
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 1);
        assert!(
            d[0].message.contains("raised JVP (line 2)"),
            "{}",
            d[0].message
        );
        // A diuretic only in the history, with no change, is not a plan.
        let n = wet(Note::new(NOTE)).med("furosemide", DrugClass::LoopDiuretic, None, "furosemide");
        assert_eq!(n.check(&RULE).len(), 1);
    }

    #[test]
    fn silent_with_a_diuretic_change_or_when_dry() {
        let n = wet(Note::new(NOTE)).med(
            "furosemide",
            DrugClass::LoopDiuretic,
            Some(MedChange::Started),
            "furosemide",
        );
        assert!(n.check(&RULE).is_empty());
        let n = Note::new(NOTE).picture(|p| p.profile.congestion = Congestion::Dry);
        assert!(n.check(&RULE).is_empty());
    }
}
