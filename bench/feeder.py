"""The benchmark feeder (bench/feeder.ohm) as a user would otherwise write it
in Python: a plain loop with cmath, and vectorised with numpy.

    python bench/feeder.py gen CASES.csv N          write N cases
    python bench/feeder.py loop N                   plain loop, in memory
    python bench/feeder.py numpy N                  numpy, in memory
    python bench/feeder.py loop-csv CASES.csv OUT.csv [LIMIT]
                                                    plain loop, CSV to CSV
    python bench/feeder.py check CASES.csv RESULTS.csv [LIMIT]
                                                    compare ohmsheet's results
                                                    with cmath's

Timings are printed as one JSON object per line. In-memory runs report the
thread's CPU time (waiting for a core on a shared machine does not count);
CSV runs report wall-clock and CPU time.
"""

import cmath
import csv
import json
import math
import sys
import time

W = 2 * math.pi * 60.0
ZSRC = complex(0.05, 0.8)
ZL = complex(0.19e-3, 0.38e-3)  # Ω per metre
ZT = complex(0.6, 4.8)


def par(a, b):
    return a * b / (a + b)


ZMAG = par(40e3, 1j * W * 95.0)

# The computed cells of the sheet, in sheet order, and whether each is real.
OUTPUTS = [
    ("w", "rad/s", True), ("Vs", "V", False), ("Zline", "Ω", False), ("Zload", "Ω", False),
    ("Zcap", "Ω", False), ("Zshunt", "Ω", False), ("Zmag", "Ω", False), ("Zsec", "Ω", False),
    ("Zbus", "Ω", False), ("Ztot", "Ω", False), ("I", "A", False), ("Vbus", "V", False),
    ("Isec", "A", False), ("Vload", "V", False), ("Iload", "A", False), ("Icap", "A", False),
    ("Ssrc", "VA", False), ("Sload", "VA", False), ("Qcap", "var", True), ("Ploss", "W", True),
    ("pf_src", "", True), ("pf_load", "", True), ("Vdrop", "%", True), ("eff", "%", True),
]
HEADER = ["Vmag [kV]", "Vang [°]", "len [km]", "Rload [Ω]", "Lload [mH]", "Ccap [µF]"]
# Column units to SI.
SCALE = [1e3, math.pi / 180.0, 1e3, 1.0, 1e-3, 1e-6]


def case(vmag, vang, length, rload, lload, ccap):
    vs = cmath.rect(vmag, vang)
    zline = ZL * length
    zload = complex(rload, W * lload)
    zcap = 1 / (1j * W * ccap)
    zshunt = par(zload, zcap)
    zsec = ZT + zshunt
    zbus = par(ZMAG, zsec)
    ztot = ZSRC + zline + zbus
    i = vs / ztot
    vbus = i * zbus
    isec = vbus / zsec
    vload = isec * zshunt
    iload = vload / zload
    icap = vload / zcap
    ssrc = vs * i.conjugate()
    sload = vload * iload.conjugate()
    qcap = (vload * icap.conjugate()).imag
    ploss = ssrc.real - sload.real
    pf_src = ssrc.real / abs(ssrc)
    pf_load = sload.real / abs(sload)
    avs = abs(vs)
    vdrop = (avs - abs(vload)) / avs
    eff = sload.real / ssrc.real
    return (W, vs, zline, zload, zcap, zshunt, ZMAG, zsec, zbus, ztot, i, vbus, isec, vload,
            iload, icap, ssrc, sload, qcap, ploss, pf_src, pf_load, vdrop, eff)


def inputs(n, seed=1):
    """Cases over the same ranges as the Rust benchmark, in SI units."""
    import numpy as np
    rng = np.random.default_rng(seed)
    u = rng.random((6, n))
    return [
        7200.0 + 1200.0 * u[0],
        np.radians(-5.0 + 10.0 * u[1]),
        500.0 + 11500.0 * u[2],
        20.0 + 100.0 * u[3],
        0.010 + 0.140 * u[4],
        2e-6 + 28e-6 * u[5],
    ]


def emit(**kw):
    print(json.dumps(kw), flush=True)


def cmd_gen(path, n):
    import numpy as np
    cols = inputs(n)
    table = np.column_stack([c / s for c, s in zip(cols, SCALE)])
    with open(path, "w", encoding="utf-8", newline="") as f:
        f.write(",".join(HEADER) + "\n")
        np.savetxt(f, table, fmt="%.9g", delimiter=",")


def cmd_loop(n):
    cols = [c.tolist() for c in inputs(n)]
    acc = [0.0] * len(OUTPUTS)
    t0 = time.thread_time()
    for args in zip(*cols):
        out = case(*args)
        for k, z in enumerate(out):
            acc[k] += z.real + z.imag
    dt = time.thread_time() - t0
    emit(variant="python_loop", cases=n, ns_per_case=dt * 1e9 / n, checksum=sum(acc))


def cmd_numpy(n, repeats=5):
    import numpy as np
    vmag, vang, length, rload, lload, ccap = inputs(n)

    def run():
        vs = vmag * np.exp(1j * vang)
        zline = ZL * length
        zload = rload + 1j * (W * lload)
        zcap = 1 / (1j * W * ccap)
        zshunt = zload * zcap / (zload + zcap)
        zsec = ZT + zshunt
        zbus = ZMAG * zsec / (ZMAG + zsec)
        ztot = ZSRC + zline + zbus
        i = vs / ztot
        vbus = i * zbus
        isec = vbus / zsec
        vload = isec * zshunt
        iload = vload / zload
        icap = vload / zcap
        ssrc = vs * np.conj(i)
        sload = vload * np.conj(iload)
        qcap = (vload * np.conj(icap)).imag
        ploss = ssrc.real - sload.real
        pf_src = ssrc.real / np.abs(ssrc)
        pf_load = sload.real / np.abs(sload)
        avs = np.abs(vs)
        vdrop = (avs - np.abs(vload)) / avs
        eff = sload.real / ssrc.real
        outs = [vs, zline, zload, zcap, zshunt, zsec, zbus, ztot, i, vbus, isec, vload, iload,
                icap, ssrc, sload, qcap, ploss, pf_src, pf_load, vdrop, eff]
        total = n * (W + ZMAG.real + ZMAG.imag)
        for o in outs:
            total += float(np.sum(o.real) + np.sum(o.imag)) if np.iscomplexobj(o) else float(np.sum(o))
        return total
    times = []
    for _ in range(repeats):
        t0 = time.thread_time()
        check = run()
        times.append(time.thread_time() - t0)
    times.sort()
    emit(variant="numpy", cases=n, ns_per_case=times[len(times) // 2] * 1e9 / n, checksum=check)


def fmt_row(args, out):
    row = []
    for (name, unit, real), z in zip(OUTPUTS, out):
        s = 0.01 if unit == "%" else 1.0
        if real:
            row.append(repr(z / s) if not isinstance(z, complex) else repr(z.real / s))
        else:
            row.append(repr(z.real / s))
            row.append(repr(z.imag / s))
    return row


def out_header():
    h = list(HEADER)
    for name, unit, real in OUTPUTS:
        u = f" [{unit}]" if unit else ""
        if real:
            h.append(f"{name}{u}")
        else:
            h.append(f"{name}.re{u}")
            h.append(f"{name}.im{u}")
    return h


def cmd_loop_csv(cases, out, limit=None):
    t0, c0 = time.perf_counter(), time.process_time()
    n = 0
    with open(cases, encoding="utf-8", newline="") as fi, open(out, "w", encoding="utf-8", newline="") as fo:
        r = csv.reader(fi)
        w = csv.writer(fo, lineterminator="\n")
        next(r)
        w.writerow(out_header())
        for rec in r:
            if limit is not None and n >= limit:
                break
            args = [float(x) * s for x, s in zip(rec, SCALE)]
            w.writerow(rec + fmt_row(args, case(*args)))
            n += 1
    wall, cpu = time.perf_counter() - t0, time.process_time() - c0
    emit(variant="python_loop_csv", cases=n, ns_per_case=wall * 1e9 / n, cpu_ns_per_case=cpu * 1e9 / n)


def cmd_check(cases, results, limit=1000):
    """ohmsheet's batch results against cmath, value by value."""
    worst = 0.0
    n = 0
    with open(cases, encoding="utf-8", newline="") as fc, open(results, encoding="utf-8", newline="") as fr:
        rc, rr = csv.reader(fc), csv.reader(fr)
        next(rc)
        header = next(rr)
        assert header == out_header(), f"header {header} != {out_header()}"
        for rec, res in zip(rc, rr):
            if n >= limit:
                break
            assert res[:6] == rec, "case columns echoed"
            args = [float(x) * s for x, s in zip(rec, SCALE)]
            want = [float(x) for x in fmt_row(args, case(*args))]
            got = [float(x) for x in res[6:]]
            k = 0
            for _, _, real in OUTPUTS:
                # a complex value is compared as a whole: |difference| / |value|
                w = 1 if real else 2
                d = math.hypot(*(a - b for a, b in zip(want[k:k + w], got[k:k + w])))
                m = math.hypot(*want[k:k + w])
                worst = max(worst, d / max(m, 1e-300))
                k += w
            n += 1
    emit(variant="check", rows=n, max_rel_diff=worst)
    if worst > 1e-9:
        sys.exit(f"ohmsheet and cmath differ by {worst:e}")


def main(argv):
    cmd = argv[1]
    if cmd == "gen":
        cmd_gen(argv[2], int(argv[3]))
    elif cmd == "loop":
        cmd_loop(int(argv[2]))
    elif cmd == "numpy":
        cmd_numpy(int(argv[2]))
    elif cmd == "loop-csv":
        cmd_loop_csv(argv[2], argv[3], int(argv[4]) if len(argv) > 4 else None)
    elif cmd == "check":
        cmd_check(argv[2], argv[3], int(argv[4]) if len(argv) > 4 else 1000)
    else:
        sys.exit(__doc__)


if __name__ == "__main__":
    main(sys.argv)
