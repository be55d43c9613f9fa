//! Type rules of the operators: dimensions and kinds of sums, products,
//! quotients and powers, and their lowering.

use super::*;
use crate::diag::{Diagnostic, ErrorCode};
use crate::engine::ops::{Instr, Op};
use crate::engine::program::{Emitter, Operand};
use crate::units::kind::{kind_of_product, kind_of_quotient, kind_of_sum, KindClash};
use crate::units::{Dim, Kind, Quantity};
use num_complex::Complex64 as C64;

/// Slot `s` holds a real number whatever the inputs' present values
/// allow: a real constant or input value, or the result of operations that
/// keep reals real (the rules of `batch::real_slots`), found by reading
/// back the code emitted so far. Deep chains count as not real.
fn real_slot(em: &Emitter, s: u32) -> bool {
    fn real(code: &[Instr], args: &[u32], init: &[C64], s: u32, upto: usize, depth: u32) -> bool {
        if depth > 48 {
            return false;
        }
        let written = |i: &Instr| {
            if i.op.uses_arg_table() {
                let width = args.get(i.a as usize).copied().unwrap_or(1);
                s >= i.dst && s < i.dst + width
            } else {
                i.dst == s
            }
        };
        let Some(k) = code[..upto].iter().rposition(written) else {
            return init.get(s as usize).is_some_and(|z| z.im == 0.0);
        };
        let ins = code[k];
        let a = || real(code, args, init, ins.a, k, depth + 1);
        let b = || real(code, args, init, ins.b, k, depth + 1);
        match ins.op {
            Op::Re | Op::Im | Op::Abs | Op::Arg | Op::Atan2 | Op::Search(_) => true,
            Op::Lt | Op::Le | Op::Gt | Op::Ge => true,
            Op::Copy | Op::Neg | Op::Conj | Op::Recip | Op::PowI | Op::Exp | Op::Sin | Op::Cos | Op::Tan | Op::Atan => {
                a()
            }
            Op::Add | Op::Sub | Op::Mul | Op::Div | Op::Par | Op::Min | Op::Max => a() && b(),
            Op::Select => {
                real(code, args, init, ins.b, k, depth + 1) && real(code, args, init, ins.b + 1, k, depth + 1)
            }
            Op::Sqrt | Op::Ln | Op::Log10 | Op::Asin | Op::Acos | Op::Pow | Op::Polar | Op::Network(_) => false,
            Op::Call(fid) => crate::funcs::library()[fid as usize].real_result,
        }
    }
    real(em.code, em.call_args, &em.slots.init, s, em.code.len(), 0)
}

impl Lowerer<'_> {
    pub(super) fn binary(&self, em: &mut Emitter, whole: &Expr, op: BinOp, a: &Expr, b: &Expr) -> R<Val> {
        let (x, qa) = self.scalar(em, a)?;
        let (y, qb) = self.scalar(em, b)?;
        match op {
            BinOp::Add | BinOp::Sub => {
                if qa.dim != qb.dim {
                    let verb = if op == BinOp::Add { "add" } else { "subtract" };
                    let mut d = Diagnostic::error(
                        ErrorCode::DimensionMismatch,
                        whole.span,
                        format!("cannot {verb} {} and {}", qa.describe(), qb.describe()),
                    )
                    .with_secondary(a.span, qa.describe())
                    .with_label(qb.describe());
                    d.span = Some(b.span);
                    // `6 + j10 Ω`: the unit binds to the number before it.
                    if qa.is_plain_number() && matches!(b.kind, ExprKind::Number { unit: Some(_), .. }) {
                        let text = self.sources.slice(whole.span);
                        let (sum, unit) = text.rsplit_once(' ').unwrap_or(("", ""));
                        let fixed = format!("({sum}) {unit}");
                        d = d
                            .with_hint(format!(
                                "a unit applies only to the number just before it; for the whole sum write `{fixed}`"
                            ))
                            .with_fix(whole.span, fixed);
                    } else {
                        d = d.with_hint("both sides of + and - must have the same dimension");
                    }
                    return Err(d);
                }
                let k = kind_of_sum(qa.kind, qb.kind, qa.dim).map_err(|c| kind_clash(c, whole, a, qa, b, qb))?;
                let o = em.bin(if op == BinOp::Add { Op::Add } else { Op::Sub }, x, y);
                Ok(Val::Scalar(o, Quantity::new(qa.dim, k)))
            }
            BinOp::Mul | BinOp::Div => {
                let dim = if op == BinOp::Mul {
                    qa.dim.times(qb.dim)
                } else {
                    qa.dim.per(qb.dim)
                };
                let Some(dim) = dim else {
                    return Err(Diagnostic::error(
                        ErrorCode::DimensionMismatch,
                        whole.span,
                        "unit powers out of range",
                    )
                    .with_hint("the result would have a unit power beyond ±127"));
                };
                // A constant factor's value decides two kinds: f·2π is in
                // rad/s, and j·Q is a complex power.
                let ca = x.konst().filter(|_| qa.dim.is_none());
                let cb = y.konst().filter(|_| qb.dim.is_none());
                // A plain factor that is not a constant decides the kind of
                // a real or reactive power by whether it is real by
                // construction (a real input, abs(…), a power factor): one
                // that may have an imaginary part (an input holding 1 + j1,
                // sqrt(…) of a cell) makes a complex power, as j·Q does.
                // Stood in for by 1 + j1 when it may be complex.
                let stand_in = |o: Operand, q: Quantity, other: Quantity, c: Option<C64>| {
                    let scaler = matches!(q.kind, Kind::Plain | Kind::PerUnit | Kind::Percent);
                    let power = matches!(other.kind, Kind::RealPower | Kind::ReactivePower);
                    match (c, o) {
                        (None, Operand::Slot(s)) if q.dim.is_none() && scaler && power && !real_slot(em, s) => {
                            Some(C64::new(1.0, 1.0))
                        }
                        _ => c,
                    }
                };
                let ca = stand_in(x, qa, qb, ca);
                let cb = stand_in(y, qb, qa, cb);
                let k = if op == BinOp::Mul {
                    kind_of_product(qa.kind, qb.kind, dim, ca, cb)
                } else {
                    kind_of_quotient(qa.kind, qb.kind, dim, cb)
                }
                .map_err(|c| kind_clash(c, whole, a, qa, b, qb))?;
                let o = em.bin(if op == BinOp::Mul { Op::Mul } else { Op::Div }, x, y);
                Ok(Val::Scalar(o, Quantity::new(dim, k)))
            }
            BinOp::Pow => self.power(em, whole, b, x, qa, y, qb),
            BinOp::Lt | BinOp::Le | BinOp::Gt | BinOp::Ge => {
                crate::engine::compare::lower(em, whole, op, (a, x, qa), (b, y, qb))
            }
            BinOp::Parallel | BinOp::Series => {
                if qa.dim != qb.dim {
                    return Err(Diagnostic::error(
                        ErrorCode::DimensionMismatch,
                        b.span,
                        format!("cannot combine {} with {}", qa.describe(), qb.describe()),
                    )
                    .with_label(qb.describe())
                    .with_secondary(a.span, qa.describe())
                    .with_hint("`||` and `--` combine elements of one kind: impedances, admittances, inductances or capacitances"));
                }
                let d = qa.dim;
                let pu = qa.kind == Kind::PerUnit || qb.kind == Kind::PerUnit;
                let impedance_like = d == Dim::IMPEDANCE || d == Dim::INDUCTANCE || (d.is_none() && pu);
                let admittance_like = d == Dim::ADMITTANCE || d == Dim::CAPACITANCE;
                let reciprocal = match (op, impedance_like, admittance_like) {
                    (BinOp::Parallel, true, _) | (BinOp::Series, _, true) => true,
                    (BinOp::Series, true, _) | (BinOp::Parallel, _, true) => false,
                    _ => {
                        let mut dg = Diagnostic::error(
                            ErrorCode::NetworkOperand,
                            whole.span,
                            format!(
                                "`{}` combines network elements, and these are {}",
                                op.symbol(),
                                qa.describe()
                            ),
                        )
                        .with_label("not an impedance, admittance, inductance or capacitance");
                        dg = if d.is_none() {
                            if op == BinOp::Series {
                                dg.with_hint("give the values a unit (Ω, S, H, F, or pu for per-unit impedances); to subtract a negative number write `a - -b`")
                            } else {
                                dg.with_hint("give the values a unit: Ω, S, H, F, or pu for per-unit impedances")
                            }
                        } else {
                            dg.with_hint("`||` and `--` work on Ω, S, H, F and pu")
                        };
                        return Err(dg);
                    }
                };
                let o = if reciprocal {
                    em.bin(Op::Par, x, y)
                } else {
                    em.bin(Op::Add, x, y)
                };
                let k = if pu { Kind::PerUnit } else { Kind::Plain };
                Ok(Val::Scalar(o, Quantity::new(d, k)))
            }
            BinOp::Angle => {
                if matches!(qa.kind, Kind::RealPower | Kind::ReactivePower) {
                    return Err(Diagnostic::error(
                        ErrorCode::KindMismatch,
                        whole.span,
                        format!(
                            "{} is a real number and has no angle: only a complex power (VA) has one",
                            qa.describe()
                        ),
                    )
                    .with_label("W and var are the parts of S = P + jQ")
                    .with_hint("write the magnitude in VA: `100 kVA ∠ 30°`"));
                }
                if !qb.dim.is_none() || !matches!(qb.kind, Kind::Plain | Kind::Angle) {
                    return Err(Diagnostic::error(
                        ErrorCode::DimensionMismatch,
                        b.span,
                        format!(
                            "the angle after ∠ must be an angle or a plain number of degrees, not {}",
                            qb.describe()
                        ),
                    )
                    .with_label(qb.describe()));
                }
                let theta = if qb.kind == Kind::Angle {
                    y
                } else {
                    let k = em.konst(std::f64::consts::PI / 180.0, 0.0);
                    em.bin(Op::Mul, y, k)
                };
                let o = em.bin(Op::Polar, x, theta);
                Ok(Val::Scalar(o, qa))
            }
        }
    }

    #[allow(clippy::too_many_arguments)]
    pub(super) fn power(
        &self,
        em: &mut Emitter,
        whole: &Expr,
        b: &Expr,
        x: Operand,
        qa: Quantity,
        y: Operand,
        qb: Quantity,
    ) -> R<Val> {
        if !qb.dim.is_none() {
            return Err(Diagnostic::error(
                ErrorCode::BadExponent,
                b.span,
                format!("an exponent must be a plain number, not {}", qb.describe()),
            ));
        }
        let int_exp = y
            .real_const()
            .filter(|v| v.fract() == 0.0 && v.abs() <= 1e6)
            .map(|v| v as i32);
        if qa.dim.is_none() {
            let kind = if qa.kind == Kind::PerUnit {
                Kind::PerUnit
            } else {
                Kind::Plain
            };
            let o = match int_exp {
                Some(n) => em.powi(x, n),
                None => em.bin(Op::Pow, x, y),
            };
            return Ok(Val::Scalar(o, Quantity::new(Dim::NONE, kind)));
        }
        // A quantity with a unit: the power must be a known rational so
        // the result has a whole dimension.
        let Some(p) = y.real_const() else {
            return Err(Diagnostic::error(
                ErrorCode::BadExponent,
                b.span,
                format!(
                    "{} can only be raised to a fixed number, not to a value that changes",
                    qa.describe()
                ),
            )
            .with_hint("make the base a plain number (divide by its unit), or write the exponent as a number"));
        };
        for den in 1..=4 {
            let num = p * den as f64;
            if (num - num.round()).abs() < 1e-9 && num.abs() < 1000.0 {
                if let Some(d) = qa.dim.pow_ratio(num.round() as i32, den) {
                    let o = match int_exp {
                        Some(n) => em.powi(x, n),
                        None => em.bin(Op::Pow, x, y),
                    };
                    return Ok(Val::Scalar(o, Quantity::of(d)));
                }
            }
        }
        Err(Diagnostic::error(
            ErrorCode::BadExponent,
            whole.span,
            format!(
                "{} raised to {} has no whole SI dimension",
                qa.describe(),
                crate::units::format::fmt_sig(p, 6)
            ),
        )
        .with_hint("divide by the unit first, e.g. `(x / 1 V)^p`"))
    }
}

/// The error for two kinds that do not combine, pointing at both operands.
fn kind_clash(c: KindClash, whole: &Expr, a: &Expr, qa: Quantity, b: &Expr, qb: Quantity) -> Diagnostic {
    let code = if c.angle {
        ErrorCode::AngleAmbiguous
    } else {
        ErrorCode::KindMismatch
    };
    let mut d = Diagnostic::error(code, whole.span, c.message)
        .with_secondary(a.span, qa.describe())
        .with_label(qb.describe())
        .with_hint(c.hint);
    d.span = Some(b.span);
    d
}
