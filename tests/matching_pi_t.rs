//! π and T matching networks for a chosen loaded Q: each design presents
//! the source resistance (the definition of a match, any RF text), carries
//! the asked-for Q on its defining side, falls back to the L-network at the
//! least Q, and refuses a Q below it (Bowick, RF Circuit Design, ch. 4 —
//! from memory). Exact element values are checked against mpmath in
//! funcs_reference.rs.

use num_complex::Complex64 as C64;
use predicates::prelude::*;

use crate::assert_close;
use crate::common::{engine, ohmsheet, value};

fn re(x: f64) -> C64 {
    C64::new(x, 0.0)
}

// The match seen through the two-port functions: the network built from
// its own elements, ending in RL, shows Rs at f — both directions (Rs
// above and below RL) and all four forms.
#[test]
fn every_form_presents_the_source_resistance() {
    for (rs, rl, q) in [
        (50.0, 1000.0, 10.0),
        (1000.0, 50.0, 6.0),
        (75.0, 75.0, 2.0),
        (600.0, 50.0, 3.4),
    ] {
        let e = engine(&format!(
            "f = 7 MHz\nw = 2*pi*f [rad/s]\nRs = {rs} Ω\nRL = {rl} Ω\n\
             a = pimatch_lp(Rs, RL, {q}, f)\nb = pimatch_hp(Rs, RL, {q}, f)\n\
             c = tmatch_lp(Rs, RL, {q}, f)\nd = tmatch_hp(Rs, RL, {q}, f)\n\
             Ta = cascade(abcd_shunt(1/(j*w*a.C1)), abcd_series(j*w*a.L), abcd_shunt(1/(j*w*a.C2)))\n\
             Tb = cascade(abcd_shunt(j*w*b.L1), abcd_series(1/(j*w*b.C)), abcd_shunt(j*w*b.L2))\n\
             Tc = cascade(abcd_series(j*w*c.L1), abcd_shunt(1/(j*w*c.C)), abcd_series(j*w*c.L2))\n\
             Td = cascade(abcd_series(1/(j*w*d.C1)), abcd_shunt(j*w*d.L), abcd_series(1/(j*w*d.C2)))\n\
             za = abcd_zin(Ta, RL)\nzb = abcd_zin(Tb, RL)\nzc = abcd_zin(Tc, RL)\nzd = abcd_zin(Td, RL)"
        ));
        for z in ["za", "zb", "zc", "zd"] {
            assert_close!(value(&e, z), re(rs), 1e-9);
        }
        // Loaded Q (Bowick ch. 4): for a π the shunt across the larger R
        // has X = Rhi/Q; for a T the series element next to the smaller R
        // has X = Q·Rlo.
        let w = 2.0 * std::f64::consts::PI * 7e6;
        let (hi, lo) = (rs.max(rl), rs.min(rl));
        let c_hi = value(&e, if rs >= rl { "a.C1" } else { "a.C2" }).re;
        assert_close!(re(hi * w * c_hi), re(q), 1e-12);
        let l_lo = value(&e, if rs <= rl { "c.L1" } else { "c.L2" }).re;
        assert_close!(re(w * l_lo / lo), re(q), 1e-12);
        assert_close!(value(&e, "a.Rv"), re(hi / (q * q + 1.0)), 1e-12);
        assert_close!(value(&e, "c.Rv"), re(lo * (q * q + 1.0)), 1e-12);
    }
}

// At the least Q, √(Rhi/Rlo − 1), a π or T is the L-network (Bowick
// ch. 4): the low-pass π has the L-network's series L and shunt C, and no
// capacitor on the low side.
#[test]
fn at_the_least_q_a_pi_is_the_l_network() {
    let e = engine(
        "f = 7 MHz\nl = lmatch_lp(50 Ω, 600 Ω, f)\np = pimatch_lp(50 Ω, 600 Ω, l.Q, f)\n\
         t = tmatch_lp(50 Ω, 600 Ω, l.Q, f)",
    );
    assert_eq!(value(&e, "p.C1"), re(0.0));
    assert_close!(value(&e, "p.L"), value(&e, "l.L"), 1e-12);
    assert_close!(value(&e, "p.C2"), value(&e, "l.C"), 1e-12);
    assert_close!(value(&e, "p.Rv"), re(50.0), 1e-12);
    // the T: the series L on the low side is the L-network's, no series L
    // on the high side
    assert_close!(value(&e, "t.L1"), value(&e, "l.L"), 1e-12);
    assert_close!(value(&e, "t.C"), value(&e, "l.C"), 1e-12);
    assert_eq!(value(&e, "t.L2"), re(0.0));
}

// Below the least Q there is no π or T network: an error at the cell, not
// a number; so is a resistance of zero or a negative Q.
#[test]
fn below_the_least_q_is_an_error() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("q.ohm");
    for body in [
        "m = pimatch_lp(50 Ω, 1000 Ω, 4, 10 MHz)\n",
        "m = pimatch_hp(1000 Ω, 50 Ω, 4, 10 MHz)\n",
        "m = tmatch_lp(50 Ω, 1000 Ω, 4, 10 MHz)\n",
        "m = tmatch_hp(50 Ω, 1000 Ω, 4, 10 MHz)\n",
        "m = tmatch_hp(0 Ω, 1000 Ω, 40, 10 MHz)\n",
        "m = pimatch_lp(50 Ω, 1000 Ω, -10, 10 MHz)\n",
    ] {
        std::fs::write(&path, body).unwrap();
        ohmsheet()
            .arg("run")
            .arg(&path)
            .assert()
            .code(2)
            .stderr(predicate::str::contains("NaN"));
    }
}

// The domain check names the least Q (for the explanation of the error).
#[test]
fn the_domain_check_names_the_least_q() {
    let (_, f) = ohmsheet::funcs::find("pimatch_lp").unwrap();
    let d = f.domain.unwrap();
    let a = [re(50.0), re(1000.0), re(4.0), re(6.28e7)];
    let why = d(&a, &Default::default()).expect("out of the domain");
    assert_eq!(why.arg, Some(2));
    assert!(why.message.contains("4.359"), "{}", why.message);
    assert!(d(&[re(50.0), re(1000.0), re(5.0), re(6.28e7)], &Default::default()).is_none());
}

// The run's error names the least Q, located on the Q argument.
#[test]
fn the_run_explains_a_q_below_the_least() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("q.ohm");
    std::fs::write(&path, "m = tmatch_hp(50 Ω, 1000 Ω, 3, 10 MHz)\n").unwrap();
    ohmsheet()
        .arg("run")
        .arg(&path)
        .assert()
        .code(2)
        .stderr(predicate::str::contains("q.ohm:1:29"))
        .stderr(predicate::str::contains("below the least Q of a T network"))
        .stderr(predicate::str::contains("4.359"));
}

// An L-network needs two positive resistances: a negative one is refused
// (it used to give imaginary element values), located on the argument.
#[test]
fn l_network_refuses_a_negative_resistance() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("l.ohm");
    for (body, col, says) in [
        (
            "m = lmatch_lp(50 Ω, -600 Ω, 7 MHz)\n",
            "l.ohm:1:21",
            "a load resistance is a positive real number",
        ),
        (
            "m = lmatch_hp(0 Ω, 600 Ω, 7 MHz)\n",
            "l.ohm:1:15",
            "a source resistance is a positive real number",
        ),
    ] {
        std::fs::write(&path, body).unwrap();
        ohmsheet()
            .arg("run")
            .arg(&path)
            .assert()
            .code(2)
            .stderr(predicate::str::contains(col))
            .stderr(predicate::str::contains(says));
    }
    // equal resistances need no network: no series L, no shunt C
    let e = engine("m = lmatch_lp(50 Ω, 50 Ω, 7 MHz)");
    assert_eq!(value(&e, "m.L"), re(0.0));
    assert_eq!(value(&e, "m.C"), re(0.0));
}
