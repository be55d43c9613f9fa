#!/usr/bin/env python3
"""Reference values for the network solver, from an independent nodal
solve written here with numpy.

Each test network is a list of elements between named nodes (`ground` is
the reference). This script converts every source with an internal
impedance to its Norton equivalent and writes the nodal admittance
equations Y·V = J itself (classical nodal analysis, not the modified form
the program uses); ideal voltage sources are handled by eliminating the
node they fix when the other end is ground. It writes networks.json, and
network_mna.json from the sparse-tableau solve of every element kind in
the second half of this file:

    python3 tests/reference/gen_networks.py

Elements: ["Z", a, b, ohms] | ["Y", a, b, siemens] | ["L", a, b, henry] |
["C", a, b, farad] | ["V", a, b, volts, ohms_or_None] (a is +) |
["I", a, b, amps] (driven out of a into the network, back in at b).
A frequency in Hz is given per network.
"""
import cmath
import json
import math
import os

import numpy as np


def z_of(kind, value, w):
    if kind == "Z":
        return complex(value)
    if kind == "Y":
        return 1 / complex(value)
    if kind == "L":
        return 1j * w * value
    if kind == "C":
        return 1 / (1j * w * value)
    raise ValueError(kind)


def solve(net, zero_sources=False, inject=None):
    """Node voltages (dict) by nodal analysis. `inject` = (node, amps)."""
    w = 2 * math.pi * net["f"]
    nodes = sorted({n for e in net["elems"] for n in (e[1], e[2]) if n != "ground"})
    fixed = {}
    for e in net["elems"]:
        if e[0] == "V" and e[4] is None:
            assert e[2] == "ground", "ideal sources must return to ground here"
            fixed[e[1]] = 0 if zero_sources else complex(e[3])
    free = [n for n in nodes if n not in fixed]
    idx = {n: i for i, n in enumerate(free)}
    Y = np.zeros((len(free), len(free)), dtype=complex)
    J = np.zeros(len(free), dtype=complex)

    def stamp(a, b, y):
        for (p, q, s) in ((a, a, 1), (b, b, 1), (a, b, -1), (b, a, -1)):
            if p == "ground":
                continue
            if q == "ground":
                continue
            if p in fixed:
                continue
            if q in fixed:
                J[idx[p]] -= s * y * fixed[q]
                continue
            Y[idx[p], idx[q]] += s * y

    def inj(node, amps):
        if node != "ground" and node not in fixed:
            J[idx[node]] += amps

    for e in net["elems"]:
        k = e[0]
        if k in "ZYLC":
            z = z_of(k, e[3], w)
            stamp(e[1], e[2], 1 / z)
        elif k == "V" and e[4] is not None:
            z = complex(e[4])
            stamp(e[1], e[2], 1 / z)
            v = 0 if zero_sources else complex(e[3])
            inj(e[1], v / z)
            inj(e[2], -v / z)
        elif k == "I":
            i = 0 if zero_sources else complex(e[3])
            inj(e[1], i)
            inj(e[2], -i)
    if inject:
        inj(inject[0], inject[1])
    V = np.linalg.solve(Y, J) if len(free) else []
    out = {"ground": 0j}
    out.update(fixed)
    for n in free:
        out[n] = V[idx[n]]
    return out


def c(z):
    return [z.real, z.imag]


NETWORKS = [
    {
        # A Wheatstone-type bridge with complex arms (invented values); the
        # detector branch between m1 and m2 is 50 Ω.
        "name": "bridge",
        "f": 1000.0,
        "elems": [
            ["V", "top", "ground", 10.0, None],
            ["Z", "top", "m1", 100.0],
            ["Z", "m1", "ground", 220.0],
            ["L", "top", "m2", 10e-3],
            ["C", "m2", "ground", 1e-6],
            ["Z", "m1", "m2", 50.0],
        ],
        "thevenin": [["m1", "m2"], ["m2", "ground"]],
    },
    {
        # Two sources with internal impedances feeding one bus through a
        # tie, with a shunt capacitor (invented values, 60 Hz).
        "name": "two_sources",
        "f": 60.0,
        "elems": [
            ["V", "u", "ground", 7967.0, complex(0.4, 3.9)],
            ["V", "g", "ground", 7967.0 * cmath.exp(-1j * math.radians(5)), complex(0.2, 2.5)],
            ["Z", "u", "bus", complex(0.3, 1.1)],
            ["Z", "g", "bus", complex(0.5, 1.6)],
            ["C", "bus", "ground", 40e-6],
            ["Z", "bus", "ground", complex(60.0, 25.0)],
        ],
        "thevenin": [["bus", "ground"], ["u", "g"]],
    },
    {
        # A ladder with a bridging capacitor and a current source.
        "name": "bridged_ladder",
        "f": 5000.0,
        "elems": [
            ["I", "n1", "ground", complex(0.01, -0.002)],
            ["Z", "n1", "ground", 1000.0],
            ["L", "n1", "n2", 5e-3],
            ["C", "n2", "ground", 0.2e-6],
            ["L", "n2", "n3", 5e-3],
            ["Z", "n3", "ground", 600.0],
            ["C", "n1", "n3", 0.05e-6],
        ],
        "thevenin": [["n3", "ground"], ["n1", "n3"]],
    },
]


# ---------------------------------------------------------------------------
# Every element kind, through the sheet language: a sparse-tableau solve.
#
# The second half of this script writes tests/reference/network_mna.json.
# Each network below is written as the element lines of a sheet (the text
# tests/network_reference.rs puts between `network n at F Hz` and `end`),
# and this script reads the same lines itself: a small parser of values
# ("(0.4 + j3.9) Ω", "10 mH", "2 ∠ 30°", "40 mS") and a solve written here
# with mpmath at 40 digits. It is not the program's formulation: the
# program stamps admittances and adds currents only where it must
# (modified nodal analysis); this script takes every node voltage and
# every element current as unknowns (the sparse tableau: one Kirchhoff
# current row per node, one row per element's own law) and solves that.
#
# Conventions, as docs/networks.md states them: a branch's current flows
# from its first node through it to its second and it absorbs
# V(a,b)·conj(I); a source's current (independent or controlled) is the
# current it delivers out of its first node, and its power V(a,b)·conj(I)
# is what it delivers at its terminals; an emf's internal impedance is in
# series (V(a,b) = E − Z·I), an inject's shunt across it (I = Is − V(a,b)/Zsh);
# an ideal transformer has V(a,b) = n·V(c,d) and takes I₁ in at a, giving
# conj(n)·I₁ out at c (lossless); `mutual` adds Zm·I₂ to branch 1's
# voltage and Zm·I₁ to branch 2's, Zm = k·√(Z₁Z₂) (principal root) for a
# coefficient, jωM for an inductance, or Zm itself in Ω.
# ---------------------------------------------------------------------------

import re

import mpmath as mp

mp.mp.dps = 40

PREFIX = {"": 1, "k": 1e3, "M": 1e6, "m": 1e-3, "µ": 1e-6, "u": 1e-6, "n": 1e-9, "p": 1e-12}
UNITS = ["Ω", "S", "H", "F", "V", "A"]


def parse_value(text):
    """(complex value in SI, base unit or '') of a value as the sheet writes it."""
    t = text.strip()
    angle = None
    if "∠" in t:
        t, a = t.split("∠")
        a = a.strip()
        assert a.endswith("°"), text
        angle = mp.mpf(a[:-1]) * mp.pi / 180
        t = t.strip()
    unit, scale = "", 1
    for u in UNITS:
        for p, s in PREFIX.items():
            if t.endswith(" " + p + u):
                unit, scale = u, s
                t = t[: -len(p + u)].strip()
                break
        if unit:
            break
    if t.startswith("(") and t.endswith(")"):
        m = re.fullmatch(r"\((-?[0-9.e+-]+) ([+-]) j([0-9.e+-]+)\)", t)
        assert m, text
        re_ = mp.mpf(m.group(1))
        im_ = mp.mpf(m.group(3)) * (1 if m.group(2) == "+" else -1)
        z = mp.mpc(re_, im_)
    elif t.startswith("j") or t.startswith("-j"):
        neg = t.startswith("-")
        z = mp.mpc(0, mp.mpf(t.lstrip("-")[1:]) * (-1 if neg else 1))
    else:
        z = mp.mpc(mp.mpf(t), 0)
    z *= mp.mpf(scale)
    if angle is not None:
        z = z * mp.expj(angle)
    return z, unit


def impedance(text, w):
    z, u = parse_value(text)
    if u == "Ω":
        return z
    if u == "S":
        return mp.inf if z == 0 else 1 / z
    if u == "H":
        return 1j * w * z
    if u == "F":
        return 1 / (1j * w * z)
    raise ValueError(text)


def tableau(net, zero=False, extra=None):
    """Node voltages and element currents. `zero` zeroes the independent
    sources; `extra` is a list of added elements (as in net["elems"])."""
    w = 2 * mp.pi * mp.mpf(net["f"])
    elems = list(net["elems"]) + list(extra or [])
    # Only the network's own sources are zeroed, never the probe.
    zeroed = {e[0] for e in net["elems"]} if zero else set()
    nodes = []
    for e in elems:
        if e[1] == "mutual":
            continue
        for n in list(e[2:4]) + (list(e[4:6]) if e[1] in ("vgain", "transadm", "xformer") else []):
            if n != "ground" and n not in nodes:
                nodes.append(n)
    ni = {n: k for k, n in enumerate(nodes)}
    # Unknowns: node voltages, then one current per element (two for a
    # transformer: primary and secondary).
    col = {}
    k = len(nodes)
    for e in elems:
        if e[1] == "mutual":
            continue
        col[e[0]] = k
        k += 1
        if e[1] == "xformer":
            col[e[0] + "'"] = k
            k += 1
    n = k
    A = mp.matrix(n, n)
    b = mp.matrix(n, 1)
    row = [len(nodes)]

    def v(r, node, c):
        if node != "ground":
            A[r, ni[node]] += c

    def leave(node, c, coef):
        """Current `coef`·x[c] leaves `node` into the element."""
        if node != "ground":
            A[ni[node], c] += coef

    def newrow():
        r = row[0]
        row[0] += 1
        return r

    byname = {e[0]: e for e in elems}
    mutual_on = {}
    for e in elems:
        if e[1] == "mutual":
            x, u = parse_value(e[4])
            z1 = impedance(byname[e[2]][4], w)
            z2 = impedance(byname[e[3]][4], w)
            if u == "":
                zm = x * mp.sqrt(z1 * z2)
            elif u == "H":
                zm = 1j * w * x
            else:
                assert u == "Ω"
                zm = x
            mutual_on.setdefault(e[2], []).append((e[3], zm))
            mutual_on.setdefault(e[3], []).append((e[2], zm))
    for e in elems:
        name, form = e[0], e[1]
        if form == "mutual":
            continue
        a, bb = e[2], e[3]
        c = col[name]
        r = newrow()
        if form == "branch":
            leave(a, c, 1)
            leave(bb, c, -1)
            zv, u = parse_value(e[4])
            if u == "S" or (u == "F" and zv == 0):
                # By admittance, which also holds an open (Y = 0, I = 0).
                y = zv if u == "S" else mp.mpc(0)
                v(r, a, y)
                v(r, bb, -y)
                A[r, c] += -1
            else:
                z = impedance(e[4], w)
                v(r, a, 1)
                v(r, bb, -1)
                A[r, c] += -z
                for other, zm in mutual_on.get(name, []):
                    A[r, col[other]] += -zm
        elif form == "emf":
            leave(a, c, -1)
            leave(bb, c, 1)
            ev, _ = parse_value(e[4])
            v(r, a, 1)
            v(r, bb, -1)
            if len(e) > 5:
                A[r, c] += impedance(e[5], w)
            b[r] = 0 if name in zeroed else ev
        elif form == "inject":
            leave(a, c, -1)
            leave(bb, c, 1)
            iv, _ = parse_value(e[4])
            A[r, c] += 1
            if len(e) > 5:
                y = 1 / impedance(e[5], w)
                v(r, a, y)
                v(r, bb, -y)
            b[r] = 0 if name in zeroed else iv
        elif form == "vgain":
            leave(a, c, -1)
            leave(bb, c, 1)
            mu, _ = parse_value(e[6])
            v(r, a, 1)
            v(r, bb, -1)
            v(r, e[4], -mu)
            v(r, e[5], mu)
        elif form == "transadm":
            leave(a, c, -1)
            leave(bb, c, 1)
            g, _ = parse_value(e[6])
            A[r, c] += 1
            v(r, e[4], -g)
            v(r, e[5], g)
        elif form == "transimp":
            leave(a, c, -1)
            leave(bb, c, 1)
            rr, _ = parse_value(e[5])
            v(r, a, 1)
            v(r, bb, -1)
            A[r, col[e[4]]] += -rr
        elif form == "igain":
            leave(a, c, -1)
            leave(bb, c, 1)
            beta, _ = parse_value(e[5])
            A[r, c] += 1
            A[r, col[e[4]]] += -beta
        elif form == "xformer":
            nr, _ = parse_value(e[6])
            c2 = col[name + "'"]
            leave(a, c, 1)
            leave(bb, c, -1)
            leave(e[4], c2, 1)
            leave(e[5], c2, -1)
            v(r, a, 1)
            v(r, bb, -1)
            v(r, e[4], -nr)
            v(r, e[5], nr)
            r2 = newrow()
            # Lossless: the secondary takes in −conj(n)·I₁.
            A[r2, c2] += 1
            A[r2, c] += mp.conj(nr)
        else:
            raise ValueError(form)
    assert row[0] == n, (row[0], n)
    x = mp.lu_solve(A, b)
    volts = {"ground": mp.mpc(0)}
    for nd, k in ni.items():
        volts[nd] = x[k]
    amps = {nm: x[k] for nm, k in col.items()}
    An = np.array([[complex(A[i, j]) for j in range(n)] for i in range(n)])
    return volts, amps, equilibrated_cond(An)


def equilibrated_cond(a):
    """The 2-norm condition number of `a` after scaling its rows and
    columns to unit largest entries (a few alternating sweeps): how many
    digits a double-precision solve of these equations can lose, whatever
    units the unknowns are measured in."""
    for _ in range(8):
        a = a / np.abs(a).max(axis=1, keepdims=True)
        a = a / np.abs(a).max(axis=0, keepdims=True)
    return float(np.linalg.cond(a))


def c40(z):
    z = mp.mpc(z)
    return [float(z.real), float(z.imag)]


# name, element lines (name, form, names…, value[, extra]), Thevenin pairs,
# Z entries, Y entries. Invented values throughout.
MNA = [
    {
        # An amplifier stage: a voltage gain with an output resistance and
        # a feedback resistor from its output back to its input.
        "name": "vgain_feedback",
        "f": 1000.0,
        "elems": [
            ("Es", "emf", "s", "ground", "0.1 V", "600 Ω"),
            ("Rin", "branch", "s", "inp", "10 kΩ"),
            ("Rg", "branch", "inp", "ground", "47 kΩ"),
            ("A1", "vgain", "x", "ground", "inp", "ground", "-50"),
            ("Ro", "branch", "x", "out", "75 Ω"),
            ("Rf", "branch", "out", "inp", "220 kΩ"),
            ("RL", "branch", "out", "ground", "(2000 - j300) Ω"),
        ],
        "thevenin": [("out", "ground"), ("inp", "out")],
        "z": [("out", "inp"), ("inp", "out")],
        "y": [("inp", "out"), ("out", "out")],
    },
    {
        # A transistor stage in its small-signal form: base spreading and
        # input resistance, a transadmittance from base to collector and a
        # bridging capacitance (which makes Z(c,b) ≠ Z(b,c)).
        "name": "transadm_stage",
        "f": 20000.0,
        "elems": [
            ("Es", "emf", "s", "ground", "(5 + j1) mV", "1 kΩ"),
            ("rb", "branch", "s", "b", "100 Ω"),
            ("rpi", "branch", "b", "ground", "2.6 kΩ"),
            ("Cpi", "branch", "b", "ground", "2 nF"),
            ("Cmu", "branch", "b", "c", "50 nF"),
            ("gm", "transadm", "ground", "c", "b", "ground", "40 mS"),
            ("ro", "branch", "c", "ground", "80 kΩ"),
            ("RC", "branch", "c", "ground", "4.7 kΩ"),
        ],
        "thevenin": [("c", "ground"), ("b", "c")],
        "z": [("c", "b"), ("b", "c"), ("c", "c")],
        "y": [("c", "b"), ("b", "c"), ("ground", "b")],
    },
    {
        # A transimpedance: the current in Rsense sets the voltage of a
        # source driving a load through a filter.
        "name": "transimp_sense",
        "f": 400.0,
        "elems": [
            ("Is", "inject", "n1", "ground", "(2 - j0.5) mA", "20 kΩ"),
            ("Rsense", "branch", "n1", "ground", "50 Ω"),
            ("T1", "transimp", "o", "ground", "Rsense", "(1000 + j200) Ω"),
            ("Lf", "branch", "o", "p", "15 mH"),
            ("Cf", "branch", "p", "ground", "4.7 µF"),
            ("RL", "branch", "p", "ground", "120 Ω"),
            ("Rback", "branch", "p", "n1", "33 kΩ"),
        ],
        "thevenin": [("p", "ground"), ("p", "n1")],
        "z": [("p", "n1"), ("n1", "p")],
        "y": [("p", "n1")],
    },
    {
        # A current gain: β times the base current out of the collector
        # node's return, with an emitter resistor shared by input and
        # output.
        "name": "igain_emitter",
        "f": 50.0,
        "elems": [
            ("Es", "emf", "s", "ground", "1 V ∠ 20°", "2 kΩ"),
            ("Rpi", "branch", "s", "e", "1.5 kΩ"),
            ("B1", "igain", "e", "c", "Rpi", "120"),
            ("Re", "branch", "e", "ground", "220 Ω"),
            ("Rc", "branch", "vcc", "c", "3.3 kΩ"),
            ("Rvcc", "branch", "vcc", "ground", "10 Ω"),
            ("Cc", "branch", "c", "ground", "100 nF"),
        ],
        "thevenin": [("c", "ground"), ("c", "e")],
        "z": [("c", "s"), ("s", "c")],
        "y": [("c", "e")],
    },
    {
        # A delta–wye bank as an ideal transformer with ratio n = 2 ∠ 30°
        # (turns 2:1 and the 30° shift), a source behind it and a load on
        # the secondary; the impedance seen at the primary is |n|²·Z_L.
        "name": "xformer_shift",
        "f": 50.0,
        "elems": [
            ("Eu", "emf", "u", "ground", "11 kV", "(0.5 + j4) Ω"),
            ("Tf", "xformer", "u", "ground", "lv", "ground", "2 ∠ 30°"),
            ("Zl", "branch", "lv", "ground", "(25 + j10) Ω"),
            ("Cl", "branch", "lv", "ground", "20 µF"),
        ],
        "thevenin": [("lv", "ground"), ("u", "ground")],
        "z": [("lv", "u"), ("u", "lv"), ("lv", "lv")],
        "y": [("u", "lv"), ("lv", "u")],
    },
    {
        # Two transformers with complex ratios in a ring, neither winding
        # grounded on one side, Thevenin between two ungrounded nodes.
        "name": "xformer_ring",
        "f": 60.0,
        "elems": [
            ("E1", "emf", "a", "ground", "480 V", "(0.05 + j0.3) Ω"),
            ("T1", "xformer", "a", "ground", "p", "q", "(3.8 + j0.6)"),
            ("Zpq", "branch", "p", "q", "(2 + j1) Ω"),
            ("Rq", "branch", "q", "ground", "1 kΩ"),
            ("T2", "xformer", "p", "q", "r", "ground", "0.9 ∠ -12°"),
            ("Zr", "branch", "r", "ground", "(4 + j2) Ω"),
            ("Zar", "branch", "a", "r", "(30 - j8) Ω"),
        ],
        "thevenin": [("p", "q"), ("r", "p")],
        "z": [("p", "r"), ("r", "p")],
        "y": [("p", "r"), ("q", "q")],
    },
    {
        # Mutual coupling by coefficient: a transformer with leakage as two
        # coupled inductors with winding resistance; the load is across the
        # secondary, the primary driven through a resistor.
        "name": "mutual_k",
        "f": 1000.0,
        "elems": [
            ("Es", "emf", "s", "ground", "12 V", "4 Ω"),
            ("L1", "branch", "s", "ground", "(2 + j600) Ω"),
            ("L2", "branch", "x", "ground", "20 mH"),
            ("K", "mutual", "L1", "L2", "0.92"),
            ("RL", "branch", "x", "y", "150 Ω"),
            ("CL", "branch", "y", "ground", "0.5 µF"),
        ],
        "thevenin": [("x", "ground"), ("x", "y")],
        "z": [("x", "s"), ("s", "x")],
        "y": [("x", "s")],
    },
    {
        # Mutual coupling by mutual impedance and by mutual inductance in
        # one network: three coupled coils sharing nodes, a current source.
        "name": "mutual_zm",
        "f": 2000.0,
        "elems": [
            ("Is", "inject", "a", "ground", "(0.1 + j0.05) A"),
            ("Ra", "branch", "a", "ground", "1 kΩ"),
            ("La", "branch", "a", "b", "8 mH"),
            ("Lb", "branch", "b", "ground", "12 mH"),
            ("Lc", "branch", "b", "c", "5 mH"),
            ("Mab", "mutual", "La", "Lb", "j40 Ω"),
            ("Mbc", "mutual", "Lb", "Lc", "2 mH"),
            ("Rc", "branch", "c", "ground", "330 Ω"),
            ("Cac", "branch", "a", "c", "100 nF"),
        ],
        "thevenin": [("c", "ground"), ("a", "c")],
        "z": [("c", "a"), ("a", "c"), ("b", "b")],
        "y": [("a", "c"), ("b", "ground")],
    },
    {
        # Every independent form at once, shorts and opens included: an
        # emf with an inductive internal impedance, an inject with a
        # capacitive shunt, admittances, a 0 Ω tie and a 0 S open.
        "name": "sources_and_limits",
        "f": 60.0,
        "elems": [
            ("E1", "emf", "a", "ground", "120 V ∠ -10°", "2 mH"),
            ("I1", "inject", "d", "ground", "3 A ∠ 45°", "10 µF"),
            ("Ya", "branch", "a", "b", "(0.02 - j0.01) S"),
            ("Tie", "branch", "b", "c", "0 Ω"),
            ("Open", "branch", "c", "ground", "0 S"),
            ("Rc", "branch", "c", "d", "(15 + j5) Ω"),
            ("Rd", "branch", "d", "ground", "40 Ω"),
            ("Yb", "branch", "b", "ground", "12 mS"),
        ],
        "thevenin": [("d", "a"), ("c", "ground")],
        "z": [("d", "a"), ("a", "d")],
        "y": [("a", "d"), ("d", "d")],
    },
]


def sheet_line(e):
    name, form = e[0], e[1]
    return f"{name} = {form}({', '.join(e[2:])})"


def mna_main():
    out = []
    for net in MNA:
        volts, amps, cond = tableau(net)
        rec = {
            "name": net["name"],
            "f": net["f"],
            "lines": [sheet_line(e) for e in net["elems"]],
            "cond": cond,
            "v": {k: c40(x) for k, x in volts.items() if k != "ground"},
            "i": {},
            "s": {},
            "thevenin": [],
            "z": [],
            "y": [],
        }
        delivered = mp.mpc(0)
        absorbed = mp.mpc(0)
        for e in net["elems"]:
            if e[1] == "mutual":
                continue
            i = amps[e[0]]
            s = (volts[e[2]] - volts[e[3]]) * mp.conj(i)
            rec["i"][e[0]] = c40(i)
            rec["s"][e[0]] = c40(s)
            if e[1] == "branch":
                absorbed += s
            elif e[1] != "xformer":
                delivered += s
        rec["delivered"] = c40(delivered)
        rec["absorbed"] = c40(absorbed)
        # Tellegen: every element's power sums to zero (transformers lossless).
        total = absorbed - delivered
        for e in net["elems"]:
            if e[1] == "xformer":
                total += (volts[e[2]] - volts[e[3]]) * mp.conj(amps[e[0]])
                total += (volts[e[4]] - volts[e[5]]) * mp.conj(amps[e[0] + "'"])
        assert abs(total) < mp.mpf(10) ** -25 * (1 + abs(absorbed)), (net["name"], total)

        def injected(p, q):
            """V with sources zeroed and 1 A driven in at p, out at q."""
            return tableau(net, True, [("probe", "inject", p, q, "1 A")])[0]

        for p, q in net["thevenin"]:
            voc = volts[p] - volts[q]
            vv = injected(p, q)
            zth = vv[p] - vv[q]
            # The Norton current measured directly: a 0 Ω branch from p to q
            # with every source acting (Norton's theorem says Voc/Zth).
            isc = tableau(net, False, [("short", "branch", p, q, "0 Ω")])[1]["short"]
            assert zth != 0, (net["name"], p, q, vv)
            assert abs(isc - voc / zth) < mp.mpf(10) ** -25 * (1 + abs(isc)), (net["name"], p, q)
            rec["thevenin"].append({"a": p, "b": q, "voc": c40(voc), "zth": c40(zth), "isc": c40(isc)})
        for i, j in net["z"]:
            rec["z"].append({"i": i, "j": j, "val": c40(injected(j, "ground")[i])})
        # The bus admittance matrix: the inverse of the bus impedance
        # matrix (sources zeroed), ground's row and column the negated sums.
        nodes = [k for k in volts if k != "ground"]
        Z = mp.matrix(len(nodes), len(nodes))
        for cj, j in enumerate(nodes):
            vj = injected(j, "ground")
            for ci, i in enumerate(nodes):
                Z[ci, cj] = vj[i]
        # Where a node's voltage is tied to others by an ideal element (a
        # voltage gain, a transimpedance, a transformer) Z is singular and
        # the bus admittance matrix does not exist: those entries are null.
        scale = max(abs(Z[r, c]) for r in range(Z.rows) for c in range(Z.cols))
        sv = np.linalg.svd(np.array([[complex(Z[r, c]) for c in range(Z.cols)] for r in range(Z.rows)]), compute_uv=False)
        singular = sv[-1] < 1e-12 * float(scale)
        Y = None if singular else Z ** -1
        rec["y_exists"] = not singular

        def yentry(i, j):
            if Y is None:
                return None
            if i != "ground" and j != "ground":
                return Y[nodes.index(i), nodes.index(j)]
            rows = range(len(nodes)) if i == "ground" else [nodes.index(i)]
            cols = range(len(nodes)) if j == "ground" else [nodes.index(j)]
            t = sum(Y[r, c] for r in rows for c in cols)
            return -t if (i == "ground") != (j == "ground") else t

        for i, j in net["y"]:
            y = yentry(i, j)
            rec["y"].append({"i": i, "j": j, "val": None if y is None else c40(y)})
        out.append(rec)
    return out


def main():
    out = []
    for net in NETWORKS:
        v = solve(net)
        rec = {"name": net["name"], "f": net["f"], "elems": [], "v": {}, "thevenin": []}
        for e in net["elems"]:
            rec["elems"].append([e[0], e[1], e[2], c(complex(e[3])), None if len(e) < 5 or e[4] is None else c(complex(e[4]))])
        for n, x in v.items():
            rec["v"][n] = c(complex(x))
        for a, b in net["thevenin"]:
            voc = v[a] - v[b]
            va = solve(net, True, (a, 1.0))
            vb = solve(net, True, (b, 1.0))
            zth = (va[a] - va[b]) - (vb[a] - vb[b])
            rec["thevenin"].append({"a": a, "b": b, "voc": c(voc), "zth": c(zth)})
        out.append(rec)
    here = os.path.dirname(os.path.abspath(__file__))
    with open(os.path.join(here, "networks.json"), "w") as f:
        f.write(json.dumps(out, indent=1) + "\n")
    with open(os.path.join(here, "network_mna.json"), "w") as f:
        f.write(json.dumps(mna_main(), indent=1, ensure_ascii=False) + "\n")


if __name__ == "__main__":
    main()
