//! Documentation lint rules over the extracted model and the clinical picture.

use serde::Serialize;

use crate::model::Extraction;
use crate::picture::Picture;
use crate::span::Span;

/// Diagnostic severity, most severe first.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    Error,
    Warning,
    Info,
}

/// A safe text edit a client may apply.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Fix {
    pub title: String,
    pub span: Span,
    pub replacement: String,
}

/// One finding of a lint rule.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Diagnostic {
    pub rule: &'static str,
    pub severity: Severity,
    pub category: &'static str,
    pub message: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub query: Option<String>,
    pub span: Option<Span>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fix: Option<Fix>,
}

/// Run every enabled rule.
pub fn run(_text: &str, _ex: &Extraction, _pic: &Picture) -> Vec<Diagnostic> {
    Vec::new()
}
