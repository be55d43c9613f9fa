//! Lines: splitting a sheet, the checks made on a raw line before pest
//! sees it (length, unsafe characters, brackets), and comments.

use pest::Parser;

use super::errors::syntax_error;
use super::{Cx, ParsedSheet, Rule, SheetGrammar, LIMITS, PARALLEL_LINES};
use crate::diag::{Diagnostic, ErrorCode, FileId, Span};
use crate::syntax::ast::*;

/// Parse a whole sheet. `text` must already be free of a leading BOM.
/// Lines are independent, so a long sheet is parsed in parallel; the
/// statements and errors come out in line order either way.
pub fn parse_sheet(text: &str, file: FileId) -> ParsedSheet {
    let mut lines = Vec::new();
    let mut start = 0usize;
    for (i, raw) in text.split('\n').enumerate() {
        let line = raw.strip_suffix('\r').unwrap_or(raw);
        lines.push(((i + 1) as u32, start, line));
        start += raw.len() + 1;
    }
    let parse = |&(line_no, start, line): &(u32, usize, &str)| parse_line(line, file, start, line_no);
    let results: Vec<_> = if lines.len() > PARALLEL_LINES {
        use rayon::prelude::*;
        lines.par_iter().with_min_len(256).map(parse).collect()
    } else {
        lines.iter().map(parse).collect()
    };
    let mut out = ParsedSheet {
        file,
        stmts: Vec::with_capacity(results.len()),
        ..Default::default()
    };
    for r in results {
        match r {
            Ok(Some(stmt)) => out.stmts.push(stmt),
            Ok(None) => {}
            Err(d) => out.errors.push(d),
        }
    }
    out
}

/// Parse one line that starts at byte `offset` of its file. `Ok(None)` for
/// a blank or comment-only line.
pub fn parse_line(line: &str, file: FileId, offset: usize, line_no: u32) -> Result<Option<Stmt>, Diagnostic> {
    let sp = |a: usize, b: usize| Span::new(file, offset + a, offset + b);
    if line.len() > LIMITS.max_line_bytes {
        return Err(Diagnostic::error(
            ErrorCode::LineTooLong,
            sp(LIMITS.max_line_bytes.min(line.len()), line.len()),
            format!(
                "line is {} bytes long; the limit is {}",
                line.len(),
                LIMITS.max_line_bytes
            ),
        )
        .with_label("too long from here")
        .with_hint("split the formula into several named cells"));
    }
    // Every unsafe character is an ASCII control or not ASCII at all, so a
    // line of printable ASCII and tabs needs no closer look.
    let plain = line.bytes().all(|b| (b' '..0x7f).contains(&b) || b == b'\t');
    if let Some((i, c)) = (!plain)
        .then(|| line.char_indices().find(|&(_, c)| crate::diag::is_unsafe_char(c)))
        .flatten()
    {
        let bidi = c > '\u{9f}';
        return Err(Diagnostic::error(
            ErrorCode::ControlCharacter,
            sp(i, i + c.len_utf8()),
            format!(
                "{} U+{:04X} in the sheet",
                if bidi {
                    "invisible bidirectional control"
                } else {
                    "control character"
                },
                c as u32
            ),
        )
        .with_label(if bidi {
            "it makes the line display in another order than it is read"
        } else {
            "not plain text"
        })
        .with_hint("sheets are plain text: delete the character (an editor that shows invisible characters helps)"));
    }
    let comment_at = find_comment_start(line);
    bracket_scan(&line[..comment_at.unwrap_or(line.len())], file, offset)?;
    // pest recurses once per bracket and the tree is converted recursively;
    // with brackets at most `max_bracket_depth` deep, the deepest line
    // allowed needs under 256 KiB of stack in a release build and under
    // 1 MiB in a debug build (`deepest_lines_parse_on_a_small_stack`).
    // Where less than that is left, the line is parsed on a stack of its own.
    stacker::maybe_grow(LINE_STACK_RED_ZONE, LINE_STACK, || {
        parse_bracketed(line, comment_at, file, offset, line_no)
    })
}

/// Stack a line's parse must find left, or it gets a stack of its own.
const LINE_STACK_RED_ZONE: usize = if cfg!(debug_assertions) {
    1536 * 1024
} else {
    512 * 1024
};
/// The size of that stack.
const LINE_STACK: usize = 4 * 1024 * 1024;

/// Parse a line whose brackets are known to match and to nest no deeper
/// than the limit.
pub(super) fn parse_bracketed(
    line: &str,
    comment_at: Option<usize>,
    file: FileId,
    offset: usize,
    line_no: u32,
) -> Result<Option<Stmt>, Diagnostic> {
    let code = &line[..comment_at.unwrap_or(line.len())];
    let pairs = match SheetGrammar::parse(Rule::line, code) {
        Ok(p) => p,
        Err(e) => return Err(syntax_error(code, e, file, offset)),
    };
    let cx = Cx { file, offset, line };
    let line_pair = pairs.into_iter().next().expect("line rule");
    let Some(stmt_pair) = line_pair.into_inner().find(|p| p.as_rule() != Rule::EOI) else {
        return Ok(None);
    };
    let span = cx.span(&stmt_pair);
    let kind = cx.statement(stmt_pair)?;
    let comment = comment_at.map(|i| line[i + 1..].trim().to_string());
    Ok(Some(Stmt {
        kind,
        span,
        line: line_no,
        comment,
    }))
}

/// Byte index of the `#` that starts a comment, skipping quoted strings.
/// Byte by byte: the characters that matter are ASCII, and no byte of a
/// longer UTF-8 character is.
pub fn find_comment_start(line: &str) -> Option<usize> {
    let bytes = line.as_bytes();
    // Most lines have no comment; a quote matters only before a `#`.
    let first = memchr::memchr(b'#', bytes)?;
    if !bytes[..first].contains(&b'"') {
        return Some(first);
    }
    let mut in_str = false;
    let mut escaped = false;
    for (i, &c) in bytes.iter().enumerate() {
        if in_str {
            if escaped {
                escaped = false;
            } else if c == b'\\' {
                escaped = true;
            } else if c == b'"' {
                in_str = false;
            }
        } else if c == b'"' {
            in_str = true;
        } else if c == b'#' {
            return Some(i);
        }
    }
    None
}

/// Check bracket depth before handing the line to the recursive-descent
/// parser, and report an unclosed or stray bracket precisely.
pub(super) fn bracket_scan(code: &str, file: FileId, offset: usize) -> Result<(), Diagnostic> {
    let mut stack: Vec<(usize, char)> = Vec::new();
    let mut in_str = false;
    // Byte by byte, as in `find_comment_start`: brackets and quotes are ASCII.
    for (i, c) in code.bytes().enumerate() {
        let c = c as char;
        if c == '"' {
            in_str = !in_str;
        }
        if in_str {
            continue;
        }
        match c {
            '(' | '[' => {
                stack.push((i, c));
                if stack.len() > LIMITS.max_bracket_depth {
                    return Err(Diagnostic::error(
                        ErrorCode::NestingTooDeep,
                        Span::new(file, offset + i, offset + i + 1),
                        format!("brackets nested more than {} deep", LIMITS.max_bracket_depth),
                    )
                    .with_label("too deep here")
                    .with_hint("split the formula into several named cells"));
                }
            }
            ')' | ']' => {
                let want = if c == ')' { '(' } else { '[' };
                match stack.pop() {
                    Some((_, open)) if open == want => {}
                    Some((j, open)) => {
                        return Err(Diagnostic::error(
                            ErrorCode::Syntax,
                            Span::new(file, offset + i, offset + i + 1),
                            format!("`{c}` does not match the `{open}` before it"),
                        )
                        .with_label("mismatched")
                        .with_secondary(Span::new(file, offset + j, offset + j + 1), "opened here"));
                    }
                    None => {
                        return Err(Diagnostic::error(
                            ErrorCode::Syntax,
                            Span::new(file, offset + i, offset + i + 1),
                            format!("`{c}` has no opening `{want}`"),
                        )
                        .with_label("nothing to close"));
                    }
                }
            }
            _ => {}
        }
    }
    if let Some(&(j, open)) = stack.last() {
        let close = if open == '(' { ')' } else { ']' };
        return Err(Diagnostic::error(
            ErrorCode::Syntax,
            Span::new(file, offset + j, offset + j + 1),
            format!("unclosed `{open}`"),
        )
        .with_label("opened here and never closed")
        .with_hint(format!("add `{close}` where the bracketed part ends")));
    }
    Ok(())
}
