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
    /// The size the error is measured against when larger than the
    /// values (a current that is exactly zero beside others that are not).
    #[serde(default)]
    scale: f64,
}

fn doc() -> Doc {
    let text = std::fs::read_to_string(repo("tests/reference/funcs_vectors.json")).expect("vectors");
    serde_json::from_str(&text).expect("json")
}

/// tests/reference/funcs_wide.json (gen_funcs_wide.py): the same
/// functions over a wide spread of inputs, the opens they must give and
/// the inputs outside their domains.
#[derive(serde::Deserialize)]
struct Wide {
    preamble: String,
    cases: Vec<Case>,
    opens: Vec<Open>,
    refused: Vec<Refused>,
}

#[derive(serde::Deserialize)]
struct Open {
    formula: String,
    what: String,
}

#[derive(serde::Deserialize)]
struct Refused {
    formula: String,
    arg: String,
    /// The parameter's name, "" when the whole call is at fault.
    param: String,
    what: String,
}

fn wide() -> Wide {
    let text = std::fs::read_to_string(repo("tests/reference/funcs_wide.json")).expect("vectors");
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
        let near = (got - want).norm() <= 1e-9 * c.scale;
        if !(close(got, want, 1e-9) || near) {
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

/// Over small and large magnitudes, every quadrant, the branch cuts,
/// shorts and opens, X/R of 0 and ∞, faults through 0 and large
/// impedances, power factors at ±1 and near 0, zero-length and half-wave
/// lines, long cascades and π/T networks at their least Q: every value
/// agrees with mpmath at 100 digits to 1e-9.
#[test]
fn wide_inputs_match_mpmath_to_1e_9() {
    let d = wide();
    assert!(d.cases.len() > 1000, "the wide vector file looks truncated");
    check_all("", &d.preamble, &d.cases);
}

/// An open stays an open: each of these is ∞ (as `1 Ω / 0` is), never
/// NaN and never a large finite number.
#[test]
fn wide_opens_stay_open() {
    let d = wide();
    let mut sheet = format!("{}\n", d.preamble);
    for (i, c) in d.opens.iter().enumerate() {
        sheet.push_str(&format!("case{i} = {}\n", c.formula));
    }
    let e = engine(&sheet);
    let bad: Vec<String> = d
        .opens
        .iter()
        .enumerate()
        .filter_map(|(i, c)| {
            let v = value(&e, &format!("case{i}"));
            let open = (v.re.is_infinite() || v.im.is_infinite()) && !v.re.is_nan() && !v.im.is_nan();
            (!open).then(|| format!("{} ({}): got {v}, want an open (∞)", c.formula, c.what))
        })
        .collect();
    assert!(bad.is_empty(), "not opens:\n{}", bad.join("\n"));
}

/// Outside a function's published domain the cell is an error with a
/// reason, never a number: NaN located on the argument at fault, or an
/// infinite value (a pole, a power factor of 0) whose error names that
/// argument's parameter.
#[test]
fn wide_refusals_name_the_argument() {
    let d = wide();
    let mut bad = Vec::new();
    for c in &d.refused {
        let sheet = format!("{}\nx = {}\n", d.preamble, c.formula);
        let e = engine(&sheet);
        let id = e.model.id("x").expect("cell x");
        let vals = e.values(id);
        let nan = vals.iter().any(|v| v.re.is_nan() || v.im.is_nan());
        let inf = vals.iter().any(|v| v.re.is_infinite() || v.im.is_infinite());
        let problem = if nan {
            match e.explain(id) {
                None => Some("NaN with no reason given".to_string()),
                Some(why) => {
                    let at = &sheet[why.span.start as usize..why.span.end as usize];
                    let want = if c.param.is_empty() { &c.formula } else { &c.arg };
                    (at != want || why.message.is_empty())
                        .then(|| format!("the error points at `{at}`, want `{want}`: {}", why.text()))
                }
            }
        } else if inf {
            let errs = e.inf_origins();
            let msg = errs
                .iter()
                .find(|(i, error)| *i == id && *error)
                .map(|_| e.inf_diagnostic(id, true).message);
            let named = format!("argument `{}` = {}", c.param, c.arg);
            match msg {
                None => Some("infinite, and not reported as an error".to_string()),
                Some(m) if c.param.is_empty() || m.contains(&named) => None,
                Some(m) => Some(format!("the error does not name `{named}`: {m}")),
            }
        } else {
            Some(format!("got {vals:?}, want an error"))
        };
        if let Some(p) = problem {
            bad.push(format!("{} ({}): {p}", c.formula, c.what));
        }
    }
    assert!(bad.is_empty(), "refusals:\n{}", bad.join("\n"));
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
    let Some(py) = crate::common::outside::need_python(test, &["mpmath"]) else {
        return;
    };
    for (script, json) in [
        ("gen_funcs.py", "funcs_vectors.json"),
        ("gen_vectors.py", "vectors.json"),
        ("gen_funcs_wide.py", "funcs_wide.json"),
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
