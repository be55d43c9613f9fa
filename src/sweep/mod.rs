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

use num_complex::Complex64 as C64;

use crate::diag::{did_you_mean, Diagnostic, ErrorCode, SourceFile, Span};
use crate::engine::block::{Block, LANES};
use crate::engine::ops::Instr;
use crate::engine::search::{self, find_extreme, find_root, Found, Goal, SearchError, SearchOptions};
use crate::engine::{compile, CellId, Engine, Model, Role};
use crate::funcs::Shape;
use crate::sheet::Sheet;
use crate::syntax::ast::{Definition, Expr, ExprKind, Ident, Stmt, StmtKind};
use crate::syntax::parse_line;
use crate::units::{Kind, Quantity, Unit};

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
    })
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
        let r = parse_range(&mut sources, origin, text).map_err(|d| Failure::one(&sources, d))?;
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

/// Parse an expression that stands alone at `offset` of `file`.
pub fn parse_expr_at(text: &str, file: crate::diag::FileId, offset: usize) -> Result<Expr, Diagnostic> {
    match parse_line(text, file, offset, 1) {
        Ok(Some(Stmt {
            kind: StmtKind::Expr(e),
            ..
        })) => Ok(e),
        Ok(Some(s)) => Err(Diagnostic::error(
            ErrorCode::Syntax,
            s.span,
            "expected a value here, not a statement",
        )),
        Ok(None) => Err(Diagnostic::error(
            ErrorCode::Syntax,
            Span::new(file, offset, offset + text.len()),
            "expected a value here",
        )
        .with_label("nothing here")),
        Err(d) => Err(d),
    }
}

/// Add `text` as a hidden cell unless it names a cell or a record field.
fn add_expression(sheet: &mut Sheet, origin: &str, text: &str) -> Result<(), Diagnostic> {
    let t = text.trim();
    let names = sheet.cell_names();
    let is_name = |s: &str| names.contains(&s);
    if is_name(t) || t.split_once('.').is_some_and(|(b, _)| is_name(b.trim())) {
        return Ok(());
    }
    let file = sheet.sources.add(SourceFile::new(origin, None, t.to_string()));
    let expr = parse_expr_at(t, file, 0)?;
    // A bare name that is not a cell is reported when it is looked up.
    if matches!(&expr.kind, ExprKind::Name(_)) {
        return Ok(());
    }
    let span = expr.span;
    sheet.stmts.push(Stmt {
        kind: StmtKind::Def(Definition {
            name: Ident {
                name: t.to_string(),
                span,
            },
            expr,
            display: None,
        }),
        span,
        line: 1,
        comment: None,
    });
    Ok(())
}

/// Split `NAME=START..STOP` (added to `sources` as pseudo-file `origin`).
pub fn parse_range(sources: &mut crate::diag::SourceMap, origin: &str, text: &str) -> Result<RangeText, Diagnostic> {
    let file = sources.add(SourceFile::new(origin, None, text.to_string()));
    parse_range_at(text, file, 0)
}

/// Split `NAME=START..STOP` found at byte `offset` of `file`.
pub fn parse_range_at(text: &str, file: crate::diag::FileId, offset: usize) -> Result<RangeText, Diagnostic> {
    let sp = |a: usize, b: usize| Span::new(file, offset + a, offset + b);
    let whole = sp(0, text.len());
    let Some(eq) = text.find('=') else {
        return Err(
            Diagnostic::error(ErrorCode::BadRange, whole, format!("`{}` has no `=`", text.trim()))
                .with_hint("write NAME=START..STOP, e.g. C=0..2mF or f=10Hz..1MHz"),
        );
    };
    let Some(dots) = text[eq..].find("..").map(|i| i + eq) else {
        return Err(
            Diagnostic::error(ErrorCode::BadRange, sp(eq + 1, text.len()), "expected START..STOP")
                .with_label("no `..` here")
                .with_hint("write NAME=START..STOP, e.g. C=0..2mF or f=10Hz..1MHz"),
        );
    };
    let raw_name = &text[..eq];
    let name = raw_name.trim();
    let lead = raw_name.len() - raw_name.trim_start().len();
    if name.is_empty() {
        return Err(
            Diagnostic::error(ErrorCode::BadRange, sp(0, eq.max(1)), "no input named before `=`")
                .with_hint("write NAME=START..STOP, e.g. C=0..2mF"),
        );
    }
    let start = parse_expr_at(&text[eq + 1..dots], file, offset + eq + 1)?;
    let stop = parse_expr_at(&text[dots + 2..], file, offset + dots + 2)?;
    Ok(RangeText {
        name: Ident {
            name: name.to_string(),
            span: sp(lead, lead + name.len()),
        },
        start,
        stop,
    })
}

/// The value and quantity of a constant expression (a number with a unit,
/// or arithmetic on such). `what` names it in messages.
pub fn constant(sources: &crate::diag::SourceMap, e: &Expr, what: &str) -> Result<(C64, Quantity), Diagnostic> {
    let mut named: Option<Ident> = None;
    e.for_each_name(&mut |id| {
        if named.is_none() && id.name != "pi" && id.name != "j" {
            named = Some(id.clone());
        }
    });
    if let Some(id) = named {
        return Err(Diagnostic::error(
            ErrorCode::BadRange,
            id.span,
            format!("{what} must be a number with a unit, not a cell"),
        )
        .with_label("a name")
        .with_hint("write the value itself, e.g. `2 mF` or `1MHz`"));
    }
    let sheet = Sheet {
        sources: sources.clone(),
        main: e.span.file,
        stmts: vec![Stmt {
            kind: StmtKind::Def(Definition {
                name: Ident {
                    name: "value".into(),
                    span: e.span,
                },
                expr: e.clone(),
                display: None,
            }),
            span: e.span,
            line: 1,
            comment: None,
        }],
        errors: Vec::new(),
        ..Default::default()
    };
    let m = compile(&sheet);
    if let Some(d) = m.diagnostics.into_iter().find(Diagnostic::is_error) {
        return Err(d);
    }
    let c = &m.cells[0];
    let q = c.quantity().unwrap_or(Quantity::PLAIN);
    let mut slots = m.program.init.clone();
    crate::engine::eval::run(&m.program.code, &m.program, &mut slots);
    Ok((slots[c.slot as usize], q))
}

/// A bound or step checked against the input's quantity. A bare `0` fits
/// any unit.
fn bound_value(
    sources: &crate::diag::SourceMap,
    e: &Expr,
    input: &crate::engine::Cell,
    q: Quantity,
    what: &str,
) -> Result<f64, Diagnostic> {
    let (v, bq) = constant(sources, e, what)?;
    if v.im != 0.0 {
        return Err(
            Diagnostic::error(ErrorCode::BadRange, e.span, format!("{what} must be a real number"))
                .with_label("has an imaginary part"),
        );
    }
    if !v.re.is_finite() {
        return Err(Diagnostic::error(
            ErrorCode::BadRange,
            e.span,
            format!("{what} is not finite"),
        ));
    }
    let zero = v.re == 0.0 && bq.is_plain_number();
    let same_dim = bq.dim == q.dim;
    let angle_clash = q.kind == Kind::Angle && bq.kind != Kind::Angle;
    if !zero && (!same_dim || angle_clash) {
        let unit = crate::units::format::base_symbol(q);
        let hint = if angle_clash {
            "give the angle its unit: `0°..90°` or `0 rad..1.5 rad`".to_string()
        } else if bq.is_plain_number() {
            format!(
                "give it the unit of `{}`, e.g. `{}{}`",
                input.name,
                crate::units::format::fmt_sig(v.re, 6),
                if unit.is_empty() {
                    String::new()
                } else {
                    format!(" {unit}")
                }
            )
        } else {
            format!(
                "`{}` is {}; the range must be in the same unit",
                input.name,
                q.describe()
            )
        };
        return Err(Diagnostic::error(
            ErrorCode::DimensionMismatch,
            e.span,
            format!("{what} is {}, but `{}` is {}", bq.describe(), input.name, q.describe()),
        )
        .with_label(bq.describe())
        .with_hint(hint));
    }
    Ok(v.re)
}

/// The input cell named in a range, checked to be an input.
pub fn input_cell(m: &Model, name: &Ident) -> Result<CellId, Diagnostic> {
    let Some(id) = m.id(&name.name) else {
        let inputs = m.inputs().map(|(_, c)| c.name.as_str());
        let mut d = Diagnostic::error(
            ErrorCode::UnknownName,
            name.span,
            format!("the sheet has no input `{}`", name.name),
        )
        .with_label("no cell of this name");
        if let Some(s) = did_you_mean(&name.name, inputs) {
            d = d.with_hint(format!("did you mean `{s}`?"));
        } else {
            let list: Vec<&str> = m.inputs().map(|(_, c)| c.name.as_str()).take(20).collect();
            d = d.with_hint(format!("the sheet's inputs are: {}", list.join(", ")));
        }
        return Err(d);
    };
    let c = &m.cells[id as usize];
    if c.role != Role::Def || !c.input || c.quantity().is_none() {
        let uses: Vec<&str> = c.deps.iter().map(|&d| m.cells[d as usize].name.as_str()).collect();
        return Err(Diagnostic::error(
            ErrorCode::NotAnInput,
            name.span,
            format!("`{}` is computed from other cells, so it cannot be varied", name.name),
        )
        .with_label(format!("{} = {}", c.name, c.formula))
        .with_hint(if uses.is_empty() {
            "vary one of the sheet's inputs (cells whose formula is a value)".to_string()
        } else {
            format!(
                "vary an input it depends on ({}), or give it a value with --set \"{}=…\"",
                uses.join(", "),
                name.name
            )
        }));
    }
    Ok(id)
}

pub fn resolve_axis(
    m: &Model,
    sources: &crate::diag::SourceMap,
    r: &RangeText,
    points: Option<usize>,
    step: Option<&Expr>,
    log: bool,
) -> Result<Axis, Diagnostic> {
    let id = input_cell(m, &r.name)?;
    let c = &m.cells[id as usize];
    let q = c.quantity().unwrap_or(Quantity::PLAIN);
    let start = bound_value(sources, &r.start, c, q, "the start of the range")?;
    let stop = bound_value(sources, &r.stop, c, q, "the end of the range")?;
    let whole = r.start.span.to(r.stop.span);
    if log && !(start != 0.0 && stop != 0.0 && (start > 0.0) == (stop > 0.0)) {
        return Err(Diagnostic::error(
            ErrorCode::BadRange,
            whole,
            "a logarithmic range needs both ends non-zero and of one sign",
        )
        .with_hint("start a log sweep above zero, e.g. f=10Hz..1MHz"));
    }
    let (count, step_v) = match (points, step) {
        (Some(_), Some(s)) => {
            return Err(Diagnostic::error(
                ErrorCode::BadRange,
                s.span,
                "give either --points or --step, not both",
            ));
        }
        (_, Some(s)) => {
            if log {
                return Err(Diagnostic::error(
                    ErrorCode::BadRange,
                    s.span,
                    "a logarithmic sweep is given by --points, not --step",
                ));
            }
            let st = bound_value(sources, s, c, q, "the step")?;
            if st <= 0.0 {
                return Err(Diagnostic::error(
                    ErrorCode::BadRange,
                    s.span,
                    "the step must be more than zero",
                ));
            }
            let n = ((stop - start).abs() / st * (1.0 + 1e-12)).floor();
            if n.is_nan() || n >= 1e15 {
                return Err(
                    Diagnostic::error(ErrorCode::TooManyPoints, s.span, "this step gives too many points")
                        .with_hint("use a larger step"),
                );
            }
            (n as usize + 1, Some(st))
        }
        (n, None) => (n.unwrap_or(DEFAULT_POINTS), None),
    };
    if count == 0 {
        return Err(Diagnostic::error(
            ErrorCode::BadRange,
            whole,
            "a sweep needs at least one point",
        ));
    }
    if count > 1 && start == stop {
        return Err(Diagnostic::error(
            ErrorCode::BadRange,
            whole,
            "the range starts and ends at the same value",
        )
        .with_hint("give two different ends, e.g. C=0..2mF"));
    }
    Ok(Axis {
        name: r.name.name.clone(),
        cell: id,
        slot: c.slot,
        quantity: q,
        display: c.display.clone(),
        start,
        stop,
        count,
        log,
        step: step_v,
    })
}

/// Refuse a grid of more than `max` points.
pub fn check_size(axes: &[Axis], max: usize) -> Result<usize, Diagnostic> {
    let n = total_points(axes);
    if n > max {
        return Err(Diagnostic::unplaced(
            ErrorCode::TooManyPoints,
            format!("this sweep has {n} points; the limit is {max}"),
        )
        .with_hint("use fewer points, or raise the limit with --max-points N if you mean it"));
    }
    Ok(n)
}

/// The instructions that recompute `to` after `from` change: the code of
/// every cell that depends on one of `from` and is needed by one of `to`,
/// in evaluation order. The `from` cells' own code is left out, so the
/// values set in their slots stand.
pub fn sub_program(m: &Model, from: &[CellId], to: &[CellId]) -> Vec<Instr> {
    let cells = between(m, from, to);
    let mut code = Vec::new();
    for id in cells {
        let r = &m.cells[id as usize].code;
        code.extend_from_slice(&m.program.code[r.start as usize..r.end as usize]);
    }
    code
}

/// Cells that depend on one of `from` and that one of `to` needs, in
/// evaluation order, `from` excluded.
pub fn between(m: &Model, from: &[CellId], to: &[CellId]) -> Vec<CellId> {
    let n = m.cells.len();
    let mut affected = vec![false; n];
    let mut stack: Vec<CellId> = from.to_vec();
    while let Some(c) = stack.pop() {
        for &d in &m.dependents[c as usize] {
            if !affected[d as usize] {
                affected[d as usize] = true;
                stack.push(d);
            }
        }
    }
    let mut needed = vec![false; n];
    let mut stack: Vec<CellId> = to.to_vec();
    for &t in to {
        needed[t as usize] = true;
    }
    while let Some(c) = stack.pop() {
        for &d in &m.cells[c as usize].deps {
            if !needed[d as usize] {
                needed[d as usize] = true;
                stack.push(d);
            }
        }
    }
    let mut out: Vec<CellId> = (0..n as CellId)
        .filter(|&i| affected[i as usize] && needed[i as usize] && !from.contains(&i))
        .filter(|&i| m.rank[i as usize] != u32::MAX)
        .collect();
    out.sort_by_key(|&i| m.rank[i as usize]);
    out
}

/// Evaluate every point of the grid of `axes`, 64 at a time, starting from
/// the engine's current values, and hand each point's shown values to
/// `sink(point, values)` in order.
pub fn run(engine: &Engine, axes: &[Axis], series: &[Series], mut sink: impl FnMut(usize, &[C64])) {
    let m = &engine.model;
    let prog = &m.program;
    let from: Vec<CellId> = axes.iter().map(|a| a.cell).collect();
    let to: Vec<CellId> = series.iter().map(|s| s.cell).collect();
    let code = sub_program(m, &from, &to);
    let mut block = Block::new(prog);
    for (s, v) in engine.slots().iter().enumerate() {
        block.fill(s as u32, *v);
    }
    let total = total_points(axes);
    let mut vals = vec![C64::new(0.0, 0.0); series.len()];
    // Values of the axes, computed once.
    let grid: Vec<Vec<f64>> = axes
        .iter()
        .map(|a| (0..a.count).map(|i| a.value(i)).collect())
        .collect();
    let mut p = 0usize;
    while p < total {
        let lanes = LANES.min(total - p);
        for l in 0..lanes {
            for (k, a) in axes.iter().enumerate() {
                let i = axis_index(axes, k, p + l);
                block.set(a.slot, l, C64::new(grid[k][i], 0.0));
            }
        }
        block.run(&code, prog);
        for l in 0..lanes {
            for (v, s) in vals.iter_mut().zip(series) {
                *v = block.get(s.slot, l);
            }
            sink(p + l, &vals);
        }
        p += lanes;
    }
}

/// Evaluate a sweep and keep every point.
pub fn collect(engine: &Engine, axes: &[Axis], series: &[Series], title: Option<String>) -> SweepResult {
    let total = total_points(axes);
    let mut values: Vec<Vec<C64>> = series.iter().map(|_| Vec::with_capacity(total)).collect();
    run(engine, axes, series, |_, v| {
        for (col, z) in values.iter_mut().zip(v) {
            col.push(*z);
        }
    });
    SweepResult {
        title,
        axes: axes.to_vec(),
        series: series.to_vec(),
        values,
    }
}

/// One input of a sweep request.
#[derive(Clone, Debug)]
pub struct AxisRequest<'a> {
    /// `NAME=START..STOP`
    pub range: &'a str,
    /// Number of points (`DEFAULT_POINTS` when neither this nor `step`).
    pub points: Option<usize>,
    /// Distance between points, with a unit (`25 µF`).
    pub step: Option<&'a str>,
    pub log: bool,
}

/// A whole sweep in one call (for the interactive session and other
/// library users; the CLI streams large CSV sweeps through `run`).
#[derive(Clone, Debug)]
pub struct SweepRequest<'a> {
    /// One input, or two for a grid.
    pub vary: Vec<AxisRequest<'a>>,
    /// Cells, `cell.field`s or expressions.
    pub show: Vec<&'a str>,
    pub max_points: usize,
}

/// Run a sweep over `sheet` and keep every point.
pub fn sweep(sheet: Sheet, req: &SweepRequest) -> Result<SweepResult, Failure> {
    let exprs: Vec<(&str, &str)> = req.show.iter().map(|s| ("--show", *s)).collect();
    let mut study = Study::new(sheet, &exprs)?;
    if req.vary.is_empty() || req.vary.len() > 2 {
        return Err(Failure::one(
            &study.model().sources,
            Diagnostic::unplaced(ErrorCode::BadRange, "a sweep varies one input, or two for a grid"),
        ));
    }
    let mut axes = Vec::new();
    for a in &req.vary {
        axes.push(study.axis("--vary", a.range, a.points, a.step, a.log)?);
    }
    let fail = |d: Diagnostic| Failure::one(&study.model().sources, d);
    if axes.len() == 2 && axes[0].cell == axes[1].cell {
        return Err(fail(Diagnostic::unplaced(
            ErrorCode::BadRange,
            format!("`{}` is varied twice", axes[0].name),
        )));
    }
    check_size(&axes, req.max_points).map_err(fail)?;
    let mut series = Vec::new();
    for s in &req.show {
        series.push(study.series(s).map_err(fail)?);
    }
    let title = study.model().meta.get("title").map(str::to_string);
    Ok(collect(&study.engine, &axes, &series, title))
}

// ---- solve ----

/// What `solve` looks for.
#[derive(Clone, Debug)]
pub struct SolveRequest<'a> {
    /// `NAME=LO..HI`
    pub vary: &'a str,
    pub goal: Goal,
    /// The expression searched (`pf`, `abs(Vload)`).
    pub expr: &'a str,
    /// For `Goal::Root`, the target value (`0.95`, `480 V`).
    pub value: Option<&'a str>,
    /// Scan intervals; `None` for the default.
    pub scan: Option<usize>,
    /// Scan geometrically: `Some(true)` always, `Some(false)` never,
    /// `None` when the range spans more than two decades.
    pub log: Option<bool>,
}

/// A search's answer with what is needed to show it.
#[derive(Clone, Debug)]
pub struct Solution {
    pub input: Series,
    pub expr: Series,
    pub lo: f64,
    pub hi: f64,
    pub goal: Goal,
    /// The target value (for a root).
    pub target: Option<C64>,
    pub found: Found,
    /// The expression's full value at the answer.
    pub value_at: C64,
    pub scan: usize,
    pub log: bool,
}

/// Why `solve` gave no answer.
#[derive(Debug)]
pub enum SolveError {
    /// The request or the sheet is wrong.
    Invalid(Failure),
    /// The search ran and found nothing; the partial context is given.
    Search(Box<Unsolved>),
}

/// A search that ran and found nothing, with what is needed to say so.
#[derive(Debug)]
pub struct Unsolved {
    pub error: SearchError,
    pub input: Series,
    pub expr: Series,
    pub lo: f64,
    pub hi: f64,
    pub goal: Goal,
}

/// Split `EXPR = VALUE` at its one `=`.
pub fn split_target(text: &str) -> Option<(&str, &str)> {
    let i = text.find('=')?;
    if text[i + 1..].contains('=') || (i > 0 && matches!(text.as_bytes()[i - 1], b'~' | b'<' | b'>' | b'!')) {
        return None;
    }
    Some((&text[..i], &text[i + 1..]))
}

/// Find the input value that brings `expr` to `value`, or to its largest or
/// smallest value, over a range. The sheet is compiled with `expr` and
/// `value` as hidden cells, so both may use any of its cells.
pub fn solve(sheet: Sheet, req: &SolveRequest) -> Result<Solution, SolveError> {
    let mut exprs = vec![("expression", req.expr)];
    if let Some(v) = req.value {
        exprs.push(("target value", v));
    }
    let mut study = Study::new(sheet, &exprs).map_err(SolveError::Invalid)?;
    let ax = study
        .axis("--vary", req.vary, Some(2), None, false)
        .map_err(SolveError::Invalid)?;
    let m = study.model();
    let fail = |d: Diagnostic| SolveError::Invalid(Failure::one(&m.sources, d));
    let expr = study.series(req.expr).map_err(fail)?;
    let target = match req.value {
        Some(v) => {
            let s = study.series(v).map_err(fail)?;
            if !between(m, &[ax.cell], &[s.cell]).is_empty() || s.cell == ax.cell {
                return Err(fail(
                    Diagnostic::unplaced(
                        ErrorCode::BadRange,
                        format!("the target value `{v}` changes with `{}`", ax.name),
                    )
                    .with_hint("the target must be fixed while the input varies"),
                ));
            }
            if s.quantity.dim != expr.quantity.dim {
                return Err(fail(
                    Diagnostic::unplaced(
                        ErrorCode::DimensionMismatch,
                        format!(
                            "`{}` is {}, but the target `{v}` is {}",
                            req.expr.trim(),
                            expr.quantity.describe(),
                            s.quantity.describe()
                        ),
                    )
                    .with_hint("the two sides of the target must have one unit"),
                ));
            }
            Some(study.engine.slots()[s.slot as usize])
        }
        None => None,
    };
    let code = sub_program(m, &[ax.cell], &[expr.cell]);
    if expr.cell != ax.cell && !between(m, &[ax.cell], &[expr.cell]).contains(&expr.cell) {
        return Err(fail(
            Diagnostic::unplaced(
                ErrorCode::BadRange,
                format!("`{}` does not depend on `{}`", req.expr.trim(), ax.name),
            )
            .with_hint("varying an input the expression does not use cannot change it"),
        ));
    }
    let input = Series {
        name: ax.name.clone(),
        cell: ax.cell,
        slot: ax.slot,
        quantity: ax.quantity,
        display: ax.display.clone(),
    };
    let (lo, hi) = (ax.start.min(ax.stop), ax.start.max(ax.stop));
    let mut opts = SearchOptions::auto(lo, hi);
    if let Some(l) = req.log {
        opts.log = l;
    }
    if let Some(n) = req.scan {
        opts.scan = n;
    }
    let mut slots = study.engine.slots().to_vec();
    let prog = &m.program;
    let mut f = |x: f64| {
        slots[ax.slot as usize] = C64::new(x, 0.0);
        crate::engine::eval::run(&code, prog, &mut slots);
        slots[expr.slot as usize]
    };
    let goal_re = target.map_or(0.0, |t| t.re);
    let result = match req.goal {
        Goal::Root => find_root(|x| f(x).re - goal_re, lo, hi, &opts),
        Goal::Max => find_extreme(|x| f(x).re, lo, hi, true, &opts),
        Goal::Min => find_extreme(|x| f(x).re, lo, hi, false, &opts),
    };
    match result {
        Ok(found) => {
            let value_at = f(found.x);
            Ok(Solution {
                input,
                expr,
                lo,
                hi,
                goal: req.goal,
                target,
                found,
                value_at,
                scan: opts.scan,
                log: opts.log,
            })
        }
        Err(error) => Err(SolveError::Search(Box::new(Unsolved {
            error,
            input,
            expr,
            lo,
            hi,
            goal: req.goal,
        }))),
    }
}

/// A failed search in words: the message and a hint. `x` formats an input
/// value with its unit; `what` is the expression searched and `target`
/// the value sought (for a root).
#[allow(clippy::too_many_arguments)]
pub fn explain(
    error: &SearchError,
    goal: Goal,
    input: &str,
    what: &str,
    target: Option<&str>,
    lo: &str,
    hi: &str,
    x: &dyn Fn(f64) -> String,
) -> (String, String) {
    let range = format!("{input} from {lo} to {hi}");
    let aim = match (goal, target) {
        (Goal::Root, Some(t)) => format!("`{what}` = {t}"),
        (Goal::Root, None) => format!("`{what}` = its target"),
        (Goal::Max, _) => format!("the largest `{what}`"),
        (Goal::Min, _) => format!("the smallest `{what}`"),
    };
    match *error {
        SearchError::BadRange => (
            format!("no range to search for {aim}: {range}"),
            "give two different, finite ends".into(),
        ),
        SearchError::NoSolution {
            closest_x,
            closest_residual,
        } => (
            format!("`{what}` never reaches {} for {range}", target.unwrap_or("the target")),
            format!(
                "it comes closest at {input} = {} (off by {}); widen the range or check the target, and if the curve only touches the target, look for its peak instead (`is largest` in a sheet, --maximize on the command line)",
                x(closest_x),
                crate::units::format::fmt_sig(closest_residual, 4)
            ),
        ),
        SearchError::Several { count, at } => {
            let places: Vec<String> = at.iter().filter(|v| !v.is_nan()).map(|&v| x(v)).collect();
            let more = if count as usize > places.len() { ", …" } else { "" };
            (
                format!("{aim} holds at {count} places for {range}: {input} ≈ {}{more}", places.join(", ")),
                "narrow the range so it holds only the one you want".into(),
            )
        }
        SearchError::OnlyPoles { at } => (
            format!("`{what}` jumps across {} near {input} ≈ {} (a pole) but never reaches it", target.unwrap_or("the target"), x(at)),
            "the sign change is a discontinuity, not a solution; look at the curve with `ohmsheet sweep --chart`".into(),
        ),
        SearchError::Undefined => (
            format!("`{what}` is undefined (NaN or infinite) everywhere for {range}"),
            "check the range: the sheet has no finite value there".into(),
        ),
        SearchError::NotConverged { x: at, iterations } => (
            format!("no answer for {aim} after {iterations} iterations, near {input} ≈ {}", x(at)),
            "the curve may be too rough here; narrow the range".into(),
        ),
    }
}

/// The search form of a cell's formula, parsed again from its text.
fn search_ast(m: &Model, id: CellId) -> Option<crate::syntax::ast::Search> {
    let c = &m.cells[id as usize];
    let file = crate::diag::FileId(u32::MAX);
    match parse_line(&format!("x = {}", c.formula), file, 0, 1) {
        Ok(Some(Stmt {
            kind: StmtKind::Def(d), ..
        })) => match d.expr.kind {
            ExprKind::Search(s) => Some(*s),
            _ => None,
        },
        _ => None,
    }
}

/// The outcome of the in-sheet search in cell `id`, if it is one.
pub fn search_outcome(engine: &Engine, id: CellId) -> Option<search::Outcome> {
    let prog = &engine.model.program;
    let k = prog.searches.iter().position(|s| s.cell == id)?;
    Some(search::outcome(prog, k, engine.slots()))
}

/// Why the in-sheet search in cell `id` found no answer, as an error at
/// its line; `None` if the cell is not a search or it found one.
pub fn search_failure(engine: &Engine, id: CellId) -> Option<Diagnostic> {
    let m = &engine.model;
    let prog = &m.program;
    let k = prog.searches.iter().position(|s| s.cell == id)?;
    let search::Outcome::Failed(err) = search::outcome(prog, k, engine.slots()) else {
        return None;
    };
    let sr = &prog.searches[k];
    let ast = search_ast(m, id)?;
    let c = &m.cells[id as usize];
    let var = m.cell(&ast.var.name)?;
    let q = var.quantity().unwrap_or(Quantity::PLAIN);
    let style = crate::units::format::Style { digits: 4 };
    let x = |v: f64| crate::units::format::format_value(C64::new(v, 0.0), q, var.display.as_ref(), style).rect;
    // Spans of the re-parsed text are offsets into "x = formula".
    let text = format!("x = {}", c.formula);
    let slice = |e: &Expr| text.get(e.span.range()).unwrap_or("").trim().to_string();
    let target = slice(&ast.target);
    let value = match &ast.goal {
        crate::syntax::ast::SearchGoal::Equals(v) => Some(slice(v)),
        _ => None,
    };
    let (lo, hi) = (engine.slots()[sr.lo as usize].re, engine.slots()[sr.hi as usize].re);
    let (lo, hi) = (lo.min(hi), lo.max(hi));
    let (msg, hint) = explain(
        &err,
        sr.goal,
        &ast.var.name,
        &target,
        value.as_deref(),
        &x(lo),
        &x(hi),
        &x,
    );
    Some(
        Diagnostic::error(ErrorCode::SearchFailed, c.stmt_span, msg)
            .with_label(format!("`{}` has no value", c.name))
            .with_hint(hint),
    )
}
