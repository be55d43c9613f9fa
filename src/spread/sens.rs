//! Sensitivities: how much each shown cell moves, in proportion, for a
//! proportional move of each toleranced input, and the first-order
//! standard deviation they give by the law of propagation of uncertainty
//! (JCGM 100:2008, the GUM, §5.1.2).
//!
//! The derivatives, in the input's relative magnitude ε (x → x·(1 + ε))
//! and angle θ (x → x·e^{jθ}, radians), come from forward-mode
//! differentiation through the compiled program (`forward.rs`), exact to
//! rounding; library functions and network solves on the way are
//! differenced along their arguments. A program with an in-sheet search
//! takes the scheme documented in docs/tolerances.md instead, and tests
//! check it against forward mode: central differences at steps
//! h = `FD_STEP` and h/2, combined by Richardson extrapolation,
//! R = (4·D(h/2) − D(h))/3, whose error is O(h⁴), the four points of every
//! direction evaluated together in blocks of 64.

use num_complex::Complex64 as C64;

use super::{Measure, Plan};
use crate::engine::tolerance::{Direction, Law, MagBand};

/// The difference step, in relative magnitude and in radians: near the
/// cube root of rounding (1.1e-16) to the fifth, where the O(h⁴)
/// truncation and the rounding error of a Richardson-extrapolated central
/// difference balance.
pub const FD_STEP: f64 = 1e-3;

/// One shown cell's sensitivity to one direction of one input.
#[derive(Clone, Debug, PartialEq)]
pub struct SensRow {
    /// Index into `Plan::inputs`.
    pub input: usize,
    /// `Magnitude` (for a choice too: its value taken as continuous) or
    /// `Angle`.
    pub dir: Direction,
    /// The cell's measure, in % per % of the input's magnitude, or in %
    /// per degree of its angle. NaN where the input or the cell is zero.
    pub mag: f64,
    /// A complex cell's angle, in degrees per % of the input's magnitude
    /// or per degree of its angle; `None` for a real cell.
    pub angle: Option<f64>,
    /// The measure's standard deviation this direction alone gives
    /// (|∂m/∂x|·u(x), the GUM's u_i(y)), coherent SI units; NaN where not
    /// defined (an absolute band on a zero input).
    pub contribution: f64,
    /// The measure with this direction at its low and high ends, every
    /// other input stated (for a choice: the smallest and the largest over
    /// the listed values).
    pub low: f64,
    pub high: f64,
}

#[derive(Clone, Debug, PartialEq)]
pub struct CellSens {
    pub name: String,
    pub measure: Measure,
    pub nominal: f64,
    /// Ranked: the largest |mag| first (then |angle|).
    pub rows: Vec<SensRow>,
    /// The combined standard uncertainty to first order, √Σ u_i² (GUM
    /// §5.1.2, inputs uncorrelated).
    pub gum_std: f64,
    /// How this cell's derivatives were found.
    pub method: SensMethod,
}

/// How a cell's derivatives were found, as the outputs name it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SensMethod {
    /// Forward-mode differentiation, exact to rounding.
    Forward,
    /// Forward mode, through a library function or network solve
    /// differenced along its arguments.
    ForwardDifferenced,
    /// Central differences of the whole program.
    Differences,
}

impl SensMethod {
    pub fn describe(self) -> &'static str {
        match self {
            SensMethod::Forward => "forward-mode differentiation (exact)",
            SensMethod::ForwardDifferenced => "forward-mode differentiation, library functions by central differences",
            SensMethod::Differences => "central differences with Richardson extrapolation",
        }
    }
    /// A short key for JSON and CSV.
    pub fn key(self) -> &'static str {
        match self {
            SensMethod::Forward => "forward",
            SensMethod::ForwardDifferenced => "forward+differences",
            SensMethod::Differences => "differences",
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct SensResult {
    pub cells: Vec<CellSens>,
}

/// How the derivatives were found.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Scheme {
    /// Forward-mode differentiation through the compiled program
    /// (`forward.rs`): exact to rounding, library functions and network
    /// solves differenced along their arguments.
    Forward,
    /// Richardson-extrapolated central differences of the whole program
    /// (a sheet with an in-sheet search, or asked for).
    Differences,
}

/// Sensitivities of every shown cell to every direction of every input,
/// by forward-mode differentiation where the program allows it.
pub fn sensitivities(plan: &Plan) -> SensResult {
    sensitivities_by(plan, Scheme::Forward)
}

/// [`sensitivities`] by the scheme asked for (`Forward` falls back to
/// `Differences` for a program with an in-sheet search).
pub fn sensitivities_by(plan: &Plan, scheme: Scheme) -> SensResult {
    let nominal_vals = plan.input_values(&plan.nominal_point());
    // The directions: magnitude for every input, angle for those with an
    // angle band.
    let mut dirs: Vec<(usize, Direction)> = Vec::new();
    for (k, i) in plan.inputs.iter().enumerate() {
        dirs.push((k, Direction::Magnitude));
        if i.spread.angle.is_some() {
            dirs.push((k, Direction::Angle));
        }
    }
    let tangents = match scheme {
        Scheme::Forward => super::forward::tangents(plan, &dirs),
        Scheme::Differences => None,
    };
    let steps = [FD_STEP, -FD_STEP, FD_STEP / 2.0, -FD_STEP / 2.0];
    let mut sets: Vec<Vec<C64>> = vec![nominal_vals.clone()];
    if tangents.is_none() {
        for &(k, dir) in &dirs {
            let x = plan.inputs[k].nominal;
            let along = zero_scale(&plan.inputs[k], dir);
            for &h in &steps {
                let mut v = nominal_vals.clone();
                v[k] = match (dir, along) {
                    (Direction::Angle, _) => x * C64::from_polar(1.0, h),
                    // A zero value with an absolute band moves along the real
                    // axis: steps of h times the band.
                    (_, Some(s)) => C64::new(h * s, 0.0),
                    _ => x * (1.0 + h),
                };
                sets.push(v);
            }
        }
    }
    let first_end = sets.len();
    // The ends of each direction, every other input stated.
    let mut ends: Vec<(usize, usize)> = Vec::new(); // (first set, count) per dir
    for &(k, dir) in &dirs {
        let start = sets.len();
        let i = &plan.inputs[k];
        match (&i.spread.law, dir) {
            (Law::Among(vs), _) => {
                for v in vs {
                    let mut s = nominal_vals.clone();
                    s[k] = *v;
                    sets.push(s);
                }
            }
            _ => {
                let (lo, hi) = i.spread.bounds(dir);
                for off in [lo, hi] {
                    let (m, a) = match dir {
                        Direction::Angle => (0.0, off),
                        _ => (off, 0.0),
                    };
                    let mut s = nominal_vals.clone();
                    s[k] = i.spread.value(i.nominal, m, a, 0);
                    sets.push(s);
                }
            }
        }
        ends.push((start, sets.len() - start));
    }
    debug_assert!(ends.first().is_none_or(|e| e.0 == first_end));
    let out = plan.evaluate_values(&sets);
    // Below this, a relative sensitivity is rounding: the differences'
    // accuracy, or a few ulps of the exact derivatives.
    let floor = if tangents.is_some() { 1e-13 } else { 1e-9 };
    let cells = plan
        .shown
        .iter()
        .enumerate()
        .map(|(c, s)| {
            let y0 = out[0][c];
            let m0 = s.measure.of(y0);
            let mut rows = Vec::new();
            for (d, &(k, dir)) in dirs.iter().enumerate() {
                // d m / d ε (or / d θ), and d arg / d ε for complex cells.
                let (dm, da) = match &tangents {
                    Some(t) => {
                        let dy = t.d[c][d];
                        let dm = match s.measure {
                            Measure::Value => dy.re,
                            Measure::Magnitude => super::forward::dabs(y0, dy),
                        };
                        (
                            dm,
                            (s.measure == Measure::Magnitude).then(|| super::forward::darg(y0, dy)),
                        )
                    }
                    None => {
                        let f = |j: usize| out[1 + 4 * d + j][c];
                        let rich = |g: &dyn Fn(C64) -> f64| {
                            let d1 = (g(f(0)) - g(f(1))) / (2.0 * FD_STEP);
                            let d2 = (g(f(2)) - g(f(3))) / FD_STEP;
                            (4.0 * d2 - d1) / 3.0
                        };
                        let dm = rich(&|z| s.measure.of(z));
                        let da = (s.measure == Measure::Magnitude)
                            .then(|| rich(&|z| if y0.norm() > 0.0 { (z / y0).arg() } else { z.arg() }));
                        (dm, da)
                    }
                };
                let input = &plan.inputs[k];
                let x = input.nominal;
                let zero_in = x.norm() == 0.0;
                let rel = if zero_in || m0 == 0.0 { f64::NAN } else { dm / m0 };
                // Below the scheme's accuracy: no dependence.
                let rel = if rel.abs() < floor { 0.0 } else { rel };
                let da = da.map(|a| if a.abs() < floor { 0.0 } else { a });
                let per_deg = std::f64::consts::PI / 180.0;
                let (mag, angle) = match dir {
                    // % per %: a ratio of relative changes.
                    Direction::Magnitude => (rel, da.map(|a| if zero_in { f64::NAN } else { a.to_degrees() / 100.0 })),
                    // % per degree; degrees per degree.
                    _ => (rel * 100.0 * per_deg, da),
                };
                let u = input_std(input, dir);
                let deriv = match (dir, &input.spread.mag, &input.spread.law) {
                    (Direction::Angle, _, _) => dm,
                    _ if zero_in => zero_scale(input, dir).map_or(f64::NAN, |s| dm / s),
                    (_, _, Law::Among(_)) => dm,
                    (_, Some(MagBand::Absolute(_)), _) => {
                        if zero_in {
                            f64::NAN
                        } else {
                            dm / x.norm()
                        }
                    }
                    _ => dm,
                };
                let (e0, en) = ends[d];
                let vals: Vec<f64> = (e0..e0 + en).map(|j| s.measure.of(out[j][c])).collect();
                let (low, high) = match &input.spread.law {
                    Law::Among(_) => (
                        vals.iter().copied().fold(f64::INFINITY, f64::min),
                        vals.iter().copied().fold(f64::NEG_INFINITY, f64::max),
                    ),
                    _ => (vals[0], vals[1]),
                };
                rows.push(SensRow {
                    input: k,
                    dir,
                    mag,
                    angle,
                    contribution: (deriv * u).abs(),
                    low,
                    high,
                });
            }
            let gum_std = rows.iter().map(|r| r.contribution * r.contribution).sum::<f64>().sqrt();
            rank(&mut rows);
            CellSens {
                name: s.series.name.clone(),
                measure: s.measure,
                nominal: m0,
                rows,
                gum_std,
                method: match &tangents {
                    Some(t) if !t.differenced[c] => SensMethod::Forward,
                    Some(_) => SensMethod::ForwardDifferenced,
                    None => SensMethod::Differences,
                },
            }
        })
        .collect();
    SensResult { cells }
}

/// The standard deviation of a direction's offset, in the units the
/// derivative is taken in: relative magnitude (a fraction), absolute (SI),
/// or radians; a choice's as the spread of its values' magnitudes
/// relative to the stated one.
fn input_std(input: &super::Input, dir: Direction) -> f64 {
    match &input.spread.law {
        Law::Among(vs) => {
            let r = input.nominal.norm();
            if r == 0.0 || vs.is_empty() {
                return f64::NAN;
            }
            let e: Vec<f64> = vs.iter().map(|v| v.norm() / r - 1.0).collect();
            let m = e.iter().sum::<f64>() / e.len() as f64;
            (e.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / e.len() as f64).sqrt()
        }
        _ => input.spread.std_dev(dir),
    }
}

/// For a zero input with an absolute band on its magnitude, the scale of
/// the steps along the real axis (the band's larger end).
pub(super) fn zero_scale(input: &super::Input, dir: Direction) -> Option<f64> {
    match (dir, input.spread.mag) {
        (Direction::Magnitude, Some(MagBand::Absolute(b))) if input.nominal.norm() == 0.0 => {
            let s = b.lo.abs().max(b.hi.abs());
            (s > 0.0).then_some(s)
        }
        _ => None,
    }
}

/// Largest |mag| first, then largest |angle|; NaN last.
fn rank(rows: &mut [SensRow]) {
    let key = |r: &SensRow| {
        let m = if r.mag.is_nan() { -1.0 } else { r.mag.abs() };
        let a = r.angle.map_or(0.0, |a| if a.is_nan() { -1.0 } else { a.abs() });
        (m, a)
    };
    rows.sort_by(|a, b| {
        let (ka, kb) = (key(a), key(b));
        kb.0.total_cmp(&ka.0).then(kb.1.total_cmp(&ka.1))
    });
}
