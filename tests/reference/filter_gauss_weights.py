"""Reference Gaussian-filter weights W_l = i_l(b) / i_0(b) for tests/filter_gauss_reference.rs.

The modified spherical Bessel functions are i_l(b) = sqrt(pi / (2b)) I_{l+1/2}(b), so
W_l = I_{l+1/2}(b) / I_{1/2}(b), evaluated with mpmath.besseli at 60 significant digits
(library and version are written into the fixture header). b = ln 2 / (1 - cos(r/R)) is
computed in the same precision from the half-width r and the sphere radius R.

Rerun:  python3 tests/reference/filter_gauss_weights.py > tests/fixtures/filter/gauss_weights.csv
"""
import mpmath

mpmath.mp.dps = 60

CASES = [
    # (half-width km, sphere radius km)
    (100.0, 6371.0),
    (300.0, 6371.0),
    (1000.0, 6371.0),
    (150.0, 2000.0),
    (500.0, 2000.0),
    (50.0, 1737.4),
    (5.0, 6371.0),   # narrow kernels: b ~ 2e6 and 6e7, far above the degrees checked
    (1.0, 6371.0),
]
DEGREES = [0, 1, 2, 3, 5, 10, 30, 60, 100, 200, 400, 700, 1000, 1500, 2000, 3000, 5000, 10800]

print(f"# Gaussian filter weights W_l = I_(l+1/2)(b)/I_(1/2)(b); mpmath {mpmath.__version__}, mp.dps = {mpmath.mp.dps}")
print("half_width_km,radius_km,b,degree,weight")
for r_km, big_r_km in CASES:
    r = mpmath.mpf(r_km) / mpmath.mpf(big_r_km)
    b = mpmath.log(2) / (1 - mpmath.cos(r))
    i0 = mpmath.besseli(mpmath.mpf(1) / 2, b)
    for l in DEGREES:
        w = mpmath.besseli(l + mpmath.mpf(1) / 2, b) / i0
        print(f"{r_km},{big_r_km},{mpmath.nstr(b, 20)},{l},{mpmath.nstr(w, 20)}")
