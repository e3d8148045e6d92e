//! The clinical picture: bedside profile, classifications, patient facts, derived values and
//! trends, built from the extracted model alone.
//!
//! Every conclusion keeps the spans of the items that support it. Only mentions that are
//! present, current and about the patient count as signs; denied, current, patient mentions
//! count as assessed and normal; possible, hypothetical, historical and other people's
//! mentions count as neither (they are listed under `profile.set_aside`).
//!
//! Where the note covers several time points, [`timeline`] decides which assessment is the
//! latest; the profile uses it, the classifications take the most recent statement, and the
//! trends order their series by it.

pub mod classify;
pub mod derived;
pub mod patient;
pub mod profile;
pub mod timeline;
pub mod trends;

#[cfg(test)]
pub(crate) mod examples;
#[cfg(test)]
mod robustness_tests;
#[cfg(test)]
mod schema_tests;
#[cfg(test)]
pub(crate) mod testkit;

use serde::Serialize;

use crate::model::{Assertion, Experiencer, Extraction, Temporality};

pub use classify::{ClassSource, ClassSources, Classifications};
pub use derived::{Derived, DerivedInput, DerivedValue, LvefCategory};
pub use patient::Patient;
pub use profile::{Conflict, Congestion, Evidence, Perfusion, Profile};
pub use trends::{
    BalanceDay, FluidBalanceTrend, LabSeries, SeriesPoint, TargetWeight, Trends, WeightTrend,
};

/// The whole picture of one document.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Picture {
    pub profile: Profile,
    pub classifications: Classifications,
    pub patient: Patient,
    pub derived: Derived,
    pub trends: Trends,
}

/// Build the picture from the extracted model.
pub fn build(ex: &Extraction) -> Picture {
    let tl = timeline::Timeline::new(ex);
    let patient = patient::build(ex, &tl);
    let classifications = classify::build(ex, &tl);
    let trends = trends::build(ex, &tl);
    let derived = derived::build(ex, &tl, &patient, &trends);
    let profile = profile::build(ex, &tl);
    Picture {
        profile,
        classifications,
        patient,
        derived,
        trends,
    }
}

/// How one mention counts, from its assertion context.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Counts {
    /// Present, current, patient: a sign.
    Present,
    /// Denied, current, patient: assessed and normal.
    Absent,
    /// Neither; the reason is given.
    No(&'static str),
}

pub(crate) fn counts(a: Assertion, t: Temporality, e: Experiencer) -> Counts {
    if e == Experiencer::Other {
        return Counts::No("about another person");
    }
    if t == Temporality::Historical {
        return Counts::No("historical");
    }
    match a {
        Assertion::Present => Counts::Present,
        Assertion::Absent => Counts::Absent,
        Assertion::Possible => Counts::No("possible only"),
        Assertion::Hypothetical => Counts::No("hypothetical"),
    }
}

/// Days since 1970-01-01 of an ISO date `YYYY-MM-DD` (proleptic Gregorian calendar).
pub fn days_from_iso(iso: &str) -> Option<i64> {
    let mut it = iso.trim().splitn(3, '-');
    let y: i64 = it.next()?.parse().ok()?;
    let m: i64 = it.next()?.parse().ok()?;
    let d: i64 = it.next()?.get(..2)?.parse().ok()?;
    if !(1..=9999).contains(&y) || !(1..=12).contains(&m) || !(1..=31).contains(&d) {
        return None;
    }
    // Days-from-civil (H. Hinnant's algorithm).
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let mp = (m + 9) % 12;
    let doy = (153 * mp + 2) / 5 + d - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    Some(era * 146_097 + doe - 719_468)
}

/// The ISO date of a day count from [`days_from_iso`].
pub fn iso_from_days(z: i64) -> String {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!("{y:04}-{m:02}-{d:02}")
}

/// The first number in a statement value (`72`, `72.5 kg`, `72-73`, `about 72`).
pub(crate) fn leading_number(v: &str) -> Option<f64> {
    let start = v.find(|c: char| c.is_ascii_digit())?;
    let rest = &v[start..];
    let end = rest
        .find(|c: char| !(c.is_ascii_digit() || c == '.'))
        .unwrap_or(rest.len());
    let n: f64 = rest[..end].trim_end_matches('.').parse().ok()?;
    n.is_finite().then_some(n)
}

/// Round for display and notes (the values themselves keep full precision).
pub fn fmt_num(v: f64, decimals: usize) -> String {
    let s = format!("{v:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn iso_dates_round_trip_and_count_days() {
        // 1970-01-01 is day 0 by definition of the count; 2000 and 2024 are leap years
        // (Gregorian rule), 2026 is not.
        assert_eq!(days_from_iso("1970-01-01"), Some(0));
        assert_eq!(
            days_from_iso("2024-03-01").unwrap() - days_from_iso("2024-02-28").unwrap(),
            2
        );
        assert_eq!(
            days_from_iso("2026-03-01").unwrap() - days_from_iso("2026-02-28").unwrap(),
            1
        );
        assert_eq!(
            days_from_iso("2027-01-01").unwrap() - days_from_iso("2026-01-01").unwrap(),
            365
        );
        for iso in ["2000-02-29", "2026-11-14", "1999-12-31"] {
            assert_eq!(iso_from_days(days_from_iso(iso).unwrap()), iso);
        }
        assert_eq!(days_from_iso("2026-13-01"), None);
        assert_eq!(days_from_iso("garbage"), None);
        assert_eq!(days_from_iso(""), None);
    }

    #[test]
    fn context_decides_what_counts() {
        use Assertion::*;
        let c = |a| counts(a, Temporality::Current, Experiencer::Patient);
        assert_eq!(c(Present), Counts::Present);
        assert_eq!(c(Absent), Counts::Absent);
        assert!(matches!(c(Possible), Counts::No(_)));
        assert!(matches!(c(Hypothetical), Counts::No(_)));
        assert!(matches!(
            counts(Present, Temporality::Historical, Experiencer::Patient),
            Counts::No("historical")
        ));
        assert!(matches!(
            counts(Present, Temporality::Current, Experiencer::Other),
            Counts::No("about another person")
        ));
        // A denied family mention is not "absent" for the patient.
        assert!(matches!(
            counts(Absent, Temporality::Current, Experiencer::Other),
            Counts::No(_)
        ));
    }

    #[test]
    fn leading_numbers_of_statement_values() {
        assert_eq!(leading_number("72"), Some(72.0));
        assert_eq!(leading_number("about 72.5 kg"), Some(72.5));
        assert_eq!(leading_number("72-73"), Some(72.0));
        assert_eq!(leading_number("none"), None);
        assert_eq!(leading_number(""), None);
    }

    #[test]
    fn numbers_format_without_trailing_zeros() {
        assert_eq!(fmt_num(72.6667, 0), "73");
        assert_eq!(fmt_num(0.25, 2), "0.25");
        assert_eq!(fmt_num(2.0, 1), "2");
        assert_eq!(fmt_num(-1.24, 1), "-1.2");
    }
}
