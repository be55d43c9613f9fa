//! `ohmsheet report SHEET --format md|html|json -o FILE`.

use std::path::PathBuf;

use clap::{Args, ValueEnum};

use super::run::report_nans;
use super::{load_sheet, LoadArgs, EXIT_CHECK_FAILED, EXIT_ERROR, EXIT_OK};
use crate::engine::Engine;
use crate::output::report;
use crate::units::format::Style;

#[derive(Args, Debug)]
#[command(after_help = "Examples:\n  \
ohmsheet report feeder.ohm -o feeder.html\n  \
ohmsheet report feeder.ohm --format md -o feeder.md --digits 5\n  \
ohmsheet report feeder.ohm --format json --set \"Vs=415 V\"")]
pub struct ReportArgs {
    /// The sheet to report on (a .ohm file)
    pub sheet: PathBuf,
    /// Report format; without it, taken from the output file's extension (.md, .html, .json)
    #[arg(long, value_enum)]
    pub format: Option<ReportFormat>,
    /// Write the report to this file (replaced atomically); without it, print it
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Give a cell a new formula for this report, e.g. --set "Vs=480 V" (repeatable; listed in the report)
    #[arg(long = "set", value_name = "NAME=EXPR")]
    pub set: Vec<String>,
    /// Significant digits shown
    #[arg(long, default_value_t = 4, value_parser = clap::value_parser!(u8).range(1..=15))]
    pub digits: u8,
    /// Complex values as a + jb (rect), m ∠ θ (polar) or both
    #[arg(long, value_enum, default_value_t = super::ComplexArg::Both)]
    pub complex: super::ComplexArg,
    /// Monte Carlo samples for the spread section (a sheet with tolerances)
    #[arg(long, default_value_t = 10_000, value_name = "N")]
    pub samples: usize,
    /// Monte Carlo seed for the spread section: the same seed gives the same samples
    #[arg(long, default_value_t = 1, value_name = "N")]
    pub seed: u64,
    #[command(flatten)]
    pub load: LoadArgs,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum ReportFormat {
    /// Markdown (GitHub-flavoured tables)
    Md,
    /// One self-contained HTML file, ready to print
    Html,
    /// The report's content as JSON
    Json,
}

fn format_of(a: &ReportArgs) -> Result<ReportFormat, String> {
    if let Some(f) = a.format {
        return Ok(f);
    }
    let Some(out) = &a.output else {
        return Ok(ReportFormat::Md);
    };
    let ext = out
        .extension()
        .map(|e| e.to_string_lossy().to_lowercase())
        .unwrap_or_default();
    match ext.as_str() {
        "md" | "markdown" => Ok(ReportFormat::Md),
        "html" | "htm" => Ok(ReportFormat::Html),
        "json" => Ok(ReportFormat::Json),
        _ => Err(format!(
            "cannot tell the report format from `{}`; add --format md, html or json",
            out.display()
        )),
    }
}

pub fn report(a: &ReportArgs) -> i32 {
    let format = match format_of(a) {
        Ok(f) => f,
        Err(msg) => {
            eprintln!("error: {msg}");
            return EXIT_ERROR;
        }
    };
    let Ok((sheet, model)) = load_sheet(&a.sheet, &a.set, &a.load.options()) else {
        return EXIT_ERROR;
    };
    let engine = Engine::new(model);
    if report_nans(&engine) {
        eprintln!("error: no report written: a value is not a number or is infinite (see above)");
        return EXIT_ERROR;
    }
    let style = Style {
        digits: a.digits as usize,
    };
    let mut r = report::build(&sheet, &engine, &a.set, style);
    r.in_form(a.complex);
    if !engine.model.spreads.is_empty() {
        if a.samples == 0 || a.samples > super::spread::DEFAULT_MAX_SAMPLES {
            eprintln!(
                "error: --samples {} is {}\n  hint: give 1 to {} samples",
                a.samples,
                if a.samples == 0 { "none" } else { "more than allowed" },
                super::spread::DEFAULT_MAX_SAMPLES
            );
            return EXIT_ERROR;
        }
        let plan = match crate::spread::plan_for(sheet.clone(), None) {
            Ok(p) => p,
            Err(f) => {
                super::report(&f.sources, &f.diagnostics);
                return EXIT_ERROR;
            }
        };
        let worst = crate::spread::worst_case(&plan);
        let mc = crate::spread::monte_carlo(
            &plan,
            &crate::spread::McOptions {
                samples: a.samples,
                seed: a.seed,
                bins: 40,
                coverage: 0.95,
            },
        );
        let sens = crate::spread::sensitivities(&plan);
        let an = crate::output::spread::Analyses {
            plan: &plan,
            worst: Some(&worst),
            mc: Some(&mc),
            sens: Some(&sens),
            style,
        };
        r.spread = Some(report::spread::section(&an, &a.sheet.display().to_string()));
    }
    // Markdown written to a file takes its plots from SVG files beside it,
    // which Markdown viewers show (few show `data:` images).
    // `names[k]` is the file of plot `k`, or empty when it has no picture.
    let mut names: Vec<String> = Vec::new();
    if let (ReportFormat::Md, Some(path)) = (format, &a.output) {
        let stem = path
            .file_stem()
            .map_or_else(|| "report".to_string(), |s| s.to_string_lossy().into_owned());
        let dir = path.parent().map(PathBuf::from).unwrap_or_default();
        for (k, pl) in r.plots.iter().enumerate() {
            let Some(svg) = &pl.svg else {
                names.push(String::new());
                continue;
            };
            let name = format!("{stem}.plot-{}.svg", k + 1);
            let p = dir.join(&name);
            if let Err(e) = crate::fsutil::write_atomic(&p, svg.as_bytes()) {
                eprintln!("error: cannot write `{}`: {e}", p.display());
                return EXIT_ERROR;
            }
            names.push(name);
        }
        for (k, f) in r.spread.iter().flat_map(|s| &s.figures).enumerate() {
            let Some(svg) = &f.svg else {
                names.push(String::new());
                continue;
            };
            let name = format!("{stem}.spread-{}.svg", k + 1);
            let p = dir.join(&name);
            if let Err(e) = crate::fsutil::write_atomic(&p, svg.as_bytes()) {
                eprintln!("error: cannot write `{}`: {e}", p.display());
                return EXIT_ERROR;
            }
            names.push(name);
        }
    }
    let text = match format {
        ReportFormat::Md => report::markdown_with_plot_files(&r, &names),
        ReportFormat::Html => report::html(&r),
        ReportFormat::Json => report::json(&r) + "\n",
    };
    let failed = r.checks.iter().filter(|c| !c.passed).count();
    match &a.output {
        None => out!("{text}"),
        Some(path) => {
            if let Err(e) = crate::fsutil::write_atomic(path, text.as_bytes()) {
                eprintln!("error: cannot write `{}`: {e}", path.display());
                return EXIT_ERROR;
            }
            let verdict = if r.checks.is_empty() {
                "no checks".to_string()
            } else if failed == 0 && r.checks.len() == 1 {
                "the check passes".to_string()
            } else if failed == 0 {
                format!("all {} checks pass", r.checks.len())
            } else {
                format!("{failed} of {} checks FAIL", r.checks.len())
            };
            eprintln!("wrote {} ({verdict}; sheet hash {})", path.display(), &r.sha256[..16]);
        }
    }
    if failed > 0 {
        EXIT_CHECK_FAILED
    } else {
        EXIT_OK
    }
}
