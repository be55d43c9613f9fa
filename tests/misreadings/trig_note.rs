//! Misreadings: `cos(30)` reads radians (issue 13, item 9). The rule stays,
//! but a trigonometric function given a plain whole number larger than 2π
//! gets a note (a warning, not an error) with the fix. Expected values from
//! the definitions: cos 30 rad = 0.15425144988758405 (Rust's `f64::cos`,
//! the C library's correctly rounded cosine), cos 30° = √3/2.

use predicates::prelude::*;

use crate::common::{ohmsheet, value};

fn notes(src: &str) -> Vec<ohmsheet::diag::Diagnostic> {
    let sheet = ohmsheet::sheet::Sheet::from_text("t.ohm", src);
    let m = ohmsheet::engine::compile(&sheet);
    assert!(!m.has_errors(), "{:?}", m.diagnostics);
    m.diagnostics.into_iter().filter(|d| !d.is_error()).collect()
}

#[test]
fn whole_numbers_beyond_two_pi_get_a_note() {
    for (src, n) in [
        ("x = cos(30)", 1),
        ("x = sin(-45) + tan(90)", 2),
        ("x = cos(7)", 1),
        ("x = 2 * cos(+360)", 1),
        // brackets and signs around the literal (issue-13 audit: `cos(-(60))` had no note)
        ("x = cos(-(60))", 1),
        ("x = sin((45))", 1),
        ("x = tan(-(-(90)))", 1),
    ] {
        let d = notes(src);
        assert_eq!(d.len(), n, "{src}: {d:?}");
        for d in &d {
            assert_eq!(d.code, ohmsheet::diag::ErrorCode::TrigRadians);
            let hint = d.hint.as_deref().unwrap();
            assert!(hint.contains("°)`") && hint.contains(" rad)`"), "{hint}");
        }
    }
    // inside a check too
    assert_eq!(notes("a = 1\ncheck cos(60) ~= 0.5 +- 1%").len(), 1);
}

#[test]
fn no_note_where_the_meaning_is_clear() {
    for src in [
        "x = cos(30°)",
        "x = cos(30 rad)",
        "x = cos(6)", // below 2π: a likely radian value
        "x = cos(0.5)",
        "x = cos(7.5)", // not a whole number
        "x = cos(2 * pi)",
        "t = 30\nx = cos(t)",
        "x = acos(30)",
        "x = cosh(30)",
        "x = cos((30) rad)",
        "x = cos(-(30°))",
    ] {
        let sheet = ohmsheet::sheet::Sheet::from_text("t.ohm", src);
        let m = ohmsheet::engine::compile(&sheet);
        assert!(
            m.diagnostics
                .iter()
                .all(|d| d.code != ohmsheet::diag::ErrorCode::TrigRadians),
            "{src}"
        );
    }
}

#[test]
fn the_rule_is_kept() {
    let e = crate::common::engine("x = cos(30)\ny = cos(30°)\n");
    assert_eq!(value(&e, "x").re, 30f64.cos());
    assert!((value(&e, "y").re - 3f64.sqrt() / 2.0).abs() < 1e-15);
}

#[test]
fn run_check_and_session_show_it_and_exit_as_before() {
    let d = tempfile::tempdir().unwrap();
    let sheet = d.path().join("t.ohm");
    std::fs::write(&sheet, "x = cos(30)\ncheck x ~= 0.15425 +- 0.01%\n").unwrap();
    let s = sheet.to_str().unwrap();
    ohmsheet()
        .args(["run", s])
        .assert()
        .code(0)
        .stderr(predicate::str::contains("warning[trig-radians]"))
        .stderr(predicate::str::contains("cos(30°)"));
    ohmsheet()
        .args(["check", s])
        .assert()
        .code(0)
        .stderr(predicate::str::contains("warning[trig-radians]"));
    // machine-readable output stays clean: the note is on stderr
    let out = ohmsheet().args(["run", s, "--format", "json"]).output().unwrap();
    assert_eq!(out.status.code(), Some(0));
    serde_json::from_slice::<serde_json::Value>(&out.stdout).expect("JSON on stdout");
    // a failed check still exits 1 with the note beside it
    std::fs::write(&sheet, "x = cos(30)\ncheck x ~= 0.5 +- 0.01%\n").unwrap();
    ohmsheet().args(["check", s]).assert().code(1);
    // the session shows the note after the value
    std::fs::write(&sheet, "a = 1\n").unwrap();
    let out = ohmsheet()
        .arg(s)
        .env("HOME", d.path())
        .env("XDG_DATA_HOME", d.path())
        .write_stdin("cos(30)\n")
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout).to_string() + &String::from_utf8_lossy(&out.stderr);
    assert!(
        text.contains("0.1543") && text.contains("warning[trig-radians]"),
        "{text}"
    );
}
