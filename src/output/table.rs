//! The aligned text table `ohmsheet run` prints.

use unicode_width::UnicodeWidthStr;

use super::{CellRow, CheckRow};
use crate::engine::Model;

fn pad(s: &str, w: usize) -> String {
    let n = UnicodeWidthStr::width(s);
    let mut out = s.to_string();
    out.extend(std::iter::repeat_n(' ', w.saturating_sub(n)));
    out
}

/// Cells as aligned columns: name, value, polar form, formula.
pub fn cells_table(model: &Model, cells: &[CellRow]) -> String {
    cells_table_noted(model, cells, &[])
}

/// Where each value the sheet does not take from its own definition came
/// from, for `cells_table_noted`: (cell name, note) for a library value
/// replaced by an `@override` line, a `--set` on the command line, or both.
pub fn override_notes(sheet: &crate::sheet::Sheet, model: &Model) -> Vec<(String, String)> {
    let mut notes: Vec<(String, String)> = Vec::new();
    for o in &sheet.overrides {
        let here = match o.library {
            Some(lib) => format!(
                "@override of {}:{}",
                model.sources.get(lib.file).name,
                model.sources.line_of(lib)
            ),
            None => "--set".to_string(),
        };
        match notes.iter_mut().find(|(n, _)| *n == o.name) {
            // a `--set` of a value the sheet overrides: both are named
            Some((_, text)) if o.library.is_none() => *text = format!("--set, over the {text}"),
            Some((_, text)) => *text = format!("--set, over the {here}"),
            None => notes.push((o.name.clone(), here)),
        }
    }
    notes
}

/// `cells_table`, with a note after the formula of each cell named in
/// `notes` (and of its record fields): where its value came from instead
/// of its own definition (`override_notes`).
pub fn cells_table_noted(model: &Model, cells: &[CellRow], notes: &[(String, String)]) -> String {
    let mut out = String::new();
    if let Some(t) = model.meta.get("title") {
        out.push_str(t);
        out.push('\n');
        out.push('\n');
    }
    let headers = ["name", "value", "polar", "formula"];
    let cols: Vec<[String; 4]> = cells
        .iter()
        .map(|c| {
            let name = if c.input {
                format!("{} ◂", c.name)
            } else {
                c.name.clone()
            };
            // The polar form of a real number says nothing new.
            let polar = if c.polar == c.display {
                String::new()
            } else {
                c.polar.clone()
            };
            // Cells from an included library sheet say where they came from.
            let main = model.sources.files().first().map(|f| f.name.as_str());
            let mut formula = if main.is_some_and(|m| m != c.file) {
                format!("{}   (from {}:{})", c.formula, c.file, c.line)
            } else {
                c.formula.clone()
            };
            let field_of = |n: &str| {
                c.name
                    .strip_prefix(n)
                    .is_some_and(|r| r.is_empty() || r.starts_with('.'))
            };
            if let Some((_, note)) = notes.iter().find(|(n, _)| field_of(n)) {
                formula = format!("{formula}   ({note})");
            }
            [name, c.display.clone(), polar, formula]
        })
        .collect();
    let mut w = headers.map(UnicodeWidthStr::width);
    for r in &cols {
        for k in 0..4 {
            w[k] = w[k].max(UnicodeWidthStr::width(r[k].as_str()));
        }
    }
    let line = |r: [&str; 4]| {
        let mut s = String::from("  ");
        for k in 0..3 {
            s.push_str(&pad(r[k], w[k]));
            s.push_str("   ");
        }
        s.push_str(r[3]);
        s.trim_end().to_string() + "\n"
    };
    out.push_str(&line(headers));
    for r in &cols {
        out.push_str(&line([&r[0], &r[1], &r[2], &r[3]]));
    }
    if cells.iter().any(|c| c.input) {
        out.push_str("  (◂ input: a value the sheet takes as given; change it with --set NAME=VALUE)\n");
    }
    if notes.iter().any(|(n, _)| model.id(n).is_some()) {
        out.push_str(
            "  (@override of FILE:LINE: this sheet's value in place of the library's defined there; --set: given on the command line)\n",
        );
    }
    out
}

/// Checks, one per line, with the verdict first.
pub fn checks_table(checks: &[CheckRow]) -> String {
    if checks.is_empty() {
        return String::new();
    }
    let mut out = String::from("\nchecks\n");
    let wexpr = checks
        .iter()
        .map(|c| UnicodeWidthStr::width(c.expr.as_str()))
        .max()
        .unwrap_or(0);
    for c in checks {
        let verdict = if c.passed { "pass" } else { "FAIL" };
        out.push_str(&format!(
            "  {verdict}  line {:<4} {}   computed {}, |difference| {} (allowed {})\n",
            c.line,
            pad(&c.expr, wexpr),
            c.lhs_display,
            c.error_display,
            c.tolerance_display
        ));
        if let Some(o) = &c.over {
            out.push_str(&format!("        {o}\n"));
        }
    }
    let failed = checks.iter().filter(|c| !c.passed).count();
    out.push_str(&format!(
        "  {} of {} checks pass\n",
        checks.len() - failed,
        checks.len()
    ));
    out
}
