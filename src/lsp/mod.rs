//! `tidemark lsp`: a language server over stdin/stdout.
//!
//! Text sync is incremental (full replacement works too). Diagnostics are published on open,
//! change and save, each with the rule id as `code`, a severity, and a `codeDescription`
//! link to the rule's entry in the rule reference when one is known. Hover shows the
//! extracted value under the cursor (concept, normalised value, assertion, the rules and
//! profile axes that use it); the document outline lists the note's sections; a diagnostic
//! with a safe fix offers it as a quick fix. Positions are UTF-16 code units, as the protocol
//! requires.
//!
//! Configuration: the client's `initializationOptions` (the same keys as `check`'s `config`,
//! plus `rulesDocUrl`), and later `workspace/didChangeConfiguration` settings. Layering is
//! defaults, then the project file (the nearest `tidemark.toml` at or above the workspace
//! root), then the client.
//!
//! Architecture invariant: nothing here writes to stdout except the protocol; logs go to
//! stderr. The server never sends a note anywhere but back to its own client.

pub mod document;
pub mod features;

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::str::FromStr;

use lsp_server::{Connection, ErrorCode, Message, Notification, Request, Response};
use lsp_types::notification::{
    DidChangeConfiguration, DidChangeTextDocument, DidCloseTextDocument, DidOpenTextDocument,
    DidSaveTextDocument, LogMessage, Notification as _, PublishDiagnostics,
};
use lsp_types::request::{CodeActionRequest, DocumentSymbolRequest, HoverRequest, Request as _};
use lsp_types::{
    CodeActionKind, CodeActionOptions, CodeActionOrCommand, CodeActionParams,
    CodeActionProviderCapability, DidChangeConfigurationParams, DidChangeTextDocumentParams,
    DidCloseTextDocumentParams, DidOpenTextDocumentParams, DidSaveTextDocumentParams,
    DocumentSymbolParams, DocumentSymbolResponse, HoverParams, HoverProviderCapability,
    InitializeParams, LogMessageParams, MessageType, OneOf, PositionEncodingKind,
    PublishDiagnosticsParams, SaveOptions, ServerCapabilities, TextDocumentSyncCapability,
    TextDocumentSyncKind, TextDocumentSyncOptions, TextDocumentSyncSaveOptions, Uri,
};
use serde_json::Value;

use crate::cli::settings;
use crate::config::Config;
use document::Document;
use features::RuleDocs;

/// Run the server on stdin/stdout; returns the process exit code.
pub fn run_stdio() -> i32 {
    let (connection, io_threads) = Connection::stdio();
    let code = match serve(&connection) {
        Ok(()) => 0,
        Err(e) => {
            eprintln!("tidemark lsp: {e}");
            1
        }
    };
    drop(connection);
    if let Err(e) = io_threads.join() {
        eprintln!("tidemark lsp: {e}");
    }
    code
}

/// The server's capabilities.
pub fn capabilities() -> ServerCapabilities {
    ServerCapabilities {
        position_encoding: Some(PositionEncodingKind::UTF16),
        text_document_sync: Some(TextDocumentSyncCapability::Options(
            TextDocumentSyncOptions {
                open_close: Some(true),
                change: Some(TextDocumentSyncKind::INCREMENTAL),
                will_save: None,
                will_save_wait_until: None,
                save: Some(TextDocumentSyncSaveOptions::SaveOptions(SaveOptions {
                    include_text: Some(true),
                })),
            },
        )),
        hover_provider: Some(HoverProviderCapability::Simple(true)),
        document_symbol_provider: Some(OneOf::Left(true)),
        code_action_provider: Some(CodeActionProviderCapability::Options(CodeActionOptions {
            code_action_kinds: Some(vec![CodeActionKind::QUICKFIX]),
            work_done_progress_options: Default::default(),
            resolve_provider: None,
        })),
        ..ServerCapabilities::default()
    }
}

/// The `initialize` response: capabilities and server info.
pub fn initialize_result() -> Value {
    serde_json::json!({
        "capabilities": capabilities(),
        "serverInfo": {"name": "tidemark", "version": env!("CARGO_PKG_VERSION")},
    })
}

/// Serve one connection until `shutdown` and `exit`, or until the client goes away.
///
/// The handshake (`initialize`/`initialized`, `shutdown`/`exit`) is the connection's; every
/// message in between goes through [`Server::handle`], which needs no connection.
pub fn serve(connection: &Connection) -> Result<(), String> {
    let (id, params) = connection.initialize_start().map_err(|e| e.to_string())?;
    let mut server = Server::from_init_params(params);
    connection
        .initialize_finish(id, initialize_result())
        .map_err(|e| e.to_string())?;
    for msg in server.startup_messages() {
        send(connection, msg);
    }
    for msg in &connection.receiver {
        let done = match &msg {
            Message::Request(req) => connection.handle_shutdown(req).map_err(|e| e.to_string())?,
            Message::Notification(n) => n.method == "exit",
            Message::Response(_) => false,
        };
        if done {
            return Ok(());
        }
        for out in server.handle(msg) {
            send(connection, out);
        }
    }
    Ok(())
}

fn send(connection: &Connection, msg: Message) {
    if connection.sender.send(msg).is_err() {
        eprintln!("tidemark lsp: client connection closed");
    }
}

fn log_message(typ: MessageType, message: String) -> Message {
    let params = LogMessageParams { typ, message };
    Message::Notification(Notification::new(LogMessage::METHOD.into(), params))
}

/// Server state: open documents and configuration.
#[derive(Debug, Default)]
pub struct Server {
    config: Config,
    /// The configuration from `initialize`, on which later settings are layered.
    base_config: Config,
    docs: RuleDocs,
    documents: HashMap<String, Document>,
    pending_logs: Vec<String>,
}

impl Server {
    /// Configure from the `initialize` request's parameters; parameters that do not parse
    /// count as empty ones.
    pub fn from_init_params(params: Value) -> Server {
        let init: InitializeParams = serde_json::from_value(params).unwrap_or_default();
        Server::from_init(&init)
    }

    /// The messages to send once initialised: warnings about the configuration.
    pub fn startup_messages(&mut self) -> Vec<Message> {
        std::mem::take(&mut self.pending_logs)
            .into_iter()
            .map(|m| log_message(MessageType::WARNING, m))
            .collect()
    }

    /// Handle one message received after the handshake; returns the messages to send back.
    /// A request gets exactly one response; a notification gets zero or more notifications;
    /// a response from the client is ignored.
    pub fn handle(&mut self, msg: Message) -> Vec<Message> {
        match msg {
            Message::Request(req) => vec![Message::Response(self.request(req))],
            Message::Notification(n) => self
                .notification(n)
                .into_iter()
                .map(Message::Notification)
                .collect(),
            Message::Response(_) => Vec::new(),
        }
    }

    /// Configure from the `initialize` request.
    pub fn from_init(init: &InitializeParams) -> Server {
        let mut server = Server::default();
        let root = workspace_root(init);
        // Layer 1, the project file: the nearest tidemark.toml at or above the workspace root.
        if let Some(path) = root.as_deref().and_then(crate::config::find_config_file) {
            match Config::load(&path) {
                Ok(c) => server.config = c,
                Err(e) => server
                    .pending_logs
                    .push(format!("{} ignored: {e}", path.display())),
            }
        }
        // Layer 2, the client's initializationOptions.
        let mut options = init.initialization_options.clone().unwrap_or(Value::Null);
        let mut rules_doc = None;
        if let Value::Object(map) = &mut options {
            if let Some(v) = map.remove("rulesDocUrl") {
                match v {
                    Value::String(s) => rules_doc = Some(s),
                    _ => server
                        .pending_logs
                        .push("rulesDocUrl must be a string; ignored".into()),
                }
            }
        }
        match settings::apply_json(&mut server.config, &options) {
            Ok(applied) => {
                for key in applied.unknown {
                    server.pending_logs.push(format!(
                        "initializationOptions key {key:?} is not known and was ignored"
                    ));
                }
            }
            Err(e) => server
                .pending_logs
                .push(format!("initializationOptions ignored: {e}")),
        }
        server.base_config = server.config.clone();
        server.docs.base = rules_doc.or_else(|| {
            let path = root?.join("docs").join("rules.md");
            path.is_file().then(|| file_uri(&path))
        });
        server
    }

    fn request(&mut self, req: Request) -> Response {
        let id = req.id.clone();
        let result = match req.method.as_str() {
            HoverRequest::METHOD => parse::<HoverParams>(req).map(|p| {
                let pp = p.text_document_position_params;
                let key = pp.text_document.uri.as_str().to_string();
                let h = self
                    .documents
                    .get(&key)
                    .and_then(|d| features::hover(d, pp.position));
                serde_json::to_value(h).unwrap_or(Value::Null)
            }),
            DocumentSymbolRequest::METHOD => parse::<DocumentSymbolParams>(req).map(|p| {
                let key = p.text_document.uri.as_str().to_string();
                let syms = self
                    .documents
                    .get(&key)
                    .map(features::symbols)
                    .unwrap_or_default();
                serde_json::to_value(DocumentSymbolResponse::Nested(syms)).unwrap_or(Value::Null)
            }),
            CodeActionRequest::METHOD => parse::<CodeActionParams>(req).map(|p| {
                let uri = p.text_document.uri;
                let actions: Vec<CodeActionOrCommand> = self
                    .documents
                    .get(uri.as_str())
                    .map(|d| features::code_actions(d, &uri, p.range, &self.docs))
                    .unwrap_or_default()
                    .into_iter()
                    .map(CodeActionOrCommand::CodeAction)
                    .collect();
                serde_json::to_value(actions).unwrap_or(Value::Null)
            }),
            other => Err((
                ErrorCode::MethodNotFound,
                format!("method {other} is not supported"),
            )),
        };
        match result {
            Ok(v) => Response::new_ok(id, v),
            Err((code, message)) => Response::new_err(id, code as i32, message),
        }
    }

    /// Handle a notification; returns the notifications to send back.
    fn notification(&mut self, n: Notification) -> Vec<Notification> {
        match n.method.as_str() {
            DidOpenTextDocument::METHOD => {
                let Ok(p) = n.extract::<DidOpenTextDocumentParams>(DidOpenTextDocument::METHOD)
                else {
                    return Vec::new();
                };
                let doc =
                    Document::new(p.text_document.text, p.text_document.version, &self.config);
                let uri = p.text_document.uri;
                self.documents.insert(uri.as_str().to_string(), doc);
                self.publish(&uri)
            }
            DidChangeTextDocument::METHOD => {
                let Ok(p) = n.extract::<DidChangeTextDocumentParams>(DidChangeTextDocument::METHOD)
                else {
                    return Vec::new();
                };
                let uri = p.text_document.uri;
                let Some(doc) = self.documents.get_mut(uri.as_str()) else {
                    return Vec::new();
                };
                doc.apply_changes(p.content_changes);
                doc.version = p.text_document.version;
                doc.reanalyze(&self.config);
                self.publish(&uri)
            }
            DidSaveTextDocument::METHOD => {
                let Ok(p) = n.extract::<DidSaveTextDocumentParams>(DidSaveTextDocument::METHOD)
                else {
                    return Vec::new();
                };
                let uri = p.text_document.uri;
                let Some(doc) = self.documents.get_mut(uri.as_str()) else {
                    return Vec::new();
                };
                if let Some(text) = p.text {
                    doc.text = text;
                }
                doc.reanalyze(&self.config);
                self.publish(&uri)
            }
            DidCloseTextDocument::METHOD => {
                let Ok(p) = n.extract::<DidCloseTextDocumentParams>(DidCloseTextDocument::METHOD)
                else {
                    return Vec::new();
                };
                let uri = p.text_document.uri;
                self.documents.remove(uri.as_str());
                let params = PublishDiagnosticsParams {
                    uri,
                    diagnostics: Vec::new(),
                    version: None,
                };
                vec![Notification::new(PublishDiagnostics::METHOD.into(), params)]
            }
            DidChangeConfiguration::METHOD => {
                let Ok(p) =
                    n.extract::<DidChangeConfigurationParams>(DidChangeConfiguration::METHOD)
                else {
                    return Vec::new();
                };
                self.change_settings(&p.settings)
            }
            _ => Vec::new(),
        }
    }

    /// New settings from `workspace/didChangeConfiguration` (`{"tidemark": {...}}` or the
    /// object itself), layered on the `initialize` configuration; every open document is
    /// analysed again and its diagnostics published.
    fn change_settings(&mut self, settings: &Value) -> Vec<Notification> {
        let ours = settings.get("tidemark").unwrap_or(settings);
        let mut config = self.base_config.clone();
        match settings::apply_json(&mut config, ours) {
            Ok(applied) => {
                for key in applied.unknown {
                    eprintln!("tidemark lsp: setting {key:?} is not known and was ignored");
                }
            }
            Err(e) => {
                eprintln!("tidemark lsp: settings ignored: {e}");
                return Vec::new();
            }
        }
        self.config = config;
        let mut uris: Vec<String> = self.documents.keys().cloned().collect();
        uris.sort();
        let mut out = Vec::new();
        for key in uris {
            if let Some(doc) = self.documents.get_mut(&key) {
                doc.reanalyze(&self.config);
            }
            if let Some(uri) = uri(&key) {
                out.extend(self.publish(&uri));
            }
        }
        out
    }

    fn publish(&self, uri: &Uri) -> Vec<Notification> {
        let Some(doc) = self.documents.get(uri.as_str()) else {
            return Vec::new();
        };
        let params = PublishDiagnosticsParams {
            uri: uri.clone(),
            diagnostics: features::diagnostics(doc, &self.docs),
            version: Some(doc.version),
        };
        vec![Notification::new(PublishDiagnostics::METHOD.into(), params)]
    }
}

fn parse<P: serde::de::DeserializeOwned>(req: Request) -> Result<P, (ErrorCode, String)> {
    serde_json::from_value(req.params).map_err(|e| (ErrorCode::InvalidParams, e.to_string()))
}

/// The first workspace folder (or the root URI) as a local path.
fn workspace_root(init: &InitializeParams) -> Option<PathBuf> {
    let uri = init
        .workspace_folders
        .as_ref()
        .and_then(|f| f.first())
        .map(|f| f.uri.clone());
    #[allow(deprecated)] // `root_uri` is still what many clients send.
    let uri = uri.or_else(|| init.root_uri.clone())?;
    file_path(uri.as_str())
}

/// A `file://` URI as a path (percent-decoded), or `None` for other schemes.
pub fn file_path(uri: &str) -> Option<PathBuf> {
    let rest = uri.strip_prefix("file://")?;
    let bytes = rest.as_bytes();
    let mut out = Vec::with_capacity(bytes.len());
    let mut i = 0;
    while i < bytes.len() {
        if bytes[i] == b'%' && i + 2 < bytes.len() {
            if let (Some(h), Some(l)) = (hex(bytes[i + 1]), hex(bytes[i + 2])) {
                out.push(h * 16 + l);
                i += 3;
                continue;
            }
        }
        out.push(bytes[i]);
        i += 1;
    }
    String::from_utf8(out).ok().map(PathBuf::from)
}

fn hex(b: u8) -> Option<u8> {
    (b as char).to_digit(16).map(|d| d as u8)
}

/// A path as a `file://` URI, percent-encoding everything but unreserved bytes and `/`.
pub fn file_uri(path: &Path) -> String {
    let mut s = String::from("file://");
    for b in path.to_string_lossy().bytes() {
        if b.is_ascii_alphanumeric() || b"-._~/".contains(&b) {
            s.push(b as char);
        } else {
            s.push_str(&format!("%{b:02X}"));
        }
    }
    s
}

/// Parse a URI string the way the protocol types do (for tests and callers).
pub fn uri(s: &str) -> Option<Uri> {
    Uri::from_str(s).ok()
}

#[cfg(test)]
mod tests {
    use super::*;
    use lsp_types::{ClientCapabilities, InitializedParams};
    use serde_json::json;

    #[test]
    fn file_uris_round_trip_with_non_ascii() {
        let p = Path::new("/tmp/notes µ/ward 1.txt");
        let u = file_uri(p);
        assert_eq!(u, "file:///tmp/notes%20%C2%B5/ward%201.txt");
        assert_eq!(file_path(&u).unwrap(), p);
        assert!(file_path("untitled:1").is_none());
        assert!(uri(&u).is_some());
    }

    #[test]
    fn initialization_options_configure_and_report_unknown_keys() {
        let init = InitializeParams {
            initialization_options: Some(json!({
                "date_order": "mdy",
                "rulesDocUrl": "https://example.invalid/rules",
                "colour": "blue",
            })),
            capabilities: ClientCapabilities::default(),
            ..InitializeParams::default()
        };
        let s = Server::from_init(&init);
        assert_eq!(s.config.extract.date_order, crate::config::DateOrder::Mdy);
        assert_eq!(
            s.docs.base.as_deref(),
            Some("https://example.invalid/rules")
        );
        assert_eq!(s.pending_logs.len(), 1);
        assert!(s.pending_logs[0].contains("colour"));
    }

    #[test]
    fn the_workspace_tidemark_toml_is_layered_under_the_client_options() {
        let dir = std::env::temp_dir().join(format!("tidemark-lsp-cfg-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(
            dir.join("tidemark.toml"),
            "[locale]\ndate-order = \"mdy\"\n[lint.rules]\nunit-missing = \"off\"\n",
        )
        .unwrap();
        #[allow(deprecated)]
        let init = InitializeParams {
            root_uri: uri(&file_uri(&dir)),
            initialization_options: Some(json!({"date_order": "dmy"})),
            ..InitializeParams::default()
        };
        let s = Server::from_init(&init);
        // The project file switched the rule off; the client's option overrode the date order.
        assert!(!s.config.lint.rule("unit-missing").enabled);
        assert_eq!(s.config.extract.date_order, crate::config::DateOrder::Dmy);
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn changed_settings_reconfigure_and_republish_open_documents() {
        let mut s = Server::from_init(&InitializeParams::default());
        let open = |uri: &str| {
            Notification::new(
                DidOpenTextDocument::METHOD.into(),
                json!({"textDocument": {"uri": uri, "languageId": "plaintext",
                                        "version": 1, "text": "Wt 82.4"}}),
            )
        };
        assert_eq!(s.notification(open("file:///a.txt")).len(), 1);
        assert_eq!(s.notification(open("file:///b.txt")).len(), 1);
        let change = Notification::new(
            DidChangeConfiguration::METHOD.into(),
            json!({"settings": {"tidemark": {"unit_system": "us"}}}),
        );
        let out = s.notification(change);
        assert_eq!(out.len(), 2);
        assert_eq!(out[0].params["uri"], "file:///a.txt");
        assert_eq!(s.config.extract.unit_system, crate::config::UnitSystem::Us);
        // A bad value leaves the configuration as it was and publishes nothing.
        let bad = Notification::new(
            DidChangeConfiguration::METHOD.into(),
            json!({"settings": {"unit_system": 5}}),
        );
        assert!(s.notification(bad).is_empty());
        assert_eq!(s.config.extract.unit_system, crate::config::UnitSystem::Us);
    }

    #[test]
    fn handle_answers_each_request_once_without_a_connection() {
        let mut s = Server::from_init_params(
            json!({"capabilities": {}, "initializationOptions": {"colour": 1}}),
        );
        let logs = s.startup_messages();
        assert_eq!(logs.len(), 1);
        assert!(s.startup_messages().is_empty());
        let open = Message::Notification(Notification::new(
            DidOpenTextDocument::METHOD.into(),
            json!({"textDocument": {"uri": "file:///a.txt", "languageId": "plaintext",
                                    "version": 3, "text": "Wt 82.4"}}),
        ));
        let out = s.handle(open);
        assert_eq!(out.len(), 1);
        let Message::Notification(n) = &out[0] else {
            panic!("notification expected")
        };
        assert_eq!(n.method, PublishDiagnostics::METHOD);
        assert_eq!(n.params["version"], 3);
        let hover = Message::Request(Request::new(
            7.into(),
            HoverRequest::METHOD.into(),
            json!({"textDocument": {"uri": "file:///a.txt"}, "position": "nowhere"}),
        ));
        let out = s.handle(hover);
        let [Message::Response(r)] = &out[..] else {
            panic!("one response expected")
        };
        assert_eq!(r.id, 7.into());
        assert_eq!(
            r.response_result.as_ref().unwrap_err().code,
            ErrorCode::InvalidParams as i32
        );
        let from_client = Message::Response(Response::new_ok(1.into(), Value::Null));
        assert!(s.handle(from_client).is_empty());
    }

    /// A whole session over an in-memory connection: initialize, open, change, hover,
    /// unknown method, shutdown, exit.
    #[test]
    fn in_memory_session_publishes_and_shuts_down() {
        let (server_side, client) = Connection::memory();
        let handle = std::thread::spawn(move || serve(&server_side));
        let send_req = |id: i32, method: &str, params: Value| {
            client
                .sender
                .send(Message::Request(Request::new(
                    id.into(),
                    method.into(),
                    params,
                )))
                .unwrap();
        };
        let send_note = |method: &str, params: Value| {
            client
                .sender
                .send(Message::Notification(Notification::new(
                    method.into(),
                    params,
                )))
                .unwrap();
        };
        send_req(1, "initialize", json!({"capabilities": {}}));
        let Message::Response(r) = client.receiver.recv().unwrap() else {
            panic!("response expected")
        };
        let caps = r.response_result.unwrap();
        assert_eq!(caps["capabilities"]["positionEncoding"], "utf-16");
        assert_eq!(caps["capabilities"]["textDocumentSync"]["change"], 2);
        send_note(
            "initialized",
            serde_json::to_value(InitializedParams {}).unwrap(),
        );
        let uri = "file:///tmp/n%C2%B5.txt";
        send_note(
            "textDocument/didOpen",
            json!({"textDocument": {"uri": uri, "languageId": "plaintext", "version": 1,
                                    "text": "Wt 82.4 😀\n"}}),
        );
        let Message::Notification(n) = client.receiver.recv().unwrap() else {
            panic!("notification expected")
        };
        assert_eq!(n.method, "textDocument/publishDiagnostics");
        assert_eq!(n.params["uri"], uri);
        assert_eq!(n.params["version"], 1);
        send_note(
            "textDocument/didChange",
            json!({"textDocument": {"uri": uri, "version": 2},
                   "contentChanges": [{"range": {"start": {"line": 0, "character": 7},
                                                 "end": {"line": 0, "character": 7}},
                                       "text": " kg"}]}),
        );
        let Message::Notification(n) = client.receiver.recv().unwrap() else {
            panic!("notification expected")
        };
        assert_eq!(n.params["version"], 2);
        send_req(
            2,
            "textDocument/hover",
            json!({"textDocument": {"uri": uri}, "position": {"line": 0, "character": 1}}),
        );
        let Message::Response(r) = client.receiver.recv().unwrap() else {
            panic!("response expected")
        };
        assert!(r.response_result.is_ok());
        send_req(3, "tidemark/unknown", json!({}));
        let Message::Response(r) = client.receiver.recv().unwrap() else {
            panic!("response expected")
        };
        assert_eq!(
            r.response_result.unwrap_err().code,
            ErrorCode::MethodNotFound as i32
        );
        send_req(4, "shutdown", Value::Null);
        let Message::Response(r) = client.receiver.recv().unwrap() else {
            panic!("response expected")
        };
        assert_eq!(r.id, 4.into());
        send_note("exit", Value::Null);
        assert!(handle.join().unwrap().is_ok());
    }
}
