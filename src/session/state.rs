//! The session itself, without a terminal: a document, its evaluated
//! model, the undo history and the journal. `Session::handle` takes one
//! typed line and answers with the text to show, so all of this is tested
//! without a pseudo-terminal; `repl.rs` adds line editing around it.

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use num_complex::Complex64 as C64;

use super::doc::{Doc, DocLine};
use super::journal::{self, Entry, Journal, Recovered};
use super::show;
use crate::diag::{did_you_mean, Diagnostic, ErrorCode, SourceFile, Span};
use crate::engine::{compile, CellId, EditError, Engine, Model, Role};
use crate::sheet::Sheet;
use crate::syntax::ast::{Stmt, StmtKind};
use crate::syntax::parse_line;
use crate::units::format::Style;

/// The name typed lines carry in messages (`input:1:6`).
pub const INPUT: &str = "input";

/// Said after a refused statement.
const UNCHANGED: &str = "(not applied: the sheet is as it was)\n";

/// What the terminal loop should do after a line.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Action {
    Continue,
    /// Leave the session (the loop asks first if there are unsaved changes).
    Leave,
    /// Open another sheet (the loop asks first if there are unsaved changes).
    Open(PathBuf),
}

/// The answer to one line.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Reply {
    pub text: String,
    pub action: Action,
    /// The line was refused (an error was shown).
    pub refused: bool,
}

impl Reply {
    fn ok(text: impl Into<String>) -> Reply {
        Reply {
            text: text.into(),
            action: Action::Continue,
            refused: false,
        }
    }
    fn refused(text: impl Into<String>) -> Reply {
        Reply {
            text: text.into(),
            action: Action::Continue,
            refused: true,
        }
    }
}

/// One change to the document. The inverse of an applied edit is kept for
/// undo.
#[derive(Clone, Debug)]
enum Edit {
    Replace(usize, DocLine),
    Insert(usize, DocLine),
    Delete(usize),
}

/// A cell whose value changed, ready to show.
#[derive(Clone, Debug, PartialEq)]
pub struct Shown {
    pub name: String,
    /// None for a new cell.
    pub old: Option<String>,
    pub new: String,
}

/// Session commands: name, argument, what it does. `/help` prints this.
pub const COMMANDS: &[(&str, &str, &str)] = &[
    ("cells", "[text]", "list the cells (those whose name contains text)"),
    (
        "why",
        "NAME",
        "how a cell gets its value: formula and inputs, as a tree",
    ),
    ("feeds", "NAME", "the cells that use a cell, directly or further on"),
    ("remove", "NAME", "remove a cell no other cell uses"),
    ("back", "", "undo the last change"),
    ("show", "[digits N | polar | rect]", "how values are shown"),
    ("about", "NAME", "a function, unit or cell explained"),
    ("open", "FILE", "work on another sheet"),
    ("save", "[FILE]", "write the sheet (to FILE, or where it came from)"),
    (
        "save!",
        "",
        "write the sheet over its file even though the file changed since it was read",
    ),
    ("done", "", "leave (asks first if changes are unsaved)"),
    ("help", "", "this list"),
];

pub struct Session {
    /// Where the sheet is saved (None: not yet named).
    pub path: Option<PathBuf>,
    pub doc: Doc,
    pub engine: Engine,
    undo: Vec<(Edit, u64)>,
    version: u64,
    next_version: u64,
    saved_version: u64,
    journal: Option<Journal>,
    data_dir: Option<PathBuf>,
    /// Entries written to the journal since the last save.
    entries: Vec<Entry>,
    pub style: Style,
    pub polar: bool,
    pub color: bool,
    /// A journal could not be written: said once, not on every line.
    journal_warned: bool,
    /// The sheet file as this session last read or wrote it (a hash of its
    /// bytes), to notice another session or an editor saving it meanwhile.
    on_disk: Option<u64>,
}

impl Session {
    /// Open a sheet (or an empty, unnamed one). A path that does not exist
    /// yet starts an empty sheet that `/save` creates. Returns the session
    /// and a greeting with any problems the sheet has.
    pub fn open(path: Option<&Path>, data_dir: Option<PathBuf>, color: bool) -> Result<(Session, String), String> {
        let (sheet, fresh) = match path {
            Some(p) if p.exists() => match Sheet::load(p) {
                Ok(s) => (s, false),
                Err(e) => return Err(e.diagnostic.render(&e.sources, color)),
            },
            Some(p) => (Sheet::from_text(&p.display().to_string(), ""), true),
            None => (Sheet::from_text("unnamed", ""), true),
        };
        let doc = Doc::from_sheet(&sheet);
        let mut model = compile(&sheet);
        model.diagnostics.retain(|d| d.code != ErrorCode::EmptySheet);
        let engine = Engine::new(model);
        let journal = data_dir
            .as_ref()
            .map(|d| Journal::claim(journal::journal_path(d, path), path, &doc.text()));
        let s = Session {
            path: path.map(Path::to_path_buf),
            doc,
            engine,
            undo: Vec::new(),
            version: 0,
            next_version: 1,
            saved_version: 0,
            journal,
            data_dir,
            entries: Vec::new(),
            style: Style::default(),
            polar: false,
            color,
            journal_warned: false,
            on_disk: path.and_then(disk_hash),
        };
        let mut greet = String::new();
        let m = &s.engine.model;
        let name = s.display_name();
        if fresh {
            match path {
                Some(_) => greet.push_str(&format!("{name}: a new sheet (not on disk until /save)\n")),
                None => greet.push_str("an unnamed sheet: /save FILE writes it\n"),
            }
        } else {
            let cells = m.defs().count();
            let checks = m.checks().count();
            greet.push_str(&format!(
                "{name}: {cells} cell{}, {checks} check{}\n",
                plural(cells),
                plural(checks)
            ));
        }
        if let Some(j) = s.journal.as_ref().filter(|j| j.is_side()) {
            greet.push_str(&format!(
                "note: {name} is open in another session too; this session's changes are journalled on their own ({}); a save never writes over the other session's saved work unseen\n",
                j.path.display()
            ));
        }
        for d in sorted(&m.diagnostics) {
            greet.push_str(&d.render(&m.sources, color));
        }
        Ok((s, greet))
    }

    /// The sheet's name as shown in the prompt and messages.
    pub fn display_name(&self) -> String {
        match &self.path {
            Some(p) => p.display().to_string(),
            None => "unnamed".into(),
        }
    }

    /// Changes not yet saved.
    pub fn dirty(&self) -> bool {
        self.version != self.saved_version
    }

    /// Number of changes written to the journal since the last save.
    pub fn unsaved_count(&self) -> usize {
        self.entries.len()
    }

    // ---- recovery ----

    /// Unsaved work left by an earlier session on this sheet, if any.
    pub fn recovery(&self) -> Option<Recovered> {
        journal::read(&self.journal.as_ref()?.path)
    }

    /// Whether the sheet on disk is the text the recovered changes were
    /// made to.
    pub fn same_base(&self, rec: &Recovered) -> bool {
        rec.header.base == journal::text_hash(&self.doc.text())
    }

    /// Replay recovered changes. Changes that no longer apply (the sheet
    /// changed on disk) are skipped and named.
    pub fn restore(&mut self, rec: &Recovered) -> String {
        let mut applied = Vec::new();
        let mut skipped = Vec::new();
        for e in &rec.entries {
            let r = self.apply_entry(e);
            if r.refused {
                skipped.push(show::entry_text(e));
            } else {
                applied.push(e.clone());
            }
        }
        self.entries = applied.clone();
        let mut out = format!("restored {} change{}", applied.len(), plural(applied.len()));
        if !skipped.is_empty() {
            out.push_str(&format!(
                "; {} no longer appl{} and {} skipped: {}",
                skipped.len(),
                if skipped.len() == 1 { "ies" } else { "y" },
                if skipped.len() == 1 { "was" } else { "were" },
                skipped.join(" | ")
            ));
        }
        out.push('\n');
        if let Some(j) = &mut self.journal {
            if let Err(e) = j.rewrite(&applied) {
                out.push_str(&format!("warning: could not rewrite the journal: {e}\n"));
            }
        }
        out
    }

    /// Let go of the journal and its lock (before opening another sheet,
    /// or the same one again). Changes made after this are not journalled
    /// until `claim_journal`.
    pub fn release_journal(&mut self) {
        self.journal = None;
    }

    /// Take up a journal again after `release_journal` (opening another
    /// sheet failed and this session goes on).
    pub fn claim_journal(&mut self) {
        if let (None, Some(d)) = (&self.journal, &self.data_dir) {
            let path = self.path.as_deref();
            self.journal = Some(Journal::claim(journal::journal_path(d, path), path, &self.doc.text()));
        }
    }

    /// Forget unsaved work: the journal is removed.
    pub fn discard_journal(&mut self) {
        if let Some(j) = &mut self.journal {
            let _ = j.discard();
        }
        self.entries.clear();
    }

    fn apply_entry(&mut self, e: &Entry) -> Reply {
        match e {
            Entry::Line(t) => self.statement(t, false),
            Entry::Remove(n) => self.remove(n, false),
            Entry::Back => self.back(false),
        }
    }

    fn record(&mut self, e: Entry, out: &mut String) {
        let Some(j) = &mut self.journal else { return };
        match j.append(&e) {
            Ok(()) => self.entries.push(e),
            Err(err) => {
                if !self.journal_warned {
                    out.push_str(&format!(
                        "warning: cannot write the journal {}: {err}\n  changes are not protected against a crash until /save\n",
                        j.path.display()
                    ));
                    self.journal_warned = true;
                }
            }
        }
    }

    // ---- lines ----

    /// Handle one typed line.
    pub fn handle(&mut self, line: &str) -> Reply {
        let t = line.trim();
        if t.is_empty() {
            return Reply::ok("");
        }
        if let Some(cmd) = t.strip_prefix('/') {
            return self.command(cmd);
        }
        self.statement(t, true)
    }

    fn add_input(&mut self, text: &str) -> crate::diag::FileId {
        self.engine
            .model
            .sources
            .add(SourceFile::new(INPUT, None, text.to_string()))
    }

    fn parse(&mut self, text: &str) -> Result<Option<Stmt>, Diagnostic> {
        let f = self.add_input(text);
        parse_line(text, f, 0, 1)
    }

    fn render(&self, d: &Diagnostic) -> String {
        d.render(&self.engine.model.sources, self.color)
    }

    /// A definition, check, directive or bare expression. `journal`: record
    /// it (false while replaying a journal).
    fn statement(&mut self, text: &str, journal: bool) -> Reply {
        let stmt = match self.parse(text) {
            Ok(Some(s)) => s,
            Ok(None) => return Reply::ok(""),
            Err(d) => return Reply::refused(format!("{}{UNCHANGED}", self.render(&d))),
        };
        match &stmt.kind {
            StmtKind::Directive(d) if d.name.name == crate::sheet::INCLUDE => {
                return Reply::refused(format!(
                    "@include is read when a sheet is opened: add the line to the file, then /open it\n{UNCHANGED}"
                ));
            }
            StmtKind::Def(d) if self.doc.find_def(&d.name.name).is_none() => {
                if let Some(c) = self.engine.model.cell(&d.name.name) {
                    if c.file != self.doc.main {
                        let lib = self.engine.model.sources.get(c.file).name.clone();
                        return Reply::refused(format!(
                            "`{}` comes from the library sheet {lib}; change it there, or give this cell another name\n{UNCHANGED}",
                            d.name.name
                        ));
                    }
                }
            }
            _ => {}
        }
        let edit = match &stmt.kind {
            StmtKind::Expr(e) => {
                let e = e.clone();
                return match self.engine.evaluate(&e) {
                    Ok((shape, vals)) => Reply::ok(format!(
                        "  {}\n",
                        show::value(&shape, &vals, None, self.style, self.polar)
                    )),
                    Err(d) => Reply::refused(self.render(&d)),
                };
            }
            StmtKind::Def(d) => match self.doc.find_def(&d.name.name) {
                Some(idx) => Edit::Replace(idx, self.line_for(idx, text, stmt.clone())),
                None => Edit::Insert(self.doc.lines.len(), plain_line(text, stmt.clone())),
            },
            StmtKind::Directive(d) => match self.doc.find_directive(&d.name.name) {
                Some(idx) => Edit::Replace(idx, self.line_for(idx, text, stmt.clone())),
                None => Edit::Insert(self.doc.lines.len(), plain_line(text, stmt.clone())),
            },
            StmtKind::Check(_) => Edit::Insert(self.doc.lines.len(), plain_line(text, stmt.clone())),
        };
        let target = match &stmt.kind {
            StmtKind::Def(d) => Some(d.name.name.clone()),
            StmtKind::Check(_) => Some(self.engine.model.sources.slice(stmt.span).trim().to_string()),
            _ => None,
        };
        match self.apply(edit, false) {
            Ok((inverse, shown)) => {
                self.push_undo(inverse);
                let mut out = String::new();
                if journal {
                    self.record(Entry::Line(text.to_string()), &mut out);
                }
                out.push_str(&self.report(target.as_deref(), &stmt, &shown));
                Reply::ok(out)
            }
            Err(msg) => Reply::refused(format!("{msg}{UNCHANGED}")),
        }
    }

    /// The document line for typed `text` replacing line `idx`: the old
    /// line's comment is kept when none was typed.
    fn line_for(&mut self, idx: usize, text: &str, stmt: Stmt) -> DocLine {
        let merged = self.doc.merged_text(idx, text);
        if merged == text.trim() {
            return plain_line(text, stmt);
        }
        match self.parse(&merged) {
            Ok(Some(s)) => DocLine {
                text: merged,
                stmt: Some(s),
                error: None,
                included: Vec::new(),
            },
            // Cannot happen (a comment never changes what parses); keep
            // what was typed.
            _ => plain_line(text, stmt),
        }
    }

    fn push_undo(&mut self, inverse: Edit) {
        self.undo.push((inverse, self.version));
        self.version = self.next_version;
        self.next_version += 1;
    }

    /// What an accepted statement did: the new value first, then every
    /// other cell that changed, old → new, in dependency order.
    fn report(&self, target: Option<&str>, stmt: &Stmt, shown: &[Shown]) -> String {
        let mut out = String::new();
        let first = shown.iter().position(|s| Some(s.name.as_str()) == target);
        match (target, first) {
            (Some(_), Some(i)) => out.push_str(&show::headline(&shown[i])),
            (Some(name), None) => {
                if let Some(id) = self.engine.model.id(name) {
                    out.push_str(&format!("{name} = {}  (unchanged)\n", self.cell_value(id)));
                }
            }
            (None, _) => {
                if let StmtKind::Directive(d) = &stmt.kind {
                    out.push_str(&format!("@{} set\n", d.name.name));
                }
            }
        }
        let rest: Vec<&Shown> = shown
            .iter()
            .enumerate()
            .filter(|(i, _)| Some(*i) != first)
            .map(|(_, s)| s)
            .collect();
        out.push_str(&show::changes(&rest));
        out
    }

    // ---- applying edits ----

    /// Apply an edit: in place when the engine can, else by compiling the
    /// document. Unless `force`, an edit that brings a new error is
    /// refused and nothing changes. Returns the inverse edit and what
    /// changed.
    fn apply(&mut self, edit: Edit, force: bool) -> Result<(Edit, Vec<Shown>), String> {
        // The fast paths.
        match &edit {
            Edit::Replace(idx, line) => {
                if let (Some(StmtKind::Def(d)), Some(old)) =
                    (line.stmt.as_ref().map(|s| &s.kind), self.doc.lines[*idx].defines())
                {
                    if d.name.name == old {
                        if let Some(id) = self.engine.model.id(old) {
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

    /// Change the document; returns the inverse edit.
    fn doc_apply(&mut self, edit: Edit) -> Edit {
        match edit {
            Edit::Replace(i, line) => Edit::Replace(i, std::mem::replace(&mut self.doc.lines[i], line)),
            Edit::Insert(i, line) => {
                self.doc.lines.insert(i, line);
                Edit::Delete(i)
            }
            Edit::Delete(i) => Edit::Insert(i, self.doc.lines.remove(i)),
        }
    }

    fn shown_changes(&self, changes: &[crate::engine::Change]) -> Vec<Shown> {
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

    // ---- commands ----

    fn command(&mut self, cmd: &str) -> Reply {
        let (name, arg) = match cmd.split_once(char::is_whitespace) {
            Some((n, a)) => (n, a.trim()),
            None => (cmd, ""),
        };
        match name {
            "cells" => Reply::ok(show::cells(self, arg)),
            "why" => self.with_cell(arg, |s, id| Reply::ok(show::why(s, id))),
            "feeds" => self.with_cell(arg, |s, id| Reply::ok(show::feeds(s, id))),
            "remove" => self.remove(arg, true),
            "back" => self.back(true),
            "show" => self.show_cmd(arg),
            "about" => Reply::ok(show::about(self, arg)),
            "open" => {
                if arg.is_empty() {
                    return Reply::refused("/open needs a file name: /open FILE\n");
                }
                Reply {
                    text: String::new(),
                    action: Action::Open(PathBuf::from(arg)),
                    refused: false,
                }
            }
            "save" => match self.save(if arg.is_empty() { None } else { Some(PathBuf::from(arg)) }) {
                Ok(t) => Reply::ok(t),
                Err(t) => Reply::refused(t),
            },
            "save!" if arg.is_empty() => match self.save_over() {
                Ok(t) => Reply::ok(t),
                Err(t) => Reply::refused(t),
            },
            "save!" => Reply::refused("/save! takes no file name: it writes the sheet's own file\n"),
            "done" => Reply {
                text: String::new(),
                action: Action::Leave,
                refused: false,
            },
            "help" | "" => Reply::ok(show::help()),
            _ => {
                let names = COMMANDS.iter().map(|c| c.0);
                let hint = match did_you_mean(name, names) {
                    Some(s) => format!(" (did you mean /{s}?)"),
                    None => String::new(),
                };
                Reply::refused(format!("no command /{name}{hint}; /help lists them\n"))
            }
        }
    }

    /// Look a cell name up for a command, with a suggestion when misspelt.
    fn with_cell(&self, arg: &str, f: impl FnOnce(&Session, CellId) -> Reply) -> Reply {
        if arg.is_empty() {
            return Reply::refused("name a cell, e.g. /why I\n");
        }
        match self.engine.model.id(arg) {
            Some(id) => f(self, id),
            None => Reply::refused(self.no_such_cell(arg)),
        }
    }

    fn no_such_cell(&self, name: &str) -> String {
        let names = self.engine.model.defs().map(|(_, c)| c.name.as_str());
        match did_you_mean(name, names) {
            Some(s) => format!("no cell `{name}` (did you mean `{s}`?)\n"),
            None => format!("no cell `{name}`; /cells lists them\n"),
        }
    }

    fn remove(&mut self, name: &str, journal: bool) -> Reply {
        if name.is_empty() {
            return Reply::refused("name the cell to remove: /remove NAME\n");
        }
        let Some(id) = self.engine.model.id(name) else {
            return Reply::refused(self.no_such_cell(name));
        };
        let users = &self.engine.model.dependents[id as usize];
        if !users.is_empty() {
            let names: Vec<String> = users.iter().map(|&u| show::cell_label(&self.engine.model, u)).collect();
            return Reply::refused(format!(
                "`{name}` is still used by {}; change or remove {} first\n",
                names.join(", "),
                if names.len() == 1 { "it" } else { "them" }
            ));
        }
        let Some(idx) = self.doc.find_def(name) else {
            return Reply::refused(self.no_such_cell(name));
        };
        match self.apply(Edit::Delete(idx), false) {
            Ok((inverse, _)) => {
                self.push_undo(inverse);
                let mut out = String::new();
                if journal {
                    self.record(Entry::Remove(name.to_string()), &mut out);
                }
                out.push_str(&format!("removed {name}\n"));
                Reply::ok(out)
            }
            Err(t) => Reply::refused(t),
        }
    }

    fn back(&mut self, journal: bool) -> Reply {
        let Some((edit, version)) = self.undo.pop() else {
            return Reply::refused("nothing to undo\n");
        };
        let what = match &edit {
            Edit::Replace(_, l) | Edit::Insert(_, l) => format!("back to: {}", l.text.trim()),
            Edit::Delete(i) => format!("took back: {}", self.doc.lines[*i].text.trim()),
        };
        match self.apply(edit, true) {
            Ok((_, shown)) => {
                self.version = version;
                let mut out = String::new();
                if journal {
                    self.record(Entry::Back, &mut out);
                }
                out.push_str(&what);
                out.push('\n');
                let all: Vec<&Shown> = shown.iter().collect();
                out.push_str(&show::changes(&all));
                Reply::ok(out)
            }
            Err(t) => Reply::refused(t),
        }
    }

    fn show_cmd(&mut self, arg: &str) -> Reply {
        let words: Vec<&str> = arg.split_whitespace().collect();
        match words.as_slice() {
            [] => {}
            ["polar"] => self.polar = true,
            ["rect"] => self.polar = false,
            ["digits", n] => match n.parse::<usize>() {
                Ok(d) if (1..=15).contains(&d) => self.style.digits = d,
                _ => return Reply::refused("digits go from 1 to 15, e.g. /show digits 6\n"),
            },
            _ => return Reply::refused("/show takes `digits N`, `polar` or `rect`\n"),
        }
        Reply::ok(format!(
            "values shown {} with {} significant digits\n",
            if self.polar {
                "in polar form (m ∠ θ°)"
            } else {
                "in rectangular form (a + jb)"
            },
            self.style.digits
        ))
    }

    /// Write the sheet (to `to`, or where it came from), atomically. The
    /// journal is cleared: the work is safe on disk.
    pub fn save(&mut self, to: Option<PathBuf>) -> Result<String, String> {
        let own = to.is_none() || to == self.path;
        let Some(path) = to.or_else(|| self.path.clone()) else {
            return Err("this sheet has no file yet: /save FILE\n".into());
        };
        // Its own file, changed on disk since this session read or wrote
        // it: writing would throw that other work away unseen.
        if own && path.exists() && disk_hash(&path) != self.on_disk {
            return Err(format!(
                "{} was changed on disk since this session read it (another session or an editor saved it); nothing was written\n  \
                 hint: /save FILE writes this session's sheet under another name; /save! writes over the file\n",
                path.display()
            ));
        }
        self.write_sheet(path)
    }

    /// `/save!`: write the sheet's own file even though it changed on
    /// disk since this session read it.
    pub fn save_over(&mut self) -> Result<String, String> {
        let Some(path) = self.path.clone() else {
            return Err("this sheet has no file yet: /save FILE\n".into());
        };
        self.write_sheet(path)
    }

    fn write_sheet(&mut self, path: PathBuf) -> Result<String, String> {
        let text = self.doc.text();
        if let Err(e) = crate::fsutil::write_atomic(&path, text.as_bytes()) {
            return Err(format!(
                "could not save {}: {e}\n  (nothing was lost: the changes are still here and in the journal)\n",
                path.display()
            ));
        }
        let moved = self.path.as_deref() != Some(path.as_path());
        self.on_disk = Some(journal::fnv64(text.as_bytes()));
        self.path = Some(path.clone());
        self.saved_version = self.version;
        self.entries.clear();
        if let (Some(j), Some(d)) = (&mut self.journal, &self.data_dir) {
            let jp = journal::journal_path(d, Some(&path));
            let _ = j.rebase(Some(&path), jp, &text);
        }
        let lines = self.doc.lines.len();
        Ok(format!(
            "saved {} ({lines} line{}){}\n",
            path.display(),
            plural(lines),
            if moved { "; it is now this session's file" } else { "" }
        ))
    }

    // ---- for completion ----

    /// Names of the defined cells.
    pub fn cell_names(&self) -> impl Iterator<Item = &str> {
        self.engine.model.by_name.keys().map(String::as_str)
    }
}

/// A hash of a file's bytes, or `None` when it cannot be read.
fn disk_hash(path: &Path) -> Option<u64> {
    std::fs::read(path).ok().map(|b| journal::fnv64(&b))
}

fn plain_line(text: &str, stmt: Stmt) -> DocLine {
    DocLine {
        text: text.trim().to_string(),
        stmt: Some(stmt),
        error: None,
        included: Vec::new(),
    }
}

pub(super) fn plural(n: usize) -> &'static str {
    if n == 1 {
        ""
    } else {
        "s"
    }
}

fn sorted(diags: &[Diagnostic]) -> Vec<&Diagnostic> {
    sorted_refs(&diags.iter().collect::<Vec<_>>())
}

fn sorted_refs<'a>(diags: &[&'a Diagnostic]) -> Vec<&'a Diagnostic> {
    let mut v: Vec<&Diagnostic> = diags.to_vec();
    v.sort_by_key(|d| d.span.map(|s| (s.file, s.start)));
    v
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

#[cfg(test)]
mod tests {
    use super::*;

    const SITE: &str = "# Pump house feeder (invented)\n\
Vs = 480 V      # bus\n\
R1 = 10 Ω\n\
R2 = 20 Ω\n\
\n\
Rt = R1 + R2    # total\n\
I = Vs / Rt\n";

    struct Fixture {
        dir: tempfile::TempDir,
        path: PathBuf,
    }

    impl Fixture {
        fn new(text: &str) -> Fixture {
            let dir = tempfile::tempdir().unwrap();
            let path = dir.path().join("site.ohm");
            std::fs::write(&path, text).unwrap();
            Fixture { dir, path }
        }
        fn data(&self) -> PathBuf {
            self.dir.path().join("data")
        }
        fn open(&self) -> Session {
            Session::open(Some(&self.path), Some(self.data()), false).unwrap().0
        }
    }

    fn ok(s: &mut Session, line: &str) -> String {
        let r = s.handle(line);
        assert!(!r.refused, "`{line}` was refused:\n{}", r.text);
        r.text
    }

    fn val(s: &Session, name: &str) -> C64 {
        s.engine.value(s.engine.model.id(name).unwrap())
    }

    #[test]
    fn a_redefinition_reports_every_dependent_old_to_new() {
        let f = Fixture::new(SITE);
        let mut s = f.open();
        let out = ok(&mut s, "R2 = 30 Ω");
        // Ohm's law: 480 V / 40 Ω = 12 A (was 480 / 30 = 16 A).
        assert_eq!(val(&s, "I"), C64::new(12.0, 0.0));
        let lines: Vec<&str> = out.lines().collect();
        assert!(lines[0].starts_with("R2 = 30 Ω"), "{out}");
        assert!(
            lines[1].contains("Rt") && lines[1].contains("30 Ω") && lines[1].contains("40 Ω"),
            "{out}"
        );
        assert!(
            lines[2].contains("I") && lines[2].contains("16 A") && lines[2].contains("12 A"),
            "{out}"
        );
        assert!(s.dirty());
    }

    #[test]
    fn a_bad_line_leaves_the_sheet_as_it_was() {
        let f = Fixture::new(SITE);
        let mut s = f.open();
        let before = s.doc.text();
        let i = val(&s, "I");
        for bad in [
            "R2 = 30 V",
            "R2 = (3 +",
            "R1 = I * 1 Ω",
            "x = nosuch * 2",
            "Rt = R1 + 3 V",
            "I = Vs / Rt + 1",
        ] {
            let r = s.handle(bad);
            assert!(r.refused, "`{bad}` was accepted");
            assert!(r.text.contains("error"), "{}", r.text);
            assert!(r.text.contains("sheet is as it was"), "{}", r.text);
            assert_eq!(s.doc.text(), before);
            assert_eq!(val(&s, "I"), i);
        }
        assert!(!s.dirty());
        // The caret points into the typed line.
        let r = s.handle("x = R1 + 3 V");
        assert!(r.text.contains("input:1:"), "{}", r.text);
        assert!(r.text.contains('^'), "{}", r.text);
    }

    #[test]
    fn saving_keeps_comments_blank_lines_and_order() {
        let f = Fixture::new(SITE);
        let mut s = f.open();
        ok(&mut s, "Vs = 415 V");
        ok(&mut s, "Rt = R1 + R2 + 0.5 Ω  # with the joint");
        ok(&mut s, "P = re(Vs * conj(I))");
        ok(&mut s, "spare = 1 Ω");
        ok(&mut s, "/remove spare");
        ok(&mut s, "/save");
        assert!(!s.dirty());
        assert_eq!(
            std::fs::read_to_string(&f.path).unwrap(),
            "# Pump house feeder (invented)\n\
Vs = 415 V      # bus\n\
R1 = 10 Ω\n\
R2 = 20 Ω\n\
\n\
Rt = R1 + R2 + 0.5 Ω  # with the joint\n\
I = Vs / Rt\n\
P = re(Vs * conj(I))\n"
        );
        // Saving cleared the journal: nothing to recover.
        drop(s);
        assert!(f.open().recovery().is_none());
    }

    #[test]
    fn undo_walks_back_through_every_kind_of_change() {
        let f = Fixture::new(SITE);
        let mut s = f.open();
        let mut snapshots = vec![(s.doc.text(), val(&s, "I"))];
        for line in [
            "R2 = 30 Ω",             // in place
            "g = 2",                 // a new cell, in place
            "h = g * Vs",            // another
            "g = 2 A",               // h becomes a power: whole-sheet compile
            "@title \"Pump house\"", // a directive
            "check I ~= 12 A +- 1%", // a check
            "/remove h",             // a removal
            "Vs = 240 V",            // in place again
        ] {
            ok(&mut s, line);
            snapshots.push((s.doc.text(), val(&s, "I")));
        }
        // 240 V / 40 Ω = 6 A
        assert_eq!(val(&s, "I"), C64::new(6.0, 0.0));
        snapshots.pop();
        while let Some((text, i)) = snapshots.pop() {
            ok(&mut s, "/back");
            assert_eq!(s.doc.text(), text);
            assert_eq!(val(&s, "I"), i);
        }
        assert!(!s.dirty(), "back where it started");
        assert!(s.handle("/back").refused);
    }

    #[test]
    fn a_cell_in_use_is_not_removed() {
        let f = Fixture::new(SITE);
        let mut s = f.open();
        let r = s.handle("/remove R1");
        assert!(r.refused);
        assert!(r.text.contains("Rt"), "{}", r.text);
        assert!(s.engine.model.id("R1").is_some());
    }

    #[test]
    fn the_journal_replays_to_the_same_state() {
        let f = Fixture::new(SITE);
        let mut a = f.open();
        ok(&mut a, "R2 = 30 Ω");
        ok(&mut a, "P = re(Vs * conj(I))");
        ok(&mut a, "Q = P / 2");
        ok(&mut a, "/back"); // Q goes
        ok(&mut a, "Vs = 400 V");
        ok(&mut a, "tmp = 3 Ω");
        ok(&mut a, "/remove tmp");
        let text = a.doc.text();
        let p = val(&a, "P");
        // The process dies here: no save, no goodbye.
        drop(a);

        let mut b = f.open();
        assert_eq!(b.doc.text(), SITE, "the file on disk was never touched");
        let rec = b.recovery().expect("a journal to recover");
        assert!(b.same_base(&rec));
        assert_eq!(rec.entries.len(), 7);
        let report = b.restore(&rec);
        assert!(report.starts_with("restored 7 changes"), "{report}");
        assert_eq!(b.doc.text(), text);
        // 400 V across 40 Ω: P = V²/R = 4000 W.
        assert!((p.re - 4000.0).abs() < 1e-9);
        assert_eq!(val(&b, "P"), p);
        assert!(b.dirty());
        // The undo history came back too: /back undoes the removal of tmp.
        ok(&mut b, "/back");
        assert!(b.engine.model.id("tmp").is_some());
        drop(b);

        // Declining throws the journal away.
        let mut c = f.open();
        assert!(c.recovery().is_some());
        c.discard_journal();
        drop(c);
        assert!(f.open().recovery().is_none());
    }

    /// A sheet saved by someone else meanwhile is not written over unseen.
    #[test]
    fn a_file_changed_on_disk_is_not_written_over_unseen() {
        let f = Fixture::new(SITE);
        let mut a = f.open();
        let mut b = f.open();
        ok(&mut a, "R2 = 30 Ω");
        ok(&mut b, "R1 = 5 Ω");
        ok(&mut a, "/save");
        let saved_by_a = std::fs::read_to_string(&f.path).unwrap();
        let r = b.handle("/save");
        assert!(r.refused, "{}", r.text);
        assert!(r.text.contains("changed on disk"), "{}", r.text);
        assert_eq!(std::fs::read_to_string(&f.path).unwrap(), saved_by_a);
        assert!(b.dirty(), "B's change is still unsaved, and journalled");
        // Under another name, or over the file on purpose.
        let other = f.dir.path().join("site-b.ohm");
        ok(&mut b, &format!("/save {}", other.display()));
        assert!(std::fs::read_to_string(&other).unwrap().contains("R1 = 5 Ω"));
        // B now works on site-b.ohm; A's file is A's. A saves again freely.
        ok(&mut a, "R2 = 35 Ω");
        ok(&mut a, "/save");
        // An editor changes A's file; A is told, then writes over it.
        std::fs::write(&f.path, "R1 = 1 Ω\n").unwrap();
        ok(&mut a, "R2 = 40 Ω");
        assert!(a.handle("/save").refused);
        ok(&mut a, "/save!");
        assert!(std::fs::read_to_string(&f.path).unwrap().contains("R2 = 40 Ω"));
    }

    /// Two sessions on one sheet: one saves and leaves, the other is
    /// killed with unsaved changes; the next session offers those changes.
    #[test]
    fn two_sessions_on_one_sheet_lose_nothing() {
        let f = Fixture::new(SITE);
        let mut a = f.open();
        let (mut b, greet) = Session::open(Some(&f.path), Some(f.data()), false).unwrap();
        assert!(greet.contains("open in another session"), "{greet}");
        ok(&mut a, "R2 = 30 Ω");
        ok(&mut b, "R1 = 5 Ω");
        ok(&mut b, "Vs = 400 V");
        ok(&mut a, "/save");
        drop(a);
        // B dies here without saving.
        drop(b);
        let mut c = f.open();
        let rec = c.recovery().expect("B's changes are offered");
        assert_eq!(
            rec.entries,
            [
                journal::Entry::Line("R1 = 5 Ω".into()),
                journal::Entry::Line("Vs = 400 V".into())
            ]
        );
        // They apply to the sheet A saved: 400 V across 5 Ω + 30 Ω.
        c.restore(&rec);
        assert_eq!(val(&c, "I"), C64::new(400.0 / 35.0, 0.0));
    }

    #[test]
    fn a_changed_file_still_takes_the_changes_by_name() {
        let f = Fixture::new(SITE);
        let mut a = f.open();
        ok(&mut a, "R2 = 30 Ω");
        ok(&mut a, "/remove I");
        drop(a);
        std::fs::write(&f.path, SITE.replace("R1 = 10 Ω", "R1 = 12 Ω")).unwrap();
        let mut b = f.open();
        let rec = b.recovery().unwrap();
        assert!(!b.same_base(&rec));
        b.restore(&rec);
        assert!(b.doc.text().contains("R1 = 12 Ω") && b.doc.text().contains("R2 = 30 Ω"));
        assert!(b.engine.model.id("I").is_none());
    }

    #[test]
    fn a_library_sheet_stays_included_and_its_cells_are_left_alone() {
        let f = Fixture::new(
            "# feeder using the cable library (invented)\n@include \"lib/cable.ohm\"\nL = 2 * 1 Ω\nZ = Zc * L / 1 Ω\n",
        );
        std::fs::create_dir(f.dir.path().join("lib")).unwrap();
        std::fs::write(
            f.dir.path().join("lib/cable.ohm"),
            "Zc = (0.2 + j0.1) Ω  # per length\n",
        )
        .unwrap();
        let mut s = f.open();
        assert!(
            s.engine.model.diagnostics.is_empty(),
            "{:?}",
            s.engine.model.diagnostics
        );
        // 2 × (0.2 + j0.1) Ω
        assert_eq!(val(&s, "Z"), C64::new(0.4, 0.2));
        ok(&mut s, "L = 3 * 1 Ω");
        assert!((val(&s, "Z") - C64::new(0.6, 0.3)).norm() < 1e-12);
        // A change that needs the whole sheet compiled keeps the library.
        ok(&mut s, "W = Z * 2");
        ok(&mut s, "/remove W");
        assert!((val(&s, "Z") - C64::new(0.6, 0.3)).norm() < 1e-12);
        let r = s.handle("Zc = 1 Ω");
        assert!(r.refused && r.text.contains("library sheet"), "{}", r.text);
        assert!(s.handle("@include \"other.ohm\"").refused);
        ok(&mut s, "/save");
        assert_eq!(
            std::fs::read_to_string(&f.path).unwrap(),
            "# feeder using the cable library (invented)\n@include \"lib/cable.ohm\"\nL = 3 * 1 Ω\nZ = Zc * L / 1 Ω\n"
        );
    }

    #[test]
    fn an_unnamed_session_saves_where_it_is_told() {
        let dir = tempfile::tempdir().unwrap();
        let (mut s, _) = Session::open(None, Some(dir.path().join("data")), false).unwrap();
        ok(&mut s, "Zs = (0.1 + j0.4) Ω");
        ok(&mut s, "Zl = 8 Ω");
        assert!(s.handle("/save").refused);
        let p = dir.path().join("new.ohm");
        ok(&mut s, &format!("/save {}", p.display()));
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "Zs = (0.1 + j0.4) Ω\nZl = 8 Ω\n");
        assert_eq!(s.path.as_deref(), Some(p.as_path()));
    }
}
