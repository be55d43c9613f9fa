//! The block evaluator (64 cases at once) against the scalar one, lane by
//! lane, with awkward values in some lanes and plain ones in others: zero,
//! negative zero, tiny and huge parts, infinities and NaN. Every lane must
//! agree to the bit, whichever lanes take the careful path.

use num_complex::Complex64 as C64;
use ohmsheet::engine::block::{Block, LANES};
use ohmsheet::engine::eval;

use crate::common::model;

const AWKWARD: &[f64] = &[
    0.0,
    -0.0,
    1e-170,
    -3e-200,
    1e170,
    -2e160,
    f64::INFINITY,
    f64::NEG_INFINITY,
    f64::NAN,
    f64::MIN_POSITIVE,
    5e-324,
    1.0,
    -7.5,
    1e300,
];

#[test]
fn every_lane_agrees_with_the_scalar_evaluator() {
    let m = model(
        "a = 1 Ω\nb = 2 Ω\nc = 3\n\
         q = a / b\nr = b / a\np = a || b\ns = a -- b\nm = abs(a)\nn = abs(b) * c\n\
         x = a * b\ny = (a + b) / (a - b)\nz = conj(a) * b / c\nu = re(a) / im(b)\n\
         v = sqrt(c) + exp(c) - ln(c)\nw = a ∠ 30° || b\nt = 1 / (a || b)\n\
         g1 = a < b\ng2 = b <= a\ng3 = c > 1\ng4 = c >= c\ng5 = (a ≤ b) * (c ≥ 0)\n",
    );
    let prog = &m.program;
    let slot = |n: &str| m.cell(n).unwrap().slot;
    let (sa, sb, sc) = (slot("a"), slot("b"), slot("c"));
    // A deterministic walk over pairs of awkward and plain parts.
    let mut k = 0usize;
    let mut pick = || {
        k += 1;
        let v = AWKWARD[(k * 7 + k / 3) % AWKWARD.len()];
        if k.is_multiple_of(3) {
            0.5 + k as f64 * 0.01
        } else {
            v
        }
    };
    let mut block = Block::new(prog);
    for _round in 0..40 {
        let mut cases = Vec::new();
        for lane in 0..LANES {
            let a = C64::new(pick(), pick());
            let b = C64::new(pick(), pick());
            let c = C64::new(pick(), pick());
            block.set(sa, lane, a);
            block.set(sb, lane, b);
            block.set(sc, lane, c);
            cases.push((a, b, c));
        }
        block.run(&prog.code, prog);
        for (lane, &(a, b, c)) in cases.iter().enumerate() {
            let mut slots = prog.init.clone();
            slots[sa as usize] = a;
            slots[sb as usize] = b;
            slots[sc as usize] = c;
            eval::run(&prog.code, prog, &mut slots);
            for (_, cell) in m.defs() {
                let want = slots[cell.slot as usize];
                let got = block.get(cell.slot, lane);
                assert_eq!(
                    (got.re.to_bits(), got.im.to_bits()),
                    (want.re.to_bits(), want.im.to_bits()),
                    "{} with a = {a}, b = {b}, c = {c}: block {got}, scalar {want}",
                    cell.name
                );
            }
        }
    }
}
