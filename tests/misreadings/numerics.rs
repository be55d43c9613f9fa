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

// ---- per-unit line and phase voltages (item 4) ----
//
// The per-unit convention (power-systems handbooks, from memory): on
// three-phase bases the line-to-neutral base voltage is the line-to-line
// base over √3, so a balanced set's line and phase voltages are equal in
// per-unit; only the 30° shift of positive sequence remains.

#[test]
fn per_unit_line_and_phase_voltages_differ_only_by_the_shift() {
    let e = engine(
        "Vb = 13.8 kV\nVab = 13.8 kV ∠ 30°\nVan = ll_to_ln(Vab)\n\
         van = ll_to_ln(1 pu ∠ 30°)\nvab = ln_to_ll(1 pu ∠ 0°)\nvan_from_volts = Van / (Vb / sqrt(3))\n",
    );
    let deg = PI / 180.0;
    // in volts: 13 800/√3 = 7967.4 V ∠ 0°
    assert!((value(&e, "Van") - C64::new(13800.0 / 3f64.sqrt(), 0.0)).norm() < 1e-9);
    // in per-unit: 1 pu ∠ 0° and 1 pu ∠ 30°, not 0.577 pu and 1.732 pu
    assert!(
        (value(&e, "van") - C64::new(1.0, 0.0)).norm() < 1e-15,
        "{}",
        value(&e, "van")
    );
    assert!((value(&e, "vab") - C64::from_polar(1.0, 30.0 * deg)).norm() < 1e-15);
    // the per-unit path agrees with converting volts on the phase base
    assert!((value(&e, "van") - value(&e, "van_from_volts")).norm() < 1e-12);
}

// ---- the power factor of a source (item 9, first half) ----
//
// One convention, stated in the listing and docs/functions.md: pf is
// |P|/|S| signed by lead/lag (+ when Q ≥ 0, load convention), not by the
// direction of P; pf_angle is atan(Q/|P|), so cos φ = |pf|. Values: the
// 3-4-5 triangle, |P|/|S| = 0.8, atan(0.75) = 36.870° (common practice).

#[test]
fn power_factor_follows_one_convention_for_loads_and_sources() {
    let e = engine(
        "S1 = (800 + j600) VA\nS2 = (800 - j600) VA\nS3 = (-800 + j600) VA\nS4 = (-800 - j600) VA\n\
         k1 = pf(S1)\nk2 = pf(S2)\nk3 = pf(S3)\nk4 = pf(S4)\n\
         a1 = pf_angle(S1)\na2 = pf_angle(S2)\na3 = pf_angle(S3)\na4 = pf_angle(S4)\n\
         p3 = s_parts(S3)\np4 = s_parts(S4)\n",
    );
    let phi = 0.75f64.atan();
    for (k, a, want_pf, want_phi) in [
        ("k1", "a1", 0.8, phi),   // load, lagging
        ("k2", "a2", -0.8, -phi), // load, leading
        ("k3", "a3", 0.8, phi),   // source (P < 0), Q > 0: lagging in the load convention
        ("k4", "a4", -0.8, -phi), // source, Q < 0: leading
    ] {
        assert!((value(&e, k).re - want_pf).abs() < 1e-15, "{k} = {}", value(&e, k));
        let got = value(&e, a).re;
        assert!((got - want_phi).abs() < 1e-15, "{a} = {got}");
        // cos φ = |pf|, and φ has the sign of pf
        assert!((got.cos() - want_pf.abs()).abs() < 1e-15);
    }
    assert_eq!(value(&e, "p3.pf").re, value(&e, "k3").re);
    assert_eq!(value(&e, "p3.lag").re, 1.0);
    assert_eq!(value(&e, "p4.lag").re, -1.0);
    assert_eq!(value(&e, "p3.P").re, -800.0, "the direction of P is read from P");
}

#[test]
fn the_listing_and_the_docs_state_the_power_factor_convention() {
    let out = ohmsheet().arg("functions").assert().code(0).get_output().stdout.clone();
    let listing = String::from_utf8(out).unwrap();
    let line = |name: &str| {
        let i = listing
            .find(&format!("  {name}("))
            .unwrap_or_else(|| panic!("{name} listed"));
        listing[i..].lines().nth(1).unwrap().to_string()
    };
    assert!(line("pf").contains("|P|/|S| signed by lead/lag (not by the direction of P)"));
    assert!(line("pf_angle").contains("atan(Q/|P|)"));
    let docs = std::fs::read_to_string(crate::common::repo("docs/functions.md")).unwrap();
    assert!(docs.contains("`pf(S)` is +|P|/|S| when lagging"));
    assert!(docs.contains("*not* IEEE Std 1459's P/|S|"));
    assert!(docs.contains("`pf_angle(S)` is φ = atan(Q/|P|)"));
}

// A report states the convention under each step that uses it, so a
// source's +0.8 (P < 0, Q > 0) is not read as a load's (found by the
// issue-13 audit: the report showed `pf = 0.8` and `lag = 1` for a
// generator with no word of the convention). Values: the 3-4-5 triangle.
#[test]
fn a_report_states_the_power_factor_convention_where_it_is_used() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("gen.ohm");
    std::fs::write(
        &sheet,
        "S = (-800 + j600) kVA\nk = pf(S)\nparts = s_parts(S)\nphi = pf_angle(S)\npf1 = 0.9\nQ = 100 kvar * pf1\n",
    )
    .unwrap();
    for ext in ["md", "html"] {
        let out = dir.path().join(format!("gen.{ext}"));
        ohmsheet()
            .arg("report")
            .arg(&sheet)
            .arg("-o")
            .arg(&out)
            .assert()
            .code(0);
        let text = std::fs::read_to_string(&out).unwrap();
        // `<` is escaped in each layout (`\<`, `&lt;`)
        let note = "Power factor signed by lead/lag: + lagging (Q ≥ 0), − leading (Q ";
        // under k, parts and phi; not under Q, which only names `pf1`
        assert_eq!(text.matches(note).count(), 3, "{ext}: {text}");
        assert!(
            text.contains("0) alike; the direction of real power is the sign of P"),
            "{ext}: {text}"
        );
    }
}

// ---- out-of-range arguments (item 6) ----
//
// Each function with a domain says which argument is out of range and
// why, located on the argument. The ranges are those of the quantities
// (a power factor is cos φ, within ±1, IEEE Std 1459; ratings, bases,
// frequencies and resistances of a matching network are positive).

/// (formula, what the explanation must say, the text it points at)
const DOMAIN_CASES: &[(&str, &str, &str)] = &[
    (
        "q_pfc(100 kW, 1.2, 0.95)",
        "argument `pf1` = 1.2 is out of range: a power factor lies within −1 … +1",
        "1.2",
    ),
    (
        "q_pfc(100 kW, 0.8, -1.5)",
        "argument `pf2` = -1.5 is out of range: a power factor lies within −1 … +1",
        "-1.5",
    ),
    (
        "q_pfc(100 kW, 0, 0.95)",
        "argument `pf1` = 0 is out of range: at a power factor of 0",
        "0",
    ),
    (
        "s_of_p(100 kW, 2)",
        "argument `pf` = 2 is out of range: a power factor lies within",
        "2",
    ),
    (
        "i_line(100 kW, 400 V, 1.2)",
        "argument `pf` = 1.2 is out of range: a power factor lies within",
        "1.2",
    ),
    (
        "i_line(100 kW, 0 V, 0.9)",
        "argument `V_LL` = 0 V is out of range: a line voltage cannot be 0",
        "0 V",
    ),
    (
        "p3(400 V, 10 A, -1.1)",
        "argument `pf` = -1.1 is out of range: a power factor lies within",
        "-1.1",
    ),
    ("pf(0 VA)", "no power flows (S = 0)", "0 VA"),
    ("pf_angle(0 VA)", "no power flows (S = 0)", "0 VA"),
    ("s_parts(0 VA)", "no power flows (S = 0)", "0 VA"),
    (
        "vdiv(10 V, 0 Ω, 0 Ω)",
        "both impedances are shorts",
        "vdiv(10 V, 0 Ω, 0 Ω)",
    ),
    (
        "idiv(2 A, open, open)",
        "both impedances are open",
        "idiv(2 A, open, open)",
    ),
    (
        "vdiv(10 V, j5 Ω, -j5 Ω)",
        "sum to 0 (series resonance",
        "vdiv(10 V, j5 Ω, -j5 Ω)",
    ),
    (
        "bus_vth(10 V, 0 Ω, 0 Ω, 5 Ω)",
        "both impedances are shorts",
        "bus_vth(10 V, 0 Ω, 0 Ω, 5 Ω)",
    ),
    (
        "norton_i(10 V, 0 Ω)",
        "an ideal voltage source (Zth = 0) has no Norton equivalent",
        "0 Ω",
    ),
    (
        "thevenin_v(2 A, open)",
        "an ideal current source (Zn = ∞) has no Thevenin equivalent",
        "open",
    ),
    (
        "as_parallel(0 Ω)",
        "a short (0 Ω) has no single parallel equivalent",
        "0 Ω",
    ),
    ("as_series(j5 Ω, 3 Ω)", "`R` is a real number", "j5 Ω"),
    ("as_series(3 Ω, j5 Ω)", "`X` is a real number", "j5 Ω"),
    (
        "s_vz(10 V, 0 Ω)",
        "a short (Z = 0) across a voltage takes infinite power",
        "0 Ω",
    ),
    ("s_iz(2 A, open)", "an open (Z = ∞) cannot carry a current", "open"),
    (
        "p_max(10 V, j5 Ω)",
        "the source resistance Re Zth must be positive",
        "j5 Ω",
    ),
    (
        "cap_delta(100 kvar, 400 V, 0 Hz)",
        "argument `f` = 0 Hz is out of range: a frequency is a positive real number",
        "0 Hz",
    ),
    ("cap_wye(100 kvar, 0 V, 50 Hz)", "a bank's voltage cannot be 0", "0 V"),
    (
        "cap_1ph(j100 VA, 230 V, 50 Hz)",
        "a bank's rating is a finite real number",
        "j100 VA",
    ),
    ("ln(0)", "the logarithm of 0 is −∞", "0"),
    ("log10(0)", "the logarithm of 0 is −∞", "0"),
    ("atan(j)", "infinite at ±j", "j"),
    ("z_ind(-1 H, 50 Hz)", "an inductance is a real number ≥ 0", "-1 H"),
    ("x_cap(1 µF, -50 Hz)", "a frequency is a real number ≥ 0", "-50 Hz"),
    ("z_cap(-1 µF, 50 Hz)", "a capacitance is a real number ≥ 0", "-1 µF"),
    ("x_ind(1 mH, -50 Hz)", "a frequency is a real number ≥ 0", "-50 Hz"),
    ("l_from_x(5 Ω, 0 Hz)", "a frequency is a positive real number", "0 Hz"),
    (
        "c_from_x(0 Ω, 50 Hz)",
        "a capacitor's reactance is a negative real number",
        "0 Ω",
    ),
    ("f_res(0 H, 1 µF)", "an inductance is a positive real number", "0 H"),
    (
        "q_series(0 Ω, 1 mH, 1 µF)",
        "the resistance of a resonant circuit is a positive real number",
        "0 Ω",
    ),
    (
        "q_parallel(10 Ω, 1 mH, 0 F)",
        "a capacitance is a positive real number",
        "0 F",
    ),
    ("q_of(j5 Ω)", "needs a finite impedance with R > 0", "j5 Ω"),
    (
        "delta_to_wye(open, open, 5 Ω)",
        "two or more delta branches are open",
        "delta_to_wye(open, open, 5 Ω)",
    ),
    (
        "delta_to_wye(j5 Ω, -j5 Ω, 0 Ω)",
        "sum to 0",
        "delta_to_wye(j5 Ω, -j5 Ω, 0 Ω)",
    ),
    (
        "wye_to_delta(0 Ω, 0 Ω, 5 Ω)",
        "two or more wye arms are shorts",
        "wye_to_delta(0 Ω, 0 Ω, 5 Ω)",
    ),
    ("z_base(13.8 kV, 0 VA)", "a base power cannot be 0", "0 VA"),
    ("i_base(0 V, 100 MVA)", "a base voltage cannot be 0", "0 V"),
    ("pu_to_ohm(0.1 pu, 13.8 kV, 0 VA)", "a base power cannot be 0", "0 VA"),
    ("ohm_to_pu(5 Ω, 0 V, 100 MVA)", "a base voltage cannot be 0", "0 V"),
    (
        "rebase(0.1 pu, 13.8 kV, 100 MVA, 13.8 kV, 0 VA)",
        "a base power cannot be 0",
        "0 VA",
    ),
    (
        "lmatch_lp(0 Ω, 50 Ω, 1 MHz)",
        "a source resistance is a positive real number",
        "0 Ω",
    ),
    (
        "lmatch_hp(50 Ω, -10 Ω, 1 MHz)",
        "a load resistance is a positive real number",
        "-10 Ω",
    ),
    (
        "lmatch_z(50 Ω, (-10 + j5) Ω, 1)",
        "the load must have a positive, finite resistance",
        "(-10 + j5) Ω",
    ),
    ("lmatch_z(50 Ω, 25 Ω, 2)", "`sol` must be +1 or −1", "2"),
    ("db_v(0)", "a ratio of 0 is −∞ dB", "0"),
    ("db_p(0)", "a ratio of 0 is −∞ dB", "0"),
    (
        "vdrop(0 V, 10 V)",
        "a fraction of the sending voltage, which cannot be 0",
        "0 V",
    ),
    (
        "vreg(10 V, 0 V)",
        "a fraction of the full-load voltage, which cannot be 0",
        "0 V",
    ),
];

#[test]
fn each_domain_error_names_the_argument_and_why() {
    let mut seen = std::collections::BTreeSet::new();
    for &(formula, says, at) in DOMAIN_CASES {
        // `open` is an open element: a capacitor of 0 F at 50 Hz (−j∞ Ω)
        let src = format!("open = z_cap(0 F, 50 Hz)\nx = {formula}\n");
        let e = engine(&src);
        let id = e.model.id("x").unwrap();
        let why = e.explain(id).unwrap_or_else(|| panic!("{formula}: no explanation"));
        assert!(why.message.contains(says), "{formula}: {}", why.message);
        let text = e.model.sources.slice(why.span);
        assert_eq!(text, at, "{formula}: located on {text:?}");
        seen.insert(why.func);
    }
    // every function whose domain `funcs::domains::TABLE` gives has a case
    // here (the line and two-port functions test their own)
    for &(name, _, domain) in ohmsheet::funcs::domains::TABLE {
        if domain.is_some() {
            assert!(seen.contains(name), "no domain case for `{name}`");
        }
    }
}

/// Domain messages show the values they name as the sheet shows values,
/// with units (`0 Ω`, `2 MVA`), never as raw complex numbers (`0+0i`) or
/// raw SI numbers. The ranges are those of the functions' conventions
/// (docs/functions.md): a short-circuit impedance has R ≥ 0 and X ≥ 0 and
/// is not zero; a size list has a largest and a smallest size.
#[test]
fn domain_messages_show_values_with_their_units() {
    for (formula, says) in [
        (
            "sc_peak(400 V, 0 Ω, 1.05)",
            "argument `Zk` = 0 Ω is out of range: `Zk` must be a short-circuit impedance",
        ),
        (
            "sc_peak(400 V, (-1 + j2) Ω, 1.05)",
            "argument `Zk` = -1 + j2 Ω is out of range",
        ),
        (
            "size_up(3 MVA, 500 kVA, 2000 kVA, 750 kVA)",
            "argument `x` = 3 MVA is out of range: `x` is above the largest size listed, 2 MVA; add a larger size",
        ),
        (
            "size_down(100 kVA, 500 kVA, 300 kVA)",
            "`x` is below the smallest size listed, 300 kVA",
        ),
        (
            "round_up((400 + j30) VA, 50 VA)",
            "argument `x` = 400 + j30 VA is out of range: `x` must be a real value, not a complex one",
        ),
        (
            "round_up(400 kvar, -50 kvar)",
            "argument `step` = -50 kvar is out of range",
        ),
        ("z_xr(-2 Ω, 3)", "argument `Zmag` = -2 Ω is out of range"),
        ("pick(0.5, 1 A, 2 A)", "argument `cond` = 0.5 is out of range"),
        ("awg(60)", "argument `n` = 60 is out of range"),
        ("awg0(7)", "argument `k` = 7 is out of range: `k` must be 1, 2, 3 or 4"),
    ] {
        let e = engine(&format!("x = {formula}\n"));
        let id = e.model.id("x").unwrap();
        let why = e.explain(id).unwrap_or_else(|| panic!("{formula}: no explanation"));
        assert!(why.message.contains(says), "{formula}: {}", why.message);
        for raw in ["0i", "+0i", "-0i", "{#", "(SI units)", "but it is"] {
            assert!(!why.message.contains(raw), "{formula}: raw value in {}", why.message);
        }
    }
}

#[test]
fn every_function_names_its_source() {
    for f in ohmsheet::funcs::library() {
        assert!(!f.source.is_empty(), "`{}` names no published source", f.name);
    }
}

#[test]
fn run_explains_an_out_of_range_power_factor_on_the_argument() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("pfc.ohm");
    std::fs::write(&sheet, "P = 100 kW\npf1 = 0.8\nQ = q_pfc(P, pf1, 0.95)\n").unwrap();
    let out = ohmsheet()
        .args(["run", sheet.to_str().unwrap(), "--set", "pf1=1.2"])
        .assert()
        .code(2)
        .get_output()
        .stderr
        .clone();
    let err = String::from_utf8(out).unwrap();
    assert!(
        err.contains("`q_pfc`: argument `pf1` = 1.2 is out of range: a power factor lies within −1 … +1"),
        "{err}"
    );
    assert!(err.contains("pfc.ohm:3:14"), "located on the argument: {err}");
    assert!(!err.contains("0/0"), "the generic message gives way: {err}");

    // a report says the same
    let bad = dir.path().join("bad.ohm");
    std::fs::write(&bad, "P = 100 kW\npf1 = 1.2\nQ = q_pfc(P, pf1, 0.95)\n").unwrap();
    let out = ohmsheet()
        .args(["report", bad.to_str().unwrap(), "-o"])
        .arg(dir.path().join("bad.md"))
        .assert()
        .get_output()
        .stderr
        .clone();
    let err = String::from_utf8(out).unwrap();
    assert!(err.contains("argument `pf1` = 1.2 is out of range"), "{err}");
    assert!(err.contains("bad.ohm:3:14"), "{err}");

    // a sweep through the range says why its undefined points are
    let out = ohmsheet()
        .args([
            "sweep",
            sheet.to_str().unwrap(),
            "--vary",
            "pf1=0.5..1.5",
            "--points",
            "3",
            "--show",
            "Q",
        ])
        .assert()
        .code(0)
        .get_output()
        .stderr
        .clone();
    let err = String::from_utf8(out).unwrap();
    assert!(err.contains("argument `pf1` = 1.5 is out of range"), "{err}");

    // a session edit that makes it undefined says why
    let data = tempfile::tempdir().unwrap();
    let (mut s, _) =
        ohmsheet::session::state::Session::open(Some(&sheet), Some(data.path().to_path_buf()), false).expect("session");
    let r = s.handle("pf1 = 1.2");
    assert!(r.text.contains("argument `pf1` = 1.2 is out of range"), "{}", r.text);
}

// ---- open and short elements (item 5) ----
//
// Every network, divider and source function at 0 (a short) and ∞ (an
// open) element values gives the limit the circuit has, as `||` does.
// Expected values: the circuits worked by hand (an open branch carries no
// current and drops out; a short has no voltage across it) — common
// practice — and each is also approached by elements of 1e-12 Ω and
// z_cap(1e-15 F, 50 Hz) (about −j3e12 Ω).

/// An infinite expected value (an open): any infinite number matches.
const OPEN_VALUE: C64 = C64::new(f64::INFINITY, 0.0);

fn limits_cases() -> Vec<(&'static str, Vec<C64>)> {
    let v = C64::new(10.0, 0.0);
    let i = C64::new(2.0, 0.0);
    let z = C64::new(3.0, 4.0);
    let z2 = C64::new(6.0, -8.0);
    let zero = C64::new(0.0, 0.0);
    let par = |a: C64, b: C64| a * b / (a + b);
    vec![
        ("vdiv(V, Z, OPEN)", vec![v]),
        ("vdiv(V, Z, SHORT)", vec![zero]),
        ("vdiv(V, OPEN, Z)", vec![zero]),
        ("vdiv(V, SHORT, Z)", vec![v]),
        ("idiv(I, Z, OPEN)", vec![i]),
        ("idiv(I, Z, SHORT)", vec![zero]),
        ("idiv(I, OPEN, Z)", vec![zero]),
        ("idiv(I, SHORT, Z)", vec![i]),
        ("bus_vth(V, Z, OPEN)", vec![v]),
        ("bus_vth(V, Z, SHORT)", vec![zero]),
        ("bus_vth(V, OPEN, Z)", vec![zero]),
        ("bus_vth(V, SHORT, Z)", vec![v]),
        ("bus_vth(V, Z, OPEN, Z2)", vec![v * z2 / (z + z2)]),
        ("bus_vth(V, Z, Z2, SHORT)", vec![zero]),
        ("bus_zth(Z, OPEN)", vec![z]),
        ("bus_zth(Z, SHORT)", vec![zero]),
        ("bus_zth(OPEN, Z)", vec![z]),
        ("bus_zth(Z, OPEN, Z2)", vec![par(z, z2)]),
        ("norton_i(V, OPEN)", vec![zero]),
        ("thevenin_v(I, SHORT)", vec![zero]),
        ("s_vz(V, OPEN)", vec![zero]),
        ("s_iz(I, SHORT)", vec![zero]),
        ("p_max(V, OPEN_R)", vec![zero]),
        // a pure reactance is an open resistance in parallel with it
        ("as_parallel(j5 Ω + SHORT)", vec![OPEN_VALUE, C64::new(5.0, 0.0)]),
        ("as_parallel(3 Ω + SHORT)", vec![C64::new(3.0, 0.0), OPEN_VALUE]),
        ("as_parallel(OPEN)", vec![OPEN_VALUE, OPEN_VALUE]),
        (
            "as_series(re(OPEN_R), 5 Ω)",
            vec![zero, C64::new(5.0, 0.0), C64::new(0.0, 5.0)],
        ),
        (
            "as_series(3 Ω, re(OPEN_R))",
            vec![C64::new(3.0, 0.0), zero, C64::new(3.0, 0.0)],
        ),
        ("as_series(SHORT, 5 Ω)", vec![zero, zero, zero]),
        ("as_series(3 Ω, SHORT)", vec![zero, zero, zero]),
        // Kennelly with an open delta branch: the arms touching it equal
        // the other branch they touch; the third arm is a short
        ("delta_to_wye(OPEN, Z, Z2)", vec![z2, z, zero]),
        ("delta_to_wye(Z, OPEN, Z2)", vec![zero, z, z2]),
        ("delta_to_wye(Z, Z2, OPEN)", vec![z, zero, z2]),
        ("delta_to_wye(SHORT, Z, Z2)", vec![zero, zero, z * z2 / (z + z2)]),
        ("delta_to_wye(SHORT, SHORT, SHORT)", vec![zero, zero, zero]),
        // an open wye arm opens both delta branches at its node
        ("wye_to_delta(OPEN, Z, Z2)", vec![OPEN_VALUE, z + z2, OPEN_VALUE]),
        ("wye_to_delta(Z, Z2, OPEN)", vec![z + z2, OPEN_VALUE, OPEN_VALUE]),
        ("wye_to_delta(SHORT, Z, Z2)", vec![z, OPEN_VALUE, z2]),
    ]
}

fn matches_limit(got: C64, want: C64, rel: f64) -> bool {
    if want.re.is_infinite() {
        got.re.is_infinite() || got.im.is_infinite() || got.norm() > 1e9
    } else {
        (got - want).norm() <= rel * want.norm().max(1.0)
    }
}

#[test]
fn network_functions_give_their_limits_at_open_and_short_elements() {
    let pre = "V = 10 V\nI = 2 A\nZ = (3 + j4) Ω\nZ2 = (6 - j8) Ω\n";
    for (formula, want) in limits_cases() {
        for (open, open_r, short, rel) in [
            ("z_cap(0 F, 50 Hz)", "(1 Ω / 0)", "0 Ω", 1e-15),
            ("z_cap(1e-15 F, 50 Hz)", "(1e12 Ω)", "1e-12 Ω", 1e-9),
        ] {
            let f = formula
                .replace("OPEN_R", open_r)
                .replace("OPEN", open)
                .replace("SHORT", short);
            let e = engine(&format!("{pre}x = {f}\n"));
            let vals = e.values(e.model.id("x").unwrap()).to_vec();
            assert_eq!(vals.len(), want.len(), "{f}");
            for (k, (&g, &w)) in vals.iter().zip(&want).enumerate() {
                assert!(matches_limit(g, w, rel), "{f}, result {k}: got {g}, the limit is {w}");
            }
        }
    }
}

#[test]
fn switching_a_bank_off_with_set_gives_the_open_circuit_limit() {
    // A 300 kvar wye bank on a 480 V bus behind a source impedance; with
    // the bank off (0 kvar) its impedance is −j∞ Ω and the bus sees the
    // source voltage: Vth = Vs, Zth = Zs (common practice).
    let sheet = "Vs = 277 V\nZs = (0.02 + j0.08) Ω\nQc = 300 kvar\nf = 60 Hz\n\
                 C = cap_wye(Qc, 480 V, f)\nZc = z_cap(C, f)\nZp = Zs || Zc\n\
                 Vth = bus_vth(Vs, Zs, Zc)\nZth = bus_zth(Zs, Zc)\nVl = vdiv(Vs, Zs, Zc)\n";
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("bank.ohm");
    std::fs::write(&path, sheet).unwrap();
    let out = ohmsheet()
        .args(["run", path.to_str().unwrap(), "--format", "csv", "--set", "Qc=0 kvar"])
        .assert()
        .code(0)
        .get_output()
        .stdout
        .clone();
    let text = String::from_utf8(out).unwrap();
    let row = |name: &str| -> (f64, f64) {
        let l = text.lines().find(|l| l.starts_with(&format!("{name},"))).unwrap();
        // name, formula (quoted when it has commas), unit, re, im, display, polar
        let f: Vec<&str> = l.rsplitn(5, ',').collect();
        (f[3].parse().unwrap(), f[2].parse().unwrap())
    };
    assert_eq!(row("Vth"), (277.0, 0.0));
    assert_eq!(row("Vl"), (277.0, 0.0));
    assert_eq!(row("Zth"), (0.02, 0.08));
    assert_eq!(row("Zp"), (0.02, 0.08));
}

#[test]
fn the_batch_errors_file_says_which_argument_is_out_of_range() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("pfc.ohm");
    std::fs::write(&sheet, "P = 100 kW\npf1 = 0.8\nQ = q_pfc(P, pf1, 0.95)\n").unwrap();
    // 70 cases (two blocks of lanes); case 3 and case 66 out of range
    let mut cases = String::from("pf1\n");
    for i in 1..=70 {
        cases.push_str(if i == 3 || i == 66 { "1.2\n" } else { "0.8\n" });
    }
    let cases_path = dir.path().join("cases.csv");
    std::fs::write(&cases_path, cases).unwrap();
    let out = dir.path().join("r.csv");
    ohmsheet()
        .args([
            "batch",
            sheet.to_str().unwrap(),
            "--cases",
            cases_path.to_str().unwrap(),
        ])
        .args(["--out", out.to_str().unwrap(), "--quiet"])
        .assert()
        .code(1);
    let errs = std::fs::read_to_string(dir.path().join("r.errors.csv")).unwrap();
    let lines: Vec<&str> = errs.lines().filter(|l| l.contains("q_pfc")).collect();
    assert_eq!(lines.len(), 2, "{errs}");
    for l in lines {
        assert!(
            l.contains("argument `pf1` = 1.2 is out of range: a power factor lies within −1 … +1"),
            "{l}"
        );
        assert!(l.contains("pfc.ohm:3:14"), "located on the argument: {l}");
    }
}
