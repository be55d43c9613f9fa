//! The analyses over tolerances: how fast, side by side in one run
//! (bench/spread_run.py runs this and bench/spread.py and prints the
//! ratios).
//!
//!   cargo bench --bench spread -- mc [SAMPLES] [REPEATS]
//!       Monte Carlo of bench/feeder_spread.ohm (the 36-cell benchmark
//!       feeder with six toleranced inputs): SAMPLES samples (1,000,000
//!       unless stated) of every computed cell, summarised (mean, standard
//!       deviation, 95 % interval, percentiles, histogram, a complex
//!       cell's angle), on every core and on one thread.
//!   cargo bench --bench spread -- sens [REPEATS]
//!       sensitivities of every computed cell of bench/feeder_tol20.ohm
//!       (the feeder with twenty toleranced inputs) to every input, on
//!       every core and on one thread, by forward mode; the same from the
//!       sheet's text (compiling it and making the plan included); and by
//!       the whole-program difference scheme.
//!
//! Prints one JSON object per line: medians of the repeats, wall-clock
//! and CPU time (the process's, all threads), so that waiting for a core
//! on a shared machine shows as the gap between the two.

use std::path::Path;
use std::time::Instant;

use ohmsheet::sheet::Sheet;
use ohmsheet::spread::{monte_carlo, plan_for, sensitivities, sensitivities_by, McOptions, Plan, Scheme};

fn cpu_ns() -> f64 {
    let mut t = libc::timespec { tv_sec: 0, tv_nsec: 0 };
    // SAFETY: a valid clock id and a valid pointer.
    let r = unsafe { libc::clock_gettime(libc::CLOCK_PROCESS_CPUTIME_ID, &mut t) };
    assert_eq!(r, 0);
    t.tv_sec as f64 * 1e9 + t.tv_nsec as f64
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn text(name: &str) -> (String, String) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("bench").join(name);
    let t = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    (path.display().to_string(), t)
}

fn plan(name: &str, text: &str) -> Plan {
    match plan_for(Sheet::from_text(name, text), None) {
        Ok(p) => p,
        Err(f) => panic!("{}", f.render_plain()),
    }
}

/// (wall ms, CPU ms) medians of `repeats` runs of `f`, after one warm-up.
fn time<T>(repeats: usize, mut f: impl FnMut(usize) -> T) -> (f64, f64, T) {
    let mut last = f(0);
    let (mut wall, mut cpu) = (Vec::new(), Vec::new());
    for r in 0..repeats {
        let (t, c) = (Instant::now(), cpu_ns());
        last = std::hint::black_box(f(r + 1));
        wall.push(t.elapsed().as_secs_f64() * 1e3);
        cpu.push((cpu_ns() - c) / 1e6);
    }
    (median(wall), median(cpu), last)
}

fn pool(threads: usize) -> rayon::ThreadPool {
    rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap()
}

fn mc(samples: usize, repeats: usize) {
    let (name, t) = text("feeder_spread.ohm");
    let p = plan(&name, &t);
    let all = rayon::current_num_threads();
    for threads in [all, 1] {
        let (wall, cpu, res) = pool(threads).install(|| {
            time(repeats, |r| {
                monte_carlo(
                    &p,
                    &McOptions {
                        samples,
                        seed: 1 + r as u64,
                        ..McOptions::default()
                    },
                )
            })
        });
        let means: Vec<(String, f64, f64)> = res.cells.iter().map(|c| (c.name.clone(), c.mean, c.std_dev)).collect();
        println!(
            "{}",
            serde_json::json!({
                "what": "monte_carlo",
                "threads": threads,
                "samples": samples,
                "inputs": p.inputs.len(),
                "cells": p.shown.len(),
                "wall_ms": wall,
                "cpu_ms": cpu,
                "stats": means,
            })
        );
    }
}

fn sens(repeats: usize) {
    let (name, t) = text("feeder_tol20.ohm");
    let p = plan(&name, &t);
    let all = rayon::current_num_threads();
    for threads in [all, 1] {
        let pl = pool(threads);
        let (wall, cpu, s) = pl.install(|| time(repeats, |_| sensitivities(&p)));
        let (wall_all, cpu_all, _) = pl.install(|| time(repeats, |_| sensitivities(&plan(&name, &t))));
        // The whole-program difference scheme, side by side.
        let (wall_d, cpu_d, _) = pl.install(|| time(repeats, |_| sensitivities_by(&p, Scheme::Differences)));
        println!(
            "{}",
            serde_json::json!({
                "what": "sensitivities",
                "threads": threads,
                "inputs": p.inputs.len(),
                "cells": s.cells.len(),
                "rows": s.cells.iter().map(|c| c.rows.len()).sum::<usize>(),
                "wall_ms": wall,
                "cpu_ms": cpu,
                "with_compile_wall_ms": wall_all,
                "with_compile_cpu_ms": cpu_all,
                "differences_wall_ms": wall_d,
                "differences_cpu_ms": cpu_d,
            })
        );
    }
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).filter(|a| !a.starts_with("--")).collect();
    let num = |k: usize, d: usize| args.get(k).and_then(|x| x.parse().ok()).unwrap_or(d);
    match args.first().map(String::as_str) {
        Some("mc") => mc(num(1, 1_000_000), num(2, 5)),
        Some("sens") => sens(num(1, 200)),
        _ => {
            mc(1_000_000, 5);
            sens(200);
        }
    }
}
