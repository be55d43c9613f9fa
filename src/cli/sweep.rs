//! `ohmsheet sweep` and `ohmsheet solve`.

use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};

use clap::{Args, ValueEnum};
use num_complex::Complex64 as C64;

use super::{load_sheet, report, LoadArgs, EXIT_CHECK_FAILED, EXIT_ERROR, EXIT_OK};
use crate::diag::{Diagnostic, ErrorCode, SourceMap};
use crate::engine::search::Goal;
use crate::engine::Engine;
use crate::output::sweep::{self as out, CsvRows, Parts};
use crate::sweep::{self, Axis, Series, SolveError, SolveRequest, Study, SweepResult};
use crate::units::format::{format_value, Style};

#[derive(Args, Debug)]
#[command(after_help = "Examples:\n  \
ohmsheet sweep feeder.ohm --vary C=0..2mF --show pf,abs(Iline)\n  \
ohmsheet sweep feeder.ohm --vary f=10Hz..1MHz --log --points 200 --show abs(Z) --format csv -o z.csv\n  \
ohmsheet sweep feeder.ohm --vary C=0..2mF --vary R=1..10 --points 21,10 --show pf --complex rect --format json")]
pub struct SweepArgs {
    /// The sheet (a .ohm file)
    pub sheet: PathBuf,
    /// An input and its range, e.g. C=0..2mF or f=10Hz..1MHz; twice for a grid.
    /// Without --vary, the sheet's own `@sweep` is run
    #[arg(long, value_name = "NAME=START..STOP")]
    pub vary: Vec<String>,
    /// Number of points (one value for every input, or one per --vary in order: --points 21,10 or repeated)
    #[arg(long, value_name = "N[,N]", value_delimiter = ',')]
    pub points: Vec<usize>,
    /// Distance between points, with a unit, e.g. --step 10uF (one per --vary, in order: --step 10uF,1V or
    /// repeated; instead of --points)
    #[arg(long, value_name = "STEP[,STEP]", value_delimiter = ',')]
    pub step: Vec<String>,
    /// Space the points logarithmically (all inputs, or only the one named)
    #[arg(long, value_name = "NAME", num_args = 0..=1, default_missing_value = "*", value_delimiter = ',')]
    pub log: Vec<String>,
    /// Cells or expressions to show, comma-separated, e.g. --show Vload,pf,abs(Iline)
    #[arg(long, value_name = "CELL[,CELL…]")]
    pub show: Vec<String>,
    /// Output format: a table for people, or every point as CSV or JSON (to standard output, or to -o FILE)
    #[arg(long, value_enum)]
    pub format: Option<SweepFormat>,
    /// Write the table, CSV or JSON to FILE (written whole, or not at all; `-` for standard output)
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Where `--format table -o FILE` writes the table (set from `output`).
    #[arg(skip)]
    pub table_file: Option<PathBuf>,
    /// Shorthand for --format csv -o FILE
    #[arg(long, value_name = "FILE", conflicts_with_all = ["format", "output"])]
    pub csv: Option<PathBuf>,
    /// Shorthand for --format json -o FILE
    #[arg(long, value_name = "FILE", conflicts_with_all = ["format", "output"])]
    pub json: Option<PathBuf>,
    /// Draw the shown cells against the swept input as an SVG picture
    #[arg(long, value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
    /// Draw a quick chart in the terminal
    #[arg(long)]
    pub chart: bool,
    /// Complex values as real and imaginary parts (rect), magnitude and angle (polar) or both (a plot
    /// draws magnitude and angle unless rect); `--parts` also works
    #[arg(long = "complex", visible_alias = "parts", value_enum, default_value_t = PartsArg::Both)]
    pub parts: PartsArg,
    /// Give a cell a new formula for this run, e.g. --set "Vs=480 V" (repeatable)
    #[arg(long = "set", value_name = "NAME=EXPR")]
    pub set: Vec<String>,
    /// Significant digits in the table
    #[arg(long, default_value_t = 4, value_parser = clap::value_parser!(u8).range(1..=15))]
    pub digits: u8,
    /// Allow sweeps of up to N points
    #[arg(long, value_name = "N", default_value_t = sweep::DEFAULT_MAX_POINTS)]
    pub max_points: usize,
    /// Which of the sheet's `@sweep` lines to run when there is no --vary (1 = the first)
    #[arg(long, value_name = "K", default_value_t = 1)]
    pub declared: usize,
    #[command(flatten)]
    pub load: LoadArgs,
}

/// What `sweep` writes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum SweepFormat {
    Table,
    Csv,
    Json,
}

impl SweepArgs {
    /// `--format csv|json` and `-o` as the `--csv`/`--json` they stand
    /// for; `-o` with the table writes the table to the file, as `run -o`
    /// does (`-` is standard output).
    pub fn resolve_output(&mut self) -> Result<(), String> {
        let out = self.output.take();
        match self.format {
            Some(SweepFormat::Csv) => self.csv = Some(out.unwrap_or_else(|| "-".into())),
            Some(SweepFormat::Json) => self.json = Some(out.unwrap_or_else(|| "-".into())),
            Some(SweepFormat::Table) | None => self.table_file = out.filter(|p| p.as_os_str() != "-"),
        }
        Ok(())
    }
}

/// `--complex` (`--parts`): the option every command shares.
pub use super::ComplexArg as PartsArg;

impl From<PartsArg> for Parts {
    fn from(p: PartsArg) -> Parts {
        match p {
            PartsArg::Polar => Parts::Polar,
            PartsArg::Rect => Parts::Rect,
            PartsArg::Both => Parts::Both,
        }
    }
}

#[derive(Args, Debug)]
#[command(after_help = "Examples:\n  \
ohmsheet solve plant.ohm --vary C=0..3mF --target 'pf = 0.95'\n  \
ohmsheet solve filter.ohm --vary f=10Hz..1MHz --maximize 'abs(Vout)' --log\n  \
ohmsheet solve plant.ohm --vary C=0..3mF --target 'pf = 0.95' --format json -o answer.json")]
pub struct SolveArgs {
    /// The sheet (a .ohm file)
    pub sheet: PathBuf,
    /// The input to vary and the range to search, e.g. C=0..2mF
    #[arg(long, value_name = "NAME=LO..HI")]
    pub vary: String,
    /// The target, e.g. --target 'pf = 0.95' or --target 'abs(Vload) = 480 V'
    #[arg(long, value_name = "EXPR = VALUE", conflicts_with_all = ["maximize", "minimize"], required_unless_present_any = ["maximize", "minimize"])]
    pub target: Option<String>,
    /// Find where EXPR is largest (its real part; use abs(…) for a magnitude)
    #[arg(long, value_name = "EXPR", conflicts_with = "minimize")]
    pub maximize: Option<String>,
    /// Find where EXPR is smallest (its real part; use abs(…) for a magnitude)
    #[arg(long, value_name = "EXPR")]
    pub minimize: Option<String>,
    /// Intervals of the coarse scan that brackets the answer before it is refined (N + 1 points are
    /// evaluated; 2 to 10,000,000)
    #[arg(long, value_name = "N", default_value_t = crate::engine::search::DEFAULT_SCAN)]
    pub scan: usize,
    /// Scan the range logarithmically (the default when it spans more than two decades)
    #[arg(long, conflicts_with = "linear")]
    pub log: bool,
    /// Scan the range linearly
    #[arg(long)]
    pub linear: bool,
    /// Give a cell a new formula for this run, e.g. --set "Vs=480 V" (repeatable)
    #[arg(long = "set", value_name = "NAME=EXPR")]
    pub set: Vec<String>,
    /// Significant digits shown
    #[arg(long, default_value_t = 4, value_parser = clap::value_parser!(u8).range(1..=15))]
    pub digits: u8,
    /// The expression's value as a + jb (rect), m ∠ θ (polar) or both
    #[arg(long, value_enum, default_value_t = super::ComplexArg::Both)]
    pub complex: super::ComplexArg,
    /// Output format: the answer in words, or as JSON
    #[arg(long, value_enum, default_value_t = SolveFormat::Table)]
    pub format: SolveFormat,
    /// Write the answer to FILE (written whole, or not at all) instead of standard output
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Shorthand for --format json
    #[arg(long, hide = true)]
    pub json: bool,
    #[command(flatten)]
    pub load: LoadArgs,
}

/// What `solve` writes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum SolveFormat {
    Table,
    Json,
}

/// Split `a,b,atan2(x, y)` at commas outside brackets.
pub fn split_list(s: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut depth = 0i32;
    let mut cur = String::new();
    for c in s.chars() {
        match c {
            '(' | '[' => depth += 1,
            ')' | ']' => depth -= 1,
            _ => {}
        }
        if c == ',' && depth == 0 {
            out.push(std::mem::take(&mut cur));
        } else {
            cur.push(c);
        }
    }
    out.push(cur);
    out.into_iter()
        .map(|s| s.trim().to_string())
        .filter(|s| !s.is_empty())
        .collect()
}

fn unplaced(code: ErrorCode, msg: impl Into<String>, hint: impl Into<String>) -> i32 {
    Diagnostic::unplaced(code, msg)
        .with_hint(hint)
        .eprint(&SourceMap::new());
    EXIT_ERROR
}

fn is_stdout(p: &Path) -> bool {
    p.as_os_str() == "-"
}

/// Write a file atomically (`fsutil::AtomicFile`: a temporary file beside
/// it, renamed over it only when complete). `-` writes to standard output.
pub fn write_atomic(path: &Path, f: impl FnOnce(&mut dyn Write) -> io::Result<()>) -> io::Result<()> {
    if is_stdout(path) {
        let stdout = io::stdout();
        let mut w = BufWriter::with_capacity(1 << 16, stdout.lock());
        f(&mut w)?;
        return w.flush();
    }
    crate::fsutil::remove_partial_files_on_interrupt();
    // The shared helper: a temporary file beside the target, synced to
    // disk, renamed over it, and the folder synced.
    let mut w = crate::fsutil::AtomicFile::create(path)?;
    f(&mut w)?;
    w.commit()
}

/// Print `text`, or write it to `path` whole.
fn deliver(text: &str, path: Option<&Path>) -> i32 {
    match path {
        None => {
            out!("{text}");
            EXIT_OK
        }
        Some(p) => match write_atomic(p, |w| w.write_all(text.as_bytes())) {
            Ok(()) => EXIT_OK,
            Err(e) => io_error(p, e),
        },
    }
}

fn io_error(path: &Path, e: io::Error) -> i32 {
    if is_stdout(path) {
        super::stdout_failed(&e);
    }
    unplaced(
        ErrorCode::Io,
        format!("cannot write `{}`: {e}", path.display()),
        "check the folder exists and can be written; nothing was replaced",
    )
}

pub fn sweep(a: &SweepArgs) -> i32 {
    let Ok((sheet, _)) = load_sheet(&a.sheet, &a.set, &a.load.options()) else {
        return EXIT_ERROR;
    };
    let name = a.sheet.display().to_string();
    let style = Style {
        digits: a.digits as usize,
    };
    let parts: Parts = a.parts.into();
    if a.vary.is_empty() {
        return declared(sheet, a, &name, parts, style);
    }
    if a.vary.len() > 2 {
        return unplaced(
            ErrorCode::BadRange,
            format!("{} inputs varied; a sweep takes one, or two for a grid", a.vary.len()),
            "give --vary once or twice",
        );
    }
    let show: Vec<String> = a.show.iter().flat_map(|s| split_list(s)).collect();
    if show.is_empty() {
        return unplaced(
            ErrorCode::BadRange,
            "nothing to show",
            "name the cells to follow with --show, e.g. --show Vload,pf",
        );
    }
    let exprs: Vec<(&str, &str)> = show.iter().map(|s| ("--show", s.as_str())).collect();
    let mut study = match Study::new(sheet, &exprs) {
        Ok(s) => s,
        Err(f) => {
            report(&f.sources, &f.diagnostics);
            return EXIT_ERROR;
        }
    };
    let mut axes: Vec<Axis> = Vec::new();
    for (k, v) in a.vary.iter().enumerate() {
        let vname = v.split('=').next().unwrap_or("").trim();
        let log = a.log.iter().any(|l| l == "*" || l == vname);
        // Steps go to the inputs in order; a single --points to every
        // input without a step.
        let step = a.step.get(k).map(String::as_str);
        let points = if a.points.len() > 1 {
            a.points.get(k).copied()
        } else if step.is_none() {
            a.points.first().copied()
        } else {
            None
        };
        match study.axis("--vary", v, points, step, log) {
            Ok(ax) => axes.push(ax),
            Err(f) => {
                report(&f.sources, &f.diagnostics);
                return EXIT_ERROR;
            }
        }
    }
    if axes.len() == 2 && axes[0].cell == axes[1].cell {
        return unplaced(
            ErrorCode::BadRange,
            format!("`{}` is varied twice", axes[0].name),
            "a grid varies two different inputs",
        );
    }
    if let Some(l) = a.log.iter().find(|l| *l != "*" && !axes.iter().any(|x| &x.name == *l)) {
        return unplaced(
            ErrorCode::BadRange,
            format!("--log {l}: `{l}` is not varied"),
            "name an input given with --vary, or give --log alone",
        );
    }
    if let Err(d) = sweep::check_size(&axes, a.max_points) {
        d.eprint(&SourceMap::new());
        return EXIT_ERROR;
    }
    let mut series: Vec<Series> = Vec::new();
    for s in &show {
        match study.series(s) {
            Ok(x) => series.push(x),
            Err(d) => {
                d.eprint(&study.model().sources);
                return EXIT_ERROR;
            }
        }
    }
    let title = study.model().meta.get("title").map(str::to_string);
    let table_only = a.csv.is_none() && a.json.is_none() && a.plot.is_none() && !a.chart;
    if !table_only && a.json.is_none() && a.plot.is_none() && !a.chart {
        // CSV alone: stream it, keeping nothing in memory.
        return stream_csv(
            &study,
            &axes,
            &series,
            a.csv.as_deref().unwrap_or(Path::new("-")),
            parts,
        );
    }
    let r = sweep::collect(&study.engine, &axes, &series, title);
    emit(&study.engine, &r, a, &name, parts, style, table_only)
}

fn stream_csv(study: &Study, axes: &[Axis], series: &[Series], path: &Path, parts: Parts) -> i32 {
    let mut undefined = 0usize;
    let mut first_bad: Option<usize> = None;
    let res = write_atomic(path, |w| {
        let mut rows = CsvRows::new(w, axes, series, parts)?;
        let mut err: Option<io::Error> = None;
        let mut xs = vec![0.0; axes.len()];
        let grid: Vec<Vec<f64>> = axes
            .iter()
            .map(|a| (0..a.count).map(|i| a.value(i)).collect())
            .collect();
        sweep::run(&study.engine, axes, series, |p, v| {
            if err.is_some() {
                return;
            }
            for (k, x) in xs.iter_mut().enumerate() {
                *x = grid[k][sweep::axis_index(axes, k, p)];
            }
            if v.iter().any(|z| !sweep::finite(*z)) {
                undefined += 1;
                first_bad.get_or_insert(p);
            }
            if let Err(e) = rows.row(&xs, v) {
                err = Some(e);
            }
        });
        if let Some(e) = err {
            return Err(e);
        }
        rows.finish().map(|_| ())
    });
    if let Err(e) = res {
        return io_error(path, e);
    }
    warn_undefined(&study.engine, undefined, first_bad, axes);
    EXIT_OK
}

/// Warn of points with undefined values, and say why the first one is:
/// the function whose domain it left, located on the argument.
fn warn_undefined(engine: &Engine, count: usize, first: Option<usize>, axes: &[Axis]) {
    let Some(p) = first else { return };

    let at: Vec<String> = axes
        .iter()
        .enumerate()
        .map(|(k, a)| {
            let x = a.value(sweep::axis_index(axes, k, p));
            format!("{} = {}", a.name, show_x(a, x))
        })
        .collect();
    eprintln!(
        "warning: {count} point{} gave NaN or infinite values (the first at {}); they are written as NaN/inf and marked, not dropped",
        if count == 1 { "" } else { "s" },
        at.join(", ")
    );
    let mut at_point = engine.clone();
    for (k, a) in axes.iter().enumerate() {
        at_point.set_input(a.cell, C64::new(a.value(sweep::axis_index(axes, k, p)), 0.0));
    }
    for id in at_point.nan_origins() {
        let d = at_point.nan_diagnostic(id).warning();
        d.eprint(&at_point.model.sources);
    }
    for (id, error) in at_point.inf_origins() {
        let d = at_point.inf_diagnostic(id, error).warning();
        d.eprint(&at_point.model.sources);
    }
}

fn show_x(a: &Axis, x: f64) -> String {
    format_value(C64::new(x, 0.0), a.quantity, a.display.as_ref(), Style { digits: 6 }).rect
}

fn emit(
    engine: &Engine,
    r: &SweepResult,
    a: &SweepArgs,
    sheet_name: &str,
    parts: Parts,
    style: Style,
    table_only: bool,
) -> i32 {
    if let Some(p) = &a.csv {
        if let Err(e) = write_atomic(p, |w| out::write_csv(w, r, parts).map(|_| ())) {
            return io_error(p, e);
        }
    }
    if let Some(p) = &a.json {
        let text = out::to_json(sheet_name, r);
        if let Err(e) = write_atomic(p, |w| writeln!(w, "{text}")) {
            return io_error(p, e);
        }
    }
    if let Some(p) = &a.plot {
        let (svg, geo) = match crate::plot::svg_with_geometry(
            r,
            &crate::plot::PlotOptions {
                // a plot draws one pair of panels: magnitude and angle
                // unless rect is asked for
                parts: if parts == Parts::Both { Parts::Polar } else { parts },
                ..Default::default()
            },
        ) {
            Ok(s) => s,
            Err(e) => {
                return unplaced(
                    ErrorCode::Io,
                    format!("cannot draw the plot: {e}"),
                    "try fewer shown cells",
                )
            }
        };
        if let Err(e) = write_atomic(p, |w| w.write_all(svg.as_bytes())) {
            return io_error(p, e);
        }
        let curves: usize = geo.panels.iter().map(|g| g.curves.len()).sum();
        eprintln!(
            "wrote the plot {} ({} panel{}, {curves} curve{}; SVG)",
            p.display(),
            geo.panels.len(),
            if geo.panels.len() == 1 { "" } else { "s" },
            if curves == 1 { "" } else { "s" }
        );
    }
    if a.chart {
        let width = terminal_width().clamp(40, 160);
        out!(
            "{}",
            crate::plot::chart::chart(r, width, std::io::IsTerminal::is_terminal(&io::stdout()))
        );
    }
    if table_only {
        let table = out::table(r, parts, style);
        match &a.table_file {
            Some(p) => {
                if let Err(e) = write_atomic(p, |w| w.write_all(table.as_bytes())) {
                    return io_error(p, e);
                }
            }
            None => out!("{table}"),
        }
    }
    let bad = r.undefined_points();
    warn_undefined(engine, bad.len(), bad.first().copied(), &r.axes);
    EXIT_OK
}

fn terminal_width() -> usize {
    std::env::var("COLUMNS").ok().and_then(|c| c.parse().ok()).unwrap_or(80)
}

fn declared(sheet: crate::sheet::Sheet, a: &SweepArgs, name: &str, parts: Parts, style: Style) -> i32 {
    let model = crate::engine::compile(&sheet);
    if model.has_errors() {
        report(&model.sources, &model.diagnostics);
        return EXIT_ERROR;
    }
    let decls = sweep::declared::declared(&model);
    if decls.is_empty() {
        return unplaced(
            ErrorCode::BadRange,
            "no input to vary",
            "give --vary NAME=START..STOP, or declare a sweep in the sheet with `@sweep`",
        );
    }
    let k = a.declared;
    if k == 0 || k > decls.len() {
        return unplaced(
            ErrorCode::BadRange,
            format!(
                "the sheet declares {} sweep{}; there is no number {k}",
                decls.len(),
                if decls.len() == 1 { "" } else { "s" }
            ),
            format!("give --declared 1 to {}", decls.len()),
        );
    }
    let study = Study::of_model(model);
    let r = match sweep::declared::run_one(&study, &decls[k - 1], a.max_points) {
        Ok(r) => r,
        Err(d) => {
            d.eprint(&study.model().sources);
            return EXIT_ERROR;
        }
    };
    let table_only = a.csv.is_none() && a.json.is_none() && a.plot.is_none() && !a.chart;
    emit(&study.engine, &r, a, name, parts, style, table_only)
}

pub fn solve(a: &SolveArgs) -> i32 {
    let Ok((sheet, _)) = load_sheet(&a.sheet, &a.set, &a.load.options()) else {
        return EXIT_ERROR;
    };
    let (goal, expr, value) = if let Some(t) = &a.target {
        match sweep::split_target(t) {
            Some((e, v)) => (Goal::Root, e.trim().to_string(), Some(v.trim().to_string())),
            None => {
                return unplaced(
                    ErrorCode::BadSearch,
                    format!("--target `{t}` is not of the form EXPR = VALUE"),
                    "write e.g. --target 'pf = 0.95' or --target 'abs(Vload) = 480 V' (one `=`)",
                )
            }
        }
    } else if let Some(e) = &a.maximize {
        (Goal::Max, e.trim().to_string(), None)
    } else if let Some(e) = &a.minimize {
        (Goal::Min, e.trim().to_string(), None)
    } else {
        return unplaced(
            ErrorCode::BadSearch,
            "nothing to solve for",
            "give --target, --maximize or --minimize",
        );
    };
    if !(2..=crate::engine::search::MAX_SCAN).contains(&a.scan) {
        return unplaced(
            ErrorCode::TooManyPoints,
            format!("--scan {} is outside 2..={}", a.scan, crate::engine::search::MAX_SCAN),
            "a coarse scan of a few hundred points is usually plenty; the search refines from there",
        );
    }
    if expr.is_empty() || value.as_deref() == Some("") {
        return unplaced(
            ErrorCode::BadSearch,
            "the target has an empty side",
            "write e.g. --target 'pf = 0.95'",
        );
    }
    let log = if a.log {
        Some(true)
    } else if a.linear {
        Some(false)
    } else {
        None
    };
    let req = SolveRequest {
        vary: &a.vary,
        goal,
        expr: &expr,
        value: value.as_deref(),
        scan: Some(a.scan),
        log,
    };
    let digits = a.digits as usize;
    let fmt = |s: &Series, x: C64| {
        let f = format_value(x, s.quantity, s.display.as_ref(), Style { digits });
        a.complex.text(&f.rect, &f.polar)
    };
    let mut out = String::new();
    macro_rules! say {
        ($($t:tt)*) => {{
            out.push_str(&format!($($t)*));
            out.push('\n');
        }};
    }
    match sweep::solve(sheet, &req) {
        Ok(sol) => {
            let x = fmt(&sol.input, C64::new(sol.found.x, 0.0));
            let v = fmt(&sol.expr, sol.value_at);
            if a.json || a.format == SolveFormat::Json {
                let doc = serde_json::json!({
                    "input": sol.input.name,
                    "unit": crate::units::format::base_symbol(sol.input.quantity),
                    "value": sol.found.x,
                    "goal": match goal { Goal::Root => "target", Goal::Max => "maximum", Goal::Min => "minimum" },
                    "expression": expr,
                    "expression_unit": crate::units::format::base_symbol(sol.expr.quantity),
                    "expression_re": sol.value_at.re,
                    "expression_im": sol.value_at.im,
                    "residual": if goal == Goal::Root { Some(sol.found.fx) } else { None },
                    "iterations": sol.found.iterations,
                    "evaluations": sol.found.evaluations,
                    "scan_points": sol.scan + 1,
                    "log_scan": sol.log,
                    "at_edge": sol.found.at_edge,
                });
                say!("{}", serde_json::to_string_pretty(&doc).unwrap_or_default());
                return deliver(&out, a.output.as_deref());
            }
            say!("{} = {x}", sol.input.name);
            match goal {
                Goal::Root => {
                    let t = fmt(&sol.expr, sol.target.unwrap_or_default());
                    say!(
                        "  brings {expr} to {t} (it is {v} there; residual {})",
                        crate::units::format::fmt_sig(sol.found.fx, 3)
                    );
                    if sol.value_at.im.abs() > 1e-9 * sol.value_at.norm() {
                        say!("  note: {expr} is complex; its real part was matched (use abs, re or im to choose)");
                    }
                }
                Goal::Max => say!("  {expr} is largest there: {v}"),
                Goal::Min => say!("  {expr} is smallest there: {v}"),
            }
            let lo = fmt(&sol.input, C64::new(sol.lo, 0.0));
            let hi = fmt(&sol.input, C64::new(sol.hi, 0.0));
            say!(
                "  {} iteration{} after a {} scan of {} points from {lo} to {hi}",
                sol.found.iterations,
                if sol.found.iterations == 1 { "" } else { "s" },
                if sol.log { "logarithmic" } else { "linear" },
                sol.scan + 1
            );
            if sol.found.at_edge && goal != Goal::Root {
                say!(
                    "  note: this is at the end of the range; the curve may go on {} beyond it",
                    if goal == Goal::Max { "rising" } else { "falling" }
                );
            }
            deliver(&out, a.output.as_deref())
        }
        Err(SolveError::Invalid(f)) => {
            report(&f.sources, &f.diagnostics);
            EXIT_ERROR
        }
        Err(SolveError::Search(u)) => {
            let sweep::Unsolved {
                error,
                input,
                expr: es,
                lo,
                hi,
                goal,
            } = *u;
            let xf = |x: f64| fmt(&input, C64::new(x, 0.0));
            let target = value.as_ref().map(|v| v.to_string());
            let (msg, hint) = sweep::explain(
                &error,
                goal,
                &input.name,
                &es.name,
                target.as_deref(),
                &xf(lo),
                &xf(hi),
                &xf,
            );
            Diagnostic::unplaced(ErrorCode::SearchFailed, msg)
                .with_hint(hint)
                .eprint(&SourceMap::new());
            EXIT_CHECK_FAILED
        }
    }
}
