//! The text layer: sections, sentence and clause boundaries, dates.

pub mod dates;
pub mod sections;
pub mod segment;

use std::sync::OnceLock;

use aho_corasick::AhoCorasick;

/// One ASCII-case-insensitive Aho-Corasick automaton over a fixed list of phrases, built in
/// `cell` on first use: a single pass over the text instead of one substring search per
/// phrase. Every match is reported by `find_overlapping_iter`, so phrases that overlap one
/// another are each found.
pub fn phrase_automaton<'p>(
    cell: &'static OnceLock<AhoCorasick>,
    phrases: impl IntoIterator<Item = &'p str>,
) -> &'static AhoCorasick {
    cell.get_or_init(|| {
        AhoCorasick::builder()
            .ascii_case_insensitive(true)
            .build(phrases)
            .expect("fixed phrases form a valid automaton")
    })
}
