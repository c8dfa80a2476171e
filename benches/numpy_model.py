#!/usr/bin/env python3
"""The torsion-power demo (data/torsion-vacuum-20w.toml) as a practitioner would write it with
NumPy instead of radforce: default_rng, one array per input, the model vectorised, np.quantile
for the probabilistically symmetric interval and np.sort for the shortest one, for each of the
three measurands. Used by benches/whole_process.py.

Usage: python numpy_model.py TRIALS [SEED]
"""
import sys

import numpy as np

C = 299_792_458.0


def shortest(y, p):
    s = np.sort(y)
    m = len(s)
    q = int(np.floor(p * m + 0.5))
    widths = s[q:] - s[: m - q]
    j = int(np.argmin(widths))
    return s[j], s[j + q]


def main():
    m = int(float(sys.argv[1]))
    seed = int(sys.argv[2]) if len(sys.argv) > 2 else 1
    rng = np.random.default_rng(seed)
    readings = np.array([7.975, 7.992, 7.981, 8.001, 7.988, 7.979, 7.996, 7.984, 7.990, 7.994]) * 1e-3
    n = len(readings)
    s = readings.mean() + readings.std(ddof=1) / np.sqrt(n) * rng.standard_t(n - 1, m)
    d = rng.normal(2.0, 0.5e-3, m)
    t0 = rng.normal(60.0, 0.02, m)
    inertia = rng.normal(3.0e-4, 0.009e-4, m)
    lever = rng.uniform(49.9e-3, 50.1e-3, m)
    r = rng.uniform(0.9990, 0.9995, m)
    theta = rng.normal(np.radians(10.0), np.radians(0.2), m)
    w = rng.normal(1.5e-3, 0.1e-3, m)
    a = 6e-3
    t = rng.uniform(0.0, 1e-4, m)
    rd = rng.uniform(0.0, 2e-4, m)
    q_factor = 3000.0
    stray = rng.normal(0.0, 0.5e-9, m)
    kappa = inertia * (2 * np.pi / t0) ** 2 / (1 - 0.25 / q_factor**2)
    phi = np.arctan(s / d) / 2
    force = kappa * phi / lever - stray
    eta = 1 - np.exp(-2 * a**2 / w**2)
    g = (1 + r - t) * np.cos(theta) + 2 / 3 * rd
    power = force * C / (g * eta)
    for name, y in (("power", power), ("force", force), ("torsion_constant", kappa)):
        lo, hi = np.quantile(y, [0.025, 0.975])
        slo, shi = shortest(y, 0.95)
        print(f"{name}: mean {y.mean():.6e} u {y.std(ddof=1):.3e} symmetric [{lo:.6e}, {hi:.6e}] shortest [{slo:.6e}, {shi:.6e}]")


if __name__ == "__main__":
    main()
