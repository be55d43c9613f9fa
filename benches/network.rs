//! Networks: how fast ohmsheet solves them, side by side in one run.
//!
//!   cargo bench --bench network -- batch [CASES] [REPEATS]
//!       bench/network30.ohm (a 30-node grid) over CASES cases in memory
//!       through the block evaluator on all cores, beside the same network
//!       solved case by case in hand-written Rust with faer (dense LU), on
//!       all cores and on one; bench/network.py times numpy's batched
//!       `np.linalg.solve` on the same cases (bench/network_run.py runs all
//!       of them and prints the ratios).
//!   cargo bench --bench network -- mesh NODES
//!       a generated mesh of NODES nodes: compile the sheet and solve it
//!       once (CPU time), and this process's peak memory.
//!   cargo bench --bench network -- meshes
//!       `mesh` for 1,250 to 6,000 nodes (the mesh has three elements a
//!       node; a network may have 20,000), each in a fresh process.
//!   cargo bench --bench network -- crossover
//!       one solve of a grid network by faer's dense and sparse LU at
//!       sizes around `SPARSE_FROM`.
//!   cargo bench --bench network -- session
//!       a session edit of one element value in a 200-node network: the
//!       median time of `Session::handle` to the redrawn changes.
//!
//! Prints one JSON object per line. Times are medians of the repeats; CPU
//! times are the process's (all threads) or this thread's, so that waiting
//! for a core on a shared machine counts less.

use std::path::Path;
use std::process::Command;
use std::time::{Duration, Instant};

use faer::linalg::solvers::Solve;
use faer::Mat;
use num_complex::Complex64 as C64;
use ohmsheet::engine::block::{Block, LANES};
use ohmsheet::engine::{compile, eval, Engine, Model};
use ohmsheet::network::{solve_by, ElemKind, Given, Method, Net};
use ohmsheet::session::Session;
use ohmsheet::sheet::Sheet;
use rayon::prelude::*;

/// Cases per parallel task.
const CHUNK: usize = 4096;

// ------------------------------------------------------------ the cases

/// Weyl-sequence fractions, the same operations as bench/network.py.
const ALPHA: [f64; 4] = [
    0.6180339887498949,
    0.4142135623730951,
    0.7320508075688772,
    0.2360679774997897,
];

/// Case `i` (0-based): f (Hz), Vs (V), Rload (Ω), Cc (F).
#[inline]
fn case(i: usize) -> [f64; 4] {
    let k = (i + 1) as f64;
    let u = ALPHA.map(|a| {
        let x = k * a;
        x - x.floor()
    });
    [
        50.0 + 450.0 * u[0],
        200.0 + 40.0 * u[1],
        5.0 + 95.0 * u[2],
        1e-6 + 99e-6 * u[3],
    ]
}

// ------------------------------------------------------------ timing

fn cpu_ns(clock: libc::clockid_t) -> f64 {
    let mut t = libc::timespec { tv_sec: 0, tv_nsec: 0 };
    // SAFETY: a valid clock id and a valid pointer.
    let r = unsafe { libc::clock_gettime(clock, &mut t) };
    assert_eq!(r, 0);
    t.tv_sec as f64 * 1e9 + t.tv_nsec as f64
}

fn process_cpu() -> f64 {
    cpu_ns(libc::CLOCK_PROCESS_CPUTIME_ID)
}

fn thread_cpu() -> f64 {
    cpu_ns(libc::CLOCK_THREAD_CPUTIME_ID)
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// Peak resident memory of this process, in KiB.
fn max_rss_kib() -> i64 {
    // SAFETY: getrusage fills the struct.
    let mut u: libc::rusage = unsafe { std::mem::zeroed() };
    unsafe { libc::getrusage(libc::RUSAGE_SELF, &mut u) };
    u.ru_maxrss
}

// ------------------------------------------------------------ (a) batch

struct Compiled {
    model: Model,
    inputs: [u32; 4],
    /// The network's result slots (node voltages first).
    first: u32,
    width: u32,
    nodes: u32,
}

fn load_grid() -> Compiled {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("bench/network30.ohm");
    let sheet = Sheet::load(&path).unwrap_or_else(|_| panic!("cannot read {}", path.display()));
    let model = compile(&sheet);
    assert!(!model.has_errors(), "bench/network30.ohm has errors");
    let slot = |n: &str| model.cell(n).unwrap_or_else(|| panic!("no cell {n}")).slot;
    let inputs = [slot("f"), slot("Vs"), slot("Rload"), slot("Cc")];
    let g = model.cell("grid").expect("the network cell");
    let (first, width) = (g.slot, g.width);
    let nodes = model.program.networks[0].net.nodes.len() as u32 - 1;
    assert_eq!(nodes, 30);
    Compiled {
        model,
        inputs,
        first,
        width,
        nodes,
    }
}

/// The block evaluator over cases lo..hi: every result of the network is
/// read (summed), the node voltages into the checksum.
fn ohmsheet_range(c: &Compiled, b: &mut Block, lo: usize, hi: usize) -> (f64, f64) {
    let prog = &c.model.program;
    let (mut check, mut all) = (0.0, 0.0);
    let mut start = lo;
    while start < hi {
        let n = LANES.min(hi - start);
        for l in 0..n {
            let x = case(start + l);
            for (k, &s) in c.inputs.iter().enumerate() {
                b.set(s, l, C64::new(x[k], 0.0));
            }
        }
        b.run(&prog.code, prog);
        for s in c.first..c.first + c.width {
            let (re, im) = b.lanes(s);
            let t: f64 = re[..n].iter().zip(&im[..n]).map(|(r, i)| r + i).sum();
            if s < c.first + c.nodes {
                check += t;
            }
            all += t;
        }
        start += n;
    }
    (check, all)
}

fn ohmsheet_all(c: &Compiled, n: usize) -> f64 {
    (0..n.div_ceil(CHUNK))
        .into_par_iter()
        .map_init(
            || Block::new(&c.model.program),
            |b, k| ohmsheet_range(c, b, k * CHUNK, ((k + 1) * CHUNK).min(n)).0,
        )
        .sum()
}

/// The same network written by hand: nodal admittance matrix with the
/// source as its Norton equivalent, faer's dense LU case by case, then
/// every element's current and power (as the sheet gives them).
struct Hand {
    y0: Mat<C64>,
    edges: Vec<(usize, usize, C64)>,
    caps: Vec<(usize, f64)>,
    zsrc: C64,
}

const ROWS: usize = 5;
const COLS: usize = 6;
const NODES: usize = ROWS * COLS;
const LOAD_NODE: usize = NODES - 1;
const CAP_NODE: usize = 2 * COLS + 3;

fn hand() -> Hand {
    let mut edges = Vec::new();
    let mut k = 0;
    for r in 0..ROWS {
        for c in 0..COLS {
            for (r2, c2) in [(r, c + 1), (r + 1, c)] {
                if r2 < ROWS && c2 < COLS {
                    let z = C64::new(
                        ((0.2 + 0.1 * (k % 8) as f64) * 10.0).round() / 10.0,
                        ((0.5 + 0.2 * (k % 7) as f64) * 10.0).round() / 10.0,
                    );
                    edges.push((r * COLS + c, r2 * COLS + c2, 1.0 / z));
                    k += 1;
                }
            }
        }
    }
    let caps: Vec<(usize, f64)> = (0..NODES)
        .filter(|&n| n != CAP_NODE)
        .map(|n| (n, (2.0 + 0.5 * (n % 5) as f64) * 1e-6))
        .collect();
    let zsrc = C64::new(0.4, 1.2);
    let mut y0 = Mat::<C64>::zeros(NODES, NODES);
    for &(a, b, y) in &edges {
        y0[(a, a)] += y;
        y0[(b, b)] += y;
        y0[(a, b)] -= y;
        y0[(b, a)] -= y;
    }
    y0[(0, 0)] += 1.0 / zsrc;
    Hand { y0, edges, caps, zsrc }
}

fn hand_case(h: &Hand, i: usize) -> (f64, f64) {
    let [f, vs, rl, cc] = case(i);
    let w = 2.0 * std::f64::consts::PI * f;
    let mut y = h.y0.clone();
    for &(n, c) in &h.caps {
        y[(n, n)] += C64::new(0.0, w * c);
    }
    y[(CAP_NODE, CAP_NODE)] += C64::new(0.0, w * cc);
    y[(LOAD_NODE, LOAD_NODE)] += 1.0 / rl;
    let mut rhs = Mat::<C64>::zeros(NODES, 1);
    rhs[(0, 0)] = vs / h.zsrc;
    let v = y.partial_piv_lu().solve(&rhs);
    let v = |n: usize| v[(n, 0)];
    let mut check = 0.0;
    for n in 0..NODES {
        check += v(n).re + v(n).im;
    }
    let mut all = check;
    let mut absorbed = C64::new(0.0, 0.0);
    for &(a, b, y) in &h.edges {
        let i = (v(a) - v(b)) * y;
        let s = (v(a) - v(b)) * i.conj();
        absorbed += s;
        all += i.re + i.im + s.re + s.im;
    }
    for &(n, c) in &h.caps {
        let i = v(n) * C64::new(0.0, w * c);
        let s = v(n) * i.conj();
        absorbed += s;
        all += i.re + i.im + s.re + s.im;
    }
    let icv = v(CAP_NODE) * C64::new(0.0, w * cc);
    let il = v(LOAD_NODE) / rl;
    let isrc = (vs - v(0)) / h.zsrc;
    let ssrc = v(0) * isrc.conj();
    absorbed += v(CAP_NODE) * icv.conj() + v(LOAD_NODE) * il.conj();
    all += icv.re + il.re + isrc.re + ssrc.re + absorbed.re;
    (check, all)
}

fn hand_all(h: &Hand, n: usize) -> f64 {
    (0..n.div_ceil(CHUNK))
        .into_par_iter()
        .map(|k| {
            (k * CHUNK..((k + 1) * CHUNK).min(n))
                .map(|i| hand_case(h, i).0)
                .sum::<f64>()
        })
        .sum()
}

fn batch(cases: usize, repeats: usize) {
    let c = load_grid();
    let h = hand();
    // The two agree before anything is timed: the scalar evaluator on a
    // few cases against the hand solve (node voltages).
    for i in [0, 1, 17, 999, cases.saturating_sub(1)] {
        let prog = &c.model.program;
        let mut slots = prog.init.clone();
        let x = case(i);
        for (k, &s) in c.inputs.iter().enumerate() {
            slots[s as usize] = C64::new(x[k], 0.0);
        }
        eval::run(&prog.code, prog, &mut slots);
        let ours: f64 = (c.first..c.first + c.nodes)
            .map(|s| slots[s as usize].re + slots[s as usize].im)
            .sum();
        let theirs = hand_case(&h, i).0;
        assert!(
            (ours - theirs).abs() <= 1e-9 * theirs.abs().max(1.0),
            "case {i}: ohmsheet {ours} vs by hand {theirs}"
        );
    }
    let threads = rayon::current_num_threads();
    let run = |name: &str, threads: usize, f: &dyn Fn() -> f64| {
        let (mut wall, mut cpu, mut sum) = (Vec::new(), Vec::new(), 0.0);
        for _ in 0..repeats {
            let (t0, c0) = (Instant::now(), process_cpu());
            sum = f();
            cpu.push((process_cpu() - c0) / cases as f64);
            wall.push(t0.elapsed().as_secs_f64() * 1e9 / cases as f64);
        }
        println!(
            "{{\"part\":\"batch\",\"variant\":\"{name}\",\"threads\":{threads},\"cases\":{cases},\"repeats\":{repeats},\
             \"wall_ns_per_case\":{:.1},\"cpu_ns_per_case\":{:.1},\"checksum\":{sum}}}",
            median(wall),
            median(cpu)
        );
    };
    run("ohmsheet block evaluator", threads, &|| ohmsheet_all(&c, cases));
    run("hand-written Rust, faer dense LU per case", threads, &|| {
        hand_all(&h, cases)
    });
    let one = cases / 10;
    let run1 = |name: &str, f: &dyn Fn() -> f64| {
        let (mut wall, mut cpu) = (Vec::new(), Vec::new());
        for _ in 0..repeats {
            let (t0, c0) = (Instant::now(), thread_cpu());
            std::hint::black_box(f());
            cpu.push((thread_cpu() - c0) / one as f64);
            wall.push(t0.elapsed().as_secs_f64() * 1e9 / one as f64);
        }
        println!(
            "{{\"part\":\"batch\",\"variant\":\"{name}\",\"threads\":1,\"cases\":{one},\"repeats\":{repeats},\
             \"wall_ns_per_case\":{:.1},\"cpu_ns_per_case\":{:.1}}}",
            median(wall),
            median(cpu)
        );
    };
    run1("ohmsheet block evaluator", &|| {
        let mut b = Block::new(&c.model.program);
        ohmsheet_range(&c, &mut b, 0, one).1
    });
    run1("hand-written Rust, faer dense LU per case", &|| {
        (0..one).map(|i| hand_case(&h, i).1).sum()
    });
}

// ------------------------------------------------------------ (b) mesh

/// A rows × cols mesh (an invented distribution grid): a source at the
/// corner, an R + jX section on every edge, a load at every tenth node and
/// a capacitance at every node.
fn mesh_sheet(rows: usize, cols: usize) -> String {
    let mut s = String::with_capacity(rows * cols * 120);
    s.push_str(
        "# A generated mesh (invented)\nf = 50 Hz\nnetwork m at f\n  E = emf(n0_0, ground, 11 kV, 0.5 Ω + j2 Ω)\n",
    );
    let mut k = 0;
    for r in 0..rows {
        for c in 0..cols {
            for (r2, c2) in [(r, c + 1), (r + 1, c)] {
                if r2 < rows && c2 < cols {
                    s.push_str(&format!(
                        "  Z{k} = branch(n{r}_{c}, n{r2}_{c2}, {:.1} Ω + j{:.1} Ω)\n",
                        0.2 + 0.1 * (k % 8) as f64,
                        0.5 + 0.2 * (k % 7) as f64
                    ));
                    k += 1;
                }
            }
            s.push_str(&format!(
                "  C{r}_{c} = branch(n{r}_{c}, ground, {:.1} µF)\n",
                1.0 + 0.5 * ((r + c) % 4) as f64
            ));
            if (r * cols + c) % 10 == 9 {
                s.push_str(&format!(
                    "  L{r}_{c} = branch(n{r}_{c}, ground, {} Ω + j{} Ω)\n",
                    400 + (r + c) % 50,
                    150
                ));
            }
        }
    }
    s.push_str(&format!("end\nVfar = net_v(m, n{}_{})\n", rows - 1, cols - 1));
    s
}

fn mesh(nodes: usize) {
    let cols = 100.min(nodes);
    let rows = nodes / cols;
    let text = mesh_sheet(rows, cols);
    let rss0 = max_rss_kib();
    let (t0, c0) = (Instant::now(), thread_cpu());
    let sheet = Sheet::from_text("mesh.ohm", &text);
    let model = compile(&sheet);
    let c1 = thread_cpu();
    assert!(!model.has_errors(), "the mesh sheet has errors");
    let id = model.id("Vfar").expect("Vfar");
    let e = Engine::new(model);
    let v = e.value(id);
    let c2 = thread_cpu();
    assert!(v.norm().is_finite() && v.norm() > 0.0, "Vfar = {v}");
    println!(
        "{{\"part\":\"mesh\",\"nodes\":{},\"elements\":{},\"compile_ms\":{:.1},\"solve_ms\":{:.1},\"total_cpu_ms\":{:.1},\
         \"wall_ms\":{:.1},\"peak_rss_mib\":{:.1},\"rss_growth_mib\":{:.1},\"Vfar\":\"{v}\"}}",
        rows * cols,
        text.lines().filter(|l| l.starts_with("  ")).count(),
        (c1 - c0) / 1e6,
        (c2 - c1) / 1e6,
        (c2 - c0) / 1e6,
        t0.elapsed().as_secs_f64() * 1e3,
        max_rss_kib() as f64 / 1024.0,
        (max_rss_kib() - rss0) as f64 / 1024.0,
    );
}

fn meshes() {
    let exe = std::env::current_exe().expect("this program");
    for n in [1250, 2500, 5000, 6000] {
        let mut times = Vec::new();
        let mut last = String::new();
        for _ in 0..3 {
            let out = Command::new(&exe)
                .args(["mesh", &n.to_string()])
                .output()
                .expect("runs");
            assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
            last = String::from_utf8_lossy(&out.stdout).trim().to_string();
            let t: f64 = last
                .split("\"total_cpu_ms\":")
                .nth(1)
                .and_then(|s| s.split(',').next())
                .and_then(|s| s.parse().ok())
                .expect("a time");
            times.push((t, last.clone()));
        }
        times.sort_by(|a, b| a.0.total_cmp(&b.0));
        let _ = last;
        // The median run's line.
        println!("{}", times[1].1);
    }
}

// ------------------------------------------------------------ crossover

/// A side × side grid as a `Net`, its values (ω first).
fn grid_net(side: usize) -> (Net, Vec<C64>) {
    let mut n = Net::new();
    let mut vals = vec![C64::new(2.0 * std::f64::consts::PI * 50.0, 0.0)];
    let id = |n: &mut Net, r: usize, c: usize| n.node(&format!("n{r}_{c}"));
    let first = id(&mut n, 0, 0);
    n.add(
        "E",
        ElemKind::VSource {
            internal: Some(Given::Impedance),
        },
        first,
        0,
    );
    vals.push(C64::new(400.0, 0.0));
    vals.push(C64::new(0.5, 2.0));
    let mut k = 0;
    for r in 0..side {
        for c in 0..side {
            let a = id(&mut n, r, c);
            for (r2, c2) in [(r, c + 1), (r + 1, c)] {
                if r2 < side && c2 < side {
                    let b = id(&mut n, r2, c2);
                    n.add(&format!("Z{k}"), ElemKind::Branch(Given::Impedance), a, b);
                    vals.push(C64::new(0.2 + 0.1 * (k % 8) as f64, 0.5 + 0.2 * (k % 7) as f64));
                    k += 1;
                }
            }
            n.add(&format!("C{r}_{c}"), ElemKind::Branch(Given::Capacitance), a, 0);
            vals.push(C64::new(2e-6, 0.0));
        }
    }
    (n, vals)
}

fn crossover() {
    for side in [5, 7, 8, 9, 10, 12, 15, 20, 30] {
        let (net, vals) = grid_net(side);
        let mut row = format!("{{\"part\":\"crossover\",\"nodes\":{}", side * side);
        let mut answers = Vec::new();
        for (name, how) in [("dense_us", Method::Dense), ("sparse_us", Method::Sparse)] {
            let reps = if side * side > 400 && how == Method::Dense {
                3
            } else {
                21
            };
            let mut t = Vec::new();
            for _ in 0..reps {
                let c0 = thread_cpu();
                let s = solve_by(&net, &vals, &[], how).expect("solves");
                t.push((thread_cpu() - c0) / 1e3);
                answers.push(s.v[1]);
            }
            row.push_str(&format!(",\"{name}\":{:.1}", median(t)));
        }
        let (a, b) = (answers[0], answers[answers.len() - 1]);
        assert!((a - b).norm() <= 1e-9 * a.norm(), "dense {a} vs sparse {b}");
        println!("{row}}}");
    }
}

// ------------------------------------------------------------ (c) session

fn session() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("mesh200.ohm");
    std::fs::write(&path, mesh_sheet(10, 20)).expect("write");
    let (mut s, _) = Session::open(Some(&path), Some(dir.path().join("data")), false).expect("opens");
    let n = 200;
    let time = |s: &mut Session, line: &dyn Fn(usize) -> String| {
        let mut v = Vec::with_capacity(n);
        for i in 0..n {
            let l = line(i);
            let t = Instant::now();
            let r = s.handle(&l);
            v.push(t.elapsed());
            assert!(!r.refused, "{}", r.text);
        }
        v.sort();
        v[v.len() / 2]
    };
    let row = |what: &str, d: Duration| {
        println!(
            "{{\"part\":\"session\",\"nodes\":200,\"what\":\"{what}\",\"edits\":{n},\"median_ms\":{:.3}}}",
            d.as_secs_f64() * 1e3
        );
    };
    let d = time(&mut s, &|i| {
        format!("Z{} = {:.2} Ω + j0.8 Ω", (i * 37) % 370, 0.3 + (i % 9) as f64 * 0.05)
    });
    row("element value, with journal fsync", d);
    s.discard_journal();
    let (mut s, _) = Session::open(Some(&path), None, false).expect("opens");
    let d = time(&mut s, &|i| {
        format!("Z{} = {:.2} Ω + j0.8 Ω", (i * 37) % 370, 0.3 + (i % 9) as f64 * 0.05)
    });
    row("element value, no journal", d);
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).filter(|a| a != "--bench").collect();
    let num = |i: usize, d: usize| args.get(i).and_then(|s| s.parse().ok()).unwrap_or(d);
    match args.first().map(String::as_str) {
        Some("batch") => batch(num(1, 1_000_000), num(2, 3)),
        Some("mesh") => mesh(num(1, 5000)),
        Some("meshes") => meshes(),
        Some("crossover") => crossover(),
        Some("session") => session(),
        None => {
            batch(1_000_000, 3);
            meshes();
            crossover();
            session();
        }
        Some(x) => panic!("unknown part {x}: batch, mesh, meshes, crossover or session"),
    }
}
