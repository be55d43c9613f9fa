//! Searching one input over a range: for the value that brings an
//! expression to a target (a root), or for the largest or smallest value of
//! an expression (an extreme).
//!
//! Both start with a coarse scan of the range, so a curve with several
//! crossings or several humps is seen whole rather than mis-read by a local
//! method, then refine the one bracket the scan found with Brent's methods
//! (R. P. Brent, *Algorithms for Minimization without Derivatives*, 1973:
//! chapter 4 for zeros, chapter 5 for minima; written here from the
//! published algorithms, from memory).
//!
//! The numerics work on any `FnMut(f64) -> f64`. The second half of this
//! file is the `Search` instruction of a compiled program: the in-sheet
//! form `x = C in lo .. hi where expr = value`, which runs a sub-program
//! (the cells between the varied input and the target) many times within
//! one evaluation, without allocating.

use std::cell::RefCell;

use num_complex::Complex64 as C64;

use super::block::Block;
use super::ops::Instr;
use super::program::Program;

/// What a search looks for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Goal {
    /// The input where `expr - value` changes sign.
    Root,
    /// The input where `re(expr)` is largest.
    Max,
    /// The input where `re(expr)` is smallest.
    Min,
}

/// How hard to look.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SearchOptions {
    /// Intervals of the coarse scan (it evaluates `scan + 1` points).
    pub scan: usize,
    /// Iteration cap of the refinement.
    pub max_iter: u32,
    /// Space the scan points geometrically (and refine extremes in log x).
    pub log: bool,
}

/// Scan intervals used unless told otherwise.
pub const DEFAULT_SCAN: usize = 200;
/// Refinement iterations allowed unless told otherwise.
pub const DEFAULT_MAX_ITER: u32 = 200;
/// The most scan intervals one search may ask for.
pub const MAX_SCAN: usize = 10_000_000;

impl Default for SearchOptions {
    fn default() -> SearchOptions {
        SearchOptions {
            scan: DEFAULT_SCAN,
            max_iter: DEFAULT_MAX_ITER,
            log: false,
        }
    }
}

impl SearchOptions {
    /// Default options, with the scan spaced geometrically when both ends
    /// have one sign and span more than two decades.
    pub fn auto(lo: f64, hi: f64) -> SearchOptions {
        SearchOptions {
            log: wide_range(lo, hi),
            ..SearchOptions::default()
        }
    }
}

/// Both ends non-zero, of one sign, and more than a factor 100 apart.
pub fn wide_range(lo: f64, hi: f64) -> bool {
    lo != 0.0 && hi != 0.0 && (lo > 0.0) == (hi > 0.0) && {
        let r = (hi / lo).abs();
        !(0.01..=100.0).contains(&r)
    }
}

/// A successful search.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Found {
    /// The input value found.
    pub x: f64,
    /// For a root, the residual `expr - value` there; for an extreme, the
    /// value of the expression there.
    pub fx: f64,
    /// Iterations of the refinement (not counting the scan).
    pub iterations: u32,
    /// Evaluations in all, the scan included.
    pub evaluations: u32,
    /// An extreme found at an end of the range: the curve may go on rising
    /// (or falling) beyond it.
    pub at_edge: bool,
}

/// Why a search found nothing.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum SearchError {
    /// The ends are not finite, are equal, or (for a logarithmic scan) not
    /// both of one sign.
    BadRange,
    /// The expression never crosses the target in the range. The closest
    /// approach is given: where, and the residual there.
    NoSolution { closest_x: f64, closest_residual: f64 },
    /// The expression crosses the target more than once; `at` holds the
    /// first crossings (NaN past `count`).
    Several { count: u32, at: [f64; 3] },
    /// It changes sign only by jumping across a pole, never through zero.
    OnlyPoles { at: f64 },
    /// Every point of the scan was NaN or infinite.
    Undefined,
    /// The refinement hit its iteration cap.
    NotConverged { x: f64, iterations: u32 },
}

impl SearchError {
    /// A numeric code (1…) for storing the error in a program slot.
    pub fn code(&self) -> u32 {
        match self {
            SearchError::BadRange => 1,
            SearchError::NoSolution { .. } => 2,
            SearchError::Several { .. } => 3,
            SearchError::OnlyPoles { .. } => 4,
            SearchError::Undefined => 5,
            SearchError::NotConverged { .. } => 6,
        }
    }
}

/// The `i`th of `n + 1` points from `lo` to `hi` (both ends exact).
pub fn grid_point(lo: f64, hi: f64, i: usize, n: usize, log: bool) -> f64 {
    if n == 0 || i == 0 {
        return lo;
    }
    if i >= n {
        return hi;
    }
    let t = i as f64 / n as f64;
    if log {
        // lo·(hi/lo)^t lands exactly on round values (100·100^0.5 = 1000).
        lo * (hi / lo).powf(t)
    } else {
        lo + (hi - lo) * t
    }
}

fn range_ok(lo: f64, hi: f64, log: bool) -> bool {
    lo.is_finite() && hi.is_finite() && lo != hi && (!log || (lo != 0.0 && hi != 0.0 && (lo > 0.0) == (hi > 0.0)))
}

/// Most brackets refined one by one before a crossing count is taken as
/// "several" without looking closer.
const MAX_BRACKETS: usize = 16;

/// The input in `lo ..= hi` where `f` crosses zero. `f` is typically
/// `re(expr) - target`.
pub fn find_root(mut f: impl FnMut(f64) -> f64, lo: f64, hi: f64, o: &SearchOptions) -> Result<Found, SearchError> {
    if !range_ok(lo, hi, o.log) {
        return Err(SearchError::BadRange);
    }
    let n = o.scan.clamp(2, MAX_SCAN);
    let mut evals = 0u32;
    let mut brackets = [(0.0f64, 0.0f64, 0.0f64, 0.0f64); MAX_BRACKETS];
    let mut nb = 0usize;
    let mut extra = 0u32; // brackets past MAX_BRACKETS
    let mut prev: Option<(f64, f64)> = None;
    let mut closest = (f64::NAN, f64::INFINITY);
    for i in 0..=n {
        let x = grid_point(lo, hi, i, n, o.log);
        let g = f(x);
        evals += 1;
        if !g.is_finite() {
            // Do not bracket across an undefined point.
            prev = None;
            continue;
        }
        if g.abs() < closest.1 {
            closest = (x, g.abs());
        }
        if let Some((px, pg)) = prev {
            let crossing = (pg != 0.0 && g != 0.0 && (pg < 0.0) != (g < 0.0)) || g == 0.0;
            if crossing {
                if nb < MAX_BRACKETS {
                    brackets[nb] = if g == 0.0 { (x, x, 0.0, 0.0) } else { (px, x, pg, g) };
                    nb += 1;
                } else {
                    extra += 1;
                }
            }
        } else if g == 0.0 {
            if nb < MAX_BRACKETS {
                brackets[nb] = (x, x, 0.0, 0.0);
                nb += 1;
            } else {
                extra += 1;
            }
        }
        prev = Some((x, g));
    }
    if closest.0.is_nan() {
        return Err(SearchError::Undefined);
    }
    if nb == 0 {
        return Err(SearchError::NoSolution {
            closest_x: closest.0,
            closest_residual: closest.1,
        });
    }
    let scale = lo.abs().max(hi.abs());
    let mut roots = [(0.0f64, 0.0f64, 0u32); MAX_BRACKETS];
    let mut nr = 0usize;
    let mut pole = f64::NAN;
    let mut capped: Option<(f64, u32)> = None;
    for &(a, b, fa, fb) in &brackets[..nb] {
        if a == b {
            roots[nr] = (a, 0.0, 0);
            nr += 1;
            continue;
        }
        let (x, fx, it, ok) = brent_zero(&mut f, a, b, fa, fb, o.max_iter, 4.0 * f64::EPSILON * scale);
        evals += it;
        if !ok {
            capped = Some((x, it));
            continue;
        }
        // A sign change across a pole ends with |f| as large as at the
        // bracket's ends or larger; a true root with a residual many
        // orders below them.
        if fx.is_finite() && fx.abs() <= 1e-3 * fa.abs().max(fb.abs()) {
            roots[nr] = (x, fx, it);
            nr += 1;
        } else if pole.is_nan() {
            pole = x;
        }
    }
    let count = nr as u32 + extra;
    match count {
        1 => {
            let (x, fx, it) = roots[0];
            Ok(Found {
                x,
                fx,
                iterations: it,
                evaluations: evals,
                at_edge: false,
            })
        }
        0 => match capped {
            Some((x, iterations)) => Err(SearchError::NotConverged { x, iterations }),
            None if !pole.is_nan() => Err(SearchError::OnlyPoles { at: pole }),
            None => Err(SearchError::NoSolution {
                closest_x: closest.0,
                closest_residual: closest.1,
            }),
        },
        _ => {
            let mut at = [f64::NAN; 3];
            for (k, r) in roots[..nr.min(3)].iter().enumerate() {
                at[k] = r.0;
            }
            Err(SearchError::Several { count, at })
        }
    }
}

/// Brent's zero finder on a bracket `a, b` with `f(a)`, `f(b)` of opposite
/// signs. Returns the point, `f` there, the iterations, and whether it
/// converged within `max_iter`.
fn brent_zero(
    f: &mut impl FnMut(f64) -> f64,
    mut a: f64,
    mut b: f64,
    mut fa: f64,
    mut fb: f64,
    max_iter: u32,
    t: f64,
) -> (f64, f64, u32, bool) {
    let eps = f64::EPSILON;
    let mut c = a;
    let mut fc = fa;
    let mut d = b - a;
    let mut e = d;
    let mut iter = 0u32;
    loop {
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol = 2.0 * eps * b.abs() + t;
        let m = 0.5 * (c - b);
        if m.abs() <= tol || fb == 0.0 {
            return (b, fb, iter, true);
        }
        if iter >= max_iter {
            return (b, fb, iter, false);
        }
        if e.abs() < tol || fa.abs() <= fb.abs() {
            d = m;
            e = m;
        } else {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * m * s;
                q = 1.0 - s;
            } else {
                let qq = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * m * qq * (qq - r) - (b - a) * (r - 1.0));
                q = (qq - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            } else {
                p = -p;
            }
            let s = e;
            e = d;
            if 2.0 * p < 3.0 * m * q - (tol * q).abs() && p < (0.5 * s * q).abs() {
                d = p / q;
            } else {
                d = m;
                e = m;
            }
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol {
            d
        } else if m > 0.0 {
            tol
        } else {
            -tol
        };
        fb = f(b);
        iter += 1;
        if (fb > 0.0) == (fc > 0.0) {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
    }
}

/// The input in `lo ..= hi` where `f` is largest (`maximize`) or smallest.
pub fn find_extreme(
    mut f: impl FnMut(f64) -> f64,
    lo: f64,
    hi: f64,
    maximize: bool,
    o: &SearchOptions,
) -> Result<Found, SearchError> {
    if !range_ok(lo, hi, o.log) {
        return Err(SearchError::BadRange);
    }
    let n = o.scan.clamp(2, MAX_SCAN);
    // Work on g = ∓f so that the task is always a minimum.
    let sign = if maximize { -1.0 } else { 1.0 };
    let mut evals = 0u32;
    let mut best: Option<(usize, f64)> = None;
    for i in 0..=n {
        let g = sign * f(grid_point(lo, hi, i, n, o.log));
        evals += 1;
        if g.is_nan() {
            continue;
        }
        if best.is_none_or(|(_, bg)| g < bg) {
            best = Some((i, g));
        }
    }
    let Some((k, gk)) = best else {
        return Err(SearchError::Undefined);
    };
    let xk = grid_point(lo, hi, k, n, o.log);
    if gk.is_infinite() {
        // An unbounded value (a resonance with no loss): the scan point is
        // the answer, there is nothing to refine.
        return Ok(Found {
            x: xk,
            fx: sign * gk,
            iterations: 0,
            evaluations: evals,
            at_edge: k == 0 || k == n,
        });
    }
    let a = grid_point(lo, hi, k.saturating_sub(1), n, o.log);
    let b = grid_point(lo, hi, (k + 1).min(n), n, o.log);
    // Refine in log x for a logarithmic range: a peak a decade wide is
    // then as easy to pin down at 10 Hz as at 1 MHz.
    let (ua, ub, to_x): (f64, f64, fn(f64, f64) -> f64) = if o.log {
        let s = if lo < 0.0 { -1.0 } else { 1.0 };
        ((a * s).ln(), (b * s).ln(), |u, s| s * u.exp())
    } else {
        (a, b, |u, _| u)
    };
    let s = if lo < 0.0 { -1.0 } else { 1.0 };
    let (ulo, uhi) = (ua.min(ub), ua.max(ub));
    let mut g = |u: f64| {
        let v = sign * f(to_x(u, s));
        if v.is_nan() {
            f64::INFINITY
        } else {
            v
        }
    };
    let (u, gu, it, ok) = brent_min(&mut g, ulo, uhi, o.max_iter);
    evals += it + 1;
    if !ok {
        return Err(SearchError::NotConverged {
            x: to_x(u, s),
            iterations: it,
        });
    }
    let (x, gx) = if gu <= gk { (to_x(u, s), gu) } else { (xk, gk) };
    let width = (hi - lo).abs();
    let at_edge = (x - lo).abs() <= 1e-6 * width || (x - hi).abs() <= 1e-6 * width;
    Ok(Found {
        x,
        fx: sign * gx,
        iterations: it,
        evaluations: evals,
        at_edge,
    })
}

/// Brent's minimizer on `[a, b]`: golden-section steps with parabolic
/// interpolation. Returns the point, `f` there, the iterations, and whether
/// it converged within `max_iter`.
fn brent_min(f: &mut impl FnMut(f64) -> f64, mut a: f64, mut b: f64, max_iter: u32) -> (f64, f64, u32, bool) {
    let c = 0.5 * (3.0 - 5f64.sqrt());
    let eps = f64::EPSILON.sqrt();
    let t = 1e-300;
    let mut x = a + c * (b - a);
    let (mut v, mut w) = (x, x);
    let mut fx = f(x);
    let (mut fv, mut fw) = (fx, fx);
    let mut d = 0.0f64;
    let mut e = 0.0f64;
    let mut iter = 0u32;
    loop {
        let m = 0.5 * (a + b);
        let tol = eps * x.abs() + t;
        let t2 = 2.0 * tol;
        if (x - m).abs() <= t2 - 0.5 * (b - a) {
            return (x, fx, iter, true);
        }
        if iter >= max_iter {
            return (x, fx, iter, false);
        }
        let (mut p, mut q, mut r) = (0.0f64, 0.0f64, 0.0f64);
        if e.abs() > tol {
            r = (x - w) * (fx - fv);
            q = (x - v) * (fx - fw);
            p = (x - v) * q - (x - w) * r;
            q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            } else {
                q = -q;
            }
            r = e;
            e = d;
        }
        if p.abs() < (0.5 * q * r).abs() && p > q * (a - x) && p < q * (b - x) {
            d = p / q;
            let u = x + d;
            if (u - a) < t2 || (b - u) < t2 {
                d = if x < m { tol } else { -tol };
            }
        } else {
            e = if x < m { b - x } else { a - x };
            d = c * e;
        }
        let u = x + if d.abs() >= tol {
            d
        } else if d > 0.0 {
            tol
        } else {
            -tol
        };
        let fu = f(u);
        iter += 1;
        if fu <= fx {
            if u < x {
                b = x;
            } else {
                a = x;
            }
            v = w;
            fv = fw;
            w = x;
            fw = fx;
            x = u;
            fx = fu;
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                v = w;
                fv = fw;
                w = u;
                fw = fu;
            } else if fu <= fv || v == x || v == w {
                v = u;
                fv = fu;
            }
        }
    }
}

// ---- the Search instruction ----

/// One in-sheet search, run by the instruction `Op::Search(index)`.
///
/// Evaluating it sets the input slot to trial values and runs `code` (the
/// cells between the input and the target, then the target expression),
/// reading the target from slot `target`. The slots the code writes are
/// saved first (to `save_base ..`) and restored after, so the sheet's own
/// values are untouched.
#[derive(Clone, Debug, PartialEq)]
pub struct Search {
    pub goal: Goal,
    /// The cell holding the result (for messages).
    pub cell: u32,
    /// The varied input's slot.
    pub input: u32,
    /// Slots holding the range ends and (for a root) the target value.
    pub lo: u32,
    pub hi: u32,
    pub value: u32,
    /// Slot the code leaves the target expression in.
    pub target: u32,
    pub code: Vec<Instr>,
    /// Slots the code writes that belong to cells, saved and restored.
    pub saves: Vec<u32>,
    /// First of `saves.len()` slots the saved values are kept in.
    pub save_base: u32,
    /// First of `INFO_WIDTH` slots describing the outcome (see `Outcome`).
    pub info: u32,
}

/// Slots of outcome information after each search.
pub const INFO_WIDTH: u32 = 6;

/// The outcome of an in-sheet search, as read back from its info slots.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Outcome {
    Found(Found),
    Failed(SearchError),
}

/// Run search `k` of `prog` over scalar slots; the result goes to `dst`.
pub fn exec_scalar(k: usize, dst: u32, prog: &Program, s: &mut [C64]) {
    let sr = &prog.searches[k];
    let lo = s[sr.lo as usize].re;
    let hi = s[sr.hi as usize].re;
    let goal_value = s[sr.value as usize].re;
    for (j, &slot) in sr.saves.iter().enumerate() {
        s[sr.save_base as usize + j] = s[slot as usize];
    }
    let (a, b) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    let opts = SearchOptions::auto(a, b);
    let result = {
        let mut f = |x: f64| {
            s[sr.input as usize] = C64::new(x, 0.0);
            super::eval::run(&sr.code, prog, s);
            s[sr.target as usize].re
        };
        match sr.goal {
            Goal::Root => find_root(|x| f(x) - goal_value, a, b, &opts),
            Goal::Max => find_extreme(f, a, b, true, &opts),
            Goal::Min => find_extreme(f, a, b, false, &opts),
        }
    };
    for (j, &slot) in sr.saves.iter().enumerate() {
        s[slot as usize] = s[sr.save_base as usize + j];
    }
    let info = sr.info as usize;
    let r = |x: f64| C64::new(x, 0.0);
    let nan = f64::NAN;
    let (value, fields) = match result {
        Ok(fd) => (
            fd.x,
            [
                0.0,
                fd.iterations as f64,
                fd.fx,
                fd.evaluations as f64,
                fd.at_edge as u8 as f64,
                fd.x,
            ],
        ),
        Err(e) => {
            let c = e.code() as f64;
            let f = match e {
                SearchError::BadRange | SearchError::Undefined => [c, 0.0, nan, nan, nan, nan],
                SearchError::NoSolution {
                    closest_x,
                    closest_residual,
                } => [c, 0.0, closest_residual, closest_x, nan, nan],
                SearchError::Several { count, at } => [c, count as f64, at[0], at[1], at[2], nan],
                SearchError::OnlyPoles { at } => [c, 0.0, at, nan, nan, nan],
                SearchError::NotConverged { x, iterations } => [c, iterations as f64, x, nan, nan, nan],
            };
            (nan, f)
        }
    };
    for (j, v) in fields.iter().enumerate() {
        s[info + j] = r(*v);
    }
    s[dst as usize] = r(value);
}

/// Read back the outcome of search `k` from evaluated slots.
pub fn outcome(prog: &Program, k: usize, s: &[C64]) -> Outcome {
    let i = prog.searches[k].info as usize;
    let f: Vec<f64> = s[i..i + INFO_WIDTH as usize].iter().map(|z| z.re).collect();
    match f[0] as u32 {
        0 => Outcome::Found(Found {
            x: f[5],
            fx: f[2],
            iterations: f[1] as u32,
            evaluations: f[3] as u32,
            at_edge: f[4] != 0.0,
        }),
        1 => Outcome::Failed(SearchError::BadRange),
        2 => Outcome::Failed(SearchError::NoSolution {
            closest_x: f[3],
            closest_residual: f[2],
        }),
        3 => Outcome::Failed(SearchError::Several {
            count: f[1] as u32,
            at: [f[2], f[3], f[4]],
        }),
        4 => Outcome::Failed(SearchError::OnlyPoles { at: f[2] }),
        6 => Outcome::Failed(SearchError::NotConverged {
            x: f[2],
            iterations: f[1] as u32,
        }),
        _ => Outcome::Failed(SearchError::Undefined),
    }
}

thread_local! {
    static LANE: RefCell<Vec<C64>> = const { RefCell::new(Vec::new()) };
}

/// Run search `k` in every lane of a block: each lane is copied out to a
/// scratch slot array (kept per thread, so nothing is allocated after the
/// first use), searched with the scalar path, and its results copied back.
pub fn exec_block(k: usize, dst: u32, prog: &Program, block: &mut Block) {
    LANE.with(|lane| {
        let mut lane = lane.borrow_mut();
        let n = block.n_slots();
        if lane.len() < n {
            lane.resize(n, C64::new(0.0, 0.0));
        }
        let info = prog.searches[k].info;
        for l in 0..super::block::LANES {
            for (slot, v) in lane[..n].iter_mut().enumerate() {
                *v = block.get(slot as u32, l);
            }
            exec_scalar(k, dst, prog, &mut lane[..n]);
            block.set(dst, l, lane[dst as usize]);
            for j in 0..INFO_WIDTH {
                block.set(info + j, l, lane[(info + j) as usize]);
            }
        }
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn grid_ends_are_exact() {
        assert_eq!(grid_point(10.0, 1e6, 0, 5, true), 10.0);
        assert_eq!(grid_point(10.0, 1e6, 5, 5, true), 1e6);
        assert!((grid_point(10.0, 1e6, 1, 5, true) - 100.0).abs() < 1e-9);
        assert_eq!(grid_point(0.0, 2.0, 1, 4, false), 0.5);
    }

    #[test]
    fn root_of_a_polynomial() {
        // x² = 2 on [0, 3]: √2.
        let r = find_root(|x| x * x - 2.0, 0.0, 3.0, &SearchOptions::default()).unwrap();
        assert!((r.x - 2f64.sqrt()).abs() < 1e-14, "{r:?}");
        assert!(r.iterations < 20);
    }

    #[test]
    fn several_roots_are_refused_with_their_places() {
        // sin x on [1, 10] crosses zero at π, 2π and 3π.
        let e = find_root(f64::sin, 1.0, 10.0, &SearchOptions::default()).unwrap_err();
        match e {
            SearchError::Several { count, at } => {
                assert_eq!(count, 3);
                assert!((at[0] - std::f64::consts::PI).abs() < 1e-12);
            }
            e => panic!("{e:?}"),
        }
    }

    #[test]
    fn no_root_reports_the_closest_approach() {
        let e = find_root(|x| x * x + 1.0, -1.0, 2.0, &SearchOptions::default()).unwrap_err();
        match e {
            SearchError::NoSolution {
                closest_x,
                closest_residual,
            } => {
                assert!(closest_x.abs() < 0.02);
                assert!((closest_residual - 1.0).abs() < 1e-3);
            }
            e => panic!("{e:?}"),
        }
    }

    #[test]
    fn a_pole_is_not_a_root() {
        // 1/(x - 1) changes sign at 1 by jumping, never through zero.
        let e = find_root(|x| 1.0 / (x - 1.0 - 1e-7), 0.0, 3.0, &SearchOptions::default()).unwrap_err();
        assert!(matches!(e, SearchError::OnlyPoles { .. }), "{e:?}");
    }

    #[test]
    fn extreme_picks_the_highest_hump() {
        // Two humps: a low one at x = 1 and a higher one at x = 4.
        let f = |x: f64| (-10.0 * (x - 1.0).powi(2)).exp() + 2.0 * (-10.0 * (x - 4.0).powi(2)).exp();
        let r = find_extreme(f, 0.0, 6.0, true, &SearchOptions::default()).unwrap();
        assert!((r.x - 4.0).abs() < 1e-6, "{r:?}");
        let m = find_extreme(|x| (x - 0.3).powi(2), 0.0, 1.0, false, &SearchOptions::default()).unwrap();
        assert!((m.x - 0.3).abs() < 1e-7 && !m.at_edge);
        // A monotonic curve peaks at the end of the range, and says so.
        let e = find_extreme(|x| x, 0.0, 1.0, true, &SearchOptions::default()).unwrap();
        assert!(e.at_edge && (e.x - 1.0).abs() < 1e-6);
    }

    #[test]
    fn log_scan_finds_a_narrow_peak() {
        // A resonance 1/|1 - (f/f0)² + j f/(Q f0)| at f0 = 1234 Hz, Q = 50.
        let f0 = 1234.0;
        let q = 50.0;
        let h = |f: f64| {
            let u = f / f0;
            1.0 / ((1.0 - u * u).powi(2) + (u / q).powi(2)).sqrt()
        };
        let o = SearchOptions::auto(10.0, 1e6);
        assert!(o.log);
        let r = find_extreme(h, 10.0, 1e6, true, &o).unwrap();
        // The peak of |H| is at f0·√(1 - 1/(2Q²)).
        let want = f0 * (1.0 - 1.0 / (2.0 * q * q)).sqrt();
        assert!((r.x - want).abs() / want < 1e-7, "{} vs {want}", r.x);
    }
}
