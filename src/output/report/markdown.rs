//! The report as Markdown.

use super::layout::{check_summary, equation_lines, file_contents, lower_first, one_form, same_text, steps_intro};
use super::Report;

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
            let value = if one_form(&i.value) {
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
        p(&mut o, &md_text(steps_intro(r.form)));
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markdown_code_spans_survive_pipes_and_backticks() {
        assert_eq!(md_code("Za || Zb"), "`Za \\|\\| Zb`");
        assert_eq!(md_code("a`b"), "``a`b``");
        assert_eq!(md_text("2*x_1 | y"), "2\\*x\\_1 \\| y");
    }
}
