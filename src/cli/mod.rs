//! The command line: clap arguments, then one function per subcommand.
//! Each returns the process exit code: 0 all fine, 1 a check failed,
//! 2 the sheet or the command line has an error.

/// `print!` for the commands: writes through `write_stdout`, so a reader
/// that goes away early (`ohmsheet run s.ohm | head`) ends the program
/// quietly instead of panicking.
macro_rules! out {
    ($($t:tt)*) => {
        $crate::cli::write_stdout(&format!($($t)*))
    };
}

/// `println!` through `write_stdout` (see `out!`).
macro_rules! outln {
    ($($t:tt)*) => {
        $crate::cli::write_stdout(&format!("{}\n", format_args!($($t)*)))
    };
}

mod batch;
mod check;
mod report;
mod run;
mod spread;
mod sweep;
mod watch;

pub use batch::errors_path;

use std::ffi::OsString;
use std::path::{Path, PathBuf};

use clap::{Args, Parser, Subcommand, ValueEnum};

use crate::diag::{Diagnostic, SourceMap};
use crate::engine::{compile, Model};
use crate::sheet::{LoadOptions, Sheet};

pub const EXIT_OK: i32 = 0;
pub const EXIT_CHECK_FAILED: i32 = 1;
pub const EXIT_ERROR: i32 = 2;

/// Write to standard output and flush. When the reader has closed the pipe
/// (`ohmsheet run s.ohm | head`) the program ends at once, quietly and with
/// exit code 0, as command-line filters do: the reader asked for no more.
/// Any other failure to write (a full disk behind `>`) is reported and
/// ends the program with exit code 2.
pub(crate) fn write_stdout(text: &str) {
    use std::io::Write;
    let mut o = std::io::stdout().lock();
    if let Err(e) = o.write_all(text.as_bytes()).and_then(|()| o.flush()) {
        stdout_failed(&e);
    }
}

/// End the program after a failed write to standard output (see
/// `write_stdout`).
pub(crate) fn stdout_failed(e: &std::io::Error) -> ! {
    if e.kind() != std::io::ErrorKind::BrokenPipe {
        eprintln!("error: cannot write to standard output: {e}");
        std::process::exit(EXIT_ERROR);
    }
    std::process::exit(EXIT_OK)
}

#[derive(Parser, Debug)]
#[command(
    name = "ohmsheet",
    version,
    about = "Worksheets of named AC quantities: phasors, units, parallel and series networks",
    long_about = None,
    args_conflicts_with_subcommands = true,
    after_help = "With no command, starts an interactive session on SHEET (or on a new, unnamed sheet)."
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Option<Command>,
    /// A sheet to work on interactively (created on /save if it does not exist)
    pub sheet: Option<PathBuf>,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Evaluate a sheet and print every cell and check
    #[command(after_help = "Examples:\n  \
ohmsheet run feeder.ohm\n  \
ohmsheet run feeder.ohm --set \"Vs=480 V\" --digits 6\n  \
ohmsheet run feeder.ohm --format json -o feeder.json")]
    Run(RunArgs),
    /// Evaluate a sheet for every row of a cases table (CSV) and write the results table
    Batch(BatchArgs),
    /// Write a calculation report: inputs, each step with the numbers put in, checks
    Report(report::ReportArgs),
    /// Run only the checks of sheets, or of every .ohm sheet under folders (for CI)
    Check(check::CheckArgs),
    /// Re-evaluate a sheet each time it, or a sheet it includes, is saved
    #[command(after_help = "Examples:\n  \
ohmsheet watch feeder.ohm\n  \
ohmsheet watch feeder.ohm --set \"Vs=415 V\" --digits 6")]
    Watch(watch::WatchArgs),
    /// Vary inputs across a range and tabulate, write or plot the shown cells
    Sweep(sweep::SweepArgs),
    /// Find the input value that brings an expression to a target, or to its largest or smallest value
    Solve(sweep::SolveArgs),
    /// How far the shown cells can move over the inputs' tolerances: worst case, Monte Carlo, sensitivities
    Spread(spread::SpreadArgs),
    /// List the built-in functions with their units
    #[command(after_help = "Examples:\n  \
ohmsheet functions\n  \
ohmsheet functions | grep -A1 par")]
    Functions,
    /// List the units and prefixes the sheet language knows
    #[command(after_help = "Examples:\n  \
ohmsheet units\n  \
ohmsheet units | tr -s ' ' '\\n' | grep -x 'kvar'")]
    Units,
    /// Serve sheets to an editor: a language server over standard input and output (see docs/editors.md)
    #[command(
        after_help = "Started by the editor, not by hand: the editor speaks the Language Server\n\
Protocol on the program's standard input and output. Settings (rect or polar, digits) come\n\
from the editor; docs/editors.md shows the setup for common editors.\n\n\
Examples:\n  \
ohmsheet lsp\n  \
ohmsheet lsp --allow-dir ../lib"
    )]
    Lsp(LspArgs),
}

#[derive(Args, Debug)]
pub struct LspArgs {
    #[command(flatten)]
    pub load: LoadArgs,
}

#[derive(Args, Debug)]
pub struct RunArgs {
    /// The sheet to evaluate (a .ohm file)
    pub sheet: PathBuf,
    /// Give a cell a new formula for this run, e.g. --set "Vs=480 V" (repeatable)
    #[arg(long = "set", value_name = "NAME=EXPR")]
    pub set: Vec<String>,
    /// Significant digits shown
    #[arg(long, default_value_t = 4, value_parser = clap::value_parser!(u8).range(1..=15))]
    pub digits: u8,
    /// Output format
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Complex values as a + jb (rect), m ∠ θ (polar) or both
    #[arg(long, value_enum, default_value_t = ComplexArg::Both)]
    pub complex: ComplexArg,
    /// Write the output to FILE (written whole, or not at all) instead of standard output
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    #[command(flatten)]
    pub load: LoadArgs,
}

/// How sheets are read.
#[derive(Args, Debug, Clone, Default)]
pub struct LoadArgs {
    /// Let `@include` read library sheets from this folder too, outside the sheet's own folder (repeatable)
    #[arg(long = "allow-dir", value_name = "DIR")]
    pub allow_dir: Vec<PathBuf>,
}

impl LoadArgs {
    pub fn options(&self) -> LoadOptions {
        LoadOptions {
            allow_dirs: self.allow_dir.clone(),
            ..LoadOptions::default()
        }
    }
}

#[derive(Args, Debug)]
#[command(
    after_help = "Each column of the cases table names an input of the sheet; its header may give \
the unit of plain numbers (`Vll [kV]`), or the values carry their own (`13.8 kV`, `(6+j10) Ω`).\n\
A column that names no input (a feeder tag, a case number) is carried through unchanged; one whose \
name is close to an input's is refused as a typo unless named with --tag.\n\
A value that does not read empties its row; a result that is not a number empties only its own \
cell; each is listed, with its reason, in RESULTS.errors.csv.\n\
Exit status: 0 every row computed, 1 some rows bad or cells not computed, 2 nothing written.\n\n\
Examples:\n  \
ohmsheet batch feeder.ohm --cases feeders.csv --out results.csv\n  \
ohmsheet batch feeder.ohm --cases feeders.csv -o results.csv --show I,pf --complex polar --digits 6\n  \
ohmsheet batch feeder.ohm --cases feeders.csv -o results.csv --tag note --spread Vload,I --samples 20000"
)]
pub struct BatchArgs {
    /// The sheet to evaluate (a .ohm file)
    pub sheet: PathBuf,
    /// The cases table: a CSV file whose header row names inputs of the sheet
    #[arg(long, value_name = "CASES.csv")]
    pub cases: PathBuf,
    /// Where to write the results table, CSV (written whole, or not at all; `--out` also works)
    #[arg(short = 'o', long = "output", visible_alias = "out", value_name = "RESULTS.csv")]
    pub out: PathBuf,
    /// Cells to write, comma-separated (default: every computed cell)
    #[arg(long, value_delimiter = ',', value_name = "CELL,…")]
    pub show: Option<Vec<String>>,
    /// Complex values as real/imaginary (rect) or magnitude/angle (polar) column pairs, or both (four columns)
    #[arg(long, value_enum, default_value_t = ComplexArg::Both)]
    pub complex: ComplexArg,
    /// Output format: CSV (the only one; taken for the same options as the other commands)
    #[arg(long, value_enum, default_value_t = BatchFormat::Csv)]
    pub format: BatchFormat,
    /// Stop at the first bad row; no results file is written
    #[arg(long)]
    pub strict: bool,
    /// No progress bar, summary or list of bad rows on stderr
    #[arg(long, short)]
    pub quiet: bool,
    /// Give a cell a new formula for every case, e.g. --set "f=50 Hz" (repeatable)
    #[arg(long = "set", value_name = "NAME=EXPR")]
    pub set: Vec<String>,
    /// Columns carried through to the results unchanged, setting no input, e.g. --tag feeder,note
    /// (needed only for a name close to an input's, or a header with a unit)
    #[arg(long = "tag", value_delimiter = ',', value_name = "COLUMN,…")]
    pub tag: Vec<String>,
    /// Significant digits of the written values (default: as many as it takes to read each back exactly)
    #[arg(long, value_parser = clap::value_parser!(u8).range(1..=17))]
    pub digits: Option<u8>,
    /// For each case, the spread of these cells over the sheet's tolerances: worst min and max (and
    /// where), Monte Carlo mean, standard deviation and 95 % interval (docs/tolerances.md)
    #[arg(long, value_delimiter = ',', value_name = "CELL,…")]
    pub spread: Option<Vec<String>>,
    /// Monte Carlo samples per case (with --spread)
    #[arg(long, default_value_t = 10_000, value_name = "N", requires = "spread")]
    pub samples: usize,
    /// Monte Carlo seed (with --spread): every case draws the same samples
    #[arg(long, default_value_t = 1, value_name = "N", requires = "spread")]
    pub seed: u64,
    #[command(flatten)]
    pub load: LoadArgs,
}

/// `--complex`: the same option and default on every command.
pub use crate::output::Form as ComplexArg;

/// What `batch` writes: CSV only (`--format` is accepted so that every
/// command takes the same options).
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum BatchFormat {
    Csv,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    Table,
    Json,
    Csv,
}

/// Run the program with these arguments (the first is the program name).
pub fn main_with(args: Vec<OsString>) -> i32 {
    let cli = match Cli::try_parse_from(args) {
        Ok(c) => c,
        Err(e) => {
            let _ = e.print();
            return if e.use_stderr() { EXIT_ERROR } else { EXIT_OK };
        }
    };
    let Some(command) = cli.command else {
        if let Some(p) = &cli.sheet {
            // `ohmsheet new.ohm` starts a new sheet; `ohmsheet rnu` is a typo.
            if !p.exists() && p.extension().is_none() {
                let word = p.display().to_string();
                let cmd = <Cli as clap::CommandFactory>::command();
                let names: Vec<&str> = cmd.get_subcommands().map(|c| c.get_name()).collect();
                let hint = match crate::diag::did_you_mean(&word, names.iter().copied()) {
                    Some(s) => format!("did you mean `ohmsheet {s}`?"),
                    None => format!(
                        "commands are {}; a new sheet needs a name with an extension, e.g. `{word}.ohm`",
                        names.join(", ")
                    ),
                };
                eprintln!("error: `{word}` is neither a command nor an existing sheet\n  hint: {hint}");
                return EXIT_ERROR;
            }
        }
        return crate::session::run(cli.sheet);
    };
    match command {
        Command::Run(a) => run::run(&a),
        Command::Batch(a) => batch::batch(&a),
        Command::Report(a) => report::report(&a),
        Command::Check(a) => check::check(&a),
        Command::Watch(a) => watch::watch(&a),
        Command::Sweep(mut a) => match a.resolve_output() {
            Ok(()) => sweep::sweep(&a),
            Err(e) => {
                eprintln!("error: {e}");
                EXIT_ERROR
            }
        },
        Command::Solve(a) => sweep::solve(&a),
        Command::Spread(a) => spread::spread(&a),
        Command::Functions => {
            out!("{}", run::functions_listing());
            EXIT_OK
        }
        Command::Units => {
            out!("{}", run::units_listing());
            EXIT_OK
        }
        Command::Lsp(a) => crate::lsp::run(a.load.allow_dir),
    }
}

/// Print diagnostics to stderr, in source order.
pub fn report(sources: &SourceMap, diags: &[Diagnostic]) {
    let mut sorted: Vec<&Diagnostic> = diags.iter().collect();
    sorted.sort_by_key(|d| d.span.map(|s| (s.file, s.start)));
    for d in sorted {
        d.eprint(sources);
    }
}

/// An error whose diagnostics have already been printed.
#[derive(Debug)]
pub struct Reported;

/// Load a sheet, apply `--set` overrides and compile it. On any error the
/// diagnostics are printed and `Err(Reported)` returned.
pub fn load_model(path: &Path, sets: &[String]) -> Result<Model, Reported> {
    load_sheet(path, sets, &LoadOptions::default()).map(|(_, m)| m)
}

/// `load_model`, keeping the sheet (its files and syntax trees) beside the
/// model.
pub fn load_sheet(path: &Path, sets: &[String], opts: &LoadOptions) -> Result<(Sheet, Model), Reported> {
    let mut sheet = match Sheet::load_with(path, opts) {
        Ok(s) => s,
        Err(e) => {
            report(&e.sources, &[e.diagnostic]);
            return Err(Reported);
        }
    };
    for s in sets {
        if let Err(d) = sheet.set_override(s) {
            // a mistyped unit: units of the cell's dimension are suggested
            let d = if d.code == crate::diag::ErrorCode::UnknownUnit {
                crate::batch::hint_units_for_assignment(d, s, &compile(&sheet))
            } else {
                d
            };
            report(&sheet.sources, &[d]);
            return Err(Reported);
        }
    }
    let model = compile(&sheet);
    if model.has_errors() {
        report(&model.sources, &model.diagnostics);
        return Err(Reported);
    }
    // Notes (warnings) do not stop the sheet, but are shown.
    let notes: Vec<Diagnostic> = model.diagnostics.iter().filter(|d| !d.is_error()).cloned().collect();
    report(&model.sources, &notes);
    Ok((sheet, model))
}
