//! Evaluation speed of the benchmark feeder sheet (bench/feeder.ohm) over
//! many cases, side by side with the same formulas written by hand in Rust:
//! one case at a time, and in blocks of 64 cases the compiler vectorises.
//!
//! Run through bench/run.py, or alone:
//!   cargo bench --bench feeder -- [CASES] [REPEATS]
//! Prints one JSON object per line: variant, threads, median ns per case.
//!
//!   cargo bench --bench feeder -- csv CASES.csv RESULTS.csv
//! The same formulas written by hand end to end, as the practical limit for
//! `ohmsheet batch`: the cases table read with the `csv` crate, each value
//! read with `str::parse`, the 41 result numbers written with the same
//! shortest round-trip writer (`zmij`) and in the same columns, a reader
//! thread, the cases computed and formatted on all cores in chunks, and a
//! writer thread keeping the input order. Prints wall and CPU time.
//!
//! Every variant reads the five case inputs from arrays and consumes every
//! computed value (23 per case) by adding it to per-value accumulators, so
//! nothing can be optimised away and no variant writes 1e6 × 23 values to
//! memory. Division, parallel combination and magnitude use the same
//! semantics everywhere (ohmsheet::engine::ops: the plain formula, with a
//! careful fallback for tiny, huge, zero or infinite operands).

// Loops over lane numbers are the point of the blocked code.
#![allow(clippy::needless_range_loop)]

use std::time::Instant;

use num_complex::Complex64 as C64;
use ohmsheet::engine::block::{Block, LANES};
use ohmsheet::engine::{compile, eval, ops, Model};
use ohmsheet::sheet::Sheet;
use rayon::prelude::*;

/// Cases per parallel task.
const CHUNK: usize = 4096;

/// The case inputs, one array per input (structure of arrays).
struct Inputs {
    vmag: Vec<f64>,
    vang: Vec<f64>,
    len: Vec<f64>,
    rload: Vec<f64>,
    lload: Vec<f64>,
    ccap: Vec<f64>,
}

impl Inputs {
    fn n(&self) -> usize {
        self.len.len()
    }
    fn arrays(&self) -> [&Vec<f64>; 6] {
        [&self.vmag, &self.vang, &self.len, &self.rload, &self.lload, &self.ccap]
    }
}

/// Deterministic pseudo-random cases over plausible ranges (SI units).
fn make_inputs(n: usize) -> Inputs {
    let mut state = 0x9E37_79B9_7F4A_7C15u64;
    let mut next = move || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        (state >> 11) as f64 / (1u64 << 53) as f64
    };
    let mut inp = Inputs {
        vmag: Vec::with_capacity(n),
        vang: Vec::with_capacity(n),
        len: Vec::with_capacity(n),
        rload: Vec::with_capacity(n),
        lload: Vec::with_capacity(n),
        ccap: Vec::with_capacity(n),
    };
    for _ in 0..n {
        inp.vmag.push(7200.0 + 1200.0 * next());
        inp.vang.push((-5.0 + 10.0 * next()).to_radians());
        inp.len.push(500.0 + 11_500.0 * next());
        inp.rload.push(20.0 + 100.0 * next());
        inp.lload.push(0.010 + 0.140 * next());
        inp.ccap.push(2e-6 + 28e-6 * next());
    }
    inp
}

/// Number of computed cells of the feeder sheet.
const OUTS: usize = 24;

// ------------------------------------------------------------ ohmsheet

struct Compiled {
    model: Model,
    inputs: [u32; 6],
    outputs: Vec<u32>,
}

fn load_sheet() -> Compiled {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("bench/feeder.ohm");
    let sheet = Sheet::load(&path).unwrap_or_else(|_| panic!("cannot read {}", path.display()));
    let model = compile(&sheet);
    assert!(!model.has_errors(), "bench/feeder.ohm has errors");
    let slot = |n: &str| model.cell(n).unwrap_or_else(|| panic!("no cell {n}")).slot;
    let inputs = [
        slot("Vmag"),
        slot("Vang"),
        slot("len"),
        slot("Rload"),
        slot("Lload"),
        slot("Ccap"),
    ];
    let outputs: Vec<u32> = model.defs().filter(|(_, c)| !c.input).map(|(_, c)| c.slot).collect();
    assert_eq!(outputs.len(), OUTS);
    Compiled { model, inputs, outputs }
}

/// ohmsheet's block evaluator over cases `lo..hi`.
fn ohmsheet_range(c: &Compiled, b: &mut Block, inp: &Inputs, lo: usize, hi: usize, acc: &mut [[f64; LANES]]) {
    let prog = &c.model.program;
    let mut start = lo;
    while start < hi {
        let n = LANES.min(hi - start);
        let r = start..start + n;
        for (k, arr) in inp.arrays().into_iter().enumerate() {
            // Real inputs: the imaginary parts stay at zero.
            b.lanes_mut(c.inputs[k]).0[..n].copy_from_slice(&arr[r.clone()]);
        }
        b.run(&prog.code, prog);
        for (k, &s) in c.outputs.iter().enumerate() {
            let (re, im) = b.lanes(s);
            let a = &mut acc[k];
            for l in 0..n {
                a[l] += re[l] + im[l];
            }
        }
        start += n;
    }
}

fn ohmsheet_all(c: &Compiled, inp: &Inputs) -> f64 {
    let n = inp.n();
    (0..n.div_ceil(CHUNK))
        .into_par_iter()
        .map_init(
            || (Block::new(&c.model.program), vec![[0.0; LANES]; OUTS]),
            |(b, acc), k| {
                acc.iter_mut().for_each(|a| *a = [0.0; LANES]);
                ohmsheet_range(c, b, inp, k * CHUNK, ((k + 1) * CHUNK).min(n), acc);
                acc.iter().flatten().sum::<f64>()
            },
        )
        .sum()
}

/// One case through the scalar evaluator, for checking the others.
fn ohmsheet_scalar_case(c: &Compiled, inp: &Inputs, i: usize) -> Vec<C64> {
    let prog = &c.model.program;
    let mut slots = prog.init.clone();
    for (k, arr) in inp.arrays().into_iter().enumerate() {
        slots[c.inputs[k] as usize] = C64::new(arr[i], 0.0);
    }
    eval::run(&prog.code, prog, &mut slots);
    c.outputs.iter().map(|&s| slots[s as usize]).collect()
}

// ------------------------------------------------------------ by hand

/// Constants of the sheet, in SI units. What does not change from case to
/// case is computed once, as a programmer would.
struct K {
    w: f64,
    zsrc: C64,
    zl: C64,
    zt: C64,
    zmag: C64,
}

fn constants() -> K {
    let w = 2.0 * std::f64::consts::PI * 60.0;
    K {
        w,
        zsrc: C64::new(0.05, 0.8),
        zl: C64::new(0.19e-3, 0.38e-3),
        zt: C64::new(0.6, 4.8),
        zmag: ops::par(C64::new(40e3, 0.0), C64::new(0.0, w * 95.0)),
    }
}

/// The sheet's formulas, one case, with complex numbers where the values
/// are complex and plain floats where they are real.
#[inline(always)]
fn hand_case(k: &K, vmag: f64, vang: f64, len: f64, rload: f64, lload: f64, ccap: f64) -> [C64; OUTS] {
    let r = |x: f64| C64::new(x, 0.0);
    let vs = ops::polar(r(vmag), r(vang));
    let zline = k.zl * len;
    let zload = C64::new(rload, k.w * lload);
    let zcap = ops::div(C64::new(1.0, 0.0), C64::new(0.0, k.w * ccap));
    let zshunt = ops::par(zload, zcap);
    let zsec = k.zt + zshunt;
    let zbus = ops::par(k.zmag, zsec);
    let ztot = k.zsrc + zline + zbus;
    let i = ops::div(vs, ztot);
    let vbus = i * zbus;
    let isec = ops::div(vbus, zsec);
    let vload = isec * zshunt;
    let iload = ops::div(vload, zload);
    let icap = ops::div(vload, zcap);
    let ssrc = vs * i.conj();
    let sload = vload * iload.conj();
    let qcap = (vload * icap.conj()).im;
    let ploss = ssrc.re - sload.re;
    let pf_src = ssrc.re / ops::abs(ssrc);
    let pf_load = sload.re / ops::abs(sload);
    let avs = ops::abs(vs);
    let vdrop = (avs - ops::abs(vload)) / avs;
    let eff = sload.re / ssrc.re;
    [
        r(k.w),
        vs,
        zline,
        zload,
        zcap,
        zshunt,
        k.zmag,
        zsec,
        zbus,
        ztot,
        i,
        vbus,
        isec,
        vload,
        iload,
        icap,
        ssrc,
        sload,
        r(qcap),
        r(ploss),
        r(pf_src),
        r(pf_load),
        r(vdrop),
        r(eff),
    ]
}

fn hand_scalar_all(k: &K, inp: &Inputs) -> f64 {
    let n = inp.n();
    (0..n.div_ceil(CHUNK))
        .into_par_iter()
        .map(|c| {
            let mut acc = [0.0; OUTS];
            for i in c * CHUNK..((c + 1) * CHUNK).min(n) {
                let out = hand_case(
                    k,
                    inp.vmag[i],
                    inp.vang[i],
                    inp.len[i],
                    inp.rload[i],
                    inp.lload[i],
                    inp.ccap[i],
                );
                for (a, z) in acc.iter_mut().zip(out) {
                    *a += z.re + z.im;
                }
            }
            acc.iter().sum::<f64>()
        })
        .sum()
}

/// Cases per block in the hand-written blocked code.
const HL: usize = 16;

type Lanes = [f64; HL];

/// A complex value for every lane of a block.
#[derive(Clone, Copy)]
struct Cv {
    re: Lanes,
    im: Lanes,
}

const Z: Lanes = [0.0; HL];

#[inline(always)]
fn cv(f: impl Fn(usize) -> (f64, f64)) -> Cv {
    let mut o = Cv { re: Z, im: Z };
    for l in 0..HL {
        let (a, b) = f(l);
        o.re[l] = a;
        o.im[l] = b;
    }
    o
}

#[inline(always)]
fn rv(f: impl Fn(usize) -> f64) -> Lanes {
    let mut o = Z;
    for (l, x) in o.iter_mut().enumerate() {
        *x = f(l);
    }
    o
}

#[inline(always)]
fn add(a: &Cv, b: &Cv) -> Cv {
    cv(|l| (a.re[l] + b.re[l], a.im[l] + b.im[l]))
}

#[inline(always)]
fn add_c(a: C64, b: &Cv) -> Cv {
    cv(|l| (a.re + b.re[l], a.im + b.im[l]))
}

#[inline(always)]
fn mul(a: &Cv, b: &Cv) -> Cv {
    cv(|l| {
        (
            a.re[l] * b.re[l] - a.im[l] * b.im[l],
            a.re[l] * b.im[l] + a.im[l] * b.re[l],
        )
    })
}

/// a · conj(b)
#[inline(always)]
fn mul_conj(a: &Cv, b: &Cv) -> Cv {
    cv(|l| {
        (
            a.re[l] * b.re[l] + a.im[l] * b.im[l],
            a.im[l] * b.re[l] - a.re[l] * b.im[l],
        )
    })
}

#[inline(always)]
fn get(a: &Cv, l: usize) -> C64 {
    C64::new(a.re[l], a.im[l])
}

/// `d.is_normal() && d < 1e300` for a sum of squares (never negative),
/// written as two comparisons so it vectorises.
#[inline(always)]
fn plain(d: f64) -> bool {
    (f64::MIN_POSITIVE..1e300).contains(&d)
}

/// ops::div for every lane: the plain formula, and the scalar function for
/// the whole block when any lane needs the careful path.
#[inline(always)]
fn div(a: &Cv, b: &Cv) -> Cv {
    let mut careful = false;
    let mut o = Cv { re: Z, im: Z };
    for l in 0..HL {
        let d = b.re[l] * b.re[l] + b.im[l] * b.im[l];
        careful |= !plain(d);
        o.re[l] = (a.re[l] * b.re[l] + a.im[l] * b.im[l]) / d;
        o.im[l] = (a.im[l] * b.re[l] - a.re[l] * b.im[l]) / d;
    }
    if careful {
        for l in 0..HL {
            let z = ops::div(get(a, l), get(b, l));
            o.re[l] = z.re;
            o.im[l] = z.im;
        }
    }
    o
}

/// ops::par for every lane, with the same fallback.
#[inline(always)]
fn par(a: &Cv, b: &Cv) -> Cv {
    let mut careful = false;
    let mut o = Cv { re: Z, im: Z };
    for l in 0..HL {
        let (ar, ai, br, bi) = (a.re[l], a.im[l], b.re[l], b.im[l]);
        let nr = ar * br - ai * bi;
        let ni = ar * bi + ai * br;
        let sr = ar + br;
        let si = ai + bi;
        let d = sr * sr + si * si;
        // ops::par_plain_ok, branch-free
        let ma = ar.abs().max(ai.abs());
        let mb = br.abs().max(bi.abs());
        let ok = (1e-75..=1e75).contains(&ma)
            & (1e-75..=1e75).contains(&mb)
            & (f64::MIN_POSITIVE..f64::INFINITY).contains(&d);
        careful |= !ok;
        o.re[l] = (nr * sr + ni * si) / d;
        o.im[l] = (ni * sr - nr * si) / d;
    }
    if careful {
        for l in 0..HL {
            let z = ops::par(get(a, l), get(b, l));
            o.re[l] = z.re;
            o.im[l] = z.im;
        }
    }
    o
}

/// ops::abs for every lane.
#[inline(always)]
fn abs(a: &Cv) -> Lanes {
    let mut careful = false;
    let mut o = Z;
    for l in 0..HL {
        let s = a.re[l] * a.re[l] + a.im[l] * a.im[l];
        careful |= !plain(s);
        o[l] = s.sqrt();
    }
    if careful {
        for (l, x) in o.iter_mut().enumerate() {
            *x = ops::abs(get(a, l));
        }
    }
    o
}

/// The sheet's formulas over one block of 64 cases starting at `s`.
#[inline(always)]
fn hand_block(k: &K, inp: &Inputs, s: usize, acc: &mut [Lanes; OUTS]) {
    let lanes = |v: &[f64]| -> Lanes { v[s..s + HL].try_into().expect("a whole block") };
    let (vmag, vang) = (lanes(&inp.vmag), lanes(&inp.vang));
    // sin and cos are library calls, one lane at a time (as in ohmsheet).
    let vs = cv(|l| {
        let (s, c) = vang[l].sin_cos();
        (vmag[l] * c, vmag[l] * s)
    });
    let (len, rload, lload, ccap) = (lanes(&inp.len), lanes(&inp.rload), lanes(&inp.lload), lanes(&inp.ccap));
    let one = cv(|_| (1.0, 0.0));
    let zline = cv(|l| (k.zl.re * len[l], k.zl.im * len[l]));
    let zload = cv(|l| (rload[l], k.w * lload[l]));
    let zcap = div(&one, &cv(|l| (0.0, k.w * ccap[l])));
    let zshunt = par(&zload, &zcap);
    let zsec = add_c(k.zt, &zshunt);
    let zmag = cv(|_| (k.zmag.re, k.zmag.im));
    let zbus = par(&zmag, &zsec);
    let ztot = add_c(k.zsrc, &add(&zline, &zbus));
    let i = div(&vs, &ztot);
    let vbus = mul(&i, &zbus);
    let isec = div(&vbus, &zsec);
    let vload = mul(&isec, &zshunt);
    let iload = div(&vload, &zload);
    let icap = div(&vload, &zcap);
    let ssrc = mul_conj(&vs, &i);
    let sload = mul_conj(&vload, &iload);
    let qcap = rv(|l| mul_conj(&vload, &icap).im[l]);
    let ploss = rv(|l| ssrc.re[l] - sload.re[l]);
    let assrc = abs(&ssrc);
    let asload = abs(&sload);
    let avs = abs(&vs);
    let avload = abs(&vload);
    let pf_src = rv(|l| ssrc.re[l] / assrc[l]);
    let pf_load = rv(|l| sload.re[l] / asload[l]);
    let vdrop = rv(|l| (avs[l] - avload[l]) / avs[l]);
    let eff = rv(|l| sload.re[l] / ssrc.re[l]);
    let w = [k.w; HL];
    let cs = [
        &vs, &zline, &zload, &zcap, &zshunt, &zmag, &zsec, &zbus, &ztot, &i, &vbus, &isec, &vload, &iload, &icap,
        &ssrc, &sload,
    ];
    let rs = [&w, &qcap, &ploss, &pf_src, &pf_load, &vdrop, &eff];
    for (a, c) in acc.iter_mut().zip(cs) {
        for l in 0..HL {
            a[l] += c.re[l] + c.im[l];
        }
    }
    for (a, r) in acc[cs.len()..].iter_mut().zip(rs) {
        for l in 0..HL {
            a[l] += r[l];
        }
    }
}

fn hand_block_all(k: &K, inp: &Inputs) -> f64 {
    let n = inp.n();
    (0..n.div_ceil(CHUNK))
        .into_par_iter()
        .map(|c| {
            let mut acc = [Z; OUTS];
            let (lo, hi) = (c * CHUNK, ((c + 1) * CHUNK).min(n));
            let mut s = lo;
            while s + HL <= hi {
                hand_block(k, inp, s, &mut acc);
                s += HL;
            }
            let mut sum: f64 = acc.iter().flatten().sum();
            // The last cases, fewer than a block: one at a time.
            for i in s..hi {
                let out = hand_case(
                    k,
                    inp.vmag[i],
                    inp.vang[i],
                    inp.len[i],
                    inp.rload[i],
                    inp.lload[i],
                    inp.ccap[i],
                );
                sum += out.iter().map(|z| z.re + z.im).sum::<f64>();
            }
            sum
        })
        .sum()
}

// ------------------------------------------------------------ harness

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(|a, b| a.total_cmp(b));
    v[v.len() / 2]
}

/// CPU time this thread has run, in ns: time spent waiting for a core on
/// a shared machine does not count.
fn thread_cpu_ns() -> Option<f64> {
    let mut t = libc::timespec { tv_sec: 0, tv_nsec: 0 };
    // SAFETY: clock_gettime writes the timespec it is given.
    let r = unsafe { libc::clock_gettime(libc::CLOCK_THREAD_CPUTIME_ID, &mut t) };
    (r == 0).then_some(t.tv_sec as f64 * 1e9 + t.tv_nsec as f64)
}

/// Median ns per case of each function, timed in turns (A B C A B C …) so
/// that load from elsewhere on a shared machine falls on all of them alike.
/// With one thread the time is the thread's CPU time (time spent waiting
/// for a core does not count); with several it is wall-clock time.
fn time_in_turns(repeats: usize, n: usize, threads: usize, fs: &[&dyn Fn() -> f64]) -> Vec<(f64, f64)> {
    let mut sums: Vec<f64> = fs.iter().map(|f| f()).collect(); // warm-up
    let mut t: Vec<Vec<f64>> = vec![Vec::new(); fs.len()];
    let cpu = threads == 1 && thread_cpu_ns().is_some();
    for _ in 0..repeats {
        for (k, f) in fs.iter().enumerate() {
            let (t0, c0) = (Instant::now(), thread_cpu_ns());
            sums[k] = std::hint::black_box(f());
            let ns = match (cpu, c0, thread_cpu_ns()) {
                (true, Some(a), Some(b)) => b - a,
                _ => t0.elapsed().as_secs_f64() * 1e9,
            };
            t[k].push(ns / n as f64);
        }
    }
    t.into_iter().map(median).zip(sums).collect()
}

/// Largest relative difference between two results, over every value.
fn max_rel(a: &[C64], b: &[C64]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(x, y)| (x - y).norm() / x.norm().max(y.norm()).max(1e-300))
        .fold(0.0, f64::max)
}

/// One result line per case: the case's fields as read, then every
/// computed value (complex ones as real and imaginary parts), `%` values
/// divided by 0.01 as ohmsheet shows them.
fn hand_csv_rows(k: &K, rows: &[csv::ByteRecord], out: &mut Vec<u8>) {
    // Column units to SI: kV, °, km, Ω, mH, µF.
    const SCALE: [f64; 6] = [1e3, std::f64::consts::PI / 180.0, 1e3, 1.0, 1e-3, 1e-6];
    let mut num = zmij::Buffer::new();
    let mut push = |out: &mut Vec<u8>, x: f64| {
        out.push(b',');
        out.extend_from_slice(num.format(x).as_bytes());
    };
    for rec in rows {
        let mut v = [0.0; 6];
        for (j, f) in rec.iter().enumerate().take(6) {
            let t = std::str::from_utf8(f).expect("UTF-8 case");
            v[j] = t.trim().parse::<f64>().expect("a number") * SCALE[j];
            if j > 0 {
                out.push(b',');
            }
            out.extend_from_slice(f);
        }
        let r = hand_case(k, v[0], v[1], v[2], v[3], v[4], v[5]);
        for (j, z) in r.iter().enumerate() {
            // w, Qcap, Ploss, pf_src, pf_load, Vdrop, eff are real.
            match j {
                0 | 18..=21 => push(out, z.re),
                22 | 23 => push(out, z.re / 0.01),
                _ => {
                    push(out, z.re);
                    push(out, z.im);
                }
            }
        }
        out.push(b'\n');
    }
}

/// The hand-written program end to end, CSV to CSV (see the top of the file).
fn hand_csv(cases: &str, results: &str) {
    use std::io::Write;
    use std::sync::mpsc::sync_channel;
    const ROWS: usize = 1024; // rows per task
    const GROUP: usize = 16; // tasks read, computed and written together
    let (t0, c0) = (Instant::now(), process_cpu_ns());
    let k = constants();
    let mut rdr = csv::ReaderBuilder::new()
        .buffer_capacity(1 << 20)
        .from_path(cases)
        .expect("cases file");
    let header = rdr.byte_headers().expect("header").clone();
    let (rows_tx, rows_rx) = sync_channel::<Vec<Vec<csv::ByteRecord>>>(2);
    let (out_tx, out_rx) = sync_channel::<Vec<Vec<u8>>>(2);
    let reader = std::thread::spawn(move || loop {
        let mut group = Vec::with_capacity(GROUP);
        let mut eof = false;
        while group.len() < GROUP && !eof {
            let mut chunk = Vec::with_capacity(ROWS);
            let mut rec = csv::ByteRecord::new();
            while chunk.len() < ROWS {
                if !rdr.read_byte_record(&mut rec).expect("cases row") {
                    eof = true;
                    break;
                }
                chunk.push(rec.clone());
            }
            if !chunk.is_empty() {
                group.push(chunk);
            }
        }
        if !group.is_empty() && rows_tx.send(group).is_err() {
            return;
        }
        if eof {
            return;
        }
    });
    let file = std::fs::File::create(results).expect("results file");
    let writer = std::thread::spawn(move || {
        let mut w = std::io::BufWriter::with_capacity(1 << 20, file);
        let mut names: Vec<String> = header.iter().map(|h| String::from_utf8_lossy(h).into_owned()).collect();
        let outputs = [
            ("w", "rad/s", true),
            ("Vs", "V", false),
            ("Zline", "Ω", false),
            ("Zload", "Ω", false),
            ("Zcap", "Ω", false),
            ("Zshunt", "Ω", false),
            ("Zmag", "Ω", false),
            ("Zsec", "Ω", false),
            ("Zbus", "Ω", false),
            ("Ztot", "Ω", false),
            ("I", "A", false),
            ("Vbus", "V", false),
            ("Isec", "A", false),
            ("Vload", "V", false),
            ("Iload", "A", false),
            ("Icap", "A", false),
            ("Ssrc", "VA", false),
            ("Sload", "VA", false),
            ("Qcap", "var", true),
            ("Ploss", "W", true),
            ("pf_src", "", true),
            ("pf_load", "", true),
            ("Vdrop", "%", true),
            ("eff", "%", true),
        ];
        for (name, unit, real) in outputs {
            let u = if unit.is_empty() {
                String::new()
            } else {
                format!(" [{unit}]")
            };
            if real {
                names.push(format!("{name}{u}"));
            } else {
                names.push(format!("{name}.re{u}"));
                names.push(format!("{name}.im{u}"));
            }
        }
        writeln!(w, "{}", names.join(",")).expect("write");
        for group in out_rx {
            for buf in group {
                w.write_all(&buf).expect("write");
            }
        }
        w.into_inner().expect("flush").sync_all().expect("sync");
    });
    for group in rows_rx {
        let outs: Vec<Vec<u8>> = group
            .par_iter()
            .map(|rows| {
                let mut out = Vec::with_capacity(rows.len() * 900);
                hand_csv_rows(&k, rows, &mut out);
                out
            })
            .collect();
        out_tx.send(outs).expect("writer");
    }
    drop(out_tx);
    reader.join().expect("reader");
    writer.join().expect("writer");
    let wall = t0.elapsed().as_secs_f64();
    let cpu = process_cpu_ns().zip(c0).map_or(f64::NAN, |(b, a)| (b - a) / 1e9);
    println!("{{\"variant\":\"hand_csv\",\"wall_s\":{wall:.4},\"cpu_s\":{cpu:.4}}}");
}

/// CPU time of the whole process, in ns.
fn process_cpu_ns() -> Option<f64> {
    let mut t = libc::timespec { tv_sec: 0, tv_nsec: 0 };
    // SAFETY: clock_gettime writes the timespec it is given.
    let r = unsafe { libc::clock_gettime(libc::CLOCK_PROCESS_CPUTIME_ID, &mut t) };
    (r == 0).then_some(t.tv_sec as f64 * 1e9 + t.tv_nsec as f64)
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).filter(|a| !a.starts_with('-')).collect();
    if args.first().map(String::as_str) == Some("csv") {
        let (Some(cases), Some(results)) = (args.get(1), args.get(2)) else {
            eprintln!("usage: feeder csv CASES.csv RESULTS.csv");
            std::process::exit(2);
        };
        return hand_csv(cases, results);
    }
    let n: usize = args.first().and_then(|a| a.parse().ok()).unwrap_or(1_000_000);
    let repeats: usize = args.get(1).and_then(|a| a.parse().ok()).unwrap_or(7);
    let inp = make_inputs(n);
    let c = load_sheet();
    let k = constants();

    // The three agree (the hand-written code is not bit-identical: it
    // folds constants and uses real arithmetic where values are real).
    let mut worst: f64 = 0.0;
    let mut b = Block::new(&c.model.program);
    for i in (0..n).step_by((n / 1000).max(1)).take(1000) {
        let want = ohmsheet_scalar_case(&c, &inp, i);
        let h = hand_case(
            &k,
            inp.vmag[i],
            inp.vang[i],
            inp.len[i],
            inp.rload[i],
            inp.lload[i],
            inp.ccap[i],
        );
        worst = worst.max(max_rel(&want, &h));
        // the block evaluator agrees with the scalar one to the bit
        let lo = i - i % LANES;
        if lo + LANES <= n {
            let mut acc = vec![[0.0; LANES]; OUTS];
            ohmsheet_range(&c, &mut b, &inp, lo, lo + LANES, &mut acc);
            for (j, &s) in c.outputs.iter().enumerate() {
                let z = b.get(s, i - lo);
                assert_eq!(
                    (z.re.to_bits(), z.im.to_bits()),
                    (want[j].re.to_bits(), want[j].im.to_bits())
                );
            }
        }
    }
    assert!(worst < 1e-12, "hand-written and ohmsheet differ by {worst:e}");
    let mut ops: Vec<(String, usize)> = Vec::new();
    for ins in &c.model.program.code {
        let name = format!("{:?}", ins.op);
        match ops.iter_mut().find(|(n, _)| *n == name) {
            Some(e) => e.1 += 1,
            None => ops.push((name, 1)),
        }
    }
    let ops: Vec<String> = ops.iter().map(|(n, k)| format!("\"{n}\":{k}")).collect();
    println!(
        "{{\"bench\":\"feeder\",\"cases\":{n},\"instructions\":{},\"slots\":{},\"ops\":{{{}}},\"max_rel_diff_hand_vs_ohmsheet\":{worst:e}}}",
        c.model.program.code.len(),
        c.model.program.n_slots(),
        ops.join(",")
    );

    let all = rayon::current_num_threads();
    for threads in [1, all] {
        let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
        // Timed inside the pool: with one thread, the work runs on the very
        // thread whose CPU time is read.
        pool.install(|| {
            let names = ["ohmsheet_block", "hand_scalar", "hand_block"];
            let fs: [&dyn Fn() -> f64; 3] = [&|| ohmsheet_all(&c, &inp), &|| hand_scalar_all(&k, &inp), &|| {
                hand_block_all(&k, &inp)
            }];
            let res = time_in_turns(repeats, n, threads, &fs);
            for (name, (ns, sum)) in names.iter().zip(&res) {
                println!(
                    "{{\"variant\":\"{name}\",\"threads\":{threads},\"ns_per_case\":{ns:.3},\"checksum\":{sum:e}}}"
                );
            }
            let s0 = res[0].1;
            let spread = res.iter().map(|r| (r.1 - s0).abs()).fold(0.0, f64::max) / s0.abs();
            assert!(spread < 1e-9, "checksums differ: {res:?}");
        });
    }
}
