//! One big sheet: parse, compile and evaluate generated 100,000-cell
//! sheets (a wide network of cells, and one 100,000-long dependency chain),
//! then change one input and recompute only what depends on it.
//!
//!   cargo bench --bench scale -- [CELLS] [REPEATS]     all phases, JSON lines
//!   cargo bench --bench scale -- --only wide|chain [CELLS]
//!       parse, compile and evaluate one sheet once (for measuring peak
//!       memory from outside: /usr/bin/time -v, or bench/scale.py)
//!
//! Times are the median of REPEATS runs of this thread's CPU time (time
//! spent waiting for a core on a shared machine does not count).

use std::time::Instant;

use num_complex::Complex64 as C64;
use ohmsheet::engine::{compile, eval, Engine};
use ohmsheet::sheet::Sheet;

/// Deterministic pseudo-random numbers.
struct Rng(u64);

impl Rng {
    fn below(&mut self, n: usize) -> usize {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        (self.0 % n as u64) as usize
    }
}

/// A sheet of `n` cells: 1,000 inputs, then cells that each use up to
/// three of the 1,000 cells before them, then a probe input with a chain
/// of ten cells that nothing else uses (its dependency cone).
pub fn wide(n: usize) -> String {
    let mut rng = Rng(0x2545_F491_4F6C_DD1D);
    let mut s = String::with_capacity(n * 40);
    let inputs = 1000.min(n / 10);
    for i in 0..inputs {
        s.push_str(&format!("x{i} = {} Ω\n", 1 + i % 17));
    }
    for i in inputs..n.saturating_sub(11) {
        let mut pick = || i - 1 - rng.below(i.min(1000));
        let (a, b, c) = (pick(), pick(), pick());
        let f = match i % 4 {
            0 => format!("x{a} || x{b} + x{c} * 0.5"),
            1 => format!("(x{a} + j*x{b}) / 3"),
            2 => format!("x{a} -- x{b}"),
            _ => format!("abs(x{a}) * 1.01"),
        };
        s.push_str(&format!("x{i} = {f}\n"));
    }
    s.push_str("probe = 1 Ω\np1 = probe * 2\n");
    for k in 2..=10 {
        s.push_str(&format!("p{k} = p{} + probe\n", k - 1));
    }
    s
}

/// `c0 = 1 Ω`, then each cell uses the one before it: one chain of `n`.
pub fn chain(n: usize) -> String {
    let mut s = String::from("c0 = 1 Ω\n");
    for i in 1..n {
        s.push_str(&format!("c{i} = c{} * 1.000001 + 1 mΩ\n", i - 1));
    }
    s
}

/// CPU time this thread has run, in ns: time spent waiting for a core on
/// a shared machine does not count.
fn thread_cpu_ns() -> Option<f64> {
    let mut t = libc::timespec { tv_sec: 0, tv_nsec: 0 };
    // SAFETY: clock_gettime writes the timespec it is given.
    let r = unsafe { libc::clock_gettime(libc::CLOCK_THREAD_CPUTIME_ID, &mut t) };
    (r == 0).then_some(t.tv_sec as f64 * 1e9 + t.tv_nsec as f64)
}

/// Run `f`, returning its result and this thread's CPU time (or, where
/// that is unknown, wall time) in ns.
fn timed<T>(f: impl FnOnce() -> T) -> (T, f64) {
    let (t0, c0) = (Instant::now(), thread_cpu_ns());
    let r = f();
    let ns = match (c0, thread_cpu_ns()) {
        (Some(a), Some(b)) => b - a,
        _ => t0.elapsed().as_secs_f64() * 1e9,
    };
    (r, ns)
}

/// Run `f`, returning its result and the wall-clock time in ns.
fn timed_wall<T>(f: impl FnOnce() -> T) -> (T, f64) {
    let t0 = Instant::now();
    let r = f();
    (r, t0.elapsed().as_secs_f64() * 1e9)
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(|a, b| a.total_cmp(b));
    v[v.len() / 2]
}

fn phases(kind: &str, text: &str, repeats: usize) {
    let (mut p, mut c, mut e) = (Vec::new(), Vec::new(), Vec::new());
    let mut engine = None;
    for _ in 0..repeats {
        // Parsing, and finding a big sheet's dependencies, run on all
        // cores: wall-clock time.
        let (sheet, tp) = timed_wall(|| Sheet::from_text("big.ohm", text));
        let (model, tc) = timed_wall(|| compile(&sheet));
        assert!(!model.has_errors(), "generated sheet has errors");
        let (eng, te) = timed(|| Engine::new(model));
        p.push(tp);
        c.push(tc);
        e.push(te);
        engine = Some(eng);
    }
    let mut engine = engine.expect("at least one run");
    let cells = engine.model.cells.len();
    let (tp, tc, te) = (median(p), median(c), median(e));
    println!(
        "{{\"sheet\":\"{kind}\",\"cells\":{cells},\"instructions\":{},\"parse_wall_ms\":{:.1},\"compile_wall_ms\":{:.1},\"evaluate_cpu_ms\":{:.2},\"total_ms\":{:.1}}}",
        engine.model.program.code.len(),
        tp / 1e6,
        tc / 1e6,
        te / 1e6,
        (tp + tc + te) / 1e6
    );

    // Full recompute: the whole program once.
    let prog = engine.model.program.clone();
    let mut slots = prog.init.clone();
    let full = median(
        (0..repeats.max(5))
            .map(|_| timed(|| eval::run(&prog.code, &prog, &mut slots)).1)
            .collect(),
    );
    // One input changed: only its dependency cone.
    // In the chain every cell depends on `c0`: the cone is the whole sheet.
    let (input, cone) = if kind == "wide" {
        ("probe", 10)
    } else {
        ("c0", cells - 1)
    };
    let Some(id) = engine.model.id(input) else { return };
    // Time many changes at once (a clock read costs about as much as a
    // small cone), alternating two values so every change is real.
    let batch = if cone > 1000 { 1 } else { 1000 };
    let mut k = 0.0;
    let one = median(
        (0..repeats.max(5))
            .map(|_| {
                timed(|| {
                    for _ in 0..batch {
                        k += 1.0;
                        engine.set_input(id, C64::new(1.0 + k, 0.0));
                    }
                })
                .1 / batch as f64
            })
            .collect(),
    );
    assert_eq!(engine.last_recomputed.len(), cone, "the cone of `{input}`");
    println!(
        "{{\"sheet\":\"{kind}\",\"recompute\":\"{input}\",\"cone_cells\":{cone},\"full_us\":{:.1},\"cone_us\":{:.3},\"ratio\":{:.0}}}",
        full / 1e3,
        one / 1e3,
        full / one
    );
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).filter(|a| a != "--bench").collect();
    if args.first().map(String::as_str) == Some("--compile-only") {
        // For profiling the compiler: parse once, compile many times.
        let sheet = Sheet::from_text("big.ohm", &wide(100_000));
        for _ in 0..10 {
            std::hint::black_box(compile(&sheet));
        }
        return;
    }
    if args.first().map(String::as_str) == Some("--only") {
        let kind = args.get(1).map(String::as_str).unwrap_or("wide");
        let n: usize = args.get(2).and_then(|a| a.parse().ok()).unwrap_or(100_000);
        let text = if kind == "chain" { chain(n) } else { wide(n) };
        let t0 = Instant::now();
        let sheet = Sheet::from_text("big.ohm", &text);
        let model = compile(&sheet);
        assert!(!model.has_errors());
        let e = Engine::new(model);
        println!(
            "{{\"sheet\":\"{kind}\",\"cells\":{},\"wall_ms\":{:.1}}}",
            e.model.cells.len(),
            t0.elapsed().as_secs_f64() * 1e3
        );
        return;
    }
    let n: usize = args.first().and_then(|a| a.parse().ok()).unwrap_or(100_000);
    let repeats: usize = args.get(1).and_then(|a| a.parse().ok()).unwrap_or(5);
    phases("wide", &wide(n), repeats);
    phases("chain", &chain(n), repeats);
}
