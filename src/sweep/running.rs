//! Running a sweep: the sub-program between the varied inputs and the
//! shown cells, evaluated 64 points at a time.

use num_complex::Complex64 as C64;

use super::{axis_index, check_size, total_points, Axis, Failure, Series, Study, SweepResult};
use crate::diag::{Diagnostic, ErrorCode};
use crate::engine::block::{Block, LANES};
use crate::engine::ops::Instr;
use crate::engine::{CellId, Engine, Model};
use crate::sheet::Sheet;

/// The instructions that recompute `to` after `from` change: the code of
/// every cell that depends on one of `from` and is needed by one of `to`,
/// in evaluation order. The `from` cells' own code is left out, so the
/// values set in their slots stand.
pub fn sub_program(m: &Model, from: &[CellId], to: &[CellId]) -> Vec<Instr> {
    let cells = between(m, from, to);
    let mut code = Vec::new();
    for id in cells {
        let r = &m.cells[id as usize].code;
        code.extend_from_slice(&m.program.code[r.start as usize..r.end as usize]);
    }
    code
}

/// Cells that depend on one of `from` and that one of `to` needs, in
/// evaluation order, `from` excluded.
pub fn between(m: &Model, from: &[CellId], to: &[CellId]) -> Vec<CellId> {
    let n = m.cells.len();
    let mut affected = vec![false; n];
    let mut stack: Vec<CellId> = from.to_vec();
    while let Some(c) = stack.pop() {
        for &d in &m.dependents[c as usize] {
            if !affected[d as usize] {
                affected[d as usize] = true;
                stack.push(d);
            }
        }
    }
    let mut needed = vec![false; n];
    let mut stack: Vec<CellId> = to.to_vec();
    for &t in to {
        needed[t as usize] = true;
    }
    while let Some(c) = stack.pop() {
        for &d in &m.cells[c as usize].deps {
            if !needed[d as usize] {
                needed[d as usize] = true;
                stack.push(d);
            }
        }
    }
    let mut out: Vec<CellId> = (0..n as CellId)
        .filter(|&i| affected[i as usize] && needed[i as usize] && !from.contains(&i))
        .filter(|&i| m.rank[i as usize] != u32::MAX)
        .collect();
    out.sort_by_key(|&i| m.rank[i as usize]);
    out
}

/// Evaluate every point of the grid of `axes`, 64 at a time, starting from
/// the engine's current values, and hand each point's shown values to
/// `sink(point, values)` in order.
pub fn run(engine: &Engine, axes: &[Axis], series: &[Series], mut sink: impl FnMut(usize, &[C64])) {
    let m = &engine.model;
    let prog = &m.program;
    let from: Vec<CellId> = axes.iter().map(|a| a.cell).collect();
    let to: Vec<CellId> = series.iter().map(|s| s.cell).collect();
    let code = sub_program(m, &from, &to);
    let mut block = Block::new(prog);
    for (s, v) in engine.slots().iter().enumerate() {
        block.fill(s as u32, *v);
    }
    let total = total_points(axes);
    let mut vals = vec![C64::new(0.0, 0.0); series.len()];
    // Values of the axes, computed once.
    let grid: Vec<Vec<f64>> = axes
        .iter()
        .map(|a| (0..a.count).map(|i| a.value(i)).collect())
        .collect();
    let mut p = 0usize;
    while p < total {
        let lanes = LANES.min(total - p);
        for l in 0..lanes {
            for (k, a) in axes.iter().enumerate() {
                let i = axis_index(axes, k, p + l);
                block.set(a.slot, l, C64::new(grid[k][i], 0.0));
            }
        }
        block.run(&code, prog);
        for l in 0..lanes {
            for (v, s) in vals.iter_mut().zip(series) {
                *v = block.get(s.slot, l);
            }
            sink(p + l, &vals);
        }
        p += lanes;
    }
}

/// Evaluate a sweep and keep every point.
pub fn collect(engine: &Engine, axes: &[Axis], series: &[Series], title: Option<String>) -> SweepResult {
    let total = total_points(axes);
    let mut values: Vec<Vec<C64>> = series.iter().map(|_| Vec::with_capacity(total)).collect();
    run(engine, axes, series, |_, v| {
        for (col, z) in values.iter_mut().zip(v) {
            col.push(*z);
        }
    });
    SweepResult {
        title,
        axes: axes.to_vec(),
        series: series.to_vec(),
        values,
    }
}

/// One input of a sweep request.
#[derive(Clone, Debug)]
pub struct AxisRequest<'a> {
    /// `NAME=START..STOP`
    pub range: &'a str,
    /// Number of points (`DEFAULT_POINTS` when neither this nor `step`).
    pub points: Option<usize>,
    /// Distance between points, with a unit (`25 µF`).
    pub step: Option<&'a str>,
    pub log: bool,
}

/// A whole sweep in one call (for the interactive session and other
/// library users; the CLI streams large CSV sweeps through `run`).
#[derive(Clone, Debug)]
pub struct SweepRequest<'a> {
    /// One input, or two for a grid.
    pub vary: Vec<AxisRequest<'a>>,
    /// Cells, `cell.field`s or expressions.
    pub show: Vec<&'a str>,
    pub max_points: usize,
}

/// Run a sweep over `sheet` and keep every point.
pub fn sweep(sheet: Sheet, req: &SweepRequest) -> Result<SweepResult, Failure> {
    let exprs: Vec<(&str, &str)> = req.show.iter().map(|s| ("--show", *s)).collect();
    let mut study = Study::new(sheet, &exprs)?;
    if req.vary.is_empty() || req.vary.len() > 2 {
        return Err(Failure::one(
            &study.model().sources,
            Diagnostic::unplaced(ErrorCode::BadRange, "a sweep varies one input, or two for a grid"),
        ));
    }
    let mut axes = Vec::new();
    for a in &req.vary {
        axes.push(study.axis("--vary", a.range, a.points, a.step, a.log)?);
    }
    let fail = |d: Diagnostic| Failure::one(&study.model().sources, d);
    if axes.len() == 2 && axes[0].cell == axes[1].cell {
        return Err(fail(Diagnostic::unplaced(
            ErrorCode::BadRange,
            format!("`{}` is varied twice", axes[0].name),
        )));
    }
    check_size(&axes, req.max_points).map_err(fail)?;
    let mut series = Vec::new();
    for s in &req.show {
        series.push(study.series(s).map_err(fail)?);
    }
    let title = study.model().meta.get("title").map(str::to_string);
    Ok(collect(&study.engine, &axes, &series, title))
}
