//! A network that has no solution at one case — one row of a batch, one
//! point of a sweep, one `--set` — is marked there with the reason in
//! words (which node floats or which loop forms, and the values that made
//! it so), while every other case is computed.

use std::path::Path;

use predicates::prelude::*;

use crate::common::*;

/// Two ideal sources tied through Zt: at Zt = 0 Ω they fight each other.
const TIE: &str = "\
network p at 50 Hz
  E1 = emf(a, ground, 230 V)
  E2 = emf(b, ground, 225 V)
  Zt = branch(a, b, 2 Ω)
  Ld = branch(b, ground, (20 + j5) Ω)
end
It = net_i(p, Zt)
";

/// A node `x` reached through Zt only (and a current source): at Zt = 0 S
/// (open) it floats.
const HANG: &str = "\
network q at 50 Hz
  E = emf(a, ground, 100 V, 1 Ω)
  Ra = branch(a, ground, 50 Ω)
  Zt = branch(a, x, 0.1 S)
  Ix = inject(x, ground, 1 A)
end
Vx = net_v(q, x)
";

fn write(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p.to_str().unwrap().to_string()
}

#[test]
fn run_names_the_loop_a_short_closes_and_the_value_that_closed_it() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "tie.ohm", TIE);
    ohmsheet().args(["run", &sheet]).assert().code(0);
    ohmsheet()
        .args(["run", &sheet, "--set", "Zt=0 Ω"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("network `p` is singular at this case"))
        .stderr(predicate::str::contains("`E1`").and(predicate::str::contains("`E2`")))
        .stderr(predicate::str::contains("`Zt` = 0 Ω (a short)"))
        // Located on the network's name in its head line.
        .stderr(predicate::str::contains("tie.ohm:1:9"));
}

#[test]
fn a_batch_marks_the_one_singular_row_with_its_reason() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "hang.ohm", HANG);
    let cases = write(dir.path(), "c.csv", "Zt\n0.1 S\n0 S\n0.5 S\n");
    let out = dir.path().join("r.csv");
    ohmsheet()
        .args(["batch", &sheet, "--cases", &cases, "--out", out.to_str().unwrap()])
        .assert()
        .code(1);
    let rows = std::fs::read_to_string(&out).unwrap();
    let rows: Vec<&str> = rows.lines().collect();
    assert_eq!(rows.len(), 4, "{rows:?}");
    // V(x) = V(a) + 1 A / Zt by hand: the computed rows hold numbers.
    assert!(!rows[1].contains(",,") && !rows[3].contains(",,"), "{rows:?}");
    let errs = std::fs::read_to_string(dir.path().join("r.errors.csv")).unwrap();
    let lines: Vec<&str> = errs.lines().skip(1).collect();
    assert!(!lines.is_empty(), "{errs}");
    for l in &lines {
        assert!(l.starts_with("2,"), "only case 2 fails: {l}");
        assert!(
            l.contains("network `q` is singular at this case") && l.contains("`x`") && l.contains("`Zt` = 0 S (open)"),
            "{l}"
        );
    }
}

#[test]
fn a_sweep_marks_the_singular_point_with_its_reason() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "tie.ohm", TIE);
    ohmsheet()
        .args([
            "sweep",
            &sheet,
            "--vary",
            "Zt=0..4 Ω",
            "--points",
            "5",
            "--show",
            "It",
            "--complex",
            "polar",
            "--csv",
            "-",
        ])
        .assert()
        .code(0)
        .stderr(predicate::str::contains("1 point gave NaN"))
        .stderr(predicate::str::contains("Zt = 0"))
        .stderr(predicate::str::contains("network `p` is singular at this case"))
        .stderr(predicate::str::contains("`Zt` = 0 Ω (a short)"))
        .stdout(predicate::str::contains("NaN").count(2));
}

/// An ideal inductance and capacitance in parallel at resonance: every
/// node has a path, the values cancel, and the message says so.
#[test]
fn resonance_is_explained_as_values_that_cancel() {
    let src = "\
w = 1000 rad/s
network tank at w
  I = inject(a, ground, 1 A)
  L = branch(a, ground, 1 mH)
  C = branch(a, ground, 1 mF)
end
V = net_v(tank, a)
";
    let e = engine(src);
    assert!(value(&e, "V").re.is_nan());
    let id = e.model.id("tank").unwrap();
    let d = e.nan_diagnostic(id);
    assert!(
        d.message.contains("network `tank` is singular at this case"),
        "{}",
        d.message
    );
    assert!(
        d.message.contains("resonance") && d.message.contains("`a`"),
        "{}",
        d.message
    );
    // Off resonance it is solved: 1 A into j1 Ω ∥ −j0.5 Ω … by hand,
    // Y = −j1 + j2 = j1 S, V = 1/(j1) = −j1 V.
    let e = engine(&src.replace("1 mF", "2 mF"));
    assert!(
        close(value(&e, "V"), num_complex::Complex64::new(0.0, -1.0), 1e-12),
        "{}",
        value(&e, "V")
    );
}

/// An admittance-matrix entry that does not exist (a 0 Ω tie joins two
/// nodes) is explained as such, and the other results stand.
#[test]
fn an_undefined_admittance_entry_is_explained() {
    let e = engine(
        "network n at 50 Hz\n  E = emf(a, ground, 10 V, 1 Ω)\n  T = branch(a, b, 0 Ω)\n  R = branch(b, ground, 4 Ω)\nend\n\
         y = net_y(n, a, b)\nv = net_v(n, b)\n",
    );
    assert!(value(&e, "y").re.is_nan());
    assert!(close(value(&e, "v"), num_complex::Complex64::new(8.0, 0.0), 1e-12));
    let d = e.nan_diagnostic(e.model.id("n").unwrap());
    assert!(
        d.message.contains("Y(a, b) is undefined") && d.message.contains("0 Ω branch"),
        "{}",
        d.message
    );
}

/// In a session, typing a value that leaves the network without a
/// solution shows the reason for that case at once.
#[test]
fn a_session_edit_that_makes_the_network_singular_says_why() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), "tie.ohm", TIE);
    let (mut s, _) =
        ohmsheet::session::Session::open(Some(Path::new(&sheet)), Some(dir.path().join("data")), false).unwrap();
    let r = s.handle("Zt = 0 Ω");
    assert!(
        r.text.contains("network `p` is singular at this case") && r.text.contains("`Zt` = 0 Ω (a short)"),
        "{}",
        r.text
    );
    // And a value that gives it a solution again clears it.
    let r = s.handle("Zt = 1 Ω");
    assert!(!r.text.contains("singular"), "{}", r.text);
}
