//! Three-phase work: line ↔ phase quantities of a balanced positive-
//! sequence set, three-phase power, delta ↔ wye conversion of unbalanced
//! impedances (Kennelly), symmetrical components (Fortescue) and the
//! 120° rotation operator.
//!
//! Phase order a-b-c, positive sequence: Vab = √3·Van∠+30°.

use super::*;
use crate::engine::ops::Op;
use crate::units::kind::kind_of_sum;

const SQRT3: f64 = 1.732_050_807_568_877_2;

/// 1∠120°.
fn rot() -> C64 {
    C64::new(-0.5, SQRT3 / 2.0)
}

fn ty_ll_to_ln(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::VOLTAGE, "Vab")?;
    Ok(Shape::Scalar(qs[0]))
}

fn ty_ln_to_ll(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::VOLTAGE, "Van")?;
    Ok(Shape::Scalar(qs[0]))
}

/// √3∠30° = 1.5 + j·√3/2.
fn k30() -> C64 {
    C64::new(1.5, SQRT3 / 2.0)
}

/// 1∠30° = √3/2 + j·1/2.
fn shift30() -> C64 {
    C64::new(SQRT3 / 2.0, 0.5)
}

/// The factor between line and phase voltages: √3∠30° in volts; only the
/// 30° shift in per-unit, because on the usual three-phase bases (line
/// base = √3 × phase base) a line voltage and its phase voltage have the
/// same per-unit magnitude — as `z_base` (V_LL²/S_3φ = V_LN²/S_1φ) and
/// `i_base` (S_3φ/(√3·V_LL)) assume.
fn line_factor(q: Quantity) -> C64 {
    if q.kind == Kind::PerUnit {
        shift30()
    } else {
        k30()
    }
}

fn l_ll_to_ln(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let k = Operand::Const(line_factor(q[0]));
    vec![e.bin(Op::Div, a[0], k)]
}

fn l_ln_to_ll(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let k = Operand::Const(line_factor(q[0]));
    vec![e.bin(Op::Mul, a[0], k)]
}

fn ty_s3(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::VOLTAGE, "Vab")?;
    want(qs, 1, Dim::CURRENT, "Ia")?;
    scalar(Dim::POWER, Kind::ApparentPower)
}

/// S = 3·k·Van·Ia* = √3·k·Vab∠−30°·Ia*.
fn l_s3(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let k = power_k(e);
    // √3∠−30° = 1.5 − j·√3/2
    let c = Operand::Const(C64::new(1.5, -SQRT3 / 2.0) * k);
    let ic = e.un(Op::Conj, a[1]);
    let vi = e.bin(Op::Mul, a[0], ic);
    vec![e.bin(Op::Mul, vi, c)]
}

fn ty_p3(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::VOLTAGE, "V_LL")?;
    want(qs, 1, Dim::CURRENT, "I_L")?;
    want_plain(qs, 2, "pf", "a power factor")?;
    scalar(Dim::POWER, Kind::RealPower)
}

/// √3·k·|V_LL|·|I_L|·|pf|; NaN (explained by the domain check) for a
/// power factor that is complex or beyond ±1, never a number scaled by it.
fn s_p3(a: &[C64], out: &mut [C64], c: &Ctx) {
    let pf = a[2];
    let p = if pf.im != 0.0 || pf.re.is_nan() || pf.re.abs() > 1.0 {
        f64::NAN
    } else {
        SQRT3 * c.power_factor_k() * crate::engine::ops::abs(a[0]) * crate::engine::ops::abs(a[1]) * pf.re.abs()
    };
    out[0] = C64::new(p, 0.0);
}

fn three_impedances(qs: &[Quantity], names: [&str; 3]) -> Result<Quantity, ArgError> {
    for (i, n) in names.iter().enumerate() {
        want_impedance(qs, i, n)?;
    }
    let d = want_same(qs)?;
    let pu = qs.iter().any(|x| x.kind == Kind::PerUnit);
    Ok(Quantity::new(d, if pu { Kind::PerUnit } else { Kind::Plain }))
}

fn ty_delta_to_wye(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let k = three_impedances(qs, ["Zab", "Zbc", "Zca"])?;
    Ok(Shape::Record(vec![("a", k), ("b", k), ("c", k)]))
}

fn ty_wye_to_delta(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let k = three_impedances(qs, ["Za", "Zb", "Zc"])?;
    Ok(Shape::Record(vec![("ab", k), ("bc", k), ("ca", k)]))
}

fn is_open(z: C64) -> bool {
    z.re.is_infinite() || z.im.is_infinite()
}

fn is_short(z: C64) -> bool {
    z.re == 0.0 && z.im == 0.0
}

/// An open element, as `||` gives one.
const OPEN: C64 = C64::new(f64::INFINITY, 0.0);
const UNDEFINED: C64 = C64::new(f64::NAN, f64::NAN);

/// Kennelly: Za = Zab·Zca/Σ, Zb = Zab·Zbc/Σ, Zc = Zbc·Zca/Σ. Limits for
/// open branches: with one branch open, each wye arm touching it equals
/// the other branch it touches, and the arm between the two closed
/// branches is 0. Two or more open branches: undefined. A fully shorted
/// delta is a shorted wye.
fn s_delta_to_wye(a: &[C64], out: &mut [C64], _: &Ctx) {
    let (ab, bc, ca) = (a[0], a[1], a[2]);
    let opens = a[..3].iter().filter(|z| is_open(**z)).count();
    let (za, zb, zc) = match opens {
        0 if a[..3].iter().all(|z| is_short(*z)) => (C64::new(0.0, 0.0), C64::new(0.0, 0.0), C64::new(0.0, 0.0)),
        0 => {
            let s = ab + bc + ca;
            (
                crate::engine::ops::div(ab * ca, s),
                crate::engine::ops::div(ab * bc, s),
                crate::engine::ops::div(bc * ca, s),
            )
        }
        1 if is_open(ab) => (ca, bc, C64::new(0.0, 0.0)),
        1 if is_open(bc) => (C64::new(0.0, 0.0), ab, ca),
        1 => (ab, C64::new(0.0, 0.0), bc),
        _ => (UNDEFINED, UNDEFINED, UNDEFINED),
    };
    out[0] = za;
    out[1] = zb;
    out[2] = zc;
}

/// One delta branch from the wye arms at its ends (x, y) and the third
/// arm z: x + y + x·y/z, with the limits of open and short arms.
fn delta_branch(x: C64, y: C64, z: C64) -> C64 {
    if is_open(x) || is_open(y) {
        return OPEN;
    }
    if is_open(z) {
        return x + y;
    }
    if is_short(z) {
        return if is_short(x) || is_short(y) { UNDEFINED } else { OPEN };
    }
    x + y + crate::engine::ops::div(x * y, z)
}

/// Kennelly: Zab = Za + Zb + Za·Zb/Zc, and round.
fn s_wye_to_delta(a: &[C64], out: &mut [C64], _: &Ctx) {
    let (za, zb, zc) = (a[0], a[1], a[2]);
    out[0] = delta_branch(za, zb, zc);
    out[1] = delta_branch(zb, zc, za);
    out[2] = delta_branch(zc, za, zb);
}

fn three_same(qs: &[Quantity]) -> Result<Quantity, ArgError> {
    let d = want_same(qs)?;
    let mut k = qs[0].kind;
    for (i, x) in qs.iter().enumerate().skip(1) {
        k = kind_of_sum(k, x.kind, d).map_err(|m| ArgError::at(i, m))?;
    }
    if k == Kind::Angle {
        return Err(ArgError::whole("sequence components are of phasors, not of angles"));
    }
    Ok(Quantity::new(d, k))
}

fn ty_to_seq(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let k = three_same(qs)?;
    Ok(Shape::Record(vec![("zero", k), ("pos", k), ("neg", k)]))
}

fn ty_from_seq(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let k = three_same(qs)?;
    Ok(Shape::Record(vec![("a", k), ("b", k), ("c", k)]))
}

/// x + p·y + q·z with constant p, q.
fn comb(e: &mut Emitter, x: Operand, y: Operand, z: Operand, p: C64, q: C64) -> Operand {
    let py = e.bin(Op::Mul, y, Operand::Const(p));
    let qz = e.bin(Op::Mul, z, Operand::Const(q));
    let s = e.bin(Op::Add, x, py);
    e.bin(Op::Add, s, qz)
}

/// Fortescue: X0 = (Xa + Xb + Xc)/3, X1 = (Xa + a·Xb + a²·Xc)/3,
/// X2 = (Xa + a²·Xb + a·Xc)/3.
fn l_to_seq(e: &mut Emitter, v: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let (a, a2, one) = (rot(), rot() * rot(), C64::new(1.0, 0.0));
    let third = Operand::Const(C64::new(1.0 / 3.0, 0.0));
    let s0 = comb(e, v[0], v[1], v[2], one, one);
    let s1 = comb(e, v[0], v[1], v[2], a, a2);
    let s2 = comb(e, v[0], v[1], v[2], a2, a);
    vec![
        e.bin(Op::Mul, s0, third),
        e.bin(Op::Mul, s1, third),
        e.bin(Op::Mul, s2, third),
    ]
}

/// Fortescue: Xa = X0 + X1 + X2, Xb = X0 + a²·X1 + a·X2,
/// Xc = X0 + a·X1 + a²·X2.
fn l_from_seq(e: &mut Emitter, v: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let (a, a2, one) = (rot(), rot() * rot(), C64::new(1.0, 0.0));
    vec![
        comb(e, v[0], v[1], v[2], one, one),
        comb(e, v[0], v[1], v[2], a2, a),
        comb(e, v[0], v[1], v[2], a, a2),
    ]
}

fn ty_rot(_: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    Ok(Shape::Scalar(Quantity::PLAIN))
}

fn l_rot(_: &mut Emitter, _: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![Operand::Const(rot())]
}

pub fn funcs() -> Vec<Builtin> {
    vec![
        lowered(
            "ll_to_ln",
            "line-to-neutral phasor Van from line-to-line Vab: Vab/(√3∠30°), positive sequence; in pu only the shift, Vab/(1∠30°)",
            &[p!("Vab", "V|pu")],
            "as Vab",
            ty_ll_to_ln,
            l_ll_to_ln,
        ),
        lowered(
            "ln_to_ll",
            "line-to-line phasor Vab from line-to-neutral Van: √3∠30°·Van, positive sequence; in pu only the shift, 1∠30°·Van",
            &[p!("Van", "V|pu")],
            "as Van",
            ty_ln_to_ll,
            l_ln_to_ll,
        ),
        lowered(
            "s3",
            "complex power of a balanced three-phase set from phasors Vab and Ia: √3·Vab∠−30°·Ia*",
            &[p!("Vab", "V"), p!("Ia", "A")],
            "VA",
            ty_s3,
            l_s3,
        ),
        scalar_fn(
            "p3",
            "real power of a balanced three-phase load: √3·|V_LL|·|I_L|·|pf|",
            &[p!("V_LL", "V"), p!("I_L", "A"), p!("pf", "1")],
            "W",
            ty_p3,
            s_p3,
        ),
        scalar_fn(
            "delta_to_wye",
            "wye equivalent of delta impedances (unbalanced allowed)",
            &[p!("Zab", "Ω|pu"), p!("Zbc", "Ω|pu"), p!("Zca", "Ω|pu")],
            "record a, b, c (as Zab)",
            ty_delta_to_wye,
            s_delta_to_wye,
        ),
        scalar_fn(
            "wye_to_delta",
            "delta equivalent of wye impedances (unbalanced allowed)",
            &[p!("Za", "Ω|pu"), p!("Zb", "Ω|pu"), p!("Zc", "Ω|pu")],
            "record ab, bc, ca (as Za)",
            ty_wye_to_delta,
            s_wye_to_delta,
        ),
        lowered(
            "to_seq",
            "symmetrical components (zero, positive, negative sequence) of phasors a, b, c",
            &[p!("Xa", "any"), p!("Xb", "as Xa"), p!("Xc", "as Xa")],
            "record zero, pos, neg (as Xa)",
            ty_to_seq,
            l_to_seq,
        ),
        lowered(
            "from_seq",
            "phasors a, b, c from zero, positive and negative sequence components",
            &[p!("X0", "any"), p!("X1", "as X0"), p!("X2", "as X0")],
            "record a, b, c (as X0)",
            ty_from_seq,
            l_from_seq,
        ),
        lowered(
            "rot120",
            "the rotation operator 1∠120° (−0.5 + j0.866)",
            &[],
            "1",
            ty_rot,
            l_rot,
        ),
    ]
}
