//! The report's spread section: worst case with the point of each
//! extreme, the Monte Carlo summary with its seed, coverage interval and a
//! histogram per cell, and the ranked sensitivities with a ranking chart
//! per cell — the analyses of `crate::spread`, as text the layouts set
//! out, with the caution on what stated tolerances cover.

use serde::Serialize;

use super::Plot;
use crate::engine::tolerance::Direction;
use crate::output::spread::{Analyses, CAUTION};
use crate::spread::{Measure, Method};

#[derive(Clone, Debug, Serialize)]
pub struct SpreadSection {
    pub caution: &'static str,
    pub inputs: Vec<SpreadInput>,
    /// The cells shown: those some toleranced input reaches.
    pub worst: Option<WorstPart>,
    pub monte_carlo: Option<McPart>,
    pub sensitivities: Option<Vec<SensPart>>,
    /// Histograms, then ranking charts; rows refer to them by index.
    pub figures: Vec<Plot>,
    /// The numbers, as `ohmsheet spread --format json` gives them.
    pub data: serde_json::Value,
}

#[derive(Clone, Debug, Serialize)]
pub struct SpreadInput {
    pub name: String,
    pub stated: String,
    pub tolerance: String,
}

#[derive(Clone, Debug, Serialize)]
pub struct WorstPart {
    /// How the extremes were found, in words.
    pub method: String,
    pub rows: Vec<WorstRow>,
}

#[derive(Clone, Debug, Serialize)]
pub struct WorstRow {
    /// The cell, with ` |·|` when its magnitude is judged.
    pub cell: String,
    pub stated: String,
    pub smallest: String,
    pub smallest_at: String,
    pub largest: String,
    pub largest_at: String,
}

#[derive(Clone, Debug, Serialize)]
pub struct McPart {
    pub samples: usize,
    pub seed: u64,
    /// In words: samples, seed, law, how the interval is taken.
    pub method: String,
    pub rows: Vec<McRow>,
}

#[derive(Clone, Debug, Serialize)]
pub struct McRow {
    pub cell: String,
    pub stated: String,
    pub mean: String,
    pub std_dev: String,
    pub interval: String,
    pub p1_p99: String,
    /// Samples where the cell had no number.
    pub undefined: usize,
    /// Index of its histogram in `figures`.
    pub figure: Option<usize>,
}

#[derive(Clone, Debug, Serialize)]
pub struct SensPart {
    pub cell: String,
    pub stated: String,
    /// The first-order standard deviation (GUM §5.1.2).
    pub first_order_std_dev: String,
    /// How the derivatives were found, in words.
    pub method: String,
    /// Whether rows carry the cell's angle.
    pub complex: bool,
    pub rows: Vec<SensLine>,
    /// Index of its ranking chart in `figures`.
    pub figure: Option<usize>,
}

#[derive(Clone, Debug, Serialize)]
pub struct SensLine {
    pub input: String,
    pub per: String,
    pub angle: String,
    pub low: String,
    pub high: String,
}

/// What the section says about its method, once.
pub const SPREAD_INTRO: &str = "Each input stated with a tolerance is moved within it, the others \
held as stated; every computed cell is judged by its value when it is real throughout, else by its \
magnitude (marked |·|).";

fn cell_name(name: &str, m: Measure) -> String {
    match m {
        Measure::Magnitude => format!("{name} |·|"),
        Measure::Value => name.to_string(),
    }
}

/// The section for analyses already run.
pub fn section(an: &Analyses, sheet: &str) -> SpreadSection {
    let plan = an.plan;
    let mut figures = Vec::new();
    // A cell no toleranced input reaches (every analysis finds it fixed)
    // is left out: it has no spread to show.
    let moves = |c: usize| {
        let w = an.worst.is_none_or(|w| w.cells[c].min.value != w.cells[c].max.value);
        let m = an.mc.is_none_or(|m| m.cells[c].std_dev != 0.0);
        let s = an.sens.is_none_or(|s| {
            s.cells[c]
                .rows
                .iter()
                .any(|r| r.mag != 0.0 || r.angle.is_some_and(|a| a != 0.0))
        });
        w || m || s
    };
    let inputs = plan
        .inputs
        .iter()
        .map(|i| SpreadInput {
            name: i.name.clone(),
            stated: crate::units::format::format_value(i.nominal, i.quantity, i.display.as_ref(), an.style).polar,
            tolerance: an.describe_spread(i),
        })
        .collect();
    let worst = an.worst.map(|w| WorstPart {
        method: match w.method {
            Method::AllCorners(n) => format!(
                "every one of the {n} corners of the tolerance box, then a search inside the box ({} points evaluated)",
                w.evaluations
            ),
            Method::GuidedCorners(n) => format!(
                "the corners the sensitivities point to, out of {n:.0}, improved one input at a time, then a search inside the box ({} points evaluated)",
                w.evaluations
            ),
        },
        rows: w
            .cells
            .iter()
            .enumerate()
            .filter(|(c, _)| moves(*c))
            .map(|(c, cell)| WorstRow {
                cell: cell_name(&cell.name, cell.measure),
                stated: an.fmt(c, cell.nominal),
                smallest: an.fmt(c, cell.min.value),
                smallest_at: an.describe_point(&cell.min),
                largest: an.fmt(c, cell.max.value),
                largest_at: an.describe_point(&cell.max),
            })
            .collect(),
    });
    let monte_carlo = an.mc.map(|mc| {
        let rows = mc
            .cells
            .iter()
            .enumerate()
            .filter(|(c, _)| moves(*c))
            .map(|(c, cell)| {
                let p = |q: f64| cell.percentiles.iter().find(|x| x.0 == q).map_or(f64::NAN, |x| x.1);
                let svg = an.histogram_svg(c).map(|p| p.0);
                figures.push(Plot {
                    title: format!("Monte Carlo histogram of {}", cell.name),
                    caption: format!(
                        "{} bins from {} to {}; shaded: the {:.0} % coverage interval {} … {}; dashed: the stated value {}.",
                        cell.histogram.counts.len(),
                        an.fmt(c, cell.histogram.lo),
                        an.fmt(c, cell.histogram.hi),
                        mc.coverage_probability * 100.0,
                        an.fmt(c, cell.coverage.0),
                        an.fmt(c, cell.coverage.1),
                        an.fmt(c, cell.nominal)
                    ),
                    svg,
                    problem: None,
                });
                McRow {
                    cell: cell_name(&cell.name, cell.measure),
                    stated: an.fmt(c, cell.nominal),
                    mean: an.fmt(c, cell.mean),
                    std_dev: an.fmt(c, cell.std_dev),
                    interval: format!("{} … {}", an.fmt(c, cell.coverage.0), an.fmt(c, cell.coverage.1)),
                    p1_p99: format!("{} … {}", an.fmt(c, p(0.01)), an.fmt(c, p(0.99))),
                    undefined: cell.undefined,
                    figure: Some(figures.len() - 1),
                }
            })
            .collect();
        McPart {
            samples: mc.samples,
            seed: mc.seed,
            method: format!(
                "{} samples of every toleranced input at once, each by its law (uniform over its band unless stated), \
                 seed {} (the same seed gives the same samples); the {:.0} % coverage interval is the probabilistically \
                 symmetric one from the sorted samples, JCGM 101:2008 §7.7",
                mc.samples,
                mc.seed,
                mc.coverage_probability * 100.0
            ),
            rows,
        }
    });
    let sensitivities = an.sens.map(|s| {
        s.cells
            .iter()
            .enumerate()
            .filter(|(c, _)| moves(*c))
            .map(|(c, cell)| {
                let complex = cell.measure == Measure::Magnitude;
                let rows = cell
                    .rows
                    .iter()
                    .map(|r| {
                        let i = &plan.inputs[r.input];
                        let (what, per) = match r.dir {
                            Direction::Angle => (format!("{} angle", i.name), "per °"),
                            _ => (i.name.clone(), "per %"),
                        };
                        SensLine {
                            input: what,
                            per: format!("{} % {per}", num(r.mag, an)),
                            angle: r.angle.map_or(String::new(), |a| format!("{}° {per}", num(a, an))),
                            low: an.fmt(c, r.low),
                            high: an.fmt(c, r.high),
                        }
                    })
                    .collect();
                let svg = an.ranking_svg(c).map(|p| p.0);
                figures.push(Plot {
                    title: format!("Ranking of the inputs for {}", cell.name),
                    caption: format!(
                        "{} with each input at the low and at the high end of its band, the others stated; largest effect first.",
                        cell.name
                    ),
                    svg,
                    problem: None,
                });
                SensPart {
                    cell: cell_name(&cell.name, cell.measure),
                    stated: an.fmt(c, cell.nominal),
                    first_order_std_dev: an.fmt(c, cell.gum_std),
                    method: cell.method.describe().to_string(),
                    complex,
                    rows,
                    figure: Some(figures.len() - 1),
                }
            })
            .collect()
    });
    SpreadSection {
        caution: CAUTION,
        inputs,
        worst,
        monte_carlo,
        sensitivities,
        figures,
        data: an.json(sheet),
    }
}

fn num(x: f64, an: &Analyses) -> String {
    if x.is_finite() {
        crate::units::format::fmt_sig(x, an.style.digits)
    } else {
        "—".into()
    }
}
