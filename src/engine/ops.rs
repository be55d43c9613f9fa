//! The instruction set of a compiled sheet and the numeric meaning of each
//! instruction. Both evaluators (one case at a time in `eval.rs`, blocks of
//! cases in `block.rs`) call these functions, so they agree to the bit.
//!
//! Semantics worth knowing:
//! - Division by an exact zero gives an infinite value (each non-zero part
//!   becomes ±∞), and 0/0 gives NaN, as IEEE 754 does for reals.
//! - `par(a, b)` is a·b/(a+b) with a short (0) giving 0 and an open (∞)
//!   giving the other operand; two opens give an open. Magnitudes whose
//!   product would overflow or underflow take a scaled path, so
//!   `1e200 || 1e200` is 5e199, not ∞ or NaN.
//! - Functions of a real argument take a real-only path, so `sqrt(4)` is
//!   exactly 2 and `asin(0.5)` has no stray imaginary part.
//! - Principal values (DLMF §4.2, §4.37): −π < arg ≤ π. A zero part is
//!   read as +0 whatever its sign bit, so a negative real however it was
//!   produced (`-1`, `0 - x`, `-(x)`) lies on the upper side of every
//!   branch cut: `ln(-1)` = +jπ, `arg(-5)` = +π, `(-8)^(1/3)` = 1 + j√3.
//!   On a cut, ln, log10, sqrt, `^`, asin, acos and atan take the value of
//!   the side counter-clockwise continuity gives (C99 Annex G and Python's
//!   cmath for an argument with a +0 part). Integer powers of reals are
//!   exact products (`(-2)^3` = −8, no imaginary part) and `x^0.5` is
//!   `sqrt(x)` bit for bit.

use num_complex::Complex64 as C64;

/// One instruction: `dst = op(a, b)`. Unary ops ignore `b`. For `Call`,
/// `a` is the first index into the program's argument table and `b` the
/// number of arguments; the results go to `dst`, `dst + 1`, ….
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Instr {
    pub op: Op,
    pub dst: u32,
    pub a: u32,
    pub b: u32,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Op {
    Copy,
    Neg,
    Conj,
    Re,
    Im,
    Abs,
    Arg,
    Recip,
    Sqrt,
    Exp,
    Ln,
    Log10,
    Sin,
    Cos,
    Tan,
    Asin,
    Acos,
    Atan,
    Add,
    Sub,
    Mul,
    Div,
    /// General power `a^b`.
    Pow,
    /// Integer power; the exponent is `b` read as an `i32`.
    PowI,
    /// Reciprocal-sum combination: impedances in parallel, admittances in
    /// series.
    Par,
    /// `a · e^{jb}`: the polar literal, b in radians.
    Polar,
    /// `atan2(re a, re b)`
    Atan2,
    /// The operand with the smaller real part.
    Min,
    /// The operand with the larger real part.
    Max,
    /// 1 if re a < re b, else 0 (NaN if either is NaN).
    Lt,
    /// 1 if re a ≤ re b, else 0 (NaN if either is NaN).
    Le,
    /// 1 if re a > re b, else 0 (NaN if either is NaN).
    Gt,
    /// 1 if re a ≥ re b, else 0 (NaN if either is NaN).
    Ge,
    /// A two-way choice: `a` is the condition, `b` the first of two
    /// consecutive slots holding the two branches. The result is slot `b`
    /// where the condition is exactly 1, slot `b + 1` where it is exactly
    /// 0, and NaN for any other condition. The branch not taken is never
    /// read into the result, so an ∞ or NaN there does no harm.
    Select,
    /// A library function (index into `funcs::LIBRARY`).
    Call(u16),
    /// An in-sheet search (index into `Program::searches`); writes `dst`
    /// and the search's outcome slots. `a` and `b` are unused (= `dst`).
    Search(u16),
    /// A network solve (index into `Program::networks`): like `Call`, `a`
    /// indexes the argument table (the number of results, then ω and the
    /// element values) and `b` is the number of arguments; results go to
    /// `dst`, `dst + 1`, ….
    Network(u16),
}

impl Op {
    /// Reads its arguments from `Program::call_args` rather than `a`, `b`.
    pub fn uses_arg_table(self) -> bool {
        matches!(self, Op::Call(_) | Op::Network(_))
    }

    pub fn is_unary(self) -> bool {
        use Op::*;
        matches!(
            self,
            Copy | Neg
                | Conj
                | Re
                | Im
                | Abs
                | Arg
                | Recip
                | Sqrt
                | Exp
                | Ln
                | Log10
                | Sin
                | Cos
                | Tan
                | Asin
                | Acos
                | Atan
                | PowI
        )
    }
}

#[inline]
fn inf_or_zero(x: f64) -> f64 {
    if x == 0.0 {
        0.0
    } else if x.is_nan() {
        f64::NAN
    } else {
        f64::INFINITY.copysign(x)
    }
}

/// `a / 0`: infinite where `a` is not zero, NaN for `0 / 0`.
#[inline]
pub fn div_by_zero(a: C64) -> C64 {
    if a.re == 0.0 && a.im == 0.0 {
        C64::new(f64::NAN, f64::NAN)
    } else {
        C64::new(inf_or_zero(a.re), inf_or_zero(a.im))
    }
}

/// Complex division. The plain formula is used where |b|² is a normal
/// number and `a` is finite; otherwise Smith's scaled form, so neither
/// tiny nor huge divisors overflow or underflow, and an infinite `a` over
/// a finite non-zero `b` is infinite (an open element stays open) rather
/// than NaN.
#[inline]
pub fn div(a: C64, b: C64) -> C64 {
    let d = b.re * b.re + b.im * b.im;
    if d.is_normal() && d < 1e300 && a.re.abs() < f64::INFINITY && a.im.abs() < f64::INFINITY {
        C64::new((a.re * b.re + a.im * b.im) / d, (a.im * b.re - a.re * b.im) / d)
    } else {
        div_careful(a, b)
    }
}

#[cold]
pub fn div_careful(a: C64, b: C64) -> C64 {
    if b.re == 0.0 && b.im == 0.0 {
        return div_by_zero(a);
    }
    if b.re.is_nan() || b.im.is_nan() {
        return C64::new(f64::NAN, f64::NAN);
    }
    if b.re.is_infinite() || b.im.is_infinite() {
        if a.re.is_finite() && a.im.is_finite() {
            return C64::new(0.0, 0.0);
        }
        return C64::new(f64::NAN, f64::NAN);
    }
    if a.re.is_nan() || a.im.is_nan() {
        return C64::new(f64::NAN, f64::NAN);
    }
    if a.re.is_infinite() || a.im.is_infinite() {
        // ∞ / b for a finite, non-zero b (C99 Annex G): the direction of
        // a's infinite parts divided by b, each non-zero part made infinite.
        let unit = |x: f64| {
            if x.is_infinite() {
                1f64.copysign(x)
            } else {
                0f64.copysign(x)
            }
        };
        let q = div(C64::new(unit(a.re), unit(a.im)), b);
        return C64::new(inf_or_zero(q.re), inf_or_zero(q.im));
    }
    // Smith (1962).
    if b.re.abs() >= b.im.abs() {
        let r = b.im / b.re;
        let den = b.re + b.im * r;
        C64::new((a.re + a.im * r) / den, (a.im - a.re * r) / den)
    } else {
        let r = b.re / b.im;
        let den = b.re * r + b.im;
        C64::new((a.re * r + a.im) / den, (a.im * r - a.re) / den)
    }
}

/// Complex product. Where the plain product has a NaN part but neither
/// operand is NaN, an operand is infinite: the product is then infinite in
/// the direction of the operands (C99 Annex G), so an open element times a
/// finite non-zero value stays open (`(∞ + j0)·(4 + j0)` is ∞, not
/// ∞ + jNaN). ∞·0 stays NaN.
#[inline]
pub fn mul(a: C64, b: C64) -> C64 {
    let r = a * b;
    if r.re.is_nan() || r.im.is_nan() {
        mul_careful(a, b)
    } else {
        r
    }
}

#[cold]
pub fn mul_careful(a: C64, b: C64) -> C64 {
    let nan = |z: C64| z.re.is_nan() || z.im.is_nan();
    let zero = |z: C64| z.re == 0.0 && z.im == 0.0;
    if nan(a) || nan(b) || (is_inf(a) && zero(b)) || (is_inf(b) && zero(a)) {
        return a * b;
    }
    let dir = |z: C64| {
        if is_inf(z) {
            let unit = |x: f64| {
                if x.is_infinite() {
                    1f64.copysign(x)
                } else {
                    0f64.copysign(x)
                }
            };
            C64::new(unit(z.re), unit(z.im))
        } else {
            z
        }
    };
    let q = dir(a) * dir(b);
    C64::new(inf_or_zero(q.re), inf_or_zero(q.im))
}

/// |z|, without overflow for huge parts or underflow for tiny ones.
#[inline]
pub fn abs(z: C64) -> f64 {
    let s = z.re * z.re + z.im * z.im;
    if s.is_normal() && s < 1e300 {
        s.sqrt()
    } else {
        z.re.hypot(z.im)
    }
}

#[inline]
fn is_inf(z: C64) -> bool {
    z.re.is_infinite() || z.im.is_infinite()
}

/// Whether the plain formula a·b/(a+b) is safe for these operands: the
/// larger part of each operand between 1e-75 and 1e75 (so neither is zero,
/// infinite or NaN, and a·b·conj(a+b) can neither overflow nor underflow)
/// and |a+b|² a normal number. `block.rs` takes its vector path under
/// exactly this condition.
#[inline]
pub fn par_plain_ok(a: C64, b: C64) -> bool {
    const RANGE: std::ops::RangeInclusive<f64> = 1e-75..=1e75;
    let (sr, si) = (a.re + b.re, a.im + b.im);
    RANGE.contains(&a.re.abs().max(a.im.abs()))
        && RANGE.contains(&b.re.abs().max(b.im.abs()))
        && (sr * sr + si * si).is_normal()
}

/// Reciprocal-sum combination `a·b/(a+b)`.
#[inline]
pub fn par(a: C64, b: C64) -> C64 {
    if par_plain_ok(a, b) {
        let n = a * b;
        let s = a + b;
        let d = s.re * s.re + s.im * s.im;
        C64::new((n.re * s.re + n.im * s.im) / d, (n.im * s.re - n.re * s.im) / d)
    } else {
        par_careful(a, b)
    }
}

/// `par` for shorts, opens, NaN, and magnitudes whose product would
/// overflow or underflow: b/(1 + b/a) with |b| ≤ |a|, so the ratio never
/// exceeds 1.
#[cold]
pub fn par_careful(a: C64, b: C64) -> C64 {
    let zero = |z: C64| z.re == 0.0 && z.im == 0.0;
    let nan = |z: C64| z.re.is_nan() || z.im.is_nan();
    if nan(a) || nan(b) {
        return C64::new(f64::NAN, f64::NAN);
    }
    if zero(a) || zero(b) {
        return C64::new(0.0, 0.0);
    }
    match (is_inf(a), is_inf(b)) {
        // an open in parallel with an open is an open
        (true, true) => return C64::new(f64::INFINITY, 0.0),
        (true, false) => return b,
        (false, true) => return a,
        (false, false) => {}
    }
    let (big, small) = if abs(a) >= abs(b) { (a, b) } else { (b, a) };
    div(small, C64::new(1.0, 0.0) + div(small, big))
}

#[inline]
fn real(x: f64) -> C64 {
    C64::new(x, 0.0)
}

/// The same number with each zero part made +0: a real written `-5` (with
/// a −0 imaginary part from the minus) sits on the upper side of a cut.
#[inline]
pub fn plus_zero(z: C64) -> C64 {
    // −0 + 0 = +0 in IEEE 754 (round to nearest); every other value,
    // NaN and ±∞ included, is unchanged.
    C64::new(z.re + 0.0, z.im + 0.0)
}

/// Principal argument, −π < arg ≤ π; arg of a negative real is +π.
#[inline]
pub fn arg(z: C64) -> f64 {
    let z = plus_zero(z);
    z.im.atan2(z.re)
}

pub fn sqrt(z: C64) -> C64 {
    if z.im == 0.0 {
        if z.re >= 0.0 {
            real(z.re.sqrt())
        } else {
            C64::new(0.0, (-z.re).sqrt())
        }
    } else {
        z.sqrt()
    }
}

pub fn exp(z: C64) -> C64 {
    if z.im == 0.0 {
        real(z.re.exp())
    } else {
        z.exp()
    }
}

pub fn ln(z: C64) -> C64 {
    if z.im == 0.0 && z.re > 0.0 {
        real(z.re.ln())
    } else if z.re == 0.0 && z.im == 0.0 {
        real(f64::NEG_INFINITY)
    } else if z.im == 0.0 && z.re < 0.0 {
        // the upper side of the cut: arg = +π
        C64::new((-z.re).ln(), std::f64::consts::PI)
    } else {
        plus_zero(z).ln()
    }
}

pub fn log10(z: C64) -> C64 {
    if z.im == 0.0 && z.re > 0.0 {
        real(z.re.log10())
    } else if z.im == 0.0 && z.re < 0.0 {
        C64::new((-z.re).log10(), std::f64::consts::PI / std::f64::consts::LN_10)
    } else {
        ln(z) / std::f64::consts::LN_10
    }
}

pub fn sin(z: C64) -> C64 {
    if z.im == 0.0 {
        real(z.re.sin())
    } else {
        z.sin()
    }
}
pub fn cos(z: C64) -> C64 {
    if z.im == 0.0 {
        real(z.re.cos())
    } else {
        z.cos()
    }
}
pub fn tan(z: C64) -> C64 {
    if z.im == 0.0 {
        real(z.re.tan())
    } else {
        z.tan()
    }
}

/// Principal inverse sine. On the cuts (real x, |x| > 1) the value of the
/// upper side: ±π/2 + j·acosh|x|.
pub fn asin(z: C64) -> C64 {
    if z.im == 0.0 && z.re.abs() <= 1.0 {
        real(z.re.asin())
    } else if z.im == 0.0 && z.re.abs() > 1.0 && z.re.is_finite() {
        C64::new(std::f64::consts::FRAC_PI_2.copysign(z.re), z.re.abs().acosh())
    } else {
        plus_zero(z).asin()
    }
}

/// Principal inverse cosine. On the cuts the value of the upper side:
/// −j·acosh x for x > 1, π − j·acosh|x| for x < −1.
pub fn acos(z: C64) -> C64 {
    if z.im == 0.0 && z.re.abs() <= 1.0 {
        real(z.re.acos())
    } else if z.im == 0.0 && z.re > 1.0 && z.re.is_finite() {
        C64::new(0.0, -z.re.acosh())
    } else if z.im == 0.0 && z.re < -1.0 && z.re.is_finite() {
        C64::new(std::f64::consts::PI, -(-z.re).acosh())
    } else {
        plus_zero(z).acos()
    }
}

/// Principal inverse tangent. On the cuts (jy, |y| > 1) the value of the
/// right-hand side: π/2 + j·atanh(1/y).
pub fn atan(z: C64) -> C64 {
    if z.im == 0.0 {
        real(z.re.atan())
    } else if z.re == 0.0 && z.im.abs() > 1.0 && z.im.is_finite() {
        C64::new(std::f64::consts::FRAC_PI_2, (1.0 / z.im).atanh())
    } else {
        plus_zero(z).atan()
    }
}

pub fn powi(z: C64, n: i32) -> C64 {
    if z.im == 0.0 {
        return real(z.re.powi(n));
    }
    if n >= 0 {
        z.powu(n as u32)
    } else {
        div(C64::new(1.0, 0.0), z.powu(n.unsigned_abs()))
    }
}

/// Principal power a^b = exp(b·ln a).
pub fn pow(a: C64, b: C64) -> C64 {
    if b.im == 0.0 && b.re.fract() == 0.0 && b.re.abs() <= i32::MAX as f64 {
        return powi(a, b.re as i32);
    }
    if b.im == 0.0 && b.re == 0.5 {
        return sqrt(a);
    }
    if a.re == 0.0 && a.im == 0.0 {
        return if b.re > 0.0 { real(0.0) } else { real(f64::INFINITY) };
    }
    if a.im == 0.0 && a.re > 0.0 && b.im == 0.0 {
        return real(a.re.powf(b.re));
    }
    if a.im == 0.0 && a.re < 0.0 {
        // ln a = ln|a| + jπ (the upper side of the cut)
        if b.im == 0.0 {
            let m = (-a.re).powf(b.re);
            let (s, c) = (b.re * std::f64::consts::PI).sin_cos();
            return C64::new(m * c, m * s);
        }
        return (b * ln(a)).exp();
    }
    plus_zero(a).powc(b)
}

pub fn polar(m: C64, theta: C64) -> C64 {
    if theta.im == 0.0 {
        let (s, c) = theta.re.sin_cos();
        m * C64::new(c, s)
    } else {
        m * (C64::new(0.0, 1.0) * theta).exp()
    }
}

fn pick(a: C64, b: C64, smaller: bool) -> C64 {
    if a.re.is_nan() || b.re.is_nan() {
        return C64::new(f64::NAN, f64::NAN);
    }
    if (a.re <= b.re) == smaller {
        a
    } else {
        b
    }
}

/// A comparison of real parts: 1 or 0, and NaN when either part is NaN
/// (an unknown value is neither larger nor smaller).
#[inline]
pub fn compare(op: Op, a: C64, b: C64) -> C64 {
    let (x, y) = (a.re, b.re);
    if x.is_nan() || y.is_nan() {
        return C64::new(f64::NAN, 0.0);
    }
    let t = match op {
        Op::Lt => x < y,
        Op::Le => x <= y,
        Op::Gt => x > y,
        Op::Ge => x >= y,
        _ => unreachable!("not a comparison: {op:?}"),
    };
    real(if t { 1.0 } else { 0.0 })
}

/// The two-way choice of `Op::Select`: `yes` where `cond` is exactly 1,
/// `no` where it is exactly 0, NaN otherwise.
#[inline]
pub fn select(cond: C64, yes: C64, no: C64) -> C64 {
    if cond.im == 0.0 && cond.re == 1.0 {
        yes
    } else if cond.im == 0.0 && cond.re == 0.0 {
        no
    } else {
        C64::new(f64::NAN, f64::NAN)
    }
}

/// Apply a unary op.
#[inline]
pub fn apply1(op: Op, a: C64, b_bits: u32) -> C64 {
    use Op::*;
    match op {
        Copy => a,
        Neg => -a,
        Conj => a.conj(),
        Re => real(a.re),
        Im => real(a.im),
        Abs => real(abs(a)),
        Arg => real(arg(a)),
        Recip => div(C64::new(1.0, 0.0), a),
        Sqrt => sqrt(a),
        Exp => exp(a),
        Ln => ln(a),
        Log10 => log10(a),
        Sin => sin(a),
        Cos => cos(a),
        Tan => tan(a),
        Asin => asin(a),
        Acos => acos(a),
        Atan => atan(a),
        PowI => powi(a, b_bits as i32),
        _ => unreachable!("not a unary op: {op:?}"),
    }
}

/// Apply a binary op.
#[inline]
pub fn apply2(op: Op, a: C64, b: C64) -> C64 {
    use Op::*;
    match op {
        Add => a + b,
        Sub => a - b,
        Mul => mul(a, b),
        Div => div(a, b),
        Pow => pow(a, b),
        Par => par(a, b),
        Polar => polar(a, b),
        Atan2 => real((a.re + 0.0).atan2(b.re + 0.0)),
        Min => pick(a, b, true),
        Max => pick(a, b, false),
        Lt | Le | Gt | Ge => compare(op, a, b),
        _ => unreachable!("not a binary op: {op:?}"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn c(re: f64, im: f64) -> C64 {
        C64::new(re, im)
    }

    #[test]
    fn division_by_zero_is_infinite_not_nan() {
        let r = div(c(5.0, 0.0), c(0.0, 0.0));
        assert_eq!(r.re, f64::INFINITY);
        assert_eq!(r.im, 0.0);
        assert!(div(c(0.0, 0.0), c(0.0, 0.0)).re.is_nan());
    }

    // An open element (∞) divided by a finite one is still open: the
    // plain formula would give ∞·0 = NaN in one part. C99 Annex G.
    #[test]
    fn infinite_times_finite_is_infinite() {
        assert_eq!(mul(c(f64::INFINITY, 0.0), c(4.0, 0.0)), c(f64::INFINITY, 0.0));
        assert_eq!(mul(c(2.0, 0.0), c(0.0, f64::NEG_INFINITY)), c(0.0, f64::NEG_INFINITY));
        assert!(mul(c(f64::INFINITY, 0.0), c(0.0, 0.0)).re.is_nan());
        assert_eq!(mul(c(3.0, 4.0), c(5.0, -2.0)), c(3.0, 4.0) * c(5.0, -2.0));
    }

    #[test]
    fn infinite_over_finite_is_infinite() {
        let r = div(c(f64::INFINITY, 0.0), c(0.0, 4.0));
        assert_eq!(r, c(0.0, f64::NEG_INFINITY));
        let r = div(c(0.0, f64::NEG_INFINITY), c(3.0, 4.0));
        assert!(r.re.is_infinite() && r.im.is_infinite(), "{r}");
        assert!(div(c(f64::INFINITY, 0.0), c(f64::INFINITY, 0.0)).re.is_nan());
        assert_eq!(div(c(f64::INFINITY, 0.0), c(0.0, 0.0)), c(f64::INFINITY, 0.0));
    }

    #[test]
    fn division_of_tiny_and_huge_values() {
        // (1e-170 + 1e-170j) / (1e-170) = 1 + j: the plain formula would
        // underflow |b|² to zero.
        let r = div(c(1e-170, 1e-170), c(1e-170, 0.0));
        assert!((r.re - 1.0).abs() < 1e-15 && (r.im - 1.0).abs() < 1e-15);
        let r = div(c(1e170, 0.0), c(1e170, 1e170));
        assert!((r.re - 0.5).abs() < 1e-15 && (r.im + 0.5).abs() < 1e-15);
        assert!((abs(c(3e200, 4e200)) - 5e200).abs() < 1e186);
    }

    #[test]
    fn parallel_edge_cases() {
        assert_eq!(par(c(0.0, 0.0), c(10.0, 0.0)), c(0.0, 0.0));
        assert_eq!(par(c(f64::INFINITY, 0.0), c(10.0, 0.0)), c(10.0, 0.0));
        // j10 || -j10: parallel resonance, an open circuit
        let r = par(c(0.0, 10.0), c(0.0, -10.0));
        assert!(r.re.is_infinite() || r.im.is_infinite());
        let r = par(c(10.0, 0.0), c(10.0, 0.0));
        assert_eq!(r, c(5.0, 0.0));
    }

    // Found by the property test `parallel_over_the_whole_range`: the
    // product a·b overflowed (giving NaN) or underflowed (giving 0).
    // Expected values: a·b/(a+b) worked by hand.
    #[test]
    fn parallel_of_huge_and_tiny_values() {
        let close = |x: C64, y: C64| (x - y).norm() <= 1e-15 * y.norm();
        assert!(close(par(c(1e200, 0.0), c(1e200, 0.0)), c(5e199, 0.0)));
        assert!(close(par(c(1e-200, 0.0), c(1e-200, 0.0)), c(5e-201, 0.0)));
        // |b| ≪ |a|: the result is b to within |b/a|
        let r = par(c(2.87e-109, 0.0), c(7.09e-142, 0.0));
        assert!(close(r, c(7.09e-142, 0.0)));
        let r = par(c(1e300, 0.0), c(1.0, 1.0));
        assert!(close(r, c(1.0, 1.0)));
        // j·1e200 || j·1e200 = j·5e199
        assert!(close(par(c(0.0, 1e200), c(0.0, 1e200)), c(0.0, 5e199)));
        // commutative with two opens
        let (x, y) = (c(f64::INFINITY, 0.0), c(0.0, f64::INFINITY));
        assert_eq!(par(x, y), par(y, x));
    }

    #[test]
    fn real_paths_are_exact() {
        assert_eq!(sqrt(c(4.0, 0.0)), c(2.0, 0.0));
        assert_eq!(sqrt(c(-4.0, 0.0)), c(0.0, 2.0));
        assert_eq!(asin(c(0.5, 0.0)).im, 0.0);
        assert_eq!(pow(c(-2.0, 0.0), c(2.0, 0.0)), c(4.0, 0.0));
        assert_eq!(pow(c(2.0, 0.0), c(0.5, 0.0)), c(2f64.sqrt(), 0.0));
    }

    // Principal values (DLMF §4.2, §4.37): a negative real with a −0
    // imaginary part (what a unary minus leaves) is read on the upper side
    // of the cut. Expected values: DLMF's formulas, and Python's cmath for
    // complex(x, 0.0) (cmath.log(-1) = πj, cmath.phase(-5) = π).
    #[test]
    fn negative_reals_take_principal_values() {
        use std::f64::consts::PI;
        for z in [c(-1.0, 0.0), c(-1.0, -0.0)] {
            assert_eq!(ln(z), c(0.0, PI));
            assert_eq!(apply1(Op::Arg, z, 0), c(PI, 0.0));
            assert_eq!(sqrt(z), c(0.0, 1.0));
            assert_eq!(pow(z, c(0.5, 0.0)), c(0.0, 1.0));
        }
        // (−8)^(1/3) = 2∠60° = 1 + j√3
        let r = pow(c(-8.0, -0.0), c(1.0 / 3.0, 0.0));
        assert!((r - c(1.0, 3f64.sqrt())).norm() < 1e-15 * 2.0, "{r}");
        // (−2)^3 = −8 exactly, with a zero imaginary part
        let r = pow(c(-2.0, -0.0), c(3.0, 0.0));
        assert_eq!((r.re, r.im), (-8.0, 0.0));
        // atan2(±0, −1) = π
        assert_eq!(apply2(Op::Atan2, c(-0.0, 0.0), c(-1.0, 0.0)), c(PI, 0.0));
        // arg(0) = 0 whatever the signs of the zero parts
        assert_eq!(arg(c(-0.0, -0.0)), 0.0);
    }

    #[test]
    fn half_power_is_sqrt_bit_for_bit() {
        for x in [2.0, 3.0, 1e-300, 7.25e10, -5.0, -0.3] {
            assert_eq!(pow(c(x, 0.0), c(0.5, 0.0)), sqrt(c(x, 0.0)));
        }
        let z = c(3.0, -4.0);
        assert_eq!(pow(z, c(0.5, 0.0)), sqrt(z));
    }

    // Inverse trigonometric functions on their cuts: the values cmath gives
    // for complex(x, 0.0) and complex(0.0, y): asin(2) = π/2 + 1.3169578969248166j,
    // acos(−2) = π − 1.3169578969248166j, atan(−2j) = π/2 − 0.5493061443340549j.
    #[test]
    fn inverse_trig_on_the_cuts() {
        use std::f64::consts::{FRAC_PI_2, PI};
        let near = |a: C64, b: C64| (a - b).norm() < 1e-15 * b.norm().max(1.0);
        assert!(near(asin(c(2.0, -0.0)), c(FRAC_PI_2, 1.3169578969248166)));
        assert!(near(asin(c(-2.0, -0.0)), c(-FRAC_PI_2, 1.3169578969248166)));
        assert!(near(acos(c(2.0, -0.0)), c(0.0, -1.3169578969248166)));
        assert!(near(acos(c(-2.0, -0.0)), c(PI, -1.3169578969248166)));
        assert!(near(atan(c(-0.0, -2.0)), c(FRAC_PI_2, -0.5493061443340549)));
        assert!(near(atan(c(0.0, 2.0)), c(FRAC_PI_2, 0.5493061443340549)));
    }

    // IEEE 754 §5.11: comparisons of real numbers, -0 equal to +0, and an
    // unordered (NaN) operand — here a NaN result rather than a 0 that would
    // read as "false".
    #[test]
    fn comparisons_of_real_parts() {
        let t = c(1.0, 0.0);
        let f = c(0.0, 0.0);
        assert_eq!(compare(Op::Lt, c(1.0, 0.0), c(2.0, 0.0)), t);
        assert_eq!(compare(Op::Lt, c(2.0, 0.0), c(2.0, 0.0)), f);
        assert_eq!(compare(Op::Le, c(2.0, 0.0), c(2.0, 0.0)), t);
        assert_eq!(compare(Op::Gt, c(-0.0, 0.0), c(0.0, 0.0)), f);
        assert_eq!(compare(Op::Ge, c(-0.0, 0.0), c(0.0, 0.0)), t);
        // imaginary parts are not compared
        assert_eq!(compare(Op::Gt, c(3.0, -100.0), c(2.0, 100.0)), t);
        assert_eq!(compare(Op::Lt, c(f64::NEG_INFINITY, 0.0), c(f64::MIN, 0.0)), t);
        for op in [Op::Lt, Op::Le, Op::Gt, Op::Ge] {
            assert!(compare(op, c(f64::NAN, 0.0), t).re.is_nan());
            assert!(apply2(op, t, c(f64::NAN, 1.0)).re.is_nan());
        }
    }

    #[test]
    fn select_takes_one_branch_and_refuses_other_conditions() {
        let inf = c(f64::INFINITY, 0.0);
        let nan = c(f64::NAN, 0.0);
        assert_eq!(select(c(1.0, 0.0), c(2.0, 3.0), nan), c(2.0, 3.0));
        assert_eq!(select(c(0.0, 0.0), inf, c(4.0, -1.0)), c(4.0, -1.0));
        assert_eq!(select(c(-0.0, 0.0), inf, c(4.0, 0.0)), c(4.0, 0.0));
        for bad in [c(0.5, 0.0), c(1.0, 1e-300), c(2.0, 0.0), nan, inf, c(1.0 + 1e-15, 0.0)] {
            assert!(select(bad, c(1.0, 0.0), c(0.0, 0.0)).re.is_nan(), "{bad}");
        }
    }
}
