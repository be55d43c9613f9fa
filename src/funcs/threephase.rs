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

fn l_ll_to_ln(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let k = Operand::Const(k30());
    vec![e.bin(Op::Div, a[0], k)]
}

fn l_ln_to_ll(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let k = Operand::Const(k30());
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

fn l_p3(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let v = e.un(Op::Abs, a[0]);
    let i = e.un(Op::Abs, a[1]);
    let pf = e.un(Op::Abs, a[2]);
    let c = e.konst(SQRT3 * power_k(e), 0.0);
    let vi = e.bin(Op::Mul, v, i);
    let vip = e.bin(Op::Mul, vi, pf);
    vec![e.bin(Op::Mul, vip, c)]
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

/// Kennelly: Za = Zab·Zca/Σ, Zb = Zab·Zbc/Σ, Zc = Zbc·Zca/Σ.
fn l_delta_to_wye(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let (ab, bc, ca) = (a[0], a[1], a[2]);
    let s = e.bin(Op::Add, ab, bc);
    let s = e.bin(Op::Add, s, ca);
    let pa = e.bin(Op::Mul, ab, ca);
    let pb = e.bin(Op::Mul, ab, bc);
    let pc = e.bin(Op::Mul, bc, ca);
    vec![e.bin(Op::Div, pa, s), e.bin(Op::Div, pb, s), e.bin(Op::Div, pc, s)]
}

/// Kennelly: Zab = N/Zc, Zbc = N/Za, Zca = N/Zb, N = ZaZb + ZbZc + ZcZa.
fn l_wye_to_delta(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let (za, zb, zc) = (a[0], a[1], a[2]);
    let n1 = e.bin(Op::Mul, za, zb);
    let n2 = e.bin(Op::Mul, zb, zc);
    let n3 = e.bin(Op::Mul, zc, za);
    let n = e.bin(Op::Add, n1, n2);
    let n = e.bin(Op::Add, n, n3);
    vec![e.bin(Op::Div, n, zc), e.bin(Op::Div, n, za), e.bin(Op::Div, n, zb)]
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
            "line-to-neutral phasor Van from line-to-line Vab: Vab/(√3∠30°), positive sequence",
            &[p!("Vab", "V|pu")],
            "as Vab",
            ty_ll_to_ln,
            l_ll_to_ln,
        ),
        lowered(
            "ln_to_ll",
            "line-to-line phasor Vab from line-to-neutral Van: √3∠30°·Van, positive sequence",
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
        lowered(
            "p3",
            "real power of a balanced three-phase load: √3·|V_LL|·|I_L|·|pf|",
            &[p!("V_LL", "V"), p!("I_L", "A"), p!("pf", "1")],
            "W",
            ty_p3,
            l_p3,
        ),
        lowered(
            "delta_to_wye",
            "wye equivalent of delta impedances (unbalanced allowed)",
            &[p!("Zab", "Ω|pu"), p!("Zbc", "Ω|pu"), p!("Zca", "Ω|pu")],
            "record a, b, c (as Zab)",
            ty_delta_to_wye,
            l_delta_to_wye,
        ),
        lowered(
            "wye_to_delta",
            "delta equivalent of wye impedances (unbalanced allowed)",
            &[p!("Za", "Ω|pu"), p!("Zb", "Ω|pu"), p!("Zc", "Ω|pu")],
            "record ab, bc, ca (as Za)",
            ty_wye_to_delta,
            l_wye_to_delta,
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
