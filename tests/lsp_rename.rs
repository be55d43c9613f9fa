//! Rename and document symbols of `ohmsheet lsp`, over stdio
//! (tests/common/lsp.rs is the client). Value by hand:
//! Zf = (0.2 + j0.1) Ω/km · 2 km = 0.4 + j0.2 Ω.

use std::path::Path;

use serde_json::{json, Value};

use crate::common::lsp::{uri, Client};

const LIB: &str = "# cable data (made up)\nzc = (0.2 + j0.1) Ω/km\n";
const MAIN: &str = "@include \"lib/cables.ohm\"\n\
# --- feeder ---\n\
L = 2 km\n\
Zf = zc * L\n\
check Zf ~= (0.4 + j0.2) Ω +- 0.1%\n\
# --- network ---\n\
network n at 50 Hz\n\
  E = emf(a, ground, 230 V)\n\
  B = branch(a, ground, Zf)\n\
end\n";

fn write(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::create_dir_all(p.parent().unwrap()).unwrap();
    std::fs::write(&p, text).unwrap();
    uri(&std::fs::canonicalize(&p).unwrap())
}

fn pos(u: &str, line: u32, character: u32) -> Value {
    json!({"textDocument": {"uri": u}, "position": {"line": line, "character": character}})
}

fn rename(c: &mut Client, u: &str, line: u32, character: u32, new: &str) -> Value {
    let mut p = pos(u, line, character);
    p["newName"] = json!(new);
    c.request("textDocument/rename", p)
}

/// (line, start character, end character, new text) of the edits to `u`.
fn edits(r: &Value, u: &str) -> Vec<(u64, u64, u64, String)> {
    let mut v: Vec<(u64, u64, u64, String)> = r["result"]["changes"][u]
        .as_array()
        .unwrap_or(&Vec::new())
        .iter()
        .map(|e| {
            (
                e["range"]["start"]["line"].as_u64().unwrap(),
                e["range"]["start"]["character"].as_u64().unwrap(),
                e["range"]["end"]["character"].as_u64().unwrap(),
                e["newText"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    v.sort();
    v
}

#[test]
fn a_cell_is_renamed_in_this_sheet_and_in_the_sheet_that_defines_it() {
    let dir = tempfile::tempdir().unwrap();
    let lu = write(dir.path(), "lib/cables.ohm", LIB);
    let mu = write(dir.path(), "job.ohm", MAIN);
    let mut c = Client::start(dir.path(), json!({}));
    let caps = &c.init["capabilities"];
    assert_eq!(caps["renameProvider"]["prepareProvider"], true, "{caps}");
    c.open(&mu, MAIN);
    assert_eq!(c.diagnostics(&mu, 1), Vec::<Value>::new());
    // From a use of `zc` (line 3, `Zf = zc * L`).
    let r = rename(&mut c, &mu, 3, 6, "zcable");
    assert!(r.get("error").is_none(), "{r}");
    assert_eq!(edits(&r, &mu), vec![(3, 5, 7, "zcable".to_string())]);
    assert_eq!(edits(&r, &lu), vec![(1, 0, 2, "zcable".to_string())]);
    // `Zf` in the formula, the check and the network's element line.
    let r = rename(&mut c, &mu, 3, 0, "Zfeed");
    let lines: Vec<u64> = edits(&r, &mu).iter().map(|e| e.0).collect();
    assert_eq!(lines, vec![3, 4, 8], "{r}");
    // prepareRename gives the name's range; on a unit it refuses.
    let p = c.call("textDocument/prepareRename", pos(&mu, 2, 0));
    assert_eq!(p["start"]["character"], 0);
    assert_eq!(p["end"]["character"], 1);
    let p = c.request("textDocument/prepareRename", pos(&mu, 2, 7));
    assert!(p["error"]["message"].as_str().unwrap().contains("cell's name"), "{p}");

    // With the library open too, renaming at its definition reaches the
    // sheet that includes it.
    c.open(&lu, LIB);
    c.diagnostics(&lu, 1);
    let r = rename(&mut c, &lu, 1, 0, "z_cable");
    assert_eq!(edits(&r, &lu), vec![(1, 0, 2, "z_cable".to_string())]);
    assert_eq!(edits(&r, &mu), vec![(3, 5, 7, "z_cable".to_string())]);
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn a_rename_that_would_clash_or_use_a_reserved_word_is_refused_with_the_reason() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "lib/cables.ohm", LIB);
    let mu = write(dir.path(), "job.ohm", MAIN);
    let mut c = Client::start(dir.path(), json!({}));
    c.open(&mu, MAIN);
    c.diagnostics(&mu, 1);
    for (new, why) in [
        ("Zf", "job.ohm, line 4)"),
        ("zc", "`zc` is already a cell"),
        ("j", "reserved"),
        ("network", "reserved"),
        ("sqrt", "function"),
        ("net_v", "function"),
        ("2L", "not a name"),
    ] {
        let r = rename(&mut c, &mu, 2, 0, new);
        // LSP 3.17: RequestFailed = -32803.
        assert_eq!(r["error"]["code"], -32803, "{new}: {r}");
        let msg = r["error"]["message"].as_str().unwrap();
        assert!(msg.contains(why), "{new}: {msg}");
    }
    // A node of a network is not a cell: nothing to rename there.
    let r = rename(&mut c, &mu, 7, 10, "b");
    assert_eq!(r["error"]["code"], -32803, "{r}");
    assert!(r["error"]["message"].as_str().unwrap().contains("cell's name"), "{r}");
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn the_outline_has_sections_cells_checks_and_networks() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "lib/cables.ohm", LIB);
    let mu = write(dir.path(), "job.ohm", MAIN);
    let mut c = Client::start(dir.path(), json!({}));
    c.open(&mu, MAIN);
    c.diagnostics(&mu, 1);
    let s = c.call("textDocument/documentSymbol", json!({"textDocument": {"uri": mu}}));
    let names = |v: &Value| -> Vec<(String, u64)> {
        v.as_array()
            .unwrap()
            .iter()
            .map(|x| (x["name"].as_str().unwrap().to_string(), x["kind"].as_u64().unwrap()))
            .collect()
    };
    // LSP SymbolKind: Namespace 3, Module 2, Variable 13, Boolean 17, Field 8.
    assert_eq!(names(&s), vec![("feeder".into(), 3), ("network".into(), 3)]);
    let feeder = &s[0]["children"];
    assert_eq!(
        names(feeder),
        vec![
            ("L".into(), 13),
            ("Zf".into(), 13),
            ("check Zf ~= (0.4 + j0.2) Ω +- 0.1%".into(), 17)
        ]
    );
    // 0.4 + j0.2 Ω, shown with the prefix the value takes.
    assert_eq!(feeder[1]["detail"], "= 400 + j200 mΩ");
    assert!(feeder[2]["detail"].as_str().unwrap().starts_with("holds"), "{s}");
    let net = &s[1]["children"][0];
    assert_eq!((net["name"].as_str(), net["kind"].as_u64()), (Some("n"), Some(2)));
    assert_eq!(names(&net["children"]), vec![("E".into(), 8), ("B".into(), 8)]);
    assert_eq!(net["range"]["end"]["line"], 9, "the block reaches its `end`");
    assert_eq!(c.shutdown(), Some(0));
}
