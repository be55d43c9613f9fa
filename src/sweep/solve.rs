//! `solve`: the input value that brings an expression to a target or
//! to an extreme, and a failed search in words.

use num_complex::Complex64 as C64;

use super::{between, sub_program, Failure, Series, Study};
use crate::diag::{Diagnostic, ErrorCode};
use crate::engine::search::{self, find_extreme, find_root, Found, Goal, SearchError, SearchOptions};
use crate::engine::{CellId, Engine, Model};
use crate::sheet::Sheet;
use crate::syntax::ast::{Expr, ExprKind, Stmt, StmtKind};
use crate::syntax::parse_line;
use crate::units::Quantity;

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
            // As a check's two sides: `arg(Z) = 0.5` (degrees or radians?)
            // and `im(S) = 100 kW` (a var against a W) are refused.
            if let Err(c) = crate::units::kind::kind_of_sum(expr.quantity.kind, s.quantity.kind, expr.quantity.dim) {
                let code = if c.angle {
                    ErrorCode::AngleAmbiguous
                } else {
                    ErrorCode::KindMismatch
                };
                return Err(fail(
                    Diagnostic::unplaced(
                        code,
                        format!(
                            "the target `{v}` cannot be compared with `{}`: {}",
                            req.expr.trim(),
                            c.message
                        ),
                    )
                    .with_hint(if c.angle {
                        "give the angle its unit: `30°` or `0.5 rad`"
                    } else {
                        c.hint
                    }),
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
        // a swept input takes real values
        real: true,
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
    search_failure_in(&engine.model, engine.slots(), id)
}

/// [`search_failure`] for a model whose program was run into `slots`
/// (one case of a batch).
pub fn search_failure_in(m: &Model, slots: &[C64], id: CellId) -> Option<Diagnostic> {
    let prog = &m.program;
    let k = prog.searches.iter().position(|s| s.cell == id)?;
    let search::Outcome::Failed(err) = search::outcome(prog, k, slots) else {
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
    let (lo, hi) = (slots[sr.lo as usize].re, slots[sr.hi as usize].re);
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
