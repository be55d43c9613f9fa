//! The report as Markdown.

use super::layout::{check_summary, equation_lines, file_contents, lower_first, one_form, same_text, steps_intro};
use super::{Report, Value};

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

    for n in &r.networks {
        p(&mut o, "");
        p(
            &mut o,
            &format!("### Network {} at {}", md_code(&n.name), md_text(&n.frequency.rect)),
        );
        p(&mut o, "");
        p(
            &mut o,
            "Currents flow from the first node to the second through a branch; a source delivers its current out of its first node. Powers are absorbed by branches and delivered by sources.",
        );
        p(&mut o, "");
        p(&mut o, "| Element | Kind | Nodes | Value | Current | Power |");
        p(&mut o, "|---|---|---|--:|--:|--:|");
        let both = |v: &Value| {
            if one_form(v) {
                md_text(&v.rect)
            } else {
                format!("{}<br>{}", md_text(&v.rect), md_text(&v.polar))
            }
        };
        for e in &n.elements {
            let opt = |v: &Option<Value>| v.as_ref().map_or_else(String::new, both);
            p(
                &mut o,
                &format!(
                    "| {} | {} | {} | {} | {} | {} |",
                    md_code(&e.name),
                    md_text(&e.kind),
                    md_text(&e.nodes),
                    both(&e.value),
                    opt(&e.current),
                    opt(&e.power)
                ),
            );
        }
        p(&mut o, "");
        p(&mut o, "| Node | Voltage to ground |");
        p(&mut o, "|---|--:|");
        for (node, v) in &n.nodes {
            p(&mut o, &format!("| {} | {} |", md_code(node), both(v)));
        }
        if let (Some(d), Some(a)) = (&n.delivered, &n.absorbed) {
            p(&mut o, "");
            p(
                &mut o,
                &format!(
                    "Delivered by the sources: {}; absorbed by the branches: {}.",
                    md_text(&d.rect),
                    md_text(&a.rect)
                ),
            );
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

    if let Some(sp) = &r.spread {
        let n = if r.plots.is_empty() { 4 } else { 5 };
        spread_md(&mut o, sp, n, plot_files.get(r.plots.len()..).unwrap_or(&[]));
    }

    p(&mut o, "");
    p(&mut o, "## Caution");
    p(&mut o, "");
    p(&mut o, &format!("> {}", md_text(r.caution)));
    o
}

/// The spread section, numbered `n`; figure `k` from the file `files[k]`
/// where one is given, else as a `data:` image.
fn spread_md(o: &mut String, sp: &super::spread::SpreadSection, n: usize, files: &[String]) {
    let mut p = |s: &str| {
        o.push_str(s);
        o.push('\n');
    };
    let figure = |k: Option<usize>| -> String {
        let Some(k) = k else { return String::new() };
        let Some(f) = sp.figures.get(k) else {
            return String::new();
        };
        match (&f.svg, files.get(k).filter(|x| !x.is_empty())) {
            (Some(_), Some(file)) => format!(
                "![{}]({})\n\n{}",
                md_text(&f.title),
                file.replace(' ', "%20"),
                md_text(&f.caption)
            ),
            (Some(svg), None) => format!(
                "![{}]({})\n\n{}",
                md_text(&f.title),
                svg_data_uri(svg),
                md_text(&f.caption)
            ),
            (None, _) => String::new(),
        }
    };
    p("");
    p(&format!("## {n}. Spread over the tolerances"));
    p("");
    p(&format!("> **Caution.** {}", md_text(sp.caution)));
    p("");
    p(&md_text(super::spread::SPREAD_INTRO));
    p("");
    p("| Input | Stated | Tolerance |");
    p("|---|--:|---|");
    for i in &sp.inputs {
        p(&format!(
            "| {} | {} | {} |",
            md_code(&i.name),
            md_text(&i.stated),
            md_text(&i.tolerance)
        ));
    }
    let mut sub = 0;
    if let Some(w) = &sp.worst {
        sub += 1;
        p("");
        p(&format!("### {n}.{sub} Worst case"));
        p("");
        p(&format!("Found over {}.", md_text(&w.method)));
        p("");
        p("| Cell | Stated | Smallest | at | Largest | at |");
        p("|---|--:|--:|---|--:|---|");
        for r in &w.rows {
            p(&format!(
                "| {} | {} | {} | {} | {} | {} |",
                md_text(&r.cell),
                md_text(&r.stated),
                md_text(&r.smallest),
                md_text(&r.smallest_at),
                md_text(&r.largest),
                md_text(&r.largest_at)
            ));
        }
    }
    if let Some(mc) = &sp.monte_carlo {
        sub += 1;
        p("");
        p(&format!("### {n}.{sub} Monte Carlo"));
        p("");
        p(&format!("{}.", md_text(&mc.method)));
        p("");
        p("| Cell | Stated | Mean | Std dev | Coverage interval | 1 % … 99 % |");
        p("|---|--:|--:|--:|--:|--:|");
        for r in &mc.rows {
            p(&format!(
                "| {} | {} | {} | {} | {} | {} |",
                md_text(&r.cell),
                md_text(&r.stated),
                md_text(&r.mean),
                md_text(&r.std_dev),
                md_text(&r.interval),
                md_text(&r.p1_p99)
            ));
        }
        for r in &mc.rows {
            if r.undefined > 0 {
                p("");
                p(&format!(
                    "{}: {} samples gave no number and are left out.",
                    md_text(&r.cell),
                    r.undefined
                ));
            }
        }
        for r in &mc.rows {
            let f = figure(r.figure);
            if !f.is_empty() {
                p("");
                p(&f);
            }
        }
    }
    if let Some(sens) = &sp.sensitivities {
        sub += 1;
        p("");
        p(&format!("### {n}.{sub} Sensitivities"));
        p("");
        p(
            "The change of each cell per change of each input at the stated values (per % of the input's \
             magnitude, or per degree of its angle), largest first; the cell with the input at each end of its \
             band, the others stated; and the first-order standard deviation by the law of propagation of \
             uncertainty, JCGM 100:2008 §5.1.2.",
        );
        for c in sens {
            p("");
            p(&format!(
                "**{}** — stated {}; first-order standard deviation {}; derivatives by {}",
                md_text(&c.cell),
                md_text(&c.stated),
                md_text(&c.first_order_std_dev),
                md_text(&c.method)
            ));
            p("");
            if c.complex {
                p("| Input | Cell magnitude | Cell angle | Input at low end | Input at high end |");
                p("|---|--:|--:|--:|--:|");
            } else {
                p("| Input | Cell | Input at low end | Input at high end |");
                p("|---|--:|--:|--:|");
            }
            for r in &c.rows {
                if c.complex {
                    p(&format!(
                        "| {} | {} | {} | {} | {} |",
                        md_code(&r.input),
                        md_text(&r.per),
                        md_text(&r.angle),
                        md_text(&r.low),
                        md_text(&r.high)
                    ));
                } else {
                    p(&format!(
                        "| {} | {} | {} | {} |",
                        md_code(&r.input),
                        md_text(&r.per),
                        md_text(&r.low),
                        md_text(&r.high)
                    ));
                }
            }
            let f = figure(c.figure);
            if !f.is_empty() {
                p("");
                p(&f);
            }
        }
    }
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
