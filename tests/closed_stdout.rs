//! A reader that closes the pipe early (`ohmsheet run s.ohm | head`) ends
//! the program quietly: no panic, nothing on stderr, exit code 0 (common
//! practice for command-line filters).

use std::io::Read;
use std::process::{Command, Stdio};

/// Run ohmsheet with `args`, read `keep` bytes of its output and close the
/// pipe, then collect the exit status and everything it wrote to stderr.
/// Each command below writes well over a pipe's buffer (64 KiB on Linux),
/// so the write after the close is certain to fail.
fn close_early(args: &[&str], keep: usize) -> (Option<i32>, String) {
    let mut child = Command::new(assert_cmd::cargo::cargo_bin("ohmsheet"))
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("ohmsheet starts");
    let mut out = child.stdout.take().unwrap();
    let mut head = vec![0u8; keep];
    out.read_exact(&mut head)
        .unwrap_or_else(|e| panic!("{args:?}: no output before the close: {e}"));
    drop(out);
    let mut err = String::new();
    child.stderr.take().unwrap().read_to_string(&mut err).unwrap();
    (child.wait().unwrap().code(), err)
}

fn big_sheet() -> tempfile::NamedTempFile {
    let mut src = String::from("f = 50 Hz\n");
    for i in 0..4000 {
        src.push_str(&format!("Z{i} = ({i} + j{}) Ω\n", i % 97 + 1));
    }
    let f = tempfile::Builder::new().suffix(".ohm").tempfile().unwrap();
    std::fs::write(f.path(), src).unwrap();
    f
}

#[test]
fn every_command_ends_quietly_when_the_reader_goes_away() {
    let sheet = big_sheet();
    let path = sheet.path().to_str().unwrap();
    let cases: Vec<Vec<&str>> = vec![
        vec!["run", path],
        vec!["run", path, "--format", "csv"],
        vec!["run", path, "--format", "json"],
        vec!["report", path],
        vec![
            "sweep",
            path,
            "--vary",
            "f=1Hz..1kHz",
            "--points",
            "20000",
            "--show",
            "Z1",
        ],
        vec![
            "sweep",
            path,
            "--vary",
            "f=1Hz..1kHz",
            "--points",
            "20000",
            "--show",
            "Z1",
            "--csv",
            "-",
        ],
    ];
    for args in cases {
        let (code, err) = close_early(&args, 10);
        assert_eq!(code, Some(0), "{args:?}: stderr {err}");
        assert!(err.is_empty(), "{args:?}: stderr {err}");
    }
}

#[test]
fn listings_end_quietly_when_the_reader_goes_away() {
    for args in [["functions"], ["units"]] {
        let (code, err) = close_early(&args, 10);
        assert_eq!(code, Some(0), "{args:?}: stderr {err}");
        assert!(err.is_empty(), "{args:?}: stderr {err}");
    }
}
