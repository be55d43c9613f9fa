//! The names, functions, units, fields and directives written in a text,
//! with their byte ranges: each line parsed again with spans in the text
//! itself (lines are independent, so a line is parsed alone). What is at
//! the cursor (hover, go to definition) and where a name is used (find
//! references, rename) are read from here; the model then says what a
//! name means.

use std::ops::Range;

use crate::diag::{FileId, Span};
use crate::syntax::ast::{Expr, ExprKind, SearchGoal, SpreadForm, Stmt, StmtKind, Tolerance, UnitRef};
use crate::syntax::parse_line;

/// A file id no source map uses: the spans found here are offsets into
/// the text parsed, not into any source of the model.
const HERE: FileId = FileId(u32::MAX - 1);

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SymKind {
    /// A name: a cell (or a network's node or element).
    Name,
    Function,
    Unit,
    /// A record field after `.`.
    Field,
    /// A directive's name (`include` in `@include`).
    Directive,
    /// The variable of a search (`C in 1 µF .. 1 mF where …`), local to
    /// its formula.
    SearchVar,
}

#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Occurrence {
    pub kind: SymKind,
    /// The text as written (a unit as typed, `kV`; a field's name).
    pub name: String,
    pub range: Range<usize>,
    /// This is where the name is defined (`NAME = …`).
    pub defines: bool,
    /// For a field: the name of the cell before the `.` (when a plain
    /// name).
    pub of: Option<String>,
}

/// The statement of the line `line` (its text starts at byte `start` of
/// the whole text), with spans in the whole text. None for a blank or
/// comment line, or one that does not parse.
pub fn parse_at(line: &str, start: usize, line_no: u32) -> Option<Stmt> {
    parse_line(line, HERE, start, line_no).ok().flatten()
}

fn range(s: Span) -> Range<usize> {
    s.start as usize..s.end as usize
}

struct Walk<'a> {
    text: &'a str,
    out: Vec<Occurrence>,
}

impl Walk<'_> {
    fn push(&mut self, kind: SymKind, span: Span, defines: bool, of: Option<String>) {
        let r = range(span);
        let name = self.text.get(r.clone()).unwrap_or("").to_string();
        self.out.push(Occurrence {
            kind,
            name,
            range: r,
            defines,
            of,
        });
    }

    fn unit(&mut self, u: &Option<UnitRef>) {
        if let Some(u) = u {
            self.push(SymKind::Unit, u.span, false, None);
        }
    }

    fn expr(&mut self, e: &Expr) {
        match &e.kind {
            ExprKind::Number { unit, .. } => self.unit(unit),
            ExprKind::Name(id) => self.push(SymKind::Name, id.span, false, None),
            ExprKind::Field(base, f) => {
                self.expr(base);
                let of = match &base.kind {
                    ExprKind::Name(id) => Some(id.name.clone()),
                    _ => None,
                };
                self.push(SymKind::Field, f.span, false, of);
            }
            ExprKind::Call { func, args } => {
                self.push(SymKind::Function, func.span, false, None);
                args.iter().for_each(|a| self.expr(a));
            }
            ExprKind::Unary(_, a) => self.expr(a),
            ExprKind::Binary(_, a, b) => {
                self.expr(a);
                self.expr(b);
            }
            ExprKind::Paren(a, u) => {
                self.expr(a);
                self.unit(u);
            }
            ExprKind::Search(s) => {
                self.push(SymKind::SearchVar, s.var.span, true, None);
                self.expr(&s.lo);
                self.expr(&s.hi);
                self.expr(&s.target);
                if let SearchGoal::Equals(v) = &s.goal {
                    self.expr(v);
                }
            }
        }
    }

    fn stmt(&mut self, st: &Stmt) {
        match &st.kind {
            StmtKind::Def(d) => {
                self.push(SymKind::Name, d.name.span, true, None);
                self.expr(&d.expr);
                if let Some(u) = &d.display {
                    self.push(SymKind::Unit, u.span, false, None);
                }
                if let Some(sp) = &d.spread {
                    match &sp.form {
                        SpreadForm::Band { mag, angle, .. } => {
                            for b in [mag, angle].into_iter().flatten() {
                                if let Some(lo) = &b.lo {
                                    self.expr(lo);
                                }
                                self.expr(&b.hi);
                            }
                        }
                        SpreadForm::Among(v) => v.iter().for_each(|e| self.expr(e)),
                    }
                }
            }
            StmtKind::Check(c) => {
                self.expr(&c.lhs);
                self.expr(&c.rhs);
                if let Tolerance::Absolute(t) = &c.tol {
                    self.expr(t);
                }
            }
            StmtKind::Expr(e) => self.expr(e),
            StmtKind::Network(h) => {
                self.push(SymKind::Name, h.name.span, true, None);
                self.expr(&h.freq);
            }
            StmtKind::End => {}
            StmtKind::Directive(d) => {
                self.push(SymKind::Directive, d.name.span, false, None);
                match d.name.name.as_str() {
                    // `@note CELL "text"`: the cell is a use of its name.
                    "note" => {
                        if let Some(a) = d.args.first().filter(|a| !a.quoted && d.args.len() > 1) {
                            self.push(SymKind::Name, a.span, false, None);
                        }
                    }
                    // `@override NAME = FORMULA`: a definition.
                    crate::sheet::OVERRIDE => {
                        if let (Some(first), Some(last)) = (d.args.first(), d.args.last()) {
                            let a = first.span.start as usize - usize::from(first.quoted);
                            let b = (last.span.end as usize + usize::from(last.quoted)).min(self.text.len());
                            if let Some(def) = self.text.get(a..b).and_then(|t| parse_at(t, a, st.line)) {
                                self.stmt(&def);
                            }
                        }
                    }
                    _ => {}
                }
            }
        }
    }
}

/// The occurrences in one statement parsed from `text` (spans in `text`).
pub fn of_statement(text: &str, st: &Stmt) -> Vec<Occurrence> {
    let mut w = Walk { text, out: Vec::new() };
    w.stmt(st);
    w.out
}

/// Every occurrence in `text` (a whole sheet), in order.
pub fn of_text(text: &str) -> Vec<Occurrence> {
    let mut out = Vec::new();
    let mut start = 0usize;
    for (i, raw) in text.split('\n').enumerate() {
        let line = raw.strip_suffix('\r').unwrap_or(raw);
        if let Some(st) = parse_at(line, start, (i + 1) as u32) {
            out.extend(of_statement(text, &st));
        }
        start += raw.len() + 1;
    }
    out
}

/// What is at byte `offset` of line `line` (whose text starts at byte
/// `start` of `text`): the occurrence containing it, or ending right at
/// it (the cursor just after a name).
pub fn at(text: &str, start: usize, line: &str, line_no: u32, offset: usize) -> Option<Occurrence> {
    let st = parse_at(line, start, line_no)?;
    let all = of_statement(text, &st);
    all.iter()
        .find(|o| o.range.start <= offset && offset < o.range.end)
        .or_else(|| all.iter().find(|o| o.range.end == offset))
        .cloned()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn occurrences_carry_their_places_in_the_text() {
        let text = "# bench\nZ = (R + j*X) Ω [kΩ]\nP = abs(line(Z).R) * 2 kW\n";
        let o = of_text(text);
        let found: Vec<(SymKind, &str, bool)> = o.iter().map(|o| (o.kind, o.name.as_str(), o.defines)).collect();
        assert_eq!(
            found,
            vec![
                (SymKind::Name, "Z", true),
                (SymKind::Name, "R", false),
                (SymKind::Name, "j", false),
                (SymKind::Name, "X", false),
                (SymKind::Unit, "Ω", false),
                (SymKind::Unit, "kΩ", false),
                (SymKind::Name, "P", true),
                (SymKind::Function, "abs", false),
                (SymKind::Function, "line", false),
                (SymKind::Name, "Z", false),
                (SymKind::Field, "R", false),
                (SymKind::Unit, "kW", false),
            ]
        );
        for x in &o {
            assert_eq!(&text[x.range.clone()], x.name);
        }
        let line = "P = abs(line(Z).R) * 2 kW";
        let start = text.find(line).unwrap();
        let at_z = at(text, start, line, 3, start + 13).unwrap();
        assert_eq!((at_z.kind, at_z.name.as_str()), (SymKind::Name, "Z"));
        // Just after `abs`.
        let after = at(text, start, line, 3, start + 7).unwrap();
        assert_eq!(after.name, "abs");
    }
}
