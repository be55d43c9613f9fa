//! Why a value is not a number: the first call in a cell's formula whose
//! arguments lie outside the function's domain (`Builtin::domain`), with
//! the argument, its value and the reason, located on the argument.
//!
//! One explanation serves every place a NaN is reported — `run`, `check`,
//! `report`, `watch`, the session, sweeps and the batch errors file — so
//! they all say the same thing. It is called only on the error path: it
//! re-reads the cell's statement, and evaluates the arguments of each call
//! against the values the failing case had (a block lane's slots for a
//! batch case), changing neither the model nor those values.

use num_complex::Complex64 as C64;

use super::edit::{for_call_args, for_slots};
use super::eval::{run, Engine};
use super::model::{CellId, Lowerer, Model, Val};
use super::program::{Emitter, Operand, Program, SlotSpace, TEMP_FLAG};

use crate::diag::{Diagnostic, ErrorCode, Span};
use crate::funcs;
use crate::syntax::ast::{Expr, ExprKind, StmtKind, Tolerance};
use crate::syntax::parse_line;
use crate::units::format::{format_value, Style};
use crate::units::Quantity;

/// What made a cell's value undefined.
#[derive(Clone, Debug, PartialEq)]
pub struct Why {
    /// The function whose domain was left ("" for a network whose case
    /// has no solution: the message names the network).
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
        if self.func.is_empty() {
            return self.message.clone();
        }
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
pub(super) fn statement(model: &Model, id: CellId) -> Option<crate::syntax::ast::Stmt> {
    let c = model.cells.get(id as usize)?;
    let text = model.sources.slice(c.stmt_span);
    parse_line(text, c.stmt_span.file, c.stmt_span.start as usize, c.line).ok()?
}

pub(super) fn exprs(stmt: &crate::syntax::ast::Stmt) -> Vec<&Expr> {
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
        StmtKind::Network(h) => vec![&h.freq],
        StmtKind::Directive(_) | StmtKind::End => Vec::new(),
    }
}

/// The value of expression `e` (a call's argument) in one case: lowered
/// against `model` into code of its own and run over a copy of `slots`.
/// Neither the model nor the slots change. A record (a two-port passed
/// whole) gives each of its fields, named; a single value has the name "".
pub(super) fn argument(model: &Model, slots: &[C64], e: &Expr) -> Option<Vec<(&'static str, Quantity, C64)>> {
    let searches = std::cell::RefCell::new(Vec::new());
    let networks = std::cell::RefCell::new(Vec::new());
    let lw = Lowerer {
        cells: &model.cells,
        by_name: &model.by_name,
        sources: &model.sources,
        ctx: model.ctx,
        current: CellId::MAX,
        searches: &searches,
        networks: &networks,
    };
    let base = slots.len();
    let mut code = Vec::new();
    let mut call_args = Vec::new();
    let mut space = SlotSpace::with_base(base);
    let mut em = Emitter {
        code: &mut code,
        call_args: &mut call_args,
        slots: &mut space,
        next_temp: 0,
        peak: model.ctx.peak,
    };
    let val = lw.expr(&mut em, e).ok()?;
    let temps = em.next_temp;
    if !searches.borrow().is_empty() {
        return None;
    }
    let outs: Vec<(&'static str, Operand, Quantity)> = match val {
        Val::Scalar(o, q) => vec![("", o, q)],
        Val::Record(fields) => fields,
    };
    // temporaries go after the new constants
    let tbase = space.init.len() as u32;
    let mut vals = space.init;
    vals[..base].copy_from_slice(slots);
    vals.resize((tbase + temps.max(1)) as usize, C64::new(0.0, 0.0));
    let mut place = |s: &mut u32| {
        if *s & TEMP_FLAG != 0 {
            *s = tbase + (*s & !TEMP_FLAG);
        }
    };
    for ins in &mut code {
        for_slots(ins, &mut place);
        for_call_args(ins, &mut call_args, &mut place);
    }
    let prog = Program {
        call_args,
        peak: model.ctx.peak,
        ..Program::default()
    };
    run(&code, &prog, &mut vals);
    let value = |out: Operand| match out {
        Operand::Const(c) => c,
        Operand::Slot(mut s) => {
            place(&mut s);
            vals[s as usize]
        }
    };
    Some(outs.into_iter().map(|(n, o, q)| (n, q, value(o))).collect())
}

/// Why cell `id` of `model` is not a finite number in the case whose slot
/// values are `slots`: the first call in its formula whose arguments fail
/// the function's domain check. `None` when no function explains it (then
/// the generic message stands).
pub fn explain(model: &Model, slots: &[C64], id: CellId) -> Option<Why> {
    let stmt = statement(model, id)?;
    if let StmtKind::Network(h) = &stmt.kind {
        return network_why(model, slots, h);
    }
    let mut found = Vec::new();
    for e in exprs(&stmt) {
        calls(e, &mut found);
    }
    for e in found {
        let ExprKind::Call { func, args } = &e.kind else {
            continue;
        };
        let Some((_, f)) = funcs::find(&func.name) else {
            continue;
        };
        let Some(domain) = f.domain else { continue };
        // the values the function received: a record argument passes
        // its fields, in the parameter's order (`RecordParam`)
        let mut vals = Vec::with_capacity(args.len());
        let mut quantities = Vec::with_capacity(args.len());
        let mut names = Vec::with_capacity(args.len());
        let mut whole = true;
        for (k, a) in args.iter().enumerate() {
            let Some(parts) = argument(model, slots, a) else {
                whole = false;
                break;
            };
            let p = f.param_at(k);
            let wanted: Vec<&str> = p.record().map_or(vec![""], |r| r.fields.to_vec());
            for w in wanted {
                let Some(&(n, q, v)) = parts.iter().find(|x| x.0 == w) else {
                    whole = false;
                    break;
                };
                vals.push(v);
                quantities.push(q);
                names.push(if n.is_empty() {
                    p.name.to_string()
                } else {
                    format!("{}.{n}", p.name)
                });
            }
        }
        if !whole || vals.iter().any(|z| z.re.is_nan() || z.im.is_nan()) {
            // an argument that is NaN itself was explained (or not) by
            // the calls inside it, which come first
            continue;
        }
        let Some(mut err) = domain(&vals, &model.ctx) else {
            continue;
        };
        // values the message names (`ArgError::value`), shown with units
        let shown = |i: usize| format_value(vals[i], quantities[i], None, Style { digits: 6 }).rect;
        for i in (0..vals.len()).rev() {
            let token = funcs::ArgError::value(i);
            if err.message.contains(&token) {
                err.message = err.message.replace(&token, &shown(i));
            }
        }
        let (span, message) = match err.arg {
            Some(i) if i < vals.len() => {
                let p = &names[i];
                let shown = shown(i);
                (
                    args[f.written_arg(args.len(), i)].span,
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

/// Why network `h` has undefined results in the case `slots`: the case is
/// solved again (the code before the network's instruction re-run over a
/// copy of the slots, so its arguments are as they were) and the solver's
/// failure is put in words by `network::diagnose`; a solve that succeeds
/// with an undefined result says which and why.
fn network_why(model: &Model, slots: &[C64], h: &crate::syntax::ast::NetworkHead) -> Option<Why> {
    use crate::engine::ops::Op;
    use crate::network::{Field, Request};
    let prog = &model.program;
    let (at, k) = prog.code.iter().enumerate().find_map(|(at, ins)| match ins.op {
        Op::Network(k) if prog.networks.get(k as usize).is_some_and(|n| n.name == h.name.name) => Some((at, k)),
        _ => None,
    })?;
    let net = &prog.networks[k as usize];
    let mut vals = slots.to_vec();
    run(&prog.code[..at], prog, &mut vals);
    let ins = &prog.code[at];
    let base = ins.a as usize;
    let width = prog.call_args[base] as usize;
    let args: Vec<C64> = (0..ins.b as usize)
        .map(|i| vals[prog.call_args[base + 1 + i] as usize])
        .collect();
    let mut out = vec![C64::new(0.0, 0.0); width];
    let name = &h.name.name;
    let message = match net.run(&args, &mut out) {
        Err(f) => crate::network::diagnose::explain_failure(name, &net.net, &args, &f),
        Ok(()) => {
            let node = |k: usize| net.net.nodes[k].as_str();
            let bad = net
                .fields()
                .into_iter()
                .zip(&out)
                .find(|(_, z)| z.re.is_nan() || z.im.is_nan())?
                .0;
            match bad {
                Field::Req(r, _) => match net.requests[r] {
                    Request::YEntry(i, j) => format!(
                        "network `{name}`: Y({}, {}) is undefined at this case — the bus admittance matrix does not exist \
                         where an ideal element (a 0 Ω branch, a voltage gain, a transimpedance or a transformer) ties \
                         node voltages together; the network's other results stand",
                        node(i),
                        node(j)
                    ),
                    Request::Thevenin(a, b) => format!(
                        "network `{name}`: the Norton current between `{}` and `{}` is undefined at this case — the \
                         Thevenin impedance there is 0 (the nodes are joined by a short) and so is the open-circuit voltage",
                        node(a),
                        node(b)
                    ),
                    Request::ZEntry(..) => return None,
                },
                _ => return None,
            }
        }
    };
    Some(Why {
        func: "",
        span: h.name.span,
        call_span: h.name.span,
        message,
    })
}

/// The error for cell `id` whose value came out NaN in the case `slots`:
/// the function whose domain was left, located on the argument, or else
/// the general message.
pub fn nan_diagnostic(model: &Model, slots: &[C64], id: CellId) -> Diagnostic {
    let c = &model.cells[id as usize];
    let what = if c.is_check() {
        "this check".to_string()
    } else {
        format!("`{}`", c.name)
    };
    if let Some(why) = explain(model, slots, id) {
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
        c.stmt_span,
        format!("{what} evaluated to NaN (not a number)"),
    )
    .with_label("undefined result produced here")
    .with_hint("look for 0/0, ∞ − ∞, 0·∞ or an input set to NaN; cells using this one are NaN too")
}

impl Engine {
    /// `explain` with the engine's current values.
    pub fn explain(&self, id: CellId) -> Option<Why> {
        explain(&self.model, &self.slots, id)
    }

    /// `nan_diagnostic` with the engine's current values.
    pub fn nan_diagnostic(&self, id: CellId) -> Diagnostic {
        nan_diagnostic(&self.model, &self.slots, id)
    }
}
