//! The syntax tree of a sheet. It knows nothing of evaluation.

use crate::diag::Span;
use crate::units::Unit;

#[derive(Clone, Debug, PartialEq)]
pub struct Ident {
    pub name: String,
    pub span: Span,
}

/// A unit as written in the source, already resolved.
#[derive(Clone, Debug, PartialEq)]
pub struct UnitRef {
    pub unit: Unit,
    pub span: Span,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BinOp {
    Add,
    Sub,
    Mul,
    Div,
    Pow,
    /// `a || b`
    Parallel,
    /// `a -- b`
    Series,
    /// `m ∠ θ`
    Angle,
    /// `a < b`: 1 or 0
    Lt,
    /// `a <= b` or `a ≤ b`
    Le,
    /// `a > b`
    Gt,
    /// `a >= b` or `a ≥ b`
    Ge,
}

impl BinOp {
    pub fn symbol(self) -> &'static str {
        match self {
            BinOp::Add => "+",
            BinOp::Sub => "-",
            BinOp::Mul => "*",
            BinOp::Div => "/",
            BinOp::Pow => "^",
            BinOp::Parallel => "||",
            BinOp::Series => "--",
            BinOp::Angle => "∠",
            BinOp::Lt => "<",
            BinOp::Le => "<=",
            BinOp::Gt => ">",
            BinOp::Ge => ">=",
        }
    }

    /// `<`, `<=`, `>` or `>=`.
    pub fn is_comparison(self) -> bool {
        matches!(self, BinOp::Lt | BinOp::Le | BinOp::Gt | BinOp::Ge)
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum UnOp {
    Neg,
    Pos,
}

#[derive(Clone, Debug, PartialEq)]
pub enum ExprKind {
    /// A number, with its glued prefix already applied; `imag` for `3j`,
    /// `j3`. The unit, if any, is applied on top.
    Number {
        value: f64,
        imag: bool,
        unit: Option<UnitRef>,
    },
    /// A cell name or a constant (`pi`, `j`).
    Name(Ident),
    /// `y.a`: a field of a record-valued cell or call.
    Field(Box<Expr>, Ident),
    Call {
        func: Ident,
        args: Vec<Expr>,
    },
    Unary(UnOp, Box<Expr>),
    Binary(BinOp, Box<Expr>, Box<Expr>),
    /// `(expr)` with an optional unit after it.
    Paren(Box<Expr>, Option<UnitRef>),
    /// `C in 0 .. 2 mF where pf = 0.95`: the value of an input that brings
    /// an expression to a target, or to its largest or smallest value.
    /// Only the whole formula of a cell can be a search.
    Search(Box<Search>),
}

/// `VAR in LO .. HI where TARGET = VALUE` or `… where TARGET is largest`.
#[derive(Clone, Debug, PartialEq)]
pub struct Search {
    /// The varied input.
    pub var: Ident,
    pub lo: Expr,
    pub hi: Expr,
    /// The expression searched.
    pub target: Expr,
    pub goal: SearchGoal,
}

#[derive(Clone, Debug, PartialEq)]
pub enum SearchGoal {
    /// `= VALUE`
    Equals(Expr),
    /// `is largest`
    Largest,
    /// `is smallest`
    Smallest,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Expr {
    pub kind: ExprKind,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq)]
pub enum Tolerance {
    /// `± 1%`: a fraction of the magnitude of the right-hand side.
    Relative(f64, Span),
    /// `± 0.5 Ω`
    Absolute(Expr),
}

#[derive(Clone, Debug, PartialEq)]
pub struct Definition {
    pub name: Ident,
    pub expr: Expr,
    pub display: Option<UnitRef>,
    /// `within …` or `among …` after the value: the input's tolerance.
    pub spread: Option<SpreadSpec>,
}

/// A tolerance as written after an input's value (docs/tolerances.md).
#[derive(Clone, Debug, PartialEq)]
pub struct SpreadSpec {
    /// The whole clause, from `within` or `among` on.
    pub span: Span,
    pub form: SpreadForm,
}

#[derive(Clone, Debug, PartialEq)]
pub enum SpreadForm {
    /// `within 5 %`, `within -0 % .. +10 %`, `within 2 % angle 3°`,
    /// `within 20 % normal 2σ`.
    Band {
        /// On the magnitude (or the real value).
        mag: Option<Box<BandText>>,
        /// On the angle of a phasor.
        angle: Option<Box<BandText>>,
        law: LawText,
    },
    /// `among 450 kvar, 600 kvar, 750 kvar`: one of the listed values.
    Among(Vec<Expr>),
}

/// `A` (for −A .. +A) or `LO .. HI` (offsets from the value).
#[derive(Clone, Debug, PartialEq)]
pub struct BandText {
    pub span: Span,
    pub lo: Option<Expr>,
    pub hi: Expr,
}

#[derive(Clone, Debug, PartialEq)]
pub enum LawText {
    /// Every value in the band equally likely (the default).
    Uniform,
    /// `normal Kσ`: the band's half-width is K standard deviations.
    Normal { k: f64, span: Span },
}

#[derive(Clone, Debug, PartialEq)]
pub struct Check {
    pub lhs: Expr,
    pub rhs: Expr,
    pub tol: Tolerance,
    /// `over the box` or `over 99 % of samples`: the check must hold over
    /// the inputs' tolerances (docs/tolerances.md).
    pub over: Option<CheckOver>,
}

/// Where a check must hold besides the stated values.
#[derive(Clone, Debug, PartialEq)]
pub struct CheckOver {
    /// The share of Monte Carlo samples (a fraction), or `None` for every
    /// point of the tolerance box.
    pub share: Option<f64>,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq)]
pub struct DirectiveArg {
    pub text: String,
    pub span: Span,
    pub quoted: bool,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Directive {
    pub name: Ident,
    pub args: Vec<DirectiveArg>,
}

#[derive(Clone, Debug, PartialEq)]
pub enum StmtKind {
    Def(Definition),
    Check(Check),
    Directive(Directive),
    /// A bare expression: evaluated in a session, refused in a sheet file.
    Expr(Expr),
    /// `network NAME at FREQUENCY`: the lines up to `end` are its elements.
    Network(NetworkHead),
    /// `end`: closes a network block.
    End,
}

/// The first line of a network block.
#[derive(Clone, Debug, PartialEq)]
pub struct NetworkHead {
    pub name: Ident,
    /// The frequency the network is solved at (Hz or rad/s).
    pub freq: Expr,
}

/// Functions whose arguments after the first `network_args` name nodes or
/// elements of a network rather than cells: `net_v(plant, bus)`.
pub const NETWORK_RESULTS: &[&str] = &[
    "net_v",
    "net_i",
    "net_s",
    "net_thevenin",
    "net_z",
    "net_y",
    "net_balance",
];

/// Element forms of a network block, and how many of their first
/// arguments are node (or element) names.
pub const NETWORK_ELEMENTS: &[(&str, usize)] = &[
    ("branch", 2),
    ("emf", 2),
    ("inject", 2),
    ("vgain", 4),
    ("transadm", 4),
    ("transimp", 3),
    ("igain", 3),
    ("xformer", 4),
    ("mutual", 2),
];

/// How many leading arguments of a call are names of a network's nodes or
/// elements (not cells): 0 for an ordinary function.
pub fn name_args(func: &str) -> usize {
    if NETWORK_RESULTS.contains(&func) {
        // net_balance(plant) has none; the others name nodes or elements
        // after the network.
        return usize::MAX;
    }
    NETWORK_ELEMENTS.iter().find(|(f, _)| *f == func).map_or(0, |&(_, n)| n)
}

#[derive(Clone, Debug, PartialEq)]
pub struct Stmt {
    pub kind: StmtKind,
    /// The statement without its trailing comment.
    pub span: Span,
    /// 1-based line number in its file.
    pub line: u32,
    /// The comment at the end of the line, without `#`, if any.
    pub comment: Option<String>,
}

impl Expr {
    /// Depth of the tree (1 for a leaf). Iterative over left spines so a
    /// long `a + b + c + …` chain costs no stack.
    pub fn depth(&self) -> usize {
        match &self.kind {
            ExprKind::Number { .. } | ExprKind::Name(_) => 1,
            ExprKind::Field(e, _) => 1 + e.depth(),
            ExprKind::Call { args, .. } => 1 + args.iter().map(Expr::depth).max().unwrap_or(0),
            ExprKind::Unary(_, e) | ExprKind::Paren(e, _) => 1 + e.depth(),
            ExprKind::Binary(_, a, b) => 1 + a.depth().max(b.depth()),
            ExprKind::Search(s) => {
                let v = match &s.goal {
                    SearchGoal::Equals(v) => v.depth(),
                    _ => 0,
                };
                1 + s.lo.depth().max(s.hi.depth()).max(s.target.depth()).max(v)
            }
        }
    }

    /// Visit every name this expression refers to (not function names).
    /// Visit every call in the expression (outermost first): the function's
    /// name and its arguments.
    pub fn for_each_call(&self, f: &mut dyn FnMut(&str, &[Expr])) {
        match &self.kind {
            ExprKind::Number { .. } | ExprKind::Name(_) => {}
            ExprKind::Field(e, _) | ExprKind::Unary(_, e) | ExprKind::Paren(e, _) => e.for_each_call(f),
            ExprKind::Call { func, args } => {
                f(&func.name, args);
                args.iter().for_each(|a| a.for_each_call(f));
            }
            ExprKind::Binary(_, a, b) => {
                a.for_each_call(f);
                b.for_each_call(f);
            }
            ExprKind::Search(s) => {
                for e in [&s.lo, &s.hi, &s.target] {
                    e.for_each_call(f);
                }
                if let SearchGoal::Equals(v) = &s.goal {
                    v.for_each_call(f);
                }
            }
        }
    }

    pub fn for_each_name(&self, f: &mut dyn FnMut(&Ident)) {
        match &self.kind {
            ExprKind::Number { .. } => {}
            ExprKind::Name(id) => f(id),
            ExprKind::Field(e, _) => e.for_each_name(f),
            ExprKind::Call { func, args } => {
                // In `net_v(plant, bus)` only `plant` is a cell; in
                // `branch(a, b, 5 Ω)` neither node is.
                let skip = name_args(&func.name);
                for (k, a) in args.iter().enumerate() {
                    let names_a_node = if skip == usize::MAX { k >= 1 } else { k < skip };
                    if !names_a_node {
                        a.for_each_name(f);
                    }
                }
            }
            ExprKind::Unary(_, e) | ExprKind::Paren(e, _) => e.for_each_name(f),
            ExprKind::Binary(_, a, b) => {
                a.for_each_name(f);
                b.for_each_name(f);
            }
            ExprKind::Search(s) => {
                f(&s.var);
                s.lo.for_each_name(f);
                s.hi.for_each_name(f);
                s.target.for_each_name(f);
                if let SearchGoal::Equals(v) = &s.goal {
                    v.for_each_name(f);
                }
            }
        }
    }
}
