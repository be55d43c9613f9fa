//! `ohmsheet batch`: a sheet over every row of a cases table. Results must
//! equal `ohmsheet run --set` for the same values, keep the input order,
//! survive bad rows, and never leave a half-written results file.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Arc;

use num_complex::Complex64 as C64;
use ohmsheet::batch::{run_stream, Cases, ComplexForm, Plan, RowError, StreamOptions};

/// The names in the first record of a cases table.
fn header_names<R: std::io::Read>(cases: &mut Cases<R>) -> Vec<String> {
    let h = cases.header().unwrap().expect("a header");
    h.iter().map(|f| String::from_utf8(f.clone()).unwrap()).collect()
}
use predicates::prelude::*;

use crate::assert_close;
use crate::common::{model, ohmsheet};

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

/// Rows of a CSV file as strings, header first.
fn read_csv(p: &Path) -> Vec<Vec<String>> {
    let mut r = csv::ReaderBuilder::new().has_headers(false).from_path(p).unwrap();
    r.records()
        .map(|x| x.unwrap().iter().map(str::to_string).collect())
        .collect()
}

const FEEDER: &str = "\
Vs = 480 V
Zs = (0.02 + j0.1) Ω
Zl = 6 Ω
k = 1
theta = 0°
V = Vs ∠ theta
Zt = Zs -- Zl * k
Zp = Zl || Zs
I = V / Zt
S = V * conj(I)
P = re(S)
Q = im(S)
Sm = abs(S)
pf = P / Sm
";

/// The cases of row `i`, as (CSV field, the `--set` formula it means).
fn case(i: usize) -> [(String, String); 4] {
    let v = 0.4 + 0.013 * i as f64;
    let vs = match i % 3 {
        0 => (format!("{v}"), format!("Vs={v} kV")),
        1 => (format!("{} V", v * 1000.0), format!("Vs={} V", v * 1000.0)),
        _ => (format!("{v} kV"), format!("Vs={v} kV")),
    };
    let r = 1.0 + (i % 17) as f64 * 0.37;
    let zl = match i % 4 {
        0 => format!("{r} Ω"),
        1 => format!("({r} + j{}) Ω", (i % 5) as f64 * 0.8),
        2 => format!("{r} Ω ∠ {}°", (i % 7) as f64 * 5.0 - 10.0),
        _ => format!("4.7 kΩ / {}", 100 + i),
    };
    let th = format!("{}", (i % 13) as f64 * 7.5 - 45.0);
    let k = ["1", "2.5", "0.75", "-1"][i % 4].to_string();
    [
        vs,
        (zl.clone(), format!("Zl={zl}")),
        (th.clone(), format!("theta={th}°")),
        (k.clone(), format!("k={k}")),
    ]
}

#[test]
fn batch_rows_equal_run_with_set() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "feeder.ohm", FEEDER);
    let n = 200; // several blocks of 64, the last one partial
    let mut text = String::from("Vs [kV],Zl,theta [°],k\n");
    for i in 0..n {
        let f: Vec<String> = case(i).iter().map(|(v, _)| format!("\"{v}\"")).collect();
        text.push_str(&f.join(","));
        text.push('\n');
    }
    let cases = write(dir.path(), "cases.csv", &text);
    let out = dir.path().join("results.csv");
    ohmsheet()
        .args(["batch", s(&sheet), "--cases", s(&cases), "--out", s(&out), "--quiet"])
        .assert()
        .code(0);
    let rows = read_csv(&out);
    assert_eq!(rows.len(), n + 1);
    let header = &rows[0];
    // Real by construction: one column each; complex: two.
    for h in ["P [W]", "Q [var]", "Sm [VA]", "pf", "I.re [A]", "I.im [A]", "Zp.re [Ω]"] {
        assert!(header.contains(&h.to_string()), "{h} in {header:?}");
    }
    for i in [0, 1, 2, 3, 63, 64, 65, 127, 128, 150, 199] {
        // `run --format csv` writes values so they read back to the bit.
        let mut cmd = ohmsheet();
        cmd.args(["run", s(&sheet), "--format", "csv"]);
        for (_, set) in case(i) {
            cmd.args(["--set", &set]);
        }
        let text = cmd.assert().code(0).get_output().stdout.clone();
        let single = write(dir.path(), "single.csv", std::str::from_utf8(&text).unwrap());
        let cells = read_csv(&single);
        assert_eq!(cells[0][..5], ["name", "formula", "unit", "re", "im"]);
        let row = &rows[i + 1];
        for cell in &cells[1..] {
            let name = cell[0].as_str();
            let unit = cell[2].as_str();
            let re: f64 = cell[3].parse().unwrap();
            let im: f64 = cell[4].parse().unwrap();
            let col = |suffix: &str| {
                let h = if unit.is_empty() {
                    format!("{name}{suffix}")
                } else {
                    format!("{name}{suffix} [{unit}]")
                };
                header.iter().position(|x| *x == h)
            };
            let got = |k: usize| row[k].parse::<f64>().unwrap().to_bits();
            if let (Some(a), Some(b)) = (col(".re"), col(".im")) {
                assert_eq!((got(a), got(b)), (re.to_bits(), im.to_bits()), "row {i}, {name}");
            } else if let Some(a) = col("") {
                assert_eq!(got(a), re.to_bits(), "row {i}, {name}");
                assert_eq!(im, 0.0, "row {i}: {name} is real");
            } else {
                assert!(["Vs", "Zs", "Zl", "k", "theta"].contains(&name), "{name} is not shown");
            }
        }
    }
}

#[test]
fn polar_columns_and_units_in_headers() {
    // 480 V across (6 + j8) Ω: |I| = 480/10 = 48 A at -atan(8/6) =
    // -53.13010235415598° (the 3-4-5 triangle; arithmetic, from memory).
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "s.ohm", "V = 480 V\nZ = 6 Ω\nI = V / Z [kA]\n");
    let cases = write(dir.path(), "c.csv", "Z [Ω],V\n6+j8,480 V\n6,0.48 kV\n");
    let out = dir.path().join("r.csv");
    ohmsheet()
        .args([
            "batch",
            s(&sheet),
            "--cases",
            s(&cases),
            "--out",
            s(&out),
            "--complex",
            "polar",
        ])
        .assert()
        .code(0);
    let rows = read_csv(&out);
    assert_eq!(rows[0], ["Z [Ω]", "V", "I.mag [kA]", "I.ang [°]"]);
    assert_eq!(rows[1][..2], ["6+j8", "480 V"]);
    let mag: f64 = rows[1][2].parse().unwrap();
    let ang: f64 = rows[1][3].parse().unwrap();
    assert_close!(C64::new(mag, 0.0), C64::new(0.048, 0.0), 1e-12);
    assert_close!(C64::new(ang, 0.0), C64::new(-53.13010235415598, 0.0), 1e-12);
    // 0.48 kV / 6 Ω = 80 A, in phase.
    assert_close!(C64::new(rows[2][2].parse().unwrap(), 0.0), C64::new(0.08, 0.0), 1e-12);
}

#[test]
fn bad_rows_are_reported_and_the_rest_computed() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "s.ohm", "V = 120 V\nR = 10 Ω\nI = V / R\nG = 1 / I\n");
    let cases = write(
        dir.path(),
        "c.csv",
        "V,R [Ω]\n120 V,10\n12O V,10\n120 A,10\n120 V\n0 V,0\n240 V,20\n",
    );
    let out = dir.path().join("r.csv");
    ohmsheet()
        .args(["batch", s(&sheet), "--cases", s(&cases), "--out", s(&out)])
        .assert()
        .code(1)
        .stderr(predicate::str::contains("c.csv:3: case 2: column `V`"))
        .stderr(predicate::str::contains(
            "c.csv:4: case 3: column `V`: `120 A` is a current (A), but `V` is a voltage (V)",
        ))
        .stderr(predicate::str::contains("4 bad rows"));
    let rows = read_csv(&out);
    assert_eq!(rows.len(), 7, "one output row per case");
    assert_eq!(rows[1][2], "12"); // 120 V / 10 Ω (Ohm's law)
    assert_eq!(rows[2][2], "", "a bad row's results are left empty");
    assert_eq!(rows[6][2], "12"); // 240 V / 20 Ω
    let errs = read_csv(&dir.path().join("r.errors.csv"));
    assert_eq!(errs[0], ["case", "line", "column", "value", "reason"]);
    let cols: Vec<(&str, &str, &str)> = errs[1..]
        .iter()
        .map(|r| (r[0].as_str(), r[2].as_str(), r[3].as_str()))
        .collect();
    assert_eq!(
        cols,
        [
            ("2", "V", "12O V"),
            ("3", "V", "120 A"),
            ("4", "", ""),
            ("5", "I", ""),
            ("5", "G", "")
        ]
    );
    assert!(errs[4][4].contains("NaN"), "{:?}", errs[4]);
    // G = 1 / I is NaN because I is: the reason names where it started.
    assert!(errs[5][4].contains("because it uses `I`"), "{:?}", errs[5]);
}

#[test]
fn strict_stops_at_the_first_bad_row_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "s.ohm", "V = 120 V\nR = 10 Ω\nI = V / R\n");
    let cases = write(dir.path(), "c.csv", "V,R [Ω]\n120 V,10\n120,10\n120 V,5\n");
    let out = dir.path().join("r.csv");
    ohmsheet()
        .args(["batch", s(&sheet), "--cases", s(&cases), "--out", s(&out), "--strict"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("case 2"))
        .stderr(predicate::str::contains("no results were written"));
    assert!(!out.exists());
    assert!(!dir.path().join("r.errors.csv").exists());
    assert_eq!(
        std::fs::read_dir(dir.path()).unwrap().count(),
        2,
        "no temporary files left"
    );
}

#[test]
fn a_column_naming_no_input_is_an_error_listing_the_inputs() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "s.ohm", "V = 120 V\nR = 10 Ω\nI = V / R\n");
    let out = dir.path().join("r.csv");
    let cases = write(dir.path(), "c.csv", "V,Rx\n1 V,2 Ω\n");
    ohmsheet()
        .args(["batch", s(&sheet), "--cases", s(&cases), "--out", s(&out)])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("error[bad-cases]"))
        .stderr(predicate::str::contains("column `Rx` names no input"))
        .stderr(predicate::str::contains("the sheet's inputs are: V, R"));
    let cases = write(dir.path(), "c.csv", "I\n1 A\n");
    ohmsheet()
        .args(["batch", s(&sheet), "--cases", s(&cases), "--out", s(&out)])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("names a computed cell"));
    let cases = write(dir.path(), "c.csv", "V [A]\n1\n");
    ohmsheet()
        .args(["batch", s(&sheet), "--cases", s(&cases), "--out", s(&out)])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("is a current (A), but `V` is a voltage"));
    assert!(!out.exists());
    // The output may not overwrite the cases.
    let cases = write(dir.path(), "c.csv", "V\n1 V\n");
    ohmsheet()
        .args(["batch", s(&sheet), "--cases", s(&cases), "--out", s(&cases)])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("would be overwritten"));
    assert_eq!(std::fs::read_to_string(&cases).unwrap(), "V\n1 V\n");
}

#[test]
fn input_order_is_kept_through_the_command() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "s.ohm", "n = 0\ny = 3 * n + 1\n");
    let mut text = String::from("n\n");
    for i in 0..5000 {
        text.push_str(&format!("{i}\n"));
    }
    let cases = write(dir.path(), "c.csv", &text);
    let out = dir.path().join("r.csv");
    ohmsheet()
        .args(["batch", s(&sheet), "--cases", s(&cases), "--out", s(&out), "-q"])
        .assert()
        .code(0);
    let rows = read_csv(&out);
    assert_eq!(rows.len(), 5001);
    for (i, r) in rows[1..].iter().enumerate() {
        assert_eq!(r[0], i.to_string());
        assert_eq!(r[1].parse::<f64>().unwrap(), (3 * i + 1) as f64);
    }
}

/// A cases table made up on the fly, counting the rows handed out.
struct Generated {
    next: u64,
    total: u64,
    buf: Vec<u8>,
    pos: usize,
    produced: Arc<AtomicU64>,
}

impl std::io::Read for Generated {
    fn read(&mut self, out: &mut [u8]) -> std::io::Result<usize> {
        if self.pos == self.buf.len() {
            self.buf.clear();
            self.pos = 0;
            if self.next == 0 {
                self.buf.extend_from_slice(b"n\n");
            }
            if self.next == self.total {
                return Ok(0);
            }
            self.buf.extend_from_slice(format!("{}\n", self.next).as_bytes());
            self.next += 1;
            self.produced.store(self.next, Ordering::SeqCst);
        }
        let k = out.len().min(self.buf.len() - self.pos);
        out[..k].copy_from_slice(&self.buf[self.pos..self.pos + k]);
        self.pos += k;
        Ok(k)
    }
}

/// Counts result rows, and checks every line arrives in order.
struct Counting {
    rows: u64,
    produced: Arc<AtomicU64>,
    max_gap: u64,
    line: Vec<u8>,
}

impl Write for Counting {
    fn write(&mut self, b: &[u8]) -> std::io::Result<usize> {
        for &c in b {
            if c == b'\n' {
                let text = String::from_utf8(std::mem::take(&mut self.line)).unwrap();
                let n: u64 = text.split(',').next().unwrap().parse().unwrap();
                assert_eq!(n, self.rows, "rows come out in input order");
                self.rows += 1;
            } else {
                self.line.push(c);
            }
        }
        let gap = self.produced.load(Ordering::SeqCst) - self.rows;
        self.max_gap = self.max_gap.max(gap);
        Ok(b.len())
    }
    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

#[test]
fn streaming_keeps_order_and_bounded_rows_in_flight() {
    let m = Arc::new(model("n = 0\ny = 3 * n + 1\nz = y / (n - 7)\n"));
    let total = 60_000u64;
    let produced = Arc::new(AtomicU64::new(0));
    let gen = Generated {
        next: 0,
        total,
        buf: Vec::new(),
        pos: 0,
        produced: produced.clone(),
    };
    let mut reader = Cases::with_buffer(gen, 4096);
    let headers = header_names(&mut reader);
    let plan = Arc::new(Plan::new(m, &headers, None, ComplexForm::Rect).unwrap());
    let opts = StreamOptions {
        strict: false,
        chunk_rows: 100, // not a multiple of the block size
        in_flight: 6,
    };
    let mut sink = Counting {
        rows: 0,
        produced,
        max_gap: 0,
        line: Vec::new(),
    };
    let mut errors: Vec<RowError> = Vec::new();
    let summary = run_stream(
        plan,
        reader,
        &mut sink,
        &mut |e| {
            errors.extend_from_slice(e);
            Ok(())
        },
        &mut |_, _| {},
        opts,
    )
    .unwrap();
    assert_eq!(summary.cases, total);
    assert_eq!(sink.rows, total);
    // n = 7 divides by zero: 22/0 is an infinite plain number, which has no
    // physical reading (docs/grammar.md, "Infinite values"): that row's `z`
    // is not computed, and it is the only error.
    assert_eq!(errors.len(), 1, "{errors:?}");
    // Rows read but not yet written never exceed the chunks in flight plus
    // the reader's buffer (4096 bytes, at least 2 bytes a row): memory does
    // not grow with the length of the table.
    let bound = (opts.in_flight as u64 + 1) * opts.chunk_rows as u64 + 2048;
    assert!(sink.max_gap <= bound, "{} rows in flight, bound {bound}", sink.max_gap);
}

#[cfg(unix)]
#[test]
fn an_interrupted_run_leaves_no_results_file() {
    use std::process::{Command, Stdio};
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "s.ohm", "n = 0\ny = 3 * n + 1\n");
    let fifo = dir.path().join("cases.csv");
    assert!(Command::new("mkfifo").arg(&fifo).status().unwrap().success());
    let out = dir.path().join("r.csv");
    let mut child = Command::new(assert_cmd::cargo::cargo_bin("ohmsheet"))
        .args(["batch", s(&sheet), "--cases", s(&fifo), "--out", s(&out), "-q"])
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // Opening the pipe waits for the run to open it; then half a table.
    let mut w = std::fs::OpenOptions::new().write(true).open(&fifo).unwrap();
    w.write_all(b"n\n").unwrap();
    for i in 0..20_000 {
        writeln!(w, "{i}").unwrap();
    }
    w.flush().unwrap();
    let partial = || {
        std::fs::read_dir(dir.path())
            .unwrap()
            .filter(|e| e.as_ref().unwrap().file_name().to_string_lossy().ends_with(".partial"))
            .count()
    };
    let t0 = std::time::Instant::now();
    while partial() < 2 && t0.elapsed().as_secs() < 30 {
        std::thread::sleep(std::time::Duration::from_millis(20));
    }
    assert_eq!(partial(), 2, "results and errors are being written to temporary files");
    std::thread::sleep(std::time::Duration::from_millis(200));
    assert!(Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap()
        .success());
    let status = child.wait().unwrap();
    drop(w);
    assert_eq!(status.code(), Some(130));
    assert!(!out.exists(), "no results file");
    assert!(!dir.path().join("r.errors.csv").exists());
    assert_eq!(partial(), 0, "temporary files removed");
}

/// Chunks written at their places by the workers (what the command does)
/// make the same file, byte for byte, as chunks written in order, with
/// small chunks, bad rows and more chunks in flight than threads; and a
/// header written before stays in front.
#[cfg(unix)]
#[test]
fn chunks_written_at_their_places_equal_the_stream_in_order() {
    use ohmsheet::batch::run_stream_at;
    let dir = tempfile::tempdir().unwrap();
    let mut table = String::from("Vs [kV],Zl,theta [°],k\n");
    for i in 0..5_000 {
        let [vs, zl, th, k] = case(i);
        // every 97th row is bad: a value that does not read
        let vs = if i % 97 == 5 { "4.8 kV kV".to_string() } else { vs.0 };
        table.push_str(&format!("{vs},\"{}\",{},{}\n", zl.0, th.0, k.0));
    }
    let m = Arc::new(model(FEEDER));
    let run = |placed: bool| -> (Vec<u8>, Vec<RowError>) {
        let mut reader = Cases::new(std::io::Cursor::new(table.clone().into_bytes()));
        let headers = header_names(&mut reader);
        let plan = Arc::new(Plan::new(m.clone(), &headers, None, ComplexForm::Polar).unwrap());
        let opts = StreamOptions {
            strict: false,
            chunk_rows: 37,
            in_flight: 9,
        };
        let mut errors = Vec::new();
        let mut on_errors = |e: &[RowError]| {
            errors.extend_from_slice(e);
            Ok(())
        };
        let header = b"a header line\n";
        let out = if placed {
            let path = dir.path().join("placed.csv");
            let mut f = std::fs::File::create(&path).unwrap();
            f.write_all(header).unwrap();
            let s = run_stream_at(
                plan,
                reader,
                f,
                header.len() as u64,
                &mut on_errors,
                &mut |_, _| {},
                opts,
            );
            assert_eq!(s.unwrap().cases, 5_000);
            std::fs::read(&path).unwrap()
        } else {
            let mut out = header.to_vec();
            let s = run_stream(plan, reader, &mut out, &mut on_errors, &mut |_, _| {}, opts);
            assert_eq!(s.unwrap().cases, 5_000);
            out
        };
        (out, errors)
    };
    let (a, ea) = run(false);
    let (b, eb) = run(true);
    assert_eq!(ea.len(), 5_000 / 97 + 1, "bad rows: {}", ea.len());
    assert_eq!(ea, eb);
    assert_eq!(a.iter().filter(|&&c| c == b'\n').count(), 5_001);
    assert!(a == b, "files differ");
}

/// A value that is not a double in SI units is a bad row, as the same
/// number is an error in a sheet: too large once the unit is applied,
/// or a non-zero number too small to be anything but 0 (the limits of an
/// IEEE 754 double: about 1.8e308 and 4.9e-324). An exact zero is fine.
#[test]
fn values_beyond_a_double_are_bad_rows_not_infinity_or_zero() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "s.ohm", "V = 120 V\nR = 10 Ω\nI = V / R\n");
    let cases = write(
        dir.path(),
        "c.csv",
        "V [kV],R\n1e306,10 Ω\n0.12,1e-400 Ω\n1e-400,10 Ω\n0.0e-400,10 Ω\n0.12,1e400 Ω\n0.12,10 Ω\n",
    );
    let out = dir.path().join("r.csv");
    ohmsheet()
        .args(["batch", s(&sheet), "--cases", s(&cases), "--out", s(&out), "-q"])
        .assert()
        .code(1);
    let rows = read_csv(&out);
    assert_eq!(rows.len(), 7);
    assert_eq!(rows[4][2], "0", "0 V / 10 Ω: an exact zero is a value");
    assert_eq!(rows[6][2], "12", "120 V / 10 Ω");
    let errs = read_csv(&dir.path().join("r.errors.csv"));
    let got: Vec<(&str, &str)> = errs[1..].iter().map(|r| (r[0].as_str(), r[2].as_str())).collect();
    assert_eq!(got, [("1", "V [kV]"), ("2", "R"), ("3", "V [kV]"), ("5", "R")]);
    assert!(errs[1][4].contains("beyond the range of a double"), "{:?}", errs[1]);
    assert!(errs[3][4].contains("below the smallest double"), "{:?}", errs[3]);
    for e in &errs[1..] {
        assert!(!e[4].is_empty(), "{e:?}");
    }
}

/// The errors file gives the line a bad row is on as an editor shows the
/// cases file: blank lines counted, `\r\n` one line end, a quoted field
/// with a line end inside taking two lines. (Read through the csv
/// crate's positions, a `\r\n` file put every row one line too early.)
#[test]
fn bad_rows_give_the_line_they_are_on() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "s.ohm", "V = 120 V\nR = 10 Ω\nI = V / R\n");
    let out = dir.path().join("r.csv");
    for (name, text, lines) in [
        (
            "crlf.csv",
            "V [V],R\r\n120,10 Ω\r\n12O,10 Ω\r\n\r\n120,1O Ω\r\n",
            &["3", "5"][..],
        ),
        ("lf.csv", "V [V],R\n\n12O,10 Ω\n120,10 Ω\n\n\n120,1O Ω", &["3", "7"]),
        // both fields of the quoted row are bad
        ("quoted.csv", "V [V],R\n\"12O\",\"10\nΩ\"\n120,1O Ω\n", &["2", "2", "4"]),
    ] {
        let cases = write(dir.path(), name, text);
        ohmsheet()
            .args(["batch", s(&sheet), "--cases", s(&cases), "--out", s(&out), "-q"])
            .assert()
            .code(1);
        let errs = read_csv(&dir.path().join("r.errors.csv"));
        let got: Vec<&str> = errs[1..].iter().map(|r| r[1].as_str()).collect();
        assert_eq!(got, lines, "{name}: {errs:?}");
    }
}

/// A row of many shown values (the numbers of a row are converted in
/// groups of shown values before they are copied out), constants among
/// them, real and complex, in both forms: every column holds its own
/// value, in order. The values are exact in binary (multiples of 1/4 and
/// small integers), so their text is known without running the sheet.
#[test]
fn many_shown_values_each_land_in_their_own_column() {
    let dir = tempfile::tempdir().unwrap();
    // c5, c15, …: constants (written once, copied into every row);
    // c3, c6, …: real by construction (one column); the rest complex.
    let kind = |i: usize| {
        if i % 10 == 5 {
            'k'
        } else if i.is_multiple_of(3) {
            'r'
        } else {
            'c'
        }
    };
    let mut sheet = String::from("x = 1\nk = 7\n");
    for i in 1..=75 {
        sheet.push_str(&match kind(i) {
            'k' => format!("c{i} = k * {i}\n"),
            'r' => format!("c{i} = re(x) * {i}\n"),
            _ => format!("c{i} = x * {i} + j*{i}\n"),
        });
    }
    let sheet = write(dir.path(), "s.ohm", &sheet);
    let cases = write(dir.path(), "c.csv", "x\n0.25\n-3\n1e3\n");
    let out = dir.path().join("r.csv");
    for form in ["rect", "polar"] {
        ohmsheet()
            .args(["batch", s(&sheet), "--cases", s(&cases), "--out", s(&out), "-q"])
            .args(["--complex", form])
            .assert()
            .success();
        let rows = read_csv(&out);
        assert_eq!(rows.len(), 4);
        for (row, x) in rows[1..].iter().zip([0.25f64, -3.0, 1e3]) {
            let num = |k: usize| -> f64 { row[k].parse().unwrap() };
            assert_eq!(num(0), x);
            let mut col = 1;
            for i in 1..=75 {
                let re = x * i as f64;
                match kind(i) {
                    'k' => {
                        assert_eq!(num(col), 7.0 * i as f64, "c{i} ({form}), column {col}");
                        col += 1;
                    }
                    'r' => {
                        assert_eq!(num(col), re, "c{i} ({form}), column {col}");
                        col += 1;
                    }
                    _ if form == "rect" => {
                        assert_eq!((num(col), num(col + 1)), (re, i as f64), "c{i}, column {col}");
                        col += 2;
                    }
                    _ => {
                        // |re + j·i| and its angle in degrees, to rounding.
                        let (m, a) = (re.hypot(i as f64), (i as f64).atan2(re).to_degrees());
                        assert!((num(col) - m).abs() <= 1e-12 * m, "c{i} magnitude, column {col}");
                        assert!((num(col + 1) - a).abs() <= 1e-12 * a.abs(), "c{i} angle");
                        col += 2;
                    }
                }
            }
            assert_eq!(row.len(), col, "no column left over");
        }
    }
}
