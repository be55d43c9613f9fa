use super::*;
use crate::diag::ErrorCode;
use crate::syntax::ast::*;

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
    assert_eq!(shape(&expr_of("2 * Z1 || Z2")), "((2 * Z1) || Z2)");
    assert_eq!(shape(&expr_of("2^-1")), "(2 ^ (-1))");
    assert_eq!(shape(&expr_of("a -- b -- c")), "((a -- b) -- c)");
    assert_eq!(shape(&expr_of("a - -b")), "(a - (-b))");
    assert_eq!(shape(&expr_of("a / b * c")), "((a / b) * c)");
    // The magnitude of `∠` is the whole product or quotient before it.
    assert_eq!(shape(&expr_of("V / Z ∠ 30")), "((V / Z) ∠ 30)");
    assert_eq!(
        shape(&expr_of("zt * V^2 / S ∠ atan(XR)")),
        "(((zt * (V ^ 2)) / S) ∠ atan(XR))"
    );
    assert_eq!(shape(&expr_of("3 + 4 ∠ 30°")), "(3 + (4 ∠ 30[°]))");
    assert_eq!(shape(&expr_of("Z1 || 2 ∠ 30")), "(Z1 || (2 ∠ 30))");
    assert_eq!(shape(&expr_of("-2 ∠ -x")), "((-2) ∠ (-x))");
    assert_eq!(shape(&expr_of("-j30 Ω || 50 Ω")), "((-30j[Ω]) || 50[Ω])");
    assert_eq!(shape(&expr_of("-2 * Z1 || Z2")), "(((-2) * Z1) || Z2)");
    assert_eq!(shape(&expr_of("Z1 || -Z2")), "(Z1 || (-Z2))");
    // Comparisons are the loosest.
    assert_eq!(shape(&expr_of("a + b < c * d")), "((a + b) < (c * d))");
    assert_eq!(shape(&expr_of("a ≤ b || c")), "(a <= (b || c))");
    assert_eq!(shape(&expr_of("a >= -b")), "(a >= (-b))");
    assert_eq!(shape(&expr_of("(a < b) * (b > c)")), "((a < b) * (b > c))");
}

#[test]
fn ambiguous_forms_are_refused_with_both_bracketings() {
    for (src, a, b) in [
        ("2 ∠ 30° * 3", "2 ∠ (30° * 3)", "(2 ∠ 30°) * 3"),
        ("2 ∠ t^2", "2 ∠ (t^2)", "(2 ∠ t)^2"),
        ("V ∠ t / 2", "V ∠ (t / 2)", "(V ∠ t) / 2"),
        ("2 ∠ 30 ∠ 40", "(2 ∠ 30) ∠ 40", "2 ∠ (30 ∠ 40)"),
        ("a -- b || c", "(a -- b) || c", "a -- (b || c)"),
        ("a || b -- c", "(a || b) -- c", "a || (b -- c)"),
        ("-Z1 || Z2", "(-Z1) || Z2", "-(Z1 || Z2)"),
        ("-(Z1) -- Z2", "(-(Z1)) -- Z2", "-((Z1) -- Z2)"),
        ("-2^2", "-(2^2)", "(-2)^2"),
        ("-x^2", "-(x^2)", "(-x)^2"),
        ("2^3^2", "2^(3^2)", "(2^3)^2"),
        ("a < b < c", "(a < b) < c", "a < (b < c)"),
        ("a >= b <= c", "(a >= b) <= c", "a >= (b <= c)"),
    ] {
        let d = err_of(&format!("x = {src}"));
        assert_eq!(d.code, ErrorCode::AmbiguousOperators, "{src}");
        let hint = d.hint.clone().unwrap_or_default();
        assert!(hint.contains(&format!("`{a}`")), "{src}: {hint}");
        assert!(hint.contains(&format!("`{b}`")), "{src}: {hint}");
        // The caret covers the ambiguous part.
        assert_eq!(d.span.unwrap().start, 4, "{src}");
        // Either bracketing parses.
        for fixed in [a, b] {
            assert!(parse_line(&format!("x = {fixed}"), FileId(0), 0, 1).is_ok(), "{fixed}");
        }
    }
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

#[test]
fn common_slips_get_their_hint() {
    let hint = |src: &str| err_of(src).hint.unwrap_or_default();
    assert_eq!(hint("x = 2 ** 3"), "a power is written with `^`: `2^3`");
    assert_eq!(hint("x = Vll**2"), "a power is written with `^`: `Vll^2`");
    assert!(hint("x = (a + b) ** 2").contains("`^`"));
    assert!(hint("x = a => b").contains("`>=`"));
    assert!(hint("x = a =< b").contains("`<=`"));
    assert!(hint("x = a <> b").contains("no not-equal"));
    assert!(hint("x = a != b").contains("no not-equal"));
    // The message reads as a sentence when the line ends early.
    for src in ["x =", "x = 1 +", "x = (1 + 2) *", "x = 2 ∠"] {
        let d = err_of(src);
        assert_eq!(d.message, "the line ends too soon", "{src}");
        assert!(!d.message.contains("unexpected the"), "{src}");
    }
}
