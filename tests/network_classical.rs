//! Classical results of circuit theory, each checked on networks written
//! as sheets: bridges, the delta–wye equivalence, the bus impedance method
//! of fault studies, superposition and the reflection of impedance by an
//! ideal transformer. Each test names where its rule comes from. Element
//! values are invented.

use num_complex::Complex64 as C64;

use crate::common::*;

fn cx(re: f64, im: f64) -> C64 {
    C64::new(re, im)
}

/// |a − b| ≤ rel·scale: a check relative to the size of the quantities
/// involved (the usual error of a double-precision solve of a small,
/// well-conditioned system is a few ε of that).
fn near(a: C64, b: C64, rel: f64, scale: f64, what: &str) {
    assert!(
        (a - b).norm() <= rel * scale,
        "{what}: {a} against {b} (difference {:e}, allowed {:e})",
        (a - b).norm(),
        rel * scale
    );
}

fn par(a: C64, b: C64) -> C64 {
    a * b / (a + b)
}

fn bridge(z1: &str, z2: &str, z3: &str, z4: &str, f: &str) -> String {
    bridge_with(z1, z2, z3, z4, f, "  Zd = branch(m1, m2, 50 Ω)\n") + "Id = net_i(br, Zd)\n"
}

/// The bridge with `detector` lines between its arms and `end`.
fn bridge_with(z1: &str, z2: &str, z3: &str, z4: &str, f: &str, detector: &str) -> String {
    format!(
        "network br at {f}\n\
         \x20 E = emf(top, ground, 10 V)\n\
         \x20 Z1 = branch(top, m1, {z1})\n\
         \x20 Z2 = branch(m1, ground, {z2})\n\
         \x20 Z3 = branch(top, m2, {z3})\n\
         \x20 Z4 = branch(m2, ground, {z4})\n\
         {detector}\
         end\n\
         I1 = net_i(br, Z1)\n\
         th = net_thevenin(br, m1, m2)\n"
    )
}

/// The bridge balance condition (Wheatstone's bridge in its AC form, from
/// memory): with arms Z1·Z4 = Z2·Z3 the detector carries no current,
/// whatever the detector and the source.
#[test]
fn a_balanced_bridge_carries_no_detector_current() {
    // Z1/Z2 = Z3/Z4 = 1/2.
    let e = engine(&bridge("100 Ω", "200 Ω", "(50 + j30) Ω", "(100 + j60) Ω", "1 kHz"));
    let id = value(&e, "Id");
    let i1 = value(&e, "I1");
    assert!(i1.norm() > 0.01, "the arms carry current: {i1}");
    near(
        id,
        cx(0.0, 0.0),
        1e-13,
        i1.norm(),
        "detector current of the balanced bridge",
    );
    // Thrown off balance by 1 % in one arm, it no longer is.
    let e = engine(&bridge("101 Ω", "200 Ω", "(50 + j30) Ω", "(100 + j60) Ω", "1 kHz"));
    assert!(value(&e, "Id").norm() > 1e-5, "{}", value(&e, "Id"));
}

/// The Maxwell–Wien inductance bridge (from memory): an inductor Lx with
/// series resistance Rx in arm 1, R2 and R3 in the arms beside it, R4 in
/// parallel with C4 opposite; balanced when Lx = R2·R3·C4 and
/// Rx = R2·R3/R4 — at every frequency.
#[test]
fn the_inductance_bridge_balances_at_every_frequency() {
    let (r2, r3, r4, c4) = (1000.0, 500.0, 25_000.0, 0.2e-6);
    let lx = r2 * r3 * c4; // 0.1 H
    let rx = r2 * r3 / r4; // 20 Ω
    for f in ["50 Hz", "1 kHz", "20 kHz"] {
        let src = format!(
            "network br at {f}\n\
             \x20 E = emf(top, ground, 1 V)\n\
             \x20 Rx = branch(top, x, {rx} Ω)\n\
             \x20 Lx = branch(x, m1, {lx} H)\n\
             \x20 R2 = branch(m1, ground, {r2} Ω)\n\
             \x20 R3 = branch(top, m2, {r3} Ω)\n\
             \x20 R4 = branch(m2, ground, {r4} Ω)\n\
             \x20 C4 = branch(m2, ground, {c4} F)\n\
             \x20 Zd = branch(m1, m2, 1 kΩ)\n\
             end\n\
             Id = net_i(br, Zd)\nI3 = net_i(br, R3)\n"
        );
        let e = engine(&src);
        let scale = value(&e, "I3").norm();
        assert!(scale > 1e-6, "{scale}");
        near(
            value(&e, "Id"),
            cx(0.0, 0.0),
            1e-12,
            scale,
            &format!("detector current at {f}"),
        );
    }
}

/// The unbalanced bridge seen from its detector terminals (Thevenin's
/// theorem applied by hand, from memory): V = E·(Z2/(Z1+Z2) − Z4/(Z3+Z4)),
/// Z = Z1∥Z2 + Z3∥Z4 with the ideal source shorted, and the detector
/// current V/(Z + Zd).
#[test]
fn the_unbalanced_bridge_has_its_closed_form_thevenin_equivalent() {
    let arms = ["120 Ω", "(200 - j40) Ω", "(50 + j30) Ω", "220 Ω"];
    // Seen from the detector's terminals with the detector taken out …
    let e = engine(&bridge_with(arms[0], arms[1], arms[2], arms[3], "1 kHz", ""));
    let (z1, z2, z3, z4, zd) = (
        cx(120.0, 0.0),
        cx(200.0, -40.0),
        cx(50.0, 30.0),
        cx(220.0, 0.0),
        cx(50.0, 0.0),
    );
    let ee = cx(10.0, 0.0);
    let v = ee * (z2 / (z1 + z2) - z4 / (z3 + z4));
    let z = par(z1, z2) + par(z3, z4);
    near(value(&e, "th.V"), v, 1e-13, 10.0, "open-circuit voltage");
    near(value(&e, "th.Z"), z, 1e-13, z.norm(), "Thevenin impedance");
    near(value(&e, "th.I"), v / z, 1e-13, (v / z).norm(), "Norton current");
    // … and a 50 Ω detector put back draws V/(Z + Zd).
    let e = engine(&bridge(arms[0], arms[1], arms[2], arms[3], "1 kHz"));
    near(
        value(&e, "Id"),
        v / (z + zd),
        1e-13,
        (v / (z + zd)).norm(),
        "detector current",
    );
}

/// Kennelly's delta–wye equivalence (A. E. Kennelly, "The equivalence of
/// triangles and three-pointed stars in conducting networks", Electrical
/// World and Engineer 34, 1899 — from memory): a delta Zab, Zbc, Zca is the
/// wye Za = Zab·Zca/Σ, Zb = Zab·Zbc/Σ, Zc = Zbc·Zca/Σ to everything outside
/// it. Swapped inside a network with two sources, every other result is
/// unchanged.
#[test]
fn delta_and_wye_are_interchangeable_inside_a_network() {
    let common = "\
Zab_v = (12 + j5) Ω
Zbc_v = (3 - j20) Ω
Zca_v = (30 + j2) Ω
S = Zab_v + Zbc_v + Zca_v
";
    let outside = "\
  E1 = emf(s1, ground, 230 V, (1 + j2) Ω)
  E2 = emf(s2, ground, 225 V ∠ -8°, (0.5 + j3) Ω)
  I3 = inject(c, ground, (1.5 - j0.5) A)
  Za1 = branch(s1, a, (2 + j4) Ω)
  Zb2 = branch(s2, b, (1 + j6) Ω)
  Lc = branch(c, ground, (40 + j15) Ω)
  Ca = branch(a, ground, 80 µF)
";
    let asks = "\
Va = net_v(n, a)
Vb = net_v(n, b)
Vc = net_v(n, c)
I1 = net_i(n, E1)
I2 = net_i(n, E2)
ILc = net_i(n, Lc)
th = net_thevenin(n, a, c)
z = net_z(n, b, c)
";
    let delta = format!(
        "{common}network n at 50 Hz\n{outside}\
         \x20 Dab = branch(a, b, Zab_v)\n  Dbc = branch(b, c, Zbc_v)\n  Dca = branch(c, a, Zca_v)\nend\n{asks}"
    );
    let wye = format!(
        "{common}network n at 50 Hz\n{outside}\
         \x20 Ya = branch(a, star, Zab_v * Zca_v / S)\n  Yb = branch(b, star, Zab_v * Zbc_v / S)\n  Yc = branch(c, star, Zbc_v * Zca_v / S)\nend\n{asks}"
    );
    let (d, w) = (engine(&delta), engine(&wye));
    for cell in ["Va", "Vb", "Vc", "I1", "I2", "ILc", "th.V", "th.Z", "th.I", "z"] {
        let (x, y) = (value(&d, cell), value(&w, cell));
        assert!(x.norm() > 1e-6, "{cell} = {x} is not trivially zero");
        near(x, y, 1e-12, x.norm(), &format!("{cell}, delta against wye"));
    }
    // A wrong wye (Za and Zb swapped) is told apart.
    let wrong = wye.replace(
        "Ya = branch(a, star, Zab_v * Zca_v / S)",
        "Ya = branch(a, star, Zab_v * Zbc_v / S)",
    );
    let x = engine(&wrong);
    assert!((value(&x, "Va") - value(&d, "Va")).norm() > 1e-3 * value(&d, "Va").norm());
}

const RING: &str = "\
network g at 60 Hz
  Eu = emf(u, ground, 7.97 kV, (0.3 + j3.2) Ω)
  Eg = emf(gen, ground, 7.9 kV ∠ -4°, (0.15 + j2.4) Ω)
  T1 = branch(u, b1, (0.4 + j1.8) Ω)
  T2 = branch(gen, b2, (0.2 + j1.2) Ω)
  L12 = branch(b1, b2, (0.8 + j1.6) Ω)
  L23 = branch(b2, b3, (1.1 + j2.0) Ω)
  L31 = branch(b3, b1, (0.9 + j1.7) Ω)
  M3 = branch(b3, ground, (55 + j20) Ω)
  K3 = branch(b3, ground, 30 µF)
end
";

/// The bus impedance method of fault studies (from memory; IEC 60909-0's
/// equivalent voltage source at the fault location rests on the same
/// Thevenin argument): a bolted fault at bus k draws V_k/Z_kk, V_k the
/// prefault voltage and Z_kk the diagonal entry of the inverse of the bus
/// admittance matrix; through a fault impedance Zf it draws V_k/(Z_kk+Zf),
/// and every other bus falls to V_i − Z_ik·I_f. Checked against the same
/// network with the fault placed in it as a branch.
#[test]
fn fault_currents_by_the_bus_impedance_method_match_a_placed_fault() {
    let pre = engine(&format!(
        "{RING}V1 = net_v(g, b1)\nV2 = net_v(g, b2)\nV3 = net_v(g, b3)\n\
         Z33 = net_z(g, b3, b3)\nZ13 = net_z(g, b1, b3)\nZ23 = net_z(g, b2, b3)\nth = net_thevenin(g, b3, ground)\n"
    ));
    let (v1, v2, v3) = (value(&pre, "V1"), value(&pre, "V2"), value(&pre, "V3"));
    let z33 = value(&pre, "Z33");
    // The Norton current at the bus is the bolted-fault current.
    near(
        value(&pre, "th.I"),
        v3 / z33,
        1e-12,
        (v3 / z33).norm(),
        "Thevenin short-circuit current",
    );
    for (zf, zf_text) in [(cx(0.0, 0.0), "0 Ω"), (cx(2.0, 1.0), "(2 + j1) Ω")] {
        let fault = RING.replace("end\n", &format!("  Zf = branch(b3, ground, {zf_text})\nend\n"));
        let post = engine(&format!(
            "{fault}If = net_i(g, Zf)\nW1 = net_v(g, b1)\nW2 = net_v(g, b2)\nW3 = net_v(g, b3)\n"
        ));
        let ik = v3 / (z33 + zf);
        let s = ik.norm();
        assert!(s > 1000.0, "a fault draws kA: {ik}");
        near(
            value(&post, "If"),
            ik,
            1e-12,
            s,
            &format!("fault current through {zf_text}"),
        );
        let zs = value(&pre, "Z33").norm();
        near(
            value(&post, "W1"),
            v1 - value(&pre, "Z13") * ik,
            1e-12,
            s * zs,
            "bus 1 during the fault",
        );
        near(
            value(&post, "W2"),
            v2 - value(&pre, "Z23") * ik,
            1e-12,
            s * zs,
            "bus 2 during the fault",
        );
        near(value(&post, "W3"), zf * ik, 1e-12, s * zs, "the faulted bus");
    }
}

/// Superposition (a linear network's response to several independent
/// sources is the sum of its responses to each alone, the others zeroed:
/// emfs shorted, injections opened — from memory).
#[test]
fn superposition_of_each_source_alone_equals_all_acting() {
    let sheet = |e1: &str, e2: &str, i3: &str| {
        format!(
            "network n at 400 Hz\n\
             \x20 E1 = emf(a, ground, {e1}, 2 Ω)\n\
             \x20 E2 = emf(b, c, {e2})\n\
             \x20 I3 = inject(d, ground, {i3}, 1 kΩ)\n\
             \x20 Rab = branch(a, b, 10 Ω)\n\
             \x20 Lbd = branch(b, d, 5 mH)\n\
             \x20 Cc = branch(c, ground, 10 µF)\n\
             \x20 Rcd = branch(c, d, 22 Ω)\n\
             \x20 Ra = branch(a, d, 47 Ω)\n\
             \x20 G = transadm(d, ground, a, ground, 5 mS)\n\
             end\n\
             Vb = net_v(n, b)\nVd = net_v(n, d)\nIcd = net_i(n, Rcd)\nIE2 = net_i(n, E2)\nth = net_thevenin(n, b, d)\n"
        )
    };
    let (e1, e2, i3) = ("24 V", "6 V ∠ 60°", "(0.3 - j0.2) A");
    let all = engine(&sheet(e1, e2, i3));
    let parts = [
        engine(&sheet(e1, "0 V", "0 A")),
        engine(&sheet("0 V", e2, "0 A")),
        engine(&sheet("0 V", "0 V", i3)),
    ];
    for cell in ["Vb", "Vd", "Icd", "IE2", "th.V"] {
        let sum: C64 = parts.iter().map(|p| value(p, cell)).sum();
        let whole = value(&all, cell);
        let scale = parts.iter().map(|p| value(p, cell).norm()).fold(0.0, f64::max);
        assert!(scale > 1e-6);
        near(whole, sum, 1e-12, scale, &format!("{cell}: all acting against the sum"));
    }
    // The Thevenin impedance does not depend on the sources at all.
    for p in &parts {
        near(
            value(p, "th.Z"),
            value(&all, "th.Z"),
            1e-12,
            value(&all, "th.Z").norm(),
            "th.Z",
        );
    }
}

/// An ideal transformer of ratio n (V₁ = n·V₂, lossless) shows a load Z on
/// its secondary as |n|²·Z at its primary, and a source impedance Zs on
/// its primary as Zs/|n|² at its secondary (from memory; with a complex
/// ratio the phase shift cancels in n·conj(n)).
#[test]
fn an_ideal_transformer_reflects_impedance_by_the_square_of_its_ratio() {
    let zl = cx(8.0, 3.0);
    let zs = cx(0.5, 4.0);
    for (n_text, n) in [
        ("0.5", cx(0.5, 0.0)),
        ("2 ∠ 30°", C64::from_polar(2.0, 30f64.to_radians())),
        ("(3 + j4)", cx(3.0, 4.0)),
        ("11 ∠ -150°", C64::from_polar(11.0, -150f64.to_radians())),
    ] {
        let src = format!(
            "network t at 50 Hz\n\
             \x20 Es = emf(src, ground, 1 kV, (0.5 + j4) Ω)\n\
             \x20 Tx = xformer(src, ground, lv, ground, {n_text})\n\
             \x20 ZL = branch(lv, ground, (8 + j3) Ω)\n\
             end\n\
             zin = net_thevenin(t, src, ground)\nzout = net_thevenin(t, lv, ground)\n\
             Vlv = net_v(t, lv)\nVsrc = net_v(t, src)\n"
        );
        let e = engine(&src);
        let n2 = n.norm_sqr();
        // At the primary: the load reflected, in parallel with the source's impedance.
        near(
            value(&e, "zin.Z"),
            par(zs, zl * n2),
            1e-12,
            zs.norm(),
            &format!("Z at the primary, n = {n_text}"),
        );
        // At the secondary: the source's impedance reflected, beside the load.
        near(
            value(&e, "zout.Z"),
            par(zs / n2, zl),
            1e-12,
            zl.norm(),
            &format!("Z at the secondary, n = {n_text}"),
        );
        // And the voltage ratio with its phase shift.
        near(
            value(&e, "Vsrc"),
            n * value(&e, "Vlv"),
            1e-12,
            value(&e, "Vsrc").norm(),
            "V1 = n·V2",
        );
    }
}
