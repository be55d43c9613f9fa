//! `ohmsheet spread`: worst case, Monte Carlo and sensitivities of a
//! sheet's shown cells over its inputs' tolerances.

use std::path::{Path, PathBuf};

use clap::Args;

use super::{load_sheet, report, Format, LoadArgs, EXIT_ERROR, EXIT_OK};
use crate::output::spread::Analyses;
use crate::spread::{monte_carlo, sensitivities, worst_case, McOptions};
use crate::units::format::Style;

/// The most Monte Carlo samples without `--max-samples`.
pub const DEFAULT_MAX_SAMPLES: usize = 10_000_000;

#[derive(Args, Debug)]
#[command(after_help = "Inputs state their tolerances in the sheet: `Zt = 6 % within 7.5 %`, \
`Qc = 600 kvar within -0 % .. +10 %`, `Ssc = 250 MVA within 20 % normal 2σ`, \
`Qb = 600 kvar among 450 kvar, 600 kvar, 750 kvar` (docs/tolerances.md).\n\
With none of --worst, --monte-carlo, --sensitivities, all three are run.\n\n\
Examples:\n  \
ohmsheet spread plant.ohm\n  \
ohmsheet spread plant.ohm --show Vbus,Ibank --monte-carlo --samples 100000 --seed 7\n  \
ohmsheet spread plant.ohm --format json -o spread.json")]
pub struct SpreadArgs {
    /// The sheet (a .ohm file) whose inputs state tolerances
    pub sheet: PathBuf,
    /// Cells or expressions to analyse, comma-separated (default: every computed cell)
    #[arg(long, value_delimiter = ',', value_name = "CELL,…")]
    pub show: Option<Vec<String>>,
    /// The extremes of each cell over the tolerance box, and where they lie
    #[arg(long)]
    pub worst: bool,
    /// Random samples of the inputs: mean, standard deviation, interval, percentiles, histogram
    #[arg(long = "monte-carlo")]
    pub monte_carlo: bool,
    /// Each cell's change per change of each input, ranked
    #[arg(long)]
    pub sensitivities: bool,
    /// Monte Carlo samples
    #[arg(long, default_value_t = 10_000, value_name = "N")]
    pub samples: usize,
    /// Monte Carlo seed: the same seed gives the same samples
    #[arg(long, default_value_t = 1, value_name = "N")]
    pub seed: u64,
    /// Histogram bins
    #[arg(long, default_value_t = 40, value_parser = clap::value_parser!(u16).range(1..=1000))]
    pub bins: u16,
    /// Allow more samples than 10,000,000
    #[arg(long = "max-samples", default_value_t = DEFAULT_MAX_SAMPLES, value_name = "N")]
    pub max_samples: usize,
    /// Give a cell a new formula for this run, e.g. --set "Qc=700 kvar" (repeatable)
    #[arg(long = "set", value_name = "NAME=EXPR")]
    pub set: Vec<String>,
    /// Significant digits shown
    #[arg(long, default_value_t = 4, value_parser = clap::value_parser!(u8).range(1..=15))]
    pub digits: u8,
    /// Draw each cell's histogram (Monte Carlo) and ranking chart (sensitivities) as SVG files
    /// named from FILE: plant.svg gives plant.Vbus.histogram.svg, plant.Vbus.ranking.svg, …
    #[arg(long, value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
    /// Output format
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Write the output to FILE (written whole, or not at all) instead of standard output
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    #[command(flatten)]
    pub load: LoadArgs,
}

pub fn spread(a: &SpreadArgs) -> i32 {
    let Ok((sheet, model)) = load_sheet(&a.sheet, &a.set, &a.load.options()) else {
        return EXIT_ERROR;
    };
    if a.samples == 0 || a.samples > a.max_samples {
        eprintln!(
            "error: --samples {} is {}\n  hint: give 1 to {} samples, or raise --max-samples",
            a.samples,
            if a.samples == 0 { "none" } else { "more than allowed" },
            a.max_samples
        );
        return EXIT_ERROR;
    }
    let plan = match crate::spread::plan_for(sheet, a.show.as_deref()) {
        Ok(p) => p,
        Err(f) => {
            report(&f.sources, &f.diagnostics);
            return EXIT_ERROR;
        }
    };
    drop(model);
    let all = !(a.worst || a.monte_carlo || a.sensitivities);
    let worst = (all || a.worst).then(|| worst_case(&plan));
    let mc = (all || a.monte_carlo).then(|| {
        monte_carlo(
            &plan,
            &McOptions {
                samples: a.samples,
                seed: a.seed,
                bins: a.bins as usize,
                coverage: 0.95,
            },
        )
    });
    if a.plot.is_some() && !(all || a.monte_carlo || a.sensitivities) {
        eprintln!(
            "error: nothing to draw: --plot draws the Monte Carlo histograms and the sensitivity rankings\n  \
             hint: add --monte-carlo or --sensitivities, or leave out --worst"
        );
        return EXIT_ERROR;
    }
    let sens = (all || a.sensitivities).then(|| sensitivities(&plan));
    let an = Analyses {
        plan: &plan,
        worst: worst.as_ref(),
        mc: mc.as_ref(),
        sens: sens.as_ref(),
        style: Style {
            digits: a.digits as usize,
        },
    };
    let text = match a.format {
        Format::Table => an.table(),
        Format::Json => format!(
            "{}\n",
            serde_json::to_string_pretty(&an.json(&a.sheet.display().to_string())).unwrap_or_default()
        ),
        Format::Csv => an.csv(),
    };
    if let Some(p) = &a.plot {
        let code = write_plots(&an, p, &a.sheet);
        if code != EXIT_OK {
            return code;
        }
    }
    match &a.output {
        None => out!("{text}"),
        Some(p) => {
            if crate::fsutil::same_file(p, &a.sheet) {
                eprintln!(
                    "error: --output `{}` is the sheet; it would be overwritten",
                    p.display()
                );
                return EXIT_ERROR;
            }
            if let Err(e) = crate::fsutil::write_atomic(p, text.as_bytes()) {
                eprintln!("error: cannot write `{}`: {e}", p.display());
                return EXIT_ERROR;
            }
        }
    }
    EXIT_OK
}

/// A cell's name as part of a file name: itself when it is a plain name,
/// else `cellK` (an expression given to --show).
fn file_part(name: &str, c: usize) -> String {
    if !name.is_empty() && name.chars().all(|ch| ch.is_alphanumeric() || ch == '_') {
        name.to_string()
    } else {
        format!("cell{}", c + 1)
    }
}

/// Write each shown cell's pictures beside `p`, named from its stem.
fn write_plots(an: &Analyses, p: &Path, sheet: &Path) -> i32 {
    let stem = p
        .file_stem()
        .map_or_else(|| "spread".to_string(), |s| s.to_string_lossy().into_owned());
    let dir = p.parent().map(PathBuf::from).unwrap_or_default();
    let mut written = Vec::new();
    for c in 0..an.plan.shown.len() {
        let name = file_part(&an.plan.shown[c].series.name, c);
        for (what, pic) in [("histogram", an.histogram_svg(c)), ("ranking", an.ranking_svg(c))] {
            let Some((svg, _)) = pic else { continue };
            let path = dir.join(format!("{stem}.{name}.{what}.svg"));
            if crate::fsutil::same_file(&path, sheet) {
                eprintln!("error: `{}` is the sheet; it would be overwritten", path.display());
                return EXIT_ERROR;
            }
            if let Err(e) = crate::fsutil::write_atomic(&path, svg.as_bytes()) {
                eprintln!("error: cannot write `{}`: {e}", path.display());
                return EXIT_ERROR;
            }
            written.push(path);
        }
    }
    eprintln!(
        "wrote {} picture{}: {} …",
        written.len(),
        if written.len() == 1 { "" } else { "s" },
        written.first().map_or(String::new(), |w| w.display().to_string())
    );
    EXIT_OK
}
