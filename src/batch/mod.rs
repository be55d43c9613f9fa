//! Running one sheet over a table of cases.
//!
//! A `Plan` ties the columns of a cases table to the sheet's inputs and
//! chooses the shown values. Each case's values are read with the sheet
//! language's own rules for numbers and units (a plain number takes the
//! unit in its column header), checked against the input's dimension, and
//! evaluated 64 cases at a time by the block evaluator. `run_stream` reads
//! the table in chunks, evaluates chunks in parallel and writes them back in
//! input order, with a fixed number of chunks in flight, so memory stays
//! the same however long the table is.
//!
//! A bad row (a value that does not read, a wrong unit, a NaN result) is
//! reported with its row, column and reason, and the other rows go on.

mod cases;
mod reason;
mod rows;
mod spread;
mod stream;
mod values;

pub use cases::{Cases, Row, Rows};
pub use reason::nan_reason;
pub use rows::{csv_line, RowError, Worker};
pub use spread::{SpreadCols, SPREAD_FIELDS};
#[cfg(unix)]
pub use stream::run_stream_at;
pub use stream::{chunks_in_flight, run_stream, StreamError, StreamOptions, Summary};
pub use values::ValueReader;

use std::sync::Arc;

use crate::diag::{did_you_mean, Diagnostic, ErrorCode};
use crate::engine::ops::Op;
use crate::engine::program::Program;
use crate::engine::{eval, CellId, Model, Role};
use crate::funcs::Shape;
use crate::units::format::base_symbol;
use crate::units::{parse_unit_expr, Dim, Kind, Quantity, Unit, UnitError};

/// How a complex value is written: two columns, or four for both.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ComplexForm {
    /// Real and imaginary parts.
    Rect,
    /// Magnitude and angle in degrees.
    Polar,
    /// Both pairs: real and imaginary parts, then magnitude and angle
    /// (each complex value is shown twice, once in each form).
    Both,
}

/// A column of the cases table: the input it sets.
#[derive(Clone, Debug)]
pub struct CaseColumn {
    /// The header as written.
    pub header: String,
    /// Its place among the fields of a row.
    pub field: usize,
    pub name: String,
    pub cell: CellId,
    pub slot: u32,
    /// The input's dimension and kind.
    pub want: Quantity,
    /// The unit in the header (`Vll [kV]`), for values without one.
    pub unit: Option<Unit>,
    /// The factor a plain number in this column is multiplied by when
    /// such a number can set the input (its header's unit, or none where
    /// the input is a plain number); `None` when a plain number is an error.
    pub plain_factor: Option<f64>,
}

/// One shown value: a scalar cell or one field of a record cell.
#[derive(Clone, Debug)]
pub struct Shown {
    /// `I`, or `y.a` for a record field.
    pub label: String,
    pub cell: CellId,
    pub slot: u32,
    /// Real by construction (its imaginary part is zero for every case):
    /// one column instead of two.
    pub real: bool,
    /// Written values are divided by this (display unit, degrees).
    pub scale: f64,
    /// The unit written in the header; empty for plain numbers.
    pub unit: String,
    /// The value does not depend on any column of the cases: its text,
    /// written once and copied into every row.
    pub fixed: Option<Vec<u8>>,
    /// Its two columns: `Rect` or `Polar` (a plan in both forms shows a
    /// complex value twice, once each way).
    pub form: ComplexForm,
    /// An impedance or admittance: ∞ is an open or a short element and is
    /// written `inf`; any other infinite value fails its cell, with the
    /// reason (`engine::infinite::inf_diagnostic`).
    pub element: bool,
}

/// Columns in, columns out, and the compiled sheet.
#[derive(Clone, Debug)]
pub struct Plan {
    pub model: Arc<Model>,
    /// Every header of the cases table, as written: the inputs a case
    /// sets and the tags carried through.
    pub headers: Vec<String>,
    /// The columns that set inputs (tags have none).
    pub columns: Vec<CaseColumn>,
    pub shown: Vec<Shown>,
    pub form: ComplexForm,
    /// Significant digits of the written values; `None` writes each
    /// number with the digits it takes to read back to the same bits.
    digits: Option<usize>,
    /// `--spread`: the analyses over the tolerances written per case.
    pub spread: Option<Arc<SpreadCols>>,
}

const DEG: f64 = std::f64::consts::PI / 180.0;

/// A computed cell named on the command line (`--show`, `--spread`), or
/// a field of one (`fault.ia`): its id and the field, or an error with a
/// did-you-mean naming the option.
pub(super) fn shown_cell<'a>(m: &Model, n: &'a str, option: &str) -> Result<(CellId, Option<&'a str>), Diagnostic> {
    let (base, field) = match m.id(n) {
        Some(_) => (n, None),
        None => match n.split_once('.') {
            Some((b, f)) => (b, Some(f)),
            None => (n, None),
        },
    };
    match m.id(base) {
        Some(id) if m.cells[id as usize].role == Role::Def => Ok((id, field)),
        _ => {
            let names = m.defs().map(|(_, c)| c.name.as_str());
            let mut d = plan_error(format!("{option}: the sheet has no cell `{n}`"));
            if let Some(s) = did_you_mean(n, names) {
                d = d.with_hint(format!("did you mean `{s}`?"));
            }
            Err(d)
        }
    }
}

fn plan_error(message: impl Into<String>) -> Diagnostic {
    Diagnostic::unplaced(ErrorCode::BadCases, message)
}

/// `Vll [kV]` → (`Vll`, `Some("kV")`).
fn split_header(h: &str) -> Result<(&str, Option<&str>), Diagnostic> {
    let h = h.trim_start_matches('\u{FEFF}').trim();
    match h.find('[') {
        None => Ok((h, None)),
        Some(i) => {
            let Some(inner) = h[i + 1..].trim_end().strip_suffix(']') else {
                return Err(plan_error(format!("column header `{h}` has an unclosed `[`"))
                    .with_hint("write the unit in brackets after the name, e.g. `Vll [kV]`"));
            };
            Ok((h[..i].trim(), Some(inner.trim())))
        }
    }
}

fn unit_error_text(text: &str, e: UnitError) -> String {
    match e {
        UnitError::AmbiguousMetre => "`m` on its own is ambiguous: write `metre`, `km` or `mm`".into(),
        UnitError::Exponent(w) => format!("bad power in unit `{w}`"),
        UnitError::Range(w) => format!("unit `{w}` is beyond the range of a double"),
        UnitError::Unknown { word, suggestion, hint } => {
            let mut s = format!("unknown unit `{word}` in `{text}`");
            if let Some(x) = suggestion {
                s.push_str(&format!(" (did you mean `{x}`?)"));
            }
            if let Some(h) = hint {
                s.push_str(&format!("; {h}"));
            }
            s
        }
    }
}

/// Why a value of quantity `got` cannot set an input of quantity `want`.
fn quantity_mismatch(name: &str, want: Quantity, got: Quantity) -> Option<String> {
    if want.dim != got.dim {
        if got.is_plain_number() {
            let u = base_symbol(want);
            return Some(format!(
                "a plain number, but `{name}` is {}: give the unit in the value (`… {u}`) or in the column header (`{name} [{u}]`)",
                want.describe()
            ));
        }
        return Some(format!("{}, but `{name}` is {}", got.describe(), want.describe()));
    }
    let angle = |q: Quantity| q.kind == Kind::Angle;
    if angle(want) != angle(got) {
        return Some(if angle(want) {
            format!("a plain number, but `{name}` is an angle: write `30°` (or `0.5 rad`), or put the unit in the column header (`{name} [°]`)")
        } else {
            format!("an angle, but `{name}` is {}", want.describe())
        });
    }
    let freq = |q: Quantity| match q.kind {
        Kind::Hertz => 1,
        Kind::RadPerSec => 2,
        _ => 0,
    };
    if freq(want) * freq(got) == 2 {
        return Some(format!(
            "{}, but `{name}` is {}: convert with ω = 2πf",
            got.describe(),
            want.describe()
        ));
    }
    // Powers of another kind (a kvar column for an input in MW), a plain
    // number for a percentage.
    if !crate::units::kind::fits_input(want, got) {
        let unit = if want.kind == Kind::Percent {
            "%".to_string()
        } else {
            base_symbol(want)
        };
        return Some(format!(
            "{}, but `{name}` is {}: give it in {unit}, or put the unit in the column header (`{name} [{unit}]`)",
            got.describe(),
            want.describe()
        ));
    }
    None
}

/// The units of `want`'s dimension, the common prefixed forms included:
/// where a suggestion for a mistyped unit is looked for (`6 mi` for a
/// length is not answered with minutes).
fn units_like(want: Quantity) -> Vec<String> {
    let mut v: Vec<String> = Vec::new();
    for p in ["", "k", "m", "M", "u", "µ", "n", "p", "G"] {
        for s in crate::units::table::all_symbols() {
            // `m` alone is refused as ambiguous; long names take no prefix
            // in suggestions.
            let w = format!("{p}{s}");
            if w == "m" || (!p.is_empty() && s.chars().count() > 3) || v.contains(&w) {
                continue;
            }
            if crate::units::lookup_unit(&w).is_ok_and(|u| u.q.dim == want.dim) {
                v.push(w);
            }
        }
    }
    v
}

/// The hint for an unknown unit `word` in a value given to `name`, a
/// quantity `want`: a did-you-mean only among units of its dimension
/// (`6 mn` for a time is not answered with `m`), else a few such units.
/// Batch words its cells with it (`unit_error_for`); the session its
/// edits of a cell.
pub fn unit_hint_for(word: &str, name: &str, want: Quantity) -> String {
    let like = units_like(want);
    // Two letters are too few to guess from (`mi` is neither `mm` nor `min`).
    let guess = if word.chars().count() > 2 {
        did_you_mean(word, like.iter().map(String::as_str))
    } else {
        None
    };
    match guess {
        Some(x) => format!("did you mean `{x}`?"),
        None if want.is_plain_number() => format!("`{name}` is a plain number"),
        None if !like.is_empty() => {
            let few: Vec<&str> = like.iter().take(6).map(String::as_str).collect();
            format!("`{name}` is {}: units such as {}", want.describe(), few.join(", "))
        }
        None => format!("`{name}` is {}", want.describe()),
    }
}

/// An unknown-unit error in a value given to `name`, a quantity `want` (a
/// session edit, `--set`, `--vary`): its did-you-mean replaced by units of
/// that dimension (`unit_hint_for`), its other hints kept.
pub fn hint_units_by_dimension(mut d: Diagnostic, name: &str, want: Quantity) -> Diagnostic {
    if d.code != ErrorCode::UnknownUnit {
        return d;
    }
    let Some(word) = d
        .message
        .strip_prefix("unknown unit `")
        .and_then(|w| w.strip_suffix('`'))
    else {
        return d;
    };
    let mut hint = vec![unit_hint_for(word, name, want)];
    let old = d.hint.take().unwrap_or_default();
    hint.extend(
        old.split("; ")
            .filter(|h| !h.is_empty() && !h.starts_with("did you mean"))
            .map(str::to_string),
    );
    d.hint = Some(hint.join("; "));
    d
}

/// `hint_units_by_dimension` for a `NAME=…` or `NAME = …` text given to a
/// cell of `model`; the diagnostic unchanged when the name is no scalar
/// cell.
pub fn hint_units_for_assignment(d: Diagnostic, text: &str, model: &crate::engine::Model) -> Diagnostic {
    let Some((name, _)) = text.split_once('=') else {
        return d;
    };
    let name = name.trim();
    match model.cell(name).and_then(|c| c.shape.clone()) {
        Some(crate::funcs::Shape::Scalar(want)) => hint_units_by_dimension(d, name, want),
        _ => d,
    }
}

/// A unit error worded for an input of quantity `want`: a did-you-mean
/// only among units of its dimension, else a few such units.
pub(crate) fn unit_error_for(text: &str, e: UnitError, name: &str, want: Quantity) -> String {
    let UnitError::Unknown { word, hint, .. } = e else {
        return unit_error_text(text, e);
    };
    let like = units_like(want);
    let mut s = format!("unknown unit `{word}` in `{text}`");
    if let Some(h) = hint {
        s.push_str(&format!("; {h}"));
    }
    // Two letters are too few to guess from (`mi` is neither `mm` nor `min`).
    let guess = if word.chars().count() > 2 {
        did_you_mean(&word, like.iter().map(String::as_str))
    } else {
        None
    };
    match guess {
        Some(x) => s.push_str(&format!(" (did you mean `{x}`?)")),
        None if want.is_plain_number() => s.push_str(&format!("; `{name}` is a plain number")),
        None if !like.is_empty() => {
            let few: Vec<&str> = like.iter().take(6).map(String::as_str).collect();
            s.push_str(&format!(
                "; `{name}` is {}: units such as {}",
                want.describe(),
                few.join(", ")
            ));
        }
        None => s.push_str(&format!("; `{name}` is {}", want.describe())),
    }
    s
}

impl Plan {
    /// Match the cases table's `headers` to the sheet's inputs and choose
    /// the shown values (`show`, or every computed cell). Every column
    /// must name an input; see [`Plan::with_tags`] for tag columns.
    pub fn new(
        model: Arc<Model>,
        headers: &[String],
        show: Option<&[String]>,
        form: ComplexForm,
    ) -> Result<Plan, Diagnostic> {
        Plan::build(model, headers, None, show, form)
    }

    /// [`Plan::new`], where a column that names no input is a tag, carried
    /// through to the results unchanged, unless its name is close to an
    /// input's (a typo: an error with its did-you-mean) or its header
    /// gives a unit. The columns named in `tags` are tags whatever their
    /// name.
    pub fn with_tags(
        model: Arc<Model>,
        headers: &[String],
        tags: &[String],
        show: Option<&[String]>,
        form: ComplexForm,
    ) -> Result<Plan, Diagnostic> {
        Plan::build(model, headers, Some(tags), show, form)
    }

    fn build(
        model: Arc<Model>,
        headers: &[String],
        tags: Option<&[String]>,
        show: Option<&[String]>,
        form: ComplexForm,
    ) -> Result<Plan, Diagnostic> {
        let m = &*model;
        let clean = |h: &str| h.trim_start_matches('\u{FEFF}').trim().to_string();
        if let Some(tags) = tags {
            for t in tags {
                let t = t.trim();
                let found = headers.iter().any(|h| {
                    let h = clean(h);
                    h == t || split_header(&h).is_ok_and(|(n, _)| n == t)
                });
                if !found {
                    let all: Vec<String> = headers.iter().map(|h| clean(h)).collect();
                    let mut d = plan_error(format!("--tag `{t}`: the cases table has no column `{t}`"));
                    d = match did_you_mean(t, all.iter().map(String::as_str)) {
                        Some(x) => d.with_hint(format!("did you mean `{x}`? its columns are: {}", all.join(", "))),
                        None => d.with_hint(format!("its columns are: {}", all.join(", "))),
                    };
                    return Err(d);
                }
            }
        }
        let inputs: Vec<&str> = m.inputs().map(|(_, c)| c.name.as_str()).collect();
        let list = || {
            if inputs.is_empty() {
                "the sheet has no inputs (every cell uses another cell)".to_string()
            } else {
                format!("the sheet's inputs are: {}", inputs.join(", "))
            }
        };
        let tagging = tags.is_some();
        let tag_hint = |name: &str| {
            if tagging {
                format!("; if it is a tag to carry through, name it with --tag \"{name}\"")
            } else {
                String::new()
            }
        };
        let mut columns: Vec<CaseColumn> = Vec::new();
        for (field, h) in headers.iter().enumerate() {
            let whole = clean(h);
            if let Some(tags) = tags {
                let named = |t: &String| {
                    let t = t.trim();
                    t == whole || split_header(&whole).is_ok_and(|(n, _)| n == t)
                };
                if tags.iter().any(named) {
                    continue;
                }
            }
            let (name, unit_text) = split_header(h)?;
            if name.is_empty() {
                return Err(
                    plan_error(format!("a column of the cases table has no name (header `{h}`)")).with_hint(list()),
                );
            }
            let Some(id) = m.id(name) else {
                let close = did_you_mean(name, inputs.iter().copied());
                // A column that names no input, is not close to one and
                // gives no unit is a tag.
                if tagging && close.is_none() && unit_text.is_none() {
                    continue;
                }
                let mut d = plan_error(format!("column `{name}` names no input of the sheet"));
                if let Some(s) = close {
                    d = d.with_hint(format!("did you mean `{s}`? {}{}", list(), tag_hint(name)));
                } else if unit_text.is_some() {
                    d = d.with_hint(format!(
                        "a column with a unit in its header sets an input; {}{}",
                        list(),
                        tag_hint(name)
                    ));
                } else {
                    d = d.with_hint(list());
                }
                return Err(d);
            };
            let c = &m.cells[id as usize];
            if c.role != Role::Def || !c.input || c.error.is_some() {
                return Err(plan_error(format!(
                    "column `{name}` names a computed cell (`{name} = {}`); a case can only set inputs",
                    c.formula
                ))
                .with_hint(format!("{}{}", list(), tag_hint(name))));
            }
            let Some(want) = c.quantity() else {
                return Err(plan_error(format!(
                    "column `{name}` names a cell with several fields; a case sets single values"
                ))
                .with_hint(list()));
            };
            if !c.code.is_empty() {
                return Err(plan_error(format!(
                    "input `{name}` is computed at run time and cannot be set per case"
                )));
            }
            if columns.iter().any(|k| k.name == name) {
                return Err(plan_error(format!("the cases table has two columns for `{name}`")));
            }
            let unit = match unit_text {
                None => None,
                Some(t) => {
                    let u = parse_unit_expr(t).map_err(|e| {
                        plan_error(format!("column `{h}`: {}", unit_error_for(t, e, name, want)))
                            .with_hint(format!("`{name}` is {}", want.describe()))
                    })?;
                    if let Some(why) = quantity_mismatch(name, want, u.q) {
                        return Err(plan_error(format!("column `{h}`: the unit `{t}` is {why}")));
                    }
                    Some(u)
                }
            };
            let plain_q = unit.as_ref().map_or(Quantity::PLAIN, |u| u.q);
            let plain_factor = match quantity_mismatch(name, want, plain_q) {
                None => Some(unit.as_ref().map_or(1.0, |u| u.factor)),
                Some(_) => None,
            };
            columns.push(CaseColumn {
                header: h.clone(),
                field,
                name: name.to_string(),
                cell: id,
                slot: c.slot,
                want,
                unit,
                plain_factor,
            });
        }

        // A case can make an input complex, except one real by nature
        // (`real_by_nature`: W, var, a length, a frequency, …): a value
        // with an imaginary part is refused as it is read, and one that
        // slips past fails its row: "an imaginary part where none was
        // expected". Values built from real inputs only take one column.
        let set_slots: Vec<u32> = columns
            .iter()
            .filter(|c| !real_by_nature(c.want))
            .map(|c| c.slot)
            .collect();
        let real = real_slots(&m.program, &set_slots);
        let mut shown = Vec::new();
        let mut add = |id: CellId, field: Option<usize>| {
            let c = &m.cells[id as usize];
            let (label, q, slot, display) = match (&c.shape, field) {
                (Some(Shape::Scalar(q)), _) => (c.name.clone(), *q, c.slot, c.display.as_ref()),
                (Some(Shape::Record(f)), Some(k)) => {
                    (format!("{}.{}", c.name, f[k].0), f[k].1, c.slot + k as u32, None)
                }
                _ => return,
            };
            let (scale, unit) = written_in(q, display);
            // W and var are real numbers whatever the cases (P = Re S, Q = Im S):
            // one column, and a case that gives one an imaginary part (a
            // factor set complex) fails that cell instead of writing a
            // complex "var" value.
            let is_real = real[slot as usize] || matches!(q.kind, Kind::RealPower | Kind::ReactivePower);
            let forms = match form {
                ComplexForm::Both if !is_real => vec![ComplexForm::Rect, ComplexForm::Polar],
                ComplexForm::Both => vec![ComplexForm::Rect],
                f => vec![f],
            };
            for f in forms {
                shown.push(Shown {
                    label: label.clone(),
                    cell: id,
                    slot,
                    real: is_real,
                    scale,
                    unit: unit.clone(),
                    fixed: None,
                    form: f,
                    element: crate::engine::infinite::is_element(q),
                });
            }
        };
        let fields = |id: CellId| match &m.cells[id as usize].shape {
            Some(Shape::Record(f)) => (0..f.len()).map(Some).collect(),
            _ => vec![None],
        };
        match show {
            Some(names) => {
                for n in names {
                    let n = n.trim();
                    let (id, field) = shown_cell(m, n, "--show")?;
                    let base = m.cells[id as usize].name.as_str();
                    match (field, &m.cells[id as usize].shape) {
                        (None, _) => fields(id).into_iter().for_each(|f| add(id, f)),
                        (Some(f), Some(Shape::Record(fs))) => match fs.iter().position(|x| x.0 == f) {
                            Some(k) => add(id, Some(k)),
                            None => {
                                let all: Vec<&str> = fs.iter().map(|x| x.0).collect();
                                return Err(plan_error(format!("--show: `{base}` has no field `{f}`"))
                                    .with_hint(format!("its fields are: {}", all.join(", "))));
                            }
                        },
                        (Some(f), _) => {
                            return Err(plan_error(format!(
                                "--show: `{base}` is a single value with no field `{f}`"
                            )))
                        }
                    }
                }
            }
            None => {
                for (id, c) in m.defs() {
                    if c.error.is_none() && !c.input {
                        fields(id).into_iter().for_each(|f| add(id, f));
                    }
                }
            }
        }
        let mut plan = Plan {
            model,
            headers: headers.to_vec(),
            columns,
            shown,
            form,
            digits: None,
            spread: None,
        };
        plan.fix_constants();
        Ok(plan)
    }

    /// Write values with `digits` significant digits (`None`: as many as
    /// it takes to read each back to the same bits, the default).
    pub fn with_digits(mut self, digits: Option<usize>) -> Plan {
        self.digits = digits.map(|d| d.clamp(1, 17));
        self.fix_constants();
        self
    }

    /// Format once the shown values that no column of the cases reaches.
    fn fix_constants(&mut self) {
        let m = &*self.model;
        let mut varies = vec![false; m.cells.len()];
        for c in &self.columns {
            varies[c.cell as usize] = true;
        }
        for &id in &m.order {
            if m.cells[id as usize].deps.iter().any(|&d| varies[d as usize]) {
                varies[id as usize] = true;
            }
        }
        let prog = &m.program;
        let mut slots = prog.init.clone();
        eval::run(&prog.code, prog, &mut slots);
        let mut num = zmij::Buffer::new();
        let mut fixed = Vec::new();
        for s in &self.shown {
            let z = slots[s.slot as usize];
            let nan = z.re.is_nan() || z.im.is_nan();
            fixed.push((!varies[s.cell as usize] && !nan).then(|| {
                let mut text = Vec::new();
                self.write_value(s, z, &mut text, &mut num);
                text
            }));
        }
        for (s, f) in self.shown.iter_mut().zip(fixed) {
            s.fixed = f;
        }
    }

    /// The header row of the results: the case's columns, then the shown
    /// values with their units.
    pub fn out_header(&self) -> Vec<String> {
        let mut h: Vec<String> = self.headers.clone();
        let with = |name: String, unit: &str| {
            if unit.is_empty() {
                name
            } else {
                format!("{name} [{unit}]")
            }
        };
        let spread = self.spread.as_ref().map(|s| s.header()).unwrap_or_default();
        for s in &self.shown {
            if s.real {
                h.push(with(s.label.clone(), &s.unit));
                continue;
            }
            match s.form {
                ComplexForm::Rect | ComplexForm::Both => {
                    h.push(with(format!("{}.re", s.label), &s.unit));
                    h.push(with(format!("{}.im", s.label), &s.unit));
                }
                ComplexForm::Polar => {
                    h.push(with(format!("{}.mag", s.label), &s.unit));
                    h.push(with(format!("{}.ang", s.label), "°"));
                }
            }
        }
        h.extend(spread);
        h
    }

    fn n_out_fields(&self) -> usize {
        self.shown.iter().map(|s| if s.real { 1 } else { 2 }).sum::<usize>()
            + self.spread.as_ref().map_or(0, |s| s.n_fields())
    }
}

/// The factor a value of quantity `q` is divided by when written, and the
/// unit named in its header: its display unit, degrees for an angle, % for
/// a percentage (12 % is written 12 under `[%]`, not 0.12), else coherent
/// SI units.
pub fn written_in(q: Quantity, display: Option<&Unit>) -> (f64, String) {
    match display {
        Some(u) => (u.factor, u.symbol.clone()),
        None if q.kind == Kind::Angle => (DEG, "°".to_string()),
        None if q.kind == Kind::Percent => (0.01, "%".to_string()),
        None => (1.0, base_symbol(q)),
    }
}

/// An input that is a real number by its nature, so a cases column
/// setting it keeps what is built from it real (one output column) and a
/// value with an imaginary part is a bad row: a real or reactive power
/// (P = Re S, Q = Im S), a frequency, an angle, a level in dB, a length, an
/// area, a mass, a time, an inductance or a capacitance (element values).
/// An impedance, a voltage or a plain factor may be complex (a phasor).
pub fn real_by_nature(q: Quantity) -> bool {
    matches!(
        q.kind,
        Kind::RealPower | Kind::ReactivePower | Kind::Hertz | Kind::RadPerSec | Kind::Angle | Kind::Decibel
    ) || [
        Dim::LENGTH,
        Dim::AREA,
        Dim::MASS,
        Dim::TIME,
        Dim::INDUCTANCE,
        Dim::CAPACITANCE,
    ]
    .contains(&q.dim)
}

/// Which slots hold a real value whatever the cases: constants with no
/// imaginary part, inputs the cases do not set, and results of operations
/// that keep reals real (any imaginary part they could get is NaN, which
/// fails the row anyway).
pub fn real_slots(prog: &Program, set_by_cases: &[u32]) -> Vec<bool> {
    let mut real: Vec<bool> = prog.init.iter().map(|z| z.im == 0.0).collect();
    for &s in set_by_cases {
        real[s as usize] = false;
    }
    for ins in &prog.code {
        let a = || real[ins.a as usize];
        let ab = || real[ins.a as usize] && real[ins.b as usize];
        let r = match ins.op {
            Op::Re | Op::Im | Op::Abs | Op::Arg | Op::Atan2 | Op::Search(_) => true,
            Op::Lt | Op::Le | Op::Gt | Op::Ge => true,
            Op::Copy | Op::Neg | Op::Conj | Op::Recip | Op::PowI | Op::Exp | Op::Sin | Op::Cos | Op::Tan | Op::Atan => {
                a()
            }
            Op::Add | Op::Sub | Op::Mul | Op::Div | Op::Par | Op::Min | Op::Max => ab(),
            Op::Select => real[ins.b as usize] && real[ins.b as usize + 1],
            Op::Sqrt | Op::Ln | Op::Log10 | Op::Asin | Op::Acos | Op::Pow | Op::Polar => false,
            Op::Network(_) => {
                let width = prog.call_args[ins.a as usize];
                for k in 0..width {
                    real[(ins.dst + k) as usize] = false;
                }
                continue;
            }
            Op::Call(fid) => {
                // Real only when the function declares it (pf, s_parts,
                // q_pfc, …), never from the values of one run.
                let r = crate::funcs::library()[fid as usize].real_result;
                let width = prog.call_args[ins.a as usize];
                for k in 0..width {
                    real[(ins.dst + k) as usize] = r;
                }
                continue;
            }
        };
        real[ins.dst as usize] = r;
    }
    real
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn headers_split_name_and_unit() {
        assert_eq!(split_header("Vll [kV]").unwrap(), ("Vll", Some("kV")));
        assert_eq!(split_header("\u{FEFF}R").unwrap(), ("R", None));
        assert!(split_header("Vll [kV").is_err());
    }
}
