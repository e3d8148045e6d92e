//! `tidemark::analyze` on hostile text never panics, and everything it reports points
//! inside the document on character boundaries. The checks walk the serialised analysis
//! generically (every object with `start`/`end`/`line`/`column` is a span), so they cover
//! whatever the extraction and lint stages report.
//!
//! The coverage-guided fuzz targets explore the same entry point at length; this is the
//! short run CI does.

use proptest::prelude::*;
use serde_json::Value;
use tidemark::{analyze, Config};

/// Check every span in `v` against `text`; returns how many spans were seen.
fn check_spans(v: &Value, text: &str) -> usize {
    match v {
        Value::Object(map) => {
            let mut n = 0;
            if let (Some(s), Some(e), Some(_), Some(_)) = (
                map.get("start").and_then(Value::as_u64),
                map.get("end").and_then(Value::as_u64),
                map.get("line"),
                map.get("column"),
            ) {
                let (s, e) = (s as usize, e as usize);
                assert!(
                    s <= e && e <= text.len(),
                    "span {s}..{e} outside 0..{}",
                    text.len()
                );
                assert!(
                    text.is_char_boundary(s) && text.is_char_boundary(e),
                    "span {s}..{e} splits a character"
                );
                n += 1;
            }
            n + map.values().map(|x| check_spans(x, text)).sum::<usize>()
        }
        Value::Array(items) => items.iter().map(|x| check_spans(x, text)).sum(),
        _ => 0,
    }
}

fn analyse_and_check(text: &str) {
    let a = analyze(text, &Config::default());
    let v = serde_json::to_value(&a).expect("the analysis serialises");
    check_spans(&v, text);
}

/// Pieces that notes and hostile files are made of.
fn piece() -> impl Strategy<Value = String> {
    prop_oneof![
        Just("BP ".to_string()),
        Just("weight ".to_string()),
        Just("no ".to_string()),
        Just("denies ".to_string()),
        Just("JVP ".to_string()),
        Just(" kg".to_string()),
        Just(" mmol/L".to_string()),
        Just("/".to_string()),
        Just(", ".to_string()),
        Just("\n".to_string()),
        Just("\r\n".to_string()),
        Just("- ".to_string()),
        Just("|".to_string()),
        Just(": ".to_string()),
        Just("oedema".to_string()),
        Just("crackles".to_string()),
        Just("NYHA III".to_string()),
        Just("EF 35%".to_string()),
        Just("\u{fffd}".to_string()),
        Just("\u{00a0}".to_string()),
        Just("µ".to_string()),
        Just("é".to_string()),
        Just("\u{200b}".to_string()),
        Just("😀".to_string()),
        "[0-9]{1,40}",
        "[0-9]{1,25}\\.[0-9]{1,25}",
        "[-+]?[0-9]{0,5}[eE][-+]?[0-9]{1,5}",
        "[(\\[{<]{1,200}",
        "[)\\]}>]{1,200}",
        "\\PC{0,20}",
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 256, ..ProptestConfig::default() })]

    #[test]
    fn arbitrary_text_never_panics(text in "\\PC{0,400}") {
        analyse_and_check(&text);
    }

    #[test]
    fn arbitrary_bytes_decoded_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..600)) {
        let text = String::from_utf8_lossy(&bytes);
        analyse_and_check(&text);
    }

    #[test]
    fn note_like_pieces_never_panic(pieces in proptest::collection::vec(piece(), 0..80)) {
        analyse_and_check(&pieces.concat());
    }
}

#[test]
fn enormous_numbers_with_units_do_not_panic() {
    for text in [
        "Weight 99999999999999999999 kg",
        "weight 99999999999999999999.99999999999999999999 kg",
        "BP 99999999999999999999/99999999999999999999 mmHg",
        "HR 1e99999 bpm",
        "Na 18446744073709551616 mmol/L",
        "Cr -9223372036854775809 umol/L",
        "EF 340282366920938463463374607431768211456%",
        "temp 0.00000000000000000000000000000000000001 C",
        "wt 99999999999999999999 lb -> 99999999999999999999 kg",
    ] {
        analyse_and_check(text);
    }
    analyse_and_check(&format!("Weight {} kg", "9".repeat(100_000)));
    analyse_and_check(&format!("Weight 0.{}1 kg", "0".repeat(100_000)));
    analyse_and_check(&format!("{} kg", "9.".repeat(20_000)));
}

#[test]
fn deep_bracket_nesting_does_not_panic() {
    for (open, close) in [("(", ")"), ("[", "]"), ("{", "}"), ("<", ">")] {
        let text = format!("{}BP 120/80{}", open.repeat(200_000), close.repeat(200_000));
        analyse_and_check(&text);
        analyse_and_check(&open.repeat(200_000));
        analyse_and_check(&close.repeat(200_000));
    }
    analyse_and_check(&"([{<".repeat(50_000));
}

#[test]
fn stacked_negations_and_long_lines_do_not_panic() {
    let mut text = String::from("Denies ");
    for i in 0..20_000 {
        text.push_str(&format!("no finding{i}, "));
    }
    text.push_str("no oedema, no crackles.");
    analyse_and_check(&text);
    analyse_and_check(&"no ".repeat(100_000));
    analyse_and_check(&"- \n".repeat(100_000));
}
