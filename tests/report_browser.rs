//! The HTML report in a real browser: headless Chromium loads the file,
//! its DOM is checked (the checks table, a result value), a screenshot is
//! saved and the page is printed to PDF.
//!
//! .ci/run installs Chromium from the system packages. Under CI (`CI=true`)
//! a missing Chromium fails this test; elsewhere it is skipped and the skip
//! is shown in the test output (`common::outside`).

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use crate::common::ohmsheet;
use crate::report::{folder, LIB, SHEET};

/// Run the browser headless with a fresh profile; its stdout.
fn chromium(bin: &Path, profile: &Path, extra: &[String], page: &Path) -> String {
    let mut cmd = Command::new(bin);
    cmd.args([
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--hide-scrollbars",
    ])
    .arg(format!("--user-data-dir={}", profile.display()))
    .args(extra)
    .arg(format!("file://{}", page.display()))
    .stdin(Stdio::null())
    .stdout(Stdio::piped())
    .stderr(Stdio::piped());
    let mut child = cmd.spawn().expect("start chromium");
    // Generous: a loaded machine starts a browser slowly.
    let end = Instant::now() + Duration::from_secs(240);
    loop {
        if let Some(_status) = child.try_wait().unwrap() {
            break;
        }
        if Instant::now() > end {
            let _ = child.kill();
            let _ = child.wait();
            panic!("chromium did not finish within 240 s");
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    let out = child.wait_with_output().unwrap();
    String::from_utf8_lossy(&out.stdout).into_owned()
}

#[test]
fn html_report_in_a_real_browser() {
    let Some(bin) = crate::common::outside::need(
        "report_browser::html_report_in_a_real_browser",
        "Chromium",
        &["chromium", "chromium-browser"],
        "OHMSHEET_CHROMIUM",
        "apt-get install chromium",
    ) else {
        return;
    };
    let d = folder(&[("rl.ohm", SHEET), ("lib/parts.ohm", LIB)]);
    ohmsheet()
        .current_dir(d.path())
        .args(["report", "rl.ohm", "--format", "html", "-o", "rl.html"])
        .assert()
        .code(1);
    let page = d.path().join("rl.html");
    let profile = d.path().join("profile");

    // The DOM after the browser parsed it.
    let dom = chromium(&bin, &profile, &["--dump-dom".into()], &page);
    assert!(dom.contains("<table id=\"checks\">"), "no checks table in:\n{dom}");
    let checks = dom.split("<table id=\"checks\">").nth(1).unwrap();
    let checks = &checks[..checks.find("</table>").unwrap()];
    assert_eq!(checks.matches("<tr class=\"passed\">").count(), 2, "{checks}");
    assert_eq!(checks.matches("<tr class=\"failed\">").count(), 1, "{checks}");
    assert!(checks.contains("<td class=\"verdict fail\">FAIL</td>"), "{checks}");
    // 4232 W − 4000 W = 232 W, allowed 1 % of 4000 W = 40 W.
    assert!(checks.contains("<td class=\"num\">232 W</td>"), "{checks}");
    // The step for I: 230 V / (8 + j6) Ω = 18.4 − j13.8 A = 23 A ∠ −36.87°.
    let step = dom.split("id=\"step-I\"").nth(1).expect("step I");
    let step = &step[..step.find("</div>").unwrap()];
    assert!(step.contains("230 V / (8 + j6) Ω"), "{step}");
    assert!(step.contains("18.4 - j13.8 A"), "{step}");
    assert!(step.contains("23 ∠ -36.87° A"), "{step}");
    assert!(dom.contains("id=\"caution\""), "caution");
    // The declared sweep, drawn inline.
    let fig = dom
        .split("<figure class=\"plot\" id=\"plot-1\">")
        .nth(1)
        .expect("plot figure");
    assert!(fig.contains("<svg"), "no SVG in the plot figure");
    assert!(dom.contains("1 of 3 checks FAIL."), "summary");

    // A screenshot, kept where a developer can look at it.
    let keep = PathBuf::from(env!("CARGO_TARGET_TMPDIR"));
    let shot = keep.join("report-screenshot.png");
    let _ = std::fs::remove_file(&shot);
    chromium(
        &bin,
        &profile,
        &[
            format!("--screenshot={}", shot.display()),
            "--window-size=1000,1500".into(),
        ],
        &page,
    );
    let png = std::fs::read(&shot).expect("screenshot written");
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    assert!(png.len() > 20_000, "a blank page? {} bytes", png.len());
    eprintln!("screenshot: {}", shot.display());

    // Printing works (the print CSS is exercised by the browser's layout).
    let pdf = keep.join("report-print.pdf");
    let _ = std::fs::remove_file(&pdf);
    chromium(
        &bin,
        &profile,
        &[
            format!("--print-to-pdf={}", pdf.display()),
            "--no-pdf-header-footer".into(),
        ],
        &page,
    );
    let bytes = std::fs::read(&pdf).expect("PDF written");
    assert!(bytes.starts_with(b"%PDF-"), "not a PDF");
}

/// The rule for tests that need an outside program: under CI a missing
/// program is a failure, outside CI a skip; a present one runs.
#[test]
fn a_missing_program_fails_under_ci_and_is_skipped_elsewhere() {
    use crate::common::outside::{decide, under_ci, Outcome};
    let p = PathBuf::from("/usr/bin/chromium");
    assert_eq!(decide(Some(p.clone()), Some("true")), Outcome::Run(p.clone()));
    assert_eq!(decide(Some(p.clone()), None), Outcome::Run(p));
    assert_eq!(decide(None, Some("true")), Outcome::Fail);
    assert_eq!(decide(None, Some("TRUE")), Outcome::Fail);
    assert_eq!(decide(None, Some("1")), Outcome::Fail);
    assert_eq!(decide(None, None), Outcome::Skip);
    assert_eq!(decide(None, Some("false")), Outcome::Skip);
    assert!(!under_ci(Some("")));
}

/// Run outside CI without the browser, the test binary says the test was
/// skipped, after the summary line (not hidden in captured output); under
/// CI=true the same run fails.
#[test]
fn a_skipped_browser_test_is_shown_and_fails_under_ci() {
    let exe = std::env::current_exe().unwrap();
    let run = |ci: Option<&str>| {
        let mut cmd = Command::new(&exe);
        cmd.args([
            "--exact",
            "report_browser::html_report_in_a_real_browser",
            "--test-threads=1",
        ])
        .env("PATH", "/nonexistent")
        .env_remove("OHMSHEET_CHROMIUM")
        .env_remove("CI");
        if let Some(v) = ci {
            cmd.env("CI", v);
        }
        cmd.output().unwrap()
    };
    let out = run(None);
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "{err}");
    assert!(
        err.contains("SKIPPED report_browser::html_report_in_a_real_browser: no Chromium"),
        "{err}"
    );
    assert!(err.contains("SKIPPED 1 test for want of an outside program"), "{err}");
    let ci = run(Some("true"));
    assert!(!ci.status.success());
    let text = String::from_utf8_lossy(&ci.stdout);
    assert!(text.contains("this is a CI run"), "{text}");
}
