//! Values written without a label (`82.4 kg (yesterday 83.1)`, `98/60 mmHg sitting`,
//! `94% on 2 L`, `37.9°C`) and small tables (a header row naming the columns, then one row
//! per day or per time).

use std::sync::OnceLock;

use regex::Regex;

use super::measure::{push, Output, Reading};
use super::numbers::parse_number;
use super::Doc;
use crate::model::MeasureConcept;

use super::numbers::cached as re;

/// Words before a weight or volume that make it a change, a target or a dose, not a
/// measurement (common practice, no source).
const NOT_A_VALUE_BEFORE: &[&str] = &[
    "target",
    "dry",
    "goal",
    "ideal",
    "aim",
    "lost",
    "loss",
    "losing",
    "lose",
    "gain",
    "gained",
    "gaining",
    "down",
    "up ",
    "change",
    "by ",
    "reduction",
    "increase",
    "increased",
    "drop",
    "dropped",
    "fallen",
    "fell",
    "rise",
    "risen",
    "diff",
    "per ",
    "bmi",
    "estimated dry",
    "restrict",
    "bolus",
    "over ",
    "more than",
    "less than",
    "under ",
    "above",
    "below",
];

/// Up to 24 bytes of the value's own line before `start`.
fn line_before<'t>(doc: &Doc<'t>, start: usize) -> &'t str {
    let from = start.saturating_sub(24).max(doc.line_at(start).start);
    doc.text
        .get(doc.text.ceil_char_boundary(from)..start)
        .unwrap_or("")
}

fn preceded_by_change(doc: &Doc, start: usize) -> bool {
    let before = line_before(doc, start).to_ascii_lowercase();
    let tight = before.trim_end();
    tight.ends_with(['+', '-', '−', '↑', '↓', '~'])
        || NOT_A_VALUE_BEFORE.iter().any(|w| before.contains(w))
}

/// Time words written just before an unlabelled value, which date it: `prev 89.1 kg`,
/// `Prev: 89.1 kg`, `at last visit 71.9 kg` (common practice, no source). Not "was": `today
/// he was 96.1 kg` is a copula.
const LEADING_TIME_WORDS: &[&str] = &[
    "at last visit",
    "at the last visit",
    "last visit",
    "at last clinic",
    "last clinic",
    "on admission",
    "at admission",
    "admission",
    "on adm",
    "adm",
    "at baseline",
    "baseline",
    "usual",
    "previously",
    "previous",
    "prev",
    "prior",
    "yesterday",
    "yest",
    "today",
    "on discharge",
    "at discharge",
    "discharge",
];

/// The time a word right before `start` (on its line) gives an unlabelled value.
fn leading_time_ref(doc: &Doc, start: usize) -> Option<crate::model::TimeRef> {
    let before = line_before(doc, start)
        .trim_end_matches([' ', '\t', ':', '='])
        .to_ascii_lowercase();
    let word = LEADING_TIME_WORDS.iter().find(|w| {
        before.ends_with(*w)
            && !before[..before.len() - w.len()].ends_with(|c: char| c.is_ascii_alphanumeric())
    })?;
    super::numbers::time_ref(word)
}

/// Values without a label.
pub fn unlabelled(doc: &Doc, out: &mut Output) {
    weights(doc, out);
    temperatures(doc, out);
    blood_pressures(doc, out);
    saturations(doc, out);
    heart_rates(doc, out);
}

fn weights(doc: &Doc, out: &mut Output) {
    static RE: OnceLock<Regex> = OnceLock::new();
    let r = re(
        &RE,
        r"(?i)(?-u:\b)(\d{2,3}(?:\.\d{1,2})?)\s?(kgs?|kilos|lbs?|pounds)(?-u:\b)|(?-u:\b)(\d{1,2})\s?(?:st|stone)(?-u:\b)",
    );
    for c in r.captures_iter(doc.text) {
        let m = c.get(0).expect("match");
        let Some(num) = c.get(1).or(c.get(3)) else {
            continue;
        };
        if out.is_covered(m.start(), m.end()) || preceded_by_change(doc, m.start()) {
            continue;
        }
        let after: String = doc.text[m.end()..]
            .chars()
            .take(12)
            .collect::<String>()
            .to_ascii_lowercase();
        let after_word = after.trim_start();
        if after.starts_with('/')
            || after_word.starts_with("weight loss")
            || after_word.starts_with("loss")
            || after_word.starts_with("gain")
        {
            continue;
        }
        let Some(v) = parse_number(num.as_str()) else {
            continue;
        };
        if c.get(1).is_some() && !(20.0..=400.0).contains(&v) {
            continue;
        }
        // Reuse the weight grammar from the number on, for asides, chains and stones.
        let first = out.measurements.len();
        super::measure::weight(
            doc,
            out,
            super::lexicon::Label::Weight,
            num.start(),
            num.start(),
        );
        if let Some(m) = out.measurements.get_mut(first) {
            if m.time_ref.is_none() {
                m.time_ref = leading_time_ref(doc, num.start());
            }
        }
    }
    dated_weight_lists(doc, out);
    weight_row_blocks(doc, out);
}

/// A header about weight followed by two or more rows that each hold only a date and a
/// number: `Daily weights (kg, home scales):` then `  10/04  72.9`.
fn weight_row_blocks(doc: &Doc, out: &mut Output) {
    static ROW: OnceLock<Regex> = OnceLock::new();
    let row_re = re(
        &ROW,
        r"^\s*(\d{1,2}[/.]\d{1,2}(?:[/.]\d{2,4})?)\s*[:\-–]?\s*(\d{2,3}(?:\.\d{1,2})?)\s*(kgs?|lbs?)?\s*$",
    );
    let lines = doc.index.line_count();
    let mut n = 1;
    while n < lines {
        let header = doc.text[doc.index.line_range(n - 1)].to_ascii_lowercase();
        let about_weight = ["weigh", "wt", "kg", "lb", "scales"]
            .iter()
            .any(|w| header.contains(w));
        let mut end = n;
        while end < lines && row_re.is_match(&doc.text[doc.index.line_range(end)]) {
            end += 1;
        }
        if !about_weight || end - n < 2 {
            n = end.max(n + 1);
            continue;
        }
        let header_unit = if header.contains("lb") {
            Some("lb")
        } else if header.contains("kg") {
            Some("kg")
        } else {
            None
        };
        for row in n..end {
            let range = doc.index.line_range(row);
            let Some(c) = row_re.captures(&doc.text[range.clone()]) else {
                continue;
            };
            let d = c.get(1).expect("group");
            let num = c.get(2).expect("group");
            let date_at = range.start + d.start();
            let (s, e) = (
                range.start + num.start(),
                range.start + c.get(2).expect("g").end(),
            );
            let Some(v) = parse_number(num.as_str()) else {
                continue;
            };
            if out.is_covered(s, e) || !(20.0..=400.0).contains(&v) {
                continue;
            }
            let rd = Reading {
                value: v,
                start: s,
                end: c.get(3).map(|u| range.start + u.end()).unwrap_or(e),
                unit_text: c
                    .get(3)
                    .map(|u| u.as_str().to_string())
                    .or(header_unit.map(str::to_string)),
                date: doc.date_at(date_at).map(|x| x.iso.clone()),
                ..Reading::default()
            };
            push(doc, out, MeasureConcept::Weight, &rd, date_at, false);
        }
        n = end;
    }
}

/// `log: 11/02 162.0, 11/03 163.4, 11/04 165.2`: dated numbers on a line about weight.
fn dated_weight_lists(doc: &Doc, out: &mut Output) {
    static ITEM: OnceLock<Regex> = OnceLock::new();
    let item = re(
        &ITEM,
        r"(?i)(?-u:\b)(\d{1,2}[/.]\d{1,2}(?:[/.]\d{2,4})?)\s*[:\-–]?\s*(\d{2,3}(?:\.\d{1,2})?)(?-u:\b)(?:\s?(kgs?|lbs?|pounds|#))?",
    );
    for line_no in 0..doc.index.line_count() {
        let range = doc.index.line_range(line_no);
        let line = &doc.text[range.clone()];
        let lower = line.to_ascii_lowercase();
        if !["weigh", "wt", "log", "scales", "kg", "lb"]
            .iter()
            .any(|w| lower.contains(w))
        {
            continue;
        }
        let items: Vec<_> = item
            .captures_iter(line)
            .filter(|c| {
                let at = range.start + c.get(1).map(|m| m.start()).unwrap_or(0);
                doc.date_at(at).is_some()
            })
            .collect();
        if items.len() < 2 {
            continue;
        }
        let line_unit = items
            .iter()
            .find_map(|c| c.get(3).map(|u| u.as_str().to_string()))
            .or_else(|| {
                // `187#`: the pound sign after a number (common practice, no source).
                let pound_sign = lower
                    .match_indices('#')
                    .any(|(i, _)| lower[..i].ends_with(|c: char| c.is_ascii_digit()));
                if lower.contains("lb") || pound_sign {
                    Some("lb".to_string())
                } else if lower.contains("kg") {
                    Some("kg".to_string())
                } else {
                    None
                }
            });
        for c in items {
            let date_at = range.start + c.get(1).expect("group").start();
            let num = c.get(2).expect("group");
            let (s, e) = (
                range.start + num.start(),
                range.start + c.get(0).expect("m").end(),
            );
            if out.is_covered(s, e) {
                continue;
            }
            let Some(v) = parse_number(num.as_str()) else {
                continue;
            };
            if !(20.0..=400.0).contains(&v) {
                continue;
            }
            let rd = Reading {
                value: v,
                start: s,
                end: e,
                unit_text: c
                    .get(3)
                    .map(|u| u.as_str().to_string())
                    .or(line_unit.clone()),
                date: doc.date_at(date_at).map(|d| d.iso.clone()),
                ..Reading::default()
            };
            push(doc, out, MeasureConcept::Weight, &rd, date_at, false);
        }
    }
}

fn temperatures(doc: &Doc, out: &mut Output) {
    static RE: OnceLock<Regex> = OnceLock::new();
    let r = re(
        &RE,
        r"(?i)(?-u:\b)(\d{2,3}(?:[.,]\d{1,2})?)\s?(°\s?[CF](?-u:\b)|º\s?[CF](?-u:\b)|deg(?:rees?)?\s?[CF](?-u:\b)|degrees (?:celsius|fahrenheit)|celsius|fahrenheit)",
    );
    unit_values(
        doc,
        out,
        r,
        MeasureConcept::Temperature,
        |v| (25.0..=45.0).contains(&v) || (77.0..=113.0).contains(&v),
        |c| c[2].to_string(),
    );
}

/// A value with its unit written after it, found by `r` (group 1 the number): pushed when
/// not already read and `plausible` accepts it; `unit` gives the unit text from the match.
fn unit_values(
    doc: &Doc,
    out: &mut Output,
    r: &Regex,
    concept: MeasureConcept,
    plausible: impl Fn(f64) -> bool,
    unit: impl Fn(&regex::Captures) -> String,
) {
    for c in r.captures_iter(doc.text) {
        let m = c.get(0).expect("match");
        if out.is_covered(m.start(), m.end()) {
            continue;
        }
        let Some(v) = parse_number(&c[1]) else {
            continue;
        };
        if !plausible(v) {
            continue;
        }
        let rd = Reading {
            value: v,
            start: m.start(),
            end: m.end(),
            unit_text: Some(unit(&c)),
            ..Reading::default()
        };
        push(doc, out, concept, &rd, m.start(), false);
    }
}

fn blood_pressures(doc: &Doc, out: &mut Output) {
    static RE: OnceLock<Regex> = OnceLock::new();
    let r = re(
        &RE,
        r"(?i)(?-u:\b)(\d{2,3})\s?/\s?(\d{2,3})(?-u:\b)(\s*(?:mm ?hg|sitting|standing|lying|supine|seated))?",
    );
    for c in r.captures_iter(doc.text) {
        let m = c.get(0).expect("match");
        if out.is_covered(m.start(), m.end()) || doc.date_overlaps(m.start(), m.end()) {
            continue;
        }
        let (Some(sys), Some(dia)) = (parse_number(&c[1]), parse_number(&c[2])) else {
            continue;
        };
        // Without a unit or posture, only on an observations line.
        if c.get(3).is_none() && !doc.line_mentions(m.start(), 160, &["obs", "vitals", "news"]) {
            continue;
        }
        if !(50.0..=300.0).contains(&sys) || !(20.0..=200.0).contains(&dia) || dia >= sys {
            continue;
        }
        let unit = c
            .get(3)
            .map(|u| u.as_str().trim().to_string())
            .filter(|u| u.to_ascii_lowercase().starts_with("mm"));
        for (concept, value) in [
            (MeasureConcept::SystolicBp, sys),
            (MeasureConcept::DiastolicBp, dia),
        ] {
            let rd = Reading {
                value,
                start: m.start(),
                end: m.end(),
                unit_text: unit.clone(),
                ..Reading::default()
            };
            push(doc, out, concept, &rd, m.start(), false);
        }
    }
}

fn saturations(doc: &Doc, out: &mut Output) {
    static RE: OnceLock<Regex> = OnceLock::new();
    let r = re(
        &RE,
        r"(?i)(?-u:\b)(\d{2,3})\s?%\s?(?:on\s+)?(?:RA(?-u:\b)|room air|air(?-u:\b)|\d+\s?L(?-u:\b)|\d+\s?l/min|NC(?-u:\b)|FiO2|O2(?-u:\b)|oxygen)",
    );
    unit_values(
        doc,
        out,
        r,
        MeasureConcept::Spo2,
        |v| (50.0..=100.0).contains(&v),
        |_| "%".into(),
    );
}

fn heart_rates(doc: &Doc, out: &mut Output) {
    static RE: OnceLock<Regex> = OnceLock::new();
    let r = re(
        &RE,
        r"(?i)(?-u:\b)(\d{2,3})\s?(?:bpm|beats per minute|beats/min)(?-u:\b)",
    );
    unit_values(
        doc,
        out,
        r,
        MeasureConcept::HeartRate,
        |_| true,
        |_| "bpm".into(),
    );
}

/// What a table column holds.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Column {
    Date,
    Time,
    Value(MeasureConcept, Option<&'static str>),
    Bp,
    Ignore,
}

fn column_of(header: &str) -> Column {
    let h = header.trim().to_ascii_lowercase();
    let unit = if h.contains("kg") {
        Some("kg")
    } else if h.contains("lb") {
        Some("lb")
    } else if h.contains("ml") {
        Some("mL")
    } else if h.contains("(l)") || h.ends_with(" l") {
        Some("L")
    } else {
        None
    };
    let word = h
        .split(|c: char| !c.is_alphanumeric() && c != '/')
        .find(|w| !w.is_empty())
        .unwrap_or("");
    use MeasureConcept as M;
    match word {
        "date" | "day" => Column::Date,
        "time" => Column::Time,
        "weight" | "wt" | "weights" => Column::Value(M::Weight, unit.or(None)),
        "urine" | "uo" | "uop" | "output" | "out" => Column::Value(M::UrineOutput, unit),
        "net" | "balance" | "fb" => Column::Value(M::FluidBalance, unit),
        "bp" => Column::Bp,
        "hr" | "pulse" => Column::Value(M::HeartRate, None),
        "rr" | "resp" => Column::Value(M::RespiratoryRate, None),
        "spo2" | "sats" | "sat" => Column::Value(M::Spo2, Some("%")),
        "temp" | "t" => Column::Value(M::Temperature, None),
        "cr" | "creat" | "creatinine" => Column::Value(M::Creatinine, None),
        "k" | "potassium" => Column::Value(M::Potassium, Some("mmol/L")),
        "na" | "sodium" => Column::Value(M::Sodium, Some("mmol/L")),
        "urea" => Column::Value(M::Urea, None),
        _ => Column::Ignore,
    }
}

/// Split a table line into cells: `|`, tabs, or two or more spaces.
fn cells(line: &str, base: usize) -> Vec<(usize, &str)> {
    let mut out = Vec::new();
    let sep: fn(&str) -> Vec<(usize, &str)> = if line.contains('|') {
        |l| split_keep(l, |s| s.find('|').map(|i| (i, i + 1)))
    } else if line.contains('\t') {
        |l| split_keep(l, |s| s.find('\t').map(|i| (i, i + 1)))
    } else {
        |l| {
            split_keep(l, |s| {
                s.find("  ").map(|i| {
                    let n = s[i..].len() - s[i..].trim_start_matches(' ').len();
                    (i, i + n)
                })
            })
        }
    };
    for (off, cell) in sep(line) {
        let trimmed = cell.trim();
        if trimmed.is_empty() {
            continue;
        }
        let lead = cell.len() - cell.trim_start().len();
        out.push((base + off + lead, trimmed));
    }
    out
}

fn split_keep(line: &str, next: impl Fn(&str) -> Option<(usize, usize)>) -> Vec<(usize, &str)> {
    let mut out = Vec::new();
    let mut pos = 0;
    while pos <= line.len() {
        match next(&line[pos..]) {
            Some((a, b)) => {
                out.push((pos, &line[pos..pos + a]));
                pos += b;
            }
            None => {
                out.push((pos, &line[pos..]));
                break;
            }
        }
    }
    out
}

/// Tables with a header row.
pub fn tables(doc: &Doc, out: &mut Output) {
    let lines = doc.index.line_count();
    let mut line_no = 0;
    while line_no < lines {
        let range = doc.index.line_range(line_no);
        let header = &doc.text[range.clone()];
        let hcells = cells(header, range.start);
        let cols: Vec<Column> = hcells.iter().map(|(_, h)| column_of(h)).collect();
        let measures = cols
            .iter()
            .filter(|c| matches!(c, Column::Value(..) | Column::Bp))
            .count();
        let has_digits = header.chars().filter(|c| c.is_ascii_digit()).count() > 2;
        if hcells.len() < 2
            || measures == 0
            || has_digits
            || !cols.contains(&Column::Date) && measures < 2
        {
            line_no += 1;
            continue;
        }
        let mut row_no = line_no + 1;
        while row_no < lines {
            let rr = doc.index.line_range(row_no);
            let row = &doc.text[rr.clone()];
            if row.trim().is_empty()
                || row.trim_start().starts_with("--")
                    && row.trim().chars().all(|c| "-|+: ".contains(c))
            {
                if row.trim().is_empty() {
                    break;
                }
                row_no += 1;
                continue;
            }
            let rcells = cells(row, rr.start);
            if rcells.len() < 2
                || !rcells
                    .iter()
                    .skip(1)
                    .any(|(_, c)| c.chars().any(|ch| ch.is_ascii_digit()))
            {
                break;
            }
            let date = rcells
                .iter()
                .zip(&cols)
                .find(|(_, c)| **c == Column::Date)
                .and_then(|((at, _), _)| {
                    let i = doc.dates.partition_point(|d| d.start < *at);
                    doc.dates.get(i).filter(|d| d.start < *at + 12)
                })
                .map(|d| d.iso.clone());
            for ((at, cell), col) in rcells.iter().zip(&cols) {
                let (concept, unit) = match col {
                    Column::Value(c, u) => (*c, *u),
                    Column::Bp => {
                        table_bp(doc, out, *at, cell, date.clone());
                        continue;
                    }
                    _ => continue,
                };
                let end = at + cell.len();
                if out.is_covered(*at, end) {
                    continue;
                }
                let Some(rd) = cell_reading(cell, *at, unit, date.clone()) else {
                    continue;
                };
                push(doc, out, concept, &rd, *at, false);
            }
            row_no += 1;
        }
        line_no = row_no.max(line_no + 1);
    }
}

fn cell_reading(
    cell: &str,
    at: usize,
    header_unit: Option<&str>,
    date: Option<String>,
) -> Option<Reading> {
    static RE: OnceLock<Regex> = OnceLock::new();
    let r = re(&RE, r"^([+\-−]?)\s?(\d+(?:[.,]\d+)?)\s?([A-Za-zµ/%°]+)?");
    let c = r.captures(cell)?;
    let mut v = parse_number(&c[2].replace(',', "."))?;
    if matches!(&c[1], "-" | "−") {
        v = -v;
    }
    let unit = c
        .get(3)
        .map(|u| u.as_str().to_string())
        .or_else(|| header_unit.map(str::to_string));
    let m = c.get(0)?;
    Some(Reading {
        value: v,
        start: at,
        end: at + m.end(),
        unit_text: unit,
        date,
        ..Reading::default()
    })
}

fn table_bp(doc: &Doc, out: &mut Output, at: usize, cell: &str, date: Option<String>) {
    static RE: OnceLock<Regex> = OnceLock::new();
    let r = re(&RE, r"^(\d{2,3})\s?/\s?(\d{2,3})");
    let Some(c) = r.captures(cell) else { return };
    let end = at + c.get(0).map(|m| m.end()).unwrap_or(0);
    if out.is_covered(at, end) {
        return;
    }
    for (concept, g) in [
        (MeasureConcept::SystolicBp, 1),
        (MeasureConcept::DiastolicBp, 2),
    ] {
        if let Some(v) = parse_number(&c[g]) {
            let rd = Reading {
                value: v,
                start: at,
                end,
                date: date.clone(),
                ..Reading::default()
            };
            push(doc, out, concept, &rd, at, false);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_split_on_bars_tabs_and_wide_spaces() {
        let c = cells("Date | Weight (kg) | UO", 0);
        assert_eq!(
            c.iter().map(|x| x.1).collect::<Vec<_>>(),
            ["Date", "Weight (kg)", "UO"]
        );
        let c = cells("01/06   89.0   1800", 10);
        assert_eq!(c[1], (18, "89.0"));
        let c = cells("a\tb", 0);
        assert_eq!(c.len(), 2);
    }

    #[test]
    fn header_columns() {
        assert_eq!(
            column_of("Weight (kg)"),
            Column::Value(MeasureConcept::Weight, Some("kg"))
        );
        assert_eq!(
            column_of("Net (mL)"),
            Column::Value(MeasureConcept::FluidBalance, Some("mL"))
        );
        assert_eq!(column_of("Date"), Column::Date);
        assert_eq!(column_of("Intake"), Column::Ignore);
    }
}
