//! The network solver against an independent nodal solve
//! (tests/reference/gen_networks.py, numpy: classical nodal analysis with
//! sources as Norton equivalents), and against classical results.

use num_complex::Complex64 as C64;
use ohmsheet::network::{solve, ElemKind, Given, Net, Request};

fn c(v: &serde_json::Value) -> C64 {
    C64::new(v[0].as_f64().unwrap(), v[1].as_f64().unwrap())
}

fn close(a: C64, b: C64, what: &str) {
    assert!(
        (a - b).norm() <= 1e-9 * (1.0 + b.norm()),
        "{what}: got {a}, reference {b}"
    );
}

#[test]
fn networks_match_an_independent_nodal_solve() {
    let refs: serde_json::Value = serde_json::from_str(include_str!("reference/networks.json")).expect("networks.json");
    for r in refs.as_array().unwrap() {
        let name = r["name"].as_str().unwrap();
        let mut net = Net::new();
        let mut vals = vec![C64::new(std::f64::consts::TAU * r["f"].as_f64().unwrap(), 0.0)];
        for (k, e) in r["elems"].as_array().unwrap().iter().enumerate() {
            let a = net.node(e[1].as_str().unwrap());
            let b = net.node(e[2].as_str().unwrap());
            let kind = match e[0].as_str().unwrap() {
                "Z" => ElemKind::Branch(Given::Impedance),
                "Y" => ElemKind::Branch(Given::Admittance),
                "L" => ElemKind::Branch(Given::Inductance),
                "C" => ElemKind::Branch(Given::Capacitance),
                "V" => ElemKind::VSource {
                    internal: (!e[4].is_null()).then_some(Given::Impedance),
                },
                "I" => ElemKind::ISource { shunt: None },
                x => panic!("{x}"),
            };
            net.add(&format!("e{k}"), kind, a, b);
            vals.push(c(&e[3]));
            if !e[4].is_null() {
                vals.push(c(&e[4]));
            }
        }
        let pairs: Vec<(usize, usize, &serde_json::Value)> = r["thevenin"]
            .as_array()
            .unwrap()
            .iter()
            .map(|t| {
                (
                    net.node(t["a"].as_str().unwrap()),
                    net.node(t["b"].as_str().unwrap()),
                    t,
                )
            })
            .collect();
        let reqs: Vec<Request> = pairs.iter().map(|&(a, b, _)| Request::Thevenin(a, b)).collect();
        let s = solve(&net, &vals, &reqs).unwrap_or_else(|e| panic!("{name}: {e}"));
        for (node, v) in r["v"].as_object().unwrap() {
            let k = net.node(node);
            close(s.v[k], c(v), &format!("{name}: V({node})"));
        }
        for (i, (_, _, t)) in pairs.iter().enumerate() {
            close(s.extra[3 * i], c(&t["voc"]), &format!("{name}: Voc {t}"));
            close(s.extra[3 * i + 1], c(&t["zth"]), &format!("{name}: Zth {t}"));
        }
    }
}
