//! `unit-missing`: see [`RULE`] and its documentation text.

use crate::lint::kind::ANY;
use crate::lint::{num, unit_display, Category, Ctx, Diagnostic, Fix, Rule, Severity};
use crate::model::{MeasureConcept, Measurement};

pub const RULE: Rule = Rule {
    id: "unit-missing",
    category: Category::Units,
    severity: Severity::Warning,
    summary: "A weight, temperature, JVP or laboratory value is written without its unit.",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
Fires for each weight, temperature, JVP or laboratory value (BNP, NT-proBNP, creatinine, urea,
sodium, potassium, lactate, haemoglobin) whose unit is not written and had to be inferred.
The message names the unit tidemark assumed; the fix writes it after the number. Blood
pressure, heart rate, respiratory rate, SpO2 and LVEF are conventionally written bare and are
ignored. Units given once in a table's column header count as written.

## Why
A bare number is read differently by different readers: `Wt 180` is pounds to one and an
error to another, `Cr 1.4` is mg/dL in the US and nonsense in µmol/L, `T 38` could be °C or a
typo. Coders and pipelines must not guess.

## Fires
```text
Wt 71.2, T 36.8, Cr 188
```

## Does not fire
```text
Wt 71.2 kg, T 36.8 °C, Cr 188 µmol/L, BP 118/70, HR 72
```

## Sources
Units as UCUM codes: The Unified Code for Units of Measure (Regenstrief). Which vitals are
conventionally written bare: common practice, no source.
";

/// Concepts whose unit must be written.
pub(crate) fn needs_unit(c: MeasureConcept) -> bool {
    matches!(
        c,
        MeasureConcept::Weight | MeasureConcept::Temperature | MeasureConcept::Jvp
    ) || c.is_lab()
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    for m in &cx.ex.measurements {
        if !needs_unit(m.concept) || !(m.unit_inferred || m.unit.is_none()) {
            continue;
        }
        out.push(diagnostic(cx.text, m));
    }
}

fn diagnostic(text: &str, m: &Measurement) -> Diagnostic {
    let what = m.concept.label();
    let message = match m.unit {
        Some(u) => format!(
            "The {what} \"{}\" has no unit; it was read as {} {}. Write the unit.",
            crate::lint::quote(&m.text),
            num(m.value),
            unit_display(u)
        ),
        None => format!(
            "The {what} \"{}\" has no unit and none could be inferred. Write the unit.",
            crate::lint::quote(&m.text)
        ),
    };
    let mut d = RULE.diag(message, Some(m.span));
    // The fix inserts the inferred unit right after the written text, when the written text
    // really is there and ends in the number.
    if let Some(u) = m.unit {
        let end = m.span.end;
        let ends_in_digit = text
            .get(m.span.start..end)
            .and_then(|s| s.chars().last())
            .is_some_and(|c| c.is_ascii_digit());
        if ends_in_digit {
            let mut at = m.span;
            at.start = end;
            at.line = m.span.end_line;
            at.column = m.span.end_column;
            d.fix = Some(Fix {
                title: format!("Write the unit {}", unit_display(u)),
                span: at,
                replacement: format!(" {}", unit_display(u)),
            });
        }
    }
    d
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;

    #[test]
    fn fires_for_inferred_weight_temperature_and_lab() {
        let n = Note::new("Wt 71.2, T 36.8, Cr 188\n")
            .meas_inferred(MeasureConcept::Weight, 71.2, "kg", "Wt 71.2")
            .meas_inferred(MeasureConcept::Temperature, 36.8, "Cel", "T 36.8")
            .meas_inferred(MeasureConcept::Creatinine, 188.0, "umol/L", "Cr 188");
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 3);
        assert!(d[1].message.contains("36.8 °C"), "{}", d[1].message);
        let fix = d[0].fix.as_ref().unwrap();
        assert_eq!(fix.replacement, " kg");
        assert_eq!(fix.span.start, "Wt 71.2".len());
        assert!(fix.span.is_empty());
    }

    #[test]
    fn silent_for_written_units_and_bare_vitals() {
        let n = Note::new("Wt 71.2 kg, BP 118/70, HR 72\n")
            .meas(MeasureConcept::Weight, 71.2, Some("kg"), "Wt 71.2 kg")
            .meas_inferred(MeasureConcept::SystolicBp, 118.0, "mm[Hg]", "118")
            .meas_inferred(MeasureConcept::HeartRate, 72.0, "/min", "HR 72");
        assert!(n.check(&RULE).is_empty());
    }
}
