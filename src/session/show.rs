//! How a session shows things: values, changes, the cell list, the
//! dependency tree of `/why`, the users of `/feeds`, `/about` and `/help`.

use super::journal::Entry;
use super::state::{Session, Shown, COMMANDS};
use crate::analysis::explain::{self, Context};
pub use crate::analysis::values::{cell_label, cell_vals, value};
use crate::engine::model::signature;
use crate::engine::CellId;
use crate::units::format::{base_symbol, fmt_sig};

/// The most lines `/why` and a change report print.
const MAX_LINES: usize = 400;

pub fn entry_text(e: &Entry) -> String {
    match e {
        Entry::Line(t) => t.clone(),
        Entry::Remove(n) => format!("/remove {n}"),
        Entry::Back => "/back".into(),
        Entry::Forward => "/forward".into(),
    }
}

/// The first line of a change report: the edited cell and its value.
pub fn headline(s: &Shown) -> String {
    if s.name.starts_with("check ") {
        return format!("{}: {}\n", s.name, s.new);
    }
    match &s.old {
        Some(old) => format!("{} = {}   (was {old})\n", s.name, s.new),
        None => format!("{} = {}\n", s.name, s.new),
    }
}

/// Other cells that changed, old → new, aligned.
pub fn changes(rest: &[&Shown]) -> String {
    if rest.is_empty() {
        return String::new();
    }
    let w = rest.iter().take(MAX_LINES).map(|s| width(&s.name)).max().unwrap_or(0);
    let ow = rest
        .iter()
        .take(MAX_LINES)
        .map(|s| s.old.as_deref().map_or(3, width))
        .max()
        .unwrap_or(0);
    let mut out = String::new();
    for s in rest.iter().take(MAX_LINES) {
        let old = s.old.as_deref().unwrap_or("new");
        out.push_str(&format!(
            "  {}{}  {}{}  →  {}\n",
            s.name,
            pad(w, &s.name),
            old,
            pad(ow, old),
            s.new
        ));
    }
    if rest.len() > MAX_LINES {
        out.push_str(&format!("  … and {} more cells changed\n", rest.len() - MAX_LINES));
    }
    out
}

fn width(s: &str) -> usize {
    unicode_width::UnicodeWidthStr::width(s)
}

fn pad(w: usize, s: &str) -> String {
    " ".repeat(w.saturating_sub(width(s)))
}

/// `/cells [text]`: every cell (whose name contains `text`) with its value
/// and formula, in sheet order; then the checks.
pub fn cells(s: &Session, filter: &str) -> String {
    let m = &s.engine.model;
    let rows: Vec<(String, String, String)> = m
        .defs()
        .filter(|(_, c)| c.name.contains(filter))
        .map(|(id, c)| {
            let v = s.cell_value(id);
            let f = if c.input && c.formula.trim() == v {
                String::new()
            } else {
                format!("= {}", c.formula.trim())
            };
            (c.name.clone(), v, f)
        })
        .collect();
    let mut out = String::new();
    if rows.is_empty() {
        out.push_str(if filter.is_empty() {
            "no cells yet: type `name = expression`, e.g. `Vs = 480 V`\n"
        } else {
            "no cell name contains that\n"
        });
    }
    let nw = rows.iter().map(|r| width(&r.0)).max().unwrap_or(0);
    let vw = rows.iter().map(|r| width(&r.1)).max().unwrap_or(0).min(40);
    for (n, v, f) in &rows {
        let line = format!("  {n}{}  {v}{}  {f}", pad(nw, n), pad(vw, v));
        out.push_str(line.trim_end());
        out.push('\n');
    }
    if filter.is_empty() {
        for (id, c) in m.checks() {
            out.push_str(&format!("  check {}  {}\n", c.formula.trim(), s.cell_value(id)));
        }
    }
    out
}

/// What `/why` and `/feeds` see of the session.
fn context(s: &Session) -> Context<'_> {
    Context {
        engine: &s.engine,
        display: crate::analysis::Display {
            style: s.style,
            polar: s.polar,
        },
        overrides: &s.doc.overrides,
        files: &s.doc.files,
        main: s.doc.main,
        main_name: s.display_name(),
    }
}

/// `/why NAME` (see `analysis::explain::why`).
pub fn why(s: &Session, root: CellId) -> String {
    explain::why(&context(s), root, MAX_LINES)
}

/// `/feeds NAME` (see `analysis::explain::feeds`).
pub fn feeds(s: &Session, id: CellId) -> String {
    explain::feeds(&context(s), id, MAX_LINES)
}

/// `/about NAME`: a function's signature, a unit's meaning, or a cell.
pub fn about(s: &Session, name: &str) -> String {
    if name.is_empty() {
        return "ask about a function, unit or cell: /about abs, /about kvar, /about Zth\n".into();
    }
    let mut out = String::new();
    if let Some((_, f)) = crate::funcs::find(name) {
        out.push_str(&format!(
            "function {}  → {}\n  {}\n",
            signature(f),
            f.returns,
            f.summary
        ));
    }
    if let Ok(u) = crate::units::lookup_unit(name) {
        let base = base_symbol(u.q);
        let what = u.q.describe();
        let factor = if u.q.kind == crate::units::Kind::Angle {
            format!("1 {name} = {} rad", fmt_sig(u.factor, 6))
        } else if base.is_empty() {
            format!("1 {name} = {}", fmt_sig(u.factor, 6))
        } else {
            format!("1 {name} = {} {base}", fmt_sig(u.factor, 6))
        };
        out.push_str(&format!("unit {name}: {what}; {factor}\n"));
    }
    match name {
        "pi" => out.push_str("constant pi = π = 3.14159…\n"),
        "j" => out.push_str("constant j: the imaginary unit, j² = -1 (also glued: 3j, j3)\n"),
        _ => {}
    }
    let m = &s.engine.model;
    if let Some(id) = m.id(name) {
        let c = &m.cells[id as usize];
        out.push_str(&format!("cell {}\n", explain::node(&context(s), id)));
        if let Some(cm) = &c.comment {
            out.push_str(&format!("  note: {cm}\n"));
        }
        let uses: Vec<&str> = c.deps.iter().map(|&d| m.cells[d as usize].name.as_str()).collect();
        if !uses.is_empty() {
            out.push_str(&format!("  uses: {}\n", uses.join(", ")));
        }
        let users: Vec<String> = m.dependents[id as usize].iter().map(|&d| cell_label(m, d)).collect();
        if !users.is_empty() {
            out.push_str(&format!("  used by: {}\n", users.join(", ")));
        }
    }
    if out.is_empty() {
        let pool: Vec<String> = crate::funcs::library()
            .iter()
            .map(|f| f.name.to_string())
            .chain(crate::units::table::all_symbols().map(str::to_string))
            .chain(m.defs().map(|(_, c)| c.name.clone()))
            .collect();
        out = match crate::diag::did_you_mean(name, pool.iter().map(String::as_str)) {
            Some(g) => format!("nothing called `{name}` (did you mean `{g}`?)\n"),
            None => format!("nothing called `{name}`: not a function, unit or cell\n"),
        };
    }
    out
}

pub fn help() -> String {
    let mut out = String::from(
        "Type `name = expression` to define or change a cell (e.g. `Zl = (8 + j6) Ω`);\n\
         every cell that depends on it is recomputed and the changes are listed.\n\
         An expression alone (e.g. `abs(I)`) is evaluated and not stored.\n\
         `check a ~= b +- 1%` adds a check. Tab completes names; ↑/↓ recall lines.\n\n",
    );
    let w = COMMANDS
        .iter()
        .map(|(n, a, _)| width(n) + width(a) + 2)
        .max()
        .unwrap_or(0);
    for (n, a, what) in COMMANDS {
        let head = if a.is_empty() {
            format!("/{n}")
        } else {
            format!("/{n} {a}")
        };
        out.push_str(&format!("  {head}{}  {what}\n", pad(w, &head)));
    }
    out.push_str(
        "\nEvery change is journalled as you make it: if the session is cut off, the next\n\
         start on the same sheet offers to restore it. /save writes the sheet file.\n",
    );
    out
}
