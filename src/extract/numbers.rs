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

/// A time phrase written right after a value: what it says about when the value was
/// taken. Offsets are into the text the phrase was read from.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct TimePhrase {
    pub time_ref: Option<TimeRef>,
    /// `two days ago`, `3/7 ago`, `1 week ago`: days before the note date.
    pub days_ago: Option<i64>,
    /// `on Monday`, `last Tue`: the weekday (0 Monday .. 6 Sunday) of the latest such day
    /// before the note date.
    pub weekday: Option<i64>,
    /// `on 22/10`, `from 10/31`: where the named date starts.
    pub date_at: Option<usize>,
    /// Where the phrase ends.
    pub end: usize,
}

/// Read a time phrase at the start of `s` (the text right after a value, on its line):
/// `two days ago`, `(5.4 3/7 ago)`, `last week`, `on Monday`, `at his last visit`,
/// `in Sept`, `in 2023`, `on 22/10`, `on admission`, `yesterday`, `today`. A phrase in
/// brackets must fill them (`(in Sept)`, not `(last clinic weight 89 kg)`). Common
/// practice, no source; the domain reference (03 §3.7) lists these ways of dating a
/// weight or a result.
pub fn time_after(s: &str) -> Option<TimePhrase> {
    static RE: OnceLock<Regex> = OnceLock::new();
    let re = cached(
        &RE,
        r"(?xi)^[\ \t]*(?P<open>\()?[\ \t]*(?:
            (?P<num>\d{1,2}|an?|one|two|three|four|five|six|seven|eight|nine|ten|eleven|twelve|fourteen|a\ few|few|several|some)
              [\ \t]*(?P<unit>days?|d|weeks?|wks?|months?|mths?|years?|yrs?)[\ \t]+ago
          | (?P<frac>\d{1,2})/(?P<base>7|52|12)[\ \t]+ago
          | (?:earlier[\ \t]+)?(?:last|this[\ \t]+past|the[\ \t]+previous)[\ \t]+(?P<last>week|month|year|night)
          | (?:(?:on|at|from|during|in|by)[\ \t]+)?(?:(?:his|her|their|the|my|our|your)[\ \t]+)?
              (?:last|previous|prior|most[\ \t]+recent|recent|preceding|earlier|former)[\ \t]+
              (?:clinic[\ \t]+)?(?:visit|clinic|review|appointment|appt|admission|attendance|outpatient|opd|check|contact|call|assessment|consultation|stay|encounter|episode|weigh-in)
          | (?:(?:on|at|in)[\ \t]+)?(?:(?:his|her|their|the)[\ \t]+)?(?:pre-?admission|pre-?op|preop|pre-?diuresis)
          | (?:on|last|this[\ \t]+past)[\ \t]+(?P<wd>mon|tue|wed|thu|fri|sat|sun)[a-z]*\.?
          | (?:in|during)[\ \t]+(?P<mon>jan|feb|mar|apr|may|jun|jul|aug|sep|oct|nov|dec)[a-z]*\.?(?:[\ \t]+(?:19|20)\d{2})?
          | (?:in|from|during)[\ \t]+(?P<year>(?:19|20)\d{2})
          | (?:on|dated|from)[\ \t]+(?:the[\ \t]+)?(?P<date>\d{1,2}[/.]\d{1,2}(?:[/.]\d{2,4})?)
          | (?P<prev>earlier|previously|beforehand|before|prior)
          | (?P<adm>(?:on|at)[\ \t]+(?:admission|adm|admit|arrival|presentation)|on[\ \t]+arrival)
          | (?P<dis>(?:on|at)[\ \t]+discharge)
          | (?P<base_>(?:at[\ \t]+)?baseline|usually|normally)
          | (?P<yest>yesterday|yest|y'day|yday|overnight)
          | (?P<today>today|this[\ \t]+morning|this[\ \t]+am|this[\ \t]+evening|tonight|now|currently)
        )(?-u:\b)",
    );
    let c = re.captures(s)?;
    let m = c.get(0)?;
    let mut end = m.end();
    // `132 now 149`, `yest: 4.1`: a time word before a number dates that number.
    if s[end..]
        .trim_start_matches([' ', '\t', ':', '='])
        .starts_with(|c: char| c.is_ascii_digit())
    {
        return None;
    }
    if c.name("open").is_some() {
        let rest = &s[end..];
        let close = rest.len() - rest.trim_start_matches([' ', '\t', '.']).len();
        if !rest[close..].starts_with(')') {
            return None;
        }
        end += close + 1;
    }
    let mut p = TimePhrase {
        end,
        ..TimePhrase::default()
    };
    let lower = |n: &str| n.to_ascii_lowercase();
    if let Some(n) = c.name("num") {
        let per = match lower(c.name("unit")?.as_str()).chars().next() {
            Some('d') => Some(1),
            Some('w') => Some(7),
            _ => None,
        };
        let n = lower(n.as_str());
        let count = match n.as_str() {
            "a" | "an" => Some(1.0),
            "a few" | "few" | "several" | "some" => None,
            _ => parse_number(&n),
        };
        p.days_ago = per.zip(count).map(|(per, k)| per * k as i64);
        p.time_ref = Some(TimeRef::Previous);
    } else if let (Some(n), Some(b)) = (c.name("frac"), c.name("base")) {
        // `3/7` is three days, `2/52` two weeks, `3/12` three months (common practice in
        // UK notes, no source).
        let n: i64 = n.as_str().parse().ok()?;
        p.days_ago = match b.as_str() {
            "7" => Some(n),
            "52" => Some(7 * n),
            _ => None,
        };
        p.time_ref = Some(TimeRef::Previous);
    } else if let Some(l) = c.name("last") {
        p.time_ref = Some(match lower(l.as_str()).as_str() {
            "night" => TimeRef::Yesterday,
            _ => TimeRef::Previous,
        });
    } else if let Some(w) = c.name("wd") {
        const DAYS: [&str; 7] = ["mon", "tue", "wed", "thu", "fri", "sat", "sun"];
        p.weekday = DAYS
            .iter()
            .position(|d| *d == lower(w.as_str()))
            .map(|i| i as i64);
        p.time_ref = Some(TimeRef::Previous);
    } else if let Some(d) = c.name("date") {
        p.date_at = Some(d.start());
    } else if c.name("adm").is_some() {
        p.time_ref = Some(TimeRef::Admission);
    } else if c.name("dis").is_some() {
        p.time_ref = Some(TimeRef::Discharge);
    } else if c.name("base_").is_some() {
        p.time_ref = Some(TimeRef::Baseline);
    } else if c.name("yest").is_some() {
        p.time_ref = Some(TimeRef::Yesterday);
    } else if c.name("today").is_some() {
        p.time_ref = Some(TimeRef::Today);
    } else {
        // Last visit, in <month>, in <year>, pre-admission, earlier, previously.
        p.time_ref = Some(TimeRef::Previous);
        if let Some(y) = c.name("year") {
            p.date_at = Some(y.start());
        }
    }
    Some(p)
}

/// A time word written right before a label (`admit wt 226 lbs`, `last clinic weight 89`,
/// `baseline Cr 130`, `prev K 5.4`, `yesterday's Na 131`): `before` is the text of the
/// label's line up to the label. Not "was" or "now", which are copulas as often as time
/// words. Common practice, no source.
pub fn time_before(before: &str) -> Option<TimeRef> {
    const LEAD: &[&str] = &[
        "at the last visit",
        "at last visit",
        "last visit",
        "at last clinic",
        "at the last clinic",
        "last clinic",
        "last review",
        "last",
        "most recent clinic",
        "previous clinic",
        "previous",
        "prev",
        "prior",
        "pre-admission",
        "preadmission",
        "pre-op",
        "preop",
        "on admission",
        "at admission",
        "admission",
        "admitting",
        "admit",
        "adm",
        "on arrival",
        "arrival",
        "at baseline",
        "baseline",
        "usual",
        "on discharge",
        "at discharge",
        "discharge",
        "yesterday's",
        "yesterdays",
        "yesterday",
        "yest",
        "overnight",
        "today's",
        "todays",
        "today",
    ];
    let b = before
        .trim_end_matches([' ', '\t', ':', '=', '-'])
        .to_ascii_lowercase();
    let word = LEAD.iter().find(|w| {
        b.ends_with(*w) && !b[..b.len() - w.len()].ends_with(|c: char| c.is_ascii_alphanumeric())
    })?;
    // "echo this admission", "bloods during admission", "since admission": the stay, not
    // the moment of admission.
    let lead = b[..b.len() - word.len()].trim_end();
    if [
        "this",
        "during",
        "since",
        "current",
        "same",
        "throughout",
        "over",
    ]
    .iter()
    .any(|w| {
        lead.ends_with(w)
            && !lead[..lead.len() - w.len()].ends_with(|c: char| c.is_ascii_alphanumeric())
    }) {
        return None;
    }
    let w = word.trim_end_matches("'s").trim_end_matches('s');
    match w {
        "last" | "last review" | "most recent clinic" | "previous clinic" => {
            Some(TimeRef::Previous)
        }
        "arrival" | "on arrival" | "admitting" => Some(TimeRef::Admission),
        "preop" | "pre-op" | "preadmission" => Some(TimeRef::Previous),
        "yesterday" => Some(TimeRef::Yesterday),
        "today" => Some(TimeRef::Today),
        _ => time_ref(word),
    }
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
