//! Values derived from the documented measurements, each with its inputs' spans, its formula
//! and the formula's source, or the reason it could not be computed.
//!
//! Inputs come from one observation set: the latest blood pressure reading (systolic and
//! diastolic of one reading share their span), the heart rate written in the same section
//! of the same assessment as that reading, the latest weight with any height, the latest
//! creatinine with the patient's age and sex. Values keep full precision; rounding is for
//! display only.

use serde::Serialize;

use super::patient::Patient;
use super::profile::PPP_NARROW_BELOW;
use super::timeline::{Timeline, When};
use super::trends::Trends;
use super::{counts, fmt_num, Counts};
use crate::model::{Extraction, MeasureConcept, Measurement, Qualifier};
use crate::span::Span;
use crate::units::CREATININE_MGDL_TO_UMOLL;

/// One input of a derived value.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DerivedInput {
    /// Measurement concept (`systolic_bp`), or `age` / `sex`.
    pub concept: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub value: Option<f64>,
    pub unit: &'static str,
    pub text: String,
    pub span: Span,
}

/// A derived value, or why there is none.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DerivedValue {
    /// Full precision; `null` when it could not be computed (see `reason`).
    pub value: Option<f64>,
    /// UCUM unit (`mm[Hg]`, `%`, `kg/m2`, `mL/min/{1.73_m2}`, `1` for a ratio).
    pub unit: &'static str,
    pub formula: &'static str,
    pub source: &'static str,
    pub inputs: Vec<DerivedInput>,
    /// A named threshold that the value crosses (`narrow` for PPP < 25 %, `raised` for a
    /// shock index >= 1.0).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub flag: Option<&'static str>,
    /// A category (the KDIGO GFR category for eGFR, the WHO band for BMI).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub category: Option<&'static str>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub notes: Vec<String>,
    /// Why the value is absent (`no blood pressure documented`, `no sex documented`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub reason: Option<String>,
}

impl DerivedValue {
    fn absent(
        unit: &'static str,
        formula: &'static str,
        source: &'static str,
        reason: &str,
    ) -> Self {
        DerivedValue {
            value: None,
            unit,
            formula,
            source,
            inputs: Vec::new(),
            flag: None,
            category: None,
            notes: Vec::new(),
            reason: Some(reason.to_string()),
        }
    }
}

/// The LVEF category of the latest LVEF (Universal Definition of Heart Failure, Bozkurt et
/// al. 2021; 2022 AHA/ACC/HFSA guideline): <= 40 % hfref, 41–49 % hfmref, >= 50 % hfpef.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LvefCategory {
    /// `hfref`, `hfmref` or `hfpef`; `null` when a bound leaves it open.
    pub category: Option<&'static str>,
    /// LVEF in % (a range's midpoint, a bound's written value).
    pub value: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub range: Option<(f64, f64)>,
    /// The categories the written value allows, when more than one (`EF 40-45%`).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub candidates: Vec<&'static str>,
    pub text: String,
    pub span: Span,
    pub source: &'static str,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub notes: Vec<String>,
}

/// Derived values of one note.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Derived {
    pub mean_arterial_pressure: DerivedValue,
    pub pulse_pressure: DerivedValue,
    pub proportional_pulse_pressure: DerivedValue,
    pub shock_index: DerivedValue,
    pub bmi: DerivedValue,
    pub egfr: DerivedValue,
    /// The category of the latest LVEF, whether or not a type is stated.
    pub lvef_category: Option<LvefCategory>,
}

impl Default for Derived {
    fn default() -> Self {
        let none = "not computed";
        Derived {
            mean_arterial_pressure: DerivedValue::absent("mm[Hg]", MAP_FORMULA, MAP_SOURCE, none),
            pulse_pressure: DerivedValue::absent("mm[Hg]", PP_FORMULA, PP_SOURCE, none),
            proportional_pulse_pressure: DerivedValue::absent("%", PPP_FORMULA, PPP_SOURCE, none),
            shock_index: DerivedValue::absent("1", SI_FORMULA, SI_SOURCE, none),
            bmi: DerivedValue::absent("kg/m2", BMI_FORMULA, BMI_SOURCE, none),
            egfr: DerivedValue::absent("mL/min/{1.73_m2}", EGFR_FORMULA, EGFR_SOURCE, none),
            lvef_category: None,
        }
    }
}

const MAP_FORMULA: &str = "DBP + (SBP - DBP) / 3";
const MAP_SOURCE: &str =
    "McGee, Evidence-Based Physical Diagnosis, chapter Blood Pressure (estimate (S + 2D)/3)";
const PP_FORMULA: &str = "SBP - DBP";
const PP_SOURCE: &str = "definition of pulse pressure (McGee, Evidence-Based Physical Diagnosis)";
const PPP_FORMULA: &str = "(SBP - DBP) / SBP x 100";
const PPP_SOURCE: &str =
    "Stevenson & Perloff, JAMA 1989;261:884-888 (< 25 % suggests cardiac index < 2.2 L/min/m2)";
const SI_FORMULA: &str = "HR / SBP";
const SI_SOURCE: &str =
    "Allgower & Burri, Dtsch Med Wochenschr 1967 (normal about 0.5-0.7; >= 1.0 abnormal)";
const BMI_FORMULA: &str = "weight kg / (height m)^2";
const BMI_SOURCE: &str = "WHO Technical Report Series 894, 2000 (bands 18.5 / 25 / 30)";
const EGFR_FORMULA: &str = "142 x min(Scr/k,1)^a x max(Scr/k,1)^-1.200 x 0.9938^age x 1.012 [female]; k 0.7 F / 0.9 M, a -0.241 F / -0.302 M; Scr mg/dL = umol/L / 88.4";
const EGFR_SOURCE: &str =
    "CKD-EPI 2021 creatinine equation without race, Inker et al., N Engl J Med 2021;385:1737-1749";
const LVEF_SOURCE: &str =
    "Universal Definition of Heart Failure (Bozkurt et al., 2021); 2022 AHA/ACC/HFSA guideline";

/// A shock index at or above this is abnormal (Allgower & Burri 1967, as widely used).
pub const SHOCK_INDEX_RAISED_FROM: f64 = 1.0;

/// Systolic and diastolic of one reading.
#[derive(Debug, Clone, Copy)]
pub struct BpPair<'a> {
    pub sbp: &'a Measurement,
    pub dbp: &'a Measurement,
}

impl BpPair<'_> {
    pub fn s(&self) -> f64 {
        value(self.sbp)
    }
    pub fn d(&self) -> f64 {
        value(self.dbp)
    }
    /// Proportional pulse pressure as a fraction.
    pub fn ppp(&self) -> f64 {
        (self.s() - self.d()) / self.s()
    }
    /// PPP strictly below 25 % (`4 x PP < SBP`, exact for whole numbers).
    pub fn narrow(&self) -> bool {
        (self.s() - self.d()) < PPP_NARROW_BELOW * self.s()
    }
}

/// A measurement's value in its canonical unit.
pub fn value(m: &Measurement) -> f64 {
    m.normalized.map(|q| q.value).unwrap_or(m.value)
}

/// Pair each systolic with the diastolic of the same reading: same or overlapping spans, or
/// a diastolic that starts within a few bytes after the systolic ends (`120/80`). A pair
/// whose systolic is not above its diastolic (`60/80`) is rejected, as are non-finite or
/// non-positive values.
pub fn bp_pairs(ex: &Extraction) -> Vec<BpPair<'_>> {
    let mut dias: Vec<&Measurement> = ex
        .measurements
        .iter()
        .filter(|m| m.concept == MeasureConcept::DiastolicBp)
        .collect();
    dias.sort_by_key(|d| d.span.start);
    let mut used = vec![false; dias.len()];
    let mut out = Vec::new();
    // A partner starts within a few bytes of the systolic value's span, and no value's span
    // is longer than a few lines, so only a window of the sorted diastolic values is searched
    // (linear cost on a note with very many readings).
    const WINDOW: usize = 4096;
    for s in ex
        .measurements
        .iter()
        .filter(|m| m.concept == MeasureConcept::SystolicBp)
    {
        let from = dias.partition_point(|d| d.span.start.saturating_add(WINDOW) < s.span.start);
        let to = dias.partition_point(|d| d.span.start <= s.span.end.saturating_add(3));
        let found = dias[from..to.max(from)]
            .iter()
            .enumerate()
            .map(|(i, d)| (i + from, d))
            .find(|(i, d)| {
                !used[*i]
                    && (d.span == s.span
                        || (d.span.start < s.span.end.max(s.span.start.saturating_add(1))
                            && s.span.start < d.span.end.max(d.span.start.saturating_add(1)))
                        || (d.span.start >= s.span.end
                            && d.span.start <= s.span.end.saturating_add(3)))
            });
        if let Some((i, d)) = found {
            used[i] = true;
            let pair = BpPair { sbp: s, dbp: d };
            let (sv, dv) = (pair.s(), pair.d());
            if sv.is_finite() && dv.is_finite() && dv > 0.0 && sv > dv {
                out.push(pair);
            }
        }
    }
    out
}

fn input(m: &Measurement) -> DerivedInput {
    DerivedInput {
        concept: m.concept.name().into(),
        value: Some(value(m)),
        unit: m.concept.canonical_unit(),
        text: m.text.clone(),
        span: m.span,
    }
}

/// A present, current patient value with a finite number; outside blood pressure and heart
/// rate (where a bare number is the norm) it needs a known unit.
fn counted(m: &Measurement) -> bool {
    let unit_ok = m.normalized.is_some()
        || matches!(
            m.concept,
            MeasureConcept::SystolicBp | MeasureConcept::DiastolicBp | MeasureConcept::HeartRate
        );
    counts(m.assertion, m.temporality, m.experiencer) == Counts::Present
        && value(m).is_finite()
        && unit_ok
}

/// The key that orders measurements oldest first.
fn key(tl: &Timeline, m: &Measurement) -> (When, String, String, usize) {
    (
        tl.when(m.episode, m.section, m.span.start, m.time_ref),
        m.date.clone().unwrap_or_default(),
        m.time.clone().unwrap_or_default(),
        m.span.start,
    )
}

fn latest<'a>(
    ex: &'a Extraction,
    tl: &Timeline,
    concept: MeasureConcept,
) -> Option<&'a Measurement> {
    ex.measurements
        .iter()
        .filter(|m| m.concept == concept && counted(m))
        .max_by_key(|m| key(tl, m))
}

/// An LVEF a category can be read from: above 0 and at most 100 % (a fraction up to 1).
pub fn plausible_lvef(m: &Measurement) -> bool {
    let v = value(m);
    v.is_finite() && v > 0.0 && v <= 100.0
}

/// The latest plausible LVEF of the patient; a historical one (an echo quoted in the past
/// history) only when no current one is documented.
pub fn latest_lvef<'a>(ex: &'a Extraction, tl: &Timeline) -> Option<&'a Measurement> {
    let lvefs = || {
        ex.measurements.iter().filter(|m| {
            m.concept == MeasureConcept::Lvef && plausible_lvef(m) && m.normalized.is_some()
        })
    };
    lvefs()
        .filter(|m| counted(m))
        .max_by_key(|m| key(tl, m))
        .or_else(|| {
            lvefs()
                .filter(|m| {
                    m.assertion == crate::model::Assertion::Present
                        && m.experiencer == crate::model::Experiencer::Patient
                })
                .max_by_key(|m| key(tl, m))
        })
}

/// Mean arterial pressure estimate.
pub fn map(sbp: f64, dbp: f64) -> f64 {
    dbp + (sbp - dbp) / 3.0
}

/// BMI from kg and cm.
pub fn bmi(weight_kg: f64, height_cm: f64) -> f64 {
    let m = height_cm / 100.0;
    weight_kg / (m * m)
}

/// WHO BMI band (WHO TRS 894; cut-points from memory).
pub fn bmi_band(v: f64) -> &'static str {
    if v < 18.5 {
        "underweight"
    } else if v < 25.0 {
        "normal"
    } else if v < 30.0 {
        "overweight"
    } else {
        "obese"
    }
}

/// eGFR by the CKD-EPI 2021 creatinine equation (Inker et al., N Engl J Med 2021), for
/// creatinine in mg/dL. The coefficients are those of the publication (142; kappa 0.7 female,
/// 0.9 male; alpha -0.241 female, -0.302 male; -1.200; 0.9938 per year; 1.012 female), as
/// listed in the domain reference and as remembered from the paper; they agree.
pub fn ckd_epi_2021(scr_mg_dl: f64, age: f64, female: bool) -> f64 {
    let (kappa, alpha, sex) = if female {
        (0.7, -0.241, 1.012)
    } else {
        (0.9, -0.302, 1.0)
    };
    let r = scr_mg_dl / kappa;
    142.0 * r.min(1.0).powf(alpha) * r.max(1.0).powf(-1.200) * 0.9938_f64.powf(age) * sex
}

/// KDIGO 2012 GFR category.
pub fn kdigo_category(egfr: f64) -> &'static str {
    if egfr >= 90.0 {
        "G1"
    } else if egfr >= 60.0 {
        "G2"
    } else if egfr >= 45.0 {
        "G3a"
    } else if egfr >= 30.0 {
        "G3b"
    } else if egfr >= 15.0 {
        "G4"
    } else {
        "G5"
    }
}

/// LVEF category of a value in %: <= 40 hfref, > 40 and < 50 hfmref (so 40.5 and 49.5 are
/// hfmref: the published bands are whole numbers, and this reading leaves no gap), >= 50
/// hfpef.
pub fn lvef_category(v: f64) -> &'static str {
    if v <= 40.0 {
        "hfref"
    } else if v < 50.0 {
        "hfmref"
    } else {
        "hfpef"
    }
}

/// Classify one LVEF measurement. A range inside one category gets it; a range across a
/// boundary is classified by its midpoint (the value the note's reader would quote) with both
/// candidates listed. An upper bound (`<20%`) or lower bound (`>55%`) gets a category only
/// when every value it allows falls in one category.
pub fn classify_lvef(m: &Measurement) -> LvefCategory {
    let mut v = value(m);
    let mut range = m.range.filter(|(a, b)| a.is_finite() && b.is_finite());
    // A fraction (`EF 0.35`) is a percentage divided by 100.
    if v > 0.0 && v <= 1.0 {
        v *= 100.0;
        range = range.map(|(a, b)| (a * 100.0, b * 100.0));
    }
    let mut notes = Vec::new();
    let mut candidates = Vec::new();
    let category = match (range, m.qualifier) {
        (_, Some(Qualifier::UpperBound)) => {
            // True value below v.
            if v <= 41.0 {
                Some("hfref")
            } else {
                candidates = if v <= 50.0 {
                    vec!["hfref", "hfmref"]
                } else {
                    vec!["hfref", "hfmref", "hfpef"]
                };
                notes.push("an upper bound across a category boundary: no category".into());
                None
            }
        }
        (_, Some(Qualifier::LowerBound)) => {
            if v >= 50.0 {
                Some("hfpef")
            } else {
                candidates = if v >= 40.0 {
                    vec!["hfmref", "hfpef"]
                } else {
                    vec!["hfref", "hfmref", "hfpef"]
                };
                notes.push("a lower bound across a category boundary: no category".into());
                None
            }
        }
        (Some((lo, hi)), _) => {
            let (a, b) = (lvef_category(lo.min(hi)), lvef_category(lo.max(hi)));
            if a != b {
                candidates = vec![a, b];
                candidates.dedup();
                if a == "hfref" && b == "hfpef" {
                    candidates = vec!["hfref", "hfmref", "hfpef"];
                }
                notes.push(format!(
                    "range {}-{} % crosses a category boundary; classified by its midpoint {} %",
                    fmt_num(lo, 1),
                    fmt_num(hi, 1),
                    fmt_num(v, 1)
                ));
            }
            Some(lvef_category(v))
        }
        (None, _) => Some(lvef_category(v)),
    };
    if v.fract() != 0.0 && range.is_none() {
        notes.push("the published categories are defined on whole percentages".into());
    }
    LvefCategory {
        category,
        value: v,
        range,
        candidates,
        text: m.text.clone(),
        span: m.span,
        source: LVEF_SOURCE,
        notes,
    }
}

/// Build every derived value.
pub fn build(ex: &Extraction, tl: &Timeline, patient: &Patient, trends: &Trends) -> Derived {
    let mut d = Derived::default();
    let pair = bp_pairs(ex)
        .into_iter()
        .filter(|p| counted(p.sbp) && counted(p.dbp))
        .max_by_key(|p| key(tl, p.sbp));
    match pair {
        Some(p) => {
            let (s, di) = (p.s(), p.d());
            let inputs = vec![input(p.sbp), input(p.dbp)];
            d.mean_arterial_pressure = DerivedValue {
                value: Some(map(s, di)),
                inputs: inputs.clone(),
                reason: None,
                ..DerivedValue::absent("mm[Hg]", MAP_FORMULA, MAP_SOURCE, "")
            };
            d.pulse_pressure = DerivedValue {
                value: Some(s - di),
                inputs: inputs.clone(),
                reason: None,
                ..DerivedValue::absent("mm[Hg]", PP_FORMULA, PP_SOURCE, "")
            };
            d.proportional_pulse_pressure = DerivedValue {
                value: Some(p.ppp() * 100.0),
                inputs: inputs.clone(),
                flag: p.narrow().then_some("narrow"),
                reason: None,
                ..DerivedValue::absent("%", PPP_FORMULA, PPP_SOURCE, "")
            };
            d.shock_index = shock_index(ex, tl, &p);
        }
        None => {
            let any = ex
                .measurements
                .iter()
                .any(|m| m.concept == MeasureConcept::SystolicBp);
            let why = if any {
                "no valid blood pressure reading (systolic and diastolic of one reading, systolic above diastolic) documented for the patient"
            } else {
                "no blood pressure documented"
            };
            d.mean_arterial_pressure = DerivedValue::absent("mm[Hg]", MAP_FORMULA, MAP_SOURCE, why);
            d.pulse_pressure = DerivedValue::absent("mm[Hg]", PP_FORMULA, PP_SOURCE, why);
            d.proportional_pulse_pressure = DerivedValue::absent("%", PPP_FORMULA, PPP_SOURCE, why);
            d.shock_index = DerivedValue::absent("1", SI_FORMULA, SI_SOURCE, why);
        }
    }
    d.bmi = bmi_value(ex, tl);
    d.egfr = egfr_value(ex, tl, patient, trends);
    d.lvef_category = latest_lvef(ex, tl).map(|m| {
        let mut c = classify_lvef(m);
        if m.temporality == crate::model::Temporality::Historical {
            c.notes
                .push("from a past-history value: no current LVEF is documented".into());
        }
        improved_note(ex, tl, m, &mut c);
        c
    });
    d
}

/// Note an earlier LVEF <= 40 % before a latest > 40 %: the improved category needs the
/// clinician's words (AHA 2022: previous <= 40 and follow-up > 40; the Universal Definition
/// also needs a rise of at least 10 points).
fn improved_note(ex: &Extraction, tl: &Timeline, latest_m: &Measurement, c: &mut LvefCategory) {
    if c.value <= 40.0 {
        return;
    }
    let k = key(tl, latest_m);
    let earlier = ex
        .measurements
        .iter()
        .filter(|m| {
            m.concept == MeasureConcept::Lvef
                && counts(
                    m.assertion,
                    crate::model::Temporality::Current,
                    m.experiencer,
                ) == Counts::Present
        })
        .filter(|m| key(tl, m) < k)
        .map(value)
        .filter(|&v| v <= 40.0)
        .fold(f64::NAN, f64::min);
    if earlier.is_finite() {
        c.notes.push(format!(
            "an earlier LVEF of {} % (<= 40 %) is documented: HFimpEF by AHA 2022{}; the type must be written by the clinician",
            fmt_num(earlier, 1),
            if c.value - earlier >= 10.0 { " and by the Universal Definition (rise >= 10 points)" } else { ", not by the Universal Definition (rise < 10 points)" }
        ));
    }
}

fn shock_index(ex: &Extraction, tl: &Timeline, p: &BpPair) -> DerivedValue {
    let w = tl.when(
        p.sbp.episode,
        p.sbp.section,
        p.sbp.span.start,
        p.sbp.time_ref,
    );
    let hr = ex
        .measurements
        .iter()
        .filter(|m| m.concept == MeasureConcept::HeartRate && counted(m))
        .filter(|m| {
            m.section == p.sbp.section
                && tl.when(m.episode, m.section, m.span.start, m.time_ref) == w
        })
        .min_by_key(|m| m.span.start.abs_diff(p.sbp.span.start));
    let Some(hr) = hr else {
        return DerivedValue::absent(
            "1",
            SI_FORMULA,
            SI_SOURCE,
            "no heart rate documented with the latest blood pressure (same section and assessment)",
        );
    };
    let si = value(hr) / p.s();
    let notes = vec![
        "beta-blockers and pacing blunt the heart rate, so the index can look falsely normal (common practice, no source)".to_string(),
    ];
    DerivedValue {
        value: Some(si),
        inputs: vec![input(hr), input(p.sbp)],
        flag: (si >= SHOCK_INDEX_RAISED_FROM).then_some("raised"),
        notes,
        reason: None,
        ..DerivedValue::absent("1", SI_FORMULA, SI_SOURCE, "")
    }
}

fn bmi_value(ex: &Extraction, tl: &Timeline) -> DerivedValue {
    let w = latest(ex, tl, MeasureConcept::Weight);
    let h = latest(ex, tl, MeasureConcept::Height);
    let (w, h) = match (w, h) {
        (Some(w), Some(h)) => (w, h),
        (None, None) => {
            return DerivedValue::absent(
                "kg/m2",
                BMI_FORMULA,
                BMI_SOURCE,
                "no weight or height documented",
            )
        }
        (None, _) => {
            return DerivedValue::absent("kg/m2", BMI_FORMULA, BMI_SOURCE, "no weight documented")
        }
        (_, None) => {
            return DerivedValue::absent("kg/m2", BMI_FORMULA, BMI_SOURCE, "no height documented")
        }
    };
    let (kg, cm) = (value(w), value(h));
    if kg <= 0.0 || cm <= 0.0 {
        return DerivedValue::absent(
            "kg/m2",
            BMI_FORMULA,
            BMI_SOURCE,
            "weight or height not positive",
        );
    }
    let v = bmi(kg, cm);
    DerivedValue {
        value: Some(v),
        inputs: vec![input(w), input(h)],
        category: Some(bmi_band(v)),
        notes: vec!["in heart failure the weight includes retained fluid".into()],
        reason: None,
        ..DerivedValue::absent("kg/m2", BMI_FORMULA, BMI_SOURCE, "")
    }
}

fn egfr_value(ex: &Extraction, tl: &Timeline, patient: &Patient, trends: &Trends) -> DerivedValue {
    let absent =
        |why: &str| DerivedValue::absent("mL/min/{1.73_m2}", EGFR_FORMULA, EGFR_SOURCE, why);
    let Some(cr) = latest(ex, tl, MeasureConcept::Creatinine) else {
        return absent("no creatinine documented");
    };
    if cr.normalized.is_none() {
        return absent("the creatinine's unit could not be determined");
    }
    let Some(age) = patient.age else {
        return absent("no age documented");
    };
    let Some(sex) = patient.sex.as_deref() else {
        return absent("no sex documented");
    };
    if age < 18 {
        return absent("the equation is for adults (18 years or older)");
    }
    let umol = value(cr);
    if umol <= 0.0 {
        return absent("creatinine not positive");
    }
    let female = sex == "female";
    let v = ckd_epi_2021(umol / CREATININE_MGDL_TO_UMOLL, f64::from(age), female);
    let mut notes = vec!["the estimate assumes a steady-state creatinine".to_string()];
    if let Some(change) = trends.creatinine.change {
        if change.abs() >= 26.5 {
            notes.push(format!(
                "creatinine changed by {} umol/L in this note: not at steady state, the estimate lags",
                fmt_num(change, 0)
            ));
        }
    }
    if cr.unit_inferred {
        notes.push("the creatinine's unit was inferred".into());
    }
    let mut inputs = vec![input(cr)];
    if let Some(s) = patient.age_span {
        inputs.push(DerivedInput {
            concept: "age".into(),
            value: Some(f64::from(age)),
            unit: "a",
            text: patient.age_text.clone().unwrap_or_default(),
            span: s,
        });
    }
    if let Some(s) = patient.sex_span {
        inputs.push(DerivedInput {
            concept: "sex".into(),
            value: None,
            unit: "",
            text: patient.sex_text.clone().unwrap_or_default(),
            span: s,
        });
    }
    DerivedValue {
        value: Some(v),
        inputs,
        category: Some(kdigo_category(v)),
        notes,
        reason: None,
        ..absent("")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::MeasureConcept as M;
    use crate::picture::testkit::Note;

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn ckd_epi_2021_worked_examples() {
        // Inker et al., N Engl J Med 2021 (CKD-EPI 2021 creatinine, no race term); inputs and
        // results as in the domain reference, 06-egfr.md and check values E01-E07, which were
        // computed from the published coefficients. Results to one decimal.
        let cases = [
            (0.9, 55.0, true, 75.5),   // E01
            (1.4, 70.0, false, 54.1),  // E02
            (0.7, 40.0, false, 119.5), // E04
            (0.9, 60.0, false, 97.8),  // E05: creatinine equals kappa
            (0.6, 30.0, true, 123.8),  // E06
            (2.5, 85.0, false, 24.6),  // E07
        ];
        for (scr, age, female, want) in cases {
            let got = ckd_epi_2021(scr, age, female);
            assert!(
                close(got, want, 0.05),
                "scr {scr} age {age} female {female}: {got}"
            );
        }
        // E03: woman, 80, creatinine 130 umol/L (÷ 88.4) -> 35.9.
        assert!(close(ckd_epi_2021(130.0 / 88.4, 80.0, true), 35.9, 0.05));
        // The factor 88.42 (molar mass 113.10) gives the same to one decimal.
        assert!(close(ckd_epi_2021(130.0 / 88.42, 80.0, true), 35.9, 0.05));
        // E10: KDIGO 2012 category of E02 is G3a.
        assert_eq!(kdigo_category(ckd_epi_2021(1.4, 70.0, false)), "G3a");
        // KDIGO 2012 boundaries: 90 G1, 89.9 G2, 60 G2, 59.9 G3a, 45 G3a, 30 G3b, 15 G4.
        assert_eq!(kdigo_category(90.0), "G1");
        assert_eq!(kdigo_category(89.9), "G2");
        assert_eq!(kdigo_category(59.9), "G3a");
        assert_eq!(kdigo_category(44.9), "G3b");
        assert_eq!(kdigo_category(29.9), "G4");
        assert_eq!(kdigo_category(14.9), "G5");
    }

    #[test]
    fn ckd_epi_intermediate_terms_match_the_worked_example() {
        // 06-egfr.md example 4: 0.777778^-0.302 = 1.078851 and 0.9938^40 = 0.779758.
        assert!(close((0.7_f64 / 0.9).powf(-0.302), 1.078851, 1e-6));
        assert!(close(0.9938_f64.powf(40.0), 0.779758, 1e-6));
        // Example 1: 1.285714^-1.2 = 0.739651.
        assert!(close((0.9_f64 / 0.7).powf(-1.2), 0.739651, 1e-6));
    }

    #[test]
    fn map_pp_ppp_and_shock_index_check_values() {
        // MAP = DBP + (SBP - DBP)/3 (McGee); domain check values D01, D02.
        assert!(close(map(98.0, 60.0), 72.667, 0.001));
        assert!(close(map(120.0, 80.0), 93.333, 0.001));
        // Shock index HR/SBP (Allgower & Burri 1967): D07 110/98 = 1.1224, D08 72/120 = 0.60.
        assert!(close(110.0 / 98.0, 1.1224, 1e-4));
    }

    #[test]
    fn bmi_check_values() {
        // WHO formula kg/m^2: D09 82 kg, 175 cm -> 26.776.
        assert!(close(bmi(82.0, 175.0), 26.776, 0.001));
        // D10: 180 lb and 69 in with the exact factors (1959 yard and pound agreement):
        // 26.581; the rounded "703 x lb/in^2" (26.578) must fail at this tolerance.
        let v = bmi(180.0 * 0.45359237, 69.0 * 2.54);
        assert!(close(v, 26.581, 0.001));
        assert!(!close(703.0 * 180.0 / (69.0 * 69.0), 26.581, 0.001));
        // WHO bands 18.5 / 25 / 30 (from memory).
        assert_eq!(bmi_band(18.4), "underweight");
        assert_eq!(bmi_band(18.5), "normal");
        assert_eq!(bmi_band(25.0), "overweight");
        assert_eq!(bmi_band(30.0), "obese");
    }

    fn lvef(v: f64) -> Measurement {
        let mut n = Note::new("LVEF x%");
        n.measure("LVEF x%", M::Lvef, v).clone()
    }

    #[test]
    fn lvef_boundaries() {
        // Universal Definition 2021 and AHA/ACC/HFSA 2022: <= 40 HFrEF, 41-49 HFmrEF,
        // >= 50 HFpEF (check values L01-L04).
        assert_eq!(lvef_category(40.0), "hfref");
        assert_eq!(lvef_category(41.0), "hfmref");
        assert_eq!(lvef_category(49.0), "hfmref");
        assert_eq!(lvef_category(50.0), "hfpef");
        // L05 (design rule): 40.5 is HFmrEF, flagged as non-integer; 49.5 is HFmrEF too.
        let c = classify_lvef(&lvef(40.5));
        assert_eq!(c.category, Some("hfmref"));
        assert!(c.notes.iter().any(|n| n.contains("whole")));
        assert_eq!(classify_lvef(&lvef(49.5)).category, Some("hfmref"));
        // L08: a fraction 0.35 is 35 %.
        let c = classify_lvef(&lvef(0.35));
        assert!(close(c.value, 35.0, 1e-9));
        assert_eq!(c.category, Some("hfref"));
    }

    #[test]
    fn lvef_ranges_and_bounds() {
        // L06: "35-40%" lies in HFrEF (midpoint 37.5).
        let mut m = lvef(37.5);
        m.range = Some((35.0, 40.0));
        let c = classify_lvef(&m);
        assert_eq!(c.category, Some("hfref"));
        assert!(c.candidates.is_empty());
        // L07: "40-45%" crosses: both candidates listed, midpoint 42.5 classifies.
        m.value = 42.5;
        m.normalized = Some(crate::model::Quantity {
            value: 42.5,
            unit: "%",
        });
        m.range = Some((40.0, 45.0));
        let c = classify_lvef(&m);
        assert_eq!(c.candidates, vec!["hfref", "hfmref"]);
        assert_eq!(c.category, Some("hfmref"));
        // L09: "EF <20%" is an upper bound: HFrEF.
        let mut b = lvef(20.0);
        b.qualifier = Some(Qualifier::UpperBound);
        assert_eq!(classify_lvef(&b).category, Some("hfref"));
        // "EF <45%" leaves it open.
        let mut b = lvef(45.0);
        b.qualifier = Some(Qualifier::UpperBound);
        assert_eq!(classify_lvef(&b).category, None);
        // "EF >55%" is HFpEF.
        let mut b = lvef(55.0);
        b.qualifier = Some(Qualifier::LowerBound);
        assert_eq!(classify_lvef(&b).category, Some("hfpef"));
    }

    #[test]
    fn bp_pairs_need_one_reading_and_systolic_above_diastolic() {
        let mut n = Note::new("BP 98/60 then BP 60/80 and SBP 100");
        n.bp("BP 98/60", 98.0, 60.0).bp("BP 60/80", 60.0, 80.0);
        n.measure("SBP 100", M::SystolicBp, 100.0);
        let ex = n.build();
        let pairs = bp_pairs(&ex);
        // D06: 60/80 is rejected; the lone systolic has no partner.
        assert_eq!(pairs.len(), 1);
        assert_eq!((pairs[0].s(), pairs[0].d()), (98.0, 60.0));
        // D01: PPP 0.38776.
        assert!(close(pairs[0].ppp(), 0.38776, 1e-5));
    }

    #[test]
    fn ppp_threshold_is_strict() {
        // Stevenson & Perloff 1989, check values D03-D05: 90/72 PPP 0.20 narrow; 100/75 is
        // exactly 0.25 and not narrow; 85/70 is 0.1765, narrow.
        for (s, d, narrow, ppp) in [
            (90.0, 72.0, true, 0.20),
            (100.0, 75.0, false, 0.25),
            (85.0, 70.0, true, 0.1765),
        ] {
            let text = format!("BP {s}/{d}");
            let mut n = Note::new(&text);
            n.bp(&text, s, d);
            let ex = n.build();
            let p = bp_pairs(&ex)[0];
            assert_eq!(p.narrow(), narrow, "{text}");
            assert!(close(p.ppp(), ppp, 1e-4), "{text}");
        }
    }

    #[test]
    fn derived_values_from_a_note() {
        let text =
            "Obs: BP 120/80, HR 110. Wt 82 kg, height 175 cm. Cr 130 umol/L.\nBP 98/60, HR 72";
        let mut n = Note::new(text);
        n.section(crate::model::SectionKind::Observations, "Obs:");
        n.bp("BP 120/80", 120.0, 80.0);
        n.measure("HR 110", M::HeartRate, 110.0);
        n.measure("Wt 82 kg", M::Weight, 82.0);
        n.measure("height 175 cm", M::Height, 175.0);
        n.measure("Cr 130 umol/L", M::Creatinine, 130.0);
        n.bp("BP 98/60", 98.0, 60.0);
        n.measure("HR 72", M::HeartRate, 72.0);
        let ex = n.build();
        let tl = Timeline::new(&ex);
        let mut patient = Patient::default();
        let d = build(&ex, &tl, &patient, &Trends::default());
        // The later reading decides: 98/60 (D01: MAP 72.667, PP 38, PPP 38.8 %).
        assert!(close(
            d.mean_arterial_pressure.value.unwrap(),
            72.667,
            0.001
        ));
        assert_eq!(d.pulse_pressure.value, Some(38.0));
        assert!(close(
            d.proportional_pulse_pressure.value.unwrap(),
            38.776,
            0.001
        ));
        assert_eq!(d.proportional_pulse_pressure.flag, None);
        assert_eq!(d.mean_arterial_pressure.inputs.len(), 2);
        assert_eq!(d.mean_arterial_pressure.inputs[0].text, "BP 98/60");
        // The heart rate nearest that reading: 72/98 = 0.7347.
        assert!(close(d.shock_index.value.unwrap(), 72.0 / 98.0, 1e-9));
        assert_eq!(d.shock_index.flag, None);
        assert!(close(d.bmi.value.unwrap(), 26.776, 0.001));
        assert_eq!(d.bmi.category, Some("overweight"));
        // No age or sex: eGFR absent with the reason.
        assert_eq!(d.egfr.value, None);
        assert_eq!(d.egfr.reason.as_deref(), Some("no age documented"));
        patient.age = Some(80);
        let d = build(&ex, &tl, &patient, &Trends::default());
        assert_eq!(d.egfr.reason.as_deref(), Some("no sex documented"));
        patient.sex = Some("female".into());
        let d = build(&ex, &tl, &patient, &Trends::default());
        // E03: woman, 80, 130 umol/L -> 35.9 (G3b).
        assert!(close(d.egfr.value.unwrap(), 35.9, 0.05));
        assert_eq!(d.egfr.category, Some("G3b"));
        patient.age = Some(17);
        let d = build(&ex, &tl, &patient, &Trends::default());
        // E08: adults only.
        assert!(d.egfr.reason.unwrap().contains("adults"));
    }

    #[test]
    fn shock_index_flag_and_missing_inputs() {
        let mut n = Note::new("BP 98/60 HR 110");
        n.bp("BP 98/60", 98.0, 60.0);
        n.measure("HR 110", M::HeartRate, 110.0);
        let ex = n.build();
        let tl = Timeline::new(&ex);
        let d = build(&ex, &tl, &Patient::default(), &Trends::default());
        // D07: 1.1224, flag raised (>= 1.0).
        assert!(close(d.shock_index.value.unwrap(), 1.1224, 1e-4));
        assert_eq!(d.shock_index.flag, Some("raised"));
        assert_eq!(
            d.bmi.reason.as_deref(),
            Some("no weight or height documented")
        );
        let empty = Extraction::default();
        let tl = Timeline::new(&empty);
        let d = build(&empty, &tl, &Patient::default(), &Trends::default());
        assert_eq!(
            d.mean_arterial_pressure.reason.as_deref(),
            Some("no blood pressure documented")
        );
        assert_eq!(d.egfr.reason.as_deref(), Some("no creatinine documented"));
        assert!(d.lvef_category.is_none());
    }

    #[test]
    fn family_and_hypothetical_values_do_not_feed_derived_values() {
        let mut n = Note::new("if SBP < 90 hold; Mother BP 150/95");
        n.measure("SBP < 90", M::SystolicBp, 90.0).assertion =
            crate::model::Assertion::Hypothetical;
        n.bp("BP 150/95", 150.0, 95.0);
        for m in n.ex.measurements.iter_mut().skip(1) {
            m.experiencer = crate::model::Experiencer::Other;
        }
        let ex = n.build();
        let tl = Timeline::new(&ex);
        let d = build(&ex, &tl, &Patient::default(), &Trends::default());
        assert_eq!(d.mean_arterial_pressure.value, None);
    }

    #[test]
    fn improved_ef_is_noted_not_classified() {
        let mut n = Note::new("Echo 2024 LVEF 30%. Echo now LVEF 45%.");
        n.measure("LVEF 30%", M::Lvef, 30.0).time_ref = Some(crate::model::TimeRef::Previous);
        n.measure("LVEF 45%", M::Lvef, 45.0);
        let ex = n.build();
        let tl = Timeline::new(&ex);
        let d = build(&ex, &tl, &Patient::default(), &Trends::default());
        let c = d.lvef_category.unwrap();
        // L10: baseline 30, follow-up 45: the current category is HFmrEF; HFimpEF by both
        // definitions (AHA 2022; Universal Definition: rise 15 >= 10) is noted.
        assert_eq!(c.category, Some("hfmref"));
        assert!(c
            .notes
            .iter()
            .any(|s| s.contains("HFimpEF") && s.contains("and by the Universal")));
    }
}
