//! A quick chart in the terminal: one strip per panel of the plot layout,
//! drawn with braille dots (2 × 4 dots per character cell), the y range at
//! the left, the x range under the last strip, and a `×` under each x where
//! a value is NaN or infinite.

use super::{layout, si_tick, tick, Layout};
use crate::output::sweep::Parts;
use crate::sweep::SweepResult;

/// Rows of characters per strip.
const ROWS: usize = 10;

/// Marks, one per curve in a strip, for terminals without colour.
const MARKS: &[char] = &['●', '○', '◆', '◇', '▲', '△', '■', '□'];
const ANSI: &[&str] = &["34", "33", "32", "35", "31", "36", "90", "93"];

/// Draw the chart `width` characters wide; `colour` adds ANSI colours.
pub fn chart(r: &SweepResult, width: usize, colour: bool) -> String {
    match layout(r, Parts::Polar) {
        Ok(lay) => draw(&lay, width, colour),
        Err(e) => format!("(no chart: {e})\n"),
    }
}

fn ylabel(v: f64) -> String {
    crate::units::format::fmt_sig(v, 4)
}

fn draw(lay: &Layout, width: usize, colour: bool) -> String {
    let label_w = 10usize;
    let cols = width.saturating_sub(label_w + 3).max(20);
    let (dw, dh) = (cols * 2, ROWS * 4);
    let xmap = |x: f64| -> Option<usize> {
        let (lo, hi) = (lay.x.lo, lay.x.hi);
        let t = if lay.x.log {
            (x.ln() - lo.ln()) / (hi.ln() - lo.ln())
        } else {
            (x - lo) / (hi - lo)
        };
        if !t.is_finite() {
            return if lo == hi { Some(0) } else { None };
        }
        Some(((t * (dw - 1) as f64).round().max(0.0) as usize).min(dw - 1))
    };
    let mut out = String::new();
    out.push_str(&lay.title);
    out.push('\n');
    for panel in &lay.panels {
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for c in &panel.curves {
            for &(_, y) in &c.points {
                if y.is_finite() {
                    lo = lo.min(y);
                    hi = hi.max(y);
                }
            }
        }
        if !lo.is_finite() {
            (lo, hi) = (-1.0, 1.0);
        } else if hi == lo {
            (lo, hi) = (lo - 1.0, hi + 1.0);
        }
        // Which curve owns each character cell (the last drawn wins), and
        // the dots set in it.
        let mut dots = vec![0u8; cols * ROWS];
        let mut owner = vec![usize::MAX; cols * ROWS];
        for (ci, c) in panel.curves.iter().enumerate() {
            let mut prev: Option<(usize, usize)> = None;
            for &(x, y) in &c.points {
                let (Some(px), true) = (xmap(x), y.is_finite()) else {
                    prev = None;
                    continue;
                };
                let py = (((hi - y) / (hi - lo)) * (dh - 1) as f64)
                    .round()
                    .clamp(0.0, (dh - 1) as f64) as usize;
                // Join to the previous point with a straight run of dots.
                let (x0, y0) = prev.unwrap_or((px, py));
                let steps = x0.abs_diff(px).max(y0.abs_diff(py)).max(1);
                for k in 0..=steps {
                    let t = k as f64 / steps as f64;
                    let xx = (x0 as f64 + (px as f64 - x0 as f64) * t).round() as usize;
                    let yy = (y0 as f64 + (py as f64 - y0 as f64) * t).round() as usize;
                    let cell = (yy / 4) * cols + xx / 2;
                    dots[cell] |= braille_bit(xx % 2, yy % 4);
                    owner[cell] = ci;
                }
                prev = Some((px, py));
            }
        }
        out.push('\n');
        let legend: Vec<String> = panel
            .curves
            .iter()
            .enumerate()
            .map(|(i, c)| paint(&format!("{} {}", MARKS[i % MARKS.len()], c.label), i, colour))
            .collect();
        out.push_str(&format!("  {}   {}\n", panel.ylabel, legend.join("  ")));
        for row in 0..ROWS {
            let lab = match row {
                0 => ylabel(hi),
                r if r == ROWS - 1 => ylabel(lo),
                r if r == ROWS / 2 => {
                    let mid = 0.5 * (hi + lo);
                    ylabel(if mid.abs() < 1e-6 * (hi - lo) { 0.0 } else { mid })
                }
                _ => String::new(),
            };
            out.push_str(&format!("{lab:>label_w$} ┤"));
            for c in 0..cols {
                let k = row * cols + c;
                if dots[k] == 0 {
                    out.push(' ');
                } else {
                    let ch = char::from_u32(0x2800 + dots[k] as u32).unwrap_or('?');
                    let i = owner[k];
                    if colour {
                        out.push_str(&paint(&ch.to_string(), i, true));
                    } else if panel.curves.len() > 1 && c % 6 == 0 {
                        // Without colour, tag the curves now and then.
                        out.push(MARKS[i % MARKS.len()]);
                    } else {
                        out.push(ch);
                    }
                }
            }
            out.push('\n');
        }
    }
    // x axis with marks for undefined points.
    let mut axis: Vec<char> = vec!['─'; cols];
    for &x in &lay.undefined {
        if let Some(px) = xmap(x) {
            axis[px / 2] = '×';
        }
    }
    out.push_str(&format!("{:>label_w$} └{}\n", "", axis.iter().collect::<String>()));
    let fmt = |v: f64| if lay.x.si_ticks { si_tick(v) } else { tick(v) };
    let (l, h) = (fmt(lay.x.lo), fmt(lay.x.hi));
    let gap = cols.saturating_sub(l.chars().count() + h.chars().count());
    out.push_str(&format!("{:>label_w$}  {l}{}{h}\n", "", " ".repeat(gap)));
    let mut foot = format!(
        "{:>label_w$}  {}{}",
        "",
        lay.x.label,
        if lay.x.log { " (log)" } else { "" }
    );
    if !lay.undefined.is_empty() {
        foot.push_str(&format!(
            "   × undefined (NaN or ∞) at {} point{}",
            lay.undefined.len(),
            if lay.undefined.len() == 1 { "" } else { "s" }
        ));
    }
    out.push_str(&foot);
    out.push('\n');
    out
}

/// The braille dot for column `dx` (0–1) and row `dy` (0–3) of a cell.
fn braille_bit(dx: usize, dy: usize) -> u8 {
    const BITS: [[u8; 4]; 2] = [[0x01, 0x02, 0x04, 0x40], [0x08, 0x10, 0x20, 0x80]];
    BITS[dx][dy]
}

fn paint(s: &str, i: usize, colour: bool) -> String {
    if colour {
        format!("\x1b[{}m{s}\x1b[0m", ANSI[i % ANSI.len()])
    } else {
        s.to_string()
    }
}
