//! Pictures of the analyses over the inputs' tolerances (`crate::spread`):
//! a histogram of a cell's Monte Carlo samples with its stated value and
//! coverage interval marked, and a ranking chart of which inputs move a
//! cell most — one horizontal bar per input, from the stated value to the
//! cell's value with that input at the low and at the high end of its
//! band, largest first.
//!
//! Drawn as plain SVG (no plotters: the shapes are few and their places
//! must be known exactly). Every picture also returns its `SpreadGeometry`
//! — the plotting area, each bar and each text's box — which
//! tests/spread_plot_render.rs checks against the rendered pixels.

use super::Rect;

/// Text size in pixels, and a generous width per character (sans-serif
/// glyphs average well under 0.6 em).
const FONT: i32 = 12;
const TITLE_FONT: i32 = 14;

fn text_w(s: &str, size: i32) -> i32 {
    (s.chars().count() as f64 * 0.6 * size as f64).ceil() as i32
}

/// Bars of the histogram; the low and high ends in the ranking chart.
pub const BAR: (u8, u8, u8) = (46, 94, 140);
pub const LOW: (u8, u8, u8) = (46, 94, 140);
pub const HIGH: (u8, u8, u8) = (214, 122, 32);
/// The coverage interval's band and the stated value's line.
const BAND: (u8, u8, u8) = (250, 232, 200);
const STATED: (u8, u8, u8) = (20, 20, 20);
const AXIS: (u8, u8, u8) = (60, 60, 60);

fn rgb(c: (u8, u8, u8)) -> String {
    format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2)
}

fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Where things landed, in picture pixels.
#[derive(Clone, Debug, Default)]
pub struct SpreadGeometry {
    pub width: u32,
    pub height: u32,
    /// The plotting area, inside the axes.
    pub plot: Rect,
    /// Every bar drawn (histogram bins with samples; ranking bars, both
    /// halves).
    pub bars: Vec<Rect>,
    /// The box of every text drawn (title, tick labels, input names,
    /// legend), generously sized.
    pub labels: Vec<Rect>,
}

struct Svg {
    body: String,
    geo: SpreadGeometry,
}

impl Svg {
    fn new(width: u32, height: u32) -> Svg {
        Svg {
            body: String::new(),
            geo: SpreadGeometry {
                width,
                height,
                ..SpreadGeometry::default()
            },
        }
    }

    /// Text with its left (`anchor` "start"), middle or right end at `x`
    /// and its baseline at `y`.
    fn text(&mut self, x: i32, y: i32, s: &str, size: i32, anchor: &str, bold: bool) {
        let w = text_w(s, size);
        let x0 = match anchor {
            "middle" => x - w / 2,
            "end" => x - w,
            _ => x,
        };
        self.geo.labels.push(Rect {
            x0,
            y0: y - size,
            x1: x0 + w,
            y1: y + size / 4,
        });
        self.body.push_str(&format!(
            "<text x=\"{x}\" y=\"{y}\" font-family=\"sans-serif\" font-size=\"{size}\" text-anchor=\"{anchor}\"{} fill=\"{}\">{}</text>\n",
            if bold { " font-weight=\"bold\"" } else { "" },
            rgb(STATED),
            esc(s)
        ));
    }

    fn rect(&mut self, r: Rect, fill: (u8, u8, u8), bar: bool) {
        if bar {
            self.geo.bars.push(r);
        }
        self.body.push_str(&format!(
            "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\"/>\n",
            r.x0,
            r.y0,
            (r.x1 - r.x0).max(1),
            (r.y1 - r.y0).max(1),
            rgb(fill)
        ));
    }

    fn line(&mut self, (x0, y0): (i32, i32), (x1, y1): (i32, i32), c: (u8, u8, u8), w: f64, dash: bool) {
        self.body.push_str(&format!(
            "<line x1=\"{x0}\" y1=\"{y0}\" x2=\"{x1}\" y2=\"{y1}\" stroke=\"{}\" stroke-width=\"{w}\"{}/>\n",
            rgb(c),
            if dash { " stroke-dasharray=\"4 3\"" } else { "" }
        ));
    }

    fn finish(self) -> (String, SpreadGeometry) {
        let (w, h) = (self.geo.width, self.geo.height);
        (
            format!(
                "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\">\n<rect width=\"{w}\" height=\"{h}\" fill=\"#ffffff\"/>\n{}</svg>\n",
                self.body
            ),
            self.geo,
        )
    }
}

/// Tick labels at `xs` (pixel, text) on a line, dropping any that would
/// overlap one already placed (the first ones win).
fn ticks(svg: &mut Svg, y_axis: i32, ticks: &[(i32, String)]) {
    let mut placed: Vec<(i32, i32)> = Vec::new();
    for (x, s) in ticks {
        let w = text_w(s, FONT);
        // Centred under its tick, shifted to stay inside the picture.
        let right = svg.geo.width as i32 - 2;
        let a = (x - w / 2).max(2).min(right - w);
        let b = a + w;
        if a < 2 || placed.iter().any(|&(p, q)| a < q + 8 && p < b + 8) {
            continue;
        }
        placed.push((a, b));
        svg.line((*x, y_axis), (*x, y_axis + 4), AXIS, 1.0, false);
        svg.text(a, y_axis + 18, s, FONT, "start", false);
    }
}

/// A histogram of one cell's samples.
pub struct HistogramPicture<'a> {
    pub title: &'a str,
    /// Under the axis: what is counted, e.g. `Vbus magnitude`.
    pub axis: &'a str,
    pub lo: f64,
    pub hi: f64,
    pub counts: &'a [u64],
    pub stated: f64,
    /// The coverage interval and its probability (0.95).
    pub interval: (f64, f64),
    pub probability: f64,
    /// A value as text, in the cell's unit.
    pub label: &'a dyn Fn(f64) -> String,
}

/// Draw a histogram: bins as bars over a shaded coverage interval, the
/// stated value as a dashed line, the counts' scale on the left.
pub fn histogram_svg(h: &HistogramPicture) -> (String, SpreadGeometry) {
    let (width, height) = (560u32, 260u32);
    let mut s = Svg::new(width, height);
    let legend_y = 40;
    let plot = Rect {
        x0: 56,
        y0: 56,
        x1: width as i32 - 24,
        y1: height as i32 - 58,
    };
    s.geo.plot = plot;
    s.text(plot.x0, 20, h.title, TITLE_FONT, "start", true);
    // Legend above the plotting area, so it never covers a bar.
    let band_text = format!("{:.0} % interval", h.probability * 100.0);
    s.rect(
        Rect {
            x0: plot.x0,
            y0: legend_y - 9,
            x1: plot.x0 + 16,
            y1: legend_y + 1,
        },
        BAND,
        false,
    );
    s.text(plot.x0 + 22, legend_y, &band_text, FONT, "start", false);
    let x2 = plot.x0 + 22 + text_w(&band_text, FONT) + 18;
    s.line((x2, legend_y - 4), (x2 + 16, legend_y - 4), STATED, 1.5, true);
    s.text(x2 + 22, legend_y, "stated value", FONT, "start", false);

    let (mut lo, mut hi) = (h.lo, h.hi);
    if hi.partial_cmp(&lo) != Some(std::cmp::Ordering::Greater) || !lo.is_finite() || !hi.is_finite() {
        let c = if lo.is_finite() { lo } else { 0.0 };
        let d = if c == 0.0 { 1.0 } else { c.abs() * 1e-3 };
        lo = c - d;
        hi = c + d;
    }
    let px = |x: f64| plot.x0 + ((x - lo) / (hi - lo) * (plot.x1 - plot.x0) as f64).round() as i32;
    let clampx = |x: i32| x.clamp(plot.x0, plot.x1);
    let (a, b) = (clampx(px(h.interval.0)), clampx(px(h.interval.1)));
    if h.interval.0.is_finite() && h.interval.1.is_finite() && b > a {
        s.rect(
            Rect {
                x0: a,
                y0: plot.y0,
                x1: b,
                y1: plot.y1,
            },
            BAND,
            false,
        );
    }
    let max = h.counts.iter().copied().max().unwrap_or(0);
    let n = h.counts.len().max(1) as f64;
    if max > 0 {
        for (k, &c) in h.counts.iter().enumerate() {
            if c == 0 {
                continue;
            }
            let x0 = plot.x0 + (k as f64 / n * (plot.x1 - plot.x0) as f64).round() as i32;
            let x1 = plot.x0 + ((k + 1) as f64 / n * (plot.x1 - plot.x0) as f64).round() as i32;
            let top = plot.y1 - (c as f64 / max as f64 * (plot.y1 - plot.y0) as f64).round() as i32;
            let gap = if x1 - x0 > 4 { 1 } else { 0 };
            s.rect(
                Rect {
                    x0: x0 + gap,
                    y0: top.min(plot.y1 - 1),
                    x1: (x1 - gap).max(x0 + gap + 1),
                    y1: plot.y1,
                },
                BAR,
                true,
            );
        }
    }
    if h.stated.is_finite() && h.stated >= lo && h.stated <= hi {
        let x = px(h.stated);
        s.line((x, plot.y0), (x, plot.y1), STATED, 1.5, true);
    }
    // Axes.
    s.line((plot.x0, plot.y1), (plot.x1, plot.y1), AXIS, 1.0, false);
    s.line((plot.x0, plot.y0), (plot.x0, plot.y1), AXIS, 1.0, false);
    s.line((plot.x0 - 4, plot.y0), (plot.x0, plot.y0), AXIS, 1.0, false);
    s.text(plot.x0 - 6, plot.y0 + 4, &max.to_string(), FONT, "end", false);
    s.text(plot.x0 - 6, plot.y1, "0", FONT, "end", false);
    let mid = (lo + hi) / 2.0;
    ticks(
        &mut s,
        plot.y1,
        &[
            (plot.x0, (h.label)(lo)),
            (plot.x1, (h.label)(hi)),
            (px(mid), (h.label)(mid)),
        ],
    );
    s.text(
        (plot.x0 + plot.x1) / 2,
        height as i32 - 12,
        &format!("{} (samples per bin)", h.axis),
        FONT,
        "middle",
        false,
    );
    s.finish()
}

/// One input's bar in a ranking chart: the cell with the input at the low
/// and at the high end of its band.
pub struct RankBar {
    pub label: String,
    pub low: f64,
    pub high: f64,
}

/// A ranking chart: one row per input, in the order given (largest first),
/// each a bar from the stated value to the cell's value with the input at
/// its low end (one colour) and at its high end (another).
pub fn ranking_svg(
    title: &str,
    axis: &str,
    stated: f64,
    bars: &[RankBar],
    label: &dyn Fn(f64) -> String,
) -> (String, SpreadGeometry) {
    const ROW: i32 = 26;
    const THICK: i32 = 16;
    let names_w = bars.iter().map(|b| text_w(&b.label, FONT)).max().unwrap_or(0);
    let left = (names_w + 20).max(60);
    let width = (left + 420).max(560) as u32;
    let top = 58;
    let height = (top + ROW * bars.len().max(1) as i32 + 60) as u32;
    let mut s = Svg::new(width, height);
    let plot = Rect {
        x0: left,
        y0: top,
        x1: width as i32 - 30,
        y1: top + ROW * bars.len().max(1) as i32,
    };
    s.geo.plot = plot;
    s.text(12, 20, title, TITLE_FONT, "start", true);
    let ly = 42;
    s.rect(
        Rect {
            x0: plot.x0,
            y0: ly - 10,
            x1: plot.x0 + 16,
            y1: ly,
        },
        LOW,
        false,
    );
    s.text(plot.x0 + 22, ly, "input at its low end", FONT, "start", false);
    let x2 = plot.x0 + 22 + text_w("input at its low end", FONT) + 18;
    s.rect(
        Rect {
            x0: x2,
            y0: ly - 10,
            x1: x2 + 16,
            y1: ly,
        },
        HIGH,
        false,
    );
    s.text(x2 + 22, ly, "at its high end", FONT, "start", false);

    let vals = bars
        .iter()
        .flat_map(|b| [b.low, b.high])
        .chain([stated])
        .filter(|v| v.is_finite());
    let (mut lo, mut hi) = vals.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| (a.min(v), b.max(v)));
    if hi.partial_cmp(&lo) != Some(std::cmp::Ordering::Greater) {
        let c = if lo.is_finite() { lo } else { 0.0 };
        let d = if c == 0.0 { 1.0 } else { c.abs() * 1e-3 };
        lo = c - d;
        hi = c + d;
    }
    let pad = (hi - lo) * 0.05;
    let (lo, hi) = (lo - pad, hi + pad);
    let px = |x: f64| plot.x0 + ((x - lo) / (hi - lo) * (plot.x1 - plot.x0) as f64).round() as i32;
    let xs = px(stated);
    for (k, b) in bars.iter().enumerate() {
        let yc = plot.y0 + ROW * k as i32 + ROW / 2;
        s.text(plot.x0 - 10, yc + 4, &b.label, FONT, "end", false);
        for (v, c) in [(b.low, LOW), (b.high, HIGH)] {
            if !v.is_finite() || !stated.is_finite() {
                continue;
            }
            let x = px(v);
            if x == xs {
                continue;
            }
            s.rect(
                Rect {
                    x0: x.min(xs),
                    y0: yc - THICK / 2,
                    x1: x.max(xs),
                    y1: yc + THICK / 2,
                },
                c,
                true,
            );
        }
    }
    if stated.is_finite() {
        s.line((xs, plot.y0), (xs, plot.y1), STATED, 1.5, false);
    }
    s.line((plot.x0, plot.y1), (plot.x1, plot.y1), AXIS, 1.0, false);
    ticks(
        &mut s,
        plot.y1,
        &[(xs, label(stated)), (plot.x0, label(lo)), (plot.x1, label(hi))],
    );
    s.text(
        (plot.x0 + plot.x1) / 2,
        height as i32 - 12,
        &format!("{axis}; the line is the stated value"),
        FONT,
        "middle",
        false,
    );
    s.finish()
}
