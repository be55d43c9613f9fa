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
