//! The report as one self-contained HTML file.

use super::layout::{check_summary, file_contents, lower_first, one_form, same_text, show_substituted, steps_intro};
use super::{Report, Value};

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
            let value = if one_form(&i.value) {
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
        o.push_str(&format!("<p class=\"small\">{}</p>\n", esc(steps_intro(r.form))));
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
            if !one_form(v) {
                row(&mut o, "result polar", "", &esc(&v.polar));
            }
        } else {
            for res in &s.results {
                row(
                    &mut o,
                    "result field",
                    &esc(&res.name),
                    &if one_form(&res.value) {
                        esc(&res.value.rect)
                    } else {
                        format!("{} &nbsp;=&nbsp; {}", esc(&res.value.rect), esc(&res.value.polar))
                    },
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
    for n in &r.networks {
        o.push_str(&format!(
            "<div class=\"network\" id=\"network-{}\">\n<h3>Network <code>{}</code> at {}</h3>\n",
            esc(&n.name),
            esc(&n.name),
            esc(&n.frequency.rect)
        ));
        o.push_str("<p class=\"note\">Currents flow from the first node to the second through a branch; a source delivers its current out of its first node. Powers are absorbed by branches and delivered by sources.</p>\n");
        o.push_str("<table class=\"network-elements\">\n<tr><th>Element</th><th>Kind</th><th>Nodes</th><th>Value</th><th>Current</th><th>Power</th></tr>\n");
        let both = |v: &Value| {
            if one_form(v) {
                esc(&v.rect)
            } else {
                format!("{}<br>{}", esc(&v.rect), esc(&v.polar))
            }
        };
        for e in &n.elements {
            let opt = |v: &Option<Value>| v.as_ref().map_or_else(String::new, both);
            o.push_str(&format!(
                "<tr><td><code>{}</code></td><td>{}</td><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>\n",
                esc(&e.name),
                esc(&e.kind),
                esc(&e.nodes),
                both(&e.value),
                opt(&e.current),
                opt(&e.power)
            ));
        }
        o.push_str("</table>\n<table class=\"network-nodes\">\n<tr><th>Node</th><th>Voltage to ground</th></tr>\n");
        for (node, v) in &n.nodes {
            o.push_str(&format!(
                "<tr><td><code>{}</code></td><td class=\"num\">{}</td></tr>\n",
                esc(node),
                both(v)
            ));
        }
        o.push_str("</table>\n");
        if let (Some(d), Some(a)) = (&n.delivered, &n.absorbed) {
            o.push_str(&format!(
                "<p>Delivered by the sources: {}; absorbed by the branches: {}.</p>\n",
                esc(&d.rect),
                esc(&a.rect)
            ));
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

    if let Some(sp) = &r.spread {
        spread_html(&mut o, sp, if r.plots.is_empty() { 4 } else { 5 });
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

fn table(o: &mut String, head: &[&str], rows: &[Vec<String>]) {
    o.push_str("<table>\n<thead><tr>");
    for h in head {
        o.push_str(&format!("<th>{}</th>", esc(h)));
    }
    o.push_str("</tr></thead>\n<tbody>\n");
    for r in rows {
        o.push_str("<tr>");
        for c in r {
            o.push_str(&format!("<td>{}</td>", esc(c)));
        }
        o.push_str("</tr>\n");
    }
    o.push_str("</tbody>\n</table>\n");
}

/// The spread section, numbered `n`, its figures inline.
fn spread_html(o: &mut String, sp: &super::spread::SpreadSection, n: usize) {
    let figure = |o: &mut String, k: Option<usize>| {
        if let Some(f) = k.and_then(|k| sp.figures.get(k)) {
            if let Some(svg) = &f.svg {
                o.push_str(&format!(
                    "<figure class=\"plot\">\n{svg}\n<figcaption class=\"small\">{} — {}</figcaption>\n</figure>\n",
                    esc(&f.title),
                    esc(&f.caption)
                ));
            }
        }
    };
    o.push_str(&format!(
        "<section id=\"spread\">\n<h2>{n}. Spread over the tolerances</h2>\n<p class=\"caution\"><strong>Caution.</strong> {}</p>\n<p>{}</p>\n",
        esc(sp.caution),
        esc(super::spread::SPREAD_INTRO)
    ));
    let rows: Vec<Vec<String>> = sp
        .inputs
        .iter()
        .map(|i| vec![i.name.clone(), i.stated.clone(), i.tolerance.clone()])
        .collect();
    table(o, &["Input", "Stated", "Tolerance"], &rows);
    let mut sub = 0;
    if let Some(w) = &sp.worst {
        sub += 1;
        o.push_str(&format!(
            "<h3>{n}.{sub} Worst case</h3>\n<p>Found over {}.</p>\n",
            esc(&w.method)
        ));
        let rows: Vec<Vec<String>> = w
            .rows
            .iter()
            .map(|r| {
                vec![
                    r.cell.clone(),
                    r.stated.clone(),
                    r.smallest.clone(),
                    r.smallest_at.clone(),
                    r.largest.clone(),
                    r.largest_at.clone(),
                ]
            })
            .collect();
        table(o, &["Cell", "Stated", "Smallest", "at", "Largest", "at"], &rows);
    }
    if let Some(mc) = &sp.monte_carlo {
        sub += 1;
        o.push_str(&format!(
            "<h3>{n}.{sub} Monte Carlo</h3>\n<p>{}.</p>\n",
            esc(&mc.method)
        ));
        let rows: Vec<Vec<String>> = mc
            .rows
            .iter()
            .map(|r| {
                vec![
                    r.cell.clone(),
                    r.stated.clone(),
                    r.mean.clone(),
                    r.std_dev.clone(),
                    r.interval.clone(),
                    r.p1_p99.clone(),
                ]
            })
            .collect();
        table(
            o,
            &["Cell", "Stated", "Mean", "Std dev", "Coverage interval", "1 % … 99 %"],
            &rows,
        );
        for r in &mc.rows {
            if r.undefined > 0 {
                o.push_str(&format!(
                    "<p>{}: {} samples gave no number and are left out.</p>\n",
                    esc(&r.cell),
                    r.undefined
                ));
            }
        }
        for r in &mc.rows {
            figure(o, r.figure);
        }
    }
    if let Some(sens) = &sp.sensitivities {
        sub += 1;
        o.push_str(&format!(
            "<h3>{n}.{sub} Sensitivities</h3>\n<p>The change of each cell per change of each input at the stated values \
             (per % of the input's magnitude, or per degree of its angle), largest first; the cell with the input at each \
             end of its band, the others stated; and the first-order standard deviation by the law of propagation of \
             uncertainty, JCGM 100:2008 §5.1.2.</p>\n"
        ));
        for c in sens {
            o.push_str(&format!(
                "<p><strong>{}</strong> — stated {}; first-order standard deviation {}; derivatives by {}</p>\n",
                esc(&c.cell),
                esc(&c.stated),
                esc(&c.first_order_std_dev),
                esc(&c.method)
            ));
            let rows: Vec<Vec<String>> = c
                .rows
                .iter()
                .map(|r| {
                    let mut v = vec![r.input.clone(), r.per.clone()];
                    if c.complex {
                        v.push(r.angle.clone());
                    }
                    v.push(r.low.clone());
                    v.push(r.high.clone());
                    v
                })
                .collect();
            if c.complex {
                table(
                    o,
                    &[
                        "Input",
                        "Cell magnitude",
                        "Cell angle",
                        "Input at low end",
                        "Input at high end",
                    ],
                    &rows,
                );
            } else {
                table(o, &["Input", "Cell", "Input at low end", "Input at high end"], &rows);
            }
            figure(o, c.figure);
        }
    }
    o.push_str("</section>\n");
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn html_is_escaped() {
        assert_eq!(esc("<b>&\"'"), "&lt;b&gt;&amp;&quot;&#39;");
    }
}
