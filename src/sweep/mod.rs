//! Sweeps and searches over a sheet: vary one or two inputs across ranges
//! and collect the shown cells at each point, or look for the input value
//! that brings an expression to a target or to an extreme.
//!
//! Everything here works on the compiled program: a sweep runs only the
//! instructions of the cells between the varied inputs and the shown cells,
//! 64 points at a time in a `Block`; a search runs the same sub-program one
//! point at a time. No I/O: the CLI and the session call in here, and
//! `output/` and `plot/` turn a `SweepResult` into text, CSV, JSON or SVG.
//!
//! Library entry points:
//! - [`Study::new`] adds `--show` expressions to a sheet and compiles it;
//!   [`Study::axis`] resolves `NAME=START..STOP`; [`Study::series`] a shown
//!   cell; [`run`] streams points to a closure; [`collect`] gathers them
//!   into a [`SweepResult`].
//! - [`solve`] answers `solve --target` / `--maximize` / `--minimize`.
//! - [`declared::run_declared`] runs the sweeps a sheet declares with
//!   `@sweep`.

pub mod declared;
mod ranges;
mod running;
mod solve;

use ranges::add_expression;
pub use ranges::{check_size, constant, input_cell, parse_expr_at, parse_range, parse_range_at, resolve_axis};
pub use running::{between, collect, run, sub_program, sweep, AxisRequest, SweepRequest};
pub use solve::{
    explain, search_failure, search_failure_in, search_outcome, solve, split_target, Solution, SolveError,
    SolveRequest, Unsolved,
};

use num_complex::Complex64 as C64;

use crate::diag::{did_you_mean, Diagnostic, ErrorCode, SourceFile};
use crate::engine::search::{self};
use crate::engine::{compile, CellId, Engine, Model};
use crate::funcs::Shape;
use crate::sheet::Sheet;
use crate::syntax::ast::{Expr, Ident};
use crate::units::{Quantity, Unit};

/// Sweeps larger than this need an explicit `--max-points`.
pub const DEFAULT_MAX_POINTS: usize = 10_000_000;

/// Points of a sweep when neither a count nor a step is given.
pub const DEFAULT_POINTS: usize = 101;

/// One varied input and the values it takes.
#[derive(Clone, Debug, PartialEq)]
pub struct Axis {
    pub name: String,
    pub cell: CellId,
    pub slot: u32,
    pub quantity: Quantity,
    /// The input's display unit, if the sheet gives one.
    pub display: Option<Unit>,
    pub start: f64,
    pub stop: f64,
    /// Number of values, ≥ 1.
    pub count: usize,
    /// Values spaced geometrically.
    pub log: bool,
    /// Step between values when the sweep was given one (the last value
    /// may then fall short of `stop`).
    pub step: Option<f64>,
}

impl Axis {
    /// The `i`th value (coherent SI units).
    pub fn value(&self, i: usize) -> f64 {
        match self.step {
            Some(s) => {
                let v = self.start + s * i as f64 * (self.stop - self.start).signum();
                if i + 1 == self.count && (v - self.stop).abs() <= 1e-9 * s {
                    self.stop
                } else {
                    v
                }
            }
            None => search::grid_point(self.start, self.stop, i, self.count.saturating_sub(1), self.log),
        }
    }
}

/// One shown value: a cell, a record field, or an expression.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// As written: `Vload`, `y.a`, `abs(Zin)`.
    pub name: String,
    pub cell: CellId,
    pub slot: u32,
    pub quantity: Quantity,
    pub display: Option<Unit>,
    /// Real by construction (a power factor, a part of a power, a kvar
    /// rating: see `batch::real_slots`): one CSV column, not two.
    pub real: bool,
}

/// The evaluated points of a sweep. With two axes the last varies
/// fastest: point `p` has `axes[0]` index `p / axes[1].count`.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepResult {
    pub title: Option<String>,
    pub axes: Vec<Axis>,
    pub series: Vec<Series>,
    /// `values[series][point]`, coherent SI units.
    pub values: Vec<Vec<C64>>,
}

impl SweepResult {
    pub fn len(&self) -> usize {
        self.values.first().map_or_else(|| total_points(&self.axes), Vec::len)
    }
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// The value of axis `a` at point `p`.
    pub fn x(&self, a: usize, p: usize) -> f64 {
        self.axes[a].value(axis_index(&self.axes, a, p))
    }
    /// Points where some shown value is NaN or infinite.
    pub fn undefined_points(&self) -> Vec<usize> {
        (0..self.len())
            .filter(|&p| self.values.iter().any(|v| !finite(v[p])))
            .collect()
    }
}

/// Both parts finite.
pub fn finite(z: C64) -> bool {
    z.re.is_finite() && z.im.is_finite()
}

/// Points in the grid of these axes.
pub fn total_points(axes: &[Axis]) -> usize {
    axes.iter().fold(1usize, |n, a| n.saturating_mul(a.count))
}

/// Index along axis `a` of point `p`.
pub fn axis_index(axes: &[Axis], a: usize, p: usize) -> usize {
    let inner: usize = axes[a + 1..].iter().map(|x| x.count).product();
    (p / inner.max(1)) % axes[a].count.max(1)
}

/// Parsed `NAME=START..STOP`, with spans into its own pseudo-file.
#[derive(Clone, Debug)]
pub struct RangeText {
    pub name: Ident,
    pub start: Expr,
    pub stop: Expr,
}

/// A sheet prepared for sweeps and searches: the sheet with any shown
/// expressions added as hidden cells, compiled and evaluated once.
pub struct Study {
    pub engine: Engine,
}

/// Errors with the sources they point into.
#[derive(Debug)]
pub struct Failure {
    pub sources: crate::diag::SourceMap,
    pub diagnostics: Vec<Diagnostic>,
}

impl Failure {
    fn one(sources: &crate::diag::SourceMap, d: Diagnostic) -> Failure {
        Failure {
            sources: sources.clone(),
            diagnostics: vec![d],
        }
    }
    /// Every message as plain text (for tests and the session).
    pub fn render_plain(&self) -> String {
        self.diagnostics.iter().map(|d| d.render_plain(&self.sources)).collect()
    }
}

impl Study {
    /// Add each of `exprs` that is not simply a cell name as a hidden cell
    /// named by its text (pseudo-file `origin`, e.g. `--show`), then
    /// compile the sheet and evaluate it once.
    pub fn new(mut sheet: Sheet, exprs: &[(&str, &str)]) -> Result<Study, Failure> {
        for &(origin, text) in exprs {
            add_expression(&mut sheet, origin, text).map_err(|d| Failure::one(&sheet.sources, d))?;
        }
        let model = compile(&sheet);
        if model.has_errors() {
            return Err(Failure {
                sources: model.sources.clone(),
                diagnostics: model.diagnostics,
            });
        }
        Ok(Study {
            engine: Engine::new(model),
        })
    }

    /// A study of an already compiled model (no added expressions).
    pub fn of_model(model: Model) -> Study {
        Study {
            engine: Engine::new(model),
        }
    }

    pub fn model(&self) -> &Model {
        &self.engine.model
    }

    /// Resolve a shown name: a cell, `cell.field`, or an expression added
    /// by `new`.
    pub fn series(&self, text: &str) -> Result<Series, Diagnostic> {
        series_in(self.model(), text)
    }
}

/// Resolve a shown name in a model: a cell, `cell.field`, or a hidden
/// expression cell.
pub fn series_in(m: &Model, text: &str) -> Result<Series, Diagnostic> {
    let t = text.trim();
    if let Some(s) = cell_series(m, t) {
        return Ok(s);
    }
    if let Some((base, field)) = t.split_once('.') {
        if let Some(c) = m.cell(base.trim()) {
            if let Some(Shape::Record(fields)) = &c.shape {
                if let Some(k) = fields.iter().position(|f| f.0 == field.trim()) {
                    return Ok(Series {
                        name: t.to_string(),
                        cell: m.id(base.trim()).unwrap_or_default(),
                        slot: c.slot + k as u32,
                        quantity: fields[k].1,
                        display: None,
                        real: real_slot(m, c.slot + k as u32),
                    });
                }
                let names: Vec<&str> = fields.iter().map(|f| f.0).collect();
                return Err(Diagnostic::unplaced(
                    ErrorCode::UnknownField,
                    format!("`{}` has no field `{}`", base.trim(), field.trim()),
                )
                .with_hint(format!("its fields are: {}", names.join(", "))));
            }
        }
    }
    // A cell with an error is named with its error, not denied.
    let base = t.split_once('.').map_or(t, |(b, _)| b.trim());
    if let Some(d) = m.id(base).and_then(|id| m.broken_ref(id, None)) {
        return Err(d);
    }
    let names = m.defs().map(|(_, c)| c.name.as_str());
    let mut d = Diagnostic::unplaced(ErrorCode::UnknownName, format!("the sheet has no cell `{t}` to show"));
    if let Some(s) = did_you_mean(t, names) {
        d = d.with_hint(format!("did you mean `{s}`?"));
    }
    Err(d)
}

fn cell_series(m: &Model, t: &str) -> Option<Series> {
    let id = m.id(t)?;
    let c = &m.cells[id as usize];
    let q = c.quantity()?;
    Some(Series {
        name: t.to_string(),
        cell: id,
        slot: c.slot,
        quantity: q,
        display: c.display.clone(),
        real: real_slot(m, c.slot),
    })
}

/// The slot holds a real value at every point of any sweep: the inputs a
/// sweep varies take real values, the others keep the sheet's constants.
fn real_slot(m: &Model, slot: u32) -> bool {
    crate::batch::real_slots(&m.program, &[])
        .get(slot as usize)
        .copied()
        .unwrap_or(false)
}

impl Study {
    /// Resolve `NAME=START..STOP` (pseudo-file `origin`) with `points`
    /// values, or values `step` apart (text with a unit), spaced
    /// logarithmically when `log`.
    pub fn axis(
        &mut self,
        origin: &str,
        text: &str,
        points: Option<usize>,
        step: Option<&str>,
        log: bool,
    ) -> Result<Axis, Failure> {
        let mut sources = self.engine.model.sources.clone();
        let r = parse_range(&mut sources, origin, text).map_err(|d| {
            // a mistyped unit: units of the input's dimension are suggested
            let d = crate::batch::hint_units_for_assignment(d, text, &self.engine.model);
            Failure::one(&sources, d)
        })?;
        let step = match step {
            Some(s) => {
                let file = sources.add(SourceFile::new("--step", None, s.to_string()));
                let e = parse_expr_at(s, file, 0).map_err(|d| Failure::one(&sources, d))?;
                Some(e)
            }
            None => None,
        };
        let ax = resolve_axis(&self.engine.model, &sources, &r, points, step.as_ref(), log)
            .map_err(|d| Failure::one(&sources, d))?;
        // Keep the pseudo-files so later messages can point into them.
        self.engine.model.sources = sources;
        Ok(ax)
    }
}
