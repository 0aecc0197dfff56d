#!/usr/bin/env python3
"""Reference quantiles of the chi-squared, Student-t and F distributions for kugel's tests.

Library: scipy.stats (version printed into the fixture header), numpy.
Run from the repository root:
    python3 tests/reference/spectral_quantiles_scipy.py > tests/fixtures/spectral/quantiles_scipy.csv
Columns: distribution, dof1, dof2 (0 when unused), probability, quantile (repr, 17 digits).
"""
import scipy
import numpy
from scipy import stats

DOFS = [1, 2, 3, 4, 5, 6, 7, 9, 10, 11, 15, 21, 31, 41, 51, 75, 101, 151, 201, 301, 501,
        1001, 2001, 3001, 5001, 7501, 10001, 15001, 20001]
LEVELS = [1e-6, 0.001, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 0.75, 0.9, 0.95, 0.975,
          0.99, 0.995, 0.999, 0.999999]
F_PAIRS = [(d, d) for d in DOFS] + [(1, 5), (5, 1), (3, 201), (201, 3), (41, 7), (1001, 21),
                                     (20001, 101), (2, 2)]


def main():
    print(f"# scipy {scipy.__version__}, numpy {numpy.__version__}; scipy.stats ppf values")
    print("distribution,dof1,dof2,probability,quantile")
    for d in DOFS:
        for p in LEVELS:
            print(f"chi2,{d},0,{p!r},{float(stats.chi2.ppf(p, d))!r}")
            print(f"t,{d},0,{p!r},{float(stats.t.ppf(p, d))!r}")
    for d1, d2 in F_PAIRS:
        for p in LEVELS:
            print(f"f,{d1},{d2},{p!r},{float(stats.f.ppf(p, d1, d2))!r}")


if __name__ == "__main__":
    main()
