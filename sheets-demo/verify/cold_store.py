#!/usr/bin/env python3
"""Independent check of sheets-demo/unbalanced-cold-store.ohm with Python's cmath/math,
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


def cold_store():
    V = 400.0
    a = cmath.rect(1, 2 * math.pi / 3)
    # positive sequence, Vab at 30°
    Vab = cmath.rect(V, math.radians(30))
    Vbc = Vab * a * a
    Vca = Vab * a
    Zab = complex(14.0, 6.5)
    Zbc = complex(22.0, 11.0)
    Zca = complex(9.5, 2.0)
    Iab, Ibc, Ica = Vab / Zab, Vbc / Zbc, Vca / Zca
    Ia, Ib, Ic = Iab - Ica, Ibc - Iab, Ica - Ibc
    I1 = (Ia + a * Ib + a * a * Ic) / 3
    I2 = (Ia + a * a * Ib + a * Ic) / 3
    for n, x in [("Ia", Ia), ("Ib", Ib), ("Ic", Ic), ("I1", I1), ("I2", I2)]:
        print(f"{n} = {abs(x):.6g} A at {math.degrees(cmath.phase(x)):.6g}°")
    print(f"I2/I1 = {abs(I2) / abs(I1):.6g}")
    S = Vab * Iab.conjugate() + Vbc * Ibc.conjugate() + Vca * Ica.conjugate()
    print(f"S = {S.real:.6g} W + j{S.imag:.6g} var")

    return {
        "Vbc": Vbc,
        "Vca": Vca,
        "Iab": Iab,
        "Ibc": Ibc,
        "Ica": Ica,
        "Ia": Ia,
        "Ib": Ib,
        "Ic": Ic,
        "seq.pos": I1,
        "seq.neg": I2,
        "unbalance": abs(I2) / abs(I1),
        "S": S,
    }

if __name__ == "__main__":
    if "--json" in sys.argv:
        with contextlib.redirect_stdout(io.StringIO()):
            r = cold_store()
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        cold_store()
