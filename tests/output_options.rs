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
    // -o with the table writes the table, as run -o does; the shorthands
    // do not mix with --format.
    let mut args: Vec<&str> = base.to_vec();
    args.extend_from_slice(&["-o", "t.txt"]);
    ohmsheet().current_dir(d.path()).args(&args).assert().code(0).stdout("");
    assert_eq!(read(d.path(), "t.txt"), stdout_of(d.path(), &base));
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

// ---- every subcommand × every output option (issue 15) ----
//
// One sheet for all: V = 10 V across Z = (3 + j4) Ω gives I = V/Z =
// 1.2 − j1.6 A = 2 ∠ −53.13° A, and R = 3 Ω carries V/R = 3.333… A (Ohm's
// law, worked by hand; atan(4/3) = 53.130102°, from memory).
const CX: &str = "V = 10 V\nZ = (3 + j4) Ω\nR = 3 Ω\nI = V / Z\nIr = V / R\n\
check I ~= V / Z +- 0.001%\ncheck Ir ~= 10 V / 3 Ω +- 0.001%\n";

/// The commands that write values, each with the arguments that make it
/// run on `CX` (batch over a one-row cases table; sweep over 3 points; solve
/// for the R that brings Ir to 3 A, R = 10/3 Ω = 3.333… Ω).
fn commands() -> Vec<(&'static str, Vec<&'static str>)> {
    vec![
        ("run", vec!["run", "s.ohm"]),
        ("report", vec!["report", "s.ohm", "--format", "md"]),
        (
            "sweep",
            vec![
                "sweep",
                "s.ohm",
                "--vary",
                "R=3Ω..5Ω",
                "--points",
                "3",
                "--show",
                "I,Ir",
            ],
        ),
        ("solve", vec!["solve", "s.ohm", "--vary", "R=1Ω..10Ω"]),
        ("batch", vec!["batch", "s.ohm", "--cases", "c.csv", "--show", "I,Ir"]),
        ("check", vec!["check", "s.ohm"]),
    ]
}

fn cx_folder() -> tempfile::TempDir {
    folder(&[("s.ohm", CX), ("c.csv", "R [Ω]\n3\n")])
}

/// Run `args` (`-o out` appended for batch, which needs a file); the text
/// written, from standard output or the file.
fn written(d: &Path, cmd: &str, args: &[&str]) -> String {
    let mut a: Vec<&str> = args.to_vec();
    if cmd == "solve" {
        a.extend_from_slice(&["--target", "Ir = 3 A"]);
    }
    if cmd == "batch" && !a.contains(&"-o") {
        a.extend_from_slice(&["-o", "batch.csv"]);
        stdout_of(d, &a);
        return read(d, "batch.csv");
    }
    stdout_of(d, &a)
}

#[test]
fn every_command_takes_every_output_option_with_the_same_defaults() {
    let d = cx_folder();
    let formats: &[(&str, &[&str])] = &[
        ("run", &["table", "json", "csv"]),
        ("report", &["md", "html", "json"]),
        ("sweep", &["table", "csv", "json"]),
        ("solve", &["table", "json"]),
        ("batch", &["csv"]),
        ("check", &["table", "text", "json", "junit"]),
    ];
    for (cmd, base) in commands() {
        let opts = |extra: &[&'static str]| {
            let mut a = base.clone();
            a.extend_from_slice(extra);
            a
        };
        // The same defaults: nothing said is --digits 4 --complex both
        // (batch writes numbers, in full unless --digits is given).
        let plain = written(d.path(), cmd, &base);
        let defaults: &[&str] = if cmd == "batch" {
            &["--complex", "both"]
        } else {
            &["--digits", "4", "--complex", "both"]
        };
        let said = written(d.path(), cmd, &opts(defaults));
        assert_eq!(plain, said, "{cmd}: the defaults are {defaults:?}");
        // (a report's check table shows the digits its tolerance needs:
        // --digits is about the values of the steps)
        let values = |t: &str| -> String {
            t.lines()
                .filter(|l| cmd != "report" || !l.contains("check "))
                .collect::<Vec<_>>()
                .join("\n")
        };
        let plain = values(&plain);
        if cmd == "batch" {
            assert!(
                plain.contains("3.3333333333333335"),
                "batch writes numbers in full:\n{plain}"
            );
        } else {
            assert!(
                plain.contains("3.333") && !plain.contains("3.3333"),
                "{cmd}: 4 digits:\n{plain}"
            );
        }

        // --format: every value the command takes, and -o FILE / --output
        // FILE write what would be printed.
        let fs = formats.iter().find(|f| f.0 == cmd).unwrap().1;
        for f in fs {
            let mut a = base.clone();
            if cmd == "report" {
                a.truncate(2);
            }
            a.extend_from_slice(&["--format", f]);
            let printed = written(d.path(), cmd, &a);
            assert!(!printed.is_empty(), "{cmd} --format {f}");
            for flag in ["-o", "--output"] {
                let file = format!("{cmd}-{f}{flag}.out");
                let mut b = a.clone();
                b.extend_from_slice(&[flag, &file]);
                if cmd == "solve" {
                    b.extend_from_slice(&["--target", "Ir = 3 A"]);
                }
                let out = ohmsheet().current_dir(d.path()).args(&b).output().unwrap();
                assert_eq!(
                    out.status.code(),
                    Some(0),
                    "{b:?}: {}",
                    String::from_utf8_lossy(&out.stderr)
                );
                let file_text = read(d.path(), &file);
                if cmd == "check" && (*f == "table" || *f == "text") {
                    // the lines for people go to the terminal; -o takes the
                    // machine-readable forms
                    continue;
                }
                if cmd != "check" {
                    assert!(out.stdout.is_empty(), "{b:?} printed as well as writing");
                }
                assert_eq!(file_text, printed, "{b:?}");
            }
        }

        // --digits: 3.333… A has as many digits as asked for.
        let two = values(&written(d.path(), cmd, &opts(&["--digits", "2"])));
        let seven = values(&written(d.path(), cmd, &opts(&["--digits", "7"])));
        assert!(two.contains("3.3"), "{cmd} --digits 2:\n{two}");
        assert!(!two.contains("3.33"), "{cmd} --digits 2:\n{two}");
        assert!(seven.contains("3.333333"), "{cmd} --digits 7:\n{seven}");
        assert!(!seven.contains("3.3333333"), "{cmd} --digits 7:\n{seven}");

        // --complex: 1.2 − j1.6 A, 2 ∠ −53.13° A, or both.
        if cmd == "solve" {
            continue; // its answer, R, is real: checked apart below
        }
        let rect = written(d.path(), cmd, &opts(&["--complex", "rect"]));
        let polar = written(d.path(), cmd, &opts(&["--complex", "polar"]));
        let both = written(d.path(), cmd, &opts(&["--complex", "both"]));
        type Has = fn(&str) -> bool;
        let (has_rect, has_polar): (Has, Has) = if cmd == "batch" {
            (
                |t| t.contains("I.re [A]") && t.contains("1.2"),
                |t| t.contains("I.mag [A]") && t.contains("-53.13010235415"),
            )
        } else if cmd == "sweep" || cmd == "check" {
            (|t| t.contains("- j1.6"), |t| t.contains("∠ -53.13°"))
        } else {
            (|t| t.contains("1.2 - j1.6 A"), |t| t.contains("2 ∠ -53.13° A"))
        };
        assert!(has_rect(&rect) && !has_polar(&rect), "{cmd} --complex rect:\n{rect}");
        assert!(
            has_polar(&polar) && !has_rect(&polar),
            "{cmd} --complex polar:\n{polar}"
        );
        assert!(has_rect(&both) && has_polar(&both), "{cmd} --complex both:\n{both}");
    }
}

/// solve's answer is real; the complex value it reaches at its answer is
/// shown in the form asked for: the smallest re(I·(1 + j)) over V from 1
/// to 10 V is at 1 V, where I = 1 V/(3 + j4) Ω = 0.12 − j0.16 A and
/// I·(1 + j) = 0.28 − j0.04 A, |…| = 0.2828 A at −atan(0.04/0.28) =
/// −8.13° (worked by hand).
#[test]
fn solve_shows_a_complex_value_in_the_form_asked_for() {
    let d = cx_folder();
    let base = ["solve", "s.ohm", "--vary", "V=1V..10V", "--minimize", "I * (1 + j)"];
    let run = |form: &str| {
        let mut a = base.to_vec();
        a.extend_from_slice(&["--complex", form]);
        stdout_of(d.path(), &a)
    };
    let (rect, polar, both) = (run("rect"), run("polar"), run("both"));
    assert!(rect.contains("280 - j40 mA") && !rect.contains('∠'), "{rect}");
    assert!(polar.contains("282.8 ∠ -8.13° mA") && !polar.contains("j40"), "{polar}");
    assert!(both.contains("280 - j40 mA = 282.8 ∠ -8.13° mA"), "{both}");
    assert_eq!(both, stdout_of(d.path(), &base));
}
