//! `ohmsheet batch`, the everyday cases table: tag columns carried through,
//! a NaN cell among good ones, `--digits`, `--allow-dir`, and a wrong unit
//! in a header or a value. Expected values are Ohm's law and P = V²/R
//! (common practice), worked by hand.

use std::path::{Path, PathBuf};

use predicates::prelude::*;

use crate::common::ohmsheet;

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    if let Some(d) = p.parent() {
        std::fs::create_dir_all(d).unwrap();
    }
    std::fs::write(&p, text).unwrap();
    p
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

fn read_csv(p: &Path) -> Vec<Vec<String>> {
    let mut r = csv::ReaderBuilder::new().has_headers(false).from_path(p).unwrap();
    r.records()
        .map(|x| x.unwrap().iter().map(str::to_string).collect())
        .collect()
}

fn num(s: &str) -> f64 {
    s.parse().unwrap_or_else(|_| panic!("`{s}` is not a number"))
}

/// `I` is real by construction (`abs`): one column.
const OHM: &str = "V = 120 V\nR = 10 Ω\nI = abs(V / R)\n";

/// Run `batch` on `sheet` and `cases` with `extra` options; the results
/// path and the assertion.
fn batch(dir: &Path, sheet: &str, cases: &str, extra: &[&str]) -> (PathBuf, assert_cmd::assert::Assert) {
    let sheet = write(dir, "s.ohm", sheet);
    let cases = write(dir, "c.csv", cases);
    let out = dir.join("r.csv");
    let mut args = vec!["batch", s(&sheet), "--cases", s(&cases), "--out", s(&out)];
    args.extend_from_slice(extra);
    let a = ohmsheet().args(&args).assert();
    (out, a)
}

#[test]
fn columns_that_name_no_input_are_carried_through_unchanged() {
    let dir = tempfile::tempdir().unwrap();
    let (out, a) = batch(
        dir.path(),
        OHM,
        "feeder,V,case no,R [Ω],note\nF-12,120 V,1,10,\"first, quoted\"\nF-07,240 V,2,20,\n",
        &[],
    );
    a.code(0);
    let rows = read_csv(&out);
    assert_eq!(rows[0], ["feeder", "V", "case no", "R [Ω]", "note", "I [A]"]);
    assert_eq!(rows[1][..5], ["F-12", "120 V", "1", "10", "first, quoted"]);
    assert_eq!(rows[2][..5], ["F-07", "240 V", "2", "20", ""]);
    // Ohm's law: 120 V / 10 Ω = 12 A; 240 V / 20 Ω = 12 A.
    assert_eq!(num(&rows[1][5]), 12.0);
    assert_eq!(num(&rows[2][5]), 12.0);
}

#[test]
fn a_tag_column_keeps_its_text_even_where_it_looks_like_a_value() {
    let dir = tempfile::tempdir().unwrap();
    // `rating` is no input; its values look like quantities but are text.
    let (out, a) = batch(dir.path(), OHM, "rating,R [Ω]\n6 mi,5\nNaN,4\n", &[]);
    a.code(0);
    let rows = read_csv(&out);
    assert_eq!(rows[1][..2], ["6 mi", "5"]);
    assert_eq!(rows[2][..2], ["NaN", "4"]);
    assert_eq!(num(&rows[1][2]), 24.0); // 120 V / 5 Ω
    assert_eq!(num(&rows[2][2]), 30.0); // 120 V / 4 Ω
}

#[test]
fn a_name_close_to_an_input_is_a_typo_unless_named_with_tag() {
    let dir = tempfile::tempdir().unwrap();
    // `Vs` is one edit from the input `V`: a typo, not a tag.
    let (out, a) = batch(dir.path(), OHM, "Vs,R [Ω]\n240 V,10\n", &[]);
    a.code(2)
        .stderr(predicate::str::contains("column `Vs` names no input of the sheet"))
        .stderr(predicate::str::contains("did you mean `V`?"))
        .stderr(predicate::str::contains("--tag \"Vs\""));
    assert!(!out.exists());
    // Named as a tag it is carried through, and V keeps the sheet's 120 V.
    let (out, a) = batch(dir.path(), OHM, "Vs,R [Ω]\n240 V,10\n", &["--tag", "Vs"]);
    a.code(0);
    let rows = read_csv(&out);
    assert_eq!(rows[0], ["Vs", "R [Ω]", "I [A]"]);
    assert_eq!(rows[1][0], "240 V");
    assert_eq!(num(&rows[1][2]), 12.0); // 120 V / 10 Ω, not 240 V
}

#[test]
fn a_header_with_a_unit_that_names_no_input_is_an_error() {
    let dir = tempfile::tempdir().unwrap();
    let (_, a) = batch(dir.path(), OHM, "Imax [A],R [Ω]\n20,10\n", &[]);
    a.code(2)
        .stderr(predicate::str::contains("column `Imax` names no input"))
        .stderr(predicate::str::contains(
            "a column with a unit in its header sets an input",
        ));
    let (out, a) = batch(dir.path(), OHM, "Imax [A],R [Ω]\n20,10\n", &["--tag", "Imax"]);
    a.code(0);
    assert_eq!(read_csv(&out)[1][..3], ["20", "10", "12"]);
}

#[test]
fn tag_names_a_column_of_the_table_and_may_name_an_input() {
    let dir = tempfile::tempdir().unwrap();
    let (_, a) = batch(dir.path(), OHM, "V,R [Ω]\n240 V,10\n", &["--tag", "feedr"]);
    a.code(2).stderr(predicate::str::contains(
        "--tag `feedr`: the cases table has no column `feedr`",
    ));
    // A tag named like an input sets nothing: V stays 120 V.
    let (out, a) = batch(dir.path(), OHM, "V,R [Ω]\n240 V,10\n", &["--tag", "V,R"]);
    a.code(0);
    assert_eq!(read_csv(&out)[1], ["240 V", "10", "12"]);
    // Repeated, the option adds up the same way.
    let (out, a) = batch(dir.path(), OHM, "V,R [Ω]\n240 V,10\n", &["--tag", "V", "--tag", "R"]);
    a.code(0);
    assert_eq!(read_csv(&out)[1], ["240 V", "10", "12"]);
}

#[test]
fn a_column_naming_a_computed_cell_is_still_an_error() {
    let dir = tempfile::tempdir().unwrap();
    let (_, a) = batch(dir.path(), OHM, "I,R [Ω]\n1 A,10\n", &[]);
    a.code(2)
        .stderr(predicate::str::contains("names a computed cell"))
        .stderr(predicate::str::contains("--tag \"I\""));
}

/// Two loads on one source: 0 V over 0 Ω is 0/0, NaN, in the first branch
/// only; the second branch's current is still computed.
const TWO: &str =
    "V = 120 V\nR1 = 10 Ω\nR2 = 5 Ω\nI1 = abs(V / R1)\nI2 = abs(V / R2)\nP1 = abs(V) * I1\nZ = R1 + j*R2\n";

#[test]
fn a_nan_cell_among_good_ones_is_marked_and_the_rest_written() {
    let dir = tempfile::tempdir().unwrap();
    let (out, a) = batch(
        dir.path(),
        TWO,
        "V,R1 [Ω],R2 [Ω]\n120 V,10,5\n0 V,0,5\n",
        &["--complex", "rect"],
    );
    a.code(1).stderr(predicate::str::contains("1 bad row"));
    let rows = read_csv(&out);
    assert_eq!(
        rows[0],
        [
            "V",
            "R1 [Ω]",
            "R2 [Ω]",
            "I1 [A]",
            "I2 [A]",
            "P1 [VA]",
            "Z.re [Ω]",
            "Z.im [Ω]"
        ]
    );
    // The good row: 12 A, 24 A, 1440 W, 10 + j5 Ω (Ohm's law, P = V·I).
    assert_eq!(rows[1][3..], ["12", "24", "1440", "10", "5"]);
    // 0 V / 0 Ω: I1 and P1 (which uses it) are marked empty; I2 = 0 V / 5 Ω
    // = 0 A and Z = 0 + j5 Ω are written.
    assert_eq!(rows[2][3..], ["", "0", "", "0", "5"]);
    let errs = read_csv(&dir.path().join("r.errors.csv"));
    assert_eq!(errs.len(), 3, "{errs:?}");
    assert_eq!(errs[1][..3], ["2", "3", "I1"]);
    assert!(errs[1][4].contains("`I1` evaluated to NaN"), "{:?}", errs[1]);
    assert_eq!(errs[2][..3], ["2", "3", "P1"]);
    assert!(errs[2][4].contains("because it uses `I1`"), "{:?}", errs[2]);
}

#[test]
fn a_complex_nan_cell_leaves_both_its_columns_empty() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = "V = 120 V\nZ = (3 + j4) Ω\nI = V / Z\nR = 10 Ω\nIr = abs(V) / R\n";
    let (out, a) = batch(dir.path(), sheet, "V,Z [Ω]\n0 V,0\n", &["--complex", "polar"]);
    a.code(1);
    let rows = read_csv(&out);
    assert_eq!(rows[0], ["V", "Z [Ω]", "I.mag [A]", "I.ang [°]", "Ir [A]"]);
    assert_eq!(rows[1], ["0 V", "0", "", "", "0"]);
}

#[test]
fn a_failed_in_sheet_search_gives_its_reason_and_the_rest_is_written() {
    let dir = tempfile::tempdir().unwrap();
    // P = V²/R reaches 100 W at V = √(100 W · 10 Ω) ≈ 31.62 V; 5 kW needs
    // 223.6 V, outside 0 .. 100 V: the search has no answer.
    let sheet = "V = 10 V\nR = 10 Ω\nPt = 100 W\nP = V^2 / R\nVneed = V in 0 V .. 100 V where P = Pt\nI = V / R\n";
    let (out, a) = batch(dir.path(), sheet, "Pt [W]\n100\n5000\n", &["--show", "Vneed,I"]);
    a.code(1);
    let rows = read_csv(&out);
    assert!((num(&rows[1][1]) - 1000f64.sqrt()).abs() < 1e-6, "{:?}", rows[1]);
    assert_eq!(rows[2][1], "");
    assert_eq!(num(&rows[2][2]), 1.0); // 10 V / 10 Ω, still written
    let errs = read_csv(&dir.path().join("r.errors.csv"));
    assert_eq!(errs[1][2], "Vneed");
    assert!(errs[1][4].contains("never reaches"), "{:?}", errs[1]);
}

#[test]
fn digits_rounds_the_written_values() {
    let dir = tempfile::tempdir().unwrap();
    // 120 V / 7 Ω = 17.142857… A; the constant 2π·50 Hz · 1 H = 314.159… Ω.
    let sheet = "V = 120 V\nR = 10 Ω\nI = abs(V / R)\nw = 2 * pi * 50 Hz\nX = w * 1 H\n";
    let (out, a) = batch(dir.path(), sheet, "R [Ω]\n7\n0\n", &["--digits", "4"]);
    a.code(1);
    let rows = read_csv(&out);
    assert_eq!(rows[1][1..], ["17.14", "314.2"]);
    // 120 V / 0 Ω is an infinite current (a short across an ideal source):
    // not computed, whatever the digits; the rest of the row is written.
    assert_eq!(rows[2][1..], ["", "314.2"]);
    // an open element is written `inf` whatever the digits
    let (out, a) = batch(dir.path(), "R = 10 Ω\nY = 1 / R\n", "R [Ω]\n0\n", &["--digits", "4"]);
    a.code(0);
    assert_eq!(read_csv(&out)[1][1..], ["inf", "0", "inf", "0"]);
    // Without --digits every number reads back to the same bits.
    let (out, a) = batch(dir.path(), sheet, "R [Ω]\n7\n", &[]);
    a.code(0);
    assert_eq!(num(&read_csv(&out)[1][1]), 120.0 / 7.0);
    let (_, a) = batch(dir.path(), sheet, "R [Ω]\n7\n", &["--digits", "0"]);
    a.code(2).stderr(predicate::str::contains("--digits"));
}

#[test]
fn allow_dir_lets_the_sheet_include_a_library_outside_its_folder() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "lib/cables.ohm", "z_km = (0.2 + j0.08) Ω/km\n");
    let sheet = write(
        dir.path(),
        "job/s.ohm",
        "@include \"../lib/cables.ohm\"\nL = 1 km\nV = 230 V\nI = V / (z_km * L)\n",
    );
    let cases = write(dir.path(), "job/c.csv", "L [km]\n2\n");
    let out = dir.path().join("job/r.csv");
    let args = ["batch", s(&sheet), "--cases", s(&cases), "--out", s(&out)];
    ohmsheet().args(args).assert().code(2);
    let lib = dir.path().join("lib");
    ohmsheet().args(args).args(["--allow-dir", s(&lib)]).assert().code(0);
    let rows = read_csv(&out);
    // 230 V / ((0.2 + j0.08) Ω/km · 2 km) = 230 / (0.4 + j0.16) A
    let z = num_complex::Complex64::new(0.4, 0.16);
    let i = num_complex::Complex64::new(230.0, 0.0) / z;
    assert!((num(&rows[1][1]) - i.re).abs() < 1e-9 * i.norm());
    assert!((num(&rows[1][2]) - i.im).abs() < 1e-9 * i.norm());
}

/// A feeder of `len` with an impedance per km.
const LINE: &str = "len = 2 km\nz = (0.1 + j0.3) Ω/km\nZ = z * len\n";

#[test]
fn a_wrong_unit_in_a_value_is_not_answered_with_another_kind_of_unit() {
    let dir = tempfile::tempdir().unwrap();
    let (_, a) = batch(dir.path(), LINE, "len\n6 mi\n6 kV\n1.5 km\n", &[]);
    let errs = read_csv(&dir.path().join("r.errors.csv"));
    // `6 mi` is read as miles where the unit table knows them; otherwise
    // the error suggests no time unit (min is minutes, not a length).
    for e in &errs[1..] {
        assert!(!e[4].contains("`min`"), "{e:?}");
    }
    let mi = errs.iter().find(|e| e[3] == "6 mi");
    if let Some(e) = mi {
        assert!(e[4].contains("unknown unit `mi`"), "{e:?}");
        assert!(e[4].contains("length"), "{e:?}");
    }
    let kv = errs.iter().find(|e| e[3] == "6 kV").expect("6 kV is refused");
    assert!(kv[4].contains("is a voltage (V), but `len` is a length"), "{kv:?}");
    a.code(1);
}

#[test]
fn a_wrong_unit_in_a_header_is_refused_before_any_row() {
    let dir = tempfile::tempdir().unwrap();
    let (out, a) = batch(dir.path(), LINE, "len [min]\n6\n", &[]);
    a.code(2).stderr(predicate::str::contains("the unit `min` is a time"));
    assert!(!out.exists());
    let (_, a) = batch(dir.path(), LINE, "len [kmm]\n6\n", &[]);
    a.code(2)
        .stderr(predicate::str::contains("unknown unit `kmm`"))
        .stderr(predicate::str::contains("`min`").not());
    // A misspelt unit is answered with a unit of the input's dimension.
    let (_, a) = batch(dir.path(), LINE, "len [kme]\n6\n", &[]);
    a.code(2).stderr(predicate::str::contains("did you mean `km`?"));
}
