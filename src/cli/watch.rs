//! `ohmsheet watch SHEET`: evaluate, then again each time the sheet or a
//! sheet it includes is saved, printing only what changed and the check
//! status. A save that does not compile shows its errors and keeps the
//! last good values (nothing is printed over them).
//!
//! The folders holding the files are watched, not the files: an editor
//! that saves by writing a new file and renaming it over the old one
//! replaces the file, and a watch on the old file would go quiet.

use std::collections::{HashMap, HashSet};
use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::Duration;

use clap::Args;
use notify::{RecursiveMode, Watcher};
use num_complex::Complex64 as C64;

use super::run::report_nans;
use super::{load_sheet, LoadArgs, EXIT_ERROR};
use crate::engine::Engine;
use crate::output::{self, table, CellRow, CheckRow};
use crate::units::format::Style;

#[derive(Args, Debug)]
pub struct WatchArgs {
    /// The sheet to watch (a .ohm file)
    pub sheet: PathBuf,
    /// Give a cell a new formula while watching, e.g. --set "Vs=480 V" (repeatable)
    #[arg(long = "set", value_name = "NAME=EXPR")]
    pub set: Vec<String>,
    /// Significant digits shown
    #[arg(long, default_value_t = 4, value_parser = clap::value_parser!(u8).range(1..=15))]
    pub digits: u8,
    #[command(flatten)]
    pub load: LoadArgs,
}

/// What was last shown: every value and every check verdict.
struct Shown {
    cells: Vec<CellRow>,
    checks: Vec<CheckRow>,
}

/// How long to wait for an editor to finish a save (several events) before
/// reading the files.
const SETTLE: Duration = Duration::from_millis(150);

pub fn watch(a: &WatchArgs) -> i32 {
    let style = Style {
        digits: a.digits as usize,
    };
    let (tx, rx) = mpsc::channel::<notify::Result<notify::Event>>();
    let mut watcher = match notify::recommended_watcher(tx) {
        Ok(w) => w,
        Err(e) => {
            eprintln!("error: cannot watch files on this system: {e}");
            return EXIT_ERROR;
        }
    };
    let mut last: Option<Shown> = None;
    let mut files: HashSet<PathBuf> = HashSet::new();
    let mut dirs: HashSet<PathBuf> = HashSet::new();
    let mut update = 0u64;

    evaluate(a, style, &mut last, &mut files);
    if files.is_empty() {
        // Not even the main file could be read: watch for it to appear.
        if let Some(c) = absolute(&a.sheet) {
            files.insert(c);
        }
    }
    rewatch(&mut watcher, &files, &mut dirs);
    outln!(
        "watching {} file{} for saves; press Ctrl-C to stop",
        files.len(),
        if files.len() == 1 { "" } else { "s" }
    );

    loop {
        let Ok(first) = rx.recv() else {
            eprintln!("error: the file watcher stopped");
            return EXIT_ERROR;
        };
        let mut saved: Vec<PathBuf> = Vec::new();
        touches(&first, &files, &mut saved);
        // Let the save finish: gather the burst of events it makes.
        while let Ok(ev) = rx.recv_timeout(SETTLE) {
            touches(&ev, &files, &mut saved);
        }
        if saved.is_empty() {
            continue;
        }
        update += 1;
        let names: Vec<String> = saved
            .iter()
            .map(|p| {
                p.file_name()
                    .map_or_else(|| p.display().to_string(), |n| n.to_string_lossy().into_owned())
            })
            .collect();
        outln!("\n── update {update}: {} saved ──", names.join(", "));
        evaluate(a, style, &mut last, &mut files);
        rewatch(&mut watcher, &files, &mut dirs);
    }
}

/// The absolute form of a path whose file may not exist right now: its
/// folder canonicalised, its name kept.
fn absolute(p: &Path) -> Option<PathBuf> {
    if let Ok(c) = std::fs::canonicalize(p) {
        return Some(c);
    }
    let name = p.file_name()?;
    let dir = match p.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    Some(std::fs::canonicalize(dir).ok()?.join(name))
}

/// Add to `saved` each of our files an event is about.
fn touches(ev: &notify::Result<notify::Event>, files: &HashSet<PathBuf>, saved: &mut Vec<PathBuf>) {
    let ev = match ev {
        Ok(ev) => ev,
        Err(e) => {
            eprintln!("warning: file watcher: {e}");
            return;
        }
    };
    if ev.kind.is_access() {
        return;
    }
    for p in &ev.paths {
        let hit = if files.contains(p) {
            Some(p.clone())
        } else {
            absolute(p).filter(|c| files.contains(c))
        };
        if let Some(h) = hit {
            if !saved.contains(&h) {
                saved.push(h);
            }
        }
    }
}

fn rewatch(w: &mut notify::RecommendedWatcher, files: &HashSet<PathBuf>, dirs: &mut HashSet<PathBuf>) {
    let want: HashSet<PathBuf> = files.iter().filter_map(|f| f.parent().map(Path::to_path_buf)).collect();
    for d in dirs.difference(&want) {
        let _ = w.unwatch(d);
    }
    for d in want.difference(dirs) {
        if let Err(e) = w.watch(d, RecursiveMode::NonRecursive) {
            eprintln!("warning: cannot watch `{}`: {e}", d.display());
        }
    }
    *dirs = want;
}

/// Load and evaluate; print everything the first time, then only changes.
/// `files` becomes the set of files the sheet now consists of (kept as it
/// was when the sheet cannot be read, so the watch goes on).
fn evaluate(a: &WatchArgs, style: Style, last: &mut Option<Shown>, files: &mut HashSet<PathBuf>) {
    let loaded = load_sheet(&a.sheet, &a.set, &a.load.options());
    let (sheet, model) = match loaded {
        Ok(x) => x,
        Err(_) => {
            // The diagnostics are on stderr; the earlier values stay on screen.
            if let Ok(s) = crate::sheet::Sheet::load_with(&a.sheet, &a.load.options()) {
                files.extend(s.files.iter().filter_map(|f| f.canonical.clone()));
            }
            if last.is_some() {
                outln!("the sheet has errors (above); the values shown before are the last good ones");
            } else {
                outln!("the sheet has errors (above); waiting for a save that fixes them");
            }
            return;
        }
    };
    *files = sheet.files.iter().filter_map(|f| f.canonical.clone()).collect();
    let engine = Engine::new(model);
    let _ = report_nans(&engine);
    let now = Shown {
        cells: output::cell_rows(&engine, style),
        checks: output::check_rows(&engine, style),
    };
    match last {
        None => {
            out!("{}", table::cells_table(&engine.model, &now.cells));
            out!("{}", table::checks_table(&now.checks));
        }
        Some(before) => out!("{}", changes(before, &now)),
    }
    outln!("{}", check_status(&now.checks));
    *last = Some(now);
}

fn bits(re: f64, im: f64) -> (u64, u64) {
    (re.to_bits(), im.to_bits())
}

/// The lines describing what changed between two evaluations.
fn changes(before: &Shown, now: &Shown) -> String {
    let mut out = String::new();
    let old: HashMap<&str, &CellRow> = before.cells.iter().map(|c| (c.name.as_str(), c)).collect();
    let new_names: HashSet<&str> = now.cells.iter().map(|c| c.name.as_str()).collect();
    let w = now
        .cells
        .iter()
        .chain(before.cells.iter())
        .map(|c| unicode_width::UnicodeWidthStr::width(c.name.as_str()))
        .max()
        .unwrap_or(0);
    let pad = |s: &str| {
        let n = unicode_width::UnicodeWidthStr::width(s);
        format!("{s}{}", " ".repeat(w.saturating_sub(n)))
    };
    let mut n = 0;
    for c in &now.cells {
        match old.get(c.name.as_str()) {
            None => {
                out.push_str(&format!("  + {}  {}   (new)\n", pad(&c.name), c.display));
                n += 1;
            }
            Some(o) => {
                let changed = bits(o.re, o.im) != bits(c.re, c.im) || o.unit != c.unit;
                if changed {
                    let same_text = o.display == c.display;
                    let arrow = if same_text {
                        format!(
                            "{}   (changed beyond the digits shown: {} → {})",
                            c.display,
                            num(o),
                            num(c)
                        )
                    } else {
                        format!("{}  →  {}", o.display, c.display)
                    };
                    out.push_str(&format!("  ~ {}  {arrow}\n", pad(&c.name)));
                    n += 1;
                } else if o.formula != c.formula {
                    out.push_str(&format!(
                        "  ~ {}  formula now `{}` (value unchanged)\n",
                        pad(&c.name),
                        c.formula
                    ));
                    n += 1;
                }
            }
        }
    }
    for o in &before.cells {
        if !new_names.contains(o.name.as_str()) {
            out.push_str(&format!("  - {}  (removed)\n", pad(&o.name)));
            n += 1;
        }
    }
    // Checks whose verdict turned.
    let was: HashMap<&str, bool> = before.checks.iter().map(|c| (c.expr.as_str(), c.passed)).collect();
    for c in &now.checks {
        match was.get(c.expr.as_str()) {
            Some(&p) if p == c.passed => {}
            Some(_) | None => {
                let verdict = if c.passed { "now passes" } else { "now FAILS" };
                out.push_str(&format!(
                    "  check line {}: {}  {verdict} (computed {}, |difference| {}, allowed {})\n",
                    c.line, c.expr, c.lhs_display, c.error_display, c.tolerance_display
                ));
                n += 1;
            }
        }
    }
    if n == 0 {
        out.push_str("  no values changed\n");
    }
    out
}

fn num(c: &CellRow) -> String {
    let z = C64::new(c.re, c.im);
    if z.im == 0.0 {
        format!("{:e} {}", z.re, c.unit)
    } else {
        format!("{:e} + j{:e} {}", z.re, z.im, c.unit)
    }
}

fn check_status(checks: &[CheckRow]) -> String {
    if checks.is_empty() {
        return "checks: none".into();
    }
    let failed: Vec<&CheckRow> = checks.iter().filter(|c| !c.passed).collect();
    if failed.is_empty() {
        format!("checks: all {} pass", checks.len())
    } else {
        let lines: Vec<String> = failed.iter().map(|c| format!("line {}", c.line)).collect();
        format!(
            "checks: {} of {} FAIL ({})",
            failed.len(),
            checks.len(),
            lines.join(", ")
        )
    }
}
