//! `weight-missing`: see [`RULE`] and its documentation text.

use crate::lint::kind::ANY;
use crate::lint::{Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::MeasureConcept;

pub const RULE: Rule = Rule {
    id: "weight-missing",
    category: Category::Documentation,
    severity: Severity::Warning,
    summary: "No body weight is documented in a heart-failure note.",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
Fires when a note about a heart-failure patient (heart failure named or typed, or an LVEF or
natriuretic peptide value given) records no body weight at all. Any weight, of any date and
with or without a unit, silences it, and so does a documented reason for not weighing
(\"weight not attempted - not appropriate\", \"unable to weigh\", \"too unwell to stand on
the scales\", \"bed-bound\", \"no routine weights\" in end-of-life care): the item is then
documented.

## Why
Weight is the cheapest marker of fluid status and the one most often left out. Without it a
reader cannot judge decongestion, compare against a dry or target weight, or check the
discharge weight that the ACCF/AHA 2013 discharge checklist asks for.

## Fires
```text
Ward round. Known HFrEF. Ankles swollen, JVP +4 cm. Plan: IV furosemide.
```

## Does not fire
```text
Ward round. Known HFrEF. Wt 82.4 kg (84.0 kg yesterday). Ankles swollen.
```

## Sources
Weight as the bedside congestion marker: common practice, no source. Discharge weight on the
checklist: 2013 ACCF/AHA heart failure guideline, discharge checklist (from memory).
";

/// A reason for not weighing, or a decision not to: `weight not attempted`, `unable to
/// weigh`, `bed-bound`, `no routine weights` (common practice, no
/// source).
fn not_weighed_for_a_reason(text: &str) -> bool {
    use regex::Regex;
    use std::sync::OnceLock;
    static RE: OnceLock<Regex> = OnceLock::new();
    let re = RE.get_or_init(|| {
        Regex::new(
            r"(?ix)
            \b(?:weight|wt|weights|weighing)\b [^.;\n]{0,16}? \b(?:not\ (?:attempted|done|possible
                |appropriate|obtained|recorded|taken|measured|performed|available)|n/a|omitted
                |deferred|declined|refused|unable|impossible|inappropriate|unobtainable)\b
            | \b(?:unable|not\ able|too\ unwell|too\ frail|cannot|can't|could\ not|couldn't|not\ possible)
                \b [^.;\n]{0,12}? \b(?:weigh|be\ weighed|stand\ on\ (?:the\ )?scales?|get\ on\ (?:the\ )?scales?)
            | \bno\ (?:routine|further)\ (?:weights?|weighing)\b
            | \bbed[-\ ]?bound\b | \bbedbound\b | \bbed-?fast\b",
        )
        .expect("not-weighed pattern")
    });
    super::documented(text, re)
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    if !super::hf_relevant(cx.ex) {
        return;
    }
    if cx
        .ex
        .measurements
        .iter()
        .any(|m| m.concept == MeasureConcept::Weight)
    {
        return;
    }
    if not_weighed_for_a_reason(cx.text) {
        return;
    }
    let anchor = crate::lint::hf_mention(cx.ex).map(|s| s.span);
    out.push(
        RULE.diag(
            "No body weight is documented. Weight is the simplest marker of fluid status in heart \
         failure; record today's weight (and the dry or target weight if known)."
                .into(),
            anchor,
        ),
    );
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;
    use crate::model::StatementKind;

    #[test]
    fn fires_without_any_weight() {
        let n = Note::new("Ward round. Known HFrEF. Ankles swollen.\n").stmt(
            StatementKind::HfType,
            "hfref",
            "HFrEF",
        );
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 1);
        assert_eq!(d[0].span.unwrap().line, 1);
    }

    #[test]
    fn a_documented_reason_for_not_weighing_satisfies_it() {
        // Common practice, no source: a reason for not weighing documents the item, in UK,
        // US and Australian wording.
        for text in [
            "HF nurse visit. Known HFrEF. Weight not attempted - not appropriate.\n",
            "Known HFrEF. Unable to weigh today (hoist transfers).\n",
            "Known HFrEF. Pt bed-bound, too unwell to stand on scales.\n",
            "Known HFrEF. Supportive care: no routine weights.\n",
            "Known HFrEF. Wt: not done, pt declined.\n",
            "Known HFrEF. Bedbound.\n",
        ] {
            let n = Note::new(text).stmt(StatementKind::HfType, "hfref", "HFrEF");
            assert!(n.check(&RULE).is_empty(), "{text}");
        }
        // A weight trend word is not a reason.
        let n = Note::new("Known HFrEF. Weight gain reported by wife.\n").stmt(
            StatementKind::HfType,
            "hfref",
            "HFrEF",
        );
        assert_eq!(n.check(&RULE).len(), 1);
    }

    #[test]
    fn silent_with_a_weight_or_without_heart_failure() {
        let n = Note::new("Ward round. Known HFrEF. Wt 82.4 kg.\n")
            .stmt(StatementKind::HfType, "hfref", "HFrEF")
            .meas(MeasureConcept::Weight, 82.4, Some("kg"), "Wt 82.4 kg");
        assert!(n.check(&RULE).is_empty());
        let n = Note::new("Sprained wrist, BP 120/80.\n");
        assert!(n.check(&RULE).is_empty());
    }
}
