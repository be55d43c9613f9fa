//! Values as people read them: a cell's value (rectangular or polar, in
//! its display unit), a check's verdict and margin, a cell's label. Shared
//! by the terminal session and the language server.

use num_complex::Complex64 as C64;

use crate::engine::{check_result, CellError, CellId, Model, Role};
use crate::funcs::Shape;
use crate::units::format::{format_form, Style};
use crate::units::{Quantity, Unit};

pub fn one(z: C64, q: Quantity, display: Option<&Unit>, style: Style, polar: bool) -> String {
    format_form(z, q, display, style, polar)
}

/// A value of the given shape: a scalar, or `field = …` for each field.
pub fn value(shape: &Shape, vals: &[C64], display: Option<&Unit>, style: Style, polar: bool) -> String {
    match shape {
        Shape::Scalar(q) => one(vals[0], *q, display, style, polar),
        Shape::Record(fields) => {
            let mut out = String::with_capacity(fields.len() * 24);
            for (k, ((n, q), &z)) in fields.iter().zip(vals).enumerate() {
                if k > 0 {
                    out.push_str(", ");
                }
                out.push_str(n);
                out.push_str(" = ");
                out.push_str(&one(z, *q, None, style, polar));
            }
            out
        }
    }
}

/// A cell's values as shown: its value, or a check's verdict.
pub fn cell_vals(m: &Model, id: CellId, vals: &[C64], style: Style, polar: bool) -> String {
    let c = &m.cells[id as usize];
    match c.error {
        Some(CellError::Own) => return "(error in its formula)".into(),
        Some(CellError::Upstream(u)) => {
            return format!("(uses `{}`, which has an error)", cell_label(m, u));
        }
        None => {}
    }
    let Some(shape) = &c.shape else {
        return "?".into();
    };
    if c.role == Role::Check {
        let r = check_result(m, id, vals);
        let q = match shape {
            Shape::Record(f) => f[0].1,
            Shape::Scalar(q) => *q,
        };
        let (diff, tol) = crate::units::format::check_gap(q, c.display.as_ref(), r.diff, r.tol, style);
        return if r.passed {
            format!("holds (off by {diff}, allowed {tol})")
        } else {
            format!("FAILS (off by {diff}, allowed {tol})")
        };
    }
    value(shape, vals, c.display.as_ref(), style, polar)
}

/// A cell's name, or `check <formula>` for a check.
pub fn cell_label(m: &Model, id: CellId) -> String {
    let c = &m.cells[id as usize];
    match c.role {
        Role::Def => c.name.clone(),
        Role::Check => c.formula.trim().to_string(),
    }
}
