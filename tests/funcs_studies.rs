//! The functions of issue 14 (first part): hyperbolic functions on their
//! branch cuts, steps and standard sizes, the two-way choice `pick`,
//! fault studies, power quality and AWG sizes — against published
//! definitions, handbook values and the trade's rules of thumb, each
//! source named beside its check ("from memory" where recalled, "common
//! practice" for a rule of thumb). Exact values for every function are
//! also checked against mpmath, cmath and numpy in funcs_reference.rs.

use num_complex::Complex64 as C64;
use predicates::prelude::*;

use crate::assert_close;
use crate::common::{engine, errors, eval_expr, ohmsheet, value};

fn re(x: f64) -> C64 {
    C64::new(x, 0.0)
}

fn ev(src: &str) -> C64 {
    eval_expr("", src)
}

/// A sheet that compiles but whose run reports a NaN at the cell.
fn nan_reported(body: &str) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("nan.ohm");
    std::fs::write(&path, body).unwrap();
    ohmsheet()
        .arg("run")
        .arg(&path)
        .assert()
        .code(2)
        .stderr(predicate::str::contains("NaN"));
}

// ---- hyperbolic functions ----

// DLMF 4.37: the principal values on the cuts are those of the defining
// logarithms, whatever the sign of a zero imaginary part. conj(−2) is
// −2 − j0, a negative real produced another way: still + jπ (rule 3 of
// issue 13).
#[test]
fn inverse_hyperbolics_on_their_cuts() {
    let pi = std::f64::consts::PI;
    let (acosh2, atanh2) = ((2f64).acosh(), 0.5 * 3f64.ln());
    for src in ["acosh(-2)", "acosh(conj(-2))", "acosh(-2 * (1 - j*0))"] {
        assert_close!(ev(src), C64::new(acosh2, pi), 1e-15);
    }
    for src in ["atanh(2)", "atanh(conj(2))"] {
        assert_close!(ev(src), C64::new(atanh2, pi / 2.0), 1e-15);
    }
    assert_close!(ev("atanh(-2)"), C64::new(-atanh2, pi / 2.0), 1e-15);
    // inside [-1, 1] acosh is j·acos x
    assert_close!(ev("acosh(0.5)"), C64::new(0.0, pi / 3.0), 1e-15);
    assert_eq!(ev("acosh(1)"), re(0.0));
    // asinh on the imaginary axis: j·asin y inside, the cut beyond ±j
    assert_close!(ev("asinh(j*0.5)"), C64::new(0.0, pi / 6.0), 1e-15);
    assert_close!(ev("asinh(-j*2)"), C64::new(-acosh2, -pi / 2.0), 1e-15);
    // real arguments stay real
    assert_eq!(ev("sinh(0.5)").im, 0.0);
    assert_eq!(ev("asinh(-3)").im, 0.0);
}

// Identities (DLMF 4.30.1, 4.28.8, 4.37.16): cosh² − sinh² = 1,
// cosh(jx) = cos x, and each inverse undoes its function.
#[test]
fn hyperbolic_identities() {
    for z in ["0.3 + j1.2", "-2 - j0.4", "5"] {
        // cosh² and sinh² of 5 are 5.5e3: the difference keeps 1e-12 of that
        assert_close!(ev(&format!("cosh({z})^2 - sinh({z})^2")), re(1.0), 1e-9);
        assert_close!(ev(&format!("sinh(asinh({z}))")), eval_expr("", z), 1e-12);
        assert_close!(ev(&format!("cosh(acosh({z}))")), eval_expr("", z), 1e-12);
        assert_close!(ev(&format!("tanh(atanh({z}))")), eval_expr("", z), 1e-12);
    }
    assert_close!(ev("cosh(j*0.7)"), re(0.7f64.cos()), 1e-15);
}

// atanh has poles at ±1: the limit along the real axis is ±∞, reported
// as an infinite result rather than a number.
#[test]
fn atanh_at_its_poles_is_infinite() {
    assert_eq!(ev("atanh(1)"), re(f64::INFINITY));
    assert_eq!(ev("atanh(-1)"), re(f64::NEG_INFINITY));
}

// ---- steps and sizes ----

// Common practice: a bank is rounded up to the next whole step of the
// standard unit size; the unit stays.
#[test]
fn rounding_to_a_step_keeps_the_unit() {
    let e = engine("Q = 412 kvar\nup = round_up(Q, 50 kvar)\ndn = round_down(Q, 50 kvar)\nnear = round(Q, 50 kvar)");
    assert_eq!(value(&e, "up"), re(450e3));
    assert_eq!(value(&e, "dn"), re(400e3));
    assert_eq!(value(&e, "near"), re(400e3));
    let rows = ohmsheet::output::cell_rows(&e, Default::default());
    let up = rows.iter().find(|r| r.name == "up").unwrap();
    assert!(format!("{up:?}").contains("kvar"), "{up:?}");
    // on a step already: unchanged, also when the step came out of
    // arithmetic a few ulps short (0.3/0.1 = 2.9999999999999996)
    assert_eq!(ev("round_up(450 kvar, 50 kvar)"), re(450e3));
    assert_close!(ev("round_down(0.3, 0.1)"), re(0.3), 1e-15);
    assert_close!(ev("round_up(0.1 + 0.2, 0.1)"), re(0.3), 1e-15);
    // up is towards +∞, down towards −∞; halves away from zero
    assert_eq!(ev("round_up(-120 kvar, 50 kvar)"), re(-100e3));
    assert_eq!(ev("round_down(-120 kvar, 50 kvar)"), re(-150e3));
    assert_eq!(ev("round(125 kvar, 50 kvar)"), re(150e3));
    assert_eq!(ev("round(-125 kvar, 50 kvar)"), re(-150e3));
    // ∞ stays ∞
    assert_eq!(ev("round_up(1 kvar/0, 50 kvar)"), re(f64::INFINITY));
}

#[test]
fn a_step_of_another_kind_or_not_positive_is_refused() {
    refused(
        "x = round_up(412 kvar, 50 kW)",
        "write both as W, both as var or both as VA",
    );
    refused(
        "x = round_up(412 kvar, 50 kVA)",
        "`step` must be of the same kind as `x`",
    );
    refused("x = round(10 A, 1 V)", "`step` must be of the same kind as `x`");
    refused("x = round(0.5 pu, 0.1)", "give both in per-unit or both with units");
    refused("x = round(30°, 5)", "`step` must be of the same kind as `x`");
    nan_reported("x = round_up(412 kvar, 0 kvar)\n");
    nan_reported("x = round_up(412 kvar, -50 kvar)\n");
    nan_reported("x = round_up((400 + j30) VA, 50 VA)\n");
}

// Common practice: take the next standard rating up from a list (here
// liquid-filled three-phase kVA ratings of IEEE Std C57.12.00, from
// memory).
#[test]
fn next_standard_size() {
    let list = "300 kVA, 500 kVA, 750 kVA, 1000 kVA, 1500 kVA, 2000 kVA, 2500 kVA";
    assert_eq!(ev(&format!("size_up(620 kVA, {list})")), re(750e3));
    assert_eq!(ev(&format!("size_down(620 kVA, {list})")), re(500e3));
    assert_eq!(ev(&format!("size_up(750 kVA, {list})")), re(750e3));
    assert_eq!(ev(&format!("size_up(750.0000001 kVA, {list})")), re(750e3));
    assert_eq!(ev(&format!("size_up(1 kVA, {list})")), re(300e3));
    // the order of the list does not matter
    assert_eq!(ev("size_up(620 kVA, 2500 kVA, 750 kVA, 500 kVA)"), re(750e3));
    nan_reported(&format!("x = size_up(3 MVA, {list})\n"));
    nan_reported(&format!("x = size_down(100 kVA, {list})\n"));
    refused(
        "x = size_up(620 kW, 500 kVA, 750 kVA)",
        "write both as W, both as var or both as VA",
    );
    refused(
        "x = size_up(620 kVA, 500 kVA, 750 A)",
        "`size` must be of the same kind as `x`",
    );
    // any number of sizes (the choice is lowered to instructions)
    let many: Vec<String> = (1..=40).map(|k| format!("{} kVA", 50 * k)).collect();
    assert_eq!(ev(&format!("size_up(620 kVA, {})", many.join(", "))), re(650e3));
    // a complex value is not sized by its real part: refused (NaN)
    nan_reported(&format!("x = size_up((400 + j300) kVA, {list})\n"));
    nan_reported(&format!("x = size_down(620 kVA, {list}, (500 + j1) kVA)\n"));
}

// ---- the two-way choice ----

#[test]
fn pick_takes_one_branch_and_checks_units() {
    assert_eq!(ev("pick(1, 5 A, 7 A)"), re(5.0));
    assert_eq!(ev("pick(0, 5 A, 7 A)"), re(7.0));
    // the branch not taken cannot spoil the result, even ∞ or NaN
    let e = engine("c = 1\nx = pick(c, 5 A, 1 A/0)\ny = pick(1 - c, 0 A/0, 7 A)");
    assert_eq!(value(&e, "x"), re(5.0));
    assert_eq!(value(&e, "y"), re(7.0));
    refused("x = pick(1, 5 A, 7 V)", "`b` must be of the same kind as `a`");
    refused(
        "x = pick(1, 5 kW, 7 kvar)",
        "write both as W, both as var or both as VA",
    );
    refused("x = pick(1 A, 5 A, 7 A)", "`cond` must be a plain number");
    nan_reported("c = 0.5\nx = pick(c, 5 A, 7 A)\n");
    nan_reported("c = 2\nx = pick(c, 5 A, 7 A)\n");
    nan_reported("x = pick(1 + j, 5 A, 7 A)\n");
}

/// `pick` lane by lane: the 64-lane evaluator and the one-case evaluator
/// give the same bits for conditions that differ between lanes, including
/// refused conditions (NaN) and an ∞ in the branch not taken.
#[test]
fn pick_agrees_lane_by_lane_in_both_evaluators() {
    use ohmsheet::engine::block::{Block, LANES};
    let mut e = engine("c = 1\nZ = 2 Ω/0\nx = pick(c, (3 + j4) Ω, Z)\ny = pick(c, Z, 10 Ω) * 2");
    let prog = e.model.program.clone();
    let c_slot = e.model.cells[e.model.id("c").unwrap() as usize].slot;
    let conds = [1.0, 0.0, 0.5, -0.0, 2.0, f64::NAN, 1.0 + 1e-16, 1.0 - 1e-16];
    let mut b = Block::new(&prog);
    for l in 0..LANES {
        b.set(c_slot, l, re(conds[l % conds.len()]));
    }
    b.run(&prog.code, &prog);
    for (l, &c) in conds.iter().enumerate() {
        e.set_input(e.model.id("c").unwrap(), re(c));
        for name in ["x", "y"] {
            let id = e.model.id(name).unwrap();
            let want = e.value(id);
            let got = b.get(e.model.cells[id as usize].slot, l);
            assert_eq!(
                (got.re.to_bits(), got.im.to_bits()),
                (want.re.to_bits(), want.im.to_bits()),
                "{name} at cond {c}"
            );
        }
    }
    e.set_input(e.model.id("c").unwrap(), re(0.0));
    assert_eq!(value(&e, "y"), re(20.0));
}

// With the comparison operators: the condition is the comparison's 1 or 0,
// and a batch of cases takes each its own branch (both evaluators agree).
#[test]
fn pick_with_comparisons_case_by_case() {
    use ohmsheet::engine::block::{Block, LANES};
    let src = "Q = 412 kvar\nstep = pick(Q > 400 kvar, 100 kvar, 50 kvar)\nbank = round_up(Q, step)\n\
               low = pick(Q <= 0 kvar, 1 A, 2 A)";
    let mut e = engine(src);
    assert_eq!(value(&e, "step"), re(100e3));
    assert_eq!(value(&e, "bank"), re(500e3));
    assert_eq!(value(&e, "low"), re(2.0));
    let q = e.model.id("Q").unwrap();
    let prog = e.model.program.clone();
    let slot = e.model.cells[q as usize].slot;
    let qs: Vec<f64> = (0..LANES).map(|l| l as f64 * 13e3 - 50e3).collect();
    let mut b = Block::new(&prog);
    for (l, v) in qs.iter().enumerate() {
        b.set(slot, l, re(*v));
    }
    b.run(&prog.code, &prog);
    for (l, v) in qs.iter().enumerate() {
        e.set_input(q, re(*v));
        for name in ["step", "bank", "low"] {
            let id = e.model.id(name).unwrap();
            let (want, got) = (e.value(id), b.get(e.model.cells[id as usize].slot, l));
            assert_eq!(
                (got.re.to_bits(), got.im.to_bits()),
                (want.re.to_bits(), want.im.to_bits()),
                "{name} at {v}"
            );
        }
        let step = if *v > 400e3 { 100e3 } else { 50e3 };
        assert_eq!(value(&e, "step"), re(step), "Q = {v}");
        assert_eq!(value(&e, "bank"), re((v / step).ceil() * step), "Q = {v}");
        assert_eq!(value(&e, "low"), re(if *v <= 0.0 { 1.0 } else { 2.0 }), "Q = {v}");
    }
}

// ---- nameplate and fault-level impedances ----

// Common practice: a transformer's bolted secondary fault current from
// its nameplate is the full-load current over the per-unit impedance
// (infinite source). 1000 kVA, 480 V, 5.75 %: FLA = 1202.8 A, Isc ≈
// 20.92 kA.
#[test]
fn nameplate_impedance_gives_the_fla_over_z_rule() {
    let e = engine(
        "Z = z_plate(5.75 %, 5.7, 480 V, 1000 kVA)\n\
         I = 480 V / sqrt(3) / abs(Z)\n\
         fla = 1000 kVA / (sqrt(3) * 480 V)",
    );
    assert_close!(value(&e, "fla"), re(1202.8), 1e-4);
    assert_close!(value(&e, "I"), value(&e, "fla") / 0.0575, 1e-12);
    assert_close!(value(&e, "I"), re(20_918.0), 1e-4);
    // X/R of the result as given
    let z = value(&e, "Z");
    assert_close!(re(z.im / z.re), re(5.7), 1e-12);
    // referred to the other side by the square of the ratio
    assert_close!(
        ev("z_plate(5.75 %, 5.7, 13.8 kV, 1000 kVA) / z_plate(5.75 %, 5.7, 480 V, 1000 kVA)"),
        re((13_800.0f64 / 480.0).powi(2)),
        1e-12
    );
    assert_close!(
        ev("z_refer(z_plate(5.75 %, 5.7, 480 V, 1000 kVA), 480 V, 13.8 kV)"),
        ev("z_plate(5.75 %, 5.7, 13.8 kV, 1000 kVA)"),
        1e-12
    );
    // per-unit on the system base: the change-of-base rule (rebase)
    assert_close!(
        ev("z_plate(5.75 %, 5.7, 480 V / 480 V * 1 pu, 1000 kVA / 10 MVA * 1 pu)"),
        ev("rebase(0.0575 pu ∠ atan(5.7), 480 V, 1000 kVA, 480 V, 10 MVA)"),
        1e-12
    );
}

// 0 and ∞ X/R are exact: purely resistive, purely reactive.
#[test]
fn x_over_r_limits_are_exact() {
    assert_eq!(ev("z_xr(10 Ω, 0)"), C64::new(10.0, 0.0));
    assert_eq!(ev("z_xr(10 Ω, 1/0)"), C64::new(0.0, 10.0));
    assert_eq!(ev("z_src(100 MVA, 1/0, 10 kV)"), C64::new(0.0, 1.0));
    nan_reported("x = z_xr(10 Ω, -3)\n");
    nan_reported("x = z_plate(6 %, -7, 400 V, 1 MVA)\n");
}

// A fault level in MVA and the same level as a current give one source
// impedance: S = √3·V·I (IEC 60909-0, from memory).
#[test]
fn source_impedance_from_mva_or_ka_agrees() {
    let e = engine("a = z_src(500 MVA, 15, 33 kV)\nb = z_src(500 MVA / (sqrt(3) * 33 kV), 15, 33 kV)");
    assert_close!(value(&e, "a"), value(&e, "b"), 1e-12);
    assert_close!(re(value(&e, "a").norm()), re(33e3f64.powi(2) / 500e6), 1e-12);
    // an infinite bus has no impedance
    assert_eq!(ev("z_src(1 VA/0, 10, 11 kV)"), re(0.0));
    // no fault level, no source: an open, ∞ Ω as `1 Ω / 0` is, not
    // ∞ + j∞ shown at 45° whatever the X/R
    assert_eq!(ev("z_src(0 VA, 10, 11 kV)"), re(f64::INFINITY));
    assert_eq!(ev("z_src(0 A, 15, 11 kV)"), re(f64::INFINITY));
    assert_eq!(ev("z_xr(1 Ω / 0, 10)"), re(f64::INFINITY));
}

// ---- unsymmetrical faults ----

// Standard power-systems texts (from memory): with Z0 = Z1 = Z2 a bolted
// single line-to-ground fault draws the three-phase fault current; a
// line-to-line fault with Z2 = Z1 draws √3/2 of it (86.6 %, common
// practice); a double line-to-ground fault with an open ground path is a
// line-to-line fault; an ungrounded source (Z0 open) gives no ground
// current.
#[test]
fn fault_currents_follow_the_textbook_relations() {
    let pre = "Vf = 277 V\nZ = (1.2 + j9.5) mΩ\nI3 = abs(Vf / Z)";
    let e = engine(&format!(
        "{pre}\nslg = fault_slg(Vf, Z, Z, Z, 0 Ω)\nll = fault_ll(Vf, Z, Z, 0 Ω)\n\
         dlg_open = fault_dlg(Vf, Z, Z, 1 Ω/0, 0 Ω)\nslg_ungr = fault_slg(Vf, Z, Z, 1 Ω/0, 0 Ω)\n\
         dlg = fault_dlg(Vf, Z, Z, 2*Z, 0.5 mΩ)"
    ));
    let i3 = value(&e, "I3");
    assert_close!(re(value(&e, "slg.a").norm()), i3, 1e-12);
    assert_eq!(value(&e, "slg.b"), re(0.0));
    assert_eq!(value(&e, "slg.c"), re(0.0));
    assert_close!(re(value(&e, "ll.b").norm()), i3 * (3f64.sqrt() / 2.0), 1e-12);
    assert_close!(value(&e, "ll.c"), -value(&e, "ll.b"), 1e-15);
    assert_eq!(value(&e, "ll.ground"), re(0.0));
    for f in ["a", "b", "c", "pos", "neg", "zero", "ground"] {
        let (x, y) = (value(&e, &format!("dlg_open.{f}")), value(&e, &format!("ll.{f}")));
        assert_close!(x, y, 1e-12);
        assert_eq!(value(&e, &format!("slg_ungr.{f}")), re(0.0), "{f}");
    }
    // the double line-to-ground fault: no current in the sound phase, the
    // ground current is Ib + Ic = 3·I0, and I0 + I1 + I2 = 0
    assert_eq!(value(&e, "dlg.a"), re(0.0));
    assert_close!(value(&e, "dlg.ground"), value(&e, "dlg.b") + value(&e, "dlg.c"), 1e-12);
    let s = value(&e, "dlg.zero") + value(&e, "dlg.pos") + value(&e, "dlg.neg");
    assert!(s.norm() < 1e-9 * value(&e, "dlg.pos").norm(), "{s}");
}

#[test]
fn fault_currents_in_per_unit() {
    let e = engine("f = fault_slg(1 pu, j0.1 pu, j0.1 pu, j0.1 pu, 0 pu)\ng = abs(f.a)");
    assert_close!(value(&e, "g"), re(10.0), 1e-12);
    refused(
        "f = fault_slg(1 pu, j0.1 Ω, j0.1 pu, j0.1 pu, 0 pu)",
        "mixing per-unit and SI values",
    );
}

// ---- peak factor (IEC 60909-0) ----

// IEC 60909-0: κ runs from 1.02 (R/X → ∞, resistive) to 2.0 (R/X = 0,
// reactive); ip = κ·√2·Ik". (from memory)
#[test]
fn peak_factor_limits_and_formula() {
    assert_eq!(ev("kappa(0)"), re(1.02));
    assert_eq!(ev("kappa(1/0)"), re(2.0));
    assert_close!(ev("kappa(10)"), re(1.02 + 0.98 * (-0.3f64).exp()), 1e-15);
    let e = engine("k = sc_peak(400 V, j10 mΩ, 1.05)");
    let ik = 1.05 * 400.0 / (3f64.sqrt() * 0.01);
    assert_close!(value(&e, "k.Ik"), re(ik), 1e-12);
    assert_eq!(value(&e, "k.kappa"), re(2.0));
    assert_close!(value(&e, "k.ip"), re(2.0 * 2f64.sqrt() * ik), 1e-12);
    nan_reported("x = kappa(-2)\n");
    nan_reported("x = sc_peak(400 V, 0 Ω, 1.05)\n");
}

// ---- power quality ----

// Common practice: a 1 Mvar bank on a bus with a 20 MVA fault level
// resonates near the 4.5th harmonic; no bank, no resonance.
#[test]
fn resonance_of_a_shunt_bank() {
    assert_close!(ev("h_res(20 MVA, 1 Mvar)"), re(20f64.sqrt()), 1e-15);
    assert_close!(ev("h_res(20 MVA, -1 Mvar)"), re(20f64.sqrt()), 1e-15);
    assert_eq!(ev("h_res(20 MVA, 0 var)"), re(f64::INFINITY));
    assert_close!(ev("h_res(2 pu, 0.1 pu)"), re(20f64.sqrt()), 1e-15);
}

// NEMA MG 1 (from memory): line voltages of 460, 467 and 450 V average
// 459 V; the largest deviation is 9 V, a 1.96 % unbalance.
#[test]
fn voltage_unbalance_by_both_definitions() {
    assert_close!(ev("unbalance_dev(460 V, 467 V, 450 V)"), re(9.0 / 459.0), 1e-12);
    // a balanced set has none by either definition
    let bal = "400 V, 400 V ∠ -120°, 400 V ∠ 120°";
    assert!(ev(&format!("unbalance_seq({bal})")).norm() < 1e-15);
    assert_eq!(ev(&format!("unbalance_dev({bal})")), re(0.0));
    // a set with 2 % negative sequence added (Fortescue): factor 0.02
    let e = engine("V1 = 230 V\nV2 = 4.6 V ∠ 40°\nabc = from_seq(0 V, V1, V2)\nu = unbalance_seq(abc.a, abc.b, abc.c)");
    assert_close!(value(&e, "u"), re(0.02), 1e-12);
    refused(
        "x = unbalance_seq(1 V, 2 V, 3 Ω)",
        "all arguments must have one dimension",
    );
    refused("x = unbalance_dev(1 Ω, 2 Ω, 3 Ω)", "must be voltages");
}

// Fortescue 1918: a balanced set in the other rotation (a-c-b) is all
// negative sequence, V1 = 0, so |V2|/|V1| is undefined. Rounding leaves a
// residue of about 1e-14 V in V1; the ratio over it (7.6e15) must not be
// shown as an unbalance factor.
#[test]
fn a_negative_sequence_set_has_no_unbalance_factor() {
    let u = ev("unbalance_seq(230 V, 230 V ∠ 120°, 230 V ∠ -120°)");
    assert!(u.re.is_nan(), "got {u}");
    nan_reported("x = unbalance_seq(230 V, 230 V ∠ 120°, 230 V ∠ -120°)\n");
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("acb.ohm");
    std::fs::write(&path, "x = unbalance_seq(1 kV, 1 kV ∠ 120°, 1 kV ∠ -120°)\n").unwrap();
    ohmsheet()
        .arg("run")
        .arg(&path)
        .assert()
        .code(2)
        .stderr(predicate::str::contains("negative-sequence set"));
    // a large but real unbalance (V2 = 0.5·V1, Fortescue) is still given
    let e = engine("abc = from_seq(0 V, 230 V, 115 V ∠ 10°)\nu = unbalance_seq(abc.a, abc.b, abc.c)");
    assert_close!(value(&e, "u"), re(0.5), 1e-12);
}

// ---- AWG (ASTM B258) ----

// Handbook conductor tables (from memory): AWG 10 is 0.1019 in (2.588 mm)
// and 10 380 cmil (5.261 mm²); AWG 12 is 2.053 mm and 3.309 mm²; AWG 2
// is 0.2576 in and 66 360 cmil (33.62 mm²); 4/0 is 0.4600 in, 211 600
// cmil (107.2 mm²). The tables print four digits, so the checks allow
// 5e-4. The area in cmil is the square of the diameter in mils.
#[test]
fn awg_sizes_match_the_tables() {
    let e = engine(
        "w10 = awg(10)\nw12 = awg(12)\nw2 = awg(2)\nw40 = awg0(4)\nw0000 = awg(-3)\n\
         a10 = w10.A [mm²]\nc10 = w10.A [kcmil]",
    );
    assert_close!(value(&e, "w10.d"), re(0.1019 * 0.0254), 5e-4);
    assert_close!(value(&e, "w10.A"), re(5.261e-6), 5e-4);
    assert_close!(value(&e, "w12.d"), re(2.053e-3), 5e-4);
    assert_close!(value(&e, "w12.A"), re(3.309e-6), 5e-4);
    assert_close!(value(&e, "w2.d"), re(0.2576 * 0.0254), 5e-4);
    assert_close!(value(&e, "w2.A"), re(33.62e-6), 5e-4);
    assert_close!(value(&e, "w40.d"), re(0.46 * 0.0254), 1e-15);
    assert_eq!(value(&e, "w40.d"), value(&e, "w0000.d"));
    // 4/0: exactly 211 600 cmil
    let cmil = std::f64::consts::FRAC_PI_4 * 0.0254e-3f64.powi(2);
    assert_close!(value(&e, "w40.A"), re(211_600.0 * cmil), 1e-12);
    assert_close!(value(&e, "c10"), re(10_380.0 * cmil), 5e-4);
    nan_reported("x = awg(10.5)\n");
    nan_reported("x = awg(-4)\n");
    nan_reported("x = awg0(5)\n");
}

// ---- units ----

// Defining values (NIST SP 811, appendix B): 1 ft = 12 in = 0.3048 m,
// 1 mi = 5280 ft, 1 kcmil = 0.506 707 mm², 1 hp = 745.699 9 W (mechanical,
// 550 ft·lbf/s).
#[test]
fn inch_pound_units_in_a_sheet() {
    assert_close!(ev("12 inch / 1 ft"), re(1.0), 1e-15);
    assert_close!(ev("1 mi / 1 ft"), re(5280.0), 1e-15);
    assert_close!(ev("1 mi"), re(1609.344), 1e-15);
    assert_close!(ev("250 kcmil / 1 mm²"), re(126.677), 1e-5);
    assert_close!(ev("1 hp"), re(745.699_871_582_270_2), 1e-15);
    assert_close!(ev("(10 hp + 500 W) / 1 kW"), re(7.956_998_715_822_702), 1e-15);
    // the area of a 2.5 mm² conductor: superscript and power forms agree
    assert_eq!(ev("2.5 mm²"), ev("2.5 mm^2"));
    assert_close!(ev("2.5 mm²"), re(2.5e-6), 1e-15);
}

fn refused(src: &str, needle: &str) {
    let d = errors(src);
    assert!(
        d.iter().any(|d| d.message.contains(needle)),
        "{src}: messages {:?} lack {needle:?}",
        d.iter().map(|d| &d.message).collect::<Vec<_>>()
    );
}
