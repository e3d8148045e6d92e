//! Document kind: discharge summary, progress or ward-round note, nursing observations, clinic
//! letter or other, decided from headers and wording.
//!
//! The opening lines (the header block) weigh most; section kinds found by extraction add to
//! the score. Cue lists are common practice of UK and US note writing (no source).

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

struct Cue {
    kind: DocKind,
    /// Lower-case words or phrases, matched on word boundaries.
    phrase: &'static str,
    /// Weight when found in the header block; anywhere else it counts a third (rounded down,
    /// at least 1).
    weight: u32,
}

const CUES: &[Cue] = &[
    // Discharge summaries.
    Cue {
        kind: DocKind::DischargeSummary,
        phrase: "discharge summary",
        weight: 9,
    },
    Cue {
        kind: DocKind::DischargeSummary,
        phrase: "discharge letter",
        weight: 9,
    },
    Cue {
        kind: DocKind::DischargeSummary,
        phrase: "discharge note",
        weight: 8,
    },
    Cue {
        kind: DocKind::DischargeSummary,
        phrase: "date of discharge",
        weight: 6,
    },
    Cue {
        kind: DocKind::DischargeSummary,
        phrase: "discharge date",
        weight: 6,
    },
    Cue {
        kind: DocKind::DischargeSummary,
        phrase: "discharge diagnosis",
        weight: 5,
    },
    Cue {
        kind: DocKind::DischargeSummary,
        phrase: "discharge medications",
        weight: 4,
    },
    Cue {
        kind: DocKind::DischargeSummary,
        phrase: "discharge instructions",
        weight: 4,
    },
    Cue {
        kind: DocKind::DischargeSummary,
        phrase: "hospital course",
        weight: 4,
    },
    Cue {
        kind: DocKind::DischargeSummary,
        phrase: "discharged home",
        weight: 3,
    },
    Cue {
        kind: DocKind::DischargeSummary,
        phrase: "tto",
        weight: 3,
    },
    // Clinic letters.
    Cue {
        kind: DocKind::ClinicLetter,
        phrase: "dear dr",
        weight: 8,
    },
    Cue {
        kind: DocKind::ClinicLetter,
        phrase: "dear doctor",
        weight: 8,
    },
    Cue {
        kind: DocKind::ClinicLetter,
        phrase: "dear colleague",
        weight: 8,
    },
    Cue {
        kind: DocKind::ClinicLetter,
        phrase: "clinic letter",
        weight: 9,
    },
    Cue {
        kind: DocKind::ClinicLetter,
        phrase: "outpatient",
        weight: 5,
    },
    Cue {
        kind: DocKind::ClinicLetter,
        phrase: "clinic",
        weight: 4,
    },
    Cue {
        kind: DocKind::ClinicLetter,
        phrase: "i saw",
        weight: 4,
    },
    Cue {
        kind: DocKind::ClinicLetter,
        phrase: "i reviewed",
        weight: 3,
    },
    Cue {
        kind: DocKind::ClinicLetter,
        phrase: "yours sincerely",
        weight: 6,
    },
    Cue {
        kind: DocKind::ClinicLetter,
        phrase: "kind regards",
        weight: 4,
    },
    Cue {
        kind: DocKind::ClinicLetter,
        phrase: "follow-up visit",
        weight: 4,
    },
    // Nursing observations.
    Cue {
        kind: DocKind::NursingObs,
        phrase: "nursing",
        weight: 7,
    },
    Cue {
        kind: DocKind::NursingObs,
        phrase: "nurse",
        weight: 4,
    },
    Cue {
        kind: DocKind::NursingObs,
        phrase: "rn",
        weight: 3,
    },
    Cue {
        kind: DocKind::NursingObs,
        phrase: "obs chart",
        weight: 6,
    },
    Cue {
        kind: DocKind::NursingObs,
        phrase: "observation chart",
        weight: 6,
    },
    Cue {
        kind: DocKind::NursingObs,
        phrase: "news2",
        weight: 4,
    },
    Cue {
        kind: DocKind::NursingObs,
        phrase: "news",
        weight: 3,
    },
    Cue {
        kind: DocKind::NursingObs,
        phrase: "night entry",
        weight: 6,
    },
    Cue {
        kind: DocKind::NursingObs,
        phrase: "care plan",
        weight: 3,
    },
    // Progress and ward-round notes.
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "ward round",
        weight: 8,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "progress note",
        weight: 9,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "post-take",
        weight: 8,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "post take",
        weight: 8,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "wr",
        weight: 4,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "clerking",
        weight: 7,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "medical review",
        weight: 6,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "ward review",
        weight: 6,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "night review",
        weight: 6,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "handover",
        weight: 5,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "consult",
        weight: 5,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "hospital day",
        weight: 5,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "admission note",
        weight: 6,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "icu",
        weight: 3,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "ccu",
        weight: 3,
    },
    Cue {
        kind: DocKind::ProgressNote,
        phrase: "impression",
        weight: 1,
    },
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

/// Decide the kind of a note from its header block, its wording and its sections.
pub fn detect(text: &str, ex: &Extraction) -> DocKind {
    let lower = text.to_lowercase();
    let header_end = lower
        .match_indices('\n')
        .nth(HEADER_LINES - 1)
        .map(|(i, _)| i)
        .unwrap_or(lower.len());
    let header = &lower[..header_end];
    let body = &lower[header_end..];
    let mut score = [0u32; 5];
    let slot = |k: DocKind| DocKind::ALL.iter().position(|x| *x == k).unwrap_or(4);
    for cue in CUES {
        if has_phrase(header, cue.phrase) {
            score[slot(cue.kind)] += cue.weight;
        } else if has_phrase(body, cue.phrase) {
            score[slot(cue.kind)] += (cue.weight / 3).max(1);
        }
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
