//! Extraction: from text to the model.
//!
//! The order of work for one document:
//! 1. the text layer finds sections, sentences and dates; the lexicon scan finds every
//!    label, finding term, context cue and statement term with its byte span;
//! 2. [`measure`] runs the value grammar right after each measurement label, and
//!    [`bare`] picks up values written without a label (`82.4 kg`, `98/60 mmHg`) and
//!    small tables, and `positional` reads unlabelled vitals lines by their order;
//! 3. [`findings`] turns finding and statement terms into findings and statements;
//! 4. every item gets its assertion context from [`crate::context`], its section and its
//!    documented day ([`episodes`]).

pub mod bare;
pub mod episodes;
pub mod findings;
pub mod lexicon;
pub mod measure;
pub mod meds;
pub mod menu;
mod numbers;
mod positional;

use std::sync::OnceLock;

use crate::config::{DateOrder, ExtractOptions, UnitSystem};
use crate::context::ContextEngine;
use crate::model::{Episode, Extraction, Measurement, Section};
use crate::span::LineIndex;
use crate::text::dates::{self, FoundDate};
use crate::text::{sections, segment::Sentences};

/// The shared, read-only view of one document that the extraction passes work from.
pub struct Doc<'a> {
    pub text: &'a str,
    /// The text with line breaks and tabs as spaces (same byte offsets): what the lexicon
    /// scan and the grammar read, so that a phrase wrapped over two lines still matches.
    pub flat: &'a str,
    pub index: &'a LineIndex<'a>,
    pub sections: &'a [Section],
    pub hits: &'a [lexicon::Hit],
    pub engine: &'a ContextEngine<'a>,
    pub dates: &'a [FoundDate],
    pub episodes: &'a [Episode],
    /// The document reads in US conventional units (lb, °F, mg/dL) by default.
    pub us_units: bool,
    /// The unit the document writes weights in, when it writes one consistently.
    pub weight_unit: Option<&'static str>,
    /// The date the note is written on (as [`episodes::note_date`] finds it), for time
    /// words relative to it (`two days ago`, `on Monday`).
    pub note_date: Option<String>,
}

impl Doc<'_> {
    /// The line holding `offset`, as a byte range without its line break.
    pub fn line_at(&self, offset: usize) -> std::ops::Range<usize> {
        let line = self.index.line_of(offset);
        self.index.line_range(line)
    }

    /// Up to `before` bytes before `start` and `after` bytes after `end`, kept within the
    /// line of the span and on character boundaries.
    pub fn window(&self, start: usize, end: usize, before: usize, after: usize) -> (usize, usize) {
        let line = self.line_at(start);
        let mut a = start.saturating_sub(before).max(line.start);
        while !self.text.is_char_boundary(a) {
            a += 1;
        }
        let line_end = self.line_at(end.saturating_sub(1).max(start)).end;
        let mut b = (end + after).min(line_end).max(end);
        while !self.text.is_char_boundary(b) {
            b -= 1;
        }
        (a, b)
    }

    pub fn section_of(&self, offset: usize) -> Option<usize> {
        sections::section_at(self.sections, offset)
    }

    pub fn episode_of(&self, offset: usize) -> Option<usize> {
        episodes::episode_at(self.episodes, offset)
    }

    /// The date written on the same line before `offset`, if any (a dated row or entry).
    pub fn line_date(&self, offset: usize) -> Option<String> {
        self.line_date_found(offset).map(|d| d.iso.clone())
    }

    fn line_date_found(&self, offset: usize) -> Option<&FoundDate> {
        let line = self.line_at(offset);
        let i = self.dates.partition_point(|d| d.end <= offset);
        self.dates[..i].last().filter(|d| d.start >= line.start)
    }

    /// A clock time written just after the line's date (`02/06 08:30 ...`).
    pub fn line_time(&self, offset: usize) -> Option<String> {
        let d = self.line_date_found(offset)?;
        let line = self.line_at(offset);
        let mut end = (d.end + 12).min(line.end);
        while !self.text.is_char_boundary(end) {
            end -= 1;
        }
        let after = self.text.get(d.end..end)?;
        crate::text::dates::find_time(after)
            .filter(|(at, _)| *at <= 2)
            .map(|(_, t)| t)
    }

    /// Whether the line holding `offset` contains one of `words` (ASCII, lower case), looked
    /// for within `reach` bytes either side so that a very long line costs no more.
    pub fn line_mentions(&self, offset: usize, reach: usize, words: &[&str]) -> bool {
        let line = self.line_at(offset);
        let mut a = offset.saturating_sub(reach).max(line.start);
        while !self.text.is_char_boundary(a) {
            a += 1;
        }
        let mut b = (offset + reach).min(line.end).max(a);
        while !self.text.is_char_boundary(b) {
            b -= 1;
        }
        let window = self.text[a..b].to_ascii_lowercase();
        words.iter().any(|w| window.contains(w))
    }

    /// The date that starts exactly at `offset`.
    pub fn date_at(&self, offset: usize) -> Option<&FoundDate> {
        let i = self.dates.partition_point(|d| d.start < offset);
        self.dates.get(i).filter(|d| d.start == offset)
    }

    /// Whether any date overlaps `start..end`.
    pub fn date_overlaps(&self, start: usize, end: usize) -> bool {
        let i = self.dates.partition_point(|d| d.end <= start);
        self.dates.get(i).is_some_and(|d| d.start < end)
    }

    /// Lexicon hits that overlap `start..end` (terms are short, so the search window is
    /// bounded).
    pub fn hits_near(&self, start: usize, end: usize) -> impl Iterator<Item = &lexicon::Hit> {
        let from = self.hits.partition_point(|h| h.start + 256 < start);
        self.hits[from..]
            .iter()
            .take_while(move |h| h.start < end)
            .filter(move |h| h.end > start)
    }
}

/// Whether the document is written in US conventional units, judged from the units it
/// writes (common practice, no source: a note that writes lb, °F or mg/dL creatinine uses
/// them for its unlabelled values too).
fn detect_us_units(text: &str, system: UnitSystem) -> bool {
    match system {
        UnitSystem::Si => return false,
        UnitSystem::Us => return true,
        UnitSystem::Auto => {}
    }
    // Each cue counts every occurrence (cues may overlap one another, not themselves), in
    // one case-insensitive pass. The first `US_CUES` cues are US, the rest SI.
    const US_CUES: usize = 7;
    static CUES: OnceLock<aho_corasick::AhoCorasick> = OnceLock::new();
    let ac = crate::text::phrase_automaton(
        &CUES,
        [
            " lb", "lbs", "°f", "mg/dl", "bun", " deg f", "pounds", // US
            " kg", "kg ", "°c", "µmol", "umol", "μmol", " deg c", "g/l", // SI
        ],
    );
    let (mut us, mut si) = (0usize, 0usize);
    for m in ac.find_overlapping_iter(text) {
        if m.pattern().as_usize() < US_CUES {
            us += 1;
        } else {
            si += 1;
        }
    }
    us > si
}

/// The weight unit a document writes consistently (`kg` or `[lb_av]`), used to read
/// weights written without a unit.
fn detect_weight_unit(text: &str) -> Option<&'static str> {
    let re = numbers::weight_unit_re();
    let (mut kg, mut lb) = (0usize, 0usize);
    for c in re.captures_iter(text) {
        if c[1].to_ascii_lowercase().starts_with('k') {
            kg += 1;
        } else {
            lb += 1;
        }
    }
    match (kg, lb) {
        (0, 0) => None,
        (k, l) if k >= l => Some("kg"),
        _ => Some("[lb_av]"),
    }
}

/// Extract everything one document documents.
pub fn extract(text: &str, opts: &ExtractOptions) -> Extraction {
    let index = LineIndex::new(text);
    let sections = sections::find(text, &index);
    let sentences = Sentences::new(text);
    let flat = flatten(text);
    let hits = lexicon::scan(&flat);
    let us_units = detect_us_units(text, opts.unit_system);
    let order = dates::resolve_order(text, opts.date_order, us_units);
    let scan = dates::scan_dates(text, order);
    let default_year = scan.note_year(text);
    let found_dates = scan.with_year(default_year);
    let episodes = episodes::find(text, &index, &found_dates);
    let engine = ContextEngine::new(text, &index, &sentences, &sections, &hits);
    let note_date = episodes::note_date(text, &index, &found_dates, &episodes);
    let doc = Doc {
        text,
        flat: &flat,
        index: &index,
        sections: &sections,
        hits: &hits,
        engine: &engine,
        dates: &found_dates,
        episodes: &episodes,
        us_units,
        weight_unit: detect_weight_unit(text),
        note_date: note_date.clone(),
    };

    let mut out = measure::Output::default();
    measure::labelled(&doc, &mut out);
    bare::tables(&doc, &mut out);
    positional::vitals_lines(&doc, &mut out);
    bare::unlabelled(&doc, &mut out);
    findings::findings(&doc, &mut out);
    findings::statements(&doc, &mut out);
    findings::patient_facts(&doc, &mut out);

    let mut measurements = dedupe(out.measurements);
    sort_large_by_key(&mut measurements, |m| (m.span.start, m.concept));
    drop_conversions(text, &mut measurements);
    sort_large_by_key(&mut out.findings, |f| f.span.start);
    sort_large_by_key(&mut out.statements, |s| s.span.start);
    Extraction {
        sections: sections.clone(),
        episodes,
        measurements,
        findings: out.findings,
        statements: out.statements,
        medications: meds::medications(text, &sections),
        note_date,
    }
}

/// Line breaks and tabs as spaces, byte for byte.
pub fn flatten(text: &str) -> String {
    text.chars()
        .map(|c| {
            if matches!(c, '\r' | '\n' | '\t') {
                ' '
            } else {
                c
            }
        })
        .collect()
}

/// Drop measurements that repeat another of the same concept over the same text (a label
/// read twice by two passes).
fn dedupe(mut ms: Vec<Measurement>) -> Vec<Measurement> {
    sort_large_by_key(&mut ms, |m| {
        (m.concept, m.span.start, std::cmp::Reverse(m.span.end))
    });
    let mut out: Vec<Measurement> = Vec::with_capacity(ms.len());
    for m in ms {
        let dup = out.iter().rev().take(8).any(|o| {
            o.concept == m.concept
                && o.span.start <= m.span.start
                && m.span.end <= o.span.end
                && (o.value - m.value).abs() < 1e-9
        });
        if !dup {
            out.push(m);
        }
    }
    out
}

/// `Wt 204 lbs (92.5 kg)`, `T 101.3 F / 38.5 C`, `Cr 1.9 mg/dL (168 umol/L)`: a value
/// restated in another unit right after itself, in brackets or after a slash or equals
/// sign, is one reading written twice, not a second reading (and not a mix of unit
/// systems). The restatement is dropped when both units are written and the two agree to
/// within 1.5 % (rounding of a conversion; common practice, no source). `measurements` is
/// sorted by start.
fn drop_conversions(text: &str, measurements: &mut Vec<Measurement>) {
    let mut drop = vec![false; measurements.len()];
    for i in 1..measurements.len() {
        let (a, b) = (&measurements[i - 1], &measurements[i]);
        if a.concept != b.concept || a.unit_inferred || b.unit_inferred || a.unit == b.unit {
            continue;
        }
        let (Some(qa), Some(qb)) = (a.normalized, b.normalized) else {
            continue;
        };
        let Some(gap) = text.get(a.span.end..b.span.start) else {
            continue;
        };
        let joined = gap.len() <= 4
            && gap
                .trim()
                .trim_start_matches(['(', '[', '/', '=', '~', '≈'])
                .trim()
                .is_empty();
        let same = qa.unit == qb.unit
            && qa.value.abs() > 0.0
            && ((qa.value - qb.value) / qa.value).abs() <= 0.015;
        if joined && same {
            drop[i] = true;
        }
    }
    let mut i = 0;
    measurements.retain(|_| {
        i += 1;
        !drop[i - 1]
    });
}

/// A stable sort of records too large to move often: sorts (key, index) pairs, then moves
/// each record once. Same order as `sort_by_key`.
fn sort_large_by_key<T, K: Ord>(items: &mut Vec<T>, key: impl Fn(&T) -> K) {
    if items.is_sorted_by_key(&key) {
        return;
    }
    let mut order: Vec<(K, usize)> = items.iter().map(&key).zip(0..).collect();
    order.sort_unstable();
    let mut slots: Vec<Option<T>> = items.drain(..).map(Some).collect();
    items.extend(order.into_iter().filter_map(|(_, i)| slots[i].take()));
}

/// Day/month order of a document, for callers outside extraction (the handover sheet).
pub fn date_order(text: &str, opts: &ExtractOptions) -> DateOrder {
    dates::resolve_order(
        text,
        opts.date_order,
        detect_us_units(text, opts.unit_system),
    )
}

#[cfg(test)]
mod tests {
    use super::sort_large_by_key;
    use proptest::prelude::*;

    proptest! {
        /// The permutation sort gives exactly the standard library's stable order, ties
        /// included (the second field tells equal keys apart).
        #[test]
        fn permutation_sort_matches_the_stable_sort(items in proptest::collection::vec((0u8..6, any::<u16>()), 0..200)) {
            let mut expected = items.clone();
            expected.sort_by_key(|x| x.0);
            let mut got = items;
            sort_large_by_key(&mut got, |x| x.0);
            prop_assert_eq!(got, expected);
        }
    }
}
