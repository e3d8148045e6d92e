//! Section headers.
