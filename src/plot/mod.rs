//! Pictures of sweeps: SVG plots drawn with plotters, and quick text charts
//! for the terminal (`chart`).
//!
//! A plot has the shown values against the swept input in stacked panels:
//! magnitude (or the value itself, for a value that stays real) and phase,
//! or real and imaginary parts. Values of different units go to different
//! panels. Axis labels carry units with SI prefixes; a logarithmic sweep
//! gets a logarithmic x axis; a two-input grid is drawn as one curve per
//! value of the second input. Points where a value is NaN or infinite break
//! the curve and are marked with a red × along the bottom of the first
//! panel.
//!
//! `svg(&SweepResult, &PlotOptions) -> Result<String, String>` is the
//! library entry point (used by `ohmsheet sweep --plot` and by reports).

pub mod chart;
pub mod spread;

use plotters::coord::ranged1d::{AsRangedCoord, ValueFormatter};
use plotters::coord::Shift;
use plotters::prelude::*;

use crate::output::sweep::Parts;
use crate::sweep::{axis_index, finite, SweepResult};
use crate::units::format::{axis_unit, choose_prefix, fmt_sig};
use crate::units::{Kind, Quantity};

/// How to draw.
#[derive(Clone, Copy, Debug)]
pub struct PlotOptions {
    pub parts: Parts,
    /// Picture size in pixels; the height grows with the panels.
    pub width: u32,
    pub panel_height: u32,
}

impl Default for PlotOptions {
    fn default() -> PlotOptions {
        PlotOptions {
            parts: Parts::Polar,
            width: 900,
            panel_height: 280,
        }
    }
}

/// Most curves in one plot (series × values of a second input).
pub const MAX_CURVES: usize = 24;

/// Line colours, chosen to stay apart on white and in grey print.
const COLOURS: &[RGBColor] = &[
    RGBColor(0, 90, 181),
    RGBColor(220, 110, 0),
    RGBColor(0, 140, 70),
    RGBColor(150, 40, 150),
    RGBColor(120, 80, 40),
    RGBColor(0, 160, 180),
    RGBColor(90, 90, 90),
    RGBColor(200, 160, 0),
];
const MARK: RGBColor = RGBColor(200, 0, 0);

/// One line to draw: (x, y) pairs in plot units, NaN where the line breaks.
#[derive(Clone, Debug)]
pub struct Curve {
    pub label: String,
    pub colour: usize,
    pub points: Vec<(f64, f64)>,
}

/// One panel: its y label and curves, values already in the label's unit.
#[derive(Clone, Debug)]
pub struct Panel {
    pub ylabel: String,
    pub curves: Vec<Curve>,
}

/// The x axis: its label, the divisor for values, and whether it is log.
#[derive(Clone, Debug)]
pub struct XAxis {
    pub label: String,
    pub div: f64,
    pub log: bool,
    /// Tick labels carry SI prefixes (log axes in a base unit).
    pub si_ticks: bool,
    pub lo: f64,
    pub hi: f64,
}

/// What a plot shows, before drawing: also used by the text chart.
#[derive(Clone, Debug)]
pub struct Layout {
    pub title: String,
    pub x: XAxis,
    pub panels: Vec<Panel>,
    /// x positions (plot units) of points with a NaN or infinite value.
    pub undefined: Vec<f64>,
}

enum Part {
    Value,
    Phase,
    Re,
    Im,
}

fn unit_label(name: &str, unit: &str) -> String {
    if unit.is_empty() {
        name.to_string()
    } else {
        format!("{name} [{unit}]")
    }
}

/// Work out panels, curves and labels for a sweep.
pub fn layout(r: &SweepResult, parts: Parts) -> Result<Layout, String> {
    if r.axes.is_empty() || r.is_empty() {
        return Err("the sweep has no points".into());
    }
    let ax = &r.axes[0];
    let n = r.len();
    let families = if r.axes.len() > 1 { r.axes[1].count } else { 1 };
    if r.series.len() * families > MAX_CURVES {
        return Err(format!(
            "{} curves are too many for one plot (at most {MAX_CURVES}); show fewer cells or give the second input fewer points",
            r.series.len() * families
        ));
    }
    let xmax = (0..n).map(|p| r.x(0, p).abs()).fold(0.0, f64::max);
    let xdisplay = kept_display(ax.quantity, ax.display.as_ref());
    let (xunit, xdiv) = match (ax.log, xdisplay) {
        (_, Some(u)) => (u.symbol.clone(), u.factor),
        // Log ticks carry their own prefixes (100, 1k, 10k).
        (true, None) => (crate::units::format::unit_prefixable(ax.quantity).0, 1.0),
        (false, None) => axis_unit(ax.quantity, None, xmax),
    };
    let x = XAxis {
        si_ticks: ax.log && xdisplay.is_none(),
        label: unit_label(&ax.name, &xunit),
        div: xdiv,
        log: ax.log,
        lo: ax.start.min(ax.stop) / xdiv,
        hi: ax.start.max(ax.stop) / xdiv,
    };
    // Which parts each series needs.
    let real: Vec<bool> = r
        .values
        .iter()
        .map(|col| {
            col.iter()
                .filter(|z| finite(**z))
                .all(|z| z.im.abs() <= 1e-12 * z.norm())
        })
        .collect();
    let groups_of = |want: &dyn Fn(usize) -> bool| -> Vec<Vec<usize>> {
        let mut keys: Vec<String> = Vec::new();
        let mut groups: Vec<Vec<usize>> = Vec::new();
        for (k, s) in r.series.iter().enumerate() {
            if !want(k) {
                continue;
            }
            let key = group_key(s.quantity, s.display.as_ref());
            match keys.iter().position(|g| *g == key) {
                Some(i) => groups[i].push(k),
                None => {
                    keys.push(key);
                    groups.push(vec![k]);
                }
            }
        }
        groups
    };
    let mut specs: Vec<(Part, Vec<usize>)> = Vec::new();
    match parts {
        Parts::Polar | Parts::Both => {
            for g in groups_of(&|_| true) {
                specs.push((Part::Value, g));
            }
            let complex: Vec<usize> = (0..r.series.len()).filter(|&k| !real[k]).collect();
            if !complex.is_empty() {
                specs.push((Part::Phase, complex));
            }
        }
        Parts::Rect => {
            for g in groups_of(&|_| true) {
                specs.push((Part::Re, g));
            }
            for g in groups_of(&|k| !real[k]) {
                specs.push((Part::Im, g));
            }
        }
    }
    let mut panels = Vec::new();
    for (part, members) in specs {
        let value = |k: usize, p: usize| -> f64 {
            let z = r.values[k][p];
            if !finite(z) {
                return f64::NAN;
            }
            match part {
                Part::Value if real[k] => z.re,
                Part::Value => crate::engine::ops::abs(z),
                Part::Phase => crate::engine::ops::arg(z).to_degrees(),
                Part::Re => z.re,
                Part::Im => z.im,
            }
        };
        let s0 = &r.series[members[0]];
        let ymax = members
            .iter()
            .flat_map(|&k| (0..n).map(move |p| (k, p)))
            .map(|(k, p)| value(k, p).abs())
            .filter(|v| v.is_finite())
            .fold(0.0, f64::max);
        let (unit, div) = match part {
            Part::Phase => ("°".to_string(), 1.0),
            _ => {
                let q = s0.quantity;
                let d = kept_display(q, s0.display.as_ref());
                if q.kind == Kind::Angle && d.is_none() {
                    ("°".to_string(), std::f64::consts::PI / 180.0)
                } else {
                    axis_unit(q, d, ymax)
                }
            }
        };
        let one = members.len() == 1;
        let name = |k: usize| r.series[k].name.clone();
        let what = match part {
            Part::Value if one && real[members[0]] => name(members[0]),
            Part::Value if one => format!("|{}|", name(members[0])),
            Part::Value if members.iter().all(|&k| real[k]) && members.len() <= 3 => {
                members.iter().map(|&k| name(k)).collect::<Vec<_>>().join(", ")
            }
            Part::Value if members.iter().all(|&k| real[k]) => "value".to_string(),
            Part::Value => "magnitude".to_string(),
            Part::Phase => "phase".to_string(),
            Part::Re if one => format!("re {}", name(members[0])),
            Part::Re => "real part".to_string(),
            Part::Im if one => format!("im {}", name(members[0])),
            Part::Im => "imaginary part".to_string(),
        };
        let mut curves = Vec::new();
        for &k in &members {
            for fam in 0..families {
                let mut pts = Vec::new();
                for p in 0..n {
                    if families > 1 && axis_index(&r.axes, 1, p) != fam {
                        continue;
                    }
                    pts.push((r.x(0, p) / x.div, value(k, p) / div));
                }
                let label = if families > 1 {
                    let a1 = &r.axes[1];
                    let v = a1.value(fam);
                    let f = crate::units::format::format_value(
                        num_complex::Complex64::new(v, 0.0),
                        a1.quantity,
                        a1.display.as_ref(),
                        crate::units::format::Style { digits: 4 },
                    );
                    format!("{}, {} = {}", name(k), a1.name, f.rect)
                } else {
                    name(k)
                };
                curves.push(Curve {
                    label,
                    colour: (k * families + fam) % COLOURS.len(),
                    points: pts,
                });
            }
        }
        panels.push(Panel {
            ylabel: unit_label(&what, &unit),
            curves,
        });
    }
    let undefined: Vec<f64> = r.undefined_points().into_iter().map(|p| r.x(0, p) / x.div).collect();
    let names: Vec<&str> = r.series.iter().map(|s| s.name.as_str()).collect();
    let title = r
        .title
        .clone()
        .unwrap_or_else(|| format!("{} against {}", names.join(", "), ax.name));
    Ok(Layout {
        title,
        x,
        panels,
        undefined,
    })
}

/// The display unit a plot keeps: one the sheet chose that is more than a
/// prefixed SI unit (°, %, pu, Wh, km). A prefixed SI unit (`µF`, `kHz`,
/// often just the unit an input was written in) gives way to a prefix
/// chosen from the plotted values.
fn kept_display(q: Quantity, display: Option<&crate::units::Unit>) -> Option<&crate::units::Unit> {
    let u = display?;
    let (sym, prefixable) = crate::units::format::unit_prefixable(q);
    let e = u.factor.log10() / 3.0;
    let prefixed = prefixable && u.symbol.ends_with(sym.as_str()) && (e - e.round()).abs() < 1e-9;
    (!prefixed).then_some(u)
}

fn group_key(q: Quantity, display: Option<&crate::units::Unit>) -> String {
    match display {
        Some(u) if kept_display(q, Some(u)).is_some() => u.symbol.clone(),
        Some(_) => crate::units::format::unit_prefixable(q).0,
        None if q.kind == Kind::Angle => "angle".into(),
        None => crate::units::format::unit_prefixable(q).0,
    }
}

/// A tick value with an SI prefix (`1k`, `250m`) for logarithmic axes.
pub fn si_tick(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return fmt_sig(v, 3);
    }
    let (p, f) = choose_prefix(v.abs());
    format!("{}{p}", fmt_sig(v / f, 3))
}

/// A tick value on a linear axis (its prefix is in the label).
pub fn tick(v: f64) -> String {
    // Ticks are round numbers; trim float noise like 0.30000000000000004.
    let s = fmt_sig(v, 6);
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

fn y_range(panel: &Panel) -> (f64, f64) {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for c in &panel.curves {
        for &(_, y) in &c.points {
            if y.is_finite() {
                lo = lo.min(y);
                hi = hi.max(y);
            }
        }
    }
    if !lo.is_finite() {
        return (-1.0, 1.0);
    }
    if hi - lo <= 1e-12 * hi.abs().max(lo.abs()) {
        let pad = if hi == 0.0 { 1.0 } else { 0.1 * hi.abs() };
        return (lo - pad, hi + pad);
    }
    let pad = 0.05 * (hi - lo);
    (lo - pad, hi + pad)
}

/// Segments of a curve between undefined points.
fn segments(points: &[(f64, f64)]) -> Vec<Vec<(f64, f64)>> {
    let mut out = Vec::new();
    let mut cur = Vec::new();
    for &(x, y) in points {
        if x.is_finite() && y.is_finite() {
            cur.push((x, y));
        } else if !cur.is_empty() {
            out.push(std::mem::take(&mut cur));
        }
    }
    if !cur.is_empty() {
        out.push(cur);
    }
    out
}

type Area<'a> = DrawingArea<SVGBackend<'a>, Shift>;

/// A rectangle in picture pixels: left, top, right, bottom.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Rect {
    pub x0: i32,
    pub y0: i32,
    pub x1: i32,
    pub y1: i32,
}

impl Rect {
    pub fn contains(&self, (x, y): (i32, i32)) -> bool {
        (self.x0..=self.x1).contains(&x) && (self.y0..=self.y1).contains(&y)
    }
}

/// Where things landed in a drawn plot, in picture pixels: for tests that
/// look at the rendered picture.
#[derive(Clone, Debug)]
pub struct Geometry {
    pub width: u32,
    pub height: u32,
    pub panels: Vec<PanelGeometry>,
}

/// A colour: red, green, blue.
pub type Rgb = (u8, u8, u8);

#[derive(Clone, Debug)]
pub struct PanelGeometry {
    /// The plotting area (inside the axes).
    pub plot: Rect,
    /// The legend's box, beside the plotting area.
    pub legend: Rect,
    /// Each curve's colour and its points, as drawn.
    pub curves: Vec<(Rgb, Vec<(i32, i32)>)>,
    /// The marks for undefined points.
    pub marks: Vec<(i32, i32)>,
}

/// One line of a legend.
enum Entry<'a> {
    Line(&'a str, RGBColor),
    Mark(String),
}

fn legend_entries<'a>(lay: &Layout, panel: &'a Panel, first: bool) -> Vec<Entry<'a>> {
    let mut v: Vec<Entry> = panel
        .curves
        .iter()
        .map(|c| Entry::Line(c.label.as_str(), COLOURS[c.colour]))
        .collect();
    if first && !lay.undefined.is_empty() {
        v.push(Entry::Mark(format!(
            "undefined (NaN or ∞): {} point{}",
            lay.undefined.len(),
            if lay.undefined.len() == 1 { "" } else { "s" }
        )));
    }
    v
}

/// Legend text size and row height, in pixels.
const LEGEND_FONT: u32 = 13;
const LEGEND_ROW: i32 = 19;
/// Room for the sample line before a legend's text, and around it.
const LEGEND_SWATCH: i32 = 30;
const LEGEND_PAD: i32 = 8;
/// The widest a legend column may take of the picture.
const LEGEND_MAX_SHARE: f64 = 0.4;

/// A generous width for text in the legend font (sans-serif glyphs average
/// well under 0.6 em; digits are 0.55 em).
fn text_width(s: &str) -> i32 {
    (s.chars().count() as f64 * 0.6 * LEGEND_FONT as f64).ceil() as i32
}

/// Shorten a label to fit `max` pixels, ending in `…`.
fn fit(s: &str, max: i32) -> String {
    if text_width(s) <= max {
        return s.to_string();
    }
    let keep = ((max as f64 / (0.6 * LEGEND_FONT as f64)) as usize).saturating_sub(1);
    let mut t: String = s.chars().take(keep).collect();
    t.push('…');
    t
}

fn entry_text(e: &Entry) -> String {
    match e {
        Entry::Line(l, _) => l.to_string(),
        Entry::Mark(l) => l.clone(),
    }
}

/// Draw a legend in its own column beside the plotting area (never over
/// the curves); returns its box.
fn draw_legend(area: &Area, entries: &[Entry], top: i32) -> Result<Rect, String> {
    let e = |e: &dyn std::fmt::Display| e.to_string();
    let (w, _) = area.dim_in_pixel();
    let (bx, by) = area.get_base_pixel();
    let x0 = 4;
    let x1 = w as i32 - 8;
    let y0 = top;
    let y1 = top + 2 * LEGEND_PAD + LEGEND_ROW * entries.len() as i32 - (LEGEND_ROW - LEGEND_FONT as i32);
    area.draw(&Rectangle::new(
        [(x0, y0), (x1, y1)],
        ShapeStyle::from(&RGBColor(160, 160, 160)).stroke_width(1),
    ))
    .map_err(|x| e(&x))?;
    let font = ("sans-serif", LEGEND_FONT).into_font().color(&BLACK);
    let text_max = x1 - x0 - LEGEND_SWATCH - LEGEND_PAD;
    for (i, en) in entries.iter().enumerate() {
        let y = y0 + LEGEND_PAD + LEGEND_ROW * i as i32;
        let mid = y + LEGEND_FONT as i32 / 2;
        let sx = x0 + LEGEND_PAD;
        match en {
            Entry::Line(_, colour) => area
                .draw(&PathElement::new(
                    vec![(sx, mid), (sx + 18, mid)],
                    ShapeStyle::from(colour).stroke_width(2),
                ))
                .map_err(|x| e(&x))?,
            Entry::Mark(_) => area
                .draw(&Cross::new((sx + 9, mid), 5, ShapeStyle::from(&MARK).stroke_width(2)))
                .map_err(|x| e(&x))?,
        }
        area.draw(&Text::new(
            fit(&entry_text(en), text_max),
            (x0 + LEGEND_SWATCH, y),
            font.clone(),
        ))
        .map_err(|x| e(&x))?;
    }
    Ok(Rect {
        x0: bx + x0,
        y0: by + y0,
        x1: bx + x1,
        y1: by + y1,
    })
}

/// Draw one panel's axes and curves; the legend is drawn beside it.
fn draw_panel<'a, X>(
    area: &Area<'a>,
    xspec: X,
    lay: &Layout,
    panel: &Panel,
    first: bool,
    last: bool,
) -> Result<PanelGeometry, String>
where
    X: AsRangedCoord<Value = f64>,
    X::CoordDescType: ValueFormatter<f64>,
{
    let e = |e: &dyn std::fmt::Display| e.to_string();
    let (ylo, yhi) = y_range(panel);
    let mut chart = ChartBuilder::on(area)
        .margin_left(12)
        .margin_right(16)
        .margin_top(8)
        .margin_bottom(4)
        .x_label_area_size(if last { 44 } else { 24 })
        .y_label_area_size(78)
        .build_cartesian_2d(xspec, ylo..yhi)
        .map_err(|x| e(&x))?;
    let si = lay.x.si_ticks;
    let xfmt = move |v: &f64| if si { si_tick(*v) } else { tick(*v) };
    let yfmt = |v: &f64| tick(*v);
    let mut mesh = chart.configure_mesh();
    mesh.x_label_formatter(&xfmt)
        .y_label_formatter(&yfmt)
        .y_desc(panel.ylabel.as_str())
        .x_labels(10)
        .y_labels(7)
        .label_style(("sans-serif", 13))
        .axis_desc_style(("sans-serif", 15))
        .light_line_style(RGBColor(235, 235, 235))
        .bold_line_style(RGBColor(205, 205, 205));
    if last {
        mesh.x_desc(lay.x.label.as_str());
    }
    mesh.draw().map_err(|x| e(&x))?;
    let (px, py) = chart.plotting_area().get_pixel_range();
    let plot = Rect {
        x0: px.start,
        y0: py.start,
        x1: px.end - 1,
        y1: py.end - 1,
    };
    let mut curves = Vec::new();
    for c in &panel.curves {
        let colour = COLOURS[c.colour];
        let style = ShapeStyle::from(&colour).stroke_width(2);
        let mut drawn = Vec::new();
        for seg in segments(&c.points) {
            drawn.extend(seg.iter().map(|p| chart.backend_coord(p)));
            // A lone point between undefined ones shows as a dot.
            if seg.len() == 1 {
                chart
                    .draw_series(std::iter::once(Circle::new(seg[0], 2, colour.filled())))
                    .map_err(|x| e(&x))?;
                continue;
            }
            chart.draw_series(LineSeries::new(seg, style)).map_err(|x| e(&x))?;
        }
        curves.push(((colour.0, colour.1, colour.2), drawn));
    }
    let mut marks = Vec::new();
    if first && !lay.undefined.is_empty() {
        let y = ylo + 0.02 * (yhi - ylo);
        let xs: Vec<f64> = lay.undefined.iter().copied().filter(|x| x.is_finite()).collect();
        marks.extend(xs.iter().map(|&x| chart.backend_coord(&(x, y))));
        chart
            .draw_series(
                xs.iter()
                    .map(|&x| Cross::new((x, y), 5, ShapeStyle::from(&MARK).stroke_width(2))),
            )
            .map_err(|x| e(&x))?;
    }
    Ok(PanelGeometry {
        plot,
        legend: plot,
        curves,
        marks,
    })
}

/// Draw a sweep as an SVG document.
pub fn svg(r: &SweepResult, o: &PlotOptions) -> Result<String, String> {
    svg_with_geometry(r, o).map(|(s, _)| s)
}

/// Draw a sweep as an SVG document, and say where its parts landed.
///
/// Each panel's legend stands in a column of its own to the right of the
/// plotting area, so it never covers a curve; the column is as wide as the
/// longest label needs (at most 40 % of the picture; longer labels end in
/// `…`), and a panel grows taller when its legend needs the room. Every
/// curve lies inside its panel's axis ranges: the y range holds every
/// finite value with a margin, and the x range is the swept range.
pub fn svg_with_geometry(r: &SweepResult, o: &PlotOptions) -> Result<(String, Geometry), String> {
    let lay = layout(r, o.parts)?;
    let entries: Vec<Vec<Entry>> = lay
        .panels
        .iter()
        .enumerate()
        .map(|(i, p)| legend_entries(&lay, p, i == 0))
        .collect();
    let widest = entries
        .iter()
        .flatten()
        .map(|e| text_width(&entry_text(e)))
        .max()
        .unwrap_or(0);
    let legend_w = (widest + LEGEND_SWATCH + 2 * LEGEND_PAD + 12)
        .min((o.width as f64 * LEGEND_MAX_SHARE) as i32)
        .max(0) as u32;
    let rows = entries.iter().map(Vec::len).max().unwrap_or(0) as u32;
    let panel_h = o
        .panel_height
        .max(rows * LEGEND_ROW as u32 + 2 * LEGEND_PAD as u32 + 60);
    let title_h = 44u32;
    let h = title_h + panel_h * lay.panels.len() as u32 + 24;
    let mut buf = String::new();
    let mut panels = Vec::new();
    {
        let root = SVGBackend::with_string(&mut buf, (o.width, h)).into_drawing_area();
        let e = |e: &dyn std::fmt::Display| e.to_string();
        root.fill(&WHITE).map_err(|x| e(&x))?;
        let (top, rest) = root.split_vertically(title_h);
        top.draw(&Text::new(
            lay.title.clone(),
            (16, 14),
            ("sans-serif", 20).into_font().color(&BLACK),
        ))
        .map_err(|x| e(&x))?;
        let heights: Vec<u32> = (1..lay.panels.len() as u32).map(|i| i * panel_h).collect();
        let areas = rest.split_by_breakpoints(&[] as &[u32], &heights);
        let np = lay.panels.len();
        for (i, ((area, panel), ents)) in areas.iter().zip(&lay.panels).zip(&entries).enumerate() {
            let (first, last) = (i == 0, i + 1 == np);
            let (plot_area, legend_area) = area.split_horizontally(o.width - legend_w);
            let mut g = if lay.x.log {
                draw_panel(&plot_area, (lay.x.lo..lay.x.hi).log_scale(), &lay, panel, first, last)?
            } else {
                let (lo, hi) = if lay.x.lo == lay.x.hi {
                    (lay.x.lo - 1.0, lay.x.hi + 1.0)
                } else {
                    (lay.x.lo, lay.x.hi)
                };
                draw_panel(&plot_area, lo..hi, &lay, panel, first, last)?
            };
            let top = g.plot.y0 - legend_area.get_base_pixel().1;
            g.legend = draw_legend(&legend_area, ents, top)?;
            panels.push(g);
        }
        root.present().map_err(|x| e(&x))?;
    }
    Ok((
        buf,
        Geometry {
            width: o.width,
            height: h,
            panels,
        },
    ))
}
