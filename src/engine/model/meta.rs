//! Directives (`@title`, `@amplitude`, …) and `@note` targets.

use super::*;
use crate::diag::{did_you_mean, Diagnostic, ErrorCode, Span};
use crate::funcs::Ctx;

/// Every `@note` must name a cell of the sheet.
pub(super) fn check_note_targets(meta: &Meta, by_name: &NameMap, diags: &mut Vec<Diagnostic>) {
    for n in &meta.notes {
        let Some(cell) = &n.cell else { continue };
        if by_name.contains_key(cell) {
            continue;
        }
        let mut d = Diagnostic::error(
            ErrorCode::UnknownName,
            n.span,
            format!("`@note` is about `{cell}`, which the sheet does not define"),
        )
        .with_label("no cell of this name");
        d = match did_you_mean(cell, by_name.keys().map(String::as_str)) {
            Some(s) => d.with_hint(format!("did you mean `{s}`?")),
            None => d.with_hint("write `@note CELL \"text\"` for a cell, or `@note \"text\"` for the whole sheet"),
        };
        diags.push(d);
    }
}

pub(super) fn directive(
    dir: &Directive,
    stmt_span: Span,
    meta: &mut Meta,
    ctx: &mut Ctx,
    seen: &mut Option<Span>,
    diags: &mut Vec<Diagnostic>,
) {
    let name = dir.name.name.as_str();
    let whole = dir.args.first().map_or(dir.name.span, |a| {
        dir.name.span.to(dir.args.last().map_or(a.span, |l| l.span))
    });
    match name {
        "amplitude" => {
            let arg = dir.args.first().map(|a| a.text.as_str());
            match (arg, dir.args.len()) {
                (Some("rms"), 1) => ctx.peak = false,
                (Some("peak"), 1) => ctx.peak = true,
                _ => {
                    diags.push(
                        Diagnostic::error(ErrorCode::BadDirective, whole, "`@amplitude` takes `rms` or `peak`")
                            .with_hint("phasors are RMS unless the sheet says `@amplitude peak`"),
                    );
                    return;
                }
            }
            if let Some(prev) = seen.replace(whole) {
                diags.push(
                    Diagnostic::error(
                        ErrorCode::BadDirective,
                        whole,
                        "the amplitude convention is stated twice",
                    )
                    .with_secondary(prev, "first stated here"),
                );
            }
        }
        "note" => match dir.args.as_slice() {
            [text] if text.quoted => meta.notes.push(Note {
                cell: None,
                text: text.text.clone(),
                span: text.span,
            }),
            [cell, text @ ..] if !cell.quoted && !text.is_empty() && text.iter().all(|t| t.quoted) => {
                let words: Vec<&str> = text.iter().map(|t| t.text.as_str()).collect();
                meta.notes.push(Note {
                    cell: Some(cell.text.clone()),
                    text: words.join(" "),
                    span: cell.span,
                });
            }
            _ => diags.push(
                Diagnostic::error(ErrorCode::BadDirective, stmt_span, "`@note` takes a cell name and a text in quotes")
                    .with_hint("e.g. @note Zc \"values from the library sheet, conductor at 90 °C\"; a note on the whole sheet is @note \"text\""),
            ),
        },
        "sweep" => match (dir.args.first(), dir.args.last()) {
            (Some(a), Some(b)) => meta.sweeps.push(a.span.to(b.span)),
            _ => diags.push(
                Diagnostic::error(
                    ErrorCode::BadDirective,
                    whole,
                    "`@sweep` needs a range and cells to show",
                )
                .with_hint("e.g. @sweep C = 0 .. 600 µF, 121 points : Vbus, pf"),
            ),
        },
        k if META_KEYS.contains(&k) => {
            if dir.args.is_empty() {
                diags.push(
                    Diagnostic::error(ErrorCode::BadDirective, whole, format!("`@{k}` needs a value"))
                        .with_hint(format!("e.g. @{k} \"text\"")),
                );
                return;
            }
            let text: Vec<&str> = dir.args.iter().map(|a| a.text.as_str()).collect();
            meta.entries.push((k.to_string(), text.join(" ")));
        }
        _ => {
            let mut known: Vec<&str> = META_KEYS.to_vec();
            known.extend(["amplitude", "note", "include", "sweep"]);
            let mut d = Diagnostic::error(
                ErrorCode::UnknownDirective,
                dir.name.span,
                format!("unknown directive `@{name}`"),
            );
            d = match did_you_mean(name, known.iter().copied()) {
                Some(s) => d.with_hint(format!("did you mean `@{s}`?")),
                None => d.with_hint(format!(
                    "directives are: {}",
                    known.iter().map(|k| format!("@{k}")).collect::<Vec<_>>().join(", ")
                )),
            };
            diags.push(d);
        }
    }
}
