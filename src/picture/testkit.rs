//! Hand-built extractions for the picture's tests.
//!
//! A [`Note`] holds an invented note text; items are added by quoting the words they come
//! from, so every span points at real text. Sections and episodes run from their header to
//! the next one (or the end), and items get their section and episode by position, as the
//! extraction stage assigns them.

use crate::model::*;
use crate::span::{LineIndex, Span};

pub struct Note {
    pub text: String,
    pub ex: Extraction,
    /// Where the next `find` starts looking, so repeated words can be told apart.
    cursor: usize,
}

impl Note {
    pub fn new(text: &str) -> Note {
        Note {
            text: text.to_string(),
            ex: Extraction::default(),
            cursor: 0,
        }
    }

    /// The span of the next occurrence of `words` at or after the cursor.
    pub fn span(&mut self, words: &str) -> Span {
        let at = self.text[self.cursor..]
            .find(words)
            .map(|i| i + self.cursor)
            .or_else(|| self.text.find(words))
            .unwrap_or_else(|| panic!("test note lacks {words:?}"));
        self.cursor = at;
        LineIndex::new(&self.text).span(at, at + words.len())
    }

    /// Look for later words from the start of the note again.
    pub fn rewind(&mut self) -> &mut Self {
        self.cursor = 0;
        self
    }

    fn place(&self, start: usize) -> (Option<usize>, Option<usize>) {
        let section = self
            .ex
            .sections
            .iter()
            .enumerate()
            .filter(|(_, s)| s.span.start <= start && start < s.span.end)
            .map(|(i, _)| i)
            .next_back();
        let episode = self
            .ex
            .episodes
            .iter()
            .enumerate()
            .filter(|(_, e)| e.span.start <= start && start < e.span.end)
            .map(|(i, _)| i)
            .next_back();
        (section, episode)
    }

    /// Close section and episode spans: each runs to the next header or the end.
    fn close_spans(&mut self) {
        let len = self.text.len();
        let idx = LineIndex::new(&self.text);
        let mut starts: Vec<usize> = self.ex.sections.iter().map(|s| s.header.start).collect();
        starts.sort();
        for s in &mut self.ex.sections {
            let end = starts
                .iter()
                .copied()
                .find(|&x| x > s.header.start)
                .unwrap_or(len);
            s.span = idx.span(s.header.start, end);
        }
        let mut starts: Vec<usize> = self.ex.episodes.iter().map(|e| e.span.start).collect();
        starts.sort();
        for e in &mut self.ex.episodes {
            let end = starts
                .iter()
                .copied()
                .find(|&x| x > e.span.start)
                .unwrap_or(len);
            e.span = idx.span(e.span.start, end);
        }
    }

    pub fn section(&mut self, kind: SectionKind, title: &str) -> &mut Self {
        let header = self.span(title);
        self.ex.sections.push(Section {
            kind,
            title: title.into(),
            header,
            span: header,
        });
        self.close_spans();
        self
    }

    pub fn episode(&mut self, header: &str, date: Option<&str>) -> &mut Self {
        let span = self.span(header);
        self.ex.episodes.push(Episode {
            date: date.map(str::to_string),
            time: None,
            span,
        });
        self.close_spans();
        self
    }

    pub fn finding(
        &mut self,
        words: &str,
        concept: FindingConcept,
        assertion: Assertion,
    ) -> &mut Finding {
        let span = self.span(words);
        let (section, episode) = self.place(span.start);
        self.ex.findings.push(Finding {
            concept,
            assertion,
            experiencer: Experiencer::Patient,
            temporality: Temporality::Current,
            text: words.into(),
            span,
            detail: FindingDetail::default(),
            cues: Vec::new(),
            section,
            episode,
        });
        self.ex.findings.last_mut().expect("pushed")
    }

    pub fn present(&mut self, words: &str, concept: FindingConcept) -> &mut Self {
        self.finding(words, concept, Assertion::Present);
        self
    }

    pub fn absent(&mut self, words: &str, concept: FindingConcept) -> &mut Self {
        self.finding(words, concept, Assertion::Absent);
        self
    }

    /// A measurement already in the canonical unit.
    pub fn measure(
        &mut self,
        words: &str,
        concept: MeasureConcept,
        value: f64,
    ) -> &mut Measurement {
        let unit = concept.canonical_unit();
        self.measure_in(words, concept, value, unit, value)
    }

    /// A measurement written in `unit`, normalised to `normalized`.
    pub fn measure_in(
        &mut self,
        words: &str,
        concept: MeasureConcept,
        value: f64,
        unit: &'static str,
        normalized: f64,
    ) -> &mut Measurement {
        let span = self.span(words);
        let (section, episode) = self.place(span.start);
        self.ex.measurements.push(Measurement {
            concept,
            value,
            unit: Some(unit),
            normalized: Some(Quantity {
                value: normalized,
                unit: concept.canonical_unit(),
            }),
            unit_inferred: false,
            date: None,
            time: None,
            assertion: Assertion::Present,
            temporality: Temporality::Current,
            experiencer: Experiencer::Patient,
            time_ref: None,
            range: None,
            qualifier: None,
            unit_text: None,
            text: words.into(),
            span,
            section,
            episode,
        });
        self.ex.measurements.last_mut().expect("pushed")
    }

    /// A blood pressure reading `words` ("BP 84/70"): systolic and diastolic share the text.
    pub fn bp(&mut self, words: &str, sbp: f64, dbp: f64) -> &mut Self {
        let span = self.span(words);
        let (section, episode) = self.place(span.start);
        for (concept, v) in [
            (MeasureConcept::SystolicBp, sbp),
            (MeasureConcept::DiastolicBp, dbp),
        ] {
            self.ex.measurements.push(Measurement {
                concept,
                value: v,
                unit: None,
                normalized: Some(Quantity {
                    value: v,
                    unit: "mm[Hg]",
                }),
                unit_inferred: true,
                date: None,
                time: None,
                assertion: Assertion::Present,
                temporality: Temporality::Current,
                experiencer: Experiencer::Patient,
                time_ref: None,
                range: None,
                qualifier: None,
                unit_text: None,
                text: words.into(),
                span,
                section,
                episode,
            });
        }
        self
    }

    pub fn statement(&mut self, words: &str, kind: StatementKind, value: &str) -> &mut Statement {
        let span = self.span(words);
        let (section, episode) = self.place(span.start);
        self.ex.statements.push(Statement {
            kind,
            value: value.into(),
            assertion: Assertion::Present,
            temporality: Temporality::Current,
            experiencer: Experiencer::Patient,
            text: words.into(),
            span,
            section,
            episode,
        });
        self.ex.statements.last_mut().expect("pushed")
    }

    pub fn state(&mut self, words: &str, kind: StatementKind, value: &str) -> &mut Self {
        self.statement(words, kind, value);
        self
    }

    pub fn build(&self) -> Extraction {
        self.ex.clone()
    }
}
