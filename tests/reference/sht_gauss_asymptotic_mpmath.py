#!/usr/bin/env python3
"""Gauss–Legendre colatitudes, nodes and weights for n = 10, 1000, 10801 and 21600 at spot
indices (first nodes, middle, last, and seeded random ones), by Newton's method on P_n
(Bonnet's recursion, Abramowitz & Stegun 8.5.3) in 40-digit mpmath arithmetic (version in the
header), started from Tricomi's approximation; w = 2 / ((1 − x²) P_n'(x)²) (A&S 25.4.29).
Indices count from the north pole (x descending, θ ascending), as kugel orders its rules.
For tests/sht/gauss_legendre_fast.rs.
Rerun: python3 -m pip install mpmath && python3 tests/reference/sht_gauss_asymptotic_mpmath.py
(a few minutes)"""
import os
import random
import mpmath as mp

mp.mp.dps = 40


def pair(n, x):
    p0, p = mp.mpf(1), x
    for k in range(1, n):
        p0, p = p, ((2 * k + 1) * x * p - k * p0) / (k + 1)
    return p, p0


def root(n, j):
    """The (j+1)-th root from x = 1."""
    k = j + 1
    phi = (4 * k - 1) * mp.pi / (4 * n + 2)
    x = (1 - mp.mpf(n - 1) / (8 * n**3) - (39 - 28 / mp.sin(phi) ** 2) / (384 * mp.mpf(n) ** 4)) * mp.cos(phi)
    if n % 2 == 1 and j == n // 2:
        x = mp.mpf(0)
    for _ in range(20):
        p, q = pair(n, x)
        d = n * (x * p - q) / (x * x - 1)
        dx = p / d
        x -= dx
        if abs(dx) < mp.mpf(10) ** -36:
            break
    p, q = pair(n, x)
    d = n * (x * p - q) / (x * x - 1)
    w = 2 / ((1 - x * x) * d * d)
    return mp.acos(x), x, w


rng = random.Random(20261202)
here = os.path.dirname(os.path.abspath(__file__))
out = os.path.join(here, "..", "fixtures", "sht", "gauss_asymptotic_mpmath.txt")
with open(out, "w") as f:
    f.write(f"# n index_from_north theta_rad x w ; mpmath {mp.__version__}, 40 digits, Newton on P_n\n")
    for n in (10, 1000, 10801, 21600):
        spots = {0, 1, 2, 7, 8, 9, 15, 60, (n - 1) // 2, n // 2, n - 2, n - 1}
        spots |= {rng.randrange(n) for _ in range(6)}
        for j in sorted(i for i in spots if 0 <= i < n):
            theta, x, w = root(n, j)
            f.write(f"{n} {j} {float(theta)!r} {float(x)!r} {float(w)!r}\n")
            f.flush()
