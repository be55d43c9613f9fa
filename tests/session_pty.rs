//! The interactive session, driven as a person would: the real binary in a
//! pseudo-terminal, with line editing on. Each test has its own HOME and
//! XDG data directory, so history and journals never touch the real ones.
//!
//! Expected values are Ohm's law and P = |V|²/R worked by hand for the
//! invented divider below (480 V across 10 Ω + 20 Ω: 16 A; with R2 = 30 Ω:
//! 12 A, and P = 480²/40 = 5.76 kW).

use std::path::{Path, PathBuf};
use std::process::Command;

use rexpect::reader::Options;
use rexpect::session::{spawn_with_options, PtySession};

/// Generous: the machine is shared and may be loaded.
const TIMEOUT_MS: u64 = 30_000;

const DIVIDER: &str = "# Pump house feeder (invented numbers)\n\
Vs = 480 V      # bus\n\
R1 = 10 Ω\n\
R2 = 20 Ω\n\
\n\
Rt = R1 + R2    # total\n\
I = Vs / Rt\n";

struct Env {
    dir: tempfile::TempDir,
}

impl Env {
    fn new() -> Env {
        Env {
            dir: tempfile::tempdir().expect("temp dir"),
        }
    }

    fn sheet(&self, text: &str) -> PathBuf {
        let p = self.dir.path().join("feeder.ohm");
        std::fs::write(&p, text).expect("write sheet");
        p
    }

    fn journals(&self) -> PathBuf {
        self.dir.path().join("data/ohmsheet/journals")
    }

    fn spawn(&self, sheet: Option<&Path>) -> Pty {
        let mut cmd = Command::new(assert_cmd::cargo::cargo_bin("ohmsheet"));
        if let Some(s) = sheet {
            cmd.arg(s);
        }
        cmd.current_dir(self.dir.path())
            .env("HOME", self.dir.path())
            .env("XDG_DATA_HOME", self.dir.path().join("data"))
            .env("XDG_CONFIG_HOME", self.dir.path().join("config"))
            .env("TERM", "xterm")
            .env("NO_COLOR", "1");
        let opts = Options::new()
            .timeout_ms(Some(TIMEOUT_MS))
            .strip_ansi_escape_codes(true);
        let p = spawn_with_options(cmd, opts).expect("spawn ohmsheet in a pty");
        Pty { p }
    }
}

struct Pty {
    p: PtySession,
}

/// The pty reader takes each byte for a character; UTF-8 text (Ω, →, ▸)
/// is matched in that form.
fn as_bytes(s: &str) -> String {
    s.bytes().map(char::from).collect()
}

fn from_bytes(s: &str) -> String {
    let b: Vec<u8> = s.chars().map(|c| c as u32 as u8).collect();
    String::from_utf8_lossy(&b).into_owned()
}

impl Pty {
    /// Wait for `s`; returns what came before it.
    fn expect(&mut self, s: &str) -> String {
        match self.p.exp_string(&as_bytes(s)) {
            Ok(before) => from_bytes(&before),
            Err(e) => panic!("waiting for {s:?}: {}", from_bytes(&e.to_string())),
        }
    }
    fn regex(&mut self, r: &str) {
        if let Err(e) = self.p.exp_regex(&as_bytes(r)) {
            panic!("waiting for /{r}/: {}", from_bytes(&e.to_string()));
        }
    }
    /// Wait for the prompt; returns what came before it.
    fn prompt(&mut self) -> String {
        self.expect("▸ ")
    }
    fn line(&mut self, s: &str) {
        self.p.send_line(s).expect("send a line");
    }
    fn send(&mut self, s: &str) {
        self.p.send(s).expect("send");
        self.p.flush().expect("flush");
    }
    fn eof(&mut self) {
        if let Err(e) = self.p.exp_eof() {
            panic!("waiting for the session to end: {e}");
        }
    }
}

#[test]
fn define_redefine_see_dependents_explain_and_undo() {
    let env = Env::new();
    let sheet = env.sheet(DIVIDER);
    let mut t = env.spawn(Some(&sheet));
    t.expect("5 cells, 0 checks");
    t.prompt();

    t.line("R2 = 30 Ω");
    t.expect("(was 20 Ω)");
    t.regex(r"Rt\s+30 Ω\s+→\s+40 Ω");
    t.regex(r"I\s+16 A\s+→\s+12 A");
    t.prompt();

    t.line("P = re(Vs * conj(I))");
    t.expect("P = 5.76 kW");
    t.prompt();

    t.line("/why P");
    t.expect("P = re(Vs * conj(I))  ⇒ 5.76 kW");
    t.expect("└─ I = Vs / Rt  ⇒ 12 A");
    t.expect("└─ Rt = R1 + R2  ⇒ 40 Ω");
    t.expect("R2 = 30 Ω   · input");
    t.prompt();

    t.line("/feeds R2");
    t.expect("R2 feeds 3 cells (1 directly)");
    t.prompt();

    t.line("/back");
    t.expect("took back: P = re(Vs * conj(I))");
    t.prompt();
    t.line("/back");
    t.expect("back to: R2 = 20 Ω");
    t.regex(r"I\s+12 A\s+→\s+16 A");
    t.prompt();

    // Back where it started: leaving asks nothing.
    t.line("/done");
    t.eof();
    assert_eq!(std::fs::read_to_string(&sheet).unwrap(), DIVIDER);
}

#[test]
fn a_bad_line_shows_a_caret_and_leaves_the_sheet_intact() {
    let env = Env::new();
    let sheet = env.sheet(DIVIDER);
    let mut t = env.spawn(Some(&sheet));
    t.prompt();

    // A wrong unit for an input is reported at the edit (issue 13 item 7),
    // not at the later line it would upset (`Rt = R1 + R2`).
    t.line("R2 = 30 V");
    t.expect("error[dimension-mismatch]");
    t.expect("`R2` is an impedance");
    t.expect("input:1:6");
    t.expect("^^^^");
    t.expect("the sheet is as it was");
    t.prompt();

    t.line("x = (3 +");
    t.expect("error[syntax]");
    t.expect("input:1:");
    t.expect("the sheet is as it was");
    t.prompt();

    // Values are as before: 480 V / 30 Ω = 16 A.
    t.line("1 * I");
    t.regex(r"\n\s+16 A");
    t.prompt();

    // Nothing changed, so leaving asks nothing and no journal is left.
    t.line("/done");
    t.eof();
    assert_eq!(std::fs::read_to_string(&sheet).unwrap(), DIVIDER);
    let left = std::fs::read_dir(env.journals()).map_or(0, |d| d.count());
    assert_eq!(left, 0);
}

// A mistyped unit in a new value for a cell is answered with units of
// the cell's dimension, as batch answers a cases column (issue 15): a
// time `6 mn` is offered times, not `m`; a length `6 mil` the mile.
#[test]
fn a_mistyped_unit_is_answered_with_units_of_the_cells_dimension() {
    let env = Env::new();
    let sheet = env.sheet("t = 3 s\nL = 2 km\nv = L / t\n");
    let mut t = env.spawn(Some(&sheet));
    t.prompt();
    t.line("t = 6 mn");
    t.expect("error[unknown-unit]");
    t.expect("`t` is a time");
    t.expect("min");
    t.expect("the sheet is as it was");
    t.prompt();
    t.line("L = 6 mil");
    t.expect("did you mean `mile`?");
    t.expect("the sheet is as it was");
    t.prompt();
    t.line("/done");
    t.eof();
    assert_eq!(
        std::fs::read_to_string(&sheet).unwrap(),
        "t = 3 s\nL = 2 km\nv = L / t\n"
    );
}

#[test]
fn a_killed_session_is_recovered_whole() {
    let env = Env::new();
    let sheet = env.sheet(DIVIDER);
    let mut t = env.spawn(Some(&sheet));
    t.prompt();
    t.line("R2 = 30 Ω");
    t.expect("(was 20 Ω)");
    t.prompt();
    t.line("P = re(Vs * conj(I))");
    t.expect("P = 5.76 kW");
    t.prompt();
    t.line("Vs = 400 V");
    t.expect("(was 480 V)");
    t.prompt();

    // Power cut: SIGKILL, no chance to save or say goodbye.
    t.p.process_mut()
        .signal(nix::sys::signal::Signal::SIGKILL)
        .expect("kill");
    let _ = t.p.process_mut().wait();
    assert_eq!(std::fs::read_to_string(&sheet).unwrap(), DIVIDER, "nothing was saved");

    let mut t = env.spawn(Some(&sheet));
    t.expect("Unsaved work from an earlier session");
    t.expect("3 changes");
    t.expect("Restore it?");
    t.line("y");
    t.expect("restored 3 changes");
    t.prompt();
    // 400 V across 40 Ω: P = 400²/40 = 4 kW.
    t.line("/why P");
    t.expect("P = re(Vs * conj(I))  ⇒ 4 kW");
    t.prompt();

    t.line("/save");
    t.expect("saved");
    t.prompt();
    t.line("/done");
    t.eof();
    assert_eq!(
        std::fs::read_to_string(&sheet).unwrap(),
        "# Pump house feeder (invented numbers)\n\
Vs = 400 V      # bus\n\
R1 = 10 Ω\n\
R2 = 30 Ω\n\
\n\
Rt = R1 + R2    # total\n\
I = Vs / Rt\n\
P = re(Vs * conj(I))\n"
    );

    // Saved: the next start offers nothing.
    let mut t = env.spawn(Some(&sheet));
    let before = t.prompt();
    assert!(!before.contains("Unsaved work"), "{before}");
    t.line("/done");
    t.eof();
}

#[test]
fn leaving_with_unsaved_changes_asks_first() {
    let env = Env::new();
    let sheet = env.sheet(DIVIDER);
    let mut t = env.spawn(Some(&sheet));
    t.prompt();
    t.line("R1 = 5 Ω");
    t.expect("(was 10 Ω)");
    t.prompt();
    t.line("/done");
    t.expect("1 unsaved change. Save to");
    t.line("c");
    t.prompt();
    // Ctrl-D asks the same question.
    t.send("\x04");
    t.expect("1 unsaved change. Save to");
    t.line("y");
    t.expect("saved");
    t.eof();
    let text = std::fs::read_to_string(&sheet).unwrap();
    assert_eq!(text, DIVIDER.replace("R1 = 10 Ω", "R1 = 5 Ω"));
}

#[test]
fn tab_completes_commands_and_cell_names() {
    let env = Env::new();
    let sheet = env.sheet(DIVIDER);
    let mut t = env.spawn(Some(&sheet));
    t.prompt();
    // `/wh` + Tab → `/why `, then `V` + Tab → `Vs` (the only cell with V).
    t.send("/wh\t");
    t.send("V\t");
    t.line("");
    t.expect("Vs = 480 V   · input");
    t.prompt();
    t.line("/done");
    t.eof();
}

#[test]
fn piped_lines_work_and_a_typo_is_not_a_new_sheet() {
    let env = Env::new();
    crate::common::ohmsheet()
        .current_dir(env.dir.path())
        .env("HOME", env.dir.path())
        .env("XDG_DATA_HOME", env.dir.path().join("data"))
        .arg("new.ohm")
        .write_stdin("Zs = (0.2 + j1.1) Ω\nZl = 12 Ω\n/save\n")
        .assert()
        .code(0)
        .stdout(predicates::str::contains("saved new.ohm"));
    assert_eq!(
        std::fs::read_to_string(env.dir.path().join("new.ohm")).unwrap(),
        "Zs = (0.2 + j1.1) Ω\nZl = 12 Ω\n"
    );
    crate::common::ohmsheet()
        .current_dir(env.dir.path())
        .arg("rnu")
        .assert()
        .code(2)
        .stderr(predicates::str::contains("neither a command nor an existing sheet"));
}

/// docs/session.md walks a newcomer through a Thevenin check. Every line
/// typed there is typed here, every line of output shown there must come
/// out here, in order, and the saved sheet must give the currents that
/// nodal analysis gives (tests/reference/session_thevenin.py, Python cmath).
#[test]
fn the_thevenin_walkthrough_in_the_docs_is_true() {
    let doc = std::fs::read_to_string(crate::common::repo("docs/session.md")).unwrap();
    let section = doc
        .split("## A Thevenin check, step by step")
        .nth(1)
        .and_then(|s| s.split("\n## ").next())
        .expect("the walkthrough section");
    let mut typed = Vec::new();
    let mut shown = Vec::new();
    for block in section.split("```text").skip(1) {
        let block = block.split("```").next().unwrap();
        for l in block.lines() {
            if l.starts_with("$ ") || l.trim().is_empty() {
                continue;
            }
            match l.split_once(" ▸ ") {
                Some((prompt, input)) if prompt.starts_with("thevenin.ohm") => typed.push(input.to_string()),
                _ => shown.push(l.trim_end().to_string()),
            }
        }
    }
    assert!(typed.len() > 15 && shown.len() > 30);

    let env = Env::new();
    let out = crate::common::ohmsheet()
        .current_dir(env.dir.path())
        .env("HOME", env.dir.path())
        .env("XDG_DATA_HOME", env.dir.path().join("data"))
        .arg("thevenin.ohm")
        .write_stdin(typed.join("\n") + "\n")
        .assert()
        .code(0)
        .get_output()
        .stdout
        .clone();
    let out = String::from_utf8(out).unwrap();
    let actual: Vec<&str> = out.lines().map(str::trim_end).collect();
    let mut at = 0;
    for want in &shown {
        match actual[at..].iter().position(|a| a == want) {
            Some(k) => at += k + 1,
            None => panic!("docs/session.md shows {want:?}, but the session printed:\n{out}"),
        }
    }

    // The saved sheet, against nodal analysis with ZL = 6 + j2 Ω.
    let text = std::fs::read_to_string(env.dir.path().join("thevenin.ohm")).unwrap();
    let e = crate::common::engine(&text);
    let want = num_complex::Complex64::new(23.153526970954356, -16.11144042679312);
    crate::assert_close!(crate::common::value(&e, "IL"), want, 1e-12);
    crate::assert_close!(crate::common::value(&e, "ILth"), want, 1e-12);
    let vth = num_complex::Complex64::new(227.70934256055364, -12.955017301038051);
    crate::assert_close!(crate::common::value(&e, "Vth"), vth, 1e-12);
}

/// Two sessions on one sheet at once: the second says so and journals
/// apart; the first saves; the second is refused a save over it and keeps
/// its change. Re-opening the sheet in the first is not a second session.
#[test]
fn two_sessions_on_one_sheet_neither_loses_the_others_work() {
    let env = Env::new();
    let sheet = env.sheet(DIVIDER);
    let mut a = env.spawn(Some(&sheet));
    a.prompt();
    let mut b = env.spawn(Some(&sheet));
    b.expect("open in another session too");
    b.prompt();

    a.line("R2 = 30 Ω");
    a.prompt();
    b.line("R1 = 5 Ω");
    b.prompt();
    a.line("/save");
    a.expect("saved");
    a.prompt();
    b.line("/save");
    b.expect("changed on disk since this session read it");
    b.prompt();
    let after_a = std::fs::read_to_string(&sheet).unwrap();
    assert!(
        after_a.contains("R2 = 30 Ω") && !after_a.contains("R1 = 5 Ω"),
        "{after_a}"
    );

    // A opens its sheet again: no other session is claimed to hold it.
    a.line("/open feeder.ohm");
    let before = a.expect("5 cells, 0 checks");
    let after = a.prompt();
    let greet = format!("{before}{after}");
    assert!(!greet.contains("another session"), "{greet}");
    a.line("/done");
    a.eof();

    // B writes its sheet under another name; both files are whole.
    b.line("/save feeder-b.ohm");
    b.expect("saved");
    b.prompt();
    b.line("/done");
    b.eof();
    let mine = std::fs::read_to_string(env.dir.path().join("feeder-b.ohm")).unwrap();
    assert!(mine.contains("R1 = 5 Ω") && mine.contains("R2 = 20 Ω"), "{mine}");
    assert_eq!(std::fs::read_to_string(&sheet).unwrap(), after_a);
}

/// The prompt names the sheet from the current folder (the session was
/// started with its absolute path); `/forward` makes again what `/back`
/// took back. Values: Ohm's law on the divider (16 A, then 12 A with
/// R2 = 30 Ω).
#[test]
fn the_prompt_names_the_sheet_from_here_and_forward_redoes_a_back() {
    let env = Env::new();
    let sheet = env.sheet(DIVIDER);
    assert!(sheet.is_absolute());
    let mut t = env.spawn(Some(&sheet));
    let greet = t.expect("feeder.ohm ▸ ");
    let dir = env.dir.path().display().to_string();
    assert!(!greet.contains(&dir), "the absolute path is shown:\n{greet}");

    t.line("R2 = 30 Ω");
    t.regex(r"I\s+16 A\s+→\s+12 A");
    t.expect("feeder.ohm* ▸ ");
    t.line("/back");
    t.expect("back to: R2 = 20 Ω");
    t.expect("feeder.ohm ▸ ");
    t.line("/forward");
    t.expect("forward to: R2 = 30 Ω");
    t.regex(r"I\s+16 A\s+→\s+12 A");
    t.expect("feeder.ohm* ▸ ");
    t.line("/forward");
    t.expect("nothing to redo");
    t.prompt();
    t.line("/help");
    t.expect("/forward");
    t.prompt();
    t.line("/save");
    t.expect("saved feeder.ohm");
    t.prompt();
    t.line("/done");
    t.eof();
    assert_eq!(
        std::fs::read_to_string(&sheet).unwrap(),
        DIVIDER.replace("R2 = 20 Ω", "R2 = 30 Ω")
    );
}

/// `/save` keeps the sheet's own layout: unchanged, the same bytes; a
/// changed value keeps its line's alignment before `=` and its comment
/// column.
#[test]
fn save_keeps_the_sheets_layout() {
    const ALIGNED: &str = "# Pump house feeder (invented numbers)\n\
\n\
Vs    = 480 V        # bus\n\
R1    = 10 Ω         # feeder\n\
R2    = 20 Ω\n\
Rt    = R1 + R2      # total\n\
I     = Vs / Rt\n";
    let env = Env::new();
    let sheet = env.sheet(ALIGNED);
    let mut t = env.spawn(Some(&sheet));
    t.prompt();
    t.line("/save");
    t.expect("saved feeder.ohm");
    t.prompt();
    assert_eq!(std::fs::read_to_string(&sheet).unwrap(), ALIGNED);
    t.line("R1 = 12 Ω");
    t.expect("(was 10 Ω)");
    t.prompt();
    t.line("/save");
    t.expect("saved feeder.ohm");
    t.prompt();
    t.line("/done");
    t.eof();
    assert_eq!(
        std::fs::read_to_string(&sheet).unwrap(),
        ALIGNED.replace("R1    = 10 Ω         # feeder", "R1    = 12 Ω         # feeder")
    );
}

/// `/feeds` lists a check by its own text, once.
#[test]
fn feeds_lists_a_check_once() {
    let env = Env::new();
    let sheet = env.sheet(&format!("{DIVIDER}check I ~= 16 A +- 1%\n"));
    let mut t = env.spawn(Some(&sheet));
    t.prompt();
    t.line("/feeds Rt");
    let out = t.expect("(• uses it directly)");
    assert!(out.contains("check I ~= 16 A +- 1%  holds"), "{out}");
    assert!(!out.contains("check check"), "{out}");
    t.prompt();
    t.line("/done");
    t.eof();
}

/// The small slips of issue 15, as a session shows them: `2 ** 3` is
/// answered with `^`, and a line cut short says so, never "unexpected the
/// end of the line".
#[test]
fn a_double_star_and_a_line_cut_short_read_well() {
    let env = Env::new();
    let sheet = env.sheet(DIVIDER);
    let mut t = env.spawn(Some(&sheet));
    t.prompt();
    t.line("x = 2 ** 3");
    t.expect("error[syntax]");
    t.expect("a power is written with `^`: `2^3`");
    t.expect("the sheet is as it was");
    t.prompt();
    t.line("x = 3 +");
    let out = t.expect("the sheet is as it was");
    assert!(out.contains("the line ends too soon"), "{out}");
    assert!(!out.contains("unexpected the"), "{out}");
    t.prompt();
    t.line("/done");
    t.eof();
    assert_eq!(std::fs::read_to_string(&sheet).unwrap(), DIVIDER);
}

/// Through the terminal: an edit giving an input a value of another
/// dimension is refused at the edit though nothing that uses it would
/// break (issue 13), and an edit that shorts the source (R1 = R2 = 0 Ω,
/// I = V/0 by Ohm's law) says why the current is infinite.
#[test]
fn a_wrong_dimension_is_refused_and_a_short_is_explained() {
    let env = Env::new();
    let sheet = env.sheet(DIVIDER);
    let mut t = env.spawn(Some(&sheet));
    t.expect("5 cells, 0 checks");
    t.prompt();

    t.line("R2 = 30 A");
    t.expect("`R2` is an impedance (Ω); `30 A` is a current (A)");
    t.prompt();

    t.line("R1 = 0 Ω");
    t.expect("(was 10 Ω)");
    t.prompt();
    t.line("R2 = 0 Ω");
    t.expect("`I` is infinite (∞ A): `Vs / Rt` divides by zero (`Rt` = 0 Ω)");
    t.prompt();

    t.line("/back");
    t.expect("back to: R2 = 20 Ω");
    t.prompt();
    t.line("/back");
    t.expect("back to: R1 = 10 Ω");
    t.prompt();
    t.line("/done");
    t.eof();
    assert_eq!(std::fs::read_to_string(&sheet).unwrap(), DIVIDER);
}
