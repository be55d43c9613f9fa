//! Why a cell has its value and what uses it: the tree of `/why` (the
//! cell, and under it every cell it uses down to the inputs) and the list
//! of `/feeds`. Shared by the terminal session and the language server's
//! hover.

use std::collections::BTreeSet;

use super::values::cell_vals;
use super::Display;
use crate::diag::FileId;
use crate::engine::{CellId, Engine, Role};
use crate::sheet::{Override, SheetFile};

/// What the explanations read: the engine, how values are shown, and the
/// files and overrides of the sheet (to name a library value's places).
pub struct Context<'a> {
    pub engine: &'a Engine,
    pub display: Display,
    pub overrides: &'a [Override],
    pub files: &'a [SheetFile],
    pub main: FileId,
    /// The main sheet's name as the front end shows it.
    pub main_name: String,
}

impl Context<'_> {
    /// A cell's current value as shown.
    pub fn value(&self, id: CellId) -> String {
        let m = &self.engine.model;
        cell_vals(m, id, self.engine.values(id), self.display.style, self.display.polar)
    }
}

fn plural(n: usize) -> &'static str {
    if n == 1 {
        ""
    } else {
        "s"
    }
}

/// A cell on one line: `name = formula  ⇒ value`, marked as an input or
/// as an `@override` of a library value (with both places).
pub fn node(s: &Context, id: CellId) -> String {
    let c = &s.engine.model.cells[id as usize];
    let v = s.value(id);
    let f = c.formula.trim();
    let m = &s.engine.model;
    // A library value this sheet overrides: both places.
    if let Some(lib) = s.overrides.iter().find(|o| o.name == c.name).and_then(|o| o.library) {
        // The main sheet as the prompt names it; a library by its path
        // from the sheet's folder.
        let name = |f: crate::diag::FileId| match s.files.iter().find(|x| x.id == f) {
            _ if f == s.main => s.main_name.clone(),
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
pub fn why(s: &Context, root: CellId, max_lines: usize) -> String {
    let m = &s.engine.model;
    let mut out = String::new();
    let mut lines = 0usize;
    let mut expanded: BTreeSet<CellId> = BTreeSet::new();
    // (cell, prefix for its children, its own branch text)
    let mut stack: Vec<(CellId, String, String)> = vec![(root, String::new(), String::new())];
    while let Some((id, prefix, branch)) = stack.pop() {
        if lines >= max_lines {
            out.push_str("… (the tree goes on; ask /why for a cell further down)\n");
            break;
        }
        lines += 1;
        let c = &m.cells[id as usize];
        let again = !c.deps.is_empty() && expanded.contains(&id);
        if again {
            out.push_str(&format!("{branch}{} ⇒ {}   (shown above)\n", c.name, s.value(id)));
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
pub fn feeds(s: &Context, id: CellId, max_lines: usize) -> String {
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
    for &d in v.iter().take(max_lines) {
        let c = &m.cells[d as usize];
        let mark = if direct.contains(&d) { "•" } else { " " };
        let text = if c.role == Role::Check {
            // The check's formula reads `check a ~= b …` already.
            format!("{}  {}", c.formula.trim(), s.value(d))
        } else {
            format!("{} = {}  ⇒ {}", c.name, c.formula.trim(), s.value(d))
        };
        out.push_str(&format!("  {mark} {text}\n"));
    }
    if v.len() > max_lines {
        out.push_str(&format!("  … and {} more\n", v.len() - max_lines));
    }
    out.push_str("  (• uses it directly)\n");
    out
}
