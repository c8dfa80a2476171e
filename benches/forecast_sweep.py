#!/usr/bin/env python3
"""Times a 50-point sweep of a forecast (benches/forecast-sweep.toml: 10^5 trials a point, the
signal predicted again and the noise floor recomputed at every point) as a whole process, a few
rounds, and prints the median wall time against the 10 s target.

Usage (from the crate root):
  cargo build --release --bin radforce
  python3 benches/forecast_sweep.py [--rounds 5]
"""
import argparse
import statistics
import subprocess
import time

ap = argparse.ArgumentParser()
ap.add_argument("--rounds", type=int, default=5)
args = ap.parse_args()
cmd = ["target/release/radforce", "run", "benches/forecast-sweep.toml", "--format", "json", "-q"]
times = []
for _ in range(args.rounds):
    t0 = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL)
    times.append(time.perf_counter() - t0)
median = statistics.median(times)
print(f"50-point forecast sweep at 10^5 trials a point: median {median:.2f} s over {args.rounds} rounds "
      f"(min {min(times):.2f}, max {max(times):.2f}); target under 10 s: {'met' if median < 10 else 'NOT met'}")
