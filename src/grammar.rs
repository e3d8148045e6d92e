//! The pest grammars.
