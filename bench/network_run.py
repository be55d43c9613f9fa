#!/usr/bin/env python3
"""Network benchmark, side by side in one run (see benches/network.rs):

  * bench/network30.ohm (a 30-node grid) over CASES cases in memory through
    ohmsheet's block evaluator on all cores, beside the same network solved
    case by case in hand-written Rust with faer, and beside numpy's batched
    np.linalg.solve over stacked matrices (bench/network.py) on the same
    cases — the checksums of the three must agree;
  * a generated mesh of 1,250 to 6,000 nodes: compile and solve once, and
    the peak memory;
  * faer's dense and sparse LU on one grid network of growing size;
  * a session edit of one element value in a 200-node network.

Usage (from the repository root):

    python3 bench/network_run.py [--cases 1000000] [--repeats 3]

Prints JSON lines as they come (stderr) and a markdown table (stdout).
Not part of `cargo test`.
"""

import argparse
import os
import statistics
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from run import ROOT, bench_exe, log  # noqa: E402
from run import bench_lines as lines  # noqa: E402


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--cases", type=int, default=1_000_000)
    ap.add_argument("--repeats", type=int, default=3)
    a = ap.parse_args()
    exe = bench_exe("network")
    batch = lines([exe, "batch", str(a.cases), str(a.repeats)])
    runs = [lines([sys.executable, "bench/network.py", "numpy", str(a.cases)])[0] for _ in range(a.repeats)]
    import numpy
    npy = {
        "variant": f"numpy {numpy.__version__} batched np.linalg.solve (chunks of 10,000)",
        "threads": 1,
        "wall_ns_per_case": statistics.median(r["wall_ns_per_case"] for r in runs),
        "cpu_ns_per_case": statistics.median(r["cpu_ns_per_case"] for r in runs),
        "checksum": runs[0]["checksum"],
    }
    ours = batch[0]
    for r in batch[:2] + [npy]:
        rel = abs(r["checksum"] - ours["checksum"]) / abs(ours["checksum"])
        assert rel < 1e-9, f"{r['variant']}: checksum {r['checksum']} vs {ours['checksum']}"
    meshes = lines([exe, "meshes"])
    cross = lines([exe, "crossover"])
    sess = lines([exe, "session"])

    print(f"### 30-node network, {a.cases:,} cases in memory (medians of {a.repeats})\n")
    print("| variant | threads | wall ns/case | CPU ns/case | CPU × ohmsheet's (same threads) |")
    print("|---|---|---|---|---|")
    for r in batch + [npy]:
        ref = ours if r["threads"] != 1 else batch[2]
        print(f"| {r['variant']} | {r['threads']} | {r['wall_ns_per_case']:,.0f} | {r['cpu_ns_per_case']:,.0f} | "
              f"{r['cpu_ns_per_case'] / ref['cpu_ns_per_case']:.2f} |")
    print(f"\nWall-clock: numpy takes {npy['wall_ns_per_case'] / ours['wall_ns_per_case']:.2f}× ohmsheet's time; "
          f"ohmsheet takes {ours['wall_ns_per_case'] / batch[1]['wall_ns_per_case']:.2f}× the hand-written Rust's "
          f"(CPU: {ours['cpu_ns_per_case'] / batch[1]['cpu_ns_per_case']:.2f}×; one thread: "
          f"{batch[2]['cpu_ns_per_case'] / batch[3]['cpu_ns_per_case']:.2f}×).\n")
    print("### Generated mesh: compile and solve once (median of 3 processes)\n")
    print("| nodes | elements | compile ms | solve ms | total CPU ms | wall ms | peak RSS MiB |")
    print("|---|---|---|---|---|---|---|")
    for m in meshes:
        print(f"| {m['nodes']:,} | {m['elements']:,} | {m['compile_ms']:.0f} | {m['solve_ms']:.0f} | "
              f"{m['total_cpu_ms']:.0f} | {m['wall_ms']:.0f} | {m['peak_rss_mib']:.0f} |")
    print("\n### One solve, dense against sparse LU (µs, median)\n")
    print("| nodes | dense | sparse |")
    print("|---|---|---|")
    for c in cross:
        print(f"| {c['nodes']} | {c['dense_us']:,.0f} | {c['sparse_us']:,.0f} |")
    print("\n### Session edit of one element value, 200-node network\n")
    print("| edit | median ms |")
    print("|---|---|")
    for s in sess:
        print(f"| {s['what']} | {s['median_ms']:.2f} |")


if __name__ == "__main__":
    main()
