"""The Python package and the command line give the same numbers, bit for bit, on the same
inputs: both call the same library functions (the check is against the `kugel` binary)."""

import csv

import numpy as np
import pytest
import xarray as xr

import kugel
from conftest import random_model


def _open(path):
    return xr.open_dataset(path, engine="netcdf4")


def test_synthesize_matches_the_command_line(tmp_path, kugel_cli, model30):
    path = tmp_path / "model.nc"
    model30.to_netcdf(path)
    for grid, option in (("gauss", "gauss"), (2.0, "regular:2")):
        out = tmp_path / f"map_{option.replace(':', '_')}.nc"
        kugel_cli("synthesize", path, "-o", out, "--grid", option, "--altitude-km", "25",
                  "--filter", "gauss:800")
        cli = _open(out)["value"].values
        py = kugel.synthesize(kugel.read_model(path), grid=grid, altitude_km=25,
                              filter="gauss:800")
        assert py.shape == cli.shape
        assert np.array_equal(py.values, cli), f"grid {option}: max diff {np.abs(py.values - cli).max()}"


def test_gravity_quantities_match_the_command_line(tmp_path, kugel_cli):
    model = random_model(24, seed=3, decay=3.0, reference_radius_m=6_378_137.0,
                         gm_m3_s2=3.986004418e14)
    C = model.C.copy()
    C[0, 0] = 1.0
    C[2, 0] = -4.84165e-4
    model = kugel.Model(C, model.S * 1e-6, reference_radius_m=6_378_137.0,
                        gm_m3_s2=3.986004418e14)
    path = tmp_path / "gravity.nc"
    model.to_netcdf(path)
    out = tmp_path / "anomaly.nc"
    kugel_cli("synthesize", path, "-o", out, "--quantity", "gravity-anomaly,geoid",
              "--normal-field", "grs80", "--grid", "regular:3")
    cli = _open(out)
    py = kugel.synthesize(model, grid=3, quantity="gravity-anomaly,geoid", normal_field="grs80")
    for name in py.data_vars:
        assert np.array_equal(py[name].values, cli[name].values), name
        assert py[name].attrs["units"] == cli[name].attrs["units"]


def test_analyze_matches_the_command_line(tmp_path, kugel_cli, model30):
    path = tmp_path / "model.nc"
    model30.to_netcdf(path)
    grid_file = tmp_path / "map.nc"
    kugel_cli("synthesize", path, "-o", grid_file, "--grid", "regular:2", "--lon-range", "-180-180")
    cli_model = tmp_path / "analysed.nc"
    kugel_cli("analyze", grid_file, "-o", cli_model, "--lmax", "30")
    from_cli = kugel.read_model(cli_model)
    py = kugel.analyze(_open(grid_file)["value"], lmax=30)
    assert np.array_equal(py.C, from_cli.C) and np.array_equal(py.S, from_cli.S)
    assert py.reference_radius_m == from_cli.reference_radius_m
    assert py.units == from_cli.units


def test_complex_netcdf_from_the_command_line_reads_as_the_real_set(tmp_path, kugel_cli, model30):
    # `kugel convert --form complex` to NetCDF, read back by Python through the library's
    # reader: the same field as the real set, and the same complex numbers as to_complex
    path = tmp_path / "model.nc"
    model30.to_netcdf(path)
    complex_file = tmp_path / "complex.nc"
    kugel_cli("convert", path, complex_file, "--form", "complex")
    back = kugel.read_model(complex_file)
    scale = np.abs(model30.C).max()
    assert np.abs(back.C - model30.C).max() <= 4e-16 * scale
    assert np.abs(back.S - model30.S).max() <= 4e-16 * scale
    import netCDF4

    with netCDF4.Dataset(complex_file) as ds:
        assert ds.getncattr("coefficient_form") == "complex"
        a = np.asarray(ds["a_real"][:], dtype=float) + 1j * np.asarray(ds["a_imag"][:], dtype=float)
    mine, _, _ = model30.to_complex()
    filled = ~np.isnan(a.real)
    assert a.shape == mine.shape and np.array_equal(a[filled], mine[filled])


def test_spectrum_compare_filter_match_the_command_line(tmp_path, kugel_cli, model30):
    a = tmp_path / "a.nc"
    b = tmp_path / "b.nc"
    model30.to_netcdf(a)
    other = random_model(30, seed=8, reference_radius_m=6_371_000.0, units="m")
    other.to_netcdf(b)
    kugel_cli("spectrum", a, "-o", tmp_path / "spec.nc", "--fit", "5-30")
    cli = _open(tmp_path / "spec.nc")
    py = kugel.spectrum(model30, fit=(5, 30))
    for name in ("degree_variance", "degree_variance_lower", "power_law_per_coefficient"):
        assert np.array_equal(py[name].values, cli[name].values, equal_nan=True), name

    kugel_cli("compare", a, b, "-o", tmp_path / "cmp.nc")
    cli = _open(tmp_path / "cmp.nc")
    py = kugel.compare(model30, other)
    shared = set(py.data_vars) & set(cli.data_vars)
    assert len(shared) >= 3, shared
    for name in shared:
        assert np.array_equal(py[name].values, cli[name].values, equal_nan=True), name

    kugel_cli("filter", a, "-o", tmp_path / "filtered.nc", "--filter", "lowpass:10-20")
    cli = kugel.read_model(tmp_path / "filtered.nc")
    py = kugel.filter(model30, "lowpass:10-20")
    assert np.array_equal(py.C, cli.C) and np.array_equal(py.S, cli.S)


def test_evaluate_matches_the_command_line(tmp_path, kugel_cli, model30):
    path = tmp_path / "model.nc"
    model30.to_netcdf(path)
    rng = np.random.default_rng(5)
    lat = rng.uniform(-90, 90, 40)
    lon = rng.uniform(-180, 180, 40)
    alt = rng.uniform(0, 400, 40)
    points = tmp_path / "points.csv"
    with open(points, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["lat", "lon", "altitude_km"])
        for row in zip(lat, lon, alt):
            w.writerow([repr(float(v)) for v in row])
    out = tmp_path / "values.csv"
    kugel_cli("evaluate", path, points, "-o", out)
    with open(out) as f:
        rows = list(csv.DictReader(f))
    cli = np.array([float(r["value"]) for r in rows])
    py = kugel.evaluate(model30, lat, lon, alt)
    assert np.array_equal(py, cli)


def test_fit_matches_the_command_line(tmp_path, kugel_cli, model30):
    truth = model30.truncated(6)
    rng = np.random.default_rng(9)
    lat = np.degrees(np.arcsin(rng.uniform(-1, 1, 400)))
    lon = rng.uniform(0, 360, 400)
    value = kugel.evaluate(truth, lat, lon) + rng.normal(0, 1e-3, 400)
    points = tmp_path / "obs.csv"
    with open(points, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["lat", "lon", "value"])
        for row in zip(lat, lon, value):
            w.writerow([repr(float(v)) for v in row])
    kugel_cli("fit", points, "--lmax", "6", "-o", tmp_path / "fit.nc", "--units", "m")
    cli = kugel.read_model(tmp_path / "fit.nc")
    py = kugel.fit(lat, lon, value, 6, units="m")
    assert np.array_equal(py.model.C, cli.C) and np.array_equal(py.model.S, cli.S)
    assert np.array_equal(py.model.C_sigma, cli.C_sigma)
    np.testing.assert_allclose(py.model.C, truth.C, atol=1e-3)


def test_error_messages_are_the_command_lines(tmp_path, kugel_cli):
    missing = tmp_path / "missing.nc"
    done = kugel_cli("spectrum", missing, "-o", tmp_path / "spec.nc", check=False)
    assert done.returncode == 4
    with pytest.raises(OSError) as err:
        kugel.read_model(missing)
    assert str(err.value) in done.stderr
