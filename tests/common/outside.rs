//! Tests that need a program from outside the project (a browser, an
//! editor). Under CI (`CI=true`) a missing program fails the test: CI
//! installs them (.ci/run), so a missing one is a broken CI, not a pass.
//! Elsewhere the test is skipped, and the skip is shown, not hidden: a line
//! on the terminal at once (written past the test harness's capture), and a
//! count with the names after the test summary.

use std::io::Write;
use std::path::PathBuf;
use std::sync::{Mutex, Once};

/// What to do about a test that needs a program.
#[derive(Debug, PartialEq, Eq)]
pub enum Outcome {
    Run(PathBuf),
    /// Outside CI, the program is missing: skip, and say so.
    Skip,
    /// Under CI, the program is missing: fail.
    Fail,
}

/// Whether this run is a CI run (`CI` set to `true` or `1`, as CI
/// services set it).
pub fn under_ci(ci: Option<&str>) -> bool {
    ci.is_some_and(|v| v.eq_ignore_ascii_case("true") || v == "1")
}

pub fn decide(found: Option<PathBuf>, ci: Option<&str>) -> Outcome {
    match found {
        Some(p) => Outcome::Run(p),
        None if under_ci(ci) => Outcome::Fail,
        None => Outcome::Skip,
    }
}

/// The first of `names` on PATH, or the path in the environment variable
/// `env_override` when set.
pub fn find(names: &[&str], env_override: &str) -> Option<PathBuf> {
    if let Some(p) = std::env::var_os(env_override) {
        return Some(PathBuf::from(p));
    }
    let path = std::env::var_os("PATH").unwrap_or_default();
    names
        .iter()
        .flat_map(|n| std::env::split_paths(&path).map(move |d| d.join(n)))
        .find(|p| p.is_file())
}

static SKIPPED: Mutex<Vec<String>> = Mutex::new(Vec::new());
static AT_EXIT: Once = Once::new();

extern "C" fn summary() {
    let list = SKIPPED.lock().map(|l| l.clone()).unwrap_or_default();
    if list.is_empty() {
        return;
    }
    let mut text = format!(
        "\nSKIPPED {} test{} for want of an outside program (not run, not counted as checked; under CI=true they fail):\n",
        list.len(),
        if list.len() == 1 { "" } else { "s" }
    );
    for l in &list {
        text.push_str(&format!("  {l}\n"));
    }
    // Straight to the file descriptor: std's handles may be gone this late.
    // SAFETY: writing a valid buffer to fd 2.
    unsafe {
        libc::write(2, text.as_ptr().cast(), text.len());
    }
}

/// Python 3 with the modules `modules` (numpy, mpmath), for the tests that
/// run the verifier and reference scripts. `OHMSHEET_PYTHON` names another
/// interpreter. A python without one of the modules counts as missing:
/// under CI the test fails, elsewhere it is skipped and the skip shown.
pub fn need_python(test: &str, modules: &[&str]) -> Option<PathBuf> {
    const ENV: &str = "OHMSHEET_PYTHON";
    let found = find(&["python3"], ENV).filter(|p| {
        let import = format!("import {}", modules.join(", "));
        std::process::Command::new(p)
            .args(["-c", &import])
            .output()
            .is_ok_and(|o| o.status.success())
    });
    let what = format!("python3 with {}", modules.join(" and "));
    settle(test, &what, found, ENV, "apt-get install python3-numpy python3-mpmath")
}

/// The program a test needs (`what`: e.g. "Chromium"; `names`: the
/// commands to look for; `env_override`: a variable naming it; `how`: how
/// to install it). `None` means the test is skipped, and the skip has been
/// recorded and shown; under CI a missing program panics.
pub fn need(test: &str, what: &str, names: &[&str], env_override: &str, how: &str) -> Option<PathBuf> {
    settle(test, what, find(names, env_override), env_override, how)
}

/// Run, fail (under CI) or skip and record the skip, for a program found
/// or not.
fn settle(test: &str, what: &str, found: Option<PathBuf>, env_override: &str, how: &str) -> Option<PathBuf> {
    match decide(found, std::env::var("CI").ok().as_deref()) {
        Outcome::Run(p) => Some(p),
        Outcome::Fail => panic!(
            "{test} needs {what}, which is not installed, and this is a CI run (CI=true): \
             CI must install it ({how}; .ci/run does) or set {env_override}"
        ),
        Outcome::Skip => {
            let line = format!("{test}: no {what} ({how}, or set {env_override})");
            let _ = writeln!(std::io::stderr(), "SKIPPED {line}");
            SKIPPED.lock().unwrap().push(line);
            // SAFETY: registering a plain function to run at exit.
            AT_EXIT.call_once(|| unsafe {
                libc::atexit(summary);
            });
            None
        }
    }
}
