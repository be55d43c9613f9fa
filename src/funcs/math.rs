//! The general mathematical functions: parts of a complex number,
//! roots, exponentials and trigonometry.

use super::*;
use crate::engine::ops::Op;
use crate::units::kind::kind_of_sum;

const Z: &[Param] = &[Param { name: "z", unit: "any" }];
const X: &[Param] = &[Param { name: "x", unit: "1" }];

fn same(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    Ok(Shape::Scalar(q[0]))
}

fn re_type(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let k = if q[0].dim == Dim::POWER {
        Kind::RealPower
    } else {
        q[0].kind
    };
    scalar(q[0].dim, k)
}

fn im_type(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let k = if q[0].dim == Dim::POWER {
        Kind::ReactivePower
    } else {
        q[0].kind
    };
    scalar(q[0].dim, k)
}

fn abs_type(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    // |P| is still a real power; |Q| and |S| are shown in VA.
    let k = match q[0].kind {
        Kind::RealPower => Kind::RealPower,
        _ if q[0].dim == Dim::POWER => Kind::ApparentPower,
        k => k,
    };
    scalar(q[0].dim, k)
}

fn angle_type(_: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    Ok(Shape::Scalar(Quantity::ANGLE))
}

fn sqrt_type(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    match q[0].dim.pow_ratio(1, 2) {
        Some(d) => scalar(
            d,
            if q[0].kind == Kind::PerUnit {
                Kind::PerUnit
            } else {
                Kind::Plain
            },
        ),
        None => Err(ArgError::at(
            0,
            format!("the square root of {} has no whole SI dimension", q[0].describe()),
        )),
    }
}

fn plain_type(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_dimensionless(q, 0, "x")?;
    Ok(Shape::Scalar(Quantity::PLAIN))
}

fn inverse_trig_type(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_dimensionless(q, 0, "x")?;
    Ok(Shape::Scalar(Quantity::ANGLE))
}

fn atan2_type(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_same(q)?;
    Ok(Shape::Scalar(Quantity::ANGLE))
}

fn minmax_type(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let d = want_same(q)?;
    let mut k = q[0].kind;
    for (i, x) in q.iter().enumerate().skip(1) {
        k = kind_of_sum(k, x.kind, d).map_err(|m| ArgError::at(i, m))?;
    }
    scalar(d, k)
}

macro_rules! unary {
    ($name:ident, $op:expr) => {
        fn $name(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
            vec![e.un($op, a[0])]
        }
    };
}
unary!(l_re, Op::Re);
unary!(l_im, Op::Im);
unary!(l_abs, Op::Abs);
unary!(l_arg, Op::Arg);
unary!(l_conj, Op::Conj);
unary!(l_sqrt, Op::Sqrt);
unary!(l_exp, Op::Exp);
unary!(l_ln, Op::Ln);
unary!(l_log10, Op::Log10);
unary!(l_sin, Op::Sin);
unary!(l_cos, Op::Cos);
unary!(l_tan, Op::Tan);
unary!(l_asin, Op::Asin);
unary!(l_acos, Op::Acos);
unary!(l_atan, Op::Atan);

fn l_atan2(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![e.bin(Op::Atan2, a[0], a[1])]
}

fn fold(e: &mut Emitter, a: &[Operand], op: Op) -> Vec<Operand> {
    let mut acc = a[0];
    for &x in &a[1..] {
        acc = e.bin(op, acc, x);
    }
    vec![acc]
}

fn l_min(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    fold(e, a, Op::Min)
}
fn l_max(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    fold(e, a, Op::Max)
}

fn parts_type(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let mag = match q[0].kind {
        Kind::ReactivePower | Kind::ApparentPower => Quantity::new(q[0].dim, Kind::ApparentPower),
        _ if q[0].dim == Dim::POWER => Quantity::new(q[0].dim, Kind::ApparentPower),
        k => Quantity::new(q[0].dim, k),
    };
    let (re_q, im_q) = if q[0].dim == Dim::POWER {
        (
            Quantity::new(q[0].dim, Kind::RealPower),
            Quantity::new(q[0].dim, Kind::ReactivePower),
        )
    } else {
        (q[0], q[0])
    };
    Ok(Shape::Record(vec![
        ("re", re_q),
        ("im", im_q),
        ("mag", mag),
        ("ang", Quantity::ANGLE),
    ]))
}

fn l_parts(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![
        e.un(Op::Re, a[0]),
        e.un(Op::Im, a[0]),
        e.un(Op::Abs, a[0]),
        e.un(Op::Arg, a[0]),
    ]
}

pub fn funcs() -> Vec<Builtin> {
    let f = lowered;
    vec![
        f("re", "real part (of a power: P, in W)", Z, "as z", re_type, l_re),
        f("im", "imaginary part (of a power: Q, in var)", Z, "as z", im_type, l_im),
        f(
            "abs",
            "magnitude |z| (of a power: |S|, in VA)",
            Z,
            "as z",
            abs_type,
            l_abs,
        ),
        f("arg", "angle of z, shown in degrees", Z, "angle", angle_type, l_arg),
        f("conj", "complex conjugate", Z, "as z", same, l_conj),
        f(
            "parts",
            "a complex value taken apart: fields re, im, mag, ang",
            Z,
            "record",
            parts_type,
            l_parts,
        ),
        f("sqrt", "principal square root", Z, "√ of z's unit", sqrt_type, l_sqrt),
        f("exp", "e to the power x", X, "1", plain_type, l_exp),
        f("ln", "natural logarithm (principal value)", X, "1", plain_type, l_ln),
        f("log10", "base-10 logarithm", X, "1", plain_type, l_log10),
        f(
            "sin",
            "sine (x in radians, or an angle such as 30°)",
            X,
            "1",
            plain_type,
            l_sin,
        ),
        f(
            "cos",
            "cosine (x in radians, or an angle such as 30°)",
            X,
            "1",
            plain_type,
            l_cos,
        ),
        f(
            "tan",
            "tangent (x in radians, or an angle such as 30°)",
            X,
            "1",
            plain_type,
            l_tan,
        ),
        f("asin", "inverse sine, an angle", X, "angle", inverse_trig_type, l_asin),
        f(
            "acos",
            "inverse cosine, an angle",
            X,
            "angle",
            inverse_trig_type,
            l_acos,
        ),
        f(
            "atan",
            "inverse tangent, an angle",
            X,
            "angle",
            inverse_trig_type,
            l_atan,
        ),
        f(
            "atan2",
            "angle of the point (x, y), from the real parts",
            &[
                Param { name: "y", unit: "any" },
                Param {
                    name: "x",
                    unit: "as y",
                },
            ],
            "angle",
            atan2_type,
            l_atan2,
        ),
        Builtin {
            variadic: true,
            ..f(
                "min",
                "the argument with the smallest real part",
                &[Param { name: "a", unit: "any" }],
                "as a",
                minmax_type,
                l_min,
            )
        },
        Builtin {
            variadic: true,
            ..f(
                "max",
                "the argument with the largest real part",
                &[Param { name: "a", unit: "any" }],
                "as a",
                minmax_type,
                l_max,
            )
        },
    ]
}
