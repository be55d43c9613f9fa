//! The report's spread section (issue 18): worst case with the corner of
//! each extreme, the Monte Carlo summary with its seed, interval and a
//! histogram, ranked sensitivities with a ranking chart, and the caution.
//! Checked on a voltage divider whose answers are known in closed form:
//! Vout = Vs·R2/(R1 + R2), smallest with R1 high and R2 low, largest the
//! other way; ∂ln Vout/∂ln R2 = R1/(R1 + R2) and ∂ln Vout/∂ln R1 =
//! −R1/(R1 + R2) (the divider rule, common practice).

use crate::common::ohmsheet;

const DIVIDER: &str = "Vs = 10 V\nR1 = 10 Ω within 10 %\nR2 = 10 Ω within 10 %\n\
Vout = Vs * R2 / (R1 + R2)\nPfix = Vs^2 / 100 Ω\n";

fn write(dir: &std::path::Path, text: &str) -> std::path::PathBuf {
    let p = dir.join("divider.ohm");
    std::fs::write(&p, text).unwrap();
    p
}

fn report(args: &[&str], text: &str) -> (String, tempfile::TempDir) {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), text);
    let out = ohmsheet().arg("report").args(args).arg(&sheet).assert().success();
    (String::from_utf8(out.get_output().stdout.clone()).unwrap(), dir)
}

#[test]
fn the_markdown_report_shows_all_three_analyses_with_the_caution() {
    let (md, _d) = report(&["--format", "md", "--seed", "3", "--samples", "4000"], DIVIDER);
    let sec = &md[md.find("## 4. Spread over the tolerances").expect("a spread section")..];
    // Worst case: 10 V·9/(11 + 9) = 4.5 V and 10 V·11/(9 + 11) = 5.5 V,
    // each at the corner that gives it.
    assert!(sec.contains("### 4.1 Worst case"), "{sec}");
    assert!(
        sec.contains("| Vout | 5 V | 4.5 V | R1 +10 %, R2 −10 % | 5.5 V | R1 −10 %, R2 +10 % |"),
        "{sec}"
    );
    assert!(sec.contains("every one of the 4 corners"), "{sec}");
    // Monte Carlo: its seed and sample count, the interval's rule, a histogram.
    assert!(sec.contains("### 4.2 Monte Carlo"), "{sec}");
    assert!(sec.contains("4000 samples") && sec.contains("seed 3"), "{sec}");
    assert!(sec.contains("JCGM 101:2008 §7.7"), "{sec}");
    assert!(
        sec.contains("![Monte Carlo histogram of Vout](data:image/svg+xml"),
        "{sec}"
    );
    // Sensitivities: ±0.5 % per % (divider rule), ranked, with a chart.
    assert!(sec.contains("### 4.3 Sensitivities"), "{sec}");
    assert!(sec.contains("| `R2` | 0.5 % per % | 4.737 V | 5.238 V |"), "{sec}");
    assert!(sec.contains("| `R1` | -0.5 % per % | 5.263 V | 4.762 V |"), "{sec}");
    // How the derivatives were found.
    assert!(
        sec.contains("derivatives by forward-mode differentiation (exact)"),
        "{sec}"
    );
    assert!(
        sec.contains("![Ranking of the inputs for Vout](data:image/svg+xml"),
        "{sec}"
    );
    // The caution, with what stated tolerances cover.
    assert!(sec.contains("qualified person"), "{sec}");
    assert!(sec.contains("bound only what they describe"), "{sec}");
    // A cell no toleranced input reaches has no spread to show.
    let spread_only = &sec[..sec.find("## Caution").unwrap()];
    assert!(!spread_only.contains("Pfix"), "{spread_only}");
}

#[test]
fn the_html_report_draws_the_pictures_inline() {
    let (html, _d) = report(&["--format", "html"], DIVIDER);
    let sec = &html[html.find("<section id=\"spread\">").expect("a spread section")..];
    let sec = &sec[..sec.find("</section>").unwrap()];
    assert_eq!(
        sec.matches("<svg").count(),
        2,
        "a histogram and a ranking chart for Vout"
    );
    assert!(
        sec.contains("10000 samples") && sec.contains("seed 1"),
        "the defaults are stated"
    );
    assert!(sec.contains("qualified person"));
}

#[test]
fn markdown_written_to_a_file_puts_the_pictures_beside_it() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), DIVIDER);
    let out = dir.path().join("div.md");
    ohmsheet()
        .args(["report", "-o"])
        .arg(&out)
        .arg(&sheet)
        .assert()
        .success();
    let md = std::fs::read_to_string(&out).unwrap();
    for k in 1..=2 {
        let name = format!("div.spread-{k}.svg");
        assert!(md.contains(&format!("]({name})")), "{md}");
        let svg = std::fs::read_to_string(dir.path().join(&name)).unwrap();
        assert!(svg.starts_with("<svg"), "{svg}");
    }
}

#[test]
fn the_json_report_carries_the_numbers() {
    let (json, _d) = report(&["--format", "json", "--seed", "9"], DIVIDER);
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    let data = &v["spread"]["data"];
    let vout = data["worst_case"]["cells"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == "Vout")
        .unwrap();
    assert!((vout["min"]["value"].as_f64().unwrap() - 4.5).abs() < 1e-12);
    assert!((vout["max"]["value"].as_f64().unwrap() - 5.5).abs() < 1e-12);
    assert_eq!(data["monte_carlo"]["seed"], 9);
    assert!(data["sensitivities"].is_object());
}

#[test]
fn a_sheet_without_tolerances_reports_as_before() {
    let plain = "Vs = 10 V\nR1 = 10 Ω\nR2 = 10 Ω\nVout = Vs * R2 / (R1 + R2)\n";
    let (md, _d) = report(&["--format", "md"], plain);
    assert!(!md.contains("Spread over the tolerances"), "{md}");
    let (json, _d) = report(&["--format", "json"], plain);
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert!(v["spread"].is_null());
}

#[test]
fn a_report_refuses_no_samples() {
    let dir = tempfile::tempdir().unwrap();
    let sheet = write(dir.path(), DIVIDER);
    ohmsheet()
        .args(["report", "--samples", "0"])
        .arg(&sheet)
        .assert()
        .code(2)
        .stderr(predicates::str::contains("--samples 0 is none"));
}
