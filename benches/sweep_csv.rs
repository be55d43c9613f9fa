//! A sweep of 1,000,000 points of a 20-cell sheet written as CSV, against
//! the same formulas written by hand in Rust and written with the same CSV
//! writer, side by side in one run.
//!
//! Run: `cargo bench --bench sweep_csv` (no harness; prints medians of 7
//! rounds, the variants taking turns within each round so they share the
//! machine's load alike, and the ratios). Rows:
//! - hand-written Rust: the sheet's formulas as plain `num_complex` code in
//!   a loop, each row written by `output::sweep::CsvRows`;
//! - ohmsheet library: `Study` + `sweep::run` + `CsvRows`, what
//!   `ohmsheet sweep --csv` does after reading its arguments;
//! - ohmsheet command: the release binary itself, start to finish;
//! - and, without CSV, the evaluation alone both ways (values summed).

use std::f64::consts::PI;
use std::fs::File;
use std::io::BufWriter;
use std::time::{Duration, Instant};

use num_complex::Complex64 as C64;
use ohmsheet::output::sweep::{CsvRows, Parts};
use ohmsheet::sheet::Sheet;
use ohmsheet::sweep::{self, Study};

const POINTS: usize = 1_000_000;
const RUNS: usize = 7;

/// Kestrel Ridge pump house (an invented site): a 480 V bus behind a
/// transformer and cable, a pump motor and a heater, and a capacitor bank
/// swept from 0 to 2 mF. Twenty cells.
const SHEET: &str = "\
Vs = 480 V
f = 60 Hz
Zt = (0.012 + j0.048) Ω
Zcable = (0.02 + j0.011) Ω
Rm = 1.9 Ω
Xm = 1.3 Ω
Rh = 9.5 Ω
C = 1 mF
w = 2*pi*f
Zm = Rm + j*Xm
Zc = 1/(j*w*C)
Zload = Zm || Rh
Zbus = Zload || Zc
Zsrc = Zt + Zcable
Vbus = Vs * Zbus / (Zsrc + Zbus)
Is = Vs / (Zsrc + Zbus)
Im = Vbus / Zm
Ic = Vbus / Zc
S = Vbus * conj(Is)
pf = re(S) / abs(S)
";

const SHOW: [&str; 4] = ["Vbus", "Is", "S", "pf"];

fn par(a: C64, b: C64) -> C64 {
    a * b / (a + b)
}

/// The shown values at bank size `c`, written by hand.
#[inline]
fn by_hand(c: f64) -> [C64; 4] {
    let vs = C64::new(480.0, 0.0);
    let w = 2.0 * PI * 60.0;
    let zm = C64::new(1.9, 1.3);
    let zload = par(zm, C64::new(9.5, 0.0));
    let zsrc = C64::new(0.012, 0.048) + C64::new(0.02, 0.011);
    let zc = C64::new(1.0, 0.0) / (C64::new(0.0, 1.0) * w * c);
    let zbus = par(zload, zc);
    let vbus = vs * zbus / (zsrc + zbus);
    let is = vs / (zsrc + zbus);
    let s = vbus * is.conj();
    let pf = C64::new(s.re / s.norm(), 0.0);
    [vbus, is, s, pf]
}

fn c_at(i: usize) -> f64 {
    // The library's own grid: linear, both ends exact.
    ohmsheet::engine::search::grid_point(0.0, 2e-3, i, POINTS - 1, false)
}

fn median(mut v: Vec<Duration>) -> Duration {
    v.sort();
    v[v.len() / 2]
}

/// Run every task once per round, `RUNS` rounds, so that each sees the
/// same share of a shared machine's load; the median of each.
fn time_all(tasks: &mut [&mut dyn FnMut()]) -> Vec<Duration> {
    let mut v: Vec<Vec<Duration>> = tasks.iter().map(|_| Vec::with_capacity(RUNS)).collect();
    for _ in 0..RUNS {
        for (k, f) in tasks.iter_mut().enumerate() {
            let t = Instant::now();
            f();
            v[k].push(t.elapsed());
        }
    }
    v.into_iter().map(median).collect()
}

fn main() {
    let dir = tempfile::tempdir().expect("temp dir");
    let sheet_path = dir.path().join("pumphouse.ohm");
    std::fs::write(&sheet_path, SHEET).expect("write sheet");
    let out = dir.path().join("out.csv");

    let mut study = Study::new(Sheet::from_text("pumphouse.ohm", SHEET), &[]).expect("compiles");
    assert_eq!(study.model().cells.len(), 20);
    let axis = study
        .axis("--vary", "C=0..2mF", Some(POINTS), None, false)
        .expect("axis");
    let series: Vec<_> = SHOW.iter().map(|s| study.series(s).expect("cell")).collect();
    let axes = vec![axis];

    // The two agree (same formulas; the library's division and || are the
    // careful ones, so allow rounding).
    let mut worst = 0.0f64;
    sweep::run(&study.engine, &axes, &series, |p, v| {
        let h = by_hand(c_at(p));
        for k in 0..4 {
            if p > 0 {
                worst = worst.max((v[k] - h[k]).norm() / h[k].norm());
            }
        }
    });
    assert!(worst < 1e-12, "library and hand-written differ by {worst:e}");

    let mut hand_csv = || {
        let w = BufWriter::with_capacity(1 << 16, File::create(&out).unwrap());
        let mut rows = CsvRows::new(w, &axes, &series, Parts::Polar).unwrap();
        for i in 0..POINTS {
            let c = c_at(i);
            rows.row(&[c], &by_hand(c)).unwrap();
        }
        rows.finish().unwrap();
    };
    let mut lib_csv = || {
        let w = BufWriter::with_capacity(1 << 16, File::create(&out).unwrap());
        let mut rows = CsvRows::new(w, &axes, &series, Parts::Polar).unwrap();
        let a = &axes[0];
        sweep::run(&study.engine, &axes, &series, |p, v| {
            rows.row(&[a.value(p)], v).unwrap();
        });
        rows.finish().unwrap();
    };
    lib_csv();
    let lines = std::fs::read_to_string(&out).unwrap().lines().count();
    assert_eq!(lines, POINTS + 1);
    let exe = env!("CARGO_BIN_EXE_ohmsheet");
    let mut cli = || {
        let st = std::process::Command::new(exe)
            .args([
                "sweep",
                sheet_path.to_str().unwrap(),
                "--vary",
                "C=0..2mF",
                "--points",
                &POINTS.to_string(),
                "--show",
                &SHOW.join(","),
                "--csv",
                out.to_str().unwrap(),
            ])
            .status()
            .unwrap();
        assert!(st.success());
    };
    let mut hand_eval = || {
        let mut sum = C64::new(0.0, 0.0);
        for i in 0..POINTS {
            for z in by_hand(c_at(i)) {
                sum += z;
            }
        }
        std::hint::black_box(sum);
    };
    let mut lib_eval = || {
        let mut sum = C64::new(0.0, 0.0);
        sweep::run(&study.engine, &axes, &series, |_, v| {
            for z in v {
                sum += z;
            }
        });
        std::hint::black_box(sum);
    };
    let t = time_all(&mut [&mut hand_csv, &mut lib_csv, &mut cli, &mut hand_eval, &mut lib_eval]);
    let (hand_csv, lib_csv, cli, hand_eval, lib_eval) = (t[0], t[1], t[2], t[3], t[4]);

    let ms = |d: Duration| d.as_secs_f64() * 1e3;
    println!("sweep of {POINTS} points, 20-cell sheet, 4 complex values shown (9 CSV columns); median of {RUNS} rounds, the variants taking turns\n");
    println!("{:<44} {:>10} {:>8}", "", "ms", "ratio");
    println!("{:<44} {:>10.1} {:>8}", "CSV, hand-written Rust", ms(hand_csv), "1.00");
    println!(
        "{:<44} {:>10.1} {:>8.2}",
        "CSV, ohmsheet library (sweep::run)",
        ms(lib_csv),
        ms(lib_csv) / ms(hand_csv)
    );
    println!(
        "{:<44} {:>10.1} {:>8.2}",
        "CSV, ohmsheet sweep command (whole process)",
        ms(cli),
        ms(cli) / ms(hand_csv)
    );
    println!(
        "{:<44} {:>10.1} {:>8}",
        "evaluation only, hand-written Rust",
        ms(hand_eval),
        "1.00"
    );
    println!(
        "{:<44} {:>10.1} {:>8.2}",
        "evaluation only, ohmsheet library",
        ms(lib_eval),
        ms(lib_eval) / ms(hand_eval)
    );
}
