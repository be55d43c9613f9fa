//! Showing numbers the way engineers write them: significant digits, SI
//! prefixes, `a + jb` and `m ∠ θ°`.

use num_complex::Complex64 as C64;

use super::dim::Dim;
use super::kind::{Kind, Quantity};
use super::table::Unit;

/// How a unit is shown when the sheet does not name one: the coherent SI
/// symbol and whether SI prefixes may be put on it.
struct Shown {
    symbol: String,
    prefixable: bool,
    /// Divide the SI value by this before showing (degrees for angles).
    scale: f64,
}

const NAMED: &[(Dim, &str)] = &[
    (Dim::IMPEDANCE, "Ω"),
    (Dim::ADMITTANCE, "S"),
    (Dim::VOLTAGE, "V"),
    (Dim::CURRENT, "A"),
    (Dim::CAPACITANCE, "F"),
    (Dim::INDUCTANCE, "H"),
    (Dim::ENERGY, "J"),
    (Dim::CHARGE, "C"),
    (Dim::FLUX, "Wb"),
    (Dim::TIME, "s"),
    (Dim::LENGTH, "m"),
];

fn shown(q: Quantity) -> Shown {
    let plain = |s: &str, prefixable| Shown {
        symbol: s.to_string(),
        prefixable,
        scale: 1.0,
    };
    match q.kind {
        Kind::Angle => {
            return Shown {
                symbol: "°".into(),
                prefixable: false,
                scale: std::f64::consts::PI / 180.0,
            };
        }
        Kind::PerUnit => return plain("pu", false),
        Kind::RealPower => return plain("W", true),
        Kind::ReactivePower => return plain("var", true),
        Kind::ApparentPower => return plain("VA", true),
        Kind::Hertz => return plain("Hz", true),
        Kind::RadPerSec => return plain("rad/s", false),
        Kind::Plain => {}
    }
    let d = q.dim;
    if d.is_none() {
        return plain("", false);
    }
    if d == Dim::POWER {
        return plain("VA", true);
    }
    if d == Dim::FREQUENCY {
        // SI writes both Hz and rad/s as s⁻¹; without a tag we cannot tell
        // which this is, so we say neither. A prefix on s⁻¹ would read as
        // (ks)⁻¹, so none is used.
        return plain("s⁻¹", false);
    }
    for &(nd, sym) in NAMED {
        if nd == d {
            return plain(sym, true);
        }
    }
    // per metre: Ω/m, F/m, H/m, S/m, V/m
    if let Some(times_m) = d.times(Dim::LENGTH) {
        for &(nd, sym) in NAMED {
            if nd == times_m && nd != Dim::LENGTH {
                return plain(&format!("{sym}/m"), true);
            }
        }
    }
    plain(&d.base_form(), false)
}

/// The coherent SI unit symbol of a quantity (`Ω`, `W`, `var`, `Hz`; `rad`
/// for angles, since that is the SI unit the numbers are kept in).
pub fn base_symbol(q: Quantity) -> String {
    if q.kind == Kind::Angle {
        return "rad".into();
    }
    shown(q).symbol
}

/// How a value is to be displayed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Style {
    pub digits: usize,
}

impl Default for Style {
    fn default() -> Style {
        Style { digits: 4 }
    }
}

const SI_PREFIX: &[(i32, &str)] = &[
    (-15, "f"),
    (-12, "p"),
    (-9, "n"),
    (-6, "µ"),
    (-3, "m"),
    (0, ""),
    (3, "k"),
    (6, "M"),
    (9, "G"),
    (12, "T"),
];

/// The result of formatting one value.
#[derive(Clone, Debug, PartialEq)]
pub struct Formatted {
    /// `8.97 + j3.88 Ω`
    pub rect: String,
    /// `9.77 ∠ 23.4° Ω`
    pub polar: String,
    /// The unit shown, with prefix (`kΩ`), possibly empty.
    pub unit: String,
}

/// Format a value of the given quantity. `display` is the unit the sheet
/// asked for (`[kV]`), if any.
pub fn format_value(z: C64, q: Quantity, display: Option<&Unit>, style: Style) -> Formatted {
    let (scaled, unit) = match display {
        Some(u) => (z / u.factor, u.symbol.clone()),
        None => {
            let s = shown(q);
            let z = z / s.scale;
            if s.prefixable {
                let (p, f) = choose_prefix(z.norm());
                (z / f, format!("{p}{}", s.symbol))
            } else {
                (z, s.symbol)
            }
        }
    };
    let is_angle_unit = unit == "°" || unit == "deg";
    let rect = join_unit(&rect_string(scaled, style.digits), &unit, is_angle_unit);
    let polar = join_unit(&polar_string(scaled, style.digits), &unit, is_angle_unit);
    Formatted { rect, polar, unit }
}

fn join_unit(num: &str, unit: &str, glued: bool) -> String {
    if unit.is_empty() {
        num.to_string()
    } else if glued && !num.contains(' ') {
        format!("{num}{unit}")
    } else {
        format!("{num} {unit}")
    }
}

/// The unit to label an axis with, SI prefix included, for values up to
/// `max_abs` (coherent SI), and the number to divide values by: `("mF",
/// 1e-3)`, `("°", π/180)`, or the sheet's display unit.
pub fn axis_unit(q: Quantity, display: Option<&Unit>, max_abs: f64) -> (String, f64) {
    if let Some(u) = display {
        return (u.symbol.clone(), u.factor);
    }
    let s = shown(q);
    if s.prefixable {
        let (p, f) = choose_prefix(max_abs / s.scale);
        (format!("{p}{}", s.symbol), f * s.scale)
    } else {
        (s.symbol, s.scale)
    }
}

/// The coherent SI symbol and whether SI prefixes go on it.
pub fn unit_prefixable(q: Quantity) -> (String, bool) {
    let s = shown(q);
    (s.symbol, s.prefixable)
}

/// Pick an engineering prefix so the shown magnitude is in [1, 1000).
pub fn choose_prefix(mag: f64) -> (&'static str, f64) {
    if !(mag.is_finite()) || mag == 0.0 {
        return ("", 1.0);
    }
    let e3 = (mag.log10() / 3.0).floor() as i32 * 3;
    // Correct for log10 rounding at exact powers of ten.
    let e3 = if mag / 10f64.powi(e3) >= 1000.0 - 1e-9 {
        e3 + 3
    } else {
        e3
    };
    if !(-15..=12).contains(&e3) {
        // Beyond the prefixes: the plain unit with an exponent.
        return ("", 1.0);
    }
    let p = SI_PREFIX.iter().find(|(e, _)| *e == e3).map_or("", |(_, p)| *p);
    (p, 10f64.powi(e3))
}

/// A real number with `digits` significant digits, trailing zeros trimmed,
/// in exponent form when very large or small.
pub fn fmt_sig(x: f64, digits: usize) -> String {
    let digits = digits.clamp(1, 17);
    if x.is_nan() {
        return "NaN".into();
    }
    if x.is_infinite() {
        return if x > 0.0 { "∞".into() } else { "-∞".into() };
    }
    if x == 0.0 {
        return "0".into();
    }
    let mag = x.abs().log10().floor() as i32;
    if !(-4..15).contains(&mag) {
        let s = format!("{:.*e}", digits - 1, x);
        // 1.2340e-7 -> 1.234e-7
        if let Some((m, e)) = s.split_once('e') {
            return format!("{}e{}", trim_zeros(m), e);
        }
        return s;
    }
    let decimals = (digits as i32 - 1 - mag).max(0) as usize;
    let s = format!("{:.*}", decimals, x);
    // Rounding may have added a digit (999.96 -> 1000.0): fine, just trim.
    trim_zeros(&s)
}

fn trim_zeros(s: &str) -> String {
    if s.contains('.') {
        let t = s.trim_end_matches('0').trim_end_matches('.');
        if t == "-0" {
            "0".into()
        } else {
            t.to_string()
        }
    } else {
        s.to_string()
    }
}

/// `a + jb` form. A part smaller than 1e-12 of the magnitude is rounding
/// noise (cos 90° is not exactly zero) and is not shown.
pub fn rect_string(z: C64, digits: usize) -> String {
    let mag = z.norm();
    let noise = if mag.is_finite() { mag * 1e-12 } else { 0.0 };
    let re = if z.re.abs() <= noise && !z.re.is_nan() {
        0.0
    } else {
        z.re
    };
    let im = if z.im.abs() <= noise && !z.im.is_nan() {
        0.0
    } else {
        z.im
    };
    if im == 0.0 {
        return fmt_sig(re, digits);
    }
    let ims = fmt_sig(im.abs(), digits);
    if re == 0.0 {
        return if im < 0.0 {
            format!("-j{ims}")
        } else {
            format!("j{ims}")
        };
    }
    let sign = if im < 0.0 { '-' } else { '+' };
    format!("{} {} j{}", fmt_sig(re, digits), sign, ims)
}

/// `m ∠ θ°` form, angle in degrees.
pub fn polar_string(z: C64, digits: usize) -> String {
    let mag = z.norm();
    let ang = z.im.atan2(z.re).to_degrees();
    let decimals = digits.saturating_sub(2).max(1);
    let a = format!("{:.*}", decimals, ang);
    let a = trim_zeros(&a);
    format!("{} ∠ {}°", fmt_sig(mag, digits), a)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(d: Dim) -> Quantity {
        Quantity::of(d)
    }

    #[test]
    fn significant_digits() {
        assert_eq!(fmt_sig(136.3e0, 4), "136.3");
        assert_eq!(fmt_sig(9.7703, 3), "9.77");
        assert_eq!(fmt_sig(1.0, 4), "1");
        assert_eq!(fmt_sig(-0.000123456, 4), "-0.0001235");
        assert_eq!(fmt_sig(1.5e20, 4), "1.5e20");
        assert_eq!(fmt_sig(999.96, 4), "1000");
    }

    #[test]
    fn engineering_prefixes() {
        let f = format_value(C64::new(1.363e-4, 0.0), q(Dim::CAPACITANCE), None, Style::default());
        assert_eq!(f.rect, "136.3 µF");
        let f = format_value(
            C64::new(0.0, 35520.0),
            Quantity::new(Dim::POWER, Kind::ReactivePower),
            None,
            Style::default(),
        );
        assert_eq!(f.rect, "j35.52 kvar");
        let f = format_value(C64::new(1000.0, 0.0), q(Dim::IMPEDANCE), None, Style::default());
        assert_eq!(f.rect, "1 kΩ");
    }

    #[test]
    fn rect_and_polar() {
        let z = C64::new(8.97, 3.88);
        let f = format_value(z, q(Dim::IMPEDANCE), None, Style { digits: 3 });
        assert_eq!(f.rect, "8.97 + j3.88 Ω");
        assert_eq!(f.polar, "9.77 ∠ 23.4° Ω");
        assert_eq!(rect_string(C64::new(1.0, -2.0), 4), "1 - j2");
        assert_eq!(rect_string(C64::new(0.0, -30.0), 4), "-j30");
    }

    #[test]
    fn rounding_noise_hidden() {
        let z = C64::from_polar(277.0, std::f64::consts::FRAC_PI_2);
        assert_eq!(rect_string(z, 4), "j277");
    }

    #[test]
    fn angles_shown_in_degrees() {
        let f = format_value(
            C64::new(std::f64::consts::FRAC_PI_4, 0.0),
            Quantity::ANGLE,
            None,
            Style::default(),
        );
        assert_eq!(f.rect, "45°");
    }
}
