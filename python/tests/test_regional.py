"""Rotation, windows, localised spectra and complex coefficients: the same numbers as the
command line (bit for bit, against the `kugel` binary), and closed forms with their sources."""

import numpy as np
import pytest
import xarray as xr

import kugel
from conftest import random_model


def _open(path):
    return xr.open_dataset(path, engine="netcdf4")


def test_rotation_matches_the_command_line(tmp_path, kugel_cli, model30):
    path = tmp_path / "model.nc"
    model30.to_netcdf(path)
    cases = (
        (("--pole", "35,-120", "--azimuth", "17"), dict(pole=(35.0, -120.0), azimuth_deg=17.0)),
        (("--pole", "-12.5,200"), dict(pole=(-12.5, 200.0))),
        (("--euler", "10,45,-30"), dict(euler=(10.0, 45.0, -30.0))),
    )
    for k, (args, kwargs) in enumerate(cases):
        out = tmp_path / f"rotated{k}.nc"
        kugel_cli("rotate", path, "-o", out, *args)
        cli = kugel.read_model(out)
        py = kugel.rotate(model30, **kwargs)
        assert np.array_equal(py.C, cli.C) and np.array_equal(py.S, cli.S), args
        assert py.attributes["rotation_euler_zyz_deg"] == cli.attributes["rotation_euler_zyz_deg"]
        assert py.normalization == model30.normalization


def test_rotation_moves_the_chosen_point_to_the_pole():
    # g(R p) = f(p) (Edmonds 1957, Angular Momentum in Quantum Mechanics, §4.1; the rotation
    # convention of docs/conventions.md §9): after moving (lat, lon) to the north pole, the
    # value at the pole is the old value at (lat, lon), and the old pole lies at colatitude
    # 90° − lat on meridian 180° + azimuth.
    model = random_model(12, seed=21)
    lat, lon, azimuth = 35.0, -120.0, 17.0
    turned = kugel.rotate(model, pole=(lat, lon), azimuth_deg=azimuth)
    at_point = kugel.evaluate(model, [lat], [lon])
    np.testing.assert_allclose(kugel.evaluate(turned, [90.0], [0.0]), at_point, rtol=1e-12)
    old_pole = kugel.evaluate(model, [90.0], [0.0])
    np.testing.assert_allclose(kugel.evaluate(turned, [lat], [180.0 + azimuth]), old_pole,
                               rtol=1e-12)
    # the inverse of euler=(a, b, g) is euler=(-g, -b, -a) (same source)
    there = kugel.rotate(model, euler=(10.0, 45.0, -30.0))
    back = kugel.rotate(there, euler=(30.0, -45.0, -10.0))
    np.testing.assert_allclose(back.C, model.C, atol=1e-13)
    np.testing.assert_allclose(back.S, model.S, atol=1e-13)


def test_rotation_drops_sigmas_with_a_warning(model30):
    sigma = np.tril(np.full(model30.C.shape, 1e-3))
    with_sigma = kugel.Model(model30.C, model30.S, C_sigma=sigma, S_sigma=sigma)
    with pytest.warns(UserWarning, match="standard errors were dropped"):
        turned = kugel.rotate(with_sigma, euler=(0.0, 20.0, 0.0))
    assert turned.C_sigma is None


def test_tapers_match_the_command_line(tmp_path, kugel_cli):
    out = tmp_path / "tapers.nc"
    kugel_cli("tapers", "--cap-radius-deg", "25", "--lmax", "8", "-o", out,
              "--centre", "30,-60", "--keep", "12")
    cli = _open(out)
    py = kugel.tapers(25.0, 8, centre=(30.0, -60.0), keep=12)
    assert py["C"].dims == ("taper", "degree", "order") and py["C"].shape == (12, 9, 9)
    for name in ("concentration", "C", "S"):
        assert np.array_equal(py[name].values, cli[name].values), name
    for name in ("taper", "degree", "order"):
        assert np.array_equal(py[name].values, cli[name].values), name
    for key in ("shannon_number", "region", "centre_lat_deg", "centre_lon_deg", "lmax_window",
                "windows_total", "normalization", "condon_shortley_phase"):
        assert py.attrs[key] == cli.attrs[key], key


def test_tapers_concentrations_sum_to_the_shannon_number():
    # Σ of all (L_W + 1)² concentrations = N = (L_W + 1)²(1 − cos θ₀)/2 (Simons, Dahlen &
    # Wieczorek 2006, SIAM Review 48:504–536, the spherical Shannon number); each window has
    # unit norm in geodesy normalisation, Σ (C² + S²) = 1 (its mean square over the sphere).
    lw, radius = 6, 40.0
    windows = kugel.tapers(radius, lw)
    expected = (lw + 1) ** 2 * (1 - np.cos(np.radians(radius))) / 2
    assert windows.sizes["taper"] == (lw + 1) ** 2
    np.testing.assert_allclose(windows["concentration"].sum(), expected, rtol=1e-12)
    np.testing.assert_allclose(windows.attrs["shannon_number"], expected, rtol=1e-14)
    norms = (windows["C"] ** 2 + windows["S"] ** 2).sum(("degree", "order"))
    np.testing.assert_allclose(norms, 1.0, rtol=1e-12)
    c = windows["concentration"].values
    assert np.all(np.diff(c) <= 0) and c[0] <= 1.0 and c[-1] >= 0.0


def test_localised_spectrum_and_comparison_match_the_command_line(tmp_path, kugel_cli, model30):
    other = random_model(30, seed=8, reference_radius_m=6_371_000.0, units="m")
    a, b = tmp_path / "a.nc", tmp_path / "b.nc"
    model30.to_netcdf(a)
    other.to_netcdf(b)
    region = "cap:30,-60,40"
    kugel_cli("spectrum", a, "--region", region, "--window-lmax", "6", "-o", tmp_path / "ls.nc")
    cli = _open(tmp_path / "ls.nc")
    py = kugel.spectrum(model30, region=region, window_lmax=6)
    names = ("localised_degree_variance", "localised_degree_variance_sigma",
             "expected_localised_degree_variance", "reliable")
    for name in names:
        assert np.array_equal(py[name].values, cli[name].values, equal_nan=True), name
    assert py.attrs["shannon_number"] == cli.attrs["shannon_number"]
    assert py.attrs["region"] == cli.attrs["region"] == region
    assert list(py["reliable"].values[:6]) == [0] * 6 and py["reliable"].values[6] == 1

    kugel_cli("spectrum", a, "--region", region, "--window-lmax", "5", "--tapers", "3",
              "-o", tmp_path / "ls3.nc")
    cli = _open(tmp_path / "ls3.nc")
    py = kugel.spectrum(model30, region=region, window_lmax=5, tapers=3)
    assert py.attrs["taper_count"] == cli.attrs["taper_count"]
    assert np.array_equal(py["localised_degree_variance"].values,
                          cli["localised_degree_variance"].values)

    kugel_cli("compare", a, b, "--region", region, "--window-lmax", "6", "-o", tmp_path / "lc.nc")
    cli = _open(tmp_path / "lc.nc")
    py = kugel.compare(model30, other, region=region, window_lmax=6)
    shared = set(py.data_vars) & set(cli.data_vars)
    assert {"localised_cross_power", "localised_correlation", "localised_admittance",
            "localised_correlation_sigma", "reliable"} <= shared, shared
    for name in shared:
        assert np.array_equal(py[name].values, cli[name].values, equal_nan=True), name


def test_localised_spectrum_of_a_white_field_follows_the_expectation():
    # For a field of flat spectrum the localised estimate is unbiased at the reliable degrees:
    # its expectation (coupling matrix, Wieczorek & Simons 2005, Geophys. J. Int. 162:655–675,
    # eq. 2.11) equals the global degree variance there. The model is an invented one.
    lmax, lw = 60, 8
    model = random_model(lmax, seed=31, decay=0.5)
    spec = kugel.spectrum(model, region="cap:-20,100,50", window_lmax=lw)
    reliable = spec["reliable"].values == 1
    assert reliable.sum() == lmax - 2 * lw + 1
    expected = spec["expected_localised_degree_variance"].values[reliable]
    estimate = spec["localised_degree_variance"].values[reliable]
    sigma = spec["localised_degree_variance_sigma"].values[reliable]
    assert np.all(sigma > 0)
    # the estimate scatters about its expectation by its standard error (a loose bound)
    assert np.median(np.abs(estimate - expected) / sigma) < 3.0


def test_complex_coefficients_match_the_command_line(tmp_path, kugel_cli, model30):
    path = tmp_path / "model.nc"
    model30.to_netcdf(path)
    for norm, phase in (("orthonormal", None), ("schmidt", "off"), ("geodesy", "on")):
        out = tmp_path / f"complex_{norm}.txt"
        args = ["convert", path, out, "--form", "complex", "--normalization", norm]
        if phase:
            args += ["--condon-shortley", phase]
        kugel_cli(*args)
        table = {}
        header = {}
        for line in out.read_text().splitlines():
            if line.startswith("#"):
                continue
            if "=" in line:
                key, value = (t.strip() for t in line.split("=", 1))
                header[key] = value
                continue
            l, m, re, im = line.split()
            table[(int(l), int(m))] = complex(float(re), float(im))
        a, got_norm, got_phase = model30.to_complex(
            norm, None if phase is None else phase == "on")
        assert got_norm == header["normalization"] and int(got_phase) == int(header["condon_shortley_phase"])
        L = model30.lmax
        assert a.shape == (L + 1, 2 * L + 1)
        for (l, m), value in table.items():
            assert a[l, L + m] == value, (norm, l, m)
        assert np.all(a[np.abs(np.arange(-L, L + 1))[None, :] > np.arange(L + 1)[:, None]] == 0)
        # read back as the command line reads a complex table
        back = kugel.Model.from_complex(a, got_norm, got_phase,
                                        reference_radius_m=model30.reference_radius_m,
                                        units=model30.units)
        from_cli = kugel.read_model(out)
        assert np.array_equal(back.C, from_cli.C) and np.array_equal(back.S, from_cli.S), norm
        assert back.normalization == from_cli.normalization


def test_complex_orthonormal_closed_form():
    # A real geodesy C_11 = 1 is the field √3 sin θ cos λ; its orthonormal complex
    # coefficients with the Condon–Shortley phase are a_1,±1 = ∓√(4π)/√2 (DLMF §14.30, the
    # complex orthonormal harmonics; docs/conventions.md §9)
    C = np.zeros((2, 2))
    C[1, 1] = 1.0
    a, norm, phase = kugel.Model(C, np.zeros((2, 2))).to_complex("orthonormal")
    assert norm == "orthonormal" and phase
    root = np.sqrt(4 * np.pi) / np.sqrt(2)
    np.testing.assert_allclose(a[1, 1 + 1], -root, rtol=1e-15)
    np.testing.assert_allclose(a[1, 1 - 1], root, rtol=1e-15)
    assert a[0, 1] == 0 and a[1, 1] == 0
