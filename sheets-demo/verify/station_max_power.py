#!/usr/bin/env python3
"""Independent check of sheets-demo/station-max-power.ohm with cmath."""
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
print("Zth", Zth)
print("Pmax W", Pmax)
print("Pheater W", abs(Ih) ** 2 * Rh)
