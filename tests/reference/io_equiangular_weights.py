#!/usr/bin/env python3
"""Reference quadrature weights for equiangular latitude layouts.

Independent of kugel's closed forms: for n nodes x_j = cos(theta_j) the weights are the
unique solution of the moment equations  sum_j w_j T_k(x_j) = int_{-1}^{1} T_k(x) dx,
k = 0..n-1 (T_k Chebyshev polynomials; the integral is 2/(1-k^2) for even k, 0 for odd k),
solved with mpmath at 50 significant digits.

Layouts: "nodes"  theta_j = j*pi/(n-1), j = 0..n-1 (both poles; Clenshaw-Curtis)
         "cells"  theta_j = (j+1/2)*pi/n          (cell centres; Fejer's first rule)

Writes tests/fixtures/io/equiangular_weights.json. Rerun:  python3 tests/reference/io_equiangular_weights.py
"""
import json
import os

import mpmath

mpmath.mp.dps = 50


def thetas(n, layout):
    if layout == "nodes":
        return [mpmath.pi * j / (n - 1) for j in range(n)]
    return [mpmath.pi * (j + mpmath.mpf(1) / 2) / n for j in range(n)]


def weights(n, layout):
    th = thetas(n, layout)
    a = mpmath.matrix(n, n)
    b = mpmath.matrix(n, 1)
    for k in range(n):
        for j in range(n):
            a[k, j] = mpmath.cos(k * th[j])  # T_k(cos t) = cos(k t)
        b[k] = mpmath.mpf(2) / (1 - k * k) if k % 2 == 0 else 0
    w = mpmath.lu_solve(a, b)
    return [mpmath.nstr(w[j], 25) for j in range(n)]


def main():
    cases = []
    for layout in ("nodes", "cells"):
        for n in (2, 5, 8, 9, 16, 33):
            cases.append({"layout": layout, "n": n, "weights": weights(n, layout)})
    out = {
        "generator": "tests/reference/io_equiangular_weights.py",
        "library": f"mpmath {mpmath.__version__}",
        "precision_digits": mpmath.mp.dps,
        "cases": cases,
    }
    here = os.path.dirname(os.path.abspath(__file__))
    path = os.path.join(here, "..", "fixtures", "io", "equiangular_weights.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
