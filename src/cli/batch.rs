//! `ohmsheet batch`: a sheet over every row of a cases table.

use std::fs::File;
use std::io::{IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::Instant;

use super::{load_sheet, report, BatchArgs, ComplexArg, EXIT_CHECK_FAILED, EXIT_ERROR, EXIT_OK};
#[cfg(not(unix))]
use crate::batch::run_stream;
#[cfg(unix)]
use crate::batch::run_stream_at;
use crate::batch::{csv_line, Cases, ComplexForm, Plan, RowError, StreamOptions};
use crate::diag::{Diagnostic, ErrorCode, SourceMap};
use crate::fsutil::{remove_partial_files_on_interrupt, same_file, AtomicFile};

/// Bad rows listed on stderr before the rest are only counted.
const SHOW_ERRORS: u64 = 10;

/// `results.csv` → `results.errors.csv`, in the same directory.
pub fn errors_path(out: &Path) -> PathBuf {
    let stem = match out.extension() {
        Some(e) if e.eq_ignore_ascii_case("csv") => out.file_stem(),
        _ => out.file_name(),
    };
    let stem = stem.map_or_else(|| "results".into(), |s| s.to_string_lossy().into_owned());
    out.with_file_name(format!("{stem}.errors.csv"))
}

fn fail(message: String) -> i32 {
    report(&SourceMap::new(), &[Diagnostic::unplaced(ErrorCode::Io, message)]);
    EXIT_ERROR
}

pub fn batch(a: &BatchArgs) -> i32 {
    let started = Instant::now();
    let Ok((_, model)) = load_sheet(&a.sheet, &a.set, &a.load.options()) else {
        return EXIT_ERROR;
    };
    let err_path = errors_path(&a.out);
    for (p, what) in [(&a.out, "--out"), (&err_path, "the errors file")] {
        if same_file(p, &a.cases) || same_file(p, &a.sheet) {
            return fail(format!(
                "{what} `{}` is one of the input files; it would be overwritten",
                p.display()
            ));
        }
    }
    let file = match File::open(&a.cases) {
        Ok(f) => f,
        Err(e) => return fail(format!("cannot read `{}`: {e}", a.cases.display())),
    };
    let total_bytes = file.metadata().map(|m| m.len()).unwrap_or(0);
    let mut cases = Cases::new(file);
    let headers: Vec<String> = match cases.header() {
        Ok(Some(h)) if h.iter().any(|f| !f.is_empty()) => {
            h.iter().map(|f| String::from_utf8_lossy(f).into_owned()).collect()
        }
        Ok(_) => {
            return fail(format!(
                "`{}` is empty; its first line names the inputs a case sets",
                a.cases.display()
            ))
        }
        Err(e) => return fail(format!("cannot read `{}`: {e}", a.cases.display())),
    };
    let form = match a.complex {
        ComplexArg::Rect => ComplexForm::Rect,
        ComplexArg::Polar => ComplexForm::Polar,
        ComplexArg::Both => ComplexForm::Both,
    };
    if a.spread.is_some() && (a.samples == 0 || a.samples > super::spread::DEFAULT_MAX_SAMPLES) {
        eprintln!(
            "error: --samples {} is {}\n  hint: give 1 to {} samples per case",
            a.samples,
            if a.samples == 0 { "none" } else { "more than allowed" },
            super::spread::DEFAULT_MAX_SAMPLES
        );
        return EXIT_ERROR;
    }
    let plan =
        Plan::with_tags(Arc::new(model), &headers, &a.tag, a.show.as_deref(), form).and_then(|p| match &a.spread {
            Some(names) => p.with_spread(names, a.samples, a.seed),
            None => Ok(p),
        });
    let plan = match plan {
        Ok(p) => Arc::new(p.with_digits(a.digits.map(usize::from))),
        Err(d) => {
            let mut d = d;
            d.message = format!("{}: {}", a.cases.display(), d.message);
            report(&SourceMap::new(), &[d]);
            return EXIT_ERROR;
        }
    };

    remove_partial_files_on_interrupt();
    let mut out = match AtomicFile::create(&a.out) {
        Ok(f) => f,
        Err(e) => return fail(format!("cannot write `{}`: {e}", a.out.display())),
    };
    let mut errs = match AtomicFile::create(&err_path) {
        Ok(f) => f,
        Err(e) => return fail(format!("cannot write `{}`: {e}", err_path.display())),
    };
    let header = csv_line(&plan.out_header());
    let errs_header = csv_line(&["case", "line", "column", "value", "reason"]);
    if let Err(e) = out.write_all(&header).and_then(|_| errs.write_all(&errs_header)) {
        return fail(format!("cannot write the results: {e}"));
    }

    let bar = (!a.quiet && std::io::stderr().is_terminal()).then(|| {
        let b = indicatif::ProgressBar::new(total_bytes);
        b.set_style(
            indicatif::ProgressStyle::with_template("{bar:30} {bytes}/{total_bytes} {msg} ({eta} left)")
                .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
        );
        b
    });
    let cases_name = a.cases.display().to_string();
    let mut listed = 0u64;
    let quiet = a.quiet;
    let mut on_errors = |rows: &[RowError]| -> std::io::Result<()> {
        for e in rows {
            errs.write_all(&csv_line(&[
                e.case.to_string(),
                e.line.to_string(),
                e.column.clone(),
                e.value.clone(),
                e.reason.clone(),
            ]))?;
            if !quiet && listed < SHOW_ERRORS {
                listed += 1;
                let col = if e.column.is_empty() {
                    String::new()
                } else {
                    format!(" column `{}`:", e.column)
                };
                let msg = format!("{cases_name}:{}: case {}:{col} {}", e.line, e.case, e.reason);
                // the value quoted comes from the cases file: no control sequences to the terminal
                let msg = crate::diag::terminal_safe(&msg).into_owned();
                match &bar {
                    Some(b) => b.suspend(|| eprintln!("{msg}")),
                    None => eprintln!("{msg}"),
                }
            }
        }
        Ok(())
    };
    let mut progress = |done: u64, bytes: u64| {
        if let Some(b) = &bar {
            b.set_position(bytes);
            b.set_message(format!("{done} cases"));
        }
    };
    let opts = StreamOptions {
        strict: a.strict,
        ..StreamOptions::default()
    };
    // Workers write their chunks straight into the temporary file, each at
    // its place, where the platform allows; otherwise in order from here.
    #[cfg(unix)]
    let result = match out.placed() {
        Ok((file, start)) => run_stream_at(plan, cases, file, start, &mut on_errors, &mut progress, opts),
        Err(e) => return fail(format!("cannot write `{}`: {e}", a.out.display())),
    };
    #[cfg(not(unix))]
    let result = run_stream(plan, cases, &mut out, &mut on_errors, &mut progress, opts);
    if let Some(b) = &bar {
        b.finish_and_clear();
    }
    let summary = match result {
        Ok(s) => s,
        Err(e) => return fail(format!("{e}; no results were written")),
    };
    if summary.stopped {
        eprintln!("stopped at case {} (--strict); no results were written", summary.cases);
        return EXIT_ERROR;
    }
    if let Err(e) = errs.commit().and_then(|_| out.commit()) {
        return fail(format!("cannot write `{}`: {e}", a.out.display()));
    }
    if !a.quiet {
        let bad = if summary.bad_rows == 0 {
            String::new()
        } else {
            format!(
                "; {} bad row{} (what was not computed is left empty), listed in {}",
                summary.bad_rows,
                if summary.bad_rows == 1 { "" } else { "s" },
                err_path.display()
            )
        };
        eprintln!(
            "{} cases → {} in {:.2} s{bad}",
            summary.cases,
            a.out.display(),
            started.elapsed().as_secs_f64()
        );
    }
    if summary.bad_rows > 0 {
        EXIT_CHECK_FAILED
    } else {
        EXIT_OK
    }
}
