//! Trends over the note: the weight series, fluid balance per day and cumulative, and the
//! creatinine and potassium series.
//!
//! Series hold the patient's current values (and dated or admission/baseline values the note
//! quotes), ordered by the assessment they belong to ([`super::timeline`]), then date, time
//! and position. A value repeated for the same day is listed once.
//!
//! Weight: first, last, total change, the change over the last 72 h, the change per day,
//! and a flag when the weight rises by **more than 2 kg within 3 days** (ESC Heart Failure
//! Association patient information, page "Weight gain": tell the doctor or nurse if weight
//! rises by more than 2 kg in 3 days; exactly 2.0 kg does not fire). Windows count calendar
//! days between dated values; the earliest value of each day is used. A step whose ratio is
//! within 2 % of 2.2046 is probably a kg/lb mix-up, not a change: the series is marked
//! `unit_inconsistent` and no change is computed across it (domain reference 11.2, design
//! rule).

use serde::Serialize;

use super::derived::value;
use super::timeline::{Timeline, When};
use super::{counts, days_from_iso, fmt_num, Counts};
use crate::model::{Extraction, MeasureConcept, Measurement, StatementKind, TimeRef};
use crate::span::Span;

/// Rise (kg) that must be exceeded within [`WEIGHT_GAIN_DAYS`] days to flag.
pub const WEIGHT_GAIN_KG: f64 = 2.0;
pub const WEIGHT_GAIN_DAYS: i64 = 3;
const WEIGHT_GAIN_RULE: &str = "weight rise > 2 kg within 3 days (ESC Heart Failure Association patient information, \"Weight gain\")";
const KG_PER_LB: f64 = 0.45359237;

/// One value of a series.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SeriesPoint {
    pub value: f64,
    pub unit: &'static str,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub date: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub time: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub time_ref: Option<TimeRef>,
    pub text: String,
    pub span: Span,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub episode: Option<usize>,
}

/// A documented target or dry weight.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TargetWeight {
    pub value: f64,
    pub text: String,
    pub span: Span,
}

/// The weight series and what it shows.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct WeightTrend {
    pub points: Vec<SeriesPoint>,
    pub first: Option<f64>,
    pub last: Option<f64>,
    /// last - first, kg.
    pub change: Option<f64>,
    /// Calendar days from the first to the last value, when both are dated.
    pub days: Option<i64>,
    /// Change from the earliest value within the 3 days before the last one.
    pub change_72h: Option<f64>,
    /// change / days.
    pub per_day: Option<f64>,
    /// The largest rise between two dated values at most 3 days apart.
    pub max_rise_3d: Option<f64>,
    /// The rise exceeds 2 kg within 3 days.
    pub gain_flag: bool,
    pub gain_rule: &'static str,
    pub unit_inconsistent: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub target: Option<TargetWeight>,
    /// last - target, kg.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub above_target: Option<f64>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub notes: Vec<String>,
}

/// One day's net fluid balance (intake - output; negative means more out than in).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BalanceDay {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub date: Option<String>,
    /// mL.
    pub value: f64,
    /// Running sum of the days so far, mL.
    pub cumulative: f64,
    pub text: String,
    pub span: Span,
}

/// Fluid balance per day and cumulative.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct FluidBalanceTrend {
    pub days: Vec<BalanceDay>,
    /// Sum of the per-day balances, mL.
    pub cumulative: Option<f64>,
    /// A balance the note gives for the whole stay ("over the admission", "cumulative").
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stated_total: Option<SeriesPoint>,
}

/// A laboratory series with its change from first to last.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct LabSeries {
    pub unit: &'static str,
    pub points: Vec<SeriesPoint>,
    pub first: Option<f64>,
    pub last: Option<f64>,
    pub change: Option<f64>,
}

/// Trends of one note.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Trends {
    pub weight: WeightTrend,
    pub fluid_balance: FluidBalanceTrend,
    pub creatinine: LabSeries,
    pub potassium: LabSeries,
}

type Key = (When, String, String, u8, usize);

/// The series of one concept, oldest first, repeats removed.
fn series(ex: &Extraction, tl: &Timeline, concept: MeasureConcept) -> Vec<(Key, SeriesPoint)> {
    let mut pts: Vec<(Key, SeriesPoint)> = ex
        .measurements
        .iter()
        .filter(|m| m.concept == concept && wanted(m))
        .map(|m| {
            let date = tl.date_of(m.date.as_deref(), m.episode, m.span.start, m.time_ref);
            let key = (
                tl.when(m.episode, m.section, m.span.start, m.time_ref),
                date.clone().unwrap_or_default(),
                m.time.clone().unwrap_or_default(),
                u8::from(m.time_ref == Some(TimeRef::Discharge)),
                m.span.start,
            );
            let p = SeriesPoint {
                value: value(m),
                unit: m
                    .normalized
                    .map(|q| q.unit)
                    .unwrap_or(concept.canonical_unit()),
                date,
                time: m.time.clone(),
                time_ref: m.time_ref,
                text: m.text.clone(),
                span: m.span,
                episode: m.episode,
            };
            (key, p)
        })
        .collect();
    pts.sort_by(|a, b| a.0.cmp(&b.0));
    let mut out: Vec<(Key, SeriesPoint)> = Vec::with_capacity(pts.len());
    for (k, p) in pts {
        let repeat = out.iter().any(|(k2, q)| {
            (q.value - p.value).abs() < 1e-9
                && q.time == p.time
                && match (&q.date, &p.date) {
                    (Some(a), Some(b)) => a == b,
                    (None, None) => k2.0 == k.0,
                    _ => false,
                }
        });
        if !repeat {
            out.push((k, p));
        }
    }
    out
}

/// A patient value with a number: present, about the patient, current or dated.
fn wanted(m: &Measurement) -> bool {
    if !value(m).is_finite() || m.normalized.is_none() {
        return false;
    }
    match counts(m.assertion, m.temporality, m.experiencer) {
        Counts::Present => true,
        // A dated or baseline value the note quotes from the past still belongs to the series.
        Counts::No("historical") => m.date.is_some() || m.time_ref.is_some(),
        _ => false,
    }
}

fn lab(ex: &Extraction, tl: &Timeline, concept: MeasureConcept) -> LabSeries {
    let points: Vec<SeriesPoint> = series(ex, tl, concept)
        .into_iter()
        .map(|(_, p)| p)
        .collect();
    let first = points.first().map(|p| p.value);
    let last = points.last().map(|p| p.value);
    LabSeries {
        unit: concept.canonical_unit(),
        change: (points.len() >= 2).then(|| last.unwrap_or(0.0) - first.unwrap_or(0.0)),
        first,
        last,
        points,
    }
}

/// Whether two consecutive weights look like the same weight in kg and lb.
fn kg_lb_mix(a: f64, b: f64) -> bool {
    if a <= 0.0 || b <= 0.0 {
        return false;
    }
    let ratio = a.max(b) / a.min(b);
    ((ratio - 1.0 / KG_PER_LB) / (1.0 / KG_PER_LB)).abs() <= 0.02
}

fn weight(ex: &Extraction, tl: &Timeline) -> WeightTrend {
    let points: Vec<SeriesPoint> = series(ex, tl, MeasureConcept::Weight)
        .into_iter()
        .map(|(_, p)| p)
        .collect();
    let mut w = WeightTrend {
        gain_rule: WEIGHT_GAIN_RULE,
        ..WeightTrend::default()
    };
    if let Some((s, v)) = ex
        .statements
        .iter()
        .filter(|s| {
            s.kind == StatementKind::TargetWeight
                && counts(s.assertion, s.temporality, s.experiencer) == Counts::Present
        })
        .filter_map(|s| {
            super::leading_number(&s.value)
                .filter(|v| *v > 0.0)
                .map(|v| (s, v))
        })
        .max_by_key(|(s, _)| s.span.start)
    {
        w.target = Some(TargetWeight {
            value: v,
            text: s.text.clone(),
            span: s.span,
        });
    }
    w.first = points.first().map(|p| p.value);
    w.last = points.last().map(|p| p.value);
    if let (Some(last), Some(t)) = (w.last, &w.target) {
        w.above_target = Some(last - t.value);
    }
    w.unit_inconsistent = points.windows(2).any(|p| kg_lb_mix(p[0].value, p[1].value));
    if w.unit_inconsistent {
        w.notes.push("consecutive weights differ by a factor near 2.2046 (kg and lb mixed?): no change computed".into());
        w.points = points;
        return w;
    }
    if points.len() >= 2 {
        w.change = Some(w.last.unwrap_or(0.0) - w.first.unwrap_or(0.0));
    }
    // Dated values, the earliest of each day.
    let mut dated: Vec<(i64, f64)> = Vec::new();
    for p in &points {
        if let Some(d) = p.date.as_deref().and_then(days_from_iso) {
            if !dated.iter().any(|(x, _)| *x == d) {
                dated.push((d, p.value));
            }
        }
    }
    dated.sort_by_key(|(d, _)| *d);
    let first_dated = points
        .first()
        .and_then(|p| p.date.as_deref())
        .and_then(days_from_iso);
    let last_dated = points
        .last()
        .and_then(|p| p.date.as_deref())
        .and_then(days_from_iso);
    if let (Some(a), Some(b), Some(change)) = (first_dated, last_dated, w.change) {
        if b > a {
            w.days = Some(b - a);
            w.per_day = Some(change / (b - a) as f64);
        }
    }
    if let (Some(b), Some(last)) = (last_dated, w.last) {
        if let Some(&(_, v0)) = dated
            .iter()
            .find(|(d, _)| b - d <= WEIGHT_GAIN_DAYS && *d < b)
        {
            w.change_72h = Some(last - v0);
        }
    }
    let mut max_rise: Option<f64> = None;
    for (i, &(di, vi)) in dated.iter().enumerate() {
        for &(dj, vj) in &dated[i + 1..] {
            if dj - di <= WEIGHT_GAIN_DAYS {
                let r = vj - vi;
                max_rise = Some(max_rise.map_or(r, |m: f64| m.max(r)));
            }
        }
    }
    w.max_rise_3d = max_rise;
    // Strictly more than 2 kg; a small epsilon keeps 82.0 - 80.0 from firing on rounding.
    w.gain_flag = max_rise.is_some_and(|r| r > WEIGHT_GAIN_KG + 1e-9);
    if points.len() >= 2 && dated.len() < 2 {
        w.notes
            .push("values are not dated: no per-day or 72 h change".into());
    }
    if let Some(r) = max_rise.filter(|_| w.gain_flag) {
        w.notes
            .push(format!("rise of {} kg within 3 days", fmt_num(r, 1)));
    }
    w.points = points;
    w
}

fn is_total(text: &str) -> bool {
    let t = text.to_lowercase();
    [
        "admission",
        "cumulative",
        "total",
        "since adm",
        "overall",
        "whole stay",
        "so far",
    ]
    .iter()
    .any(|w| t.contains(w))
}

fn fluid_balance(ex: &Extraction, tl: &Timeline) -> FluidBalanceTrend {
    let mut fb = FluidBalanceTrend::default();
    let mut days: Vec<(Key, SeriesPoint)> = Vec::new();
    for (k, p) in series(ex, tl, MeasureConcept::FluidBalance) {
        if is_total(&p.text) {
            fb.stated_total = Some(p);
            continue;
        }
        // One balance per day: the day key is the date, else the assessment.
        let same = days.iter().position(|(k2, q)| match (&q.date, &p.date) {
            (Some(a), Some(b)) => a == b,
            (None, None) => k2.0 == k.0,
            _ => false,
        });
        match same {
            // The later figure of a day replaces the earlier (a running figure updated).
            Some(i) => days[i] = (k, p),
            None => days.push((k, p)),
        }
    }
    let mut sum = 0.0;
    for (_, p) in days {
        sum += p.value;
        fb.days.push(BalanceDay {
            date: p.date,
            value: p.value,
            cumulative: sum,
            text: p.text,
            span: p.span,
        });
    }
    fb.cumulative = (!fb.days.is_empty()).then_some(sum);
    fb
}

/// Build the trends.
pub fn build(ex: &Extraction, tl: &Timeline) -> Trends {
    Trends {
        weight: weight(ex, tl),
        fluid_balance: fluid_balance(ex, tl),
        creatinine: lab(ex, tl, MeasureConcept::Creatinine),
        potassium: lab(ex, tl, MeasureConcept::Potassium),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Assertion, MeasureConcept as M};
    use crate::picture::testkit::Note;

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    /// A note with one dated weight per line.
    fn weights(rows: &[(&str, f64)]) -> Extraction {
        let text: String = rows
            .iter()
            .map(|(d, v)| format!("{d} Wt {v} kg\n"))
            .collect();
        let mut n = Note::new(&text);
        for (d, v) in rows {
            let words = format!("{d} Wt {v} kg");
            n.measure(&words, M::Weight, *v).date = Some(d.to_string());
        }
        n.build()
    }

    fn wt(ex: &Extraction) -> WeightTrend {
        weight(ex, &Timeline::new(ex))
    }

    #[test]
    fn gain_over_2_kg_in_3_days_flags() {
        // ESC HFA patient information "Weight gain": more than 2 kg in 3 days.
        // W01: 80.0 -> 82.1 kg in 3 days: flag.
        let w = wt(&weights(&[("2026-06-01", 80.0), ("2026-06-04", 82.1)]));
        assert!(w.gain_flag);
        assert!(close(w.max_rise_3d.unwrap(), 2.1, 1e-9));
        assert!(close(w.change_72h.unwrap(), 2.1, 1e-9));
        assert_eq!(w.days, Some(3));
        assert!(close(w.per_day.unwrap(), 0.7, 1e-9));
        // W02: exactly 2.0 kg does not fire.
        let w = wt(&weights(&[("2026-06-01", 80.0), ("2026-06-04", 82.0)]));
        assert!(!w.gain_flag);
        // W03: 176.0 lb -> 180.9 lb is 2.2226 kg (lb x 0.45359237): flag.
        let w = wt(&weights(&[
            ("2026-06-01", 176.0 * KG_PER_LB),
            ("2026-06-04", 180.9 * KG_PER_LB),
        ]));
        assert!(close(w.change.unwrap(), 2.2226, 1e-4));
        assert!(w.gain_flag);
        // A rise over 4 days is outside the window.
        let w = wt(&weights(&[("2026-06-01", 80.0), ("2026-06-05", 83.0)]));
        assert!(!w.gain_flag);
        assert_eq!(w.change_72h, None);
    }

    #[test]
    fn slow_steady_gain_does_not_flag() {
        // W05: 0.5 kg a day for 5 days: the largest 3-day rise is 1.5 kg, no flag.
        let rows: Vec<(String, f64)> = (0..6)
            .map(|i| (format!("2026-06-0{}", i + 1), 80.0 + 0.5 * i as f64))
            .collect();
        let rows: Vec<(&str, f64)> = rows.iter().map(|(d, v)| (d.as_str(), *v)).collect();
        let w = wt(&weights(&rows));
        assert!(close(w.max_rise_3d.unwrap(), 1.5, 1e-9));
        assert!(!w.gain_flag);
        assert!(close(w.change.unwrap(), 2.5, 1e-9));
        assert_eq!(w.days, Some(5));
        // The last 72 h: from 06-03 (81.0) to 06-06 (82.5).
        assert!(close(w.change_72h.unwrap(), 1.5, 1e-9));
    }

    #[test]
    fn kg_lb_mix_blocks_the_trend() {
        // W04: 81.6 then 180.0 (ratio 2.2059, within 2 % of 2.2046).
        let w = wt(&weights(&[("2026-06-01", 81.6), ("2026-06-02", 180.0)]));
        assert!(w.unit_inconsistent);
        assert_eq!(w.change, None);
        assert!(!w.gain_flag);
    }

    #[test]
    fn admission_and_discharge_weights_order_and_compare_with_target() {
        let mut n =
            Note::new("Discharge weight 72.9 kg (admission weight 78.6 kg). Target weight 72 kg.");
        n.measure("Discharge weight 72.9 kg", M::Weight, 72.9)
            .time_ref = Some(TimeRef::Discharge);
        n.measure("admission weight 78.6 kg", M::Weight, 78.6)
            .time_ref = Some(TimeRef::Admission);
        n.state("Target weight 72 kg", StatementKind::TargetWeight, "72");
        let ex = n.build();
        let w = wt(&ex);
        assert_eq!(w.first, Some(78.6));
        assert_eq!(w.last, Some(72.9));
        assert!(close(w.change.unwrap(), -5.7, 1e-9));
        assert_eq!(w.per_day, None);
        assert!(close(w.above_target.unwrap(), 0.9, 1e-9));
    }

    #[test]
    fn yesterday_today_pair_and_repeats() {
        let mut n = Note::new("Wt 86.1 (yest 87.4). Weight 86.1 kg.");
        n.ex.note_date = Some("2026-05-10".into());
        n.measure("Wt 86.1", M::Weight, 86.1);
        n.measure("yest 87.4", M::Weight, 87.4).time_ref = Some(TimeRef::Yesterday);
        n.measure("Weight 86.1 kg", M::Weight, 86.1);
        let ex = n.build();
        let w = wt(&ex);
        // The repeat is listed once; yesterday comes first and is dated the day before.
        assert_eq!(w.points.len(), 2);
        assert_eq!(w.points[0].date.as_deref(), Some("2026-05-09"));
        assert!(close(w.change.unwrap(), -1.3, 1e-9));
        assert_eq!(w.days, Some(1));
    }

    #[test]
    fn hypothetical_and_family_weights_are_not_in_the_series() {
        let mut n = Note::new("If weight above 80 kg call. Husband weighs 95 kg. Wt 70 kg.");
        n.measure("80 kg", M::Weight, 80.0).assertion = Assertion::Hypothetical;
        n.measure("95 kg", M::Weight, 95.0).experiencer = crate::model::Experiencer::Other;
        n.measure("Wt 70 kg", M::Weight, 70.0);
        let w = wt(&n.build());
        assert_eq!(w.points.len(), 1);
        assert_eq!(w.change, None);
    }

    #[test]
    fn fluid_balance_per_day_and_cumulative() {
        // D12 (common practice): "I/O 1200/2700" is net -1500 mL; cumulative is the sum.
        let text = "2026-06-09 FB -1400\n2026-06-10 FB -2050\n2026-06-10 FB -2100\n2026-06-11 FB -1500\nNet balance over the admission -5.8 L";
        let mut n = Note::new(text);
        for (words, d, v) in [
            ("2026-06-09 FB -1400", "2026-06-09", -1400.0),
            ("2026-06-10 FB -2050", "2026-06-10", -2050.0),
            ("2026-06-10 FB -2100", "2026-06-10", -2100.0),
            ("2026-06-11 FB -1500", "2026-06-11", -1500.0),
        ] {
            n.measure(words, M::FluidBalance, v).date = Some(d.into());
        }
        n.measure_in(
            "Net balance over the admission -5.8 L",
            M::FluidBalance,
            -5.8,
            "L",
            -5800.0,
        );
        let ex = n.build();
        let fb = fluid_balance(&ex, &Timeline::new(&ex));
        assert_eq!(fb.days.len(), 3);
        // The later figure of 06-10 replaces the earlier one.
        assert_eq!(fb.days[1].value, -2100.0);
        assert_eq!(fb.days[2].cumulative, -5000.0);
        assert_eq!(fb.cumulative, Some(-5000.0));
        assert_eq!(fb.stated_total.as_ref().map(|p| p.value), Some(-5800.0));
    }

    #[test]
    fn creatinine_and_potassium_series_change() {
        let mut n = Note::new("D1 Cr 134 K 4.3\nD2 Cr 168 K 4.9\nD3 Cr 231 K 5.4");
        n.episode("D1", Some("2026-11-12"))
            .episode("D2", Some("2026-11-13"))
            .episode("D3", Some("2026-11-14"));
        n.rewind();
        for (c, k) in [
            ("Cr 134", "K 4.3"),
            ("Cr 168", "K 4.9"),
            ("Cr 231", "K 5.4"),
        ] {
            let cv: f64 = c[3..].parse().unwrap();
            let kv: f64 = k[2..].parse().unwrap();
            n.measure(c, M::Creatinine, cv);
            n.measure(k, M::Potassium, kv);
        }
        let ex = n.build();
        let t = build(&ex, &Timeline::new(&ex));
        assert_eq!(t.creatinine.points.len(), 3);
        assert_eq!(t.creatinine.change, Some(97.0));
        assert_eq!(t.creatinine.points[2].date.as_deref(), Some("2026-11-14"));
        assert!(close(t.potassium.change.unwrap(), 1.1, 1e-9));
        assert_eq!(t.potassium.unit, "mmol/L");
    }
}
