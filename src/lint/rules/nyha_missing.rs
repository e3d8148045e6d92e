//! `nyha-missing`: see [`RULE`] and its documentation text.

use crate::lint::kind::DocKind;
use crate::lint::{statements, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::StatementKind;

pub const RULE: Rule = Rule {
    id: "nyha-missing",
    category: Category::Documentation,
    severity: Severity::Warning,
    summary: "A heart-failure clinic letter gives no NYHA functional class.",
    doc: DOC,
    kinds: &[DocKind::ClinicLetter],
    check,
};

const DOC: &str = "\
## What
Fires on clinic letters about heart failure that state no NYHA functional class (I-IV, Roman
or Arabic numerals, a range such as II-III, or a baseline class). Only clinic letters are
checked: ward notes and discharge summaries often leave the class to the clinic. A referral
letter (\"Referral to the heart failure clinic\", \"I would be grateful if you could see\")
asks for the assessment that would give the class, so it is not checked either.

## Why
The NYHA class is the clinic's summary of symptoms on exertion. Treatment decisions and
trial-based eligibility for therapies are framed in NYHA classes, and follow-up letters are
compared with each other by it.

## Fires
```text
Dear Dr Example, I saw Mr X in the heart failure clinic. He walks to the shops and back.
```

## Does not fire
```text
Dear Dr Example, I saw Mr X in the heart failure clinic. NYHA class II.
```

## Sources
NYHA functional classification: Criteria Committee of the New York Heart Association, 9th
edition, 1994.
";

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    let Some(hf) = super::hf_for_coding(cx) else {
        return;
    };
    if crate::lint::kind::is_referral(cx.text) {
        return;
    }
    if !statements(cx.ex, StatementKind::Nyha).is_empty()
        || cx.pic.classifications.nyha_class.is_some()
    {
        return;
    }
    out.push(
        RULE.diag(
            "This heart-failure clinic letter gives no NYHA functional class. State the class \
         (I-IV) that describes the patient's symptoms on exertion."
                .into(),
            Some(hf.span),
        ),
    );
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;

    const LETTER: &str = "Heart Failure Clinic\nDear Dr Example,\nI saw Mr X with heart failure.\n";

    #[test]
    fn fires_in_a_clinic_letter_without_nyha() {
        let n = Note::new(LETTER).stmt(StatementKind::HeartFailure, "", "heart failure");
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 1);
    }

    #[test]
    fn a_referral_letter_asks_for_no_class() {
        // A referral asks the specialist to assess; the class is theirs to give (common
        // practice of referral letters, no source).
        for text in [
            "Referral to Heart Failure Clinic\nDear Dr Example,\nQuery heart failure.\n",
            "Dear Dr Example,\nI would be grateful if you could see this man with heart failure.\n",
        ] {
            let n = Note::new(text).stmt(StatementKind::HeartFailure, "", "heart failure");
            assert!(n.check(&RULE).is_empty(), "{text:?}");
        }
    }

    #[test]
    fn silent_with_nyha_or_outside_letters() {
        let text = format!("{LETTER}NYHA II.\n");
        let n = Note::new(&text)
            .stmt(StatementKind::HeartFailure, "", "heart failure")
            .stmt(StatementKind::Nyha, "II", "NYHA II");
        assert!(n.check(&RULE).is_empty());
        let n = Note::new("Ward round\nheart failure\n").stmt(
            StatementKind::HeartFailure,
            "",
            "heart failure",
        );
        assert!(n.check(&RULE).is_empty());
    }
}
