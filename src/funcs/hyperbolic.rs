//! Hyperbolic functions and their inverses, complex-valued, on the
//! principal branches of DLMF §4.37 (the same as mpmath and Python's
//! cmath away from the cuts):
//!
//! - arcsinh z = ln(z + (z² + 1)^½), cuts on the imaginary axis beyond ±j;
//! - arccosh z = ln(z + (z + 1)^½ (z − 1)^½), cut on the real axis below 1;
//! - arctanh z = ½ ln((1 + z)/(1 − z)), cuts on the real axis beyond ±1.
//!
//! On a cut the value is the one the formula gives with the principal
//! logarithm and square root (−π < arg ≤ π, rule 3 of issue 13), whatever
//! the sign of a zero imaginary part: acosh(−2) = 1.317 + jπ,
//! atanh(2) = 0.549 + jπ/2, atanh(−2) = −0.549 + jπ/2,
//! asinh(j2) = 1.317 + jπ/2, asinh(−j2) = −1.317 − jπ/2.
//! atanh(±1) is ±∞ (a pole), the limit along the real axis.

use super::*;
use std::f64::consts::{FRAC_PI_2, PI};

const X: &[Param] = &[p!("x", "1")];

fn plain_type(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_dimensionless(q, 0, "x")?;
    Ok(Shape::Scalar(Quantity::PLAIN))
}

fn real(x: f64) -> C64 {
    C64::new(x, 0.0)
}

/// A zero imaginary part of either sign is +0: the principal value does
/// not depend on how a real number was produced.
fn clean(z: C64) -> C64 {
    if z.im == 0.0 {
        real(z.re)
    } else {
        z
    }
}

pub fn sinh(z: C64) -> C64 {
    let z = clean(z);
    if z.im == 0.0 {
        real(z.re.sinh())
    } else {
        z.sinh()
    }
}

pub fn cosh(z: C64) -> C64 {
    let z = clean(z);
    if z.im == 0.0 {
        real(z.re.cosh())
    } else {
        z.cosh()
    }
}

pub fn tanh(z: C64) -> C64 {
    let z = clean(z);
    if z.im == 0.0 {
        real(z.re.tanh())
    } else {
        z.tanh()
    }
}

pub fn asinh(z: C64) -> C64 {
    let z = clean(z);
    if z.im == 0.0 {
        return real(z.re.asinh());
    }
    if z.re == 0.0 {
        // On the imaginary axis: j·asin(y) inside the cut; on the cuts
        // (|y| > 1) ln(j·(y + √(y² − 1))), whose real part takes y's sign.
        let y = z.im;
        if y.abs() <= 1.0 {
            return C64::new(0.0, y.asin());
        }
        let m = (y.abs() + (y * y - 1.0).sqrt()).ln();
        return C64::new(m.copysign(y), FRAC_PI_2.copysign(y));
    }
    z.asinh()
}

pub fn acosh(z: C64) -> C64 {
    let z = clean(z);
    if z.im == 0.0 {
        let x = z.re;
        if x >= 1.0 {
            return real(x.acosh());
        }
        if x >= -1.0 {
            return C64::new(0.0, x.acos());
        }
        if x.is_nan() {
            return real(f64::NAN);
        }
        return C64::new((-x).acosh(), PI);
    }
    z.acosh()
}

pub fn atanh(z: C64) -> C64 {
    let z = clean(z);
    if z.im == 0.0 {
        let x = z.re;
        if x.abs() <= 1.0 || x.is_nan() {
            return real(x.atanh());
        }
        // ½ ln((1 + x)/(1 − x)) of a negative real: + jπ/2 on both cuts.
        return C64::new(0.5 * ((1.0 + x) / (x - 1.0)).ln(), FRAC_PI_2);
    }
    z.atanh()
}

macro_rules! scalar1 {
    ($name:ident, $f:ident) => {
        fn $name(a: &[C64], out: &mut [C64], _: &Ctx) {
            out[0] = $f(a[0]);
        }
    };
}
scalar1!(s_sinh, sinh);
scalar1!(s_cosh, cosh);
scalar1!(s_tanh, tanh);
scalar1!(s_asinh, asinh);
scalar1!(s_acosh, acosh);
scalar1!(s_atanh, atanh);

fn dom_atanh(a: &[C64], _: &Ctx) -> Option<ArgError> {
    let z = a[0];
    if z.im == 0.0 && z.re.abs() == 1.0 {
        Some(ArgError::at(
            0,
            format!("atanh has a pole at {}: the value is infinite", z.re),
        ))
    } else if z.re.is_nan() || z.im.is_nan() {
        Some(ArgError::at(0, "`x` is NaN"))
    } else {
        None
    }
}

fn dom_any(a: &[C64], _: &Ctx) -> Option<ArgError> {
    let z = a[0];
    if z.re.is_nan() || z.im.is_nan() {
        Some(ArgError::at(0, "`x` is NaN"))
    } else if z.re.is_infinite() || z.im.is_infinite() {
        Some(ArgError::at(0, "`x` is infinite"))
    } else {
        None
    }
}

pub fn funcs() -> Vec<Builtin> {
    let src =
        "DLMF §4.28 and §4.37 (principal branches; sections from memory); tested against mpmath and Python's cmath";
    let f = |name, summary, eval| scalar_fn(name, summary, X, "1", plain_type, eval).with_source(src);
    vec![
        f("sinh", "hyperbolic sine, complex", s_sinh as ScalarFn).with_domain(dom_any),
        f("cosh", "hyperbolic cosine, complex", s_cosh).with_domain(dom_any),
        f("tanh", "hyperbolic tangent, complex", s_tanh).with_domain(dom_any),
        f(
            "asinh",
            "inverse hyperbolic sine, principal branch (cuts on the imaginary axis beyond ±j)",
            s_asinh,
        )
        .with_domain(dom_any),
        f(
            "acosh",
            "inverse hyperbolic cosine, principal branch (cut on the real axis below 1: acosh(-2) = 1.317 + jπ)",
            s_acosh,
        )
        .with_domain(dom_any),
        f(
            "atanh",
            "inverse hyperbolic tangent, principal branch (cuts beyond ±1: atanh(2) = 0.549 + jπ/2; ±∞ at ±1)",
            s_atanh,
        )
        .with_domain(dom_atanh),
    ]
}
