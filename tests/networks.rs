//! Network blocks in sheets: results against the independent nodal solve
//! in tests/reference (numpy), classical results, and the errors.

use num_complex::Complex64 as C64;

use crate::common::*;

fn reference(name: &str) -> serde_json::Value {
    let refs: serde_json::Value = serde_json::from_str(include_str!("reference/networks.json")).expect("networks.json");
    refs.as_array()
        .unwrap()
        .iter()
        .find(|r| r["name"] == name)
        .cloned()
        .expect("reference network")
}

fn c(v: &serde_json::Value) -> C64 {
    C64::new(v[0].as_f64().unwrap(), v[1].as_f64().unwrap())
}

const BRIDGE: &str = "\
network br at 1 kHz
  E1 = emf(top, ground, 10 V)
  R1 = branch(top, m1, 100 Ω)
  R2 = branch(m1, ground, 220 Ω)
  L1 = branch(top, m2, 10 mH)
  C1 = branch(m2, ground, 1 µF)
  Rd = branch(m1, m2, 50 Ω)
end
Vm1 = net_v(br, m1)
Vm2 = net_v(br, m2)
Vd  = net_v(br, m1, m2)
Id  = net_i(br, Rd)
th  = net_thevenin(br, m1, m2)
bal = net_balance(br)
";

#[test]
fn a_bridge_in_a_sheet_matches_the_independent_nodal_solve() {
    let r = reference("bridge");
    let e = engine(BRIDGE);
    assert!(close(value(&e, "Vm1"), c(&r["v"]["m1"]), 1e-12));
    assert!(close(value(&e, "Vm2"), c(&r["v"]["m2"]), 1e-12));
    assert!(close(value(&e, "Vd"), c(&r["thevenin"][0]["voc"]), 1e-12));
    assert!(close(value(&e, "th.V"), c(&r["thevenin"][0]["voc"]), 1e-12));
    assert!(close(value(&e, "th.Z"), c(&r["thevenin"][0]["zth"]), 1e-12));
    // Norton: Isc = Voc / Zth.
    assert!(close(value(&e, "th.I"), value(&e, "th.V") / value(&e, "th.Z"), 1e-12));
    // The detector current is V(m1, m2) / 50 Ω (Ohm's law).
    assert!(close(value(&e, "Id"), value(&e, "Vd") / 50.0, 1e-12));
    // Tellegen's theorem: what the source delivers the branches absorb.
    assert!(close(value(&e, "bal.delivered"), value(&e, "bal.absorbed"), 1e-12));
}

#[test]
fn two_sources_and_a_ladder_match_the_independent_nodal_solve() {
    let r = reference("two_sources");
    let src = "\
network p at 60 Hz
  Eu = emf(u, ground, 7967 V, (0.4 + j3.9) Ω)
  Eg = emf(g, ground, 7967 V ∠ -5°, (0.2 + j2.5) Ω)
  Tu = branch(u, bus, (0.3 + j1.1) Ω)
  Tg = branch(g, bus, (0.5 + j1.6) Ω)
  Cb = branch(bus, ground, 40 µF)
  Ld = branch(bus, ground, (60 + j25) Ω)
end
Vbus = net_v(p, bus)
th = net_thevenin(p, bus, ground)
tug = net_thevenin(p, u, g)
";
    let e = engine(src);
    assert!(close(value(&e, "Vbus"), c(&r["v"]["bus"]), 1e-12));
    assert!(close(value(&e, "th.V"), c(&r["thevenin"][0]["voc"]), 1e-12));
    assert!(close(value(&e, "th.Z"), c(&r["thevenin"][0]["zth"]), 1e-12));
    assert!(close(value(&e, "tug.Z"), c(&r["thevenin"][1]["zth"]), 1e-12));

    let r = reference("bridged_ladder");
    let src = "\
network lad at 5 kHz
  Is = inject(n1, ground, (10 - j2) mA)
  R1 = branch(n1, ground, 1 kΩ)
  L1 = branch(n1, n2, 5 mH)
  C2 = branch(n2, ground, 0.2 µF)
  L2 = branch(n2, n3, 5 mH)
  R3 = branch(n3, ground, 600 Ω)
  Cx = branch(n1, n3, 0.05 µF)
end
V3 = net_v(lad, n3)
th = net_thevenin(lad, n1, n3)
";
    let e = engine(src);
    assert!(close(value(&e, "V3"), c(&r["v"]["n3"]), 1e-12));
    assert!(close(value(&e, "th.Z"), c(&r["thevenin"][1]["zth"]), 1e-12));
}

/// The textbook Zbus method (from memory): the symmetrical fault current
/// at bus k is V_k(prefault) / Z_kk, Z_kk from the inverse of the bus
/// admittance matrix — the same number as the Thevenin short-circuit
/// current at that bus.
#[test]
fn fault_current_by_zbus_equals_the_thevenin_short_circuit_current() {
    let src = "\
network p at 50 Hz
  Eu = emf(u, ground, 6350 V, j2 Ω)
  Tu = branch(u, bus, (0.2 + j1.5) Ω)
  Ld = branch(bus, ground, (40 + j12) Ω)
end
Zkk = net_z(p, bus, bus)
Vpre = net_v(p, bus)
Ik = Vpre / Zkk
th = net_thevenin(p, bus, ground)
";
    let e = engine(src);
    assert!(close(value(&e, "Ik"), value(&e, "th.I"), 1e-12));
    // Zkk by hand: (j2 + 0.2 + j1.5) ∥ (40 + j12).
    let a = C64::new(0.2, 3.5);
    let b = C64::new(40.0, 12.0);
    assert!(close(value(&e, "Zkk"), a * b / (a + b), 1e-12));
}

#[test]
fn an_element_value_is_an_input_for_set_sweep_and_batch() {
    let e = engine(BRIDGE);
    let id = e.model.id("R1").expect("R1");
    assert!(e.model.cells[id as usize].input, "R1 is an input");
    let out = ohmsheet_with_sheet(BRIDGE, &["--set", "R1=150 Ω"]);
    assert!(out.contains("R1 ◂") && out.contains("150 Ω"), "{out}");
}

fn ohmsheet_with_sheet(src: &str, extra: &[&str]) -> String {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("n.ohm");
    std::fs::write(&p, src).unwrap();
    let o = ohmsheet().arg("run").arg(&p).args(extra).output().unwrap();
    String::from_utf8_lossy(&o.stdout).to_string() + &String::from_utf8_lossy(&o.stderr)
}

#[test]
fn network_errors_name_their_cause() {
    let code = |src: &str| -> Vec<String> { errors(src).iter().map(|d| d.code.name().to_string()).collect() };
    let msg = |src: &str| -> String {
        errors(src)
            .iter()
            .map(|d| d.message.clone())
            .collect::<Vec<_>>()
            .join("\n")
    };
    // No `end`.
    assert_eq!(
        code("network n at 50 Hz\n  R = branch(a, ground, 1 Ω)\n"),
        ["network-block"]
    );
    // `end` alone.
    assert_eq!(code("x = 1\nend\n"), ["network-block"]);
    // A line that is no element.
    assert_eq!(code("network n at 50 Hz\n  x = 5 Ω\nend\n"), ["network-element"]);
    // An element outside a block.
    assert_eq!(code("R = branch(a, b, 1 Ω)\n"), ["network-element"]);
    // A node with no path to ground.
    let m = msg(
        "network n at 50 Hz\n  E = emf(a, ground, 1 V)\n  R = branch(a, ground, 1 Ω)\n  Z = branch(b, c, 1 Ω)\nend\n",
    );
    assert!(m.contains("`b`") && m.contains("`c`") && m.contains("no path"), "{m}");
    // A loop of ideal sources.
    let m = msg("network n at 50 Hz\n  E1 = emf(a, ground, 1 V)\n  E2 = emf(a, ground, 2 V)\nend\n");
    assert!(m.contains("`E1`") && m.contains("`E2`") && m.contains("loop"), "{m}");
    // A mistyped node gets a suggestion.
    let d = errors(&format!("{BRIDGE}x = net_v(br, m3)\n"));
    assert!(
        d.iter().any(|d| d
            .hint
            .as_deref()
            .is_some_and(|h| h.contains("`m1`") || h.contains("`m2`"))),
        "{d:?}"
    );
    // A wrong unit for an element.
    let m = msg("network n at 50 Hz\n  E = emf(a, ground, 5 A)\n  R = branch(a, ground, 1 Ω)\nend\n");
    assert!(m.contains("voltage"), "{m}");
    // A frequency that is not one.
    assert_eq!(
        code("network n at 50 V\n  E = emf(a, ground, 5 V)\n  R = branch(a, ground, 1 Ω)\nend\n"),
        ["dimension-mismatch"]
    );
    // An empty network.
    assert_eq!(code("network n at 50 Hz\nend\n"), ["network-shape"]);
}

#[test]
fn shorts_and_opens_take_their_limits_in_a_sheet() {
    let src = |r: &str| {
        format!("network n at 50 Hz\n  E = emf(a, ground, 10 V)\n  R1 = branch(a, m, {r})\n  R2 = branch(m, ground, 3 Ω)\nend\nV = net_v(n, m)\n")
    };
    // A short makes m the source's node; an open leaves R2 with no current.
    assert!(close(value(&engine(&src("0 Ω")), "V"), C64::new(10.0, 0.0), 1e-15));
    let e = engine(&src("0 S"));
    assert!(close(value(&e, "V"), C64::new(0.0, 0.0), 1e-15), "{}", value(&e, "V"));
}

#[test]
fn words_of_the_block_stay_free_as_cell_names() {
    // `end` and `network` close and open blocks only as whole lines.
    let e = engine("end = 2 V\nnetwork = 3\nx = end * network\n");
    assert!(close(value(&e, "x"), C64::new(6.0, 0.0), 1e-15));
}
