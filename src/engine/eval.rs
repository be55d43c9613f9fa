//! Running a compiled program one case at a time, and the incremental
//! engine that re-runs only what an input change reaches.

use std::cmp::Reverse;
use std::collections::BinaryHeap;

use num_complex::Complex64 as C64;

use super::model::{CellId, Model};
use super::ops::{apply1, apply2, Instr, Op};
use super::program::Program;
use crate::funcs::{self, Ctx, Impl};

/// Run instructions over `slots`.
#[inline]
pub fn run(code: &[Instr], prog: &Program, slots: &mut [C64]) {
    for ins in code {
        exec(ins, prog, slots);
    }
}

#[inline]
fn exec(ins: &Instr, prog: &Program, s: &mut [C64]) {
    let v = match ins.op {
        Op::Add => s[ins.a as usize] + s[ins.b as usize],
        Op::Sub => s[ins.a as usize] - s[ins.b as usize],
        Op::Mul => super::ops::mul(s[ins.a as usize], s[ins.b as usize]),
        Op::Call(fid) => {
            call(fid, ins, prog, s);
            return;
        }
        Op::Search(k) => {
            super::search::exec_scalar(k as usize, ins.dst, prog, s);
            return;
        }
        Op::Select => super::ops::select(s[ins.a as usize], s[ins.b as usize], s[ins.b as usize + 1]),
        Op::Network(k) => {
            network(k, ins, prog, s);
            return;
        }
        op if op.is_unary() => apply1(op, s[ins.a as usize], ins.b),
        op => apply2(op, s[ins.a as usize], s[ins.b as usize]),
    };
    s[ins.dst as usize] = v;
}

fn call(fid: u16, ins: &Instr, prog: &Program, s: &mut [C64]) {
    let f = &funcs::library()[fid as usize];
    let Impl::Scalar(eval) = f.imp else {
        unreachable!("only scalar functions are called")
    };
    // call_args[a] is the number of results; the argument slots follow.
    let base = ins.a as usize;
    let width = prog.call_args[base] as usize;
    let n = ins.b as usize;
    let mut args = [C64::new(0.0, 0.0); funcs::MAX_CALL_ARGS];
    for (k, a) in args[..n].iter_mut().enumerate() {
        *a = s[prog.call_args[base + 1 + k] as usize];
    }
    let mut out = [C64::new(0.0, 0.0); funcs::MAX_CALL_ARGS];
    eval(&args[..n], &mut out[..width], &Ctx { peak: prog.peak });
    let dst = ins.dst as usize;
    s[dst..dst + width].copy_from_slice(&out[..width]);
}

/// Solve a network for one case; a case without a solution gives NaN
/// results (the reason is found again when the NaN is explained).
pub(super) fn network(k: u16, ins: &Instr, prog: &Program, s: &mut [C64]) {
    let net = &prog.networks[k as usize];
    let base = ins.a as usize;
    let width = prog.call_args[base] as usize;
    let dst = ins.dst as usize;
    crate::network::with_workspace(|ws| {
        let mut args = std::mem::take(&mut ws.args);
        args.clear();
        args.extend(
            prog.call_args[base + 1..base + 1 + ins.b as usize]
                .iter()
                .map(|&a| s[a as usize]),
        );
        let _ = net.run_in(ws, &args, &mut s[dst..dst + width]);
        ws.args = args;
    });
}

/// A cell's values: one for most cells, kept inline (no allocation);
/// more for a record.
pub type Values = smallvec::SmallVec<[C64; 1]>;

/// A change of one cell's value after an edit.
#[derive(Clone, Debug, PartialEq)]
pub struct Change {
    pub cell: CellId,
    pub old: Values,
    pub new: Values,
}

/// A model with current values. Setting an input re-evaluates only the
/// cells that depend on it, in topological order, and stops early where a
/// recomputed value comes out bit-identical.
#[derive(Clone, Debug)]
pub struct Engine {
    pub model: Model,
    pub(super) slots: Vec<C64>,
    /// Cells re-evaluated by the last update (for tests and benchmarks).
    pub last_recomputed: Vec<CellId>,
    pub(super) queued: Vec<bool>,
    /// The dirty queue, by rank; kept between updates to save allocating.
    heap: BinaryHeap<Reverse<(u32, CellId)>>,
}

impl Engine {
    pub fn new(model: Model) -> Engine {
        let mut slots = model.program.init.clone();
        run(&model.program.code, &model.program, &mut slots);
        let n = model.cells.len();
        Engine {
            model,
            slots,
            last_recomputed: Vec::new(),
            queued: vec![false; n],
            heap: BinaryHeap::new(),
        }
    }

    /// The current value of a cell's slots (one for a scalar, several for a
    /// record or check).
    pub fn values(&self, id: CellId) -> &[C64] {
        let c = &self.model.cells[id as usize];
        &self.slots[c.slot as usize..(c.slot + c.width) as usize]
    }

    pub fn value(&self, id: CellId) -> C64 {
        self.values(id)[0]
    }

    pub fn slots(&self) -> &[C64] {
        &self.slots
    }

    /// Give input cell `id` a new value (in coherent SI units) and
    /// recompute what depends on it. Returns the cells whose values changed,
    /// the input first, then in evaluation order.
    pub fn set_input(&mut self, id: CellId, value: C64) -> Vec<Change> {
        let cell = &self.model.cells[id as usize];
        let slot = cell.slot as usize;
        let old = self.slots[slot];
        self.last_recomputed.clear();
        if old.re.to_bits() == value.re.to_bits() && old.im.to_bits() == value.im.to_bits() {
            return Vec::new();
        }
        self.slots[slot] = value;
        let mut changes = vec![Change {
            cell: id,
            old: smallvec::smallvec![old],
            new: smallvec::smallvec![value],
        }];
        self.propagate(id, &mut changes);
        changes
    }

    pub(super) fn propagate(&mut self, from: CellId, changes: &mut Vec<Change>) {
        let m = &self.model;
        let heap = &mut self.heap;
        heap.clear();
        enqueue(m, &mut self.queued, heap, from);
        let same = |a: &C64, b: &C64| a.re.to_bits() == b.re.to_bits() && a.im.to_bits() == b.im.to_bits();
        while let Some(Reverse((_, id))) = heap.pop() {
            self.queued[id as usize] = false;
            self.last_recomputed.push(id);
            let c = &m.cells[id as usize];
            let range = c.slot as usize..(c.slot + c.width) as usize;
            // The old value, on the stack for the usual single slot.
            let mut small = [C64::new(0.0, 0.0); 4];
            let big;
            let before: &[C64] = if range.len() <= small.len() {
                small[..range.len()].copy_from_slice(&self.slots[range.clone()]);
                &small[..range.len()]
            } else {
                big = self.slots[range.clone()].to_vec();
                &big
            };
            run(
                &m.program.code[c.code.start as usize..c.code.end as usize],
                &m.program,
                &mut self.slots,
            );
            let after = &self.slots[range];
            if before.iter().zip(after).all(|(a, b)| same(a, b)) {
                continue;
            }
            changes.push(Change {
                cell: id,
                old: Values::from_slice(before),
                new: Values::from_slice(after),
            });
            enqueue(m, &mut self.queued, heap, id);
        }
    }

    /// Cells whose value is NaN while none of their inputs is: where an
    /// undefined result was born.
    pub fn nan_origins(&self) -> Vec<CellId> {
        let is_nan = |id: CellId| self.values(id).iter().any(|z| z.re.is_nan() || z.im.is_nan());
        self.model
            .order
            .iter()
            .copied()
            .filter(|&id| is_nan(id) && !self.model.cells[id as usize].deps.iter().any(|&d| is_nan(d)))
            .collect()
    }
}

/// Queue the dependents of `of` that are not queued yet, by rank.
fn enqueue(m: &Model, queued: &mut [bool], heap: &mut BinaryHeap<Reverse<(u32, CellId)>>, of: CellId) {
    for &d in &m.dependents[of as usize] {
        if m.rank[d as usize] != u32::MAX && !queued[d as usize] {
            queued[d as usize] = true;
            heap.push(Reverse((m.rank[d as usize], d)));
        }
    }
}

/// Outcome of one check.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CheckResult {
    pub lhs: C64,
    pub rhs: C64,
    /// |lhs - rhs|
    pub diff: f64,
    /// The allowed |difference|.
    pub tol: f64,
    pub passed: bool,
}

/// Evaluate a check cell's verdict from its three slots.
pub fn check_result(model: &Model, id: CellId, vals: &[C64]) -> CheckResult {
    let cell = &model.cells[id as usize];
    let (lhs, rhs, t) = (vals[0], vals[1], vals[2]);
    let diff = super::ops::abs(lhs - rhs);
    let tol = match cell.tol {
        Some(super::model::TolSpec::Relative(f)) => f * super::ops::abs(rhs),
        _ => super::ops::abs(t),
    };
    CheckResult {
        lhs,
        rhs,
        diff,
        tol,
        passed: diff <= tol,
    }
}
