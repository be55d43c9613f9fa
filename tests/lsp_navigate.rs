//! Hover, go to definition and find references through `ohmsheet lsp`,
//! and includes read from the editor's unsaved buffers.
//!
//! Expected values by hand: 230 V / (3 + j4) Ω = 230·(3 − j4)/25 A
//! = 27.6 − j36.8 A = 46 A ∠ −53.13° (atan(4/3) = 53.130°, the 3-4-5
//! triangle); 1 kV = 1000 V (SI prefix kilo, BIPM SI Brochure, 9th ed.,
//! Table 7).

use std::path::Path;

use serde_json::json;

use crate::common::lsp::{hint_label, uri, Client};

fn write(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    if let Some(parent) = p.parent() {
        std::fs::create_dir_all(parent).unwrap();
    }
    std::fs::write(&p, text).unwrap();
    uri(&p)
}

const SHEET: &str = "# a made-up bench supply\n\
V = 230 V ∠ 0°\n\
Z = (3 + j4) Ω\n\
I = V / Z\n\
S = V * conj(I)\n\
Vk = V [kV]\n\
check abs(I) ~= 46 A +- 1%\n";

#[test]
fn hover_shows_a_cells_value_formula_tree_and_users() {
    let dir = tempfile::tempdir().unwrap();
    let u = write(dir.path(), "bench.ohm", SHEET);
    let mut c = Client::start(dir.path(), json!({}));
    c.open(&u, SHEET);
    c.diagnostics(&u, 1);
    let h = c.hover(&u, 3, 0);
    assert!(h.contains("**I** = `V / Z`"), "{h}");
    assert!(h.contains("27.6 - j36.8 A"), "rectangular: {h}");
    assert!(h.contains("46 ∠ -53.13° A"), "polar: {h}");
    assert!(h.contains("a current"), "what it is: {h}");
    // The formula with the values put in, as a report writes it.
    assert!(h.contains("I = 230 V / (3 + j4) Ω"), "substituted: {h}");
    // The /why tree names both cells it uses, and what uses it.
    assert!(
        h.contains("├─ V = 230 V ∠ 0°") && h.contains("└─ Z = (3 + j4) Ω"),
        "{h}"
    );
    assert!(h.contains("used by `S`, check abs(I) ~= 46 A +- 1%"), "{h}");
    // The hover covers the name.
    let r = c.at("textDocument/hover", &u, 3, 0);
    assert_eq!(r["range"]["start"], json!({"line": 3, "character": 0}));
    assert_eq!(r["range"]["end"], json!({"line": 3, "character": 1}));

    // A function: its signature with units and its source.
    let h = c.hover(&u, 4, 8);
    assert!(h.contains("conj("), "{h}");
    let (_, f) = ohmsheet::funcs::find("conj").unwrap();
    assert!(h.contains(f.summary), "{h}");
    if !f.source.is_empty() {
        assert!(h.contains(f.source), "{h}");
    }
    // A unit with a prefix: 1 kV = 1000 V.
    let h = c.hover(&u, 5, 8);
    assert!(h.contains("1 kV = 1000 V"), "{h}");
    // Nothing under the cursor in a comment.
    assert_eq!(c.hover(&u, 0, 3), "");
    // On a check line away from any name: the verdict, |I| = 46 A
    // against 46 A.
    let h = c.hover(&u, 6, 1);
    assert!(h.contains("`check abs(I) ~= 46 A +- 1%`"), "{h}");
    assert!(h.contains("holds") && h.contains("computed 46 A, stated 46 A"), "{h}");

    // After an edit made in place, hover reads the new values:
    // 230 V / 5 Ω = 46 A.
    c.edit(&u, 2, (2, 4), (2, 14), "5 Ω");
    c.diagnostics(&u, 2);
    let h = c.hover(&u, 3, 0);
    assert!(h.contains("= 46 A"), "{h}");
    assert!(h.contains("I = 230 V / 5 Ω"), "{h}");
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn definition_and_references_reach_into_included_sheets() {
    let dir = tempfile::tempdir().unwrap();
    let lib = write(dir.path(), "lib/cables.ohm", "# cable data\nRc = 0.2 Ω\n");
    let main_text = "@include \"lib/cables.ohm\"\nZ = Rc + j*0.1 Ω\nZ2 = 2 * Rc\n";
    let u = write(dir.path(), "main.ohm", main_text);
    let mut c = Client::start(dir.path(), json!({}));
    c.open(&u, main_text);
    assert_eq!(c.diagnostics(&u, 1), Vec::<serde_json::Value>::new());

    let d = c.at("textDocument/definition", &u, 1, 5);
    assert_eq!(d["uri"], lib.as_str(), "{d}");
    assert_eq!(d["range"]["start"], json!({"line": 1, "character": 0}));
    assert_eq!(d["range"]["end"], json!({"line": 1, "character": 2}));
    // From the @include line to the sheet it names.
    let d = c.at("textDocument/definition", &u, 0, 12);
    assert_eq!(d["uri"], lib.as_str(), "{d}");
    assert_eq!(d["range"]["start"], json!({"line": 0, "character": 0}));
    // A cell of this sheet: its own line.
    let d = c.at("textDocument/definition", &u, 2, 0);
    assert_eq!(
        (d["uri"].as_str(), &d["range"]["start"]["line"]),
        (Some(u.as_str()), &json!(2))
    );

    let refs = c.references(&u, 1, 4, true);
    assert_eq!(
        refs,
        vec![(lib.clone(), 1, 0, 2), (u.clone(), 1, 4, 6), (u.clone(), 2, 9, 11)]
    );
    let refs = c.references(&u, 2, 10, false);
    assert_eq!(refs, vec![(u.clone(), 1, 4, 6), (u.clone(), 2, 9, 11)]);
    // Nothing to find for a unit.
    assert_eq!(c.references(&u, 1, 15, true), vec![]);
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn an_included_sheet_open_in_the_editor_is_read_from_its_unsaved_buffer() {
    let dir = tempfile::tempdir().unwrap();
    let lib = write(dir.path(), "lib/cables.ohm", "Rc = 0.2 Ω\n");
    let main_text = "@include \"lib/cables.ohm\"\nZ = Rc + j*0.1 Ω\n";
    let u = write(dir.path(), "main.ohm", main_text);
    let mut c = Client::start(dir.path(), json!({}));
    c.open(&u, main_text);
    c.diagnostics(&u, 1);
    let z = |c: &mut Client| c.inlay_hints(&u, 1, 1).first().map(hint_label).unwrap_or_default();
    // 0.2 + j0.1 Ω, shown in mΩ.
    assert_eq!(z(&mut c), "⇒ 200 + j100 mΩ");
    // The library opened and changed, not saved: main reads the buffer.
    c.open(&lib, "Rc = 0.2 Ω\n");
    c.edit(&lib, 2, (0, 5), (0, 8), "0.5");
    c.wait_for("textDocument/publishDiagnostics", |p| {
        p["uri"] == u.as_str() && p["version"] == 1
    });
    c.wait_for("textDocument/publishDiagnostics", |p| {
        p["uri"] == u.as_str() && p["version"] == 1
    });
    assert_eq!(z(&mut c), "⇒ 500 + j100 mΩ");
    // An error typed in the library's buffer shows at the @include line.
    c.edit(&lib, 3, (0, 0), (0, 2), "R%");
    let d = c.wait_for("textDocument/publishDiagnostics", |p| {
        p["uri"] == u.as_str() && !p["diagnostics"].as_array().unwrap().is_empty()
    });
    assert_eq!(d["diagnostics"][0]["range"]["start"]["line"], 0, "{d}");
    // Closed without saving: the file on disk again.
    c.notify("textDocument/didClose", json!({"textDocument": {"uri": lib}}));
    c.wait_for("textDocument/publishDiagnostics", |p| {
        p["uri"] == u.as_str() && p["diagnostics"].as_array().unwrap().is_empty()
    });
    assert_eq!(z(&mut c), "⇒ 200 + j100 mΩ");
    // The server never wrote the library file.
    assert_eq!(
        std::fs::read_to_string(dir.path().join("lib/cables.ohm")).unwrap(),
        "Rc = 0.2 Ω\n"
    );
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn a_library_sheet_saved_by_another_program_is_read_again_when_the_client_says_so() {
    let dir = tempfile::tempdir().unwrap();
    let lib_path = dir.path().join("lib/cables.ohm");
    let lib = write(dir.path(), "lib/cables.ohm", "Rc = 0.2 Ω\n");
    let main_text = "@include \"lib/cables.ohm\"\nZ = Rc + j*0.1 Ω\n";
    let u = write(dir.path(), "main.ohm", main_text);
    let caps = json!({"workspace": {"didChangeWatchedFiles": {"dynamicRegistration": true}}});
    let mut c = Client::start_caps(dir.path(), &[], caps, json!({}));
    // The server asks to be told of changed sheets.
    let reg = c.wait_for_request("client/registerCapability");
    assert_eq!(
        reg["registrations"][0]["method"], "workspace/didChangeWatchedFiles",
        "{reg}"
    );
    assert_eq!(
        reg["registrations"][0]["registerOptions"]["watchers"][0]["globPattern"],
        "**/*.ohm"
    );
    c.open(&u, main_text);
    c.diagnostics(&u, 1);
    let z = |c: &mut Client| c.inlay_hints(&u, 1, 1).first().map(hint_label).unwrap_or_default();
    assert_eq!(z(&mut c), "⇒ 200 + j100 mΩ");
    std::fs::write(&lib_path, "Rc = 0.3 Ω\n").unwrap();
    // FileChangeType.Changed = 2 (LSP 3.17).
    c.notify(
        "workspace/didChangeWatchedFiles",
        json!({"changes": [{"uri": lib, "type": 2}]}),
    );
    c.diagnostics(&u, 1);
    assert_eq!(z(&mut c), "⇒ 300 + j100 mΩ");
    assert_eq!(c.shutdown(), Some(0));
}
