//! The lexicon scan: one linear pass that finds every term of `lexicon.tsv` in a text.
//!
//! Terms are matched with an Aho–Corasick automaton (ASCII case-insensitive, plus a second
//! case-sensitive one for terms marked `cs`), filtered for word boundaries, and then
//! resolved leftmost-longest within each of three layers that may overlap one another:
//! labels (where the grammar reads a value), terms (findings, statements, exclusions) and
//! cues (context triggers and terminators). The grammar runs only at label hits, so the
//! cost of extraction grows with the text and the number of hits, never with the number of
//! rules times the text.

use std::sync::OnceLock;

use aho_corasick::{AhoCorasick, AhoCorasickBuilder, MatchKind};

use crate::model::FindingConcept;

/// The lexicon file, compiled into the binary.
pub const LEXICON: &str = include_str!("lexicon.tsv");

/// Which value grammar a label leads to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Label {
    Bp,
    Sbp,
    Dbp,
    Hr,
    HrWeak,
    HrRhythm,
    Rr,
    Spo2,
    Temp,
    TempWeak,
    Weight,
    WeightAdm,
    WeightDis,
    WeightSeries,
    TargetWeight,
    /// `target ~69 kg`: a target that is a weight only when a weight unit follows.
    TargetWeak,
    Height,
    Jvp,
    Jvd,
    Io,
    Fb,
    Uo,
    UoWeak,
    UoPassed,
    Lvef,
    Bnp,
    NtProbnp,
    Creat,
    Urea,
    Bun,
    Na,
    K,
    Lactate,
    Hb,
    Nyha,
    NyhaWeak,
    Crt,
    Gcs,
    Amts,
}

/// The polarity a finding term carries by itself.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Polarity {
    Present,
    Absent,
    /// "JVP not seen": neither present nor absent.
    Unassessable,
    /// "3 pillows": orthopnoea when a count of two or more is given.
    Pillows,
    /// "added sounds": S3 (or crackles, in a chest context), present unless negated.
    Added,
    /// `HS`, `heart sounds`, `S1`: the lead of a heart-sound shorthand (`HS I+II+0`). The
    /// scan turns it into a present or absent term over the whole shorthand, or drops it.
    HeartSounds,
}

/// Context cue families (ConText).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Family {
    Negation,
    Pseudo,
    Possibility,
    Hypothetical,
    Historical,
    Experiencer,
    Reporter,
    Current,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Direction {
    Forward,
    Backward,
    Both,
}

/// Statement keys of the lexicon.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StatementKey {
    HeartFailure,
    Cardiomyopathy,
    HfType,
    Acuity,
    VolumeStatus,
    ProfileWord,
    Hypertension,
    Ckd,
    LvFunction,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    Label(Label),
    Finding(FindingConcept, Polarity),
    Cue(Family, Direction),
    Terminator,
    Statement(StatementKey, &'static str),
    Exclude,
}

impl Kind {
    fn layer(self) -> usize {
        match self {
            Kind::Label(_) => 0,
            Kind::Finding(..) | Kind::Statement(..) | Kind::Exclude => 1,
            Kind::Cue(..) | Kind::Terminator => 2,
        }
    }
}

/// One lexicon entry.
#[derive(Debug, Clone)]
pub struct Term {
    pub text: &'static str,
    pub kind: Kind,
}

/// One term found in a text.
#[derive(Debug, Clone, Copy)]
pub struct Hit {
    pub start: usize,
    pub end: usize,
    pub kind: Kind,
}

struct Compiled {
    terms: Vec<Term>,
    insensitive: AhoCorasick,
    insensitive_ids: Vec<usize>,
    sensitive: AhoCorasick,
    sensitive_ids: Vec<usize>,
}

fn parse_label(s: &str) -> Option<Label> {
    use Label::*;
    Some(match s {
        "bp" => Bp,
        "sbp" => Sbp,
        "dbp" => Dbp,
        "hr" => Hr,
        "hr_weak" => HrWeak,
        "hr_rhythm" => HrRhythm,
        "rr" => Rr,
        "spo2" => Spo2,
        "temp" => Temp,
        "temp_weak" => TempWeak,
        "weight" => Weight,
        "weight_adm" => WeightAdm,
        "weight_dis" => WeightDis,
        "weight_series" => WeightSeries,
        "target_weight" => TargetWeight,
        "target_weak" => TargetWeak,
        "height" => Height,
        "jvp" => Jvp,
        "jvd" => Jvd,
        "io" => Io,
        "fb" => Fb,
        "uo" => Uo,
        "uo_weak" => UoWeak,
        "uo_passed" => UoPassed,
        "lvef" => Lvef,
        "bnp" => Bnp,
        "ntprobnp" => NtProbnp,
        "creat" => Creat,
        "urea" => Urea,
        "bun" => Bun,
        "na" => Na,
        "k" => K,
        "lactate" => Lactate,
        "hb" => Hb,
        "nyha" => Nyha,
        "nyha_weak" => NyhaWeak,
        "crt" => Crt,
        "gcs" => Gcs,
        "amts" => Amts,
        _ => return None,
    })
}

fn parse_kind(fields: &[&'static str]) -> Option<Kind> {
    let arg = |i: usize| fields.get(i).copied().unwrap_or("");
    Some(match arg(1) {
        "label" => Kind::Label(parse_label(arg(2))?),
        "finding" => {
            let polarity = match arg(3) {
                "present" => Polarity::Present,
                "absent" => Polarity::Absent,
                "unassessable" => Polarity::Unassessable,
                "pillows" => Polarity::Pillows,
                "added" => Polarity::Added,
                "sounds" => Polarity::HeartSounds,
                _ => return None,
            };
            Kind::Finding(FindingConcept::from_name(arg(2))?, polarity)
        }
        "trigger" => {
            let family = match arg(2) {
                "negation" => Family::Negation,
                "pseudo" => Family::Pseudo,
                "possibility" => Family::Possibility,
                "hypothetical" => Family::Hypothetical,
                "historical" => Family::Historical,
                "experiencer" => Family::Experiencer,
                "reporter" => Family::Reporter,
                "current" => Family::Current,
                _ => return None,
            };
            let dir = match arg(3) {
                "forward" => Direction::Forward,
                "backward" => Direction::Backward,
                "both" => Direction::Both,
                _ => return None,
            };
            Kind::Cue(family, dir)
        }
        "terminator" => Kind::Terminator,
        "exclude" => Kind::Exclude,
        "statement" => {
            let key = match arg(2) {
                "heart_failure" => StatementKey::HeartFailure,
                "cardiomyopathy" => StatementKey::Cardiomyopathy,
                "hf_type" => StatementKey::HfType,
                "acuity" => StatementKey::Acuity,
                "volume_status" => StatementKey::VolumeStatus,
                "profile_word" => StatementKey::ProfileWord,
                "hypertension" => StatementKey::Hypertension,
                "ckd" => StatementKey::Ckd,
                "lv_function" => StatementKey::LvFunction,
                _ => return None,
            };
            Kind::Statement(key, arg(3))
        }
        _ => return None,
    })
}

/// Parse the lexicon; a malformed line is a programming error caught by the tests.
pub fn parse(source: &'static str) -> Result<Vec<(Term, bool)>, String> {
    let mut out = Vec::new();
    for (n, line) in source.lines().enumerate() {
        if line.trim().is_empty() || line.starts_with('#') {
            continue;
        }
        let fields: Vec<&'static str> = line.split('\t').collect();
        let kind =
            parse_kind(&fields).ok_or_else(|| format!("lexicon line {}: {line:?}", n + 1))?;
        let case_sensitive = fields.last() == Some(&"cs");
        out.push((
            Term {
                text: fields[0],
                kind,
            },
            case_sensitive,
        ));
    }
    Ok(out)
}

fn compiled() -> &'static Compiled {
    static C: OnceLock<Compiled> = OnceLock::new();
    C.get_or_init(|| {
        let entries = parse(LEXICON).unwrap_or_default();
        let mut terms = Vec::new();
        let (mut ins, mut ins_ids, mut sen, mut sen_ids) = (vec![], vec![], vec![], vec![]);
        for (term, cs) in entries {
            let id = terms.len();
            if cs {
                sen.push(term.text);
                sen_ids.push(id);
            } else {
                ins.push(term.text);
                ins_ids.push(id);
            }
            terms.push(term);
        }
        let build = |pats: &[&str], ci: bool| {
            AhoCorasickBuilder::new()
                .ascii_case_insensitive(ci)
                .match_kind(MatchKind::Standard)
                .build(pats)
                .expect("lexicon automaton builds")
        };
        Compiled {
            insensitive: build(&ins, true),
            insensitive_ids: ins_ids,
            sensitive: build(&sen, false),
            sensitive_ids: sen_ids,
            terms,
        }
    })
}

/// All lexicon terms (for the benchmark's regex floor and for documentation).
pub fn terms() -> &'static [Term] {
    &compiled().terms
}

fn is_word(c: char) -> bool {
    c.is_alphanumeric()
}

fn boundary_ok(text: &str, start: usize, end: usize, kind: Kind) -> bool {
    let term = &text[start..end];
    let first = term.chars().next().unwrap_or(' ');
    let last = term.chars().last().unwrap_or(' ');
    if is_word(first) {
        if let Some(prev) = text[..start].chars().next_back() {
            if is_word(prev) {
                return false;
            }
        }
    }
    if is_word(last) {
        if let Some(next) = text[end..].chars().next() {
            let digit_ok = matches!(kind, Kind::Label(_)) && next.is_ascii_digit();
            if is_word(next) && !digit_ok {
                return false;
            }
        }
    }
    true
}

/// The heart sounds written after a lead (`HS`, `heart sounds`, or `S1` itself), as template
/// shorthand lists them: the first and second sound, then `0` or `nil` for no added sound,
/// or the third sound (03 §3.1 and 04 §4.3 of the domain reference: `HS I+II+0` is a
/// negative; 02 §2.2: `HS I+II+S3`). Spacing, separators and Roman or Arabic numerals vary
/// (common practice, no source). Gives the span of the term and its polarity: absent over
/// the whole shorthand, present over the whole shorthand, or over the third sound alone when
/// a question mark stands before it (`HS I + II + ?S3`), so the mark can query it. An S4,
/// or anything else after the second sound, gives nothing.
fn heart_sounds(text: &str, start: usize, end: usize) -> Option<(usize, usize, Polarity)> {
    static FIRST: OnceLock<regex::Regex> = OnceLock::new();
    static REST: OnceLock<regex::Regex> = OnceLock::new();
    let first = crate::extract::numbers::cached(
        &FIRST,
        r"(?i)^[ \t]*[:=\-]?[ \t]*(?:s[ \t]?)?(?:1|i)(?-u:\b)",
    );
    let rest = crate::extract::numbers::cached(
        &REST,
        r"(?i)^[ \t]*(?:[+,&/]|and(?-u:\b))?[ \t]*(?:s[ \t]?)?(?:2|ii)(?-u:\b)[ \t]*(?:[+,&/]|and(?-u:\b))?[ \t]*(?:(?P<none>0|nil|none)(?-u:\b)|(?P<q>\?[ \t]*)?(?P<third>(?:s[ \t]?)?(?:3|iii))(?-u:\b))",
    );
    let mut at = end;
    if !text[start..end].ends_with('1') {
        at += first.find(text.get(at..)?)?.end();
    }
    let c = rest.captures(text.get(at..)?)?;
    if let Some(none) = c.name("none") {
        return Some((start, at + none.end(), Polarity::Absent));
    }
    let third = c.name("third")?;
    let from = if c.name("q").is_some() {
        at + third.start()
    } else {
        start
    };
    Some((from, at + third.end(), Polarity::Present))
}

/// Scan a text for every lexicon term, resolved per layer.
pub fn scan(text: &str) -> Vec<Hit> {
    let c = compiled();
    let mut raw: Vec<Hit> = Vec::new();
    let mut push = |m: aho_corasick::Match, ids: &[usize]| {
        let term = &c.terms[ids[m.pattern().as_usize()]];
        // Matches may land inside a multi-byte character only for non-ASCII patterns that
        // share a prefix byte; such matches are not on char boundaries and are dropped.
        if text.is_char_boundary(m.start())
            && text.is_char_boundary(m.end())
            && boundary_ok(text, m.start(), m.end(), term.kind)
        {
            raw.push(Hit {
                start: m.start(),
                end: m.end(),
                kind: term.kind,
            });
        }
    };
    for m in c.insensitive.find_overlapping_iter(text) {
        push(m, &c.insensitive_ids);
    }
    for m in c.sensitive.find_overlapping_iter(text) {
        push(m, &c.sensitive_ids);
    }
    raw.retain_mut(|h| match h.kind {
        Kind::Finding(concept, Polarity::HeartSounds) => match heart_sounds(text, h.start, h.end) {
            Some((start, end, polarity)) => {
                *h = Hit {
                    start,
                    end,
                    kind: Kind::Finding(concept, polarity),
                };
                true
            }
            None => false,
        },
        _ => true,
    });
    raw.sort_by(|a, b| {
        (a.kind.layer(), a.start, std::cmp::Reverse(a.end)).cmp(&(
            b.kind.layer(),
            b.start,
            std::cmp::Reverse(b.end),
        ))
    });
    let mut out = Vec::with_capacity(raw.len());
    let mut layer_end = [0usize; 3];
    for h in raw {
        let l = h.kind.layer();
        if h.start >= layer_end[l] {
            layer_end[l] = h.end;
            out.push(h);
        }
    }
    out.sort_by_key(|h| (h.start, h.kind.layer()));
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_lexicon_line_parses() {
        let parsed = parse(LEXICON).expect("lexicon parses");
        assert!(parsed.len() > 500);
    }

    #[test]
    fn longest_term_wins_within_a_layer_and_layers_overlap() {
        let text = "JVP not raised, no PND";
        let hits = scan(text);
        let kinds: Vec<_> = hits.iter().map(|h| &text[h.start..h.end]).collect();
        assert!(kinds.contains(&"JVP"), "{kinds:?}");
        assert!(kinds.contains(&"JVP not raised"), "{kinds:?}");
        assert!(kinds.contains(&"PND"), "{kinds:?}");
    }

    #[test]
    fn word_boundaries_are_respected_but_labels_may_touch_digits() {
        let text = "HR112, chronic, CHRONIC";
        let hits = scan(text);
        let labels: Vec<_> = hits
            .iter()
            .filter(|h| matches!(h.kind, Kind::Label(_)))
            .map(|h| &text[h.start..h.end])
            .collect();
        assert_eq!(labels, vec!["HR"]);
    }

    #[test]
    fn case_sensitive_terms_match_only_as_written() {
        // Every `cs` term carries a capital, or matching "as written" would be pointless.
        let parsed = parse(LEXICON).expect("lexicon parses");
        for (term, cs) in &parsed {
            if *cs {
                assert!(
                    term.text.chars().any(|c| c.is_ascii_uppercase()),
                    "{}",
                    term.text
                );
            }
        }
        let text = "T 36.8, t 4";
        let labels: Vec<_> = scan(text)
            .into_iter()
            .filter(|h| matches!(h.kind, Kind::Label(Label::TempWeak)))
            .map(|h| &text[h.start..h.end])
            .collect();
        assert_eq!(labels, vec!["T"]);
    }
}
