#!/usr/bin/env python3
"""Independent check of sheets-demo/pf-correction-feed-mill.ohm with Python's cmath/math,
written from the textbook formulas (not from ohmsheet). Prints the values
the sheet's `check` lines record. The scenario and numbers are invented."""
import cmath
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


if __name__ == "__main__":
    feed_mill()
