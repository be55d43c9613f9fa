//! Misreadings: a value given to an input must have the input's dimension
//! and kind at every entry point (issue 13, item 2; language rule 2). The
//! `--set` check was skipped when the sheet's own formula was a search or
//! named a cell the override ranks after it, and a session edit that gave
//! an input a value of another dimension was taken when nothing that uses
//! the input broke (a plain `k` used only in a product). Both are refused
//! now, located at the value. Dimensions as in the SI Brochure (9th ed.):
//! a voltage is not a current, and a plain number is not a voltage.

use crate::common::ohmsheet;

fn run_set(text: &str, set: &str) -> (i32, String, String) {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("s.ohm");
    std::fs::write(&p, text).unwrap();
    let out = ohmsheet()
        .args(["run", p.to_str().unwrap(), "--set", set])
        .output()
        .unwrap();
    (
        out.status.code().unwrap(),
        String::from_utf8(out.stdout).unwrap(),
        String::from_utf8(out.stderr).unwrap(),
    )
}

#[test]
fn set_is_checked_when_the_formula_names_a_later_cell() {
    // `Vs` is written from `Vbus`, which the override ranks after it
    let sheet = "Vs = Vbus * 1.05\nVbus = 480 V\nI = Vs / 10 Ω\n";
    let (code, _, err) = run_set(sheet, "Vs=480");
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("`Vs` is a voltage (V); `480` is a plain number"), "{err}");
    assert!(err.contains("--set:1:4"), "located at the override: {err}");
    assert!(err.contains("write `480 V`"), "{err}");
    // nothing downstream would break: still refused
    let (code, _, err) = run_set("Vs = Vbus * 1.05\nVbus = 480 V\nn = 3\n", "Vs=480 A");
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("`Vs` is a voltage (V); `480 A` is a current (A)"), "{err}");
    // the right dimension is taken: 500 V / 10 Ω = 50 A (Ohm's law)
    let (code, out, err) = run_set(sheet, "Vs=500 V");
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("50 A"), "{out}");
}

#[test]
fn set_is_checked_when_the_formula_is_a_search() {
    // Rn is a resistance found by a search; a current cannot replace it
    let sheet_r = "V = 100 V\nR = 10 Ω\nRn = R in 1 Ω .. 100 Ω where V^2/R = 500 W\nI = V / Rn\n";
    let (code, _, err) = run_set(sheet_r, "Rn=5 A");
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("`Rn` is an impedance (Ω); `5 A` is a current (A)"),
        "{err}"
    );
    // and the kind too: a search for a reactive power given a real one
    let sheet = "P = 100 kW\nQc = 10 kvar\nS = P + j*(60 kvar - Qc)\nQn = Qc in 0 var .. 100 kvar where pf(S) = 0.95\n";
    let (code, _, err) = run_set(sheet, "Qn=20 kW");
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("`Qn` is a reactive power (var)"), "{err}");
    // V²/R = 500 W at 100 V is R = 20 Ω (P = V²/R): a resistance is taken
    let (code, out, err) = run_set(sheet_r, "Rn=20 Ω");
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("5 A"), "{out}");
}

#[test]
fn a_session_edit_of_an_input_to_another_dimension_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    // `k` is a plain factor; `y = k * 2` would not break with `k = 2 A`
    std::fs::write(&sheet, "k = 3\ny = k * 2\nV = 10 V\nI = V / 5 Ω\n").unwrap();
    let (mut s, _) =
        ohmsheet::session::state::Session::open(Some(&sheet), Some(dir.path().join("data")), false).unwrap();
    let r = s.handle("k = 2 A");
    assert!(r.refused, "{}", r.text);
    assert!(
        r.text.contains("`k` is a plain number; `2 A` is a current (A)"),
        "{}",
        r.text
    );
    assert_eq!(s.engine.value(s.engine.model.id("k").unwrap()).re, 3.0, "unchanged");
    // a voltage input given a current, though `I` is fine either way
    let r = s.handle("V = 10 A");
    assert!(r.refused, "{}", r.text);
    // the same dimension is taken
    let r = s.handle("V = 20 V");
    assert!(!r.refused, "{}", r.text);
}
