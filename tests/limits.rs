//! Every limit in docs/limits.md, tested at the boundary (accepted) and
//! just past it (a clear error, never a hang, a crash or a silent wrong
//! number), and the documented numbers checked against the code.
//!
//! Expected values here are counts (a sum of N ones is N) and the range of
//! an IEEE 754 binary64 double (largest finite ≈ 1.797e308, smallest
//! subnormal ≈ 4.9e-324; IEEE 754-2019 §3.6).

use std::path::Path;

use ohmsheet::diag::{ErrorCode, FileId};
use ohmsheet::engine::model::{compile_limited, MAX_CELLS};
use ohmsheet::engine::search::{self, find_root, SearchError, SearchOptions, MAX_SCAN};
use ohmsheet::sheet::{Sheet, MAX_INCLUDED_FILES, MAX_INCLUDE_DEPTH};
use ohmsheet::syntax::parse_line;
use ohmsheet::syntax::parser::LIMITS;
use predicates::prelude::*;

use crate::common::{engine, errors, ohmsheet, repo, value};

fn parse_err(line: &str) -> ErrorCode {
    parse_line(line, FileId(0), 0, 1).expect_err("an error").code
}

fn parses(line: &str) {
    if let Err(d) = parse_line(line, FileId(0), 0, 1) {
        panic!("{}: {}", &line[..line.len().min(60)], d.message)
    }
}

/// The numbers docs/limits.md states are the ones the code uses.
#[test]
fn documented_limits_match_the_code() {
    let doc = std::fs::read_to_string(repo("docs/limits.md")).expect("docs/limits.md");
    let num = |n: usize| {
        let s = n.to_string();
        let mut out = String::new();
        for (i, c) in s.chars().enumerate() {
            if i > 0 && (s.len() - i).is_multiple_of(3) {
                out.push(',');
            }
            out.push(c);
        }
        out
    };
    for (what, n) in [
        ("line length", LIMITS.max_line_bytes),
        ("bracket depth", LIMITS.max_bracket_depth),
        ("formula depth", LIMITS.max_expr_depth),
        ("signs and powers", 100),
        ("cells", MAX_CELLS),
        ("include depth", MAX_INCLUDE_DEPTH),
        ("included files", MAX_INCLUDED_FILES),
        ("sweep points", ohmsheet::sweep::DEFAULT_MAX_POINTS),
        ("scan points", MAX_SCAN),
        ("search iterations", search::DEFAULT_MAX_ITER as usize),
        ("function arguments", ohmsheet::funcs::MAX_CALL_ARGS),
        ("network nodes", ohmsheet::network::MAX_NODES),
        ("network elements", ohmsheet::network::MAX_ELEMENTS),
    ] {
        let row = doc
            .lines()
            .find(|l| l.starts_with(&format!("| {what} |")))
            .unwrap_or_else(|| panic!("docs/limits.md has no row `| {what} |`"));
        assert!(
            row.contains(&num(n)),
            "docs/limits.md row `{row}` does not state {}",
            num(n)
        );
    }
}

#[test]
fn line_length() {
    let max = LIMITS.max_line_bytes;
    let head = "x = 1 # ";
    parses(&format!("{head}{}", "a".repeat(max - head.len())));
    assert_eq!(
        parse_err(&format!("{head}{}", "a".repeat(max + 1 - head.len()))),
        ErrorCode::LineTooLong
    );
}

#[test]
fn bracket_depth() {
    let n = LIMITS.max_bracket_depth;
    parses(&format!("x = {}1{}", "(".repeat(n), ")".repeat(n)));
    assert_eq!(
        parse_err(&format!("x = {}1{}", "(".repeat(n + 1), ")".repeat(n + 1))),
        ErrorCode::NestingTooDeep
    );
}

/// The deepest lines allowed parse on a thread with a small stack (a
/// library caller's, a test's): the parser moves to a stack of its own
/// when too little is left, rather than overflowing.
#[test]
fn deepest_lines_parse_on_a_small_stack() {
    let n = LIMITS.max_bracket_depth;
    let lines = [
        format!("x = {}2 kV{}", "(".repeat(n), ")".repeat(n)),
        format!("x = {}1{}", "sqrt(".repeat(n), ")".repeat(n)),
        format!("x = {}1{}", "max(1, ".repeat(n), ")".repeat(n)),
        format!("x = {}1{}", "-(".repeat(n), ")".repeat(n)),
        format!("x = {}2{}", "(2^".repeat(n), ")".repeat(n)),
        format!("x = {}1{}", "(-j3 ∠ ".repeat(n), ")".repeat(n)),
    ];
    let parsed = std::thread::Builder::new()
        .stack_size(64 * 1024)
        .spawn(move || {
            lines
                .iter()
                .map(|l| {
                    parse_line(l, FileId(0), 0, 1)
                        .map(|s| s.is_some())
                        .map_err(|d| d.message)
                })
                .collect::<Vec<_>>()
        })
        .expect("spawn")
        .join()
        .expect("no overflow");
    assert_eq!(parsed, vec![Ok(true); 6]);
    // And the first one means what it says: 2 kV inside 64 brackets.
    let e = engine(&format!("x = {}2 kV{}\n", "(".repeat(n), ")".repeat(n)));
    assert_eq!(value(&e, "x").re, 2000.0);
}

/// A chain of N terms is a tree N deep; at the limit it compiles and
/// evaluates (on a test thread's stack), one past it is refused.
#[test]
fn formula_depth() {
    let n = LIMITS.max_expr_depth;
    let e = engine(&format!("x = {}\n", vec!["1"; n].join(" + ")));
    assert_eq!(value(&e, "x").re, n as f64);
    let e = engine(&format!("x = {}\n", vec!["2 Ω"; n].join(" || ")));
    assert!((value(&e, "x").re - 2.0 / n as f64).abs() < 1e-12);
    assert_eq!(
        parse_err(&format!("x = {}", vec!["1"; n + 1].join(" + "))),
        ErrorCode::NestingTooDeep
    );
}

#[test]
fn signs_and_powers() {
    // `- -` is refused as a likely slip for `--`, so the run is of `+`.
    parses(&format!("x = {}1", "+ ".repeat(100)));
    assert_eq!(
        parse_err(&format!("x = {}1", "+ ".repeat(101))),
        ErrorCode::NestingTooDeep
    );
    let e = engine(&format!("x = -{}1\n", "+ ".repeat(99)));
    assert_eq!(value(&e, "x").re, -1.0);
    // powers count too: 1^1*…*1^1 with 100 `^` (a chain `1^1^1` is
    // refused as ambiguous whatever its length)
    let e = engine(&format!("x = {}\n", vec!["1^1"; 100].join("*")));
    assert_eq!(value(&e, "x").re, 1.0);
    assert_eq!(
        parse_err(&format!("x = {}", vec!["1^1"; 101].join("*"))),
        ErrorCode::NestingTooDeep
    );
    assert_eq!(parse_err("x = 1^1^1"), ErrorCode::AmbiguousOperators);
}

#[test]
fn number_of_cells() {
    let sheet = Sheet::from_text("t.ohm", "a = 1\nb = 2\nc = a + b\n");
    assert!(!compile_limited(&sheet, 3).has_errors());
    let m = compile_limited(&sheet, 2);
    assert_eq!(m.diagnostics[0].code, ErrorCode::TooManyCells);
}

/// A network of MAX_NODES nodes (a chain) and one of MAX_ELEMENTS
/// elements (in parallel) compile; one more node or element is refused
/// at the network's head.
#[test]
fn network_size() {
    use ohmsheet::network::{MAX_ELEMENTS, MAX_NODES};
    let chain = |n: usize| {
        let mut s = String::from("network big at 50 Hz\n  E = emf(n1, ground, 1 V, 1 Ω)\n");
        for k in 1..n {
            s += &format!("  R{k} = branch(n{k}, n{}, 1 Ω)\n", k + 1);
        }
        s + &format!("  R{n} = branch(n{n}, ground, 1 Ω)\nend\n")
    };
    let wide = |n: usize| {
        let mut s = String::from("network wide at 50 Hz\n  E = emf(a, ground, 1 V, 1 Ω)\n");
        for k in 1..n {
            s += &format!("  R{k} = branch(a, ground, 1 kΩ)\n");
        }
        s + "end\n"
    };
    let codes = |src: String| -> Vec<ErrorCode> {
        let m = ohmsheet::engine::compile(&Sheet::from_text("t.ohm", &src));
        m.diagnostics.iter().filter(|d| d.is_error()).map(|d| d.code).collect()
    };
    assert_eq!(codes(chain(MAX_NODES)), []);
    assert_eq!(codes(chain(MAX_NODES + 1)), [ErrorCode::NetworkTooLarge]);
    assert_eq!(codes(wide(MAX_ELEMENTS)), []);
    assert_eq!(codes(wide(MAX_ELEMENTS + 1)), [ErrorCode::NetworkTooLarge]);
}

/// Literals must be doubles once their prefix or unit scales them to SI.
#[test]
fn number_range() {
    let e = engine("a = 1.7e308\nb = 1e-320\nc = 1e296T\nd = 0e-999\n");
    assert_eq!(value(&e, "a").re, 1.7e308);
    assert_eq!(value(&e, "b").re, 1e-320);
    assert!(value(&e, "c").re.is_finite());
    assert_eq!(value(&e, "d").re, 0.0);
    for bad in [
        "x = 1.8e308",
        "x = 1e297T",
        "x = 1e306 kV",
        "x = 1e-400",
        "x = 1e-320 fF",
        "x = 5 TΩ^9*TΩ^9*TΩ^9",
    ] {
        assert_eq!(errors(bad)[0].code, ErrorCode::BadNumber, "{bad}");
    }
}

/// A computed overflow follows IEEE 754: ±∞, shown as ∞. An infinite
/// impedance is an open element (a warning); an infinite plain number has
/// no physical reading and is an error on the operation that overflowed
/// (docs/grammar.md, "Infinite values"). What it leads to that has no
/// value (∞ − ∞) is NaN, which is an error naming where it was born.
#[test]
fn computed_overflow_is_infinite_and_shown() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("o.ohm");
    std::fs::write(&p, "x = 1e308\ny = x * 10\n").unwrap();
    ohmsheet()
        .args(["run", p.to_str().unwrap()])
        .assert()
        .code(2)
        .stdout(predicate::str::contains("∞"))
        .stderr(predicate::str::contains("error[infinite-value]"))
        .stderr(predicate::str::contains("`x * 10` is beyond the range of numbers"));
    std::fs::write(&p, "x = 1e308 Ω\ny = x * 10\n").unwrap();
    ohmsheet()
        .args(["run", p.to_str().unwrap()])
        .assert()
        .code(0)
        .stdout(predicate::str::contains("∞"))
        .stderr(predicate::str::contains("warning[infinite-element]"));
    std::fs::write(&p, "x = 1e308\ny = x * 10\nz = y - y\n").unwrap();
    ohmsheet()
        .args(["run", p.to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("error[not-a-number]"))
        .stderr(predicate::str::contains("`z`"));
}

fn write(dir: &Path, rel: &str, text: &str) {
    let p = dir.join(rel);
    std::fs::create_dir_all(p.parent().unwrap()).unwrap();
    std::fs::write(p, text).unwrap();
}

/// A chain main → l1 → l2 → … → lN, each file in its own folder below
/// the last.
fn include_chain(n: usize) -> (tempfile::TempDir, std::path::PathBuf) {
    let d = tempfile::tempdir().unwrap();
    let mut rel = String::new();
    let mut text = "x0 = 1 V\n@include \"l/1.ohm\"\n".to_string();
    write(d.path(), "main.ohm", &text);
    for i in 1..=n {
        rel.push_str("l/");
        text = format!("x{i} = x{} + 1 V\n", i - 1);
        if i < n {
            text.push_str(&format!("@include \"l/{}.ohm\"\n", i + 1));
        }
        write(d.path(), &format!("{rel}{i}.ohm"), &text);
    }
    let main = d.path().join("main.ohm");
    (d, main)
}

#[test]
fn include_depth() {
    // The main sheet and MAX_INCLUDE_DEPTH - 1 nested library sheets: a
    // chain MAX_INCLUDE_DEPTH files long.
    let n = MAX_INCLUDE_DEPTH - 1;
    let (_d, main) = include_chain(n);
    ohmsheet()
        .args(["run", main.to_str().unwrap()])
        .assert()
        .code(0)
        .stdout(predicate::str::contains(format!("x{n}")));
    let (_d, main) = include_chain(n + 1);
    ohmsheet()
        .args(["run", main.to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("error[include-path]"))
        .stderr(predicate::str::contains("nested at most"));
}

#[test]
fn included_files() {
    // The main sheet plus MAX_INCLUDED_FILES - 1 libraries it includes.
    let make = |libs: usize| {
        let d = tempfile::tempdir().unwrap();
        let mut main = "x = 1 V\n".to_string();
        for i in 0..libs {
            main.push_str(&format!("@include \"lib/{i}.ohm\"\n"));
            write(d.path(), &format!("lib/{i}.ohm"), &format!("y{i} = {i} V\n"));
        }
        write(d.path(), "main.ohm", &main);
        d
    };
    let d = make(MAX_INCLUDED_FILES - 1);
    let p = d.path().join("main.ohm");
    ohmsheet().args(["run", p.to_str().unwrap()]).assert().code(0);
    let d = make(MAX_INCLUDED_FILES);
    let p = d.path().join("main.ohm");
    ohmsheet()
        .args(["run", p.to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("too many library sheets"));
}

const BANK: &str = "V = 480 V\nC = 100 µF\nw = 377 rad/s\nZ = 1 / (j * w * C)\nI = V / Z\n";

#[test]
fn sweep_points() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("s.ohm");
    std::fs::write(&p, BANK).unwrap();
    let p = p.to_str().unwrap();
    let sweep = |points: &str| {
        ohmsheet()
            .args([
                "sweep",
                p,
                "--vary",
                "C=10uF..100uF",
                "--points",
                points,
                "--max-points",
                "50",
                "--show",
                "I",
            ])
            .assert()
    };
    sweep("50").code(0);
    sweep("51")
        .code(2)
        .stderr(predicate::str::contains("error[too-many-points]"))
        .stderr(predicate::str::contains("the limit is 50"));
}

#[test]
fn scan_points() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("s.ohm");
    std::fs::write(&p, BANK).unwrap();
    let p = p.to_str().unwrap();
    let solve = |scan: &str| {
        ohmsheet()
            .args([
                "solve",
                p,
                "--vary",
                "C=10uF..1000uF",
                "--target",
                "abs(I) = 10 A",
                "--scan",
                scan,
            ])
            .assert()
    };
    // I = V·ωC, so |I| = 10 A at C = 10/(480·377) F ≈ 55.3 µF (Ohm's law).
    solve("2")
        .code(0)
        .stdout(predicate::str::contains("55.2").or(predicate::str::contains("55.3")));
    solve("1")
        .code(2)
        .stderr(predicate::str::contains("error[too-many-points]"));
    // The upper bound is checked before any work: 10,000,001 scan points
    // are refused at once rather than silently cut to 10,000,000.
    solve(&(MAX_SCAN + 1).to_string())
        .code(2)
        .stderr(predicate::str::contains("error[too-many-points]"));
}

/// The refinement stops at its iteration cap with an error that says so.
/// The cap that just suffices is found by running once without a cap
/// worth the name; one fewer must then fail.
#[test]
fn search_iterations() {
    // x³ − 2 = 0 at the cube root of 2 (1.2599…, from memory).
    let f = |x: f64| x * x * x - 2.0;
    let mut o = SearchOptions {
        scan: 2,
        max_iter: 10_000,
        log: false,
    };
    let found = find_root(f, 0.0, 3.0, &o).expect("a root");
    assert!((found.x - 2f64.cbrt()).abs() < 1e-12);
    let need = found.iterations;
    assert!(need >= 2, "needs {need} iterations");
    o.max_iter = need;
    assert!(find_root(f, 0.0, 3.0, &o).is_ok());
    o.max_iter = need - 1;
    assert!(matches!(
        find_root(f, 0.0, 3.0, &o),
        Err(SearchError::NotConverged { .. })
    ));
}

/// Functions evaluated one case at a time take at most MAX_CALL_ARGS
/// arguments and give at most that many results; none of them takes a
/// variable number (those are lowered to primitive instructions).
#[test]
fn function_arguments() {
    for f in ohmsheet::funcs::library() {
        if let ohmsheet::funcs::Impl::Scalar(_) = f.imp {
            assert!(!f.variadic, "{} is variadic and scalar", f.name);
            assert!(f.params.len() <= ohmsheet::funcs::MAX_CALL_ARGS, "{}", f.name);
        }
    }
    // A variadic lowered function with many arguments is fine.
    let args = vec!["1"; 40].join(", ");
    let e = engine(&format!("x = max({args})\n"));
    assert_eq!(value(&e, "x").re, 1.0);
}
