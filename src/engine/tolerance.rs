//! Tolerances on inputs, as compiled: what values an input may take
//! around its stated value, and with what likelihood (docs/tolerances.md).
//!
//! A sheet states them after the value (`Qc = 600 kvar within -0 % .. +10 %`);
//! `model/lower_spread.rs` checks them against the input's unit and kind and
//! puts one [`Spread`] per toleranced input in `Model::spreads`. A sheet
//! without tolerances has none, and nothing else changes. The analyses
//! (`crate::spread`) read them; evaluation never does.
//!
//! A spread has one to two continuous *directions* — the magnitude (or the
//! real value) and, for a phasor, the angle — or one discrete direction, a
//! choice between listed values. A point of the tolerance box gives each
//! direction an *offset*: a fraction of the value (relative), an amount in
//! the input's SI unit (absolute), an angle in radians, or the index of a
//! listed value.

use num_complex::Complex64 as C64;

use super::CellId;
use crate::diag::Span;

/// Offsets `lo ..= hi` from the stated value (`lo ≤ 0 ≤ hi`).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Band {
    pub lo: f64,
    pub hi: f64,
}

impl Band {
    pub fn symmetric(&self) -> bool {
        self.lo == -self.hi
    }
    pub fn is_zero(&self) -> bool {
        self.lo == 0.0 && self.hi == 0.0
    }
    /// The offset a fraction `t` (0 ..= 1) of the way from `lo` to `hi`.
    pub fn at(&self, t: f64) -> f64 {
        self.lo + (self.hi - self.lo) * t
    }
}

/// How the magnitude's band is stated.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum MagBand {
    /// Fractions of the value: `within 5 %` is −0.05 ..= +0.05.
    Relative(Band),
    /// Amounts in the input's coherent SI unit: `within 0.2 MW`.
    Absolute(Band),
}

impl MagBand {
    pub fn band(&self) -> Band {
        match self {
            MagBand::Relative(b) | MagBand::Absolute(b) => *b,
        }
    }
}

/// How likely each value of the band is.
#[derive(Clone, Debug, PartialEq)]
pub enum Law {
    /// Every value of the band equally likely (the default: a
    /// manufacturing tolerance).
    Uniform,
    /// Normal about the stated value; the band's half-width is `k`
    /// standard deviations (`normal 3σ`). Worst case takes the band
    /// itself as the box.
    Normal { k: f64 },
    /// One of the listed values, each equally likely (`among …`).
    Among(Vec<C64>),
}

/// One input's tolerance.
#[derive(Clone, Debug, PartialEq)]
pub struct Spread {
    pub cell: CellId,
    /// The clause as written, from `within` or `among` on.
    pub span: Span,
    /// On the magnitude (a real input: on its value, keeping its sign).
    pub mag: Option<MagBand>,
    /// On the angle, radians.
    pub angle: Option<Band>,
    pub law: Law,
}

/// A check that must hold over the tolerances (`over the box`,
/// `over 99 % of samples`).
#[derive(Clone, Debug, PartialEq)]
pub struct SpreadCheck {
    /// The check's cell.
    pub cell: CellId,
    /// The share of samples required (a fraction), or `None`: every point
    /// of the box.
    pub share: Option<f64>,
    pub span: Span,
}

/// One direction of a spread.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Direction {
    Magnitude,
    Angle,
    /// Which of the listed values.
    Choice,
}

impl Spread {
    /// Its directions, in order: magnitude, angle; or the choice.
    pub fn directions(&self) -> Vec<Direction> {
        if let Law::Among(_) = self.law {
            return vec![Direction::Choice];
        }
        let mut d = Vec::new();
        if self.mag.is_some() {
            d.push(Direction::Magnitude);
        }
        if self.angle.is_some() {
            d.push(Direction::Angle);
        }
        d
    }

    /// The ends of a direction's box: offsets, or the first and last index.
    pub fn bounds(&self, d: Direction) -> (f64, f64) {
        match d {
            Direction::Magnitude => self.mag.map_or((0.0, 0.0), |m| (m.band().lo, m.band().hi)),
            Direction::Angle => self.angle.map_or((0.0, 0.0), |b| (b.lo, b.hi)),
            Direction::Choice => match &self.law {
                Law::Among(v) => (0.0, v.len().saturating_sub(1) as f64),
                _ => (0.0, 0.0),
            },
        }
    }

    /// The standard deviation of a continuous direction's offset under the
    /// spread's law (uniform over the band: width/√12; normal: half-width/k).
    pub fn std_dev(&self, d: Direction) -> f64 {
        let (lo, hi) = self.bounds(d);
        match self.law {
            Law::Normal { k } => (hi - lo) / 2.0 / k,
            _ => (hi - lo) / 12f64.sqrt(),
        }
    }

    /// The input's value at these offsets from `nominal` (`mag`: of the
    /// magnitude, relative or absolute as stated; `angle`: radians;
    /// `choice`: the index of a listed value, used only by `among`).
    pub fn value(&self, nominal: C64, mag: f64, angle: f64, choice: usize) -> C64 {
        if let Law::Among(v) = &self.law {
            return v.get(choice).copied().unwrap_or(nominal);
        }
        let scaled = match self.mag {
            None => nominal,
            Some(MagBand::Relative(_)) => nominal * (1.0 + mag),
            Some(MagBand::Absolute(_)) => {
                let r = nominal.norm();
                if r == 0.0 {
                    // A zero value has no direction: the offset is real.
                    C64::new(mag, 0.0)
                } else {
                    nominal * ((r + mag) / r)
                }
            }
        };
        if angle == 0.0 {
            scaled
        } else {
            scaled * C64::from_polar(1.0, angle)
        }
    }

    /// Why this tolerance cannot stand around `nominal` (a value other than
    /// the one the sheet states, e.g. a batch case's): an absolute band
    /// that would take the magnitude below zero, or a percentage or angle
    /// band on a zero value (which would move nothing). `None` when it can.
    pub fn refuses(&self, nominal: C64) -> Option<&'static str> {
        if nominal.norm() == 0.0 {
            if matches!(self.mag, Some(MagBand::Relative(b)) if !b.is_zero()) {
                return Some("a percentage of a zero value is zero, so the band would move nothing; give the input an absolute band `0 .. +A`");
            }
            if self.angle.is_some_and(|b| !b.is_zero()) {
                return Some("a zero value has no angle to vary; give the input an absolute band `0 .. +A`");
            }
        }
        match self.mag {
            Some(MagBand::Absolute(b)) if b.lo < -nominal.norm() => Some(if nominal.norm() == 0.0 {
                "a zero value (a short) can only grow, and the band would take it below zero; give the input a band `0 .. +A`"
            } else {
                "the band would take the magnitude below zero (a tolerance on the magnitude is at most the magnitude itself)"
            }),
            _ => None,
        }
    }

    /// Every band is zero (or every listed value is the same).
    pub fn is_zero(&self) -> bool {
        match &self.law {
            Law::Among(v) => v.windows(2).all(|w| w[0] == w[1]),
            _ => self.mag.is_none_or(|m| m.band().is_zero()) && self.angle.is_none_or(|b| b.is_zero()),
        }
    }

    /// The tolerance in words, an absolute amount written by `abs` (for
    /// tables and reports): `−0 % / +10 %`, `±7.5 %, normal (3σ)`.
    pub fn describe(&self, abs: &dyn Fn(f64) -> String) -> String {
        let pct = |x: f64| fmt_num(x * 100.0);
        let band = |b: Band, f: &dyn Fn(f64) -> String, u: &str| {
            if b.symmetric() {
                format!("±{}{u}", f(b.hi))
            } else {
                format!("−{}{u} / +{}{u}", f(-b.lo), f(b.hi))
            }
        };
        let mut parts = Vec::new();
        match &self.law {
            Law::Among(v) => return format!("one of {} values", v.len()),
            _ => {
                if let Some(m) = self.mag {
                    parts.push(match m {
                        MagBand::Relative(b) => band(b, &pct, " %"),
                        MagBand::Absolute(b) => band(b, abs, ""),
                    });
                }
                if let Some(a) = self.angle {
                    parts.push(format!("angle {}", band(a, &|x| fmt_num(x.to_degrees()), "°")));
                }
            }
        }
        let law = match self.law {
            Law::Normal { k } => format!(", normal ({}σ)", fmt_num(k)),
            _ => String::new(),
        };
        format!("{}{law}", parts.join(", "))
    }
}

fn fmt_num(x: f64) -> String {
    let s = format!("{:.6}", x);
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".into()
    } else {
        s.to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sp(mag: Option<MagBand>, angle: Option<Band>, law: Law) -> Spread {
        Spread {
            cell: 0,
            span: Span::new(crate::diag::FileId(0), 0, 0),
            mag,
            angle,
            law,
        }
    }

    #[test]
    fn offsets_scale_the_magnitude_and_turn_the_angle() {
        let b = Band { lo: -0.1, hi: 0.1 };
        let s = sp(
            Some(MagBand::Relative(b)),
            Some(Band { lo: -0.1, hi: 0.1 }),
            Law::Uniform,
        );
        let v = s.value(C64::from_polar(10.0, 0.3), 0.1, -0.05, 0);
        assert!((v.norm() - 11.0).abs() < 1e-12);
        assert!((v.arg() - 0.25).abs() < 1e-12);
        // An absolute band adds to the magnitude and keeps a negative real negative.
        let s = sp(Some(MagBand::Absolute(Band { lo: -2.0, hi: 2.0 })), None, Law::Uniform);
        assert_eq!(s.value(C64::new(-10.0, 0.0), 2.0, 0.0, 0), C64::new(-12.0, 0.0));
        assert_eq!(s.value(C64::new(0.0, 0.0), -2.0, 0.0, 0), C64::new(-2.0, 0.0));
    }

    #[test]
    fn standard_deviations_follow_the_law() {
        // Uniform on [a, b]: (b − a)/√12 (JCGM 100:2008 §4.3.7).
        let b = Band { lo: -0.05, hi: 0.05 };
        let s = sp(Some(MagBand::Relative(b)), None, Law::Uniform);
        assert!((s.std_dev(Direction::Magnitude) - 0.1 / 12f64.sqrt()).abs() < 1e-15);
        let s = sp(Some(MagBand::Relative(b)), None, Law::Normal { k: 2.0 });
        assert!((s.std_dev(Direction::Magnitude) - 0.025).abs() < 1e-15);
    }

    #[test]
    fn descriptions() {
        let s = sp(Some(MagBand::Relative(Band { lo: -0.0, hi: 0.1 })), None, Law::Uniform);
        assert_eq!(s.describe(&|x| format!("{x} V")), "−0 % / +10 %");
        let s = sp(
            Some(MagBand::Relative(Band { lo: -0.075, hi: 0.075 })),
            None,
            Law::Normal { k: 3.0 },
        );
        assert_eq!(s.describe(&|x| format!("{x} V")), "±7.5 %, normal (3σ)");
    }
}
