//! Keystroke-to-answer latency of `ohmsheet lsp`, as an editor sees it.
//!
//! Run: `cargo bench --bench lsp_latency` (no harness; prints a table).
//! A scripted client starts the server as a child process and speaks the
//! protocol over its standard input and output, as an editor does. Each
//! keystroke is a `didChange` of one character (a digit of an input's
//! value, alternately typed and put back); the time runs until the
//! diagnostics for that version have arrived and the inlay hints of the
//! visible range (60 lines around the edit) have been answered. Sheets of
//! 1,000 and 10,000 lines (invented feeder sections, one in five lines a
//! comment or blank). The server's peak memory (VmHWM in /proc) is read
//! after each run. The last two rows are the same keystrokes in a sheet
//! with an error on its last line: a sheet with errors is compiled whole
//! on every change (src/analysis/document.rs), so they show that price.
//!
//! Targets (issue 17): median < 5 ms and 99th percentile < 20 ms at 1,000
//! lines; median < 50 ms at 10,000 lines; memory < 100 MB.

use std::io::{BufRead, BufReader, Write};
use std::process::{Child, ChildStdin, Command, Stdio};
use std::sync::mpsc::{channel, Receiver};
use std::time::{Duration, Instant};

use serde_json::{json, Value};

/// A sheet of `lines` lines: feeder sections of five cells behind one bus
/// voltage, with a heading comment and a blank line every few sections.
fn sheet(lines: usize) -> String {
    let mut s = String::from("# feeder sections (invented)\nV = 480 V ∠ 0°\n");
    let mut k = 0;
    while s.lines().count() + 7 <= lines {
        let r = 1.0 + (k % 17) as f64 * 0.25;
        let x = 0.5 + (k % 13) as f64 * 0.125;
        s.push_str(&format!(
            "# --- section {k} ---\nR{k} = {r:.3} Ω\nX{k} = j{x:.3} Ω\nZ{k} = R{k} + X{k}\nI{k} = V / Z{k}\nP{k} = re(V * conj(I{k}))\n\n"
        ));
        k += 1;
    }
    while s.lines().count() < lines {
        s.push_str("# end\n");
    }
    s
}

struct Server {
    child: Child,
    stdin: ChildStdin,
    rx: Receiver<Value>,
    next: i64,
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

impl Server {
    fn start() -> Server {
        let mut child = Command::new(env!("CARGO_BIN_EXE_ohmsheet"))
            .arg("lsp")
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::inherit())
            .spawn()
            .expect("ohmsheet lsp starts");
        let stdout = child.stdout.take().unwrap();
        let (tx, rx) = channel();
        std::thread::spawn(move || {
            let mut r = BufReader::new(stdout);
            while let Some(v) = read_message(&mut r) {
                if tx.send(v).is_err() {
                    break;
                }
            }
        });
        let stdin = child.stdin.take().unwrap();
        let mut s = Server {
            child,
            stdin,
            rx,
            next: 0,
        };
        let id = s.request("initialize", json!({"processId": null, "capabilities": {}}));
        s.wait(|m| m["id"] == id);
        s.notify("initialized", json!({}));
        s
    }

    fn send(&mut self, v: &Value) {
        let body = serde_json::to_vec(v).unwrap();
        write!(self.stdin, "Content-Length: {}\r\n\r\n", body.len()).unwrap();
        self.stdin.write_all(&body).unwrap();
        self.stdin.flush().unwrap();
    }

    fn notify(&mut self, method: &str, params: Value) {
        self.send(&json!({"jsonrpc": "2.0", "method": method, "params": params}));
    }

    fn request(&mut self, method: &str, params: Value) -> Value {
        self.next += 1;
        let id = json!(self.next);
        self.send(&json!({"jsonrpc": "2.0", "id": id, "method": method, "params": params}));
        id
    }

    fn wait(&mut self, pred: impl Fn(&Value) -> bool) -> Value {
        loop {
            let m = self
                .rx
                .recv_timeout(Duration::from_secs(120))
                .expect("the server answers");
            if pred(&m) {
                return m;
            }
        }
    }

    /// Peak resident memory of the server (VmHWM), in MiB.
    fn peak_mib(&self) -> f64 {
        let status = std::fs::read_to_string(format!("/proc/{}/status", self.child.id())).unwrap_or_default();
        status
            .lines()
            .find_map(|l| l.strip_prefix("VmHWM:"))
            .and_then(|v| v.trim().trim_end_matches("kB").trim().parse::<f64>().ok())
            .map_or(f64::NAN, |kb| kb / 1024.0)
    }

    fn stop(mut self) {
        let id = self.request("shutdown", Value::Null);
        self.wait(|m| m["id"] == id);
        self.notify("exit", Value::Null);
        let _ = self.child.wait();
    }
}

fn percentile(sorted: &[Duration], p: f64) -> Duration {
    let i = ((sorted.len() as f64 - 1.0) * p).round() as usize;
    sorted[i.min(sorted.len() - 1)]
}

fn ms(d: Duration) -> String {
    format!("{:.2} ms", d.as_secs_f64() * 1e3)
}

/// Keystrokes on the sheet of `lines` lines: (median, p99, open time,
/// peak MiB).
fn run(lines: usize, keystrokes: usize, broken: bool) -> (Duration, Duration, Duration, f64) {
    let mut text = sheet(lines);
    if broken {
        // The last line names a cell that does not exist.
        let cut = text.trim_end_matches('\n').rfind('\n').map_or(0, |i| i + 1);
        text.truncate(cut);
        text.push_str("Pall = P0 + Pnone\n");
    }
    // A sheet saved in a folder, as an editor opens it (a path that does
    // not exist would be an error, and every keystroke would then compile
    // the whole sheet).
    let dir = tempfile::tempdir().expect("a temporary folder");
    let path = dir.path().join("feeder.ohm");
    std::fs::write(&path, &text).expect("the sheet written");
    let uri = format!("file://{}", path.display());
    let uri = uri.as_str();
    let mut s = Server::start();
    let t = Instant::now();
    s.notify(
        "textDocument/didOpen",
        json!({"textDocument": {"uri": uri, "languageId": "ohmsheet", "version": 1, "text": text}}),
    );
    let d = s.wait(|m| m["method"] == "textDocument/publishDiagnostics" && m["params"]["version"] == 1);
    let open = t.elapsed();
    let problems = d["params"]["diagnostics"].as_array().map_or(0, Vec::len);
    assert_eq!(
        problems,
        usize::from(broken),
        "the sheet is sound, or has the one error: {d}"
    );
    // An input in the middle of the sheet: `R{k} = 1.250 Ω`, its last digit.
    let (line, col) = text
        .lines()
        .enumerate()
        .skip(lines / 2)
        .find(|(_, l)| l.starts_with('R'))
        .map(|(i, l)| (i, l.find(" Ω").unwrap() - 1))
        .unwrap();
    let original = &text.lines().nth(line).unwrap()[col..col + 1];
    let first = line.saturating_sub(30);
    let mut times = Vec::with_capacity(keystrokes);
    for k in 0..keystrokes {
        let version = k as i64 + 2;
        let digit = if k % 2 == 0 { "7" } else { original };
        let t = Instant::now();
        s.notify(
            "textDocument/didChange",
            json!({"textDocument": {"uri": uri, "version": version},
                   "contentChanges": [{"range": {"start": {"line": line, "character": col},
                                                 "end": {"line": line, "character": col + 1}},
                                       "text": digit}]}),
        );
        s.wait(|m| m["method"] == "textDocument/publishDiagnostics" && m["params"]["version"] == version);
        let id = s.request(
            "textDocument/inlayHint",
            json!({"textDocument": {"uri": uri},
                   "range": {"start": {"line": first, "character": 0}, "end": {"line": first + 60, "character": 0}}}),
        );
        let answer = s.wait(|m| m["id"] == id);
        times.push(t.elapsed());
        assert!(
            answer["result"].as_array().is_some_and(|a| !a.is_empty()),
            "hints answered: {answer}"
        );
    }
    let peak = s.peak_mib();
    s.stop();
    times.sort();
    (percentile(&times, 0.5), percentile(&times, 0.99), open, peak)
}

fn main() {
    if std::env::args().any(|a| a == "--list") {
        return;
    }
    println!("| sheet | keystrokes | median | p99 | open | server peak memory (VmHWM) |");
    println!("|---|---|---|---|---|---|");
    for (lines, n, broken) in [
        (1_000, 400, false),
        (10_000, 200, false),
        (1_000, 200, true),
        (10_000, 100, true),
    ] {
        let (med, p99, open, peak) = run(lines, n, broken);
        let what = if broken { ", an error elsewhere" } else { "" };
        println!(
            "| {lines} lines{what} | {n} | {} | {} | {} | {peak:.1} MiB |",
            ms(med),
            ms(p99),
            ms(open)
        );
    }
}
