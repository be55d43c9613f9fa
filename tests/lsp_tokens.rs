//! Semantic tokens of `ohmsheet lsp` over stdio: decoded as an editor
//! decodes them (LSP 3.17 §semanticTokens: five integers a token, line and
//! start relative to the previous token, lengths in UTF-16 units), each
//! token's text and type: names, numbers, units, operators, functions,
//! directives, strings, keywords and comments.

use serde_json::{json, Value};

use crate::common::lsp::{uri, Client};

const SHEET: &str = "# 🔌 bench\nR = 4.7 kΩ\nZ = R ∠ 30° || abs(R)\n@title \"🔌 bench\"\ncheck R ~= 4.7 kΩ +- 1%\n";

#[test]
fn tokens_name_each_piece_in_utf16_places() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("t.ohm");
    std::fs::write(&p, SHEET).unwrap();
    let u = uri(&p);
    let mut c = Client::start(dir.path(), json!({}));
    let legend = c.init["capabilities"]["semanticTokensProvider"]["legend"]["tokenTypes"].clone();
    let legend: Vec<String> = legend
        .as_array()
        .expect("a legend")
        .iter()
        .map(|t| t.as_str().unwrap().to_string())
        .collect();
    c.open(&u, SHEET);
    assert_eq!(c.diagnostics(&u, 1), Vec::<Value>::new());
    let r = c.call("textDocument/semanticTokens/full", json!({"textDocument": {"uri": u}}));
    let data: Vec<u64> = r["data"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_u64().unwrap())
        .collect();
    assert_eq!(data.len() % 5, 0);
    let lines: Vec<Vec<u16>> = SHEET.lines().map(|l| l.encode_utf16().collect()).collect();
    let (mut line, mut col) = (0usize, 0usize);
    let mut got = Vec::new();
    for t in data.chunks(5) {
        if t[0] > 0 {
            line += t[0] as usize;
            col = t[1] as usize;
        } else {
            col += t[1] as usize;
        }
        let text = String::from_utf16(&lines[line][col..col + t[2] as usize]).unwrap();
        got.push((line, text, legend[t[3] as usize].clone(), t[4]));
    }
    let want: Vec<(usize, &str, &str, u64)> = vec![
        (0, "# 🔌 bench", "comment", 0),
        (1, "R", "variable", 1),
        (1, "=", "operator", 0),
        (1, "4.7", "number", 0),
        (1, "kΩ", "type", 0),
        (2, "Z", "variable", 1),
        (2, "=", "operator", 0),
        (2, "R", "variable", 0),
        (2, "∠", "operator", 0),
        (2, "30", "number", 0),
        (2, "°", "type", 0),
        (2, "||", "operator", 0),
        (2, "abs", "function", 0),
        (2, "(", "operator", 0),
        (2, "R", "variable", 0),
        (2, ")", "operator", 0),
        (3, "@title", "macro", 0),
        (3, "\"🔌 bench\"", "string", 0),
        (4, "check", "keyword", 0),
        (4, "R", "variable", 0),
        (4, "~=", "operator", 0),
        (4, "4.7", "number", 0),
        (4, "kΩ", "type", 0),
        (4, "+-", "operator", 0),
        (4, "1", "number", 0),
        (4, "%", "type", 0),
    ];
    let want: Vec<(usize, String, String, u64)> = want
        .into_iter()
        .map(|(l, t, k, m)| (l, t.to_string(), k.to_string(), m))
        .collect();
    assert_eq!(got, want);
    assert_eq!(c.shutdown(), Some(0));
}
