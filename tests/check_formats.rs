//! `ohmsheet check --format json|junit [-o FILE]`: machine-readable
//! results for CI, with each check's sheet, line, values, allowance and
//! verdict; exit codes as for the text (0 all pass, 1 a check failed,
//! 2 a sheet error).
//!
//! Expected values: Ohm's law, 12 V across 4 Ω gives 3 A (arithmetic);
//! the allowance of `+- 1%` on 4 A is 40 mA, shown as 0.04 A beside a 1 A difference. The JUnit structure is the
//! one CI systems read (`testsuites` > `testsuite` > `testcase`, with
//! `failure` and `error` children), checked with an XML parser (roxmltree).

use predicates::prelude::*;

use crate::common::ohmsheet;
use crate::report::folder;

const GOOD: &str = "V = 12 V\nR = 4 Ω\nI = V / R\ncheck I ~= 3 A +- 0.1%\n";
const FAILING: &str = "V = 12 V\nR = 4 Ω\ncheck V / R ~= 4 A +- 1%\n";
const BROKEN: &str = "V = 12 V\nI = V / Rx\n";
const LIB: &str = "R6 = 6 Ω\ncheck R6 ~= 6 Ω +- 0 Ω\n";
const USES_LIB: &str = "@include \"lib/r.ohm\"\nRp = R6 || R6\ncheck Rp ~= 3 Ω +- 0.1%\n";

fn json_of(out: &[u8]) -> serde_json::Value {
    serde_json::from_slice(out).unwrap_or_else(|e| panic!("not JSON ({e}): {}", String::from_utf8_lossy(out)))
}

#[test]
fn json_gives_each_checks_sheet_line_values_allowance_and_verdict() {
    let d = folder(&[("a.ohm", GOOD), ("f.ohm", FAILING)]);
    let out = ohmsheet()
        .current_dir(d.path())
        .args(["check", "a.ohm", "f.ohm", "--format", "json"])
        .assert()
        .code(1)
        .get_output()
        .stdout
        .clone();
    let v = json_of(&out);
    assert_eq!(v["totals"]["checks"], 2);
    assert_eq!(v["totals"]["passed"], 1);
    assert_eq!(v["totals"]["failed"], 1);
    assert_eq!(v["totals"]["errors"], 0);
    let a = &v["sheets"][0];
    assert_eq!(a["sheet"], "a.ohm");
    assert_eq!(a["status"], "pass");
    let c = &a["checks"][0];
    assert_eq!(c["file"], "a.ohm");
    assert_eq!(c["line"], 4);
    assert_eq!(c["check"], "check I ~= 3 A +- 0.1%");
    assert_eq!(c["verdict"], "pass");
    assert_eq!(c["computed"]["re"], 3.0); // 12 V / 4 Ω
    assert_eq!(c["expected"]["re"], 3.0);
    assert_eq!(c["unit"], "A");
    assert!((c["allowance"].as_f64().unwrap() - 0.003).abs() < 1e-15); // 0.1% of 3 A
    let f = &v["sheets"][1]["checks"][0];
    assert_eq!(v["sheets"][1]["status"], "fail");
    assert_eq!(f["line"], 3);
    assert_eq!(f["verdict"], "fail");
    assert_eq!(f["computed"]["re"], 3.0);
    assert_eq!(f["expected"]["re"], 4.0);
    assert!((f["difference"].as_f64().unwrap() - 1.0).abs() < 1e-15);
    assert!((f["allowance"].as_f64().unwrap() - 0.04).abs() < 1e-15); // 1% of 4 A
    assert_eq!(f["allowance_display"], "0.04 A");
}

#[test]
fn json_names_the_library_a_check_is_written_in() {
    let d = folder(&[("b.ohm", USES_LIB), ("lib/r.ohm", LIB)]);
    let out = ohmsheet()
        .current_dir(d.path())
        .args(["check", "b.ohm", "--format", "json"])
        .assert()
        .code(0)
        .get_output()
        .stdout
        .clone();
    let v = json_of(&out);
    let files: Vec<(String, u64)> = v["sheets"][0]["checks"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| (c["file"].as_str().unwrap().to_string(), c["line"].as_u64().unwrap()))
        .collect();
    assert!(files.contains(&("lib/r.ohm".to_string(), 2)), "{files:?}");
    assert!(files.contains(&("b.ohm".to_string(), 3)), "{files:?}");
}

#[test]
fn a_sheet_error_is_an_error_entry_and_exit_2() {
    let d = folder(&[("a.ohm", GOOD), ("b.ohm", BROKEN)]);
    let out = ohmsheet()
        .current_dir(d.path())
        .args(["check", "a.ohm", "b.ohm", "--format", "json"])
        .assert()
        .code(2)
        .get_output()
        .stdout
        .clone();
    let v = json_of(&out);
    assert_eq!(v["totals"]["errors"], 1);
    assert_eq!(v["sheets"][1]["status"], "error");
    assert!(v["sheets"][1]["error"].as_str().unwrap().contains("Rx"), "{v}");
}

#[test]
fn junit_parses_as_xml_with_suites_cases_failures_and_errors() {
    let d = folder(&[("a.ohm", GOOD), ("f.ohm", FAILING), ("b.ohm", BROKEN)]);
    ohmsheet()
        .current_dir(d.path())
        .args([
            "check",
            "a.ohm",
            "f.ohm",
            "b.ohm",
            "--format",
            "junit",
            "-o",
            "results.xml",
        ])
        .assert()
        .code(2)
        // The text lines still go to the terminal.
        .stdout(predicate::str::contains("FAIL  f.ohm:3"));
    let text = std::fs::read_to_string(d.path().join("results.xml")).unwrap();
    let doc = roxmltree::Document::parse(&text).unwrap_or_else(|e| panic!("not XML ({e}):\n{text}"));
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "testsuites");
    assert_eq!(root.attribute("failures"), Some("1"));
    assert_eq!(root.attribute("errors"), Some("1"));
    let suites: Vec<_> = root.children().filter(|n| n.has_tag_name("testsuite")).collect();
    assert_eq!(suites.len(), 3);
    let names: Vec<_> = suites.iter().map(|s| s.attribute("name").unwrap()).collect();
    assert_eq!(names, ["a.ohm", "f.ohm", "b.ohm"]);
    fn case<'a, 'i>(s: &roxmltree::Node<'a, 'i>) -> roxmltree::Node<'a, 'i> {
        s.children().find(|n| n.has_tag_name("testcase")).unwrap()
    }
    // a.ohm: a passing case, no failure.
    let pass = case(&suites[0]);
    assert_eq!(pass.attribute("classname"), Some("a.ohm"));
    assert_eq!(pass.attribute("line"), Some("4"));
    assert!(pass.children().all(|n| !n.has_tag_name("failure")));
    // f.ohm: a failure with the values and the allowance.
    let fail = case(&suites[1]);
    assert_eq!(suites[1].attribute("failures"), Some("1"));
    let failure = fail
        .children()
        .find(|n| n.has_tag_name("failure"))
        .expect("a failure element");
    let msg = failure.attribute("message").unwrap();
    assert!(msg.contains("computed 3 A") && msg.contains("allowed 0.04 A"), "{msg}");
    // b.ohm: an error, with the reason.
    let err = case(&suites[2]);
    let error = err
        .children()
        .find(|n| n.has_tag_name("error"))
        .expect("an error element");
    assert!(error.text().unwrap_or("").contains("Rx"), "{text}");
}

#[test]
fn junit_escapes_what_xml_reserves() {
    // `<` and `&` in a check's text and a file name.
    let d = folder(&[("a&b.ohm", "x = 2\ncheck x < 3\n")]);
    let out = ohmsheet()
        .current_dir(d.path())
        .args(["check", "a&b.ohm", "--format", "junit"])
        .output()
        .unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    let doc = roxmltree::Document::parse(&text).unwrap_or_else(|e| panic!("not XML ({e}):\n{text}"));
    let suite = doc
        .root_element()
        .children()
        .find(|n| n.has_tag_name("testsuite"))
        .unwrap();
    assert_eq!(suite.attribute("name"), Some("a&b.ohm"));
}

/// `-o FILE` writes what would be printed, as for `run`: with the lines
/// for people (`--format table`, the default) those lines.
#[test]
fn output_with_the_table_format_writes_the_lines() {
    let d = folder(&[("a.ohm", GOOD)]);
    let printed = ohmsheet()
        .current_dir(d.path())
        .args(["check", "a.ohm"])
        .output()
        .unwrap();
    ohmsheet()
        .current_dir(d.path())
        .args(["check", "a.ohm", "-o", "r.txt"])
        .assert()
        .code(0)
        .stdout("");
    let written = std::fs::read(d.path().join("r.txt")).unwrap();
    assert_eq!(written, printed.stdout);
    assert!(String::from_utf8(written).unwrap().contains("pass"));
}

#[test]
fn json_to_stdout_is_only_json() {
    let d = folder(&[("a.ohm", GOOD)]);
    let out = ohmsheet()
        .current_dir(d.path())
        .args(["check", "a.ohm", "--format", "json"])
        .assert()
        .code(0)
        .get_output()
        .stdout
        .clone();
    json_of(&out);
}
