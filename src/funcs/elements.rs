//! Circuit elements at a frequency: impedance and reactance of L and C,
//! the resonant frequency of an L–C pair, quality factors, and the element
//! that has a given reactance.
//!
//! Sign convention: a reactance is the imaginary part of the impedance,
//! Z = R + jX, so an inductor's reactance is positive (ωL) and a
//! capacitor's negative (−1/ωC). A frequency argument may be in Hz or in
//! rad/s; its unit decides whether it is multiplied by 2π.

use super::*;
use crate::engine::ops::Op;

const LF: &[Param] = &[p!("L", "H"), p!("f", "Hz|rad/s")];
const CF: &[Param] = &[p!("C", "F"), p!("f", "Hz|rad/s")];
const XF: &[Param] = &[p!("X", "Ω"), p!("f", "Hz|rad/s")];
const RLC: &[Param] = &[p!("R", "Ω"), p!("L", "H"), p!("C", "F")];

fn ty_l(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::INDUCTANCE, "L")?;
    want_frequency(qs, 1, "f")?;
    scalar(Dim::IMPEDANCE, Kind::Plain)
}

fn ty_c(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::CAPACITANCE, "C")?;
    want_frequency(qs, 1, "f")?;
    scalar(Dim::IMPEDANCE, Kind::Plain)
}

fn ty_x_to_l(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::IMPEDANCE, "X")?;
    want_frequency(qs, 1, "f")?;
    scalar(Dim::INDUCTANCE, Kind::Plain)
}

fn ty_x_to_c(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::IMPEDANCE, "X")?;
    want_frequency(qs, 1, "f")?;
    scalar(Dim::CAPACITANCE, Kind::Plain)
}

fn ty_res(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::INDUCTANCE, "L")?;
    want(qs, 1, Dim::CAPACITANCE, "C")?;
    scalar(Dim::FREQUENCY, Kind::Hertz)
}

fn ty_rlc(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::IMPEDANCE, "R")?;
    want(qs, 1, Dim::INDUCTANCE, "L")?;
    want(qs, 2, Dim::CAPACITANCE, "C")?;
    Ok(Shape::Scalar(Quantity::PLAIN))
}

fn ty_q_of(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_impedance(qs, 0, "Z")?;
    Ok(Shape::Scalar(Quantity::PLAIN))
}

fn l_z_ind(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let w = omega(e, a[1], q[1]);
    let wl = e.bin(Op::Mul, w, a[0]);
    let j = e.konst(0.0, 1.0);
    vec![e.bin(Op::Mul, j, wl)]
}

fn l_z_cap(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let w = omega(e, a[1], q[1]);
    let wc = e.bin(Op::Mul, w, a[0]);
    let mj = e.konst(0.0, -1.0);
    vec![e.bin(Op::Div, mj, wc)]
}

fn l_x_ind(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let w = omega(e, a[1], q[1]);
    vec![e.bin(Op::Mul, w, a[0])]
}

fn l_x_cap(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let w = omega(e, a[1], q[1]);
    let wc = e.bin(Op::Mul, w, a[0]);
    let m1 = e.konst(-1.0, 0.0);
    vec![e.bin(Op::Div, m1, wc)]
}

fn l_l_from_x(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let w = omega(e, a[1], q[1]);
    vec![e.bin(Op::Div, a[0], w)]
}

fn l_c_from_x(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let w = omega(e, a[1], q[1]);
    let wx = e.bin(Op::Mul, w, a[0]);
    let m1 = e.konst(-1.0, 0.0);
    vec![e.bin(Op::Div, m1, wx)]
}

fn l_f_res(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let lc = e.bin(Op::Mul, a[0], a[1]);
    let r = e.un(Op::Sqrt, lc);
    let k = e.konst(std::f64::consts::TAU, 0.0);
    let d = e.bin(Op::Mul, k, r);
    vec![e.un(Op::Recip, d)]
}

fn l_q_series(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let lc = e.bin(Op::Div, a[1], a[2]);
    let z0 = e.un(Op::Sqrt, lc);
    vec![e.bin(Op::Div, z0, a[0])]
}

fn l_q_parallel(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let cl = e.bin(Op::Div, a[2], a[1]);
    let y0 = e.un(Op::Sqrt, cl);
    vec![e.bin(Op::Mul, a[0], y0)]
}

fn l_q_of(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let x = e.un(Op::Im, a[0]);
    let ax = e.un(Op::Abs, x);
    let r = e.un(Op::Re, a[0]);
    vec![e.bin(Op::Div, ax, r)]
}

pub fn funcs() -> Vec<Builtin> {
    vec![
        lowered(
            "z_ind",
            "impedance jωL of an inductance at frequency f",
            LF,
            "Ω",
            ty_l,
            l_z_ind,
        ),
        lowered(
            "z_cap",
            "impedance 1/(jωC) of a capacitance at frequency f",
            CF,
            "Ω",
            ty_c,
            l_z_cap,
        ),
        lowered(
            "x_ind",
            "reactance ωL of an inductance (positive)",
            LF,
            "Ω",
            ty_l,
            l_x_ind,
        ),
        lowered(
            "x_cap",
            "reactance −1/(ωC) of a capacitance (negative: Im of its impedance)",
            CF,
            "Ω",
            ty_c,
            l_x_cap,
        ),
        lowered(
            "l_from_x",
            "inductance whose reactance is X at f: X/ω",
            XF,
            "H",
            ty_x_to_l,
            l_l_from_x,
        ),
        lowered(
            "c_from_x",
            "capacitance whose reactance is X at f: −1/(ωX) (X is negative)",
            XF,
            "F",
            ty_x_to_c,
            l_c_from_x,
        ),
        lowered(
            "f_res",
            "resonant frequency 1/(2π√(LC)) of an L–C pair",
            &[p!("L", "H"), p!("C", "F")],
            "Hz",
            ty_res,
            l_f_res,
        ),
        lowered(
            "q_series",
            "quality factor √(L/C)/R of a series R-L-C circuit",
            RLC,
            "1",
            ty_rlc,
            l_q_series,
        ),
        lowered(
            "q_parallel",
            "quality factor R·√(C/L) of a parallel R-L-C circuit",
            RLC,
            "1",
            ty_rlc,
            l_q_parallel,
        ),
        lowered(
            "q_of",
            "quality factor |X|/R of an impedance R + jX at its frequency",
            &[p!("Z", "Ω|pu")],
            "1",
            ty_q_of,
            l_q_of,
        ),
    ]
}
