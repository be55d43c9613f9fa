#!/usr/bin/env python3
"""Reference values for `ohmsheet spread`, computed independently of the
program (tests/spread_reference.rs reads the output):

- worst case: brute force over a fine grid of each sheet's tolerance box
  with numpy (the extreme at a corner, inside the box, and on a ridge);
- sensitivities: central differences at 50 digits with mpmath (step
  1e-20), of ln|y| (per unit relative change of the input's magnitude,
  or per radian of its angle) and of arg y.

Run from the repository root:

    pip install numpy==2.4.6 mpmath==1.3.0
    python3 tests/reference/gen_spread.py > tests/reference/spread_vectors.json

Each case gives the sheet's text (ohmsheet syntax) and the same formulas
in Python; the two are written side by side here and nowhere else.
"""
import json
import math

import numpy as np
import mpmath as mp

mp.mp.dps = 50
TAU = 2 * math.pi


def grid(lo, hi, n):
    return np.linspace(lo, hi, n)


# ---- worst case: (name, sheet, cell, measure(numpy arrays...), axes) ----
# Each axis: (lo, hi) of the input's value as the grid varies it, in SI;
# the function takes the grids of every axis (broadcast) and returns the
# cell's measure.

WORST = []

# A voltage divider: monotone in each resistor, extremes at corners.
WORST.append(dict(
    name="divider",
    sheet="Vs = 10 V\nR1 = 1 kΩ within 5 %\nR2 = 3 kΩ within 1 %\nVo = Vs * R2 / (R1 + R2)\n",
    cell="Vo",
    axes=[(950.0, 1050.0), (2970.0, 3030.0)],
    f=lambda r1, r2: 10.0 * r2 / (r1 + r2),
    n=401,
))

# Power into a load from a source with internal resistance: largest at
# R = Rs, inside the box along R, at the low end along Rs.
WORST.append(dict(
    name="power-transfer",
    sheet="Vs = 10 V\nRs = 5 Ω within 10 %\nR = 5 Ω within 40 %\nPl = abs(Vs / (Rs + R))^2 * R\n",
    cell="Pl",
    axes=[(4.5, 5.5), (3.0, 7.0)],
    f=lambda rs, r: 100.0 * r / (rs + r) ** 2,
    n=801,
))

# A series R-L-C at 50 Hz, resonant at the stated values: the current is
# largest on the ridge ω²LC = 1 inside the box.
L0 = 0.1
C0 = 1.0 / ((TAU * 50.0) ** 2 * L0)
WORST.append(dict(
    name="series-resonance",
    sheet=("V = 10 V\nR = 1 Ω\nL = 100 mH within 10 %\nC = " + repr(C0 * 1e6) + " µF within 10 %\n"
           "w = 2 * pi * 50 Hz\nI = V / (R + j * w * L + 1 / (j * w * C))\n"),
    cell="I",
    axes=[(0.9 * L0, 1.1 * L0), (0.9 * C0, 1.1 * C0)],
    f=lambda l, c: 10.0 / np.abs(1.0 + 1j * TAU * 50.0 * l + 1.0 / (1j * TAU * 50.0 * c)),
    n=1201,
))

# Two phasors with tolerances on magnitude and angle: |V1 + V2|.
WORST.append(dict(
    name="phasor-sum",
    sheet=("V1 = 100 V ∠ 0° within 5 % angle 10°\nV2 = 50 V ∠ 120° within 2 % angle 20°\n"
           "Vt = V1 + V2\n"),
    cell="Vt",
    axes=[(0.95, 1.05), (-10.0, 10.0), (0.98, 1.02), (-20.0, 20.0)],
    f=lambda a1, t1, a2, t2: np.abs(100.0 * a1 * np.exp(1j * np.radians(t1))
                                   + 50.0 * a2 * np.exp(1j * np.radians(120.0 + t2))),
    n=41,
))


def worst_vectors():
    out = []
    for c in WORST:
        gs = [grid(lo, hi, c["n"]) for lo, hi in c["axes"]]
        mesh = np.meshgrid(*gs, indexing="ij")
        y = c["f"](*mesh)
        out.append(dict(name=c["name"], sheet=c["sheet"], cell=c["cell"],
                        grid_points=int(y.size), grid_min=float(y.min()), grid_max=float(y.max())))
    return out


# ---- sensitivities: (name, sheet, cells, inputs, model) ----
# model(values: dict name -> mpc) -> dict cell -> mpc

def thevenin(v):
    vl = v["Vs"] * v["Zl"] / (v["Zs"] + v["Zl"])
    i = v["Vs"] / (v["Zs"] + v["Zl"])
    s = vl * mp.conj(i)
    return {"Vl": vl, "I": i, "pf": mp.re(s) / abs(s)}


SENS = [dict(
    name="thevenin-load",
    sheet=("Vs = 230 V ∠ 0° within 2 % angle 1°\nZs = (0.5 + j4) Ω within 10 %\n"
           "Zl = (20 + j10) Ω within 5 % angle 5°\n"
           "Vl = Vs * Zl / (Zs + Zl)\nI = Vs / (Zs + Zl)\npf = re(Vl * conj(I)) / abs(Vl * conj(I))\n"),
    stated={"Vs": mp.mpc(230, 0), "Zs": mp.mpc("0.5", 4), "Zl": mp.mpc(20, 10)},
    angle_inputs=["Vs", "Zl"],
    model=thevenin,
)]


def sens_vectors():
    out = []
    h = mp.mpf("1e-20")
    for c in SENS:
        base = c["model"](c["stated"])
        rows = []
        for name in c["stated"]:
            dirs = ["magnitude"] + (["angle"] if name in c["angle_inputs"] else [])
            for d in dirs:
                def at(t):
                    v = dict(c["stated"])
                    x = v[name]
                    v[name] = x * (1 + t) if d == "magnitude" else x * mp.expj(t)
                    return c["model"](v)
                up, dn = at(h), at(-h)
                for cell, y0 in base.items():
                    real = cell == "pf"
                    if real:
                        dm = (mp.re(up[cell]) - mp.re(dn[cell])) / (2 * h) / mp.re(y0)
                        da = None
                    else:
                        dm = (mp.log(abs(up[cell])) - mp.log(abs(dn[cell]))) / (2 * h)
                        da = (mp.arg(up[cell] / y0) - mp.arg(dn[cell] / y0)) / (2 * h)
                    # The program's units: % per % (a ratio) and degrees per %
                    # for the magnitude; % per degree and degrees per degree
                    # for the angle.
                    if d == "magnitude":
                        mag, ang = dm, (None if da is None else da * 180 / mp.pi / 100)
                    else:
                        mag, ang = dm * 100 * mp.pi / 180, da
                    rows.append(dict(cell=cell, input=name, direction=d, magnitude=float(mag),
                                     angle=None if ang is None else float(ang)))
        out.append(dict(name=c["name"], sheet=c["sheet"], rows=rows))
    return out


if __name__ == "__main__":
    print(json.dumps({"worst_case": worst_vectors(), "sensitivities": sens_vectors()}, indent=1, ensure_ascii=False))
