//! tidemark reads plain-text heart-failure notes, extracts what they document (vitals,
//! weights, labs, exam findings with their assertion context), builds the bedside
//! congestion/perfusion profile and lints the note for what is missing or inconsistent.
//!
//! Data flows one way:
//! text → sections and tokens with byte spans ([`text`]) → grammar matches ([`grammar`],
//! [`extract`]) → assertion context ([`context`]) → normalised values ([`units`]) →
//! clinical picture ([`picture`]) → lint rules ([`lint`]) → renderers ([`render`]).
//!
//! tidemark is documentation support, not a diagnostic device.

pub mod cli;
pub mod config;
pub mod context;
pub mod extract;
pub mod grammar;
pub mod handover;
pub mod input;
pub mod lint;
pub mod lsp;
pub mod model;
pub mod picture;
pub mod render;
pub mod span;
pub mod text;
pub mod units;

use serde::Serialize;

pub use config::Config;
pub use model::Extraction;
pub use picture::Picture;

/// Everything tidemark knows about one document.
#[derive(Debug, Clone, Serialize)]
pub struct Analysis {
    pub extraction: Extraction,
    pub picture: Picture,
    /// The document kind the linter detected.
    pub kind: lint::DocKind,
    pub diagnostics: Vec<lint::Diagnostic>,
}

/// Extract, build the picture and lint one document's text.
pub fn analyze(text: &str, config: &Config) -> Analysis {
    let extraction = extract::extract(text, &config.extract);
    let picture = picture::build(&extraction);
    let kind = lint::kind::detect(text, &extraction);
    let diagnostics = lint::run_for_kind(text, &extraction, &picture, kind, &config.lint);
    Analysis {
        extraction,
        picture,
        kind,
        diagnostics,
    }
}
