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
use crate::model::{Assertion, Context, Cue, Experiencer, Section, SectionKind, Temporality};
use crate::span::LineIndex;
use crate::text::segment::Sentences;

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
pub struct ContextEngine<'a> {
    text: &'a str,
    index: &'a LineIndex<'a>,
    sentences: &'a Sentences,
    sections: &'a [Section],
    cues: Vec<CueHit>,
    /// Spans of all findings and statements, sorted, for list handling and nearest-target
    /// checks.
    targets: Vec<(usize, usize)>,
}

const CONNECTORS: &[&str] = &[
    "or", "nor", "and", "&", "/", "+", "either", "any", "the", "of",
];

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
        // A cue inside a finding or statement term ("JVP not raised") belongs to that term.
        cues.retain(|c| {
            !targets
                .iter()
                .any(|&(s, e)| s <= c.start && c.end <= e && (s, e) != (c.start, c.end))
        });
        targets.sort();
        ContextEngine {
            text,
            index,
            sentences,
            sections,
            cues,
            targets,
        }
    }

    fn words(&self, a: usize, b: usize) -> usize {
        if a >= b {
            return 0;
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
            let abs = wstart;
            if self.targets.iter().any(|&(s, e)| s <= abs + 1 && abs < e) {
                continue;
            }
            count += 1;
        }
        count
    }

    fn brackets_between(&self, a: usize, b: usize) -> bool {
        a < b && self.text[a..b].contains(['(', ')', '['])
    }

    fn terminated(&self, a: usize, b: usize, family: Family) -> bool {
        self.cues.iter().any(|c| {
            c.start >= a
                && c.end <= b
                && (c.family.is_none()
                    || (family == Family::Historical && c.family == Some(Family::Current)))
        })
    }

    fn nearest_target_before(&self, cue_start: usize, target_end: usize) -> bool {
        !self
            .targets
            .iter()
            .any(|&(s, e)| s >= target_end && e <= cue_start)
    }

    fn cue(&self, c: &CueHit, family: &'static str) -> Cue {
        Cue {
            family,
            text: self.text[c.start..c.end].to_string(),
            span: self.index.span(c.start, c.end),
        }
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

        for c in &self.cues {
            let Some(family) = c.family else { continue };
            if c.start < sentence.start || c.start >= sentence.end {
                continue;
            }
            let before = c.end <= start;
            let after = c.start >= end;
            if !before && !after {
                continue;
            }
            let forward_ok = before && matches!(c.dir, Direction::Forward | Direction::Both);
            let backward_ok = after && matches!(c.dir, Direction::Backward | Direction::Both);
            if !forward_ok && !backward_ok {
                continue;
            }
            let (gap_a, gap_b) = if before {
                (c.end, start)
            } else {
                (end, c.start)
            };
            if self.brackets_between(gap_a, gap_b) || self.terminated(gap_a, gap_b, family) {
                continue;
            }
            let words = self.words(gap_a, gap_b);
            let q_is = &self.text[c.start..c.end] == "?";
            match family {
                Family::Negation if target != Target::Measurement => {
                    let reach = if before {
                        words <= 5 && !(quantified && self.text[gap_a..gap_b].contains(','))
                    } else {
                        words <= 3 && self.nearest_target_before(c.start, end)
                    };
                    if reach {
                        negated = Some(*c);
                    }
                }
                Family::Possibility if target != Target::Measurement => {
                    let reach = if q_is {
                        // "?S3", "? fluid overload" forward; "LVF?" backward, adjacent only.
                        // "?soft S3": one describing word may sit between.
                        (before && words <= 1 && gap_b - gap_a <= 12) || (after && gap_b == gap_a)
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
                    let reach = before || (words <= 4 && self.nearest_target_before(c.start, end));
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
            ctx.assertion = if possible.is_some() {
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

    fn reporter_after(&self, a: usize, b: usize) -> bool {
        self.cues
            .iter()
            .any(|c| c.family == Some(Family::Reporter) && c.start >= a && c.end <= b)
    }
}
