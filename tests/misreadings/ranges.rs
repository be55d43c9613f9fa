//! Misreadings: arguments outside their physical range that a formula
//! alone would turn into a finite number (issue 13, item 6). A negative
//! inductance gives a capacitive impedance (−jωL), a negative bank rating
//! a negative capacitance, a zero base power a per-unit value of 0, a
//! reflection coefficient above 1 a negative return loss. Each such call
//! is NaN, explained on the argument, in `run` and in a batch; the edges
//! where a limit exists (0 H, 0 F, 0 var, a lossless line) keep it.
//!
//! The ranges are those of the quantities: a passive element's R, L, C
//! and G are ≥ 0 (IEC 60050-131, passive circuit elements); a shunt bank's
//! rating is the reactive power it delivers, ≥ 0 (IEEE Std 18-2012); a
//! per-unit base is a non-zero magnitude (IEEE Std 399-1997, from memory);
//! a passive load has |Γ| ≤ 1 (IEEE Std 100, return loss); the voltage
//! factor c of IEC 60909-0 Table 1 lies within 0.95 … 1.10; an inductor's
//! reactance is +ωL and a capacitor's −1/ωC (sign convention, IEC 60050-131).

use crate::common::{engine, ohmsheet, value};

/// (function, index of the argument, formula, what the explanation says,
/// the text it points at)
const RANGE_CASES: &[(&str, usize, &str, &str, &str)] = &[
    (
        "z_ind",
        0,
        "z_ind(-1 mH, 60 Hz)",
        "an inductance is a real number ≥ 0",
        "-1 mH",
    ),
    (
        "z_ind",
        1,
        "z_ind(1 mH, -60 Hz)",
        "a frequency is a real number ≥ 0",
        "-60 Hz",
    ),
    (
        "x_ind",
        0,
        "x_ind(-1 mH, 60 Hz)",
        "an inductance is a real number ≥ 0",
        "-1 mH",
    ),
    (
        "x_ind",
        1,
        "x_ind(1 mH, -60 Hz)",
        "a frequency is a real number ≥ 0",
        "-60 Hz",
    ),
    (
        "z_cap",
        0,
        "z_cap(-1 uF, 60 Hz)",
        "a capacitance is a real number ≥ 0",
        "-1 uF",
    ),
    (
        "z_cap",
        1,
        "z_cap(1 uF, -60 Hz)",
        "a frequency is a real number ≥ 0",
        "-60 Hz",
    ),
    (
        "x_cap",
        0,
        "x_cap(-1 uF, 60 Hz)",
        "a capacitance is a real number ≥ 0",
        "-1 uF",
    ),
    (
        "x_cap",
        1,
        "x_cap(1 uF, -60 Hz)",
        "a frequency is a real number ≥ 0",
        "-60 Hz",
    ),
    (
        "l_from_x",
        0,
        "l_from_x(-10 Ω, 60 Hz)",
        "a negative one is a capacitor's",
        "-10 Ω",
    ),
    (
        "l_from_x",
        1,
        "l_from_x(10 Ω, -60 Hz)",
        "a frequency is a positive real number",
        "-60 Hz",
    ),
    (
        "c_from_x",
        0,
        "c_from_x(10 Ω, 60 Hz)",
        "a positive one is an inductor's",
        "10 Ω",
    ),
    (
        "c_from_x",
        1,
        "c_from_x(-10 Ω, 0 Hz)",
        "a frequency is a positive real number",
        "0 Hz",
    ),
    (
        "f_res",
        0,
        "f_res(-1 mH, 1 uF)",
        "an inductance is a positive real number",
        "-1 mH",
    ),
    (
        "f_res",
        1,
        "f_res(1 mH, -1 uF)",
        "a capacitance is a positive real number",
        "-1 uF",
    ),
    (
        "q_series",
        0,
        "q_series(-1 Ω, 1 mH, 1 uF)",
        "resistance of a resonant circuit",
        "-1 Ω",
    ),
    (
        "q_series",
        1,
        "q_series(1 Ω, -1 mH, 1 uF)",
        "an inductance is a positive",
        "-1 mH",
    ),
    (
        "q_series",
        2,
        "q_series(1 Ω, 1 mH, -1 uF)",
        "a capacitance is a positive",
        "-1 uF",
    ),
    (
        "q_parallel",
        0,
        "q_parallel(-1 kΩ, 1 mH, 1 uF)",
        "resistance of a resonant circuit",
        "-1 kΩ",
    ),
    (
        "q_parallel",
        1,
        "q_parallel(1 kΩ, -1 mH, 1 uF)",
        "an inductance is a positive",
        "-1 mH",
    ),
    (
        "q_parallel",
        2,
        "q_parallel(1 kΩ, 1 mH, -1 uF)",
        "a capacitance is a positive",
        "-1 uF",
    ),
    (
        "q_of",
        0,
        "q_of((-1 + j5) Ω)",
        "needs a finite impedance with R > 0",
        "(-1 + j5) Ω",
    ),
    (
        "p_max",
        1,
        "p_max(480 V, (-1 + j2) Ω)",
        "Re Zth must be positive",
        "(-1 + j2) Ω",
    ),
    (
        "cap_delta",
        0,
        "cap_delta(-100 kvar, 480 V, 60 Hz)",
        "a bank's rating is a finite real number ≥ 0",
        "-100 kvar",
    ),
    (
        "cap_delta",
        1,
        "cap_delta(100 kvar, 0 V, 60 Hz)",
        "a bank's voltage cannot be 0",
        "0 V",
    ),
    (
        "cap_delta",
        2,
        "cap_delta(100 kvar, 480 V, -60 Hz)",
        "a frequency is a positive real number",
        "-60 Hz",
    ),
    (
        "cap_wye",
        0,
        "cap_wye(-100 kvar, 480 V, 60 Hz)",
        "a bank's rating is a finite real number ≥ 0",
        "-100 kvar",
    ),
    (
        "cap_wye",
        1,
        "cap_wye(100 kvar, 0 V, 60 Hz)",
        "a bank's voltage cannot be 0",
        "0 V",
    ),
    (
        "cap_wye",
        2,
        "cap_wye(100 kvar, 480 V, 0 Hz)",
        "a frequency is a positive real number",
        "0 Hz",
    ),
    (
        "cap_1ph",
        0,
        "cap_1ph(-10 kvar, 240 V, 60 Hz)",
        "a bank's rating is a finite real number ≥ 0",
        "-10 kvar",
    ),
    (
        "cap_1ph",
        1,
        "cap_1ph(10 kvar, 0 V, 60 Hz)",
        "a bank's voltage cannot be 0",
        "0 V",
    ),
    (
        "cap_1ph",
        2,
        "cap_1ph(10 kvar, 240 V, -60 Hz)",
        "a frequency is a positive real number",
        "-60 Hz",
    ),
    ("z_base", 0, "z_base(0 V, 1 MVA)", "a base voltage cannot be 0", "0 V"),
    ("z_base", 1, "z_base(13.8 kV, 0 VA)", "a base power cannot be 0", "0 VA"),
    ("i_base", 0, "i_base(0 V, 1 MVA)", "a base voltage cannot be 0", "0 V"),
    ("i_base", 1, "i_base(13.8 kV, 0 VA)", "a base power cannot be 0", "0 VA"),
    (
        "pu_to_ohm",
        1,
        "pu_to_ohm(0.05 pu, 0 V, 1 MVA)",
        "a base voltage cannot be 0",
        "0 V",
    ),
    (
        "pu_to_ohm",
        2,
        "pu_to_ohm(0.05 pu, 480 V, 0 VA)",
        "a base power cannot be 0",
        "0 VA",
    ),
    (
        "ohm_to_pu",
        1,
        "ohm_to_pu(1 Ω, 0 V, 1 MVA)",
        "a base voltage cannot be 0",
        "0 V",
    ),
    (
        "ohm_to_pu",
        2,
        "ohm_to_pu(1 Ω, 480 V, 0 VA)",
        "a base power cannot be 0",
        "0 VA",
    ),
    (
        "rebase",
        1,
        "rebase(0.05 pu, 0 V, 1 MVA, 480 V, 2 MVA)",
        "a base voltage cannot be 0",
        "0 V",
    ),
    (
        "rebase",
        2,
        "rebase(0.05 pu, 480 V, 0 VA, 480 V, 2 MVA)",
        "a base power cannot be 0",
        "0 VA",
    ),
    (
        "rebase",
        3,
        "rebase(0.05 pu, 480 V, 1 MVA, 0 V, 2 MVA)",
        "a base voltage cannot be 0",
        "0 V",
    ),
    (
        "rebase",
        4,
        "rebase(0.05 pu, 480 V, 1 MVA, 480 V, 0 VA)",
        "a base power cannot be 0",
        "0 VA",
    ),
    (
        "line_rlgc",
        0,
        "line_rlgc(-0.1 Ω/km, 1 mH/km, 0 S/km, 10 nF/km, 60 Hz)",
        "`R` must be a real value of zero or more",
        "-0.1 Ω/km",
    ),
    (
        "line_rlgc",
        1,
        "line_rlgc(0.1 Ω/km, -1 mH/km, 0 S/km, 10 nF/km, 60 Hz)",
        "`L` must be a real value of zero or more",
        "-1 mH/km",
    ),
    (
        "line_rlgc",
        2,
        "line_rlgc(0.1 Ω/km, 1 mH/km, -1 uS/km, 10 nF/km, 60 Hz)",
        "`G` must be a real value of zero or more",
        "-1 uS/km",
    ),
    (
        "line_rlgc",
        3,
        "line_rlgc(0.1 Ω/km, 1 mH/km, 0 S/km, -10 nF/km, 60 Hz)",
        "`C` must be a real value of zero or more",
        "-10 nF/km",
    ),
    (
        "line_rlgc",
        4,
        "line_rlgc(0.1 Ω/km, 1 mH/km, 0 S/km, 10 nF/km, -60 Hz)",
        "the frequency must be real and not negative",
        "-60 Hz",
    ),
    ("return_loss", 0, "return_loss(1.5)", "|Γ| > 1", "1.5"),
    (
        "refl",
        1,
        "refl(10 Ω, -50 Ω)",
        "the reference impedance Z0 has a positive real part",
        "-50 Ω",
    ),
    (
        "z_refer",
        1,
        "z_refer(1 Ω, 0 V, 13.8 kV)",
        "`V_from` is zero: no ratio",
        "0 V",
    ),
    (
        "z_refer",
        2,
        "z_refer(1 Ω, 480 V, 0 V)",
        "`V_to` is zero: no ratio",
        "0 V",
    ),
    (
        "sc_peak",
        2,
        "sc_peak(480 V, (0.002 + j0.01) Ω, -1.1)",
        "`c` must be a real factor > 0",
        "-1.1",
    ),
];

#[test]
fn each_argument_out_of_its_physical_range_is_refused_on_the_argument() {
    let mut seen = std::collections::BTreeSet::new();
    for &(func, arg, formula, says, at) in RANGE_CASES {
        let e = engine(&format!("x = {formula}\n"));
        let id = e.model.id("x").unwrap();
        for z in e.values(id) {
            assert!(z.re.is_nan(), "{formula}: gave {z} instead of refusing");
        }
        let why = e.explain(id).unwrap_or_else(|| panic!("{formula}: no explanation"));
        assert!(why.message.contains(says), "{formula}: {}", why.message);
        assert_eq!(e.model.sources.slice(why.span), at, "{formula}: located");
        assert!(!why.message.contains("+-0i"), "{formula}: {}", why.message);
        seen.insert((func, arg));
    }
    // every range the library declares has its case
    for &(name, ranges) in ohmsheet::funcs::domains::RANGES {
        for &(i, _) in ranges {
            assert!(seen.contains(&(name, i)), "no case for argument {i} of `{name}`");
        }
    }
}

/// The edges of each range keep the limits of short and open elements.
#[test]
fn the_edges_of_the_ranges_keep_their_limits() {
    let e = engine(
        "zl = z_ind(0 H, 60 Hz)\nzc = z_cap(0 F, 60 Hz)\nzd = z_cap(1 uF, 0 Hz)\n\
         xl = x_ind(0 H, 60 Hz)\nl0 = l_from_x(0 Ω, 60 Hz)\nc0 = cap_delta(0 var, 480 V, 60 Hz)\n\
         line = line_rlgc(0 Ω/km, 1 mH/km, 0 S/km, 10 nF/km, 60 Hz)\nrl = return_loss(1)\n\
         rm = return_loss(-1)\n",
    );
    // a short: jωL at L = 0 is 0 Ω
    assert_eq!(value(&e, "zl"), num_complex::Complex64::new(0.0, 0.0));
    assert_eq!(value(&e, "xl").re, 0.0);
    assert_eq!(value(&e, "l0").re, 0.0);
    assert_eq!(value(&e, "c0").re, 0.0, "a bank of 0 var is 0 F (switched off)");
    // an open: −j/(ωC) at C = 0 or at f = 0 (DC) is −j∞
    for n in ["zc", "zd"] {
        let z = value(&e, n);
        assert!(z.im == f64::NEG_INFINITY && z.re == 0.0, "{n} = {z}");
    }
    // a lossless line: Zc = √(L/C) = √(1e-3/10e-9) = 316.23 Ω, real
    // (telegrapher's equations, from memory)
    let zc = value(&e, "line.Zc");
    assert!(
        (zc.re - (1e-3f64 / 10e-9).sqrt()).abs() < 1e-9 && zc.im.abs() < 1e-9,
        "{zc}"
    );
    // a total reflection, |Γ| = 1 (an open or a short), is 0 dB
    assert_eq!(value(&e, "rl").re, 0.0);
    assert_eq!(value(&e, "rm").re, 0.0);
}

/// `run` reports the call on the argument and fails; nothing downstream
/// shows a number.
#[test]
fn run_refuses_a_negative_inductance_on_the_argument() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("l.ohm");
    std::fs::write(&sheet, "L = 2 mH\nZ = z_ind(L, 60 Hz)\nI = 120 V / Z\n").unwrap();
    let out = ohmsheet()
        .args(["run", sheet.to_str().unwrap(), "--set", "L=-2 mH"])
        .assert()
        .code(2)
        .get_output()
        .clone();
    let err = String::from_utf8(out.stderr).unwrap();
    assert!(
        err.contains("`z_ind`: argument `L` = -2 mH is out of range: an inductance is a real number ≥ 0"),
        "{err}"
    );
    assert!(err.contains("l.ohm:2:11"), "located on the argument: {err}");
}

/// A batch over more than one block of 64 cases: the rows with a negative
/// rating fail with the explanation, the others give C = Q/(ω·V²) (IEEE
/// Std 18-2012, Q = ωCV² for a wye bank per phase at line voltage).
#[test]
fn a_batch_refuses_negative_ratings_row_by_row() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("b.ohm");
    std::fs::write(&sheet, "Q = 100 kvar\nC = cap_wye(Q, 480 V, 60 Hz)\n").unwrap();
    let mut cases = String::from("Q [kvar]\n");
    for i in 0..100 {
        cases.push_str(&format!("{}\n", if i % 10 == 3 { -50 } else { 50 }));
    }
    let cases_path = dir.path().join("c.csv");
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
    let text = std::fs::read_to_string(&out).unwrap();
    let want = 50e3 / (2.0 * std::f64::consts::PI * 60.0 * 480.0f64.powi(2));
    for (i, line) in text.lines().skip(1).enumerate() {
        let c = line.split(',').nth(1).unwrap();
        if i % 10 == 3 {
            assert_eq!(c, "", "row {i}: {line}");
        } else {
            let c: f64 = c.parse().unwrap();
            assert!((c - want).abs() < 1e-12 * want, "row {i}: {c} vs {want}");
        }
    }
    let errs = std::fs::read_to_string(dir.path().join("r.errors.csv")).unwrap();
    assert_eq!(
        errs.matches("a bank's rating is a finite real number ≥ 0").count(),
        10,
        "{errs}"
    );
}
