//! Per-unit: base impedance and current, per-unit ↔ ohms, and changing
//! the base of a per-unit impedance.
//!
//! Bases are magnitudes (the absolute value of what is passed). For a
//! three-phase system the base voltage is line-to-line and the base power
//! three-phase; Z_base = V²/S holds both for that and for a single-phase
//! system with its own V and VA.

use super::*;
use crate::engine::ops::Op;

const VS: &[Param] = &[p!("V_base", "V"), p!("S_base", "VA")];

fn want_bases(qs: &[Quantity], v: usize, s: usize) -> Result<(), ArgError> {
    want(qs, v, Dim::VOLTAGE, "V_base")?;
    want(qs, s, Dim::POWER, "S_base")
}

fn want_pu(qs: &[Quantity], i: usize, param: &str) -> Result<(), ArgError> {
    if qs[i].dim.is_none() && qs[i].kind != Kind::Angle {
        Ok(())
    } else {
        let mut m = format!("`{param}` must be a per-unit value, but this is {}", qs[i].describe());
        if qs[i].dim == Dim::IMPEDANCE {
            m.push_str("; use `ohm_to_pu` to convert ohms");
        }
        Err(ArgError::at(i, m))
    }
}

fn ty_z_base(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_bases(qs, 0, 1)?;
    scalar(Dim::IMPEDANCE, Kind::Plain)
}

fn ty_i_base(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_bases(qs, 0, 1)?;
    scalar(Dim::CURRENT, Kind::Plain)
}

fn zb(e: &mut Emitter, v: Operand, s: Operand) -> Operand {
    let v = e.un(Op::Abs, v);
    let s = e.un(Op::Abs, s);
    let v2 = e.bin(Op::Mul, v, v);
    e.bin(Op::Div, v2, s)
}

fn l_z_base(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![zb(e, a[0], a[1])]
}

fn l_i_base(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let v = e.un(Op::Abs, a[0]);
    let s = e.un(Op::Abs, a[1]);
    let r3 = e.konst(3f64.sqrt(), 0.0);
    let d = e.bin(Op::Mul, v, r3);
    vec![e.bin(Op::Div, s, d)]
}

fn ty_rebase(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_pu(qs, 0, "Z_pu")?;
    want(qs, 1, Dim::VOLTAGE, "V_old")?;
    want(qs, 2, Dim::POWER, "S_old")?;
    want(qs, 3, Dim::VOLTAGE, "V_new")?;
    want(qs, 4, Dim::POWER, "S_new")?;
    Ok(Shape::Scalar(PU))
}

/// Z_new = Z_old · (V_old/V_new)² · (S_new/S_old).
fn l_rebase(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let zo = zb(e, a[1], a[2]);
    let zn = zb(e, a[3], a[4]);
    let r = e.bin(Op::Div, zo, zn);
    vec![e.bin(Op::Mul, a[0], r)]
}

fn ty_pu_to_ohm(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_pu(qs, 0, "Z_pu")?;
    want_bases(qs, 1, 2)?;
    scalar(Dim::IMPEDANCE, Kind::Plain)
}

fn ty_ohm_to_pu(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::IMPEDANCE, "Z")?;
    want_bases(qs, 1, 2)?;
    Ok(Shape::Scalar(PU))
}

fn l_pu_to_ohm(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let z = zb(e, a[1], a[2]);
    vec![e.bin(Op::Mul, a[0], z)]
}

fn l_ohm_to_pu(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let z = zb(e, a[1], a[2]);
    vec![e.bin(Op::Div, a[0], z)]
}

pub fn funcs() -> Vec<Builtin> {
    vec![
        lowered("z_base", "base impedance V_base²/S_base", VS, "Ω", ty_z_base, l_z_base),
        lowered(
            "i_base",
            "three-phase base current S_base/(√3·V_base), V_base line-to-line",
            VS,
            "A",
            ty_i_base,
            l_i_base,
        ),
        lowered(
            "pu_to_ohm",
            "ohms of a per-unit impedance on the bases V_base, S_base",
            &[p!("Z_pu", "pu"), p!("V_base", "V"), p!("S_base", "VA")],
            "Ω",
            ty_pu_to_ohm,
            l_pu_to_ohm,
        ),
        lowered(
            "ohm_to_pu",
            "per-unit value of an impedance in ohms on the bases V_base, S_base",
            &[p!("Z", "Ω"), p!("V_base", "V"), p!("S_base", "VA")],
            "pu",
            ty_ohm_to_pu,
            l_ohm_to_pu,
        ),
        lowered(
            "rebase",
            "per-unit impedance moved to new bases: Z·(V_old/V_new)²·(S_new/S_old)",
            &[
                p!("Z_pu", "pu"),
                p!("V_old", "V"),
                p!("S_old", "VA"),
                p!("V_new", "V"),
                p!("S_new", "VA"),
            ],
            "pu",
            ty_rebase,
            l_rebase,
        ),
    ]
}
