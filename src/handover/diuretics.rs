//! Total daily loop-diuretic dose and its oral-furosemide equivalent.
//!
//! Equivalences (common practice, no source; tidemark domain reference 11-weight-fluid.md
//! records them as "CP, varies between references"):
//!
//! - oral furosemide 40 mg ≈ oral bumetanide 1 mg ≈ oral torasemide 20 mg (references give
//!   10–20 mg of torasemide; the 20 mg figure is used here);
//! - intravenous furosemide is about twice as potent as oral furosemide, so 40 mg IV ≈
//!   80 mg oral.
//!
//! No equivalence is offered for intravenous bumetanide or torasemide, for subcutaneous
//! furosemide, or for etacrynic acid: the references disagree or say nothing, and an
//! unknown is better than a guess. The total then says it is incomplete.

use serde::Serialize;

use crate::extract::meds::fmt_num;
use crate::model::{DrugClass, Medication};
use crate::span::Span;

/// Where the equivalence comes from, printed beside every equivalent.
pub const EQUIVALENCE_BASIS: &str = "common practice, no source: oral furosemide 40 mg ≈ \
bumetanide 1 mg ≈ torasemide 20 mg (10–20 mg in some references); IV furosemide ≈ 2 × oral";

/// How many mg of oral furosemide one mg of a loop diuretic by a route is taken to equal.
pub fn oral_furosemide_factor(drug: &str, route: Option<&str>) -> Option<f64> {
    let route = route.unwrap_or("PO");
    match (drug, route) {
        ("furosemide", "PO") => Some(1.0),
        ("furosemide", "IV") => Some(2.0),
        ("bumetanide", "PO") => Some(40.0),
        ("torasemide", "PO") => Some(2.0),
        _ => None,
    }
}

/// One loop-diuretic regime counted in the total.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LoopDose {
    pub drug: String,
    pub route: Option<String>,
    /// Milligrams per day of this drug by this route.
    pub daily_mg: f64,
    /// The same amount as oral furosemide, where an equivalence is used.
    pub oral_furosemide_mg: Option<f64>,
    /// `single dose` for a stat or one-off dose, `unit not written, read as mg` ...
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub notes: Vec<String>,
    /// The note the regime was read from, when the caller says (an index into the
    /// patient's notes on a sheet).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub note: Option<usize>,
    pub span: Span,
}

/// The total daily loop-diuretic dose of a set of current regimes.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct LoopTotal {
    pub items: Vec<LoopDose>,
    /// Sum of the oral-furosemide equivalents, when there is at least one.
    pub oral_furosemide_mg: Option<f64>,
    /// Whether every item had an equivalence (otherwise the sum leaves some out).
    pub complete: bool,
    pub basis: &'static str,
}

/// Daily milligrams of one mention, when its dose can be read as mg.
pub fn daily_mg(m: &Medication) -> Option<(f64, Vec<String>)> {
    let mut notes = Vec::new();
    let daily = m.daily_dose?;
    let factor = match m.unit.as_deref() {
        Some("mg") | Some("mg/h") => 1.0,
        Some("g") => 1000.0,
        Some("ug") | Some("ug/h") => 0.001,
        None => {
            notes.push("unit not written, read as mg".to_string());
            1.0
        }
        Some(_) => return None,
    };
    if matches!(m.frequency.as_deref(), Some("stat" | "once")) {
        notes.push("single dose".into());
    }
    if m.unit.as_deref() == Some("mg/h") {
        notes.push(format!(
            "infusion {} mg/h × 24 h",
            fmt_num(m.dose.unwrap_or(0.0))
        ));
    }
    Some((daily * factor, notes))
}

/// Sum the loop diuretics among `meds` (other classes are ignored).
pub fn loop_total(meds: &[&Medication]) -> LoopTotal {
    let tagged: Vec<(&Medication, Option<usize>)> = meds.iter().map(|m| (*m, None)).collect();
    loop_total_tagged(&tagged)
}

/// [`loop_total`] with the note each mention came from.
pub fn loop_total_tagged(meds: &[(&Medication, Option<usize>)]) -> LoopTotal {
    let mut total = LoopTotal {
        complete: true,
        basis: EQUIVALENCE_BASIS,
        ..LoopTotal::default()
    };
    let mut sum = 0.0;
    let mut any = false;
    for &(m, note) in meds
        .iter()
        .filter(|(m, _)| m.class == DrugClass::LoopDiuretic)
    {
        let Some((mg, notes)) = daily_mg(m) else {
            total.complete = false;
            continue;
        };
        let eq = oral_furosemide_factor(&m.drug, m.route.as_deref()).map(|f| f * mg);
        match eq {
            Some(e) => {
                sum += e;
                any = true;
            }
            None => total.complete = false,
        }
        total.items.push(LoopDose {
            drug: m.drug.clone(),
            route: m.route.clone(),
            daily_mg: mg,
            oral_furosemide_mg: eq,
            notes,
            note,
            span: m.span,
        });
    }
    total.oral_furosemide_mg = any.then_some(sum);
    total
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Assertion;

    fn med(drug: &str, route: Option<&str>, dose: f64, unit: &str, per_day: f64) -> Medication {
        Medication {
            drug: drug.into(),
            class: crate::extract::meds::lookup(drug)
                .map(|l| l.1)
                .unwrap_or(DrugClass::Other),
            dose: Some(dose),
            unit: Some(unit.into()),
            route: route.map(str::to_string),
            frequency: None,
            per_day: Some(per_day),
            daily_dose: Some(if unit == "mg/h" {
                dose * 24.0
            } else {
                dose * per_day
            }),
            change: None,
            starts: None,
            assertion: Assertion::Present,
            note: None,
            text: String::new(),
            span: Span::default(),
            section: None,
        }
    }

    // Worked examples. Equivalences: common practice, no source (oral furosemide 40 mg ≈
    // bumetanide 1 mg ≈ torasemide 20 mg; IV furosemide ≈ 2 × oral), as recorded in the
    // tidemark domain reference 11-weight-fluid.md.

    #[test]
    fn iv_furosemide_twice_daily() {
        // 80 mg IV bd = 160 mg/day IV = 320 mg oral furosemide.
        let m = med("furosemide", Some("IV"), 80.0, "mg", 2.0);
        let t = loop_total(&[&m]);
        assert_eq!(t.items[0].daily_mg, 160.0);
        assert_eq!(t.oral_furosemide_mg, Some(320.0));
        assert!(t.complete);
    }

    #[test]
    fn bumetanide_and_torasemide() {
        // Bumetanide 1 mg bd = 2 mg/day = 80 mg oral furosemide.
        let b = med("bumetanide", Some("PO"), 1.0, "mg", 2.0);
        assert_eq!(loop_total(&[&b]).oral_furosemide_mg, Some(80.0));
        // Torasemide 20 mg od = 40 mg oral furosemide.
        let t = med("torasemide", None, 20.0, "mg", 1.0);
        assert_eq!(loop_total(&[&t]).oral_furosemide_mg, Some(40.0));
    }

    #[test]
    fn infusion_and_mixed_regimes() {
        // Furosemide 10 mg/h IV = 240 mg/day IV = 480 mg oral; plus oral 40 mg od = 520 mg.
        let inf = med("furosemide", Some("IV"), 10.0, "mg/h", 24.0);
        let po = med("furosemide", Some("PO"), 40.0, "mg", 1.0);
        let t = loop_total(&[&inf, &po]);
        assert_eq!(t.items[0].daily_mg, 240.0);
        assert_eq!(t.oral_furosemide_mg, Some(520.0));
        assert!(t.items[0].notes[0].contains("10 mg/h"));
    }

    #[test]
    fn unknown_equivalences_leave_the_total_incomplete() {
        let iv_bumetanide = med("bumetanide", Some("IV"), 1.0, "mg", 2.0);
        let po = med("furosemide", Some("PO"), 40.0, "mg", 1.0);
        let t = loop_total(&[&iv_bumetanide, &po]);
        assert_eq!(t.items[0].oral_furosemide_mg, None);
        assert_eq!(t.oral_furosemide_mg, Some(40.0));
        assert!(!t.complete);
        // Other classes are not loop diuretics.
        let spiro = med("spironolactone", None, 25.0, "mg", 1.0);
        assert!(loop_total(&[&spiro]).items.is_empty());
        assert_eq!(loop_total(&[&spiro]).oral_furosemide_mg, None);
    }

    #[test]
    fn parsed_lines_end_to_end() {
        // "80 mg mane + 40 mg midday" = 120 mg/day oral furosemide.
        let text = "furosemide 80 mg mane + 40 mg midday";
        let ms = crate::extract::meds::medications(text, &[]);
        let refs: Vec<&Medication> = ms.iter().collect();
        assert_eq!(loop_total(&refs).oral_furosemide_mg, Some(120.0));
        let ms = crate::extract::meds::medications("IV furosemide 80 mg bd", &[]);
        let refs: Vec<&Medication> = ms.iter().collect();
        assert_eq!(loop_total(&refs).oral_furosemide_mg, Some(320.0));
    }
}
