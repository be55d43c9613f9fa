//! Misreadings: display (see mod.rs). Each a wrong impression given by how
//! a right number was shown.

use crate::common::*;
use ohmsheet::output::{cell_rows, CellRow};
use ohmsheet::units::format::Style;

fn rows(src: &str) -> Vec<CellRow> {
    cell_rows(&engine(src), Style::default())
}

fn row(src: &str, name: &str) -> CellRow {
    rows(src)
        .into_iter()
        .find(|r| r.name == name)
        .unwrap_or_else(|| panic!("no row {name}"))
}

// ------------------------------------------------------------------ units

// The square of an impedance is in Ω² (SI Brochure, 9th ed., §5.4.3: a
// power of a unit is written with a superscript), never in base units.
#[test]
fn square_of_an_impedance_is_in_ohm_squared() {
    let r = row("R = 3 Ω\nx = R^2\n", "x");
    assert_eq!(r.display, "9 Ω²");
    assert_eq!(r.unit, "Ω²");
    let r = row("x = (3 kΩ)^2\n", "x");
    // 9e6 Ω² is 9 (kΩ)², written kΩ² (SI Brochure §3).
    assert_eq!(r.display, "9 kΩ²");
}

// Reactive power over a time is reactive energy, metered in var·h and kvarh
// (IEC 60050-601; 1 h = 3600 s, SI Brochure Table 8).
#[test]
fn reactive_power_times_hours_is_var_hours() {
    let r = row("x = 300 var * 2 h\n", "x");
    assert_eq!(r.display, "600 var·h");
    assert!((r.re - 300.0 * 7200.0).abs() < 1e-6, "{}", r.re);
    assert_eq!(r.unit, "var·s");
    let r = row("Q = 600 kvar\nx = Q * 2 h\n", "x");
    assert_eq!(r.display, "1.2 Mvarh");
    let r = row("P = 800 kW\nx = P * 30 min\n", "x");
    assert_eq!(r.display, "400 kWh");
    // Shown in a unit the sheet asks for.
    let r = row("x = 300 var * 2 h [kvarh]\n", "x");
    assert_eq!(r.display, "0.6 kvarh");
    // An energy per hour is a power again, of the same kind.
    let r = row("E = 1.2 kvarh\nx = E / 2 h\n", "x");
    assert_eq!(r.display, "600 var");
}

// `1/s` is a display unit (SI Brochure §5.4.3 writes s⁻¹ or 1/s).
#[test]
fn per_second_is_a_display_unit() {
    let r = row("w = 1 / (2 s) [1/s]\n", "w");
    assert_eq!(r.display, "0.5 1/s");
    let r = row("w = 1 / (2 ms) [1/s]\n", "w");
    assert_eq!(r.display, "500 1/s");
}

// No base-unit string where named units can say it: a current density,
// a rate of rise, a resistivity (SI Brochure Table 4 names; §5.4.3 forms).
#[test]
fn no_base_unit_strings_where_named_units_fit() {
    let src = "I = 30 A\nA = 10 mm^2\nJ = I / A\nt = 2 ms\nr = I / t\nrho = 5 Ω * 1 mm^2 / 100 metre\nV2 = (230 V)^2\nP = 50 kW\nP2 = P^2\n";
    let rs = rows(src);
    for r in &rs {
        assert!(
            !r.display.contains("kg") && !r.unit.contains("kg"),
            "{}: {}",
            r.name,
            r.display
        );
    }
    let get = |n: &str| rs.iter().find(|r| r.name == n).unwrap().display.clone();
    assert_eq!(get("J"), "3 MA/m²");
    assert_eq!(get("r"), "15 kA/s");
    assert_eq!(get("rho"), "50 nΩ·m");
    // A prefix on a squared unit squares too: 230 V squared is 52 900 V²,
    // and 50 kW squared is 2500 (kW)², written kW² (SI Brochure §3).
    assert_eq!(get("V2"), "52900 V²");
    assert_eq!(get("P2"), "2500 kW²");
}

// ------------------------------------------------- real values, CSV numbers

// A real value has no polar form of its own: `3 Ω`, not `3 ∠ 0° Ω`
// (common practice: a magnitude and angle are given for a phasor). A
// phasor keeps both forms.
#[test]
fn real_values_are_not_shown_at_zero_degrees() {
    let src = "R = 3 Ω\nV = -5 V\nZ = 3 Ω + j4 Ω\nI = 10 A ∠ 90°\n";
    let rs = rows(src);
    let get = |n: &str| rs.iter().find(|r| r.name == n).unwrap().clone();
    assert_eq!(get("R").polar, "3 Ω");
    assert_eq!(get("V").polar, "-5 V");
    assert_eq!(get("Z").polar, "5 ∠ 53.13° Ω");
    // cos 90° is not exactly 0: the real part is rounding noise, and
    // j10 A is not a real value.
    assert_eq!(get("I").polar, "10 ∠ 90° A");
    // The same through the JSON of `run` and its table.
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(&sheet, src).unwrap();
    let out = ohmsheet()
        .args(["run", "--format", "json"])
        .arg(&sheet)
        .output()
        .unwrap();
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    for c in doc["cells"].as_array().unwrap() {
        let polar = c["polar"].as_str().unwrap();
        assert!(!polar.contains("∠ 0°") && !polar.contains("∠ 180°"), "{polar}");
    }
    let out = ohmsheet().arg("run").arg(&sheet).output().unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(!text.contains("∠ 0°") && !text.contains("∠ 180°"), "{text}");
    assert!(text.contains("5 ∠ 53.13° Ω"), "{text}");
}

// A sweep's table shows a negative real value once, as `run` does: found
// by the issue-13 audit, where `sweep --show` printed `-6 Ω = -6 Ω` and a
// leading power factor `-0.4961 = -0.4961` (the polar form of a real
// value says nothing new: common practice).
#[test]
fn sweep_table_shows_negative_real_values_once() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(&sheet, "x = -3\ny = x * 2 Ω\nz = -4 V\nw = (2 Ω ∠ 90°) * x\n").unwrap();
    for form in [None, Some("polar"), Some("both"), Some("rect")] {
        let mut cmd = ohmsheet();
        cmd.args(["sweep", "--vary", "x=-3..3", "--points", "3", "--show", "y,z,w"]);
        if let Some(f) = form {
            cmd.args(["--complex", f]);
        }
        let out = cmd.arg(&sheet).output().unwrap();
        let text = String::from_utf8(out.stdout).unwrap();
        assert!(!text.contains("-6 Ω = "), "{form:?}: {text}");
        assert!(!text.contains("-4 V = "), "{form:?}: {text}");
        assert!(text.contains("-6 Ω") && text.contains("-4 V"), "{form:?}: {text}");
        // the phasor 2 Ω ∠ 90° · (−3) = −j6 Ω keeps its polar form where asked
        if form != Some("rect") {
            assert!(text.contains("6 ∠ -90° Ω"), "{form:?}: {text}");
        }
    }
}

// An angle with an imaginary part (the principal acos of 1.5 is
// −j0.9624 rad = −j55.14°: DLMF §4.23, cmath.acos(1.5)) is shown once, in
// rectangular form, never as `55.14 ∠ -90° °` (found by the issue-13
// audit).
#[test]
fn a_complex_angle_has_no_polar_form() {
    let r = row("a = acos(1.5)\n", "a");
    assert_eq!(r.display, "-j55.14°");
    assert_eq!(r.polar, r.display);
    let r = row("b = asin(-4)\n", "b");
    // cmath.asin(-4) = −π/2 + j2.0634 rad = −90° + j118.2°
    assert_eq!(r.display, "-90 + j118.2 °");
    assert_eq!(r.polar, r.display);
}

// `/show polar` in a session shows a real value once, a phasor in polar.
#[test]
fn session_polar_view_shows_real_values_once() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(&sheet, "R = 3 Ω\nZ = R + j4 Ω\n").unwrap();
    let (mut s, _) =
        ohmsheet::session::state::Session::open(Some(&sheet), Some(dir.path().join("data")), false).unwrap();
    assert!(!s.handle("/show polar").refused);
    let r = s.handle("R").text;
    assert!(r.contains("3 Ω") && !r.contains('∠'), "{r}");
    let z = s.handle("Z").text;
    assert!(z.contains("5 ∠ 53.13° Ω"), "{z}");
}

// Numbers in CSV are plain decimals, as spreadsheets and people write
// them (`60`, `0`, not `6e1`, `0e0`), in exponent form only below 1e-5
// or from 1e16 (common practice); each reads back to the same double.
#[test]
fn csv_numbers_are_plain_decimals() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(&sheet, "f = 60 Hz\nC = 0.5 µF\nz = 0\nV = 480 V\n").unwrap();
    let out = ohmsheet()
        .args(["run", "--format", "csv"])
        .arg(&sheet)
        .output()
        .unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("\nf,60 Hz,Hz,60,0,"), "{text}");
    assert!(text.contains("\nC,0.5 µF,F,5e-7,0,"), "{text}");
    assert!(text.contains("\nz,0,,0,0,"), "{text}");
    assert!(
        !text.contains("e0") && !text.contains("e1,") && !text.contains("e2,"),
        "{text}"
    );
    // A sweep's CSV too.
    let out = ohmsheet()
        .args([
            "sweep",
            "--vary",
            "f=50Hz..60Hz",
            "--points",
            "3",
            "--show",
            "V",
            "--csv",
            "-",
        ])
        .arg(&sheet)
        .output()
        .unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    // V is a constant of the sheet, real: one column.
    assert_eq!(lines[1..], ["50,480", "55,480", "60,480"], "{text}");
}

// ------------------------------------------- real by construction: one column

const FEEDER: &str = "P = 800 kW\nQ = 600 kvar\nS = P + j*Q\npf1 = P / abs(S)\nk = pf(S)\nparts = s_parts(S)\nQc = q_pfc(P, 0.8, 0.95)\nloss = 3 %\npl = loss * 2\nV = 400 V\nI = conj(S / V)\n";

// A power factor, the parts of a power and a kvar rating are real whatever
// the case (docs/batch.md): one column each, decided from the function's
// declaration and the sheet's formulas, not from one run's values. The
// numbers: pf = P/|S| = 500/√(500² + 600²) (IEEE Std 1459 definition);
// Qc = P(tan φ1 − tan φ2) with tan φ = √(1 − pf²)/pf (common practice).
#[test]
fn batch_gives_real_values_one_column() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(&sheet, FEEDER).unwrap();
    let cases = dir.path().join("cases.csv");
    std::fs::write(&cases, "P\n500 kW\n").unwrap();
    let out = dir.path().join("out.csv");
    ohmsheet()
        .arg("batch")
        .arg(&sheet)
        .arg("--cases")
        .arg(&cases)
        .arg("--out")
        .arg(&out)
        .args(["--complex", "rect"])
        .assert()
        .success();
    let text = std::fs::read_to_string(&out).unwrap();
    let mut lines = text.lines();
    let head: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(
        head,
        [
            "P",
            "S.re [VA]",
            "S.im [VA]",
            "pf1",
            "k",
            "parts.P [W]",
            "parts.Q [var]",
            "parts.S [VA]",
            "parts.pf",
            "parts.lag",
            "Qc [var]",
            "pl [%]",
            "I.re [A]",
            "I.im [A]"
        ]
    );
    let row: Vec<f64> = lines
        .next()
        .unwrap()
        .split(',')
        .skip(1)
        .map(|x| x.parse().unwrap())
        .collect();
    let pf = 500.0 / (500.0f64.powi(2) + 600.0f64.powi(2)).sqrt();
    let tan = |pf: f64| (1.0 - pf * pf).sqrt() / pf;
    for (got, want) in [
        (row[2], pf),
        (row[3], pf),
        (row[4], 500e3),
        (row[5], 600e3),
        (row[7], pf),
        (row[8], 1.0),
        (row[9], 500e3 * (tan(0.8) - tan(0.95))),
        (row[10], 6.0),
    ] {
        assert!((got - want).abs() <= 1e-12 * want.abs(), "{got} vs {want}");
    }
    // A complex value for a W input is refused with its row, never written
    // as its real part alone.
    std::fs::write(&cases, "P\n(500+j300) kVA\n").unwrap();
    let o = ohmsheet()
        .arg("batch")
        .arg(&sheet)
        .arg("--cases")
        .arg(&cases)
        .arg("--out")
        .arg(&out)
        .output()
        .unwrap();
    let err = String::from_utf8(o.stderr).unwrap();
    assert!(
        err.contains("`P` is a real power") || err.contains("imaginary part where none was expected"),
        "{err}"
    );
    let text = std::fs::read_to_string(&out).unwrap();
    assert!(
        text.lines().nth(1).unwrap().split(',').skip(1).all(str::is_empty),
        "{text}"
    );
}

#[test]
fn sweep_gives_real_values_one_column() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(&sheet, FEEDER).unwrap();
    let o = ohmsheet()
        .args([
            "sweep",
            "--vary",
            "P=500kW..900kW",
            "--points",
            "2",
            "--show",
            "k,parts.Q,Qc,pl,I",
            "--complex",
            "polar",
            "--csv",
            "-",
        ])
        .arg(&sheet)
        .output()
        .unwrap();
    let text = String::from_utf8(o.stdout).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines[0], "P [kW],k,parts.Q [var],Qc [var],pl [%],I.mag [A],I.ang [deg]");
    let row: Vec<f64> = lines[2].split(',').map(|x| x.parse().unwrap()).collect();
    let pf = 900.0 / (900.0f64.powi(2) + 600.0f64.powi(2)).sqrt();
    assert!((row[1] - pf).abs() < 1e-12);
    assert_eq!(row[2], 600e3);
    assert_eq!(row[4], 6.0);
    // I = (S/V)*: |S|/400 V at −atan(600/900)
    let s = (900e3f64.powi(2) + 600e3f64.powi(2)).sqrt();
    assert!((row[5] - s / 400.0).abs() < 1e-9);
    assert!((row[6] + (600.0f64 / 900.0).atan().to_degrees()).abs() < 1e-12);
}

// A function declared real returns no imaginary part for any argument, so
// the declaration cannot hide one: complex, negative, zero and infinite
// arguments (NaN is allowed: it fails a batch row on its own).
#[test]
fn functions_declared_real_return_real_values() {
    use ohmsheet::funcs::{library, Ctx, Impl};
    let probes = [
        num_complex::Complex64::new(3.0, 4.0),
        num_complex::Complex64::new(-2.0, 0.5),
        num_complex::Complex64::new(0.0, -7.0),
        num_complex::Complex64::new(0.0, 0.0),
        num_complex::Complex64::new(f64::INFINITY, 1.0),
        num_complex::Complex64::new(0.3, 0.0),
    ];
    let mut declared = Vec::new();
    for f in library().iter().filter(|f| f.real_result) {
        declared.push(f.name);
        let Impl::Scalar(eval) = f.imp else { continue };
        let n: usize = (0..f.params.len()).map(|k| f.arg_width(k)).sum();
        for (i, _) in probes.iter().enumerate() {
            let args: Vec<_> = (0..n).map(|k| probes[(i + k) % probes.len()]).collect();
            let mut out = [num_complex::Complex64::new(0.0, 0.0); ohmsheet::funcs::MAX_CALL_ARGS];
            eval(&args, &mut out, &Ctx { peak: false });
            for z in out {
                assert!(z.im == 0.0 || z.im.is_nan(), "{}({args:?}) gave {z}", f.name);
            }
        }
    }
    for name in ["pf", "s_parts", "q_pfc"] {
        assert!(declared.contains(&name), "{name} is not declared real");
    }
}

// ------------------------------------------------------------------ checks

// A check's difference and allowance are in one unit, and the same one on
// the command line, in the report and in the session (common practice: a
// tolerance is read against the difference digit for digit). 800 kW
// against 800.5 kW is 0.5 kW off; 1 kW is allowed.
#[test]
fn check_difference_and_allowance_share_a_unit_everywhere() {
    let src = "P = 800 kW\nx = 0.19 %\ncheck P ~= 800.5 kW +- 1 kW\ncheck x * 1 ~= 0.2 % +- 0.0005\n";
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(&sheet, src).unwrap();
    let out = ohmsheet().arg("run").arg(&sheet).output().unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("|difference| 0.5 kW (allowed 1 kW)"), "{text}");
    assert!(text.contains("|difference| 0.01 % (allowed 0.05 %)"), "{text}");
    let e = engine(src);
    let r = ohmsheet::output::report::build(
        &ohmsheet::sheet::Sheet::from_text("s.ohm", src),
        &e,
        &[],
        ohmsheet::units::format::Style::default(),
    );
    assert_eq!(
        (r.checks[0].difference.as_str(), r.checks[0].allowed.as_str()),
        ("0.5 kW", "1 kW")
    );
    assert_eq!(
        (r.checks[1].difference.as_str(), r.checks[1].allowed.as_str()),
        ("0.01 %", "0.05 %")
    );
    let (mut s, _) =
        ohmsheet::session::state::Session::open(Some(&sheet), Some(dir.path().join("data")), false).unwrap();
    // An edit shows the checks it changes.
    let shown = s.handle("P = 800.2 kW").text;
    assert!(shown.contains("off by 0.3 kW, allowed 1 kW"), "{shown}");
    let shown = s.handle("x = 0.18 %").text;
    assert!(shown.contains("off by 0.02 %, allowed 0.05 %"), "{shown}");
}

// ------------------------------------------------------ %, pu and dB shown

// Percent and per-unit keep their display through arithmetic, a ratio of
// two per-unit values is a plain number, and a level in dB carries dB
// (20·log10 10 = 20 dB, IEC 60027-3) — in the table and run's CSV and JSON.
// A percentage's number in JSON and CSV is in %, under the unit `%`.
#[test]
fn percent_per_unit_and_decibels_are_shown_as_such() {
    let src = "pc = 12 % + 3 %\na = 1.05 pu\nb = a / 0.95 pu\nc = a * 2\ng = db_v(10)\n";
    let rs = rows(src);
    let get = |n: &str| rs.iter().find(|r| r.name == n).unwrap().clone();
    assert_eq!(get("pc").display, "15 %");
    // JSON and CSV write a percentage in %, with the unit `%`, as shown
    // (12 % + 3 % = 15 %), not the stored fraction 0.15 with no unit
    assert!((get("pc").re - 15.0).abs() < 1e-12, "{}", get("pc").re);
    assert_eq!(get("pc").unit, "%");
    assert_eq!(get("b").display, "1.105");
    assert_eq!(get("c").display, "2.1 pu");
    assert_eq!(get("g").display, "20 dB");
    assert_eq!(get("g").polar, "20 dB");
}

// A sweep's JSON writes one number a point for a value real by
// construction (a power factor: cos φ is real, IEEE Std 1459), as its CSV
// does, and a percentage in % under the unit `%`.
#[test]
fn sweep_json_writes_real_values_once_and_percent_in_percent() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(
        &sheet,
        "P = 100 kW\nQ = 50 kvar\nS = P + j*Q\nk = pf(S)\nl = 2 % * (P / 100 kW)\n",
    )
    .unwrap();
    let out = ohmsheet()
        .args([
            "sweep",
            sheet.to_str().unwrap(),
            "--vary",
            "P=50 kW..100 kW",
            "--points",
            "3",
        ])
        .args(["--show", "k,S,l", "--json", "-"])
        .output()
        .unwrap();
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let series = doc["series"].as_array().unwrap();
    let get = |n: &str| series.iter().find(|s| s["name"] == n).unwrap();
    assert!(get("k").get("im").is_none(), "{}", get("k"));
    assert!(get("S").get("im").is_some(), "a complex power keeps both parts");
    // pf at P = 100 kW, Q = 50 kvar: 100/√(100² + 50²) = 0.894427…
    let last = get("k")["re"][2].as_f64().unwrap();
    assert!((last - 100.0 / (100f64.powi(2) + 50f64.powi(2)).sqrt()).abs() < 1e-12);
    assert_eq!(get("l")["unit"], "%");
    assert!((get("l")["re"][2].as_f64().unwrap() - 2.0).abs() < 1e-12);
}

// A batch input real by its nature (a length, a frequency) keeps what is
// built from it real: one column, as docs/batch.md promises; a case value
// with an imaginary part for it is a bad row. R = 0.2 Ω/km · 3 km = 0.6 Ω
// and ω = 2π · 60 Hz (common practice).
#[test]
fn batch_takes_a_length_and_a_frequency_as_real_inputs() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(
        &sheet,
        "len = 2 km\nz = 0.2 Ω/km\nR = z * len\nf = 50 Hz\nw = 2 * pi * f\n",
    )
    .unwrap();
    let cases = dir.path().join("c.csv");
    std::fs::write(&cases, "len [km],f [Hz]\n3,60\n(1+j1),50\n").unwrap();
    let out = dir.path().join("o.csv");
    ohmsheet()
        .args(["batch", sheet.to_str().unwrap(), "--cases", cases.to_str().unwrap()])
        .args(["--out", out.to_str().unwrap(), "--quiet"])
        .assert()
        .code(1);
    let text = std::fs::read_to_string(&out).unwrap();
    let mut lines = text.lines();
    assert_eq!(lines.next().unwrap(), "len [km],f [Hz],R [Ω],w [rad/s]");
    let row: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert!((row[2].parse::<f64>().unwrap() - 0.6).abs() < 1e-15);
    assert!((row[3].parse::<f64>().unwrap() - 2.0 * std::f64::consts::PI * 60.0).abs() < 1e-12);
    let errs = std::fs::read_to_string(dir.path().join("o.errors.csv")).unwrap();
    assert!(errs.contains("`len` is a length (m), a real number"), "{errs}");
}
