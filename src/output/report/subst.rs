//! The formula with the numbers put in: every cell name replaced by its
//! value and unit, brackets added only where the layout needs them.

use crate::engine::{CellId, Engine, Model};
use crate::funcs::Shape;
use crate::syntax::ast::{BinOp, Expr, ExprKind, UnOp};
use crate::units::format::{format_value, Style};

/// Where a piece of a formula sits, which decides whether a value put in
/// its place needs brackets to keep the formula's meaning.
#[derive(Clone, Copy, PartialEq, Eq)]
pub(super) enum Pos {
    /// The whole formula, inside brackets, or a function argument.
    Top,
    /// An operand of an operator.
    Operand,
    /// The base of `^`: a unit right before `^` would take the power.
    PowBase,
}

pub(super) struct Substituter<'a> {
    pub(super) engine: &'a Engine,
    pub(super) style: Style,
}

impl Substituter<'_> {
    fn model(&self) -> &Model {
        &self.engine.model
    }

    /// The formula written again with every cell name replaced by its
    /// value and unit. Numbers, constants, functions and brackets stay as
    /// written; the tree decides the layout, so precedence is kept.
    pub(super) fn expr(&self, e: &Expr, pos: Pos) -> String {
        let m = self.model();
        match &e.kind {
            ExprKind::Number { unit, .. } => {
                let s = m.sources.slice(e.span).to_string();
                if pos == Pos::PowBase && unit.is_some() {
                    format!("({s})")
                } else {
                    s
                }
            }
            ExprKind::Name(id) => match m.id(&id.name) {
                // A record passed whole (a two-port to `cascade`) keeps its
                // name: it has no single value to put in its place.
                Some(cid) if !matches!(m.cells[cid as usize].shape, Some(Shape::Record(_))) => {
                    self.cell_value(cid, 0, pos)
                }
                _ => id.name.clone(),
            },
            ExprKind::Field(base, field) => {
                if let ExprKind::Name(id) = &base.kind {
                    if let Some(cid) = m.id(&id.name) {
                        if let Some(Shape::Record(fields)) = &m.cells[cid as usize].shape {
                            if let Some(k) = fields.iter().position(|(n, _)| *n == field.name) {
                                return self.cell_value(cid, k, pos);
                            }
                        }
                    }
                }
                format!("{}.{}", self.expr(base, Pos::Operand), field.name)
            }
            ExprKind::Call { func, args } => {
                let a: Vec<String> = args.iter().map(|x| self.expr(x, Pos::Top)).collect();
                format!("{}({})", func.name, a.join(", "))
            }
            ExprKind::Unary(op, x) => {
                let s = format!(
                    "{}{}",
                    match op {
                        UnOp::Neg => "-",
                        UnOp::Pos => "+",
                    },
                    self.expr(x, Pos::Operand)
                );
                if pos == Pos::PowBase {
                    format!("({s})")
                } else {
                    s
                }
            }
            ExprKind::Binary(op, a, b) => {
                let s = match op {
                    BinOp::Pow => format!("{}^{}", self.expr(a, Pos::PowBase), self.expr(b, Pos::Operand)),
                    BinOp::Mul => format!("{} × {}", self.expr(a, Pos::Operand), self.expr(b, Pos::Operand)),
                    _ => format!(
                        "{} {} {}",
                        self.expr(a, Pos::Operand),
                        op.symbol(),
                        self.expr(b, Pos::Operand)
                    ),
                };
                if pos == Pos::PowBase {
                    format!("({s})")
                } else {
                    s
                }
            }
            ExprKind::Paren(x, unit) => match unit {
                Some(u) => {
                    let s = format!("({}) {}", self.expr(x, Pos::Top), m.sources.slice(u.span));
                    if pos == Pos::PowBase {
                        format!("({s})")
                    } else {
                        s
                    }
                }
                None => format!("({})", self.expr(x, Pos::Top)),
            },
            // A search is shown as written: its inputs take many values.
            ExprKind::Search(_) => m.sources.slice(e.span).to_string(),
        }
    }

    /// Slot `k` of cell `id`, written so it reads as one operand where it
    /// stands: `120 V`, `j3.88 Ω`, `(8.97 + j3.88) Ω`, and `(-5 V)` after an
    /// operator.
    fn cell_value(&self, id: CellId, k: usize, pos: Pos) -> String {
        let m = self.model();
        let c = &m.cells[id as usize];
        let (q, display) = match &c.shape {
            Some(Shape::Scalar(q)) => (*q, c.display.as_ref()),
            Some(Shape::Record(f)) => (f[k].1, None),
            None => return c.name.clone(),
        };
        let z = self.engine.values(id)[k];
        let f = format_value(z, q, display, self.style);
        let num = f
            .rect
            .strip_suffix(f.unit.as_str())
            .unwrap_or(&f.rect)
            .trim_end()
            .to_string();
        let two_parts = num.contains(' ');
        let glued = f.unit == "°";
        let text = match (two_parts, f.unit.is_empty()) {
            (true, true) => format!("({num})"),
            (true, false) => format!("({num}) {}", f.unit),
            (false, true) => num.clone(),
            (false, false) if glued => format!("{num}{}", f.unit),
            (false, false) => format!("{num} {}", f.unit),
        };
        let signed = num.starts_with('-');
        let needs = match pos {
            Pos::Top => false,
            Pos::Operand => signed,
            Pos::PowBase => signed || !f.unit.is_empty() || two_parts,
        };
        if needs {
            format!("({text})")
        } else {
            text
        }
    }
}
