//! A network in a report (a table of its elements — kind, nodes, value,
//! current, power — and of its node voltages) and in the session's `/why`
//! (from a node voltage through the network down to the element values and
//! the inputs they use).

use crate::common::*;

const SHEET: &str = "\
@title \"Bridge on the bench\"
Rarm = 150 Ω
network br at 1 kHz
  E1 = emf(top, ground, 10 V)
  R1 = branch(top, m1, Rarm)
  R2 = branch(m1, ground, 220 Ω)
  L1 = branch(top, m2, 10 mH)
  C1 = branch(m2, ground, 1 µF)
  Rd = branch(m1, m2, 50 Ω)
  A1 = vgain(out, ground, m1, m2, 20)
  Ro = branch(out, ground, 1 kΩ)
end
Vd = net_v(br, m1, m2)
";

fn write_sheet(dir: &std::path::Path) -> std::path::PathBuf {
    let p = dir.join("bridge.ohm");
    std::fs::write(&p, SHEET).unwrap();
    p
}

#[test]
fn a_report_tables_each_network_with_its_elements_and_node_voltages() {
    let dir = tempfile::tempdir().unwrap();
    let p = write_sheet(dir.path());
    let out = ohmsheet()
        .args(["report", p.to_str().unwrap(), "--format", "md"])
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let md = String::from_utf8(out.stdout).unwrap();
    assert!(md.contains("### Network `br` at 1 kHz"), "{md}");
    assert!(
        md.contains("| Element | Kind | Nodes | Value | Current | Power |"),
        "{md}"
    );
    for row in [
        "| `E1` | voltage source | top → ground | 10 V |",
        "| `R1` | impedance | top → m1 | 150 Ω |",
        "| `L1` | inductance | top → m2 | 10 mH |",
        "| `C1` | capacitance | m2 → ground | 1 µF |",
        "| `A1` | voltage gain on V(m1, m2) | out → ground | 20 |",
    ] {
        assert!(md.contains(row), "no row `{row}` in\n{md}");
    }
    // The node voltages: V(out) = 20·V(m1, m2), the gain's own law.
    let e = engine(SHEET);
    let vd = value(&e, "Vd");
    let vout = value(&e, "br.V(out)");
    assert!(close(vout, vd * 20.0, 1e-12), "{vout} against 20·{vd}");
    for node in ["top", "m1", "m2", "out"] {
        assert!(md.contains(&format!("| `{node}` | ")), "no node {node} in\n{md}");
    }
    assert!(md.contains("Delivered by the sources:"), "{md}");
    // The same in HTML and JSON.
    let out = ohmsheet()
        .args(["report", p.to_str().unwrap(), "--format", "html"])
        .output()
        .unwrap();
    let html = String::from_utf8(out.stdout).unwrap();
    assert!(html.contains("<h3>Network <code>br</code> at 1 kHz</h3>"), "{html}");
    assert!(html.contains("<td>voltage gain on V(m1, m2)</td>"), "{html}");
    let out = ohmsheet()
        .args(["report", p.to_str().unwrap(), "--format", "json"])
        .output()
        .unwrap();
    let j: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let n = &j["networks"][0];
    assert_eq!(n["name"], "br");
    assert_eq!(n["elements"].as_array().unwrap().len(), 8);
    assert_eq!(n["elements"][1]["nodes"], "top → m1");
    let re = n["elements"][5]["current"]["re"].as_f64().unwrap();
    let i = e.values(e.model.id("br").unwrap());
    assert!(re.is_finite() && i.iter().all(|z| z.re.is_finite()));
}

#[test]
fn why_goes_from_a_node_voltage_down_to_the_element_values() {
    let dir = tempfile::tempdir().unwrap();
    let p = write_sheet(dir.path());
    let (mut s, _) = ohmsheet::session::Session::open(Some(&p), Some(dir.path().join("data")), false).unwrap();
    let r = s.handle("/why Vd");
    assert!(!r.refused, "{}", r.text);
    let t = &r.text;
    let at = |what: &str| t.find(what).unwrap_or_else(|| panic!("`{what}` not in\n{t}"));
    // The node voltage, then the network, then its elements, then the
    // input an element uses — in that order, one under the other.
    let vd = at("Vd = net_v(br, m1, m2)");
    let br = at("br = network br at 1 kHz");
    let r1 = at("R1 = branch(top, m1, Rarm)");
    let rarm = at("Rarm = 150 Ω");
    assert!(vd < br && br < r1 && r1 < rarm, "{t}");
    for e in [
        "E1 = emf(top, ground, 10 V)",
        "C1 = branch(m2, ground, 1 µF)",
        "A1 = vgain(out, ground, m1, m2, 20)",
    ] {
        at(e);
    }
    // After an edit of the input the tree shows the new value.
    let r = s.handle("Rarm = 220 Ω");
    assert!(!r.refused, "{}", r.text);
    let t = s.handle("/why Vd").text;
    assert!(t.contains("Rarm = 220 Ω"), "{t}");
}
