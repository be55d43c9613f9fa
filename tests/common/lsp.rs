//! A small language-server client for the protocol tests: starts
//! `ohmsheet lsp` as a child process, frames JSON-RPC messages on its
//! standard input, and reads its answers on a thread of its own, so every
//! wait has a deadline (a server that hangs fails the test, it does not
//! hang it).

use std::io::{BufRead, BufReader, Write};
use std::path::Path;
use std::process::{Child, ChildStdin, Command, Stdio};
use std::sync::mpsc::{channel, Receiver, RecvTimeoutError};
use std::time::{Duration, Instant};

use serde_json::{json, Value};

/// The longest wait for one answer.
pub const WAIT: Duration = Duration::from_secs(60);

pub struct Client {
    child: Child,
    stdin: Option<ChildStdin>,
    rx: Receiver<Value>,
    next_id: i64,
    /// Notifications and server requests received while waiting for
    /// something else, oldest first.
    pub seen: Vec<Value>,
    /// The answer to `initialize`.
    pub init: Value,
}

/// The `file:` URI of a path (the tests' paths need no escapes beyond
/// spaces).
pub fn uri(path: &Path) -> String {
    format!("file://{}", path.display().to_string().replace(' ', "%20"))
}

fn read_message(r: &mut impl BufRead) -> Option<Value> {
    let mut len = None;
    loop {
        let mut line = String::new();
        if r.read_line(&mut line).ok()? == 0 {
            return None;
        }
        let line = line.trim_end();
        if line.is_empty() {
            break;
        }
        if let Some(v) = line.strip_prefix("Content-Length: ") {
            len = v.parse::<usize>().ok();
        }
    }
    let mut buf = vec![0; len?];
    r.read_exact(&mut buf).ok()?;
    serde_json::from_slice(&buf).ok()
}

impl Client {
    /// Start the server in `dir` and initialize it with these options.
    pub fn start(dir: &Path, init_options: Value) -> Client {
        Client::start_with(dir, &[], init_options)
    }

    pub fn start_with(dir: &Path, args: &[&str], init_options: Value) -> Client {
        let caps = json!({
            "workspace": {"inlayHint": {"refreshSupport": false}},
            "textDocument": {"inlayHint": {}, "hover": {"contentFormat": ["markdown", "plaintext"]}}
        });
        Client::start_caps(dir, args, caps, init_options)
    }

    /// Start with these client capabilities.
    pub fn start_caps(dir: &Path, args: &[&str], caps: Value, init_options: Value) -> Client {
        Client::spawn(dir, args, caps, init_options, Stdio::inherit())
    }

    /// Start with the server's standard error written to the file `log`
    /// (to read what it said there, e.g. that a handler panicked).
    pub fn start_logged(dir: &Path, args: &[&str], init_options: Value, log: &Path) -> Client {
        let caps = json!({
            "workspace": {"inlayHint": {"refreshSupport": false}},
            "textDocument": {"inlayHint": {}, "hover": {"contentFormat": ["markdown", "plaintext"]}}
        });
        let file = std::fs::File::create(log).expect("a log file");
        Client::spawn(dir, args, caps, init_options, Stdio::from(file))
    }

    fn spawn(dir: &Path, args: &[&str], caps: Value, init_options: Value, stderr: Stdio) -> Client {
        let bin = assert_cmd::cargo::cargo_bin("ohmsheet");
        let mut child = Command::new(bin)
            .arg("lsp")
            .args(args)
            .current_dir(dir)
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(stderr)
            .spawn()
            .expect("ohmsheet lsp starts");
        let stdout = child.stdout.take().expect("stdout");
        let (tx, rx) = channel();
        std::thread::spawn(move || {
            let mut r = BufReader::new(stdout);
            while let Some(v) = read_message(&mut r) {
                if tx.send(v).is_err() {
                    break;
                }
            }
        });
        let stdin = child.stdin.take();
        let mut c = Client {
            child,
            stdin,
            rx,
            next_id: 0,
            seen: Vec::new(),
            init: Value::Null,
        };
        let r = c.request(
            "initialize",
            json!({"processId": null, "rootUri": uri(dir), "capabilities": caps, "initializationOptions": init_options}),
        );
        assert!(r.get("result").is_some(), "initialize answered: {r}");
        c.init = r["result"].clone();
        c.notify("initialized", json!({}));
        c
    }

    pub fn send(&mut self, msg: &Value) {
        let body = serde_json::to_vec(msg).expect("json");
        let stdin = self.stdin.as_mut().expect("server input open");
        stdin
            .write_all(format!("Content-Length: {}\r\n\r\n", body.len()).as_bytes())
            .and_then(|()| stdin.write_all(&body))
            .and_then(|()| stdin.flush())
            .expect("write to server");
    }

    pub fn notify(&mut self, method: &str, params: Value) {
        self.send(&json!({"jsonrpc": "2.0", "method": method, "params": params}));
    }

    /// Send a request without waiting; its id.
    pub fn send_request(&mut self, method: &str, params: Value) -> i64 {
        self.next_id += 1;
        let id = self.next_id;
        self.send(&json!({"jsonrpc": "2.0", "id": id, "method": method, "params": params}));
        id
    }

    /// The next message from the server, within `WAIT`.
    fn next(&mut self, deadline: Instant) -> Value {
        match self.rx.recv_timeout(deadline.saturating_duration_since(Instant::now())) {
            Ok(v) => v,
            Err(RecvTimeoutError::Timeout) => {
                panic!("no answer from the server within {WAIT:?}; seen: {:?}", self.seen)
            }
            Err(RecvTimeoutError::Disconnected) => panic!("the server closed its output; seen: {:?}", self.seen),
        }
    }

    /// The whole response (with `result` or `error`) to request `id`.
    pub fn response(&mut self, id: i64) -> Value {
        let deadline = Instant::now() + WAIT;
        if let Some(k) = self
            .seen
            .iter()
            .position(|m| m["id"] == json!(id) && m.get("method").is_none())
        {
            return self.seen.remove(k);
        }
        loop {
            let m = self.next(deadline);
            if m["id"] == json!(id) && m.get("method").is_none() {
                return m;
            }
            self.seen.push(m);
        }
    }

    /// Send a request and wait for its whole response.
    pub fn request(&mut self, method: &str, params: Value) -> Value {
        let id = self.send_request(method, params);
        self.response(id)
    }

    /// Send a request and return its `result` (panics on an error answer).
    pub fn call(&mut self, method: &str, params: Value) -> Value {
        let r = self.request(method, params);
        assert!(r.get("error").is_none(), "{method} answered an error: {r}");
        r["result"].clone()
    }

    /// The next notification `method` that satisfies `pred` (earlier ones
    /// already received count too, and are consumed).
    pub fn wait_for(&mut self, method: &str, pred: impl Fn(&Value) -> bool) -> Value {
        let deadline = Instant::now() + WAIT;
        if let Some(k) = self
            .seen
            .iter()
            .position(|m| m["method"] == method && pred(&m["params"]))
        {
            return self.seen.remove(k)["params"].clone();
        }
        loop {
            let m = self.next(deadline);
            if m["method"] == method && pred(&m["params"]) {
                return m["params"].clone();
            }
            self.seen.push(m);
        }
    }

    /// The params of the next request the server sends with `method`.
    pub fn wait_for_request(&mut self, method: &str) -> Value {
        let deadline = Instant::now() + WAIT;
        let is = |m: &Value| m["method"] == method && m.get("id").is_some();
        if let Some(k) = self.seen.iter().position(is) {
            return self.seen.remove(k)["params"].clone();
        }
        loop {
            let m = self.next(deadline);
            if is(&m) {
                return m["params"].clone();
            }
            self.seen.push(m);
        }
    }

    /// The diagnostics published for `uri` at document version `version`.
    pub fn diagnostics(&mut self, uri: &str, version: i64) -> Vec<Value> {
        let p = self.wait_for("textDocument/publishDiagnostics", |p| {
            p["uri"] == uri && p["version"] == json!(version)
        });
        p["diagnostics"].as_array().cloned().unwrap_or_default()
    }

    /// The diagnostics published next for `uri` (any version).
    pub fn diagnostics_any(&mut self, uri: &str) -> Vec<Value> {
        let p = self.wait_for("textDocument/publishDiagnostics", |p| p["uri"] == uri);
        p["diagnostics"].as_array().cloned().unwrap_or_default()
    }

    pub fn open(&mut self, uri: &str, text: &str) {
        self.notify(
            "textDocument/didOpen",
            json!({"textDocument": {"uri": uri, "languageId": "ohmsheet", "version": 1, "text": text}}),
        );
    }

    /// Replace the text between two positions (line, UTF-16 column).
    pub fn edit(&mut self, uri: &str, version: i64, from: (u32, u32), to: (u32, u32), text: &str) {
        self.notify(
            "textDocument/didChange",
            json!({
                "textDocument": {"uri": uri, "version": version},
                "contentChanges": [{
                    "range": {"start": {"line": from.0, "character": from.1}, "end": {"line": to.0, "character": to.1}},
                    "text": text
                }]
            }),
        );
    }

    /// The inlay hints of lines `first..=last`.
    pub fn inlay_hints(&mut self, uri: &str, first: u32, last: u32) -> Vec<Value> {
        let r = self.call(
            "textDocument/inlayHint",
            json!({"textDocument": {"uri": uri}, "range": {"start": {"line": first, "character": 0}, "end": {"line": last, "character": 0}}}),
        );
        r.as_array().cloned().unwrap_or_default()
    }

    /// A request at a position of a document (`textDocument/hover`,
    /// `textDocument/definition`, …); its result.
    pub fn at(&mut self, method: &str, uri: &str, line: u32, character: u32) -> Value {
        self.call(
            method,
            json!({"textDocument": {"uri": uri}, "position": {"line": line, "character": character}}),
        )
    }

    /// The hover text at a position ("" when there is none).
    pub fn hover(&mut self, uri: &str, line: u32, character: u32) -> String {
        let r = self.at("textDocument/hover", uri, line, character);
        match &r["contents"] {
            Value::Object(o) => o.get("value").and_then(Value::as_str).unwrap_or("").to_string(),
            Value::String(s) => s.clone(),
            _ => String::new(),
        }
    }

    /// Every reference to the name at a position, as (uri, line, start
    /// character, end character).
    pub fn references(
        &mut self,
        uri: &str,
        line: u32,
        character: u32,
        declaration: bool,
    ) -> Vec<(String, u64, u64, u64)> {
        let r = self.call(
            "textDocument/references",
            json!({"textDocument": {"uri": uri}, "position": {"line": line, "character": character},
                   "context": {"includeDeclaration": declaration}}),
        );
        let mut v: Vec<(String, u64, u64, u64)> = r
            .as_array()
            .cloned()
            .unwrap_or_default()
            .iter()
            .map(|l| {
                (
                    l["uri"].as_str().unwrap_or("").to_string(),
                    l["range"]["start"]["line"].as_u64().unwrap_or(0),
                    l["range"]["start"]["character"].as_u64().unwrap_or(0),
                    l["range"]["end"]["character"].as_u64().unwrap_or(0),
                )
            })
            .collect();
        v.sort();
        v
    }

    /// `shutdown` then `exit`; the server's exit status.
    pub fn shutdown(mut self) -> Option<i32> {
        let r = self.request("shutdown", Value::Null);
        assert!(r.get("error").is_none(), "shutdown answered: {r}");
        self.notify("exit", Value::Null);
        self.stdin.take();
        self.wait_exit()
    }

    /// Wait (up to `WAIT`) for the server to end; its exit status.
    pub fn wait_exit(&mut self) -> Option<i32> {
        let deadline = Instant::now() + WAIT;
        loop {
            if let Ok(Some(s)) = self.child.try_wait() {
                return s.code();
            }
            if Instant::now() > deadline {
                let _ = self.child.kill();
                panic!("the server did not exit within {WAIT:?}");
            }
            std::thread::sleep(Duration::from_millis(20));
        }
    }

    /// Close the server's input without `exit`.
    pub fn close_input(&mut self) {
        self.stdin.take();
    }
}

impl Drop for Client {
    fn drop(&mut self) {
        if let Ok(None) = self.child.try_wait() {
            let _ = self.child.kill();
            let _ = self.child.wait();
        }
    }
}

/// The label text of an inlay hint (leading alignment spaces removed).
pub fn hint_label(h: &Value) -> String {
    match &h["label"] {
        Value::String(s) => s.trim_start().to_string(),
        Value::Array(parts) => parts
            .iter()
            .filter_map(|p| p["value"].as_str())
            .collect::<String>()
            .trim_start()
            .to_string(),
        _ => String::new(),
    }
}
