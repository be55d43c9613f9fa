//! Misreadings: the reach of `∠`, `||`, `--` and unary minus (issue 13,
//! item 1; docs/grammar.md "Expressions").
//!
//! For each pair of operators around `∠`, `||`, `--` and unary minus, the
//! reading the language takes, asserted by value against the same formula
//! bracketed by hand, or the refusal. The operands are chosen so that the
//! two readings of a pair give different values wherever they can.

use num_complex::Complex64 as C64;
use ohmsheet::diag::ErrorCode;
use ohmsheet::sheet::Sheet;
use ohmsheet::syntax::parse_line;
use proptest::prelude::*;

use crate::assert_close;
use crate::common::{close, engine, errors, eval_expr, value};

const PRE: &str = "Z1 = (3 + j4) Ω\nZ2 = (6 - j8) Ω\nZ3 = 10 Ω\n\
                   C1 = 10 µF\nC2 = 22 µF\nC3 = 47 µF\n\
                   p1 = (0.1 + j0.3) pu\np2 = 0.5 pu\n\
                   k = 2\nm = 5\nt = 30°";

enum Reading {
    /// Read as this hand-bracketed formula.
    As(&'static str),
    /// Refused as ambiguous.
    Refused,
}
use Reading::*;

const TABLE: &[(&str, Reading)] = &[
    // ---- an operator before `∠`: the magnitude is the whole product
    ("m + k ∠ t", As("m + (k ∠ t)")),
    ("m - k ∠ t", As("m - (k ∠ t)")),
    ("m * k ∠ t", As("(m * k) ∠ t")),
    ("m / k ∠ t", As("(m / k) ∠ t")),
    ("m · k ∠ t", As("(m * k) ∠ t")),
    ("m × k ∠ t", As("(m * k) ∠ t")),
    ("m^k ∠ t", As("(m^k) ∠ t")),
    ("Z3 || Z1 ∠ t", As("Z3 || (Z1 ∠ t)")),
    ("Z3 -- Z1 ∠ t", As("Z3 -- (Z1 ∠ t)")),
    ("m ∠ t ∠ t", Refused),
    ("-m ∠ t", As("(-m) ∠ t")),
    ("m /_ t /_ t", Refused),
    // ---- an operator after the angle: the angle is one signed operand
    ("m ∠ t + k", As("(m ∠ t) + k")),
    ("m ∠ t - k", As("(m ∠ t) - k")),
    ("m ∠ t * k", Refused),
    ("m ∠ t / k", Refused),
    ("m ∠ t · k", Refused),
    ("m ∠ t^k", Refused),
    ("m /_ t * k", Refused),
    ("Z3 ∠ t || Z1", As("(Z3 ∠ t) || Z1")),
    ("Z3 ∠ t -- Z1", As("(Z3 ∠ t) -- Z1")),
    ("m ∠ -t", As("m ∠ (-t)")),
    ("m ∠ -30° * k", Refused),
    ("m ∠ +t", As("m ∠ t")),
    // ---- `||` with each operator on either side
    ("Z1 + Z2 || Z3", As("Z1 + (Z2 || Z3)")),
    ("Z1 || Z2 + Z3", As("(Z1 || Z2) + Z3")),
    ("Z1 - Z2 || Z3", As("Z1 - (Z2 || Z3)")),
    ("Z1 || Z2 - Z3", As("(Z1 || Z2) - Z3")),
    ("k * Z1 || Z2", As("(k * Z1) || Z2")),
    ("Z1 || k * Z2", As("Z1 || (k * Z2)")),
    ("Z1 / k || Z2", As("(Z1 / k) || Z2")),
    ("Z1 || Z2 / k", As("Z1 || (Z2 / k)")),
    ("p1^2 || p2", As("(p1^2) || p2")),
    ("p1 || p2^2", As("p1 || (p2^2)")),
    ("Z1 || Z2 || Z3", As("(Z1 || Z2) || Z3")),
    ("Z1 || Z2 -- Z3", Refused),
    ("-Z1 || Z2", Refused),
    ("-k * Z1 || Z2", Refused),
    ("-(Z1) || Z2", Refused),
    ("-j30 Ω || Z2", As("(-j30 Ω) || Z2")),
    ("-2 * Z1 || Z2", As("((-2) * Z1) || Z2")),
    ("Z1 || -Z2", As("Z1 || (-Z2)")),
    ("+Z1 || Z2", As("Z1 || Z2")),
    // ---- `--` (capacitances, so `--` is the reciprocal sum and differs
    // from `+`)
    ("C1 + C2 -- C3", As("C1 + (C2 -- C3)")),
    ("C1 -- C2 + C3", As("(C1 -- C2) + C3")),
    ("C1 - C2 -- C3", As("C1 - (C2 -- C3)")),
    ("C1 -- C2 - C3", As("(C1 -- C2) - C3")),
    ("k * C1 -- C2", As("(k * C1) -- C2")),
    ("C1 -- k * C2", As("C1 -- (k * C2)")),
    ("C1 / k -- C2", As("(C1 / k) -- C2")),
    ("C1 -- C2 / k", As("C1 -- (C2 / k)")),
    ("p1^2 -- p2", As("(p1^2) -- p2")),
    ("C1 -- C2 -- C3", As("(C1 -- C2) -- C3")),
    ("C1 -- C2 || C3", Refused),
    ("-C1 -- C2", Refused),
    ("-10 µF -- C2", As("(-10 µF) -- C2")),
    ("C1 -- -C2", As("C1 -- (-C2)")),
    // ---- unary minus with each operator
    ("-m + k", As("(-m) + k")),
    ("-m - k", As("(-m) - k")),
    ("-m * k", As("(-m) * k")),
    ("-m / k", As("(-m) / k")),
    ("-m^2", Refused),
    ("-2^2", Refused),
    ("-m^-k", Refused),
    // (`m + -k` is a syntax error: `+-` is the tolerance sign of a check)
    ("m - -k", As("m - (-k)")),
    ("m * -k", As("m * (-k)")),
    ("m / -k", As("m / (-k)")),
    ("m^-k", As("m^(-k)")),
    // ---- `^` with `^`, and the rules left as they were
    ("m^k^2", Refused),
    ("m / k * k", As("(m / k) * k")),
    ("m - k + k", As("(m - k) + k")),
];

/// The two bracketings a refusal's hint offers: "write `A` or `B`…".
fn bracketings(hint: &str) -> (String, String) {
    let parts: Vec<&str> = hint.split('`').collect();
    assert!(parts.len() >= 5 && parts[0].ends_with("write "), "{hint}");
    (parts[1].to_string(), parts[3].to_string())
}

fn parses(line: &str) -> bool {
    matches!(parse_line(line, ohmsheet::diag::FileId(0), 0, 1), Ok(Some(_)))
}

#[test]
fn each_pair_of_operators_reads_one_way_or_is_refused() {
    for (src, reading) in TABLE {
        match reading {
            As(hand) => {
                let got = eval_expr(PRE, src);
                let want = eval_expr(PRE, hand);
                assert!(
                    got.re.to_bits() == want.re.to_bits() && got.im.to_bits() == want.im.to_bits(),
                    "`{src}` gave {got}, `{hand}` gives {want}"
                );
            }
            Refused => {
                let d = &errors(&format!("{PRE}\nx = {src}\n"))[0];
                assert_eq!(d.code, ErrorCode::AmbiguousOperators, "`{src}`: {}", d.message);
                let (a, b) = bracketings(d.hint.as_deref().unwrap_or(""));
                assert_ne!(a, b, "{src}");
                for fixed in [a, b] {
                    assert!(parses(&format!("x = {fixed}")), "`{src}`: `{fixed}` does not parse");
                }
            }
        }
    }
}

/// The issue's examples, against values worked by hand from the
/// definition m∠θ = m(cos θ + j sin θ) (Euler's formula).
#[test]
fn the_issues_examples() {
    let polar = |m: f64, deg: f64| C64::from_polar(m, deg.to_radians());
    // 480 V / √3 = 277.128 V (a 480 V line-to-line system's phase voltage)
    let x = eval_expr("", "480 V / sqrt(3) ∠ -30°");
    assert_close!(x, polar(480.0 / 3f64.sqrt(), -30.0), 1e-14);
    assert!((x.norm() - 277.1).abs() < 0.05 && (x.arg().to_degrees() + 30.0).abs() < 1e-9);
    assert_close!(eval_expr("", "1 / 2 ∠ 30°"), polar(0.5, 30.0), 1e-14);
    // An impedance from a per-unit value on a rating, at the angle of X/R:
    // 0.06 · (480 V)² / 2 MVA = 6.912 mΩ ∠ atan(8).
    let z = eval_expr("zt = 0.06\nV = 480 V\nS = 2 MVA\nXR = 8", "zt * V^2 / S ∠ atan(XR)");
    assert_close!(z, C64::from_polar(0.06 * 480.0 * 480.0 / 2e6, 8f64.atan()), 1e-14);
    let hand = eval_expr("zt = 0.06\nV = 480 V\nS = 2 MVA\nXR = 8", "(zt * V^2 / S) ∠ atan(XR)");
    assert_close!(z, hand, 0.0);
}

/// The refusals name the place and both readings, as typed.
#[test]
fn a_refusal_is_located_and_quotes_the_line() {
    let src = "V1 = 230 V\nV = V1   ∠ 120°*2   # doubled?\n";
    let d = &errors(src)[0];
    assert_eq!(d.code, ErrorCode::AmbiguousOperators);
    let sp = d.span.unwrap();
    assert_eq!(&src[sp.range()], "V1   ∠ 120°*2");
    assert_eq!(
        bracketings(d.hint.as_deref().unwrap()),
        ("V1   ∠ (120°*2)".to_string(), "(V1   ∠ 120°)*2".to_string())
    );
}

fn operand() -> impl Strategy<Value = String> {
    prop_oneof![
        (1u32..1000).prop_map(|n| n.to_string()),
        (1u32..100).prop_map(|n| format!("{n}.5 Ω")),
        (1u32..100).prop_map(|n| format!("j{n}")),
        Just("Za".to_string()),
        Just("sqrt(2)".to_string()),
        Just("(a + b)".to_string()),
        Just("(abs(Za) ∠ 3)".to_string()),
    ]
}

/// An operand that is not a number literal (a minus before it is not part
/// of a number).
fn non_literal() -> impl Strategy<Value = String> {
    prop_oneof![
        Just("Za".to_string()),
        Just("sqrt(2)".to_string()),
        Just("(a + b)".to_string()),
        Just("x.re".to_string()),
    ]
}

/// A refused form with its operands filled in, and whether a looser `+`
/// may stand around it.
fn refused_form() -> impl Strategy<Value = (String, bool)> {
    let o = operand;
    prop_oneof![
        (o(), o(), o(), prop::sample::select(vec!["*", "/", "·", "×", "^"]))
            .prop_map(|(a, b, c, op)| (format!("{a} ∠ {b} {op} {c}"), true)),
        (o(), o(), o()).prop_map(|(a, b, c)| (format!("{a} ∠ -{b} * {c}"), true)),
        (o(), o(), o()).prop_map(|(a, b, c)| (format!("{a} /_ {b} ∠ {c}"), true)),
        (o(), o(), o(), any::<bool>()).prop_map(|(a, b, c, f)| {
            let (x, y) = if f { ("||", "--") } else { ("--", "||") };
            (format!("{a} {x} {b} {y} {c}"), true)
        }),
        (non_literal(), o(), prop::sample::select(vec!["||", "--"]))
            .prop_map(|(a, b, op)| (format!("-{a} {op} {b}"), true)),
        (non_literal(), o(), o()).prop_map(|(a, k, b)| (format!("-{a} * {k} || {b}"), true)),
        (o(), o()).prop_map(|(a, b)| (format!("-{a} ^ {b}"), true)),
        (o(), o(), o()).prop_map(|(a, b, c)| (format!("{a} ^ {b} ^ {c}"), true)),
        (
            o(),
            o(),
            o(),
            prop::sample::select(vec!["<", "<=", ">", ">=", "≤", "≥"])
        )
            .prop_map(|(a, b, c, op)| (format!("{a} {op} {b} < {c}"), false)),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig {
        cases: std::env::var("PROPTEST_CASES").ok().and_then(|s| s.parse().ok()).unwrap_or(128),
        failure_persistence: None,
        ..ProptestConfig::default()
    })]

    /// `a * b ∠ t` is `(a*b) ∠ t`, and `a / b ∠ t` is `(a/b) ∠ t`, to the
    /// bit: the same operations in the same order (the operands are cells,
    /// so nothing is folded at compile time).
    #[test]
    fn the_magnitude_is_the_whole_product(
        a in -1e6f64..1e6, b in 1e-3f64..1e6, t in -720f64..720.0, unit in prop::sample::select(vec!["°", "rad", ""]),
    ) {
        let e = engine(&format!(
            "a = {a:e} V\nb = {b:e}\nt = {t:e} {unit}\n\
             x1 = a * b ∠ t\ny1 = (a * b) ∠ t\nx2 = a / b ∠ t\ny2 = (a / b) ∠ t\nx3 = a * b ∠ -t\ny3 = (a*b) ∠ (-t)\n"
        ));
        for (x, y) in [("x1", "y1"), ("x2", "y2"), ("x3", "y3")] {
            let (x, y) = (value(&e, x), value(&e, y));
            prop_assert!(x.re.to_bits() == y.re.to_bits() && x.im.to_bits() == y.im.to_bits(), "{x} vs {y}");
        }
        // and the magnitude is |a·b| whatever the angle (to rounding)
        prop_assert!(close(C64::new(value(&e, "x1").norm(), 0.0), C64::new((a * b).abs(), 0.0), 1e-12));
    }

    /// Every refused form is refused where it stands (alone or inside a
    /// sum), and parses once bracketed either way the hint offers.
    #[test]
    fn refused_forms_parse_once_bracketed((form, in_sum) in refused_form(), wrap in any::<bool>()) {
        let line = if wrap && in_sum { format!("x = k - {form} + k") } else { format!("x = {form}") };
        let sheet = Sheet::from_text("p.ohm", &line);
        prop_assert_eq!(sheet.errors.len(), 1, "{}", line);
        let d = &sheet.errors[0];
        prop_assert_eq!(d.code, ErrorCode::AmbiguousOperators, "{}: {}", line, d.message);
        let sp = d.span.unwrap().range();
        prop_assert_eq!(&line[sp.clone()], form.as_str());
        let (a, b) = bracketings(d.hint.as_deref().unwrap_or(""));
        for fixed in [a, b] {
            let l = format!("{}{}{}", &line[..sp.start], fixed, &line[sp.end..]);
            prop_assert!(parses(&l), "{} -> {}", line, l);
        }
    }
}

/// The same reading and the same refusals wherever a formula is typed: a
/// `--set`, a cases table's value, a session line.
#[test]
fn every_entry_point_reads_alike() {
    use predicates::prelude::*;
    let d = tempfile::tempdir().unwrap();
    let sheet = d.path().join("s.ohm");
    std::fs::write(&sheet, "Vs = 1 V\nI = Vs / 2 Ω\n").unwrap();
    let s = sheet.to_str().unwrap();
    crate::common::ohmsheet()
        .args(["run", s, "--set", "Vs=2 V ∠ 30° * 3"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("error[ambiguous-operators]"))
        .stderr(predicate::str::contains("`(2 V ∠ 30°) * 3`"));
    let out = crate::common::ohmsheet()
        .args(["run", s, "--set", "Vs=480 V / sqrt(3) ∠ -30°", "--format", "json"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    // cases: one value read, one refused with the same hint
    let cases = d.path().join("cases.csv");
    std::fs::write(&cases, "Vs\n480 V / sqrt(3) ∠ -30°\n2 V ∠ 30° * 3\n").unwrap();
    let results = d.path().join("out.csv");
    crate::common::ohmsheet()
        .args([
            "batch",
            s,
            "--cases",
            cases.to_str().unwrap(),
            "--out",
            results.to_str().unwrap(),
            "--complex",
            "rect",
        ])
        .assert()
        .stderr(predicate::str::contains("(2 V ∠ 30°) * 3"));
    let errs = std::fs::read_to_string(d.path().join("out.errors.csv")).unwrap();
    assert!(errs.contains("2 V ∠ (30° * 3)"), "{errs}");
    // the first row: I = (480/√3 V ∠ -30°) / 2 Ω, |I| = 138.56 A
    let text = std::fs::read_to_string(&results).unwrap();
    let row = text.lines().nth(1).unwrap();
    let want = C64::from_polar(480.0 / 3f64.sqrt() / 2.0, (-30f64).to_radians());
    // (read the old way, 480 V / (√3 ∠ -30°), the imaginary part would be +69.28)
    let im: f64 = row.rsplit(',').next().unwrap().parse().unwrap();
    assert!((im - want.im).abs() < 1e-9 * want.norm(), "{row} vs {want}");
    // a session line
    let out = crate::common::ohmsheet()
        .arg(s)
        .env("HOME", d.path())
        .env("XDG_DATA_HOME", d.path())
        .write_stdin("Vs = -x^2\n")
        .output()
        .unwrap();
    let said = String::from_utf8_lossy(&out.stdout).to_string() + &String::from_utf8_lossy(&out.stderr);
    assert!(
        said.contains("ambiguous-operators") && said.contains("`(-x)^2`"),
        "{said}"
    );
}

// ---- an independent reading of the precedence table in docs/grammar.md

/// A token of a flat formula: an operand name, a sign, or a binary operator.
#[derive(Clone, Debug)]
enum Tok {
    Name(char),
    Neg,
    Op(&'static str),
}

/// Binding power of each binary operator, loosest first, as the table in
/// docs/grammar.md states it.
fn level(op: &str) -> u8 {
    match op {
        "<" | ">=" => 1,
        "+" | "-" => 2,
        "||" | "--" => 3,
        "∠" => 4,
        "*" | "/" => 5,
        "^" => 7,
        _ => unreachable!(),
    }
}

#[derive(Debug)]
enum Tree {
    Leaf(char),
    Neg(Box<Tree>),
    Bin(&'static str, Box<Tree>, Box<Tree>),
}

/// Precedence climbing over `toks` from `i`: operands with their signs
/// (a sign binds looser than `^`, tighter than `*`), then operators of at
/// least `min` binding power; `^` groups to the right, the rest left.
fn climb(toks: &[Tok], i: &mut usize, min: u8) -> Tree {
    let mut lhs = unary(toks, i);
    while let Some(Tok::Op(op)) = toks.get(*i) {
        let l = level(op);
        if l < min {
            break;
        }
        *i += 1;
        let rhs = climb(toks, i, if *op == "^" { l } else { l + 1 });
        lhs = Tree::Bin(op, Box::new(lhs), Box::new(rhs));
    }
    lhs
}

fn unary(toks: &[Tok], i: &mut usize) -> Tree {
    match toks[*i] {
        Tok::Neg => {
            *i += 1;
            Tree::Neg(Box::new(climb_from_unary(toks, i)))
        }
        Tok::Name(c) => {
            *i += 1;
            Tree::Leaf(c)
        }
        Tok::Op(_) => unreachable!(),
    }
}

/// The operand of a sign: another signed operand, with any `^` after it.
fn climb_from_unary(toks: &[Tok], i: &mut usize) -> Tree {
    let mut lhs = unary(toks, i);
    if let Some(Tok::Op("^")) = toks.get(*i) {
        *i += 1;
        let rhs = climb(toks, i, 7);
        lhs = Tree::Bin("^", Box::new(lhs), Box::new(rhs));
    }
    lhs
}

/// Whether the docs refuse this tree: the table "Refused as ambiguous".
fn refused(t: &Tree) -> bool {
    let bin = |t: &Tree| matches!(t, Tree::Bin(..));
    let leftmost = |mut t: &Tree| {
        while let Tree::Bin(_, a, _) = t {
            t = a;
        }
        matches!(t, Tree::Neg(_)) // every operand here is a name, never a literal
    };
    match t {
        Tree::Leaf(_) => false,
        Tree::Neg(x) => matches!(**x, Tree::Bin("^", ..)) || refused(x),
        Tree::Bin(op, a, b) => {
            let here = match *op {
                "∠" => {
                    let mut r = &**b;
                    while let Tree::Neg(x) = r {
                        r = x;
                    }
                    bin(r) || matches!(**a, Tree::Bin("∠", ..))
                }
                "||" | "--" => matches!(**a, Tree::Bin(o, ..) if (o == "||" || o == "--") && o != *op) || leftmost(a),
                "^" => matches!(**b, Tree::Bin("^", ..)),
                "<" | ">=" => matches!(**a, Tree::Bin("<" | ">=", ..)),
                _ => false,
            };
            here || refused(a) || refused(b)
        }
    }
}

fn tree_shape(t: &Tree) -> String {
    match t {
        Tree::Leaf(c) => c.to_string(),
        Tree::Neg(x) => format!("(-{})", tree_shape(x)),
        Tree::Bin(op, a, b) => format!("({} {} {})", tree_shape(a), op, tree_shape(b)),
    }
}

fn ast_shape(e: &ohmsheet::syntax::ast::Expr) -> String {
    use ohmsheet::syntax::ast::{ExprKind, UnOp};
    match &e.kind {
        ExprKind::Name(i) => i.name.clone(),
        ExprKind::Unary(UnOp::Neg, x) => format!("(-{})", ast_shape(x)),
        ExprKind::Binary(op, a, b) => format!("({} {} {})", ast_shape(a), op.symbol(), ast_shape(b)),
        k => panic!("unexpected {k:?}"),
    }
}

fn tokens() -> impl Strategy<Value = Vec<Tok>> {
    let operand = (any::<bool>(), prop::sample::select(vec!['a', 'b', 'c', 'd'])).prop_map(|(neg, c)| {
        if neg {
            vec![Tok::Neg, Tok::Name(c)]
        } else {
            vec![Tok::Name(c)]
        }
    });
    let op = prop::sample::select(vec!["+", "-", "*", "/", "^", "||", "--", "∠", "<", ">="]);
    (operand.clone(), prop::collection::vec((op, operand), 1..6)).prop_map(|(first, rest)| {
        let mut v = first;
        for (o, x) in rest {
            v.push(Tok::Op(o));
            // `+ -` and `- -` are refused as slips for the tolerance sign
            // and for `--`, before precedence is considered.
            let skip = usize::from((o == "+" || o == "-") && matches!(x[0], Tok::Neg));
            v.extend(x.into_iter().skip(skip));
        }
        v
    })
}

proptest! {
    #![proptest_config(ProptestConfig {
        cases: std::env::var("PROPTEST_CASES").ok().and_then(|s| s.parse().ok()).map_or(256, |n: u32| n * 2),
        failure_persistence: None,
        ..ProptestConfig::default()
    })]

    /// Random runs of names, signs and operators: the parser refuses
    /// exactly what docs/grammar.md refuses, and reads the rest as the
    /// precedence table says (an independent precedence climber).
    #[test]
    fn the_parser_follows_the_documented_table(toks in tokens()) {
        let text: Vec<String> = toks
            .iter()
            .map(|t| match t {
                Tok::Name(c) => c.to_string(),
                Tok::Neg => "-".to_string(),
                Tok::Op(o) => format!(" {o} "),
            })
            .collect();
        let text = text.concat();
        let mut i = 0;
        let want = climb(&toks, &mut i, 0);
        prop_assert_eq!(i, toks.len());
        let got = parse_line(&format!("x = {text}"), ohmsheet::diag::FileId(0), 0, 1);
        match got {
            Ok(Some(stmt)) => {
                let ohmsheet::syntax::ast::StmtKind::Def(d) = stmt.kind else { panic!("{text}") };
                prop_assert!(!refused(&want), "`{}` accepted as {}", text, ast_shape(&d.expr));
                prop_assert_eq!(ast_shape(&d.expr), tree_shape(&want), "{}", text);
            }
            Err(d) => {
                prop_assert_eq!(d.code, ErrorCode::AmbiguousOperators, "`{}`: {}", text, d.message);
                prop_assert!(refused(&want), "`{}` refused, read as {}", text, tree_shape(&want));
            }
            Ok(None) => prop_assert!(false, "{}", text),
        }
    }
}
