//! Turning evaluated cells into rows, and rows into text: an aligned table
//! for people, JSON and CSV for programs. Only this module and the CLI know
//! about output formats.

pub mod checks;
pub mod report;
pub mod spread;
pub mod sweep;
pub mod table;

use num_complex::Complex64 as C64;
use serde::Serialize;

use crate::engine::{check_result, CellId, Engine, Model};
use crate::funcs::Shape;
use crate::units::format::{base_symbol, format_value, Style};
use crate::units::Quantity;

/// One shown value: a scalar cell, or one field of a record cell.
#[derive(Clone, Debug, Serialize)]
pub struct CellRow {
    /// `Zth`, or `y.a` for a record field.
    pub name: String,
    pub formula: String,
    /// Coherent SI unit of `re` and `im` (`Ω`, `W`, `rad`); empty for plain
    /// numbers.
    pub unit: String,
    #[serde(serialize_with = "finite_or_null")]
    pub re: f64,
    #[serde(serialize_with = "finite_or_null")]
    pub im: f64,
    /// `8.97 + j3.88 Ω`
    pub display: String,
    /// `9.77 ∠ 23.4° Ω`
    pub polar: String,
    /// The cell is an input (its formula uses no other cell).
    pub input: bool,
    pub file: String,
    pub line: u32,
    #[serde(skip)]
    pub id: CellId,
}

/// One check's verdict.
#[derive(Clone, Debug, Serialize)]
pub struct CheckRow {
    /// The check as written.
    pub expr: String,
    pub file: String,
    pub line: u32,
    pub passed: bool,
    pub lhs: Complex,
    pub rhs: Complex,
    /// |lhs - rhs| in coherent SI units.
    #[serde(serialize_with = "finite_or_null")]
    pub error: f64,
    #[serde(serialize_with = "finite_or_null")]
    pub tolerance: f64,
    pub unit: String,
    /// The difference and tolerance as shown.
    pub error_display: String,
    pub tolerance_display: String,
    pub lhs_display: String,
    pub rhs_display: String,
    /// For a check over the tolerances: its verdict there in words.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub over: Option<String>,
    /// The polar forms of the computed and reference values, for
    /// `checks_in_form`.
    #[serde(skip)]
    pub lhs_polar: String,
    #[serde(skip)]
    pub rhs_polar: String,
}

#[derive(Clone, Copy, Debug, Serialize)]
pub struct Complex {
    #[serde(serialize_with = "finite_or_null")]
    pub re: f64,
    #[serde(serialize_with = "finite_or_null")]
    pub im: f64,
}

fn finite_or_null<S: serde::Serializer>(x: &f64, s: S) -> Result<S::Ok, S::Error> {
    if x.is_finite() {
        s.serialize_f64(*x)
    } else {
        s.serialize_none()
    }
}

/// Rows for every defined cell, in sheet order.
pub fn cell_rows(engine: &Engine, style: Style) -> Vec<CellRow> {
    let m = &engine.model;
    let mut rows = Vec::new();
    for (id, c) in m.defs() {
        if c.error.is_some() {
            continue;
        }
        let vals = engine.values(id);
        let file = m.sources.get(c.file).name.clone();
        match c.shape.as_ref() {
            Some(Shape::Scalar(q)) => {
                rows.push(row(m, id, c.name.clone(), *q, vals[0], c.display.as_ref(), style, file))
            }
            Some(Shape::Record(fields)) => {
                for (k, (fname, q)) in fields.iter().enumerate() {
                    rows.push(row(
                        m,
                        id,
                        format!("{}.{}", c.name, fname),
                        *q,
                        vals[k],
                        None,
                        style,
                        file.clone(),
                    ));
                }
            }
            None => {}
        }
    }
    rows
}

/// The unit the numbers of a JSON or CSV row are written in, and the
/// factor from the stored value: coherent SI units, except a percentage,
/// written in % as shown (`12 %` is 12 with unit `%`, not 0.12 with no
/// unit), as batch and sweep columns write it.
fn number_unit(q: Quantity) -> (String, f64) {
    if q.kind == crate::units::Kind::Percent {
        ("%".to_string(), 100.0)
    } else {
        (base_symbol(q), 1.0)
    }
}

#[allow(clippy::too_many_arguments)]
fn row(
    m: &Model,
    id: CellId,
    name: String,
    q: Quantity,
    z: C64,
    display: Option<&crate::units::Unit>,
    style: Style,
    file: String,
) -> CellRow {
    let c = &m.cells[id as usize];
    let f = format_value(z, q, display, style);
    let (unit, k) = number_unit(q);
    CellRow {
        name,
        formula: c.formula.clone(),
        unit,
        re: z.re * k,
        im: z.im * k,
        display: f.rect,
        polar: f.polar,
        input: c.input,
        file,
        line: c.line,
        id,
    }
}

/// How complex values are written: `--complex rect|polar|both`, one
/// option with one default (both) on run, report, sweep, solve, batch and
/// check.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default, clap::ValueEnum)]
pub enum Form {
    /// Real and imaginary parts, a + jb (CSV: `.re`, `.im` columns).
    Rect,
    /// Magnitude and angle, m ∠ θ (CSV: `.mag`, `.ang` columns).
    Polar,
    /// Both forms (CSV: the four columns).
    #[default]
    Both,
}

impl Form {
    /// One value as text in this form, from its two forms: a value whose
    /// two forms read the same (a positive real) is written once; both
    /// forms are joined by ` = `.
    pub fn text(self, rect: &str, polar: &str) -> String {
        match self {
            _ if rect == polar => rect.to_string(),
            Form::Rect => rect.to_string(),
            Form::Polar => polar.to_string(),
            Form::Both => format!("{rect} = {polar}"),
        }
    }
}

/// Cell rows in `form`: with rect or polar alone, both text fields carry
/// that form (a table then shows the one column), the numbers stay.
pub fn cells_in_form(rows: &mut [CellRow], form: Form) {
    for r in rows {
        match form {
            Form::Rect => r.polar = r.display.clone(),
            Form::Polar => r.display = r.polar.clone(),
            Form::Both => {}
        }
    }
}

/// Check rows with their computed and reference values in `form`.
pub fn checks_in_form(rows: &mut [CheckRow], form: Form) {
    for r in rows {
        r.lhs_display = form.text(&r.lhs_display, &r.lhs_polar);
        r.rhs_display = form.text(&r.rhs_display, &r.rhs_polar);
    }
}

/// Rows for every check, in sheet order.
pub fn check_rows(engine: &Engine, style: Style) -> Vec<CheckRow> {
    let m = &engine.model;
    let mut rows = Vec::new();
    let (plan, verdicts) = crate::spread::checks::check_verdicts(engine);
    for (id, c) in m.checks() {
        if c.error.is_some() {
            continue;
        }
        let r = check_result(m, id, engine.values(id));
        let q = c.checked_quantity();
        let show = |z: C64| format_value(z, q, c.display.as_ref(), style).rect;
        let polar = |z: C64| format_value(z, q, c.display.as_ref(), style).polar;
        let (error_display, tolerance_display) =
            crate::units::format::check_gap(q, c.display.as_ref(), r.diff, r.tol, style);
        let (unit, k) = number_unit(q);
        let verdict = verdicts.iter().find(|v| v.cell == id);
        let over = verdict.map(|v| crate::output::spread::check_over_text(plan.as_ref(), c, v, style));
        rows.push(CheckRow {
            expr: c.formula.clone(),
            file: m.sources.get(c.file).name.clone(),
            line: c.line,
            passed: r.passed && verdict.is_none_or(|v| v.passed),
            over,
            lhs: Complex {
                re: r.lhs.re * k,
                im: r.lhs.im * k,
            },
            rhs: Complex {
                re: r.rhs.re * k,
                im: r.rhs.im * k,
            },
            error: r.diff * k,
            tolerance: r.tol * k,
            unit,
            error_display,
            tolerance_display,
            lhs_display: show(r.lhs),
            rhs_display: show(r.rhs),
            lhs_polar: polar(r.lhs),
            rhs_polar: polar(r.rhs),
        });
    }
    rows
}

#[derive(Serialize)]
struct JsonDoc<'a> {
    sheet: &'a str,
    amplitude: &'static str,
    meta: serde_json::Map<String, serde_json::Value>,
    cells: &'a [CellRow],
    checks: &'a [CheckRow],
}

/// The JSON document `run --format json` prints.
pub fn to_json(sheet_name: &str, model: &Model, cells: &[CellRow], checks: &[CheckRow]) -> String {
    let mut meta = serde_json::Map::new();
    for (k, v) in &model.meta.entries {
        meta.insert(k.clone(), serde_json::Value::String(v.clone()));
    }
    let doc = JsonDoc {
        sheet: sheet_name,
        amplitude: if model.ctx.peak { "peak" } else { "rms" },
        meta,
        cells,
        checks,
    };
    serde_json::to_string_pretty(&doc).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}

/// CSV of the cells: name, formula, unit, re, im, display, polar.
pub fn to_csv(cells: &[CellRow]) -> String {
    let mut w = csv::Writer::from_writer(Vec::new());
    let _ = w.write_record(["name", "formula", "unit", "re", "im", "display", "polar"]);
    for c in cells {
        let _ = w.write_record([
            c.name.as_str(),
            c.formula.as_str(),
            c.unit.as_str(),
            &num(c.re),
            &num(c.im),
            c.display.as_str(),
            c.polar.as_str(),
        ]);
    }
    String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
}

/// A float written so it reads back to the same bits, as a plain decimal
/// (`60`, `0`, `0.5`, `-3.25`) for 1e-5 ≤ |x| < 1e16 and in exponent form
/// (`1.5e-7`, `2e20`) outside that range; `NaN`, `inf`, `-inf`.
pub fn num(x: f64) -> String {
    let mut b = ryu::Buffer::new();
    let mut out = Vec::new();
    write_num(&mut out, &mut b, x);
    String::from_utf8(out).unwrap_or_default()
}

/// `num` into a byte buffer, for writers of many rows.
#[inline]
pub fn write_num(out: &mut Vec<u8>, buf: &mut ryu::Buffer, x: f64) {
    if x.is_finite() {
        // ryu gives the shortest digits that read back, as a decimal
        // in [1e-5, 1e16) and in exponent form outside it.
        let s = buf.format_finite(x);
        let s = s.strip_suffix(".0").unwrap_or(s);
        out.extend_from_slice(if s == "-0" { b"0" } else { s.as_bytes() });
    } else if x.is_nan() {
        out.extend_from_slice(b"NaN");
    } else if x > 0.0 {
        out.extend_from_slice(b"inf");
    } else {
        out.extend_from_slice(b"-inf");
    }
}

#[cfg(test)]
mod tests {
    use super::num;

    // Plain decimals as spreadsheets and people write them (common
    // practice); every string reads back to the same bits (Rust's f64
    // parser is correctly rounded).
    #[test]
    fn csv_numbers_are_plain_decimals() {
        for (x, want) in [
            (60.0, "60"),
            (0.0, "0"),
            (-0.0, "0"),
            (0.5, "0.5"),
            (-3.25, "-3.25"),
            (1e-5, "0.00001"),
            (9.99e-6, "9.99e-6"),
            (1.5e-7, "1.5e-7"),
            (123456789012345.6, "123456789012345.6"),
            (9.999e15, "9999000000000000"),
            (1e16, "1e16"),
            (2.5e20, "2.5e20"),
            (0.1 + 0.2, "0.30000000000000004"),
            (f64::NAN, "NaN"),
            (f64::INFINITY, "inf"),
            (f64::NEG_INFINITY, "-inf"),
        ] {
            assert_eq!(num(x), want, "{x:e}");
            if x.is_finite() {
                assert_eq!(num(x).parse::<f64>().unwrap().to_bits(), (x + 0.0).to_bits());
            }
        }
    }
}
