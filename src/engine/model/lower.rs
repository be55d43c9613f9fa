//! Lowering a cell's expression: names, calls, checks and display units.

use num_complex::Complex64 as C64;

use super::*;
use crate::diag::{did_you_mean, Diagnostic, ErrorCode, Span};
use crate::engine::ops::Op;
use crate::engine::program::{Emitter, Operand};
use crate::funcs::{self, Impl, Shape};
use crate::units::kind::kind_of_sum;
use crate::units::{Kind, Quantity};

impl Lowerer<'_> {
    pub(in crate::engine) fn lower_def(&self, em: &mut Emitter, e: &Expr, cell: &Cell) -> R<Val> {
        let v = self.expr(em, e)?;
        let Some(u) = &cell.display else { return Ok(v) };
        let display_span = self.display_span(cell);
        match v {
            Val::Scalar(o, q) => {
                if q.dim != u.q.dim {
                    return Err(Diagnostic::error(
                        ErrorCode::DimensionMismatch,
                        display_span,
                        format!(
                            "`{}` is {}, but it is to be shown in {}",
                            cell.name,
                            q.describe(),
                            u.symbol
                        ),
                    )
                    .with_label(format!("{} is {}", u.symbol, u.q.describe()))
                    .with_secondary(e.span, "the formula gives this"));
                }
                if u.q.kind == Kind::Angle && q.kind != Kind::Angle {
                    return Err(Diagnostic::error(
                        ErrorCode::AngleAmbiguous,
                        display_span,
                        "a plain number shown as an angle is ambiguous",
                    )
                    .with_hint("write the angle with its unit in the formula: `30°` or `0.52 rad`"));
                }
                if let Some(why) = display_kind_clash(q.kind, u.q.kind) {
                    return Err(Diagnostic::error(
                        ErrorCode::KindMismatch,
                        display_span,
                        format!(
                            "`{}` is {}, but it is to be shown in {}",
                            cell.name,
                            q.describe(),
                            u.symbol
                        ),
                    )
                    .with_label(format!("{} is {}", u.symbol, u.q.describe()))
                    .with_secondary(e.span, "the formula gives this")
                    .with_hint(why));
                }
                let kind = if u.q.kind != Kind::Plain || q.kind == Kind::Angle {
                    u.q.kind
                } else {
                    q.kind
                };
                Ok(Val::Scalar(o, Quantity::new(q.dim, kind)))
            }
            Val::Record(_) => Err(Diagnostic::error(
                ErrorCode::RecordAsValue,
                display_span,
                "a record cell has no single display unit",
            )
            .with_hint("show each field in its own cell: `x = rec.field [unit]`")),
        }
    }

    /// The quantity of `e`, lowered into scratch code that is thrown away;
    /// `None` if it uses a cell not lowered yet or has an error.
    fn quantity_of(&self, e: &Expr) -> Option<Quantity> {
        if matches!(e.kind, ExprKind::Search(_)) {
            return None;
        }
        let mut ready = true;
        e.for_each_name(&mut |id| {
            if let Some(&c) = self.by_name.get(&id.name) {
                ready &= self.cells[c as usize].shape.is_some() && self.cells[c as usize].error.is_none();
            }
        });
        if !ready {
            return None;
        }
        let (mut code, mut args, mut slots) = (Vec::new(), Vec::new(), crate::engine::program::SlotSpace::default());
        let mut em = Emitter {
            code: &mut code,
            call_args: &mut args,
            slots: &mut slots,
            next_temp: 0,
            peak: self.ctx.peak,
        };
        let searches = std::cell::RefCell::new(Vec::new());
        let scratch = Lowerer {
            searches: &searches,
            ..*self
        };
        match scratch.expr(&mut em, e) {
            Ok(Val::Scalar(_, q)) => Some(q),
            _ => None,
        }
    }

    /// A `--set` must give the cell a value of the dimension and kind of the
    /// formula it replaces; a mismatch is reported at the `--set`, not at
    /// the later lines it would upset.
    /// `want` is the quantity of the sheet's own formula (the sheet
    /// compiled without overrides), `got` that of the override as lowered;
    /// each is found here when not given.
    pub(super) fn check_override(
        &self,
        e: &Expr,
        ov: &crate::sheet::Override,
        want: Option<Quantity>,
        got: Option<Quantity>,
    ) -> R<()> {
        let want = want.or_else(|| self.quantity_of(&ov.original));
        let got = got.or_else(|| self.quantity_of(e));
        let (Some(want), Some(got)) = (want, got) else {
            return Ok(());
        };
        if crate::units::kind::fits_input(want, got) {
            return Ok(());
        }
        let unit = super::literal_unit(&ov.original).map(|u| u.symbol);
        let text = self.sources.slice(e.span);
        let (message, hint) = crate::units::kind::input_clash(&ov.name, want, got, text, unit.as_deref());
        let code = if want.dim == got.dim {
            ErrorCode::KindMismatch
        } else {
            ErrorCode::BadOverride
        };
        let d = Diagnostic::error(code, e.span, message);
        Err(match ov.library {
            // An `@override` line: the library's definition is the other place.
            Some(lib) => d
                .with_label("the override's value")
                .with_secondary(lib, "the library's definition it overrides")
                .with_hint(hint),
            None => d
                .with_label(format!("given by `--set {}`", self.sources.slice(ov.span)))
                .with_hint(hint),
        })
    }

    pub(super) fn display_span(&self, cell: &Cell) -> Span {
        // The display unit is the last bracket of the statement.
        let text = self.sources.slice(cell.stmt_span);
        match text.rfind('[') {
            Some(i) => Span::new(
                cell.stmt_span.file,
                cell.stmt_span.start as usize + i,
                cell.stmt_span.end as usize,
            ),
            None => cell.stmt_span,
        }
    }

    pub(super) fn lower_check(&self, em: &mut Emitter, c: &Check) -> R<(Val, TolSpec)> {
        let (l, ql) = self.scalar(em, &c.lhs)?;
        let (r, qr) = self.scalar(em, &c.rhs)?;
        if ql.dim != qr.dim {
            return Err(Diagnostic::error(
                ErrorCode::DimensionMismatch,
                c.rhs.span,
                format!("cannot compare {} with {}", ql.describe(), qr.describe()),
            )
            .with_label(qr.describe())
            .with_secondary(c.lhs.span, ql.describe()));
        }
        kind_of_sum(ql.kind, qr.kind, ql.dim).map_err(|m| {
            Diagnostic::error(
                if m.angle {
                    ErrorCode::AngleAmbiguous
                } else {
                    ErrorCode::KindMismatch
                },
                c.rhs.span,
                format!("cannot compare these: {}", m.message),
            )
            .with_secondary(c.lhs.span, ql.describe())
            .with_hint(if m.angle {
                "give the angle its unit: `45°` or `0.785 rad`"
            } else {
                m.hint
            })
        })?;
        let (t, tol) = match &c.tol {
            Tolerance::Relative(f, span) => {
                if !(f.is_finite() && *f >= 0.0) {
                    return Err(Diagnostic::error(
                        ErrorCode::BadTolerance,
                        *span,
                        "a tolerance must be zero or more",
                    ));
                }
                (em.konst(*f, 0.0), TolSpec::Relative(*f))
            }
            Tolerance::Absolute(te) => {
                let (t, qt) = self.scalar(em, te)?;
                if qt.dim != ql.dim {
                    let hint = if qt.dim.is_none() {
                        format!(
                            "give the tolerance a unit ({}) or make it relative (`1%`)",
                            crate::units::format::base_symbol(ql)
                        )
                    } else {
                        "the tolerance has the unit of the values compared, or is relative (`1%`)".to_string()
                    };
                    return Err(Diagnostic::error(
                        ErrorCode::BadTolerance,
                        te.span,
                        format!(
                            "the tolerance is {}, but the values compared are {}",
                            qt.describe(),
                            ql.describe()
                        ),
                    )
                    .with_hint(hint));
                }
                (t, TolSpec::Absolute)
            }
        };
        Ok((Val::Record(vec![("lhs", l, ql), ("rhs", r, qr), ("tol", t, ql)]), tol))
    }

    pub(super) fn scalar(&self, em: &mut Emitter, e: &Expr) -> R<(Operand, Quantity)> {
        match self.expr(em, e)? {
            Val::Scalar(o, q) => Ok((o, q)),
            Val::Record(fields) => {
                let names: Vec<&str> = fields.iter().map(|f| f.0).collect();
                Err(
                    Diagnostic::error(ErrorCode::RecordAsValue, e.span, "this is a record, not a single value")
                        .with_label(format!("fields: {}", names.join(", ")))
                        .with_hint(format!(
                            "pick a field, e.g. `{}.{}`",
                            self.sources.slice(e.span),
                            names[0]
                        )),
                )
            }
        }
    }

    /// Lower an expression. Trees are at most `LIMITS.max_expr_depth`
    /// deep, but each level takes several frames, and a compile may run on
    /// a thread with a small stack (a batch worker, a test, a library
    /// caller); `stacker` grows the stack on the heap when it runs low.
    pub(in crate::engine) fn expr(&self, em: &mut Emitter, e: &Expr) -> R<Val> {
        stacker::maybe_grow(128 * 1024, 4 * 1024 * 1024, || self.expr_inner(em, e))
    }

    pub(super) fn expr_inner(&self, em: &mut Emitter, e: &Expr) -> R<Val> {
        match &e.kind {
            ExprKind::Number { value, imag, unit } => {
                let c = if *imag {
                    C64::new(0.0, *value)
                } else {
                    C64::new(*value, 0.0)
                };
                match unit {
                    None => Ok(Val::Scalar(Operand::Const(c), Quantity::PLAIN)),
                    Some(u) => {
                        if *imag {
                            imaginary_in_real_kind(u, e.span)?;
                        }
                        Ok(Val::Scalar(Operand::Const(c * u.unit.factor), u.unit.q))
                    }
                }
            }
            ExprKind::Paren(inner, unit) => {
                let v = self.expr(em, inner)?;
                let Some(u) = unit else { return Ok(v) };
                let (o, q) = match v {
                    Val::Scalar(o, q) => (o, q),
                    Val::Record(_) => return self.scalar(em, inner).map(|_| unreachable!()),
                };
                if !q.is_plain_number() {
                    return Err(Diagnostic::error(
                        ErrorCode::UnitNotAllowed,
                        u.span,
                        format!("a unit can only follow a plain number, and this is {}", q.describe()),
                    )
                    .with_secondary(inner.span, q.describe())
                    .with_hint("the bracket already has a unit; to convert, divide: `x / 1 kV`"));
                }
                // `(1 ∠ 180°) W` is -1 W: an imaginary part at rounding
                // level (|im| ≤ 1e-12·|z|) is no imaginary part.
                if o.konst().is_some_and(|c| c.im.abs() > 1e-12 * c.norm()) {
                    imaginary_in_real_kind(u, e.span)?;
                }
                let f = em.konst(u.unit.factor, 0.0);
                Ok(Val::Scalar(em.bin(Op::Mul, o, f), u.unit.q))
            }
            ExprKind::Name(id) => self.name(id),
            ExprKind::Field(base, field) => {
                let v = self.expr(em, base)?;
                match v {
                    Val::Record(fields) => match fields.iter().find(|f| f.0 == field.name) {
                        Some(&(_, o, q)) => Ok(Val::Scalar(o, q)),
                        None => {
                            let names: Vec<&str> = fields.iter().map(|f| f.0).collect();
                            let mut d = Diagnostic::error(
                                ErrorCode::UnknownField,
                                field.span,
                                format!("no field `{}`", field.name),
                            )
                            .with_label(format!("fields are: {}", names.join(", ")));
                            if let Some(s) = did_you_mean(&field.name, names.iter().copied()) {
                                d = d.with_hint(format!("did you mean `.{s}`?")).with_fix(field.span, s);
                            }
                            Err(d)
                        }
                    },
                    Val::Scalar(_, q) => Err(Diagnostic::error(
                        ErrorCode::NotARecord,
                        field.span,
                        format!(
                            "`.{}` asks for a field, but this is a single value ({})",
                            field.name,
                            q.describe()
                        ),
                    )
                    .with_secondary(base.span, "a single value")),
                }
            }
            ExprKind::Call { func, args } => self.call(em, e, func, args),
            ExprKind::Unary(op, inner) => {
                let (o, q) = self.scalar(em, inner)?;
                Ok(match op {
                    UnOp::Pos => Val::Scalar(o, q),
                    UnOp::Neg => Val::Scalar(em.un(Op::Neg, o), q),
                })
            }
            ExprKind::Binary(op, a, b) => self.binary(em, e, *op, a, b),
            ExprKind::Search(s) => self.search(em, e, s),
        }
    }

    pub(super) fn name(&self, id: &Ident) -> R<Val> {
        match id.name.as_str() {
            "pi" => {
                return Ok(Val::Scalar(
                    Operand::Const(C64::new(std::f64::consts::PI, 0.0)),
                    Quantity::PLAIN,
                ))
            }
            "j" => return Ok(Val::Scalar(Operand::Const(C64::new(0.0, 1.0)), Quantity::PLAIN)),
            _ => {}
        }
        let Some(&cid) = self.by_name.get(&id.name) else {
            let mut d = Diagnostic::error(ErrorCode::UnknownName, id.span, format!("`{}` is not defined", id.name))
                .with_label("no cell of this name");
            let names = self
                .cells
                .iter()
                .filter(|c| c.role == Role::Def)
                .map(|c| c.name.as_str());
            if let Some(s) = did_you_mean(&id.name, names.chain(["pi", "j"])) {
                d = d.with_hint(format!("did you mean `{s}`?")).with_fix(id.span, s);
            } else if funcs::find(&id.name).is_some() {
                d = d.with_hint(format!("`{0}` is a function: call it as `{0}(…)`", id.name));
            } else if crate::units::lookup_unit(&id.name).is_ok() {
                d = d.with_hint(format!("`{0}` is a unit; a unit follows a number: `1 {0}`", id.name));
            } else {
                d = d.with_hint(format!("define it on a line of its own: `{} = …`", id.name));
            }
            return Err(d);
        };
        let c = &self.cells[cid as usize];
        match &c.shape {
            Some(Shape::Scalar(q)) => Ok(Val::Scalar(Operand::Slot(c.slot), *q)),
            Some(Shape::Record(fields)) => Ok(Val::Record(
                fields
                    .iter()
                    .enumerate()
                    .map(|(k, &(n, q))| (n, Operand::Slot(c.slot + k as u32), q))
                    .collect(),
            )),
            // Compiling never lowers against a cell with an error; a
            // session's expression or edit may name one.
            None => Err(
                super::broken_ref(self.cells, &[], self.sources, cid, Some(id.span)).unwrap_or_else(|| {
                    Diagnostic::error(ErrorCode::BrokenCell, id.span, format!("`{}` has no value", id.name))
                }),
            ),
        }
    }

    pub(super) fn call(&self, em: &mut Emitter, whole: &Expr, func: &Ident, args: &[Expr]) -> R<Val> {
        if NETWORK_RESULTS.contains(&func.name.as_str()) {
            return self.net_result(em, whole, func, args);
        }
        if NETWORK_ELEMENTS.iter().any(|(f, _)| *f == func.name) {
            return Err(Diagnostic::error(
                ErrorCode::NetworkElement,
                func.span,
                format!("`{}` describes an element of a network", func.name),
            )
            .with_label("only inside a network block")
            .with_hint("write element lines between `network NAME at FREQUENCY` and `end`"));
        }
        let Some((fid, f)) = funcs::find(&func.name) else {
            let names = funcs::library().iter().map(|f| f.name);
            let mut d = Diagnostic::error(
                ErrorCode::UnknownFunction,
                func.span,
                format!("unknown function `{}`", func.name),
            )
            .with_label("no function of this name");
            d = match did_you_mean(&func.name, names) {
                Some(s) => d
                    .with_hint(format!("did you mean `{s}`? (`ohmsheet functions` lists them all)"))
                    .with_fix(func.span, s),
                None => d.with_hint("`ohmsheet functions` lists every function"),
            };
            return Err(d);
        };
        let np = f.params.len();
        let count_ok = if f.variadic { args.len() >= np } else { args.len() == np };
        if !count_ok {
            let sig = signature(f);
            let want = if f.variadic {
                format!("at least {np}")
            } else {
                np.to_string()
            };
            return Err(Diagnostic::error(
                ErrorCode::FunctionArgs,
                whole.span,
                format!(
                    "`{}` takes {want} argument{}, but {} {} given",
                    f.name,
                    if np == 1 { "" } else { "s" },
                    args.len(),
                    if args.len() == 1 { "was" } else { "were" }
                ),
            )
            .with_label(format!("{sig}: {}", f.summary)));
        }
        let mut ops = Vec::with_capacity(args.len());
        let mut qs = Vec::with_capacity(args.len());
        for (k, a) in args.iter().enumerate() {
            match f.param_at(k).record() {
                None => {
                    let (o, q) = self.scalar(em, a)?;
                    ops.push(o);
                    qs.push(q);
                }
                Some(r) => {
                    for (o, q) in self.record_arg(em, a, f, k, r)? {
                        ops.push(o);
                        qs.push(q);
                    }
                }
            }
        }
        let shape = (f.ty)(&qs, &self.ctx).map_err(|ae| {
            let span = ae
                .arg
                .and_then(|i| args.get(f.written_arg(args.len(), i)))
                .map_or(whole.span, |a| a.span);
            Diagnostic::error(ErrorCode::FunctionArgs, span, format!("{}: {}", f.name, ae.message))
                .with_label(ae.arg.map_or_else(String::new, |i| qs[i].describe()))
                .with_hint(format!("{}: {}", signature(f), f.summary))
        })?;
        let outs = match &f.imp {
            Impl::Lower(lower) => lower(em, &ops, &qs),
            Impl::Scalar(_) => match f.prepare {
                Some(prepare) => {
                    let ops = prepare(em, &ops, &qs);
                    em.call(fid, &ops, shape.width())
                }
                None => em.call(fid, &ops, shape.width()),
            },
        };
        let outs = funcs::guard_ranges(em, f, &ops, outs);
        Ok(match shape {
            Shape::Scalar(q) => Val::Scalar(outs[0], q),
            Shape::Record(fields) => Val::Record(fields.into_iter().zip(outs).map(|((n, q), o)| (n, o, q)).collect()),
        })
    }

    /// A record argument for a record parameter: its fields' values in the
    /// parameter's order.
    fn record_arg(
        &self,
        em: &mut Emitter,
        a: &Expr,
        f: &funcs::Builtin,
        k: usize,
        r: &funcs::RecordParam,
    ) -> R<Vec<(Operand, Quantity)>> {
        let param = f.param_at(k).name;
        let wanted = format!(
            "`{param}` must be {} (a record with fields {})",
            r.what,
            r.fields.join(", ")
        );
        let refuse = |message: String, label: String| {
            Diagnostic::error(ErrorCode::FunctionArgs, a.span, format!("{}: {message}", f.name))
                .with_label(label)
                .with_hint(format!("{}; {}: {}", r.hint, signature(f), f.summary))
        };
        match self.expr(em, a)? {
            Val::Scalar(_, q) => Err(refuse(format!("{wanted}, but this is {}", q.describe()), q.describe())),
            Val::Record(have) => {
                let names: Vec<&str> = have.iter().map(|h| h.0).collect();
                r.fields
                    .iter()
                    .map(|n| {
                        have.iter().find(|h| h.0 == *n).map(|h| (h.1, h.2)).ok_or_else(|| {
                            refuse(
                                format!("{wanted}, but this record has no field `{n}`"),
                                format!("fields: {}", names.join(", ")),
                            )
                        })
                    })
                    .collect()
            }
        }
    }
}

/// Why a value of kind `have` cannot be shown in a unit of kind `shown`
/// (same dimension), if it cannot. A display unit declares what a value is,
/// so a complex power may be shown in W or var (the sheet says which part
/// it stands for), but a real power is never shown as reactive or the
/// other way round, a reactive power never as VA, and only a level in dB is
/// shown in dB.
fn display_kind_clash(have: Kind, shown: Kind) -> Option<&'static str> {
    use Kind::*;
    match (have, shown) {
        (RealPower, ReactivePower) | (ReactivePower, RealPower) => {
            Some("a real power (W) and a reactive power (var) are different parts of S = P + jQ")
        }
        (ReactivePower, ApparentPower) => Some("Q in VA would read as a complex power; for S write `P + j*Q`"),
        (Decibel, k) if k != Decibel => Some("a level in decibels is shown in dB"),
        (k, Decibel) if k != Decibel => {
            Some("a ratio is not a level: write `db_v(r)` for a voltage or current ratio, `db_p(r)` for a power ratio")
        }
        _ => None,
    }
}

/// W and var are real numbers (the parts of S = P + jQ): a literal with an
/// imaginary part in one of them would be read two ways (`j225 kvar` as
/// S = j225 kVA, or as Q = 225 kvar?), so it is refused.
fn imaginary_in_real_kind(u: &UnitRef, span: Span) -> R<()> {
    if !matches!(u.unit.q.kind, Kind::RealPower | Kind::ReactivePower) {
        return Ok(());
    }
    let what = if u.unit.q.kind == Kind::RealPower {
        "a real power (W)"
    } else {
        "a reactive power (var)"
    };
    Err(Diagnostic::error(
        ErrorCode::KindMismatch,
        span,
        format!("{what} is a real number and cannot have an imaginary part"),
    )
    .with_label(format!("`{}` is {what}", u.unit.symbol))
    .with_hint("a complex power is in VA (`300 kW + j225 kVA`); or write `P + j*Q` with Q in var"))
}
