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
//! edited step by step and a second document opened with the final text
//! get the same hints and diagnostics.

use proptest::prelude::*;
use serde_json::{json, Value};

use ohmsheet::analysis::{hints::hints, problems::problems, Display, Document};
use ohmsheet::lsp::convert;
use ohmsheet::sheet::LoadOptions;

use crate::common::lsp::{uri, Client};

const CASES: u32 = 96;

fn cfg(cases: u32) -> ProptestConfig {
    ProptestConfig {
        cases: std::env::var("PROPTEST_CASES")
            .ok()
            .and_then(|s| s.parse().ok())
            .unwrap_or(cases),
        failure_persistence: None,
        ..ProptestConfig::default()
    }
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
            "@title \"bench\"\n", "network n at 50 Hz\n",
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

proptest! {
    #![proptest_config(cfg(12))]

    #[test]
    fn through_the_server_an_edited_document_answers_as_a_fresh_one(changes in proptest::collection::vec(change(), 1..16)) {
        // The same file (messages name it) in two servers: one edited step
        // by step, one given the final text.
        let dir = tempfile::tempdir().unwrap();
        let u = uri(&dir.path().join("bench.ohm"));
        let mut c = Client::start(dir.path(), json!({}));
        c.open(&u, BASE);
        c.diagnostics(&u, 1);
        let mut text = BASE.to_string();
        for (k, ch) in changes.iter().enumerate() {
            text = apply(&text, ch);
            c.edit(&u, k as i64 + 2, ch.from, ch.to, &ch.text);
        }
        let (d1, h1) = answers(&mut c, &u, changes.len() as i64 + 1);
        let mut fresh = Client::start(dir.path(), json!({}));
        fresh.open(&u, &text);
        let (d2, h2) = answers(&mut fresh, &u, 1);
        prop_assert_eq!(d1, d2, "diagnostics differ for\n{}", text);
        prop_assert_eq!(h1, h2, "hints differ for\n{}", text);
        prop_assert_eq!(c.shutdown(), Some(0));
        prop_assert_eq!(fresh.shutdown(), Some(0));
    }
}
