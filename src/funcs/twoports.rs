//! Two-ports by their transmission (ABCD) parameters: the elements
//! (series, shunt, line, ideal transformer), cascading, the sending end
//! from the receiving end, and the input impedance with a load.
//!
//! A two-port is a record with fields A, B, C, D, defined by
//! V1 = A·V2 + B·I2, I1 = C·V2 + D·I2, with port 1 the sending (source)
//! side, I1 flowing in at port 1 and I2 flowing out at port 2. A and D are
//! plain numbers, B an impedance, C an admittance (or all per-unit).
//! Functions take a two-port as a record argument (`cascade(T1, T2)`,
//! `abcd_send(T, Vr, Ir)`), see `RecordParam`; any record with those
//! fields will do (`line_pi` gives them beside Z and Y2).
//!
//! Reciprocal two-ports have A·D − B·C = 1; the ideal transformer with a
//! complex (phase-shifting) ratio n is not reciprocal: D = 1/n*.

use super::lines::{is_inf, is_nan, want_dim, NAN};
use super::*;
use crate::engine::ops::{self, Op};

const ONE: C64 = C64::new(1.0, 0.0);

/// (B, C) quantities for a two-port whose impedances are like `z`.
fn bc_of(z: Quantity) -> (Quantity, Quantity) {
    if z.dim.is_none() {
        (PU, PU)
    } else {
        (Quantity::of(Dim::IMPEDANCE), Quantity::of(Dim::ADMITTANCE))
    }
}

fn two_port_shape(z: Quantity) -> Shape {
    let (b, c) = bc_of(z);
    Shape::Record(vec![("A", Quantity::PLAIN), ("B", b), ("C", c), ("D", Quantity::PLAIN)])
}

/// The two-port given as values `at..at + 4` is well formed: A, D plain,
/// B an impedance and C an admittance, both SI or both per-unit. Returns
/// the B quantity (Ω or pu).
fn want_two_port(qs: &[Quantity], at: usize, param: &str) -> Result<Quantity, ArgError> {
    let (a, b, c, d) = (qs[at], qs[at + 1], qs[at + 2], qs[at + 3]);
    let bad = |i: usize, what: &str, q: Quantity| {
        ArgError::at(
            at + i,
            format!("`{param}` is not a two-port: its {what}, but it is {}", q.describe()),
        )
    };
    if !a.dim.is_none() || a.kind == Kind::Angle {
        return Err(bad(0, "A must be a plain number", a));
    }
    if !d.dim.is_none() || d.kind == Kind::Angle {
        return Err(bad(3, "D must be a plain number", d));
    }
    if !is_impedance(b) {
        return Err(bad(1, "B must be an impedance (Ω or pu)", b));
    }
    let c_ok = if b.dim.is_none() {
        c.dim.is_none() && c.kind == Kind::PerUnit
    } else {
        c.dim == Dim::ADMITTANCE
    };
    if !c_ok {
        return Err(bad(
            2,
            if b.dim.is_none() {
                "C must be per-unit like B"
            } else {
                "C must be an admittance (S) like B is in Ω"
            },
            c,
        ));
    }
    Ok(b)
}

// ---- elements ----

fn ty_series(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_impedance(qs, 0, "Z")?;
    Ok(two_port_shape(qs[0]))
}

fn l_series(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let one = e.konst(1.0, 0.0);
    let zero = e.konst(0.0, 0.0);
    vec![one, a[0], zero, one]
}

fn d_series(a: &[C64], _: &Ctx) -> Option<ArgError> {
    is_inf(a[0]).then(|| {
        ArgError::at(
            0,
            "an open series element (Z = ∞) lets no current through: it has no ABCD parameters",
        )
    })
}

fn ty_shunt(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let x = qs[0];
    if is_impedance(x) {
        return Ok(two_port_shape(x));
    }
    if x.dim == Dim::ADMITTANCE {
        return Ok(two_port_shape(Quantity::of(Dim::IMPEDANCE)));
    }
    Err(ArgError::at(
        0,
        format!(
            "`Z` must be the shunt element's impedance (Ω or pu) or admittance (S), but this is {}",
            x.describe()
        ),
    ))
}

/// C = 1/Z, or Y itself when the argument is an admittance.
fn l_shunt(e: &mut Emitter, a: &[Operand], q: &[Quantity]) -> Vec<Operand> {
    let one = e.konst(1.0, 0.0);
    let zero = e.konst(0.0, 0.0);
    let c = if q[0].dim == Dim::ADMITTANCE {
        a[0]
    } else {
        e.un(Op::Recip, a[0])
    };
    vec![one, zero, c, one]
}

fn d_shunt(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (a[0] == C64::new(0.0, 0.0)).then(|| {
        ArgError::at(
            0,
            "a shunt short (Z = 0, or Y = ∞) leaves no voltage at the port: it has no ABCD parameters",
        )
    })
}

fn ty_line(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_impedance(qs, 0, "Zc")?;
    want_dim(
        qs,
        1,
        super::lines::per_m(Dim::NONE),
        "gamma",
        "a propagation constant (1/m), as from `line_rlgc(…).gamma`",
    )?;
    want_dim(qs, 2, Dim::LENGTH, "len", "a length (m, km)")?;
    Ok(two_port_shape(qs[0]))
}

fn s_line(a: &[C64], out: &mut [C64], _: &Ctx) {
    let (zc, g) = (a[0], a[1]);
    if d_line(a, &Ctx::default()).is_some() || is_nan(g) || is_nan(zc) {
        out.fill(NAN);
        return;
    }
    let x = g * a[2].re;
    let (ch, sh) = (x.cosh(), x.sinh());
    out[0] = ch;
    out[1] = zc * sh;
    out[2] = ops::div(sh, zc);
    out[3] = ch;
}

fn d_line(a: &[C64], _: &Ctx) -> Option<ArgError> {
    if is_inf(a[0]) || a[0] == C64::new(0.0, 0.0) {
        return Some(ArgError::at(
            0,
            "the characteristic impedance must be finite and non-zero",
        ));
    }
    if a[1].re < 0.0 || is_inf(a[1]) {
        return Some(ArgError::at(
            1,
            "Re γ < 0: the line would amplify (a passive line has an attenuation of zero or more)",
        ));
    }
    (!(a[2].im == 0.0 && a[2].re >= 0.0 && a[2].re.is_finite()))
        .then(|| ArgError::at(2, "the length must be real, finite and not negative"))
}

fn ty_xfmr(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_plain(qs, 0, "n", "the turns ratio N1/N2, port 1 to port 2")?;
    Ok(two_port_shape(Quantity::of(Dim::IMPEDANCE)))
}

fn s_xfmr(a: &[C64], out: &mut [C64], _: &Ctx) {
    let n = a[0];
    if d_xfmr(a, &Ctx::default()).is_some() || is_nan(n) {
        out.fill(NAN);
        return;
    }
    out[0] = n;
    out[1] = C64::new(0.0, 0.0);
    out[2] = C64::new(0.0, 0.0);
    out[3] = ops::div(ONE, n.conj());
}

fn d_xfmr(a: &[C64], _: &Ctx) -> Option<ArgError> {
    (a[0] == C64::new(0.0, 0.0) || is_inf(a[0])).then(|| ArgError::at(0, "the turns ratio must be finite and non-zero"))
}

// ---- cascade, sending end, input impedance ----

fn ty_cascade(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let n = qs.len() / 4;
    let first = want_two_port(qs, 0, "T1")?;
    for k in 1..n {
        let name = format!("T{}", k + 1);
        let b = want_two_port(qs, 4 * k, &name)?;
        if b.dim != first.dim {
            return Err(ArgError::at(
                4 * k + 1,
                format!(
                    "`{name}` is in {}, `T1` in {}: cascade two-ports all in SI units or all per-unit",
                    if b.dim.is_none() { "per-unit" } else { "Ω and S" },
                    if first.dim.is_none() { "per-unit" } else { "Ω and S" }
                ),
            ));
        }
    }
    Ok(two_port_shape(first))
}

/// The matrix product, source side first: T = T1·T2·…
fn l_cascade(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let mut t = [a[0], a[1], a[2], a[3]];
    for m in a[4..].chunks(4) {
        let mut dot = |x: Operand, y: Operand, u: Operand, v: Operand| {
            let p = e.bin(Op::Mul, x, y);
            let q = e.bin(Op::Mul, u, v);
            e.bin(Op::Add, p, q)
        };
        let na = dot(t[0], m[0], t[1], m[2]);
        let nb = dot(t[0], m[1], t[1], m[3]);
        let nc = dot(t[2], m[0], t[3], m[2]);
        let nd = dot(t[2], m[1], t[3], m[3]);
        t = [na, nb, nc, nd];
    }
    t.to_vec()
}

fn ty_send(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let b = want_two_port(qs, 0, "T")?;
    let (vr, ir) = (qs[4], qs[5]);
    if b.dim.is_none() {
        if !(vr.dim.is_none() && vr.kind == Kind::PerUnit) {
            return Err(ArgError::at(
                4,
                format!(
                    "`T` is per-unit, so `Vr` must be per-unit too, but this is {}",
                    vr.describe()
                ),
            ));
        }
        if !(ir.dim.is_none() && ir.kind == Kind::PerUnit) {
            return Err(ArgError::at(
                5,
                format!(
                    "`T` is per-unit, so `Ir` must be per-unit too, but this is {}",
                    ir.describe()
                ),
            ));
        }
    } else {
        want(qs, 4, Dim::VOLTAGE, "Vr")?;
        want(qs, 5, Dim::CURRENT, "Ir")?;
    }
    Ok(Shape::Record(vec![("V", vr), ("I", ir)]))
}

/// Vs = A·Vr + B·Ir, Is = C·Vr + D·Ir.
fn l_send(e: &mut Emitter, a: &[Operand], _: &[Quantity]) -> Vec<Operand> {
    let (vr, ir) = (a[4], a[5]);
    let av = e.bin(Op::Mul, a[0], vr);
    let bi = e.bin(Op::Mul, a[1], ir);
    let cv = e.bin(Op::Mul, a[2], vr);
    let di = e.bin(Op::Mul, a[3], ir);
    vec![e.bin(Op::Add, av, bi), e.bin(Op::Add, cv, di)]
}

fn ty_zin(qs: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    let b = want_two_port(qs, 0, "T")?;
    want_impedance(qs, 4, "ZL")?;
    if qs[4].dim != b.dim {
        return Err(ArgError::at(
            4,
            "`ZL` and the two-port must both be in SI units or both per-unit",
        ));
    }
    Ok(Shape::Scalar(b))
}

/// Zin = (A·ZL + B)/(C·ZL + D); A/C for an open load.
pub fn zin(t: [C64; 4], zl: C64) -> C64 {
    let [a, b, c, d] = t;
    if t.iter().any(|x| is_nan(*x) || is_inf(*x)) || is_nan(zl) {
        return NAN;
    }
    if is_inf(zl) {
        return ops::div(a, c);
    }
    ops::div(a * zl + b, c * zl + d)
}

fn s_zin(a: &[C64], out: &mut [C64], _: &Ctx) {
    out[0] = zin([a[0], a[1], a[2], a[3]], a[4]);
}

fn d_two_port(a: &[C64], _: &Ctx) -> Option<ArgError> {
    a[..4].iter().position(|x| is_inf(*x)).map(|i| {
        ArgError::at(
            i,
            "the two-port has an infinite parameter (an open series element or a shunt short): it passes nothing",
        )
    })
}

pub fn funcs() -> Vec<Builtin> {
    const T: Param = p!("T", TWO_PORT);
    vec![
        lowered(
            "abcd_series",
            "two-port of a series element Z: A = 1, B = Z, C = 0, D = 1",
            &[p!("Z", "Ω|pu")],
            "two-port A, B (Ω), C (S), D",
            ty_series,
            l_series,
        )
        .with_domain(d_series)
        .with_source("ABCD (transmission) parameters: Pozar, Microwave Engineering, §4.4, table 4.1 (from memory)"),
        lowered(
            "abcd_shunt",
            "two-port of a shunt element, given as an impedance Z or an admittance Y: A = 1, B = 0, C = 1/Z, D = 1",
            &[p!("Z", "Ω|pu|S")],
            "two-port A, B (Ω), C (S), D",
            ty_shunt,
            l_shunt,
        )
        .with_domain(d_shunt)
        .with_source("ABCD (transmission) parameters: Pozar, Microwave Engineering, §4.4, table 4.1 (from memory)"),
        scalar_fn(
            "abcd_line",
            "two-port of a line (Zc, γ, length): A = D = cosh γℓ, B = Zc·sinh γℓ, C = sinh γℓ/Zc",
            &[p!("Zc", "Ω|pu"), p!("gamma", "1/m"), p!("len", "m")],
            "two-port A, B (Ω), C (S), D",
            ty_line,
            s_line,
        )
        .with_domain(d_line)
        .with_source("Pozar, Microwave Engineering, §4.4, table 4.1; Grainger & Stevenson, ch. 6 (from memory)"),
        scalar_fn(
            "abcd_xfmr",
            "two-port of an ideal transformer of turns ratio n = N1/N2 (V1 = n·V2): A = n, B = C = 0, D = 1/n*",
            &[p!("n", "1")],
            "two-port A, B (Ω), C (S), D",
            ty_xfmr,
            s_xfmr,
        )
        .with_domain(d_xfmr)
        .with_source(
            "ideal transformer V1 = n·V2, I1 = I2/n*: Pozar, Microwave Engineering, §4.4, table 4.1 (from memory)",
        ),
        Builtin {
            variadic: true,
            ..lowered(
                "cascade",
                "two-ports in cascade, source side first: the product T1·T2·…",
                &[p!("T1", TWO_PORT), p!("T2", TWO_PORT)],
                "two-port A, B (Ω), C (S), D",
                ty_cascade,
                l_cascade,
            )
        }
        .with_source("chain (ABCD) matrices multiply in cascade: Pozar, Microwave Engineering, §4.4 (from memory)"),
        lowered(
            "abcd_send",
            "sending-end voltage and current from the receiving end: V = A·Vr + B·Ir, I = C·Vr + D·Ir",
            &[T, p!("Vr", "V|pu"), p!("Ir", "A|pu")],
            "record V (V), I (A)",
            ty_send,
            l_send,
        )
        .with_source("Grainger & Stevenson, Power System Analysis, ch. 6, Vs = A·Vr + B·Ir (from memory)"),
        scalar_fn(
            "abcd_zin",
            "input impedance of a two-port ending in ZL: (A·ZL + B)/(C·ZL + D) (A/C open, B/D short)",
            &[T, p!("ZL", "Ω|pu")],
            "Ω|pu",
            ty_zin,
            s_zin,
        )
        .with_domain(d_two_port)
        .with_source("Pozar, Microwave Engineering, §4.4 (from memory)"),
    ]
}
