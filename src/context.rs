//! Assertion context (ConText, after NegEx).
