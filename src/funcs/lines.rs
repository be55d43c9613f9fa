//! Transmission lines and RF: the reflection coefficient of a load, VSWR
//! and return loss, decibels back to ratios, a line's propagation constant
//! and characteristic impedance from its per-length R, L, G, C, the input
//! impedance of a loaded line (lossless with an electrical length, or
//! lossy with γ and a length), and the nominal-π and exact (long-line)
//! equivalents of a power line.
//!
//! Conventions:
//! - Γ = (ZL − Z0)/(ZL + Z0), the voltage reflection coefficient; an open
//!   load (ZL = ∞) gives Γ = 1, a short −1, a matched load 0.
//! - VSWR = (1 + |Γ|)/(1 − |Γ|): ∞ for |Γ| = 1, refused (NaN) for |Γ| > 1.
//! - Return loss = −20·log10|Γ| dB: positive for a passive load, ∞ matched.
//! - γ = α + jβ = √((R + jωL)(G + jωC)) with α ≥ 0, Zc = √((R + jωL)/(G + jωC)).
//! - Zin = Zc·(ZL + Zc·tanh γℓ)/(Zc + ZL·tanh γℓ); lossless:
//!   Z0·(ZL·cos θ + jZ0·sin θ)/(Z0·cos θ + jZL·sin θ). An electrical length
//!   within rounding of a multiple of 90° is taken as exactly that
//!   multiple (90° is stored as π/2 rounded), so a shorted quarter-wave
//!   line gives ∞ (an open) and an open one gives 0.
//! - Long line: Z′ = Z·sinh(γℓ)/(γℓ), Y′/2 = (Y/2)·tanh(γℓ/2)/(γℓ/2), with
//!   Z = zℓ, Y = yℓ; A = D = cosh γℓ, B = Z′, C = Y·sinh(γℓ)/(γℓ). The
//!   nominal π drops the correction factors: A = D = 1 + ZY/2, B = Z,
//!   C = Y(1 + ZY/4).

use std::f64::consts::FRAC_PI_2;

use super::*;
use crate::engine::ops;

pub(crate) const NAN: C64 = C64::new(f64::NAN, f64::NAN);
const ONE: C64 = C64::new(1.0, 0.0);

pub(crate) fn is_inf(z: C64) -> bool {
    z.re.is_infinite() || z.im.is_infinite()
}

pub(crate) fn is_nan(z: C64) -> bool {
    z.re.is_nan() || z.im.is_nan()
}

/// A real number ≥ 0 (not NaN, no imaginary part).
fn real_nonneg(z: C64) -> bool {
    z.im == 0.0 && z.re >= 0.0
}

/// `dim` per metre.
pub(crate) fn per_m(dim: Dim) -> Dim {
    dim.per(Dim::LENGTH).expect("small exponents")
}

/// Argument `i` must have dimension `dim`; `what` names it with an example.
pub(crate) fn want_dim(q: &[Quantity], i: usize, dim: Dim, param: &str, what: &str) -> Result<(), ArgError> {
    if q[i].dim == dim && q[i].kind != Kind::PerUnit {
        Ok(())
    } else {
        Err(ArgError::at(
            i,
            format!("`{param}` must be {what}, but this is {}", q[i].describe()),
        ))
    }
}

/// Arguments `i` and `j` are impedances, both in Ω or both per-unit.
pub(crate) fn want_two_impedances(
    q: &[Quantity],
    (i, a): (usize, &str),
    (j, b): (usize, &str),
) -> Result<(), ArgError> {
    want_impedance(q, i, a)?;
    want_impedance(q, j, b)?;
    if q[i].dim != q[j].dim {
        return Err(ArgError::at(
            j,
            format!("`{a}` and `{b}` must both be in Ω or both per-unit"),
        ));
    }
    Ok(())
}

/// An electrical length: an angle with its unit.
fn want_angle(q: &[Quantity], i: usize, param: &str) -> Result<(), ArgError> {
    if q[i].kind == Kind::Angle {
        return Ok(());
    }
    let mut m = format!(
        "`{param}` must be an angle (an electrical length: `90°`, `1.571 rad`), but this is {}",
        q[i].describe()
    );
    if q[i].is_plain_number() {
        m.push_str("; a plain number could be degrees or radians: give it its unit (`beta*len * 1 rad`)");
    }
    Err(ArgError::at(i, m))
}

/// tanh without overflow, and finite at the poles of tan: the addition
/// formula tanh(x + jy) = (tanh x + j·tan y)/(1 + j·tanh x·tan y).
pub(crate) fn tanh_c(z: C64) -> C64 {
    if z.im == 0.0 {
        return C64::new(z.re.tanh(), 0.0);
    }
    let (tx, ty) = (z.re.tanh(), z.im.tan());
    ops::div(C64::new(tx, ty), C64::new(1.0, tx * ty))
}

/// sinh(x)/x, 1 at x = 0.
pub(crate) fn sinhc(x: C64) -> C64 {
    if x.norm() < 1e-4 {
        let x2 = x * x;
        ONE + x2 / 6.0 + x2 * x2 / 120.0
    } else {
        x.sinh() / x
    }
}

/// tanh(x)/x, 1 at x = 0.
pub(crate) fn tanhc(x: C64) -> C64 {
    if x.norm() < 1e-4 {
        let x2 = x * x;
        ONE - x2 / 3.0 + x2 * x2 * (2.0 / 15.0)
    } else {
        ops::div(tanh_c(x), x)
    }
}

/// cos and sin of `t`, exact at multiples of π/2 within rounding of `t`.
fn cos_sin_snapped(t: f64) -> (f64, f64) {
    let k = (t / FRAC_PI_2).round();
    if k.abs() < 1e15 && (t - k * FRAC_PI_2).abs() <= 8.0 * f64::EPSILON * t.abs() {
        match (k as i64).rem_euclid(4) {
            0 => (1.0, 0.0),
            1 => (0.0, 1.0),
            2 => (-1.0, 0.0),
            _ => (0.0, -1.0),
        }
    } else {
        (t.cos(), t.sin())
    }
}

// ---- reflection, VSWR, return loss, dB ----

/// Γ = (ZL − Z0)/(ZL + Z0); 1 for an open load.
pub fn reflection(zl: C64, z0: C64) -> C64 {
    if is_nan(zl) || is_nan(z0) || is_inf(z0) {
        return NAN;
    }
    if is_inf(zl) {
        return ONE;
    }
    ops::div(zl - z0, zl + z0)
}

fn ty_refl(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_two_impedances(qs, (0, "ZL"), (1, "Z0"))?;
    Ok(Shape::Scalar(Quantity::PLAIN))
}

fn s_refl(a: &[C64], out: &mut [C64], _: &Ctx) {
    out[0] = reflection(a[0], a[1]);
}

fn d_refl(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if is_inf(a[1]) || a[1] == C64::new(0.0, 0.0) {
        return Some(ArgError::at(
            1,
            "the reference impedance Z0 must be finite and non-zero",
        ));
    }
    if a[1].re.is_nan() || a[1].re <= 0.0 {
        return Some(ArgError::at(
            1,
            "the reference impedance Z0 has a positive real part (a line's Zc, a port's resistance); with Re Z0 ≤ 0 |Γ| could exceed 1 for a passive load",
        ));
    }
    if !is_inf(a[0]) && a[0] + a[1] == C64::new(0.0, 0.0) {
        return Some(ArgError::whole(
            "ZL = −Z0: the reflection coefficient has a pole there (a load of negative resistance)",
        ));
    }
    None
}

fn ty_gamma_in(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_plain(qs, 0, "G", "a reflection coefficient Γ, as from `refl(ZL, Z0)`")?;
    Ok(Shape::Scalar(Quantity::PLAIN))
}

fn s_vswr(a: &[C64], out: &mut [C64], _: &Ctx) {
    let m = ops::abs(a[0]);
    out[0] = if m <= 1.0 {
        C64::new((1.0 + m) / (1.0 - m), 0.0)
    } else {
        NAN
    };
}

fn s_return_loss(a: &[C64], out: &mut [C64], _: &Ctx) {
    let m = ops::abs(a[0]);
    out[0] = if m.is_nan() {
        NAN
    } else {
        C64::new(-20.0 * m.log10(), 0.0)
    };
}

/// A return loss is a level in dB.
fn ty_return_loss(qs: &[Quantity], c: &Ctx) -> Result<Shape, ArgError> {
    ty_gamma_in(qs, c)?;
    Ok(Shape::Scalar(Quantity::new(Dim::NONE, Kind::Decibel)))
}

fn ty_from_db(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    if qs[0].dim.is_none() && !matches!(qs[0].kind, Kind::Angle | Kind::PerUnit | Kind::Percent) {
        return Ok(Shape::Scalar(Quantity::PLAIN));
    }
    Err(ArgError::at(
        0,
        format!(
            "`x` must be a level in decibels (a plain number), but this is {}",
            qs[0].describe()
        ),
    ))
}

fn from_db(x: C64, k: f64) -> C64 {
    if x.im != 0.0 || x.re.is_nan() {
        NAN
    } else {
        C64::new(10f64.powf(x.re / k), 0.0)
    }
}

fn s_from_db_p(a: &[C64], out: &mut [C64], _: &Ctx) {
    out[0] = from_db(a[0], 10.0);
}

fn s_from_db_v(a: &[C64], out: &mut [C64], _: &Ctx) {
    out[0] = from_db(a[0], 20.0);
}

fn d_from_db(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (a[0].im != 0.0).then(|| ArgError::at(0, "a level in decibels is a real number"))
}

// ---- line constants and input impedance ----

fn ty_rlgc(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_dim(
        qs,
        0,
        per_m(Dim::IMPEDANCE),
        "R",
        "a resistance per length (`0.05 Ω/km`)",
    )?;
    want_dim(
        qs,
        1,
        per_m(Dim::INDUCTANCE),
        "L",
        "an inductance per length (`0.25 µH/m`)",
    )?;
    want_dim(
        qs,
        2,
        per_m(Dim::ADMITTANCE),
        "G",
        "a conductance per length (`1 nS/km`, or `0 S/m`)",
    )?;
    want_dim(
        qs,
        3,
        per_m(Dim::CAPACITANCE),
        "C",
        "a capacitance per length (`100 pF/m`)",
    )?;
    want_frequency(qs, 4, "f")?;
    Ok(Shape::Record(vec![
        ("gamma", Quantity::of(per_m(Dim::NONE))),
        ("Zc", Quantity::of(Dim::IMPEDANCE)),
    ]))
}

/// (γ, Zc) from per-length series impedance z and shunt admittance y:
/// γ = √z·√y (each root in the first quadrant for a passive line, so
/// Re γ ≥ 0), Zc = √z/√y.
pub fn line_constants(z: C64, y: C64) -> (C64, C64) {
    let (sz, sy) = (ops::sqrt(z), ops::sqrt(y));
    (sz * sy, ops::div(sz, sy))
}

fn d_rlgc(a: &[C64], _: &Ctx) -> Option<ArgError> {
    for (i, n) in ["R", "L", "G", "C"].iter().enumerate() {
        if !real_nonneg(a[i]) {
            return Some(ArgError::at(
                i,
                format!("`{n}` must be a real value of zero or more (a passive line)"),
            ));
        }
    }
    if a[4].im != 0.0 || a[4].re < 0.0 {
        return Some(ArgError::at(4, "the frequency must be real and not negative"));
    }
    let w = a[4].re;
    if a[0].re == 0.0 && a[1].re * w == 0.0 && a[2].re == 0.0 && a[3].re * w == 0.0 {
        return Some(ArgError::whole(
            "the line has neither series impedance nor shunt admittance: Zc is 0/0",
        ));
    }
    None
}

fn ty_zin_lossless(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_two_impedances(qs, (0, "ZL"), (1, "Z0"))?;
    want_angle(qs, 2, "theta")?;
    Ok(Shape::Scalar(qs[1]))
}

/// Input impedance of a lossless line of characteristic impedance `z0`
/// (real, > 0) and electrical length `theta` (radians, ≥ 0) ending in `zl`.
pub fn zin_lossless(zl: C64, z0: C64, theta: f64) -> C64 {
    if is_nan(zl) || !(z0.im == 0.0 && z0.re > 0.0 && z0.re.is_finite()) || !(theta >= 0.0 && theta.is_finite()) {
        return NAN;
    }
    let (c, s) = cos_sin_snapped(theta);
    if is_inf(zl) && s == 0.0 {
        // a whole number of half waves repeats the load: an open stays
        // the open it is (∞ Ω), not Z0·cos θ/(j·0) = −∞ Ω at 180°
        return zl;
    }
    if is_inf(zl) {
        // Z0·cos θ/(j·sin θ)
        return ops::div(z0 * c, C64::new(0.0, s));
    }
    let num = zl * c + C64::new(0.0, z0.re * s);
    let den = C64::new(z0.re * c, 0.0) + zl * C64::new(0.0, s);
    ops::div(num * z0.re, den)
}

fn s_zin_lossless(a: &[C64], out: &mut [C64], _: &Ctx) {
    out[0] = if a[2].im != 0.0 {
        NAN
    } else {
        zin_lossless(a[0], a[1], a[2].re)
    };
}

fn d_zin_lossless(a: &[C64], _: &Ctx) -> Option<ArgError> {
    let z0 = a[1];
    if !(z0.im == 0.0 && z0.re > 0.0 && z0.re.is_finite()) {
        return Some(ArgError::at(
            1,
            "a lossless line's Z0 is a positive real resistance; for a complex Zc use `zin_line`",
        ));
    }
    if !(a[2].im == 0.0 && a[2].re >= 0.0 && a[2].re.is_finite()) {
        return Some(ArgError::at(
            2,
            "the electrical length must be a real angle of zero or more",
        ));
    }
    None
}

fn want_gamma_len(qs: &[Quantity], g: usize) -> Result<(), ArgError> {
    want_dim(
        qs,
        g,
        per_m(Dim::NONE),
        "gamma",
        "a propagation constant (1/m), as from `line_rlgc(…).gamma`",
    )?;
    want_dim(qs, g + 1, Dim::LENGTH, "len", "a length (m, km)")
}

fn ty_zin_line(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_two_impedances(qs, (0, "ZL"), (1, "Zc"))?;
    want_gamma_len(qs, 2)?;
    Ok(Shape::Scalar(qs[1]))
}

/// Input impedance of a line (Zc, γ, length ℓ ≥ 0) ending in `zl`.
pub fn zin_line(zl: C64, zc: C64, gamma: C64, len: f64) -> C64 {
    if is_nan(zl) || is_nan(zc) || is_inf(zc) || zc == C64::new(0.0, 0.0) || !(len >= 0.0 && len.is_finite()) {
        return NAN;
    }
    if gamma.re < 0.0 || is_nan(gamma) || is_inf(gamma) {
        return NAN;
    }
    let t = tanh_c(gamma * len);
    if t == C64::new(0.0, 0.0) {
        // zero length: the load itself (an open stays ∞ Ω, not the
        // Zc·∞ = ∞ − j∞ of Zc/tanh 0, whose angle is Zc's)
        return zl;
    }
    if is_inf(zl) {
        return ops::div(zc, t);
    }
    if t.norm() <= 1.0 {
        ops::div(zc * (zl + zc * t), zc + zl * t)
    } else {
        let u = ops::div(ONE, t);
        ops::div(zc * (zl * u + zc), zc * u + zl)
    }
}

fn s_zin_line(a: &[C64], out: &mut [C64], _: &Ctx) {
    out[0] = if a[3].im != 0.0 {
        NAN
    } else {
        zin_line(a[0], a[1], a[2], a[3].re)
    };
}

fn d_len(a: &[C64], i: usize) -> Option<ArgError> {
    (!(a[i].im == 0.0 && a[i].re >= 0.0 && a[i].re.is_finite()))
        .then(|| ArgError::at(i, "the length must be real, finite and not negative"))
}

fn d_zin_line(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if is_inf(a[1]) || a[1] == C64::new(0.0, 0.0) {
        return Some(ArgError::at(
            1,
            "the characteristic impedance must be finite and non-zero",
        ));
    }
    if a[2].re < 0.0 {
        return Some(ArgError::at(
            2,
            "Re γ < 0: the line would amplify (a passive line has an attenuation of zero or more)",
        ));
    }
    d_len(a, 3)
}

// ---- power-line equivalents ----

fn ty_line_pi(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_dim(
        qs,
        0,
        per_m(Dim::IMPEDANCE),
        "z",
        "a series impedance per length (`(0.03 + j0.35) Ω/km`)",
    )?;
    want_dim(
        qs,
        1,
        per_m(Dim::ADMITTANCE),
        "y",
        "a shunt admittance per length (`j3.3 µS/km`)",
    )?;
    want_dim(qs, 2, Dim::LENGTH, "len", "a length (m, km)")?;
    let z = Quantity::of(Dim::IMPEDANCE);
    let y = Quantity::of(Dim::ADMITTANCE);
    let one = Quantity::PLAIN;
    Ok(Shape::Record(vec![
        ("Z", z),
        ("Y2", y),
        ("A", one),
        ("B", z),
        ("C", y),
        ("D", one),
    ]))
}

fn pi_args_ok(a: &[C64]) -> bool {
    a[0].re >= 0.0 && a[1].re >= 0.0 && !is_inf(a[0]) && !is_inf(a[1]) && d_len(a, 2).is_none()
}

fn s_line_pi(a: &[C64], out: &mut [C64], _: &Ctx) {
    if !pi_args_ok(a) {
        out.fill(NAN);
        return;
    }
    let (z, y) = (a[0] * a[2].re, a[1] * a[2].re);
    let y2 = y / 2.0;
    let ad = ONE + z * y2;
    out[0] = z;
    out[1] = y2;
    out[2] = ad;
    out[3] = z;
    out[4] = y * (ONE + z * y / 4.0);
    out[5] = ad;
}

fn s_line_pi_exact(a: &[C64], out: &mut [C64], _: &Ctx) {
    if !pi_args_ok(a) {
        out.fill(NAN);
        return;
    }
    let len = a[2].re;
    let (z, y) = (a[0] * len, a[1] * len);
    let (g, _) = line_constants(a[0], a[1]);
    let x = g * len;
    let k = sinhc(x);
    out[0] = z * k;
    out[1] = y / 2.0 * tanhc(x / 2.0);
    out[2] = x.cosh();
    out[3] = out[0];
    out[4] = y * k;
    out[5] = out[2];
}

fn d_line_pi(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if a[0].re < 0.0 || is_inf(a[0]) {
        return Some(ArgError::at(
            0,
            "a passive line has a finite series resistance of zero or more",
        ));
    }
    if a[1].re < 0.0 || is_inf(a[1]) {
        return Some(ArgError::at(
            1,
            "a passive line has a finite shunt conductance of zero or more",
        ));
    }
    d_len(a, 2)
}

pub fn funcs() -> Vec<Builtin> {
    vec![
        scalar_fn(
            "refl",
            "reflection coefficient Γ = (ZL − Z0)/(ZL + Z0) of a load on a reference impedance (1 open, −1 short)",
            &[p!("ZL", "Ω|pu"), p!("Z0", "Ω|pu")],
            "1",
            ty_refl,
            s_refl,
        )
        .with_domain(d_refl)
        .with_source("IEEE Std 100 (voltage reflection coefficient); Pozar, Microwave Engineering, §2.3 (from memory)"),
        scalar_fn(
            "vswr",
            "voltage standing-wave ratio (1 + |Γ|)/(1 − |Γ|) from a reflection coefficient",
            &[p!("G", "1")],
            "1",
            ty_gamma_in,
            s_vswr,
        )
        .with_domain(super::domains::vswr)
        .with_source("IEEE Std 100 (standing-wave ratio); Pozar, Microwave Engineering, §2.3 (from memory)")
        .with_real_result(),
        scalar_fn(
            "return_loss",
            "return loss −20·log10|Γ| in dB from a reflection coefficient (positive for a passive load, ∞ matched)",
            &[p!("G", "1")],
            "dB",
            ty_return_loss,
            s_return_loss,
        )
        .with_domain(super::domains::return_loss)
        .with_source("IEEE Std 100 (return loss); IEC 60027-3 (root-power level); from memory")
        .with_real_result(),
        scalar_fn(
            "from_db_p",
            "power ratio from decibels: 10^(x/10)",
            &[p!("x", "dB")],
            "1",
            ty_from_db,
            s_from_db_p,
        )
        .with_domain(d_from_db)
        .with_source("IEC 60027-3 (power level, 10·log10), from memory"),
        scalar_fn(
            "from_db_v",
            "voltage or current ratio from decibels: 10^(x/20)",
            &[p!("x", "dB")],
            "1",
            ty_from_db,
            s_from_db_v,
        )
        .with_domain(d_from_db)
        .with_source("IEC 60027-3 (root-power level, 20·log10), from memory"),
        lowered(
            "line_rlgc",
            "propagation constant γ = √((R + jωL)(G + jωC)) and characteristic impedance Zc of a line from per-length R, L, G, C",
            &[p!("R", "Ω/m"), p!("L", "H/m"), p!("G", "S/m"), p!("C", "F/m"), p!("f", "Hz|rad/s")],
            "record gamma (1/m), Zc (Ω)",
            ty_rlgc,
            l_rlgc,
        )
        .with_domain(d_rlgc)
        .with_source("telegrapher's equations: Pozar, Microwave Engineering, §2.1; Ramo, Whinnery & Van Duzer (from memory)"),
        scalar_fn(
            "zin_lossless",
            "input impedance of a lossless line (Z0, electrical length θ in ° or rad) ending in ZL",
            &[p!("ZL", "Ω|pu"), p!("Z0", "Ω|pu"), p!("theta", "°|rad")],
            "Ω|pu",
            ty_zin_lossless,
            s_zin_lossless,
        )
        .with_domain(d_zin_lossless)
        .with_source("Pozar, Microwave Engineering, §2.3, Zin = Z0(ZL + jZ0 tan βℓ)/(Z0 + jZL tan βℓ) (from memory)"),
        scalar_fn(
            "zin_line",
            "input impedance of a lossy line (Zc, γ, length) ending in ZL: Zc(ZL + Zc tanh γℓ)/(Zc + ZL tanh γℓ)",
            &[p!("ZL", "Ω|pu"), p!("Zc", "Ω|pu"), p!("gamma", "1/m"), p!("len", "m")],
            "Ω|pu",
            ty_zin_line,
            s_zin_line,
        )
        .with_domain(d_zin_line)
        .with_source("Pozar, Microwave Engineering, §2.7, the lossy line (from memory)"),
        scalar_fn(
            "line_pi",
            "nominal-π equivalent of a line from per-length z, y and its length: series Z, shunt Y2 = Y/2 at each end, and A, B, C, D",
            &[p!("z", "Ω/m"), p!("y", "S/m"), p!("len", "m")],
            "record Z (Ω), Y2 (S), A, B (Ω), C (S), D",
            ty_line_pi,
            s_line_pi,
        )
        .with_domain(d_line_pi)
        .with_source("Grainger & Stevenson, Power System Analysis, ch. 6, the medium-length line (from memory)"),
        scalar_fn(
            "line_pi_exact",
            "exact long-line π equivalent: Z′ = Z·sinh(γℓ)/γℓ, Y′/2 = (Y/2)·tanh(γℓ/2)/(γℓ/2), and A, B, C, D",
            &[p!("z", "Ω/m"), p!("y", "S/m"), p!("len", "m")],
            "record Z (Ω), Y2 (S), A, B (Ω), C (S), D",
            ty_line_pi,
            s_line_pi_exact,
        )
        .with_domain(d_line_pi)
        .with_source("Grainger & Stevenson, Power System Analysis, ch. 6, the long line (from memory)"),
    ]
}

/// γ = √z·√y and Zc = √z/√y with z = R + jωL, y = G + jωC (see
/// `line_constants`).
fn l_rlgc(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    use crate::engine::ops::Op;
    let w = omega(e, a[4], q[4]);
    let j = e.konst(0.0, 1.0);
    let jw = e.bin(Op::Mul, j, w);
    let wl = e.bin(Op::Mul, jw, a[1]);
    let z = e.bin(Op::Add, a[0], wl);
    let wc = e.bin(Op::Mul, jw, a[3]);
    let y = e.bin(Op::Add, a[2], wc);
    let sz = e.un(Op::Sqrt, z);
    let sy = e.un(Op::Sqrt, y);
    vec![e.bin(Op::Mul, sz, sy), e.bin(Op::Div, sz, sy)]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quarter_wave_limits_are_exact() {
        let q = 90f64.to_radians();
        assert_eq!(cos_sin_snapped(q), (0.0, 1.0));
        let z0 = C64::new(50.0, 0.0);
        // shorted quarter wave: an open
        assert!(is_inf(zin_lossless(C64::new(0.0, 0.0), z0, q)));
        // open quarter wave: a short
        assert_eq!(zin_lossless(C64::new(f64::INFINITY, 0.0), z0, q), C64::new(0.0, 0.0));
        // quarter-wave transformer: Z0²/ZL
        let z = zin_lossless(C64::new(100.0, 0.0), z0, q);
        assert!((z - C64::new(25.0, 0.0)).norm() < 1e-12);
    }

    #[test]
    fn tanh_is_finite_at_the_pole_of_tan() {
        let t = tanh_c(C64::new(0.0, FRAC_PI_2));
        assert!(t.re == 0.0 && t.im > 1e15);
        assert_eq!(tanh_c(C64::new(800.0, 1.0)).re, 1.0);
    }
}
