//! Checks over the tolerances: `check A ≈ B ± T over the box` holds only
//! if it holds at every point of the tolerance box (its worst point is
//! found as worst case finds a cell's extreme); `… over 99 % of samples`
//! holds if it holds in at least that share of Monte Carlo samples
//! (`CHECK_SAMPLES` of them, seed `CHECK_SEED`).
//!
//! A check is judged by its *margin*, allowed − |A − B| (≥ 0 passes),
//! over the box.

use num_complex::Complex64 as C64;

use super::{Extreme, McOptions, Plan};
use crate::engine::model::TolSpec;
use crate::engine::{check_result, CellId, Engine};

/// Monte Carlo samples for a check over a share of samples.
pub const CHECK_SAMPLES: usize = 10_000;
/// Their seed.
pub const CHECK_SEED: u64 = 1;

/// A check's verdict over the tolerances.
#[derive(Clone, Debug, PartialEq)]
pub struct CheckVerdict {
    pub cell: CellId,
    /// The share of samples required (a fraction), or `None` for the
    /// whole box.
    pub share: Option<f64>,
    pub passed: bool,
    /// The smallest margin over the box and where (`None` when the sheet
    /// states no tolerance: the box is the stated point).
    pub worst: Option<Extreme>,
    /// |A − B| and the allowance at the worst point.
    pub worst_diff: f64,
    pub worst_allowed: f64,
    /// For a share: the share of samples that passed, of how many.
    pub found_share: Option<f64>,
    pub samples: usize,
}

/// The margin of a check from its three slots (as `check_result` judges
/// it), as `margin + j·|difference|`: the real part is what worst case
/// and Monte Carlo look at.
pub fn margin(tol: Option<TolSpec>, lhs: C64, rhs: C64, t: C64) -> C64 {
    let diff = crate::engine::ops::abs(lhs - rhs);
    let allowed = match tol {
        Some(TolSpec::Relative(f)) => f * crate::engine::ops::abs(rhs),
        _ => crate::engine::ops::abs(t),
    };
    C64::new(allowed - diff, diff)
}

/// The verdicts of every check the sheet asks to hold over its
/// tolerances, in sheet order, with the plan their points refer to (none
/// when the sheet states no tolerance).
pub fn check_verdicts(engine: &Engine) -> (Option<Plan>, Vec<CheckVerdict>) {
    let m = &engine.model;
    if m.spread_checks.is_empty() {
        return (None, Vec::new());
    }
    let nominal = |id: CellId| check_result(m, id, engine.values(id));
    let plan = Plan::for_checks(engine, &m.spread_checks.iter().map(|c| c.cell).collect::<Vec<_>>()).ok();
    let Some(plan) = plan else {
        // No tolerance anywhere: the box is the stated point.
        let v = m
            .spread_checks
            .iter()
            .map(|c| {
                let r = nominal(c.cell);
                CheckVerdict {
                    cell: c.cell,
                    share: c.share,
                    passed: r.passed,
                    worst: None,
                    worst_diff: r.diff,
                    worst_allowed: r.tol,
                    found_share: c.share.map(|_| if r.passed { 1.0 } else { 0.0 }),
                    samples: 0,
                }
            })
            .collect();
        return (None, v);
    };
    let w = super::worst_case(&plan);
    let any_share = m.spread_checks.iter().any(|c| c.share.is_some());
    let samples = any_share.then(|| {
        super::sample::measures(
            &plan,
            &McOptions {
                samples: CHECK_SAMPLES,
                seed: CHECK_SEED,
                ..Default::default()
            },
        )
    });
    let v = m
        .spread_checks
        .iter()
        .enumerate()
        .map(|(c, sc)| {
            let worst = &w.cells[c].min;
            let diff = worst.z.im;
            let allowed = worst.z.re + worst.z.im;
            let nominal_ok = nominal(sc.cell).passed;
            let (passed, found) = match (sc.share, &samples) {
                (Some(share), Some(s)) => {
                    let n = s[c].len();
                    let ok = s[c].iter().filter(|&&x| x >= 0.0).count();
                    let found = ok as f64 / n.max(1) as f64;
                    (found >= share, Some(found))
                }
                _ => (nominal_ok && worst.value >= 0.0, None),
            };
            CheckVerdict {
                cell: sc.cell,
                share: sc.share,
                passed,
                worst: Some(worst.clone()),
                worst_diff: diff,
                worst_allowed: allowed,
                found_share: found,
                samples: if sc.share.is_some() { CHECK_SAMPLES } else { 0 },
            }
        })
        .collect();
    (Some(plan), v)
}
