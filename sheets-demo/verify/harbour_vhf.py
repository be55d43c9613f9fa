#!/usr/bin/env python3
"""Independent check of sheets-demo/harbour-vhf-feeder.ohm with Python's
cmath/math, written from the textbook formulas (not from ohmsheet): the
telegrapher's line γ = √((R + jωL)(G + jωC)), Zc = √((R + jωL)/(G + jωC)),
and its input impedance Zc·(ZL + Zc·tanh γℓ)/(Zc + ZL·tanh γℓ) (Pozar,
Microwave Engineering, §2.1 and §2.7 — from memory); Γ = (ZL − Z0)/(ZL + Z0),
VSWR = (1 + |Γ|)/(1 − |Γ|), return loss −20·log10|Γ|; a quarter-wave
line Z0²/ZL; an L-network for a complex load (Pozar, §5.1 — from memory); a pad's image attenuation from its circuit (the voltage
ratio into its own 50 Ω image, solved by Kirchhoff's laws); π and T
networks as two L-networks through a virtual resistance (Bowick, RF
Circuit Design, ch. 4 — from memory). The scenario and numbers are
invented.

Prints the values; with `--json`, the values as {cell: [re, im]} in SI
units, which tests/demo_verifiers.rs compares with ohmsheet's results
for the sheet."""
import cmath
import json
import math
import sys


def l_halves(r_hi, r_lo, q):
    """Series and shunt reactances of one L-section between r_hi and r_lo
    for its Q: shunt r_hi/q across the larger, series q·r_lo."""
    return q * r_lo, r_hi / q


def harbour():
    f = 157.2e6
    w = 2 * math.pi * f
    R, L, G, C = 0.12, 0.25e-6, 15e-6, 100e-12
    length = 34.0
    zs = R + 1j * w * L
    yp = G + 1j * w * C
    gamma = cmath.sqrt(zs * yp)
    if gamma.real < 0:
        gamma = -gamma
    zc = cmath.sqrt(zs / yp)
    if zc.real < 0:
        zc = -zc
    gl = gamma * length
    z_ant = complex(38, -21)
    z0 = 50.0
    t = cmath.tanh(gl)
    z_in = zc * (z_ant + zc * t) / (zc + z_ant * t)
    g_ant = (z_ant - z0) / (z_ant + z0)
    g_in = (z_in - z0) / (z_in + z0)
    a_feed = abs(cmath.exp(gl))
    loss = 20 * math.log10(a_feed)
    p_ant = 25.0 / a_feed**2 * (1 - abs(g_ant) ** 2)
    p_erp = p_ant * 10 ** (3 / 10)
    z_arm = 75.0**2 / 50.0
    z_pair = z_arm / 2
    # 6 dB π pad (shunt r1, series r2, shunt r1), terminated in its image
    # impedance √(Zopen·Zshort): there Vin/Vout = e^θ, θ the image
    # attenuation in nepers.
    r1, r2 = 150.5, 37.35
    z_open = 1 / (1 / r1 + 1 / (r2 + r1))
    z_short = 1 / (1 / r1 + 1 / r2)
    z_img = math.sqrt(z_open * z_short)
    z_out = 1 / (1 / r1 + 1 / z_img)  # the far shunt with the image load
    theta = math.log((r2 + z_out) / z_out)
    pad_db = 20 * theta / math.log(10)
    out = {
        "coax.Zc": zc,
        "coax.gamma": gamma,
        "Z_in": z_in,
        "G_ant": g_ant,
        "vswr_ant": (1 + abs(g_ant)) / (1 - abs(g_ant)),
        "rl_ant": -20 * math.log10(abs(g_ant)),
        "G_in": g_in,
        "rl_in": -20 * math.log10(abs(g_in)),
        "A_feed": a_feed,
        "loss_feed": loss,
        "P_ant": p_ant,
        "P_erp": p_erp,
        "Z_arm": z_arm,
        "Z_pair": z_pair,
        "theta": theta,
        "pad_dB": pad_db,
    }
    # L-network at the antenna, solution +1: R < R0, so the shunt is on
    # the 50 Ω side; Re 1/(R + jY) = 1/R0 gives Y = +√(R·R0 − R²), the
    # series element makes the load R + jY, the shunt cancels the rest.
    r = z_ant.real
    y = math.sqrt(r * z0 - r * r)
    b = y / (r * r + y * y)
    out.update({"mu.Xs": y - z_ant.imag, "mu.Xp": -1 / b, "mu.at_load": 0.0})
    # π and T networks, 50 Ω to 12.5 Ω, loaded Q 5.
    rs, rl, q = 50.0, 12.5, 5.0
    r_hi, r_lo = max(rs, rl), min(rs, rl)
    # π: virtual resistance below both; the section on the larger side has Q.
    rv = r_hi / (q * q + 1)
    q_s, q_l = math.sqrt(rs / rv - 1), math.sqrt(rl / rv - 1)
    xp_s, xp_l, xs = rs / q_s, rl / q_l, rv * (q_s + q_l)
    out.update({
        "p1.C1": 1 / (w * xp_s), "p1.L": xs / w, "p1.C2": 1 / (w * xp_l), "p1.Rv": rv,
        "p2.L1": xp_s / w, "p2.C": 1 / (w * xs), "p2.L2": xp_l / w, "p2.Rv": rv,
    })
    # T: virtual resistance above both; the section on the smaller side has Q.
    rv = r_lo * (q * q + 1)
    q_s, q_l = math.sqrt(rv / rs - 1), math.sqrt(rv / rl - 1)
    xs_s, xs_l, xp = q_s * rs, q_l * rl, rv / (q_s + q_l)
    out.update({
        "t1.L1": xs_s / w, "t1.C": 1 / (w * xp), "t1.L2": xs_l / w, "t1.Rv": rv,
        "t2.C1": 1 / (w * xs_s), "t2.L": xp / w, "t2.C2": 1 / (w * xs_l), "t2.Rv": rv,
    })
    return out


if __name__ == "__main__":
    r = harbour()
    if "--json" in sys.argv:
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        for k, v in r.items():
            print(f"{k} = {v:.7g}")
