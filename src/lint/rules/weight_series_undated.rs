//! `weight-series-undated`: see [`RULE`] and its documentation text.

use super::{patient_values, value_date};
use crate::lint::kind::ANY;
use crate::lint::{at_line, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::{MeasureConcept, Measurement};

pub const RULE: Rule = Rule {
    id: "weight-series-undated",
    category: Category::Documentation,
    severity: Severity::Warning,
    summary: "Several different weights are given without dates, so they cannot be ordered.",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
Fires when a note gives two or more different weights that carry no date, no documented day,
no clock time and no time reference (admission, yesterday, today, baseline, discharge,
previous). One undated weight among dated ones is taken to be the note's own and does not fire,
\"now 78.4 kg (80.1 kg on admission)\" is anchored by its wording, and weights written as one
course on one line (\"90.2 kg -> 85.0 kg\", \"from 90.2 to 85.0 kg\") are in order already.

## Why
A trend, a daily change or a comparison with the target weight needs to know which weight came
first. Undated weights in a list are the commonest reason a weight trend cannot be computed.

## Fires
```text
Weights: 82.0, 81.1, 80.4 kg.
```

## Does not fire
```text
Weights: 01/03 82.0 kg, 02/03 81.1 kg, 03/03 80.4 kg.
```

## Sources
Dated daily weights for trend monitoring: common practice, no source.
";

fn anchored(cx: &Ctx<'_>, m: &Measurement) -> bool {
    value_date(cx.ex, m).is_some() || m.time.is_some() || m.time_ref.is_some()
}

/// `90.2 kg -> 85.0 kg`, `from 90.2 to 85.0 kg`: weights written as one course on one line
/// are in order already (common practice, no source).
fn one_ordered_chain(text: &str, weights: &[&Measurement]) -> bool {
    let mut spans: Vec<_> = weights.iter().map(|m| m.span).collect();
    spans.sort_by_key(|s| s.start);
    spans.windows(2).all(|w| {
        let between = text.get(w[0].end..w[1].start).unwrap_or("\n");
        let words = between.to_ascii_lowercase();
        between.len() <= 40
            && !between.contains('\n')
            && (["->", "→", "=>", "⇒", "—>"]
                .iter()
                .any(|a| between.contains(a))
                || words
                    .split(|c: char| !c.is_ascii_alphabetic())
                    .any(|w| w == "to" || w == "then"))
    })
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    let undated: Vec<&Measurement> = patient_values(cx.ex, MeasureConcept::Weight)
        .into_iter()
        .filter(|m| !anchored(cx, m))
        .collect();
    let value = |m: &Measurement| m.normalized.map_or(m.value, |q| q.value);
    let Some(first) = undated.first() else { return };
    let distinct = undated
        .iter()
        .any(|m| (value(m) - value(first)).abs() > 0.05);
    if undated.len() < 2 || !distinct || one_ordered_chain(cx.text, &undated) {
        return;
    }
    let lines: Vec<String> = undated.iter().map(|m| at_line(&m.span)).collect();
    out.push(RULE.diag(
        format!(
            "{} different weights are given without a date or time ({}), so they cannot be put \
             in order. Date each weight.",
            undated.len(),
            lines.join(", ")
        ),
        Some(first.span),
    ));
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;
    use crate::model::TimeRef;

    #[test]
    fn fires_for_undated_different_weights() {
        let n = Note::new("Weights: 82.0, 81.1, 80.4 kg.\n")
            .meas(MeasureConcept::Weight, 82.0, Some("kg"), "82.0")
            .meas(MeasureConcept::Weight, 81.1, Some("kg"), "81.1")
            .meas(MeasureConcept::Weight, 80.4, Some("kg"), "80.4 kg");
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 1);
        assert!(d[0].message.starts_with("3 different"), "{}", d[0].message);
    }

    #[test]
    fn silent_when_dated_or_anchored_by_wording() {
        let n = Note::new("Wt now 78.4 kg (80.1 kg on admission).\n")
            .meas(MeasureConcept::Weight, 78.4, Some("kg"), "78.4 kg")
            .meas_with(
                MeasureConcept::Weight,
                80.1,
                Some("kg"),
                false,
                "80.1 kg",
                |m| m.time_ref = Some(TimeRef::Admission),
            );
        assert!(n.check(&RULE).is_empty());
        let n = Note::new("01/03 82.0 kg, 02/03 81.1 kg\n")
            .meas_with(
                MeasureConcept::Weight,
                82.0,
                Some("kg"),
                false,
                "82.0 kg",
                |m| m.date = Some("2026-03-01".into()),
            )
            .meas_with(
                MeasureConcept::Weight,
                81.1,
                Some("kg"),
                false,
                "81.1 kg",
                |m| m.date = Some("2026-03-02".into()),
            );
        assert!(n.check(&RULE).is_empty());
    }
}
