//! Lines and RF functions at their edges and against published relations:
//! open, shorted and matched loads, quarter- and half-wave lines, zero
//! length, the lossless limit of the lossy formulas, the Ferranti rise of
//! an open line, and their domain errors. The source is named beside each
//! check ("from memory" where recalled). Exact values for general
//! arguments are checked against mpmath in funcs_reference.rs.

use num_complex::Complex64 as C64;
use predicates::prelude::*;

use crate::assert_close;
use crate::common::{engine, eval_expr, ohmsheet, value};

fn re(x: f64) -> C64 {
    C64::new(x, 0.0)
}

fn ev(src: &str) -> C64 {
    eval_expr("", src)
}

fn is_inf(z: C64) -> bool {
    z.re.is_infinite() || z.im.is_infinite()
}

// IEEE Std 100 (reflection coefficient; from memory): an open load
// reflects everything in phase (Γ = 1), a short in antiphase (Γ = −1), a
// matched load nothing; VSWR is then ∞, ∞ and 1, return loss 0, 0 and ∞.
#[test]
fn open_short_and_matched_loads() {
    let e = engine(
        "open = refl(1 Ω / 0, 50 Ω)\nshort = refl(0 Ω, 50 Ω)\nmatched = refl(50 Ω, 50 Ω)\n\
         s_open = vswr(open)\ns_short = vswr(short)\ns_matched = vswr(matched)\n\
         rl_open = return_loss(open)\nrl_matched = return_loss(matched)",
    );
    assert_eq!(value(&e, "open"), re(1.0));
    assert_eq!(value(&e, "short"), re(-1.0));
    assert_eq!(value(&e, "matched"), re(0.0));
    assert!(is_inf(value(&e, "s_open")));
    assert!(is_inf(value(&e, "s_short")));
    assert_eq!(value(&e, "s_matched"), re(1.0));
    assert_eq!(value(&e, "rl_open"), re(0.0));
    assert!(value(&e, "rl_matched").re.is_infinite() && value(&e, "rl_matched").re > 0.0);
}

// The mismatch tables of RF handbooks (from memory): VSWR 2.0 ↔ |Γ| = 1/3
// ↔ return loss 9.54 dB; VSWR 1.5 ↔ |Γ| = 0.2 ↔ 13.98 dB. A 100 Ω load on
// 50 Ω has VSWR 2 (common practice: VSWR = RL/Z0 for a resistive load
// above Z0).
#[test]
fn handbook_mismatch_table() {
    assert_close!(ev("vswr(refl(100 Ω, 50 Ω))"), re(2.0), 1e-12);
    assert_close!(ev("vswr(refl(25 Ω, 50 Ω))"), re(2.0), 1e-12);
    assert_close!(ev("return_loss(refl(100 Ω, 50 Ω))"), re(9.54), 0.0005);
    assert_close!(ev("return_loss(0.2)"), re(13.98), 0.0005);
    assert_close!(ev("vswr(0.2)"), re(1.5), 1e-12);
}

// IEC 60027-3: 3 dB is a power ratio of about 2, −6 dB a voltage ratio of
// about ½; from_db_* undo db_p / db_v.
#[test]
fn decibels_back_to_ratios() {
    assert_close!(ev("from_db_p(3)"), re(1.995), 0.0003);
    assert_close!(ev("from_db_v(-6)"), re(0.5012), 0.0001);
    assert_close!(ev("from_db_p(db_p(7.3))"), re(7.3), 1e-12);
    assert_close!(ev("from_db_v(db_v(0.042))"), re(0.042), 1e-12);
    assert_close!(ev("from_db_p(0)"), re(1.0), 0.0);
}

// Pozar, Microwave Engineering, §2.4–2.5 (from memory): a quarter-wave line
// transforms ZL into Z0²/ZL, so a short becomes an open and an open a
// short; a half-wave line repeats the load; a matched line shows Z0 at
// any length; a line of zero length shows the load itself.
#[test]
fn quarter_and_half_wave_lines() {
    assert_close!(ev("zin_lossless(100 Ω, 50 Ω, 90°)"), re(25.0), 1e-12);
    assert_close!(
        ev("zin_lossless((30 + j40) Ω, 50 Ω, 90°)"),
        C64::new(30.0, -40.0),
        1e-12
    );
    assert!(is_inf(ev("zin_lossless(0 Ω, 50 Ω, 90°)")));
    assert_eq!(ev("zin_lossless(1 Ω / 0, 50 Ω, 90°)"), re(0.0));
    assert_eq!(ev("zin_lossless(1 Ω / 0, 50 Ω, 270°)"), re(0.0));
    assert!(is_inf(ev("zin_lossless(0 Ω, 50 Ω, 450°)")));
    assert_close!(
        ev("zin_lossless((30 + j40) Ω, 50 Ω, 180°)"),
        C64::new(30.0, 40.0),
        1e-12
    );
    assert_close!(
        ev("zin_lossless((30 + j40) Ω, 50 Ω, pi * 1 rad)"),
        C64::new(30.0, 40.0),
        1e-12
    );
    assert_close!(ev("zin_lossless(50 Ω, 50 Ω, 37°)"), re(50.0), 1e-12);
    assert_close!(ev("zin_lossless((30 + j40) Ω, 50 Ω, 0°)"), C64::new(30.0, 40.0), 0.0);
    assert!(is_inf(ev("zin_lossless(1 Ω / 0, 50 Ω, 0°)")));
    // Pozar §2.3: a shorted stub is jZ0·tan βℓ, an open one −jZ0·cot βℓ
    assert_close!(
        ev("zin_lossless(0 Ω, 50 Ω, 30°)"),
        C64::new(0.0, 50.0 * 30f64.to_radians().tan()),
        1e-12
    );
    assert_close!(
        ev("zin_lossless(1 Ω / 0, 50 Ω, 30°)"),
        C64::new(0.0, -50.0 / 30f64.to_radians().tan()),
        1e-12
    );
}

// The lossy formula with γ = jβ is the lossless one (Pozar §2.7, from
// memory); an open or shorted lossy line is Zc·coth γℓ or Zc·tanh γℓ; a
// very long lossy line shows Zc whatever the load.
#[test]
fn lossy_line_limits() {
    let e = engine(
        "lc = line_rlgc(0 Ω/m, 0.25 µH/m, 0 S/m, 100 pF/m, 10 MHz)\n\
         theta = im(lc.gamma) * 3 metre * 1 rad\n\
         a = zin_line((30 + j10) Ω, lc.Zc, lc.gamma, 3 metre)\n\
         b = zin_lossless((30 + j10) Ω, re(lc.Zc), theta)\n\
         zero = zin_line((30 + j10) Ω, 70 Ω, (0.01 + j2) / 1 metre, 0 km)\n\
         long = zin_line((30 + j10) Ω, (70 - j3) Ω, (0.01 + j2) / 1 metre, 20 km)\n\
         open = zin_line(1 Ω / 0, (70 - j3) Ω, (0.01 + j2) / 1 metre, 1.3 metre)\n\
         short = zin_line(0 Ω, (70 - j3) Ω, (0.01 + j2) / 1 metre, 1.3 metre)\n\
         open0 = zin_line(1 Ω / 0, (70 - j3) Ω, (0.01 + j2) / 1 metre, 0 km)",
    );
    assert_close!(value(&e, "lc.Zc"), re(50.0), 1e-12);
    assert_close!(value(&e, "a"), value(&e, "b"), 1e-12);
    assert_eq!(value(&e, "zero"), C64::new(30.0, 10.0));
    assert_close!(value(&e, "long"), C64::new(70.0, -3.0), 1e-12);
    let gl = C64::new(0.013, 2.6);
    let zc = C64::new(70.0, -3.0);
    assert_close!(value(&e, "open"), zc / gl.tanh(), 1e-12);
    assert_close!(value(&e, "short"), zc * gl.tanh(), 1e-12);
    // zero length is the load itself: an open stays ∞ Ω, not ∞ − j∞
    // (an angle taken from Zc)
    assert_eq!(value(&e, "open0"), C64::new(f64::INFINITY, 0.0));
}

// Pozar §2.3 (from memory): a line a whole number of half waves long
// repeats its load, so an open load stays an open (∞ Ω, not −∞ Ω at 180°,
// a negative resistance), and a line of zero length is the load.
#[test]
fn an_open_load_through_half_waves_stays_an_open() {
    let open = C64::new(f64::INFINITY, 0.0);
    assert_eq!(ev("zin_lossless(1 Ω / 0, 50 Ω, 180°)"), open);
    assert_eq!(ev("zin_lossless(1 Ω / 0, 50 Ω, 360°)"), open);
    assert_eq!(ev("zin_lossless(1 Ω / 0, 50 Ω, 540°)"), open);
    assert_eq!(ev("zin_lossless(1 Ω / 0, 50 Ω, pi * 1 rad)"), open);
    assert_eq!(
        ev("zin_line(1 Ω / 0, (320 - j50) Ω, (1e-7 + j1e-6) / 1 metre, 0 km)"),
        open
    );
    assert_eq!(ev("zin_line(1 Ω / 0, 50 Ω, 0 / 1 metre, 3 metre)"), open);
}

// Telegrapher's line (Pozar §2.1, §2.7, from memory): lossless Zc = √(L/C)
// and phase velocity 1/√(LC); a low-loss line has α ≈ R/(2Zc) + G·Zc/2.
#[test]
fn line_constants_of_a_coaxial_line() {
    let e = engine(
        "lossless = line_rlgc(0 Ω/m, 0.25 µH/m, 0 S/m, 100 pF/m, 10 MHz)\n\
         lossy = line_rlgc(0.05 Ω/m, 0.25 µH/m, 2 µS/m, 100 pF/m, 10 MHz)\n\
         dc = line_rlgc(0.05 Ω/m, 0.25 µH/m, 2 µS/m, 100 pF/m, 0 Hz)",
    );
    let w = 2.0 * std::f64::consts::PI * 10e6;
    assert_close!(value(&e, "lossless.Zc"), re(50.0), 1e-12);
    assert_close!(value(&e, "lossless.gamma"), C64::new(0.0, w / 2e8), 1e-12);
    let g = value(&e, "lossy.gamma");
    assert_close!(re(g.re), re(0.05 / 100.0 + 2e-6 * 50.0 / 2.0), 1e-3);
    // at dc: γ = √(RG), Zc = √(R/G)
    assert_close!(value(&e, "dc.gamma"), re((0.05f64 * 2e-6).sqrt()), 1e-12);
    assert_close!(value(&e, "dc.Zc"), re((0.05f64 / 2e-6).sqrt()), 1e-12);
}

// Grainger & Stevenson, Power System Analysis, ch. 6 (from memory): for a
// lossless line A = cos βℓ, so an open line's receiving-end voltage rises
// by 1/cos βℓ over the sending end (the Ferranti effect); for a short line
// the exact and nominal π agree; at zero length the two-port is the
// identity.
#[test]
fn long_line_equivalents() {
    let e = engine(
        "z = j0.33 Ω/km\ny = j3.5 µS/km\n\
         ex = line_pi_exact(z, y, 500 km)\nnom = line_pi(z, y, 500 km)\n\
         short_ex = line_pi_exact((0.05 + j0.4) Ω/km, j2.8 µS/km, 20 km)\n\
         short_nom = line_pi((0.05 + j0.4) Ω/km, j2.8 µS/km, 20 km)\n\
         zero = line_pi_exact(z, y, 0 km)\nrise = 1 / abs(ex.A)",
    );
    let bl = (0.33e-3f64 * 3.5e-9).sqrt() * 500e3;
    assert_close!(value(&e, "ex.A"), re(bl.cos()), 1e-12);
    assert_close!(value(&e, "rise"), re(1.0 / bl.cos()), 1e-12);
    assert!(value(&e, "rise").re > 1.0);
    // nominal π is further from the exact value for a long line…
    let d_long = (value(&e, "ex.Z") - value(&e, "nom.Z")).norm() / value(&e, "ex.Z").norm();
    assert!(d_long > 0.005, "{d_long}");
    // …and within 0.01 % for a short one
    assert_close!(value(&e, "short_ex.Z"), value(&e, "short_nom.Z"), 1e-4);
    assert_close!(value(&e, "short_ex.Y2"), value(&e, "short_nom.Y2"), 1e-4);
    assert_eq!(value(&e, "zero.A"), re(1.0));
    assert_eq!(value(&e, "zero.Z"), re(0.0));
    assert_eq!(value(&e, "zero.Y2"), re(0.0));
}

// Out of the domain: |Γ| > 1 for VSWR, a negative length, a complex Z0 for
// the lossless line, a negative attenuation: NaN, which the run reports as
// an error located at the cell.
#[test]
fn out_of_domain_is_an_error_not_a_number() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("nan.ohm");
    for body in [
        "s = vswr(1.2)\n",
        "z = zin_lossless(50 Ω, 50 Ω, -10°)\n",
        "z = zin_lossless(50 Ω, (50 - j1) Ω, 10°)\n",
        "z = zin_line(50 Ω, 50 Ω, (-0.1 + j1) / 1 km, 3 km)\n",
        "z = zin_line(50 Ω, 50 Ω, j1 / 1 km, -3 km)\n",
        "p = line_pi(j0.3 Ω/km, j3 µS/km, -10 km)\n",
        "p = line_pi_exact((-0.01 + j0.3) Ω/km, j3 µS/km, 10 km)\n",
        "c = line_rlgc(0 Ω/m, 0 H/m, 0 S/m, 0 F/m, 1 MHz)\n",
        "x = from_db_p(j3)\n",
    ] {
        std::fs::write(&path, body).unwrap();
        ohmsheet()
            .arg("run")
            .arg(&path)
            .assert()
            .code(2)
            .stderr(predicate::str::contains("NaN"));
    }
}

// IEC 60027-3: a return loss is a level, shown in dB; a level in dB (or
// a plain number read as one) goes back to a ratio; a percentage is not a
// level and is refused.
#[test]
fn return_loss_is_a_level_in_decibels() {
    let e = engine("rl = return_loss(0.2)\np = from_db_p(3 dB)\nv = from_db_v(rl)");
    let q = e.model.cell("rl").unwrap().quantity().expect("a scalar");
    assert_eq!(q.kind, ohmsheet::units::Kind::Decibel);
    assert_close!(value(&e, "p"), re(10f64.powf(0.3)), 1e-12);
    // RL = −20·log10|Γ|, so 10^(RL/20) = 1/|Γ|
    assert_close!(value(&e, "v"), re(5.0), 1e-12);
    let d = crate::common::errors("x = from_db_p(30 %)");
    assert!(d[0].message.contains("must be a level in decibels"), "{}", d[0].message);
}

// The functions run lane by lane in a batch, and follow an input change.
#[test]
fn a_batch_over_line_lengths_and_an_input_change() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("line.ohm");
    let cases = dir.path().join("cases.csv");
    let out = dir.path().join("out.csv");
    std::fs::write(
        &sheet,
        "len = 100 km\nline = line_pi_exact(j0.33 Ω/km, j3.5 µS/km, len)\nrise = 1 / abs(line.A)\n",
    )
    .unwrap();
    std::fs::write(&cases, "len [km]\n0\n250\n500\n").unwrap();
    ohmsheet()
        .args(["batch", sheet.to_str().unwrap(), "--cases", cases.to_str().unwrap()])
        .args(["--out", out.to_str().unwrap(), "--show", "rise"])
        .assert()
        .success();
    let text = std::fs::read_to_string(&out).unwrap();
    let rows: Vec<f64> = text
        .lines()
        .skip(1)
        .map(|l| l.rsplit(',').next().unwrap().trim().parse().unwrap())
        .collect();
    // lossless line: 1/cos βℓ (Grainger & Stevenson ch. 6, from memory)
    let b = (0.33e-3f64 * 3.5e-9).sqrt();
    for (got, len) in rows.iter().zip([0.0, 250e3, 500e3]) {
        assert!((got - 1.0 / (b * len).cos()).abs() < 1e-5, "{text}");
    }
    // the incremental engine: a new length re-runs the line and its rise
    let mut e = engine("len = 100 km\nline = line_pi_exact(j0.33 Ω/km, j3.5 µS/km, len)\nrise = 1 / abs(line.A)");
    let id = e.model.id("len").unwrap();
    e.set_input(id, re(500e3));
    assert_close!(value(&e, "rise"), re(1.0 / (b * 500e3).cos()), 1e-12);
}
