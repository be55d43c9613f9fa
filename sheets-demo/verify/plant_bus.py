#!/usr/bin/env python3
"""Independent check of sheets-demo/plant-bus-two-sources.ohm with numpy,
written from classical nodal analysis (not from ohmsheet): each source
with its series impedance becomes its Norton equivalent (current E/Z into
its node, admittance 1/Z to ground), the bus admittance matrix Y is
assembled element by element and Y·V = I solved; the Thevenin voltage at
a bus is its open-circuit voltage, the Thevenin impedance the diagonal
entry of Zbus = Y⁻¹, and the bolted-fault current V/Z (Grainger &
Stevenson, Power System Analysis, ch. 8 and 10 — from memory). The
scenario and numbers are invented.

Prints the values the sheet's `check` lines record; with `--json`, the
same values as {cell: [re, im]} in SI units, which tests/demo_verifiers.rs
compares with ohmsheet's results for the sheet."""
import cmath
import json
import math
import sys

import numpy as np

SQ3 = math.sqrt(3)
W = 2 * math.pi * 50
UTIL, GEN, BUS = 0, 1, 2


def plant_bus():
    vu = 11e3 / SQ3
    zu = complex(0.04, 0.48)
    vg = cmath.rect(6.45e3, math.radians(2))
    zg = complex(0.36, 7.26)
    zc = complex(0.12, 0.09)
    zt = complex(0.25, 0.35)
    zm = complex(57.1, 35.4)
    yb = 1j * W * 15.8e-6

    def solve(bank):
        y = np.zeros((3, 3), dtype=complex)
        i = np.zeros(3, dtype=complex)

        def shunt(n, adm):
            y[n, n] += adm

        def series(a, b, z):
            y[a, a] += 1 / z
            y[b, b] += 1 / z
            y[a, b] -= 1 / z
            y[b, a] -= 1 / z

        shunt(UTIL, 1 / zu)
        i[UTIL] += vu / zu
        shunt(GEN, 1 / zg)
        i[GEN] += vg / zg
        series(UTIL, BUS, zc)
        series(GEN, BUS, zt)
        shunt(BUS, 1 / zm)
        if bank:
            shunt(BUS, yb)
        v = np.linalg.solve(y, i)
        return y, v

    y, v = solve(True)
    _, v_nb = solve(False)
    zth = np.linalg.inv(y)[BUS, BUS]
    voc = v[BUS]
    i_f = voc / zth
    # The generator's current out of its terminal into the network, and
    # the three-phase power it sends out at its terminal, V·I*.
    i_g = (vg - v[GEN]) / zg
    s_g = 3 * v[GEN] * np.conj(i_g)
    # The tie's current, generator end to bus.
    i_tie = (v[GEN] - v[BUS]) / zt
    return {
        "V_th": voc,
        "Z_th": zth,
        "I_fault": abs(i_f),
        "S_fault": SQ3 * 11e3 * abs(i_f),
        "V_bus": v[BUS],
        "V_bus_nb": v_nb[BUS],
        "V_LL": abs(v[BUS]) * SQ3,
        "V_LL_nb": abs(v_nb[BUS]) * SQ3,
        "lift": abs(v[BUS]) / abs(v_nb[BUS]) - 1,
        "S_gen": s_g,
        "I_tie": i_tie,
    }


if __name__ == "__main__":
    r = plant_bus()
    if "--json" in sys.argv:
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        for k, v in r.items():
            print(f"{k} = {complex(v):.6g}")
