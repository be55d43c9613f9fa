//! The demo sheets record checks, and those about energised equipment
//! carry the caution. (demos.rs runs every sheet and requires exit 0.)

use crate::common::repo;

fn demo_sheets() -> Vec<std::path::PathBuf> {
    let mut v: Vec<_> = std::fs::read_dir(repo("sheets-demo"))
        .expect("sheets-demo/")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "ohm"))
        .collect();
    v.sort();
    v
}

/// Each demo sheet records at least one check (demos.rs runs them all and
/// requires exit 0).
#[test]
fn every_demo_sheet_has_checks() {
    let sheets = demo_sheets();
    assert!(sheets.len() >= 6, "expected the demo sheets, found {sheets:?}");
    for s in sheets {
        let text = std::fs::read_to_string(&s).unwrap();
        assert!(
            text.lines().any(|l| l.trim_start().starts_with("check ")),
            "{} has no check line",
            s.display()
        );
    }
}

/// The sheets about energised equipment carry the caution to defer to
/// local codes and licensed practice.
#[test]
fn energised_equipment_sheets_carry_the_caution() {
    for name in [
        "pf-correction-feed-mill.ohm",
        "unbalanced-cold-store.ohm",
        "induction-heater-match.ohm",
        "rural-feeder-capacitor.ohm",
        "beacon-antenna-match.ohm",
        "export-line-ferranti.ohm",
        "sawmill-bank-fault-duty.ohm",
        "harbour-vhf-feeder.ohm",
        "quarry-crusher-feeder.ohm",
        "plant-bus-two-sources.ohm",
        "paper-mill-bank-spread.ohm",
    ] {
        let text = std::fs::read_to_string(repo(&format!("sheets-demo/{name}"))).unwrap();
        assert!(text.contains("# CAUTION"), "{name}");
        // the comment block read as one paragraph
        let text = text.replace("\n# ", " ");
        assert!(
            text.contains("local codes") && text.contains("licensed practice"),
            "{name}"
        );
    }
}
