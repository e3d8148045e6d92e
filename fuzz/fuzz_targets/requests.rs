//! Arbitrary bytes through the two editor front ends, in process:
//!
//! (a) as a `check --stdin-json` request body (`tidemark::cli::check::respond`);
//! (b) as a sequence of LSP JSON-RPC messages for the language server, either framed with
//!     `Content-Length` headers (the stdio wire format, read with `lsp_server::Message::read`)
//!     or one JSON message per line, each handed to `tidemark::lsp::Server::handle`;
//! (c) when the bytes are JSON, also wrapped in valid requests: the text of a `check` request,
//!     and the note of a whole LSP session (open, incremental and full changes at UTF-16
//!     positions, hover, outline, quick fixes, save, settings, close), so the analysis behind
//!     the protocol is reached.
//!
//! It fails on a panic, on a run longer than the timeout, on a response of the wrong shape,
//! on a request without exactly one response with its id, and on a span or LSP range
//! outside the text.

#![no_main]

use std::io::BufRead;

use libfuzzer_sys::fuzz_target;
use lsp_server::{Message, Notification, Request, RequestId};
use serde_json::{json, Value};
use tidemark::cli::check;
use tidemark::lsp::{self, Server};

/// More messages than any real exchange needs; keeps one input's run short.
const MAX_MESSAGES: usize = 256;

// ---- (a) check --stdin-json ------------------------------------------------------------

fn check_spans(v: &Value, text: &str) {
    match v {
        Value::Object(map) => {
            if let (Some(s), Some(e), true) = (
                map.get("start").and_then(Value::as_u64),
                map.get("end").and_then(Value::as_u64),
                map.contains_key("line"),
            ) {
                let (s, e) = (s as usize, e as usize);
                assert!(s <= e && e <= text.len(), "span {s}..{e} outside the text");
                assert!(text.is_char_boundary(s) && text.is_char_boundary(e));
                assert!(map.get("column_utf16").is_some_and(Value::is_u64));
            }
            map.values().for_each(|x| check_spans(x, text));
        }
        Value::Array(items) => items.iter().for_each(|x| check_spans(x, text)),
        _ => {}
    }
}

/// Answer one request body and check the response against the documented shape.
fn check_request(body: &[u8]) {
    match check::respond(body) {
        Ok(r) => {
            assert_eq!(r["schema"], check::CHECK_SCHEMA);
            assert_eq!(r["ok"], true);
            assert!(r["diagnostics"].is_array() && r["document"].is_object());
            assert!(r["caution"].is_string());
            assert!(r["path"].is_null() || r["path"].is_string());
            let req: Value = serde_json::from_slice(body).expect("an answered request is JSON");
            let text = req["text"]
                .as_str()
                .expect("an answered request has a text");
            check_spans(&r, text);
            serde_json::to_string(&r).expect("the response serialises");
        }
        Err(e) => {
            assert!(
                matches!(
                    e.code,
                    "invalid-json" | "invalid-request" | "invalid-config"
                ),
                "undocumented error code {}",
                e.code
            );
            let j = e.to_json();
            assert_eq!(j["ok"], false);
            assert_eq!(j["error"]["code"], e.code);
        }
    }
}

// ---- (b) LSP messages ------------------------------------------------------------------

/// The messages in `data`: `Content-Length` framed when it starts that way, else one JSON
/// message per line (lines that are not messages are dropped).
fn messages(data: &[u8]) -> Vec<Message> {
    let mut out = Vec::new();
    if data.starts_with(b"Content-Length") {
        let mut reader: &[u8] = data;
        while out.len() < MAX_MESSAGES {
            match Message::read(&mut reader) {
                Ok(Some(m)) => out.push(m),
                Ok(None) | Err(_) => break,
            }
            if reader.fill_buf().map_or(true, |b| b.is_empty()) {
                break;
            }
        }
    } else {
        out.extend(
            data.split(|&b| b == b'\n')
                .filter_map(|l| serde_json::from_slice::<Message>(l).ok())
                .take(MAX_MESSAGES),
        );
    }
    out
}

/// A server driven as `tidemark lsp` drives it: messages before `initialize` are the
/// connection's business, `shutdown` and `exit` end the session, everything else goes
/// through `Server::handle`. Every message sent back is checked by `on_sent`.
struct Session {
    server: Option<Server>,
    ended: bool,
}

impl Session {
    fn new() -> Session {
        Session {
            server: None,
            ended: false,
        }
    }

    fn send(&mut self, msg: Message) -> Vec<Message> {
        if self.ended {
            return Vec::new();
        }
        let Some(server) = &mut self.server else {
            if let Message::Request(r) = msg {
                if r.method == "initialize" {
                    let mut s = Server::from_init_params(r.params);
                    let out = s.startup_messages();
                    self.server = Some(s);
                    assert!(lsp::initialize_result()["capabilities"].is_object());
                    return out;
                }
            }
            return Vec::new();
        };
        let request_id = match &msg {
            Message::Request(r) if r.method == "shutdown" => {
                self.ended = true;
                return Vec::new();
            }
            Message::Notification(n) if n.method == "exit" => {
                self.ended = true;
                return Vec::new();
            }
            Message::Request(r) => Some(r.id.clone()),
            _ => None,
        };
        let out = server.handle(msg);
        let responses: Vec<&RequestId> = out
            .iter()
            .filter_map(|m| match m {
                Message::Response(r) => Some(&r.id),
                _ => None,
            })
            .collect();
        match &request_id {
            Some(id) => assert_eq!(responses, vec![id], "one response per request"),
            None => assert!(responses.is_empty(), "a response without a request"),
        }
        for m in &out {
            let mut wire = Vec::new();
            m.write(&mut wire).expect("a message serialises");
        }
        out
    }
}

fn lsp_messages(data: &[u8]) {
    let mut session = Session::new();
    for m in messages(data) {
        session.send(m);
    }
}

// ---- (c) structured: valid requests around the JSON ------------------------------------

/// 0-based UTF-16 position -> byte offset, computed here independently of the server, for
/// positions made by `positions` (in range, never inside a surrogate pair).
fn byte_offset(text: &str, line: u32, character: u32) -> usize {
    let mut start = 0;
    for _ in 0..line {
        start += text[start..].find('\n').expect("line in range") + 1;
    }
    let mut units = 0;
    for (i, c) in text[start..].char_indices() {
        if units >= character || c == '\n' {
            return start + i;
        }
        units += c.len_utf16() as u32;
    }
    text.len()
}

/// Every valid position of the text as (line, UTF-16 column), lines ending at `\n`.
fn positions(text: &str) -> Vec<(u32, u32)> {
    let mut out = Vec::new();
    for (l, line) in text.split('\n').enumerate() {
        let mut units = 0;
        for c in line.chars() {
            out.push((l as u32, units));
            units += c.len_utf16() as u32;
        }
        out.push((l as u32, units));
    }
    out
}

fn valid_position(text: &str, p: &Value) -> bool {
    let (Some(line), Some(ch)) = (p["line"].as_u64(), p["character"].as_u64()) else {
        return false;
    };
    let Some(l) = text.split('\n').nth(line as usize) else {
        return false;
    };
    let mut units = 0u64;
    for c in l.chars() {
        if units == ch {
            return true;
        }
        units += c.len_utf16() as u64;
    }
    units == ch
}

fn check_ranges(v: &Value, text: &str) {
    match v {
        Value::Object(map) => {
            if let (Some(s), Some(e)) = (map.get("start"), map.get("end")) {
                if s.get("character").is_some() {
                    assert!(valid_position(text, s), "range start {s} outside the text");
                    assert!(valid_position(text, e), "range end {e} outside the text");
                }
            }
            map.values().for_each(|x| check_ranges(x, text));
        }
        Value::Array(items) => items.iter().for_each(|x| check_ranges(x, text)),
        _ => {}
    }
}

const URI: &str = "file:///fuzz/note.txt";

fn note(method: &str, params: Value) -> Message {
    Message::Notification(Notification::new(method.into(), params))
}

fn request(id: i32, method: &str, params: Value) -> Message {
    Message::Request(Request::new(id.into(), method.into(), params))
}

fn range(text: &str, a: (u32, u32), b: (u32, u32)) -> (Value, usize, usize) {
    let (a, b) = if a <= b { (a, b) } else { (b, a) };
    let r = json!({"start": {"line": a.0, "character": a.1},
                   "end": {"line": b.0, "character": b.1}});
    (r, byte_offset(text, a.0, a.1), byte_offset(text, b.0, b.1))
}

/// Send one message and check what comes back against the mirrored text.
fn exchange(s: &mut Session, msg: Message, text: &str, version: i32) {
    for out in s.send(msg) {
        match out {
            Message::Notification(n) if n.method == "textDocument/publishDiagnostics" => {
                assert_eq!(n.params["uri"], URI);
                if !n.params["diagnostics"].as_array().unwrap().is_empty() {
                    assert_eq!(n.params["version"], version);
                }
                check_ranges(&n.params, text);
            }
            Message::Response(r) => {
                let result = r.response_result.expect("a well-formed request succeeds");
                check_ranges(&result, text);
            }
            _ => {}
        }
    }
}

fn structured(data: &[u8], v: &Value) {
    let Ok(raw) = std::str::from_utf8(data) else {
        return;
    };
    let text: &str = v.as_str().unwrap_or(raw);
    let pick = |i: usize| data.get(i).copied().unwrap_or(0) as usize;
    let date_order = ["auto", "dmy", "mdy"][pick(0) % 3];
    let unit_system = ["auto", "si", "us"][pick(1) % 3];

    // The text as a check request, and the JSON as a check request's config.
    let body = json!({"text": text, "path": "fuzz.txt",
                      "config": {"date_order": date_order, "unit_system": unit_system}});
    check_request(body.to_string().as_bytes());
    check_request(
        json!({"text": "Wt 82.4\nBP 98/60", "config": v})
            .to_string()
            .as_bytes(),
    );

    // A whole LSP session with the text as the note.
    let mut s = Session::new();
    let options = if v.is_object() {
        v.clone()
    } else {
        json!({"date_order": date_order, "unit_system": unit_system})
    };
    s.send(request(
        1,
        "initialize",
        json!({"capabilities": {}, "initializationOptions": options}),
    ));
    s.send(note("initialized", json!({})));
    let mut mirror = text.to_string();
    exchange(
        &mut s,
        note(
            "textDocument/didOpen",
            json!({"textDocument": {"uri": URI, "languageId": "plaintext", "version": 1,
                                    "text": mirror}}),
        ),
        &mirror,
        1,
    );
    let doc = json!({"uri": URI});
    let mut id = 2;
    let mut queries = |s: &mut Session, mirror: &str, version: i32| {
        let ps = positions(mirror);
        let step = (ps.len() / 24).max(1);
        for p in ps.iter().step_by(step).take(32) {
            id += 1;
            let params = json!({"textDocument": doc,
                                "position": {"line": p.0, "character": p.1}});
            exchange(
                s,
                request(id, "textDocument/hover", params),
                mirror,
                version,
            );
        }
        id += 1;
        let params = json!({"textDocument": doc});
        exchange(
            s,
            request(id, "textDocument/documentSymbol", params),
            mirror,
            version,
        );
        let (whole, _, _) = range(mirror, ps[0], *ps.last().unwrap());
        id += 1;
        let params = json!({"textDocument": doc, "range": whole,
                            "context": {"diagnostics": []}});
        exchange(
            s,
            request(id, "textDocument/codeAction", params),
            mirror,
            version,
        );
    };
    queries(&mut s, &mirror, 1);

    // Incremental changes at positions chosen by the input, mirrored here.
    let mut version = 1;
    for k in 0..3 {
        let ps = positions(&mirror);
        let a = ps[(pick(2 + 2 * k) * 7919 + k) % ps.len()];
        let b = ps[(pick(3 + 2 * k) * 104729 + 3 * k) % ps.len()];
        let insert = ["80.1 kg", "µ😀\r\n", ""][k];
        let (r, lo, hi) = range(&mirror, a, b);
        mirror.replace_range(lo..hi, insert);
        version += 1;
        let params = json!({"textDocument": {"uri": URI, "version": version},
                            "contentChanges": [{"range": r, "text": insert}]});
        exchange(
            &mut s,
            note("textDocument/didChange", params),
            &mirror,
            version,
        );
    }
    queries(&mut s, &mirror, version);

    // A full replacement, a save with text, new settings, then close.
    mirror = mirror.replace('\n', "\r\n");
    version += 1;
    let params = json!({"textDocument": {"uri": URI, "version": version},
                        "contentChanges": [{"text": mirror}]});
    exchange(
        &mut s,
        note("textDocument/didChange", params),
        &mirror,
        version,
    );
    mirror.push_str("\nWt 79.8 kg, JVP not seen");
    let params = json!({"textDocument": {"uri": URI}, "text": mirror});
    exchange(
        &mut s,
        note("textDocument/didSave", params),
        &mirror,
        version,
    );
    let params = json!({"settings": {"tidemark": {"unit_system": "us", "date_order": "mdy"}}});
    exchange(
        &mut s,
        note("workspace/didChangeConfiguration", params),
        &mirror,
        version,
    );
    queries(&mut s, &mirror, version);
    let params = json!({"textDocument": {"uri": URI}});
    exchange(&mut s, note("textDocument/didClose", params), "", version);
    s.send(request(9999, "shutdown", Value::Null));
}

fuzz_target!(|data: &[u8]| {
    check_request(data);
    lsp_messages(data);
    if let Ok(v) = serde_json::from_slice::<Value>(data) {
        structured(data, &v);
    }
});
