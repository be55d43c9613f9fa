//! `ohmsheet lsp`: a language server over standard input and output.
//!
//! This module only translates: it keeps the open documents (each an
//! `analysis::Document`, which owns the engine and does every analysis),
//! turns protocol positions (line, UTF-16 unit) into byte offsets and
//! back, states the capabilities, and dispatches each message. One file
//! per family of requests:
//! - `mod.rs`: the loop, documents, settings, dispatch, cancellation;
//! - `convert.rs`: positions, ranges, `file:` URIs;
//! - `diagnostics.rs`: problems published on open and on every change;
//! - `hints.rs`: inlay hints (values and check verdicts);
//! - `hover.rs`: hover on cells, functions, units, directives;
//! - `navigate.rs`: go to definition, find references;
//! - `complete.rs`: completion and signature help;
//! - `rename.rs`: rename (and prepare rename);
//! - `outline.rs`: document symbols;
//! - `actions.rs`: code actions (the diagnostics' repairs);
//! - `tokens.rs`: semantic tokens.
//!
//! The server is synchronous (one thread does the analysis; the protocol
//! crate reads and writes on two more). It never writes a file, never
//! panics through to the editor (a handler that panics answers with an
//! internal error and the document is rebuilt from its text), answers
//! `shutdown`, and leaves on `exit` (status 0 after a shutdown, 1 without).

use std::collections::{HashMap, VecDeque};
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};

use lsp_server::{Connection, ErrorCode, Message, Notification, Request, RequestId, Response};
use lsp_types::notification::Notification as _;
use lsp_types::request::Request as _;
use lsp_types::{
    notification, request, InitializeParams, PositionEncodingKind, ServerCapabilities, TextDocumentContentChangeEvent,
    TextDocumentSyncCapability, TextDocumentSyncKind, Uri,
};
use serde_json::Value;

use crate::analysis::{Display, Document};
use crate::sheet::LoadOptions;

pub mod actions;
pub mod complete;
pub mod convert;
pub mod diagnostics;
pub mod hints;
pub mod hover;
pub mod navigate;
pub mod outline;
pub mod rename;
pub mod tokens;

/// An open document.
pub struct Open {
    pub uri: Uri,
    pub version: i32,
    /// The canonical path of its file (what `@include` lines resolve to).
    pub canonical: Option<PathBuf>,
    pub doc: Document,
    /// Files other than this one its last diagnostics were published for
    /// (included sheets), to clear them when they have none.
    pub published_elsewhere: Vec<Uri>,
}

pub struct Server {
    pub docs: HashMap<String, Open>,
    pub display: Display,
    pub allow_dirs: Vec<PathBuf>,
    /// The client refreshes inlay hints when asked to.
    inlay_refresh: bool,
    shutdown: bool,
    next_id: i32,
    out: Vec<Message>,
}

/// Settings an editor may send (as `initializationOptions`, or under
/// `ohmsheet` in `workspace/didChangeConfiguration`): `complex` is `rect`
/// or `polar`, `digits` the significant digits (1 to 15).
pub fn read_settings(v: &Value, display: &mut Display) {
    let v = v.get("ohmsheet").unwrap_or(v);
    match v.get("complex").and_then(Value::as_str) {
        Some("polar") => display.polar = true,
        Some("rect") => display.polar = false,
        _ => {}
    }
    if let Some(d) = v.get("digits").and_then(Value::as_u64) {
        display.style.digits = d.clamp(1, 15) as usize;
    }
}

pub fn capabilities() -> ServerCapabilities {
    ServerCapabilities {
        position_encoding: Some(PositionEncodingKind::UTF16),
        text_document_sync: Some(TextDocumentSyncCapability::Kind(TextDocumentSyncKind::INCREMENTAL)),
        inlay_hint_provider: Some(lsp_types::OneOf::Left(true)),
        hover_provider: Some(lsp_types::HoverProviderCapability::Simple(true)),
        definition_provider: Some(lsp_types::OneOf::Left(true)),
        references_provider: Some(lsp_types::OneOf::Left(true)),
        completion_provider: Some(complete::completion_options()),
        signature_help_provider: Some(complete::signature_options()),
        rename_provider: Some(lsp_types::OneOf::Right(lsp_types::RenameOptions {
            prepare_provider: Some(true),
            work_done_progress_options: Default::default(),
        })),
        document_symbol_provider: Some(lsp_types::OneOf::Left(true)),
        code_action_provider: Some(lsp_types::CodeActionProviderCapability::Options(
            lsp_types::CodeActionOptions {
                code_action_kinds: Some(vec![lsp_types::CodeActionKind::QUICKFIX]),
                ..Default::default()
            },
        )),
        semantic_tokens_provider: Some(tokens::options()),
        ..ServerCapabilities::default()
    }
}

/// Run the server on standard input and output; the process's exit status.
pub fn run(allow_dirs: Vec<PathBuf>) -> i32 {
    let (connection, io) = Connection::stdio();
    let code = serve(&connection, allow_dirs);
    drop(connection);
    let _ = io.join();
    code
}

/// Serve one connection until `exit` (or the client goes away).
pub fn serve(connection: &Connection, allow_dirs: Vec<PathBuf>) -> i32 {
    let (id, params) = match connection.initialize_start() {
        Ok(x) => x,
        Err(e) => {
            eprintln!("ohmsheet lsp: {e}");
            return 1;
        }
    };
    let params: InitializeParams = serde_json::from_value(params).unwrap_or_default();
    let mut server = Server {
        docs: HashMap::new(),
        display: Display::default(),
        allow_dirs,
        inlay_refresh: params
            .capabilities
            .workspace
            .as_ref()
            .and_then(|w| w.inlay_hint.as_ref())
            .and_then(|i| i.refresh_support)
            .unwrap_or(false),
        shutdown: false,
        next_id: 0,
        out: Vec::new(),
    };
    if let Some(o) = &params.initialization_options {
        read_settings(o, &mut server.display);
    }
    let result = serde_json::json!({
        "capabilities": capabilities(),
        "serverInfo": {"name": "ohmsheet", "version": env!("CARGO_PKG_VERSION")},
    });
    if let Err(e) = connection.initialize_finish(id, result) {
        eprintln!("ohmsheet lsp: {e}");
        return 1;
    }
    // Sheets saved by another program (a library sheet not open in the
    // editor): the client tells, when it can watch files for the server.
    let watch = params
        .capabilities
        .workspace
        .as_ref()
        .and_then(|w| w.did_change_watched_files.as_ref())
        .and_then(|d| d.dynamic_registration)
        .unwrap_or(false);
    if watch {
        let register = lsp_types::RegistrationParams {
            registrations: vec![lsp_types::Registration {
                id: "ohmsheet-sheets".into(),
                method: notification::DidChangeWatchedFiles::METHOD.into(),
                register_options: serde_json::to_value(lsp_types::DidChangeWatchedFilesRegistrationOptions {
                    watchers: vec![lsp_types::FileSystemWatcher {
                        glob_pattern: lsp_types::GlobPattern::String("**/*.ohm".into()),
                        kind: None,
                    }],
                })
                .ok(),
            }],
        };
        let req = Request::new(
            RequestId::from("ohmsheet-watch".to_string()),
            request::RegisterCapability::METHOD.to_string(),
            register,
        );
        if connection.sender.send(req.into()).is_err() {
            return 1;
        }
    }
    server.main_loop(connection)
}

impl Server {
    fn main_loop(&mut self, connection: &Connection) -> i32 {
        // lsp-server hands messages over one at a time (its channel holds
        // none): a thread of our own queues them as they arrive, so a
        // `$/cancelRequest` sent while the server was busy is in the queue
        // before the request it cancels is started.
        let (tx, rx) = std::sync::mpsc::channel();
        let receiver = connection.receiver.clone();
        let queue = std::thread::Builder::new()
            .name("ohmsheet-lsp-queue".into())
            .spawn(move || {
                for m in receiver {
                    let exit = matches!(&m, Message::Notification(n) if n.method == notification::Exit::METHOD);
                    if tx.send(m).is_err() || exit {
                        break;
                    }
                }
            });
        if let Err(e) = queue {
            eprintln!("ohmsheet lsp: {e}");
            return 1;
        }
        let mut pending: VecDeque<Message> = VecDeque::new();
        loop {
            let msg = match pending.pop_front() {
                Some(m) => m,
                None => match rx.recv() {
                    Ok(m) => m,
                    // The client went away without `exit`.
                    Err(_) => return 1,
                },
            };
            // What has arrived meanwhile: a cancellation of this request.
            while let Ok(m) = rx.try_recv() {
                pending.push_back(m);
            }
            match msg {
                Message::Request(req) => {
                    if take_cancel(&mut pending, &req.id) {
                        self.reply_err(req.id, ErrorCode::RequestCanceled, "cancelled".into());
                    } else {
                        self.request(req);
                    }
                }
                Message::Notification(n) if n.method == notification::Exit::METHOD => {
                    return if self.shutdown { 0 } else { 1 };
                }
                Message::Notification(n) => self.notification(n),
                Message::Response(_) => {}
            }
            for m in self.out.drain(..) {
                if connection.sender.send(m).is_err() {
                    return 1;
                }
            }
        }
    }

    pub fn send(&mut self, m: impl Into<Message>) {
        self.out.push(m.into());
    }

    fn reply_err(&mut self, id: RequestId, code: ErrorCode, text: String) {
        self.send(Response::new_err(id, code as i32, text));
    }

    pub fn notify<N: lsp_types::notification::Notification>(&mut self, params: N::Params) {
        self.send(Notification::new(N::METHOD.to_string(), params));
    }

    fn request(&mut self, req: Request) {
        if self.shutdown {
            return self.reply_err(req.id, ErrorCode::InvalidRequest, "the server is shutting down".into());
        }
        let id = req.id.clone();
        let method = req.method.clone();
        let answer = catch_unwind(AssertUnwindSafe(|| self.dispatch(req)));
        match answer {
            Ok(Ok(v)) => self.send(Response::new_ok(id, v)),
            Ok(Err((code, text))) => self.reply_err(id, code, text),
            Err(_) => self.reply_err(
                id,
                ErrorCode::InternalError,
                format!("internal error answering {method}"),
            ),
        }
    }

    /// A request's answer, or an error code and message.
    fn dispatch(&mut self, req: Request) -> Result<Value, (ErrorCode, String)> {
        match req.method.as_str() {
            request::Shutdown::METHOD => {
                self.shutdown = true;
                Ok(Value::Null)
            }
            request::InlayHintRequest::METHOD => {
                let p = params::<lsp_types::InlayHintParams>(req.params)?;
                Ok(serde_json::to_value(hints::inlay_hints(self, &p)).unwrap_or(Value::Null))
            }
            request::HoverRequest::METHOD => {
                let p = params::<lsp_types::HoverParams>(req.params)?;
                Ok(serde_json::to_value(hover::hover(self, &p)).unwrap_or(Value::Null))
            }
            request::GotoDefinition::METHOD => {
                let p = params::<lsp_types::GotoDefinitionParams>(req.params)?;
                Ok(serde_json::to_value(navigate::definition(self, &p)).unwrap_or(Value::Null))
            }
            request::References::METHOD => {
                let p = params::<lsp_types::ReferenceParams>(req.params)?;
                Ok(serde_json::to_value(navigate::references(self, &p)).unwrap_or(Value::Null))
            }
            request::Completion::METHOD => {
                let p = params::<lsp_types::CompletionParams>(req.params)?;
                Ok(serde_json::to_value(complete::completion(self, &p)).unwrap_or(Value::Null))
            }
            request::SignatureHelpRequest::METHOD => {
                let p = params::<lsp_types::SignatureHelpParams>(req.params)?;
                Ok(serde_json::to_value(complete::signature_help(self, &p)).unwrap_or(Value::Null))
            }
            request::PrepareRenameRequest::METHOD => {
                let p = params::<lsp_types::TextDocumentPositionParams>(req.params)?;
                Ok(serde_json::to_value(rename::prepare(self, &p)?).unwrap_or(Value::Null))
            }
            request::Rename::METHOD => {
                let p = params::<lsp_types::RenameParams>(req.params)?;
                Ok(serde_json::to_value(rename::rename(self, &p)?).unwrap_or(Value::Null))
            }
            request::DocumentSymbolRequest::METHOD => {
                let p = params::<lsp_types::DocumentSymbolParams>(req.params)?;
                Ok(serde_json::to_value(outline::symbols(self, &p)).unwrap_or(Value::Null))
            }
            request::CodeActionRequest::METHOD => {
                let p = params::<lsp_types::CodeActionParams>(req.params)?;
                Ok(serde_json::to_value(actions::code_actions(self, &p)).unwrap_or(Value::Null))
            }
            request::SemanticTokensFullRequest::METHOD => {
                let p = params::<lsp_types::SemanticTokensParams>(req.params)?;
                Ok(serde_json::to_value(tokens::full(self, &p)).unwrap_or(Value::Null))
            }
            _ => Err((
                ErrorCode::MethodNotFound,
                format!("ohmsheet does not answer {}", req.method),
            )),
        }
    }

    fn notification(&mut self, n: Notification) {
        let method = n.method.clone();
        let done = catch_unwind(AssertUnwindSafe(|| self.on_notification(n)));
        if done.is_err() {
            eprintln!("ohmsheet lsp: internal error handling {method}; documents rebuilt from their text");
            self.rebuild_all();
        }
    }

    fn on_notification(&mut self, n: Notification) {
        match n.method.as_str() {
            notification::DidOpenTextDocument::METHOD => {
                let Ok(p) = serde_json::from_value::<lsp_types::DidOpenTextDocumentParams>(n.params) else {
                    return;
                };
                self.open(p.text_document.uri, p.text_document.version, &p.text_document.text);
            }
            notification::DidChangeTextDocument::METHOD => {
                let Ok(p) = serde_json::from_value::<lsp_types::DidChangeTextDocumentParams>(n.params) else {
                    return;
                };
                self.change(&p.text_document.uri, p.text_document.version, &p.content_changes);
            }
            notification::DidCloseTextDocument::METHOD => {
                let Ok(p) = serde_json::from_value::<lsp_types::DidCloseTextDocumentParams>(n.params) else {
                    return;
                };
                self.close(&p.text_document.uri);
            }
            notification::DidChangeConfiguration::METHOD => {
                let Ok(p) = serde_json::from_value::<lsp_types::DidChangeConfigurationParams>(n.params) else {
                    return;
                };
                read_settings(&p.settings, &mut self.display);
                let keys: Vec<String> = self.docs.keys().cloned().collect();
                for k in keys {
                    diagnostics::publish(self, &k);
                }
                self.refresh_hints();
            }
            notification::DidChangeWatchedFiles::METHOD => {
                let Ok(p) = serde_json::from_value::<lsp_types::DidChangeWatchedFilesParams>(n.params) else {
                    return;
                };
                for ch in p.changes {
                    let Some(path) = convert::uri_to_path(&ch.uri) else {
                        continue;
                    };
                    let canonical = canonical_of(&path);
                    // An open buffer is what the others read, not the disk.
                    if self.docs.values().any(|o| o.canonical.as_ref() == Some(&canonical)) {
                        continue;
                    }
                    self.others_reading("", Some(&canonical));
                }
            }
            _ => {}
        }
    }

    /// The texts of the open documents, by canonical path, and the allowed
    /// folders: what includes are read from.
    /// (`except`: a document's own text is not among its buffers.)
    fn load_options(&self, except: &str) -> LoadOptions {
        LoadOptions {
            allow_dirs: self.allow_dirs.clone(),
            buffers: self
                .docs
                .iter()
                .filter(|(k, _)| k.as_str() != except)
                .filter_map(|(_, o)| Some((o.canonical.clone()?, o.doc.text().to_string())))
                .collect(),
        }
    }

    fn open(&mut self, uri: Uri, version: i32, text: &str) {
        let path = convert::uri_to_path(&uri);
        let canonical = path.as_deref().map(canonical_of);
        let key = uri.as_str().to_string();
        // Its own text is read as a buffer by the others, not by itself.
        let opts = self.load_options(&key);
        let doc = Document::open(path.as_deref(), text, opts);
        self.docs.insert(
            key.clone(),
            Open {
                uri,
                version,
                canonical: canonical.clone(),
                doc,
                published_elsewhere: Vec::new(),
            },
        );
        diagnostics::publish(self, &key);
        self.others_reading(&key, canonical.as_deref());
    }

    fn change(&mut self, uri: &Uri, version: i32, changes: &[TextDocumentContentChangeEvent]) {
        let key = uri.as_str().to_string();
        let Some(open) = self.docs.get_mut(&key) else { return };
        let mut text = open.doc.text().to_string();
        for c in changes {
            match c.range {
                Some(r) => {
                    let starts = convert::line_starts(&text);
                    let a = convert::offset(&text, &starts, r.start);
                    let b = convert::offset(&text, &starts, r.end).max(a);
                    text.replace_range(a..b, &c.text);
                }
                None => text = c.text.clone(),
            }
        }
        open.version = version;
        // The open buffers as they are now: a new `@include` line reads a
        // sheet opened since this one was.
        let opts = self.load_options(&key);
        let Some(open) = self.docs.get_mut(&key) else { return };
        open.doc.keep_options(opts);
        let updated = catch_unwind(AssertUnwindSafe(|| open.doc.update(&text)));
        if updated.is_err() {
            eprintln!("ohmsheet lsp: internal error applying an edit; the document is analysed again from its text");
            let path = convert::uri_to_path(uri);
            let opts = self.load_options(&key);
            let fresh = catch_unwind(AssertUnwindSafe(|| Document::open(path.as_deref(), &text, opts)));
            match fresh {
                Ok(d) => {
                    if let Some(o) = self.docs.get_mut(&key) {
                        o.doc = d;
                    }
                }
                Err(_) => {
                    self.docs.remove(&key);
                    return;
                }
            }
        }
        diagnostics::publish(self, &key);
        let canonical = self.docs.get(&key).and_then(|o| o.canonical.clone());
        self.others_reading(&key, canonical.as_deref());
    }

    fn close(&mut self, uri: &Uri) {
        let key = uri.as_str().to_string();
        let Some(open) = self.docs.remove(&key) else { return };
        // Its problems go with it.
        let mut uris = open.published_elsewhere.clone();
        uris.push(open.uri.clone());
        for u in uris {
            self.notify::<notification::PublishDiagnostics>(lsp_types::PublishDiagnosticsParams {
                uri: u,
                diagnostics: Vec::new(),
                version: None,
            });
        }
        // Sheets that include it read it from disk again.
        self.others_reading(&key, open.canonical.as_deref());
    }

    /// Documents other than `key` that read the file `canonical`: analysed
    /// again with its current text.
    fn others_reading(&mut self, key: &str, canonical: Option<&Path>) {
        let Some(canonical) = canonical else { return };
        let readers: Vec<String> = self
            .docs
            .iter()
            .filter(|(k, o)| k.as_str() != key && o.doc.reads(canonical))
            .map(|(k, _)| k.clone())
            .collect();
        if readers.is_empty() {
            return;
        }
        for k in &readers {
            let opts = self.load_options(k);
            if let Some(o) = self.docs.get_mut(k) {
                o.doc.set_options(opts);
            }
            diagnostics::publish(self, k);
        }
        self.refresh_hints();
    }

    /// Ask the client to fetch inlay hints again (values changed in a
    /// document it did not edit).
    fn refresh_hints(&mut self) {
        if self.inlay_refresh {
            self.next_id += 1;
            let id = RequestId::from(format!("ohmsheet-refresh-{}", self.next_id));
            self.send(Request::new(
                id,
                request::InlayHintRefreshRequest::METHOD.to_string(),
                (),
            ));
        }
    }

    fn rebuild_all(&mut self) {
        let keys: Vec<String> = self.docs.keys().cloned().collect();
        for k in keys {
            let opts = self.load_options(&k);
            let Some(o) = self.docs.get_mut(&k) else { continue };
            let path = convert::uri_to_path(&o.uri);
            let text = o.doc.text().to_string();
            match catch_unwind(AssertUnwindSafe(|| Document::open(path.as_deref(), &text, opts))) {
                Ok(d) => o.doc = d,
                Err(_) => {
                    self.docs.remove(&k);
                }
            }
        }
    }
}

/// Whether a `$/cancelRequest` for `id` is waiting; it is taken out.
pub fn take_cancel(pending: &mut VecDeque<Message>, id: &RequestId) -> bool {
    let at = pending.iter().position(|m| match m {
        Message::Notification(n) if n.method == notification::Cancel::METHOD => {
            serde_json::from_value::<lsp_types::CancelParams>(n.params.clone()).is_ok_and(|p| {
                let theirs = match p.id {
                    lsp_types::NumberOrString::Number(n) => RequestId::from(n),
                    lsp_types::NumberOrString::String(s) => RequestId::from(s),
                };
                &theirs == id
            })
        }
        _ => false,
    });
    at.map(|i| pending.remove(i)).is_some()
}

fn params<P: serde::de::DeserializeOwned>(v: Value) -> Result<P, (ErrorCode, String)> {
    serde_json::from_value(v).map_err(|e| (ErrorCode::InvalidParams, format!("bad parameters: {e}")))
}

/// A path made canonical when it exists (else its folder's, joined with
/// its name; else as given).
fn canonical_of(p: &Path) -> PathBuf {
    std::fs::canonicalize(p).unwrap_or_else(|_| {
        match (p.parent().and_then(|d| std::fs::canonicalize(d).ok()), p.file_name()) {
            (Some(d), Some(f)) => d.join(f),
            _ => p.to_path_buf(),
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    fn req(id: i32, method: &str, params: Value) -> Message {
        Request::new(RequestId::from(id), method.to_string(), params).into()
    }
    fn note(method: &str, params: Value) -> Message {
        Notification::new(method.to_string(), params).into()
    }

    /// A request cancelled before the server reached it is answered with
    /// `RequestCancelled` (-32800, LSP 3.17 "$/cancelRequest"); the next
    /// one is answered as usual. The messages are queued before the server
    /// starts, so the order is fixed.
    #[test]
    fn a_request_cancelled_while_queued_is_answered_cancelled() {
        let (server, client) = Connection::memory();
        let hint = json!({"textDocument": {"uri": "untitled:a"},
            "range": {"start": {"line": 0, "character": 0}, "end": {"line": 9, "character": 0}}});
        for m in [
            req(1, "initialize", json!({"capabilities": {}})),
            note("initialized", json!({})),
            note(
                "textDocument/didOpen",
                json!({"textDocument": {"uri": "untitled:a", "languageId": "ohmsheet", "version": 1, "text": "a = 2 V\n"}}),
            ),
            req(2, "textDocument/inlayHint", hint.clone()),
            note("$/cancelRequest", json!({"id": 2})),
            req(3, "textDocument/inlayHint", hint),
            req(4, "shutdown", Value::Null),
            note("exit", Value::Null),
        ] {
            client.sender.send(m).unwrap();
        }
        let code = serve(&server, Vec::new());
        assert_eq!(code, 0);
        let answers: Vec<Response> = client
            .receiver
            .try_iter()
            .filter_map(|m| match m {
                Message::Response(r) => Some(r),
                _ => None,
            })
            .collect();
        let of = |id: i32| answers.iter().find(|r| r.id == RequestId::from(id)).expect("answered");
        let code_of = |id: i32| of(id).response_result.as_ref().err().map(|e| e.code);
        assert_eq!(code_of(2), Some(ErrorCode::RequestCanceled as i32));
        let hints = of(3).response_result.clone().expect("hints");
        assert_eq!(hints.as_array().map(Vec::len), Some(1), "{hints}");
        assert_eq!(code_of(4), None);
    }
}
