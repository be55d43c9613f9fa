//! Why a value is not a number: the first call in a cell's formula whose
//! arguments lie outside the function's domain (`Builtin::domain`), with
//! the argument, its value and the reason, located on the argument.
//!
//! One explanation serves every place a NaN is reported — `run`, `check`,
//! `report`, `watch`, the session, sweeps and the batch errors file — so
//! they all say the same thing. It is called only on the error path: it
//! re-reads the cell's statement, and evaluates the arguments of each call
//! against the values the failing case had.

use num_complex::Complex64 as C64;

use super::eval::Engine;
use super::model::{CellId, Model};

use crate::diag::{Diagnostic, ErrorCode, Span};
use crate::funcs::{self, Shape};
use crate::syntax::ast::{Expr, ExprKind, StmtKind, Tolerance};
use crate::syntax::parse_line;
use crate::units::format::{format_value, Style};

/// What made a cell's value undefined.
#[derive(Clone, Debug, PartialEq)]
pub struct Why {
    /// The function whose domain was left.
    pub func: &'static str,
    /// The argument at fault, or the whole call when no one argument is.
    pub span: Span,
    /// The call.
    pub call_span: Span,
    /// `argument `pf1` = 1.2 is out of range: a power factor lies within −1 … +1`
    pub message: String,
}

impl Why {
    /// The message with the function named: "`q_pfc`: argument …".
    pub fn text(&self) -> String {
        format!("`{}`: {}", self.func, self.message)
    }
}

/// The calls of an expression, innermost and leftmost first (the order
/// they are evaluated in).
fn calls<'e>(e: &'e Expr, out: &mut Vec<&'e Expr>) {
    match &e.kind {
        ExprKind::Number { .. } | ExprKind::Name(_) => {}
        ExprKind::Field(b, _) | ExprKind::Unary(_, b) | ExprKind::Paren(b, _) => calls(b, out),
        ExprKind::Binary(_, a, b) => {
            calls(a, out);
            calls(b, out);
        }
        ExprKind::Call { args, .. } => {
            for a in args {
                calls(a, out);
            }
            out.push(e);
        }
        // a search explains its own failure (`sweep::search_failure`)
        ExprKind::Search(_) => {}
    }
}

/// The statement of cell `id`, parsed again from its source.
fn statement(model: &Model, id: CellId) -> Option<crate::syntax::ast::Stmt> {
    let c = model.cells.get(id as usize)?;
    let text = model.sources.slice(c.stmt_span);
    parse_line(text, c.stmt_span.file, c.stmt_span.start as usize, c.line).ok()?
}

fn exprs(stmt: &crate::syntax::ast::Stmt) -> Vec<&Expr> {
    match &stmt.kind {
        StmtKind::Def(d) => vec![&d.expr],
        StmtKind::Check(c) => {
            let mut v = vec![&c.lhs, &c.rhs];
            if let Tolerance::Absolute(t) = &c.tol {
                v.push(t);
            }
            v
        }
        StmtKind::Expr(e) => vec![e],
        StmtKind::Directive(_) => Vec::new(),
    }
}

impl Engine {
    /// Why cell `id` is not a finite number, from the current values: the
    /// first call in its formula whose arguments fail the function's domain
    /// check. `None` when no function explains it (then the generic
    /// message stands).
    pub fn explain(&mut self, id: CellId) -> Option<Why> {
        let stmt = statement(&self.model, id)?;
        let mut found = Vec::new();
        for e in exprs(&stmt) {
            calls(e, &mut found);
        }
        let with_domain: Vec<(&Expr, &'static funcs::Builtin)> = found
            .into_iter()
            .filter_map(|e| {
                let ExprKind::Call { func, .. } = &e.kind else {
                    return None;
                };
                let (_, f) = funcs::find(&func.name)?;
                f.domain.map(|_| (e, f))
            })
            .collect();
        if with_domain.is_empty() {
            return None;
        }
        let ctx = self.model.ctx;
        for (e, f) in with_domain {
            let ExprKind::Call { args, .. } = &e.kind else { continue };
            let mut vals = Vec::with_capacity(args.len());
            let mut quantities = Vec::with_capacity(args.len());
            for a in args {
                match self.evaluate(a) {
                    Ok((Shape::Scalar(q), v)) if v.len() == 1 => {
                        vals.push(v[0]);
                        quantities.push(q);
                    }
                    _ => break,
                }
            }
            if vals.len() != args.len() || vals.iter().any(|z| z.re.is_nan() || z.im.is_nan()) {
                // an argument that is NaN itself was explained (or not) by
                // the calls inside it, which come first
                continue;
            }
            let Some(err) = (f.domain?)(&vals, &ctx) else { continue };
            let (span, message) = match err.arg {
                Some(i) if i < args.len() => {
                    let p = f.params.get(i).or(f.params.last()).map_or("?", |p| p.name);
                    let shown = format_value(vals[i], quantities[i], None, Style { digits: 6 }).rect;
                    (
                        args[i].span,
                        format!("argument `{p}` = {shown} is out of range: {}", err.message),
                    )
                }
                _ => (e.span, err.message),
            };
            return Some(Why {
                func: f.name,
                span,
                call_span: e.span,
                message,
            });
        }
        None
    }

    /// The error for a cell whose value came out NaN: the function whose
    /// domain was left, located on the argument, or else the general
    /// message.
    pub fn nan_diagnostic(&mut self, id: CellId) -> Diagnostic {
        let what = {
            let c = &self.model.cells[id as usize];
            if c.is_check() {
                "this check".to_string()
            } else {
                format!("`{}`", c.name)
            }
        };
        if let Some(why) = self.explain(id) {
            let label = if why.span == why.call_span {
                "undefined here"
            } else {
                "out of range"
            };
            let mut d = Diagnostic::error(
                ErrorCode::NotANumber,
                why.span,
                format!("{what} is NaN: {}", why.text()),
            )
            .with_label(label);
            if why.call_span != why.span {
                d = d.with_secondary(why.call_span, format!("`{}` is undefined here", why.func));
            }
            return d.with_hint("cells using this one are undefined too");
        }
        Diagnostic::error(
            ErrorCode::NotANumber,
            self.model.cells[id as usize].stmt_span,
            format!("{what} evaluated to NaN (not a number)"),
        )
        .with_label("undefined result produced here")
        .with_hint("look for 0/0, ∞ − ∞, 0·∞ or an input set to NaN; cells using this one are NaN too")
    }
}

/// `explain` for one case of a batch or sweep. `engine` is a scratch engine
/// over the sheet's model (made once, `Engine::new(model.clone())`, and kept
/// between cases); `slots` are the case's values, as the block evaluator
/// left them for its lane (`Block::lane_slots`).
pub fn explain_case(engine: &mut Engine, slots: &[C64], id: CellId) -> Option<Why> {
    engine.load_slots(slots);
    engine.explain(id)
}
