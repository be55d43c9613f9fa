//! Worst case: the smallest and largest measure of each shown cell over
//! the tolerance box, and the point that gives each.
//!
//! The method (docs/tolerances.md):
//! 1. **Corners.** With at most `MAX_CORNERS` corners (each continuous
//!    direction at either end of its band, each choice at each listed
//!    value), every corner is evaluated. Beyond that, for each cell and
//!    each extreme, the corner the sensitivities point to (each direction
//!    at the end that moves the measure the wanted way, each choice at its
//!    best value alone), then single changes of one direction at a time
//!    while any improves (a local search over corners).
//! 2. **Inside the box.** From the best corner found, a coordinate search:
//!    each continuous direction in turn is scanned at `SCAN` points across
//!    its band with the others held, the best bracket refined by golden
//!    section, until a round improves nothing (at most `ROUNDS` rounds).
//!    An extreme inside the box (a resonance, a maximum of power transfer)
//!    is so found as well as one at a corner.
//!
//! Normal inputs are bounded by their stated band (±Kσ).

use num_complex::Complex64 as C64;
use rayon::prelude::*;

use super::{Measure, Plan, Point};
use crate::engine::tolerance::Direction;

/// Evaluate every corner up to this many.
pub const MAX_CORNERS: usize = 4096;
/// Points of each scan along one direction.
const SCAN: usize = 9;
/// Golden-section steps refining a scan's best bracket.
const GOLDEN: usize = 30;
/// Rounds of the coordinate search.
const ROUNDS: usize = 6;

#[derive(Clone, Debug, PartialEq)]
pub enum Method {
    /// Every corner (this many), then the search inside.
    AllCorners(usize),
    /// Corners chosen by the sensitivities and a local search among
    /// corners, then the search inside (this many corners in the box).
    GuidedCorners(f64),
}

/// One extreme of one cell.
#[derive(Clone, Debug, PartialEq)]
pub struct Extreme {
    /// The measure there (coherent SI units).
    pub value: f64,
    /// The cell's value there.
    pub z: C64,
    /// The point: one offset (or index) per `Plan::dims`.
    pub point: Point,
    /// Each input's value there.
    pub inputs: Vec<C64>,
    /// Every continuous direction at an end of its band.
    pub at_corner: bool,
}

#[derive(Clone, Debug, PartialEq)]
pub struct WorstCell {
    pub name: String,
    pub measure: Measure,
    pub nominal: f64,
    pub min: Extreme,
    pub max: Extreme,
}

#[derive(Clone, Debug, PartialEq)]
pub struct WorstResult {
    pub method: Method,
    /// Points evaluated in all.
    pub evaluations: usize,
    pub cells: Vec<WorstCell>,
}

/// The levels of a direction at the corners.
fn levels(plan: &Plan, d: usize) -> Vec<f64> {
    let dim = &plan.dims[d];
    match dim.dir {
        Direction::Choice => (0..=dim.hi as usize).map(|i| i as f64).collect(),
        _ if dim.lo == dim.hi => vec![dim.lo],
        _ => vec![dim.lo, dim.hi],
    }
}

/// Corners of the box in the mixed radix of `levels`.
fn corner(lv: &[Vec<f64>], mut i: usize) -> Point {
    lv.iter()
        .map(|l| {
            let x = l[i % l.len()];
            i /= l.len();
            x
        })
        .collect()
}

pub fn worst_case(plan: &Plan) -> WorstResult {
    let lv: Vec<Vec<f64>> = (0..plan.dims.len()).map(|d| levels(plan, d)).collect();
    let count = lv.iter().try_fold(1usize, |n, l| n.checked_mul(l.len()));
    let k = plan.shown.len();
    let mut evaluations = 0usize;
    // Per cell: the best corner for the minimum and for the maximum.
    let mut start: Vec<[(f64, Point); 2]> = Vec::with_capacity(k);
    let method;
    match count.filter(|&n| n <= MAX_CORNERS) {
        Some(n) => {
            method = Method::AllCorners(n);
            let pts: Vec<Point> = (0..n).map(|i| corner(&lv, i)).collect();
            let out = plan.evaluate(&pts);
            evaluations += n;
            for (c, s) in plan.shown.iter().enumerate() {
                let mut lo = (f64::INFINITY, pts[0].clone());
                let mut hi = (f64::NEG_INFINITY, pts[0].clone());
                for (p, row) in pts.iter().zip(&out) {
                    let m = s.measure.of(row[c]);
                    if m < lo.0 {
                        lo = (m, p.clone());
                    }
                    if m > hi.0 {
                        hi = (m, p.clone());
                    }
                }
                start.push([lo, hi]);
            }
        }
        None => {
            method = Method::GuidedCorners(lv.iter().fold(1.0, |n, l| n * l.len() as f64));
            let (found, evals) = guided(plan, &lv);
            evaluations += evals;
            start = found;
        }
    }
    // The search inside the box, each cell and sense on its own core.
    let jobs: Vec<(usize, usize)> = (0..k).flat_map(|c| [(c, 0), (c, 1)]).collect();
    let refined: Vec<(f64, Point, usize)> = jobs
        .par_iter()
        .map(|&(c, sense)| {
            let (v, p) = &start[c][sense];
            inside(plan, c, sense == 1, p.clone(), *v)
        })
        .collect();
    evaluations += refined.iter().map(|r| r.2).sum::<usize>();
    let cells = plan
        .shown
        .iter()
        .enumerate()
        .map(|(c, s)| {
            let ext = |r: &(f64, Point, usize)| {
                let inputs = plan.input_values(&r.1);
                let z = plan.evaluate_values(std::slice::from_ref(&inputs))[0][c];
                Extreme {
                    value: s.measure.of(z),
                    z,
                    at_corner: at_corner(plan, &r.1),
                    point: r.1.clone(),
                    inputs,
                }
            };
            WorstCell {
                name: s.series.name.clone(),
                measure: s.measure,
                nominal: s.measure.of(s.nominal),
                min: ext(&refined[2 * c]),
                max: ext(&refined[2 * c + 1]),
            }
        })
        .collect();
    WorstResult {
        method,
        evaluations,
        cells,
    }
}

fn at_corner(plan: &Plan, p: &[f64]) -> bool {
    plan.dims
        .iter()
        .zip(p)
        .all(|(d, &x)| d.dir == Direction::Choice || x == d.lo || x == d.hi)
}

/// Sensitivity-guided corners and a local search among corners, for every
/// cell and both senses. Returns the best corners and the points evaluated.
fn guided(plan: &Plan, lv: &[Vec<f64>]) -> (Vec<[(f64, Point); 2]>, usize) {
    let nd = plan.dims.len();
    let nominal = plan.nominal_point();
    // One direction at a time at each of its levels, the others stated.
    let mut pts = Vec::new();
    let mut at = Vec::new();
    for (d, l) in lv.iter().enumerate() {
        for &x in l {
            let mut p = nominal.clone();
            p[d] = x;
            pts.push(p);
            at.push((d, x));
        }
    }
    let out = plan.evaluate(&pts);
    let mut evals = pts.len();
    let mut result = Vec::new();
    for (c, s) in plan.shown.iter().enumerate() {
        let mut pair: [(f64, Point); 2] = [(f64::NAN, nominal.clone()), (f64::NAN, nominal.clone())];
        for (sense, slot) in pair.iter_mut().enumerate() {
            let better = |a: f64, b: f64| if sense == 1 { a > b } else { a < b };
            // Each direction at the level that, alone, moves the measure most the wanted way.
            let mut p = nominal.clone();
            for (d, pd) in p.iter_mut().enumerate() {
                let mut best: Option<(f64, f64)> = None;
                for (j, &(dd, x)) in at.iter().enumerate() {
                    if dd != d {
                        continue;
                    }
                    let m = s.measure.of(out[j][c]);
                    if best.is_none_or(|(bm, _)| better(m, bm)) {
                        best = Some((m, x));
                    }
                }
                if let Some((_, x)) = best {
                    *pd = x;
                }
            }
            let mut cur = s.measure.of(plan.evaluate(std::slice::from_ref(&p))[0][c]);
            evals += 1;
            // Local search: change one direction to another level while any
            // change improves.
            for _ in 0..nd.max(1) * 4 {
                let mut cands = Vec::new();
                for (d, l) in lv.iter().enumerate() {
                    for &x in l {
                        if x != p[d] {
                            let mut q = p.clone();
                            q[d] = x;
                            cands.push(q);
                        }
                    }
                }
                if cands.is_empty() {
                    break;
                }
                let o = plan.evaluate(&cands);
                evals += cands.len();
                let mut improved = false;
                for (q, row) in cands.iter().zip(&o) {
                    let m = s.measure.of(row[c]);
                    if better(m, cur) || cur.is_nan() && !m.is_nan() {
                        cur = m;
                        p = q.clone();
                        improved = true;
                    }
                }
                if !improved {
                    break;
                }
            }
            *slot = (cur, p);
        }
        result.push(pair);
    }
    (result, evals)
}

/// Coordinate search inside the box from `p` (measure `v`) for cell `c`.
/// Returns the best measure, its point and the points evaluated.
fn inside(plan: &Plan, c: usize, max: bool, mut p: Point, mut v: f64) -> (f64, Point, usize) {
    let s = &plan.shown[c];
    let better = |a: f64, b: f64| {
        if b.is_nan() {
            !a.is_nan()
        } else if max {
            a > b
        } else {
            a < b
        }
    };
    let eval_one = |q: &[Point]| -> Vec<f64> {
        let vals: Vec<Vec<C64>> = q.iter().map(|p| plan.input_values(p)).collect();
        let mut block = plan.block();
        let mut out = vec![vec![C64::new(0.0, 0.0); plan.shown.len()]; vals.len()];
        for (o, vs) in out
            .chunks_mut(crate::engine::block::LANES)
            .zip(vals.chunks(crate::engine::block::LANES))
        {
            plan.run_lanes(&mut block, vs, o);
        }
        out.iter().map(|r| s.measure.of(r[c])).collect()
    };
    let mut evals = 0;
    let cont: Vec<usize> = (0..plan.dims.len())
        .filter(|&d| plan.dims[d].dir != Direction::Choice && plan.dims[d].lo < plan.dims[d].hi)
        .collect();
    for _ in 0..ROUNDS {
        let mut improved = false;
        for &d in &cont {
            let (lo, hi) = (plan.dims[d].lo, plan.dims[d].hi);
            let xs: Vec<f64> = (0..SCAN)
                .map(|i| lo + (hi - lo) * i as f64 / (SCAN - 1) as f64)
                .collect();
            let pts: Vec<Point> = xs
                .iter()
                .map(|&x| {
                    let mut q = p.clone();
                    q[d] = x;
                    q
                })
                .collect();
            let ms = eval_one(&pts);
            evals += pts.len();
            let mut bi = None;
            for (i, &m) in ms.iter().enumerate() {
                if bi.is_none_or(|b: usize| better(m, ms[b])) {
                    bi = Some(i);
                }
            }
            let Some(bi) = bi else { continue };
            // Golden section on the bracket round the best scan point.
            let (mut a, mut b) = (xs[bi.saturating_sub(1)], xs[(bi + 1).min(SCAN - 1)]);
            let (mut bx, mut bm) = (xs[bi], ms[bi]);
            let g = (5f64.sqrt() - 1.0) / 2.0;
            for _ in 0..GOLDEN {
                if b - a <= 1e-12 * (hi - lo) {
                    break;
                }
                let x1 = b - g * (b - a);
                let x2 = a + g * (b - a);
                let mut q1 = p.clone();
                q1[d] = x1;
                let mut q2 = p.clone();
                q2[d] = x2;
                let m = eval_one(&[q1, q2]);
                evals += 2;
                for (x, mm) in [(x1, m[0]), (x2, m[1])] {
                    if better(mm, bm) {
                        bx = x;
                        bm = mm;
                    }
                }
                if better(m[0], m[1]) || m[1].is_nan() {
                    b = x2;
                } else {
                    a = x1;
                }
            }
            // Only a gain beyond rounding moves the point: a cell that does
            // not depend on this direction keeps it at its corner.
            if better(bm, v) && (v.is_nan() || (bm - v).abs() > 1e-12 * v.abs().max(1e-300)) {
                v = bm;
                p[d] = bx;
                improved = true;
            }
        }
        if !improved {
            break;
        }
    }
    (v, p, evals)
}
