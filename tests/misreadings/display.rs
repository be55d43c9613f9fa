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
    assert_eq!(lines[1..], ["50,480,0", "55,480,0", "60,480,0"], "{text}");
}
