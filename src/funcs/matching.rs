//! Matching networks: the two-element L-network between a resistive
//! source and a resistive load (low-pass and high-pass forms), and the
//! L-network that conjugate-matches a complex load to a resistive source.
//!
//! Resistive case (the handbook design equations): with Rhi the larger and
//! Rlo the smaller of the two resistances, Q = √(Rhi/Rlo − 1); the series
//! element has |X| = Q·Rlo and sits on the Rlo side; the shunt element has
//! |X| = Rhi/Q and sits across Rhi.
//!
//! Complex load ZL = R + jX from a source resistance Rs: if R > Rs the
//! shunt element goes across the load (susceptance
//! B = (X ± √(R/Rs)·√(R² + X² − Rs·R))/(R² + X²), series reactance
//! 1/B + X·Rs/R − Rs/(B·R)); otherwise the series element is next to the
//! load (reactance ±√(R·(Rs − R)) − X) and the shunt across the source
//! (B = ±√((Rs − R)/R)/Rs). The sign is the `sol` argument.
//!
//! π and T networks for a chosen loaded Q (Bowick, RF Circuit Design,
//! ch. 4 — from memory): two L-networks back to back through a virtual
//! resistance Rv. For a π, Rv = Rhi/(Q² + 1), below both resistances, so
//! Q must be at least √(Rhi/Rlo − 1), the Q of the single L-network; each
//! side has Qs = √(Rs/Rv − 1), QL = √(RL/Rv − 1) (the larger one is Q),
//! shunt reactances Rs/Qs and RL/QL across the ends and one series
//! reactance Rv·(Qs + QL). For a T, Rv = Rlo·(Q² + 1), above both, with
//! Qs = √(Rv/Rs − 1), QL = √(Rv/RL − 1), series reactances Qs·Rs and
//! QL·RL at the ends and one shunt reactance Rv/(Qs + QL). At the least
//! Q one side's Q is 0 and the network is the L-network (that end's shunt
//! an open, or series element a short).

use super::*;

const RRF: &[Param] = &[p!("Rs", "Ω"), p!("RL", "Ω"), p!("f", "Hz|rad/s")];

fn ty_lmatch(qs: &[Quantity], _: &Ctx, lowpass: bool) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::IMPEDANCE, "Rs")?;
    want(qs, 1, Dim::IMPEDANCE, "RL")?;
    want_frequency(qs, 2, "f")?;
    let l = Quantity::of(Dim::INDUCTANCE);
    let c = Quantity::of(Dim::CAPACITANCE);
    Ok(Shape::Record(if lowpass {
        vec![("L", l), ("C", c), ("Q", Quantity::PLAIN)]
    } else {
        vec![("C", c), ("L", l), ("Q", Quantity::PLAIN)]
    }))
}

fn ty_lp(qs: &[Quantity], c: &Ctx) -> Result<Shape, ArgError> {
    ty_lmatch(qs, c, true)
}
fn ty_hp(qs: &[Quantity], c: &Ctx) -> Result<Shape, ArgError> {
    ty_lmatch(qs, c, false)
}

/// (Q, Rlo, Rhi, ω) of an L-network, or None unless both resistances are
/// positive and finite and ω positive (the frequency arrives as ω, see
/// `prep_omega`).
fn l_design(a: &[C64]) -> Option<(f64, f64, f64, f64)> {
    if a[..3].iter().any(|x| x.im != 0.0) {
        return None;
    }
    let (rs, rl, w) = (a[0].re, a[1].re, a[2].re);
    if !(rs > 0.0 && rl > 0.0 && rs.is_finite() && rl.is_finite() && w > 0.0 && w.is_finite()) {
        return None;
    }
    let (hi, lo) = (rs.max(rl), rs.min(rl));
    Some(((hi / lo - 1.0).sqrt(), lo, hi, w))
}

/// Series L = Q·Rlo/ω, shunt C = Q/(Rhi·ω).
fn s_lp(a: &[C64], out: &mut [C64], _: &Ctx) {
    let Some((q, lo, hi, w)) = l_design(a) else {
        out.fill(C64::new(f64::NAN, f64::NAN));
        return;
    };
    out[0] = C64::new(q * lo / w, 0.0);
    out[1] = C64::new(q / (hi * w), 0.0);
    out[2] = C64::new(q, 0.0);
}

/// Series C = 1/(ω·Q·Rlo), shunt L = Rhi/(Q·ω); equal resistances need
/// no network: a series short (C = ∞) and an open shunt (L = ∞).
fn s_hp(a: &[C64], out: &mut [C64], _: &Ctx) {
    let Some((q, lo, hi, w)) = l_design(a) else {
        out.fill(C64::new(f64::NAN, f64::NAN));
        return;
    };
    out[0] = C64::new(1.0 / (w * (q * lo)), 0.0);
    out[1] = C64::new(hi / (q * w), 0.0);
    out[2] = C64::new(q, 0.0);
}

/// The frequency (the last argument) as ω in rad/s.
fn prep_omega_last(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let mut v = a.to_vec();
    let k = v.len() - 1;
    v[k] = omega(e, a[k], q[k]);
    v
}

fn ty_lmatch_z(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::IMPEDANCE, "Rs")?;
    want(qs, 1, Dim::IMPEDANCE, "ZL")?;
    want_plain(qs, 2, "sol", "+1 or −1, choosing one of the two solutions")?;
    let z = Quantity::of(Dim::IMPEDANCE);
    Ok(Shape::Record(vec![("Xs", z), ("Xp", z), ("at_load", Quantity::PLAIN)]))
}

/// The L-network reactances (series Xs, shunt Xp = −1/B) that make a
/// complex load look like Rs; `at_load` is 1 when the shunt element is
/// across the load, 0 when it is across the source.
pub fn lmatch_z(rs: f64, zl: C64, sign: f64) -> (f64, f64, bool) {
    let (r, x) = (zl.re, zl.im);
    if r > rs {
        let m2 = r * r + x * x;
        let b = (x + sign * (r / rs).sqrt() * (m2 - rs * r).sqrt()) / m2;
        let xs = 1.0 / b + x * rs / r - rs / (b * r);
        (xs, -1.0 / b, true)
    } else {
        let xs = sign * (r * (rs - r)).sqrt() - x;
        let b = sign * ((rs - r) / r).sqrt() / rs;
        (xs, -1.0 / b, false)
    }
}

fn s_lmatch_z(a: &[C64], out: &mut [C64], _: &Ctx) {
    let sol = a[2];
    let sign = if sol == C64::new(1.0, 0.0) {
        1.0
    } else if sol == C64::new(-1.0, 0.0) {
        -1.0
    } else {
        f64::NAN
    };
    // Outside the domain (d_lmatch_z) the formulas still give numbers — a
    // lossless load (R = 0) gives a shunt of 0 Ω, a short across the
    // source — so refuse here, and let the domain check say why.
    let rs_ok = a[0].im == 0.0 && a[0].re > 0.0 && a[0].re.is_finite();
    let zl_ok = a[1].re > 0.0 && a[1].re.is_finite() && a[1].im.is_finite();
    if !rs_ok || !zl_ok || sign.is_nan() {
        out.fill(C64::new(f64::NAN, f64::NAN));
        return;
    }
    let (xs, xp, at_load) = lmatch_z(a[0].re, a[1], sign);
    out[0] = C64::new(xs, 0.0);
    out[1] = C64::new(xp, 0.0);
    out[2] = C64::new(if at_load { 1.0 } else { 0.0 }, 0.0);
}

/// (Qs, QL, Rv) of a π (`pi`) or T network, or None outside the domain.
pub fn pi_t_design(rs: f64, rl: f64, q: f64, pi: bool) -> Option<(f64, f64, f64)> {
    if !(rs > 0.0 && rl > 0.0 && rs.is_finite() && rl.is_finite() && q > 0.0 && q.is_finite()) {
        return None;
    }
    let (hi, lo) = (rs.max(rl), rs.min(rl));
    let rv = if pi { hi / (q * q + 1.0) } else { lo * (q * q + 1.0) };
    let side = |r: f64| {
        let x = if pi { r / rv - 1.0 } else { rv / r - 1.0 };
        // at the least Q one side's x is 0 up to rounding
        if x.abs() <= 8.0 * f64::EPSILON {
            Some(0.0)
        } else if x > 0.0 {
            Some(x.sqrt())
        } else {
            None
        }
    };
    Some((side(rs)?, side(rl)?, rv))
}

/// The least loaded Q of a π or T network between `rs` and `rl`.
pub fn q_min(rs: f64, rl: f64) -> f64 {
    (rs.max(rl) / rs.min(rl) - 1.0).sqrt()
}

const RRQF: &[Param] = &[p!("Rs", "Ω"), p!("RL", "Ω"), p!("Q", "1"), p!("f", "Hz|rad/s")];

fn ty_pi_t(qs: &[Quantity], names: [&'static str; 3], kinds: [Dim; 3]) -> Result<Shape, ArgError> {
    want(qs, 0, Dim::IMPEDANCE, "Rs")?;
    want(qs, 1, Dim::IMPEDANCE, "RL")?;
    want_plain(qs, 2, "Q", "the loaded Q of the network")?;
    want_frequency(qs, 3, "f")?;
    Ok(Shape::Record(vec![
        (names[0], Quantity::of(kinds[0])),
        (names[1], Quantity::of(kinds[1])),
        (names[2], Quantity::of(kinds[2])),
        ("Rv", Quantity::of(Dim::IMPEDANCE)),
    ]))
}

const C: Dim = Dim::CAPACITANCE;
const L: Dim = Dim::INDUCTANCE;

fn ty_pi_lp(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    ty_pi_t(qs, ["C1", "L", "C2"], [C, L, C])
}
fn ty_pi_hp(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    ty_pi_t(qs, ["L1", "C", "L2"], [L, C, L])
}
fn ty_t_lp(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    ty_pi_t(qs, ["L1", "C", "L2"], [L, C, L])
}
fn ty_t_hp(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    ty_pi_t(qs, ["C1", "L", "C2"], [C, L, C])
}

/// The frequency argument (index 3) as ω in rad/s.
fn prep_omega(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    prep_omega_last(e, a, q)
}

/// The three reactances, source end first, of a π (`pi`) or T network:
/// π: shunt Rs/Qs, series Rv·(Qs + QL), shunt RL/QL; T: series Qs·Rs,
/// shunt Rv/(Qs + QL), series QL·RL (magnitudes). None outside the domain.
fn reactances(a: &[C64], pi: bool) -> Option<([f64; 3], f64, f64)> {
    if a.iter().any(|x| x.im != 0.0) || !(a[3].re > 0.0 && a[3].re.is_finite()) {
        return None;
    }
    let (rs, rl) = (a[0].re, a[1].re);
    let (qs, ql, rv) = pi_t_design(rs, rl, a[2].re, pi)?;
    let x = if pi {
        [rs / qs, rv * (qs + ql), rl / ql]
    } else {
        [qs * rs, rv / (qs + ql), ql * rl]
    };
    Some((x, rv, a[3].re))
}

/// Elements from reactance magnitudes: `cap[i]` says a capacitor
/// (C = 1/(ωX)), else an inductor (L = X/ω). A shunt of X = ∞ is an open
/// (C = 0, L = ∞); a series X = 0 a short (C = ∞, L = 0).
fn elements(a: &[C64], out: &mut [C64], pi: bool, cap: [bool; 3]) {
    let Some((x, rv, w)) = reactances(a, pi) else {
        out.fill(C64::new(f64::NAN, f64::NAN));
        return;
    };
    for i in 0..3 {
        let v = if cap[i] { 1.0 / (w * x[i]) } else { x[i] / w };
        out[i] = C64::new(v, 0.0);
    }
    out[3] = C64::new(rv, 0.0);
}

fn s_pi_lp(a: &[C64], out: &mut [C64], _: &Ctx) {
    elements(a, out, true, [true, false, true]);
}
fn s_pi_hp(a: &[C64], out: &mut [C64], _: &Ctx) {
    elements(a, out, true, [false, true, false]);
}
fn s_t_lp(a: &[C64], out: &mut [C64], _: &Ctx) {
    elements(a, out, false, [false, true, false]);
}
fn s_t_hp(a: &[C64], out: &mut [C64], _: &Ctx) {
    elements(a, out, false, [true, false, true]);
}

fn d_pi_t(a: &[C64], what: &str) -> Option<ArgError> {
    for (i, n) in ["Rs", "RL"].iter().enumerate() {
        if !(a[i].im == 0.0 && a[i].re > 0.0 && a[i].re.is_finite()) {
            return Some(ArgError::at(i, format!("`{n}` must be a positive, finite resistance")));
        }
    }
    if !(a[3].im == 0.0 && a[3].re > 0.0 && a[3].re.is_finite()) {
        return Some(ArgError::at(3, "the frequency must be positive"));
    }
    let q = a[2];
    let qm = q_min(a[0].re, a[1].re);
    if !(q.im == 0.0 && q.re > 0.0 && q.re.is_finite()) {
        return Some(ArgError::at(2, "the loaded Q must be a positive real number"));
    }
    (q.re < qm && pi_t_design(a[0].re, a[1].re, q.re, true).is_none()).then(|| {
        ArgError::at(
            2,
            format!(
                "Q = {} is below the least Q of a {what} between {} Ω and {} Ω, √(Rhi/Rlo − 1) = {}; \
                 ask for at least that (at exactly that it is an L-network: `lmatch_lp`/`lmatch_hp`)",
                crate::units::format::fmt_sig(q.re, 4),
                crate::units::format::fmt_sig(a[0].re, 4),
                crate::units::format::fmt_sig(a[1].re, 4),
                crate::units::format::fmt_sig(qm, 4)
            ),
        )
    })
}

fn d_pi(a: &[C64], _: &Ctx) -> Option<ArgError> {
    d_pi_t(a, "π network")
}
fn d_t(a: &[C64], _: &Ctx) -> Option<ArgError> {
    d_pi_t(a, "T network")
}

fn d_lmatch_z(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if !(a[0].im == 0.0 && a[0].re > 0.0 && a[0].re.is_finite()) {
        return Some(ArgError::at(0, "`Rs` must be a positive, finite resistance"));
    }
    if !(a[1].re > 0.0 && a[1].re.is_finite() && a[1].im.is_finite()) {
        return Some(ArgError::at(
            1,
            "the load must have a positive, finite resistance (a lossless or open load cannot be matched)",
        ));
    }
    (a[2] != C64::new(1.0, 0.0) && a[2] != C64::new(-1.0, 0.0))
        .then(|| ArgError::at(2, "`sol` must be +1 or −1 (one of the two solutions)"))
}

const PI_T_SOURCE: &str =
    "Bowick, RF Circuit Design, ch. 4, π and T networks as two L-networks through a virtual resistance (from memory)";

pub fn funcs() -> Vec<Builtin> {
    vec![
        scalar_fn(
            "lmatch_lp",
            "L-network from Rs to RL at f, series L and shunt C (the shunt across the larger R)",
            RRF,
            "record L (H), C (F), Q (1)",
            ty_lp,
            s_lp,
        )
        .with_prepare(prep_omega_last),
        scalar_fn(
            "lmatch_hp",
            "L-network from Rs to RL at f, series C and shunt L (the shunt across the larger R)",
            RRF,
            "record C (F), L (H), Q (1)",
            ty_hp,
            s_hp,
        )
        .with_prepare(prep_omega_last),
        scalar_fn(
            "lmatch_z",
            "L-network making a complex load ZL look like Rs: series Xs, shunt Xp, at_load 1 if the shunt is across ZL",
            &[p!("Rs", "Ω"), p!("ZL", "Ω"), p!("sol", "±1")],
            "record Xs (Ω), Xp (Ω), at_load (1|0)",
            ty_lmatch_z,
            s_lmatch_z,
        )
        .with_domain(d_lmatch_z)
        .with_source("Pozar, Microwave Engineering, §5.1, L-section matching of a complex load (from memory)"),
        scalar_fn(
            "pimatch_lp",
            "π-network from Rs to RL at f for a loaded Q: shunt C1 across Rs, series L, shunt C2 across RL",
            RRQF,
            "record C1 (F), L (H), C2 (F), Rv (Ω)",
            ty_pi_lp,
            s_pi_lp,
        )
        .with_prepare(prep_omega)
        .with_domain(d_pi)
        .with_source(PI_T_SOURCE),
        scalar_fn(
            "pimatch_hp",
            "π-network from Rs to RL at f for a loaded Q: shunt L1 across Rs, series C, shunt L2 across RL",
            RRQF,
            "record L1 (H), C (F), L2 (H), Rv (Ω)",
            ty_pi_hp,
            s_pi_hp,
        )
        .with_prepare(prep_omega)
        .with_domain(d_pi)
        .with_source(PI_T_SOURCE),
        scalar_fn(
            "tmatch_lp",
            "T-network from Rs to RL at f for a loaded Q: series L1 next to Rs, shunt C, series L2 next to RL",
            RRQF,
            "record L1 (H), C (F), L2 (H), Rv (Ω)",
            ty_t_lp,
            s_t_lp,
        )
        .with_prepare(prep_omega)
        .with_domain(d_t)
        .with_source(PI_T_SOURCE),
        scalar_fn(
            "tmatch_hp",
            "T-network from Rs to RL at f for a loaded Q: series C1 next to Rs, shunt L, series C2 next to RL",
            RRQF,
            "record C1 (F), L (H), C2 (F), Rv (Ω)",
            ty_t_hp,
            s_t_hp,
        )
        .with_prepare(prep_omega)
        .with_domain(d_t)
        .with_source(PI_T_SOURCE),
    ]
}
