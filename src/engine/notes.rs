//! Notes: warnings about formulas that are valid but often not what was
//! meant. A note never stops a sheet and never changes the exit status;
//! `run`, `check`, `report`, `watch` and the session show it.
//!
//! - A trigonometric function given a plain whole number larger than 2π
//!   (`cos(30)`): the language reads a plain number as radians there, and
//!   such a number is far more likely degrees. `cos(30°)` says degrees,
//!   `cos(30 rad)` says radians; either silences the note.

use crate::diag::{Diagnostic, ErrorCode};
use crate::syntax::ast::*;

/// Functions whose argument is an angle.
const TRIG: &[&str] = &["sin", "cos", "tan"];

/// The notes on one statement, appended to `out`.
pub fn of_statement(stmt: &Stmt, out: &mut Vec<Diagnostic>) {
    match &stmt.kind {
        StmtKind::Def(d) => walk(&d.expr, out),
        StmtKind::Expr(e) => walk(e, out),
        StmtKind::Check(c) => {
            walk(&c.lhs, out);
            walk(&c.rhs, out);
            if let Tolerance::Absolute(t) = &c.tol {
                walk(t, out);
            }
        }
        StmtKind::Network(h) => walk(&h.freq, out),
        StmtKind::Directive(_) | StmtKind::End => {}
    }
}

fn walk(e: &Expr, out: &mut Vec<Diagnostic>) {
    match &e.kind {
        ExprKind::Number { .. } | ExprKind::Name(_) => {}
        ExprKind::Field(b, _) => walk(b, out),
        ExprKind::Call { func, args } => {
            if TRIG.contains(&func.name.as_str()) {
                if let Some(d) = args.first().and_then(|a| degrees_as_radians(&func.name, a)) {
                    out.push(d);
                }
            }
            args.iter().for_each(|a| walk(a, out));
        }
        ExprKind::Unary(_, x) | ExprKind::Paren(x, _) => walk(x, out),
        ExprKind::Binary(_, a, b) => {
            walk(a, out);
            walk(b, out);
        }
        ExprKind::Search(s) => {
            walk(&s.lo, out);
            walk(&s.hi, out);
            walk(&s.target, out);
            if let SearchGoal::Equals(v) = &s.goal {
                walk(v, out);
            }
        }
    }
}

/// The note for `f(arg)` when `arg` is a plain whole number beyond 2π,
/// with or without a sign.
fn degrees_as_radians(f: &str, arg: &Expr) -> Option<Diagnostic> {
    // Signs and brackets around the number (`-(60)`, `(30)`) change
    // nothing: it is still a plain literal (issue-13 audit).
    let mut negative = false;
    let mut lit = arg;
    loop {
        match &lit.kind {
            ExprKind::Unary(UnOp::Neg, x) => {
                negative = !negative;
                lit = x.as_ref();
            }
            ExprKind::Unary(UnOp::Pos, x) | ExprKind::Paren(x, None) => lit = x.as_ref(),
            _ => break,
        }
    }
    let sign = if negative { "-" } else { "" };
    let ExprKind::Number {
        value,
        imag: false,
        unit: None,
    } = lit.kind
    else {
        return None;
    };
    if !(value.fract() == 0.0 && value > std::f64::consts::TAU && value < 1e15) {
        return None;
    }
    let n = format!("{sign}{value}");
    Some(
        Diagnostic::error(
            ErrorCode::TrigRadians,
            arg.span,
            format!(
                "`{f}({n})` takes {n} as radians (about {:.0}°)",
                (if sign == "-" { -value } else { value }).to_degrees()
            ),
        )
        .with_label("a plain number here is in radians")
        .with_hint(format!(
            "for degrees write `{f}({n}°)`; to keep radians and silence this note write `{f}({n} rad)`"
        ))
        .warning(),
    )
}
