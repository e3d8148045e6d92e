//! Assertion context, after ConText (Harkema et al., J Biomed Inform 2009), which builds on
//! NegEx (Chapman et al., J Biomed Inform 2001).
//!
//! Every cue of the lexicon has a family (negation, possibility, hypothetical, historical,
//! experiencer, reporter, current, pseudo) and a direction. A cue reaches a target when both
//! sit in the same sentence, no termination term ("but", "however" ...) lies between them, no
//! bracket opens or closes between them, and the distance fits the family:
//!
//! - forward negation reaches at most five words (NegEx's window), not counting words that
//!   are themselves findings or list connectors, so one cue covers a list
//!   ("no orthopnoea, PND or ankle swelling");
//! - backward cues ("... absent", "... resolved") reach at most three words and only the
//!   nearest target before them;
//! - hypothetical, historical and experiencer cues reach to the end of the sentence;
//!   a "current" cue ("now", "today") ends a historical one;
//! - pseudo-triggers ("no change in", "not only") are longer lexicon terms than the cue they
//!   contain, so the scan's leftmost-longest rule removes the real cue they would fire.
//!
//! Section headers set defaults: past history → historical, family history → another
//! person, discharge advice and follow-up → hypothetical.

use crate::extract::lexicon::{Direction, Family, Hit, Kind};
use crate::extract::menu::{find_menus, menu_at, Menu};
use crate::model::{Assertion, Context, Cue, Experiencer, Section, SectionKind, Temporality};
use crate::span::LineIndex;
use crate::text::segment::Sentences;

use std::sync::OnceLock;

use regex::Regex;

/// What kind of item the context is for: cues apply differently to each.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Target {
    Finding,
    Measurement,
    Statement,
}

/// A context cue or terminator found by the lexicon scan.
#[derive(Debug, Clone, Copy)]
struct CueHit {
    start: usize,
    end: usize,
    family: Option<Family>,
    dir: Direction,
}

/// Decides the context of targets in one document.
///
/// Every lookup is a binary search over sorted positions, so the cost of a document is
/// O(n log n) in its number of cues and targets however they are packed (a 20 MB line of
/// stacked negations costs the same per item as a short note).
pub struct ContextEngine<'a> {
    text: &'a str,
    index: &'a LineIndex<'a>,
    sentences: &'a Sentences,
    sections: &'a [Section],
    /// Cues that reach forward, per family, sorted by position.
    forward: Vec<(Family, Vec<CueHit>)>,
    /// Cues that reach backward, per family, sorted by position.
    backward: Vec<(Family, Vec<CueHit>)>,
    /// Starts of termination terms ("but", "however").
    terminators: Vec<(usize, usize)>,
    /// Starts of "current" cues ("now", "today"), which end a historical scope.
    currents: Vec<(usize, usize)>,
    /// Starts of reporter cues ("wife reports").
    reporters: Vec<(usize, usize)>,
    /// `in 2019`, `in March 2019`: a year that places a finding or value in the past.
    years: Vec<(usize, usize)>,
    /// Byte offsets of brackets.
    brackets: Vec<usize>,
    /// Spans of all findings and statements, sorted, for list handling and nearest-target
    /// checks.
    targets: Vec<(usize, usize)>,
    /// Template menu lines (`JVP: raised / not raised -> raised`).
    menus: Vec<Menu>,
}

const CONNECTORS: &[&str] = &[
    "or", "nor", "and", "&", "/", "+", "either", "any", "the", "of",
];

/// How many of the nearest cues of one family are weighed for each target.
const NEAREST: usize = 3;

/// The longest gap, in bytes, that word counting walks; beyond it the gap is too wide for
/// any word-limited cue (NegEx's window is five words).
const MAX_WORD_GAP: usize = 600;

/// `in 2019`, `in Mar 2019`: a year written as a time (04 §4.3 lists "in 2019" among the
/// historical cues), not `in 2000 mL`.
fn year_cues(text: &str) -> Vec<(usize, usize)> {
    static RE: OnceLock<Regex> = OnceLock::new();
    let re = RE.get_or_init(|| {
        Regex::new(r"(?i)(?-u:\b)in\s+(?:(?:jan|feb|mar|apr|may|jun|jul|aug|sep|oct|nov|dec)[a-z]*\.?\s+)?(?:19[5-9][0-9]|20[0-9][0-9])(?-u:\b)")
            .expect("valid regex")
    });
    const UNITS: &[&str] = &[
        "ml", "mls", "l", "cc", "mg", "mcg", "kg", "g", "units", "iu", "litres", "liters",
    ];
    re.find_iter(text)
        .filter(|m| {
            let rest = text[m.end()..].trim_start();
            let word = rest
                .split(|c: char| !c.is_ascii_alphabetic())
                .next()
                .unwrap_or("")
                .to_ascii_lowercase();
            // Not a date (`in 2019/20`) or an amount (`in 2000 mL`).
            !rest.starts_with(|c: char| c.is_ascii_digit() || c == '/')
                && !UNITS.contains(&word.as_str())
        })
        .map(|m| (m.start(), m.end()))
        .collect()
}

/// A double-negative cue (`not without`, `not w/o`): 04 §4.4 rule 7 reads it as possible.
fn litotes(cue: &str) -> bool {
    let mut words = cue.split_whitespace();
    words.next().is_some_and(|w| w.eq_ignore_ascii_case("not"))
        && words
            .next()
            .is_some_and(|w| w.eq_ignore_ascii_case("without") || w.eq_ignore_ascii_case("w/o"))
}

/// `no PE (pedal oedema)`: the gap between a cue and a target is an abbreviation with its
/// expansion opening in brackets, so the cue reaches the expansion (common practice, no
/// source).
fn expands(gap: &str) -> bool {
    let g = gap.trim();
    let Some(abbr) = g.strip_suffix('(') else {
        return false;
    };
    let abbr = abbr.trim_end();
    (1..=6).contains(&abbr.len()) && abbr.bytes().all(|b| b.is_ascii_alphanumeric())
}

/// Whether the words right after a historical cue give the earlier state it dates
/// (`previously normal`, `previously to knees`, `previously 5.2`, `was 30% before`), so
/// the cue looks forward. Common practice, no source.
fn names_earlier_state(after: &str) -> bool {
    let t = after.trim_start_matches([' ', '\t', ':']);
    if t.starts_with(|c: char| c.is_ascii_digit()) {
        return true;
    }
    let w: String = t
        .chars()
        .take_while(|c| c.is_ascii_alphabetic() || *c == '-')
        .collect::<String>()
        .to_ascii_lowercase();
    matches!(
        w.as_str(),
        "normal"
            | "to"
            | "up"
            | "mild"
            | "mildly"
            | "moderate"
            | "moderately"
            | "severe"
            | "severely"
            | "preserved"
            | "reduced"
            | "impaired"
            | "good"
            | "fine"
            | "well"
            | "independent"
            | "higher"
            | "lower"
            | "better"
            | "worse"
            | "stable"
            | "trace"
            | "none"
            | "nil"
            | "absent"
    )
}

/// `Previous echo (2022): LVEF 55%`, `Prior TTE (outside hospital) - EF 60%`: a short
/// bracketed aside closed within the gap (a date, a place, a method) is part of the cue's
/// own phrase, so the cue reaches across it. An unclosed bracket still stops it.
fn closed_aside(gap: &str) -> bool {
    let mut depth = 0usize;
    let mut inside = 0usize;
    for c in gap.chars() {
        match c {
            '(' | '[' => {
                if depth > 0 {
                    return false;
                }
                depth = 1;
                inside = 0;
            }
            ')' | ']' => {
                if depth == 0 {
                    return false;
                }
                depth = 0;
            }
            _ if depth > 0 => {
                inside += c.len_utf8();
                if inside > 24 {
                    return false;
                }
            }
            _ => {}
        }
    }
    depth == 0
}

/// `SOB ? cause`, `oedema ? aetiology`: the question is about the cause, not the sign.
fn queries_a_cause(after: &str) -> bool {
    let w: String = after
        .trim_start()
        .chars()
        .take_while(char::is_ascii_alphabetic)
        .collect::<String>()
        .to_ascii_lowercase();
    matches!(
        w.as_str(),
        "cause"
            | "causes"
            | "aetiology"
            | "etiology"
            | "source"
            | "precipitant"
            | "trigger"
            | "why"
    )
}

/// A negation of now ("not today", "none at present"), which ends where the sign's clause
/// began rather than three words back.
fn now_negation(cue: &str) -> bool {
    let l = cue.to_ascii_lowercase();
    l.ends_with("today")
        || l.ends_with("at present")
        || l.ends_with("currently")
        || l.ends_with(" now")
}

fn any_in(sorted: &[(usize, usize)], a: usize, b: usize) -> bool {
    let i = sorted.partition_point(|&(s, _)| s < a);
    sorted.get(i).is_some_and(|&(_, e)| e <= b)
}

impl<'a> ContextEngine<'a> {
    pub fn new(
        text: &'a str,
        index: &'a LineIndex<'a>,
        sentences: &'a Sentences,
        sections: &'a [Section],
        hits: &[Hit],
    ) -> Self {
        let mut cues = Vec::new();
        let mut targets = Vec::new();
        for h in hits {
            match h.kind {
                Kind::Cue(family, dir) => cues.push(CueHit {
                    start: h.start,
                    end: h.end,
                    family: Some(family),
                    dir,
                }),
                Kind::Terminator => cues.push(CueHit {
                    start: h.start,
                    end: h.end,
                    family: None,
                    dir: Direction::Both,
                }),
                Kind::Finding(..) | Kind::Statement(..) => targets.push((h.start, h.end)),
                _ => {}
            }
        }
        targets.sort();
        // A cue inside a finding or statement term ("JVP not raised") belongs to that term.
        let inside = |c: &CueHit| {
            let i = targets.partition_point(|&(s, _)| s <= c.start);
            targets[..i]
                .iter()
                .rev()
                .take(4)
                .any(|&(s, e)| s <= c.start && c.end <= e && (s, e) != (c.start, c.end))
        };
        cues.retain(|c| !inside(c));
        // The words of a menu's options ("not raised / not seen") are the form's, not the
        // writer's: they are no cue for anything.
        let menus = find_menus(text);
        if !menus.is_empty() {
            cues.retain(|c| menu_at(&menus, c.start).is_none_or(|m| !m.options.contains(&c.start)));
        }
        cues.sort_by_key(|c| c.start);
        let mut forward: Vec<(Family, Vec<CueHit>)> = Vec::new();
        let mut backward: Vec<(Family, Vec<CueHit>)> = Vec::new();
        let mut terminators = Vec::new();
        let mut currents = Vec::new();
        let mut reporters = Vec::new();
        let add = |list: &mut Vec<(Family, Vec<CueHit>)>, f: Family, c: CueHit| match list
            .iter_mut()
            .find(|(g, _)| *g == f)
        {
            Some((_, v)) => v.push(c),
            None => list.push((f, vec![c])),
        };
        for c in cues {
            let Some(f) = c.family else {
                terminators.push((c.start, c.end));
                continue;
            };
            match f {
                Family::Current => currents.push((c.start, c.end)),
                Family::Reporter => reporters.push((c.start, c.end)),
                _ => {}
            }
            if matches!(c.dir, Direction::Forward | Direction::Both) {
                add(&mut forward, f, c);
            }
            if matches!(c.dir, Direction::Backward | Direction::Both) {
                add(&mut backward, f, c);
            }
        }
        let brackets = text
            .bytes()
            .enumerate()
            .filter(|(_, b)| matches!(b, b'(' | b')' | b'['))
            .map(|(i, _)| i)
            .collect();
        ContextEngine {
            text,
            index,
            sentences,
            sections,
            forward,
            backward,
            terminators,
            currents,
            reporters,
            years: year_cues(text),
            brackets,
            targets,
            menus,
        }
    }

    /// The template menu whose line holds `offset`.
    pub fn menu_at(&self, offset: usize) -> Option<&Menu> {
        menu_at(&self.menus, offset)
    }

    /// Words between `a` and `b`, not counting connectors and words of other findings;
    /// counting stops once it passes `limit`.
    fn words(&self, a: usize, b: usize, limit: usize) -> usize {
        if a >= b {
            return 0;
        }
        if b - a > MAX_WORD_GAP {
            return limit + 1;
        }
        let mut count = 0;
        let mut pos = a;
        for w in self.text[a..b].split(|c: char| c.is_whitespace() || c == ',') {
            let wstart = pos;
            pos += w.len() + 1;
            let w = w.trim_matches(|c: char| !c.is_alphanumeric());
            if w.is_empty() || CONNECTORS.contains(&w.to_ascii_lowercase().as_str()) {
                continue;
            }
            // Words that belong to another finding or statement do not count: lists.
            let i = self.targets.partition_point(|&(s, _)| s <= wstart + 1);
            if i > 0 && wstart < self.targets[i - 1].1 {
                continue;
            }
            count += 1;
            if count > limit {
                break;
            }
        }
        count
    }

    fn brackets_between(&self, a: usize, b: usize) -> bool {
        let i = self.brackets.partition_point(|&p| p < a);
        self.brackets.get(i).is_some_and(|&p| p < b)
    }

    fn terminated(&self, a: usize, b: usize, family: Family) -> bool {
        any_in(&self.terminators, a, b)
            || (family == Family::Historical && any_in(&self.currents, a, b))
    }

    fn nearest_target_before(&self, cue_start: usize, target_end: usize) -> bool {
        let i = self.targets.partition_point(|&(s, _)| s < target_end);
        !self.targets[i..]
            .iter()
            .take_while(|&&(s, _)| s < cue_start)
            .any(|&(_, e)| e <= cue_start)
    }

    fn cue(&self, c: &CueHit, family: &'static str) -> Cue {
        Cue {
            family,
            text: self.text[c.start..c.end].to_string(),
            span: self.index.span(c.start, c.end),
        }
    }

    /// The few nearest cues before `start` (reaching forward) and after `end` (reaching
    /// backward) within `sentence`, nearest first.
    fn nearby(
        &self,
        start: usize,
        end: usize,
        sentence: &std::ops::Range<usize>,
    ) -> Vec<(Family, CueHit)> {
        let mut out = Vec::new();
        for (f, list) in &self.forward {
            let i = list.partition_point(|c| c.end <= start);
            for c in list[..i].iter().rev().take(NEAREST) {
                if c.start >= sentence.start {
                    out.push((*f, *c));
                }
            }
        }
        for (f, list) in &self.backward {
            let i = list.partition_point(|c| c.start < end);
            for c in list[i..].iter().take(NEAREST) {
                if c.start < sentence.end {
                    out.push((*f, *c));
                }
            }
        }
        // In text order, as the scope rules (a reporter after another person) expect.
        out.sort_by_key(|(_, c)| c.start);
        out
    }

    /// The context of a target at `start..end`. `quantified` says the finding carries its
    /// own grade, level or count ("pitting oedema to knees"), which a list negation does
    /// not reach across a comma.
    pub fn context(&self, start: usize, end: usize, target: Target, quantified: bool) -> Context {
        let sentence = self.sentences.around(start);
        let mut ctx = Context::default();
        let mut negated = None;
        let mut possible = None;
        let mut hypothetical = None;
        let mut historical = None;
        let mut other = None;
        let mut reporter_between = false;

        for (family, c) in self.nearby(start, end, &sentence) {
            let c = &c;
            let before = c.end <= start;
            let after = c.start >= end;
            if !before && !after {
                continue;
            }
            let (gap_a, gap_b) = if before {
                (c.end, start)
            } else {
                (end, c.start)
            };
            if (self.brackets_between(gap_a, gap_b)
                && !(before
                    && (expands(&self.text[gap_a..gap_b])
                        || closed_aside(&self.text[gap_a..gap_b]))))
                || self.terminated(gap_a, gap_b, family)
            {
                continue;
            }
            let words = self.words(gap_a, gap_b, 6);
            let q_is = &self.text[c.start..c.end] == "?";
            // `LVF?`: a question mark right after a word belongs to that word only.
            let q_suffix = q_is
                && self.text[..c.start]
                    .chars()
                    .next_back()
                    .is_some_and(char::is_alphanumeric);
            match family {
                Family::Negation if target != Target::Measurement => {
                    let reach = if before {
                        words <= 5 && !(quantified && self.text[gap_a..gap_b].contains(','))
                    } else {
                        // "confusion in the evenings per daughter, not today": a negation of
                        // the present moment reaches back over the clause that qualifies the
                        // sign, to the nearest one.
                        let limit = if now_negation(&self.text[c.start..c.end]) {
                            6
                        } else {
                            3
                        };
                        words <= limit && self.nearest_target_before(c.start, end)
                    };
                    if reach {
                        negated = Some(*c);
                    }
                }
                Family::Possibility if target != Target::Measurement => {
                    let reach = if q_is {
                        // "?S3", "? fluid overload" forward; "LVF?" backward, adjacent only.
                        // "?soft S3", "?small bilateral effusions": describing words may sit
                        // between.
                        // Not across a comma or a dash: "?LRTI, chest clear" and "?home
                        // Friday - target weight 80 kg" query the first item only.
                        (before
                            && !q_suffix
                            && words <= 2
                            && gap_b - gap_a <= 24
                            && !self.text[gap_a..gap_b].contains([',', ';'])
                            && !self.text[gap_a..gap_b].contains(" - "))
                            || (after && gap_b == gap_a)
                            // "scattered creps ? basal": a spaced question mark between a
                            // sign and its place queries the sign.
                            || (after
                                && self.text[gap_a..gap_b].trim().is_empty()
                                && self.text[c.end..]
                                    .trim_start_matches([' ', '\t'])
                                    .starts_with(|ch: char| ch.is_ascii_alphabetic())
                                && !queries_a_cause(&self.text[c.end..]))
                    } else if before && litotes(&self.text[c.start..c.end]) {
                        // "not without crackles": the double negative qualifies the words
                        // right after it, not the next clause ("not without difficulty, no
                        // oedema").
                        words <= 3 && !self.text[gap_a..gap_b].contains(',')
                    } else if before {
                        words <= 5
                    } else {
                        words <= 3 && self.nearest_target_before(c.start, end)
                    };
                    if reach {
                        possible = Some(*c);
                    }
                }
                Family::Hypothetical if before => hypothetical = Some(*c),
                Family::Historical => {
                    // "LVEF 38%, previously normal", "trace at ankles, previously to knees":
                    // a cue followed by the earlier state it dates describes that state, not
                    // the target before it.
                    let reach = before
                        || (words <= 4
                            && self.nearest_target_before(c.start, end)
                            && !names_earlier_state(&self.text[c.end..]));
                    if reach {
                        historical = Some(*c);
                    }
                }
                Family::Experiencer if before => other = Some(*c),
                Family::Reporter if before => {
                    if let Some(o) = other {
                        if o.end <= c.start {
                            reporter_between = true;
                        }
                    }
                }
                _ => {}
            }
        }
        // A past year near a finding or value ("ascites in 2019", "in 2021 EF was 30%");
        // a diagnosis named with its year is still the patient's diagnosis.
        if historical.is_none() && target != Target::Statement {
            historical = self.year_near(start, end, &sentence);
        }
        // A reporter after the other person ("wife reports ...") keeps the patient.
        if let Some(o) = other {
            if reporter_between || self.reporter_after(o.end, start) {
                other = None;
            }
        }

        let section =
            crate::text::sections::section_at(self.sections, start).map(|i| &self.sections[i]);
        if let Some(o) = other {
            ctx.experiencer = Experiencer::Other;
            ctx.cues.push(self.cue(&o, "experiencer"));
        } else if let Some(s) = section.filter(|s| s.kind == SectionKind::FamilyHistory) {
            ctx.experiencer = Experiencer::Other;
            ctx.cues.push(Cue {
                family: "section",
                text: s.title.clone(),
                span: s.header,
            });
        }
        if let Some(h) = historical {
            ctx.temporality = Temporality::Historical;
            ctx.cues.push(self.cue(&h, "historical"));
        } else if let Some(s) = section.filter(|s| s.kind == SectionKind::PastHistory) {
            ctx.temporality = Temporality::Historical;
            ctx.cues.push(Cue {
                family: "section",
                text: s.title.clone(),
                span: s.header,
            });
        }
        if let Some(h) = hypothetical {
            ctx.assertion = Assertion::Hypothetical;
            ctx.cues.push(self.cue(&h, "hypothetical"));
        } else if let Some(n) = negated {
            // Both a negation and a possibility reach the target: the nearer one before it
            // decides ("possible pneumonia, no crackles": absent; "no ?crackles": possible).
            let negation_nearer = possible.is_some_and(|p| p.end <= n.start && n.end <= start);
            ctx.assertion = if possible.is_some() && !negation_nearer {
                Assertion::Possible
            } else {
                Assertion::Absent
            };
            ctx.cues.push(self.cue(&n, "negation"));
        } else if let Some(p) = possible {
            ctx.assertion = Assertion::Possible;
            ctx.cues.push(self.cue(&p, "possibility"));
        } else if let Some(s) = section.filter(|s| {
            target == Target::Finding
                && matches!(
                    s.kind,
                    SectionKind::DischargeInstructions | SectionKind::FollowUp
                )
        }) {
            ctx.assertion = Assertion::Hypothetical;
            ctx.cues.push(Cue {
                family: "section",
                text: s.title.clone(),
                span: s.header,
            });
        }
        ctx
    }

    fn year_near(
        &self,
        start: usize,
        end: usize,
        sentence: &std::ops::Range<usize>,
    ) -> Option<CueHit> {
        let as_cue = |&(s, e): &(usize, usize)| CueHit {
            start: s,
            end: e,
            family: Some(Family::Historical),
            dir: Direction::Both,
        };
        let i = self.years.partition_point(|&(_, e)| e <= start);
        let before = self.years[..i].last().filter(|&&(s, e)| {
            s >= sentence.start
                && !self.brackets_between(e, start)
                && !self.terminated(e, start, Family::Historical)
                && self.words(e, start, 6) <= 5
        });
        let j = self.years.partition_point(|&(s, _)| s < end);
        let after = self.years.get(j).filter(|&&(s, _)| {
            s < sentence.end
                && !self.terminated(end, s, Family::Historical)
                && self.words(end, s, 5) <= 4
                && self.nearest_target_before(s, end)
        });
        after.or(before).map(as_cue)
    }

    fn reporter_after(&self, a: usize, b: usize) -> bool {
        any_in(&self.reporters, a, b)
    }
}
