//! The spread pictures looked at as pictures (issue 18): a Monte Carlo
//! histogram and a ranking chart are rendered to PNG with resvg and
//! checked where it matters to a reader — every bar lies inside the axes,
//! no text sits on a bar, the bars are really drawn where the picture says,
//! and a ranking chart's bars point the way the closed form says. The
//! PNGs are left in `$CARGO_TARGET_TMPDIR/spread-plots/` to look at.
//!
//! The sheet is a voltage divider, Vout = Vs·R2/(R1 + R2): Vout rises with
//! R2 and falls with R1 (the divider rule, common practice).

use std::path::PathBuf;

use ohmsheet::plot::spread::{histogram_svg, ranking_svg, HistogramPicture, RankBar, SpreadGeometry, BAR, HIGH, LOW};
use ohmsheet::plot::Rect;
use ohmsheet::sheet::Sheet;
use ohmsheet::spread::{monte_carlo, plan_for, sensitivities, McOptions};

const DIVIDER: &str = "Vs = 10 V\nR_source_side_long_name = 10 Ω within 10 %\nR2 = 10 Ω within -0 % .. +20 %\n\
Rl = 1 kΩ among 500 Ω, 1 kΩ, 2 kΩ\nVout = Vs * (R2 || Rl) / (R_source_side_long_name + (R2 || Rl))\n";

fn png(name: &str, svg: &str, geo: &SpreadGeometry) -> resvg::tiny_skia::Pixmap {
    let mut opt = resvg::usvg::Options::default();
    opt.fontdb_mut().load_system_fonts();
    opt.fontdb_mut().set_sans_serif_family("DejaVu Sans");
    let tree = resvg::usvg::Tree::from_str(svg, &opt).expect("the SVG parses");
    let size = tree.size().to_int_size();
    assert_eq!((size.width(), size.height()), (geo.width, geo.height));
    let mut p = resvg::tiny_skia::Pixmap::new(size.width(), size.height()).unwrap();
    resvg::render(&tree, resvg::tiny_skia::Transform::default(), &mut p.as_mut());
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("spread-plots");
    std::fs::create_dir_all(&dir).unwrap();
    p.save_png(dir.join(format!("{name}.png"))).unwrap();
    p
}

fn pixel(p: &resvg::tiny_skia::Pixmap, x: i32, y: i32) -> (u8, u8, u8) {
    let c = p.pixel(x as u32, y as u32).unwrap().demultiply();
    (c.red(), c.green(), c.blue())
}

fn near(a: (u8, u8, u8), b: (u8, u8, u8)) -> bool {
    let d = |x: u8, y: u8| (x as i32 - y as i32).abs();
    d(a.0, b.0) + d(a.1, b.1) + d(a.2, b.2) <= 40
}

fn overlap(a: &Rect, b: &Rect) -> bool {
    a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1
}

/// What every spread picture must do: bars inside the axes and visible,
/// text inside the picture and on no bar (by geometry, and by pixels: no
/// bar colour inside a text's box).
fn check(name: &str, svg: &str, g: &SpreadGeometry, colours: &[(u8, u8, u8)]) -> resvg::tiny_skia::Pixmap {
    let p = png(name, svg, g);
    for b in &g.bars {
        assert!(
            g.plot.x0 <= b.x0 && b.x1 <= g.plot.x1 && g.plot.y0 <= b.y0 && b.y1 <= g.plot.y1,
            "{name}: bar {b:?} outside the axes {:?}",
            g.plot
        );
        let (cx, cy) = ((b.x0 + b.x1) / 2, (b.y0 + b.y1) / 2);
        if b.x1 - b.x0 >= 3 && b.y1 - b.y0 >= 3 {
            let c = pixel(&p, cx, cy);
            assert!(
                colours.iter().any(|&k| near(c, k)),
                "{name}: bar {b:?} not drawn ({c:?})"
            );
        }
    }
    for l in &g.labels {
        assert!(
            l.x0 >= 0 && l.y0 >= 0 && l.x1 <= g.width as i32 && l.y1 <= g.height as i32,
            "{name}: text {l:?} outside the picture"
        );
        for b in &g.bars {
            assert!(!overlap(l, b), "{name}: text {l:?} on bar {b:?}");
        }
        for x in l.x0.max(0)..l.x1.min(g.width as i32) {
            for y in l.y0.max(0)..l.y1.min(g.height as i32) {
                let c = pixel(&p, x, y);
                assert!(
                    !colours.iter().any(|&k| near(c, k)) || !g.bars.iter().any(|b| b.contains((x, y))),
                    "{name}: a bar's colour under text at {x},{y}"
                );
            }
        }
    }
    // Text boxes do not overlap one another.
    for (i, a) in g.labels.iter().enumerate() {
        for b in &g.labels[i + 1..] {
            assert!(!overlap(a, b), "{name}: texts {a:?} and {b:?} overlap");
        }
    }
    p
}

fn plan() -> ohmsheet::spread::Plan {
    plan_for(Sheet::from_text("div.ohm", DIVIDER), Some(&["Vout".to_string()])).expect("a plan")
}

#[test]
fn a_histogram_stays_inside_its_axes_and_clear_of_its_text() {
    let plan = plan();
    let mc = monte_carlo(
        &plan,
        &McOptions {
            samples: 20_000,
            seed: 5,
            bins: 40,
            coverage: 0.95,
        },
    );
    let cell = &mc.cells[0];
    let label = |x: f64| format!("{x:.4} V");
    let (svg, g) = histogram_svg(&HistogramPicture {
        title: "Vout — 20000 samples, seed 5",
        axis: "Vout",
        lo: cell.histogram.lo,
        hi: cell.histogram.hi,
        counts: &cell.histogram.counts,
        stated: cell.nominal,
        interval: cell.coverage,
        probability: 0.95,
        label: &label,
    });
    let nonzero = cell.histogram.counts.iter().filter(|&&c| c > 0).count();
    assert_eq!(g.bars.len(), nonzero, "one bar per bin with samples");
    // The tallest bin reaches the top of the axes.
    assert_eq!(g.bars.iter().map(|b| b.y0).min(), Some(g.plot.y0));
    check("histogram", &svg, &g, &[BAR]);
}

#[test]
fn a_ranking_chart_points_the_way_the_divider_rule_says() {
    let plan = plan();
    let s = sensitivities(&plan);
    let cell = &s.cells[0];
    let bars: Vec<RankBar> = cell
        .rows
        .iter()
        .map(|r| RankBar {
            label: plan.inputs[r.input].name.clone(),
            low: r.low,
            high: r.high,
        })
        .collect();
    let label = |x: f64| format!("{x:.3} V");
    let (svg, g) = ranking_svg("What moves Vout most", "Vout", cell.nominal, &bars, &label);
    let p = check("ranking", &svg, &g, &[LOW, HIGH]);
    // Each input's row: Vout falls with the long-named series resistor, so
    // its low end (blue) lies right of the stated line and its high end
    // (orange) left; R2 the other way (its band −0 % … +20 % has no low
    // side, so only the orange bar, to the right).
    let row_of = |name: &str| {
        cell.rows
            .iter()
            .position(|r| plan.inputs[r.input].name == name)
            .unwrap()
    };
    let row_y = |k: usize| g.plot.y0 + 26 * k as i32 + 13;
    let stated_x = |y: i32| {
        g.bars
            .iter()
            .filter(|b| b.y0 <= y && y <= b.y1)
            .flat_map(|b| [b.x0, b.x1])
            .collect::<Vec<_>>()
    };
    let k = row_of("R_source_side_long_name");
    let y = row_y(k);
    let xs = stated_x(y);
    assert_eq!(xs.len(), 4, "two bars in the row: {xs:?}");
    let (lo_x, hi_x) = (*xs.iter().min().unwrap(), *xs.iter().max().unwrap());
    assert!(near(pixel(&p, lo_x + 2, y), HIGH), "high end to the left");
    assert!(near(pixel(&p, hi_x - 2, y), LOW), "low end to the right");
    let k = row_of("R2");
    let y = row_y(k);
    let xs = stated_x(y);
    assert_eq!(xs.len(), 2, "one bar for a band with no low side: {xs:?}");
    assert!(near(pixel(&p, xs[1] - 2, y), HIGH));
    // The long name fits left of the axes.
    assert!(g.labels.iter().any(|l| l.x1 <= g.plot.x0 && l.y0 < y && y < l.y1));
}

#[test]
fn a_cell_that_does_not_move_draws_without_bars() {
    let label = |x: f64| format!("{x} V");
    let (svg, g) = histogram_svg(&HistogramPicture {
        title: "fixed",
        axis: "V",
        lo: 5.0,
        hi: 5.0,
        counts: &[100, 0, 0],
        stated: 5.0,
        interval: (5.0, 5.0),
        probability: 0.95,
        label: &label,
    });
    check("fixed-histogram", &svg, &g, &[BAR]);
    let (svg, g) = histogram_svg(&HistogramPicture {
        title: "no samples",
        axis: "V",
        lo: f64::NAN,
        hi: f64::NAN,
        counts: &[0, 0],
        stated: f64::NAN,
        interval: (f64::NAN, f64::NAN),
        probability: 0.95,
        label: &label,
    });
    assert!(g.bars.is_empty());
    check("empty-histogram", &svg, &g, &[BAR]);
    let bars = [RankBar {
        label: "R".into(),
        low: 5.0,
        high: 5.0,
    }];
    let (svg, g) = ranking_svg("fixed", "V", 5.0, &bars, &label);
    assert!(g.bars.is_empty());
    check("fixed-ranking", &svg, &g, &[LOW, HIGH]);
}

/// `ohmsheet spread --plot FILE.svg` writes a histogram and a ranking chart
/// per shown cell beside FILE, and refuses when nothing would be drawn.
#[test]
fn spread_plot_writes_the_pictures_beside_its_file() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("div.ohm");
    std::fs::write(&sheet, DIVIDER).unwrap();
    let plot = dir.path().join("div.svg");
    crate::common::ohmsheet()
        .args(["spread", "--show", "Vout,Vout/Vs", "--plot"])
        .arg(&plot)
        .arg(&sheet)
        .assert()
        .success();
    for f in [
        "div.Vout.histogram.svg",
        "div.Vout.ranking.svg",
        "div.cell2.histogram.svg",
        "div.cell2.ranking.svg",
    ] {
        let svg = std::fs::read_to_string(dir.path().join(f)).unwrap_or_else(|_| panic!("{f} written"));
        assert!(svg.starts_with("<svg"), "{f}");
    }
    // Only the rankings with --sensitivities.
    let plot2 = dir.path().join("sens.svg");
    crate::common::ohmsheet()
        .args(["spread", "--show", "Vout", "--sensitivities", "--plot"])
        .arg(&plot2)
        .arg(&sheet)
        .assert()
        .success();
    assert!(dir.path().join("sens.Vout.ranking.svg").is_file());
    assert!(!dir.path().join("sens.Vout.histogram.svg").exists());
    crate::common::ohmsheet()
        .args(["spread", "--worst", "--plot"])
        .arg(dir.path().join("w.svg"))
        .arg(&sheet)
        .assert()
        .code(2)
        .stderr(predicates::str::contains("nothing to draw"));
}
