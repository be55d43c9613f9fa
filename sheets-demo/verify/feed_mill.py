#!/usr/bin/env python3
"""Independent check of sheets-demo/pf-correction-feed-mill.ohm with Python's cmath/math,
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


def feed_mill():
    V, f = 400.0, 50.0
    w = 2 * math.pi * f
    loads = [(110e3, 0.78), (75e3, 0.74), (22e3, 0.95)]
    S = sum(p * (1 + J * tanphi(k)) for p, k in loads)
    pf1 = S.real / abs(S)
    Qc = S.real * (tanphi(pf1) - tanphi(0.95))
    print(f"S_tot = {S.real:.6g} W + j{S.imag:.6g} var, pf {pf1:.6f}")
    print(f"Qc = {Qc:.6g} var")
    print(f"C per phase (delta) = {Qc / (3 * w * V * V):.6g} F")
    print(f"I before = {S.real / (SQ3 * V * pf1):.6g} A")
    print(f"I after  = {S.real / (SQ3 * V * 0.95):.6g} A")
    Sa = S - 150e3 * J
    print(f"with 150 kvar: pf {Sa.real / abs(Sa):.6f}, I = {abs(Sa) / (SQ3 * V):.6g} A")
    print(f"C per phase of 150 kvar = {150e3 / (3 * w * V * V):.6g} F")

    return {
        "S_tot": S,
        "pf_before": pf1,
        "Qc": Qc,
        "C_exact": Qc / (3 * w * V * V),
        "I_before": S.real / (SQ3 * V * pf1),
        "I_target": S.real / (SQ3 * V * 0.95),
        "S_after": Sa,
        "pf_after": Sa.real / abs(Sa),
        "I_after": abs(Sa) / (SQ3 * V),
        "C_bank": 150e3 / (3 * w * V * V),
    }

if __name__ == "__main__":
    if "--json" in sys.argv:
        with contextlib.redirect_stdout(io.StringIO()):
            r = feed_mill()
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        feed_mill()
