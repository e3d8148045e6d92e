//! UCUM units and conversion to each concept's canonical unit.
//!
//! Written unit strings are mapped to UCUM codes (case-sensitive: `Cel`, never `C`, which is
//! the coulomb; `[lb_av]`; `mm[Hg]`; `umol/L`). Conversion factors and their sources:
//!
//! - pound → kilogram × 0.45359237, exact by definition (international yard and pound
//!   agreement, 1959; restated in NIST SP 811).
//! - inch → centimetre × 2.54, exact (same agreement); stone = 14 lb.
//! - °F → °C: (F − 32) × 5/9, exact by definition.
//! - creatinine mg/dL → µmol/L × 88.4 (10 000 / 113.12 g/mol = 88.40).
//! - BUN (urea nitrogen) mg/dL → urea mmol/L × 0.357 (10 / 28.014: two nitrogen atoms).
//! - haemoglobin g/dL → g/L × 10.
//! - BNP and NT-proBNP: ng/L and pg/mL are the same quantity.
//! - sodium, potassium: meq/L = mmol/L for monovalent ions.

use crate::model::MeasureConcept;

pub const LB_TO_KG: f64 = 0.45359237;
pub const IN_TO_CM: f64 = 2.54;
pub const CREATININE_MGDL_TO_UMOLL: f64 = 88.4;
pub const BUN_MGDL_TO_UREA_MMOLL: f64 = 0.357;

/// Fahrenheit to Celsius.
pub fn fahrenheit_to_celsius(f: f64) -> f64 {
    (f - 32.0) * 5.0 / 9.0
}

/// Map a unit as written in a note to its UCUM code. Matching ignores case except where
/// case carries meaning (`mL` vs `ML` are treated alike; there is no mega-litre in notes).
pub fn ucum(written: &str) -> Option<&'static str> {
    let w: String = written
        .chars()
        .filter(|c| !c.is_whitespace())
        .collect::<String>()
        .to_ascii_lowercase()
        .replace(['µ', 'μ'], "u")
        // `percent` and `per cent` are a sign of their own, not "per" something, and
        // `fahrenheit` holds no "hr" (hour).
        .replace("percent", "%")
        .replace("fahrenheit", "degf")
        .replace("per", "/")
        .replace("minute", "min")
        .replace("hour", "h")
        .replace("hr", "h");
    let code = match w.as_str() {
        "mmhg" => "mm[Hg]",
        "bpm" | "/min" | "/m" | "beats/min" | "breaths/min" | "b/min" | "min" => "/min",
        "%" | "pc" | "percent" | "pct" => "%",
        "°c" | "ºc" | "c" | "degc" | "deg.c" | "degreesc" | "centigrade" | "celsius"
        | "degreescelsius" | "degreescentigrade" => "Cel",
        "°f" | "ºf" | "f" | "degf" | "deg.f" | "degreesf" | "degreesdegf" => "[degF]",
        "°" | "º" => "deg",
        "kg" | "kgs" | "kilo" | "kilos" | "kilogram" | "kilograms" => "kg",
        "lb" | "lbs" | "pound" | "pounds" | "#" => "[lb_av]",
        "st" | "stone" => "[stone_av]",
        "cm" | "cms" => "cm",
        "m" => "m",
        "in" | "ins" | "inch" | "inches" | "\"" | "''" => "[in_i]",
        "ft" | "'" | "feet" | "foot" => "[ft_i]",
        "ml" | "mls" | "cc" => "mL",
        "l" | "litre" | "litres" | "liter" | "liters" | "ltr" => "L",
        "ml/h" | "mls/h" | "cc/h" | "ml/hourly" => "mL/h",
        "l/h" => "L/h",
        "ml/kg/h" | "mls/kg/h" => "mL/kg/h",
        "ml/24h" | "ml/day" | "ml/d" => "mL/d",
        "l/24h" | "l/day" | "l/d" => "L/d",
        "pg/ml" => "pg/mL",
        "ng/l" => "ng/L",
        "pmol/l" => "pmol/L",
        "umol/l" | "micromol/l" | "umol" | "micromol" | "mcmol/l" => "umol/L",
        "mg/dl" | "mg%" => "mg/dL",
        "mmol/l" | "mm" | "mmol" => "mmol/L",
        "meq/l" | "meq" => "meq/L",
        "g/l" => "g/L",
        "g/dl" => "g/dL",
        "cmh2o" | "cmh20" | "cm[h2o]" | "cmofwater" | "cmwater" => "cm[H2O]",
        "s" | "sec" | "secs" | "second" | "seconds" => "s",
        _ => return None,
    };
    Some(code)
}

/// The units a concept may be written in; anything else is not this concept's unit.
pub fn accepts(concept: MeasureConcept, code: &str) -> bool {
    use MeasureConcept::*;
    match concept {
        SystolicBp | DiastolicBp => code == "mm[Hg]",
        HeartRate | RespiratoryRate => code == "/min",
        Spo2 | Lvef => code == "%",
        Temperature => matches!(code, "Cel" | "[degF]" | "deg"),
        Weight => matches!(code, "kg" | "[lb_av]" | "[stone_av]"),
        Height => matches!(code, "cm" | "m" | "[in_i]" | "[ft_i]"),
        Jvp => matches!(code, "cm" | "cm[H2O]"),
        FluidBalance => matches!(code, "mL" | "L" | "mL/d" | "L/d"),
        UrineOutput => matches!(
            code,
            "mL" | "L" | "mL/h" | "L/h" | "mL/kg/h" | "mL/d" | "L/d"
        ),
        Bnp | NtProbnp => matches!(code, "pg/mL" | "ng/L" | "pmol/L"),
        Creatinine => matches!(code, "umol/L" | "mg/dL"),
        Urea => matches!(code, "mmol/L" | "mg/dL"),
        Sodium | Potassium => matches!(code, "mmol/L" | "meq/L"),
        Lactate => matches!(code, "mmol/L" | "mg/dL"),
        Hemoglobin => matches!(code, "g/L" | "g/dL"),
    }
}

/// The kind of quantity a UCUM code measures, for telling a unit of another dimension
/// from a unit of the right one written oddly (UCUM groups its units by property in the
/// same way: temperature, mass, length, volume, substance or mass concentration, ...).
pub fn dimension(code: &str) -> &'static str {
    match code {
        "Cel" | "[degF]" | "deg" => "temperature",
        "mm[Hg]" | "cm[H2O]" => "pressure",
        "/min" => "frequency",
        "%" => "fraction",
        "kg" | "[lb_av]" | "[stone_av]" => "mass",
        "cm" | "m" | "[in_i]" | "[ft_i]" => "length",
        "mL" | "L" => "volume",
        "mL/d" | "L/d" | "mL/h" | "L/h" | "mL/kg/h" => "flow",
        "pg/mL" | "ng/L" | "pmol/L" | "umol/L" | "mg/dL" | "mmol/L" | "meq/L" | "g/L" | "g/dL" => {
            "concentration"
        }
        "s" => "time",
        _ => "other",
    }
}

/// Whether a value written in `code` cannot be of `concept` at all: its unit measures
/// another kind of quantity (`T 34 ng/L` is a troponin, not a temperature). A JVP in cm
/// and a balance in mL/d share their concept's dimension by the concept's own units.
pub fn other_dimension(concept: MeasureConcept, code: &str) -> bool {
    let d = dimension(code);
    const ALL: &[&str] = &[
        "Cel",
        "[degF]",
        "deg",
        "mm[Hg]",
        "cm[H2O]",
        "/min",
        "%",
        "kg",
        "[lb_av]",
        "[stone_av]",
        "cm",
        "m",
        "[in_i]",
        "[ft_i]",
        "mL",
        "L",
        "mL/d",
        "L/d",
        "mL/h",
        "L/h",
        "mL/kg/h",
        "pg/mL",
        "ng/L",
        "pmol/L",
        "umol/L",
        "mg/dL",
        "mmol/L",
        "meq/L",
        "g/L",
        "g/dL",
        "s",
    ];
    d != "other" && !ALL.iter().any(|c| accepts(concept, c) && dimension(c) == d)
}

/// Convert a value in `unit` to the concept's canonical unit. Rates (urine output per hour)
/// stay rates: they are returned in `mL/h` or `mL/kg/h`, never silently turned into volumes.
/// `bun` says the value is a urea nitrogen (BUN) figure rather than urea itself.
pub fn normalize(
    concept: MeasureConcept,
    value: f64,
    unit: &str,
    bun: bool,
) -> Option<(f64, &'static str)> {
    use MeasureConcept::*;
    if !value.is_finite() {
        return None;
    }
    let canonical = concept.canonical_unit();
    let v = match (concept, unit) {
        (Temperature, "Cel") => value,
        (Temperature, "[degF]") => fahrenheit_to_celsius(value),
        (Temperature, "deg") => {
            // A bare degree sign: read by magnitude (common practice, no source).
            if value > 50.0 {
                fahrenheit_to_celsius(value)
            } else {
                value
            }
        }
        (Weight, "kg") => value,
        (Weight, "[lb_av]") => value * LB_TO_KG,
        (Weight, "[stone_av]") => value * 14.0 * LB_TO_KG,
        (Height, "cm") => value,
        (Height, "m") => value * 100.0,
        (Height, "[in_i]") => value * IN_TO_CM,
        (Height, "[ft_i]") => value * 12.0 * IN_TO_CM,
        (Jvp, "cm" | "cm[H2O]") => value,
        (FluidBalance | UrineOutput, "mL" | "mL/d") => value,
        (FluidBalance | UrineOutput, "L" | "L/d") => value * 1000.0,
        (UrineOutput, "mL/h") => return Some((value, "mL/h")),
        (UrineOutput, "L/h") => return Some((value * 1000.0, "mL/h")),
        (UrineOutput, "mL/kg/h") => return Some((value, "mL/kg/h")),
        (Bnp | NtProbnp, "pg/mL" | "ng/L") => value,
        // Molar masses from memory (BNP about 3464 g/mol, NT-proBNP about 8457 g/mol).
        (Bnp, "pmol/L") => value * 3.464,
        (NtProbnp, "pmol/L") => value * 8.457,
        (Creatinine, "umol/L") => value,
        (Creatinine, "mg/dL") => value * CREATININE_MGDL_TO_UMOLL,
        (Urea, "mmol/L") => value,
        (Urea, "mg/dL") if bun => value * BUN_MGDL_TO_UREA_MMOLL,
        // Urea itself in mg/dL: 10 / 60.06 g/mol.
        (Urea, "mg/dL") => value * 10.0 / 60.06,
        (Sodium | Potassium, "mmol/L" | "meq/L") => value,
        (Lactate, "mmol/L") => value,
        // Lactate 90.08 g/mol: mg/dL × 10 / 90.08.
        (Lactate, "mg/dL") => value * 10.0 / 90.08,
        (Hemoglobin, "g/L") => value,
        (Hemoglobin, "g/dL") => value * 10.0,
        (SystolicBp | DiastolicBp, "mm[Hg]") => value,
        (HeartRate | RespiratoryRate, "/min") => value,
        (Spo2 | Lvef, "%") => value,
        _ => return None,
    };
    Some((v, canonical))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn pound_is_exactly_0_45359237_kg() {
        // NIST SP 811 (restating the 1959 agreement); domain check value C01.
        let (kg, unit) = normalize(MeasureConcept::Weight, 180.0, "[lb_av]", false).unwrap();
        assert_eq!(unit, "kg");
        assert!(close(kg, 81.6466266, 1e-7));
        // C03: 12 st 4 lb = 172 lb.
        assert!(close(172.0 * LB_TO_KG, 78.01788764, 1e-6));
    }

    #[test]
    fn fahrenheit_to_celsius_check_values() {
        // Definition of the Fahrenheit scale; domain check values C05, C06.
        assert!(close(fahrenheit_to_celsius(98.6), 37.0, 1e-9));
        assert!(close(fahrenheit_to_celsius(101.3), 38.5, 1e-9));
    }

    #[test]
    fn creatinine_and_bun_factors() {
        // Creatinine molar mass 113.12 g/mol: 1.4 mg/dL = 123.76 umol/L (C08).
        let (v, u) = normalize(MeasureConcept::Creatinine, 1.4, "mg/dL", false).unwrap();
        assert_eq!(u, "umol/L");
        assert!(close(v, 123.76, 0.01));
        assert!(close(10_000.0 / 113.12, CREATININE_MGDL_TO_UMOLL, 0.01));
        // BUN 28 mg/dL = urea 9.995 mmol/L (C11), from 2 x 14.007 g/mol nitrogen.
        let (v, _) = normalize(MeasureConcept::Urea, 28.0, "mg/dL", true).unwrap();
        assert!(close(v, 9.995, 0.01));
        // Hb 11.2 g/dL = 112 g/L (C15).
        let (v, _) = normalize(MeasureConcept::Hemoglobin, 11.2, "g/dL", false).unwrap();
        assert!(close(v, 112.0, 1e-9));
    }

    #[test]
    fn ucum_codes_as_the_specification_writes_them() {
        // UCUM: Celsius is `Cel` (C is the coulomb), avoirdupois pound `[lb_av]`,
        // millimetre of mercury `mm[Hg]`, micro written `u`.
        assert_eq!(ucum("°C"), Some("Cel"));
        assert_eq!(ucum("C"), Some("Cel"));
        assert_eq!(ucum("°F"), Some("[degF]"));
        assert_eq!(ucum("lbs"), Some("[lb_av]"));
        assert_eq!(ucum("mm Hg"), Some("mm[Hg]"));
        assert_eq!(ucum("µmol/L"), Some("umol/L"));
        assert_eq!(ucum("cmH20"), Some("cm[H2O]"));
        assert_eq!(ucum("ml/hr"), Some("mL/h"));
        assert_eq!(ucum("mg/dl"), Some("mg/dL"));
        assert_eq!(ucum("furlong"), None);
    }
}
