//! Document kind: discharge summary, progress or ward-round note, nursing observations, clinic
//! letter or other, decided from headers and wording.
//!
//! The opening lines (the header block) weigh most; section kinds found by extraction add to
//! the score. Cue lists are common practice of UK and US note writing (no source).

use std::sync::OnceLock;

use aho_corasick::AhoCorasick;
use serde::Serialize;

use crate::model::{Extraction, SectionKind};

/// The kind of a note.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum DocKind {
    DischargeSummary,
    ProgressNote,
    NursingObs,
    ClinicLetter,
    #[default]
    Other,
}

impl DocKind {
    pub const ALL: [DocKind; 5] = [
        Self::DischargeSummary,
        Self::ProgressNote,
        Self::NursingObs,
        Self::ClinicLetter,
        Self::Other,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Self::DischargeSummary => "discharge_summary",
            Self::ProgressNote => "progress_note",
            Self::NursingObs => "nursing_obs",
            Self::ClinicLetter => "clinic_letter",
            Self::Other => "other",
        }
    }

    pub fn label(self) -> &'static str {
        match self {
            Self::DischargeSummary => "discharge summary",
            Self::ProgressNote => "progress or ward-round note",
            Self::NursingObs => "nursing observations",
            Self::ClinicLetter => "clinic letter",
            Self::Other => "other note",
        }
    }
}

/// Every kind.
pub const ANY: &[DocKind] = &DocKind::ALL;
/// Every kind but nursing observations (rules about medical assessment and plans).
pub const MEDICAL: &[DocKind] = &[
    DocKind::DischargeSummary,
    DocKind::ProgressNote,
    DocKind::ClinicLetter,
    DocKind::Other,
];

/// How many leading lines count as the header block.
const HEADER_LINES: usize = 6;

use DocKind::ProgressNote as Progress;
use DocKind::{ClinicLetter as Letter, DischargeSummary as Discharge, NursingObs as Nursing};

/// `(kind, phrase, weight)`: lower-case words or phrases, matched on word boundaries. The
/// weight counts in the header block, twice on the title (first non-blank) line, and a third
/// (rounded down, at least 1) anywhere else.
const CUES: &[(DocKind, &str, u32)] = &[
    (Discharge, "discharge summary", 9),
    (Discharge, "discharge letter", 9),
    (Discharge, "discharge note", 8),
    (Discharge, "date of discharge", 6),
    (Discharge, "discharge date", 6),
    (Discharge, "discharge diagnosis", 5),
    (Discharge, "discharge medications", 4),
    (Discharge, "discharge instructions", 4),
    (Discharge, "hospital course", 4),
    (Discharge, "discharged home", 3),
    (Discharge, "tto", 3),
    (Letter, "dear dr", 8),
    (Letter, "dear doctor", 8),
    (Letter, "dear colleague", 8),
    (Letter, "clinic letter", 9),
    (Letter, "outpatient", 5),
    (Letter, "clinic", 4),
    (Letter, "i saw", 4),
    (Letter, "i reviewed", 3),
    (Letter, "yours sincerely", 6),
    (Letter, "kind regards", 4),
    (Letter, "follow-up visit", 4),
    // The author's role qualifies a note type ("nursing progress note").
    (Nursing, "nursing progress note", 14),
    (Nursing, "nursing note", 12),
    (Nursing, "nursing entry", 12),
    (Nursing, "nursing", 5),
    // A nurse who records observations writes a nursing entry; a specialist or advanced
    // practice nurse who reviews the patient and changes treatment writes a clinical review
    // (common practice, no source). "nurse" alone ("nurse notes she was upright") names no
    // author, so it is no cue.
    (Nursing, "staff nurse", 6),
    (Nursing, "nurse entry", 10),
    (Nursing, "nursing staff", 1),
    (Progress, "specialist nurse", 8),
    (Progress, "nurse specialist", 8),
    (Progress, "hf nurse", 8),
    (Progress, "heart failure nurse", 8),
    (Progress, "nurse practitioner", 8),
    (Progress, "nurse-led", 6),
    (Progress, "telephone review", 7),
    (Progress, "telephone follow-up", 7),
    (Progress, "phone review", 7),
    (Progress, "virtual review", 7),
    (Progress, "camera review", 7),
    (Progress, "home visit", 6),
    (Progress, "registrar review", 7),
    (Nursing, "rn", 3),
    (Nursing, "obs chart", 6),
    (Nursing, "observation chart", 6),
    (Nursing, "news2", 4),
    (Nursing, "news", 3),
    (Nursing, "night entry", 6),
    (Nursing, "care plan", 3),
    (Progress, "ward round", 8),
    (Progress, "progress note", 9),
    (Progress, "post-take", 8),
    (Progress, "post take", 8),
    (Progress, "wr", 4),
    (Progress, "ptwr", 8),
    (Progress, "clerking", 7),
    (Progress, "medical review", 6),
    (Progress, "ward review", 6),
    (Progress, "night review", 6),
    (Progress, "handover", 5),
    (Progress, "consult", 5),
    (Progress, "hospital day", 5),
    (Progress, "admission note", 6),
    (Progress, "physician note", 6),
    (Progress, "history and physical", 7),
    (Progress, "h&p", 6),
    (Progress, "emergency department", 4),
    (Progress, "icu", 3),
    (Progress, "ccu", 3),
    (Progress, "impression", 1),
];

/// Whether `phrase` occurs in `hay` (both lower case) on word boundaries.
pub(crate) fn has_phrase(hay: &str, phrase: &str) -> bool {
    let bytes = hay.as_bytes();
    let mut from = 0;
    while let Some(i) = hay[from..].find(phrase) {
        let start = from + i;
        let end = start + phrase.len();
        let before_ok = start == 0 || !bytes[start - 1].is_ascii_alphanumeric();
        let after_ok = end >= bytes.len() || !bytes[end].is_ascii_alphanumeric();
        if before_ok && after_ok {
            return true;
        }
        from = start + 1;
        while from < hay.len() && !hay.is_char_boundary(from) {
            from += 1;
        }
        if from >= hay.len() {
            break;
        }
    }
    false
}

/// One automaton over every cue phrase, built once.
fn cue_automaton() -> &'static AhoCorasick {
    static AC: OnceLock<AhoCorasick> = OnceLock::new();
    crate::text::phrase_automaton(&AC, CUES.iter().map(|c| c.1))
}

/// Where a cue was seen: 0 on the title line, 1 in the header block, 2 in the body.
fn cue_places(lower: &str, title: std::ops::Range<usize>, header_end: usize) -> Vec<u8> {
    let bytes = lower.as_bytes();
    let mut best = vec![u8::MAX; CUES.len()];
    for m in cue_automaton().find_overlapping_iter(lower) {
        let (start, end) = (m.start(), m.end());
        let before_ok = start == 0 || !bytes[start - 1].is_ascii_alphanumeric();
        let after_ok = end >= bytes.len() || !bytes[end].is_ascii_alphanumeric();
        if !(before_ok && after_ok) {
            continue;
        }
        let place = if start >= title.start && end <= title.end {
            0
        } else if end <= header_end {
            1
        } else {
            2
        };
        let slot = &mut best[m.pattern().as_usize()];
        *slot = (*slot).min(place);
    }
    best
}

/// Where the header block (the first [`HEADER_LINES`] lines) of `text` ends.
fn header_end(text: &str) -> usize {
    text.match_indices('\n')
        .nth(HEADER_LINES - 1)
        .map(|(i, _)| i)
        .unwrap_or(text.len())
}

/// Whether a letter is a referral asking for an opinion rather than the specialist's own
/// assessment: "Referral to ..." or "re: referral" in the header block, or a request to see
/// the patient ("I would be grateful if you could see", "please see and advise"). The wording
/// is common practice of UK, US and Australian referral letters (no source).
pub fn is_referral(text: &str) -> bool {
    const HEADER: [&str; 4] = [
        "referral",
        "referral letter",
        "re: referral",
        "request for review",
    ];
    const ASKS: [&str; 9] = [
        "grateful if you could see",
        "grateful if you would see",
        "grateful if you could review",
        "grateful if you could assess",
        "grateful for your opinion",
        "please see and advise",
        "appreciate your assessment",
        "appreciate your opinion",
        "thank you for seeing",
    ];
    let lower = text.to_lowercase();
    let header_end = header_end(&lower);
    let header = &lower[..header_end];
    HEADER.iter().any(|p| has_phrase(header, p)) || ASKS.iter().any(|p| has_phrase(&lower, p))
}

/// Decide the kind of a note from its header block, its wording and its sections.
pub fn detect(text: &str, ex: &Extraction) -> DocKind {
    let lower = text.to_lowercase();
    let header_end = header_end(&lower);
    let header = &lower[..header_end];
    let title = header
        .split('\n')
        .scan(0usize, |at, line| {
            let start = *at;
            *at += line.len() + 1;
            Some(start..start + line.trim_end_matches('\r').len())
        })
        .find(|r| !lower[r.clone()].trim().is_empty())
        .unwrap_or(0..0);
    let mut score = [0u32; 5];
    let slot = |k: DocKind| DocKind::ALL.iter().position(|x| *x == k).unwrap_or(4);
    for (&(kind, _, weight), place) in CUES.iter().zip(cue_places(&lower, title, header_end)) {
        score[slot(kind)] += match place {
            0 => weight * 2,
            1 => weight,
            2 => (weight / 3).max(1),
            _ => 0,
        };
    }
    for s in &ex.sections {
        match s.kind {
            SectionKind::DischargeMedications | SectionKind::DischargeInstructions => {
                score[slot(DocKind::DischargeSummary)] += 4
            }
            SectionKind::Subjective | SectionKind::Objective => {
                score[slot(DocKind::ProgressNote)] += 2
            }
            SectionKind::Assessment | SectionKind::Plan | SectionKind::Examination => {
                score[slot(DocKind::ProgressNote)] += 1
            }
            _ => {}
        }
    }
    // Highest score wins; ties go to the earlier kind in `ALL`, which orders the more
    // specific document types first. A score below 3 is too weak to call.
    let (best, &top) = score[..4]
        .iter()
        .enumerate()
        .max_by(|a, b| a.1.cmp(b.1).then(b.0.cmp(&a.0)))
        .unwrap_or((4, &0));
    if top < 3 {
        DocKind::Other
    } else {
        DocKind::ALL[best]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kind(text: &str) -> DocKind {
        detect(text, &Extraction::default())
    }

    // All headers below are invented.
    #[test]
    fn discharge_summaries() {
        assert_eq!(
            kind("DISCHARGE SUMMARY\nWard 4\nDate of admission: 01/03/2026\n"),
            DocKind::DischargeSummary
        );
        assert_eq!(
            kind("Patient: AB\nDischarge date: 2026-03-09\nHospital course: diuresed\n"),
            DocKind::DischargeSummary
        );
    }

    #[test]
    fn clinic_letters() {
        assert_eq!(
            kind("Heart Failure Clinic\n\nDear Dr Example,\nI saw Mrs X today.\n"),
            DocKind::ClinicLetter
        );
        assert_eq!(
            kind("Outpatient review\nSeen with her daughter.\nYours sincerely\n"),
            DocKind::ClinicLetter
        );
    }

    #[test]
    fn nursing_obs() {
        assert_eq!(
            kind("Nursing night entry 02:00\nObs: BP 110/70 HR 88 SpO2 95%\n"),
            DocKind::NursingObs
        );
        assert_eq!(
            kind("NEWS2 3. RN to recheck obs at 06:00.\n"),
            DocKind::NursingObs
        );
    }

    #[test]
    fn progress_notes() {
        assert_eq!(
            kind("Cardiology ward round 09:30\nS: breathless overnight\n"),
            DocKind::ProgressNote
        );
        assert_eq!(
            kind("PROGRESS NOTE - Hospital Day 3\nSubjective: better\n"),
            DocKind::ProgressNote
        );
        assert_eq!(
            kind("Post-take WR\nImp: decompensated HF\n"),
            DocKind::ProgressNote
        );
        assert_eq!(kind("PTWR  Cons: Dr A\nImp: CCF\n"), DocKind::ProgressNote);
        // The title line outweighs a passing mention of nursing staff below it.
        assert_eq!(
            kind("Medical WR Sat\nBed 2.\nMore confused per nursing staff.\n"),
            DocKind::ProgressNote
        );
    }

    #[test]
    fn the_author_role_qualifies_the_note_type() {
        assert_eq!(
            kind("Nursing progress note - Ward 9\nPt comfortable overnight.\n"),
            DocKind::NursingObs
        );
    }

    #[test]
    fn a_specialist_nurse_review_is_a_clinical_review() {
        // Common practice, no source: heart-failure specialist nurses and nurse
        // practitioners review patients and change diuretics; their notes are reviews, and
        // "nurse" in the body names no author.
        for t in [
            "HF nurse telephone follow-up   01/12/2026\nPost-discharge call, day 5.\n",
            "HF Specialist Nurse - telephone review   17 Nov 2026\nSpoke to patient.\n",
            "Community Palliative Care / HF Nurse Joint Home Visit   22/11/2026\n",
            "Heart failure nurse practitioner clinic review\nWeight up 2 kg.\n",
            "Medical Registrar Review 03:15\nCalled re: sats 90% on RA.\n\nNurse notes she is upright.\n",
        ] {
            assert_eq!(kind(t), DocKind::ProgressNote, "{t:?}");
        }
        assert_eq!(
            kind("Staff nurse entry 22:00\nObs stable. Pt settled.\n"),
            DocKind::NursingObs
        );
    }

    #[test]
    fn other_when_nothing_says() {
        assert_eq!(kind("BP 120/80. HR 70.\n"), DocKind::Other);
        assert_eq!(kind(""), DocKind::Other);
        // "wrist" must not match the ward-round abbreviation "wr".
        assert_eq!(kind("wrist pain, nursery rhyme\n"), DocKind::Other);
    }

    #[test]
    fn sections_add_evidence() {
        use crate::model::Section;
        let mut ex = Extraction::default();
        ex.sections.push(Section {
            kind: SectionKind::DischargeMedications,
            title: "Medications on leaving".into(),
            header: Default::default(),
            span: Default::default(),
        });
        assert_eq!(
            detect("Medications on leaving:\n", &ex),
            DocKind::DischargeSummary
        );
    }

    #[test]
    fn non_ascii_text_does_not_panic() {
        assert_eq!(kind("Ödem ++ — “nursing” ✓ 😀\n"), DocKind::NursingObs);
    }
}
