//! Completion and signature help of `ohmsheet lsp`, driven over stdio
//! (tests/common/lsp.rs is the client).
//!
//! Values by hand: I = 400 V / (3 + j4) Ω = 400·(3 − j4)/25 = 48 − j64 A;
//! the Thevenin impedance seen between `mid` and ground of the network
//! below (E1 shorted) is 3 Ω ∥ j4 Ω = j12/(3 + j4) = 1.92 + j1.44 Ω.

use serde_json::{json, Value};

use crate::common::lsp::{uri, Client};

const SHEET: &str = "# a made-up pump house\n\
V = 400 V\n\
R = 3 Ω\n\
X = 4 Ω\n\
Z = R + j*X\n\
I = V / Z\n\
f = 50 Hz\n\
network pn at f\n\
  E1 = emf(top, ground, V)\n\
  R1 = branch(top, mid, R)\n\
  L1 = branch(mid, ground, j*X)\n\
end\n\
th = net_thevenin(pn, mid, ground)\n";

const LAST: u32 = 13;

fn start() -> (tempfile::TempDir, Client, String) {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("pump.ohm");
    std::fs::write(&p, SHEET).unwrap();
    let u = uri(&p);
    let mut c = Client::start(dir.path(), json!({}));
    c.open(&u, SHEET);
    assert_eq!(c.diagnostics(&u, 1), Vec::<Value>::new(), "the sheet is sound");
    (dir, c, u)
}

/// Put `text` on line `line` in place of what was there (nothing, at the
/// end) and ask for completion at its end. Each test edits a fresh copy.
fn complete_line(c: &mut Client, u: &str, version: i64, line: u32, text: &str) -> Value {
    let old_len = SHEET
        .lines()
        .nth(line as usize)
        .map_or(0, |l| l.encode_utf16().count() as u32);
    c.edit(u, version, (line, 0), (line, old_len), text);
    c.diagnostics_any(u);
    let col = text.encode_utf16().count() as u32;
    let r = c.call(
        "textDocument/completion",
        json!({"textDocument": {"uri": u}, "position": {"line": line, "character": col}}),
    );
    // Put the line back as it was, for the next question.
    let back = SHEET.lines().nth(line as usize).unwrap_or("");
    c.edit(u, version * 1000, (line, 0), (line, col), back);
    c.diagnostics_any(u);
    r
}

fn labels(r: &Value) -> Vec<String> {
    r["items"]
        .as_array()
        .unwrap()
        .iter()
        .map(|i| i["label"].as_str().unwrap().to_string())
        .collect()
}

fn item<'a>(r: &'a Value, label: &str) -> &'a Value {
    r["items"]
        .as_array()
        .unwrap()
        .iter()
        .find(|i| i["label"] == label)
        .unwrap_or_else(|| panic!("{label} offered: {r}"))
}

#[test]
fn completion_is_stated_in_the_capabilities() {
    let dir = tempfile::tempdir().unwrap();
    let c = Client::start(dir.path(), json!({}));
    let caps = &c.init["capabilities"];
    assert_eq!(
        caps["completionProvider"]["triggerCharacters"],
        json!([".", "@"]),
        "{caps}"
    );
    assert_eq!(caps["signatureHelpProvider"]["triggerCharacters"], json!(["(", ","]));
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn cells_come_with_their_values_and_functions_with_their_units() {
    let (_d, mut c, u) = start();
    let r = complete_line(&mut c, &u, 2, LAST, "P = V * I");
    // LSP 3.17 CompletionItemKind: Variable = 6, Function = 3.
    let i = item(&r, "I");
    assert_eq!(i["kind"], 6);
    assert_eq!(i["detail"], "= 48 - j64 A", "{i}");
    // The word typed so far is what the item replaces.
    let edit = &i["textEdit"]["range"];
    assert_eq!(
        (edit["start"]["character"].as_u64(), edit["end"]["character"].as_u64()),
        (Some(8), Some(9))
    );
    // Matching what was typed, ignoring case: I and functions in i…
    assert!(labels(&r).iter().all(|l| l.to_lowercase().starts_with('i')), "{r}");

    let r = complete_line(&mut c, &u, 3, LAST, "P = net_th");
    let f = item(&r, "net_thevenin");
    assert_eq!(f["kind"], 3);
    assert!(f["detail"].as_str().unwrap().starts_with("net_thevenin("), "{f}");

    let r = complete_line(&mut c, &u, 4, LAST, "P = sq");
    let f = item(&r, "sqrt");
    assert!(f["documentation"]["value"].as_str().unwrap().contains("source:"), "{f}");
    // A cell does not offer itself on its own line.
    let r = complete_line(&mut c, &u, 5, 5, "I = V / I");
    assert!(!labels(&r).contains(&"I".to_string()), "{r}");
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn units_follow_a_number_with_or_without_a_space() {
    let (_d, mut c, u) = start();
    let r = complete_line(&mut c, &u, 2, LAST, "C = 47 µ");
    // µF: a capacitance, 1e-6 F (SI prefix micro).
    let f = item(&r, "µF");
    assert_eq!(f["kind"], 11, "Unit = 11");
    assert_eq!(f["detail"], "a capacitance (F); 1 µF = 1e-6 F");
    let r = complete_line(&mut c, &u, 3, LAST, "C = 4.7k");
    let ls = labels(&r);
    assert!(
        ls.contains(&"kV".to_string()) && ls.contains(&"kΩ".to_string()),
        "{ls:?}"
    );
    // Only the unit is replaced, not the digits.
    assert_eq!(item(&r, "kV")["textEdit"]["range"]["start"]["character"], 7);
    // No cells or functions after a number.
    assert!(!ls.contains(&"V".to_string()) || item(&r, "V")["kind"] == 11);
    // An exponent is not the start of a unit.
    let r = complete_line(&mut c, &u, 4, LAST, "C = 1e3");
    assert_eq!(labels(&r), Vec::<String>::new());
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn directives_fields_and_network_names() {
    let (_d, mut c, u) = start();
    let r = complete_line(&mut c, &u, 2, LAST, "@inc");
    assert_eq!(labels(&r), vec!["include"]);
    // Fields of the record `th`, with values: Zth = 3 Ω ∥ j4 Ω = 1.92 + j1.44 Ω.
    let r = complete_line(&mut c, &u, 3, LAST, "x = th.");
    let ls = labels(&r);
    assert!(ls.contains(&"Z".to_string()) && ls.contains(&"V".to_string()), "{ls:?}");
    assert_eq!(item(&r, "Z")["detail"], "= 1.92 + j1.44 Ω");
    assert_eq!(item(&r, "Z")["kind"], 5, "Field = 5");
    // Inside the block: element forms after `=`, nodes in node arguments.
    let r = complete_line(&mut c, &u, 4, 10, "  C1 = br");
    assert_eq!(labels(&r), vec!["branch"]);
    let r = complete_line(&mut c, &u, 5, 10, "  C1 = branch(m");
    assert_eq!(labels(&r), vec!["mid"]);
    let r = complete_line(&mut c, &u, 6, 10, "  C1 = branch(mid, ");
    assert_eq!(labels(&r), vec!["ground", "mid", "top"]);
    // The value argument is an ordinary formula: cells again.
    let r = complete_line(&mut c, &u, 7, 10, "  C1 = branch(mid, ground, R");
    assert!(labels(&r).contains(&"R".to_string()), "{r}");
    // A result function: the network first, then its nodes and elements.
    let r = complete_line(&mut c, &u, 8, LAST, "y = net_v(p");
    assert_eq!(labels(&r), vec!["pn"]);
    let r = complete_line(&mut c, &u, 9, LAST, "y = net_v(pn, ");
    assert_eq!(labels(&r), vec!["ground", "mid", "top"]);
    // net_i names an element, not a node.
    let r = complete_line(&mut c, &u, 10, LAST, "y = net_i(pn, ");
    assert_eq!(labels(&r), vec!["E1", "L1", "R1"]);
    assert_eq!(c.shutdown(), Some(0));
}

#[test]
fn signature_help_names_the_parameter_the_cursor_is_in() {
    let (_d, mut c, u) = start();
    let text = "y = net_v(pn, mid, (1 + 2)";
    c.edit(&u, 2, (LAST, 0), (LAST, 0), text);
    c.diagnostics_any(&u);
    let at = |c: &mut Client, col: u32| {
        c.call(
            "textDocument/signatureHelp",
            json!({"textDocument": {"uri": u}, "position": {"line": LAST, "character": col}}),
        )
    };
    let s = at(&mut c, text.len() as u32);
    let sig = &s["signatures"][0];
    let label = sig["label"].as_str().unwrap();
    assert!(label.starts_with("net_v("), "{s}");
    // After two commas (the bracket's comma-free content does not count).
    let active = s["activeParameter"].as_u64().unwrap() as usize;
    assert_eq!(active, 2.min(sig["parameters"].as_array().unwrap().len() - 1), "{s}");
    // Parameter places are UTF-16 offsets into the label.
    let p = &sig["parameters"][0]["label"];
    let (a, b) = (p[0].as_u64().unwrap() as usize, p[1].as_u64().unwrap() as usize);
    let units: Vec<u16> = label.encode_utf16().collect();
    let first = String::from_utf16(&units[a..b]).unwrap();
    assert_eq!(first, "network");
    let p = &sig["parameters"][1]["label"];
    let (a, b) = (p[0].as_u64().unwrap() as usize, p[1].as_u64().unwrap() as usize);
    assert_eq!(String::from_utf16(&units[a..b]).unwrap(), "a: node");
    // Outside any call: no signature.
    let s = at(&mut c, 2);
    assert_eq!(s, Value::Null);
    assert_eq!(c.shutdown(), Some(0));
}
