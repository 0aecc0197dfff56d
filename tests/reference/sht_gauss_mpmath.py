#!/usr/bin/env python3
"""Gauss–Legendre nodes and weights for n = 10801 and 21600 at selected indices, by Newton's
method on P_n (Bonnet's recursion) in 30-digit mpmath arithmetic (version in the header),
started from scipy.special.roots_legendre's nodes; w = 2 / ((1 − x²) P_n'(x)²)
(Abramowitz & Stegun 25.4.29). For tests/sht_quadrature.rs.
Rerun: python3 tests/reference/sht_gauss_mpmath.py   (a few minutes)"""
import os
import mpmath as mp
from scipy.special import roots_legendre

mp.mp.dps = 30


def pair(n, x):
    p0, p = mp.mpf(1), x
    for k in range(1, n):
        p0, p = p, ((2 * k + 1) * x * p - k * p0) / (k + 1)
    return p, p0


here = os.path.dirname(os.path.abspath(__file__))
with open(os.path.join(here, "..", "fixtures", "sht", "gauss_mpmath.txt"), "w") as f:
    f.write(f"# n index(ascending) x w ; mpmath {mp.__version__}, 30 digits, Newton on P_n\n")
    for n, idx in ((10801, [0, 1, 2, 10, 100, 1543, 3600, 5400]), (21600, [0, 1, 7, 10799])):
        x0, _ = roots_legendre(n)
        for i in idx:
            x = mp.mpf(float(x0[i]))
            for _ in range(3):
                p, q = pair(n, x)
                d = n * (x * p - q) / (x * x - 1)
                x -= p / d
            p, q = pair(n, x)
            d = n * (x * p - q) / (x * x - 1)
            w = 2 / ((1 - x * x) * d * d)
            f.write(f"{n} {i} {float(x)!r} {float(w)!r}\n")
            f.flush()
