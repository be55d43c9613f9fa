//! Misreadings: infinite values (issue 13). A value that came out
//! infinite was shown as `∞ A` with no word of why. Now an infinite
//! impedance or admittance — an open or a short element, whose limits the
//! network functions take — is shown with a warning saying which it is and
//! where it came from; any other infinite quantity (a current through a
//! short across an ideal source, a ratio with a zero denominator, ln 0) is
//! an error located on the operation, in every entry point.
//!
//! The physics: an ideal voltage source across a short drives an infinite
//! current (Ohm's law, I = V/R at R = 0); a capacitor of 0 F is an open,
//! Z = −j/(ωC) → −j∞ (IEC 60050-131); 1/R at R = 0 is an infinite
//! admittance, a short. ln 0 = −∞ (DLMF §4.2).

use num_complex::Complex64 as C64;

use crate::common::{engine, ohmsheet, value};

const SHORTED: &str = "V = 10 V\nR = 0 Ω\nI = V / R\nP = I * V\n";

fn sheet(dir: &tempfile::TempDir, text: &str) -> std::path::PathBuf {
    let p = dir.path().join("s.ohm");
    std::fs::write(&p, text).unwrap();
    p
}

fn stderr(a: &assert_cmd::assert::Assert) -> String {
    String::from_utf8(a.get_output().stderr.clone()).unwrap()
}

#[test]
fn run_refuses_a_current_through_a_short_on_the_division() {
    let dir = tempfile::tempdir().unwrap();
    let p = sheet(&dir, SHORTED);
    let a = ohmsheet().args(["run", p.to_str().unwrap()]).assert().code(2);
    let err = stderr(&a);
    assert!(err.contains("error[infinite-value]"), "{err}");
    assert!(
        err.contains("`I` is infinite (∞ A): `V / R` divides by zero (`R` = 0 Ω)"),
        "{err}"
    );
    assert!(err.contains("s.ohm:3:5"), "located on the division: {err}");
    // reported once: `P` uses `I` and is not blamed again
    assert_eq!(err.matches("error[infinite-value]").count(), 1, "{err}");
}

#[test]
fn an_open_element_is_a_warning_and_its_limit_is_kept() {
    let dir = tempfile::tempdir().unwrap();
    let p = sheet(
        &dir,
        "Zs = (0.1 + j0.5) Ω\nZc = z_cap(0 F, 60 Hz)\nZo = (1/0) Ω\nZp = Zs || Zc\nV = vdiv(480 V, Zs, Zc)\n",
    );
    let a = ohmsheet().args(["run", p.to_str().unwrap()]).assert().code(0);
    let err = stderr(&a);
    assert!(
        err.contains("warning[infinite-element]: `Zc` is -j∞ Ω, an open (infinite impedance)"),
        "{err}"
    );
    assert!(err.contains("`z_cap(C = 0 F, f = 60 Hz)` is infinite there"), "{err}");
    assert!(err.contains("`Zo` is ∞ Ω, an open"), "{err}");
    assert!(!err.contains("error"), "{err}");
    let e = engine(&std::fs::read_to_string(&p).unwrap());
    // (1/0) Ω is ∞ + j0, not ∞ + jNaN
    assert_eq!(value(&e, "Zo"), C64::new(f64::INFINITY, 0.0));
    // an open shunt leaves the series element alone, and no current flows
    // in it: the divider gives the whole source voltage
    assert_eq!(value(&e, "Zp"), C64::new(0.1, 0.5));
    assert_eq!(value(&e, "V"), C64::new(480.0, 0.0));
}

#[test]
fn a_value_through_a_short_element_names_it() {
    let e = engine("V = 10 V\nR = 0 Ω\nY = 1 / R\nI = V * Y\nr = V / (0 V)\nl = ln(0)\n");
    let origins = e.inf_origins();
    let id = |n: &str| e.model.id(n).unwrap();
    assert!(origins.contains(&(id("Y"), false)), "a short is a warning: {origins:?}");
    assert!(origins.contains(&(id("I"), true)), "{origins:?}");
    let d = e.inf_diagnostic(id("I"), true);
    assert!(
        d.message.contains("it uses `Y` = ∞ S, a short (infinite admittance)"),
        "{}",
        d.message
    );
    let d = e.inf_diagnostic(id("r"), true);
    assert!(d.message.contains("`V / (0 V)` divides by zero"), "{}", d.message);
    let d = e.inf_diagnostic(id("l"), true);
    assert!(
        d.message.contains("`ln`: argument `x` = 0: the logarithm of 0 is −∞"),
        "{}",
        d.message
    );
}

#[test]
fn check_and_report_fail_on_an_infinite_current() {
    let dir = tempfile::tempdir().unwrap();
    let p = sheet(&dir, &format!("{SHORTED}check abs(I) ~= 2 A +- 0.1 A\n"));
    let a = ohmsheet().args(["check", p.to_str().unwrap()]).assert().code(2);
    assert!(stderr(&a).contains("`V / R` divides by zero"), "{}", stderr(&a));
    let out = dir.path().join("r.md");
    let a = ohmsheet()
        .args(["report", p.to_str().unwrap(), "-o", out.to_str().unwrap()])
        .assert()
        .code(2);
    assert!(stderr(&a).contains("error[infinite-value]"), "{}", stderr(&a));
    assert!(!out.exists(), "no report is written");
}

#[test]
fn run_set_to_a_short_is_explained_at_the_division() {
    let dir = tempfile::tempdir().unwrap();
    let p = sheet(&dir, "V = 10 V\nR = 5 Ω\nI = V / R\n");
    let a = ohmsheet()
        .args(["run", p.to_str().unwrap(), "--set", "R=0 Ω"])
        .assert()
        .code(2);
    assert!(stderr(&a).contains("divides by zero (`R` = 0 Ω)"), "{}", stderr(&a));
}

/// More than one block of 64 cases: a short in a row leaves that row's
/// current empty with the reason; the admittance 1/R of a short is
/// written `inf` (an element); the other rows give V/R (Ohm's law).
#[test]
fn a_batch_leaves_an_infinite_current_empty_with_the_reason() {
    let dir = tempfile::tempdir().unwrap();
    let p = sheet(&dir, "V = 10 V\nR = 1 Ω\nI = V / R\nY = 1 / R\n");
    let mut cases = String::from("R [Ω]\n");
    for i in 0..100 {
        cases.push_str(if i % 25 == 7 { "0\n" } else { "5\n" });
    }
    let c = dir.path().join("c.csv");
    std::fs::write(&c, cases).unwrap();
    let out = dir.path().join("r.csv");
    ohmsheet()
        .args(["batch", p.to_str().unwrap(), "--cases", c.to_str().unwrap()])
        .args(["--out", out.to_str().unwrap(), "--quiet"])
        .assert()
        .code(1);
    let text = std::fs::read_to_string(&out).unwrap();
    let mut lines = text.lines();
    let head: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |n: &str| head.iter().position(|h| h.starts_with(n)).unwrap();
    for (i, line) in lines.enumerate() {
        let f: Vec<&str> = line.split(',').collect();
        if i % 25 == 7 {
            assert_eq!(f[col("I")], "", "row {i}: {line}");
            assert_eq!(f[col("Y")], "inf", "row {i}: {line}");
        } else {
            assert_eq!(f[col("I")].parse::<f64>().unwrap(), 2.0, "row {i}");
        }
    }
    let errs = std::fs::read_to_string(dir.path().join("r.errors.csv")).unwrap();
    assert_eq!(errs.matches("`V / R` divides by zero (`R` = 0 Ω)").count(), 4, "{errs}");
}

#[test]
fn a_sweep_through_a_short_warns_with_the_reason() {
    let dir = tempfile::tempdir().unwrap();
    let p = sheet(&dir, "V = 10 V\nR = 1 Ω\nI = V / R\n");
    let a = ohmsheet()
        .args(["sweep", p.to_str().unwrap(), "--vary", "R=0 Ω..4 Ω", "--points", "5"])
        .args(["--show", "I", "--csv", "-"])
        .assert()
        .code(0);
    let err = stderr(&a);
    assert!(err.contains("`V / R` divides by zero (`R` = 0 Ω)"), "{err}");
}

#[test]
fn a_session_edit_that_shorts_a_source_says_why() {
    let dir = tempfile::tempdir().unwrap();
    let p = sheet(&dir, "V = 10 V\nR = 5 Ω\nI = V / R\n");
    let (mut s, _) = ohmsheet::session::state::Session::open(Some(&p), Some(dir.path().join("data")), false).unwrap();
    let r = s.handle("R = 0 Ω");
    assert!(r.text.contains("`V / R` divides by zero (`R` = 0 Ω)"), "{}", r.text);
}
