//! Helpers shared by the integration tests.
#![allow(dead_code)]

use std::path::PathBuf;

pub mod lsp;
pub mod outside;

use num_complex::Complex64 as C64;
use ohmsheet::engine::{compile, Engine, Model};
use ohmsheet::sheet::Sheet;

/// The built binary, ready to be given arguments.
pub fn ohmsheet() -> assert_cmd::Command {
    assert_cmd::Command::cargo_bin("ohmsheet").expect("binary built")
}

/// Path of a file in the repository.
pub fn repo(rel: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// Compile sheet text; panics with the rendered diagnostics on an error.
pub fn model(src: &str) -> Model {
    let sheet = Sheet::from_text("test.ohm", src);
    let m = compile(&sheet);
    if m.has_errors() {
        let text: Vec<String> = m.diagnostics.iter().map(|d| d.render_plain(&m.sources)).collect();
        panic!("sheet has errors:\n{}", text.join("\n"));
    }
    m
}

/// Compile and evaluate sheet text.
pub fn engine(src: &str) -> Engine {
    Engine::new(model(src))
}

/// The value of cell `name` (coherent SI units), or of field `f` of a
/// record cell written `name.f`.
pub fn value(e: &Engine, name: &str) -> C64 {
    if let Some(id) = e.model.id(name) {
        return e.value(id);
    }
    let (cell, field) = name.split_once('.').unwrap_or_else(|| panic!("no cell {name}"));
    let id = e.model.id(cell).unwrap_or_else(|| panic!("no cell {cell}"));
    let Some(ohmsheet::funcs::Shape::Record(fields)) = &e.model.cells[id as usize].shape else {
        panic!("{cell} is not a record")
    };
    let k = fields
        .iter()
        .position(|(n, _)| *n == field)
        .unwrap_or_else(|| panic!("{cell} has no field {field}"));
    e.values(id)[k]
}

/// Value of the expression `src` (as the formula of a cell `x`) after the
/// given preamble lines.
pub fn eval_expr(preamble: &str, src: &str) -> C64 {
    let e = engine(&format!("{preamble}\nx = {src}\n"));
    value(&e, "x")
}

/// The diagnostics of a sheet that must fail to compile.
pub fn errors(src: &str) -> Vec<ohmsheet::diag::Diagnostic> {
    let sheet = Sheet::from_text("test.ohm", src);
    let m = compile(&sheet);
    assert!(m.has_errors(), "expected an error in:\n{src}");
    m.diagnostics
}

/// Relative closeness of two complex numbers: |a-b| <= rel·max(|a|,|b|),
/// or both tiny.
pub fn close(a: C64, b: C64, rel: f64) -> bool {
    let scale = a.norm().max(b.norm());
    (a - b).norm() <= rel * scale || (a - b).norm() < 1e-300
}

#[macro_export]
macro_rules! assert_close {
    ($a:expr, $b:expr, $rel:expr) => {{
        let (a, b) = ($a, $b);
        assert!(
            $crate::common::close(a, b, $rel),
            "{} = {:?}, expected {:?} (rel {})",
            stringify!($a),
            a,
            b,
            $rel
        );
    }};
}

/// Proptest settings: `cases` cases unless `PROPTEST_CASES` says otherwise,
/// and no failure files written into the tree.
pub fn proptest_cfg(cases: u32) -> proptest::prelude::ProptestConfig {
    proptest::prelude::ProptestConfig {
        cases: std::env::var("PROPTEST_CASES")
            .ok()
            .and_then(|s| s.parse().ok())
            .unwrap_or(cases),
        failure_persistence: None,
        ..proptest::prelude::ProptestConfig::default()
    }
}
