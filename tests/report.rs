//! `ohmsheet report`: the hand-calculation layout, the checks table, the
//! sheet hash, and that the Markdown parses as the tables it means to be.
//!
//! The circuit is a series R-L branch of (8 + j6) Ω on 230 V: |Z| = 10 Ω
//! exactly (a 3-4-5 right triangle), so by hand
//!   I = 230 / (8 + j6) = 230 (8 − j6) / 100 = 18.4 − j13.8 A = 23 A ∠ −36.87°
//!   (atan(6/8) = 36.8699°), S = V · conj(I) = 230 (18.4 + j13.8)
//!   = 4232 + j3174 VA, |S| = V²/|Z| = 5290 VA, P = I²R = 23² · 8 = 4232 W.

use std::path::Path;
use std::process::Command;

use num_complex::Complex64 as C64;
use ohmsheet::engine::{compile, Engine};
use ohmsheet::output::report;
use ohmsheet::sheet::Sheet;
use ohmsheet::units::format::Style;

use crate::common::ohmsheet;

pub const LIB: &str = "@title \"Coil data\"\n@revision B\nZ = (8 + j6) Ω   # coil, from the library\n";

pub const SHEET: &str = "@title \"Series RL branch\"
@project \"Test bench 4\"
@prepared \"Tester\"
@checked \"Second tester\"
@revision 2
@date 2026-01-15
@include \"lib/parts.ohm\"
@note \"Steady state at rated voltage.\"
V = 230 V
I = V / Z          # branch current
S = V * conj(I)    # complex power
@note I \"Balanced supply assumed.\"
check I ~= 23 A ∠ -36.87° +- 0.01%    # hand calculation 230(8 - j6)/100
check abs(S) ~= 5290 VA +- 0.01%     # V²/|Z|
check re(S) ~= 4000 W +- 1%          # deliberately wrong: I²R is 4232 W
@sweep \"Branch current against supply voltage\" V = 200 V .. 260 V, 13 points : I
";

/// A temporary folder holding the given files.
pub fn folder(files: &[(&str, &str)]) -> tempfile::TempDir {
    let d = tempfile::tempdir().unwrap();
    for (name, text) in files {
        let p = d.path().join(name);
        std::fs::create_dir_all(p.parent().unwrap()).unwrap();
        std::fs::write(p, text).unwrap();
    }
    d
}

fn report_text(dir: &Path, sheet: &str, format: &str) -> String {
    let out = ohmsheet()
        .current_dir(dir)
        .args(["report", sheet, "--format", format])
        .output()
        .unwrap();
    assert!(
        out.status.code() == Some(0) || out.status.code() == Some(1),
        "report failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

#[test]
fn markdown_sets_out_each_step_like_a_hand_calculation() {
    let d = folder(&[("rl.ohm", SHEET), ("lib/parts.ohm", LIB)]);
    let md = report_text(d.path(), "rl.ohm", "md");
    // Metadata.
    for s in [
        "# Series RL branch",
        "| Project | Test bench 4 |",
        "| Prepared by | Tester |",
        "| Checked by | Second tester |",
        "| Revision | 2 |",
        "| Date | 2026-01-15 |",
        "Steady state at rated voltage.",
    ] {
        assert!(md.contains(s), "missing {s:?} in\n{md}");
    }
    // Inputs, with where the library value came from.
    assert!(
        md.contains(
            "| `Z` | 8 + j6 Ω<br>10 ∠ 36.87° Ω | `(8 + j6) Ω` | lib/parts.ohm, line 3<br>coil, from the library |"
        ),
        "{md}"
    );
    // The step: formula, values put in with their units, result both ways.
    let step = "I = V / Z\n  = 230 V / (8 + j6) Ω\n  = 18.4 - j13.8 A\n  = 23 ∠ -36.87° A\n";
    assert!(md.contains(step), "missing\n{step}in\n{md}");
    assert!(md.contains("### 2.1 `I` — branch current"), "{md}");
    // Every input here is used; a library value that is not says so.
    assert!(!md.contains("not used by this calculation"), "{md}");
    assert!(md.contains("Balanced supply assumed."), "{md}");
    let step = "S = V * conj(I)\n  = 230 V × conj((18.4 - j13.8) A)\n  = 4.232 + j3.174 kVA\n  = 5.29 ∠ 36.87° kVA\n";
    assert!(md.contains(step), "missing\n{step}in\n{md}");
    // Checks: pass/fail, difference and tolerance (1 % of 4000 W = 40 W;
    // 4232 − 4000 = 232 W).
    assert!(md.contains("| 3 | `check re(S) ~= 4000 W +- 1%`<br>deliberately wrong: I²R is 4232 W<br>line 15 | 4232 W | 4000 W | 232 W | 40 W<br>1 % of \\|reference\\| | **FAIL** |"), "{md}");
    assert!(md.contains("| 2 | `check abs(S) ~= 5290 VA +- 0.01%`"), "{md}");
    assert!(md.contains("**1 of 3 checks FAIL.**"), "{md}");
    assert!(
        md.contains("checked by a qualified person against the applicable codes"),
        "{md}"
    );
}

#[test]
fn report_exit_code_and_atomic_output_file() {
    let d = folder(&[("rl.ohm", SHEET), ("lib/parts.ohm", LIB)]);
    let out = d.path().join("rl.html");
    std::fs::write(&out, "an older report").unwrap();
    ohmsheet()
        .current_dir(d.path())
        .args(["report", "rl.ohm", "-o", "rl.html"])
        .assert()
        .code(1) // one check fails
        .stderr(predicates::str::contains("1 of 3 checks FAIL"));
    let html = std::fs::read_to_string(&out).unwrap();
    assert!(html.starts_with("<!DOCTYPE html>"));
    // Self-contained: nothing is fetched.
    // (The SVG namespace `xmlns="http://www.w3.org/2000/svg"` names, it
    // does not fetch.)
    for bad in [
        "<script", "<link", "src=", "href=", "url(", "@import", "<iframe", "<object",
    ] {
        assert!(!html.contains(bad), "the HTML refers outside itself: {bad}");
    }
    assert!(html
        .contains("<figure class=\"plot\" id=\"plot-1\">\n<h3>4.1 Branch current against supply voltage</h3>\n<svg"));
    assert!(html.contains("@page"), "print CSS");
    // No temporary file is left beside it.
    let names: Vec<String> = std::fs::read_dir(d.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert!(names.iter().all(|n| !n.starts_with('.')), "{names:?}");
    // A format the extension does not tell is refused.
    ohmsheet()
        .current_dir(d.path())
        .args(["report", "rl.ohm", "-o", "rl.txt"])
        .assert()
        .code(2)
        .stderr(predicates::str::contains("--format"));
}

/// The sheet hash is SHA-256 over `sha256sum`-style lines; recompute it
/// with the coreutils tool and see it follow a change in the library.
#[test]
fn hash_matches_sha256sum_and_follows_the_included_sheet() {
    let d = folder(&[("rl.ohm", SHEET), ("lib/parts.ohm", LIB)]);
    let hash_of_report = || {
        let json = report_text(d.path(), "rl.ohm", "json");
        let v: serde_json::Value = serde_json::from_str(&json).unwrap();
        v["sha256"].as_str().unwrap().to_string()
    };
    let by_tool = || -> Option<String> {
        let out = Command::new("sh")
            .current_dir(d.path())
            .args(["-c", "sha256sum rl.ohm lib/parts.ohm | sha256sum"])
            .output()
            .ok()?;
        out.status
            .success()
            .then(|| String::from_utf8_lossy(&out.stdout)[..64].to_string())
    };
    let before = hash_of_report();
    assert_eq!(before.len(), 64);
    let tool_before = by_tool();
    if let Some(t) = &tool_before {
        assert_eq!(&before, t, "sheet hash differs from `sha256sum … | sha256sum`");
    } else {
        eprintln!("note: sha256sum not available; the hash was checked for change only");
    }
    std::fs::write(d.path().join("lib/parts.ohm"), LIB.replace("(8 + j6)", "(8 + j6.5)")).unwrap();
    let after = hash_of_report();
    assert_ne!(before, after, "editing the included sheet must change the hash");
    if let Some(t) = by_tool() {
        assert_eq!(after, t);
    }
    // An override is part of what the hash covers.
    let out = ohmsheet()
        .current_dir(d.path())
        .args(["report", "rl.ohm", "--format", "json", "--set", "V=240 V"])
        .output()
        .unwrap();
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_ne!(v["sha256"].as_str().unwrap(), after);
    assert_eq!(v["overrides"][0], "V=240 V");
}

#[test]
fn json_report_carries_values_in_si_units() {
    let d = folder(&[("rl.ohm", SHEET), ("lib/parts.ohm", LIB)]);
    let v: serde_json::Value = serde_json::from_str(&report_text(d.path(), "rl.ohm", "json")).unwrap();
    let step = &v["steps"][0];
    assert_eq!(step["name"], "I");
    assert_eq!(step["substituted"], "230 V / (8 + j6) Ω");
    let r = &step["results"][0]["value"];
    crate::assert_close!(
        C64::new(r["re"].as_f64().unwrap(), r["im"].as_f64().unwrap()),
        C64::new(18.4, -13.8),
        1e-12
    );
    assert_eq!(r["unit"], "A");
    assert_eq!(v["checks"][2]["passed"], false);
    assert_eq!(v["files"][1]["path"], "lib/parts.ohm");
    assert_eq!(v["files"][1]["title"], "Coil data");
    assert_eq!(v["inputs"][0]["included"], true);
    // The library's title does not replace the sheet's.
    assert_eq!(v["title"], "Series RL branch");
}

/// The Markdown is read by a CommonMark parser with GitHub tables: every
/// table row keeps its column count, `||` survives inside a table cell,
/// and the steps are code blocks.
#[test]
fn markdown_parses_as_the_intended_tables() {
    use pulldown_cmark::{html, Options, Parser};
    let sheet = "Za = (3 + j4) Ω\nZb = 5 Ω\nZp = Za || Zb\ncheck abs(Zp) ~= 2.795 Ω +- 0.1%   # hand: |(3+j4)·5/(8+j4)| = 25/8.944\n";
    let d = folder(&[("p.ohm", sheet)]);
    let md = report_text(d.path(), "p.ohm", "md");
    let mut out = String::new();
    html::push_html(&mut out, Parser::new_ext(&md, Options::ENABLE_TABLES));
    assert_eq!(out.matches("<table>").count(), 4, "{out}"); // meta, files, inputs, checks
    let checks = out.split("<table>").nth(4).unwrap();
    let row = checks.split("<tbody>").nth(1).unwrap();
    assert_eq!(row.matches("<td").count(), 7, "{row}");
    assert!(row.contains("<code>check abs(Zp) ~= 2.795 Ω +- 0.1%</code>"), "{row}");
    assert!(out.contains("Zp = Za || Zb\n"), "{out}");
    assert!(out.contains("<pre><code class=\"language-text\">"), "{out}");
}

/// Writing each cell's value in its place must keep the formula's meaning:
/// the substituted line, read back as a formula, gives the cell's value.
#[test]
fn substituted_formulas_keep_their_meaning() {
    let src = "a = -5 V
b = (3 - j4) Ω
c = j2 Ω
g = -j0.5 S
th = -30°
n = 2
k = 0.25
x1 = a / b
x2 = -a * k
x3 = b^2
x4 = b^2 / c * k^n
x5 = a ∠ th
x6 = abs(a) ∠ (th * 2)
x7 = (b -- c) || (c - b)
x8 = 1 / (g -- g)
x9 = a - a * k
x10 = k^-n
x11 = (b + c)^2 / (1 Ω)
x12 = sqrt(abs(a) * abs(a)) - -a
x13 = a * k ∠ th
x14 = a / n ∠ -th
x15 = -2 * b || c
x16 = b || -c
x17 = (a < a * k) * n
x18 = 2 * b -- c
x19 = abs(a) >= 1 V
x20 = -(k^n) + (-k)^n
";
    let sheet = Sheet::from_text("t.ohm", src);
    let m = compile(&sheet);
    assert!(!m.has_errors());
    let e = Engine::new(m);
    let r = report::build(&sheet, &e, &[], Style { digits: 15 });
    assert!(r.steps.len() >= 12);
    for s in &r.steps {
        let again = crate::common::eval_expr(src, &s.substituted);
        let want = C64::new(s.results[0].value.re.unwrap(), s.results[0].value.im.unwrap());
        crate::assert_close!(again, want, 1e-9);
    }
    let x1 = r.steps.iter().find(|s| s.name == "x1").unwrap();
    assert_eq!(x1.substituted, "(-5 V) / (3 - j4) Ω");
    let x3 = r.steps.iter().find(|s| s.name == "x3").unwrap();
    assert_eq!(x3.substituted, "((3 - j4) Ω)^2");
    let x5 = r.steps.iter().find(|s| s.name == "x5").unwrap();
    assert_eq!(x5.substituted, "(-5 V) ∠ (-30°)");
    // The magnitude of `∠` is the whole product: no bracket needed, and
    // none added.
    let x13 = r.steps.iter().find(|s| s.name == "x13").unwrap();
    assert_eq!(x13.substituted, "(-5 V) × 0.25 ∠ (-30°)");
    // A minus on a number literal stays part of the number before `||`.
    let x15 = r.steps.iter().find(|s| s.name == "x15").unwrap();
    assert_eq!(x15.substituted, "-2 × (3 - j4) Ω || j2 Ω");
}

#[test]
fn notes_must_name_a_cell() {
    let d = crate::common::errors("Vs = 1 V\n@note Vx \"text\"\n");
    assert!(d
        .iter()
        .any(|d| d.message.contains("`Vx`") && d.hint.as_deref() == Some("did you mean `Vs`?")));
    let d = crate::common::errors("Vs = 1 V\n@note Vs\n");
    assert!(d.iter().any(|d| d.message.contains("`@note` takes")));
}

/// The example reports committed under sheets-demo/reports/ are what the
/// tool makes of the demo sheet now (see DEVELOPERS.md to regenerate).
#[test]
fn committed_demo_reports_are_current() {
    let sheet = crate::common::repo("sheets-demo/pump-feeder-p3.ohm");
    let d = tempfile::tempdir().unwrap();
    for ext in ["md", "html"] {
        let out = d.path().join(format!("pump-feeder-p3.{ext}"));
        ohmsheet()
            .args(["report", sheet.to_str().unwrap(), "-o", out.to_str().unwrap()])
            .assert()
            .code(0);
    }
    let mut n = 0;
    for e in std::fs::read_dir(d.path()).unwrap() {
        let name = e.unwrap().file_name().to_string_lossy().into_owned();
        let made = std::fs::read(d.path().join(&name)).unwrap();
        let committed = std::fs::read(crate::common::repo(&format!("sheets-demo/reports/{name}")))
            .unwrap_or_else(|_| panic!("sheets-demo/reports/{name} is missing: regenerate (DEVELOPERS.md)"));
        assert!(
            made == committed,
            "sheets-demo/reports/{name} is stale: regenerate it (DEVELOPERS.md)"
        );
        n += 1;
    }
    assert_eq!(n, 4, "the md and html reports and the two plots");
}

/// Declared sweeps become plots: inline SVG in HTML; SVG files beside a
/// Markdown file, or `data:` images when the Markdown goes to stdout.
#[test]
fn declared_sweeps_are_plotted() {
    let d = folder(&[("rl.ohm", SHEET), ("lib/parts.ohm", LIB)]);
    // A folder that does not exist: an error, nothing written, no panic.
    ohmsheet()
        .current_dir(d.path())
        .args(["report", "rl.ohm", "-o", "out/rl.md"])
        .assert()
        .code(2);
    std::fs::create_dir(d.path().join("out")).unwrap();
    ohmsheet()
        .current_dir(d.path())
        .args(["report", "rl.ohm", "-o", "out/rl.md"])
        .assert()
        .code(1);
    let md = std::fs::read_to_string(d.path().join("out/rl.md")).unwrap();
    assert!(md.contains("### 4.1 Branch current against supply voltage"), "{md}");
    assert!(md.contains("V from 200 V to 260 V, 13 points; shown: I."), "{md}");
    assert!(
        md.contains("![Branch current against supply voltage](rl.plot-1.svg)"),
        "{md}"
    );
    let svg = std::fs::read_to_string(d.path().join("out/rl.plot-1.svg")).unwrap();
    assert!(svg.starts_with("<svg") && svg.contains("viewBox"), "{svg}");
    let md = report_text(d.path(), "rl.ohm", "md");
    assert!(
        md.contains("](data:image/svg+xml;utf8,%3Csvg"),
        "no data image in stdout Markdown"
    );
}

/// Any number of digits asked for is honoured, and the checks table never
/// shows fewer than asked.
#[test]
fn many_digits_are_fine() {
    let d = folder(&[("rl.ohm", SHEET), ("lib/parts.ohm", LIB)]);
    let out = ohmsheet()
        .current_dir(d.path())
        .args(["report", "rl.ohm", "--format", "md", "--digits", "15"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1), "{}", String::from_utf8_lossy(&out.stderr));
    let md = String::from_utf8(out.stdout).unwrap();
    // By hand 230 (8 − j6) / 100 = 18.4 − j13.8, which 15 digits show as is.
    assert!(md.contains("  = 18.4 - j13.8 A\n"), "{md}");
}
