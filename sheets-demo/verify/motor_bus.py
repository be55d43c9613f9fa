#!/usr/bin/env python3
"""Independent check of sheets-demo/motor-bus-thevenin.ohm with Python's
cmath: the utility and transformer impedances at the angle atan(X/R), the
cable, the bank's reactance V²/Q, and the Thevenin equivalent of the
source path with the bank across the bus, by voltage division.

With `--json`, the values as {cell: [re, im]} in SI units, which
tests/demo_verifiers.rs compares with ohmsheet's results for the sheet."""
import cmath
import json
import math
import sys


def motor_bus():
    Vll = 480.0
    Ssc = 250e6
    St = 1.5e6
    Vph = Vll / math.sqrt(3)
    Zu = cmath.rect(Vll**2 / Ssc, math.atan(10))
    Zt = cmath.rect(0.0575 * Vll**2 / St, math.atan(6))
    Zc = complex(0.105, 0.092) / 1000 * 45
    Zsrc = Zu + Zt + Zc
    Zcap = -1j * Vll**2 / 150e3
    Zth = Zsrc * Zcap / (Zsrc + Zcap)
    Vth = Vph * Zcap / (Zsrc + Zcap)
    Ifault = abs(Vth / Zth)
    return {
        "Zu": Zu,
        "Zt": Zt,
        "Zc": Zc,
        "Zsrc": Zsrc,
        "Zcap": Zcap,
        "Zth": Zth,
        "Vth": Vth,
        "rise": abs(Vth) / Vph - 1,
        "Ifault": Ifault,
        "Sfault": math.sqrt(3) * Vll * Ifault,
    }


if __name__ == "__main__":
    r = motor_bus()
    if "--json" in sys.argv:
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        print("Zth", r["Zth"])
        print("|Vth|", abs(r["Vth"]))
        print("Ifault kA", r["Ifault"] / 1e3)
