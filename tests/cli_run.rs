//! `ohmsheet run` as a user meets it: output, formats, overrides, exit codes
//! and the bad inputs the language promises to refuse cleanly.

use predicates::prelude::*;

use crate::common::ohmsheet;

fn sheet(text: &str) -> tempfile::NamedTempFile {
    let mut f = tempfile::Builder::new().suffix(".ohm").tempfile().unwrap();
    std::io::Write::write_all(&mut f, text.as_bytes()).unwrap();
    f
}

fn sheet_bytes(bytes: &[u8]) -> tempfile::NamedTempFile {
    let mut f = tempfile::Builder::new().suffix(".ohm").tempfile().unwrap();
    std::io::Write::write_all(&mut f, bytes).unwrap();
    f
}

const DIVIDER: &str = "Vs = 120 V\nR1 = 100 Ω\nR2 = 50 Ω\nVout = Vs * R2 / (R1 + R2)\ncheck Vout ~= 40 V +- 0.1%\n";

#[test]
fn run_prints_values_formulas_and_checks() {
    let f = sheet(DIVIDER);
    ohmsheet()
        .args(["run", f.path().to_str().unwrap()])
        .assert()
        .code(0)
        .stdout(predicate::str::contains("Vout"))
        .stdout(predicate::str::contains("40 V"))
        .stdout(predicate::str::contains("Vs * R2 / (R1 + R2)"))
        .stdout(predicate::str::contains("pass"));
}

#[test]
fn failed_check_exits_1() {
    let f = sheet("x = 2 V\ncheck x ~= 3 V +- 1%\n");
    ohmsheet()
        .args(["run", f.path().to_str().unwrap()])
        .assert()
        .code(1)
        .stdout(predicate::str::contains("FAIL"));
}

#[test]
fn set_overrides_an_input() {
    let f = sheet(DIVIDER);
    ohmsheet()
        .args([
            "run",
            f.path().to_str().unwrap(),
            "--set",
            "Vs=240 V",
            "--format",
            "json",
        ])
        .assert()
        .code(1) // the check for 40 V now fails: Vout is 80 V
        .stdout(predicate::str::contains("\"re\": 80.0"));
    ohmsheet()
        .args(["run", f.path().to_str().unwrap(), "--set", "Vx=240 V"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("did you mean `Vs`"));
}

#[test]
fn json_has_si_values_and_display() {
    let f = sheet("C = 136.3 µF\n");
    let out = ohmsheet()
        .args(["run", f.path().to_str().unwrap(), "--format", "json"])
        .assert()
        .code(0)
        .get_output()
        .stdout
        .clone();
    let v: serde_json::Value = serde_json::from_slice(&out).unwrap();
    let cell = &v["cells"][0];
    assert_eq!(cell["name"], "C");
    assert_eq!(cell["unit"], "F");
    assert!((cell["re"].as_f64().unwrap() - 1.363e-4).abs() < 1e-16);
    assert_eq!(cell["display"], "136.3 µF");
    assert!(v["checks"].as_array().unwrap().is_empty());
}

#[test]
fn csv_format() {
    let f = sheet("R = 5 Ω\n");
    ohmsheet()
        .args(["run", f.path().to_str().unwrap(), "--format", "csv"])
        .assert()
        .code(0)
        .stdout(predicate::str::starts_with(
            "name,formula,unit,re,im,display,polar\nR,5 Ω,Ω,5,0,5 Ω,",
        ));
}

#[test]
fn digits_option() {
    let f = sheet("x = 1/3\n");
    ohmsheet()
        .args(["run", f.path().to_str().unwrap(), "--digits", "8"])
        .assert()
        .stdout(predicate::str::contains("0.33333333"));
}

/// Every bad input the language lists: exit 2, a located message, no panic.
fn refuses(text: &[u8], located: &str) {
    let f = sheet_bytes(text);
    let name = f.path().to_str().unwrap().to_string();
    ohmsheet()
        .args(["run", &name])
        .timeout(std::time::Duration::from_secs(20))
        .assert()
        .code(2)
        .stderr(predicate::str::contains(format!("{name}:{located}")))
        .stderr(predicate::str::contains("panicked").not());
}

#[test]
fn bad_inputs_exit_2_with_a_location() {
    refuses(b"a = b\nb = a\n", "1:1");
    refuses(b"x = 1\ny = xx + 1\n", "2:5");
    refuses(b"x = 20 ohms\n", "1:8");
    refuses(b"x = 5 V + 3 A\n", "1:");
    refuses(b"x = (1 + 2\n", "1:5");
    refuses(b"", "1:1");
    refuses(b"   \n# only a comment\n", "1:1");
}

#[test]
fn deep_nesting_is_refused_not_overflowed() {
    let mut t = b"x = ".to_vec();
    t.extend(std::iter::repeat_n(b'(', 200_000));
    t.push(b'1');
    t.extend(std::iter::repeat_n(b')', 200_000));
    refuses(&t, "1:");
}

#[test]
fn random_bytes_are_refused() {
    // A fixed pseudo-random byte string (xorshift), including invalid UTF-8.
    let mut x: u64 = 0x9E37_79B9_7F4A_7C15;
    let bytes: Vec<u8> = (0..4096)
        .map(|_| {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            (x >> 24) as u8
        })
        .collect();
    refuses(&bytes, "1:");
}

#[test]
fn nan_names_the_cell_that_made_it() {
    let f = sheet("a = 0 V\nb = a / a\nc = b * 2\n");
    let name = f.path().to_str().unwrap().to_string();
    ohmsheet()
        .args(["run", &name])
        .assert()
        .code(2)
        .stderr(predicate::str::contains(format!("{name}:2:1")))
        .stderr(predicate::str::contains("`b` evaluated to NaN"));
}

#[test]
fn missing_file_and_bad_flags_exit_2() {
    ohmsheet()
        .args(["run", "/nonexistent/x.ohm"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("cannot read"));
    ohmsheet().args(["run"]).assert().code(2);
    ohmsheet().args(["frobnicate"]).assert().code(2);
}

#[test]
fn functions_are_listed() {
    ohmsheet()
        .arg("functions")
        .assert()
        .code(0)
        .stdout(predicate::str::contains("sqrt(z: any)"))
        .stdout(predicate::str::contains("atan2"));
}
