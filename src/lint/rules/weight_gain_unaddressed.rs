//! `weight-gain-unaddressed`: see [`RULE`] and its documentation text.

use super::{iso_day, patient_values, value_date};
use crate::lint::kind::MEDICAL;
use crate::lint::{at_line, num, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::{DrugClass, MeasureConcept, Measurement, MedChange};

pub const RULE: Rule = Rule {
    id: "weight-gain-unaddressed",
    category: Category::Safety,
    severity: Severity::Warning,
    summary: "Dated weights rise past the threshold and no diuretic change is documented.",
    doc: DOC,
    kinds: MEDICAL,
    check,
};

const DOC: &str = "\
## What
Fires when two dated weights in the note show a rise greater than the threshold (default more
than 2.0 kg) within the window (default 3 days), and the note documents no change to a loop or
thiazide diuretic or an MRA (started, increased, switched, reduced, held or stopped). A
change written with a date before the day of the latest weight of the rise (`switched from IV
26/11` against a rise up to 28/11) was made before the gain and does not count. Exactly
2.0 kg does not fire. Weights without a date, or whose unit is unknown, are not used; a gap in
the series is not interpolated. Threshold and window are set in `tidemark.toml`
(`[lint.thresholds] weight-gain-kg`, `weight-gain-days`), for example for a site policy of
3 lb in a day.

## Why
A short-term weight gain is read as fluid gain, about one kilogram a litre. A gain past the
threshold that patients are taught to report, with nothing in the plan, is the gap a handover
reader most needs to see.

## Fires
```text
01/03 Wt 80.0 kg. 03/03 Wt 82.4 kg. Plan: continue current treatment.
```

## Does not fire
```text
01/03 Wt 80.0 kg. 03/03 Wt 82.4 kg. Plan: furosemide increased to 80 mg bd.
```

## Sources
More than 2 kg in 3 days: European Society of Cardiology, Heart Failure Association, patient
information website, page \"Weight gain\". A litre of fluid weighs about a kilogram: common
practice.
";

/// Whether a diuretic change answers a gain that ended on day `to_day`: a change written
/// with an earlier date (`PO furosemide 40 mg om (switched from IV 26/11)` against a gain
/// up to 28/11) was made before the gain and does not address it.
fn addressed(cx: &Ctx<'_>, to_day: i64) -> bool {
    cx.ex.medications.iter().any(|m| {
        matches!(
            m.class,
            DrugClass::LoopDiuretic | DrugClass::ThiazideDiuretic | DrugClass::Mra
        ) && m.change.is_some_and(|c| c != MedChange::Continued)
            && change_day(cx, m).is_none_or(|d| d >= to_day)
    })
}

/// The date written with a medication change, on its line: in the mention or just after
/// it (`(switched from IV 26/11)`, `increased 27/11`).
fn change_day(cx: &Ctx<'_>, m: &crate::model::Medication) -> Option<i64> {
    use crate::text::dates::{find_dates, resolve_order};
    let start = m.span.start.min(cx.text.len());
    let line_end = cx.text[start..]
        .find('\n')
        .map_or(cx.text.len(), |i| start + i);
    let mut end = line_end.min(m.span.end.max(start) + 48);
    while !cx.text.is_char_boundary(end) {
        end -= 1;
    }
    let segment = cx.text.get(start..end)?;
    let order = resolve_order(cx.text, crate::config::DateOrder::Auto, false);
    let year = cx
        .ex
        .note_date
        .as_deref()
        .and_then(|d| d.get(..4))
        .and_then(|y| y.parse().ok());
    let found = find_dates(segment, order, year);
    iso_day(&found.first()?.iso)
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    let limit = cx.cfg.thresholds.weight_gain_kg;
    let window = i64::from(cx.cfg.thresholds.weight_gain_days);
    let mut dated: Vec<(i64, f64, &Measurement)> = patient_values(cx.ex, MeasureConcept::Weight)
        .into_iter()
        .filter_map(|m| {
            let day = iso_day(value_date(cx.ex, m)?)?;
            Some((day, m.normalized?.value, m))
        })
        .collect();
    dated.sort_by_key(|(d, _, m)| (*d, m.span.start));
    // The largest rise from an earlier to a later weight within the window.
    let mut best: Option<(f64, &Measurement, &Measurement, i64)> = None;
    for (i, (d0, w0, m0)) in dated.iter().enumerate() {
        for (d1, w1, m1) in &dated[i + 1..] {
            let days = d1 - d0;
            if days < 1 || days > window {
                continue;
            }
            let rise = w1 - w0;
            if rise > limit + 1e-9 && best.is_none_or(|(r, ..)| rise > r) {
                best = Some((rise, *m0, *m1, days));
            }
        }
    }
    let Some((rise, from, to, days)) = best else {
        return;
    };
    let to_day = dated
        .iter()
        .find(|(_, _, m)| std::ptr::eq(*m, to))
        .map_or(i64::MAX, |(d, ..)| *d);
    if addressed(cx, to_day) {
        return;
    }
    out.push(RULE.diag(
        format!(
            "Weight rose by {} kg in {days} day{} (\"{}\", {} to \"{}\"), more than the {} kg \
             threshold, and no diuretic change is documented. Document the plan for the weight \
             gain, or why none is needed.",
            num((rise * 10.0).round() / 10.0),
            if days == 1 { "" } else { "s" },
            crate::lint::quote(&from.text),
            at_line(&from.span),
            crate::lint::quote(&to.text),
            num(limit),
        ),
        Some(to.span),
    ));
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;
    use crate::lint::LintConfig;

    fn weights(text: &str, a: (f64, &str, &str), b: (f64, &str, &str)) -> Note {
        let (wa, da, ta) = (a.0, a.1.to_string(), a.2);
        let (wb, db, tb) = (b.0, b.1.to_string(), b.2);
        Note::new(text)
            .meas_with(MeasureConcept::Weight, wa, Some("kg"), false, ta, |m| {
                m.date = Some(da)
            })
            .meas_with(MeasureConcept::Weight, wb, Some("kg"), false, tb, |m| {
                m.date = Some(db)
            })
    }

    const TEXT: &str = "Ward round\n01/03 Wt 80.0 kg\n04/03 Wt 82.1 kg\nPlan: furosemide\n";

    #[test]
    fn fires_above_two_kg_in_three_days() {
        // Check value W01 (HFA patient advice): 80.0 -> 82.1 kg over 3 days is a rise of 2.1.
        let n = weights(
            TEXT,
            (80.0, "2026-03-01", "Wt 80.0 kg"),
            (82.1, "2026-03-04", "Wt 82.1 kg"),
        );
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 1);
        assert!(
            d[0].message.contains("2.1 kg in 3 days"),
            "{}",
            d[0].message
        );
    }

    #[test]
    fn exactly_two_kg_or_too_long_a_window_is_silent() {
        // W02: a rise of exactly 2.0 kg must not fire.
        let n = weights(
            TEXT,
            (80.0, "2026-03-01", "Wt 80.0 kg"),
            (82.0, "2026-03-04", "Wt 82.1 kg"),
        );
        assert!(n.check(&RULE).is_empty());
        let n = weights(
            TEXT,
            (80.0, "2026-03-01", "Wt 80.0 kg"),
            (82.5, "2026-03-05", "Wt 82.1 kg"),
        );
        assert!(n.check(&RULE).is_empty());
    }

    #[test]
    fn a_diuretic_change_addresses_it_and_thresholds_are_configurable() {
        let n = weights(
            TEXT,
            (80.0, "2026-03-01", "Wt 80.0 kg"),
            (82.1, "2026-03-04", "Wt 82.1 kg"),
        )
        .med(
            "furosemide",
            DrugClass::LoopDiuretic,
            Some(MedChange::Increased),
            "furosemide",
        );
        assert!(n.check(&RULE).is_empty());
        let n = weights(
            TEXT,
            (80.0, "2026-03-01", "Wt 80.0 kg"),
            (81.6, "2026-03-02", "Wt 82.1 kg"),
        );
        assert!(n.check(&RULE).is_empty());
        // A stricter site policy (about 3 lb in a day = 1.36 kg).
        let cfg = LintConfig::from_toml_str(
            "[thresholds]\nweight-gain-kg = 1.36\nweight-gain-days = 1\n",
        )
        .unwrap();
        assert_eq!(n.check_with(&RULE, &cfg).len(), 1);
    }

    #[test]
    fn a_change_dated_before_the_gain_does_not_address_it() {
        // Common practice, no source: a switch made before the weight rose is no answer
        // to the rise; one made on the day of the latest weight, or after, is.
        for (line, fires) in [
            ("PO furosemide 40 mg om (switched from IV 01/03/2026)", true),
            ("furosemide increased to 80 mg om on 04/03/2026", false),
            ("furosemide increased to 80 mg om", false),
        ] {
            let text = format!("Wt 80.0 kg\nWt 82.1 kg\n{line}\n");
            let n = weights(
                &text,
                (80.0, "2026-03-01", "Wt 80.0 kg"),
                (82.1, "2026-03-04", "Wt 82.1 kg"),
            )
            .med(
                "furosemide",
                DrugClass::LoopDiuretic,
                Some(MedChange::Increased),
                line,
            );
            assert_eq!(n.check(&RULE).len(), usize::from(fires), "{line:?}");
        }
    }
}
