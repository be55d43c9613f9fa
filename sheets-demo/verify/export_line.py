#!/usr/bin/env python3
"""Independent check of sheets-demo/export-line-ferranti.ohm with Python's
cmath/math, written from the long-line equations of the textbooks (not
from ohmsheet): γ = √(zy), Zc = √(z/y), Vs = Vr·cosh γℓ + Ir·Zc·sinh γℓ,
Is = Vr·sinh(γℓ)/Zc + Ir·cosh γℓ (Grainger & Stevenson, Power System
Analysis, ch. 6 — from memory); the nominal π from its circuit, Z in
series with Y/2 at each end, solved by Kirchhoff's laws. The scenario and
numbers are invented.

Prints the values the sheet's `check` lines record; with `--json`, the
same values as {cell: [re, im]} in SI units, which tests/demo_verifiers.rs
compares with ohmsheet's results for the sheet."""
import cmath
import json
import math
import sys

SQ3 = math.sqrt(3)


def export_line():
    w = 2 * math.pi * 50
    length = 320e3
    z = complex(0.032, 0.325) / 1e3  # Ω/m
    y = 1j * w * 11.2e-9 / 1e3  # S/m
    g = cmath.sqrt(z * y)
    zc = cmath.sqrt(z / y)
    gl = g * length

    def long_line(vr, ir):
        vs = vr * cmath.cosh(gl) + ir * zc * cmath.sinh(gl)
        i_s = vr * cmath.sinh(gl) / zc + ir * cmath.cosh(gl)
        return vs, i_s

    def nominal_pi(vr, ir):
        Z, Y = z * length, y * length
        i_series = ir + vr * Y / 2  # the receiving-end shunt takes Vr·Y/2
        vs = vr + i_series * Z
        return vs, i_series + vs * Y / 2

    # Receiving end: 150 MW at 0.98 lagging, 210 kV line to line.
    vr = 210e3 / SQ3
    s_r = 150e6 * complex(1, math.tan(math.acos(0.98)))
    ir = (s_r / (3 * vr)).conjugate()
    vs, i_s = long_line(vr, ir)
    s_s = 3 * vs * i_s.conjugate()
    vs_nom, _ = nominal_pi(vr, ir)

    # Step-up transformer 12 % on 300 MVA at 220 kV, in series at the
    # sending end: the current through it is the line's sending current.
    xt = 1j * 0.12 * 220e3**2 / 300e6
    v_gen = vs + i_s * xt

    # Load dropped, sending end held: |Vr| = |Vs|/|cosh γℓ|.
    vr_open = abs(vs) / abs(cmath.cosh(gl))
    # Energised from 220 kV with the far end open: Vr = Vs/cosh γℓ.
    v_bus = 220e3 / SQ3
    v_end = v_bus / cmath.cosh(gl)
    i_charge = v_end * cmath.sinh(gl) / zc
    q_charge = (3 * v_bus * i_charge.conjugate()).imag
    # With a 25 Mvar reactor at the open end: Ir = Vr/Zreactor, so
    # Vs = Vr·(cosh γℓ + Zc·sinh γℓ/Zreactor).
    z_reactor = 1j * 220e3**2 / 25e6
    v_end_r = v_bus / (cmath.cosh(gl) + zc * cmath.sinh(gl) / z_reactor)

    return {
        "V_s": abs(vs) * SQ3,
        "S_s": s_s,
        "P_loss": s_s.real - s_r.real,
        "V_s_nominal": abs(vs_nom) * SQ3,
        "V_gen": abs(v_gen) * SQ3,
        "V_r_open": vr_open * SQ3,
        "reg": (vr_open * SQ3 - 210e3) / 210e3,
        "rise": abs(v_end) / abs(v_bus) - 1,
        "V_end_LL": abs(v_end) * SQ3,
        "Q_charge": q_charge,
        "rise_r": abs(v_end_r) / abs(v_bus) - 1,
    }


if __name__ == "__main__":
    r = export_line()
    if "--json" in sys.argv:
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        print(f"V_s = {r['V_s'] / 1e3:.6g} kV (nominal π {r['V_s_nominal'] / 1e3:.6g} kV)")
        print(f"S_s = {r['S_s'] / 1e6:.6g} MVA, losses {r['P_loss'] / 1e6:.6g} MW")
        print(f"generator side of the transformer: {r['V_gen'] / 1e3:.6g} kV")
        print(f"open-end voltage with the sending end held: {r['V_r_open'] / 1e3:.6g} kV, regulation {r['reg'] * 100:.6g} %")
        print(f"Ferranti rise from 220 kV: {r['rise'] * 100:.6g} % ({r['V_end_LL'] / 1e3:.6g} kV), charging {r['Q_charge'] / 1e6:.6g} Mvar")
        print(f"with a 25 Mvar reactor: {r['rise_r'] * 100:.6g} %")
