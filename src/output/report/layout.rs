//! What the Markdown and HTML layouts share: the hand-calculation lines
//! of a step, the check summary and small wording helpers.

use unicode_width::UnicodeWidthStr;

use super::{FileLine, Report, Step, Value};

pub(super) fn lower_first(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) if s.starts_with("SHA") => f.to_string() + c.as_str(),
        Some(f) => f.to_lowercase().collect::<String>() + c.as_str(),
        None => String::new(),
    }
}

pub(super) fn file_contents(f: &FileLine) -> String {
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

pub(super) fn same_text(a: &str, b: &str) -> bool {
    let norm = |s: &str| s.chars().filter(|c| !c.is_whitespace()).collect::<String>();
    norm(a) == norm(b)
}

/// A real value has one form: its polar form is its rectangular form
/// (no `∠ 0°`).
pub(super) fn one_form(v: &Value) -> bool {
    v.polar == v.rect
}

/// The hand-calculation lines of a step, `=` signs aligned:
///
/// ```text
/// I = V / Z
///   = 230 V / (8 + j6) Ω
///   = 18.4 - j13.8 A
///   = 23 ∠ -36.87° A
/// ```
pub(super) fn equation_lines(s: &Step) -> Vec<String> {
    let lhs = s.name.as_str();
    let pad = " ".repeat(UnicodeWidthStr::width(lhs));
    let mut v = vec![format!("{lhs} = {}", s.formula)];
    if show_substituted(s) {
        v.push(format!("{pad} = {}", s.substituted));
    }
    if s.results.len() == 1 {
        let val = &s.results[0].value;
        v.push(format!("{pad} = {}", val.rect));
        if !one_form(val) {
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
            if one_form(&r.value) {
                v.push(format!("{pad}   {}{gap} = {}", r.name, r.value.rect));
            } else {
                v.push(format!(
                    "{pad}   {}{gap} = {}  =  {}",
                    r.name, r.value.rect, r.value.polar
                ));
            }
        }
    }
    v
}

/// The substituted line says something new: it differs from the formula
/// and, for a single result, from the result itself.
pub(super) fn show_substituted(s: &Step) -> bool {
    let same_as_result = s.results.len() == 1 && same_text(&s.substituted, &s.results[0].value.rect);
    !same_as_result && !same_text(&s.substituted, &s.formula)
}

/// What a step shows, said once before the steps.
pub(super) fn steps_intro(form: crate::output::Form) -> &'static str {
    use crate::output::Form;
    match form {
        Form::Both => {
            "Each step gives the formula as written, the formula with the value and unit of \
each quantity put in its place, and the result. A complex result is given in rectangular form \
(a + jb) and in polar form (magnitude ∠ angle); a real result is given once."
        }
        Form::Rect => {
            "Each step gives the formula as written, the formula with the value and unit of \
each quantity put in its place, and the result. A complex result is given in rectangular form \
(a + jb)."
        }
        Form::Polar => {
            "Each step gives the formula as written, the formula with the value and unit of \
each quantity put in its place, and the result. A complex result is given in polar form \
(magnitude ∠ angle)."
        }
    }
}

pub(super) fn check_summary(r: &Report) -> String {
    let failed = r.checks.iter().filter(|c| !c.passed).count();
    let n = r.checks.len();
    if failed == 0 {
        format!("All {n} check{} pass.", if n == 1 { "" } else { "s" })
    } else {
        format!("{failed} of {n} checks FAIL.")
    }
}
