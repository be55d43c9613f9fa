//! Confinement: a sheet can do nothing but compute. The core (parsing,
//! units, compiling, evaluating, the function library) has no way to reach
//! files, processes, the environment or the network, and a sheet passed on
//! by someone else reads nothing outside its own folder tree.

use std::path::Path;

use predicates::prelude::*;

use crate::common::{ohmsheet, repo};

/// Source directories that must stay pure computation.
const CORE: &[&str] = &["src/syntax", "src/units", "src/engine", "src/funcs"];

/// What the core must not use: file, process, environment and network
/// access, raw OS calls, and foreign code.
const FORBIDDEN: &[&str] = &[
    "std::fs",
    "std::process",
    "std::env",
    "std::net",
    "std::os",
    "std::io::stdin",
    "File::",
    "OpenOptions",
    "Command::new",
    "env!(",
    "option_env!(",
    "libc::",
    "nix::",
    "extern \"C\"",
    "#[link",
];

/// Forbidden uses in one file's text, with line numbers; `//` comments are
/// ignored, and grouped imports (`use std::{fs, io}`) are caught too.
fn forbidden_uses(text: &str) -> Vec<(usize, String)> {
    let mut found = Vec::new();
    let mut in_tests = false;
    for (i, line) in text.lines().enumerate() {
        let code = line.split("//").next().unwrap_or("");
        // Unit tests at the end of a file may use the file system.
        if code.trim_start().starts_with("#[cfg(test)]") {
            in_tests = true;
        }
        if in_tests {
            continue;
        }
        for f in FORBIDDEN {
            if code.contains(f) {
                found.push((i + 1, f.to_string()));
            }
        }
        if let Some(rest) = code.split("use std::{").nth(1) {
            for m in ["fs", "process", "env", "net", "os"] {
                if rest.split(|c: char| !c.is_alphanumeric() && c != '_').any(|w| w == m) {
                    found.push((i + 1, format!("std::{m}")));
                }
            }
        }
    }
    found
}

fn rust_files(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    for e in std::fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

#[test]
fn the_core_has_no_io() {
    let mut files = Vec::new();
    for d in CORE {
        rust_files(&repo(d), &mut files);
    }
    assert!(files.len() >= 10, "only {} files found", files.len());
    let mut bad = Vec::new();
    for f in &files {
        let text = std::fs::read_to_string(f).unwrap();
        for (line, what) in forbidden_uses(&text) {
            bad.push(format!("{}:{line}: {what}", f.display()));
        }
    }
    assert!(
        bad.is_empty(),
        "the core must only compute (ARCHITECTURE.md, invariants):\n{}",
        bad.join("\n")
    );
}

/// The scan itself finds what it looks for.
#[test]
fn the_scan_catches_io() {
    assert_eq!(forbidden_uses("use std::fs::read;\n").len(), 1);
    assert_eq!(forbidden_uses("use std::{collections::HashMap, env};\n").len(), 1);
    assert_eq!(forbidden_uses("let c = std::process::Command::new(\"sh\");\n").len(), 2);
    assert!(forbidden_uses("// std::fs in a comment\nlet x = 1;\n").is_empty());
    assert!(forbidden_uses("#[cfg(test)]\nmod tests { use std::fs; }\n").is_empty());
}

/// A folder with a sheet, and a secret outside it that no sheet may read.
struct Site {
    _root: tempfile::TempDir,
    tree: std::path::PathBuf,
    outside: std::path::PathBuf,
}

const SECRET: &str = "s3cr3t-c4n4ry";

fn site() -> Site {
    let root = tempfile::tempdir().unwrap();
    let tree = root.path().join("project");
    let outside = root.path().join("elsewhere");
    std::fs::create_dir_all(tree.join("lib")).unwrap();
    std::fs::create_dir_all(&outside).unwrap();
    std::fs::write(outside.join("secret.ohm"), format!("{SECRET} = 1 V\n")).unwrap();
    Site {
        _root: root,
        tree,
        outside,
    }
}

fn run_sheet(s: &Site, text: &str) -> assert_cmd::assert::Assert {
    let p = s.tree.join("main.ohm");
    std::fs::write(&p, format!("a = 1 V\n{text}\n")).unwrap();
    ohmsheet()
        .current_dir(&s.tree)
        .env("OHM_OUTSIDE", &s.outside)
        .env("HOME", &s.outside)
        .args(["run", p.to_str().unwrap()])
        .timeout(std::time::Duration::from_secs(20))
        .assert()
}

fn refused(a: assert_cmd::assert::Assert) {
    a.code(2)
        .stderr(predicate::str::contains("error[include-path]"))
        .stdout(predicate::str::contains(SECRET).not())
        .stderr(predicate::str::contains(SECRET).not());
}

#[test]
fn include_escapes_are_refused() {
    let s = site();
    let abs = s.outside.join("secret.ohm");
    for inc in [
        "../elsewhere/secret.ohm".to_string(),
        "lib/../../elsewhere/secret.ohm".to_string(),
        "./../elsewhere/./secret.ohm".to_string(),
        abs.display().to_string(),
        // no expansion of the environment or the home folder
        "$OHM_OUTSIDE/secret.ohm".to_string(),
        "${OHM_OUTSIDE}/secret.ohm".to_string(),
        "~/secret.ohm".to_string(),
        // special files are not sheets
        "/proc/self/environ".to_string(),
        "../../../../../../../../proc/self/environ".to_string(),
        "/dev/zero".to_string(),
    ] {
        refused(run_sheet(&s, &format!("@include \"{inc}\"")));
    }
}

#[test]
fn links_out_of_the_tree_are_refused() {
    let s = site();
    std::os::unix::fs::symlink(s.outside.join("secret.ohm"), s.tree.join("lib/file-link.ohm")).unwrap();
    std::os::unix::fs::symlink(&s.outside, s.tree.join("lib/dir-link")).unwrap();
    // a chain of links that ends outside
    std::os::unix::fs::symlink(s.tree.join("lib/file-link.ohm"), s.tree.join("lib/hop.ohm")).unwrap();
    for inc in ["lib/file-link.ohm", "lib/dir-link/secret.ohm", "lib/hop.ohm"] {
        refused(run_sheet(&s, &format!("@include \"{inc}\"")));
    }
    // A library inside the tree that itself tries to leave is refused too.
    std::fs::write(
        s.tree.join("lib/inner.ohm"),
        "@include \"../../elsewhere/secret.ohm\"\nb = 2 V\n",
    )
    .unwrap();
    refused(run_sheet(&s, "@include \"lib/inner.ohm\""));
}

/// Things that are not regular files never block or get read: a FIFO
/// would hang a reader forever, a folder is not a sheet.
#[test]
fn special_files_in_the_tree_are_refused_without_hanging() {
    let s = site();
    let fifo = s.tree.join("lib/pipe.ohm");
    let st = std::process::Command::new("mkfifo").arg(&fifo).status();
    if st.map(|s| s.success()).unwrap_or(false) {
        refused(run_sheet(&s, "@include \"lib/pipe.ohm\""));
    } else {
        panic!("mkfifo is needed for this test (coreutils)");
    }
    std::fs::create_dir_all(s.tree.join("lib/folder.ohm")).unwrap();
    refused(run_sheet(&s, "@include \"lib/folder.ohm\""));
}

/// A sheet has no function or directive that reaches the system: names
/// that would in other tools are unknown here.
#[test]
fn no_function_reaches_the_system() {
    let s = site();
    for f in [
        "system(1)",
        "exec(1)",
        "env(1)",
        "getenv(1)",
        "read(1)",
        "open(1)",
        "shell(1)",
        "load(1)",
    ] {
        run_sheet(&s, &format!("x = {f}"))
            .code(2)
            .stderr(predicate::str::contains("error[unknown-function]"));
    }
    for d in ["@exec \"ls\"", "@shell ls", "@env HOME", "@output \"../x\""] {
        run_sheet(&s, d)
            .code(2)
            .stderr(predicate::str::contains("error[unknown-directive]"));
    }
    // and nothing was written beside the sheet
    let names: Vec<String> = std::fs::read_dir(&s.tree)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    let mut names = names;
    names.sort();
    assert_eq!(names, ["lib", "main.ohm"]);
}

/// A sheet from someone else cannot put markup into an HTML report: every
/// string it controls (directives, notes, comments, sweep titles) is
/// escaped, so opening the report runs nothing.
#[test]
fn report_html_escapes_what_the_sheet_says() {
    let d = tempfile::tempdir().unwrap();
    let sheet = d.path().join("x.ohm");
    std::fs::write(
        &sheet,
        "@title \"<script>alert(1)</script> T\"\n\
         @project \"<img src=x onerror=alert(2)>\"\n\
         @note I \"<script>alert(3)</script>\"\n\
         V = 230 V   # <script>alert(4)</script> <a href=\"javascript:alert(6)\">x</a>\n\
         C = 100 µF\n\
         I = V * 377 rad/s * C\n\
         @sweep \"<script>alert(5)</script>\" C = 10 µF .. 100 µF, 11 points : I\n",
    )
    .unwrap();
    let out = d.path().join("x.html");
    ohmsheet()
        .args([
            "report",
            sheet.to_str().unwrap(),
            "--format",
            "html",
            "-o",
            out.to_str().unwrap(),
        ])
        .assert()
        .code(0);
    let html = std::fs::read_to_string(&out).unwrap();
    for n in 1..=6 {
        assert!(
            html.contains(&format!("alert({n})")),
            "alert({n}) should be shown as text"
        );
    }
    let lower = html.to_lowercase();
    for markup in ["<script", "<img", "<a href"] {
        assert!(!lower.contains(markup), "the report contains `{markup}`");
    }
}

/// Nothing a sheet or a cases table holds reaches the terminal as a
/// control sequence: a sheet with one is refused, and every message that
/// quotes it shows `?` instead. (ESC ] … BEL sets a terminal's title; other
/// sequences clear the screen, move the cursor or, on some terminals,
/// write the clipboard.)
#[test]
fn no_control_sequences_reach_the_terminal() {
    let d = tempfile::tempdir().unwrap();
    let sheet = d.path().join("t.ohm");
    std::fs::write(
        &sheet,
        "V = 230 V # \x1b]0;owned\x07\x1b[2J\nZ = 5 Ω\nI = V / Z \u{9b}31m\n@amplitude \x1b[5m\n",
    )
    .unwrap();
    let a = ohmsheet().args(["run", sheet.to_str().unwrap()]).assert().code(2);
    let out = a.get_output();
    for stream in [&out.stdout, &out.stderr] {
        let text = String::from_utf8_lossy(stream);
        assert!(
            !text.chars().any(ohmsheet::diag::is_unsafe_char),
            "a control character reached the output:\n{text:?}"
        );
    }
    assert!(String::from_utf8_lossy(&out.stderr).contains("error[control-character]"));

    // A cases table's bad values are quoted on stderr, filtered too.
    std::fs::write(&sheet, "V = 230 V\nZ = 5 Ω\nI = V / Z\n").unwrap();
    let cases = d.path().join("c.csv");
    std::fs::write(&cases, "V\n\x1b]0;owned\x07 V\n\u{202e}1 V\n").unwrap();
    let res = d.path().join("r.csv");
    let a = ohmsheet()
        .args([
            "batch",
            sheet.to_str().unwrap(),
            "--cases",
            cases.to_str().unwrap(),
            "--out",
            res.to_str().unwrap(),
        ])
        .assert()
        .code(1);
    let err = String::from_utf8_lossy(&a.get_output().stderr).into_owned();
    assert!(err.contains("case 1"), "{err}");
    assert!(!err.chars().any(ohmsheet::diag::is_unsafe_char), "{err:?}");
}

/// The filter itself: unsafe characters become `?`, one per byte, so
/// offsets into the text stay valid; ordinary text is untouched.
#[test]
fn terminal_safe_keeps_offsets() {
    use ohmsheet::diag::terminal_safe;
    assert_eq!(terminal_safe("Z = 5 Ω\t# µF ∠ 30°"), "Z = 5 Ω\t# µF ∠ 30°");
    let s = "a\x1bb\u{9b}c\u{202e}d";
    let t = terminal_safe(s);
    assert_eq!(t, "a?b??c???d");
    assert_eq!(t.len(), s.len());
}
