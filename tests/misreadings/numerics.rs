//! Misreadings: numerics (see mod.rs). Principal values at the negative
//! real axis, per-unit line and phase voltages, open and short elements,
//! out-of-range arguments and the power factor of a source (issue 13,
//! items 3, 4, 5, 6 and 9).

use std::f64::consts::PI;

use num_complex::Complex64 as C64;
use ohmsheet::engine::block::{Block, LANES};
use ohmsheet::engine::eval;
use proptest::prelude::*;

use crate::common::{engine, model, ohmsheet, value};

// ---- principal values (item 3) ----
//
// The contract: −π < arg ≤ π (DLMF §4.2 for ln and arg, §4.37 for powers),
// so for x < 0: ln x = ln|x| + jπ, arg x = π, x^0.5 = sqrt(x) = j√|x|,
// x^(1/3) = |x|^(1/3)·(1/2 + j√3/2). Python's cmath gives the same for
// complex(x, 0.0) (cmath.log(-1) = πj, cmath.phase(-1) = π).

/// Negative reals produced four ways from the inputs `m` (> 0, given) and
/// `k` (< 0, given), and a negative literal.
const FORMS: &str = "m = 1\nk = -1\n\
    xn = -(m)\nxs = 0 - m\nxk = k\nxm = -1 * m\n";
const PRODUCED: [&str; 4] = ["xn", "xs", "xk", "xm"];

fn principal_sheet() -> String {
    let mut s = String::from(FORMS);
    for x in PRODUCED {
        s.push_str(&format!(
            "l_{x} = ln({x})\na_{x} = arg({x})\np_{x} = {x}^0.5\nr_{x} = sqrt({x})\nc_{x} = {x}^(1/3)\ng_{x} = log10({x})\n"
        ));
    }
    s
}

/// Check the principal values of one negative real of magnitude `m`.
fn check_principal(m: f64, get: &dyn Fn(&str) -> C64, how: &str) {
    for x in PRODUCED {
        let l = get(&format!("l_{x}"));
        assert_eq!((l.re, l.im), (m.ln(), PI), "ln({x}) {how}, |x| = {m}");
        let a = get(&format!("a_{x}"));
        assert_eq!(a.re, PI, "arg({x}) {how}, |x| = {m}");
        let r = get(&format!("r_{x}"));
        assert_eq!((r.re, r.im), (0.0, m.sqrt()), "sqrt({x}) {how}");
        let p = get(&format!("p_{x}"));
        assert_eq!(
            (p.re.to_bits(), p.im.to_bits()),
            (r.re.to_bits(), r.im.to_bits()),
            "{x}^0.5 must equal sqrt({x}) {how}"
        );
        let c = get(&format!("c_{x}"));
        let want = C64::new(0.5, 3f64.sqrt() / 2.0) * m.cbrt();
        assert!(
            (c - want).norm() <= 1e-14 * want.norm(),
            "{x}^(1/3) {how}: {c} vs {want}"
        );
        let g = get(&format!("g_{x}"));
        assert!(
            (g.im - PI / std::f64::consts::LN_10).abs() < 1e-15,
            "log10({x}) {how}: {g}"
        );
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    /// Scalar evaluator: inputs set as a session or `--set` would.
    #[test]
    fn negative_reals_take_principal_values_scalar(m in 1e-6f64..1e6) {
        let mut e = engine(&principal_sheet());
        let mid = e.model.id("m").unwrap();
        let kid = e.model.id("k").unwrap();
        e.set_input(mid, C64::new(m, 0.0));
        // a minus leaves a −0 imaginary part; the sign of a zero must not matter
        e.set_input(kid, C64::new(-m, -0.0));
        check_principal(m, &|n| value(&e, n), "(scalar)");
    }

    /// Block evaluator: 64 lanes, half with −0 imaginary parts; every lane
    /// agrees with the scalar evaluator to the bit and gives principal values.
    #[test]
    fn negative_reals_take_principal_values_block(seed in 1e-3f64..1e3) {
        let md = model(&principal_sheet());
        let prog = &md.program;
        let (sm, sk) = (md.cell("m").unwrap().slot, md.cell("k").unwrap().slot);
        let mut block = Block::new(prog);
        let ms: Vec<f64> = (0..LANES).map(|l| seed * (1.0 + l as f64 * 0.37)).collect();
        for (l, &m) in ms.iter().enumerate() {
            block.set(sm, l, C64::new(m, if l % 2 == 0 { 0.0 } else { -0.0 }));
            block.set(sk, l, C64::new(-m, if l % 3 == 0 { 0.0 } else { -0.0 }));
        }
        block.run(&prog.code, prog);
        for (l, &m) in ms.iter().enumerate() {
            let mut slots = prog.init.clone();
            slots[sm as usize] = block.get(sm, l);
            slots[sk as usize] = block.get(sk, l);
            eval::run(&prog.code, prog, &mut slots);
            for (_, cell) in md.defs() {
                let (b, s) = (block.get(cell.slot, l), slots[cell.slot as usize]);
                prop_assert_eq!((b.re.to_bits(), b.im.to_bits()), (s.re.to_bits(), s.im.to_bits()), "{}", cell.name);
            }
            let get = |n: &str| block.get(md.cell(n).unwrap().slot, l);
            check_principal(m, &get, "(block)");
        }
    }
}

#[test]
fn negative_literals_take_principal_values() {
    // DLMF 4.2: ln(−1) = jπ; cmath.phase(-5) = π; (−8)^(1/3) = 1 + j√3.
    let e = engine(
        "a = ln(-1)\nb = arg(-5 Ω)\nc = (-8)^(1/3)\nd = (-4)^0.5\ne = sqrt(-4)\nf = (-2)^3\n\
         g = atan2(0, -1)\nh = arg(-(5 Ω))\n",
    );
    assert_eq!(value(&e, "a"), C64::new(0.0, PI));
    assert_eq!(value(&e, "b").re, PI);
    let c = value(&e, "c");
    assert!((c - C64::new(1.0, 3f64.sqrt())).norm() < 1e-15, "{c}");
    assert_eq!(value(&e, "d"), C64::new(0.0, 2.0));
    assert_eq!(value(&e, "d"), value(&e, "e"));
    // an integer power of a real is an exact product: no imaginary part
    let f = value(&e, "f");
    assert_eq!((f.re, f.im.to_bits()), (-8.0, 0f64.to_bits()));
    assert_eq!(value(&e, "g").re, PI);
    assert_eq!(value(&e, "h").re, PI);
}

const SHEET: &str = "x = 4\nl = ln(x)\na = arg(x)\nr = x^0.5\ns = sqrt(x)\n";

/// Columns `name.re`/`name.im` (or `name [unit]`) of a CSV text, by header.
fn columns(text: &str) -> (Vec<String>, Vec<Vec<f64>>) {
    let mut lines = text.lines();
    let header: Vec<String> = lines.next().unwrap().split(',').map(str::to_string).collect();
    let rows = lines
        .filter(|l| !l.is_empty())
        .map(|l| l.split(',').map(|v| v.parse::<f64>().unwrap()).collect())
        .collect();
    (header, rows)
}

fn col(header: &[String], name: &str) -> usize {
    header
        .iter()
        .position(|h| h == name || h.starts_with(&format!("{name} [")))
        .unwrap_or_else(|| panic!("no column {name} in {header:?}"))
}

/// Each row's x (negative) against the principal values.
fn check_rows(text: &str) {
    let (h, rows) = columns(text);
    assert!(!rows.is_empty());
    for row in rows {
        let x = row[col(&h, "x")];
        assert!(x < 0.0);
        assert_eq!(row[col(&h, "l.im")], PI, "ln({x})");
        assert_eq!(row[col(&h, "r.re")], 0.0, "{x}^0.5");
        assert_eq!(row[col(&h, "r.im")], (-x).sqrt(), "{x}^0.5");
        assert_eq!(row[col(&h, "s.im")], (-x).sqrt(), "sqrt({x})");
    }
}

#[test]
fn a_batch_column_of_negative_reals_takes_principal_values() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(&sheet, SHEET).unwrap();
    // more than one block of 64 cases, so the block evaluator runs
    let mut cases = String::from("x\n");
    for i in 1..=100 {
        cases.push_str(&format!("-{}\n", i as f64 * 0.25));
    }
    let cases_path = dir.path().join("c.csv");
    std::fs::write(&cases_path, cases).unwrap();
    let out = dir.path().join("o.csv");
    ohmsheet()
        .args([
            "batch",
            sheet.to_str().unwrap(),
            "--cases",
            cases_path.to_str().unwrap(),
        ])
        .args(["--out", out.to_str().unwrap(), "--quiet"])
        .assert()
        .code(0);
    let text = std::fs::read_to_string(&out).unwrap();
    let (h, rows) = columns(&text);
    assert_eq!(rows.len(), 100);
    for row in &rows {
        assert_eq!(row[col(&h, "a")], 180.0, "arg of a negative real is +180°");
    }
    check_rows(&text);
}

#[test]
fn a_sweep_through_negative_reals_takes_principal_values() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(&sheet, SHEET).unwrap();
    let out = ohmsheet()
        .args(["sweep", sheet.to_str().unwrap(), "--vary", "x=-9..-1", "--points", "70"])
        .args(["--show", "l,r,s", "--csv", "-", "--parts", "rect"])
        .assert()
        .code(0)
        .get_output()
        .stdout
        .clone();
    check_rows(std::str::from_utf8(&out).unwrap());
}

#[test]
fn run_set_and_a_session_edit_of_a_negative_real_take_principal_values() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(&sheet, SHEET).unwrap();
    let out = ohmsheet()
        .args(["run", sheet.to_str().unwrap(), "--format", "csv", "--set", "x=-9"])
        .assert()
        .code(0)
        .get_output()
        .stdout
        .clone();
    let text = String::from_utf8(out).unwrap();
    let l = text.lines().find(|l| l.starts_with("l,")).unwrap();
    let f: Vec<&str> = l.split(',').collect();
    assert_eq!(f[4].parse::<f64>().unwrap(), PI, "ln(-9) = ln 9 + jπ: {l}");

    let data = tempfile::tempdir().unwrap();
    let (mut s, _) =
        ohmsheet::session::state::Session::open(Some(&sheet), Some(data.path().to_path_buf()), false).expect("session");
    let r = s.handle("x = -9");
    assert!(!r.refused, "{}", r.text);
    let e = &s.engine;
    assert_eq!(value(e, "l"), C64::new(9f64.ln(), PI));
    assert_eq!(value(e, "a").re, PI);
    assert_eq!(value(e, "r"), C64::new(0.0, 3.0));
    assert_eq!(value(e, "r"), value(e, "s"));
}
