//! The report's table of each network: its elements (kind, nodes, value,
//! current and power) and its node voltages, read from the compiled
//! network and the values of the element cells and the network's record.

use serde::Serialize;

use super::{value, Value};
use crate::engine::Engine;
use crate::funcs::Shape;
use crate::network::{CouplingBy, ElemKind, Given};
use crate::units::format::Style;

/// One network of the sheet.
#[derive(Clone, Debug, Serialize)]
pub struct NetworkTable {
    pub name: String,
    /// The frequency it is solved at.
    pub frequency: Value,
    pub elements: Vec<NetworkElement>,
    /// Each node's voltage to `ground`, in the order the nodes first appear.
    pub nodes: Vec<(String, Value)>,
    /// The power the sources deliver and the branches absorb.
    pub delivered: Option<Value>,
    pub absorbed: Option<Value>,
}

/// One element line.
#[derive(Clone, Debug, Serialize)]
pub struct NetworkElement {
    pub name: String,
    /// `impedance`, `voltage source`, `voltage gain on V(bus, m)`, …
    pub kind: String,
    /// `util → bus` (a branch's current flows this way; a source delivers
    /// out of the first node).
    pub nodes: String,
    pub value: Value,
    /// A branch's current from its first node; a source's delivered.
    pub current: Option<Value>,
    /// Absorbed by a branch, delivered by a source.
    pub power: Option<Value>,
}

fn given(g: Given) -> &'static str {
    match g {
        Given::Impedance => "impedance",
        Given::Admittance => "admittance",
        Given::Inductance => "inductance",
        Given::Capacitance => "capacitance",
    }
}

/// The table of every network of the evaluated sheet.
pub fn tables(engine: &Engine, style: Style) -> Vec<NetworkTable> {
    let m = &engine.model;
    let mut out = Vec::new();
    for np in &m.program.networks {
        let Some(nid) = m.id(&np.name) else { continue };
        let cell = &m.cells[nid as usize];
        let Some(Shape::Record(fields)) = &cell.shape else {
            continue;
        };
        let vals = engine.values(nid);
        let field = |name: &str| {
            fields
                .iter()
                .position(|(f, _)| *f == name)
                .map(|k| value(vals[k], fields[k].1, None, style))
        };
        let net = &np.net;
        let node = |k: usize| net.nodes[k].as_str();
        let elem = |k: usize| net.elems[k].name.as_str();
        let mut elements = Vec::new();
        for e in &net.elems {
            let Some(id) = m.id(&e.name) else { continue };
            let c = &m.cells[id as usize];
            let Some(Shape::Scalar(q)) = &c.shape else { continue };
            let kind = match &e.kind {
                ElemKind::Branch(g) => given(*g).to_string(),
                ElemKind::VSource { internal: None } => "voltage source".into(),
                ElemKind::VSource { internal: Some(_) } => "voltage source behind an impedance".into(),
                ElemKind::ISource { shunt: None } => "current source".into(),
                ElemKind::ISource { shunt: Some(_) } => "current source with a shunt".into(),
                ElemKind::VoltageGain { c, d } => format!("voltage gain on V({}, {})", node(*c), node(*d)),
                ElemKind::Transadmittance { c, d } => format!("transadmittance on V({}, {})", node(*c), node(*d)),
                ElemKind::Transimpedance { ctrl } => format!("transimpedance on I({})", elem(*ctrl)),
                ElemKind::CurrentGain { ctrl } => format!("current gain on I({})", elem(*ctrl)),
                ElemKind::Transformer { c, d } => format!("ideal transformer, secondary {} → {}", node(*c), node(*d)),
                ElemKind::Coupling { by, .. } => match by {
                    CouplingBy::Coefficient => "coupling coefficient".into(),
                    CouplingBy::MutualInductance => "mutual inductance".into(),
                    CouplingBy::MutualImpedance => "mutual impedance".into(),
                },
            };
            let (nodes, current, power) = match &e.kind {
                ElemKind::Coupling { l1, l2, .. } => (format!("{} ↔ {}", elem(*l1), elem(*l2)), None, None),
                _ => (
                    format!("{} → {}", node(e.a), node(e.b)),
                    field(&format!("I({})", e.name)),
                    field(&format!("S({})", e.name)),
                ),
            };
            elements.push(NetworkElement {
                name: e.name.clone(),
                kind,
                nodes,
                value: value(engine.values(id)[0], *q, c.display.as_ref(), style),
                current,
                power,
            });
        }
        let nodes = net.nodes[1..]
            .iter()
            .filter_map(|n| field(&format!("V({n})")).map(|v| (n.clone(), v)))
            .collect();
        // The frequency: ω is the network's first argument.
        let w = np_omega(engine, &np.name);
        out.push(NetworkTable {
            name: np.name.clone(),
            frequency: w,
            elements,
            nodes,
            delivered: field("delivered"),
            absorbed: field("absorbed"),
        });
    }
    out
}

/// The network's frequency in Hz, from the ω its instruction is given
/// (the code before it run again over a copy of the values, since ω may
/// sit in a temporary slot reused later).
fn np_omega(engine: &Engine, name: &str) -> Value {
    use crate::engine::ops::Op;
    let prog = &engine.model.program;
    let hz = crate::units::Quantity::new(crate::units::Dim::FREQUENCY, crate::units::Kind::Hertz);
    let at = prog
        .code
        .iter()
        .position(|ins| matches!(ins.op, Op::Network(k) if prog.networks[k as usize].name == name));
    let w = match at {
        Some(at) => {
            let mut slots = engine.slots().to_vec();
            crate::engine::eval::run(&prog.code[..at], prog, &mut slots);
            let ins = &prog.code[at];
            slots[prog.call_args[ins.a as usize + 1] as usize]
        }
        None => num_complex::Complex64::new(f64::NAN, 0.0),
    };
    value(w / std::f64::consts::TAU, hz, None, Style { digits: 6 })
}
