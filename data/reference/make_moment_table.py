#!/usr/bin/env python3
"""Reference skewness and kurtosis of radforce's distribution families from SciPy.

Regenerate with:
    python3 -m venv /tmp/ref && /tmp/ref/bin/pip install scipy==1.17.1 numpy==2.4.6
    /tmp/ref/bin/python data/reference/make_moment_table.py > data/reference/distribution_moments.csv
(made with SciPy 1.17.1, NumPy 2.4.6). The cases are those of make_distribution_table.py (t only
where the fourth moment exists). SciPy's stats(moments="sk") gives the skewness and the excess
kurtosis; the table gives the kurtosis mu_4 / sigma^4 (excess + 3). The curvilinear trapezoid is
not in SciPy: its central moments are integrated from its density (JCGM 101:2008 6.4.3.2) with
scipy.integrate.quad, independently of radforce's closed form.
"""
import sys

from scipy import integrate

from make_distribution_table import CASES, Curvilinear


def shape(d):
    if isinstance(d, Curvilinear):
        lo, hi = d.c - d.w - d.d, d.c + d.w + d.d
        pts = [d.c - d.w + d.d, d.c, d.c + d.w - d.d]

        def central(k):
            return integrate.quad(lambda x: (x - d.c) ** k * d.pdf(x), lo, hi, points=pts,
                                  epsabs=1e-16, epsrel=1e-13, limit=400)[0]

        m2, m3, m4 = central(2), central(3), central(4)
        return m3 / m2 ** 1.5, m4 / m2 ** 2
    s, k = d.stats(moments="sk")
    return float(s), float(k) + 3.0


def main():
    out = sys.stdout
    out.write("family,parameters,skewness,kurtosis\n")
    for family, params, d in CASES:
        if family == "t" and "dof=4" in params:
            continue
        s, k = shape(d)
        out.write(f"{family},{params},{s!r},{k!r}\n")


if __name__ == "__main__":
    main()
