//! `ohmsheet lsp` driven as a child process over standard input and
//! output, as an editor drives it (tests/common/lsp.rs is the client).
//!
//! Expected values come from outside the program: the 3-4-5 right
//! triangle (|3 + j4| = 5, atan(4/3) = 53.13°; Pythagoras, from memory),
//! |6 + j4| = √52 = 7.2111 (by hand), and the command line's own report of
//! the same sheet for codes and places (the issue asks for "the same code,
//! span and hint" as the command line).

use std::path::Path;

use serde_json::{json, Value};

use crate::common::lsp::{hint_label, uri, Client};
use crate::common::ohmsheet;

const SHEET: &str = "# a made-up test bench\n\
R = 3 Ω\n\
X = 4 Ω\n\
Z = R + j*X\n\
m = abs(Z)\n\
check m ~= 5 Ω +- 1%\n";

fn write(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    if let Some(parent) = p.parent() {
        std::fs::create_dir_all(parent).unwrap();
    }
    std::fs::write(&p, text).unwrap();
    uri(&p)
}

/// Hint labels by line.
fn labels(c: &mut Client, u: &str) -> Vec<(u64, String)> {
    c.inlay_hints(u, 0, 200)
        .iter()
        .map(|h| (h["position"]["line"].as_u64().unwrap(), hint_label(h)))
        .collect()
}

fn label_on(hints: &[(u64, String)], line: u64) -> Option<&str> {
    hints.iter().find(|(l, _)| *l == line).map(|(_, s)| s.as_str())
}

#[test]
fn initialize_states_what_the_server_does() {
    let dir = tempfile::tempdir().unwrap();
    let c = Client::start(dir.path(), json!({}));
    let caps = &c.init["capabilities"];
    // LSP 3.17: TextDocumentSyncKind.Incremental = 2; positions in UTF-16.
    assert_eq!(caps["textDocumentSync"], 2, "{caps}");
    assert_eq!(caps["positionEncoding"], "utf-16");
    assert_eq!(caps["inlayHintProvider"], true);
    assert_eq!(c.init["serverInfo"]["name"], "ohmsheet");
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn values_and_verdicts_appear_as_hints_and_follow_edits() {
    let dir = tempfile::tempdir().unwrap();
    let u = write(dir.path(), "bench.ohm", SHEET);
    let mut c = Client::start(dir.path(), json!({}));
    c.open(&u, SHEET);
    assert_eq!(c.diagnostics(&u, 1), Vec::<Value>::new());
    let h = labels(&mut c, &u);
    // |3 + j4| = 5 (3-4-5 triangle).
    assert_eq!(label_on(&h, 1), Some("⇒ 3 Ω"));
    assert_eq!(label_on(&h, 3), Some("⇒ 3 + j4 Ω"));
    assert_eq!(label_on(&h, 4), Some("⇒ 5 Ω"));
    assert!(label_on(&h, 5).unwrap().starts_with("✓ holds"), "{h:?}");
    assert_eq!(label_on(&h, 0), None, "a comment line has no hint");
    // Hints of one range start in one column.
    let hints = c.inlay_hints(&u, 0, 10);
    let cols: Vec<usize> = hints
        .iter()
        .map(|h| {
            let line = SHEET
                .lines()
                .nth(h["position"]["line"].as_u64().unwrap() as usize)
                .unwrap();
            let label = h["label"].as_str().unwrap();
            line.chars().count() + label.chars().take_while(|&ch| ch == ' ').count()
        })
        .collect();
    assert!(cols.windows(2).all(|w| w[0] == w[1]), "{cols:?}");

    // R = 3 Ω → R = 6 Ω: |6 + j4| = √52 = 7.211 Ω, and the check fails.
    c.edit(&u, 2, (1, 4), (1, 5), "6");
    let d = c.diagnostics(&u, 2);
    assert_eq!(d.len(), 1, "{d:?}");
    assert_eq!(d[0]["severity"], 2, "a failed check is a warning");
    assert_eq!(d[0]["range"]["start"]["line"], 5);
    let msg = d[0]["message"].as_str().unwrap();
    assert!(msg.contains("computed 7.211 Ω") && msg.contains("stated 5 Ω"), "{msg}");
    let h = labels(&mut c, &u);
    assert_eq!(label_on(&h, 4), Some("⇒ 7.211 Ω"));
    assert!(label_on(&h, 5).unwrap().starts_with("✗ FAILS"), "{h:?}");
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn an_error_is_reported_as_the_command_line_reports_it_and_hides_stale_values() {
    let dir = tempfile::tempdir().unwrap();
    let bad = "R = 3 Ω\nX = 4 Ω\nZ = R + j*Q\nm = abs(Z)\n";
    let u = write(dir.path(), "bad.ohm", bad);
    let out = ohmsheet()
        .current_dir(dir.path())
        .args(["run", "bad.ohm"])
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    // `error[unknown-name]: …` then `┌─ bad.ohm:3:11`.
    assert!(stderr.contains("error[unknown-name]"), "{stderr}");
    assert!(stderr.contains("bad.ohm:3:11"), "{stderr}");

    let mut c = Client::start(dir.path(), json!({}));
    c.open(&u, bad);
    let d = c.diagnostics(&u, 1);
    assert_eq!(d.len(), 1, "{d:?}");
    assert_eq!(d[0]["code"], "unknown-name");
    assert_eq!(d[0]["severity"], 1);
    // Line 3, column 11 (1-based) is line 2, character 10 (0-based).
    assert_eq!(d[0]["range"]["start"], json!({"line": 2, "character": 10}));
    assert_eq!(d[0]["range"]["end"], json!({"line": 2, "character": 11}));
    let hint = stderr
        .lines()
        .find_map(|l| l.trim().strip_prefix("= hint: "))
        .expect("the command line gives a hint");
    assert!(d[0]["message"].as_str().unwrap().contains(hint), "{d:?}");
    assert_eq!(d[0]["data"]["hint"], hint);

    // No value for the cell with the error, nor for the one using it.
    let h = labels(&mut c, &u);
    assert_eq!(label_on(&h, 0), Some("⇒ 3 Ω"));
    assert_eq!(label_on(&h, 2), None);
    assert_eq!(label_on(&h, 3), None);

    // Defining Q clears it: |3 + j4| = 5.
    c.edit(&u, 2, (2, 10), (2, 11), "X");
    assert_eq!(c.diagnostics(&u, 2), Vec::<Value>::new());
    let h = labels(&mut c, &u);
    assert_eq!(label_on(&h, 3), Some("⇒ 5 Ω"));
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn positions_count_utf16_units_past_angle_signs_and_emoji() {
    let dir = tempfile::tempdir().unwrap();
    // 😀 is a surrogate pair in UTF-16; ∠, Ω and µ are one unit each.
    let text = "Vs = 10 V ∠ 0° # 😀 source\nZ = 5 Ω # µ 😀\nI = Vs / Z\n";
    let u = write(dir.path(), "u.ohm", text);
    let mut c = Client::start(dir.path(), json!({}));
    c.open(&u, text);
    assert_eq!(c.diagnostics(&u, 1), Vec::<Value>::new());
    // Ohm's law: 10 V / 5 Ω = 2 A.
    assert_eq!(label_on(&labels(&mut c, &u), 2), Some("⇒ 2 A"));
    // `Z = 5 Ω # µ 😀` is 14 UTF-16 units (the emoji counts two): append
    // at the end of the comment, then change 5 to 4 (unit 4).
    c.edit(&u, 2, (1, 14), (1, 14), " ok");
    assert_eq!(c.diagnostics(&u, 2), Vec::<Value>::new());
    c.edit(&u, 3, (1, 4), (1, 5), "4");
    assert_eq!(c.diagnostics(&u, 3), Vec::<Value>::new());
    // 10 V / 4 Ω = 2.5 A.
    let h = labels(&mut c, &u);
    assert_eq!(label_on(&h, 2), Some("⇒ 2.5 A"));
    // The hint of line 1 sits after the whole line, past `ok`.
    let hints = c.inlay_hints(&u, 1, 1);
    assert_eq!(hints[0]["position"], json!({"line": 1, "character": 17}));
    // A position past the end of a line means its end.
    c.edit(&u, 4, (2, 400), (2, 400), " * 2");
    assert_eq!(c.diagnostics(&u, 4), Vec::<Value>::new());
    assert_eq!(label_on(&labels(&mut c, &u), 2), Some("⇒ 5 A"));
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn an_error_in_an_included_sheet_shows_there_and_at_the_include_line() {
    let dir = tempfile::tempdir().unwrap();
    let lib = write(dir.path(), "lib/cables.ohm", "Rc = 0.2 Ω\nXc = 0.1 Ωx\n");
    let main_text = "@include \"lib/cables.ohm\"\nZ = Rc + j*0.1 Ω\n";
    let u = write(dir.path(), "main.ohm", main_text);
    let mut c = Client::start(dir.path(), json!({}));
    c.open(&u, main_text);
    let d = c.diagnostics(&u, 1);
    assert!(!d.is_empty(), "the @include line carries the library's error");
    assert_eq!(d[0]["range"]["start"]["line"], 0);
    assert!(d[0]["message"].as_str().unwrap().contains("cables.ohm:2"), "{d:?}");
    let in_lib = c.diagnostics_any(&lib);
    assert_eq!(in_lib.len(), 1, "{in_lib:?}");
    assert_eq!(in_lib[0]["range"]["start"]["line"], 1);
    assert_eq!(in_lib[0]["code"], d[0]["code"]);
    // Values from the library still show where they can: 0.2 + j0.1 Ω,
    // shown with the milli prefix.
    let h = labels(&mut c, &u);
    assert_eq!(label_on(&h, 1), Some("⇒ 200 + j100 mΩ"));
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn polar_display_and_digits_come_from_the_settings() {
    let dir = tempfile::tempdir().unwrap();
    let u = write(dir.path(), "bench.ohm", SHEET);
    let mut c = Client::start(dir.path(), json!({"complex": "polar", "digits": 6}));
    c.open(&u, SHEET);
    c.diagnostics(&u, 1);
    // 3 + j4 = 5 ∠ 53.1301° (atan(4/3) = 53.130102°).
    assert_eq!(label_on(&labels(&mut c, &u), 3), Some("⇒ 5 ∠ 53.1301° Ω"));
    c.notify(
        "workspace/didChangeConfiguration",
        json!({"settings": {"ohmsheet": {"complex": "rect", "digits": 4}}}),
    );
    assert_eq!(label_on(&labels(&mut c, &u), 3), Some("⇒ 3 + j4 Ω"));
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn unknown_requests_are_refused_and_the_server_goes_on() {
    let dir = tempfile::tempdir().unwrap();
    let mut c = Client::start(dir.path(), json!({}));
    let r = c.request("ohmsheet/noSuchThing", json!({}));
    assert_eq!(r["error"]["code"], -32601, "{r}");
    let r = c.request("textDocument/inlayHint", json!({"bad": true}));
    assert_eq!(r["error"]["code"], -32602, "{r}");
    // A buffer that is no file: analysed, includes refused as for text.
    c.open("untitled:Untitled-1", "a = 2 V\nb = a * 3\n");
    assert_eq!(c.diagnostics("untitled:Untitled-1", 1), Vec::<Value>::new());
    assert_eq!(label_on(&labels(&mut c, "untitled:Untitled-1"), 1), Some("⇒ 6 V"));
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn shutdown_then_exit_ends_with_status_0_and_exit_alone_with_1() {
    let dir = tempfile::tempdir().unwrap();
    let mut c = Client::start(dir.path(), json!({}));
    let r = c.request("shutdown", Value::Null);
    assert_eq!(r["result"], Value::Null);
    // After shutdown, requests are refused.
    let r = c.request("textDocument/inlayHint", json!({}));
    assert_eq!(r["error"]["code"], -32600, "{r}");
    c.notify("exit", Value::Null);
    assert_eq!(c.wait_exit(), Some(0));

    let mut c = Client::start(dir.path(), json!({}));
    c.notify("exit", Value::Null);
    assert_eq!(c.wait_exit(), Some(1), "exit without shutdown (LSP 3.17 `exit`)");

    let mut c = Client::start(dir.path(), json!({}));
    c.close_input();
    assert_eq!(c.wait_exit(), Some(1), "the client went away");
}
