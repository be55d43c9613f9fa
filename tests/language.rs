//! Language behaviour against closed forms and textbook relations. Sources
//! are named beside each check.

use num_complex::Complex64 as C64;
use ohmsheet::diag::ErrorCode;
use ohmsheet::units::{Dim, Kind};

use crate::assert_close;
use crate::common::{engine, errors, eval_expr, model, value};

fn c(re: f64, im: f64) -> C64 {
    C64::new(re, im)
}

fn code_of(src: &str) -> ErrorCode {
    errors(src)[0].code
}

// Series/parallel rules: any circuits text (e.g. Alexander & Sadiku,
// Fundamentals of Electric Circuits, ch. 2 and 6 — from memory):
// capacitors add in parallel and combine reciprocally in series;
// inductors and resistors the other way round.
#[test]
fn element_kind_decides_series_and_parallel() {
    assert_close!(eval_expr("", "10 µF || 22 µF"), c(32e-6, 0.0), 1e-12);
    assert_close!(eval_expr("", "10 µF -- 22 µF"), c(6.875e-6, 0.0), 1e-12);
    assert_close!(eval_expr("", "6 Ω || 3 Ω"), c(2.0, 0.0), 1e-12);
    assert_close!(eval_expr("", "6 Ω -- 3 Ω"), c(9.0, 0.0), 1e-12);
    assert_close!(eval_expr("", "6 mH || 3 mH"), c(2e-3, 0.0), 1e-12);
    assert_close!(eval_expr("", "4 S -- 4 S"), c(2.0, 0.0), 1e-12);
    // three operands by chaining
    assert_close!(eval_expr("", "6 Ω || 6 Ω || 6 Ω"), c(2.0, 0.0), 1e-12);
    // a short in parallel is a short, not a crash
    assert_eq!(eval_expr("", "0 Ω || 5 Ω"), c(0.0, 0.0));
    // per-unit impedances combine as impedances
    assert_close!(eval_expr("", "j0.2 pu || j0.2 pu"), c(0.0, 0.1), 1e-12);
}

#[test]
fn network_operators_refuse_other_dimensions() {
    assert_eq!(code_of("x = 5 V || 3 V"), ErrorCode::NetworkOperand);
    assert_eq!(code_of("x = 5 || 3"), ErrorCode::NetworkOperand);
    assert_eq!(code_of("x = 5 Ω || 3 F"), ErrorCode::DimensionMismatch);
    let d = &errors("x = 5--3")[0];
    assert!(d.hint.as_deref().unwrap_or("").contains("a - -b"), "{d:?}");
}

// Precedence as the language defines it: ^ > unary minus > * / > || -- > + -.
#[test]
fn precedence() {
    assert_close!(eval_expr("", "1 Ω + 2 Ω || 2 Ω"), c(2.0, 0.0), 1e-12);
    assert_close!(eval_expr("", "-(2^2)"), c(-4.0, 0.0), 1e-12);
    assert_close!(eval_expr("", "2 * 3 Ω || 6 Ω"), c(3.0, 0.0), 1e-12);
    assert_close!(eval_expr("", "2^(3^2)"), c(512.0, 0.0), 1e-12);
    // read two ways, so refused (tests/misreadings/angle.rs has the table)
    assert_eq!(code_of("x = -2^2"), ErrorCode::AmbiguousOperators);
    assert_eq!(code_of("x = 2^3^2"), ErrorCode::AmbiguousOperators);
}

// Polar form: 277∠-30° = 277(cos30° - j sin30°) (Euler's formula).
#[test]
fn polar_literals() {
    let want = c(277.0 * (30f64).to_radians().cos(), -277.0 * (30f64).to_radians().sin());
    assert_close!(eval_expr("", "277 V ∠ -30°"), want, 1e-14);
    assert_close!(eval_expr("", "277 V /_ -30"), want, 1e-14);
    assert_close!(eval_expr("", "277 V /_ -0.5235987755982988 rad"), want, 1e-14);
    // an angle-valued cell is used in radians; a plain one in degrees
    assert_close!(eval_expr("th = -30°", "277 V ∠ th"), want, 1e-14);
    assert_close!(eval_expr("th = -30", "277 V ∠ th"), want, 1e-14);
}

#[test]
fn units_give_dimensions() {
    let m = model("V = 10 V\nR = 5 Ω\nI = V / R\nP = V * I\nW = V / R * 1 s");
    let q = |n: &str| m.cell(n).unwrap().quantity().unwrap();
    assert_eq!(q("I").dim, Dim::CURRENT);
    assert_eq!(q("P").dim, Dim::POWER);
    assert_eq!(q("W").dim, Dim::CHARGE);
    assert_eq!(code_of("x = 5 V + 3 Ω"), ErrorCode::DimensionMismatch);
    let d = &errors("x = 5 V + 3 Ω")[0];
    assert!(
        d.message.contains("voltage") && d.message.contains("impedance"),
        "{}",
        d.message
    );
}

#[test]
fn power_kinds_display_as_the_trade_expects() {
    let m = model("S = (3 + j4) kVA\nP = re(S)\nQ = im(S)\nA = abs(S)\nP2 = 75 kW\nQ2 = 500 kvar\nS2 = P2 + j*Q2");
    let k = |n: &str| m.cell(n).unwrap().quantity().unwrap().kind;
    assert_eq!(k("P"), Kind::RealPower);
    assert_eq!(k("Q"), Kind::ReactivePower);
    assert_eq!(k("A"), Kind::ApparentPower);
    assert_eq!(k("S2"), Kind::ApparentPower);
}

#[test]
fn display_unit_is_a_dimension_check() {
    let e = engine("Q = 60 kvar\nV = 480 V\nI = Q / V [A]");
    assert_close!(value(&e, "I"), c(125.0, 0.0), 1e-12);
    assert_eq!(
        code_of("Q = 60 kvar\nV = 480 V\nI = Q / V [V]"),
        ErrorCode::DimensionMismatch
    );
}

#[test]
fn angles_are_not_mixed_with_plain_numbers() {
    assert_eq!(code_of("x = arg(1 + j) + 10"), ErrorCode::AngleAmbiguous);
    assert_close!(eval_expr("", "arg(1 + j) + 10°"), c(55f64.to_radians(), 0.0), 1e-14);
    assert_eq!(code_of("x = 30 [°]"), ErrorCode::AngleAmbiguous);
}

#[test]
fn ambiguous_forms_are_errors_with_hints() {
    let d = &errors("x = 5 m")[0];
    assert_eq!(d.code, ErrorCode::AmbiguousUnit);
    assert!(d.hint.as_deref().unwrap().contains("milli"));
    // `5m` is milli
    assert_close!(eval_expr("", "5m"), c(0.005, 0.0), 1e-15);
    assert_eq!(code_of("x = 4.7K"), ErrorCode::UnknownUnit);
    let d = &errors("x = 4.7K")[0];
    assert!(d.hint.as_deref().unwrap().contains("lowercase"));
    // the unit binds to the number before it
    let d = &errors("x = 6 + j10 Ω")[0];
    assert!(d.hint.as_deref().unwrap().contains("(6 + j10) Ω"), "{:?}", d.hint);
}

#[test]
fn dimensioned_powers() {
    let m = model("L = 1 mH\nC = 1 µF\nZ0 = sqrt(L / C)\nT = sqrt(L * C)\nA = (2 Ω)^2");
    assert_eq!(m.cell("Z0").unwrap().quantity().unwrap().dim, Dim::IMPEDANCE);
    assert_eq!(m.cell("T").unwrap().quantity().unwrap().dim, Dim::TIME);
    assert_eq!(
        m.cell("A").unwrap().quantity().unwrap().dim,
        Dim::IMPEDANCE.powi(2).unwrap()
    );
    assert_eq!(code_of("n = 2\nx = (2 Ω)^n"), ErrorCode::BadExponent);
    assert_eq!(code_of("x = (2 Ω)^0.3"), ErrorCode::BadExponent);
}

// IEEE 754: a nonzero number divided by zero is infinite.
#[test]
fn division_by_zero_is_infinite() {
    let z = eval_expr("", "5 V / 0 Ω");
    assert!(z.re.is_infinite() && z.im == 0.0, "{z}");
    // resonance of j10 || -j10 is an open circuit
    let z = eval_expr("", "j10 Ω || -j10 Ω");
    assert!(z.re.is_infinite() || z.im.is_infinite(), "{z}");
}

#[test]
fn names_cycles_and_duplicates() {
    let d = &errors("a = b\nb = a")[0];
    assert_eq!(d.code, ErrorCode::Cycle);
    assert!(d.message.contains("a → b → a"), "{}", d.message);
    let d = &errors("Vsource = 5 V\nx = Vsorce * 2")[0];
    assert_eq!(d.code, ErrorCode::UnknownName);
    assert!(d.hint.as_deref().unwrap().contains("Vsource"));
    let d = &errors("x = 1\nx = 2")[0];
    assert_eq!(d.code, ErrorCode::DuplicateCell);
    assert_eq!(d.secondary.len(), 1);
    assert_eq!(code_of("pi = 3"), ErrorCode::ReservedName);
    assert_eq!(code_of("x = sqrtt(2)"), ErrorCode::UnknownFunction);
    assert_eq!(code_of("x = sqrt(1, 2)"), ErrorCode::FunctionArgs);
}

#[test]
fn an_error_does_not_hide_the_others() {
    let ds = errors("a = 1 V + 1 Ω\nb = a * 2\nc = nope\nd = 3");
    // a and c are reported; b depends on a and is not reported again
    assert_eq!(ds.len(), 2, "{ds:?}");
}

#[test]
fn checks_compare_by_magnitude_of_difference() {
    let e = engine("Z = (3 + j4) Ω\ncheck abs(Z) ~= 5 Ω +- 1 mΩ\ncheck Z ≈ 5 Ω ∠ 53.13° ± 0.1%\ncheck Z ~= 3 Ω +- 1%");
    let rows = ohmsheet::output::check_rows(&e, Default::default());
    assert!(rows[0].passed);
    assert!(rows[1].passed);
    assert!(!rows[2].passed, "3+j4 is 4 Ω away from 3 Ω");
    assert_eq!(code_of("Z = 5 Ω\ncheck Z ~= 5 Ω +- 0.1"), ErrorCode::BadTolerance);
}

#[test]
fn comments_blank_lines_crlf_and_bom() {
    let e = engine("\u{FEFF}# header\r\n\r\nR = 5 Ω   # comment\r\nI = 10 V / R\r\n");
    assert_close!(value(&e, "I"), c(2.0, 0.0), 1e-15);
}

#[test]
fn records_and_fields() {
    let m = model("z = 3 + j4\nr = re(z)");
    assert!(m.cell("r").is_some());
    assert_eq!(code_of("z = 3\nx = z.a"), ErrorCode::NotARecord);
}
