//! Quantity kinds: a display tag carried beside a dimension.
//!
//! SI gives real, reactive and apparent power one dimension, and hertz and
//! rad/s one dimension, and treats angles as plain numbers. The trade tells
//! them apart, so each compiled value carries a `Kind` that decides how it
//! is shown (W, var or VA; Hz or rad/s; degrees) and catches the one real
//! ambiguity: adding a plain number to an angle. Kinds never change a
//! number; they are settled while compiling.

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
            Kind::Angle | Kind::PerUnit => self.dim.is_none(),
            // A power's kind stays on the energy it gives over a time
            // (300 var × 2 h is 600 var·h, not 2.16 MJ of some energy).
            Kind::RealPower | Kind::ReactivePower | Kind::ApparentPower => {
                self.dim == Dim::POWER || self.dim == Dim::ENERGY
            }
            Kind::Hertz | Kind::RadPerSec => self.dim == Dim::FREQUENCY,
        };
        if ok {
            self
        } else {
            Quantity::of(self.dim)
        }
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
            (_, d) if d.is_none() => return "a plain number".into(),
            (Kind::RealPower, d) if d == Dim::ENERGY => "a real energy",
            (Kind::ReactivePower, d) if d == Dim::ENERGY => "a reactive energy",
            (Kind::ApparentPower, d) if d == Dim::ENERGY => "an apparent energy",
            (Kind::RealPower, _) => "a real power",
            (Kind::ReactivePower, _) => "a reactive power",
            (Kind::ApparentPower, _) => "an apparent power",
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
            _ => "a quantity",
        };
        format!("{what} ({unit})")
    }
}

/// Kind of a sum or difference of two values of the same dimension.
/// `Err` carries the reason the sum is ambiguous.
pub fn kind_of_sum(a: Kind, b: Kind, dim: Dim) -> Result<Kind, &'static str> {
    use Kind::*;
    if a == b {
        return Ok(a);
    }
    match (a, b) {
        (Angle, Plain) | (Plain, Angle) => {
            Err("adding an angle to a plain number is ambiguous: the number could be degrees or radians")
        }
        (Hertz, RadPerSec) | (RadPerSec, Hertz) => Err("adding a frequency in Hz to an angular frequency in rad/s"),
        (PerUnit, Plain) | (Plain, PerUnit) => Ok(PerUnit),
        _ if dim == Dim::POWER || dim == Dim::ENERGY => Ok(ApparentPower),
        (k, Plain) | (Plain, k) => Ok(k),
        _ => Ok(Plain),
    }
}

/// Kind of a product. `factor` is the value of the other operand when it is
/// a compile-time constant plain number (used for the 2π rule: f·2π is an
/// angular frequency).
pub fn kind_of_product(a: Kind, b: Kind, const_a: Option<f64>, const_b: Option<f64>) -> Kind {
    use Kind::*;
    let two_pi = std::f64::consts::TAU;
    let is_two_pi = |c: Option<f64>| c.is_some_and(|v| (v - two_pi).abs() < 1e-12);
    match (a, b) {
        (PerUnit, PerUnit) | (PerUnit, Plain) | (Plain, PerUnit) => PerUnit,
        (Hertz, Plain) if is_two_pi(const_b) => RadPerSec,
        (Plain, Hertz) if is_two_pi(const_a) => RadPerSec,
        (k, Plain) | (Plain, k) => k,
        _ => Plain,
    }
}

/// Kind of a quotient `a / b`.
pub fn kind_of_quotient(a: Kind, b: Kind, const_b: Option<f64>) -> Kind {
    use Kind::*;
    let two_pi = std::f64::consts::TAU;
    match (a, b) {
        (RadPerSec, Plain) if const_b.is_some_and(|v| (v - two_pi).abs() < 1e-12) => Hertz,
        (PerUnit, PerUnit) | (PerUnit, Plain) | (Plain, PerUnit) => PerUnit,
        (k, Plain) => k,
        // angle / angle is a plain ratio; anything else loses its tag
        _ => Plain,
    }
}
