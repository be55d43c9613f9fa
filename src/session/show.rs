//! How a session shows things: values, changes, the cell list, the
//! dependency tree of `/why`, the users of `/feeds`, `/about` and `/help`.

use std::collections::BTreeSet;

use super::journal::Entry;
use super::state::{plural, Session, Shown, COMMANDS};
pub use crate::analysis::values::{cell_label, cell_vals, value};
use crate::engine::model::signature;
use crate::engine::{CellId, Role};
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

fn node(s: &Session, id: CellId) -> String {
    let c = &s.engine.model.cells[id as usize];
    let v = s.cell_value(id);
    let f = c.formula.trim();
    let m = &s.engine.model;
    // A library value this sheet overrides: both places.
    if let Some(lib) = s
        .doc
        .overrides
        .iter()
        .find(|o| o.name == c.name)
        .and_then(|o| o.library)
    {
        // The main sheet as the prompt names it; a library by its path
        // from the sheet's folder.
        let name = |f: crate::diag::FileId| match s.doc.files.iter().find(|x| x.id == f) {
            _ if f == s.doc.main => s.display_name(),
            Some(x) => x.rel.clone(),
            None => m.sources.get(f).name.clone(),
        };
        let place = |sp: crate::diag::Span| format!("{}:{}", name(sp.file), m.sources.line_of(sp));
        return format!(
            "{} = {f}  ⇒ {v}   · @override at {}, of the library value at {}",
            c.name,
            place(c.name_span),
            place(lib)
        );
    }
    if c.input {
        if f == v {
            format!("{} = {f}   · input", c.name)
        } else {
            format!("{} = {f}  ⇒ {v}   · input", c.name)
        }
    } else {
        format!("{} = {f}  ⇒ {v}", c.name)
    }
}

/// `/why NAME`: the cell's formula and value, and under it every cell it
/// uses, recursively down to the inputs. A cell met a second time is not
/// expanded again.
pub fn why(s: &Session, root: CellId) -> String {
    let m = &s.engine.model;
    let mut out = String::new();
    let mut lines = 0usize;
    let mut expanded: BTreeSet<CellId> = BTreeSet::new();
    // (cell, prefix for its children, its own branch text)
    let mut stack: Vec<(CellId, String, String)> = vec![(root, String::new(), String::new())];
    while let Some((id, prefix, branch)) = stack.pop() {
        if lines >= MAX_LINES {
            out.push_str("… (the tree goes on; ask /why for a cell further down)\n");
            break;
        }
        lines += 1;
        let c = &m.cells[id as usize];
        let again = !c.deps.is_empty() && expanded.contains(&id);
        if again {
            out.push_str(&format!("{branch}{} ⇒ {}   (shown above)\n", c.name, s.cell_value(id)));
            continue;
        }
        out.push_str(&format!("{branch}{}\n", node(s, id)));
        expanded.insert(id);
        let n = c.deps.len();
        for (k, &d) in c.deps.iter().enumerate().rev() {
            let last = k + 1 == n;
            let b = format!("{prefix}{}", if last { "└─ " } else { "├─ " });
            let p = format!("{prefix}{}", if last { "   " } else { "│  " });
            stack.push((d, p, b));
        }
    }
    if m.cells[root as usize].input {
        out.push_str("  (an input: its formula uses no other cell)\n");
    }
    out
}

/// `/feeds NAME`: every cell whose value depends on this one, in the
/// order they are computed.
pub fn feeds(s: &Session, id: CellId) -> String {
    let m = &s.engine.model;
    let direct: BTreeSet<CellId> = m.dependents[id as usize].iter().copied().collect();
    let mut all: BTreeSet<CellId> = BTreeSet::new();
    let mut todo: Vec<CellId> = direct.iter().copied().collect();
    while let Some(d) = todo.pop() {
        if all.insert(d) {
            todo.extend(m.dependents[d as usize].iter().copied());
        }
    }
    let name = &m.cells[id as usize].name;
    if all.is_empty() {
        return format!("no other cell uses {name}\n");
    }
    let mut v: Vec<CellId> = all.into_iter().collect();
    v.sort_by_key(|&d| (m.rank[d as usize], d));
    let mut out = format!(
        "{name} feeds {} cell{} ({} directly):\n",
        v.len(),
        plural(v.len()),
        direct.len()
    );
    for &d in v.iter().take(MAX_LINES) {
        let c = &m.cells[d as usize];
        let mark = if direct.contains(&d) { "•" } else { " " };
        let text = if c.role == Role::Check {
            // The check's formula reads `check a ~= b …` already.
            format!("{}  {}", c.formula.trim(), s.cell_value(d))
        } else {
            format!("{} = {}  ⇒ {}", c.name, c.formula.trim(), s.cell_value(d))
        };
        out.push_str(&format!("  {mark} {text}\n"));
    }
    if v.len() > MAX_LINES {
        out.push_str(&format!("  … and {} more\n", v.len() - MAX_LINES));
    }
    out.push_str("  (• uses it directly)\n");
    out
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
        out.push_str(&format!("cell {}\n", node(s, id)));
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
