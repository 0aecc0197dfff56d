#!/usr/bin/env python3
"""Reference values of the fully normalised associated Legendre functions P̄_lm(cos θ)
(`geodesy` normalisation, no Condon–Shortley phase) for tests/sht_legendre.rs.

Library: mpmath (version printed into the fixture header), 60 significant digits.
- Low degrees (l ≤ 17): mpmath.legenp(l, m, cos θ) (Ferrers' function, which carries the
  Condon–Shortley phase; it is removed by (−1)^m) times N_lm = sqrt((2−δ_m0)(2l+1)(l−m)!/(l+m)!).
- High degrees (to 10,800), where legenp's hypergeometric series does not converge: the
  sectoral value from its closed form P̄_mm = sqrt((2−δ_m0)(2m+1)(2m)!)/(2^m m!) · sin^m θ
  followed by the three-term column recursion, both in 60-digit arithmetic with mpmath's
  unbounded exponent (so nothing underflows and rounding is negligible).
Every value is taken at the colatitude θ = fl(theta) (the double the engine receives), with
cos θ and sin θ evaluated in 60 digits: the engine carries the rounding error of fl(cos θ)
itself (sht::legendre::colatitude), so near the poles it must match the exact cosine.
Output: tests/fixtures/sht/legendre_mpmath.txt, lines "l m theta_rad value" (value printed
to 17 significant digits; values below 1e-300 are excluded because the engine may skip them).
Rerun: python3 tests/reference/sht_legendre_mpmath.py
"""
import os
import mpmath as mp

mp.mp.dps = 60


def pbar_column(m, lmax, theta):
    # the exact cosine and sine of the double colatitude
    t = mp.cos(theta)
    u = mp.sin(theta)
    delta = 1 if m == 0 else 2
    pmm = mp.sqrt(delta * (2 * m + 1) * mp.factorial(2 * m)) / (mp.mpf(2) ** m * mp.factorial(m)) * u ** m
    out = {m: pmm}
    prev, p = mp.mpf(0), pmm
    for l in range(m + 1, lmax + 1):
        a = mp.sqrt(mp.mpf((2 * l - 1) * (2 * l + 1)) / ((l - m) * (l + m)))
        b = mp.sqrt(mp.mpf((2 * l + 1) * (l + m - 1) * (l - m - 1)) / ((l - m) * (l + m) * (2 * l - 3))) if l > m + 1 else 0
        prev, p = p, a * t * p - b * prev
        out[l] = p
    return out


def pbar_legenp(l, m, theta):
    delta = 1 if m == 0 else 2
    n = mp.sqrt(delta * (2 * l + 1) * mp.factorial(l - m) / mp.factorial(l + m))
    return (-1) ** m * n * mp.legenp(l, m, mp.cos(theta))


rows = []
# low degrees through legenp (independent of any recursion)
for theta in ["0.3", "1.2", "2.9", "1e-3"]:
    th = mp.mpf(float(theta))
    for l, m in [(0, 0), (1, 0), (1, 1), (5, 3), (12, 0), (12, 12), (17, 6)]:
        rows.append((l, m, theta, pbar_legenp(l, m, th)))
# high degrees, poles and large orders
cases = [
    ("1.0", 2000, [0, 1, 1000, 1999, 2000]),
    ("0.05", 3000, [5, 100, 140, 150]),
    ("0.001", 10800, [0, 1, 10, 3, 8]),
    ("0.4", 10800, [3000, 4000, 4200, 4300]),
    ("0.02", 10800, [150, 200, 210]),
    ("3.12", 5000, [20, 60]),
    ("1.5707963267948966", 10800, [0, 5000, 10799, 10800]),
]
for theta, lmax, orders in cases:
    th = mp.mpf(float(theta))
    for m in orders:
        col = pbar_column(m, lmax, th)
        picks = sorted(set([m, (m + lmax) // 2, lmax - 1, lmax] + [l for l in range(m, lmax + 1, max(1, (lmax - m) // 7))]))
        for l in picks:
            if l >= m and l in col:
                rows.append((l, m, theta, col[l]))

here = os.path.dirname(os.path.abspath(__file__))
path = os.path.join(here, "..", "fixtures", "sht", "legendre_mpmath.txt")
with open(path, "w") as f:
    f.write(f"# P-bar_lm(cos theta), geodesy normalisation, no Condon-Shortley phase; mpmath {mp.__version__}, 60 digits\n")
    f.write("# l m theta_rad value\n")
    kept = 0
    for l, m, theta, v in rows:
        if v != 0 and abs(v) < mp.mpf("1e-300"):
            continue
        f.write(f"{l} {m} {theta} {mp.nstr(v, 17, min_fixed=1, max_fixed=0)}\n")
        kept += 1
print(f"wrote {kept} values to {path}")
