//! Nothing lost: a process killed with SIGKILL while it writes a results
//! file leaves either the old file or the complete new one, never a torn
//! one. Each command writing a large output is started many times and
//! killed at points spread over the whole run (stratified, with jitter),
//! from before it opens the file to after it has finished.
//!
//! The complete new file is taken from one uninterrupted run; the old one
//! is a marker written before each attempt.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

const OLD: &[u8] = b"old results, must survive a killed run\n";
const ITERATIONS: u32 = 16;

fn exe() -> PathBuf {
    PathBuf::from(env!("CARGO_BIN_EXE_ohmsheet"))
}

/// A small xorshift for the jitter: deterministic, no dependency.
fn jitter(i: u32) -> f64 {
    let mut x = 0x9E37_79B9_7F4A_7C15u64 ^ (i as u64 + 1).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    x ^= x << 13;
    x ^= x >> 7;
    x ^= x << 17;
    (x >> 11) as f64 / (1u64 << 53) as f64
}

/// Run `args` once to the end and return what it wrote to each of `outs`,
/// and how long it took.
fn complete_run(args: &[&str], outs: &[&Path]) -> (Vec<Vec<u8>>, Duration) {
    for o in outs {
        let _ = std::fs::remove_file(o);
    }
    let t = Instant::now();
    let st = Command::new(exe())
        .args(args)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .unwrap();
    let took = t.elapsed();
    assert!(st.success(), "{args:?} failed: {st}");
    let data: Vec<Vec<u8>> = outs.iter().map(|o| std::fs::read(o).unwrap()).collect();
    for d in &data {
        assert!(d.len() > 1_000_000, "the output should be large, is {} bytes", d.len());
    }
    (data, took)
}

/// Kill runs of `args` at points spread over `0..1.3 × full`; after each,
/// every file in `outs` must be the old marker or exactly the complete
/// output. Returns how many runs were killed with the new file not yet in
/// place, and how many had already put it there.
fn kill_many(args: &[&str], outs: &[&Path], complete: &[Vec<u8>], full: Duration) -> (u32, u32) {
    let (mut old_seen, mut new_seen) = (0, 0);
    for i in 0..ITERATIONS {
        for o in outs {
            std::fs::write(o, OLD).unwrap();
        }
        let frac = (i as f64 + jitter(i)) / ITERATIONS as f64;
        let delay = full.mul_f64(1.3 * frac);
        let mut child = Command::new(exe())
            .args(args)
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        std::thread::sleep(delay);
        let _ = child.kill(); // SIGKILL on Unix
        let _ = child.wait();
        for (o, want) in outs.iter().zip(complete) {
            let got = std::fs::read(o).unwrap();
            if got == OLD {
                old_seen += 1;
            } else if &got == want {
                new_seen += 1;
            } else {
                panic!(
                    "{} is torn after a kill at {delay:?}: {} bytes, neither the old file nor the complete {} bytes",
                    o.display(),
                    got.len(),
                    want.len()
                );
            }
        }
    }
    (old_seen, new_seen)
}

/// Whatever a killed run leaves besides the outputs is a hidden partial
/// file, never a visible one.
fn only_hidden_leftovers(dir: &Path, expected: &[&str]) {
    for e in std::fs::read_dir(dir).unwrap() {
        let name = e.unwrap().file_name().to_string_lossy().into_owned();
        assert!(
            expected.contains(&name.as_str()) || (name.starts_with('.') && name.ends_with(".partial")),
            "unexpected file `{name}` after killed runs"
        );
    }
}

const SHEET: &str = "V = 230 V\nZ = (3 + j4) Ω\nI = V / Z\nS = V * conj(I)\nP = re(S)\n";

#[test]
fn batch_results_survive_sigkill() {
    let d = tempfile::tempdir().unwrap();
    let sheet = d.path().join("s.ohm");
    std::fs::write(&sheet, SHEET).unwrap();
    let cases = d.path().join("cases.csv");
    let mut text = String::from("V [V],Z [Ω]\n");
    for i in 0..60_000 {
        // every 500th row is bad, so the errors file is written too
        if i % 500 == 0 {
            text.push_str("oops,1\n");
        } else {
            text.push_str(&format!("{},{}+j{}\n", 200 + i % 50, 1 + i % 7, i % 5));
        }
    }
    std::fs::write(&cases, text).unwrap();
    let out = d.path().join("results.csv");
    let errs = d.path().join("results.errors.csv");
    let args = [
        "batch",
        sheet.to_str().unwrap(),
        "--cases",
        cases.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ];
    // bad rows make the exit status 1; that is still a complete run
    let _ = std::fs::remove_file(&out);
    let t = Instant::now();
    let _ = Command::new(exe())
        .args(args)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status();
    let full = t.elapsed();
    let complete = vec![std::fs::read(&out).unwrap(), std::fs::read(&errs).unwrap()];
    assert!(complete[0].len() > 1_000_000);
    let (old, new) = kill_many(&args, &[&out, &errs], &complete, full);
    assert!(old > 0, "no run was killed before it finished writing");
    assert_eq!(old + new, 2 * ITERATIONS);
    only_hidden_leftovers(d.path(), &["s.ohm", "cases.csv", "results.csv", "results.errors.csv"]);
}

#[test]
fn sweep_results_survive_sigkill() {
    let d = tempfile::tempdir().unwrap();
    let sheet = d.path().join("s.ohm");
    std::fs::write(&sheet, SHEET).unwrap();
    let out = d.path().join("sweep.csv");
    let args = [
        "sweep",
        sheet.to_str().unwrap(),
        "--vary",
        "V=1V..1000V",
        "--points",
        "120000",
        "--show",
        "I,S,P",
        "--csv",
        out.to_str().unwrap(),
    ];
    let (complete, full) = complete_run(&args, &[&out]);
    let (old, _) = kill_many(&args, &[&out], &complete, full);
    assert!(old > 0, "no run was killed before it finished writing");
    only_hidden_leftovers(d.path(), &["s.ohm", "sweep.csv"]);
}

/// Every file the tool writes goes through `fsutil` (temporary file,
/// fsync, rename, fsync of the folder): nothing in src/ outside fsutil.rs
/// creates or truncates a file itself. The session journal is the one
/// exception by design: it is appended to, line by line, and its reader
/// stops at a torn last line.
#[test]
fn all_writes_go_through_fsutil() {
    fn walk(dir: &Path, out: &mut Vec<PathBuf>) {
        for e in std::fs::read_dir(dir).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                walk(&p, out);
            } else if p.extension().is_some_and(|x| x == "rs") {
                out.push(p);
            }
        }
    }
    let src = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    walk(&src, &mut files);
    let allowed = [src.join("fsutil.rs"), src.join("session/journal.rs")];
    let mut bad = Vec::new();
    for f in files.iter().filter(|f| !allowed.contains(f)) {
        let text = std::fs::read_to_string(f).unwrap();
        for (i, line) in text.lines().enumerate() {
            // Test code (a `#[cfg(test)]` module, or a file of tests that
            // says `#![cfg(test)]`) writes its fixtures directly.
            if line.trim_start().starts_with("#[cfg(test)]") || line.trim_start().starts_with("#![cfg(test)]") {
                break;
            }
            let code = line.split("//").next().unwrap_or("").replace("AtomicFile::create", "");
            for w in [
                "fs::write",
                "File::create",
                "OpenOptions",
                "fs::copy",
                "fs::rename",
                "NamedTempFile",
            ] {
                if code.contains(w) {
                    bad.push(format!("{}:{}: {w}", f.display(), i + 1));
                }
            }
        }
    }
    assert!(
        bad.is_empty(),
        "write through fsutil::AtomicFile or write_atomic:\n{}",
        bad.join("\n")
    );
    assert!(files.len() > 20);
}
