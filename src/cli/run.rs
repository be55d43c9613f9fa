//! `ohmsheet run`, `ohmsheet functions`, `ohmsheet units`.

use super::{load_sheet, Format, RunArgs, EXIT_CHECK_FAILED, EXIT_ERROR, EXIT_OK};
use crate::engine::model::signature;
use crate::engine::Engine;
use crate::output::{self, table};
use crate::units::format::Style;

pub fn run(a: &RunArgs) -> i32 {
    let Ok((sheet, model)) = load_sheet(&a.sheet, &a.set, &a.load.options()) else {
        return EXIT_ERROR;
    };
    let style = Style {
        digits: a.digits as usize,
    };
    let engine = Engine::new(model);
    let mut cells = output::cell_rows(&engine, style);
    let mut checks = output::check_rows(&engine, style);
    output::cells_in_form(&mut cells, a.complex);
    output::checks_in_form(&mut checks, a.complex);
    let name = a.sheet.display().to_string();
    let text = match a.format {
        Format::Table => format!(
            "{}{}",
            table::cells_table_noted(&engine.model, &cells, &table::override_notes(&sheet, &engine.model)),
            table::checks_table(&checks)
        ),
        Format::Json => format!("{}\n", output::to_json(&name, &engine.model, &cells, &checks)),
        Format::Csv => output::to_csv(&cells),
    };
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
    if report_nans(&engine) {
        return EXIT_ERROR;
    }
    if checks.iter().any(|c| !c.passed) {
        return EXIT_CHECK_FAILED;
    }
    EXIT_OK
}

/// Report each NaN where it was born, with the function whose domain was
/// left when one explains it, and each infinite value where it was born
/// (an error, or a warning for an open or short element); true if there
/// was an error.
pub(super) fn report_nans(engine: &Engine) -> bool {
    let m = &engine.model;
    let mut failed = false;
    for id in engine.nan_origins() {
        // A search that found no answer says why.
        let d = crate::sweep::search_failure(engine, id).unwrap_or_else(|| engine.nan_diagnostic(id));
        d.eprint(&m.sources);
        failed = true;
    }
    for (id, error) in engine.inf_origins() {
        engine.inf_diagnostic(id, error).eprint(&m.sources);
        failed |= error;
    }
    failed
}

/// Every function with its parameters, units, a one-line description (its
/// convention) and the published source it follows and is tested against,
/// under the heading of its family.
pub fn functions_listing() -> String {
    let lib = crate::funcs::library();
    let sections = crate::funcs::sections();
    let mut out = String::new();
    for (i, f) in lib.iter().enumerate() {
        if let Some((heading, _)) = sections.iter().find(|&&(_, start)| start == i) {
            if i > 0 {
                out.push('\n');
            }
            out.push_str(&format!("{heading}\n"));
        }
        out.push_str(&format!("  {} → {}\n      {}\n", signature(f), f.returns, f.summary));
        if !f.source.is_empty() {
            out.push_str(&format!("      source: {}\n", f.source));
        }
    }
    out
}

/// The unit symbols and prefixes.
pub fn units_listing() -> String {
    let mut out = String::from("units:    ");
    // Each spelling once; a look-alike that reads as another spelling is
    // on a line of its own.
    let mut symbols: Vec<&str> = Vec::new();
    for s in crate::units::table::all_symbols() {
        if !symbols.contains(&s) {
            symbols.push(s);
        }
    }
    out.push_str(&symbols.join("  "));
    out.push_str("\nprefixes: ");
    let look_alike = |p: &str| {
        crate::units::lookalike::ACCEPTED
            .iter()
            .any(|a| p.starts_with(a.reads_as))
    };
    let p: Vec<String> = crate::units::table::PREFIXES
        .iter()
        .filter(|(p, _)| !look_alike(p))
        .map(|(p, f)| format!("{p}={f:e}"))
        .collect();
    out.push_str(&p.join("  "));
    out.push_str("\nequivalent: ");
    out.push_str(&crate::units::lookalike::listing());
    out.push_str(
        "\n\nA prefix glued to a number scales it (4.7k, 10u, 5m = 0.005); a unit follows a number\n\
         or a bracket (20 Ω, 4.7 µF, (6 + j10) Ω). Compound units: Ω/km, rad/s, m^2.\n\
         `m` alone after a space is refused as ambiguous: write `metre` for metres.\n",
    );
    out
}
