#!/usr/bin/env python3
"""Independent check of sheets-demo/geophone-hum-notch.ohm, written from
classical nodal analysis (not from ohmsheet): the preamplifier with its
output resistance becomes its Norton equivalent (current Vs/Rs into node
`pre`, admittance 1/Rs to ground), the 4 × 4 nodal admittance matrix of
the twin-T and its load is assembled element by element with numpy and
Y·V = I solved. The Thevenin impedance at the output is the diagonal entry
of Y⁻¹ at `out`.

The null: the transfer Vout/Vs as a function of frequency is solved again
in 40-digit arithmetic with mpmath, and its zero found with mpmath's
findroot (on the complex output voltage, from a start 10 % away); it must
lie at the closed form f0 = 1/(2πRC) of the matched twin-T (a classical
result, from memory; e.g. Horowitz & Hill, The Art of Electronics). The
scenario and numbers are invented.

Prints the results; with `--json`, the sheet's cells as {cell: [re, im]}
in SI units, which tests/demo_verifiers.rs compares with ohmsheet's."""
import json
import math
import sys

import mpmath
import numpy as np

R = 15.8e3
C = 200e-9
VS = 1.0
RS = 1e3
RL = 1e6
F = 50.0
PRE, LP, HP, OUT = 0, 1, 2, 3


def nodal(w, lib):
    """The nodal admittance matrix and the injected currents at ω = w,
    in numpy (lib = "np") or mpmath (lib = "mp") numbers."""
    j = 1j if lib == "np" else mpmath.mpc(0, 1)
    y = [[0 * j] * 4 for _ in range(4)]
    i = [0 * j] * 4

    def series(a, b, adm):
        y[a][a] += adm
        y[b][b] += adm
        y[a][b] -= adm
        y[b][a] -= adm

    def shunt(a, adm):
        y[a][a] += adm

    one = 1 if lib == "np" else mpmath.mpf(1)
    r, c = one * R, one * C
    shunt(PRE, 1 / (one * RS))
    i[PRE] += one * VS / RS
    series(PRE, LP, 1 / r)
    series(LP, OUT, 1 / r)
    shunt(LP, j * w * 2 * c)
    series(PRE, HP, j * w * c)
    series(HP, OUT, j * w * c)
    shunt(HP, 1 / (r / 2))
    shunt(OUT, 1 / (one * RL))
    return y, i


def at(f):
    y, i = nodal(2 * math.pi * f, "np")
    y = np.array(y, dtype=complex)
    v = np.linalg.solve(y, np.array(i, dtype=complex))
    return y, v


def vout_mp(w):
    y, i = nodal(w, "mp")
    return mpmath.lu_solve(mpmath.matrix(y), mpmath.matrix(i))[OUT]


def results():
    y, v = at(F)
    h = v[OUT] / VS
    i_es = (VS - v[PRE]) / RS
    zout = np.linalg.inv(y)[OUT, OUT]
    return {
        "f0": complex(1 / (2 * math.pi * R * C)),
        "H": h,
        "H_dB": complex(20 * math.log10(abs(h))),
        "Vpre": v[PRE],
        "Zin": v[PRE] / i_es,
        "Zout": zout,
    }


def null():
    mpmath.mp.dps = 40
    w0 = 1 / (2 * mpmath.pi * R * C)
    # The complex output voltage vanishes at the null: a root in ω.
    w = mpmath.findroot(lambda x: vout_mp(x), 2 * mpmath.pi * w0 * mpmath.mpf("1.1"))
    return w / (2 * mpmath.pi), w0


def main():
    r = results()
    fn, f0 = null()
    rel = abs(fn - f0) / f0
    assert rel < mpmath.mpf("1e-20"), f"null at {fn} Hz, closed form {f0} Hz"
    assert abs(mpmath.im(fn)) < mpmath.mpf("1e-20") * f0, "the null is at a real frequency"
    if "--json" in sys.argv:
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
        return
    for k, v in r.items():
        print(f"{k:6} {complex(v):.10g}")
    print(f"null   {mpmath.nstr(mpmath.re(fn), 15)} Hz (mpmath findroot), closed form {mpmath.nstr(f0, 15)} Hz, "
          f"relative difference {mpmath.nstr(rel, 3)}")


if __name__ == "__main__":
    main()
