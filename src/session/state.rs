//! The session itself, without a terminal: a document, its evaluated
//! model, the undo history and the journal. `Session::handle` takes one
//! typed line and answers with the text to show, so all of this is tested
//! without a pseudo-terminal; `repl.rs` adds line editing around it.
//!
//! Rooms, split along the line a language server would share:
//! - this file: the session's types, opening a sheet, and a typed
//!   statement from parse to report;
//! - `apply.rs`: the document/engine layer — an edit applied in place or by
//!   a whole compile, its inverse for undo, what changed (no terminal, no
//!   journal: what another front end would share);
//! - `commands.rs`: the `/` commands of the terminal session;
//! - `files.rs`: the journal (recovery after a crash) and saving.

use std::path::{Path, PathBuf};

use super::doc::{Doc, DocLine};
use super::journal::{self, Entry, Journal};
use super::show;
use crate::diag::{Diagnostic, ErrorCode, SourceFile};
use crate::engine::{compile, Engine};
use crate::sheet::Sheet;
use crate::syntax::ast::{Stmt, StmtKind};
use crate::syntax::parse_line;
use crate::units::format::Style;

mod apply;
mod commands;
mod files;
mod spread;
#[cfg(test)]
mod tests;

use apply::plain_line;
pub use commands::COMMANDS;
use files::disk_hash;

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

pub struct Session {
    /// Where the sheet is saved (None: not yet named).
    pub path: Option<PathBuf>,
    pub doc: Doc,
    pub engine: Engine,
    undo: Vec<(Edit, u64)>,
    /// Changes taken back with `/back`, newest last, for `/forward`; a new
    /// change clears it.
    redo: Vec<(Edit, u64)>,
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
    /// The records drawn last (see `apply::Drawn`).
    drawn: apply::Drawn,
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
        let mut doc = Doc::from_sheet(&sheet);
        // The byte-order mark is dropped when the sheet is read; a save
        // writes it back.
        doc.bom = path.is_some_and(|p| std::fs::read(p).is_ok_and(|b| b.starts_with(&[0xEF, 0xBB, 0xBF])));
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
            redo: Vec::new(),
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
            drawn: apply::Drawn::default(),
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

    /// The sheet's name as shown in the prompt and messages: its path
    /// relative to the current folder (`site.ohm`, `jobs/site.ohm`,
    /// `../lib/site.ohm`), absolute only when the two share nothing but
    /// the root.
    pub fn display_name(&self) -> String {
        match &self.path {
            Some(p) => relative_name(p, std::env::current_dir().ok().as_deref()),
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

    /// An unknown unit in a new value for a cell the sheet has
    /// (`t = 6 mn`): the hint suggests units of that cell's dimension, as
    /// batch does for a cases column, not any unit spelt alike.
    fn unit_hint_by_dimension(&self, text: &str, d: Diagnostic) -> Diagnostic {
        crate::batch::hint_units_for_assignment(d, text, &self.engine.model)
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
            Err(d) => {
                let d = self.unit_hint_by_dimension(text, d);
                return Reply::refused(format!("{}{UNCHANGED}", self.render(&d)));
            }
        };
        // Notes on the line (`cos(30)` reads radians), shown after its result.
        let mut notes = Vec::new();
        crate::engine::notes::of_statement(&stmt, &mut notes);
        let notes: String = notes.iter().map(|d| self.render(d)).collect();
        match &stmt.kind {
            StmtKind::Directive(d) if d.name.name == crate::sheet::INCLUDE => {
                return Reply::refused(format!(
                    "@include is read when a sheet is opened: add the line to the file, then /open it\n{UNCHANGED}"
                ));
            }
            StmtKind::Directive(d) if d.name.name == crate::sheet::OVERRIDE => {
                return Reply::refused(format!(
                    "@override is read when a sheet is opened: add the line to the file, then /open it; \
                     a value already overridden is changed here with NAME = FORMULA\n{UNCHANGED}"
                ));
            }
            StmtKind::Def(d) if self.doc.find_def(&d.name.name).is_none() => {
                if let Some(c) = self.engine.model.cell(&d.name.name) {
                    if c.file != self.doc.main {
                        let lib = self.engine.model.sources.get(c.file).name.clone();
                        return Reply::refused(format!(
                            "`{}` comes from the library sheet {lib}; change it there, override it for this sheet with a line `@override {} = …` in the file, or give this cell another name\n{UNCHANGED}",
                            d.name.name, d.name.name
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
                        "  {}\n{notes}",
                        show::value(&shape, &vals, None, self.style, self.polar)
                    )),
                    Err(d) => Reply::refused(self.render(&d)),
                };
            }
            StmtKind::Def(d) => match self.doc.find_def(&d.name.name) {
                Some(idx) => match self.element_value(idx, text, d) {
                    Ok(Some((full, s))) => Edit::Replace(idx, self.line_for(idx, &full, s)),
                    Ok(None) => Edit::Replace(idx, self.line_for(idx, text, stmt.clone())),
                    Err(msg) => return Reply::refused(format!("{msg}{UNCHANGED}")),
                },
                None => Edit::Insert(self.doc.lines.len(), plain_line(text, stmt.clone())),
            },
            StmtKind::Directive(d) => match self.doc.find_directive(&d.name.name) {
                Some(idx) => Edit::Replace(idx, self.line_for(idx, text, stmt.clone())),
                None => Edit::Insert(self.doc.lines.len(), plain_line(text, stmt.clone())),
            },
            StmtKind::Check(_) => Edit::Insert(self.doc.lines.len(), plain_line(text, stmt.clone())),
            StmtKind::Network(_) | StmtKind::End => {
                return Reply::refused(format!(
                    "a network block is written in the sheet file, not typed line by line in a session{UNCHANGED}"
                ))
            }
        };
        let target = match &stmt.kind {
            StmtKind::Def(d) => Some(d.name.name.clone()),
            StmtKind::Check(_) => Some(self.engine.model.sources.slice(stmt.span).trim().to_string()),
            _ => None,
        };
        match self.apply_quietly(edit, false) {
            Ok((inverse, changed)) => {
                self.push_undo(inverse);
                // The journal's flush to the disk runs while the changes
                // are drawn; the answer waits for it.
                let recording = if journal {
                    self.record_start(Entry::Line(text.to_string()))
                } else {
                    None
                };
                let shown = self.draw(changed);
                let mut out = self.report(target.as_deref(), &stmt, &shown);
                out.push_str(&notes);
                if let Some(r) = recording {
                    let mut warning = String::new();
                    self.record_finish(r, &mut warning);
                    out.insert_str(0, &warning);
                }
                Reply::ok(out)
            }
            Err(msg) => Reply::refused(format!("{msg}{UNCHANGED}")),
        }
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
        out.push_str(&self.undefined_notes(shown));
        out
    }

    /// Why the cells this statement made undefined (NaN) are so: the
    /// function whose domain was left, located on its argument.
    fn undefined_notes(&self, shown: &[Shown]) -> String {
        let m = &self.engine.model;
        let hit: Vec<_> = self
            .engine
            .nan_origins()
            .into_iter()
            .filter(|&id| shown.iter().any(|s| s.name == show::cell_label(m, id)))
            .collect();
        let inf: Vec<_> = self
            .engine
            .inf_origins()
            .into_iter()
            .filter(|&(id, _)| shown.iter().any(|s| s.name == show::cell_label(m, id)))
            .collect();
        let mut out: String = hit
            .into_iter()
            .map(|id| self.render(&self.engine.nan_diagnostic(id)))
            .collect();
        for (id, error) in inf {
            out.push_str(&self.render(&self.engine.inf_diagnostic(id, error)));
        }
        out
    }
}

/// `path` as seen from the folder `cwd`.
pub(super) fn relative_name(path: &Path, cwd: Option<&Path>) -> String {
    use std::path::Component;
    let Some(cwd) = cwd.filter(|_| path.is_absolute()) else {
        let s = path.display().to_string();
        return s.strip_prefix("./").map(str::to_string).unwrap_or(s);
    };
    let p: Vec<Component> = path.components().collect();
    let c: Vec<Component> = cwd.components().collect();
    let common = p.iter().zip(&c).take_while(|(a, b)| a == b).count();
    // Only the root in common (or a `..` in either): the path as given.
    let plain = |x: &Component| matches!(x, Component::Normal(_));
    if common <= 1 || !p[common..].iter().all(plain) || !c[common..].iter().all(plain) {
        return path.display().to_string();
    }
    let mut rel = PathBuf::new();
    for _ in common..c.len() {
        rel.push("..");
    }
    for x in &p[common..] {
        rel.push(x);
    }
    rel.display().to_string()
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
