//! Renderers: they turn analyses into output and know nothing of parsing.

pub mod fhir;
pub mod json;
pub mod lint_human;
pub mod positions;
pub mod sarif;
pub mod summary;

/// The caution every human-facing output carries.
pub const CAUTION: &str = "tidemark supports documentation; it is not a diagnostic device. \
Every item is read from the note text and may be wrong: verify against the record. Local \
policy, coding rules and licensed clinicians prevail.";
