//! Plots looked at as pictures: each SVG is rendered to a PNG with resvg
//! and checked where it matters to a reader — no legend covers a curve,
//! every curve lies inside its panel's axes, and the curves are really
//! visible where their points are. For one and several curves, one and
//! several panels, a grid of curves (two inputs) and a plot with undefined
//! points. The PNGs are left in `$CARGO_TARGET_TMPDIR/plots/` to look at.
//!
//! Two views are checked against each other: where the plot says it drew
//! things (`plot::Geometry`) and what the SVG text holds (its polylines),
//! then the rendered pixels.

use std::path::PathBuf;

use ohmsheet::plot::{svg_with_geometry, Geometry, PlotOptions, Rect};
use ohmsheet::sheet::Sheet;
use ohmsheet::sweep::{sweep, AxisRequest, SweepRequest, SweepResult};

/// Invented circuits. A source behind 5 Ω into a load R (the power
/// delivered peaks at R = 5 Ω, the matched load; common practice), and a
/// series RLC (|I| peaks at f0 = 1/(2π√(LC)), from memory).
const DIVIDER: &str = "Vs = 48 V\nRs = 5 Ω\nR = 10 Ω\nI = Vs / (Rs + R)\nP = re(I^2 * R)\nPs = re(I^2 * Rs)\n";
const RLC: &str =
    "V = 10 V\nR = 12 Ω\nL = 20 mH\nC = 1.5 µF\nf = 1 kHz\nw = 2*pi*f\nZ = R + j*w*L + 1/(j*w*C)\nI = V / Z\n";
const BUS: &str = "Vs = 480 V\nZs = (0.05 + j0.4) Ω\nZl = (3 + j2) Ω\nf = 60 Hz\nC = 100 µF\nZc = 1/(j*2*pi*f*C)\nZbus = Zl || Zc\nVload = Vs * Zbus / (Zs + Zbus)\n";

fn run(text: &str, vary: &[(&str, usize, bool)], show: &[&str]) -> SweepResult {
    let req = SweepRequest {
        vary: vary
            .iter()
            .map(|&(range, points, log)| AxisRequest {
                range,
                points: Some(points),
                step: None,
                log,
            })
            .collect(),
        show: show.to_vec(),
        max_points: 100_000,
    };
    sweep(Sheet::from_text("plot.ohm", text), &req).expect("the sweep runs")
}

struct Picture {
    geo: Geometry,
    svg: String,
    png: resvg::tiny_skia::Pixmap,
}

fn draw(name: &str, r: &SweepResult) -> Picture {
    let (svg, geo) = svg_with_geometry(r, &PlotOptions::default()).expect("the plot draws");
    let mut opt = resvg::usvg::Options::default();
    opt.fontdb_mut().load_system_fonts();
    // plotters asks for the generic `sans-serif`; map it to a font every
    // Debian-like system has, so the text is drawn (and can be looked at).
    opt.fontdb_mut().set_sans_serif_family("DejaVu Sans");
    let tree = resvg::usvg::Tree::from_str(&svg, &opt).expect("the SVG parses");
    let size = tree.size().to_int_size();
    assert_eq!((size.width(), size.height()), (geo.width, geo.height));
    let mut png = resvg::tiny_skia::Pixmap::new(size.width(), size.height()).unwrap();
    resvg::render(&tree, resvg::tiny_skia::Transform::default(), &mut png.as_mut());
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("plots");
    std::fs::create_dir_all(&dir).unwrap();
    png.save_png(dir.join(format!("{name}.png"))).unwrap();
    Picture { geo, svg, png }
}

fn overlap(a: &Rect, b: &Rect) -> bool {
    a.x0 <= b.x1 && b.x0 <= a.x1 && a.y0 <= b.y1 && b.y0 <= a.y1
}

fn pixel(p: &resvg::tiny_skia::Pixmap, x: i32, y: i32) -> Option<(u8, u8, u8)> {
    if x < 0 || y < 0 {
        return None;
    }
    p.pixel(x as u32, y as u32).map(|c| {
        let c = c.demultiply();
        (c.red(), c.green(), c.blue())
    })
}

fn near(a: (u8, u8, u8), b: (u8, u8, u8), tol: i32) -> bool {
    let d = |x: u8, y: u8| (x as i32 - y as i32).abs();
    d(a.0, b.0) + d(a.1, b.1) + d(a.2, b.2) <= tol
}

/// The polylines an SVG draws with a 2-pixel stroke (curves and legend
/// samples), as (stroke colour, points).
fn thick_polylines(svg: &str) -> Vec<(String, Vec<(f64, f64)>)> {
    let doc = roxmltree::Document::parse(svg).unwrap();
    doc.descendants()
        .filter(|n| n.has_tag_name("polyline") && n.attribute("stroke-width") == Some("2"))
        .map(|n| {
            let pts = n
                .attribute("points")
                .unwrap_or("")
                .split_whitespace()
                .filter_map(|p| p.split_once(','))
                .map(|(x, y)| (x.parse().unwrap(), y.parse().unwrap()))
                .collect();
            (n.attribute("stroke").unwrap_or("").to_string(), pts)
        })
        .collect()
}

/// Everything a reader needs: checked on one picture.
fn check(name: &str, r: &SweepResult, panels: usize, curves_per_panel: &[usize]) {
    let pic = draw(name, r);
    let g = &pic.geo;
    assert_eq!(g.panels.len(), panels, "{name}");
    for (i, p) in g.panels.iter().enumerate() {
        assert_eq!(p.curves.len(), curves_per_panel[i], "{name} panel {i}");
        // The legend stands beside the plotting area, inside the picture.
        assert!(
            !overlap(&p.legend, &p.plot),
            "{name} panel {i}: legend {:?} on plot {:?}",
            p.legend,
            p.plot
        );
        assert!(
            p.legend.x1 < g.width as i32 && p.legend.y0 >= 0,
            "{name}: {:?}",
            p.legend
        );
        for (colour, pts) in &p.curves {
            assert!(!pts.is_empty(), "{name}: an empty curve");
            for &pt in pts {
                // Inside its panel's axes (the plotting area)…
                assert!(
                    p.plot.contains(pt),
                    "{name} panel {i}: point {pt:?} outside {:?}",
                    p.plot
                );
                // …and under no legend box, of this panel or another.
                for q in &g.panels {
                    assert!(
                        !q.legend.contains(pt),
                        "{name}: point {pt:?} under legend {:?}",
                        q.legend
                    );
                }
                // Visible: within 2 px of the point the picture has the
                // curve's colour or another curve's (where they cross).
                let seen = (-2..=2)
                    .flat_map(|dx| (-2..=2).map(move |dy| (dx, dy)))
                    .any(|(dx, dy)| {
                        pixel(&pic.png, pt.0 + dx, pt.1 + dy).is_some_and(|c| {
                            near(c, *colour, 90)
                                || g.panels.iter().flat_map(|q| &q.curves).any(|(o, _)| near(c, *o, 90))
                        })
                    });
                assert!(seen, "{name} panel {i}: curve {colour:?} not visible at {pt:?}");
            }
        }
        for &m in &p.marks {
            assert!(p.plot.contains(m) && !p.legend.contains(m), "{name}: mark {m:?}");
        }
        // The legend's frame is drawn where the plot says it is.
        let mid = (p.legend.y0 + p.legend.y1) / 2;
        let frame = (-1..=1).any(|d| {
            pixel(&pic.png, p.legend.x0 + d, mid)
                .is_some_and(|c| near(c, (160, 160, 160), 200) && !near(c, (255, 255, 255), 60))
        });
        assert!(frame, "{name} panel {i}: no legend frame at {:?}", p.legend);
    }
    // What the SVG text itself draws: every thick line is a curve inside a
    // plotting area, or a legend's sample inside its legend box.
    let lines = thick_polylines(&pic.svg);
    let total: usize = curves_per_panel.iter().sum();
    assert!(
        lines.len() >= 2 * total,
        "{name}: {} thick lines for {total} curves",
        lines.len()
    );
    for (stroke, pts) in &lines {
        let inside = |r: &Rect| {
            pts.iter()
                .all(|&(x, y)| r.contains((x.round() as i32, y.round() as i32)))
        };
        let in_plot = g.panels.iter().any(|p| inside(&p.plot));
        let in_legend = g.panels.iter().any(|p| inside(&p.legend));
        assert!(
            in_plot || in_legend,
            "{name}: a {stroke} line outside every plot and legend: {pts:?}"
        );
        if in_plot {
            for p in &g.panels {
                assert!(
                    !pts.iter()
                        .any(|&(x, y)| p.legend.contains((x.round() as i32, y.round() as i32))),
                    "{name}: a curve under a legend"
                );
            }
        }
    }
}

#[test]
fn one_curve_one_panel() {
    // P against R rises to its peak at the matched load and falls: a
    // legend in the upper corner would sit on the peak.
    let r = run(DIVIDER, &[("R=0.5Ω..30Ω", 200, false)], &["P"]);
    check("one-curve-one-panel", &r, 1, &[1]);
}

#[test]
fn several_curves_one_panel() {
    let r = run(DIVIDER, &[("R=0.5Ω..30Ω", 200, false)], &["P", "Ps"]);
    check("two-curves-one-panel", &r, 1, &[2]);
}

#[test]
fn one_curve_two_panels() {
    // |I| peaks at resonance, phase runs from +90° to −90°.
    let r = run(RLC, &[("f=100Hz..100kHz", 301, true)], &["I"]);
    check("one-curve-two-panels", &r, 2, &[1, 1]);
}

#[test]
fn several_curves_several_panels() {
    let r = run(RLC, &[("f=100Hz..100kHz", 301, true)], &["I", "Z"]);
    check("two-curves-three-panels", &r, 3, &[1, 1, 2]);
}

#[test]
fn a_grid_of_curves_two_panels() {
    // One curve per value of R: a taller legend, the panels grow for it.
    let r = run(RLC, &[("f=300Hz..3kHz", 120, true), ("R=5Ω..60Ω", 12, false)], &["I"]);
    check("grid-two-panels", &r, 2, &[12, 12]);
}

#[test]
fn undefined_points_are_marked_outside_the_legend() {
    // At C = 0 the capacitor's impedance is infinite (an open element).
    let r = run(BUS, &[("C=0..2mF", 81, false)], &["Zc", "Vload"]);
    assert!(!r.undefined_points().is_empty());
    let pic = draw("undefined-points", &r);
    assert!(!pic.geo.panels[0].marks.is_empty());
    check(
        "undefined-points",
        &r,
        pic.geo.panels.len(),
        &pic.geo.panels.iter().map(|p| p.curves.len()).collect::<Vec<_>>(),
    );
}

/// The demo sheet's declared sweep, as the README shows it (the committed
/// SVG is this drawing: `sweep::the_demo_plot_is_the_tools_own_drawing`).
#[test]
fn the_demo_plot() {
    let path = crate::common::repo("sheets-demo/pump-station-bank-search.ohm");
    let sheet = Sheet::load(&path).expect("the demo sheet loads");
    let model = ohmsheet::engine::compile(&sheet);
    let runs = ohmsheet::sweep::declared::run_declared(&model);
    let r = runs[0].as_ref().expect("the declared sweep runs");
    let pic = draw("pump-station-bank-search", r);
    let counts: Vec<usize> = pic.geo.panels.iter().map(|p| p.curves.len()).collect();
    check("pump-station-bank-search", r, counts.len(), &counts);
}
