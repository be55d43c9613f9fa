#!/usr/bin/env python3
"""Spread benchmark, side by side in one run (see benches/spread.rs):

  * 1,000,000 Monte Carlo samples of the benchmark feeder with six
    toleranced inputs (bench/feeder_spread.ohm), every computed cell
    summarised: ohmsheet on every core and on one thread, beside the same
    sampling and summary written with numpy (bench/spread.py), run in
    turns; the means and standard deviations of the two sides must agree
    within their sampling error;
  * sensitivities of every computed cell to twenty toleranced inputs
    (bench/feeder_tol20.ohm).

Usage (from the repository root):

    python3 bench/spread_run.py [--samples 1000000] [--repeats 5]

numpy is installed into bench/.venv from bench/requirements.txt (as for
bench/run.py). Prints JSON lines as they come (stderr) and markdown tables
(stdout). Not part of `cargo test`.
"""

import argparse
import datetime
import math
import os
import statistics
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from run import PY, ROOT, bench_exe, bench_lines, ensure_venv, log  # noqa: E402


def lines(cmd):
    return bench_lines(cmd, hide=("stats",))


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--samples", type=int, default=1_000_000)
    ap.add_argument("--repeats", type=int, default=5)
    a = ap.parse_args()
    ensure_venv()
    exe = bench_exe("spread")
    load = os.getloadavg()
    # In turns: one run of each side per round, so drift hits both.
    ours, ours1, npy = [], [], []
    for r in range(a.repeats):
        rust = lines([exe, "mc", str(a.samples), "1"])
        ours.append(rust[0])
        ours1.append(rust[1])
        npy.append(lines([PY, "bench/spread.py", str(a.samples), str(r + 1)])[0])
    # The two sides sample independently: each cell's mean agrees within
    # five standard errors (sd/√N of each side), and the standard
    # deviations within 5 %.
    for (n1, m1, s1), (n2, m2, s2) in zip(ours[0]["stats"], npy[0]["stats"]):
        assert n1 == n2, (n1, n2)
        se = math.hypot(s1, s2) / math.sqrt(a.samples)
        assert abs(m1 - m2) <= 5 * se + 1e-12 * abs(m1), f"{n1}: mean {m1} against numpy's {m2}"
        assert abs(s1 - s2) <= 0.05 * max(s1, s2) + 1e-12 * abs(m1), f"{n1}: sd {s1} against numpy's {s2}"
    med = lambda rows, k: statistics.median(r[k] for r in rows)
    sens = lines([exe, "sens", "200"])

    print(f"### Monte Carlo, {a.samples:,} samples of the benchmark feeder, six toleranced inputs, "
          f"{ours[0]['cells']} cells summarised\n")
    print(f"{datetime.date.today()}, load average {load[0]:.2f} at the start; medians of {a.repeats} runs in turns.\n")
    print("| variant | threads | wall ms | CPU ms | wall × ohmsheet's |")
    print("|---|---|---|---|---|")
    base = med(ours, "wall_ms")
    for name, rows in [("ohmsheet (block evaluator)", ours), ("ohmsheet, one thread", ours1),
                       (npy[0]["variant"] + " vectorised", npy)]:
        threads = rows[0].get("threads", 1)
        print(f"| {name} | {threads} | {med(rows, 'wall_ms'):,.0f} | {med(rows, 'cpu_ms'):,.0f} | "
              f"{med(rows, 'wall_ms') / base:.2f} |")
    print(f"\nnumpy takes {med(npy, 'wall_ms') / base:.2f}× ohmsheet's wall-clock time "
          f"({med(npy, 'cpu_ms') / med(ours1, 'cpu_ms'):.2f}× the CPU time of ohmsheet on one thread).\n")
    print(f"### Sensitivities of every computed cell to {sens[0]['inputs']} toleranced inputs "
          f"({sens[0]['cells']} cells, {sens[0]['rows']} sensitivities; median of 200)\n")
    print("| threads | forward mode: wall ms | CPU ms | with compiling the sheet: wall ms | whole-program differences: wall ms |")
    print("|---|---|---|---|---|")
    for s in sens:
        print(f"| {s['threads']} | {s['wall_ms']:.2f} | {s['cpu_ms']:.2f} | {s['with_compile_wall_ms']:.2f} | "
              f"{s['differences_wall_ms']:.2f} |")


if __name__ == "__main__":
    main()
