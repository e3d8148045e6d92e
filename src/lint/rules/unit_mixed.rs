//! `unit-mixed`: see [`RULE`] and its documentation text.

use crate::lint::kind::ANY;
use crate::lint::{at_line, quote, unit_display, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::{MeasureConcept, Measurement};

pub const RULE: Rule = Rule {
    id: "unit-mixed",
    category: Category::Units,
    severity: Severity::Warning,
    summary: "The same quantity is written in two unit systems in one note.",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
Fires once per quantity written in two unit systems within one document: weight in kg and lb,
temperature in °C and °F, creatinine in µmol/L and mg/dL, urea in mmol/L and BUN in mg/dL,
haemoglobin in g/L and g/dL, height in cm and inches, NT-proBNP in pg/mL and pmol/L. Only
written units count; inferred ones are the business of `unit-missing`. The diagnostic points
at the first value in the second system and lists where the first system was used.

## Why
Mixed systems invite silent conversion errors: a series of 81.6 then 180 looks like a
100-unit gain unless the reader notices the switch, and a creatinine of 1.9 next to 150 is a
trap for any trend.

## Fires
```text
Wt 82.0 kg on admission. Today weight 176 lb.
```

## Does not fire
```text
Wt 82.0 kg on admission. Today weight 79.8 kg.
```

## Sources
Unit systems and UCUM codes: UCUM (Regenstrief); SI and conventional laboratory units:
common practice, no source.
";

/// The unit system of a written unit, for the concepts where systems differ.
fn system(concept: MeasureConcept, unit: &str) -> Option<&'static str> {
    use MeasureConcept::*;
    Some(match (concept, unit) {
        (Weight, "kg" | "g") => "metric",
        (Weight, "[lb_av]" | "[stone_av]") => "imperial",
        (Height, "cm" | "m") => "metric",
        (Height, "[in_i]" | "[ft_i]") => "imperial",
        (Temperature, "Cel") => "Celsius",
        (Temperature, "[degF]") => "Fahrenheit",
        (Creatinine, "umol/L") => "SI",
        (Creatinine, "mg/dL") => "conventional",
        (Urea, "mmol/L") => "SI",
        (Urea, "mg/dL") => "conventional",
        (Hemoglobin, "g/L" | "mmol/L") => "SI",
        (Hemoglobin, "g/dL") => "conventional",
        (NtProbnp | Bnp, "pg/mL" | "ng/L") => "mass",
        (NtProbnp | Bnp, "pmol/L") => "substance",
        _ => return None,
    })
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    for concept in MeasureConcept::ALL {
        let written: Vec<(&Measurement, &str, &'static str)> = cx
            .ex
            .measurements
            .iter()
            .filter(|m| m.concept == concept && !m.unit_inferred)
            .filter_map(|m| {
                let u = m.unit?;
                Some((m, u, system(concept, u)?))
            })
            .collect();
        let Some(&(_, first_unit, first_system)) = written.first() else {
            continue;
        };
        let Some(&(other, other_unit, other_system)) =
            written.iter().find(|(_, _, s)| *s != first_system)
        else {
            continue;
        };
        let first_lines: Vec<String> = written
            .iter()
            .filter(|(_, _, s)| *s == first_system)
            .map(|(m, _, _)| at_line(&m.span))
            .collect();
        out.push(RULE.diag(
            format!(
                "The {} is written in {} units here (\"{}\", {}) but in {} units elsewhere \
                 ({}, {}). Use one unit system throughout the note.",
                concept.label(),
                other_system,
                quote(&other.text),
                unit_display(other_unit),
                first_system,
                unit_display(first_unit),
                first_lines.join(", ")
            ),
            Some(other.span),
        ));
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;

    #[test]
    fn fires_for_kg_and_lb() {
        let n = Note::new("Wt 82.0 kg on admission.\nToday weight 176 lb.\n")
            .meas(MeasureConcept::Weight, 82.0, Some("kg"), "Wt 82.0 kg")
            .meas(
                MeasureConcept::Weight,
                176.0,
                Some("[lb_av]"),
                "weight 176 lb",
            );
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 1);
        assert_eq!(d[0].span.unwrap().line, 2);
        assert!(d[0].message.contains("imperial"), "{}", d[0].message);
        assert!(d[0].message.contains("line 1"), "{}", d[0].message);
    }

    #[test]
    fn fires_for_celsius_and_fahrenheit_and_creatinine_systems() {
        let n = Note::new("T 37.2 C. Later T 100.4 F. Cr 150 umol/L, Cr 1.9 mg/dL\n")
            .meas(MeasureConcept::Temperature, 37.2, Some("Cel"), "T 37.2 C")
            .meas(
                MeasureConcept::Temperature,
                100.4,
                Some("[degF]"),
                "T 100.4 F",
            )
            .meas(
                MeasureConcept::Creatinine,
                150.0,
                Some("umol/L"),
                "Cr 150 umol/L",
            )
            .meas(
                MeasureConcept::Creatinine,
                1.9,
                Some("mg/dL"),
                "Cr 1.9 mg/dL",
            );
        assert_eq!(n.check(&RULE).len(), 2);
    }

    #[test]
    fn silent_for_one_system_and_for_inferred_units() {
        let n = Note::new("Wt 82.0 kg. Today 79.8 kg. Later 176\n")
            .meas(MeasureConcept::Weight, 82.0, Some("kg"), "Wt 82.0 kg")
            .meas(MeasureConcept::Weight, 79.8, Some("kg"), "79.8 kg")
            .meas_inferred(MeasureConcept::Weight, 176.0, "[lb_av]", "176");
        assert!(n.check(&RULE).is_empty());
        // pg/mL and ng/L are the same system (numerically equal).
        let n = Note::new("NT-proBNP 1200 ng/L, repeat 900 pg/mL\n")
            .meas(
                MeasureConcept::NtProbnp,
                1200.0,
                Some("ng/L"),
                "NT-proBNP 1200 ng/L",
            )
            .meas(MeasureConcept::NtProbnp, 900.0, Some("pg/mL"), "900 pg/mL");
        assert!(n.check(&RULE).is_empty());
    }
}
