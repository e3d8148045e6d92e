//! JSON output of `extract` (`tidemark-extract/1`).
//!
//! One object per run: `{"schema": "tidemark-extract/1", "documents": [...]}`; each document
//! has `source`, `measurements`, `findings`, `warnings` and the rest of the model and picture.
//! Spans are half-open byte offsets with 1-based line/column (Unicode scalar values). The
//! schema is documented in `docs/schema/tidemark-extract-1.schema.json`.

use std::io::{self, Write};

use serde::Serialize;
use serde_json::{json, Value};

use crate::cli::inputs::Doc;
use crate::lint::{Diagnostic, DocKind};
use crate::model::{Episode, Finding, InputWarning, Measurement, Medication, Section, Statement};
use crate::picture::trends::Trends;
use crate::picture::{Classifications, Derived, Patient, Profile};
use crate::Analysis;

pub const EXTRACT_SCHEMA: &str = "tidemark-extract/1";

/// One document's extraction as it is serialised: the keys in the documented order.
/// Serialising this view directly, rather than through a [`Value`] tree, saves building and
/// freeing a tree per document on the batch path.
#[derive(Serialize)]
#[serde(untagged)]
pub enum ExtractDocument<'a> {
    Analysed {
        source: &'a str,
        warnings: &'a [InputWarning],
        note_date: &'a Option<String>,
        measurements: &'a [Measurement],
        findings: &'a [Finding],
        statements: &'a [Statement],
        medications: &'a [Medication],
        sections: &'a [Section],
        episodes: &'a [Episode],
        profile: &'a Profile,
        classifications: &'a Classifications,
        patient: &'a Patient,
        derived: &'a Derived,
        trends: &'a Trends,
        #[serde(skip_serializing_if = "Option::is_none")]
        schema: Option<&'static str>,
    },
    Skipped {
        source: &'a str,
        warnings: &'a [InputWarning],
        measurements: [(); 0],
        findings: [(); 0],
        statements: [(); 0],
        medications: [(); 0],
        sections: [(); 0],
        #[serde(skip_serializing_if = "Option::is_none")]
        schema: Option<&'static str>,
    },
}

/// The typed view of one document's extraction; `schema` adds the `schema` key last (as
/// JSON Lines carry it).
pub fn extract_view<'a>(
    doc: &'a Doc,
    analysis: Option<&'a Analysis>,
    schema: Option<&'static str>,
) -> ExtractDocument<'a> {
    match analysis {
        Some(a) => {
            let ex = &a.extraction;
            let p = &a.picture;
            ExtractDocument::Analysed {
                source: &doc.source,
                warnings: &doc.warnings,
                note_date: &ex.note_date,
                measurements: &ex.measurements,
                findings: &ex.findings,
                statements: &ex.statements,
                medications: &ex.medications,
                sections: &ex.sections,
                episodes: &ex.episodes,
                profile: &p.profile,
                classifications: &p.classifications,
                patient: &p.patient,
                derived: &p.derived,
                trends: &p.trends,
                schema,
            }
        }
        None => ExtractDocument::Skipped {
            source: &doc.source,
            warnings: &doc.warnings,
            measurements: [],
            findings: [],
            statements: [],
            medications: [],
            sections: [],
            schema,
        },
    }
}

/// The JSON value of one document's extraction.
pub fn extract_document(doc: &Doc, analysis: Option<&Analysis>) -> Value {
    serde_json::to_value(extract_view(doc, analysis, None)).unwrap_or(Value::Null)
}

/// Write the whole run as one pretty-printed object.
pub fn write_extract_run<W: Write>(
    out: &mut W,
    docs: &[(Doc, Option<Analysis>)],
) -> io::Result<()> {
    let mut run = RunWriter::start(out, EXTRACT_SCHEMA)?;
    for (d, a) in docs {
        run.document(out, &pretty_document(&extract_view(d, a.as_ref(), None)))?;
    }
    run.end(out)
}

/// Streams a run object `{"schema": ..., "documents": [...]}` one document at a time, so a
/// batch of any size is written without holding its documents in memory. The bytes are
/// exactly those of `serde_json::to_writer_pretty` on the whole object, plus a newline.
#[derive(Debug)]
pub struct RunWriter {
    documents: usize,
}

impl RunWriter {
    /// Write the opening of the run object.
    pub fn start<W: Write>(out: &mut W, schema: &str) -> io::Result<RunWriter> {
        let schema = serde_json::to_string(schema)?;
        write!(out, "{{\n  \"schema\": {schema},\n  \"documents\": [")?;
        Ok(RunWriter { documents: 0 })
    }

    /// Write one document rendered by [`pretty_document`].
    pub fn document<W: Write>(&mut self, out: &mut W, rendered: &[u8]) -> io::Result<()> {
        out.write_all(if self.documents == 0 { b"\n" } else { b",\n" })?;
        out.write_all(rendered)?;
        self.documents += 1;
        Ok(())
    }

    /// Close the run object.
    pub fn end<W: Write>(self, out: &mut W) -> io::Result<()> {
        if self.documents == 0 {
            out.write_all(b"]\n}\n")
        } else {
            out.write_all(b"\n  ]\n}\n")
        }
    }
}

/// One document pretty-printed at the depth it has inside a run object (for
/// [`RunWriter::document`]); cheap to call on worker threads.
pub fn pretty_document<T: Serialize + ?Sized>(value: &T) -> Vec<u8> {
    let body = serde_json::to_vec_pretty(value).unwrap_or_else(|_| b"null".to_vec());
    let lines = memchr::memchr_iter(b'\n', &body).count();
    let mut out = Vec::with_capacity(body.len() + 4 * (lines + 1));
    // JSON strings never contain a raw newline, so every line break is structural.
    for (i, line) in body.split(|&b| b == b'\n').enumerate() {
        if i > 0 {
            out.push(b'\n');
        }
        out.extend_from_slice(b"    ");
        out.extend_from_slice(line);
    }
    out
}

/// Write one document as one line.
pub fn write_extract_line<W: Write>(
    out: &mut W,
    doc: &Doc,
    a: Option<&Analysis>,
) -> io::Result<()> {
    serde_json::to_writer(&mut *out, &extract_view(doc, a, Some(EXTRACT_SCHEMA)))?;
    out.write_all(b"\n")
}

pub const LINT_SCHEMA: &str = "tidemark-lint/1";

/// One document's lint result as it is serialised (`tidemark-lint/1`): `source`, `kind`
/// (`discharge_summary`, `progress_note`, `nursing_obs`, `clinic_letter`, `other`, or null
/// for a skipped input), `diagnostics` (`rule`, `severity`, `category`, `message`, `query`?,
/// `span` or null, `fix`?) and `warnings`; `schema` last when set. Documented in
/// `docs/schema/tidemark-lint-1.schema.json`.
#[derive(Serialize)]
pub struct LintDocument<'a> {
    source: &'a str,
    kind: Option<DocKind>,
    diagnostics: &'a [Diagnostic],
    warnings: &'a [InputWarning],
    #[serde(skip_serializing_if = "Option::is_none")]
    schema: Option<&'static str>,
}

/// The typed view of one document's lint result.
pub fn lint_view<'a>(
    doc: &'a Doc,
    analysis: Option<&'a Analysis>,
    schema: Option<&'static str>,
) -> LintDocument<'a> {
    LintDocument {
        source: &doc.source,
        kind: analysis.map(|a| a.kind),
        diagnostics: analysis.map_or(&[], |a| a.diagnostics.as_slice()),
        warnings: &doc.warnings,
        schema,
    }
}

/// The JSON value of one document's lint result (see [`LintDocument`]).
pub fn lint_document(doc: &Doc, analysis: Option<&Analysis>) -> Value {
    serde_json::to_value(lint_view(doc, analysis, None)).unwrap_or(Value::Null)
}

/// Write the whole lint run as one pretty-printed object.
pub fn write_lint_run<W: Write>(out: &mut W, docs: &[(Doc, Option<Analysis>)]) -> io::Result<()> {
    let documents: Vec<LintDocument> = docs
        .iter()
        .map(|(d, a)| lint_view(d, a.as_ref(), None))
        .collect();
    let run = json!({"schema": LINT_SCHEMA, "documents": documents});
    serde_json::to_writer_pretty(&mut *out, &run)?;
    out.write_all(b"\n")
}

/// Write one document's lint result as one line, with the `schema` key added (as the
/// extract command's JSON Lines do).
pub fn write_lint_line<W: Write>(out: &mut W, doc: &Doc, a: Option<&Analysis>) -> io::Result<()> {
    serde_json::to_writer(&mut *out, &lint_view(doc, a, Some(LINT_SCHEMA)))?;
    out.write_all(b"\n")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn run_bytes(values: &[Value]) -> Vec<u8> {
        let mut out = Vec::new();
        let mut run = RunWriter::start(&mut out, "x/1").unwrap();
        for v in values {
            let r = pretty_document(v);
            run.document(&mut out, &r).unwrap();
        }
        run.end(&mut out).unwrap();
        out
    }

    // Reference: serde_json's own pretty printer on the whole object.
    fn reference(values: &[Value]) -> Vec<u8> {
        let mut v =
            serde_json::to_vec_pretty(&json!({"schema": "x/1", "documents": values})).unwrap();
        v.push(b'\n');
        v
    }

    #[test]
    fn streamed_run_matches_serde_pretty_output() {
        let docs = vec![
            json!({"source": "a\nb.txt", "warnings": [], "nested": {"k": [1, 2, {"z": null}]}}),
            json!({"source": "c", "empty": {}, "list": []}),
        ];
        assert_eq!(run_bytes(&docs), reference(&docs));
        assert_eq!(run_bytes(&docs[..1]), reference(&docs[..1]));
        assert_eq!(run_bytes(&[]), reference(&[]));
    }
}
