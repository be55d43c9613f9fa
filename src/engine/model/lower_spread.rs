//! Checking an input's tolerance (`within …`, `among …`) against the
//! input's unit and kind, and turning it into a `tolerance::Spread`.

use num_complex::Complex64 as C64;

use super::*;
use crate::diag::{Diagnostic, ErrorCode, Span};
use crate::engine::program::{Emitter, SlotSpace};
use crate::engine::tolerance::{Band, Law, MagBand, Spread};
use crate::units::kind::fits_input;
use crate::units::{Kind, Quantity};

impl Lowerer<'_> {
    /// The tolerance `spec` of cell `id`, which has just been lowered to
    /// `nominal` (its value when known now) with quantity `q`.
    pub(super) fn lower_spread(&self, spec: &SpreadSpec, id: CellId, q: Quantity, nominal: Option<C64>) -> R<Spread> {
        let cell = &self.cells[id as usize];
        let bad = |span: Span, msg: String| Diagnostic::error(ErrorCode::BadInputTolerance, span, msg);
        match &spec.form {
            SpreadForm::Among(values) => {
                let mut vs = Vec::with_capacity(values.len());
                for e in values {
                    let (v, vq) = self.spread_constant(e)?;
                    if !(fits_input(q, vq) || v == C64::new(0.0, 0.0) && vq == Quantity::PLAIN) {
                        return Err(self.unit_clash(cell, q, vq, e.span));
                    }
                    if !(v.re.is_finite() && v.im.is_finite()) {
                        return Err(bad(e.span, "a listed value must be finite".into()));
                    }
                    if v.im != 0.0 && must_be_real(q.kind) {
                        return Err(bad(
                            e.span,
                            format!("`{}` is {}, a real value; this one is complex", cell.name, q.describe()),
                        ));
                    }
                    vs.push(v);
                }
                Ok(Spread {
                    cell: id,
                    span: spec.span,
                    mag: None,
                    angle: None,
                    law: Law::Among(vs),
                })
            }
            SpreadForm::Band { mag, angle, law } => {
                let mag = match mag {
                    Some(b) => Some(self.mag_band(b, cell, q, nominal)?),
                    None => None,
                };
                let angle = match angle {
                    Some(b) => {
                        if must_be_real(q.kind) {
                            return Err(bad(
                                b.span,
                                format!("`{}` is {}, which has no angle to vary", cell.name, q.describe()),
                            )
                            .with_hint("give a tolerance on the value only: `within 5 %`"));
                        }
                        let band = self.angle_band(b)?;
                        if nominal.is_some_and(|v| v.norm() == 0.0) && !band.is_zero() {
                            return Err(
                                bad(b.span, format!("`{}` is zero, which has no angle to vary", cell.name)).with_hint(
                                    "a zero value can only grow: give an absolute band on the value, `within 0 .. +A`",
                                ),
                            );
                        }
                        Some(band)
                    }
                    None => None,
                };
                let law = match law {
                    LawText::Uniform => Law::Uniform,
                    LawText::Normal { k, span } => {
                        if !(k.is_finite() && *k > 0.0) {
                            return Err(
                                bad(*span, "the coverage factor of `normal` must be more than zero".into())
                                    .with_hint("`normal 3σ`: the tolerance is three standard deviations"),
                            );
                        }
                        let asym = mag.is_some_and(|m| !m.band().symmetric()) || angle.is_some_and(|a| !a.symmetric());
                        if asym {
                            return Err(bad(*span, "a normal law needs a symmetric tolerance".into())
                                .with_label("the band is not the same each side")
                                .with_hint("write `within 5 % normal 2σ`, or drop `normal` for a uniform band"));
                        }
                        Law::Normal { k: *k }
                    }
                };
                Ok(Spread {
                    cell: id,
                    span: spec.span,
                    mag,
                    angle,
                    law,
                })
            }
        }
    }

    fn mag_band(&self, b: &BandText, cell: &Cell, q: Quantity, nominal: Option<C64>) -> R<MagBand> {
        let hi = self.spread_constant(&b.hi)?;
        let lo = match &b.lo {
            Some(e) => Some((self.spread_constant(e)?, e.span)),
            None => None,
        };
        let relative = |x: &(C64, Quantity)| x.1.kind == Kind::Percent && x.1.dim.is_none();
        let bare_zero = |x: &(C64, Quantity)| x.0 == C64::new(0.0, 0.0) && x.1 == Quantity::PLAIN;
        let is_rel = relative(&hi) || lo.as_ref().is_some_and(|l| relative(&l.0));
        let ends: Vec<(&(C64, Quantity), Span)> = lo
            .as_ref()
            .map(|l| (&l.0, l.1))
            .into_iter()
            .chain(std::iter::once((&hi, b.hi.span)))
            .collect();
        for &(x, span) in &ends {
            if bare_zero(x) {
                continue;
            }
            if is_rel && !relative(x) {
                return Err(Diagnostic::error(
                    ErrorCode::BadInputTolerance,
                    span,
                    "one end of the band is a percentage and the other is not",
                )
                .with_hint("write both ends in %, or both in the input's unit"));
            }
            if !is_rel && !fits_input(q, x.1) {
                return Err(self.unit_clash(cell, q, x.1, span));
            }
            if x.0.im != 0.0 || !x.0.re.is_finite() {
                return Err(Diagnostic::error(
                    ErrorCode::BadInputTolerance,
                    span,
                    "a tolerance is a finite real amount",
                ));
            }
        }
        let band = self.order_band(b, lo.as_ref().map(|l| l.0 .0.re), hi.0.re)?;
        if is_rel {
            if band.lo < -1.0 {
                return Err(Diagnostic::error(
                    ErrorCode::BadInputTolerance,
                    b.span,
                    "the band takes the magnitude below zero (more than −100 %)",
                ));
            }
            if nominal.is_some_and(|v| v.norm() == 0.0) && !band.is_zero() {
                return Err(Diagnostic::error(
                    ErrorCode::BadInputTolerance,
                    b.span,
                    format!("`{}` is zero, and a percentage of zero is zero: this band would move nothing", cell.name),
                )
                .with_hint("a zero value can only grow: give an absolute band in the input's unit, `within 0 .. +A` (for a short, `within 0 Ω .. +0.5 Ω`)"));
            }
            Ok(MagBand::Relative(band))
        } else {
            if let Some(v) = nominal {
                if band.lo < -v.norm() {
                    let hint = if v.norm() == 0.0 {
                        "a zero value can only grow: write the band `0 .. +A` (e.g. `within 0 Ω .. +1 Ω`)"
                    } else {
                        "a tolerance on the magnitude is at most the magnitude itself"
                    };
                    return Err(Diagnostic::error(
                        ErrorCode::BadInputTolerance,
                        b.span,
                        format!("the band takes the magnitude of `{}` below zero", cell.name),
                    )
                    .with_hint(hint));
                }
            }
            Ok(MagBand::Absolute(band))
        }
    }

    fn angle_band(&self, b: &BandText) -> R<Band> {
        let mut vals = Vec::new();
        for e in b.lo.iter().chain(std::iter::once(&b.hi)) {
            let (v, q) = self.spread_constant(e)?;
            let zero = v == C64::new(0.0, 0.0) && q == Quantity::PLAIN;
            if !(zero || q.kind == Kind::Angle && q.dim.is_none()) {
                return Err(Diagnostic::error(
                    ErrorCode::ToleranceUnit,
                    e.span,
                    format!("a tolerance on the angle is an angle; this is {}", q.describe()),
                )
                .with_hint("write it in degrees or radians: `angle 3°`"));
            }
            if v.im != 0.0 || !v.re.is_finite() {
                return Err(Diagnostic::error(
                    ErrorCode::BadInputTolerance,
                    e.span,
                    "a tolerance is a finite real amount",
                ));
            }
            vals.push(v.re);
        }
        let hi = vals.pop().unwrap_or(0.0);
        let band = self.order_band(b, vals.pop(), hi)?;
        if band.hi - band.lo >= 2.0 * std::f64::consts::PI {
            return Err(Diagnostic::error(
                ErrorCode::BadInputTolerance,
                b.span,
                "the band on the angle spans a whole turn or more",
            ));
        }
        Ok(band)
    }

    /// `A` → −A ..= A; `LO .. HI` kept, with LO ≤ 0 ≤ HI.
    fn order_band(&self, b: &BandText, lo: Option<f64>, hi: f64) -> R<Band> {
        match lo {
            None => {
                if hi < 0.0 {
                    return Err(Diagnostic::error(
                        ErrorCode::BadInputTolerance,
                        b.span,
                        "a tolerance is a half-width, zero or more",
                    )
                    .with_hint("for a band on one side write `within -5 % .. +0 %`"));
                }
                Ok(Band { lo: -hi, hi })
            }
            Some(lo) => {
                if lo > 0.0 || hi < 0.0 {
                    return Err(Diagnostic::error(
                        ErrorCode::BadInputTolerance,
                        b.span,
                        "the band must contain the stated value: its low end is zero or below, its high end zero or above",
                    )
                    .with_label("offsets from the stated value")
                    .with_hint("write the offsets each side: `within -0 % .. +10 %`"));
                }
                Ok(Band { lo, hi })
            }
        }
    }

    /// A tolerance amount: a constant (number with a unit, arithmetic on
    /// such), never a cell.
    fn spread_constant(&self, e: &Expr) -> R<(C64, Quantity)> {
        let mut named: Option<Ident> = None;
        e.for_each_name(&mut |id| {
            if named.is_none() && self.by_name.contains_key(&id.name) {
                named = Some(id.clone());
            }
        });
        if let Some(id) = named {
            return Err(Diagnostic::error(
                ErrorCode::BadInputTolerance,
                id.span,
                format!("a tolerance is a number with a unit, not a cell (`{}`)", id.name),
            )
            .with_hint("write the amount itself, e.g. `within 5 %` or `within 0.2 MW`"));
        }
        let (mut code, mut args, mut slots) = (Vec::new(), Vec::new(), SlotSpace::default());
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
        let (o, q) = scratch.scalar(&mut em, e)?;
        match o.konst() {
            Some(v) => Ok((v, q)),
            None => Err(Diagnostic::error(
                ErrorCode::BadInputTolerance,
                e.span,
                "a tolerance must be known without evaluating the sheet",
            )
            .with_hint("write a number with a unit, e.g. `5 %` or `0.2 MW`")),
        }
    }

    fn unit_clash(&self, cell: &Cell, want: Quantity, got: Quantity, span: Span) -> Diagnostic {
        let text = self.sources.slice(span);
        let unit = cell.display.as_ref().map(|u| u.symbol.clone());
        let (message, hint) = crate::units::kind::input_clash(&cell.name, want, got, text, unit.as_deref());
        Diagnostic::error(ErrorCode::ToleranceUnit, span, message)
            .with_label("the tolerance must fit the input's unit")
            .with_hint(format!("{hint}, or a percentage of the value: `5 %`"))
    }
}

/// Kinds whose values are real numbers: no angle to vary.
fn must_be_real(k: Kind) -> bool {
    matches!(
        k,
        Kind::RealPower | Kind::ReactivePower | Kind::Angle | Kind::Hertz | Kind::RadPerSec | Kind::Decibel
    )
}
