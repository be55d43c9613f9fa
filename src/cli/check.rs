//! `ohmsheet check SHEET|FOLDER…`: only the checks, one line each, and a
//! summary; the exit code says whether all passed (0), one failed (1) or a
//! sheet could not be evaluated (2).

use std::collections::HashSet;
use std::path::PathBuf;

use clap::Args;

use super::run::report_nans;
use super::{LoadArgs, EXIT_CHECK_FAILED, EXIT_ERROR, EXIT_OK};
use crate::engine::Engine;
use crate::output;
use crate::output::checks::{self, SheetChecks, Totals};
use crate::units::format::Style;

#[derive(Args, Debug)]
#[command(
    after_help = "Exit status: 0 every check passed, 1 a check failed, 2 a sheet could not be evaluated.\n\n\
Examples:\n  \
ohmsheet check sheets/\n  \
ohmsheet check sheets/ --format junit -o check-results.xml\n  \
ohmsheet check feeder.ohm motor.ohm --format json --digits 6"
)]
pub struct CheckArgs {
    /// Sheets, or folders searched (with their subfolders) for *.ohm sheets
    #[arg(required = true, value_name = "SHEET_OR_FOLDER")]
    pub paths: Vec<PathBuf>,
    /// Significant digits shown
    #[arg(long, default_value_t = 4, value_parser = clap::value_parser!(u8).range(1..=15))]
    pub digits: u8,
    /// Output format: lines for people (`table`; `text` also works), or JSON or JUnit XML (read natively by CI systems)
    #[arg(long, value_enum, default_value_t = CheckFormat::Table)]
    pub format: CheckFormat,
    /// Computed and reference values as a + jb (rect), m ∠ θ (polar) or both
    #[arg(long, value_enum, default_value_t = super::ComplexArg::Both)]
    pub complex: super::ComplexArg,
    /// Write the result to FILE (written whole, or not at all); with json or junit the lines for
    /// people still go to the terminal
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    #[command(flatten)]
    pub load: LoadArgs,
}

/// What `check` writes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum CheckFormat {
    /// Lines for people (the name `text` of earlier versions also works)
    #[value(alias = "text")]
    Table,
    Json,
    Junit,
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

/// Load and compile a sheet as `load_sheet` does (diagnostics on stderr),
/// giving the diagnostics as plain text on failure.
fn load(f: &std::path::Path, opts: &crate::sheet::LoadOptions) -> Result<Engine, String> {
    let sheet = match crate::sheet::Sheet::load_with(f, opts) {
        Ok(s) => s,
        Err(e) => {
            e.diagnostic.eprint(&e.sources);
            return Err(e.diagnostic.render_plain(&e.sources));
        }
    };
    let model = crate::engine::compile(&sheet);
    if model.has_errors() {
        super::report(&model.sources, &model.diagnostics);
        let text: Vec<String> = model
            .diagnostics
            .iter()
            .filter(|d| d.is_error())
            .map(|d| d.render_plain(&model.sources))
            .collect();
        return Err(text.join(""));
    }
    // Notes (warnings) do not stop the sheet, but are shown.
    let notes: Vec<crate::diag::Diagnostic> = model.diagnostics.iter().filter(|d| !d.is_error()).cloned().collect();
    super::report(&model.sources, &notes);
    Ok(Engine::new(model))
}

/// The NaN messages `report_nans` prints, as plain text.
fn nan_text(engine: &Engine) -> String {
    let m = &engine.model;
    let mut out = String::new();
    for id in engine.nan_origins() {
        let c = &m.cells[id as usize];
        match crate::sweep::search_failure(engine, id) {
            Some(d) => out.push_str(&d.render_plain(&m.sources)),
            None => out.push_str(&format!(
                "{}:{}: `{}` evaluated to NaN (not a number)\n",
                m.sources.get(c.file).name,
                c.line,
                c.name
            )),
        }
    }
    for (id, error) in engine.inf_origins() {
        if error {
            out.push_str(&engine.inf_diagnostic(id, true).render_plain(&m.sources));
        }
    }
    out
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
    // The lines for people go to stdout unless a machine format does; to
    // FILE with `--format table -o FILE`, as `run -o` writes its table.
    let text = a.format == CheckFormat::Table || a.output.is_some();
    let to_file = a.format == CheckFormat::Table && a.output.is_some();
    let mut kept = String::new();
    let mut say = |line: String| {
        if to_file {
            kept.push_str(&line);
            kept.push('\n');
        } else if text {
            outln!("{line}")
        }
    };
    let mut results: Vec<SheetChecks> = Vec::new();
    for f in &files {
        let shown = f.display().to_string();
        let name = shown.strip_prefix("./").unwrap_or(&shown).to_string();
        let engine = match load(f, &opts) {
            Ok(e) => e,
            Err(why) => {
                say(format!("ERROR {name}: the sheet has errors (shown above)"));
                results.push(SheetChecks {
                    sheet: name,
                    error: Some(why),
                    checks: Vec::new(),
                });
                continue;
            }
        };
        let mut rows = output::check_rows(&engine, style);
        output::checks_in_form(&mut rows, a.complex);
        let mut error = None;
        if report_nans(&engine) {
            say(format!(
                "ERROR {name}: a value is not a number or is infinite (shown above)"
            ));
            error = Some(nan_text(&engine));
        }
        if rows.is_empty() {
            say(format!("  --  {name}: no checks"));
        }
        for c in &rows {
            let verdict = if c.passed { "pass" } else { "FAIL" };
            let where_ = if c.file == shown {
                format!("{name}:{}", c.line)
            } else {
                let file = c.file.strip_prefix("./").unwrap_or(&c.file);
                format!("{file}:{} (included by {name})", c.line)
            };
            say(format!(
                "{verdict}  {where_}  {}  (computed {}, |difference| {}, allowed {})",
                c.expr, c.lhs_display, c.error_display, c.tolerance_display
            ));
            if let Some(o) = &c.over {
                say(format!("      {o}"));
            }
        }
        let rows = rows
            .into_iter()
            .map(|mut c| {
                if let Some(x) = c.file.strip_prefix("./") {
                    c.file = x.to_string();
                }
                c
            })
            .collect();
        results.push(SheetChecks {
            sheet: name,
            error,
            checks: rows,
        });
    }
    let t = Totals::of(&results, problems.len());
    let (passed, failed, broken, no_checks, sheets_n) = (t.passed, t.failed, t.errors, t.without_checks, t.sheets);
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
    say(summary);
    let doc = match a.format {
        CheckFormat::Table => a.output.is_some().then_some(kept),
        CheckFormat::Json => Some(checks::to_json(&results, &problems) + "\n"),
        CheckFormat::Junit => Some(checks::to_junit(&results, &problems)),
    };
    match (doc, &a.output) {
        (Some(doc), Some(path)) => {
            if let Err(e) = crate::fsutil::write_atomic(path, doc.as_bytes()) {
                eprintln!("error: cannot write `{}`: {e}", path.display());
                return EXIT_ERROR;
            }
        }
        (Some(doc), None) => out!("{doc}"),
        (None, _) => {}
    }
    if broken > 0 {
        EXIT_ERROR
    } else if failed > 0 {
        EXIT_CHECK_FAILED
    } else {
        EXIT_OK
    }
}
