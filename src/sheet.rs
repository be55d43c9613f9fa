//! A sheet as read from disk: its source texts and statements, before
//! compiling. Overrides (`--set NAME=EXPR`) are applied here, as new
//! formulas for existing cells.
//!
//! Library sheets: `@include "lib/cables.ohm"` merges another sheet's cells
//! (and checks and notes) into this one. The path is relative to the file
//! that names it and must stay inside the main sheet's folder tree, or a
//! folder the command line allows (`--allow-dir`). Paths are canonicalised
//! (so a symbolic link is judged by where it points); each file is read
//! once; a cycle or a name defined in two files is a located error. An
//! included file's metadata (`@title` …) stays with that file and does not
//! become the including sheet's.

use std::collections::HashMap;
use std::path::{Component, Path, PathBuf};

use sha2::{Digest, Sha256};

use crate::diag::{Diagnostic, ErrorCode, FileId, SourceFile, SourceMap, Span};
use crate::engine::model::META_KEYS;
use crate::syntax::ast::{Definition, Directive, Expr, ExprKind, Ident, Stmt, StmtKind};
use crate::syntax::{parse_line, parse_sheet};

/// The directive that merges a library sheet.
pub const INCLUDE: &str = "include";
/// `@override NAME = EXPR`: this sheet's own value for a library value.
pub const OVERRIDE: &str = "override";

mod local;

/// The deepest chain of includes, and the most files one sheet may pull in.
pub const MAX_INCLUDE_DEPTH: usize = 32;
pub const MAX_INCLUDED_FILES: usize = 256;

/// How a sheet file is read.
#[derive(Clone, Debug, Default)]
pub struct LoadOptions {
    /// Folders outside the sheet's own tree that `@include` may read from.
    pub allow_dirs: Vec<PathBuf>,
    /// Texts to read in place of files, by canonical path: an editor's
    /// unsaved buffers (the language server). The confinement rules are
    /// the same; a buffer is read instead of the file's bytes.
    pub buffers: HashMap<PathBuf, String>,
}

/// One file of a sheet: the main file first, then each included file in
/// the order it is first met (depth first, in text order).
#[derive(Clone, Debug)]
pub struct SheetFile {
    pub id: FileId,
    /// The path relative to the main sheet's folder, `/`-separated (the
    /// main file's own name for the main file).
    pub rel: String,
    /// The canonical path (`None` for text that is not a file).
    pub canonical: Option<PathBuf>,
    /// SHA-256 of the file's exact bytes.
    pub sha256: [u8; 32],
    /// Length in bytes.
    pub len: u64,
    /// `@title` and friends as stated in an included file (the main file's
    /// are in the compiled model).
    pub meta: Vec<(String, String)>,
    /// Where the including sheet names it.
    pub included_at: Option<Span>,
}

impl SheetFile {
    pub fn sha256_hex(&self) -> String {
        hex(&self.sha256)
    }
}

/// Lower-case hexadecimal.
pub fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// A sheet that could not be read at all, with the sources its message
/// points into.
#[derive(Clone, Debug)]
pub struct LoadError {
    pub sources: SourceMap,
    pub diagnostic: Diagnostic,
}

#[derive(Clone, Debug, Default)]
pub struct Sheet {
    pub sources: SourceMap,
    pub main: FileId,
    pub stmts: Vec<Stmt>,
    /// Errors met while reading (syntax, units, includes).
    pub errors: Vec<Diagnostic>,
    /// The main file and every file it includes, in hashing order.
    pub files: Vec<SheetFile>,
    /// Cells given a new formula by `--set`, with the formula they had:
    /// the compiler checks the new value has the old one's dimension and
    /// kind, and reports a mismatch at the `--set`.
    pub overrides: Vec<Override>,
}

/// One `--set NAME=EXPR`, or one `@override NAME = EXPR` line of a sheet
/// that replaces a value of a library sheet it includes.
#[derive(Clone, Debug)]
pub struct Override {
    pub name: String,
    /// The formula the sheet gives the cell.
    pub original: Expr,
    /// The whole `NAME=EXPR` text (in its own source file, `--set`; or the
    /// `@override` line).
    pub span: Span,
    /// For an `@override` line: the name in the library's definition it
    /// replaces. `None` for `--set`.
    pub library: Option<Span>,
}

/// Decode sheet bytes: UTF-8 (an error names the first bad byte), with a
/// leading byte-order mark dropped.
pub fn decode(bytes: &[u8]) -> Result<String, (usize, String)> {
    let bytes = bytes.strip_prefix(&[0xEF, 0xBB, 0xBF]).unwrap_or(bytes);
    match std::str::from_utf8(bytes) {
        Ok(s) => Ok(s.to_string()),
        Err(e) => {
            let at = e.valid_up_to();
            let good = String::from_utf8_lossy(&bytes[..at]).into_owned();
            Err((at, good))
        }
    }
}

impl Sheet {
    /// A sheet from text already in memory.
    pub fn from_text(name: &str, text: &str) -> Sheet {
        let text = text.strip_prefix('\u{FEFF}').unwrap_or(text);
        let mut sources = SourceMap::new();
        let main = sources.add(SourceFile::new(name, None, text.to_string()));
        let parsed = parse_sheet(text, main);
        let mut stmts = Vec::with_capacity(parsed.stmts.len());
        let mut errors = parsed.errors;
        for st in parsed.stmts {
            match &st.kind {
                StmtKind::Directive(d) if d.name.name == OVERRIDE => errors.push(
                    Diagnostic::error(
                        ErrorCode::BadOverride,
                        d.name.span,
                        "`@override` replaces a value of an included library sheet; this text includes none",
                    )
                    .with_label("nothing to override")
                    .with_hint("save the sheet to a file that @includes the library, and open that file"),
                ),
                StmtKind::Directive(d) if d.name.name == INCLUDE => errors.push(
                    Diagnostic::error(
                        ErrorCode::IncludePath,
                        d.name.span,
                        "`@include` needs a sheet saved as a file",
                    )
                    .with_label("this text has no folder to find the library in")
                    .with_hint("save the sheet to a file next to the library sheet and open that file"),
                ),
                _ => stmts.push(st),
            }
        }
        Sheet {
            sources,
            main,
            stmts,
            errors,
            files: vec![SheetFile {
                id: main,
                rel: name.to_string(),
                canonical: None,
                sha256: Sha256::digest(text.as_bytes()).into(),
                len: text.len() as u64,
                meta: Vec::new(),
                included_at: None,
            }],
            overrides: Vec::new(),
        }
    }

    /// Read and parse a sheet file and the library sheets it includes,
    /// with default options (no folders allowed outside its own tree).
    pub fn load(path: &Path) -> Result<Sheet, Box<LoadError>> {
        Sheet::load_with(path, &LoadOptions::default())
    }

    /// Read and parse a sheet file and the library sheets it includes. An
    /// unreadable or non-UTF-8 main file is an error here; everything else
    /// (syntax, a bad include) is collected in `errors`.
    pub fn load_with(path: &Path, opts: &LoadOptions) -> Result<Sheet, Box<LoadError>> {
        let name = path.display().to_string();
        let io_err = |msg: String| {
            Box::new(LoadError {
                sources: SourceMap::new(),
                diagnostic: Diagnostic::unplaced(ErrorCode::Io, msg),
            })
        };
        let bytes = std::fs::read(path).map_err(|e| io_err(format!("cannot read `{name}`: {e}")))?;
        match decode(&bytes) {
            Ok(text) => {
                let canonical =
                    std::fs::canonicalize(path).map_err(|e| io_err(format!("cannot read `{name}`: {e}")))?;
                Sheet::load_decoded(path, canonical, text, &bytes, opts)
            }
            Err((at, good)) => {
                let mut sources = SourceMap::new();
                let id = sources.add(SourceFile::new(&name, Some(path.to_path_buf()), good.clone()));
                let d = Diagnostic::error(
                    ErrorCode::NotUtf8,
                    Span::new(id, at, at),
                    format!("`{name}` is not UTF-8 text (bad byte at offset {at})"),
                )
                .with_label("the text stops making sense here")
                .with_hint("sheets are plain UTF-8 text; save the file as UTF-8");
                Err(Box::new(LoadError { sources, diagnostic: d }))
            }
        }
    }

    /// A sheet whose main file's text is given (an editor's buffer) rather
    /// than read: its includes are found from `path`'s folder under the
    /// same rules as `load_with` (and read from `opts.buffers` first). A
    /// path not on disk yet (a new, unsaved file) is judged by its folder.
    pub fn load_buffer(path: &Path, text: &str, opts: &LoadOptions) -> Result<Sheet, Box<LoadError>> {
        let name = path.display().to_string();
        let canonical = std::fs::canonicalize(path).or_else(|e| {
            match (path.parent().map(std::fs::canonicalize), path.file_name()) {
                (Some(Ok(dir)), Some(f)) => Ok(dir.join(f)),
                _ => Err(e),
            }
        });
        let canonical = canonical.map_err(|e| {
            Box::new(LoadError {
                sources: SourceMap::new(),
                diagnostic: Diagnostic::unplaced(ErrorCode::Io, format!("cannot read `{name}`: {e}")),
            })
        })?;
        let text = text.strip_prefix('\u{FEFF}').unwrap_or(text).to_string();
        let bytes = text.clone().into_bytes();
        Sheet::load_decoded(path, canonical, text, &bytes, opts)
    }

    fn load_decoded(
        path: &Path,
        canonical: PathBuf,
        text: String,
        bytes: &[u8],
        opts: &LoadOptions,
    ) -> Result<Sheet, Box<LoadError>> {
        let name = path.display().to_string();
        let io_err = |msg: String| {
            Box::new(LoadError {
                sources: SourceMap::new(),
                diagnostic: Diagnostic::unplaced(ErrorCode::Io, msg),
            })
        };
        {
            {
                let root = canonical.parent().map(Path::to_path_buf).unwrap_or_default();
                let mut allowed = vec![root.clone()];
                for d in &opts.allow_dirs {
                    let c = std::fs::canonicalize(d)
                        .map_err(|e| io_err(format!("cannot use `--allow-dir {}`: {e}", d.display())))?;
                    if !c.is_dir() {
                        return Err(io_err(format!("`--allow-dir {}` is not a folder", d.display())));
                    }
                    allowed.push(c);
                }
                let mut sources = SourceMap::new();
                let main = sources.add(SourceFile::new(name.clone(), Some(path.to_path_buf()), text));
                let file_name = path
                    .file_name()
                    .map_or_else(|| name.clone(), |f| f.to_string_lossy().into_owned());
                let mut ld = Loader {
                    sources,
                    files: vec![SheetFile {
                        id: main,
                        rel: file_name,
                        canonical: Some(canonical.clone()),
                        sha256: Sha256::digest(bytes).into(),
                        len: bytes.len() as u64,
                        meta: Vec::new(),
                        included_at: None,
                    }],
                    stmts: Vec::new(),
                    errors: Vec::new(),
                    allowed,
                    main_dir: Path::new(&name).parent().map(Path::to_path_buf).unwrap_or_default(),
                    amplitudes: Vec::new(),
                    local: Vec::new(),
                    overrides: Vec::new(),
                    buffers: &opts.buffers,
                };
                ld.file(0, &mut vec![canonical]);
                ld.finish();
                ld.apply_local_overrides();
                Ok(Sheet {
                    sources: ld.sources,
                    main,
                    stmts: ld.stmts,
                    errors: ld.errors,
                    files: ld.files,
                    overrides: ld.overrides,
                })
            }
        }
    }

    /// Names of the cells the sheet defines, in order.
    pub fn cell_names(&self) -> Vec<&str> {
        self.stmts
            .iter()
            .filter_map(|s| match &s.kind {
                StmtKind::Def(d) => Some(d.name.name.as_str()),
                _ => None,
            })
            .collect()
    }

    /// Apply `NAME=EXPR` from the command line: the cell NAME gets the new
    /// formula EXPR (its display unit is kept).
    pub fn set_override(&mut self, assignment: &str) -> Result<(), Diagnostic> {
        let label = format!("--set {assignment}");
        let id = self.sources.add(SourceFile::new("--set", None, assignment.to_string()));
        let Some(eq) = assignment.find('=') else {
            return Err(Diagnostic::error(
                ErrorCode::BadOverride,
                Span::new(id, 0, assignment.len()),
                format!("`{label}` has no `=`"),
            )
            .with_hint("write --set NAME=VALUE, e.g. --set \"Vs=480 V\""));
        };
        let stmt = match parse_line(assignment, id, 0, 1) {
            Ok(Some(Stmt {
                kind: StmtKind::Def(d), ..
            })) => d,
            Ok(_) => {
                return Err(Diagnostic::error(
                    ErrorCode::BadOverride,
                    Span::new(id, 0, eq),
                    "expected a cell name before `=`",
                ));
            }
            Err(d) => return Err(d),
        };
        let target = self.stmts.iter_mut().find_map(|s| match &mut s.kind {
            StmtKind::Def(d) if d.name.name == stmt.name.name => Some(d),
            _ => None,
        });
        match target {
            Some(def) => {
                // A network element keeps its form and nodes; the value
                // inside it is what is set.
                if let ExprKind::Call { func, args } = &mut def.expr.kind {
                    let n = crate::syntax::ast::NETWORK_ELEMENTS
                        .iter()
                        .find(|(f, _)| *f == func.name)
                        .map(|&(_, n)| n);
                    if let Some(slot) = n.and_then(|n| args.get_mut(n)) {
                        *slot = stmt.expr;
                        if stmt.display.is_some() {
                            def.display = stmt.display;
                        }
                        return Ok(());
                    }
                }
                let original = match self.overrides.iter().find(|o| o.name == def.name.name) {
                    Some(o) => o.original.clone(),
                    None => def.expr.clone(),
                };
                let keep_display = def.display.take();
                // The sheet's tolerance stays with the new value unless
                // `--set` gives one (`--set "Qc=700 kvar within 5 %"`).
                let keep_spread = def.spread.take();
                *def = Definition {
                    name: Ident {
                        name: def.name.name.clone(),
                        span: def.name.span,
                    },
                    expr: stmt.expr,
                    display: stmt.display.or(keep_display),
                    spread: stmt.spread.or(keep_spread),
                };
                let name = stmt.name.name;
                // an earlier `--set` of the name gives way; an `@override`
                // line stays, so reports and `run` name both
                self.overrides.retain(|o| o.name != name || o.library.is_some());
                self.overrides.push(Override {
                    name,
                    original,
                    span: Span::new(id, 0, assignment.len()),
                    library: None,
                });
                Ok(())
            }
            None => {
                let names = self.cell_names();
                let mut d = Diagnostic::error(
                    ErrorCode::BadOverride,
                    stmt.name.span,
                    format!("the sheet has no cell `{}` to set", stmt.name.name),
                );
                if let Some(s) = crate::diag::did_you_mean(&stmt.name.name, names.iter().copied()) {
                    d = d.with_hint(format!("did you mean `{s}`?"));
                } else if !names.is_empty() {
                    let list: Vec<&str> = names.into_iter().take(20).collect();
                    d = d.with_hint(format!("the sheet's cells are: {}", list.join(", ")));
                }
                Err(d)
            }
        }
    }
}

/// Reads a main file and, depth first, the files it includes.
struct Loader<'o> {
    sources: SourceMap,
    files: Vec<SheetFile>,
    stmts: Vec<Stmt>,
    errors: Vec<Diagnostic>,
    /// Canonical folders an include may read from: the main sheet's own
    /// folder first, then each `--allow-dir`.
    allowed: Vec<PathBuf>,
    /// The folder of the main file as the user named it, for the names
    /// shown in messages.
    main_dir: PathBuf,
    /// Every `@amplitude` met: file index, span, value.
    amplitudes: Vec<(usize, Span, String)>,
    /// `@override` lines met: the definition they give, and the line.
    local: Vec<(Stmt, Span)>,
    /// The library values replaced by `@override` lines.
    overrides: Vec<Override>,
    /// Texts read in place of files (`LoadOptions::buffers`).
    buffers: &'o HashMap<PathBuf, String>,
}

impl Loader<'_> {
    /// Merge the statements of `files[idx]`; `stack` holds the canonical
    /// paths of the files that include it (itself last).
    fn file(&mut self, idx: usize, stack: &mut Vec<PathBuf>) {
        let id = self.files[idx].id;
        let text = self.sources.get(id).text.clone();
        let parsed = parse_sheet(&text, id);
        self.errors.extend(parsed.errors);
        let is_main = idx == 0;
        for st in parsed.stmts {
            if let StmtKind::Directive(d) = &st.kind {
                let key = d.name.name.as_str();
                if key == INCLUDE {
                    self.include(idx, d, stack);
                    continue;
                }
                if key == OVERRIDE {
                    match local::parse(&text, &st, d) {
                        Ok(def) => self.local.push((def, st.span)),
                        Err(e) => self.errors.push(e),
                    }
                    continue;
                }
                if !is_main && META_KEYS.contains(&key) {
                    let words: Vec<&str> = d.args.iter().map(|a| a.text.as_str()).collect();
                    self.files[idx].meta.push((key.to_string(), words.join(" ")));
                    continue;
                }
                if key == "amplitude" {
                    match d.args.as_slice() {
                        [a] if a.text == "rms" || a.text == "peak" => {
                            self.amplitudes.push((idx, st.span, a.text.clone()));
                            if !is_main {
                                continue;
                            }
                        }
                        // A malformed one is left for the compiler to report.
                        _ => {}
                    }
                }
            }
            self.stmts.push(st);
        }
    }

    fn include(&mut self, idx: usize, d: &Directive, stack: &mut Vec<PathBuf>) {
        let [arg] = d.args.as_slice() else {
            let span = d.args.last().map_or(d.name.span, |a| d.name.span.to(a.span));
            self.errors.push(
                Diagnostic::error(ErrorCode::BadDirective, span, "`@include` takes one path")
                    .with_label("expected one path in quotes")
                    .with_hint("e.g. @include \"lib/cables.ohm\" (relative to this sheet's folder)"),
            );
            return;
        };
        let written = arg.text.as_str();
        let span = arg.span;
        let err = |code, msg: String| Diagnostic::error(code, span, msg);
        let p = Path::new(written);
        if written.is_empty() {
            self.errors
                .push(err(ErrorCode::IncludePath, "the include path is empty".into()));
            return;
        }
        if p.has_root() || p.is_absolute() || matches!(p.components().next(), Some(Component::Prefix(_))) {
            self.errors.push(
                err(ErrorCode::IncludePath, format!("`{written}` is an absolute path"))
                    .with_label("an include path is relative to the sheet that names it")
                    .with_hint(
                        "write the path from this sheet's folder, e.g. `lib/cables.ohm`, so the sheets can move together; \
                         a shared folder elsewhere is reached with `../` once the command line allows it (--allow-dir DIR)",
                    ),
            );
            return;
        }
        let base = self.files[idx]
            .canonical
            .as_deref()
            .and_then(Path::parent)
            .map(Path::to_path_buf)
            .unwrap_or_default();
        let joined = base.join(p);
        let canon = match std::fs::canonicalize(&joined) {
            Ok(c) => c,
            // An unsaved buffer not on disk yet.
            Err(_) if self.buffers.contains_key(&normalize(&joined)) => normalize(&joined),
            Err(e) => {
                let d = if e.kind() == std::io::ErrorKind::NotFound {
                    err(ErrorCode::IncludePath, format!("cannot find `{written}`"))
                        .with_label("no such file")
                        .with_hint(format!(
                            "the path is taken from the folder of the sheet that names it: {}",
                            normalize(&joined).display()
                        ))
                } else {
                    err(ErrorCode::IncludePath, format!("cannot read `{written}`: {e}"))
                };
                self.errors.push(d);
                return;
            }
        };
        if !self.allowed.iter().any(|a| canon.starts_with(a)) {
            let lexical = normalize(&joined);
            let through_link = self.allowed.iter().any(|a| lexical.starts_with(a));
            let d = if through_link {
                err(
                    ErrorCode::IncludePath,
                    format!(
                        "`{written}` is a symbolic link to `{}`, outside the sheet's folder",
                        canon.display()
                    ),
                )
                .with_label("links out of the sheet's folder are refused")
            } else {
                err(
                    ErrorCode::IncludePath,
                    format!(
                        "`{written}` is outside the sheet's folder `{}`",
                        self.allowed[0].display()
                    ),
                )
                .with_label("leads out of the sheet's folder")
            };
            self.errors.push(d.with_hint(
                "library sheets must sit in the sheet's folder or below it; to use a shared folder elsewhere, \
                 allow it on the command line: --allow-dir DIR",
            ));
            return;
        }
        if !canon.is_file() && !self.buffers.contains_key(&canon) {
            self.errors.push(
                err(ErrorCode::IncludePath, format!("`{written}` is not a file"))
                    .with_label("a library sheet must be a .ohm file"),
            );
            return;
        }
        if let Some(at) = stack.iter().position(|s| *s == canon) {
            let mut chain: Vec<String> = stack[at..].iter().map(|s| self.rel_of(s)).collect();
            chain.push(self.rel_of(&canon));
            self.errors.push(
                err(ErrorCode::IncludeCycle, format!("include cycle: {}", chain.join(" → ")))
                    .with_label("this sheet is already being included")
                    .with_hint(
                        "a library sheet cannot include a sheet that includes it; \
                         move the shared cells into a third sheet that both include",
                    ),
            );
            return;
        }
        if self.files.iter().any(|f| f.canonical.as_ref() == Some(&canon)) {
            // Included before, through another path: its cells are merged once.
            return;
        }
        if stack.len() >= MAX_INCLUDE_DEPTH || self.files.len() >= MAX_INCLUDED_FILES {
            self.errors.push(err(
                ErrorCode::IncludePath,
                format!(
                    "too many library sheets (at most {MAX_INCLUDED_FILES} files, nested at most {MAX_INCLUDE_DEPTH} deep)"
                ),
            ));
            return;
        }
        let read = match self.buffers.get(&canon) {
            Some(t) => Ok(t.clone().into_bytes()),
            None => std::fs::read(&canon),
        };
        let bytes = match read {
            Ok(b) => b,
            Err(e) => {
                self.errors
                    .push(err(ErrorCode::IncludePath, format!("cannot read `{written}`: {e}")));
                return;
            }
        };
        let text = match decode(&bytes) {
            Ok(t) => t,
            Err((at, _)) => {
                self.errors.push(
                    err(
                        ErrorCode::NotUtf8,
                        format!("`{written}` is not UTF-8 text (bad byte at offset {at})"),
                    )
                    .with_hint("sheets are plain UTF-8 text; save the file as UTF-8"),
                );
                return;
            }
        };
        let parent_rel = Path::new(&self.files[idx].rel)
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_default();
        let rel = slash(&normalize(&parent_rel.join(p)));
        let shown = if self.main_dir.as_os_str().is_empty() {
            rel.clone()
        } else {
            normalize(&self.main_dir.join(&rel)).display().to_string()
        };
        let id = self.sources.add(SourceFile::new(shown, Some(canon.clone()), text));
        self.files.push(SheetFile {
            id,
            rel,
            canonical: Some(canon.clone()),
            sha256: Sha256::digest(&bytes).into(),
            len: bytes.len() as u64,
            meta: Vec::new(),
            included_at: Some(span),
        });
        let new_idx = self.files.len() - 1;
        stack.push(canon);
        self.file(new_idx, stack);
        stack.pop();
    }

    fn rel_of(&self, canon: &Path) -> String {
        self.files
            .iter()
            .find(|f| f.canonical.as_deref() == Some(canon))
            .map_or_else(|| canon.display().to_string(), |f| f.rel.clone())
    }

    /// Conventions that must agree across files, and names defined in two
    /// files.
    fn finish(&mut self) {
        let main_amp = self
            .amplitudes
            .iter()
            .find(|(i, _, _)| *i == 0)
            .map(|(_, s, v)| (Some(*s), v.clone()))
            .unwrap_or((None, "rms".to_string()));
        for (i, span, v) in &self.amplitudes {
            if *i != 0 && *v != main_amp.1 {
                let mut d = Diagnostic::error(
                    ErrorCode::BadDirective,
                    *span,
                    format!(
                        "`{}` is written for @amplitude {v}, but the sheet including it uses {}",
                        self.files[*i].rel, main_amp.1
                    ),
                )
                .with_label("a different amplitude convention")
                .with_hint("phasor magnitudes would be read differently; state the same @amplitude in both sheets");
                if let Some(s) = main_amp.0 {
                    d = d.with_secondary(s, "the including sheet's convention");
                }
                self.errors.push(d);
            }
        }
        let mut first: HashMap<String, Span> = HashMap::new();
        let mut keep = vec![true; self.stmts.len()];
        for (k, st) in self.stmts.iter().enumerate() {
            let StmtKind::Def(d) = &st.kind else { continue };
            match first.get(&d.name.name) {
                None => {
                    first.insert(d.name.name.clone(), d.name.span);
                }
                // Twice in one file: the compiler reports it.
                Some(f) if f.file == d.name.span.file => {}
                Some(f) => {
                    let a = self.sources.get(f.file).name.clone();
                    let b = self.sources.get(d.name.span.file).name.clone();
                    self.errors.push(
                        Diagnostic::error(
                            ErrorCode::NameClash,
                            d.name.span,
                            format!("`{}` is defined in both `{a}` and `{b}`", d.name.name),
                        )
                        .with_label("defined again here")
                        .with_secondary(*f, "first defined here")
                        .with_hint(
                            "a name is defined once across a sheet and the sheets it includes: \
                             rename one of them, or delete this one to use the other",
                        ),
                    );
                    keep[k] = false;
                }
            }
        }
        let mut k = 0;
        self.stmts.retain(|_| {
            k += 1;
            keep[k - 1]
        });
    }
}

/// Resolve `.` and `..` without touching the file system.
fn normalize(p: &Path) -> PathBuf {
    let mut out: Vec<Component> = Vec::new();
    for c in p.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => match out.last() {
                Some(Component::Normal(_)) => {
                    out.pop();
                }
                Some(Component::RootDir) | Some(Component::Prefix(_)) => {}
                _ => out.push(c),
            },
            _ => out.push(c),
        }
    }
    out.iter().collect()
}

/// A relative path with `/` between its parts, whatever the platform.
fn slash(p: &Path) -> String {
    p.components()
        .map(|c| c.as_os_str().to_string_lossy().into_owned())
        .collect::<Vec<_>>()
        .join("/")
}
