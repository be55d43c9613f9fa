//! Power: complex power from phasors, power factor, maximum power
//! transfer and power-factor correction.
//!
//! Conventions (IEEE Std 1459 definitions, load convention):
//! - S = V·I* for RMS phasors; for peak phasors (`@amplitude peak`)
//!   S = ½·V·I*. P = Re S (W), Q = Im S (var), |S| in VA.
//! - Q > 0 is a lagging (inductive) load: the current lags the voltage.
//! - `pf` is a lead/lag-signed power factor, not IEEE Std 1459's P/|S|
//!   (whose sign is the direction of P): pf = +|P|/|S| when lagging or at
//!   unity (Q ≥ 0), −|P|/|S| when leading (Q < 0), for a load and for a
//!   source (P < 0) alike; the direction of real power is read from P
//!   (`re(S)`, `s_parts(S).P`), never from pf. Lagging means Q > 0 in the
//!   load convention (current into the element lags its voltage). A
//!   power-factor argument follows the same rule, so `q_pfc(P, 0.7, -0.95)`
//!   asks for 0.95 leading.
//! - The power-factor angle φ = atan(Q/|P|), within ±90°, positive
//!   lagging: cos φ = |pf| and the sign of φ is the sign of pf. (For a
//!   load, P > 0, it equals arg S.)

use super::*;
use crate::engine::ops::Op;

/// Both arguments per-unit, or both in their SI units; the result is
/// per-unit in the first case.
fn pu_pair(qs: &[Quantity], a: usize, b: usize) -> Result<bool, ArgError> {
    let pa = qs[a].kind == Kind::PerUnit;
    let pb = qs[b].kind == Kind::PerUnit;
    if pa != pb {
        return Err(ArgError::at(
            b,
            "mixing per-unit and SI values: give both in per-unit or both with units",
        ));
    }
    Ok(pa)
}

fn power_result(pu: bool, kind: Kind) -> Quantity {
    if pu {
        PU
    } else {
        Quantity::new(Dim::POWER, kind)
    }
}

fn ty_s_vi(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::VOLTAGE, "V")?;
    want_or_pu(qs, 1, Dim::CURRENT, "I")?;
    Ok(Shape::Scalar(power_result(pu_pair(qs, 0, 1)?, Kind::ApparentPower)))
}

fn ty_s_vz(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::VOLTAGE, "V")?;
    want_impedance(qs, 1, "Z")?;
    Ok(Shape::Scalar(power_result(pu_pair(qs, 0, 1)?, Kind::ApparentPower)))
}

fn ty_s_iz(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::CURRENT, "I")?;
    want_impedance(qs, 1, "Z")?;
    Ok(Shape::Scalar(power_result(pu_pair(qs, 0, 1)?, Kind::ApparentPower)))
}

fn times_k(e: &mut Emitter, x: Operand) -> Operand {
    let k = e.konst(power_k(e), 0.0);
    e.bin(Op::Mul, x, k)
}

fn abs2(e: &mut Emitter, x: Operand) -> Operand {
    let m = e.un(Op::Abs, x);
    e.bin(Op::Mul, m, m)
}

fn l_s_vi(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let ic = e.un(Op::Conj, a[1]);
    let s = e.bin(Op::Mul, a[0], ic);
    vec![times_k(e, s)]
}

fn l_s_vz(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let v2 = abs2(e, a[0]);
    let zc = e.un(Op::Conj, a[1]);
    let s = e.bin(Op::Div, v2, zc);
    vec![times_k(e, s)]
}

fn l_s_iz(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let i2 = abs2(e, a[0]);
    let s = e.bin(Op::Mul, i2, a[1]);
    vec![times_k(e, s)]
}

fn ty_best_load(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_impedance(qs, 0, "Zth")?;
    Ok(Shape::Scalar(qs[0]))
}

fn l_best_load(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![e.un(Op::Conj, a[0])]
}

fn ty_p_max(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::VOLTAGE, "Vth")?;
    want_impedance(qs, 1, "Zth")?;
    Ok(Shape::Scalar(power_result(pu_pair(qs, 0, 1)?, Kind::RealPower)))
}

/// P = k·|Vth|²/(4·Rth).
fn l_p_max(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let v2 = abs2(e, a[0]);
    let r = e.un(Op::Re, a[1]);
    let four = e.konst(4.0, 0.0);
    let d = e.bin(Op::Mul, four, r);
    let p = e.bin(Op::Div, v2, d);
    vec![times_k(e, p)]
}

/// A power (W, var, VA), or an impedance (Ω, pu) whose angle is that of
/// the power it takes.
fn want_power_or_z(qs: &[Quantity], i: usize) -> Result<(), ArgError> {
    if qs[i].dim == Dim::POWER || is_impedance(qs[i]) {
        Ok(())
    } else {
        Err(ArgError::at(
            i,
            format!(
                "`S` must be a power (VA) or a load impedance (Ω), but this is {}",
                qs[i].describe()
            ),
        ))
    }
}

fn ty_pf(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_power_or_z(qs, 0)?;
    Ok(Shape::Scalar(Quantity::PLAIN))
}

fn ty_pf_angle(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_power_or_z(qs, 0)?;
    Ok(Shape::Scalar(Quantity::ANGLE))
}

/// Lead/lag-signed power factor: +|P|/|S| lagging or unity, −|P|/|S|
/// leading, whatever the direction of P.
pub fn signed_pf(s: C64) -> f64 {
    let m = crate::engine::ops::abs(s);
    let pf = s.re.abs() / m;
    if s.im < 0.0 {
        -pf
    } else {
        pf
    }
}

fn s_pf(a: &[C64], out: &mut [C64], _: &Ctx) {
    out[0] = C64::new(signed_pf(a[0]), 0.0);
}

/// φ = atan2(Q, |P|): within ±90°, positive lagging, cos φ = |pf|.
fn l_pf_angle(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let q = e.un(Op::Im, a[0]);
    let p = e.un(Op::Re, a[0]);
    let p = e.un(Op::Abs, p);
    let phi = e.bin(Op::Atan2, q, p);
    // S = 0: no power flows and φ is undefined (atan2(0, 0) would say 0°,
    // a unity power factor), as `pf` refuses it; explained by `pf_of`.
    let m = e.un(Op::Abs, a[0]);
    let zero = e.konst(0.0, 0.0);
    let none = e.bin(Op::Le, m, zero);
    let nan = e.konst(f64::NAN, f64::NAN);
    vec![e.select(none, nan, phi)]
}

fn ty_s_parts(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::POWER, "S")?;
    let pu = qs[0].kind == Kind::PerUnit;
    Ok(Shape::Record(vec![
        ("P", power_result(pu, Kind::RealPower)),
        ("Q", power_result(pu, Kind::ReactivePower)),
        ("S", power_result(pu, Kind::ApparentPower)),
        ("pf", Quantity::PLAIN),
        ("lag", Quantity::PLAIN),
    ]))
}

fn s_s_parts(a: &[C64], out: &mut [C64], _: &Ctx) {
    let s = a[0];
    out[0] = C64::new(s.re, 0.0);
    out[1] = C64::new(s.im, 0.0);
    out[2] = C64::new(crate::engine::ops::abs(s), 0.0);
    out[3] = C64::new(signed_pf(s), 0.0);
    let lag = if s.im > 0.0 {
        1.0
    } else if s.im < 0.0 {
        -1.0
    } else {
        0.0
    };
    out[4] = C64::new(lag, 0.0);
}

fn want_real_power(qs: &[Quantity], i: usize) -> Result<(), ArgError> {
    if qs[i].dim != Dim::POWER {
        return Err(ArgError::at(
            i,
            format!("`P` must be a real power (W), but this is {}", qs[i].describe()),
        ));
    }
    if qs[i].kind == Kind::ReactivePower {
        return Err(ArgError::at(
            i,
            "`P` must be a real power (W), but this is a reactive power (var)",
        ));
    }
    Ok(())
}

fn want_reactive_power(qs: &[Quantity], i: usize) -> Result<(), ArgError> {
    if qs[i].dim != Dim::POWER {
        return Err(ArgError::at(
            i,
            format!("`Q` must be a reactive power (var), but this is {}", qs[i].describe()),
        ));
    }
    if qs[i].kind == Kind::RealPower {
        return Err(ArgError::at(
            i,
            "`Q` must be a reactive power (var), but this is a real power (W)",
        ));
    }
    Ok(())
}

fn ty_q_pfc(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_real_power(qs, 0)?;
    want_plain(qs, 1, "pf1", "a power factor, + lagging, − leading")?;
    want_plain(qs, 2, "pf2", "a power factor, + lagging, − leading")?;
    scalar(Dim::POWER, Kind::ReactivePower)
}

/// tan φ of a signed power factor; NaN outside −1…1.
pub fn tan_phi(pf: f64) -> f64 {
    if pf.is_nan() || pf.abs() > 1.0 {
        return f64::NAN;
    }
    let t = (1.0 - pf * pf).sqrt() / pf.abs();
    if pf < 0.0 {
        -t
    } else {
        t
    }
}

/// Q = P·(tan φ1 − tan φ2): the kvar-multiplier method.
fn s_q_pfc(a: &[C64], out: &mut [C64], _: &Ctx) {
    let bad = a[1].im != 0.0 || a[2].im != 0.0;
    let q = a[0].re * (tan_phi(a[1].re) - tan_phi(a[2].re));
    out[0] = C64::new(if bad { f64::NAN } else { q }, 0.0);
}

fn ty_s_of_p(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_real_power(qs, 0)?;
    want_plain(qs, 1, "pf", "a power factor, + lagging, − leading")?;
    scalar(Dim::POWER, Kind::ApparentPower)
}

/// S = P + j·P·tan φ, φ from the signed power factor.
fn s_s_of_p(a: &[C64], out: &mut [C64], _: &Ctx) {
    let pw = a[0].re;
    let t = if a[1].im != 0.0 { f64::NAN } else { tan_phi(a[1].re) };
    out[0] = C64::new(pw, pw * t);
}

const BANK: &[Param] = &[p!("Q", "var"), p!("V_LL", "V"), p!("f", "Hz|rad/s")];

fn ty_cap(qs: &[Quantity], volts: &str) -> Result<Shape, ArgError> {
    want_reactive_power(qs, 0)?;
    want(qs, 1, Dim::VOLTAGE, volts)?;
    want_frequency(qs, 2, "f")?;
    scalar(Dim::CAPACITANCE, Kind::Plain)
}

fn ty_cap_bank(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    ty_cap(qs, "V_LL")
}

fn ty_cap_1ph(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    ty_cap(qs, "V")
}

/// C = Q/(n·k·ω·|V|²).
fn cap_bank(e: &mut Emitter, a: &[Operand], q: &[Quantity], n: f64) -> Vec<Operand> {
    let w = omega(e, a[2], q[2]);
    let v2 = abs2(e, a[1]);
    let nk = e.konst(n * power_k(e), 0.0);
    let d = e.bin(Op::Mul, w, v2);
    let d = e.bin(Op::Mul, d, nk);
    vec![e.bin(Op::Div, a[0], d)]
}

fn l_cap_delta(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    cap_bank(e, a, q, 3.0)
}
fn l_cap_wye(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    cap_bank(e, a, q, 1.0)
}

fn ty_i_line(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_real_power(qs, 0)?;
    want(qs, 1, Dim::VOLTAGE, "V_LL")?;
    want_plain(qs, 2, "pf", "a power factor")?;
    scalar(Dim::CURRENT, Kind::Plain)
}

/// |I| = |P|/(√3·k·|V_LL|·|pf|); NaN (explained by the domain check) for
/// a power factor that is complex or beyond ±1.
fn s_i_line(a: &[C64], out: &mut [C64], c: &Ctx) {
    let pf = a[2];
    let i = if pf.im != 0.0 || pf.re.is_nan() || pf.re.abs() > 1.0 {
        f64::NAN
    } else {
        let d = 3f64.sqrt() * c.power_factor_k() * crate::engine::ops::abs(a[1]) * pf.re.abs();
        crate::engine::ops::div(C64::new(a[0].re.abs(), 0.0), C64::new(d, 0.0)).re
    };
    out[0] = C64::new(i, 0.0);
}

pub fn funcs() -> Vec<Builtin> {
    vec![
        lowered(
            "s_vi",
            "complex power S = V·I* (½·V·I* with peak phasors)",
            &[p!("V", "V|pu"), p!("I", "A|pu")],
            "VA|pu",
            ty_s_vi,
            l_s_vi,
        ),
        lowered(
            "s_vz",
            "complex power taken by Z with V across it: |V|²/Z* (halved for peak)",
            &[p!("V", "V|pu"), p!("Z", "Ω|pu")],
            "VA|pu",
            ty_s_vz,
            l_s_vz,
        ),
        lowered(
            "s_iz",
            "complex power taken by Z carrying I: |I|²·Z (halved for peak)",
            &[p!("I", "A|pu"), p!("Z", "Ω|pu")],
            "VA|pu",
            ty_s_iz,
            l_s_iz,
        ),
        scalar_fn(
            "pf",
            "power factor |P|/|S| signed by lead/lag (not by the direction of P): + lagging (Q ≥ 0), − leading (Q < 0)",
            &[p!("S", "VA|Ω")],
            "1",
            ty_pf,
            s_pf,
        )
        .with_real_result(),
        lowered(
            "pf_angle",
            "power-factor angle φ = atan(Q/|P|), within ±90°, positive lagging (cos φ = |pf|)",
            &[p!("S", "VA|Ω")],
            "angle",
            ty_pf_angle,
            l_pf_angle,
        ),
        scalar_fn(
            "s_parts",
            "P, Q, |S|, pf (±|P|/|S|, + lagging), and lag = +1 lagging, −1 leading, 0 in phase",
            &[p!("S", "VA|pu")],
            "record P (W), Q (var), S (VA), pf (1), lag (±1)",
            ty_s_parts,
            s_s_parts,
        )
        .with_real_result(),
        lowered(
            "best_load",
            "load impedance drawing the most power from a source behind Zth: Zth*",
            &[p!("Zth", "Ω|pu")],
            "as Zth",
            ty_best_load,
            l_best_load,
        ),
        lowered(
            "p_max",
            "most power a load can draw from Vth behind Zth: |Vth|²/(4·Re Zth) (halved for peak)",
            &[p!("Vth", "V|pu"), p!("Zth", "Ω|pu")],
            "W|pu",
            ty_p_max,
            l_p_max,
        ),
        scalar_fn(
            "s_of_p",
            "complex power of a load taking P at power factor pf (+ lagging, − leading): P + j·P·tan φ",
            &[p!("P", "W"), p!("pf", "1")],
            "VA",
            ty_s_of_p,
            s_s_of_p,
        ),
        scalar_fn(
            "q_pfc",
            "reactive power to add to take a load of real power P from pf1 to pf2: P·(tan φ1 − tan φ2)",
            &[p!("P", "W"), p!("pf1", "1"), p!("pf2", "1")],
            "var",
            ty_q_pfc,
            s_q_pfc,
        )
        .with_real_result(),
        lowered(
            "cap_delta",
            "per-phase capacitance of a delta bank giving Q (three-phase total) at line voltage V_LL",
            BANK,
            "F",
            ty_cap_bank,
            l_cap_delta,
        ),
        lowered(
            "cap_wye",
            "per-phase capacitance of a wye bank giving Q (three-phase total) at line voltage V_LL",
            BANK,
            "F",
            ty_cap_bank,
            l_cap_wye,
        ),
        lowered(
            "cap_1ph",
            "capacitance giving Q at voltage V, single phase: Q/(ω·V²)",
            &[p!("Q", "var"), p!("V", "V"), p!("f", "Hz|rad/s")],
            "F",
            ty_cap_1ph,
            l_cap_wye,
        ),
        scalar_fn(
            "i_line",
            "line current of a balanced three-phase load P at V_LL and pf: P/(√3·V_LL·|pf|)",
            &[p!("P", "W"), p!("V_LL", "V"), p!("pf", "1")],
            "A",
            ty_i_line,
            s_i_line,
        ),
    ]
}
