//! Big sheets: a dependency chain far longer than any stack allows for
//! recursion compiles and evaluates on a test thread's small stack, a long
//! cycle is reported without hanging, and an input change recomputes only
//! its dependents. (Speed at 100,000 cells is measured by benches/scale.rs.)

use num_complex::Complex64 as C64;
use ohmsheet::engine::{compile, Engine};
use ohmsheet::sheet::Sheet;

const N: usize = 20_000;

fn chain(first: &str) -> String {
    let mut s = format!("c0 = {first}\n");
    for i in 1..N {
        s.push_str(&format!("c{i} = c{} + 1 Ω\n", i - 1));
    }
    s
}

#[test]
fn a_long_chain_compiles_and_evaluates_without_recursion() {
    let sheet = Sheet::from_text("chain.ohm", &chain("1 Ω"));
    let m = compile(&sheet);
    assert!(!m.has_errors());
    let mut e = Engine::new(m);
    // c_i = (1 + i) Ω: arithmetic on small integers, exact in binary.
    let last = e.model.id(&format!("c{}", N - 1)).unwrap();
    assert_eq!(e.value(last), C64::new(N as f64, 0.0));
    // Changing the root recomputes the whole chain, once, in order.
    let c0 = e.model.id("c0").unwrap();
    e.set_input(c0, C64::new(10.0, 0.0));
    assert_eq!(e.last_recomputed.len(), N - 1);
    assert_eq!(e.value(last), C64::new((N + 9) as f64, 0.0));
}

#[test]
fn an_error_at_the_root_of_a_long_chain_is_reported_once() {
    let sheet = Sheet::from_text("chain.ohm", &chain("1 V + 1 Ω"));
    let m = compile(&sheet);
    let errors: Vec<_> = m.diagnostics.iter().filter(|d| d.is_error()).collect();
    assert_eq!(
        errors.len(),
        1,
        "only the root is reported; the rest are upstream of it"
    );
    assert!(m.cells.iter().skip(1).all(|c| c.error.is_some()));
}

#[test]
fn a_long_cycle_is_reported_without_hanging() {
    let mut s = format!("c0 = c{} + 1 Ω\n", N - 1);
    for i in 1..N {
        s.push_str(&format!("c{i} = c{} + 1 Ω\n", i - 1));
    }
    s.push_str("x = c5 * 2\n");
    let sheet = Sheet::from_text("cycle.ohm", &s);
    let m = compile(&sheet);
    let cycles: Vec<_> = m
        .diagnostics
        .iter()
        .filter(|d| d.code == ohmsheet::diag::ErrorCode::Cycle)
        .collect();
    assert_eq!(cycles.len(), 1, "one cycle, reported once");
    // The message names the loop but stays readable.
    assert!(cycles[0].message.len() < 2_000, "{} bytes", cycles[0].message.len());
    let text = cycles[0].render_plain(&m.sources);
    assert!(text.lines().count() < 200, "{} lines", text.lines().count());
}

#[test]
fn a_change_recomputes_its_cone_not_the_sheet() {
    // 20,000 independent cells plus a probe with three dependents.
    let mut s = String::new();
    for i in 0..N {
        s.push_str(&format!("x{i} = {} Ω\ny{i} = x{i} * 2\n", i % 7 + 1));
    }
    s.push_str("probe = 1 V\np1 = probe * 2\np2 = p1 + probe\np3 = p2 / 3\n");
    let mut e = Engine::new(compile(&Sheet::from_text("wide.ohm", &s)));
    let probe = e.model.id("probe").unwrap();
    e.set_input(probe, C64::new(3.0, 0.0));
    let names: Vec<&str> = e
        .last_recomputed
        .iter()
        .map(|&i| e.model.cells[i as usize].name.as_str())
        .collect();
    assert_eq!(names, ["p1", "p2", "p3"]);
    // p3 = (2·3 + 3) / 3 = 3 V
    assert_eq!(e.value(e.model.id("p3").unwrap()), C64::new(3.0, 0.0));
}
