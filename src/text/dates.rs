//! Dates and times as notes write them: ISO (`2026-03-14`), numeric (`14/03/2026`,
//! `14.03.26`, and `14/03` where a year is implied), and written months (`3 Mar 2026`,
//! `March 3, 2026`). Numeric dates are day-first unless told otherwise; in `Auto` mode an
//! unambiguous date in the same document (a first part above 12 means day-first, a second
//! part above 12 means month-first) decides for the rest.

use std::sync::OnceLock;

use regex::Regex;

use crate::config::DateOrder;

/// A date found in the text.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FoundDate {
    pub start: usize,
    pub end: usize,
    /// `YYYY-MM-DD`.
    pub iso: String,
}

fn numeric_re() -> &'static Regex {
    static RE: OnceLock<Regex> = OnceLock::new();
    RE.get_or_init(|| {
        Regex::new(r"(?-u:\b)(\d{1,2})([/.])(\d{1,2})(?:[/.](\d{4}|\d{2}))?(?-u:\b)")
            .expect("valid regex")
    })
}

fn iso_re() -> &'static Regex {
    static RE: OnceLock<Regex> = OnceLock::new();
    RE.get_or_init(|| {
        Regex::new(r"(?-u:\b)(20\d{2}|19\d{2})-(\d{1,2})-(\d{1,2})(?-u:\b)").expect("valid regex")
    })
}

fn written_re() -> &'static Regex {
    static RE: OnceLock<Regex> = OnceLock::new();
    RE.get_or_init(|| {
        Regex::new(
            r"(?i)(?-u:\b)(?:(\d{1,2})(?:st|nd|rd|th)?\s+(jan|feb|mar|apr|may|jun|jul|aug|sep|sept|oct|nov|dec)[a-z]*\.?,?\s+(\d{4})|(jan|feb|mar|apr|may|jun|jul|aug|sep|sept|oct|nov|dec)[a-z]*\.?\s+(\d{1,2})(?:st|nd|rd|th)?,?\s+(\d{4}))(?-u:\b)",
        )
        .expect("valid regex")
    })
}

fn time_re() -> &'static Regex {
    static RE: OnceLock<Regex> = OnceLock::new();
    RE.get_or_init(|| {
        Regex::new(r"(?-u:\b)([01]?\d|2[0-3])[:.h]([0-5]\d)(?-u:\b)").expect("valid regex")
    })
}

fn month_number(m: &str) -> u32 {
    match &m.to_ascii_lowercase()[..3] {
        "jan" => 1,
        "feb" => 2,
        "mar" => 3,
        "apr" => 4,
        "may" => 5,
        "jun" => 6,
        "jul" => 7,
        "aug" => 8,
        "sep" => 9,
        "oct" => 10,
        "nov" => 11,
        _ => 12,
    }
}

fn days_in_month(y: i32, m: u32) -> u32 {
    match m {
        4 | 6 | 9 | 11 => 30,
        2 if (y % 4 == 0 && y % 100 != 0) || y % 400 == 0 => 29,
        2 => 28,
        _ => 31,
    }
}

fn iso(y: i32, m: u32, d: u32) -> Option<String> {
    ((1..=12).contains(&m) && d >= 1 && d <= days_in_month(y, m))
        .then(|| format!("{y:04}-{m:02}-{d:02}"))
}

/// Decide the numeric date order for a document.
pub fn resolve_order(text: &str, configured: DateOrder, us_units: bool) -> DateOrder {
    if configured != DateOrder::Auto {
        return configured;
    }
    let (mut dmy, mut mdy) = (0, 0);
    for c in numeric_re().captures_iter(text) {
        if c.get(4).is_none() {
            continue;
        }
        let a: u32 = c[1].parse().unwrap_or(0);
        let b: u32 = c[3].parse().unwrap_or(0);
        if a > 12 && b <= 12 {
            dmy += 1;
        } else if b > 12 && a <= 12 {
            mdy += 1;
        }
    }
    if mdy > dmy || (mdy == dmy && us_units) {
        DateOrder::Mdy
    } else {
        DateOrder::Dmy
    }
}

/// All full dates in `text` (numeric ones need a year unless `allow_no_year`, in which
/// case `default_year` fills it in).
pub fn find_dates(text: &str, order: DateOrder, default_year: Option<i32>) -> Vec<FoundDate> {
    scan_dates(text, order).with_year(default_year)
}

/// The dates of a text in one scan: those with a year, and the two-part numeric ones
/// (`14/03`) that need a default year, so that a caller can take the default year from the
/// first full date without scanning twice.
#[derive(Debug, Default)]
pub struct DateScan {
    /// Dates with a year, sorted by start.
    full: Vec<FoundDate>,
    /// `(start, end, day, month)` of each two-part date, in text order.
    yearless: Vec<(usize, usize, u32, u32)>,
}

impl DateScan {
    /// The year of the first full date.
    pub fn first_year(&self) -> Option<i32> {
        self.full
            .first()
            .and_then(|d| d.iso.get(..4))
            .and_then(|y| y.parse().ok())
    }

    /// The year a two-part date (`10/31`) of this text is read in: that of the first full
    /// date that is not a date of birth (`DOB: 03/14/1951` names no year of the note's
    /// events; common practice, no source), else of the first full date.
    pub fn note_year(&self, text: &str) -> Option<i32> {
        const BIRTH: &[&str] = &["dob", "d.o.b", "born", "birth"];
        let birth = |d: &FoundDate| {
            let mut from = d.start.saturating_sub(16);
            while !text.is_char_boundary(from) {
                from += 1;
            }
            let before = text.get(from..d.start).unwrap_or("").to_ascii_lowercase();
            let before = before.rsplit('\n').next().unwrap_or("");
            BIRTH.iter().any(|w| before.contains(w))
        };
        self.full
            .iter()
            .find(|d| !birth(d))
            .and_then(|d| d.iso.get(..4))
            .and_then(|y| y.parse().ok())
            .or_else(|| self.first_year())
    }

    /// All dates, the two-part ones given `default_year` (left out without one), by start.
    pub fn with_year(self, default_year: Option<i32>) -> Vec<FoundDate> {
        let mut out = self.full;
        if let Some(year) = default_year {
            for (start, end, d, mo) in self.yearless {
                if let Some(iso) = iso(year, mo, d) {
                    out.push(FoundDate { start, end, iso });
                }
            }
            out.sort_by_key(|d| d.start);
        }
        out
    }
}

/// Scan `text` once for dates (see [`DateScan`]).
pub fn scan_dates(text: &str, order: DateOrder) -> DateScan {
    let mut out = Vec::new();
    let mut yearless = Vec::new();
    for c in iso_re().captures_iter(text) {
        let m = c.get(0).expect("match");
        let (y, mo, d) = (
            c[1].parse().unwrap_or(0),
            c[2].parse().unwrap_or(0),
            c[3].parse().unwrap_or(0),
        );
        if let Some(iso) = iso(y, mo, d) {
            out.push(FoundDate {
                start: m.start(),
                end: m.end(),
                iso,
            });
        }
    }
    for c in written_re().captures_iter(text) {
        let m = c.get(0).expect("match");
        let (d, mo, y) = if let Some(d) = c.get(1) {
            (d.as_str(), &c[2], &c[3])
        } else {
            (&c[5], &c[4], &c[6])
        };
        if let Some(iso) = iso(
            y.parse().unwrap_or(0),
            month_number(mo),
            d.parse().unwrap_or(0),
        ) {
            out.push(FoundDate {
                start: m.start(),
                end: m.end(),
                iso,
            });
        }
    }
    // A numeric date inside an ISO or written one is part of it. The named dates, sorted by
    // start with a running maximum of their ends, answer "does one contain this match" by
    // binary search rather than a scan of every date found so far (which made a note of many
    // dates quadratic). Numeric matches never contain each other: they are non-empty and do
    // not overlap.
    let mut named: Vec<(usize, usize)> = out.iter().map(|d| (d.start, d.end)).collect();
    named.sort_unstable();
    let reach: Vec<usize> = named
        .iter()
        .scan(0, |max_end, &(_, end)| {
            *max_end = end.max(*max_end);
            Some(*max_end)
        })
        .collect();
    for c in numeric_re().captures_iter(text) {
        let m = c.get(0).expect("match");
        let before = named.partition_point(|&(start, _)| start <= m.start());
        if before > 0 && reach[before - 1] >= m.end() {
            continue;
        }
        // Two-part dates (14/03) only where the caller allows an implied year, and never
        // with a decimal point (1.2 is a number).
        let a: u32 = c[1].parse().unwrap_or(0);
        let b: u32 = c[3].parse().unwrap_or(0);
        let (d, mo) = match order {
            DateOrder::Mdy => (b, a),
            _ => (a, b),
        };
        let year = match c.get(4) {
            Some(y) => {
                let y: i32 = y.as_str().parse().unwrap_or(0);
                if y < 100 {
                    2000 + y
                } else {
                    y
                }
            }
            None => {
                if &c[2] == "/" {
                    yearless.push((m.start(), m.end(), d, mo));
                }
                continue;
            }
        };
        if let Some(iso) = iso(year, mo, d) {
            out.push(FoundDate {
                start: m.start(),
                end: m.end(),
                iso,
            });
        }
    }
    out.sort_by_key(|d| d.start);
    DateScan {
        full: out,
        yearless,
    }
}

/// The first clock time (`08:45`, `21.10`) in `text`, as `HH:MM`.
pub fn find_time(text: &str) -> Option<(usize, String)> {
    time_re().captures(text).map(|c| {
        let h: u32 = c[1].parse().unwrap_or(0);
        (
            c.get(0).map(|m| m.start()).unwrap_or(0),
            format!("{h:02}:{}", &c[2]),
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numeric_dates_follow_the_order() {
        let d = find_dates("seen 03/04/2026", DateOrder::Dmy, None);
        assert_eq!(d[0].iso, "2026-04-03");
        let d = find_dates("seen 03/04/2026", DateOrder::Mdy, None);
        assert_eq!(d[0].iso, "2026-03-04");
    }

    #[test]
    fn written_and_iso_dates() {
        let d = find_dates(
            "3 Mar 2026 and March 14, 2026 and 2026-03-15",
            DateOrder::Dmy,
            None,
        );
        let isos: Vec<_> = d.iter().map(|d| d.iso.as_str()).collect();
        assert_eq!(isos, vec!["2026-03-03", "2026-03-14", "2026-03-15"]);
    }

    #[test]
    fn two_part_dates_need_a_year_and_decimals_are_not_dates() {
        assert!(find_dates("BP 98/60, K 4.6", DateOrder::Dmy, None).is_empty());
        let d = find_dates("14/03 68.4", DateOrder::Dmy, Some(2026));
        assert_eq!(d[0].iso, "2026-03-14");
        // 98/60 is not a valid date even with a default year.
        assert!(find_dates("98/60", DateOrder::Dmy, Some(2026)).is_empty());
    }

    #[test]
    fn auto_order_uses_unambiguous_dates() {
        assert_eq!(
            resolve_order("03/14/2026 then 03/04/2026", DateOrder::Auto, false),
            DateOrder::Mdy
        );
        assert_eq!(
            resolve_order("14/03/2026", DateOrder::Auto, true),
            DateOrder::Dmy
        );
        assert_eq!(
            resolve_order("03/04/2026", DateOrder::Auto, true),
            DateOrder::Mdy
        );
        assert_eq!(
            resolve_order("03/04/2026", DateOrder::Mdy, false),
            DateOrder::Mdy
        );
    }
}
