//! Every error the network language has, each located (file:line:col)
//! with the elements it names: a node with no path to ground, a cut of
//! current sources, a loop of ideal voltage sources, a value of the wrong
//! dimension for each element form, a mistyped node or element name, a
//! name given twice, an empty network.

use ohmsheet::diag::{Diagnostic, ErrorCode};
use ohmsheet::engine::compile;
use ohmsheet::sheet::Sheet;

/// The first error of a sheet, with where it and its secondary places are.
fn first_error(src: &str) -> (Diagnostic, String, Vec<String>) {
    let m = compile(&Sheet::from_text("net.ohm", src));
    let d = m
        .diagnostics
        .iter()
        .find(|d| d.is_error())
        .unwrap_or_else(|| panic!("no error in\n{src}"))
        .clone();
    let at = m.sources.location(d.span.expect("located"));
    let more = d.secondary.iter().map(|(s, _)| m.sources.location(*s)).collect();
    (d, at, more)
}

#[test]
fn a_node_with_no_path_to_ground_is_named_with_its_elements() {
    let (d, at, more) = first_error(
        "network feed at 50 Hz\n  E = emf(a, ground, 1 V)\n  R = branch(a, ground, 1 Ω)\n  Z = branch(b, c, 1 Ω)\nend\n",
    );
    assert_eq!(d.code, ErrorCode::NetworkShape);
    assert_eq!(at, "net.ohm:1:9", "on the network's name");
    assert!(
        d.message.contains("`b`") && d.message.contains("`c`") && d.message.contains("no path to `ground`"),
        "{}",
        d.message
    );
    assert_eq!(more, ["net.ohm:4:3"], "the element that reaches them");
}

#[test]
fn a_mistyped_node_inside_a_block_gets_a_suggestion() {
    let (d, _, more) = first_error(
        "network feed at 50 Hz\n  E = emf(bus, ground, 1 V, 1 Ω)\n  Ld = branch(bus, ground, 5 Ω)\n  Zt = branch(buss, x, 2 Ω)\nend\n",
    );
    assert_eq!(d.code, ErrorCode::NetworkShape);
    assert!(
        d.hint.as_deref().unwrap_or("").contains("`buss`: did you mean `bus`?"),
        "{:?}",
        d.hint
    );
    assert_eq!(more, ["net.ohm:4:3"]);
}

#[test]
fn a_cut_of_current_sources_is_named_with_its_sources() {
    let (d, at, more) = first_error(
        "network feed at 50 Hz\n  R = branch(a, ground, 1 Ω)\n  I1 = inject(b, a, 1 A)\n  I2 = inject(b, ground, 2 A)\nend\n",
    );
    assert_eq!(d.code, ErrorCode::NetworkShape);
    assert_eq!(at, "net.ohm:1:9");
    assert!(
        d.message.contains("`b`")
            && d.message.contains("`I1`")
            && d.message.contains("`I2`")
            && d.message.contains("only through the current sources"),
        "{}",
        d.message
    );
    assert_eq!(more, ["net.ohm:3:3", "net.ohm:4:3"]);
    assert!(d.hint.as_deref().unwrap().contains("shunt"), "{:?}", d.hint);
}

#[test]
fn a_loop_of_ideal_voltage_sources_is_named_with_its_elements() {
    let (d, at, more) = first_error(
        "network feed at 50 Hz\n  E1 = emf(a, ground, 1 V)\n  R = branch(a, b, 1 Ω)\n  A = vgain(b, a, a, ground, 2)\n  E2 = emf(b, ground, 2 V)\nend\n",
    );
    assert_eq!(d.code, ErrorCode::NetworkShape);
    assert_eq!(at, "net.ohm:1:9");
    for e in ["`E1`", "`A`", "`E2`"] {
        assert!(d.message.contains(e), "{e} in {}", d.message);
    }
    assert!(!d.message.contains("`R`"), "{}", d.message);
    assert_eq!(more.len(), 3, "{more:?}");
}

#[test]
fn every_element_value_has_its_dimension_checked() {
    let net = |line: &str| {
        format!("network feed at 50 Hz\n  E = emf(a, ground, 1 V, 1 Ω)\n  R = branch(a, b, 1 Ω)\n  Rb = branch(b, ground, 1 Ω)\n  {line}\nend\n")
    };
    // (element line, what the message says is wanted, the bad value)
    for (line, wanted, bad) in [
        (
            "X = branch(a, ground, 5 V)",
            "impedance (Ω), admittance (S), inductance (H) or capacitance (F)",
            "5 V",
        ),
        ("X = emf(b, ground, 5 A)", "voltage", "5 A"),
        ("X = emf(b, ground, 5 V, 3 A)", "impedance (Ω), admittance (S)", "3 A"),
        ("X = inject(b, ground, 5 V)", "current", "5 V"),
        (
            "X = inject(b, ground, 5 A, 2 V)",
            "impedance (Ω), admittance (S)",
            "2 V",
        ),
        ("X = vgain(b, ground, a, ground, 2 Ω)", "plain number", "2 Ω"),
        ("X = transadm(b, ground, a, ground, 2 Ω)", "admittance", "2 Ω"),
        ("X = transimp(b, ground, R, 2 S)", "impedance", "2 S"),
        ("X = igain(b, ground, R, 3 A)", "plain number", "3 A"),
        ("X = xformer(a, ground, b, ground, 2 V)", "plain number", "2 V"),
        ("X = mutual(R, Rb, 3 V)", "coefficient k", "3 V"),
    ] {
        // Located on the value: after the two spaces of indentation.
        let col = 2 + line[..line.rfind(bad).unwrap()].chars().count() + 1;
        let (d, at, _) = first_error(&net(line));
        assert_eq!(d.code, ErrorCode::NetworkElement, "{line}: {}", d.message);
        assert!(d.message.contains(wanted), "{line}: {}", d.message);
        assert_eq!(at, format!("net.ohm:5:{col}"), "{line}: {}", d.message);
    }
}

#[test]
fn mistyped_element_names_get_suggestions() {
    let net = "network feed at 50 Hz\n  E = emf(a, ground, 1 V, 1 Ω)\n  Lprim = branch(a, ground, 10 mH)\n  Lsec = branch(b, ground, 20 mH)\n";
    // In a coupling, in a current-controlled source, in a result.
    for (tail, typo, sug) in [
        ("  K = mutual(Lprim, Lsek, 0.9)\nend\n", "Lsek", "`Lsec`"),
        ("  B = igain(b, ground, Lprm, 3)\nend\n", "Lprm", "`Lprim`"),
        ("end\nI = net_i(feed, Lsex)\n", "Lsex", "`Lsec`"),
        ("end\nV = net_v(feed, bb)\n", "bb", "`b`"),
    ] {
        // Located on the mistyped name (the tail starts on line 5).
        let (k, l) = tail.lines().enumerate().find(|(_, l)| l.contains(typo)).unwrap();
        let at = format!("net.ohm:{}:{}", 5 + k, l[..l.find(typo).unwrap()].chars().count() + 1);
        let (d, got_at, _) = first_error(&format!("{net}{tail}"));
        assert_eq!(got_at, at, "{tail}: {}", d.message);
        assert!(d.hint.as_deref().unwrap_or("").contains(sug), "{tail}: {:?}", d.hint);
    }
}

#[test]
fn names_given_twice_are_refused_at_the_second() {
    // An element twice in one block.
    let (d, at, more) = first_error(
        "network feed at 50 Hz\n  E = emf(a, ground, 1 V, 1 Ω)\n  R = branch(a, ground, 1 Ω)\n  R = branch(a, ground, 2 Ω)\nend\n",
    );
    assert!(
        d.message.contains("`R`") && d.message.contains("twice"),
        "{}",
        d.message
    );
    assert_eq!(at, "net.ohm:4:3");
    assert_eq!(more, ["net.ohm:3:3"]);
    // An element named like a cell of the sheet, and two networks of one name.
    let (d, at, _) = first_error(
        "R = 5 Ω\nnetwork feed at 50 Hz\n  E = emf(a, ground, 1 V, 1 Ω)\n  R = branch(a, ground, 1 Ω)\nend\n",
    );
    assert_eq!(d.code, ErrorCode::DuplicateCell, "{}", d.message);
    assert_eq!(at, "net.ohm:4:3");
    let (d, at, _) = first_error(
        "network feed at 50 Hz\n  E = emf(a, ground, 1 V, 1 Ω)\nend\nnetwork feed at 60 Hz\n  E2 = emf(a, ground, 1 V, 1 Ω)\nend\n",
    );
    assert_eq!(d.code, ErrorCode::DuplicateCell, "{}", d.message);
    assert_eq!(at, "net.ohm:4:9");
}

#[test]
fn an_empty_network_is_refused_at_its_head() {
    let (d, at, _) = first_error("network feed at 50 Hz\nend\n");
    assert_eq!(d.code, ErrorCode::NetworkShape);
    assert_eq!(at, "net.ohm:1:1");
    assert!(d.message.contains("no elements"), "{}", d.message);
}
