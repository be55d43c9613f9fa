//! Sensitivities by forward-mode differentiation through the compiled
//! program (src/spread/forward.rs), and the documented difference scheme
//! (Richardson-extrapolated central differences of the whole program)
//! verified against it: on the benchmark feeder, on the demo sheet, through
//! library functions and a network, and on random sheets of every
//! elementary operation. Closed forms check forward mode to rounding.

use ohmsheet::engine::tolerance::Direction;
use ohmsheet::spread::{sensitivities, sensitivities_by, Plan, Scheme, SensMethod, SensResult};
use proptest::prelude::*;

use crate::spread::plan;

/// The proptest settings these properties run with.
fn cfg(cases: u32) -> ProptestConfig {
    crate::common::proptest_cfg(cases)
}

fn all_cells(path: &str) -> Plan {
    let p = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(path);
    let text = std::fs::read_to_string(&p).unwrap();
    match ohmsheet::spread::plan_for(ohmsheet::sheet::Sheet::from_text(&p.display().to_string(), &text), None) {
        Ok(p) => p,
        Err(f) => panic!("{}", f.render_plain()),
    }
}

/// Every row of `a` against the row of `b` for the same input and
/// direction: magnitude and angle sensitivities within `rel` of the
/// larger of 1 and their size, contributions within `rel` of theirs.
/// Returns how many numbers were compared.
fn agree(p: &Plan, a: &SensResult, b: &SensResult, rel: f64) -> usize {
    let close = |x: f64, y: f64| (x.is_nan() && y.is_nan()) || (x - y).abs() <= rel * x.abs().max(y.abs()).max(1.0);
    let mut n = 0;
    for (ca, cb) in a.cells.iter().zip(&b.cells) {
        assert_eq!(ca.name, cb.name);
        assert_eq!(ca.rows.len(), cb.rows.len());
        for ra in &ca.rows {
            let rb = cb.rows.iter().find(|r| r.input == ra.input && r.dir == ra.dir).unwrap();
            let what = format!("{} to {} ({:?})", ca.name, p.inputs[ra.input].name, ra.dir);
            assert!(close(ra.mag, rb.mag), "{what}: {} against {}", ra.mag, rb.mag);
            match (ra.angle, rb.angle) {
                (Some(x), Some(y)) => assert!(close(x, y), "{what} angle: {x} against {y}"),
                (None, None) => {}
                other => panic!("{what}: {other:?}"),
            }
            // A contribution far smaller than the cell's whole spread is
            // judged against the whole (the differences' rounding is on
            // the cell's scale).
            let (x, y) = (ra.contribution, rb.contribution);
            assert!(
                (x.is_nan() && y.is_nan()) || (x - y).abs() <= rel * x.abs().max(y.abs()).max(ca.gum_std),
                "{what} contribution: {x} against {y}"
            );
            n += 1;
        }
        let (x, y) = (ca.gum_std, cb.gum_std);
        assert!(
            (x - y).abs() <= rel * x.abs().max(y.abs()),
            "{}: u {x} against {y}",
            ca.name
        );
    }
    n
}

// The 36-cell feeder with twenty toleranced inputs: every cell's
// derivatives by forward mode, exact (no library function on the way),
// and the difference scheme within its stated accuracy, O(h⁴) with
// h = 10⁻³.
#[test]
fn the_difference_scheme_agrees_with_forward_mode_on_the_feeder() {
    let p = all_cells("bench/feeder_tol20.ohm");
    let f = sensitivities(&p);
    assert!(f.cells.iter().all(|c| c.method == SensMethod::Forward));
    let d = sensitivities_by(&p, Scheme::Differences);
    assert!(d.cells.iter().all(|c| c.method == SensMethod::Differences));
    let n = agree(&p, &f, &d, 1e-8);
    assert!(n >= 20 * 27, "{n} rows compared");
}

// The demo of the tolerance analysis: library-free formulas, forward mode
// exact, the difference scheme agreeing.
#[test]
fn the_difference_scheme_agrees_with_forward_mode_on_the_demo() {
    let p = all_cells("sheets-demo/paper-mill-bank-spread.ohm");
    let f = sensitivities(&p);
    let d = sensitivities_by(&p, Scheme::Differences);
    assert!(agree(&p, &f, &d, 1e-7) > 20);
}

// Through library functions (power, per-unit and three-phase helpers),
// which forward mode differences along their arguments.
#[test]
fn through_library_functions_the_schemes_agree() {
    let src = "P = 400 kW within 10 %\npf = 0.82 within 2 %\nV = 415 V within 6 %\n\
               S = s_of_p(P, pf)\nZ = 3 * (V / sqrt(3))^2 / conj(S)\nI = V / sqrt(3) / Z\n";
    let p = plan(src, &["S", "Z", "I"]);
    let f = sensitivities(&p);
    assert_eq!(f.cells[0].method, SensMethod::ForwardDifferenced);
    let d = sensitivities_by(&p, Scheme::Differences);
    assert_eq!(agree(&p, &f, &d, 1e-8), 9);
    // |S| = P/pf: −1 % per % of pf, +1 % per % of P (closed form).
    let by = |n: &str| f.cells[0].rows.iter().find(|r| p.inputs[r.input].name == n).unwrap();
    assert!((by("P").mag - 1.0).abs() < 1e-9, "{}", by("P").mag);
    assert!((by("pf").mag + 1.0).abs() < 1e-9, "{}", by("pf").mag);
}

// Through a network solve: a divider drawn as a network, Vo = Vs·R2/(R1 +
// R2), whose sensitivities are ∓R1/(R1 + R2) (closed form).
#[test]
fn through_a_network_solve_the_schemes_agree() {
    let src = "f = 50 Hz\nVs = 10 V\nR1 = 1 kΩ within 5 %\nR2 = 3 kΩ within 1 %\n\
               network div at f\n  E = emf(a, ground, Vs)\n  Ra = branch(a, b, R1)\n  Rb = branch(b, ground, R2)\nend\n\
               Vo = net_v(div, b)\n";
    let p = plan(src, &["Vo"]);
    let f = sensitivities(&p);
    assert_eq!(f.cells[0].method, SensMethod::ForwardDifferenced);
    let by = |n: &str| f.cells[0].rows.iter().find(|r| p.inputs[r.input].name == n).unwrap();
    assert!((by("R2").mag - 0.25).abs() < 1e-9, "{}", by("R2").mag);
    assert!((by("R1").mag + 0.25).abs() < 1e-9, "{}", by("R1").mag);
    let d = sensitivities_by(&p, Scheme::Differences);
    agree(&p, &f, &d, 1e-8);
}

// An in-sheet search has no forward mode: the difference scheme is taken,
// and says so.
#[test]
fn a_sheet_with_a_search_takes_the_difference_scheme() {
    let src = "R = 10 Ω within 5 %\nX = 20 Ω\nG = 1\nY = G * R\nC = G in 0 .. 100 where Y = X * 2\nZ = C * 3\n";
    let p = plan(src, &["Z"]);
    let s = sensitivities(&p);
    assert_eq!(s.cells[0].method, SensMethod::Differences);
    // G·R = 2X, so Z = 3·2X/R: −1 % per %.
    assert!(
        (s.cells[0].rows[0].mag + 1.0).abs() < 1e-6,
        "{}",
        s.cells[0].rows[0].mag
    );
}

// Closed forms to rounding: forward mode has no truncation error.
// A divider's normalised sensitivities are ±R1/(R1 + R2) = ±0.25; a
// phasor's angle moves its current's angle one for one and leaves its
// magnitude; |V|² / R moves 2 % per % of V and −1 % per % of R.
#[test]
fn forward_mode_meets_closed_forms_to_rounding() {
    let p = plan(
        "Vs = 10 V\nR1 = 1 kΩ within 5 %\nR2 = 3 kΩ within 1 %\nVo = Vs * R2 / (R1 + R2)\n",
        &["Vo"],
    );
    let s = sensitivities(&p);
    for r in &s.cells[0].rows {
        let want = if p.inputs[r.input].name == "R2" { 0.25 } else { -0.25 };
        assert!((r.mag - want).abs() < 4e-16, "{} {}", p.inputs[r.input].name, r.mag);
    }
    let p = plan(
        "V = 230 V ∠ 30° within 2 % angle 3°\nR = 50 Ω within 1 %\nI = V / R\nP = abs(V)^2 / R\n",
        &["I", "P"],
    );
    let s = sensitivities(&p);
    let row = |c: usize, n: &str, dir: Direction| {
        s.cells[c]
            .rows
            .iter()
            .find(|r| p.inputs[r.input].name == n && r.dir == dir)
            .unwrap()
            .clone()
    };
    let a = row(0, "V", Direction::Angle);
    assert_eq!(a.mag, 0.0, "|I| does not move with V's angle");
    assert!((a.angle.unwrap() - 1.0).abs() < 4e-16, "{:?}", a.angle);
    assert!((row(0, "V", Direction::Magnitude).mag - 1.0).abs() < 4e-16);
    assert!((row(1, "V", Direction::Magnitude).mag - 2.0).abs() < 8e-16);
    assert!((row(1, "R", Direction::Magnitude).mag + 1.0).abs() < 4e-16);
}

// A short and an open on the way: R || 0 is a short whatever R is, so it
// has no proportional sensitivity (its value is 0) and no contribution;
// R || ∞ is R, one for one; R -- 0 is R.
#[test]
fn shorts_and_opens_on_the_way() {
    let src = "R = 10 Ω within 5 %\nZs = 0 Ω\nZo = (1/0) Ω\nA = R || Zs\nB = R || Zo\nC = R -- Zs\nD = Zo || Zo || R\n";
    let p = plan(src, &["A", "B", "C", "D"]);
    let s = sensitivities(&p);
    assert!(s.cells[0].rows[0].mag.is_nan(), "A is 0: {:?}", s.cells[0].rows[0]);
    assert_eq!(s.cells[0].gum_std, 0.0);
    for c in 1..4 {
        assert_eq!(s.cells[c].rows[0].mag, 1.0, "{}", s.cells[c].name);
    }
    let d = sensitivities_by(&p, Scheme::Differences);
    agree(&p, &s, &d, 1e-9);
}

/// A random formula over the inputs a (real), b (complex, with an angle
/// band) and c (real), built from every elementary operation the compiled
/// program has.
fn formula() -> impl Strategy<Value = String> {
    let leaf = prop_oneof![
        Just("a".to_string()),
        Just("b".to_string()),
        Just("c".to_string()),
        Just("1.3".to_string()),
        Just("(0.4 + j0.9)".to_string()),
    ];
    leaf.prop_recursive(4, 24, 2, |inner| {
        prop_oneof![
            (inner.clone(), inner.clone()).prop_map(|(x, y)| format!("({x} + {y})")),
            (inner.clone(), inner.clone()).prop_map(|(x, y)| format!("({x} - {y})")),
            (inner.clone(), inner.clone()).prop_map(|(x, y)| format!("({x} * {y})")),
            (inner.clone(), inner.clone()).prop_map(|(x, y)| format!("({x} / {y})")),
            (inner.clone(), inner.clone()).prop_map(|(x, y)| format!("({x} || {y})")),
            (inner.clone(), inner.clone()).prop_map(|(x, y)| format!("({x} ∠ re({y}))")),
            (inner.clone(), inner.clone()).prop_map(|(x, y)| format!("max({x}, {y})")),
            (inner.clone(), inner.clone()).prop_map(|(x, y)| format!("atan2(re({x}), re({y}))")),
            (inner.clone(), inner.clone()).prop_map(|(x, y)| format!("(abs({x}) + 1)^{y}")),
            inner.clone().prop_map(|x| format!("sqrt({x})")),
            inner.clone().prop_map(|x| format!("exp({x} / 8)")),
            inner.clone().prop_map(|x| format!("ln({x})")),
            inner.clone().prop_map(|x| format!("log10({x})")),
            inner.clone().prop_map(|x| format!("sin({x})")),
            inner.clone().prop_map(|x| format!("cos({x})")),
            inner.clone().prop_map(|x| format!("tan({x} / 4)")),
            inner.clone().prop_map(|x| format!("asin({x} / 9)")),
            inner.clone().prop_map(|x| format!("acos({x} / 9)")),
            inner.clone().prop_map(|x| format!("atan({x})")),
            inner.clone().prop_map(|x| format!("abs({x})")),
            inner.clone().prop_map(|x| format!("conj({x})")),
            inner.clone().prop_map(|x| format!("re({x})")),
            inner.clone().prop_map(|x| format!("im({x})")),
            inner.clone().prop_map(|x| format!("(1 / {x})")),
            inner.clone().prop_map(|x| format!("({x})^3")),
            inner.clone().prop_map(|x| format!("-({x})")),
        ]
    })
}

proptest! {
    #![proptest_config(cfg(300))]

    // Wherever the sheet is smooth at the stated point, the difference
    // scheme meets forward mode. A formula whose value is not a number, or
    // which sits on a branch cut or a kink (its two one-sided differences
    // disagree), is not judged: there the two schemes answer different
    // questions (the slope of the branch taken, or of the jump).
    #[test]
    fn the_schemes_agree_on_random_smooth_sheets(y in formula()) {
        let src = format!("a = 2.5 within 5 %\nb = (1.5 + j0.7) within 3 % angle 2°\nc = 0.8 within 10 %\ny = {y}\n");
        let sheet = ohmsheet::sheet::Sheet::from_text("t.ohm", &src);
        let p = match ohmsheet::spread::plan_for(sheet, Some(&["y".to_string()])) {
            Ok(p) => p,
            Err(_) => return Ok(()),
        };
        let v = p.shown[0].nominal;
        prop_assume!(v.re.is_finite() && v.im.is_finite() && v.norm() > 1e-6 && v.norm() < 1e6);
        let f = sensitivities(&p);
        let d = sensitivities_by(&p, Scheme::Differences);
        prop_assert_eq!(f.cells[0].method, SensMethod::Forward);
        for rf in &f.cells[0].rows {
            let rd = d.cells[0].rows.iter().find(|r| r.input == rf.input && r.dir == rf.dir).unwrap();
            // Smooth here: the sheet at ±h agrees with a straight line
            // through the stated point to second order.
            let smooth = one_sided_agree(&p, rf.input, rf.dir);
            if !smooth || !rd.mag.is_finite() {
                continue;
            }
            // The differences' truncation, O(h⁴·y⁽⁵⁾), grows with the
            // sheet's curvature: log10(cos(2.3^a)) at a = 2.5 has
            // −13.4075449893743 % per % (mpmath at 50 digits, forward mode
            // −13.4075449893745) and the differences are 1e-5 off it.
            let tol = 1e-4 * rf.mag.abs().max(rd.mag.abs()).max(1.0);
            prop_assert!((rf.mag - rd.mag).abs() <= tol, "{}: {:?} {} against {}", y, rf.dir, rf.mag, rd.mag);
            if let (Some(x), Some(z)) = (rf.angle, rd.angle) {
                let tol = 1e-4 * x.abs().max(z.abs()).max(1.0);
                prop_assert!((x - z).abs() <= tol, "{} angle: {:?} {} against {}", y, rf.dir, x, z);
            }
        }
    }
}

/// Whether the one-sided differences of the shown value along a direction
/// agree (no kink, jump or cut within 10⁻³ of the stated point).
fn one_sided_agree(p: &Plan, input: usize, dir: Direction) -> bool {
    let x = p.inputs[input].nominal;
    let nominal = p.input_values(&p.nominal_point());
    let at = |h: f64| {
        let mut v = nominal.clone();
        v[input] = match dir {
            Direction::Angle => x * num_complex::Complex64::from_polar(1.0, h),
            _ => x * (1.0 + h),
        };
        v
    };
    let h = 1e-3;
    let out = p.evaluate_values(&[nominal.clone(), at(h), at(-h), at(h / 2.0), at(-h / 2.0)]);
    let y: Vec<_> = out.iter().map(|o| o[0]).collect();
    if y.iter().any(|z| !z.re.is_finite() || !z.im.is_finite()) {
        return false;
    }
    let fwd = (y[1] - y[0]) / h;
    let back = (y[0] - y[2]) / h;
    let fwd2 = (y[3] - y[0]) / (h / 2.0);
    let back2 = (y[0] - y[4]) / (h / 2.0);
    // The one-sided slopes differ by O(h) where smooth; by far more where
    // the formula kinks or jumps.
    let scale = fwd.norm().max(back.norm()).max(y[0].norm()).max(1e-300);
    (fwd - back).norm() < 0.1 * scale && (fwd2 - back2).norm() < 0.1 * scale
}

// At the edges, against closed forms:
// - a negative real on the branch cut of sqrt: √(−4·(1+ε)) = 2j·√(1+ε),
//   0.5 % per %; turned by θ it stays on the upper side the value was
//   taken on (principal value, DLMF §4.2), √(4·e^{j(π+θ)}) = 2·e^{j(π+θ)/2},
//   so its angle moves 0.5° per degree;
// - ln of −1: |ln(−(1+ε))| = |ln(1+ε) + jπ|, flat at ε = 0;
// - a complex power from W and var, S = P + jQ: ∂ln|S|/∂ln P = P²/|S|²
//   (0.64 for P = 80 kW, Q = 60 kvar), Q²/|S|² = 0.36 for Q;
// - per-unit: I = 1 pu / z, −1 % per % of z;
// - a negative reactive power keeps its sign: Qc = −300 kvar ± 10 %
//   gives Qnet = Ql + Qc, ∂Qnet/∂ln|Qc| = Qc, so −300/200 = −1.5 % per %.
#[test]
fn forward_mode_at_the_edges() {
    let p = plan(
        "x = -4 within 1 % angle 2°\ny = sqrt(x)\nl = ln(-1 * abs(x) / 4)\n",
        &["y", "l"],
    );
    let s = sensitivities(&p);
    let row = |c: usize, dir: Direction| s.cells[c].rows.iter().find(|r| r.dir == dir).unwrap().clone();
    assert!((row(0, Direction::Magnitude).mag - 0.5).abs() < 1e-15);
    assert!((row(0, Direction::Angle).angle.unwrap() - 0.5).abs() < 1e-15);
    assert_eq!(row(1, Direction::Magnitude).mag, 0.0);
    let p = plan(
        "P = 80 kW within 5 %\nQ = 60 kvar within 5 %\nS = P + j*Q\nz = 0.08 pu within 10 %\nI = 1 pu / z\n\
         Ql = 500 kvar\nQc = -300 kvar within 10 %\nQnet = Ql + Qc\n",
        &["S", "I", "Qnet"],
    );
    let s = sensitivities(&p);
    let by = |c: usize, n: &str| {
        s.cells[c]
            .rows
            .iter()
            .find(|r| p.inputs[r.input].name == n)
            .unwrap()
            .mag
    };
    assert!((by(0, "P") - 0.64).abs() < 1e-15, "{}", by(0, "P"));
    assert!((by(0, "Q") - 0.36).abs() < 1e-15, "{}", by(0, "Q"));
    assert!((by(1, "z") + 1.0).abs() < 1e-15, "{}", by(1, "z"));
    assert!((by(2, "Qc") + 1.5).abs() < 1e-15, "{}", by(2, "Qc"));
    assert!(s.cells.iter().all(|c| c.method == SensMethod::Forward));
}
