//! One case of a network: assemble the modified nodal equations from the
//! element values, factor them once (faer's LU with partial pivoting), and
//! answer every request from that one factorisation.
//!
//! Unknowns: the voltage of each node but `ground`, then one current for
//! each element that needs one — voltage sources, voltage gains,
//! transimpedances and transformers always; a branch when it is a short
//! (0 Ω, where its admittance would be infinite) or when it is coupled to
//! another. Every other branch enters by its admittance, and an open one
//! (∞ Ω) not at all.
//!
//! Signs: a branch's current flows from its node `a` through it to `b`,
//! and it absorbs S = V(a,b)·I* (passive convention). A source's current —
//! independent or controlled — is the current it delivers out of `a` into
//! the network, and its power is the power it delivers, V(a,b)·I*. (Both are halved for peak phasors by
//! the caller.)

use faer::linalg::solvers::{PartialPivLu, SolveCore};
use faer::{Conj, Mat};
use num_complex::Complex64 as C64;

use super::netlist::{CouplingBy, ElemKind, Given, Net};
use crate::engine::ops;

const ZERO: C64 = C64 { re: 0.0, im: 0.0 };
const ONE: C64 = C64 { re: 1.0, im: 0.0 };

/// Why a case has no solution.
#[derive(Clone, Debug, PartialEq)]
pub enum Failure {
    /// The equations are singular; the unknown whose pivot vanished is
    /// named (a node or an element's current).
    Singular(String),
    /// An element value is not a number, or infinite where that has no
    /// meaning (an open voltage source's internal impedance, an infinite
    /// gain).
    BadValue { elem: String, why: String },
}

impl std::fmt::Display for Failure {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Failure::Singular(u) => write!(
                f,
                "the network's equations are singular here ({u}): a node may be left without a path to ground, \
                 or ideal sources fight each other, at these element values"
            ),
            Failure::BadValue { elem, why } => write!(f, "element `{elem}`: {why}"),
        }
    }
}

/// What one solve must produce beyond node voltages and element
/// currents.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Request {
    /// Thevenin equivalent between two nodes with every source acting:
    /// open-circuit voltage, impedance with independent sources zeroed,
    /// short-circuit current (three values).
    Thevenin(usize, usize),
    /// Entry (i, j) of the inverse of the nodal admittance matrix: the
    /// voltage at node i for 1 A injected at node j, sources zeroed.
    ZEntry(usize, usize),
    /// Entry (i, j) of the nodal admittance matrix (sources zeroed).
    YEntry(usize, usize),
}

impl Request {
    pub fn width(self) -> usize {
        match self {
            Request::Thevenin(..) => 3,
            _ => 1,
        }
    }
}

/// A linear form Σ cᵢ·xᵢ + k over the unknowns: an element's current.
#[derive(Clone, Debug, Default)]
struct Form {
    terms: Vec<(usize, C64)>,
    k: C64,
}

impl Form {
    fn add_v(&mut self, net_nodes: usize, node: usize, c: C64) {
        let _ = net_nodes;
        if node != 0 {
            self.terms.push((node - 1, c));
        }
    }
    fn eval(&self, x: &[C64]) -> C64 {
        self.terms.iter().fold(self.k, |s, &(i, c)| s + c * x[i])
    }
}

/// The outcome of one case.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Solution {
    /// Voltage of every node to ground (index 0 is ground itself, 0 V).
    pub v: Vec<C64>,
    /// Current of every element (see the module's sign rules).
    pub i: Vec<C64>,
    /// Values of the requests, in order, `Request::width` each.
    pub extra: Vec<C64>,
}

impl Solution {
    /// V(a, b) = V(a) − V(b).
    pub fn between(&self, a: usize, b: usize) -> C64 {
        self.v[a] - self.v[b]
    }
}

/// How each element enters the equations at this case.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Form0 {
    /// By an admittance stamp (y may be 0: an open).
    Admittance(C64),
    /// With a current unknown (index among all unknowns).
    Current(usize),
    /// A current fixed by other quantities (current sources, transadmittances,
    /// current gains): no unknown of its own.
    Driven,
}

struct Assembly {
    n: usize,
    forms: Vec<Form0>,
    /// Impedance of each branch at this frequency (for coupled branches).
    z: Vec<C64>,
}

fn value(net: &Net, vals: &[C64], e: usize, k: usize) -> C64 {
    vals[net.elems[e].first_value + k]
}

fn finite(z: C64) -> bool {
    z.re.is_finite() && z.im.is_finite()
}

fn is_inf(z: C64) -> bool {
    z.re.is_infinite() || z.im.is_infinite()
}

/// Solve one case. `vals[0]` is ω in rad/s; the rest are the element
/// values in the order `Net::add` gave them.
pub fn solve(net: &Net, vals: &[C64], requests: &[Request]) -> Result<Solution, Failure> {
    let w = vals[0].re;
    let nn = net.nodes.len();
    let nv = nn - 1;
    let coupled: Vec<bool> = {
        let mut c = vec![false; net.elems.len()];
        for e in &net.elems {
            if let ElemKind::Coupling { l1, l2, .. } = e.kind {
                c[l1] = true;
                c[l2] = true;
            }
        }
        c
    };
    // Decide each element's form and number the extra unknowns.
    let mut asm = Assembly {
        n: nv,
        forms: Vec::with_capacity(net.elems.len()),
        z: vec![ZERO; net.elems.len()],
    };
    for (ei, e) in net.elems.iter().enumerate() {
        let f = match &e.kind {
            ElemKind::Branch(g) => {
                let v = value(net, vals, ei, 0);
                if v.re.is_nan() || v.im.is_nan() {
                    return Err(Failure::BadValue {
                        elem: e.name.clone(),
                        why: "its value is not a number".into(),
                    });
                }
                let z = g.impedance(v, w);
                asm.z[ei] = z;
                if coupled[ei] {
                    if !finite(z) {
                        return Err(Failure::BadValue {
                            elem: e.name.clone(),
                            why: "a coupled branch cannot be open (infinite impedance)".into(),
                        });
                    }
                    asm.n += 1;
                    Form0::Current(asm.n - 1)
                } else if z == ZERO {
                    asm.n += 1;
                    Form0::Current(asm.n - 1)
                } else if is_inf(z) {
                    Form0::Admittance(ZERO)
                } else {
                    Form0::Admittance(ops::div(ONE, z))
                }
            }
            ElemKind::VSource { .. }
            | ElemKind::VoltageGain { .. }
            | ElemKind::Transimpedance { .. }
            | ElemKind::Transformer { .. } => {
                asm.n += 1;
                Form0::Current(asm.n - 1)
            }
            ElemKind::ISource { .. }
            | ElemKind::Transadmittance { .. }
            | ElemKind::CurrentGain { .. }
            | ElemKind::Coupling { .. } => Form0::Driven,
        };
        asm.forms.push(f);
    }
    for (ei, e) in net.elems.iter().enumerate() {
        for k in 0..e.kind.n_values() {
            let v = value(net, vals, ei, k);
            if v.re.is_nan() || v.im.is_nan() {
                return Err(Failure::BadValue {
                    elem: e.name.clone(),
                    why: "a value is not a number".into(),
                });
            }
        }
    }
    let n = asm.n;
    let mut a = Mat::<C64>::zeros(n, n);
    let mut rhs = vec![ZERO; n];
    // Linear forms of each element's current, built lazily (current gains
    // may refer to other elements' currents).
    let mut cur: Vec<Option<Form>> = vec![None; net.elems.len()];
    for ei in 0..net.elems.len() {
        current_form(net, vals, &asm, ei, &mut cur, 0)?;
    }
    let add = |a: &mut Mat<C64>, r: usize, c: usize, v: C64| {
        a[(r, c)] += v;
    };
    // KCL rows: current leaving each node into its elements is zero.
    // A form's constant goes to the right-hand side.
    let kcl = |a: &mut Mat<C64>, rhs: &mut [C64], node: usize, f: &Form, sign: f64| {
        if node == 0 {
            return;
        }
        let r = node - 1;
        for &(c, v) in &f.terms {
            add(a, r, c, v * sign);
        }
        rhs[r] -= f.k * sign;
    };
    for (ei, e) in net.elems.iter().enumerate() {
        let f = cur[ei].as_ref().expect("form built");
        match &e.kind {
            ElemKind::Coupling { .. } => {}
            ElemKind::VSource { .. } | ElemKind::VoltageGain { .. } | ElemKind::Transimpedance { .. } => {
                // Delivered out of `a`: it enters node a.
                kcl(&mut a, &mut rhs, e.a, f, -1.0);
                kcl(&mut a, &mut rhs, e.b, f, 1.0);
            }
            ElemKind::ISource { .. } | ElemKind::Transadmittance { .. } | ElemKind::CurrentGain { .. } => {
                kcl(&mut a, &mut rhs, e.a, f, -1.0);
                kcl(&mut a, &mut rhs, e.b, f, 1.0);
            }
            ElemKind::Transformer { c, d } => {
                kcl(&mut a, &mut rhs, e.a, f, 1.0);
                kcl(&mut a, &mut rhs, e.b, f, -1.0);
                // Secondary current into c: −conj(n)·I₁.
                let nr = value(net, vals, ei, 0);
                let mut fs = f.clone();
                for t in &mut fs.terms {
                    t.1 *= -nr.conj();
                }
                kcl(&mut a, &mut rhs, *c, &fs, 1.0);
                kcl(&mut a, &mut rhs, *d, &fs, -1.0);
            }
            _ => {
                kcl(&mut a, &mut rhs, e.a, f, 1.0);
                kcl(&mut a, &mut rhs, e.b, f, -1.0);
            }
        }
    }
    // Constraint rows of the elements with a current unknown.
    let vrow = |a: &mut Mat<C64>, r: usize, node: usize, c: C64| {
        if node != 0 {
            a[(r, node - 1)] += c;
        }
    };
    for (ei, e) in net.elems.iter().enumerate() {
        let Form0::Current(r) = asm.forms[ei] else { continue };
        vrow(&mut a, r, e.a, ONE);
        vrow(&mut a, r, e.b, -ONE);
        match &e.kind {
            ElemKind::Branch(_) => {
                a[(r, r)] -= asm.z[ei];
            }
            ElemKind::VSource { internal } => {
                rhs[r] += value(net, vals, ei, 0);
                if let Some(g) = internal {
                    let z = g.impedance(value(net, vals, ei, 1), w);
                    if !finite(z) {
                        return Err(Failure::BadValue {
                            elem: e.name.clone(),
                            why: "the internal impedance of a voltage source cannot be open (infinite)".into(),
                        });
                    }
                    a[(r, r)] += z;
                }
            }
            ElemKind::VoltageGain { c, d } => {
                let mu = value(net, vals, ei, 0);
                vrow(&mut a, r, *c, -mu);
                vrow(&mut a, r, *d, mu);
            }
            ElemKind::Transimpedance { ctrl } => {
                let rr = value(net, vals, ei, 0);
                let f = cur[*ctrl].as_ref().expect("form");
                for &(col, v) in &f.terms {
                    a[(r, col)] -= rr * v;
                }
                rhs[r] += rr * f.k;
            }
            ElemKind::Transformer { c, d } => {
                let nr = value(net, vals, ei, 0);
                vrow(&mut a, r, *c, -nr);
                vrow(&mut a, r, *d, nr);
            }
            _ => {}
        }
    }
    // Mutual impedances between coupled branches.
    for (ei, e) in net.elems.iter().enumerate() {
        if let ElemKind::Coupling { l1, l2, by } = e.kind {
            let x = value(net, vals, ei, 0);
            let zm = match by {
                CouplingBy::Coefficient => x * ops::sqrt(asm.z[l1] * asm.z[l2]),
                CouplingBy::MutualImpedance => x,
                CouplingBy::MutualInductance => Given::Inductance.impedance(x, w),
            };
            let (Form0::Current(r1), Form0::Current(r2)) = (asm.forms[l1], asm.forms[l2]) else {
                unreachable!("coupled branches have current unknowns")
            };
            a[(r1, r2)] -= zm;
            a[(r2, r1)] -= zm;
        }
    }
    for r in 0..n {
        for c in 0..n {
            if !finite(a[(r, c)]) {
                return Err(Failure::BadValue {
                    elem: owner_name(net, &asm, r),
                    why: "an element value is infinite where it has no limit".into(),
                });
            }
        }
    }
    let lu = factor(&a, net, &asm)?;
    let x = lu.solve(&rhs);
    let mut sol = Solution {
        v: vec![ZERO; nn],
        i: vec![ZERO; net.elems.len()],
        extra: Vec::new(),
    };
    sol.v[1..].copy_from_slice(&x[..nn - 1]);
    for (i, f) in sol.i.iter_mut().zip(&cur) {
        *i = f.as_ref().map_or(ZERO, |f| f.eval(&x));
    }
    // Requests: with independent sources zeroed only the right-hand side
    // changes, so the same factors serve.
    let mut zcol_cache: Vec<Option<Vec<C64>>> = vec![None; nn];
    let mut zcol = |j: usize| -> Vec<C64> {
        if let Some(c) = &zcol_cache[j] {
            return c.clone();
        }
        let mut r = vec![ZERO; n];
        if j != 0 {
            r[j - 1] = ONE;
        }
        let x = lu.solve(&r);
        let mut v = vec![ZERO; nn];
        v[1..].copy_from_slice(&x[..nn - 1]);
        zcol_cache[j] = Some(v.clone());
        v
    };
    for req in requests {
        match *req {
            Request::Thevenin(p, q) => {
                let voc = sol.v[p] - sol.v[q];
                // 1 A into p and out at q, sources zeroed.
                let vp = zcol(p);
                let vq = zcol(q);
                let zth = (vp[p] - vp[q]) - (vq[p] - vq[q]);
                sol.extra.push(voc);
                sol.extra.push(zth);
                sol.extra.push(ops::div(voc, zth));
            }
            Request::ZEntry(i, j) => {
                let v = zcol(j);
                sol.extra.push(v[i]);
            }
            Request::YEntry(i, j) => {
                // Invert the node block of Z (sources zeroed).
                let mut z = Mat::<C64>::zeros(nv, nv);
                for col in 1..nn {
                    let v = zcol(col);
                    for row in 1..nn {
                        z[(row - 1, col - 1)] = v[row];
                    }
                }
                // Where an ideal element (a voltage gain, a transimpedance,
                // a transformer, a 0 Ω branch) ties node voltages together,
                // the bus impedance matrix is singular and the admittance
                // matrix does not exist: that entry alone is NaN, the rest
                // of the network stands.
                let Some(zl) = factor_plain(&z) else {
                    sol.extra.push(C64::new(f64::NAN, f64::NAN));
                    continue;
                };
                let mut e = vec![ZERO; nv];
                if j == 0 || i == 0 {
                    // The reference row and column: minus the sum of the others.
                    sol.extra.push(y_ref_entry(&zl, nv, i, j));
                    continue;
                }
                e[j - 1] = ONE;
                let col = zl.solve(&e);
                sol.extra.push(col[i - 1]);
            }
        }
    }
    Ok(sol)
}

fn y_ref_entry(zl: &Lu, nv: usize, i: usize, j: usize) -> C64 {
    // Y with the reference node kept: every row and column sums to zero
    // when nothing ties the network to ground other than through nodes.
    // Here ground is an ordinary node of the indefinite matrix: Y(0, j) is
    // −Σ_i Y(i, j), Y(0, 0) = Σ_ij Y(i, j).
    let mut total = ZERO;
    for col in 0..nv {
        if j != 0 && col != j - 1 {
            continue;
        }
        let mut e = vec![ZERO; nv];
        e[col] = ONE;
        let c = zl.solve(&e);
        for (row, v) in c.iter().enumerate() {
            if i != 0 && row != i - 1 {
                continue;
            }
            total += *v;
        }
    }
    if (i == 0) != (j == 0) {
        -total
    } else {
        total
    }
}

/// Name of the unknown a row belongs to, for messages.
fn owner_name(net: &Net, asm: &Assembly, r: usize) -> String {
    let nv = net.nodes.len() - 1;
    if r < nv {
        return format!("node `{}`", net.nodes[r + 1]);
    }
    for (ei, f) in asm.forms.iter().enumerate() {
        if *f == Form0::Current(r) {
            return format!("the current of `{}`", net.elems[ei].name);
        }
    }
    "an unknown".into()
}

/// An LU factorisation with its pivots checked.
struct Lu {
    lu: PartialPivLu<C64>,
    n: usize,
}

impl Lu {
    fn solve(&self, rhs: &[C64]) -> Vec<C64> {
        let mut b = Mat::<C64>::from_fn(self.n, 1, |i, _| rhs[i]);
        self.lu.solve_in_place_with_conj(Conj::No, b.as_mut());
        (0..self.n).map(|i| b[(i, 0)]).collect()
    }
}

/// Relative size below which a pivot counts as zero.
const PIVOT_TOL: f64 = 1e-13;

fn factor_plain(a: &Mat<C64>) -> Option<Lu> {
    let n = a.nrows();
    let scale = (0..n)
        .flat_map(|r| (0..n).map(move |c| (r, c)))
        .map(|(r, c)| ops::abs(a[(r, c)]))
        .fold(0.0f64, f64::max);
    let lu = a.partial_piv_lu();
    let u = lu.U();
    for k in 0..n {
        // A NaN pivot fails too.
        if ops::abs(u[(k, k)]).partial_cmp(&(PIVOT_TOL * scale)) != Some(std::cmp::Ordering::Greater) {
            return None;
        }
    }
    Some(Lu { lu, n })
}

fn factor(a: &Mat<C64>, net: &Net, asm: &Assembly) -> Result<Lu, Failure> {
    if a.nrows() == 0 {
        return Ok(Lu {
            lu: a.partial_piv_lu(),
            n: 0,
        });
    }
    factor_plain(a).ok_or_else(|| {
        // Name the unknown of the smallest pivot's column (after the
        // permutation) as the place to look.
        let lu = a.partial_piv_lu();
        let u = lu.U();
        let (k, _) = (0..a.nrows())
            .map(|k| (k, ops::abs(u[(k, k)])))
            .fold((0, f64::INFINITY), |m, x| if x.1 < m.1 { x } else { m });
        Failure::Singular(owner_name(net, asm, k))
    })
}

/// Build the linear form of element `ei`'s current.
fn current_form(
    net: &Net,
    vals: &[C64],
    asm: &Assembly,
    ei: usize,
    cur: &mut Vec<Option<Form>>,
    depth: usize,
) -> Result<(), Failure> {
    if cur[ei].is_some() {
        return Ok(());
    }
    if depth > net.elems.len() {
        return Err(Failure::BadValue {
            elem: net.elems[ei].name.clone(),
            why: "current gains control each other in a loop".into(),
        });
    }
    let e = &net.elems[ei];
    let nn = net.nodes.len();
    let mut f = Form::default();
    match (&e.kind, asm.forms[ei]) {
        (_, Form0::Current(k)) => f.terms.push((k, ONE)),
        (ElemKind::Branch(_), Form0::Admittance(y)) => {
            if y != ZERO {
                f.add_v(nn, e.a, y);
                f.add_v(nn, e.b, -y);
            }
        }
        (ElemKind::ISource { shunt }, _) => {
            f.k = value(net, vals, ei, 0);
            if let Some(g) = shunt {
                let z = g.impedance(value(net, vals, ei, 1), net_w(vals));
                let y = if is_inf(z) { ZERO } else { ops::div(ONE, z) };
                if !finite(y) {
                    return Err(Failure::BadValue {
                        elem: e.name.clone(),
                        why: "a current source with a shorted (0 Ω) shunt".into(),
                    });
                }
                f.add_v(nn, e.a, -y);
                f.add_v(nn, e.b, y);
            }
        }
        (ElemKind::Transadmittance { c, d }, _) => {
            let g = value(net, vals, ei, 0);
            f.add_v(nn, *c, g);
            f.add_v(nn, *d, -g);
        }
        (ElemKind::CurrentGain { ctrl }, _) => {
            let b = value(net, vals, ei, 0);
            current_form(net, vals, asm, *ctrl, cur, depth + 1)?;
            let cf = cur[*ctrl].as_ref().expect("built");
            f.k = b * cf.k;
            f.terms = cf.terms.iter().map(|&(i, c)| (i, b * c)).collect();
        }
        (ElemKind::Coupling { .. }, _) => {}
        (k, f0) => unreachable!("{k:?} as {f0:?}"),
    }
    cur[ei] = Some(f);
    Ok(())
}

fn net_w(vals: &[C64]) -> f64 {
    vals[0].re
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::netlist::{Given, Net};

    fn c(re: f64, im: f64) -> C64 {
        C64::new(re, im)
    }

    fn close(a: C64, b: C64) -> bool {
        (a - b).norm() <= 1e-9 * (1.0 + b.norm())
    }

    /// A divider: 10 V source, 2 Ω then 3 Ω to ground. Ohm's law by hand.
    #[test]
    fn divider_by_hand() {
        let mut n = Net::new();
        let a = n.node("a");
        let m = n.node("m");
        n.add("E", ElemKind::VSource { internal: None }, a, 0);
        n.add("R1", ElemKind::Branch(Given::Impedance), a, m);
        n.add("R2", ElemKind::Branch(Given::Impedance), m, 0);
        let vals = [c(0.0, 0.0), c(10.0, 0.0), c(2.0, 0.0), c(3.0, 0.0)];
        let s = solve(&n, &vals, &[Request::Thevenin(m, 0)]).unwrap();
        assert!(close(s.v[m], c(6.0, 0.0)));
        assert!(close(s.i[0], c(2.0, 0.0)), "source delivers 2 A: {:?}", s.i[0]);
        assert!(close(s.i[1], c(2.0, 0.0)));
        // Thevenin at m: 6 V behind 2 ∥ 3 = 1.2 Ω.
        assert!(close(s.extra[0], c(6.0, 0.0)));
        assert!(close(s.extra[1], c(1.2, 0.0)));
        assert!(close(s.extra[2], c(5.0, 0.0)));
    }

    /// A short (0 Ω) and an open (∞ Ω) branch take their limits.
    #[test]
    fn shorts_and_opens() {
        let mut n = Net::new();
        let a = n.node("a");
        let m = n.node("m");
        n.add("E", ElemKind::VSource { internal: None }, a, 0);
        n.add("R1", ElemKind::Branch(Given::Impedance), a, m);
        n.add("R2", ElemKind::Branch(Given::Impedance), m, 0);
        let s = solve(&n, &[c(0.0, 0.0), c(10.0, 0.0), c(0.0, 0.0), c(3.0, 0.0)], &[]).unwrap();
        assert!(close(s.v[m], c(10.0, 0.0)));
        assert!(close(s.i[1], c(10.0 / 3.0, 0.0)));
        let s = solve(
            &n,
            &[c(0.0, 0.0), c(10.0, 0.0), c(2.0, 0.0), c(f64::INFINITY, 0.0)],
            &[],
        )
        .unwrap();
        assert!(close(s.v[m], c(10.0, 0.0)));
        assert!(close(s.i[0], c(0.0, 0.0)));
    }

    /// A node reached only through a current source has no solution.
    #[test]
    fn floating_node_is_singular() {
        let mut n = Net::new();
        let a = n.node("a");
        let b = n.node("b");
        n.add("R", ElemKind::Branch(Given::Impedance), a, 0);
        n.add("Z", ElemKind::Branch(Given::Impedance), b, b);
        let r = solve(&n, &[c(0.0, 0.0), c(1.0, 0.0), c(1.0, 0.0)], &[]);
        assert!(matches!(r, Err(Failure::Singular(_))), "{r:?}");
    }
}
