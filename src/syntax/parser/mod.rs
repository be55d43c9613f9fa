//! From text to syntax tree. A sheet is split into lines and each line is
//! parsed on its own with the pest rule `line`; operator precedence is
//! climbed here with pest's `PrattParser`.
//!
//! Invariant: parsing never panics and never recurses without bound. Line
//! length, bracket depth, runs of prefix/power operators and the depth of
//! the finished tree are all limited (see `Limits`), and each limit turns
//! into a located error.

mod ambiguity;
mod atoms;
mod climb;
mod errors;
mod lines;
mod statements;
#[cfg(test)]
mod tests;

use pest::iterators::Pair;

use super::ast::Stmt;
use crate::diag::{Diagnostic, FileId, Span};

pub use lines::{find_comment_start, parse_line, parse_sheet};

#[derive(pest_derive::Parser)]
#[grammar = "../grammar/ohmsheet.pest"]
struct SheetGrammar;

/// Limits that turn abusive input into a clear error instead of a stack
/// overflow or a hang.
#[derive(Clone, Copy, Debug)]
pub struct Limits {
    /// Longest line, in bytes.
    pub max_line_bytes: usize,
    /// Deepest nesting of brackets on one line.
    pub max_bracket_depth: usize,
    /// Deepest expression tree.
    pub max_expr_depth: usize,
}

pub const LIMITS: Limits = Limits {
    max_line_bytes: 10_000,
    max_bracket_depth: 64,
    max_expr_depth: 500,
};

/// The statements of one file and the errors met reading it.
#[derive(Clone, Debug, Default)]
pub struct ParsedSheet {
    pub file: FileId,
    pub stmts: Vec<Stmt>,
    pub errors: Vec<Diagnostic>,
}

/// Sheets with more lines than this are parsed on all cores.
const PARALLEL_LINES: usize = 2000;

struct Cx<'a> {
    file: FileId,
    offset: usize,
    line: &'a str,
}

type R<T> = Result<T, Diagnostic>;

impl Cx<'_> {
    /// The span of a pair, without the whitespace or end-of-line comment
    /// pest may have taken in after its last token.
    pub(super) fn span(&self, p: &Pair<Rule>) -> Span {
        let s = p.as_span();
        let text = s.as_str();
        let code = match find_comment_start(text) {
            Some(i) => &text[..i],
            None => text,
        };
        let len = code.trim_end().len();
        Span::new(self.file, self.offset + s.start(), self.offset + s.start() + len)
    }
}
