//! From text to syntax tree. A sheet is split into lines and each line is
//! parsed on its own with the pest rule `line`; operator precedence is
//! climbed here with pest's `PrattParser`.
//!
//! Invariant: parsing never panics and never recurses without bound. Line
//! length, bracket depth, runs of prefix/power operators and the depth of
//! the finished tree are all limited (see `Limits`), and each limit turns
//! into a located error.

use std::sync::OnceLock;

use pest::iterators::{Pair, Pairs};
use pest::pratt_parser::{Assoc, Op, PrattParser};
use pest::Parser;

use super::ast::*;
use crate::diag::{Diagnostic, ErrorCode, FileId, Span};
use crate::units::table::prefix_factor;
use crate::units::{parse_unit_expr, Unit, UnitError};

#[derive(pest_derive::Parser)]
#[grammar = "../grammar/ohmsheet.pest"]
struct SheetGrammar;

/// Limits that turn abusive input into a clear error instead of a stack
/// overflow or a hang.
#[derive(Clone, Copy, Debug)]
pub struct Limits {
    /// Longest line, in bytes.
    pub max_line_bytes: usize,
    /// Deepest nesting of brackets on one line.
    pub max_bracket_depth: usize,
    /// Deepest expression tree.
    pub max_expr_depth: usize,
}

pub const LIMITS: Limits = Limits {
    max_line_bytes: 10_000,
    max_bracket_depth: 64,
    max_expr_depth: 500,
};

/// The statements of one file and the errors met reading it.
#[derive(Clone, Debug, Default)]
pub struct ParsedSheet {
    pub file: FileId,
    pub stmts: Vec<Stmt>,
    pub errors: Vec<Diagnostic>,
}

/// Sheets with more lines than this are parsed on all cores.
const PARALLEL_LINES: usize = 2000;

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
fn parse_bracketed(
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
fn bracket_scan(code: &str, file: FileId, offset: usize) -> Result<(), Diagnostic> {
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

fn describe_rule(r: &Rule) -> Option<&'static str> {
    Some(match r {
        Rule::expr | Rule::operand | Rule::atom => "a value",
        Rule::quantity | Rule::number | Rule::mantissa => "a number",
        Rule::name | Rule::name_ref => "a name",
        Rule::call => "a function call",
        Rule::paren | Rule::paren_q => "`(`",
        Rule::infix
        | Rule::add
        | Rule::sub
        | Rule::mul
        | Rule::div
        | Rule::pow
        | Rule::par
        | Rule::ser
        | Rule::angle => "an operator",
        Rule::unit_expr | Rule::unit_factor | Rule::unit_word | Rule::suffix => "a unit",
        Rule::display_unit => "a display unit `[...]`",
        Rule::EOI => "the end of the line",
        Rule::field => "`.field`",
        Rule::definition => "a definition `name = ...`",
        Rule::check => "`check`",
        Rule::directive => "`@`",
        Rule::darg | Rule::dstring | Rule::dword => "an argument",
        Rule::neg | Rule::pos | Rule::prefix => "a sign",
        Rule::exponent => "an exponent",
        Rule::kw_is => "`is largest` or `is smallest`",
        Rule::search_eq => "`= value`",
        Rule::kw_largest | Rule::kw_smallest => "`largest` or `smallest`",
        Rule::kw_where => "`where`",
        _ => return None,
    })
}

fn syntax_error(line: &str, e: pest::error::Error<Rule>, file: FileId, offset: usize) -> Diagnostic {
    use pest::error::{ErrorVariant, InputLocation};
    let pos = match e.location {
        InputLocation::Pos(p) => p,
        InputLocation::Span((a, _)) => a,
    };
    let mut expected: Vec<&str> = match &e.variant {
        ErrorVariant::ParsingError { positives, .. } => positives.iter().filter_map(describe_rule).collect(),
        ErrorVariant::CustomError { .. } => vec![],
    };
    expected.sort();
    expected.dedup();
    let rest = &line[pos.min(line.len())..];
    let found: String = rest.chars().take_while(|c| !c.is_whitespace()).take(12).collect();
    let end = pos + rest.chars().next().map_or(0, char::len_utf8);
    let what = if found.is_empty() {
        "the end of the line".to_string()
    } else {
        format!("`{found}`")
    };
    let mut d = Diagnostic::error(
        ErrorCode::Syntax,
        Span::new(file, offset + pos, offset + end),
        format!("unexpected {what}"),
    );
    if !expected.is_empty() {
        d = d.with_label(format!("expected {}", join_or(&expected)));
    }
    // Targeted hints for common slips.
    let before = line[..pos.min(line.len())].trim_end();
    if rest.starts_with("==") || (rest.starts_with('=') && before.contains('=')) {
        d = d.with_hint("a definition has one `=`; to compare values write `check a ~= b +- 1%`");
    } else if rest.starts_with("+-") || rest.starts_with('±') {
        d = d.with_hint("`+-` (±) only separates a tolerance in a `check`; to add a negative write `a + (-b)`");
    } else if before.ends_with('=') && rest.is_empty() {
        d = d.with_hint("a definition needs a formula after `=`");
    } else if found.starts_with(|c: char| c.is_alphabetic())
        && before.chars().last().is_some_and(|c| c.is_alphanumeric() || c == ')')
    {
        d = d.with_hint("two values side by side: multiplication needs `*`");
    } else if rest.starts_with("--") {
        d = d.with_hint("`--` is the series operator; to subtract a negative write `a - -b` with a space");
    }
    d
}

fn join_or(items: &[&str]) -> String {
    match items {
        [] => String::new(),
        [a] => a.to_string(),
        [rest @ .., last] => format!("{} or {}", rest.join(", "), last),
    }
}

fn pratt() -> &'static PrattParser<Rule> {
    static P: OnceLock<PrattParser<Rule>> = OnceLock::new();
    P.get_or_init(|| {
        PrattParser::new()
            .op(Op::infix(Rule::add, Assoc::Left) | Op::infix(Rule::sub, Assoc::Left))
            .op(Op::infix(Rule::par, Assoc::Left) | Op::infix(Rule::ser, Assoc::Left))
            .op(Op::infix(Rule::mul, Assoc::Left) | Op::infix(Rule::div, Assoc::Left))
            .op(Op::infix(Rule::angle, Assoc::Left))
            .op(Op::prefix(Rule::neg) | Op::prefix(Rule::pos))
            .op(Op::infix(Rule::pow, Assoc::Right))
    })
}

struct Cx<'a> {
    file: FileId,
    offset: usize,
    #[allow(dead_code)]
    line: &'a str,
}

type R<T> = Result<T, Diagnostic>;

impl Cx<'_> {
    /// The span of a pair, without the whitespace or end-of-line comment
    /// pest may have taken in after its last token.
    fn span(&self, p: &Pair<Rule>) -> Span {
        let s = p.as_span();
        let text = s.as_str();
        let code = match find_comment_start(text) {
            Some(i) => &text[..i],
            None => text,
        };
        let len = code.trim_end().len();
        Span::new(self.file, self.offset + s.start(), self.offset + s.start() + len)
    }

    fn statement(&self, p: Pair<Rule>) -> R<StmtKind> {
        match p.as_rule() {
            Rule::definition => {
                let mut it = p.into_inner();
                let name = self.ident(it.next().expect("name"));
                let expr = self.expr_or_search(it.next().expect("expr"))?;
                let display = match it.next() {
                    Some(d) => {
                        let u = d.into_inner().next().expect("unit");
                        Some(self.unit(&u, false)?)
                    }
                    None => None,
                };
                Ok(StmtKind::Def(Definition { name, expr, display }))
            }
            Rule::check => {
                let mut it = p.into_inner().filter(|q| q.as_rule() != Rule::kw_check);
                let lhs = self.expr(it.next().expect("lhs"))?;
                let rhs = self.expr(it.next().expect("rhs"))?;
                let tol_expr = self.expr(it.next().expect("tol"))?;
                let tol = match &tol_expr.kind {
                    ExprKind::Number {
                        value,
                        imag: false,
                        unit: Some(u),
                    } if u.unit.symbol == "%" => Tolerance::Relative(value * 0.01, tol_expr.span),
                    _ => Tolerance::Absolute(tol_expr),
                };
                Ok(StmtKind::Check(Check { lhs, rhs, tol }))
            }
            Rule::directive => {
                let mut it = p.into_inner();
                let name = self.ident(it.next().expect("name"));
                let args = it
                    .map(|a| {
                        let span = self.span(&a);
                        let quoted = a.as_rule() == Rule::dstring;
                        let text = if quoted {
                            unquote(a.as_str())
                        } else {
                            a.as_str().to_string()
                        };
                        DirectiveArg { text, span, quoted }
                    })
                    .collect();
                Ok(StmtKind::Directive(Directive { name, args }))
            }
            Rule::bare_expr => Ok(StmtKind::Expr(
                self.expr_or_search(p.into_inner().next().expect("expr"))?,
            )),
            r => unreachable!("statement rule {r:?}"),
        }
    }

    fn expr_or_search(&self, p: Pair<Rule>) -> R<Expr> {
        if p.as_rule() != Rule::search {
            return self.expr(p);
        }
        let span = self.span(&p);
        let mut it = p
            .into_inner()
            .filter(|q| !matches!(q.as_rule(), Rule::kw_in | Rule::kw_where));
        let var = self.ident(it.next().expect("var"));
        let lo = self.expr(it.next().expect("lo"))?;
        let hi = self.expr(it.next().expect("hi"))?;
        let target = self.expr(it.next().expect("target"))?;
        let g = it.next().expect("goal");
        let goal = match g.as_rule() {
            Rule::search_eq => SearchGoal::Equals(self.expr(g.into_inner().next().expect("value"))?),
            _ => {
                if g.into_inner().any(|w| w.as_rule() == Rule::kw_largest) {
                    SearchGoal::Largest
                } else {
                    SearchGoal::Smallest
                }
            }
        };
        Ok(Expr {
            kind: ExprKind::Search(Box::new(Search {
                var,
                lo,
                hi,
                target,
                goal,
            })),
            span,
        })
    }

    fn ident(&self, p: Pair<Rule>) -> Ident {
        Ident {
            name: p.as_str().to_string(),
            span: self.span(&p),
        }
    }

    fn expr(&self, p: Pair<Rule>) -> R<Expr> {
        let span = self.span(&p);
        let inner = p.into_inner();
        // Prefix signs and `^` recurse in the Pratt parser; bound them.
        let chained = inner
            .clone()
            .filter(|q| matches!(q.as_rule(), Rule::neg | Rule::pos | Rule::pow))
            .count();
        if chained > 100 {
            return Err(Diagnostic::error(
                ErrorCode::NestingTooDeep,
                span,
                "too many signs and powers in one formula",
            )
            .with_hint("split the formula into several named cells"));
        }
        let (e, depth) = self.climb(inner)?;
        if depth > LIMITS.max_expr_depth {
            return Err(Diagnostic::error(
                ErrorCode::NestingTooDeep,
                span,
                format!("formula nested {depth} deep; the limit is {}", LIMITS.max_expr_depth),
            )
            .with_hint("split the formula into several named cells"));
        }
        Ok(e)
    }

    fn climb(&self, pairs: Pairs<Rule>) -> R<(Expr, usize)> {
        pratt()
            .map_primary(|p| self.atom(p))
            .map_prefix(|op, rhs| {
                let (rhs, d) = rhs?;
                let span = self.span(&op).to(rhs.span);
                let u = if op.as_rule() == Rule::neg {
                    UnOp::Neg
                } else {
                    UnOp::Pos
                };
                Ok((
                    Expr {
                        kind: ExprKind::Unary(u, Box::new(rhs)),
                        span,
                    },
                    d + 1,
                ))
            })
            .map_infix(|lhs, op, rhs| {
                let (lhs, dl) = lhs?;
                let (rhs, dr) = rhs?;
                let b = match op.as_rule() {
                    Rule::add => BinOp::Add,
                    Rule::sub => BinOp::Sub,
                    Rule::mul => BinOp::Mul,
                    Rule::div => BinOp::Div,
                    Rule::pow => BinOp::Pow,
                    Rule::par => BinOp::Parallel,
                    Rule::ser => BinOp::Series,
                    Rule::angle => BinOp::Angle,
                    r => unreachable!("infix {r:?}"),
                };
                let span = lhs.span.to(rhs.span);
                Ok((
                    Expr {
                        kind: ExprKind::Binary(b, Box::new(lhs), Box::new(rhs)),
                        span,
                    },
                    1 + dl.max(dr),
                ))
            })
            .parse(pairs)
    }

    fn atom(&self, p: Pair<Rule>) -> R<(Expr, usize)> {
        let span = self.span(&p);
        match p.as_rule() {
            Rule::quantity | Rule::imag => {
                let imag = p.as_rule() == Rule::imag;
                let mut it = p.into_inner();
                let num = it.next().expect("number");
                let num_span = self.span(&num);
                let mut value: f64 = num.as_str().parse().map_err(|_| {
                    Diagnostic::error(
                        ErrorCode::BadNumber,
                        num_span,
                        format!("`{}` is not a number", num.as_str()),
                    )
                })?;
                if !value.is_finite() {
                    return Err(Diagnostic::error(ErrorCode::BadNumber, num_span, "number too large")
                        .with_label("beyond the range of a double (about 1.8e308)"));
                }
                let mut imag = imag;
                let mut unit = None;
                if let Some(s) = it.next() {
                    match s.as_rule() {
                        Rule::suffix => {
                            let (scale, j, u) = self.glued_suffix(&s, imag)?;
                            value *= scale;
                            imag |= j;
                            unit = u;
                        }
                        Rule::unit_expr => unit = Some(self.unit(&s, true)?),
                        r => unreachable!("quantity part {r:?}"),
                    }
                }
                // The value in coherent SI units must be a double: not
                // overflowing (`1e308T`, `1e308 kV`) and not a non-zero
                // number that underflows to zero (`1e-400`).
                let si = value * unit.as_ref().map_or(1.0, |u| u.unit.factor);
                let mantissa_nonzero = num
                    .as_str()
                    .split(['e', 'E'])
                    .next()
                    .is_some_and(|m| m.bytes().any(|b| (b'1'..=b'9').contains(&b)));
                if !si.is_finite() {
                    return Err(Diagnostic::error(ErrorCode::BadNumber, span, "number too large")
                        .with_label("beyond the range of a double (about 1.8e308) in SI units"));
                }
                if si == 0.0 && mantissa_nonzero {
                    return Err(Diagnostic::error(ErrorCode::BadNumber, span, "number too small")
                        .with_label("below the smallest double (about 5e-324) in SI units; it would read as 0"));
                }
                Ok((
                    Expr {
                        kind: ExprKind::Number { value, imag, unit },
                        span,
                    },
                    1,
                ))
            }
            Rule::name_ref => {
                let mut it = p.into_inner();
                let id = self.ident(it.next().expect("name"));
                let mut next = it.next();
                let Some(call) = next.take_if(|a| a.as_rule() == Rule::call) else {
                    let base = Expr {
                        span: id.span,
                        kind: ExprKind::Name(id),
                    };
                    return Ok(self.with_field(base, next, span));
                };
                let mut args = Vec::new();
                let mut depth = 1;
                for a in call.into_inner() {
                    let e = self.expr(a)?;
                    depth = depth.max(1 + e.depth());
                    args.push(e);
                }
                let field = it.next();
                let call_span = match &field {
                    Some(f) => Span::new(self.file, span.start as usize, self.span(f).start as usize),
                    None => span,
                };
                let base = Expr {
                    kind: ExprKind::Call { func: id, args },
                    span: call_span,
                };
                let (e, d) = self.with_field(base, field, span);
                Ok((e, d + depth))
            }
            Rule::paren_q => {
                let mut it = p.into_inner();
                let paren = it.next().expect("paren");
                let inner = self.expr(paren.into_inner().next().expect("expr"))?;
                let d = inner.depth();
                let unit = match it.next() {
                    Some(u) => Some(self.unit(&u, false)?),
                    None => None,
                };
                Ok((
                    Expr {
                        kind: ExprKind::Paren(Box::new(inner), unit),
                        span,
                    },
                    d + 1,
                ))
            }
            r => unreachable!("atom {r:?}"),
        }
    }

    fn with_field(&self, base: Expr, field: Option<Pair<Rule>>, span: Span) -> (Expr, usize) {
        match field {
            None => (base, 1),
            Some(f) => {
                let id = self.ident(f.into_inner().next().expect("field name"));
                (
                    Expr {
                        kind: ExprKind::Field(Box::new(base), id),
                        span,
                    },
                    2,
                )
            }
        }
    }

    /// Decode what is glued to a number: a prefix (`4.7k`), the imaginary
    /// `j` (`3j`, `2kj`), a unit (`20Ω`, `4.7uF`), or `j` and a unit.
    fn glued_suffix(&self, p: &Pair<Rule>, already_imag: bool) -> R<(f64, bool, Option<UnitRef>)> {
        let s = p.as_str();
        let span = self.span(p);
        if let Some(f) = prefix_factor(s) {
            return Ok((f, false, None));
        }
        if !already_imag {
            // j, kj, µj … optionally followed by a unit
            let (scale, after_prefix) = match PREFIX_CHARS
                .iter()
                .find(|c| s.starts_with(**c) && s[c.len()..].starts_with('j'))
            {
                Some(c) => (prefix_factor(c).unwrap_or(1.0), &s[c.len()..]),
                None => (1.0, s),
            };
            if let Some(rest) = after_prefix.strip_prefix('j') {
                if rest.is_empty() {
                    return Ok((scale, true, None));
                }
                let start = span.end as usize - rest.len();
                let uspan = Span::new(self.file, start, span.end as usize);
                let unit = self.resolve_unit(rest, uspan, false)?;
                return Ok((scale, true, Some(UnitRef { unit, span: uspan })));
            }
        }
        let unit = self.resolve_unit(s, span, false)?;
        Ok((1.0, false, Some(UnitRef { unit, span })))
    }

    fn unit(&self, p: &Pair<Rule>, spaced: bool) -> R<UnitRef> {
        let span = self.span(p);
        let unit = self.resolve_unit(p.as_str(), span, spaced)?;
        Ok(UnitRef { unit, span })
    }

    fn resolve_unit(&self, text: &str, span: Span, spaced: bool) -> R<Unit> {
        if spaced && text == "j" {
            return Err(
                Diagnostic::error(ErrorCode::UnknownUnit, span, "`j` after a space is not a unit")
                    .with_hint("write the imaginary number glued, `3j` or `j3`, or multiply: `3 * j`"),
            );
        }
        if spaced && prefix_factor(text).is_some() && text != "m" {
            return Err(Diagnostic::error(
                ErrorCode::UnknownUnit,
                span,
                format!("`{text}` is a prefix, not a unit"),
            )
            .with_hint(format!(
                "glue a prefix to the number (`4.7{text}`) or to a unit (`4.7 {text}Ω`)"
            )));
        }
        parse_unit_expr(text).map_err(|e| match e {
            UnitError::AmbiguousMetre => {
                Diagnostic::error(ErrorCode::AmbiguousUnit, span, "`m` on its own is ambiguous here")
                    .with_label("milli or metres?")
                    .with_hint(
                        "for milli glue it to the number (`5m` is 0.005); for metres write `metre` (or `km`, `mm`)",
                    )
            }
            UnitError::Range(what) => Diagnostic::error(
                ErrorCode::BadNumber,
                span,
                format!("unit `{what}` is beyond the range of a double"),
            )
            .with_label("its scale to SI units overflows or underflows")
            .with_hint("use fewer or smaller powers; doubles reach from about 1e-308 to 1.8e308"),
            UnitError::Exponent(what) => {
                Diagnostic::error(ErrorCode::UnknownUnit, span, format!("bad power in unit `{what}`"))
                    .with_hint("unit powers are whole numbers from -9 to 9, e.g. `m^2`, `s^-1`")
            }
            UnitError::Unknown { word, suggestion, hint } => {
                let mut d = Diagnostic::error(ErrorCode::UnknownUnit, span, format!("unknown unit `{word}`"));
                d = d.with_label("not a unit");
                let mut h = Vec::new();
                if let Some(s) = suggestion {
                    h.push(format!("did you mean `{s}`?"));
                }
                if let Some(x) = hint {
                    h.push(x);
                }
                if spaced && word == text && !text.contains(['/', '*', '·', '^']) {
                    h.push(format!("if `{word}` is a cell, multiplication needs `*`"));
                } else if text.contains(['/', '*', '·']) {
                    h.push("if this divides or multiplies by a cell, put spaces around the operator".to_string());
                }
                if !h.is_empty() {
                    d = d.with_hint(h.join("; "));
                }
                d
            }
        })
    }
}

const PREFIX_CHARS: &[&str] = &["f", "p", "n", "u", "µ", "μ", "m", "k", "M", "G", "T"];

fn unquote(s: &str) -> String {
    let inner = &s[1..s.len() - 1];
    let mut out = String::new();
    let mut chars = inner.chars();
    while let Some(c) = chars.next() {
        if c == '\\' {
            match chars.next() {
                Some('n') => out.push('\n'),
                Some('t') => out.push('\t'),
                Some(o) => out.push(o),
                None => {}
            }
        } else {
            out.push(c);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn expr_of(src: &str) -> Expr {
        match parse_line(&format!("x = {src}"), FileId(0), 0, 1) {
            Ok(Some(Stmt {
                kind: StmtKind::Def(d), ..
            })) => d.expr,
            other => panic!("{src}: {other:?}"),
        }
    }

    fn err_of(src: &str) -> Diagnostic {
        parse_line(src, FileId(0), 0, 1).expect_err(src)
    }

    fn shape(e: &Expr) -> String {
        match &e.kind {
            ExprKind::Number { value, imag, unit } => {
                let mut s = format!("{value}");
                if *imag {
                    s.push('j');
                }
                if let Some(u) = unit {
                    s.push_str(&format!("[{}]", u.unit.symbol));
                }
                s
            }
            ExprKind::Name(i) => i.name.clone(),
            ExprKind::Field(b, f) => format!("{}.{}", shape(b), f.name),
            ExprKind::Call { func, args } => {
                format!(
                    "{}({})",
                    func.name,
                    args.iter().map(shape).collect::<Vec<_>>().join(",")
                )
            }
            ExprKind::Unary(UnOp::Neg, e) => format!("(-{})", shape(e)),
            ExprKind::Unary(UnOp::Pos, e) => format!("(+{})", shape(e)),
            ExprKind::Binary(op, a, b) => format!("({} {} {})", shape(a), op.symbol(), shape(b)),
            ExprKind::Paren(e, u) => match u {
                Some(u) => format!("{}[{}]", shape(e), u.unit.symbol),
                None => shape(e),
            },
            ExprKind::Search(s) => {
                let goal = match &s.goal {
                    SearchGoal::Equals(v) => format!("= {}", shape(v)),
                    SearchGoal::Largest => "largest".into(),
                    SearchGoal::Smallest => "smallest".into(),
                };
                format!(
                    "[{} in {}..{} | {} {goal}]",
                    s.var.name,
                    shape(&s.lo),
                    shape(&s.hi),
                    shape(&s.target)
                )
            }
        }
    }

    #[test]
    fn search_forms() {
        assert_eq!(
            shape(&expr_of("C in 0 .. 2 mF where pf = 0.95")),
            "[C in 0..2[mF] | pf = 0.95]"
        );
        assert_eq!(
            shape(&expr_of("C in 0..2mF where abs(V) is largest")),
            "[C in 0..2[mF] | abs(V) largest]"
        );
        assert_eq!(
            shape(&expr_of("f in 10Hz..1MHz where abs(Z) is smallest")),
            "[f in 10[Hz]..1[MHz] | abs(Z) smallest]"
        );
        // A number without a unit before `where` or `is`.
        assert_eq!(shape(&expr_of("x in 0 .. 2 where y = 1")), "[x in 0..2 | y = 1]");
        assert_eq!(
            shape(&expr_of("x in 0 .. 2 where y*2 is largest")),
            "[x in 0..2 | (y * 2) largest]"
        );
        // `0..2` is two numbers, `0.5` still one.
        assert_eq!(shape(&expr_of("x in 0.5..2.5 where y = 1")), "[x in 0.5..2.5 | y = 1]");
        // Names that begin with the words are still names.
        assert_eq!(shape(&expr_of("index * island")), "(index * island)");
        let d = err_of("x = C in 0 .. 2 mF where pf is biggest");
        assert!(d.label.contains("largest"), "{d:?}");
    }

    #[test]
    fn precedence_follows_the_language_definition() {
        assert_eq!(shape(&expr_of("R1 + R2 || R3")), "(R1 + (R2 || R3))");
        assert_eq!(shape(&expr_of("a || b * c")), "(a || (b * c))");
        assert_eq!(shape(&expr_of("-x^2")), "(-(x ^ 2))");
        assert_eq!(shape(&expr_of("2^-1")), "(2 ^ (-1))");
        assert_eq!(shape(&expr_of("a -- b || c")), "((a -- b) || c)");
        assert_eq!(shape(&expr_of("a - -b")), "(a - (-b))");
        assert_eq!(shape(&expr_of("V / Z ∠ 30")), "(V / (Z ∠ 30))");
        assert_eq!(shape(&expr_of("2^3^2")), "(2 ^ (3 ^ 2))");
    }

    #[test]
    fn numbers_prefixes_and_units() {
        assert_eq!(shape(&expr_of("4.7k")), "4700");
        assert_eq!(shape(&expr_of("5m")), "0.005");
        assert_eq!(shape(&expr_of("1.5e3")), "1500");
        assert_eq!(shape(&expr_of("20 Ω")), "20[Ω]");
        assert_eq!(shape(&expr_of("4.7uF")), "4.7[uF]");
        assert_eq!(shape(&expr_of("13.8 kV")), "13.8[kV]");
        assert_eq!(shape(&expr_of("(6 + j10) Ω")), "(6 + 10j)[Ω]");
        assert_eq!(shape(&expr_of("377 rad/s")), "377[rad/s]");
        assert_eq!(shape(&expr_of("2.2µ")), "0.0000022");
    }

    #[test]
    fn imaginary_forms() {
        assert_eq!(shape(&expr_of("3j")), "3j");
        assert_eq!(shape(&expr_of("j3")), "3j");
        assert_eq!(shape(&expr_of("-j30")), "(-30j)");
        assert_eq!(shape(&expr_of("j4.5")), "4.5j");
        assert_eq!(shape(&expr_of("j * w * L")), "((j * w) * L)");
        assert_eq!(shape(&expr_of("6 + j10")), "(6 + 10j)");
        assert_eq!(shape(&expr_of("6 + 10j")), "(6 + 10j)");
        assert_eq!(shape(&expr_of("j10 Ω")), "10j[Ω]");
    }

    #[test]
    fn polar_forms() {
        assert_eq!(shape(&expr_of("277 V ∠ -30°")), "(277[V] ∠ (-30[°]))");
        assert_eq!(shape(&expr_of("277 V /_ -30")), "(277[V] ∠ (-30))");
        assert_eq!(shape(&expr_of("1 /_ 0.5 rad")), "(1 ∠ 0.5[rad])");
    }

    #[test]
    fn statements() {
        let s = parse_line("Ibank = Qc / Vll [A]  # bank current", FileId(0), 0, 1)
            .unwrap()
            .unwrap();
        match s.kind {
            StmtKind::Def(d) => {
                assert_eq!(d.name.name, "Ibank");
                assert_eq!(d.display.unwrap().unit.symbol, "A");
            }
            k => panic!("{k:?}"),
        }
        assert_eq!(s.comment.as_deref(), Some("bank current"));
        let s = parse_line("check Z ~= 5 Ω +- 1%", FileId(0), 0, 1).unwrap().unwrap();
        match s.kind {
            StmtKind::Check(c) => assert!(matches!(c.tol, Tolerance::Relative(r, _) if (r - 0.01).abs() < 1e-15)),
            k => panic!("{k:?}"),
        }
        let s = parse_line("check Z ≈ 5 Ω ± 0.1 Ω", FileId(0), 0, 1).unwrap().unwrap();
        assert!(matches!(
            s.kind,
            StmtKind::Check(Check {
                tol: Tolerance::Absolute(_),
                ..
            })
        ));
        let s = parse_line("@title \"Feeder #3 study\"", FileId(0), 0, 1)
            .unwrap()
            .unwrap();
        match s.kind {
            StmtKind::Directive(d) => assert_eq!(d.args[0].text, "Feeder #3 study"),
            k => panic!("{k:?}"),
        }
        assert!(parse_line("   # only a comment", FileId(0), 0, 1).unwrap().is_none());
        assert!(parse_line("", FileId(0), 0, 1).unwrap().is_none());
    }

    #[test]
    fn errors_are_located() {
        let d = err_of("x = (1 + 2");
        assert_eq!(d.span.unwrap().start, 4);
        assert!(d.message.contains("unclosed"));
        let d = err_of("x = 5 m");
        assert_eq!(d.code, ErrorCode::AmbiguousUnit);
        let d = err_of("x = 20 ohms");
        assert_eq!(d.code, ErrorCode::UnknownUnit);
        assert!(d.hint.unwrap().contains("ohm"));
        let d = err_of("x = 2 L");
        assert!(d.hint.unwrap().contains('*'));
        let deep = format!("x = {}1{}", "(".repeat(200_000), ")".repeat(200_000));
        assert_eq!(
            parse_line(&deep, FileId(0), 0, 1).unwrap_err().code,
            ErrorCode::LineTooLong
        );
        let deep = format!("x = {}1{}", "(".repeat(100), ")".repeat(100));
        assert_eq!(
            parse_line(&deep, FileId(0), 0, 1).unwrap_err().code,
            ErrorCode::NestingTooDeep
        );
        let d = err_of("x = 1e999");
        assert_eq!(d.code, ErrorCode::BadNumber);
        // Literals beyond a double once a glued prefix or a unit scales
        // them, or so small they would read as zero (IEEE 754 binary64:
        // largest finite about 1.8e308, smallest subnormal about 4.9e-324).
        for src in [
            "x = 1e308T",
            "x = 1e308 kV",
            "x = j1e308 GΩ",
            "x = 1e-400",
            "x = 1e-320 fF",
        ] {
            assert_eq!(err_of(src).code, ErrorCode::BadNumber, "{src}");
        }
        for src in ["x = 1e290T", "x = 1e-320", "x = 0e-400", "x = 0.0 fF", "x = 1.7e308"] {
            assert!(parse_line(src, FileId(0), 0, 1).is_ok(), "{src}");
        }
    }

    #[test]
    fn spans_leave_out_trailing_comments() {
        let line = "x = atan(y)   # note";
        let s = parse_line(line, FileId(0), 0, 1).unwrap().unwrap();
        match s.kind {
            StmtKind::Def(d) => assert_eq!(&line[d.expr.span.range()], "atan(y)"),
            k => panic!("{k:?}"),
        }
        let line = "x = a.b # c";
        let s = parse_line(line, FileId(0), 0, 1).unwrap().unwrap();
        match s.kind {
            StmtKind::Def(d) => assert_eq!(&line[d.expr.span.range()], "a.b"),
            k => panic!("{k:?}"),
        }
    }

    #[test]
    fn long_chains_do_not_overflow() {
        let chain = format!("x = {}", vec!["1"; 4000].join("+"));
        let d = parse_line(&chain, FileId(0), 0, 1).unwrap_err();
        assert_eq!(d.code, ErrorCode::NestingTooDeep);
        let signs = format!("x = {}1", "- ".repeat(3000));
        assert!(parse_line(&signs, FileId(0), 0, 1).is_err());
    }
}
