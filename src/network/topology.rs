//! Checks on a network's shape, before any value is known: every node must
//! reach `ground` through elements that fix a voltage or carry a current
//! set by voltages, no loop may be made of ideal voltage sources alone, and
//! no set of nodes may hang on current sources alone. Each of these makes
//! the equations singular whatever the values, so it is an error naming the
//! elements, not a NaN at run time.

use super::netlist::{ElemKind, Net};

/// A problem with a network's shape, naming its nodes and elements.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum TopoError {
    /// These nodes have no path to ground at all.
    Floating { nodes: Vec<String> },
    /// These nodes reach ground only through these current sources.
    CurrentCut { nodes: Vec<String>, sources: Vec<String> },
    /// These ideal voltage sources (or voltage gains, transformer
    /// windings) form a loop.
    VoltageLoop { elems: Vec<String> },
}

impl std::fmt::Display for TopoError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let list = |v: &[String]| v.iter().map(|s| format!("`{s}`")).collect::<Vec<_>>().join(", ");
        match self {
            TopoError::Floating { nodes } => write!(
                f,
                "{} {} no path to `ground`",
                if nodes.len() == 1 { "node" } else { "nodes" },
                list(nodes) + if nodes.len() == 1 { " has" } else { " have" }
            ),
            TopoError::CurrentCut { nodes, sources } => write!(
                f,
                "{} {} `ground` only through the current source{} {}: their voltage is not fixed",
                if nodes.len() == 1 { "node" } else { "nodes" },
                list(nodes) + if nodes.len() == 1 { " reaches" } else { " reach" },
                if sources.len() == 1 { "" } else { "s" },
                list(sources)
            ),
            TopoError::VoltageLoop { elems } => write!(
                f,
                "the ideal voltage sources {} form a loop: their voltages fix each other",
                list(elems)
            ),
        }
    }
}

struct Dsu(Vec<usize>);

impl Dsu {
    fn new(n: usize) -> Dsu {
        Dsu((0..n).collect())
    }
    fn find(&mut self, x: usize) -> usize {
        let mut r = x;
        while self.0[r] != r {
            r = self.0[r];
        }
        let mut y = x;
        while self.0[y] != r {
            let next = self.0[y];
            self.0[y] = r;
            y = next;
        }
        r
    }
    fn union(&mut self, a: usize, b: usize) -> bool {
        let (ra, rb) = (self.find(a), self.find(b));
        if ra == rb {
            return false;
        }
        self.0[ra] = rb;
        true
    }
}

/// Conducting pairs of nodes an element joins, and whether it is a current
/// source (whose current does not depend on its own terminal voltage).
fn joins(e: &super::netlist::Elem) -> (Vec<(usize, usize)>, bool) {
    match &e.kind {
        ElemKind::ISource { shunt: None } | ElemKind::Transadmittance { .. } | ElemKind::CurrentGain { .. } => {
            (vec![(e.a, e.b)], true)
        }
        ElemKind::Transformer { c, d } => (vec![(e.a, e.b), (*c, *d)], false),
        ElemKind::Coupling { .. } => (vec![], false),
        _ => (vec![(e.a, e.b)], false),
    }
}

/// Every problem with the network's shape.
pub fn check(net: &Net) -> Vec<TopoError> {
    let nn = net.nodes.len();
    let mut out = Vec::new();
    // Reach through everything.
    let mut all = Dsu::new(nn);
    let mut solid = Dsu::new(nn);
    for e in &net.elems {
        let (pairs, current) = joins(e);
        for (a, b) in pairs {
            all.union(a, b);
            if !current {
                solid.union(a, b);
            }
        }
    }
    let g_all = all.find(0);
    let floating: Vec<String> = (1..nn)
        .filter(|&k| all.find(k) != g_all)
        .map(|k| net.nodes[k].clone())
        .collect();
    if !floating.is_empty() {
        out.push(TopoError::Floating { nodes: floating });
    }
    let g_solid = solid.find(0);
    let cut: Vec<usize> = (1..nn)
        .filter(|&k| all.find(k) == g_all && solid.find(k) != g_solid)
        .collect();
    if !cut.is_empty() {
        let in_cut = |k: usize| cut.contains(&k);
        let sources: Vec<String> = net
            .elems
            .iter()
            .filter(|e| joins(e).1 && (in_cut(e.a) != in_cut(e.b)))
            .map(|e| e.name.clone())
            .collect();
        out.push(TopoError::CurrentCut {
            nodes: cut.iter().map(|&k| net.nodes[k].clone()).collect(),
            sources,
        });
    }
    // Loops of ideal voltage-fixing elements.
    let mut vs = Dsu::new(nn);
    let mut edges: Vec<(usize, usize, usize)> = Vec::new();
    for (ei, e) in net.elems.iter().enumerate() {
        let fixes = matches!(
            e.kind,
            ElemKind::VSource { internal: None } | ElemKind::VoltageGain { .. } | ElemKind::Transimpedance { .. }
        );
        if !fixes {
            continue;
        }
        if !vs.union(e.a, e.b) {
            // The loop: this element and the path between its ends.
            let mut elems = path(nn, &edges, e.a, e.b)
                .into_iter()
                .map(|k| net.elems[k].name.clone())
                .collect::<Vec<_>>();
            elems.push(e.name.clone());
            out.push(TopoError::VoltageLoop { elems });
        }
        edges.push((e.a, e.b, ei));
    }
    out
}

/// Element indices on a path from `from` to `to` through `edges` (a forest).
fn path(nn: usize, edges: &[(usize, usize, usize)], from: usize, to: usize) -> Vec<usize> {
    let mut prev: Vec<Option<(usize, usize)>> = vec![None; nn];
    let mut seen = vec![false; nn];
    let mut queue = std::collections::VecDeque::from([from]);
    seen[from] = true;
    while let Some(x) = queue.pop_front() {
        if x == to {
            break;
        }
        for &(a, b, e) in edges {
            let y = if a == x {
                b
            } else if b == x {
                a
            } else {
                continue;
            };
            if !seen[y] {
                seen[y] = true;
                prev[y] = Some((x, e));
                queue.push_back(y);
            }
        }
    }
    let mut out = Vec::new();
    let mut x = to;
    while let Some((p, e)) = prev[x] {
        out.push(e);
        x = p;
    }
    out.reverse();
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::netlist::{Given, Net};

    #[test]
    fn a_node_without_a_path_is_named() {
        let mut n = Net::new();
        let a = n.node("a");
        let b = n.node("island");
        let c = n.node("island2");
        n.add("R", ElemKind::Branch(Given::Impedance), a, 0);
        n.add("Z", ElemKind::Branch(Given::Impedance), b, c);
        assert_eq!(
            check(&n),
            vec![TopoError::Floating {
                nodes: vec!["island".into(), "island2".into()]
            }]
        );
    }

    #[test]
    fn nodes_hanging_on_current_sources_are_named_with_the_sources() {
        let mut n = Net::new();
        let a = n.node("a");
        let b = n.node("b");
        n.add("R", ElemKind::Branch(Given::Impedance), a, 0);
        n.add("I1", ElemKind::ISource { shunt: None }, b, a);
        let e = check(&n);
        assert_eq!(
            e,
            vec![TopoError::CurrentCut {
                nodes: vec!["b".into()],
                sources: vec!["I1".into()]
            }]
        );
        assert!(e[0].to_string().contains("`I1`"), "{}", e[0]);
    }

    #[test]
    fn a_loop_of_ideal_sources_is_named_whole() {
        let mut n = Net::new();
        let a = n.node("a");
        let b = n.node("b");
        n.add("E1", ElemKind::VSource { internal: None }, a, 0);
        n.add("E2", ElemKind::VSource { internal: None }, b, a);
        n.add("R", ElemKind::Branch(Given::Impedance), b, 0);
        n.add("E3", ElemKind::VSource { internal: None }, b, 0);
        assert_eq!(
            check(&n),
            vec![TopoError::VoltageLoop {
                // In the loop's order: from b to a by E2, a to ground by E1,
                // back to b by E3.
                elems: vec!["E2".into(), "E1".into(), "E3".into()]
            }]
        );
        // A source with an internal impedance closes no such loop.
        let mut n = Net::new();
        let a = n.node("a");
        n.add("E1", ElemKind::VSource { internal: None }, a, 0);
        n.add(
            "E2",
            ElemKind::VSource {
                internal: Some(Given::Impedance),
            },
            a,
            0,
        );
        assert!(check(&n).is_empty());
    }
}
