//! Robustness of the editor path: random sequences of edits, as an editor
//! sends them (line and UTF-16 column, positions past the end of a line,
//! halves of surrogate pairs, half-typed lines, `∠ Ω µ` and emoji before
//! the cursor), applied one by one to an open document — in place where
//! the engine can, by a whole compile where not — must leave exactly what
//! a from-scratch evaluation of the final text gives: every value to the
//! bit, every problem (code, place, message) and every hint. Nothing may
//! panic. The reference is the program's own whole-sheet compile, which
//! the rest of the suite checks against outside sources; this test checks
//! that the incremental path never drifts from it.
//!
//! The same is checked end to end through `ohmsheet lsp`: a document
//! edited step by step, with requests of every kind at random places
//! between the keystrokes (some cancelled at once), and a second document
//! opened with the final text get the same hints and diagnostics; every
//! request is answered, none with an internal error, the server's standard
//! error tells of no panic, and it answers `shutdown` and exits on `exit`.

use proptest::prelude::*;
use serde_json::{json, Value};

use ohmsheet::analysis::{hints::hints, problems::problems, Display, Document};
use ohmsheet::lsp::convert;
use ohmsheet::sheet::LoadOptions;

use crate::common::lsp::{uri, Client};

const CASES: u32 = 96;

/// The proptest settings these properties run with.
fn cfg(cases: u32) -> ProptestConfig {
    crate::common::proptest_cfg(cases)
}

const BASE: &str = "# a made-up bench ∠ Ω µ 😀\n\
V = 230 V ∠ 0°\n\
Z = (3 + j4) Ω # load 😀 µ\n\
I = V / Z\n\
S = V * conj(I)\n\
P = re(S)\n\
C = 10 µF\n\
Xc = 1 / (2*pi*50 Hz * C)\n\
k = cos(30)\n\
check abs(I) ~= 46 A +- 1%\n";

/// One edit: replace from (line, column) to (line, column), both in
/// UTF-16 units and possibly past a line's end or the last line, with a
/// text.
#[derive(Clone, Debug)]
struct Change {
    from: (u32, u32),
    to: (u32, u32),
    text: String,
}

fn snippet() -> impl Strategy<Value = String> {
    prop_oneof![
        4 => proptest::sample::select(vec!["0", "1", "2", "5", "7", "9", ".", "k", "K"]).prop_map(str::to_string),
        2 => proptest::sample::select(vec![
            " Ω", "∠", " µF", "😀", "# 😀 ∠ Ω µ", "\n", "R", "(", ")", "+ j", "abs(", "= ", " V", "*", "/",
            "x = 2 V\n", "check V ~= 230 V +- 1%\n", "", "Z", "I", "S2 = S * 2\n", "6 + j10 Ω", "\r\n",
            "@title \"bench\"\n", "network n at 50 Hz\n", "  B = branch(a, ground, Z)\n", "end\n", "°", "µ",
            "Ω",
        ])
        .prop_map(str::to_string),
    ]
}

fn change() -> impl Strategy<Value = Change> {
    prop_oneof![
        // Typing or deleting at one place (columns run past line ends).
        6 => (0u32..12, 0u32..40, 0u32..3, snippet()).prop_map(|(l, c, del, text)| Change {
            from: (l, c),
            to: (l, c + del),
            text,
        }),
        // A range over several lines.
        1 => (0u32..12, 0u32..30, 0u32..3, 0u32..30, snippet()).prop_map(|(l, c, dl, c2, text)| Change {
            from: (l, c),
            to: (l + dl, c2),
            text,
        }),
    ]
}

/// Apply a change as the server does (positions to byte offsets).
fn apply(text: &str, c: &Change) -> String {
    let starts = convert::line_starts(text);
    let pos = |(line, character): (u32, u32)| lsp_types::Position { line, character };
    let a = convert::offset(text, &starts, pos(c.from));
    let b = convert::offset(text, &starts, pos(c.to)).max(a);
    let mut t = text.to_string();
    t.replace_range(a..b, &c.text);
    t
}

/// Each cell's key (its name, or `check …`) and the bits of its values.
type Values = Vec<(String, Vec<(u64, u64)>)>;

/// Everything an editor sees of a document, comparable across documents.
fn snapshot(d: &Document) -> (Values, String, String) {
    let m = &d.engine.model;
    let mut vals: Values = m
        .cells
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let key = if c.is_check() {
                format!("check {}", c.formula.trim())
            } else {
                c.name.clone()
            };
            let bits = if c.error.is_some() {
                Vec::new()
            } else {
                d.engine
                    .values(i as u32)
                    .iter()
                    .map(|z| (z.re.to_bits(), z.im.to_bits()))
                    .collect()
            };
            (key, bits)
        })
        .collect();
    vals.sort();
    let display = Display::default();
    let probs = format!("{:#?}", problems(d, display));
    let hs = format!("{:#?}", hints(d, display, 0..usize::MAX));
    (vals, probs, hs)
}

proptest! {
    #![proptest_config(cfg(CASES))]

    #[test]
    fn edits_in_place_end_where_a_fresh_evaluation_does(changes in proptest::collection::vec(change(), 1..24)) {
        let mut doc = Document::open(None, BASE, LoadOptions::default());
        let mut text = BASE.to_string();
        for c in &changes {
            text = apply(&text, c);
            doc.update(&text);
            prop_assert_eq!(doc.text(), text.as_str());
        }
        let fresh = Document::open(None, &text, LoadOptions::default());
        let (a, b) = (snapshot(&doc), snapshot(&fresh));
        prop_assert_eq!(&a.0, &b.0, "values differ for\n{}", text);
        prop_assert_eq!(&a.1, &b.1, "problems differ for\n{}", text);
        prop_assert_eq!(&a.2, &b.2, "hints differ for\n{}", text);
    }
}

/// Most random sequences above break the sheet early (and every later
/// edit compiles it whole); these keep it sound, so the in-place path
/// itself runs many times in a row.
fn number_edit() -> impl Strategy<Value = (usize, String)> {
    (
        0usize..4,
        proptest::sample::select(vec!["1", "2.5", "0", "1e3", "-4", "0.001", "1e-300", "1e300"]),
    )
        .prop_map(|(k, v)| (k, v.to_string()))
}

proptest! {
    #![proptest_config(cfg(CASES))]

    #[test]
    fn number_edits_stay_in_place_and_agree_with_a_fresh_evaluation(edits in proptest::collection::vec(number_edit(), 1..30)) {
        // Lines whose number is replaced: V's magnitude, Z's real part, C, and
        // the frequency in Xc.
        let lines = [(1usize, "V = ", " V ∠ 0°"), (2, "Z = (", " + j4) Ω # load 😀 µ"), (6, "C = ", " µF"), (7, "Xc = 1 / (2*pi*", " Hz * C)")];
        let mut doc = Document::open(None, BASE, LoadOptions::default());
        let mut text = BASE.to_string();
        for (k, v) in &edits {
            let (line, head, tail) = lines[*k];
            let mut ls: Vec<String> = text.split('\n').map(str::to_string).collect();
            ls[line] = format!("{head}{v}{tail}");
            text = ls.join("\n");
            doc.update(&text);
        }
        // 0 F gives an infinite reactance and 0 Ω an unchanged sheet: the
        // engine compiles only when a shape changes, never here.
        prop_assert_eq!(doc.counts.compiled, 1, "every number edit was made in place");
        let fresh = Document::open(None, &text, LoadOptions::default());
        prop_assert_eq!(snapshot(&doc), snapshot(&fresh), "for\n{}", text);
    }
}

/// Hints and diagnostics of a document as the server gives them.
fn answers(c: &mut Client, u: &str, version: i64) -> (Vec<Value>, Vec<Value>) {
    let d = c.diagnostics(u, version);
    let h = c.inlay_hints(u, 0, 400);
    (d, h)
}

/// A request an editor may send between keystrokes, at a place that may
/// lie past a line's end, past the last line or inside a surrogate pair:
/// (which request, line, UTF-16 column, cancelled at once).
type Ask = (usize, u32, u32, bool);

fn ask() -> impl Strategy<Value = Option<Ask>> {
    proptest::option::weighted(0.5, (0usize..11, 0u32..14, 0u32..40, proptest::bool::weighted(0.25)))
}

/// Send request `a` about document `u`; its id.
fn send_ask(c: &mut Client, u: &str, (which, line, character, cancel): Ask) -> i64 {
    let doc = json!({"uri": u});
    let at = json!({"line": line, "character": character});
    let range = json!({"start": {"line": line.saturating_sub(2), "character": 0}, "end": at});
    let (method, params) = match which {
        0 => ("textDocument/hover", json!({"textDocument": doc, "position": at})),
        1 => ("textDocument/completion", json!({"textDocument": doc, "position": at})),
        2 => (
            "textDocument/signatureHelp",
            json!({"textDocument": doc, "position": at}),
        ),
        3 => ("textDocument/definition", json!({"textDocument": doc, "position": at})),
        4 => (
            "textDocument/references",
            json!({"textDocument": doc, "position": at, "context": {"includeDeclaration": true}}),
        ),
        5 => (
            "textDocument/prepareRename",
            json!({"textDocument": doc, "position": at}),
        ),
        6 => (
            "textDocument/rename",
            json!({"textDocument": doc, "position": at, "newName": "Zq"}),
        ),
        7 => (
            "textDocument/codeAction",
            json!({"textDocument": doc, "range": range, "context": {"diagnostics": []}}),
        ),
        8 => ("textDocument/documentSymbol", json!({"textDocument": doc})),
        9 => ("textDocument/semanticTokens/full", json!({"textDocument": doc})),
        _ => ("textDocument/inlayHint", json!({"textDocument": doc, "range": range})),
    };
    let id = c.send_request(method, params);
    if cancel {
        c.notify("$/cancelRequest", json!({"id": id}));
    }
    id
}

proptest! {
    #![proptest_config(cfg(12))]

    #[test]
    fn through_the_server_an_edited_document_answers_as_a_fresh_one(
        steps in proptest::collection::vec((change(), ask()), 1..16)
    ) {
        // The same file (messages name it) in two servers: one edited step
        // by step, with requests of every kind between the keystrokes (some
        // cancelled at once), one given the final text.
        let dir = tempfile::tempdir().unwrap();
        let logs = tempfile::tempdir().unwrap();
        let log = logs.path().join("stderr.txt");
        let u = uri(&dir.path().join("bench.ohm"));
        let mut c = Client::start_logged(dir.path(), &[], json!({}), &log);
        c.open(&u, BASE);
        c.diagnostics(&u, 1);
        let mut text = BASE.to_string();
        let mut asked = Vec::new();
        for (k, (ch, a)) in steps.iter().enumerate() {
            text = apply(&text, ch);
            c.edit(&u, k as i64 + 2, ch.from, ch.to, &ch.text);
            if let Some(a) = a {
                asked.push((send_ask(&mut c, &u, *a), *a));
            }
        }
        for (id, a) in asked {
            let r = c.response(id);
            // Every request is answered: a result, a refusal (a rename or
            // prepareRename away from a cell: RequestFailed, -32803) or,
            // when cancelled, RequestCancelled (-32800); never an internal
            // error (-32603, a handler that panicked). LSP 3.17 error codes.
            let code = r["error"]["code"].as_i64();
            let allowed = match code {
                None => true,
                Some(-32803) => matches!(a.0, 5 | 6),
                Some(-32800) => a.3,
                Some(_) => false,
            };
            prop_assert!(allowed, "request {:?} answered {} for\n{}", a, r, text);
        }
        let (d1, h1) = answers(&mut c, &u, steps.len() as i64 + 1);
        let mut fresh = Client::start(dir.path(), json!({}));
        fresh.open(&u, &text);
        let (d2, h2) = answers(&mut fresh, &u, 1);
        prop_assert_eq!(d1, d2, "diagnostics differ for\n{}", text);
        prop_assert_eq!(h1, h2, "hints differ for\n{}", text);
        prop_assert_eq!(c.shutdown(), Some(0));
        prop_assert_eq!(fresh.shutdown(), Some(0));
        // A panic caught inside the server is still a panic: its standard
        // error must say nothing of one.
        let said = std::fs::read_to_string(&log).unwrap_or_default();
        prop_assert!(
            !said.contains("panicked") && !said.contains("internal error"),
            "the server's standard error: {}\nfor\n{}",
            said,
            text
        );
        // It wrote nothing beside the sheet (there is not even a sheet on disk).
        prop_assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
    }
}

/// The benchmark's sheet (benches/lsp_latency.rs): feeder sections behind
/// one bus voltage, a heading comment and a blank line each.
fn feeder_sheet(sections: usize) -> String {
    let mut s = String::from("# feeder sections (invented)\nV = 480 V ∠ 0°\n");
    for k in 0..sections {
        let r = 1.0 + (k % 17) as f64 * 0.25;
        let x = 0.5 + (k % 13) as f64 * 0.125;
        s.push_str(&format!(
            "# --- section {k} ---\nR{k} = {r:.3} Ω\nX{k} = j{x:.3} Ω\nZ{k} = R{k} + X{k}\nI{k} = V / Z{k}\nP{k} = re(V * conj(I{k}))\n\n"
        ));
    }
    s
}

/// A keystroke in an input's value goes through the engine's in-place
/// edit (the dependency cone recomputed), never a second compile of the
/// sheet: that is what keeps the server's answers fast on long sheets.
#[test]
fn a_digit_typed_in_an_input_is_an_edit_in_place() {
    let text = feeder_sheet(300);
    let mut doc = Document::open(None, &text, LoadOptions::default());
    assert!(!doc.engine.model.has_errors(), "{:?}", doc.engine.model.diagnostics);
    // `R20 = 1.750 Ω` → `1.757 Ω` and back, as the benchmark types.
    let line = text.lines().position(|l| l.starts_with("R150 ")).unwrap();
    let mut t = text.clone();
    for digit in ["7", "0", "7", "0"] {
        let mut ls: Vec<String> = t.split('\n').map(str::to_string).collect();
        let col = ls[line].find(" Ω").unwrap() - 1;
        ls[line].replace_range(col..col + 1, digit);
        t = ls.join("\n");
        doc.update(&t);
    }
    assert_eq!(
        (doc.counts.in_place, doc.counts.compiled),
        (4, 1),
        "{:?}",
        doc.engine.model.diagnostics
    );
    let fresh = Document::open(None, &t, LoadOptions::default());
    assert_eq!(snapshot(&doc), snapshot(&fresh));
}
