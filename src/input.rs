//! Turning raw bytes into document text, with a warning for anything unusual.
//!
//! Invalid UTF-8 is decoded lossily and reported with the byte offset of the first bad
//! sequence; text with NUL bytes or mostly control characters is treated as binary and
//! skipped. Nothing here panics on any input.

use crate::model::InputWarning;

/// The outcome of decoding one input.
#[derive(Debug, Clone)]
pub enum Decoded {
    /// Text to analyse, with any warnings about how it was decoded.
    Text {
        text: String,
        warnings: Vec<InputWarning>,
    },
    /// Input that is not analysed at all (binary, empty), with the reason.
    Skipped(InputWarning),
}

/// Decode bytes read from a file or stdin.
pub fn decode(bytes: &[u8]) -> Decoded {
    if bytes.is_empty() || bytes.iter().all(|b| b.is_ascii_whitespace()) {
        return Decoded::Skipped(InputWarning {
            code: "empty",
            message: "the document is empty".into(),
            offset: None,
        });
    }
    if let Some(pos) = bytes.iter().position(|&b| b == 0) {
        return Decoded::Skipped(InputWarning {
            code: "binary",
            message: format!("NUL byte at offset {pos}: looks like a binary file, skipped"),
            offset: Some(pos),
        });
    }
    let sample = &bytes[..bytes.len().min(8192)];
    let controls = sample
        .iter()
        .filter(|&&b| b < 0x20 && !matches!(b, b'\n' | b'\r' | b'\t' | 0x0c))
        .count();
    if controls * 10 > sample.len() {
        return Decoded::Skipped(InputWarning {
            code: "binary",
            message: "mostly control characters: looks like a binary file, skipped".into(),
            offset: None,
        });
    }
    let mut warnings = Vec::new();
    let text = match std::str::from_utf8(bytes) {
        Ok(s) => s.to_owned(),
        Err(e) => {
            let at = e.valid_up_to();
            warnings.push(InputWarning {
                code: "invalid-utf8",
                message: format!(
                    "invalid UTF-8 at byte offset {at}; decoded with replacement characters"
                ),
                offset: Some(at),
            });
            String::from_utf8_lossy(bytes).into_owned()
        }
    };
    let text = match text.strip_prefix('\u{feff}') {
        // A byte-order mark is not note text; keep offsets honest by replacing it with a space.
        Some(rest) => format!("{}{rest}", " ".repeat('\u{feff}'.len_utf8())),
        None => text,
    };
    Decoded::Text { text, warnings }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn invalid_utf8_reports_first_bad_offset() {
        match decode(b"BP 120/80 \xff\xfe wt 80 kg") {
            Decoded::Text { text, warnings } => {
                assert_eq!(warnings[0].code, "invalid-utf8");
                assert_eq!(warnings[0].offset, Some(10));
                assert!(text.contains('\u{fffd}'));
            }
            other => panic!("expected text, got {other:?}"),
        }
    }

    #[test]
    fn nul_bytes_are_binary() {
        assert!(matches!(decode(b"ab\0cd"), Decoded::Skipped(w) if w.code == "binary"));
    }

    #[test]
    fn empty_and_blank_are_skipped() {
        assert!(matches!(decode(b""), Decoded::Skipped(w) if w.code == "empty"));
        assert!(matches!(decode(b" \n\t"), Decoded::Skipped(w) if w.code == "empty"));
    }
}
