#!/usr/bin/env python3
"""Wall time of the default `radforce rank` of the torsion demo at 10^5 base rows.

The study: data/torsion-vacuum-20w.toml (12 varying inputs, 3 measurands), `rank` with
--base-trials 100000 and the default 400 bootstrap replicates, all cores. Prints the median and
the minimum over the rounds, and the same with --replicates 50 (the part the bootstrap takes is
the difference).

Usage (from the crate root):
  cargo build --release
  python3 benches/rank_speed.py [--rounds 5]
"""
import argparse
import statistics
import subprocess
import time


def timed(cmd):
    start = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return time.perf_counter() - start


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--rounds", type=int, default=5)
    args = ap.parse_args()
    base = ["target/release/radforce", "rank", "data/torsion-vacuum-20w.toml",
            "--base-trials", "100000", "--quiet"]
    runs = {"default (400 replicates)": base, "--replicates 50": base + ["--replicates", "50"]}
    times = {k: [] for k in runs}
    for _ in range(args.rounds):
        for k, cmd in runs.items():
            times[k].append(timed(cmd))
    for k, v in times.items():
        print(f"{k:26s} median {statistics.median(v):.2f} s  min {min(v):.2f} s  ({args.rounds} rounds)")


if __name__ == "__main__":
    main()
