#!/usr/bin/env python3
"""Whole-process benchmark of radforce against what one would write instead.

On the torsion-power demo (data/torsion-vacuum-20w.toml), at M = 10^6 and 10^7 trials, it times
in one run, alternating, paired round by round:
  (a)  radforce run ... --format json             (all cores)
  (a1) the same with --threads 1                  (for the 1 -> 2 thread scaling)
  (b)  benches/numpy_model.py                     (vectorised NumPy: default_rng, np.quantile, np.sort)
  (c)  benches/bare_loop.rs, a bare Rust loop     (all cores; the near-limit reference)
and prints the median wall time, ns per trial, peak resident memory, and the medians of the
paired ratios b/a (speed-up over NumPy), a/c (overhead over the bare loop) and a1/a (thread
scaling). Every program computes the mean, u and both 95 % coverage intervals of all three
measurands (power, force, torsion_constant).

Usage (from the crate root):
  cargo build --release --bin radforce --example bare_loop
  python3 -m venv /tmp/bench-venv && /tmp/bench-venv/bin/pip install numpy==2.4.6
  python3 benches/whole_process.py --python /tmp/bench-venv/bin/python [--rounds 5]
"""
import argparse
import os
import platform
import statistics
import subprocess
import sys
import time


def run(cmd):
    """Wall time (s) and peak resident memory (MiB) of one child process."""
    start = time.perf_counter()
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - start
    err = proc.stderr.read().decode() if proc.stderr else ""
    if status != 0:
        sys.exit(f"{' '.join(cmd)} failed: {err}")
    return wall, usage.ru_maxrss / 1024.0


def machine():
    cpu = "unknown CPU"
    try:
        with open("/proc/cpuinfo") as f:
            for line in f:
                if line.startswith("model name"):
                    cpu = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    return f"{platform.node()}: {os.cpu_count()} cores, {cpu}, {platform.system()} {platform.release()}"


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--python", default=sys.executable, help="a Python with NumPy")
    ap.add_argument("--rounds", type=int, default=5)
    ap.add_argument("--sizes", default="1000000,10000000")
    args = ap.parse_args()
    scenario = "data/torsion-vacuum-20w.toml"
    radforce = "target/release/radforce"
    bare = "target/release/examples/bare_loop"
    for path in (radforce, bare):
        if not os.path.exists(path):
            sys.exit(f"{path} is missing: cargo build --release --bin radforce --example bare_loop")
    print(f"date: {time.strftime('%Y-%m-%d')}; machine: {machine()}")
    print(f"rounds: {args.rounds}, alternating (a) (a1) (b) (c) with a rotating start")
    cores = os.cpu_count() or 1
    for m in [int(x) for x in args.sizes.split(",")]:
        cmds = {
            "a": [radforce, "run", scenario, "--trials", str(m), "--format", "json", "--quiet"],
            "a1": [radforce, "run", scenario, "--trials", str(m), "--format", "json", "--quiet", "--threads", "1"],
            "b": [args.python, "benches/numpy_model.py", str(m)],
            "c": [bare, str(m), str(cores)],
        }
        results = {k: [] for k in cmds}
        order = list(cmds)
        for r in range(args.rounds):
            for k in order[r % len(order):] + order[: r % len(order)]:
                results[k].append(run(cmds[k]))
        print(f"\nM = {m:,} trials")
        print(f"{'program':<34} {'median s':>9} {'ns/trial':>9} {'peak MiB':>9}")
        names = {"a": "(a) radforce run, all cores", "a1": "(a1) radforce run, 1 thread", "b": "(b) NumPy script", "c": "(c) bare Rust loop, all cores"}
        for k in cmds:
            wall = statistics.median(w for w, _ in results[k])
            peak = max(p for _, p in results[k])
            print(f"{names[k]:<34} {wall:9.3f} {1e9 * wall / m:9.1f} {peak:9.1f}")
        paired = lambda x, y: statistics.median(results[x][i][0] / results[y][i][0] for i in range(args.rounds))
        peak_a = max(p for _, p in results["a"])
        print(f"b/a (speed-up over NumPy):          {paired('b', 'a'):.2f}")
        print(f"a/c (radforce over the bare loop):  {paired('a', 'c'):.2f}")
        print(f"a1/a (1 -> {cores} threads):              {paired('a1', 'a'):.2f}")
        print(f"radforce peak memory per trial per measurand (3 kept): {peak_a * 1048576 / (3 * m):.2f} bytes")


if __name__ == "__main__":
    main()
