//! Sweeps and searches (`ohmsheet sweep`, `ohmsheet solve`, the library
//! API behind them) checked against closed forms from outside the program.

use std::f64::consts::PI;

use num_complex::Complex64 as C64;
use ohmsheet::engine::search::Goal;
use ohmsheet::sheet::Sheet;
use ohmsheet::sweep::{self, SolveError, SolveRequest, Study};
use predicates::prelude::*;

use crate::common::ohmsheet;

fn sheet_file(text: &str) -> tempfile::NamedTempFile {
    let mut f = tempfile::Builder::new().suffix(".ohm").tempfile().unwrap();
    std::io::Write::write_all(&mut f, text.as_bytes()).unwrap();
    f
}

fn solve(src: &str, vary: &str, goal: Goal, expr: &str, value: Option<&str>) -> Result<sweep::Solution, SolveError> {
    let req = SolveRequest {
        vary,
        goal,
        expr,
        value,
        scan: None,
        log: None,
    };
    sweep::solve(Sheet::from_text("test.ohm", src), &req)
}

fn solved(src: &str, vary: &str, goal: Goal, expr: &str, value: Option<&str>) -> f64 {
    match solve(src, vary, goal, expr, value) {
        Ok(s) => s.found.x,
        Err(SolveError::Invalid(f)) => panic!("{}", f.render_plain()),
        Err(e) => panic!("{e:?}"),
    }
}

// A series RLC driven by a fixed voltage.
const R: f64 = 12.0;
const L: f64 = 8e-3;
const C: f64 = 2.2e-6;
fn series_rlc() -> String {
    format!(
        "V = 10 V\nR = {R} Ω\nL = {} mH\nC = {} µF\nf = 1 kHz\nw = 2*pi*f\nZ = R + j*w*L + 1/(j*w*C)\nI = V / Z\n",
        L * 1e3,
        C * 1e6
    )
}

#[test]
fn series_rlc_resonance_is_where_the_current_peaks() {
    // Resonant frequency of a series RLC: f0 = 1/(2π√(LC)).
    // Source: Alexander & Sadiku, Fundamentals of Electric Circuits, §14.5
    // "Series Resonance" (from memory).
    let f0 = 1.0 / (2.0 * PI * (L * C).sqrt());
    let f = solved(&series_rlc(), "f=100Hz..100kHz", Goal::Max, "abs(I)", None);
    assert!((f - f0).abs() / f0 < 1e-7, "peak at {f}, f0 = {f0}");
    // Same from the command line, with the logarithmic scan it picks for a
    // range of three decades.
    let file = sheet_file(&series_rlc());
    ohmsheet()
        .args([
            "solve",
            file.path().to_str().unwrap(),
            "--vary",
            "f=100Hz..100kHz",
            "--maximize",
            "abs(I)",
            "--json",
        ])
        .assert()
        .code(0)
        .stdout(predicate::str::contains("\"log_scan\": true"))
        .stdout(predicate::function(move |s: &str| {
            let v: serde_json::Value = serde_json::from_str(s).unwrap();
            (v["value"].as_f64().unwrap() - f0).abs() / f0 < 1e-7
        }));
}

#[test]
fn series_rlc_half_power_bandwidth() {
    // Half-power bandwidth of a series RLC: f2 − f1 = R/(2πL), where the
    // current has fallen to 1/√2 of its peak V/R.
    // Source: Alexander & Sadiku, Fundamentals of Electric Circuits, §14.5
    // (B = R/L in rad/s; from memory).
    let f0 = 1.0 / (2.0 * PI * (L * C).sqrt());
    let half = format!("{} A", 10.0 / R / 2f64.sqrt());
    let below = format!("f=100Hz..{}Hz", f0);
    let above = format!("f={}Hz..100kHz", f0);
    let f1 = solved(&series_rlc(), &below, Goal::Root, "abs(I)", Some(&half));
    let f2 = solved(&series_rlc(), &above, Goal::Root, "abs(I)", Some(&half));
    let bw = R / (2.0 * PI * L);
    assert!(((f2 - f1) - bw).abs() / bw < 1e-9, "bandwidth {} vs {bw}", f2 - f1);
    // Over the whole range the target is met twice: refused, with both
    // places named.
    match solve(&series_rlc(), "f=100Hz..100kHz", Goal::Root, "abs(I)", Some(&half)) {
        Err(SolveError::Search(u)) if matches!(u.error, ohmsheet::engine::search::SearchError::Several { .. }) => {
            let ohmsheet::engine::search::SearchError::Several { count, at } = u.error else {
                unreachable!()
            };
            assert_eq!(count, 2);
            assert!((at[0] - f1).abs() / f1 < 1e-9 && (at[1] - f2).abs() / f2 < 1e-9);
        }
        other => panic!("{other:?}"),
    }
}

// A bus fed through a supply impedance, with an inductive load and a
// shunt capacitor.
const BUS: &str = "Vs = 480 V\nZs = (0.05 + j0.4) Ω\nZl = (3 + j2) Ω\nf = 60 Hz\nC = 100 µF\nZc = 1/(j*2*pi*f*C)\nZbus = Zl || Zc\nVload = Vs * Zbus / (Zs + Zbus)\n";

#[test]
fn capacitor_for_the_highest_load_voltage_cancels_the_bus_susceptance() {
    // In the Norton view the bus is a current source Vs/Zs driving
    // Ys + Yl + jωC; |V| is largest when the capacitor's susceptance ωC
    // cancels the imaginary part of Ys + Yl (common practice; exact here).
    let ys = 1.0 / C64::new(0.05, 0.4);
    let yl = 1.0 / C64::new(3.0, 2.0);
    let w = 2.0 * PI * 60.0;
    let c_star = -(ys + yl).im / w;
    let c = solved(BUS, "C=0..20mF", Goal::Max, "abs(Vload)", None);
    assert!((c - c_star).abs() / c_star < 1e-6, "C = {c}, expected {c_star}");
}

// A plant load with a wye-connected correction bank on a 480 V bus.
const PLANT: &str = "P = 400 kW\npf1 = 0.78\nQ1 = P * tan(acos(pf1))\nV = 480 V\nf = 60 Hz\nC = 1 mF\nQc = 2*pi*f*C*V^2\nS2 = P + j*(Q1 - Qc)\npf = P / abs(S2)\n";

#[test]
fn power_factor_correction_capacitance_follows_the_ieee_141_method() {
    // IEEE Std 141 (Red Book), power-factor correction: the bank supplies
    // Q = P(tan φ1 − tan φ2); a wye bank on line voltage V gives
    // Q = ωCV², so C = Q/(ωV²) (from memory).
    let p = 400e3;
    let (t1, t2) = (0.78f64.acos().tan(), 0.95f64.acos().tan());
    let c_ieee = p * (t1 - t2) / (2.0 * PI * 60.0 * 480.0f64.powi(2));
    let c = solved(PLANT, "C=0..3.5mF", Goal::Root, "pf", Some("0.95"));
    assert!((c - c_ieee).abs() / c_ieee < 1e-9, "C = {c}, IEEE 141 gives {c_ieee}");
    // Past unity power factor the curve comes back down through 0.95
    // (over-correction): a range holding both is refused.
    let file = sheet_file(PLANT);
    ohmsheet()
        .args([
            "solve",
            file.path().to_str().unwrap(),
            "--vary",
            "C=0..6mF",
            "--target",
            "pf = 0.95",
        ])
        .assert()
        .code(1)
        .stderr(predicate::str::contains("2 places"))
        .stderr(predicate::str::contains("narrow the range"));
}

#[test]
fn solve_reports_value_residual_and_iterations() {
    let file = sheet_file(PLANT);
    ohmsheet()
        .args([
            "solve",
            file.path().to_str().unwrap(),
            "--vary",
            "C=0..3.5mF",
            "--target",
            "pf = 0.95",
        ])
        .assert()
        .code(0)
        .stdout(predicate::str::contains("C = 2.18"))
        .stdout(predicate::str::contains("mF"))
        .stdout(predicate::str::contains("residual"))
        .stdout(predicate::str::contains("iteration"));
}

#[test]
fn solve_with_no_crossing_says_where_it_came_closest() {
    let file = sheet_file(PLANT);
    ohmsheet()
        .args([
            "solve",
            file.path().to_str().unwrap(),
            "--vary",
            "C=0..1mF",
            "--target",
            "pf = 0.95",
        ])
        .assert()
        .code(1)
        .stderr(predicate::str::contains("never reaches 0.95"))
        .stderr(predicate::str::contains("closest at C = 1 mF"));
}

#[test]
fn solve_refuses_bad_requests_clearly() {
    let file = sheet_file(PLANT);
    let path = file.path().to_str().unwrap();
    // A range in the wrong unit.
    ohmsheet()
        .args(["solve", path, "--vary", "C=0..3.5 kV", "--target", "pf = 0.95"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains(
            "is a voltage (V), but `C` is a capacitance (F)",
        ))
        .stderr(predicate::str::contains("--vary:1:"));
    // A cell computed from others cannot be varied.
    ohmsheet()
        .args(["solve", path, "--vary", "Qc=0..1kvar", "--target", "pf = 0.95"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("computed from other cells"));
    // A target in the wrong unit.
    ohmsheet()
        .args(["solve", path, "--vary", "C=0..3.5mF", "--target", "pf = 3 V"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("one unit"));
    // No `=` in the target.
    ohmsheet()
        .args(["solve", path, "--vary", "C=0..3.5mF", "--target", "pf 0.95"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("EXPR = VALUE"));
    // An expression that does not depend on the varied input.
    ohmsheet()
        .args(["solve", path, "--vary", "C=0..3.5mF", "--target", "pf1 = 0.95"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("does not depend on `C`"));
}

#[test]
fn sweep_values_match_one_point_at_a_time_evaluation_to_the_bit() {
    // The block evaluator and the incremental engine must agree exactly.
    let mut study = Study::new(Sheet::from_text("t.ohm", BUS), &[("--show", "abs(Vload)")]).unwrap();
    let ax = study.axis("--vary", "C=0..2mF", Some(37), None, false).unwrap();
    let s = vec![study.series("Vload").unwrap(), study.series("abs(Vload)").unwrap()];
    let r = sweep::collect(&study.engine, std::slice::from_ref(&ax), &s, None);
    let mut e = study.engine.clone();
    for p in 0..r.len() {
        e.set_input(ax.cell, C64::new(r.x(0, p), 0.0));
        assert_eq!(r.values[0][p], e.value(s[0].cell));
        assert_eq!(r.values[1][p], e.value(s[1].cell));
    }
    assert_eq!(r.x(0, 0), 0.0);
    assert_eq!(r.x(0, 36), 2e-3);
}

#[test]
fn sweep_csv_has_units_in_headers_and_marks_undefined_points() {
    // At C = 0 the capacitor's impedance 1/(jωC) divides by zero.
    let file = sheet_file(BUS);
    let out = tempfile::Builder::new().suffix(".csv").tempfile().unwrap();
    ohmsheet()
        .args([
            "sweep",
            file.path().to_str().unwrap(),
            "--vary",
            "C=0..2mF",
            "--points",
            "5",
            "--show",
            "Vload,Zc",
            "--complex",
            "polar",
            "--csv",
            out.path().to_str().unwrap(),
        ])
        .assert()
        .code(0)
        .stderr(predicate::str::contains("1 point gave NaN or infinite values"))
        .stderr(predicate::str::contains("C = 0"));
    let text = std::fs::read_to_string(out.path()).unwrap();
    let mut lines = text.lines();
    assert_eq!(
        lines.next().unwrap(),
        // C is shown in the unit the sheet wrote it in.
        "C [µF],Vload.mag [V],Vload.ang [deg],Zc.mag [Ω],Zc.ang [deg]"
    );
    let rows: Vec<&str> = lines.collect();
    assert_eq!(rows.len(), 5);
    assert!(rows[0].contains("inf") || rows[0].contains("NaN"), "{}", rows[0]);
    assert!(rows[4].starts_with("2000,"), "{}", rows[4]);
    // Rectangular parts on request.
    ohmsheet()
        .args([
            "sweep",
            file.path().to_str().unwrap(),
            "--vary",
            "C=1mF..2mF",
            "--points",
            "2",
            "--show",
            "Zc",
            "--parts",
            "rect",
            "--csv",
            "-",
        ])
        .assert()
        .code(0)
        .stdout(predicate::str::starts_with("C [µF],Zc.re [Ω],Zc.im [Ω]\n"));
}

#[test]
fn sweep_grid_and_step_and_json() {
    let file = sheet_file(BUS);
    let out = ohmsheet()
        .args([
            "sweep",
            file.path().to_str().unwrap(),
            "--vary",
            "C=0.5mF..1mF",
            "--step",
            "0.25mF",
            "--vary",
            "f=50Hz..60Hz",
            "--points",
            "2",
            "--show",
            "abs(Vload)",
            "--json",
            "-",
        ])
        .assert()
        .code(0)
        .get_output()
        .stdout
        .clone();
    let v: serde_json::Value = serde_json::from_slice(&out).unwrap();
    assert_eq!(v["axes"][0]["points"], 3);
    assert_eq!(v["axes"][1]["points"], 2);
    assert_eq!(v["series"][0]["re"].as_array().unwrap().len(), 6);
    assert_eq!(v["axes"][1]["values"][1].as_f64(), Some(60.0));
}

#[test]
fn sweep_limits_and_errors() {
    let file = sheet_file(BUS);
    let path = file.path().to_str().unwrap();
    ohmsheet()
        .args([
            "sweep", path, "--vary", "C=0..2mF", "--points", "20000000", "--show", "Vload",
        ])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("the limit is 10000000"))
        .stderr(predicate::str::contains("--max-points"));
    ohmsheet()
        .args(["sweep", path, "--vary", "C=0..2mF", "--log", "--show", "Vload"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("non-zero and of one sign"));
    ohmsheet()
        .args(["sweep", path, "--vary", "C=0..2", "--show", "Vload"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("give it the unit of `C`"));
    ohmsheet()
        .args(["sweep", path, "--vary", "Cx=0..2mF", "--show", "Vload"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("did you mean `C`?"));
    ohmsheet()
        .args(["sweep", path, "--vary", "C=0..2mF", "--show", "Vlod"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("did you mean `Vload`?"));
    ohmsheet()
        .args(["sweep", path, "--vary", "C=0..2mF", "--show", "abs(Vload"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("--show:1:"));
}

#[test]
fn plot_is_svg_with_labelled_axes_and_a_legend() {
    let file = sheet_file(&series_rlc());
    let dir = tempfile::tempdir().unwrap();
    let svg_path = dir.path().join("rlc.svg");
    ohmsheet()
        .args([
            "sweep",
            file.path().to_str().unwrap(),
            "--vary",
            "f=100Hz..100kHz",
            "--log",
            "--points",
            "301",
            "--show",
            "I,Z",
            "--plot",
            svg_path.to_str().unwrap(),
        ])
        .assert()
        .code(0)
        // It says which file it wrote, and what is in it: |I|, |Z| and
        // the phase of both.
        .stderr(predicate::str::contains(format!(
            "wrote the plot {} (3 panels, 4 curves; SVG)",
            svg_path.display()
        )));
    let text = std::fs::read_to_string(&svg_path).unwrap();
    let doc = roxmltree::Document::parse(&text).expect("the plot parses as XML");
    assert_eq!(doc.root_element().tag_name().name(), "svg");
    let texts: Vec<String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| n.text().unwrap_or("").trim().to_string())
        .collect();
    let has = |s: &str| texts.iter().any(|t| t == s);
    // Axis labels with units and SI prefixes: |I| peaks at 10 V / 12 Ω,
    // shown in mA; |Z| reaches kΩ; the x axis is logarithmic with
    // prefixed ticks.
    assert!(has("f [Hz]"), "{texts:?}");
    assert!(has("|I| [mA]"), "{texts:?}");
    assert!(has("|Z| [kΩ]"), "{texts:?}");
    assert!(has("phase [°]"), "{texts:?}");
    assert!(has("1k") && has("10k"), "{texts:?}");
    // Legend entries.
    assert!(has("I") && has("Z"), "{texts:?}");
    // No partial file is left behind.
    let names: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(names.len(), 1, "{names:?}");
}

#[test]
fn chart_draws_in_the_terminal_and_marks_undefined_points() {
    let file = sheet_file(BUS);
    ohmsheet()
        .args([
            "sweep",
            file.path().to_str().unwrap(),
            "--vary",
            "C=0..2mF",
            "--show",
            "Zc",
            "--chart",
        ])
        .env("COLUMNS", "80")
        .assert()
        .code(0)
        .stdout(predicate::str::contains("|Zc| [Ω]"))
        .stdout(predicate::str::contains("└×"))
        .stdout(predicate::str::contains("C [mF]"))
        .stdout(predicate::str::contains("undefined (NaN or ∞) at 1 point"));
}

#[test]
fn the_demo_plot_is_the_tools_own_drawing() {
    // sheets-demo/pump-station-bank-search.svg is what `ohmsheet sweep`
    // draws for the sheet's declared sweep; redraw it and compare.
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("demo.svg");
    ohmsheet()
        .args([
            "sweep",
            crate::common::repo("sheets-demo/pump-station-bank-search.ohm")
                .to_str()
                .unwrap(),
            "--plot",
            out.to_str().unwrap(),
        ])
        .assert()
        .code(0);
    let fresh = std::fs::read_to_string(&out).unwrap();
    let committed = std::fs::read_to_string(crate::common::repo("sheets-demo/pump-station-bank-search.svg")).unwrap();
    assert!(
        fresh == committed,
        "regenerate it: ohmsheet sweep sheets-demo/pump-station-bank-search.ohm --plot sheets-demo/pump-station-bank-search.svg"
    );
}
