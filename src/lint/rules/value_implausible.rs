//! `value-implausible`: see [`RULE`] and its documentation text.

use crate::lint::kind::ANY;
use crate::lint::{num, quote, unit_display, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::{Assertion, Experiencer, MeasureConcept, Measurement};

pub const RULE: Rule = Rule {
    id: "value-implausible",
    category: Category::Plausibility,
    severity: Severity::Error,
    summary: "A value lies outside physiological bounds, or a diastolic pressure is not below the systolic.",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
Fires for a patient value that cannot be right for a living adult: outside the bounds below
(compared in the canonical unit, after conversion), or a blood pressure whose diastolic value
is not below its systolic one. Values written as bounds (`EF <20%`, `NT-proBNP >35000`) and
values whose unit is unknown are not checked. The message states the bounds and their basis.

| Quantity | Bounds | Basis |
| --- | --- | --- |
| systolic BP | 30-300 mmHg | common practice |
| diastolic BP | 10-200 mmHg | common practice |
| heart rate | 15-300 /min | common practice |
| respiratory rate | 3-80 /min | common practice |
| SpO2 | 30-100 % | above 100 % impossible by definition; lower bound common practice |
| temperature | 25-45 °C | common practice |
| weight | 20-400 kg | common practice (adults) |
| height | 100-250 cm | common practice (adults) |
| JVP | -5-25 cm | common practice |
| LVEF | 3-90 % | common practice; above 100 % impossible by definition |
| BNP | 0-50000 pg/mL | common practice (assay ranges) |
| NT-proBNP | 0-100000 pg/mL | common practice (assay ranges) |
| creatinine | 10-2500 µmol/L | common practice |
| urea | 0.5-100 mmol/L | common practice |
| sodium | 95-190 mmol/L | common practice |
| potassium | 1.0-10.0 mmol/L | common practice |
| lactate | 0-30 mmol/L | common practice |
| haemoglobin | 20-260 g/L | common practice |

## Why
An impossible value is almost always a typing or transcription error (`RR 220` for 22,
`K 45` for 4.5). Left in the record it corrupts scores, trends and coding indicators.

## Fires
```text
RR 220, BP 80/95
```

## Does not fire
```text
RR 22, BP 95/80, EF <20%
```

## Sources
Bounds: the reject limits of the project's plausibility table for adult inpatients (common
practice, no published source; tune locally).
";

/// Reject bounds in the canonical unit, with their basis.
pub(crate) fn bounds(c: MeasureConcept) -> Option<(f64, f64, &'static str)> {
    use MeasureConcept::*;
    const CP: &str = "common practice for adult inpatients";
    Some(match c {
        SystolicBp => (30.0, 300.0, CP),
        DiastolicBp => (10.0, 200.0, CP),
        HeartRate => (15.0, 300.0, CP),
        RespiratoryRate => (3.0, 80.0, CP),
        Spo2 => (
            30.0,
            100.0,
            "a saturation cannot exceed 100 %; lower bound common practice",
        ),
        Temperature => (25.0, 45.0, CP),
        Weight => (20.0, 400.0, CP),
        Height => (100.0, 250.0, CP),
        Jvp => (-5.0, 25.0, CP),
        Lvef => (3.0, 90.0, CP),
        Bnp => (0.0, 50000.0, "common practice (assay ranges)"),
        NtProbnp => (0.0, 100000.0, "common practice (assay ranges)"),
        Creatinine => (10.0, 2500.0, CP),
        Urea => (0.5, 100.0, CP),
        Sodium => (95.0, 190.0, CP),
        Potassium => (1.0, 10.0, CP),
        Lactate => (0.0, 30.0, CP),
        Hemoglobin => (20.0, 260.0, CP),
        FluidBalance | UrineOutput => return None,
    })
}

fn counts(m: &Measurement) -> bool {
    m.experiencer == Experiencer::Patient
        && matches!(m.assertion, Assertion::Present | Assertion::Possible)
        && matches!(
            m.qualifier,
            None | Some(crate::model::Qualifier::Approximate)
        )
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    for m in cx.ex.measurements.iter().filter(|m| counts(m)) {
        let (Some(q), Some((lo, hi, basis))) = (m.normalized, bounds(m.concept)) else {
            continue;
        };
        if !q.value.is_finite() || (lo..=hi).contains(&q.value) {
            continue;
        }
        let unit = unit_display(q.unit);
        let unit_sep = if unit == "%" { "" } else { " " };
        out.push(RULE.diag(
            format!(
                "The {} \"{}\" ({}{unit_sep}{unit}) is outside the plausible range \
                 {}-{}{unit_sep}{unit} ({basis}). Check for a typing error.",
                m.concept.label(),
                quote(&m.text),
                num(q.value),
                num(lo),
                num(hi),
            ),
            Some(m.span),
        ));
    }
    // Diastolic not below systolic: pair each diastolic value with the nearest systolic value
    // at or before it on the same line. The systolic values are sorted once by (line, start)
    // (stably, so that of two at the same start the later in the list wins) and each
    // diastolic value finds its partner by binary search: linear-logarithmic in the values
    // however many share a line.
    let mut systolic: Vec<&Measurement> = cx
        .ex
        .measurements
        .iter()
        .filter(|m| m.concept == MeasureConcept::SystolicBp && counts(m))
        .collect();
    systolic.sort_by_key(|m| (m.span.line, m.span.start));
    for dia in cx
        .ex
        .measurements
        .iter()
        .filter(|m| m.concept == MeasureConcept::DiastolicBp && counts(m))
    {
        let key = (dia.span.line, dia.span.start);
        let after = systolic.partition_point(|m| (m.span.line, m.span.start) <= key);
        let sys = after
            .checked_sub(1)
            .map(|i| systolic[i])
            .filter(|m| m.span.line == dia.span.line);
        let Some(sys) = sys else { continue };
        let (Some(s), Some(d)) = (sys.normalized, dia.normalized) else {
            continue;
        };
        if d.value >= s.value {
            let mut span = sys.span;
            span.end = span.end.max(dia.span.end);
            span.end_line = dia.span.end_line.max(sys.span.end_line);
            span.end_column = if dia.span.end >= sys.span.end {
                dia.span.end_column
            } else {
                sys.span.end_column
            };
            out.push(RULE.diag(
                format!(
                    "The diastolic pressure {} mmHg is not below the systolic {} mmHg: a blood \
                     pressure's diastolic value is always lower. Check the order or a typing \
                     error.",
                    num(d.value),
                    num(s.value)
                ),
                Some(span),
            ));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;
    use crate::model::Qualifier;

    #[test]
    fn fires_outside_bounds_and_for_reversed_pressure() {
        let n = Note::new("RR 220, BP 80/95\n")
            .meas(
                MeasureConcept::RespiratoryRate,
                220.0,
                Some("/min"),
                "RR 220",
            )
            .meas(MeasureConcept::SystolicBp, 80.0, Some("mm[Hg]"), "80")
            .meas(MeasureConcept::DiastolicBp, 95.0, Some("mm[Hg]"), "95");
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 2, "{d:?}");
        assert!(d[0].message.contains("3-80 /min"), "{}", d[0].message);
        assert!(d[1].message.contains("not below"), "{}", d[1].message);
        // The pair diagnostic covers both numbers.
        assert_eq!(d[1].span.unwrap().len(), "80/95".len());
    }

    #[test]
    fn converted_values_are_checked_in_canonical_units() {
        // 140 °F is 60 °C: impossible. 98.6 °F is 37 °C (NIST SP 811 conversion).
        let n = Note::new("T 140 F then T 98.6 F\n")
            .meas(
                MeasureConcept::Temperature,
                140.0,
                Some("[degF]"),
                "T 140 F",
            )
            .meas(
                MeasureConcept::Temperature,
                98.6,
                Some("[degF]"),
                "T 98.6 F",
            );
        let d = n.check(&RULE);
        assert_eq!(d.len(), 1);
        assert!(d[0].message.contains("60 °C"), "{}", d[0].message);
    }

    #[test]
    fn silent_for_possible_values_and_bounds() {
        let n = Note::new("RR 22, BP 95/80, EF <2%, SpO2 100%\n")
            .meas(MeasureConcept::RespiratoryRate, 22.0, Some("/min"), "RR 22")
            .meas(MeasureConcept::SystolicBp, 95.0, Some("mm[Hg]"), "95")
            .meas(MeasureConcept::DiastolicBp, 80.0, Some("mm[Hg]"), "80")
            .meas_with(MeasureConcept::Lvef, 2.0, Some("%"), false, "EF <2%", |m| {
                m.qualifier = Some(Qualifier::UpperBound)
            })
            .meas(MeasureConcept::Spo2, 100.0, Some("%"), "SpO2 100%");
        assert!(n.check(&RULE).is_empty());
    }
}
