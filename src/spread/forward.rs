//! Forward-mode differentiation through the compiled program: every slot
//! carries, beside its value, its derivative along each direction of the
//! tolerance box (a tangent), and each instruction maps the tangents of
//! its operands to the tangent of its result by the rule of its operation.
//!
//! The parameter of a direction is real: ε for an input's magnitude
//! (x → x·(1 + ε)), θ in radians for its angle (x → x·e^{jθ}), and for a
//! zero input with an absolute band the offset along the real axis in
//! units of the band. So a tangent is the complex derivative d z / d t of
//! a slot's value z along a real t, and the rules hold for operations
//! that are not analytic as well: d|z| = Re(z̄·dz)/|z|, d arg z =
//! Im(dz/z), d re z = Re dz, d z̄ = conj dz. Analytic ones use f′(z)·dz.
//!
//! Where an operation has no derivative at the point, the symmetric one
//! (what a central difference tends to) is taken: |z| and arg z at z = 0
//! give 0. An infinite value (an open, a division by zero) stays
//! infinite around the point, so its tangent is 0. On a branch cut the
//! derivative is that of the side the value was taken on (d asin u =
//! du / cos(asin u), d u^b = u^b·b/u·du). A comparison's result is flat (0), a choice (`pick`, `Min`,
//! `Max`) carries the tangent of the operand it chose: the slope of the
//! branch taken, not the jump between branches.
//!
//! Library functions and network solves are differentiated along the
//! tangent of their arguments by a central difference of that one
//! instruction, at steps h = `FD_STEP` and h/2 with Richardson
//! extrapolation (error O(h⁴)); a cell reached through one is marked
//! differenced (`Tangents::differenced`). A program with an in-sheet search has no
//! forward mode here (the search's own inputs are not its operands):
//! [`tangents`] returns `None` and the caller takes whole-program
//! differences.

use num_complex::Complex64 as C64;

use super::sens::FD_STEP;
use super::Plan;
use crate::engine::ops::{self, Instr, Op};
use crate::engine::program::Program;
use crate::engine::tolerance::Direction;

/// The derivatives of the shown values along each direction.
#[derive(Clone, Debug)]
pub struct Tangents {
    /// The shown values at the stated inputs (a check: its three slots'
    /// margin).
    pub values: Vec<C64>,
    /// `d[c][k]`: d (shown value c) / d t along direction k.
    pub d: Vec<Vec<C64>>,
    /// Whether the way to shown value c went through a library function
    /// or network solve, whose derivative is a difference.
    pub differenced: Vec<bool>,
}

/// The seed of direction `(input, dir)`: d x / d t at the stated value.
fn seed(plan: &Plan, input: usize, dir: Direction) -> C64 {
    let i = &plan.inputs[input];
    let x = i.nominal;
    match (dir, super::sens::zero_scale(i, dir)) {
        (Direction::Angle, _) => C64::new(0.0, 1.0) * x,
        (_, Some(s)) => C64::new(s, 0.0),
        _ => x,
    }
}

/// Tangents of the shown values along `dirs` at the stated inputs; `None`
/// when the program holds an in-sheet search.
pub fn tangents(plan: &Plan, dirs: &[(usize, Direction)]) -> Option<Tangents> {
    if plan.code.iter().any(|i| matches!(i.op, Op::Search(_))) {
        return None;
    }
    let prog = &plan.prog;
    let n = prog.n_slots();
    let nd = dirs.len();
    let mut s: Vec<C64> = (0..n as u32).map(|k| plan.base.get(k, 0)).collect();
    for i in &plan.inputs {
        s[i.slot as usize] = i.nominal;
    }
    let zero = C64::new(0.0, 0.0);
    let mut t = vec![zero; n * nd];
    // Slots whose value came through a differenced instruction.
    let mut diffd = vec![false; n];
    for (k, &(input, dir)) in dirs.iter().enumerate() {
        t[plan.inputs[input].slot as usize * nd + k] = seed(plan, input, dir);
    }
    let mut ta = vec![zero; nd];
    let mut tb = vec![zero; nd];
    for ins in &plan.code {
        step(ins, prog, &mut s, &mut t, &mut diffd, nd, &mut ta, &mut tb);
    }
    let mut values = Vec::with_capacity(plan.shown.len());
    let mut d = Vec::with_capacity(plan.shown.len());
    let mut differenced = Vec::with_capacity(plan.shown.len());
    for sh in &plan.shown {
        let k = sh.series.slot as usize;
        let tan = |slot: usize| &t[slot * nd..(slot + 1) * nd];
        match sh.check {
            None => {
                values.push(s[k]);
                d.push(tan(k).to_vec());
                differenced.push(diffd[k]);
            }
            Some(tol) => {
                // margin = allowed − |lhs − rhs|, allowed = f·|rhs| or |t|.
                let (l, r, a) = (s[k], s[k + 1], s[k + 2]);
                values.push(super::checks::margin(tol, l, r, a));
                let dd: Vec<C64> = (0..nd)
                    .map(|j| {
                        let ddiff = dabs(l - r, tan(k)[j] - tan(k + 1)[j]);
                        let dallowed = match tol {
                            Some(crate::engine::model::TolSpec::Relative(f)) => f * dabs(r, tan(k + 1)[j]),
                            _ => dabs(a, tan(k + 2)[j]),
                        };
                        C64::new(dallowed - ddiff, ddiff)
                    })
                    .collect();
                d.push(dd);
                differenced.push(diffd[k] || diffd[k + 1] || diffd[k + 2]);
            }
        }
    }
    Some(Tangents { values, d, differenced })
}

/// d|z| along dz (0 at z = 0, the symmetric derivative).
pub(super) fn dabs(z: C64, dz: C64) -> f64 {
    let r = ops::abs(z);
    if r == 0.0 || !r.is_finite() {
        return 0.0;
    }
    (z.conj() * dz).re / r
}

/// d arg z along dz (0 at z = 0).
pub(super) fn darg(z: C64, dz: C64) -> f64 {
    if z.norm() == 0.0 {
        return 0.0;
    }
    (dz / z).im
}

/// Run one instruction: its value, then its tangents from the operands'
/// values and tangents taken before it ran.
#[allow(clippy::too_many_arguments)]
fn step(
    ins: &Instr,
    prog: &Program,
    s: &mut [C64],
    t: &mut [C64],
    diffd: &mut [bool],
    nd: usize,
    ta: &mut [C64],
    tb: &mut [C64],
) {
    use Op::*;
    let (ia, ib, dst) = (ins.a as usize, ins.b as usize, ins.dst as usize);
    if ins.op.uses_arg_table() {
        differenced(ins, prog, s, t, diffd, nd);
        return;
    }
    let binary = !ins.op.is_unary();
    let a = s[ia];
    ta.copy_from_slice(&t[ia * nd..(ia + 1) * nd]);
    let mut from_diff = diffd[ia];
    let b = if binary && ins.op != Select {
        tb.copy_from_slice(&t[ib * nd..(ib + 1) * nd]);
        from_diff |= diffd[ib];
        s[ib]
    } else {
        C64::new(0.0, 0.0)
    };
    crate::engine::eval::run(std::slice::from_ref(ins), prog, s);
    let w = s[dst];
    let one = C64::new(1.0, 0.0);
    let real = |x: f64| C64::new(x, 0.0);
    let out = &mut t[dst * nd..(dst + 1) * nd];
    // Rules of the form dw = f′·da (analytic, unary).
    let unary_factor = |op: Op| -> Option<C64> {
        Some(match op {
            Neg => -one,
            Recip => -(w * w),
            Sqrt => ops::div(one, 2.0 * w),
            Exp => w,
            Ln => ops::div(one, a),
            Log10 => ops::div(one, a * std::f64::consts::LN_10),
            Sin => ops::cos(a),
            Cos => -ops::sin(a),
            Tan => one + w * w,
            // 1/√(1 − a²) as cos(asin a) and sin(acos a): the root on the
            // side of the branch cut the value was taken on.
            Asin => ops::div(one, ops::cos(w)),
            Acos => -ops::div(one, ops::sin(w)),
            Atan => ops::div(one, one + a * a),
            PowI => {
                let n = ins.b as i32;
                real(n as f64) * ops::powi(a, n - 1)
            }
            _ => return None,
        })
    };
    match ins.op {
        Copy => out.copy_from_slice(ta),
        Conj => out.iter_mut().zip(ta.iter()).for_each(|(o, x)| *o = x.conj()),
        Re => out.iter_mut().zip(ta.iter()).for_each(|(o, x)| *o = real(x.re)),
        Im => out.iter_mut().zip(ta.iter()).for_each(|(o, x)| *o = real(x.im)),
        Abs => out.iter_mut().zip(ta.iter()).for_each(|(o, x)| *o = real(dabs(a, *x))),
        Arg => out.iter_mut().zip(ta.iter()).for_each(|(o, x)| *o = real(darg(a, *x))),
        op if op.is_unary() => {
            let f = unary_factor(op).unwrap_or(C64::new(f64::NAN, f64::NAN));
            out.iter_mut().zip(ta.iter()).for_each(|(o, x)| *o = mul0(f, *x));
        }
        Add => out
            .iter_mut()
            .zip(ta.iter().zip(tb.iter()))
            .for_each(|(o, (x, y))| *o = x + y),
        Sub => out
            .iter_mut()
            .zip(ta.iter().zip(tb.iter()))
            .for_each(|(o, (x, y))| *o = x - y),
        Mul => out
            .iter_mut()
            .zip(ta.iter().zip(tb.iter()))
            .for_each(|(o, (x, y))| *o = mul0(b, *x) + mul0(a, *y)),
        Div => {
            // dw = (da − w·db)/b
            out.iter_mut()
                .zip(ta.iter().zip(tb.iter()))
                .for_each(|(o, (x, y))| *o = ops::div(x - mul0(w, *y), b));
        }
        Pow => {
            // w·(b·da/a + ln a·db), on the branch w was taken on; at
            // a = 0, b·a^(b−1)·da.
            let fa = if a == C64::new(0.0, 0.0) {
                b * ops::pow(a, b - one)
            } else {
                ops::div(w * b, a)
            };
            let fb = w * ops::ln(a);
            out.iter_mut()
                .zip(ta.iter().zip(tb.iter()))
                .for_each(|(o, (x, y))| *o = mul0(fa, *x) + mul0(fb, *y));
        }
        Par => {
            // w = ab/(a + b): dw = (b²·da + a²·db)/(a + b)²; an open
            // operand leaves the other's tangent.
            let (ia_inf, ib_inf) = (is_inf(a), is_inf(b));
            let sum = a + b;
            let (fa, fb) = match (ia_inf, ib_inf) {
                (true, true) => (C64::new(0.0, 0.0), C64::new(0.0, 0.0)),
                (true, false) => (C64::new(0.0, 0.0), one),
                (false, true) => (one, C64::new(0.0, 0.0)),
                _ => {
                    let q = sum * sum;
                    (ops::div(b * b, q), ops::div(a * a, q))
                }
            };
            out.iter_mut()
                .zip(ta.iter().zip(tb.iter()))
                .for_each(|(o, (x, y))| *o = mul0(fa, *x) + mul0(fb, *y));
        }
        Polar => {
            // w = a·e^{jb}: dw = e^{jb}·da + j·w·db
            let e = ops::polar(one, b);
            let jw = C64::new(0.0, 1.0) * w;
            out.iter_mut()
                .zip(ta.iter().zip(tb.iter()))
                .for_each(|(o, (x, y))| *o = mul0(e, *x) + mul0(jw, *y));
        }
        Atan2 => {
            // atan2(y = re a, x = re b): (x·dy − y·dx)/(x² + y²); flat
            // where a part is infinite (the angle is a multiple of π/4).
            let (y, x) = (a.re, b.re);
            let r2 = x * x + y * y;
            out.iter_mut().zip(ta.iter().zip(tb.iter())).for_each(|(o, (dy, dx))| {
                *o = real(if r2 == 0.0 || r2.is_infinite() {
                    0.0
                } else {
                    (x * dy.re - y * dx.re) / r2
                })
            });
        }
        Min | Max => {
            let took_a = w.re.to_bits() == a.re.to_bits() && w.im.to_bits() == a.im.to_bits();
            out.copy_from_slice(if took_a { ta } else { tb });
        }
        Lt | Le | Gt | Ge => out.iter_mut().for_each(|o| *o = C64::new(0.0, 0.0)),
        Select => {
            // a: the condition; b, b + 1: the branches.
            let pick = if a == one {
                Some(ib)
            } else if a == C64::new(0.0, 0.0) {
                Some(ib + 1)
            } else {
                None
            };
            match pick {
                Some(k) => {
                    from_diff = diffd[k];
                    let src: Vec<C64> = t[k * nd..(k + 1) * nd].to_vec();
                    t[dst * nd..(dst + 1) * nd].copy_from_slice(&src);
                }
                None => t[dst * nd..(dst + 1) * nd]
                    .iter_mut()
                    .for_each(|o| *o = C64::new(f64::NAN, f64::NAN)),
            }
        }
        // Calls and network solves are differenced above and a search is
        // refused before any step; should one arrive here, its tangent is
        // unknown, never made up.
        _ => out.iter_mut().for_each(|o| *o = C64::new(f64::NAN, f64::NAN)),
    }
    // An infinite value (an open, a short's admittance, a division by
    // zero) stays infinite around the point: it does not move.
    if is_inf(w) {
        t[dst * nd..(dst + 1) * nd]
            .iter_mut()
            .for_each(|o| *o = C64::new(0.0, 0.0));
    }
    diffd[dst] = from_diff;
}

fn is_inf(z: C64) -> bool {
    z.re.is_infinite() || z.im.is_infinite()
}

/// f·x where a zero tangent stays zero even when f is not finite (an
/// input that does not move cannot move the result).
#[inline]
fn mul0(f: C64, x: C64) -> C64 {
    if x.re == 0.0 && x.im == 0.0 {
        C64::new(0.0, 0.0)
    } else {
        f * x
    }
}

/// The tangents of a library call or network solve: for each direction, a
/// Richardson-extrapolated central difference of the instruction alone
/// along its arguments' tangents.
fn differenced(ins: &Instr, prog: &Program, s: &mut [C64], t: &mut [C64], diffd: &mut [bool], nd: usize) {
    let base = ins.a as usize;
    let width = prog.call_args[base] as usize;
    let args: Vec<usize> = prog.call_args[base + 1..base + 1 + ins.b as usize]
        .iter()
        .map(|&a| a as usize)
        .collect();
    let dst = ins.dst as usize;
    let at: Vec<C64> = args.iter().map(|&a| s[a]).collect();
    let code = std::slice::from_ref(ins);
    // The value at the stated point.
    crate::engine::eval::run(code, prog, s);
    let w: Vec<C64> = s[dst..dst + width].to_vec();
    let eval_at = |k: usize, h: f64, s: &mut [C64]| -> Vec<C64> {
        for (&a, x) in args.iter().zip(&at) {
            s[a] = x + h * t[a * nd + k];
        }
        crate::engine::eval::run(code, prog, s);
        let r = s[dst..dst + width].to_vec();
        for (&a, x) in args.iter().zip(&at) {
            s[a] = *x;
        }
        r
    };
    let mut tan = vec![C64::new(0.0, 0.0); width * nd];
    for k in 0..nd {
        if args.iter().all(|&a| t[a * nd + k] == C64::new(0.0, 0.0)) {
            continue;
        }
        let h = FD_STEP;
        let (p1, m1) = (eval_at(k, h, s), eval_at(k, -h, s));
        let (p2, m2) = (eval_at(k, h / 2.0, s), eval_at(k, -h / 2.0, s));
        for r in 0..width {
            let d1 = (p1[r] - m1[r]) / (2.0 * h);
            let d2 = (p2[r] - m2[r]) / h;
            tan[r * nd + k] = (4.0 * d2 - d1) / 3.0;
        }
    }
    s[dst..dst + width].copy_from_slice(&w);
    let moved = args
        .iter()
        .any(|&a| t[a * nd..(a + 1) * nd].iter().any(|x| *x != C64::new(0.0, 0.0)));
    for r in 0..width {
        t[(dst + r) * nd..(dst + r + 1) * nd].copy_from_slice(&tan[r * nd..(r + 1) * nd]);
        diffd[dst + r] = moved;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spread::plan_for;

    fn plan(src: &str, shown: &[&str]) -> Plan {
        let shown: Vec<String> = shown.iter().map(|s| s.to_string()).collect();
        match plan_for(crate::sheet::Sheet::from_text("t.ohm", src), Some(&shown)) {
            Ok(p) => p,
            Err(f) => panic!("{}", f.render_plain()),
        }
    }

    // d(x²)/dε at ε = 0 with x → x(1 + ε) is 2x²; d(e^x)/dε = x·e^x.
    #[test]
    fn tangents_follow_the_chain_rule() {
        let p = plan("x = 3 within 1 %\ny = x^2\nz = exp(x)\n", &["y", "z"]);
        let t = tangents(&p, &[(0, Direction::Magnitude)]).unwrap();
        assert_eq!(t.d[0][0], C64::new(18.0, 0.0));
        assert!((t.d[1][0].re - 3.0 * 3f64.exp()).abs() < 1e-13 * 60.0);
        assert_eq!(t.differenced, vec![false; 2]);
    }

    // |V·e^{jθ}| does not move with θ; its angle moves one for one.
    #[test]
    fn the_angle_direction_turns_the_phasor() {
        let p = plan("V = 10 V ∠ 30° within 1 % angle 2°\nI = V / (3 Ω)\n", &["I"]);
        let t = tangents(&p, &[(0, Direction::Angle)]).unwrap();
        let y = t.values[0];
        assert!(dabs(y, t.d[0][0]).abs() < 1e-15);
        assert!((darg(y, t.d[0][0]) - 1.0).abs() < 1e-15);
    }
}
