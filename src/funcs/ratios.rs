//! Ratios: decibels of a voltage (root-power) or power ratio, voltage drop
//! and voltage regulation.
//!
//! Drop and regulation are fractions (0.05 is 5 %); show them with a
//! display unit, `drop = vdrop(Vs, Vr) [%]`. Both use magnitudes.

use super::*;
use crate::engine::ops::Op;

fn ty_db(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    if qs[0].dim.is_none() && !matches!(qs[0].kind, Kind::Angle | Kind::Decibel) {
        return Ok(Shape::Scalar(Quantity::new(Dim::NONE, Kind::Decibel)));
    }
    Err(ArgError::at(
        0,
        format!(
            "`r` must be a ratio (a plain number), but this is {}; divide by the reference first, e.g. `V2 / V1`",
            qs[0].describe()
        ),
    ))
}

fn db(e: &mut Emitter, x: Operand, k: f64) -> Operand {
    let m = e.un(Op::Abs, x);
    let l = e.un(Op::Log10, m);
    let k = e.konst(k, 0.0);
    e.bin(Op::Mul, k, l)
}

fn l_db_v(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![db(e, a[0], 20.0)]
}

fn l_db_p(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![db(e, a[0], 10.0)]
}

fn ty_vdrop(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::VOLTAGE, "Vs")?;
    want_or_pu(qs, 1, Dim::VOLTAGE, "Vr")?;
    Ok(Shape::Scalar(Quantity::PLAIN))
}

fn ty_vreg(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::VOLTAGE, "V_nl")?;
    want_or_pu(qs, 1, Dim::VOLTAGE, "V_fl")?;
    Ok(Shape::Scalar(Quantity::PLAIN))
}

/// (|a| − |b|)/|ref|
fn rel_diff(e: &mut Emitter, a: Operand, b: Operand, by_a: bool) -> Operand {
    let ma = e.un(Op::Abs, a);
    let mb = e.un(Op::Abs, b);
    let d = e.bin(Op::Sub, ma, mb);
    e.bin(Op::Div, d, if by_a { ma } else { mb })
}

fn l_vdrop(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![rel_diff(e, a[0], a[1], true)]
}

fn l_vreg(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![rel_diff(e, a[0], a[1], false)]
}

pub fn funcs() -> Vec<Builtin> {
    vec![
        lowered(
            "db_v",
            "decibels of a voltage or current ratio: 20·log10|r|",
            &[p!("r", "1")],
            "dB",
            ty_db,
            l_db_v,
        ),
        lowered(
            "db_p",
            "decibels of a power ratio: 10·log10|r|",
            &[p!("r", "1")],
            "dB",
            ty_db,
            l_db_p,
        ),
        lowered(
            "vdrop",
            "voltage drop from sending Vs to receiving Vr: (|Vs| − |Vr|)/|Vs|, a fraction",
            &[p!("Vs", "V|pu"), p!("Vr", "V|pu")],
            "1",
            ty_vdrop,
            l_vdrop,
        ),
        lowered(
            "vreg",
            "voltage regulation (|V_nl| − |V_fl|)/|V_fl|, no-load vs full-load, a fraction",
            &[p!("V_nl", "V|pu"), p!("V_fl", "V|pu")],
            "1",
            ty_vreg,
            l_vreg,
        ),
    ]
}
