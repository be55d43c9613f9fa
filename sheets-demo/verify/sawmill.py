#!/usr/bin/env python3
"""Independent check of sheets-demo/sawmill-bank-fault-duty.ohm with
Python's cmath/math and numpy, written from the textbook formulas (not
from ohmsheet). Prints the values the sheet's `check` lines record. The
scenario and numbers are invented.

Formulas: kvar multiplier P·(tan φ1 − tan φ2) (IEEE Std 141); Z = z·V²/S
at the angle atan(X/R) for a nameplate, V²/S_sc for the source, referred
by (V2/V1)²; IEC 60909-0: Ik" = c·Un/(√3·|Zk|), κ = 1.02 + 0.98·e^(−3R/X),
ip = κ·√2·Ik" (from memory); the unsymmetrical faults by a phase-domain
solve (Thevenin matrix A·diag(Z0, Z1, Z2)·A⁻¹ and the fault's
constraints), not by sequence-network formulas; h = √(S_sc/Q_c).

Prints the values the sheet's `check` lines record; with `--json`, the
values as {cell: [re, im]} in SI units, which tests/demo_verifiers.rs
compares with ohmsheet's results for the sheet."""
import cmath
import json
import math
import sys

import numpy as np

from formulas import J, SQ3, tanphi


def z_xr(mag, xr):
    return cmath.rect(mag, math.atan(xr))


def fault(kind, vf, z1, z2, z0):
    """Bolted fault currents (Ia, Ib, Ic) by a phase-domain solve."""
    a = cmath.exp(2j * math.pi / 3)
    A = np.array([[1, 1, 1], [1, a * a, a], [1, a, a * a]])
    zabc = A @ np.diag([z0, z1, z2]) @ np.linalg.inv(A)
    e = np.array([vf, a * a * vf, a * vf])
    m = np.zeros((6, 6), dtype=complex)
    rhs = np.zeros(6, dtype=complex)
    m[0:3, 0:3] = zabc
    m[0:3, 3:6] = np.eye(3)
    rhs[0:3] = e
    if kind == "slg":
        m[3, 3] = 1  # Va = 0
        m[4, 1] = 1  # Ib = 0
        m[5, 2] = 1  # Ic = 0
    elif kind == "ll":
        m[3, 0] = 1  # Ia = 0
        m[4, 1], m[4, 2] = 1, 1  # Ib + Ic = 0
        m[5, 4], m[5, 5] = 1, -1  # Vb = Vc
    else:  # dlg
        m[3, 0] = 1  # Ia = 0
        m[4, 4] = 1  # Vb = 0
        m[5, 5] = 1  # Vc = 0
    return np.linalg.solve(m, rhs)[0:3]


def sawmill():
    f, v_lv, v_hv = 50.0, 415.0, 11e3
    p, pf1 = 900e3, 0.74
    q_need = p * (tanphi(pf1) - tanphi(0.95))
    q_bank = 50e3 * math.ceil(q_need / 50e3)
    s_after = p + J * (p * tanphi(pf1) - q_bank)
    pf_after = s_after.real / abs(s_after)
    c_bank = q_bank / (3 * 2 * math.pi * f * v_lv**2)
    ratings = [500e3, 750e3, 1000e3, 1250e3, 1600e3, 2000e3]
    s_tx = min(r for r in ratings if r >= abs(s_after))
    zq = z_xr(v_hv**2 / 180e6, 9) * (v_lv / v_hv) ** 2
    zt = z_xr(0.06 * v_lv**2 / s_tx, 7)
    z1 = zq + zt
    z0 = 0.95 * zt
    c = 1.05
    ik = c * v_lv / (SQ3 * abs(z1))
    kappa = 1.02 + 0.98 * math.exp(-3 * z1.real / z1.imag)
    ip = kappa * math.sqrt(2) * ik
    vf = c * v_lv / SQ3
    i_slg = abs(fault("slg", vf, z1, z1, z0)[0])
    i_ll = abs(fault("ll", vf, z1, z1, z0)[1])
    i_dlg = fault("dlg", vf, z1, z1, z0)
    i_dlg_ground = abs(i_dlg[1] + i_dlg[2])
    i_duty = max(ik, i_slg)
    ip_duty = kappa * math.sqrt(2) * i_duty
    s_sc = v_lv**2 / abs(z1)
    h = math.sqrt(s_sc / q_bank)
    return {
        "Q_need": q_need,
        "Q_bank": q_bank,
        "pf_after": pf_after,
        "C_bank": c_bank,
        "S_after": abs(s_after),
        "S_tx": s_tx,
        "Z_q": zq,
        "Z_t": zt,
        "Z1": z1,
        "k3.Ik": ik,
        "k3.kappa": kappa,
        "k3.ip": ip,
        "I_slg": i_slg,
        "I_ll": i_ll,
        "I_dlg_ground": i_dlg_ground,
        "I_duty": i_duty,
        "ip_duty": ip_duty,
        "S_sc": s_sc,
        "h": h,
        "near_5th": 1.0 if abs(h / 5 - 1) < 0.1 else 0.0,
        "near_7th": 1.0 if abs(h / 7 - 1) < 0.1 else 0.0,
    }


def show(r):
    print(f"Q_need = {r['Q_need'] / 1e3:.7g} kvar, Q_bank = {r['Q_bank'] / 1e3:.7g} kvar, pf_after = {r['pf_after']:.7g}")
    print(f"C_bank = {r['C_bank'] * 1e6:.7g} µF, |S_after| = {r['S_after'] / 1e3:.7g} kVA, S_tx = {r['S_tx'] / 1e3:.7g} kVA")
    print(f"Z_q = {r['Z_q']:.7g} Ω, Z_t = {r['Z_t']:.7g} Ω, Z1 = {r['Z1']:.7g} Ω")
    print(f"Ik = {r['k3.Ik'] / 1e3:.7g} kA, kappa = {r['k3.kappa']:.7g}, ip = {r['k3.ip'] / 1e3:.7g} kA")
    print(f"I_slg = {r['I_slg'] / 1e3:.7g} kA, I_ll = {r['I_ll'] / 1e3:.7g} kA, I_dlg_ground = {r['I_dlg_ground'] / 1e3:.7g} kA")
    print(f"I_duty = {r['I_duty'] / 1e3:.7g} kA, ip_duty = {r['ip_duty'] / 1e3:.7g} kA")
    print(f"S_sc = {r['S_sc'] / 1e6:.7g} MVA, h = {r['h']:.7g}, within 10 % of the 5th: {bool(r['near_5th'])}, of the 7th: {bool(r['near_7th'])}")


if __name__ == "__main__":
    r = sawmill()
    if "--json" in sys.argv:
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        show(r)
