//! JSON output of `extract` (`tidemark-extract/1`).
//!
//! One object per run: `{"schema": "tidemark-extract/1", "documents": [...]}`; each document
//! has `source`, `measurements`, `findings`, `warnings` and the rest of the model and picture.
//! Spans are half-open byte offsets with 1-based line/column (Unicode scalar values). The
//! schema is documented in `docs/schema/tidemark-extract-1.schema.json`.

use std::io::{self, Write};

use serde_json::{json, Value};

use crate::cli::inputs::Doc;
use crate::Analysis;

pub const EXTRACT_SCHEMA: &str = "tidemark-extract/1";

/// The JSON value of one document's extraction.
pub fn extract_document(doc: &Doc, analysis: Option<&Analysis>) -> Value {
    let mut v = json!({
        "source": doc.source,
        "warnings": doc.warnings,
    });
    let obj = v.as_object_mut().expect("json! object");
    match analysis {
        Some(a) => {
            let ex = &a.extraction;
            obj.insert("note_date".into(), json!(ex.note_date));
            obj.insert("measurements".into(), json!(ex.measurements));
            obj.insert("findings".into(), json!(ex.findings));
            obj.insert("statements".into(), json!(ex.statements));
            obj.insert("medications".into(), json!(ex.medications));
            obj.insert("sections".into(), json!(ex.sections));
            obj.insert("episodes".into(), json!(ex.episodes));
            let p = &a.picture;
            obj.insert("profile".into(), json!(p.profile));
            obj.insert("classifications".into(), json!(p.classifications));
            obj.insert("patient".into(), json!(p.patient));
            obj.insert("derived".into(), json!(p.derived));
            obj.insert("trends".into(), json!(p.trends));
        }
        None => {
            for key in [
                "measurements",
                "findings",
                "statements",
                "medications",
                "sections",
            ] {
                obj.insert(key.into(), json!([]));
            }
        }
    }
    v
}

/// Write the whole run as one pretty-printed object.
pub fn write_extract_run<W: Write>(
    out: &mut W,
    docs: &[(Doc, Option<Analysis>)],
) -> io::Result<()> {
    let mut run = RunWriter::start(out, EXTRACT_SCHEMA)?;
    for (d, a) in docs {
        run.document(out, &pretty_document(&extract_document(d, a.as_ref())))?;
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
pub fn pretty_document(value: &Value) -> Vec<u8> {
    let body = serde_json::to_vec_pretty(value).unwrap_or_else(|_| b"null".to_vec());
    let mut out = Vec::with_capacity(body.len() + body.len() / 8 + 8);
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
    let mut v = extract_document(doc, a);
    v.as_object_mut()
        .expect("object")
        .insert("schema".into(), json!(EXTRACT_SCHEMA));
    serde_json::to_writer(&mut *out, &v)?;
    out.write_all(b"\n")
}

pub const LINT_SCHEMA: &str = "tidemark-lint/1";

/// The JSON value of one document's lint result (`tidemark-lint/1`): `source`, `kind`
/// (`discharge_summary`, `progress_note`, `nursing_obs`, `clinic_letter`, `other`, or null
/// for a skipped input), `diagnostics` (`rule`, `severity`, `category`, `message`, `query`?,
/// `span` or null, `fix`?) and `warnings`. Documented in
/// `docs/schema/tidemark-lint-1.schema.json`.
pub fn lint_document(doc: &Doc, analysis: Option<&Analysis>) -> Value {
    match analysis {
        Some(a) => json!({
            "source": doc.source,
            "kind": a.kind,
            "diagnostics": a.diagnostics,
            "warnings": doc.warnings,
        }),
        None => json!({
            "source": doc.source,
            "kind": null,
            "diagnostics": [],
            "warnings": doc.warnings,
        }),
    }
}

/// Write the whole lint run as one pretty-printed object.
pub fn write_lint_run<W: Write>(out: &mut W, docs: &[(Doc, Option<Analysis>)]) -> io::Result<()> {
    let documents: Vec<Value> = docs
        .iter()
        .map(|(d, a)| lint_document(d, a.as_ref()))
        .collect();
    let run = json!({"schema": LINT_SCHEMA, "documents": documents});
    serde_json::to_writer_pretty(&mut *out, &run)?;
    out.write_all(b"\n")
}

/// Write one document's lint result as one line, with the `schema` key added (as the
/// extract command's JSON Lines do).
pub fn write_lint_line<W: Write>(out: &mut W, doc: &Doc, a: Option<&Analysis>) -> io::Result<()> {
    let mut v = lint_document(doc, a);
    v.as_object_mut()
        .expect("object")
        .insert("schema".into(), json!(LINT_SCHEMA));
    serde_json::to_writer(&mut *out, &v)?;
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
