//! The pest grammars (`grammar/base.pest`, `grammar/values.pest`).
//!
//! Only the extraction modules see pest: they run a value rule right after a label the
//! lexicon found, and turn the matched pairs into model types.

use pest_derive::Parser;

/// The value grammar.
#[derive(Parser)]
#[grammar = "../grammar/base.pest"]
#[grammar = "../grammar/values.pest"]
pub struct ValueParser;
