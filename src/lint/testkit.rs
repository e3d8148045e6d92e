//! Hand-built models for rule tests: an invented note text plus the items an extractor would
//! find in it, each located by searching for its text.

use crate::model::*;
use crate::picture::Picture;
use crate::span::{LineIndex, Span};

use super::{Ctx, Diagnostic, LintConfig, Rule};

/// An invented note and its hand-built extraction.
#[derive(Debug, Clone)]
pub struct Note {
    text: String,
    pub ex: Extraction,
    pub pic: Picture,
    /// Where the next search for an item's text starts (items are added in text order).
    cursor: usize,
}

impl Note {
    pub fn new(text: &str) -> Note {
        Note {
            text: text.to_string(),
            ex: Extraction::default(),
            pic: Picture::default(),
            cursor: 0,
        }
    }

    pub fn text(&self) -> &str {
        &self.text
    }

    /// The span of the next occurrence of `needle` (from the cursor, else from the start).
    pub fn span_of(&mut self, needle: &str) -> Span {
        let idx = LineIndex::new(&self.text);
        let start = self.text[self.cursor..]
            .find(needle)
            .map(|i| i + self.cursor)
            .or_else(|| self.text.find(needle))
            .unwrap_or_else(|| panic!("test note does not contain {needle:?}"));
        self.cursor = start + needle.len();
        idx.span(start, start + needle.len())
    }

    /// A measurement with a written unit (UCUM code) or none.
    pub fn meas(
        self,
        concept: MeasureConcept,
        value: f64,
        unit: Option<&'static str>,
        text: &str,
    ) -> Note {
        self.meas_with(concept, value, unit, false, text, |_| {})
    }

    /// A measurement whose unit the extractor inferred.
    pub fn meas_inferred(
        self,
        concept: MeasureConcept,
        value: f64,
        unit: &'static str,
        text: &str,
    ) -> Note {
        self.meas_with(concept, value, Some(unit), true, text, |_| {})
    }

    /// A measurement, adjusted by `f` (dates, time references, assertion ...).
    pub fn meas_with(
        mut self,
        concept: MeasureConcept,
        value: f64,
        unit: Option<&'static str>,
        inferred: bool,
        text: &str,
        f: impl FnOnce(&mut Measurement),
    ) -> Note {
        let span = self.span_of(text);
        let normalized = unit.and_then(|u| normalize(concept, value, u));
        let mut m = Measurement {
            concept,
            value,
            unit,
            normalized,
            unit_inferred: inferred,
            date: None,
            time: None,
            assertion: Assertion::Present,
            temporality: Temporality::Current,
            experiencer: Experiencer::Patient,
            time_ref: None,
            range: None,
            qualifier: None,
            unit_text: (!inferred).then(|| unit.unwrap_or("").to_string()),
            text: text.to_string(),
            span,
            section: None,
            episode: None,
        };
        f(&mut m);
        self.ex.measurements.push(m);
        self
    }

    pub fn finding(mut self, concept: FindingConcept, assertion: Assertion, text: &str) -> Note {
        let span = self.span_of(text);
        self.ex.findings.push(Finding {
            concept,
            assertion,
            experiencer: Experiencer::Patient,
            temporality: Temporality::Current,
            text: text.to_string(),
            span,
            detail: FindingDetail::default(),
            cues: Vec::new(),
            section: None,
            episode: None,
        });
        self
    }

    pub fn stmt(mut self, kind: StatementKind, value: &str, text: &str) -> Note {
        let span = self.span_of(text);
        self.ex.statements.push(Statement {
            kind,
            value: value.to_string(),
            assertion: Assertion::Present,
            temporality: Temporality::Current,
            experiencer: Experiencer::Patient,
            text: text.to_string(),
            span,
            section: None,
            episode: None,
        });
        self
    }

    pub fn med(
        mut self,
        drug: &str,
        class: DrugClass,
        change: Option<MedChange>,
        text: &str,
    ) -> Note {
        let span = self.span_of(text);
        self.ex.medications.push(Medication {
            drug: drug.to_string(),
            class,
            dose: None,
            unit: None,
            route: None,
            frequency: None,
            per_day: None,
            daily_dose: None,
            note: None,
            change,
            starts: None,
            assertion: Assertion::Present,
            text: text.to_string(),
            span,
            section: None,
        });
        self
    }

    /// A section from its header text to the end of the note or the next given header.
    pub fn section(mut self, kind: SectionKind, header: &str) -> Note {
        let header_span = self.span_of(header);
        let idx = LineIndex::new(&self.text);
        let span = idx.span(header_span.start, self.text.len());
        if let Some(prev) = self.ex.sections.last_mut() {
            if prev.span.end > header_span.start {
                prev.span = idx.span(prev.span.start, header_span.start);
            }
        }
        self.ex.sections.push(Section {
            kind,
            title: header.to_string(),
            header: header_span,
            span,
        });
        self
    }

    pub fn picture(mut self, f: impl FnOnce(&mut Picture)) -> Note {
        f(&mut self.pic);
        self
    }

    /// Run one rule on this note with the default configuration.
    pub fn check(&self, rule: &Rule) -> Vec<Diagnostic> {
        self.check_with(rule, &LintConfig::default())
    }

    pub fn check_with(&self, rule: &Rule, cfg: &LintConfig) -> Vec<Diagnostic> {
        let cx = Ctx {
            text: &self.text,
            ex: &self.ex,
            pic: &self.pic,
            kind: super::kind::detect(&self.text, &self.ex),
            cfg,
        };
        let mut out = Vec::new();
        if rule.applies_to(cx.kind) {
            (rule.check)(&cx, &mut out);
        }
        out
    }
}

impl Note {
    /// What a user sees for these diagnostics: the human blocks, then the JSON diagnostics,
    /// for snapshot tests.
    pub fn rendered(&self, diags: &[Diagnostic]) -> String {
        let mut s = String::new();
        for d in diags {
            s.push_str(&crate::render::lint_human::block(
                "note.txt",
                Some(&self.text),
                d,
                false,
            ));
            s.push_str("\n\n");
        }
        s.push_str(&serde_json::to_string_pretty(diags).unwrap_or_default());
        s.push('\n');
        s
    }
}

/// Canonical-unit conversion for the units the tests use. Factors: lb x 0.45359237 (exact,
/// 1959 international yard and pound agreement); (°F - 32) x 5/9; creatinine mg/dL x 88.4
/// (molar mass 113.12 g/mol); haemoglobin g/dL x 10.
fn normalize(concept: MeasureConcept, value: f64, unit: &str) -> Option<Quantity> {
    let canonical = concept.canonical_unit();
    let v = match unit {
        u if u == canonical => value,
        "[lb_av]" => value * 0.45359237,
        "[degF]" => (value - 32.0) * 5.0 / 9.0,
        "mg/dL" if concept == MeasureConcept::Creatinine => value * 88.4,
        "mg/dL" if concept == MeasureConcept::Urea => value * 0.357,
        "g/dL" => value * 10.0,
        "cm" if concept == MeasureConcept::Jvp => value,
        _ => return None,
    };
    Some(Quantity {
        value: v,
        unit: canonical,
    })
}
