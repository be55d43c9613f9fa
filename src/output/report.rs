//! Calculation reports: the sheet set out the way a checked hand
//! calculation is — metadata and a content hash, inputs, every step with
//! its formula, the formula with the numbers put in, and the result, then
//! the checks and a closing caution. One `Report` is built from a sheet and
//! its evaluated engine; `markdown`, `html` and `json` only lay it out.

use std::collections::HashMap;

use num_complex::Complex64 as C64;
use serde::Serialize;
use sha2::{Digest, Sha256};
use unicode_width::UnicodeWidthStr;

use crate::diag::{FileId, Span};
use crate::engine::model::TolSpec;
use crate::engine::{check_result, CellId, Engine, Model};
use crate::funcs::Shape;
use crate::sheet::{hex, Sheet};
use crate::syntax::ast::{BinOp, Expr, ExprKind, StmtKind, UnOp};
use crate::units::format::{base_symbol, format_value, Style};
use crate::units::{Quantity, Unit};

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
    pub checks: Vec<CheckLine>,
    pub plots: Vec<Plot>,
    pub caution: &'static str,
    /// `ohmsheet 0.1.0`
    pub generator: String,
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
        // A difference in a unit with a prefix reads best with its own
        // prefix (2.4 mA, not 2.4e-6 kA); a plain number keeps the unit
        // chosen (0.19 %).
        let diff_unit = if q.dim.is_none() { unit.as_ref() } else { None };
        let show_diff = |x: f64| format_value(C64::new(x, 0.0), q, diff_unit, style).rect;
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
            difference: show_diff(r.diff),
            allowed: show_diff(r.tol),
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
        checks,
        plots: plots(m, style),
        caution: CAUTION,
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

/// Where a piece of a formula sits, which decides whether a value put in
/// its place needs brackets to keep the formula's meaning.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Pos {
    /// The whole formula, inside brackets, or a function argument.
    Top,
    /// An operand of an operator.
    Operand,
    /// The base of `^`: a unit right before `^` would take the power.
    PowBase,
}

struct Substituter<'a> {
    engine: &'a Engine,
    style: Style,
}

impl Substituter<'_> {
    fn model(&self) -> &Model {
        &self.engine.model
    }

    /// The formula written again with every cell name replaced by its
    /// value and unit. Numbers, constants, functions and brackets stay as
    /// written; the tree decides the layout, so precedence is kept.
    fn expr(&self, e: &Expr, pos: Pos) -> String {
        let m = self.model();
        match &e.kind {
            ExprKind::Number { unit, .. } => {
                let s = m.sources.slice(e.span).to_string();
                if pos == Pos::PowBase && unit.is_some() {
                    format!("({s})")
                } else {
                    s
                }
            }
            ExprKind::Name(id) => match m.id(&id.name) {
                Some(cid) => self.cell_value(cid, 0, pos),
                None => id.name.clone(),
            },
            ExprKind::Field(base, field) => {
                if let ExprKind::Name(id) = &base.kind {
                    if let Some(cid) = m.id(&id.name) {
                        if let Some(Shape::Record(fields)) = &m.cells[cid as usize].shape {
                            if let Some(k) = fields.iter().position(|(n, _)| *n == field.name) {
                                return self.cell_value(cid, k, pos);
                            }
                        }
                    }
                }
                format!("{}.{}", self.expr(base, Pos::Operand), field.name)
            }
            ExprKind::Call { func, args } => {
                let a: Vec<String> = args.iter().map(|x| self.expr(x, Pos::Top)).collect();
                format!("{}({})", func.name, a.join(", "))
            }
            ExprKind::Unary(op, x) => {
                let s = format!(
                    "{}{}",
                    match op {
                        UnOp::Neg => "-",
                        UnOp::Pos => "+",
                    },
                    self.expr(x, Pos::Operand)
                );
                if pos == Pos::PowBase {
                    format!("({s})")
                } else {
                    s
                }
            }
            ExprKind::Binary(op, a, b) => {
                let s = match op {
                    BinOp::Pow => format!("{}^{}", self.expr(a, Pos::PowBase), self.expr(b, Pos::Operand)),
                    BinOp::Mul => format!("{} × {}", self.expr(a, Pos::Operand), self.expr(b, Pos::Operand)),
                    _ => format!(
                        "{} {} {}",
                        self.expr(a, Pos::Operand),
                        op.symbol(),
                        self.expr(b, Pos::Operand)
                    ),
                };
                if pos == Pos::PowBase {
                    format!("({s})")
                } else {
                    s
                }
            }
            ExprKind::Paren(x, unit) => match unit {
                Some(u) => {
                    let s = format!("({}) {}", self.expr(x, Pos::Top), m.sources.slice(u.span));
                    if pos == Pos::PowBase {
                        format!("({s})")
                    } else {
                        s
                    }
                }
                None => format!("({})", self.expr(x, Pos::Top)),
            },
            // A search is shown as written: its inputs take many values.
            ExprKind::Search(_) => m.sources.slice(e.span).to_string(),
        }
    }

    /// Slot `k` of cell `id`, written so it reads as one operand where it
    /// stands: `120 V`, `j3.88 Ω`, `(8.97 + j3.88) Ω`, and `(-5 V)` after an
    /// operator.
    fn cell_value(&self, id: CellId, k: usize, pos: Pos) -> String {
        let m = self.model();
        let c = &m.cells[id as usize];
        let (q, display) = match &c.shape {
            Some(Shape::Scalar(q)) => (*q, c.display.as_ref()),
            Some(Shape::Record(f)) => (f[k].1, None),
            None => return c.name.clone(),
        };
        let z = self.engine.values(id)[k];
        let f = format_value(z, q, display, self.style);
        let num = f
            .rect
            .strip_suffix(f.unit.as_str())
            .unwrap_or(&f.rect)
            .trim_end()
            .to_string();
        let two_parts = num.contains(' ');
        let glued = f.unit == "°";
        let text = match (two_parts, f.unit.is_empty()) {
            (true, true) => format!("({num})"),
            (true, false) => format!("({num}) {}", f.unit),
            (false, true) => num.clone(),
            (false, false) if glued => format!("{num}{}", f.unit),
            (false, false) => format!("{num} {}", f.unit),
        };
        let signed = num.starts_with('-');
        let needs = match pos {
            Pos::Top => false,
            Pos::Operand => signed,
            Pos::PowBase => signed || !f.unit.is_empty() || two_parts,
        };
        if needs {
            format!("({text})")
        } else {
            text
        }
    }
}

// ---------------------------------------------------------------- Markdown

/// Text for a Markdown paragraph or table cell: characters that start
/// markup are escaped, a `|` too (it would end a table cell).
fn md_text(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for ch in s.chars() {
        if matches!(
            ch,
            '\\' | '`' | '*' | '_' | '[' | ']' | '<' | '>' | '|' | '#' | '~' | '{' | '}' | '!' | '$' | '&'
        ) {
            out.push('\\');
        }
        if ch == '\n' {
            out.push(' ');
        } else {
            out.push(ch);
        }
    }
    out
}

/// A code span safe inside a table cell: the fence is longer than any run
/// of backticks inside, and `|` is escaped (GitHub-flavoured tables split
/// on it even in code).
fn md_code(s: &str) -> String {
    let longest = s.split(|c| c != '`').map(str::len).max().unwrap_or(0);
    let fence = "`".repeat(longest + 1);
    let body = s.replace('|', "\\|").replace('\n', " ");
    let pad = if body.starts_with('`') || body.ends_with('`') {
        " "
    } else {
        ""
    };
    format!("{fence}{pad}{body}{pad}{fence}")
}

/// The report as Markdown (GitHub-flavoured tables; everything else is
/// plain CommonMark). Plots are embedded as `data:` images; see
/// `markdown_with_plot_files` for a report written beside its pictures.
pub fn markdown(r: &Report) -> String {
    markdown_with_plot_files(r, &[])
}

/// The report as Markdown, plot `k` shown from the file `plot_files[k]`
/// (a path relative to the Markdown file) where one is given — the form
/// most Markdown viewers show — else as a `data:` image.
pub fn markdown_with_plot_files(r: &Report, plot_files: &[String]) -> String {
    let mut o = String::new();
    let p = |o: &mut String, s: &str| {
        o.push_str(s);
        o.push('\n');
    };
    p(&mut o, &format!("# {}", md_text(&r.title)));
    p(&mut o, "");
    p(&mut o, "| | |");
    p(&mut o, "|---|---|");
    for ml in &r.meta {
        p(&mut o, &format!("| {} | {} |", ml.label, md_text(&ml.value)));
    }
    p(
        &mut o,
        &format!(
            "| Phasor amplitudes | {} |",
            if r.amplitude == "peak" {
                "peak values"
            } else {
                "RMS values"
            }
        ),
    );
    p(&mut o, &format!("| Sheet hash (SHA-256) | `{}` |", r.sha256));
    p(&mut o, &format!("| Produced by | {} |", md_text(&r.generator)));
    p(&mut o, "");
    p(&mut o, "**Files**, in hashing order:");
    p(&mut o, "");
    p(&mut o, "| File | Contents | Bytes | SHA-256 |");
    p(&mut o, "|---|---|--:|---|");
    for f in &r.files {
        p(
            &mut o,
            &format!(
                "| {} | {} | {} | `{}` |",
                md_code(&f.path),
                md_text(&file_contents(f)),
                f.bytes,
                f.sha256
            ),
        );
    }
    p(&mut o, "");
    p(
        &mut o,
        &format!("The sheet hash is the {}", md_text(&lower_first(r.hash_rule))),
    );
    if !r.overrides.is_empty() {
        p(&mut o, "");
        p(
            &mut o,
            "**Values changed on the command line** for this report (not in the files above):",
        );
        p(&mut o, "");
        for s in &r.overrides {
            p(&mut o, &format!("- {}", md_code(&format!("--set {s}"))));
        }
    }
    if !r.notes.is_empty() {
        p(&mut o, "");
        p(&mut o, "## Notes");
        for n in &r.notes {
            p(&mut o, "");
            p(&mut o, &md_text(n));
        }
    }

    p(&mut o, "");
    p(&mut o, "## 1. Inputs");
    p(&mut o, "");
    if r.inputs.is_empty() {
        p(&mut o, "The sheet takes no values as given.");
    } else {
        p(&mut o, "| Quantity | Value | Written as | Source and notes |");
        p(&mut o, "|---|--:|---|---|");
        for i in &r.inputs {
            let written = if same_text(&i.written, &i.value.rect) {
                String::new()
            } else {
                md_code(&i.written)
            };
            let value = if is_real_positive(&i.value) {
                md_text(&i.value.rect)
            } else {
                format!("{}<br>{}", md_text(&i.value.rect), md_text(&i.value.polar))
            };
            let mut notes = vec![md_text(&i.source)];
            notes.extend(i.notes.iter().map(|n| md_text(n)));
            p(
                &mut o,
                &format!(
                    "| {} | {} | {} | {} |",
                    md_code(&i.name),
                    value,
                    written,
                    notes.join("<br>")
                ),
            );
        }
    }

    p(&mut o, "");
    p(&mut o, "## 2. Calculation");
    if !r.steps.is_empty() {
        p(&mut o, "");
        p(&mut o, &md_text(STEPS_INTRO));
    }
    if r.steps.is_empty() {
        p(&mut o, "");
        p(&mut o, "The sheet computes nothing from its inputs.");
    }
    for s in &r.steps {
        p(&mut o, "");
        let cap = s
            .caption
            .as_deref()
            .map_or(String::new(), |c| format!(" — {}", md_text(c)));
        p(&mut o, &format!("### 2.{} {}{}", s.number, md_code(&s.name), cap));
        p(&mut o, "");
        p(&mut o, "```text");
        for line in equation_lines(s) {
            p(&mut o, &line);
        }
        p(&mut o, "```");
        if s.included {
            p(&mut o, "");
            p(&mut o, &format!("*From {}.*", md_text(&s.source)));
        }
        for n in &s.notes {
            p(&mut o, "");
            p(&mut o, &md_text(n));
        }
    }

    p(&mut o, "");
    p(&mut o, "## 3. Checks");
    p(&mut o, "");
    if r.checks.is_empty() {
        p(&mut o, "The sheet states no checks.");
    } else {
        p(
            &mut o,
            "| # | Check | Computed | Reference | Difference | Allowed | Result |",
        );
        p(&mut o, "|--:|---|--:|--:|--:|--:|:-:|");
        for c in &r.checks {
            let mut check = md_code(&c.check);
            for n in &c.notes {
                check.push_str("<br>");
                check.push_str(&md_text(n));
            }
            p(
                &mut o,
                &format!(
                    "| {} | {}<br>{} | {} | {} | {} | {}<br>{} | {} |",
                    c.number,
                    check,
                    md_text(&c.source),
                    md_text(&c.computed),
                    md_text(&c.reference),
                    md_text(&c.difference),
                    md_text(&c.allowed),
                    md_text(&c.tolerance_rule),
                    if c.passed { "pass" } else { "**FAIL**" }
                ),
            );
        }
        p(&mut o, "");
        p(&mut o, &format!("**{}**", check_summary(r)));
    }

    if !r.plots.is_empty() {
        p(&mut o, "");
        p(&mut o, "## 4. Plots");
        for (k, pl) in r.plots.iter().enumerate() {
            p(&mut o, "");
            p(&mut o, &format!("### 4.{} {}", k + 1, md_text(&pl.title)));
            p(&mut o, "");
            p(&mut o, &md_text(&pl.caption));
            p(&mut o, "");
            match (&pl.svg, plot_files.get(k).filter(|f| !f.is_empty())) {
                (Some(_), Some(f)) => p(&mut o, &format!("![{}]({})", md_text(&pl.title), f.replace(' ', "%20"))),
                (Some(svg), None) => p(&mut o, &format!("![{}]({})", md_text(&pl.title), svg_data_uri(svg))),
                (None, _) => p(
                    &mut o,
                    &format!("*{}*", md_text(pl.problem.as_deref().unwrap_or("no plot"))),
                ),
            }
        }
    }

    p(&mut o, "");
    p(&mut o, "## Caution");
    p(&mut o, "");
    p(&mut o, &format!("> {}", md_text(r.caution)));
    o
}

fn lower_first(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) if s.starts_with("SHA") => f.to_string() + c.as_str(),
        Some(f) => f.to_lowercase().collect::<String>() + c.as_str(),
        None => String::new(),
    }
}

fn file_contents(f: &FileLine) -> String {
    let mut s = match &f.included_by {
        None => "the sheet".to_string(),
        Some(by) => format!("library sheet, included by {by}"),
    };
    if let Some(t) = &f.title {
        s.push_str(&format!(": {t}"));
    }
    if let Some(r) = &f.revision {
        s.push_str(&format!(" (revision {r})"));
    }
    s
}

fn same_text(a: &str, b: &str) -> bool {
    let norm = |s: &str| s.chars().filter(|c| !c.is_whitespace()).collect::<String>();
    norm(a) == norm(b)
}

fn is_real_positive(v: &Value) -> bool {
    v.im == Some(0.0) && v.re.is_some_and(|x| x >= 0.0)
}

/// `SVG` as a `data:` URI, for Markdown viewers that show images.
fn svg_data_uri(svg: &str) -> String {
    let mut out = String::from("data:image/svg+xml;utf8,");
    for b in svg.bytes() {
        if b.is_ascii_alphanumeric() || b"-_.~ =:/;,'".contains(&b) {
            out.push(if b == b' ' { '+' } else { b as char });
        } else {
            out.push_str(&format!("%{b:02X}"));
        }
    }
    out
}

/// The hand-calculation lines of a step, `=` signs aligned:
///
/// ```text
/// I = V / Z
///   = 230 V / (8 + j6) Ω
///   = 18.4 - j13.8 A
///   = 23 ∠ -36.87° A
/// ```
fn equation_lines(s: &Step) -> Vec<String> {
    let lhs = s.name.as_str();
    let pad = " ".repeat(UnicodeWidthStr::width(lhs));
    let mut v = vec![format!("{lhs} = {}", s.formula)];
    if show_substituted(s) {
        v.push(format!("{pad} = {}", s.substituted));
    }
    if s.results.len() == 1 {
        let val = &s.results[0].value;
        v.push(format!("{pad} = {}", val.rect));
        if !is_real_positive(val) {
            v.push(format!("{pad} = {}", val.polar));
        }
    } else {
        let w = s
            .results
            .iter()
            .map(|r| UnicodeWidthStr::width(r.name.as_str()))
            .max()
            .unwrap_or(0);
        for r in &s.results {
            let gap = " ".repeat(w - UnicodeWidthStr::width(r.name.as_str()));
            v.push(format!(
                "{pad}   {}{gap} = {}  =  {}",
                r.name, r.value.rect, r.value.polar
            ));
        }
    }
    v
}

/// The substituted line says something new: it differs from the formula
/// and, for a single result, from the result itself.
fn show_substituted(s: &Step) -> bool {
    let same_as_result = s.results.len() == 1 && same_text(&s.substituted, &s.results[0].value.rect);
    !same_as_result && !same_text(&s.substituted, &s.formula)
}

/// What a step shows, said once before the steps.
const STEPS_INTRO: &str = "Each step gives the formula as written, the formula with the value and unit of \
each quantity put in its place, and the result. A complex result is given in rectangular form \
(a + jb) and in polar form (magnitude ∠ angle); a real, positive result is its own magnitude at 0°.";

fn check_summary(r: &Report) -> String {
    let failed = r.checks.iter().filter(|c| !c.passed).count();
    let n = r.checks.len();
    if failed == 0 {
        format!("All {n} check{} pass.", if n == 1 { "" } else { "s" })
    } else {
        format!("{failed} of {n} checks FAIL.")
    }
}

// -------------------------------------------------------------------- HTML

fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for ch in s.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

const CSS: &str = r#"
:root { --ink: #111; --muted: #555; --rule: #bbb; --pass: #14622a; --fail: #b00020; }
* { box-sizing: border-box; }
html { font-size: 10.5pt; }
body { font-family: "DejaVu Sans", "Liberation Sans", "Segoe UI", Arial, sans-serif; color: var(--ink);
       line-height: 1.4; max-width: 180mm; margin: 12mm auto; padding: 0 6mm; }
h1 { font-size: 1.6rem; margin: 0 0 .4rem; }
h2 { font-size: 1.2rem; margin: 1.4rem 0 .5rem; border-bottom: 1.5pt solid var(--ink); padding-bottom: 2pt; }
h3 { font-size: 1rem; margin: 1rem 0 .3rem; }
code, .eq td, .mono { font-family: "DejaVu Sans Mono", "Liberation Mono", Consolas, monospace; font-size: .92em; }
table { border-collapse: collapse; width: 100%; margin: .3rem 0 .6rem; }
th, td { border: .5pt solid var(--rule); padding: 2pt 4pt; vertical-align: top; text-align: left;
         overflow-wrap: anywhere; }
th { background: #eee; font-weight: 600; white-space: nowrap; }
td.num { text-align: right; white-space: nowrap; }
td.written code { white-space: nowrap; }
table.meta { width: auto; min-width: 60%; }
table.meta th { width: 11rem; }
.hash { font-family: "DejaVu Sans Mono", "Liberation Mono", Consolas, monospace; font-size: .85em; overflow-wrap: anywhere; }
.small, .source { color: var(--muted); font-size: .85em; }
.step { break-inside: avoid; page-break-inside: avoid; margin-bottom: .6rem; }
table.eq { width: auto; margin: .2rem 0 .2rem .6rem; }
table.eq td { border: none; padding: 0 4pt 1pt 0; }
table.eq td.lhs { text-align: right; white-space: nowrap; }
table.eq td.rhs { overflow-wrap: anywhere; }
table.eq tr.result td.rhs { font-weight: 700; }
.note { margin: .2rem 0 .2rem .6rem; font-style: italic; }
.pass { color: var(--pass); font-weight: 700; }
.fail { color: var(--fail); font-weight: 700; }
tr.failed td { background: #fde8eb; }
#checks td:nth-child(2) { width: 36%; }
#checks code { white-space: pre-wrap; }
.summary { font-weight: 700; }
.caution { border: 1.5pt solid var(--ink); padding: 6pt 8pt; margin-top: 1.2rem; break-inside: avoid; }
.plot svg { max-width: 100%; height: auto; display: block; }
figure { margin: .4rem 0; break-inside: avoid; }
footer { margin-top: 1rem; }
@page { margin: 14mm 12mm 16mm; }
@media print {
  html { font-size: 9.5pt; }
  body { max-width: none; margin: 0; padding: 0; }
  thead { display: table-header-group; }
  tr { break-inside: avoid; page-break-inside: avoid; }
  h2, h3 { break-after: avoid; page-break-after: avoid; }
  th { background: #eee !important; -webkit-print-color-adjust: exact; print-color-adjust: exact; }
  tr.failed td { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
}
"#;

/// The report as one self-contained HTML file: inline CSS and SVG, no
/// scripts, nothing fetched.
pub fn html(r: &Report) -> String {
    let mut o = String::new();
    o.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    o.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    o.push_str(&format!(
        "<meta name=\"generator\" content=\"{}\">\n",
        esc(&r.generator)
    ));
    o.push_str(&format!(
        "<title>{}</title>\n<style>{CSS}</style>\n</head>\n<body>\n",
        esc(&r.title)
    ));

    o.push_str(&format!("<header>\n<h1 id=\"title\">{}</h1>\n", esc(&r.title)));
    o.push_str("<table class=\"meta\" id=\"meta\">\n");
    for ml in &r.meta {
        o.push_str(&format!(
            "<tr data-key=\"{}\"><th>{}</th><td>{}</td></tr>\n",
            esc(&ml.key),
            esc(&ml.label),
            esc(&ml.value)
        ));
    }
    o.push_str(&format!(
        "<tr><th>Phasor amplitudes</th><td>{}</td></tr>\n",
        if r.amplitude == "peak" {
            "peak values"
        } else {
            "RMS values"
        }
    ));
    o.push_str(&format!(
        "<tr><th>Sheet hash (SHA-256)</th><td class=\"hash\" id=\"sheet-hash\">{}</td></tr>\n",
        esc(&r.sha256)
    ));
    o.push_str(&format!(
        "<tr><th>Produced by</th><td>{}</td></tr>\n</table>\n",
        esc(&r.generator)
    ));
    o.push_str("<table class=\"files\" id=\"files\">\n<thead><tr><th>File, in hashing order</th><th>Contents</th><th>Bytes</th><th>SHA-256</th></tr></thead>\n<tbody>\n");
    for f in &r.files {
        o.push_str(&format!(
            "<tr><td><code>{}</code></td><td>{}</td><td class=\"num\">{}</td><td class=\"hash\">{}</td></tr>\n",
            esc(&f.path),
            esc(&file_contents(f)),
            f.bytes,
            esc(&f.sha256)
        ));
    }
    o.push_str("</tbody>\n</table>\n");
    o.push_str(&format!(
        "<p class=\"small\">The sheet hash is the {}</p>\n",
        esc(&lower_first(r.hash_rule))
    ));
    if !r.overrides.is_empty() {
        o.push_str("<p><strong>Values changed on the command line</strong> for this report (not in the files above):</p>\n<ul id=\"overrides\">\n");
        for s in &r.overrides {
            o.push_str(&format!("<li><code>--set {}</code></li>\n", esc(s)));
        }
        o.push_str("</ul>\n");
    }
    o.push_str("</header>\n");
    if !r.notes.is_empty() {
        o.push_str("<section id=\"notes\">\n<h2>Notes</h2>\n");
        for n in &r.notes {
            o.push_str(&format!("<p>{}</p>\n", esc(n)));
        }
        o.push_str("</section>\n");
    }

    o.push_str("<section id=\"inputs\">\n<h2>1. Inputs</h2>\n");
    if r.inputs.is_empty() {
        o.push_str("<p>The sheet takes no values as given.</p>\n");
    } else {
        o.push_str("<table>\n<thead><tr><th>Quantity</th><th>Value</th><th>Written as</th><th>Source and notes</th></tr></thead>\n<tbody>\n");
        for i in &r.inputs {
            let written = if same_text(&i.written, &i.value.rect) {
                String::new()
            } else {
                format!("<code>{}</code>", esc(&i.written))
            };
            let value = if is_real_positive(&i.value) {
                esc(&i.value.rect)
            } else {
                format!("{}<br>{}", esc(&i.value.rect), esc(&i.value.polar))
            };
            let notes: String = i.notes.iter().map(|n| format!("<br>{}", esc(n))).collect();
            o.push_str(&format!(
                "<tr data-cell=\"{}\"><td><code>{}</code></td><td class=\"num value\">{}</td><td class=\"written\">{}</td><td><span class=\"source\">{}</span>{notes}</td></tr>\n",
                esc(&i.name),
                esc(&i.name),
                value,
                written,
                esc(&i.source),
            ));
        }
        o.push_str("</tbody>\n</table>\n");
    }
    o.push_str("</section>\n");

    o.push_str("<section id=\"calculation\">\n<h2>2. Calculation</h2>\n");
    if !r.steps.is_empty() {
        o.push_str(&format!("<p class=\"small\">{}</p>\n", esc(STEPS_INTRO)));
    }
    if r.steps.is_empty() {
        o.push_str("<p>The sheet computes nothing from its inputs.</p>\n");
    }
    for s in &r.steps {
        let cap = s.caption.as_deref().map_or(String::new(), |c| format!(" — {}", esc(c)));
        o.push_str(&format!(
            "<div class=\"step\" id=\"step-{}\" data-cell=\"{}\">\n<h3>2.{} <code>{}</code>{}</h3>\n<table class=\"eq\">\n",
            esc(&s.name),
            esc(&s.name),
            s.number,
            esc(&s.name),
            cap
        ));
        let row = |o: &mut String, class: &str, lhs: &str, rhs: &str| {
            o.push_str(&format!(
                "<tr class=\"{class}\"><td class=\"lhs\">{lhs}</td><td>=</td><td class=\"rhs\">{rhs}</td></tr>\n"
            ));
        };
        row(&mut o, "formula", &esc(&s.name), &esc(&s.formula));
        if show_substituted(s) {
            row(&mut o, "substituted", "", &esc(&s.substituted));
        }
        if s.results.len() == 1 {
            let v = &s.results[0].value;
            row(&mut o, "result rect", "", &esc(&v.rect));
            if !is_real_positive(v) {
                row(&mut o, "result polar", "", &esc(&v.polar));
            }
        } else {
            for res in &s.results {
                row(
                    &mut o,
                    "result field",
                    &esc(&res.name),
                    &format!("{} &nbsp;=&nbsp; {}", esc(&res.value.rect), esc(&res.value.polar)),
                );
            }
        }
        o.push_str("</table>\n");
        if s.included {
            o.push_str(&format!("<p class=\"note source\">From {}.</p>\n", esc(&s.source)));
        }
        for n in &s.notes {
            o.push_str(&format!("<p class=\"note\">{}</p>\n", esc(n)));
        }
        o.push_str("</div>\n");
    }
    o.push_str("</section>\n");

    o.push_str("<section id=\"checks-section\">\n<h2>3. Checks</h2>\n");
    if r.checks.is_empty() {
        o.push_str("<p>The sheet states no checks.</p>\n");
    } else {
        o.push_str("<table id=\"checks\">\n<thead><tr><th>#</th><th>Check</th><th>Computed</th><th>Reference</th><th>Difference</th><th>Allowed</th><th>Result</th></tr></thead>\n<tbody>\n");
        for c in &r.checks {
            let notes: String = c.notes.iter().map(|n| format!("<br>{}", esc(n))).collect();
            o.push_str(&format!(
                "<tr class=\"{}\"><td class=\"num\">{}</td><td><code>{}</code>{notes}<br><span class=\"source\">{}</span></td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}<br><span class=\"small\">{}</span></td><td class=\"verdict {}\">{}</td></tr>\n",
                if c.passed { "passed" } else { "failed" },
                c.number,
                esc(&c.check),
                esc(&c.source),
                esc(&c.computed),
                esc(&c.reference),
                esc(&c.difference),
                esc(&c.allowed),
                esc(&c.tolerance_rule),
                if c.passed { "pass" } else { "fail" },
                if c.passed { "pass" } else { "FAIL" }
            ));
        }
        o.push_str("</tbody>\n</table>\n");
        o.push_str(&format!(
            "<p class=\"summary\" id=\"check-summary\">{}</p>\n",
            esc(&check_summary(r))
        ));
    }
    o.push_str("</section>\n");

    if !r.plots.is_empty() {
        o.push_str("<section id=\"plots\">\n<h2>4. Plots</h2>\n");
        for (k, pl) in r.plots.iter().enumerate() {
            let body = match &pl.svg {
                Some(svg) => svg.clone(),
                None => format!("<p><em>{}</em></p>", esc(pl.problem.as_deref().unwrap_or("no plot"))),
            };
            o.push_str(&format!(
                "<figure class=\"plot\" id=\"plot-{}\">\n<h3>4.{} {}</h3>\n{body}\n<figcaption class=\"small\">{}</figcaption>\n</figure>\n",
                k + 1,
                k + 1,
                esc(&pl.title),
                esc(&pl.caption)
            ));
        }
        o.push_str("</section>\n");
    }

    o.push_str(&format!(
        "<section class=\"caution\" id=\"caution\"><strong>Caution.</strong> {}</section>\n",
        esc(r.caution)
    ));
    o.push_str(&format!(
        "<footer class=\"small\">{} · sheet hash <span class=\"hash\">{}</span></footer>\n</body>\n</html>\n",
        esc(&r.title),
        esc(&r.sha256)
    ));
    o
}

/// The report as JSON: the same content, for other programs.
pub fn json(r: &Report) -> String {
    serde_json::to_string_pretty(r).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markdown_code_spans_survive_pipes_and_backticks() {
        assert_eq!(md_code("Za || Zb"), "`Za \\|\\| Zb`");
        assert_eq!(md_code("a`b"), "``a`b``");
        assert_eq!(md_text("2*x_1 | y"), "2\\*x\\_1 \\| y");
    }

    #[test]
    fn html_is_escaped() {
        assert_eq!(esc("<b>&\"'"), "&lt;b&gt;&amp;&quot;&#39;");
    }
}
