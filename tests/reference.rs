//! The language against an independent computation: every formula in
//! tests/reference/vectors.json was evaluated with mpmath at 50 digits by
//! tests/reference/gen_vectors.py (committed beside the vectors). One sheet
//! holds them all, and each cell must agree to 1e-9 relative.

use num_complex::Complex64 as C64;

use crate::common::{close, engine, repo, value};

#[derive(serde::Deserialize)]
struct Doc {
    preamble: String,
    cases: Vec<Case>,
}

#[derive(serde::Deserialize)]
struct Case {
    formula: String,
    re: f64,
    im: f64,
    what: String,
}

#[test]
fn every_form_matches_mpmath_to_1e_9() {
    let text = std::fs::read_to_string(repo("tests/reference/vectors.json")).expect("vectors");
    let doc: Doc = serde_json::from_str(&text).expect("json");
    assert!(doc.cases.len() > 60, "the vector file looks truncated");
    let mut sheet = doc.preamble.clone();
    sheet.push('\n');
    for (i, c) in doc.cases.iter().enumerate() {
        sheet.push_str(&format!("case{i} = {}\n", c.formula));
    }
    let e = engine(&sheet);
    let mut bad = Vec::new();
    for (i, c) in doc.cases.iter().enumerate() {
        let got = value(&e, &format!("case{i}"));
        let want = C64::new(c.re, c.im);
        if !close(got, want, 1e-9) {
            bad.push(format!("{} ({}): got {got}, mpmath {want}", c.formula, c.what));
        }
    }
    assert!(bad.is_empty(), "disagreements:\n{}", bad.join("\n"));
}
