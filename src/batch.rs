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

use std::collections::{BTreeMap, HashMap};
use std::io::{self, Read, Write};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{mpsc, Arc};

use num_complex::Complex64 as C64;

mod cases;
pub use cases::{Cases, Row, Rows};

use crate::diag::{did_you_mean, Diagnostic, ErrorCode};
use crate::engine::block::{Block, LANES};
use crate::engine::ops::{self, Op};
use crate::engine::program::Program;
use crate::engine::{eval, CellId, Model, Role};
use crate::funcs::Shape;
use crate::sheet::Sheet;
use crate::syntax::ast::{ExprKind, StmtKind};
use crate::units::format::base_symbol;
use crate::units::{parse_unit_expr, Kind, Quantity, Unit, UnitError};

/// How a complex value is written: two columns either way.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ComplexForm {
    /// Real and imaginary parts.
    Rect,
    /// Magnitude and angle in degrees.
    Polar,
}

/// A column of the cases table: the input it sets.
#[derive(Clone, Debug)]
pub struct CaseColumn {
    /// The header as written.
    pub header: String,
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
}

/// Columns in, columns out, and the compiled sheet.
#[derive(Clone, Debug)]
pub struct Plan {
    pub model: Arc<Model>,
    pub columns: Vec<CaseColumn>,
    pub shown: Vec<Shown>,
    pub form: ComplexForm,
}

const DEG: f64 = std::f64::consts::PI / 180.0;

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
    None
}

impl Plan {
    /// Match the cases table's `headers` to the sheet's inputs and choose
    /// the shown values (`show`, or every computed cell).
    pub fn new(
        model: Arc<Model>,
        headers: &[String],
        show: Option<&[String]>,
        form: ComplexForm,
    ) -> Result<Plan, Diagnostic> {
        let m = &*model;
        let inputs: Vec<&str> = m.inputs().map(|(_, c)| c.name.as_str()).collect();
        let list = || {
            if inputs.is_empty() {
                "the sheet has no inputs (every cell uses another cell)".to_string()
            } else {
                format!("the sheet's inputs are: {}", inputs.join(", "))
            }
        };
        let mut columns: Vec<CaseColumn> = Vec::new();
        for h in headers {
            let (name, unit_text) = split_header(h)?;
            if name.is_empty() {
                return Err(
                    plan_error(format!("a column of the cases table has no name (header `{h}`)")).with_hint(list()),
                );
            }
            let Some(id) = m.id(name) else {
                let mut d = plan_error(format!("column `{name}` names no input of the sheet"));
                if let Some(s) = did_you_mean(name, inputs.iter().copied()) {
                    d = d.with_hint(format!("did you mean `{s}`? {}", list()));
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
                .with_hint(list()));
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
                        plan_error(format!("column `{h}`: {}", unit_error_text(t, e)))
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
                name: name.to_string(),
                cell: id,
                slot: c.slot,
                want,
                unit,
                plain_factor,
            });
        }

        let set_slots: Vec<u32> = columns.iter().map(|c| c.slot).collect();
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
            let (scale, unit) = match display {
                Some(u) => (u.factor, u.symbol.clone()),
                None if q.kind == Kind::Angle => (DEG, "°".to_string()),
                None => (1.0, base_symbol(q)),
            };
            shown.push(Shown {
                label,
                cell: id,
                slot,
                real: real[slot as usize],
                scale,
                unit,
                fixed: None,
            });
        };
        let fields = |id: CellId| match &m.cells[id as usize].shape {
            Some(Shape::Record(f)) => (0..f.len()).map(Some).collect(),
            _ => vec![None],
        };
        match show {
            Some(names) => {
                for n in names {
                    let n = n.trim();
                    let (base, field) = match m.id(n) {
                        Some(_) => (n, None),
                        None => match n.split_once('.') {
                            Some((b, f)) => (b, Some(f)),
                            None => (n, None),
                        },
                    };
                    let id = match m.id(base) {
                        Some(id) if m.cells[id as usize].role == Role::Def => id,
                        _ => {
                            let names = m.defs().map(|(_, c)| c.name.as_str());
                            let mut d = plan_error(format!("--show: the sheet has no cell `{n}`"));
                            if let Some(s) = did_you_mean(n, names) {
                                d = d.with_hint(format!("did you mean `{s}`?"));
                            }
                            return Err(d);
                        }
                    };
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
            columns,
            shown,
            form,
        };
        plan.fix_constants();
        Ok(plan)
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
        let mut h: Vec<String> = self.columns.iter().map(|c| c.header.clone()).collect();
        let with = |name: String, unit: &str| {
            if unit.is_empty() {
                name
            } else {
                format!("{name} [{unit}]")
            }
        };
        for s in &self.shown {
            if s.real {
                h.push(with(s.label.clone(), &s.unit));
                continue;
            }
            match self.form {
                ComplexForm::Rect => {
                    h.push(with(format!("{}.re", s.label), &s.unit));
                    h.push(with(format!("{}.im", s.label), &s.unit));
                }
                ComplexForm::Polar => {
                    h.push(with(format!("{}.mag", s.label), &s.unit));
                    h.push(with(format!("{}.ang", s.label), "°"));
                }
            }
        }
        h
    }

    fn n_out_fields(&self) -> usize {
        self.shown.iter().map(|s| if s.real { 1 } else { 2 }).sum()
    }
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
            Op::Sqrt | Op::Ln | Op::Log10 | Op::Asin | Op::Acos | Op::Pow | Op::Polar => false,
            Op::Call(_) => {
                let width = prog.call_args[ins.a as usize];
                for k in 0..width {
                    real[(ins.dst + k) as usize] = false;
                }
                continue;
            }
        };
        real[ins.dst as usize] = r;
    }
    real
}

// ---------------------------------------------------------------- values

/// Reads case values with the sheet language's rules. Plain numbers and
/// `number unit` take a fast path; anything else (`6+j10`, `277 ∠ -30°`,
/// `4.7k`) is compiled as a one-line sheet. Results of the slow path are
/// remembered, so a column of repeated values costs one compile.
#[derive(Default)]
pub struct ValueReader {
    units: HashMap<String, Option<Unit>>,
    slow: HashMap<(usize, Vec<u8>), Result<C64, String>>,
}

const SLOW_CACHE_MAX: usize = 4096;

/// `[+-]?(digits[.digits*] | .digits)([eE][+-]?digits)?`: the language's
/// number literal with one optional sign. Returns (negative, digits part).
fn plain_number(s: &str) -> Option<(bool, &str)> {
    let (neg, digits) = plain_number_bytes(s.as_bytes())?;
    // The digits part is ASCII and ends where `s` ends.
    Some((neg, &s[s.len() - digits.len()..]))
}

/// [`plain_number`] on bytes.
fn plain_number_bytes(s: &[u8]) -> Option<(bool, &[u8])> {
    let (neg, b) = match s.first()? {
        b'-' => (true, &s[1..]),
        b'+' => (false, &s[1..]),
        _ => (false, s),
    };
    let mut i = 0;
    let digits = |i: &mut usize| {
        let st = *i;
        while *i < b.len() && b[*i].is_ascii_digit() {
            *i += 1;
        }
        *i - st
    };
    let lead = digits(&mut i);
    if i < b.len() && b[i] == b'.' {
        i += 1;
        let frac = digits(&mut i);
        if lead == 0 && frac == 0 {
            return None;
        }
    } else if lead == 0 {
        return None;
    }
    if i < b.len() && (b[i] == b'e' || b[i] == b'E') {
        i += 1;
        if i < b.len() && (b[i] == b'+' || b[i] == b'-') {
            i += 1;
        }
        if digits(&mut i) == 0 {
            return None;
        }
    }
    (i == b.len()).then_some((neg, b))
}

/// A plain decimal in one pass, `[+-]?(digits[.digits*] | .digits)`
/// with no exponent: (negative, magnitude), the magnitude bit for bit what
/// `str::parse::<f64>` gives; `None` for anything else, or where this fast
/// reading does not apply (the general path then reads it).
///
/// Clinger's fast path: when the digits, read as one integer `m`, are at
/// most 2^53 and there are at most 22 after the point, both `m` and
/// `10^frac` are exact doubles, so one division, rounded once, is the
/// correctly rounded value. Case tables are mostly such numbers (`13.8`,
/// `0.477742181`).
fn plain_decimal(s: &[u8]) -> Option<(bool, f64)> {
    const POW10: [f64; 23] = [
        1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19,
        1e20, 1e21, 1e22,
    ];
    let (neg, b) = match s.first()? {
        b'-' => (true, &s[1..]),
        b'+' => (false, &s[1..]),
        _ => (false, s),
    };
    let mut m: u64 = 0;
    let mut i = 0;
    while i < b.len() && b[i].is_ascii_digit() {
        m = m.wrapping_mul(10).wrapping_add(u64::from(b[i] - b'0'));
        i += 1;
    }
    let int_digits = i;
    let mut frac = 0;
    if i < b.len() && b[i] == b'.' {
        i += 1;
        let start = i;
        while i < b.len() && b[i].is_ascii_digit() {
            m = m.wrapping_mul(10).wrapping_add(u64::from(b[i] - b'0'));
            i += 1;
        }
        frac = i - start;
    }
    // At most 19 digits in all, so `m` did not wrap (10^19 < 2^64).
    if i != b.len() || int_digits + frac == 0 || int_digits + frac > 19 || frac > 22 || m > 1 << 53 {
        return None;
    }
    Some((neg, m as f64 / POW10[frac]))
}

/// Does the digits part of a plain number have a non-zero digit before its
/// exponent? (`0.0e5` is zero; `1e-400` is not, though it reads as 0.)
fn mantissa_nonzero(digits: &[u8]) -> bool {
    digits
        .iter()
        .take_while(|&&b| b != b'e' && b != b'E')
        .any(|b| (b'1'..=b'9').contains(b))
}

/// A plain number `v` (its digits part `digits`) times a unit's `factor`,
/// in coherent SI units, when that is a double: not overflowing
/// (`1e308 kV`) and not a non-zero number that underflows to zero
/// (`1e-400`), the same rule as for numbers in a sheet.
/// `nonzero`: the literal's mantissa has a non-zero digit.
fn si_value(v: f64, factor: f64, nonzero: bool) -> Result<f64, &'static str> {
    let si = v * factor;
    if !si.is_finite() {
        Err("beyond the range of a double (about 1.8e308) in SI units")
    } else if si == 0.0 && nonzero {
        Err("below the smallest double (about 5e-324) in SI units; it would read as 0")
    } else {
        Ok(si)
    }
}

impl ValueReader {
    /// The value of `text` for column `k` of the plan, in coherent SI
    /// units, or the reason it cannot set that input.
    pub fn read(&mut self, plan: &Plan, k: usize, bytes: &[u8]) -> Result<C64, String> {
        let col = &plan.columns[k];
        // The common case, read in one pass over the bytes: a plain number
        // that this column accepts. Anything else (or a number beyond the
        // range of a double) takes the general path below, which also
        // words the errors.
        if let (Some(factor), Some((neg, v))) = (col.plain_factor, plain_decimal(bytes.trim_ascii())) {
            // Read exactly, `v` is 0 only for a zero mantissa.
            if let Ok(si) = si_value(v, factor, v != 0.0) {
                let z = C64::new(si, 0.0);
                return Ok(if neg { -z } else { z });
            }
        }
        let Ok(text) = std::str::from_utf8(bytes) else {
            return Err("the value is not UTF-8 text".into());
        };
        let text = text.trim();
        if text.is_empty() {
            return Err("no value".into());
        }
        // A plain number: the header's unit applies, as in `13.8 kV`.
        if let Some((neg, digits)) = plain_number(text) {
            let v: f64 = digits.parse().map_err(|_| format!("`{text}` is not a number"))?;
            let (factor, q) = match &col.unit {
                Some(u) => (u.factor, u.q),
                None => (1.0, Quantity::PLAIN),
            };
            let si =
                si_value(v, factor, mantissa_nonzero(digits.as_bytes())).map_err(|why| format!("`{text}` is {why}"))?;
            let z = C64::new(si, 0.0);
            return finish(col, text, if neg { -z } else { z }, q);
        }
        // `number unit`, with the unit read once per distinct spelling.
        if let Some((num, unit)) = text.split_once([' ', '\t']) {
            let unit = unit.trim();
            if let (Some((neg, digits)), false) = (plain_number(num), unit.contains(char::is_whitespace)) {
                if let Some(u) = self.unit(unit) {
                    let v: f64 = digits.parse().map_err(|_| format!("`{text}` is not a number"))?;
                    // Out of range: the sheet language's own reading
                    // (below) words the error.
                    if let Ok(si) = si_value(v, u.factor, mantissa_nonzero(digits.as_bytes())) {
                        let z = C64::new(si, 0.0);
                        return finish(col, text, if neg { -z } else { z }, u.q);
                    }
                }
            }
        }
        let key = (k, bytes.to_vec());
        if let Some(r) = self.slow.get(&key) {
            return r.clone();
        }
        let r = slow_value(col, text);
        if self.slow.len() >= SLOW_CACHE_MAX {
            self.slow.clear();
        }
        self.slow.insert(key, r.clone());
        r
    }

    /// The unit `text` as the language reads it after a number and a space,
    /// or `None` when `1 text` is not simply a number with a unit.
    fn unit(&mut self, text: &str) -> Option<Unit> {
        if let Some(u) = self.units.get(text) {
            return u.clone();
        }
        let line = format!("x = 1 {text}");
        let sheet = Sheet::from_text("value", &line);
        let u = match sheet.stmts.as_slice() {
            [s] if sheet.errors.is_empty() => match &s.kind {
                StmtKind::Def(d) if d.display.is_none() => match &d.expr.kind {
                    ExprKind::Number {
                        value,
                        imag: false,
                        unit: Some(u),
                    } if *value == 1.0 => Some(u.unit.clone()),
                    _ => None,
                },
                _ => None,
            },
            _ => None,
        };
        if self.units.len() < SLOW_CACHE_MAX {
            self.units.insert(text.to_string(), u.clone());
        }
        u
    }
}

fn finish(col: &CaseColumn, text: &str, z: C64, q: Quantity) -> Result<C64, String> {
    if let Some(why) = quantity_mismatch(&col.name, col.want, q) {
        return Err(format!("`{text}` is {why}"));
    }
    if z.re.is_nan() || z.im.is_nan() {
        return Err(format!("`{text}` is not a number (NaN)"));
    }
    Ok(z)
}

/// Compile `x = text` and take its value: the language's full rules.
fn slow_value(col: &CaseColumn, text: &str) -> Result<C64, String> {
    if text.contains(['\n', '\r', '[', '@']) {
        return Err(format!("`{}` is not a value", text.escape_debug()));
    }
    let sheet = Sheet::from_text("value", &format!("x = {text}"));
    let model = crate::engine::compile(&sheet);
    if let Some(d) = model.diagnostics.iter().find(|d| d.is_error()) {
        let mut s = format!("`{text}`: {}", d.message);
        if let Some(h) = &d.hint {
            s.push_str(&format!(" (hint: {h})"));
        }
        return Err(s);
    }
    let id = model.id("x").ok_or_else(|| format!("`{text}` is not a value"))?;
    let cell = &model.cells[id as usize];
    let Some(q) = cell.quantity() else {
        return Err(format!("`{text}` has several fields; a case sets a single value"));
    };
    let mut slots = model.program.init.clone();
    eval::run(&model.program.code, &model.program, &mut slots);
    let z = slots[cell.slot as usize];
    match (&col.unit, q.is_plain_number()) {
        // `(6+j10)` in an `Z [Ω]` column is `(6+j10) Ω`.
        (Some(u), true) => finish(col, text, ops::apply2(Op::Mul, z, C64::new(u.factor, 0.0)), u.q),
        _ => finish(col, text, z, q),
    }
}

// ---------------------------------------------------------------- rows

/// A row that could not be computed.
#[derive(Clone, Debug, PartialEq)]
pub struct RowError {
    /// 1-based number of the case (the first row after the header is 1).
    pub case: u64,
    /// Line in the cases file where the row starts (the header is line 1).
    pub line: u64,
    /// The column (or shown cell) at fault; empty for the row as a whole.
    pub column: String,
    /// The value as written, where one is at fault.
    pub value: String,
    pub reason: String,
}

/// Scratch space of one worker: a block of slots and the value cache.
pub struct Worker {
    block: Block,
    reader: ValueReader,
}

impl Worker {
    pub fn new(plan: &Plan) -> Worker {
        Worker {
            block: Block::new(&plan.model.program),
            reader: ValueReader::default(),
        }
    }
}

/// Append a CSV field, quoted when it must be.
fn push_field(out: &mut Vec<u8>, f: &[u8]) {
    if f.iter().any(|&b| matches!(b, b',' | b'"' | b'\n' | b'\r')) {
        out.push(b'"');
        for &b in f {
            if b == b'"' {
                out.push(b'"');
            }
            out.push(b);
        }
        out.push(b'"');
    } else {
        push_short(out, f);
    }
}

/// Append `s` to `out`. Numbers and most fields are a few bytes long, and
/// for those two overlapping fixed-size copies are several times cheaper
/// than a call to the C library's `memcpy`, which showed as an eighth of
/// a batch run's time.
#[inline(always)]
fn push_short(out: &mut Vec<u8>, s: &[u8]) {
    out.reserve(s.len());
    // SAFETY: room for `s` was just reserved.
    unsafe { put_short(out, s) }
}

/// [`push_short`] into room already reserved.
///
/// # Safety
/// `out` must have room for `s.len()` more bytes.
#[inline(always)]
unsafe fn put_short(out: &mut Vec<u8>, s: &[u8]) {
    let n = s.len();
    debug_assert!(out.capacity() - out.len() >= n);
    if !(1..=32).contains(&n) {
        out.extend_from_slice(s);
        return;
    }
    // SAFETY: the caller made room for `n` more bytes after `len`; every
    // copy reads inside `s` (n >= 1, and each copy of k <= n bytes starts
    // at 0 or at n - k) and writes inside that room, and as k <= n <= 2k
    // the two copies cover all `n` bytes before `set_len` exposes them.
    unsafe {
        let dst = out.as_mut_ptr().add(out.len());
        let src = s.as_ptr();
        // Each arm copies a constant size, so no call is made.
        let two = |k: usize| {
            debug_assert!(k <= n && n <= 2 * k);
            std::ptr::copy_nonoverlapping(src, dst, k);
            std::ptr::copy_nonoverlapping(src.add(n - k), dst.add(n - k), k);
        };
        if n >= 16 {
            two(16)
        } else if n >= 8 {
            two(8)
        } else if n >= 4 {
            two(4)
        } else if n >= 2 {
            two(2)
        } else {
            two(1)
        }
        out.set_len(out.len() + n);
    }
}

/// A number written so it reads back to the same bits.
fn push_num(out: &mut Vec<u8>, x: f64, buf: &mut zmij::Buffer) {
    push_short(out, num_text(x, buf));
}

/// The text of `x` that reads back to the same bits: in `buf` when `x` is
/// finite; `NaN`, `inf` or `-inf` otherwise, as `str::parse` reads them.
#[inline(always)]
fn num_text(x: f64, buf: &mut zmij::Buffer) -> &[u8] {
    if x.is_finite() {
        buf.format_finite(x).as_bytes()
    } else if x.is_nan() {
        b"NaN"
    } else if x > 0.0 {
        b"inf"
    } else {
        b"-inf"
    }
}

/// Shown values whose numbers are converted together (see
/// `Plan::write_shown`); two buffers of 24 bytes each on the stack.
const SHOWN_GROUP: usize = 32;

/// A whole CSV record, fields quoted as needed.
pub fn csv_line<S: AsRef<[u8]>>(fields: &[S]) -> Vec<u8> {
    let mut out = Vec::new();
    for (i, f) in fields.iter().enumerate() {
        if i > 0 {
            out.push(b',');
        }
        push_field(&mut out, f.as_ref());
    }
    out.push(b'\n');
    out
}

impl Plan {
    /// Evaluate `rows` (cases numbered from `first_case`), appending result
    /// lines to `out` and bad rows to `errors`.
    pub fn eval_rows(
        &self,
        w: &mut Worker,
        rows: &Rows,
        first_case: u64,
        out: &mut Vec<u8>,
        errors: &mut Vec<RowError>,
    ) {
        let prog = &self.model.program;
        let ncols = self.columns.len();
        for (g, first) in (0..rows.len()).step_by(LANES).enumerate() {
            let group = || (first..rows.len().min(first + LANES)).map(|i| rows.row(i)).enumerate();
            let mut ok = [true; LANES];
            for (lane, rec) in group() {
                let case = first_case + (g * LANES + lane) as u64 + 1;
                let line = rec.line();
                let mut bad = |column: &str, value: &[u8], reason: String| {
                    errors.push(RowError {
                        case,
                        line,
                        column: column.to_string(),
                        value: String::from_utf8_lossy(value).into_owned(),
                        reason,
                    })
                };
                if rec.len() != ncols {
                    ok[lane] = false;
                    bad(
                        "",
                        b"",
                        format!("the row has {} fields; the header has {ncols}", rec.len()),
                    );
                    continue;
                }
                for (k, col) in self.columns.iter().enumerate() {
                    let text = rec.get(k).unwrap_or_default();
                    match w.reader.read(self, k, text) {
                        Ok(z) => w.block.set(col.slot, lane, z),
                        Err(reason) => {
                            ok[lane] = false;
                            bad(&col.header, text, reason);
                        }
                    }
                }
            }
            w.block.run(&prog.code, prog);
            let suspect = self.suspect_lanes(&w.block);
            for (lane, rec) in group() {
                if ok[lane] && suspect & (1 << lane) != 0 {
                    if let Some(e) = self.nan_in_lane(&w.block, lane) {
                        ok[lane] = false;
                        let case = first_case + (g * LANES + lane) as u64 + 1;
                        errors.push(RowError {
                            case,
                            line: rec.line(),
                            column: e.0,
                            value: String::new(),
                            reason: e.1,
                        });
                    }
                }
                // The case's own fields: as written, where that is how
                // they are written back.
                match rec.plain_text() {
                    Some(text) if rec.len() == ncols => push_short(out, text),
                    _ => {
                        for k in 0..ncols {
                            if k > 0 {
                                out.push(b',');
                            }
                            if let Some(f) = rec.get(k) {
                                push_field(out, f);
                            }
                        }
                    }
                }
                if !ok[lane] {
                    for _ in 0..self.n_out_fields() {
                        out.push(b',');
                    }
                    out.push(b'\n');
                    continue;
                }
                self.write_shown(&w.block, lane, ncols > 0, out);
                out.push(b'\n');
            }
        }
        // Errors in case order (value errors of a block come before its NaNs).
        errors.sort_by_key(|e| e.case);
    }

    /// One shown value: one number, or two joined by a comma.
    fn write_value(&self, s: &Shown, z: C64, out: &mut Vec<u8>, num: &mut zmij::Buffer) {
        let (a, b) = self.numbers(s, z);
        push_num(out, a, num);
        if let Some(b) = b {
            out.push(b',');
            push_num(out, b, num);
        }
    }

    /// The number, or the two numbers, written for the shown value `z`.
    #[inline(always)]
    fn numbers(&self, s: &Shown, z: C64) -> (f64, Option<f64>) {
        // x / 1 is x: skip the division for values shown in SI units.
        let scaled = |x: f64| if s.scale == 1.0 { x } else { x / s.scale };
        if s.real {
            return (scaled(z.re), None);
        }
        match self.form {
            ComplexForm::Rect => (scaled(z.re), Some(scaled(z.im))),
            ComplexForm::Polar => (scaled(ops::abs(z)), Some(z.im.atan2(z.re).to_degrees())),
        }
    }

    /// The shown values of `lane`, each after a comma when `lead` or when
    /// not the first.
    ///
    /// The numbers of up to [`SHOWN_GROUP`] shown values are all
    /// converted, each into its own buffer, before any is copied out.
    /// Copied out straight after its conversion, each number's text was
    /// read back while the stores that wrote it were still in flight, and
    /// the copy waited for them; converted apart, the conversions do not
    /// wait on one another and the copies come after the stores have
    /// landed. Measured in turns on one thread pinned to one core (the
    /// steadiest measure on this machine): −5% for a whole batch run.
    fn write_shown(&self, block: &Block, lane: usize, lead: bool, out: &mut Vec<u8>) {
        let mut first = !lead;
        for group in self.shown.chunks(SHOWN_GROUP) {
            let mut bufs: [zmij::Buffer; 2 * SHOWN_GROUP] = std::array::from_fn(|_| zmij::Buffer::new());
            let mut texts: [&[u8]; 2 * SHOWN_GROUP] = [b""; 2 * SHOWN_GROUP];
            let mut n = 0;
            // Two buffers for each shown value of the group.
            for (s, pair) in group.iter().zip(bufs.chunks_exact_mut(2)) {
                if let Some(text) = &s.fixed {
                    texts[n] = text;
                    n += 1;
                    continue;
                }
                let (ba, bb) = pair.split_at_mut(1);
                let (a, b) = self.numbers(s, block.get(s.slot, lane));
                texts[n] = num_text(a, &mut ba[0]);
                n += 1;
                if let Some(b) = b {
                    texts[n] = num_text(b, &mut bb[0]);
                    n += 1;
                }
            }
            let texts = &texts[..n];
            out.reserve(texts.iter().map(|t| t.len() + 1).sum());
            for t in texts {
                // SAFETY: room for every text and a comma before each was
                // reserved above.
                unsafe {
                    if !first {
                        put_short(out, b",");
                    }
                    put_short(out, t);
                }
                first = false;
            }
        }
    }

    /// A bit for each lane of the block where a shown value is NaN or has
    /// an imaginary part where none was expected; [`Plan::nan_in_lane`]
    /// tells which and why. One pass over each shown slot, all lanes at once.
    fn suspect_lanes(&self, b: &Block) -> u64 {
        const _: () = assert!(LANES <= 64);
        let mut bad = [false; LANES];
        for s in self.shown.iter().filter(|s| s.fixed.is_none()) {
            let (re, im) = b.lanes(s.slot);
            for l in 0..LANES {
                bad[l] |= re[l].is_nan() | im[l].is_nan() | (s.real & (im[l] != 0.0));
            }
        }
        bad.iter().enumerate().fold(0, |m, (l, &x)| m | (u64::from(x) << l))
    }

    /// The first shown value of `lane` that is NaN, with where the NaN was
    /// born (found by re-running the case one cell at a time).
    fn nan_in_lane(&self, b: &Block, lane: usize) -> Option<(String, String)> {
        let s = self.shown.iter().find(|s| {
            let z = b.get(s.slot, lane);
            z.re.is_nan() || z.im.is_nan() || (s.real && z.im != 0.0)
        })?;
        let z = b.get(s.slot, lane);
        if !z.re.is_nan() && !z.im.is_nan() {
            return Some((
                s.label.clone(),
                format!("`{}` has an imaginary part where none was expected", s.label),
            ));
        }
        let m = &*self.model;
        let prog = &m.program;
        let mut slots = prog.init.clone();
        for c in &self.columns {
            slots[c.slot as usize] = b.get(c.slot, lane);
        }
        eval::run(&prog.code, prog, &mut slots);
        let nan = |id: CellId| {
            let c = &m.cells[id as usize];
            slots[c.slot as usize..(c.slot + c.width) as usize]
                .iter()
                .any(|z| z.re.is_nan() || z.im.is_nan())
        };
        let origin = m.order.iter().copied().find(|&id| {
            m.cells[id as usize].role == Role::Def && nan(id) && !m.cells[id as usize].deps.iter().any(|&d| nan(d))
        });
        let at = match origin {
            Some(o) if o != s.cell => format!("; it starts at `{}`", m.cells[o as usize].name),
            _ => String::new(),
        };
        Some((
            s.label.clone(),
            format!(
                "`{}` is NaN (not a number){at}: look for 0/0, ∞ − ∞ or 0·∞ in this case",
                s.label
            ),
        ))
    }
}

// ---------------------------------------------------------------- streaming

/// Options of a streaming run.
#[derive(Clone, Copy, Debug)]
pub struct StreamOptions {
    /// Stop at the first bad row.
    pub strict: bool,
    /// Rows per chunk (a multiple of the block size works best).
    pub chunk_rows: usize,
    /// Chunks in flight at once; bounds the memory used.
    pub in_flight: usize,
}

impl Default for StreamOptions {
    fn default() -> StreamOptions {
        StreamOptions {
            strict: false,
            chunk_rows: 1024,
            in_flight: 4 * rayon::current_num_threads().max(1),
        }
    }
}

/// What a streaming run did.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Summary {
    /// Cases read (rows after the header).
    pub cases: u64,
    /// Rows that could not be computed.
    pub bad_rows: u64,
    /// `--strict` stopped the run at a bad row.
    pub stopped: bool,
}

/// A run that could not go on.
#[derive(Debug)]
pub enum StreamError {
    Read(io::Error),
    Write(io::Error),
    Internal(String),
}

impl std::fmt::Display for StreamError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            StreamError::Read(e) => write!(f, "reading the cases: {e}"),
            StreamError::Write(e) => write!(f, "writing the results: {e}"),
            StreamError::Internal(e) => write!(f, "internal error: {e}"),
        }
    }
}

struct Chunk {
    seq: u64,
    first_case: u64,
    rows: Rows,
    /// Byte offset in the cases file after this chunk.
    end_byte: u64,
    out: Vec<u8>,
    errors: Vec<RowError>,
    worker: Option<Worker>,
}

enum Msg {
    Done(Box<Chunk>),
    End(u64),
    Failed(StreamError),
}

/// The memory one chunk holds at most, for the bound stated in docs: rows,
/// output and a block of slots. Everything else is fixed by the sheet.
pub fn chunks_in_flight(opts: &StreamOptions) -> usize {
    opts.in_flight.max(1)
}

/// Evaluate every row of `cases` (its header already read and planned) and
/// write the result lines to `out` in input order. Bad rows go to
/// `on_errors` in order; `progress(cases_done, bytes_read)` is called after
/// each chunk is written.
pub fn run_stream<R: Read + Send + 'static>(
    plan: Arc<Plan>,
    cases: Cases<R>,
    out: &mut dyn Write,
    on_errors: &mut dyn FnMut(&[RowError]) -> io::Result<()>,
    progress: &mut dyn FnMut(u64, u64),
    opts: StreamOptions,
) -> Result<Summary, StreamError> {
    stream(plan, cases, Sink::Stream(out), on_errors, progress, opts)
}

/// [`run_stream`] into a file, the result lines starting at byte `start`:
/// the workers write finished chunks at their places themselves (one
/// worker at a time, taking every chunk placed meanwhile, while the others
/// go on computing) instead of handing them to a writing thread. The file then holds exactly what `run_stream`
/// would have written from `start` on (nothing is written after the last
/// line). On an error or a `--strict` stop the file holds a part of the
/// results, possibly with gaps: it is meant to be a temporary file that is
/// then discarded.
#[cfg(unix)]
pub fn run_stream_at<R: Read + Send + 'static>(
    plan: Arc<Plan>,
    cases: Cases<R>,
    file: std::fs::File,
    start: u64,
    on_errors: &mut dyn FnMut(&[RowError]) -> io::Result<()>,
    progress: &mut dyn FnMut(u64, u64),
    opts: StreamOptions,
) -> Result<Summary, StreamError> {
    let at = Arc::new(Placed {
        file,
        order: std::sync::Mutex::new(Order {
            next: 0,
            offset: start,
            parked: BTreeMap::new(),
            ready: Default::default(),
            writing: false,
        }),
    });
    stream(plan, cases, Sink::At(at), on_errors, progress, opts)
}

/// Where the result lines go.
enum Sink<'a> {
    /// Written in order by the calling thread.
    Stream(&'a mut dyn Write),
    /// Written at their offsets in a file by the workers.
    #[cfg(unix)]
    At(Arc<Placed>),
}

/// A file the workers write chunks into at their places.
#[cfg(unix)]
struct Placed {
    file: std::fs::File,
    order: std::sync::Mutex<Order>,
}

/// Which chunk gets the next place in the file, and where that is.
#[cfg(unix)]
struct Order {
    next: u64,
    offset: u64,
    /// Chunks done before the one in front of them: they wait here, and
    /// the worker that places their predecessor places them too.
    parked: BTreeMap<u64, Box<Chunk>>,
    /// Placed chunks not yet written, in file order.
    ready: std::collections::VecDeque<(Box<Chunk>, u64)>,
    /// A worker is writing `ready` out.
    writing: bool,
}

#[cfg(unix)]
impl Placed {
    /// Place `c` (and any parked chunks it lets through) and see them
    /// written; each written chunk is reported to `done`. One worker
    /// writes at a time, taking every chunk placed meanwhile; the others
    /// go back to computing rather than wait on the file (two writers of
    /// one file only queue behind the kernel's lock on it).
    fn place(&self, c: Box<Chunk>, done: &mpsc::Sender<Msg>) {
        use std::os::unix::fs::FileExt;
        let lock = || self.order.lock().unwrap_or_else(|e| e.into_inner());
        let mut o = lock();
        if c.seq != o.next {
            o.parked.insert(c.seq, c);
            return;
        }
        let mut c = c;
        loop {
            let at = o.offset;
            o.offset += c.out.len() as u64;
            o.next += 1;
            o.ready.push_back((c, at));
            let next = o.next;
            match o.parked.remove(&next) {
                Some(p) => c = p,
                None => break,
            }
        }
        if o.writing {
            return;
        }
        o.writing = true;
        while let Some((c, at)) = o.ready.pop_front() {
            drop(o);
            let _ = done.send(match self.file.write_all_at(&c.out, at) {
                Ok(()) => Msg::Done(c),
                Err(e) => Msg::Failed(StreamError::Write(e)),
            });
            o = lock();
        }
        o.writing = false;
    }
}

fn stream<R: Read + Send + 'static>(
    plan: Arc<Plan>,
    mut cases: Cases<R>,
    mut sink: Sink<'_>,
    on_errors: &mut dyn FnMut(&[RowError]) -> io::Result<()>,
    progress: &mut dyn FnMut(u64, u64),
    opts: StreamOptions,
) -> Result<Summary, StreamError> {
    #[cfg(unix)]
    let placed = match &sink {
        Sink::At(p) => Some(p.clone()),
        Sink::Stream(_) => None,
    };
    let (pool_tx, pool_rx) = mpsc::channel::<Chunk>();
    for _ in 0..chunks_in_flight(&opts) {
        let _ = pool_tx.send(Chunk {
            seq: 0,
            first_case: 0,
            rows: Rows::default(),
            end_byte: 0,
            out: Vec::new(),
            errors: Vec::new(),
            worker: None,
        });
    }
    let (done_tx, done_rx) = mpsc::channel::<Msg>();
    let stop = Arc::new(AtomicBool::new(false));
    let chunk_rows = opts.chunk_rows.max(1);

    let reader = {
        let stop = stop.clone();
        let plan = plan.clone();
        std::thread::spawn(move || {
            let mut seq = 0u64;
            let mut case = 0u64;
            loop {
                if stop.load(Ordering::Relaxed) {
                    return;
                }
                let Ok(mut chunk) = pool_rx.recv() else { return };
                chunk.seq = seq;
                chunk.first_case = case;
                if let Err(e) = cases.next_chunk(chunk_rows, &mut chunk.rows) {
                    let _ = done_tx.send(Msg::Failed(StreamError::Read(e)));
                    return;
                }
                chunk.end_byte = cases.byte();
                let eof = chunk.rows.is_empty();
                if !eof {
                    seq += 1;
                    case += chunk.rows.len() as u64;
                    let plan = plan.clone();
                    let done = done_tx.clone();
                    #[cfg(unix)]
                    let placed = placed.clone();
                    rayon::spawn(move || {
                        let r = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
                            let mut c = chunk;
                            c.out.clear();
                            c.errors.clear();
                            let mut w = c.worker.take().unwrap_or_else(|| Worker::new(&plan));
                            c.rows.split_fields();
                            plan.eval_rows(&mut w, &c.rows, c.first_case, &mut c.out, &mut c.errors);
                            c.worker = Some(w);
                            c
                        }));
                        let c = match r {
                            Ok(c) => Box::new(c),
                            Err(_) => {
                                let _ = done.send(Msg::Failed(StreamError::Internal("a worker panicked".into())));
                                return;
                            }
                        };
                        #[cfg(unix)]
                        if let Some(p) = &placed {
                            return p.place(c, &done);
                        }
                        let _ = done.send(Msg::Done(c));
                    });
                }
                if eof {
                    let _ = done_tx.send(Msg::End(seq));
                    return;
                }
            }
        })
    };

    let mut summary = Summary::default();
    let mut waiting: BTreeMap<u64, Chunk> = BTreeMap::new();
    let mut next = 0u64;
    let mut total: Option<u64> = None;
    let fail = |e: StreamError, stop: &AtomicBool| {
        stop.store(true, Ordering::Relaxed);
        Err(e)
    };
    while total != Some(next) {
        match done_rx.recv() {
            Ok(Msg::Done(c)) => {
                waiting.insert(c.seq, *c);
            }
            Ok(Msg::End(n)) => total = Some(n),
            Ok(Msg::Failed(e)) => return fail(e, &stop),
            Err(_) => return fail(StreamError::Internal("the reader stopped".into()), &stop),
        }
        while let Some(c) = waiting.remove(&next) {
            summary.cases += c.rows.len() as u64;
            if opts.strict && !c.errors.is_empty() {
                // Only the rows before the first bad one count as done.
                let first = c.errors[0].clone();
                summary.bad_rows = 1;
                summary.stopped = true;
                summary.cases = first.case;
                stop.store(true, Ordering::Relaxed);
                on_errors(&[first]).map_err(StreamError::Write)?;
                return Ok(summary);
            }
            if let Sink::Stream(out) = &mut sink {
                out.write_all(&c.out).map_err(StreamError::Write)?;
            }
            if !c.errors.is_empty() {
                let mut rows: Vec<u64> = c.errors.iter().map(|e| e.case).collect();
                rows.dedup();
                summary.bad_rows += rows.len() as u64;
                on_errors(&c.errors).map_err(StreamError::Write)?;
            }
            progress(summary.cases, c.end_byte);
            next += 1;
            let _ = pool_tx.send(c);
        }
    }
    let _ = reader.join();
    Ok(summary)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn plain_numbers_follow_the_grammar() {
        assert_eq!(plain_number("13.8"), Some((false, "13.8")));
        assert_eq!(plain_number("-1e3"), Some((true, "1e3")));
        assert_eq!(plain_number("+.5"), Some((false, ".5")));
        assert_eq!(plain_number("5."), Some((false, "5.")));
        for bad in ["", "-", ".", "e3", "1e", "inf", "NaN", "1.2.3", "4.7k", "--1", "1 V"] {
            assert_eq!(plain_number(bad), None, "{bad}");
        }
    }

    /// The fast path gives exactly what `str::parse` gives (the standard
    /// library's correctly rounded reading is the reference).
    #[test]
    fn plain_decimals_match_the_standard_library_bit_for_bit() {
        let mut rng = 0x9E37_79B9_7F4A_7C15u64;
        let mut next = |n: u64| {
            rng ^= rng << 13;
            rng ^= rng >> 7;
            rng ^= rng << 17;
            rng % n
        };
        let mut fast = 0;
        let fixed = [
            "0",
            "0.0",
            "000.000",
            ".5",
            "5.",
            "9007199254740992",
            "9007199254740993",
            "1e22",
            "1e23",
            "1e-22",
            "1e-23",
            "123456789012345678",
            "1234567890123456789",
            "12345678901234567890",
            "0e999999",
            "0.1",
            "0.3",
            "2.2250738585072014e-308",
            "1.7976931348623157e308",
            "4.9e-324",
            "1e2147483647",
            "7.81418595",
            "0.477742181",
            "00000000000000000000001",
        ];
        let mut cases: Vec<String> = fixed.iter().map(|s| s.to_string()).collect();
        for _ in 0..200_000 {
            let int: String = (0..next(12)).map(|_| char::from(b'0' + next(10) as u8)).collect();
            let frac: String = (0..next(14)).map(|_| char::from(b'0' + next(10) as u8)).collect();
            let mut t = match (int.is_empty(), frac.is_empty(), next(3)) {
                (true, true, _) => "7".to_string(),
                (_, true, 0) => int.clone(),
                _ => format!("{int}.{frac}"),
            };
            if next(3) == 0 {
                t.push_str(&format!("e{}{}", ["", "+", "-"][next(3) as usize], next(40)));
            }
            cases.push(t);
        }
        for t in &cases {
            assert!(plain_number(t).is_some(), "{t}");
            let want: f64 = t.parse().unwrap();
            if let Some((neg, got)) = plain_decimal(t.as_bytes()) {
                fast += 1;
                assert!(!neg);
                assert_eq!(got.to_bits(), want.to_bits(), "{t}");
            }
            // Signed, and never taking what the language would not read.
            if let Some((neg, got)) = plain_decimal(format!("-{t}").as_bytes()) {
                assert!(neg);
                assert_eq!(got.to_bits(), want.to_bits(), "-{t}");
            }
        }
        for bad in [
            "", ".", "-", "+", "1.2.3", "1e3", "1,5", " 1", "1 ", "--1", "0x10", "١٢",
        ] {
            assert_eq!(plain_decimal(bad.as_bytes()), None, "{bad:?}");
        }
        // most of them take the fast path, or this test checks little
        assert!(fast > cases.len() / 2, "{fast} of {}", cases.len());
    }

    #[test]
    fn short_copies_append_exactly_the_bytes() {
        let src: Vec<u8> = (0..40u8).map(|b| b'A' + b).collect();
        for n in 0..=40 {
            let mut out = b"xy".to_vec();
            push_short(&mut out, &src[..n]);
            assert_eq!(&out[..2], b"xy");
            assert_eq!(&out[2..], &src[..n], "{n} bytes");
        }
    }

    #[test]
    fn numbers_read_back_to_the_same_bits() {
        let mut buf = zmij::Buffer::new();
        for x in [
            0.1,
            -2.5e-300,
            1.0 / 3.0,
            6.02214076e23,
            f64::MIN_POSITIVE,
            5e-324,
            -0.0,
        ] {
            let mut out = Vec::new();
            push_num(&mut out, x, &mut buf);
            let y: f64 = std::str::from_utf8(&out).unwrap().parse().unwrap();
            assert_eq!(y.to_bits(), x.to_bits(), "{x}");
        }
    }

    #[test]
    fn headers_split_name_and_unit() {
        assert_eq!(split_header("Vll [kV]").unwrap(), ("Vll", Some("kV")));
        assert_eq!(split_header("\u{FEFF}R").unwrap(), ("R", None));
        assert!(split_header("Vll [kV").is_err());
    }
}
