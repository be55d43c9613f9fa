//! `@override NAME = FORMULA`: a job sheet replaces one value of a library
//! sheet it includes, for itself, and says so. Values below are worked by
//! hand (complex arithmetic, Ohm's law).

use num_complex::Complex64 as C64;
use ohmsheet::diag::ErrorCode;
use ohmsheet::engine::{compile, Engine};
use ohmsheet::sheet::Sheet;

use crate::common::ohmsheet;
use crate::report::folder;

/// An invented cable library: impedance per km, a length, the total.
const LIB: &str = "# cable library (invented)\nZc = (0.2 + j0.1) Ω   # per km\nQc = 300 kvar\nL = 2\nZ = Zc * L\n";

fn load(job: &str) -> (tempfile::TempDir, Sheet) {
    let d = folder(&[("job.ohm", job), ("lib/cables.ohm", LIB)]);
    let s = Sheet::load(&d.path().join("job.ohm")).expect("the sheet loads");
    (d, s)
}

fn errors_of(job: &str) -> Vec<(ErrorCode, String, String)> {
    let (_d, s) = load(job);
    let m = compile(&s);
    m.diagnostics
        .iter()
        .filter(|d| d.is_error())
        .map(|d| (d.code, d.message.clone(), d.render_plain(&m.sources)))
        .collect()
}

#[test]
fn an_override_replaces_the_library_value_for_this_sheet() {
    let (_d, s) = load("@include \"lib/cables.ohm\"\n@override Zc = (0.25 + j0.12) Ω   # site survey\nI = 400 V / Z\n");
    let m = compile(&s);
    assert!(!m.has_errors(), "{:?}", m.diagnostics);
    let e = Engine::new(m);
    let v = |n: &str| e.value(e.model.id(n).unwrap());
    // Z = 2 × (0.25 + j0.12) Ω = 0.5 + j0.24 Ω; I = 400 V / Z (by hand:
    // 400 (0.5 − j0.24) / (0.25 + 0.0576)).
    crate::assert_close!(v("Z"), C64::new(0.5, 0.24), 1e-15);
    crate::assert_close!(v("I"), C64::new(200.0 / 0.3076, -96.0 / 0.3076), 1e-12);
    // The library file itself is untouched; another sheet keeps its value.
    let (_d2, plain) = load("@include \"lib/cables.ohm\"\nI = 400 V / Z\n");
    let e2 = Engine::new(compile(&plain));
    crate::assert_close!(e2.value(e2.model.id("Z").unwrap()), C64::new(0.4, 0.2), 1e-15);
    // The override may use this sheet's own cells, and keeps the
    // library's display unit.
    let (_d3, s3) = load("@include \"lib/cables.ohm\"\nk = 1.5\n@override L = 2 * k\n");
    let e3 = Engine::new(compile(&s3));
    crate::assert_close!(e3.value(e3.model.id("Z").unwrap()), C64::new(0.6, 0.3), 1e-15);
}

#[test]
fn a_plain_second_definition_is_still_a_name_clash() {
    let errs = errors_of("@include \"lib/cables.ohm\"\nZc = (0.25 + j0.12) Ω\n");
    assert!(errs.iter().any(|e| e.0 == ErrorCode::NameClash), "{errs:?}");
}

#[test]
fn overriding_what_the_library_does_not_define_or_twice_is_an_error() {
    let errs = errors_of("@include \"lib/cables.ohm\"\n@override Zx = 1 Ω\nI = 1 V / Z\n");
    assert_eq!(errs.len(), 1, "{errs:?}");
    assert_eq!(errs[0].0, ErrorCode::BadOverride);
    assert!(errs[0].2.contains("job.ohm:2:11"), "{}", errs[0].2);
    assert!(errs[0].2.contains("did you mean `Z`?"), "{}", errs[0].2);

    let errs = errors_of("@include \"lib/cables.ohm\"\n@override L = 3\n@override L = 4\n");
    assert_eq!(errs.len(), 1, "{errs:?}");
    assert!(errs[0].1.contains("overridden twice"), "{errs:?}");
    assert!(
        errs[0].2.contains("job.ohm:3:11") && errs[0].2.contains("first overridden here"),
        "{}",
        errs[0].2
    );

    // Its own sheet's value: change the definition instead.
    let errs = errors_of("@include \"lib/cables.ohm\"\nk = 1\n@override k = 2\n");
    assert_eq!(errs.len(), 1, "{errs:?}");
    assert!(errs[0].1.contains("defined in this same sheet"), "{errs:?}");

    // Not a definition at all.
    let errs = errors_of("@include \"lib/cables.ohm\"\n@override\n");
    assert!(errs.iter().any(|e| e.0 == ErrorCode::BadOverride), "{errs:?}");
    let errs = errors_of("@include \"lib/cables.ohm\"\n@override Zc\n");
    assert!(errs.iter().any(|e| e.0 == ErrorCode::BadOverride), "{errs:?}");

    // A sheet in memory includes nothing to override.
    let m = compile(&Sheet::from_text("mem.ohm", "@override Zc = 1 Ω\nx = 1\n"));
    assert!(m.diagnostics.iter().any(|d| d.code == ErrorCode::BadOverride));
}

#[test]
fn an_override_keeps_the_values_dimension_and_kind() {
    // A voltage for an impedance: located at the override, the library's
    // definition shown as the second place.
    let errs = errors_of("@include \"lib/cables.ohm\"\n@override Zc = 3 V\n");
    assert_eq!(errs.len(), 1, "{errs:?}");
    assert_eq!(errs[0].0, ErrorCode::BadOverride);
    let text = &errs[0].2;
    assert!(
        text.contains("`Zc` is an impedance (Ω); `3 V` is a voltage (V)"),
        "{text}"
    );
    assert!(text.contains("job.ohm:2:16"), "{text}");
    assert!(
        text.contains("lib/cables.ohm:2:1") && text.contains("the library's definition"),
        "{text}"
    );
    // W for var: same dimension, another kind (IEEE Std 1459-2010: P and Q
    // are different quantities).
    let errs = errors_of("@include \"lib/cables.ohm\"\n@override Qc = 200 kW\n");
    assert_eq!(errs.len(), 1, "{errs:?}");
    assert_eq!(errs[0].0, ErrorCode::KindMismatch);
    assert!(errs[0].1.contains("reactive power (var)"), "{errs:?}");
    // A plain number for a plain number, var for var: fine.
    assert!(errors_of("@include \"lib/cables.ohm\"\n@override Qc = 250 kvar\n@override L = 0\n").is_empty());
    // A short (0 Ω) and an open (∞) cable are values like any other.
    let (_d, s) = load("@include \"lib/cables.ohm\"\n@override Zc = 0 Ω\n");
    let e = Engine::new(compile(&s));
    assert_eq!(e.value(e.model.id("Z").unwrap()), C64::new(0.0, 0.0));
}

#[test]
fn the_report_shows_the_override_and_the_library_value_it_replaces() {
    let d = folder(&[
        (
            "job.ohm",
            "@title \"Feeder J (invented)\"\n@include \"lib/cables.ohm\"\n@override Zc = (0.25 + j0.12) Ω\nI = 400 V / Z\n",
        ),
        ("lib/cables.ohm", LIB),
    ]);
    for (format, want) in [
        (
            "md",
            "job.ohm, line 3: @override of the library value in lib/cables.ohm, line 2",
        ),
        (
            "html",
            "job.ohm, line 3: @override of the library value in lib/cables.ohm, line 2",
        ),
        (
            "json",
            "job.ohm, line 3: @override of the library value in lib/cables.ohm, line 2",
        ),
    ] {
        let out = ohmsheet()
            .current_dir(d.path())
            .args(["report", "job.ohm", "--format", format])
            .assert()
            .code(0)
            .get_output()
            .stdout
            .clone();
        let text = String::from_utf8(out).unwrap();
        assert!(text.contains(want), "{format}:\n{text}");
    }
}

/// `run`'s table says which values an `@override` line replaced, and where
/// the library's value was; a `--set` of such a value names both the
/// `--set` and the override, in the table and in a report.
#[test]
fn run_marks_an_overridden_value_and_a_set_on_top_of_it() {
    let d = folder(&[
        (
            "job.ohm",
            "@include \"lib/cables.ohm\"\n@override Zc = (0.25 + j0.12) Ω\nI = 400 V / Z\n",
        ),
        ("lib/cables.ohm", LIB),
    ]);
    let run = |args: &[&str]| {
        let out = ohmsheet()
            .current_dir(d.path())
            .args(args)
            .assert()
            .code(0)
            .get_output()
            .stdout
            .clone();
        String::from_utf8(out).unwrap()
    };
    let line = |text: &str, name: &str| {
        text.lines()
            .find(|l| l.trim_start().starts_with(&format!("{name} ")))
            .unwrap_or_else(|| panic!("no row {name}:\n{text}"))
            .to_string()
    };
    let text = run(&["run", "job.ohm"]);
    assert!(
        line(&text, "Zc").ends_with("(0.25 + j0.12) Ω   (@override of lib/cables.ohm:2)"),
        "{text}"
    );
    assert!(!line(&text, "Qc").contains("@override"), "{text}");
    assert!(!line(&text, "I").contains("@override"), "{text}");
    assert!(
        text.contains("(@override of FILE:LINE: this sheet's value in place of the library's"),
        "{text}"
    );

    // --set on top of the override: both named; the value is the --set's
    // (Z = 2 × 0.3 Ω = 0.6 Ω, by hand)
    let text = run(&["run", "job.ohm", "--set", "Zc=0.3 Ω"]);
    assert!(
        line(&text, "Zc").ends_with("(--set, over the @override of lib/cables.ohm:2)"),
        "{text}"
    );
    assert!(line(&text, "Z").contains("600 mΩ"), "{text}");
    // --set of a value no override touched
    let text = run(&["run", "job.ohm", "--set", "Qc=250 kvar"]);
    assert!(line(&text, "Qc").ends_with("(--set)"), "{text}");
    // the --set still has to fit the library's value (an impedance)
    ohmsheet()
        .current_dir(d.path())
        .args(["run", "job.ohm", "--set", "Zc=3 V"])
        .assert()
        .code(2)
        .stderr(predicates::str::contains(
            "`Zc` is an impedance (Ω); `3 V` is a voltage (V)",
        ));

    // a report with --set on the overridden value mentions both
    for format in ["md", "html", "json"] {
        let text = run(&["report", "job.ohm", "--set", "Zc=0.3 Ω", "--format", format]);
        assert!(
            text.contains("job.ohm, line 2: @override of the library value in lib/cables.ohm, line 2"),
            "{format}:\n{text}"
        );
        assert!(text.contains("formula set on the command line"), "{format}:\n{text}");
        assert!(text.contains("Zc=0.3 Ω"), "{format}:\n{text}");
    }
}
