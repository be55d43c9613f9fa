//! Misreadings: each way of writing a quantity that once gave a wrong
//! number without warning (issue 13), with the right value or the refusal
//! the language now gives. One file per family.

mod angle;
mod check_lines;
mod complex_factor;
mod display;
mod infinite;
mod kinds;
mod lookalikes;
mod numerics;
mod overrides;
mod ranges;
mod search_targets;
mod trig_note;

/// The first error of a sheet that must fail, with its line and column
/// (1-based).
pub fn first_error_at(src: &str) -> (ohmsheet::diag::Diagnostic, usize, usize) {
    let sheet = ohmsheet::sheet::Sheet::from_text("test.ohm", src);
    let m = ohmsheet::engine::compile(&sheet);
    let d = m
        .diagnostics
        .iter()
        .find(|d| d.is_error())
        .unwrap_or_else(|| panic!("expected an error in:\n{src}"))
        .clone();
    let span = d.span.expect("located");
    let (line, col) = m.sources.get(span.file).line_col(span.start as usize);
    (d, line, col)
}
