//! Matching networks: the two-element L-network between a resistive
//! source and a resistive load (low-pass and high-pass forms), and the
//! L-network that conjugate-matches a complex load to a resistive source.
//!
//! Resistive case (the handbook design equations): with Rhi the larger and
//! Rlo the smaller of the two resistances, Q = √(Rhi/Rlo − 1); the series
//! element has |X| = Q·Rlo and sits on the Rlo side; the shunt element has
//! |X| = Rhi/Q and sits across Rhi.
//!
//! Complex load ZL = R + jX from a source resistance Rs: if R > Rs the
//! shunt element goes across the load (susceptance
//! B = (X ± √(R/Rs)·√(R² + X² − Rs·R))/(R² + X²), series reactance
//! 1/B + X·Rs/R − Rs/(B·R)); otherwise the series element is next to the
//! load (reactance ±√(R·(Rs − R)) − X) and the shunt across the source
//! (B = ±√((Rs − R)/R)/Rs). The sign is the `sol` argument.

use super::*;
use crate::engine::ops::Op;

const RRF: &[Param] = &[p!("Rs", "Ω"), p!("RL", "Ω"), p!("f", "Hz|rad/s")];

fn ty_lmatch(qs: &[Quantity], _: &Ctx, lowpass: bool) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::IMPEDANCE, "Rs")?;
    want(qs, 1, Dim::IMPEDANCE, "RL")?;
    want_frequency(qs, 2, "f")?;
    let l = Quantity::of(Dim::INDUCTANCE);
    let c = Quantity::of(Dim::CAPACITANCE);
    Ok(Shape::Record(if lowpass {
        vec![("L", l), ("C", c), ("Q", Quantity::PLAIN)]
    } else {
        vec![("C", c), ("L", l), ("Q", Quantity::PLAIN)]
    }))
}

fn ty_lp(qs: &[Quantity], c: &Ctx) -> Result<Shape, ArgError> {
    ty_lmatch(qs, c, true)
}
fn ty_hp(qs: &[Quantity], c: &Ctx) -> Result<Shape, ArgError> {
    ty_lmatch(qs, c, false)
}

/// (ω, Q, Rlo, Rhi)
fn design(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> (Operand, Operand, Operand, Operand) {
    let w = omega(e, a[2], q[2]);
    let hi = e.bin(Op::Max, a[0], a[1]);
    let lo = e.bin(Op::Min, a[0], a[1]);
    let r = e.bin(Op::Div, hi, lo);
    let one = e.konst(1.0, 0.0);
    let r1 = e.bin(Op::Sub, r, one);
    let qf = e.un(Op::Sqrt, r1);
    (w, qf, lo, hi)
}

/// Series L = Q·Rlo/ω, shunt C = Q/(Rhi·ω).
fn l_lp(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let (w, qf, lo, hi) = design(e, a, q);
    let xs = e.bin(Op::Mul, qf, lo);
    let l = e.bin(Op::Div, xs, w);
    let hw = e.bin(Op::Mul, hi, w);
    let c = e.bin(Op::Div, qf, hw);
    vec![l, c, qf]
}

/// Series C = 1/(ω·Q·Rlo), shunt L = Rhi/(Q·ω).
fn l_hp(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let (w, qf, lo, hi) = design(e, a, q);
    let xs = e.bin(Op::Mul, qf, lo);
    let wx = e.bin(Op::Mul, w, xs);
    let c = e.un(Op::Recip, wx);
    let qw = e.bin(Op::Mul, qf, w);
    let l = e.bin(Op::Div, hi, qw);
    vec![c, l, qf]
}

fn ty_lmatch_z(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::IMPEDANCE, "Rs")?;
    want(qs, 1, Dim::IMPEDANCE, "ZL")?;
    want_plain(qs, 2, "sol", "+1 or −1, choosing one of the two solutions")?;
    let z = Quantity::of(Dim::IMPEDANCE);
    Ok(Shape::Record(vec![("Xs", z), ("Xp", z), ("at_load", Quantity::PLAIN)]))
}

/// The L-network reactances (series Xs, shunt Xp = −1/B) that make a
/// complex load look like Rs; `at_load` is 1 when the shunt element is
/// across the load, 0 when it is across the source.
pub fn lmatch_z(rs: f64, zl: C64, sign: f64) -> (f64, f64, bool) {
    let (r, x) = (zl.re, zl.im);
    if r > rs {
        let m2 = r * r + x * x;
        let b = (x + sign * (r / rs).sqrt() * (m2 - rs * r).sqrt()) / m2;
        let xs = 1.0 / b + x * rs / r - rs / (b * r);
        (xs, -1.0 / b, true)
    } else {
        let xs = sign * (r * (rs - r)).sqrt() - x;
        let b = sign * ((rs - r) / r).sqrt() / rs;
        (xs, -1.0 / b, false)
    }
}

fn s_lmatch_z(a: &[C64], out: &mut [C64], _: &Ctx) {
    let sol = a[2];
    let sign = if sol == C64::new(1.0, 0.0) {
        1.0
    } else if sol == C64::new(-1.0, 0.0) {
        -1.0
    } else {
        f64::NAN
    };
    if a[0].im != 0.0 || sign.is_nan() {
        out.fill(C64::new(f64::NAN, f64::NAN));
        return;
    }
    let (xs, xp, at_load) = lmatch_z(a[0].re, a[1], sign);
    out[0] = C64::new(xs, 0.0);
    out[1] = C64::new(xp, 0.0);
    out[2] = C64::new(if at_load { 1.0 } else { 0.0 }, 0.0);
}

pub fn funcs() -> Vec<Builtin> {
    vec![
        lowered(
            "lmatch_lp",
            "L-network from Rs to RL at f, series L and shunt C (the shunt across the larger R)",
            RRF,
            "record L (H), C (F), Q (1)",
            ty_lp,
            l_lp,
        ),
        lowered(
            "lmatch_hp",
            "L-network from Rs to RL at f, series C and shunt L (the shunt across the larger R)",
            RRF,
            "record C (F), L (H), Q (1)",
            ty_hp,
            l_hp,
        ),
        scalar_fn(
            "lmatch_z",
            "L-network making a complex load ZL look like Rs: series Xs, shunt Xp, at_load 1 if the shunt is across ZL",
            &[p!("Rs", "Ω"), p!("ZL", "Ω"), p!("sol", "±1")],
            "record Xs (Ω), Xp (Ω), at_load (1|0)",
            ty_lmatch_z,
            s_lmatch_z,
        ),
    ]
}
