#!/usr/bin/env python3
"""Reference values for the sheet language, computed independently of
ohmsheet with mpmath (50 significant digits) and checked against Python's
cmath.

Each case pairs an ohmsheet formula with the same computation written in
Python. Run from the repository root:

    pip install mpmath==1.3.0
    python3 tests/reference/gen_vectors.py > tests/reference/vectors.json

tests/reference.rs evaluates every formula with ohmsheet and requires
agreement to 1e-9 relative (the issue's acceptance bound). Values are in
coherent SI units (Ω, V, A, F, H, W...; angles in radians).
"""
import cmath
import json
import math

import mpmath as mp

mp.mp.dps = 50
J = mp.mpc(0, 1)
PI = mp.pi
DEG = PI / 180


def par(*zs):
    """Reciprocal sum: impedances in parallel."""
    return 1 / sum(1 / z for z in zs)


def polar(m, deg):
    return m * mp.expj(deg * DEG)


# Inputs shared by the cases (as a sheet preamble and as Python values).
PREAMBLE = """
R1 = 12 Ω
R2 = 4.7 kΩ
L1 = 10 mH
C1 = 4.7 µF
f = 60 Hz
w = 2*pi*f
Vs = 277 V ∠ -30°
Zs = (0.25 + j1.8) Ω
Zc = -j30 Ω
"""
R1 = mp.mpf(12)
R2 = mp.mpf(4700)
L1 = mp.mpf("10e-3")
C1 = mp.mpf("4.7e-6")
f = mp.mpf(60)
w = 2 * PI * f
Vs = polar(mp.mpf(277), -30)
Zs = mp.mpc("0.25", "1.8")
Zc = mp.mpc(0, -30)

# (ohmsheet formula, mpmath value, what it exercises)
CASES = [
    ("12", mp.mpf(12), "integer"),
    ("0.5", mp.mpf("0.5"), "decimal"),
    ("1.5e3", mp.mpf(1500), "exponent"),
    ("4.7k", mp.mpf(4700), "glued prefix k"),
    ("10u", mp.mpf("10e-6"), "glued prefix u"),
    ("2.2µ", mp.mpf("2.2e-6"), "glued prefix µ"),
    ("3M", mp.mpf(3e6), "glued prefix M"),
    ("5m", mp.mpf("5e-3"), "glued prefix m is milli"),
    ("68n", mp.mpf("68e-9"), "glued prefix n"),
    ("1p", mp.mpf("1e-12"), "glued prefix p"),
    ("2G", mp.mpf(2e9), "glued prefix G"),
    ("3j", mp.mpc(0, 3), "imaginary a·j"),
    ("j3", mp.mpc(0, 3), "imaginary j·a"),
    ("-j30", mp.mpc(0, -30), "negative imaginary"),
    ("j4.5", mp.mpc(0, "4.5"), "decimal imaginary"),
    ("j * w * L1", J * w * L1, "j alone"),
    ("3 + j4", mp.mpc(3, 4), "a + jb"),
    ("3 + 4j", mp.mpc(3, 4), "a + bj"),
    ("277 V ∠ -30°", polar(277, -30), "polar with ∠ and °"),
    ("277 V /_ -30", polar(277, -30), "ASCII polar, degrees"),
    ("1 /_ 0.5 rad", mp.expj(mp.mpf("0.5")), "polar in radians"),
    ("20 Ω", mp.mpf(20), "ohm sign"),
    ("20 ohm", mp.mpf(20), "ohm word"),
    ("(6 + j10) Ω", mp.mpc(6, 10), "unit after bracket"),
    ("4.7 µF", mp.mpf("4.7e-6"), "µF"),
    ("4.7 uF", mp.mpf("4.7e-6"), "uF"),
    ("13.8 kV", mp.mpf(13800), "kV"),
    ("60 Hz", mp.mpf(60), "Hz"),
    ("75 kW", mp.mpf(75000), "kW"),
    ("500 kvar", mp.mpf(500000), "kvar"),
    ("1.2 kVA", mp.mpf(1200), "kVA"),
    ("10 mH", mp.mpf("0.01"), "mH"),
    ("2 mS", mp.mpf("0.002"), "mS"),
    ("377 rad/s", mp.mpf(377), "rad/s"),
    ("45 deg", PI / 4, "deg is an angle in radians"),
    ("1 + 2 * 3 - 4 / 8", mp.mpf("6.5"), "arithmetic precedence"),
    ("2^10", mp.mpf(1024), "power"),
    ("-(2^2)", mp.mpf(-4), "minus of a power (`-2^2` is refused as ambiguous)"),
    ("(1 + j)^3", mp.mpc(1, 1) ** 3, "complex integer power"),
    ("(1 + j)^0.5", mp.sqrt(mp.mpc(1, 1)), "complex fractional power"),
    ("2^(1 + j)", mp.power(2, mp.mpc(1, 1)), "complex exponent"),
    ("R1 || R2", par(R1, R2), "parallel resistors"),
    ("R1 + R2 || R1", R1 + par(R2, R1), "|| binds tighter than +"),
    ("R1 || j * w * L1 || 1/(j*w*C1)", par(R1, J * w * L1, 1 / (J * w * C1)), "parallel RLC"),
    ("10 µF || 22 µF", mp.mpf("32e-6"), "capacitors in parallel add"),
    ("10 µF -- 22 µF", 1 / (1 / mp.mpf("10e-6") + 1 / mp.mpf("22e-6")), "capacitors in series"),
    ("10 mH -- 22 mH", mp.mpf("0.032"), "inductors in series add"),
    ("10 mH || 22 mH", par(mp.mpf("0.01"), mp.mpf("0.022")), "inductors in parallel"),
    ("2 mS || 3 mS", mp.mpf("0.005"), "admittances in parallel add"),
    ("2 mS -- 3 mS", par(mp.mpf("0.002"), mp.mpf("0.003")), "admittances in series"),
    ("0 Ω || 5 Ω", mp.mpf(0), "a short in parallel"),
    ("Zs + Zc || R1", Zs + par(Zc, R1), "mixed network"),
    ("Vs / (Zs + R1)", Vs / (Zs + R1), "phasor current"),
    ("Vs * conj(Vs / (Zs + R1))", Vs * mp.conj(Vs / (Zs + R1)), "complex power S = V I*"),
    ("re(Zs)", mp.re(Zs), "re"),
    ("im(Zs)", mp.im(Zs), "im"),
    ("abs(Vs)", mp.mpf(277), "abs"),
    ("arg(Zs)", mp.arg(Zs), "arg (an angle, in radians)"),
    ("conj(Zs)", mp.conj(Zs), "conj"),
    ("sqrt(-4)", mp.mpc(0, 2), "sqrt of a negative"),
    ("sqrt(3 + j4)", mp.sqrt(mp.mpc(3, 4)), "complex sqrt"),
    ("sqrt(L1 / C1)", mp.sqrt(L1 / C1), "sqrt of a unit ratio"),
    ("exp(j * pi / 3)", mp.expj(PI / 3), "exp"),
    ("ln(2 + j)", mp.log(mp.mpc(2, 1)), "ln"),
    ("log10(1000)", mp.mpf(3), "log10"),
    ("sin(30°)", mp.mpf("0.5"), "sin of degrees"),
    ("cos(1 + j)", mp.cos(mp.mpc(1, 1)), "complex cos"),
    ("tan(0.3)", mp.tan(mp.mpf("0.3")), "tan"),
    ("asin(0.5)", PI / 6, "asin"),
    ("acos(0.8)", mp.acos(mp.mpf("0.8")), "acos"),
    ("atan(2)", mp.atan(2), "atan"),
    ("atan2(-1, -1)", mp.atan2(-1, -1), "atan2"),
    ("min(3, -2, 7)", mp.mpf(-2), "min"),
    ("max(3 Ω, 7 Ω)", mp.mpf(7), "max"),
    ("1 / (2*pi*sqrt(L1*C1))", 1 / (2 * PI * mp.sqrt(L1 * C1)), "resonant frequency"),
    ("w", w, "2πf"),
    ("Vs", Vs, "polar input"),
]

# Principal values at the negative real axis and on the other branch cuts
# (issue 13): -pi < arg <= pi (DLMF 4.2.3-4.2.7 for ln, 4.37 for powers;
# DLMF 4.23 for the inverse trigonometric functions). A negative real,
# however it is written, is taken on the upper side of the cut, as
# Python's cmath takes complex(x, 0.0); each value is checked against
# cmath below. (mpmath 1.3.0 takes asin(2) on the lower side, so the
# inverse sine and cosine on their cuts come from DLMF's formulas.)
PRINCIPAL_CASES = [
    ("ln(-1)", mp.mpc(0, PI), "ln of a negative literal: +jπ", complex(-1, 0.0), cmath.log),
    ("ln(0 - 1)", mp.mpc(0, PI), "ln of 0 − x", complex(-1, 0.0), cmath.log),
    ("ln(-(R1/R1))", mp.mpc(0, PI), "ln of −(x)", complex(-1, 0.0), cmath.log),
    ("ln(-2.5)", mp.log(mp.mpf("2.5")) + J * PI, "ln of a negative: ln|x| + jπ", complex(-2.5, 0.0), cmath.log),
    ("log10(-100)", 2 + J * PI / mp.log(10), "log10 of a negative", complex(-100, 0.0), cmath.log10),
    ("arg(-5 Ω)", PI, "arg of a negative real: +π", complex(-5, 0.0), cmath.phase),
    ("arg(0 Ω - R1)", PI, "arg of 0 − x", complex(-12, 0.0), cmath.phase),
    ("arg(-(R1))", PI, "arg of −(x)", complex(-12, 0.0), cmath.phase),
    ("atan2(0, -1)", PI, "atan2 on the negative real axis", complex(-1, 0.0), cmath.phase),
    ("(-8)^(1/3)", mp.exp(mp.log(mp.mpc(-8)) / 3), "principal cube root: 1 + j√3",
     complex(-8, 0.0), lambda z: z ** (1 / 3)),
    ("(-4)^0.5", mp.mpc(0, 2), "x^0.5 of a negative is sqrt(x) = +j2", complex(-4, 0.0), cmath.sqrt),
    ("(0 - 4)^0.5", mp.mpc(0, 2), "x^0.5 of 0 − x", complex(-4, 0.0), cmath.sqrt),
    ("(-(R1/R1*4))^0.5", mp.mpc(0, 2), "x^0.5 of −(x)", complex(-4, 0.0), cmath.sqrt),
    ("(-4)^1.5", mp.exp(mp.mpf("1.5") * mp.log(mp.mpc(-4))), "fractional power of a negative",
     complex(-4, 0.0), lambda z: z ** 1.5),
    ("(-2)^(0.5 + j)", mp.exp(mp.mpc("0.5", 1) * mp.log(mp.mpc(-2))), "complex power of a negative",
     complex(-2, 0.0), lambda z: z ** complex(0.5, 1)),
    ("(-2)^3", mp.mpf(-8), "integer power of a negative: exact, real", complex(-2, 0.0), lambda z: z ** 3),
    ("sqrt(-(R1/R1*9))", mp.mpc(0, 3), "sqrt of −(x)", complex(-9, 0.0), cmath.sqrt),
    ("asin(2)", PI / 2 + J * mp.acosh(2), "asin on its cut, upper side", complex(2, 0.0), cmath.asin),
    ("asin(-2)", -PI / 2 + J * mp.acosh(2), "asin on its cut, upper side", complex(-2, 0.0), cmath.asin),
    ("acos(2)", -J * mp.acosh(2), "acos on its cut, upper side", complex(2, 0.0), cmath.acos),
    ("acos(-2)", PI - J * mp.acosh(2), "acos on its cut, upper side", complex(-2, 0.0), cmath.acos),
    ("atan(j2)", mp.atan(mp.mpc(0, 2)), "atan on its cut", complex(0.0, 2), cmath.atan),
    ("atan(-j2)", PI / 2 + J * mp.atanh(mp.mpf(-1) / 2), "atan on its cut, right side",
     complex(0.0, -2), cmath.atan),
]
for _f, _v, _w, _z, _py in PRINCIPAL_CASES:
    assert cmath.isclose(complex(mp.mpc(_v)), _py(_z), rel_tol=1e-12, abs_tol=1e-15), _f
CASES += [(f, v, w) for f, v, w, _z, _py in PRINCIPAL_CASES]


def main():
    out = []
    for formula, value, what in CASES:
        z = mp.mpc(value)
        # cross-check the mpmath value with cmath at double precision
        out.append({
            "formula": formula,
            "re": float(mp.re(z)),
            "im": float(mp.im(z)),
            "what": what,
        })
    # An independent spot check of a few cases with Python's cmath.
    assert cmath.isclose(complex(Vs), cmath.rect(277, math.radians(-30)), rel_tol=1e-12)
    assert cmath.isclose(complex(par(R1, R2)), 12 * 4700 / 4712, rel_tol=1e-12)
    doc = {
        "source": "mpmath 1.3.0 at 50 digits, via tests/reference/gen_vectors.py",
        "preamble": PREAMBLE.strip(),
        "cases": out,
    }
    print(json.dumps(doc, indent=1, ensure_ascii=False))


if __name__ == "__main__":
    main()
