//! How long a session takes to answer an edit on a 10,000-cell sheet.
//!
//! Run: `cargo bench --bench session_edit` (prints medians; no harness).
//! Each row is the median of many edits through `Session::handle`, the
//! same call the terminal loop makes, journal flush included; the rows
//! without the journal and the full recompile are there as references,
//! all measured side by side in one run.

use std::path::Path;
use std::time::{Duration, Instant};

use ohmsheet::engine::{compile, Engine};
use ohmsheet::session::Session;

/// 2,000 independent feeder sections of five cells each behind one bus
/// voltage (an invented sheet): 10,001 cells.
fn big_sheet() -> String {
    let mut s = String::from("# 2,000 feeder sections (invented)\nV = 480 V\n");
    for k in 0..2000 {
        let r = 1.0 + (k % 17) as f64 * 0.25;
        let x = 0.5 + (k % 13) as f64 * 0.125;
        s.push_str(&format!(
            "R{k} = {r} Ω\nX{k} = j{x} Ω\nZ{k} = R{k} + X{k}\nI{k} = V / Z{k}\nP{k} = re(V * conj(I{k}))\n"
        ));
    }
    s
}

fn median(mut v: Vec<Duration>) -> Duration {
    v.sort();
    v[v.len() / 2]
}

fn time(n: usize, mut f: impl FnMut(usize)) -> Duration {
    let mut v = Vec::with_capacity(n);
    for i in 0..n {
        let t = Instant::now();
        f(i);
        v.push(t.elapsed());
    }
    median(v)
}

fn open(path: &Path, data: Option<&Path>) -> Session {
    let (s, _) = Session::open(Some(path), data.map(Path::to_path_buf), false).expect("opens");
    assert_eq!(s.engine.model.cells.len(), 10_001);
    s
}

fn row(what: &str, d: Duration) {
    println!("{what:<58} {:>10.3} ms", d.as_secs_f64() * 1e3);
}

fn main() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("feeders.ohm");
    std::fs::write(&path, big_sheet()).expect("write sheet");
    let data = dir.path().join("data");
    let n = 200;

    println!("10,001-cell sheet; median of {n} edits each (ms)");
    let mut s = open(&path, Some(&data));
    let d = time(n, |i| {
        let r = s.handle(&format!("R{} = {} Ω", (i * 37) % 2000, 2.0 + i as f64));
        assert!(!r.refused, "{}", r.text);
    });
    row("input value (4 cells change), with journal fsync", d);
    let d = time(n, |i| {
        let k = (i * 53) % 2000;
        let r = s.handle(&format!("Z{k} = R{k} + X{k} * {}", 1.0 + (i % 5) as f64));
        assert!(!r.refused, "{}", r.text);
    });
    row("formula (3 cells change), with journal fsync", d);
    let d = time(n, |i| {
        let r = s.handle(&format!("I{} * 2", (i * 7) % 2000));
        assert!(!r.refused, "{}", r.text);
    });
    row("expression evaluated, not stored", d);
    let d = time(n, |i| {
        let r = s.handle(&format!("N{i} = P{} / 2", i % 2000));
        assert!(!r.refused, "{}", r.text);
    });
    row("new cell, with journal fsync", d);
    let d = time(n, |_| {
        let r = s.handle("/back");
        assert!(!r.refused, "{}", r.text);
    });
    row("undo (the new cell taken out again)", d);
    s.discard_journal();

    let mut s = open(&path, None);
    let d = time(n, |i| {
        let r = s.handle(&format!("R{} = {} Ω", (i * 37) % 2000, 2.0 + i as f64));
        assert!(!r.refused, "{}", r.text);
    });
    row("input value, no journal", d);
    let d = time(n, |i| {
        let k = (i * 53) % 2000;
        let r = s.handle(&format!("Z{k} = R{k} + X{k} * {}", 1.0 + (i % 5) as f64));
        assert!(!r.refused, "{}", r.text);
    });
    row("formula, no journal", d);

    // The alternative: compile the whole sheet and evaluate it again.
    let sheet = s.doc.sheet(&s.engine.model.sources);
    let d = time(20, |_| {
        let e = Engine::new(compile(&sheet));
        std::hint::black_box(e);
    });
    row("reference: full compile + evaluate of the sheet", d);
    let d = time(20, |i| {
        // Z uses a cell ranked after it: the order changes, so the
        // session compiles the document.
        let k = (i * 11) % 1999;
        let r = s.handle(&format!("Z{k} = R{k} + X{k} + 0 * Z{}", k + 1));
        assert!(!r.refused, "{}", r.text);
    });
    row("formula that reorders the graph (full compile path)", d);
}
