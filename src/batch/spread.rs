//! `batch --spread CELL,…`: the analyses over the inputs' tolerances
//! (`crate::spread`) run for every case, a few columns per cell.
//!
//! Each case is put in place in a copy of one `spread::Plan` kept by the
//! worker (`Plan::restate` with the case's whole program run), then worst
//! case and a Monte Carlo run over the sheet's tolerances about the case's
//! values. Every case draws the same samples (the same seed, the same
//! streams), so two rows differ by their values, never by chance, and a
//! row's numbers do not depend on the rows around it or on the cores.

use std::sync::Arc;

use num_complex::Complex64 as C64;

use super::{plan_error, real_by_nature, shown_cell, written_in, Plan};
use crate::diag::Diagnostic;
use crate::engine::Engine;
use crate::funcs::Shape;
use crate::spread::{monte_carlo, worst_case, McOptions, Measure};
use crate::sweep::Series;
use crate::units::format::Style;

/// Columns written per cell: worst min, where, worst max, where, Monte
/// Carlo mean, standard deviation, and the 95 % coverage interval's ends.
pub const SPREAD_FIELDS: usize = 8;

/// The column suffixes, in order; `true` for a number in the cell's unit.
const SUFFIXES: [(&str, bool); SPREAD_FIELDS] = [
    ("worst_min", true),
    ("worst_min_at", false),
    ("worst_max", true),
    ("worst_max_at", false),
    ("mc_mean", true),
    ("mc_sd", true),
    ("mc_low95", true),
    ("mc_high95", true),
];

/// One cell analysed per case.
#[derive(Clone, Debug)]
struct Col {
    /// `Vbus`, or `Ibank.mag` for a cell judged by its magnitude.
    label: String,
    /// The cell's name as the sheet writes it.
    name: String,
    scale: f64,
    unit: String,
}

/// What `--spread` adds to a batch plan.
pub struct SpreadCols {
    /// The analyses' plan at the sheet's stated values; each worker
    /// works on a copy of it.
    pub(super) plan: crate::spread::Plan,
    cols: Vec<Col>,
    /// For each toleranced input, the case column that sets it.
    input_column: Vec<Option<usize>>,
    pub opts: McOptions,
}

impl std::fmt::Debug for SpreadCols {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("SpreadCols")
            .field("cols", &self.cols)
            .field("opts", &self.opts)
            .finish()
    }
}

impl Plan {
    /// Write the spread of each cell in `names` for every case: worst
    /// case and `samples` Monte Carlo samples seeded `seed`.
    pub fn with_spread(mut self, names: &[String], samples: usize, seed: u64) -> Result<Plan, Diagnostic> {
        let opts = McOptions {
            samples,
            seed,
            ..McOptions::default()
        };
        self.spread = Some(Arc::new(SpreadCols::new(&self, names, opts)?));
        Ok(self)
    }

    /// The spread columns of one case whose values read, appended to
    /// `out` (each after a comma); `slots` is the case's whole program
    /// run, `text(field)` a field of its row as written. Returns what
    /// could not be analysed: (column, value, reason).
    pub(super) fn write_spread(
        &self,
        sp: &mut crate::spread::Plan,
        slots: &[C64],
        text: &dyn Fn(usize) -> String,
        out: &mut Vec<u8>,
    ) -> Vec<(String, String, String)> {
        let Some(cols) = &self.spread else {
            return Vec::new();
        };
        let m = &*self.model;
        let empty = |out: &mut Vec<u8>, n: usize| out.extend(std::iter::repeat_n(b',', n));
        sp.restate(slots);
        if let Some((k, why)) = sp.box_problem() {
            empty(out, cols.n_fields());
            let input = &sp.inputs[k];
            let (column, value) = match cols.input_column[k] {
                Some(c) => (self.columns[c].header.clone(), text(self.columns[c].field)),
                None => (String::new(), String::new()),
            };
            let tol = m.sources.slice(input.spread.span);
            return vec![(
                column,
                value,
                format!(
                    "no spread: `{}` {tol} cannot stand at this case's value: {why}",
                    input.name
                ),
            )];
        }
        let worst = worst_case(sp);
        let mc = monte_carlo(sp, &cols.opts);
        let style = Style {
            digits: self.digits.unwrap_or(4),
        };
        let mut problems = Vec::new();
        let mut num = zmij::Buffer::new();
        for (c, col) in cols.cols.iter().enumerate() {
            let (w, s) = (&worst.cells[c], &mc.cells[c]);
            let defined = [w.min.value, w.max.value, s.mean, s.std_dev, s.coverage.0, s.coverage.1]
                .iter()
                .all(|x| x.is_finite())
                && s.undefined == 0;
            if !defined {
                empty(out, SPREAD_FIELDS);
                let shown = &sp.shown[c];
                let reason = if !shown.measure.of(shown.nominal).is_finite() {
                    let why = if shown.nominal.re.is_nan() || shown.nominal.im.is_nan() {
                        format!(": {}", super::nan_reason(m, slots, shown.series.cell))
                    } else {
                        " (it is infinite)".to_string()
                    };
                    format!(
                        "no spread: `{}` has no value at this case's stated values{why}",
                        col.name
                    )
                } else {
                    let n = s
                        .undefined
                        .max(usize::from(!w.min.value.is_finite() || !w.max.value.is_finite()));
                    format!(
                        "no spread: `{}` has no value at {n} of the {} Monte Carlo samples or points of the box \
                         (a short, a division by zero or a function outside its domain inside the tolerance box); \
                         `ohmsheet spread` with this case's values set shows where",
                        col.name, mc.samples
                    )
                };
                problems.push((col.name.clone(), String::new(), reason));
                continue;
            }
            let at = |e| crate::output::spread::describe_point(sp, e, style);
            let x = |v: f64| v / col.scale;
            for (k, field) in [
                Some(x(w.min.value)),
                None,
                Some(x(w.max.value)),
                None,
                Some(x(s.mean)),
                Some(x(s.std_dev)),
                Some(x(s.coverage.0)),
                Some(x(s.coverage.1)),
            ]
            .into_iter()
            .enumerate()
            {
                out.push(b',');
                match field {
                    Some(v) => self.push_number(out, v, &mut num),
                    None => {
                        let e = if k == 1 { &w.min } else { &w.max };
                        super::rows::push_field(out, at(e).as_bytes());
                    }
                }
            }
        }
        problems
    }
}

impl SpreadCols {
    fn new(batch: &Plan, names: &[String], opts: McOptions) -> Result<SpreadCols, Diagnostic> {
        let m = &*batch.model;
        let mut series: Vec<Series> = Vec::new();
        for n in names.iter().map(|n| n.trim()).filter(|n| !n.is_empty()) {
            let (id, field) = shown_cell(m, n, "--spread")?;
            let base = m.cells[id as usize].name.as_str();
            let c = &m.cells[id as usize];
            if c.error.is_some() {
                return Err(plan_error(format!("--spread: `{n}` has an error in the sheet")));
            }
            let (slot, quantity, display) = match (&c.shape, field) {
                (Some(Shape::Scalar(q)), None) => (c.slot, *q, c.display.clone()),
                (Some(Shape::Record(fs)), Some(f)) => match fs.iter().position(|x| x.0 == f) {
                    Some(k) => (c.slot + k as u32, fs[k].1, None),
                    None => {
                        let all: Vec<&str> = fs.iter().map(|x| x.0).collect();
                        return Err(plan_error(format!("--spread: `{base}` has no field `{f}`"))
                            .with_hint(format!("its fields are: {}", all.join(", "))));
                    }
                },
                (Some(Shape::Record(fs)), None) => {
                    let all: Vec<String> = fs.iter().map(|x| format!("{base}.{}", x.0)).collect();
                    return Err(plan_error(format!("--spread: `{base}` has several fields"))
                        .with_hint(format!("name one of them: {}", all.join(", "))));
                }
                _ => {
                    return Err(plan_error(format!(
                        "--spread: `{base}` is a single value with no field `{}`",
                        field.unwrap_or_default()
                    )))
                }
            };
            if series.iter().any(|s| s.name == n) {
                return Err(plan_error(format!("--spread names `{n}` twice")));
            }
            series.push(Series {
                name: n.to_string(),
                cell: id,
                slot,
                quantity,
                display,
                real: false,
            });
        }
        if series.is_empty() {
            return Err(plan_error("--spread names no cell").with_hint("--spread Vbus,Ibank"));
        }
        let complex: Vec<u32> = batch
            .columns
            .iter()
            .filter(|c| !real_by_nature(c.want))
            .map(|c| c.slot)
            .collect();
        let engine = Engine::new(m.clone());
        let plan = crate::spread::Plan::for_cases(&engine, series, &complex)?;
        let cols = plan
            .shown
            .iter()
            .map(|s| {
                let (scale, unit) = written_in(s.series.quantity, s.series.display.as_ref());
                let label = match s.measure {
                    Measure::Value => s.series.name.clone(),
                    Measure::Magnitude => format!("{}.mag", s.series.name),
                };
                Col {
                    label,
                    name: s.series.name.clone(),
                    scale,
                    unit,
                }
            })
            .collect();
        let input_column = plan
            .inputs
            .iter()
            .map(|i| batch.columns.iter().position(|c| c.cell == i.cell))
            .collect();
        Ok(SpreadCols {
            plan,
            cols,
            input_column,
            opts,
        })
    }

    /// The columns written per case.
    pub fn n_fields(&self) -> usize {
        self.cols.len() * SPREAD_FIELDS
    }

    /// Their headers: `Vbus.worst_min [kV]`, `Vbus.worst_min_at`, ….
    pub fn header(&self) -> Vec<String> {
        let mut h = Vec::new();
        for c in &self.cols {
            for (suffix, unit) in SUFFIXES {
                h.push(if unit && !c.unit.is_empty() {
                    format!("{}.{suffix} [{}]", c.label, c.unit)
                } else {
                    format!("{}.{suffix}", c.label)
                });
            }
        }
        h
    }
}
