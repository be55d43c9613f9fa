//! Why one case of a network has no solution, in words: the element values
//! of that case that change its shape (a branch open at ∞ Ω or 0 S, a
//! short at 0 Ω, a source's internal impedance of 0 Ω, an injection's
//! shunt left open) are applied to the netlist, and the shape checks of
//! `topology` are run again on the result, so the message names the node
//! that floats or the loop that forms and the values that made it so
//! ("node `x` has no path to `ground` when `Zt` = 0 S (open)"). When the
//! shape is sound the values themselves cancel (an ideal inductance and
//! capacitance at resonance, a gain that undoes the network's response)
//! and the message says so, naming the unknown whose pivot vanished.
//!
//! Called only on the error path (explaining a NaN), never while solving.

use num_complex::Complex64 as C64;

use super::netlist::{Elem, ElemKind, Given, Net};
use super::solve::Failure;
use super::topology::{check, TopoError};

/// A value of this case that changes the network's shape.
struct Cause {
    elem: String,
    a: usize,
    b: usize,
    /// "`Zt` = 0 Ω (a short)"
    text: String,
    short: bool,
}

fn unit(g: Given) -> &'static str {
    match g {
        Given::Impedance => "Ω",
        Given::Admittance => "S",
        Given::Inductance => "H",
        Given::Capacitance => "F",
    }
}

fn shown(v: C64, g: Given) -> String {
    let num = |x: f64| {
        if x.is_infinite() {
            if x > 0.0 {
                "∞".to_string()
            } else {
                "−∞".to_string()
            }
        } else {
            format!("{x}")
        }
    };
    if v.im == 0.0 {
        format!("{} {}", num(v.re), unit(g))
    } else {
        format!(
            "({} {} j{}) {}",
            num(v.re),
            if v.im < 0.0 { "-" } else { "+" },
            num(v.im.abs()),
            unit(g)
        )
    }
}

fn is_inf(z: C64) -> bool {
    z.re.is_infinite() || z.im.is_infinite()
}

/// The netlist as this case's values shape it, and the values that did.
fn effective(net: &Net, vals: &[C64]) -> (Net, Vec<Cause>) {
    let w = vals[0].re;
    let mut out = Net {
        nodes: net.nodes.clone(),
        elems: Vec::new(),
        n_values: net.n_values,
    };
    let mut causes = Vec::new();
    let val = |e: &Elem, k: usize| vals[e.first_value + k];
    for e in &net.elems {
        let mut kind = e.kind.clone();
        match &e.kind {
            ElemKind::Branch(g) => {
                let z = g.impedance(val(e, 0), w);
                if z == C64::new(0.0, 0.0) {
                    kind = ElemKind::VSource { internal: None };
                    causes.push(Cause {
                        elem: e.name.clone(),
                        a: e.a,
                        b: e.b,
                        text: format!("`{}` = {} (a short)", e.name, shown(val(e, 0), *g)),
                        short: true,
                    });
                } else if is_inf(z) {
                    causes.push(Cause {
                        elem: e.name.clone(),
                        a: e.a,
                        b: e.b,
                        text: format!("`{}` = {} (open)", e.name, shown(val(e, 0), *g)),
                        short: false,
                    });
                    continue;
                }
            }
            ElemKind::VSource { internal: Some(g) } if g.impedance(val(e, 1), w) == C64::new(0.0, 0.0) => {
                kind = ElemKind::VSource { internal: None };
                causes.push(Cause {
                    elem: e.name.clone(),
                    a: e.a,
                    b: e.b,
                    text: format!(
                        "the internal impedance of `{}` is {} (an ideal source)",
                        e.name,
                        shown(val(e, 1), *g)
                    ),
                    short: true,
                });
            }
            ElemKind::ISource { shunt: Some(g) } if is_inf(g.impedance(val(e, 1), w)) => {
                kind = ElemKind::ISource { shunt: None };
                causes.push(Cause {
                    elem: e.name.clone(),
                    a: e.a,
                    b: e.b,
                    text: format!("the shunt of `{}` is {} (open)", e.name, shown(val(e, 1), *g)),
                    short: false,
                });
            }
            _ => {}
        }
        out.elems.push(Elem { kind, ..e.clone() });
    }
    (out, causes)
}

fn list(v: &[String]) -> String {
    v.iter().map(|s| format!("`{s}`")).collect::<Vec<_>>().join(", ")
}

fn when(causes: &[&Cause]) -> String {
    if causes.is_empty() {
        return String::new();
    }
    let t: Vec<&str> = causes.iter().map(|c| c.text.as_str()).collect();
    format!(" when {}", t.join(" and "))
}

/// Why network `name` has no solution with the values `vals` (ω first,
/// then the element values), given the solver's `failure`.
pub fn explain_failure(name: &str, net: &Net, vals: &[C64], failure: &Failure) -> String {
    let pivot = match failure {
        Failure::BadValue { elem, why } => {
            return format!("network `{name}` has no solution at this case: element `{elem}`: {why}")
        }
        Failure::Singular(u) => u,
    };
    let head = format!("network `{name}` is singular at this case");
    let (eff, causes) = effective(net, vals);
    let names = |ks: &[String]| -> Vec<usize> {
        ks.iter()
            .filter_map(|n| net.nodes.iter().position(|x| x == n))
            .collect()
    };
    if let Some(t) = check(&eff).into_iter().next() {
        return match &t {
            TopoError::Floating { nodes } | TopoError::CurrentCut { nodes, .. } => {
                let ks = names(nodes);
                let mut near: Vec<&Cause> = causes
                    .iter()
                    .filter(|c| !c.short && (ks.contains(&c.a) || ks.contains(&c.b)))
                    .collect();
                if let TopoError::CurrentCut { sources, .. } = &t {
                    let extra: Vec<&Cause> = causes
                        .iter()
                        .filter(|c| sources.contains(&c.elem) && !near.iter().any(|n| n.elem == c.elem))
                        .collect();
                    near.extend(extra);
                }
                format!("{head}: {t}{}", when(&near))
            }
            TopoError::VoltageLoop { elems } => {
                let near: Vec<&Cause> = causes.iter().filter(|c| c.short && elems.contains(&c.elem)).collect();
                format!(
                    "{head}: {} form a loop of ideal sources and shorts, whose voltages fix each other{}",
                    list(elems),
                    when(&near)
                )
            }
        };
    }
    format!(
        "{head}: its equations are singular ({pivot}) although every node has a path to `ground`: \
         the element values cancel — an ideal inductance and capacitance at resonance, or a controlled \
         source whose gain undoes the network's own response"
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::solve::solve;

    fn c(re: f64) -> C64 {
        C64::new(re, 0.0)
    }

    /// A node hung on one branch floats when that branch is open.
    #[test]
    fn an_open_branch_leaves_its_node_floating() {
        let mut n = Net::new();
        let a = n.node("a");
        let x = n.node("x");
        n.add("E", ElemKind::VSource { internal: None }, a, 0);
        n.add("R", ElemKind::Branch(Given::Impedance), a, 0);
        n.add("Zt", ElemKind::Branch(Given::Admittance), a, x);
        n.add("Ix", ElemKind::ISource { shunt: None }, x, 0);
        let vals = [c(314.0), c(1.0), c(5.0), c(0.0), c(1.0)];
        let f = solve(&n, &vals, &[]).unwrap_err();
        let m = explain_failure("plant", &n, &vals, &f);
        assert!(
            m.contains("network `plant`") && m.contains("`x`") && m.contains("`Zt` = 0 S (open)"),
            "{m}"
        );
    }

    /// Two ideal sources joined by a branch that is shorted form a loop.
    #[test]
    fn a_short_between_ideal_sources_closes_a_loop() {
        let mut n = Net::new();
        let a = n.node("a");
        let b = n.node("b");
        n.add("E1", ElemKind::VSource { internal: None }, a, 0);
        n.add("E2", ElemKind::VSource { internal: None }, b, 0);
        n.add("Zt", ElemKind::Branch(Given::Impedance), a, b);
        let vals = [c(314.0), c(1.0), c(2.0), c(0.0)];
        let f = solve(&n, &vals, &[]).unwrap_err();
        let m = explain_failure("p", &n, &vals, &f);
        assert!(
            m.contains("`E1`") && m.contains("`E2`") && m.contains("`Zt` = 0 Ω (a short)"),
            "{m}"
        );
        assert!(m.contains("loop"), "{m}");
    }

    /// An ideal L ∥ C at resonance as a node's only path: the shape is
    /// sound, the values cancel.
    #[test]
    fn resonance_is_named_as_cancelling_values() {
        let mut n = Net::new();
        let a = n.node("a");
        n.add("I", ElemKind::ISource { shunt: None }, a, 0);
        n.add("L", ElemKind::Branch(Given::Inductance), a, 0);
        n.add("C", ElemKind::Branch(Given::Capacitance), a, 0);
        // ω = 1/√(LC) = 1000 rad/s with L = 1 mH, C = 1 mF.
        let vals = [c(1000.0), c(1.0), c(1e-3), c(1e-3)];
        let f = solve(&n, &vals, &[]).unwrap_err();
        let m = explain_failure("tank", &n, &vals, &f);
        assert!(m.contains("resonance") && m.contains("`a`"), "{m}");
    }
}
