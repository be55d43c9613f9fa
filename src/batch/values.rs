//! Reading a case's values with the sheet language's rules.

use std::collections::HashMap;

use num_complex::Complex64 as C64;

use super::{quantity_mismatch, unit_error_for, CaseColumn, Plan};
use crate::engine::eval;
use crate::engine::ops::{self, Op};
use crate::sheet::Sheet;
use crate::syntax::ast::{ExprKind, StmtKind};
use crate::units::{Quantity, Unit};

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
        let r = slow_value(col, text).map_err(|e| unknown_unit(col, text).unwrap_or(e));
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

/// For `number word` where `word` is no unit: the error worded for the
/// column's input, with a did-you-mean only among units of its dimension.
fn unknown_unit(col: &CaseColumn, text: &str) -> Option<String> {
    let (num, unit) = text.split_once([' ', '\t'])?;
    let unit = unit.trim();
    plain_number(num)?;
    // `2 ∠ 30 * 3` is a formula, not a number and a word: its own error
    // (here, that it reads two ways) stands.
    if unit.contains(char::is_whitespace) {
        return None;
    }
    match crate::units::parse_unit_expr(unit) {
        Err(e @ crate::units::UnitError::Unknown { .. }) => Some(unit_error_for(text, e, &col.name, col.want)),
        _ => None,
    }
}

fn finish(col: &CaseColumn, text: &str, z: C64, q: Quantity) -> Result<C64, String> {
    if let Some(why) = quantity_mismatch(&col.name, col.want, q) {
        return Err(format!("`{text}` is {why}"));
    }
    if z.re.is_nan() || z.im.is_nan() {
        return Err(format!("`{text}` is not a number (NaN)"));
    }
    if z.im != 0.0 && super::real_by_nature(col.want) {
        return Err(format!(
            "`{text}` has an imaginary part, but `{}` is {}, a real number",
            col.name,
            col.want.describe()
        ));
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
}
