"""The Monte Carlo of benches/spread.rs written with numpy: the same
sheet (bench/feeder_spread.ohm, the benchmark feeder with six toleranced
inputs), the same sampling (each input uniform over its band, every
sample independent) and the same summary of every computed cell, by
vectorised formulas.

    bench/.venv/bin/python bench/spread.py [SAMPLES] [SEED]

For every computed cell (24, as the Rust side shows them by default):
its measure (the value for a cell real by construction, the magnitude
otherwise), mean and standard deviation (divisor N − 1), the sorted
samples, the probabilistically symmetric 95 % coverage interval
(JCGM 101:2008 §7.7), the 1, 5, 50, 95, 99 % points, a 40-bin histogram,
and for a complex cell the mean and standard deviation of its angle about
the stated value's. Prints one JSON line: wall and CPU milliseconds, and
each cell's (name, mean, standard deviation) so the runner can check the
two sides agree within their sampling error.
"""

import json
import sys
import time

import numpy as np

PERCENTILES = (0.01, 0.05, 0.5, 0.95, 0.99)


def cells(u):
    """Every computed cell of bench/feeder_spread.ohm from six rows of
    uniforms on [0, 1): (name, value, real by construction)."""
    n = u.shape[1]
    band = lambda k, lo, hi: lo + (hi - lo) * u[k]
    f = 60.0
    w = 2 * np.pi * f
    vmag = 7967.0 * (1 + band(0, -0.05, 0.05))
    vang = 0.0
    vs = vmag * np.exp(1j * vang)
    zsrc = 0.05 + 0.8j
    zl = (0.19 + 0.38j) / 1000.0  # Ω/m
    length = 4200.0 * (1 + band(1, -0.10, 0.10))
    zt = (0.6 + 4.8j) * (1 + band(2, -0.075, 0.075))
    rm, lm = 40e3, 95.0
    rload = 55.0 * (1 + band(3, -0.20, 0.20))
    lload = 0.060 * (1 + band(4, -0.20, 0.20))
    ccap = 12e-6 * (1 + band(5, 0.0, 0.10))

    par = lambda a, b: a * b / (a + b)
    zline = zl * length
    zload = rload + 1j * w * lload
    zcap = 1 / (1j * w * ccap)
    zshunt = par(zload, zcap)
    zmag = par(rm, 1j * w * lm)
    zsec = zt + zshunt
    zbus = par(zmag, zsec)
    ztot = zsrc + zline + zbus
    i = vs / ztot
    vbus = i * zbus
    isec = vbus / zsec
    vload = isec * zshunt
    iload = vload / zload
    icap = vload / zcap
    ssrc = vs * np.conj(i)
    sload = vload * np.conj(iload)
    qcap = np.imag(vload * np.conj(icap))
    ploss = np.real(ssrc) - np.real(sload)
    pf_src = np.real(ssrc) / np.abs(ssrc)
    pf_load = np.real(sload) / np.abs(sload)
    vdrop = (np.abs(vs) - np.abs(vload)) / np.abs(vs)
    eff = np.real(sload) / np.real(ssrc)
    full = lambda x: np.full(n, x)
    return [
        ("w", full(w), True), ("Vs", vs, False), ("Zline", zline, False), ("Zload", zload, False),
        ("Zcap", zcap, False), ("Zshunt", zshunt, False), ("Zmag", full(zmag), False), ("Zsec", zsec, False),
        ("Zbus", zbus, False), ("Ztot", ztot, False), ("I", i, False), ("Vbus", vbus, False),
        ("Isec", isec, False), ("Vload", vload, False), ("Iload", iload, False), ("Icap", icap, False),
        ("Ssrc", ssrc, False), ("Sload", sload, False), ("Qcap", qcap, True), ("Ploss", ploss, True),
        ("pf_src", pf_src, True), ("pf_load", pf_load, True), ("Vdrop", vdrop, True), ("eff", eff, True),
    ]


def nominal():
    """Each cell at the stated values (every offset zero; Ccap at its
    stated 12 µF, the low end of its −0/+10 % band)."""
    u = np.array([[0.5], [0.5], [0.5], [0.5], [0.5], [0.0]])
    return {name: complex(v[0]) for name, v, _ in cells(u)}


def coverage(sorted_x, p=0.95):
    m = len(sorted_x)
    pm = p * m
    q = int(pm) if pm == int(pm) else int(pm + 0.5)
    q = min(q, m)
    r = max((m - q + 1) // 2, 1)
    return sorted_x[r - 1], sorted_x[min(r + q, m) - 1]


def summarise(z, real, nom, bins=40):
    x = np.real(z) if real else np.abs(z)
    x = x[np.isfinite(x)]
    mean, sd = x.mean(), x.std(ddof=1)
    s = np.sort(x)
    m = len(s)
    pct = [s[min(max(int(np.ceil(p * m)), 1), m) - 1] for p in PERCENTILES]
    lo, hi = coverage(s)
    if s[-1] > s[0]:
        k = np.minimum(((s - s[0]) / ((s[-1] - s[0]) / bins)).astype(np.int64), bins - 1)
        counts = np.bincount(k, minlength=bins)
    else:
        counts = np.array([m])
    ang = None
    if not real:
        a = np.angle(z / nom) if nom != 0 else np.angle(z)
        ang = (a.mean(), a.std(ddof=1))
    return mean, sd, pct, (lo, hi), counts, ang


def main():
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000
    seed = int(sys.argv[2]) if len(sys.argv) > 2 else 1
    nom = nominal()
    t0, c0 = time.perf_counter(), time.process_time()
    u = np.random.default_rng(seed).random((6, n))
    stats = []
    for name, z, real in cells(u):
        mean, sd, *_ = summarise(z, real, nom[name])
        stats.append((name, float(mean), float(sd)))
    wall, cpu = (time.perf_counter() - t0) * 1e3, (time.process_time() - c0) * 1e3
    print(json.dumps({"what": "monte_carlo", "variant": f"numpy {np.__version__}", "samples": n,
                      "wall_ms": wall, "cpu_ms": cpu, "stats": stats}))


if __name__ == "__main__":
    main()
