//! Networks: voltage and current dividers, source transformation
//! (Thevenin ↔ Norton), the Thevenin equivalent at a bus fed through a
//! series impedance with shunt branches, and series ↔ parallel
//! equivalents of an impedance.
//!
//! Impedances may be in Ω or per-unit throughout.

use super::*;
use crate::engine::ops::Op;

fn ty_vdiv(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::VOLTAGE, "V")?;
    want_impedance(qs, 1, "Za")?;
    want_impedance(qs, 2, "Zb")?;
    Ok(Shape::Scalar(qs[0]))
}

fn ty_idiv(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::CURRENT, "I")?;
    want_impedance(qs, 1, "Za")?;
    want_impedance(qs, 2, "Zb")?;
    Ok(Shape::Scalar(qs[0]))
}

/// x·Zb/(Za+Zb), written x/(1 + Za/Zb) so that open (∞) and short (0)
/// elements give their limits: an open Zb or a short Za gives x, an open
/// Za or a short Zb gives 0 (division by 0 and by ∞ are exact in
/// `ops::div`). Two shorts or two opens give NaN: no limit exists.
fn share(e: &mut Emitter, x: Operand, za: Operand, zb: Operand) -> Operand {
    let r = e.bin(Op::Div, za, zb);
    let one = e.konst(1.0, 0.0);
    let d = e.bin(Op::Add, one, r);
    e.bin(Op::Div, x, d)
}

fn l_div(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![share(e, a[0], a[1], a[2])]
}

fn ty_norton(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::VOLTAGE, "Vth")?;
    want_impedance(qs, 1, "Zth")?;
    let pu = qs[0].kind == Kind::PerUnit;
    Ok(Shape::Scalar(if pu { PU } else { Quantity::of(Dim::CURRENT) }))
}

fn ty_thevenin(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::CURRENT, "In")?;
    want_impedance(qs, 1, "Zn")?;
    let pu = qs[0].kind == Kind::PerUnit;
    Ok(Shape::Scalar(if pu { PU } else { Quantity::of(Dim::VOLTAGE) }))
}

fn l_norton(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![e.bin(Op::Div, a[0], a[1])]
}

fn l_thevenin(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![e.bin(Op::Mul, a[0], a[1])]
}

fn ty_bus_z(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    for i in 0..qs.len() {
        want_impedance(qs, i, if i == 0 { "Zs" } else { "Zsh" })?;
    }
    Ok(Shape::Scalar(if qs.iter().any(|x| x.kind == Kind::PerUnit) {
        PU
    } else {
        Quantity::of(Dim::IMPEDANCE)
    }))
}

fn ty_bus_v(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::VOLTAGE, "Vs")?;
    for i in 1..qs.len() {
        want_impedance(qs, i, if i == 1 { "Zs" } else { "Zsh" })?;
    }
    Ok(Shape::Scalar(qs[0]))
}

fn shunts(e: &mut Emitter, zs: &[Operand]) -> Operand {
    let mut acc = zs[0];
    for &z in &zs[1..] {
        acc = e.bin(Op::Par, acc, z);
    }
    acc
}

fn l_bus_z(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![shunts(e, a)]
}

fn l_bus_v(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let zsh = shunts(e, &a[2..]);
    vec![share(e, a[0], a[1], zsh)]
}

fn ty_as_parallel(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_impedance(qs, 0, "Z")?;
    let k = Quantity::new(qs[0].dim, qs[0].kind);
    Ok(Shape::Record(vec![("R", k), ("X", k)]))
}

/// Z = R + jX equals Rp ∥ jXp with Rp = |Z|²/R = R + X·(X/R) and
/// Xp = |Z|²/X = X + R·(R/X), in real arithmetic so that limits hold: a
/// pure reactance (R = 0) gives an open Rp, a pure resistance an open Xp,
/// an open Z an open pair. A short (Z = 0) has no single equivalent (NaN).
fn s_as_parallel(a: &[C64], out: &mut [C64], _: &Ctx) {
    // a zero part of either sign is +0, so an open keeps a sign of its own
    let (r, x) = (a[0].re + 0.0, a[0].im + 0.0);
    let (rp, xp) = if r.is_infinite() || x.is_infinite() {
        // an open in series form is an open in parallel form
        let open = |v: f64| {
            if v == 0.0 {
                f64::INFINITY
            } else {
                f64::INFINITY.copysign(v)
            }
        };
        (open(r), open(x))
    } else {
        (r + x * (x / r), x + r * (r / x))
    };
    out[0] = C64::new(rp, 0.0);
    out[1] = C64::new(xp, 0.0);
}

fn ty_as_series(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_impedance(qs, 0, "R")?;
    want_impedance(qs, 1, "X")?;
    if qs[0].dim != qs[1].dim {
        return Err(ArgError::at(1, "`R` and `X` must both be in Ω or both per-unit"));
    }
    let k = Quantity::new(
        qs[0].dim,
        if qs[0].kind == Kind::PerUnit {
            Kind::PerUnit
        } else {
            qs[1].kind
        },
    );
    Ok(Shape::Record(vec![("R", k), ("X", k), ("Z", k)]))
}

/// R ∥ jX = (R·X² + j·R²·X)/(R² + X²). R and X must be real numbers: a
/// complex argument (say `j50 Ω` for X) would be read two ways, so it
/// gives NaN, which the sheet reports as an error at this cell.
fn s_as_series(a: &[C64], out: &mut [C64], _: &Ctx) {
    let (r, x) = (a[0], a[1]);
    if r.im != 0.0 || x.im != 0.0 {
        out.fill(C64::new(f64::NAN, f64::NAN));
        return;
    }
    let (r, x) = (r.re, x.re);
    let (rs, xs) = if r.is_infinite() {
        (0.0, x)
    } else if x.is_infinite() {
        (r, 0.0)
    } else {
        let d = r * r + x * x;
        if d == 0.0 {
            (0.0, 0.0)
        } else {
            (r * x * x / d, r * r * x / d)
        }
    };
    out[0] = C64::new(rs, 0.0);
    out[1] = C64::new(xs, 0.0);
    out[2] = C64::new(rs, xs);
}

pub fn funcs() -> Vec<Builtin> {
    let div_params: &'static [Param] = &[p!("V", "V|pu"), p!("Za", "Ω|pu"), p!("Zb", "Ω|pu")];
    vec![
        lowered(
            "vdiv",
            "voltage across Zb when V drives Za and Zb in series: V·Zb/(Za+Zb)",
            div_params,
            "as V",
            ty_vdiv,
            l_div,
        ),
        lowered(
            "idiv",
            "current in Za when I feeds Za ∥ Zb: I·Zb/(Za+Zb)",
            &[p!("I", "A|pu"), p!("Za", "Ω|pu"), p!("Zb", "Ω|pu")],
            "as I",
            ty_idiv,
            l_div,
        ),
        lowered(
            "norton_i",
            "Norton current Vth/Zth of a Thevenin source (the impedance stays Zth)",
            &[p!("Vth", "V|pu"), p!("Zth", "Ω|pu")],
            "A|pu",
            ty_norton,
            l_norton,
        ),
        lowered(
            "thevenin_v",
            "Thevenin voltage In·Zn of a Norton source (the impedance stays Zn)",
            &[p!("In", "A|pu"), p!("Zn", "Ω|pu")],
            "V|pu",
            ty_thevenin,
            l_thevenin,
        ),
        Builtin {
            variadic: true,
            ..lowered(
                "bus_zth",
                "Thevenin impedance at a bus fed through Zs with shunt branches: Zs ∥ Zsh ∥ …",
                &[p!("Zs", "Ω|pu"), p!("Zsh", "Ω|pu")],
                "as Zs",
                ty_bus_z,
                l_bus_z,
            )
        },
        Builtin {
            variadic: true,
            ..lowered(
                "bus_vth",
                "open-circuit voltage at that bus: Vs·Zp/(Zs + Zp), Zp = Zsh ∥ …",
                &[p!("Vs", "V|pu"), p!("Zs", "Ω|pu"), p!("Zsh", "Ω|pu")],
                "as Vs",
                ty_bus_v,
                l_bus_v,
            )
        },
        scalar_fn(
            "as_parallel",
            "series R + jX as its parallel equivalent R ∥ jX",
            &[p!("Z", "Ω|pu")],
            "record R, X (as Z)",
            ty_as_parallel,
            s_as_parallel,
        ),
        scalar_fn(
            "as_series",
            "parallel R ∥ jX (R, X real) as its series equivalent R + jX",
            &[p!("R", "Ω|pu"), p!("X", "Ω|pu")],
            "record R, X, Z (as R)",
            ty_as_series,
            s_as_series,
        ),
    ]
}
