//! What the engineer sees on pointing at something, as Markdown text:
//! - a cell: its value in rectangular and polar form, what kind of
//!   quantity it is and its unit, the formula with the values put in (as a
//!   report writes it), the tree of the cells it uses (as `/why`, cut
//!   short), and what uses it;
//! - a function: its signature with units, what it returns, what it does,
//!   and the published method it follows (`Builtin::source`);
//! - a unit: what it measures and its size in SI (as `/about`).

use std::ops::Range;

use super::document::Document;
use super::explain::{self, Context};
use super::symbols::{self, SymKind};
use super::values::cell_label;
use super::Display;
use crate::engine::model::signature;
use crate::engine::{CellId, Role};
use crate::funcs::Shape;
use crate::units::format::{base_symbol, fmt_sig, format_value};

/// The most lines of the `/why` tree a hover shows.
const WHY_LINES: usize = 24;
/// The most users named.
const USERS: usize = 12;

#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Hover {
    /// The text pointed at.
    pub range: Range<usize>,
    pub markdown: String,
}

/// The hover at byte `offset` of the document.
pub fn hover(doc: &Document, display: Display, offset: usize) -> Option<Hover> {
    let line = doc.line_of(offset);
    let lr = doc.line_range(line);
    let Some(occ) = symbols::at(doc.text(), lr.start, doc.line_text(line), (line + 1) as u32, offset) else {
        // Elsewhere on a check line (`check`, `~=`, a number): its verdict.
        return check_hover(doc, display, line);
    };
    let markdown = match occ.kind {
        SymKind::Name => match occ.name.as_str() {
            "pi" => "constant **pi** = π = 3.14159…\n".to_string(),
            "j" => "constant **j**: the imaginary unit, j² = −1 (also glued: 3j, j3)\n".to_string(),
            n => cell_text(doc, display, n)?,
        },
        SymKind::Function => function_text(&occ.name)?,
        SymKind::Unit => unit_text(&occ.name)?,
        SymKind::Field => field_text(doc, display, occ.of.as_deref()?, &occ.name)?,
        SymKind::Directive => directive_text(&occ.name)?,
        SymKind::SearchVar => "the variable of this search: the value the search varies".to_string(),
    };
    Some(Hover {
        range: occ.range,
        markdown,
    })
}

/// A check's verdict: the two sides as computed, the difference and what
/// is allowed.
fn check_hover(doc: &Document, display: Display, line: usize) -> Option<Hover> {
    let m = &doc.engine.model;
    let (id, c, at) = m.checks().find_map(|(id, c)| {
        let at = doc.locate(c.stmt_span)?;
        (at.place == super::Place::Main && doc.line_of(at.range.start) == line).then_some((id, c, at))
    })?;
    let mut out = format!("`{}`\n\n", c.formula.trim());
    if c.error.is_some() {
        out.push_str("no verdict: see the problem reported on its line, or on a line it uses\n");
    } else {
        let vals = doc.engine.values(id);
        let r = crate::engine::check_result(m, id, vals);
        let q = c.checked_quantity();
        let show = |z| {
            let f = format_value(z, q, c.display.as_ref(), display.style);
            if display.polar {
                f.polar
            } else {
                f.rect
            }
        };
        out.push_str(&format!(
            "{}\n\ncomputed {}, stated {}\n",
            crate::analysis::values::cell_vals(m, id, vals, display.style, display.polar),
            show(r.lhs),
            show(r.rhs)
        ));
    }
    Some(Hover {
        range: at.range,
        markdown: out,
    })
}

fn context<'a>(doc: &'a Document, display: Display) -> Context<'a> {
    Context {
        engine: &doc.engine,
        display,
        overrides: &doc.overrides,
        files: &doc.files,
        main: doc.main_file(),
        main_name: doc
            .path
            .as_ref()
            .and_then(|p| p.file_name())
            .map_or_else(|| "this sheet".to_string(), |f| f.to_string_lossy().into_owned()),
    }
}

/// A code block (the text cannot close it early).
fn code(text: &str) -> String {
    let fence = if text.contains("```") { "````" } else { "```" };
    format!("{fence}text\n{}\n{fence}\n", text.trim_end())
}

pub fn cell_text(doc: &Document, display: Display, name: &str) -> Option<String> {
    let m = &doc.engine.model;
    let id = m.id(name)?;
    let c = &m.cells[id as usize];
    let mut out = format!("**{}** = `{}`\n\n", c.name, c.formula.trim());
    if c.error.is_some() {
        out.push_str(&explain::node(&context(doc, display), id));
        out.push_str("\n\nno value: see the problem reported on its line, or on the line it uses\n");
        return Some(out);
    }
    let vals = doc.engine.values(id);
    match &c.shape {
        Some(Shape::Scalar(q)) => {
            let f = format_value(vals[0], *q, c.display.as_ref(), display.style);
            out.push_str(&format!("= {}\n\n", f.rect));
            if f.polar != f.rect {
                out.push_str(&format!("= {}\n\n", f.polar));
            }
            let base = base_symbol(*q);
            let unit = if f.unit.is_empty() || f.unit == base {
                base
            } else {
                format!("{} (shown in {})", base, f.unit)
            };
            if unit.is_empty() {
                out.push_str(&format!("{}\n\n", q.describe()));
            } else {
                out.push_str(&format!("{}, in {unit}\n\n", q.describe()));
            }
        }
        Some(Shape::Record(fields)) => {
            out.push_str("a record:\n\n");
            for ((f, q), &z) in fields.iter().zip(vals) {
                let v = format_value(z, *q, None, display.style);
                if v.polar != v.rect {
                    out.push_str(&format!("- `{}.{f}` = {} = {}\n", c.name, v.rect, v.polar));
                } else {
                    out.push_str(&format!("- `{}.{f}` = {}\n", c.name, v.rect));
                }
            }
            out.push('\n');
        }
        None => {}
    }
    if let Some(cm) = c.comment.as_ref().filter(|s| !s.trim().is_empty()) {
        out.push_str(&format!("_{}_\n\n", cm.trim()));
    }
    if let Some(sub) = substituted(doc, display, id) {
        if sub.trim() != c.formula.trim() {
            out.push_str(&format!(
                "with the values put in:\n{}\n",
                code(&format!("{} = {sub}", c.name))
            ));
        }
    }
    if !c.deps.is_empty() {
        out.push_str(&format!(
            "why:\n{}\n",
            code(&explain::why(&context(doc, display), id, WHY_LINES))
        ));
    }
    out.push_str(&users(doc, id));
    Some(out)
}

/// The formula of cell `id` with the values of the cells it names put in.
fn substituted(doc: &Document, display: Display, id: CellId) -> Option<String> {
    let m = &doc.engine.model;
    let c = &m.cells[id as usize];
    let text = m.sources.slice(c.stmt_span);
    let st = crate::syntax::parse_line(text, c.stmt_span.file, c.stmt_span.start as usize, c.line).ok()??;
    let crate::syntax::ast::StmtKind::Def(d) = &st.kind else {
        return None;
    };
    Some(crate::output::report::substituted(&doc.engine, display.style, &d.expr))
}

fn users(doc: &Document, id: CellId) -> String {
    let m = &doc.engine.model;
    let users = &m.dependents[id as usize];
    if users.is_empty() {
        return "used by no other cell\n".into();
    }
    let names: Vec<String> = users
        .iter()
        .take(USERS)
        .map(|&u| {
            let l = cell_label(m, u);
            if m.cells[u as usize].role == Role::Check {
                l
            } else {
                format!("`{l}`")
            }
        })
        .collect();
    let more = if users.len() > USERS {
        format!(" and {} more", users.len() - USERS)
    } else {
        String::new()
    };
    format!("used by {}{more}\n", names.join(", "))
}

fn field_text(doc: &Document, display: Display, of: &str, field: &str) -> Option<String> {
    let m = &doc.engine.model;
    let id = m.id(of)?;
    let c = &m.cells[id as usize];
    let Some(Shape::Record(fields)) = &c.shape else {
        return None;
    };
    let k = fields.iter().position(|(n, _)| *n == field)?;
    if c.error.is_some() {
        return Some(format!("**{of}.{field}**: no value (`{of}` has an error)"));
    }
    let q = fields[k].1;
    let v = format_value(doc.engine.values(id)[k], q, None, display.style);
    let mut out = format!("**{of}.{field}** = {}\n\n", v.rect);
    if v.polar != v.rect {
        out.push_str(&format!("= {}\n\n", v.polar));
    }
    out.push_str(&format!(
        "{}; a field of `{of}` = `{}`\n",
        q.describe(),
        c.formula.trim()
    ));
    Some(out)
}

/// A function's signature with units, what it returns, what it does, and
/// its source.
pub fn function_text(name: &str) -> Option<String> {
    let (_, f) = crate::funcs::find(name)?;
    let mut out = code(&format!("{} → {}", signature(f), f.returns));
    out.push('\n');
    out.push_str(f.summary);
    out.push('\n');
    if !f.source.is_empty() {
        out.push_str(&format!("\nsource: {}\n", f.source));
    }
    Some(out)
}

/// What a unit (with its prefix) measures and its size in SI.
pub fn unit_text(name: &str) -> Option<String> {
    let u = crate::units::lookup_unit(name).ok()?;
    let base = base_symbol(u.q);
    let what = u.q.describe();
    let factor = if u.q.kind == crate::units::Kind::Angle {
        format!("1 {name} = {} rad", fmt_sig(u.factor, 6))
    } else if base.is_empty() {
        format!("1 {name} = {}", fmt_sig(u.factor, 6))
    } else {
        format!("1 {name} = {} {base}", fmt_sig(u.factor, 6))
    };
    Some(format!("unit **{name}**: {what}; {factor}\n"))
}

fn directive_text(name: &str) -> Option<String> {
    let what = match name {
        "include" => "merges a library sheet's cells; the path is relative to this sheet and stays in its folder",
        "override" => "gives one value of an included library sheet a new formula, for this sheet only",
        "note" => "a note about a cell (`@note CELL \"text\"`) or the sheet, shown in reports",
        "amplitude" => "whether phasor magnitudes are RMS or peak values (`rms` or `peak`)",
        "sweep" => "a sweep the sheet declares: an input and its range",
        "title" | "project" | "prepared" | "checked" | "revision" | "date" => "sheet metadata, shown in reports",
        _ => return None,
    };
    Some(format!("**@{name}**: {what}\n"))
}
