#!/usr/bin/env python3
"""Reference values of Wigner 3j symbols (j1 j2 j3; m1 m2 m3) for the coupling tests
(tests/spectral/regional.rs).

Library: sympy (version printed into the fixture header), function
sympy.physics.wigner.wigner_3j, exact (square roots of rationals), printed to 20 digits.
Degrees to 60: for a spread of (j2, j3, m2, m3), every j1 from max(|j2-j3|, |m2+m3|) to j2+j3.
Output: tests/fixtures/rotate/wigner_3j_sympy.txt, lines "j1 j2 j3 m1 m2 m3 value".
Rerun (in a virtual environment): python3 -m pip install sympy && python3 tests/reference/rotate_wigner_3j_sympy.py
"""
import os

import sympy
from sympy.physics.wigner import wigner_3j

CASES = [
    (0, 0, 0, 0), (1, 1, 0, 0), (3, 5, 0, 0), (10, 7, 2, -1), (20, 20, 0, 0), (20, 20, 5, -5),
    (30, 12, -4, 9), (41, 60, 0, 0), (60, 60, 17, 3), (60, 55, -30, 40), (45, 8, 44, -8),
    (59, 60, 1, 0), (2, 60, 0, 0), (33, 33, 33, -33),
]


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    out = os.path.join(here, "..", "fixtures", "rotate", "wigner_3j_sympy.txt")
    lines = [f"# Wigner 3j symbols from sympy {sympy.__version__} wigner_3j, exact, 20 digits",
             "# j1 j2 j3 m1 m2 m3 value"]
    for j2, j3, m2, m3 in CASES:
        m1 = -m2 - m3
        jmin = max(abs(j2 - j3), abs(m1))
        for j1 in range(jmin, j2 + j3 + 1):
            v = wigner_3j(j1, j2, j3, m1, m2, m3)
            lines.append(f"{j1} {j2} {j3} {m1} {m2} {m3} {sympy.N(v, 20)}")
    with open(out, "w") as f:
        f.write("\n".join(lines) + "\n")
    print(f"wrote {len(lines) - 2} values to {out}")


if __name__ == "__main__":
    main()
