//! faer's sparse LU (used for networks of `SPARSE_FROM` unknowns and
//! more) against its dense LU (used below) on the same networks: both are
//! LU factorisations with pivoting of the same modified nodal equations,
//! so on well-conditioned networks they agree to rounding. Stated bound:
//! every node voltage, element current and Thevenin value within 1e-8 of
//! the largest magnitude among them (far above rounding in doubles, far
//! below any engineering difference).

use num_complex::Complex64 as C64;
use ohmsheet::network::{solve_by, CouplingBy, ElemKind, Failure, Given, Method, Net, Request, SPARSE_FROM};
use proptest::prelude::*;

/// Deterministic numbers from a seed (xorshift).
struct Rng(u64);

impl Rng {
    fn unit(&mut self) -> f64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
    fn below(&mut self, n: usize) -> usize {
        ((self.unit() * n as f64) as usize).min(n - 1)
    }
    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }
}

/// A random connected network of `nodes` nodes with every element kind:
/// a tree of branches (so every node reaches ground), extra branches given
/// as Ω, S, H and F, a short, an open, a source with an internal
/// impedance, a current source with a shunt, the four controlled sources,
/// a phase-shifting transformer and a coupled pair of inductors.
fn random_net(nodes: usize, seed: u64) -> (Net, Vec<C64>) {
    let mut g = Rng(seed | 1);
    let mut n = Net::new();
    let w = std::f64::consts::TAU * 50.0;
    let mut vals = vec![C64::new(w, 0.0)];
    let ids: Vec<usize> = (0..nodes).map(|k| n.node(&format!("n{k}"))).collect();
    let mut k = 0;
    let mut name = || {
        k += 1;
        format!("e{k}")
    };
    let add = |n: &mut Net, vals: &mut Vec<C64>, name: String, kind: ElemKind, a: usize, b: usize, v: &[C64]| {
        let e = n.add(&name, kind, a, b);
        vals.extend_from_slice(v);
        e
    };
    // The tree: each node to an earlier one (or to ground), R + jX.
    for (i, &a) in ids.iter().enumerate() {
        let b = if i == 0 { 0 } else { ids[g.below(i)] };
        let z = C64::new(g.range(1.0, 20.0), g.range(-5.0, 20.0));
        add(
            &mut n,
            &mut vals,
            name(),
            ElemKind::Branch(Given::Impedance),
            a,
            b,
            &[z],
        );
    }
    let pick = |g: &mut Rng| if g.below(8) == 0 { 0 } else { ids[g.below(ids.len())] };
    // Extra branches of every given kind.
    for _ in 0..nodes {
        let (a, b) = (pick(&mut g), pick(&mut g));
        if a == b {
            continue;
        }
        let (kind, v) = match g.below(4) {
            0 => (Given::Impedance, C64::new(g.range(1.0, 50.0), g.range(-20.0, 20.0))),
            1 => (Given::Admittance, C64::new(g.range(0.01, 0.5), g.range(-0.2, 0.2))),
            2 => (Given::Inductance, C64::new(g.range(1e-3, 0.1), 0.0)),
            _ => (Given::Capacitance, C64::new(g.range(1e-5, 1e-3), 0.0)),
        };
        add(&mut n, &mut vals, name(), ElemKind::Branch(kind), a, b, &[v]);
    }
    let c0 = C64::new(0.0, 0.0);
    // A short and an open.
    add(
        &mut n,
        &mut vals,
        name(),
        ElemKind::Branch(Given::Impedance),
        ids[1],
        ids[2],
        &[c0],
    );
    add(
        &mut n,
        &mut vals,
        name(),
        ElemKind::Branch(Given::Impedance),
        ids[3],
        ids[4],
        &[C64::new(f64::INFINITY, 0.0)],
    );
    // Sources.
    let v = C64::from_polar(g.range(100.0, 400.0), g.range(-1.0, 1.0));
    add(
        &mut n,
        &mut vals,
        name(),
        ElemKind::VSource {
            internal: Some(Given::Impedance),
        },
        ids[0],
        0,
        &[v, C64::new(0.5, 2.0)],
    );
    let i = C64::from_polar(g.range(1.0, 10.0), g.range(-1.0, 1.0));
    add(
        &mut n,
        &mut vals,
        name(),
        ElemKind::ISource {
            shunt: Some(Given::Impedance),
        },
        ids[5],
        ids[6],
        &[i, C64::new(100.0, 0.0)],
    );
    add(
        &mut n,
        &mut vals,
        name(),
        ElemKind::VoltageGain { c: ids[7], d: 0 },
        ids[8],
        ids[9],
        &[C64::new(g.range(0.1, 0.5), 0.0)],
    );
    add(
        &mut n,
        &mut vals,
        name(),
        ElemKind::Transadmittance { c: ids[10], d: ids[11] },
        ids[12],
        0,
        &[C64::new(g.range(1e-3, 1e-2), 0.0)],
    );
    let ctrl = 1; // the first tree branch's current
    add(
        &mut n,
        &mut vals,
        name(),
        ElemKind::Transimpedance { ctrl },
        ids[13],
        ids[14],
        &[C64::new(g.range(0.5, 5.0), 0.0)],
    );
    add(
        &mut n,
        &mut vals,
        name(),
        ElemKind::CurrentGain { ctrl },
        ids[15],
        0,
        &[C64::new(g.range(0.1, 0.5), 0.0)],
    );
    let ratio = C64::from_polar(g.range(0.5, 2.0), g.range(-0.6, 0.6));
    add(
        &mut n,
        &mut vals,
        name(),
        ElemKind::Transformer { c: ids[17], d: 0 },
        ids[16],
        ids[18],
        &[ratio],
    );
    // Two inductors coupled by a coefficient.
    let l1 = add(
        &mut n,
        &mut vals,
        name(),
        ElemKind::Branch(Given::Inductance),
        ids[19],
        ids[20],
        &[C64::new(0.02, 0.0)],
    );
    let l2 = add(
        &mut n,
        &mut vals,
        name(),
        ElemKind::Branch(Given::Inductance),
        ids[21],
        0,
        &[C64::new(0.05, 0.0)],
    );
    add(
        &mut n,
        &mut vals,
        name(),
        ElemKind::Coupling {
            l1,
            l2,
            by: CouplingBy::Coefficient,
        },
        0,
        0,
        &[C64::new(0.6, 0.0)],
    );
    (n, vals)
}

fn all_values(s: &ohmsheet::network::Solution) -> Vec<C64> {
    s.v.iter().chain(&s.i).chain(&s.extra).copied().collect()
}

fn agree(net: &Net, vals: &[C64], reqs: &[Request]) -> Result<(), String> {
    let d = solve_by(net, vals, reqs, Method::Dense).map_err(|e| format!("dense: {e}"))?;
    let s = solve_by(net, vals, reqs, Method::Sparse).map_err(|e| format!("sparse: {e}"))?;
    let (d, s) = (all_values(&d), all_values(&s));
    let big = d.iter().map(|z| z.norm()).fold(0.0, f64::max);
    for (k, (a, b)) in d.iter().zip(&s).enumerate() {
        if (a - b).norm() > 1e-8 * big {
            return Err(format!("value {k}: dense {a}, sparse {b} (largest {big})"));
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 24, ..ProptestConfig::default() })]

    /// Mid-size networks on both sides of the switch: the two LUs agree.
    #[test]
    fn sparse_and_dense_agree_on_mid_size_networks(nodes in 30usize..150, seed in any::<u64>()) {
        let (net, vals) = random_net(nodes, seed);
        let reqs = [Request::Thevenin(5, 0), Request::Thevenin(nodes / 2, nodes - 1), Request::ZEntry(3, 7)];
        let r = agree(&net, &vals, &reqs);
        prop_assert!(r.is_ok(), "{} nodes, seed {seed}: {}", nodes, r.unwrap_err());
    }
}

/// The switch sits where the docs say, and `Auto` gives the dense answer
/// below it and the sparse one from it.
#[test]
fn auto_chooses_by_size() {
    for nodes in [SPARSE_FROM - 30, SPARSE_FROM + 30] {
        let (net, vals) = random_net(nodes, 7);
        let a = solve_by(&net, &vals, &[], Method::Auto).unwrap();
        let want = if nodes < SPARSE_FROM - 20 {
            Method::Dense
        } else {
            Method::Sparse
        };
        let b = solve_by(&net, &vals, &[], want).unwrap();
        assert_eq!(a, b, "{nodes} nodes");
    }
}

/// A singular network is refused by the sparse path too (a node whose
/// only element is a loop on itself has no equation).
#[test]
fn sparse_refuses_a_singular_network() {
    let (mut net, mut vals) = random_net(SPARSE_FROM + 10, 11);
    let lone = net.node("lone");
    net.add("self", ElemKind::Branch(Given::Impedance), lone, lone);
    vals.push(C64::new(1.0, 0.0));
    for how in [Method::Dense, Method::Sparse] {
        let r = solve_by(&net, &vals, &[], how);
        assert!(matches!(r, Err(Failure::Singular(_))), "{how:?}: {r:?}");
    }
    // Two ideal sources in parallel that disagree: no solution either way.
    let (mut net, mut vals) = random_net(SPARSE_FROM + 10, 12);
    let a = net.node("n3");
    for v in [10.0, 20.0] {
        net.add(&format!("V{v}"), ElemKind::VSource { internal: None }, a, 0);
        vals.push(C64::new(v, 0.0));
    }
    for how in [Method::Dense, Method::Sparse] {
        let r = solve_by(&net, &vals, &[], how);
        assert!(matches!(r, Err(Failure::Singular(_))), "{how:?}: {r:?}");
    }
}
