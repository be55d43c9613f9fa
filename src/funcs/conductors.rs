//! Conductor sizes: the American Wire Gauge by its defining formula
//! (ASTM B258): a solid round wire of gauge n has the diameter
//! d = 0.005 in · 92^((36 − n)/39), so 0000 (n = −3) is 0.46 in and 36 is
//! 0.005 in. The sizes 0000, 000, 00 and 0 are n = −3, −2, −1 and 0;
//! `awg0(k)` names them the trade's way, k/0 (`awg0(4)` is 4/0 = 0000).
//! The area is π·d²/4; in circular mils it is (d in mils)².

use super::*;

const INCH: f64 = 0.0254;

fn ty_awg(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_plain(q, 0, "n", "a gauge number")?;
    Ok(wire())
}

fn ty_awg0(q: &[Quantity], _: &Ctx) -> Result<Shape, ArgError> {
    want_plain(q, 0, "k", "the k of a k/0 size, 1 to 4")?;
    Ok(wire())
}

fn wire() -> Shape {
    Shape::Record(vec![("d", Quantity::of(Dim::LENGTH)), ("A", Quantity::of(Dim::AREA))])
}

fn whole(x: C64) -> Option<f64> {
    (x.im == 0.0 && x.re.fract() == 0.0).then_some(x.re)
}

/// Diameter (m) and area (m²) of gauge n.
fn gauge(n: f64) -> (f64, f64) {
    let d = 0.005 * INCH * 92f64.powf((36.0 - n) / 39.0);
    (d, std::f64::consts::FRAC_PI_4 * d * d)
}

fn put(out: &mut [C64], n: Option<f64>) {
    match n {
        Some(n) if (-3.0..=56.0).contains(&n) => {
            let (d, a) = gauge(n);
            out[0] = C64::new(d, 0.0);
            out[1] = C64::new(a, 0.0);
        }
        _ => {
            out[0] = C64::new(f64::NAN, f64::NAN);
            out[1] = C64::new(f64::NAN, f64::NAN);
        }
    }
}

fn s_awg(a: &[C64], out: &mut [C64], _: &Ctx) {
    put(out, whole(a[0]));
}

/// k/0 is gauge 1 − k (1/0 = 0, 4/0 = 0000 = −3).
fn s_awg0(a: &[C64], out: &mut [C64], _: &Ctx) {
    put(out, whole(a[0]).filter(|k| (1.0..=4.0).contains(k)).map(|k| 1.0 - k));
}

fn dom_awg(a: &[C64], _: &Ctx) -> Option<ArgError> {
    match whole(a[0]) {
        Some(n) if (-3.0..=56.0).contains(&n) => None,
        _ => Some(ArgError::at(
            0,
            "`n` must be a whole gauge number from 0 to 56, or −1, −2, −3 for 00, 000, 0000 (or use awg0)",
        )),
    }
}

fn dom_awg0(a: &[C64], _: &Ctx) -> Option<ArgError> {
    match whole(a[0]) {
        Some(k) if (1.0..=4.0).contains(&k) => None,
        _ => Some(ArgError::at(0, "`k` must be 1, 2, 3 or 4 (1/0 to 4/0)")),
    }
}

pub fn funcs() -> Vec<Builtin> {
    let src = "ASTM B258 (AWG): d = 0.005 in · 92^((36 − n)/39) (from memory)";
    vec![
        scalar_fn(
            "awg",
            "solid wire of AWG gauge n (0 to 56; −1, −2, −3 for 00, 000, 0000): fields d, A",
            &[p!("n", "1")],
            "record d (m), A (m²)",
            ty_awg,
            s_awg,
        )
        .with_domain(dom_awg)
        .with_source(src),
        scalar_fn(
            "awg0",
            "solid wire of AWG size k/0 (awg0(4) is 4/0 = 0000): fields d, A",
            &[p!("k", "1")],
            "record d (m), A (m²)",
            ty_awg0,
            s_awg0,
        )
        .with_domain(dom_awg0)
        .with_source(src),
    ]
}
