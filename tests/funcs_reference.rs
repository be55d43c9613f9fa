//! The engineering functions against an independent computation: every
//! formula in tests/reference/funcs_vectors.json was evaluated with mpmath
//! at 50 digits by tests/reference/gen_funcs.py (committed beside the
//! vectors), from the published definitions that script names (IEC
//! 60050-131, IEEE Std 1459, IEEE Std 141, Kennelly, Fortescue, the
//! per-unit and L-network design equations, IEC 60027-3). Each cell must
//! agree to 1e-9 relative.

use num_complex::Complex64 as C64;

use crate::common::{close, engine, repo, value};

#[derive(serde::Deserialize)]
struct Doc {
    preamble: String,
    cases: Vec<Case>,
    peak_cases: Vec<Case>,
}

#[derive(serde::Deserialize)]
struct Case {
    formula: String,
    re: f64,
    im: f64,
    what: String,
}

fn doc() -> Doc {
    let text = std::fs::read_to_string(repo("tests/reference/funcs_vectors.json")).expect("vectors");
    serde_json::from_str(&text).expect("json")
}

fn check_all(head: &str, preamble: &str, cases: &[Case]) {
    let mut sheet = format!("{head}\n{preamble}\n");
    for (i, c) in cases.iter().enumerate() {
        sheet.push_str(&format!("case{i} = {}\n", c.formula));
    }
    let e = engine(&sheet);
    let mut bad = Vec::new();
    for (i, c) in cases.iter().enumerate() {
        let got = value(&e, &format!("case{i}"));
        let want = C64::new(c.re, c.im);
        if !close(got, want, 1e-9) {
            bad.push(format!("{} ({}): got {got}, mpmath {want}", c.formula, c.what));
        }
    }
    assert!(bad.is_empty(), "disagreements:\n{}", bad.join("\n"));
}

#[test]
fn every_function_matches_mpmath_to_1e_9() {
    let d = doc();
    assert!(d.cases.len() > 70, "the vector file looks truncated");
    check_all("", &d.preamble, &d.cases);
}

#[test]
fn power_functions_halve_for_peak_phasors() {
    let d = doc();
    assert!(d.peak_cases.len() >= 9);
    check_all("@amplitude peak", &d.preamble, &d.peak_cases);
}

/// Every function in the library appears in at least one reference case,
/// so none is left without an outside check.
#[test]
fn every_engineering_function_has_a_reference_case() {
    let d = doc();
    let all: Vec<&str> = d
        .cases
        .iter()
        .chain(&d.peak_cases)
        .map(|c| c.formula.as_str())
        .collect();
    let math = [
        "re", "im", "abs", "arg", "conj", "sqrt", "exp", "ln", "log10", "sin", "cos", "tan", "asin", "acos", "atan",
        "atan2", "min", "max",
    ];
    let missing: Vec<&str> = ohmsheet::funcs::library()
        .iter()
        .map(|f| f.name)
        .filter(|n| !math.contains(n))
        .filter(|n| !all.iter().any(|f| f.contains(&format!("{n}("))))
        .collect();
    assert!(missing.is_empty(), "functions without a reference case: {missing:?}");
}

/// The committed vectors are what the committed generators print: run
/// with mpmath (and numpy), each reproduces its JSON (to the last digit or
/// two of numpy's solve), so no expected value was edited by hand or taken
/// from ohmsheet's output.
#[test]
fn the_reference_vectors_are_what_their_generators_print() {
    let test = "funcs_reference::the_reference_vectors_are_what_their_generators_print";
    let Some(py) = crate::common::outside::need_python(test, &["numpy", "mpmath"]) else {
        return;
    };
    for (script, json) in [
        ("gen_funcs.py", "funcs_vectors.json"),
        ("gen_vectors.py", "vectors.json"),
    ] {
        let out = std::process::Command::new(&py)
            .arg(repo(&format!("tests/reference/{script}")))
            .output()
            .expect("python runs");
        assert!(
            out.status.success(),
            "{script}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let committed = std::fs::read(repo(&format!("tests/reference/{json}"))).unwrap();
        let printed: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json printed");
        let committed: serde_json::Value = serde_json::from_slice(&committed).expect("json committed");
        if let Err(at) = same_vectors(&printed, &committed, "", 0.0) {
            panic!("{script} no longer prints the committed {json} (at {at}): regenerate it (DEVELOPERS.md)");
        }
    }
}

/// The same document, every number within 1e-12 of the largest number
/// beside it (a case's re and im): numpy's LAPACK solve rounds the last
/// digit differently on different CPUs and builds, so the comparison is
/// not byte for byte; an edited expected value is still far outside this.
fn same_vectors(a: &serde_json::Value, b: &serde_json::Value, at: &str, scale: f64) -> Result<(), String> {
    use serde_json::Value as V;
    match (a, b) {
        (V::Object(x), V::Object(y)) => {
            if x.len() != y.len() || x.keys().any(|k| !y.contains_key(k)) {
                return Err(format!("{at}: different fields"));
            }
            let scale = x
                .values()
                .chain(y.values())
                .filter_map(V::as_f64)
                .fold(0.0f64, |m, v| m.max(v.abs()));
            for (k, v) in x {
                same_vectors(v, &y[k], &format!("{at}.{k}"), scale)?;
            }
            Ok(())
        }
        (V::Array(x), V::Array(y)) => {
            if x.len() != y.len() {
                return Err(format!("{at}: {} entries, not {}", x.len(), y.len()));
            }
            for (i, (v, w)) in x.iter().zip(y).enumerate() {
                same_vectors(v, w, &format!("{at}[{i}]"), scale)?;
            }
            Ok(())
        }
        (V::Number(x), V::Number(y)) => {
            let (x, y) = (x.as_f64().unwrap(), y.as_f64().unwrap());
            if (x - y).abs() <= 1e-12 * scale.max(x.abs()).max(y.abs()) {
                Ok(())
            } else {
                Err(format!("{at}: {x} printed, {y} committed"))
            }
        }
        _ if a == b => Ok(()),
        _ => Err(format!("{at}: {a} printed, {b} committed")),
    }
}
