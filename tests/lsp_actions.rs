//! Code actions of `ohmsheet lsp` over stdio: the repairs the diagnostics
//! suggest, applied by the test as an editor applies them, leave a sheet
//! the server finds sound. The repairs are those of the command line's
//! hints (docs/errors.md): kilo is a lowercase `k` (SI Brochure, 9th ed.,
//! Table 7); a unit binds to the number before it; a power is `^`.

use serde_json::{json, Value};

use crate::common::lsp::{uri, Client};

const SHEET: &str = "X = 4 Ω\n\
S = 1500 KVA\n\
Z = 6 + j10 Ω\n\
p = 2 ** 3\n\
Y = XX + 1 Ω\n";

/// Apply LSP text edits (one line each) to `text`.
fn apply(text: &str, edits: &[Value]) -> String {
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let mut edits = edits.to_vec();
    edits.sort_by_key(|e| {
        std::cmp::Reverse((
            e["range"]["start"]["line"].as_u64().unwrap(),
            e["range"]["start"]["character"].as_u64().unwrap(),
        ))
    });
    for e in edits {
        let l = e["range"]["start"]["line"].as_u64().unwrap() as usize;
        assert_eq!(e["range"]["end"]["line"], e["range"]["start"]["line"]);
        let u16s: Vec<u16> = lines[l].encode_utf16().collect();
        let a = e["range"]["start"]["character"].as_u64().unwrap() as usize;
        let b = e["range"]["end"]["character"].as_u64().unwrap() as usize;
        let new = format!(
            "{}{}{}",
            String::from_utf16(&u16s[..a]).unwrap(),
            e["newText"].as_str().unwrap(),
            String::from_utf16(&u16s[b..]).unwrap()
        );
        lines[l] = new;
    }
    lines.join("\n") + "\n"
}

#[test]
fn the_suggested_repairs_are_quick_fixes_that_leave_a_sound_sheet() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("bench.ohm");
    std::fs::write(&p, SHEET).unwrap();
    let u = uri(&p);
    let mut c = Client::start(dir.path(), json!({}));
    assert_eq!(
        c.init["capabilities"]["codeActionProvider"]["codeActionKinds"],
        json!(["quickfix"])
    );
    c.open(&u, SHEET);
    let diags = c.diagnostics(&u, 1);
    let codes: Vec<&str> = diags.iter().filter_map(|d| d["code"].as_str()).collect();
    assert_eq!(
        codes,
        vec!["unknown-unit", "dimension-mismatch", "syntax", "unknown-name"],
        "{diags:?}"
    );
    let actions = c.call(
        "textDocument/codeAction",
        json!({"textDocument": {"uri": u},
               "range": {"start": {"line": 0, "character": 0}, "end": {"line": 5, "character": 0}},
               "context": {"diagnostics": diags}}),
    );
    let actions = actions.as_array().unwrap().clone();
    let titles: Vec<&str> = actions.iter().map(|a| a["title"].as_str().unwrap()).collect();
    assert_eq!(
        titles,
        vec![
            "Write `kVA` for `KVA`",
            "Write `(6 + j10) Ω` for `6 + j10 Ω`",
            "Write `^` for `**`",
            "Write `X` for `XX`"
        ],
        "{actions:?}"
    );
    for a in &actions {
        assert_eq!(a["kind"], "quickfix");
        // Each names the diagnostic it repairs.
        assert_eq!(a["diagnostics"].as_array().map(Vec::len), Some(1), "{a}");
    }
    let edits: Vec<Value> = actions
        .iter()
        .flat_map(|a| a["edit"]["changes"][&u].as_array().unwrap().clone())
        .collect();
    let fixed = apply(SHEET, &edits);
    assert_eq!(
        fixed,
        "X = 4 Ω\nS = 1500 kVA\nZ = (6 + j10) Ω\np = 2 ^ 3\nY = X + 1 Ω\n"
    );
    // The server agrees the repaired sheet is sound.
    c.notify(
        "textDocument/didChange",
        json!({"textDocument": {"uri": u, "version": 2}, "contentChanges": [{"text": fixed}]}),
    );
    assert_eq!(c.diagnostics(&u, 2), Vec::<Value>::new());
    // Asked about one line, only that line's repair.
    c.notify(
        "textDocument/didChange",
        json!({"textDocument": {"uri": u, "version": 3}, "contentChanges": [{"text": SHEET}]}),
    );
    c.diagnostics(&u, 3);
    let one = c.call(
        "textDocument/codeAction",
        json!({"textDocument": {"uri": u},
               "range": {"start": {"line": 3, "character": 0}, "end": {"line": 3, "character": 3}},
               "context": {"diagnostics": []}}),
    );
    assert_eq!(one.as_array().map(Vec::len), Some(1), "{one}");
    assert_eq!(one[0]["title"], "Write `^` for `**`");
    assert_eq!(c.shutdown(), Some(0));
}
