//! A network as the solver sees it: nodes by number (0 is `ground`), and
//! elements whose values come, case by case, from a slice of numbers in
//! coherent SI units. Names are kept only for messages.

/// How a two-terminal value is given; the unit written decides, as it does
/// for `||`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Given {
    /// Ω: the element's impedance Z.
    Impedance,
    /// S: the element's admittance Y.
    Admittance,
    /// H: an inductance L, impedance jωL.
    Inductance,
    /// F: a capacitance C, impedance 1/(jωC).
    Capacitance,
}

impl Given {
    /// The element's impedance at angular frequency `w`.
    pub fn impedance(self, v: num_complex::Complex64, w: f64) -> num_complex::Complex64 {
        use num_complex::Complex64 as C;
        match self {
            Given::Impedance => v,
            Given::Admittance => crate::engine::ops::div(C::new(1.0, 0.0), v),
            Given::Inductance => C::new(0.0, w) * v,
            Given::Capacitance => crate::engine::ops::div(C::new(1.0, 0.0), C::new(0.0, w) * v),
        }
    }
}

/// What an element is. Nodes `a` and `b` of the element are its terminals:
/// for a source, `a` is the terminal its current leaves by (the `+`).
#[derive(Clone, Debug, PartialEq)]
pub enum ElemKind {
    /// A two-terminal impedance or admittance. Values: [value].
    Branch(Given),
    /// A voltage source V (`a` is `+`), with a series internal impedance
    /// when `internal` is set. Values: [V] or [V, Z].
    VSource { internal: Option<Given> },
    /// A current source I driven out of `a` into the network, back in at
    /// `b`, with a shunt across it when `shunt` is set. Values: [I] or
    /// [I, shunt].
    ISource { shunt: Option<Given> },
    /// Voltage gain: V(a,b) = μ·V(c,d). Values: [μ].
    VoltageGain { c: usize, d: usize },
    /// Transadmittance: a current g·V(c,d) delivered out of `a` (back in
    /// at `b`). Values: [g] (S).
    Transadmittance { c: usize, d: usize },
    /// Transimpedance: V(a,b) = r·I(ctrl). Values: [r] (Ω).
    Transimpedance { ctrl: usize },
    /// Current gain: a current β·I(ctrl) delivered out of `a` (back in at
    /// `b`). Values: [β].
    CurrentGain { ctrl: usize },
    /// An ideal transformer: winding `a`–`b` (primary) and `c`–`d`
    /// (secondary), V(a,b) = n·V(c,d) with a complex ratio n (turns and
    /// phase shift); no power is lost: V(a,b)·I₁* + V(c,d)·I₂* = 0.
    /// Values: [n].
    Transformer { c: usize, d: usize },
    /// Mutual coupling between two inductive branches (element indices).
    /// Values: [k] (a coefficient) or [Zm] (a mutual impedance in Ω).
    Coupling { l1: usize, l2: usize, by: CouplingBy },
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CouplingBy {
    /// The coefficient k: Zm = k·√(Z₁·Z₂).
    Coefficient,
    /// The mutual impedance jωM in Ω.
    MutualImpedance,
    /// The mutual inductance M in H.
    MutualInductance,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Elem {
    pub name: String,
    pub kind: ElemKind,
    pub a: usize,
    pub b: usize,
    /// Index of this element's first value in the values slice.
    pub first_value: usize,
}

impl ElemKind {
    /// How many values the element takes.
    pub fn n_values(&self) -> usize {
        match self {
            ElemKind::VSource { internal: Some(_) } | ElemKind::ISource { shunt: Some(_) } => 2,
            _ => 1,
        }
    }
    /// An independent source (zeroed for a Thevenin impedance).
    pub fn is_independent_source(&self) -> bool {
        matches!(self, ElemKind::VSource { .. } | ElemKind::ISource { .. })
    }
}

/// A network ready to solve: node names (index 0 is the reference node,
/// `ground`), elements, and the number of values a case supplies (the
/// angular frequency ω is the first of them).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Net {
    pub nodes: Vec<String>,
    pub elems: Vec<Elem>,
    pub n_values: usize,
}

/// The name of the reference node.
pub const GROUND: &str = "ground";

/// The most nodes (besides `ground`) one network may have. Each case
/// factors one matrix of the node voltages and the currents the modified
/// nodal equations add; kept dense it needs 16·n² bytes (1.6 GB at
/// 10,000 unknowns), so past this a sheet is refused rather than left to
/// exhaust memory (docs/limits.md).
pub const MAX_NODES: usize = 10_000;

/// The most elements one network may have (docs/limits.md): twice the
/// nodes, as many as a square mesh of MAX_NODES nodes has branches.
pub const MAX_ELEMENTS: usize = 20_000;

impl Net {
    /// An empty network with only the reference node; element values start
    /// after ω.
    pub fn new() -> Net {
        Net {
            nodes: vec![GROUND.to_string()],
            elems: Vec::new(),
            n_values: 1,
        }
    }

    /// The node called `name`, added if new.
    pub fn node(&mut self, name: &str) -> usize {
        match self.nodes.iter().position(|n| n == name) {
            Some(i) => i,
            None => {
                self.nodes.push(name.to_string());
                self.nodes.len() - 1
            }
        }
    }

    /// Add an element; returns its index.
    pub fn add(&mut self, name: &str, kind: ElemKind, a: usize, b: usize) -> usize {
        let first_value = self.n_values;
        self.n_values += kind.n_values();
        self.elems.push(Elem {
            name: name.to_string(),
            kind,
            a,
            b,
            first_value,
        });
        self.elems.len() - 1
    }

    pub fn elem_index(&self, name: &str) -> Option<usize> {
        self.elems.iter().position(|e| e.name == name)
    }
}
