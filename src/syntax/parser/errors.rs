//! Rendering a pest error as a located diagnostic, with hints for common
//! slips.

use super::Rule;
use crate::diag::{Diagnostic, ErrorCode, FileId, Span};

fn describe_rule(r: &Rule) -> Option<&'static str> {
    Some(match r {
        Rule::expr | Rule::operand | Rule::atom => "a value",
        Rule::quantity | Rule::number | Rule::mantissa => "a number",
        Rule::name | Rule::name_ref => "a name",
        Rule::call => "a function call",
        Rule::paren | Rule::paren_q => "`(`",
        Rule::infix
        | Rule::add
        | Rule::sub
        | Rule::mul
        | Rule::div
        | Rule::pow
        | Rule::par
        | Rule::ser
        | Rule::angle
        | Rule::lt
        | Rule::le
        | Rule::gt
        | Rule::ge => "an operator",
        Rule::unit_expr | Rule::unit_factor | Rule::unit_word | Rule::suffix => "a unit",
        Rule::display_unit => "a display unit `[...]`",
        Rule::EOI => "the end of the line",
        Rule::field => "`.field`",
        Rule::definition => "a definition `name = ...`",
        Rule::check => "`check`",
        Rule::directive => "`@`",
        Rule::darg | Rule::dstring | Rule::dword => "an argument",
        Rule::neg | Rule::pos | Rule::prefix => "a sign",
        Rule::exponent => "an exponent",
        Rule::kw_is => "`is largest` or `is smallest`",
        Rule::search_eq => "`= value`",
        Rule::kw_largest | Rule::kw_smallest => "`largest` or `smallest`",
        Rule::kw_where => "`where`",
        Rule::spread | Rule::kw_within | Rule::kw_among => "a tolerance `within …` or `among …`",
        Rule::spread_angle | Rule::kw_angle => "`angle`",
        Rule::spread_law | Rule::kw_normal | Rule::kw_uniform => "`normal Kσ` or `uniform`",
        Rule::kw_sigma => "`σ` or `sigma`",
        Rule::check_over | Rule::kw_over => "`over the box` or `over N % of samples`",
        Rule::kw_the | Rule::kw_box => "`the box`",
        Rule::kw_of | Rule::kw_samples => "`of samples`",
        _ => return None,
    })
}

pub(super) fn syntax_error(line: &str, e: pest::error::Error<Rule>, file: FileId, offset: usize) -> Diagnostic {
    use pest::error::{ErrorVariant, InputLocation};
    let pos = match e.location {
        InputLocation::Pos(p) => p,
        InputLocation::Span((a, _)) => a,
    };
    let mut expected: Vec<&str> = match &e.variant {
        ErrorVariant::ParsingError { positives, .. } => positives.iter().filter_map(describe_rule).collect(),
        ErrorVariant::CustomError { .. } => vec![],
    };
    expected.sort();
    expected.dedup();
    let rest = &line[pos.min(line.len())..];
    let found: String = rest.chars().take_while(|c| !c.is_whitespace()).take(12).collect();
    let end = pos + rest.chars().next().map_or(0, char::len_utf8);
    let message = if found.is_empty() {
        "the line ends too soon".to_string()
    } else {
        format!("unexpected `{found}`")
    };
    let mut d = Diagnostic::error(ErrorCode::Syntax, Span::new(file, offset + pos, offset + end), message);
    // A `check` line that lacks `~=` or its tolerance: pest's furthest
    // attempt is a unit after the last number, which misleads (issue-13
    // audit: `check P <= 4.9 kW` said only "expected a unit").
    let check_slip = check_slip(line);
    if let Some((label, _)) = &check_slip {
        d = d.with_label(*label);
    } else if !expected.is_empty() {
        d = d.with_label(format!("expected {}", join_or(&expected)));
    }
    // Targeted hints for common slips.
    let before = line[..pos.min(line.len())].trim_end();
    let look_alike = rest
        .chars()
        .next()
        .and_then(|c| crate::units::lookalike::hint(c.encode_utf8(&mut [0; 4])));
    if let Some(h) = look_alike {
        d = d.with_hint(h);
    } else if let Some((_, hint)) = check_slip {
        d = d.with_hint(hint);
    } else if rest.starts_with('*') && before.ends_with('*') {
        let first = offset + before.len() - 1;
        d = d
            .with_hint(power_hint(before, rest))
            .with_fix(Span::new(file, first, offset + pos + 1), "^");
    } else if rest.starts_with("=>") {
        d = d.with_hint("greater than or equal is written `>=` (or `≥`)");
    } else if rest.starts_with("=<") {
        d = d.with_hint("less than or equal is written `<=` (or `≤`)");
    } else if rest.starts_with('>') && before.ends_with('<') || rest.starts_with("!=") {
        d = d.with_hint(
            "there is no not-equal operator; to test that two values differ write `abs(a - b) > tol`, \
             or check that they agree with `check a ~= b +- 1%`",
        );
    } else if rest.starts_with("==") || (rest.starts_with('=') && before.contains('=')) {
        d = d.with_hint("a definition has one `=`; to check that two values agree write `check a ~= b +- 1%`; `<`, `<=`, `>`, `>=` compare and give 1 or 0");
    } else if rest.starts_with("+-") || rest.starts_with('±') {
        d = d.with_hint("`+-` (±) only separates a tolerance in a `check`; to add a negative write `a + (-b)`");
    } else if before.ends_with('=') && rest.is_empty() {
        d = d.with_hint("a definition needs a formula after `=`");
    } else if found.starts_with(|c: char| c.is_alphabetic())
        && before.chars().last().is_some_and(|c| c.is_alphanumeric() || c == ')')
    {
        d = d.with_hint("two values side by side: multiplication needs `*`");
    } else if rest.starts_with("--") {
        d = d.with_hint("`--` is the series operator; to subtract a negative write `a - -b` with a space");
    }
    d
}

/// A `check` line without `~=` (≈) or without `+-` (±) and a tolerance:
/// the label and hint that say what a check needs.
fn check_slip(line: &str) -> Option<(&'static str, &'static str)> {
    let t = line.trim_start();
    let rest = t.strip_prefix("check")?;
    if rest.starts_with(|c: char| c == '_' || c.is_alphanumeric()) {
        return None;
    }
    let code = match crate::syntax::parser::find_comment_start(rest) {
        Some(k) => &rest[..k],
        None => rest,
    };
    if !code.contains("~=") && !code.contains('≈') {
        Some((
            "a check needs `~=` (≈) and a tolerance",
            "a check compares two values within a tolerance: `check A ~= B +- 1%` (a percentage of |B|) or \
             `+- 0.5 Ω` (in B's unit); `<`, `<=`, `>`, `>=` give 1 or 0, so an inequality is checked as \
             `check (A <= B) ~= 1 +- 0`",
        ))
    } else if !code.contains("+-") && !code.contains('±') {
        Some((
            "a check needs `+-` (±) and a tolerance",
            "write the tolerance after the reference: `check A ~= B +- 1%` (a percentage of |B|) or \
             `+- 0.5 Ω` (in B's unit)",
        ))
    } else {
        None
    }
}

/// The hint for `a ** b`: written with the user's operands where they are
/// plain words or numbers.
fn power_hint(before: &str, rest: &str) -> String {
    let plain = |t: &str| !t.is_empty() && t.chars().all(|c| c.is_alphanumeric() || c == '.' || c == '_');
    let left = before.trim_end_matches('*').trim_end();
    let left = left.rsplit(char::is_whitespace).next().unwrap_or("");
    let right = rest[1..].trim_start();
    let right: String = right
        .chars()
        .take_while(|c| c.is_alphanumeric() || *c == '.' || *c == '_')
        .collect();
    if plain(left) && plain(&right) {
        format!("a power is written with `^`: `{left}^{right}`")
    } else {
        "a power is written with `^`, as in `2^3`".to_string()
    }
}

fn join_or(items: &[&str]) -> String {
    match items {
        [] => String::new(),
        [a] => a.to_string(),
        [rest @ .., last] => format!("{} or {}", rest.join(", "), last),
    }
}
