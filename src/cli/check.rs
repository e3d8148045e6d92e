//! `tidemark check --stdin-json`: one request on stdin, one response on stdout, for editors.
//!
//! Request: `{"text": "...", "path": "...", "config": {...}}` (only `text` is required).
//! Response: `{"schema": "tidemark-check/1", "ok": true, "path", "diagnostics", "document",
//! "caution"}`, where `document` is the same object `extract --format json` gives for one
//! document. Every span carries byte offsets (`start`, `end`), 1-based `line`/`column` in
//! Unicode scalar values and 1-based `column_utf16`/`end_column_utf16` in UTF-16 code units.
//! Any failure is a response too: `{"schema": ..., "ok": false, "error": {"code", "message"}}`
//! with exit code 2. Documented in `docs/integration.md` and
//! `docs/schema/tidemark-check-1.schema.json`.

use std::io::{Read, Write};

use serde_json::{json, Map, Value};

use super::inputs::{Doc, DEFAULT_MAX_FILE_SIZE};
use super::settings;
use crate::config::Config;
use crate::model::InputWarning;
use crate::render::{self, positions};
use crate::span::LineIndex;

pub const CHECK_SCHEMA: &str = "tidemark-check/1";

/// Largest request accepted: the file limit plus room for JSON escaping.
pub const MAX_REQUEST_BYTES: u64 = DEFAULT_MAX_FILE_SIZE * 2;

/// A request failure, reported as JSON.
#[derive(Debug, Clone, PartialEq)]
pub struct CheckError {
    pub code: &'static str,
    pub message: String,
}

impl CheckError {
    fn new(code: &'static str, message: impl Into<String>) -> Self {
        CheckError {
            code,
            message: message.into(),
        }
    }

    pub fn to_json(&self) -> Value {
        json!({
            "schema": CHECK_SCHEMA,
            "ok": false,
            "error": {"code": self.code, "message": self.message},
        })
    }
}

/// `tidemark check --stdin-json`.
pub fn run() -> i32 {
    let mut buf = Vec::new();
    let read = std::io::stdin()
        .lock()
        .take(MAX_REQUEST_BYTES + 1)
        .read_to_end(&mut buf);
    let response = match read {
        Err(e) => Err(CheckError::new(
            "unreadable",
            format!("cannot read stdin: {e}"),
        )),
        Ok(_) if buf.len() as u64 > MAX_REQUEST_BYTES => Err(CheckError::new(
            "too-large",
            format!("request larger than {MAX_REQUEST_BYTES} bytes"),
        )),
        Ok(_) => respond(&buf),
    };
    let (value, code) = match response {
        Ok(v) => (v, 0),
        Err(e) => (e.to_json(), 2),
    };
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    let written = serde_json::to_writer(&mut out, &value)
        .map_err(std::io::Error::from)
        .and_then(|_| out.write_all(b"\n"))
        .and_then(|_| out.flush());
    match written {
        Err(e) if e.kind() != std::io::ErrorKind::BrokenPipe => {
            eprintln!("tidemark: cannot write output: {e}");
            2
        }
        _ => code,
    }
}

/// Answer one request given as raw bytes.
pub fn respond(request: &[u8]) -> Result<Value, CheckError> {
    let value: Value = serde_json::from_slice(request)
        .map_err(|e| CheckError::new("invalid-json", format!("request is not JSON: {e}")))?;
    let Value::Object(req) = value else {
        return Err(CheckError::new(
            "invalid-request",
            "request must be a JSON object",
        ));
    };
    let text = match req.get("text") {
        Some(Value::String(t)) => t,
        Some(_) => {
            return Err(CheckError::new(
                "invalid-request",
                "\"text\" must be a string",
            ))
        }
        None => return Err(CheckError::new("invalid-request", "\"text\" is required")),
    };
    let path = match req.get("path") {
        None | Some(Value::Null) => None,
        Some(Value::String(p)) => Some(p.clone()),
        Some(_) => {
            return Err(CheckError::new(
                "invalid-request",
                "\"path\" must be a string",
            ))
        }
    };
    let mut config = Config::default();
    let applied = settings::apply_json(&mut config, req.get("config").unwrap_or(&Value::Null))
        .map_err(|e| CheckError::new("invalid-config", e))?;
    let mut extra: Vec<InputWarning> = applied
        .unknown
        .iter()
        .map(|k| InputWarning {
            code: "unknown-config-key",
            message: format!("config key {k:?} is not known and was ignored"),
            offset: None,
        })
        .collect();
    for key in req.keys() {
        if !matches!(key.as_str(), "text" | "path" | "config") {
            extra.push(InputWarning {
                code: "unknown-request-key",
                message: format!("request key {key:?} is not known and was ignored"),
                offset: None,
            });
        }
    }
    Ok(check_text(text, path, &config, extra))
}

/// Analyse one text and build the response object.
pub fn check_text(
    text: &str,
    path: Option<String>,
    config: &Config,
    extra_warnings: Vec<InputWarning>,
) -> Value {
    let source = path.clone().unwrap_or_else(|| "<stdin>".into());
    let mut doc = Doc::from_bytes(source, text.as_bytes());
    doc.warnings.extend(extra_warnings);
    let analysis = doc.text.as_deref().map(|t| crate::analyze(t, config));
    response(&doc, analysis.as_ref(), path)
}

/// The response for a document and its analysis (`None` when the document was skipped).
pub fn response(doc: &Doc, analysis: Option<&crate::Analysis>, path: Option<String>) -> Value {
    let mut document = render::json::extract_document(doc, analysis);
    let mut diagnostics = json!(analysis.map(|a| &a.diagnostics));
    if diagnostics.is_null() {
        diagnostics = json!([]);
    }
    // Positions are computed on the decoded text, which has the request's byte offsets.
    let index = LineIndex::new(doc.text.as_deref().unwrap_or(""));
    positions::add_utf16_columns(&mut document, &index);
    positions::add_utf16_columns(&mut diagnostics, &index);
    let mut out = Map::new();
    out.insert("schema".into(), json!(CHECK_SCHEMA));
    out.insert("ok".into(), json!(true));
    out.insert("path".into(), json!(path));
    out.insert("diagnostics".into(), diagnostics);
    out.insert("document".into(), document);
    out.insert("caution".into(), json!(render::CAUTION));
    Value::Object(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn errors_are_json_with_a_code() {
        assert_eq!(respond(b"{not json").unwrap_err().code, "invalid-json");
        assert_eq!(respond(b"[1]").unwrap_err().code, "invalid-request");
        assert_eq!(respond(b"{}").unwrap_err().code, "invalid-request");
        assert_eq!(
            respond(br#"{"text": 5}"#).unwrap_err().code,
            "invalid-request"
        );
        assert_eq!(
            respond(br#"{"text": "x", "config": {"date_order": "ymd"}}"#)
                .unwrap_err()
                .code,
            "invalid-config"
        );
        let e = CheckError::new("invalid-json", "m").to_json();
        assert_eq!(e["ok"], false);
        assert_eq!(e["error"]["code"], "invalid-json");
    }

    #[test]
    fn a_valid_request_gives_the_document_and_diagnostics() {
        let r = respond(r#"{"text": "Wt 82.4 µ", "path": "a.txt", "x": 1}"#.as_bytes()).unwrap();
        assert_eq!(r["ok"], true);
        assert_eq!(r["path"], "a.txt");
        assert!(r["diagnostics"].is_array());
        assert_eq!(r["document"]["source"], "a.txt");
        let warnings = r["document"]["warnings"].as_array().unwrap();
        assert!(warnings.iter().any(|w| w["code"] == "unknown-request-key"));
    }

    #[test]
    fn an_empty_text_is_a_skipped_document_not_an_error() {
        let r = respond(br#"{"text": ""}"#).unwrap();
        assert_eq!(r["ok"], true);
        assert_eq!(r["document"]["warnings"][0]["code"], "empty");
        assert_eq!(r["path"], Value::Null);
    }
}
