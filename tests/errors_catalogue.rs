//! docs/errors.md lists every error code with an example. These tests keep
//! it honest: every code in `ErrorCode::ALL` has an entry, every sheet
//! example produces its code (exit 2), and the codes whose examples are not
//! sheets are met by the tests below.

use ohmsheet::diag::ErrorCode;
use predicates::prelude::*;

use crate::common::{ohmsheet, repo};

fn catalogue() -> String {
    std::fs::read_to_string(repo("docs/errors.md")).expect("docs/errors.md")
}

fn sections(text: &str) -> Vec<(String, String)> {
    text.split("\n## ")
        .skip(1)
        .map(|s| {
            let (head, body) = s.split_once('\n').unwrap_or((s, ""));
            (head.trim().to_string(), body.to_string())
        })
        .collect()
}

fn run_sheet_bytes(bytes: &[u8]) -> assert_cmd::assert::Assert {
    let mut f = tempfile::Builder::new().suffix(".ohm").tempfile().unwrap();
    std::io::Write::write_all(&mut f, bytes).unwrap();
    let path = f.path().to_str().unwrap().to_string();
    let a = ohmsheet().args(["run", &path]).assert();
    drop(f);
    a
}

#[test]
fn every_code_has_an_entry() {
    let text = catalogue();
    let names: Vec<String> = sections(&text).into_iter().map(|(h, _)| h).collect();
    for code in ErrorCode::ALL {
        assert!(
            names.iter().any(|n| n == code.name()),
            "error code `{}` has no entry in docs/errors.md: add it to docs/gen_errors.py and regenerate",
            code.name()
        );
    }
}

#[test]
fn every_sheet_example_produces_its_code() {
    let text = catalogue();
    let mut n = 0;
    for (code, body) in sections(&text) {
        let Some(rest) = body.split("```ohm\n").nth(1) else {
            continue;
        };
        let example = rest.split("```").next().unwrap();
        n += 1;
        run_sheet_bytes(example.as_bytes())
            .code(2)
            .stderr(predicate::str::contains(format!("error[{code}]")));
    }
    assert!(n >= 20, "only {n} sheet examples found");
}

/// An open element (a bank of 0 F, an open by IEC 60050-131's
/// definition of a capacitor's impedance −j/(ωC)) is a warning, and the
/// run succeeds.
#[test]
fn infinite_element_is_a_warning() {
    run_sheet_bytes("Zc = z_cap(0 F, 50 Hz)\n".as_bytes())
        .code(0)
        .stderr(predicate::str::contains("warning[infinite-element]"));
}

#[test]
fn trig_radians_is_a_note() {
    run_sheet_bytes(b"x = cos(30)\n")
        .code(0)
        .stderr(predicate::str::contains("warning[trig-radians]"));
}

#[test]
fn not_utf8() {
    run_sheet_bytes(b"x = 1\xff\n")
        .code(2)
        .stderr(predicate::str::contains("error[not-utf8]"));
}

#[test]
fn line_too_long() {
    let line = format!("x = {}\n", "1+".repeat(5_000) + "1");
    run_sheet_bytes(line.as_bytes())
        .code(2)
        .stderr(predicate::str::contains("error[line-too-long]"));
}

#[test]
fn nesting_too_deep() {
    let line = format!("x = {}1{}\n", "(".repeat(65), ")".repeat(65));
    run_sheet_bytes(line.as_bytes())
        .code(2)
        .stderr(predicate::str::contains("error[nesting-too-deep]"));
    // at the limit it is fine
    let line = format!("x = {}1{}\n", "(".repeat(64), ")".repeat(64));
    run_sheet_bytes(line.as_bytes()).code(0);
}

#[test]
fn too_many_cells() {
    let sheet = ohmsheet::sheet::Sheet::from_text("t.ohm", "a = 1\nb = 2\nc = 3\nd = 4\n");
    let m = ohmsheet::engine::model::compile_limited(&sheet, 3);
    assert_eq!(m.diagnostics[0].code, ErrorCode::TooManyCells);
    let m = ohmsheet::engine::model::compile_limited(&sheet, 4);
    assert!(!m.has_errors());
}

#[test]
fn bad_override_and_io() {
    let mut f = tempfile::Builder::new().suffix(".ohm").tempfile().unwrap();
    std::io::Write::write_all(&mut f, b"Vs = 120 V\n").unwrap();
    let path = f.path().to_str().unwrap().to_string();
    ohmsheet()
        .args(["run", &path, "--set", "Vx=240 V"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("error[bad-override]"));
    ohmsheet()
        .args(["run", &path, "--set", "Vs"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("error[bad-override]"));
    ohmsheet()
        .args(["run", "/nonexistent/missing.ohm"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("error[io]"));
}

#[test]
fn include_cycle_and_name_clash() {
    let d = tempfile::tempdir().unwrap();
    std::fs::create_dir(d.path().join("lib")).unwrap();
    std::fs::write(d.path().join("a.ohm"), "@include \"lib/b.ohm\"\nx = 1\n").unwrap();
    std::fs::write(d.path().join("lib/b.ohm"), "@include \"../a.ohm\"\ny = 1\n").unwrap();
    ohmsheet()
        .current_dir(d.path())
        .args(["run", "a.ohm"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("error[include-cycle]"));
    std::fs::write(d.path().join("c.ohm"), "@include \"lib/z.ohm\"\nZc = 2\n").unwrap();
    std::fs::write(d.path().join("lib/z.ohm"), "Zc = 1\n").unwrap();
    ohmsheet()
        .current_dir(d.path())
        .args(["run", "c.ohm"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("error[name-clash]"));
}

#[test]
fn control_character() {
    // ESC in a comment, and U+202E (right-to-left override) in a formula
    for bytes in [&b"x = 1 # \x1b[2J\n"[..], "y = 2 \u{202E} + 1\n".as_bytes()] {
        run_sheet_bytes(bytes)
            .code(2)
            .stderr(predicate::str::contains("error[control-character]"));
    }
}

/// `network-too-large`: a generated network one node past the limit.
#[test]
fn network_too_large() {
    let n = ohmsheet::network::MAX_NODES + 1;
    let mut s = String::from("network big at 50 Hz\n  E = emf(n1, ground, 1 V, 1 Ω)\n");
    for k in 1..n {
        s += &format!("  R{k} = branch(n{k}, n{}, 1 Ω)\n", k + 1);
    }
    s += &format!("  R{n} = branch(n{n}, ground, 1 Ω)\nend\n");
    let m = ohmsheet::engine::compile(&ohmsheet::sheet::Sheet::from_text("t.ohm", &s));
    assert_eq!(
        m.diagnostics[0].code,
        ErrorCode::NetworkTooLarge,
        "{}",
        m.diagnostics[0].message
    );
}
