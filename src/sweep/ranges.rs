//! Ranges and inputs: `NAME=START..STOP` read, checked against the
//! sheet's input, and turned into an [`Axis`].

use num_complex::Complex64 as C64;

use super::{total_points, Axis, RangeText, DEFAULT_POINTS};
use crate::diag::{did_you_mean, Diagnostic, ErrorCode, SourceFile, Span};
use crate::engine::{compile, CellId, Model, Role};
use crate::sheet::Sheet;
use crate::syntax::ast::{Definition, Expr, ExprKind, Ident, Stmt, StmtKind};
use crate::syntax::parse_line;
use crate::units::{Kind, Quantity};

/// Parse an expression that stands alone at `offset` of `file`.
pub fn parse_expr_at(text: &str, file: crate::diag::FileId, offset: usize) -> Result<Expr, Diagnostic> {
    match parse_line(text, file, offset, 1) {
        Ok(Some(Stmt {
            kind: StmtKind::Expr(e),
            ..
        })) => Ok(e),
        Ok(Some(s)) => Err(Diagnostic::error(
            ErrorCode::Syntax,
            s.span,
            "expected a value here, not a statement",
        )),
        Ok(None) => Err(Diagnostic::error(
            ErrorCode::Syntax,
            Span::new(file, offset, offset + text.len()),
            "expected a value here",
        )
        .with_label("nothing here")),
        Err(d) => Err(d),
    }
}

/// Add `text` as a hidden cell unless it names a cell or a record field.
pub(super) fn add_expression(sheet: &mut Sheet, origin: &str, text: &str) -> Result<(), Diagnostic> {
    let t = text.trim();
    let names = sheet.cell_names();
    let is_name = |s: &str| names.contains(&s);
    if is_name(t) || t.split_once('.').is_some_and(|(b, _)| is_name(b.trim())) {
        return Ok(());
    }
    let file = sheet.sources.add(SourceFile::new(origin, None, t.to_string()));
    let expr = parse_expr_at(t, file, 0)?;
    // A bare name that is not a cell is reported when it is looked up.
    if matches!(&expr.kind, ExprKind::Name(_)) {
        return Ok(());
    }
    let span = expr.span;
    sheet.stmts.push(Stmt {
        kind: StmtKind::Def(Definition {
            name: Ident {
                name: t.to_string(),
                span,
            },
            expr,
            display: None,
            spread: None,
        }),
        span,
        line: 1,
        comment: None,
    });
    Ok(())
}

/// Split `NAME=START..STOP` (added to `sources` as pseudo-file `origin`).
pub fn parse_range(sources: &mut crate::diag::SourceMap, origin: &str, text: &str) -> Result<RangeText, Diagnostic> {
    let file = sources.add(SourceFile::new(origin, None, text.to_string()));
    parse_range_at(text, file, 0)
}

/// Split `NAME=START..STOP` found at byte `offset` of `file`.
pub fn parse_range_at(text: &str, file: crate::diag::FileId, offset: usize) -> Result<RangeText, Diagnostic> {
    let sp = |a: usize, b: usize| Span::new(file, offset + a, offset + b);
    let whole = sp(0, text.len());
    let Some(eq) = text.find('=') else {
        return Err(
            Diagnostic::error(ErrorCode::BadRange, whole, format!("`{}` has no `=`", text.trim()))
                .with_hint("write NAME=START..STOP, e.g. C=0..2mF or f=10Hz..1MHz"),
        );
    };
    let Some(dots) = text[eq..].find("..").map(|i| i + eq) else {
        return Err(
            Diagnostic::error(ErrorCode::BadRange, sp(eq + 1, text.len()), "expected START..STOP")
                .with_label("no `..` here")
                .with_hint("write NAME=START..STOP, e.g. C=0..2mF or f=10Hz..1MHz"),
        );
    };
    let raw_name = &text[..eq];
    let name = raw_name.trim();
    let lead = raw_name.len() - raw_name.trim_start().len();
    if name.is_empty() {
        return Err(
            Diagnostic::error(ErrorCode::BadRange, sp(0, eq.max(1)), "no input named before `=`")
                .with_hint("write NAME=START..STOP, e.g. C=0..2mF"),
        );
    }
    let start = parse_expr_at(&text[eq + 1..dots], file, offset + eq + 1)?;
    let stop = parse_expr_at(&text[dots + 2..], file, offset + dots + 2)?;
    Ok(RangeText {
        name: Ident {
            name: name.to_string(),
            span: sp(lead, lead + name.len()),
        },
        start,
        stop,
    })
}

/// The value and quantity of a constant expression (a number with a unit,
/// or arithmetic on such). `what` names it in messages.
pub fn constant(sources: &crate::diag::SourceMap, e: &Expr, what: &str) -> Result<(C64, Quantity), Diagnostic> {
    let mut named: Option<Ident> = None;
    e.for_each_name(&mut |id| {
        if named.is_none() && id.name != "pi" && id.name != "j" {
            named = Some(id.clone());
        }
    });
    if let Some(id) = named {
        return Err(Diagnostic::error(
            ErrorCode::BadRange,
            id.span,
            format!("{what} must be a number with a unit, not a cell"),
        )
        .with_label("a name")
        .with_hint("write the value itself, e.g. `2 mF` or `1MHz`"));
    }
    let sheet = Sheet {
        sources: sources.clone(),
        main: e.span.file,
        stmts: vec![Stmt {
            kind: StmtKind::Def(Definition {
                name: Ident {
                    name: "value".into(),
                    span: e.span,
                },
                expr: e.clone(),
                display: None,
                spread: None,
            }),
            span: e.span,
            line: 1,
            comment: None,
        }],
        errors: Vec::new(),
        ..Default::default()
    };
    let m = compile(&sheet);
    if let Some(d) = m.diagnostics.into_iter().find(Diagnostic::is_error) {
        return Err(d);
    }
    let c = &m.cells[0];
    let q = c.quantity().unwrap_or(Quantity::PLAIN);
    let mut slots = m.program.init.clone();
    crate::engine::eval::run(&m.program.code, &m.program, &mut slots);
    Ok((slots[c.slot as usize], q))
}

/// A bound or step checked against the input's quantity. A bare `0` fits
/// any unit.
fn bound_value(
    sources: &crate::diag::SourceMap,
    e: &Expr,
    input: &crate::engine::Cell,
    q: Quantity,
    what: &str,
) -> Result<f64, Diagnostic> {
    let (v, bq) = constant(sources, e, what)?;
    if v.im != 0.0 {
        return Err(
            Diagnostic::error(ErrorCode::BadRange, e.span, format!("{what} must be a real number"))
                .with_label("has an imaginary part"),
        );
    }
    if !v.re.is_finite() {
        return Err(Diagnostic::error(
            ErrorCode::BadRange,
            e.span,
            format!("{what} is not finite"),
        ));
    }
    let zero = v.re == 0.0 && bq.is_plain_number();
    let same_dim = bq.dim == q.dim;
    let angle_clash = q.kind == Kind::Angle && bq.kind != Kind::Angle;
    if !zero && same_dim && !angle_clash && !crate::units::kind::fits_input(q, bq) {
        // The right dimension but another kind: 0..2000 kW for an input in kvar.
        let text = sources.slice(e.span);
        let unit = input.display.as_ref().map(|u| u.symbol.as_str());
        let (_, hint) = crate::units::kind::input_clash(&input.name, q, bq, text, unit);
        return Err(Diagnostic::error(
            ErrorCode::KindMismatch,
            e.span,
            format!("{what} is {}, but `{}` is {}", bq.describe(), input.name, q.describe()),
        )
        .with_label(bq.describe())
        .with_hint(hint));
    }
    if !zero && (!same_dim || angle_clash) {
        let unit = crate::units::format::base_symbol(q);
        let hint = if angle_clash {
            "give the angle its unit: `0°..90°` or `0 rad..1.5 rad`".to_string()
        } else if bq.is_plain_number() {
            format!(
                "give it the unit of `{}`, e.g. `{}{}`",
                input.name,
                crate::units::format::fmt_sig(v.re, 6),
                if unit.is_empty() {
                    String::new()
                } else {
                    format!(" {unit}")
                }
            )
        } else {
            format!(
                "`{}` is {}; the range must be in the same unit",
                input.name,
                q.describe()
            )
        };
        return Err(Diagnostic::error(
            ErrorCode::DimensionMismatch,
            e.span,
            format!("{what} is {}, but `{}` is {}", bq.describe(), input.name, q.describe()),
        )
        .with_label(bq.describe())
        .with_hint(hint));
    }
    Ok(v.re)
}

/// The input cell named in a range, checked to be an input.
pub fn input_cell(m: &Model, name: &Ident) -> Result<CellId, Diagnostic> {
    let Some(id) = m.id(&name.name) else {
        let inputs = m.inputs().map(|(_, c)| c.name.as_str());
        let mut d = Diagnostic::error(
            ErrorCode::UnknownName,
            name.span,
            format!("the sheet has no input `{}`", name.name),
        )
        .with_label("no cell of this name");
        if let Some(s) = did_you_mean(&name.name, inputs) {
            d = d.with_hint(format!("did you mean `{s}`?"));
        } else {
            let list: Vec<&str> = m.inputs().map(|(_, c)| c.name.as_str()).take(20).collect();
            d = d.with_hint(format!("the sheet's inputs are: {}", list.join(", ")));
        }
        return Err(d);
    };
    let c = &m.cells[id as usize];
    if c.role != Role::Def || !c.input || c.quantity().is_none() {
        let uses: Vec<&str> = c.deps.iter().map(|&d| m.cells[d as usize].name.as_str()).collect();
        return Err(Diagnostic::error(
            ErrorCode::NotAnInput,
            name.span,
            format!("`{}` is computed from other cells, so it cannot be varied", name.name),
        )
        .with_label(format!("{} = {}", c.name, c.formula))
        .with_hint(if uses.is_empty() {
            "vary one of the sheet's inputs (cells whose formula is a value)".to_string()
        } else {
            format!(
                "vary an input it depends on ({}), or give it a value with --set \"{}=…\"",
                uses.join(", "),
                name.name
            )
        }));
    }
    Ok(id)
}

pub fn resolve_axis(
    m: &Model,
    sources: &crate::diag::SourceMap,
    r: &RangeText,
    points: Option<usize>,
    step: Option<&Expr>,
    log: bool,
) -> Result<Axis, Diagnostic> {
    let id = input_cell(m, &r.name)?;
    let c = &m.cells[id as usize];
    let q = c.quantity().unwrap_or(Quantity::PLAIN);
    let start = bound_value(sources, &r.start, c, q, "the start of the range")?;
    let stop = bound_value(sources, &r.stop, c, q, "the end of the range")?;
    let whole = r.start.span.to(r.stop.span);
    if log && !(start != 0.0 && stop != 0.0 && (start > 0.0) == (stop > 0.0)) {
        return Err(Diagnostic::error(
            ErrorCode::BadRange,
            whole,
            "a logarithmic range needs both ends non-zero and of one sign",
        )
        .with_hint("start a log sweep above zero, e.g. f=10Hz..1MHz"));
    }
    let (count, step_v) = match (points, step) {
        (Some(_), Some(s)) => {
            return Err(Diagnostic::error(
                ErrorCode::BadRange,
                s.span,
                "give either --points or --step, not both",
            ));
        }
        (_, Some(s)) => {
            if log {
                return Err(Diagnostic::error(
                    ErrorCode::BadRange,
                    s.span,
                    "a logarithmic sweep is given by --points, not --step",
                ));
            }
            let st = bound_value(sources, s, c, q, "the step")?;
            if st <= 0.0 {
                return Err(Diagnostic::error(
                    ErrorCode::BadRange,
                    s.span,
                    "the step must be more than zero",
                ));
            }
            let n = ((stop - start).abs() / st * (1.0 + 1e-12)).floor();
            if n.is_nan() || n >= 1e15 {
                return Err(
                    Diagnostic::error(ErrorCode::TooManyPoints, s.span, "this step gives too many points")
                        .with_hint("use a larger step"),
                );
            }
            (n as usize + 1, Some(st))
        }
        (n, None) => (n.unwrap_or(DEFAULT_POINTS), None),
    };
    if count == 0 {
        return Err(Diagnostic::error(
            ErrorCode::BadRange,
            whole,
            "a sweep needs at least one point",
        ));
    }
    if count > 1 && start == stop {
        return Err(Diagnostic::error(
            ErrorCode::BadRange,
            whole,
            "the range starts and ends at the same value",
        )
        .with_hint("give two different ends, e.g. C=0..2mF"));
    }
    Ok(Axis {
        name: r.name.name.clone(),
        cell: id,
        slot: c.slot,
        quantity: q,
        display: c.display.clone(),
        start,
        stop,
        count,
        log,
        step: step_v,
    })
}

/// Refuse a grid of more than `max` points.
pub fn check_size(axes: &[Axis], max: usize) -> Result<usize, Diagnostic> {
    let n = total_points(axes);
    if n > max {
        return Err(Diagnostic::unplaced(
            ErrorCode::TooManyPoints,
            format!("this sweep has {n} points; the limit is {max}"),
        )
        .with_hint("use fewer points, or raise the limit with --max-points N if you mean it"));
    }
    Ok(n)
}
