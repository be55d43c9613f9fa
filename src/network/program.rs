//! A network as an instruction of the compiled program: `Op::Network`
//! reads ω and the element values from its argument slots, solves, and
//! writes every result into consecutive slots in the order `fields` gives.

use num_complex::Complex64 as C64;

use super::netlist::{ElemKind, Net};
use super::solve::{Failure, Method, Request, Workspace};

/// One network of a compiled sheet.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct NetProgram {
    pub name: String,
    pub net: Net,
    pub requests: Vec<Request>,
    /// Phasors are peak values: powers are halved.
    pub peak: bool,
}

/// What each result slot holds.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Field {
    /// Voltage of a node to ground.
    V(usize),
    /// Current of an element.
    I(usize),
    /// Complex power of an element (absorbed by a passive one, delivered
    /// by a source).
    S(usize),
    /// Request `k`'s `part`-th value.
    Req(usize, usize),
    /// Power delivered by all sources (independent and controlled).
    Delivered,
    /// Power absorbed by all branches (transformers and couplings neither
    /// take nor give).
    Absorbed,
}

impl NetProgram {
    /// The result slots, in order: node voltages (not ground), element
    /// currents, element powers, then each request's values.
    pub fn fields(&self) -> Vec<Field> {
        let mut f: Vec<Field> = (1..self.net.nodes.len()).map(Field::V).collect();
        let ne = self.net.elems.len();
        f.extend((0..ne).map(Field::I));
        f.extend((0..ne).map(Field::S));
        for (k, r) in self.requests.iter().enumerate() {
            f.extend((0..r.width()).map(|p| Field::Req(k, p)));
        }
        f.push(Field::Delivered);
        f.push(Field::Absorbed);
        f
    }

    pub fn width(&self) -> usize {
        let ne = self.net.elems.len();
        self.net.nodes.len() - 1 + 2 * ne + self.requests.iter().map(|r| r.width()).sum::<usize>() + 2
    }

    /// Solve one case; on failure every result is NaN and the reason is
    /// returned. Uses this thread's workspace (see `with_workspace`).
    pub fn run(&self, args: &[C64], out: &mut [C64]) -> Result<(), Failure> {
        with_workspace(|ws| self.run_in(ws, args, out))
    }

    /// `run` with the caller's workspace: no allocation once its buffers
    /// have grown to this network's size.
    pub fn run_in(&self, ws: &mut Workspace, args: &[C64], out: &mut [C64]) -> Result<(), Failure> {
        match ws.solve(&self.net, args, &self.requests, Method::Auto) {
            Ok(()) => {
                let sol = &ws.sol;
                let nn = self.net.nodes.len();
                let ne = self.net.elems.len();
                let k = if self.peak { 0.5 } else { 1.0 };
                out[..nn - 1].copy_from_slice(&sol.v[1..]);
                out[nn - 1..nn - 1 + ne].copy_from_slice(&sol.i);
                for (ei, e) in self.net.elems.iter().enumerate() {
                    let s = match e.kind {
                        // A transformer's power is what its primary takes
                        // (its secondary gives the same back).
                        ElemKind::Transformer { .. } => sol.between(e.a, e.b) * sol.i[ei].conj(),
                        ElemKind::Coupling { .. } => C64::new(0.0, 0.0),
                        _ => sol.between(e.a, e.b) * sol.i[ei].conj(),
                    };
                    out[nn - 1 + ne + ei] = s * k;
                }
                let r0 = nn - 1 + 2 * ne;
                out[r0..r0 + sol.extra.len()].copy_from_slice(&sol.extra);
                let (mut delivered, mut absorbed) = (C64::new(0.0, 0.0), C64::new(0.0, 0.0));
                for (ei, e) in self.net.elems.iter().enumerate() {
                    let s = out[nn - 1 + ne + ei];
                    match e.kind {
                        ElemKind::Branch(_) => absorbed += s,
                        ElemKind::Transformer { .. } | ElemKind::Coupling { .. } => {}
                        _ => delivered += s,
                    }
                }
                let w = out.len();
                out[w - 2] = delivered;
                out[w - 1] = absorbed;
                Ok(())
            }
            Err(f) => {
                out.fill(C64::new(f64::NAN, f64::NAN));
                Err(f)
            }
        }
    }
}

thread_local! {
    static WORKSPACE: std::cell::RefCell<Workspace> = std::cell::RefCell::new(Workspace::default());
}

/// Run `f` with this thread's network workspace (kept between calls, so
/// solving case after case allocates nothing once it has grown).
pub fn with_workspace<R>(f: impl FnOnce(&mut Workspace) -> R) -> R {
    WORKSPACE.with(|w| match w.try_borrow_mut() {
        Ok(mut ws) => f(&mut ws),
        // Not expected (a solve does not call back into a solve), but a
        // fresh workspace is always correct.
        Err(_) => f(&mut Workspace::default()),
    })
}
