//! One module per rule; [`ALL`] is the registry in listing order.

pub mod ckd_stage_unspecified;
pub mod discharge_instructions_incomplete;
pub mod diuretic_plan_missing;
pub mod hf_acuity_unspecified;
pub mod hf_code_suggestion;
pub mod hf_type_ef_mismatch;
pub mod hf_type_unspecified;
pub mod lvef_missing;
pub mod nyha_missing;
pub mod potassium_raising_continued;
pub mod unit_missing;
pub mod unit_mixed;
pub mod value_implausible;
pub mod volume_status_contradiction;
pub mod volume_status_missing;
pub mod weight_gain_unaddressed;
pub mod weight_missing;
pub mod weight_series_undated;

use super::Rule;
use crate::model::{Extraction, FindingConcept, MeasureConcept, Measurement};

/// Every rule, documentation rules first, then units, plausibility, coding, consistency and
/// safety.
pub static ALL: &[Rule] = &[
    weight_missing::RULE,
    volume_status_missing::RULE,
    lvef_missing::RULE,
    nyha_missing::RULE,
    discharge_instructions_incomplete::RULE,
    weight_series_undated::RULE,
    unit_missing::RULE,
    unit_mixed::RULE,
    value_implausible::RULE,
    hf_type_unspecified::RULE,
    hf_acuity_unspecified::RULE,
    ckd_stage_unspecified::RULE,
    hf_code_suggestion::RULE,
    volume_status_contradiction::RULE,
    hf_type_ef_mismatch::RULE,
    weight_gain_unaddressed::RULE,
    diuretic_plan_missing::RULE,
    potassium_raising_continued::RULE,
];

/// Congestion signs of the Nohria–Stevenson bedside profile (breathlessness alone is not one).
pub(crate) const CONGESTION_SIGNS: [FindingConcept; 8] = [
    FindingConcept::Orthopnea,
    FindingConcept::Pnd,
    FindingConcept::Crackles,
    FindingConcept::PeripheralEdema,
    FindingConcept::RaisedJvp,
    FindingConcept::HepatojugularReflux,
    FindingConcept::Ascites,
    FindingConcept::PleuralEffusion,
];

/// Measurements of the patient that the note affirms (not denied, hypothetical or someone
/// else's), of one concept, in document order.
pub(crate) fn patient_values(ex: &Extraction, concept: MeasureConcept) -> Vec<&Measurement> {
    use crate::model::{Assertion, Experiencer};
    let mut v: Vec<&Measurement> = ex
        .measurements
        .iter()
        .filter(|m| {
            m.concept == concept
                && m.experiencer == Experiencer::Patient
                && matches!(m.assertion, Assertion::Present | Assertion::Possible)
        })
        .collect();
    v.sort_by_key(|m| m.span.start);
    v
}

/// Whether the note is about a heart-failure patient: heart failure named or typed, a NYHA
/// class stated, or an LVEF or natriuretic peptide measured.
pub(crate) fn hf_relevant(ex: &Extraction) -> bool {
    super::hf_mention(ex).is_some()
        || !super::statements(ex, crate::model::StatementKind::Nyha).is_empty()
        || ex.measurements.iter().any(|m| {
            matches!(
                m.concept,
                MeasureConcept::Lvef | MeasureConcept::Bnp | MeasureConcept::NtProbnp
            )
        })
}

/// The first mention of heart failure that the coding and documentation rules act on: an
/// affirmed one, or an uncertain one ("suspected heart failure", "?HFpEF") in a discharge
/// summary only. Uncertain diagnoses are coded as if established only for inpatients at
/// discharge (ICD-10-CM Official Guidelines FY2026, Section II.H); in outpatient and
/// consultation notes they are not coded (Section IV.H), so a possible or queried heart
/// failure there asks for no type, acuity, LVEF or NYHA class yet.
pub(crate) fn hf_for_coding<'a>(cx: &super::Ctx<'a>) -> Option<&'a crate::model::Statement> {
    use crate::model::Assertion;
    let m = super::hf_mention(cx.ex)?;
    if m.assertion == Assertion::Present || cx.kind == super::DocKind::DischargeSummary {
        return Some(m);
    }
    super::statements(cx.ex, crate::model::StatementKind::HeartFailure)
        .into_iter()
        .chain(super::statements(
            cx.ex,
            crate::model::StatementKind::HfType,
        ))
        .min_by_key(|s| s.span.start)
}

/// Whether the note says, in one sentence, that an item was not done for a reason or is
/// planned: `re` is matched case-insensitively against each line of `text`.
pub(crate) fn documented(text: &str, re: &regex::Regex) -> bool {
    text.lines().any(|l| re.is_match(l))
}

/// Days since 1970-01-01 of an ISO date `YYYY-MM-DD` (proleptic Gregorian), if valid.
pub(crate) fn iso_day(date: &str) -> Option<i64> {
    let mut parts = date.get(..10)?.split('-');
    let y: i64 = parts.next()?.parse().ok()?;
    let m: i64 = parts.next()?.parse().ok()?;
    let d: i64 = parts.next()?.parse().ok()?;
    if !(1..=12).contains(&m) || !(1..=31).contains(&d) {
        return None;
    }
    // Days-from-civil algorithm (H. Hinnant, "chrono-Compatible Low-Level Date Algorithms").
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let mp = (m + 9) % 12;
    let doy = (153 * mp + 2) / 5 + d - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    Some(era * 146097 + doe - 719468)
}

/// The date a measurement belongs to: its own, else its documented day's.
pub(crate) fn value_date<'a>(ex: &'a Extraction, m: &'a Measurement) -> Option<&'a str> {
    m.date.as_deref().or_else(|| {
        m.episode
            .and_then(|i| ex.episodes.get(i))
            .and_then(|e| e.date.as_deref())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn iso_days_match_known_dates() {
        // 1970-01-01 is day 0 of the Unix epoch; 2000-03-01 is day 11017 (POSIX time
        // 951868800 / 86400); 2024 is a leap year.
        assert_eq!(iso_day("1970-01-01"), Some(0));
        assert_eq!(iso_day("2000-03-01"), Some(11017));
        assert_eq!(
            iso_day("2024-03-01").unwrap() - iso_day("2024-02-28").unwrap(),
            2
        );
        assert_eq!(iso_day("2026-13-01"), None);
        assert_eq!(iso_day("garbage"), None);
    }
}
