//! The unit table and the parser for unit expressions (`kV`, `Ω/km`,
//! `rad/s`, `m^2`).

use super::dim::Dim;
use super::kind::{Kind, Quantity};

/// A resolved unit: multiply a number by `factor` to get coherent SI, and
/// the result has dimension `q.dim` and kind `q.kind`.
#[derive(Clone, Debug, PartialEq)]
pub struct Unit {
    pub factor: f64,
    pub q: Quantity,
    /// The unit as written (for display units: shown after the number).
    pub symbol: String,
}

/// Why a unit could not be read.
#[derive(Clone, Debug, PartialEq)]
pub enum UnitError {
    Unknown {
        word: String,
        suggestion: Option<String>,
        hint: Option<String>,
    },
    /// `m` on its own after a number: milli or metres?
    AmbiguousMetre,
    Exponent(String),
    /// The unit's factor to coherent SI units overflows or underflows a
    /// double (`TΩ^9*TΩ^9*TΩ^9` is 10³²⁴ Ω²⁷).
    Range(String),
}

struct BaseUnit {
    symbols: &'static [&'static str],
    dim: Dim,
    factor: f64,
    kind: Kind,
    prefixable: bool,
}

const DEG: f64 = std::f64::consts::PI / 180.0;
/// One circular mil in m²: π/4 · (0.001 in)².
pub const CMIL: f64 = std::f64::consts::FRAC_PI_4 * 0.0254e-3 * 0.0254e-3;
/// One mechanical horsepower in W: 550 ft · 1 lbf per second.
pub const HP: f64 = 550.0 * 0.3048 * 4.4482216152605;

const BASE_UNITS: &[BaseUnit] = &[
    BaseUnit {
        symbols: &["Ω", "ohm"],
        dim: Dim::IMPEDANCE,
        factor: 1.0,
        kind: Kind::Plain,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["S"],
        dim: Dim::ADMITTANCE,
        factor: 1.0,
        kind: Kind::Plain,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["V"],
        dim: Dim::VOLTAGE,
        factor: 1.0,
        kind: Kind::Plain,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["A"],
        dim: Dim::CURRENT,
        factor: 1.0,
        kind: Kind::Plain,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["F"],
        dim: Dim::CAPACITANCE,
        factor: 1.0,
        kind: Kind::Plain,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["H"],
        dim: Dim::INDUCTANCE,
        factor: 1.0,
        kind: Kind::Plain,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["W"],
        dim: Dim::POWER,
        factor: 1.0,
        kind: Kind::RealPower,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["VA"],
        dim: Dim::POWER,
        factor: 1.0,
        kind: Kind::ApparentPower,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["var", "VAr", "VAR"],
        dim: Dim::POWER,
        factor: 1.0,
        kind: Kind::ReactivePower,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["J"],
        dim: Dim::ENERGY,
        factor: 1.0,
        kind: Kind::Plain,
        prefixable: true,
    },
    // The watt-hour and its reactive and apparent fellows: 1 W·h = 3600 J
    // (SI Brochure, 9th ed., Table 8 for the hour); the energy keeps the
    // power's kind, so a kvarh is never added to a kWh unnoticed.
    BaseUnit {
        symbols: &["Wh"],
        dim: Dim::ENERGY,
        factor: 3600.0,
        kind: Kind::RealPower,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["varh"],
        dim: Dim::ENERGY,
        factor: 3600.0,
        kind: Kind::ReactivePower,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["VAh"],
        dim: Dim::ENERGY,
        factor: 3600.0,
        kind: Kind::ApparentPower,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["C"],
        dim: Dim::CHARGE,
        factor: 1.0,
        kind: Kind::Plain,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["Wb"],
        dim: Dim::FLUX,
        factor: 1.0,
        kind: Kind::Plain,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["Hz"],
        dim: Dim::FREQUENCY,
        factor: 1.0,
        kind: Kind::Hertz,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["s"],
        dim: Dim::TIME,
        factor: 1.0,
        kind: Kind::Plain,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["min"],
        dim: Dim::TIME,
        factor: 60.0,
        kind: Kind::Plain,
        prefixable: false,
    },
    BaseUnit {
        symbols: &["h"],
        dim: Dim::TIME,
        factor: 3600.0,
        kind: Kind::Plain,
        prefixable: false,
    },
    BaseUnit {
        symbols: &["m", "metre", "meter"],
        dim: Dim::LENGTH,
        factor: 1.0,
        kind: Kind::Plain,
        prefixable: true,
    },
    // Units of the inch-pound system the trade still meets on nameplates
    // and conductor tables, by their exact definitions in SI (the
    // international yard and pound of 1959: 1 in = 25.4 mm, 1 ft = 0.3048 m,
    // 1 mi = 1609.344 m; NIST SP 811, appendix B). The inch is `inch`:
    // `in` is a word of the search form (`C in 0 .. 2 mF where …`).
    BaseUnit {
        symbols: &["ft", "foot", "feet"],
        dim: Dim::LENGTH,
        factor: 0.3048,
        kind: Kind::Plain,
        prefixable: false,
    },
    BaseUnit {
        symbols: &["inch"],
        dim: Dim::LENGTH,
        factor: 0.0254,
        kind: Kind::Plain,
        prefixable: false,
    },
    BaseUnit {
        symbols: &["mi", "mile"],
        dim: Dim::LENGTH,
        factor: 1609.344,
        kind: Kind::Plain,
        prefixable: false,
    },
    // The circular mil: the area of a circle one mil (0.001 in) across,
    // π/4 · (25.4 µm)²; 1 kcmil is 1000 cmil (NIST SP 811, appendix B).
    BaseUnit {
        symbols: &["cmil"],
        dim: Dim::AREA,
        factor: CMIL,
        kind: Kind::Plain,
        prefixable: false,
    },
    BaseUnit {
        symbols: &["kcmil"],
        dim: Dim::AREA,
        factor: 1e3 * CMIL,
        kind: Kind::Plain,
        prefixable: false,
    },
    // The mechanical horsepower, 550 ft·lbf/s = 745.699 871 582 270 22 W
    // (NIST SP 811, appendix B; with 1 lbf = 4.448 221 615 260 5 N). The
    // "electrical horsepower" of 746 W exactly is a different unit, 0.04 %
    // larger; write `746 W` for it. A real power (W).
    BaseUnit {
        symbols: &["hp"],
        dim: Dim::POWER,
        factor: HP,
        kind: Kind::RealPower,
        prefixable: false,
    },
    BaseUnit {
        symbols: &["g"],
        dim: Dim::MASS,
        factor: 1e-3,
        kind: Kind::Plain,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["rad"],
        dim: Dim::NONE,
        factor: 1.0,
        kind: Kind::Angle,
        prefixable: true,
    },
    BaseUnit {
        symbols: &["deg", "°"],
        dim: Dim::NONE,
        factor: DEG,
        kind: Kind::Angle,
        prefixable: false,
    },
    BaseUnit {
        symbols: &["%"],
        dim: Dim::NONE,
        factor: 0.01,
        kind: Kind::Percent,
        prefixable: false,
    },
    BaseUnit {
        symbols: &["pu"],
        dim: Dim::NONE,
        factor: 1.0,
        kind: Kind::PerUnit,
        prefixable: false,
    },
    // A level: the number is the dB value itself (20 dB is stored as 20).
    BaseUnit {
        symbols: &["dB"],
        dim: Dim::NONE,
        factor: 1.0,
        kind: Kind::Decibel,
        prefixable: false,
    },
];

/// SI prefixes accepted on units and glued to numbers.
pub const PREFIXES: &[(&str, f64)] = &[
    ("f", 1e-15),
    ("p", 1e-12),
    ("n", 1e-9),
    ("u", 1e-6),
    ("µ", 1e-6),
    ("μ", 1e-6),
    ("m", 1e-3),
    ("k", 1e3),
    ("M", 1e6),
    ("G", 1e9),
    ("T", 1e12),
];

/// The factor of a prefix written on its own (`k`, `µ`), if it is one.
pub fn prefix_factor(s: &str) -> Option<f64> {
    PREFIXES.iter().find(|(p, _)| *p == s).map(|&(_, f)| f)
}

/// Every unit symbol, for suggestions and completion.
pub fn all_symbols() -> impl Iterator<Item = &'static str> {
    BASE_UNITS.iter().flat_map(|u| u.symbols.iter().copied())
}

/// Every unit symbol with the common prefixed forms, for suggestions.
fn suggestion_pool() -> Vec<String> {
    let mut v = Vec::new();
    for u in BASE_UNITS {
        for s in u.symbols {
            v.push(s.to_string());
            if u.prefixable {
                for p in ["m", "k", "M", "u", "µ", "n", "p", "G"] {
                    v.push(format!("{p}{s}"));
                }
            }
        }
    }
    v
}

/// Look up one unit word, with an optional SI prefix: `kV`, `µF`, `Ω`.
pub fn lookup_unit(word: &str) -> Result<Unit, UnitError> {
    // The ohm sign U+2126 is Ω (see `lookalike`).
    let folded = super::lookalike::fold(word);
    let word: &str = &folded;
    for u in BASE_UNITS {
        if u.symbols.contains(&word) {
            return Ok(Unit {
                factor: u.factor,
                q: Quantity::new(u.dim, u.kind),
                symbol: word.to_string(),
            });
        }
    }
    for &(p, pf) in PREFIXES {
        if let Some(rest) = word.strip_prefix(p) {
            for u in BASE_UNITS {
                if u.prefixable && u.symbols.contains(&rest) {
                    return Ok(Unit {
                        factor: pf * u.factor,
                        q: Quantity::new(u.dim, u.kind),
                        symbol: word.to_string(),
                    });
                }
            }
        }
    }
    Err(unknown(word))
}

fn unknown(word: &str) -> UnitError {
    let hint = match word {
        w if super::lookalike::hint(w).is_some() => super::lookalike::hint(w),
        "K" => Some("kilo is a lowercase `k` (4.7k, 4.7 kΩ); kelvin is not a unit here".to_string()),
        "ohms" | "Ohm" | "Ohms" => Some("write `Ω` or `ohm`".to_string()),
        "mho" | "mhos" => Some("admittance is in siemens, `S`".to_string()),
        "VAR" | "kVAR" => None,
        w if w.ends_with('s') && lookup_unit(&w[..w.len() - 1]).is_ok() => {
            Some(format!("units are not plural: write `{}`", &w[..w.len() - 1]))
        }
        _ => None,
    };
    let pool = suggestion_pool();
    let suggestion = crate::diag::did_you_mean(word, pool.iter().map(|s| s.as_str())).map(str::to_string);
    UnitError::Unknown {
        word: word.to_string(),
        suggestion,
        hint,
    }
}

/// `V^2` → (`V`, 2); `s⁻¹` → (`s`, -1), the superscript form ohmsheet
/// prints; `Ω` → (`Ω`, 1). Powers are whole numbers from -9 to 9, not 0.
fn split_power(item: &str) -> Result<(&str, i32), UnitError> {
    const SUP: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let bad = || UnitError::Exponent(item.to_string());
    let (word, n) = if let Some((w, p)) = item.split_once('^') {
        (w, p.parse::<i32>().map_err(|_| bad())?)
    } else if let Some(at) = item.find(|c: char| c == '⁻' || SUP.contains(&c)) {
        let (w, p) = item.split_at(at);
        let (neg, digits) = match p.strip_prefix('⁻') {
            Some(d) => (true, d),
            None => (false, p),
        };
        let mut n: i32 = 0;
        for c in digits.chars() {
            let d = SUP.iter().position(|&s| s == c).ok_or_else(bad)? as i32;
            n = n.checked_mul(10).and_then(|n| n.checked_add(d)).ok_or_else(bad)?;
        }
        if digits.is_empty() {
            return Err(bad());
        }
        (w, if neg { -n } else { n })
    } else {
        (item, 1)
    };
    if n == 0 || n.abs() > 9 {
        return Err(bad());
    }
    Ok((word, n))
}

/// Parse a unit expression as written after a number or inside `[ ]`:
/// factors joined by `*`, `·` or `/`, each with an optional integer power.
/// Everything after the first `/` is in the denominator (`W/m/s` is W/(m·s)).
pub fn parse_unit_expr(text: &str) -> Result<Unit, UnitError> {
    let folded = super::lookalike::fold(text);
    let text: &str = &folded;
    if text == "m" {
        return Err(UnitError::AmbiguousMetre);
    }
    let mut factor = 1.0;
    let mut dim = Dim::NONE;
    let mut kinds = Vec::new();
    let mut denominator = false;
    let mut rest = text;
    // `1/s`, `1/m`: a reciprocal written with a 1 over the unit.
    if let Some(r) = text.strip_prefix("1/") {
        denominator = true;
        rest = r;
    }
    loop {
        let end = rest.find(['*', '/', '·']).unwrap_or(rest.len());
        let item = &rest[..end];
        let (word, power) = split_power(item)?;
        let u = lookup_unit(word)?;
        let p = if denominator { -power } else { power };
        factor *= u.factor.powi(p);
        let d = u.q.dim.powi(p).ok_or_else(|| UnitError::Exponent(item.to_string()))?;
        dim = dim.times(d).ok_or_else(|| UnitError::Exponent(item.to_string()))?;
        kinds.push((u.q.kind, p));
        if end == rest.len() {
            break;
        }
        let sep = rest[end..].chars().next().unwrap_or('*');
        if sep == '/' {
            denominator = true;
        }
        rest = &rest[end + sep.len_utf8()..];
    }
    if !(factor.is_finite() && factor != 0.0) {
        return Err(UnitError::Range(text.to_string()));
    }
    let kind = match kinds.as_slice() {
        [(k, 1)] => *k,
        // rad/s is an angular frequency
        [(Kind::Angle, 1), (Kind::Plain, -1)] if dim == Dim::FREQUENCY => Kind::RadPerSec,
        // W·h, var·h, kVA·h: an energy keeps the power's kind
        [(k @ (Kind::RealPower | Kind::ReactivePower | Kind::ApparentPower), 1), (Kind::Plain, 1)]
            if dim == Dim::ENERGY =>
        {
            *k
        }
        _ => Kind::Plain,
    };
    Ok(Unit {
        factor,
        q: Quantity::new(dim, kind),
        symbol: text.to_string(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-300)
    }

    // Prefix factors from the SI Brochure (BIPM, 9th edition, Table 7).
    #[test]
    fn prefixed_units() {
        let u = parse_unit_expr("kV").unwrap();
        assert!(close(u.factor, 1e3));
        assert_eq!(u.q.dim, Dim::VOLTAGE);
        let u = parse_unit_expr("µF").unwrap();
        assert!(close(u.factor, 1e-6));
        assert_eq!(u.q.dim, Dim::CAPACITANCE);
        assert_eq!(
            parse_unit_expr("uF").unwrap().factor,
            parse_unit_expr("µF").unwrap().factor
        );
        let u = parse_unit_expr("kvar").unwrap();
        assert_eq!(u.q.kind, Kind::ReactivePower);
        let u = parse_unit_expr("MVA").unwrap();
        assert_eq!(u.q.kind, Kind::ApparentPower);
        assert!(close(u.factor, 1e6));
        let u = parse_unit_expr("mS").unwrap();
        assert_eq!(u.q.dim, Dim::ADMITTANCE);
        let u = parse_unit_expr("ms").unwrap();
        assert_eq!(u.q.dim, Dim::TIME);
    }

    #[test]
    fn compound_units() {
        let u = parse_unit_expr("rad/s").unwrap();
        assert_eq!(u.q.dim, Dim::FREQUENCY);
        assert_eq!(u.q.kind, Kind::RadPerSec);
        let u = parse_unit_expr("Ω/km").unwrap();
        assert!(close(u.factor, 1e-3));
        assert_eq!(u.q.dim, Dim::IMPEDANCE.per(Dim::LENGTH).unwrap());
        let u = parse_unit_expr("kWh").unwrap();
        assert!(close(u.factor, 3.6e6));
        let u = parse_unit_expr("mm^2").unwrap();
        assert!(close(u.factor, 1e-6));
        let u = parse_unit_expr("V*A").unwrap();
        assert_eq!(u.q.dim, Dim::POWER);
    }

    // The form ohmsheet prints a dimension without a unit of its own in
    // reads back: kg·m²·s⁻³·A⁻¹ is the volt (SI Brochure, 9th ed., Table 4).
    #[test]
    fn superscript_powers() {
        let u = parse_unit_expr("kg·m²·s⁻³·A⁻¹").unwrap();
        assert_eq!(u.q.dim, Dim::VOLTAGE);
        assert!(close(u.factor, 1.0));
        assert_eq!(parse_unit_expr("s⁻¹").unwrap().q.dim, Dim::FREQUENCY);
        assert_eq!(
            parse_unit_expr("mm²").unwrap().factor,
            parse_unit_expr("mm^2").unwrap().factor
        );
        for bad in ["s⁻", "s⁰", "s¹⁰", "s²x"] {
            assert!(parse_unit_expr(bad).is_err(), "{bad}");
        }
    }

    // Exact definitions (NIST SP 811, 2008, appendix B.8 and B.9): the
    // international foot 0.3048 m, inch 0.0254 m, statute mile 1609.344 m;
    // the circular mil π/4·(0.001 in)² = 5.067 075 × 10⁻¹⁰ m²; the
    // horsepower (550 ft·lbf/s) 745.699 9 W. mm² is the square of a
    // millimetre, written with a superscript or a power.
    #[test]
    fn inch_pound_units_and_areas() {
        assert_eq!(parse_unit_expr("ft").unwrap().factor, 0.3048);
        assert_eq!(parse_unit_expr("ft").unwrap().q.dim, Dim::LENGTH);
        assert_eq!(parse_unit_expr("inch").unwrap().factor, 0.0254);
        assert_eq!(parse_unit_expr("mi").unwrap().factor, 1609.344);
        assert!(close(parse_unit_expr("mi").unwrap().factor, 5280.0 * 0.3048));
        assert!(close(parse_unit_expr("ft").unwrap().factor, 12.0 * 0.0254));
        let c = parse_unit_expr("cmil").unwrap();
        assert_eq!(c.q.dim, Dim::AREA);
        assert!((c.factor - 5.067_075e-10).abs() < 1e-16, "{}", c.factor);
        assert!(close(parse_unit_expr("kcmil").unwrap().factor, 1000.0 * c.factor));
        // 1 kcmil = 0.506 707 mm² (NIST SP 811 B.9: 5.067 075 E-10 m² per cmil)
        assert!((parse_unit_expr("kcmil").unwrap().factor / 1e-6 - 0.506_707_5).abs() < 1e-7);
        let hp = parse_unit_expr("hp").unwrap();
        assert_eq!(hp.q.kind, Kind::RealPower);
        assert!((hp.factor - 745.699_871_582_270_2).abs() < 1e-9, "{}", hp.factor);
        assert!((hp.factor - 745.7).abs() < 0.001);
        let mm2 = parse_unit_expr("mm²").unwrap();
        assert_eq!(mm2.q.dim, Dim::AREA);
        assert!(close(mm2.factor, 1e-6));
        assert_eq!(mm2.factor, parse_unit_expr("mm^2").unwrap().factor);
        // `in` stays a word of the search form, not a unit
        assert!(parse_unit_expr("in").is_err());
    }

    #[test]
    fn degrees_are_angles() {
        let u = parse_unit_expr("°").unwrap();
        assert_eq!(u.q.kind, Kind::Angle);
        assert!(close(u.factor, std::f64::consts::PI / 180.0));
    }

    // Found by the `units` fuzz target: the factor 1e12^27 = 1e324
    // overflowed to ∞ and every value in the unit became NaN.
    #[test]
    fn unit_factors_beyond_a_double_are_refused() {
        assert_eq!(
            parse_unit_expr("TΩ^9*TΩ^9*TΩ^9"),
            Err(UnitError::Range("TΩ^9*TΩ^9*TΩ^9".into()))
        );
        assert!(matches!(parse_unit_expr("fF^9*fF^9*fF^9"), Err(UnitError::Range(_))));
        assert!(parse_unit_expr("TΩ^9*TΩ^9").is_ok());
    }

    #[test]
    fn metre_alone_is_ambiguous() {
        assert_eq!(parse_unit_expr("m"), Err(UnitError::AmbiguousMetre));
        assert!(parse_unit_expr("km").is_ok());
    }

    #[test]
    fn unknown_units_get_suggestions() {
        match parse_unit_expr("kVa") {
            Err(UnitError::Unknown { suggestion, .. }) => assert_eq!(suggestion.as_deref(), Some("kVA")),
            other => panic!("{other:?}"),
        }
        match parse_unit_expr("ohms") {
            Err(UnitError::Unknown { hint, .. }) => assert!(hint.unwrap().contains("ohm")),
            other => panic!("{other:?}"),
        }
    }

    // 1 W·h = 3600 J and 1 kW·h = 3.6 MJ: the hour is 3600 s (SI
    // Brochure, 9th ed., Table 8). The reactive and apparent forms follow
    // the same definition with var and V·A (IEC 60050-601).
    #[test]
    fn watt_and_var_hours() {
        for (sym, factor, kind) in [
            ("Wh", 3600.0, Kind::RealPower),
            ("kWh", 3.6e6, Kind::RealPower),
            ("MWh", 3.6e9, Kind::RealPower),
            ("W·h", 3600.0, Kind::RealPower),
            ("kW·h", 3.6e6, Kind::RealPower),
            ("varh", 3600.0, Kind::ReactivePower),
            ("kvarh", 3.6e6, Kind::ReactivePower),
            ("var·h", 3600.0, Kind::ReactivePower),
            ("kvar*h", 3.6e6, Kind::ReactivePower),
            ("kVAh", 3.6e6, Kind::ApparentPower),
            ("J", 1.0, Kind::Plain),
        ] {
            let u = parse_unit_expr(sym).unwrap();
            assert!(close(u.factor, factor), "{sym}");
            assert_eq!(u.q, Quantity::new(Dim::ENERGY, kind), "{sym}");
        }
    }

    // A reciprocal unit written `1/s` (SI Brochure §5.4.3 writes s⁻¹ or 1/s).
    #[test]
    fn reciprocal_units() {
        let u = parse_unit_expr("1/s").unwrap();
        assert_eq!((u.factor, u.q), (1.0, Quantity::of(Dim::FREQUENCY)));
        assert!(close(parse_unit_expr("1/ms").unwrap().factor, 1e3));
        assert_eq!(parse_unit_expr("1/km").unwrap().q.dim, Dim::LENGTH.recip().unwrap());
        assert!(parse_unit_expr("1/").is_err());
        assert!(parse_unit_expr("2/s").is_err());
    }
}
