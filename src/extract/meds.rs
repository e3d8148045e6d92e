//! Medication mentions: generic drug name and class, dose, unit, route, frequency, the change
//! the note writes and whether the patient is on it at all.
//!
//! Drug names come from `drugs.tsv` (generic names, UK and US spellings, and class words such
//! as "ACE inhibitor" for statements like "not on an ACE inhibitor"). Each name found in the
//! text opens a mention whose scope is its clause: the words before it back to the start of
//! the line, a `;` or a full stop (the *head*: route, change verb, negation), and the words
//! after it up to the next drug name or the end of the clause (the *tail*: dose, unit, route,
//! frequency, `->` changes). Bracketed text in the tail ("(d/w re reducing if Cr stable)") is
//! read only for a change word when the main text has none, and never for a condition.
//!
//! Drugs written as a list share one verb: "Hold spironolactone 12.5 mg and dapagliflozin
//! 10 mg" holds both; "bisoprolol 2.5 mg od, dapagliflozin 10 mg od ... continue" continues
//! every item. `X 80 mg bd -> X infusion 20 mg/h` marks the first regime `switched` and the
//! second increased or reduced by its daily dose.
//!
//! Sections decide context where the words do not: family history is skipped, an allergy
//! section makes a mention absent, and advice or follow-up sections make it hypothetical
//! (ConText's section defaults, Harkema et al. 2009). Medication, discharge-medication and
//! plan sections are read like any other text, since their lines are the mentions.

use std::sync::OnceLock;

use aho_corasick::{AhoCorasick, AhoCorasickBuilder, MatchKind};

use crate::model::{Assertion, DrugClass, MedChange, Medication, Section, SectionKind};
use crate::span::LineIndex;

/// The drug lexicon, compiled into the binary.
pub const DRUGS: &str = include_str!("drugs.tsv");

/// One written form of the drug lexicon.
#[derive(Debug, Clone, PartialEq)]
pub struct DrugTerm {
    /// Lower case, as written in notes.
    pub written: String,
    /// The generic name (INN) it maps to; `None` for a class word.
    pub generic: Option<String>,
    pub class: DrugClass,
}

/// The contract name of a drug class (`loop_diuretic`, ...).
pub fn class_name(class: DrugClass) -> &'static str {
    match class {
        DrugClass::LoopDiuretic => "loop_diuretic",
        DrugClass::ThiazideDiuretic => "thiazide_diuretic",
        DrugClass::Mra => "mra",
        DrugClass::AceInhibitor => "ace_inhibitor",
        DrugClass::Arb => "arb",
        DrugClass::Arni => "arni",
        DrugClass::BetaBlocker => "beta_blocker",
        DrugClass::Sglt2Inhibitor => "sglt2_inhibitor",
        DrugClass::Digoxin => "digoxin",
        DrugClass::Anticoagulant => "anticoagulant",
        DrugClass::PotassiumSupplement => "potassium_supplement",
        DrugClass::Other => "other",
    }
}

/// A human label for a drug class.
pub fn class_label(class: DrugClass) -> &'static str {
    match class {
        DrugClass::LoopDiuretic => "loop diuretic",
        DrugClass::ThiazideDiuretic => "thiazide diuretic",
        DrugClass::Mra => "MRA",
        DrugClass::AceInhibitor => "ACE inhibitor",
        DrugClass::Arb => "ARB",
        DrugClass::Arni => "ARNI",
        DrugClass::BetaBlocker => "beta-blocker",
        DrugClass::Sglt2Inhibitor => "SGLT2 inhibitor",
        DrugClass::Digoxin => "digoxin",
        DrugClass::Anticoagulant => "anticoagulant",
        DrugClass::PotassiumSupplement => "potassium supplement",
        DrugClass::Other => "other",
    }
}

/// The class of a contract class name.
pub fn class_from_name(name: &str) -> Option<DrugClass> {
    use DrugClass::*;
    [
        LoopDiuretic,
        ThiazideDiuretic,
        Mra,
        AceInhibitor,
        Arb,
        Arni,
        BetaBlocker,
        Sglt2Inhibitor,
        Digoxin,
        Anticoagulant,
        PotassiumSupplement,
        Other,
    ]
    .into_iter()
    .find(|c| class_name(*c) == name)
}

/// Parse the drug lexicon; an error names the offending line.
pub fn parse_drugs(source: &str) -> Result<Vec<DrugTerm>, String> {
    let mut out = Vec::new();
    for (n, line) in source.lines().enumerate() {
        let line = line.trim_end();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        let cols: Vec<&str> = line.split('\t').collect();
        if cols.len() != 3 {
            return Err(format!("drugs.tsv line {}: expected 3 columns", n + 1));
        }
        let class = class_from_name(cols[2])
            .ok_or_else(|| format!("drugs.tsv line {}: unknown class {}", n + 1, cols[2]))?;
        let generic = (cols[1] != "-").then(|| cols[1].to_string());
        out.push(DrugTerm {
            written: cols[0].to_ascii_lowercase(),
            generic,
            class,
        });
    }
    Ok(out)
}

struct Compiled {
    terms: Vec<DrugTerm>,
    automaton: AhoCorasick,
}

fn compiled() -> &'static Compiled {
    static C: OnceLock<Compiled> = OnceLock::new();
    C.get_or_init(|| {
        // The lexicon is compiled in and checked by a unit test, so a parse error here is a
        // build defect; fall back to an empty lexicon rather than panic.
        let terms = parse_drugs(DRUGS).unwrap_or_default();
        let automaton = AhoCorasickBuilder::new()
            .ascii_case_insensitive(true)
            .match_kind(MatchKind::LeftmostLongest)
            .build(terms.iter().map(|t| t.written.as_str()))
            .unwrap_or_else(|_| {
                AhoCorasick::new(Vec::<&str>::new()).expect("empty automaton builds")
            });
        Compiled { terms, automaton }
    })
}

/// The generic name and class of a written drug name or class word.
pub fn lookup(written: &str) -> Option<(Option<&'static str>, DrugClass)> {
    let lower = written.trim().to_ascii_lowercase();
    compiled()
        .terms
        .iter()
        .find(|t| t.written == lower)
        .map(|t| (t.generic.as_deref(), t.class))
}

/// Every medication mention of a text, in text order.
pub fn medications(text: &str, sections: &[Section]) -> Vec<Medication> {
    let index = LineIndex::new(text);
    let hits = find_hits(text);
    let clauses = Clauses::new(text);
    let mut mentions: Vec<Mention> = Vec::with_capacity(hits.len());
    for (i, hit) in hits.iter().enumerate() {
        let line = index.line_range(index.line_of(hit.start));
        let clause_start = clauses.start(line.start, hit.start);
        let clause_end = clauses.end(hit.end, line.end);
        // The text between the previous hit and this one, when both share a clause, is split
        // at its last separator: before it is the previous tail, after it this head.
        // A first mention's head reaches back to the last comma at most: "cont IV, U&E AM,
        // add metolazone" gives metolazone only "add".
        let mut head_start = clauses
            .last_comma(clause_start, hit.start)
            .map(|p| p + 1)
            .unwrap_or(clause_start);
        let mut join = Join::None;
        if let Some(prev) = i.checked_sub(1).map(|p| &hits[p]) {
            if prev.end > clause_start && prev.end <= hit.start {
                let between = &text[prev.end..hit.start];
                let separator = last_separator(between).or_else(|| {
                    let prev_head = mentions
                        .last()
                        .map_or("", |m| &text[m.head_start..prev.start]);
                    switch_to(prev_head, between)
                });
                match separator {
                    Some((s, e, kind)) => {
                        head_start = prev.end + e;
                        join = kind;
                        if let Some(m) = mentions.last_mut() {
                            m.tail_end = m.tail_end.min(prev.end + s);
                            m.followed_by = kind;
                        }
                    }
                    None => {
                        head_start = hit.start;
                        join = Join::Adjacent;
                        if let Some(m) = mentions.last_mut() {
                            m.tail_end = m.tail_end.min(hit.start);
                        }
                    }
                }
            }
        }
        mentions.push(Mention {
            hit: *hit,
            clause_start,
            head_start,
            tail_end: clause_end,
            joined_by: join,
            followed_by: Join::None,
        });
    }
    let mut parsed: Vec<Parsed> = mentions.iter().map(|m| parse_mention(text, m)).collect();
    propagate(&mentions, &mut parsed);
    follow_arrows(&mentions, &mut parsed);

    let mut out = Vec::with_capacity(parsed.len());
    for (m, p) in mentions.iter().zip(parsed) {
        let section = crate::text::sections::section_at(sections, m.hit.start);
        let kind = section.map(|s| sections[s].kind);
        if kind == Some(SectionKind::FamilyHistory) {
            continue;
        }
        let term = &compiled().terms[m.hit.term];
        let mut assertion = p.assertion;
        match kind {
            Some(SectionKind::Allergies) => assertion = Assertion::Absent,
            Some(SectionKind::DischargeInstructions | SectionKind::FollowUp)
                if assertion == Assertion::Present =>
            {
                assertion = Assertion::Hypothetical
            }
            _ => {}
        }
        let start = text.floor_char_boundary(p.span_start.min(m.hit.start));
        let end = text
            .floor_char_boundary(p.span_end.max(m.hit.end))
            .max(m.hit.end);
        out.push(Medication {
            drug: term
                .generic
                .clone()
                .unwrap_or_else(|| class_name(term.class).to_string()),
            class: term.class,
            dose: p.dose,
            unit: p.unit.map(str::to_string),
            route: p.route.map(str::to_string),
            frequency: p.frequency.clone(),
            per_day: p.per_day,
            daily_dose: p.daily_dose,
            change: p.change,
            starts: p.starts.clone(),
            assertion,
            note: p.note.clone(),
            text: text[start..end].to_string(),
            span: index.span(start, end),
            section,
        });
    }
    out
}

/// A drug name found in the text.
#[derive(Debug, Clone, Copy)]
struct Hit {
    start: usize,
    end: usize,
    term: usize,
}

/// How a mention is tied to its neighbour in the same clause.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Join {
    None,
    /// `,`, `and`, `or`, `+`, `&`: a list that shares a verb.
    List,
    /// `->`, `→`, `=>`: the earlier regime is replaced by the later.
    Arrow,
    /// No separator: "sacubitril/valsartan" split oddly, "furosemide furosemide".
    Adjacent,
}

#[derive(Debug, Clone)]
struct Mention {
    hit: Hit,
    /// Where the mention's clause starts (before any comma the head stops at).
    clause_start: usize,
    head_start: usize,
    tail_end: usize,
    joined_by: Join,
    followed_by: Join,
}

/// Where a parsed value came from, for list propagation.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum From {
    Head,
    Tail,
    Other,
}

#[derive(Debug, Clone)]
struct Parsed {
    dose: Option<f64>,
    unit: Option<&'static str>,
    route: Option<&'static str>,
    frequency: Option<String>,
    per_day: Option<f64>,
    daily_dose: Option<f64>,
    change: Option<MedChange>,
    change_from: From,
    /// The later day a change is written for ("from tomorrow").
    starts: Option<String>,
    assertion: Assertion,
    assertion_from: From,
    note: Option<String>,
    span_start: usize,
    span_end: usize,
}

fn is_word(c: char) -> bool {
    c.is_alphanumeric()
}

fn find_hits(text: &str) -> Vec<Hit> {
    let c = compiled();
    let mut out = Vec::new();
    for m in c.automaton.find_iter(text) {
        let (s, e) = (m.start(), m.end());
        if !text.is_char_boundary(s) || !text.is_char_boundary(e) {
            continue;
        }
        let before_ok = text[..s].chars().next_back().is_none_or(|p| !is_word(p));
        // A dose may follow the name without a space ("frusemide40").
        let after_ok = text[e..]
            .chars()
            .next()
            .is_none_or(|n| !is_word(n) || n.is_ascii_digit());
        if before_ok && after_ok {
            out.push(Hit {
                start: s,
                end: e,
                term: m.pattern().as_usize(),
            });
        }
    }
    out
}

/// Whether the `.` at byte `i` ends a sentence (not a decimal point or `b.d.`).
fn is_full_stop(text: &str, i: usize) -> bool {
    let b = text.as_bytes();
    let next_ok = b
        .get(i + 1)
        .is_none_or(|n| matches!(n, b' ' | b'\t' | b'\n' | b'\r'));
    if !next_ok {
        return false;
    }
    // The word ending in this stop: another dot inside it makes it an abbreviation.
    let word_start = text[..i]
        .char_indices()
        .rev()
        .find(|(_, c)| c.is_whitespace() || *c == '(')
        .map(|(p, c)| p + c.len_utf8())
        .unwrap_or(0);
    let word = &text[word_start..i];
    !(word.contains('.')
        || matches!(
            word.to_ascii_lowercase().as_str(),
            "approx" | "e.g" | "i.e" | "vs" | "dr" | "no" | "tab" | "tabs"
        ))
}

fn is_boundary_at(text: &str, i: usize) -> bool {
    match text.as_bytes()[i] {
        b';' | b'|' => true,
        b'.' => is_full_stop(text, i),
        _ => false,
    }
}

const TERMINATORS: &[&str] = &[" but ", " however ", " although ", " though "];

/// Where clauses break in a document, found once: boundary characters (`;`, `|`, a full
/// stop), terminator words (`but`, `however`...) and commas, each sorted by offset. The
/// clause around a mention is then found by binary search, so a long line with many
/// mentions costs no more than a short one per mention.
struct Clauses {
    bounds: Vec<usize>,
    /// `(start, end)` of each terminator occurrence, by start (occurrences may overlap).
    terms: Vec<(usize, usize)>,
    commas: Vec<usize>,
}

impl Clauses {
    fn new(text: &str) -> Clauses {
        static AC: std::sync::OnceLock<aho_corasick::AhoCorasick> = std::sync::OnceLock::new();
        let ac = crate::text::phrase_automaton(&AC, TERMINATORS.iter().copied());
        let bytes = text.as_bytes();
        let bounds = memchr::memchr3_iter(b';', b'|', b'.', bytes)
            .filter(|&i| is_boundary_at(text, i))
            .collect();
        let mut terms: Vec<(usize, usize)> = ac
            .find_overlapping_iter(text)
            .map(|m| (m.start(), m.end()))
            .collect();
        terms.sort_unstable();
        let commas = memchr::memchr_iter(b',', bytes).collect();
        Clauses {
            bounds,
            terms,
            commas,
        }
    }

    /// The start of the clause holding `at` on the line starting at `line_start`: after
    /// the last boundary or terminator before it.
    fn start(&self, line_start: usize, at: usize) -> usize {
        let mut start = line_start;
        let i = self.bounds.partition_point(|&b| b < at);
        if let Some(&b) = i.checked_sub(1).map(|i| &self.bounds[i]) {
            if b >= line_start {
                start = b + 1;
            }
        }
        // The latest end of a terminator that lies inside `line_start..at`. Terminators
        // do not contain one another, so going back from `at`, once one fits no earlier
        // one can end later than `longest` bytes past its own start.
        let longest = TERMINATORS.iter().map(|t| t.len()).max().unwrap_or(0);
        let mut best: Option<usize> = None;
        let mut j = self.terms.partition_point(|&(s, _)| s < at);
        while j > 0 {
            j -= 1;
            let (s, e) = self.terms[j];
            if s < line_start || best.is_some_and(|b| s + longest <= b) {
                break;
            }
            if e <= at {
                best = Some(best.map_or(e, |b| b.max(e)));
            }
        }
        best.map_or(start, |b| start.max(b))
    }

    /// The end of the clause starting at `from` on a line ending at `line_end`: the first
    /// boundary or terminator after it.
    fn end(&self, from: usize, line_end: usize) -> usize {
        if from >= line_end {
            return line_end.max(from);
        }
        let mut end = line_end;
        let i = self.bounds.partition_point(|&b| b < from);
        if let Some(&b) = self.bounds.get(i) {
            if b < line_end {
                end = b;
            }
        }
        let mut j = self.terms.partition_point(|&(s, _)| s < from);
        while let Some(&(s, e)) = self.terms.get(j) {
            if s >= end {
                break;
            }
            if e <= end {
                return s;
            }
            j += 1;
        }
        end
    }

    /// The last comma in `from..to`.
    fn last_comma(&self, from: usize, to: usize) -> Option<usize> {
        let i = self.commas.partition_point(|&c| c < to);
        i.checked_sub(1)
            .map(|i| self.commas[i])
            .filter(|&c| c >= from)
    }
}

/// The last separator in the text between two drug names: (start, end, kind).
fn last_separator(between: &str) -> Option<(usize, usize, Join)> {
    let lower = between.to_ascii_lowercase();
    let mut best: Option<(usize, usize, Join)> = None;
    let mut consider = |s: usize, e: usize, kind: Join| {
        if best.is_none_or(|b| s >= b.0) {
            best = Some((s, e, kind));
        }
    };
    for arrow in ["->", "→", "=>"] {
        if let Some(p) = lower.rfind(arrow) {
            consider(p, p + arrow.len(), Join::Arrow);
        }
    }
    for sep in [",", " and ", " or ", " + ", "&", " nor ", " plus "] {
        if let Some(p) = lower.rfind(sep) {
            consider(p, p + sep.len(), Join::List);
        }
    }
    best
}

/// `switch A to B`, `change A 40 mg bd to B`: with a switch verb before the first drug
/// (`prev_head`), the last ` to ` between the two names replaces A by B as an arrow does.
/// Without one, ` to ` joins nothing ("add spironolactone to furosemide").
fn switch_to(prev_head: &str, between: &str) -> Option<(usize, usize, Join)> {
    let switching = words(prev_head).iter().any(|w| {
        matches!(
            w.text.trim_end_matches(['.', ',']),
            "switch"
                | "switched"
                | "switching"
                | "change"
                | "changed"
                | "convert"
                | "converted"
                | "swap"
                | "swapped"
                | "transition"
                | "step"
        )
    });
    if !switching {
        return None;
    }
    let lower = between.to_ascii_lowercase();
    let p = lower.rfind(" to ")?;
    Some((p, p + 4, Join::Arrow))
}

/// A later day a change is written for: `from tomorrow`, `starting Monday`, `tomorrow`,
/// `from 12/11`, `next week`, `in 2 days` (common practice, no source). Read in the
/// mention's own words only, so "recheck U&E tomorrow" after a comma does not schedule the
/// drug before it.
fn future_start(ws: &[Word]) -> Option<String> {
    let bare = |w: &Word| w.text.trim_end_matches(['.', ',', ':']).to_string();
    let weekday = |w: &str| -> Option<String> {
        Some(
            match w {
                "mon" | "monday" => "Monday",
                "tue" | "tues" | "tuesday" => "Tuesday",
                "wed" | "weds" | "wednesday" => "Wednesday",
                "thu" | "thur" | "thurs" | "thursday" => "Thursday",
                "fri" | "friday" => "Friday",
                "sat" | "saturday" => "Saturday",
                "sun" | "sunday" => "Sunday",
                _ => return None,
            }
            .to_string(),
        )
    };
    let is_date = |w: &str| {
        let parts: Vec<&str> = w.split(['/', '.']).collect();
        (2..=3).contains(&parts.len())
            && parts
                .iter()
                .all(|p| !p.is_empty() && p.len() <= 4 && p.bytes().all(|b| b.is_ascii_digit()))
    };
    for (i, w) in ws.iter().enumerate() {
        let t = bare(w);
        if matches!(
            t.as_str(),
            "tomorrow" | "tmrw" | "tmw" | "tomorrow's" | "2moro"
        ) {
            return Some("tomorrow".into());
        }
        let next = ws.get(i + 1).map(bare);
        let after = ws.get(i + 2).map(bare);
        let from_word = matches!(
            t.as_str(),
            "from" | "starting" | "commencing" | "wef" | "w.e.f" | "on" | "beginning"
        );
        if t == "next" && next.as_deref().is_some_and(|n| matches!(n, "week" | "wk")) {
            return Some("next week".into());
        }
        if t == "in"
            && next
                .as_deref()
                .is_some_and(|n| n.parse::<u32>().is_ok_and(|v| v < 60))
            && after
                .as_deref()
                .is_some_and(|a| matches!(a, "days" | "day" | "weeks" | "week"))
        {
            return Some(format!(
                "in {} {}",
                next.unwrap_or_default(),
                after.unwrap_or_default()
            ));
        }
        if from_word {
            if let Some(n) = next.as_deref() {
                if let Some(d) = weekday(n) {
                    return Some(d);
                }
                if is_date(n) && t != "on" {
                    return Some(n.to_string());
                }
            }
        }
    }
    None
}

/// The words of a tail that belong to the mention itself: up to the first comma, dash or
/// monitoring noun after its dose (`40 mg od, U&E tomorrow`).
fn own_part(ws: &[Word], text: &str) -> usize {
    for (i, w) in ws.iter().enumerate() {
        if MONITORING.contains(&w.text.trim_end_matches(['.', ','])) {
            return i;
        }
        let after = text.get(w.end..).unwrap_or("");
        if after.starts_with(',') || after.starts_with(" - ") || after.starts_with(" then ") {
            return i + 1;
        }
    }
    ws.len()
}

/// Blank out bracketed text (keeping byte offsets) and return it separately.
fn split_brackets(s: &str) -> (String, String) {
    let mut main = String::with_capacity(s.len());
    let mut inner = String::new();
    let mut depth = 0usize;
    for c in s.chars() {
        match c {
            '(' | '[' => {
                depth += 1;
                main.push(' ');
            }
            ')' | ']' if depth > 0 => {
                depth -= 1;
                main.push(' ');
                inner.push(' ');
            }
            _ if depth > 0 => {
                for _ in 0..c.len_utf8() {
                    main.push(' ');
                }
                inner.push(c);
            }
            _ => main.push(c),
        }
    }
    (main, inner)
}

/// A word of a scope, lower case, with its byte range in the scope.
#[derive(Debug, Clone)]
struct Word {
    start: usize,
    end: usize,
    text: String,
}

fn words(s: &str) -> Vec<Word> {
    let mut out = Vec::new();
    let mut start = None;
    for (i, c) in s.char_indices() {
        let sep = c.is_whitespace() || matches!(c, ',' | ';' | ':' | '(' | ')' | '[' | ']');
        match (sep, start) {
            (true, Some(st)) => {
                out.push(word_at(s, st, i));
                start = None;
            }
            (false, None) => start = Some(i),
            _ => {}
        }
    }
    if let Some(st) = start {
        out.push(word_at(s, st, s.len()));
    }
    out.retain(|w| !w.text.is_empty());
    out
}

fn word_at(s: &str, start: usize, end: usize) -> Word {
    let raw = &s[start..end];
    // Strip sentence punctuation but keep the dots of "b.d." and the slash of "s/c".
    let trimmed = if raw.starts_with("->") || raw.starts_with("-->") {
        raw
    } else {
        raw.trim_start_matches(['-', '*', '•', '"', '\'', '?'])
    };
    let lead = raw.len() - trimmed.len();
    let trimmed = trimmed.trim_end_matches(['"', '\'', '!', '?']);
    Word {
        start: start + lead,
        end: start + lead + trimmed.len(),
        text: trimmed.to_ascii_lowercase(),
    }
}

/// A frequency word: (normalised name, administrations per day).
/// The frequency `word` gives a dose, unless the next word makes it a monitoring plan
/// ("daily weights", "daily U&E": how often to check, not how often to give).
fn dosing_frequency(word: &Word, next: Option<&Word>) -> Option<(&'static str, Option<f64>)> {
    let next = next.map(|n| n.text.trim_end_matches(['.', ',']));
    if next.is_some_and(|n| MONITORING.contains(&n)) {
        return None;
    }
    frequency_of(&word.text)
}

fn frequency_of(word: &str) -> Option<(&'static str, Option<f64>)> {
    let w = word.trim_end_matches('.');
    let w = w.as_bytes();
    let plain: String = w
        .iter()
        .filter(|b| **b != b'.')
        .map(|b| *b as char)
        .collect();
    let f = match plain.as_str() {
        "od" => ("od", Some(1.0)),
        "daily" => ("daily", Some(1.0)),
        "qd" => ("qd", Some(1.0)),
        "om" => ("om", Some(1.0)),
        "mane" => ("mane", Some(1.0)),
        "qam" => ("qam", Some(1.0)),
        "nocte" => ("nocte", Some(1.0)),
        "qhs" => ("qhs", Some(1.0)),
        "qpm" => ("qpm", Some(1.0)),
        "q24h" => ("q24h", Some(1.0)),
        "bd" => ("bd", Some(2.0)),
        "bid" => ("bid", Some(2.0)),
        "q12h" => ("q12h", Some(2.0)),
        "tds" => ("tds", Some(3.0)),
        "tid" => ("tid", Some(3.0)),
        "q8h" => ("q8h", Some(3.0)),
        "qds" => ("qds", Some(4.0)),
        "qid" => ("qid", Some(4.0)),
        "q6h" => ("q6h", Some(4.0)),
        "q4h" => ("q4h", Some(6.0)),
        "stat" => ("stat", None),
        "once" => ("once", None),
        "prn" => ("prn", None),
        // "x1": one dose, US usage ("80 mg IV x1"; common practice, no source).
        "x1" | "×1" => ("once", None),
        "weekly" => ("weekly", Some(1.0 / 7.0)),
        "qod" => ("alternate days", Some(0.5)),
        "mon/wed/fri" | "m/w/f" => ("mon/wed/fri", Some(3.0 / 7.0)),
        _ => return None,
    };
    Some(f)
}

/// One automaton over [`FREQUENCY_PHRASES`], built once.
fn frequency_automaton() -> &'static aho_corasick::AhoCorasick {
    static AC: std::sync::OnceLock<aho_corasick::AhoCorasick> = std::sync::OnceLock::new();
    // The scope is lower case already, so matching ignoring ASCII case changes nothing.
    crate::text::phrase_automaton(&AC, FREQUENCY_PHRASES.iter().map(|f| f.0))
}

/// Multi-word frequencies, matched on the lower-case scope: (phrase, name, per day).
const FREQUENCY_PHRASES: &[(&str, &str, Option<f64>)] = &[
    ("once daily", "od", Some(1.0)),
    ("once a day", "od", Some(1.0)),
    ("once-daily", "od", Some(1.0)),
    ("every morning", "mane", Some(1.0)),
    ("in the morning", "mane", Some(1.0)),
    ("at night", "nocte", Some(1.0)),
    ("twice daily", "bd", Some(2.0)),
    ("twice a day", "bd", Some(2.0)),
    ("three times daily", "tds", Some(3.0)),
    ("three times a day", "tds", Some(3.0)),
    ("four times daily", "qds", Some(4.0)),
    ("four times a day", "qds", Some(4.0)),
    ("once weekly", "weekly", Some(1.0 / 7.0)),
    ("once a week", "weekly", Some(1.0 / 7.0)),
    ("three times a week", "mon/wed/fri", Some(3.0 / 7.0)),
    ("x3/week", "mon/wed/fri", Some(3.0 / 7.0)),
    ("alternate days", "alternate days", Some(0.5)),
    ("alt days", "alternate days", Some(0.5)),
    ("every other day", "alternate days", Some(0.5)),
    ("as required", "prn", None),
    ("as needed", "prn", None),
    ("when required", "prn", None),
    ("single dose", "once", None),
    ("one-off", "once", None),
    ("one off", "once", None),
];

/// The word that says a dose runs over 24 hours ("40 mg SC via syringe driver over 24h",
/// "60 mg/24h", "60 mg per 24 hours"): a continuous subcutaneous or intravenous infusion whose
/// daily dose is the amount written (domain reference 09-discharge-gdmt.md 9.3, CSCI).
fn over_a_day(seg: &[Word]) -> Option<usize> {
    let day = |w: &str| {
        matches!(
            w.trim_end_matches(['.', ',']),
            "24h" | "24hr" | "24hrs" | "24hours" | "24-hours" | "24-hour"
        )
    };
    seg.iter().enumerate().find_map(|(i, w)| {
        let t = w.text.as_str();
        if t.contains("/24") && !t.starts_with("q") {
            return Some(i);
        }
        if !matches!(t, "over" | "per" | "/" | "every") {
            return None;
        }
        let next = seg.get(i + 1)?.text.as_str();
        if day(next) {
            return Some(i + 1);
        }
        let unit = seg.get(i + 2).map(|w| w.text.trim_end_matches(['.', ',']));
        (next == "24" && matches!(unit, Some("h" | "hr" | "hrs" | "hours" | "hour")))
            .then_some(i + 2)
    })
}

/// Dose-time words of a split dose ("80 mg mane + 40 mg midday").
fn time_word(word: &str) -> Option<&'static str> {
    Some(match word.trim_end_matches('.') {
        "mane" | "om" | "morning" | "am" | "08:00" => "mane",
        "midday" | "lunchtime" | "noon" | "lunch" | "14:00" | "2pm" | "12:00" => "midday",
        "nocte" | "evening" | "pm" | "teatime" | "18:00" => "evening",
        _ => return None,
    })
}

/// A route word, normalised.
fn route_of(word: &str) -> Option<&'static str> {
    let plain: String = word
        .trim_end_matches('.')
        .chars()
        .filter(|c| *c != '.')
        .collect();
    Some(match plain.as_str() {
        "po" | "oral" | "orally" | "oral," => "PO",
        "iv" | "ivi" | "intravenous" | "intravenously" | "infusion" | "bolus" => "IV",
        "sc" | "s/c" | "sq" | "subcut" | "subcutaneous" | "subcutaneously" | "csci" => "SC",
        "im" => "IM",
        "sl" => "SL",
        "ng" => "NG",
        "peg" => "PEG",
        _ => return None,
    })
}

/// A unit as written → its normalised form (UCUM where UCUM has one).
fn unit_of(word: &str) -> Option<&'static str> {
    let w = word.trim_end_matches(['.', ',']);
    Some(match w {
        "mg" => "mg",
        "g" => "g",
        "mcg" | "microgram" | "micrograms" | "µg" | "μg" | "ug" => "ug",
        "mmol" => "mmol",
        "ml" | "millilitre" | "millilitres" | "milliliter" | "milliliters" => "mL",
        "tab" | "tabs" | "tablet" | "tablets" => "{tablet}",
        "cap" | "caps" | "capsule" | "capsules" => "{capsule}",
        "mg/h" | "mg/hr" | "mg/hour" | "mg/hrs" => "mg/h",
        // An amount over a day by syringe driver ("60 mg/24h"); see [`over_a_day`].
        "mg/24h" | "mg/24hr" | "mg/24hrs" | "mg/24hours" | "mg/24" => "mg",
        "mcg/h" | "ug/h" | "micrograms/h" | "microgram/h" => "ug/h",
        _ => return None,
    })
}

/// A number with a unit, read from the words of a scope.
#[derive(Debug, Clone)]
struct Dose {
    value: f64,
    /// Second number of a pair ("24/26 mg", "80/40 mg").
    pair: Option<f64>,
    unit: Option<&'static str>,
    /// Index of the word holding the number, and of the last word of the dose.
    first_word: usize,
    last_word: usize,
}

fn parse_number(s: &str) -> Option<f64> {
    if s.is_empty() || !s.chars().all(|c| c.is_ascii_digit() || c == '.') {
        return None;
    }
    let v: f64 = s.parse().ok()?;
    (v.is_finite() && v >= 0.0).then_some(v)
}

/// Split a word such as `80mg`, `2.5mg/h` or `24/26mg` into number(s) and unit.
fn split_dose_word(w: &str) -> Option<(f64, Option<f64>, Option<&'static str>)> {
    let w = w.trim_end_matches([',', '.']);
    // "80mg/40mg": two doses with the same unit in one word.
    if let Some((a, b)) = w.split_once('/') {
        if let (Some((x, None, Some(u1))), Some((y, None, Some(u2)))) =
            (split_dose_word(a), split_dose_word(b))
        {
            if u1 == u2 && !u1.ends_with("/h") {
                return Some((x, Some(y), Some(u1)));
            }
        }
    }
    let num_end = w
        .char_indices()
        .find(|(_, c)| !(c.is_ascii_digit() || *c == '.' || *c == '/'))
        .map(|(i, _)| i)
        .unwrap_or(w.len());
    let (num, rest) = w.split_at(num_end);
    let num = num.trim_end_matches('/');
    if num.is_empty() {
        return None;
    }
    let (a, b) = match num.split_once('/') {
        Some((a, b)) => (parse_number(a)?, Some(parse_number(b)?)),
        None => (parse_number(num)?, None),
    };
    if rest.is_empty() {
        return Some((a, b, None));
    }
    let unit = unit_of(rest)?;
    Some((a, b, Some(unit)))
}

fn doses(ws: &[Word]) -> Vec<Dose> {
    let mut out = Vec::new();
    let mut i = 0;
    while i < ws.len() {
        let w = &ws[i].text;
        // Times (10:30), durations ("x 2 days") and counts of days are not doses.
        let prev = i.checked_sub(1).map(|p| ws[p].text.as_str());
        let skip_prev = matches!(
            prev,
            Some("x" | "×" | "for" | "over" | "since" | "at" | "day")
        );
        if skip_prev || w.contains(':') {
            i += 1;
            continue;
        }
        if let Some((value, pair, mut unit)) = split_dose_word(w) {
            let mut last = i;
            if unit.is_none() {
                if let Some(next) = ws.get(i + 1) {
                    if let Some(u) = unit_of(&next.text) {
                        unit = Some(u);
                        last = i + 1;
                        // "20 mg / h", "20 mg /h"
                        if u == "mg" {
                            if let Some(n2) = ws.get(i + 2) {
                                if matches!(n2.text.as_str(), "/h" | "/hr" | "/hour") {
                                    unit = Some("mg/h");
                                    last = i + 2;
                                } else if n2.text == "/"
                                    && ws.get(i + 3).is_some_and(|h| {
                                        matches!(h.text.as_str(), "h" | "hr" | "hour")
                                    })
                                {
                                    unit = Some("mg/h");
                                    last = i + 3;
                                }
                            }
                        }
                    }
                }
            }
            let next = ws.get(last + 1).map(|w| w.text.as_str());
            let duration = matches!(
                next,
                Some(
                    "days"
                        | "day"
                        | "weeks"
                        | "week"
                        | "h"
                        | "hrs"
                        | "hours"
                        | "hour"
                        | "%"
                        | "kg"
                        | "l"
                        | "mmol/l"
                )
            );
            if !(unit.is_none() && duration) {
                out.push(Dose {
                    value,
                    pair,
                    unit,
                    first_word: i,
                    last_word: last,
                });
            }
            i = last + 1;
            continue;
        }
        i += 1;
    }
    out
}

/// The change a verb or phrase says.
fn change_of(word: &str, next: Option<&str>) -> Option<MedChange> {
    use MedChange::*;
    let w = word.trim_end_matches(['.', ',']);
    Some(match w {
        "start" | "started" | "starting" | "commence" | "commenced" | "commencing" | "new"
        | "add" | "added" | "adding" | "initiate" | "initiated" | "restart" | "restarted"
        | "re-start" | "re-started" | "begin" | "began" | "introduce" | "introduced" => Started,
        "stop" | "stopped" | "stopping" | "discontinue" | "discontinued" | "cease" | "ceased"
        | "d/c" | "d/c'd" => Stopped,
        "hold" | "held" | "holding" | "withhold" | "withheld" | "withholding" | "omit"
        | "omitted" | "suspend" | "suspended" | "pause" | "paused" => Held,
        "increase" | "increased" | "increasing" | "uptitrate" | "uptitrated" | "up-titrate"
        | "up-titrated" | "uptitrating" | "double" | "doubled" | "↑" => Increased,
        "reduce" | "reduced" | "reducing" | "decrease" | "decreased" | "halve" | "halved"
        | "wean" | "weaned" | "down-titrate" | "down-titrated" | "lower" | "lowered" | "↓" => {
            Reduced
        }
        "switch" | "switched" | "switching" | "convert" | "converted" | "change" | "changed" => {
            // "switch to X" opens X; "X switched" closes X.
            if next == Some("to") {
                Started
            } else {
                Switched
            }
        }
        "continue" | "continued" | "continuing" | "cont" | "cont'd" | "contd" | "keep" | "kept"
        | "maintain" | "maintained" | "unchanged" | "running" | "remains" => Continued,
        _ => return None,
    })
}

const NEGATION_HEAD: &[&str] = &[
    "no",
    "not",
    "nil",
    "never",
    "without",
    "avoid",
    "off",
    "declined",
    "intolerant",
    "allergic",
    "contraindicated",
    "ci",
];

const NEGATION_TAIL: &[&str] = &[
    "not tolerated",
    "not started",
    "not given",
    "not prescribed",
    "not needed",
    "not indicated",
    "contraindicated",
    "declined",
    "intolerant",
    "not on",
    ": no",
    "- no",
    "no longer",
];

/// Nouns of a monitoring plan, for [`dosing_frequency`] (common practice, no source).
const MONITORING: &[&str] = &[
    "weight",
    "weights",
    "wt",
    "wts",
    "weighing",
    "bloods",
    "u&e",
    "u&es",
    "ue",
    "ues",
    "renal",
    "electrolytes",
    "lytes",
    "bmp",
    "labs",
    "obs",
    "observations",
    "vitals",
    "ecg",
    "review",
    "fluid",
    "fluids",
    "input",
    "i/o",
    "balance",
    "monitoring",
    "check",
    "checks",
];

const HYPOTHETICAL: &[&str] = &[
    "if",
    "consider",
    "considering",
    "may",
    "might",
    "could",
    "would",
    "should",
    "when",
    "unless",
    "aim",
    "option",
];

/// Conditions that can reach back over a comma to the action before them ("restart
/// furosemide 20 mg od tomorrow, if Cr improving"). Other hypothetical words ("aim",
/// "consider", "may") after a break open a clause of their own.
const BACKWARD_CONDITIONS: &[&str] = &["if", "unless", "when", "provided", "providing"];

/// Words that open a condition over the rest of the clause when they come before a comma:
/// "If K <3.0 on recheck, d/w reg re holding diuretics" (ConText forward triggers, Harkema et
/// al. 2009).
const FORWARD_CONDITIONS: &[&str] = &["if", "unless", "should", "provided", "providing"];

/// Words that add nothing to an action between a break and a condition ("then only if").
const FILLERS: &[&str] = &["only", "and", "then", "just", "even", "but", "or", "so"];

/// Where a condition in the tail stops reaching the mention: the byte offset in `tail` of
/// the last break (` then `, ` - `, `,`, ` and `, ` as `, `because`) before the first
/// hypothetical word, when another action stands between that break and the condition
/// ("80 mg mane for 3 days then back to 40 mg if weight <79 kg", "20 mg od - he takes an
/// extra 20 mg if his weight goes up", "x1 given 03:10, repeat in 2h if UOP <200"), or when
/// the condition has a consequent of its own ("40 mg od, if weight up increase to 80 mg").
/// `None` when the condition governs the whole mention ("restart 20 mg od tomorrow if Cr
/// improving") or there is none. The scope of a condition runs from its trigger, as in
/// ConText (Harkema et al. 2009), not over the whole mention.
fn condition_cut(tail: &str, ws: &[Word]) -> Option<usize> {
    let bare = |w: &Word| w.text.trim_end_matches(['.', ',']).to_string();
    let h = ws
        .iter()
        .position(|w| HYPOTHETICAL.contains(&bare(w).as_str()))?;
    let h_start = ws[h].start;
    let lower = tail.to_ascii_lowercase();
    let before = &lower[..h_start];
    let mut cut: Option<usize> = None;
    for brk in [
        " then ",
        " - ",
        " – ",
        " — ",
        ",",
        " and ",
        " as ",
        " because ",
        " since ",
        " but ",
        " so ",
        " whilst ",
        " while ",
    ] {
        if let Some(p) = before.rfind(brk) {
            if cut.is_none_or(|c| p > c) {
                cut = Some(p);
            }
        }
    }
    let cut = cut?;
    // Nothing of the dose before the break: the mention's own words start after it.
    if ws.iter().all(|w| w.start >= cut) {
        return None;
    }
    let between: Vec<&Word> = ws
        .iter()
        .filter(|w| w.start > cut && w.start < h_start)
        .filter(|w| !FILLERS.contains(&bare(w).as_str()))
        .collect();
    let after = &ws[h + 1..];
    let consequent = after.iter().enumerate().any(|(i, w)| {
        change_of(&w.text, after.get(i + 1).map(|n| n.text.as_str())).is_some()
            || split_dose_word(&w.text).is_some_and(|(_, _, u)| u.is_some())
    });
    let backward = BACKWARD_CONDITIONS.contains(&bare(&ws[h]).as_str());
    (!between.is_empty() || consequent || !backward).then_some(cut)
}

fn parse_mention(text: &str, m: &Mention) -> Parsed {
    let head_raw = &text[m.head_start..m.hit.start];
    let tail_start = m.hit.end;
    let mut tail_end = m.tail_end.max(tail_start);
    {
        let (main, _) = split_brackets(&text[tail_start..tail_end]);
        if let Some(cut) = condition_cut(&main, &words(&main)) {
            tail_end = text.floor_char_boundary(tail_start + cut).max(tail_start);
        }
    }
    let tail_raw = &text[tail_start..tail_end];
    let (head_main, _) = split_brackets(head_raw);
    let (tail_main, tail_inner) = split_brackets(tail_raw);
    let head = words(&head_main);
    let tail = words(&tail_main);

    let mut p = Parsed {
        dose: None,
        unit: None,
        route: None,
        frequency: None,
        per_day: None,
        daily_dose: None,
        change: None,
        change_from: From::Other,
        starts: None,
        assertion: Assertion::Present,
        assertion_from: From::Other,
        note: None,
        span_start: m.hit.start,
        span_end: m.hit.end,
    };
    let touch_head = |p: &mut Parsed, w: &Word| {
        p.span_start = p.span_start.min(m.head_start + w.start);
    };

    // Head: the nearest change verb, route, negation and conditions.
    for (i, w) in head.iter().enumerate().rev() {
        let next = head.get(i + 1).map(|n| n.text.as_str());
        if p.change.is_none() {
            if let Some(c) = change_of(&w.text, next) {
                p.change = Some(c);
                p.change_from = From::Head;
                touch_head(&mut p, w);
            }
        }
        if p.route.is_none() {
            if let Some(r) = route_of(&w.text) {
                p.route = Some(r);
                touch_head(&mut p, w);
            }
        }
    }
    // "no change to furosemide" continues it; "no longer on" stops it.
    let head_lower = head_main.to_lowercase();
    if head_lower.contains("no change") || head_lower.contains("no changes") {
        p.change = Some(MedChange::Continued);
        p.change_from = From::Head;
    } else if head_lower.contains("no longer") {
        p.change = Some(MedChange::Stopped);
        p.change_from = From::Head;
    } else {
        // NegEx-style window: a negation cue within five words before the name.
        let n = head.len();
        for (i, w) in head.iter().enumerate().rev() {
            if n - i > 6 {
                break;
            }
            let word = w.text.trim_end_matches(['.', ',']);
            if NEGATION_HEAD.contains(&word) {
                p.assertion = Assertion::Absent;
                p.assertion_from = From::Head;
                touch_head(&mut p, w);
                break;
            }
        }
    }
    // A condition before a comma of the same clause reaches the first mention after it
    // ("If K <3.0 on recheck, d/w reg re holding diuretics").
    let opened_before = m.joined_by == Join::None
        && m.clause_start < m.head_start
        && words(&split_brackets(&text[m.clause_start..m.head_start]).0)
            .iter()
            .any(|w| FORWARD_CONDITIONS.contains(&w.text.trim_end_matches(['.', ','])));
    if opened_before
        || head
            .iter()
            .any(|w| HYPOTHETICAL.contains(&w.text.trim_end_matches(['.', ','])))
    {
        p.assertion = Assertion::Hypothetical;
        p.assertion_from = From::Head;
    } else if head_main.trim_end().ends_with('?')
        || head_main
            .split_whitespace()
            .last()
            .is_some_and(|w| w.starts_with('?'))
    {
        p.assertion = Assertion::Possible;
        p.assertion_from = From::Head;
    }

    // Tail: doses, split at arrows ("2.5 mg od -> 3.75 mg od", "from 40 to 80 mg").
    let mut segments: Vec<Vec<Word>> = vec![Vec::new()];
    for (i, w) in tail.iter().enumerate() {
        let is_arrow = matches!(w.text.as_str(), "->" | "→" | "=>" | "-->")
            || (w.text == "to"
                && tail
                    .get(i + 1)
                    .is_some_and(|n| n.text.starts_with(|c: char| c.is_ascii_digit())));
        if is_arrow {
            segments.push(Vec::new());
        } else if let Some((a, b)) = w.text.split_once("->").or_else(|| w.text.split_once('→')) {
            // "80mg->40mg" written without spaces.
            let arrow_len = if w.text.contains("->") {
                2
            } else {
                '→'.len_utf8()
            };
            if !a.is_empty() {
                segments.last_mut().expect("one segment").push(Word {
                    start: w.start,
                    end: w.start + a.len(),
                    text: a.to_string(),
                });
            }
            segments.push(Vec::new());
            if !b.is_empty() {
                let s = w.start + a.len() + arrow_len;
                segments.last_mut().expect("one segment").push(Word {
                    start: s,
                    end: w.end,
                    text: b.to_string(),
                });
            }
        } else {
            segments.last_mut().expect("one segment").push(w.clone());
        }
    }
    let trailing_arrow = segments.len() > 1 && segments.last().is_some_and(|s| s.is_empty());

    let mut seg_doses: Vec<(usize, Vec<Dose>)> = Vec::new();
    for (si, seg) in segments.iter().enumerate() {
        let mut ds = doses(seg);
        // A number without a unit counts only right after the name (or an arrow), or
        // right before a frequency word: "frusemide 40 od".
        ds.retain(|d| {
            d.unit.is_some()
                || seg[..d.first_word]
                    .iter()
                    .all(|w| route_of(&w.text).is_some() || w.text == "infusion")
                || seg
                    .get(d.last_word + 1)
                    .is_some_and(|n| frequency_of(&n.text).is_some())
        });
        if !ds.is_empty() {
            seg_doses.push((si, ds));
        }
    }
    let mark = |p: &mut Parsed, w: &Word| {
        p.span_end = p.span_end.max(tail_start + w.end);
    };

    // Frequencies and routes, per segment.
    let freq_in = |seg: &[Word]| -> Option<(usize, String, Option<f64>)> {
        let lower: String = seg
            .iter()
            .map(|w| w.text.as_str())
            .collect::<Vec<_>>()
            .join(" ");
        // The first phrase of the list that occurs, at its first occurrence.
        let first = frequency_automaton()
            .find_overlapping_iter(&lower)
            .map(|m| (m.pattern().as_usize(), m.start()))
            .min();
        if let Some((pi, pos)) = first {
            let (phrase, name, per_day) = &FREQUENCY_PHRASES[pi];
            {
                // Find the word index holding the end of the phrase.
                let end = pos + phrase.len();
                let mut acc = 0;
                let mut idx = 0;
                for (i, w) in seg.iter().enumerate() {
                    acc += w.text.len() + usize::from(i > 0);
                    idx = i;
                    if acc >= end {
                        break;
                    }
                }
                return Some((idx, (*name).to_string(), *per_day));
            }
        }
        seg.iter().enumerate().find_map(|(i, w)| {
            dosing_frequency(w, seg.get(i + 1)).map(|(n, pd)| (i, n.to_string(), pd))
        })
    };

    let current_seg = seg_doses.last().map(|(si, _)| *si);
    let mut previous_daily: Option<f64> = None;
    if let Some(cs) = current_seg {
        let seg = &segments[cs];
        let ds = &seg_doses.last().expect("current").1;
        let freq = freq_in(seg).or_else(|| {
            segments
                .iter()
                .rev()
                .filter(|s| !s.is_empty())
                .find_map(|s| freq_in(s))
        });
        for w in seg.iter().chain(segments.iter().flatten()) {
            if p.route.is_none() {
                if let Some(r) = route_of(&w.text) {
                    p.route = Some(r);
                    mark(&mut p, w);
                }
            }
        }
        let is_combination = compiled().terms[m.hit.term]
            .generic
            .as_deref()
            .is_some_and(|g| g.contains('/'));
        let d0 = &ds[0];
        mark(&mut p, &seg[d0.last_word]);
        let split_parts: Vec<&Dose> = split_doses(seg, ds);
        let infusion = seg
            .iter()
            .any(|w| matches!(w.text.as_str(), "infusion" | "ivi" | "csci"));
        if d0.unit == Some("mg/h") || d0.unit == Some("ug/h") {
            p.dose = Some(d0.value);
            p.unit = d0.unit;
            p.frequency = Some("continuous".into());
            p.per_day = Some(24.0);
            p.daily_dose = Some(d0.value * 24.0);
            let base = if d0.unit == Some("mg/h") { "mg" } else { "ug" };
            p.note = Some(format!(
                "infusion rate {} {}/h; daily dose is the rate × 24 h ({} {base}/day) if it runs all day",
                fmt_num(d0.value),
                base,
                fmt_num(d0.value * 24.0)
            ));
            if p.route.is_none() {
                p.route = Some("IV");
            }
        } else if split_parts.len() > 1 {
            let total: f64 = split_parts.iter().map(|d| d.value).sum();
            p.dose = Some(split_parts[0].value);
            p.unit = split_parts[0].unit.or(split_parts[1].unit);
            p.per_day = Some(split_parts.len() as f64);
            p.daily_dose = Some(total);
            let times: Vec<&str> = split_parts
                .iter()
                .filter_map(|d| seg.get(d.last_word + 1).and_then(|w| time_word(&w.text)))
                .collect();
            p.frequency = Some(if times.len() == split_parts.len() {
                times.join(" + ")
            } else {
                "split".into()
            });
            let parts: Vec<String> = split_parts.iter().map(|d| fmt_num(d.value)).collect();
            p.note = Some(format!(
                "split dose {} {} a day (total {})",
                parts.join(" + "),
                p.unit.map(unit_label).unwrap_or(""),
                fmt_num(total)
            ));
            let last = split_parts.last().expect("two parts");
            mark(&mut p, &seg[last.last_word]);
            if let Some(w) = seg.get(last.last_word + 1) {
                if time_word(&w.text).is_some() {
                    mark(&mut p, w);
                }
            }
        } else if let (Some(b), true) = (d0.pair, is_combination) {
            let total = d0.value + b;
            p.dose = Some(total);
            p.unit = d0.unit;
            p.note = Some(format!(
                "combination dose {}/{} {} (total {} per dose)",
                fmt_num(d0.value),
                fmt_num(b),
                d0.unit.map(unit_label).unwrap_or(""),
                fmt_num(total)
            ));
            apply_frequency(&mut p, freq.as_ref());
        } else if let Some(b) = d0.pair {
            // "furosemide 80/40 mg": a morning and a midday dose.
            p.dose = Some(d0.value);
            p.unit = d0.unit;
            p.per_day = Some(2.0);
            p.daily_dose = Some(d0.value + b);
            p.frequency = Some("split".into());
            p.note = Some(format!(
                "split dose {} + {} {} a day (total {})",
                fmt_num(d0.value),
                fmt_num(b),
                d0.unit.map(unit_label).unwrap_or(""),
                fmt_num(d0.value + b)
            ));
        } else {
            p.dose = Some(d0.value);
            p.unit = d0.unit;
            apply_frequency(&mut p, freq.as_ref());
        }
        if p.frequency.is_none() && p.unit == Some("mg") {
            if let Some(wi) = over_a_day(seg) {
                let d = p.dose.unwrap_or(0.0);
                p.frequency = Some("over 24 h".into());
                p.per_day = Some(1.0);
                p.daily_dose = p.dose;
                p.note = Some(format!(
                    "{} mg over 24 h by continuous infusion",
                    fmt_num(d)
                ));
                mark(&mut p, &seg[wi]);
            }
        }
        if infusion && p.frequency.is_none() {
            p.frequency = Some("continuous".into());
        }
        if let Some((fi, _, _)) = freq_in(seg) {
            mark(&mut p, &seg[fi]);
        }
        if p.unit.is_none() && p.dose.is_some() {
            let n = "unit not written";
            p.note = Some(match p.note.take() {
                Some(prev) => format!("{prev}; {n}"),
                None => n.into(),
            });
        }
        // The dose before an arrow, to tell an increase from a reduction.
        if seg_doses.len() > 1 {
            let (psi, pds) = &seg_doses[seg_doses.len() - 2];
            let pseg = &segments[*psi];
            let pf = freq_in(pseg).map(|f| f.2).unwrap_or(
                p.per_day
                    .filter(|_| p.frequency.as_deref() != Some("continuous")),
            );
            let pd = &pds[0];
            let per = pf.unwrap_or(1.0);
            previous_daily = Some(match pd.unit {
                Some("mg/h") | Some("ug/h") => pd.value * 24.0,
                _ => pd.value * per,
            });
        }
    } else {
        // No dose: still read a route and frequency ("furosemide infusion", "bisoprolol od").
        let all: Vec<&Word> = segments.iter().flatten().collect();
        for (i, w) in all.iter().enumerate() {
            if p.route.is_none() {
                if let Some(r) = route_of(&w.text) {
                    p.route = Some(r);
                    mark(&mut p, w);
                }
            }
            if p.frequency.is_none() {
                if let Some((n, pd)) = dosing_frequency(w, all.get(i + 1).copied()) {
                    p.frequency = Some(n.into());
                    p.per_day = pd;
                    mark(&mut p, w);
                }
            }
        }
        if let Some(seg) = segments.first() {
            if let Some((fi, name, pd)) = freq_in(seg) {
                if p.frequency.is_none() {
                    p.frequency = Some(name);
                    p.per_day = pd;
                }
                mark(&mut p, &seg[fi]);
            }
        }
        if p.route == Some("IV")
            && segments
                .iter()
                .flatten()
                .any(|w| matches!(w.text.as_str(), "infusion" | "ivi"))
        {
            p.frequency.get_or_insert_with(|| "continuous".into());
        }
    }

    // Tail words: change verbs, negation, conditions.
    let tail_lower = tail_main.to_ascii_lowercase();
    if p.change.is_none() {
        for (i, w) in tail.iter().enumerate() {
            let next = tail.get(i + 1).map(|n| n.text.as_str());
            if let Some(c) = change_of(&w.text, next) {
                // "X ... then switched to oral": X is the regime that was replaced. A bare
                // "switch to" with nothing after it belongs to the next drug.
                let c = if c == MedChange::Started
                    && matches!(
                        w.text.as_str(),
                        "switch" | "switched" | "change" | "changed" | "convert" | "converted"
                    ) {
                    if matches!(w.text.as_str(), "switch" | "change" | "convert")
                        && i + 2 >= tail.len()
                    {
                        continue;
                    }
                    MedChange::Switched
                } else {
                    c
                };
                p.change = Some(c);
                p.change_from = From::Tail;
                mark(&mut p, w);
                break;
            }
        }
    }
    if tail_lower.contains("no change") {
        p.change = Some(MedChange::Continued);
        p.change_from = From::Tail;
    } else if p.assertion == Assertion::Present {
        for cue in NEGATION_TAIL {
            if let Some(pos) = tail_lower.find(cue) {
                // Only near the name: within the first few words of the tail.
                let before = &tail_lower[..pos];
                if before.split_whitespace().count() <= 4 {
                    p.assertion = Assertion::Absent;
                    p.assertion_from = From::Tail;
                    p.span_end = p.span_end.max(tail_start + pos + cue.len());
                    break;
                }
            }
        }
    }
    if p.assertion == Assertion::Present
        && tail
            .iter()
            .any(|w| HYPOTHETICAL.contains(&w.text.trim_end_matches(['.', ','])))
    {
        p.assertion = Assertion::Hypothetical;
        p.assertion_from = From::Tail;
    }

    // Arrows: a changed dose, or a regime replaced by the next mention.
    if p.change.is_none() {
        if let (Some(prev), Some(now)) = (previous_daily, p.daily_dose.or(p.dose)) {
            p.change = Some(compare(prev, now));
            p.change_from = From::Tail;
        } else if trailing_arrow || m.followed_by == Join::Arrow {
            p.change = Some(MedChange::Switched);
            p.change_from = From::Other;
        }
    }
    // "consider digoxin": with no other verb in the head, a start is what is considered
    // ("consider digoxin if HR remains >110": "remains" is the heart rate's, not the drug's).
    if (p.change.is_none() || p.change_from != From::Head)
        && head
            .iter()
            .any(|w| matches!(w.text.as_str(), "consider" | "considering"))
    {
        p.change = Some(MedChange::Started);
        p.change_from = From::Head;
    }
    // A change written for a later day, in the head or the mention's own words.
    p.starts = future_start(&tail[..own_part(&tail, &tail_main)]).or_else(|| future_start(&head));
    // Bracketed words decide only when nothing else did: "(increased from 20 mg)".
    if p.change.is_none() {
        let inner = words(&tail_inner);
        for (i, w) in inner.iter().enumerate() {
            if let Some(c) = change_of(&w.text, inner.get(i + 1).map(|n| n.text.as_str())) {
                p.change = Some(c);
                p.change_from = From::Other;
                break;
            }
        }
    }
    p
}

fn apply_frequency(p: &mut Parsed, freq: Option<&(usize, String, Option<f64>)>) {
    if let Some((_, name, per_day)) = freq {
        p.frequency = Some(name.clone());
        p.per_day = *per_day;
        match (name.as_str(), p.dose) {
            ("stat" | "once", Some(d)) => {
                p.daily_dose = Some(d);
                p.note = Some("single dose".into());
            }
            (_, Some(d)) => {
                p.daily_dose = per_day.map(|n| d * n);
                if per_day.is_some_and(|n| n < 1.0) {
                    p.note = Some(format!("{name}: daily dose is the average over a week"));
                }
            }
            _ => {}
        }
    }
}

fn compare(prev: f64, now: f64) -> MedChange {
    if now > prev + 1e-9 {
        MedChange::Increased
    } else if now + 1e-9 < prev {
        MedChange::Reduced
    } else {
        MedChange::Switched
    }
}

/// Doses of one segment that form a split dose: two or more with a unit, joined by `/`,
/// `+` or `and`, optionally each followed by a dose time.
fn split_doses<'a>(seg: &[Word], ds: &'a [Dose]) -> Vec<&'a Dose> {
    let mut parts: Vec<&Dose> = Vec::new();
    for d in ds {
        if d.unit.is_none() || d.pair.is_some() {
            break;
        }
        if let Some(prev) = parts.last() {
            let between: Vec<&str> = seg[prev.last_word + 1..d.first_word]
                .iter()
                .map(|w| w.text.as_str())
                .collect();
            let ok = between
                .iter()
                .all(|w| matches!(*w, "/" | "+" | "and" | "&") || time_word(w).is_some())
                && between
                    .iter()
                    .any(|w| matches!(*w, "/" | "+" | "and" | "&"))
                || (between.is_empty() && seg[prev.last_word].text.ends_with('/'));
            if !ok || prev.unit != d.unit {
                break;
            }
        }
        parts.push(d);
    }
    parts
}

/// Copy a shared verb or negation along a list ("hold X and Y", "X, Y and Z continue"), and
/// a later day along a list or a switch ("switch A to B from tomorrow": A stays today).
fn propagate(mentions: &[Mention], parsed: &mut [Parsed]) {
    for i in 1..parsed.len() {
        if !matches!(mentions[i].joined_by, Join::List | Join::Arrow) {
            continue;
        }
        if parsed[i].starts.is_none() {
            parsed[i].starts = parsed[i - 1].starts.clone();
        }
    }
    for i in (1..parsed.len()).rev() {
        if !matches!(mentions[i].joined_by, Join::List | Join::Arrow) {
            continue;
        }
        if parsed[i - 1].starts.is_none() {
            parsed[i - 1].starts = parsed[i].starts.clone();
        }
    }
    for i in 1..parsed.len() {
        if mentions[i].joined_by != Join::List {
            continue;
        }
        let (before, after) = parsed.split_at_mut(i);
        let prev = &before[i - 1];
        let cur = &mut after[0];
        if cur.change.is_none() && matches!(prev.change_from, From::Head) {
            cur.change = prev.change;
            cur.change_from = From::Head;
        }
        if cur.assertion == Assertion::Present && prev.assertion_from == From::Head {
            cur.assertion = prev.assertion;
            cur.assertion_from = From::Head;
        }
    }
    for i in (1..parsed.len()).rev() {
        if mentions[i].joined_by != Join::List {
            continue;
        }
        let (before, after) = parsed.split_at_mut(i);
        let cur = &after[0];
        let prev = &mut before[i - 1];
        if prev.change.is_none() && cur.change_from == From::Tail && cur.change.is_some() {
            prev.change = cur.change;
            prev.change_from = From::Tail;
        }
        if prev.assertion == Assertion::Present
            && cur.assertion_from == From::Tail
            && cur.assertion != Assertion::Present
        {
            prev.assertion = cur.assertion;
            prev.assertion_from = From::Tail;
        }
    }
}

/// The regime after an arrow ("X 80 mg bd -> X infusion 20 mg/h", "X -> Y"): the same drug
/// is increased or reduced by its daily dose; another drug is started.
fn follow_arrows(mentions: &[Mention], parsed: &mut [Parsed]) {
    let terms = &compiled().terms;
    for i in 1..parsed.len() {
        if mentions[i].joined_by != Join::Arrow || parsed[i].change.is_some() {
            continue;
        }
        let same = terms[mentions[i].hit.term].generic == terms[mentions[i - 1].hit.term].generic;
        let (before, after) = parsed.split_at_mut(i);
        let prev = &before[i - 1];
        let cur = &mut after[0];
        let amount = |p: &Parsed| p.daily_dose.or(p.dose);
        cur.change = if !same {
            Some(MedChange::Started)
        } else {
            match (amount(prev), amount(cur)) {
                (Some(a), Some(b)) => Some(compare(a, b)),
                _ => None,
            }
        };
        cur.change_from = From::Other;
    }
}

/// A unit for humans (`ug` → `micrograms`, `{tablet}` → `tablets`).
pub fn unit_label(unit: &str) -> &str {
    match unit {
        "ug" => "micrograms",
        "ug/h" => "micrograms/h",
        "{tablet}" => "tablets",
        "{capsule}" => "capsules",
        u => u,
    }
}

/// A number without a needless `.0`.
pub fn fmt_num(v: f64) -> String {
    if (v - v.round()).abs() < 1e-9 {
        format!("{}", v.round() as i64)
    } else {
        let s = format!("{v:.3}");
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::SectionKind;

    fn meds(text: &str) -> Vec<Medication> {
        let idx = LineIndex::new(text);
        let sections = crate::text::sections::find(text, &idx);
        medications(text, &sections)
    }

    fn one(text: &str) -> Medication {
        let m = meds(text);
        assert_eq!(m.len(), 1, "{text}: {m:#?}");
        m.into_iter().next().expect("one")
    }

    #[test]
    fn a_change_for_a_later_day_carries_its_day() {
        // Common practice, no source: a day after the change, or before it, schedules it;
        // a day in a monitoring plan after a comma does not.
        for (text, want) in [
            (
                "Start spironolactone 12.5 mg od from Monday",
                Some("Monday"),
            ),
            ("Restart furosemide 20 mg od tomorrow", Some("tomorrow")),
            ("From tomorrow: furosemide 40 mg PO od", Some("tomorrow")),
            (
                "Reduce furosemide to 40 mg od starting 02/12",
                Some("02/12"),
            ),
            (
                "Increase bisoprolol to 5 mg od next week",
                Some("next week"),
            ),
            ("Continue bisoprolol 2.5 mg od, recheck U&E tomorrow", None),
            ("Furosemide 40 mg IV bd, review tomorrow", None),
            ("Furosemide 40 mg IV bd", None),
        ] {
            assert_eq!(one(text).starts.as_deref(), want, "{text}");
        }
    }

    #[test]
    fn switch_a_to_b_is_a_replacement() {
        // Common practice, no source: "switch A to B" replaces A by B as an arrow does, and
        // the later day reaches both; "add A to B" joins nothing.
        let m = meds("Switch IV furosemide 40mg bd to PO furosemide 40mg od from tomorrow");
        assert_eq!(m.len(), 2, "{m:#?}");
        assert_eq!(m[0].change, Some(MedChange::Switched));
        assert_eq!(m[0].route.as_deref(), Some("IV"));
        assert_eq!(m[1].route.as_deref(), Some("PO"));
        assert_eq!(m[1].daily_dose, Some(40.0));
        assert!(
            m.iter().all(|x| x.starts.as_deref() == Some("tomorrow")),
            "{m:#?}"
        );
        let m = meds("Change ramipril 2.5 mg bd to sacubitril/valsartan 24/26 mg bd");
        assert_eq!(m[1].change, Some(MedChange::Started), "{m:#?}");
        let m = meds("Add spironolactone 25 mg od to furosemide");
        assert_eq!(m[0].change, Some(MedChange::Started));
        assert_ne!(m[1].change, Some(MedChange::Started), "{m:#?}");
    }

    #[test]
    fn lexicon_parses_and_maps_spellings_to_one_generic() {
        let terms = parse_drugs(DRUGS).expect("drugs.tsv parses");
        assert!(terms.len() > 60);
        // Spelling variants (tidemark domain reference 09-discharge-gdmt.md 9.2: INN / US
        // adopted name / former British name).
        for (written, generic) in [
            ("frusemide", "furosemide"),
            ("torsemide", "torasemide"),
            ("chlorthalidone", "chlortalidone"),
            ("ethacrynic acid", "etacrynic acid"),
            ("bendrofluazide", "bendroflumethiazide"),
            ("sacubitril-valsartan", "sacubitril/valsartan"),
        ] {
            assert_eq!(
                lookup(written).and_then(|l| l.0),
                Some(generic),
                "{written}"
            );
        }
        assert!(parse_drugs("x\ty\tnot_a_class\n").is_err());
        assert!(parse_drugs("only two\tcolumns\n").is_err());
    }

    #[test]
    fn every_class_is_recognised() {
        // Class membership after the 2022 AHA/ACC/HFSA GDMT table and the ACC/AHA 2005
        // diuretic tables as summarised in 09-discharge-gdmt.md 9.2.
        use DrugClass::*;
        let cases = [
            ("furosemide 40 mg od", LoopDiuretic),
            ("bumetanide 1 mg om", LoopDiuretic),
            ("torasemide 10 mg od", LoopDiuretic),
            ("metolazone 2.5 mg mon/wed/fri", ThiazideDiuretic),
            ("bendroflumethiazide 2.5 mg od", ThiazideDiuretic),
            ("hydrochlorothiazide 25 mg od", ThiazideDiuretic),
            ("chlortalidone 12.5 mg od", ThiazideDiuretic),
            ("spironolactone 25 mg od", Mra),
            ("eplerenone 25 mg od", Mra),
            ("ramipril 2.5 mg bd", AceInhibitor),
            ("lisinopril 5 mg qd", AceInhibitor),
            ("enalapril 2.5 mg bid", AceInhibitor),
            ("perindopril 2 mg od", AceInhibitor),
            ("candesartan 4 mg od", Arb),
            ("losartan 25 mg od", Arb),
            ("valsartan 40 mg bd", Arb),
            ("sacubitril/valsartan 49/51 mg bd", Arni),
            ("bisoprolol 1.25 mg od", BetaBlocker),
            ("carvedilol 3.125 mg BID", BetaBlocker),
            ("metoprolol succinate 25 mg daily", BetaBlocker),
            ("nebivolol 1.25 mg od", BetaBlocker),
            ("dapagliflozin 10 mg od", Sglt2Inhibitor),
            ("empagliflozin 10 mg od", Sglt2Inhibitor),
            ("digoxin 62.5 micrograms od", Digoxin),
            ("apixaban 5 mg bd", Anticoagulant),
            ("rivaroxaban 20 mg od", Anticoagulant),
            ("edoxaban 60 mg od", Anticoagulant),
            ("dabigatran 150 mg bd", Anticoagulant),
            ("warfarin 3 mg od", Anticoagulant),
            ("potassium chloride 2 tablets bd", PotassiumSupplement),
            ("ivabradine 5 mg bd", Other),
            ("metoprolol tartrate 25 mg bd", Other),
        ];
        for (text, class) in cases {
            let m = one(text);
            assert_eq!(m.class, class, "{text}");
            assert_eq!(m.assertion, Assertion::Present, "{text}");
            assert!(m.dose.is_some(), "{text}");
        }
    }

    #[test]
    fn shortened_generic_names() {
        // Typed short forms of generic names (common practice, no source; "IV furo 80 bd" is
        // a handover form in the domain reference 03-note-language.md 3.10). Brands never.
        for (text, drug) in [
            ("IV furo 80 bd", "furosemide"),
            ("furo 40 IV od", "furosemide"),
            ("Furo 40mg PO om", "furosemide"),
            ("spiro 25 od", "spironolactone"),
            ("HCTZ 25 mg daily", "hydrochlorothiazide"),
            ("sac/val 24/26 mg bd", "sacubitril/valsartan"),
            ("TMP-SMX DS 1 tab BID", "co-trimoxazole"),
            ("trimethoprim 200mg BD", "trimethoprim"),
        ] {
            let m = one(text);
            assert_eq!(m.drug, drug, "{text}");
            assert!(m.dose.is_some(), "{text}");
        }
        let m = one("IV furo 80 bd");
        assert_eq!(
            (m.route.as_deref(), m.daily_dose),
            (Some("IV"), Some(160.0))
        );
        // A word that only starts with the short form is not a drug.
        assert!(meds("furore on the ward, spirometry booked").is_empty());
    }

    #[test]
    fn an_amount_over_24_hours_is_a_daily_dose() {
        // CSCI doses are written as the amount per 24 h (domain reference 09-discharge-gdmt.md
        // 9.3; subcutaneous furosemide infusions occur in palliative care).
        for text in [
            "Furosemide 40mg SC via syringe driver over 24h",
            "furosemide CSCI 40 mg/24h",
            "furosemide 40mg/24hrs SC",
            "furosemide 40 mg SC over 24 hours",
            "furosemide 40 mg per 24 h via CSCI",
        ] {
            let m = one(text);
            assert_eq!(m.dose, Some(40.0), "{text}");
            assert_eq!(m.unit.as_deref(), Some("mg"), "{text}");
            assert_eq!(m.daily_dose, Some(40.0), "{text}");
            assert_eq!(m.frequency.as_deref(), Some("over 24 h"), "{text}");
            assert_eq!(m.route.as_deref(), Some("SC"), "{text}");
        }
        // A duration in days is not a rate.
        let m = one("furosemide 40 mg od for 3 days");
        assert_eq!(m.frequency.as_deref(), Some("od"));
    }

    #[test]
    fn a_monitoring_plan_is_not_a_dosing_frequency() {
        // "daily weights", "daily U&E" say how often to check (common practice, no source).
        for text in [
            "Continue furosemide 40 mg, daily U&E",
            "IV diuresis, daily weights",
            "bumetanide 2 mg IV, daily wts and bloods",
        ] {
            let m = one(text);
            assert_eq!(m.frequency, None, "{text}");
            assert_eq!(m.daily_dose, None, "{text}");
        }
        // A frequency followed by other words still counts.
        let m = one("furosemide 40 mg daily, daily weights");
        assert_eq!(m.frequency.as_deref(), Some("daily"));
        assert_eq!(m.daily_dose, Some(40.0));
    }

    #[test]
    fn each_frequency_abbreviation() {
        // Frequencies from 09-discharge-gdmt.md 9.3 (UK od/bd/tds/qds, US qd/bid/tid/qid,
        // nocte, mane, stat, prn; common practice).
        let cases: &[(&str, &str, Option<f64>)] = &[
            ("furosemide 40 mg od", "od", Some(1.0)),
            ("furosemide 40 mg OD", "od", Some(1.0)),
            ("furosemide 40 mg o.d.", "od", Some(1.0)),
            ("furosemide 40 mg bd", "bd", Some(2.0)),
            ("furosemide 40 mg b.d.", "bd", Some(2.0)),
            ("captopril 6.25 mg tds", "tds", Some(3.0)),
            ("captopril 6.25 mg t.d.s.", "tds", Some(3.0)),
            ("furosemide 40 mg qds", "qds", Some(4.0)),
            ("lisinopril 5 mg qd", "qd", Some(1.0)),
            ("carvedilol 6.25 mg bid", "bid", Some(2.0)),
            ("captopril 6.25 mg tid", "tid", Some(3.0)),
            ("furosemide 20 mg qid", "qid", Some(4.0)),
            ("spironolactone 25 mg nocte", "nocte", Some(1.0)),
            ("furosemide 40 mg mane", "mane", Some(1.0)),
            ("bumetanide 1 mg om", "om", Some(1.0)),
            ("torsemide 20 mg PO qAM", "qam", Some(1.0)),
            ("furosemide 80 mg IV stat", "stat", None),
            ("furosemide 40 mg prn", "prn", None),
            ("metolazone 2.5 mg weekly", "weekly", Some(1.0 / 7.0)),
            (
                "metolazone 2.5 mg alternate days",
                "alternate days",
                Some(0.5),
            ),
            (
                "metolazone 2.5 mg Mon/Wed/Fri",
                "mon/wed/fri",
                Some(3.0 / 7.0),
            ),
            ("furosemide 40 mg twice daily", "bd", Some(2.0)),
            ("furosemide 40 mg once daily", "od", Some(1.0)),
            ("furosemide 40 mg q12h", "q12h", Some(2.0)),
            // "x1", one dose (US usage; common practice, no source).
            ("furosemide 80 mg IV x1", "once", None),
        ];
        for (text, freq, per_day) in cases {
            let m = one(text);
            assert_eq!(m.frequency.as_deref(), Some(*freq), "{text}");
            assert_eq!(m.per_day, *per_day, "{text}");
        }
        // Intermittent doses average over the week: 2.5 mg × 3 / 7 days.
        let metolazone = one("metolazone 2.5 mg Mon/Wed/Fri");
        assert!((metolazone.daily_dose.expect("daily") - 2.5 * 3.0 / 7.0).abs() < 1e-9);
        assert!(metolazone.note.as_deref().unwrap_or("").contains("average"));
        let stat = one("furosemide 80 mg IV stat");
        assert_eq!(stat.daily_dose, Some(80.0));
        assert_eq!(stat.note.as_deref(), Some("single dose"));
        assert_eq!(one("furosemide 40 mg prn").daily_dose, None);
    }

    #[test]
    fn each_route_abbreviation() {
        // Routes from 09-discharge-gdmt.md 9.3 (PO, IV, IVI, SC, CSCI; common practice).
        let cases = [
            ("furosemide 40 mg PO od", "PO"),
            ("furosemide 40 mg p.o. od", "PO"),
            ("oral furosemide 40 mg od", "PO"),
            ("IV furosemide 80 mg bd", "IV"),
            ("furosemide 40 mg i.v. bd", "IV"),
            ("furosemide IVI 10 mg/h", "IV"),
            ("furosemide via infusion 10 mg/h", "IV"),
            ("furosemide 40 mg SC od", "SC"),
            ("furosemide 40 mg s/c od", "SC"),
            ("furosemide 40 mg subcut od", "SC"),
            ("furosemide CSCI 60 mg/24h", "SC"),
        ];
        for (text, route) in cases {
            assert_eq!(one(text).route.as_deref(), Some(route), "{text}");
        }
    }

    #[test]
    fn units_and_doses() {
        let m = one("digoxin 62.5 micrograms od");
        assert_eq!((m.dose, m.unit.as_deref()), (Some(62.5), Some("ug")));
        assert_eq!(one("digoxin 125 mcg od").unit.as_deref(), Some("ug"));
        assert_eq!(one("digoxin 125mcg od").dose, Some(125.0));
        let k = one("potassium chloride 20 mmol bd");
        assert_eq!(
            (k.unit.as_deref(), k.daily_dose),
            (Some("mmol"), Some(40.0))
        );
        assert_eq!(one("furosemide 10 mL IV stat").unit.as_deref(), Some("mL"));
        let bare = one("frusemide 40 od");
        assert_eq!((bare.drug.as_str(), bare.dose), ("furosemide", Some(40.0)));
        assert_eq!(bare.unit, None);
        assert_eq!(bare.note.as_deref(), Some("unit not written"));
        // A time is not a dose.
        let given = one("Dapagliflozin given 10:00.");
        assert_eq!(given.dose, None);
        let kcl = one("oral potassium chloride 2 tabs bd x 2 days");
        assert_eq!(
            (kcl.dose, kcl.unit.as_deref(), kcl.daily_dose),
            (Some(2.0), Some("{tablet}"), Some(4.0))
        );
        assert_eq!(kcl.route.as_deref(), Some("PO"));
    }

    #[test]
    fn infusion_rates_give_a_daily_dose_with_a_note() {
        // 20 mg/h × 24 h = 480 mg/day (arithmetic).
        let m = one("furosemide infusion 20 mg/h");
        assert_eq!(m.unit.as_deref(), Some("mg/h"));
        assert_eq!(m.route.as_deref(), Some("IV"));
        assert_eq!(m.frequency.as_deref(), Some("continuous"));
        assert_eq!(m.per_day, Some(24.0));
        assert_eq!(m.daily_dose, Some(480.0));
        assert!(m.note.as_deref().unwrap_or("").contains("× 24 h"));
        assert_eq!(one("furosemide 10 mg/hr IVI").daily_dose, Some(240.0));
        assert_eq!(one("furosemide 10 mg / h IV").daily_dose, Some(240.0));
    }

    #[test]
    fn split_doses() {
        let m = one("furosemide 80mg/40mg");
        assert_eq!(
            (m.dose, m.daily_dose, m.per_day),
            (Some(80.0), Some(120.0), Some(2.0))
        );
        let m = one("furosemide 80 mg mane + 40 mg midday");
        assert_eq!(m.daily_dose, Some(120.0));
        assert_eq!(m.frequency.as_deref(), Some("mane + midday"));
        assert!(m.text.ends_with("midday"), "{}", m.text);
        let m = one("furosemide 80/40 mg");
        assert_eq!(m.daily_dose, Some(120.0));
        // A combination product written as a pair is one dose, not a split.
        let arni = one("sacubitril/valsartan 24/26 mg bd");
        assert_eq!((arni.dose, arni.daily_dose), (Some(50.0), Some(100.0)));
        assert!(arni.note.as_deref().unwrap_or("").contains("24/26"));
    }

    #[test]
    fn written_changes() {
        use MedChange::*;
        let cases = [
            ("start dapagliflozin 10 mg od today", Started),
            ("commenced bisoprolol 1.25 mg od", Started),
            ("new: apixaban 5 mg bd", Started),
            ("add metolazone 2.5 mg once", Started),
            ("STOP IV furosemide 40 mg bd.", Stopped),
            ("ramipril discontinued", Stopped),
            ("hold spironolactone", Held),
            ("spironolactone withheld (K 5.9)", Held),
            ("omit ramipril tonight", Held),
            ("bisoprolol increased to 5 mg od", Increased),
            ("uptitrated bisoprolol to 5 mg", Increased),
            ("furosemide reduced to 40 mg od", Reduced),
            ("decreased furosemide to 40 mg", Reduced),
            ("furosemide halved", Reduced),
            ("ramipril switched", Switched),
            (
                "IV furosemide 80 mg bd for 5 days, then switched to oral",
                Switched,
            ),
            ("continue spironolactone 25 mg od", Continued),
            ("furosemide 40 mg od (increased from 20 mg)", Increased),
        ];
        for (text, change) in cases {
            assert_eq!(one(text).change, Some(change), "{text}");
        }
    }

    #[test]
    fn arrows_compare_daily_doses() {
        let m = one("bisoprolol 2.5 mg od -> 3.75 mg od");
        assert_eq!((m.change, m.dose), (Some(MedChange::Increased), Some(3.75)));
        let m = one("furosemide 80 mg bd → 40 mg bd");
        assert_eq!(
            (m.change, m.daily_dose),
            (Some(MedChange::Reduced), Some(80.0))
        );
        let ms = meds(
            "IV furosemide 80 mg bd -> furosemide infusion 20 mg/h; add metolazone 2.5 mg once",
        );
        assert_eq!(ms.len(), 3, "{ms:#?}");
        assert_eq!(ms[0].change, Some(MedChange::Switched));
        assert_eq!(ms[0].daily_dose, Some(160.0));
        assert_eq!(ms[1].daily_dose, Some(480.0));
        assert_eq!(ms[1].change, Some(MedChange::Increased));
        assert_eq!(ms[2].change, Some(MedChange::Started));
        assert_eq!(ms[2].class, DrugClass::ThiazideDiuretic);
        let ms = meds(
            "ramipril 2.5 mg bd -> switch to sacubitril/valsartan 24/26 mg bd after 36 h washout",
        );
        assert_eq!(ms[0].change, Some(MedChange::Switched));
        assert_eq!(ms[1].change, Some(MedChange::Started));
        assert_eq!(ms[1].class, DrugClass::Arni);
    }

    #[test]
    fn a_route_change_after_an_arrow() {
        let ms = meds("IV furosemide 40 mg bd -> oral furosemide 40 mg od today");
        assert_eq!(ms[0].change, Some(MedChange::Switched));
        assert_eq!(ms[1].change, Some(MedChange::Reduced));
        assert_eq!(ms[1].route.as_deref(), Some("PO"));
        // A plan header is not a condition.
        let m = one("Plan: oral potassium chloride 2 tabs bd x 2 days, recheck U&E AM.");
        assert_eq!(m.assertion, Assertion::Present);
    }

    #[test]
    fn a_list_shares_its_verb() {
        let ms = meds("Hold spironolactone 12.5 mg and dapagliflozin 10 mg today (AKI)");
        assert_eq!(ms.len(), 2);
        assert!(
            ms.iter().all(|m| m.change == Some(MedChange::Held)),
            "{ms:#?}"
        );
        let ms =
            meds("bisoprolol 2.5 mg od, dapagliflozin 10 mg od, spironolactone 25 mg od continue");
        assert_eq!(ms.len(), 3);
        assert!(
            ms.iter().all(|m| m.change == Some(MedChange::Continued)),
            "{ms:#?}"
        );
        let ms = meds("sacubitril/valsartan 24/26 mg bd continue; spironolactone 25 mg od");
        assert_eq!(ms[0].change, Some(MedChange::Continued));
        assert_eq!(ms[1].change, None);
    }

    #[test]
    fn negation_and_conditions() {
        assert_eq!(one("not on an ACE inhibitor").assertion, Assertion::Absent);
        let mra = one("no MRA due to K");
        assert_eq!(
            (mra.assertion, mra.class),
            (Assertion::Absent, DrugClass::Mra)
        );
        assert_eq!(mra.drug, "mra");
        let ms = meds("no ACEi, ARB or ARNI (angioedema)");
        assert_eq!(ms.len(), 3);
        assert!(
            ms.iter().all(|m| m.assertion == Assertion::Absent),
            "{ms:#?}"
        );
        assert_eq!(one("SGLT2i not tolerated").assertion, Assertion::Absent);
        assert_eq!(
            one("Restart oral furosemide 20 mg od from tomorrow if Cr improving").assertion,
            Assertion::Hypothetical
        );
        assert_eq!(
            one("consider eplerenone if K allows").assertion,
            Assertion::Hypothetical
        );
        // A question mark makes a mention possible; a verb beyond a comma is not its own.
        let m = one("plan: cont IV, U&E AM, ?add metolazone");
        assert_eq!(
            (m.assertion, m.change, m.route.as_deref()),
            (Assertion::Possible, Some(MedChange::Started), None)
        );
        assert_eq!(one("?start eplerenone").assertion, Assertion::Possible);
        // A condition in brackets does not make the regime conditional.
        let m = one("IV furosemide 80 mg bd, continue (d/w re reducing tomorrow if Cr stable)");
        assert_eq!(
            (m.assertion, m.change),
            (Assertion::Present, Some(MedChange::Continued))
        );
        assert_eq!(
            one("no change to furosemide").change,
            Some(MedChange::Continued)
        );
        assert_eq!(one("no change to furosemide").assertion, Assertion::Present);
    }

    #[test]
    fn a_condition_reaches_back_only_to_the_action_before_it() {
        // The scope of a condition starts at its trigger and stops at a clause break (ConText,
        // Harkema et al. 2009); the phrasings are UK, US and Australian forms (common practice,
        // no source).
        let definite: &[(&str, f64, Option<&str>)] = &[
            (
                "Increase furosemide to 80 mg mane for 3 days then back to 40 mg if weight back <79 kg",
                80.0,
                Some("mane"),
            ),
            (
                "Furosemide 20 mg once daily - he takes an extra 20 mg if his weight goes up by more than 1.5 kg",
                20.0,
                Some("od"),
            ),
            (
                "furosemide 80 mg IV x1 given 03:10, repeat in 2h if UOP <200 mL",
                80.0,
                Some("once"),
            ),
            (
                "I have started furosemide 20 mg od pending your review and stopped amlodipine as it may be contributing to her ankle swelling",
                20.0,
                Some("od"),
            ),
            (
                "furosemide 40 mg PO daily, increase to 40 mg BID if wt up 3 lb",
                40.0,
                Some("daily"),
            ),
            (
                "frusemide 40mg mane, extra 40mg midday if wt >2kg above dry wt",
                40.0,
                Some("mane"),
            ),
            (
                "furosemide 40 mg od, if weight up by 2 kg increase to 80 mg",
                40.0,
                Some("od"),
            ),
            ("IV furosemide 80 mg bd, aim negative 1-1.5 L/day", 80.0, Some("bd")),
        ];
        for (text, dose, freq) in definite {
            let m = one(text);
            assert_eq!(m.assertion, Assertion::Present, "{text}");
            assert_eq!(
                (m.dose, m.frequency.as_deref()),
                (Some(*dose), *freq),
                "{text}"
            );
        }
        assert_eq!(
            one(definite[0].0).change,
            Some(MedChange::Increased),
            "the 80 mg is the increase"
        );
        assert_eq!(one(definite[3].0).change, Some(MedChange::Started));
        // A condition on the whole mention, before or after it.
        for text in [
            "Restart oral furosemide 20 mg od from tomorrow if Cr improving",
            "restart furosemide 20 mg od tomorrow, if Cr improving",
            "furosemide 40 mg PO BID if tolerating PO",
            "If K <3.0 on recheck, d/w reg re holding diuretics",
            "Should K rise above 6, stop spironolactone",
            "consider digoxin if HR remains >110",
        ] {
            assert_eq!(one(text).assertion, Assertion::Hypothetical, "{text}");
        }
        // A considered drug is a considered start, not a continued one.
        for text in [
            "consider digoxin if HR remains >110",
            "Consider spironolactone once K is known",
            "considering dapagliflozin at follow-up",
        ] {
            assert_eq!(one(text).change, Some(MedChange::Started), "{text}");
        }
    }

    #[test]
    fn sections_set_context() {
        let text = "FH: mother on warfarin\nAllergies: ramipril (angioedema)\nAdvice:\nincrease furosemide to 80 mg if weight up 2 kg\nMeds: apixaban 5 mg bd\n";
        let ms = meds(text);
        let find = |d: &str| ms.iter().find(|m| m.drug == d).expect(d);
        assert!(ms.iter().all(|m| m.drug != "warfarin"), "{ms:#?}");
        assert_eq!(find("ramipril").assertion, Assertion::Absent);
        assert_eq!(find("furosemide").assertion, Assertion::Hypothetical);
        assert_eq!(find("apixaban").assertion, Assertion::Present);
        let idx = LineIndex::new(text);
        let sections = crate::text::sections::find(text, &idx);
        let apix = find("apixaban");
        assert_eq!(
            sections[apix.section.expect("section")].kind,
            SectionKind::Medications
        );
    }

    #[test]
    fn spans_cover_the_mention() {
        let text = "P: - IV furosemide 80 mg bd, continue";
        let m = one(text);
        assert_eq!(&text[m.span.range()], m.text);
        assert_eq!(m.text, "IV furosemide 80 mg bd, continue");
        assert_eq!(m.span.line, 1);
        assert_eq!(m.span.column, 6);
    }

    proptest::proptest! {
        #[test]
        fn any_text_around_drug_names_parses_without_panic(
            a in "\\PC{0,40}", b in "[ -~µ→İ\\u{a0}\\u{2009}ẞ()\\[\\]/.,;:0-9]{0,40}", c in "\\PC{0,20}"
        ) {
            let text = format!("{a} furosemide {b} bisoprolol{c} no MRA {b}");
            for m in meds(&text) {
                proptest::prop_assert_eq!(&text[m.span.range()], m.text.as_str());
            }
        }
    }

    #[test]
    fn odd_input_never_panics() {
        for text in [
            "",
            "furosemide",
            "furosemide ->",
            "-> furosemide 40/ mg",
            "furosemide 40mg/",
            "µg furosemide µg 1.2.3 mg",
            "furosemide (((( 40 mg",
            "furosemide )) 40 mg",
            "bisoprolol 99999999999999999999999999 mg od",
            "furosemide 80mg→40mg",
            "furosemide\u{2192}",
            // A non-ASCII space before a full stop (found by the property test).
            "\u{a0}. furosemide  bisoprolol no MRA ",
        ] {
            let _ = meds(text);
        }
        let m = one("furosemide 80mg→40mg");
        assert_eq!(m.change, Some(MedChange::Reduced));
    }
}
