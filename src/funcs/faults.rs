//! Fault studies: impedances from a nameplate and from a fault level,
//! referring an impedance across a transformer, unsymmetrical fault
//! currents from sequence impedances, and the peak factor of a fault
//! current (IEC 60909-0).
//!
//! Conventions:
//! - A percentage impedance is a fraction (`6 %` is 0.06) or per-unit on
//!   the equipment's own rating; X/R is a plain number ≥ 0 (0 is purely
//!   resistive, ∞ purely reactive, both limits exact).
//! - Voltages of ratings and fault levels are line-to-line, RMS. In a
//!   sheet with `@amplitude peak`, formulas with a power (V²/S) apply the
//!   factor ½ as the power functions do.
//! - A per-unit voltage with a per-unit power (or current) gives a
//!   per-unit impedance: `z_plate(6 %, 8, V_r/V_b, S_r/S_b)` is the
//!   change of base to the system base.
//! - Fault currents: Vf is the pre-fault phase-to-neutral voltage of phase
//!   a at the bus (a phasor, V or pu), Z1, Z2, Z0 the Thevenin sequence
//!   impedances there, Zf the fault impedance. The single line-to-ground
//!   fault is on phase a; the line-to-line and double line-to-ground faults
//!   are between phases b and c (for the latter, b and c joined and to
//!   ground through Zf). Phase order a-b-c, a = 1∠120°,
//!   Ia = I0 + I1 + I2, Ib = I0 + a²I1 + aI2, Ic = I0 + aI1 + a²I2
//!   (Fortescue). `ground` is the current into the ground, 3·I0.
//!   An open (∞) Z0 or Zf gives the limit: no ground current, and the
//!   double line-to-ground fault becomes the line-to-line one.

use super::*;
use crate::engine::ops::Op;
use crate::units::kind::Kind;

const SQRT3: f64 = 1.732_050_807_568_877_2;

/// A real number ≥ 0 (not NaN).
fn nonneg_real(x: C64) -> bool {
    x.im == 0.0 && x.re >= 0.0
}

/// A real number > 0 (not NaN).
fn pos_real(x: C64) -> bool {
    x.im == 0.0 && x.re > 0.0
}

fn nan() -> C64 {
    C64::new(f64::NAN, f64::NAN)
}

fn fid(name: &str) -> u16 {
    find(name).map(|(i, _)| i).expect("a function of the fault family")
}

/// Both `a` and `b` per-unit, or both with units.
fn both_pu(qs: &[Quantity], a: usize, b: usize) -> Result<bool, ArgError> {
    let pa = qs[a].kind == Kind::PerUnit;
    let pb = qs[b].kind == Kind::PerUnit;
    if pa != pb {
        return Err(ArgError::at(
            b,
            "mixing per-unit and SI values: give both in per-unit or both with units",
        ));
    }
    Ok(pa)
}

/// A percentage or per-unit impedance magnitude: a plain number, `%` or
/// pu (not an angle).
fn want_fraction(qs: &[Quantity], i: usize, name: &str) -> Result<(), ArgError> {
    if qs[i].dim.is_none() && !matches!(qs[i].kind, Kind::Angle | Kind::Decibel) {
        Ok(())
    } else {
        Err(ArgError::at(
            i,
            format!(
                "`{name}` must be a percentage or per-unit impedance (`6 %`, `0.06 pu`), but this is {}",
                qs[i].describe()
            ),
        ))
    }
}

/// A rating or fault level in VA (or pu): not W, not var.
fn want_apparent(qs: &[Quantity], i: usize, name: &str, what: &str) -> Result<(), ArgError> {
    let q = qs[i];
    if q.kind == Kind::PerUnit {
        return Ok(());
    }
    if q.dim != Dim::POWER {
        return Err(ArgError::at(
            i,
            format!("`{name}` must be {what} in VA (or pu), but this is {}", q.describe()),
        ));
    }
    match q.kind {
        Kind::RealPower | Kind::ReactivePower => Err(ArgError::at(
            i,
            format!(
                "`{name}` must be {what} in VA, but this is {}; write it in kVA or MVA",
                q.describe()
            ),
        )),
        _ => Ok(()),
    }
}

fn z_result(pu: bool) -> Quantity {
    if pu {
        PU
    } else {
        Quantity::of(Dim::IMPEDANCE)
    }
}

// ---- an impedance of a given magnitude and X/R ----

fn ty_z_xr(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_impedance(qs, 0, "Zmag")?;
    want_plain(qs, 1, "XR", "the ratio X/R")?;
    Ok(Shape::Scalar(qs[0]))
}

/// R + jX with |Z| = m and X/R = xr: R = m/√(1 + xr²), X = m/√(1 + 1/xr²),
/// exact at xr = 0 and xr = ∞.
pub fn z_of_xr(m: C64, xr: C64) -> C64 {
    if m.im != 0.0 || xr.im != 0.0 || m.re.is_nan() || xr.re.is_nan() || m.re < 0.0 || xr.re < 0.0 {
        return nan();
    }
    let (m, k) = (m.re, xr.re);
    if m.is_infinite() && k.is_finite() {
        // an open (no source, a fault level of 0): ∞ Ω as `1 Ω / 0` is,
        // not ∞ + j∞, whose 45° says nothing about X/R
        C64::new(f64::INFINITY, 0.0)
    } else if k == 0.0 {
        C64::new(m, 0.0)
    } else if k.is_infinite() {
        C64::new(0.0, m)
    } else {
        C64::new(m / (1.0 + k * k).sqrt(), m / (1.0 + 1.0 / (k * k)).sqrt())
    }
}

fn s_z_xr(a: &[C64], out: &mut [C64], _: &Ctx) {
    out[0] = z_of_xr(a[0], a[1]);
}

fn dom_xr(x: C64, i: usize) -> Option<ArgError> {
    (!nonneg_real(x)).then(|| ArgError::at(i, "`XR` must be a real number ≥ 0"))
}

fn dom_z_xr(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if !nonneg_real(a[0]) {
        return Some(ArgError::at(0, "`Zmag` must be a magnitude (real, ≥ 0)"));
    }
    dom_xr(a[1], 1)
}

// ---- nameplate impedance ----

fn ty_z_plate(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_fraction(qs, 0, "z")?;
    want_plain(qs, 1, "XR", "the ratio X/R")?;
    want_or_pu(qs, 2, Dim::VOLTAGE, "V")?;
    want_apparent(qs, 3, "S", "a rating")?;
    Ok(Shape::Scalar(z_result(both_pu(qs, 2, 3)?)))
}

/// |Z| = k·z·|V|²/|S|, then the X/R split.
fn l_z_plate(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let v = e.un(Op::Abs, a[2]);
    let s = e.un(Op::Abs, a[3]);
    let v2 = e.bin(Op::Mul, v, v);
    let zb = e.bin(Op::Div, v2, s);
    let k = e.konst(if q[3].kind == Kind::PerUnit { 1.0 } else { power_k(e) }, 0.0);
    let zb = e.bin(Op::Mul, zb, k);
    let m = e.bin(Op::Mul, a[0], zb);
    e.call(fid("z_xr"), &[m, a[1]], 1)
}

fn dom_z_plate(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if !nonneg_real(a[0]) {
        return Some(ArgError::at(0, "`z` must be a real fraction ≥ 0"));
    }
    if let Some(e) = dom_xr(a[1], 1) {
        return Some(e);
    }
    (a[3].re == 0.0 && a[3].im == 0.0).then(|| ArgError::at(3, "the rating `S` is zero"))
}

// ---- source impedance from a fault level ----

fn ty_z_src(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let level = qs[0];
    if level.dim != Dim::CURRENT {
        want_apparent(qs, 0, "Ssc", "a fault level (VA, or a current in A)")?;
    }
    want_plain(qs, 1, "XR", "the ratio X/R")?;
    want_or_pu(qs, 2, Dim::VOLTAGE, "V")?;
    Ok(Shape::Scalar(z_result(both_pu(qs, 2, 0)?)))
}

/// |Z| = k·|V|²/|S| for a level in VA, |V|/(√3·|I|) for one in A. A
/// per-unit level is read as a power, |V|²/|S| (at 1 pu voltage the
/// per-unit fault power and current are one number).
fn l_z_src(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let v = e.un(Op::Abs, a[2]);
    let lvl = e.un(Op::Abs, a[0]);
    let m = if q[0].dim == Dim::CURRENT {
        let c = e.konst(SQRT3, 0.0);
        let d = e.bin(Op::Mul, lvl, c);
        e.bin(Op::Div, v, d)
    } else {
        let v2 = e.bin(Op::Mul, v, v);
        let k = e.konst(if q[0].kind == Kind::PerUnit { 1.0 } else { power_k(e) }, 0.0);
        let v2 = e.bin(Op::Mul, v2, k);
        e.bin(Op::Div, v2, lvl)
    };
    e.call(fid("z_xr"), &[m, a[1]], 1)
}

fn dom_z_src(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if let Some(e) = dom_xr(a[1], 1) {
        return Some(e);
    }
    (a[0].re == 0.0 && a[0].im == 0.0).then(|| ArgError::at(0, "a fault level of zero: the source is open (no source)"))
}

// ---- referring an impedance across a transformer ----

fn ty_z_refer(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let z = qs[0];
    if z.kind == Kind::PerUnit {
        return Err(ArgError::at(
            0,
            "a per-unit impedance is the same on both sides of a transformer whose bases are in its ratio; \
             refer an impedance in Ω (or change base with `rebase`)",
        ));
    }
    if z.dim != Dim::IMPEDANCE && z.dim != Dim::ADMITTANCE {
        return Err(ArgError::at(
            0,
            format!(
                "`Z` must be an impedance (Ω) or an admittance (S), but this is {}",
                z.describe()
            ),
        ));
    }
    for (i, n) in [(1, "V_from"), (2, "V_to")] {
        let v = qs[i];
        if !(v.dim == Dim::VOLTAGE || v.is_plain_number()) {
            return Err(ArgError::at(
                i,
                format!(
                    "`{n}` must be a rated voltage (V) or a number of turns, but this is {}",
                    v.describe()
                ),
            ));
        }
    }
    if qs[1].dim != qs[2].dim {
        return Err(ArgError::at(
            2,
            "`V_from` and `V_to` must both be voltages or both numbers of turns",
        ));
    }
    Ok(Shape::Scalar(Quantity::of(z.dim)))
}

/// Z·|V_to/V_from|² (an admittance by the inverse ratio).
fn l_z_refer(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let from = e.un(Op::Abs, a[1]);
    let to = e.un(Op::Abs, a[2]);
    let r = if q[0].dim == Dim::ADMITTANCE {
        e.bin(Op::Div, from, to)
    } else {
        e.bin(Op::Div, to, from)
    };
    let r2 = e.bin(Op::Mul, r, r);
    vec![e.bin(Op::Mul, a[0], r2)]
}

fn dom_z_refer(a: &[C64], _: &Ctx) -> Option<ArgError> {
    for (i, n) in [(1, "V_from"), (2, "V_to")] {
        if a[i].re == 0.0 && a[i].im == 0.0 {
            return Some(ArgError::at(i, format!("`{n}` is zero: no ratio")));
        }
        if a[i].re.is_infinite() || a[i].im.is_infinite() {
            return Some(ArgError::at(i, format!("`{n}` is infinite: no ratio")));
        }
    }
    None
}

// ---- unsymmetrical faults ----

fn ty_fault(qs: &[Quantity], names: &[&str]) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::VOLTAGE, "Vf")?;
    for (i, n) in names.iter().enumerate().skip(1) {
        want_impedance(qs, i, n)?;
        both_pu(qs, 0, i)?;
    }
    let pu = qs[0].kind == Kind::PerUnit;
    let i = if pu { PU } else { Quantity::of(Dim::CURRENT) };
    Ok(Shape::Record(vec![
        ("a", i),
        ("b", i),
        ("c", i),
        ("zero", i),
        ("pos", i),
        ("neg", i),
        ("ground", i),
    ]))
}

fn ty_slg(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    ty_fault(qs, &["Vf", "Z1", "Z2", "Z0", "Zf"])
}
fn ty_ll(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    ty_fault(qs, &["Vf", "Z1", "Z2", "Zf"])
}
fn ty_dlg(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    ty_fault(qs, &["Vf", "Z1", "Z2", "Z0", "Zf"])
}

/// 1∠120°.
fn rot() -> C64 {
    C64::new(-0.5, SQRT3 / 2.0)
}

/// Ib and Ic from sequence currents: Ib = I0 + a²I1 + aI2,
/// Ic = I0 + aI1 + a²I2.
fn phases_bc(e: &mut Emitter, i0: Operand, i1: Operand, i2: Operand) -> (Operand, Operand) {
    let a = Operand::Const(rot());
    let a2 = Operand::Const(rot() * rot());
    let b1 = e.bin(Op::Mul, a2, i1);
    let b2 = e.bin(Op::Mul, a, i2);
    let b = e.bin(Op::Add, b1, b2);
    let ib = e.bin(Op::Add, i0, b);
    let c1 = e.bin(Op::Mul, a, i1);
    let c2 = e.bin(Op::Mul, a2, i2);
    let c = e.bin(Op::Add, c1, c2);
    let ic = e.bin(Op::Add, i0, c);
    (ib, ic)
}

/// I0 = I1 = I2 = Vf/(Z1 + Z2 + Z0 + 3Zf); Ia = 3·I0, Ib = Ic = 0
/// (exactly: the open phases carry nothing).
fn l_slg(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let three = e.konst(3.0, 0.0);
    let zf3 = e.bin(Op::Mul, three, a[4]);
    let s = e.bin(Op::Add, a[1], a[2]);
    let s = e.bin(Op::Add, s, a[3]);
    let s = e.bin(Op::Add, s, zf3);
    let i = e.bin(Op::Div, a[0], s);
    let ia = e.bin(Op::Mul, three, i);
    let zero = e.konst(0.0, 0.0);
    vec![ia, zero, zero, i, i, i, ia]
}

/// I1 = Vf/(Z1 + Z2 + Zf) = −I2, I0 = 0; Ib = −j√3·I1 = −Ic, Ia = 0.
fn l_ll(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let s = e.bin(Op::Add, a[1], a[2]);
    let s = e.bin(Op::Add, s, a[3]);
    let i1 = e.bin(Op::Div, a[0], s);
    let i2 = e.un(Op::Neg, i1);
    let k = e.konst(0.0, -SQRT3);
    let ib = e.bin(Op::Mul, k, i1);
    let ic = e.un(Op::Neg, ib);
    let zero = e.konst(0.0, 0.0);
    vec![zero, ib, ic, zero, i1, i2, zero]
}

/// Zg = Z0 + 3Zf; I1 = Vf/(Z1 + Z2 ∥ Zg); I0 = −I1·Z2/(Z2 + Zg);
/// I2 = −(I1 + I0); Ia = 0. With Zg open the fault is line to line.
fn l_dlg(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let three = e.konst(3.0, 0.0);
    let zf3 = e.bin(Op::Mul, three, a[4]);
    let zg = e.bin(Op::Add, a[3], zf3);
    let p = e.bin(Op::Par, a[2], zg);
    let d = e.bin(Op::Add, a[1], p);
    let i1 = e.bin(Op::Div, a[0], d);
    let s = e.bin(Op::Add, a[2], zg);
    let share = e.bin(Op::Div, a[2], s);
    let i0 = e.bin(Op::Mul, i1, share);
    let i0 = e.un(Op::Neg, i0);
    let t = e.bin(Op::Add, i1, i0);
    let i2 = e.un(Op::Neg, t);
    let (ib, ic) = phases_bc(e, i0, i1, i2);
    let ig = e.bin(Op::Mul, three, i0);
    let zero = e.konst(0.0, 0.0);
    vec![zero, ib, ic, i0, i1, i2, ig]
}

fn dom_fault(a: &[C64], _: &Ctx) -> Option<ArgError> {
    let z = |x: C64| x.re == 0.0 && x.im == 0.0;
    if a.iter().skip(1).all(|x| z(*x)) {
        return Some(ArgError::whole(
            "every impedance is zero: a bolted fault on an infinite bus has no finite current",
        ));
    }
    a.iter()
        .position(|x| x.re.is_nan() || x.im.is_nan())
        .map(|i| ArgError::at(i, "this argument is NaN"))
        .or_else(|| {
            Some(ArgError::whole(
                "the sequence impedances in the fault's loop add up to zero (a series resonance): the current has no finite value",
            ))
        })
}

// ---- peak factor ----

fn ty_kappa(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_plain(qs, 0, "XR", "the ratio X/R of the fault loop")?;
    Ok(Shape::Scalar(Quantity::PLAIN))
}

/// κ = 1.02 + 0.98·e^(−3R/X), IEC 60909-0 (2016) eq. (55).
pub fn kappa(xr: C64) -> C64 {
    if !nonneg_real(xr) {
        return nan();
    }
    let r_over_x = 1.0 / xr.re; // 1/0 = ∞, 1/∞ = 0
    C64::new(1.02 + 0.98 * (-3.0 * r_over_x).exp(), 0.0)
}

fn s_kappa(a: &[C64], out: &mut [C64], _: &Ctx) {
    out[0] = kappa(a[0]);
}

fn dom_kappa(a: &[C64], _: &Ctx) -> Option<ArgError> {
    dom_xr(a[0], 0)
}

fn ty_sc_peak(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_or_pu(qs, 0, Dim::VOLTAGE, "Vn")?;
    want_impedance(qs, 1, "Zk")?;
    let pu = both_pu(qs, 0, 1)?;
    want_plain(qs, 2, "c", "the voltage factor of IEC 60909-0 Table 1, e.g. 1.1")?;
    let i = if pu { PU } else { Quantity::of(Dim::CURRENT) };
    Ok(Shape::Record(vec![("Ik", i), ("kappa", Quantity::PLAIN), ("ip", i)]))
}

/// Ik" = c·Vn/(√3·|Zk|) (c·Vn/|Zk| per-unit), κ from R/X of Zk,
/// ip = κ·√2·Ik" (κ·Ik" when phasors are peak values).
fn l_sc_peak(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let pu = q[0].kind == Kind::PerUnit;
    let v = e.un(Op::Abs, a[0]);
    let z = e.un(Op::Abs, a[1]);
    let cv = e.bin(Op::Mul, a[2], v);
    let d = if pu {
        z
    } else {
        let k = e.konst(SQRT3, 0.0);
        e.bin(Op::Mul, z, k)
    };
    let ik = e.bin(Op::Div, cv, d);
    let r = e.un(Op::Re, a[1]);
    let x = e.un(Op::Im, a[1]);
    let xr = e.bin(Op::Div, x, r);
    let kap = e.call(fid("kappa"), &[xr], 1)[0];
    let root2 = e.konst(if e.peak { 1.0 } else { std::f64::consts::SQRT_2 }, 0.0);
    let kr = e.bin(Op::Mul, kap, root2);
    let ip = e.bin(Op::Mul, kr, ik);
    vec![ik, kap, ip]
}

fn dom_sc_peak(a: &[C64], _: &Ctx) -> Option<ArgError> {
    let z = a[1];
    if z.re.is_nan() || z.im.is_nan() {
        return Some(ArgError::at(1, "`Zk` is NaN"));
    }
    if z.re < 0.0 || z.im < 0.0 || (z.re == 0.0 && z.im == 0.0) {
        return Some(ArgError::at(
            1,
            "`Zk` must be a short-circuit impedance with R ≥ 0 and X ≥ 0, not zero",
        ));
    }
    (!pos_real(a[2])).then(|| ArgError::at(2, "`c` must be a real factor > 0"))
}

pub fn funcs() -> Vec<Builtin> {
    let fault = "symmetrical components (Fortescue 1918), the sequence networks connected for the fault as in standard power-systems texts (from memory); checked against a phase-domain solve in mpmath";
    vec![
        scalar_fn(
            "z_xr",
            "impedance of magnitude Zmag with the ratio X/R (0: resistive, ∞: reactive)",
            &[p!("Zmag", "Ω|pu"), p!("XR", "1")],
            "as Zmag",
            ty_z_xr,
            s_z_xr,
        )
        .with_domain(dom_z_xr)
        .with_source("Z = R + jX with X/R given: R = |Z|/√(1 + (X/R)²) (IEC 60050-131, from memory)"),
        lowered(
            "z_plate",
            "impedance from a nameplate: z (% or pu on the rating) with X/R, on rating S at voltage V (the side it is referred to)",
            &[p!("z", "%|pu"), p!("XR", "1"), p!("V", "V|pu"), p!("S", "VA|pu")],
            "Ω|pu",
            ty_z_plate,
            l_z_plate,
        )
        .with_domain(dom_z_plate)
        .with_source("|Z| = z·V²/S, the per-unit impedance on the rating times the base impedance (the short-circuit impedance of IEC 60076-1 in per-unit of the rated impedance; from memory)"),
        lowered(
            "z_src",
            "source impedance from a three-phase fault level (VA, or a current in A) and X/R at line voltage V",
            &[p!("Ssc", "VA|A|pu"), p!("XR", "1"), p!("V", "V|pu")],
            "Ω|pu",
            ty_z_src,
            l_z_src,
        )
        .with_domain(dom_z_src)
        .with_source("|Z| = V²/S_sc = V/(√3·I_sc) (the network-feeder impedance of IEC 60909-0 without its factor c; multiply by c where that standard asks) (from memory)"),
        lowered(
            "z_refer",
            "impedance referred across a transformer from the V_from side to the V_to side: Z·(V_to/V_from)²",
            &[p!("Z", "Ω|S"), p!("V_from", "V|1"), p!("V_to", "as V_from")],
            "as Z",
            ty_z_refer,
            l_z_refer,
        )
        .with_domain(dom_z_refer)
        .with_source("ideal-transformer referral Z' = Z·(N2/N1)², as in standard power-systems texts (from memory)"),
        lowered(
            "fault_slg",
            "single line-to-ground fault on phase a through Zf: fields a, b, c, zero, pos, neg, ground",
            &[p!("Vf", "V|pu"), p!("Z1", "Ω|pu"), p!("Z2", "Ω|pu"), p!("Z0", "Ω|pu"), p!("Zf", "Ω|pu")],
            "record of currents (A|pu)",
            ty_slg,
            l_slg,
        )
        .with_domain(dom_fault)
        .with_source(fault),
        lowered(
            "fault_ll",
            "line-to-line fault between phases b and c through Zf: fields a, b, c, zero, pos, neg, ground",
            &[p!("Vf", "V|pu"), p!("Z1", "Ω|pu"), p!("Z2", "Ω|pu"), p!("Zf", "Ω|pu")],
            "record of currents (A|pu)",
            ty_ll,
            l_ll,
        )
        .with_domain(dom_fault)
        .with_source(fault),
        lowered(
            "fault_dlg",
            "double line-to-ground fault, b and c to ground through Zf: fields a, b, c, zero, pos, neg, ground",
            &[p!("Vf", "V|pu"), p!("Z1", "Ω|pu"), p!("Z2", "Ω|pu"), p!("Z0", "Ω|pu"), p!("Zf", "Ω|pu")],
            "record of currents (A|pu)",
            ty_dlg,
            l_dlg,
        )
        .with_domain(dom_fault)
        .with_source(fault),
        scalar_fn(
            "kappa",
            "peak factor of a fault current from X/R: 1.02 + 0.98·e^(−3R/X) (1.02 at X/R = 0, 2 at ∞)",
            &[p!("XR", "1")],
            "1",
            ty_kappa,
            s_kappa,
        )
        .with_domain(dom_kappa)
        .with_source("IEC 60909-0:2016, peak short-circuit current, κ = 1.02 + 0.98·e^(−3R/X) (from memory)"),
        lowered(
            "sc_peak",
            "three-phase fault at nominal voltage Vn behind Zk with voltage factor c: fields Ik (Ik\"), kappa, ip = κ·√2·Ik\"",
            &[p!("Vn", "V|pu"), p!("Zk", "Ω|pu"), p!("c", "1")],
            "record Ik (A|pu), kappa (1), ip (A|pu)",
            ty_sc_peak,
            l_sc_peak,
        )
        .with_domain(dom_sc_peak)
        .with_source("IEC 60909-0:2016: Ik\" = c·Un/(√3·Zk), ip = κ·√2·Ik\" for a radial feed (the 1.15 factor of meshed networks is not applied) (from memory)"),
    ]
}
