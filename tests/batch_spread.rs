//! `ohmsheet batch --spread CELL,…`: worst case and Monte Carlo over the
//! sheet's tolerances, about each case's values, checked against closed
//! forms worked here (never against the program's own output), and rows
//! that fail — a wrong unit, a case that leaves no valid tolerance box —
//! with their reasons.

use std::path::{Path, PathBuf};

use crate::common::ohmsheet;

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn read_csv(p: &Path) -> Vec<Vec<String>> {
    let mut r = csv::ReaderBuilder::new().has_headers(false).from_path(p).unwrap();
    r.records()
        .map(|x| x.unwrap().iter().map(str::to_string).collect())
        .collect()
}

/// A divider fed through a wire: Vo = Vs·R2/(R1 + R2 + Rw), with the
/// string's total Rt. R1 ±5 %, R2 ±1 %, Rw ±0.2 Ω (an absolute band).
const SHEET: &str = "\
Vs = 10 V
R1 = 1 kΩ within 5 %
R2 = 3 kΩ within 1 %
Rw = 0.5 Ω within 0.2 Ω
Rt = R1 + R2 + Rw
Vo = Vs * R2 / Rt
";

const CASES: &str = "\
case,Vs [V],R2,Rw
a,10,3 kΩ,0.5 Ω
b,20,1 kΩ,0.5 Ω
c,10,5 V,0.5 Ω
d,10,3 kΩ,0.1 Ω
e,10,3 kΩ,0 Ω
f,12,2 kΩ,1 Ω
";

const N: usize = 20_000;

struct Run {
    rows: Vec<Vec<String>>,
    errors: Vec<Vec<String>>,
    code: i32,
}

fn run(dir: &Path, cases: &str, extra: &[&str]) -> Run {
    let sheet = write(dir, "div.ohm", SHEET);
    let cases = write(dir, "cases.csv", cases);
    let out = dir.join("out.csv");
    let mut cmd = ohmsheet();
    cmd.args(["batch", sheet.to_str().unwrap(), "--cases", cases.to_str().unwrap()])
        .args(["-o", out.to_str().unwrap(), "--show", "Vo", "--spread", "Vo,Rt"])
        .args(["--samples", &N.to_string(), "--tag", "case", "-q"])
        .args(extra);
    let o = cmd.output().unwrap();
    Run {
        rows: read_csv(&out),
        errors: read_csv(&dir.join("out.errors.csv")),
        code: o.status.code().unwrap(),
    }
}

fn col(rows: &[Vec<String>], name: &str) -> usize {
    rows[0]
        .iter()
        .position(|h| h == name)
        .unwrap_or_else(|| panic!("no column `{name}` in {:?}", rows[0]))
}

fn num(rows: &[Vec<String>], case: &str, name: &str) -> f64 {
    let r = rows.iter().find(|r| r[0] == case).unwrap();
    let t = &r[col(rows, name)];
    t.parse().unwrap_or_else(|_| panic!("{case} {name}: `{t}`"))
}

/// The standard deviation of a sample standard deviation from N samples
/// of a distribution with kurtosis κ ≤ 3 is at most about σ·√(2/(4N)) (a
/// large-sample result, from memory); four of them.
fn sd_bound(sigma: f64) -> f64 {
    4.0 * sigma * (2.0 / (4.0 * N as f64)).sqrt()
}

/// Each case's (Vs, R2, Rw), as the table gives them.
const GOOD: [(&str, f64, f64, f64); 3] = [
    ("a", 10.0, 3000.0, 0.5),
    ("b", 20.0, 1000.0, 0.5),
    ("f", 12.0, 2000.0, 1.0),
];

#[test]
fn worst_case_per_case_is_at_the_corners_the_closed_form_gives() {
    let dir = tempfile::tempdir().unwrap();
    let r = run(dir.path(), CASES, &[]);
    // A case column may make Vs and R2 complex (a voltage and an impedance
    // may be phasors), so Vo and Rt are judged by their magnitudes.
    for h in [
        "Vo.mag.worst_min [V]",
        "Vo.mag.worst_min_at",
        "Vo.mag.worst_max [V]",
        "Vo.mag.worst_max_at",
        "Vo.mag.mc_mean [V]",
        "Vo.mag.mc_sd [V]",
        "Vo.mag.mc_low95 [V]",
        "Vo.mag.mc_high95 [V]",
        "Rt.mag.worst_min [Ω]",
        "Rt.mag.mc_high95 [Ω]",
    ] {
        col(&r.rows, h);
    }
    for (case, vs, r2, rw) in GOOD {
        // Vo rises with R2 (∂Vo/∂R2 = Vs·(R1 + Rw)/Rt² > 0) and falls with
        // R1 and Rw: its extremes are at the corners (R1 high, R2 low, Rw
        // high) and the opposite one. Rt is a sum: the band ends.
        let lo = vs * 0.99 * r2 / (1050.0 + 0.99 * r2 + rw + 0.2);
        let hi = vs * 1.01 * r2 / (950.0 + 1.01 * r2 + rw - 0.2);
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-12 * b.abs();
        let got = num(&r.rows, case, "Vo.mag.worst_min [V]");
        assert!(close(got, lo), "{case}: min {got} against {lo}");
        let got = num(&r.rows, case, "Vo.mag.worst_max [V]");
        assert!(close(got, hi), "{case}: max {got} against {hi}");
        let got = num(&r.rows, case, "Rt.mag.worst_min [Ω]");
        assert!(close(got, 950.0 + 0.99 * r2 + rw - 0.2), "{case}: Rt min {got}");
        let got = num(&r.rows, case, "Rt.mag.worst_max [Ω]");
        assert!(close(got, 1050.0 + 1.01 * r2 + rw + 0.2), "{case}: Rt max {got}");
        // Where: told as the sheet writes the tolerances.
        let row = r.rows.iter().find(|x| x[0] == case).unwrap();
        let at = &row[col(&r.rows, "Vo.mag.worst_min_at")];
        assert!(at.contains("R1 +5 %") && at.contains("R2 −1 %"), "{at}");
        let at = &row[col(&r.rows, "Vo.mag.worst_max_at")];
        assert!(at.contains("R1 −5 %") && at.contains("R2 +1 %"), "{at}");
        // The case's own value of Vo is written too: Vs·R2/Rt.
        let vo = num(&r.rows, case, "Vo.mag [V]");
        assert!(close(vo, vs * r2 / (1000.0 + r2 + rw)), "{case}: {vo}");
    }
}

#[test]
fn monte_carlo_per_case_follows_the_gum_and_the_closed_form_interval() {
    let dir = tempfile::tempdir().unwrap();
    let r = run(dir.path(), CASES, &[]);
    for (case, vs, r2, rw) in GOOD {
        // Rt = R1 + R2 + Rw, uniform inputs: mean the stated sum, variance
        // Σ wᵢ²/12 (JCGM 100:2008 §4.3.7).
        let (w1, w2, w3) = (100.0, 0.02 * r2, 0.4);
        let sd: f64 = ((w1 * w1 + w2 * w2 + w3 * w3) / 12.0f64).sqrt();
        let mean = num(&r.rows, case, "Rt.mag.mc_mean [Ω]");
        assert!(
            (mean - (1000.0 + r2 + rw)).abs() < 4.0 * sd / (N as f64).sqrt(),
            "{case}: {mean}"
        );
        let got = num(&r.rows, case, "Rt.mag.mc_sd [Ω]");
        assert!((got - sd).abs() < sd_bound(sd), "{case}: sd {got} against {sd}");
        // The sum of two uniforms of half-widths a ≥ b is trapezoidal: past
        // a − b its tail is P(Z > z) = (a + b − z)²/(8ab) (the convolution
        // of the two densities). The 95 % interval's ends are where that is
        // 2.5 %: z = a + b − √(8ab·0.025). The sample quantile misses it by
        // about √(p(1 − p)/N)/f(z), f(z) = (a + b − z)/(4ab); four of those,
        // and Rw's ±0.2 Ω besides.
        let (a, b) = (w1 / 2.0, w2 / 2.0);
        let z = a + b - (8.0 * a * b * 0.025f64).sqrt();
        assert!(z > a - b);
        let f = (a + b - z) / (4.0 * a * b);
        let tol = 4.0 * (0.025f64 * 0.975 / N as f64).sqrt() / f + 0.2;
        let mid = 1000.0 + r2 + rw;
        let lo = num(&r.rows, case, "Rt.mag.mc_low95 [Ω]");
        let hi = num(&r.rows, case, "Rt.mag.mc_high95 [Ω]");
        assert!((lo - (mid - z)).abs() < tol, "{case}: low {lo} against {}", mid - z);
        assert!((hi - (mid + z)).abs() < tol, "{case}: high {hi} against {}", mid + z);

        // Vo, mildly non-linear: its standard deviation is the GUM's
        // first-order one, √Σ (∂Vo/∂xᵢ·u(xᵢ))², within the sampling bound
        // and 2 % for the second-order terms; its mean the stated value
        // within the same.
        let rt = 1000.0 + r2 + rw;
        let d1 = -vs * r2 / (rt * rt); // ∂Vo/∂R1 = ∂Vo/∂Rw
        let d2 = vs * (1000.0 + rw) / (rt * rt);
        let u = ((d1 * w1).powi(2) + (d2 * w2).powi(2) + (d1 * w3).powi(2)).sqrt() / 12f64.sqrt();
        let got = num(&r.rows, case, "Vo.mag.mc_sd [V]");
        assert!(
            (got - u).abs() < sd_bound(u) + 0.02 * u,
            "{case}: Vo sd {got} against {u}"
        );
        let mean = num(&r.rows, case, "Vo.mag.mc_mean [V]");
        let vo = vs * r2 / rt;
        assert!(
            (mean - vo).abs() < 4.0 * u / (N as f64).sqrt() + 0.02 * u,
            "{case}: {mean}"
        );
        // Every sample lies in the box: the interval within the extremes.
        let (lo, hi) = (
            num(&r.rows, case, "Vo.mag.mc_low95 [V]"),
            num(&r.rows, case, "Vo.mag.mc_high95 [V]"),
        );
        assert!(num(&r.rows, case, "Vo.mag.worst_min [V]") <= lo && hi <= num(&r.rows, case, "Vo.mag.worst_max [V]"));
    }
}

#[test]
fn bad_rows_keep_their_reasons_and_leave_the_spread_empty() {
    let dir = tempfile::tempdir().unwrap();
    let r = run(dir.path(), CASES, &[]);
    assert_eq!(r.code, 1, "bad rows: exit status 1");
    let first = col(&r.rows, "Vo.mag.worst_min [V]");
    let row = |c: &str| r.rows.iter().find(|x| x[0] == c).unwrap().clone();
    let err = |c: &str| {
        let case = r.rows.iter().position(|x| x[0] == c).unwrap().to_string();
        r.errors
            .iter()
            .find(|e| e[0] == case)
            .unwrap_or_else(|| panic!("no error for {c}"))
            .clone()
    };
    // A wrong unit: the case itself is wrong, every result empty.
    let c = row("c");
    assert!(c[4..].iter().all(String::is_empty), "{c:?}");
    let e = err("c");
    assert_eq!((e[2].as_str(), e[3].as_str()), ("R2", "5 V"));
    assert!(e[4].contains("voltage") && e[4].contains("impedance"), "{}", e[4]);
    // Rw = 0.1 Ω with ±0.2 Ω: the band would take it below zero. The
    // case's own values are written (Vo = 10 V·3000/4000.1), its spread
    // left empty, and the reason names the input and its band.
    let d = row("d");
    let vo: f64 = d[col(&r.rows, "Vo.mag [V]")].parse().unwrap();
    assert!((vo - 10.0 * 3000.0 / 4000.1).abs() < 1e-12 * vo);
    assert!(d[first..].iter().all(String::is_empty), "{d:?}");
    let e = err("d");
    assert_eq!((e[2].as_str(), e[3].as_str()), ("Rw", "0.1 Ω"));
    assert!(
        e[4].contains("`Rw` within 0.2 Ω") && e[4].contains("below zero"),
        "{}",
        e[4]
    );
    // Rw = 0 (a short) may only grow.
    let e = err("e");
    assert!(e[4].contains("zero value") && e[4].contains("0 .. +A"), "{}", e[4]);
    assert!(row("e")[first..].iter().all(String::is_empty));
    // The good rows have every spread column.
    for c in ["a", "b", "f"] {
        assert!(row(c)[first..].iter().all(|f| !f.is_empty()), "{c}");
        assert!(!r
            .errors
            .iter()
            .skip(1)
            .any(|e| r.rows[e[0].parse::<usize>().unwrap()][0] == c));
    }
}

#[test]
fn the_spread_is_reproducible_and_the_same_whatever_the_rows_around_it() {
    let dir = tempfile::tempdir().unwrap();
    let one = run(dir.path(), CASES, &["--seed", "9"]);
    let again = run(dir.path(), CASES, &["--seed", "9"]);
    assert_eq!(one.rows, again.rows);
    // Every case draws the same samples: row a alone, or after others,
    // gets the same numbers, to the bit.
    let alone = run(
        dir.path(),
        "case,Vs [V],R2,Rw\nf,12,2 kΩ,1 Ω\na,10,3 kΩ,0.5 Ω\n",
        &["--seed", "9"],
    );
    let pick = |r: &Run| r.rows.iter().find(|x| x[0] == "a").unwrap().clone();
    assert_eq!(pick(&one), pick(&alone));
    // Another seed: other samples, the same worst case.
    let other = run(dir.path(), CASES, &["--seed", "10"]);
    let (a, b) = (pick(&one), pick(&other));
    let k = col(&one.rows, "Vo.mag.worst_min [V]");
    assert_eq!(a[k], b[k]);
    let k = col(&one.rows, "Vo.mag.mc_mean [V]");
    assert_ne!(a[k], b[k]);
}

#[test]
fn spread_options_are_checked() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "div.ohm", SHEET);
    let cases = write(dir.path(), "cases.csv", "Vs [V]\n10\n");
    let out = dir.path().join("o.csv");
    let base = |extra: &[&str]| {
        let mut c = ohmsheet();
        c.args(["batch", sheet.to_str().unwrap(), "--cases", cases.to_str().unwrap()])
            .args(["-o", out.to_str().unwrap()])
            .args(extra);
        c.output().unwrap()
    };
    let err = |o: &std::process::Output| String::from_utf8_lossy(&o.stderr).into_owned();
    // A misspelt cell gets a suggestion.
    let o = base(&["--spread", "Voo"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        err(&o).contains("no cell `Voo`") && err(&o).contains("did you mean `Vo`"),
        "{}",
        err(&o)
    );
    // --samples means nothing without --spread.
    let o = base(&["--samples", "100"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(err(&o).contains("--spread"), "{}", err(&o));
    let o = base(&["--spread", "Vo", "--samples", "0"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(err(&o).contains("--samples 0"), "{}", err(&o));
    assert!(!out.exists());
    // A sheet that states no tolerance has nothing to spread.
    let plain = write(dir.path(), "plain.ohm", "Vs = 10 V\nR = 5 Ω\nI = Vs / R\n");
    let o = ohmsheet()
        .args(["batch", plain.to_str().unwrap(), "--cases", cases.to_str().unwrap()])
        .args(["-o", out.to_str().unwrap(), "--spread", "I"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(err(&o).contains("states no tolerance"), "{}", err(&o));
}
