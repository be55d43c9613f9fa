//! Network blocks in a sheet: the lines between `network NAME at FREQ`
//! and `end` are gathered while cells are collected, each element line a
//! cell holding the element's value (so `--set`, sweeps, batch columns and
//! searches reach it as any input); the network itself is a record cell
//! lowered to one `Op::Network` instruction, and `net_v(plant, bus)` and
//! its kin read that record's fields.

use std::collections::HashSet;
use std::sync::{Mutex, OnceLock};

use super::*;
use crate::diag::{did_you_mean, Diagnostic, ErrorCode, Span};
use crate::engine::ops::Op;
use crate::engine::program::{Emitter, Operand};
use crate::network::{self, CouplingBy, ElemKind, Field, Given, NetProgram, Request, GROUND};
use crate::units::{Dim, Kind, Quantity};

/// A network block as collected.
pub(super) struct NetDecl<'a> {
    pub head: &'a NetworkHead,
    pub head_span: Span,
    pub head_line: u32,
    pub elems: Vec<ElemDecl<'a>>,
    /// Element lines that could not be read (the network depends on them,
    /// so it is not reported again).
    pub bad: Vec<CellId>,
    /// Thevenin pairs and matrix entries the sheet asks of this network
    /// (node names as written; unknown ones are reported by the call).
    pub asked: Vec<(&'static str, String, String)>,
}

/// One element line.
pub(super) struct ElemDecl<'a> {
    pub cell: CellId,
    pub name: &'a Ident,
    pub form: &'static str,
    /// The node names (or, for `mutual` and the controlling element of a
    /// current-controlled source, element names).
    pub names: Vec<&'a Ident>,
    pub value: &'a Expr,
    pub extra: Option<&'a Expr>,
}

/// How the element forms are written, for messages.
pub(super) const FORMS: &str = "branch(a, b, Z|Y|L|C), emf(plus, minus, V[, Z]), inject(out, back, I[, shunt]), \
     vgain(a, b, c, d, μ), transadm(a, b, c, d, g), transimp(a, b, ctrl, r), igain(a, b, ctrl, β), \
     xformer(p1, p2, s1, s2, n), mutual(L1, L2, k|M|Zm)";

/// Read an element line inside a block: `name = form(names…, value[, extra])`.
pub(super) fn element_decl<'a>(d: &'a Definition, cell: CellId) -> Result<ElemDecl<'a>, Diagnostic> {
    let not_element = || {
        Diagnostic::error(
            ErrorCode::NetworkElement,
            d.expr.span,
            "inside a network block each line is an element",
        )
        .with_label("not an element")
        .with_hint(format!(
            "write `{} = branch(node, node, value)` or another element form: {FORMS}; close the block with `end` before other cells",
            d.name.name
        ))
    };
    let ExprKind::Call { func, args } = &d.expr.kind else {
        return Err(not_element());
    };
    let Some(&(form, n_names)) = NETWORK_ELEMENTS.iter().find(|(f, _)| *f == func.name) else {
        let mut e = not_element();
        if let Some(s) = did_you_mean(&func.name, NETWORK_ELEMENTS.iter().map(|(f, _)| *f)) {
            e = e.with_hint(format!("did you mean `{s}`? Element forms: {FORMS}"));
        }
        return Err(e);
    };
    let extra_ok = matches!(form, "emf" | "inject");
    let count_ok = args.len() == n_names + 1 || (extra_ok && args.len() == n_names + 2);
    if !count_ok {
        let form_text = FORMS.split(", ").find(|f| f.starts_with(form)).unwrap_or(form);
        return Err(Diagnostic::error(
            ErrorCode::NetworkElement,
            d.expr.span,
            format!(
                "`{form}` takes {} arguments here, but {} were given",
                n_names + 1,
                args.len()
            ),
        )
        .with_hint(format!("write it as {form_text}")));
    }
    let mut names = Vec::with_capacity(n_names);
    for a in &args[..n_names] {
        match &a.kind {
            ExprKind::Name(id) => names.push(id),
            _ => {
                return Err(Diagnostic::error(
                    ErrorCode::NetworkElement,
                    a.span,
                    format!(
                        "`{form}` takes {} {} first",
                        n_names,
                        if form == "mutual" {
                            "element names"
                        } else {
                            "node names"
                        }
                    ),
                )
                .with_label("not a name")
                .with_hint("nodes are plain names (`bus`, `n1`, `ground`); values come after them"))
            }
        }
    }
    Ok(ElemDecl {
        cell,
        name: &d.name,
        form,
        names,
        value: &args[n_names],
        extra: args.get(n_names + 1),
    })
}

/// Field names live as long as the program (they are few and reused).
/// `Net::node` through a map of the numbers given so far.
fn node_id(net: &mut network::Net, ids: &mut std::collections::HashMap<String, usize>, name: &str) -> usize {
    if let Some(&i) = ids.get(name) {
        return i;
    }
    net.nodes.push(name.to_string());
    ids.insert(name.to_string(), net.nodes.len() - 1);
    net.nodes.len() - 1
}

fn intern(s: String) -> &'static str {
    static NAMES: OnceLock<Mutex<HashSet<&'static str>>> = OnceLock::new();
    let mut set = NAMES
        .get_or_init(Default::default)
        .lock()
        .unwrap_or_else(|e| e.into_inner());
    if let Some(&n) = set.get(s.as_str()) {
        return n;
    }
    let n: &'static str = Box::leak(s.into_boxed_str());
    set.insert(n);
    n
}

fn field_name(net: &NetProgram, f: &Field) -> String {
    let node = |k: usize| net.net.nodes[k].as_str();
    let elem = |k: usize| net.net.elems[k].name.as_str();
    match f {
        Field::V(k) => format!("V({})", node(*k)),
        Field::I(k) => format!("I({})", elem(*k)),
        Field::S(k) => format!("S({})", elem(*k)),
        Field::Req(k, p) => match net.requests[*k] {
            Request::Thevenin(a, b) => format!("{}({},{})", ["Voc", "Zth", "Isc"][*p], node(a), node(b)),
            Request::ZEntry(i, j) => format!("Z({},{})", node(i), node(j)),
            Request::YEntry(i, j) => format!("Y({},{})", node(i), node(j)),
        },
        Field::Delivered => "delivered".into(),
        Field::Absorbed => "absorbed".into(),
    }
}

impl Lowerer<'_> {
    fn elem_error(&self, span: Span, msg: String) -> Diagnostic {
        Diagnostic::error(ErrorCode::NetworkElement, span, msg)
    }

    /// Lower a network's own cell: check its elements, build the solver's
    /// network, and emit its solve.
    pub(super) fn lower_network(&self, em: &mut Emitter, decl: &NetDecl) -> R<Val> {
        let head = decl.head;
        if decl.elems.is_empty() {
            return Err(Diagnostic::error(
                ErrorCode::NetworkShape,
                decl.head_span,
                format!("network `{}` has no elements", head.name.name),
            )
            .with_hint(format!("add element lines before `end`: {FORMS}")));
        }
        if decl.elems.len() > network::MAX_ELEMENTS {
            return Err(Diagnostic::error(
                ErrorCode::NetworkTooLarge,
                decl.head_span,
                format!(
                    "network `{}` has {} elements; a network may have at most {}",
                    head.name.name,
                    decl.elems.len(),
                    network::MAX_ELEMENTS
                ),
            )
            .with_hint("split it into networks joined by Thevenin equivalents (docs/limits.md)"));
        }
        // Frequency.
        let (f, fq) = self.scalar(em, &head.freq)?;
        crate::funcs::want_frequency(&[fq], 0, "the network's frequency").map_err(|ae| {
            Diagnostic::error(ErrorCode::DimensionMismatch, head.freq.span, ae.message).with_label(fq.describe())
        })?;
        let w = crate::funcs::omega(em, f, fq);

        // Nodes and elements, in order.
        let mut net = network::Net::new();
        // Node numbers by name (`Net::node` searches its list: fine for a
        // few nodes, quadratic for thousands).
        let mut ids: std::collections::HashMap<String, usize> =
            net.nodes.iter().enumerate().map(|(i, n)| (n.clone(), i)).collect();
        let mut elem_index = std::collections::HashMap::new();
        for (k, e) in decl.elems.iter().enumerate() {
            if let Some(&first) = elem_index.get(e.name.name.as_str()) {
                let first: &ElemDecl = &decl.elems[first];
                return Err(self
                    .elem_error(e.name.span, format!("element `{}` is defined twice", e.name.name))
                    .with_secondary(first.name.span, "first here"));
            }
            elem_index.insert(e.name.name.as_str(), k);
        }
        let elem_named = |id: &Ident| -> R<usize> {
            elem_index.get(id.name.as_str()).copied().ok_or_else(|| {
                let mut d = self.elem_error(
                    id.span,
                    format!("network `{}` has no element `{}`", head.name.name, id.name),
                );
                if let Some(s) = did_you_mean(&id.name, decl.elems.iter().map(|e| e.name.name.as_str())) {
                    d = d.with_hint(format!("did you mean `{s}`?"));
                }
                d
            })
        };
        for e in &decl.elems {
            for id in &e.names {
                if elem_index.contains_key(id.name.as_str()) && e.form != "mutual" {
                    let is_ctrl = matches!(e.form, "transimp" | "igain") && std::ptr::eq(*id, e.names[2]);
                    if !is_ctrl {
                        return Err(self.elem_error(
                            id.span,
                            format!("`{}` names an element, not a node", id.name),
                        )
                        .with_hint("give nodes names of their own (`bus`, `n1`); element names are for `mutual` and current-controlled sources"));
                    }
                }
            }
        }
        let mut pu: Option<bool> = None;
        let mut args: Vec<Operand> = vec![w];
        let mut kinds = Vec::with_capacity(decl.elems.len());
        for e in &decl.elems {
            let c = &self.cells[e.cell as usize];
            let Some(Shape::Scalar(q)) = &c.shape else {
                return Err(self.elem_error(
                    e.value.span,
                    "an element's value must be a single value, not a record".into(),
                ));
            };
            let q = *q;
            let v = Operand::Slot(c.slot);
            let node = |k: usize, net: &mut network::Net, ids: &mut std::collections::HashMap<String, usize>| {
                node_id(net, ids, &e.names[k].name)
            };
            let mut want_pu = |is_pu: bool, span: Span| -> R<()> {
                match pu {
                    None => {
                        pu = Some(is_pu);
                        Ok(())
                    }
                    Some(p) if p == is_pu => Ok(()),
                    Some(_) => Err(self
                        .elem_error(
                            span,
                            "a network is either per-unit throughout or in SI units throughout".into(),
                        )
                        .with_hint("give every element of this network in pu, or every one with units")),
                }
            };
            let given = |q: Quantity, span: Span, what: &str| -> R<(Given, bool)> {
                let g = if q.kind == Kind::PerUnit {
                    return Ok((Given::Impedance, true));
                } else if q.dim == Dim::IMPEDANCE {
                    Given::Impedance
                } else if q.dim == Dim::ADMITTANCE {
                    Given::Admittance
                } else if q.dim == Dim::INDUCTANCE {
                    Given::Inductance
                } else if q.dim == Dim::CAPACITANCE {
                    Given::Capacitance
                } else {
                    return Err(self
                        .elem_error(span, format!("{what} must be an impedance (Ω), admittance (S), inductance (H) or capacitance (F), or pu; this is {}", q.describe()))
                        .with_label(q.describe()));
                };
                Ok((g, false))
            };
            let want = |q: Quantity, dim: Dim, span: Span, what: &str| -> R<()> {
                if q.dim == dim && q.kind != Kind::PerUnit {
                    Ok(())
                } else {
                    Err(self
                        .elem_error(
                            span,
                            format!(
                                "{what} must be {}; this is {}",
                                Quantity::of(dim).describe(),
                                q.describe()
                            ),
                        )
                        .with_label(q.describe()))
                }
            };
            let plain = |q: Quantity, span: Span, what: &str| -> R<()> {
                if q.dim.is_none() && matches!(q.kind, Kind::Plain) {
                    Ok(())
                } else {
                    Err(self
                        .elem_error(span, format!("{what} must be a plain number; this is {}", q.describe()))
                        .with_label(q.describe()))
                }
            };
            let kind = match e.form {
                "branch" => {
                    let (g, p) = given(q, e.value.span, "a branch's value")?;
                    want_pu(p, e.value.span)?;
                    ElemKind::Branch(g)
                }
                "emf" | "inject" => {
                    let (dim, what) = if e.form == "emf" {
                        (Dim::VOLTAGE, "an emf's voltage")
                    } else {
                        (Dim::CURRENT, "an injected current")
                    };
                    if q.kind == Kind::PerUnit {
                        want_pu(true, e.value.span)?;
                    } else {
                        want(q, dim, e.value.span, what)?;
                        want_pu(false, e.value.span)?;
                    }
                    let extra = match e.extra {
                        Some(x) => {
                            let (o, xq) = self.scalar(em, x)?;
                            let (g, p) = given(xq, x.span, "an internal impedance or shunt")?;
                            want_pu(p, x.span)?;
                            args.push(v);
                            args.push(o);
                            Some(g)
                        }
                        None => {
                            args.push(v);
                            None
                        }
                    };
                    kinds.push(if e.form == "emf" {
                        ElemKind::VSource { internal: extra }
                    } else {
                        ElemKind::ISource { shunt: extra }
                    });
                    continue;
                }
                "vgain" => {
                    plain(q, e.value.span, "a voltage gain")?;
                    ElemKind::VoltageGain {
                        c: node(2, &mut net, &mut ids),
                        d: node(3, &mut net, &mut ids),
                    }
                }
                "transadm" => {
                    want(q, Dim::ADMITTANCE, e.value.span, "a transadmittance")?;
                    ElemKind::Transadmittance {
                        c: node(2, &mut net, &mut ids),
                        d: node(3, &mut net, &mut ids),
                    }
                }
                "transimp" => {
                    want(q, Dim::IMPEDANCE, e.value.span, "a transimpedance")?;
                    ElemKind::Transimpedance {
                        ctrl: elem_named(e.names[2])?,
                    }
                }
                "igain" => {
                    plain(q, e.value.span, "a current gain")?;
                    ElemKind::CurrentGain {
                        ctrl: elem_named(e.names[2])?,
                    }
                }
                "xformer" => {
                    plain(q, e.value.span, "a transformer's ratio")?;
                    ElemKind::Transformer {
                        c: node(2, &mut net, &mut ids),
                        d: node(3, &mut net, &mut ids),
                    }
                }
                "mutual" => {
                    let l1 = elem_named(e.names[0])?;
                    let l2 = elem_named(e.names[1])?;
                    for (l, id) in [(l1, e.names[0]), (l2, e.names[1])] {
                        if decl.elems[l].form != "branch" {
                            return Err(self.elem_error(
                                id.span,
                                format!("`{}` is not a branch; `mutual` couples two branches", id.name),
                            ));
                        }
                    }
                    if l1 == l2 {
                        return Err(self.elem_error(e.names[1].span, "a branch cannot be coupled to itself".into()));
                    }
                    let by = if q.is_plain_number() {
                        CouplingBy::Coefficient
                    } else if q.dim == Dim::IMPEDANCE {
                        CouplingBy::MutualImpedance
                    } else if q.dim == Dim::INDUCTANCE {
                        CouplingBy::MutualInductance
                    } else {
                        return Err(self
                            .elem_error(e.value.span, format!("a coupling is a coefficient k (a plain number), a mutual inductance (H) or a mutual impedance (Ω); this is {}", q.describe()))
                            .with_label(q.describe()));
                    };
                    ElemKind::Coupling { l1, l2, by }
                }
                f => unreachable!("element form {f}"),
            };
            args.push(v);
            kinds.push(kind);
        }
        // Terminals, in a second pass so element names used as controls
        // are known first.
        let mut idx = 0;
        for (e, kind) in decl.elems.iter().zip(kinds) {
            let (a, b) = if e.form == "mutual" {
                (0, 0)
            } else {
                (
                    node_id(&mut net, &mut ids, &e.names[0].name),
                    node_id(&mut net, &mut ids, &e.names[1].name),
                )
            };
            net.add(&e.name.name, kind, a, b);
            idx += 1;
        }
        debug_assert_eq!(idx, decl.elems.len());
        for (k, n) in net.nodes.iter().enumerate().skip(1) {
            if n == GROUND {
                unreachable!("ground is node 0: {k}");
            }
        }
        if net.nodes.len() - 1 > network::MAX_NODES {
            return Err(Diagnostic::error(
                ErrorCode::NetworkTooLarge,
                decl.head_span,
                format!(
                    "network `{}` has {} nodes besides `ground`; a network may have at most {}",
                    head.name.name,
                    net.nodes.len() - 1,
                    network::MAX_NODES
                ),
            )
            .with_hint("split it into networks joined by Thevenin equivalents (docs/limits.md)"));
        }
        if let Some(t) = network::check_topology(&net).into_iter().next() {
            let mut d = Diagnostic::error(
                ErrorCode::NetworkShape,
                head.name.span,
                format!("network `{}`: {t}", head.name.name),
            );
            let named = match &t {
                network::TopoError::VoltageLoop { elems } | network::TopoError::CurrentCut { sources: elems, .. } => {
                    elems.clone()
                }
                // The elements that reach the floating nodes.
                network::TopoError::Floating { nodes } => net
                    .elems
                    .iter()
                    .filter(|e| !matches!(e.kind, ElemKind::Coupling { .. }))
                    .filter(|e| nodes.contains(&net.nodes[e.a]) || nodes.contains(&net.nodes[e.b]))
                    .map(|e| e.name.clone())
                    .collect(),
            };
            for n in named {
                if let Some(e) = decl.elems.iter().find(|e| e.name.name == n) {
                    d = d.with_secondary(e.name.span, "here");
                }
            }
            // A node that floats may be a slip for another node's name.
            let stranded = match &t {
                network::TopoError::Floating { nodes } | network::TopoError::CurrentCut { nodes, .. } => nodes.clone(),
                network::TopoError::VoltageLoop { .. } => Vec::new(),
            };
            let slips: Vec<String> = stranded
                .iter()
                .filter_map(|n| {
                    let others = net
                        .nodes
                        .iter()
                        .map(String::as_str)
                        .filter(|o| !stranded.iter().any(|s| s == o));
                    did_you_mean(n, others).map(|s| format!("`{n}`: did you mean `{s}`?"))
                })
                .collect();
            if !slips.is_empty() {
                d = d.with_hint(slips.join("; "));
                return Err(d);
            }
            let hint = match t {
                network::TopoError::Floating { .. } => {
                    "connect each node to the rest by a branch, or check the spelling of its name"
                }
                network::TopoError::CurrentCut { .. } => {
                    "give the current source a shunt (`inject(a, b, I, Zsh)`) or a branch across it"
                }
                network::TopoError::VoltageLoop { .. } => {
                    "give one source an internal impedance (`emf(a, b, V, Z)`), or remove the redundant one"
                }
            };
            return Err(d.with_hint(hint));
        }
        // Requests the sheet makes of it.
        let node_of = |n: &str| net.nodes.iter().position(|x| x == n);
        let mut requests = Vec::new();
        for (what, a, b) in &decl.asked {
            let (Some(a), Some(b)) = (node_of(a), node_of(b)) else {
                continue;
            };
            let r = match *what {
                "net_thevenin" => Request::Thevenin(a, b),
                "net_z" => Request::ZEntry(a, b),
                _ => Request::YEntry(a, b),
            };
            if !requests.contains(&r) {
                requests.push(r);
            }
        }
        let pu = pu.unwrap_or(false);
        let prog = NetProgram {
            name: head.name.name.clone(),
            net,
            requests,
            peak: self.ctx.peak,
        };
        let fields = prog.fields();
        let width = prog.width() as u32;
        let k = self.networks.borrow().len() as u16;
        let outs = em.network(k, &args, width);
        let q = |dim: Dim, kind: Kind| {
            if pu {
                crate::funcs::PU
            } else {
                Quantity::new(dim, kind)
            }
        };
        let rec = fields
            .iter()
            .zip(outs)
            .map(|(f, o)| {
                let quantity = match f {
                    Field::V(_) => q(Dim::VOLTAGE, Kind::Plain),
                    Field::I(_) => q(Dim::CURRENT, Kind::Plain),
                    Field::S(_) | Field::Delivered | Field::Absorbed => q(Dim::POWER, Kind::ApparentPower),
                    Field::Req(r, p) => match (prog.requests[*r], p) {
                        (Request::Thevenin(..), 0) => q(Dim::VOLTAGE, Kind::Plain),
                        (Request::Thevenin(..), 1) => q(Dim::IMPEDANCE, Kind::Plain),
                        (Request::Thevenin(..), _) => q(Dim::CURRENT, Kind::Plain),
                        (Request::ZEntry(..), _) => q(Dim::IMPEDANCE, Kind::Plain),
                        (Request::YEntry(..), _) => q(Dim::ADMITTANCE, Kind::Plain),
                    },
                };
                (intern(field_name(&prog, f)), o, quantity)
            })
            .collect();
        self.networks.borrow_mut().push(prog);
        Ok(Val::Record(rec))
    }

    /// `net_v(plant, bus)`, `net_thevenin(plant, bus, ground)` and the
    /// others: fields of the network's record.
    pub(super) fn net_result(&self, em: &mut Emitter, whole: &Expr, func: &Ident, args: &[Expr]) -> R<Val> {
        let usage = match func.name.as_str() {
            "net_v" => "net_v(network, node) or net_v(network, node, node): a node's voltage to ground, or between two nodes",
            "net_i" => "net_i(network, element): an element's current (a branch's from its first node to its second; a source's delivered out of its first node)",
            "net_s" => "net_s(network, element): an element's complex power (absorbed by a branch, delivered by a source)",
            "net_thevenin" => "net_thevenin(network, a, b): the Thevenin equivalent between nodes a and b, a record V, Z, I (open-circuit voltage, impedance, short-circuit current)",
            "net_z" => "net_z(network, i, j): the voltage at node i for 1 A injected at node j, sources zeroed",
            "net_y" => "net_y(network, i, j): entry (i, j) of the nodal admittance matrix, sources zeroed",
            _ => "net_balance(network): a record `delivered`, `absorbed` of complex power",
        };
        let n_names = match func.name.as_str() {
            "net_balance" => 0,
            "net_v" if args.len() == 3 => 2,
            "net_v" | "net_i" | "net_s" => 1,
            _ => 2,
        };
        if args.len() != 1 + n_names {
            return Err(Diagnostic::error(
                ErrorCode::FunctionArgs,
                whole.span,
                format!(
                    "`{}` takes {} arguments, but {} were given",
                    func.name,
                    1 + n_names,
                    args.len()
                ),
            )
            .with_hint(usage));
        }
        let ExprKind::Name(net_id) = &args[0].kind else {
            return Err(Diagnostic::error(
                ErrorCode::FunctionArgs,
                args[0].span,
                "the first argument names a network",
            )
            .with_hint(usage));
        };
        let Some(&cid) = self.by_name.get(&net_id.name) else {
            return Err(self
                .name(net_id)
                .err()
                .unwrap_or_else(|| Diagnostic::error(ErrorCode::UnknownName, net_id.span, "no such network")));
        };
        let cell = &self.cells[cid as usize];
        let fields = match &cell.shape {
            Some(Shape::Record(f)) if f.iter().any(|(n, _)| *n == "delivered") => f,
            _ => {
                return Err(Diagnostic::error(
                    ErrorCode::FunctionArgs,
                    net_id.span,
                    format!("`{}` is not a network", net_id.name),
                )
                .with_hint(usage))
            }
        };
        let get = |name: &str| -> Option<(Operand, Quantity)> {
            fields
                .iter()
                .position(|(n, _)| *n == name)
                .map(|k| (Operand::Slot(cell.slot + k as u32), fields[k].1))
        };
        let prefixed = |p: &str| -> Vec<&str> {
            fields
                .iter()
                .filter_map(|(n, _)| n.strip_prefix(p).and_then(|r| r.strip_suffix(')')))
                .filter(|n| !n.contains(','))
                .collect()
        };
        let nodes = prefixed("V(");
        let elems = prefixed("I(");
        let name_arg = |k: usize| -> R<&Ident> {
            match &args[k].kind {
                ExprKind::Name(id) => Ok(id),
                _ => Err(Diagnostic::error(
                    ErrorCode::FunctionArgs,
                    args[k].span,
                    "a node or element name goes here",
                )
                .with_hint(usage)),
            }
        };
        let unknown = |id: &Ident, what: &str, known: &[&str]| -> Diagnostic {
            let mut d = Diagnostic::error(
                ErrorCode::UnknownName,
                id.span,
                format!("network `{}` has no {what} `{}`", net_id.name, id.name),
            )
            .with_label(format!("its {what}s are: {}", known.join(", ")));
            if let Some(s) = did_you_mean(&id.name, known.iter().copied()) {
                d = d.with_hint(format!("did you mean `{s}`?"));
            }
            d
        };
        let voltage_q = get(&format!("V({})", nodes.first().copied().unwrap_or(""))).map(|v| v.1);
        let node_v = |id: &Ident| -> R<Operand> {
            if id.name == GROUND {
                return Ok(Operand::Const(num_complex::Complex64::new(0.0, 0.0)));
            }
            get(&format!("V({})", id.name)).map(|v| v.0).ok_or_else(|| {
                let mut all = nodes.clone();
                all.push(GROUND);
                unknown(id, "node", &all)
            })
        };
        match func.name.as_str() {
            "net_v" => {
                let a = node_v(name_arg(1)?)?;
                let q = voltage_q.unwrap_or(Quantity::of(Dim::VOLTAGE));
                if n_names == 2 {
                    let b = node_v(name_arg(2)?)?;
                    Ok(Val::Scalar(em.bin(Op::Sub, a, b), q))
                } else {
                    Ok(Val::Scalar(a, q))
                }
            }
            "net_i" | "net_s" => {
                let id = name_arg(1)?;
                let p = if func.name == "net_i" { "I" } else { "S" };
                let (o, q) = get(&format!("{p}({})", id.name)).ok_or_else(|| unknown(id, "element", &elems))?;
                Ok(Val::Scalar(o, q))
            }
            "net_balance" => {
                let (d, qd) = get("delivered").expect("field");
                let (a, qa) = get("absorbed").expect("field");
                Ok(Val::Record(vec![("delivered", d, qd), ("absorbed", a, qa)]))
            }
            f => {
                let (a, b) = (name_arg(1)?, name_arg(2)?);
                for id in [a, b] {
                    if id.name != GROUND && !nodes.contains(&id.name.as_str()) {
                        let mut all = nodes.clone();
                        all.push(GROUND);
                        return Err(unknown(id, "node", &all));
                    }
                }
                let key = |p: &str| format!("{p}({},{})", a.name, b.name);
                let missing = || {
                    Diagnostic::error(
                        ErrorCode::FunctionArgs,
                        whole.span,
                        "the network was solved without this result (this is a bug in ohmsheet)",
                    )
                };
                match f {
                    "net_thevenin" => {
                        let v = get(&key("Voc")).ok_or_else(missing)?;
                        let z = get(&key("Zth")).ok_or_else(missing)?;
                        let i = get(&key("Isc")).ok_or_else(missing)?;
                        Ok(Val::Record(vec![("V", v.0, v.1), ("Z", z.0, z.1), ("I", i.0, i.1)]))
                    }
                    "net_z" => {
                        let z = get(&key("Z")).ok_or_else(missing)?;
                        Ok(Val::Scalar(z.0, z.1))
                    }
                    _ => {
                        let y = get(&key("Y")).ok_or_else(missing)?;
                        Ok(Val::Scalar(y.0, y.1))
                    }
                }
            }
        }
    }
}
