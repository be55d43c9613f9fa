//! How far can the answer move? Analyses of a sheet over its inputs'
//! tolerances (docs/tolerances.md): worst case, Monte Carlo and
//! sensitivities of the shown cells.
//!
//! Everything runs on the compiled program: a [`Plan`] takes the
//! sub-program between the toleranced inputs and the shown cells
//! (`sweep::sub_program`) and evaluates points of the tolerance box 64 at a
//! time in a `Block`, on every core. No I/O: `cli/spread.rs` and the
//! report call in here, `output/spread.rs` writes tables, JSON and CSV.
//!
//! Library entry points:
//! - [`Plan::new`] resolves the shown cells against an evaluated
//!   `Engine` whose model has `spreads`;
//! - [`monte_carlo`] (`sample.rs`) → [`McResult`];
//! - [`worst_case`] (`worst.rs`) → [`WorstResult`];
//! - [`sensitivities`] (`sens.rs`) → [`SensResult`], with the GUM's
//!   first-order standard deviation of each shown cell.
//!
//! A shown cell is judged by its *measure*: its value for a cell that is
//! real at every point of the box, its magnitude otherwise ([`Measure`]).

pub mod checks;
pub mod forward;
mod sample;
mod sens;
mod worst;

pub use sample::{coverage_interval, monte_carlo, order_statistic, Histogram, McCell, McOptions, McResult, Rng};
pub use sens::{sensitivities, sensitivities_by, CellSens, Scheme, SensMethod, SensResult, SensRow, FD_STEP};
pub use worst::{worst_case, Extreme, Method, WorstCell, WorstResult, MAX_CORNERS};

use num_complex::Complex64 as C64;

use crate::diag::{Diagnostic, ErrorCode};
use crate::engine::block::{Block, LANES};
use crate::engine::ops::Instr;
use crate::engine::tolerance::{Direction, Spread};
use crate::engine::{CellId, Engine};
use crate::sweep::Series;

/// A toleranced input, with the value the sheet states for it.
#[derive(Clone, Debug)]
pub struct Input {
    pub name: String,
    pub cell: CellId,
    pub slot: u32,
    pub nominal: C64,
    pub spread: Spread,
    pub quantity: crate::units::Quantity,
    /// The input's display unit, if the sheet gives one.
    pub display: Option<crate::units::Unit>,
}

/// One direction of the tolerance box: an input's magnitude, angle or
/// choice.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Dim {
    /// Index into `Plan::inputs`.
    pub input: usize,
    pub dir: Direction,
    /// The box's ends along it (offsets, or the first and last index).
    pub lo: f64,
    pub hi: f64,
}

/// How a shown cell is judged.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Measure {
    /// Real at every point of the box: its value (sign kept).
    Value,
    /// A phasor or complex value: its magnitude.
    Magnitude,
}

impl Measure {
    pub fn of(self, z: C64) -> f64 {
        match self {
            Measure::Value => z.re,
            Measure::Magnitude => crate::engine::ops::abs(z),
        }
    }
}

/// A shown cell and how it is judged.
#[derive(Clone, Debug)]
pub struct Shown {
    pub series: Series,
    pub measure: Measure,
    /// Its value at the stated inputs.
    pub nominal: C64,
    /// A check, judged by its margin (`checks::margin`), with its
    /// tolerance's form.
    pub check: Option<Option<crate::engine::model::TolSpec>>,
}

/// A sheet ready for the analyses: the toleranced inputs, the box's
/// directions, the shown cells, and the code between them.
#[derive(Clone)]
pub struct Plan {
    pub inputs: Vec<Input>,
    pub dims: Vec<Dim>,
    pub shown: Vec<Shown>,
    code: Vec<Instr>,
    /// Every lane at the sheet's values.
    base: Block,
    prog: crate::engine::program::Program,
}

/// A point of the tolerance box: one offset (or index) per `Plan::dims`.
pub type Point = Vec<f64>;

impl Plan {
    /// A plan over `engine` (evaluated, its model with `spreads`) for the
    /// shown `series`. Refused when the sheet states no tolerance.
    pub fn new(engine: &Engine, series: Vec<Series>) -> Result<Plan, Diagnostic> {
        Plan::build(engine, series, &[], &[])
    }

    /// A plan for a batch run, whose cases may set the inputs in `slots`
    /// (any of them possibly complex): a cell such an input reaches is
    /// judged by its magnitude unless it is real by construction. Each
    /// case is then put in place with [`Plan::restate`].
    pub fn for_cases(engine: &Engine, series: Vec<Series>, slots: &[u32]) -> Result<Plan, Diagnostic> {
        Plan::build(engine, series, &[], slots)
    }

    /// A plan whose shown values are the margins of these checks.
    pub fn for_checks(engine: &Engine, checks: &[CellId]) -> Result<Plan, Diagnostic> {
        Plan::build(engine, Vec::new(), checks, &[])
    }

    fn build(engine: &Engine, series: Vec<Series>, checks: &[CellId], complex: &[u32]) -> Result<Plan, Diagnostic> {
        let m = &engine.model;
        if m.spreads.is_empty() {
            return Err(
                Diagnostic::unplaced(ErrorCode::NoTolerances, "the sheet states no tolerance on any input")
                    .with_hint("state one after an input's value: `Zt = 6 % within 7.5 %` (docs/tolerances.md)"),
            );
        }
        let mut inputs = Vec::new();
        let mut dims = Vec::new();
        for s in &m.spreads {
            let c = &m.cells[s.cell as usize];
            let k = inputs.len();
            for dir in s.directions() {
                let (lo, hi) = s.bounds(dir);
                dims.push(Dim { input: k, dir, lo, hi });
            }
            inputs.push(Input {
                name: c.name.clone(),
                cell: s.cell,
                slot: c.slot,
                nominal: engine.value(s.cell),
                spread: s.clone(),
                quantity: c.quantity().unwrap_or(crate::units::Quantity::PLAIN),
                display: c.display.clone(),
            });
        }
        // A slot an input with an angle band or complex listed values
        // feeds may be complex at some point of the box.
        let complex_inputs: Vec<u32> = inputs
            .iter()
            .filter(|i| {
                i.spread.angle.is_some()
                    || matches!(&i.spread.law, crate::engine::tolerance::Law::Among(v) if v.iter().any(|z| z.im != 0.0))
            })
            .map(|i| i.slot)
            .chain(complex.iter().copied())
            .collect();
        let real = crate::batch::real_slots(&m.program, &complex_inputs);
        let from: Vec<CellId> = inputs.iter().map(|i| i.cell).collect();
        let to: Vec<CellId> = series.iter().map(|s| s.cell).chain(checks.iter().copied()).collect();
        let code = crate::sweep::sub_program(m, &from, &to);
        let mut base = Block::new(&m.program);
        for (s, v) in engine.slots().iter().enumerate() {
            base.fill(s as u32, *v);
        }
        let shown = series
            .into_iter()
            .map(|s| {
                let measure = if real.get(s.slot as usize).copied().unwrap_or(false) {
                    Measure::Value
                } else {
                    Measure::Magnitude
                };
                let nominal = engine.slots()[s.slot as usize];
                Shown {
                    series: s,
                    measure,
                    nominal,
                    check: None,
                }
            })
            .chain(checks.iter().map(|&id| {
                let c = &m.cells[id as usize];
                let v = engine.values(id);
                Shown {
                    series: Series {
                        name: c.formula.clone(),
                        cell: id,
                        slot: c.slot,
                        quantity: c.checked_quantity(),
                        display: c.display.clone(),
                        real: true,
                    },
                    measure: Measure::Value,
                    nominal: checks::margin(c.tol, v[0], v[1], v[2]),
                    check: Some(c.tol),
                }
            }))
            .collect();
        Ok(Plan {
            inputs,
            dims,
            shown,
            code,
            base,
            prog: m.program.clone(),
        })
    }

    /// Put the plan at another state of the sheet: `slots`, the whole
    /// program run with other input values (a batch case). The inputs'
    /// stated values and the shown cells' values there are taken from it;
    /// the tolerances stay as the sheet states them. See
    /// [`Plan::box_problem`] for a tolerance that cannot stand there.
    pub fn restate(&mut self, slots: &[C64]) {
        for (s, v) in slots.iter().enumerate() {
            self.base.fill(s as u32, *v);
        }
        for i in &mut self.inputs {
            i.nominal = slots[i.slot as usize];
        }
        for s in &mut self.shown {
            let k = s.series.slot as usize;
            s.nominal = match s.check {
                Some(tol) => checks::margin(tol, slots[k], slots[k + 1], slots[k + 2]),
                None => slots[k],
            };
        }
    }

    /// The first input whose tolerance cannot stand around its stated
    /// value (after [`Plan::restate`]), and why.
    pub fn box_problem(&self) -> Option<(usize, &'static str)> {
        self.inputs
            .iter()
            .enumerate()
            .find_map(|(k, i)| i.spread.refuses(i.nominal).map(|why| (k, why)))
    }

    /// The stated values: every offset zero, every choice at the listed
    /// value nearest the stated one.
    pub fn nominal_point(&self) -> Point {
        self.dims
            .iter()
            .map(|d| match d.dir {
                Direction::Choice => self.nearest_choice(d.input) as f64,
                _ => 0.0,
            })
            .collect()
    }

    fn nearest_choice(&self, input: usize) -> usize {
        let i = &self.inputs[input];
        match &i.spread.law {
            crate::engine::tolerance::Law::Among(v) => v
                .iter()
                .enumerate()
                .min_by(|a, b| (a.1 - i.nominal).norm().total_cmp(&(b.1 - i.nominal).norm()))
                .map_or(0, |(k, _)| k),
            _ => 0,
        }
    }

    /// Each input's value at point `p`.
    pub fn input_values(&self, p: &[f64]) -> Vec<C64> {
        let mut out = vec![C64::new(0.0, 0.0); self.inputs.len()];
        self.values_into(p, &mut out);
        out
    }

    /// [`Plan::input_values`] into `out`, allocating nothing (the
    /// directions of one input are consecutive in `dims`).
    pub fn values_into(&self, p: &[f64], out: &mut [C64]) {
        let mut d = 0;
        for (k, (i, o)) in self.inputs.iter().zip(out.iter_mut()).enumerate() {
            let (mut mag, mut ang, mut choice) = (0.0, 0.0, usize::MAX);
            while d < self.dims.len() && self.dims[d].input == k {
                let x = p[d];
                match self.dims[d].dir {
                    Direction::Magnitude => mag = x,
                    Direction::Angle => ang = x,
                    Direction::Choice => choice = x.round().max(0.0) as usize,
                }
                d += 1;
            }
            *o = i.spread.value(i.nominal, mag, ang, choice);
        }
    }

    /// A fresh block for this plan (each thread keeps its own).
    pub fn block(&self) -> Block {
        self.base.clone()
    }

    /// Evaluate up to 64 sets of input values (one per lane) in `block`
    /// and write each lane's shown values to `out[lane][shown]`.
    pub fn run_lanes(&self, block: &mut Block, inputs: &[Vec<C64>], out: &mut [Vec<C64>]) {
        self.run_inputs(block, inputs);
        for (l, row) in out.iter_mut().enumerate().take(inputs.len()) {
            for (k, v) in row.iter_mut().enumerate().take(self.shown.len()) {
                *v = self.lane_value(block, k, l);
            }
        }
    }

    /// Evaluate up to 64 sets of input values (one per lane) in `block`.
    pub fn run_inputs(&self, block: &mut Block, inputs: &[Vec<C64>]) {
        debug_assert!(inputs.len() <= LANES);
        for (l, vals) in inputs.iter().enumerate() {
            for (i, v) in self.inputs.iter().zip(vals) {
                block.set(i.slot, l, *v);
            }
        }
        block.run(&self.code, &self.prog);
    }

    /// Shown value `k` in lane `l` of an evaluated block (a check's margin).
    pub fn lane_value(&self, block: &Block, k: usize, l: usize) -> C64 {
        let s = &self.shown[k];
        let slot = s.series.slot;
        match s.check {
            Some(tol) => checks::margin(tol, block.get(slot, l), block.get(slot + 1, l), block.get(slot + 2, l)),
            None => block.get(slot, l),
        }
    }

    /// The shown values at each of `points`, in order, 64 at a time on
    /// every core.
    pub fn evaluate(&self, points: &[Point]) -> Vec<Vec<C64>> {
        let vals: Vec<Vec<C64>> = points.iter().map(|p| self.input_values(p)).collect();
        self.evaluate_values(&vals)
    }

    /// The shown values for each set of input values (in `inputs` order).
    pub fn evaluate_values(&self, vals: &[Vec<C64>]) -> Vec<Vec<C64>> {
        use rayon::prelude::*;
        let n = self.shown.len();
        let mut out = vec![vec![C64::new(0.0, 0.0); n]; vals.len()];
        out.par_chunks_mut(LANES)
            .zip(vals.par_chunks(LANES))
            .for_each_init(|| self.block(), |block, (o, v)| self.run_lanes(block, v, o));
        out
    }

    /// The dimension's input's name and what it varies, for tables:
    /// `Zt`, `Vs (angle)`, `Qb (choice)`.
    pub fn dim_label(&self, d: usize) -> String {
        let dim = &self.dims[d];
        let name = &self.inputs[dim.input].name;
        match dim.dir {
            Direction::Magnitude => name.clone(),
            Direction::Angle => format!("{name} (angle)"),
            Direction::Choice => format!("{name} (choice)"),
        }
    }
}

/// Compile `sheet` with the `shown` cells or expressions (every computed
/// cell when `None`) and make a plan over it.
pub fn plan_for(sheet: crate::sheet::Sheet, shown: Option<&[String]>) -> Result<Plan, crate::sweep::Failure> {
    let names: Vec<String> = match shown {
        Some(s) => s
            .iter()
            .map(|x| x.trim().to_string())
            .filter(|x| !x.is_empty())
            .collect(),
        None => {
            let m = crate::engine::compile(&sheet);
            if m.has_errors() {
                return Err(crate::sweep::Failure {
                    sources: m.sources.clone(),
                    diagnostics: m.diagnostics,
                });
            }
            default_shown(&m)
        }
    };
    let exprs: Vec<(&str, &str)> = names.iter().map(|s| ("--show", s.as_str())).collect();
    let study = crate::sweep::Study::new(sheet, &exprs)?;
    let fail = |d: Diagnostic| crate::sweep::Failure {
        sources: study.model().sources.clone(),
        diagnostics: vec![d],
    };
    if names.is_empty() {
        return Err(fail(
            Diagnostic::unplaced(
                ErrorCode::NoTolerances,
                "nothing to analyse: the sheet computes no cell from its inputs",
            )
            .with_hint("name the cells with --show"),
        ));
    }
    let mut series = Vec::new();
    for n in &names {
        series.push(study.series(n).map_err(fail)?);
    }
    Plan::new(&study.engine, series).map_err(fail)
}

/// The shown cells by default: every computed cell with one value (not
/// the inputs, not checks, not records).
pub fn default_shown(m: &crate::engine::Model) -> Vec<String> {
    m.defs()
        .filter(|(id, c)| !c.input && c.error.is_none() && c.quantity().is_some() && m.rank[*id as usize] != u32::MAX)
        .map(|(_, c)| c.name.clone())
        .collect()
}
