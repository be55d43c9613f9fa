#!/usr/bin/env python3
"""Evaluation-speed benchmark of ohmsheet, side by side in one run:

  * ohmsheet's block evaluator over the benchmark feeder (bench/feeder.ohm),
    in memory, and `ohmsheet batch` end-to-end from a cases CSV to a results
    CSV;
  * the same formulas written by hand in Rust, one case at a time and in
    blocks the compiler vectorises (benches/feeder.rs), and end to end from
    CSV to CSV (`feeder csv`: the practical limit for the batch command);
  * the same formulas in Python: a plain loop with cmath, and numpy.

Both a portable build and a `-C target-cpu=native` build are measured.
Usage (from the repository root):

    python3 bench/run.py                 # 1,000,000 cases
    python3 bench/run.py --cases 200000 --py-cases 20000 --repeats 3
    python3 bench/run.py --big-rows 10000000   # also: memory of a long run

numpy is installed into bench/.venv from bench/requirements.txt. The
results table (markdown) goes to stdout; progress to stderr. Not part of
`cargo test`.
"""

import argparse
import json
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
BENCH = os.path.join(ROOT, "bench")
VENV = os.path.join(BENCH, ".venv")
PY = os.path.join(VENV, "bin", "python")


def log(*a):
    print(*a, file=sys.stderr, flush=True)


def bench_exe(name):
    """The executable of `cargo bench --bench NAME`, built if need be."""
    out = subprocess.run(["cargo", "bench", "--bench", name, "--no-run", "--message-format=json", "--quiet"],
                         cwd=ROOT, check=True, capture_output=True, text=True).stdout
    for line in out.splitlines():
        try:
            m = json.loads(line)
        except json.JSONDecodeError:
            continue
        if m.get("reason") == "compiler-artifact" and m.get("target", {}).get("name") == name and m.get("executable"):
            return m["executable"]
    sys.exit(f"no benchmark executable for {name}")


def bench_lines(cmd, hide=()):
    """Run `cmd` from the repository root; its stdout's JSON lines, each
    logged as it comes (without the keys in `hide`)."""
    log("$", " ".join(cmd))
    out = subprocess.run(cmd, cwd=ROOT, check=True, capture_output=True, text=True).stdout
    rows = [json.loads(l) for l in out.splitlines() if l.startswith("{")]
    for r in rows:
        log(json.dumps({k: v for k, v in r.items() if k not in hide}))
    return rows


def ensure_venv():
    if not os.path.exists(PY):
        log("creating bench/.venv")
        subprocess.run([sys.executable, "-m", "venv", VENV], check=True)
    subprocess.run([PY, "-m", "pip", "install", "-q", "-r", os.path.join(BENCH, "requirements.txt")], check=True)


def build(native):
    env = dict(os.environ)
    base = env.get("CARGO_TARGET_DIR", os.path.join(ROOT, "target"))
    if native:
        env["RUSTFLAGS"] = (env.get("RUSTFLAGS", "") + " -C target-cpu=native").strip()
        env["CARGO_TARGET_DIR"] = base + "-native"
    else:
        env["CARGO_TARGET_DIR"] = base
    log(f"building ({'native' if native else 'portable'}) in {env['CARGO_TARGET_DIR']}")
    subprocess.run(["cargo", "build", "--release", "--quiet"], cwd=ROOT, env=env, check=True)
    out = subprocess.run(["cargo", "bench", "--bench", "feeder", "--no-run", "--message-format=json", "--quiet"],
                         cwd=ROOT, env=env, check=True, capture_output=True, text=True).stdout
    exe = None
    for line in out.splitlines():
        try:
            m = json.loads(line)
        except json.JSONDecodeError:
            continue
        if m.get("reason") == "compiler-artifact" and m.get("target", {}).get("name") == "feeder" and m.get("executable"):
            exe = m["executable"]
    binary = os.path.join(env["CARGO_TARGET_DIR"], "release", "ohmsheet")
    return {"bench": exe, "ohmsheet": binary, "flags": env.get("RUSTFLAGS", "") or "(none)"}


def json_lines(text):
    return [json.loads(l) for l in text.splitlines() if l.startswith("{")]


def run_child(cmd, **kw):
    """Run a command; return (wall seconds, CPU seconds, peak RSS in KiB)."""
    t0 = time.perf_counter()
    p = subprocess.Popen(cmd, **kw)
    _, status, ru = os.wait4(p.pid, 0)
    wall = time.perf_counter() - t0
    p.returncode = os.waitstatus_to_exitcode(status)
    if p.returncode != 0:
        sys.exit(f"{cmd[0]} failed with status {p.returncode}")
    return wall, ru.ru_utime + ru.ru_stime, ru.ru_maxrss


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--cases", type=int, default=1_000_000)
    ap.add_argument("--py-cases", type=int, default=50_000, help="cases for the plain Python loops")
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--no-native", action="store_true")
    ap.add_argument("--big-rows", type=int, default=0, help="also run a long table, to show memory stays flat")
    args = ap.parse_args()

    ensure_venv()
    builds = {"portable": build(False)}
    if not args.no_native:
        builds["native"] = build(True)

    # Files on tmpfs where there is one, so the shared machine's disk does
    # not enter the timings (both ohmsheet and Python write there).
    work = tempfile.mkdtemp(prefix="ohmsheet-bench-", dir="/dev/shm" if os.path.isdir("/dev/shm") else None)
    try:
        cases = os.path.join(work, "cases.csv")
        log(f"writing {args.cases} cases to {cases}")
        subprocess.run([PY, os.path.join(BENCH, "feeder.py"), "gen", cases, str(args.cases)], check=True)
        sheet = os.path.join(BENCH, "feeder.ohm")
        rows = {}

        # In memory: Rust variants (each binary times its variants in turns).
        for name, b in builds.items():
            log(f"in memory, Rust ({name})")
            out = subprocess.run([b["bench"], str(args.cases), str(args.repeats)], check=True,
                                 capture_output=True, text=True).stdout
            for r in json_lines(out):
                if "variant" in r:
                    rows[(r["variant"], name, r["threads"])] = r["ns_per_case"]
                else:
                    rows[("info", name, 0)] = r
        log("in memory, numpy and the Python loop")
        r = json_lines(subprocess.run([PY, os.path.join(BENCH, "feeder.py"), "numpy", str(args.cases)],
                                      check=True, capture_output=True, text=True).stdout)[0]
        rows[("numpy", "-", 1)] = r["ns_per_case"]
        r = json_lines(subprocess.run([PY, os.path.join(BENCH, "feeder.py"), "loop", str(args.py_cases)],
                                      check=True, capture_output=True, text=True).stdout)[0]
        rows[("python_loop", "-", 1)] = r["ns_per_case"]

        # End to end, CSV to CSV, in turns.
        e2e = {k: ([], []) for k in list(builds) + ["hand " + b for b in builds] + ["python", "one thread"]}
        peak = {}
        results = os.path.join(work, "results.csv")
        for rep in range(args.repeats):
            for name, b in builds.items():
                log(f"end to end, ohmsheet batch ({name}), run {rep + 1}")
                if os.path.exists(results):
                    os.remove(results)
                wall, cpu, rss = run_child([b["ohmsheet"], "batch", sheet, "--cases", cases, "--out", results, "--complex", "rect", "-q"])
                e2e[name][0].append(wall * 1e9 / args.cases)
                e2e[name][1].append(cpu * 1e9 / args.cases)
                peak[name] = max(peak.get(name, 0), rss)
                log(f"  {wall * 1e9 / args.cases:.0f} ns/case wall, {cpu * 1e9 / args.cases:.0f} CPU")
                if name == "portable":
                    # The same on one thread: the cost of a case on one
                    # core, which the load of the machine's other core
                    # does not change (see docs/performance.md).
                    os.remove(results)
                    env = dict(os.environ, RAYON_NUM_THREADS="1")
                    wall, cpu, _ = run_child([b["ohmsheet"], "batch", sheet, "--cases", cases, "--out", results, "--complex", "rect", "-q"],
                                             env=env)
                    e2e["one thread"][0].append(wall * 1e9 / args.cases)
                    e2e["one thread"][1].append(cpu * 1e9 / args.cases)
                    log(f"  one thread: {wall * 1e9 / args.cases:.0f} ns/case wall, {cpu * 1e9 / args.cases:.0f} CPU")
                if rep == 0:
                    subprocess.run([PY, os.path.join(BENCH, "feeder.py"), "check", cases, results, "2000"],
                                   check=True)
                # The same formulas by hand in Rust, end to end: the practical limit.
                log(f"end to end, hand-written Rust ({name}), run {rep + 1}")
                os.remove(results)
                wall, cpu, rss = run_child([b["bench"], "csv", cases, results], stdout=subprocess.DEVNULL)
                log(f"  {wall * 1e9 / args.cases:.0f} ns/case wall, {cpu * 1e9 / args.cases:.0f} CPU")
                e2e["hand " + name][0].append(wall * 1e9 / args.cases)
                e2e["hand " + name][1].append(cpu * 1e9 / args.cases)
                peak["hand " + name] = max(peak.get("hand " + name, 0), rss)
                if rep == 0:
                    subprocess.run([PY, os.path.join(BENCH, "feeder.py"), "check", cases, results, "2000"],
                                   check=True)
            log(f"end to end, Python loop, run {rep + 1}")
            pyout = os.path.join(work, "py.csv")
            r = json_lines(subprocess.run([PY, os.path.join(BENCH, "feeder.py"), "loop-csv", cases, pyout,
                                           str(args.py_cases)], check=True, capture_output=True, text=True).stdout)[0]
            e2e["python"][0].append(r["ns_per_case"])
            e2e["python"][1].append(r["cpu_ns_per_case"])
            log(f"  {r['ns_per_case']:.0f} ns/case")
        res_size = os.path.getsize(results)

        big = None
        if args.big_rows:
            bigcases = os.path.join(work, "big.csv")
            log(f"writing {args.big_rows} cases for the memory run")
            subprocess.run([PY, os.path.join(BENCH, "feeder.py"), "gen", bigcases, str(args.big_rows)], check=True)
            b = builds["portable"]
            bigout = os.path.join(work, "big-results.csv")
            show = "I,Vload,pf_src,Vdrop"
            _, _, rss_small = run_child([b["ohmsheet"], "batch", sheet, "--cases", cases, "--out", bigout, "-q",
                                         "--show", show, "--complex", "rect"])
            wall, cpu, rss_big = run_child([b["ohmsheet"], "batch", sheet, "--cases", bigcases, "--out", bigout,
                                            "-q", "--show", show, "--complex", "rect"])
            big = (rss_small, rss_big, wall, show)
    finally:
        shutil.rmtree(work, ignore_errors=True)

    # ---- report
    med = statistics.median
    info = rows[("info", "portable", 0)]
    threads = max(t for (_, _, t) in rows if isinstance(t, int))
    print(f"Benchmark feeder: {info['instructions']} instructions over {info['slots']} slots, "
          f"{args.cases:,} cases; Python loops over {args.py_cases:,} cases. "
          f"Hand-written vs ohmsheet: max relative difference {info['max_rel_diff_hand_vs_ohmsheet']:.1e}.\n")
    print("In memory (ns per case; 1 thread: CPU time; all threads: wall-clock):\n")
    print("| build | threads | ohmsheet | hand scalar | hand block | ohmsheet vs scalar | ohmsheet / block |")
    print("|---|---|---|---|---|---|---|")
    for name in builds:
        for t in sorted({1, threads}):
            o, s_, b_ = (rows[(v, name, t)] for v in ("ohmsheet_block", "hand_scalar", "hand_block"))
            print(f"| {name} | {t} | {o:.1f} | {s_:.1f} | {b_:.1f} | {s_ / o:.2f}× faster | {o / b_:.2f}× |")
    npy, loop = rows[("numpy", "-", 1)], rows[("python_loop", "-", 1)]
    print(f"\nnumpy: {npy:.1f} ns per case; plain Python loop: {loop:.0f} ns per case (1 thread, CPU time).\n")
    for name in builds:
        o = rows[("ohmsheet_block", name, 1)]
        print(f"- {name}: ohmsheet (1 thread) is {npy / o:.1f}× faster than numpy and {loop / o:.0f}× faster than the Python loop")
    print("\nEnd to end, CSV in, CSV out (ns per case, median of "
          f"{args.repeats}; results {res_size / args.cases:.0f} bytes per case):\n")
    print("| program | wall | CPU | peak memory | wall vs Python loop |")
    print("|---|---|---|---|---|")
    pw = med(e2e["python"][0])
    for name in builds:
        w, c = med(e2e[name][0]), med(e2e[name][1])
        print(f"| ohmsheet batch ({name}) | {w:.0f} | {c:.0f} | {peak[name] / 1024:.0f} MiB | {pw / w:.0f}× faster |")
        h = "hand " + name
        w, c = med(e2e[h][0]), med(e2e[h][1])
        print(f"| hand-written Rust ({name}) | {w:.0f} | {c:.0f} | {peak[h] / 1024:.0f} MiB | {pw / w:.0f}× faster |")
    print(f"| Python loop, csv module | {pw:.0f} | {med(e2e['python'][1]):.0f} | | 1× |")
    w1, c1 = med(e2e["one thread"][0]), med(e2e["one thread"][1])
    print(f"\nOn one thread (`RAYON_NUM_THREADS=1`, portable): {w1:.0f} ns/case wall, {c1:.0f} CPU, "
          f"{pw / w1:.0f}× faster than the Python loop; all threads are {w1 / med(e2e['portable'][0]):.2f}× "
          "faster than one.")
    if big:
        rss_small, rss_big, wall, show = big
        print(f"\nLong run: {args.big_rows:,} cases (`--show {show}`) in {wall:.1f} s, peak memory "
              f"{rss_big / 1024:.0f} MiB; the same with {args.cases:,} cases: {rss_small / 1024:.0f} MiB.")
    print("\nBuild flags:", ", ".join(f"{k}: RUSTFLAGS={v['flags']}" for k, v in builds.items()),
          "; release profile (opt-level 3, codegen-units 4).")


if __name__ == "__main__":
    main()
