//! Showing numbers the way engineers write them: significant digits, SI
//! prefixes, `a + jb` and `m ∠ θ°`.

use num_complex::Complex64 as C64;

use super::dim::Dim;
use super::kind::{Kind, Quantity};
use super::table::Unit;

/// How a unit is shown when the sheet does not name one: the symbol, how
/// SI prefixes go on it, and the scale of the numbers shown.
struct Shown {
    symbol: String,
    /// The power of the unit a prefix attaches to: 1 for `kΩ`, 2 for
    /// `kΩ²` (which is (kΩ)², SI Brochure §3); 0 when no prefix is used.
    prefix_power: i32,
    /// What follows a prefix: the symbol itself, or the trade's glued form
    /// (`kWh`, `kvarh` for `W·h`, `var·h`).
    prefixed: String,
    /// Divide the SI value by this before showing (degrees for angles,
    /// 3600 for watt-hours).
    scale: f64,
}

impl Shown {
    fn new(symbol: &str, prefix_power: i32) -> Shown {
        Shown {
            symbol: symbol.to_string(),
            prefix_power,
            prefixed: symbol.to_string(),
            scale: 1.0,
        }
    }
}

/// Units with a name of their own (SI Brochure, 9th ed., Tables 2 and 4),
/// each the display for its dimension.
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

/// The units a dimension without a name of its own is written in, in
/// order of preference (see `compound`).
const FACTORS: &[(Dim, &str)] = &[
    (Dim::IMPEDANCE, "Ω"),
    (Dim::ADMITTANCE, "S"),
    (Dim::VOLTAGE, "V"),
    (Dim::CURRENT, "A"),
    (Dim::POWER, "W"),
    (Dim::CAPACITANCE, "F"),
    (Dim::INDUCTANCE, "H"),
    (Dim::ENERGY, "J"),
    (Dim::CHARGE, "C"),
    (Dim::FLUX, "Wb"),
    (Dim::TIME, "s"),
    (Dim::LENGTH, "m"),
];

/// `u^p` written the way ohmsheet reads it back: `Ω`, `Ω²`, `m⁻¹`.
fn power_of(sym: &str, p: i32) -> String {
    if p == 1 {
        sym.to_string()
    } else {
        format!("{sym}{}", super::dim::superscript(p))
    }
}

/// A dimension with no unit of its own, written with the units of
/// `FACTORS`: one unit to a power (`Ω²`, `s⁻²`), else a product or
/// quotient of two (`Ω·m`, `A/m²`, `V/s`). Of the forms that fit, the one
/// with fewer units wins, then the smaller sum of the powers' sizes, then
/// fewer negative powers, then one with a second or a metre in it (a rate
/// or a per-length value: `A/s`, not `V/H`), then the earlier units in
/// `FACTORS`. Returns the
/// symbol and the power of its first unit (a prefix goes there when that
/// power is positive). `None` when no form of one or two units with powers
/// up to 3 fits: the dimension is then written in base units.
fn compound(d: Dim) -> Option<(String, i32)> {
    const POWERS: [i32; 6] = [1, 2, 3, -1, -2, -3];
    // (units, Σ|power|, negatives, no s or m, first index, second index)
    type Score = (u8, i32, u8, bool, usize, usize);
    let mut best: Option<(Score, String, i32)> = None;
    let mut offer = |score: Score, sym: String, p: i32| {
        if best.as_ref().is_none_or(|(s, _, _)| score < *s) {
            best = Some((score, sym, p));
        }
    };
    for (i, &(da, sa)) in FACTORS.iter().enumerate() {
        for &p in &POWERS {
            let Some(dp) = da.powi(p) else { continue };
            if dp == d && p != 1 {
                offer((1, p.abs(), u8::from(p < 0), true, i, 0), power_of(sa, p), p);
            }
            for (k, &(db, sb)) in FACTORS.iter().enumerate().skip(i + 1) {
                for &q in &POWERS {
                    if db.powi(q).and_then(|dq| dp.times(dq)) != Some(d) {
                        continue;
                    }
                    let negatives = u8::from(p < 0) + u8::from(q < 0);
                    let rate = matches!(sb, "s" | "m");
                    let score = (2, p.abs() + q.abs(), negatives, !rate, i, k);
                    let (sym, first) = match (p > 0, q > 0) {
                        (true, true) => (format!("{}·{}", power_of(sa, p), power_of(sb, q)), p),
                        (true, false) => (format!("{}/{}", power_of(sa, p), power_of(sb, -q)), p),
                        (false, true) => (format!("{}/{}", power_of(sb, q), power_of(sa, -p)), q),
                        (false, false) => (format!("{}·{}", power_of(sa, p), power_of(sb, q)), p),
                    };
                    offer(score, sym, first);
                }
            }
        }
    }
    best.map(|(_, s, p)| (s, p))
}

/// The trade's unit of energy for a power of a known kind: W·h, var·h and
/// V·A·h, written kWh, kvarh and kVAh with a prefix (IEC 60050-601 and
/// meter practice).
fn energy_of(kind: Kind) -> Option<(&'static str, &'static str)> {
    match kind {
        Kind::RealPower => Some(("W·h", "Wh")),
        Kind::ReactivePower => Some(("var·h", "varh")),
        Kind::ApparentPower => Some(("VA·h", "VAh")),
        _ => None,
    }
}

fn shown(q: Quantity) -> Shown {
    match q.kind {
        Kind::Angle => {
            return Shown {
                scale: std::f64::consts::PI / 180.0,
                ..Shown::new("°", 0)
            };
        }
        Kind::PerUnit => return Shown::new("pu", 0),
        Kind::Percent => {
            return Shown {
                scale: 0.01,
                ..Shown::new("%", 0)
            };
        }
        Kind::Decibel => return Shown::new("dB", 0),
        Kind::RealPower | Kind::ReactivePower | Kind::ApparentPower if q.dim == Dim::ENERGY => {
            let (sym, glued) = energy_of(q.kind).unwrap_or(("J", "J"));
            return Shown {
                prefixed: glued.to_string(),
                scale: 3600.0,
                ..Shown::new(sym, 1)
            };
        }
        Kind::RealPower => return Shown::new("W", 1),
        Kind::ReactivePower => return Shown::new("var", 1),
        Kind::ApparentPower => return Shown::new("VA", 1),
        Kind::Hertz => return Shown::new("Hz", 1),
        Kind::RadPerSec => return Shown::new("rad/s", 0),
        Kind::Plain => {}
    }
    let d = q.dim;
    if d.is_none() {
        return Shown::new("", 0);
    }
    if d == Dim::POWER {
        return Shown::new("VA", 1);
    }
    if d == Dim::FREQUENCY {
        // SI writes both Hz and rad/s as s⁻¹; without a tag we cannot tell
        // which this is, so we say neither. A prefix on s⁻¹ would read as
        // (ks)⁻¹, so none is used.
        return Shown::new("s⁻¹", 0);
    }
    for &(nd, sym) in NAMED {
        if nd == d {
            return Shown::new(sym, 1);
        }
    }
    if let Some((sym, p)) = compound(d) {
        return Shown::new(&sym, p.max(0));
    }
    Shown::new(&d.base_form(), 0)
}

/// The coherent SI unit symbol of a quantity: the unit `re` and `im` of a
/// value are in (`Ω`, `W`, `var`, `Hz`; `rad` for angles, since that is
/// the SI unit the numbers are kept in; `W·s`, `var·s` for energies of a
/// power kind).
pub fn base_symbol(q: Quantity) -> String {
    match q.kind {
        Kind::Angle => return "rad".into(),
        // kept as a fraction: 12 % is 0.12
        Kind::Percent => return String::new(),
        _ => {}
    }
    if q.dim == Dim::ENERGY {
        if let Some((sym, _)) = energy_of(q.kind) {
            return sym.replace('h', "s");
        }
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
    let (scaled, unit) = scaled_in_unit(z, q, display);
    let rect = rect_in(scaled, &unit, style);
    // A real value has no polar form of its own: `3 Ω`, not `3 ∠ 0° Ω`,
    // and `-5 V`, not `5 ∠ 180° V` (common practice: a phasor angle is
    // given for a phasor).
    // Nor has an angle with an imaginary part (`acos(1.5)` is -j55.14°):
    // a magnitude and an angle of an angle (`55.14 ∠ -90° °`) would only
    // mislead.
    let polar = if has_polar_form(scaled, &unit) {
        polar_in(scaled, &unit, style)
    } else {
        rect.clone()
    };
    Formatted { rect, polar, unit }
}

/// One form of `format_value` — its `polar` field when `polar`, else its
/// `rect` — without working out the other (a record of a thousand fields
/// is shown in one form).
pub fn format_form(z: C64, q: Quantity, display: Option<&Unit>, style: Style, polar: bool) -> String {
    let (scaled, unit) = scaled_in_unit(z, q, display);
    if polar && has_polar_form(scaled, &unit) {
        polar_in(scaled, &unit, style)
    } else {
        rect_in(scaled, &unit, style)
    }
}

/// The value in the unit it is shown in, and that unit (with its prefix).
fn scaled_in_unit(z: C64, q: Quantity, display: Option<&Unit>) -> (C64, String) {
    match display {
        Some(u) => (z / u.factor, u.symbol.clone()),
        None => {
            let s = shown(q);
            let z = z / s.scale;
            let (p, f) = s.prefix_for(z.norm());
            (z / f, s.with_prefix(p))
        }
    }
}

fn glued_unit(unit: &str) -> bool {
    unit == "°" || unit == "deg"
}

/// Whether a value shown in `unit` has a polar form of its own (see
/// `format_value`).
fn has_polar_form(scaled: C64, unit: &str) -> bool {
    !is_real(scaled) && !glued_unit(unit)
}

fn rect_in(scaled: C64, unit: &str, style: Style) -> String {
    join_unit(&rect_string(scaled, style.digits), unit, glued_unit(unit))
}

fn polar_in(scaled: C64, unit: &str, style: Style) -> String {
    join_unit(&polar_string(scaled, style.digits), unit, glued_unit(unit))
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
    let (p, f) = s.prefix_for(max_abs / s.scale);
    (s.with_prefix(p), f * s.scale)
}

/// A check's difference and allowance, both in one unit so they compare at
/// a glance (`0.5 kW`, allowed `1 kW`; never `500 W` against `1 kW`): a
/// dimensionless display unit the sheet chose (`%`, `pu`) if there is one,
/// else the unit `axis_unit` picks for the larger of the two — the same
/// on the command line, in reports and in the session.
pub fn check_gap(q: Quantity, display: Option<&Unit>, diff: f64, tol: f64, style: Style) -> (String, String) {
    let big = [diff, tol].into_iter().filter(|x| x.is_finite()).fold(0.0, f64::max);
    let unit = match display {
        Some(u) if u.q.dim.is_none() => u.clone(),
        _ => {
            let (symbol, factor) = axis_unit(q, None, big);
            Unit { factor, q, symbol }
        }
    };
    let show = |x: f64| format_value(C64::new(x, 0.0), q, Some(&unit), style).rect;
    (show(diff), show(tol))
}

/// The coherent SI symbol and whether SI prefixes go on it.
pub fn unit_prefixable(q: Quantity) -> (String, bool) {
    let s = shown(q);
    if s.scale != 1.0 && q.kind != Kind::Angle {
        // Numbers at scale 1 are in the coherent unit (W·s, not W·h).
        return (base_symbol(q), false);
    }
    (s.symbol, s.prefix_power == 1)
}

impl Shown {
    /// The prefix for a magnitude (in the unprefixed unit), and its factor
    /// on the value: `("k", 1e6)` for 9e6 Ω², which is 9 (kΩ)².
    fn prefix_for(&self, mag: f64) -> (&'static str, f64) {
        match self.prefix_power {
            0 => ("", 1.0),
            1 => choose_prefix(mag),
            p => {
                let (pre, f) = choose_prefix(mag.powf(1.0 / p as f64));
                (pre, f.powi(p))
            }
        }
    }

    fn with_prefix(&self, p: &str) -> String {
        if p.is_empty() {
            self.symbol.clone()
        } else {
            format!("{p}{}", self.prefixed)
        }
    }
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

/// The value has no imaginary part beyond rounding noise (see
/// `rect_string`), so it is shown as a real number.
pub fn is_real(z: C64) -> bool {
    let mag = z.norm();
    let noise = if mag.is_finite() { mag * 1e-12 } else { 0.0 };
    z.im == 0.0 || (z.im.abs() <= noise && !z.re.is_nan())
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

/// `m ∠ θ°` form, angle in degrees: the principal value, −180° < θ ≤ 180°
/// (`ops::arg`), so a negative real with a −0 imaginary part is ∠ 180°,
/// and an angle that rounds to −180° is shown as 180°.
pub fn polar_string(z: C64, digits: usize) -> String {
    let mag = z.norm();
    let ang = crate::engine::ops::arg(z).to_degrees();
    let decimals = digits.saturating_sub(2).max(1);
    let a = format!("{:.*}", decimals, ang);
    let a = trim_zeros(&a);
    let a = match a.as_str() {
        "-180" => "180".to_string(),
        "-0" => "0".to_string(),
        _ => a,
    };
    format!("{} ∠ {}°", fmt_sig(mag, digits), a)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The principal argument, −180° < θ ≤ 180° (DLMF §4.2): a negative
    /// real is ∠ 180° whatever the sign of its zero imaginary part, and an
    /// angle just above −180° that rounds to it is written 180°.
    #[test]
    fn polar_angles_are_principal_values() {
        assert_eq!(polar_string(C64::new(-5.0, -0.0), 4), "5 ∠ 180°");
        assert_eq!(polar_string(C64::new(-5.0, 0.0), 4), "5 ∠ 180°");
        assert_eq!(polar_string(C64::new(-5.0, -1e-9), 4), "5 ∠ 180°");
        assert_eq!(polar_string(C64::new(0.0, -0.0), 4), "0 ∠ 0°");
        assert_eq!(polar_string(C64::new(-1.0, -1.0), 4), "1.414 ∠ -135°");
    }

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

    fn show(re: f64, q: Quantity) -> String {
        format_value(C64::new(re, 0.0), q, None, Style::default()).rect
    }

    // Products and powers of units are written as the SI Brochure (9th ed.,
    // §5.4.3) writes them: a half-high dot for a product, a solidus for a
    // quotient, a superscript for a power. A prefix belongs to the unit it
    // stands on, and the power applies to both (§3: 1 cm³ = (10⁻² m)³).
    #[test]
    fn products_of_named_units() {
        let ohm2 = Dim::IMPEDANCE.powi(2).unwrap();
        assert_eq!(show(9.0, q(ohm2)), "9 Ω²");
        assert_eq!(show(9e6, q(ohm2)), "9 kΩ²");
        assert_eq!(show(2.5e-6, q(ohm2)), "2.5 mΩ²");
        assert_eq!(show(4.0, q(Dim::ADMITTANCE.powi(2).unwrap())), "4 S²");
        assert_eq!(show(4.0, q(Dim::VOLTAGE.powi(2).unwrap())), "4 V²");
        assert_eq!(
            show(1.72e-8, q(Dim::IMPEDANCE.times(Dim::LENGTH).unwrap())),
            "17.2 nΩ·m"
        );
        assert_eq!(show(0.2e-3, q(Dim::IMPEDANCE.per(Dim::LENGTH).unwrap())), "200 µΩ/m");
        let per_m2 = Dim::LENGTH.powi(-2).unwrap();
        assert_eq!(show(3e6, q(Dim::CURRENT.times(per_m2).unwrap())), "3 MA/m²");
        assert_eq!(show(50.0, q(Dim::CURRENT.per(Dim::TIME).unwrap())), "50 A/s");
        assert_eq!(show(1e3, q(Dim::VOLTAGE.per(Dim::TIME).unwrap())), "1 kV/s");
        assert_eq!(show(2.0, q(Dim::LENGTH.recip().unwrap())), "2 m⁻¹");
        assert_eq!(show(1e-6, q(Dim::LENGTH.powi(2).unwrap())), "1 mm²");
        assert_eq!(show(4.0, q(Dim::POWER.powi(2).unwrap())), "4 W²");
        // No form of one or two named units fits: base units.
        assert_eq!(show(2.0, q(Dim::MASS)), "2 kg");
        // A frequency without a kind says neither Hz nor rad/s.
        assert_eq!(show(0.5, q(Dim::FREQUENCY)), "0.5 s⁻¹");
    }

    // Every symbol the search writes reads back as the same dimension at
    // factor 1, prefixed ones at the prefix's power (SI Brochure §3).
    #[test]
    fn compound_symbols_read_back() {
        let mut tried = 0;
        for a in -3i8..=3 {
            for b in -2i8..=2 {
                for c in -4i8..=4 {
                    for d in -2i8..=2 {
                        let dim = Dim([a, b, c, d]);
                        let Some((sym, p)) = compound(dim) else { continue };
                        tried += 1;
                        let u = crate::units::parse_unit_expr(&sym).unwrap_or_else(|e| panic!("{sym}: {e:?}"));
                        assert_eq!(u.q.dim, dim, "{sym}");
                        assert_eq!(u.factor, 1.0, "{sym}");
                        if p > 0 {
                            let k = crate::units::parse_unit_expr(&format!("k{sym}")).unwrap();
                            assert!((k.factor / 1e3f64.powi(p) - 1.0).abs() < 1e-12, "k{sym}");
                        }
                    }
                }
            }
        }
        assert!(tried > 100, "{tried}");
    }

    // Energy of a power of known kind: W·h and var·h, kWh and kvarh with
    // a prefix (IEC 60050-601; meter practice); 1 h = 3600 s (SI Brochure,
    // 9th ed., Table 8). The numbers a program reads are in W·s and var·s.
    #[test]
    fn energies_in_watt_and_var_hours() {
        let e = |k| Quantity::new(Dim::ENERGY, k);
        assert_eq!(show(300.0 * 2.0 * 3600.0, e(Kind::ReactivePower)), "600 var·h");
        assert_eq!(show(1.2e3 * 3600.0, e(Kind::ReactivePower)), "1.2 kvarh");
        assert_eq!(show(800e3 * 2.0 * 3600.0, e(Kind::RealPower)), "1.6 MWh");
        assert_eq!(show(500.0 * 3600.0, e(Kind::RealPower)), "500 W·h");
        assert_eq!(show(2e3 * 3600.0, e(Kind::ApparentPower)), "2 kVAh");
        assert_eq!(show(2.16e6, q(Dim::ENERGY)), "2.16 MJ");
        assert_eq!(base_symbol(e(Kind::ReactivePower)), "var·s");
        assert_eq!(base_symbol(e(Kind::RealPower)), "W·s");
        for k in [Kind::RealPower, Kind::ReactivePower, Kind::ApparentPower] {
            let u = crate::units::parse_unit_expr(&base_symbol(e(k))).unwrap();
            assert_eq!((u.factor, u.q), (1.0, e(k)));
        }
        let (unit, div) = axis_unit(e(Kind::RealPower), None, 5e9);
        assert_eq!(unit, "MWh");
        assert!((div - 3.6e9).abs() < 1e-3);
    }

    // A difference and its allowance in one unit (common practice: a
    // tolerance is read against the difference, digit for digit).
    #[test]
    fn check_difference_and_allowance_share_a_unit() {
        let w = Quantity::new(Dim::POWER, Kind::RealPower);
        let st = Style::default();
        assert_eq!(check_gap(w, None, 0.5, 1000.0, st), ("0.0005 kW".into(), "1 kW".into()));
        assert_eq!(check_gap(w, None, 500.0, 1000.0, st), ("0.5 kW".into(), "1 kW".into()));
        assert_eq!(check_gap(w, None, 2e6, 1000.0, st), ("2 MW".into(), "0.001 MW".into()));
        assert_eq!(check_gap(w, None, 0.0, 600.0, st), ("0 W".into(), "600 W".into()));
        let pct = crate::units::parse_unit_expr("%").unwrap();
        let (d, t) = check_gap(pct.q, Some(&pct), 0.0019, 0.005, st);
        assert_eq!((d.as_str(), t.as_str()), ("0.19 %", "0.5 %"));
        let (d, t) = check_gap(Quantity::ANGLE, None, 0.5f64.to_radians(), 1f64.to_radians(), st);
        assert_eq!((d.as_str(), t.as_str()), ("0.5°", "1°"));
    }
}
