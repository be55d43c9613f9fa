//! Why a value is infinite: where in a cell's formula the infinity was
//! born (the division by zero, the call at a pole, the cell it came from)
//! and whether it is an error.
//!
//! An impedance or an admittance may legitimately be infinite — an open
//! or a short element, whose limit `||`, `--` and the network functions
//! take — and gets a warning saying which it is and where it came from.
//! Any other infinite quantity (a current, a voltage, a power, a plain
//! ratio, a level in dB) has no physical reading and is an error located
//! on the operation, reported once, in the first cell of a chain. `run`,
//! `check`, `report`, `watch`, sweeps, the session and the batch errors
//! file use it; like `explain`, it runs only on the error path.

use num_complex::Complex64 as C64;

use super::eval::Engine;
use super::explain::{argument, exprs, statement};
use super::model::{CellId, Model};

use crate::diag::{Diagnostic, ErrorCode};
use crate::funcs;
use crate::syntax::ast::{BinOp, Expr, ExprKind};
use crate::units::format::{format_value, Style};
use crate::units::Quantity;

fn infinite(z: C64) -> bool {
    z.re.is_infinite() || z.im.is_infinite()
}

/// An impedance or an admittance: an infinite one is an open or a short
/// element, a legitimate value whose limit the network functions take
/// (`||`, `vdiv`, `bus_vth`, …). Any other infinite quantity — a current,
/// a voltage, a power, a ratio, a level — has no physical reading.
pub fn is_element(q: Quantity) -> bool {
    q.dim == crate::units::Dim::IMPEDANCE || q.dim == crate::units::Dim::ADMITTANCE
}

/// What an infinite element is: an open (Z = ∞) or a short (Y = ∞).
fn element_word(q: Quantity) -> &'static str {
    if q.dim == crate::units::Dim::ADMITTANCE {
        "a short (infinite admittance)"
    } else {
        "an open (infinite impedance)"
    }
}

/// The direct operands of an expression, in evaluation order. A field
/// read and a search are leaves here.
fn operands(e: &Expr) -> Vec<&Expr> {
    match &e.kind {
        ExprKind::Number { .. } | ExprKind::Name(_) | ExprKind::Field(..) | ExprKind::Search(_) => Vec::new(),
        ExprKind::Unary(_, b) | ExprKind::Paren(b, _) => vec![b],
        ExprKind::Binary(_, a, b) => vec![a, b],
        ExprKind::Call { args, .. } => args.iter().collect(),
    }
}

/// The innermost, leftmost part of `e` whose value is infinite while its
/// operands are finite (where the infinity was born), or a name whose
/// cell is already infinite. `None` when `e` is finite or cannot be
/// evaluated alone.
fn birth<'e>(model: &Model, slots: &[C64], e: &'e Expr) -> Option<&'e Expr> {
    let v = argument(model, slots, e)?;
    if !v.iter().any(|x| infinite(x.2)) || v.iter().any(|x| x.2.re.is_nan() || x.2.im.is_nan()) {
        return None;
    }
    for o in operands(e) {
        if let Some(b) = birth(model, slots, o) {
            return Some(b);
        }
    }
    Some(e)
}

/// A number as written (`0`, `(0 V)`): its value says nothing new.
fn literal(e: &Expr) -> bool {
    match &e.kind {
        ExprKind::Number { .. } => true,
        ExprKind::Paren(b, _) | ExprKind::Unary(_, b) => literal(b),
        _ => false,
    }
}

/// A value as a reader sees it, with its unit: `0 Ω`, `-j∞ Ω`.
fn shown(model: &Model, slots: &[C64], e: &Expr) -> String {
    match argument(model, slots, e).as_deref() {
        Some([(_, q, z)]) => format_value(*z, *q, None, Style { digits: 6 }).rect,
        _ => "?".into(),
    }
}

/// Why cell `id` is infinite in the case `slots`: where in its formula
/// the infinity was born, and why. `element` is true for an impedance or
/// admittance (an open or a short, shown with a warning); otherwise the
/// value has no physical reading and the diagnostic is an error.
pub fn inf_diagnostic(model: &Model, slots: &[C64], id: CellId, element: bool) -> Diagnostic {
    let c = &model.cells[id as usize];
    let code = if element {
        ErrorCode::InfiniteElement
    } else {
        ErrorCode::InfiniteValue
    };
    let value = {
        let vals = &slots[c.slot as usize..(c.slot + c.width) as usize];
        match (c.quantity(), vals) {
            (Some(q), [z]) => format_value(*z, q, c.display.as_ref(), Style { digits: 4 }).rect,
            _ => "∞".into(),
        }
    };
    let what = if element {
        match c.quantity() {
            Some(q) => format!("`{}` is {value}, {}", c.name, element_word(q)),
            None => format!("`{}` is {value}", c.name),
        }
    } else {
        format!("`{}` is infinite ({value})", c.name)
    };
    let hint = if element {
        "an open or a short is a legitimate element: `||`, `vdiv`, `bus_vth` and the network functions take its limit; \
         a current or power through it that comes out infinite is reported where it does"
            .to_string()
    } else {
        "an infinite current, voltage, power or ratio has no physical reading: look for a short (0 Ω) across an ideal \
         source, a zero denominator or a zero rating; cells using this one are infinite or undefined too"
            .to_string()
    };
    let found = statement(model, id).and_then(|stmt| {
        exprs(&stmt)
            .into_iter()
            .find_map(|e| birth(model, slots, e).map(|b| (b.clone(), b.span)))
    });
    let Some((node, span)) = found else {
        let d = Diagnostic::error(
            code,
            c.stmt_span,
            format!("{what}: the formula gives an infinite value"),
        )
        .with_label("infinite result")
        .with_hint(hint);
        return if element { d.warning() } else { d };
    };
    let text = |e: &Expr| crate::diag::terminal_safe(model.sources.slice(e.span));
    let (label, why) = match &node.kind {
        ExprKind::Name(n) => {
            let what = match argument(model, slots, &node).as_deref() {
                Some([(_, q, _)]) if is_element(*q) => format!(", {}", element_word(*q)),
                _ => String::new(),
            };
            (
                "infinite already".to_string(),
                format!("it uses `{}` = {}{what}", n.name, shown(model, slots, &node)),
            )
        }
        ExprKind::Field(..) => (
            "infinite already".to_string(),
            format!("it uses `{}` = {}", text(&node), shown(model, slots, &node)),
        ),
        ExprKind::Binary(BinOp::Div, _, b) => {
            let zero = argument(model, slots, b).is_some_and(|v| v.iter().all(|x| x.2.re == 0.0 && x.2.im == 0.0));
            if zero {
                let by = if literal(b) {
                    String::new()
                } else {
                    format!(" (`{}` = {})", text(b), shown(model, slots, b))
                };
                (
                    "division by zero".to_string(),
                    format!("`{}` divides by zero{by}", text(&node)),
                )
            } else {
                (
                    "overflow".to_string(),
                    format!("`{}` is beyond the range of numbers (about 1.8e308)", text(&node)),
                )
            }
        }
        ExprKind::Binary(BinOp::Pow, a, _) => (
            "infinite power".to_string(),
            format!(
                "`{}` raises {} to a negative power",
                text(&node),
                shown(model, slots, a)
            ),
        ),
        ExprKind::Call { func, args } => {
            let mut why = None;
            if let Some((_, f)) = funcs::find(&func.name) {
                if let Some(domain) = f.domain {
                    let vals: Option<Vec<C64>> = args
                        .iter()
                        .map(|a| argument(model, slots, a))
                        .collect::<Option<Vec<_>>>()
                        .map(|v| v.into_iter().flatten().map(|x| x.2).collect());
                    if let Some(err) = vals.and_then(|v| domain(&v, &model.ctx)) {
                        why = Some(match err.arg {
                            Some(i) if f.written_arg(args.len(), i) < args.len() => {
                                let k = f.written_arg(args.len(), i);
                                format!(
                                    "`{}`: argument `{}` = {}: {}",
                                    f.name,
                                    f.param_at(k).name,
                                    shown(model, slots, &args[k]),
                                    err.message
                                )
                            }
                            _ => format!("`{}`: {}", f.name, err.message),
                        });
                    }
                }
            }
            let why = why.unwrap_or_else(|| {
                let f = funcs::find(&func.name).map(|x| x.1);
                let vals: Vec<String> = args
                    .iter()
                    .enumerate()
                    .map(|(k, a)| match f {
                        Some(f) => format!("{} = {}", f.param_at(k).name, shown(model, slots, a)),
                        None => shown(model, slots, a),
                    })
                    .collect();
                format!("`{}({})` is infinite there", func.name, vals.join(", "))
            });
            ("infinite result".to_string(), why)
        }
        _ => (
            "overflow".to_string(),
            format!("`{}` is beyond the range of numbers (about 1.8e308)", text(&node)),
        ),
    };
    let d = Diagnostic::error(code, span, format!("{what}: {why}"))
        .with_label(label)
        .with_hint(hint);
    if element {
        d.warning()
    } else {
        d
    }
}

/// Cells whose value is infinite (and not NaN) where the infinity needs
/// saying, each with `true` when it is an error: an impedance or
/// admittance (an open or a short) gets a warning where it was born (no
/// cell it uses is infinite); any other quantity is an error, reported in
/// the first cell of a chain (none of the cells it uses is an infinite
/// non-element, which was reported already). Checks are left to their
/// verdicts.
pub fn inf_origins(model: &Model, slots: &[C64]) -> Vec<(CellId, bool)> {
    let vals = |id: CellId| {
        let c = &model.cells[id as usize];
        &slots[c.slot as usize..(c.slot + c.width) as usize]
    };
    let is_inf = |id: CellId| {
        let v = vals(id);
        v.iter().any(|z| infinite(*z)) && !v.iter().any(|z| z.re.is_nan() || z.im.is_nan())
    };
    let element = |id: CellId| {
        let c = &model.cells[id as usize];
        match &c.shape {
            Some(crate::funcs::Shape::Scalar(q)) => is_element(*q),
            Some(crate::funcs::Shape::Record(fields)) => fields
                .iter()
                .zip(vals(id))
                .all(|((_, q), z)| !infinite(*z) || is_element(*q)),
            None => true,
        }
    };
    let mut out = Vec::new();
    for &id in &model.order {
        let c = &model.cells[id as usize];
        if c.is_check() || c.error.is_some() || !is_inf(id) {
            continue;
        }
        let el = element(id);
        let deps = &c.deps;
        let report = if el {
            !deps.iter().any(|&d| is_inf(d))
        } else {
            !deps.iter().any(|&d| is_inf(d) && !element(d))
        };
        if report {
            out.push((id, !el));
        }
    }
    out
}

impl Engine {
    /// `inf_origins` with the engine's current values.
    pub fn inf_origins(&self) -> Vec<(CellId, bool)> {
        inf_origins(&self.model, &self.slots)
    }

    /// The diagnostic for an infinite cell `id` from `inf_origins`:
    /// an error when `error`, else a warning (an open or a short).
    pub fn inf_diagnostic(&self, id: CellId, error: bool) -> Diagnostic {
        inf_diagnostic(&self.model, &self.slots, id, !error)
    }
}
