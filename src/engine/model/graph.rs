//! The dependency graph: evaluation order and cycles.

use super::*;
use crate::diag::{Diagnostic, ErrorCode, SourceMap};

/// Cells in an order where each comes after the cells it uses (Kahn's
/// algorithm), taking the earliest line whenever several are ready: a
/// sheet written top-down is compiled in the order of its lines, so the
/// compiler reads its cells and trees in the order they lie in memory and
/// the program follows the sheet. Cells in or behind a cycle are left out.
/// Iterative, so a chain of any length costs no stack.
pub(super) fn topo_order(cells: &[Cell], dependents: &[Vec<CellId>]) -> Vec<CellId> {
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
pub(super) fn report_cycles(cells: &mut [Cell], topo: &[CellId], diags: &mut Vec<Diagnostic>, sources: &SourceMap) {
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
