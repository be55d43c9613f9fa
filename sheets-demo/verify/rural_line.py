#!/usr/bin/env python3
"""Independent check of sheets-demo/rural-feeder-capacitor.ohm with Python's cmath/math,
written from the textbook formulas (not from ohmsheet). Prints the values
the sheet's `check` lines record. The scenario and numbers are invented.

With `--json`, the values as {cell: [re, im]} in SI units, which
tests/demo_verifiers.rs compares with ohmsheet's results for the sheet."""
import cmath
import contextlib
import io
import json
import sys
import math

from formulas import J, SQ3, par, tanphi  # noqa: F401


def rural_line():
    Sb, Vb = 10e6, 11e3
    Zb = Vb * Vb / Sb
    # zone transformer 5 MVA, 7 % (X/R 8) on its own base, 11 kV
    zt = 0.07 * cmath.rect(1, math.atan(8.0)) * (Sb / 5e6)
    zl = 14 * complex(0.54, 0.39) / Zb
    S = 1.6e6 * (1 + J * tanphi(0.85))
    zload = (Vb * Vb / S.conjugate()) / Zb
    V0 = 1.0
    v1 = V0 * zload / (zt + zl + zload)
    C = 600e3 / (2 * math.pi * 50 * Vb * Vb)  # wye, per phase
    zc = (1 / (J * 2 * math.pi * 50 * C)) / Zb
    v2 = V0 * par(zload, zc) / (zt + zl + par(zload, zc))
    print(f"z_t = {zt:.6g} pu, z_line = {zl:.6g} pu, z_load = {zload:.6g} pu")
    print(f"|V_end| without bank = {abs(v1):.6g} pu, with 600 kvar = {abs(v2):.6g} pu")
    print(f"drop without = {(1 - abs(v1)):.6g}, with = {(1 - abs(v2)):.6g}")

    return {
        "z_t": zt,
        "z_line": zl,
        "z_load": zload,
        "v_end": v1,
        "v_end_c": v2,
        "drop": 1 - abs(v1),
        "drop_c": 1 - abs(v2),
        "C_bank": C,
    }

if __name__ == "__main__":
    if "--json" in sys.argv:
        with contextlib.redirect_stdout(io.StringIO()):
            r = rural_line()
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        rural_line()
