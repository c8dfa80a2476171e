#!/usr/bin/env python3
"""Reference fractions of a Gaussian beam caught and lost by a tilted circular mirror.

The definition (REFERENCES 8): a disc of radius a tilted by theta presents the ellipse
(a, a cos theta) to a round Gaussian beam of 1/e^2 radius w, and the fraction it misses is
    L = (1/2pi) int_0^2pi exp(-2 r(phi)^2 / w^2) dphi,  r(phi) = a b / sqrt(b^2 cos^2 phi + a^2 sin^2 phi).
This script integrates that definition (and its complement, 1 - exp(...) under the integral) with
mpmath's tanh-sinh quadrature at 40 significant digits, split at the quarter periods, so it
shares nothing with radforce's series and trapezoid.

Regenerate with:
    python3 -m venv /tmp/ref && /tmp/ref/bin/pip install mpmath==1.3.0
    /tmp/ref/bin/python data/reference/make_clipping_table.py > data/reference/clipping.csv
(made with mpmath 1.3.0, Python 3.11).
"""
import mpmath as mp

mp.mp.dps = 40

RATIOS = ["0.05", "0.3", "0.8", "1", "1.3", "2", "3", "4.5", "6"]
DEGREES = ["0", "5", "10", "30", "45", "55", "62", "70", "80", "85", "89"]


def fractions(ratio, degrees):
    a, w = mp.mpf(ratio), mp.mpf(1)
    b = a * mp.cos(mp.radians(mp.mpf(degrees)))

    def x(phi):
        r2 = a * a * b * b / (b * b * mp.cos(phi) ** 2 + a * a * mp.sin(phi) ** 2)
        return -2 * r2 / (w * w)

    cuts = [0, mp.pi / 2, mp.pi, 3 * mp.pi / 2, 2 * mp.pi]
    lost = mp.quad(lambda phi: mp.exp(x(phi)), cuts) / (2 * mp.pi)
    caught = mp.quad(lambda phi: -mp.expm1(x(phi)), cuts) / (2 * mp.pi)
    return caught, lost


print("a_over_w,incidence_deg,caught,lost")
for ratio in RATIOS:
    for degrees in DEGREES:
        caught, lost = fractions(ratio, degrees)
        print(f"{ratio},{degrees},{mp.nstr(caught, 20)},{mp.nstr(lost, 20)}")
