//! Sentence and clause boundaries.
