//! Library sheets: `@include` merges another sheet's cells, stays inside
//! the sheet's folder tree unless the command line allows a folder, and
//! refuses cycles and names defined twice, each with a located error.

use predicates::prelude::*;

use crate::common::ohmsheet;
use crate::report::folder;

fn run_in(dir: &std::path::Path, args: &[&str]) -> assert_cmd::assert::Assert {
    ohmsheet().current_dir(dir).args(args).assert()
}

#[test]
fn included_cells_are_used_and_say_where_they_came_from() {
    let d = folder(&[
        ("feeder.ohm", "@include \"lib/cables.ohm\"\nL = 2 km\nZ = z_km * L\n"),
        ("lib/cables.ohm", "@title \"Cable data\"\nz_km = (0.1 + j0.2) Ω/km\n"),
    ]);
    // 2 km × (0.1 + j0.2) Ω/km = 0.2 + j0.4 Ω = 200 + j400 mΩ (arithmetic)
    run_in(d.path(), &["run", "feeder.ohm"])
        .code(0)
        .stdout(predicate::str::contains("200 + j400 mΩ"))
        .stdout(predicate::str::contains("(from lib/cables.ohm:2)"))
        // The library's title is not the sheet's.
        .stdout(predicate::str::contains("Cable data").not());
}

#[test]
fn report_marks_library_values_the_sheet_does_not_use() {
    let d = folder(&[
        ("s.ohm", "@include \"lib/c.ohm\"\nI = 10 A\nV = I * r_a\n"),
        ("lib/c.ohm", "r_a = 2 Ω\nr_b = 3 Ω\n"),
    ]);
    let out = ohmsheet()
        .current_dir(d.path())
        .args(["report", "s.ohm"])
        .output()
        .unwrap();
    let md = String::from_utf8(out.stdout).unwrap();
    assert!(
        md.contains("| `r_b` | 3 Ω |  | lib/c.ohm, line 2<br>(not used by this calculation) |"),
        "{md}"
    );
    assert!(md.contains("| `r_a` | 2 Ω |  | lib/c.ohm, line 1 |"), "{md}");
    // 10 A × 2 Ω = 20 V (Ohm's law)
    assert!(md.contains("V = I * r_a\n  = 10 A × 2 Ω\n  = 20 V\n"), "{md}");
}

#[test]
fn a_library_included_twice_is_merged_once() {
    let d = folder(&[
        ("top.ohm", "@include \"a.ohm\"\n@include \"b.ohm\"\nx = p + q\n"),
        ("a.ohm", "@include \"shared.ohm\"\np = 2 * s\n"),
        ("b.ohm", "@include \"./shared.ohm\"\nq = 3 * s\n"),
        ("shared.ohm", "s = 1 V\n"),
    ]);
    run_in(d.path(), &["run", "top.ohm"])
        .code(0)
        .stdout(predicate::str::contains("5 V"));
}

#[test]
fn dot_dot_out_of_the_tree_is_refused() {
    let d = folder(&[
        ("proj/sheet.ohm", "a = 1 V\n@include \"../shared/cables.ohm\"\n"),
        ("shared/cables.ohm", "z = 1 Ω\n"),
    ]);
    run_in(d.path(), &["run", "proj/sheet.ohm"])
        .code(2)
        .stderr(predicate::str::contains("error[include-path]"))
        .stderr(predicate::str::contains("proj/sheet.ohm:2:10"))
        .stderr(predicate::str::contains("^^^^"))
        .stderr(predicate::str::contains("outside the sheet's folder"))
        .stderr(predicate::str::contains("--allow-dir"));
    // Allowed explicitly, it is read.
    run_in(d.path(), &["run", "proj/sheet.ohm", "--allow-dir", "shared"])
        .code(0)
        .stdout(predicate::str::contains("z ◂"));
    // A dot-dot that stays inside the tree is fine.
    let d = folder(&[
        ("sheet.ohm", "@include \"lib/a.ohm\"\nx = 2 * b\n"),
        ("lib/a.ohm", "@include \"../data/b.ohm\"\n"),
        ("data/b.ohm", "b = 3 A\n"),
    ]);
    run_in(d.path(), &["run", "sheet.ohm"])
        .code(0)
        .stdout(predicate::str::contains("6 A"));
}

#[test]
fn absolute_path_is_refused() {
    let d = folder(&[("lib/c.ohm", "z = 1 Ω\n")]);
    let abs = d.path().join("lib/c.ohm");
    std::fs::write(
        d.path().join("s.ohm"),
        format!("@include \"{}\"\na = 1 V\n", abs.display()),
    )
    .unwrap();
    run_in(d.path(), &["run", "s.ohm"])
        .code(2)
        .stderr(predicate::str::contains("is an absolute path"))
        .stderr(predicate::str::contains("s.ohm:1:10"));
}

#[cfg(unix)]
#[test]
fn symlink_out_of_the_tree_is_refused() {
    let outside = folder(&[("secret.ohm", "k = 1 Ω\n")]);
    let d = folder(&[("s.ohm", "@include \"lib/link.ohm\"\na = 1 V\n")]);
    std::fs::create_dir_all(d.path().join("lib")).unwrap();
    std::os::unix::fs::symlink(outside.path().join("secret.ohm"), d.path().join("lib/link.ohm")).unwrap();
    run_in(d.path(), &["run", "s.ohm"])
        .code(2)
        .stderr(predicate::str::contains("is a symbolic link to"))
        .stderr(predicate::str::contains("s.ohm:1:10"));
    // A link to a folder out of the tree is refused the same way.
    let d2 = folder(&[("s.ohm", "@include \"ext/secret.ohm\"\na = 1 V\n")]);
    std::os::unix::fs::symlink(outside.path(), d2.path().join("ext")).unwrap();
    run_in(d2.path(), &["run", "s.ohm"])
        .code(2)
        .stderr(predicate::str::contains("is a symbolic link to"));
    // A link that stays inside the tree is fine.
    let d3 = folder(&[
        ("s.ohm", "@include \"alias.ohm\"\na = 2 * k\n"),
        ("real.ohm", "k = 1 V\n"),
    ]);
    std::os::unix::fs::symlink(d3.path().join("real.ohm"), d3.path().join("alias.ohm")).unwrap();
    run_in(d3.path(), &["run", "s.ohm"])
        .code(0)
        .stdout(predicate::str::contains("2 V"));
}

#[test]
fn include_cycle_is_reported_whole() {
    let d = folder(&[
        ("a.ohm", "@include \"lib/b.ohm\"\nx = 1 V\n"),
        ("lib/b.ohm", "@include \"c.ohm\"\ny = 1 V\n"),
        ("lib/c.ohm", "@include \"../a.ohm\"\nz = 1 V\n"),
    ]);
    run_in(d.path(), &["run", "a.ohm"])
        .code(2)
        .stderr(predicate::str::contains("error[include-cycle]"))
        .stderr(predicate::str::contains("a.ohm → lib/b.ohm → lib/c.ohm → a.ohm"))
        .stderr(predicate::str::contains("lib/c.ohm:1:10"));
    // Including itself.
    let d = folder(&[("a.ohm", "@include \"a.ohm\"\nx = 1 V\n")]);
    run_in(d.path(), &["run", "a.ohm"])
        .code(2)
        .stderr(predicate::str::contains("include cycle: a.ohm → a.ohm"));
}

#[test]
fn a_name_in_two_files_is_a_clash() {
    let d = folder(&[
        ("s.ohm", "@include \"lib/c.ohm\"\nZc = 2 Ω\nI = 1 V / Zc\n"),
        ("lib/c.ohm", "Zc = 1 Ω\n"),
    ]);
    run_in(d.path(), &["run", "s.ohm"])
        .code(2)
        .stderr(predicate::str::contains("error[name-clash]"))
        .stderr(predicate::str::contains(
            "`Zc` is defined in both `lib/c.ohm` and `s.ohm`",
        ))
        .stderr(predicate::str::contains("s.ohm:2:1"))
        .stderr(predicate::str::contains("first defined here"))
        // Reported once, not again as a duplicate.
        .stderr(predicate::str::contains("defined twice").not());
}

#[test]
fn missing_library_and_bad_include_are_located() {
    let d = folder(&[("s.ohm", "a = 1 V\n@include \"lib/nope.ohm\"\n@include\n")]);
    run_in(d.path(), &["run", "s.ohm"])
        .code(2)
        .stderr(predicate::str::contains("cannot find `lib/nope.ohm`"))
        .stderr(predicate::str::contains("s.ohm:2:10"))
        .stderr(predicate::str::contains("`@include` takes one path"));
}

#[test]
fn amplitude_conventions_must_agree() {
    let d = folder(&[
        ("s.ohm", "@include \"lib/v.ohm\"\nx = 2 * v\n"),
        ("lib/v.ohm", "@amplitude peak\nv = 325 V\n"),
    ]);
    run_in(d.path(), &["run", "s.ohm"])
        .code(2)
        .stderr(predicate::str::contains("written for @amplitude peak"));
    let d = folder(&[
        ("s.ohm", "@amplitude peak\n@include \"lib/v.ohm\"\nx = 2 * v\n"),
        ("lib/v.ohm", "@amplitude peak\nv = 325 V\n"),
    ]);
    run_in(d.path(), &["run", "s.ohm"]).code(0);
}

#[test]
fn include_in_text_without_a_file_is_an_error() {
    let d = crate::common::errors("@include \"lib/x.ohm\"\na = 1 V\n");
    assert!(d.iter().any(|d| d.message.contains("needs a sheet saved as a file")));
}
