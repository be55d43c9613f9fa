//! Values where the engineer looks: at the end of each definition line its
//! cell's value (in the display unit, rectangular or polar), at the end of
//! each check line its verdict and margin. A cell with an error, or that
//! uses one, shows nothing: never a stale value. The hints of a range of
//! lines start in one column, so a sheet stays readable.

use std::ops::Range;

use unicode_width::UnicodeWidthStr;

use super::document::{Document, Place};
use super::values::cell_vals;
use super::Display;
use crate::engine::{check_result, Role};

/// Hints are aligned to the longest line of the range, up to this width;
/// a longer line has its hint right after it.
const ALIGN_MAX: usize = 60;
/// A value longer than this (a record's fields) is cut with `…`.
const MAX_LABEL: usize = 80;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum HintKind {
    Value,
    Check { passed: bool },
}

#[derive(Clone, Debug, PartialEq)]
pub struct Hint {
    /// The line (0-based) and the byte offset of its end in the text.
    pub line: usize,
    pub offset: usize,
    /// Spaces that bring the label to the common column.
    pub pad: usize,
    pub label: String,
    pub kind: HintKind,
}

/// The hints for the lines in `lines`.
pub fn hints(doc: &Document, display: Display, lines: Range<usize>) -> Vec<Hint> {
    let m = &doc.engine.model;
    let lines = lines.start.min(doc.line_count())..lines.end.min(doc.line_count());
    let mut found: Vec<(usize, String, HintKind)> = Vec::new();
    for (i, c) in m.cells.iter().enumerate() {
        if c.error.is_some() {
            continue;
        }
        let span = match c.role {
            Role::Def => c.name_span,
            Role::Check => c.stmt_span,
        };
        let Some(at) = doc.locate(span) else { continue };
        if at.place != Place::Main {
            continue;
        }
        let line = doc.line_of(at.range.start);
        if !lines.contains(&line) {
            continue;
        }
        let id = i as u32;
        let vals = doc.engine.values(id);
        let (label, kind) = match c.role {
            Role::Def => (
                format!("⇒ {}", cell_vals(m, id, vals, display.style, display.polar)),
                HintKind::Value,
            ),
            Role::Check => {
                let passed = check_result(m, id, vals).passed;
                let text = cell_vals(m, id, vals, display.style, display.polar);
                (
                    format!("{} {text}", if passed { "✓" } else { "✗" }),
                    HintKind::Check { passed },
                )
            }
        };
        found.push((line, shorten(&label), kind));
    }
    found.sort_by_key(|h| h.0);
    let width = |i: usize| doc.line_text(i).trim_end().width();
    let column = found
        .iter()
        .map(|h| width(h.0))
        .filter(|&w| w <= ALIGN_MAX)
        .max()
        .unwrap_or(0);
    found
        .into_iter()
        .map(|(line, label, kind)| Hint {
            line,
            offset: doc.line_range(line).end,
            pad: column.saturating_sub(doc.line_text(line).width()) + 2,
            label,
            kind,
        })
        .collect()
}

fn shorten(s: &str) -> String {
    if s.chars().count() <= MAX_LABEL {
        return s.to_string();
    }
    let mut t: String = s.chars().take(MAX_LABEL - 1).collect();
    t.push('…');
    t
}
