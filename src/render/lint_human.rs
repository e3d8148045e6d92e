//! `lint --format human`: one block per diagnostic, then a summary and the caution.
//!
//! ```text
//! ward/bed4.txt:3:1: warning[unit-missing]: The weight "Wt 71.2" has no unit; ...
//!   |
//! 3 | Wt 71.2, T 36.8
//!   | ^^^^^^^ A weight, temperature, JVP or laboratory value is written without its unit.
//!   = help: fix: Write the unit kg
//! ```
//!
//! The header line is `path:line:column: severity[rule-id]: message` (columns count Unicode
//! scalar values, 1-based); a diagnostic without a location prints `path: severity[rule-id]:
//! message`. Source lines are drawn with annotate-snippets. Colour is used only when asked
//! for (the command line asks when stdout is a terminal and `NO_COLOR` is unset).

use std::io::{self, Write};

use annotate_snippets::{AnnotationKind, Group, Level, Renderer, Snippet};

use crate::cli::inputs::Doc;
use crate::lint::{find_rule, Diagnostic, Severity};
use crate::span::LineIndex;
use crate::Analysis;

/// Options of the human renderer.
#[derive(Debug, Clone, Copy, Default)]
pub struct HumanOptions {
    pub color: bool,
}

/// Most source lines shown for one diagnostic.
const MAX_LINES: u32 = 4;

fn level(sev: Severity) -> Level<'static> {
    match sev {
        Severity::Error => Level::ERROR,
        Severity::Warning => Level::WARNING,
        Severity::Info => Level::INFO,
    }
}

fn paint(color: bool, code: &str, s: &str) -> String {
    if color {
        format!("\x1b[{code}m{s}\x1b[0m")
    } else {
        s.to_string()
    }
}

fn severity_code(sev: Severity) -> &'static str {
    match sev {
        Severity::Error => "1;31",
        Severity::Warning => "1;33",
        Severity::Info => "1;36",
    }
}

/// The header line of one diagnostic.
pub fn header(source: &str, d: &Diagnostic, color: bool) -> String {
    let sev = paint(color, severity_code(d.severity), d.severity.name());
    let place = match d.span {
        Some(s) => format!("{source}:{}:{}", s.line, s.column),
        None => source.to_string(),
    };
    format!(
        "{}: {sev}[{}]: {}",
        paint(color, "1", &place),
        d.rule,
        d.message
    )
}

/// The snippet, query and fix lines under a header.
fn body(text: Option<&str>, d: &Diagnostic, color: bool) -> String {
    let mut elements: Vec<annotate_snippets::Element<'_>> = Vec::new();
    let label = find_rule(d.rule).map(|r| r.summary).unwrap_or("");
    if let (Some(text), Some(span)) = (text, d.span) {
        let idx = LineIndex::new(text);
        let first = span.line.max(1);
        let last = span.end_line.max(first).min(first + MAX_LINES - 1);
        let start = idx.line_start(first as usize - 1);
        let end = idx.line_range(last as usize - 1).end.max(start);
        if let Some(src) = text.get(start..end) {
            let a = span.start.clamp(start, end) - start;
            let b = span.end.clamp(start, end) - start;
            let b = if b <= a { (a + 1).min(src.len()) } else { b };
            let a = src.floor_char_boundary(a);
            let b = src.floor_char_boundary(b).max(a);
            elements.push(
                Snippet::source(src)
                    .line_start(first as usize)
                    .fold(false)
                    .annotation(AnnotationKind::Primary.span(a..b).label(label))
                    .into(),
            );
        }
    }
    if let Some(q) = &d.query {
        elements.push(Level::NOTE.with_name("query").message(q.as_str()).into());
    }
    if let Some(f) = &d.fix {
        elements.push(Level::HELP.message(format!("fix: {}", f.title)).into());
    }
    if elements.is_empty() {
        return String::new();
    }
    let group = Group::with_level(level(d.severity)).elements(elements);
    let renderer = if color {
        Renderer::styled()
    } else {
        Renderer::plain()
    };
    renderer.render(&[group])
}

/// Counts for the run summary.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Tally {
    pub errors: usize,
    pub warnings: usize,
    pub infos: usize,
    pub documents: usize,
    pub documents_with_diagnostics: usize,
    pub skipped: usize,
}

impl Tally {
    pub fn of(docs: &[(Doc, Option<Analysis>)]) -> Tally {
        let mut t = Tally {
            documents: docs.len(),
            ..Tally::default()
        };
        for (_, a) in docs {
            let Some(a) = a else {
                t.skipped += 1;
                continue;
            };
            if !a.diagnostics.is_empty() {
                t.documents_with_diagnostics += 1;
            }
            for d in &a.diagnostics {
                match d.severity {
                    Severity::Error => t.errors += 1,
                    Severity::Warning => t.warnings += 1,
                    Severity::Info => t.infos += 1,
                }
            }
        }
        t
    }

    pub fn line(&self) -> String {
        let total = self.errors + self.warnings + self.infos;
        let plural =
            |n: usize, one: &str, many: &str| format!("{n} {}", if n == 1 { one } else { many });
        let mut s = format!(
            "{} ({}, {}, {}) in {} of {}",
            plural(total, "diagnostic", "diagnostics"),
            plural(self.errors, "error", "errors"),
            plural(self.warnings, "warning", "warnings"),
            plural(self.infos, "info", "info"),
            self.documents_with_diagnostics,
            plural(self.documents, "document", "documents"),
        );
        if self.skipped > 0 {
            s.push_str(&format!(
                "; {} skipped",
                plural(self.skipped, "input", "inputs")
            ));
        }
        s
    }
}

/// One diagnostic's block: header line, then snippet, query and fix lines.
pub fn block(source: &str, text: Option<&str>, d: &Diagnostic, color: bool) -> String {
    let mut s = header(source, d, color);
    let b = body(text, d, color);
    if !b.is_empty() {
        s.push('\n');
        s.push_str(&b);
    }
    s
}

/// Write the whole run.
pub fn write<W: Write>(
    out: &mut W,
    docs: &[(Doc, Option<Analysis>)],
    opts: HumanOptions,
) -> io::Result<()> {
    for (doc, analysis) in docs {
        for w in &doc.warnings {
            let what = if analysis.is_some() {
                "note"
            } else {
                "skipped"
            };
            writeln!(out, "{}: {what}: {}", doc.source, w.message)?;
        }
        let Some(a) = analysis else { continue };
        for d in &a.diagnostics {
            writeln!(
                out,
                "{}\n",
                block(&doc.source, doc.text.as_deref(), d, opts.color)
            )?;
        }
    }
    writeln!(out, "{}", Tally::of(docs).line())?;
    writeln!(out, "\n{}", super::CAUTION)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::Fix;
    use crate::span::LineIndex;

    fn diag(text: &str, needle: &str) -> Diagnostic {
        let idx = LineIndex::new(text);
        let s = text.find(needle).unwrap();
        let span = idx.span(s, s + needle.len());
        Diagnostic {
            rule: "unit-missing",
            severity: Severity::Warning,
            category: "units",
            message: "The weight \"Wt 71.2\" has no unit; it was read as 71.2 kg. Write the unit."
                .into(),
            query: None,
            span: Some(span),
            fix: Some(Fix {
                title: "Write the unit kg".into(),
                span,
                replacement: " kg".into(),
            }),
        }
    }

    #[test]
    fn block_has_header_snippet_underline_and_fix() {
        let text = "Ward round\nObs: Wt 71.2, T 36.8\n";
        let d = diag(text, "Wt 71.2");
        assert_eq!(
            header("n.txt", &d, false),
            "n.txt:2:6: warning[unit-missing]: The weight \"Wt 71.2\" has no unit; it was read \
             as 71.2 kg. Write the unit."
        );
        let b = body(Some(text), &d, false);
        assert!(b.contains("2 | Obs: Wt 71.2, T 36.8"), "{b}");
        assert!(b.contains("|      ^^^^^^^ A weight"), "{b}");
        assert!(b.contains("fix: Write the unit kg"), "{b}");
        assert!(!b.contains('\x1b'), "plain output has no escapes");
        assert!(body(Some(text), &d, true).contains('\x1b'));
    }

    #[test]
    fn non_ascii_lines_and_missing_spans_do_not_panic() {
        let text = "Ödem — Wt 71.2 😀\n";
        let d = diag(text, "Wt 71.2");
        let b = body(Some(text), &d, false);
        assert!(b.contains("Wt 71.2"), "{b}");
        let mut d = d;
        d.span = None;
        d.fix = None;
        assert_eq!(body(Some(text), &d, false), "");
        assert!(header("-", &d, false).starts_with("-: warning[unit-missing]"));
    }

    #[test]
    fn summary_counts_and_pluralises() {
        let t = Tally {
            errors: 1,
            warnings: 2,
            infos: 0,
            documents: 3,
            documents_with_diagnostics: 2,
            skipped: 1,
        };
        assert_eq!(
            t.line(),
            "3 diagnostics (1 error, 2 warnings, 0 info) in 2 of 3 documents; 1 input skipped"
        );
    }
}

#[cfg(test)]
mod prop {
    use super::*;
    use crate::span::Span;
    use proptest::prelude::*;

    proptest! {
        // Bad spans (past the end, reversed, inside a character, wrong line numbers) never
        // make the renderer panic.
        #[test]
        fn any_span_renders(text in "(\\PC|\n|\r){0,80}", start in 0usize..120, len in 0usize..40,
                            line in 0u32..12, col in 0u32..90, end_line in 0u32..12) {
            let d = Diagnostic {
                rule: "unit-missing",
                severity: Severity::Info,
                category: "units",
                message: "m".into(),
                query: Some("q".into()),
                span: Some(Span {
                    start,
                    end: start + len,
                    line,
                    column: col,
                    end_line,
                    end_column: col + 1,
                }),
                fix: None,
            };
            let _ = header("x", &d, false);
            let _ = body(Some(&text), &d, false);
        }
    }
}
