//! Checks over the tolerances: `check … over the box` and
//! `check … over N % of samples` (docs/tolerances.md).

use ohmsheet::diag::ErrorCode;
use ohmsheet::engine::compile;
use ohmsheet::sheet::Sheet;
use ohmsheet::spread::checks::check_verdicts;
use predicates::prelude::*;

use crate::common::{engine, errors, ohmsheet};

const DIVIDER: &str = "Vs = 10 V\nR1 = 1 kΩ within 5 %\nR2 = 3 kΩ within 1 %\nVo = Vs * R2 / (R1 + R2)\n";

fn sheet_file(dir: &tempfile::TempDir, text: &str) -> String {
    let p = dir.path().join("t.ohm");
    std::fs::write(&p, text).unwrap();
    p.to_str().unwrap().to_string()
}

// The divider's extremes are 10·2.97/4.02 = 7.388 V and 10·3.03/3.98 =
// 7.613 V (closed form at the corners): 1.5 % from 7.5 V at most.
#[test]
fn over_the_box_holds_only_if_every_corner_does() {
    let e = engine(&format!(
        "{DIVIDER}check Vo ~= 7.5 V +- 2 % over the box\ncheck Vo ~= 7.5 V +- 1 % over the box\n"
    ));
    let (plan, v) = check_verdicts(&e);
    assert!(plan.is_some());
    assert_eq!(v.len(), 2);
    assert!(v[0].passed);
    assert!(!v[1].passed);
    let worst = v[1].worst.as_ref().unwrap();
    // The larger departure: 7.5 − 7.388 = 0.1119 V against 7.613 − 7.5 = 0.1131 V.
    let far = 10.0 * 3.03 / (0.95 + 3.03) - 7.5;
    assert!((v[1].worst_diff - far).abs() < 1e-12, "{}", v[1].worst_diff);
    assert!((v[1].worst_allowed - 0.075).abs() < 1e-12);
    assert!(worst.at_corner);
    // At the stated values both pass: the plain checks are unchanged.
    let rows = ohmsheet::output::check_rows(&e, Default::default());
    assert!(rows[0].passed && !rows[1].passed);
    assert!(rows[1].over.as_deref().unwrap().contains("FAILS"));
    assert!(
        rows[1].over.as_deref().unwrap().contains("R1 −5 %"),
        "{:?}",
        rows[1].over
    );
}

// Linearised, Vo/7.5 − 1 ≈ 0.25·(δ2 − δ1) with δ1 uniform on ±5 % and δ2
// on ±1 %: |Vo − 7.5 V| ≤ 1 % when |δ1 − δ2| ≤ 4 %, which for every δ2 in
// ±1 % is a stretch of 8 % out of δ1's 10 %: 80 % of samples (worked by
// hand; the non-linear part moves it by well under 1 %).
#[test]
fn over_a_share_of_samples_counts_them() {
    let e = engine(&format!(
        "{DIVIDER}check Vo ~= 7.5 V +- 1 % over 75 % of samples\ncheck Vo ~= 7.5 V +- 1 % over 85 % of samples\n"
    ));
    let (_, v) = check_verdicts(&e);
    let f = v[0].found_share.unwrap();
    assert!((f - 0.8).abs() < 0.02, "{f}");
    assert_eq!(v[0].samples, 10_000);
    assert!(v[0].passed);
    assert!(!v[1].passed);
}

#[test]
fn without_tolerances_the_box_is_the_stated_point() {
    let e = engine("Vs = 10 V\nI = Vs / 5 Ω\ncheck I ~= 2 A +- 1 % over the box\ncheck I ~= 3 A +- 1 % over the box\n");
    let (plan, v) = check_verdicts(&e);
    assert!(plan.is_none());
    assert!(v[0].passed && !v[1].passed);
}

#[test]
fn a_share_outside_0_to_100_percent_is_refused() {
    for s in ["0", "150"] {
        let d = errors(&format!("{DIVIDER}check Vo ~= 7.5 V +- 1 % over {s} % of samples\n"));
        assert_eq!(d[0].code, ErrorCode::BadTolerance);
    }
    // A malformed clause is a syntax error at the clause.
    let d = errors(&format!("{DIVIDER}check Vo ~= 7.5 V +- 1 % over the samples\n"));
    assert_eq!(d[0].code, ErrorCode::Syntax);
    // `over` is no unit: `+- 1 over` is 1 followed by the clause.
    let m = compile(&Sheet::from_text("t.ohm", "x = 2\ncheck x ~= 2 +- 1 over the box\n"));
    assert!(!m.has_errors());
    assert_eq!(m.spread_checks.len(), 1);
}

#[test]
fn run_and_check_exit_1_when_a_check_fails_over_the_box() {
    let dir = tempfile::tempdir().unwrap();
    let p = sheet_file(&dir, &format!("{DIVIDER}check Vo ~= 7.5 V +- 1 % over the box\n"));
    ohmsheet()
        .args(["run", &p])
        .assert()
        .code(1)
        .stdout(predicate::str::contains("over the box: FAILS at R1"));
    ohmsheet()
        .args(["check", &p])
        .assert()
        .code(1)
        .stdout(predicate::str::contains("FAIL").and(predicate::str::contains("over the box: FAILS")));
    let out = ohmsheet()
        .args(["check", &p, "--format", "json"])
        .assert()
        .code(1)
        .get_output()
        .stdout
        .clone();
    let text = String::from_utf8(out).unwrap();
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let c = &v["sheets"][0]["checks"][0];
    assert_eq!(c["verdict"], "fail");
    assert!(c["over"].as_str().unwrap().contains("FAILS"));
    let junit = ohmsheet()
        .args(["check", &p, "--format", "junit"])
        .assert()
        .code(1)
        .get_output()
        .stdout
        .clone();
    assert!(String::from_utf8(junit).unwrap().contains("over the box: FAILS"));
    let p = sheet_file(&dir, &format!("{DIVIDER}check Vo ~= 7.5 V +- 2 % over the box\n"));
    ohmsheet()
        .args(["check", &p])
        .assert()
        .code(0)
        .stdout(predicate::str::contains("over the box: holds"));
}
