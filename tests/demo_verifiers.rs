//! Demo sheets against their independent verifier scripts: a verifier in
//! sheets-demo/verify/ recomputes the sheet from the textbook formulas
//! with Python (cmath or numpy, not from ohmsheet) and, run with `--json`, prints
//! {cell: [re, im]} in SI units; every cell it names must agree with
//! ohmsheet's value for the sheet. (demos.rs runs the sheets' own checks.)

use num_complex::Complex64 as C64;

use crate::common::{close, engine, repo, value};

/// (sheet, verifier) pairs whose verifier has a `--json` mode.
const PAIRS: &[(&str, &str)] = &[
    ("export-line-ferranti.ohm", "export_line.py"),
    ("plant-bus-two-sources.ohm", "plant_bus.py"),
];

fn verifier_values(script: &str) -> Vec<(String, C64)> {
    let out = std::process::Command::new("python3")
        .arg(repo(&format!("sheets-demo/verify/{script}")))
        .arg("--json")
        .output()
        .expect("python3 runs the demo verifiers (it is needed for the test suite)");
    assert!(
        out.status.success(),
        "{script} failed:\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let map: serde_json::Map<String, serde_json::Value> = serde_json::from_slice(&out.stdout).expect("json");
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
    for (sheet, script) in PAIRS {
        let text = std::fs::read_to_string(repo(&format!("sheets-demo/{sheet}"))).unwrap();
        let e = engine(&text);
        let want = verifier_values(script);
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
