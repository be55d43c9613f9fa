//! One way to choose output across `run`, `report`, `sweep`, `solve`,
//! `batch` and `check`: `--format`, `-o/--output FILE`, `--digits`, and
//! `--complex rect|polar` where values have two parts; list options take
//! `a,b` or the option repeated; every `--help` ends with examples.
//!
//! Expected values: Ohm's law (12 V across 4 Ω is 3 A) and the resonance
//! of a series LC, f = 1/(2π√(LC)) (common practice, worked by hand).

use std::path::Path;

use predicates::prelude::*;

use crate::common::ohmsheet;
use crate::report::folder;

const OHM: &str = "V = 12 V\nR = 4 Ω\nI = V / R\ncheck I ~= 3 A +- 0.1%\n";
/// A series R-L-C: 1 mH with 1 µF resonates at 1/(2π√(1e-9)) ≈ 5032.9 Hz.
const RLC: &str =
    "V = 10 V\nR = 10 Ω\nL = 1 mH\nC = 1 µF\nf = 1 kHz\nw = 2*pi*f\nZ = R + j*w*L + 1/(j*w*C)\nI = V / Z\n";

fn stdout_of(dir: &Path, args: &[&str]) -> String {
    let out = ohmsheet().current_dir(dir).args(args).output().unwrap();
    assert!(
        out.status.code().is_some_and(|c| c <= 1),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

fn read(dir: &Path, name: &str) -> String {
    std::fs::read_to_string(dir.join(name)).unwrap_or_else(|e| panic!("{name}: {e}"))
}

#[test]
fn run_writes_each_format_to_a_file_with_output_as_it_prints_it() {
    let d = folder(&[("s.ohm", OHM)]);
    for format in ["table", "json", "csv"] {
        let printed = stdout_of(d.path(), &["run", "s.ohm", "--format", format]);
        let file = format!("out.{format}");
        ohmsheet()
            .current_dir(d.path())
            .args(["run", "s.ohm", "--format", format, "-o", &file])
            .assert()
            .code(0)
            .stdout("");
        assert_eq!(read(d.path(), &file), printed, "{format}");
        ohmsheet()
            .current_dir(d.path())
            .args(["run", "s.ohm", "--format", format, "--output", &file])
            .assert()
            .code(0);
        assert_eq!(read(d.path(), &file), printed, "{format}");
    }
    let json: serde_json::Value = serde_json::from_str(&read(d.path(), "out.json")).unwrap();
    assert!(json.is_object());
    // The sheet itself is never the output.
    ohmsheet()
        .current_dir(d.path())
        .args(["run", "s.ohm", "-o", "s.ohm"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("would be overwritten"));
    assert_eq!(read(d.path(), "s.ohm"), OHM);
}

#[test]
fn report_and_check_take_the_same_format_and_output_options() {
    let d = folder(&[("s.ohm", OHM)]);
    ohmsheet()
        .current_dir(d.path())
        .args(["report", "s.ohm", "--format", "json", "-o", "r.json", "--digits", "6"])
        .assert()
        .code(0);
    serde_json::from_str::<serde_json::Value>(&read(d.path(), "r.json")).unwrap();
    ohmsheet()
        .current_dir(d.path())
        .args([
            "check", "s.ohm", "--format", "json", "--output", "c.json", "--digits", "6",
        ])
        .assert()
        .code(0);
    serde_json::from_str::<serde_json::Value>(&read(d.path(), "c.json")).unwrap();
}

#[test]
fn batch_output_has_the_common_name_and_keeps_out() {
    let d = folder(&[("s.ohm", OHM), ("c.csv", "R [Ω]\n4\n")]);
    for flag in ["-o", "--output", "--out"] {
        let file = format!("r{}.csv", flag.trim_start_matches('-'));
        ohmsheet()
            .current_dir(d.path())
            .args([
                "batch",
                "s.ohm",
                "--cases",
                "c.csv",
                flag,
                &file,
                "--show",
                "I",
                "--complex",
                "polar",
            ])
            .assert()
            .code(0);
        // 12 V / 4 Ω = 3 A at 0°.
        let text = read(d.path(), &file);
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines[0], "R [Ω],I.mag [A],I.ang [°]", "{flag}");
        let row: Vec<f64> = lines[1].split(',').map(|x| x.parse().unwrap()).collect();
        assert_eq!(row, [4.0, 3.0, 0.0], "{flag}");
    }
}

#[test]
fn sweep_format_and_output_equal_the_csv_and_json_shorthands() {
    let d = folder(&[("s.ohm", RLC)]);
    let base = [
        "sweep",
        "s.ohm",
        "--vary",
        "f=1kHz..10kHz",
        "--points",
        "10",
        "--show",
        "I",
    ];
    let run = |extra: &[&str]| {
        let mut args: Vec<&str> = base.to_vec();
        args.extend_from_slice(extra);
        ohmsheet().current_dir(d.path()).args(&args).assert().code(0);
    };
    run(&["--csv", "a.csv"]);
    run(&["--format", "csv", "-o", "b.csv"]);
    assert_eq!(read(d.path(), "a.csv"), read(d.path(), "b.csv"));
    run(&["--json", "a.json"]);
    run(&["--format", "json", "--output", "b.json"]);
    assert_eq!(read(d.path(), "a.json"), read(d.path(), "b.json"));
    // To standard output without -o.
    let mut args: Vec<&str> = base.to_vec();
    args.extend_from_slice(&["--format", "csv"]);
    assert_eq!(stdout_of(d.path(), &args), read(d.path(), "a.csv"));
    // --complex is --parts.
    run(&["--complex", "rect", "--format", "csv", "-o", "c.csv"]);
    run(&["--parts", "rect", "--format", "csv", "-o", "d.csv"]);
    assert_eq!(read(d.path(), "c.csv"), read(d.path(), "d.csv"));
    assert!(read(d.path(), "c.csv").lines().next().unwrap().contains("I.re"));
    // The table cannot go to a file; the shorthands do not mix with --format.
    let mut args: Vec<&str> = base.to_vec();
    args.extend_from_slice(&["-o", "t.txt"]);
    ohmsheet()
        .current_dir(d.path())
        .args(&args)
        .assert()
        .code(2)
        .stderr(predicate::str::contains("needs --format csv or --format json"));
    let mut args: Vec<&str> = base.to_vec();
    args.extend_from_slice(&["--csv", "x.csv", "--format", "json"]);
    ohmsheet().current_dir(d.path()).args(&args).assert().code(2);
}

#[test]
fn list_options_take_commas_or_repeats() {
    let d = folder(&[("s.ohm", RLC)]);
    let grid = |extra: &[&str]| {
        let mut args = vec![
            "sweep",
            "s.ohm",
            "--vary",
            "f=1kHz..10kHz",
            "--vary",
            "R=1Ω..10Ω",
            "--show",
            "abs(I)",
            "--format",
            "csv",
        ];
        args.extend_from_slice(extra);
        stdout_of(d.path(), &args)
    };
    let commas = grid(&["--points", "4,3"]);
    let repeated = grid(&["--points", "4", "--points", "3"]);
    assert_eq!(commas, repeated);
    assert_eq!(commas.lines().count(), 1 + 4 * 3, "{commas}");
    let shows = |extra: &[&str]| {
        let mut args = vec![
            "sweep",
            "s.ohm",
            "--vary",
            "f=1kHz..10kHz",
            "--points",
            "3",
            "--format",
            "csv",
        ];
        args.extend_from_slice(extra);
        stdout_of(d.path(), &args)
    };
    assert_eq!(shows(&["--show", "I,Z"]), shows(&["--show", "I", "--show", "Z"]));
    let logs = |extra: &[&str]| {
        let mut args = vec![
            "sweep",
            "s.ohm",
            "--vary",
            "f=1kHz..10kHz",
            "--vary",
            "R=1Ω..10Ω",
            "--points",
            "3",
            "--show",
            "abs(I)",
            "--format",
            "csv",
        ];
        args.extend_from_slice(extra);
        stdout_of(d.path(), &args)
    };
    assert_eq!(logs(&["--log", "f,R"]), logs(&["--log", "f", "--log", "R"]));
    let d2 = folder(&[("s.ohm", OHM), ("c.csv", "feeder,R [Ω],note\nA,4,x\n")]);
    let tags = |extra: &[&str]| {
        let mut args = vec!["batch", "s.ohm", "--cases", "c.csv", "-o", "r.csv", "--show", "I"];
        args.extend_from_slice(extra);
        ohmsheet().current_dir(d2.path()).args(&args).assert().code(0);
        read(d2.path(), "r.csv")
    };
    assert_eq!(
        tags(&["--tag", "feeder,note"]),
        tags(&["--tag", "feeder", "--tag", "note"])
    );
}

#[test]
fn solve_takes_format_and_output_and_its_scan_help_says_intervals() {
    let d = folder(&[("s.ohm", RLC)]);
    let base = ["solve", "s.ohm", "--vary", "f=1kHz..20kHz", "--maximize", "abs(I)"];
    let mut args = base.to_vec();
    args.extend_from_slice(&["--format", "json"]);
    let json: serde_json::Value = serde_json::from_str(&stdout_of(d.path(), &args)).unwrap();
    // Series resonance: 1/(2π√(1 mH · 1 µF)) = 5032.92 Hz.
    let f0 = 1.0 / (2.0 * std::f64::consts::PI * (1e-3f64 * 1e-6).sqrt());
    assert!((json["value"].as_f64().unwrap() - f0).abs() < 1e-3 * f0, "{json}");
    // The old flag still works and says the same.
    let mut old = base.to_vec();
    old.push("--json");
    assert_eq!(stdout_of(d.path(), &old), stdout_of(d.path(), &args));
    let mut to_file = args.clone();
    to_file.extend_from_slice(&["-o", "a.json"]);
    ohmsheet()
        .current_dir(d.path())
        .args(&to_file)
        .assert()
        .code(0)
        .stdout("");
    assert_eq!(read(d.path(), "a.json"), stdout_of(d.path(), &args));
    let help = stdout_of(d.path(), &["solve", "--help"]);
    assert!(help.contains("Intervals of the coarse scan"), "{help}");
}

#[test]
fn every_command_help_ends_with_examples() {
    let d = tempfile::tempdir().unwrap();
    for cmd in [
        "run",
        "batch",
        "report",
        "check",
        "watch",
        "sweep",
        "solve",
        "functions",
        "units",
    ] {
        let help = stdout_of(d.path(), &[cmd, "--help"]);
        let tail: Vec<&str> = help
            .trim_end()
            .lines()
            .rev()
            .take_while(|l| l.starts_with("  ohmsheet "))
            .collect();
        assert!((2..=3).contains(&tail.len()), "{cmd}: {help}");
        let before = help.trim_end().lines().rev().nth(tail.len()).unwrap();
        assert_eq!(before, "Examples:", "{cmd}");
        for l in tail {
            assert!(l.trim().starts_with(&format!("ohmsheet {cmd}")), "{cmd}: {l}");
        }
    }
}
