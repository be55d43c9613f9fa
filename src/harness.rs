//! Whole-pipeline self-checks, shared by the fuzz targets (`fuzz/`) and by
//! the regression tests that replay what the fuzzers found
//! (`tests/fuzz_regressions.rs`).
//!
//! Each function takes arbitrary input, drives it through the same code
//! the command line uses, and panics if an invariant of ARCHITECTURE.md
//! breaks: a panic anywhere, a diagnostic whose span falls outside its
//! file or inside a UTF-8 character, the block evaluator disagreeing with
//! the scalar one, or an incremental update disagreeing with a full
//! re-evaluation. A fuzzer reports any such panic as a crash. No I/O here.

use num_complex::Complex64 as C64;

use crate::diag::{Diagnostic, SourceMap};
use crate::engine::block::{Block, LANES};
use crate::engine::{compile, Engine};
use crate::output::{self, table};
use crate::sheet::{decode, Sheet};
use crate::units::format::{format_value, Style};
use crate::units::parse_unit_expr;

/// A diagnostic must point at real text: inside its file, on character
/// boundaries, and it must render.
pub fn check_diagnostic(d: &Diagnostic, sources: &SourceMap) {
    let spans = d.span.iter().copied().chain(d.secondary.iter().map(|(s, _)| *s));
    for sp in spans {
        let f = sources.get(sp.file);
        assert!(sp.start <= sp.end, "span {sp:?} runs backwards ({})", d.message);
        let (a, b) = (sp.start as usize, sp.end as usize);
        assert!(b <= f.text.len(), "span {sp:?} beyond the {}-byte file", f.text.len());
        assert!(
            f.text.is_char_boundary(a) && f.text.is_char_boundary(b),
            "span {sp:?} splits a character ({})",
            d.message
        );
    }
    let text = d.render_plain(sources);
    assert!(
        text.contains(d.code.name()),
        "rendered diagnostic lacks its code:\n{text}"
    );
}

/// Parse arbitrary bytes as a sheet file and check every diagnostic.
pub fn parse_bytes(data: &[u8]) {
    let Ok(text) = decode(data) else { return };
    let sheet = Sheet::from_text("fuzz.ohm", &text);
    for d in &sheet.errors {
        check_diagnostic(d, &sheet.sources);
    }
}

fn same(a: C64, b: C64) -> bool {
    let eq = |x: f64, y: f64| x.to_bits() == y.to_bits() || (x.is_nan() && y.is_nan());
    eq(a.re, b.re) && eq(a.im, b.im)
}

/// Parse, compile and evaluate arbitrary bytes as a sheet; format every
/// value; check the block evaluator and incremental updates against the
/// scalar run.
pub fn eval_bytes(data: &[u8]) {
    let Ok(text) = decode(data) else { return };
    eval_text(&text);
}

/// `eval_bytes` on text.
pub fn eval_text(text: &str) {
    let sheet = Sheet::from_text("fuzz.ohm", text);
    let model = compile(&sheet);
    for d in &model.diagnostics {
        check_diagnostic(d, &model.sources);
    }
    if model.has_errors() {
        return;
    }
    let engine = Engine::new(model);
    let m = &engine.model;
    for &digits in &[1usize, 4, 15] {
        let style = Style { digits };
        let cells = output::cell_rows(&engine, style);
        let checks = output::check_rows(&engine, style);
        let _ = table::cells_table(m, &cells);
        let _ = table::checks_table(&checks);
        let _ = output::to_csv(&cells);
        let json = output::to_json("fuzz.ohm", m, &cells, &checks);
        assert!(
            serde_json::from_str::<serde_json::Value>(&json).is_ok(),
            "JSON output does not parse:\n{json}"
        );
    }
    let _ = engine.nan_origins();

    // The block evaluator agrees with the scalar run in every lane; lanes
    // beyond 0 get the inputs perturbed, and each lane must agree with an
    // incremental update of the scalar engine to the same inputs.
    let prog = &m.program;
    let mut block = Block::new(prog);
    block.run(&prog.code, prog);
    for s in 0..prog.temp_base.min(prog.n_slots() as u32) {
        let (x, y) = (block.get(s, 0), engine.slots()[s as usize]);
        assert!(same(x, y), "slot {s}: block {x:?} but scalar {y:?}");
    }
    let inputs: Vec<_> = m.inputs().map(|(id, c)| (id, c.slot)).take(4).collect();
    if inputs.is_empty() {
        return;
    }
    let factors = [
        C64::new(-1.0, 0.0),
        C64::new(0.0, 1.0),
        C64::new(0.0, 0.0),
        C64::new(1e300, 0.0),
    ];
    let mut block = Block::new(prog);
    for (k, &(_, slot)) in inputs.iter().enumerate() {
        let base = engine.slots()[slot as usize];
        for lane in 1..LANES {
            let f = factors[(lane + k) % factors.len()];
            block.set(slot, lane, if lane % 3 == 0 { base } else { base * f + f });
        }
    }
    block.run(&prog.code, prog);
    for lane in [1usize, 2, 5] {
        let mut e = engine.clone();
        for &(id, slot) in &inputs {
            e.set_input(id, block.get(slot, lane));
        }
        for &id in &m.order {
            let c = &m.cells[id as usize];
            for s in c.slot..c.slot + c.width {
                let (x, y) = (block.get(s, lane), e.slots()[s as usize]);
                assert!(
                    same(x, y),
                    "cell `{}` lane {lane}: block {x:?} but incremental {y:?}",
                    c.name
                );
            }
        }
    }
}

/// Parse arbitrary text as a unit expression; format a few values in any
/// unit that parses.
pub fn unit_bytes(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else { return };
    let Ok(u) = parse_unit_expr(text) else { return };
    assert!(u.factor.is_finite(), "unit `{text}` has factor {}", u.factor);
    for z in [
        C64::new(1.0, 0.0),
        C64::new(-3.5e-7, 2.0e9),
        C64::new(f64::INFINITY, 0.0),
    ] {
        let f = format_value(z, u.q, Some(&u), Style::default());
        assert!(!f.rect.is_empty() && !f.polar.is_empty());
        let f = format_value(z, u.q, None, Style::default());
        assert!(!f.rect.is_empty());
    }
}

/// The sheet the `cases` target runs every table against: inputs of each
/// kind a cases column can set (a voltage, an impedance, a frequency, an
/// angle, a plain number, a capacitance) and cells computed from them.
pub const CASES_SHEET: &str = "V = 230 V\nZ = (3 + j4) Ω\nf = 50 Hz\nth = 30°\nk = 2\nC = 10 µF\n\
I = V / Z\nXc = 1 / (2 * pi * f * C)\nS = V * conj(I)\nW = V ∠ th\nr = k * Xc || Z\n\
check abs(I) ~= 46 A +- 50%\n";

/// Arbitrary bytes as a cases table (header and rows) for `CASES_SHEET`,
/// through the same reader and streaming evaluator `ohmsheet batch` uses.
/// The output must be well-formed CSV with one line per case, each as wide
/// as the header.
pub fn cases_bytes(data: &[u8]) {
    use crate::batch::{run_stream, Cases, ComplexForm, Plan, StreamOptions};
    use std::sync::Arc;
    let model = compile(&Sheet::from_text("cases.ohm", CASES_SHEET));
    assert!(!model.has_errors());
    let mut cases = Cases::with_buffer(std::io::Cursor::new(data.to_vec()), 64);
    let headers: Vec<String> = match cases.header() {
        Ok(Some(h)) if h.iter().any(|f| !f.is_empty()) => {
            h.iter().map(|f| String::from_utf8_lossy(f).into_owned()).collect()
        }
        _ => return,
    };
    let form = if data.len().is_multiple_of(2) {
        ComplexForm::Rect
    } else {
        ComplexForm::Polar
    };
    let Ok(plan) = Plan::new(Arc::new(model), &headers, None, form) else {
        return;
    };
    let plan = Arc::new(plan);
    let width = plan.out_header().len();
    let mut out = Vec::new();
    let mut bad = 0u64;
    let mut on_errors = |rows: &[crate::batch::RowError]| {
        bad += rows.len() as u64;
        Ok(())
    };
    let opts = StreamOptions {
        strict: false,
        chunk_rows: 7,
        in_flight: 2,
    };
    let Ok(summary) = run_stream(plan, cases, &mut out, &mut on_errors, &mut |_, _| {}, opts) else {
        return;
    };
    assert!(summary.bad_rows <= summary.cases && bad >= summary.bad_rows);
    let mut rd = csv::ReaderBuilder::new().has_headers(false).from_reader(out.as_slice());
    let mut n = 0u64;
    for rec in rd.byte_records() {
        let rec = rec.expect("output is CSV");
        assert_eq!(rec.len(), width, "output row {n} is not as wide as the header");
        n += 1;
    }
    assert_eq!(n, summary.cases, "one output line per case");
}

/// Arbitrary bytes as lines typed into an interactive session (without a
/// terminal, journal or file). After every line the session's
/// incrementally updated values must equal a fresh compile and evaluation
/// of the sheet text it would save. `/save` and `/open` lines are skipped:
/// they touch files.
pub fn session_bytes(data: &[u8]) {
    use crate::session::Session;
    let Ok(text) = std::str::from_utf8(data) else { return };
    let Ok((mut s, _)) = Session::open(None, None, false) else {
        panic!("an unnamed session always opens")
    };
    for line in text.split('\n').take(64) {
        let t = line.trim_start();
        if t.starts_with("/save") || t.starts_with("/open") {
            continue;
        }
        let _ = s.handle(line);
        let fresh = Engine::new(compile(&Sheet::from_text("fresh.ohm", &s.doc.text())));
        let m = &s.engine.model;
        for (id, c) in m.defs() {
            if c.error.is_some() {
                continue;
            }
            let Some(fid) = fresh.model.id(&c.name) else {
                panic!("cell `{}` is in the session but not in its saved text", c.name)
            };
            if fresh.model.cells[fid as usize].error.is_some() {
                continue;
            }
            let (a, b) = (s.engine.values(id), fresh.values(fid));
            assert_eq!(a.len(), b.len(), "cell `{}` width", c.name);
            for (x, y) in a.iter().zip(b) {
                assert!(
                    same(*x, *y),
                    "cell `{}`: session {x:?} but a fresh evaluation {y:?}\nafter `{line}` in:\n{}",
                    c.name,
                    s.doc.text()
                );
            }
        }
    }
}

/// Network blocks built from arbitrary bytes: each byte picks the next
/// part of a block — its frequency, element forms, node and element names
/// (mistyped ones among them), values (shorts, opens, ∞, NaN, wrong units,
/// per-unit), results asked of it — so a fuzzer reaches the network's
/// shape checks, lowering and solve far more often than random text would.
/// The sheet then goes through `eval_text`, and every NaN is explained
/// (the path that re-solves a failing case).
pub fn network_bytes(data: &[u8]) {
    explain_text(&network_text(data));
}

/// `eval_text`, then every NaN of the sheet explained as `run` explains it
/// (for a network, the failing case solved again and put in words).
pub fn explain_text(text: &str) {
    eval_text(text);
    let model = compile(&Sheet::from_text("fuzz.ohm", text));
    if model.has_errors() {
        return;
    }
    let engine = Engine::new(model);
    for id in engine.nan_origins() {
        let d = engine.nan_diagnostic(id);
        check_diagnostic(&d, &engine.model.sources);
    }
}

/// The sheet `network_bytes` builds from `data`.
pub fn network_text(data: &[u8]) -> String {
    const FREQS: &[&str] = &[
        "50 Hz",
        "1 kHz",
        "314 rad/s",
        "0 Hz",
        "-5 Hz",
        "1e300 Hz",
        "5 V",
        "f",
        "(0/0) Hz",
    ];
    const NODES: &[&str] = &["ground", "a", "b", "c", "bus", "n1", "bsu", "R1", "end"];
    const FORMS: &[&str] = &[
        "branch", "emf", "inject", "vgain", "transadm", "transimp", "igain", "xformer", "mutual", "brnch",
    ];
    const VALUES: &[&str] = &[
        "1 Ω",
        "0 Ω",
        "(1/0) Ω",
        "0 S",
        "10 mH",
        "1 µF",
        "0 F",
        "-3 Ω",
        "j5 Ω",
        "(2 - j3) Ω",
        "1 V",
        "230 V ∠ -30°",
        "2 A",
        "0.5",
        "2 ∠ 30°",
        "1e308 Ω",
        "1e-300 Ω",
        "(0/0) Ω",
        "0.1 pu",
        "x",
        "3 mS",
        "-1",
        "0",
        "f",
    ];
    let mut k = 0usize;
    let mut next = |n: usize| -> usize {
        let b = data.get(k).copied().unwrap_or(0) as usize;
        k += 1;
        b % n
    };
    let mut s = String::from("f = 50 Hz\nx = 2 Ω\n");
    let blocks = 1 + next(2);
    for net in 0..blocks {
        s += &format!("network n{net} at {}\n", FREQS[next(FREQS.len())]);
        let count = next(8);
        let mut names: Vec<String> = Vec::new();
        for e in 0..count {
            let form = FORMS[next(FORMS.len())];
            let name = if next(12) == 0 && !names.is_empty() {
                names[0].clone()
            } else {
                format!("E{net}_{e}")
            };
            let node = |i: usize| NODES[i % NODES.len()].to_string();
            let elem = |i: usize, names: &[String]| {
                if names.is_empty() || i.is_multiple_of(5) {
                    "Lx".to_string()
                } else {
                    names[i % names.len()].clone()
                }
            };
            let mut args: Vec<String> = match form {
                "vgain" | "transadm" | "xformer" => (0..4).map(|_| node(next(NODES.len()))).collect(),
                "transimp" | "igain" => vec![node(next(NODES.len())), node(next(NODES.len())), elem(next(64), &names)],
                "mutual" => vec![elem(next(64), &names), elem(next(64), &names)],
                _ => vec![node(next(NODES.len())), node(next(NODES.len()))],
            };
            args.push(VALUES[next(VALUES.len())].to_string());
            if matches!(form, "emf" | "inject") && next(2) == 0 {
                args.push(VALUES[next(VALUES.len())].to_string());
            }
            if next(16) == 0 {
                args.pop();
            }
            s += &format!("  {name} = {form}({})\n", args.join(", "));
            names.push(name);
        }
        if next(10) != 0 {
            s += "end\n";
        }
        let pick = |i: usize, names: &[String]| {
            if names.is_empty() {
                "E".to_string()
            } else {
                names[i % names.len()].clone()
            }
        };
        for r in 0..next(5) {
            let (p, q) = (NODES[next(NODES.len())], NODES[next(NODES.len())]);
            let line = match next(8) {
                0 => format!("net_v(n{net}, {p})"),
                1 => format!("net_v(n{net}, {p}, {q})"),
                2 => format!("net_i(n{net}, {})", pick(next(64), &names)),
                3 => format!("net_s(n{net}, {})", pick(next(64), &names)),
                4 => format!("net_thevenin(n{net}, {p}, {q})"),
                5 => format!("net_z(n{net}, {p}, {q})"),
                6 => format!("net_y(n{net}, {q}, {p})"),
                _ => format!("net_balance(n{net})"),
            };
            s += &format!("r{net}_{r} = {line}\n");
        }
    }
    s
}
