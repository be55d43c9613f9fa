//! Tests of the session without a terminal.
#![cfg(test)]

use super::*;
use num_complex::Complex64 as C64;
use std::path::Path;

const SITE: &str = "# Pump house feeder (invented)\n\
Vs = 480 V      # bus\n\
R1 = 10 Ω\n\
R2 = 20 Ω\n\
\n\
Rt = R1 + R2    # total\n\
I = Vs / Rt\n";

struct Fixture {
    dir: tempfile::TempDir,
    path: PathBuf,
}

impl Fixture {
    fn new(text: &str) -> Fixture {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("site.ohm");
        std::fs::write(&path, text).unwrap();
        Fixture { dir, path }
    }
    fn data(&self) -> PathBuf {
        self.dir.path().join("data")
    }
    fn open(&self) -> Session {
        Session::open(Some(&self.path), Some(self.data()), false).unwrap().0
    }
}

fn ok(s: &mut Session, line: &str) -> String {
    let r = s.handle(line);
    assert!(!r.refused, "`{line}` was refused:\n{}", r.text);
    r.text
}

fn val(s: &Session, name: &str) -> C64 {
    s.engine.value(s.engine.model.id(name).unwrap())
}

#[test]
fn a_redefinition_reports_every_dependent_old_to_new() {
    let f = Fixture::new(SITE);
    let mut s = f.open();
    let out = ok(&mut s, "R2 = 30 Ω");
    // Ohm's law: 480 V / 40 Ω = 12 A (was 480 / 30 = 16 A).
    assert_eq!(val(&s, "I"), C64::new(12.0, 0.0));
    let lines: Vec<&str> = out.lines().collect();
    assert!(lines[0].starts_with("R2 = 30 Ω"), "{out}");
    assert!(
        lines[1].contains("Rt") && lines[1].contains("30 Ω") && lines[1].contains("40 Ω"),
        "{out}"
    );
    assert!(
        lines[2].contains("I") && lines[2].contains("16 A") && lines[2].contains("12 A"),
        "{out}"
    );
    assert!(s.dirty());
}

#[test]
fn a_bad_line_leaves_the_sheet_as_it_was() {
    let f = Fixture::new(SITE);
    let mut s = f.open();
    let before = s.doc.text();
    let i = val(&s, "I");
    for bad in [
        "R2 = 30 V",
        "R2 = (3 +",
        "R1 = I * 1 Ω",
        "x = nosuch * 2",
        "Rt = R1 + 3 V",
        "I = Vs / Rt + 1",
    ] {
        let r = s.handle(bad);
        assert!(r.refused, "`{bad}` was accepted");
        assert!(r.text.contains("error"), "{}", r.text);
        assert!(r.text.contains("sheet is as it was"), "{}", r.text);
        assert_eq!(s.doc.text(), before);
        assert_eq!(val(&s, "I"), i);
    }
    assert!(!s.dirty());
    // The caret points into the typed line.
    let r = s.handle("x = R1 + 3 V");
    assert!(r.text.contains("input:1:"), "{}", r.text);
    assert!(r.text.contains('^'), "{}", r.text);
}

#[test]
fn saving_keeps_comments_blank_lines_and_order() {
    let f = Fixture::new(SITE);
    let mut s = f.open();
    ok(&mut s, "Vs = 415 V");
    ok(&mut s, "Rt = R1 + R2 + 0.5 Ω  # with the joint");
    ok(&mut s, "P = re(Vs * conj(I))");
    ok(&mut s, "spare = 1 Ω");
    ok(&mut s, "/remove spare");
    ok(&mut s, "/save");
    assert!(!s.dirty());
    assert_eq!(
        std::fs::read_to_string(&f.path).unwrap(),
        "# Pump house feeder (invented)\n\
Vs = 415 V      # bus\n\
R1 = 10 Ω\n\
R2 = 20 Ω\n\
\n\
Rt = R1 + R2 + 0.5 Ω  # with the joint\n\
I = Vs / Rt\n\
P = re(Vs * conj(I))\n"
    );
    // Saving cleared the journal: nothing to recover.
    drop(s);
    assert!(f.open().recovery().is_none());
}

#[test]
fn undo_walks_back_through_every_kind_of_change() {
    let f = Fixture::new(SITE);
    let mut s = f.open();
    let mut snapshots = vec![(s.doc.text(), val(&s, "I"))];
    for line in [
        "R2 = 30 Ω",             // in place
        "g = 2",                 // a new cell, in place
        "h = g * Vs",            // another
        "h = g * Vs * 1 A",      // h becomes a power: whole-sheet compile
        "@title \"Pump house\"", // a directive
        "check I ~= 12 A +- 1%", // a check
        "/remove h",             // a removal
        "Vs = 240 V",            // in place again
    ] {
        ok(&mut s, line);
        snapshots.push((s.doc.text(), val(&s, "I")));
    }
    // 240 V / 40 Ω = 6 A
    assert_eq!(val(&s, "I"), C64::new(6.0, 0.0));
    snapshots.pop();
    while let Some((text, i)) = snapshots.pop() {
        ok(&mut s, "/back");
        assert_eq!(s.doc.text(), text);
        assert_eq!(val(&s, "I"), i);
    }
    assert!(!s.dirty(), "back where it started");
    assert!(s.handle("/back").refused);
}

#[test]
fn a_cell_in_use_is_not_removed() {
    let f = Fixture::new(SITE);
    let mut s = f.open();
    let r = s.handle("/remove R1");
    assert!(r.refused);
    assert!(r.text.contains("Rt"), "{}", r.text);
    assert!(s.engine.model.id("R1").is_some());
}

#[test]
fn the_journal_replays_to_the_same_state() {
    let f = Fixture::new(SITE);
    let mut a = f.open();
    ok(&mut a, "R2 = 30 Ω");
    ok(&mut a, "P = re(Vs * conj(I))");
    ok(&mut a, "Q = P / 2");
    ok(&mut a, "/back"); // Q goes
    ok(&mut a, "Vs = 400 V");
    ok(&mut a, "tmp = 3 Ω");
    ok(&mut a, "/remove tmp");
    let text = a.doc.text();
    let p = val(&a, "P");
    // The process dies here: no save, no goodbye.
    drop(a);

    let mut b = f.open();
    assert_eq!(b.doc.text(), SITE, "the file on disk was never touched");
    let rec = b.recovery().expect("a journal to recover");
    assert!(b.same_base(&rec));
    assert_eq!(rec.entries.len(), 7);
    let report = b.restore(&rec);
    assert!(report.starts_with("restored 7 changes"), "{report}");
    assert_eq!(b.doc.text(), text);
    // 400 V across 40 Ω: P = V²/R = 4000 W.
    assert!((p.re - 4000.0).abs() < 1e-9);
    assert_eq!(val(&b, "P"), p);
    assert!(b.dirty());
    // The undo history came back too: /back undoes the removal of tmp.
    ok(&mut b, "/back");
    assert!(b.engine.model.id("tmp").is_some());
    drop(b);

    // Declining throws the journal away.
    let mut c = f.open();
    assert!(c.recovery().is_some());
    c.discard_journal();
    drop(c);
    assert!(f.open().recovery().is_none());
}

/// A sheet saved by someone else meanwhile is not written over unseen.
#[test]
fn a_file_changed_on_disk_is_not_written_over_unseen() {
    let f = Fixture::new(SITE);
    let mut a = f.open();
    let mut b = f.open();
    ok(&mut a, "R2 = 30 Ω");
    ok(&mut b, "R1 = 5 Ω");
    ok(&mut a, "/save");
    let saved_by_a = std::fs::read_to_string(&f.path).unwrap();
    let r = b.handle("/save");
    assert!(r.refused, "{}", r.text);
    assert!(r.text.contains("changed on disk"), "{}", r.text);
    assert_eq!(std::fs::read_to_string(&f.path).unwrap(), saved_by_a);
    assert!(b.dirty(), "B's change is still unsaved, and journalled");
    // Under another name, or over the file on purpose.
    let other = f.dir.path().join("site-b.ohm");
    ok(&mut b, &format!("/save {}", other.display()));
    assert!(std::fs::read_to_string(&other).unwrap().contains("R1 = 5 Ω"));
    // B now works on site-b.ohm; A's file is A's. A saves again freely.
    ok(&mut a, "R2 = 35 Ω");
    ok(&mut a, "/save");
    // An editor changes A's file; A is told, then writes over it.
    std::fs::write(&f.path, "R1 = 1 Ω\n").unwrap();
    ok(&mut a, "R2 = 40 Ω");
    assert!(a.handle("/save").refused);
    ok(&mut a, "/save!");
    assert!(std::fs::read_to_string(&f.path).unwrap().contains("R2 = 40 Ω"));
}

/// Two sessions on one sheet: one saves and leaves, the other is
/// killed with unsaved changes; the next session offers those changes.
#[test]
fn two_sessions_on_one_sheet_lose_nothing() {
    let f = Fixture::new(SITE);
    let mut a = f.open();
    let (mut b, greet) = Session::open(Some(&f.path), Some(f.data()), false).unwrap();
    assert!(greet.contains("open in another session"), "{greet}");
    ok(&mut a, "R2 = 30 Ω");
    ok(&mut b, "R1 = 5 Ω");
    ok(&mut b, "Vs = 400 V");
    ok(&mut a, "/save");
    drop(a);
    // B dies here without saving.
    drop(b);
    let mut c = f.open();
    let rec = c.recovery().expect("B's changes are offered");
    assert_eq!(
        rec.entries,
        [
            journal::Entry::Line("R1 = 5 Ω".into()),
            journal::Entry::Line("Vs = 400 V".into())
        ]
    );
    // They apply to the sheet A saved: 400 V across 5 Ω + 30 Ω.
    c.restore(&rec);
    assert_eq!(val(&c, "I"), C64::new(400.0 / 35.0, 0.0));
}

#[test]
fn a_changed_file_still_takes_the_changes_by_name() {
    let f = Fixture::new(SITE);
    let mut a = f.open();
    ok(&mut a, "R2 = 30 Ω");
    ok(&mut a, "/remove I");
    drop(a);
    std::fs::write(&f.path, SITE.replace("R1 = 10 Ω", "R1 = 12 Ω")).unwrap();
    let mut b = f.open();
    let rec = b.recovery().unwrap();
    assert!(!b.same_base(&rec));
    b.restore(&rec);
    assert!(b.doc.text().contains("R1 = 12 Ω") && b.doc.text().contains("R2 = 30 Ω"));
    assert!(b.engine.model.id("I").is_none());
}

#[test]
fn a_library_sheet_stays_included_and_its_cells_are_left_alone() {
    let f = Fixture::new(
        "# feeder using the cable library (invented)\n@include \"lib/cable.ohm\"\nL = 2 * 1 Ω\nZ = Zc * L / 1 Ω\n",
    );
    std::fs::create_dir(f.dir.path().join("lib")).unwrap();
    std::fs::write(
        f.dir.path().join("lib/cable.ohm"),
        "Zc = (0.2 + j0.1) Ω  # per length\n",
    )
    .unwrap();
    let mut s = f.open();
    assert!(
        s.engine.model.diagnostics.is_empty(),
        "{:?}",
        s.engine.model.diagnostics
    );
    // 2 × (0.2 + j0.1) Ω
    assert_eq!(val(&s, "Z"), C64::new(0.4, 0.2));
    ok(&mut s, "L = 3 * 1 Ω");
    assert!((val(&s, "Z") - C64::new(0.6, 0.3)).norm() < 1e-12);
    // A change that needs the whole sheet compiled keeps the library.
    ok(&mut s, "W = Z * 2");
    ok(&mut s, "/remove W");
    assert!((val(&s, "Z") - C64::new(0.6, 0.3)).norm() < 1e-12);
    let r = s.handle("Zc = 1 Ω");
    assert!(r.refused && r.text.contains("library sheet"), "{}", r.text);
    assert!(s.handle("@include \"other.ohm\"").refused);
    ok(&mut s, "/save");
    assert_eq!(
        std::fs::read_to_string(&f.path).unwrap(),
        "# feeder using the cable library (invented)\n@include \"lib/cable.ohm\"\nL = 3 * 1 Ω\nZ = Zc * L / 1 Ω\n"
    );
}

#[test]
fn an_unnamed_session_saves_where_it_is_told() {
    let dir = tempfile::tempdir().unwrap();
    let (mut s, _) = Session::open(None, Some(dir.path().join("data")), false).unwrap();
    ok(&mut s, "Zs = (0.1 + j0.4) Ω");
    ok(&mut s, "Zl = 8 Ω");
    assert!(s.handle("/save").refused);
    let p = dir.path().join("new.ohm");
    ok(&mut s, &format!("/save {}", p.display()));
    assert_eq!(std::fs::read_to_string(&p).unwrap(), "Zs = (0.1 + j0.4) Ω\nZl = 8 Ω\n");
    assert_eq!(s.path.as_deref(), Some(p.as_path()));
}

/// Every demo sheet, opened and saved with no change, is written back
/// byte for byte (the library sheets it includes come along in the copy).
#[test]
fn every_demo_sheet_round_trips_byte_for_byte() {
    let demo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("sheets-demo");
    let dir = tempfile::tempdir().unwrap();
    std::fs::create_dir(dir.path().join("lib")).unwrap();
    for e in std::fs::read_dir(demo.join("lib")).unwrap() {
        let p = e.unwrap().path();
        std::fs::copy(&p, dir.path().join("lib").join(p.file_name().unwrap())).unwrap();
    }
    let mut n = 0;
    for e in std::fs::read_dir(&demo).unwrap() {
        let p = e.unwrap().path();
        if p.extension().is_none_or(|x| x != "ohm") {
            continue;
        }
        let bytes = std::fs::read(&p).unwrap();
        let copy = dir.path().join(p.file_name().unwrap());
        std::fs::write(&copy, &bytes).unwrap();
        let (mut s, _) = Session::open(Some(&copy), Some(dir.path().join("data")), false).unwrap();
        ok(&mut s, "/save");
        assert_eq!(std::fs::read(&copy).unwrap(), bytes, "{}", p.display());
        n += 1;
    }
    assert!(n >= 8, "found {n} demo sheets");
}

/// A byte-order mark, `\r\n` on some lines only and no final newline all
/// survive a save; a changed line keeps its own ending.
#[test]
fn a_save_keeps_the_files_bom_line_endings_and_missing_final_newline() {
    let text = "\u{FEFF}a  = 1 V   # first\r\nb = a * 2\nc = b + 1 V";
    let f = Fixture::new(text);
    let mut s = f.open();
    ok(&mut s, "/save");
    assert_eq!(std::fs::read_to_string(&f.path).unwrap(), text);
    ok(&mut s, "a = 2 V");
    ok(&mut s, "/save");
    assert_eq!(
        std::fs::read_to_string(&f.path).unwrap(),
        "\u{FEFF}a  = 2 V   # first\r\nb = a * 2\nc = b + 1 V"
    );
}

/// A changed value keeps its line's alignment before `=` and its comment
/// column; only the value's text changes.
#[test]
fn a_changed_value_keeps_the_lines_alignment_and_comment_column() {
    let text = "# aligned (invented)\n\
Vs    = 480 V        # bus\n\
R1    = 10 Ω         # feeder\n\
Rt    = R1 + 5 Ω     # total\n\
I     = Vs / Rt\n";
    let f = Fixture::new(text);
    let mut s = f.open();
    ok(&mut s, "Vs = 415 V");
    // Typed without spaces; a typed comment goes to the old column.
    ok(&mut s, "R1=12.5 Ω # feeder, measured");
    // A formula past the comment's column pushes it two spaces past.
    ok(&mut s, "Rt = R1 + 5 Ω + 0.25 Ω + 0.125 Ω");
    // A comment typed on a line that had none stays as typed.
    ok(&mut s, "I = Vs / Rt  # line current");
    ok(&mut s, "/save");
    assert_eq!(
        std::fs::read_to_string(&f.path).unwrap(),
        "# aligned (invented)\n\
Vs    = 415 V        # bus\n\
R1    = 12.5 Ω       # feeder, measured\n\
Rt    = R1 + 5 Ω + 0.25 Ω + 0.125 Ω  # total\n\
I     = Vs / Rt  # line current\n"
    );
    // Taking the changes back restores the lines exactly.
    for _ in 0..4 {
        ok(&mut s, "/back");
    }
    assert_eq!(s.doc.text(), text);
}

#[test]
fn forward_makes_again_what_back_took_back() {
    let f = Fixture::new(SITE);
    let mut s = f.open();
    let mut snapshots = vec![(s.doc.text(), val(&s, "I"))];
    for line in ["R2 = 30 Ω", "g = 2 A", "h = g * Vs", "/remove h", "Vs = 240 V"] {
        ok(&mut s, line);
        snapshots.push((s.doc.text(), val(&s, "I")));
    }
    for _ in 1..snapshots.len() {
        ok(&mut s, "/back");
    }
    assert!(!s.dirty());
    for (text, i) in snapshots.iter().skip(1) {
        let out = ok(&mut s, "/forward");
        assert!(out.starts_with("forward"), "{out}");
        assert_eq!(&s.doc.text(), text);
        assert_eq!(val(&s, "I"), *i);
    }
    // 240 V across 10 Ω + 30 Ω (Ohm's law).
    assert_eq!(val(&s, "I"), C64::new(6.0, 0.0));
    let r = s.handle("/forward");
    assert!(r.refused && r.text.contains("nothing to redo"), "{}", r.text);
    // A new change after /back ends what /forward could redo.
    ok(&mut s, "/back");
    ok(&mut s, "R1 = 5 Ω");
    assert!(s.handle("/forward").refused);
    // Back then forward is where it was, saved state included.
    ok(&mut s, "/save");
    ok(&mut s, "/back");
    assert!(s.dirty());
    ok(&mut s, "/forward");
    assert!(!s.dirty());
}

#[test]
fn a_forward_is_journalled_and_replayed() {
    let f = Fixture::new(SITE);
    let mut a = f.open();
    ok(&mut a, "R2 = 30 Ω");
    ok(&mut a, "Vs = 400 V");
    ok(&mut a, "/back");
    ok(&mut a, "/back");
    ok(&mut a, "/forward");
    let text = a.doc.text();
    drop(a);
    let mut b = f.open();
    let rec = b.recovery().unwrap();
    assert_eq!(rec.entries.last(), Some(&journal::Entry::Forward));
    b.restore(&rec);
    assert_eq!(b.doc.text(), text);
    // 480 V across 10 Ω + 30 Ω.
    assert_eq!(val(&b, "I"), C64::new(12.0, 0.0));
    ok(&mut b, "/forward");
    assert_eq!(val(&b, "I"), C64::new(10.0, 0.0));
}

#[test]
fn feeds_names_a_check_once() {
    let f = Fixture::new("a = 2 V\nb = a * 2\ncheck b ~= 4 V +- 1%\n");
    let mut s = f.open();
    let out = ok(&mut s, "/feeds a");
    assert!(out.contains("  check b ~= 4 V +- 1%  holds"), "{out}");
    assert!(!out.contains("check check"), "{out}");
}

#[test]
fn the_name_shown_is_relative_to_the_current_folder() {
    let rel = |p: &str, c: &str| relative_name(Path::new(p), Some(Path::new(c)));
    assert_eq!(rel("/home/ann/jobs/site.ohm", "/home/ann/jobs"), "site.ohm");
    assert_eq!(rel("/home/ann/jobs/a/site.ohm", "/home/ann/jobs"), "a/site.ohm");
    assert_eq!(rel("/home/ann/lib/site.ohm", "/home/ann/jobs"), "../lib/site.ohm");
    assert_eq!(rel("/srv/site.ohm", "/home/ann"), "/srv/site.ohm");
    assert_eq!(relative_name(Path::new("./site.ohm"), None), "site.ohm");
    assert_eq!(relative_name(Path::new("jobs/site.ohm"), None), "jobs/site.ohm");
}

/// A library value overridden by the sheet: `/why` names both places; a
/// new value typed in the session keeps the `@override` line, and the
/// override's dimension is checked there too.
#[test]
fn an_overridden_library_value_in_the_session() {
    let f = Fixture::new("@include \"lib/cable.ohm\"\n@override Zc = (0.25 + j0.1) Ω   # survey\nZ = Zc * 2\n");
    std::fs::create_dir(f.dir.path().join("lib")).unwrap();
    std::fs::write(f.dir.path().join("lib/cable.ohm"), "Zc = (0.2 + j0.1) Ω\n").unwrap();
    let mut s = f.open();
    assert!(
        s.engine.model.diagnostics.is_empty(),
        "{:?}",
        s.engine.model.diagnostics
    );
    let why = ok(&mut s, "/why Z");
    assert!(
        why.contains("site.ohm:2, of the library value at lib/cable.ohm:1") && why.contains("· @override at "),
        "{why}"
    );
    ok(&mut s, "Zc = (0.3 + j0.1) Ω");
    // 2 × (0.3 + j0.1) Ω
    assert!((val(&s, "Z") - C64::new(0.6, 0.2)).norm() < 1e-12);
    let r = s.handle("Zc = 5 V");
    assert!(r.refused, "{}", r.text);
    // A new @override is added in the file, not typed here.
    let r = s.handle("@override Zc = 1 Ω");
    assert!(
        r.refused && r.text.contains("read when a sheet is opened"),
        "{}",
        r.text
    );
    ok(&mut s, "/save");
    assert_eq!(
        std::fs::read_to_string(&f.path).unwrap(),
        "@include \"lib/cable.ohm\"\n@override Zc = (0.3 + j0.1) Ω    # survey\nZ = Zc * 2\n"
    );
}

const NET: &str = "# Tie to a load bus (invented)\n\
network n at 50 Hz\n  \
Eu = emf(util, ground, 100 V)\n  \
Zt = branch(util, bus, 3 Ω)     # the tie\n  \
Ld = branch(bus, ground, 6 Ω)\n\
end\n\
Vb = net_v(n, bus)\n";

/// Typing `Zt = 4 Ω` for the element line `Zt = branch(util, bus, 3 Ω)`
/// replaces only the value inside the form, as `--set` does, and the
/// network is solved again; undo, the journal and the edges (a short, an
/// open, a wrong unit) behave as for any input.
#[test]
fn a_value_typed_for_a_network_element_replaces_only_its_value() {
    let f = Fixture::new(NET);
    let mut s = f.open();
    // A voltage divider, by hand: 100 V · 6 / (3 + 6).
    assert!((val(&s, "Vb") - C64::new(600.0 / 9.0, 0.0)).norm() < 1e-9);
    let out = ok(&mut s, "Zt = 4 Ω");
    // 100 V · 6 / (4 + 6) = 60 V.
    assert!((val(&s, "Vb") - C64::new(60.0, 0.0)).norm() < 1e-9, "{out}");
    assert!(out.contains("Vb"), "the moved result is listed: {out}");
    // Only the value changed, in its own dimension: the element's cell is
    // edited in place and what depends on it computed again (a whole
    // compile computes every cell and records none as recomputed).
    let ids = |s: &Session, names: &[&str]| -> Vec<_> { names.iter().map(|n| s.engine.model.id(n).unwrap()).collect() };
    assert_eq!(s.engine.last_recomputed, ids(&s, &["Zt", "n", "Vb"]), "{out}");
    assert!(out.starts_with("Zt = 4 Ω   (was 3 Ω)\n"), "{out}");
    let text = s.doc.text();
    assert!(
        text.contains("  Zt = branch(util, bus, 4 Ω)     # the tie\n"),
        "form, nodes, indent and comment kept:\n{text}"
    );
    assert_eq!(text.matches("Zt =").count(), 1, "{text}");
    // A short (0 Ω) puts the bus at the source; an open (∞ Ω) leaves it
    // at 0 V through the load.
    ok(&mut s, "Zt = 0 Ω");
    assert!((val(&s, "Vb") - C64::new(100.0, 0.0)).norm() < 1e-9);
    ok(&mut s, "Zt = (1/0) Ω");
    assert!(val(&s, "Vb").norm() < 1e-9, "{}", val(&s, "Vb"));
    // A value of another dimension is refused at the edit; nothing changes.
    let before = s.doc.text();
    let r = s.handle("Zt = 4 A");
    assert!(r.refused, "{}", r.text);
    assert!(
        r.text.contains("network-element") && r.text.contains("a current (A)"),
        "{}",
        r.text
    );
    assert_eq!(s.doc.text(), before);
    // A forgotten unit likewise.
    let r = s.handle("Zt = 4");
    assert!(r.refused && r.text.contains("a plain number"), "{}", r.text);
    assert_eq!(s.doc.text(), before);
    // A display unit belongs in the file, not beside a typed element value.
    let r = s.handle("Zt = 4 Ω [mΩ]");
    assert!(r.refused && r.text.contains("network element"), "{}", r.text);
    assert_eq!(s.doc.text(), before);
    // Typing the whole element form still replaces the whole line.
    ok(&mut s, "Zt = branch(util, bus, 5 Ω)");
    // 100 V · 6 / (5 + 6).
    assert!((val(&s, "Vb") - C64::new(600.0 / 11.0, 0.0)).norm() < 1e-9);
    // In another dimension (an admittance) it is compiled with the network.
    let out = ok(&mut s, "Zt = 0.2 S");
    assert!(s.engine.last_recomputed.is_empty(), "{out}");
    // 100 V · 6 / (5 + 6) again: 0.2 S is 5 Ω.
    assert!((val(&s, "Vb") - C64::new(600.0 / 11.0, 0.0)).norm() < 1e-9);
    // So is a change of nodes.
    ok(&mut s, "Zt = branch(bus, util, 5 Ω)");
    assert!(s.engine.last_recomputed.is_empty());
    // Back through every change to the sheet as written.
    for _ in 0..6 {
        ok(&mut s, "/back");
    }
    assert_eq!(s.doc.text(), NET);
    assert!((val(&s, "Vb") - C64::new(600.0 / 9.0, 0.0)).norm() < 1e-9);
    ok(&mut s, "/forward");
    let text = s.doc.text();
    let v = val(&s, "Vb");
    drop(s);
    // The journal replays the typed value the same way.
    let mut b = f.open();
    let rec = b.recovery().expect("a journal to recover");
    b.restore(&rec);
    assert_eq!(b.doc.text(), text);
    assert_eq!(val(&b, "Vb"), v);
}

// A mistyped unit in a new value for a cell is answered with units of
// that cell's dimension, as batch answers a cases column (issue 15): a
// time `6 mn` is not offered `m`, a length `6 mil` is offered `mile`
// (not `min`), a plain number is said to be one. (`min`, `mile` and `ms`
// are the minute, the mile and the millisecond of the units table.)
#[test]
fn a_mistyped_unit_is_answered_with_units_of_the_cells_dimension() {
    let f = Fixture::new("t = 3 s\nL = 2 km\nk = 4\nv = L / t\n");
    let mut s = f.open();
    let r = s.handle("t = 6 mn");
    assert!(r.refused, "{}", r.text);
    assert!(r.text.contains("`t` is a time"), "{}", r.text);
    assert!(r.text.contains("min") && r.text.contains("ms"), "{}", r.text);
    assert!(!r.text.contains("did you mean `m`"), "{}", r.text);
    let r = s.handle("t = 6 mins");
    assert!(r.refused && r.text.contains("did you mean `min`?"), "{}", r.text);
    let r = s.handle("L = 6 mil");
    assert!(r.refused && r.text.contains("did you mean `mile`?"), "{}", r.text);
    assert!(!r.text.contains("`min`"), "{}", r.text);
    let r = s.handle("k = 6 vv");
    assert!(r.refused && r.text.contains("`k` is a plain number"), "{}", r.text);
    // `mi` is the mile now: a length takes it
    ok(&mut s, "L = 6 mi");
    assert_eq!(
        val(&s, "L"),
        C64::new(6.0 * 1609.344, 0.0),
        "6 mi is 9656.064 m (1609.344 m each)"
    );
    // a new name has no dimension yet: the general suggestion stands
    let r = s.handle("u = 6 mn");
    assert!(r.refused && r.text.contains("did you mean"), "{}", r.text);
    assert_eq!(val(&s, "t"), C64::new(3.0, 0.0), "nothing changed");
}
