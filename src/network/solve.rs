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

use faer::dyn_stack::{MemBuffer, MemStack, StackReq};
use faer::linalg::lu::partial_pivoting::factor::{lu_in_place, lu_in_place_scratch};
use faer::linalg::lu::partial_pivoting::solve::{solve_in_place, solve_in_place_scratch};
use faer::linalg::solvers::{PartialPivLu, SolveCore};
use faer::perm::PermRef;
use faer::sparse::linalg::solvers::Lu as SparseLu;
use faer::sparse::{SparseColMat, Triplet};
use faer::{Conj, Mat, MatMut, MatRef, Par};
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

/// Above this many unknowns a case is solved with faer's sparse LU, below
/// it with the dense LU (benches/network.rs measures both sides of it).
pub const SPARSE_FROM: usize = 100;

/// Which factorisation to use; `Auto` chooses by size (`SPARSE_FROM`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Method {
    Auto,
    Dense,
    Sparse,
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

/// The equations of one case and their factors. The buffers are kept from
/// case to case, so a solve allocates nothing once they have grown.
struct Sys {
    n: usize,
    dense: bool,
    /// Dense: the matrix, column-major, factored in place.
    a: Vec<C64>,
    /// Sparse: the entries (duplicates add up).
    trip: Vec<Triplet<usize, usize, C64>>,
    rhs: Vec<C64>,
    perm: Vec<usize>,
    perm_inv: Vec<usize>,
    mem: MemBuffer,
    mem_n: usize,
    sparse: Option<SparseLu<usize, C64>>,
}

impl Default for Sys {
    fn default() -> Sys {
        Sys {
            n: 0,
            dense: true,
            a: Vec::new(),
            trip: Vec::new(),
            rhs: Vec::new(),
            perm: Vec::new(),
            perm_inv: Vec::new(),
            mem: MemBuffer::new(StackReq::EMPTY),
            mem_n: 0,
            sparse: None,
        }
    }
}

impl Sys {
    fn reset(&mut self, n: usize, dense: bool) {
        self.n = n;
        self.dense = dense;
        self.a.clear();
        self.trip.clear();
        self.sparse = None;
        if dense {
            self.a.resize(n * n, ZERO);
        }
        self.rhs.clear();
        self.rhs.resize(n, ZERO);
    }

    #[inline]
    fn put(&mut self, r: usize, c: usize, v: C64) {
        if self.dense {
            self.a[c * self.n + r] += v;
        } else {
            self.trip.push(Triplet::new(r, c, v));
        }
    }

    /// The row of the first entry that is not finite.
    fn non_finite_row(&self) -> Option<usize> {
        if self.dense {
            // One flat pass (it vectorises) before the search row by row,
            // which only a case with an infinite value needs.
            if self.a.iter().all(|z| (z.re + z.im).abs() < f64::INFINITY) {
                return None;
            }
            // Row by row, as the rows name the unknowns in messages.
            let n = self.n;
            (0..n).find(|&r| (0..n).any(|c| !finite(self.a[c * n + r])))
        } else {
            self.trip.iter().filter(|t| !finite(t.val)).map(|t| t.row).min()
        }
    }

    /// Factor the matrix; on a (numerically) singular one, the unknown of
    /// the smallest pivot.
    fn factor(&mut self) -> Result<(), usize> {
        let n = self.n;
        if n == 0 {
            return Ok(());
        }
        if !self.dense {
            let m = SparseColMat::<usize, C64>::try_new_from_triplets(n, n, &self.trip).map_err(|_| 0usize)?;
            self.sparse = Some(m.sp_lu().map_err(|_| 0usize)?);
            return Ok(());
        }
        // The largest magnitude, from squares (one square root, no hypot
        // per entry) unless they overflow or underflow.
        let m2 = self.a.iter().map(|z| z.re * z.re + z.im * z.im).fold(0.0f64, f64::max);
        let scale = if (f64::MIN_POSITIVE..f64::INFINITY).contains(&m2) {
            m2.sqrt()
        } else {
            self.a.iter().map(|&z| ops::abs(z)).fold(0.0f64, f64::max)
        };
        if self.mem_n < n {
            let req = lu_in_place_scratch::<usize, C64>(n, n, Par::Seq, Default::default())
                .or(solve_in_place_scratch::<usize, C64>(n, 1, Par::Seq));
            self.mem = MemBuffer::new(req);
            self.mem_n = n;
        }
        self.perm.resize(n, 0);
        self.perm_inv.resize(n, 0);
        let a = MatMut::from_column_major_slice_mut(&mut self.a, n, n);
        lu_in_place(
            a,
            &mut self.perm,
            &mut self.perm_inv,
            Par::Seq,
            MemStack::new(&mut self.mem),
            Default::default(),
        );
        let mut worst = (0, f64::INFINITY);
        let mut ok = true;
        for k in 0..n {
            let p = ops::abs(self.a[k * n + k]);
            // A NaN pivot fails too.
            if p.partial_cmp(&(PIVOT_TOL * scale)) != Some(std::cmp::Ordering::Greater) {
                ok = false;
            }
            if p < worst.1 {
                worst = (k, p);
            }
        }
        if ok {
            Ok(())
        } else {
            Err(worst.0)
        }
    }

    /// Solve in place with the factors.
    fn solve(&mut self, b: &mut [C64]) {
        let n = self.n;
        if n == 0 {
            return;
        }
        let rhs = MatMut::from_column_major_slice_mut(b, n, 1);
        if let Some(lu) = &self.sparse {
            lu.solve_in_place_with_conj(Conj::No, rhs);
            return;
        }
        let lu = MatRef::from_column_major_slice(&self.a, n, n);
        // SAFETY: `lu_in_place` filled `perm` and `perm_inv` with a
        // permutation of 0..n and its inverse.
        let perm = unsafe { PermRef::new_unchecked(&self.perm[..n], &self.perm_inv[..n], n) };
        solve_in_place(lu, lu, perm, rhs, Par::Seq, MemStack::new(&mut self.mem));
    }

    /// Whether x solves the sparse system: no entry is NaN or infinite and
    /// the residual is small beside the sizes involved (the sparse factors
    /// are not checked pivot by pivot). Returns the unknown to blame.
    fn check_sparse(&self, x: &[C64], b: &[C64]) -> Result<(), usize> {
        if let Some(i) = x.iter().position(|z| !finite(*z)) {
            return Err(i);
        }
        let mut r = b.to_vec();
        let mut amax = 0.0f64;
        for t in &self.trip {
            r[t.row] -= t.val * x[t.col];
            amax = amax.max(ops::abs(t.val));
        }
        let xmax = x.iter().map(|z| ops::abs(*z)).fold(0.0f64, f64::max);
        let bmax = b.iter().map(|z| ops::abs(*z)).fold(0.0f64, f64::max);
        let tol = 1e-9 * (amax * xmax + bmax);
        match r
            .iter()
            .enumerate()
            .map(|(i, z)| (i, ops::abs(*z)))
            .find(|&(_, e)| e.is_nan() || e > tol)
        {
            Some((i, _)) => Err(i),
            None => Ok(()),
        }
    }
}

/// Everything one solve needs, kept from case to case: a block of 64
/// cases (or a batch's chunk) solves with no allocation once the buffers
/// have grown to the network's size.
#[derive(Default)]
pub struct Workspace {
    coupled: Vec<bool>,
    forms: Vec<Form0>,
    /// Impedance of each branch at this frequency (for coupled branches).
    z: Vec<C64>,
    cur: Vec<Form>,
    built: Vec<bool>,
    scratch: Vec<(usize, C64)>,
    sys: Sys,
    x: Vec<C64>,
    b: Vec<C64>,
    /// Columns of the bus impedance matrix asked for so far in this case:
    /// `zcol_at[j]` is the offset of column j in `zcols` (or `NONE`).
    zcol_at: Vec<usize>,
    zcol_used: Vec<usize>,
    zcols: Vec<C64>,
    /// The last case's outcome.
    pub sol: Solution,
    /// Buffers for callers gathering one case's arguments and results.
    pub args: Vec<C64>,
    pub out: Vec<C64>,
}

const NONE: usize = usize::MAX;

/// Solve one case. `vals[0]` is ω in rad/s; the rest are the element
/// values in the order `Net::add` gave them.
pub fn solve(net: &Net, vals: &[C64], requests: &[Request]) -> Result<Solution, Failure> {
    solve_by(net, vals, requests, Method::Auto)
}

/// `solve` with the factorisation chosen.
pub fn solve_by(net: &Net, vals: &[C64], requests: &[Request], how: Method) -> Result<Solution, Failure> {
    let mut ws = Workspace::default();
    ws.solve(net, vals, requests, how)?;
    Ok(std::mem::take(&mut ws.sol))
}

impl Workspace {
    /// Solve one case into `self.sol`.
    pub fn solve(&mut self, net: &Net, vals: &[C64], requests: &[Request], how: Method) -> Result<(), Failure> {
        let w = vals[0].re;
        let nn = net.nodes.len();
        let nv = nn - 1;
        let ne = net.elems.len();
        self.coupled.clear();
        self.coupled.resize(ne, false);
        for e in &net.elems {
            if let ElemKind::Coupling { l1, l2, .. } = e.kind {
                self.coupled[l1] = true;
                self.coupled[l2] = true;
            }
        }
        // Decide each element's form and number the extra unknowns.
        let mut n = nv;
        self.forms.clear();
        self.z.clear();
        self.z.resize(ne, ZERO);
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
                    self.z[ei] = z;
                    if self.coupled[ei] {
                        if !finite(z) {
                            return Err(Failure::BadValue {
                                elem: e.name.clone(),
                                why: "a coupled branch cannot be open (infinite impedance)".into(),
                            });
                        }
                        n += 1;
                        Form0::Current(n - 1)
                    } else if z == ZERO {
                        n += 1;
                        Form0::Current(n - 1)
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
                    n += 1;
                    Form0::Current(n - 1)
                }
                ElemKind::ISource { .. }
                | ElemKind::Transadmittance { .. }
                | ElemKind::CurrentGain { .. }
                | ElemKind::Coupling { .. } => Form0::Driven,
            };
            self.forms.push(f);
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
        let dense = match how {
            Method::Dense => true,
            Method::Sparse => false,
            Method::Auto => n < SPARSE_FROM,
        };
        self.sys.reset(n, dense);
        // Linear forms of each element's current, built lazily (current
        // gains may refer to other elements' currents).
        self.cur.resize_with(ne, Form::default);
        self.built.clear();
        self.built.resize(ne, false);
        for ei in 0..ne {
            current_form(net, vals, &self.forms, ei, &mut self.cur, &mut self.built, 0)?;
        }
        let sys = &mut self.sys;
        // KCL rows: current leaving each node into its elements is zero.
        // A form's constant goes to the right-hand side.
        let kcl = |sys: &mut Sys, node: usize, terms: &[(usize, C64)], k: C64, sign: f64| {
            if node == 0 {
                return;
            }
            let r = node - 1;
            for &(c, v) in terms {
                sys.put(r, c, v * sign);
            }
            sys.rhs[r] -= k * sign;
        };
        for (ei, e) in net.elems.iter().enumerate() {
            let f = &self.cur[ei];
            match &e.kind {
                ElemKind::Coupling { .. } => {}
                ElemKind::VSource { .. }
                | ElemKind::VoltageGain { .. }
                | ElemKind::Transimpedance { .. }
                | ElemKind::ISource { .. }
                | ElemKind::Transadmittance { .. }
                | ElemKind::CurrentGain { .. } => {
                    // Delivered out of `a`: it enters node a.
                    kcl(sys, e.a, &f.terms, f.k, -1.0);
                    kcl(sys, e.b, &f.terms, f.k, 1.0);
                }
                ElemKind::Transformer { c, d } => {
                    kcl(sys, e.a, &f.terms, f.k, 1.0);
                    kcl(sys, e.b, &f.terms, f.k, -1.0);
                    // Secondary current into c: −conj(n)·I₁.
                    let nr = value(net, vals, ei, 0);
                    self.scratch.clear();
                    self.scratch.extend(f.terms.iter().map(|&(i, v)| (i, v * -nr.conj())));
                    kcl(sys, *c, &self.scratch, f.k, 1.0);
                    kcl(sys, *d, &self.scratch, f.k, -1.0);
                }
                _ => {
                    kcl(sys, e.a, &f.terms, f.k, 1.0);
                    kcl(sys, e.b, &f.terms, f.k, -1.0);
                }
            }
        }
        // Constraint rows of the elements with a current unknown.
        let vrow = |sys: &mut Sys, r: usize, node: usize, c: C64| {
            if node != 0 {
                sys.put(r, node - 1, c);
            }
        };
        for (ei, e) in net.elems.iter().enumerate() {
            let Form0::Current(r) = self.forms[ei] else { continue };
            vrow(sys, r, e.a, ONE);
            vrow(sys, r, e.b, -ONE);
            match &e.kind {
                ElemKind::Branch(_) => sys.put(r, r, -self.z[ei]),
                ElemKind::VSource { internal } => {
                    sys.rhs[r] += value(net, vals, ei, 0);
                    if let Some(g) = internal {
                        let z = g.impedance(value(net, vals, ei, 1), w);
                        if !finite(z) {
                            return Err(Failure::BadValue {
                                elem: e.name.clone(),
                                why: "the internal impedance of a voltage source cannot be open (infinite)".into(),
                            });
                        }
                        sys.put(r, r, z);
                    }
                }
                ElemKind::VoltageGain { c, d } => {
                    let mu = value(net, vals, ei, 0);
                    vrow(sys, r, *c, -mu);
                    vrow(sys, r, *d, mu);
                }
                ElemKind::Transimpedance { ctrl } => {
                    let rr = value(net, vals, ei, 0);
                    let f = &self.cur[*ctrl];
                    for &(col, v) in &f.terms {
                        sys.put(r, col, -(rr * v));
                    }
                    sys.rhs[r] += rr * f.k;
                }
                ElemKind::Transformer { c, d } => {
                    let nr = value(net, vals, ei, 0);
                    vrow(sys, r, *c, -nr);
                    vrow(sys, r, *d, nr);
                }
                _ => {}
            }
        }
        // Mutual impedances between coupled branches.
        for (ei, e) in net.elems.iter().enumerate() {
            if let ElemKind::Coupling { l1, l2, by } = e.kind {
                let x = value(net, vals, ei, 0);
                let zm = match by {
                    CouplingBy::Coefficient => x * ops::sqrt(self.z[l1] * self.z[l2]),
                    CouplingBy::MutualImpedance => x,
                    CouplingBy::MutualInductance => Given::Inductance.impedance(x, w),
                };
                let (Form0::Current(r1), Form0::Current(r2)) = (self.forms[l1], self.forms[l2]) else {
                    unreachable!("coupled branches have current unknowns")
                };
                sys.put(r1, r2, -zm);
                sys.put(r2, r1, -zm);
            }
        }
        if let Some(r) = sys.non_finite_row() {
            return Err(Failure::BadValue {
                elem: owner_name(net, &self.forms, r),
                why: "an element value is infinite where it has no limit".into(),
            });
        }
        if let Err(k) = sys.factor() {
            return Err(Failure::Singular(owner_name(net, &self.forms, k)));
        }
        self.x.clear();
        self.x.extend_from_slice(&sys.rhs);
        sys.solve(&mut self.x);
        if !sys.dense {
            if let Err(k) = sys.check_sparse(&self.x, &sys.rhs) {
                return Err(Failure::Singular(owner_name(net, &self.forms, k)));
            }
        }
        let sol = &mut self.sol;
        sol.v.clear();
        sol.v.push(ZERO);
        sol.v.extend_from_slice(&self.x[..nv]);
        sol.i.clear();
        sol.i.extend(self.cur[..ne].iter().map(|f| f.eval(&self.x)));
        sol.extra.clear();
        // Requests: with independent sources zeroed only the right-hand
        // side changes, so the same factors serve.
        for &j in &self.zcol_used {
            self.zcol_at[j] = NONE;
        }
        self.zcol_used.clear();
        self.zcols.clear();
        self.zcol_at.resize(nn, NONE);
        for req in requests {
            match *req {
                Request::Thevenin(p, q) => {
                    let voc = self.sol.v[p] - self.sol.v[q];
                    // 1 A into p and out at q, sources zeroed.
                    let vp = self.zcol(p, nn);
                    let vq = self.zcol(q, nn);
                    let zc = &self.zcols;
                    let zth = (zc[vp + p] - zc[vp + q]) - (zc[vq + p] - zc[vq + q]);
                    self.sol.extra.push(voc);
                    self.sol.extra.push(zth);
                    self.sol.extra.push(ops::div(voc, zth));
                }
                Request::ZEntry(i, j) => {
                    let v = self.zcol(j, nn);
                    self.sol.extra.push(self.zcols[v + i]);
                }
                Request::YEntry(i, j) => {
                    // Invert the node block of Z (sources zeroed).
                    let mut z = Mat::<C64>::zeros(nv, nv);
                    for col in 1..nn {
                        let v = self.zcol(col, nn);
                        for row in 1..nn {
                            z[(row - 1, col - 1)] = self.zcols[v + row];
                        }
                    }
                    // Where an ideal element (a voltage gain, a transimpedance,
                    // a transformer, a 0 Ω branch) ties node voltages together,
                    // the bus impedance matrix is singular and the admittance
                    // matrix does not exist: that entry alone is NaN, the rest
                    // of the network stands.
                    let Some(zl) = factor_plain(&z) else {
                        self.sol.extra.push(C64::new(f64::NAN, f64::NAN));
                        continue;
                    };
                    let mut e = vec![ZERO; nv];
                    if j == 0 || i == 0 {
                        // The reference row and column: minus the sum of the others.
                        self.sol.extra.push(y_ref_entry(&zl, nv, i, j));
                        continue;
                    }
                    e[j - 1] = ONE;
                    let col = zl.solve(&e);
                    self.sol.extra.push(col[i - 1]);
                }
            }
        }
        Ok(())
    }

    /// Column j of the bus impedance matrix (node voltages, ground's
    /// included, for 1 A injected at node j with the sources zeroed): its
    /// offset in `zcols`.
    fn zcol(&mut self, j: usize, nn: usize) -> usize {
        if self.zcol_at[j] != NONE {
            return self.zcol_at[j];
        }
        let n = self.sys.n;
        self.b.clear();
        self.b.resize(n, ZERO);
        if j != 0 {
            self.b[j - 1] = ONE;
        }
        self.sys.solve(&mut self.b);
        let at = self.zcols.len();
        self.zcols.push(ZERO);
        self.zcols.extend_from_slice(&self.b[..nn - 1]);
        self.zcol_at[j] = at;
        self.zcol_used.push(j);
        at
    }
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
fn owner_name(net: &Net, forms: &[Form0], r: usize) -> String {
    let nv = net.nodes.len() - 1;
    if r < nv {
        return format!("node `{}`", net.nodes[r + 1]);
    }
    for (ei, f) in forms.iter().enumerate() {
        if *f == Form0::Current(r) {
            return format!("the current of `{}`", net.elems[ei].name);
        }
    }
    "an unknown".into()
}

/// An LU factorisation with its pivots checked (for the bus impedance
/// matrix that `net_y` inverts).
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

/// Build the linear form of element `ei`'s current.
fn current_form(
    net: &Net,
    vals: &[C64],
    forms: &[Form0],
    ei: usize,
    cur: &mut [Form],
    built: &mut [bool],
    depth: usize,
) -> Result<(), Failure> {
    if built[ei] {
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
    let mut f = std::mem::take(&mut cur[ei]);
    f.terms.clear();
    f.k = ZERO;
    match (&e.kind, forms[ei]) {
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
            current_form(net, vals, forms, *ctrl, cur, built, depth + 1)?;
            let cf = &cur[*ctrl];
            f.k = b * cf.k;
            f.terms.extend(cf.terms.iter().map(|&(i, c)| (i, b * c)));
        }
        (ElemKind::Coupling { .. }, _) => {}
        (k, f0) => unreachable!("{k:?} as {f0:?}"),
    }
    cur[ei] = f;
    built[ei] = true;
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
