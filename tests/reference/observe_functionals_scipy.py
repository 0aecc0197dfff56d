"""Reference observations of every fitted functional, forward-modelled independently of kugel,
for tests/observe/functionals.rs.

Gravity: a small disturbing-potential model (dimensionless, 4-pi fully normalised, no
Condon-Shortley phase) with GM and R; magnetic: Schmidt semi-normalised internal Gauss
coefficients (nT) with linear secular variation about an epoch and external degree-1 terms.
Associated Legendre functions come from scipy.special.lpmv (Ferrers' functions with the
Condon-Shortley phase, removed here by (-1)^m), normalised from factorials; the colatitude
derivative uses the unnormalised relation
    sin(t) dP_l^m/dt = l cos(t) P_l^m - (l + m) P_{l-1}^m
(not the relation kugel uses), and the potential's radial derivatives are taken term by term.
Spherical approximation as in kugel's docs/conventions.md section 6:
    T = GM/r sum (R/r)^l sum (C cos + S sin) Pbar,  N = T R^2/GM,
    dg = -dT/dr,  Dg = -dT/dr - 2T/r,  T_rr = d2T/dr2,
    B = -grad V,  V = a sum (a/r)^(l+1) (g cos + h sin) P  +  a sum (r/a)^l (q cos + s sin) P.
Geodetic -> geocentric with pymap3d.geodetic2ecef on GRS80 (a general-purpose geodesy package;
version written in the fixture header).

Rerun (in a venv with numpy, scipy, pymap3d):
    python3 tests/reference/observe_functionals_scipy.py tests/fixtures/observe/functionals
"""
import math
import sys
from pathlib import Path

import numpy as np
import scipy
import scipy.special as sp
import pymap3d

rng = np.random.default_rng(20261202)

R = 2.1e6            # reference radius of the invented body, m
GM = 1.1e13          # m^3 s^-2
LG = 8               # gravity degree
LM = 6               # magnetic degree
LE = 1               # external degree
EPOCH = 2030.0

def ferrers_nophase(l, m, x):
    return (-1.0) ** m * sp.lpmv(m, l, x)

def norm_factor(l, m, kind):
    ratio = math.factorial(l - m) / math.factorial(l + m)
    delta = 1.0 if m == 0 else 2.0
    if kind == "geodesy":
        return math.sqrt(delta * (2 * l + 1) * ratio)
    return math.sqrt(delta * ratio)  # schmidt

def p_and_dtheta(l, m, theta, kind):
    x = math.cos(theta)
    s = math.sin(theta)
    p = ferrers_nophase(l, m, x)
    p_lower = ferrers_nophase(l - 1, m, x) if l - 1 >= m else 0.0
    dp = (l * x * p - (l + m) * p_lower) / s
    n = norm_factor(l, m, kind)
    return n * p, n * dp

def random_model(lmax, scale_of_degree):
    c = {}
    for l in range(0, lmax + 1):
        for m in range(0, l + 1):
            a = scale_of_degree(l)
            c[(l, m)] = (rng.normal() * a, 0.0 if m == 0 else rng.normal() * a)
    return c

grav = random_model(LG, lambda l: 0.0 if l < 2 else 1e-5 / l**2)
mag = random_model(LM, lambda l: 0.0 if l < 1 else 3e4 / 4.0**l)
mag_rate = random_model(LM, lambda l: 0.0 if l < 1 else 30.0 / 3.0**l)
mag_ext = random_model(LE, lambda l: 0.0 if l < 1 else 20.0)

def gravity(r, theta, lam):
    s = R / r
    t = 0.0; dt_dr = 0.0; d2t_dr2 = 0.0
    for (l, m), (cc, ss) in grav.items():
        p, _ = p_and_dtheta(l, m, theta, "geodesy")
        y = (cc * math.cos(m * lam) + ss * math.sin(m * lam)) * p
        # GM/r (R/r)^l = GM/R s^(l+1); d/dr of r^-(l+1) = -(l+1) r^-(l+2)
        base = GM / R * s ** (l + 1) * y
        t += base
        dt_dr += -(l + 1) / r * base
        d2t_dr2 += (l + 1) * (l + 2) / r**2 * base
    return {
        "potential": t,
        "geoid": t * R * R / GM,
        "gravity-disturbance": -dt_dr * 1e5,
        "gravity-anomaly": (-dt_dr - 2.0 * t / r) * 1e5,
        "radial-gradient": d2t_dr2 * 1e9,
    }

def magnetic(r, theta, lam, year, tilt):
    a = R
    br = bt = bl = 0.0
    st = math.sin(theta)
    for (l, m), (g, h) in mag.items():
        if l == 0:
            continue
        gd, hd = mag_rate[(l, m)]
        g = g + gd * (year - EPOCH)
        h = h + hd * (year - EPOCH)
        p, dp = p_and_dtheta(l, m, theta, "schmidt")
        cm, sm = math.cos(m * lam), math.sin(m * lam)
        f = (a / r) ** (l + 2)
        br += (l + 1) * f * (g * cm + h * sm) * p
        bt += -f * (g * cm + h * sm) * dp
        bl += -f * m * (-g * sm + h * cm) * p / st
    for (l, m), (q, s) in mag_ext.items():
        if l == 0:
            continue
        p, dp = p_and_dtheta(l, m, theta, "schmidt")
        cm, sm = math.cos(m * lam), math.sin(m * lam)
        f = (r / a) ** (l - 1)
        br += -l * f * (q * cm + s * sm) * p
        bt += -f * (q * cm + s * sm) * dp
        bl += -f * m * (-q * sm + s * cm) * p / st
    x, y, z = -bt, bl, -br
    # local frame of the geodetic normal: tilted northward by `tilt` about the east axis
    xt = x * math.cos(tilt) + z * math.sin(tilt)
    zt = z * math.cos(tilt) - x * math.sin(tilt)
    return {"br": br, "btheta": bt, "blambda": bl, "x": xt, "y": y, "z": zt,
            "f": math.sqrt(br * br + bt * bt + bl * bl)}

def write_model(path, coeffs, lmax, header):
    with open(path, "w") as fh:
        fh.write(f"# {header}\n")
        fh.write("l,m,c,s\n")
        for l in range(lmax + 1):
            for m in range(l + 1):
                c, s = coeffs[(l, m)]
                fh.write(f"{l},{m},{c!r},{s!r}\n")

def main(out_dir):
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    versions = f"numpy {np.__version__}, scipy {scipy.__version__}, pymap3d {pymap3d.__version__}"
    write_model(out / "gravity_model.csv", grav, LG,
                f"geodesy, R = {R} m, GM = {GM} m3 s-2; {versions}")
    write_model(out / "magnetic_model.csv", mag, LM, f"schmidt nT, a = {R} m; {versions}")
    write_model(out / "magnetic_rates.csv", mag_rate, LM, f"schmidt nT/year, epoch {EPOCH}")
    write_model(out / "magnetic_external.csv", mag_ext, LE, "schmidt nT, external")
    with open(out / "observations.csv", "w") as fh:
        fh.write(f"# forward-modelled by tests/reference/observe_functionals_scipy.py; {versions}\n")
        fh.write("lat,lon,altitude_km,time,quantity,value\n")
        for altitude_km in [0.0, 10.0, 100.0, 250.0, 500.0]:
            for _ in range(6):
                lat = rng.uniform(-85.0, 85.0)
                lon = rng.uniform(-180.0, 180.0)
                year = EPOCH + rng.uniform(-4.0, 4.0)
                r = R + altitude_km * 1e3
                theta = math.radians(90.0 - lat)
                lam = math.radians(lon)
                for q, v in gravity(r, theta, lam).items():
                    fh.write(f"{lat!r},{lon!r},{altitude_km},{year!r},{q},{float(v)!r}\n")
                for q, v in magnetic(r, theta, lam, year, 0.0).items():
                    fh.write(f"{lat!r},{lon!r},{altitude_km},{year!r},{q},{float(v)!r}\n")
    # Geodetic -> geocentric on GRS80 by pymap3d, for kugel's ellipsoid conversion.
    ell = pymap3d.Ellipsoid.from_name("grs80")
    with open(out / "geodetic_grs80.csv", "w") as fh:
        fh.write(f"# pymap3d.geodetic2ecef on GRS80 (a = {ell.semimajor_axis}, b = {ell.semiminor_axis}); {versions}\n")
        fh.write("lat,lon,height_m,radius_m,geocentric_lat\n")
        for lat in [-90.0, -63.5, -30.0, -0.5, 0.0, 12.25, 45.0, 71.0, 89.9, 90.0]:
            for h in [-100.0, 0.0, 1500.0, 400e3]:
                lon = rng.uniform(-180.0, 180.0)
                x, y, z = pymap3d.geodetic2ecef(lat, lon, h, ell=ell, deg=True)
                p = math.hypot(x, y)
                fh.write(f"{lat!r},{lon!r},{h!r},{float(math.sqrt(p*p + z*z))!r},{math.degrees(math.atan2(z, p))!r}\n")

if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else "tests/fixtures/observe/functionals")
