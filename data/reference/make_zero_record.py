#!/usr/bin/env python3
"""Make data/records/comparator-zero.csv: an invented zero-signal record of a mass comparator for
the demo scenario forecast-2kw-comparator.toml ([variants.measured_noise]). It describes no real
instrument: white noise of 10 ug/sqrt(Hz) (one-sided; a sample every second is a mean over one
second, standard deviation 10/sqrt(2) ug), a flicker floor of 3 ug (one-sided PSD
h_-1 / f with h_-1 = 3^2 / (2 ln 2) ug^2, drawn by the spectral method on a grid eight times
longer than the record), a drift of 0.5 ug/min, and an offset of 1234.5 ug.

    /tmp/pyref/bin/python data/reference/make_zero_record.py > data/records/comparator-zero.csv

(NumPy 2.4.6, default_rng(20261203).)
"""
import numpy as np

rng = np.random.default_rng(20261203)
n, dt = 8192, 1.0
white = 10.0 / np.sqrt(2.0 * dt) * rng.standard_normal(n)
m = 8 * n
h = 3.0**2 / (2.0 * np.log(2.0))
f = np.arange(1, m // 2 + 1) / (m * dt)
scale = np.sqrt(m * (h / f) / (2.0 * dt))
spectrum = np.zeros(m // 2 + 1, dtype=complex)
spectrum[1:] = scale * (rng.standard_normal(m // 2) + 1j * rng.standard_normal(m // 2)) / np.sqrt(2.0)
spectrum[-1] = scale[-1] * rng.standard_normal()
flicker = np.fft.irfft(spectrum, n=m)[:n]
t = np.arange(n) * dt
reading = 1234.5 + white + flicker + 0.5 / 60.0 * t
print("t,reading")
for ti, r in zip(t, reading):
    print(f"{ti:.0f},{r:.4f}")
