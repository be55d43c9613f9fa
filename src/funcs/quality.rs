//! Power quality at a bus: the harmonic order at which a shunt capacitor
//! bank resonates with the source, and voltage unbalance by its two
//! common definitions.
//!
//! - `h_res(Ssc, Qc)` = √(S_sc/Q_c): the bank's capacitance and the
//!   source inductance (from the fault level) are in parallel resonance
//!   at that harmonic (source resistance and load neglected). Qc is the
//!   bank's rating at the bus voltage; its sign does not matter.
//! - `unbalance_seq(Va, Vb, Vc)` = |V2|/|V1|, the negative- to positive-
//!   sequence ratio of the IEC power-quality standards (IEC 61000-4-30,
//!   IEC 61000-2-12). Phase-to-neutral or line-to-line phasors give the
//!   same ratio.
//! - `unbalance_dev(Vab, Vbc, Vca)` = the largest deviation of a line
//!   voltage's magnitude from the average of the three, over that
//!   average (NEMA MG 1, the line-voltage unbalance rating motors are
//!   derated by). Only magnitudes enter.
//!
//! Both are fractions; show them with `[%]`.

use super::*;
use crate::engine::ops::Op;

const SQRT3: f64 = 1.732_050_807_568_877_2;

fn ty_h_res(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let (s, q) = (qs[0], qs[1]);
    let pu = s.kind == Kind::PerUnit;
    if pu != (q.kind == Kind::PerUnit) {
        return Err(ArgError::at(
            1,
            "mixing per-unit and SI values: give both in per-unit or both with units",
        ));
    }
    if !pu {
        if s.dim != Dim::POWER || matches!(s.kind, Kind::RealPower | Kind::ReactivePower) {
            return Err(ArgError::at(
                0,
                format!(
                    "`Ssc` must be a three-phase fault level in VA (MVA), but this is {}",
                    s.describe()
                ),
            ));
        }
        if q.dim != Dim::POWER || q.kind == Kind::RealPower {
            return Err(ArgError::at(
                1,
                format!(
                    "`Qc` must be the bank's reactive power in var (kvar), but this is {}",
                    q.describe()
                ),
            ));
        }
    }
    Ok(Shape::Scalar(Quantity::PLAIN))
}

fn l_h_res(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let s = e.un(Op::Abs, a[0]);
    let q = e.un(Op::Abs, a[1]);
    let r = e.bin(Op::Div, s, q);
    let h = e.un(Op::Sqrt, r);
    // A fault level of 0 is no source: refused (NaN, explained by
    // dom_h_res), never shown as an order of 0.
    let zero = e.konst(0.0, 0.0);
    let none = e.bin(Op::Le, s, zero);
    let nan = e.konst(f64::NAN, f64::NAN);
    vec![e.select(none, nan, h)]
}

fn dom_h_res(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if a[0].re == 0.0 && a[0].im == 0.0 {
        return Some(ArgError::at(0, "a fault level of zero: no source to resonate with"));
    }
    if a[1].re == 0.0 && a[1].im == 0.0 {
        return Some(ArgError::at(
            1,
            "a bank of zero: nothing to resonate (the order would be ∞)",
        ));
    }
    None
}

fn ty_unbalance(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_same(qs)?;
    let q = qs[0];
    if !(q.dim == Dim::VOLTAGE || q.dim == Dim::CURRENT || q.kind == Kind::PerUnit) {
        return Err(ArgError::at(
            0,
            format!(
                "the three values must be voltages (or currents, or per-unit), but this is {}",
                q.describe()
            ),
        ));
    }
    Ok(Shape::Scalar(Quantity::PLAIN))
}

/// |Va + a²Vb + aVc| / |Va + aVb + a²Vc|.
fn l_unbalance_seq(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let r = C64::new(-0.5, SQRT3 / 2.0);
    let (k1, k2) = (Operand::Const(r), Operand::Const(r * r));
    let p1 = e.bin(Op::Mul, k1, a[1]);
    let p2 = e.bin(Op::Mul, k2, a[2]);
    let pos = e.bin(Op::Add, a[0], p1);
    let pos = e.bin(Op::Add, pos, p2);
    let n1 = e.bin(Op::Mul, k2, a[1]);
    let n2 = e.bin(Op::Mul, k1, a[2]);
    let neg = e.bin(Op::Add, a[0], n1);
    let neg = e.bin(Op::Add, neg, n2);
    let m2 = e.un(Op::Abs, neg);
    let m1 = e.un(Op::Abs, pos);
    let ratio = e.bin(Op::Div, m2, m1);
    // A positive-sequence part within rounding of zero (a set written in
    // the other rotation, a-c-b, or all zero) has no unbalance factor:
    // NaN, explained by `dom_unbalance`, rather than |V2| over a rounding
    // residue (7.6e15 for 230 V, 230 V ∠ 120°, 230 V ∠ −120°).
    let m: Vec<Operand> = a.iter().map(|&v| e.un(Op::Abs, v)).collect();
    let sum = e.bin(Op::Add, m[0], m[1]);
    let sum = e.bin(Op::Add, sum, m[2]);
    let rel = e.konst(SEQ_ZERO, 0.0);
    let tol = e.bin(Op::Mul, sum, rel);
    let ok = e.bin(Op::Gt, m1, tol);
    let nan = e.konst(f64::NAN, 0.0);
    vec![e.select(ok, ratio, nan)]
}

/// A sequence part smaller than this fraction of |Va| + |Vb| + |Vc| is
/// rounding residue, not a component.
const SEQ_ZERO: f64 = 1e-12;

/// max |(|Vi| − avg)| / avg.
fn l_unbalance_dev(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let m: Vec<Operand> = a.iter().map(|&v| e.un(Op::Abs, v)).collect();
    let s = e.bin(Op::Add, m[0], m[1]);
    let s = e.bin(Op::Add, s, m[2]);
    let third = e.konst(1.0 / 3.0, 0.0);
    let avg = e.bin(Op::Mul, s, third);
    let mut dev = None;
    for &x in &m {
        let d = e.bin(Op::Sub, x, avg);
        let d = e.un(Op::Abs, d);
        dev = Some(match dev {
            None => d,
            Some(p) => e.bin(Op::Max, p, d),
        });
    }
    let dev = dev.expect("three values");
    vec![e.bin(Op::Div, dev, avg)]
}

fn dom_unbalance(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if a.iter().any(|x| x.re.is_nan() || x.im.is_nan()) {
        return Some(ArgError::whole("one of the values is NaN"));
    }
    let r = C64::new(-0.5, SQRT3 / 2.0);
    let pos = (a[0] + r * a[1] + r * r * a[2]).norm();
    let neg = (a[0] + r * r * a[1] + r * a[2]).norm();
    let sum = a[0].norm() + a[1].norm() + a[2].norm();
    if sum > 0.0 && sum.is_finite() && pos <= SEQ_ZERO * sum && neg > SEQ_ZERO * sum {
        return Some(ArgError::whole(
            "the three phasors are a negative-sequence set (a-c-b rotation): no positive-sequence part, so |V2|/|V1| is undefined; if the system turns a-c-b, swap the second and third arguments",
        ));
    }
    Some(ArgError::whole(
        "the three values have no positive-sequence part (or average zero): unbalance is undefined",
    ))
}

pub fn funcs() -> Vec<Builtin> {
    vec![
        lowered(
            "h_res",
            "harmonic order at which a shunt bank Qc resonates with a source of fault level Ssc: √(Ssc/Qc)",
            &[p!("Ssc", "VA|pu"), p!("Qc", "var|pu")],
            "1",
            ty_h_res,
            l_h_res,
        )
        .with_domain(dom_h_res)
        .with_source("IEEE Std 1036 / IEEE Std 519 application guidance: h = √(MVA_sc/Mvar_cap) (from memory)"),
        lowered(
            "unbalance_seq",
            "voltage unbalance factor |V2|/|V1| (IEC 61000-4-30) from three phasors",
            &[p!("Va", "V|A|pu"), p!("Vb", "as Va"), p!("Vc", "as Va")],
            "1 (show with [%])",
            ty_unbalance,
            l_unbalance_seq,
        )
        .with_domain(dom_unbalance)
        .with_source(
            "IEC 61000-4-30 (and IEC 61000-2-12): u2 = |U2|/|U1| from symmetrical components (Fortescue 1918); from memory",
        ),
        lowered(
            "unbalance_dev",
            "line-voltage unbalance by NEMA MG 1: largest deviation of |V| from the average of three, over the average",
            &[p!("Vab", "V|A|pu"), p!("Vbc", "as Vab"), p!("Vca", "as Vab")],
            "1 (show with [%])",
            ty_unbalance,
            l_unbalance_dev,
        )
        .with_domain(dom_unbalance)
        .with_source("NEMA MG 1, percent unbalance = 100 × maximum deviation from average / average (from memory)"),
    ]
}
