//! docs/networks.md's worked examples: every code block with a `check`
//! is a whole sheet whose checks hold values worked out by hand; each must
//! pass under `ohmsheet check`.

use crate::common::*;

#[test]
fn every_worked_example_in_the_networks_page_passes_its_checks() {
    let doc = std::fs::read_to_string(repo("docs/networks.md")).unwrap();
    let blocks: Vec<&str> = doc
        .split("```")
        .skip(1)
        .step_by(2)
        .filter(|b| b.contains("network ") && b.contains("\ncheck "))
        .collect();
    assert!(
        blocks.len() >= 9,
        "one example for each element kind, found {}",
        blocks.len()
    );
    for forms in [
        "branch(",
        "emf(",
        "inject(",
        "vgain(",
        "transadm(",
        "transimp(",
        "igain(",
        "xformer(",
        "mutual(",
    ] {
        assert!(
            blocks.iter().any(|b| b.contains(forms)),
            "no worked example uses {forms}"
        );
    }
    let dir = tempfile::tempdir().unwrap();
    for (k, b) in blocks.iter().enumerate() {
        let p = dir.path().join(format!("ex{k}.ohm"));
        std::fs::write(&p, b.trim_start_matches(|c| c != '\n')).unwrap();
        let out = ohmsheet().args(["check", p.to_str().unwrap()]).output().unwrap();
        assert!(
            out.status.success(),
            "example {k} fails:\n{b}\n{}{}",
            String::from_utf8_lossy(&out.stdout),
            String::from_utf8_lossy(&out.stderr)
        );
    }
}
