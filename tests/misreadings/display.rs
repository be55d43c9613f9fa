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
