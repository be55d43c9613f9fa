#!/usr/bin/env python3
"""Reference values for the network solver, from an independent nodal
solve written here with numpy.

Each test network is a list of elements between named nodes (`ground` is
the reference). This script converts every source with an internal
impedance to its Norton equivalent and writes the nodal admittance
equations Y·V = J itself (classical nodal analysis, not the modified form
the program uses); ideal voltage sources are handled by eliminating the
node they fix when the other end is ground. It prints JSON:

    python3 tests/reference/gen_networks.py > tests/reference/networks.json

Elements: ["Z", a, b, ohms] | ["Y", a, b, siemens] | ["L", a, b, henry] |
["C", a, b, farad] | ["V", a, b, volts, ohms_or_None] (a is +) |
["I", a, b, amps] (driven out of a into the network, back in at b).
A frequency in Hz is given per network.
"""
import cmath
import json
import math

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
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()
