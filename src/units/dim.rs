//! Physical dimensions as exponents of SI base units.
//!
//! Only the base units an AC circuit worksheet meets are tracked: metre,
//! kilogram, second and ampere. (Kelvin, mole and candela never appear in
//! phasor work; adding them is a matter of widening the array.)

use std::fmt;

/// Exponents of the SI base units `[m, kg, s, A]`.
#[derive(Clone, Copy, PartialEq, Eq, Hash, Default, PartialOrd, Ord)]
pub struct Dim(pub [i8; 4]);

const BASE_SYMBOLS: [&str; 4] = ["m", "kg", "s", "A"];

impl Dim {
    pub const NONE: Dim = Dim([0, 0, 0, 0]);
    pub const LENGTH: Dim = Dim([1, 0, 0, 0]);
    /// m²: a conductor's cross-section.
    pub const AREA: Dim = Dim([2, 0, 0, 0]);
    pub const MASS: Dim = Dim([0, 1, 0, 0]);
    pub const TIME: Dim = Dim([0, 0, 1, 0]);
    pub const CURRENT: Dim = Dim([0, 0, 0, 1]);
    /// 1/s: hertz, rad/s.
    pub const FREQUENCY: Dim = Dim([0, 0, -1, 0]);
    /// V = kg·m²·s⁻³·A⁻¹
    pub const VOLTAGE: Dim = Dim([2, 1, -3, -1]);
    /// Ω = kg·m²·s⁻³·A⁻²
    pub const IMPEDANCE: Dim = Dim([2, 1, -3, -2]);
    /// S = Ω⁻¹
    pub const ADMITTANCE: Dim = Dim([-2, -1, 3, 2]);
    /// W = VA = var = kg·m²·s⁻³
    pub const POWER: Dim = Dim([2, 1, -3, 0]);
    /// J = kg·m²·s⁻²
    pub const ENERGY: Dim = Dim([2, 1, -2, 0]);
    /// C = A·s
    pub const CHARGE: Dim = Dim([0, 0, 1, 1]);
    /// F = s⁴·A²·kg⁻¹·m⁻²
    pub const CAPACITANCE: Dim = Dim([-2, -1, 4, 2]);
    /// H = kg·m²·s⁻²·A⁻²
    pub const INDUCTANCE: Dim = Dim([2, 1, -2, -2]);
    /// Wb = V·s
    pub const FLUX: Dim = Dim([2, 1, -2, -1]);

    pub fn is_none(self) -> bool {
        self == Dim::NONE
    }

    pub fn times(self, o: Dim) -> Option<Dim> {
        let mut r = [0i8; 4];
        for (i, slot) in r.iter_mut().enumerate() {
            *slot = self.0[i].checked_add(o.0[i])?;
        }
        Some(Dim(r))
    }

    pub fn per(self, o: Dim) -> Option<Dim> {
        self.times(o.recip()?)
    }

    pub fn recip(self) -> Option<Dim> {
        let mut r = [0i8; 4];
        for (i, slot) in r.iter_mut().enumerate() {
            *slot = self.0[i].checked_neg()?;
        }
        Some(Dim(r))
    }

    /// Raise to an integer power; `None` on exponent overflow.
    pub fn powi(self, n: i32) -> Option<Dim> {
        let mut r = [0i8; 4];
        for (i, slot) in r.iter_mut().enumerate() {
            let v = (self.0[i] as i32).checked_mul(n)?;
            *slot = i8::try_from(v).ok()?;
        }
        Some(Dim(r))
    }

    /// Raise to a rational power `num/den`; `None` unless every exponent
    /// comes out whole.
    pub fn pow_ratio(self, num: i32, den: i32) -> Option<Dim> {
        if den == 0 {
            return None;
        }
        let mut r = [0i8; 4];
        for (i, slot) in r.iter_mut().enumerate() {
            let v = (self.0[i] as i32).checked_mul(num)?;
            if v % den != 0 {
                return None;
            }
            *slot = i8::try_from(v / den).ok()?;
        }
        Some(Dim(r))
    }

    /// The dimension written with SI base units, e.g. `kg·m²·s⁻³·A⁻¹`.
    pub fn base_form(self) -> String {
        if self.is_none() {
            return "1".to_string();
        }
        // Conventional order: kg, m, s, A.
        let order = [1usize, 0, 2, 3];
        let mut parts = Vec::new();
        for &i in &order {
            let e = self.0[i];
            if e == 0 {
                continue;
            }
            if e == 1 {
                parts.push(BASE_SYMBOLS[i].to_string());
            } else {
                parts.push(format!("{}{}", BASE_SYMBOLS[i], superscript(e as i32)));
            }
        }
        parts.join("·")
    }
}

/// Write an integer as Unicode superscript digits (`-3` → `⁻³`).
pub fn superscript(n: i32) -> String {
    const DIGITS: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let mut s = String::new();
    if n < 0 {
        s.push('⁻');
    }
    for c in n.unsigned_abs().to_string().chars() {
        s.push(DIGITS[c.to_digit(10).unwrap_or(0) as usize]);
    }
    s
}

impl fmt::Debug for Dim {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "Dim({})", self.base_form())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // The derived-unit definitions below are those of the SI Brochure
    // (BIPM, 9th edition, Table 4).
    #[test]
    fn derived_units_compose_from_base_units() {
        let v = Dim::VOLTAGE;
        let a = Dim::CURRENT;
        assert_eq!(v.per(a), Some(Dim::IMPEDANCE));
        assert_eq!(v.times(a), Some(Dim::POWER));
        assert_eq!(Dim::IMPEDANCE.recip(), Some(Dim::ADMITTANCE));
        assert_eq!(Dim::CHARGE.per(v), Some(Dim::CAPACITANCE));
        assert_eq!(Dim::FLUX.per(a), Some(Dim::INDUCTANCE));
        assert_eq!(Dim::POWER.times(Dim::TIME), Some(Dim::ENERGY));
        // sqrt(L/C) is an impedance; sqrt(L·C) is a time.
        let l_over_c = Dim::INDUCTANCE.per(Dim::CAPACITANCE).unwrap();
        assert_eq!(l_over_c.pow_ratio(1, 2), Some(Dim::IMPEDANCE));
        let lc = Dim::INDUCTANCE.times(Dim::CAPACITANCE).unwrap();
        assert_eq!(lc.pow_ratio(1, 2), Some(Dim::TIME));
        assert_eq!(Dim::VOLTAGE.pow_ratio(1, 2), None);
    }

    #[test]
    fn base_form_is_readable() {
        assert_eq!(Dim::VOLTAGE.base_form(), "kg·m²·s⁻³·A⁻¹");
        assert_eq!(Dim::NONE.base_form(), "1");
    }

    #[test]
    fn exponent_overflow_is_refused() {
        let big = Dim([100, 0, 0, 0]);
        assert_eq!(big.times(big), None);
        assert_eq!(big.powi(3), None);
    }
}
