//! Statements: definitions, checks, directives, bare expressions and
//! searches.

use pest::iterators::Pair;

use super::{Cx, Rule, R};
use crate::syntax::ast::*;

impl Cx<'_> {
    pub(super) fn statement(&self, p: Pair<Rule>) -> R<StmtKind> {
        match p.as_rule() {
            Rule::definition => {
                let mut it = p.into_inner();
                let name = self.ident(it.next().expect("name"));
                let expr = self.expr_or_search(it.next().expect("expr"))?;
                let mut display = None;
                let mut spread = None;
                for d in it {
                    if d.as_rule() == Rule::spread {
                        spread = Some(self.spread(d)?);
                    } else {
                        let u = d.into_inner().next().expect("unit");
                        display = Some(self.unit(&u, false)?);
                    }
                }
                Ok(StmtKind::Def(Definition {
                    name,
                    expr,
                    display,
                    spread,
                }))
            }
            Rule::check => {
                let mut it = p.into_inner().filter(|q| q.as_rule() != Rule::kw_check);
                let lhs = self.expr(it.next().expect("lhs"))?;
                let rhs = self.expr(it.next().expect("rhs"))?;
                let tol_expr = self.expr(it.next().expect("tol"))?;
                let over = it.next().map(|o| {
                    let span = self.span(&o);
                    let share = o
                        .into_inner()
                        .find(|r| r.as_rule() == Rule::number)
                        .map(|n| n.as_str().parse::<f64>().unwrap_or(f64::NAN) / 100.0);
                    CheckOver { share, span }
                });
                let tol = match &tol_expr.kind {
                    ExprKind::Number {
                        value,
                        imag: false,
                        unit: Some(u),
                    } if u.unit.symbol == "%" => Tolerance::Relative(value * 0.01, tol_expr.span),
                    _ => Tolerance::Absolute(tol_expr),
                };
                Ok(StmtKind::Check(Check { lhs, rhs, tol, over }))
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
            Rule::network_head => {
                let mut it = p
                    .into_inner()
                    .filter(|q| !matches!(q.as_rule(), Rule::kw_network | Rule::kw_at));
                let name = self.ident(it.next().expect("name"));
                let freq = self.expr(it.next().expect("frequency"))?;
                Ok(StmtKind::Network(NetworkHead { name, freq }))
            }
            Rule::block_end => Ok(StmtKind::End),
            Rule::bare_expr => Ok(StmtKind::Expr(
                self.expr_or_search(p.into_inner().next().expect("expr"))?,
            )),
            r => unreachable!("statement rule {r:?}"),
        }
    }

    pub(super) fn expr_or_search(&self, p: Pair<Rule>) -> R<Expr> {
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

    /// `within …` or `among …` after an input's value.
    fn spread(&self, p: Pair<Rule>) -> R<SpreadSpec> {
        let span = self.span(&p);
        let mut it = p.into_inner().peekable();
        let head = it.next().expect("keyword");
        if head.as_rule() == Rule::kw_among {
            let values = it.map(|e| self.expr(e)).collect::<R<Vec<_>>>()?;
            return Ok(SpreadSpec {
                span,
                form: SpreadForm::Among(values),
            });
        }
        let (mut mag, mut angle, mut law) = (None, None, LawText::Uniform);
        for q in it {
            match q.as_rule() {
                Rule::spread_band => mag = Some(Box::new(self.band(q)?)),
                Rule::spread_angle => {
                    let b = q.into_inner().find(|r| r.as_rule() == Rule::spread_band).expect("band");
                    angle = Some(Box::new(self.band(b)?));
                }
                Rule::spread_law => {
                    let lspan = self.span(&q);
                    let n = q.into_inner().find(|r| r.as_rule() == Rule::number);
                    law = match n {
                        Some(n) => LawText::Normal {
                            k: n.as_str().parse::<f64>().unwrap_or(f64::NAN),
                            span: lspan,
                        },
                        None => LawText::Uniform,
                    };
                }
                r => unreachable!("spread part {r:?}"),
            }
        }
        Ok(SpreadSpec {
            span,
            form: SpreadForm::Band { mag, angle, law },
        })
    }

    fn band(&self, p: Pair<Rule>) -> R<BandText> {
        let span = self.span(&p);
        let mut ends = p.into_inner().map(|e| self.expr(e)).collect::<R<Vec<_>>>()?;
        let hi = ends.pop().expect("band end");
        Ok(BandText {
            span,
            lo: ends.pop(),
            hi,
        })
    }

    pub(super) fn ident(&self, p: Pair<Rule>) -> Ident {
        Ident {
            name: p.as_str().to_string(),
            span: self.span(&p),
        }
    }
}

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
