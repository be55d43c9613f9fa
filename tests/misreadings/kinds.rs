//! Misreadings: kinds (see mod.rs). Real, reactive and complex power;
//! percent, per-unit and decibels; and a value of the wrong kind or unit
//! at every place a value meets an input (`--set`, `--vary`, `@sweep` and
//! search ranges, cases tables, a session edit). Each either gives the
//! right value or is refused with its location.

use std::path::{Path, PathBuf};

use crate::assert_close;
use crate::common::*;
use num_complex::Complex64 as C64;
use ohmsheet::diag::ErrorCode;
use ohmsheet::output::cell_rows;
use ohmsheet::units::format::Style;
use ohmsheet::units::kind::{fits_input, kind_of_product, kind_of_quotient, kind_of_sum};
use ohmsheet::units::{Dim, Kind, Quantity};
use proptest::prelude::*;

/// The first error of a sheet that must fail: its code, line and column
/// (1-based), message and hint.
fn first_error(src: &str) -> (ErrorCode, usize, usize, String, String) {
    let (d, line, col) = super::first_error_at(src);
    (d.code, line, col, d.message, d.hint.unwrap_or_default())
}

fn shown(src: &str, name: &str) -> String {
    cell_rows(&engine(src), Style::default())
        .into_iter()
        .find(|r| r.name == name)
        .unwrap_or_else(|| panic!("no row {name}"))
        .display
}

/// A temporary folder with files in it.
struct Dir(tempfile::TempDir);

impl Dir {
    fn new() -> Dir {
        Dir(tempfile::tempdir().unwrap())
    }
    fn file(&self, name: &str, text: &str) -> PathBuf {
        let p = self.0.path().join(name);
        std::fs::write(&p, text).unwrap();
        p
    }
    fn path(&self) -> &Path {
        self.0.path()
    }
}

/// Run the binary; returns (success, stdout, stderr).
fn run(args: &[&str], stdin: Option<&str>, home: &Path) -> (bool, String, String) {
    let mut c = ohmsheet();
    c.args(args)
        .env("HOME", home)
        .env("XDG_DATA_HOME", home.join("data"))
        .env("XDG_CONFIG_HOME", home.join("config"))
        .env("NO_COLOR", "1");
    if let Some(s) = stdin {
        c.write_stdin(s);
    }
    let out = c.output().unwrap();
    (
        out.status.success(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

// ------------------------------------------------------------------ power

// IEEE Std 1459-2010 §3.1: S = P + jQ, where P and Q are real numbers. With
// P = 800 kW and Q = 600 kvar, |S| = 1000 kVA and the power factor is 0.8
// (a 3-4-5 triangle, hand calculation).
const PQ: &str = "P = 800 kW\nQ = 600 kvar\n";

#[test]
fn real_plus_reactive_power_is_refused_with_the_complex_sum_as_hint() {
    let (code, line, col, msg, hint) = first_error(&format!("{PQ}S = P + Q\n"));
    assert_eq!(code, ErrorCode::KindMismatch);
    assert_eq!((line, col), (3, 9), "at the reactive power");
    assert!(msg.contains("real power") && msg.contains("reactive power"), "{msg}");
    assert!(hint.contains("P + j*Q"), "{hint}");
    // and subtraction the same way
    assert_eq!(first_error(&format!("{PQ}S = P - Q\n")).0, ErrorCode::KindMismatch);
}

#[test]
fn p_plus_j_q_is_the_complex_power() {
    let e = engine(&format!("{PQ}S = P + j*Q\npf = P / abs(S)\nA = abs(S)\n"));
    assert_close!(value(&e, "S"), C64::new(800e3, 600e3), 1e-12);
    assert_close!(value(&e, "A"), C64::new(1.0e6, 0.0), 1e-12);
    assert_close!(value(&e, "pf"), C64::new(0.8, 0.0), 1e-12);
    assert!(shown(&format!("{PQ}S = P + j*Q\n"), "S").ends_with("MVA"));
    // j·Q alone is a complex power, shown in VA (rule 2 of issue 13)
    assert_eq!(shown(&format!("{PQ}x = j*Q\n"), "x"), "j600 kVA");
    // a real factor keeps var (common practice: two banks of 600 kvar)
    assert_eq!(shown(&format!("{PQ}x = 2 * Q\n"), "x"), "1.2 Mvar");
    assert_eq!(shown(&format!("{PQ}x = Q / 2\n"), "x"), "300 kvar");
}

#[test]
fn reactive_power_with_a_complex_power_is_refused() {
    let src = "S = (800 + j600) kVA\nQc = 200 kvar\nS2 = S - Qc\n";
    let (code, line, _, _, hint) = first_error(src);
    assert_eq!((code, line), (ErrorCode::KindMismatch, 3));
    assert!(hint.contains("S + j*Q"), "{hint}");
    // S − jQc is what was meant: 800 + j400 kVA
    let e = engine("S = (800 + j600) kVA\nQc = 200 kvar\nS2 = S - j*Qc\n");
    assert_close!(value(&e, "S2"), C64::new(800e3, 400e3), 1e-12);
    // W ± VA is VA: 100 kW + (50 + j50) kVA = 150 + j50 kVA
    let e = engine("x = 100 kW + (50 + j50) kVA\n");
    assert_close!(value(&e, "x"), C64::new(150e3, 50e3), 1e-12);
}

#[test]
fn an_unnamed_power_product_is_a_complex_power() {
    // S = V·I* (IEEE Std 1459 §3.1): 100 V × conj(3 − j4 A) = 300 + j400 VA
    let src = "V = 100 V\nI = (3 - j4) A\nS = V * conj(I)\n";
    let e = engine(src);
    assert_close!(value(&e, "S"), C64::new(300.0, 400.0), 1e-12);
    assert!(shown(src, "S").ends_with(" VA"), "{}", shown(src, "S"));
    // so adding a reactive power to it is refused
    let (code, line, ..) = first_error(&format!("{src}Q = 100 var\nx = S + Q\n"));
    assert_eq!((code, line), (ErrorCode::KindMismatch, 5));
    // a display unit says which part it stands for: ωCV² is reactive
    // (IEEE Std 18-2012 §3: Q = 2πf·C·V²; 2π·60·1 mF·(480 V)² = 86.86 kvar)
    let e = engine("Qc = 2*pi*60 Hz * 1 mF * (480 V)^2 [kvar]\nQ = 100 kvar\nx = Q - Qc\n");
    assert_close!(
        value(&e, "x"),
        C64::new(100e3 - 2.0 * std::f64::consts::PI * 60.0 * 1e-3 * 480.0 * 480.0, 0.0),
        1e-12
    );
    // but a real power is never shown as reactive, nor Q as VA
    assert_eq!(first_error("P = 5 kW\nx = P [kvar]\n").0, ErrorCode::KindMismatch);
    assert_eq!(first_error("Q = 5 kvar\nx = Q [kVA]\n").0, ErrorCode::KindMismatch);
}

#[test]
fn a_real_or_reactive_power_with_an_imaginary_part_is_refused() {
    for src in [
        "x = j225 kvar\n",
        "x = (300 + j225) kW\n",
        "x = 100 kW ∠ 30°\n",
        "x = 3 var ∠ 10°\n",
    ] {
        let (code, line, col, msg, hint) = first_error(src);
        assert_eq!((code, line, col), (ErrorCode::KindMismatch, 1, 5), "{src}: {msg}");
        assert!(hint.contains("VA"), "{src}: {hint}");
    }
    // 300 kW + j225 kVA is S = 300 + j225 kVA
    let e = engine("x = 300 kW + j225 kVA\n");
    assert_close!(value(&e, "x"), C64::new(300e3, 225e3), 1e-12);
    // -1 W written in polar form has no imaginary part beyond rounding
    let e = engine("x = (1 ∠ 180°) W\n");
    assert_close!(value(&e, "x"), C64::new(-1.0, 0.0), 1e-12);
}

#[test]
fn energies_keep_the_rules_of_their_powers() {
    // IEC 60050-601: active energy in W·h and reactive energy in var·h do
    // not add, as their powers do not.
    let (code, line, ..) = first_error("E1 = 5 kWh\nE2 = 3 kvarh\nx = E1 + E2\n");
    assert_eq!((code, line), (ErrorCode::KindMismatch, 3));
    assert_eq!(shown("E1 = 5 kWh\nE2 = 3 kWh\nx = E1 + E2\n", "x"), "8 kWh");
}

// --------------------------------------------------- percent, pu and dB

#[test]
fn percent_per_unit_and_decibels_keep_their_kinds() {
    // common practice: percentages of one whole add
    assert_eq!(shown("x = 12 % + 3 %\n", "x"), "15 %");
    assert_close!(eval_expr("", "12 % + 3 %"), C64::new(0.15, 0.0), 1e-15);
    // a fraction of a fraction: 50 % of 12 % is 6 %
    assert_eq!(shown("x = 12 % * 50 %\n", "x"), "6 %");
    // 1 + 5 % is the plain factor 1.05
    assert_close!(eval_expr("", "1 + 5 %"), C64::new(1.05, 0.0), 1e-15);
    // a power factor may be given in percent (common practice): the
    // kvar-multiplier method (IEEE Std 141-1993 §8.4) from 80 % to 95 %
    // needs 100 kW × (0.75 − tan(acos 0.95)) = 42.13 kvar
    let want = 100e3 * (0.75 - 0.95f64.acos().tan());
    assert_close!(eval_expr("", "q_pfc(100 kW, 80 %, 95 %)"), C64::new(want, 0.0), 1e-12);
    // per-unit (IEEE Std 141-1993 §4.2): pu × pu is pu; pu ÷ pu is a ratio
    assert_eq!(shown("x = 0.9 pu * 1.05 pu\n", "x"), "0.945 pu");
    let r = shown("x = 0.9 pu / 1.2 pu\n", "x");
    assert_eq!(r, "0.75", "a ratio of per-unit values is a plain number");
    // 5 % impedance on a per-unit base is 0.05 pu
    assert_eq!(shown("x = 1 pu + 5 %\n", "x"), "1.05 pu");
    // IEC 60027-3: 20·log10 of a root-power ratio of 10 is 20 dB; levels in
    // a chain add (20 dB + 6 dB = 26 dB)
    assert_eq!(shown("x = db_v(10)\n", "x"), "20 dB");
    assert_eq!(shown("x = db_p(10) + 6 dB\n", "x"), "16 dB");
    assert_eq!(shown("G1 = 20 dB\nG2 = 6 dB\nx = G1 + G2\n", "x"), "26 dB");
    // refused: levels multiplied, a level plus a ratio, a ratio shown as dB
    assert_eq!(first_error("x = 20 dB * 3 dB\n").0, ErrorCode::KindMismatch);
    assert_eq!(first_error("x = 20 dB + 5 %\n").0, ErrorCode::KindMismatch);
    let (code, _, _, _, hint) = first_error("x = 100 [dB]\n");
    assert_eq!(code, ErrorCode::KindMismatch);
    assert!(hint.contains("db_v") && hint.contains("db_p"), "{hint}");
}

// ----------------------------------------------------- values at inputs

const FEED: &str = "\
Vs = 480 V
Z = (3 + j4) Ω
I = Vs / Z
P = 400 kW
Q = 300 kvar
Qc = 100 kvar
k = 12 %
S = P + j*(Q - Qc)
pf = P / abs(S)
";

#[test]
fn a_plain_number_at_set_is_reported_at_the_set() {
    let d = Dir::new();
    let f = d.file("feed.ohm", FEED);
    let (ok, _, err) = run(&["run", f.to_str().unwrap(), "--set", "Vs=480"], None, d.path());
    assert!(!ok);
    assert!(err.contains("--set:1:4"), "located at the override:\n{err}");
    assert!(err.contains("`Vs` is a voltage"), "{err}");
    assert!(err.contains("write `480 V`"), "{err}");
    assert!(err.contains("given by `--set Vs=480`"), "{err}");
    // not at the later lines, in base units
    assert!(!err.contains("kg"), "{err}");
    assert!(!err.contains("feed.ohm:3"), "{err}");
    // the right unit is accepted: 480 V / 5 Ω = 96 A
    let (ok, out, err) = run(&["run", f.to_str().unwrap(), "--set", "Vs=480 V"], None, d.path());
    assert!(ok, "{err}");
    assert!(out.contains("96 ∠ -53.13° A"), "{out}");
}

#[test]
fn a_real_power_for_a_reactive_input_is_refused_at_set() {
    let d = Dir::new();
    let f = d.file("feed.ohm", FEED);
    let (ok, _, err) = run(&["run", f.to_str().unwrap(), "--set", "Qc=2000 kW"], None, d.path());
    assert!(!ok);
    assert!(err.contains("error[kind-mismatch]"), "{err}");
    assert!(err.contains("--set:1:4"), "{err}");
    assert!(
        err.contains("`Qc` is a reactive power (var); `2000 kW` is a real power (W)"),
        "{err}"
    );
    // a plain 12 for a percentage would be 1200 %
    let (ok, _, err) = run(&["run", f.to_str().unwrap(), "--set", "k=12"], None, d.path());
    assert!(!ok);
    assert!(err.contains("write `12 %`"), "{err}");
    // 2000 kvar is right: Q − Qc = −1700 kvar
    let (ok, _, err) = run(&["run", f.to_str().unwrap(), "--set", "Qc=2000 kvar"], None, d.path());
    assert!(ok, "{err}");
}

#[test]
fn a_range_of_another_kind_is_refused_at_vary() {
    let d = Dir::new();
    let f = d.file("feed.ohm", FEED);
    let f = f.to_str().unwrap();
    for args in [
        vec!["sweep", f, "--vary", "Qc=0..2000kW", "--show", "pf"],
        vec!["solve", f, "--vary", "Qc=0..2000kW", "--target", "pf = 0.95"],
    ] {
        let (ok, _, err) = run(&args, None, d.path());
        assert!(!ok, "{args:?}");
        assert!(err.contains("error[kind-mismatch]"), "{args:?}: {err}");
        assert!(err.contains("--vary:1:7"), "{args:?}: {err}");
        assert!(err.contains("`Qc` is a reactive power (var)"), "{args:?}: {err}");
    }
    // in kvar it runs: pf = 0.95 needs Q − Qc = 400·tan(acos 0.95) = 131.5
    // kvar (IEEE Std 141-1993 §8.4), so Qc = 168.5 kvar
    let (ok, out, err) = run(
        &["solve", f, "--vary", "Qc=0..300kvar", "--target", "pf = 0.95"],
        None,
        d.path(),
    );
    assert!(ok, "{err}");
    assert!(out.contains("168.5"), "{out}");
}

#[test]
fn a_range_of_another_kind_is_refused_in_the_sheet() {
    // @sweep
    let src = format!("{FEED}@sweep \"pf\" Qc = 0 kW .. 200 kW, 5 points : pf\n");
    let (code, line, col, msg, _) = first_error(&src);
    assert_eq!((code, line), (ErrorCode::KindMismatch, 10), "{msg}");
    assert_eq!(col, 18, "at the start of the range, `0 kW`");
    // a search
    let src = format!("{FEED}Qfix = Qc in 0 kW .. 300 kW where pf = 0.95\n");
    let (code, line, col, msg, _) = first_error(&src);
    assert_eq!((code, line, col), (ErrorCode::KindMismatch, 10, 14), "{msg}");
    assert!(msg.contains("`Qc` is a reactive power"), "{msg}");
    // in kvar the search finds 168.5 kvar (as above)
    let e = engine(&format!("{FEED}Qfix = Qc in 0 kvar .. 300 kvar where pf = 0.95\n"));
    let want = 300e3 - 400e3 * (0.95f64.acos()).tan();
    assert_close!(value(&e, "Qfix"), C64::new(want, 0.0), 1e-6);
}

#[test]
fn a_cases_column_of_another_kind_is_refused() {
    let d = Dir::new();
    let f = d.file("feed.ohm", FEED);
    let f = f.to_str().unwrap();
    let out = d.path().join("out.csv");
    let out = out.to_str().unwrap();
    // the header's unit
    let cases = d.file("cases.csv", "P [kvar],Q\n1,2 kvar\n");
    let (ok, _, err) = run(
        &["batch", f, "--cases", cases.to_str().unwrap(), "--out", out],
        None,
        d.path(),
    );
    assert!(!ok);
    assert!(err.contains("column `P [kvar]`"), "{err}");
    assert!(err.contains("`P` is a real power (W)"), "{err}");
    // a value
    let cases = d.file("cases2.csv", "P,Q\n400 kW,2 kW\n");
    let (_, _, err) = run(
        &["batch", f, "--cases", cases.to_str().unwrap(), "--out", out],
        None,
        d.path(),
    );
    assert!(err.contains("case 1: column `Q`"), "{err}");
    assert!(
        err.contains("`2 kW` is a real power (W), but `Q` is a reactive power (var)"),
        "{err}"
    );
}

#[test]
fn a_session_edit_of_an_input_is_checked_at_the_edit() {
    let d = Dir::new();
    let f = d.file("feed.ohm", FEED);
    let (_, out, err) = run(
        &[f.to_str().unwrap()],
        Some("Vs = 480\nQc = 2 MW\n/done\nn\n"),
        d.path(),
    );
    let all = format!("{out}{err}");
    assert!(all.contains("`Vs` is a voltage (V); `480` is a plain number"), "{all}");
    assert!(all.contains("input:1:6"), "{all}");
    assert!(all.contains("write `480 V`"), "{all}");
    assert!(
        all.contains("`Qc` is a reactive power (var); `2 MW` is a real power (W)"),
        "{all}"
    );
    assert!(!all.contains("kg"), "{all}");
}

// ---------------------------------------------- references to broken cells

const BROKEN: &str = "\
Vs = 480 V
Zl = 3 + j4 Ω
Vl = Vs * Zl / (Zl + 1 Ω)
Vl2 = Vs / 2
@sweep \"load voltage\" Vs = 400 V .. 500 V, 3 points : Vl
";

#[test]
fn a_reference_to_a_broken_cell_names_its_error() {
    // compiling (run, sweep, watch and report all compile this way)
    let sheet = ohmsheet::sheet::Sheet::from_text("test.ohm", BROKEN);
    let m = ohmsheet::engine::compile(&sheet);
    let texts: Vec<String> = m.diagnostics.iter().map(|d| d.render_plain(&m.sources)).collect();
    let all = texts.join("\n");
    assert!(!all.contains("no cell `Vl`"), "{all}");
    assert!(!all.contains("did you mean `Vl2`"), "{all}");
    let d = m
        .diagnostics
        .iter()
        .find(|d| d.code == ErrorCode::BrokenCell)
        .expect(&all);
    assert!(d.message.contains("`Vl` has no value: it uses `Zl`"), "{}", d.message);
    assert!(
        d.message.contains("cannot add a plain number and an impedance"),
        "{}",
        d.message
    );
    let (line, _) = m
        .sources
        .get(d.span.unwrap().file)
        .line_col(d.span.unwrap().start as usize);
    assert_eq!(line, 5, "at the @sweep line");

    let dir = Dir::new();
    let f = dir.file("broken.ohm", BROKEN);
    let f = f.to_str().unwrap();
    for args in [vec!["run", f], vec!["sweep", f]] {
        let (ok, _, err) = run(&args, None, dir.path());
        assert!(!ok, "{args:?}");
        assert!(err.contains("`Vl` has no value"), "{args:?}: {err}");
        assert!(!err.contains("no cell `Vl`"), "{args:?}: {err}");
    }
    // a session: an expression naming the broken cell (was a panic)
    let (_, out, err) = run(&[f], Some("Vl * 2\n/done\n"), dir.path());
    let all = format!("{out}{err}");
    assert!(all.contains("error[broken-cell]"), "{all}");
    assert!(all.contains("`Vl` has no value: it uses `Zl`"), "{all}");
    assert!(!all.contains("panicked"), "{all}");
}

// ------------------------------------------------- the algebra of kinds

const KINDS: &[Kind] = &[
    Kind::Plain,
    Kind::Angle,
    Kind::PerUnit,
    Kind::Percent,
    Kind::Decibel,
    Kind::RealPower,
    Kind::ReactivePower,
    Kind::ApparentPower,
    Kind::Hertz,
    Kind::RadPerSec,
];

const DIMS: &[Dim] = &[Dim::NONE, Dim::POWER, Dim::FREQUENCY, Dim::ENERGY, Dim::VOLTAGE];

proptest! {
    /// A sum is refused either way round or gives the same kind either way
    /// round (a + b and b + a read alike).
    #[test]
    fn sums_are_refused_or_commutative(a in 0..KINDS.len(), b in 0..KINDS.len(), d in 0..DIMS.len()) {
        let (a, b, d) = (KINDS[a], KINDS[b], DIMS[d]);
        let (ka, kb) = (Quantity::new(d, a).kind, Quantity::new(d, b).kind);
        let ab = kind_of_sum(ka, kb, d).map_err(|c| c.message);
        let ba = kind_of_sum(kb, ka, d).map_err(|c| c.message);
        prop_assert_eq!(ab.is_ok(), ba.is_ok());
        if let (Ok(x), Ok(y)) = (ab, ba) {
            prop_assert_eq!(x, y);
        }
    }

    /// A quantity plus itself keeps its kind (W + W is W, 12 % + 3 % is %).
    #[test]
    fn a_sum_of_one_kind_keeps_it(a in 0..KINDS.len(), d in 0..DIMS.len()) {
        let q = Quantity::new(DIMS[d], KINDS[a]);
        prop_assert_eq!(kind_of_sum(q.kind, q.kind, q.dim), Ok(q.kind));
    }

    /// Scaling by a real plain constant keeps the kind (2·Q is var, Q/2 is
    /// var), except the 2π rule (f·2π is rad/s, ω/2π is Hz); scaling by a
    /// constant with an imaginary part makes W and var a complex power.
    #[test]
    fn scaling_by_a_real_keeps_the_kind(a in 0..KINDS.len(), d in 0..DIMS.len(), r in -1e6f64..1e6, im in 1e-3f64..1e3) {
        let q = Quantity::new(DIMS[d], KINDS[a]);
        prop_assume!(r != 0.0 && (r - std::f64::consts::TAU).abs() > 1e-9);
        let c = Some(C64::new(r, 0.0));
        prop_assert_eq!(kind_of_product(q.kind, Kind::Plain, q.dim, None, c), Ok(q.kind));
        prop_assert_eq!(kind_of_product(Kind::Plain, q.kind, q.dim, c, None), Ok(q.kind));
        prop_assert_eq!(kind_of_quotient(q.kind, Kind::Plain, q.dim, c), Ok(q.kind));
        let j = Some(C64::new(r, im));
        let k = kind_of_product(Kind::Plain, q.kind, q.dim, j, None).unwrap();
        // (an energy of a power kind follows its power: j·W·h is VA·h)
        if matches!(q.kind, Kind::RealPower | Kind::ReactivePower) {
            prop_assert_eq!(k, Kind::ApparentPower);
        } else {
            prop_assert_eq!(k, q.kind);
        }
    }

    /// A value fits an input of its own quantity; W, var and VA never fit
    /// one another.
    #[test]
    fn inputs_take_their_own_kind(a in 0..KINDS.len(), b in 0..KINDS.len(), d in 0..DIMS.len()) {
        let qa = Quantity::new(DIMS[d], KINDS[a]);
        let qb = Quantity::new(DIMS[d], KINDS[b]);
        prop_assert!(fits_input(qa, qa));
        if qa.kind != qb.kind && (qa.kind.is_power() || qb.kind.is_power()) {
            prop_assert!(!fits_input(qa, qb));
        }
    }
}
