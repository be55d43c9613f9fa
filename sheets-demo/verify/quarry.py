#!/usr/bin/env python3
"""Independent check of sheets-demo/quarry-crusher-feeder.ohm with Python's
cmath/math and numpy, written from the textbook formulas (not from
ohmsheet): Z at the angle atan(X/R) from |Z| = V²/S_sc for the source and
z·V²/S for the nameplate; AWG d = 0.005 in · 92^((36 − n)/39) (ASTM B258,
from memory); the chain from the source to the motor solved as a circuit
by Kirchhoff's laws (the source impedance referred through the ratio,
no two-port algebra); kvar multiplier P·(tan φ1 − tan φ2) (IEEE Std 141);
IEC 60909-0: Ik" = c·Un/(√3·|Zk|), κ = 1.02 + 0.98·e^(−3R/X),
ip = κ·√2·Ik" (from memory); NEMA MG 1 unbalance, the largest deviation
from the average over the average (from memory); the IEC unbalance
|V2|/|V1| from the symmetrical-component matrix with numpy. The scenario
and numbers are invented.

Prints the values; with `--json`, the values as {cell: [re, im]} in SI
units, which tests/demo_verifiers.rs compares with ohmsheet's results
for the sheet."""
import cmath
import json
import math
import sys

import numpy as np

SQ3 = math.sqrt(3)
FT = 0.3048
INCH = 0.0254


def z_at(mag, xr):
    return cmath.rect(mag, math.atan(xr))


def awg_area(n):
    d = 0.005 * INCH * 92 ** ((36 - n) / 39)
    return math.pi * d * d / 4


def tanphi(pf):
    return math.tan(math.acos(pf))


def quarry():
    v_hv, v_lv = 4160.0, 480.0
    z_u = z_at(v_hv**2 / 95e6, 6)
    z_t = z_at(0.0575 * v_lv**2 / 1000e3, 5.5)
    a40 = awg_area(-3)
    len_c = 450 * FT
    z_c = 17.241e-9 * len_c / a40 + 1j * 0.12e-3 * len_c
    n = v_hv / v_lv
    # the motor end: 350 hp (745.7 W each) over 0.95, pf 0.87 lagging
    p_in = 350 * 745.69987158227022 / 0.95
    s_m = p_in * complex(1, tanphi(0.87))
    v_m = 460 / SQ3
    i_m = (s_m / (3 * v_m)).conjugate()
    # back to the source: the low-voltage side, then the ratio, then Z_u
    v_lv_side = v_m + i_m * (z_c + z_t)
    v_hv_side = v_lv_side * n
    i_hv = i_m / n
    v_src = v_hv_side + i_hv * z_u
    i_fla = round(abs(i_m))
    fuses = [400, 450, 500, 600, 700, 800]
    i_fuse = max(r for r in fuses if r <= 1.75 * i_fla)
    q_95 = p_in * (tanphi(0.87) - tanphi(0.95))
    q_fixed = 25e3 * math.floor(q_95 / 25e3)
    z_k = z_u / n**2 + z_t + z_c
    kappa = 1.02 + 0.98 * math.exp(-3 * z_k.real / z_k.imag)
    i_k = 1.05 * v_lv / (SQ3 * abs(z_k))
    # unbalance
    v = [478.0, cmath.rect(471, math.radians(-118.3952)), cmath.rect(486, math.radians(121.5113))]
    mags = [abs(x) for x in v]
    avg = sum(mags) / 3
    u_nema = max(abs(m - avg) for m in mags) / avg
    a = cmath.exp(2j * math.pi / 3)
    A_inv = np.array([[1, 1, 1], [1, a, a * a], [1, a * a, a]]) / 3
    seq = A_inv @ np.array(v)
    u_iec = abs(seq[2]) / abs(seq[1])
    return {
        "Z_u": z_u,
        "Z_t": z_t,
        "w40.A": a40,
        "A_bond": awg_area(2),
        "Z_c": z_c,
        "P_in": p_in,
        "S_m": s_m,
        "I_m": i_m,
        "send.V": v_src,
        "send.I": i_hv,
        "V_src": abs(v_src) * SQ3,
        "I_fla": i_fla,
        "I_fuse": i_fuse,
        "Q_to_95": q_95,
        "Q_fixed": q_fixed,
        "Z_k": z_k,
        "k": kappa,
        "I_k": i_k,
        "i_p": kappa * math.sqrt(2) * i_k,
        "u_nema": u_nema,
        "u_iec": u_iec,
        "derate_needed": 1.0 if u_nema > 0.01 else 0.0,
    }


if __name__ == "__main__":
    r = quarry()
    if "--json" in sys.argv:
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        for k, v in r.items():
            print(f"{k} = {v:.7g}")
