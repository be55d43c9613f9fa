//! `ohmsheet check`: only the checks, over sheets and folders, with exit
//! codes a CI job can act on (0 all pass, 1 a check failed, 2 a sheet
//! error).
//!
//! Expected values: Ohm's law, 12 V across 4 Ω gives 3 A; two 6 Ω
//! resistors in parallel give 3 Ω (arithmetic).

use predicates::prelude::*;

use crate::common::ohmsheet;
use crate::report::folder;

const GOOD_A: &str = "V = 12 V\nR = 4 Ω\nI = V / R\ncheck I ~= 3 A +- 0.1%\n";
const GOOD_B: &str = "@include \"lib/r.ohm\"\nRp = R6 || R6\ncheck Rp ~= 3 Ω +- 0.1%\n";
const LIB: &str = "R6 = 6 Ω\ncheck R6 ~= 6 Ω +- 0 Ω\n";
const FAILING: &str = "V = 12 V\nR = 4 Ω\ncheck V / R ~= 4 A +- 1%\n";
const BROKEN: &str = "V = 12 V\nI = V / Rx\n";

#[test]
fn all_pass_over_a_folder_exits_0() {
    let d = folder(&[
        ("calcs/a.ohm", GOOD_A),
        ("calcs/sub/b.ohm", GOOD_B),
        ("calcs/sub/lib/r.ohm", LIB),
    ]);
    ohmsheet()
        .current_dir(d.path())
        .args(["check", "calcs"])
        .assert()
        .code(0)
        .stdout(predicate::str::contains("pass  calcs/a.ohm:4  check I ~= 3 A +- 0.1%"))
        .stdout(predicate::str::contains("pass  calcs/sub/b.ohm:3"))
        // The library's own check, run as part of b.ohm and on its own.
        .stdout(predicate::str::contains(
            "calcs/sub/lib/r.ohm:2 (included by calcs/sub/b.ohm)",
        ))
        .stdout(predicate::str::contains("4 checks in 3 sheets: 4 pass, 0 fail"));
}

#[test]
fn a_failed_check_exits_1() {
    let d = folder(&[("a.ohm", GOOD_A), ("f.ohm", FAILING), ("notes.txt", "not a sheet")]);
    ohmsheet()
        .current_dir(d.path())
        .args(["check", "."])
        .assert()
        .code(1)
        .stdout(predicate::str::contains("FAIL  f.ohm:3  check V / R ~= 4 A +- 1%"))
        .stdout(predicate::str::contains(
            "computed 3 A, |difference| 1 A, allowed 0.04 A",
        ))
        .stdout(predicate::str::contains("2 checks in 2 sheets: 1 pass, 1 fail"));
}

#[test]
fn a_sheet_error_exits_2_and_the_rest_still_run() {
    let d = folder(&[("a.ohm", GOOD_A), ("b.ohm", BROKEN), ("f.ohm", FAILING)]);
    ohmsheet()
        .current_dir(d.path())
        .args(["check", "a.ohm", "b.ohm", "f.ohm"])
        .assert()
        .code(2)
        .stdout(predicate::str::contains("ERROR b.ohm"))
        .stdout(predicate::str::contains("pass  a.ohm:4"))
        .stdout(predicate::str::contains("FAIL  f.ohm:3"))
        .stderr(predicate::str::contains("b.ohm:2:9"))
        .stdout(predicate::str::contains("1 error"));
    // A path that does not exist, and a folder with no sheets.
    ohmsheet()
        .current_dir(d.path())
        .args(["check", "missing.ohm"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("does not exist"));
    std::fs::create_dir(d.path().join("empty")).unwrap();
    ohmsheet()
        .current_dir(d.path())
        .args(["check", "empty"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("no .ohm sheets"));
}

#[test]
fn a_sheet_without_checks_is_listed_and_passes() {
    let d = folder(&[("n.ohm", "V = 1 V\n")]);
    ohmsheet()
        .current_dir(d.path())
        .args(["check", "n.ohm"])
        .assert()
        .code(0)
        .stdout(predicate::str::contains("n.ohm: no checks"));
}
