#!/usr/bin/env python3
"""Independent check of sheets-demo/induction-heater-match.ohm with Python's cmath/math,
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


def forge():
    f = 28e3
    w = 2 * math.pi * f
    L, R = 4.6e-6, 0.035
    Zc = complex(R, w * L)
    Rs = 6.0
    # Series element next to the coil, shunt across the inverter (R < Rs):
    # choose X so that Zc + jX, seen through a shunt B, gives Rs. Solve
    # directly: Re(1/(Zc + jX)) must equal 1/Rs.
    # 1/(R + jY) has real part R/(R² + Y²) = 1/Rs  →  Y = ±sqrt(R·Rs − R²).
    Y = math.sqrt(R * Rs - R * R)  # the + branch
    Xs = Y - Zc.imag
    B = -(1 / complex(R, Y)).imag  # the shunt cancels the susceptance left
    Xp = -1 / B
    print(f"Xs = {Xs:.6g} Ω  -> Cs = {-1 / (w * Xs):.6g} F")
    print(f"Xp = {Xp:.6g} Ω  -> Cp = {-1 / (w * Xp):.6g} F")
    zin = par(J * Xp, Zc + J * Xs)
    print(f"Zin = {zin:.6g}")
    P = 25e3
    print(f"coil current for {P} W: {math.sqrt(P / R):.6g} A; Q of coil {w * L / R:.6g}")
    print(f"inverter current {math.sqrt(P / Rs):.6g} A")

    return {
        "m.Xs": Xs,
        "m.Xp": Xp,
        "C_series": -1 / (w * Xs),
        "C_shunt": -1 / (w * Xp),
        "Z_in": zin,
        "Q_coil": w * L / R,
        "I_inv": math.sqrt(P / Rs),
        "I_coil": math.sqrt(P / R),
    }

if __name__ == "__main__":
    if "--json" in sys.argv:
        with contextlib.redirect_stdout(io.StringIO()):
            r = forge()
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        forge()
