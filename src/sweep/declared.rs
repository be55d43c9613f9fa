//! Sweeps a sheet declares, for reports and for `ohmsheet sweep` without
//! `--vary`:
//!
//! ```text
//! @sweep "Bus voltage against bank size" C = 0 .. 600 µF, 121 points : Vbus, pf
//! @sweep f = 10 Hz .. 1 MHz, log, 401 points : Zin
//! @sweep C = 0 .. 600 µF, step 25 µF : Iline
//! ```
//!
//! An optional quoted title, then `NAME = START .. STOP` (numbers with
//! units), then options after commas (`N points`, `step S`, `log`), then a
//! colon and the cells to show. `compile` checks every `@sweep` line, so a
//! mistake in one is reported by `ohmsheet run` too.

use crate::diag::{Diagnostic, ErrorCode, Span};
use crate::engine::Model;
use crate::syntax::ast::Expr;

use super::{parse_expr_at, parse_range_at, resolve_axis, series_in, RangeText, Study, SweepResult};

/// One `@sweep` line, parsed.
#[derive(Clone, Debug)]
pub struct Declared {
    pub title: Option<String>,
    /// The directive's arguments.
    pub span: Span,
    pub range: RangeText,
    pub points: Option<usize>,
    pub step: Option<Expr>,
    pub log: bool,
    /// Shown cells as written, with their places.
    pub show: Vec<(String, Span)>,
}

/// Split at `sep` outside brackets and quotes: (piece, byte offset).
fn pieces(text: &str, sep: char) -> Vec<(&str, usize)> {
    let mut out = Vec::new();
    let mut depth = 0i32;
    let mut start = 0;
    for (i, c) in text.char_indices() {
        match c {
            '(' | '[' => depth += 1,
            ')' | ']' => depth -= 1,
            c if c == sep && depth == 0 => {
                out.push((&text[start..i], start));
                start = i + c.len_utf8();
            }
            _ => {}
        }
    }
    out.push((&text[start..], start));
    out
}

fn trimmed(piece: &str, at: usize) -> (&str, usize) {
    let lead = piece.len() - piece.trim_start().len();
    (piece.trim(), at + lead)
}

const FORM: &str =
    "write `@sweep NAME = START .. STOP, N points : CELL, CELL`, e.g. `@sweep C = 0 .. 600 µF, 121 points : Vbus, pf`";

/// Parse the arguments of one `@sweep` (the text at `span`).
pub fn parse(model: &Model, span: Span) -> Result<Declared, Diagnostic> {
    let text = model.sources.slice(span);
    let file = span.file;
    let base = span.start as usize;
    let sp = |a: usize, b: usize| Span::new(file, base + a, base + b);
    let mut rest_at = 0usize;
    let mut title = None;
    if let Some(body) = text.strip_prefix('"') {
        let mut end = None;
        let mut esc = false;
        for (i, c) in body.char_indices() {
            if esc {
                esc = false;
            } else if c == '\\' {
                esc = true;
            } else if c == '"' {
                end = Some(i);
                break;
            }
        }
        let Some(e) = end else {
            return Err(Diagnostic::error(ErrorCode::BadDirective, sp(0, 1), "unclosed title").with_hint(FORM));
        };
        title = Some(body[..e].replace("\\\"", "\""));
        rest_at = e + 2;
    }
    let rest = &text[rest_at..];
    let Some(colon) = rest.find(':') else {
        return Err(Diagnostic::error(
            ErrorCode::BadDirective,
            sp(rest_at, text.len()),
            "`@sweep` does not say what to show",
        )
        .with_label("no `:` and cell names")
        .with_hint(FORM));
    };
    let spec = &rest[..colon];
    let spec_at = rest_at;
    let parts = pieces(spec, ',');
    let (range_text, range_at) = parts[0];
    let range = parse_range_at(range_text, file, base + spec_at + range_at).map_err(|d| d.with_hint(FORM))?;
    let mut points = None;
    let mut step = None;
    let mut log = false;
    for &(p, at) in &parts[1..] {
        let (p, at) = trimmed(p, spec_at + at);
        let here = sp(at, at + p.len());
        if p == "log" {
            log = true;
        } else if let Some(n) = p.strip_suffix("points").map(str::trim) {
            points = Some(n.parse::<usize>().map_err(|_| {
                Diagnostic::error(
                    ErrorCode::BadDirective,
                    here,
                    format!("`{n}` is not a number of points"),
                )
                .with_hint("e.g. `121 points`")
            })?);
        } else if let Some(s) = p.strip_prefix("step") {
            step = Some(parse_expr_at(s, file, base + at + 4)?);
        } else {
            return Err(
                Diagnostic::error(ErrorCode::BadDirective, here, format!("unknown sweep option `{p}`"))
                    .with_hint("options are `N points`, `step S` and `log`"),
            );
        }
    }
    let shown_at = rest_at + colon + 1;
    let mut show = Vec::new();
    for (p, at) in pieces(&rest[colon + 1..], ',') {
        let (p, at) = trimmed(p, shown_at + at);
        if !p.is_empty() {
            show.push((p.to_string(), sp(at, at + p.len())));
        }
    }
    if show.is_empty() {
        return Err(Diagnostic::error(
            ErrorCode::BadDirective,
            sp(shown_at.min(text.len()), text.len()),
            "`@sweep` shows nothing",
        )
        .with_hint(FORM));
    }
    Ok(Declared {
        title,
        span,
        range,
        points,
        step,
        log,
        show,
    })
}

/// The model's `@sweep` lines that parse.
pub fn declared(model: &Model) -> Vec<Declared> {
    model.meta.sweeps.iter().filter_map(|&s| parse(model, s).ok()).collect()
}

fn resolve(model: &Model, d: &Declared) -> Result<(super::Axis, Vec<super::Series>), Diagnostic> {
    let ax = resolve_axis(model, &model.sources, &d.range, d.points, d.step.as_ref(), d.log)?;
    let mut series = Vec::new();
    for (name, span) in &d.show {
        let mut s = series_in(model, name).map_err(|mut e| {
            e.span = Some(*span);
            e
        })?;
        s.name = name.clone();
        series.push(s);
    }
    Ok((ax, series))
}

/// Every problem in the model's `@sweep` lines (called by `compile`).
pub fn check(model: &Model) -> Vec<Diagnostic> {
    let mut out = Vec::new();
    for &s in &model.meta.sweeps {
        match parse(model, s) {
            Err(d) => out.push(d),
            Ok(d) => {
                if let Err(e) =
                    resolve(model, &d).and_then(|(ax, _)| super::check_size(&[ax], super::DEFAULT_MAX_POINTS))
                {
                    let mut e = e;
                    if e.span.is_none() {
                        e.span = Some(s);
                    }
                    out.push(e);
                }
            }
        }
    }
    out
}

/// Run one declared sweep.
pub fn run_one(study: &Study, d: &Declared, max_points: usize) -> Result<SweepResult, Diagnostic> {
    let m = study.model();
    let (ax, series) = resolve(m, d)?;
    let axes = vec![ax];
    super::check_size(&axes, max_points)?;
    let title = d.title.clone().or_else(|| m.meta.get("title").map(str::to_string));
    Ok(super::collect(&study.engine, &axes, &series, title))
}

/// Run every sweep the sheet declares, in order, each with its evaluated
/// points (or the error that stopped it). For reports:
/// `plot::svg(&result, &PlotOptions::default())` draws one.
pub fn run_declared(model: &Model) -> Vec<Result<SweepResult, Diagnostic>> {
    if model.meta.sweeps.is_empty() {
        return Vec::new();
    }
    let study = Study::of_model(model.clone());
    model
        .meta
        .sweeps
        .iter()
        .map(|&s| parse(model, s).and_then(|d| run_one(&study, &d, super::DEFAULT_MAX_POINTS)))
        .collect()
}
