//! Atoms: numbers with glued prefixes, `j` and units; names, calls and
//! fields; bracketed expressions with a unit.

use pest::iterators::Pair;

use super::{Cx, Rule, R};
use crate::diag::{Diagnostic, ErrorCode, Span};
use crate::syntax::ast::*;
use crate::units::table::prefix_factor;
use crate::units::{parse_unit_expr, Unit, UnitError};

impl Cx<'_> {
    pub(super) fn atom(&self, p: Pair<Rule>) -> R<(Expr, usize)> {
        let span = self.span(&p);
        match p.as_rule() {
            Rule::quantity | Rule::imag => {
                let imag = p.as_rule() == Rule::imag;
                let mut it = p.into_inner();
                let num = it.next().expect("number");
                let num_span = self.span(&num);
                let mut value: f64 = num.as_str().parse().map_err(|_| {
                    Diagnostic::error(
                        ErrorCode::BadNumber,
                        num_span,
                        format!("`{}` is not a number", num.as_str()),
                    )
                })?;
                if !value.is_finite() {
                    return Err(Diagnostic::error(ErrorCode::BadNumber, num_span, "number too large")
                        .with_label("beyond the range of a double (about 1.8e308)"));
                }
                let mut imag = imag;
                let mut unit = None;
                if let Some(s) = it.next() {
                    match s.as_rule() {
                        Rule::suffix => {
                            let (scale, j, u) = self.glued_suffix(&s, imag)?;
                            value *= scale;
                            imag |= j;
                            unit = u;
                        }
                        Rule::unit_expr => unit = Some(self.unit(&s, true)?),
                        r => unreachable!("quantity part {r:?}"),
                    }
                }
                // The value in coherent SI units must be a double: not
                // overflowing (`1e308T`, `1e308 kV`) and not a non-zero
                // number that underflows to zero (`1e-400`).
                let si = value * unit.as_ref().map_or(1.0, |u| u.unit.factor);
                let mantissa_nonzero = num
                    .as_str()
                    .split(['e', 'E'])
                    .next()
                    .is_some_and(|m| m.bytes().any(|b| (b'1'..=b'9').contains(&b)));
                if !si.is_finite() {
                    return Err(Diagnostic::error(ErrorCode::BadNumber, span, "number too large")
                        .with_label("beyond the range of a double (about 1.8e308) in SI units"));
                }
                if si == 0.0 && mantissa_nonzero {
                    return Err(Diagnostic::error(ErrorCode::BadNumber, span, "number too small")
                        .with_label("below the smallest double (about 5e-324) in SI units; it would read as 0"));
                }
                Ok((
                    Expr {
                        kind: ExprKind::Number { value, imag, unit },
                        span,
                    },
                    1,
                ))
            }
            Rule::name_ref => {
                let mut it = p.into_inner();
                let id = self.ident(it.next().expect("name"));
                let mut next = it.next();
                let Some(call) = next.take_if(|a| a.as_rule() == Rule::call) else {
                    let base = Expr {
                        span: id.span,
                        kind: ExprKind::Name(id),
                    };
                    return Ok(self.with_field(base, next, span));
                };
                let mut args = Vec::new();
                let mut depth = 1;
                for a in call.into_inner() {
                    let e = self.expr(a)?;
                    depth = depth.max(1 + e.depth());
                    args.push(e);
                }
                let field = it.next();
                let call_span = match &field {
                    Some(f) => Span::new(self.file, span.start as usize, self.span(f).start as usize),
                    None => span,
                };
                let base = Expr {
                    kind: ExprKind::Call { func: id, args },
                    span: call_span,
                };
                let (e, d) = self.with_field(base, field, span);
                Ok((e, d + depth))
            }
            Rule::paren_q => {
                let mut it = p.into_inner();
                let paren = it.next().expect("paren");
                let inner = self.expr(paren.into_inner().next().expect("expr"))?;
                let d = inner.depth();
                let unit = match it.next() {
                    Some(u) => Some(self.unit(&u, false)?),
                    None => None,
                };
                Ok((
                    Expr {
                        kind: ExprKind::Paren(Box::new(inner), unit),
                        span,
                    },
                    d + 1,
                ))
            }
            r => unreachable!("atom {r:?}"),
        }
    }

    fn with_field(&self, base: Expr, field: Option<Pair<Rule>>, span: Span) -> (Expr, usize) {
        match field {
            None => (base, 1),
            Some(f) => {
                let id = self.ident(f.into_inner().next().expect("field name"));
                (
                    Expr {
                        kind: ExprKind::Field(Box::new(base), id),
                        span,
                    },
                    2,
                )
            }
        }
    }

    /// Decode what is glued to a number: a prefix (`4.7k`), the imaginary
    /// `j` (`3j`, `2kj`), a unit (`20Ω`, `4.7uF`), or `j` and a unit.
    fn glued_suffix(&self, p: &Pair<Rule>, already_imag: bool) -> R<(f64, bool, Option<UnitRef>)> {
        let s = p.as_str();
        let span = self.span(p);
        if let Some(f) = prefix_factor(s) {
            return Ok((f, false, None));
        }
        if !already_imag {
            // j, kj, µj … optionally followed by a unit
            let (scale, after_prefix) = match PREFIX_CHARS
                .iter()
                .find(|c| s.starts_with(**c) && s[c.len()..].starts_with('j'))
            {
                Some(c) => (prefix_factor(c).unwrap_or(1.0), &s[c.len()..]),
                None => (1.0, s),
            };
            if let Some(rest) = after_prefix.strip_prefix('j') {
                if rest.is_empty() {
                    return Ok((scale, true, None));
                }
                let start = span.end as usize - rest.len();
                let uspan = Span::new(self.file, start, span.end as usize);
                let unit = self.resolve_unit(rest, uspan, false)?;
                return Ok((scale, true, Some(UnitRef { unit, span: uspan })));
            }
        }
        let unit = self.resolve_unit(s, span, false)?;
        Ok((1.0, false, Some(UnitRef { unit, span })))
    }

    pub(super) fn unit(&self, p: &Pair<Rule>, spaced: bool) -> R<UnitRef> {
        let span = self.span(p);
        let unit = self.resolve_unit(p.as_str(), span, spaced)?;
        Ok(UnitRef { unit, span })
    }

    fn resolve_unit(&self, text: &str, span: Span, spaced: bool) -> R<Unit> {
        if spaced && text == "j" {
            return Err(
                Diagnostic::error(ErrorCode::UnknownUnit, span, "`j` after a space is not a unit")
                    .with_hint("write the imaginary number glued, `3j` or `j3`, or multiply: `3 * j`"),
            );
        }
        if spaced && prefix_factor(text).is_some() && text != "m" {
            return Err(Diagnostic::error(
                ErrorCode::UnknownUnit,
                span,
                format!("`{text}` is a prefix, not a unit"),
            )
            .with_hint(format!(
                "glue a prefix to the number (`4.7{text}`) or to a unit (`4.7 {text}Ω`)"
            )));
        }
        parse_unit_expr(text).map_err(|e| match e {
            UnitError::AmbiguousMetre => {
                Diagnostic::error(ErrorCode::AmbiguousUnit, span, "`m` on its own is ambiguous here")
                    .with_label("milli or metres?")
                    .with_hint(
                        "for milli glue it to the number (`5m` is 0.005); for metres write `metre` (or `km`, `mm`)",
                    )
            }
            UnitError::Range(what) => Diagnostic::error(
                ErrorCode::BadNumber,
                span,
                format!("unit `{what}` is beyond the range of a double"),
            )
            .with_label("its scale to SI units overflows or underflows")
            .with_hint("use fewer or smaller powers; doubles reach from about 1e-308 to 1.8e308"),
            UnitError::Exponent(what) => {
                Diagnostic::error(ErrorCode::UnknownUnit, span, format!("bad power in unit `{what}`"))
                    .with_hint("unit powers are whole numbers from -9 to 9, e.g. `m^2`, `s^-1`")
            }
            UnitError::Unknown { word, suggestion, hint } => {
                let mut d = Diagnostic::error(ErrorCode::UnknownUnit, span, format!("unknown unit `{word}`"));
                d = d.with_label("not a unit");
                let mut h = Vec::new();
                // A capital K for kilo (`4.7K`, `2 KV`): the same with `k`.
                let kilo = word.strip_prefix('K').and_then(|rest| {
                    let k = format!("k{rest}");
                    ((rest.is_empty() && !spaced) || (!rest.is_empty() && crate::units::lookup_unit(&k).is_ok()))
                        .then_some(k)
                });
                if let Some(s) = suggestion.as_ref().or(kilo.as_ref()) {
                    d = d.with_fix(span, text.replacen(word.as_str(), s, 1));
                }
                if let Some(s) = suggestion {
                    h.push(format!("did you mean `{s}`?"));
                }
                if let Some(x) = hint {
                    h.push(x);
                }
                if spaced && word == text && !text.contains(['/', '*', '·', '^']) {
                    h.push(format!("if `{word}` is a cell, multiplication needs `*`"));
                } else if text.contains(['/', '*', '·']) {
                    h.push("if this divides or multiplies by a cell, put spaces around the operator".to_string());
                }
                if !h.is_empty() {
                    d = d.with_hint(h.join("; "));
                }
                d
            }
        })
    }
}

const PREFIX_CHARS: &[&str] = &["f", "p", "n", "u", "µ", "μ", "m", "k", "M", "G", "T"];
