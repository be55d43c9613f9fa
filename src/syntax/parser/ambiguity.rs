//! Forms a reader could take two ways, refused while precedence is climbed
//! (docs/grammar.md, "Expressions"). Each refusal is located on the
//! ambiguous part and its hint writes out both bracketings from the user's
//! own text, so either can be pasted back.
//!
//! Refused:
//! - anything but one signed operand as the angle of `∠` (`2 ∠ 30° * 3`,
//!   `2 ∠ 30°^2`), and two `∠` in a row;
//! - `||` and `--` mixed without brackets;
//! - a minus on a non-literal at the start of the left side of `||` or
//!   `--` (`-Z1 || Z2`; `-j30 Ω || 50 Ω` is a negative number and fine);
//! - a minus before a power (`-2^2`, `-x^2`);
//! - chained powers (`2^3^2`) and chained comparisons (`a < b < c`).
//!
//! Brackets are `Paren` nodes in the tree, so a bracketed operand is never
//! looked into: the checks see only the operators written side by side.

use super::{Cx, R};
use crate::diag::{Diagnostic, ErrorCode, Span};
use crate::syntax::ast::*;

/// The node without brackets: `None` for a bracketed one.
fn bare_binary(e: &Expr) -> Option<(BinOp, &Expr, &Expr)> {
    match &e.kind {
        ExprKind::Binary(op, a, b) => Some((*op, a, b)),
        _ => None,
    }
}

/// The first operand of an unbracketed run of operators: the atom (with
/// its signs) a tighter reading of the operator before it would take.
fn first_operand(mut e: &Expr) -> &Expr {
    loop {
        match &e.kind {
            ExprKind::Binary(_, a, _) => e = a,
            ExprKind::Unary(_, x) if matches!(x.kind, ExprKind::Binary(..)) => e = x,
            _ => return e,
        }
    }
}

/// The leftmost operand of an unbracketed run, signs included.
fn leftmost(mut e: &Expr) -> &Expr {
    while let ExprKind::Binary(_, a, _) = &e.kind {
        e = a;
    }
    e
}

impl Cx<'_> {
    /// Source text between two file offsets of this line.
    fn text(&self, start: u32, end: u32) -> &str {
        let a = (start as usize).saturating_sub(self.offset);
        let b = (end as usize).saturating_sub(self.offset);
        self.line.get(a..b).unwrap_or("")
    }

    /// `outer` reads `… op1 (inner …)`: the operator before `inner` is
    /// looser. The two bracketings: the inner run whole, or the operator
    /// before it taking only the run's first operand.
    fn right_readings(&self, outer: Span, inner: &Expr) -> (String, String) {
        let first = first_operand(inner);
        let as_read = format!(
            "{}({})",
            self.text(outer.start, inner.span.start),
            self.text(inner.span.start, inner.span.end)
        );
        let other = format!(
            "({}){}",
            self.text(outer.start, first.span.end),
            self.text(first.span.end, outer.end)
        );
        (as_read, other)
    }

    /// `outer` reads `(a op1 b) op2 c`, with `inner` = `a op1 b` and `b` its
    /// right operand. The two bracketings: as read, or `a op1 (b op2 c)`.
    fn left_readings(&self, outer: Span, inner: &Expr, b: &Expr) -> (String, String) {
        let as_read = format!(
            "({}){}",
            self.text(inner.span.start, inner.span.end),
            self.text(inner.span.end, outer.end)
        );
        let other = format!(
            "{}({})",
            self.text(outer.start, b.span.start),
            self.text(b.span.start, outer.end)
        );
        (as_read, other)
    }

    fn ambiguous(&self, span: Span, message: String, readings: (String, String), note: &str) -> Diagnostic {
        let (a, b) = readings;
        let mut hint = format!("write `{}` or `{}`", a.trim(), b.trim());
        if !note.is_empty() {
            hint.push_str("; ");
            hint.push_str(note);
        }
        Diagnostic::error(ErrorCode::AmbiguousOperators, span, message)
            .with_label("this could be read two ways")
            .with_hint(hint)
    }

    /// A sign applied to `rhs`, the whole covering `span`.
    pub(super) fn refuse_ambiguous_prefix(&self, op: UnOp, span: Span, rhs: &Expr) -> R<()> {
        if op == UnOp::Neg {
            if let Some((BinOp::Pow, _, _)) = bare_binary(rhs) {
                return Err(self.ambiguous(
                    span,
                    "a minus sign before a power".into(),
                    self.right_readings(span, rhs),
                    "the first negates the power, the second raises the negative number",
                ));
            }
        }
        Ok(())
    }

    /// `lhs op rhs`, the whole covering `span`.
    pub(super) fn refuse_ambiguous_infix(&self, op: BinOp, span: Span, lhs: &Expr, rhs: &Expr) -> R<()> {
        match op {
            BinOp::Angle => {
                if let Some((BinOp::Angle, _, b)) = bare_binary(lhs) {
                    return Err(self.ambiguous(span, "two `∠` in a row".into(), self.left_readings(span, lhs, b), ""));
                }
                let mut angle = rhs;
                while let ExprKind::Unary(_, x) = &angle.kind {
                    angle = x;
                }
                if let Some((inner, _, _)) = bare_binary(angle) {
                    return Err(self.ambiguous(
                        span,
                        format!(
                            "the angle after `∠` is one value (a number with its unit, a name, a call or a bracket), and `{}` follows it",
                            inner.symbol()
                        ),
                        self.right_readings(span, rhs),
                        "the magnitude before `∠` is the whole product or quotient, but the angle is not",
                    ));
                }
            }
            BinOp::Parallel | BinOp::Series => {
                if let Some((inner @ (BinOp::Parallel | BinOp::Series), _, b)) = bare_binary(lhs) {
                    if inner != op {
                        return Err(self.ambiguous(
                            span,
                            format!("`{}` and `{}` mixed without brackets", inner.symbol(), op.symbol()),
                            self.left_readings(span, lhs, b),
                            "",
                        ));
                    }
                }
                let first = leftmost(lhs);
                if let ExprKind::Unary(UnOp::Neg, x) = &first.kind {
                    if !matches!(x.kind, ExprKind::Number { .. }) {
                        let minus = self.text(first.span.start, x.span.start).trim_end();
                        let as_read = format!(
                            "({}){}",
                            self.text(lhs.span.start, lhs.span.end),
                            self.text(lhs.span.end, span.end)
                        );
                        let other = format!("{minus}({})", self.text(x.span.start, span.end));
                        return Err(self.ambiguous(
                            span,
                            format!("a minus sign before the left side of `{}`", op.symbol()),
                            (as_read, other),
                            "a minus on a number is part of the number (`-j30 Ω || 50 Ω` is accepted)",
                        ));
                    }
                }
            }
            BinOp::Pow => {
                if let Some((BinOp::Pow, _, _)) = bare_binary(rhs) {
                    return Err(self.ambiguous(span, "chained powers".into(), self.right_readings(span, rhs), ""));
                }
            }
            o if o.is_comparison() => {
                if let Some((inner, _, b)) = bare_binary(lhs) {
                    if inner.is_comparison() {
                        return Err(self.ambiguous(
                            span,
                            "comparisons do not chain".into(),
                            self.left_readings(span, lhs, b),
                            "to test that a value lies in a range, multiply two comparisons: `(lo < x) * (x < hi)`",
                        ));
                    }
                }
            }
            _ => {}
        }
        Ok(())
    }
}
