//! One open document: its text, version and latest analysis.

use std::panic::{catch_unwind, AssertUnwindSafe};

use lsp_types::{Position, Range, TextDocumentContentChangeEvent};

use crate::config::Config;
use crate::span::{LineIndex, Span};
use crate::Analysis;

/// An open document as the server sees it.
#[derive(Debug, Clone)]
pub struct Document {
    pub text: String,
    pub version: i32,
    /// `None` when the analysis failed (reported on stderr); the server keeps running.
    pub analysis: Option<Analysis>,
}

impl Document {
    pub fn new(text: String, version: i32, config: &Config) -> Document {
        let mut d = Document {
            text,
            version,
            analysis: None,
        };
        d.reanalyze(config);
        d
    }

    /// Run the analysis again on the current text.
    pub fn reanalyze(&mut self, config: &Config) {
        let text = &self.text;
        self.analysis = catch_unwind(AssertUnwindSafe(|| crate::analyze(text, config))).ok();
        if self.analysis.is_none() {
            eprintln!("tidemark lsp: analysis failed on a document; no diagnostics for it");
        }
    }

    /// Apply the client's changes in order: a change without a range replaces the text, a
    /// change with one replaces that UTF-16 range.
    pub fn apply_changes(&mut self, changes: Vec<TextDocumentContentChangeEvent>) {
        for change in changes {
            match change.range {
                None => self.text = change.text,
                Some(range) => {
                    let (start, end) = {
                        let idx = LineIndex::new(&self.text);
                        let s = offset(&idx, range.start);
                        let e = offset(&idx, range.end);
                        (s.min(e), s.max(e))
                    };
                    self.text.replace_range(start..end, &change.text);
                }
            }
        }
    }
}

/// Byte offset of an LSP position (UTF-16 columns), clamped into the text.
pub fn offset(idx: &LineIndex, p: Position) -> usize {
    idx.offset_of_utf16_position(p.line, p.character)
}

/// LSP position of a byte offset.
pub fn position(idx: &LineIndex, offset: usize) -> Position {
    let (line, character) = idx.utf16_position(offset);
    Position { line, character }
}

/// LSP range of a span.
pub fn range(idx: &LineIndex, span: &Span) -> Range {
    Range {
        start: position(idx, span.start),
        end: position(idx, span.end),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn change(
        range: Option<((u32, u32), (u32, u32))>,
        text: &str,
    ) -> TextDocumentContentChangeEvent {
        TextDocumentContentChangeEvent {
            range: range.map(|((a, b), (c, d))| Range {
                start: Position {
                    line: a,
                    character: b,
                },
                end: Position {
                    line: c,
                    character: d,
                },
            }),
            range_length: None,
            text: text.into(),
        }
    }

    #[test]
    fn incremental_changes_use_utf16_columns() {
        let mut d = Document::new("T 37 °C 😀 Wt 82.4\n".into(), 1, &Config::default());
        // "T 37 °C " is 8 units, the emoji 2, a space: "82.4" starts at 14 and ends at 18.
        d.apply_changes(vec![change(Some(((0, 14), (0, 18))), "80.1 kg")]);
        assert_eq!(d.text, "T 37 °C 😀 Wt 80.1 kg\n");
        // Insert at the end of the text, on the empty last line, then replace everything.
        d.apply_changes(vec![change(Some(((1, 0), (1, 0))), "µ")]);
        assert_eq!(d.text, "T 37 °C 😀 Wt 80.1 kg\nµ");
        d.apply_changes(vec![change(None, "new")]);
        assert_eq!(d.text, "new");
    }

    #[test]
    fn out_of_range_changes_clamp_instead_of_panicking() {
        let mut d = Document::new("ab".into(), 1, &Config::default());
        d.apply_changes(vec![change(Some(((5, 3), (0, 1))), "X")]);
        assert_eq!(d.text, "aX");
    }

    #[test]
    fn ranges_of_spans_are_utf16() {
        let text = "µ°😀 JVP";
        let idx = LineIndex::new(text);
        let start = text.find("JVP").unwrap();
        let r = range(&idx, &idx.span(start, start + 3));
        // µ and ° are one unit each, the emoji two, then a space: 5.
        assert_eq!((r.start.character, r.end.character), (5, 8));
    }
}
