//! `ohmsheet spread` against the outside world:
//! - worst case against brute force over a fine grid of the tolerance box
//!   computed with numpy (tests/reference/gen_spread.py), with the extreme
//!   at a corner, inside the box and on a ridge;
//! - sensitivities against central differences at 50 digits (mpmath, same
//!   script): forward mode to 1e-12, the difference scheme to 1e-8;
//! - the first-order standard deviation by the law of propagation of
//!   uncertainty (JCGM 100:2008, the GUM, §5.1.2) against Monte Carlo,
//!   within the Monte Carlo's own statistical bound;
//! - Monte Carlo's coverage interval (JCGM 101:2008 §7.7) against the
//!   exact interval of a uniform output;
//! - with every tolerance zero, every analysis gives the stated value.

use ohmsheet::spread::{monte_carlo, sensitivities, sensitivities_by, worst_case, McOptions, Scheme};
use proptest::prelude::*;
use serde_json::Value;

use crate::common::repo;
use crate::spread::plan;

fn vectors() -> Value {
    let text = std::fs::read_to_string(repo("tests/reference/spread_vectors.json")).expect("spread_vectors.json");
    serde_json::from_str(&text).expect("json")
}

#[test]
fn worst_case_agrees_with_a_numpy_grid_of_the_box() {
    let v = vectors();
    let cases = v["worst_case"].as_array().unwrap();
    assert!(cases.len() >= 4);
    for c in cases {
        let name = c["name"].as_str().unwrap();
        let p = plan(c["sheet"].as_str().unwrap(), &[c["cell"].as_str().unwrap()]);
        let w = worst_case(&p);
        let cell = &w.cells[0];
        let (gmin, gmax) = (c["grid_min"].as_f64().unwrap(), c["grid_max"].as_f64().unwrap());
        // Every grid point lies in the box, so the search must reach at
        // least as far as the grid (to rounding); the grid is fine enough
        // that the true extreme lies within 1e-6 of its best point.
        let tol = 1e-9 * gmax.abs();
        assert!(
            cell.max.value >= gmax - tol,
            "{name}: max {} < grid {gmax}",
            cell.max.value
        );
        assert!(
            cell.min.value <= gmin + tol,
            "{name}: min {} > grid {gmin}",
            cell.min.value
        );
        assert!(
            cell.max.value - gmax <= 1e-6 * gmax.abs(),
            "{name}: max {} ≫ grid {gmax}",
            cell.max.value
        );
        assert!(
            gmin - cell.min.value <= 1e-6 * gmin.abs(),
            "{name}: min {} ≪ grid {gmin}",
            cell.min.value
        );
    }
    // Where the extremes lie: the divider's at corners, the largest power
    // inside the box along R (R = Rs at its low end, 4.5 Ω).
    let w = worst_case(&plan(cases[1]["sheet"].as_str().unwrap(), &["Pl"]));
    assert!(!w.cells[0].max.at_corner);
    let r = w.cells[0].max.inputs[1].re;
    assert!((r - 4.5).abs() < 1e-5, "R at the largest power: {r}");
    let w = worst_case(&plan(cases[0]["sheet"].as_str().unwrap(), &["Vo"]));
    assert!(w.cells[0].max.at_corner && w.cells[0].min.at_corner);
}

#[test]
fn sensitivities_agree_with_high_precision_differences() {
    let v = vectors();
    for c in v["sensitivities"].as_array().unwrap() {
        let rows = c["rows"].as_array().unwrap();
        let cells: Vec<&str> = {
            let mut n: Vec<&str> = rows.iter().map(|r| r["cell"].as_str().unwrap()).collect();
            n.dedup();
            n.sort();
            n.dedup();
            n
        };
        let p = plan(c["sheet"].as_str().unwrap(), &cells);
        // Forward mode is exact to rounding; the documented difference
        // scheme to its O(h⁴) truncation.
        for (scheme, tol) in [(Scheme::Forward, 1e-12), (Scheme::Differences, 1e-8)] {
            let s = sensitivities_by(&p, scheme);
            let mut n = 0;
            for r in rows {
                let cell = s.cells.iter().find(|x| x.name == r["cell"].as_str().unwrap()).unwrap();
                let dir = r["direction"].as_str().unwrap();
                let row = cell
                    .rows
                    .iter()
                    .find(|x| {
                        p.inputs[x.input].name == r["input"].as_str().unwrap()
                            && matches!(
                                (x.dir, dir),
                                (ohmsheet::engine::tolerance::Direction::Angle, "angle")
                                    | (ohmsheet::engine::tolerance::Direction::Magnitude, "magnitude")
                            )
                    })
                    .unwrap();
                let want = r["magnitude"].as_f64().unwrap();
                assert!(
                    (row.mag - want).abs() <= tol * want.abs().max(1.0),
                    "{scheme:?}: {} to {} {dir}: {} against {want}",
                    cell.name,
                    r["input"],
                    row.mag
                );
                match (row.angle, r["angle"].as_f64()) {
                    (Some(a), Some(want)) => assert!(
                        (a - want).abs() <= tol * want.abs().max(1.0),
                        "{scheme:?}: {} angle to {} {dir}: {a} against {want}",
                        cell.name,
                        r["input"]
                    ),
                    (None, None) => {}
                    other => panic!("angle present in one only: {other:?}"),
                }
                n += 1;
            }
            assert!(n >= 15, "{n} rows");
        }
    }
}

/// The standard deviation of a sample standard deviation from N samples
/// of a distribution with kurtosis κ is about σ·√((κ − 1)/(4N)) (a
/// large-sample result; any text on sampling distributions, from memory).
/// κ ≤ 3 for the sums of uniform and normal inputs here.
fn std_bound(sigma: f64, n: usize) -> f64 {
    4.0 * sigma * (2.0 / (4.0 * n as f64)).sqrt()
}

#[test]
fn gum_first_order_agrees_with_monte_carlo() {
    let n = 200_000;
    // Linear: R1 + R2 + R3 in series. u by GUM §4.3.7 (uniform: a/√3) and
    // a normal stated at 2σ: u² = (50/√3)² + (30/√3)² + (20/2)² Ω².
    let p = plan(
        "R1 = 1 kΩ within 5 %\nR2 = 3 kΩ within 1 %\nR3 = 2 kΩ within 1 % normal 2σ\nRt = R1 + R2 + R3\n",
        &["Rt"],
    );
    let u = ((50.0f64 / 3f64.sqrt()).powi(2) + (30.0f64 / 3f64.sqrt()).powi(2) + 10.0f64.powi(2)).sqrt();
    let s = sensitivities(&p);
    assert!(
        (s.cells[0].gum_std - u).abs() < 1e-9 * u,
        "{} against {u}",
        s.cells[0].gum_std
    );
    let mc = monte_carlo(
        &p,
        &McOptions {
            samples: n,
            seed: 2026,
            ..Default::default()
        },
    );
    let c = &mc.cells[0];
    assert!(
        (c.std_dev - u).abs() < std_bound(u, n),
        "MC {} against GUM {u}",
        c.std_dev
    );
    // The mean: 6 kΩ within 4σ/√N.
    assert!((c.mean - 6000.0).abs() < 4.0 * u / (n as f64).sqrt());

    // Mildly non-linear: a divider and a phasor magnitude. The first-order
    // law holds to second order in the tolerances (a few per cent of u at
    // most here), inside the statistical bound plus that.
    for (src, cell) in [
        ("Vs = 10 V\nR1 = 1 kΩ within 5 %\nR2 = 3 kΩ within 2 % normal 3σ\nVo = Vs * R2 / (R1 + R2)\n", "Vo"),
        (
            "Vs = 230 V ∠ 0° within 2 % angle 1°\nZs = (0.5 + j4) Ω within 10 %\nZl = (20 + j10) Ω within 5 % angle 5°\nI = Vs / (Zs + Zl)\n",
            "I",
        ),
    ] {
        let p = plan(src, &[cell]);
        let g = sensitivities(&p).cells[0].gum_std;
        let c = &monte_carlo(
            &p,
            &McOptions {
                samples: n,
                seed: 7,
                ..Default::default()
            },
        )
        .cells[0];
        assert!(
            (c.std_dev - g).abs() < std_bound(g, n) + 0.02 * g,
            "{cell}: MC {} against GUM {g}",
            c.std_dev
        );
    }
}

// A single uniform input: y = 2·R, R uniform on [900, 1100] Ω, so y is
// uniform on [1800, 2200] Ω and its probabilistically symmetric 95 %
// interval is [1810, 2190] Ω exactly (JCGM 101:2008 §5.3.3). The interval
// from N sorted samples misses each end by about w·√(p(1 − p)/N) (the
// standard error of a quantile of a uniform distribution).
#[test]
fn coverage_interval_of_a_uniform_output() {
    let n = 100_000;
    let p = plan("R = 1 kΩ within 10 %\ny = 2 * R\n", &["y"]);
    let mc = monte_carlo(
        &p,
        &McOptions {
            samples: n,
            seed: 11,
            ..Default::default()
        },
    );
    let c = &mc.cells[0];
    let se = 400.0 * (0.025f64 * 0.975 / n as f64).sqrt();
    assert!((c.coverage.0 - 1810.0).abs() < 4.0 * se, "{:?}", c.coverage);
    assert!((c.coverage.1 - 2190.0).abs() < 4.0 * se, "{:?}", c.coverage);
    // The median and the standard deviation w/√12 (GUM §4.3.7).
    let med = c.percentiles.iter().find(|x| x.0 == 0.5).unwrap().1;
    assert!((med - 2000.0).abs() < 4.0 * 400.0 * (0.25f64 / n as f64).sqrt());
    assert!((c.std_dev - 400.0 / 12f64.sqrt()).abs() < std_bound(400.0 / 12f64.sqrt(), n));
    assert!(c.min >= 1800.0 && c.max <= 2200.0);
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]

    /// With every tolerance zero, however written, each analysis returns
    /// the stated value: worst case, every Monte Carlo sample, and zero
    /// sensitivity contributions.
    #[test]
    fn zero_tolerances_return_the_stated_value(
        r in 0.1f64..1000.0,
        x in -500.0f64..500.0,
        v in 1.0f64..1e5,
        deg in -179.0f64..179.0,
        form in 0usize..4,
    ) {
        let band = ["within 0 %", "within -0 % .. +0 %", "within 0 Ω angle 0°", "within 0 % normal 3σ"][form];
        let src = format!(
            "Vs = {v} V ∠ {deg}° within 0 % angle 0°\nZ = ({r} + j{x}) Ω {band}\n\
             Q = 2 kvar among 2 kvar, 2 kvar\nI = Vs / Z\nS = Vs * conj(I) + j*Q\npf = re(S) / abs(S)\n"
        );
        let p = plan(&src, &["I", "S", "pf"]);
        let w = worst_case(&p);
        let mc = monte_carlo(&p, &McOptions { samples: 130, ..Default::default() });
        let s = sensitivities(&p);
        for c in 0..3 {
            let nom = w.cells[c].nominal;
            prop_assert_eq!(w.cells[c].min.value, nom);
            prop_assert_eq!(w.cells[c].max.value, nom);
            prop_assert_eq!(mc.cells[c].min, nom);
            prop_assert_eq!(mc.cells[c].max, nom);
            prop_assert_eq!(mc.cells[c].mean, nom);
            prop_assert_eq!(s.cells[c].gum_std, 0.0);
        }
    }
}
