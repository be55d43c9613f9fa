//! What `ohmsheet lsp` promises beyond single answers, driven over stdio
//! (tests/common/lsp.rs is the client): a value never outlives the error
//! that makes it unknown; a cancelled request is answered as cancelled;
//! includes come from open buffers first, then from disk, only inside the
//! folders the command line allows; and the server never writes a file.
//!
//! Values by hand: 230 V / (3 + j4) Ω = 27.6 − j36.8 A, |I| = 46 A (the
//! 3-4-5 right triangle, from memory); P = Re(V·I*) = 230 · 27.6 = 6348 W;
//! 0.2 Ω + j0.1 Ω shown as 200 + j100 mΩ (SI prefix milli, BIPM SI
//! Brochure, 9th ed., Table 7).

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::time::SystemTime;

use serde_json::{json, Value};

use crate::common::lsp::{hint_label, uri, Client};

fn write(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::create_dir_all(p.parent().unwrap()).unwrap();
    std::fs::write(&p, text).unwrap();
    uri(&std::fs::canonicalize(&p).unwrap())
}

/// The hint label on `line`, if any.
fn hint_on(c: &mut Client, u: &str, line: u32) -> Option<String> {
    c.inlay_hints(u, 0, 100)
        .iter()
        .find(|h| h["position"]["line"] == line)
        .map(hint_label)
}

const SUPPLY: &str = "# a made-up bench supply\n\
V = 230 V ∠ 0°\n\
Z = (3 + j4) Ω\n\
I = V / Z\n\
P = re(V * conj(I))\n\
check abs(I) ~= 46 A +- 1%\n";

#[test]
fn a_cell_downstream_of_a_new_error_shows_no_stale_value() {
    let dir = tempfile::tempdir().unwrap();
    let u = write(dir.path(), "supply.ohm", SUPPLY);
    let mut c = Client::start(dir.path(), json!({}));
    c.open(&u, SUPPLY);
    assert_eq!(c.diagnostics(&u, 1), Vec::<Value>::new());
    assert_eq!(hint_on(&mut c, &u, 3).as_deref(), Some("⇒ 27.6 - j36.8 A"));
    // Re(230 V · (27.6 + j36.8) A) = 6348 W.
    assert_eq!(hint_on(&mut c, &u, 4).as_deref(), Some("⇒ 6.348 kW"));
    assert!(c.hover(&u, 4, 0).contains("6.348 kW"));

    // `Ω` becomes `Ωx`, an unknown unit: Z has an error; I, P and the
    // check downstream of it lose their values.
    c.edit(&u, 2, (2, 13), (2, 14), "Ωx");
    let d = c.diagnostics(&u, 2);
    assert_eq!(d[0]["code"], "unknown-unit", "{d:?}");
    assert_eq!(d[0]["range"]["start"]["line"], 2);
    // A line that does not parse defines no cell: `I = V / Z` names a cell
    // that does not exist (as `ohmsheet run` says); nothing further down.
    assert!(
        d.iter().all(|x| x["range"]["start"]["line"].as_u64() <= Some(3)),
        "{d:?}"
    );
    assert_eq!(
        hint_on(&mut c, &u, 1).as_deref(),
        Some("⇒ 230 V"),
        "upstream keeps its value"
    );
    for line in 2..=5 {
        assert_eq!(hint_on(&mut c, &u, line), None, "line {line} shows no value");
    }
    let h = c.hover(&u, 4, 0);
    assert!(
        !h.contains("6.348") && !h.contains("kW"),
        "hover keeps no stale value: {h}"
    );
    let s = c.call("textDocument/documentSymbol", json!({"textDocument": {"uri": u}}));
    assert!(
        !s.to_string().contains("6.348"),
        "the outline keeps no stale value: {s}"
    );

    // A formula error (an unknown name) upstream, made by an in-place edit
    // of a sound sheet: the same.
    c.edit(&u, 3, (2, 13), (2, 15), "Ω");
    assert_eq!(c.diagnostics(&u, 3), Vec::<Value>::new());
    assert_eq!(hint_on(&mut c, &u, 4).as_deref(), Some("⇒ 6.348 kW"));
    c.edit(&u, 4, (3, 4), (3, 5), "Vx");
    let d = c.diagnostics(&u, 4);
    assert_eq!(d.len(), 1, "{d:?}");
    assert_eq!(d[0]["code"], "unknown-name");
    for line in 3..=5 {
        assert_eq!(hint_on(&mut c, &u, line), None, "line {line} shows no value");
    }
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn an_error_in_an_included_sheet_takes_the_values_that_depend_on_it() {
    let dir = tempfile::tempdir().unwrap();
    let lib = write(dir.path(), "lib/cables.ohm", "Rc = 0.2 Ω\nXc = j0.1 Ω\n");
    let main_text = "@include \"lib/cables.ohm\"\nZ = Rc + Xc\nZ2 = 2 * Rc\n";
    let u = write(dir.path(), "main.ohm", main_text);
    let mut c = Client::start(dir.path(), json!({}));
    c.open(&u, main_text);
    assert_eq!(c.diagnostics(&u, 1), Vec::<Value>::new());
    assert_eq!(hint_on(&mut c, &u, 1).as_deref(), Some("⇒ 200 + j100 mΩ"));
    // The library opened and broken in its buffer (not saved).
    c.open(&lib, "Rc = 0.2 Ω\nXc = j0.1 Ω\n");
    assert_eq!(c.diagnostics(&lib, 1), Vec::<Value>::new());
    c.edit(&lib, 2, (1, 5), (1, 5), "q");
    let in_lib = c.diagnostics(&lib, 2);
    assert_eq!(in_lib.len(), 1, "{in_lib:?}");
    assert_eq!(in_lib[0]["range"]["start"]["line"], 1);
    let at_include = c.wait_for("textDocument/publishDiagnostics", |p| {
        p["uri"] == u.as_str() && !p["diagnostics"].as_array().unwrap().is_empty()
    });
    let d = &at_include["diagnostics"][0];
    assert_eq!(d["range"]["start"]["line"], 0, "at the @include line: {d}");
    assert_eq!(d["code"], in_lib[0]["code"]);
    assert!(d["message"].as_str().unwrap().contains("cables.ohm:2"), "{d}");
    // Z uses the broken Xc: no value. Z2 uses only Rc: 0.4 Ω.
    assert_eq!(hint_on(&mut c, &u, 1), None);
    assert_eq!(hint_on(&mut c, &u, 2).as_deref(), Some("⇒ 400 mΩ"));
    assert_eq!(c.shutdown(), Some(0));
}

/// A sheet long enough that opening it keeps the server busy for a while.
fn long_sheet(sections: usize) -> String {
    let mut s = String::from("V = 480 V\n");
    for k in 0..sections {
        s.push_str(&format!("R{k} = {}.5 Ω\nI{k} = V / R{k}\n", k % 9 + 1));
    }
    s
}

#[test]
fn a_request_cancelled_while_the_server_is_busy_is_answered_cancelled() {
    let dir = tempfile::tempdir().unwrap();
    let text = long_sheet(4000);
    let u = uri(&dir.path().join("long.ohm"));
    let mut c = Client::start(dir.path(), json!({}));
    // The server reads the whole sheet when it is opened; the requests
    // and cancellations sent meanwhile wait in its queue, so it finds each
    // cancellation before it starts the request.
    c.open(&u, &text);
    let hover = |c: &mut Client, line: u32| {
        c.send_request(
            "textDocument/hover",
            json!({"textDocument": {"uri": u}, "position": {"line": line, "character": 0}}),
        )
    };
    let first = hover(&mut c, 2);
    c.notify("$/cancelRequest", json!({"id": first}));
    let second = hover(&mut c, 2);
    let third = hover(&mut c, 4);
    c.notify("$/cancelRequest", json!({"id": third}));
    // LSP 3.17 §cancelRequest: a cancelled request still gets an answer,
    // the error RequestCancelled (-32800).
    let r = c.response(first);
    assert_eq!(r["error"]["code"], -32800, "{r}");
    let r = c.response(third);
    assert_eq!(r["error"]["code"], -32800, "{r}");
    // The one not cancelled is answered: I0 = 480 V / 1.5 Ω = 320 A.
    let r = c.response(second);
    assert!(r["error"].is_null(), "{r}");
    assert!(r["result"]["contents"].to_string().contains("320 A"), "{r}");
    // A cancellation of a request already answered changes nothing.
    c.notify("$/cancelRequest", json!({"id": second}));
    assert_eq!(hint_on(&mut c, &u, 2).as_deref(), Some("⇒ 320 A"));
    assert_eq!(c.shutdown(), Some(0));
}

/// Every file under `dir`: its bytes and when it was last changed.
fn tree(dir: &Path) -> BTreeMap<PathBuf, (Vec<u8>, SystemTime)> {
    let mut out = BTreeMap::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap() {
            let e = e.unwrap();
            let p = e.path();
            if e.file_type().unwrap().is_dir() {
                stack.push(p.clone());
                out.insert(p, (Vec::new(), e.metadata().unwrap().modified().unwrap()));
            } else {
                let bytes = std::fs::read(&p).unwrap();
                out.insert(p, (bytes, e.metadata().unwrap().modified().unwrap()));
            }
        }
    }
    out
}

#[test]
fn includes_come_from_open_buffers_then_disk_only_inside_the_allowed_folders() {
    let root = tempfile::tempdir().unwrap();
    let root = std::fs::canonicalize(root.path()).unwrap();
    let job = root.join("job");
    let shared = write(&root, "shared/cables.ohm", "Rc = 0.2 Ω\n");
    let main_text = "@include \"../shared/cables.ohm\"\nZ = Rc + j*0.1 Ω\n";
    let u = write(&job, "main.ohm", main_text);
    let before = tree(&root);

    // Not allowed: refused as the command line refuses it, even with the
    // library open in the editor.
    let cli = crate::common::ohmsheet()
        .current_dir(&job)
        .args(["run", "main.ohm"])
        .output()
        .unwrap();
    let said = String::from_utf8_lossy(&cli.stderr);
    assert!(said.contains("error[include-path]"), "{said}");
    let mut c = Client::start(&job, json!({}));
    c.open(&shared, "Rc = 0.5 Ω\n");
    c.diagnostics(&shared, 1);
    c.open(&u, main_text);
    let d = c.diagnostics(&u, 1);
    let refused = d
        .iter()
        .find(|d| d["code"] == "include-path")
        .unwrap_or_else(|| panic!("the include is refused: {d:?}"));
    assert_eq!(refused["range"]["start"]["line"], 0);
    assert!(refused["message"].as_str().unwrap().contains("outside"), "{refused}");
    assert!(
        refused["message"].as_str().unwrap().contains("--allow-dir"),
        "{refused}"
    );
    assert_eq!(hint_on(&mut c, &u, 1), None);
    assert_eq!(c.shutdown(), Some(0));

    // Allowed with --allow-dir, as on the command line: read from the open
    // buffer (0.5 Ω), not from disk (0.2 Ω) ...
    let mut c = Client::start_with(&job, &["--allow-dir", "../shared"], json!({}));
    c.open(&shared, "Rc = 0.5 Ω\n");
    c.diagnostics(&shared, 1);
    c.open(&u, main_text);
    assert_eq!(c.diagnostics(&u, 1), Vec::<Value>::new());
    assert_eq!(hint_on(&mut c, &u, 1).as_deref(), Some("⇒ 500 + j100 mΩ"));
    // ... and from disk once the buffer is closed.
    c.notify("textDocument/didClose", json!({"textDocument": {"uri": shared}}));
    c.diagnostics_any(&u);
    assert_eq!(hint_on(&mut c, &u, 1).as_deref(), Some("⇒ 200 + j100 mΩ"));
    // A library that exists only as an unsaved buffer (never saved) in
    // the sheet's folder is read too.
    let fresh = uri(&job.join("lib/new.ohm"));
    c.open(&fresh, "Rn = 1 Ω\n");
    c.diagnostics(&fresh, 1);
    c.edit(&u, 2, (1, 16), (1, 16), "\n@include \"lib/new.ohm\"\nZn = Rn * 2");
    assert_eq!(c.diagnostics(&u, 2), Vec::<Value>::new());
    assert_eq!(hint_on(&mut c, &u, 3).as_deref(), Some("⇒ 2 Ω"));
    assert_eq!(c.shutdown(), Some(0));

    // Neither server wrote, created or touched a file.
    assert_eq!(tree(&root), before);
}

#[test]
fn the_server_writes_no_file_whatever_it_is_asked() {
    let dir = tempfile::tempdir().unwrap();
    let dir = std::fs::canonicalize(dir.path()).unwrap();
    let lib = write(&dir, "lib/cables.ohm", "Rc = 0.2 Ω\n");
    let text = "@include \"lib/cables.ohm\"\nS = 1500 KVA\nZ = Rc + j*0.1 Ω\nY = ZZ + 1 Ω\n";
    let u = write(&dir, "main.ohm", text);
    let before = tree(&dir);
    let mut c = Client::start(&dir, json!({}));
    c.open(&lib, "Rc = 0.2 Ω\n");
    c.open(&u, text);
    let diags = c.diagnostics(&u, 1);
    assert!(!diags.is_empty());
    // Edits, a rename and the quick fixes: each only answered with edits
    // for the editor to apply.
    c.edit(&lib, 2, (0, 5), (0, 8), "0.3");
    c.edit(&u, 2, (2, 0), (2, 0), "# a note\n");
    let p = |line: u32, character: u32| json!({"textDocument": {"uri": u}, "position": {"line": line, "character": character}});
    let mut r = p(3, 0);
    r["newName"] = json!("Zload");
    let renamed = c.call("textDocument/rename", r);
    assert!(
        renamed["changes"].as_object().is_some_and(|m| !m.is_empty()),
        "{renamed}"
    );
    let mut r = p(3, 5);
    r["newName"] = json!("Rcable");
    let renamed = c.call("textDocument/rename", r);
    assert!(renamed["changes"][&lib].is_array(), "{renamed}");
    let actions = c.call(
        "textDocument/codeAction",
        json!({"textDocument": {"uri": u},
               "range": {"start": {"line": 0, "character": 0}, "end": {"line": 6, "character": 0}},
               "context": {"diagnostics": diags}}),
    );
    assert!(actions.as_array().is_some_and(|a| a.len() >= 2), "{actions}");
    c.notify("textDocument/didSave", json!({"textDocument": {"uri": u}}));
    c.notify("textDocument/didClose", json!({"textDocument": {"uri": lib}}));
    c.notify("textDocument/didClose", json!({"textDocument": {"uri": u}}));
    assert_eq!(c.shutdown(), Some(0));
    assert_eq!(tree(&dir), before, "the server changed no file and made none");
}
