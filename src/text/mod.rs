//! The text layer: sections, sentence and clause boundaries, dates.

pub mod dates;
pub mod sections;
pub mod segment;
