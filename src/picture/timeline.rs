//! When each item was documented, relative to the rest of the note: the ordering behind
//! "the latest assessment decides".
//!
//! A note is cut into *units* and each unit into *phases*; `(unit, phase)` is a [`When`] and
//! orders assessments oldest first.
//!
//! Units:
//! - A note without episodes is one unit (0).
//! - A note with episodes (dated entries of a multi-day record): undated items before the
//!   first episode are unit 0, the oldest; episodes follow in order of their date, ties (and
//!   undated episodes, which take the date of the entry before them) in document order.
//!   An item without an episode after the first episode has begun belongs to the episode
//!   whose span holds it, else to the nearest episode before it in the document.
//!
//! Phases within a unit:
//! - 0: a measurement marked baseline or previous.
//! - 1: a measurement marked admission, or any item in a section whose title says admission
//!   (`On admission`, `Examination on arrival`).
//! - 2: a measurement marked yesterday; and, when the unit holds more than one examination
//!   section, or one titled discharge, or discharge medication or advice sections (a
//!   discharge summary), every item before the last examination section that is not titled
//!   admission (in a discharge summary the history and admission findings come before the
//!   discharge examination).
//! - 3: everything else: the current assessment (today, discharge).
//!
//! The later section in the document is taken as the latest unless its title says admission.
//! One examination section without a discharge title does not split the unit: in a ward
//! round the symptoms above the examination belong to the same assessment.

use crate::model::{Extraction, SectionKind, TimeRef};

/// The assessment block an item belongs to; orders oldest first.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Default)]
pub struct When {
    pub unit: usize,
    pub phase: u8,
}

/// Phase of the current assessment of a unit.
pub const PHASE_CURRENT: u8 = 3;

/// Precomputed episode ranks and split points of one extraction.
#[derive(Debug, Clone)]
pub struct Timeline<'a> {
    ex: &'a Extraction,
    /// Unit of episode `i` (1-based; 0 is the undated body before the first episode).
    episode_unit: Vec<usize>,
    /// Byte offset where the first episode begins.
    first_episode_start: Option<usize>,
    /// Per unit: the byte offset of the last non-admission examination section, when the
    /// unit is split.
    split: Vec<Option<usize>>,
    /// Episodes sorted by start and disjoint (as extraction makes them): found by binary
    /// search. Otherwise (a hand-built model) by a scan.
    episodes_ordered: bool,
    /// Sections sorted by start and disjoint: likewise.
    sections_ordered: bool,
}

/// Whether a section title says admission (or arrival, presentation).
pub fn title_says_admission(title: &str) -> bool {
    let t = title.to_lowercase();
    [
        "admission",
        "admit",
        "arrival",
        "presentation",
        "on presenting",
    ]
    .iter()
    .any(|w| t.contains(w))
}

/// Whether a section title says discharge.
pub fn title_says_discharge(title: &str) -> bool {
    title.to_lowercase().contains("discharge")
}

impl<'a> Timeline<'a> {
    pub fn new(ex: &'a Extraction) -> Self {
        let n = ex.episodes.len();
        // Effective dates: an undated episode takes the date of the episode before it.
        let mut eff: Vec<String> = Vec::with_capacity(n);
        let mut prev = String::new();
        for e in &ex.episodes {
            if let Some(d) = &e.date {
                prev = d.clone();
            }
            eff.push(prev.clone());
        }
        let mut order: Vec<usize> = (0..n).collect();
        order.sort_by(|&a, &b| eff[a].cmp(&eff[b]).then(a.cmp(&b)));
        let mut episode_unit = vec![0; n];
        for (rank, &i) in order.iter().enumerate() {
            episode_unit[i] = rank + 1;
        }
        let first_episode_start = ex.episodes.iter().map(|e| e.span.start).min();
        let episodes_ordered = ex
            .episodes
            .windows(2)
            .all(|w| w[0].span.start <= w[0].span.end && w[0].span.end <= w[1].span.start);
        let sections_ordered = ex
            .sections
            .windows(2)
            .all(|w| w[0].span.start < w[1].span.start && w[0].span.end <= w[1].span.start);
        let mut tl = Timeline {
            ex,
            episode_unit,
            first_episode_start,
            split: vec![None; n + 1],
            episodes_ordered,
            sections_ordered,
        };
        tl.split = tl.compute_splits();
        tl
    }

    fn compute_splits(&self) -> Vec<Option<usize>> {
        let units = self.ex.episodes.len() + 1;
        // Per unit: (non-admission exam header starts, admission exam count, any discharge).
        let mut exams: Vec<Vec<usize>> = vec![Vec::new(); units];
        let mut adm = vec![0usize; units];
        let mut discharge = vec![false; units];
        for s in &self.ex.sections {
            if matches!(
                s.kind,
                SectionKind::DischargeMedications | SectionKind::DischargeInstructions
            ) {
                // A discharge summary: its examination is the discharge examination.
                discharge[self.unit_of(None, s.header.start)] = true;
                continue;
            }
            if !matches!(s.kind, SectionKind::Examination | SectionKind::Objective) {
                continue;
            }
            let u = self.unit_of(None, s.header.start);
            if title_says_admission(&s.title) {
                adm[u] += 1;
            } else {
                exams[u].push(s.header.start);
                discharge[u] |= title_says_discharge(&s.title);
            }
        }
        (0..units)
            .map(|u| {
                let total = exams[u].len() + adm[u];
                if total >= 2 || discharge[u] {
                    exams[u].iter().copied().max()
                } else {
                    None
                }
            })
            .collect()
    }

    /// The unit of an item from its episode index and start offset.
    pub fn unit_of(&self, episode: Option<usize>, start: usize) -> usize {
        if let Some(e) = episode {
            if let Some(&u) = self.episode_unit.get(e) {
                return u;
            }
        }
        let Some(first) = self.first_episode_start else {
            return 0;
        };
        if start < first {
            return 0;
        }
        let eps = &self.ex.episodes;
        if self.episodes_ordered {
            // Disjoint and sorted: the last episode starting at or before the item is the
            // one holding it, or else the nearest before it.
            let i = eps.partition_point(|e| e.span.start <= start);
            return i.checked_sub(1).map(|i| self.episode_unit[i]).unwrap_or(0);
        }
        if let Some(i) =
            (0..eps.len()).find(|&i| eps[i].span.start <= start && start < eps[i].span.end)
        {
            return self.episode_unit[i];
        }
        // The nearest episode before the item.
        (0..eps.len())
            .filter(|&i| eps[i].span.start <= start)
            .max_by_key(|&i| eps[i].span.start)
            .map(|i| self.episode_unit[i])
            .unwrap_or(0)
    }

    fn section_of(
        &self,
        section: Option<usize>,
        start: usize,
    ) -> Option<&'a crate::model::Section> {
        if let Some(s) = section.and_then(|i| self.ex.sections.get(i)) {
            return Some(s);
        }
        let holds = |s: &&crate::model::Section| {
            s.span.start <= start && start < s.span.end.max(s.span.start.saturating_add(1))
        };
        let sections = &self.ex.sections;
        if self.sections_ordered {
            // Disjoint and sorted: only the last section starting at or before the item
            // can hold it.
            let i = sections.partition_point(|s| s.span.start <= start);
            return i.checked_sub(1).map(|i| &sections[i]).filter(holds);
        }
        sections.iter().filter(holds).max_by_key(|s| s.span.start)
    }

    /// The assessment block of an item.
    pub fn when(
        &self,
        episode: Option<usize>,
        section: Option<usize>,
        start: usize,
        time_ref: Option<TimeRef>,
    ) -> When {
        let unit = self.unit_of(episode, start);
        let phase = match time_ref {
            Some(TimeRef::Baseline | TimeRef::Previous) => 0,
            Some(TimeRef::Admission) => 1,
            Some(TimeRef::Yesterday) => 2,
            _ => {
                let in_admission = self
                    .section_of(section, start)
                    .is_some_and(|s| title_says_admission(&s.title));
                if in_admission {
                    1
                } else if self
                    .split
                    .get(unit)
                    .copied()
                    .flatten()
                    .is_some_and(|at| start < at)
                {
                    2
                } else {
                    PHASE_CURRENT
                }
            }
        };
        When { unit, phase }
    }

    /// The date an item was documented on, when the note says: its own date, else its
    /// episode's, else (no episodes) the note date for current values. `yesterday` is the
    /// day before; admission, baseline and previous values have no date unless written.
    pub fn date_of(
        &self,
        own: Option<&str>,
        episode: Option<usize>,
        start: usize,
        time_ref: Option<TimeRef>,
    ) -> Option<String> {
        // Only well-formed ISO dates are used; anything else counts as undated.
        let valid = |d: &str| super::days_from_iso(d).is_some();
        if let Some(d) = own.filter(|d| valid(d)) {
            return Some(d.to_string());
        }
        if matches!(
            time_ref,
            Some(TimeRef::Admission | TimeRef::Baseline | TimeRef::Previous)
        ) {
            return None;
        }
        let unit = self.unit_of(episode, start);
        let base = if self.ex.episodes.is_empty() {
            self.ex.note_date.clone()
        } else if unit == 0 {
            None
        } else {
            let i = self.episode_unit.iter().position(|&u| u == unit)?;
            // An undated episode has no date of its own.
            self.ex.episodes[i].date.clone()
        }
        .filter(|d| valid(d))?;
        if time_ref == Some(TimeRef::Yesterday) {
            let d = super::days_from_iso(&base)?;
            Some(super::iso_from_days(d - 1))
        } else {
            Some(base)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Episode, Section};
    use crate::span::Span;

    fn sp(start: usize, end: usize) -> Span {
        Span {
            start,
            end,
            ..Span::default()
        }
    }

    fn episode(date: Option<&str>, start: usize, end: usize) -> Episode {
        Episode {
            date: date.map(str::to_string),
            time: None,
            span: sp(start, end),
        }
    }

    fn section(kind: SectionKind, title: &str, start: usize, end: usize) -> Section {
        Section {
            kind,
            title: title.into(),
            header: sp(start, start + title.len()),
            span: sp(start, end),
        }
    }

    #[test]
    fn episodes_order_by_date_then_document_order() {
        // Three entries written out of date order, one undated after the second.
        let ex = Extraction {
            episodes: vec![
                episode(Some("2026-11-13"), 10, 20),
                episode(Some("2026-11-12"), 20, 30),
                episode(None, 30, 40),
                episode(Some("2026-11-13"), 40, 50),
            ],
            ..Extraction::default()
        };
        let tl = Timeline::new(&ex);
        // 12th first; the undated one inherits the 12th and comes after it; then both 13ths
        // in document order.
        assert_eq!(tl.unit_of(Some(1), 0), 1);
        assert_eq!(tl.unit_of(Some(2), 0), 2);
        assert_eq!(tl.unit_of(Some(0), 0), 3);
        assert_eq!(tl.unit_of(Some(3), 0), 4);
        // Undated items: before the first episode is the oldest unit; inside a span joins it.
        assert_eq!(tl.unit_of(None, 5), 0);
        assert_eq!(tl.unit_of(None, 45), 4);
        // After every episode: the nearest one before.
        assert_eq!(tl.unit_of(None, 99), 4);
        // A bad episode index falls back to the position.
        assert_eq!(tl.unit_of(Some(17), 15), 3);
    }

    #[test]
    fn discharge_examination_splits_the_body() {
        // History (with admission signs) then "Examination at discharge".
        let ex = Extraction {
            sections: vec![
                section(SectionKind::History, "History", 0, 100),
                section(
                    SectionKind::Examination,
                    "Examination at discharge",
                    100,
                    200,
                ),
                section(SectionKind::Plan, "Plan", 200, 300),
            ],
            ..Extraction::default()
        };
        let tl = Timeline::new(&ex);
        let hist = tl.when(None, Some(0), 50, None);
        let exam = tl.when(None, Some(1), 150, None);
        let plan = tl.when(None, Some(2), 250, None);
        assert_eq!(hist.phase, 2);
        assert_eq!(exam.phase, PHASE_CURRENT);
        assert_eq!(plan.phase, PHASE_CURRENT);
        assert!(hist < exam);
        // An admission measurement inside the discharge exam is still older.
        assert_eq!(
            tl.when(None, Some(1), 160, Some(TimeRef::Admission)).phase,
            1
        );
        assert_eq!(
            tl.when(None, Some(1), 160, Some(TimeRef::Baseline)).phase,
            0
        );
        assert_eq!(
            tl.when(None, Some(1), 160, Some(TimeRef::Discharge)).phase,
            3
        );
    }

    #[test]
    fn discharge_sections_make_the_examination_the_discharge_examination() {
        let ex = Extraction {
            sections: vec![
                section(SectionKind::History, "History", 0, 100),
                section(SectionKind::Examination, "Examination", 100, 200),
                section(
                    SectionKind::DischargeMedications,
                    "Discharge medications",
                    200,
                    300,
                ),
            ],
            ..Extraction::default()
        };
        let tl = Timeline::new(&ex);
        assert_eq!(tl.when(None, Some(0), 50, None).phase, 2);
        assert_eq!(tl.when(None, Some(1), 150, None).phase, PHASE_CURRENT);
        // Without the discharge sections one examination does not split the note.
        let ex = Extraction {
            sections: ex.sections[..2].to_vec(),
            ..Extraction::default()
        };
        let tl = Timeline::new(&ex);
        assert_eq!(tl.when(None, Some(0), 50, None).phase, PHASE_CURRENT);
    }

    #[test]
    fn admission_titled_section_is_older_even_when_later() {
        let ex = Extraction {
            sections: vec![
                section(SectionKind::Examination, "Discharge exam", 0, 100),
                section(SectionKind::Examination, "On admission", 100, 200),
            ],
            ..Extraction::default()
        };
        let tl = Timeline::new(&ex);
        let dis = tl.when(None, Some(0), 50, None);
        let adm = tl.when(None, Some(1), 150, None);
        assert_eq!(dis.phase, PHASE_CURRENT);
        assert_eq!(adm.phase, 1);
        assert!(adm < dis);
    }

    #[test]
    fn later_of_two_exam_sections_is_latest() {
        let ex = Extraction {
            sections: vec![
                section(SectionKind::Examination, "O/E", 0, 100),
                section(SectionKind::Examination, "Re-examined", 100, 200),
            ],
            ..Extraction::default()
        };
        let tl = Timeline::new(&ex);
        assert!(tl.when(None, Some(0), 50, None) < tl.when(None, Some(1), 150, None));
        // The section is found by position when the item does not name it.
        assert_eq!(tl.when(None, None, 150, None).phase, PHASE_CURRENT);
        assert_eq!(tl.when(None, None, 50, None).phase, 2);
    }

    #[test]
    fn one_ward_round_examination_does_not_split() {
        let ex = Extraction {
            sections: vec![
                section(SectionKind::Subjective, "S:", 0, 50),
                section(SectionKind::Examination, "O/E:", 50, 100),
            ],
            ..Extraction::default()
        };
        let tl = Timeline::new(&ex);
        assert_eq!(
            tl.when(None, Some(0), 10, None),
            tl.when(None, Some(1), 60, None)
        );
    }

    #[test]
    fn dates_come_from_item_episode_or_note() {
        let ex = Extraction {
            episodes: vec![episode(Some("2026-06-09"), 10, 20), episode(None, 20, 30)],
            ..Extraction::default()
        };
        let tl = Timeline::new(&ex);
        assert_eq!(
            tl.date_of(Some("2026-06-01"), Some(0), 12, None).as_deref(),
            Some("2026-06-01")
        );
        assert_eq!(
            tl.date_of(None, Some(0), 12, None).as_deref(),
            Some("2026-06-09")
        );
        assert_eq!(
            tl.date_of(None, Some(0), 12, Some(TimeRef::Yesterday))
                .as_deref(),
            Some("2026-06-08")
        );
        assert_eq!(tl.date_of(None, Some(1), 22, None), None);
        assert_eq!(tl.date_of(None, None, 2, None), None);
        assert_eq!(
            tl.date_of(None, Some(0), 12, Some(TimeRef::Admission)),
            None
        );
        let body = Extraction {
            note_date: Some("2026-03-01".into()),
            ..Extraction::default()
        };
        let tl = Timeline::new(&body);
        assert_eq!(
            tl.date_of(None, None, 0, Some(TimeRef::Yesterday))
                .as_deref(),
            Some("2026-02-28")
        );
    }
}
