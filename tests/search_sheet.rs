//! Searches written in a sheet (`C in 0 .. 2 mF where pf = 0.95`) and
//! declared sweeps (`@sweep`), against closed forms from outside the
//! program, and the incremental engine's promise around them.

use std::f64::consts::PI;

use num_complex::Complex64 as C64;
use ohmsheet::diag::ErrorCode;
use ohmsheet::engine::search::Outcome;
use predicates::prelude::*;

use crate::common::{engine, errors, ohmsheet, value};

fn names(e: &ohmsheet::engine::Engine, ids: &[u32]) -> Vec<String> {
    ids.iter().map(|&i| e.model.cells[i as usize].name.clone()).collect()
}

const RLC: &str =
    "V = 10 V\nR = 12 Ω\nL = 8 mH\nC = 2.2 µF\nf = 1 kHz\nw = 2*pi*f\nZ = R + j*w*L + 1/(j*w*C)\nI = V / Z\n\
f0 = f in 100 Hz .. 100 kHz where abs(I) is largest\nIhalf = abs(V) / R / sqrt(2)\n\
f1 = f in 100 Hz .. f0 where abs(I) = Ihalf\nf2 = f in f0 .. 100 kHz where abs(I) = Ihalf\nbw = f2 - f1\n";

#[test]
fn resonance_and_bandwidth_from_inside_a_sheet() {
    // Series RLC: f0 = 1/(2π√(LC)), half-power bandwidth R/(2πL).
    // Source: Alexander & Sadiku, Fundamentals of Electric Circuits, §14.5
    // (from memory).
    let e = engine(RLC);
    let f0 = 1.0 / (2.0 * PI * (8e-3f64 * 2.2e-6).sqrt());
    let bw = 12.0 / (2.0 * PI * 8e-3);
    assert!((value(&e, "f0").re - f0).abs() / f0 < 1e-7);
    assert!((value(&e, "bw").re - bw).abs() / bw < 1e-9, "{}", value(&e, "bw"));
    // The cells the searches ran through keep their own values.
    let i_at_1k = 10.0 / C64::new(12.0, 2.0 * PI * 1e3 * 8e-3 - 1.0 / (2.0 * PI * 1e3 * 2.2e-6));
    assert!((value(&e, "I") - i_at_1k).norm() < 1e-12);
    assert_eq!(value(&e, "f").re, 1e3);
    match ohmsheet::sweep::search_outcome(&e, e.model.id("f1").unwrap()) {
        Some(Outcome::Found(f)) => assert!(f.fx.abs() < 1e-12 && f.iterations > 0),
        other => panic!("{other:?}"),
    }
}

const PLANT: &str = "P = 400 kW\npf1 = 0.78\nQ1 = P * tan(acos(pf1))\nV = 480 V\nf = 60 Hz\nC = 1 mF\n\
Qc = 2*pi*f*C*V^2\nS2 = P + j*(Q1 - Qc)\npf = P / abs(S2)\nCfix = C in 0 .. 3.5 mF where pf = 0.95\n\
Qfix = 2*pi*f*Cfix*V^2\n";

fn ieee141_c(p: f64) -> f64 {
    // IEEE Std 141 (Red Book), power-factor correction: Q = P(tan φ1 −
    // tan φ2), and for a wye bank on line voltage V, C = Q/(ωV²) (from
    // memory).
    p * (0.78f64.acos().tan() - 0.95f64.acos().tan()) / (2.0 * PI * 60.0 * 480.0f64.powi(2))
}

#[test]
fn power_factor_correction_from_inside_a_sheet() {
    let e = engine(PLANT);
    let c = value(&e, "Cfix").re;
    assert!((c - ieee141_c(400e3)).abs() / c < 1e-9);
    // A later cell uses the answer: Q = ωCV².
    let q = value(&e, "Qfix").re;
    assert!((q - 400e3 * (0.78f64.acos().tan() - 0.95f64.acos().tan())).abs() / q < 1e-9);
}

#[test]
fn a_search_reruns_when_what_it_reads_changes_and_not_for_its_own_input() {
    let mut e = engine(PLANT);
    let cfix = e.model.id("Cfix").unwrap();
    let deps = names(&e, &e.model.cells[cfix as usize].deps.clone());
    assert_eq!(deps, ["P", "Q1", "V", "f"]);
    // Moving the bank the sheet states does not move the answer.
    let c = e.model.id("C").unwrap();
    e.set_input(c, C64::new(2e-3, 0.0));
    assert!(!e.last_recomputed.contains(&cfix));
    assert_eq!(names(&e, &e.last_recomputed.clone()), ["Qc", "S2", "pf"]);
    // A bigger load does, and so does what uses it.
    let p = e.model.id("P").unwrap();
    let changes = e.set_input(p, C64::new(500e3, 0.0));
    let changed: Vec<String> = changes
        .iter()
        .map(|ch| e.model.cells[ch.cell as usize].name.clone())
        .collect();
    assert!(changed.contains(&"Cfix".to_string()) && changed.contains(&"Qfix".to_string()));
    assert!((value(&e, "Cfix").re - ieee141_c(500e3)).abs() / ieee141_c(500e3) < 1e-9);
    // pf is still the power factor at C = 2 mF, not at a trial value.
    let t1 = 0.78f64.acos().tan();
    let qc = 2.0 * PI * 60.0 * 2e-3 * 480.0f64.powi(2);
    let pf = 500e3 / C64::new(500e3, 500e3 * t1 - qc).norm();
    assert!((value(&e, "pf").re - pf).abs() < 1e-12);
}

#[test]
fn a_search_inside_a_search() {
    // The load at which the IEEE 141 bank is exactly 2 mF:
    // P = C ωV² / (tan φ1 − tan φ2).
    let src = format!("{PLANT}Pfor2 = P in 100 kW .. 800 kW where Cfix = 2 mF\n");
    let e = engine(&src);
    let want = 2e-3 * 2.0 * PI * 60.0 * 480.0f64.powi(2) / (0.78f64.acos().tan() - 0.95f64.acos().tan());
    assert!(
        (value(&e, "Pfor2").re - want).abs() / want < 1e-8,
        "{}",
        value(&e, "Pfor2")
    );
    // The inner search's own answer is the one at P = 400 kW.
    assert!((value(&e, "Cfix").re - ieee141_c(400e3)).abs() / ieee141_c(400e3) < 1e-9);
}

#[test]
fn the_block_evaluator_runs_searches_to_the_bit() {
    let mut study = ohmsheet::sweep::Study::new(ohmsheet::sheet::Sheet::from_text("t.ohm", PLANT), &[]).unwrap();
    let ax = study.axis("--vary", "P=100kW..900kW", Some(70), None, false).unwrap();
    let s = vec![study.series("Cfix").unwrap(), study.series("pf").unwrap()];
    let r = ohmsheet::sweep::collect(&study.engine, std::slice::from_ref(&ax), &s, None);
    let mut e = study.engine.clone();
    let bits = |z: C64| (z.re.to_bits(), z.im.to_bits());
    let mut found = 0;
    let mut expected = 0;
    let (t1, t2) = (0.78f64.acos().tan(), 0.95f64.acos().tan());
    let wv2 = 2.0 * PI * 60.0 * 480.0f64.powi(2);
    for p in 0..r.len() {
        // One answer in 0..3.5 mF when the lagging crossing P(t1 − t2)/ωV²
        // is inside and the leading one P(t1 + t2)/ωV² outside.
        let load = r.x(0, p);
        expected += (load * (t1 - t2) / wv2 < 3.5e-3 && load * (t1 + t2) / wv2 > 3.5e-3) as usize;
        e.set_input(ax.cell, C64::new(r.x(0, p), 0.0));
        assert_eq!(bits(r.values[0][p]), bits(e.value(s[0].cell)), "point {p}");
        assert_eq!(bits(r.values[1][p]), bits(e.value(s[1].cell)), "point {p}");
        found += r.values[0][p].re.is_finite() as usize;
    }
    // Elsewhere 0.95 is met twice in the range, or not at all: no answer.
    assert_eq!(found, expected);
}

#[test]
fn capacitor_for_the_highest_bus_voltage_from_inside_a_sheet() {
    // Norton view: |V| is largest when ωC cancels im(Ys + Yl) (common
    // practice; exact).
    let src = "Vs = 480 V\nZs = (0.05 + j0.4) Ω\nZl = (3 + j2) Ω\nf = 60 Hz\nC = 100 µF\nZc = 1/(j*2*pi*f*C)\n\
Vload = Vs * (Zl || Zc) / (Zs + (Zl || Zc))\nCbest = C in 0 .. 20 mF where abs(Vload) is largest\n";
    let e = engine(src);
    let y = 1.0 / C64::new(0.05, 0.4) + 1.0 / C64::new(3.0, 2.0);
    let c_star = -y.im / (2.0 * PI * 60.0);
    assert!((value(&e, "Cbest").re - c_star).abs() / c_star < 1e-6);
}

#[test]
fn search_mistakes_are_clear_compile_errors() {
    let code = |src: &str| errors(src).into_iter().find(|d| d.is_error()).unwrap();
    let base = "C = 1 mF\nX = 1 / (2*pi*60 Hz * C)\nK = 5\n";
    let d = code(&format!("{base}c = X in 0 .. 1 Ω where X = 2 Ω\n"));
    assert_eq!(d.code, ErrorCode::NotAnInput);
    let d = code(&format!("{base}c = C in 0 .. 2 mF where K = 3\n"));
    assert_eq!(d.code, ErrorCode::BadSearch);
    assert!(d.message.contains("does not depend on `C`"));
    let d = code(&format!("{base}c = C in 0 .. 2 V where X = 3 Ω\n"));
    assert_eq!(d.code, ErrorCode::DimensionMismatch);
    assert!(d.message.contains("end of the range"));
    let d = code(&format!("{base}c = C in 0 .. 2 mF where X = 3 V\n"));
    assert_eq!(d.code, ErrorCode::DimensionMismatch);
    let d = code(&format!("{base}c = C in 0 .. 2 mF where X = X * 2\n"));
    assert_eq!(d.code, ErrorCode::BadSearch);
    assert!(d.message.contains("changes with `C`"));
    let d = code(&format!("{base}c = Cx in 0 .. 2 mF where X = 3 Ω\n"));
    assert_eq!(d.code, ErrorCode::UnknownName);
    assert!(d.hint.unwrap().contains("`C`"));
    // A search whose answer depends on itself is a cycle.
    let d = code("C = 1 mF\nX = 1 / (2*pi*60 Hz * C) + Y * 1 Ω\nY = C in 0 .. 2 mF where X = 3 Ω\n");
    assert_eq!(d.code, ErrorCode::Cycle);
}

#[test]
fn a_failed_search_says_why_at_its_line() {
    let mut f = tempfile::Builder::new().suffix(".ohm").tempfile().unwrap();
    std::io::Write::write_all(
        &mut f,
        format!("{PLANT}Cboth = C in 0 .. 6 mF where pf = 0.95\nClow = C in 0 .. 1 mF where pf = 0.95\n").as_bytes(),
    )
    .unwrap();
    ohmsheet()
        .args(["run", f.path().to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains(
            "error[search-failed]: `pf` = 0.95 holds at 2 places",
        ))
        .stderr(predicate::str::contains(":12:1"))
        .stderr(predicate::str::contains("never reaches 0.95"))
        .stderr(predicate::str::contains(":13:1"));
}

const DECLARED: &str =
    "@title \"Plant bank\"\nP = 400 kW\npf1 = 0.78\nQ1 = P * tan(acos(pf1))\nV = 480 V\nf = 60 Hz\nC = 1 mF\n\
Qc = 2*pi*f*C*V^2\nS2 = P + j*(Q1 - Qc)\npf = P / abs(S2)\n\
@sweep \"Power factor against bank size\" C = 0 .. 5 mF, 51 points : pf, S2\n\
@sweep f = 50 Hz .. 60 Hz, step 2 Hz : Qc\n";

#[test]
fn declared_sweeps_run_from_the_library_and_the_command_line() {
    let e = engine(DECLARED);
    let runs = ohmsheet::sweep::declared::run_declared(&e.model);
    assert_eq!(runs.len(), 2);
    let r = runs[0].as_ref().unwrap();
    assert_eq!(r.title.as_deref(), Some("Power factor against bank size"));
    assert_eq!(r.len(), 51);
    assert_eq!(r.series[0].name, "pf");
    // At C = 0 the power factor is the load's own.
    assert!((r.values[0][0].re - 0.78).abs() < 1e-12);
    let r2 = runs[1].as_ref().unwrap();
    assert_eq!(r2.len(), 6);
    assert_eq!(r2.x(0, 5), 60.0);
    let svg = ohmsheet::plot::svg(r, &ohmsheet::plot::PlotOptions::default()).unwrap();
    assert!(roxmltree::Document::parse(&svg).is_ok());
    assert!(svg.contains("C [mF]"));
    // From the command line, without --vary.
    let mut f = tempfile::Builder::new().suffix(".ohm").tempfile().unwrap();
    std::io::Write::write_all(&mut f, DECLARED.as_bytes()).unwrap();
    ohmsheet()
        .args(["sweep", f.path().to_str().unwrap(), "--declared", "2", "--csv", "-"])
        .assert()
        .code(0)
        .stdout(predicate::str::starts_with("f [Hz],Qc [VA]\n50,"));
}

#[test]
fn declared_sweep_mistakes_are_reported_by_run() {
    let bad = |line: &str| {
        let src = format!("C = 1 mF\nX = 1 / (2*pi*60 Hz * C)\n{line}\n");
        errors(&src).into_iter().find(|d| d.is_error()).unwrap()
    };
    assert_eq!(bad("@sweep C = 0 .. 2 mF").code, ErrorCode::BadDirective);
    assert_eq!(bad("@sweep C = 0 .. 2 V : X").code, ErrorCode::DimensionMismatch);
    assert_eq!(bad("@sweep C = 0 .. 2 mF, 9 bananas : X").code, ErrorCode::BadDirective);
    assert_eq!(bad("@sweep X = 0 .. 2 Ω : C").code, ErrorCode::NotAnInput);
    let d = bad("@sweep C = 0 .. 2 mF : Xx");
    assert_eq!(d.code, ErrorCode::UnknownName);
    assert!(d.span.is_some());
    assert_eq!(
        bad("@sweep C = 0 .. 2 mF, 20000000 points : X").code,
        ErrorCode::TooManyPoints
    );
}

#[test]
fn library_sweep_for_the_session() {
    let req = ohmsheet::sweep::SweepRequest {
        vary: vec![ohmsheet::sweep::AxisRequest {
            range: "C=0..5mF",
            points: Some(11),
            step: None,
            log: false,
        }],
        show: vec!["pf", "abs(S2)"],
        max_points: ohmsheet::sweep::DEFAULT_MAX_POINTS,
    };
    let r = ohmsheet::sweep::sweep(ohmsheet::sheet::Sheet::from_text("t.ohm", PLANT), &req).unwrap();
    assert_eq!(r.len(), 11);
    // |S2| at C = 0 is the load's apparent power P / pf1.
    assert!((r.values[1][0].re - 400e3 / 0.78).abs() < 1e-6);
    let text = ohmsheet::plot::chart::chart(&r, 72, false);
    assert!(text.contains("pf") && text.contains("C [mF]"), "{text}");
}

#[test]
fn in_place_edits_give_way_to_a_whole_compile_when_searches_are_involved() {
    use ohmsheet::engine::edit::EditError;
    use ohmsheet::syntax::ast::StmtKind;
    let line = |e: &mut ohmsheet::engine::Engine, text: &str| {
        let f = e
            .model
            .sources
            .add(ohmsheet::diag::SourceFile::new("typed", None, text.to_string()));
        ohmsheet::syntax::parse_line(text, f, 0, 1).unwrap().unwrap()
    };
    // A sheet with a search: an edit in place would leave the search's
    // copy of the code behind.
    let mut e = engine(PLANT);
    let stmt = line(&mut e, "pf1 = 0.8");
    let StmtKind::Def(d) = stmt.kind.clone() else {
        unreachable!()
    };
    let id = e.model.id("pf1").unwrap();
    assert!(matches!(e.redefine(id, &stmt, &d), Err(EditError::Recompile(_))));
    // A new search in a sheet without one.
    let mut e = engine("C = 1 mF\nX = 1 / (2*pi*60 Hz * C)\n");
    let stmt = line(&mut e, "Cx = C in 1 µF .. 1 mF where X = 10 Ω");
    let StmtKind::Def(d) = stmt.kind.clone() else {
        unreachable!()
    };
    assert!(matches!(e.add_cell(&stmt, &d), Err(EditError::Recompile(_))));
    // A bare search typed to be evaluated is refused with a hint.
    let stmt = line(&mut e, "C in 1 µF .. 1 mF where X = 10 Ω");
    let StmtKind::Expr(x) = stmt.kind.clone() else {
        unreachable!()
    };
    let err = e.evaluate(&x).unwrap_err();
    assert_eq!(err.code, ErrorCode::BadSearch);
}
