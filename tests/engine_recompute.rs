//! The incremental engine's promise, pinned down by what it recomputed:
//! changing an input re-runs exactly the cells that depend on it, in order,
//! and stops where a value comes out unchanged.

use num_complex::Complex64 as C64;

use crate::common::engine;

fn names(e: &ohmsheet::engine::Engine, ids: &[u32]) -> Vec<String> {
    ids.iter().map(|&i| e.model.cells[i as usize].name.clone()).collect()
}

#[test]
fn set_input_recomputes_only_dependents_in_order() {
    let mut e = engine("R1 = 10 Ω\nR2 = 20 Ω\nV = 100 V\nRt = R1 + R2\nI = V / Rt\nP = V * I\nunrelated = R2 * 2");
    let r1 = e.model.id("R1").unwrap();
    let changes = e.set_input(r1, C64::new(30.0, 0.0));
    assert_eq!(names(&e, &e.last_recomputed.clone()), ["Rt", "I", "P"]);
    let changed: Vec<String> = changes
        .iter()
        .map(|c| e.model.cells[c.cell as usize].name.clone())
        .collect();
    assert_eq!(changed, ["R1", "Rt", "I", "P"]);
    let i = e.value(e.model.id("I").unwrap());
    assert_eq!(i, C64::new(2.0, 0.0));
    // old → new is reported
    assert_eq!(changes[2].old[0], C64::new(100.0 / 30.0, 0.0));
}

#[test]
fn early_cutoff_when_a_value_does_not_change() {
    // m = max(a, 5): moving a below 5 leaves m at 5, so y is not re-run.
    let mut e = engine("a = 1\nm = max(a, 5)\ny = m * 2");
    let a = e.model.id("a").unwrap();
    let changes = e.set_input(a, C64::new(2.0, 0.0));
    assert_eq!(names(&e, &e.last_recomputed.clone()), ["m"]);
    assert_eq!(changes.len(), 1);
}

#[test]
fn setting_the_same_value_does_nothing() {
    let mut e = engine("a = 1\nb = a + 1");
    let a = e.model.id("a").unwrap();
    assert!(e.set_input(a, C64::new(1.0, 0.0)).is_empty());
    assert!(e.last_recomputed.is_empty());
}

#[test]
fn diamond_dependencies_run_once_each() {
    let mut e = engine("a = 1\nb = a * 2\nc = a * 3\nd = b + c");
    let a = e.model.id("a").unwrap();
    e.set_input(a, C64::new(2.0, 0.0));
    assert_eq!(names(&e, &e.last_recomputed.clone()), ["b", "c", "d"]);
    assert_eq!(e.value(e.model.id("d").unwrap()), C64::new(10.0, 0.0));
}

#[test]
fn block_and_scalar_evaluators_agree_bit_for_bit() {
    use ohmsheet::engine::block::{Block, LANES};
    let e = engine(
        "R = 10 Ω\nL = 5 mH\nC = 10 µF\nf = 60 Hz\nw = 2*pi*f\nZ = R + j*w*L || 1/(j*w*C)\nV = 240 V ∠ 10°\nI = V / Z\nS = V * conj(I)\nm = abs(S)\nz0 = 0 Ω || Z\nq = Z / 0 Ω",
    );
    let prog = &e.model.program;
    let mut b = Block::new(prog);
    b.run(&prog.code, prog);
    for (id, c) in e.model.defs() {
        for l in [0, LANES - 1] {
            let got = b.get(c.slot, l);
            let want = e.value(id);
            assert_eq!(
                (got.re.to_bits(), got.im.to_bits()),
                (want.re.to_bits(), want.im.to_bits()),
                "{}",
                c.name
            );
        }
    }
}
