//! Quantity kinds: a tag carried beside a dimension.
//!
//! SI gives real, reactive and apparent power one dimension, and hertz and
//! rad/s one dimension, and treats angles, percentages, per-unit values and
//! decibels as plain numbers. The trade tells them apart, so each compiled
//! value carries a `Kind` that decides how it is shown (W, var or VA; Hz or
//! rad/s; degrees; %, pu, dB) and catches the sums that would silently mean
//! something else: a real power plus a reactive power (which is `P + j*Q`),
//! a plain number plus an angle (degrees or radians?), Hz plus rad/s.
//! Kinds never change a number; they are settled while compiling. The
//! rules are tabled in docs/grammar.md ("Kinds").

use super::dim::Dim;

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub enum Kind {
    /// Nothing beyond the dimension.
    #[default]
    Plain,
    /// A plane angle (stored in radians, shown in degrees).
    Angle,
    /// A per-unit quantity (dimensionless, shown as `pu`).
    PerUnit,
    /// Real power P, shown in W.
    RealPower,
    /// Reactive power Q, shown in var.
    ReactivePower,
    /// Apparent or complex power S, shown in VA.
    ApparentPower,
    /// Cyclic frequency, shown in Hz.
    Hertz,
    /// Angular frequency, shown in rad/s.
    RadPerSec,
    /// A fraction shown as a percentage: stored as 0.12, shown as `12 %`.
    Percent,
    /// A level in decibels: stored as the dB number itself, shown as `dB`.
    Decibel,
}

impl Kind {
    /// A kind of real power, reactive power or complex power.
    pub fn is_power(self) -> bool {
        matches!(self, Kind::RealPower | Kind::ReactivePower | Kind::ApparentPower)
    }
}

/// The static type of a scalar value: its dimension and its kind.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub struct Quantity {
    pub dim: Dim,
    pub kind: Kind,
}

impl Quantity {
    pub const PLAIN: Quantity = Quantity {
        dim: Dim::NONE,
        kind: Kind::Plain,
    };
    pub const ANGLE: Quantity = Quantity {
        dim: Dim::NONE,
        kind: Kind::Angle,
    };

    pub fn new(dim: Dim, kind: Kind) -> Quantity {
        Quantity { dim, kind }.normalized()
    }

    pub fn of(dim: Dim) -> Quantity {
        Quantity { dim, kind: Kind::Plain }
    }

    /// Drop a kind that does not belong with the dimension.
    pub fn normalized(self) -> Quantity {
        let ok = match self.kind {
            Kind::Plain => true,
            Kind::Angle | Kind::PerUnit | Kind::Percent | Kind::Decibel => self.dim.is_none(),
            // A power's kind stays on the energy it gives over a time
            // (300 var × 2 h is 600 var·h, not 2.16 MJ of some energy).
            Kind::RealPower | Kind::ReactivePower | Kind::ApparentPower => {
                self.dim == Dim::POWER || self.dim == Dim::ENERGY
            }
            Kind::Hertz | Kind::RadPerSec => self.dim == Dim::FREQUENCY,
        };
        if !ok {
            return Quantity::of(self.dim).normalized();
        }
        // A power nobody named (V·conj(I), I²·R) is a complex power.
        if self.dim == Dim::POWER && self.kind == Kind::Plain {
            return Quantity {
                dim: self.dim,
                kind: Kind::ApparentPower,
            };
        }
        self
    }

    pub fn is_plain_number(self) -> bool {
        self.dim.is_none() && self.kind == Kind::Plain
    }

    /// A short description for messages: "an impedance (Ω)", "a plain number".
    pub fn describe(self) -> String {
        let unit = super::format::base_symbol(self);
        let what = match (self.kind, self.dim) {
            (Kind::Angle, _) => return "an angle".into(),
            (Kind::PerUnit, _) => return "a per-unit value".into(),
            (Kind::Percent, _) => return "a percentage".into(),
            (Kind::Decibel, _) => return "a level in decibels".into(),
            (_, d) if d.is_none() => return "a plain number".into(),
            (Kind::RealPower, d) if d == Dim::ENERGY => "a real energy",
            (Kind::ReactivePower, d) if d == Dim::ENERGY => "a reactive energy",
            (Kind::ApparentPower, d) if d == Dim::ENERGY => "a complex energy",
            (Kind::RealPower, _) => "a real power",
            (Kind::ReactivePower, _) => "a reactive power",
            (Kind::ApparentPower, _) => "a complex power",
            (Kind::RadPerSec, _) => "an angular frequency",
            (_, d) if d == Dim::IMPEDANCE => "an impedance",
            (_, d) if d == Dim::ADMITTANCE => "an admittance",
            (_, d) if d == Dim::VOLTAGE => "a voltage",
            (_, d) if d == Dim::CURRENT => "a current",
            (_, d) if d == Dim::POWER => "a power",
            (_, d) if d == Dim::CAPACITANCE => "a capacitance",
            (_, d) if d == Dim::INDUCTANCE => "an inductance",
            (_, d) if d == Dim::FREQUENCY => "a frequency",
            (_, d) if d == Dim::TIME => "a time",
            (_, d) if d == Dim::ENERGY => "an energy",
            (_, d) if d == Dim::CHARGE => "a charge",
            (_, d) if d == Dim::LENGTH => "a length",
            (_, d) if d == Dim::AREA => "an area",
            _ => "a quantity",
        };
        format!("{what} ({unit})")
    }
}

/// Why two kinds do not combine: the message, and the fix to show.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct KindClash {
    pub message: &'static str,
    pub hint: &'static str,
    /// The clash is between an angle and a plain number (the old
    /// `angle-ambiguous` error); otherwise it is a `kind-mismatch`.
    pub angle: bool,
}

impl From<KindClash> for String {
    fn from(c: KindClash) -> String {
        format!("{} ({})", c.message, c.hint)
    }
}

const fn clash(message: &'static str, hint: &'static str) -> KindClash {
    KindClash {
        message,
        hint,
        angle: false,
    }
}

/// The power kind of a value of the power dimension (a power nobody named
/// is a complex power).
fn power_kind(k: Kind) -> Kind {
    if k.is_power() {
        k
    } else {
        Kind::ApparentPower
    }
}

/// Kind of a sum or difference of two values of the same dimension.
/// `Err` says why the sum would be read two ways, and the fix.
///
/// Powers (IEEE Std 1459: S = P + jQ, Q the imaginary part of S): W±W is W,
/// var±var is var, VA±VA and W±VA are VA; a var with anything but a var is
/// refused, because Q is a real number standing for Im S and `P + Q` would
/// add it to the real part. Dimensionless kinds: an angle adds only to an
/// angle; % ± % is %, % ± plain is plain (a fraction); pu ± pu, pu ± plain
/// and pu ± % are pu; dB ± dB and dB ± plain are dB; dB with % or pu, and Hz
/// with rad/s, are refused.
pub fn kind_of_sum(a: Kind, b: Kind, dim: Dim) -> Result<Kind, KindClash> {
    use Kind::*;
    // An energy of a power kind (W·h, var·h) follows the same rules; a
    // plain energy (J) takes the other's kind.
    let energy = dim == Dim::ENERGY && (a.is_power() || b.is_power());
    if energy && (a == Plain || b == Plain) {
        return Ok(if a == Plain { b } else { a });
    }
    if dim == Dim::POWER || energy {
        return match (power_kind(a), power_kind(b)) {
            (x, y) if x == y => Ok(x),
            (RealPower, ApparentPower) | (ApparentPower, RealPower) => Ok(ApparentPower),
            (RealPower, _) | (_, RealPower) => Err(clash(
                "a real power (W) and a reactive power (var) do not add: Q is the imaginary part of S = P + jQ",
                "for the complex power write `P + j*Q`",
            )),
            _ => Err(clash(
                "a complex power (VA) and a reactive power (var) do not add: Q is the imaginary part of S = P + jQ",
                "to add Q to a complex power write `S + j*Q`",
            )),
        };
    }
    if a == b {
        return Ok(a);
    }
    match (a, b) {
        (Angle, Plain) | (Plain, Angle) => Err(KindClash {
            message: "adding an angle to a plain number is ambiguous: the number could be degrees or radians",
            hint: "give the number its unit: `30°` or `0.5 rad`",
            angle: true,
        }),
        (Angle, _) | (_, Angle) => Err(clash(
            "an angle adds only to an angle",
            "give both sides as angles (`30°`, `0.5 rad`)",
        )),
        (Hertz, RadPerSec) | (RadPerSec, Hertz) => Err(clash(
            "adding a frequency in Hz to an angular frequency in rad/s",
            "convert one of them: ω = 2π·f, f = ω / (2π)",
        )),
        (Decibel, Plain) | (Plain, Decibel) => Ok(Decibel),
        (Decibel, _) | (_, Decibel) => Err(clash(
            "a level in decibels adds only to decibels: a percentage or per-unit value is a ratio",
            "convert the ratio first: `db_p(r)` for a power ratio, `db_v(r)` for a voltage ratio",
        )),
        (PerUnit, Plain | Percent) | (Plain | Percent, PerUnit) => Ok(PerUnit),
        (Percent, Plain) | (Plain, Percent) => Ok(Plain),
        (k, Plain) | (Plain, k) => Ok(k),
        _ => Ok(Plain),
    }
}

/// A scale factor among the dimensionless kinds: what a product or
/// quotient of two of them is.
fn scaler_product(a: Kind, b: Kind) -> Option<Kind> {
    use Kind::*;
    Some(match (a, b) {
        (Plain, k) | (k, Plain) => k,
        (PerUnit, PerUnit | Percent) | (Percent, PerUnit) => PerUnit,
        (Percent, Percent) => Percent,
        _ => return None,
    })
}

/// Whether a compile-time constant has an imaginary part (`j`, `1∠30°`).
fn complex(c: Option<num_complex::Complex64>) -> bool {
    c.is_some_and(|c| c.im != 0.0)
}

/// Kind of a product `a · b` whose dimension is `dim`. `const_a` and
/// `const_b` are the operands' values when they are compile-time
/// constants: f·2π is an angular frequency, and a factor with an imaginary
/// part turns a real or reactive power into a complex power (j·Q is VA). A
/// factor that is not a constant keeps the kind (`n * Qbank` is var).
pub fn kind_of_product(
    a: Kind,
    b: Kind,
    dim: Dim,
    const_a: Option<num_complex::Complex64>,
    const_b: Option<num_complex::Complex64>,
) -> Result<Kind, KindClash> {
    use Kind::*;
    let two_pi = std::f64::consts::TAU;
    let is_two_pi = |c: Option<num_complex::Complex64>| c.is_some_and(|v| v.im == 0.0 && (v.re - two_pi).abs() < 1e-12);
    let scaler = |k: Kind| matches!(k, Plain | PerUnit | Percent);
    if a == Decibel && b == Decibel {
        return Err(clash(
            "a product of two levels in decibels has no meaning: levels in dB add",
            "add the levels (`G1 + G2`), or multiply the ratios",
        ));
    }
    let k = match (a, b) {
        (Hertz, Plain) if is_two_pi(const_b) => RadPerSec,
        (Plain, Hertz) if is_two_pi(const_a) => RadPerSec,
        (p, s) if p.is_power() && scaler(s) => {
            if p != ApparentPower && complex(const_b) {
                ApparentPower
            } else {
                p
            }
        }
        (s, p) if p.is_power() && scaler(s) => {
            if p != ApparentPower && complex(const_a) {
                ApparentPower
            } else {
                p
            }
        }
        (Decibel, s) | (s, Decibel) if scaler(s) => Decibel,
        (k, s) | (s, k) if scaler(s) && scaler(k) => scaler_product(k, s).unwrap_or(Plain),
        (k, Plain) | (Plain, k) => k,
        _ => Plain,
    };
    Ok(Quantity::new(dim, k).kind)
}

/// Kind of a quotient `a / b` whose dimension is `dim`; `const_b` is the
/// divisor's value when it is a compile-time constant. pu/pu and %/% are
/// plain ratios; ω/2π is in Hz; a power divided by a factor with an
/// imaginary part is a complex power.
pub fn kind_of_quotient(
    a: Kind,
    b: Kind,
    dim: Dim,
    const_b: Option<num_complex::Complex64>,
) -> Result<Kind, KindClash> {
    use Kind::*;
    let two_pi = std::f64::consts::TAU;
    let k = match (a, b) {
        (RadPerSec, Plain) if const_b.is_some_and(|v| v.im == 0.0 && (v.re - two_pi).abs() < 1e-12) => Hertz,
        (p, Plain | PerUnit | Percent) if p.is_power() => {
            if p != ApparentPower && complex(const_b) {
                ApparentPower
            } else {
                p
            }
        }
        (PerUnit, PerUnit) | (Percent, Percent) | (Decibel, Decibel) => Plain,
        (PerUnit, Plain | Percent) | (Plain, PerUnit) => PerUnit,
        (Percent, Plain) => Percent,
        (Decibel, Plain | PerUnit | Percent) => Decibel,
        (k, Plain) => k,
        // angle / angle is a plain ratio; anything else loses its tag
        _ => Plain,
    };
    Ok(Quantity::new(dim, k).kind)
}

/// Whether a value of quantity `got` may be given to an input of quantity
/// `want` (`--set`, `--vary`, sweep, solve and search ranges, a cases
/// table, a session edit): the same dimension, and a kind that cannot be
/// misread. Power kinds must match (2000 kW is not a reactive power); an
/// angle only for an angle; Hz and rad/s never for each other; a plain
/// number is refused for a percentage (`12` would be 1200 %); a level in dB
/// takes dB or a plain number (the stored number is the dB value); a
/// percentage, per-unit or plain value may set one another otherwise (5 %
/// is 0.05 pu).
pub fn fits_input(want: Quantity, got: Quantity) -> bool {
    use Kind::*;
    let (want, got) = (want.normalized(), got.normalized());
    if want.dim != got.dim {
        return false;
    }
    match (want.kind, got.kind) {
        (a, b) if a == b => true,
        (a, b) if a.is_power() || b.is_power() => false,
        (Angle, _) | (_, Angle) => false,
        (Hertz, RadPerSec) | (RadPerSec, Hertz) => false,
        (Percent, Plain) => false,
        (Decibel, Plain) => true,
        (Decibel, _) | (_, Decibel) => false,
        _ => true,
    }
}

/// The message and hint for a value that does not fit an input (see
/// `fits_input`): "`Qc` is a reactive power (var); `2000 kW` is a real
/// power (W)", and a hint with the unit to write, which is `unit` (the unit
/// the sheet gives the input) when known.
pub fn input_clash(name: &str, want: Quantity, got: Quantity, text: &str, unit: Option<&str>) -> (String, String) {
    let base = super::format::base_symbol(want);
    let unit = unit.map_or(base, str::to_string);
    let message = format!("`{name}` is {}; `{text}` is {}", want.describe(), got.describe());
    let number = text.trim();
    let bare = number.parse::<f64>().is_ok();
    let hint = if want.kind == Kind::Angle {
        if bare {
            format!("write `{number}°` (or `{number} rad`)")
        } else {
            "give an angle: `30°` or `0.5 rad`".to_string()
        }
    } else if bare && !unit.is_empty() {
        let sep = if unit == "°" { "" } else { " " };
        format!("write `{number}{sep}{unit}`")
    } else if unit.is_empty() {
        format!("give {}", want.describe())
    } else {
        format!("give the value in {unit}, as {} is", want.describe())
    };
    (message, hint)
}

#[cfg(test)]
mod tests {
    use super::*;
    use num_complex::Complex64 as C64;
    use Kind::*;

    const P: Dim = Dim::POWER;

    #[test]
    fn powers_add_as_the_parts_of_s() {
        // IEEE Std 1459-2010 §3.1: S = P + jQ; P and Q are real numbers.
        assert_eq!(kind_of_sum(RealPower, RealPower, P), Ok(RealPower));
        assert_eq!(kind_of_sum(ReactivePower, ReactivePower, P), Ok(ReactivePower));
        assert_eq!(kind_of_sum(RealPower, ApparentPower, P), Ok(ApparentPower));
        assert_eq!(kind_of_sum(ApparentPower, Plain, P), Ok(ApparentPower));
        let e = kind_of_sum(RealPower, ReactivePower, P).unwrap_err();
        assert!(e.hint.contains("P + j*Q"), "{e:?}");
        let e = kind_of_sum(ApparentPower, ReactivePower, P).unwrap_err();
        assert!(e.hint.contains("S + j*Q"), "{e:?}");
        // an unnamed power (V·conj(I)) is a complex power
        assert!(kind_of_sum(Plain, ReactivePower, P).is_err());
    }

    #[test]
    fn j_times_q_is_a_complex_power() {
        let j = Some(C64::new(0.0, 1.0));
        let two = Some(C64::new(2.0, 0.0));
        assert_eq!(kind_of_product(Plain, ReactivePower, P, j, None), Ok(ApparentPower));
        assert_eq!(kind_of_product(ReactivePower, Plain, P, None, j), Ok(ApparentPower));
        assert_eq!(kind_of_product(Plain, ReactivePower, P, two, None), Ok(ReactivePower));
        assert_eq!(kind_of_product(RealPower, Plain, P, None, None), Ok(RealPower));
        assert_eq!(kind_of_quotient(ReactivePower, Plain, P, j), Ok(ApparentPower));
        // V · conj(I): two plain factors whose dimension is a power
        assert_eq!(kind_of_product(Plain, Plain, P, None, None), Ok(ApparentPower));
    }

    #[test]
    fn percent_per_unit_and_decibels() {
        let none = Dim::NONE;
        assert_eq!(kind_of_sum(Percent, Percent, none), Ok(Percent));
        assert_eq!(kind_of_sum(Percent, Plain, none), Ok(Plain));
        assert_eq!(kind_of_sum(PerUnit, Percent, none), Ok(PerUnit));
        assert_eq!(kind_of_product(PerUnit, PerUnit, none, None, None), Ok(PerUnit));
        assert_eq!(kind_of_quotient(PerUnit, PerUnit, none, None), Ok(Plain));
        assert_eq!(kind_of_quotient(Percent, Percent, none, None), Ok(Plain));
        assert_eq!(kind_of_sum(Decibel, Decibel, none), Ok(Decibel));
        assert!(kind_of_sum(Decibel, Percent, none).is_err());
        assert!(kind_of_product(Decibel, Decibel, none, None, None).is_err());
        assert_eq!(kind_of_product(Decibel, Plain, none, None, None), Ok(Decibel));
        // a percentage of a power is a power of the same kind
        assert_eq!(
            kind_of_product(Percent, ReactivePower, P, None, None),
            Ok(ReactivePower)
        );
    }
}
