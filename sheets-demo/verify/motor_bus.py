#!/usr/bin/env python3
"""Independent check of sheets-demo/motor-bus-thevenin.ohm with cmath."""
import cmath
import math

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
print("Zth", Zth)
print("|Vth|", abs(Vth))
print("Ifault kA", abs(Vth / Zth) / 1e3)
