//! Every element kind through the sheet language, against the independent
//! sparse-tableau solve of tests/reference/gen_networks.py (mpmath, 40
//! digits; every node voltage and element current an unknown, each element
//! by its own law — not the program's modified nodal form).
//!
//! Each record holds the element lines of a sheet; this test closes them
//! into a `network … end` block, asks for every node voltage, every
//! element's current and power, the Thevenin pairs, Z and Y entries and the
//! balance, and compares each with the reference.
//!
//! Tolerance. The reference gives the 2-norm condition number κ of the
//! tableau after its rows and columns are scaled to unit largest entries
//! (so units do not count). A backward-stable solve in doubles loses at
//! most about κ·ε relative to the size of the solution; we allow
//! 1000·κ·ε (at least 1e-13) relative to the largest value of the same
//! kind in the network (voltages with voltages, currents with currents …),
//! the margin covering the program's different formulation and its
//! products (powers, V/Z). The worst network has κ ≈ 2·10⁴, so the bound
//! stays under 5·10⁻⁹: a wrong sign, a conjugate or a misplaced
//! controlling node moves results by orders of magnitude more.

use num_complex::Complex64 as C64;

use crate::common::*;

fn refs() -> Vec<serde_json::Value> {
    serde_json::from_str::<serde_json::Value>(include_str!("reference/network_mna.json"))
        .expect("network_mna.json")
        .as_array()
        .unwrap()
        .clone()
}

fn c(v: &serde_json::Value) -> C64 {
    C64::new(v[0].as_f64().unwrap(), v[1].as_f64().unwrap())
}

/// The sheet for one reference record, and the cells it asks for with
/// their reference values and kinds.
fn sheet(r: &serde_json::Value) -> (String, Vec<(String, C64, &'static str)>) {
    let mut s = format!("network n at {} Hz\n", r["f"].as_f64().unwrap());
    for l in r["lines"].as_array().unwrap() {
        s += &format!("  {}\n", l.as_str().unwrap());
    }
    s += "end\n";
    let mut want = Vec::new();
    for (node, v) in r["v"].as_object().unwrap() {
        s += &format!("v_{node} = net_v(n, {node})\n");
        want.push((format!("v_{node}"), c(v), "V"));
    }
    for (e, v) in r["i"].as_object().unwrap() {
        s += &format!("i_{e} = net_i(n, {e})\ns_{e} = net_s(n, {e})\n");
        want.push((format!("i_{e}"), c(v), "A"));
        want.push((format!("s_{e}"), c(&r["s"][e]), "VA"));
    }
    for (k, t) in r["thevenin"].as_array().unwrap().iter().enumerate() {
        s += &format!(
            "th{k} = net_thevenin(n, {}, {})\n",
            t["a"].as_str().unwrap(),
            t["b"].as_str().unwrap()
        );
        want.push((format!("th{k}.V"), c(&t["voc"]), "V"));
        want.push((format!("th{k}.Z"), c(&t["zth"]), "Ω"));
        want.push((format!("th{k}.I"), c(&t["isc"]), "A"));
    }
    for (k, z) in r["z"].as_array().unwrap().iter().enumerate() {
        s += &format!(
            "z{k} = net_z(n, {}, {})\n",
            z["i"].as_str().unwrap(),
            z["j"].as_str().unwrap()
        );
        want.push((format!("z{k}"), c(&z["val"]), "Ω"));
    }
    for (k, y) in r["y"].as_array().unwrap().iter().enumerate() {
        s += &format!(
            "y{k} = net_y(n, {}, {})\n",
            y["i"].as_str().unwrap(),
            y["j"].as_str().unwrap()
        );
        if !y["val"].is_null() {
            want.push((format!("y{k}"), c(&y["val"]), "S"));
        }
    }
    s += "bal = net_balance(n)\n";
    want.push(("bal.delivered".into(), c(&r["delivered"]), "VA"));
    want.push(("bal.absorbed".into(), c(&r["absorbed"]), "VA"));
    (s, want)
}

#[test]
fn every_element_kind_matches_the_independent_tableau_solve() {
    let all = refs();
    assert!(all.len() >= 9, "the reference covers every element kind");
    let mut forms = std::collections::BTreeSet::new();
    for r in &all {
        let name = r["name"].as_str().unwrap();
        for l in r["lines"].as_array().unwrap() {
            let l = l.as_str().unwrap();
            forms.insert(
                l.split('=')
                    .nth(1)
                    .unwrap()
                    .trim()
                    .split('(')
                    .next()
                    .unwrap()
                    .to_string(),
            );
        }
        let (src, want) = sheet(r);
        let e = engine(&src);
        let kappa = r["cond"].as_f64().unwrap();
        let tol = (1000.0 * kappa * f64::EPSILON).max(1e-13);
        assert!(tol < 1e-8, "{name}: κ = {kappa} leaves too loose a bound");
        let scale = |kind: &str| {
            want.iter()
                .filter(|w| w.2 == kind)
                .map(|w| w.1.norm())
                .fold(0.0f64, f64::max)
        };
        for (cell, reference, kind) in &want {
            let got = value(&e, cell);
            let err = (got - reference).norm();
            assert!(
                err <= tol * (reference.norm() + scale(kind)),
                "{name}: {cell} = {got}, reference {reference} (error {err:e}, allowed {:e})\n{src}",
                tol * (reference.norm() + scale(kind))
            );
        }
    }
    for f in [
        "branch", "emf", "inject", "vgain", "transadm", "transimp", "igain", "xformer", "mutual",
    ] {
        assert!(forms.contains(f), "no reference network uses `{f}`");
    }
}

/// Where an ideal element ties node voltages together the bus admittance
/// matrix does not exist (its inverse, the bus impedance matrix, is
/// singular — the reference says so by an SVD): that entry is NaN and
/// every other result of the network still stands.
#[test]
fn a_missing_admittance_matrix_leaves_only_its_entries_undefined() {
    let mut seen = 0;
    for r in refs() {
        if r["y_exists"].as_bool().unwrap() {
            continue;
        }
        seen += 1;
        let (src, _) = sheet(&r);
        let e = engine(&src);
        for k in 0..r["y"].as_array().unwrap().len() {
            let y = value(&e, &format!("y{k}"));
            assert!(y.re.is_nan(), "{}: y{k} = {y}", r["name"]);
        }
        let node = r["v"].as_object().unwrap().keys().next().unwrap().clone();
        let v = value(&e, &format!("v_{node}"));
        assert!(v.re.is_finite(), "{}: V({node}) = {v}", r["name"]);
    }
    assert!(seen >= 3);
}
