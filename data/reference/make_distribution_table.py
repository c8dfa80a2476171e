#!/usr/bin/env python3
"""Reference quantiles, means and variances of radforce's distribution families from SciPy.

Regenerate with:
    python3 -m venv /tmp/ref && /tmp/ref/bin/pip install scipy==1.17.1 numpy==2.4.6
    /tmp/ref/bin/python data/reference/make_distribution_table.py > data/reference/distribution_quantiles.csv
(made with SciPy 1.17.1, NumPy 2.4.6, Python 3.11). The curvilinear trapezoid is not in SciPy:
its density (JCGM 101:2008 6.4.3.2) is integrated numerically with scipy.integrate.quad and
inverted with scipy.optimize.brentq, independently of radforce's closed-form distribution
function.
"""
import math
import sys

from scipy import integrate, optimize, stats

PS = [0.001, 0.025, 0.1, 0.3, 0.5, 0.7, 0.9, 0.975, 0.999]


def lognormal(mean, sd):
    s2 = math.log1p((sd / mean) ** 2)
    return stats.lognorm(s=math.sqrt(s2), scale=math.exp(math.log(mean) - s2 / 2))


def trapezoid(lo, hi, beta):
    return stats.trapezoid((1 - beta) / 2, (1 + beta) / 2, loc=lo, scale=hi - lo)


class Curvilinear:
    """JCGM 101 6.4.3: rectangular on [a, b] whose limits are each known only within +-d."""

    def __init__(self, a, b, d):
        self.c, self.w, self.d = (a + b) / 2, (b - a) / 2, d

    def pdf(self, x):
        t = abs(x - self.c)
        w, d = self.w, self.d
        if t <= w - d:
            return math.log((w + d) / (w - d)) / (4 * d)
        if t < w + d:
            return math.log((w + d) / t) / (4 * d)
        return 0.0

    def cdf(self, x):
        lo = self.c - self.w - self.d
        pts = [p for p in (self.c - self.w + self.d, self.c, self.c + self.w - self.d) if lo < p < x]
        return integrate.quad(self.pdf, lo, x, points=pts or None, epsabs=1e-14, epsrel=1e-13, limit=200)[0]

    def ppf(self, p):
        return optimize.brentq(lambda x: self.cdf(x) - p, self.c - self.w - self.d, self.c + self.w + self.d, xtol=1e-15, rtol=1e-14)

    def mean(self):
        return self.c

    def var(self):
        lo, hi = self.c - self.w - self.d, self.c + self.w + self.d
        return integrate.quad(lambda x: (x - self.c) ** 2 * self.pdf(x), lo, hi,
                              points=[self.c - self.w + self.d, self.c, self.c + self.w - self.d],
                              epsabs=1e-15, epsrel=1e-13, limit=200)[0]


CASES = [
    ("normal", "mean=2.5;sd=0.3", stats.norm(2.5, 0.3)),
    ("rectangular", "min=-1;max=3", stats.uniform(-1, 4)),
    ("triangular", "min=1;max=2", stats.triang(0.5, loc=1, scale=1)),
    ("trapezoidal", "min=0;max=4;beta=0.5", trapezoid(0, 4, 0.5)),
    ("trapezoidal", "min=-1;max=1;beta=0.2", trapezoid(-1, 1, 0.2)),
    ("curvilinear-trapezoid", "min=-1;max=1;limit_spread=0.2", Curvilinear(-1, 1, 0.2)),
    ("arcsine", "min=-2;max=6", stats.arcsine(loc=-2, scale=8)),
    ("t", "mean=10;scale=0.5;dof=4", stats.t(4, loc=10, scale=0.5)),
    ("t", "mean=0;scale=1;dof=30", stats.t(30)),
    ("exponential", "mean=3", stats.expon(scale=3)),
    ("gamma", "shape=2.5;scale=0.4", stats.gamma(2.5, scale=0.4)),
    ("truncated-normal", "mean=0.9995;sd=0.0004;min=0;max=1", stats.truncnorm((0 - 0.9995) / 0.0004, (1 - 0.9995) / 0.0004, loc=0.9995, scale=0.0004)),
    ("truncated-normal", "mean=0;sd=1;min=2;max=5", stats.truncnorm(2, 5)),
    ("beta", "alpha=8;beta=2;min=0.99;max=1", stats.beta(8, 2, loc=0.99, scale=0.01)),
    ("lognormal", "mean=300;sd=20", lognormal(300, 20)),
]


def main():
    out = sys.stdout
    out.write("family,parameters,p,quantile,mean,variance\n")
    for family, params, d in CASES:
        mean, var = float(d.mean()), float(d.var())
        for p in PS:
            out.write(f"{family},{params},{p!r},{float(d.ppf(p))!r},{mean!r},{var!r}\n")


if __name__ == "__main__":
    main()
