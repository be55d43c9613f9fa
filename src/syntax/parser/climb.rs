//! Operator precedence, climbed with pest's `PrattParser`, and the bounds
//! on how deep a formula may nest.

use std::sync::OnceLock;

use pest::iterators::{Pair, Pairs};
use pest::pratt_parser::{Assoc, Op, PrattParser};

use super::{Cx, Rule, LIMITS, R};
use crate::diag::{Diagnostic, ErrorCode};
use crate::syntax::ast::*;

fn pratt() -> &'static PrattParser<Rule> {
    static P: OnceLock<PrattParser<Rule>> = OnceLock::new();
    P.get_or_init(|| {
        // Loosest first. Forms a reader could take two ways are refused
        // while climbing (`ambiguity.rs`), so the associativity given to
        // comparisons, `∠` and `^` only decides which tree is refused.
        PrattParser::new()
            .op(Op::infix(Rule::lt, Assoc::Left)
                | Op::infix(Rule::le, Assoc::Left)
                | Op::infix(Rule::gt, Assoc::Left)
                | Op::infix(Rule::ge, Assoc::Left))
            .op(Op::infix(Rule::add, Assoc::Left) | Op::infix(Rule::sub, Assoc::Left))
            .op(Op::infix(Rule::par, Assoc::Left) | Op::infix(Rule::ser, Assoc::Left))
            .op(Op::infix(Rule::angle, Assoc::Left))
            .op(Op::infix(Rule::mul, Assoc::Left) | Op::infix(Rule::div, Assoc::Left))
            .op(Op::prefix(Rule::neg) | Op::prefix(Rule::pos))
            .op(Op::infix(Rule::pow, Assoc::Right))
    })
}

impl Cx<'_> {
    pub(super) fn expr(&self, p: Pair<Rule>) -> R<Expr> {
        let span = self.span(&p);
        let inner = p.into_inner();
        // Prefix signs and `^` recurse in the Pratt parser; bound them.
        let chained = inner
            .clone()
            .filter(|q| matches!(q.as_rule(), Rule::neg | Rule::pos | Rule::pow))
            .count();
        if chained > 100 {
            return Err(Diagnostic::error(
                ErrorCode::NestingTooDeep,
                span,
                "too many signs and powers in one formula",
            )
            .with_hint("split the formula into several named cells"));
        }
        let (e, depth) = self.climb(inner)?;
        if depth > LIMITS.max_expr_depth {
            return Err(Diagnostic::error(
                ErrorCode::NestingTooDeep,
                span,
                format!("formula nested {depth} deep; the limit is {}", LIMITS.max_expr_depth),
            )
            .with_hint("split the formula into several named cells"));
        }
        Ok(e)
    }

    pub(super) fn climb(&self, pairs: Pairs<Rule>) -> R<(Expr, usize)> {
        pratt()
            .map_primary(|p| self.atom(p))
            .map_prefix(|op, rhs| {
                let (rhs, d) = rhs?;
                let span = self.span(&op).to(rhs.span);
                let u = if op.as_rule() == Rule::neg {
                    UnOp::Neg
                } else {
                    UnOp::Pos
                };
                self.refuse_ambiguous_prefix(u, span, &rhs)?;
                Ok((
                    Expr {
                        kind: ExprKind::Unary(u, Box::new(rhs)),
                        span,
                    },
                    d + 1,
                ))
            })
            .map_infix(|lhs, op, rhs| {
                let (lhs, dl) = lhs?;
                let (rhs, dr) = rhs?;
                let b = match op.as_rule() {
                    Rule::add => BinOp::Add,
                    Rule::sub => BinOp::Sub,
                    Rule::mul => BinOp::Mul,
                    Rule::div => BinOp::Div,
                    Rule::pow => BinOp::Pow,
                    Rule::par => BinOp::Parallel,
                    Rule::ser => BinOp::Series,
                    Rule::angle => BinOp::Angle,
                    Rule::lt => BinOp::Lt,
                    Rule::le => BinOp::Le,
                    Rule::gt => BinOp::Gt,
                    Rule::ge => BinOp::Ge,
                    r => unreachable!("infix {r:?}"),
                };
                let span = lhs.span.to(rhs.span);
                self.refuse_ambiguous_infix(b, span, &lhs, &rhs)?;
                Ok((
                    Expr {
                        kind: ExprKind::Binary(b, Box::new(lhs), Box::new(rhs)),
                        span,
                    },
                    1 + dl.max(dr),
                ))
            })
            .parse(pairs)
    }
}
