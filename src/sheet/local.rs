//! Local overrides: `@override NAME = EXPR` in a sheet that includes a
//! library sheet gives one of the library's values a new formula for this
//! sheet only. It is explicit on purpose: a plain second definition of a
//! library name stays a name clash. The override must name a value a
//! library sheet defines (not one of its own sheet's), at most once across
//! the sheets; the compiler checks that the new value keeps the library
//! value's dimension and kind (`engine::model::lower::check_override`),
//! and reports and `/why` show both places.

use super::{Loader, Override, OVERRIDE};
use crate::diag::{did_you_mean, Diagnostic, ErrorCode, Span};
use crate::syntax::ast::{Directive, Stmt, StmtKind};
use crate::syntax::parse_line;

const USAGE: &str = "write `@override NAME = FORMULA` (e.g. `@override Zc = (0.25 + j0.1) Ω`), in a sheet that @includes the library defining NAME";

/// The definition an `@override` line gives: its arguments parsed as a
/// definition, with spans in the sheet's own text.
pub(super) fn parse(text: &str, st: &Stmt, d: &Directive) -> Result<Stmt, Diagnostic> {
    let (Some(first), Some(last)) = (d.args.first(), d.args.last()) else {
        return Err(
            Diagnostic::error(ErrorCode::BadOverride, d.name.span, "`@override` needs a definition")
                .with_label("nothing to override with")
                .with_hint(USAGE),
        );
    };
    let (a, b) = (first.span.start as usize, last.span.end as usize);
    // A quoted last argument ends after its closing quote.
    let b = if last.quoted { (b + 1).min(text.len()) } else { b };
    let a = if first.quoted { a.saturating_sub(1) } else { a };
    let whole = Span::new(st.span.file, a, b);
    match parse_line(&text[a..b], st.span.file, a, st.line) {
        Ok(Some(s)) if matches!(s.kind, StmtKind::Def(_)) => Ok(s),
        Ok(_) => Err(Diagnostic::error(
            ErrorCode::BadOverride,
            whole,
            "`@override` takes a definition: NAME = FORMULA",
        )
        .with_label("not a definition")
        .with_hint(USAGE)),
        Err(e) => Err(e),
    }
}

impl Loader<'_> {
    /// Put each `@override` line's definition in place of the library's,
    /// or report why it cannot be.
    pub(super) fn apply_local_overrides(&mut self) {
        let local = std::mem::take(&mut self.local);
        let mut done: Vec<(String, Span)> = Vec::new();
        for (stmt, line) in local {
            let StmtKind::Def(def) = &stmt.kind else { continue };
            let name = def.name.name.clone();
            if let Some((_, first)) = done.iter().find(|(n, _)| *n == name) {
                self.errors.push(
                    Diagnostic::error(
                        ErrorCode::BadOverride,
                        def.name.span,
                        format!("`{name}` is overridden twice"),
                    )
                    .with_label("overridden again here")
                    .with_secondary(*first, "first overridden here")
                    .with_hint("a library value is overridden at most once; keep one @override line"),
                );
                continue;
            }
            let target = self.stmts.iter().position(|s| match &s.kind {
                StmtKind::Def(d) => d.name.name == name,
                _ => false,
            });
            let Some(k) = target else {
                let names: Vec<&str> = self
                    .stmts
                    .iter()
                    .filter(|s| s.span.file != line.file)
                    .filter_map(|s| match &s.kind {
                        StmtKind::Def(d) => Some(d.name.name.as_str()),
                        _ => None,
                    })
                    .collect();
                let mut e = Diagnostic::error(
                    ErrorCode::BadOverride,
                    def.name.span,
                    format!("no included library sheet defines `{name}` to override"),
                )
                .with_label("not a library value");
                e = match did_you_mean(&name, names.iter().copied()) {
                    Some(s) => e.with_hint(format!("did you mean `{s}`?")),
                    None if names.is_empty() => e.with_hint(format!(
                        "@{OVERRIDE} replaces a value of a sheet this one @includes; to define a new value, write `{name} = …`"
                    )),
                    None => e.with_hint(format!("the library values are: {}", names.into_iter().take(20).collect::<Vec<_>>().join(", "))),
                };
                self.errors.push(e);
                continue;
            };
            let StmtKind::Def(lib) = &self.stmts[k].kind else {
                continue;
            };
            if lib.name.span.file == line.file {
                self.errors.push(
                    Diagnostic::error(
                        ErrorCode::BadOverride,
                        def.name.span,
                        format!("`{name}` is defined in this same sheet; @{OVERRIDE} is for a library's value"),
                    )
                    .with_label("overrides its own sheet's value")
                    .with_secondary(lib.name.span, "defined here")
                    .with_hint("change that definition instead"),
                );
                continue;
            }
            let original = lib.expr.clone();
            let library = lib.name.span;
            let lib_display = lib.display.clone();
            let mut new = stmt.clone();
            if let StmtKind::Def(d) = &mut new.kind {
                // The library's display unit is kept unless one is given.
                d.display = d.display.take().or(lib_display);
            }
            self.stmts[k] = new;
            done.push((name.clone(), def.name.span));
            self.overrides.push(Override {
                name,
                original,
                span: line,
                library: Some(library),
            });
        }
    }
}
