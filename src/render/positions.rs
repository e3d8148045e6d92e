//! Adding UTF-16 columns to every span of a rendered JSON value.
//!
//! The model's spans carry byte offsets and scalar-value columns. Editors count UTF-16 code
//! units, so the editor-facing outputs (`check --stdin-json`) add `column_utf16` and
//! `end_column_utf16` beside each span's `column` and `end_column`. A span is recognised by
//! its shape: an object with integer `start`, `end`, `line`, `column`, `end_line` and
//! `end_column`.

use serde_json::{Map, Value};

use crate::span::LineIndex;

/// Walk `value` and add UTF-16 columns to every span object in it.
pub fn add_utf16_columns(value: &mut Value, index: &LineIndex) {
    match value {
        Value::Object(map) => {
            if let Some((start, end)) = span_offsets(map) {
                let cols = index.utf16_columns(&index.span(start, end));
                map.insert("column_utf16".into(), cols.column_utf16.into());
                map.insert("end_column_utf16".into(), cols.end_column_utf16.into());
            }
            for v in map.values_mut() {
                add_utf16_columns(v, index);
            }
        }
        Value::Array(items) => {
            for v in items {
                add_utf16_columns(v, index);
            }
        }
        _ => {}
    }
}

fn span_offsets(map: &Map<String, Value>) -> Option<(usize, usize)> {
    for key in ["line", "column", "end_line", "end_column"] {
        map.get(key)?.as_u64()?;
    }
    let start = map.get("start")?.as_u64()? as usize;
    let end = map.get("end")?.as_u64()? as usize;
    Some((start, end))
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn nested_spans_get_utf16_columns_and_other_objects_do_not() {
        // "😀" (U+1F600) is two UTF-16 units and one scalar value.
        let text = "😀 Wt 82.4";
        let idx = LineIndex::new(text);
        let start = text.find("Wt").unwrap();
        let span = idx.span(start, text.len());
        let mut v = json!({
            "measurements": [{"concept": "weight", "span": span}],
            "other": {"start": 1, "end": 2},
        });
        add_utf16_columns(&mut v, &idx);
        let s = &v["measurements"][0]["span"];
        assert_eq!(s["column"], 3);
        assert_eq!(s["column_utf16"], 4);
        assert_eq!(s["end_column_utf16"], 11);
        assert!(v["other"].get("column_utf16").is_none());
    }
}
