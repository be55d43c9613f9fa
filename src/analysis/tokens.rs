//! What each piece of a sheet's text is, for highlighting without a
//! grammar file per editor: names (cells, nodes), functions, numbers,
//! units, operators, record fields, directives, strings, comments and
//! keywords. Names, functions, units, fields and directives come from the
//! parser's spans (`symbols`); the rest from a scan of the line, so a line
//! being typed that does not parse yet still has its numbers, operators
//! and comment coloured.

use std::ops::Range;

use super::document::Document;
use super::symbols::{of_statement, parse_at, SymKind};

#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum TokenKind {
    /// A cell.
    Name,
    Function,
    Number,
    Operator,
    Comment,
    Keyword,
    Quoted,
    Field,
    Unit,
    Directive,
    /// A network's node or element, or a search's variable: a name that is
    /// not a cell.
    Local,
}

#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Token {
    /// Byte range in the document's text (within one line).
    pub range: Range<usize>,
    pub kind: TokenKind,
    /// Where a cell is defined (`NAME = …`).
    pub defines: bool,
}

const KEYWORDS: &[&str] = &[
    "check", "network", "end", "at", "in", "where", "within", "among", "normal", "angle",
];
const OPERATORS: &[&str] = &[
    "||", "--", "~=", "+-", "<=", ">=", "/_", "..", "±", "∠", "+", "-", "*", "/", "^", "·", "×", "=", "<", ">", "≤",
    "≥", "(", ")", "[", "]", ",", "@",
];

/// The tokens of the lines `lines` of `doc`, in order.
pub fn tokens(doc: &Document, lines: Range<usize>) -> Vec<Token> {
    let m = &doc.engine.model;
    let text = doc.text();
    let mut out = Vec::new();
    for i in lines.start..lines.end.min(doc.line_count()) {
        let lr = doc.line_range(i);
        let line = doc.line_text(i);
        let mut found: Vec<Token> = Vec::new();
        if let Some(st) = parse_at(line, lr.start, (i + 1) as u32) {
            for o in of_statement(text, &st) {
                if o.range.start < lr.start || o.range.end > lr.end || o.range.is_empty() {
                    continue;
                }
                let kind = match o.kind {
                    SymKind::Name if o.name == "j" || o.name == "pi" => TokenKind::Keyword,
                    SymKind::Name if m.id(&o.name).is_some() => TokenKind::Name,
                    SymKind::Name | SymKind::SearchVar => TokenKind::Local,
                    SymKind::Function => TokenKind::Function,
                    SymKind::Unit => TokenKind::Unit,
                    SymKind::Field => TokenKind::Field,
                    SymKind::Directive => TokenKind::Directive,
                };
                // `@include`: the `@` with the directive's name.
                let start = if kind == TokenKind::Directive
                    && o.range.start > lr.start
                    && text.as_bytes()[o.range.start - 1] == b'@'
                {
                    o.range.start - 1
                } else {
                    o.range.start
                };
                found.push(Token {
                    range: start..o.range.end,
                    kind,
                    defines: o.defines,
                });
            }
        }
        found.sort_by_key(|t| t.range.start);
        scan(line, lr.start, &mut found);
        found.sort_by_key(|t| t.range.start);
        // No overlaps: the first of two overlapping tokens wins.
        let mut last = 0;
        for t in found {
            if t.range.start >= last {
                last = t.range.end;
                out.push(t);
            }
        }
    }
    out
}

/// Add the tokens of `line` (at byte `base` of the text) that the parser
/// does not name: comments, strings, numbers, operators, keywords.
fn scan(line: &str, base: usize, found: &mut Vec<Token>) {
    let covered = |found: &Vec<Token>, at: usize| found.iter().any(|t| t.range.contains(&(base + at)));
    let b = line.as_bytes();
    let mut i = 0;
    let push = |found: &mut Vec<Token>, a: usize, z: usize, kind| {
        found.push(Token {
            range: base + a..base + z,
            kind,
            defines: false,
        })
    };
    while i < line.len() {
        if covered(found, i) {
            i = found
                .iter()
                .find(|t| t.range.contains(&(base + i)))
                .map_or(i + 1, |t| t.range.end - base);
            continue;
        }
        let rest = &line[i..];
        let c = rest.chars().next().unwrap_or(' ');
        if c == '#' {
            push(found, i, line.len(), TokenKind::Comment);
            break;
        }
        if c == '"' {
            let end = rest[1..].find('"').map_or(line.len(), |k| i + k + 2);
            push(found, i, end, TokenKind::Quoted);
            i = end;
            continue;
        }
        if c.is_ascii_digit() || (c == '.' && rest[1..].starts_with(|d: char| d.is_ascii_digit())) {
            let mut k = i;
            while k < line.len() && (b[k].is_ascii_digit() || b[k] == b'.') {
                if b[k] == b'.' && line[k..].starts_with("..") {
                    break;
                }
                k += 1;
            }
            if k < line.len() && (b[k] == b'e' || b[k] == b'E') {
                let mut e = k + 1;
                if e < line.len() && (b[e] == b'+' || b[e] == b'-') {
                    e += 1;
                }
                if e < line.len() && b[e].is_ascii_digit() {
                    while e < line.len() && b[e].is_ascii_digit() {
                        e += 1;
                    }
                    k = e;
                }
            }
            push(found, i, k, TokenKind::Number);
            i = k;
            continue;
        }
        if c.is_alphabetic() || c == '_' {
            let len: usize = rest
                .chars()
                .take_while(|&c| c.is_alphanumeric() || c == '_')
                .map(char::len_utf8)
                .sum();
            let w = &rest[..len];
            // `j10`: an imaginary literal.
            if w.starts_with('j') && w[1..].starts_with(|d: char| d.is_ascii_digit()) {
                push(found, i, i + len, TokenKind::Number);
            } else if KEYWORDS.contains(&w) {
                push(found, i, i + len, TokenKind::Keyword);
            }
            i += len;
            continue;
        }
        // A tolerance's `%` or `°` (the parser keeps no span for them).
        if c == '%' || c == '°' {
            push(found, i, i + c.len_utf8(), TokenKind::Unit);
            i += c.len_utf8();
            continue;
        }
        if let Some(op) = OPERATORS.iter().find(|op| rest.starts_with(*op)) {
            push(found, i, i + op.len(), TokenKind::Operator);
            i += op.len();
            continue;
        }
        i += c.len_utf8();
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sheet::LoadOptions;

    fn kinds(text: &str) -> Vec<(String, TokenKind)> {
        let d = Document::open(None, text, LoadOptions::default());
        tokens(&d, 0..d.line_count())
            .into_iter()
            .map(|t| (text[t.range].to_string(), t.kind))
            .collect()
    }

    #[test]
    fn every_piece_of_a_line_has_its_kind() {
        use TokenKind::*;
        let got =
            kinds("R = 4.7 kΩ # load\nZ = (R + j10 Ω) || sqrt(R) ∠ 30°\n@title \"a\"\ncheck R ~= 4.7e3 Ω +- 1%\n");
        let want: Vec<(&str, TokenKind)> = vec![
            ("R", Name),
            ("=", Operator),
            ("4.7", Number),
            ("kΩ", Unit),
            ("# load", Comment),
            ("Z", Name),
            ("=", Operator),
            ("(", Operator),
            ("R", Name),
            ("+", Operator),
            ("j10", Number),
            ("Ω", Unit),
            (")", Operator),
            ("||", Operator),
            ("sqrt", Function),
            ("(", Operator),
            ("R", Name),
            (")", Operator),
            ("∠", Operator),
            ("30", Number),
            ("°", Unit),
            ("@title", Directive),
            ("\"a\"", Quoted),
            ("check", Keyword),
            ("R", Name),
            ("~=", Operator),
            ("4.7e3", Number),
            ("Ω", Unit),
            ("+-", Operator),
            ("1", Number),
            ("%", Unit),
        ];
        let want: Vec<(String, TokenKind)> = want.into_iter().map(|(s, k)| (s.to_string(), k)).collect();
        assert_eq!(got, want);
    }

    #[test]
    fn a_half_typed_line_still_has_numbers_operators_and_comments() {
        use TokenKind::*;
        let got = kinds("x = (2 + # unfinished\n");
        let want: Vec<(String, TokenKind)> = [
            ("=", Operator),
            ("(", Operator),
            ("2", Number),
            ("+", Operator),
            ("# unfinished", Comment),
        ]
        .into_iter()
        .map(|(s, k)| (s.to_string(), k))
        .collect();
        assert_eq!(got, want);
    }
}
