//! An open sheet: the text as the editor has it, the engine evaluating it,
//! and where each line's spans lie.
//!
//! A change that rewrites one definition line of a sound sheet (the common
//! keystroke) goes through `Engine::redefine`, the in-place edit the
//! terminal session uses: the new formula is lowered against the compiled
//! model and only the cells that depend on it are recomputed. Anything else
//! (lines added or removed, a check or directive changed, a sheet with
//! errors, a network block, a change of a cell's shape) compiles the whole
//! text, which is always correct. Either way the values and problems equal
//! those of a from-scratch evaluation of the final text
//! (`tests/lsp_edits.rs` checks it over random edit sequences).
//!
//! Spans: after a whole compile each line's spans point into the main
//! file as it was then; a line edited in place has a small source file of
//! its own. `origin` remembers, for each line, which file its spans point
//! into and where the line starts there, so `locate` turns any span of the
//! model into a byte range of the current text.

use std::collections::HashMap;
use std::ops::Range;
use std::path::{Path, PathBuf};

use crate::diag::{Diagnostic, ErrorCode, FileId, SourceFile, Span};
use crate::engine::{compile, Engine};
use crate::sheet::{LoadOptions, Sheet, SheetFile};
use crate::syntax::ast::{Expr, ExprKind, Stmt, StmtKind};
use crate::syntax::parse_line;

/// In-place edits between two whole compiles; past this the text is
/// compiled again, so the small per-edit source files do not pile up.
const MAX_IN_PLACE: usize = 2000;

/// A file id no source map uses: for parses whose spans are thrown away.
const SCRATCH: FileId = FileId(u32::MAX);

/// Which file a place is in.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub enum Place {
    /// The open document itself.
    Main,
    /// Another file (an included library sheet), by its canonical path.
    File(PathBuf),
}

/// A span of the model as a byte range of a file's current text.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Located {
    pub place: Place,
    pub range: Range<usize>,
}

/// Where the spans of one line point: the file, the offset of the line's
/// start in that file, and how far the line's text is from the start of
/// the line in the document (a byte-order mark on the first line).
#[derive(Clone, Copy, Debug)]
struct Origin {
    file: FileId,
    base: usize,
    shift: usize,
}

/// How the last change was applied (for tests and the benchmark).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct EditCounts {
    pub in_place: u64,
    pub compiled: u64,
    /// Changes to comment or blank lines only: nothing to compute.
    pub untouched: u64,
}

pub struct Document {
    /// The sheet's file (None: a buffer with no file; includes are then
    /// refused as for text in memory).
    pub path: Option<PathBuf>,
    text: String,
    /// Byte offset of the start of each line (lines end at `\n`).
    line_starts: Vec<usize>,
    pub engine: Engine,
    /// The main file of the last whole compile.
    main: FileId,
    origin: Vec<Origin>,
    /// Per-edit source files: which line each holds.
    edited: HashMap<FileId, usize>,
    in_place_since_compile: usize,
    /// The files of the last whole compile (the main file first).
    pub files: Vec<SheetFile>,
    /// Library values this sheet's `@override` lines replace.
    pub overrides: Vec<crate::sheet::Override>,
    has_network: bool,
    opts: LoadOptions,
    pub counts: EditCounts,
}

fn starts_of(text: &str) -> Vec<usize> {
    let mut v = vec![0];
    v.extend(memchr::memchr_iter(b'\n', text.as_bytes()).map(|i| i + 1));
    v
}

/// The value argument's index when `e` is a network element form.
pub fn element_form(e: &Expr) -> Option<usize> {
    match &e.kind {
        ExprKind::Call { func, .. } => crate::syntax::ast::NETWORK_ELEMENTS
            .iter()
            .find(|(f, _)| *f == func.name)
            .map(|&(_, n)| n),
        _ => None,
    }
}

impl Document {
    /// Open `text` as the sheet at `path` (its includes are read from
    /// `opts.buffers` first, then from disk, inside the allowed folders).
    pub fn open(path: Option<&Path>, text: &str, opts: LoadOptions) -> Document {
        let mut d = Document {
            path: path.map(Path::to_path_buf),
            text: text.to_string(),
            line_starts: starts_of(text),
            engine: Engine::new(compile(&Sheet::from_text("", ""))),
            main: FileId(0),
            origin: Vec::new(),
            edited: HashMap::new(),
            in_place_since_compile: 0,
            files: Vec::new(),
            overrides: Vec::new(),
            has_network: false,
            opts,
            counts: EditCounts::default(),
        };
        d.compile_all();
        d
    }

    pub fn text(&self) -> &str {
        &self.text
    }

    /// Byte offsets of the starts of the lines.
    pub fn line_starts(&self) -> &[usize] {
        &self.line_starts
    }

    /// The text of another file the model read (an included sheet), by
    /// canonical path: the text its spans point into.
    pub fn file_text(&self, canonical: &Path) -> Option<&str> {
        let f = self.files.iter().find(|f| f.canonical.as_deref() == Some(canonical))?;
        Some(&self.engine.model.sources.get(f.id).text)
    }

    pub fn line_count(&self) -> usize {
        self.line_starts.len()
    }

    /// The byte range of line `i` without its line ending.
    pub fn line_range(&self, i: usize) -> Range<usize> {
        let start = self.line_starts[i];
        let mut end = self.line_starts.get(i + 1).map_or(self.text.len(), |&n| n - 1);
        if self.text.as_bytes().get(end.wrapping_sub(1)) == Some(&b'\r') && end > start {
            end -= 1;
        }
        start..end
    }

    pub fn line_text(&self, i: usize) -> &str {
        &self.text[self.line_range(i)]
    }

    /// The line holding byte `offset`.
    pub fn line_of(&self, offset: usize) -> usize {
        self.line_starts.partition_point(|&s| s <= offset).saturating_sub(1)
    }

    /// Texts of open buffers (by canonical path) to read includes from, and
    /// the folders includes may come from. Compiles again.
    pub fn set_options(&mut self, opts: LoadOptions) {
        self.opts = opts;
        self.compile_all();
    }

    /// The same, for the next compile (none now): an edit that adds an
    /// `@include` line reads the buffers open at that time.
    pub fn keep_options(&mut self, opts: LoadOptions) {
        self.opts = opts;
    }

    /// Whether this document's last compile read the file `canonical`.
    pub fn reads(&self, canonical: &Path) -> bool {
        self.files
            .iter()
            .skip(1)
            .any(|f| f.canonical.as_deref() == Some(canonical))
    }

    /// Replace the whole text.
    pub fn update(&mut self, new_text: &str) {
        if new_text == self.text {
            return;
        }
        let new_starts = starts_of(new_text);
        if new_starts.len() == self.line_starts.len() {
            // Lines differing between the two texts.
            let old_line = |i: usize| line_slice(&self.text, &self.line_starts, i);
            let new_line = |i: usize| line_slice(new_text, &new_starts, i);
            let mut changed = (0..new_starts.len()).filter(|&i| old_line(i) != new_line(i));
            if let (Some(i), None) = (changed.next(), changed.next()) {
                let old = old_line(i).to_string();
                let new = new_line(i).to_string();
                if self.edit_line(i, &old, &new, new_text, new_starts.clone()) {
                    return;
                }
            }
        }
        self.text = new_text.to_string();
        self.line_starts = new_starts;
        self.compile_all();
    }

    /// Apply a change of one line in place when the engine can. Returns
    /// false (nothing changed) when the text must be compiled whole.
    fn edit_line(&mut self, i: usize, old: &str, new: &str, new_text: &str, new_starts: Vec<usize>) -> bool {
        if self.has_network || self.in_place_since_compile >= MAX_IN_PLACE {
            return false;
        }
        let shift = if i == 0 && new_text.starts_with('\u{FEFF}') {
            3
        } else {
            0
        };
        if shift != 0 || old.starts_with('\u{FEFF}') {
            return false;
        }
        let old_stmt = parse_line(old, SCRATCH, 0, 1);
        let new_stmt = parse_line(new, SCRATCH, 0, 1);
        let commit = |d: &mut Document| {
            d.text = new_text.to_string();
            d.line_starts = new_starts.clone();
        };
        match (&old_stmt, &new_stmt) {
            // A comment or blank line stays one.
            (Ok(None), Ok(None)) => {
                commit(self);
                self.counts.untouched += 1;
                return true;
            }
            (Ok(Some(o)), Ok(Some(n))) => {
                let (StmtKind::Def(od), StmtKind::Def(nd)) = (&o.kind, &n.kind) else {
                    return false;
                };
                if od.name.name != nd.name.name || element_form(&od.expr).is_some() || element_form(&nd.expr).is_some()
                {
                    return false;
                }
            }
            _ => return false,
        }
        let m = &self.engine.model;
        if m.has_errors() {
            return false;
        }
        let Some(Ok(Some(Stmt {
            kind: StmtKind::Def(nd),
            ..
        }))) = Some(&new_stmt)
        else {
            return false;
        };
        let Some(id) = m.id(&nd.name.name) else { return false };
        // The cell must be this line's (not one of an included sheet).
        if self.line_for_span(m.cells[id as usize].name_span) != Some(i) {
            return false;
        }
        let name = m.sources.get(self.main).name.clone();
        let fid = self
            .engine
            .model
            .sources
            .add(SourceFile::new(name, self.path.clone(), new.to_string()));
        let Ok(Some(stmt)) = parse_line(new, fid, 0, (i + 1) as u32) else {
            return false;
        };
        let StmtKind::Def(def) = &stmt.kind else { return false };
        if self.engine.redefine(id, &stmt, def).is_err() {
            return false;
        }
        // The line's notes (`cos(30)` read as radians) follow its text.
        let old_origin = self.origin[i];
        let old_len = old.len();
        self.engine.model.diagnostics.retain(|d| {
            d.is_error()
                || !d.span.is_some_and(|s| {
                    s.file == old_origin.file
                        && s.start as usize >= old_origin.base
                        && s.start as usize <= old_origin.base + old_len
                })
        });
        crate::engine::notes::of_statement(&stmt, &mut self.engine.model.diagnostics);
        if old_origin.file != self.main {
            self.edited.remove(&old_origin.file);
        }
        self.origin[i] = Origin {
            file: fid,
            base: 0,
            shift: 0,
        };
        self.edited.insert(fid, i);
        self.in_place_since_compile += 1;
        commit(self);
        self.counts.in_place += 1;
        true
    }

    /// Compile the whole text.
    fn compile_all(&mut self) {
        let name = self
            .path
            .as_ref()
            .map_or_else(|| "untitled".to_string(), |p| p.display().to_string());
        let mut load_error = None;
        let sheet = match &self.path {
            Some(p) => match Sheet::load_buffer(p, &self.text, &self.opts) {
                Ok(s) => s,
                Err(e) => {
                    load_error = Some(e.diagnostic);
                    Sheet::from_text(&name, &self.text)
                }
            },
            None => Sheet::from_text(&name, &self.text),
        };
        let mut model = compile(&sheet);
        model.diagnostics.retain(|d| d.code != ErrorCode::EmptySheet);
        model.diagnostics.extend(load_error);
        self.main = sheet.main;
        self.files = sheet.files;
        self.overrides = sheet.overrides;
        self.has_network = sheet.stmts.iter().any(|s| matches!(s.kind, StmtKind::Network(_)));
        self.engine = Engine::new(model);
        let bom = if self.text.starts_with('\u{FEFF}') { 3 } else { 0 };
        self.origin = self
            .line_starts
            .iter()
            .enumerate()
            .map(|(i, &s)| Origin {
                file: self.main,
                base: if i == 0 { 0 } else { s - bom },
                shift: if i == 0 { bom } else { 0 },
            })
            .collect();
        self.edited.clear();
        self.in_place_since_compile = 0;
        self.counts.compiled += 1;
    }

    /// The line of the document a span of the model lies on (None for a
    /// span in another file, or in a line edited since).
    pub fn line_for_span(&self, span: Span) -> Option<usize> {
        if span.file == self.main {
            let src = self.engine.model.sources.get(self.main);
            let (line, _) = src.line_col(span.start as usize);
            let i = line.checked_sub(1)?;
            (self.origin.get(i)?.file == self.main).then_some(i)
        } else {
            self.edited.get(&span.file).copied()
        }
    }

    /// Where a span of the model lies now.
    pub fn locate(&self, span: Span) -> Option<Located> {
        let sources = &self.engine.model.sources;
        if (span.file.0 as usize) >= sources.files().len() {
            return None;
        }
        if span.file == self.main || self.edited.contains_key(&span.file) {
            let i = self.line_for_span(span)?;
            let o = self.origin[i];
            let at = |x: usize| {
                let r = self.line_range(i);
                (r.start + o.shift + x.saturating_sub(o.base)).min(r.end)
            };
            return Some(Located {
                place: Place::Main,
                range: at(span.start as usize)..at(span.end.max(span.start) as usize),
            });
        }
        let f = sources.get(span.file);
        let path = f.path.clone()?;
        let canonical = self
            .files
            .iter()
            .find(|x| x.id == span.file)
            .and_then(|x| x.canonical.clone())
            .unwrap_or(path);
        Some(Located {
            place: Place::File(canonical),
            range: (span.start as usize).min(f.text.len())..(span.end as usize).min(f.text.len()),
        })
    }

    /// The span in the main file of the `@include` line that brought the
    /// file `file` in (through any chain of includes).
    pub fn include_site(&self, file: FileId) -> Option<Span> {
        let mut f = file;
        for _ in 0..=crate::sheet::MAX_INCLUDE_DEPTH {
            let at = self.files.iter().find(|x| x.id == f)?.included_at?;
            if at.file == self.main {
                return Some(at);
            }
            f = at.file;
        }
        None
    }

    /// The main file's id in the model's sources (of the last compile).
    pub fn main_file(&self) -> FileId {
        self.main
    }

    /// A diagnostic of the model in the main file's current text.
    pub fn locate_diag(&self, d: &Diagnostic) -> Option<Located> {
        d.span.and_then(|s| self.locate(s))
    }
}

fn line_slice<'a>(text: &'a str, starts: &[usize], i: usize) -> &'a str {
    let start = starts[i];
    let end = starts.get(i + 1).map_or(text.len(), |&n| n - 1);
    let s = &text[start..end];
    s.strip_suffix('\r').unwrap_or(s)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn value(d: &Document, name: &str) -> num_complex::Complex64 {
        d.engine.value(d.engine.model.id(name).expect("cell"))
    }

    #[test]
    fn a_changed_definition_line_is_edited_in_place_and_the_rest_compiles() {
        // Ohm's law: 12 V / 4 Ω = 3 A; then 12 V / 6 Ω = 2 A.
        let mut d = Document::open(None, "V = 12 V\nR = 4 Ω # load\nI = V / R\n", LoadOptions::default());
        assert_eq!(d.counts.compiled, 1);
        assert_eq!(value(&d, "I").re, 3.0);
        d.update("V = 12 V\nR = 6 Ω # load\nI = V / R\n");
        assert_eq!(
            d.counts,
            EditCounts {
                in_place: 1,
                compiled: 1,
                untouched: 0
            }
        );
        assert_eq!(value(&d, "I").re, 2.0);
        // The edited line's spans are found in the current text.
        let id = d.engine.model.id("R").unwrap();
        let at = d.locate(d.engine.model.cells[id as usize].name_span).unwrap();
        assert_eq!((at.place, at.range), (Place::Main, 9..10));
        // A changed comment after a formula is an edit of its line.
        d.update("V = 12 V\nR = 6 Ω # the load\nI = V / R\n");
        assert_eq!(d.counts.in_place, 2);
        // A new line compiles the whole text.
        d.update("V = 12 V\nR = 6 Ω # the load\nI = V / R\nP = V * I\n");
        assert_eq!(d.counts.compiled, 2);
        // P = V·I = 12 V · 2 A = 24 W.
        assert_eq!(value(&d, "P").re, 24.0);
        // An error compiles; so does the edit that mends it.
        d.update("V = 12 V\nR = 6 Ω # the load\nI = V / Rx\nP = V * I\n");
        assert!(d.engine.model.has_errors());
        d.update("V = 12 V\nR = 6 Ω # the load\nI = V / R\nP = V * I\n");
        assert!(!d.engine.model.has_errors());
        assert_eq!(d.counts.compiled, 4);
    }

    #[test]
    fn spans_of_lines_after_an_edited_line_stay_in_place() {
        let mut d = Document::open(None, "a = 1 V\n# a note\nb = a * 2\n", LoadOptions::default());
        d.update("a = 1000 V\n# a note\nb = a * 2\n");
        assert_eq!(d.counts.in_place, 1);
        // A comment line changes nothing to compute.
        d.update("a = 1000 V\n# a longer note\nb = a * 2\n");
        assert_eq!(d.counts.untouched, 1);
        let id = d.engine.model.id("b").unwrap();
        let at = d.locate(d.engine.model.cells[id as usize].name_span).unwrap();
        assert_eq!(at.range, 27..28);
        assert_eq!(&d.text()[at.range], "b");
    }
}
