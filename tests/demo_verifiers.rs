//! Demo sheets against their independent verifier scripts: a verifier in
//! sheets-demo/verify/ recomputes the sheet from the textbook formulas
//! with Python (cmath or numpy, not from ohmsheet) and, run with `--json`, prints
//! {cell: [re, im]} in SI units; every cell it names must agree with
//! ohmsheet's value for the sheet. (demos.rs runs the sheets' own checks.)
//!
//! Every verifier in sheets-demo/verify/ is run here and compared value
//! by value (`PAIRS`); a script that is neither in `PAIRS` nor a helper
//! fails the suite. Python with numpy and mpmath is an outside program
//! (tests/common/outside.rs): under CI=true a missing one fails the tests,
//! elsewhere they are skipped and the skip is shown.

use std::path::PathBuf;

use num_complex::Complex64 as C64;

use crate::common::{close, repo, value};

/// (sheet, verifier) pairs whose verifier has a `--json` mode.
const PAIRS: &[(&str, &str)] = &[
    ("export-line-ferranti.ohm", "export_line.py"),
    ("plant-bus-two-sources.ohm", "plant_bus.py"),
    ("sawmill-bank-fault-duty.ohm", "sawmill.py"),
    ("harbour-vhf-feeder.ohm", "harbour_vhf.py"),
    ("quarry-crusher-feeder.ohm", "quarry.py"),
    ("paper-mill-bank-spread.ohm", "paper_mill.py"),
    ("beacon-antenna-match.ohm", "beacon.py"),
    ("unbalanced-cold-store.ohm", "cold_store.py"),
    ("pf-correction-feed-mill.ohm", "feed_mill.py"),
    ("induction-heater-match.ohm", "forge.py"),
    ("motor-bus-thevenin.ohm", "motor_bus.py"),
    ("pump-feeder-p3.ohm", "pump_feeder_p3.py"),
    ("rural-feeder-capacitor.ohm", "rural_line.py"),
    ("station-max-power.ohm", "station_max_power.py"),
    ("geophone-hum-notch.ohm", "twin_t.py"),
];

/// Helpers the verifiers import, not verifiers themselves.
const HELPERS: &[&str] = &["formulas.py"];

/// Python 3 with numpy and mpmath, or `None` (the skip recorded) outside CI.
fn python(test: &str) -> Option<PathBuf> {
    crate::common::outside::need_python(test, &["numpy", "mpmath"])
}

fn run_verifier(py: &PathBuf, script: &str) -> Vec<u8> {
    let out = std::process::Command::new(py)
        .arg(repo(&format!("sheets-demo/verify/{script}")))
        .arg("--json")
        .output()
        .expect("python runs");
    assert!(
        out.status.success(),
        "{script} failed ({}):\n{}",
        out.status,
        String::from_utf8_lossy(&out.stderr)
    );
    out.stdout
}

fn verifier_values(py: &PathBuf, script: &str) -> Vec<(String, C64)> {
    let out = run_verifier(py, script);
    let map: serde_json::Map<String, serde_json::Value> = serde_json::from_slice(&out).expect("json");
    map.into_iter()
        .map(|(k, v)| {
            let re = v[0].as_f64().expect("re");
            let im = v[1].as_f64().expect("im");
            (k, C64::new(re, im))
        })
        .collect()
}

#[test]
fn demo_sheets_agree_with_their_verifiers() {
    let Some(py) = python("demo_verifiers::demo_sheets_agree_with_their_verifiers") else {
        return;
    };
    for (sheet, script) in PAIRS {
        // loaded from its file, so that its library sheets are included
        let s = ohmsheet::sheet::Sheet::load(&repo(&format!("sheets-demo/{sheet}"))).expect(sheet);
        let e = ohmsheet::engine::Engine::new(ohmsheet::engine::compile(&s));
        assert!(!e.model.has_errors(), "{sheet}");
        let want = verifier_values(&py, script);
        assert!(want.len() >= 5, "{script} gave {} values", want.len());
        let mut bad = Vec::new();
        for (name, w) in &want {
            let got = value(&e, name);
            if !close(got, *w, 1e-9) {
                bad.push(format!("{sheet} {name}: ohmsheet {got}, {script} {w}"));
            }
        }
        assert!(bad.is_empty(), "{}", bad.join("\n"));
    }
}

/// The capacitor-bank demo states tolerances: its report's spread section
/// (worst case, Monte Carlo, sensitivities) is checked by its verifier
/// against brute force over the box, numpy's own sampling with stated
/// statistical bounds, and central differences with the GUM's law of
/// propagation (see sheets-demo/verify/paper_mill.py).
#[test]
fn the_spread_demo_report_agrees_with_its_verifier() {
    let Some(py) = python("demo_verifiers::the_spread_demo_report_agrees_with_its_verifier") else {
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let json = dir.path().join("paper-mill.json");
    crate::common::ohmsheet()
        .args(["report", "--format", "json", "--samples", "20000", "--seed", "7", "-o"])
        .arg(&json)
        .arg(repo("sheets-demo/paper-mill-bank-spread.ohm"))
        .assert()
        .success();
    let report: serde_json::Value = serde_json::from_slice(&std::fs::read(&json).unwrap()).unwrap();
    assert_eq!(report["spread"]["data"]["monte_carlo"]["seed"], 7);
    assert_eq!(report["spread"]["data"]["monte_carlo"]["samples"], 20000);
    let out = std::process::Command::new(&py)
        .arg(repo("sheets-demo/verify/paper_mill.py"))
        .arg("--spread")
        .arg(&json)
        .output()
        .expect("python runs");
    assert!(
        out.status.success(),
        "paper_mill.py --spread disagrees:\n{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
}

/// No verifier is left out, and each names a demo sheet that exists.
#[test]
fn every_verifier_is_run_by_the_tests() {
    let mut listed: Vec<&str> = PAIRS.iter().map(|p| p.1).collect();
    listed.extend(HELPERS);
    for entry in std::fs::read_dir(repo("sheets-demo/verify")).unwrap() {
        let name = entry.unwrap().file_name().to_string_lossy().to_string();
        if name.ends_with(".py") {
            assert!(
                listed.contains(&name.as_str()),
                "{name} is run by no test: add it to PAIRS"
            );
        }
    }
    for (sheet, script) in PAIRS {
        assert!(repo(&format!("sheets-demo/{sheet}")).is_file(), "{sheet} ({script})");
        let text = std::fs::read_to_string(repo(&format!("sheets-demo/verify/{script}"))).unwrap();
        assert!(
            text.contains(&format!("sheets-demo/{sheet}")),
            "{script} does not name {sheet}"
        );
    }
}

/// Every function issue 14 added is used in a demo sheet whose verifier
/// is compared value by value (`PAIRS`).
#[test]
fn every_practitioner_function_is_in_a_verified_demo() {
    let sheets: Vec<String> = PAIRS
        .iter()
        .map(|(s, _)| std::fs::read_to_string(repo(&format!("sheets-demo/{s}"))).unwrap())
        .collect();
    for name in crate::functions::PRACTITIONER_FUNCTIONS {
        let call = format!("{name}(");
        let used = sheets.iter().any(|t| {
            t.lines().filter(|l| !l.trim_start().starts_with('#')).any(|l| {
                l.match_indices(&call)
                    .any(|(i, _)| i == 0 || !is_name_char(l.as_bytes()[i - 1]))
            })
        });
        assert!(used, "{name} is used in no demo sheet with a --json verifier");
    }
}

fn is_name_char(b: u8) -> bool {
    b.is_ascii_alphanumeric() || b == b'_'
}
