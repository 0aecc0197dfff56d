#!/usr/bin/env python3
"""Interoperability check: kugel's NetCDF files read by the reference NetCDF C library
(netCDF4-python wheels bundle it), and awkward files written by that library analysed by kugel.

Uses only the standard library, netCDF4 and numpy. Values are checked against closed-form
fields (fully normalised P_lm for l <= 3, written out below) and against numpy's own
Gauss-Legendre nodes. Exits non-zero with a message for every failed check.

    python3 tests/interop/check_netcdf.py --kugel target/debug/kugel
"""
import argparse
import math
import os
import subprocess
import sys
import tempfile

import netCDF4
import numpy as np

FAILURES = []


def check(cond, message):
    if not cond:
        FAILURES.append(message)
        print("FAIL: " + message)
    return cond


# (l, m, C, S) of the closed-form test model, geodesy (4 pi) normalisation, no CS phase
TERMS = [
    (0, 0, 1.25, 0.0),
    (1, 0, 0.4, 0.0),
    (1, 1, -0.3, 0.25),
    (2, 0, 0.2, 0.0),
    (2, 1, 0.1, -0.15),
    (2, 2, 0.05, 0.3),
    (3, 1, -0.07, 0.02),
    (3, 3, 0.04, -0.01),
]
LMAX = 3


def pbar(l, m, t, u):
    """Fully normalised associated Legendre functions for l <= 3 (t = cos colat, u = sin colat)."""
    table = {
        (0, 0): lambda: np.ones_like(t),
        (1, 0): lambda: math.sqrt(3) * t,
        (1, 1): lambda: math.sqrt(3) * u,
        (2, 0): lambda: math.sqrt(5) * (3 * t * t - 1) / 2,
        (2, 1): lambda: math.sqrt(15) * t * u,
        (2, 2): lambda: math.sqrt(15) / 2 * u * u,
        (3, 0): lambda: math.sqrt(7) * (5 * t ** 3 - 3 * t) / 2,
        (3, 1): lambda: math.sqrt(42) / 4 * u * (5 * t * t - 1),
        (3, 2): lambda: math.sqrt(105) / 2 * t * u * u,
        (3, 3): lambda: math.sqrt(70) / 4 * u ** 3,
    }
    return table[(l, m)]()


def field(lat_deg, lon_deg):
    lat = np.radians(np.asarray(lat_deg, dtype=float))[:, None]
    lon = np.radians(np.asarray(lon_deg, dtype=float))[None, :]
    t, u = np.sin(lat), np.cos(lat)
    f = np.zeros((lat.shape[0], lon.shape[1]))
    for l, m, c, s in TERMS:
        f = f + pbar(l, m, t, u) * (c * np.cos(m * lon) + s * np.sin(m * lon))
    return f


def expected_coefficient(l, m):
    for tl, tm, c, s in TERMS:
        if (tl, tm) == (l, m):
            return c, s
    return 0.0, 0.0


def run(kugel, *args, expect_ok=True):
    cmd = [kugel, "--quiet", *args]
    p = subprocess.run(cmd, capture_output=True, text=True)
    if expect_ok:
        check(p.returncode == 0, "command failed (%d): %s\n%s" % (p.returncode, " ".join(cmd), p.stderr))
    return p


def check_cf_globals(ds, name):
    attrs = ds.ncattrs()
    check(getattr(ds, "Conventions", "") == "CF-1.8", "%s: Conventions is not CF-1.8" % name)
    for a in ("title", "history", "source"):
        check(a in attrs, "%s: global attribute '%s' missing" % (name, a))
    check(str(getattr(ds, "source", "")).startswith("kugel "), "%s: source does not name kugel" % name)


def check_model_file(path, norm_factor=lambda l, m: 1.0, normalization="geodesy"):
    name = os.path.basename(path)
    with netCDF4.Dataset(path) as ds:
        check(ds.data_model == "NETCDF4", "%s: data model %s, expected NETCDF4" % (name, ds.data_model))
        check_cf_globals(ds, name)
        check(ds.dimensions["degree"].size == LMAX + 1, "%s: degree dimension size" % name)
        check(ds.dimensions["order"].size == LMAX + 1, "%s: order dimension size" % name)
        check(list(ds.variables["degree"][:]) == list(range(LMAX + 1)), "%s: degree coordinate" % name)
        check(ds.normalization == normalization, "%s: normalization %s" % (name, ds.normalization))
        check(int(ds.condon_shortley_phase) == 0, "%s: condon_shortley_phase" % name)
        check(float(ds.reference_radius_m) == 6378137.0, "%s: reference_radius_m" % name)
        check(int(ds.lmax) == LMAX, "%s: lmax" % name)
        check(hasattr(ds, "units"), "%s: units missing" % name)
        c = ds.variables["C"][:]
        s = ds.variables["S"][:]
        check(ds.variables["C"].dimensions == ("degree", "order"), "%s: C dimensions" % name)
        for l in range(LMAX + 1):
            for m in range(LMAX + 1):
                if m > l:
                    check(c[l, m] == 0 and s[l, m] == 0, "%s: C/S[%d,%d] with m > l not zero" % (name, l, m))
                    continue
                ce, se = expected_coefficient(l, m)
                f = norm_factor(l, m)
                check(abs(c[l, m] - ce * f) <= 1e-14 * max(1, abs(ce * f)), "%s: C[%d,%d] = %r, expected %r" % (name, l, m, c[l, m], ce * f))
                check(abs(s[l, m] - se * f) <= 1e-14 * max(1, abs(se * f)), "%s: S[%d,%d] = %r, expected %r" % (name, l, m, s[l, m], se * f))


def check_grid_file(path, tol, kind, lon_start, dtype):
    name = os.path.basename(path)
    with netCDF4.Dataset(path) as ds:
        check(ds.data_model == "NETCDF4", "%s: data model %s" % (name, ds.data_model))
        check_cf_globals(ds, name)
        lat = ds.variables["lat"]
        lon = ds.variables["lon"]
        for var, units, std, axis in ((lat, "degrees_north", "latitude", "Y"), (lon, "degrees_east", "longitude", "X")):
            check(var.units == units, "%s: %s units %s" % (name, var.name, var.units))
            check(var.standard_name == std, "%s: %s standard_name" % (name, var.name))
            check(var.axis == axis, "%s: %s axis" % (name, var.name))
            check(hasattr(var, "long_name"), "%s: %s long_name" % (name, var.name))
        la = lat[:].astype(float)
        lo = lon[:].astype(float)
        check(np.all(np.diff(la) > 0), "%s: latitude not ascending" % name)
        check(np.all(np.diff(lo) > 0), "%s: longitude not ascending" % name)
        check(lo[0] >= lon_start and lo[-1] < lon_start + 360, "%s: longitudes %r..%r outside [%r, %r)" % (name, lo[0], lo[-1], lon_start, lon_start + 360))
        if kind == "gauss":
            x, _ = np.polynomial.legendre.leggauss(len(la))
            ref = np.degrees(np.arcsin(x))
            check(np.max(np.abs(la - ref)) < 1e-10, "%s: latitudes differ from numpy's Gauss-Legendre nodes by %g" % (name, np.max(np.abs(la - ref))))
        else:
            step = 180.0 / (len(la) - 1)
            check(abs(la[0] + 90) < 1e-12 and abs(la[-1] - 90) < 1e-12, "%s: regular grid lacks the poles" % name)
            check(np.max(np.abs(np.diff(la) - step)) < 1e-9, "%s: regular latitude spacing" % name)
        v = ds.variables["value"]
        check(v.dtype == np.dtype(dtype), "%s: value dtype %s, expected %s" % (name, v.dtype, dtype))
        check(hasattr(v, "units") and hasattr(v, "long_name"), "%s: value lacks units/long_name" % name)
        check(v.filters().get("zlib", False), "%s: value is not deflate-compressed" % name)
        data = np.ma.filled(v[:].astype(float), np.nan)
        err = np.nanmax(np.abs(data - field(la, lo)))
        check(np.all(np.isfinite(data)), "%s: unexpected masked cells" % name)
        check(err < tol, "%s: values differ from the closed-form field by %g (tolerance %g)" % (name, err, tol))


def check_model_against_terms(path, tol, name):
    with netCDF4.Dataset(path) as ds:
        c = ds.variables["C"][:]
        s = ds.variables["S"][:]
        lmax = ds.dimensions["degree"].size - 1
        worst = 0.0
        for l in range(lmax + 1):
            for m in range(l + 1):
                ce, se = expected_coefficient(l, m)
                worst = max(worst, abs(c[l, m] - ce), abs(s[l, m] - se))
        check(worst < tol, "%s: analysed coefficients differ from the closed form by %g (tolerance %g)" % (name, worst, tol))


def write_awkward_grid(path, masked=False, fmt="NETCDF4", cells=False):
    """Descending latitude, -180..180 longitude with the wrap column, int16 packing, a fill
    value, and a leading time dimension of length 1 — written by the C library."""
    if cells:
        lat = 89.0 - 2.0 * np.arange(90)
        lon = -179.0 + 2.0 * np.arange(180)
    else:
        lat = 90.0 - 2.5 * np.arange(73)
        lon = -180.0 + 2.5 * np.arange(145)
    with netCDF4.Dataset(path, "w", format=fmt) as ds:
        ds.createDimension("time", 1)
        ds.createDimension("latitude", len(lat))
        ds.createDimension("longitude", len(lon))
        t = ds.createVariable("time", "f8", ("time",))
        t.units = "days since 2000-01-01"
        t[:] = [0.0]
        la = ds.createVariable("latitude", "f4", ("latitude",))
        la.units = "degrees_north"
        la[:] = lat
        lo = ds.createVariable("longitude", "f8", ("longitude",))
        lo.standard_name = "longitude"
        lo[:] = lon
        v = ds.createVariable("surface", "i2", ("time", "latitude", "longitude"), fill_value=np.int16(-32767))
        v.scale_factor = 1e-4
        v.add_offset = 1.0
        v.units = "m"
        v.long_name = "closed-form test surface"
        data = field(lat, lon)
        if masked:
            data = np.ma.masked_array(data, mask=np.zeros_like(data, dtype=bool))
            data[10, 20] = np.ma.masked
        v[0, :, :] = data
        # a second variable referenced as ancillary must not be picked
        n = ds.createVariable("surface_count", "i4", ("latitude", "longitude"))
        n[:] = np.ones((len(lat), len(lon)), dtype=np.int32)
        v.ancillary_variables = "surface_count"


def check_spectrum(kugel, tmp, model_nc):
    s_nc = os.path.join(tmp, "spectrum.nc")
    s_csv = os.path.join(tmp, "spectrum.csv")
    p = run(kugel, "spectrum", model_nc, "-o", s_nc, "--csv", s_csv)
    if p.returncode != 0:
        return
    expected = np.zeros(LMAX + 1)
    for l, m, c, s in TERMS:
        expected[l] += c * c + s * s
    with netCDF4.Dataset(s_nc) as ds:
        check_cf_globals(ds, "spectrum.nc")
        check("degree" in ds.dimensions, "spectrum.nc: no 'degree' dimension")
        deg = ds.variables["degree"][:]
        check(list(deg) == list(range(len(deg))), "spectrum.nc: degree coordinate is not 0..L")
        found = None
        for name, var in ds.variables.items():
            if var.dimensions == ("degree",) and name != "degree":
                check(hasattr(var, "units"), "spectrum.nc: variable %s lacks units" % name)
                vals = np.ma.filled(var[:].astype(float), np.nan)
                if len(vals) == LMAX + 1 and np.allclose(vals, expected, rtol=1e-12, atol=0):
                    found = name
        check(found is not None, "spectrum.nc: no variable equals the closed-form degree variance %s" % expected)
    with open(s_csv) as f:
        rows = [r for r in f.read().splitlines() if r and not r.startswith("#")]
    header = rows[0].split(",")
    check(header[0] == "degree", "spectrum.csv: first column is %r, not degree" % header[0])
    if found is not None and found in header:
        k = header.index(found)
        vals = [float(r.split(",")[k]) for r in rows[1:]]
        check(np.allclose(vals, expected, rtol=1e-12), "spectrum.csv: column %s differs from the NetCDF file" % found)
    else:
        check(False, "spectrum.csv: no column named like the degree-variance variable %r" % found)


def check_complex_file(kugel, tmp, model_nc):
    """`convert --form complex` to NetCDF and `rotate` of the complex file (docs/conventions.md
    section 8): attributes, the order axis -L..L, empty cells |m| > l, and values from the
    closed-form relation a_lm = (-1)^m sqrt(4 pi) (C - iS)/sqrt(2), a_l,-m = sqrt(4 pi) (C + iS)/sqrt(2)
    for orthonormal complex harmonics with the Condon-Shortley phase (N_geodesy / N_orthonormal
    = sqrt(4 pi), docs/conventions.md section 2)."""
    cx = os.path.join(tmp, "complex.nc")
    run(kugel, "convert", model_nc, cx, "--form", "complex", "--normalization", "orthonormal",
        "--condon-shortley", "on")
    k = math.sqrt(4 * math.pi)
    h = 1 / math.sqrt(2)

    def expected(l, m):
        c, s = expected_coefficient(l, abs(m))
        if m == 0:
            return complex(k * c, 0.0)
        if m > 0:
            return (-1) ** m * k * h * complex(c, -s)
        return k * h * complex(c, s)

    with netCDF4.Dataset(cx) as ds:
        name = "complex.nc"
        check(ds.data_model == "NETCDF4", "%s: data model %s" % (name, ds.data_model))
        check_cf_globals(ds, name)
        check(ds.coefficient_form == "complex", "%s: coefficient_form %r" % (name, ds.coefficient_form))
        check(ds.normalization == "orthonormal", "%s: normalization %s" % (name, ds.normalization))
        check(int(ds.condon_shortley_phase) == 1, "%s: condon_shortley_phase" % name)
        check(float(ds.reference_radius_m) == 6378137.0, "%s: reference_radius_m" % name)
        check(int(ds.lmax) == LMAX, "%s: lmax" % name)
        check(ds.dimensions["order"].size == 2 * LMAX + 1, "%s: order dimension size" % name)
        check(list(ds.variables["order"][:]) == list(range(-LMAX, LMAX + 1)), "%s: order coordinate" % name)
        re = np.ma.filled(ds.variables["a_real"][:].astype(float), np.nan)
        im = np.ma.filled(ds.variables["a_imag"][:].astype(float), np.nan)
        check(ds.variables["a_real"].dimensions == ("degree", "order"), "%s: a_real dimensions" % name)
        for l in range(LMAX + 1):
            for m in range(-LMAX, LMAX + 1):
                j = m + LMAX
                if abs(m) > l:
                    check(np.isnan(re[l, j]) and np.isnan(im[l, j]), "%s: cell (%d,%d) with |m| > l not empty" % (name, l, m))
                    continue
                want = expected(l, m)
                got = complex(re[l, j], im[l, j])
                check(abs(got - want) <= 1e-14 * max(1.0, abs(want)), "%s: a[%d,%d] = %r, expected %r" % (name, l, m, got, want))
    # a turn by 30 degrees about the polar axis multiplies a_lm by exp(-i m 30 deg) (rotation
    # convention of docs/conventions.md, D = exp(-i m' alpha) d(beta) exp(-i m gamma), d(0) = 1);
    # a complex input gives a complex output
    rot = os.path.join(tmp, "complex_rotated.nc")
    run(kugel, "rotate", cx, "-o", rot, "--euler", "30,0,0")
    with netCDF4.Dataset(rot) as ds:
        name = "complex_rotated.nc"
        check(ds.coefficient_form == "complex", "%s: rotate did not keep the complex form" % name)
        re = np.ma.filled(ds.variables["a_real"][:].astype(float), np.nan)
        im = np.ma.filled(ds.variables["a_imag"][:].astype(float), np.nan)
        for l, m in ((2, 1), (3, -3), (1, 0)):
            want = expected(l, m) * complex(math.cos(m * math.radians(30)), -math.sin(m * math.radians(30)))
            got = complex(re[l, m + LMAX], im[l, m + LMAX])
            check(abs(got - want) <= 1e-12 * max(1.0, abs(want)), "%s: a[%d,%d] = %r, expected %r" % (name, l, m, got, want))


def main():
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--kugel", required=True, help="path to the kugel binary")
    ap.add_argument("--skip-spectrum", action="store_true", help="leave out the `kugel spectrum` files")
    args = ap.parse_args()
    kugel = os.path.abspath(args.kugel)
    print("netCDF4 %s, NetCDF C library %s, numpy %s" % (netCDF4.__version__, netCDF4.getlibversion().split()[0], np.__version__))
    with tempfile.TemporaryDirectory() as tmp:
        table = os.path.join(tmp, "model.txt")
        with open(table, "w") as f:
            f.write("# closed-form interop model\nnormalization = geodesy\nreference_radius_m = 6378137\nunits = m\n")
            for l, m, c, s in TERMS:
                f.write("%d %d %r %r\n" % (l, m, c, s))
            f.write("3 0 0 0\n")
        model = os.path.join(tmp, "model.nc")
        run(kugel, "convert", table, model)
        check_model_file(model)
        schmidt = os.path.join(tmp, "model_schmidt.nc")
        run(kugel, "convert", model, schmidt, "--normalization", "schmidt")
        # geodesy -> Schmidt multiplies by sqrt(2l+1) (docs/conventions.md section 2)
        check_model_file(schmidt, lambda l, m: math.sqrt(2 * l + 1), "schmidt")
        check_complex_file(kugel, tmp, model)

        regular = os.path.join(tmp, "regular.nc")
        run(kugel, "synthesize", model, "-o", regular, "--grid", "regular:2")
        check_grid_file(regular, 1e-12, "regular", 0.0, "f8")
        gauss = os.path.join(tmp, "gauss.nc")
        run(kugel, "synthesize", model, "-o", gauss, "--lmax", "12", "--float32", "--lon-range", "-180-180")
        check_grid_file(gauss, 5e-6, "gauss", -180.0, "f4")

        back = os.path.join(tmp, "back_regular.nc")
        run(kugel, "analyze", regular, "--lmax", "10", "-o", back)
        check_model_against_terms(back, 1e-12, "analysis of regular.nc")
        back = os.path.join(tmp, "back_gauss.nc")
        run(kugel, "analyze", gauss, "--lmax", "12", "-o", back)
        check_model_against_terms(back, 1e-6, "analysis of gauss.nc (float32)")

        for fmt, cells in (("NETCDF4", False), ("NETCDF3_CLASSIC", True)):
            awkward = os.path.join(tmp, "awkward_%s.nc" % fmt)
            write_awkward_grid(awkward, fmt=fmt, cells=cells)
            out = os.path.join(tmp, "awkward_%s_model.nc" % fmt)
            run(kugel, "analyze", awkward, "--lmax", "8", "-o", out)
            if os.path.exists(out):
                # int16 packing with scale 1e-4: rounding <= 5e-5 per cell
                check_model_against_terms(out, 1e-4, "analysis of %s awkward grid" % fmt)
        holes = os.path.join(tmp, "holes.nc")
        write_awkward_grid(holes, masked=True)
        out = os.path.join(tmp, "holes_model.nc")
        p = run(kugel, "analyze", holes, "--lmax", "8", "-o", out, expect_ok=False)
        check(p.returncode == 3, "masked grid: exit code %d, expected 3" % p.returncode)
        check("--gaps" in p.stderr and "holes.nc" in p.stderr, "masked grid: message does not name the file and the gap policies: %r" % p.stderr)
        check(not os.path.exists(out), "masked grid: a partial output file was left behind")
        leftovers = [f for f in os.listdir(tmp) if "kugel-tmp" in f]
        check(not leftovers, "temporary files left behind: %s" % leftovers)

        if not args.skip_spectrum:
            check_spectrum(kugel, tmp, model)
    if FAILURES:
        print("interop check: %d failure(s)" % len(FAILURES))
        sys.exit(1)
    print("interop check: all passed")


if __name__ == "__main__":
    main()
