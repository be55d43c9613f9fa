//! Property tests: algebraic laws the sheet language must keep, checked on
//! random values through the whole pipeline (parse, compile, evaluate).
//!
//! Sources of the laws: the reciprocal-sum rule for impedances in parallel
//! and its dual for admittances (circuit theory, common practice); the
//! identities conj(conj z) = z and z = |z|·e^{j·arg z} (complex algebra);
//! the laws of an abelian group for physical dimensions (SI Brochure, 9th
//! edition, §2.3.3: dimensions multiply as powers of the base dimensions).
//!
//! Tolerances are stated where each is used, and derived from the number
//! of roundings and the conditioning of the operation; where a law is only
//! approximate by design (cancellation in `||` of an active and a passive
//! element), the generators keep to the region where it is well posed and
//! the comment says why.
//!
//! Case counts are small so the whole module runs in a few seconds; set
//! PROPTEST_CASES to run more (`PROPTEST_CASES=5000 cargo test properties`).

use num_complex::Complex64 as C64;
use proptest::prelude::*;

use ohmsheet::engine::ops;
use ohmsheet::units::format::{format_value, Style};
use ohmsheet::units::kind::Kind;
use ohmsheet::units::{parse_unit_expr, Dim, Quantity};

use crate::common::{engine, value};

const CASES: u32 = 128;

/// The proptest settings these properties run with.
fn cfg() -> ProptestConfig {
    crate::common::proptest_cfg(CASES)
}

/// A magnitude from 1 µ to 1 G, spread evenly in decades.
fn magnitude() -> impl Strategy<Value = f64> {
    (-6.0f64..9.0).prop_map(|e| 10f64.powf(e))
}

/// A passive element whose impedance angle is within ±80°: re(Y) ≥
/// |Y|·cos 80°, so a sum of admittances cancels at most by a factor of
/// 1/cos 80° ≈ 5.8 and reciprocal sums are well conditioned.
fn passive() -> impl Strategy<Value = C64> {
    (magnitude(), -80.0f64..80.0).prop_map(|(m, deg)| C64::from_polar(m, deg.to_radians()))
}

/// Any complex number with parts of either sign, from 1 µ to 1 G, or zero.
fn any_complex() -> impl Strategy<Value = C64> {
    let part = prop_oneof![
        4 => (magnitude(), any::<bool>()).prop_map(|(m, neg)| if neg { -m } else { m }),
        1 => Just(0.0),
    ];
    (part.clone(), part).prop_map(|(re, im)| C64::new(re, im))
}

/// A complex value written as sheet text that reads back to the same bits
/// (`{:e}` prints the shortest form that round-trips).
fn lit(z: C64) -> String {
    format!("({:e} + ({:e}) * j)", z.re, z.im)
}

fn rel_close(a: C64, b: C64, rel: f64) -> bool {
    (a - b).norm() <= rel * a.norm().max(b.norm())
}

fn same_bits(a: C64, b: C64) -> bool {
    a.re.to_bits() == b.re.to_bits() && a.im.to_bits() == b.im.to_bits()
}

/// 1/z as conj(z)/|z|², divided by |z| twice so that neither huge nor
/// tiny magnitudes overflow (|z| from `hypot`).
fn recip(z: C64) -> C64 {
    let m = z.re.hypot(z.im);
    z.conj() / m / m
}

/// The reciprocal-sum definition, computed directly: 1 / (1/a + 1/b + …).
fn recip_sum(zs: &[C64]) -> C64 {
    recip(zs.iter().map(|&z| recip(z)).sum::<C64>())
}

proptest! {
    #![proptest_config(cfg())]

    /// `a || b == b || a` exactly: the product and the sum in a·b/(a+b)
    /// are each commutative in IEEE arithmetic. Evaluated at run time
    /// (cells that are inputs), not folded.
    #[test]
    fn parallel_commutes(a in any_complex(), b in any_complex()) {
        let e = engine(&format!("a = {} Ω\nb = {} Ω\nx = a || b\ny = b || a\n", lit(a), lit(b)));
        let (x, y) = (value(&e, "x"), value(&e, "y"));
        prop_assert!(same_bits(x, y) || (x.re.is_nan() && y.re.is_nan()), "{x} vs {y}");
        prop_assert!(same_bits(ops::par(a, b), ops::par(b, a)) || ops::par(a, b).re.is_nan());
    }

    /// `(a || b) || c == a || (b || c)` and both equal the reciprocal sum
    /// 1/(1/a + 1/b + 1/c). With impedance angles within ±80° the sum of
    /// admittances is conditioned by at most ≈ 5.8 (see `passive`), and
    /// each side takes about ten roundings, so 1e-13 relative is a bound
    /// with a wide margin (2⁻⁵³ · 10 · 5.8 ≈ 6e-15).
    #[test]
    fn parallel_associates(a in passive(), b in passive(), c in passive()) {
        let e = engine(&format!(
            "a = {} Ω\nb = {} Ω\nc = {} Ω\nx = (a || b) || c\ny = a || (b || c)\nz = a || b || c\n",
            lit(a), lit(b), lit(c)
        ));
        let (x, y, z) = (value(&e, "x"), value(&e, "y"), value(&e, "z"));
        let r = recip_sum(&[a, b, c]);
        prop_assert!(rel_close(x, y, 1e-13), "{x} vs {y}");
        prop_assert!(rel_close(x, r, 1e-13), "{x} vs reciprocal sum {r}");
        prop_assert!(same_bits(x, z), "`||` is left-associative: {x} vs {z}");
    }

    /// The same law over the whole range of doubles: elements from 1e-300
    /// to 1e300 Ω in parallel give the reciprocal sum, never an overflow
    /// to ∞ or an underflow to 0 from the product a·b.
    #[test]
    fn parallel_over_the_whole_range(
        (ea, eb) in (-300.0f64..300.0, -300.0f64..300.0),
        (ta, tb) in (-80.0f64..80.0, -80.0f64..80.0),
    ) {
        let a = C64::from_polar(10f64.powf(ea), ta.to_radians());
        let b = C64::from_polar(10f64.powf(eb), tb.to_radians());
        let e = engine(&format!("a = {} Ω\nb = {} Ω\nx = a || b\n", lit(a), lit(b)));
        let x = value(&e, "x");
        let r = recip_sum(&[a, b]);
        prop_assert!(rel_close(x, r, 1e-13), "{a} || {b} = {x}, reciprocal sum {r}");
        prop_assert!(same_bits(ops::par(a, b), x));
    }

    /// Impedance and admittance are duals: Z-parallel is the reciprocal of
    /// the Y-sum, and Z-series (a sum) is the reciprocal of Y-series (a
    /// reciprocal sum). In the language `||` on siemens adds and `--` on
    /// siemens takes the reciprocal sum, so
    /// 1/(Za || Zb) = Ya || Yb and 1/(Za -- Zb) = Ya -- Yb.
    #[test]
    fn impedance_admittance_duals(a in passive(), b in passive()) {
        let e = engine(&format!(
            "Za = {} Ω\nZb = {} Ω\nYa = 1 / Za\nYb = 1 / Zb\n\
             p1 = 1 / (Za || Zb)\np2 = Ya || Yb\np3 = Ya + Yb\n\
             s1 = 1 / (Za -- Zb)\ns2 = Ya -- Yb\ns3 = Za + Zb\n",
            lit(a), lit(b)
        ));
        let v = |n: &str| value(&e, n);
        prop_assert!(rel_close(v("p1"), v("p2"), 1e-13), "{} vs {}", v("p1"), v("p2"));
        prop_assert!(same_bits(v("p2"), v("p3")), "`||` of admittances is their sum");
        prop_assert!(rel_close(v("s1"), v("s2"), 1e-13), "{} vs {}", v("s1"), v("s2"));
        prop_assert!(rel_close(1.0 / v("s1"), v("s3"), 1e-13));
    }

    /// Capacitors add in parallel and take the reciprocal sum in series;
    /// inductors the other way round. Checked through their reactances at
    /// one angular frequency: X of the combination equals the `||` or `--`
    /// of the X of each element (both well conditioned: all X have the
    /// same sign).
    #[test]
    fn capacitors_and_inductors(c1 in magnitude(), c2 in magnitude(), w in magnitude()) {
        let e = engine(&format!(
            "C1 = {c1:e} F\nC2 = {c2:e} F\nL1 = {c1:e} H\nL2 = {c2:e} H\nw = {w:e} rad/s\n\
             cp = C1 || C2\ncs = C1 -- C2\nlp = L1 || L2\nls = L1 -- L2\n\
             Zcp = 1 / (j * w * cp)\nZcpx = 1 / (j * w * C1) || 1 / (j * w * C2)\n\
             Zcs = 1 / (j * w * cs)\nZcsx = 1 / (j * w * C1) -- 1 / (j * w * C2)\n\
             Zlp = j * w * lp\nZlpx = (j * w * L1) || (j * w * L2)\n"
        ));
        let v = |n: &str| value(&e, n);
        prop_assert!(rel_close(v("cp"), C64::new(c1 + c2, 0.0), 1e-15));
        prop_assert!(rel_close(v("ls"), C64::new(c1 + c2, 0.0), 1e-15));
        prop_assert!(rel_close(v("cs"), C64::new(c1 * c2 / (c1 + c2), 0.0), 1e-14));
        prop_assert!(rel_close(v("lp"), v("cs"), 1e-14));
        for (x, y) in [("Zcp", "Zcpx"), ("Zcs", "Zcsx"), ("Zlp", "Zlpx")] {
            prop_assert!(rel_close(v(x), v(y), 1e-13), "{x} = {} but {y} = {}", v(x), v(y));
        }
    }

    /// conj(conj(z)) == z to the bit, at run time and folded.
    #[test]
    fn conjugate_is_an_involution(z in any_complex()) {
        let e = engine(&format!("z = {} V\nx = conj(conj(z))\ny = conj(conj({}))\n", lit(z), lit(z)));
        prop_assert!(same_bits(value(&e, "x"), z));
        prop_assert!(same_bits(value(&e, "y"), z));
    }

    /// Polar ↔ rectangular: `m ∠ θ` has |z| = m and arg z = θ, and
    /// `abs(z) ∠ arg(z)` gives z back. Each direction takes a few correctly
    /// rounded operations (sin_cos, hypot, atan2), so 1e-14 relative to |z|
    /// for parts and 1e-14 rad for angles is generous. θ stays within ±3.1 rad, clear of ±π
    /// where arg wraps.
    #[test]
    fn polar_rectangular_round_trip(m in magnitude(), theta in -3.1f64..3.1) {
        let e = engine(&format!(
            "z = {m:e} A ∠ {theta:e} rad\nmag = abs(z)\nang = arg(z)\nback = mag ∠ ang\n\
             r = re(z)\ni = im(z)\nrect = r + j * i\n"
        ));
        let z = value(&e, "z");
        prop_assert!((value(&e, "mag").re - m).abs() <= 1e-14 * m);
        prop_assert!((value(&e, "ang").re - theta).abs() <= 1e-14);
        prop_assert!(rel_close(value(&e, "back"), z, 1e-14));
        prop_assert!(same_bits(value(&e, "rect"), z));
        prop_assert!(rel_close(z, C64::from_polar(m, theta), 1e-15));
    }
}

/// Quantities with a unit of their own, and three without one, which
/// print in base units with superscripts (`s⁻¹`, `m·s⁻¹`,
/// `kg²·m⁴·s⁻⁶·A⁻²`) and must read back too.
const PRINTABLE: &[(Dim, Kind)] = &[
    (Dim::IMPEDANCE, Kind::Plain),
    (Dim::ADMITTANCE, Kind::Plain),
    (Dim::VOLTAGE, Kind::Plain),
    (Dim::CURRENT, Kind::Plain),
    (Dim::CAPACITANCE, Kind::Plain),
    (Dim::INDUCTANCE, Kind::Plain),
    (Dim::POWER, Kind::RealPower),
    (Dim::POWER, Kind::ReactivePower),
    (Dim::POWER, Kind::ApparentPower),
    (Dim::FREQUENCY, Kind::Hertz),
    (Dim::FREQUENCY, Kind::RadPerSec),
    (Dim::NONE, Kind::Plain),
    (Dim::NONE, Kind::PerUnit),
    (Dim::NONE, Kind::Percent),
    (Dim::NONE, Kind::Decibel),
    (Dim::TIME, Kind::Plain),
    (Dim::CHARGE, Kind::Plain),
    (Dim::FREQUENCY, Kind::Plain),
    (Dim([1, 0, -1, 0]), Kind::Plain),
    (Dim([4, 2, -6, -2]), Kind::Plain),
];

/// Bound on the error of a part printed with `digits` significant digits:
/// half a unit in the last digit is at most 0.5·10^(1−digits)·|part|; a
/// part under 1e-12·|z| is printed as 0; and the prefix scaling and unit
/// factor add a few roundings (8 ulp of |z| covers them).
fn printed_tol(part: f64, z: C64, digits: usize) -> f64 {
    0.5 * 10f64.powi(1 - digits as i32) * part.abs() * (1.0 + 1e-12) + 1e-12 * z.norm() + 8.0 * f64::EPSILON * z.norm()
}

/// The numeric part and unit of a formatted value, as sheet text.
fn as_sheet(num_and_unit: &str, unit: &str) -> String {
    let num = num_and_unit.strip_suffix(unit).unwrap_or(num_and_unit).trim_end();
    if unit.is_empty() {
        format!("x = ({num})\n")
    } else {
        format!("x = ({num}) {unit}\n")
    }
}

proptest! {
    #![proptest_config(cfg())]

    /// Printing a value and reading the printed text back gives the value
    /// to the printed precision, in rectangular and in polar form.
    #[test]
    fn printed_values_read_back(
        z in any_complex(),
        scale in -9i32..9,
        which in 0..PRINTABLE.len(),
        digits in 1usize..=15,
    ) {
        let z = z * 10f64.powi(scale);
        let (dim, kind) = PRINTABLE[which];
        // W and var are real numbers (S = P + jQ): a value in them has no
        // imaginary part, and a literal with one is refused.
        let z = if matches!(kind, Kind::RealPower | Kind::ReactivePower) { C64::new(z.re, 0.0) } else { z };
        let q = Quantity::new(dim, kind);
        let f = format_value(z, q, None, Style { digits });
        let e = engine(&as_sheet(&f.rect, &f.unit));
        let back = value(&e, "x");
        prop_assert!((back.re - z.re).abs() <= printed_tol(z.re, z, digits), "{z} printed `{}` read {back}", f.rect);
        prop_assert!((back.im - z.im).abs() <= printed_tol(z.im, z, digits), "{z} printed `{}` read {back}", f.rect);

        // Polar: the magnitude to `digits` significant digits, the angle
        // to max(digits−2, 1) decimals of a degree. A value whose imaginary
        // part is under 1e-12 of its magnitude is rounding noise by design
        // (`is_real`): it has no polar form, the polar text is the real
        // rectangular one, and the dropped part (up to 1e-12·|z|) adds to
        // the bound.
        let e = engine(&as_sheet(&f.polar, &f.unit));
        let back = value(&e, "x");
        let decimals = digits.saturating_sub(2).max(1) as i32;
        let dtheta = (0.5 * 10f64.powi(-decimals)).to_radians();
        let dropped = if f.polar == f.rect { 1e-12 * z.norm() } else { 0.0 };
        let tol = z.norm() * (0.5 * 10f64.powi(1 - digits as i32) + dtheta) * (1.0 + 1e-9) + dropped + 8.0 * f64::EPSILON * z.norm();
        prop_assert!((back - z).norm() <= tol, "{z} printed `{}` read {back}", f.polar);
    }

    /// Angles print in degrees and read back as angles.
    #[test]
    fn printed_angles_read_back(theta in -3.1f64..3.1, digits in 1usize..=15) {
        let f = format_value(C64::new(theta, 0.0), Quantity::ANGLE, None, Style { digits });
        let e = engine(&as_sheet(&f.rect, &f.unit));
        let back = value(&e, "x").re;
        prop_assert!((back - theta).abs() <= printed_tol(theta, C64::new(theta, 0.0), digits), "{theta} printed `{}` read {back}", f.rect);
    }
}

/// A dimension with small exponents, so products of three never overflow.
fn dim() -> impl Strategy<Value = Dim> {
    prop::array::uniform4(-20i8..=20).prop_map(Dim)
}

/// Unit words the table knows, with and without prefixes.
const WORDS: &[&str] = &[
    "Ω", "kΩ", "S", "mS", "V", "kV", "A", "mA", "F", "µF", "nF", "H", "mH", "W", "MW", "VA", "kVA", "var", "kvar", "J",
    "Wh", "kWh", "C", "Wb", "Hz", "kHz", "s", "ms", "min", "h", "km", "metre", "g", "kg", "rad", "°", "pu",
];

proptest! {
    #![proptest_config(cfg())]

    /// Dimensions form an abelian group under multiplication.
    #[test]
    fn dimension_algebra(a in dim(), b in dim(), c in dim(), n in -3i32..=3) {
        prop_assert_eq!(a.times(b), b.times(a));
        prop_assert_eq!(a.times(b).and_then(|ab| ab.times(c)), b.times(c).and_then(|bc| a.times(bc)));
        prop_assert_eq!(a.recip().and_then(Dim::recip), Some(a));
        prop_assert_eq!(a.times(a.recip().unwrap()), Some(Dim::NONE));
        prop_assert_eq!(a.times(Dim::NONE), Some(a));
        prop_assert_eq!(a.per(b), b.recip().and_then(|r| a.times(r)));
        // a^n is a multiplied n times
        let mut p = Dim::NONE;
        for _ in 0..n.abs() {
            p = p.times(if n < 0 { a.recip().unwrap() } else { a }).unwrap();
        }
        prop_assert_eq!(a.powi(n), Some(p));
        prop_assert_eq!(a.powi(2).and_then(|a2| a2.pow_ratio(1, 2)), Some(a));
    }

    /// A compound unit is the product of its factors: `u*v` has the
    /// dimension dim(u)·dim(v) and the factor f(u)·f(v); `u/v` divides;
    /// `u^n` is u multiplied n times.
    #[test]
    fn unit_expressions_are_products(i in 0..WORDS.len(), k in 0..WORDS.len(), n in 1i32..=3) {
        let (u, v) = (WORDS[i], WORDS[k]);
        let pu = parse_unit_expr(u).unwrap();
        let pv = parse_unit_expr(v).unwrap();
        let prod = parse_unit_expr(&format!("{u}*{v}")).unwrap();
        prop_assert_eq!(Some(prod.q.dim), pu.q.dim.times(pv.q.dim));
        prop_assert!((prod.factor - pu.factor * pv.factor).abs() <= 1e-15 * prod.factor);
        let dot = parse_unit_expr(&format!("{u}·{v}")).unwrap();
        prop_assert_eq!(dot.q.dim, prod.q.dim);
        let quot = parse_unit_expr(&format!("{u}/{v}")).unwrap();
        prop_assert_eq!(Some(quot.q.dim), pu.q.dim.per(pv.q.dim));
        prop_assert!((quot.factor - pu.factor / pv.factor).abs() <= 1e-15 * quot.factor);
        let pow = parse_unit_expr(&format!("{u}^{n}")).unwrap();
        prop_assert_eq!(Some(pow.q.dim), pu.q.dim.powi(n));
        prop_assert!((pow.factor - pu.factor.powi(n)).abs() <= 4e-16 * pow.factor);
        let inv = parse_unit_expr(&format!("{u}^-{n}")).unwrap();
        prop_assert_eq!(Some(inv.q.dim), pow.q.dim.recip());
    }
}

/// A comment starts at the first `#` outside a quoted string, where `\`
/// escapes the next character inside one (`dstring` in
/// grammar/ohmsheet.pest; docs/grammar.md). Read
/// character by character here; the parser reads bytes.
fn comment_start_by_chars(line: &str) -> Option<usize> {
    let (mut in_str, mut escaped) = (false, false);
    for (i, c) in line.char_indices() {
        if in_str {
            if escaped {
                escaped = false;
            } else if c == '\\' {
                escaped = true;
            } else if c == '"' {
                in_str = false;
            }
        } else if c == '"' {
            in_str = true;
        } else if c == '#' {
            return Some(i);
        }
    }
    None
}

proptest! {
    #![proptest_config(cfg())]

    /// Lines mixing quotes, escapes, `#` and characters of two to four
    /// bytes: the comment is found at the same place.
    #[test]
    fn comment_start_is_found_by_bytes_as_by_characters(line in "[a #\"\\\\Ω∠µ😀=1]{0,40}") {
        prop_assert_eq!(ohmsheet::syntax::parser::find_comment_start(&line), comment_start_by_chars(&line));
    }
}
