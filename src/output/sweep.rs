//! Sweep points as text: an aligned table, CSV and JSON.
//!
//! CSV columns are one per swept input, then two per shown value:
//! magnitude and angle (`Vload.mag [V]`, `Vload.ang [deg]`) or real and
//! imaginary parts (`Vload.re [V]`, `Vload.im [V]`), or all four (both,
//! the default) — one for a value real by construction (`pf`,
//! docs/batch.md). Numbers are in the
//! unit named in the header: the cell's display unit if the sheet gives
//! one, else the coherent SI unit; angles in degrees. Undefined values are
//! written `NaN`, `inf` or `-inf`, never dropped.

use std::io::{self, Write};

use num_complex::Complex64 as C64;
use serde::Serialize;

use crate::engine::ops;
use crate::sweep::{Axis, Series, SweepResult};
use crate::units::format::{base_symbol, format_value, Style};
use crate::units::{Kind, Quantity, Unit};

/// How a complex value is split into two columns.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Parts {
    /// Magnitude and angle in degrees.
    #[default]
    Polar,
    /// Real and imaginary parts.
    Rect,
    /// Both: real, imaginary, magnitude, angle (four columns).
    Both,
}

/// The unit a column is written in and the factor to divide SI values by.
pub fn column_unit(q: Quantity, display: Option<&Unit>) -> (String, f64) {
    match display {
        Some(u) => (u.symbol.clone(), u.factor),
        None if q.kind == Kind::Angle => ("deg".into(), std::f64::consts::PI / 180.0),
        // 12 % is written 12 under `[%]`, not 0.12 under no unit
        None if q.kind == Kind::Percent => ("%".into(), 0.01),
        None => (base_symbol(q), 1.0),
    }
}

/// Turns SI values into a column's unit. Small prefixes multiply by the
/// whole reciprocal (2 mF in µF is 0.002 × 1e6 = 2000 exactly, where
/// 0.002 / 1e-6 gives 2000.0000000000002).
#[derive(Clone, Copy, Debug)]
pub struct Scale {
    div: f64,
    mul: f64,
}

impl Scale {
    pub fn new(factor: f64) -> Scale {
        let inv = 1.0 / factor;
        if factor < 1.0 && inv.round() == inv {
            Scale { div: 1.0, mul: inv }
        } else {
            Scale { div: factor, mul: 1.0 }
        }
    }
    #[inline]
    pub fn apply(self, x: f64) -> f64 {
        if self.mul != 1.0 {
            x * self.mul
        } else {
            x / self.div
        }
    }
}

fn header(name: &str, unit: &str) -> String {
    if unit.is_empty() {
        name.to_string()
    } else {
        format!("{name} [{unit}]")
    }
}

/// Column headers of a sweep's CSV.
pub fn csv_headers(axes: &[Axis], series: &[Series], parts: Parts) -> Vec<String> {
    let mut h: Vec<String> = axes
        .iter()
        .map(|a| header(&a.name, &column_unit(a.quantity, a.display.as_ref()).0))
        .collect();
    for s in series {
        let (u, _) = column_unit(s.quantity, s.display.as_ref());
        if s.real {
            h.push(header(&s.name, &u));
            continue;
        }
        if parts != Parts::Polar {
            h.push(header(&format!("{}.re", s.name), &u));
            h.push(header(&format!("{}.im", s.name), &u));
        }
        if parts != Parts::Rect {
            h.push(header(&format!("{}.mag", s.name), &u));
            h.push(header(&format!("{}.ang", s.name), "deg"));
        }
    }
    h
}

/// The two numbers written for a value in rect or polar parts (both:
/// the rect pair, then `split(z, scale, Parts::Polar)`).
#[inline]
pub fn split(z: C64, scale: Scale, parts: Parts) -> (f64, f64) {
    match parts {
        Parts::Polar => (scale.apply(ops::abs(z)), ops::arg(z).to_degrees()),
        Parts::Rect | Parts::Both => (scale.apply(z.re), scale.apply(z.im)),
    }
}

/// Writes sweep rows as CSV, one point at a time.
pub struct CsvRows<W: Write> {
    out: W,
    axis_scale: Vec<Scale>,
    series_scale: Vec<Scale>,
    /// Which series take one column (real by construction).
    series_real: Vec<bool>,
    parts: Parts,
    buf: ryu::Buffer,
    line: Vec<u8>,
}

impl<W: Write> CsvRows<W> {
    /// Start a CSV: writes the header line.
    pub fn new(mut out: W, axes: &[Axis], series: &[Series], parts: Parts) -> io::Result<CsvRows<W>> {
        let mut w = csv::Writer::from_writer(Vec::new());
        w.write_record(csv_headers(axes, series, parts))?;
        let head = w.into_inner().map_err(|e| io::Error::other(e.to_string()))?;
        out.write_all(&head)?;
        Ok(CsvRows {
            out,
            axis_scale: axes
                .iter()
                .map(|a| Scale::new(column_unit(a.quantity, a.display.as_ref()).1))
                .collect(),
            series_real: series.iter().map(|s| s.real).collect(),
            series_scale: series
                .iter()
                .map(|s| Scale::new(column_unit(s.quantity, s.display.as_ref()).1))
                .collect(),
            parts,
            buf: ryu::Buffer::new(),
            line: Vec::with_capacity(256),
        })
    }

    #[inline]
    fn num(&mut self, x: f64) {
        super::write_num(&mut self.line, &mut self.buf, x);
    }

    /// One row: the axis values (SI) and the shown values (SI).
    #[inline]
    pub fn row(&mut self, xs: &[f64], values: &[C64]) -> io::Result<()> {
        self.line.clear();
        for (k, &x) in xs.iter().enumerate() {
            if k > 0 {
                self.line.push(b',');
            }
            self.num(self.axis_scale[k].apply(x));
        }
        for (k, &z) in values.iter().enumerate() {
            if k > 0 || !xs.is_empty() {
                self.line.push(b',');
            }
            if self.series_real[k] {
                // The value itself, signed (a leading pf is -0.9, not
                // 0.9 at 180°); an imaginary part could only be NaN.
                let x = if z.im == 0.0 { z.re } else { f64::NAN };
                self.num(self.series_scale[k].apply(x));
                continue;
            }
            let (a, b) = split(z, self.series_scale[k], self.parts);
            self.num(a);
            self.line.push(b',');
            self.num(b);
            if self.parts == Parts::Both {
                let (m, d) = split(z, self.series_scale[k], Parts::Polar);
                self.line.push(b',');
                self.num(m);
                self.line.push(b',');
                self.num(d);
            }
        }
        self.line.push(b'\n');
        self.out.write_all(&self.line)
    }

    pub fn finish(mut self) -> io::Result<W> {
        self.out.flush()?;
        Ok(self.out)
    }
}

/// A whole collected sweep as CSV.
pub fn write_csv<W: Write>(out: W, r: &SweepResult, parts: Parts) -> io::Result<W> {
    let mut w = CsvRows::new(out, &r.axes, &r.series, parts)?;
    let mut xs = vec![0.0; r.axes.len()];
    let mut vals = vec![C64::new(0.0, 0.0); r.series.len()];
    for p in 0..r.len() {
        for (a, x) in xs.iter_mut().enumerate() {
            *x = r.x(a, p);
        }
        for (v, col) in vals.iter_mut().zip(&r.values) {
            *v = col[p];
        }
        w.row(&xs, &vals)?;
    }
    w.finish()
}

/// A sweep as an aligned table, values formatted as `run` shows them.
pub fn table(r: &SweepResult, parts: Parts, style: Style) -> String {
    let mut head: Vec<String> = r.axes.iter().map(|a| a.name.clone()).collect();
    head.extend(r.series.iter().map(|s| s.name.clone()));
    let mut rows: Vec<Vec<String>> = Vec::with_capacity(r.len());
    for p in 0..r.len() {
        let mut row = Vec::with_capacity(head.len());
        for (a, ax) in r.axes.iter().enumerate() {
            let z = C64::new(r.x(a, p), 0.0);
            row.push(format_value(z, ax.quantity, ax.display.as_ref(), style).rect);
        }
        for (s, col) in r.series.iter().zip(&r.values) {
            let f = format_value(col[p], s.quantity, s.display.as_ref(), style);
            // A real value, negative ones too, has no polar form of its
            // own (`format_value` gives the same text): shown once.
            let complex = f.polar != f.rect;
            let text = match parts {
                Parts::Polar if complex => f.polar,
                Parts::Both if complex => format!("{} = {}", f.rect, f.polar),
                _ => f.rect,
            };
            row.push(if super::super::sweep::finite(col[p]) {
                text
            } else {
                format!("{text} !")
            });
        }
        rows.push(row);
    }
    let mut w: Vec<usize> = head
        .iter()
        .map(|h| unicode_width::UnicodeWidthStr::width(h.as_str()))
        .collect();
    for row in &rows {
        for (k, c) in row.iter().enumerate() {
            w[k] = w[k].max(unicode_width::UnicodeWidthStr::width(c.as_str()));
        }
    }
    let line = |cells: &[String]| {
        let mut s = String::from(" ");
        for (k, c) in cells.iter().enumerate() {
            let pad = w[k] - unicode_width::UnicodeWidthStr::width(c.as_str());
            s.push(' ');
            // numbers right-aligned
            s.push_str(&" ".repeat(pad));
            s.push_str(c);
            s.push(' ');
        }
        s.trim_end().to_string() + "\n"
    };
    let mut out = String::new();
    if let Some(t) = &r.title {
        out.push_str(t);
        out.push_str("\n\n");
    }
    out.push_str(&line(&head));
    for row in &rows {
        out.push_str(&line(row));
    }
    let bad = r.undefined_points().len();
    if bad > 0 {
        out.push_str(&format!(
            "  ({bad} point{} marked ! {} NaN or infinite)\n",
            if bad == 1 { "" } else { "s" },
            if bad == 1 { "is" } else { "are" }
        ));
    }
    out
}

#[derive(Serialize)]
struct JsonAxis<'a> {
    name: &'a str,
    unit: String,
    start: f64,
    stop: f64,
    points: usize,
    log: bool,
    values: Vec<Option<f64>>,
}

#[derive(Serialize)]
struct JsonSeries<'a> {
    name: &'a str,
    unit: String,
    re: Vec<Option<f64>>,
    /// Left out for a value real by construction (a power factor, a part
    /// of a power): one number a point, as in CSV.
    #[serde(skip_serializing_if = "Option::is_none")]
    im: Option<Vec<Option<f64>>>,
}

#[derive(Serialize)]
struct JsonSweep<'a> {
    sheet: &'a str,
    title: Option<&'a str>,
    /// Points where some value is NaN or infinite (written as null).
    undefined: Vec<usize>,
    axes: Vec<JsonAxis<'a>>,
    series: Vec<JsonSeries<'a>>,
}

fn opt(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

/// A sweep as JSON, in coherent SI units (a percentage in %), column by
/// column; a series real by construction has `re` only. An axis's
/// `values` lists each distinct value once; point `p` of a two-axis grid
/// has `axes[0].values[p / axes[1].points]` and `axes[1].values[p %
/// axes[1].points]`.
pub fn to_json(sheet: &str, r: &SweepResult) -> String {
    let doc = JsonSweep {
        sheet,
        title: r.title.as_deref(),
        undefined: r.undefined_points(),
        axes: r
            .axes
            .iter()
            .map(|a| JsonAxis {
                name: &a.name,
                unit: base_symbol(a.quantity),
                start: a.start,
                stop: a.stop,
                points: a.count,
                log: a.log,
                values: (0..a.count).map(|i| opt(a.value(i))).collect(),
            })
            .collect(),
        series: r
            .series
            .iter()
            .zip(&r.values)
            .map(|(s, col)| {
                // a percentage in %, as in CSV and `run --format json`
                let (unit, k) = if s.quantity.kind == Kind::Percent {
                    ("%".to_string(), 100.0)
                } else {
                    (base_symbol(s.quantity), 1.0)
                };
                JsonSeries {
                    name: &s.name,
                    unit,
                    re: col.iter().map(|z| opt(z.re * k)).collect(),
                    im: (!s.real).then(|| col.iter().map(|z| opt(z.im * k)).collect()),
                }
            })
            .collect(),
    };
    serde_json::to_string_pretty(&doc).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}
