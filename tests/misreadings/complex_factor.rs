//! Misreadings: a real or reactive power times a cell with an imaginary
//! part (issue 13, item 2; language rule 2). `Q2 = k * Q` with
//! `k = 1 + j1` stayed a reactive power and was shown as "100 + j100 var",
//! a var value with an imaginary part. P and Q are real numbers (P = Re S,
//! Q = Im S, IEEE Std 1459-2010), so such a product is a complex power
//! (VA); a factor real by construction keeps W or var. The values follow
//! complex multiplication: (1 + j)·100 = 100 + j100.

use num_complex::Complex64 as C64;

use crate::common::{engine, errors, ohmsheet, value};
use ohmsheet::units::Kind;

fn kind(e: &ohmsheet::engine::Engine, name: &str) -> Kind {
    let id = e.model.id(name).unwrap();
    e.model.cells[id as usize].quantity().unwrap().kind
}

#[test]
fn a_power_times_a_complex_cell_is_a_complex_power() {
    let e = engine(
        "k = 1 + j1\nQ = 100 var\nP = 50 W\nQ2 = k * Q\nQ3 = Q * k\nP2 = k * P\nQ4 = Q / k\n\
         m = 2\nQ5 = m * Q\nQ6 = abs(k) * Q\nQ7 = re(k) * Q\n",
    );
    for n in ["Q2", "Q3", "P2", "Q4"] {
        assert_eq!(kind(&e, n), Kind::ApparentPower, "{n}");
    }
    assert_eq!(value(&e, "Q2"), C64::new(100.0, 100.0));
    assert_eq!(value(&e, "P2"), C64::new(50.0, 50.0));
    // 100/(1 + j) = 50 − j50
    assert_eq!(value(&e, "Q4"), C64::new(50.0, -50.0));
    // real by construction: a real input, abs, re
    for n in ["Q5", "Q6", "Q7"] {
        assert_eq!(kind(&e, n), Kind::ReactivePower, "{n}");
    }
    assert_eq!(value(&e, "Q5"), C64::new(200.0, 0.0));
}

#[test]
fn var_plus_a_complex_multiple_of_var_is_refused_with_the_hint() {
    let d = errors("k = 1 + j1\nQ = 100 var\nS = Q + k * Q\n");
    assert!(
        d.iter().any(|d| d.hint.as_deref().is_some_and(|h| h.contains("j*Q"))),
        "{d:?}"
    );
}

#[test]
fn run_shows_va_and_a_set_decides_again() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("k.ohm");
    std::fs::write(&p, "k = 1 + j1\nQ = 100 var\nQ2 = k * Q\n").unwrap();
    let out = ohmsheet().args(["run", p.to_str().unwrap()]).output().unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("100 + j100 VA"), "{text}");
    assert!(!text.contains("j100 var"), "{text}");
    // --set k=2 recompiles: a real factor keeps var (2 · 100 var = 200 var)
    let out = ohmsheet()
        .args(["run", p.to_str().unwrap(), "--set", "k=2"])
        .output()
        .unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("200 var"), "{text}");
}

/// A session edit that makes the factor complex decides the kinds again:
/// `Q2` becomes 100 + j100 VA, never "100 + j100 var".
#[test]
fn a_session_edit_making_the_factor_complex_gives_va() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("k.ohm");
    std::fs::write(&p, "k = 2\nQ = 100 var\nQ2 = k * Q\n").unwrap();
    let (mut s, _) = ohmsheet::session::state::Session::open(Some(&p), Some(dir.path().join("data")), false).unwrap();
    let r = s.handle("k = 1 + j1");
    assert!(!r.refused, "{}", r.text);
    assert!(r.text.contains("100 + j100 VA"), "{}", r.text);
    assert_eq!(kind(&s.engine, "Q2"), Kind::ApparentPower);
    assert_eq!(value(&s.engine, "Q2"), C64::new(100.0, 100.0));
}

/// In a batch the kinds are those of the sheet: a case that makes the
/// factor of a var value complex fails that cell with the reason, and the
/// var column stays one real number (2 · 100 var = 200 var).
#[test]
fn a_batch_case_making_the_factor_complex_fails_the_var_cell() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("k.ohm");
    std::fs::write(&p, "k = 2\nQ = 100 var\nQ2 = k * Q\n").unwrap();
    let c = dir.path().join("c.csv");
    std::fs::write(&c, "k\n2\n(1+j1)\n").unwrap();
    let out = dir.path().join("o.csv");
    ohmsheet()
        .args(["batch", p.to_str().unwrap(), "--cases", c.to_str().unwrap()])
        .args(["--out", out.to_str().unwrap(), "--quiet"])
        .assert()
        .code(1);
    let text = std::fs::read_to_string(&out).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines[0], "k,Q2 [var]");
    assert_eq!(lines[1], "2,200");
    assert_eq!(lines[2], "(1+j1),");
    let errs = std::fs::read_to_string(dir.path().join("o.errors.csv")).unwrap();
    assert!(
        errs.contains("`Q2` has an imaginary part where none was expected"),
        "{errs}"
    );
}
