//! Misreadings: the target of a search or a solve follows the kind rules
//! of a check's two sides (docs/grammar.md's kinds table). An angle against
//! a plain number is read two ways (degrees or radians?) and a reactive
//! power against a real power is not one quantity (IEEE Std 1459: Q is the
//! imaginary part of S = P + jQ), so both are refused, never read one way
//! (found by the issue-13 audit: `where arg(Z) = 0.5` was taken as 0.5 rad
//! while `∠ 0.5` reads degrees, and `where im(S) = 100 kW` as 100 kvar).

use ohmsheet::diag::ErrorCode;
use predicates::prelude::*;

use crate::common::{engine, errors, ohmsheet, value};

#[test]
fn a_search_target_of_another_kind_is_refused() {
    let d = errors("Rl = 10 Ω\nR = 5 Ω\nZ = Rl + j*R\nX = R in 1 Ω .. 100 Ω where arg(Z) = 0.5\n");
    assert!(d.iter().any(|d| d.code == ErrorCode::AngleAmbiguous), "{d:?}");
    let d = errors("P = 100 kW\nq = 10 kvar\nS = P + j*q\nQ = q in 0 kvar .. 500 kvar where im(S) = 100 kW\n");
    assert!(d.iter().any(|d| d.code == ErrorCode::KindMismatch), "{d:?}");
}

// Closed forms (from memory): arg(R + jX) = 30° at X = R·tan 30°, and the
// imaginary part of P + jQ is Q.
#[test]
fn a_search_target_of_the_same_kind_is_found() {
    let e = engine("Rl = 10 Ω\nR = 5 Ω\nZ = Rl + j*R\nX = R in 1 Ω .. 100 Ω where arg(Z) = 30°\n");
    let x = value(&e, "X");
    assert!((x.re - 10.0 * (30f64).to_radians().tan()).abs() < 1e-6, "{x}");
    let e = engine("P = 100 kW\nq = 10 kvar\nS = P + j*q\nQ = q in 0 kvar .. 500 kvar where im(S) = 120 kvar\n");
    assert!((value(&e, "Q").re - 120e3).abs() < 1e-3);
}

#[test]
fn a_solve_target_of_another_kind_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("t.ohm");
    std::fs::write(
        &path,
        "R = 20 Ω\nXl = 10 Ω\nZ = R + j*Xl\nP = 100 kW\nQ = 50 kvar\nS = P + j*Q\n",
    )
    .unwrap();
    ohmsheet()
        .arg("solve")
        .arg(&path)
        .args(["--vary", "Xl=1 Ω..100 Ω", "--target", "arg(Z) = 0.5"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("degrees or radians"))
        .stderr(predicate::str::contains("30°"));
    ohmsheet()
        .arg("solve")
        .arg(&path)
        .args(["--vary", "Q=0 kvar..500 kvar", "--target", "im(S) = 100 kW"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("P + j*Q"));
    // the same targets with their kinds are solved: tan(30°)·20 Ω
    ohmsheet()
        .arg("solve")
        .arg(&path)
        .args([
            "--vary",
            "Xl=1 Ω..100 Ω",
            "--target",
            "arg(Z) = 30°",
            "--format",
            "json",
        ])
        .assert()
        .success()
        .stdout(predicate::str::contains("11.547"));
}
