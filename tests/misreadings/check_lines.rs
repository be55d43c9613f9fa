//! Misreadings: check lines (see mod.rs). A `check` written the way a
//! reader might — an inequality, or a comparison without its tolerance —
//! is refused with what a check needs, not pest's furthest guess (found by
//! the issue-13 audit: `check P <= 4.9 kW` said only "the line ends too
//! soon, expected a unit").

use ohmsheet::diag::ErrorCode;

fn first_error(src: &str) -> (usize, usize, String, String) {
    let (d, line, col) = super::first_error_at(src);
    assert_eq!(d.code, ErrorCode::Syntax, "{src}");
    (line, col, d.label, d.hint.unwrap_or_default())
}

#[test]
fn a_check_without_approx_says_a_check_needs_it() {
    for l in [
        "check P <= 4.9 kW",
        "check P < 5 kW",
        "check P >= 4 kW +- 1%",
        "check P = 5 kW +- 1%",
        "check P",
    ] {
        let (line, _, label, hint) = first_error(&format!("P = 5 kW\n{l}\n"));
        assert_eq!(line, 2, "{l}");
        assert!(label.contains("a check needs `~=`"), "{l}: {label}");
        assert!(hint.contains("check A ~= B +- 1%"), "{l}: {hint}");
        assert!(hint.contains("check (A <= B) ~= 1 +- 0"), "{l}: {hint}");
        assert!(!label.contains("expected a unit"), "{l}: {label}");
    }
}

#[test]
fn a_check_without_a_tolerance_says_so() {
    for l in ["check P ~= 5 kW", "check P ≈ 5 kW", "check P ~= 5 kW 1%"] {
        let (line, _, label, hint) = first_error(&format!("P = 5 kW\n{l}\n"));
        assert_eq!(line, 2, "{l}");
        assert!(label.contains("a check needs `+-` (±) and a tolerance"), "{l}: {label}");
        assert!(hint.contains("+- 1%"), "{l}: {hint}");
    }
}

// The inequality the hint suggests is a working check (a comparison is the
// plain number 1 or 0: docs/grammar.md "Meaning").
#[test]
fn the_suggested_inequality_check_works() {
    let e = crate::common::engine("P = 5 kW\ncheck (P <= 5.9 kW) ~= 1 +- 0\ncheck (P <= 4.9 kW) ~= 1 +- 0\n");
    let rows = ohmsheet::output::check_rows(&e, Default::default());
    assert_eq!(rows.len(), 2);
    assert!(rows[0].passed && !rows[1].passed);
}

// A name that starts with `check` is not a check line.
#[test]
fn a_name_starting_with_check_is_not_a_check() {
    let (_, _, label, hint) = first_error("checked = 5 kW +\n");
    assert!(!label.contains("a check needs"), "{label}");
    assert!(!hint.contains("a check compares"), "{hint}");
}
