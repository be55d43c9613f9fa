//! Evaluating rows of cases, 64 at a time, and writing their results.

use num_complex::Complex64 as C64;

use super::{ComplexForm, Plan, Rows, Shown, ValueReader};
use crate::engine::block::{Block, LANES};
use crate::engine::ops::{self};
use crate::engine::{eval, CellId, Role};

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
    /// `--spread`: this worker's copy of the analyses' plan.
    spread: Option<crate::spread::Plan>,
}

impl Worker {
    pub fn new(plan: &Plan) -> Worker {
        Worker {
            block: Block::new(&plan.model.program),
            reader: ValueReader::default(),
            spread: plan.spread.as_ref().map(|s| s.plan.clone()),
        }
    }
}

/// Append a CSV field, quoted when it must be.
pub(super) fn push_field(out: &mut Vec<u8>, f: &[u8]) {
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
/// finite, a plain decimal (`60`, `0`, `0.5`) from 1e-5 to 1e16 and in
/// exponent form outside, as `output::num` writes it; `NaN`, `inf` or
/// `-inf` otherwise, as `str::parse` reads them.
#[inline(always)]
fn num_text(x: f64, buf: &mut zmij::Buffer) -> &[u8] {
    if x.is_finite() {
        let s = buf.format_finite(x);
        let s = s.strip_suffix(".0").unwrap_or(s);
        if s == "-0" {
            b"0"
        } else {
            s.as_bytes()
        }
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
        let ncols = self.headers.len();
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
                    let text = rec.get(col.field).unwrap_or_default();
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
                // A case whose values read but some of whose shown values
                // are not numbers: those cells are left empty, the others
                // written.
                let mut marks = None;
                if ok[lane] && suspect & (1 << lane) != 0 {
                    let (m, failed) = self.failed_cells(&w.block, lane);
                    let case = first_case + (g * LANES + lane) as u64 + 1;
                    for (column, reason) in failed {
                        errors.push(RowError {
                            case,
                            line: rec.line(),
                            column,
                            value: String::new(),
                            reason,
                        });
                    }
                    marks = Some(m);
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
                if marks.is_some() || self.digits.is_some() {
                    self.write_shown_each(&w.block, lane, ncols > 0, marks.as_deref(), out);
                } else {
                    self.write_shown(&w.block, lane, ncols > 0, out);
                }
                if let Some(sp) = w.spread.as_mut() {
                    let slots: Vec<C64> = (0..w.block.n_slots()).map(|s| w.block.get(s as u32, lane)).collect();
                    let text = |f: usize| String::from_utf8_lossy(rec.get(f).unwrap_or_default()).into_owned();
                    let case = first_case + (g * LANES + lane) as u64 + 1;
                    for (column, value, reason) in self.write_spread(sp, &slots, &text, out) {
                        errors.push(RowError {
                            case,
                            line: rec.line(),
                            column,
                            value,
                            reason,
                        });
                    }
                }
                out.push(b'\n');
            }
        }
        // Errors in case order (value errors of a block come before its NaNs).
        errors.sort_by_key(|e| e.case);
    }

    /// One shown value: one number, or two joined by a comma.
    pub(super) fn write_value(&self, s: &Shown, z: C64, out: &mut Vec<u8>, num: &mut zmij::Buffer) {
        let (a, b) = self.numbers(s, z);
        self.push_number(out, a, num);
        if let Some(b) = b {
            out.push(b',');
            self.push_number(out, b, num);
        }
    }

    /// A number with the plan's digits, or in full.
    pub(super) fn push_number(&self, out: &mut Vec<u8>, x: f64, num: &mut zmij::Buffer) {
        match self.digits {
            Some(d) if x.is_finite() => push_short(out, crate::units::format::fmt_sig(x, d).as_bytes()),
            _ => push_num(out, x, num),
        }
    }

    /// The shown values of `lane` one at a time (the general path of
    /// [`Plan::write_shown`]): with the plan's digits, and an empty field
    /// (two for a complex value) for each shown value marked in `marks`.
    fn write_shown_each(&self, block: &Block, lane: usize, lead: bool, marks: Option<&[bool]>, out: &mut Vec<u8>) {
        let mut num = zmij::Buffer::new();
        let mut first = !lead;
        for (i, s) in self.shown.iter().enumerate() {
            if !first {
                out.push(b',');
            }
            first = false;
            if marks.is_some_and(|m| m[i]) {
                if !s.real {
                    out.push(b',');
                }
                continue;
            }
            match &s.fixed {
                Some(text) => push_short(out, text),
                None => self.write_value(s, block.get(s.slot, lane), out, &mut num),
            }
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
        match s.form {
            ComplexForm::Rect | ComplexForm::Both => (scaled(z.re), Some(scaled(z.im))),
            ComplexForm::Polar => (scaled(ops::abs(z)), Some(ops::arg(z).to_degrees())),
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
            let inf_fails = !s.element;
            for l in 0..LANES {
                bad[l] |= re[l].is_nan()
                    | im[l].is_nan()
                    | (s.real & (im[l] != 0.0))
                    | (inf_fails & (re[l].is_infinite() | im[l].is_infinite()));
            }
        }
        bad.iter().enumerate().fold(0, |m, (l, &x)| m | (u64::from(x) << l))
    }

    /// The shown values of `lane` that are not numbers (a mark for each
    /// shown value), and for each such value its label and the reason: for
    /// a NaN, the cell where it was born and why (found by re-running the
    /// case one cell at a time, see [`super::reason::nan_reason`]).
    fn failed_cells(&self, b: &Block, lane: usize) -> (Vec<bool>, Vec<(String, String)>) {
        let marks: Vec<bool> = self
            .shown
            .iter()
            .map(|s| {
                let z = b.get(s.slot, lane);
                s.fixed.is_none()
                    && (z.re.is_nan()
                        || z.im.is_nan()
                        || (s.real && z.im != 0.0)
                        || (!s.element && (z.re.is_infinite() || z.im.is_infinite())))
            })
            .collect();
        let m = &*self.model;
        let mut slots: Option<Vec<C64>> = None;
        let mut failed = Vec::new();
        for (s, _) in self.shown.iter().zip(&marks).filter(|(_, &bad)| bad) {
            // a value shown in both forms is listed once
            if failed.iter().any(|(label, _)| *label == s.label) {
                continue;
            }
            let z = b.get(s.slot, lane);
            let infinite = !s.element && (z.re.is_infinite() || z.im.is_infinite());
            if !z.re.is_nan() && !z.im.is_nan() && !infinite {
                failed.push((
                    s.label.clone(),
                    format!(
                        "`{}` has an imaginary part where none was expected: it is real by construction (a real or reactive power, a power factor, …), and this case made a value it is built from complex; if that is meant, make the sheet's own value complex too, so the sheet reads it as complex (a product of var and a complex factor is VA)",
                        s.label
                    ),
                ));
                continue;
            }
            let slots = slots.get_or_insert_with(|| {
                let prog = &m.program;
                let mut slots = prog.init.clone();
                for c in &self.columns {
                    slots[c.slot as usize] = b.get(c.slot, lane);
                }
                eval::run(&prog.code, prog, &mut slots);
                slots
            });
            if !z.re.is_nan() && !z.im.is_nan() {
                // infinite: the first cell of the chain of infinite
                // non-elements, with where and why it was born
                let origins = crate::engine::infinite::inf_origins(m, slots);
                let origin = if origins.contains(&(s.cell, true)) {
                    s.cell
                } else {
                    // the earliest error origin among the cells it uses
                    let mut seen = vec![false; m.cells.len()];
                    let mut stack = vec![s.cell];
                    while let Some(c) = stack.pop() {
                        for &d in &m.cells[c as usize].deps {
                            if !seen[d as usize] {
                                seen[d as usize] = true;
                                stack.push(d);
                            }
                        }
                    }
                    origins
                        .iter()
                        .filter(|&&(d, err)| err && seen[d as usize])
                        .map(|&(d, _)| d)
                        .min_by_key(|&d| m.rank[d as usize])
                        .unwrap_or(s.cell)
                };
                let why = super::reason::inf_reason(m, slots, origin);
                let reason = if origin == s.cell {
                    why
                } else {
                    format!(
                        "not computed because it uses `{}`: {why}",
                        m.cells[origin as usize].name
                    )
                };
                failed.push((s.label.clone(), reason));
                continue;
            }
            let nan = |id: CellId| {
                let c = &m.cells[id as usize];
                slots[c.slot as usize..(c.slot + c.width) as usize]
                    .iter()
                    .any(|z| z.re.is_nan() || z.im.is_nan())
            };
            // Back from the shown cell through NaN cells, earliest first,
            // to one whose own inputs are all numbers.
            let mut origin = s.cell;
            while let Some(d) = m.cells[origin as usize]
                .deps
                .iter()
                .copied()
                .filter(|&d| m.cells[d as usize].role == Role::Def && nan(d))
                .min_by_key(|&d| m.rank[d as usize])
            {
                origin = d;
            }
            let why = super::reason::nan_reason(m, slots, origin);
            let reason = if origin == s.cell {
                why
            } else {
                format!(
                    "not computed because it uses `{}`: {why}",
                    m.cells[origin as usize].name
                )
            };
            failed.push((s.label.clone(), reason));
        }
        (marks, failed)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

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
        for x in [0.1, -2.5e-300, 1.0 / 3.0, 6.02214076e23, f64::MIN_POSITIVE, 5e-324] {
            let mut out = Vec::new();
            push_num(&mut out, x, &mut buf);
            let y: f64 = std::str::from_utf8(&out).unwrap().parse().unwrap();
            assert_eq!(y.to_bits(), x.to_bits(), "{x}");
        }
        // A negative zero is written 0: "-0 A" would read as a sign that
        // means something.
        let mut out = Vec::new();
        push_num(&mut out, -0.0, &mut buf);
        assert_eq!(out, b"0");
    }

    // The same text as `run --format csv` and sweep CSV (output::num).
    #[test]
    fn numbers_as_plain_decimals_like_the_other_csv_writers() {
        let mut buf = zmij::Buffer::new();
        for x in [
            60.0,
            0.0,
            -0.0,
            0.5,
            -3.25,
            1e-5,
            9.99e-6,
            1.5e-7,
            9.999e15,
            1e16,
            2.5e20,
            0.1 + 0.2,
        ] {
            let t = std::str::from_utf8(num_text(x, &mut buf)).unwrap().to_string();
            let want = crate::output::num(x);
            // The exponent form may be `1e+16` here and `1e16` there.
            assert_eq!(t.replace("e+", "e"), want, "{x:e}");
            assert_eq!(t.parse::<f64>().unwrap(), x);
        }
    }
}
