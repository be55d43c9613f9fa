//! Random network blocks never panic the loader, the compiler, the
//! evaluators or the explanation of a failing case: blocks built from
//! random bytes (`harness::network_bytes`, the fuzz target `network`), and
//! valid blocks with random edits of their text.

use proptest::prelude::*;

/// The proptest settings these properties run with.
fn cfg(cases: u32) -> ProptestConfig {
    crate::common::proptest_cfg(cases)
}

const VALID: &str = "\
f = 60 Hz
network plant at f
  Eu = emf(u, ground, 7.97 kV, (0.3 + j3) Ω)
  Is = inject(m, ground, 2 A ∠ 30°, 1 kΩ)
  Tu = branch(u, bus, (0.4 + j1.8) Ω)
  L1 = branch(bus, m, 20 mH)
  L2 = branch(m, ground, 30 mH)
  K = mutual(L1, L2, 0.5)
  G = transadm(m, ground, bus, ground, 2 mS)
  A = vgain(o, ground, bus, m, 0.1)
  Ro = branch(o, ground, 50 Ω)
  T = xformer(bus, ground, lv, ground, 20 ∠ 30°)
  Zl = branch(lv, ground, 2 Ω)
  B = igain(lv, ground, Zl, 0.5)
  R = transimp(o2, ground, Ro, 10 Ω)
  R2 = branch(o2, ground, 1 Ω)
end
V = net_v(plant, bus)
th = net_thevenin(plant, bus, ground)
z = net_z(plant, m, bus)
y = net_y(plant, bus, m)
bal = net_balance(plant)
";

/// Pieces an edit may insert: the block's own words and symbols.
const PIECES: &[&str] = &[
    "(", ")", ",", "=", " ", "\n", "end", "network ", " at ", "ground", "branch(", "emf(", "mutual(", "Ω", "∠", "j",
    "0", "1/0", "-", "Hz", "µ", "#", "bus", "L1", "net_v(", "\"",
];

proptest! {
    #![proptest_config(cfg(100))]

    #[test]
    fn network_blocks_from_random_bytes_never_panic(data in proptest::collection::vec(any::<u8>(), 0..160)) {
        ohmsheet::harness::network_bytes(&data);
    }

    #[test]
    fn edited_network_text_never_panics(edits in proptest::collection::vec((any::<usize>(), any::<usize>(), 0usize..3), 1..6)) {
        let mut text: Vec<char> = VALID.chars().collect();
        for (at, what, op) in edits {
            let at = at % (text.len() + 1);
            match op {
                0 if at < text.len() => {
                    // Delete a run of up to 8 characters.
                    let end = (at + 1 + what % 8).min(text.len());
                    text.drain(at..end);
                }
                1 => {
                    let p = PIECES[what % PIECES.len()];
                    for (i, c) in p.chars().enumerate() {
                        text.insert(at + i, c);
                    }
                }
                _ => {
                    // Swap two lines.
                    let s: String = text.iter().collect();
                    let mut lines: Vec<&str> = s.lines().collect();
                    let (i, j) = (at % lines.len(), what % lines.len());
                    lines.swap(i, j);
                    text = (lines.join("\n") + "\n").chars().collect();
                }
            }
        }
        let text: String = text.into_iter().collect();
        ohmsheet::harness::explain_text(&text);
    }
}

/// The valid block itself compiles and solves (so the edits start from a
/// sheet that reaches the solve).
#[test]
fn the_unedited_block_is_solved() {
    let e = crate::common::engine(VALID);
    let v = crate::common::value(&e, "V");
    assert!(v.re.is_finite() && v.norm() > 1000.0, "{v}");
}
