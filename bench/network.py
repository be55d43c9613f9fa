"""The benchmark network (bench/network30.ohm) solved with numpy, for
benches/network.rs: a 5 × 6 grid of 30 nodes (an invented estate cable
grid), fed at one corner by a source behind an internal impedance, with a
capacitance from every node to ground and one load resistor.

    python bench/network.py sheet > bench/network30.ohm   write the sheet
    python bench/network.py numpy N [CHUNK]              time numpy on N cases

The cases are the same as the Rust benchmark's (a Weyl sequence, computed
with the same floating-point operations): f, Vs, Rload, Cc. For each chunk
of cases numpy assembles the stacked nodal admittance matrices (the source
as its Norton equivalent), solves them with one batched np.linalg.solve,
and computes every element's current and complex power, as the sheet does.
Timing: the thread's CPU time and the wall time, one JSON line. The
checksum (sum over cases of the node voltages' real and imaginary parts)
is printed for comparison with the Rust side.
"""

import json
import sys
import time

ROWS, COLS = 5, 6
NODES = ROWS * COLS
ALPHA = [0.6180339887498949, 0.4142135623730951, 0.7320508075688772, 0.2360679774997897]
LOAD_NODE = NODES - 1  # the far corner
CAP_NODE = 2 * COLS + 3  # a node in the middle: the varied capacitance
ZSRC = complex(0.4, 1.2)


def node(r, c):
    return r * COLS + c


def edges():
    """(a, b, Z in Ω) for every grid edge: the same invented cable sections
    as the sheet, R from 0.2 to 0.9 Ω and X from 0.5 to 1.7 Ω."""
    out = []
    k = 0
    for r in range(ROWS):
        for c in range(COLS):
            for (r2, c2) in ((r, c + 1), (r + 1, c)):
                if r2 < ROWS and c2 < COLS:
                    z = complex(round(0.2 + 0.1 * (k % 8), 1), round(0.5 + 0.2 * (k % 7), 1))
                    out.append((node(r, c), node(r2, c2), z))
                    k += 1
    return out


def caps():
    """Capacitance (F) from each node to ground, but the varied one."""
    return [(n, round(2.0 + 0.5 * (n % 5), 1) * 1e-6) for n in range(NODES) if n != CAP_NODE]


def sheet():
    out = ["# Benchmark: a 5 × 6 grid of cable sections (an invented estate), 30 nodes",
           "f = 50 Hz", "Vs = 230 V", "Rload = 20 Ω", "Cc = 10 µF",
           "network grid at f",
           f"  E1 = emf(n0, ground, Vs, {ZSRC.real} Ω + j{ZSRC.imag} Ω)"]
    for k, (a, b, z) in enumerate(edges()):
        out.append(f"  Z{k} = branch(n{a}, n{b}, {z.real:.1f} Ω + j{z.imag:.1f} Ω)")
    for n, c in caps():
        out.append(f"  C{n} = branch(n{n}, ground, {c * 1e6:.1f} µF)")
    out.append(f"  Cv = branch(n{CAP_NODE}, ground, Cc)")
    out.append(f"  RL = branch(n{LOAD_NODE}, ground, Rload)")
    out.append("end")
    return "\n".join(out) + "\n"


def inputs(np, lo, hi):
    k = np.arange(lo + 1, hi + 1, dtype=np.float64)
    u = []
    for a in ALPHA:
        x = k * a
        u.append(x - np.floor(x))
    f = 50.0 + 450.0 * u[0]
    vs = 200.0 + 40.0 * u[1]
    rl = 5.0 + 95.0 * u[2]
    cc = 1e-6 + 99e-6 * u[3]
    return f, vs, rl, cc


def run_numpy(n, chunk):
    import numpy as np

    e = edges()
    ea = np.array([a for a, _, _ in e])
    eb = np.array([b for _, b, _ in e])
    ey = np.array([1 / z for _, _, z in e])
    cn = np.array([n_ for n_, _ in caps()])
    cv = np.array([c for _, c in caps()])
    # The constant part of Y (edges), once.
    y0 = np.zeros((NODES, NODES), dtype=complex)
    for a, b, y in zip(ea, eb, ey):
        y0[a, a] += y
        y0[b, b] += y
        y0[a, b] -= y
        y0[b, a] -= y
    y0[0, 0] += 1 / ZSRC
    idx = np.arange(NODES)
    total = 0.0
    t_cpu, t_wall = time.thread_time(), time.perf_counter()
    for lo in range(0, n, chunk):
        hi = min(n, lo + chunk)
        m = hi - lo
        f, vs, rl, cc = inputs(np, lo, hi)
        w = 2 * np.pi * f
        y = np.broadcast_to(y0, (m, NODES, NODES)).copy()
        ycap = 1j * w[:, None] * cv[None, :]  # (m, caps)
        y[:, cn, cn] += ycap
        y[:, CAP_NODE, CAP_NODE] += 1j * w * cc
        y[:, LOAD_NODE, LOAD_NODE] += 1 / rl
        rhs = np.zeros((m, NODES, 1), dtype=complex)
        rhs[:, 0, 0] = vs / ZSRC
        v = np.linalg.solve(y, rhs)[:, :, 0]
        # Every element's current and power, as the sheet gives them.
        ie = (v[:, ea] - v[:, eb]) * ey
        se = (v[:, ea] - v[:, eb]) * np.conj(ie)
        ic = v[:, cn] * ycap
        sc = v[:, cn] * np.conj(ic)
        icv = v[:, CAP_NODE] * 1j * w * cc
        il = v[:, LOAD_NODE] / rl
        isrc = (vs - v[:, 0]) / ZSRC
        ssrc = v[:, 0] * np.conj(isrc)
        absorbed = se.sum(axis=1) + sc.sum(axis=1) + v[:, CAP_NODE] * np.conj(icv) + v[:, LOAD_NODE] * np.conj(il)
        total += float(v.real.sum() + v.imag.sum())
        # Keep the others alive (and cheap to reduce).
        total += 0.0 * float(ic.real.sum() + il.real.sum() + ssrc.real.sum() + absorbed.real.sum())
    del idx
    cpu, wall = time.thread_time() - t_cpu, time.perf_counter() - t_wall
    print(json.dumps({"variant": "numpy batched np.linalg.solve", "cases": n, "chunk": chunk,
                      "cpu_ns_per_case": cpu / n * 1e9, "wall_ns_per_case": wall / n * 1e9,
                      "checksum": total}))


if __name__ == "__main__":
    if sys.argv[1] == "sheet":
        sys.stdout.write(sheet())
    elif sys.argv[1] == "numpy":
        run_numpy(int(sys.argv[2]), int(sys.argv[3]) if len(sys.argv) > 3 else 10000)
    else:
        sys.exit(__doc__)
