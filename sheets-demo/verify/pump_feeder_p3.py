#!/usr/bin/env python3
"""Independent check of sheets-demo/pump-feeder-p3.ohm with Python's cmath/math,
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

SQ3 = math.sqrt(3)


def pump_feeder_p3():
    v_ll, s_sc, xr, c_max = 400.0, 12e6, 5.0, 1.05
    p_out, eta, pf_fl, k_start, pf_start = 75e3, 0.94, 0.87, 6.8, 0.3
    length_km = 0.16
    z_km = complex(0.247, 0.0756)  # lib/cables.ohm, 3C 95 mm²
    i_rating = 236.0

    v_ph = v_ll / SQ3
    z_src = cmath.rect(v_ll ** 2 / s_sc, math.atan(xr))
    p_in = p_out / eta
    i_fl = p_in / (SQ3 * v_ll * pf_fl)
    i_run = cmath.rect(i_fl, -math.acos(pf_fl))
    z_cab = z_km * length_km
    v_mot = v_ph - i_run * z_cab
    drop = (v_ph - abs(v_mot)) / v_ph
    sin_phi = math.sqrt(1 - pf_fl ** 2)
    drop_est = i_fl * (z_cab.real * pf_fl + z_cab.imag * sin_phi) / v_ph
    i_st = cmath.rect(k_start * i_fl, -math.acos(pf_start))
    v_mot_st = v_ph - i_st * (z_src + z_cab)
    dip_st = (v_ph - abs(v_mot_st)) / v_ph
    i_sc = c_max * v_ph / abs(z_src + z_cab)

    print(f"|Z_src|   = {abs(z_src) * 1e3:.6g} mΩ")
    print(f"I_fl      = {i_fl:.6g} A")
    print(f"drop      = {drop * 100:.6g} %")
    print(f"drop_est  = {drop_est * 100:.6g} %")
    print(f"dip_st    = {dip_st * 100:.6g} %")
    print(f"I_sc      = {i_sc / 1e3:.6g} kA")
    print(f"load      = {i_fl / i_rating * 100:.6g} %")

    return {
        "V_ph": v_ph,
        "Z_src": z_src,
        "P_in": p_in,
        "I_fl": i_fl,
        "I_run": i_run,
        "Z_cab": z_cab,
        "V_mot": v_mot,
        "drop": drop,
        "drop_est": drop_est,
        "I_st": i_st,
        "V_mot_st": v_mot_st,
        "dip_st": dip_st,
        "I_sc": i_sc,
        "load_frac": i_fl / i_rating,
    }

if __name__ == "__main__":
    if "--json" in sys.argv:
        with contextlib.redirect_stdout(io.StringIO()):
            r = pump_feeder_p3()
        print(json.dumps({k: [complex(v).real, complex(v).imag] for k, v in r.items()}))
    else:
        pump_feeder_p3()
