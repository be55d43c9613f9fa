//! Domains of the built-in functions: which argument values a function
//! cannot take, and why. Each `DomainFn` here is attached to its function
//! with `Builtin::with_domain`; it runs only to explain a result that is
//! not a finite number (`engine::explain`), so it may be slow and wordy.
//!
//! A domain function returns the first argument out of range with the
//! reason (`ArgError::at`), which the explanation prints as
//! "argument `pf1` = 1.2 is out of range: a power factor lies within
//! −1 … +1", or a reason about the call as a whole (`ArgError::whole`).

use num_complex::Complex64 as C64;

use super::{ArgError, Ctx};
use crate::engine::ops;

fn is_zero(z: C64) -> bool {
    z.re == 0.0 && z.im == 0.0
}

fn is_open(z: C64) -> bool {
    z.re.is_infinite() || z.im.is_infinite()
}

fn is_real(z: C64) -> bool {
    z.im == 0.0 && z.re.is_finite()
}

/// A power factor: a real number within −1 … +1 (+ lagging, − leading).
fn pf_arg(a: &[C64], i: usize) -> Option<ArgError> {
    let z = a[i];
    if z.im != 0.0 {
        return Some(ArgError::at(
            i,
            "a power factor is a real number (+ lagging, − leading), not a complex one",
        ));
    }
    if z.re.is_nan() || z.re.abs() > 1.0 {
        return Some(ArgError::at(i, "a power factor lies within −1 … +1"));
    }
    None
}

/// A power factor that is not zero (tan φ is infinite at pf = 0).
fn pf_nonzero(a: &[C64], i: usize) -> Option<ArgError> {
    pf_arg(a, i).or_else(|| {
        (a[i].re == 0.0).then(|| {
            ArgError::at(
                i,
                "at a power factor of 0 the load takes no real power, so Q/P = tan φ is infinite",
            )
        })
    })
}

/// A rating, base or element value: a positive real number.
fn positive(a: &[C64], i: usize, what: &str) -> Option<ArgError> {
    let z = a[i];
    (!(is_real(z) && z.re > 0.0)).then(|| ArgError::at(i, format!("{what} is a positive real number")))
}

/// An element value that may be 0 (a short or an open) but not negative,
/// complex or infinite.
fn non_negative(a: &[C64], i: usize, what: &str) -> Option<ArgError> {
    let z = a[i];
    (!(is_real(z) && z.re >= 0.0)).then(|| ArgError::at(i, format!("{what} is a real number ≥ 0")))
}

/// A magnitude used as a divisor: not zero, not infinite.
fn nonzero(a: &[C64], i: usize, what: &str) -> Option<ArgError> {
    let z = a[i];
    if is_zero(z) {
        return Some(ArgError::at(i, format!("{what} cannot be 0")));
    }
    is_open(z).then(|| ArgError::at(i, format!("{what} cannot be infinite")))
}

fn frequency(a: &[C64], i: usize) -> Option<ArgError> {
    positive(a, i, "a frequency")
}

// ---- mathematics ----

pub fn log(a: &[C64], _: &Ctx) -> Option<ArgError> {
    is_zero(a[0]).then(|| ArgError::at(0, "the logarithm of 0 is −∞"))
}

pub fn atan(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (a[0].re == 0.0 && a[0].im.abs() == 1.0)
        .then(|| ArgError::at(0, "the inverse tangent is infinite at ±j (its branch points)"))
}

// ---- elements ----

pub fn inductor(a: &[C64], _: &Ctx) -> Option<ArgError> {
    non_negative(a, 0, "an inductance").or_else(|| non_negative(a, 1, "a frequency"))
}

pub fn capacitor(a: &[C64], _: &Ctx) -> Option<ArgError> {
    non_negative(a, 0, "a capacitance")
        .or_else(|| non_negative(a, 1, "a frequency"))
        .or_else(|| {
            (is_zero(a[0]) && is_zero(a[1])).then(|| {
                ArgError::whole("a capacitance of 0 at a frequency of 0: 1/(ωC) is 1/0, an open whichever way it is reached, but its sign is undefined")
            })
        })
}

pub fn l_from_x(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (!(is_real(a[0]) && a[0].re >= 0.0))
        .then(|| {
            ArgError::at(
                0,
                "an inductor's reactance is a real number ≥ 0 (ωL); a negative one is a capacitor's: use `c_from_x`",
            )
        })
        .or_else(|| frequency(a, 1))
}

pub fn c_from_x(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if !(is_real(a[0]) && a[0].re < 0.0) {
        return Some(ArgError::at(
            0,
            "a capacitor's reactance is a negative real number (−1/ωC); a positive one is an inductor's (use `l_from_x`), and 0 is a short, which no finite capacitance gives",
        ));
    }
    frequency(a, 1)
}

pub fn f_res(a: &[C64], _: &Ctx) -> Option<ArgError> {
    positive(a, 0, "an inductance").or_else(|| positive(a, 1, "a capacitance"))
}

pub fn q_rlc(a: &[C64], _: &Ctx) -> Option<ArgError> {
    positive(a, 0, "the resistance of a resonant circuit")
        .or_else(|| positive(a, 1, "an inductance"))
        .or_else(|| positive(a, 2, "a capacitance"))
}

pub fn q_of(a: &[C64], _: &Ctx) -> Option<ArgError> {
    let r = a[0].re;
    (!(r > 0.0 && r.is_finite() && a[0].im.is_finite()))
        .then(|| ArgError::at(0, "the quality factor |X|/R needs a finite impedance with R > 0"))
}

// ---- dividers, sources and equivalents ----

fn divider(za: C64, zb: C64) -> Option<ArgError> {
    if is_zero(za) && is_zero(zb) {
        return Some(ArgError::whole(
            "both impedances are shorts (0 Ω): the share of each is undefined",
        ));
    }
    if is_open(za) && is_open(zb) {
        return Some(ArgError::whole(
            "both impedances are open (∞): the share of each is undefined",
        ));
    }
    let s = za + zb;
    is_zero(s).then(|| {
        ArgError::whole(
            "the two impedances sum to 0 (series resonance of a lossless pair): the divider's current is infinite",
        )
    })
}

pub fn vdiv(a: &[C64], _: &Ctx) -> Option<ArgError> {
    divider(a[1], a[2])
}

pub fn norton(a: &[C64], _: &Ctx) -> Option<ArgError> {
    is_zero(a[1]).then(|| {
        ArgError::at(
            1,
            "an ideal voltage source (Zth = 0) has no Norton equivalent: its current would be infinite",
        )
    })
}

pub fn thevenin(a: &[C64], _: &Ctx) -> Option<ArgError> {
    is_open(a[1]).then(|| {
        ArgError::at(
            1,
            "an ideal current source (Zn = ∞) has no Thevenin equivalent: its voltage would be infinite",
        )
    })
}

pub fn bus_vth(a: &[C64], _: &Ctx) -> Option<ArgError> {
    let zp = a[3..].iter().fold(a[2], |acc, &z| ops::par(acc, z));
    divider(a[1], zp)
}

pub fn as_parallel(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if is_zero(a[0]) {
        return Some(ArgError::at(
            0,
            "a short (0 Ω) has no single parallel equivalent: R ∥ jX is 0 whenever R or X is 0",
        ));
    }
    (a[0].re.is_infinite() && a[0].im.is_infinite()).then(|| {
        ArgError::at(
            0,
            "an impedance infinite in both parts has no single parallel equivalent",
        )
    })
}

pub fn as_series(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (a[0].im != 0.0)
        .then(|| ArgError::at(0, "`R` is a real number: a complex value could be read two ways"))
        .or_else(|| {
            (a[1].im != 0.0).then(|| {
                ArgError::at(
                    1,
                    "`X` is a real number (the reactance, not jX): a complex value could be read two ways",
                )
            })
        })
}

// ---- power ----

pub fn s_vz(a: &[C64], _: &Ctx) -> Option<ArgError> {
    is_zero(a[1]).then(|| ArgError::at(1, "a short (Z = 0) across a voltage takes infinite power"))
}

pub fn s_iz(a: &[C64], _: &Ctx) -> Option<ArgError> {
    is_open(a[1]).then(|| ArgError::at(1, "an open (Z = ∞) cannot carry a current"))
}

pub fn pf_of(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if is_zero(a[0]) {
        return Some(ArgError::at(
            0,
            "no power flows (S = 0), so the power factor is undefined",
        ));
    }
    is_open(a[0]).then(|| ArgError::at(0, "an infinite power has no power factor"))
}

pub fn p_max(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (!(a[1].re > 0.0 && a[1].re.is_finite()))
        .then(|| ArgError::at(1, "the source resistance Re Zth must be positive and finite"))
}

pub fn s_of_p(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (!is_real(a[0]))
        .then(|| ArgError::at(0, "a real power is a finite real number"))
        .or_else(|| pf_nonzero(a, 1))
}

pub fn q_pfc(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (!is_real(a[0]))
        .then(|| ArgError::at(0, "a real power is a finite real number"))
        .or_else(|| pf_nonzero(a, 1))
        .or_else(|| pf_nonzero(a, 2))
}

pub fn cap_bank(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (!(is_real(a[0]) && a[0].re >= 0.0))
        .then(|| {
            ArgError::at(
                0,
                "a bank's rating is a finite real number ≥ 0 (var delivered); a negative rating would give a negative capacitance",
            )
        })
        .or_else(|| nonzero(a, 1, "a bank's voltage"))
        .or_else(|| frequency(a, 2))
}

pub fn i_line(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (!is_real(a[0]))
        .then(|| ArgError::at(0, "a real power is a finite real number"))
        .or_else(|| nonzero(a, 1, "a line voltage"))
        .or_else(|| pf_nonzero(a, 2))
}

pub fn p3(a: &[C64], _: &Ctx) -> Option<ArgError> {
    pf_arg(a, 2)
}

// ---- three phase ----

pub fn delta_to_wye(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if a.iter().filter(|z| is_open(**z)).count() >= 2 {
        return Some(ArgError::whole(
            "two or more delta branches are open: the wye equivalent depends on how they open, so it is undefined",
        ));
    }
    let s = a[0] + a[1] + a[2];
    is_zero(s).then(|| ArgError::whole("the three delta branches sum to 0 (a lossless resonant delta)"))
}

pub fn wye_to_delta(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (a.iter().filter(|z| is_zero(**z)).count() >= 2).then(|| {
        ArgError::whole(
            "two or more wye arms are shorts: the delta equivalent depends on how they short, so it is undefined",
        )
    })
}

// ---- per-unit ----

fn bases(a: &[C64], v: usize, s: usize) -> Option<ArgError> {
    nonzero(a, v, "a base voltage").or_else(|| nonzero(a, s, "a base power"))
}

pub fn base_pair(a: &[C64], _: &Ctx) -> Option<ArgError> {
    bases(a, 0, 1)
}

pub fn pu_convert(a: &[C64], _: &Ctx) -> Option<ArgError> {
    bases(a, 1, 2)
}

pub fn rebase(a: &[C64], _: &Ctx) -> Option<ArgError> {
    bases(a, 1, 2).or_else(|| bases(a, 3, 4))
}

// ---- matching ----

pub fn lmatch(a: &[C64], _: &Ctx) -> Option<ArgError> {
    positive(a, 0, "a source resistance")
        .or_else(|| positive(a, 1, "a load resistance"))
        .or_else(|| frequency(a, 2))
}

// ---- ratios ----

/// A reflection coefficient of a passive load: |Γ| ≤ 1.
pub fn gamma(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (ops::abs(a[0]) > 1.0).then(|| {
        ArgError::at(
            0,
            "|Γ| > 1: the load gives back more than it receives (an active load); VSWR and return loss are defined for |Γ| ≤ 1",
        )
    })
}

/// `vswr`: |Γ| > 1 as `gamma`; at |Γ| = 1 the value is infinite, and the
/// error says why rather than only that it is.
pub fn vswr(a: &[C64], c: &Ctx) -> Option<ArgError> {
    gamma(a, c).or_else(|| {
        (ops::abs(a[0]) == 1.0).then(|| {
            ArgError::at(
                0,
                "|Γ| = 1: the whole wave is reflected (an open, a short or a pure reactance), so the standing-wave ratio is infinite",
            )
        })
    })
}

/// `return_loss`: |Γ| > 1 as `gamma`; Γ = 0 gives +∞ dB, said so.
pub fn return_loss(a: &[C64], c: &Ctx) -> Option<ArgError> {
    gamma(a, c).or_else(|| {
        is_zero(a[0]).then(|| {
            ArgError::at(
                0,
                "Γ = 0: a matched load reflects nothing, so the return loss is infinite (+∞ dB)",
            )
        })
    })
}

pub fn db(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if is_zero(a[0]) {
        return Some(ArgError::at(0, "a ratio of 0 is −∞ dB"));
    }
    is_open(a[0]).then(|| ArgError::at(0, "an infinite ratio is +∞ dB"))
}

pub fn vdrop(a: &[C64], _: &Ctx) -> Option<ArgError> {
    is_zero(a[0]).then(|| ArgError::at(0, "the drop is a fraction of the sending voltage, which cannot be 0"))
}

pub fn vreg(a: &[C64], _: &Ctx) -> Option<ArgError> {
    is_zero(a[1]).then(|| {
        ArgError::at(
            1,
            "regulation is a fraction of the full-load voltage, which cannot be 0",
        )
    })
}

// ---- physical ranges: where a formula would give a finite misreading ----

use super::Range::{self, *};

/// Arguments whose physical range the formula alone does not keep (a
/// negative inductance would give a capacitive impedance, a zero base a
/// per-unit value of 0): outside the range the call's results are NaN
/// (`funcs::guard_ranges`) and the function's domain check says why.
/// Indices are those of the values a domain check sees. A value on the
/// range's edge where the function has a limit (0 H, an open ∞) is inside.
pub const RANGES: &[(&str, &[(usize, Range)])] = &[
    ("z_ind", &[(0, NonNeg), (1, NonNeg)]),
    ("x_ind", &[(0, NonNeg), (1, NonNeg)]),
    ("z_cap", &[(0, NonNeg), (1, NonNeg)]),
    ("x_cap", &[(0, NonNeg), (1, NonNeg)]),
    ("l_from_x", &[(0, NonNeg), (1, Positive)]),
    ("c_from_x", &[(0, Negative), (1, Positive)]),
    ("f_res", &[(0, Positive), (1, Positive)]),
    ("q_series", &[(0, Positive), (1, Positive), (2, Positive)]),
    ("q_parallel", &[(0, Positive), (1, Positive), (2, Positive)]),
    ("q_of", &[(0, RePositive)]),
    ("p_max", &[(1, RePositive)]),
    ("cap_delta", &[(0, NonNeg), (1, NonZero), (2, Positive)]),
    ("cap_wye", &[(0, NonNeg), (1, NonZero), (2, Positive)]),
    ("cap_1ph", &[(0, NonNeg), (1, NonZero), (2, Positive)]),
    ("z_base", &[(0, NonZero), (1, NonZero)]),
    ("i_base", &[(0, NonZero), (1, NonZero)]),
    ("pu_to_ohm", &[(1, NonZero), (2, NonZero)]),
    ("ohm_to_pu", &[(1, NonZero), (2, NonZero)]),
    ("rebase", &[(1, NonZero), (2, NonZero), (3, NonZero), (4, NonZero)]),
    (
        "line_rlgc",
        &[(0, NonNeg), (1, NonNeg), (2, NonNeg), (3, NonNeg), (4, NonNeg)],
    ),
    ("return_loss", &[(0, UnitDisc)]),
    ("sc_peak", &[(2, Positive)]),
    ("refl", &[(1, RePositive)]),
    ("z_refer", &[(1, NonZero), (2, NonZero)]),
];

/// `f` with its ranges from `RANGES`.
pub fn with_ranges(f: Builtin) -> Builtin {
    match RANGES.iter().find(|(n, _)| *n == f.name) {
        Some(&(_, ranges)) => Builtin { ranges, ..f },
        None => f,
    }
}

// ---- the table: each function's published source, and its domain ----

use super::{Builtin, DomainFn};

const COMPLEX: &str = "DLMF §1.9 (complex numbers: parts, modulus, phase, conjugate), from memory";
const ELEMENT: &str =
    "IEC 60050-131 (circuit theory: impedance and reactance of an inductor and a capacitor), from memory";
const QUALITY: &str = "IEC 60050-131 (circuit theory: quality factor), from memory";
const THEVENIN: &str = "Thévenin's and Norton's theorems (IEC 60050-131), from memory";
const DIVIDER: &str = "Kirchhoff's laws: voltage and current division (IEC 60050-131), from memory";
const POWER: &str = "IEEE Std 1459-2010 (power definitions, sinusoidal conditions), from memory";
const THREE: &str = "IEEE Std 1459-2010 (balanced three-phase systems), from memory";
const PFC: &str = "IEEE Std 141-1993 §8 (power-factor correction), from memory";
const BANK: &str = "IEEE Std 18-2012 (shunt power capacitors: Q = ωCV²), from memory";
const PER_UNIT: &str = "IEEE Std 399-1997 (the per-unit system), from memory";
const SEQ: &str = "Fortescue, symmetrical co-ordinates (AIEE Trans., 1918), from memory";
const KENNELLY: &str = "Kennelly, delta–star equivalence (Electrical World, 1899), from memory";
const LMATCH: &str = "L-network design equations, Q = √(Rhi/Rlo − 1) (RF design handbooks, from memory)";

/// (name, source, domain) for every built-in function.
pub const TABLE: &[(&str, &str, Option<DomainFn>)] = &[
    ("re", COMPLEX, None),
    ("im", COMPLEX, None),
    ("abs", COMPLEX, None),
    (
        "arg",
        "DLMF §1.9 and §4.2 (principal argument, −π < arg ≤ π), from memory",
        None,
    ),
    ("conj", COMPLEX, None),
    ("parts", COMPLEX, None),
    ("sqrt", "DLMF §4.2(iv) (principal square root), from memory", None),
    ("exp", "DLMF §4.2(iii) (exponential function), from memory", None),
    ("ln", "DLMF §4.2(i) (principal logarithm), from memory", Some(log)),
    (
        "log10",
        "DLMF §4.2(ii) (logarithm to a general base), from memory",
        Some(log),
    ),
    ("sin", "DLMF §4.14 (trigonometric functions), from memory", None),
    ("cos", "DLMF §4.14 (trigonometric functions), from memory", None),
    ("tan", "DLMF §4.14 (trigonometric functions), from memory", None),
    (
        "asin",
        "DLMF §4.23 (inverse trigonometric functions, principal values), from memory",
        None,
    ),
    (
        "acos",
        "DLMF §4.23 (inverse trigonometric functions, principal values), from memory",
        None,
    ),
    (
        "atan",
        "DLMF §4.23 (inverse trigonometric functions, principal values), from memory",
        Some(atan),
    ),
    ("atan2", "ISO/IEC 9899 §7.12.4.4 (atan2), from memory", None),
    ("min", "common practice (ordered by real part)", None),
    ("max", "common practice (ordered by real part)", None),
    ("z_ind", ELEMENT, Some(inductor)),
    ("z_cap", ELEMENT, Some(capacitor)),
    ("x_ind", ELEMENT, Some(inductor)),
    ("x_cap", ELEMENT, Some(capacitor)),
    ("l_from_x", ELEMENT, Some(l_from_x)),
    ("c_from_x", ELEMENT, Some(c_from_x)),
    (
        "f_res",
        "IEC 60050-131 (circuit theory: resonance frequency), from memory",
        Some(f_res),
    ),
    ("q_series", QUALITY, Some(q_rlc)),
    ("q_parallel", QUALITY, Some(q_rlc)),
    ("q_of", QUALITY, Some(q_of)),
    ("vdiv", DIVIDER, Some(vdiv)),
    ("idiv", DIVIDER, Some(vdiv)),
    ("norton_i", THEVENIN, Some(norton)),
    ("thevenin_v", THEVENIN, Some(thevenin)),
    ("bus_zth", THEVENIN, None),
    ("bus_vth", THEVENIN, Some(bus_vth)),
    (
        "as_parallel",
        "series–parallel equivalence of an impedance (IEC 60050-131), from memory",
        Some(as_parallel),
    ),
    (
        "as_series",
        "series–parallel equivalence of an impedance (IEC 60050-131), from memory",
        Some(as_series),
    ),
    ("s_vi", POWER, None),
    ("s_vz", POWER, Some(s_vz)),
    ("s_iz", POWER, Some(s_iz)),
    ("pf", POWER, Some(pf_of)),
    ("pf_angle", POWER, Some(pf_of)),
    ("s_parts", POWER, Some(pf_of)),
    (
        "best_load",
        "maximum power transfer theorem (conjugate match), from memory",
        None,
    ),
    (
        "p_max",
        "maximum power transfer theorem (conjugate match), from memory",
        Some(p_max),
    ),
    ("s_of_p", PFC, Some(s_of_p)),
    ("q_pfc", PFC, Some(q_pfc)),
    ("cap_delta", BANK, Some(cap_bank)),
    ("cap_wye", BANK, Some(cap_bank)),
    ("cap_1ph", BANK, Some(cap_bank)),
    ("i_line", THREE, Some(i_line)),
    ("ll_to_ln", THREE, None),
    ("ln_to_ll", THREE, None),
    ("s3", THREE, None),
    ("p3", THREE, Some(p3)),
    ("delta_to_wye", KENNELLY, Some(delta_to_wye)),
    ("wye_to_delta", KENNELLY, Some(wye_to_delta)),
    ("to_seq", SEQ, None),
    ("from_seq", SEQ, None),
    ("rot120", SEQ, None),
    ("z_base", PER_UNIT, Some(base_pair)),
    ("i_base", PER_UNIT, Some(base_pair)),
    ("pu_to_ohm", PER_UNIT, Some(pu_convert)),
    ("ohm_to_pu", PER_UNIT, Some(pu_convert)),
    ("rebase", PER_UNIT, Some(rebase)),
    ("lmatch_lp", LMATCH, Some(lmatch)),
    ("lmatch_hp", LMATCH, Some(lmatch)),
    // lmatch_z names its own source and domain (matching.rs)
    ("lmatch_z", LMATCH, None),
    (
        "db_v",
        "IEC 60027-3 (logarithmic quantities: the decibel), from memory",
        Some(db),
    ),
    (
        "db_p",
        "IEC 60027-3 (logarithmic quantities: the decibel), from memory",
        Some(db),
    ),
    (
        "vdrop",
        "IEEE Std 141-1993 ch. 3 (voltage drop), from memory",
        Some(vdrop),
    ),
    ("vreg", "IEEE Std 100 (voltage regulation), from memory", Some(vreg)),
];

/// A family's functions with their sources and domains from `TABLE`. A
/// function that names its own (`with_source`, `with_domain`) keeps it;
/// a function in neither place is caught by the test
/// `every_function_names_its_source`.
pub fn annotate(fs: Vec<Builtin>) -> Vec<Builtin> {
    fs.into_iter()
        .map(|f| match TABLE.iter().find(|(n, _, _)| *n == f.name) {
            Some(&(_, source, domain)) => {
                let f = if f.source.is_empty() { f.with_source(source) } else { f };
                match (f.domain, domain) {
                    (None, Some(d)) => f.with_domain(d),
                    _ => f,
                }
            }
            None => f,
        })
        .collect()
}
