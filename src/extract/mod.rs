//! Extraction: from text to the model.

pub mod lexicon;
pub mod meds;

use crate::config::ExtractOptions;
use crate::model::Extraction;

/// Extract everything one document documents.
pub fn extract(text: &str, _opts: &ExtractOptions) -> Extraction {
    let ex = Extraction::default();
    Extraction {
        medications: meds::medications(text, &ex.sections),
        ..ex
    }
}
