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
    match check(bytes) {
        Some(skipped) => Decoded::Skipped(skipped),
        None => finish(bytes.to_vec()),
    }
}

/// [`decode`] taking ownership of the bytes: valid UTF-8 becomes the text without a copy.
pub fn decode_vec(bytes: Vec<u8>) -> Decoded {
    match check(&bytes) {
        Some(skipped) => Decoded::Skipped(skipped),
        None => finish(bytes),
    }
}

/// Why the bytes are not analysed at all, if they are not.
fn check(bytes: &[u8]) -> Option<InputWarning> {
    if bytes.iter().all(|b| b.is_ascii_whitespace()) {
        return Some(InputWarning {
            code: "empty",
            message: "the document is empty".into(),
            offset: None,
        });
    }
    if let Some(pos) = memchr::memchr(0, bytes) {
        return Some(InputWarning {
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
        return Some(InputWarning {
            code: "binary",
            message: "mostly control characters: looks like a binary file, skipped".into(),
            offset: None,
        });
    }
    None
}

fn finish(mut bytes: Vec<u8>) -> Decoded {
    // A byte-order mark is not note text; keep offsets honest by replacing it with spaces.
    if bytes.starts_with("\u{feff}".as_bytes()) {
        bytes[..3].copy_from_slice(b"   ");
    }
    let mut warnings = Vec::new();
    let text = match String::from_utf8(bytes) {
        Ok(s) => s,
        Err(e) => {
            let at = e.utf8_error().valid_up_to();
            warnings.push(InputWarning {
                code: "invalid-utf8",
                message: format!(
                    "invalid UTF-8 at byte offset {at}; decoded with replacement characters"
                ),
                offset: Some(at),
            });
            String::from_utf8_lossy(e.as_bytes()).into_owned()
        }
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
    fn a_byte_order_mark_becomes_spaces_and_offsets_stay_put() {
        // U+FEFF encoded in UTF-8 is EF BB BF (Unicode Standard, section 23.8).
        let bytes = b"\xef\xbb\xbfBP 120/80";
        for d in [decode(bytes), decode_vec(bytes.to_vec())] {
            match d {
                Decoded::Text { text, warnings } => {
                    assert_eq!(text, "   BP 120/80");
                    assert!(warnings.is_empty());
                }
                other => panic!("expected text, got {other:?}"),
            }
        }
    }

    #[test]
    fn owned_and_borrowed_decoding_agree() {
        for bytes in [
            &b"ok text"[..],
            b"bad \xc3\x28 here",
            b"\0",
            b"",
            b"\x01\x02\x03\x04",
        ] {
            assert_eq!(
                format!("{:?}", decode(bytes)),
                format!("{:?}", decode_vec(bytes.to_vec()))
            );
        }
    }

    #[test]
    fn empty_and_blank_are_skipped() {
        assert!(matches!(decode(b""), Decoded::Skipped(w) if w.code == "empty"));
        assert!(matches!(decode(b" \n\t"), Decoded::Skipped(w) if w.code == "empty"));
    }
}
