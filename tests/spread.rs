//! `ohmsheet spread` and the analyses behind it (src/spread/): worst case,
//! Monte Carlo and sensitivities, against closed forms.

use ohmsheet::sheet::Sheet;
use ohmsheet::spread::{monte_carlo, plan_for, sensitivities, worst_case, McOptions, Method, Plan};

use crate::common::ohmsheet;

pub fn plan(src: &str, shown: &[&str]) -> Plan {
    let shown: Vec<String> = shown.iter().map(|s| s.to_string()).collect();
    match plan_for(Sheet::from_text("t.ohm", src), Some(&shown)) {
        Ok(p) => p,
        Err(f) => panic!("{}", f.render_plain()),
    }
}

const DIVIDER: &str = "Vs = 10 V\nR1 = 1 kΩ within 5 %\nR2 = 3 kΩ within 1 %\nVo = Vs * R2 / (R1 + R2)\n";

// A voltage divider Vo = Vs·R2/(R1 + R2): differentiating, the normalised
// sensitivities are ∂ln Vo/∂ln R2 = R1/(R1 + R2) and ∂ln Vo/∂ln R1 =
// −R1/(R1 + R2) (closed form; any circuits text derives it), 0.25 and
// −0.25 here.
#[test]
fn divider_sensitivities_match_the_closed_form() {
    let p = plan(DIVIDER, &["Vo"]);
    let s = sensitivities(&p);
    let rows = &s.cells[0].rows;
    let by = |n: &str| rows.iter().find(|r| p.inputs[r.input].name == n).unwrap();
    assert!((by("R2").mag - 0.25).abs() < 1e-9, "{}", by("R2").mag);
    assert!((by("R1").mag + 0.25).abs() < 1e-9, "{}", by("R1").mag);
    // A real cell has no angle.
    assert!(by("R1").angle.is_none());
    // The ends of each band, the other stated: Vs·R2/(R1·1.05 + R2).
    assert!((by("R1").high - 10.0 * 3.0 / (1.05 + 3.0)).abs() < 1e-12);
    // GUM §5.1.2 with uniform inputs (u = a/√3, §4.3.7):
    // u(Vo) = Vo·√((0.25·0.05/√3)² + (0.25·0.01/√3)²).
    let u = 7.5 * ((0.25f64 * 0.05 / 3f64.sqrt()).powi(2) + (0.25f64 * 0.01 / 3f64.sqrt()).powi(2)).sqrt();
    assert!((s.cells[0].gum_std - u).abs() < 1e-9 * u);
}

// The divider's extremes are at corners, by monotonicity: smallest with R1
// high and R2 low.
#[test]
fn divider_worst_case_is_at_the_corners() {
    let p = plan(DIVIDER, &["Vo"]);
    let w = worst_case(&p);
    assert_eq!(w.method, Method::AllCorners(4));
    let c = &w.cells[0];
    let lo = 10.0 * 2.97 / (1.05 + 2.97);
    let hi = 10.0 * 3.03 / (0.95 + 3.03);
    assert!((c.min.value - lo).abs() < 1e-12, "{}", c.min.value);
    assert!((c.max.value - hi).abs() < 1e-12, "{}", c.max.value);
    assert!(c.min.at_corner && c.max.at_corner);
}

// Power into a load R from a source with internal resistance Rs is
// largest at R = Rs (maximum power transfer): an extreme inside the box.
#[test]
fn an_extreme_inside_the_box_is_found() {
    let p = plan(
        "Vs = 10 V\nRs = 5 Ω\nR = 5 Ω within 40 %\nPl = abs(Vs / (Rs + R))^2 * R\n",
        &["Pl"],
    );
    let w = worst_case(&p);
    let c = &w.cells[0];
    // V²/(4R) = 5 W at R = 5 Ω.
    assert!((c.max.value - 5.0).abs() < 1e-9, "{}", c.max.value);
    assert!(!c.max.at_corner);
    // The smallest at the low end: 100·3/(8²) = 4.6875 W.
    assert!((c.min.value - 100.0 * 3.0 / 64.0).abs() < 1e-12);
}

#[test]
fn monte_carlo_is_reproducible_and_follows_the_seed() {
    let p = plan(DIVIDER, &["Vo"]);
    let opt = McOptions {
        samples: 5000,
        seed: 42,
        ..Default::default()
    };
    let a = monte_carlo(&p, &opt);
    let b = monte_carlo(&p, &opt);
    assert_eq!(a, b);
    let c = monte_carlo(&p, &McOptions { seed: 43, ..opt });
    assert_ne!(a.cells[0].mean, c.cells[0].mean);
    let cell = &a.cells[0];
    assert_eq!(cell.histogram.counts.iter().sum::<u64>(), 5000);
    assert!(cell.min >= 10.0 * 2.97 / (1.05 + 2.97) - 1e-12);
    assert!(cell.max <= 10.0 * 3.03 / (0.95 + 3.03) + 1e-12);
    assert!(cell.coverage.0 < cell.mean && cell.mean < cell.coverage.1);
}

#[test]
fn zero_tolerances_give_the_stated_value_everywhere() {
    let src = "Vs = 11 kV within 0 % angle 0°\nZ = (1 + j3) Ω within 0 %\nQ = 5 kvar among 5 kvar, 5 kvar\n\
               I = Vs / Z\nS = Vs * conj(I) - j*Q\n";
    let p = plan(src, &["I", "S"]);
    let w = worst_case(&p);
    let mc = monte_carlo(
        &p,
        &McOptions {
            samples: 500,
            ..Default::default()
        },
    );
    let s = sensitivities(&p);
    for c in 0..2 {
        let nom = w.cells[c].nominal;
        assert_eq!(w.cells[c].min.value, nom);
        assert_eq!(w.cells[c].max.value, nom);
        assert_eq!(mc.cells[c].min, nom);
        assert_eq!(mc.cells[c].max, nom);
        assert_eq!(mc.cells[c].std_dev, 0.0);
        assert_eq!(mc.cells[c].mean, nom);
        assert_eq!(s.cells[c].gum_std, 0.0);
    }
}

#[test]
fn a_sheet_without_tolerances_is_refused_by_spread() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("t.ohm");
    std::fs::write(&p, "Vs = 10 V\nI = Vs / 5 Ω\n").unwrap();
    ohmsheet()
        .arg("spread")
        .arg(&p)
        .assert()
        .code(2)
        .stderr(predicates::str::contains("error[no-tolerances]"));
}

#[test]
fn spread_writes_json_and_csv_with_the_seed() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("t.ohm");
    std::fs::write(&p, DIVIDER).unwrap();
    let out = ohmsheet()
        .args([
            "spread",
            p.to_str().unwrap(),
            "--format",
            "json",
            "--samples",
            "2000",
            "--seed",
            "9",
        ])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let v: serde_json::Value = serde_json::from_slice(&out).unwrap();
    assert_eq!(v["monte_carlo"]["seed"], 9);
    assert_eq!(v["monte_carlo"]["samples"], 2000);
    assert_eq!(v["worst_case"]["cells"][0]["name"], "Vo");
    assert!(v["caution"].as_str().unwrap().contains("qualified person"));
    let r2 = &v["sensitivities"]["cells"][0]["inputs"][0];
    assert!((r2["magnitude"].as_f64().unwrap().abs() - 0.25).abs() < 1e-9);
    // Exact: no library function or search on the way.
    assert_eq!(v["sensitivities"]["cells"][0]["method"], "forward");
    let out = ohmsheet()
        .args([
            "spread",
            p.to_str().unwrap(),
            "--format",
            "csv",
            "--monte-carlo",
            "--samples",
            "100",
        ])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let text = String::from_utf8(out).unwrap();
    assert!(text.starts_with("analysis,cell,item,value,unit\n"));
    assert!(text.contains("monte_carlo,Vo,seed,1,"));
    assert!(!text.contains("worst_case"));
    // The table names the seed and carries the caution.
    ohmsheet()
        .args(["spread", p.to_str().unwrap(), "--samples", "100", "--seed", "5"])
        .assert()
        .success()
        .stdout(predicates::str::contains("seed 5").and(predicates::str::contains("qualified person")));
}

#[test]
fn a_wrong_shown_name_or_unit_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("t.ohm");
    std::fs::write(&p, DIVIDER).unwrap();
    ohmsheet()
        .args(["spread", p.to_str().unwrap(), "--show", "Vx"])
        .assert()
        .code(2)
        .stderr(predicates::str::contains("no cell `Vx`"));
    ohmsheet()
        .args(["spread", p.to_str().unwrap(), "--set", "R1=1 kΩ within 5 V"])
        .assert()
        .code(2)
        .stderr(predicates::str::contains("error[tolerance-unit]"));
    ohmsheet()
        .args(["spread", p.to_str().unwrap(), "--samples", "0"])
        .assert()
        .code(2);
}

use predicates::prelude::*;

// Thirteen toleranced resistors in series (8192 corners, past the
// exhaustive limit): the total is largest with every one high and
// smallest with every one low (a sum of increasing terms).
#[test]
fn many_inputs_take_the_guided_corners() {
    let mut src = String::new();
    let mut sum = Vec::new();
    for k in 1..=13 {
        src.push_str(&format!("R{k} = {k}00 Ω within {} %\n", k % 4 + 1));
        sum.push(format!("R{k}"));
    }
    src.push_str(&format!("Rt = {}\nG = 1 / Rt\n", sum.join(" + ")));
    let p = plan(&src, &["Rt", "G"]);
    let w = worst_case(&p);
    assert!(matches!(w.method, Method::GuidedCorners(n) if n == 8192.0));
    let hi: f64 = (1..=13)
        .map(|k| k as f64 * 100.0 * (1.0 + (k % 4 + 1) as f64 / 100.0))
        .sum();
    let lo: f64 = (1..=13)
        .map(|k| k as f64 * 100.0 * (1.0 - (k % 4 + 1) as f64 / 100.0))
        .sum();
    assert!((w.cells[0].max.value - hi).abs() < 1e-9 * hi);
    assert!((w.cells[0].min.value - lo).abs() < 1e-9 * lo);
    assert!((w.cells[1].max.value - 1.0 / lo).abs() < 1e-9 / lo);
    assert!(w.cells[0].max.at_corner);
}

// A zero input (a short) may only grow, and its contribution to the
// first-order standard deviation is still found: I = V/(Zs + Zl) with Zs
// uniform on [0, 1] Ω: ∂I/∂Zs = −V/Zl² = −1 A/Ω at Zs = 0, u(Zs) = 1/√12 Ω
// (GUM §4.3.7), so u(I) from Zs alone is 1/√12 A.
#[test]
fn a_zero_input_only_grows_and_still_contributes() {
    let d = crate::common::errors("Zs = 0 Ω within 1 Ω\n");
    assert_eq!(d[0].code, ohmsheet::diag::ErrorCode::BadInputTolerance);
    let p = plan(
        "Vs = 100 V\nZs = 0 Ω within 0 Ω .. +1 Ω\nZl = 10 Ω\nI = Vs / (Zs + Zl)\n",
        &["I"],
    );
    let s = sensitivities(&p);
    let row = &s.cells[0].rows[0];
    assert!(row.mag.is_nan(), "no proportional sensitivity to a zero input");
    let want = 1.0 / 12f64.sqrt();
    assert!((s.cells[0].gum_std - want).abs() < 1e-8, "{}", s.cells[0].gum_std);
    let w = worst_case(&p);
    assert!((w.cells[0].min.value - 100.0 / 11.0).abs() < 1e-12);
    assert_eq!(w.cells[0].max.value, 10.0);
}

// A percentage of zero is zero: `Zs = 0 Ω within 5 %` would vary nothing
// and give a spread of exactly nothing without a word. It is refused at
// the band, in the sheet, through `--set`, and in a batch case that sets
// the input to 0, each time with the absolute band to write instead; so
// is an angle band on a zero value.
#[test]
fn a_percentage_or_angle_band_on_a_zero_value_is_refused() {
    for src in [
        "Zs = 0 Ω within 5 %\n",
        "Zs = 0 Ω within -0 % .. +5 %\n",
        "Vs = 0 V ∠ 0° within 0 % angle 2°\n",
    ] {
        let d = crate::common::errors(src);
        assert_eq!(d[0].code, ohmsheet::diag::ErrorCode::BadInputTolerance, "{src}");
        let hint = d[0].hint.clone().unwrap_or_default();
        assert!(hint.contains("`within 0 .. +A`"), "{src}: {hint}");
        // The caret is on the band, not the value.
        let at = d[0].span.unwrap().start as usize;
        assert!(at > src.find("within").unwrap(), "{src}: at byte {at}");
    }
    // A zero band on a zero value is no tolerance at all, and stands.
    assert!(
        plan("Zs = 0 Ω within 0 %\nZl = 10 Ω\nI = 1 V / (Zs + Zl)\n", &["I"])
            .inputs
            .len()
            == 1
    );
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("s.ohm");
    std::fs::write(
        &sheet,
        "Vs = 100 V\nZs = 0.5 Ω within 5 %\nZl = 10 Ω\nI = Vs / (Zs + Zl)\n",
    )
    .unwrap();
    let out = ohmsheet()
        .args(["spread", sheet.to_str().unwrap(), "--set", "Zs=0 Ω", "--samples", "100"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("a percentage of zero is zero"), "{err}");
    let cases = dir.path().join("cases.csv");
    std::fs::write(&cases, "Zs\n0.2 Ω\n0 Ω\n").unwrap();
    let res = dir.path().join("res.csv");
    let out = ohmsheet()
        .args([
            "batch",
            sheet.to_str().unwrap(),
            "--cases",
            cases.to_str().unwrap(),
            "-o",
        ])
        .arg(&res)
        .args(["--spread", "I", "--samples", "1000"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let text = std::fs::read_to_string(&res).unwrap();
    let rows: Vec<&str> = text.lines().collect();
    // The first case has its spread: I = 100/(Zs + 10) with Zs ±5 % of
    // 0.2 Ω, so the worst |I| is 100/10.19 A … 100/10.21 A (closed form).
    let first: Vec<&str> = rows[1].split(',').collect();
    let lo: f64 = first[5].parse().unwrap();
    assert!((lo - 100.0 / 10.21).abs() < 1e-9, "{lo}");
    // The second gives its value, the spread left empty, and the reason.
    assert!(rows[2].ends_with(",,,,,,,,"), "{}", rows[2]);
    let errs = std::fs::read_to_string(res.with_extension("errors.csv")).unwrap();
    assert!(errs.contains("a percentage of a zero value is zero"), "{errs}");
}
