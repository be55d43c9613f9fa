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

use num_complex::Complex64 as C64;

use super::ops::{Instr, Op};
use super::program::{Emitter, Operand, Program, SlotSpace, TEMP_FLAG};
use crate::diag::{did_you_mean, Diagnostic, ErrorCode, FileId, SourceMap, Span};
use crate::funcs::{self, Ctx, Impl, Shape};
use crate::sheet::Sheet;
use crate::syntax::ast::*;
use crate::units::kind::{kind_of_product, kind_of_quotient, kind_of_sum};
use crate::units::{Dim, Kind, Quantity, Unit};

mod lower_search;

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
}

impl Model {
    pub fn has_errors(&self) -> bool {
        self.diagnostics.iter().any(Diagnostic::is_error)
    }
    pub fn cell(&self, name: &str) -> Option<&Cell> {
        self.by_name.get(name).map(|&id| &self.cells[id as usize])
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
}

/// A value while lowering.
#[derive(Clone, Debug)]
pub(super) enum Val {
    Scalar(Operand, Quantity),
    Record(Vec<(&'static str, Operand, Quantity)>),
}

/// Sheets with at least this many cells find their dependencies in
/// parallel.
const PARALLEL_DEPS_FROM: usize = 4096;

struct Pending<'a> {
    expr: Option<&'a Expr>,
    check: Option<&'a Check>,
}

/// Compile a sheet. Always returns a model; `model.diagnostics` holds every
/// error, and cells with errors have `error` set.
pub fn compile(sheet: &Sheet) -> Model {
    compile_limited(sheet, MAX_CELLS)
}

/// `compile` with a different cap on the number of cells (for tests of the
/// limit).
pub fn compile_limited(sheet: &Sheet, max_cells: usize) -> Model {
    let mut diags = sheet.errors.clone();
    // Sized once: on a big sheet, growing these a doubling at a time
    // copied every cell again and rehashed every name.
    let lines = sheet.stmts.len().min(max_cells.saturating_add(1));
    let mut cells: Vec<Cell> = Vec::with_capacity(lines);
    let mut pending: Vec<Pending> = Vec::with_capacity(lines);
    let mut by_name = NameMap::with_capacity_and_hasher(lines, Default::default());
    let mut meta = Meta::default();
    let mut ctx = Ctx::default();
    let mut amplitude_seen: Option<Span> = None;

    for stmt in &sheet.stmts {
        match &stmt.kind {
            StmtKind::Def(d) => {
                let name = &d.name.name;
                if RESERVED.contains(&name.as_str()) {
                    diags.push(
                        Diagnostic::error(
                            ErrorCode::ReservedName,
                            d.name.span,
                            format!("`{name}` is a reserved name"),
                        )
                        .with_label("cannot be a cell name")
                        .with_hint(
                            "`j` is the imaginary unit, `pi` is π and `check` starts a check; choose another name",
                        ),
                    );
                    continue;
                }
                if let Some(&first) = by_name.get(name) {
                    let f = &cells[first as usize];
                    diags.push(
                        Diagnostic::error(
                            ErrorCode::DuplicateCell,
                            d.name.span,
                            format!("`{name}` is defined twice"),
                        )
                        .with_label("defined again here")
                        .with_secondary(f.name_span, "first defined here")
                        .with_hint("each name has one formula; rename one of them or delete a line"),
                    );
                    continue;
                }
                if cells.len() >= max_cells {
                    diags.push(
                        Diagnostic::error(
                            ErrorCode::TooManyCells,
                            d.name.span,
                            format!("more than {max_cells} cells in one sheet"),
                        )
                        .with_hint("split the sheet into smaller ones"),
                    );
                    break;
                }
                let id = cells.len() as CellId;
                by_name.insert(name.clone(), id);
                let mut cell = new_cell(
                    &sheet.sources,
                    stmt,
                    name.clone(),
                    Role::Def,
                    d.name.span,
                    &d.expr,
                    d.display.as_ref(),
                );
                if cell.display.is_none() {
                    // An input written as a number with a unit is shown in
                    // the unit the user wrote (1500 kVA stays 1500 kVA).
                    cell.display = literal_unit(&d.expr);
                }
                cells.push(cell);
                pending.push(Pending {
                    expr: Some(&d.expr),
                    check: None,
                });
            }
            StmtKind::Check(c) => {
                let name = format!("check:{}", stmt.line);
                let mut cell = new_cell(&sheet.sources, stmt, name, Role::Check, stmt.span, &c.lhs, None);
                cell.formula = sheet.sources.slice(stmt.span).to_string();
                // A check of a named cell shows its values in that cell's
                // display unit.
                if let ExprKind::Name(id) = &c.lhs.kind {
                    if let Some(&target) = by_name.get(&id.name) {
                        cell.display = cells[target as usize].display.clone();
                    }
                }
                cells.push(cell);
                pending.push(Pending {
                    expr: None,
                    check: Some(c),
                });
            }
            StmtKind::Directive(dir) => {
                directive(dir, stmt.span, &mut meta, &mut ctx, &mut amplitude_seen, &mut diags);
            }
            StmtKind::Expr(e) => {
                diags.push(
                    Diagnostic::error(
                        ErrorCode::BareExpression,
                        e.span,
                        "a sheet line must give the value a name",
                    )
                    .with_label("this value has no name")
                    .with_hint("write `name = expression`, or `check a ~= b +- 1%` to compare two values"),
                );
            }
        }
    }

    check_note_targets(&meta, &by_name, &mut diags);

    if cells.is_empty() && diags.is_empty() {
        let main = sheet.main;
        diags.push(
            Diagnostic::error(
                ErrorCode::EmptySheet,
                Span::new(main, 0, 0),
                "the sheet defines nothing",
            )
            .with_hint("a sheet is lines of `name = expression`, e.g. `Vs = 480 V`"),
        );
    }

    // Dependencies: each cell's on its own, so a big sheet's are found on
    // every core (the lookups miss the cache; small sheets stay on this
    // thread).
    let deps_of = |p: &Pending| {
        let mut deps = Vec::new();
        let mut visit = |id: &Ident| {
            if let Some(&d) = by_name.get(&id.name) {
                if !deps.contains(&d) {
                    deps.push(d);
                }
            }
        };
        if let Some(e) = p.expr {
            e.for_each_name(&mut visit);
        }
        if let Some(c) = p.check {
            c.lhs.for_each_name(&mut visit);
            c.rhs.for_each_name(&mut visit);
            if let Tolerance::Absolute(t) = &c.tol {
                t.for_each_name(&mut visit);
            }
        }
        deps
    };
    if pending.len() >= PARALLEL_DEPS_FROM {
        use rayon::prelude::*;
        let found: Vec<Vec<CellId>> = pending.par_iter().with_min_len(1024).map(deps_of).collect();
        for (cell, deps) in cells.iter_mut().zip(found) {
            cell.deps = deps;
        }
    } else {
        for (cell, p) in cells.iter_mut().zip(&pending) {
            cell.deps = deps_of(p);
        }
    }

    let n = cells.len();
    let mut dependents: Vec<Vec<CellId>> = vec![Vec::new(); n];
    for (i, c) in cells.iter().enumerate() {
        for &d in &c.deps {
            dependents[d as usize].push(i as CellId);
        }
    }

    let topo = topo_order(&cells, &dependents);
    report_cycles(&mut cells, &topo, &mut diags, &sheet.sources);

    // Lower in topological order.
    let mut slots = SlotSpace::default();
    let mut code: Vec<Instr> = Vec::new();
    let mut call_args: Vec<u32> = Vec::new();
    let mut max_temps = 0u32;
    let pending_searches = std::cell::RefCell::new(Vec::new());
    let mut order = Vec::with_capacity(n);
    // Which cells have an error, packed: checking a cell's dependencies
    // here then costs no cache miss per dependency on a big sheet.
    let mut failed: Vec<bool> = cells.iter().map(|c| c.error.is_some()).collect();
    for &id in &topo {
        let i = id as usize;
        if failed[i] {
            continue;
        }
        if let Some(&bad) = cells[i].deps.iter().find(|&&d| failed[d as usize]) {
            cells[i].error = Some(CellError::Upstream(bad));
            failed[i] = true;
            continue;
        }
        let start = code.len() as u32;
        let mut em = Emitter {
            code: &mut code,
            call_args: &mut call_args,
            slots: &mut slots,
            next_temp: 0,
            peak: ctx.peak,
        };
        let lw = Lowerer {
            cells: &cells,
            by_name: &by_name,
            sources: &sheet.sources,
            ctx,
            current: id,
            searches: &pending_searches,
        };
        let result = match (&pending[i].expr, &pending[i].check) {
            (Some(e), _) => lw.lower_def(&mut em, e, &cells[i]),
            (None, Some(c)) => lw.lower_check(&mut em, c).map(|(v, tol)| {
                cells[i].tol = Some(tol);
                v
            }),
            _ => unreachable!(),
        };
        max_temps = max_temps.max(em.next_temp);
        match result {
            Err(d) => {
                code.truncate(start as usize);
                cells[i].error = Some(CellError::Own);
                failed[i] = true;
                diags.push(d);
            }
            Ok(val) => {
                let cell = &mut cells[i];
                place_result(cell, val, &mut slots, &mut code, start);
                cell.code = start..code.len() as u32;
                // A record (several fields) is never an input: one value
                // cannot be set into it.
                cell.input = cell.role == Role::Def && cell.deps.is_empty() && cell.width == 1;
                // A search depends on what it reads, not on the input it
                // varies (see lower_search).
                if let Some(p) = pending_searches.borrow().last().filter(|p| p.cell == id) {
                    cell.deps = p.frontier.clone();
                }
                order.push(id);
            }
        }
    }

    // Move temporaries to the shared region after every other slot.
    let temp_base = slots.alloc(max_temps.max(1));
    let fix = |s: &mut u32| {
        if *s & TEMP_FLAG != 0 {
            *s = temp_base + (*s & !TEMP_FLAG);
        }
    };
    for ins in &mut code {
        fix(&mut ins.dst);
        if !matches!(ins.op, Op::Call(_)) {
            fix(&mut ins.a);
            if !ins.op.is_unary() {
                fix(&mut ins.b);
            }
        }
    }
    // Call argument slots (the width entry before them is never flagged).
    for a in &mut call_args {
        fix(a);
    }

    let mut rank = vec![u32::MAX; n];
    for (r, &id) in order.iter().enumerate() {
        rank[id as usize] = r as u32;
    }

    // Searches: gather each one's sub-program, and make its cell depend on
    // what the search reads rather than on the input it varies.
    let searches = lower_search::finish(&cells, pending_searches.into_inner(), &code, &mut slots, temp_base);
    if !searches.is_empty() {
        for d in dependents.iter_mut() {
            d.clear();
        }
        for (i, c) in cells.iter().enumerate() {
            for &d in &c.deps {
                dependents[d as usize].push(i as CellId);
            }
        }
    }

    let mut model = Model {
        sources: sheet.sources.clone(),
        cells,
        order,
        rank,
        dependents,
        by_name,
        program: Program {
            code,
            call_args,
            init: slots.init,
            temp_base,
            peak: ctx.peak,
            searches,
        },
        meta,
        ctx,
        diagnostics: diags,
    };
    if !model.meta.sweeps.is_empty() {
        let more = crate::sweep::declared::check(&model);
        model.diagnostics.extend(more);
    }
    model
}

pub(super) fn new_cell(
    sources: &SourceMap,
    stmt: &Stmt,
    name: String,
    role: Role,
    name_span: Span,
    expr: &Expr,
    display: Option<&UnitRef>,
) -> Cell {
    Cell {
        name,
        role,
        file: name_span.file,
        line: stmt.line,
        name_span,
        stmt_span: stmt.span,
        formula: sources.slice(expr.span).to_string(),
        shape: None,
        error: None,
        slot: 0,
        width: 0,
        display: display.map(|u| u.unit.clone()),
        deps: Vec::new(),
        code: 0..0,
        input: false,
        comment: stmt.comment.clone(),
        tol: None,
    }
}

/// The unit of a formula that is one number (or bracket) with a unit,
/// possibly negated.
pub(super) fn literal_unit(e: &Expr) -> Option<Unit> {
    match &e.kind {
        ExprKind::Number { unit: Some(u), .. } | ExprKind::Paren(_, Some(u)) => Some(u.unit.clone()),
        ExprKind::Unary(_, inner) => literal_unit(inner),
        _ => None,
    }
}

/// Write a cell's value into its own slots.
fn place_result(cell: &mut Cell, val: Val, slots: &mut SlotSpace, code: &mut Vec<Instr>, start: u32) {
    let parts: Vec<Operand> = match &val {
        Val::Scalar(o, _) => vec![*o],
        Val::Record(f) => f.iter().map(|(_, o, _)| *o).collect(),
    };
    let width = parts.len() as u32;
    let base = slots.alloc(width);
    cell.slot = base;
    cell.width = width;
    for (k, part) in parts.into_iter().enumerate() {
        let dst = base + k as u32;
        match part {
            Operand::Const(c) => slots.init[dst as usize] = c,
            Operand::Slot(s) => {
                // A scalar result computed by this cell's last instruction
                // is written straight into the cell's slot.
                let last = code.len();
                if width == 1
                    && last > start as usize
                    && code[last - 1].dst == s
                    && s & TEMP_FLAG != 0
                    && !matches!(code[last - 1].op, Op::Call(_))
                {
                    code[last - 1].dst = dst;
                } else {
                    code.push(Instr {
                        op: Op::Copy,
                        dst,
                        a: s,
                        b: 0,
                    });
                }
            }
        }
    }
    cell.shape = Some(match val {
        Val::Scalar(_, q) => Shape::Scalar(q),
        Val::Record(f) => Shape::Record(f.into_iter().map(|(n, _, q)| (n, q)).collect()),
    });
}

/// Every `@note` must name a cell of the sheet.
fn check_note_targets(meta: &Meta, by_name: &NameMap, diags: &mut Vec<Diagnostic>) {
    for n in &meta.notes {
        let Some(cell) = &n.cell else { continue };
        if by_name.contains_key(cell) {
            continue;
        }
        let mut d = Diagnostic::error(
            ErrorCode::UnknownName,
            n.span,
            format!("`@note` is about `{cell}`, which the sheet does not define"),
        )
        .with_label("no cell of this name");
        d = match did_you_mean(cell, by_name.keys().map(String::as_str)) {
            Some(s) => d.with_hint(format!("did you mean `{s}`?")),
            None => d.with_hint("write `@note CELL \"text\"` for a cell, or `@note \"text\"` for the whole sheet"),
        };
        diags.push(d);
    }
}

fn directive(
    dir: &Directive,
    stmt_span: Span,
    meta: &mut Meta,
    ctx: &mut Ctx,
    seen: &mut Option<Span>,
    diags: &mut Vec<Diagnostic>,
) {
    let name = dir.name.name.as_str();
    let whole = dir.args.first().map_or(dir.name.span, |a| {
        dir.name.span.to(dir.args.last().map_or(a.span, |l| l.span))
    });
    match name {
        "amplitude" => {
            let arg = dir.args.first().map(|a| a.text.as_str());
            match (arg, dir.args.len()) {
                (Some("rms"), 1) => ctx.peak = false,
                (Some("peak"), 1) => ctx.peak = true,
                _ => {
                    diags.push(
                        Diagnostic::error(ErrorCode::BadDirective, whole, "`@amplitude` takes `rms` or `peak`")
                            .with_hint("phasors are RMS unless the sheet says `@amplitude peak`"),
                    );
                    return;
                }
            }
            if let Some(prev) = seen.replace(whole) {
                diags.push(
                    Diagnostic::error(
                        ErrorCode::BadDirective,
                        whole,
                        "the amplitude convention is stated twice",
                    )
                    .with_secondary(prev, "first stated here"),
                );
            }
        }
        "note" => match dir.args.as_slice() {
            [text] if text.quoted => meta.notes.push(Note {
                cell: None,
                text: text.text.clone(),
                span: text.span,
            }),
            [cell, text @ ..] if !cell.quoted && !text.is_empty() && text.iter().all(|t| t.quoted) => {
                let words: Vec<&str> = text.iter().map(|t| t.text.as_str()).collect();
                meta.notes.push(Note {
                    cell: Some(cell.text.clone()),
                    text: words.join(" "),
                    span: cell.span,
                });
            }
            _ => diags.push(
                Diagnostic::error(ErrorCode::BadDirective, stmt_span, "`@note` takes a cell name and a text in quotes")
                    .with_hint("e.g. @note Zc \"values from the library sheet, conductor at 90 °C\"; a note on the whole sheet is @note \"text\""),
            ),
        },
        "sweep" => match (dir.args.first(), dir.args.last()) {
            (Some(a), Some(b)) => meta.sweeps.push(a.span.to(b.span)),
            _ => diags.push(
                Diagnostic::error(
                    ErrorCode::BadDirective,
                    whole,
                    "`@sweep` needs a range and cells to show",
                )
                .with_hint("e.g. @sweep C = 0 .. 600 µF, 121 points : Vbus, pf"),
            ),
        },
        k if META_KEYS.contains(&k) => {
            if dir.args.is_empty() {
                diags.push(
                    Diagnostic::error(ErrorCode::BadDirective, whole, format!("`@{k}` needs a value"))
                        .with_hint(format!("e.g. @{k} \"text\"")),
                );
                return;
            }
            let text: Vec<&str> = dir.args.iter().map(|a| a.text.as_str()).collect();
            meta.entries.push((k.to_string(), text.join(" ")));
        }
        _ => {
            let mut known: Vec<&str> = META_KEYS.to_vec();
            known.extend(["amplitude", "note", "include", "sweep"]);
            let mut d = Diagnostic::error(
                ErrorCode::UnknownDirective,
                dir.name.span,
                format!("unknown directive `@{name}`"),
            );
            d = match did_you_mean(name, known.iter().copied()) {
                Some(s) => d.with_hint(format!("did you mean `@{s}`?")),
                None => d.with_hint(format!(
                    "directives are: {}",
                    known.iter().map(|k| format!("@{k}")).collect::<Vec<_>>().join(", ")
                )),
            };
            diags.push(d);
        }
    }
}

/// Cells in an order where each comes after the cells it uses (Kahn's
/// algorithm), taking the earliest line whenever several are ready: a
/// sheet written top-down is compiled in the order of its lines, so the
/// compiler reads its cells and trees in the order they lie in memory and
/// the program follows the sheet. Cells in or behind a cycle are left out.
/// Iterative, so a chain of any length costs no stack.
fn topo_order(cells: &[Cell], dependents: &[Vec<CellId>]) -> Vec<CellId> {
    use std::cmp::Reverse;
    let n = cells.len();
    let mut indeg: Vec<u32> = cells.iter().map(|c| c.deps.len() as u32).collect();
    let mut ready: std::collections::BinaryHeap<Reverse<CellId>> = (0..n as CellId)
        .filter(|&i| indeg[i as usize] == 0)
        .map(Reverse)
        .collect();
    let mut out = Vec::with_capacity(n);
    while let Some(Reverse(i)) = ready.pop() {
        out.push(i);
        for &d in &dependents[i as usize] {
            indeg[d as usize] -= 1;
            if indeg[d as usize] == 0 {
                ready.push(Reverse(d));
            }
        }
    }
    out
}

/// Every cell not in the topological order is on a cycle or depends on
/// one. Report each cycle once, whole: `a → b → a`.
fn report_cycles(cells: &mut [Cell], topo: &[CellId], diags: &mut Vec<Diagnostic>, sources: &SourceMap) {
    let n = cells.len();
    if topo.len() == n {
        return;
    }
    let mut done = vec![false; n];
    for &i in topo {
        done[i as usize] = true;
    }
    // state: 0 unvisited, 1 on the current walk, 2 finished
    let mut state = vec![0u8; n];
    for start in 0..n {
        if done[start] || state[start] != 0 {
            continue;
        }
        let mut path: Vec<usize> = Vec::new();
        let mut cur = start;
        loop {
            if state[cur] == 2 {
                break;
            }
            if state[cur] == 1 {
                let at = path.iter().position(|&p| p == cur).unwrap_or(0);
                let cyc: Vec<usize> = path[at..].to_vec();
                // A long loop is named by its first and last few cells.
                const SHOWN: usize = 8;
                let name = |c: usize| cells[c].name.as_str();
                let mut names: Vec<String> = Vec::new();
                if cyc.len() <= 2 * SHOWN {
                    names.extend(cyc.iter().map(|&c| name(c).to_string()));
                } else {
                    names.extend(cyc[..SHOWN].iter().map(|&c| name(c).to_string()));
                    names.push(format!("… {} more …", cyc.len() - 2 * SHOWN));
                    names.extend(cyc[cyc.len() - SHOWN..].iter().map(|&c| name(c).to_string()));
                }
                names.push(cells[cur].name.clone());
                let first = cyc[0];
                let mut d = Diagnostic::error(
                    ErrorCode::Cycle,
                    cells[first].name_span,
                    format!("circular definition: {}", names.join(" → ")),
                )
                .with_label(format!("`{}` depends on itself through this loop", cells[first].name));
                for &c in cyc[1..].iter().take(SHOWN) {
                    let line = sources.line_of(cells[c].name_span);
                    d = d.with_secondary(
                        cells[c].name_span,
                        format!("`{}` (line {line}) is part of the loop", cells[c].name),
                    );
                }
                d = d.with_hint("a cell cannot depend on itself; give one of these an input value");
                diags.push(d);
                for &c in &cyc {
                    cells[c].error = Some(CellError::Own);
                }
                break;
            }
            state[cur] = 1;
            path.push(cur);
            // follow a dependency that is itself unfinished
            match cells[cur]
                .deps
                .iter()
                .map(|&d| d as usize)
                .find(|&d| !done[d] && state[d] != 2)
            {
                Some(next) => cur = next,
                None => break,
            }
        }
        for p in path {
            state[p] = 2;
        }
    }
    // Whatever is left depends on a cycle.
    for i in 0..n {
        if !done[i] && cells[i].error.is_none() {
            let bad = cells[i]
                .deps
                .iter()
                .copied()
                .find(|&d| !done[d as usize])
                .unwrap_or(i as CellId);
            cells[i].error = Some(CellError::Upstream(bad));
        }
    }
}

pub(super) struct Lowerer<'a> {
    pub(super) cells: &'a [Cell],
    pub(super) by_name: &'a NameMap,
    pub(super) sources: &'a SourceMap,
    pub(super) ctx: Ctx,
    /// The cell being lowered, and the searches met so far.
    pub(super) current: CellId,
    pub(super) searches: &'a std::cell::RefCell<Vec<lower_search::PendingSearch>>,
}

type R<T> = Result<T, Diagnostic>;

impl Lowerer<'_> {
    pub(super) fn lower_def(&self, em: &mut Emitter, e: &Expr, cell: &Cell) -> R<Val> {
        let v = self.expr(em, e)?;
        let Some(u) = &cell.display else { return Ok(v) };
        let display_span = self.display_span(cell);
        match v {
            Val::Scalar(o, q) => {
                if q.dim != u.q.dim {
                    return Err(Diagnostic::error(
                        ErrorCode::DimensionMismatch,
                        display_span,
                        format!(
                            "`{}` is {}, but it is to be shown in {}",
                            cell.name,
                            q.describe(),
                            u.symbol
                        ),
                    )
                    .with_label(format!("{} is {}", u.symbol, u.q.describe()))
                    .with_secondary(e.span, "the formula gives this"));
                }
                if u.q.kind == Kind::Angle && q.kind != Kind::Angle {
                    return Err(Diagnostic::error(
                        ErrorCode::AngleAmbiguous,
                        display_span,
                        "a plain number shown as an angle is ambiguous",
                    )
                    .with_hint("write the angle with its unit in the formula: `30°` or `0.52 rad`"));
                }
                let kind = if u.q.kind != Kind::Plain || q.kind == Kind::Angle {
                    u.q.kind
                } else {
                    q.kind
                };
                Ok(Val::Scalar(o, Quantity::new(q.dim, kind)))
            }
            Val::Record(_) => Err(Diagnostic::error(
                ErrorCode::RecordAsValue,
                display_span,
                "a record cell has no single display unit",
            )
            .with_hint("show each field in its own cell: `x = rec.field [unit]`")),
        }
    }

    fn display_span(&self, cell: &Cell) -> Span {
        // The display unit is the last bracket of the statement.
        let text = self.sources.slice(cell.stmt_span);
        match text.rfind('[') {
            Some(i) => Span::new(
                cell.stmt_span.file,
                cell.stmt_span.start as usize + i,
                cell.stmt_span.end as usize,
            ),
            None => cell.stmt_span,
        }
    }

    fn lower_check(&self, em: &mut Emitter, c: &Check) -> R<(Val, TolSpec)> {
        let (l, ql) = self.scalar(em, &c.lhs)?;
        let (r, qr) = self.scalar(em, &c.rhs)?;
        if ql.dim != qr.dim {
            return Err(Diagnostic::error(
                ErrorCode::DimensionMismatch,
                c.rhs.span,
                format!("cannot compare {} with {}", ql.describe(), qr.describe()),
            )
            .with_label(qr.describe())
            .with_secondary(c.lhs.span, ql.describe()));
        }
        kind_of_sum(ql.kind, qr.kind, ql.dim).map_err(|m| {
            Diagnostic::error(
                ErrorCode::AngleAmbiguous,
                c.rhs.span,
                format!("cannot compare these: {m}"),
            )
            .with_hint("give the angle its unit: `45°` or `0.785 rad`")
        })?;
        let (t, tol) = match &c.tol {
            Tolerance::Relative(f, span) => {
                if !(f.is_finite() && *f >= 0.0) {
                    return Err(Diagnostic::error(
                        ErrorCode::BadTolerance,
                        *span,
                        "a tolerance must be zero or more",
                    ));
                }
                (em.konst(*f, 0.0), TolSpec::Relative(*f))
            }
            Tolerance::Absolute(te) => {
                let (t, qt) = self.scalar(em, te)?;
                if qt.dim != ql.dim {
                    let hint = if qt.dim.is_none() {
                        format!(
                            "give the tolerance a unit ({}) or make it relative (`1%`)",
                            crate::units::format::base_symbol(ql)
                        )
                    } else {
                        "the tolerance has the unit of the values compared, or is relative (`1%`)".to_string()
                    };
                    return Err(Diagnostic::error(
                        ErrorCode::BadTolerance,
                        te.span,
                        format!(
                            "the tolerance is {}, but the values compared are {}",
                            qt.describe(),
                            ql.describe()
                        ),
                    )
                    .with_hint(hint));
                }
                (t, TolSpec::Absolute)
            }
        };
        Ok((Val::Record(vec![("lhs", l, ql), ("rhs", r, qr), ("tol", t, ql)]), tol))
    }

    fn scalar(&self, em: &mut Emitter, e: &Expr) -> R<(Operand, Quantity)> {
        match self.expr(em, e)? {
            Val::Scalar(o, q) => Ok((o, q)),
            Val::Record(fields) => {
                let names: Vec<&str> = fields.iter().map(|f| f.0).collect();
                Err(
                    Diagnostic::error(ErrorCode::RecordAsValue, e.span, "this is a record, not a single value")
                        .with_label(format!("fields: {}", names.join(", ")))
                        .with_hint(format!(
                            "pick a field, e.g. `{}.{}`",
                            self.sources.slice(e.span),
                            names[0]
                        )),
                )
            }
        }
    }

    /// Lower an expression. Trees are at most `LIMITS.max_expr_depth`
    /// deep, but each level takes several frames, and a compile may run on
    /// a thread with a small stack (a batch worker, a test, a library
    /// caller); `stacker` grows the stack on the heap when it runs low.
    pub(super) fn expr(&self, em: &mut Emitter, e: &Expr) -> R<Val> {
        stacker::maybe_grow(128 * 1024, 4 * 1024 * 1024, || self.expr_inner(em, e))
    }

    fn expr_inner(&self, em: &mut Emitter, e: &Expr) -> R<Val> {
        match &e.kind {
            ExprKind::Number { value, imag, unit } => {
                let c = if *imag {
                    C64::new(0.0, *value)
                } else {
                    C64::new(*value, 0.0)
                };
                match unit {
                    None => Ok(Val::Scalar(Operand::Const(c), Quantity::PLAIN)),
                    Some(u) => Ok(Val::Scalar(Operand::Const(c * u.unit.factor), u.unit.q)),
                }
            }
            ExprKind::Paren(inner, unit) => {
                let v = self.expr(em, inner)?;
                let Some(u) = unit else { return Ok(v) };
                let (o, q) = match v {
                    Val::Scalar(o, q) => (o, q),
                    Val::Record(_) => return self.scalar(em, inner).map(|_| unreachable!()),
                };
                if !q.is_plain_number() {
                    return Err(Diagnostic::error(
                        ErrorCode::UnitNotAllowed,
                        u.span,
                        format!("a unit can only follow a plain number, and this is {}", q.describe()),
                    )
                    .with_secondary(inner.span, q.describe())
                    .with_hint("the bracket already has a unit; to convert, divide: `x / 1 kV`"));
                }
                let f = em.konst(u.unit.factor, 0.0);
                Ok(Val::Scalar(em.bin(Op::Mul, o, f), u.unit.q))
            }
            ExprKind::Name(id) => self.name(id),
            ExprKind::Field(base, field) => {
                let v = self.expr(em, base)?;
                match v {
                    Val::Record(fields) => match fields.iter().find(|f| f.0 == field.name) {
                        Some(&(_, o, q)) => Ok(Val::Scalar(o, q)),
                        None => {
                            let names: Vec<&str> = fields.iter().map(|f| f.0).collect();
                            let mut d = Diagnostic::error(
                                ErrorCode::UnknownField,
                                field.span,
                                format!("no field `{}`", field.name),
                            )
                            .with_label(format!("fields are: {}", names.join(", ")));
                            if let Some(s) = did_you_mean(&field.name, names.iter().copied()) {
                                d = d.with_hint(format!("did you mean `.{s}`?"));
                            }
                            Err(d)
                        }
                    },
                    Val::Scalar(_, q) => Err(Diagnostic::error(
                        ErrorCode::NotARecord,
                        field.span,
                        format!(
                            "`.{}` asks for a field, but this is a single value ({})",
                            field.name,
                            q.describe()
                        ),
                    )
                    .with_secondary(base.span, "a single value")),
                }
            }
            ExprKind::Call { func, args } => self.call(em, e, func, args),
            ExprKind::Unary(op, inner) => {
                let (o, q) = self.scalar(em, inner)?;
                Ok(match op {
                    UnOp::Pos => Val::Scalar(o, q),
                    UnOp::Neg => Val::Scalar(em.un(Op::Neg, o), q),
                })
            }
            ExprKind::Binary(op, a, b) => self.binary(em, e, *op, a, b),
            ExprKind::Search(s) => self.search(em, e, s),
        }
    }

    fn name(&self, id: &Ident) -> R<Val> {
        match id.name.as_str() {
            "pi" => {
                return Ok(Val::Scalar(
                    Operand::Const(C64::new(std::f64::consts::PI, 0.0)),
                    Quantity::PLAIN,
                ))
            }
            "j" => return Ok(Val::Scalar(Operand::Const(C64::new(0.0, 1.0)), Quantity::PLAIN)),
            _ => {}
        }
        let Some(&cid) = self.by_name.get(&id.name) else {
            let mut d = Diagnostic::error(ErrorCode::UnknownName, id.span, format!("`{}` is not defined", id.name))
                .with_label("no cell of this name");
            let names = self
                .cells
                .iter()
                .filter(|c| c.role == Role::Def)
                .map(|c| c.name.as_str());
            if let Some(s) = did_you_mean(&id.name, names.chain(["pi", "j"])) {
                d = d.with_hint(format!("did you mean `{s}`?"));
            } else if funcs::find(&id.name).is_some() {
                d = d.with_hint(format!("`{0}` is a function: call it as `{0}(…)`", id.name));
            } else if crate::units::lookup_unit(&id.name).is_ok() {
                d = d.with_hint(format!("`{0}` is a unit; a unit follows a number: `1 {0}`", id.name));
            } else {
                d = d.with_hint(format!("define it on a line of its own: `{} = …`", id.name));
            }
            return Err(d);
        };
        let c = &self.cells[cid as usize];
        match &c.shape {
            Some(Shape::Scalar(q)) => Ok(Val::Scalar(Operand::Slot(c.slot), *q)),
            Some(Shape::Record(fields)) => Ok(Val::Record(
                fields
                    .iter()
                    .enumerate()
                    .map(|(k, &(n, q))| (n, Operand::Slot(c.slot + k as u32), q))
                    .collect(),
            )),
            None => unreachable!("cells with errors are not lowered against"),
        }
    }

    fn call(&self, em: &mut Emitter, whole: &Expr, func: &Ident, args: &[Expr]) -> R<Val> {
        let Some((fid, f)) = funcs::find(&func.name) else {
            let names = funcs::library().iter().map(|f| f.name);
            let mut d = Diagnostic::error(
                ErrorCode::UnknownFunction,
                func.span,
                format!("unknown function `{}`", func.name),
            )
            .with_label("no function of this name");
            d = match did_you_mean(&func.name, names) {
                Some(s) => d.with_hint(format!("did you mean `{s}`? (`ohmsheet functions` lists them all)")),
                None => d.with_hint("`ohmsheet functions` lists every function"),
            };
            return Err(d);
        };
        let np = f.params.len();
        let count_ok = if f.variadic { args.len() >= np } else { args.len() == np };
        if !count_ok {
            let sig = signature(f);
            let want = if f.variadic {
                format!("at least {np}")
            } else {
                np.to_string()
            };
            return Err(Diagnostic::error(
                ErrorCode::FunctionArgs,
                whole.span,
                format!(
                    "`{}` takes {want} argument{}, but {} {} given",
                    f.name,
                    if np == 1 { "" } else { "s" },
                    args.len(),
                    if args.len() == 1 { "was" } else { "were" }
                ),
            )
            .with_label(format!("{sig}: {}", f.summary)));
        }
        let mut ops = Vec::with_capacity(args.len());
        let mut qs = Vec::with_capacity(args.len());
        for a in args {
            let (o, q) = self.scalar(em, a)?;
            ops.push(o);
            qs.push(q);
        }
        let shape = (f.ty)(&qs, &self.ctx).map_err(|ae| {
            let span = ae.arg.and_then(|i| args.get(i)).map_or(whole.span, |a| a.span);
            Diagnostic::error(ErrorCode::FunctionArgs, span, format!("{}: {}", f.name, ae.message))
                .with_label(ae.arg.map_or_else(String::new, |i| qs[i].describe()))
                .with_hint(format!("{}: {}", signature(f), f.summary))
        })?;
        let outs = match &f.imp {
            Impl::Lower(lower) => lower(em, &ops, &qs),
            Impl::Scalar(_) => em.call(fid, &ops, shape.width()),
        };
        Ok(match shape {
            Shape::Scalar(q) => Val::Scalar(outs[0], q),
            Shape::Record(fields) => Val::Record(fields.into_iter().zip(outs).map(|((n, q), o)| (n, o, q)).collect()),
        })
    }

    fn binary(&self, em: &mut Emitter, whole: &Expr, op: BinOp, a: &Expr, b: &Expr) -> R<Val> {
        let (x, qa) = self.scalar(em, a)?;
        let (y, qb) = self.scalar(em, b)?;
        match op {
            BinOp::Add | BinOp::Sub => {
                if qa.dim != qb.dim {
                    let verb = if op == BinOp::Add { "add" } else { "subtract" };
                    let mut d = Diagnostic::error(
                        ErrorCode::DimensionMismatch,
                        whole.span,
                        format!("cannot {verb} {} and {}", qa.describe(), qb.describe()),
                    )
                    .with_secondary(a.span, qa.describe())
                    .with_label(qb.describe());
                    d.span = Some(b.span);
                    // `6 + j10 Ω`: the unit binds to the number before it.
                    if qa.is_plain_number() && matches!(b.kind, ExprKind::Number { unit: Some(_), .. }) {
                        d = d.with_hint(format!(
                            "a unit applies only to the number just before it; for the whole sum write `({}) {}`",
                            self.sources.slice(whole.span).rsplit_once(' ').map_or("", |(l, _)| l),
                            self.sources.slice(whole.span).rsplit_once(' ').map_or("", |(_, r)| r),
                        ));
                    } else {
                        d = d.with_hint("both sides of + and - must have the same dimension");
                    }
                    return Err(d);
                }
                let k = kind_of_sum(qa.kind, qb.kind, qa.dim).map_err(|m| {
                    Diagnostic::error(ErrorCode::AngleAmbiguous, whole.span, m.to_string())
                        .with_hint("give the number its unit: `30°`, `0.5 rad`, `60 Hz` or `377 rad/s`")
                })?;
                let o = em.bin(if op == BinOp::Add { Op::Add } else { Op::Sub }, x, y);
                Ok(Val::Scalar(o, Quantity::new(qa.dim, k)))
            }
            BinOp::Mul | BinOp::Div => {
                let dim = if op == BinOp::Mul {
                    qa.dim.times(qb.dim)
                } else {
                    qa.dim.per(qb.dim)
                };
                let Some(dim) = dim else {
                    return Err(Diagnostic::error(
                        ErrorCode::DimensionMismatch,
                        whole.span,
                        "unit powers out of range",
                    )
                    .with_hint("the result would have a unit power beyond ±127"));
                };
                let k = if op == BinOp::Mul {
                    kind_of_product(
                        qa.kind,
                        qb.kind,
                        x.real_const().filter(|_| qa.is_plain_number()),
                        y.real_const().filter(|_| qb.is_plain_number()),
                    )
                } else {
                    kind_of_quotient(qa.kind, qb.kind, y.real_const().filter(|_| qb.is_plain_number()))
                };
                let o = em.bin(if op == BinOp::Mul { Op::Mul } else { Op::Div }, x, y);
                Ok(Val::Scalar(o, Quantity::new(dim, k)))
            }
            BinOp::Pow => self.power(em, whole, b, x, qa, y, qb),
            BinOp::Parallel | BinOp::Series => {
                if qa.dim != qb.dim {
                    return Err(Diagnostic::error(
                        ErrorCode::DimensionMismatch,
                        b.span,
                        format!("cannot combine {} with {}", qa.describe(), qb.describe()),
                    )
                    .with_label(qb.describe())
                    .with_secondary(a.span, qa.describe())
                    .with_hint("`||` and `--` combine elements of one kind: impedances, admittances, inductances or capacitances"));
                }
                let d = qa.dim;
                let pu = qa.kind == Kind::PerUnit || qb.kind == Kind::PerUnit;
                let impedance_like = d == Dim::IMPEDANCE || d == Dim::INDUCTANCE || (d.is_none() && pu);
                let admittance_like = d == Dim::ADMITTANCE || d == Dim::CAPACITANCE;
                let reciprocal = match (op, impedance_like, admittance_like) {
                    (BinOp::Parallel, true, _) | (BinOp::Series, _, true) => true,
                    (BinOp::Series, true, _) | (BinOp::Parallel, _, true) => false,
                    _ => {
                        let mut dg = Diagnostic::error(
                            ErrorCode::NetworkOperand,
                            whole.span,
                            format!(
                                "`{}` combines network elements, and these are {}",
                                op.symbol(),
                                qa.describe()
                            ),
                        )
                        .with_label("not an impedance, admittance, inductance or capacitance");
                        dg = if d.is_none() {
                            if op == BinOp::Series {
                                dg.with_hint("give the values a unit (Ω, S, H, F, or pu for per-unit impedances); to subtract a negative number write `a - -b`")
                            } else {
                                dg.with_hint("give the values a unit: Ω, S, H, F, or pu for per-unit impedances")
                            }
                        } else {
                            dg.with_hint("`||` and `--` work on Ω, S, H, F and pu")
                        };
                        return Err(dg);
                    }
                };
                let o = if reciprocal {
                    em.bin(Op::Par, x, y)
                } else {
                    em.bin(Op::Add, x, y)
                };
                let k = if pu { Kind::PerUnit } else { Kind::Plain };
                Ok(Val::Scalar(o, Quantity::new(d, k)))
            }
            BinOp::Angle => {
                if !qb.dim.is_none() || qb.kind == Kind::PerUnit {
                    return Err(Diagnostic::error(
                        ErrorCode::DimensionMismatch,
                        b.span,
                        format!(
                            "the angle after ∠ must be an angle or a plain number of degrees, not {}",
                            qb.describe()
                        ),
                    )
                    .with_label(qb.describe()));
                }
                let theta = if qb.kind == Kind::Angle {
                    y
                } else {
                    let k = em.konst(std::f64::consts::PI / 180.0, 0.0);
                    em.bin(Op::Mul, y, k)
                };
                let o = em.bin(Op::Polar, x, theta);
                Ok(Val::Scalar(o, qa))
            }
        }
    }

    #[allow(clippy::too_many_arguments)]
    fn power(
        &self,
        em: &mut Emitter,
        whole: &Expr,
        b: &Expr,
        x: Operand,
        qa: Quantity,
        y: Operand,
        qb: Quantity,
    ) -> R<Val> {
        if !qb.dim.is_none() {
            return Err(Diagnostic::error(
                ErrorCode::BadExponent,
                b.span,
                format!("an exponent must be a plain number, not {}", qb.describe()),
            ));
        }
        let int_exp = y
            .real_const()
            .filter(|v| v.fract() == 0.0 && v.abs() <= 1e6)
            .map(|v| v as i32);
        if qa.dim.is_none() {
            let kind = if qa.kind == Kind::PerUnit {
                Kind::PerUnit
            } else {
                Kind::Plain
            };
            let o = match int_exp {
                Some(n) => em.powi(x, n),
                None => em.bin(Op::Pow, x, y),
            };
            return Ok(Val::Scalar(o, Quantity::new(Dim::NONE, kind)));
        }
        // A quantity with a unit: the power must be a known rational so
        // the result has a whole dimension.
        let Some(p) = y.real_const() else {
            return Err(Diagnostic::error(
                ErrorCode::BadExponent,
                b.span,
                format!(
                    "{} can only be raised to a fixed number, not to a value that changes",
                    qa.describe()
                ),
            )
            .with_hint("make the base a plain number (divide by its unit), or write the exponent as a number"));
        };
        for den in 1..=4 {
            let num = p * den as f64;
            if (num - num.round()).abs() < 1e-9 && num.abs() < 1000.0 {
                if let Some(d) = qa.dim.pow_ratio(num.round() as i32, den) {
                    let o = match int_exp {
                        Some(n) => em.powi(x, n),
                        None => em.bin(Op::Pow, x, y),
                    };
                    return Ok(Val::Scalar(o, Quantity::of(d)));
                }
            }
        }
        Err(Diagnostic::error(
            ErrorCode::BadExponent,
            whole.span,
            format!(
                "{} raised to {} has no whole SI dimension",
                qa.describe(),
                crate::units::format::fmt_sig(p, 6)
            ),
        )
        .with_hint("divide by the unit first, e.g. `(x / 1 V)^p`"))
    }
}

/// `name(a: Ω, b: Ω)` for messages and the listing.
pub fn signature(f: &funcs::Builtin) -> String {
    let ps: Vec<String> = f.params.iter().map(|p| format!("{}: {}", p.name, p.unit)).collect();
    let dots = if f.variadic { ", …" } else { "" };
    format!("{}({}{})", f.name, ps.join(", "), dots)
}
