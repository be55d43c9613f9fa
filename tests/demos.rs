//! Every demo sheet runs clean and its checks (values worked out
//! independently, see each sheet's comments) pass.

use crate::common::{ohmsheet, repo};

#[test]
fn every_demo_sheet_runs_and_its_checks_pass() {
    let dir = repo("sheets-demo");
    let mut n = 0;
    for entry in std::fs::read_dir(&dir).expect("sheets-demo") {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "ohm") {
            n += 1;
            let out = ohmsheet().args(["run", path.to_str().unwrap()]).output().unwrap();
            assert!(
                out.status.success(),
                "{} exited {:?}\n{}\n{}",
                path.display(),
                out.status.code(),
                String::from_utf8_lossy(&out.stdout),
                String::from_utf8_lossy(&out.stderr)
            );
            let text = String::from_utf8_lossy(&out.stdout);
            assert!(!text.contains("FAIL"), "{}: {text}", path.display());
        }
    }
    assert!(n >= 2, "expected demo sheets, found {n}");
}
