//! Findings and statements from the lexicon's terms, and the patient's age and sex.
//!
//! A finding term has a polarity: `present` ("bibasal creps"), `absent` ("chest clear": the
//! term itself says the sign is not there), `unassessable` ("JVP not seen": neither), or one
//! of two terms that need a look at their neighbours: a pillow count (orthopnoea when two or
//! more) and "added sounds" (crackles on a chest line, an S3 on a heart line).

use std::sync::OnceLock;

use regex::Regex;

use super::lexicon::{Kind, Polarity, StatementKey};
use super::measure::Output;
use super::numbers::parse_number;
use super::Doc;
use crate::context::Target;
use crate::model::{Assertion, Finding, FindingConcept, FindingDetail, Statement, StatementKind};

use super::numbers::cached as re;

/// The text of the same line within `before` bytes before and `after` bytes after a range,
/// on character boundaries.
/// The words after a finding up to the next clause break.
fn clause_after<'t>(doc: &Doc<'t>, end: usize, max: usize) -> &'t str {
    let (_, b) = doc.window(end, end, 0, max);
    let s = &doc.text[end..b];
    let cut = s.find(['.', ';', ',', '(']).unwrap_or(s.len());
    &s[..cut]
}

fn clause_before<'t>(doc: &Doc<'t>, start: usize, max: usize) -> &'t str {
    let (a, _) = doc.window(start, start, max, 0);
    let s = &doc.text[a..start];
    let cut = s.rfind(['.', ';', ',', ')']).map(|i| i + 1).unwrap_or(0);
    &s[cut..]
}

/// Whether the clause of a swelling term gives it a local cause: surgery, a wound or
/// dressing, a clot, an infection or an injury of one limb.
fn local_swelling(doc: &Doc, start: usize, end: usize) -> bool {
    static LOCAL: OnceLock<Regex> = OnceLock::new();
    let local = re(
        &LOCAL,
        r"(?i)(?-u:\b)(?:post[- ]?op(?:erative)?|surgical|wound|dressings?|graft|harvest|\??dvt|thrombosis|cellulitis|infected|abscess|fracture|injury|trauma|sprain|haematoma|hematoma|bite|bursitis|gout|baker'?s cyst)(?-u:\b)",
    );
    let (before, after) = (clause_before(doc, start, 40), clause_after(doc, end, 40));
    let both = |t: &str| {
        let t = t.to_ascii_lowercase();
        t.contains("bilat") || t.contains("both") || t.contains("symmetric")
    };
    (local.is_match(before) || local.is_match(after)) && !both(before) && !both(after)
}

/// Whether a term stands in the bracket of a drug change's reason: `stopped 18/11
/// (bradycardia, hypotension)`, `held (hypotension)`, `reduced due to hypotension`. Common
/// practice, no source.
fn drug_change_reason(doc: &Doc, start: usize) -> bool {
    static REASON: OnceLock<Regex> = OnceLock::new();
    let reason = re(
        &REASON,
        r"(?i)(?-u:\b)(?:stopped|held|withheld|omitted|discontinued|d/c'?d|reduced|decreased|switched|changed|not\s+restarted|intolerant|intolerance)(?-u:\b)[^()\n.;]{0,24}(?:\([^()\n]*|(?-u:\b)(?:due\s+to|because\s+of|owing\s+to|for)\s+[^()\n.;]*)$",
    );
    let (from, _) = doc.window(start, start, 64, 0);
    reason.is_match(&doc.text[from..start])
}

fn edema_detail(doc: &Doc, start: usize, end: usize, d: &mut FindingDetail) {
    static GRADE: OnceLock<Regex> = OnceLock::new();
    static LEVEL: OnceLock<Regex> = OnceLock::new();
    let grade = re(
        &GRADE,
        r"(?i)(?:(?-u:\b)([1-4])\s?\+|(?:^|[\s(])(\+{1,4})(?:[\s),.]|$)|(?-u:\b)(trace)(?-u:\b)|grade\s?([1-4])(?-u:\b))",
    );
    let level = re(
        &LEVEL,
        r"(?i)(?-u:\b)(?:to|up to|extending to|reaching)\s+(?:the\s+)?(mid[- ]?shins?|mid[- ]?calf|mid[- ]?calves|mid[- ]?thighs?|ankles?|shins?|calf|calves|knees?|thighs?|groin|hips?|sacrum|abdomen|waist|abdominal wall)(?-u:\b)|(?-u:\b)(sacral|ankle|pedal|shin|knee|thigh)(?-u:\b)",
    );
    // Grade words (03 §3.3: trace/minimal, mild, moderate, severe/gross), written right
    // before the term ("mild pitting oedema", "moderate bilateral ankle oedema") or right
    // after it as a slot ("Oedema: moderate").
    static WORD_BEFORE: OnceLock<Regex> = OnceLock::new();
    static WORD_AFTER: OnceLock<Regex> = OnceLock::new();
    let word_before = re(
        &WORD_BEFORE,
        r"(?i)(?-u:\b)(trace|minimal|mild|moderate|severe|gross|massive)(?:\s+(?:pitting|bilateral|bilat|peripheral|ankle|leg|pedal|lower limb|lower leg|dependent))*\s*$",
    );
    let word_after = re(
        &WORD_AFTER,
        r"(?i)^\s*(?:[:=–-]\s*)?(trace|minimal|mild|moderate|severe|gross|massive)(?-u:\b)",
    );
    let before = clause_before(doc, start, 30);
    let after = clause_after(doc, end, 60);
    let worded = word_before
        .captures(before)
        .or_else(|| word_after.captures(after))
        .map(|c| match c[1].to_ascii_lowercase().as_str() {
            "trace" | "minimal" => 0.5,
            "mild" => 1.0,
            "moderate" => 2.0,
            _ => 4.0,
        });
    // `+leg swelling`: a plus glued to the term marks it positive, not graded (common
    // practice of US notes, no source); `++ oedema`, with a space, is a grade.
    let before_graded = before.trim_end_matches('+');
    for s in [before_graded, after] {
        if d.grade.is_none() {
            if let Some(c) = grade.captures(s) {
                d.grade = if let Some(n) = c.get(1).or(c.get(4)) {
                    parse_number(n.as_str())
                } else if let Some(p) = c.get(2) {
                    Some(p.as_str().len() as f64)
                } else {
                    Some(0.5)
                };
            }
        }
    }
    // Non-pitting swelling is not graded (03 §3.3).
    let (a, _) = doc.window(start, end, 12, 0);
    let non_pitting = doc.text[a..end]
        .to_ascii_lowercase()
        .contains("non-pitting");
    if d.grade.is_none() && !non_pitting {
        d.grade = worded;
    }
    let term = &doc.text[start..end];
    for s in [after, term, before] {
        if d.level.is_none() {
            if let Some(c) = level.captures(s) {
                let l = c
                    .get(1)
                    .or(c.get(2))
                    .map(|m| m.as_str().to_ascii_lowercase())
                    .unwrap_or_default();
                d.level = Some(normalise_level(&l));
            }
        }
    }
}

fn normalise_level(l: &str) -> String {
    let l = l.replace(' ', "-");
    let l = l.trim_end_matches('s');
    match l {
        "sacral" => "sacrum".into(),
        "ankle" | "pedal" => "ankles".into(),
        "shin" | "mid-shin" | "midshin" => "mid-shin".into(),
        "knee" => "knees".into(),
        "thigh" => "thighs".into(),
        "calve" | "calf" | "mid-calve" | "mid-calf" => "mid-calf".into(),
        other => other.to_string(),
    }
}

fn crackles_detail(doc: &Doc, start: usize, end: usize, d: &mut FindingDetail) {
    static LEVEL: OnceLock<Regex> = OnceLock::new();
    let level = re(
        &LEVEL,
        r"(?i)(?-u:\b)(bibasal|bibasilar|basal|bases|mid[- ]?zones?|midzones?|throughout|widespread|diffuse|apices|apex|upper zones?|half way up|halfway up)(?-u:\b)",
    );
    let (a, b) = doc.window(start, end, 30, 50);
    if let Some(c) = level.captures(&doc.text[a..b]) {
        let l = c[1].to_ascii_lowercase();
        d.level = Some(
            if l.starts_with("bibas") || l.starts_with("bas") || l == "bases" {
                "bases"
            } else if l.contains("mid") || l.contains("half") {
                "mid-zones"
            } else if l.starts_with("api") || l.starts_with("apex") || l.starts_with("upper") {
                "apices"
            } else {
                "throughout"
            }
            .to_string(),
        );
    }
}

fn trend_of(doc: &Doc, end: usize) -> Option<String> {
    // "crackles which cleared on coughing", "creps clear with cough": secretions, gone on
    // re-examination, so not there now (common practice, no source).
    static COUGH: OnceLock<Regex> = OnceLock::new();
    let cough = re(
        &COUGH,
        r"(?i)(?-u:\b)(not\s+|n't\s+|never\s+|without\s+)?clear(?:ed|s|ing)?\s+(?:on|with|after|by)\s+(?:a\s+)?cough",
    );
    let (_, b) = doc.window(end, end, 0, 48);
    let sentence = &doc.text[end..b];
    let sentence = &sentence[..sentence.find(['.', ';', '\n']).unwrap_or(sentence.len())];
    if let Some(c) = cough.captures(sentence) {
        if c.get(1).is_none() {
            return Some("resolved".to_string());
        }
    }
    static TREND: OnceLock<Regex> = OnceLock::new();
    let t = re(
        &TREND,
        r"(?i)(?-u:\b)(improving|improved|resolving|resolved|worse|worsening|better|increasing|increased|decreasing|reduced|less|more|unchanged|persistent|ongoing)(?-u:\b)",
    );
    let after = clause_after(doc, end, 40);
    let c = t.captures(after)?;
    let word = c[1].to_ascii_lowercase();
    // "not improved", "no better", "not resolving": the change did not happen.
    let lead = after[..c.get(1).map_or(0, |m| m.start())].to_ascii_lowercase();
    let lead = lead.trim_end();
    if lead.ends_with("not") || lead.ends_with("no") || lead.ends_with("nil") {
        return Some("unchanged".to_string());
    }
    Some(word)
}

/// How many pillows a pillow term counts, and whether the words say "extra".
fn pillow_count(doc: &Doc, start: usize) -> (Option<u32>, bool) {
    static NUM: OnceLock<Regex> = OnceLock::new();
    let n = re(
        &NUM,
        r"(?i)(\d+|one|two|three|four|five|six|several|multiple|extra|more|many|a few)\s*(?:-\s*)?(?:extra\s+|more\s+)?$",
    );
    let before = clause_before(doc, start, 24);
    match n.captures(before.trim_end_matches(['-', ' '])) {
        Some(c) => {
            let w = c[1].to_ascii_lowercase();
            match parse_number(&w) {
                Some(v) => (Some(v as u32), false),
                None => (None, true),
            }
        }
        None => {
            // "had to add a pillow", "needs another pillow": more pillows than before.
            static ADD: OnceLock<Regex> = OnceLock::new();
            let add = re(
                &ADD,
                r"(?i)(?:add(?:s|ed|ing)?|need(?:s|ed|ing)?|requir(?:es|ed|ing)|us(?:es|ed|ing))\s+(?:a|an|another|one)\s*(?:extra\s+|more\s+)?$",
            );
            let lower = before.to_ascii_lowercase();
            (None, lower.contains("propped") || add.is_match(before))
        }
    }
}

/// Decide what "added sounds" refers to from the words before it on the line.
fn added_concept(doc: &Doc, start: usize) -> FindingConcept {
    let (a, _) = doc.window(start, start, 48, 0);
    let before = doc.text[a..start].to_ascii_lowercase();
    let chest = [
        "chest",
        "lung",
        "breath",
        "air entry",
        "resp",
        "ae ",
        "auscultation",
    ]
    .iter()
    .filter_map(|w| before.rfind(w))
    .max();
    let heart = ["heart", "hs ", "hs:", "s1", "cvs", "murmur", "cardiac"]
        .iter()
        .filter_map(|w| before.rfind(w))
        .max();
    match (chest, heart) {
        (Some(c), Some(h)) if c > h => FindingConcept::Crackles,
        (Some(_), None) => FindingConcept::Crackles,
        _ => FindingConcept::S3,
    }
}

/// The terms (sorted by start) that start within `before` bytes before `start` and
/// `after` bytes after `end`.
fn near<T: Copy>(
    terms: &[(usize, usize, T, Polarity)],
    start: usize,
    end: usize,
) -> &[(usize, usize, T, Polarity)] {
    let a = terms.partition_point(|t| t.0 + 64 < start);
    let b = terms.partition_point(|t| t.0 < end + 64);
    &terms[a..b.max(a)]
}

/// What a menu's answer says of the label's sign: `Some(true)` present, `Some(false)`
/// absent, `None` nothing certain (not assessed, or a word this reader does not know).
/// Common practice of admission proformas, no source.
fn menu_answer(answer: &str, concept: FindingConcept, d: &mut FindingDetail) -> Option<bool> {
    if let Some(v) = super::menu::yes_no(answer) {
        return Some(v);
    }
    let a = answer
        .trim()
        .trim_end_matches(['.', ';', ','])
        .to_ascii_lowercase();
    let a = a.as_str();
    match concept {
        FindingConcept::PeripheralEdema => {
            static LEVEL: OnceLock<Regex> = OnceLock::new();
            let r = re(
                &LEVEL,
                r"^(?:to\s+)?(?:the\s+)?(sacral|sacrum|ankles?|pedal|mid[- ]?shins?|shins?|mid[- ]?calf|calf|calves|knees?|thighs?|groin|abdomen)$",
            );
            let c = r.captures(a)?;
            d.level = Some(normalise_level(&c[1]));
            Some(true)
        }
        FindingConcept::CoolPeripheries => match a {
            "cool" | "cold" | "clammy" | "mottled" | "cool and clammy" | "cold and clammy" => {
                Some(true)
            }
            "warm" | "warm and well perfused" | "wwp" => Some(false),
            _ => None,
        },
        FindingConcept::Crackles => match a {
            "clear" | "nad" => Some(false),
            _ => None,
        },
        FindingConcept::ProlongedCapRefill => {
            static CRT: OnceLock<Regex> = OnceLock::new();
            let r = re(&CRT, r"^([<>])\s*[2-5]\s*(?:s|sec|secs|seconds)?$");
            let c = r.captures(a)?;
            Some(&c[1] == ">")
        }
        _ => None,
    }
}

/// Findings from finding terms.
pub fn findings(doc: &Doc, out: &mut Output) {
    let terms: Vec<_> = doc
        .hits
        .iter()
        .filter_map(|h| match h.kind {
            Kind::Finding(c, p) => Some((h.start, h.end, c, p)),
            _ => None,
        })
        .collect();
    for &(start, end, mut concept, polarity) in &terms {
        // A bedside sign of an effusion ("dull to percussion", "reduced air entry") with the
        // effusion named after it on the line ("- possible effusion") is read from that
        // name, which carries the writer's certainty.
        if concept == FindingConcept::PleuralEffusion
            && !doc.text[start..end]
                .to_ascii_lowercase()
                .contains("effusion")
            && near(&terms, start, end).iter().any(|&(s, e, c, _)| {
                c == concept
                    && s >= end
                    && s - end < 48
                    && doc.line_at(s) == doc.line_at(start)
                    && doc.text[s..e].to_ascii_lowercase().contains("effusion")
            })
        {
            continue;
        }
        let mut detail = FindingDetail::default();
        // A template menu: the options are not findings, and the label's sign is what the
        // answer says (or what a finding term written in the answer says).
        let menu = doc.engine.menu_at(start).filter(|m| start < m.answer.start);
        let mut menu_present = None;
        if let Some(m) = &menu {
            if start >= m.options.start {
                continue;
            }
            let answered_by_term = terms[terms.partition_point(|t| t.0 < m.answer.start)..]
                .first()
                .is_some_and(|t| t.0 < m.answer.end);
            if answered_by_term {
                continue;
            }
            let answer = doc.text[m.answer.clone()].trim();
            let term_words = doc.text[start..end].rsplit([':', '=']).next().unwrap_or("");
            if term_words.trim().eq_ignore_ascii_case(answer) {
                // The answer is the option the term itself names (`Chest: clear / crackles
                // -> clear`): the term reads as written.
            } else {
                match menu_answer(answer, concept, &mut detail) {
                    Some(present) => menu_present = Some(present),
                    None => continue,
                }
            }
        }
        let present = match polarity {
            _ if menu_present.is_some() => menu_present == Some(true),
            // Resolved by the scan; a lead without its shorthand is no finding.
            Polarity::Unassessable | Polarity::HeartSounds => continue,
            Polarity::Present => true,
            // "drowsy but orientated", "drowsy, oriented x3": the impairment is the finding.
            Polarity::Absent
                if concept == FindingConcept::AlteredMentation
                    && near(&terms, start, end).iter().any(|&(s, e, c, p)| {
                        c == concept
                            && p == Polarity::Present
                            && doc.line_at(s) == doc.line_at(start)
                            && (s.abs_diff(end) < 40 || e.abs_diff(start) < 40)
                    }) =>
            {
                continue
            }
            Polarity::Absent => false,
            Polarity::Added => {
                concept = added_concept(doc, start);
                true
            }
            Polarity::Pillows => {
                let (count, extra) = pillow_count(doc, start);
                // A pillow count next to an orthopnoea term belongs to that term.
                let near_term = near(&terms, start, end).iter().any(|&(s, e, c, p)| {
                    c == FindingConcept::Orthopnea
                        && p != Polarity::Pillows
                        && (s.abs_diff(end) < 24 || e.abs_diff(start) < 24)
                });
                if near_term {
                    continue;
                }
                // "two pillows, which is his habit", "always slept on three pillows (neck)":
                // pillows for another reason or from long habit are no orthopnoea (common
                // practice, no source).
                static HABIT: OnceLock<Regex> = OnceLock::new();
                let habit = re(
                    &HABIT,
                    r"(?i)(?-u:\b)(?:habit|habitual|habitually|always|usual|usually|for comfort|for years|long[- ]?standing|(?:his|her|their) back|(?:his|her|their) neck|reflux|heartburn|out of preference|preference)(?-u:\b)",
                );
                let (a, b) = doc.window(start, end, 40, 50);
                let after = &doc.text[end..b];
                let after = &after[..after.find(['.', ';']).unwrap_or(after.len())];
                let before = &doc.text[a..start];
                let before = &before[before.rfind(['.', ';']).map_or(0, |i| i + 1)..];
                if habit.is_match(after) || habit.is_match(before) {
                    continue;
                }
                detail.pillows = count;
                match count {
                    Some(n) => n >= 2,
                    None => extra,
                }
            }
        };
        // "R leg post-op swelling with dressing", "swollen L calf ?DVT": swelling with a
        // local cause is not the bilateral oedema of congestion (domain 03 §3.3: one-sided
        // swelling suggests a local cause rather than HF).
        if concept == FindingConcept::PeripheralEdema && present && local_swelling(doc, start, end)
        {
            continue;
        }
        match concept {
            FindingConcept::PeripheralEdema => edema_detail(doc, start, end, &mut detail),
            FindingConcept::Crackles => crackles_detail(doc, start, end, &mut detail),
            FindingConcept::Orthopnea if detail.pillows.is_none() => {
                static P: OnceLock<Regex> = OnceLock::new();
                let p = re(&P, r"(?i)(\d|one|two|three|four|five)[- ]pillows?");
                let (a, b) = doc.window(start, end, 20, 30);
                if let Some(c) = p.captures(&doc.text[a..b]) {
                    detail.pillows = parse_number(&c[1]).map(|v| v as u32);
                }
            }
            _ => {}
        }
        if present {
            detail.trend = trend_of(doc, end);
        }
        // Template slots: `Oedema: nil`, `Ascites: -`, `Crackles: none`.
        let slot_negative = {
            static SLOT: OnceLock<Regex> = OnceLock::new();
            let r = re(
                &SLOT,
                r"(?i)^\s*[:=]\s*(?:(?:nil|none|no|neg|negative|absent|nad|not present)(?-u:\b)|[-–](?:\s|$|[,.;]))",
            );
            let line_end = doc.line_at(end).end;
            r.is_match(&doc.text[end..line_end.max(end)])
        };
        let present = present && (menu_present.is_some() || !slot_negative);
        // An empty template slot (`Oedema: [ ]`, `JVP: ___`) documents nothing.
        {
            static EMPTY: OnceLock<Regex> = OnceLock::new();
            let r = re(&EMPTY, r"^\s*[:=]\s*(?:\[\s*\]|_{2,}|\.{3}|\?\s*$)");
            let line_end = doc.line_at(end).end;
            if r.is_match(&doc.text[end..line_end.max(end)]) {
                continue;
            }
            // An unticked box, after the term (`PND [ ]`) or opening its line (`[ ] PND`),
            // documents nothing; a ticked one (`[x]`) leaves the term as written.
            static AFTER: OnceLock<Regex> = OnceLock::new();
            static BEFORE: OnceLock<Regex> = OnceLock::new();
            let after = re(&AFTER, r"^[ \t]*(?:\[[ \t]*\]|\([ \t]*\)|☐)");
            let before = re(&BEFORE, r"^[ \t]*(?:[-*•][ \t]*)?(?:\[[ \t]*\]|☐)[ \t]*$");
            let line_start = doc.line_at(start).start;
            if after.is_match(&doc.text[end..line_end.max(end)])
                || before.is_match(&doc.text[line_start..start])
            {
                continue;
            }
        }
        // A grade, level or count written beside the term (not a level the term itself
        // names, as in "ankle swelling").
        let term_lower = doc.text[start..end].to_ascii_lowercase();
        let own_level = detail.level.as_deref().is_some_and(|l| {
            let root = l.trim_end_matches('s');
            term_lower.contains(root.split('-').next_back().unwrap_or(root))
        });
        let quantified = detail.grade.is_some()
            || (detail.level.is_some() && !own_level)
            || detail.pillows.is_some();
        let ctx = doc.engine.context(start, end, Target::Finding, quantified);
        let assertion = if present {
            ctx.assertion
        } else {
            // An absent term stays absent under a list negation ("no orthopnoea, chest
            // clear"); only uncertainty and conditions change it.
            match ctx.assertion {
                Assertion::Present | Assertion::Absent => Assertion::Absent,
                other => other,
            }
        };
        // "resolved", "gone" after a present term: the sign was there and is not now.
        let assertion = if present
            && assertion == Assertion::Present
            && matches!(detail.trend.as_deref(), Some("resolved"))
        {
            Assertion::Absent
        } else {
            assertion
        };
        if present && polarity == Polarity::Pillows && assertion == Assertion::Present {
            // "sleeps on one pillow" documents no orthopnoea.
        }
        out.findings.push(Finding {
            concept,
            assertion: if !present && polarity == Polarity::Pillows {
                match assertion {
                    Assertion::Present => Assertion::Absent,
                    a => a,
                }
            } else {
                assertion
            },
            experiencer: ctx.experiencer,
            // `Bisoprolol - stopped 18/11 (bradycardia, hypotension)`: the reason a drug
            // was stopped or changed is an event of the past, not today's examination.
            temporality: if drug_change_reason(doc, start) {
                crate::model::Temporality::Historical
            } else {
                ctx.temporality
            },
            text: doc.text[start..end].to_string(),
            span: doc.index.span(start, end),
            detail,
            cues: ctx.cues,
            section: doc.section_of(start),
            episode: doc.episode_of(start),
        });
    }
}

/// Words allowed between an acuity word and the heart-failure term it qualifies.
const ACUITY_GAP_WORDS: &[&str] = &[
    "decompensated",
    "congestive",
    "left",
    "right",
    "ventricular",
    "biventricular",
    "cardiac",
    "heart",
    "on",
    "of",
    "with",
    "severe",
    "worsening",
    "known",
    "systolic",
    "diastolic",
    "combined",
    "exacerbation",
    "decompensation",
    // "acute decompensation of chronic heart failure": the other acuity word may stand
    // between, and combine_acuity joins the two.
    "acute",
    "chronic",
    "a",
    "background",
    "hf",
    "ccf",
    "chf",
    "-",
    "–",
    ":",
    "(",
    ")",
];

fn gap_ok(doc: &Doc, a: usize, b: usize) -> bool {
    if a > b {
        return false;
    }
    let gap = &doc.text[a..b];
    if gap.len() > 40 || gap.contains(['.', ';', '\n']) {
        return false;
    }
    // "acute on chronic diastolic (congestive) heart failure": ICD-10-CM index wording puts a
    // parenthesised word between the type and the noun.
    gap.split(|c: char| c.is_whitespace() || matches!(c, ',' | '(' | ')'))
        .filter(|w| !w.is_empty())
        .all(|w| ACUITY_GAP_WORDS.contains(&w.to_ascii_lowercase().as_str()))
}

/// "HFpEF (EF 60%), AF. Chronic, stable until this month.": a sentence that opens with
/// "chronic" and names nothing of its own ("Chronic," "Chronic and stable", "Chronic -")
/// continues the heart failure named in the sentence before it (within 200 bytes).
/// Common practice, no source.
fn elided_chronic(doc: &Doc, hf: &[(usize, usize)], start: usize, end: usize) -> bool {
    let before = &doc.text[doc.text.floor_char_boundary(start.saturating_sub(200))..start];
    let trimmed = before.trim_end_matches([' ', '\t']);
    // Opens a sentence: after a full stop, a semicolon or the start of a line.
    if !(trimmed.is_empty() || trimmed.ends_with(['.', ';', '\n'])) {
        return false;
    }
    let after = doc.text[end..].trim_start_matches([' ', '\t']);
    let lower = after
        .get(..after.len().min(12))
        .unwrap_or("")
        .to_ascii_lowercase();
    if !(after.starts_with([',', '-', '.', ';', '\n'])
        || lower.starts_with("and ")
        || lower.starts_with("stable"))
    {
        return false;
    }
    // The sentence before: back to the previous full stop or line start before it.
    let prev = trimmed.trim_end_matches(['.', ';', '\n']);
    let from = prev.rfind(['.', ';', '\n']).map_or(0, |i| i + 1);
    let lo = start - before.len() + from;
    hf_near(hf, lo, start)
        .iter()
        .any(|&(s, e)| s >= lo && e <= start)
}

fn hf_near(hf: &[(usize, usize)], start: usize, end: usize) -> &[(usize, usize)] {
    let a = hf.partition_point(|t| t.0 + 64 < start);
    let b = hf.partition_point(|t| t.0 < end + 64);
    &hf[a..b.max(a)]
}

/// `HF` written as an oxygen device: `on HF 50L/min FiO2 0.6`, `HF 40 L 35%`, `HF at 60
/// lpm`. A flow in litres, a percentage or an FiO2 right after the bare abbreviation makes
/// it high-flow oxygen, not heart failure (domain 03, abbreviations: "HF 40 L" = oxygen;
/// domain 05: oxygen flow in L/min).
fn is_high_flow_oxygen(doc: &Doc, start: usize, end: usize) -> bool {
    if !doc.text[start..end].eq_ignore_ascii_case("hf") {
        return false;
    }
    let (_, lim) = doc.window(start, end, 0, 24);
    let after = doc.text[end..lim].to_ascii_lowercase();
    let after = after.trim_start_matches([' ', '\t', ':', '@']);
    let after = after.strip_prefix("at ").unwrap_or(after).trim_start();
    if after.starts_with("fio2") {
        return true;
    }
    let digits = after
        .bytes()
        .take_while(|b| b.is_ascii_digit() || *b == b'.')
        .count();
    if digits == 0 {
        return false;
    }
    let unit = after[digits..].trim_start();
    unit.starts_with('%')
        || unit.starts_with("lpm")
        || unit.starts_with("l/m")
        || unit.starts_with("litre")
        || unit.starts_with("liter")
        || (unit.starts_with('l') && !unit[1..].starts_with(|c: char| c.is_ascii_alphabetic()))
}

/// Whether the words before a volume term say the patient is short of that state:
/// `approaching euvolaemia`, `nearly euvolaemic`, `close to dry weight`, `towards euvolaemia`.
fn short_of(doc: &Doc, start: usize) -> bool {
    static NEAR: OnceLock<Regex> = OnceLock::new();
    let near = re(
        &NEAR,
        r"(?i)(?-u:\b)(?:approaching|nearing|near|nearly|almost|close\s+to|closer\s+to|towards?|getting\s+to|moving\s+towards?|heading\s+towards?|not\s+yet|not\s+quite)\s*$",
    );
    near.is_match(clause_before(doc, start, 32))
}

/// A volume word that reports an image, not the clinician's view of the patient: `no
/// fluid overload on CXR`, `fluid overload on chest x-ray per radiology`, `CXR: no
/// evidence of fluid overload`. The stated volume status is the clinician's bedside
/// judgement of the whole patient (domain 02, the clinician's stated volume status);
/// common practice, no source, for imaging wording.
fn on_imaging(doc: &Doc, start: usize, end: usize) -> bool {
    const IMAGING: &[&str] = &[
        "cxr",
        "x-ray",
        "xray",
        "x ray",
        "radiograph",
        "radiolog",
        "imaging",
        "chest film",
        " film",
        " ct ",
        "ct chest",
        "ultrasound",
        "lung us",
        "pocus",
        "echo",
    ];
    let (from, lim) = doc.window(start, end, 32, 40);
    // Within the term's own sentence.
    let after = doc.text[end..lim].to_ascii_lowercase();
    let after = after.split(['.', ';']).next().unwrap_or("");
    let before = doc.text[from..start].to_ascii_lowercase();
    let before = before.rsplit(['.', ';']).next().unwrap_or("");
    let after_ok = after
        .trim_start()
        .strip_prefix("on ")
        .or_else(|| after.trim_start().strip_prefix("per "))
        .or_else(|| after.trim_start().strip_prefix("seen on "))
        .is_some_and(|rest| IMAGING.iter().any(|w| format!(" {rest} ").contains(w)));
    // `CXR: no evidence of fluid overload`: the image word opens the term's own clause.
    let padded = format!(" {before}");
    let before_ok = IMAGING.iter().any(|w| {
        padded.rfind(w).is_some_and(|i| {
            let gap = &padded[i + w.len()..];
            !gap.contains(',') && !gap.contains(" and ") && !gap.contains(" but ")
        })
    });
    after_ok || after.contains("per radiolog") || before_ok
}

/// Whether the note corrects the label at `start..end` in the same sentence: `recorded as
/// "HFpEF" - this is incorrect`, `"HFpEF" (sic) was wrong`, `erroneously documented as
/// HFpEF`, `HFpEF in error - please amend`. Common practice, no source (a correction of
/// the record, as clinical documentation queries ask for).
fn refuted(doc: &Doc, start: usize, end: usize) -> bool {
    static AFTER: OnceLock<Regex> = OnceLock::new();
    static BEFORE: OnceLock<Regex> = OnceLock::new();
    let after_re = re(
        &AFTER,
        r#"(?i)^["'”’)\]]?\s*(?:[-–—,:;(]\s*)?(?:(?:this|that|which|it)\s+)?(?:(?:is|was|has\s+been|had\s+been)\s+)?(?:incorrect(?:ly)?|wrong(?:ly)?|in\s+error|erroneous(?:ly)?|not\s+correct|inaccurate|a\s+mistake|mistaken|corrected|amended|please\s+amend|superseded|refuted|not\s+supported|ruled\s+out|excluded)(?-u:\b)"#,
    );
    let before_re = re(
        &BEFORE,
        r#"(?i)(?:incorrectly|erroneously|wrongly|mistakenly|previously\s+mis)\w*\s+(?:\w+\s+){0,3}(?:as\s+)?["'“‘(]?\s*$"#,
    );
    let (from, lim) = doc.window(start, end, 48, 48);
    let before = &doc.text[from..start];
    let before = &before[before.rfind(['.', ';']).map_or(0, |i| i + 1)..];
    after_re.is_match(&doc.text[end..lim]) || before_re.is_match(before)
}

/// Statements from statement terms.
pub fn statements(doc: &Doc, out: &mut Output) {
    let terms: Vec<_> = doc
        .hits
        .iter()
        .filter_map(|h| match h.kind {
            Kind::Statement(k, v) if !is_high_flow_oxygen(doc, h.start, h.end) => {
                Some((h.start, h.end, k, v))
            }
            _ => None,
        })
        .collect();
    let hf_terms: Vec<(usize, usize)> = terms
        .iter()
        .filter(|t| {
            (t.2 == StatementKey::HeartFailure && t.3 != "service") || t.2 == StatementKey::HfType
        })
        .map(|t| (t.0, t.1))
        .collect();
    let push = |out: &mut Output, kind: StatementKind, value: &str, start: usize, end: usize| {
        let mut ctx = doc.engine.context(start, end, Target::Statement, false);
        // `recorded as "HFpEF" - this is incorrect, please amend`: a type or acuity the note
        // corrects is denied (the heart failure itself stays named).
        if kind != StatementKind::HeartFailure && refuted(doc, start, end) {
            ctx.assertion = crate::model::Assertion::Absent;
        }
        // "Admitted with acute on chronic HFpEF" names this admission's diagnosis: an
        // admission or presentation cue dates findings, not the diagnosis itself.
        if matches!(
            kind,
            StatementKind::HeartFailure | StatementKind::HfType | StatementKind::Acuity
        ) && ctx.temporality == crate::model::Temporality::Historical
            && ctx.cues.iter().any(|c| {
                c.family == "historical" && {
                    let t = c.text.to_ascii_lowercase();
                    t.contains("admi") || t.contains("present") || t.contains("initially")
                }
            })
        {
            ctx.temporality = crate::model::Temporality::Current;
            ctx.cues.retain(|c| c.family != "historical");
        }
        out.statements.push(Statement {
            kind,
            value: value.to_string(),
            assertion: ctx.assertion,
            temporality: ctx.temporality,
            experiencer: ctx.experiencer,
            text: doc.text[start..end].to_string(),
            span: doc.index.span(start, end),
            section: doc.section_of(start),
            episode: doc.episode_of(start),
        });
    };
    // "Known HFrEF", "on background of HFrEF", "established CCF": words that say the heart
    // failure is already known. They are no acuity of their own, but the heart-failure
    // statement's text takes them in, so that a "decompensated" elsewhere reads as acute on
    // chronic (AHA Coding Clinic 3Q 2008).
    let known: Vec<(usize, usize)> = terms
        .iter()
        .filter(|t| t.2 == StatementKey::Acuity && t.3 == "known")
        .map(|t| (t.0, t.1))
        .collect();
    let known_start = |start: usize| -> usize {
        let i = known.partition_point(|k| k.1 <= start);
        known[..i]
            .iter()
            .rev()
            .take(2)
            .find(|k| start - k.1 <= 24 && gap_ok(doc, k.1, start))
            .map_or(start, |k| k.0)
    };
    for &(start, end, key, value) in &terms {
        match key {
            StatementKey::HeartFailure => match value {
                "service" => {}
                "acute" | "decompensated" => {
                    push(out, StatementKind::HeartFailure, "named", start, end);
                    push(out, StatementKind::Acuity, value, start, end);
                }
                _ => push(
                    out,
                    StatementKind::HeartFailure,
                    "named",
                    known_start(start),
                    end,
                ),
            },
            StatementKey::Cardiomyopathy => {}
            StatementKey::HfType => {
                let term = doc.text[start..end].to_ascii_lowercase();
                let names_hf = term.contains("hf")
                    || term.contains("heart failure")
                    || term.contains("chf")
                    || term.contains("ccf");
                if names_hf {
                    let from = known_start(start);
                    push(out, StatementKind::HeartFailure, "named", from, end);
                    push(out, StatementKind::HfType, value, from, end);
                } else {
                    // "reduced EF", "preserved ejection fraction": a type only when it
                    // qualifies heart failure on the same line ("HF with reduced EF",
                    // "heart failure (preserved EF)").
                    let near = hf_near(&hf_terms, start, end).iter().any(|&(s, e)| {
                        (e <= start && start - e <= 24 && doc.line_at(s) == doc.line_at(start))
                            || (s >= end && s - end <= 8 && doc.line_at(s) == doc.line_at(start))
                    });
                    if near || value == "hfimpef" {
                        push(out, StatementKind::HfType, value, start, end);
                    }
                }
            }
            StatementKey::Acuity if value == "known" => {}
            StatementKey::Acuity => {
                let attached = hf_near(&hf_terms, start, end).iter().any(|&(s, e)| {
                    (s >= end && gap_ok(doc, end, s)) || (e <= start && gap_ok(doc, e, start))
                });
                if attached || (value == "chronic" && elided_chronic(doc, &hf_terms, start, end)) {
                    push(out, StatementKind::Acuity, value, start, end);
                }
            }
            StatementKey::VolumeStatus if on_imaging(doc, start, end) => {}
            StatementKey::VolumeStatus if short_of(doc, start) => {
                // "Approaching euvolaemia", "nearly dry": a direction, not the state; the
                // note does not state the patient is there (common practice, no source).
                push(out, StatementKind::VolumeStatus, value, start, end);
                if let Some(s) = out.statements.last_mut() {
                    if s.assertion == crate::model::Assertion::Present {
                        s.assertion = crate::model::Assertion::Possible;
                    }
                }
            }
            StatementKey::VolumeStatus => push(out, StatementKind::VolumeStatus, value, start, end),
            StatementKey::ProfileWord => {
                let perf = if value.starts_with("warm") {
                    "warm"
                } else {
                    "cold"
                };
                push(out, StatementKind::Perfusion, perf, start, end);
            }
            StatementKey::Hypertension => push(out, StatementKind::Hypertension, value, start, end),
            StatementKey::Ckd => {
                let stage = if value == "esrd" {
                    "esrd".to_string()
                } else {
                    ckd_stage(doc.text, start, end)
                };
                push(out, StatementKind::Ckd, &stage, start, end)
            }
            StatementKey::LvFunction => push(out, StatementKind::LvFunction, value, start, end),
        }
    }
    combine_acuity(&mut out.statements);
}

/// The stage written with a CKD term: after it (`CKD 4`, `CKD stage 3b`, `CKD G3a`,
/// `chronic kidney disease stage IV`) or before it (`stage 4 CKD`); `unstaged` otherwise.
/// Stages 1-5 with 3a/3b, in Arabic or Roman numerals (KDIGO 2012 G categories; the Roman
/// forms are common practice, no source).
fn ckd_stage(text: &str, start: usize, end: usize) -> String {
    fn stage_token(s: &str) -> Option<String> {
        let s = s.trim_start();
        let word: String = s
            .chars()
            .take_while(|c| c.is_ascii_alphanumeric())
            .collect::<String>()
            .to_ascii_lowercase();
        let stage = match word.as_str() {
            "1" | "i" => "1",
            "2" | "ii" => "2",
            "3" | "iii" => "3",
            "3a" | "iiia" => "3a",
            "3b" | "iiib" => "3b",
            "4" | "iv" => "4",
            "5" | "v" => "5",
            _ => return None,
        };
        Some(stage.to_string())
    }
    let after = text
        .get(end..text.floor_char_boundary(end.saturating_add(24)))
        .unwrap_or("");
    let after = after.trim_start_matches([' ', '(', ':', '-']);
    let lower = after.to_ascii_lowercase();
    let named = ["stage", "stg", "st.", "grade", "g"].iter().find_map(|w| {
        lower
            .strip_prefix(w)
            .map(|r| &after[after.len() - r.len()..])
    });
    // A bare Roman numeral is not a stage: `CKD IV furosemide`.
    let rest = named.unwrap_or(after);
    if named.is_some() || rest.starts_with(|c: char| c.is_ascii_digit()) {
        if let Some(s) = stage_token(rest) {
            return s;
        }
    }
    // `stage 4 CKD`.
    let before = text
        .get(text.ceil_char_boundary(start.saturating_sub(12))..start)
        .unwrap_or("");
    let lower = before.to_ascii_lowercase();
    if let Some(i) = lower.rfind("stage") {
        if let Some(s) = stage_token(&before[i + 5..]) {
            if before[i + 5..].trim().len() <= 4 {
                return s;
            }
        }
    }
    "unstaged".to_string()
}

/// "acute decompensated chronic heart failure": an acute and a chronic word on one heart
/// failure term make it acute on chronic.
fn combine_acuity(statements: &mut [Statement]) {
    let idx: Vec<usize> = (0..statements.len())
        .filter(|&i| statements[i].kind == StatementKind::Acuity)
        .collect();
    for w in idx.windows(2) {
        let (a, b) = (w[0], w[1]);
        let close = statements[b]
            .span
            .start
            .saturating_sub(statements[a].span.end)
            <= 24
            && statements[a].span.line == statements[b].span.line;
        let vals = (statements[a].value.as_str(), statements[b].value.as_str());
        let combine = matches!(
            vals,
            ("acute" | "decompensated", "chronic") | ("chronic", "acute" | "decompensated")
        );
        if close && combine {
            statements[a].value = "acute_on_chronic".into();
            statements[b].value = "acute_on_chronic".into();
        }
    }
}

/// Age and sex as notes write them: `78M`, `F, 67`, `82-year-old woman`, `Age: 74`,
/// `Sex: female`, `Mrs K.L.`.
pub fn patient_facts(doc: &Doc, out: &mut Output) {
    static AGE_SEX: OnceLock<Regex> = OnceLock::new();
    static SEX_AGE: OnceLock<Regex> = OnceLock::new();
    static YEARS: OnceLock<Regex> = OnceLock::new();
    static AGE_LABEL: OnceLock<Regex> = OnceLock::new();
    static SEX_LABEL: OnceLock<Regex> = OnceLock::new();
    static TITLE: OnceLock<Regex> = OnceLock::new();
    static TITLE_AGE: OnceLock<Regex> = OnceLock::new();
    let age_sex = re(
        &AGE_SEX,
        r"(?-u:\b)(\d{2,3})\s?(?:yo\s?|y/o\s?|y\.o\.\s?|yrs?\s?)?(M|F)(?-u:\b)",
    );
    let sex_age = re(&SEX_AGE, r"(?-u:\b)(M|F)\s?[,/]\s?(\d{2,3})(?-u:\b)");
    let years = re(
        &YEARS,
        r"(?i)(?-u:\b)(\d{2,3})[- ]?(?:years?|yrs?|y)[- ]?old(?-u:\b)(?:\s+(man|woman|male|female|gentleman|lady|gent|boy|girl))?|(?-u:\b)aged\s+(\d{2,3})(?-u:\b)|(?-u:\b)(\d{2,3})\s?(?:yo|y/o|y\.o\.)\s+(man|woman|male|female|gentleman|lady|gent)?",
    );
    let age_label = re(
        &AGE_LABEL,
        r"(?i)(?-u:\b)age\s*[:=]?\s*(\d{2,3})(?-u:\b)|(?-u:\b)(\d{2,3})\s+years(?-u:\b)",
    );
    let sex_label = re(
        &SEX_LABEL,
        r"(?i)(?-u:\b)(?:sex|gender)\s*[:=]?\s*(male|female|m|f|man|woman)(?-u:\b)",
    );
    let title = re(&TITLE, r"(?-u:\b)(Mr|Mrs|Ms|Miss)(?-u:\b)\.?\s+[A-Z]");
    let title_age = re(
        &TITLE_AGE,
        r"(?-u:\b)(?:Mr|Mrs|Ms|Miss|Mx)(?-u:\b)\.?[ \t]+[A-Z][A-Za-z.'\-]*(?:[ \t]+[A-Z][A-Za-z.'\-]*){0,2}[ \t]*,[ \t]*(\d{2,3})(?-u:\b)",
    );
    let text = doc.text;
    let mut age: Option<(usize, usize, String)> = None;
    let mut sex: Option<(usize, usize, String)> = None;
    let set_sex = |sex: &mut Option<(usize, usize, String)>, s: usize, e: usize, w: &str| {
        if sex.is_some() {
            return;
        }
        let w = w.to_ascii_lowercase();
        let v = match w.as_str() {
            "m" | "male" | "man" | "gentleman" | "gent" | "boy" | "mr" => "male",
            "f" | "female" | "woman" | "lady" | "girl" | "mrs" | "ms" | "miss" => "female",
            _ => return,
        };
        *sex = Some((s, e, v.to_string()));
    };
    let valid_age = |v: &str| v.parse::<u32>().ok().filter(|a| (16..=115).contains(a));
    // `FH: father - HFrEF, died age 60`: a relative's age, not the patient's.
    let someone_else = |s: usize, e: usize| {
        let in_family_history = doc
            .section_of(s)
            .is_some_and(|i| doc.sections[i].kind == crate::model::SectionKind::FamilyHistory);
        let before = text
            .get(text.ceil_char_boundary(s.saturating_sub(24))..s)
            .unwrap_or("")
            .to_ascii_lowercase();
        in_family_history
            || before.contains("died")
            || before.contains("death")
            || doc
                .engine
                .context(s, e, Target::Statement, false)
                .experiencer
                == crate::model::Experiencer::Other
    };
    let years = years
        .captures_iter(text)
        .find(|c| c.get(0).is_some_and(|m| !someone_else(m.start(), m.end())));
    if let Some(c) = years {
        let m = c.get(0).expect("match");
        if let Some(a) = c
            .get(1)
            .or(c.get(3))
            .or(c.get(4))
            .and_then(|g| valid_age(g.as_str()))
        {
            age = Some((m.start(), m.end(), a.to_string()));
        }
        if let Some(w) = c.get(2).or(c.get(5)) {
            set_sex(&mut sex, m.start(), m.end(), w.as_str());
        }
    }
    for c in age_sex.captures_iter(text) {
        let m = c.get(0).expect("match");
        // Not a grade or a unit: `2F` catheter sizes and `40M` do not make an age.
        if let Some(a) = valid_age(&c[1]) {
            if age.is_none() {
                age = Some((m.start(), m.end(), a.to_string()));
            }
            set_sex(&mut sex, m.start(), m.end(), &c[2]);
            break;
        }
    }
    for c in sex_age.captures_iter(text) {
        let m = c.get(0).expect("match");
        if let Some(a) = valid_age(&c[2]) {
            if age.is_none() {
                age = Some((m.start(), m.end(), a.to_string()));
            }
            set_sex(&mut sex, m.start(), m.end(), &c[1]);
            break;
        }
    }
    // `Mr A.A., 74.`, `Mrs Smith, 82,`: a title and a name, then the age after a comma.
    if age.is_none() {
        for c in title_age.captures_iter(text) {
            let g = c.get(1).expect("group");
            let rest = text[g.end()..].trim_start_matches([' ', '\t']);
            let ends = rest.is_empty()
                || rest.starts_with(['.', ',', ';', ')', '\n', '\r'])
                || rest.to_ascii_lowercase().starts_with("y");
            if let Some(a) = valid_age(g.as_str()).filter(|_| ends) {
                let m = c.get(0).expect("match");
                age = Some((m.start(), g.end(), a.to_string()));
                break;
            }
        }
    }
    if age.is_none() {
        let labelled = age_label
            .captures_iter(text)
            .find(|c| c.get(0).is_some_and(|m| !someone_else(m.start(), m.end())));
        if let Some(c) = labelled {
            let m = c.get(0).expect("match");
            if let Some(a) = c.get(1).or(c.get(2)).and_then(|g| valid_age(g.as_str())) {
                age = Some((m.start(), m.end(), a.to_string()));
            }
        }
    }
    if let Some(c) = sex_label.captures(text) {
        let m = c.get(0).expect("match");
        set_sex(&mut sex, m.start(), m.end(), &c[1]);
    }
    if let Some(c) = title.captures(text) {
        let g = c.get(1).expect("group");
        set_sex(&mut sex, g.start(), g.end(), g.as_str());
    }
    for (kind, fact) in [(StatementKind::Age, age), (StatementKind::Sex, sex)] {
        if let Some((s, e, v)) = fact {
            out.statements.push(Statement {
                kind,
                value: v,
                assertion: Assertion::Present,
                temporality: crate::model::Temporality::Current,
                experiencer: crate::model::Experiencer::Patient,
                text: text[s..e].to_string(),
                span: doc.index.span(s, e),
                section: doc.section_of(s),
                episode: None,
            });
        }
    }
}
