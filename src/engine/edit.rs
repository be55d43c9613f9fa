//! Editing a compiled model in place: a cell's new formula, a new cell, or
//! a throw-away expression, without compiling the whole sheet again.
//!
//! Compiling the sheet again is always correct; these are the fast paths
//! an interactive session takes for the common edit. They keep the model
//! as `compile` would have built it in every way the invariants speak of:
//! each cell's code is one contiguous range of `Program::code`, the ranges
//! follow rank order so running the whole code evaluates the sheet,
//! temporaries share one region at the end of the slots, and the block
//! evaluator sees the same program as the scalar one.
//!
//! An edit is made in place only when it cannot change the shape of the
//! graph's order or any other cell's type: the model has no cell with an
//! error, a redefined cell keeps its shape (dimension, kind, fields) and
//! uses only cells ranked before it, and a new cell's name is free. In
//! every other case the answer is `EditError::Recompile`, and the caller
//! compiles the sheet (which also reports cycles and type errors in
//! dependents the usual way).

use num_complex::Complex64 as C64;

use super::eval::{run, Change, Engine, Values};
use super::model::{literal_unit, new_cell, Cell, CellId, Lowerer, Role, Val, RESERVED};
use super::ops::{Instr, Op};
use super::program::{Emitter, Operand, SlotSpace, TEMP_FLAG};
use crate::diag::Diagnostic;
use crate::funcs::Shape;
use crate::syntax::ast::{Definition, Expr, ExprKind, Stmt};

/// Why an edit was not made in place.
#[derive(Clone, Debug, PartialEq)]
pub enum EditError {
    /// The edit needs the whole sheet compiled again (the reason is for
    /// tests and curious readers). Nothing was changed.
    Recompile(&'static str),
    /// The new formula is wrong. Nothing was changed.
    Invalid(Diagnostic),
}

/// A formula lowered against the current model, not yet placed.
struct Lowered {
    /// Instructions; temporaries still carry `TEMP_FLAG`, new constants
    /// already have their final slot numbers.
    code: Vec<Instr>,
    /// Slots from the old `temp_base` on: new constants (and a new cell's
    /// own slots), with their initial values.
    space: SlotSpace,
    temps: u32,
    val: Val,
    /// `call_args` length before lowering, to undo on failure.
    call_len: usize,
}

fn shape_of(v: &Val) -> Shape {
    match v {
        Val::Scalar(_, q) => Shape::Scalar(*q),
        Val::Record(f) => Shape::Record(f.iter().map(|(n, _, q)| (*n, *q)).collect()),
    }
}

fn parts(v: &Val) -> Vec<Operand> {
    match v {
        Val::Scalar(o, _) => vec![*o],
        Val::Record(f) => f.iter().map(|(_, o, _)| *o).collect(),
    }
}

/// Rewrite every slot an instruction reads or writes (not call argument
/// lists, which `for_call_args` reaches).
pub(super) fn for_slots(ins: &mut Instr, f: &mut impl FnMut(&mut u32)) {
    f(&mut ins.dst);
    if !ins.op.uses_arg_table() {
        f(&mut ins.a);
        if !ins.op.is_unary() {
            f(&mut ins.b);
        }
    }
}

/// Rewrite the argument slots of a call instruction.
pub(super) fn for_call_args(ins: &Instr, call_args: &mut [u32], f: &mut impl FnMut(&mut u32)) {
    if ins.op.uses_arg_table() {
        let start = ins.a as usize + 1;
        for a in &mut call_args[start..start + ins.b as usize] {
            f(a);
        }
    }
}

/// A defined cell as `compile` makes it, before lowering: an input
/// written as a number with a unit is shown in that unit.
fn def_cell(m: &super::Model, stmt: &Stmt, def: &Definition) -> Cell {
    let mut c = new_cell(
        &m.sources,
        stmt,
        def.name.name.clone(),
        Role::Def,
        def.name.span,
        &def.expr,
        def.display.as_ref(),
    );
    if c.display.is_none() {
        c.display = literal_unit(&def.expr);
    }
    c
}

impl Engine {
    fn error_free(&self) -> bool {
        self.model.order.len() == self.model.cells.len()
    }

    /// A search copies the code of the cells it runs through, so a sheet
    /// with searches, or a formula that is one, is compiled whole.
    fn no_searches(&self, e: &Expr) -> Result<(), EditError> {
        if !self.model.program.searches.is_empty() || matches!(e.kind, ExprKind::Search(_)) {
            return Err(EditError::Recompile("searches are compiled with the whole sheet"));
        }
        Ok(())
    }

    /// Lower with the model's lowerer into a scratch slot space numbered
    /// from `base`.
    fn lower_with(
        &mut self,
        base: usize,
        body: impl FnOnce(&Lowerer, &mut Emitter) -> Result<Val, Diagnostic>,
    ) -> Result<Lowered, Diagnostic> {
        let m = &mut self.model;
        let call_len = m.program.call_args.len();
        let mut space = SlotSpace::with_base(base);
        let mut code = Vec::new();
        // Searches are compiled with the whole sheet; callers refuse them
        // before lowering (see `no_searches`).
        let searches = std::cell::RefCell::new(Vec::new());
        // Networks are compiled with the whole sheet too.
        let networks = std::cell::RefCell::new(Vec::new());
        let lw = Lowerer {
            cells: &m.cells,
            by_name: &m.by_name,
            sources: &m.sources,
            ctx: m.ctx,
            current: CellId::MAX,
            searches: &searches,
            networks: &networks,
        };
        let mut em = Emitter {
            code: &mut code,
            call_args: &mut m.program.call_args,
            slots: &mut space,
            next_temp: 0,
            peak: m.ctx.peak,
        };
        let r = body(&lw, &mut em);
        let temps = em.next_temp;
        match r {
            Ok(val) => Ok(Lowered {
                code,
                space,
                temps,
                val,
                call_len,
            }),
            Err(d) => {
                m.program.call_args.truncate(call_len);
                Err(d)
            }
        }
    }

    /// Insert the new slots of `low` just before the temporary region and
    /// make that region big enough; then give the new code's temporaries
    /// their places. Returns the constant writes for the cell's own slots.
    fn commit_slots(&mut self, low: &mut Lowered) {
        let p = &mut self.model.program;
        let old_base = p.temp_base;
        let new_init = &low.space.init[old_base as usize..];
        let k = new_init.len() as u32;
        let old_temps = p.init.len() as u32 - old_base;
        if k > 0 {
            // Every slot at or above the old base is a temporary: move them up.
            let mut shift = |s: &mut u32| {
                if *s >= old_base {
                    *s += k;
                }
            };
            let (code, call_args) = (&mut p.code, &mut p.call_args);
            for ins in code.iter_mut() {
                for_slots(ins, &mut shift);
                for_call_args(ins, call_args, &mut shift);
            }
        }
        let new_base = old_base + k;
        let tlen = old_temps.max(low.temps).max(1);
        let zero = C64::new(0.0, 0.0);
        p.init.truncate(old_base as usize);
        p.init.extend_from_slice(new_init);
        p.init.resize((new_base + tlen) as usize, zero);
        p.temp_base = new_base;
        self.slots.truncate(old_base as usize);
        self.slots.extend_from_slice(new_init);
        self.slots.resize((new_base + tlen) as usize, zero);

        let mut fix = |s: &mut u32| {
            if *s & TEMP_FLAG != 0 {
                *s = new_base + (*s & !TEMP_FLAG);
            }
        };
        for ins in &mut low.code {
            for_slots(ins, &mut fix);
            for_call_args(ins, &mut p.call_args, &mut fix);
        }
        match &mut low.val {
            Val::Scalar(Operand::Slot(s), _) => fix(s),
            Val::Record(f) => {
                for (_, o, _) in f {
                    if let Operand::Slot(s) = o {
                        fix(s);
                    }
                }
            }
            Val::Scalar(..) => {}
        }
    }

    /// Route a lowered value into slots `slot..slot+width`: a computed
    /// scalar is written there by its last instruction, other parts are
    /// copied, and constants become initial values. Call before
    /// `commit_slots` (it relies on `TEMP_FLAG`). Returns the constants.
    fn place(low: &mut Lowered, slot: u32) -> Vec<(u32, C64)> {
        let ps = parts(&low.val);
        let width = ps.len();
        let mut consts = Vec::new();
        for (k, part) in ps.into_iter().enumerate() {
            let dst = slot + k as u32;
            match part {
                Operand::Const(c) => consts.push((dst, c)),
                Operand::Slot(s) => {
                    let last = low.code.last_mut();
                    match last {
                        Some(ins) if width == 1 && ins.dst == s && s & TEMP_FLAG != 0 && !ins.op.uses_arg_table() => {
                            ins.dst = dst
                        }
                        _ => low.code.push(Instr {
                            op: Op::Copy,
                            dst,
                            a: s,
                            b: 0,
                        }),
                    }
                }
            }
        }
        consts
    }

    /// Give the existing cell `id` the formula of `def` (from `stmt`) in
    /// place, and recompute what depends on it. Returns the changed cells:
    /// `id` first (if its value changed), then in evaluation order.
    pub fn redefine(&mut self, id: CellId, stmt: &Stmt, def: &Definition) -> Result<Vec<Change>, EditError> {
        self.redefine_as(id, stmt, def, &def.expr, false)
    }

    /// `redefine` for a network element line whose new form differs from
    /// the old only in its value (`value`, an argument of `def`'s element
    /// form): the element's cell holds that value, as `compile` makes it,
    /// and the network reads it from the cell's slot with the element's
    /// kind decided by its dimension and kind alone, so when the value
    /// keeps its shape the network's code stands and only the cells that
    /// depend on the element are computed again. The caller checks that
    /// the element's form, nodes and extra argument are unchanged.
    pub fn redefine_element(
        &mut self,
        id: CellId,
        stmt: &Stmt,
        def: &Definition,
        value: &Expr,
    ) -> Result<Vec<Change>, EditError> {
        self.redefine_as(id, stmt, def, value, true)
    }

    fn redefine_as(
        &mut self,
        id: CellId,
        stmt: &Stmt,
        def: &Definition,
        expr: &Expr,
        element: bool,
    ) -> Result<Vec<Change>, EditError> {
        if !self.error_free() {
            return Err(EditError::Recompile("the model has cells with errors"));
        }
        self.no_searches(expr)?;
        if def.spread.is_some() || self.model.spread_of(id).is_some() {
            return Err(EditError::Recompile("a tolerance is checked with the whole sheet"));
        }
        let i = id as usize;
        let m = &self.model;
        if m.cells[i].role != Role::Def || m.cells[i].name != def.name.name {
            return Err(EditError::Recompile("not a defined cell of that name"));
        }
        // An element's cell is used by its network, under its own name.
        let name = &m.cells[i].name;
        let is_element = || {
            m.dependents[i].iter().any(|&u| {
                m.program
                    .networks
                    .iter()
                    .any(|n| n.name == m.cells[u as usize].name && n.net.elems.iter().any(|e| e.name == *name))
            })
        };
        if element && !is_element() {
            return Err(EditError::Recompile("not an element of a network"));
        }
        let mut deps: Vec<CellId> = Vec::new();
        expr.for_each_name(&mut |n| {
            if let Some(&d) = m.by_name.get(&n.name) {
                if !deps.contains(&d) {
                    deps.push(d);
                }
            }
        });
        let my_rank = m.rank[i];
        if deps.iter().any(|&d| m.rank[d as usize] >= my_rank) {
            return Err(EditError::Recompile(
                "the new formula uses a cell ranked after this one",
            ));
        }
        let mut probe = def_cell(m, stmt, def);
        if element {
            // As `compile` shows an element: in the unit its value is
            // written in.
            probe.display = def
                .display
                .as_ref()
                .map(|u| u.unit.clone())
                .or_else(|| literal_unit(expr));
        }
        let base = m.program.temp_base as usize;
        let mut low = self
            .lower_with(base, |lw, em| lw.lower_def(em, expr, &probe))
            .map_err(EditError::Invalid)?;
        if Some(shape_of(&low.val)) != self.model.cells[i].shape {
            self.model.program.call_args.truncate(low.call_len);
            return Err(EditError::Recompile("the cell's dimension or fields change"));
        }
        let slot = self.model.cells[i].slot;
        let width = self.model.cells[i].width;
        let consts = Self::place(&mut low, slot);
        self.commit_slots(&mut low);

        // Splice the new code over the old and move the later ranges.
        let m = &mut self.model;
        let old = m.cells[i].code.clone();
        let new_len = low.code.len() as u32;
        m.program
            .code
            .splice(old.start as usize..old.end as usize, low.code.drain(..));
        let delta = new_len as i64 - (old.end - old.start) as i64;
        if delta != 0 {
            for (j, c) in m.cells.iter_mut().enumerate() {
                let r = m.rank[j];
                if j != i && r != u32::MAX && r > my_rank {
                    c.code = (c.code.start as i64 + delta) as u32..(c.code.end as i64 + delta) as u32;
                }
            }
        }
        let cell = &mut m.cells[i];
        cell.code = old.start..old.start + new_len;
        for &d in &cell.deps {
            m.dependents[d as usize].retain(|&x| x != id);
        }
        for &d in &deps {
            m.dependents[d as usize].push(id);
        }
        cell.input = deps.is_empty() && width == 1;
        cell.deps = deps;
        cell.formula = probe.formula;
        cell.display = probe.display;
        cell.comment = probe.comment;
        cell.file = probe.file;
        cell.line = probe.line;
        cell.name_span = probe.name_span;
        cell.stmt_span = probe.stmt_span;

        // Evaluate the cell and what depends on it.
        let range = slot as usize..(slot + width) as usize;
        let before = Values::from_slice(&self.slots[range.clone()]);
        for (s, c) in consts {
            self.model.program.init[s as usize] = c;
            self.slots[s as usize] = c;
        }
        let code = self.model.cells[i].code.clone();
        let m = &self.model;
        run(
            &m.program.code[code.start as usize..code.end as usize],
            &m.program,
            &mut self.slots,
        );
        self.last_recomputed.clear();
        self.last_recomputed.push(id);
        let after = Values::from_slice(&self.slots[range]);
        let same = before
            .iter()
            .zip(&after)
            .all(|(a, b)| a.re.to_bits() == b.re.to_bits() && a.im.to_bits() == b.im.to_bits());
        if same {
            return Ok(Vec::new());
        }
        let mut changes = vec![Change {
            cell: id,
            old: before,
            new: after,
        }];
        self.propagate(id, &mut changes);
        Ok(changes)
    }

    /// Add a new cell defined by `def` (from `stmt`) at the end of the
    /// program. Returns its `Change` (with no old value).
    pub fn add_cell(&mut self, stmt: &Stmt, def: &Definition) -> Result<Change, EditError> {
        if !self.error_free() {
            return Err(EditError::Recompile("the model has cells with errors"));
        }
        self.no_searches(&def.expr)?;
        if def.spread.is_some() {
            return Err(EditError::Recompile("a tolerance is checked with the whole sheet"));
        }
        let name = &def.name.name;
        if self.model.by_name.contains_key(name) || RESERVED.contains(&name.as_str()) {
            return Err(EditError::Recompile("the name is taken or reserved"));
        }
        let m = &self.model;
        let mut deps: Vec<CellId> = Vec::new();
        def.expr.for_each_name(&mut |n| {
            if let Some(&d) = m.by_name.get(&n.name) {
                if !deps.contains(&d) {
                    deps.push(d);
                }
            }
        });
        let mut cell = def_cell(m, stmt, def);
        let base = m.program.temp_base as usize;
        let mut low = self
            .lower_with(base, |lw, em| lw.lower_def(em, &def.expr, &cell))
            .map_err(EditError::Invalid)?;
        let shape = shape_of(&low.val);
        let width = shape.width();
        let slot = low.space.alloc(width);
        let consts = Self::place(&mut low, slot);
        self.commit_slots(&mut low);

        let m = &mut self.model;
        let id = m.cells.len() as CellId;
        let start = m.program.code.len() as u32;
        m.program.code.append(&mut low.code);
        cell.shape = Some(shape);
        cell.slot = slot;
        cell.width = width;
        cell.code = start..m.program.code.len() as u32;
        cell.input = deps.is_empty() && width == 1;
        for &d in &deps {
            m.dependents[d as usize].push(id);
        }
        cell.deps = deps;
        m.by_name.insert(name.clone(), id);
        m.rank.push(m.order.len() as u32);
        m.order.push(id);
        m.dependents.push(Vec::new());
        m.cells.push(cell);
        self.queued.push(false);

        for (s, c) in consts {
            self.model.program.init[s as usize] = c;
            self.slots[s as usize] = c;
        }
        let code = self.model.cells[id as usize].code.clone();
        let m = &self.model;
        run(
            &m.program.code[code.start as usize..code.end as usize],
            &m.program,
            &mut self.slots,
        );
        self.last_recomputed.clear();
        self.last_recomputed.push(id);
        Ok(Change {
            cell: id,
            old: Values::new(),
            new: Values::from_slice(self.values(id)),
        })
    }

    /// Remove cell `id` when it is the last cell, computed last, and no
    /// other cell uses it (the undo of `add_cell`). Its slots stay
    /// allocated and unused.
    pub fn remove_last(&mut self, id: CellId) -> Result<(), EditError> {
        let m = &mut self.model;
        let i = id as usize;
        let last = m.cells.len().checked_sub(1) == Some(i)
            && m.order.last() == Some(&id)
            && m.cells[i].role == Role::Def
            && m.dependents[i].is_empty()
            && m.cells[i].code.end as usize == m.program.code.len();
        if !last || m.spread_of(id).is_some() || !self.error_free() {
            return Err(EditError::Recompile(
                "not the last cell, still in use, or with a tolerance",
            ));
        }
        let m = &mut self.model;
        let cell = m.cells.pop().expect("checked");
        m.program.code.truncate(cell.code.start as usize);
        for &d in &cell.deps {
            m.dependents[d as usize].retain(|&x| x != id);
        }
        m.by_name.remove(&cell.name);
        m.order.pop();
        m.rank.pop();
        m.dependents.pop();
        self.queued.pop();
        self.last_recomputed.clear();
        Ok(())
    }

    /// Evaluate an expression against the current values without storing
    /// anything: its shape and its value (one per field for a record).
    pub fn evaluate(&mut self, e: &Expr) -> Result<(Shape, Vec<C64>), Diagnostic> {
        if matches!(e.kind, ExprKind::Search(_)) {
            return Err(Diagnostic::error(
                crate::diag::ErrorCode::BadSearch,
                e.span,
                "a search is the formula of a cell",
            )
            .with_hint("give it a name: `Cfix = C in 0 .. 3 mF where pf = 0.95`"));
        }
        let base = self.slots.len();
        let low = self.lower_with(base, |lw, em| lw.expr(em, e))?;
        let tbase = low.space.init.len() as u32;
        let mut slots = low.space.init.clone();
        slots[..base].copy_from_slice(&self.slots);
        slots.resize((tbase + low.temps.max(1)) as usize, C64::new(0.0, 0.0));
        let mut code = low.code;
        let p = &mut self.model.program;
        let mut fix = |s: &mut u32| {
            if *s & TEMP_FLAG != 0 {
                *s = tbase + (*s & !TEMP_FLAG);
            }
        };
        for ins in &mut code {
            for_slots(ins, &mut fix);
            for_call_args(ins, &mut p.call_args, &mut fix);
        }
        run(&code, p, &mut slots);
        p.call_args.truncate(low.call_len);
        let read = |o: Operand| match o {
            Operand::Const(c) => c,
            Operand::Slot(s) => {
                let mut s = s;
                fix(&mut s);
                slots[s as usize]
            }
        };
        let shape = shape_of(&low.val);
        let vals = parts(&low.val).into_iter().map(read).collect();
        Ok((shape, vals))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diag::SourceFile;
    use crate::engine::block::{Block, LANES};
    use crate::engine::compile;
    use crate::sheet::Sheet;
    use crate::syntax::ast::StmtKind;
    use crate::syntax::parse_line;

    fn engine(src: &str) -> Engine {
        let m = compile(&Sheet::from_text("t.ohm", src));
        assert!(!m.has_errors(), "{:?}", m.diagnostics);
        Engine::new(m)
    }

    fn typed(e: &mut Engine, line: &str) -> (Stmt, Definition) {
        let f = e.model.sources.add(SourceFile::new("typed", None, line.to_string()));
        let stmt = parse_line(line, f, 0, 1).expect("parses").expect("a statement");
        let StmtKind::Def(d) = stmt.kind.clone() else {
            panic!("not a definition: {line}")
        };
        (stmt, d)
    }

    fn redefine(e: &mut Engine, line: &str) -> Result<Vec<Change>, EditError> {
        let (stmt, d) = typed(e, line);
        let id = e.model.id(&d.name.name).expect("cell exists");
        e.redefine(id, &stmt, &d)
    }

    fn names(e: &Engine, ids: &[CellId]) -> Vec<String> {
        ids.iter().map(|&i| e.model.cells[i as usize].name.clone()).collect()
    }

    /// The program still has the shape `compile` gives it: ranges tile the
    /// code in rank order; temporaries live at and above `temp_base`.
    fn assert_invariants(e: &Engine) {
        let m = &e.model;
        let mut at = 0u32;
        for (r, &id) in m.order.iter().enumerate() {
            let c = &m.cells[id as usize];
            assert_eq!(m.rank[id as usize], r as u32);
            assert_eq!(c.code.start, at, "{} starts where the previous cell ends", c.name);
            at = c.code.end;
            assert!(c.slot + c.width <= m.program.temp_base);
        }
        assert_eq!(at as usize, m.program.code.len());
        assert_eq!(m.program.init.len(), e.slots().len());
        for ins in &m.program.code {
            assert!((ins.dst as usize) < m.program.init.len());
        }
        for (i, deps) in m.dependents.iter().enumerate() {
            for &d in deps {
                assert!(m.cells[d as usize].deps.contains(&(i as CellId)));
            }
        }
    }

    /// Every cell's value equals what compiling `src` from scratch gives,
    /// to the bit, and the block evaluator agrees with the scalar one.
    fn assert_same_as_compiled(e: &Engine, src: &str) {
        assert_invariants(e);
        let fresh = engine(src);
        for (id, c) in fresh.model.cells.iter().enumerate() {
            if c.role != Role::Def {
                continue;
            }
            let mine = e.model.id(&c.name).unwrap_or_else(|| panic!("{} missing", c.name));
            let (a, b) = (e.values(mine), fresh.values(id as CellId));
            let bits = |v: &[C64]| v.iter().map(|z| (z.re.to_bits(), z.im.to_bits())).collect::<Vec<_>>();
            assert_eq!(bits(a), bits(b), "{}", c.name);
        }
        // `set_input` changes values, not the program's initial values.
        let mut prog = e.model.program.clone();
        for (id, c) in e.model.inputs() {
            prog.init[c.slot as usize] = e.value(id);
        }
        let mut blk = Block::new(&prog);
        blk.run(&prog.code, &prog);
        for (id, c) in e.model.defs() {
            for k in 0..c.width {
                let got = blk.get(c.slot + k, LANES - 1);
                let want = e.values(id)[k as usize];
                assert_eq!(
                    (got.re.to_bits(), got.im.to_bits()),
                    (want.re.to_bits(), want.im.to_bits())
                );
            }
        }
    }

    const DIVIDER: &str = "R1 = 10 Ω\nR2 = 20 Ω\nV = 100 V\nRt = R1 + R2\nI = V / Rt\nP = V * I\nother = R2 * 2";

    #[test]
    fn redefining_a_formula_recomputes_only_its_dependents() {
        let mut e = engine(DIVIDER);
        let ch = redefine(&mut e, "Rt = R1 + R2 + 10 Ω").unwrap();
        assert_eq!(names(&e, &e.last_recomputed.clone()), ["Rt", "I", "P"]);
        let changed: Vec<CellId> = ch.iter().map(|c| c.cell).collect();
        assert_eq!(names(&e, &changed), ["Rt", "I", "P"]);
        // Ohm's law: 100 V across 10 + 20 + 10 Ω is 2.5 A.
        assert_eq!(e.value(e.model.id("I").unwrap()), C64::new(2.5, 0.0));
        assert_eq!(ch[1].old[..], [C64::new(100.0 / 30.0, 0.0)]);
        assert_same_as_compiled(
            &e,
            "R1 = 10 Ω\nR2 = 20 Ω\nV = 100 V\nRt = R1 + R2 + 10 Ω\nI = V / Rt\nP = V * I\nother = R2 * 2",
        );
    }

    /// Cells are ranked in the order of the sheet's lines wherever the
    /// dependencies allow it, and always after the cells they use.
    #[test]
    fn ranks_follow_the_lines_where_dependencies_allow() {
        let e = engine(DIVIDER);
        assert_eq!(names(&e, &e.model.order), ["R1", "R2", "V", "Rt", "I", "P", "other"]);
        // `a` uses `b` on the line after it: `b` comes first, then `a` and
        // what uses it; `c` keeps its place after the earlier lines.
        let e = engine("a = b + 1\nb = 2\nc = 3\nd = a * c\n");
        assert_eq!(names(&e, &e.model.order), ["b", "a", "c", "d"]);
        assert_invariants(&e);
    }

    #[test]
    fn an_input_becomes_a_formula_and_back() {
        let mut e = engine(DIVIDER);
        redefine(&mut e, "V = R1 * sqrt(2) * 7.071 A").unwrap();
        assert!(!e.model.cell("V").unwrap().input);
        redefine(&mut e, "R2 = R1 * 3").unwrap();
        assert_eq!(e.model.cell("R2").unwrap().deps.len(), 1);
        assert_same_as_compiled(
            &e,
            "R1 = 10 Ω\nR2 = R1 * 3\nV = R1 * sqrt(2) * 7.071 A\nRt = R1 + R2\nI = V / Rt\nP = V * I\nother = R2 * 2",
        );
        // R1 now reaches R2 and everything after it.
        let r1 = e.model.id("R1").unwrap();
        e.set_input(r1, C64::new(5.0, 0.0));
        // (in rank order, which follows the lines of a sheet written top-down)
        assert_eq!(
            names(&e, &e.last_recomputed.clone()),
            ["R2", "V", "Rt", "I", "P", "other"]
        );
        redefine(&mut e, "R2 = 20 Ω").unwrap();
        assert!(e.model.cell("R2").unwrap().input);
        assert_same_as_compiled(
            &e,
            "R1 = 5 Ω\nR2 = 20 Ω\nV = R1 * sqrt(2) * 7.071 A\nRt = R1 + R2\nI = V / Rt\nP = V * I\nother = R2 * 2",
        );
        // R1 no longer reaches R2.
        e.set_input(r1, C64::new(6.0, 0.0));
        assert_eq!(names(&e, &e.last_recomputed.clone()), ["V", "Rt", "I", "P"]);
    }

    #[test]
    fn many_constants_and_calls_keep_the_temporaries_apart() {
        let src = "a = 3 Ω\nb = j4 Ω\nz = a || b\nw = z * 2 + 1 Ω\nm = abs(w)";
        let mut e = engine(src);
        redefine(&mut e, "z = (a || b) -- (7 Ω || 9 Ω) -- max(a, 2 Ω, 3.5 Ω) * 1.25").unwrap();
        redefine(&mut e, "a = 3.5 Ω").unwrap();
        assert_same_as_compiled(
            &e,
            "a = 3.5 Ω\nb = j4 Ω\nz = (a || b) -- (7 Ω || 9 Ω) -- max(a, 2 Ω, 3.5 Ω) * 1.25\nw = z * 2 + 1 Ω\nm = abs(w)",
        );
    }

    #[test]
    fn record_cells_are_redefined_in_place() {
        let src = "Z = (3 + j4) Ω\np = as_parallel(Z)\nR = p.R\ns = as_series(3 Ω, 4 Ω)\nt = s.Z + R";
        let mut e = engine(src);
        redefine(&mut e, "p = as_parallel(Z * 2)").unwrap();
        redefine(&mut e, "s = as_series(abs(Z), 5 Ω)").unwrap();
        assert!(!e.model.cell("s").unwrap().input);
        assert_same_as_compiled(
            &e,
            "Z = (3 + j4) Ω\np = as_parallel(Z * 2)\nR = p.R\ns = as_series(abs(Z), 5 Ω)\nt = s.Z + R",
        );
        let (stmt, d) = typed(&mut e, "q = as_series(t, 2 Ω)");
        e.add_cell(&stmt, &d).unwrap();
        redefine(&mut e, "Z = (6 + j8) Ω").unwrap();
        assert_same_as_compiled(
            &e,
            "Z = (6 + j8) Ω\np = as_parallel(Z * 2)\nR = p.R\ns = as_series(abs(Z), 5 Ω)\nt = s.Z + R\nq = as_series(t, 2 Ω)",
        );
        // a record becoming a scalar needs the whole sheet compiled
        assert!(matches!(redefine(&mut e, "p = Z"), Err(EditError::Recompile(_))));
    }

    #[test]
    fn same_value_changes_nothing() {
        let mut e = engine(DIVIDER);
        let ch = redefine(&mut e, "Rt = R2 + R1").unwrap();
        assert!(ch.is_empty());
        assert_eq!(names(&e, &e.last_recomputed.clone()), ["Rt"]);
    }

    #[test]
    fn edits_that_need_a_full_compile_change_nothing() {
        let mut e = engine(DIVIDER);
        let before = e.slots().to_vec();
        let code = e.model.program.code.clone();
        // a cycle
        assert!(matches!(redefine(&mut e, "R1 = I * 1 Ω"), Err(EditError::Recompile(_))));
        assert!(matches!(redefine(&mut e, "R1 = R1 * 2"), Err(EditError::Recompile(_))));
        // uses a cell ranked later (no cycle, but the order must change)
        assert!(matches!(
            redefine(&mut e, "R2 = other / 2"),
            Err(EditError::Recompile(_))
        ));
        // a different dimension: dependents must be checked again
        assert!(matches!(redefine(&mut e, "R2 = 20 V"), Err(EditError::Recompile(_))));
        // a wrong formula is refused with its own message
        match redefine(&mut e, "R2 = R1 + 3 V") {
            Err(EditError::Invalid(d)) => assert_eq!(d.code, crate::diag::ErrorCode::DimensionMismatch),
            other => panic!("{other:?}"),
        }
        assert_eq!(e.slots(), &before[..]);
        assert_eq!(e.model.program.code, code);
        assert_invariants(&e);
    }

    #[test]
    fn a_new_cell_joins_the_end_and_follows_its_inputs() {
        let mut e = engine(DIVIDER);
        let (stmt, d) = typed(&mut e, "Q = P / 2 + 1 W");
        let ch = e.add_cell(&stmt, &d).unwrap();
        assert!(ch.old.is_empty());
        // P = V²/Rt = 10000/30 W
        assert!(
            (ch.new[0].re - (10000.0 / 30.0 / 2.0 + 1.0)).abs() < 1e-9,
            "{:?}",
            ch.new
        );
        let (stmt, d) = typed(&mut e, "T = Q * 3");
        e.add_cell(&stmt, &d).unwrap();
        let v = e.model.id("V").unwrap();
        e.set_input(v, C64::new(50.0, 0.0));
        assert_eq!(names(&e, &e.last_recomputed.clone()), ["I", "P", "Q", "T"]);
        assert_same_as_compiled(
            &e,
            "R1 = 10 Ω\nR2 = 20 Ω\nV = 50 V\nRt = R1 + R2\nI = V / Rt\nP = V * I\nother = R2 * 2\nQ = P / 2 + 1 W\nT = Q * 3",
        );
        // and the new cell can itself be redefined in place
        redefine(&mut e, "Q = P / 4 + 2 W").unwrap();
        assert_same_as_compiled(
            &e,
            "R1 = 10 Ω\nR2 = 20 Ω\nV = 50 V\nRt = R1 + R2\nI = V / Rt\nP = V * I\nother = R2 * 2\nQ = P / 4 + 2 W\nT = Q * 3",
        );
    }

    #[test]
    fn the_last_cell_added_can_be_taken_out_again() {
        let mut e = engine(DIVIDER);
        let code = e.model.program.code.clone();
        let (stmt, d) = typed(&mut e, "Q = P / 2 + 1 W");
        let q = e.add_cell(&stmt, &d).unwrap().cell;
        let p = e.model.id("P").unwrap();
        assert!(
            matches!(e.remove_last(p), Err(EditError::Recompile(_))),
            "P is used by Q"
        );
        e.remove_last(q).unwrap();
        assert_eq!(e.model.program.code, code);
        assert!(e.model.id("Q").is_none());
        assert!(e.model.dependents[p as usize].is_empty());
        assert_same_as_compiled(&e, DIVIDER);
        let v = e.model.id("V").unwrap();
        e.set_input(v, C64::new(50.0, 0.0));
        assert_eq!(names(&e, &e.last_recomputed.clone()), ["I", "P"]);
    }

    #[test]
    fn taken_names_are_not_added() {
        let mut e = engine(DIVIDER);
        let (stmt, d) = typed(&mut e, "R1 = 3 Ω");
        assert!(matches!(e.add_cell(&stmt, &d), Err(EditError::Recompile(_))));
        let (stmt, d) = typed(&mut e, "k = nosuch * 2");
        assert!(matches!(e.add_cell(&stmt, &d), Err(EditError::Invalid(_))));
        assert_eq!(e.model.cells.len(), 7);
        assert_invariants(&e);
    }

    #[test]
    fn evaluating_an_expression_stores_nothing() {
        let mut e = engine(DIVIDER);
        let before = e.slots().to_vec();
        let n_cells = e.model.cells.len();
        let f = e
            .model
            .sources
            .add(SourceFile::new("typed", None, "V / (R1 || R2) * 2".into()));
        let stmt = parse_line("V / (R1 || R2) * 2", f, 0, 1).unwrap().unwrap();
        let StmtKind::Expr(x) = stmt.kind else { panic!() };
        let (shape, v) = e.evaluate(&x).unwrap();
        // 10 Ω || 20 Ω = 20/3 Ω; 100 V / (20/3 Ω) * 2 = 30 A
        assert!((v[0].re - 30.0).abs() < 1e-12, "{v:?}");
        assert_eq!(
            shape,
            Shape::Scalar(crate::units::Quantity::of(crate::units::Dim::CURRENT))
        );
        assert_eq!(e.slots(), &before[..]);
        assert_eq!(e.model.cells.len(), n_cells);
    }
}
