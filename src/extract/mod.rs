//! Extraction: from text to the model.

pub mod lexicon;

use crate::config::ExtractOptions;
use crate::model::Extraction;

/// Extract everything one document documents.
pub fn extract(_text: &str, _opts: &ExtractOptions) -> Extraction {
    Extraction::default()
}
