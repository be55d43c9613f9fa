//! Two-ports (ABCD parameters): the reciprocity law A·D − B·C = 1 as a
//! property over random cascades, and published relations — a cascade of
//! two line sections is the whole line, a cascade of many nominal-π
//! sections tends to the exact long line, an ideal transformer refers an
//! impedance by n², the two-port's input impedance agrees with the line
//! formula and the voltage divider, open and shorted loads give A/C and
//! B/D. The source is named beside each check. Exact values are checked
//! against mpmath in funcs_reference.rs.

use num_complex::Complex64 as C64;
use ohmsheet::diag::ErrorCode;
use proptest::prelude::*;

use crate::assert_close;
use crate::common::{engine, errors, value};

fn re(x: f64) -> C64 {
    C64::new(x, 0.0)
}

fn cfg() -> ProptestConfig {
    ProptestConfig {
        cases: std::env::var("PROPTEST_CASES")
            .ok()
            .and_then(|s| s.parse().ok())
            .unwrap_or(64),
        failure_persistence: None,
        ..ProptestConfig::default()
    }
}

/// A passive impedance, never zero (a shunt short has no ABCD
/// parameters): R ≥ 0, any X, magnitudes from 10 mΩ to 10 kΩ.
fn passive() -> impl Strategy<Value = (f64, f64)> {
    (-2.0f64..4.0, -90.0f64..90.0).prop_map(|(e, deg)| {
        let m = 10f64.powf(e);
        let t = deg.to_radians();
        (m * t.cos(), m * t.sin())
    })
}

proptest! {
    #![proptest_config(cfg())]

    // A network of passive (reciprocal) elements has A·D − B·C = 1
    // (reciprocity, Pozar, Microwave Engineering, §4.4 — from memory); the
    // determinant of a product is the product of determinants, so every
    // cascade of them keeps it. Each term's size sets the tolerance.
    #[test]
    //
    // The lines of T5 and T6 are drawn from overhead-line values (common
    // practice: r 0.01–1 Ω/km, x 0.1–1 Ω/km, b 1–10 µS/km at 50/60 Hz; 1
    // Ω/km is 1 mΩ/m and 1 µS/km is 1 nS/m) up to 1000 km, so |γℓ| ≤ 3.8
    // and A·D, B·C stay under a few hundred: the check then sees an error
    // of 1e-10. Lines far outside that (|γℓ| = 50 makes A·D ≈ 1e43) lose
    // A·D − B·C = 1 to cancellation in any double-precision evaluation,
    // and a tolerance scaled to them could not fail.
    fn reciprocal_two_ports_have_unit_determinant(
        z1 in passive(), z2 in passive(), zc in passive(),
        alpha in 0.0f64..0.05, beta in 0.01f64..3.0, len in 0.0f64..5.0,
        n in 0.1f64..20.0,
        r in 0.01f64..1.0, x in 0.1f64..1.0, b in 1.0f64..10.0, km in 0.0f64..1000.0,
    ) {
        let zc = (zc.0 + 1.0, zc.1 * 0.1);
        let src = format!(
            "T1 = abcd_series(({} + j{}) Ω)\nT2 = abcd_shunt(({} + j{}) Ω)\n\
             T3 = abcd_line(({} + j{}) Ω, ({alpha} + j{beta}) / 1 metre, {len} metre)\n\
             T4 = abcd_xfmr({n})\nT5 = line_pi_exact(({r} + j{x}) mΩ/m, j{b} nS/m, {km} km)\n\
             T6 = line_pi(({r} + j{x}) mΩ/m, j{b} nS/m, {km} km)\n\
             T = cascade(T1, T2, T3, T4, T5, T6)\n\
             det = T.A*T.D - T.B*T.C\nscale = abs(T.A*T.D) + abs(T.B*T.C)",
            z1.0, z1.1, z2.0, z2.1, zc.0, zc.1,
        );
        let e = engine(&src);
        for t in ["T1", "T2", "T3", "T4", "T5", "T6"] {
            let ad = value(&e, &format!("{t}.A")) * value(&e, &format!("{t}.D"));
            let bc = value(&e, &format!("{t}.B")) * value(&e, &format!("{t}.C"));
            let d = ad - bc;
            // a long lossy line has A·D and B·C far above 1: the
            // difference keeps the rounding of the terms
            let scale = (ad.norm() + bc.norm()).max(1.0);
            prop_assert!((d - 1.0).norm() <= 1e-12 * scale, "{t}: A·D − B·C = {d}\n{src}");
        }
        let det = value(&e, "det");
        let scale = value(&e, "scale").re.max(1.0);
        prop_assert!((det - 1.0).norm() <= 1e-12 * scale, "det {det}, scale {scale}\n{src}");
    }
}

// Hyperbolic addition (any line text: Pozar §4.4 / Grainger & Stevenson
// ch. 6, from memory): two sections of the same line in cascade are the
// whole line.
#[test]
fn two_sections_of_a_line_are_the_whole_line() {
    let e = engine(
        "g = (0.004 + j0.9) / 1 metre\nZc = (72 - j3) Ω\n\
         T = cascade(abcd_line(Zc, g, 1.3 metre), abcd_line(Zc, g, 2.2 metre))\n\
         W = abcd_line(Zc, g, 3.5 metre)",
    );
    for f in ["A", "B", "C", "D"] {
        assert_close!(value(&e, &format!("T.{f}")), value(&e, &format!("W.{f}")), 1e-12);
    }
}

// Common practice: a long line modelled as many short nominal-π sections
// in cascade tends to the exact long-line equivalent (the error falls as
// 1/N²).
#[test]
fn many_nominal_sections_tend_to_the_exact_line() {
    let z = "(0.03 + j0.35) Ω/km";
    let y = "j3.3 µS/km";
    let s = format!("s = line_pi({z}, {y}, 100 km)");
    let e = engine(&format!(
        "{s}\nT4 = cascade(s, s, s, s)\nX = line_pi_exact({z}, {y}, 400 km)\nN = line_pi({z}, {y}, 400 km)"
    ));
    let err4 = (value(&e, "T4.B") - value(&e, "X.B")).norm() / value(&e, "X.B").norm();
    let err1 = (value(&e, "N.B") - value(&e, "X.B")).norm() / value(&e, "X.B").norm();
    assert!(err4 < err1 / 10.0, "4 sections {err4}, one {err1}");
    assert_close!(value(&e, "T4.A"), value(&e, "X.A"), 1e-3);
}

// An ideal transformer of ratio n refers a load by n² (any circuits text,
// IEC 60050-131 ideal transformer); cascaded with a series element and a
// shunt it gives the divider formulas.
#[test]
fn transformer_refers_impedance_and_dividers_agree() {
    let e = engine(
        "ZL = (8 + j3) Ω\nzx = abcd_zin(abcd_xfmr(10), ZL)\n\
         Zs = (0.5 + j2) Ω\nZp = (30 + j10) Ω\n\
         T = cascade(abcd_series(Zs), abcd_shunt(Zp))\nzin = abcd_zin(T, ZL)\n\
         by_hand = Zs + (Zp || ZL)\n\
         end = abcd_send(T, 230 V, 230 V / ZL)\ndiv = vdiv(end.V, Zs, Zp || ZL)",
    );
    assert_close!(value(&e, "zx"), C64::new(800.0, 300.0), 1e-12);
    assert_close!(value(&e, "zin"), value(&e, "by_hand"), 1e-12);
    // the sending voltage, divided back down, is the receiving voltage
    assert_close!(value(&e, "div"), re(230.0), 1e-12);
}

// Open and shorted loads (the definition of A, B, C, D as open-circuit
// and short-circuit ratios, Pozar §4.4 — from memory): Zin = A/C open,
// B/D shorted; the line two-port gives the lossy-line formula.
#[test]
fn open_and_short_loads_and_the_line_formula() {
    let e = engine(
        "g = (0.01 + j1.1) / 1 metre\nZc = (60 - j2) Ω\nT = abcd_line(Zc, g, 0.8 metre)\n\
         open = abcd_zin(T, 1 Ω / 0)\nshort = abcd_zin(T, 0 Ω)\n\
         open_l = zin_line(1 Ω / 0, Zc, g, 0.8 metre)\nshort_l = zin_line(0 Ω, Zc, g, 0.8 metre)\n\
         any = abcd_zin(T, (20 + j45) Ω)\nany_l = zin_line((20 + j45) Ω, Zc, g, 0.8 metre)\n\
         ident = abcd_zin(abcd_series(0 Ω), (20 + j45) Ω)\nopen_shunt = abcd_zin(abcd_shunt(1 Ω / 0), (20 + j45) Ω)",
    );
    assert_close!(value(&e, "open"), value(&e, "open_l"), 1e-12);
    assert_close!(value(&e, "short"), value(&e, "short_l"), 1e-12);
    assert_close!(value(&e, "any"), value(&e, "any_l"), 1e-12);
    // a short in series and an open in shunt are no element at all
    assert_eq!(value(&e, "ident"), C64::new(20.0, 45.0));
    assert_eq!(value(&e, "open_shunt"), C64::new(20.0, 45.0));
}

// A two-port is a record argument: a single value, or a record without
// the fields, is refused at the argument with what to do.
#[test]
fn a_two_port_argument_must_be_a_two_port() {
    for (src, needle) in [
        (
            "T = cascade(abcd_series(1 Ω), 3 Ω)",
            "`T2` must be a two-port (a record with fields A, B, C, D), but this is an impedance",
        ),
        (
            "c = line_rlgc(1 Ω/m, 1 µH/m, 0 S/m, 1 nF/m, 1 MHz)\nz = abcd_zin(c, 3 Ω)",
            "this record has no field `A`",
        ),
        (
            "T = cascade(abcd_series(1 Ω), abcd_series(1 pu))",
            "all in SI units or all per-unit",
        ),
    ] {
        let d = errors(src);
        assert_eq!(d[0].code, ErrorCode::FunctionArgs, "{src}");
        assert!(d[0].message.contains(needle), "{src}: {}", d[0].message);
    }
    // a two-port's fields are numbers like any other: T.A reads, T alone
    // is not a value
    let d = errors("T = abcd_series(1 Ω)\nx = T + 1");
    assert_eq!(d[0].code, ErrorCode::RecordAsValue);
}

// Per-unit two-ports: B and C per-unit, the sending end in per-unit.
#[test]
fn per_unit_two_ports() {
    let e = engine("T = cascade(abcd_series(j0.1 pu), abcd_shunt(-j20 pu))\ns = abcd_send(T, 1 pu, 0.8 pu)");
    let v = value(&e, "s.V");
    // V = A·Vr + B·Ir with A = 1 + Z/Zp = 1 + j0.1/(−j20) = 0.995, B = j0.1
    assert_close!(v, C64::new(0.995, 0.0) + C64::new(0.0, 0.1) * 0.8, 1e-12);
    let m = &e.model;
    let Some(ohmsheet::funcs::Shape::Record(f)) = m.cell("s").unwrap().shape.clone() else {
        panic!("a record")
    };
    assert_eq!(f[0].1.kind, ohmsheet::units::Kind::PerUnit);
}

// A calculation report puts values in place of names; a two-port passed
// whole has no single value, so it keeps its name there.
#[test]
fn a_report_keeps_a_two_port_argument_by_name() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("tp.ohm");
    let out = dir.path().join("tp.md");
    std::fs::write(
        &sheet,
        "S1 = abcd_series((1 + j2) Ω)\nP1 = abcd_shunt(40 Ω)\nT = cascade(S1, P1)\nz = abcd_zin(T, 10 Ω)\ncheck z ~= (1 + j2) Ω + (40 Ω || 10 Ω) +- 1e-9%\n",
    )
    .unwrap();
    crate::common::ohmsheet()
        .args(["report", sheet.to_str().unwrap(), "-o", out.to_str().unwrap()])
        .assert()
        .success();
    let md = std::fs::read_to_string(&out).unwrap();
    assert!(md.contains("cascade(S1, P1)"), "{md}");
    assert!(md.contains("abcd_zin(T, 10 Ω)"), "{md}");
}

// A NaN is explained at the call whose domain was left, naming the field
// of a two-port passed whole.
#[test]
fn a_nan_is_explained_through_a_two_port_argument() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("open.ohm");
    std::fs::write(&path, "T = abcd_series(1 Ω / 0)\nz = abcd_zin(T, 5 Ω)\n").unwrap();
    crate::common::ohmsheet()
        .arg("run")
        .arg(&path)
        .assert()
        .code(2)
        .stderr(predicates::str::contains("open.ohm:2:14"))
        .stderr(predicates::str::contains("argument `T.B` = ∞ Ω is out of range"))
        .stderr(predicates::str::contains("it passes nothing"));
}
