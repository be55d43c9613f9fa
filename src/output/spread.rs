//! The analyses of `crate::spread` as text: an aligned table for people,
//! JSON and CSV for programs.

use num_complex::Complex64 as C64;
use serde_json::{json, Value};

use crate::engine::tolerance::{Direction, Law, MagBand};
use crate::plot::spread::{histogram_svg, ranking_svg, HistogramPicture, RankBar, SpreadGeometry};
use crate::spread::{Extreme, McResult, Measure, Method, Plan, SensResult, WorstResult};
use crate::units::format::{base_symbol, format_value, Style};

/// What was run.
pub struct Analyses<'a> {
    pub plan: &'a Plan,
    pub worst: Option<&'a WorstResult>,
    pub mc: Option<&'a McResult>,
    pub sens: Option<&'a SensResult>,
    pub style: Style,
}

/// The caution every output of the analyses carries.
pub const CAUTION: &str = "An engineering aid, to be checked by a qualified person against local codes and \
licensed practice. The tolerances stated bound only what they describe: inputs without one are taken as exact.";

impl Analyses<'_> {
    /// Shown cell `c`'s measure `v` formatted in its unit.
    pub fn fmt(&self, c: usize, v: f64) -> String {
        if !v.is_finite() {
            return "—".into();
        }
        let s = &self.plan.shown[c].series;
        format_value(C64::new(v, 0.0), s.quantity, s.display.as_ref(), self.style).rect
    }

    fn measure_word(&self, c: usize) -> &'static str {
        match self.plan.shown[c].measure {
            Measure::Value => "value",
            Measure::Magnitude => "magnitude",
        }
    }

    /// Where an input is at point `p`, in the way its tolerance is stated:
    /// `Zt +7.5 %`, `Vs angle −3°`, `Qb 750 kvar`, `P −0.2 MW`.
    pub fn describe_point(&self, e: &Extreme) -> String {
        describe_point(self.plan, e, self.style)
    }

    /// An input's tolerance in words, absolute amounts in its unit.
    pub fn describe_spread(&self, i: &crate::spread::Input) -> String {
        i.spread
            .describe(&|x| format_value(C64::new(x, 0.0), i.quantity, i.display.as_ref(), self.style).rect)
    }

    /// Shown cell `c`'s name, with ` |·|` when its magnitude is judged.
    pub fn cell_label(&self, c: usize) -> String {
        let s = &self.plan.shown[c];
        match s.measure {
            Measure::Magnitude => format!("{} |·|", s.series.name),
            Measure::Value => s.series.name.clone(),
        }
    }

    fn axis_label(&self, c: usize) -> String {
        let s = &self.plan.shown[c];
        match s.measure {
            Measure::Magnitude => format!("{} magnitude", s.series.name),
            Measure::Value => s.series.name.clone(),
        }
    }

    /// The histogram of shown cell `c`'s Monte Carlo samples, as SVG (when
    /// Monte Carlo was run).
    pub fn histogram_svg(&self, c: usize) -> Option<(String, SpreadGeometry)> {
        let mc = self.mc?;
        let cell = mc.cells.get(c)?;
        let title = format!("{} — {} samples, seed {}", self.cell_label(c), mc.samples, mc.seed);
        let label = |x: f64| self.fmt(c, x);
        Some(histogram_svg(&HistogramPicture {
            title: &title,
            axis: &self.axis_label(c),
            lo: cell.histogram.lo,
            hi: cell.histogram.hi,
            counts: &cell.histogram.counts,
            stated: cell.nominal,
            interval: cell.coverage,
            probability: mc.coverage_probability,
            label: &label,
        }))
    }

    /// The ranking chart of shown cell `c`'s sensitivities, as SVG (when
    /// they were run).
    pub fn ranking_svg(&self, c: usize) -> Option<(String, SpreadGeometry)> {
        let cell = self.sens?.cells.get(c)?;
        let bars: Vec<RankBar> = cell
            .rows
            .iter()
            .map(|r| {
                let name = &self.plan.inputs[r.input].name;
                RankBar {
                    label: match r.dir {
                        Direction::Angle => format!("{name} angle"),
                        _ => name.clone(),
                    },
                    low: r.low,
                    high: r.high,
                }
            })
            .collect();
        let label = |x: f64| self.fmt(c, x);
        Some(ranking_svg(
            &format!("What moves {} most", self.cell_label(c)),
            &self.axis_label(c),
            cell.nominal,
            &bars,
            &label,
        ))
    }

    pub fn table(&self) -> String {
        let mut out = String::new();
        let plan = self.plan;
        out.push_str("Toleranced inputs\n");
        let mut rows = vec![vec!["input".to_string(), "stated".into(), "tolerance".into()]];
        for i in &plan.inputs {
            rows.push(vec![
                i.name.clone(),
                format_value(i.nominal, i.quantity, i.display.as_ref(), self.style).polar,
                self.describe_spread(i),
            ]);
        }
        out.push_str(&align(&rows));
        if let Some(w) = self.worst {
            let how = match w.method {
                Method::AllCorners(n) => format!("all {n} corners"),
                Method::GuidedCorners(n) => format!("corners chosen by the sensitivities out of {n:.0}"),
            };
            out.push_str(&format!(
                "\nWorst case ({how}, then a search inside the box; {} points)\n",
                w.evaluations
            ));
            let mut rows = vec![vec![
                "cell".to_string(),
                "stated".into(),
                "smallest".into(),
                "largest".into(),
            ]];
            let mut notes = String::new();
            for (c, cell) in w.cells.iter().enumerate() {
                rows.push(vec![
                    format!(
                        "{}{}",
                        cell.name,
                        if cell.measure == Measure::Magnitude {
                            " |·|"
                        } else {
                            ""
                        }
                    ),
                    self.fmt(c, cell.nominal),
                    self.fmt(c, cell.min.value),
                    self.fmt(c, cell.max.value),
                ]);
                notes.push_str(&format!(
                    "  {} smallest at: {}\n  {} largest at:  {}\n",
                    cell.name,
                    self.describe_point(&cell.min),
                    cell.name,
                    self.describe_point(&cell.max)
                ));
            }
            out.push_str(&align(&rows));
            out.push_str(&notes);
        }
        if let Some(mc) = self.mc {
            out.push_str(&format!(
                "\nMonte Carlo ({} samples, seed {}; {:.0} % interval from the sorted samples, JCGM 101:2008 §7.7)\n",
                mc.samples,
                mc.seed,
                mc.coverage_probability * 100.0
            ));
            let mut rows = vec![vec![
                "cell".to_string(),
                "stated".into(),
                "mean".into(),
                "std dev".into(),
                "interval".into(),
                "1 % … 99 %".into(),
                "histogram".into(),
            ]];
            for (c, cell) in mc.cells.iter().enumerate() {
                let p = |q: f64| cell.percentiles.iter().find(|x| x.0 == q).map_or(f64::NAN, |x| x.1);
                rows.push(vec![
                    format!(
                        "{}{}",
                        cell.name,
                        if cell.measure == Measure::Magnitude {
                            " |·|"
                        } else {
                            ""
                        }
                    ),
                    self.fmt(c, cell.nominal),
                    self.fmt(c, cell.mean),
                    self.fmt(c, cell.std_dev),
                    format!("{} … {}", self.fmt(c, cell.coverage.0), self.fmt(c, cell.coverage.1)),
                    format!("{} … {}", self.fmt(c, p(0.01)), self.fmt(c, p(0.99))),
                    sparkline(&cell.histogram.counts),
                ]);
            }
            out.push_str(&align(&rows));
            for cell in &mc.cells {
                if cell.undefined > 0 {
                    out.push_str(&format!(
                        "  {}: {} samples gave no number and are left out\n",
                        cell.name, cell.undefined
                    ));
                }
            }
        }
        if let Some(sens) = self.sens {
            out.push_str(
                "\nSensitivities (change of the cell per change of the input, at the stated values; ranked)\n",
            );
            for (c, cell) in sens.cells.iter().enumerate() {
                out.push_str(&format!(
                    "  {} ({}, stated {}; first-order standard deviation {}, JCGM 100:2008 §5.1.2; by {})\n",
                    cell.name,
                    self.measure_word(c),
                    self.fmt(c, cell.nominal),
                    self.fmt(c, cell.gum_std),
                    cell.method.describe()
                ));
                let complex = cell.measure == Measure::Magnitude;
                let mut rows = vec![vec![
                    "    input".to_string(),
                    "cell %".into(),
                    "cell angle °".into(),
                    "at low end".into(),
                    "at high end".into(),
                ]];
                for r in &cell.rows {
                    let i = &plan.inputs[r.input];
                    let (what, per) = match r.dir {
                        Direction::Angle => (format!("{} angle", i.name), "per °"),
                        _ => (i.name.clone(), "per %"),
                    };
                    rows.push(vec![
                        format!("    {what}"),
                        per_unit(r.mag, per, self.style),
                        r.angle.map_or("".into(), |a| per_unit(a, per, self.style)),
                        self.fmt(c, r.low),
                        self.fmt(c, r.high),
                    ]);
                }
                if !complex {
                    for r in &mut rows {
                        r.remove(2);
                    }
                }
                out.push_str(&align(&rows));
            }
        }
        out.push_str(&format!("\nCaution: {CAUTION}\n"));
        out
    }

    pub fn json(&self, sheet: &str) -> Value {
        let plan = self.plan;
        let unit = |c: usize| base_symbol(plan.shown[c].series.quantity);
        // What every analysis says of a cell first, then its own fields.
        let cell_json = |c: usize, name: &str, nominal: f64, rest: Value| -> Value {
            let mut v = json!({
                "name": name,
                "measure": self.measure_word(c),
                "unit": unit(c),
                "stated": fin(nominal),
            });
            if let (Some(o), Value::Object(r)) = (v.as_object_mut(), rest) {
                o.extend(r);
            }
            v
        };
        let inputs: Vec<Value> = plan
            .inputs
            .iter()
            .map(|i| {
                json!({
                    "name": i.name,
                    "stated": {"re": fin(i.nominal.re), "im": fin(i.nominal.im)},
                    "unit": base_symbol(i.quantity),
                    "tolerance": self.describe_spread(i),
                })
            })
            .collect();
        let point = |e: &Extreme| -> Value {
            json!({
                "value": fin(e.value),
                "re": fin(e.z.re),
                "im": fin(e.z.im),
                "at_corner": e.at_corner,
                "at": self.describe_point(e),
                "inputs": plan.inputs.iter().zip(&e.inputs).map(|(i, v)| json!({
                    "name": i.name, "re": fin(v.re), "im": fin(v.im)
                })).collect::<Vec<_>>(),
            })
        };
        let mut root = json!({
            "sheet": sheet,
            "inputs": inputs,
            "caution": CAUTION,
        });
        if let Some(w) = self.worst {
            let cells: Vec<Value> = w
                .cells
                .iter()
                .enumerate()
                .map(|(c, cell)| {
                    cell_json(
                        c,
                        &cell.name,
                        cell.nominal,
                        json!({
                            "min": point(&cell.min),
                            "max": point(&cell.max),
                        }),
                    )
                })
                .collect();
            let method = match w.method {
                Method::AllCorners(n) => json!({"kind": "all-corners", "corners": n}),
                Method::GuidedCorners(n) => json!({"kind": "guided-corners", "corners": n}),
            };
            root["worst_case"] = json!({"method": method, "evaluations": w.evaluations, "cells": cells});
        }
        if let Some(mc) = self.mc {
            let cells: Vec<Value> = mc
                .cells
                .iter()
                .enumerate()
                .map(|(c, cell)| {
                    cell_json(c, &cell.name, cell.nominal, json!({
                        "mean": fin(cell.mean),
                        "std_dev": fin(cell.std_dev),
                        "min": fin(cell.min),
                        "max": fin(cell.max),
                        "coverage_interval": [fin(cell.coverage.0), fin(cell.coverage.1)],
                        "percentiles": cell.percentiles.iter().map(|(p, v)| json!({"p": p, "value": fin(*v)})).collect::<Vec<_>>(),
                        "histogram": {"lo": fin(cell.histogram.lo), "hi": fin(cell.histogram.hi), "counts": cell.histogram.counts},
                        "angle_mean_rad": cell.angle.map(|a| fin(a.0)),
                        "angle_std_dev_rad": cell.angle.map(|a| fin(a.1)),
                        "undefined": cell.undefined,
                    }))
                })
                .collect();
            root["monte_carlo"] = json!({
                "samples": mc.samples,
                "seed": mc.seed,
                "coverage_probability": mc.coverage_probability,
                "cells": cells,
            });
        }
        if let Some(sens) = self.sens {
            let cells: Vec<Value> = sens
                .cells
                .iter()
                .enumerate()
                .map(|(c, cell)| {
                    cell_json(
                        c,
                        &cell.name,
                        cell.nominal,
                        json!({
                            "first_order_std_dev": fin(cell.gum_std),
                            "method": cell.method.key(),
                            "inputs": cell.rows.iter().map(|r| json!({
                                "input": plan.inputs[r.input].name,
                                "direction": match r.dir { Direction::Angle => "angle", _ => "magnitude" },
                                "magnitude": fin(r.mag),
                                "angle_deg": r.angle.map(fin),
                                "contribution": fin(r.contribution),
                                "low": fin(r.low),
                                "high": fin(r.high),
                            })).collect::<Vec<_>>(),
                        }),
                    )
                })
                .collect();
            root["sensitivities"] = json!({
                "units": "magnitude: % of the cell per % of the input's magnitude, or per degree of its angle; angle_deg: degrees of the cell's angle per the same",
                "cells": cells,
            });
        }
        root
    }

    /// One long table: `analysis,cell,item,value,unit`.
    pub fn csv(&self) -> String {
        let plan = self.plan;
        let mut w = csv::Writer::from_writer(Vec::new());
        let _ = w.write_record(["analysis", "cell", "item", "value", "unit"]);
        let unit = |c: usize| base_symbol(plan.shown[c].series.quantity);
        let num = |x: f64| if x.is_finite() { format!("{x:e}") } else { String::new() };
        if let Some(wc) = self.worst {
            for (c, cell) in wc.cells.iter().enumerate() {
                let u = unit(c);
                let _ = w.write_record(["worst_case", &cell.name, "stated", &num(cell.nominal), &u]);
                let _ = w.write_record(["worst_case", &cell.name, "min", &num(cell.min.value), &u]);
                let _ = w.write_record(["worst_case", &cell.name, "min_at", &self.describe_point(&cell.min), ""]);
                let _ = w.write_record(["worst_case", &cell.name, "max", &num(cell.max.value), &u]);
                let _ = w.write_record(["worst_case", &cell.name, "max_at", &self.describe_point(&cell.max), ""]);
            }
        }
        if let Some(mc) = self.mc {
            for (c, cell) in mc.cells.iter().enumerate() {
                let u = unit(c);
                let n = &cell.name;
                let _ = w.write_record(["monte_carlo", n, "samples", &mc.samples.to_string(), ""]);
                let _ = w.write_record(["monte_carlo", n, "seed", &mc.seed.to_string(), ""]);
                let _ = w.write_record(["monte_carlo", n, "mean", &num(cell.mean), &u]);
                let _ = w.write_record(["monte_carlo", n, "std_dev", &num(cell.std_dev), &u]);
                let _ = w.write_record(["monte_carlo", n, "interval_low", &num(cell.coverage.0), &u]);
                let _ = w.write_record(["monte_carlo", n, "interval_high", &num(cell.coverage.1), &u]);
                for (p, v) in &cell.percentiles {
                    let _ = w.write_record(["monte_carlo", n, &format!("p{}", p * 100.0), &num(*v), &u]);
                }
            }
        }
        if let Some(s) = self.sens {
            for (c, cell) in s.cells.iter().enumerate() {
                let _ = w.write_record([
                    "sensitivity",
                    &cell.name,
                    "first_order_std_dev",
                    &num(cell.gum_std),
                    &unit(c),
                ]);
                for r in &cell.rows {
                    let i = &plan.inputs[r.input].name;
                    let (item, per) = match r.dir {
                        Direction::Angle => (format!("{i} angle"), "per °"),
                        _ => (i.clone(), "per %"),
                    };
                    let _ = w.write_record([
                        "sensitivity",
                        &cell.name,
                        &format!("{item}: magnitude"),
                        &num(r.mag),
                        &format!("% {per}"),
                    ]);
                    if let Some(a) = r.angle {
                        let _ = w.write_record([
                            "sensitivity",
                            &cell.name,
                            &format!("{item}: angle"),
                            &num(a),
                            &format!("° {per}"),
                        ]);
                    }
                }
            }
        }
        String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
    }
}

fn fin(x: f64) -> Value {
    if x.is_finite() {
        json!(x)
    } else {
        Value::Null
    }
}

fn num(x: f64, style: Style) -> String {
    if x.is_finite() {
        crate::units::format::fmt_sig(x, style.digits)
    } else {
        "—".into()
    }
}

/// `0.25 per %`, or `—` where not defined.
fn per_unit(x: f64, per: &str, style: Style) -> String {
    if x.is_finite() {
        format!("{} {per}", num(x, style))
    } else {
        "—".into()
    }
}

fn signed(x: f64, unit: &str, style: Style) -> String {
    let s = crate::units::format::fmt_sig(x.abs(), style.digits);
    let sign = if x < 0.0 { "−" } else { "+" };
    format!(
        "{sign}{s}{}",
        if unit == "°" {
            "°".to_string()
        } else {
            unit.to_string()
        }
    )
}

/// Where each input is at an extreme, in the way its tolerance is stated:
/// `Zt +7.5 %, Vs angle −3°, Qb 750 kvar, P −0.2 MW`.
pub fn describe_point(plan: &Plan, e: &Extreme, style: Style) -> String {
    let mut parts = Vec::new();
    for (d, &x) in plan.dims.iter().zip(&e.point) {
        let i = &plan.inputs[d.input];
        let inside = d.dir != Direction::Choice && x != d.lo && x != d.hi;
        let end = if inside { " (inside)" } else { "" };
        let text = match d.dir {
            Direction::Magnitude => match i.spread.mag {
                Some(MagBand::Relative(_)) => format!("{} {}", i.name, signed(x * 100.0, " %", style)),
                _ => {
                    let f = format_value(C64::new(x.abs(), 0.0), i.quantity, i.display.as_ref(), style).rect;
                    format!("{} {}{}", i.name, if x < 0.0 { "−" } else { "+" }, f)
                }
            },
            Direction::Angle => format!("{} angle {}", i.name, signed(x.to_degrees(), "°", style)),
            Direction::Choice => {
                let v = match &i.spread.law {
                    Law::Among(v) => v.get(x as usize).copied().unwrap_or(i.nominal),
                    _ => i.nominal,
                };
                format!(
                    "{} {}",
                    i.name,
                    format_value(v, i.quantity, i.display.as_ref(), style).polar
                )
            }
        };
        parts.push(format!("{text}{end}"));
    }
    parts.join(", ")
}

/// A check's verdict over the tolerances, in words, for tables and lines.
pub fn check_over_text(
    plan: Option<&Plan>,
    cell: &crate::engine::Cell,
    v: &crate::spread::checks::CheckVerdict,
    style: Style,
) -> String {
    let q = cell.checked_quantity();
    let (diff, allowed) =
        crate::units::format::check_gap(q, cell.display.as_ref(), v.worst_diff, v.worst_allowed, style);
    let at = match (plan, &v.worst) {
        (Some(p), Some(e)) => describe_point(p, e, style),
        _ => "the stated values (the sheet states no tolerance)".into(),
    };
    match (v.share, v.found_share) {
        (Some(s), Some(f)) => format!(
            "over {} % of samples: {} in {} % of {} samples (seed {}); worst at {at}: |difference| {diff} (allowed {allowed})",
            crate::units::format::fmt_sig(s * 100.0, 4),
            if v.passed { "holds" } else { "FAILS: holds only" },
            crate::units::format::fmt_sig(f * 100.0, 4),
            v.samples,
            crate::spread::checks::CHECK_SEED
        ),
        _ => format!(
            "over the box: {} at {at}: |difference| {diff} (allowed {allowed})",
            if v.passed { "holds; closest" } else { "FAILS" }
        ),
    }
}

/// Counts as a row of block characters, tallest bin full.
pub fn sparkline(counts: &[u64]) -> String {
    const BARS: [char; 8] = ['▁', '▂', '▃', '▄', '▅', '▆', '▇', '█'];
    let max = counts.iter().copied().max().unwrap_or(0);
    if max == 0 {
        return String::new();
    }
    counts
        .iter()
        .map(|&n| {
            if n == 0 {
                ' '
            } else {
                BARS[((n as f64 / max as f64) * 7.0).round() as usize]
            }
        })
        .collect()
}

/// Columns padded to their widest cell (by characters).
fn align(rows: &[Vec<String>]) -> String {
    let n = rows.iter().map(Vec::len).max().unwrap_or(0);
    let mut w = vec![0usize; n];
    for r in rows {
        for (k, c) in r.iter().enumerate() {
            w[k] = w[k].max(unicode_width::UnicodeWidthStr::width(c.as_str()));
        }
    }
    let mut out = String::new();
    for r in rows {
        let mut line = String::from("  ");
        for (k, c) in r.iter().enumerate() {
            line.push_str(c);
            if k + 1 < r.len() {
                let pad = w[k] - unicode_width::UnicodeWidthStr::width(c.as_str()) + 3;
                line.push_str(&" ".repeat(pad));
            }
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}
