//! Why a case's value is not a number, in words.
//!
//! The one place a batch run words the cause of a NaN for its errors file;
//! it gives the reason `run` gives for the same sheet: an in-sheet search
//! that found no answer says why, a function whose domain the case left
//! names the argument (`engine::explain`), any other NaN names the cell
//! where it was born.

use num_complex::Complex64 as C64;

use crate::engine::{CellId, Model};

/// Why cell `id` is NaN in a case whose values are `slots` (the whole
/// program run for that case): the message and hint `run` would give.
pub fn nan_reason(m: &Model, slots: &[C64], id: CellId) -> String {
    if let Some(d) = crate::sweep::search_failure_in(m, slots, id) {
        return match &d.hint {
            Some(h) => format!("{} ({h})", d.message),
            None => d.message,
        };
    }
    // the function whose domain the case left, located as `run` locates it
    if let Some(why) = crate::engine::explain::explain(m, slots, id) {
        return format!(
            "`{}` is NaN: {} (at {})",
            m.cells[id as usize].name,
            why.text(),
            m.sources.location(why.span)
        );
    }
    let c = &m.cells[id as usize];
    format!(
        "`{}` evaluated to NaN (not a number): look for 0/0, ∞ − ∞, 0·∞ or a function outside its domain in this case",
        c.name
    )
}

/// Why cell `id` is infinite in a case whose values are `slots`: where the
/// infinity was born and why, as `run` says it (`engine::explain`).
pub fn inf_reason(m: &Model, slots: &[C64], id: CellId) -> String {
    let d = crate::engine::infinite::inf_diagnostic(m, slots, id, false);
    let at = d.span.map(|s| m.sources.location(s)).unwrap_or_default();
    format!("{} (at {at})", d.message)
}
