#!/usr/bin/env python3
"""Independent check of sheets-demo/paper-mill-bank-spread.ohm with numpy,
written from the plain circuit (not from ohmsheet): the utility and the
transformer as series impedances V²/S·(1 + jX/R)/√(1 + (X/R)²) referred
to 6.6 kV, the load and the bank as constant impedances V²/conj(S), the
bus voltage by the voltage divider, the bank's current V/Z, the fault
level V²/|Zs| and the resonance order √(Sbus/Qc) (common practice). The
scenario and numbers are invented.

Modes:
  (none)         print the stated values, for a reader;
  --json         the stated values as {cell: [re, im]} in SI units, which
                 tests/demo_verifiers.rs compares with ohmsheet's values;
  --spread FILE  check the spread section of ohmsheet's JSON report FILE:
    * worst case against brute force over every corner and a grid of
      9 points per input across the tolerance box (6,561 points), and the
      point ohmsheet names for each extreme re-evaluated here;
    * Monte Carlo against our own sampling (numpy's PCG64, a different
      generator, 400,000 samples): means within 5 standard errors,
      standard deviations within 5 standard errors of s (from the
      samples' fourth moment), each end of the 95 % coverage interval at
      a share of our samples within 5 binomial standard errors of 2.5 %
      and 97.5 % (JCGM 101:2008 §7.7 defines the interval);
    * sensitivities against central differences (step 1e-6 in the
      relative change) and the first-order standard deviation of the law
      of propagation of uncertainty, JCGM 100:2008 §5.1.2, with u of a
      uniform band = width/√12 (§4.3.7) and of a normal one = σ.
  Exits 1, listing the disagreements, when any check fails."""
import json
import math
import sys

import numpy as np

VN = 6.6e3
VS = VN / math.sqrt(3)
XRU, ST, XRT, PF = 10.0, 12e6, 15.0, 0.85
STATED = {"Ssc": 350e6, "Zt": 0.08, "Qc": 3e6, "Sl": 7e6}
# The tolerance box as relative changes of each input: (low, high), and
# the law: uniform, or normal with σ = half-width / K.
BOX = {"Ssc": (-0.2, 0.2), "Zt": (-0.075, 0.075), "Qc": (0.0, 0.1), "Sl": (-0.2, 0.2)}
NORMAL_K = {"Ssc": 2.0}
ORDER = ["Ssc", "Zt", "Qc", "Sl"]
REAL = {"lift", "Sbus"}


def cells(ssc, zt, qc, sl):
    """Every computed cell, for arrays (or scalars) of the inputs."""
    zu = VN**2 / ssc * (1 + 1j * XRU) / math.sqrt(1 + XRU**2)
    ztx = zt * VN**2 / ST * (1 + 1j * XRT) / math.sqrt(1 + XRT**2)
    zs = zu + ztx
    s_load = sl * (PF + 1j * math.sqrt(1 - PF**2))
    zl = VN**2 / np.conj(s_load)
    zc = VN**2 / np.conj(-1j * qc)
    zbus = zl * zc / (zl + zc)
    vbus = VS * zbus / (zs + zbus)
    vnb = VS * zl / (zs + zl)
    lift = (np.abs(vbus) - np.abs(vnb)) / VS
    sbus = VN**2 / np.abs(zs)
    return {
        "Zu": zu,
        "Ztx": ztx,
        "Zs": zs,
        "Zl": zl,
        "Zc": zc,
        "Zbus": zbus,
        "Vbus": vbus,
        "Vnb": vnb,
        "lift": lift + 0j,
        "Ibank": vbus / zc,
        "Sbus": sbus + 0j,
        "Ifault": VS / zs,
        "h": np.sqrt(sbus / qc) + 0j,
    }


def measure(name, z):
    return np.real(z) if name in REAL else np.abs(z)


def at(rel):
    """The inputs at relative changes `rel` (dict of arrays or scalars)."""
    return [STATED[k] * (1 + np.asarray(rel[k], dtype=float)) for k in ORDER]


def check_worst(sec, bad):
    grids = [np.linspace(BOX[k][0], BOX[k][1], 9) for k in ORDER]
    mesh = np.meshgrid(*grids, indexing="ij")
    rel = {k: m.ravel() for k, m in zip(ORDER, mesh)}
    vals = cells(*at(rel))
    for c in sec["worst_case"]["cells"]:
        name = c["name"]
        if name not in vals:
            continue
        m = measure(name, vals[name])
        lo, hi = float(m.min()), float(m.max())
        span = hi - lo
        for key, ref, sign in (("min", lo, 1), ("max", hi, -1)):
            got = c[key]["value"]
            # ohmsheet searches the whole box, so it may go past the grid's
            # extreme, but never the wrong way, and not by more than the
            # grid's own spacing allows (a fraction of the span).
            if sign * (got - ref) > 1e-9 * abs(ref) or abs(got - ref) > 0.02 * span + 1e-12:
                bad.append(f"worst {name} {key}: ohmsheet {got!r}, brute force {ref!r}")
            # The point it names gives that value.
            inputs = {i["name"]: i["re"] for i in c[key]["inputs"]}
            again = measure(name, cells(*[inputs[k] for k in ORDER])[name])
            if abs(float(again) - got) > 1e-9 * abs(got):
                bad.append(f"worst {name} {key}: its point gives {float(again)!r}, not {got!r}")


def check_monte_carlo(sec, bad):
    n_np = 400_000
    rng = np.random.Generator(np.random.PCG64(20261203))
    rel = {}
    for k in ORDER:
        a, b = BOX[k]
        if k in NORMAL_K:
            rel[k] = rng.normal(0.0, b / NORMAL_K[k], n_np)
        else:
            rel[k] = rng.uniform(a, b, n_np)
    vals = cells(*at(rel))
    mc = sec["monte_carlo"]
    n_o = mc["samples"]
    for c in mc["cells"]:
        name = c["name"]
        if name not in vals:
            continue
        x = measure(name, vals[name])
        mean, sd = float(x.mean()), float(x.std(ddof=1))
        if sd == 0.0:
            continue
        se_mean = sd * math.sqrt(1 / n_o + 1 / n_np)
        if abs(c["mean"] - mean) > 5 * se_mean:
            bad.append(f"monte carlo {name} mean: ohmsheet {c['mean']!r}, numpy {mean!r} (5 SE = {5 * se_mean:.3g})")
        m4 = float(((x - mean) ** 4).mean())
        se_var = math.sqrt(max(m4 - sd**4, 0.0) * (1 / n_o + 1 / n_np))
        se_sd = se_var / (2 * sd)
        if abs(c["std_dev"] - sd) > 5 * se_sd:
            bad.append(f"monte carlo {name} std dev: ohmsheet {c['std_dev']!r}, numpy {sd!r} (5 SE = {5 * se_sd:.3g})")
        for end, p in zip(c["coverage_interval"], (0.025, 0.975)):
            share = float((x <= end).mean())
            se = math.sqrt(p * (1 - p) * (1 / n_o + 1 / n_np))
            if abs(share - p) > 5 * se:
                bad.append(f"monte carlo {name}: {share:.4f} of numpy's samples lie below the interval's end {end!r}, not {p}")
        counts = c["histogram"]["counts"]
        if sum(counts) != n_o - c["undefined"]:
            bad.append(f"monte carlo {name}: the histogram holds {sum(counts)} of {n_o} samples")


def check_sensitivities(sec, bad):
    h = 1e-6
    zero = {k: 0.0 for k in ORDER}
    nominal = cells(*at(zero))
    for c in sec["sensitivities"]["cells"]:
        name = c["name"]
        if name not in nominal:
            continue
        y0 = float(measure(name, nominal[name]))
        var = 0.0
        for row in c["inputs"]:
            k = row["input"]
            up, down = dict(zero), dict(zero)
            up[k], down[k] = h, -h
            yu = float(measure(name, cells(*at(up))[name]))
            yd = float(measure(name, cells(*at(down))[name]))
            # % of the cell per % of the input.
            s = (yu - yd) / (2 * h) / y0
            if abs(row["magnitude"] - s) > 1e-6 + 1e-5 * abs(s):
                bad.append(f"sensitivity of {name} to {k}: ohmsheet {row['magnitude']!r}, central difference {s!r}")
            a, b = BOX[k]
            u = b / NORMAL_K[k] if k in NORMAL_K else (b - a) / math.sqrt(12)
            var += (s * y0 * u) ** 2
        gum = math.sqrt(var)
        if abs(c["first_order_std_dev"] - gum) > 1e-5 * gum + 1e-12:
            bad.append(f"first-order std dev of {name}: ohmsheet {c['first_order_std_dev']!r}, here {gum!r}")


def main():
    stated = cells(*at({k: 0.0 for k in ORDER}))
    if "--json" in sys.argv:
        print(json.dumps({k: [float(np.real(v)), float(np.imag(v))] for k, v in stated.items()}))
        return 0
    if "--spread" in sys.argv:
        path = sys.argv[sys.argv.index("--spread") + 1]
        with open(path, encoding="utf-8") as f:
            report = json.load(f)
        sec = report["spread"]["data"]
        bad = []
        for part in ("worst_case", "monte_carlo", "sensitivities"):
            if part not in sec:
                bad.append(f"the report has no {part}")
        if not bad:
            check_worst(sec, bad)
            check_monte_carlo(sec, bad)
            check_sensitivities(sec, bad)
        if "qualified person" not in report["spread"]["caution"]:
            bad.append("the spread section carries no caution")
        if bad:
            print("\n".join(bad))
            return 1
        print("spread section agrees: worst case, Monte Carlo and sensitivities")
        return 0
    for k, v in stated.items():
        print(f"{k:7s} {complex(v):.6g}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
