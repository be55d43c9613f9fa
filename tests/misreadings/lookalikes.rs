//! Misreadings: characters that look alike (issue 13, item 8). The ohm
//! sign U+2126 is canonically equivalent to Ω U+03A9, and the micro sign
//! U+00B5 compatibility-equivalent to μ U+03BC (Unicode Standard, ch. 22
//! "Letterlike Symbols"; UAX #15 normalization forms NFC and NFKC): the
//! language reads each pair as one. Look-alikes that Unicode does not
//! equate are refused with a hint that names the character.

use ohmsheet::diag::ErrorCode;
use ohmsheet::sheet::Sheet;
use ohmsheet::units::lookalike::{ACCEPTED, REFUSED};
use ohmsheet::units::lookup_unit;

use crate::common::{engine, ohmsheet, value};

/// Formulas that must read alike when `c` is written for `r`.
fn contexts(c: char, r: char) -> Vec<(String, String)> {
    let unit = lookup_unit(&r.to_string()).is_ok();
    let forms: &[&str] = if unit {
        &[
            "20 {}",
            "20{}",
            "4.7 k{}",
            "4.7k{}",
            "(3 + j4) {}",
            "2 {}/km",
            "5 m{} * 3",
            "j30 {}",
        ]
    } else {
        // a prefix
        &["10 {}F", "10{}F", "2.2{}", "4.7 {}H", "3 {}A/m^2"]
    };
    forms
        .iter()
        .map(|f| (f.replace("{}", &c.to_string()), f.replace("{}", &r.to_string())))
        .collect()
}

#[test]
fn every_accepted_pair_reads_as_one() {
    assert!(ACCEPTED.len() >= 2);
    for a in ACCEPTED {
        for (written, meant) in contexts(a.ch, a.reads_as) {
            let e = engine(&format!("x = {written}\ny = {meant}\n"));
            let (x, y) = (value(&e, "x"), value(&e, "y"));
            assert!(x == y && x.norm() > 0.0, "`{written}` gave {x}, `{meant}` gives {y}");
            let (qx, qy) = (
                e.model.cell("x").unwrap().quantity(),
                e.model.cell("y").unwrap().quantity(),
            );
            assert_eq!(qx, qy, "{written}");
        }
    }
    // And `u` is micro too (common practice where µ is hard to type).
    let e = engine("x = 10 uF\ny = 10 µF\nz = 10 μF\n");
    assert_eq!(value(&e, "x"), value(&e, "y"));
    assert_eq!(value(&e, "y"), value(&e, "z"));
    // A display unit with the ohm sign is the same unit (shown as Ω).
    let e = engine("Z = 3 \u{2126} [m\u{2126}]\n");
    assert_eq!(e.model.cell("Z").unwrap().display.as_ref().unwrap().symbol, "mΩ");
}

#[test]
fn the_ohm_sign_in_an_override_and_a_cases_header() {
    let d = tempfile::tempdir().unwrap();
    let sheet = d.path().join("s.ohm");
    std::fs::write(&sheet, "R = 10 Ω\nI = 1 V / R\n").unwrap();
    let out = ohmsheet()
        .args([
            "run",
            sheet.to_str().unwrap(),
            "--set",
            "R=2 k\u{2126}",
            "--format",
            "json",
        ])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    assert!(
        String::from_utf8_lossy(&out.stdout).contains("0.0005"),
        "{}",
        String::from_utf8_lossy(&out.stdout)
    );
    let cases = d.path().join("cases.csv");
    std::fs::write(&cases, "R [k\u{2126}]\n2\n").unwrap();
    let results = d.path().join("out.csv");
    let out = ohmsheet()
        .args([
            "batch",
            sheet.to_str().unwrap(),
            "--cases",
            cases.to_str().unwrap(),
            "--out",
        ])
        .arg(&results)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let text = std::fs::read_to_string(&results).unwrap();
    assert!(text.contains("0.0005"), "{text}");
}

#[test]
fn units_lists_each_spelling_once() {
    let out = ohmsheet().arg("units").output().unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    for prefix in ["units:", "prefixes:"] {
        let line = text.lines().find(|l| l.starts_with(prefix)).unwrap();
        let words: Vec<&str> = line
            .split_whitespace()
            .skip(1)
            .map(|w| w.split('=').next().unwrap())
            .collect();
        for (i, w) in words.iter().enumerate() {
            assert!(!words[..i].contains(w), "`{w}` twice in {line}");
            // neither of two look-alikes is listed beside the other
            for a in ACCEPTED {
                let other = w.replace(a.ch, &a.reads_as.to_string());
                assert!(
                    other == *w || !words.contains(&other.as_str()),
                    "{w} and {other} in {line}"
                );
                let other = w.replace(a.reads_as, &a.ch.to_string());
                assert!(
                    other == *w || !words.contains(&other.as_str()),
                    "{w} and {other} in {line}"
                );
            }
        }
    }
    for a in ACCEPTED {
        assert!(text.contains(&format!("U+{:04X} {}", a.ch as u32, a.name)), "{text}");
    }
}

#[test]
fn other_look_alikes_are_refused_naming_the_character() {
    assert!(REFUSED.len() >= 10);
    for &(c, name, _) in REFUSED {
        let src = format!("x = 5 {c}\n");
        let sheet = Sheet::from_text("t.ohm", &src);
        let m = ohmsheet::engine::compile(&sheet);
        let d = m
            .diagnostics
            .iter()
            .find(|d| d.is_error())
            .unwrap_or_else(|| panic!("`{c}` accepted"));
        assert!(
            matches!(d.code, ErrorCode::Syntax | ErrorCode::UnknownUnit),
            "{c}: {:?}",
            d.code
        );
        let hint = d.hint.clone().unwrap_or_default();
        assert!(hint.contains(&format!("U+{:04X} {name}", c as u32)), "`{c}`: {hint}");
    }
    // Greek small omega is still a name (angular frequency) where a name
    // stands.
    let e = engine("ω = 377 rad/s\nx = 2 * ω\n");
    assert_eq!(value(&e, "x").re, 754.0);
}
