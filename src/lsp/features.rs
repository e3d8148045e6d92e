//! What the server answers: diagnostics, hover, document symbols and code actions, built from
//! a document's analysis. Pure functions of the document, so they are tested without a client.

use std::collections::HashMap;
use std::str::FromStr;

use lsp_types::{
    CodeAction, CodeActionKind, CodeDescription, Diagnostic, DiagnosticSeverity, DocumentSymbol,
    Hover, HoverContents, MarkupContent, MarkupKind, NumberOrString, Position, Range, SymbolKind,
    TextEdit, Uri, WorkspaceEdit,
};

use super::document::{offset, range, Document};
use crate::lint::{self, Severity};
use crate::model::{Assertion, Experiencer, Temporality};
use crate::span::{LineIndex, Span};

/// Where rule documentation lives, for each diagnostic's code description.
#[derive(Debug, Clone, Default)]
pub struct RuleDocs {
    /// Base URL of the rule reference; a diagnostic links to `{base}#{rule-id}`.
    pub base: Option<String>,
}

impl RuleDocs {
    fn href(&self, rule: &str) -> Option<Uri> {
        let base = self.base.as_deref()?;
        Uri::from_str(&format!("{base}#{rule}")).ok()
    }
}

/// The document's diagnostics as LSP diagnostics.
pub fn diagnostics(doc: &Document, docs: &RuleDocs) -> Vec<Diagnostic> {
    let Some(a) = &doc.analysis else {
        return Vec::new();
    };
    let idx = LineIndex::new(&doc.text);
    a.diagnostics
        .iter()
        .map(|d| diagnostic(&idx, d, docs))
        .collect()
}

fn diagnostic(idx: &LineIndex, d: &lint::Diagnostic, docs: &RuleDocs) -> Diagnostic {
    let range = d.span.map(|s| range(idx, &s)).unwrap_or_default();
    let severity = match d.severity {
        Severity::Error => DiagnosticSeverity::ERROR,
        Severity::Warning => DiagnosticSeverity::WARNING,
        Severity::Info => DiagnosticSeverity::INFORMATION,
    };
    let href = docs.href(d.rule);
    let mut message = d.message.clone();
    if let Some(q) = &d.query {
        message.push_str("\nQuery: ");
        message.push_str(q);
    }
    if href.is_none() {
        message.push_str(&format!("\n(details: tidemark explain {})", d.rule));
    }
    Diagnostic {
        range,
        severity: Some(severity),
        code: Some(NumberOrString::String(d.rule.to_string())),
        code_description: href.map(|href| CodeDescription { href }),
        source: Some("tidemark".into()),
        message,
        related_information: None,
        tags: None,
        data: None,
    }
}

/// One item of the analysis that can be hovered.
struct Item {
    span: Span,
    markdown: String,
}

fn context_words(a: Assertion, t: Temporality, e: Experiencer) -> String {
    let mut words = vec![a.name()];
    if t == Temporality::Historical {
        words.push("historical");
    }
    if e == Experiencer::Other {
        words.push("someone else");
    }
    words.join(", ")
}

fn fmt_num(x: f64) -> String {
    let s = format!("{:.4}", x);
    let s = s.trim_end_matches('0').trim_end_matches('.');
    s.to_string()
}

/// Hover on the smallest extracted value under the position.
pub fn hover(doc: &Document, pos: Position) -> Option<Hover> {
    let a = doc.analysis.as_ref()?;
    let idx = LineIndex::new(&doc.text);
    let at = offset(&idx, pos);
    let ex = &a.extraction;
    let mut items = Vec::new();
    for m in &ex.measurements {
        let value = match (m.normalized, m.unit) {
            (Some(q), _) => format!("{} {}", fmt_num(q.value), q.unit),
            (None, Some(u)) => format!("{} {u}", fmt_num(m.value)),
            (None, None) => format!("{} (no unit)", fmt_num(m.value)),
        };
        let mut md = format!(
            "**{}** (`{}`): {value}\n\nassertion: {}",
            m.concept.label(),
            m.concept.name(),
            context_words(m.assertion, m.temporality, m.experiencer)
        );
        if m.unit_inferred {
            md.push_str("\n\nunit inferred (not written)");
        }
        if let Some(d) = &m.date {
            md.push_str(&format!("\n\ndate: {d}"));
        }
        items.push(Item {
            span: m.span,
            markdown: md,
        });
    }
    for f in &ex.findings {
        let mut md = format!(
            "**{}** (`{}`)\n\nassertion: {}",
            f.concept.label(),
            f.concept.name(),
            context_words(f.assertion, f.temporality, f.experiencer)
        );
        let cues: Vec<String> = f.cues.iter().map(|c| format!("`{}`", c.text)).collect();
        if !cues.is_empty() {
            md.push_str(&format!("\n\ncues: {}", cues.join(", ")));
        }
        items.push(Item {
            span: f.span,
            markdown: md,
        });
    }
    for s in &ex.statements {
        let kind = serde_json::to_value(s.kind)
            .ok()
            .and_then(|v| v.as_str().map(str::to_string))
            .unwrap_or_default();
        let md = format!(
            "**{kind}**: {}\n\nassertion: {}",
            s.value,
            context_words(s.assertion, s.temporality, s.experiencer)
        );
        items.push(Item {
            span: s.span,
            markdown: md,
        });
    }
    let item = items
        .into_iter()
        .filter(|i| i.span.start <= at && at < i.span.end.max(i.span.start + 1))
        .min_by_key(|i| i.span.len())?;
    let mut md = item.markdown;
    // The rules whose diagnostics rest on this item, and what it does to the profile.
    let rules: Vec<String> = a
        .diagnostics
        .iter()
        .filter(|d| d.span.is_some_and(|s| overlaps(&s, &item.span)))
        .map(|d| format!("`{}`: {}", d.rule, d.message))
        .collect();
    if !rules.is_empty() {
        md.push_str(&format!("\n\nused by: {}", rules.join("; ")));
    }
    let evidence: Vec<String> = a
        .picture
        .profile
        .evidence
        .iter()
        .filter(|e| overlaps(&e.span, &item.span))
        .map(|e| format!("supports {}", e.supports))
        .collect();
    if !evidence.is_empty() {
        md.push_str(&format!("\n\nprofile: {}", evidence.join(", ")));
    }
    md.push_str("\n\n---\n_Documentation support, not a diagnostic device._");
    Some(Hover {
        contents: HoverContents::Markup(MarkupContent {
            kind: MarkupKind::Markdown,
            value: md,
        }),
        range: Some(range(&idx, &item.span)),
    })
}

fn overlaps(a: &Span, b: &Span) -> bool {
    a.start < b.end.max(b.start + 1) && b.start < a.end.max(a.start + 1)
}

/// The sections of the note as an outline.
#[allow(deprecated)] // `DocumentSymbol::deprecated` must be written to build the struct.
pub fn symbols(doc: &Document) -> Vec<DocumentSymbol> {
    let Some(a) = &doc.analysis else {
        return Vec::new();
    };
    let idx = LineIndex::new(&doc.text);
    a.extraction
        .sections
        .iter()
        .map(|s| {
            let name = s.title.trim();
            DocumentSymbol {
                name: if name.is_empty() {
                    s.kind.name().to_string()
                } else {
                    name.to_string()
                },
                detail: Some(s.kind.name().to_string()),
                kind: SymbolKind::NAMESPACE,
                tags: None,
                deprecated: None,
                range: range(&idx, &s.span),
                selection_range: range(&idx, &s.header),
                children: None,
            }
        })
        .collect()
}

/// Quick fixes for the diagnostics with a safe fix that touch `within`.
// `WorkspaceEdit::changes` is keyed by `Uri`, whose parsed form caches data inside; the key
// is never mutated here.
#[allow(clippy::mutable_key_type)]
pub fn code_actions(doc: &Document, uri: &Uri, within: Range, docs: &RuleDocs) -> Vec<CodeAction> {
    let Some(a) = &doc.analysis else {
        return Vec::new();
    };
    let idx = LineIndex::new(&doc.text);
    let lo = offset(&idx, within.start);
    let hi = offset(&idx, within.end);
    let mut out = Vec::new();
    for d in &a.diagnostics {
        let Some(fix) = &d.fix else { continue };
        let anchor = d.span.unwrap_or(fix.span);
        let touches = anchor.start <= hi && lo <= anchor.end;
        if !touches {
            continue;
        }
        let edit = TextEdit {
            range: range(&idx, &fix.span),
            new_text: fix.replacement.clone(),
        };
        let mut changes = HashMap::new();
        changes.insert(uri.clone(), vec![edit]);
        out.push(CodeAction {
            title: fix.title.clone(),
            kind: Some(CodeActionKind::QUICKFIX),
            diagnostics: Some(vec![diagnostic(&idx, d, docs)]),
            edit: Some(WorkspaceEdit {
                changes: Some(changes),
                document_changes: None,
                change_annotations: None,
            }),
            command: None,
            is_preferred: Some(true),
            disabled: None,
            data: None,
        });
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::Fix;
    use crate::model::{
        Assertion, Cue, Extraction, Finding, FindingConcept, FindingDetail, MeasureConcept,
        Measurement, Section, SectionKind,
    };
    use crate::picture::{Evidence, Picture};
    use crate::Analysis;

    const TEXT: &str = "O/E: µ° 😀 no crackles\nWt 82.4\n";

    /// A document whose analysis is built by hand, as extraction and lint would give it.
    fn doc() -> Document {
        let idx = LineIndex::new(TEXT);
        let at = |s: &str| {
            let i = TEXT.find(s).unwrap();
            idx.span(i, i + s.len())
        };
        let weight = Measurement {
            concept: MeasureConcept::Weight,
            value: 82.4,
            unit: None,
            normalized: None,
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
            text: "Wt 82.4".into(),
            span: at("Wt 82.4"),
            section: Some(0),
            episode: None,
        };
        let crackles = Finding {
            concept: FindingConcept::Crackles,
            assertion: Assertion::Absent,
            experiencer: Experiencer::Patient,
            temporality: Temporality::Current,
            text: "no crackles".into(),
            span: at("crackles"),
            detail: FindingDetail::default(),
            cues: vec![Cue {
                family: "negation",
                text: "no".into(),
                span: at("no"),
            }],
            section: Some(0),
            episode: None,
        };
        let section = Section {
            kind: SectionKind::Examination,
            title: "O/E:".into(),
            header: at("O/E:"),
            span: idx.span(0, TEXT.len()),
        };
        let value_end = TEXT.find("82.4").unwrap() + 4;
        let diag = lint::Diagnostic {
            rule: "unit-missing",
            severity: Severity::Warning,
            category: "units",
            message: "weight 82.4 has no unit".into(),
            query: None,
            span: Some(at("Wt 82.4")),
            fix: Some(Fix {
                title: "Add the unit kg".into(),
                span: idx.span(value_end, value_end),
                replacement: " kg".into(),
            }),
        };
        let mut picture = Picture::default();
        picture.profile.evidence.push(Evidence {
            concept: "crackles".into(),
            supports: "dry",
            span: at("crackles"),
            note: "crackles absent".into(),
            item: "finding",
            text: "crackles".into(),
            episode: None,
        });
        Document {
            text: TEXT.into(),
            version: 1,
            analysis: Some(Analysis {
                extraction: Extraction {
                    sections: vec![section],
                    measurements: vec![weight],
                    findings: vec![crackles],
                    ..Extraction::default()
                },
                picture,
                kind: crate::lint::DocKind::Other,
                diagnostics: vec![diag],
            }),
        }
    }

    fn pos(line: u32, character: u32) -> Position {
        Position { line, character }
    }

    #[test]
    fn diagnostics_carry_rule_severity_and_utf16_range() {
        let docs = RuleDocs {
            base: Some("file:///opt/tidemark/docs/rules.md".into()),
        };
        let d = &diagnostics(&doc(), &docs)[0];
        assert_eq!(d.code, Some(NumberOrString::String("unit-missing".into())));
        assert_eq!(d.severity, Some(DiagnosticSeverity::WARNING));
        assert_eq!(d.range.start, pos(1, 0));
        assert_eq!(d.range.end, pos(1, 7));
        assert_eq!(
            d.code_description.as_ref().unwrap().href.as_str(),
            "file:///opt/tidemark/docs/rules.md#unit-missing"
        );
        // Without a documentation link the message says where to look instead.
        let d = &diagnostics(&doc(), &RuleDocs::default())[0];
        assert!(d.code_description.is_none());
        assert!(d.message.ends_with("tidemark explain unit-missing)"));
    }

    #[test]
    fn hover_on_a_finding_after_an_emoji_uses_utf16_columns() {
        // "O/E: µ° " is 8 units, the emoji 2, " no " 4: "crackles" starts at 14.
        let h = hover(&doc(), pos(0, 15)).unwrap();
        let HoverContents::Markup(m) = h.contents else {
            panic!("markdown expected")
        };
        assert!(m.value.contains("`crackles`"), "{}", m.value);
        assert!(m.value.contains("assertion: absent"));
        assert!(m.value.contains("cues: `no`"));
        assert!(m.value.contains("profile: supports dry"));
        assert_eq!(h.range.unwrap().start, pos(0, 14));
        assert_eq!(h.range.unwrap().end, pos(0, 22));
        // Nothing extracted under the emoji itself.
        assert!(hover(&doc(), pos(0, 9)).is_none());
    }

    #[test]
    fn hover_on_a_value_names_the_rule_that_uses_it() {
        let h = hover(&doc(), pos(1, 4)).unwrap();
        let HoverContents::Markup(m) = h.contents else {
            panic!("markdown expected")
        };
        assert!(m.value.contains("**weight**"));
        assert!(m.value.contains("82.4 (no unit)"));
        assert!(m.value.contains("used by: `unit-missing`"));
    }

    #[test]
    fn sections_are_symbols_and_fixes_are_code_actions() {
        let s = &symbols(&doc())[0];
        assert_eq!(s.name, "O/E:");
        assert_eq!(s.selection_range.end, pos(0, 4));
        assert_eq!(s.range.end, pos(2, 0));
        let uri = Uri::from_str("file:///tmp/note.txt").unwrap();
        let within = Range {
            start: pos(1, 3),
            end: pos(1, 3),
        };
        let actions = code_actions(&doc(), &uri, within, &RuleDocs::default());
        assert_eq!(actions.len(), 1);
        let edit = &actions[0].edit.as_ref().unwrap().changes.as_ref().unwrap()[&uri][0];
        assert_eq!(edit.new_text, " kg");
        assert_eq!(edit.range.start, pos(1, 7));
        // A range elsewhere gets no action.
        let far = Range {
            start: pos(0, 0),
            end: pos(0, 1),
        };
        assert!(code_actions(&doc(), &uri, far, &RuleDocs::default()).is_empty());
    }
}
