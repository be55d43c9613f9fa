//! Compiling a sheet into a `Model`: cells, the dependency graph, and one
//! straight-line program.
//!
//! Steps: collect cells (duplicates and reserved names are errors), find
//! each cell's dependencies, order them topologically (a cycle is reported
//! whole), then type-check and lower each cell in that order. Dimensions
//! and kinds are settled here, so evaluation carries no unit bookkeeping.
//! A cell with an error does not stop the others: its dependents are marked
//! as depending on an error, and every problem is reported at once.

use std::collections::HashMap;
use std::ops::Range;

use super::program::{Operand, Program};
use crate::diag::{Diagnostic, ErrorCode, FileId, SourceMap, Span};
use crate::funcs::{self, Ctx, Shape};
use crate::syntax::ast::*;
use crate::units::{Quantity, Unit};

mod arith;
mod collect;
mod graph;
mod lower;
mod lower_network;
mod lower_search;
mod lower_spread;
mod meta;

pub use collect::{compile, compile_limited};
pub(super) use collect::{literal_unit, new_cell};

pub type CellId = u32;

/// Cell names to ids. A fast non-cryptographic hash: the names come from
/// the user's own sheet, and a 100,000-cell sheet looks each up twice.
pub type NameMap = HashMap<String, CellId, rustc_hash::FxBuildHasher>;

/// Names that cannot be cells.
pub const RESERVED: &[&str] = &["j", "pi", "check"];

/// The most cells one sheet may have.
pub const MAX_CELLS: usize = 2_000_000;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Role {
    /// `name = expr`
    Def,
    /// `check lhs ≈ rhs ± tol`: a hidden cell of three slots.
    Check,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CellError {
    /// This cell's own formula is wrong (reported).
    Own,
    /// It uses a cell that has an error.
    Upstream(CellId),
}

/// How a check's tolerance is stated.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum TolSpec {
    /// A fraction of |rhs|.
    Relative(f64),
    /// The magnitude of slot 2 of the check.
    Absolute,
}

#[derive(Clone, Debug)]
pub struct Cell {
    pub name: String,
    pub role: Role,
    pub file: FileId,
    pub line: u32,
    pub name_span: Span,
    pub stmt_span: Span,
    /// The formula as written.
    pub formula: String,
    pub shape: Option<Shape>,
    pub error: Option<CellError>,
    pub slot: u32,
    pub width: u32,
    pub display: Option<Unit>,
    pub deps: Vec<CellId>,
    /// This cell's instructions in `Program::code`.
    pub code: Range<u32>,
    /// Its formula refers to no other cell: a value to override.
    pub input: bool,
    pub comment: Option<String>,
    pub tol: Option<TolSpec>,
}

impl Cell {
    pub fn quantity(&self) -> Option<Quantity> {
        match &self.shape {
            Some(Shape::Scalar(q)) => Some(*q),
            _ => None,
        }
    }
    /// For a check: the quantity of the values it compares.
    pub fn checked_quantity(&self) -> Quantity {
        match &self.shape {
            Some(Shape::Record(f)) if self.role == Role::Check => f[0].1,
            _ => Quantity::PLAIN,
        }
    }
    pub fn is_check(&self) -> bool {
        self.role == Role::Check
    }
}

/// Sheet metadata from `@title` and friends, and `@note` texts.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Meta {
    pub entries: Vec<(String, String)>,
    pub notes: Vec<Note>,
    /// The arguments of each `@sweep` line (see `sweep::declared`).
    pub sweeps: Vec<Span>,
}

/// `@note CELL "text"` (about one cell) or `@note "text"` (about the sheet).
/// Several notes on one cell are paragraphs, in order.
#[derive(Clone, Debug, PartialEq)]
pub struct Note {
    pub cell: Option<String>,
    pub text: String,
    pub span: Span,
}

impl Meta {
    /// The notes about cell `name`, in order.
    pub fn notes_for<'a>(&'a self, name: &'a str) -> impl Iterator<Item = &'a str> + 'a {
        self.notes
            .iter()
            .filter(move |n| n.cell.as_deref() == Some(name))
            .map(|n| n.text.as_str())
    }
}

impl Meta {
    pub fn get(&self, key: &str) -> Option<&str> {
        self.entries
            .iter()
            .rev()
            .find(|(k, _)| k == key)
            .map(|(_, v)| v.as_str())
    }
}

/// Metadata directives: `@title "..."` and so on.
pub const META_KEYS: &[&str] = &["title", "project", "prepared", "checked", "revision", "date"];

#[derive(Clone, Debug)]
pub struct Model {
    pub sources: SourceMap,
    pub cells: Vec<Cell>,
    /// Cells without errors, in evaluation order.
    pub order: Vec<CellId>,
    /// Position of each cell in `order` (u32::MAX for cells with errors).
    pub rank: Vec<u32>,
    /// For each cell, the cells that use it directly.
    pub dependents: Vec<Vec<CellId>>,
    pub by_name: NameMap,
    pub program: Program,
    pub meta: Meta,
    pub ctx: Ctx,
    pub diagnostics: Vec<Diagnostic>,
    /// The inputs' tolerances (`within …`, `among …`), in sheet order;
    /// empty for a sheet without any (see `engine::tolerance`).
    pub spreads: Vec<crate::engine::tolerance::Spread>,
    /// Checks that must hold over the tolerances, in sheet order.
    pub spread_checks: Vec<crate::engine::tolerance::SpreadCheck>,
}

impl Model {
    pub fn has_errors(&self) -> bool {
        self.diagnostics.iter().any(Diagnostic::is_error)
    }
    pub fn cell(&self, name: &str) -> Option<&Cell> {
        self.by_name.get(name).map(|&id| &self.cells[id as usize])
    }
    /// The tolerance of input `id`, if it has one.
    pub fn spread_of(&self, id: CellId) -> Option<&crate::engine::tolerance::Spread> {
        self.spreads.iter().find(|s| s.cell == id)
    }
    pub fn id(&self, name: &str) -> Option<CellId> {
        self.by_name.get(name).copied()
    }
    /// Defined cells (not checks).
    pub fn defs(&self) -> impl Iterator<Item = (CellId, &Cell)> {
        self.cells
            .iter()
            .enumerate()
            .filter(|(_, c)| c.role == Role::Def)
            .map(|(i, c)| (i as CellId, c))
    }
    pub fn checks(&self) -> impl Iterator<Item = (CellId, &Cell)> {
        self.cells
            .iter()
            .enumerate()
            .filter(|(_, c)| c.role == Role::Check)
            .map(|(i, c)| (i as CellId, c))
    }
    /// Inputs: defined cells whose formula uses no other cell.
    pub fn inputs(&self) -> impl Iterator<Item = (CellId, &Cell)> {
        self.defs().filter(|(_, c)| c.input && c.error.is_none())
    }

    /// The error for a reference, at `at`, to cell `id` when that cell has
    /// an error (its own, or one in a cell it uses): it names the cell and
    /// the error rather than denying the cell exists. `None` if the cell
    /// is sound.
    pub fn broken_ref(&self, id: CellId, at: Option<Span>) -> Option<Diagnostic> {
        broken_ref(&self.cells, &self.diagnostics, &self.sources, id, at)
    }
}

/// `Model::broken_ref` over the parts of a model being built (`diags` may
/// be empty: the message then gives the place of the error but not its
/// text).
pub(super) fn broken_ref(
    cells: &[Cell],
    diags: &[Diagnostic],
    sources: &SourceMap,
    id: CellId,
    at: Option<Span>,
) -> Option<Diagnostic> {
    let cell = &cells[id as usize];
    cell.error?;
    // Follow the chain of upstream errors to the cell whose own formula is
    // wrong (a cycle ends the walk where it closes).
    let mut root = id;
    for _ in 0..cells.len() {
        match cells[root as usize].error {
            Some(CellError::Upstream(b)) if b != root => root = b,
            _ => break,
        }
    }
    let r = &cells[root as usize];
    let place = format!("{}:{}", sources.get(r.file).name, r.line);
    let own = diags.iter().find(|d| {
        d.is_error()
            && d.span
                .is_some_and(|s| s.file == r.stmt_span.file && s.start >= r.stmt_span.start && s.end <= r.stmt_span.end)
    });
    let what = match own {
        Some(d) => format!("{} ({place})", d.message),
        None => format!("an error at {place}"),
    };
    let message = if root == id {
        format!(
            "`{}` has no value: its formula has {}",
            cell.name,
            if own.is_some() {
                format!("an error: {what}")
            } else {
                what.clone()
            }
        )
    } else {
        format!(
            "`{}` has no value: it uses `{}`, whose formula has {}",
            cell.name,
            r.name,
            if own.is_some() {
                format!("an error: {what}")
            } else {
                what.clone()
            }
        )
    };
    let mut d = match at {
        Some(at) => {
            Diagnostic::error(ErrorCode::BrokenCell, at, message).with_label(format!("`{}` has an error", cell.name))
        }
        None => Diagnostic::unplaced(ErrorCode::BrokenCell, message),
    };
    if at.is_some_and(|a| a.file != r.stmt_span.file || a.start < r.stmt_span.start || a.end > r.stmt_span.end) {
        d = d.with_secondary(r.stmt_span, "the error is on this line");
    }
    Some(d.with_hint(format!("correct `{}` first", r.name)))
}

/// A value while lowering.
#[derive(Clone, Debug)]
pub(super) enum Val {
    Scalar(Operand, Quantity),
    Record(Vec<(&'static str, Operand, Quantity)>),
}

pub(super) struct Lowerer<'a> {
    pub(super) cells: &'a [Cell],
    pub(super) by_name: &'a NameMap,
    pub(super) sources: &'a SourceMap,
    pub(super) ctx: Ctx,
    /// The cell being lowered, and the searches met so far.
    pub(super) current: CellId,
    pub(super) searches: &'a std::cell::RefCell<Vec<lower_search::PendingSearch>>,
    /// Networks lowered so far (their index is `Op::Network`'s).
    pub(super) networks: &'a std::cell::RefCell<Vec<crate::network::NetProgram>>,
}

type R<T> = Result<T, Diagnostic>;

/// `name(a: Ω, b: Ω)` for messages and the listing.
pub fn signature(f: &funcs::Builtin) -> String {
    let ps: Vec<String> = f.params.iter().map(|p| format!("{}: {}", p.name, p.unit)).collect();
    let dots = if f.variadic { ", …" } else { "" };
    format!("{}({}{})", f.name, ps.join(", "), dots)
}
