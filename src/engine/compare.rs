//! Lowering the comparisons `<`, `<=`, `>`, `>=` (docs/grammar.md): both
//! sides of one dimension and a kind that could be added, real parts
//! compared, the result a plain 1 or 0.

use super::model::Val;
use super::ops::Op;
use super::program::{Emitter, Operand};
use crate::diag::{Diagnostic, ErrorCode};
use crate::syntax::ast::{BinOp, Expr};
use crate::units::kind::kind_of_sum;
use crate::units::Quantity;

/// A plain number known to be zero: it fits any dimension and kind, as a
/// bare `0` does in a search range.
fn is_zero(o: Operand, q: Quantity) -> bool {
    q.is_plain_number() && o.konst().is_some_and(|c| c.re == 0.0 && c.im == 0.0)
}

/// `a op b`, with `x`, `y` the lowered operands of `a`, `b`.
pub(super) fn lower(
    em: &mut Emitter,
    whole: &Expr,
    op: BinOp,
    (a, x, qa): (&Expr, Operand, Quantity),
    (b, y, qb): (&Expr, Operand, Quantity),
) -> Result<Val, Diagnostic> {
    let zero = is_zero(x, qa) || is_zero(y, qb);
    if qa.dim != qb.dim && !zero {
        return Err(Diagnostic::error(
            ErrorCode::DimensionMismatch,
            b.span,
            format!("cannot compare {} with {}", qa.describe(), qb.describe()),
        )
        .with_label(qb.describe())
        .with_secondary(a.span, qa.describe())
        .with_hint("both sides of a comparison must have the same dimension (a bare 0 fits any)"));
    }
    if !zero {
        if let Err(why) = kind_of_sum(qa.kind, qb.kind, qa.dim) {
            return Err(Diagnostic::error(
                ErrorCode::AngleAmbiguous,
                whole.span,
                format!("cannot compare {} with {}", qa.describe(), qb.describe()),
            )
            .with_label(why)
            .with_hint("give the number its unit: `30°`, `0.5 rad`, `60 Hz` or `377 rad/s`"));
        }
    }
    for (e, o) in [(a, x), (b, y)] {
        if o.konst().is_some_and(|c| c.im != 0.0) {
            return Err(
                Diagnostic::error(ErrorCode::DimensionMismatch, e.span, "a comparison of a complex value")
                    .with_label("this has an imaginary part")
                    .with_hint("comparisons use real parts only; compare `abs(…)`, `re(…)` or `im(…)` to say which"),
            );
        }
    }
    let o = match op {
        BinOp::Lt => Op::Lt,
        BinOp::Le => Op::Le,
        BinOp::Gt => Op::Gt,
        BinOp::Ge => Op::Ge,
        _ => unreachable!("not a comparison: {op:?}"),
    };
    Ok(Val::Scalar(em.bin(o, x, y), Quantity::PLAIN))
}
