//! `/spread` in the session (issue 18), through the session's
//! terminal-free layer (`Session::handle`): the analyses on the sheet as
//! it stands, changes not yet saved included. A voltage divider,
//! Vout = Vs·R2/(R1 + R2): smallest with R1 high and R2 low, 10 V·9/20 =
//! 4.5 V; largest the other way, 5.5 V; ±0.5 % per % (the divider rule,
//! common practice).

use ohmsheet::session::Session;

fn open(text: &str) -> (Session, tempfile::TempDir) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("divider.ohm");
    std::fs::write(&path, text).unwrap();
    let (s, _) = Session::open(Some(&path), Some(dir.path().join("data")), false).unwrap();
    (s, dir)
}

const DIVIDER: &str = "Vs = 10 V\nR1 = 10 Ω within 10 %\nR2 = 10 Ω within 10 %\nVout = Vs * R2 / (R1 + R2)\n";

#[test]
fn spread_gives_the_three_analyses_of_a_cell() {
    let (mut s, _d) = open(DIVIDER);
    let r = s.handle("/spread Vout");
    assert!(!r.refused, "{}", r.text);
    let t = &r.text;
    assert!(t.contains("Worst case (all 4 corners"), "{t}");
    assert!(t.contains("4.5 V") && t.contains("5.5 V"), "{t}");
    assert!(t.contains("Vout smallest at: R1 +10 %, R2 −10 %"), "{t}");
    assert!(t.contains("Monte Carlo (10000 samples, seed 1"), "{t}");
    assert!(t.contains("0.5 per %") && t.contains("-0.5 per %"), "{t}");
    assert!(t.contains("qualified person"), "{t}");
}

#[test]
fn spread_follows_an_edit_not_yet_saved() {
    let (mut s, _d) = open(DIVIDER);
    assert!(!s.handle("R2 = 10 Ω within 20 %").refused);
    let t = s.handle("/spread Vout").text;
    // 10 V·8/(11 + 8) = 4.211 V and 10 V·12/(9 + 12) = 5.714 V.
    assert!(t.contains("4.211 V") && t.contains("5.714 V"), "{t}");
    // An expression is analysed as `--show` would.
    let r = s.handle("/spread Vout / Vs");
    assert!(!r.refused, "{}", r.text);
    assert!(r.text.contains("0.4211") && r.text.contains("0.5714"), "{}", r.text);
}

#[test]
fn spread_refuses_what_it_cannot_analyse() {
    let (mut s, _d) = open(DIVIDER);
    let r = s.handle("/spread");
    assert!(r.refused && r.text.contains("name the cells"), "{}", r.text);
    let r = s.handle("/spread Vot");
    assert!(r.refused && r.text.contains("did you mean `Vout`"), "{}", r.text);
    let r = s.handle("/spread Vout +");
    assert!(r.refused, "{}", r.text);
    let (mut plain, _d2) = open("Vs = 10 V\nR = 5 Ω\nI = Vs / R\n");
    let r = plain.handle("/spread I");
    assert!(
        r.refused && r.text.contains("no input states a tolerance"),
        "{}",
        r.text
    );
    // The session goes on after a refusal.
    assert!(!s.handle("/spread Vout").refused);
}
