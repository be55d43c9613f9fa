//! `ohmsheet check SHEET|FOLDER…`: only the checks, one line each, and a
//! summary; the exit code says whether all passed (0), one failed (1) or a
//! sheet could not be evaluated (2).

use std::collections::HashSet;
use std::path::PathBuf;

use clap::Args;

use super::run::report_nans;
use super::{load_sheet, LoadArgs, EXIT_CHECK_FAILED, EXIT_ERROR, EXIT_OK};
use crate::engine::Engine;
use crate::output;
use crate::units::format::Style;

#[derive(Args, Debug)]
pub struct CheckArgs {
    /// Sheets, or folders searched (with their subfolders) for *.ohm sheets
    #[arg(required = true, value_name = "SHEET_OR_FOLDER")]
    pub paths: Vec<PathBuf>,
    /// Significant digits shown
    #[arg(long, default_value_t = 4, value_parser = clap::value_parser!(u8).range(1..=15))]
    pub digits: u8,
    #[command(flatten)]
    pub load: LoadArgs,
}

/// The sheets named, folders expanded to the *.ohm files under them in
/// name order (hidden folders and symbolic links skipped), each once.
fn sheets(paths: &[PathBuf]) -> (Vec<PathBuf>, Vec<String>) {
    let mut out = Vec::new();
    let mut problems = Vec::new();
    let mut seen = HashSet::new();
    let mut push = |p: PathBuf, out: &mut Vec<PathBuf>| {
        let key = std::fs::canonicalize(&p).unwrap_or_else(|_| p.clone());
        if seen.insert(key) {
            out.push(p);
        }
    };
    for p in paths {
        if p.is_dir() {
            let before = out.len();
            let walk = walkdir::WalkDir::new(p)
                .follow_links(false)
                .sort_by_file_name()
                .into_iter()
                .filter_entry(|e| e.depth() == 0 || !e.file_name().to_string_lossy().starts_with('.'));
            for e in walk {
                match e {
                    Ok(e) if e.file_type().is_file() && e.path().extension().is_some_and(|x| x == "ohm") => {
                        push(e.into_path(), &mut out)
                    }
                    Ok(_) => {}
                    Err(err) => problems.push(format!("cannot read folder: {err}")),
                }
            }
            if out.len() == before {
                problems.push(format!("no .ohm sheets in `{}`", p.display()));
            }
        } else if p.exists() {
            push(p.clone(), &mut out);
        } else {
            problems.push(format!("`{}` does not exist", p.display()));
        }
    }
    (out, problems)
}

pub fn check(a: &CheckArgs) -> i32 {
    let style = Style {
        digits: a.digits as usize,
    };
    let (files, problems) = sheets(&a.paths);
    for p in &problems {
        eprintln!("error: {p}");
    }
    let opts = a.load.options();
    let (mut passed, mut failed, mut broken, mut no_checks) = (0usize, 0usize, problems.len(), 0usize);
    for f in &files {
        let shown = f.display().to_string();
        let name = shown.strip_prefix("./").unwrap_or(&shown).to_string();
        let Ok((_, model)) = load_sheet(f, &[], &opts) else {
            println!("ERROR {name}: the sheet has errors (shown above)");
            broken += 1;
            continue;
        };
        let engine = Engine::new(model);
        let rows = output::check_rows(&engine, style);
        if report_nans(&engine) {
            println!("ERROR {name}: a value is not a number (shown above)");
            broken += 1;
        }
        if rows.is_empty() {
            println!("  --  {name}: no checks");
            no_checks += 1;
        }
        for c in &rows {
            let verdict = if c.passed { "pass" } else { "FAIL" };
            let where_ = if c.file == shown {
                format!("{name}:{}", c.line)
            } else {
                let file = c.file.strip_prefix("./").unwrap_or(&c.file);
                format!("{file}:{} (included by {name})", c.line)
            };
            println!(
                "{verdict}  {where_}  {}  (computed {}, |difference| {}, allowed {})",
                c.expr, c.lhs_display, c.error_display, c.tolerance_display
            );
            if c.passed {
                passed += 1;
            } else {
                failed += 1;
            }
        }
    }
    let sheets_n = files.len();
    let mut summary = format!(
        "{} check{} in {sheets_n} sheet{}: {passed} pass, {failed} fail",
        passed + failed,
        if passed + failed == 1 { "" } else { "s" },
        if sheets_n == 1 { "" } else { "s" },
    );
    if no_checks > 0 {
        summary.push_str(&format!(
            "; {no_checks} sheet{} without checks",
            if no_checks == 1 { "" } else { "s" }
        ));
    }
    if broken > 0 {
        summary.push_str(&format!("; {broken} error{}", if broken == 1 { "" } else { "s" }));
    }
    println!("{summary}");
    if broken > 0 {
        EXIT_ERROR
    } else if failed > 0 {
        EXIT_CHECK_FAILED
    } else {
        EXIT_OK
    }
}
