//! Byte spans and their line/column positions.
//!
//! Every extracted item carries a [`Span`]: 0-based byte offsets (`start`, `end`, end
//! exclusive) plus 1-based `line`/`column` and `end_line`/`end_column`, columns counted in
//! Unicode scalar values. Lines end at `\n`; a `\r` before it belongs to the line it ends, so
//! CRLF text gets the same line numbers as LF text. UTF-16 columns, which editors count, are
//! computed on demand by [`LineIndex::utf16_column`].

use serde::Serialize;

/// A located piece of a document.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Default)]
pub struct Span {
    pub start: usize,
    pub end: usize,
    pub line: u32,
    pub column: u32,
    pub end_line: u32,
    pub end_column: u32,
}

impl Span {
    /// The byte range, for slicing the source.
    pub fn range(&self) -> std::ops::Range<usize> {
        self.start..self.end
    }

    pub fn len(&self) -> usize {
        self.end - self.start
    }

    pub fn is_empty(&self) -> bool {
        self.end == self.start
    }
}

/// Line starts of one text, for turning byte offsets into positions.
#[derive(Debug, Clone)]
pub struct LineIndex<'a> {
    text: &'a str,
    line_starts: Vec<usize>,
    /// Every [`CHECKPOINT`] bytes: (byte offset on a char boundary, scalar values before
    /// it, UTF-16 code units before it). Columns on very long lines then cost at most one
    /// checkpoint's worth of counting, not the whole line.
    checkpoints: Vec<(usize, usize, usize)>,
    /// One flag per checkpoint: the bytes up to the next checkpoint are all ASCII, so a
    /// column inside them is a byte difference.
    ascii_blocks: Vec<bool>,
}

const CHECKPOINT: usize = 512;

/// Scalar values and UTF-16 code units in `s`, counted on bytes (a loop the compiler
/// vectorises): every byte but a continuation byte starts a scalar value, and a scalar
/// value of four bytes (lead byte 0xF0 or above) takes two UTF-16 code units.
fn counts_of(s: &str) -> (usize, usize) {
    let b = s.as_bytes();
    let chars = b.iter().filter(|&&x| (x as i8) >= -0x40).count();
    let astral = b.iter().filter(|&&x| x >= 0xF0).count();
    (chars, chars + astral)
}

impl<'a> LineIndex<'a> {
    pub fn new(text: &'a str) -> Self {
        let mut line_starts = Vec::with_capacity(text.len() / 40 + 1);
        line_starts.push(0);
        line_starts.extend(memchr_iter(b'\n', text.as_bytes()).map(|i| i + 1));
        let mut checkpoints = Vec::with_capacity(text.len() / CHECKPOINT + 1);
        let mut ascii_blocks = Vec::with_capacity(text.len() / CHECKPOINT + 1);
        let (mut chars, mut units, mut at) = (0usize, 0usize, 0usize);
        checkpoints.push((0, 0, 0));
        while at + CHECKPOINT < text.len() {
            let mut next = at + CHECKPOINT;
            while !text.is_char_boundary(next) {
                next += 1;
            }
            let block = &text[at..next];
            ascii_blocks.push(block.is_ascii());
            let (c, u) = counts_of(block);
            chars += c;
            units += u;
            at = next;
            checkpoints.push((at, chars, units));
        }
        ascii_blocks.push(text[at..].is_ascii());
        LineIndex {
            text,
            line_starts,
            checkpoints,
            ascii_blocks,
        }
    }

    /// Scalar values and UTF-16 code units before byte `offset` (a char boundary).
    fn counts_before(&self, offset: usize) -> (usize, usize) {
        let i = self.checkpoints.partition_point(|c| c.0 <= offset) - 1;
        let (at, chars, units) = self.checkpoints[i];
        if self.ascii_blocks.get(i).copied().unwrap_or(false) {
            return (chars + offset - at, units + offset - at);
        }
        let (c, u) = counts_of(&self.text[at..offset]);
        (chars + c, units + u)
    }

    /// Scalar values and UTF-16 code units between two char boundaries `a <= b`.
    fn counts_between(&self, a: usize, b: usize) -> (usize, usize) {
        let (ca, ua) = self.counts_before(a);
        let (cb, ub) = self.counts_before(b);
        (cb - ca, ub - ua)
    }

    pub fn text(&self) -> &'a str {
        self.text
    }

    /// Number of lines (a text ending in a newline has an empty last line).
    pub fn line_count(&self) -> usize {
        self.line_starts.len()
    }

    /// Byte offset where the 0-based line `line` starts.
    pub fn line_start(&self, line: usize) -> usize {
        self.line_starts
            .get(line)
            .copied()
            .unwrap_or(self.text.len())
    }

    /// Byte range of the 0-based line `line`, without its `\n` or `\r\n`.
    pub fn line_range(&self, line: usize) -> std::ops::Range<usize> {
        let start = self.line_start(line);
        let mut end = self
            .line_starts
            .get(line + 1)
            .map(|s| s - 1)
            .unwrap_or(self.text.len());
        if end > start && self.text.as_bytes()[end - 1] == b'\r' {
            end -= 1;
        }
        start..end
    }

    /// 0-based line holding byte `offset`.
    pub fn line_of(&self, offset: usize) -> usize {
        match self.line_starts.binary_search(&offset) {
            Ok(i) => i,
            Err(i) => i - 1,
        }
    }

    /// Snap an offset down to a char boundary, so a position never splits a character.
    fn floor(&self, mut offset: usize) -> usize {
        offset = offset.min(self.text.len());
        while !self.text.is_char_boundary(offset) {
            offset -= 1;
        }
        offset
    }

    /// 1-based (line, column in scalar values) of a byte offset.
    pub fn position(&self, offset: usize) -> (u32, u32) {
        let offset = self.floor(offset);
        let line = self.line_of(offset);
        let start = self.line_starts[line];
        let col = self.counts_between(start, offset).0;
        (line as u32 + 1, col as u32 + 1)
    }

    /// 0-based UTF-16 code-unit column of a byte offset within its line (the LSP position).
    pub fn utf16_column(&self, offset: usize) -> u32 {
        let offset = self.floor(offset);
        let line = self.line_of(offset);
        let start = self.line_starts[line];
        self.counts_between(start, offset).1 as u32
    }

    /// Byte offset of a 0-based line and UTF-16 column, clamped to the line.
    pub fn offset_of_utf16(&self, line: u32, utf16_col: u32) -> usize {
        let range = self.line_range(line as usize);
        let mut units = 0u32;
        for (i, c) in self.text[range.clone()].char_indices() {
            if units >= utf16_col {
                return range.start + i;
            }
            units += c.len_utf16() as u32;
        }
        range.end
    }

    /// 0-based (line, UTF-16 code-unit column) of a byte offset: an LSP `Position`.
    pub fn utf16_position(&self, offset: usize) -> (u32, u32) {
        let offset = self.floor(offset);
        (self.line_of(offset) as u32, self.utf16_column(offset))
    }

    /// Byte offset of a 0-based (line, UTF-16 column) position. A line past the end gives the
    /// end of the text; a column past the end of its line gives the end of the line.
    pub fn offset_of_utf16_position(&self, line: u32, utf16_col: u32) -> usize {
        if line as usize >= self.line_count() {
            return self.text.len();
        }
        self.offset_of_utf16(line, utf16_col)
    }

    /// The UTF-16 columns of a span's two ends, 1-based like [`Span::column`].
    pub fn utf16_columns(&self, span: &Span) -> Utf16Columns {
        Utf16Columns {
            column_utf16: self.utf16_column(span.start) + 1,
            end_column_utf16: self.utf16_column(span.end) + 1,
        }
    }

    /// A full [`Span`] for the byte range `start..end`.
    pub fn span(&self, start: usize, end: usize) -> Span {
        let (line, column) = self.position(start);
        let (end_line, end_column) = self.position(end);
        Span {
            start: self.floor(start),
            end: self.floor(end),
            line,
            column,
            end_line,
            end_column,
        }
    }
}

/// A span's columns counted in UTF-16 code units (1-based, on the span's own lines).
///
/// Lines are the same in every unit; only columns differ. An LSP `Position` is
/// `(line - 1, column_utf16 - 1)`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct Utf16Columns {
    pub column_utf16: u32,
    pub end_column_utf16: u32,
}

fn memchr_iter(needle: u8, haystack: &[u8]) -> impl Iterator<Item = usize> + '_ {
    haystack
        .iter()
        .enumerate()
        .filter_map(move |(i, &b)| (b == needle).then_some(i))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn byte_counts_agree_with_the_standard_library() {
        // Reference: `str::chars` and `str::encode_utf16` (Rust core library).
        for s in [
            "",
            "plain ascii",
            "µmol/L °C ≤ 3",
            "emoji 🫀 and 𝄞 beyond the BMP",
            "é\u{301}",
        ] {
            assert_eq!(
                counts_of(s),
                (s.chars().count(), s.encode_utf16().count()),
                "{s:?}"
            );
        }
    }

    #[test]
    fn positions_count_scalar_values_and_ignore_cr() {
        let text = "ab\r\nµmol/L 3\n°C";
        let idx = LineIndex::new(text);
        assert_eq!(idx.position(0), (1, 1));
        assert_eq!(idx.position(4), (2, 1));
        // "µ" is two bytes but one column.
        let three = text.find('3').unwrap();
        // "µmol/L " is seven scalar values, so "3" is column 8.
        assert_eq!(idx.position(three), (2, 8));
        assert_eq!(idx.line_range(0), 0..2);
        let deg = text.find('°').unwrap();
        assert_eq!(idx.position(deg + 2), (3, 2));
    }

    #[test]
    fn columns_on_a_long_line_match_a_plain_count() {
        let text = format!("{}µ°😀 end", "ab€".repeat(5000));
        let idx = LineIndex::new(&text);
        let at = text.find(" end").unwrap();
        let plain = text[..at].chars().count() as u32 + 1;
        assert_eq!(idx.position(at), (1, plain));
        let units: u32 = text[..at].chars().map(|c| c.len_utf16() as u32).sum();
        assert_eq!(idx.utf16_column(at), units);
    }

    #[test]
    fn columns_match_a_plain_count_across_ascii_and_mixed_blocks() {
        // Long ASCII stretches (counted by difference) beside stretches with µ, ° and an
        // astral character (counted byte by byte), on one long line and on short lines.
        let mut text = "a".repeat(1500);
        text.push_str("µ°😀 ");
        text.push_str(&"b".repeat(700));
        text.push('\n');
        for i in 0..40 {
            text.push_str(if i % 3 == 0 {
                "K 4.1 µmol/L\n"
            } else {
                "HR 88 bpm\n"
            });
        }
        let idx = LineIndex::new(&text);
        for (at, _) in text.char_indices() {
            let line_start = text[..at].rfind('\n').map_or(0, |i| i + 1);
            let before = &text[line_start..at];
            let line = text[..at].matches('\n').count() as u32 + 1;
            assert_eq!(idx.position(at), (line, before.chars().count() as u32 + 1));
            let units: usize = before.chars().map(char::len_utf16).sum();
            assert_eq!(idx.utf16_column(at), units as u32);
        }
    }

    #[test]
    fn utf16_columns_count_surrogate_pairs() {
        let text = "x 😀 JVP";
        let idx = LineIndex::new(text);
        let j = text.find('J').unwrap();
        assert_eq!(idx.utf16_column(j), 5);
        assert_eq!(idx.offset_of_utf16(0, 5), j);
    }

    #[test]
    fn utf16_positions_on_mixed_text() {
        // "µ" and "°" are one UTF-16 unit each (U+00B5, U+00B0, both in the BMP); "🫀"
        // (U+1FAC0) is outside the BMP and takes a surrogate pair (Unicode Standard, ch. 3.9).
        let text = "Cr 130 µmol/L\nT 37.2 °C 🫀 Wt 82.4\n";
        let idx = LineIndex::new(text);
        let wt = text.find("Wt").unwrap();
        // Line 1: "T 37.2 °C " is 10 units, the emoji 2, then a space: "Wt" starts at 13.
        assert_eq!(idx.utf16_position(wt), (1, 13));
        // In scalar values the same place is column 13 (1-based 13 = 12 chars before it).
        assert_eq!(idx.position(wt), (2, 13));
        assert_eq!(idx.offset_of_utf16_position(1, 13), wt);
        let s = idx.span(wt, wt + "Wt 82.4".len());
        let u = idx.utf16_columns(&s);
        assert_eq!((u.column_utf16, u.end_column_utf16), (14, 21));
        // Past the end of the text and past the end of a line both clamp.
        assert_eq!(idx.offset_of_utf16_position(9, 0), text.len());
        assert_eq!(idx.offset_of_utf16_position(0, 99), "Cr 130 µmol/L".len());
    }

    #[test]
    fn utf16_column_inside_a_surrogate_pair_snaps_to_the_character() {
        let text = "a😀b";
        let idx = LineIndex::new(text);
        // Column 2 falls between the two halves of the pair; the offset after it is taken.
        assert_eq!(idx.offset_of_utf16(0, 2), text.find('b').unwrap());
        assert_eq!(idx.utf16_position(2), (0, 1));
    }

    #[test]
    fn span_end_column_is_exclusive_position() {
        let text = "  Wt 181 lb";
        let idx = LineIndex::new(text);
        let s = idx.span(2, 11);
        assert_eq!((s.line, s.column, s.end_line, s.end_column), (1, 3, 1, 12));
    }
}
