//! A sheet as read from disk: its source texts and statements, before
//! compiling. Overrides (`--set NAME=EXPR`) are applied here, as new
//! formulas for existing cells.

use std::path::Path;

use crate::diag::{Diagnostic, ErrorCode, FileId, SourceFile, SourceMap, Span};
use crate::syntax::ast::{Definition, Ident, Stmt, StmtKind};
use crate::syntax::{parse_line, parse_sheet};

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
    /// Errors met while reading (syntax, units).
    pub errors: Vec<Diagnostic>,
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
        Sheet {
            sources,
            main,
            stmts: parsed.stmts,
            errors: parsed.errors,
        }
    }

    /// Read and parse a sheet file. An unreadable or non-UTF-8 file is an
    /// error here; syntax errors are collected in `errors`.
    pub fn load(path: &Path) -> Result<Sheet, Box<LoadError>> {
        let name = path.display().to_string();
        let bytes = std::fs::read(path).map_err(|e| {
            Box::new(LoadError {
                sources: SourceMap::new(),
                diagnostic: Diagnostic::unplaced(ErrorCode::Io, format!("cannot read `{name}`: {e}")),
            })
        })?;
        match decode(&bytes) {
            Ok(text) => {
                let mut s = Sheet::from_text(&name, &text);
                let id = s.main;
                let f = s.sources.get(id).clone();
                s.sources = SourceMap::new();
                s.sources.add(SourceFile::new(f.name, Some(path.to_path_buf()), f.text));
                Ok(s)
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
                let keep_display = def.display.take();
                *def = Definition {
                    name: Ident {
                        name: def.name.name.clone(),
                        span: def.name.span,
                    },
                    expr: stmt.expr,
                    display: stmt.display.or(keep_display),
                };
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
