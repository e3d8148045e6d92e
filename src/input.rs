//! Turning raw bytes into document text, with a warning for anything unusual.
//!
//! Invalid UTF-8 is decoded lossily and reported with the byte offset of the first bad
//! sequence; UTF-16 with a byte-order mark is decoded with a warning; text with NUL bytes or mostly control characters is treated as binary and
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
    if let Some(d) = decode_utf16(bytes) {
        return d;
    }
    match check(bytes) {
        Some(skipped) => Decoded::Skipped(skipped),
        None => finish(bytes.to_vec()),
    }
}

/// [`decode`] taking ownership of the bytes: valid UTF-8 becomes the text without a copy.
pub fn decode_vec(bytes: Vec<u8>) -> Decoded {
    if let Some(d) = decode_utf16(&bytes) {
        return d;
    }
    match check(&bytes) {
        Some(skipped) => Decoded::Skipped(skipped),
        None => finish(bytes),
    }
}

/// Text that starts with a UTF-16 byte-order mark (FF FE little-endian, FE FF big-endian),
/// as some editors save notes: decoded to UTF-8 with a warning, since the spans then count
/// bytes of the decoded text rather than of the file.
fn decode_utf16(bytes: &[u8]) -> Option<Decoded> {
    let little = match bytes {
        [0xff, 0xfe, ..] => true,
        [0xfe, 0xff, ..] => false,
        _ => return None,
    };
    let body = &bytes[2..];
    let units = body.chunks_exact(2).map(|c| {
        if little {
            u16::from_le_bytes([c[0], c[1]])
        } else {
            u16::from_be_bytes([c[0], c[1]])
        }
    });
    let mut text = String::with_capacity(body.len());
    let mut first_bad: Option<usize> = None;
    let mut at = 2;
    for r in char::decode_utf16(units) {
        match r {
            Ok(c) => {
                text.push(c);
                at += c.len_utf16() * 2;
            }
            Err(_) => {
                first_bad.get_or_insert(at);
                text.push(char::REPLACEMENT_CHARACTER);
                at += 2;
            }
        }
    }
    if body.len() % 2 == 1 {
        first_bad.get_or_insert(bytes.len() - 1);
        text.push(char::REPLACEMENT_CHARACTER);
    }
    if let Some(skipped) = check(text.as_bytes()) {
        return Some(Decoded::Skipped(skipped));
    }
    let name = if little { "UTF-16LE" } else { "UTF-16BE" };
    let mut warnings = vec![InputWarning {
        code: "utf16",
        message: format!(
            "decoded from {name} (byte-order mark); spans count bytes of the decoded UTF-8 text"
        ),
        offset: None,
    }];
    if let Some(at) = first_bad {
        warnings.push(InputWarning {
            code: "invalid-utf16",
            message: format!(
                "invalid UTF-16 at byte offset {at}; decoded with replacement characters"
            ),
            offset: Some(at),
        });
    }
    Some(Decoded::Text { text, warnings })
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
    fn utf16_with_a_byte_order_mark_is_decoded() {
        // "BP 120/80 µ" in UTF-16LE and UTF-16BE with BOM (Unicode Standard, section 3.10).
        let text = "BP 120/80 \u{b5}";
        let mut le = vec![0xff, 0xfe];
        let mut be = vec![0xfe, 0xff];
        for u in text.encode_utf16() {
            le.extend_from_slice(&u.to_le_bytes());
            be.extend_from_slice(&u.to_be_bytes());
        }
        for (bytes, name) in [(le, "UTF-16LE"), (be, "UTF-16BE")] {
            match decode(&bytes) {
                Decoded::Text { text: t, warnings } => {
                    assert_eq!(t, text);
                    assert_eq!(warnings.len(), 1);
                    assert_eq!(warnings[0].code, "utf16");
                    assert!(warnings[0].message.contains(name));
                }
                other => panic!("expected text, got {other:?}"),
            }
        }
        // A lone surrogate (D800) four bytes in, and a dangling odd byte.
        match decode(&[0xff, 0xfe, b'a', 0, 0x00, 0xd8, b'b', 0, 7]) {
            Decoded::Text { text, warnings } => {
                assert_eq!(text, "a\u{fffd}b\u{fffd}");
                assert_eq!(warnings[1].code, "invalid-utf16");
                assert_eq!(warnings[1].offset, Some(4));
            }
            other => panic!("expected text, got {other:?}"),
        }
        assert!(matches!(decode(&[0xff, 0xfe]), Decoded::Skipped(w) if w.code == "empty"));
        assert!(matches!(decode(&[0xff, 0xfe, 0, 0]), Decoded::Skipped(w) if w.code == "binary"));
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
