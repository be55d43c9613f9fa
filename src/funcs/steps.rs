//! Steps, standard sizes and a two-way choice: rounding a value to a step
//! that keeps its unit (a bank rounded up to the next 50 kvar), picking
//! the next size from a list of standard sizes (kvar or kVA ratings), and
//! `pick(cond, a, b)`.
//!
//! Conventions:
//! - The value, the step and the sizes share one dimension and kind: a
//!   step in kW for a value in kvar, or a size in pu for a value in kVA,
//!   is refused while compiling.
//! - A value within 1e-9 (relative) of a whole number of steps, or of a
//!   size, counts as on it, so a computed 149.999 999 999 99 kvar rounds
//!   up to 150 kvar, not 200.
//! - Up is towards +∞ and down towards −∞ (`round_up(-120 kvar, 50 kvar)`
//!   is −100 kvar); `round` takes the nearer step, halves away from zero.
//! - A step that is not a positive real number, a value with an imaginary
//!   part, a value beyond every size in the list, or a condition that is
//!   not exactly 0 or 1 gives NaN, which the run reports at the cell with
//!   the reason.

use super::*;
use crate::engine::ops::Op;
use crate::units::kind::kind_of_sum;

/// Within this relative distance a value counts as on a step or a size.
const ON: f64 = 1e-9;

/// Argument `j` must be of the same dimension and kind as argument `i`
/// (W, var and VA apart; Hz and rad/s apart; per-unit and SI apart;
/// angles and plain numbers apart). Returns the kind they share.
pub fn want_like(q: &[Quantity], i: usize, j: usize, pi: &str, pj: &str) -> Result<Kind, ArgError> {
    let (a, b) = (q[i], q[j]);
    let msg = |why: &str| {
        ArgError::at(
            j,
            format!(
                "`{pj}` must be of the same kind as `{pi}`: `{pi}` is {}, this is {}{why}",
                a.describe(),
                b.describe()
            ),
        )
    };
    if a.dim != b.dim {
        return Err(msg(""));
    }
    if a.kind == b.kind {
        return Ok(a.kind);
    }
    if a.dim == Dim::POWER {
        return Err(msg("; write both as W, both as var or both as VA"));
    }
    if (a.kind == Kind::PerUnit) != (b.kind == Kind::PerUnit) {
        return Err(msg("; give both in per-unit or both with units"));
    }
    kind_of_sum(a.kind, b.kind, a.dim).map_err(|m| msg(&format!("; {}", m.message)))
}

fn is_real(z: C64) -> bool {
    z.im == 0.0 && !z.re.is_nan()
}

/// A real number > 0 (not NaN).
fn pos_real(x: C64) -> bool {
    x.im == 0.0 && x.re > 0.0
}

fn nan() -> C64 {
    C64::new(f64::NAN, f64::NAN)
}

// ---- rounding to a step ----

const STEP: &[Param] = &[p!("x", "any"), p!("step", "as x")];

fn ty_step(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let k = want_like(q, 0, 1, "x", "step")?;
    scalar(q[0].dim, k)
}

/// x/step as a whole number of steps, by `how`, with values within `ON`
/// of a whole number taken as on it.
fn steps(a: &[C64], out: &mut [C64], how: fn(f64) -> f64) {
    let (x, step) = (a[0], a[1]);
    if !is_real(x) || !is_real(step) || step.re <= 0.0 || step.re.is_infinite() {
        out[0] = nan();
        return;
    }
    if x.re.is_infinite() {
        out[0] = x;
        return;
    }
    let q = x.re / step.re;
    let near = q.round();
    let n = if (q - near).abs() <= ON * q.abs().max(1.0) {
        near
    } else {
        how(q)
    };
    out[0] = C64::new(n * step.re, 0.0);
}

fn s_round(a: &[C64], out: &mut [C64], _: &Ctx) {
    steps(a, out, f64::round)
}
fn s_round_up(a: &[C64], out: &mut [C64], _: &Ctx) {
    steps(a, out, f64::ceil)
}
fn s_round_down(a: &[C64], out: &mut [C64], _: &Ctx) {
    steps(a, out, f64::floor)
}

fn real_x(x: C64, name: &str) -> Option<ArgError> {
    if x.re.is_nan() || x.im.is_nan() {
        Some(ArgError::at(0, format!("`{name}` is NaN")))
    } else if x.im != 0.0 {
        Some(ArgError::at(
            0,
            format!("`{name}` must be a real value, not a complex one; take re(…) or abs(…) first"),
        ))
    } else {
        None
    }
}

fn dom_step(a: &[C64], _: &Ctx) -> Option<ArgError> {
    let step = a[1];
    if !pos_real(step) || step.re.is_infinite() {
        return Some(ArgError::at(1, "`step` must be a real value greater than 0 and finite"));
    }
    real_x(a[0], "x")
}

// ---- the next standard size ----

const SIZES: &[Param] = &[p!("x", "any"), p!("size", "as x")];

fn ty_sizes(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let mut k = q[0].kind;
    for j in 1..q.len() {
        k = want_like(q, 0, j, "x", "size")?;
    }
    scalar(q[0].dim, k)
}

/// The smallest size at or above x (`up`), or the largest at or below,
/// lowered to instructions: each size that fits stays, each that does not
/// becomes ±∞, and the least (greatest) is taken. No size fitting, or an
/// imaginary part in x or a size, gives NaN.
fn lower_sizes(e: &mut Emitter, a: &[Operand], up: bool) -> Operand {
    let nan = e.konst(f64::NAN, f64::NAN);
    let x = e.un(Op::Re, a[0]);
    let ax = e.un(Op::Abs, x);
    let on = e.konst(ON, 0.0);
    let tol = e.bin(Op::Mul, ax, on);
    // up: s ≥ x − tol; down: s ≤ x + tol
    let thr = e.bin(if up { Op::Sub } else { Op::Add }, x, tol);
    let none = e.konst(if up { f64::INFINITY } else { f64::NEG_INFINITY }, 0.0);
    let mut best = none;
    let mut imag = e.un(Op::Im, a[0]);
    imag = e.un(Op::Abs, imag);
    for &s in &a[1..] {
        let fits = e.bin(if up { Op::Ge } else { Op::Le }, s, thr);
        let sr = e.un(Op::Re, s);
        let cand = e.select(fits, sr, none);
        best = e.bin(if up { Op::Min } else { Op::Max }, best, cand);
        let si = e.un(Op::Im, s);
        let si = e.un(Op::Abs, si);
        imag = e.bin(Op::Add, imag, si);
    }
    let zero = e.konst(0.0, 0.0);
    let real = e.bin(Op::Le, imag, zero);
    let inf = e.konst(f64::INFINITY, 0.0);
    let ab = e.un(Op::Abs, best);
    let found = e.bin(Op::Lt, ab, inf);
    let r = e.select(found, best, nan);
    e.select(real, r, nan)
}

fn l_size_up(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![lower_sizes(e, a, true)]
}
fn l_size_down(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![lower_sizes(e, a, false)]
}

fn dom_sizes(a: &[C64], up: bool) -> Option<ArgError> {
    if let Some(e) = real_x(a[0], "x") {
        return Some(e);
    }
    if let Some(k) = a[1..].iter().position(|s| !is_real(*s)) {
        return Some(ArgError::at(k + 1, "a size must be a real value"));
    }
    // the size at the end of the list the value is beyond
    let sizes = a[1..].iter().enumerate();
    let (bound, word, remedy) = if up {
        let k = sizes.max_by(|x, y| x.1.re.total_cmp(&y.1.re)).map_or(0, |x| x.0);
        (
            k,
            "above the largest",
            "add a larger size to the list, or split the load",
        )
    } else {
        let k = sizes.min_by(|x, y| x.1.re.total_cmp(&y.1.re)).map_or(0, |x| x.0);
        (k, "below the smallest", "add a smaller size to the list")
    };
    Some(ArgError::at(
        0,
        format!("`x` is {word} size listed, {}; {remedy}", ArgError::value(bound + 1)),
    ))
}

fn dom_size_up(a: &[C64], _: &Ctx) -> Option<ArgError> {
    dom_sizes(a, true)
}
fn dom_size_down(a: &[C64], _: &Ctx) -> Option<ArgError> {
    dom_sizes(a, false)
}

// ---- a two-way choice ----

fn ty_pick(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_plain(q, 0, "cond", "1 or 0, as a comparison such as `I > 100 A` gives")?;
    let k = want_like(q, 1, 2, "a", "b")?;
    scalar(q[1].dim, k)
}

fn l_pick(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    vec![e.select(a[0], a[1], a[2])]
}

fn dom_pick(a: &[C64], _: &Ctx) -> Option<ArgError> {
    let c = a[0];
    if (c.re == 1.0 || c.re == 0.0) && c.im == 0.0 {
        None
    } else {
        Some(ArgError::at(0, "`cond` must be exactly 1 or 0 (as a comparison gives)"))
    }
}

pub fn funcs() -> Vec<Builtin> {
    let src_round =
        "common practice: rounding to a step of standard ratings (IEEE Std 18 lists capacitor units in steps, from memory)";
    vec![
        scalar_fn(
            "round",
            "x to the nearest whole number of steps (halves away from zero), in x's unit",
            STEP,
            "as x",
            ty_step,
            s_round,
        )
        .with_domain(dom_step)
        .with_source(src_round),
        scalar_fn(
            "round_up",
            "x up (towards +∞) to a whole number of steps: round_up(412 kvar, 50 kvar) is 450 kvar",
            STEP,
            "as x",
            ty_step,
            s_round_up,
        )
        .with_domain(dom_step)
        .with_source(src_round),
        scalar_fn(
            "round_down",
            "x down (towards −∞) to a whole number of steps",
            STEP,
            "as x",
            ty_step,
            s_round_down,
        )
        .with_domain(dom_step)
        .with_source(src_round),
        Builtin {
            variadic: true,
            ..lowered(
                "size_up",
                "the smallest of the listed sizes at or above x (NaN if x is above them all)",
                SIZES,
                "as x",
                ty_sizes,
                l_size_up,
            )
        }
        .with_domain(dom_size_up)
        .with_source(
            "common practice: choose the next standard rating up (the size lists of IEEE Std C57.12.00 for kVA and IEC 60831 for kvar, from memory)",
        ),
        Builtin {
            variadic: true,
            ..lowered(
                "size_down",
                "the largest of the listed sizes at or below x (NaN if x is below them all)",
                SIZES,
                "as x",
                ty_sizes,
                l_size_down,
            )
        }
        .with_domain(dom_size_down)
        .with_source("common practice: choose the next standard rating down"),
        lowered(
            "pick",
            "a where cond is 1, b where it is 0 (cond from a comparison); a and b of one kind",
            &[p!("cond", "1"), p!("a", "any"), p!("b", "as a")],
            "as a",
            ty_pick,
            l_pick,
        )
        .with_domain(dom_pick)
        .with_source("common practice: a two-way choice, evaluated case by case; only the branch taken reaches the result"),
    ]
}
