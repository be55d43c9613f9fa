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
    } else if z.re.abs() > 20.0 {
        // (sinh 2a + j·sin 2b)/(cosh 2a + cos 2b) with cosh 2a beyond
        // 1e17: ±1 + j·2·sin 2b·e^(−2|a|); the quotient itself overflows
        // (∞/∞) for |a| > 355.
        C64::new(z.re.signum(), 2.0 * (2.0 * z.im).sin() * (-2.0 * z.re.abs()).exp())
    } else {
        z.tanh()
    }
}

/// ln(1 + w), accurate when |w| is small (where 1 + w would round w away).
fn ln_1p(w: C64) -> C64 {
    if w.norm() < 0.5 {
        let m = (w.re * (2.0 + w.re) + w.im * w.im).ln_1p() / 2.0;
        C64::new(m, w.im.atan2(1.0 + w.re))
    } else {
        (C64::new(1.0, 0.0) + w).ln()
    }
}

/// arcsinh z for Re z > 0: ln(z + √(z² + 1)) written as
/// ln(1 + z + z²/(1 + √(z² + 1))), which keeps small values exact (the
/// plain form loses them in 1 + z), and ln 2z beyond |z| = 1e8, where z²
/// could overflow and the rest is below a double's precision.
fn asinh_right(z: C64) -> C64 {
    if z.norm() > 1e8 {
        return z.ln() + std::f64::consts::LN_2;
    }
    let one = C64::new(1.0, 0.0);
    let s = (z * z + one).sqrt();
    ln_1p(z + z * z / (one + s))
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
    // odd: the left half plane from the right one (off the cuts, which
    // lie on the imaginary axis, handled above)
    if z.re < 0.0 {
        -asinh_right(-z)
    } else {
        asinh_right(z)
    }
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
    // ½(ln(1 + z) − ln(1 − z)), each logarithm accurate for small z
    (ln_1p(z) - ln_1p(-z)) / 2.0
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

/// sinh and cosh grow as e^|Re x|/2: beyond |Re x| ≈ 710 the value
/// exceeds the largest double, which is said rather than shown as ∞.
fn dom_grows(a: &[C64], c: &Ctx) -> Option<ArgError> {
    dom_any(a, c).or_else(|| {
        (a[0].re.abs() > 709.0).then(|| {
            ArgError::at(
                0,
                "the value overflows: sinh and cosh exceed the largest number (about 1.8e308) beyond |re(x)| = 710",
            )
        })
    })
}

pub fn funcs() -> Vec<Builtin> {
    let src =
        "DLMF §4.28 and §4.37 (principal branches; sections from memory); tested against mpmath and Python's cmath";
    let f = |name, summary, eval| scalar_fn(name, summary, X, "1", plain_type, eval).with_source(src);
    vec![
        f("sinh", "hyperbolic sine, complex", s_sinh as ScalarFn).with_domain(dom_grows),
        f("cosh", "hyperbolic cosine, complex", s_cosh).with_domain(dom_grows),
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
