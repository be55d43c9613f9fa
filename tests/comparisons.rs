//! Comparisons `<`, `<=`, `>`, `>=` (`≤`, `≥`): docs/grammar.md. Expected
//! values follow from the definitions (IEEE 754 §5.11 ordering of the real
//! parts; 1 for true, 0 for false) and SI prefixes (SI Brochure, 9th ed.,
//! §3: 1 kV = 1000 V).

use num_complex::Complex64 as C64;
use ohmsheet::diag::ErrorCode;

use crate::common::{engine, errors, eval_expr, value};

fn truth(src: &str) -> f64 {
    let z = eval_expr("Z = (3 + j4) Ω\nP = 800 kW\nth = 30°", src);
    assert_eq!(z.im, 0.0, "{src}");
    z.re
}

#[test]
fn each_operator_and_spelling() {
    for (src, want) in [
        ("3 V < 4 V", 1.0),
        ("4 V < 4 V", 0.0),
        ("4 V <= 4 V", 1.0),
        ("4 V ≤ 4 V", 1.0),
        ("5 A > 5 A", 0.0),
        ("6 A > 5 A", 1.0),
        ("5 A >= 5 A", 1.0),
        ("5 A ≥ 6 A", 0.0),
        ("1 kV > 999 V", 1.0),
        ("1 kV <= 1000 V", 1.0),
        ("-0.0 < 0", 0.0),
        ("-1 < 0", 1.0),
    ] {
        assert_eq!(truth(src), want, "{src}");
    }
}

#[test]
fn loosest_of_all_operators() {
    // (1 + 2) < 4, not 1 + (2 < 4) = 2
    assert_eq!(truth("1 + 2 < 4"), 1.0);
    assert_eq!(truth("4 < 1 + 2"), 0.0);
    // (2 * 3) >= (5 || …): `||` binds tighter
    assert_eq!(truth("2 Ω * 3 >= 5 Ω || 5 Ω"), 1.0);
    // a comparison in brackets is a plain 1 or 0 that multiplies
    let z = eval_expr("", "(1 < 2) * 5 V + (2 < 1) * 7 V");
    assert_eq!(z, C64::new(5.0, 0.0));
    // a range test
    assert_eq!(truth("(0 < 0.5) * (0.5 < 1)"), 1.0);
}

#[test]
fn zero_fits_any_dimension_and_kind() {
    assert_eq!(truth("P > 0"), 1.0);
    assert_eq!(truth("th > 0"), 1.0);
    assert_eq!(truth("0 >= -P"), 1.0);
}

#[test]
fn real_parts_are_compared() {
    // Z = 3 + j4 Ω: re Z = 3 Ω < 4 Ω although |Z| = 5 Ω
    assert_eq!(truth("Z < 4 Ω"), 1.0);
    assert_eq!(truth("abs(Z) < 4 Ω"), 0.0);
    assert_eq!(truth("im(Z) >= 4 Ω"), 1.0);
}

#[test]
fn angles_compare_as_angles() {
    assert_eq!(truth("th < 45°"), 1.0);
    // 30° is 0.5236 rad
    assert_eq!(truth("th > 0.5 rad"), 1.0);
    assert_eq!(truth("arg(j) >= 90°"), 1.0);
}

#[test]
fn refusals() {
    let first = |src: &str| errors(&format!("Z = (3 + j4) Ω\nth = 30°\nx = {src}\n"))[0].clone();
    let d = first("3 V < 2 Ω");
    assert_eq!(d.code, ErrorCode::DimensionMismatch);
    assert!(
        d.message.contains("voltage") && d.message.contains("impedance"),
        "{}",
        d.message
    );
    // a plain number against an angle: degrees or radians?
    assert_eq!(first("th < 45").code, ErrorCode::AngleAmbiguous);
    // a literal with an imaginary part
    let d = first("Z < (3 + j5) Ω");
    assert_eq!(d.code, ErrorCode::DimensionMismatch);
    assert!(d.hint.unwrap().contains("abs("));
    // a plain number that is not zero against a voltage
    assert_eq!(first("3 V > 1").code, ErrorCode::DimensionMismatch);
    // chains
    for src in ["1 < 2 < 3", "1 <= 2 > 0", "1 ≥ 2 ≤ 3"] {
        let d = first(src);
        assert_eq!(d.code, ErrorCode::AmbiguousOperators, "{src}");
        assert!(d.hint.unwrap().contains("(lo < x) * (x < hi)"));
    }
}

#[test]
fn unknown_values_are_not_false() {
    // 0/0 is NaN; NaN is unordered (IEEE 754 §5.11), so the comparison is
    // NaN, not 0.
    let e = engine("a = 0 V\nb = 1 V\nr = a / a\nx = r < 2\n");
    assert!(value(&e, "x").re.is_nan());
    let e = engine("a = 2 V\nb = 1 V\nx = a > b\ny = a < b\n");
    assert_eq!(value(&e, "x"), C64::new(1.0, 0.0));
    assert_eq!(value(&e, "y"), C64::new(0.0, 0.0));
}
