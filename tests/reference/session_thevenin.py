#!/usr/bin/env python3
"""Reference values for the Thevenin walkthrough in docs/session.md,
computed with Python's cmath by nodal analysis of the full circuit (not by
the Thevenin formulas the sheet uses). Run: python3 tests/reference/session_thevenin.py
"""
import cmath

Vs = 240
Zs = 0.8 + 2.4j
Zsh = 30 + 12j

# Open-circuit bus voltage and the impedance seen with the source shorted.
Vth = Vs / Zs / (1 / Zs + 1 / Zsh)
Zth = 1 / (1 / Zs + 1 / Zsh)
print("Vth", repr(Vth.real), repr(Vth.imag))
print("Zth", repr(Zth.real), repr(Zth.imag))
for ZL in (12 + 5j, 6 + 2j):
    # Node voltage at the bus with the load on it: one nodal equation.
    VA = Vs / Zs / (1 / Zs + 1 / Zsh + 1 / ZL)
    IL = VA / ZL
    m, a = cmath.polar(IL)
    print("ZL", ZL, "IL", repr(IL.real), repr(IL.imag), "polar", m, a * 180 / cmath.pi)
