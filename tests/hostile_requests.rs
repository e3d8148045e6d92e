//! Hostile input to the two editor front ends, in process: `check --stdin-json` request
//! bodies (`cli::check::respond`) and LSP messages (`lsp::Server::handle`).
//!
//! Every check response, success or error, must keep to the published response schema
//! `docs/schema/tidemark-check-1.schema.json` (checked with the `jsonschema` crate, an
//! implementation of JSON Schema 2020-12), and every error code must be one that
//! `docs/integration.md` lists. Every LSP request must get exactly one response carrying its
//! id (JSON-RPC 2.0, section 5: "the Server MUST reply with a Response"; LSP 3.17, "Request
//! Message"). The coverage-guided target `fuzz/fuzz_targets/requests.rs` explores the same
//! entry points at length; this is the short run CI does.

use std::sync::OnceLock;

use lsp_server::{Message, Notification, Request};
use proptest::prelude::*;
use serde_json::{json, Value};
use tidemark::cli::check;
use tidemark::lsp::Server;

fn validator() -> &'static jsonschema::Validator {
    static V: OnceLock<jsonschema::Validator> = OnceLock::new();
    V.get_or_init(|| {
        let schema: Value =
            serde_json::from_str(include_str!("../docs/schema/tidemark-check-1.schema.json"))
                .unwrap();
        jsonschema::validator_for(&schema).expect("schema compiles")
    })
}

/// Answer `body`; the response (or the error as JSON) must keep to the schema.
fn respond_and_check(body: &[u8]) -> Value {
    let v = match check::respond(body) {
        Ok(v) => {
            assert_eq!(v["ok"], true);
            v
        }
        Err(e) => {
            // docs/integration.md, "Errors are JSON too"; too-large and unreadable are the
            // stdin reader's, not respond's.
            assert!(
                ["invalid-json", "invalid-request", "invalid-config"].contains(&e.code),
                "undocumented error code {}",
                e.code
            );
            e.to_json()
        }
    };
    let errors: Vec<String> = validator()
        .iter_errors(&v)
        .map(|e| format!("{e} at {}", e.instance_path))
        .collect();
    assert!(errors.is_empty(), "response breaks the schema: {errors:?}");
    v
}

/// Any JSON value, nested a few levels.
fn json_value() -> impl Strategy<Value = Value> {
    let leaf = prop_oneof![
        Just(Value::Null),
        any::<bool>().prop_map(Value::Bool),
        any::<i64>().prop_map(|n| json!(n)),
        any::<f64>().prop_map(|x| json!(x)),
        "\\PC{0,40}".prop_map(Value::String),
        prop_oneof![
            Just("auto"),
            Just("dmy"),
            Just("mdy"),
            Just("si"),
            Just("us")
        ]
        .prop_map(|s| json!(s)),
    ];
    leaf.prop_recursive(3, 24, 6, |inner| {
        let key = prop_oneof![
            Just("text".to_string()),
            Just("path".to_string()),
            Just("config".to_string()),
            Just("date_order".to_string()),
            Just("unitSystem".to_string()),
            Just("textDocument".to_string()),
            Just("uri".to_string()),
            Just("position".to_string()),
            "\\PC{0,8}",
        ];
        prop_oneof![
            proptest::collection::vec(inner.clone(), 0..6).prop_map(Value::Array),
            proptest::collection::btree_map(key, inner, 0..6)
                .prop_map(|m| Value::Object(m.into_iter().collect())),
        ]
    })
}

/// Note-like text: values, units, negations, line ends and characters of every UTF-8 width.
fn note_text() -> impl Strategy<Value = String> {
    let piece = prop_oneof![
        Just("Wt 82.4".to_string()),
        Just(" kg".to_string()),
        Just("BP 98/60".to_string()),
        Just("no crackles".to_string()),
        Just("JVP +4 cm".to_string()),
        Just("O/E:".to_string()),
        Just("\n".to_string()),
        Just("\r\n".to_string()),
        Just("µ°".to_string()),
        Just("😀".to_string()),
        "\\PC{0,12}",
    ];
    proptest::collection::vec(piece, 0..24).prop_map(|p| p.concat())
}

const URI: &str = "file:///tmp/invented/note.txt";

/// One LSP message: a plausible one about the open document, or any method with any params.
fn lsp_message() -> impl Strategy<Value = Message> {
    let method = prop_oneof![
        Just("textDocument/didOpen"),
        Just("textDocument/didChange"),
        Just("textDocument/didSave"),
        Just("textDocument/didClose"),
        Just("textDocument/hover"),
        Just("textDocument/documentSymbol"),
        Just("textDocument/codeAction"),
        Just("workspace/didChangeConfiguration"),
        Just("tidemark/unknown"),
    ];
    let pos = (0u32..6, 0u32..40).prop_map(|(l, c)| json!({"line": l, "character": c}));
    let plausible = (method.clone(), note_text(), pos.clone(), pos, 0i32..50).prop_map(
        |(m, text, a, b, version)| {
            let doc = json!({"uri": URI, "version": version});
            let range = json!({"start": a, "end": b});
            let params = match m {
                "textDocument/didOpen" => json!({"textDocument":
                    {"uri": URI, "languageId": "plaintext", "version": version, "text": text}}),
                "textDocument/didChange" => json!({"textDocument": doc,
                    "contentChanges": [{"range": range, "text": text}, {"text": text}]}),
                "textDocument/didSave" => json!({"textDocument": doc, "text": text}),
                "textDocument/hover" => json!({"textDocument": doc, "position": a}),
                "textDocument/codeAction" => json!({"textDocument": doc, "range": range,
                                                    "context": {"diagnostics": []}}),
                "workspace/didChangeConfiguration" => {
                    json!({"settings": {"tidemark": {"unit_system": "us"}}})
                }
                _ => json!({"textDocument": doc}),
            };
            (m, params)
        },
    );
    let any_params = (method, json_value());
    (
        prop_oneof![plausible, any_params],
        any::<bool>(),
        0i32..1000,
    )
        .prop_map(|((m, params), is_request, id)| {
            let is_request = is_request || m.ends_with("hover") || m.ends_with("Symbol");
            if is_request {
                Message::Request(Request::new(id.into(), m.into(), params))
            } else {
                Message::Notification(Notification::new(m.into(), params))
            }
        })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 128, ..ProptestConfig::default() })]

    #[test]
    fn arbitrary_request_bodies_get_a_schema_response(body in "\\PC{0,200}") {
        respond_and_check(body.as_bytes());
    }

    #[test]
    fn arbitrary_json_requests_get_a_schema_response(v in json_value()) {
        respond_and_check(v.to_string().as_bytes());
    }

    #[test]
    fn valid_requests_with_hostile_text_and_config_succeed(
        text in note_text(),
        config in json_value(),
        path in proptest::option::of("\\PC{0,20}"),
    ) {
        let body = json!({"text": text, "path": path, "config": {"date_order": "mdy"}});
        let r = respond_and_check(body.to_string().as_bytes());
        prop_assert_eq!(&r["ok"], &json!(true));
        prop_assert_eq!(&r["path"], &json!(path));
        // Any config either applies or is an invalid-config error, never something else.
        let body = json!({"text": text, "config": config});
        let r = respond_and_check(body.to_string().as_bytes());
        prop_assert!(r["ok"] == json!(true) || r["error"]["code"] == "invalid-config"
            || r["error"]["code"] == "invalid-request");
    }

    #[test]
    fn lsp_messages_get_one_response_per_request(
        init in json_value(),
        msgs in proptest::collection::vec(lsp_message(), 0..12),
    ) {
        let mut server = Server::from_init_params(json!({"capabilities": {},
                                                         "initializationOptions": init}));
        for m in server.startup_messages() {
            prop_assert!(matches!(m, Message::Notification(ref n) if n.method == "window/logMessage"));
        }
        for msg in msgs {
            let id = match &msg {
                Message::Request(r) => Some(r.id.clone()),
                _ => None,
            };
            let out = server.handle(msg);
            let responses: Vec<_> = out
                .iter()
                .filter_map(|m| match m {
                    Message::Response(r) => Some(r.id.clone()),
                    _ => None,
                })
                .collect();
            prop_assert_eq!(responses, id.into_iter().collect::<Vec<_>>());
            for m in &out {
                let mut wire = Vec::new();
                m.write(&mut wire).unwrap();
                let text = String::from_utf8(wire).unwrap();
                let (_, body) = text.split_once("\r\n\r\n").unwrap();
                let v: Value = serde_json::from_str(body).unwrap();
                prop_assert_eq!(&v["jsonrpc"], &json!("2.0"));
                if let Message::Notification(n) = m {
                    prop_assert_eq!(n.method.as_str(), "textDocument/publishDiagnostics");
                    prop_assert!(n.params["uri"].is_string());
                    prop_assert!(n.params["diagnostics"].is_array());
                }
            }
        }
    }
}

/// The schema check above can fail: a response missing its diagnostics, or an error without
/// a code, is rejected.
#[test]
fn the_response_schema_rejects_broken_responses() {
    let mut good = check::respond(br#"{"text": "Wt 82.4"}"#).unwrap();
    assert!(validator().is_valid(&good));
    good.as_object_mut().unwrap().remove("diagnostics");
    assert!(!validator().is_valid(&good));
    let bad_error = json!({"schema": check::CHECK_SCHEMA, "ok": false, "error": {"message": "m"}});
    assert!(!validator().is_valid(&bad_error));
}
