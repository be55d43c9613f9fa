//! The README's sheet examples are real sheets: each untagged (or `ohm`)
//! fenced block that defines cells must compile and its checks pass.
//! Blocks tagged `text` show terminal output, not sheets.

use crate::common::{engine, repo};

#[test]
fn readme_tour_sheet_runs_and_checks_pass() {
    let text = std::fs::read_to_string(repo("README.md")).unwrap();
    let tour = text.split("## A short tour").nth(1).expect("tour section");
    let mut blocks = 0;
    for block in tour.split("```").skip(1).step_by(2) {
        let (tag, body) = block.split_once('\n').unwrap_or(("", block));
        let tag = tag.trim();
        if !(tag.is_empty() || tag == "ohm") || body.lines().any(|l| l.starts_with("ohmsheet ")) {
            continue;
        }
        if !body.lines().any(|l| l.contains(" = ")) {
            continue;
        }
        let block = body;
        blocks += 1;
        let e = engine(block);
        for row in ohmsheet::output::check_rows(&e, Default::default()) {
            assert!(row.passed, "README check failed: {}", row.expr);
        }
    }
    assert!(
        blocks >= 2,
        "expected the tour sheet and the sweep sheet, found {blocks}"
    );
}
