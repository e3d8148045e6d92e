//! Arbitrary bytes through decoding, extraction, the picture, lint and JSON rendering:
//! nothing may panic, hang, or report a span outside the text.

#![no_main]

use libfuzzer_sys::fuzz_target;
use serde_json::Value;

fn check_spans(v: &Value, text: &str) {
    match v {
        Value::Object(map) => {
            if let (Some(s), Some(e), true) = (
                map.get("start").and_then(Value::as_u64),
                map.get("end").and_then(Value::as_u64),
                map.contains_key("line"),
            ) {
                let (s, e) = (s as usize, e as usize);
                assert!(s <= e && e <= text.len());
                assert!(text.is_char_boundary(s) && text.is_char_boundary(e));
            }
            map.values().for_each(|x| check_spans(x, text));
        }
        Value::Array(items) => items.iter().for_each(|x| check_spans(x, text)),
        _ => {}
    }
}

fuzz_target!(|data: &[u8]| {
    let doc = tidemark::cli::inputs::Doc::from_bytes("fuzz".into(), data);
    let Some(text) = doc.text.as_deref() else {
        return;
    };
    let analysis = tidemark::analyze(text, &tidemark::Config::default());
    let v = serde_json::to_value(&analysis).expect("analysis serialises");
    check_spans(&v, text);
    let rendered = tidemark::render::json::extract_document(&doc, Some(&analysis));
    let _ = tidemark::render::json::pretty_document(&rendered);
});
