//! The document/engine layer of a session, with no terminal and no
//! journal: an edit applied in place when the engine can, else by compiling
//! the whole document; its inverse kept for undo; the cells whose values
//! changed. A later front end (a language server) shares this layer.

use std::collections::HashMap;

use num_complex::Complex64 as C64;

use super::{show, sorted_refs, Edit, Session, Shown};
use crate::diag::{Diagnostic, ErrorCode, Span};
use crate::engine::{compile, CellId, EditError, Engine, Model, Role};
use crate::session::doc::DocLine;
use crate::syntax::ast::{Definition, Expr, ExprKind, Stmt, StmtKind};
use crate::units::format::Style;

impl Session {
    /// The document line for typed `text` replacing line `idx`, in the
    /// old line's layout (`Doc::merged_text`) and with its line ending.
    pub(super) fn line_for(&mut self, idx: usize, text: &str, stmt: Stmt) -> DocLine {
        let cr = self.doc.lines[idx].cr;
        let merged = self.doc.merged_text(idx, text);
        let line = if merged == text.trim() {
            plain_line(text, stmt)
        } else {
            match self.parse(&merged) {
                Ok(Some(s)) if matches!(s.kind, StmtKind::Def(_)) => DocLine {
                    text: merged,
                    stmt: Some(s),
                    error: None,
                    included: Vec::new(),
                    cr: None,
                },
                // An `@override` line (a directive as a whole line): its
                // text with the typed definition. Otherwise cannot happen
                // (layout never changes what parses).
                _ => DocLine {
                    text: merged,
                    ..plain_line(text, stmt)
                },
            }
        };
        DocLine { cr, ..line }
    }

    /// A value typed for a network element line (`Zt = 4 Ω` for
    /// `Zt = branch(g, bus, 3 Ω)`): the element line with only its value
    /// replaced, as `--set` does (`Sheet::set_override`), and its
    /// statement. `None` when line `idx` is not an element line or the
    /// whole element form was typed.
    pub(super) fn element_value(
        &mut self,
        idx: usize,
        typed: &str,
        d: &Definition,
    ) -> Result<Option<(String, Stmt)>, String> {
        let Some(Stmt {
            kind: StmtKind::Def(old),
            ..
        }) = &self.doc.lines[idx].stmt
        else {
            return Ok(None);
        };
        if element_form(&old.expr).is_none() || element_form(&d.expr).is_some() {
            return Ok(None);
        }
        if d.display.is_some() {
            return Err(format!(
                "`{}` is a network element: type its value alone here; a display unit for it is written in the sheet file",
                d.name.name
            ));
        }
        // The old line and the typed one, each parsed on its own (spans
        // are then offsets into their own text).
        let old_text = self.doc.lines[idx].text.clone();
        let value_span = match self.parse(&old_text) {
            Ok(Some(Stmt {
                kind: StmtKind::Def(o), ..
            })) => match &o.expr.kind {
                ExprKind::Call { args, .. } => element_form(&o.expr).and_then(|n| args.get(n)).map(|a| a.span),
                _ => None,
            },
            _ => None,
        };
        let typed_value = match self.parse(typed) {
            Ok(Some(Stmt {
                kind: StmtKind::Def(t), ..
            })) => Some(t.expr.span),
            _ => None,
        };
        let (Some(v), Some(t)) = (value_span, typed_value) else {
            return Ok(None);
        };
        let value = &typed[t.start as usize..t.end as usize];
        let full = format!(
            "{}{}{}",
            &old_text[..v.start as usize],
            value.trim(),
            &old_text[v.end as usize..]
        );
        match self.parse(&full) {
            Ok(Some(s)) if matches!(s.kind, StmtKind::Def(_)) => Ok(Some((full, s))),
            Ok(_) => Ok(None),
            Err(diag) => Err(self.render(&diag)),
        }
    }

    pub(super) fn push_undo(&mut self, inverse: Edit) {
        self.redo.clear();
        self.undo.push((inverse, self.version));
        self.version = self.next_version;
        self.next_version += 1;
    }

    // ---- applying edits ----

    /// Apply an edit: in place when the engine can, else by compiling the
    /// document. Unless `force`, an edit that brings a new error is
    /// refused and nothing changes. Returns the inverse edit and what
    /// changed.
    pub(super) fn apply(&mut self, edit: Edit, force: bool) -> Result<(Edit, Vec<Shown>), String> {
        // An input given a value of another dimension or kind: if that
        // brings errors, they are reported here, at the edit.
        let clash = if force { None } else { self.input_clash(&edit) };
        if let Some((d, true)) = &clash {
            return Err(self.render(d));
        }
        let clash = clash.map(|(d, _)| d);
        // The fast paths.
        match &edit {
            Edit::Replace(idx, line) => {
                if let (Some(StmtKind::Def(d)), Some(old)) =
                    (line.stmt.as_ref().map(|s| &s.kind), self.doc.lines[*idx].defines())
                {
                    // An element line is compiled with its whole network.
                    if d.name.name == old && element_form(&d.expr).is_none() {
                        // A value that gains an imaginary part can change
                        // the kinds of the cells built from it (`k * Q` is
                        // var for a real `k`, VA for `1 + j1`): those are
                        // decided by compiling the whole document.
                        let gains_imaginary = |this: &mut Self, id| {
                            let was_real = this.engine.values(id).iter().all(|z| z.im == 0.0);
                            was_real
                                && this
                                    .engine
                                    .evaluate(&d.expr)
                                    .is_ok_and(|(_, v)| v.iter().any(|z| z.im != 0.0))
                        };
                        if let Some(id) = self.engine.model.id(old).filter(|&id| !gains_imaginary(self, id)) {
                            let stmt = line.stmt.as_ref().expect("checked");
                            match self.engine.redefine(id, stmt, d) {
                                Ok(changes) => {
                                    let shown = self.shown_changes(&changes);
                                    let prev = std::mem::replace(&mut self.doc.lines[*idx], line.clone());
                                    return Ok((Edit::Replace(*idx, prev), shown));
                                }
                                Err(EditError::Invalid(diag)) if !force => return Err(self.render(&diag)),
                                Err(_) => {}
                            }
                        }
                    }
                }
            }
            Edit::Delete(idx) if *idx + 1 == self.doc.lines.len() => {
                if let Some(id) = self.doc.lines[*idx].defines().and_then(|n| self.engine.model.id(n)) {
                    if self.engine.remove_last(id).is_ok() {
                        let line = self.doc.lines.remove(*idx);
                        return Ok((Edit::Insert(*idx, line), Vec::new()));
                    }
                }
            }
            Edit::Insert(idx, line) if *idx == self.doc.lines.len() => {
                if let Some(StmtKind::Def(d)) = line.stmt.as_ref().map(|s| &s.kind) {
                    let stmt = line.stmt.as_ref().expect("checked");
                    match self.engine.add_cell(stmt, d) {
                        Ok(change) => {
                            let shown = self.shown_changes(&[change]);
                            self.doc.lines.push(line.clone());
                            return Ok((Edit::Delete(*idx), shown));
                        }
                        Err(EditError::Invalid(diag)) if !force => return Err(self.render(&diag)),
                        Err(_) => {}
                    }
                }
            }
            _ => {}
        }
        // Compile the whole document.
        let inverse = self.doc_apply(edit);
        let sheet = self.doc.sheet(&self.engine.model.sources);
        let mut model = compile(&sheet);
        model.diagnostics.retain(|d| d.code != ErrorCode::EmptySheet);
        if !force {
            let old = &self.engine.model.diagnostics;
            let fresh: Vec<&Diagnostic> = model
                .diagnostics
                .iter()
                .filter(|d| d.is_error() && !old.contains(d))
                .collect();
            if let (Some(d), false) = (&clash, fresh.is_empty()) {
                let n = fresh.len();
                let text = format!(
                    "{}  (as written it would bring {n} error{} in the cells that use it)\n",
                    d.render(&self.engine.model.sources, self.color).trim_end(),
                    if n == 1 { "" } else { "s" }
                );
                self.doc_apply(inverse);
                return Err(text);
            }
            if !fresh.is_empty() {
                let text: String = sorted_refs(&fresh)
                    .into_iter()
                    .map(|d| d.render(&model.sources, self.color))
                    .collect();
                self.doc_apply(inverse);
                return Err(text);
            }
        }
        let engine = Engine::new(model);
        let shown = diff(&self.engine, &engine, self.style, self.polar);
        self.engine = engine;
        Ok((inverse, shown))
    }

    /// The error for an edit that gives an input other cells use a value of
    /// another dimension or kind (`Vs = 480` for an input in volts), at the
    /// edit, and whether it is refused outright (always): a plain number
    /// for an input with a unit (a forgotten unit), another kind of the
    /// same dimension (kW for kvar), or a unit of another dimension
    /// (`g = 2 A` for a plain `g`), even when the cells that use it would
    /// not break — they were written for the input's dimension. An input
    /// nothing uses yet takes any value.
    fn input_clash(&mut self, edit: &Edit) -> Option<(Diagnostic, bool)> {
        let Edit::Replace(idx, line) = edit else { return None };
        let Some(StmtKind::Def(d)) = line.stmt.as_ref().map(|s| &s.kind) else {
            return None;
        };
        let m = &self.engine.model;
        let id = m.id(&d.name.name)?;
        let c = &m.cells[id as usize];
        let users = &m.dependents[id as usize];
        if self.doc.lines[*idx].defines() != Some(d.name.name.as_str()) || !c.input || users.is_empty() {
            return None;
        }
        let Some(crate::funcs::Shape::Scalar(want)) = c.shape else {
            return None;
        };
        let unit = c.display.as_ref().map(|u| u.symbol.clone());
        let names: Vec<String> = users.iter().take(5).map(|&u| show::cell_label(m, u)).collect();
        let e = d.expr.clone();
        let Ok((crate::funcs::Shape::Scalar(got), _)) = self.engine.evaluate(&e) else {
            return None;
        };
        if crate::units::kind::fits_input(want, got) {
            return None;
        }
        let text = self.engine.model.sources.slice(e.span).to_string();
        let (message, hint) = crate::units::kind::input_clash(&d.name.name, want, got, &text, unit.as_deref());
        let code = if want.dim == got.dim {
            ErrorCode::KindMismatch
        } else {
            ErrorCode::DimensionMismatch
        };
        // Refused outright, whether or not the cells that use it would
        // break: they were written for the input's dimension and kind.
        let outright = true;
        Some((
            Diagnostic::error(code, e.span, message)
                .with_label(format!("`{}` is used by {}", d.name.name, names.join(", ")))
                .with_hint(hint),
            outright,
        ))
    }

    /// Change the document; returns the inverse edit.
    pub(super) fn doc_apply(&mut self, edit: Edit) -> Edit {
        match edit {
            Edit::Replace(i, line) => Edit::Replace(i, std::mem::replace(&mut self.doc.lines[i], line)),
            Edit::Insert(i, line) => {
                self.doc.lines.insert(i, line);
                Edit::Delete(i)
            }
            Edit::Delete(i) => Edit::Insert(i, self.doc.lines.remove(i)),
        }
    }

    pub(super) fn shown_changes(&self, changes: &[crate::engine::Change]) -> Vec<Shown> {
        changes
            .iter()
            .map(|c| Shown {
                name: show::cell_label(&self.engine.model, c.cell),
                old: if c.old.is_empty() {
                    None
                } else {
                    Some(show::cell_vals(
                        &self.engine.model,
                        c.cell,
                        &c.old,
                        self.style,
                        self.polar,
                    ))
                },
                new: show::cell_vals(&self.engine.model, c.cell, &c.new, self.style, self.polar),
            })
            .collect()
    }

    /// A cell's current value as shown.
    pub fn cell_value(&self, id: CellId) -> String {
        show::cell_vals(&self.engine.model, id, self.engine.values(id), self.style, self.polar)
    }
    // ---- for completion ----

    /// Names of the defined cells.
    pub fn cell_names(&self) -> impl Iterator<Item = &str> {
        self.engine.model.by_name.keys().map(String::as_str)
    }
}

/// The value argument's index when `e` is a network element form.
fn element_form(e: &Expr) -> Option<usize> {
    match &e.kind {
        ExprKind::Call { func, .. } => crate::syntax::ast::NETWORK_ELEMENTS
            .iter()
            .find(|(f, _)| *f == func.name)
            .map(|&(_, n)| n),
        _ => None,
    }
}

pub(super) fn plain_line(text: &str, stmt: Stmt) -> DocLine {
    DocLine {
        text: text.trim().to_string(),
        stmt: Some(stmt),
        error: None,
        included: Vec::new(),
        cr: None,
    }
}

/// The key of a cell across two compiles: its name, or for a check the
/// place of its statement.
#[derive(Clone, PartialEq, Eq, Hash)]
enum Key {
    Name(String),
    Check(Span),
}

fn key(m: &Model, id: CellId) -> Key {
    let c = &m.cells[id as usize];
    match c.role {
        Role::Def => Key::Name(c.name.clone()),
        Role::Check => Key::Check(c.stmt_span),
    }
}

/// Cells whose values differ between two engines (after a full compile),
/// in the new one's evaluation order.
fn diff(old: &Engine, new: &Engine, style: Style, polar: bool) -> Vec<Shown> {
    let om = &old.model;
    let nm = &new.model;
    let old_ids: HashMap<Key, CellId> = om.order.iter().map(|&id| (key(om, id), id)).collect();
    let bits = |v: &[C64]| v.iter().map(|z| (z.re.to_bits(), z.im.to_bits())).collect::<Vec<_>>();
    let mut out = Vec::new();
    for &id in &nm.order {
        let k = key(nm, id);
        let newv = new.values(id);
        let old_id = old_ids.get(&k).copied();
        let same = old_id.is_some_and(|o| {
            om.cells[o as usize].shape == nm.cells[id as usize].shape
                && om.cells[o as usize].display == nm.cells[id as usize].display
                && bits(old.values(o)) == bits(newv)
        });
        if same {
            continue;
        }
        out.push(Shown {
            name: show::cell_label(nm, id),
            old: old_id.map(|o| show::cell_vals(om, o, old.values(o), style, polar)),
            new: show::cell_vals(nm, id, newv, style, polar),
        });
    }
    out
}
