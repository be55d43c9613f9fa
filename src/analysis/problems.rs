//! Every problem of an open sheet, as the command line reports it (same
//! code, place, message and hint), with byte ranges in the current text:
//! errors and notes of compiling, a value that is not a number where it
//! was born (with the function whose domain was left, as `run` says), and
//! a failed check as a warning with its computed and stated values. An
//! error inside an included sheet is given twice: in that sheet, and at
//! the `@include` line that brought it in.

use std::ops::Range;

use super::document::{Document, Place};
use super::Display;
use crate::diag::{Diagnostic, Severity};
use crate::engine::check_result;
use crate::units::format::format_value;

/// A further place a problem speaks of.
#[derive(Clone, Debug, PartialEq)]
pub struct Related {
    pub place: Place,
    pub range: Range<usize>,
    pub text: String,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Problem {
    pub place: Place,
    pub range: Range<usize>,
    pub error: bool,
    /// The error code's name (`unknown-name`); None for a failed check.
    pub code: Option<&'static str>,
    pub message: String,
    /// The short text under the caret.
    pub label: String,
    pub hint: Option<String>,
    pub related: Vec<Related>,
}

impl Problem {
    /// The message with its label and hint, as one text for an editor.
    pub fn full_text(&self) -> String {
        let mut s = self.message.clone();
        if !self.label.is_empty() {
            s.push_str(&format!(" ({})", self.label));
        }
        if let Some(h) = &self.hint {
            s.push_str(&format!("\nhint: {h}"));
        }
        s
    }
}

/// The problems of `doc`, in order of place.
pub fn problems(doc: &Document, display: Display) -> Vec<Problem> {
    let engine = &doc.engine;
    let m = &engine.model;
    let mut out = Vec::new();
    let push = |d: &Diagnostic, out: &mut Vec<Problem>| {
        let (place, range) = match doc.locate_diag(d) {
            Some(l) => (l.place, l.range),
            // No place (a file that cannot be read): the top of the sheet.
            None => (Place::Main, 0..0),
        };
        let related = d
            .secondary
            .iter()
            .filter_map(|(s, t)| {
                doc.locate(*s).map(|l| Related {
                    place: l.place,
                    range: l.range,
                    text: t.clone(),
                })
            })
            .collect();
        let p = Problem {
            place,
            range,
            error: d.severity == Severity::Error,
            code: Some(d.code.name()),
            message: d.message.clone(),
            label: d.label.clone(),
            hint: d.hint.clone(),
            related,
        };
        // An error in an included sheet: also at the `@include` line.
        if let (Place::File(_), Some(site)) = (&p.place, d.span.and_then(|s| doc.include_site(s.file))) {
            if let Some(at) = doc.locate(site) {
                let sp = d.span.expect("placed");
                let file = m.sources.get(sp.file).name.clone();
                let (line, col) = m.sources.get(sp.file).line_col(sp.start as usize);
                out.push(Problem {
                    place: at.place,
                    range: at.range,
                    error: p.error,
                    code: p.code,
                    message: format!("in the included sheet {file}:{line}:{col}: {}", p.message),
                    label: p.label.clone(),
                    hint: p.hint.clone(),
                    related: vec![Related {
                        place: p.place.clone(),
                        range: p.range.clone(),
                        text: "the problem is here".into(),
                    }],
                });
            }
        }
        out.push(p);
    };
    for d in &m.diagnostics {
        push(d, &mut out);
    }
    // A value that is not a number, where it was born (as `run` reports it).
    for id in engine.nan_origins() {
        let d = crate::sweep::search_failure(engine, id).unwrap_or_else(|| engine.nan_diagnostic(id));
        push(&d, &mut out);
    }
    // An infinite value, where it was born: an error, or a warning for an
    // open or short element (as `run` reports it).
    for (id, error) in engine.inf_origins() {
        push(&engine.inf_diagnostic(id, error), &mut out);
    }
    // Failed checks: a warning with the computed and stated values.
    for (id, c) in m.checks() {
        if c.error.is_some() {
            continue;
        }
        let r = check_result(m, id, engine.values(id));
        if r.passed || r.diff.is_nan() {
            continue;
        }
        let Some(at) = doc.locate(c.stmt_span) else { continue };
        let q = c.checked_quantity();
        let show = |z| {
            let f = format_value(z, q, c.display.as_ref(), display.style);
            if display.polar {
                f.polar
            } else {
                f.rect
            }
        };
        let (diff, tol) = crate::units::format::check_gap(q, c.display.as_ref(), r.diff, r.tol, display.style);
        out.push(Problem {
            place: at.place,
            range: at.range,
            error: false,
            code: None,
            message: format!(
                "check fails: computed {}, stated {}; off by {diff}, allowed {tol}",
                show(r.lhs),
                show(r.rhs)
            ),
            label: String::new(),
            hint: None,
            related: Vec::new(),
        });
    }
    out.sort_by(|a, b| {
        (a.place != Place::Main, a.range.start, a.range.end).cmp(&(b.place != Place::Main, b.range.start, b.range.end))
    });
    out
}
