//! Calculation reports: the sheet set out the way a checked hand
//! calculation is — metadata and a content hash, inputs, every step with
//! its formula, the formula with the numbers put in, and the result, then
//! the checks and a closing caution. One `Report` is built from a sheet and
//! its evaluated engine; `markdown`, `html` and `json` only lay it out.

mod html;
mod layout;
mod markdown;
mod networks;
pub mod spread;
mod subst;

use std::collections::HashMap;

use num_complex::Complex64 as C64;
use serde::Serialize;
use sha2::{Digest, Sha256};

use crate::diag::{FileId, Span};
use crate::engine::model::TolSpec;
use crate::engine::{check_result, Engine, Model};
use crate::funcs::Shape;
use crate::sheet::{hex, Sheet};
use crate::syntax::ast::{Expr, ExprKind, StmtKind};
use crate::units::format::{base_symbol, format_value, Style};
use crate::units::{Quantity, Unit};

pub use html::html;
pub use markdown::{markdown, markdown_with_plot_files};
use subst::{Pos, Substituter};

/// The closing caution every report carries.
pub const CAUTION: &str = "This report is an engineering aid, not a design approval. Its inputs, \
method and results must be checked by a qualified person against the applicable codes, standards \
and licensed practice before they are used for design, protection settings, procurement or work \
on or near energised equipment.";

/// How the sheet hash is formed, stated in every report so anyone can
/// recompute it.
pub const HASH_RULE: &str = "SHA-256 of the list of the files' own SHA-256 sums: one line per file, \
in the order listed, written as the hash, two spaces, the path relative to the sheet's folder and a \
line feed (as the sha256sum tool prints them when run in the sheet's folder), followed by one line \
\"--set TEXT\" for each value changed on the command line.";

#[derive(Clone, Debug, Serialize)]
pub struct Report {
    pub title: String,
    /// Project, prepared by, checked by, revision, date — those stated.
    pub meta: Vec<MetaLine>,
    /// `rms` or `peak`.
    pub amplitude: &'static str,
    pub files: Vec<FileLine>,
    /// The sheet hash (see `HASH_RULE`), lower-case hex.
    pub sha256: String,
    pub hash_rule: &'static str,
    /// `--set` overrides applied for this report.
    pub overrides: Vec<String>,
    /// `@note "…"` about the whole sheet.
    pub notes: Vec<String>,
    pub inputs: Vec<InputLine>,
    pub steps: Vec<Step>,
    /// Each network: its elements and node voltages.
    pub networks: Vec<networks::NetworkTable>,
    pub checks: Vec<CheckLine>,
    pub plots: Vec<Plot>,
    /// The analyses over the inputs' tolerances, for a sheet that states
    /// any (`spread::section`); set by the caller after `build`.
    pub spread: Option<spread::SpreadSection>,
    pub caution: &'static str,
    /// `ohmsheet 0.1.0`
    pub generator: String,
    /// How complex values are given (`--complex`; `Report::in_form`).
    #[serde(skip)]
    pub form: crate::output::Form,
}

impl Report {
    /// The values of inputs, steps and checks in `form`: with rect or polar
    /// alone both text fields carry that form, so the layouts give each
    /// value once.
    pub fn in_form(&mut self, form: crate::output::Form) {
        use crate::output::Form;
        let set = |v: &mut Value| match form {
            Form::Rect => v.polar = v.rect.clone(),
            Form::Polar => v.rect = v.polar.clone(),
            Form::Both => {}
        };
        for i in &mut self.inputs {
            set(&mut i.value);
        }
        for s in &mut self.steps {
            for r in &mut s.results {
                set(&mut r.value);
            }
        }
        for c in &mut self.checks {
            c.computed = form.text(&c.computed, &c.computed_polar);
            c.reference = form.text(&c.reference, &c.reference_polar);
        }
        self.form = form;
    }
}

#[derive(Clone, Debug, Serialize)]
pub struct MetaLine {
    pub key: String,
    /// `Prepared by`
    pub label: String,
    pub value: String,
}

#[derive(Clone, Debug, Serialize)]
pub struct FileLine {
    /// Relative to the sheet's folder.
    pub path: String,
    pub bytes: u64,
    pub sha256: String,
    /// `@title` of an included file.
    pub title: Option<String>,
    /// `@revision` of an included file.
    pub revision: Option<String>,
    /// Which file includes it (`None` for the sheet itself).
    pub included_by: Option<String>,
}

/// A value shown both ways.
#[derive(Clone, Debug, Serialize)]
pub struct Value {
    /// `8.97 + j3.88 Ω`
    pub rect: String,
    /// `9.77 ∠ 23.4° Ω`
    pub polar: String,
    /// Coherent SI unit of `re` and `im`.
    pub unit: String,
    pub re: Option<f64>,
    pub im: Option<f64>,
}

#[derive(Clone, Debug, Serialize)]
pub struct InputLine {
    pub name: String,
    pub value: Value,
    /// The formula as written.
    pub written: String,
    /// `lib/cables.ohm, line 4` or `line 12`.
    pub source: String,
    /// End-of-line comment and `@note` texts.
    pub notes: Vec<String>,
    pub included: bool,
}

#[derive(Clone, Debug, Serialize)]
pub struct Step {
    /// `1`, `2`, … in sheet order.
    pub number: usize,
    pub name: String,
    /// The end-of-line comment, shown as the step's caption.
    pub caption: Option<String>,
    /// The formula as written.
    pub formula: String,
    /// The formula with each cell's value and unit put in its place.
    pub substituted: String,
    /// One result for a single value; one per field for a record.
    pub results: Vec<StepResult>,
    pub source: String,
    pub notes: Vec<String>,
    pub included: bool,
}

#[derive(Clone, Debug, Serialize)]
pub struct StepResult {
    /// The cell name, or `cell.field`.
    pub name: String,
    pub value: Value,
}

#[derive(Clone, Debug, Serialize)]
pub struct CheckLine {
    pub number: usize,
    /// The check as written.
    pub check: String,
    pub source: String,
    pub passed: bool,
    pub computed: String,
    pub reference: String,
    /// The polar forms of `computed` and `reference` (`Report::in_form`).
    #[serde(skip)]
    pub computed_polar: String,
    #[serde(skip)]
    pub reference_polar: String,
    /// |computed − reference|
    pub difference: String,
    /// The largest difference allowed.
    pub allowed: String,
    /// `1 % of |reference|`, or `stated` for an absolute tolerance.
    pub tolerance_rule: String,
    pub notes: Vec<String>,
}

/// A plot of a sweep the sheet declares (`@sweep`), as a self-contained
/// SVG picture.
#[derive(Clone, Debug, Serialize)]
pub struct Plot {
    pub title: String,
    /// What was varied and over which range, and what is shown.
    pub caption: String,
    /// The picture; `None` when it could not be drawn (see `problem`).
    pub svg: Option<String>,
    pub problem: Option<String>,
}

const META_LABELS: &[(&str, &str)] = &[
    ("project", "Project"),
    ("prepared", "Prepared by"),
    ("checked", "Checked by"),
    ("revision", "Revision"),
    ("date", "Date"),
];

/// The manifest the sheet hash is taken over: `sha256sum`-style lines,
/// one per file, then one per override.
/// The formula `e` with the values of the cells it names put in, as a
/// report writes it (the language server's hover shows it too).
pub fn substituted(engine: &Engine, style: Style, e: &Expr) -> String {
    Substituter { engine, style }.expr(e, Pos::Top)
}

pub fn hash_manifest(sheet: &Sheet, overrides: &[String]) -> String {
    let mut m = String::new();
    for f in &sheet.files {
        m.push_str(&format!("{}  {}\n", f.sha256_hex(), f.rel));
    }
    for o in overrides {
        m.push_str(&format!("--set {o}\n"));
    }
    m
}

/// The sheet hash: see `HASH_RULE`.
pub fn sheet_hash(sheet: &Sheet, overrides: &[String]) -> String {
    hex(&Sha256::digest(hash_manifest(sheet, overrides).as_bytes()))
}

/// Build the report of an evaluated sheet.
pub fn build(sheet: &Sheet, engine: &Engine, overrides: &[String], style: Style) -> Report {
    let m = &engine.model;
    let file_idx: HashMap<FileId, usize> = sheet.files.iter().enumerate().map(|(i, f)| (f.id, i)).collect();
    let title = m.meta.get("title").map_or_else(
        || sheet.files.first().map_or_else(String::new, |f| f.rel.clone()),
        str::to_string,
    );
    let meta = META_LABELS
        .iter()
        .filter_map(|(k, label)| {
            m.meta.get(k).map(|v| MetaLine {
                key: k.to_string(),
                label: label.to_string(),
                value: v.to_string(),
            })
        })
        .collect();
    let files = sheet
        .files
        .iter()
        .map(|f| {
            let get = |k: &str| f.meta.iter().rev().find(|(key, _)| key == k).map(|(_, v)| v.clone());
            FileLine {
                path: f.rel.clone(),
                bytes: f.len,
                sha256: f.sha256_hex(),
                title: get("title"),
                revision: get("revision"),
                included_by: f
                    .included_at
                    .and_then(|s| file_idx.get(&s.file))
                    .map(|&i| sheet.files[i].rel.clone()),
            }
        })
        .collect();

    // Syntax trees of the definitions, by the span of the cell's name.
    let mut exprs: HashMap<Span, &Expr> = HashMap::new();
    let mut check_asts: HashMap<Span, &crate::syntax::ast::Check> = HashMap::new();
    for st in &sheet.stmts {
        match &st.kind {
            StmtKind::Def(d) => {
                exprs.insert(d.name.span, &d.expr);
            }
            StmtKind::Check(c) => {
                check_asts.insert(st.span, c);
            }
            _ => {}
        }
    }
    let source = |c: &crate::engine::Cell| -> (String, bool) {
        match file_idx.get(&c.file) {
            Some(0) => (format!("line {}", c.line), false),
            Some(&i) => (format!("{}, line {}", sheet.files[i].rel, c.line), true),
            None => (m.sources.get(c.file).name.clone(), false),
        }
    };
    let notes_of = |c: &crate::engine::Cell| -> Vec<String> {
        let mut v: Vec<String> = Vec::new();
        if c.is_check() {
            v.extend(c.comment.iter().filter(|s| !s.is_empty()).cloned());
        }
        v.extend(m.meta.notes_for(&c.name).map(str::to_string));
        v
    };
    let sub = Substituter { engine, style };

    let mut inputs = Vec::new();
    let mut steps = Vec::new();
    for (id, c) in m.defs() {
        if c.error.is_some() {
            continue;
        }
        let (src, included) = source(c);
        // An `@override` line: say where the value now comes from, and
        // which library value it replaces.
        let (src, included) = match sheet
            .overrides
            .iter()
            .find(|o| o.name == c.name)
            .and_then(|o| o.library)
        {
            Some(lib) => {
                let line = m.sources.line_of(lib);
                let place = match file_idx.get(&lib.file) {
                    Some(&i) => format!("{}, line {line}", sheet.files[i].rel),
                    None => format!("{}, line {line}", m.sources.get(lib.file).name),
                };
                let here = match file_idx.get(&c.file) {
                    Some(&i) => format!("{}, line {}", sheet.files[i].rel, c.line),
                    None => src,
                };
                (format!("{here}: @override of the library value in {place}"), true)
            }
            None => (src, included),
        };
        let overridden = exprs
            .get(&c.name_span)
            .is_some_and(|e| !file_idx.contains_key(&e.span.file));
        let src = if overridden {
            format!("{src}; formula set on the command line")
        } else {
            src
        };
        let vals = engine.values(id);
        let results: Vec<StepResult> = match &c.shape {
            Some(Shape::Scalar(q)) => vec![StepResult {
                name: c.name.clone(),
                value: value(vals[0], *q, c.display.as_ref(), style),
            }],
            Some(Shape::Record(fields)) => fields
                .iter()
                .enumerate()
                .map(|(k, (f, q))| StepResult {
                    name: format!("{}.{f}", c.name),
                    value: value(vals[k], *q, None, style),
                })
                .collect(),
            None => continue,
        };
        let mut notes = notes_of(c);
        if c.input && results.len() == 1 {
            if let Some(cm) = c.comment.as_ref().filter(|s| !s.is_empty()) {
                notes.insert(0, cm.clone());
            }
            if m.dependents[id as usize].is_empty() {
                notes.push("(not used by this calculation)".to_string());
            }
            inputs.push(InputLine {
                name: c.name.clone(),
                value: results.into_iter().next().expect("one result").value,
                written: c.formula.clone(),
                source: src,
                notes,
                included,
            });
            continue;
        }
        if let Some(n) = pf_convention_note(&c.formula) {
            notes.push(n.to_string());
        }
        let substituted = match exprs.get(&c.name_span) {
            Some(e) => sub.expr(e, Pos::Top),
            None => c.formula.clone(),
        };
        steps.push(Step {
            number: steps.len() + 1,
            name: c.name.clone(),
            caption: c.comment.clone().filter(|s| !s.is_empty()),
            formula: c.formula.clone(),
            substituted,
            results,
            source: src,
            notes,
            included,
        });
    }

    let mut checks = Vec::new();
    for (id, c) in m.checks() {
        if c.error.is_some() {
            continue;
        }
        let r = check_result(m, id, engine.values(id));
        let q = c.checked_quantity();
        // Shown in the unit the sheet chose for the value checked: the
        // display unit of a cell checked by name, else the unit written on
        // the reference value (`2.3 %`).
        let unit = check_asts.get(&c.stmt_span).and_then(|ch| check_unit(m, ch));
        // Enough digits that a difference near the tolerance shows.
        let digits = if r.tol > 0.0 && r.tol.is_finite() && crate::engine::ops::abs(r.rhs) > 0.0 {
            let need = (crate::engine::ops::abs(r.rhs) / r.tol).log10().ceil() as i64 + 2;
            need.min(10).max(style.digits as i64) as usize
        } else {
            style.digits
        };
        let show = |z: C64| format_value(z, q, unit.as_ref(), Style { digits }).rect;
        let polar = |z: C64| format_value(z, q, unit.as_ref(), Style { digits }).polar;
        // The difference and the allowance in one unit, as on the command
        // line and in the session (`check_gap`).
        let (difference, allowed) = crate::units::format::check_gap(q, unit.as_ref(), r.diff, r.tol, style);
        let rule = match c.tol {
            Some(TolSpec::Relative(f)) => format!(
                "{} % of |reference|",
                crate::units::format::fmt_sig(f * 100.0, style.digits)
            ),
            _ => "as stated".to_string(),
        };
        checks.push(CheckLine {
            number: checks.len() + 1,
            check: c.formula.clone(),
            source: source(c).0,
            passed: r.passed,
            computed: show(r.lhs),
            reference: show(r.rhs),
            computed_polar: polar(r.lhs),
            reference_polar: polar(r.rhs),
            difference,
            allowed,
            tolerance_rule: rule,
            notes: notes_of(c),
        });
    }

    Report {
        title,
        meta,
        amplitude: if m.ctx.peak { "peak" } else { "rms" },
        files,
        sha256: sheet_hash(sheet, overrides),
        hash_rule: HASH_RULE,
        overrides: overrides.to_vec(),
        notes: m
            .meta
            .notes
            .iter()
            .filter(|n| n.cell.is_none())
            .map(|n| n.text.clone())
            .collect(),
        inputs,
        steps,
        networks: networks::tables(engine, style),
        checks,
        plots: plots(m, style),
        spread: None,
        caution: CAUTION,
        form: crate::output::Form::Both,
        generator: format!("ohmsheet {}", env!("CARGO_PKG_VERSION")),
    }
}

/// Run and draw every sweep the sheet declares.
fn plots(m: &Model, style: Style) -> Vec<Plot> {
    crate::sweep::declared::run_declared(m)
        .into_iter()
        .enumerate()
        .map(|(k, r)| match r {
            Ok(r) => {
                let title = r.title.clone().unwrap_or_else(|| format!("Sweep {}", k + 1));
                let mut caption = Vec::new();
                for a in &r.axes {
                    let show = |x: f64| format_value(C64::new(x, 0.0), a.quantity, a.display.as_ref(), style).rect;
                    caption.push(format!(
                        "{} from {} to {}, {} points{}",
                        a.name,
                        show(a.start),
                        show(a.stop),
                        a.count,
                        if a.log { ", spaced logarithmically" } else { "" }
                    ));
                }
                let shown: Vec<&str> = r.series.iter().map(|s| s.name.as_str()).collect();
                let caption = format!("{}; shown: {}.", caption.join("; "), shown.join(", "));
                match crate::plot::svg(&r, &crate::plot::PlotOptions::default()) {
                    Ok(svg) => Plot {
                        title,
                        caption,
                        svg: Some(svg),
                        problem: None,
                    },
                    Err(e) => Plot {
                        title,
                        caption,
                        svg: None,
                        problem: Some(format!("the plot could not be drawn: {e}")),
                    },
                }
            }
            Err(d) => Plot {
                title: format!("Sweep {}", k + 1),
                caption: String::new(),
                svg: None,
                problem: Some(format!("the sweep could not be run: {}", d.message)),
            },
        })
        .collect()
}

/// The unit to show a check's values in, if the sheet chose one.
fn check_unit(m: &Model, ch: &crate::syntax::ast::Check) -> Option<Unit> {
    if let ExprKind::Name(id) = &ch.lhs.kind {
        if let Some(c) = m.cell(&id.name) {
            if let (Some(u), Some(Shape::Scalar(_))) = (&c.display, &c.shape) {
                return Some(u.clone());
            }
        }
    }
    let mut rhs = &ch.rhs;
    while let ExprKind::Unary(_, inner) = &rhs.kind {
        rhs = inner;
    }
    match &rhs.kind {
        ExprKind::Number { unit: Some(u), .. } | ExprKind::Paren(_, Some(u)) => Some(u.unit.clone()),
        _ => None,
    }
}

fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

fn value(z: C64, q: Quantity, display: Option<&Unit>, style: Style) -> Value {
    let f = format_value(z, q, display, style);
    Value {
        rect: f.rect,
        polar: f.polar,
        unit: base_symbol(q),
        re: finite(z.re),
        im: finite(z.im),
    }
}

/// The report as JSON: the same content, for other programs.
pub fn json(r: &Report) -> String {
    serde_json::to_string_pretty(r).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}

/// The power-factor convention, stated under a step that uses `pf`,
/// `pf_angle` or `s_parts`, so a source's (P < 0) power factor is not read
/// as a load's (issue 13: the convention is named in the listing, the docs
/// and the report alike; docs/functions.md).
fn pf_convention_note(formula: &str) -> Option<&'static str> {
    let calls = |name: &str| {
        formula.match_indices(name).any(|(k, _)| {
            let before = formula[..k].chars().next_back();
            let after = formula[k + name.len()..].trim_start();
            !before.is_some_and(|c| c.is_alphanumeric() || c == '_' || c == '.') && after.starts_with('(')
        })
    };
    (calls("pf") || calls("pf_angle") || calls("s_parts")).then_some(
        "Power factor signed by lead/lag: + lagging (Q ≥ 0), − leading (Q < 0), for a load and a \
         source (P < 0) alike; the direction of real power is the sign of P, not of pf. \
         pf_angle φ = atan(Q/|P|), positive lagging.",
    )
}

#[cfg(test)]
mod pf_note_tests {
    use super::pf_convention_note;

    #[test]
    fn the_note_follows_the_calls_only() {
        for f in [
            "pf(S)",
            "pf (S) * 2",
            "1 - pf_angle(S)",
            "s_parts(V * conj(I))",
            "abs(pf(S))",
        ] {
            assert!(pf_convention_note(f).is_some(), "{f}");
        }
        for f in ["pf", "pf1 * 2", "q_pfc(P, pf1, pf2)", "mypf(S)", "x.pf", "S.pf_angle"] {
            assert!(pf_convention_note(f).is_none(), "{f}");
        }
    }
}
