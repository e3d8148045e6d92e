//! Small readers shared by the extraction passes: numbers, number words, time words.

use std::sync::OnceLock;

use regex::Regex;

use crate::model::TimeRef;

/// The value of a number as written: `1,250` → 1250, `.5` → 0.5, `thirty-five` → 35.
/// Returns `None` for text that is not a finite number.
pub fn parse_number(s: &str) -> Option<f64> {
    let s = s.trim();
    if s.is_empty() {
        return None;
    }
    if s.as_bytes()[0].is_ascii_alphabetic() {
        return word_number(s);
    }
    // `1,4` and `37,8` are decimal commas; `1,250` is a thousands separator.
    let decimal_comma = s
        .split_once(',')
        .is_some_and(|(a, b)| !a.is_empty() && (1..=2).contains(&b.len()) && !b.contains(','));
    let cleaned: String = if decimal_comma {
        s.replace(',', ".")
    } else {
        s.chars().filter(|c| *c != ',').collect()
    };
    let v: f64 = cleaned.parse().ok()?;
    v.is_finite().then_some(v)
}

/// `twenty`, `thirty-five`, `forty five`, `eight`.
pub fn word_number(s: &str) -> Option<f64> {
    const ONES: [&str; 9] = [
        "one", "two", "three", "four", "five", "six", "seven", "eight", "nine",
    ];
    const TEENS: [&str; 10] = [
        "ten",
        "eleven",
        "twelve",
        "thirteen",
        "fourteen",
        "fifteen",
        "sixteen",
        "seventeen",
        "eighteen",
        "nineteen",
    ];
    const TENS: [&str; 8] = [
        "twenty", "thirty", "forty", "fifty", "sixty", "seventy", "eighty", "ninety",
    ];
    let lower = s.to_ascii_lowercase();
    let parts: Vec<&str> = lower.split(['-', ' ']).filter(|p| !p.is_empty()).collect();
    let find = |list: &[&str], w: &str| list.iter().position(|x| *x == w);
    match parts.as_slice() {
        [w] => find(&ONES, w)
            .map(|i| i as f64 + 1.0)
            .or_else(|| find(&TEENS, w).map(|i| i as f64 + 10.0))
            .or_else(|| find(&TENS, w).map(|i| (i as f64 + 2.0) * 10.0)),
        [t, o] => {
            let t = find(&TENS, t)? as f64;
            let o = find(&ONES, o)? as f64;
            Some((t + 2.0) * 10.0 + o + 1.0)
        }
        _ => None,
    }
}

/// The time reference a time word sets.
pub fn time_ref(word: &str) -> Option<TimeRef> {
    let w = word.trim().to_ascii_lowercase();
    let w = w.as_str();
    let r = if w.contains("adm") || w == "admit" {
        TimeRef::Admission
    } else if w.starts_with("yest") || w == "yday" || w == "overnight" || w == "o/n" {
        TimeRef::Yesterday
    } else if w.contains("baseline") || w == "usual" || w == "normally" {
        TimeRef::Baseline
    } else if w.contains("discharge") {
        TimeRef::Discharge
    } else if w.starts_with("prev")
        || w.starts_with("prior")
        || w.starts_with("last")
        || w.starts_with("at last")
        || w.starts_with("at the last")
        || w.contains("clinic")
        || w.contains("before")
        || w == "was"
        || w == "from"
        || w == "pre-admission"
    {
        TimeRef::Previous
    } else if w == "today" || w == "now" || w == "currently" || w.starts_with("this") {
        TimeRef::Today
    } else {
        return None;
    };
    Some(r)
}

/// A regex compiled once into `cell` (patterns are literals of this crate, so they compile).
pub fn cached(cell: &'static OnceLock<Regex>, pat: &str) -> &'static Regex {
    cell.get_or_init(|| Regex::new(pat).expect("valid regex"))
}

/// Weights written with a unit, for the document's weight unit.
pub fn weight_unit_re() -> &'static Regex {
    static RE: OnceLock<Regex> = OnceLock::new();
    RE.get_or_init(|| {
        Regex::new(r"(?i)(?-u:\b)\d{2,3}(?:\.\d+)?\s?(kgs?|kilos?|lbs?|pounds)(?-u:\b)")
            .expect("valid regex")
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_as_notes_write_them() {
        assert_eq!(parse_number("1,250"), Some(1250.0));
        assert_eq!(parse_number(".5"), Some(0.5));
        assert_eq!(parse_number("1,4"), Some(1.4));
        assert_eq!(parse_number("37,8"), Some(37.8));
        assert_eq!(parse_number("82.4"), Some(82.4));
        assert_eq!(parse_number("thirty-five"), Some(35.0));
        assert_eq!(parse_number("forty five"), Some(45.0));
        assert_eq!(parse_number("eight"), Some(8.0));
        assert_eq!(parse_number("fifteen"), Some(15.0));
        assert_eq!(parse_number("abc"), None);
        // Far beyond any measurement, but still a finite number: plausibility is judged later.
        assert_eq!(parse_number("99999999999999999999"), Some(1e20));
    }

    #[test]
    fn time_words() {
        assert_eq!(time_ref("on admission"), Some(TimeRef::Admission));
        assert_eq!(time_ref("yest"), Some(TimeRef::Yesterday));
        assert_eq!(time_ref("at baseline"), Some(TimeRef::Baseline));
        assert_eq!(time_ref("last clinic"), Some(TimeRef::Previous));
        assert_eq!(time_ref("at the last visit"), Some(TimeRef::Previous));
        assert_eq!(time_ref("today"), Some(TimeRef::Today));
        assert_eq!(time_ref("on discharge"), Some(TimeRef::Discharge));
        assert_eq!(time_ref("banana"), None);
    }
}
