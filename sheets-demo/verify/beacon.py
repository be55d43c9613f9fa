#!/usr/bin/env python3
"""Independent check of sheets-demo/beacon-antenna-match.ohm with Python's
cmath/math, written from the textbook formulas (not from ohmsheet). Prints
the values the sheet's `check` lines record. The scenario and numbers are
invented.

With `--json`, the values as {cell: [re, im]} in SI units, which
tests/demo_verifiers.rs compares with ohmsheet's results for the sheet."""
import contextlib
import io
import json
import sys
import math


def beacon():
    f = 1.85e6
    w = 2 * math.pi * f
    Za = complex(12, -180)
    R0 = 50.0
    # Unmatched: reflection coefficient and mismatch loss.
    g = (Za - R0) / (Za + R0)
    ml = 10 * math.log10(1 - abs(g) ** 2)
    print(f"|Γ| = {abs(g):.6g}, mismatch {ml:.6g} dB")
    # Matched: series element next to the antenna, shunt across the
    # transmitter (R < R0). Re 1/(R + jY) = 1/R0 gives Y = +sqrt(R·R0 − R²).
    R = Za.real
    Y = math.sqrt(R * R0 - R * R)
    Xs = Y - Za.imag
    B = Y / (R * R + Y * Y)
    Xp = -1 / B
    print(f"Xs = {Xs:.6g} Ω -> L = {Xs / w:.6g} H")
    print(f"Xp = {Xp:.6g} Ω -> C = {-1 / (w * Xp):.6g} F")
    # Loading-coil loss with Q = 200, as a series resistance Xs/Q.
    r_loss = Xs / 200
    eta = R / (R + r_loss)
    print(f"coil loss {r_loss:.6g} Ω, efficiency {eta:.6g}, {10 * math.log10(eta):.6g} dB")

    return {
        "gamma": g,
        "mismatch": ml,
        "m.Xs": Xs,
        "m.Xp": Xp,
        "L_coil": Xs / w,
        "C_shunt": -1 / (w * Xp),
        "R_loss": r_loss,
        "R_ant_share": eta,
        "loss": 10 * math.log10(eta),
    }

if __name__ == "__main__":
    if "--json" in sys.argv:
        with contextlib.redirect_stdout(io.StringIO()):
            r = beacon()
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        beacon()
