//! Labelled measurements: the lexicon finds a label (`BP`, `wt`, `Cr`), the value grammar
//! reads what follows it on the same line, and this module turns the matched pairs into
//! measurements with units, qualifiers, time references and dates.
//!
//! The grammar never reads past the end of the label's line nor more than
//! [`MAX_VALUE_BYTES`] bytes, so the cost of a document is linear in its length.

use pest::iterators::Pair;
use pest::Parser;

use super::lexicon::{Kind, Label};
use super::numbers::{parse_number, time_after, time_before, time_ref};
use super::Doc;
use crate::context::Target;
use crate::grammar::{Rule, ValueParser};
use crate::model::{
    Assertion, Finding, FindingConcept, FindingDetail, MeasureConcept, Measurement, Qualifier,
    Quantity, Statement, StatementKind, TimeRef,
};
use crate::units;

/// The longest stretch after a label the value grammar may read.
pub const MAX_VALUE_BYTES: usize = 512;

/// What the extraction passes produce, before sorting.
#[derive(Debug, Default)]
pub struct Output {
    pub measurements: Vec<Measurement>,
    pub findings: Vec<Finding>,
    pub statements: Vec<Statement>,
    /// Byte ranges already read as values (start → furthest end); later passes skip them.
    pub covered: std::collections::BTreeMap<usize, usize>,
}

/// No value read spans more than this many bytes (two lines of [`MAX_VALUE_BYTES`]).
const MAX_COVER: usize = 4 * MAX_VALUE_BYTES;

impl Output {
    pub fn is_covered(&self, start: usize, end: usize) -> bool {
        self.covered
            .range(start.saturating_sub(MAX_COVER)..end)
            .any(|(_, &e)| start < e)
    }

    pub fn cover(&mut self, start: usize, end: usize) {
        let e = self.covered.entry(start).or_insert(end);
        *e = (*e).max(end);
    }
}

/// One number read by the grammar, with what qualifies it.
#[derive(Debug, Clone, Default)]
pub struct Reading {
    pub value: f64,
    pub range: Option<(f64, f64)>,
    pub qualifier: Option<Qualifier>,
    pub start: usize,
    pub end: usize,
    pub unit_text: Option<String>,
    pub time_ref: Option<TimeRef>,
    /// The reading is a target or goal (`target ~82`), not a measurement.
    pub target: bool,
    pub date: Option<String>,
    /// The day number of a day label before the value (`D5 119.6`).
    pub day: Option<u32>,
}

/// Run `rule` on the text from `start` to the end of its line. When the rest of the line
/// holds no value (`creatinine` at the end of a wrapped line), the next line is read too;
/// the grammar sees line breaks as spaces there.
pub fn parse_at<'t>(doc: &Doc<'t>, rule: Rule, start: usize) -> Option<Pair<'t, Rule>> {
    let line = doc.line_at(start);
    let mut line_end = line.end;
    let line_no = doc.index.line_of(start);
    // Only a short rest of line can be a label waiting for its value on the next line.
    if line.end.saturating_sub(start) <= 80 && line_no + 1 < doc.index.line_count() {
        let rest = doc.text[start.min(line.end)..line.end].trim_matches([' ', '\t', ':', '-', '=']);
        let next = doc.index.line_range(line_no + 1);
        let next_text = doc.text[next.clone()].trim_start();
        let next_at = next.end - next_text.len();
        let header_like = doc.line_mentions(start, 200, &["  ", "\t", "|"]);
        let next_is_dated = doc.date_at(next_at).is_some() || {
            let b = next_text.as_bytes();
            let digits = b.iter().take_while(|c| c.is_ascii_digit()).count();
            // `10/04 72.9`: a day and month at the start of the line.
            (1..=2).contains(&digits)
                && b.get(digits) == Some(&b'/')
                && b.get(digits + 1).is_some_and(|c| c.is_ascii_digit())
        };
        // A value wrapped onto the next line, or an aside that starts it.
        let wrapped = rest.len() <= 60 && !rest.contains(|c: char| c.is_ascii_digit());
        // A numbered list item ("4. Repeat VBG") starts a new point.
        let numbered = next_text.split_once(['.', ')']).is_some_and(|(n, r)| {
            (1..=2).contains(&n.len())
                && n.bytes().all(|b| b.is_ascii_digit())
                && r.starts_with(' ')
        });
        if !header_like && !next_is_dated && !numbered && (wrapped || next_text.starts_with('(')) {
            line_end = next.end;
        }
    }
    let mut end = line_end.min(start + MAX_VALUE_BYTES);
    while !doc.flat.is_char_boundary(end) {
        end -= 1;
    }
    if start >= end {
        return None;
    }
    let slice = &doc.flat[start..end];
    ValueParser::parse(rule, slice).ok()?.next()
}

fn qualifier_of(p: Pair<Rule>) -> Option<Qualifier> {
    let inner = p.into_inner().next()?;
    Some(match inner.as_rule() {
        Rule::approx => Qualifier::Approximate,
        Rule::upper => Qualifier::UpperBound,
        Rule::lower => Qualifier::LowerBound,
        _ => return None,
    })
}

/// Read a `reading` or `range_reading` pair. `base` is the byte offset of the parsed slice.
pub fn reading_of(p: Pair<Rule>, base: usize) -> Option<Reading> {
    let span = p.as_span();
    let mut nums = Vec::new();
    let mut qualifier = None;
    for c in p.into_inner() {
        match c.as_rule() {
            Rule::comparator => qualifier = qualifier_of(c),
            Rule::number | Rule::word_number => nums.push(parse_number(c.as_str())?),
            _ => {}
        }
    }
    let (value, range) = match nums.as_slice() {
        [v] => (*v, None),
        [a, b] if b >= a => ((a + b) / 2.0, Some((*a, *b))),
        // `35-30` is not a range: keep the first number only.
        [a, _] => (*a, None),
        _ => return None,
    };
    Some(Reading {
        value,
        range,
        qualifier,
        start: base + span.start(),
        end: base + span.end(),
        ..Reading::default()
    })
}

/// Read the readings of a simple value rule: the main reading with its unit and trailing
/// time word, then any asides (`(yesterday 83.1)`) and chains (`-> 131`).
pub fn simple_readings(p: Pair<Rule>, base: usize) -> Vec<Reading> {
    let mut out: Vec<Reading> = Vec::new();
    // Which readings are steps of the value's own course (the main reading, chain links,
    // comma items, earlier items and steps), as against asides.
    let mut course: Vec<bool> = Vec::new();
    // `FB yesterday -1.3 L`: a time word between the label and the value places the value.
    let mut leading: Option<TimeRef> = None;
    // `Weight (kg): 84.2`: a unit named once in brackets after the label.
    let mut head: Option<String> = None;
    for c in p.into_inner() {
        match c.as_rule() {
            Rule::head_unit if out.is_empty() => head = head_unit_text(c),
            Rule::when if out.is_empty() && !c.as_str().eq_ignore_ascii_case("was") => {
                leading = time_ref(c.as_str()).or(leading)
            }
            Rule::period
                if out.is_empty() && c.as_str().trim().eq_ignore_ascii_case("yesterday") =>
            {
                leading = Some(TimeRef::Yesterday);
            }
            Rule::reading | Rule::range_reading if out.is_empty() => {
                if let Some(mut r) = reading_of(c, base) {
                    r.time_ref = leading;
                    out.push(r);
                    course.push(true);
                }
            }
            Rule::unit | Rule::ef_pct => {
                if let Some(r) = out.first_mut() {
                    if r.unit_text.is_none() {
                        r.unit_text = Some(c.as_str().to_string());
                        r.end = base + c.as_span().end();
                    }
                }
            }
            Rule::decade => {
                if let Some(r) = out.first_mut() {
                    r.qualifier = Some(Qualifier::Approximate);
                    r.end = base + c.as_span().end();
                }
            }
            Rule::trailing_when => {
                if let Some(r) = out.first_mut() {
                    r.time_ref = time_ref(c.as_str()).or(r.time_ref);
                }
            }
            Rule::aside => {
                for item in c.into_inner() {
                    let bare = is_bare_item(&item);
                    if let Some(mut r) = item_reading(item, base) {
                        // `Cr 152↑ (148)`, `K 3.6 (AM 4.1)`: a number of the same size in
                        // brackets after a value is the earlier value it is compared with
                        // (common practice, no source). One of another size is the value in
                        // another unit.
                        if bare && r.time_ref.is_none() {
                            if let Some(main) = out.first() {
                                let same_unit =
                                    r.unit_text.is_none() || r.unit_text == main.unit_text;
                                let ratio = if main.value != 0.0 {
                                    r.value / main.value
                                } else {
                                    0.0
                                };
                                if same_unit && (0.5..=2.0).contains(&ratio) {
                                    r.time_ref = Some(TimeRef::Previous);
                                }
                            }
                        }
                        out.push(r);
                        course.push(false);
                    }
                }
            }
            Rule::chain | Rule::comma_item | Rule::earlier_item | Rule::step => {
                let unitless_comma = matches!(c.as_rule(), Rule::comma_item | Rule::earlier_item)
                    && !c.clone().into_inner().any(|p| p.as_rule() == Rule::unit);
                if let Some(r) = item_reading(c, base) {
                    // `K 4.2, 138 today` is another test's value, not a second potassium:
                    // a unitless reading after a comma must be within a factor of three of
                    // the value before it (common practice, no source).
                    let same_size = out.first().is_some_and(|main| {
                        main.value > 0.0 && (1.0 / 3.0..=3.0).contains(&(r.value / main.value))
                    });
                    if !unitless_comma || same_size {
                        out.push(r);
                        course.push(true);
                    }
                }
            }
            _ => {}
        }
    }
    if let Some(r) = out.first_mut() {
        if r.unit_text.is_none() {
            r.unit_text = head;
        }
    }
    // `Cr 132 -> 149 umol/L`: a unit written once at the end of a course is the unit of
    // the values before it, up to the previous unit written (01 §1.2 writes the chain so).
    // An aside (`(141 umol/L)`) may give the value in another unit and lends it to none.
    carry_units(
        out.iter_mut()
            .zip(&course)
            .rev()
            .filter(|(_, &step)| step)
            .map(|(r, _)| r),
    );
    // Asides and chains without a unit of their own share the main reading's unit.
    if let Some(unit) = out.first().and_then(|r| r.unit_text.clone()) {
        for r in out.iter_mut().skip(1) {
            if r.unit_text.is_none() {
                r.unit_text = Some(unit.clone());
            }
        }
    }
    order_by_day(&mut out);
    out
}

/// The unit inside a `head_unit` pair (`(kg)`, `(bpm)`).
fn head_unit_text(p: Pair<Rule>) -> Option<String> {
    p.into_inner()
        .find(|u| u.as_rule() == Rule::unit)
        .map(|u| u.as_str().to_string())
}

/// An aside item that compares with an earlier value: a number alone (`(148)`) or with a
/// word that is not a later one (`(AM 4.1)`, `(Mon 131)`; not `(repeat 5.2)`, `(post 3.9)`).
fn is_bare_item(p: &Pair<Rule>) -> bool {
    const LATER: &[&str] = &[
        "repeat", "rpt", "re-check", "recheck", "later", "post", "after", "pm",
    ];
    p.as_rule() == Rule::aside_item
        && p.clone().into_inner().all(|c| match c.as_rule() {
            Rule::reading | Rule::unit => true,
            Rule::aside_word => !LATER.contains(&c.as_str().to_ascii_lowercase().as_str()),
            _ => false,
        })
}

/// The number of a day label (`D5`, `Day 4`, `POD 2`).
fn day_number(label: &str) -> Option<u32> {
    label
        .trim_start_matches(|c: char| !c.is_ascii_digit())
        .parse()
        .ok()
}

/// When a day-labelled value was taken: day 1 is the admission day, a later day an
/// earlier value than the note's own (common practice, no source).
fn day_time_ref(day: Option<u32>) -> Option<TimeRef> {
    match day? {
        0 | 1 => Some(TimeRef::Admission),
        _ => Some(TimeRef::Previous),
    }
}

/// Day-labelled readings in the order of their day labels (`(D5 119.6, D4 121.0, D1
/// 125.5)` is read D1, D4, D5), each keeping its place among the other readings.
fn order_by_day(out: &mut [Reading]) {
    let at: Vec<usize> = (0..out.len()).filter(|&i| out[i].day.is_some()).collect();
    let mut labelled: Vec<Reading> = at.iter().map(|&i| out[i].clone()).collect();
    labelled.sort_by_key(|r| r.day);
    for (i, r) in at.into_iter().zip(labelled) {
        out[i] = r;
    }
}

/// An aside item or a chain link: `[target] [when] reading [unit] [when]`.
fn item_reading(p: Pair<Rule>, base: usize) -> Option<Reading> {
    let mut r: Option<Reading> = None;
    let mut target = false;
    let mut when = None;
    let mut day = None;
    let whole = p.as_str().to_ascii_lowercase();
    let whole_raw = p.as_str().to_string();
    let base_start = base + p.as_span().start();
    // A reference range or a goal in brackets is not a value of the patient's.
    const NOT_A_VALUE: &[&str] = &[
        "ref", "range", "normal", "uln", "lln", "target", "goal", "aim", "dry", "ideal", "limit",
    ];
    // A change (`(up 0.4)`, `(↓ 1.2)`) is not a value either, unless it says where from.
    const CHANGE: &[&str] = &[
        "up",
        "down",
        "gain",
        "gained",
        "loss",
        "lost",
        "change",
        "diff",
        "difference",
        "rise",
        "fall",
        "drop",
        "increase",
        "decrease",
        "by",
    ];
    let words: Vec<&str> = whole
        .split(|c: char| !c.is_ascii_alphabetic())
        .filter(|w| !w.is_empty())
        .collect();
    if words.iter().any(|w| NOT_A_VALUE.contains(w))
        || (words.iter().any(|w| CHANGE.contains(w)) && !words.contains(&"from"))
        || whole
            .trim_start_matches(['(', ' '])
            .starts_with(['↑', '↓', '+'])
    {
        target = true;
    }
    // `was 84 kg on admission`: a plain "was" or "from" gives way to a time word that says
    // when.
    let mut generic = false;
    let mut take_when = |text: &str, when: &mut Option<TimeRef>| {
        let t = time_ref(text);
        if when.is_none() || (generic && t.is_some()) {
            generic = matches!(text.trim().to_ascii_lowercase().as_str(), "was" | "from");
            *when = t.or(*when);
        }
    };
    for c in p.into_inner() {
        match c.as_rule() {
            Rule::target_word => target = true,
            Rule::when | Rule::aside_word if r.is_none() => take_when(c.as_str(), &mut when),
            Rule::when | Rule::trailing_when => take_when(c.as_str(), &mut when),
            Rule::day_label => day = day_number(c.as_str()),
            Rule::reading => r = reading_of(c, base),
            Rule::unit => {
                if let Some(r) = r.as_mut() {
                    r.unit_text = Some(c.as_str().to_string());
                    r.end = base + c.as_span().end();
                }
            }
            _ => {}
        }
    }
    let mut r = r?;
    if day.is_some() {
        r.day = day;
        when = when.or(day_time_ref(day));
    }
    // `(echo 11/2025)`, `(2024)`: a date or a year, not a value.
    let after_num = p_text_after(&whole_raw, r.end - base_start);
    if after_num.starts_with(['/', '.']) && after_num[1..].starts_with(|c: char| c.is_ascii_digit())
        || (r.unit_text.is_none() && r.value.fract() == 0.0 && (1900.0..=2100.0).contains(&r.value))
    {
        return None;
    }
    r.target = target;
    r.time_ref = when;
    Some(r)
}

fn p_text_after(s: &str, at: usize) -> &str {
    s.get(at..).unwrap_or("")
}

/// The unit a value written without one is read in: the document's own habits first, then
/// the magnitude (common practice, no source: µmol/L creatinine is never below 20 and
/// mg/dL creatinine is never above 20; g/dL haemoglobin is below 25).
pub fn infer_unit(doc: &Doc, concept: MeasureConcept, value: f64, bun: bool) -> &'static str {
    use MeasureConcept::*;
    match concept {
        Weight => doc
            .weight_unit
            .unwrap_or(if doc.us_units { "[lb_av]" } else { "kg" }),
        Temperature => {
            if value > 50.0 {
                "[degF]"
            } else {
                "Cel"
            }
        }
        Creatinine => {
            if value < 20.0 {
                "mg/dL"
            } else {
                "umol/L"
            }
        }
        Urea => {
            if bun || (doc.us_units && value > 40.0) {
                "mg/dL"
            } else {
                "mmol/L"
            }
        }
        Hemoglobin => {
            if value < 25.0 {
                "g/dL"
            } else {
                "g/L"
            }
        }
        Lactate => "mmol/L",
        FluidBalance | UrineOutput => {
            if value.abs() < 15.0 && value.fract() != 0.0 {
                "L"
            } else {
                "mL"
            }
        }
        Height => {
            if value < 3.0 {
                "m"
            } else if doc.us_units && value < 100.0 {
                "[in_i]"
            } else {
                "cm"
            }
        }
        Jvp => "cm",
        other => other.canonical_unit(),
    }
}

/// Words just before a value that make it a target, a threshold or an order rather than a
/// measurement (`aim K > 4`, `if K ≥ 6.0`, `keep Mg above 1`).
fn is_threshold(doc: &Doc, start: usize) -> bool {
    let line = doc.line_at(start);
    let from = start.saturating_sub(28).max(line.start);
    let mut from = from;
    while !doc.text.is_char_boundary(from) {
        from += 1;
    }
    const WORDS: &[&str] = &[
        "aim",
        "target",
        "goal",
        "keep",
        "maintain",
        "titrate to",
        "if ",
        "unless",
        "when ",
        "should",
        "threshold",
        "until",
        "ensure",
        "hold if",
        "omit if",
        "stop if",
        "recheck",
        "re-check",
    ];
    // Within the label's own sentence: `Wt 89.9 kg - recheck. K 5.7` orders a recheck of
    // the weight, and `Hold if SBP <90. K 4.1` makes no threshold of the K (ConText,
    // Harkema et al. 2009: a cue's scope ends at the sentence boundary).
    let window = own_sentence(&doc.text[from..start]);
    static AC: std::sync::OnceLock<aho_corasick::AhoCorasick> = std::sync::OnceLock::new();
    // Whole words only: "in keeping with NYHA II" holds no "keep", "claim" no "aim".
    let bytes = window.as_bytes();
    crate::text::phrase_automaton(&AC, WORDS.iter().copied())
        .find_overlapping_iter(window)
        .any(|m| {
            let before_ok = m.start() == 0 || !bytes[m.start() - 1].is_ascii_alphanumeric();
            let after_ok = m.end() >= bytes.len()
                || bytes[m.end() - 1] == b' '
                || !bytes[m.end()].is_ascii_alphanumeric();
            before_ok && after_ok
        })
}

/// The end of `window` that lies in the same sentence as what follows it: after the last
/// full stop, question mark, exclamation mark or semicolon followed by a space.
fn own_sentence(window: &str) -> &str {
    window
        .rmatch_indices(['.', ';', '?', '!'])
        .find(|&(i, _)| window[i + 1..].starts_with([' ', '\t']))
        .map_or(window, |(i, _)| &window[i + 1..])
}

/// An order to bring a value to a level: `titrating to SBP <140`, `replete K >4, Mg >2`,
/// `wean to MAP >65`. The verb alone does not make a threshold (`KCl replacement started,
/// K 3.4 today` is a measurement); a comparator right after the label does (common
/// practice, no source).
fn is_goal_order(doc: &Doc, start: usize, end: usize) -> bool {
    let (from, lim) = doc.window(start, end, 48, 16);
    let after = doc.text[end..lim]
        .trim_start_matches([' ', '\t', ':', '='])
        .to_ascii_lowercase();
    let compared = after.starts_with(['<', '>', '≥', '≤'])
        || ["above ", "below ", "over ", "under ", "at least "]
            .iter()
            .any(|w| after.starts_with(w));
    if !compared {
        return false;
    }
    const VERBS: &[&str] = &[
        "titrat",
        "replete",
        "repleting",
        "replace",
        "replacing",
        "supplement",
        "wean",
        "aiming",
        "to achieve",
        "to get",
        "to bring",
        "increase to",
        "reduce to",
        "goal",
        "target",
        "maintain",
        "keep",
    ];
    // Within the label's own sentence.
    let window = own_sentence(&doc.text[from..start]);
    static AC: std::sync::OnceLock<aho_corasick::AhoCorasick> = std::sync::OnceLock::new();
    crate::text::phrase_automaton(&AC, VERBS.iter().copied()).is_match(window)
}

/// `Bloods on admission: ... creatinine 118`: a value the historical cue places at this
/// stay's admission is an admission value of the series, not one from an earlier stay
/// (`previous admission`, `before admission` are not).
fn admission_cue(ctx: &crate::model::Context) -> Option<TimeRef> {
    let cue = ctx.cues.iter().find(|c| c.family == "historical")?;
    let t = cue.text.to_ascii_lowercase();
    let earlier = ["prev", "last", "prior", "before", "pre-", "pre "]
        .iter()
        .any(|w| t.contains(w));
    (!earlier && t.contains("adm") && time_ref(&t) == Some(TimeRef::Admission))
        .then_some(TimeRef::Admission)
}

/// `Weight 80 kg, 84 kg on admission`: a time cue after the value with another number in
/// between dates that number, not this one (common practice, no source; ConText's scopes
/// end at the nearest mention of the same kind, domain reference 04-assertions.md). So does
/// a cue written right before another number: `K 4.1, previously 5.2`.
fn later_value_owns_time_cue(doc: &Doc, ctx: &mut crate::model::Context, end: usize) {
    use crate::model::Temporality;
    if ctx.temporality != Temporality::Historical || ctx.cues.iter().any(|c| c.family == "section")
    {
        return;
    }
    let mut historical = ctx
        .cues
        .iter()
        .filter(|c| c.family == "historical")
        .peekable();
    if historical.peek().is_none() {
        return;
    }
    let all_beyond_a_number = historical.all(|c| {
        let before_a_number = doc.text.get(c.span.end..).is_some_and(|after| {
            after
                .trim_start_matches([' ', '\t', ':'])
                .starts_with(|ch: char| ch.is_ascii_digit())
        });
        c.span.start >= end
            && (before_a_number
                || doc
                    .text
                    .get(end..c.span.start)
                    .is_some_and(|between| between.bytes().any(|b| b.is_ascii_digit())))
    });
    if all_beyond_a_number {
        ctx.temporality = Temporality::Current;
        ctx.cues.retain(|c| c.family != "historical");
    }
}

/// When a reading was taken, as the words around it say, where the grammar found no time
/// word: a phrase right after it (`(5.4 two days ago)`, `90.2 kg at his last visit in
/// September`, `was 10 st 12 lb on 22/10`), else a time word right before its label
/// (`admit wt 226 lbs`, `last clinic weight 89 kg`). A phrase that counts back from the
/// note (`two days ago`, `on Monday`) gives a date when the note date is known.
fn written_time(doc: &Doc, r: &Reading, start: usize) -> (Option<TimeRef>, Option<String>) {
    let mut time_ref = r.time_ref;
    let mut date = r.date.clone();
    let at = r.end.min(doc.text.len());
    if doc.text.is_char_boundary(at) {
        let (_, lim) = doc.window(at, at, 0, 96);
        if let Some(p) = time_after(&doc.text[at..lim]) {
            let note_day = doc
                .note_date
                .as_deref()
                .and_then(crate::picture::days_from_iso);
            // `in 2023`: a year before the note's year (a year that is not earlier says
            // nothing of order).
            let year_ok = p.date_at.is_none_or(|d| {
                let y = doc.text[at + d..]
                    .get(..4)
                    .and_then(|y| y.parse::<i64>().ok());
                match y {
                    Some(y) if doc.text[at + d..].get(4..5) != Some("/") => {
                        let note_year = doc
                            .note_date
                            .as_deref()
                            .and_then(|n| n.get(..4))
                            .and_then(|n| n.parse::<i64>().ok());
                        note_year.is_none_or(|n| y < n)
                    }
                    _ => true,
                }
            });
            if year_ok {
                time_ref = time_ref.or(p.time_ref);
                if date.is_none() {
                    date = p
                        .date_at
                        .and_then(|d| doc.date_at(at + d))
                        .map(|d| d.iso.clone())
                        .or_else(|| {
                            let day = note_day?;
                            let back = match (p.days_ago, p.weekday) {
                                (Some(n), _) => n,
                                (None, Some(w)) => {
                                    // 1970-01-01 was a Thursday (weekday 3).
                                    let today = (day + 3).rem_euclid(7);
                                    let back = (today - w).rem_euclid(7);
                                    if back == 0 {
                                        7
                                    } else {
                                        back
                                    }
                                }
                                _ => return None,
                            };
                            Some(crate::picture::iso_from_days(day - back))
                        });
                }
            }
        }
    }
    if time_ref.is_none() && date.is_none() {
        let (from, _) = doc.window(start, start, 32, 0);
        if let Some(before) = doc.text.get(from..start) {
            time_ref = time_before(before);
        }
    }
    if time_ref.is_none() && date.is_none() {
        time_ref = list_time(doc, start);
    }
    (time_ref, date)
}

/// `On arrival BP 168/94, HR 88, SpO2 89% on RA`: a time phrase that opens a sentence
/// listing values dates every value of the list, not only the first. The list runs on
/// through commas; a full stop, semicolon or a later time word ends it. Common practice,
/// no source.
fn list_time(doc: &Doc, start: usize) -> Option<TimeRef> {
    static LEAD: std::sync::OnceLock<regex::Regex> = std::sync::OnceLock::new();
    let lead = super::numbers::cached(
        &LEAD,
        r"(?i)^\s*(?:[-*•]\s*)?(on\s+arrival|on\s+admission|at\s+admission|at\s+presentation|on\s+presentation|admission\s+obs|admission\s+vitals|pre-?admission|at\s+baseline|at\s+discharge|on\s+discharge|discharge\s+obs|discharge\s+vitals)\b[:,]?\s",
    );
    let line = doc.line_at(start);
    let (from, _) = doc.window(start, start, 120, 0);
    let before = doc.text.get(from..start)?;
    // The label's own sentence.
    let sentence = before
        .rmatch_indices(['.', ';'])
        .find(|&(i, _)| before[i + 1..].starts_with([' ', '\t']))
        .map_or(before, |(i, _)| &before[i + 1..]);
    // The sentence must start here (not be cut by the window) and hold no other time word.
    if sentence.len() == before.len() && from != line.start {
        return None;
    }
    let c = lead.captures(sentence)?;
    let rest = &sentence[c.get(0)?.end()..];
    const OTHER: &[&str] = &["now", "today", "currently", "this morning", "since"];
    let lower = rest.to_ascii_lowercase();
    if OTHER.iter().any(|w| {
        lower
            .match_indices(w)
            .any(|(i, _)| !lower[..i].ends_with(|ch: char| ch.is_ascii_alphanumeric()))
    }) {
        return None;
    }
    let phrase = c[1].to_ascii_lowercase();
    Some(if phrase.contains("discharge") {
        TimeRef::Discharge
    } else if phrase.contains("baseline") {
        TimeRef::Baseline
    } else {
        TimeRef::Admission
    })
}

/// Give each reading without a unit the last unit written before it in the order given
/// (pass the readings reversed to carry a later unit back).
fn carry_units<'r>(readings: impl Iterator<Item = &'r mut Reading>) {
    let mut last: Option<String> = None;
    for r in readings {
        match &r.unit_text {
            Some(u) => last = Some(u.clone()),
            None => r.unit_text.clone_from(&last),
        }
    }
}

/// Build a measurement from a reading and push it, with its context, unit and date.
pub fn push(
    doc: &Doc,
    out: &mut Output,
    concept: MeasureConcept,
    r: &Reading,
    span_start: usize,
    bun: bool,
) {
    if r.target {
        return;
    }
    // `EF 0.35`: an ejection fraction written as a fraction (common practice, no source).
    let scaled;
    let r = if concept == MeasureConcept::Lvef
        && r.unit_text.is_none()
        && r.value > 0.0
        && r.value < 1.0
    {
        scaled = Reading {
            value: r.value * 100.0,
            range: r.range.map(|(a, b)| (a * 100.0, b * 100.0)),
            ..r.clone()
        };
        &scaled
    } else {
        r
    };
    let written = r
        .unit_text
        .as_deref()
        .and_then(units::ucum)
        .filter(|code| units::accepts(concept, code));
    let unit_inferred = written.is_none();
    let code = written.unwrap_or_else(|| infer_unit(doc, concept, r.value, bun));
    let normalized =
        units::normalize(concept, r.value, code, bun).map(|(value, unit)| Quantity { value, unit });
    let start = span_start.min(r.start);
    let end = r.end.max(start);
    let mut ctx = doc.engine.context(start, end, Target::Measurement, false);
    later_value_owns_time_cue(doc, &mut ctx, end);
    let (time_ref, written_date) = written_time(doc, r, start);
    let date = written_date.or_else(|| doc.line_date(r.start)).or_else(|| {
        doc.episode_of(start)
            .and_then(|i| doc.episodes[i].date.clone())
    });
    let time = doc.line_time(r.start);
    out.cover(start, end);
    out.measurements.push(Measurement {
        concept,
        value: r.value,
        unit: Some(code),
        normalized,
        unit_inferred,
        date,
        time,
        assertion: ctx.assertion,
        temporality: ctx.temporality,
        experiencer: ctx.experiencer,
        time_ref: time_ref.or_else(|| admission_cue(&ctx)),
        range: r.range,
        qualifier: r.qualifier,
        unit_text: if unit_inferred {
            None
        } else {
            r.unit_text.clone()
        },
        text: doc.text[start..end].to_string(),
        span: doc.index.span(start, end),
        section: doc.section_of(start),
        episode: doc.episode_of(start),
    });
}

fn lab_concept(l: Label) -> Option<(MeasureConcept, bool)> {
    use MeasureConcept::*;
    Some(match l {
        Label::Bnp => (Bnp, false),
        Label::NtProbnp => (NtProbnp, false),
        Label::Creat => (Creatinine, false),
        Label::Urea => (Urea, false),
        Label::Bun => (Urea, true),
        Label::Na => (Sodium, false),
        Label::K => (Potassium, false),
        Label::Lactate => (Lactate, false),
        Label::Hb => (Hemoglobin, false),
        _ => return None,
    })
}

/// Physiological ranges a weak label's value must fall in to be read at all (`P 88` is a
/// pulse, `P 2` is not). Common practice, no source.
fn weak_ok(doc: &Doc, label: Label, r: &Reading) -> bool {
    // A number run on into a word (`67M`, `2h`) or followed by a time span (`1 h`,
    // `3 days`) is an age, a size or an interval, not this value.
    let after = &doc.text[r.end.min(doc.text.len())..];
    if r.unit_text.is_none() && after.starts_with(|c: char| c.is_alphabetic()) {
        return false;
    }
    // `lactate 22:00`: a clock time.
    if after.starts_with(':') && after[1..].starts_with(|c: char| c.is_ascii_digit()) {
        return false;
    }
    if r.unit_text.is_none() && !matches!(label, Label::Uo | Label::Fb | Label::Io) {
        static SPAN: std::sync::OnceLock<regex::Regex> = std::sync::OnceLock::new();
        let re = SPAN.get_or_init(|| {
            regex::Regex::new(
                r"^\s?(?i:h|hr|hrs|hours?|mins?|minutes?|days?|wks?|weeks?|months?|years?|yrs?)(?-u:\b)",
            )
            .expect("valid regex")
        });
        // `T 38.2 HR 110`: the capital `HR` is the next label, not "hours".
        let next_label = after.trim_start().starts_with("HR")
            && !after
                .trim_start()
                .get(2..)
                .is_some_and(|r| r.starts_with(|c: char| c.is_ascii_alphabetic()));
        if re.is_match(after) && !next_label {
            return false;
        }
    }
    match label {
        Label::HrWeak | Label::HrRhythm => (25.0..=250.0).contains(&r.value),
        Label::TempWeak => (30.0..=45.0).contains(&r.value) || (86.0..=113.0).contains(&r.value),
        Label::UoWeak | Label::UoPassed => r.unit_text.is_some(),
        _ => true,
    }
}

/// Whether the unit written after a label's value can be the label's concept: a unit of
/// another dimension means the label belongs to a longer name (`Troponin T 34 ng/L`,
/// `HR 3 mmol/L`) or the number is something else.
/// Short words that are units only sometimes (`HR 104 ST` is sinus tachycardia, `s` and
/// `in` are words) do not count.
fn unit_fits(concept: MeasureConcept, r: &Reading) -> bool {
    let Some(text) = r.unit_text.as_deref() else {
        return true;
    };
    let t = text.trim();
    let ambiguous = t.len() < 3
        && t.chars().all(|c| c.is_ascii_alphabetic())
        && !["kg", "lb", "ml", "cm"].contains(&t.to_ascii_lowercase().as_str());
    ambiguous || units::ucum(t).is_none_or(|code| !units::other_dimension(concept, code))
}

/// A label that is part of a longer name rather than the measurement it names: a specimen
/// word before a laboratory label (`urine Na 45`, `spot urine K`, `pleural fluid LDH`) or
/// an analyte before a one-letter label (`Troponin T 34`). A number of six or more digits
/// after a label (`UR 8812034`, an Australian unit-record number) is an identifier, not a
/// value. Common practice, no source.
fn part_of_other_name(doc: &Doc, label: Label, start: usize, end: usize) -> bool {
    let (from, lim) = doc.window(start, end, 24, 24);
    let before = doc.text[from..start].to_ascii_lowercase();
    let last_word = before
        .trim_end_matches([' ', '\t', '-', ':'])
        .rsplit(|c: char| !c.is_ascii_alphabetic())
        .next()
        .unwrap_or("");
    const SPECIMEN: &[&str] = &[
        "urine", "urinary", "spot", "stool", "csf", "fluid", "pleural", "ascitic", "drain",
        "sweat", "faecal", "fecal",
    ];
    const ANALYTE: &[&str] = &["troponin", "trop", "hs", "tn", "ctn", "free", "total"];
    if lab_concept(label).is_some() && SPECIMEN.contains(&last_word) {
        return true;
    }
    if matches!(label, Label::TempWeak) && ANALYTE.contains(&last_word) {
        return true;
    }
    let after = doc.text[end..lim].trim_start_matches([' ', '\t', ':', '#', '-']);
    let digits = after.bytes().take_while(u8::is_ascii_digit).count();
    let rest = &after.as_bytes()[digits..];
    let decimal =
        matches!(rest.first(), Some(b'.' | b',')) && rest.get(1).is_some_and(u8::is_ascii_digit);
    digits >= 6 && !decimal
}

/// Read every labelled value in the document.
pub fn labelled(doc: &Doc, out: &mut Output) {
    for h in doc.hits {
        let Kind::Label(label) = h.kind else { continue };
        if is_threshold(doc, h.start)
            || is_goal_order(doc, h.start, h.end)
            || part_of_other_name(doc, label, h.start, h.end)
        {
            continue;
        }
        read_label(doc, out, label, h.start, h.end);
    }
}

fn read_label(doc: &Doc, out: &mut Output, label: Label, start: usize, end: usize) {
    use MeasureConcept as M;
    let simple = |rule: Rule, concept: M, bun: bool, out: &mut Output| {
        if let Some(p) = parse_at(doc, rule, end) {
            let rs = simple_readings(p, end);
            for (i, r) in rs.iter().enumerate() {
                if i == 0 && (!weak_ok(doc, label, r) || !unit_fits(concept, r)) {
                    return;
                }
                push(
                    doc,
                    out,
                    concept,
                    r,
                    if i == 0 { start } else { r.start },
                    bun,
                );
            }
        }
    };
    match label {
        Label::Bp => blood_pressure(doc, out, start, end),
        Label::Sbp => simple(Rule::single_bp, M::SystolicBp, false, out),
        Label::Dbp => simple(Rule::single_bp, M::DiastolicBp, false, out),
        Label::Hr | Label::HrWeak | Label::HrRhythm => {
            simple(Rule::hr_value, M::HeartRate, false, out)
        }
        Label::Rr => simple(Rule::rr_value, M::RespiratoryRate, false, out),
        Label::Spo2 => spo2(doc, out, start, end),
        Label::Temp | Label::TempWeak => simple(Rule::temp_value, M::Temperature, false, out),
        Label::Weight | Label::WeightAdm | Label::WeightDis | Label::WeightSeries => {
            weight(doc, out, label, start, end)
        }
        Label::TargetWeight => target_weight(doc, out, start, end, false),
        Label::TargetWeak => target_weight(doc, out, start, end, true),
        Label::Height => height(doc, out, start, end),
        Label::Jvp | Label::Jvd => jvp(doc, out, label, start, end),
        Label::Io => intake_output(doc, out, start, end),
        Label::Fb => fluid_balance(doc, out, start, end),
        Label::Uo | Label::UoWeak | Label::UoPassed => {
            simple(Rule::uo_value, M::UrineOutput, false, out)
        }
        Label::Lvef => simple(Rule::lvef_value, M::Lvef, false, out),
        Label::Nyha | Label::NyhaWeak => nyha(doc, out, label, start, end),
        Label::Crt => capillary_refill(doc, out, start, end),
        Label::Gcs => scored_mentation(doc, out, Rule::gcs_value, 15.0, start, end),
        Label::Amts => scored_mentation(doc, out, Rule::amts_value, 8.0, start, end),
        other => {
            if let Some((concept, bun)) = lab_concept(other) {
                simple(Rule::lab_value, concept, bun, out)
            }
        }
    }
}

fn blood_pressure(doc: &Doc, out: &mut Output, start: usize, end: usize) {
    let Some(p) = parse_at(doc, Rule::bp_value, end) else {
        return;
    };
    let mut first = true;
    let mut head = None;
    for c in p.into_inner() {
        if c.as_rule() == Rule::head_unit {
            head = head_unit_text(c);
            continue;
        }
        if c.as_rule() != Rule::bp_reading {
            continue;
        }
        let mut qualifier = None;
        let mut nums = Vec::new();
        // `100s/60s`: the decade's lower bound, flagged approximate.
        let mut decades = [false; 2];
        let mut unit = None;
        let mut when = None;
        let rspan = c.as_span();
        let mut rend = end + rspan.start();
        for part in c.into_inner() {
            match part.as_rule() {
                Rule::comparator => qualifier = qualifier_of(part),
                Rule::bp_pair => {
                    rend = end + part.as_span().end();
                    for n in part.into_inner() {
                        if n.as_rule() == Rule::decade {
                            if let Some(d) =
                                nums.len().checked_sub(1).and_then(|i| decades.get_mut(i))
                            {
                                *d = true;
                            }
                        } else if let Some(v) = parse_number(n.as_str()) {
                            nums.push(v);
                        }
                    }
                }
                Rule::unit => {
                    unit = Some(part.as_str().to_string());
                    rend = end + part.as_span().end();
                }
                Rule::trailing_when => when = time_ref(part.as_str()),
                _ => {}
            }
        }
        let [sys, dia] = nums.as_slice() else {
            continue;
        };
        let rstart = end + rspan.start();
        let span_start = if first { start } else { rstart };
        first = false;
        for (concept, value, decade) in [
            (MeasureConcept::SystolicBp, *sys, decades[0]),
            (MeasureConcept::DiastolicBp, *dia, decades[1]),
        ] {
            let r = Reading {
                value,
                qualifier: qualifier.or(decade.then_some(Qualifier::Approximate)),
                start: rstart,
                end: rend,
                unit_text: unit.clone().or_else(|| head.clone()),
                time_ref: when,
                ..Reading::default()
            };
            push(doc, out, concept, &r, span_start, false);
        }
    }
}

fn spo2(doc: &Doc, out: &mut Output, start: usize, end: usize) {
    let Some(p) = parse_at(doc, Rule::spo2_value, end) else {
        return;
    };
    let mut first = true;
    for c in p.into_inner() {
        if !matches!(c.as_rule(), Rule::spo2_reading | Rule::spo2_pct_reading) {
            continue;
        }
        let span = c.as_span();
        let mut r = Reading {
            start: end + span.start(),
            end: end + span.end(),
            unit_text: Some("%".into()),
            ..Reading::default()
        };
        let mut ok = false;
        for part in c.into_inner() {
            match part.as_rule() {
                Rule::comparator => r.qualifier = qualifier_of(part),
                Rule::number if !ok => {
                    if let Some(v) = parse_number(part.as_str()) {
                        r.value = v;
                        ok = true;
                    }
                }
                _ => {}
            }
        }
        // `sats 4L` is an oxygen flow, not a saturation: a saturation is 50-100 %.
        if ok && (50.0..=100.0).contains(&r.value) {
            push(
                doc,
                out,
                MeasureConcept::Spo2,
                &r,
                if first { start } else { r.start },
                false,
            );
        }
        first = false;
    }
}

pub fn weight(doc: &Doc, out: &mut Output, label: Label, start: usize, end: usize) {
    // A series (`Weights: 01/06 89.0, 02/06 87.4` or `89.0 -> 87.4 -> 86.1 kg`) first.
    if let Some(p) = parse_at(doc, Rule::series_value, end) {
        let mut items = Vec::new();
        for item in p.into_inner() {
            if item.as_rule() != Rule::series_item {
                continue;
            }
            let mut r: Option<Reading> = None;
            let mut date = None;
            let mut when = None;
            let mut day = None;
            for part in item.into_inner() {
                match part.as_rule() {
                    Rule::day_label => day = day_number(part.as_str()),
                    Rule::day_token => {
                        let abs = end + part.as_span().start();
                        date = doc.date_at(abs).map(|d| d.iso.clone());
                    }
                    // `15/03 68.4 kg, today 67.6 kg`: the time word dates this item, not
                    // the date of the item before it on the line.
                    Rule::when => when = time_ref(part.as_str()),
                    // `80 kg, was 84 kg on admission`: a time word after the value says
                    // when, over a plain "was" or "from" before it.
                    Rule::trailing_when => {
                        let t = time_ref(part.as_str());
                        if when.is_none() || when == Some(TimeRef::Previous) {
                            when = t.or(when);
                        }
                    }
                    Rule::reading => r = reading_of(part, end),
                    Rule::unit => {
                        if let Some(r) = r.as_mut() {
                            r.unit_text = Some(part.as_str().to_string());
                            r.end = end + part.as_span().end();
                        }
                    }
                    _ => {}
                }
            }
            if let Some(mut r) = r {
                r.date = date;
                r.time_ref = when.or(day_time_ref(day));
                r.day = day;
                items.push(r);
            }
        }
        order_by_day(&mut items);
        // A value without a unit takes the next unit written after it (`82.1, 81.6, 80.9 kg`;
        // `198, 196 lb, 89.6 kg` when a scale is swapped, 03 §3.7), else the last one before.
        carry_units(items.iter_mut().rev());
        carry_units(items.iter_mut());
        // A series of plausible body weights only (common practice, no source: 20-350 kg).
        if items.len() >= 2 && items.iter().all(|r| (20.0..=800.0).contains(&r.value)) {
            for (i, r) in items.iter_mut().enumerate() {
                let s = if i == 0 { start } else { r.start };
                push(doc, out, MeasureConcept::Weight, r, s, false);
                if r.time_ref.is_some() && r.date.is_none() {
                    if let Some(m) = out.measurements.last_mut() {
                        if m.concept == MeasureConcept::Weight && m.span.start >= s {
                            m.date = doc
                                .episode_of(s)
                                .and_then(|i| doc.episodes[i].date.clone())
                                .filter(|_| r.time_ref == Some(TimeRef::Today));
                        }
                    }
                }
            }
            return;
        }
    }
    let Some(p) = parse_at(doc, Rule::weight_value, end) else {
        return;
    };
    // Stone and pounds (`11 st 4 lb`) are one weight.
    if let Some(sl) = p
        .clone()
        .into_inner()
        .find(|c| c.as_rule() == Rule::stone_lb)
    {
        let span = sl.as_span();
        let nums: Vec<f64> = sl
            .into_inner()
            .filter(|n| n.as_rule() == Rule::number)
            .filter_map(|n| parse_number(n.as_str()))
            .collect();
        let lb = nums.first().copied().unwrap_or(0.0) * 14.0 + nums.get(1).copied().unwrap_or(0.0);
        let r = Reading {
            value: lb,
            start: end + span.start(),
            end: end + span.end(),
            unit_text: Some("lb".into()),
            ..Reading::default()
        };
        push(doc, out, MeasureConcept::Weight, &r, start, false);
        if let Some(m) = out.measurements.last_mut() {
            // Keep the figure as written in the text; the value is in pounds.
            m.unit_text = Some(doc.text[end + span.start()..end + span.end()].to_string());
        }
        return;
    }
    let rs = simple_readings(p, end);
    // `wt ↓ 1.2 kg`, `Weight ↑0.8`: an arrow before a small number is a change, not a
    // body weight (common practice, no source; 03 §3.1 reads `wt ↓ 1.2` as a decrease).
    if let Some(first) = rs.first() {
        let lead = doc.text.get(end..first.start).unwrap_or("");
        if lead.contains(['↑', '↓']) && first.value < 20.0 {
            return;
        }
    }
    for (i, r) in rs.iter().enumerate() {
        let mut r = r.clone();
        if i == 0 {
            r.time_ref = r.time_ref.or(match label {
                Label::WeightAdm => Some(TimeRef::Admission),
                Label::WeightDis => Some(TimeRef::Discharge),
                _ => None,
            });
        }
        push(
            doc,
            out,
            MeasureConcept::Weight,
            &r,
            if i == 0 { start } else { r.start },
            false,
        );
    }
}

/// A target weight; `unit_needed` for a bare `target` or `goal`, which is a weight only
/// with a weight unit written after the number (`Target ~69 kg`, not `target K > 4`).
fn target_weight(doc: &Doc, out: &mut Output, start: usize, end: usize, unit_needed: bool) {
    let Some(p) = parse_at(doc, Rule::target_value, end) else {
        return;
    };
    let mut r = None;
    let mut unit = None;
    for c in p.into_inner() {
        match c.as_rule() {
            Rule::range_reading => r = reading_of(c, end),
            Rule::unit => unit = Some((c.as_str().to_string(), end + c.as_span().end())),
            _ => {}
        }
    }
    let Some(mut r) = r else { return };
    if unit_needed
        && !unit.as_ref().is_some_and(|(u, _)| {
            units::ucum(u).is_some_and(|c| units::accepts(MeasureConcept::Weight, c))
        })
    {
        return;
    }
    if let Some((u, e)) = unit {
        r.unit_text = Some(u);
        r.end = e;
    }
    let code = r
        .unit_text
        .as_deref()
        .and_then(units::ucum)
        .filter(|c| units::accepts(MeasureConcept::Weight, c))
        .unwrap_or_else(|| infer_unit(doc, MeasureConcept::Weight, r.value, false));
    let Some((kg, _)) = units::normalize(MeasureConcept::Weight, r.value, code, false) else {
        return;
    };
    let ctx = doc.engine.context(start, r.end, Target::Statement, false);
    out.cover(start, r.end);
    out.statements.push(Statement {
        kind: StatementKind::TargetWeight,
        value: format!("{}", (kg * 10.0).round() / 10.0),
        assertion: ctx.assertion,
        temporality: ctx.temporality,
        experiencer: ctx.experiencer,
        text: doc.text[start..r.end].to_string(),
        span: doc.index.span(start, r.end),
        section: doc.section_of(start),
        episode: doc.episode_of(start),
    });
}

fn height(doc: &Doc, out: &mut Output, start: usize, end: usize) {
    let Some(p) = parse_at(doc, Rule::height_value, end) else {
        return;
    };
    if let Some(fi) = p.clone().into_inner().find(|c| c.as_rule() == Rule::ft_in) {
        let span = fi.as_span();
        let nums: Vec<f64> = fi
            .into_inner()
            .filter(|n| n.as_rule() == Rule::number)
            .filter_map(|n| parse_number(n.as_str()))
            .collect();
        let inches =
            nums.first().copied().unwrap_or(0.0) * 12.0 + nums.get(1).copied().unwrap_or(0.0);
        let r = Reading {
            value: inches,
            start: end + span.start(),
            end: end + span.end(),
            unit_text: Some("in".into()),
            ..Reading::default()
        };
        push(doc, out, MeasureConcept::Height, &r, start, false);
        return;
    }
    for (i, r) in simple_readings(p, end).iter().enumerate() {
        push(
            doc,
            out,
            MeasureConcept::Height,
            r,
            if i == 0 { start } else { r.start },
            false,
        );
    }
}

/// JVP: a number is a measurement (cm above the sternal angle unless the writer gives
/// cm H2O or the right atrium as the reference), and it also documents whether the JVP is
/// raised: more than 3 cm above the sternal angle, or more than 8 cm H2O from the right
/// atrium (Bates' Guide to Physical Examination: the sternal angle sits about 5 cm above
/// the right atrium). A level (`to the earlobes`) documents a raised JVP.
fn jvp(doc: &Doc, out: &mut Output, label: Label, start: usize, end: usize) {
    let Some(p) = parse_at(doc, Rule::jvp_value, end) else {
        jvp_words(doc, out, label, start, end);
        return;
    };
    let pend = end + p.as_span().end();
    let mut raised_word = false;
    let mut level = None;
    let mut reading = None;
    let mut negative = false;
    let mut from_ra = false;
    for c in p.into_inner() {
        match c.as_rule() {
            Rule::jvp_state => {
                let w = c.as_str().to_ascii_lowercase();
                raised_word |= matches!(w.as_str(), "raised" | "elevated" | "up" | "↑");
            }
            Rule::jvp_level => level = Some(c.as_str().to_string()),
            Rule::jvp_num => {
                for part in c.into_inner() {
                    match part.as_rule() {
                        Rule::sign => negative = part.as_str() != "+",
                        Rule::range_reading => reading = reading_of(part, end),
                        Rule::unit => {
                            let u = part.as_str().to_string();
                            from_ra |= u.to_ascii_lowercase().contains("h2o")
                                || u.to_ascii_lowercase().contains("h20")
                                || u.to_ascii_lowercase().contains("water");
                            if let Some(r) = reading.as_mut() {
                                r.unit_text = Some(u);
                                r.end = end + part.as_span().end();
                            }
                        }
                        Rule::jvp_ref => {
                            from_ra |= part.as_str().to_ascii_lowercase().contains("ra")
                                && !part.as_str().to_ascii_lowercase().contains("sternal");
                        }
                        _ => {}
                    }
                }
            }
            _ => {}
        }
    }
    // A finding term already covers `JVP raised`/`JVP not raised`: only add what the
    // number or level documents when no finding term overlaps this value.
    let term_here = doc.hits_near(start, pend).any(|h| {
        matches!(h.kind, Kind::Finding(FindingConcept::RaisedJvp, _))
            && h.start < pend
            && start < h.end
    });
    let mut detail = FindingDetail::default();
    let raised = if let Some(mut r) = reading {
        if negative {
            r.value = -r.value;
        }
        if r.unit_text.is_none() && from_ra {
            r.unit_text = Some("cmH2O".into());
        }
        push(doc, out, MeasureConcept::Jvp, &r, start, false);
        detail.number = Some(r.value);
        let threshold = if from_ra { 8.0 } else { 3.0 };
        Some(r.value > threshold)
    } else if let Some(l) = level {
        detail.level = Some(l);
        Some(true)
    } else {
        raised_word.then_some(true)
    };
    if let (Some(raised), false) = (raised, term_here) {
        let ctx = doc.engine.context(start, pend, Target::Finding, true);
        let assertion = match (raised, ctx.assertion) {
            (true, a) => a,
            (false, Assertion::Present) => Assertion::Absent,
            (false, a) => a,
        };
        out.findings.push(Finding {
            concept: FindingConcept::RaisedJvp,
            assertion,
            experiencer: ctx.experiencer,
            temporality: ctx.temporality,
            text: doc.text[start..pend].to_string(),
            span: doc.index.span(start, pend),
            detail,
            cues: ctx.cues,
            section: doc.section_of(start),
            episode: doc.episode_of(start),
        });
    }
}

/// `JVP was not raised`, `JVP: normal`, `JVP is flat`, `JVP - not seen`: the words after
/// the label that state the JVP without a number.
fn jvp_words(doc: &Doc, out: &mut Output, label: Label, start: usize, end: usize) {
    static WORDS: std::sync::OnceLock<regex::Regex> = std::sync::OnceLock::new();
    let re = WORDS.get_or_init(|| {
        regex::Regex::new(
            r"^(?i)\s*[:\-–=]?\s*(?:(?:was|is|were|appears?|looks?|remains?|now|today)\s+)*(?:(not|non|no longer)[- ]?(raised|elevated|distended|up|visible|seen|assessable)|(normal|flat|low|nr(?-u:\b)|n/r|unremarkable|down|within normal limits)|(raised|elevated|distended|up|high|visible))",
        )
        .expect("valid regex")
    });
    // A template menu (`JVP: raised / not raised / not seen -> raised`): the answer
    // decides, not the first option.
    if let Some(m) = doc
        .engine
        .menu_at(end)
        .filter(|m| end <= m.options.start && m.options.start - end <= 4)
    {
        if let Some(present) = super::menu::yes_no(&doc.text[m.answer.clone()]) {
            push_finding(
                doc,
                out,
                FindingConcept::RaisedJvp,
                present,
                start,
                end,
                FindingDetail::default(),
            );
        }
        return;
    }
    let line = doc.line_at(end);
    let Some(c) = re.captures(&doc.text[end..line.end]) else {
        return;
    };
    let m = c.get(0).expect("match");
    let pend = end + m.end();
    let covered_by_term = doc.hits_near(start, pend).any(|h| {
        matches!(h.kind, Kind::Finding(FindingConcept::RaisedJvp, _))
            && h.start < pend
            && start < h.end
    });
    if covered_by_term {
        return;
    }
    let present = if let Some(w) = c.get(2) {
        let w = w.as_str().to_ascii_lowercase();
        if matches!(w.as_str(), "visible" | "seen" | "assessable") {
            // "JVP not seen": neither raised nor normal, so no finding.
            return;
        }
        false
    } else if c.get(3).is_some() {
        false
    } else {
        let w = c
            .get(4)
            .map(|w| w.as_str().to_ascii_lowercase())
            .unwrap_or_default();
        if w == "visible" {
            return;
        }
        true
    };
    let _ = label;
    push_finding(
        doc,
        out,
        FindingConcept::RaisedJvp,
        present,
        start,
        pend,
        FindingDetail::default(),
    );
}

fn intake_output(doc: &Doc, out: &mut Output, start: usize, end: usize) {
    let Some(p) = parse_at(doc, Rule::io_value, end) else {
        return;
    };
    let pend = end + p.as_span().end();
    let Some(inner) = p
        .into_inner()
        .find(|c| matches!(c.as_rule(), Rule::io_pair | Rule::io_inout))
    else {
        return;
    };
    let mut readings: Vec<Reading> = Vec::new();
    for part in inner.into_inner() {
        match part.as_rule() {
            Rule::reading => {
                if let Some(r) = reading_of(part, end) {
                    readings.push(r);
                }
            }
            Rule::unit => {
                if let Some(r) = readings.last_mut() {
                    r.unit_text = Some(part.as_str().to_string());
                }
            }
            _ => {}
        }
    }
    let [inp, outp] = readings.as_slice() else {
        return;
    };
    let unit_of =
        |r: &Reading, other: &Reading| r.unit_text.clone().or_else(|| other.unit_text.clone());
    let to_ml = |r: &Reading, u: Option<String>| -> Option<f64> {
        let code = u
            .as_deref()
            .and_then(units::ucum)
            .unwrap_or_else(|| infer_unit(doc, MeasureConcept::FluidBalance, r.value, false));
        units::normalize(MeasureConcept::FluidBalance, r.value, code, false).map(|(v, _)| v)
    };
    let (Some(i_ml), Some(o_ml)) = (
        to_ml(inp, unit_of(inp, outp)),
        to_ml(outp, unit_of(outp, inp)),
    ) else {
        return;
    };
    let net = Reading {
        value: i_ml - o_ml,
        start,
        end: pend,
        unit_text: Some("mL".into()),
        ..Reading::default()
    };
    let written = inp.unit_text.is_some() || outp.unit_text.is_some();
    push(doc, out, MeasureConcept::FluidBalance, &net, start, false);
    if let Some(m) = out.measurements.last_mut() {
        m.unit_inferred = !written;
    }
    // The output side is a urine output when the writer does not say otherwise (common
    // practice, no source: ward I/O charts record urine as the output).
    let uo = Reading {
        value: o_ml,
        start: outp.start,
        end: outp.end,
        unit_text: Some("mL".into()),
        ..Reading::default()
    };
    push(
        doc,
        out,
        MeasureConcept::UrineOutput,
        &uo,
        outp.start,
        false,
    );
    if let Some(m) = out.measurements.last_mut() {
        m.unit_inferred = !written;
    }
}

fn fluid_balance(doc: &Doc, out: &mut Output, start: usize, end: usize) {
    let Some(p) = parse_at(doc, Rule::fb_value, end) else {
        return;
    };
    let pend = end + p.as_span().end();
    let mut sign = 1.0;
    // `negative balance of 1.5 L`, `positive fluid balance 800 mL`: the sign word may come
    // before the label.
    {
        let line = doc.line_at(start);
        let before = doc.text[line.start.min(start)..start].trim_end();
        let last = before
            .rsplit(|c: char| !c.is_ascii_alphabetic())
            .next()
            .unwrap_or("")
            .to_ascii_lowercase();
        if matches!(last.as_str(), "negative" | "neg") {
            sign = -1.0;
        }
    }
    let mut even = false;
    for c in p.clone().into_inner() {
        match c.as_rule() {
            Rule::fb_even => even = true,
            Rule::fb_word if c.as_str().to_ascii_lowercase().starts_with("neg") => sign = -1.0,
            Rule::sign if c.as_str() != "+" => sign = -1.0,
            _ => {}
        }
    }
    if even {
        let r = Reading {
            value: 0.0,
            start,
            end: pend,
            unit_text: Some("mL".into()),
            ..Reading::default()
        };
        push(doc, out, MeasureConcept::FluidBalance, &r, start, false);
        return;
    }
    let mut main: Option<Reading> = None;
    let mut rest: Vec<Reading> = Vec::new();
    for (i, r) in simple_readings(p, end).into_iter().enumerate() {
        if i == 0 {
            main = Some(r);
        } else {
            rest.push(r);
        }
    }
    let Some(mut m) = main else { return };
    m.value *= sign;
    push(doc, out, MeasureConcept::FluidBalance, &m, start, false);
    // `+650 ml (oral 1.1 L, urine 450 ml)`: the intake and output behind a balance are not
    // balances themselves.
    const PARTS: &[&str] = &[
        "in", "out", "input", "intake", "output", "oral", "po", "iv", "urine", "uo", "drain",
        "drains", "stool", "vomit",
    ];
    for r in rest {
        let before = doc.text.get(..r.start).unwrap_or("");
        let item = before.rsplit(['(', ',', ';']).next().unwrap_or("");
        let part = item
            .split(|c: char| !c.is_ascii_alphabetic())
            .any(|w| PARTS.contains(&w.to_ascii_lowercase().as_str()));
        if !part {
            push(doc, out, MeasureConcept::FluidBalance, &r, r.start, false);
        }
    }
}

fn nyha(doc: &Doc, out: &mut Output, label: Label, start: usize, end: usize) {
    let Some(p) = parse_at(doc, Rule::nyha_value, end) else {
        return;
    };
    let pend = end + p.as_span().end();
    let nums: Vec<_> = p
        .into_inner()
        .filter(|c| c.as_rule() == Rule::nyha_num)
        .collect();
    let roman = nums
        .iter()
        .all(|c| c.as_str().starts_with(['i', 'I', 'v', 'V']));
    let classes: Vec<u8> = nums.iter().filter_map(|c| nyha_class(c.as_str())).collect();
    let Some(&class) = classes.iter().max() else {
        return;
    };
    // `class 2` alone is NYHA only where NYHA or heart failure is in the same line, or
    // where a Roman class is written as `FC III` or `class III symptoms` (03 §3.8).
    let symptoms = doc
        .text
        .get(pend..)
        .is_some_and(|r| r.trim_start().to_ascii_lowercase().starts_with("symptom"));
    let fc = &doc.text[start..end] == "FC";
    if label == Label::NyhaWeak
        && !(roman && (symptoms || fc))
        && !doc.line_mentions(start, 160, &["nyha", "functional", "hf", "heart failure"])
    {
        return;
    }
    let roman = ["I", "II", "III", "IV"][(class - 1) as usize];
    let mut ctx = doc.engine.context(start, pend, Target::Statement, false);
    // "Symptoms consistent with NYHA class II": the class is the clinician's grading of
    // the symptoms, not an uncertain diagnosis (04 §4.3 lists "consistent with" as a
    // possibility cue for diagnoses; NYHA is a grading, common practice, no source).
    if ctx.assertion == crate::model::Assertion::Possible
        && ctx
            .cues
            .iter()
            .filter(|c| c.family == "possibility")
            .all(|c| GRADING_WORDS.contains(&c.text.to_ascii_lowercase().as_str()))
    {
        ctx.assertion = crate::model::Assertion::Present;
        ctx.cues.retain(|c| c.family != "possibility");
    }
    let line_end = doc.line_at(start).end.max(pend);
    let rest = doc.text.get(pend..line_end).unwrap_or("");
    // "NYHA II-III on adm": the class at admission, not today's (a day-3 note's class may
    // have changed); it counts when no current class is written. A baseline class is
    // still the patient's class ("NYHA III at baseline").
    let at_admission = {
        static RE: std::sync::OnceLock<regex::Regex> = std::sync::OnceLock::new();
        super::numbers::cached(
            &RE,
            r"(?i)^\s*\)?\s*(?:on|at)\s+(?:adm\b|admission|presentation|arrival)",
        )
        .is_match(rest)
    };
    out.cover(start, pend);
    out.statements.push(Statement {
        kind: StatementKind::Nyha,
        value: roman.to_string(),
        assertion: ctx.assertion,
        temporality: if at_admission {
            crate::model::Temporality::Historical
        } else {
            crate::model::Temporality::Current
        },
        experiencer: ctx.experiencer,
        text: doc.text[start..pend].to_string(),
        span: doc.index.span(start, pend),
        section: doc.section_of(start),
        episode: doc.episode_of(start),
    });
    // "NYHA II usually, today more like III": a class for today after the usual one. It
    // is the later statement, so it is the current class.
    static TODAY: std::sync::OnceLock<regex::Regex> = std::sync::OnceLock::new();
    let today = super::numbers::cached(
        &TODAY,
        r"(?i)^[^.;]{0,24}?[,;]?\s*(?:but\s+)?(?:today|now|currently|at present|this week)\s*(?:(?:is|seems|looks|appears|probably|likely|more like|closer to|nearer to|nearer|more|like)\s*){0,3}(?:(?:nyha|class)\s*(?:class\s*)?(?P<c>iv|iii|ii|i|[1-4])|(?-i:(?P<r>IV|III|II)))\b",
    );
    if let Some(c) = today.captures(rest) {
        // A bare class must be an upper-case Roman numeral of two letters or more ("now I
        // think" is no class I).
        let Some(m) = c.name("c").or_else(|| c.name("r")) else {
            return;
        };
        if let Some(k) = nyha_class(m.as_str()) {
            let (s2, e2) = (pend + m.start(), pend + m.end());
            let ctx2 = doc.engine.context(s2, e2, Target::Statement, false);
            out.cover(s2, e2);
            out.statements.push(Statement {
                kind: StatementKind::Nyha,
                value: ["I", "II", "III", "IV"][(k - 1) as usize].to_string(),
                assertion: ctx2.assertion,
                temporality: crate::model::Temporality::Current,
                experiencer: ctx2.experiencer,
                text: doc.text[start..e2].to_string(),
                span: doc.index.span(start, e2),
                section: doc.section_of(start),
                episode: doc.episode_of(start),
            });
        }
    }
}

/// Possibility words that, before a NYHA class, grade the symptoms rather than doubt them.
const GRADING_WORDS: &[&str] = &[
    "consistent with",
    "in keeping with",
    "compatible with",
    "in line with",
    "suggestive of",
];

fn nyha_class(s: &str) -> Option<u8> {
    let s = s.to_ascii_lowercase();
    let s = s.trim_end_matches(['a', 'b']);
    Some(match s {
        "i" | "1" | "one" => 1,
        "ii" | "2" | "two" => 2,
        "iii" | "3" | "three" => 3,
        "iv" | "4" | "four" => 4,
        _ => return None,
    })
}

fn push_finding(
    doc: &Doc,
    out: &mut Output,
    concept: FindingConcept,
    present: bool,
    start: usize,
    end: usize,
    detail: FindingDetail,
) {
    let ctx = doc.engine.context(start, end, Target::Finding, true);
    let assertion = match (present, ctx.assertion) {
        (true, a) => a,
        (false, Assertion::Present) => Assertion::Absent,
        (false, a) => a,
    };
    out.cover(start, end);
    out.findings.push(Finding {
        concept,
        assertion,
        experiencer: ctx.experiencer,
        temporality: ctx.temporality,
        text: doc.text[start..end].to_string(),
        span: doc.index.span(start, end),
        detail,
        cues: ctx.cues,
        section: doc.section_of(start),
        episode: doc.episode_of(start),
    });
}

/// Capillary refill: more than 2 s is prolonged, 2 s or less is normal (the bedside
/// threshold used for the cold profile: Nohria, Stevenson et al. 2003 use "cool
/// extremities"; the 2-second refill threshold is common practice, no source; the domain
/// reference, 03 §3.5, lists "CRT 2 secs" among the warm forms and "CRT 4 s",
/// "cap refill > 3 s" among the cold ones).
fn capillary_refill(doc: &Doc, out: &mut Output, start: usize, end: usize) {
    // A template menu (`Cap refill: <2s / >2s -> >2s`): read the answer, not the options.
    let at = doc
        .engine
        .menu_at(end)
        .filter(|m| end <= m.options.start && m.options.start - end <= 4)
        .map_or(end, |m| m.answer.start);
    let Some(p) = parse_at(doc, Rule::crt_value, at) else {
        return;
    };
    let pend = at + p.as_span().end();
    let overlaps_term = doc.hits_near(start, pend).any(|h| {
        matches!(h.kind, Kind::Finding(FindingConcept::ProlongedCapRefill, _))
            && h.start < pend
            && start < h.end
    });
    if overlaps_term {
        return;
    }
    let mut worst: Option<(f64, Option<Qualifier>)> = None;
    let mut word = None;
    for c in p.into_inner() {
        match c.as_rule() {
            Rule::crt_secs => {
                let mut q = None;
                let mut v = None;
                for part in c.into_inner() {
                    match part.as_rule() {
                        Rule::comparator => q = qualifier_of(part),
                        Rule::number => v = parse_number(part.as_str()),
                        _ => {}
                    }
                }
                if let Some(v) = v {
                    if worst.is_none_or(|(w, _)| v > w) {
                        worst = Some((v, q));
                    }
                }
            }
            Rule::crt_word => word = Some(c.as_str().to_ascii_lowercase()),
            _ => {}
        }
    }
    let (prolonged, number) = match (worst, word) {
        (Some((v, q)), _) => {
            if v > 10.0 {
                return;
            }
            let prolonged = match q {
                Some(Qualifier::UpperBound) => false,
                Some(Qualifier::LowerBound) => v >= 2.0,
                _ => v > 2.0,
            };
            // `CRT 2 s` exactly, or `<3 s`: read as written.
            let prolonged = prolonged && !(q == Some(Qualifier::UpperBound));
            (prolonged, Some(v))
        }
        (None, Some(w)) => (
            matches!(w.as_str(), "prolonged" | "delayed" | "sluggish" | "slow"),
            None,
        ),
        (None, None) => return,
    };
    let detail = FindingDetail {
        number,
        ..FindingDetail::default()
    };
    push_finding(
        doc,
        out,
        FindingConcept::ProlongedCapRefill,
        prolonged,
        start,
        pend,
        detail,
    );
}

/// GCS below 15 or an abbreviated mental test score below 8 documents altered mentation
/// (GCS: Teasdale & Jennett, Lancet 1974, 15 is fully alert; AMTS: Hodkinson, Age Ageing
/// 1972, below 8 of 10 suggests impairment). The scores themselves are not in the
/// contract's concept list and are not measurements.
fn scored_mentation(
    doc: &Doc,
    out: &mut Output,
    rule: Rule,
    normal_from: f64,
    start: usize,
    end: usize,
) {
    let Some(p) = parse_at(doc, rule, end) else {
        return;
    };
    let pend = end + p.as_span().end();
    let Some(v) = p
        .into_inner()
        .find(|c| c.as_rule() == Rule::number)
        .and_then(|n| parse_number(n.as_str()))
    else {
        return;
    };
    let max = if rule == Rule::gcs_value { 15.0 } else { 10.0 };
    if v > max || v < 3.0_f64.min(max) && rule == Rule::gcs_value {
        return;
    }
    let detail = FindingDetail {
        number: Some(v),
        ..FindingDetail::default()
    };
    push_finding(
        doc,
        out,
        FindingConcept::AlteredMentation,
        v < normal_from,
        start,
        pend,
        detail,
    );
}
