#!/usr/bin/env python3
"""Reference values of Wigner's small d-functions d^l_{m'm}(β) for the rotation tests
(tests/sht/rotation.rs).

Library: sympy (version printed into the fixture header), function
sympy.physics.quantum.spin.Rotation.d(j, m', m, β), whose convention is
d^j_{m'm}(β) = <j m'| exp(-i β J_y) |j m>; each value is evaluated exactly in closed form and
then printed to 20 significant digits (sympy's evaluation is slow, some ten seconds per value at
l = 20, so the set is small): every m', m for l ≤ 4, and six pairs (both edges, the centre, a
mixed pair) for l = 7, 13 and 20, at two angles, one of them negative.
Output: tests/fixtures/rotate/wigner_d_sympy.txt, lines "l m_prime m beta_rad value".
Rerun (in a virtual environment): python3 -m pip install sympy && python3 tests/reference/rotate_wigner_sympy.py
"""
import os

import sympy
from sympy.physics.quantum.spin import Rotation

BETAS = [sympy.Float("0.7", 40), sympy.Float("-2.3", 40)]
DEGREES = [0, 1, 2, 3, 4, 7, 13, 20]


def pairs(l):
    if l <= 4:
        return [(mp, m) for mp in range(-l, l + 1) for m in range(-l, l + 1)]
    return [(l, l), (l, -l), (0, 0), (l // 3, -(l // 2)), (-1, l - 1), (-l, 2)]


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    out = os.path.join(here, "..", "fixtures", "rotate", "wigner_d_sympy.txt")
    lines = [f"# d^l_(m',m)(beta) from sympy {sympy.__version__} Rotation.d, 40-digit angles",
             "# l m_prime m beta_rad value"]
    for beta in BETAS:
        for l in DEGREES:
            for mp, m in pairs(l):
                v = sympy.re(sympy.N(Rotation.d(l, mp, m, beta).doit(), 30))
                lines.append(f"{l} {mp} {m} {sympy.N(beta, 20)} {sympy.N(v, 20)}")
    with open(out, "w") as f:
        f.write("\n".join(lines) + "\n")
    print(f"wrote {len(lines) - 2} values to {out}")


if __name__ == "__main__":
    main()
