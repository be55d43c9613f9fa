//! The README's sheet examples are real sheets: each fenced block in the
//! tour that defines cells must compile and its checks pass.

use crate::common::{engine, repo};

#[test]
fn readme_tour_sheet_runs_and_checks_pass() {
    let text = std::fs::read_to_string(repo("README.md")).unwrap();
    let tour = text.split("## A short tour").nth(1).expect("tour section");
    let mut blocks = 0;
    for block in tour.split("```").skip(1).step_by(2) {
        if !block.lines().any(|l| l.contains(" = ")) || block.contains("error[") {
            continue;
        }
        blocks += 1;
        let e = engine(block);
        for row in ohmsheet::output::check_rows(&e, Default::default()) {
            assert!(row.passed, "README check failed: {}", row.expr);
        }
    }
    assert!(blocks >= 1);
}
