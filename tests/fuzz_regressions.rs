//! Every input a fuzzer or a property test found to break an invariant is
//! kept under fuzz/regressions/<target>/ and replayed here through the same
//! checks the fuzz targets run (`ohmsheet::harness`). The committed seed
//! corpus is replayed too, so the harness itself stays exercised by
//! `cargo test`.

use std::path::Path;

use crate::common::repo;

fn each_file(dir: &Path, mut f: impl FnMut(&Path, &[u8])) -> usize {
    let mut n = 0;
    let mut entries: Vec<_> = std::fs::read_dir(dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| e.unwrap().path())
        .collect();
    entries.sort();
    for p in entries {
        if p.is_file() {
            let data = std::fs::read(&p).unwrap();
            f(&p, &data);
            n += 1;
        }
    }
    n
}

fn replay(target: &str, run: fn(&[u8])) -> usize {
    each_file(&repo(&format!("fuzz/regressions/{target}")), |p, data| {
        let r = std::panic::catch_unwind(|| run(data));
        assert!(r.is_ok(), "{} breaks an invariant", p.display());
    })
}

#[test]
fn parse_regressions() {
    replay("parse", ohmsheet::harness::parse_bytes);
}

#[test]
fn eval_regressions() {
    assert!(replay("eval", ohmsheet::harness::eval_bytes) >= 1);
}

#[test]
fn units_regressions() {
    replay("units", ohmsheet::harness::unit_bytes);
}

#[test]
fn cases_regressions() {
    replay("cases", ohmsheet::harness::cases_bytes);
}

#[test]
fn network_regressions() {
    replay("network", ohmsheet::harness::network_bytes);
}

#[test]
fn session_regressions() {
    replay("session", ohmsheet::harness::session_bytes);
}

#[test]
fn seed_corpus_passes_every_check() {
    let mut broken = Vec::new();
    let n = each_file(&repo("fuzz/seeds/sheets"), |p, data| {
        let r = std::panic::catch_unwind(|| {
            ohmsheet::harness::parse_bytes(data);
            ohmsheet::harness::eval_bytes(data);
        });
        if r.is_err() {
            broken.push(p.display().to_string());
        }
    });
    assert!(broken.is_empty(), "seeds that break an invariant: {broken:#?}");
    assert!(n >= 50, "only {n} seeds");
    let n = each_file(&repo("fuzz/seeds/units"), |_, data| ohmsheet::harness::unit_bytes(data));
    assert!(n >= 20, "only {n} unit seeds");
    let n = each_file(&repo("fuzz/seeds/cases"), |_, data| {
        ohmsheet::harness::cases_bytes(data)
    });
    assert!(n >= 5, "only {n} cases seeds");
    let n = each_file(&repo("fuzz/seeds/session"), |_, data| {
        ohmsheet::harness::session_bytes(data)
    });
    assert!(n >= 4, "only {n} session seeds");
    let n = each_file(&repo("fuzz/seeds/network"), |_, data| {
        ohmsheet::harness::network_bytes(data)
    });
    assert!(n >= 20, "only {n} network seeds");
}

/// The harness does catch a broken invariant: a diagnostic whose span
/// splits a character.
#[test]
#[should_panic(expected = "splits a character")]
fn harness_catches_a_bad_span() {
    use ohmsheet::diag::{Diagnostic, ErrorCode, SourceFile, SourceMap, Span};
    let mut sources = SourceMap::new();
    let id = sources.add(SourceFile::new("t.ohm", None, "x = µ".to_string()));
    let d = Diagnostic::error(ErrorCode::Syntax, Span::new(id, 5, 6), "bad");
    ohmsheet::harness::check_diagnostic(&d, &sources);
}
