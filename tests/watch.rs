//! `ohmsheet watch`: a save (in place or by rename, of the sheet or of a
//! library it includes) prints what changed; a save that does not parse
//! shows the error and keeps the last good values.
//!
//! Timeouts are generous: the machine may be loaded, and each wait ends as
//! soon as the expected line arrives.

use std::io::{BufRead, BufReader};
use std::process::{Child, Command, Stdio};
use std::sync::mpsc::{channel, Receiver};
use std::time::{Duration, Instant};

use crate::report::folder;

const WAIT: Duration = Duration::from_secs(60);

struct Watch {
    child: Child,
    lines: Receiver<String>,
    seen: Vec<String>,
    /// Lines before this index belong to earlier steps.
    from: usize,
}

impl Watch {
    fn start(dir: &std::path::Path, sheet: &str) -> Watch {
        let mut child = Command::new(assert_cmd::cargo::cargo_bin("ohmsheet"))
            .current_dir(dir)
            .args(["watch", sheet])
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .expect("start ohmsheet watch");
        let (tx, rx) = channel();
        let out = child.stdout.take().unwrap();
        let err = child.stderr.take().unwrap();
        let tx2 = tx.clone();
        std::thread::spawn(move || {
            for l in BufReader::new(out).lines().map_while(Result::ok) {
                let _ = tx.send(l);
            }
        });
        std::thread::spawn(move || {
            for l in BufReader::new(err).lines().map_while(Result::ok) {
                let _ = tx2.send(format!("stderr: {l}"));
            }
        });
        Watch {
            child,
            lines: rx,
            seen: Vec::new(),
            from: 0,
        }
    }

    /// Start a new step: `expect` looks only at lines that come from now on.
    fn mark(&mut self) {
        while let Ok(l) = self.lines.try_recv() {
            self.seen.push(l);
        }
        self.from = self.seen.len();
    }

    /// Wait for a line of this step that contains `want` (stdout and stderr
    /// are read apart, so lines of one step may come in either order);
    /// panic with everything read after the timeout.
    fn expect(&mut self, want: &str) {
        if self.seen[self.from..].iter().any(|l| l.contains(want)) {
            return;
        }
        let end = Instant::now() + WAIT;
        loop {
            let left = end.saturating_duration_since(Instant::now());
            match self.lines.recv_timeout(left) {
                Ok(l) => {
                    let hit = l.contains(want);
                    self.seen.push(l);
                    if hit {
                        return;
                    }
                }
                Err(_) => panic!(
                    "no line with {want:?} within {WAIT:?}; output so far:\n{}",
                    self.seen.join("\n")
                ),
            }
        }
    }
}

impl Drop for Watch {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

#[test]
fn watch_prints_changes_and_keeps_last_good_values() {
    // 12 V / 4 Ω = 3 A; after the edit 24 V / 4 Ω = 6 A; with the library
    // changed to 8 Ω, 24 V / 8 Ω = 3 A (Ohm's law).
    let d = folder(&[
        (
            "w.ohm",
            "@include \"lib/r.ohm\"\nV = 12 V\nI = V / R\ncheck I ~= 3 A +- 1%\n",
        ),
        ("lib/r.ohm", "R = 4 Ω\n"),
    ]);
    let mut w = Watch::start(d.path(), "w.ohm");
    w.expect("watching 2 files");
    let sheet = d.path().join("w.ohm");

    // Saved in place.
    w.mark();
    std::fs::write(
        &sheet,
        "@include \"lib/r.ohm\"\nV = 24 V\nI = V / R\ncheck I ~= 3 A +- 1%\n",
    )
    .unwrap();
    w.expect("w.ohm saved");
    w.expect("12 V  →  24 V");
    w.expect("3 A  →  6 A");
    w.expect("checks: 1 of 1 FAIL");

    // A save that does not parse: the error, and the old values stay.
    w.mark();
    std::fs::write(&sheet, "@include \"lib/r.ohm\"\nV = 24 V\nI = V / (R\n").unwrap();
    w.expect("unclosed");
    w.expect("last good ones");

    // Saved by writing a new file and renaming it over the old one.
    w.mark();
    let tmp = d.path().join(".w.ohm.swp");
    std::fs::write(
        &tmp,
        "@include \"lib/r.ohm\"\nV = 24 V\nI = V / R\ncheck I ~= 6 A +- 1%\n",
    )
    .unwrap();
    std::fs::rename(&tmp, &sheet).unwrap();
    w.expect("w.ohm saved");
    w.expect("now passes");
    w.expect("checks: all 1 pass");

    // The included library changes.
    w.mark();
    std::fs::write(d.path().join("lib/r.ohm"), "R = 8 Ω\n").unwrap();
    w.expect("r.ohm saved");
    w.expect("4 Ω  →  8 Ω");
    w.expect("6 A  →  3 A");
}
