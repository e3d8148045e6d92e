//! Sentence and clause boundaries.
//!
//! A context cue never reaches across a sentence boundary (ConText, Harkema et al. 2009:
//! a trigger's scope ends at the end of the sentence or at a termination term). Notes are
//! not prose, so besides `.`, `!` and `;` a line break ends a sentence unless the next line
//! plainly continues it (it starts in lower case, or the line before ends in a comma or a
//! joining word). Table cells separated by `|` are separate sentences too.

/// Sorted byte offsets where sentences start; the first is always 0.
#[derive(Debug, Clone)]
pub struct Sentences {
    starts: Vec<usize>,
    len: usize,
}

const JOINERS: &[&str] = &[
    "and", "or", "of", "to", "with", "on", "in", "the", "a", "for", "at", "by", "from", "nor",
];

const ABBREVIATIONS: &[&str] = &[
    "dr", "mr", "mrs", "ms", "vs", "e.g", "i.e", "approx", "c", "pt", "fig", "no", "ref", "st",
    "b.d", "o.d", "t.d.s", "q.d.s", "p.o", "i.v", "etc",
];

impl Sentences {
    pub fn new(text: &str) -> Sentences {
        let b = text.as_bytes();
        let mut starts = vec![0];
        let mut i = 0;
        while i < b.len() {
            let c = b[i];
            let boundary_after = match c {
                b';' | b'!' | b'|' => true,
                b'.' => is_full_stop(text, i),
                b'\n' => !continues(text, i),
                _ => false,
            };
            if boundary_after {
                starts.push(i + 1);
            }
            i += 1;
        }
        starts.dedup();
        Sentences {
            starts,
            len: text.len(),
        }
    }

    /// The sentence holding byte `offset`, as a byte range.
    pub fn around(&self, offset: usize) -> std::ops::Range<usize> {
        let i = match self.starts.binary_search(&offset) {
            Ok(i) => i,
            Err(i) => i.saturating_sub(1),
        };
        let start = self.starts[i];
        let end = self.starts.get(i + 1).copied().unwrap_or(self.len);
        start..end
    }

    /// Index of the sentence holding `offset`.
    pub fn index_of(&self, offset: usize) -> usize {
        match self.starts.binary_search(&offset) {
            Ok(i) => i,
            Err(i) => i.saturating_sub(1),
        }
    }

    /// Whether a sentence boundary lies strictly inside `a..b`.
    pub fn crosses(&self, a: usize, b: usize) -> bool {
        self.index_of(a) != self.index_of(b.saturating_sub(1).max(a))
    }
}

fn is_full_stop(text: &str, i: usize) -> bool {
    let b = text.as_bytes();
    let next = b.get(i + 1).copied();
    match next {
        None => return true,
        Some(n) if n == b' ' || n == b'\t' || n == b'\n' || n == b'\r' || n == b')' => {}
        _ => return false,
    }
    // The word before the full stop.
    // Only the last few bytes matter: abbreviations are short.
    let mut from = i.saturating_sub(16);
    while !text.is_char_boundary(from) {
        from += 1;
    }
    let before = &text[from..i];
    let word_start = before
        .char_indices()
        .rfind(|&(_, c)| c.is_whitespace() || c == '(' || c == ',')
        .map(|(p, c)| p + c.len_utf8())
        .unwrap_or(0);
    let word = before[word_start..].to_ascii_lowercase();
    !ABBREVIATIONS.contains(&word.as_str())
}

fn continues(text: &str, nl: usize) -> bool {
    let b = text.as_bytes();
    // Next line's first non-blank character.
    let mut j = nl + 1;
    while j < b.len() && (b[j] == b' ' || b[j] == b'\t' || b[j] == b'\r') {
        j += 1;
    }
    if j >= b.len() || b[j] == b'\n' {
        return false;
    }
    let next_char = text[j..].chars().next().unwrap_or(' ');
    // Previous line's last non-blank character and word.
    let line = text[..nl].trim_end_matches(['\r', ' ', '\t']);
    let last = line.chars().last().unwrap_or('\n');
    if matches!(last, '.' | ':' | ';') || line.is_empty() {
        return false;
    }
    if next_char == '-' || next_char == '*' || next_char == '•' {
        return false;
    }
    if next_char.is_lowercase() {
        return true;
    }
    if matches!(last, ',' | '(' | '/' | '&' | '+') {
        return true;
    }
    let last_word = line
        .rsplit(|c: char| !c.is_alphanumeric())
        .next()
        .unwrap_or("")
        .to_ascii_lowercase();
    JOINERS.contains(&last_word.as_str())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sentences(text: &str) -> Vec<&str> {
        let s = Sentences::new(text);
        let mut out = Vec::new();
        let mut pos = 0;
        while pos < text.len() {
            let r = s.around(pos);
            out.push(text[r.clone()].trim());
            pos = r.end;
        }
        out
    }

    #[test]
    fn decimals_and_abbreviations_do_not_split() {
        assert_eq!(
            sentences("Temp 36.8 today. Seen by Dr. Ash, no PND."),
            vec!["Temp 36.8 today.", "Seen by Dr. Ash, no PND."]
        );
    }

    #[test]
    fn wrapped_lines_continue_but_new_items_do_not() {
        assert_eq!(
            sentences("3-pillow orthopnoea (4 on\n admission). No PND\n- JVP raised"),
            vec![
                "3-pillow orthopnoea (4 on\n admission).",
                "No PND",
                "- JVP raised"
            ]
        );
    }

    #[test]
    fn semicolons_and_pipes_split() {
        assert_eq!(sentences("no oedema; creps"), vec!["no oedema;", "creps"]);
        assert_eq!(sentences("wt 86 | FB -1.4"), vec!["wt 86 |", "FB -1.4"]);
    }
}
