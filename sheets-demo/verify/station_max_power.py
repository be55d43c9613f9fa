#!/usr/bin/env python3
"""Independent check of sheets-demo/station-max-power.ohm with cmath: the
Thevenin equivalent of the transformer and line with the station's own
load across the end, the largest power a load can take from it,
|Vth|²/(4·Rth), and what a 3 kW heater takes.

With `--json`, the values as {cell: [re, im]} in SI units, which
tests/demo_verifiers.rs compares with ohmsheet's results for the sheet."""
import json
import sys


def station_max_power():
    Vs = 240 + 0j
    Zt = complex(0.08, 0.25)
    Zline = 2 * complex(0.55, 0.35) * 1.8
    Zsh = 40
    Zser = Zt + Zline
    Zth = Zser * Zsh / (Zser + Zsh)
    Vth = Vs * Zsh / (Zser + Zsh)
    Pmax = abs(Vth) ** 2 / (4 * Zth.real)
    Rh = 240**2 / 3000
    Ih = Vth / (Zth + Rh)
    Pheater = abs(Ih) ** 2 * Rh
    return {
        "Zline": Zline,
        "Zth": Zth,
        "Vth": Vth,
        "Zmatch": Zth.conjugate(),
        "Pmax": Pmax,
        "Rh": Rh,
        "Ih": Ih,
        "Pheater": Pheater,
        "share": Pheater / Pmax,
    }


if __name__ == "__main__":
    r = station_max_power()
    if "--json" in sys.argv:
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        print("Zth", r["Zth"])
        print("Pmax W", r["Pmax"])
        print("Pheater W", r["Pheater"])
