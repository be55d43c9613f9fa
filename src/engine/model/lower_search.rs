//! Compiling the search form `C in 0 .. 2 mF where pf = 0.95`.
//!
//! While the cell is lowered, the range ends and the target value are
//! lowered as usual, the target expression into code of its own, and an
//! `Op::Search` instruction takes the cell's place. Once every cell is
//! lowered, `finish` gives each search its sub-program: the code of the
//! cells between the varied input and the target (in evaluation order),
//! then the target's own code. It also replaces the search cell's
//! dependencies by what the search reads from outside that sub-program, so
//! the incremental engine re-runs the search when any of those change, and
//! not when the varied input itself does.

use crate::units::kind::kind_of_sum;
use num_complex::Complex64 as C64;

use super::{Cell, CellId, Lowerer, Role, Val, R};
use crate::diag::{did_you_mean, Diagnostic, ErrorCode};
use crate::engine::ops::{Instr, Op};
use crate::engine::program::{Emitter, Operand, SlotSpace, TEMP_FLAG};
use crate::engine::search::{Goal, Search, INFO_WIDTH};
use crate::syntax::ast::{Expr, Ident, Search as SearchAst, SearchGoal};
use crate::units::{Kind, Quantity};

/// The most searches one sheet may hold.
pub const MAX_SEARCHES: usize = u16::MAX as usize;

/// A search lowered but not yet given its sub-program.
#[derive(Debug)]
pub struct PendingSearch {
    /// The search cell.
    pub cell: CellId,
    /// The varied input.
    pub var: CellId,
    /// The cells between the input and the target, in evaluation order.
    pub between: Vec<CellId>,
    /// What the search reads from outside `between`: the search cell's
    /// dependencies once it is lowered.
    pub frontier: Vec<CellId>,
    /// The target expression's code, ending with a copy to `search.target`.
    pub target_code: Vec<Instr>,
    pub search: Search,
}

/// Cells named in `e`.
fn names_in(l: &Lowerer, e: &Expr) -> Vec<CellId> {
    let mut out = Vec::new();
    e.for_each_name(&mut |id: &Ident| {
        if let Some(&c) = l.by_name.get(&id.name) {
            if !out.contains(&c) {
                out.push(c);
            }
        }
    });
    out
}

/// Does any of `from` use `var`, directly or through other cells?
fn reaches(cells: &[Cell], from: &[CellId], var: CellId) -> bool {
    let mut seen = vec![false; cells.len()];
    let mut stack: Vec<CellId> = from.to_vec();
    while let Some(c) = stack.pop() {
        if c == var {
            return true;
        }
        if std::mem::replace(&mut seen[c as usize], true) {
            continue;
        }
        stack.extend(cells[c as usize].deps.iter().copied());
    }
    false
}

impl Lowerer<'_> {
    /// The cells between `var` and the cells `refs` (in evaluation order),
    /// and what a search over them reads from outside: the dependencies of
    /// those cells and the cells `exprs` name, less the cells between and
    /// `var`. Every cell involved is lowered already, and any search among
    /// them has its final dependencies.
    fn between(&self, var: CellId, refs: &[CellId], exprs: &[&Expr], goal: &SearchGoal) -> (Vec<CellId>, Vec<CellId>) {
        let cells = self.cells;
        let n = cells.len();
        let mut dependents: Vec<Vec<CellId>> = vec![Vec::new(); n];
        for (i, c) in cells.iter().enumerate() {
            for &d in &c.deps {
                dependents[d as usize].push(i as CellId);
            }
        }
        let mut affected = vec![false; n];
        let mut stack = vec![var];
        while let Some(c) = stack.pop() {
            for &d in &dependents[c as usize] {
                if !std::mem::replace(&mut affected[d as usize], true) {
                    stack.push(d);
                }
            }
        }
        let mut needed = vec![false; n];
        let mut stack = refs.to_vec();
        for &r in refs {
            needed[r as usize] = true;
        }
        while let Some(c) = stack.pop() {
            for &d in &cells[c as usize].deps {
                if !std::mem::replace(&mut needed[d as usize], true) {
                    stack.push(d);
                }
            }
        }
        let inside = |i: CellId| affected[i as usize] && needed[i as usize] && i != var;
        let mut between: Vec<CellId> = (0..n as CellId).filter(|&i| inside(i)).collect();
        between.sort_by_key(|&i| cells[i as usize].code.start);
        let mut frontier: Vec<CellId> = Vec::new();
        let mut add = |d: CellId| {
            if d != var && !inside(d) && !frontier.contains(&d) {
                frontier.push(d);
            }
        };
        for &c in &between {
            for &d in &cells[c as usize].deps {
                add(d);
            }
        }
        let mut named = Vec::new();
        for e in exprs {
            named.extend(names_in(self, e));
        }
        if let SearchGoal::Equals(v) = goal {
            named.extend(names_in(self, v));
        }
        for d in named {
            add(d);
        }
        frontier.sort_unstable();
        (between, frontier)
    }

    pub(super) fn search(&self, em: &mut Emitter, whole: &Expr, s: &SearchAst) -> R<Val> {
        // The varied input.
        let Some(&var) = self.by_name.get(&s.var.name) else {
            let inputs = self
                .cells
                .iter()
                .filter(|c| c.role == Role::Def && c.deps.is_empty())
                .map(|c| c.name.as_str());
            let mut d = Diagnostic::error(
                ErrorCode::UnknownName,
                s.var.span,
                format!("`{}` is not defined", s.var.name),
            )
            .with_label("the input to vary must be a cell of the sheet");
            if let Some(x) = did_you_mean(&s.var.name, inputs) {
                d = d.with_hint(format!("did you mean `{x}`?"));
            }
            return Err(d);
        };
        let vc = &self.cells[var as usize];
        let vq = match (&vc.shape, vc.role, vc.deps.is_empty()) {
            (Some(crate::funcs::Shape::Scalar(q)), Role::Def, true) => *q,
            _ => {
                return Err(Diagnostic::error(
                    ErrorCode::NotAnInput,
                    s.var.span,
                    format!(
                        "`{}` is computed from other cells, so a search cannot vary it",
                        s.var.name
                    ),
                )
                .with_secondary(vc.name_span, format!("{} = {}", vc.name, vc.formula))
                .with_hint("vary an input: a cell whose formula is a value, like `C = 100 µF`"));
            }
        };
        // The range and the target value are read once, before the search:
        // they must not change with the input.
        let fixed = |e: &Expr, what: &str| -> R<()> {
            if reaches(self.cells, &names_in(self, e), var) {
                return Err(Diagnostic::error(
                    ErrorCode::BadSearch,
                    e.span,
                    format!("{what} changes with `{}`", s.var.name),
                )
                .with_label(format!("uses `{}`", s.var.name))
                .with_hint("the range and the target value must stay fixed while the input varies"));
            }
            Ok(())
        };
        fixed(&s.lo, "the start of the range")?;
        fixed(&s.hi, "the end of the range")?;
        let (lo, ql) = self.scalar(em, &s.lo)?;
        let (hi, qh) = self.scalar(em, &s.hi)?;
        for (o, q, e, what) in [
            (lo, ql, &s.lo, "the start of the range"),
            (hi, qh, &s.hi, "the end of the range"),
        ] {
            let zero = o.konst() == Some(C64::new(0.0, 0.0)) && q.is_plain_number();
            let angle_clash = vq.kind == Kind::Angle && q.kind != Kind::Angle;
            if !zero && (q.dim != vq.dim || angle_clash || !crate::units::kind::fits_input(vq, q)) {
                let code = if q.dim == vq.dim && !angle_clash {
                    ErrorCode::KindMismatch
                } else {
                    ErrorCode::DimensionMismatch
                };
                return Err(Diagnostic::error(
                    code,
                    e.span,
                    format!("{what} is {}, but `{}` is {}", q.describe(), s.var.name, vq.describe()),
                )
                .with_label(q.describe())
                .with_hint(format!("give the range the unit of `{}`", s.var.name)));
            }
        }
        // The target, into code of its own.
        let refs: Vec<CellId> = names_in(self, &s.target).into_iter().filter(|&c| c != var).collect();
        let direct = {
            let mut named = false;
            s.target.for_each_name(&mut |id: &Ident| named |= id.name == s.var.name);
            named
        };
        if !direct && !reaches(self.cells, &refs, var) {
            return Err(Diagnostic::error(
                ErrorCode::BadSearch,
                s.target.span,
                format!(
                    "`{}` does not depend on `{}`",
                    self.sources.slice(s.target.span),
                    s.var.name
                ),
            )
            .with_label(format!("does not change with `{}`", s.var.name))
            .with_hint("search over an input the expression uses"));
        }
        let mut tcode: Vec<Instr> = Vec::new();
        let mut sub = Emitter {
            code: &mut tcode,
            call_args: &mut *em.call_args,
            slots: &mut *em.slots,
            next_temp: 0,
            peak: em.peak,
        };
        let (t, tq) = self.scalar(&mut sub, &s.target)?;
        let target_slot = sub.slots.alloc(1);
        let t = sub.slot_of(t);
        sub.code.push(Instr {
            op: Op::Copy,
            dst: target_slot,
            a: t,
            b: 0,
        });
        let sub_temps = sub.next_temp;
        let (goal, value) = match &s.goal {
            SearchGoal::Equals(v) => {
                fixed(v, "the target value")?;
                let (o, q) = self.scalar(em, v)?;
                if q.dim != tq.dim {
                    return Err(Diagnostic::error(
                        ErrorCode::DimensionMismatch,
                        v.span,
                        format!(
                            "the target value is {}, but the expression is {}",
                            q.describe(),
                            tq.describe()
                        ),
                    )
                    .with_label(q.describe())
                    .with_secondary(s.target.span, tq.describe())
                    .with_hint("the two sides of `=` must have one unit"));
                }
                // The same kind rules as a check's two sides: `arg(Z) = 0.5`
                // (degrees or radians?) and `im(S) = 100 kW` (a var against
                // a W) are refused, never read one way silently.
                kind_of_sum(tq.kind, q.kind, tq.dim).map_err(|m| {
                    Diagnostic::error(
                        if m.angle {
                            ErrorCode::AngleAmbiguous
                        } else {
                            ErrorCode::KindMismatch
                        },
                        v.span,
                        format!("the target value cannot be compared with the expression: {}", m.message),
                    )
                    .with_label(q.describe())
                    .with_secondary(s.target.span, tq.describe())
                    .with_hint(if m.angle {
                        "give the angle its unit: `30°` or `0.5 rad`"
                    } else {
                        m.hint
                    })
                })?;
                (Goal::Root, o)
            }
            SearchGoal::Largest => (Goal::Max, lo),
            SearchGoal::Smallest => (Goal::Min, lo),
        };
        let k = self.searches.borrow().len();
        if k >= MAX_SEARCHES {
            return Err(Diagnostic::error(
                ErrorCode::BadSearch,
                whole.span,
                format!("more than {MAX_SEARCHES} searches in one sheet"),
            ));
        }
        let info = em.slots.alloc(INFO_WIDTH);
        let search = Search {
            goal,
            cell: self.current,
            input: vc.slot,
            lo: em.slot_of(lo),
            hi: em.slot_of(hi),
            value: em.slot_of(value),
            target: target_slot,
            code: Vec::new(),
            saves: Vec::new(),
            save_base: 0,
            info,
        };
        // The target's temporaries share the region with every cell's.
        em.next_temp = em.next_temp.max(sub_temps);
        let dst = em.temp(1);
        em.code.push(Instr {
            op: Op::Search(k as u16),
            dst,
            a: dst,
            b: dst,
        });
        let (between, frontier) = self.between(var, &refs, &[&s.lo, &s.hi, &s.target], &s.goal);
        self.searches.borrow_mut().push(PendingSearch {
            cell: self.current,
            var,
            between,
            frontier,
            target_code: tcode,
            search,
        });
        Ok(Val::Scalar(Operand::Slot(dst), Quantity::new(vq.dim, vq.kind)))
    }
}

/// Give every search its sub-program (the code of the cells between, then
/// the target's) and its save list. Returns the searches in
/// instruction-index order.
pub fn finish(
    cells: &[Cell],
    pending: Vec<PendingSearch>,
    code: &[Instr],
    slots: &mut SlotSpace,
    temp_base: u32,
) -> Vec<Search> {
    let fix = |s: &mut u32| {
        if *s & TEMP_FLAG != 0 {
            *s = temp_base + (*s & !TEMP_FLAG);
        }
    };
    let search_of: std::collections::HashMap<CellId, usize> =
        pending.iter().enumerate().map(|(k, p)| (p.cell, k)).collect();
    let infos: Vec<u32> = pending.iter().map(|p| p.search.info).collect();
    let mut out = Vec::with_capacity(pending.len());
    for mut p in pending {
        fix(&mut p.search.lo);
        fix(&mut p.search.hi);
        fix(&mut p.search.value);
        for ins in &mut p.target_code {
            fix(&mut ins.dst);
            if !ins.op.uses_arg_table() {
                fix(&mut ins.a);
                if !ins.op.is_unary() {
                    fix(&mut ins.b);
                }
            }
        }
        let mut s = p.search;
        if cells[p.cell as usize].error.is_none() {
            let mut sub = Vec::new();
            let mut saves = vec![cells[p.var as usize].slot];
            for &c in &p.between {
                let cc = &cells[c as usize];
                sub.extend_from_slice(&code[cc.code.start as usize..cc.code.end as usize]);
                saves.extend(cc.slot..cc.slot + cc.width);
                if let Some(&inner) = search_of.get(&c) {
                    saves.extend(infos[inner]..infos[inner] + INFO_WIDTH);
                }
            }
            sub.extend_from_slice(&p.target_code);
            s.save_base = slots.alloc(saves.len() as u32);
            s.saves = saves;
            s.code = sub;
        }
        out.push(s);
    }
    out
}
