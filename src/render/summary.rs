//! `extract --format text`: a compact human summary of each note's picture.

use std::io::{self, Write};

use crate::cli::inputs::Doc;
use crate::Analysis;

pub fn write<W: Write>(out: &mut W, docs: &[(Doc, Option<Analysis>)]) -> io::Result<()> {
    for (doc, analysis) in docs {
        write_document(out, doc, analysis.as_ref())?;
    }
    write_footer(out)
}

/// The closing lines of a summary run: the caution.
pub fn write_footer<W: Write>(out: &mut W) -> io::Result<()> {
    writeln!(out, "\n{}", super::CAUTION)
}

/// One document's summary.
pub fn write_document<W: Write>(
    out: &mut W,
    doc: &Doc,
    analysis: Option<&Analysis>,
) -> io::Result<()> {
    writeln!(out, "== {}", doc.source)?;
    for w in &doc.warnings {
        writeln!(out, "   warning: {}", w.message)?;
    }
    let Some(a) = analysis else { return Ok(()) };
    let p = &a.picture.profile;
    writeln!(out, "   profile: {}", p.label)?;
    for m in &a.extraction.measurements {
        let norm = m
            .normalized
            .map(|q| format!("{} {}", q.value, q.unit))
            .unwrap_or_else(|| "-".into());
        writeln!(
            out,
            "   {:>4}:{:<3} {:<16} {:<10} {}",
            m.span.line,
            m.span.column,
            m.concept.name(),
            norm,
            m.text
        )?;
    }
    for f in &a.extraction.findings {
        writeln!(
            out,
            "   {:>4}:{:<3} {:<16} {:<12} {}",
            f.span.line,
            f.span.column,
            f.concept.name(),
            f.assertion.name(),
            f.text
        )?;
    }
    Ok(())
}
