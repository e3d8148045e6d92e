//! Vital signs written by position on an observations line: `Vitals: 128/76, 84, 18, 98% RA,
//! 36.8`. Without labels, the conventional order (blood pressure, heart rate, respiratory
//! rate, saturation, temperature; common practice, no source) says which number is which.
//!
//! Read only when the line starts with a vitals or observations label, the first value is a
//! blood pressure, and every later value has the shape and range of the next place in that
//! order (a saturation written with `%` and a temperature written with a decimal point may
//! follow after places left out). A value that fits no place leaves the whole line to the
//! other passes: no guessing. Words (`T 36.8`, `NEWS 2`) end the list; labelled values are
//! read by the grammar.

use std::sync::OnceLock;

use regex::Regex;

use super::measure::{push, Output, Reading};
use super::numbers::{cached as re, parse_number};
use super::Doc;
use crate::model::MeasureConcept as M;

/// The places of the conventional order.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
enum Place {
    Hr,
    Rr,
    Spo2,
    Temp,
    Done,
}

/// One value of the list, by shape.
#[derive(Debug, Clone, PartialEq)]
enum Shape {
    Bp(f64, f64, Option<String>),
    Percent(f64),
    Number {
        value: f64,
        decimal: bool,
        unit: Option<String>,
    },
}

/// Plausible ranges (common practice, no source; the same bounds the unlabelled and weak
/// label readers use): heart rate 25-250/min, respiratory rate 4-60/min, saturation
/// 50-100 % (80-100 without the `%`), temperature 34-42.5 °C or 93-108.5 °F.
fn temperature_ok(v: f64) -> bool {
    (34.0..=42.5).contains(&v) || (93.0..=108.5).contains(&v)
}

fn label_re() -> &'static Regex {
    static RE: OnceLock<Regex> = OnceLock::new();
    re(
        &RE,
        r"(?im)^[ \t]*(?:[-*•][ \t]*)?(?:vital signs|vitals|observations|obs|vs|v/s)[ \t]*(?::|=|[-–][ \t])[ \t]*",
    )
}

/// A value at the start of the text; `comma_decimal` allows `36,8`.
fn shape_at(s: &str, comma_decimal: bool) -> Option<(usize, Shape)> {
    static WITH: OnceLock<Regex> = OnceLock::new();
    static WITHOUT: OnceLock<Regex> = OnceLock::new();
    const BP: &str = r"(\d{2,3})\s?/\s?(\d{2,3})(\s?mm\s?hg)?";
    const PCT: &str = r"(\d{2,3})\s?%(?:\s*(?:on\s+)?(?:room air|ra|air|\d+(?:\.\d+)?\s?(?:l/min|lpm|l)(?:\s?(?:nc|np|fm|nrb|mask|venturi))?))?";
    const TAIL: &str = r"(\s?(?:bpm|/min|°\s?[cf]|º\s?[cf]|c|f))?(?:\s+(?:irregularly irregular|irregular|irreg|regular|reg|sr|af))?";
    let r = if comma_decimal {
        re(
            &WITH,
            &format!(r"(?i)^(?:{BP}|{PCT}|(\d{{2}},\d|\d{{1,3}}(?:\.\d{{1,2}})?){TAIL})"),
        )
    } else {
        re(
            &WITHOUT,
            &format!(r"(?i)^(?:{BP}|{PCT}|(\d{{1,3}}(?:\.\d{{1,2}})?){TAIL})"),
        )
    };
    let c = r.captures(s)?;
    let end = c.get(0)?.end();
    let shape = if let (Some(a), Some(b)) = (c.get(1), c.get(2)) {
        Shape::Bp(
            parse_number(a.as_str())?,
            parse_number(b.as_str())?,
            c.get(3).map(|u| u.as_str().trim().to_string()),
        )
    } else if let Some(p) = c.get(4) {
        Shape::Percent(parse_number(p.as_str())?)
    } else {
        let n = c.get(5)?.as_str();
        Shape::Number {
            value: parse_number(&n.replace(',', "."))?,
            decimal: n.contains(['.', ',']),
            unit: c.get(6).map(|u| u.as_str().trim().to_string()),
        }
    };
    Some((end, shape))
}

const SEPARATORS: &[char] = &[' ', '\t', ',', ';', '|'];

/// The values of the list after the label, with their byte ranges; `None` when a value has
/// a shape none of the places takes.
fn items(s: &str, base: usize) -> Option<Vec<(usize, usize, Shape)>> {
    let mut out = Vec::new();
    let mut pos = 0;
    loop {
        pos += s[pos..].len() - s[pos..].trim_start_matches(SEPARATORS).len();
        let rest = &s[pos..];
        if rest.is_empty() || rest.starts_with(|c: char| c.is_alphabetic()) {
            return Some(out);
        }
        let ends_well = |end: usize| rest[end..].is_empty() || rest[end..].starts_with(SEPARATORS);
        // `36,8` is a decimal comma only where a separator follows it (`84,18` is two values).
        let (end, shape) = shape_at(rest, true)
            .filter(|&(end, _)| ends_well(end))
            .or_else(|| shape_at(rest, false).filter(|&(end, _)| ends_well(end)))?;
        out.push((base + pos, base + pos + end, shape));
        pos += end;
    }
}

/// Which measurement each value of the list is, in order; `None` when one does not fit.
fn places(items: &[(usize, usize, Shape)]) -> Option<Vec<M>> {
    let (first, rest) = items.split_first()?;
    let Shape::Bp(sys, dia, _) = first.2 else {
        return None;
    };
    if !(50.0..=300.0).contains(&sys) || !(20.0..=200.0).contains(&dia) || dia >= sys {
        return None;
    }
    if rest.is_empty() {
        return None;
    }
    let mut next = Place::Hr;
    let mut out = Vec::new();
    for (_, _, shape) in rest {
        let (concept, after) = match shape {
            Shape::Percent(v) if next <= Place::Spo2 && (50.0..=100.0).contains(v) => {
                (M::Spo2, Place::Temp)
            }
            Shape::Number {
                value,
                decimal,
                unit,
            } => {
                let unit = unit.as_deref().map(str::to_ascii_lowercase);
                let temp_unit = unit
                    .as_deref()
                    .is_some_and(|u| u.contains(['c', 'f']) && !u.contains("/min"));
                let rate_unit = unit.is_some() && !temp_unit;
                let v = *value;
                if (*decimal || temp_unit) && next <= Place::Temp && temperature_ok(v) {
                    (M::Temperature, Place::Done)
                } else if *decimal || temp_unit {
                    return None;
                } else {
                    match next {
                        Place::Hr if (25.0..=250.0).contains(&v) => (M::HeartRate, Place::Rr),
                        Place::Rr if (4.0..=60.0).contains(&v) => (M::RespiratoryRate, Place::Spo2),
                        Place::Spo2 if !rate_unit && (80.0..=100.0).contains(&v) => {
                            (M::Spo2, Place::Temp)
                        }
                        Place::Spo2 | Place::Temp if !rate_unit && temperature_ok(v) => {
                            (M::Temperature, Place::Done)
                        }
                        _ => return None,
                    }
                }
            }
            _ => return None,
        };
        out.push(concept);
        next = after;
    }
    Some(out)
}

/// Read every positional vitals line of the document.
pub fn vitals_lines(doc: &Doc, out: &mut Output) {
    for m in label_re().find_iter(doc.text) {
        let line = doc.line_at(m.start());
        if m.end() > line.end {
            continue;
        }
        let mut end = line.end.min(m.end() + 256);
        while !doc.text.is_char_boundary(end) {
            end -= 1;
        }
        let list = doc.text[m.end()..end].trim_end_matches('\r');
        let Some(items) = items(list, m.end()) else {
            continue;
        };
        let Some(concepts) = places(&items) else {
            continue;
        };
        if items
            .iter()
            .any(|&(s, e, _)| out.is_covered(s, e) || doc.date_overlaps(s, e))
        {
            continue;
        }
        let reading = |start: usize, end: usize, value: f64, unit: Option<String>| Reading {
            value,
            start,
            end,
            unit_text: unit,
            ..Reading::default()
        };
        if let (s, e, Shape::Bp(sys, dia, unit)) = &items[0] {
            for (concept, v) in [(M::SystolicBp, *sys), (M::DiastolicBp, *dia)] {
                push(
                    doc,
                    out,
                    concept,
                    &reading(*s, *e, v, unit.clone()),
                    *s,
                    false,
                );
            }
        }
        for ((s, e, shape), concept) in items[1..].iter().zip(concepts) {
            let (value, unit) = match shape {
                Shape::Percent(v) => (*v, Some("%".to_string())),
                Shape::Number { value, unit, .. } => (*value, unit.clone()),
                Shape::Bp(..) => continue,
            };
            push(doc, out, concept, &reading(*s, *e, value, unit), *s, false);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn concepts(list: &str) -> Option<Vec<M>> {
        places(&items(list, 0)?)
    }

    #[test]
    fn the_conventional_order_places_each_value() {
        use M::*;
        assert_eq!(
            concepts("128/76, 84, 18, 98% RA, 36.8"),
            Some(vec![HeartRate, RespiratoryRate, Spo2, Temperature])
        );
        // A saturation with `%` and a decimal temperature may follow left-out places.
        assert_eq!(
            concepts("128/76, 84, 96%, 37.1"),
            Some(vec![HeartRate, Spo2, Temperature])
        );
        assert_eq!(concepts("128/76 84 18 98 36.8").map(|c| c.len()), Some(4));
        // Words end the list.
        assert_eq!(concepts("128/76, 84, T 36.8"), Some(vec![HeartRate]));
        // `36,8` after a separator is a decimal comma; `84,18` is two values.
        assert_eq!(
            concepts("128/76,84,18,97%,36,8"),
            Some(vec![HeartRate, RespiratoryRate, Spo2, Temperature])
        );
    }

    #[test]
    fn values_that_do_not_fit_leave_the_line_alone() {
        // A rate of 18 cannot be the heart rate, which comes first.
        assert_eq!(concepts("128/76, 18, 98%"), None);
        // A decimal where a rate is due, a second pressure, a value after the temperature.
        assert_eq!(concepts("128/76, 8.4"), None);
        assert_eq!(concepts("128/76, 120/70"), None);
        assert_eq!(concepts("128/76, 84, 18, 98%, 36.8, 5"), None);
        // The list must start with a plausible blood pressure and go on after it.
        assert_eq!(concepts("84, 18, 98%"), None);
        assert_eq!(concepts("76/128, 84"), None);
        assert_eq!(concepts("128/76"), None);
        // A clock time or bracket is no value of the list.
        assert_eq!(concepts("08:00 128/76, 84"), None);
    }
}
