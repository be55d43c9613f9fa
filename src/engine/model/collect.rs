//! Collecting a sheet's cells and directives, finding their dependencies,
//! and lowering them in order into one program.

use super::graph::{report_cycles, topo_order};
use super::meta::{check_note_targets, directive};
use super::*;
use crate::diag::{Diagnostic, ErrorCode, SourceMap, Span};
use crate::engine::ops::{Instr, Op};
use crate::engine::program::{Emitter, Operand, Program, SlotSpace, TEMP_FLAG};
use crate::funcs::{Ctx, Shape};
use crate::sheet::Sheet;
use crate::units::Unit;

/// Sheets with at least this many cells find their dependencies in
/// parallel.
const PARALLEL_DEPS_FROM: usize = 4096;

struct Pending<'a> {
    expr: Option<&'a Expr>,
    check: Option<&'a Check>,
    /// A network's own cell: its index in the sheet's networks.
    net: Option<usize>,
    /// The input's tolerance, as written.
    spread: Option<&'a SpreadSpec>,
}

/// Compile a sheet. Always returns a model; `model.diagnostics` holds every
/// error, and cells with errors have `error` set.
pub fn compile(sheet: &Sheet) -> Model {
    compile_limited(sheet, MAX_CELLS)
}

/// `compile` with a different cap on the number of cells (for tests of the
/// limit).
pub fn compile_limited(sheet: &Sheet, max_cells: usize) -> Model {
    let originals = original_quantities(sheet, max_cells);
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
    let mut open_net: Option<super::lower_network::NetDecl> = None;
    let mut nets: Vec<super::lower_network::NetDecl> = Vec::new();

    for stmt in &sheet.stmts {
        crate::engine::notes::of_statement(stmt, &mut diags);
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
                match open_net.as_mut() {
                    Some(nd) => match super::lower_network::element_decl(d, id) {
                        Ok(el) => {
                            let c = cells.last_mut().expect("just pushed");
                            c.display = d
                                .display
                                .as_ref()
                                .map(|u| u.unit.clone())
                                .or_else(|| literal_unit(el.value));
                            pending.push(Pending {
                                expr: Some(el.value),
                                check: None,
                                net: None,
                                spread: d.spread.as_ref(),
                            });
                            nd.elems.push(el);
                        }
                        Err(e) => {
                            cells.last_mut().expect("just pushed").error = Some(CellError::Own);
                            nd.bad.push(id);
                            diags.push(e);
                            pending.push(Pending {
                                expr: None,
                                check: None,
                                net: None,
                                spread: d.spread.as_ref(),
                            });
                        }
                    },
                    None => pending.push(Pending {
                        expr: Some(&d.expr),
                        check: None,
                        net: None,
                        spread: d.spread.as_ref(),
                    }),
                }
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
                // Else in the unit written on the reference (`~= 2.3 %`),
                // as the report shows it.
                if cell.display.is_none() {
                    cell.display = literal_unit(&c.rhs);
                }
                cells.push(cell);
                pending.push(Pending {
                    expr: None,
                    check: Some(c),
                    net: None,
                    spread: None,
                });
            }
            StmtKind::Directive(dir) => {
                directive(dir, stmt.span, &mut meta, &mut ctx, &mut amplitude_seen, &mut diags);
            }
            StmtKind::Network(h) => {
                if let Some(prev) = open_net.take() {
                    diags.push(
                        Diagnostic::error(
                            ErrorCode::NetworkBlock,
                            prev.head_span,
                            format!("network `{}` has no `end`", prev.head.name.name),
                        )
                        .with_secondary(stmt.span, "the next network starts here")
                        .with_hint("close each network block with a line `end`"),
                    );
                }
                open_net = Some(super::lower_network::NetDecl {
                    head: h,
                    head_span: stmt.span,
                    head_line: stmt.line,
                    elems: Vec::new(),
                    bad: Vec::new(),
                    asked: Vec::new(),
                });
            }
            StmtKind::End => match open_net.take() {
                None => diags.push(
                    Diagnostic::error(ErrorCode::NetworkBlock, stmt.span, "`end` without a network block")
                        .with_hint("`end` closes a block that starts `network NAME at FREQUENCY`"),
                ),
                Some(nd) => {
                    let name = &nd.head.name;
                    if let Some(&first) = by_name.get(&name.name) {
                        diags.push(
                            Diagnostic::error(
                                ErrorCode::DuplicateCell,
                                name.span,
                                format!("`{}` is defined twice", name.name),
                            )
                            .with_label("a network of this name")
                            .with_secondary(cells[first as usize].name_span, "first defined here"),
                        );
                        continue;
                    }
                    let id = cells.len() as CellId;
                    by_name.insert(name.name.clone(), id);
                    let head_stmt = Stmt {
                        kind: StmtKind::End,
                        span: nd.head_span,
                        line: nd.head_line,
                        comment: None,
                    };
                    let mut cell = new_cell(
                        &sheet.sources,
                        &head_stmt,
                        name.name.clone(),
                        Role::Def,
                        name.span,
                        &nd.head.freq,
                        None,
                    );
                    cell.formula = sheet.sources.slice(nd.head_span).to_string();
                    cells.push(cell);
                    pending.push(Pending {
                        expr: None,
                        check: None,
                        net: Some(nets.len()),
                        spread: None,
                    });
                    nets.push(nd);
                }
            },
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

    if let Some(nd) = open_net.take() {
        diags.push(
            Diagnostic::error(
                ErrorCode::NetworkBlock,
                nd.head_span,
                format!("network `{}` has no `end`", nd.head.name.name),
            )
            .with_hint("close the block with a line `end` after its last element"),
        );
        for e in &nd.elems {
            cells[e.cell as usize].error = Some(CellError::Own);
        }
    }
    // What the sheet asks of each network beyond voltages and currents.
    if !nets.is_empty() {
        let mut asked = |e: &Expr| {
            e.for_each_call(&mut |func, args| {
                if !matches!(func, "net_thevenin" | "net_z" | "net_y") || args.len() != 3 {
                    return;
                }
                let names: Vec<&str> = args
                    .iter()
                    .filter_map(|a| match &a.kind {
                        ExprKind::Name(id) => Some(id.name.as_str()),
                        _ => None,
                    })
                    .collect();
                if let [net, a, b] = names[..] {
                    if let Some(nd) = nets.iter_mut().find(|n| n.head.name.name == net) {
                        let f: &'static str = match func {
                            "net_thevenin" => "net_thevenin",
                            "net_z" => "net_z",
                            _ => "net_y",
                        };
                        let item = (f, a.to_string(), b.to_string());
                        if !nd.asked.contains(&item) {
                            nd.asked.push(item);
                        }
                    }
                }
            })
        };
        for p in &pending {
            if let Some(e) = p.expr {
                asked(e);
            }
            if let Some(c) = p.check {
                asked(&c.lhs);
                asked(&c.rhs);
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
        let mut elems = Vec::new();
        if let Some(k) = p.net {
            let nd = &nets[k];
            nd.head.freq.for_each_name(&mut visit);
            elems.extend(nd.bad.iter().copied());
            for el in &nd.elems {
                elems.push(el.cell);
                if let Some(x) = el.extra {
                    x.for_each_name(&mut visit);
                }
            }
        }
        if let Some(c) = p.check {
            c.lhs.for_each_name(&mut visit);
            c.rhs.for_each_name(&mut visit);
            if let Tolerance::Absolute(t) = &c.tol {
                t.for_each_name(&mut visit);
            }
        }
        for e in elems {
            if !deps.contains(&e) {
                deps.push(e);
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
    let networks = std::cell::RefCell::new(Vec::new());
    let mut order = Vec::with_capacity(n);
    let mut spreads = Vec::new();
    let mut spread_checks = Vec::new();
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
            networks: &networks,
        };
        let result = match (&pending[i].expr, &pending[i].check) {
            _ if pending[i].net.is_some() => lw.lower_network(&mut em, &nets[pending[i].net.unwrap_or_default()]),
            // the last override of the name is the formula in place (a
            // `--set` of a value an `@override` line replaced)
            (Some(e), _) => match sheet.overrides.iter().rfind(|o| o.name == cells[i].name) {
                Some(ov) => lw.lower_def(&mut em, e, &cells[i]).and_then(|val| {
                    let got = match &val {
                        Val::Scalar(_, q) => Some(*q),
                        Val::Record(_) => None,
                    };
                    lw.check_override(e, ov, originals.get(&ov.name).copied(), got)
                        .map(|()| val)
                }),
                None => lw.lower_def(&mut em, e, &cells[i]),
            },
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
                if let Some(o) = pending[i].check.and_then(|c| c.over.as_ref()) {
                    match o.share {
                        Some(s) if !(s > 0.0 && s <= 1.0) => diags.push(
                            Diagnostic::error(
                                ErrorCode::BadTolerance,
                                o.span,
                                "the share of samples must be more than 0 % and at most 100 %",
                            )
                            .with_hint("e.g. `over 99 % of samples`, or `over the box` for every point"),
                        ),
                        _ => spread_checks.push(crate::engine::tolerance::SpreadCheck {
                            cell: id,
                            share: o.share,
                            span: o.span,
                        }),
                    }
                }
                if let Some(spec) = pending[i].spread {
                    let cell = &cells[i];
                    let lw = Lowerer {
                        cells: &cells,
                        by_name: &by_name,
                        sources: &sheet.sources,
                        ctx,
                        current: id,
                        searches: &pending_searches,
                        networks: &networks,
                    };
                    let q = cell.quantity();
                    let searching = pending_searches.borrow().last().is_some_and(|p| p.cell == id);
                    match q {
                        Some(q) if cell.input && !searching => {
                            let nominal = (cell.code.is_empty()).then(|| slots.init[cell.slot as usize]);
                            match lw.lower_spread(spec, id, q, nominal) {
                                Ok(s) => spreads.push(s),
                                Err(d) => diags.push(d),
                            }
                        }
                        _ => diags.push(
                            Diagnostic::error(
                                ErrorCode::ToleranceNotOnInput,
                                spec.span,
                                format!(
                                    "`{}` is computed from other cells; only an input can have a tolerance",
                                    cell.name
                                ),
                            )
                            .with_label("a tolerance on a formula")
                            .with_hint("put the tolerance on the inputs this cell is computed from"),
                        ),
                    }
                }
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
        if !ins.op.uses_arg_table() {
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
            networks: networks.into_inner(),
        },
        meta,
        ctx,
        diagnostics: diags,
        spreads,
        spread_checks,
    };
    if !model.meta.sweeps.is_empty() {
        let more = crate::sweep::declared::check(&model);
        model.diagnostics.extend(more);
    }
    model
}

/// The dimension and kind each overridden cell (`--set`, `@override`) has
/// under the sheet's own formula: the sheet compiled with its formulas put
/// back. So the check of an override applies whatever the formula was —
/// a search, or one naming cells the override ranks after it.
fn original_quantities(sheet: &Sheet, max_cells: usize) -> std::collections::HashMap<String, Quantity> {
    let mut out = std::collections::HashMap::new();
    if sheet.overrides.is_empty() {
        return out;
    }
    let mut orig = sheet.clone();
    orig.overrides.clear();
    for st in &mut orig.stmts {
        if let StmtKind::Def(d) = &mut st.kind {
            if let Some(ov) = sheet.overrides.iter().find(|o| o.name == d.name.name) {
                d.expr = ov.original.clone();
            }
        }
    }
    let m = compile_limited(&orig, max_cells);
    for ov in &sheet.overrides {
        if let Some(q) = m.id(&ov.name).and_then(|id| m.cells[id as usize].quantity()) {
            out.insert(ov.name.clone(), q);
        }
    }
    out
}

pub(in crate::engine) fn new_cell(
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
pub(in crate::engine) fn literal_unit(e: &Expr) -> Option<Unit> {
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
                    && !code[last - 1].op.uses_arg_table()
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
