"""Round trips: grid → model → grid, every grid layout the reader accepts, files, conventions."""

import pickle

import numpy as np
import pytest
import xarray as xr

import kugel
from conftest import random_model


def test_gauss_round_trip_numpy_and_xarray(model30):
    grid = kugel.synthesize(model30)
    assert grid.dims == ("lat", "lon") and grid.shape[0] == 31
    again = kugel.analyze(grid)
    np.testing.assert_allclose(again.C, model30.C, atol=1e-12)
    np.testing.assert_allclose(again.S, model30.S, atol=1e-12)
    from_numpy = kugel.analyze(grid.values, grid="gauss")
    # the same engine field and quadrature: identical numbers
    assert np.array_equal(from_numpy.C, again.C) and np.array_equal(from_numpy.S, again.S)


def test_every_layout_gives_the_model_back(model30):
    base = kugel.synthesize(model30, grid=2.0)  # node-registered, poles included, 91 x 180
    reference = kugel.analyze(base, lmax=30)
    np.testing.assert_allclose(reference.C, model30.C, atol=1e-11)

    # the same cells in another order or convention give the same engine field: same bits
    south_north = base.isel(lat=slice(None, None, -1))
    lon_first = base.transpose("lon", "lat")
    renamed = base.rename(lat="latitude", lon="longitude")
    for variant in (south_north, lon_first, renamed):
        got = kugel.analyze(variant, lmax=30)
        assert np.array_equal(got.C, reference.C) and np.array_equal(got.S, reference.S)

    # -180..180 with the wrap-around column repeated; descending longitudes
    shifted = base.assign_coords(lon=((base.lon + 180) % 360) - 180).sortby("lon")
    wrapped = xr.concat([shifted, shifted.isel(lon=[0]).assign_coords(lon=[180.0])], dim="lon")
    for variant in (shifted, wrapped, base.isel(lon=slice(None, None, -1))):
        got = kugel.analyze(variant, lmax=30)
        np.testing.assert_allclose(got.C, model30.C, atol=1e-11)
        np.testing.assert_allclose(got.S, model30.S, atol=1e-11)

    # cell-centred (Fejér) grid: values at the cell centres
    lat = 89.0 - 2.0 * np.arange(90)
    lon = 1.0 + 2.0 * np.arange(180)
    lat2, lon2 = np.meshgrid(lat, lon, indexing="ij")
    cells = kugel.evaluate(model30, lat2, lon2)
    da = xr.DataArray(cells, dims=("lat", "lon"), coords={"lat": lat, "lon": lon})
    got = kugel.analyze(da, lmax=30)
    np.testing.assert_allclose(got.C, model30.C, atol=1e-10)


def test_reference_radius_travels_with_the_map():
    model = random_model(8, reference_radius_m=3_389_500.0)
    grid = kugel.synthesize(model)
    assert kugel.analyze(grid).reference_radius_m == 3_389_500.0


def test_model_files_round_trip(tmp_path, model30):
    sigma = np.tril(np.full(model30.C.shape, 1e-3))
    with_sigma = kugel.Model(model30.C, model30.S, C_sigma=sigma, S_sigma=sigma,
                             reference_radius_m=6_371_000.0, gm_m3_s2=3.986e14, units="1")
    for name in ("m.nc", "m.txt"):
        with_sigma.to_file(tmp_path / name)
        back = kugel.read_model(tmp_path / name)
        assert back == with_sigma, name
    with_sigma.to_netcdf(tmp_path / "n.nc")
    assert kugel.read_model(tmp_path / "n.nc") == with_sigma


def test_conversion_and_truncation(model30):
    schmidt = model30.converted("schmidt")
    assert schmidt.normalization == "schmidt" and not schmidt.condon_shortley_phase
    # Schmidt = geodesy / sqrt(2l + 1) (common practice)
    l = np.arange(31)[:, None]
    np.testing.assert_allclose(schmidt.C, model30.C * np.sqrt(2 * l + 1), rtol=1e-14)
    back = schmidt.converted("geodesy")
    np.testing.assert_allclose(back.C, model30.C, rtol=1e-14, atol=1e-300)
    phased = model30.converted("orthonormal")
    assert phased.condon_shortley_phase
    small = model30.truncated(5)
    assert small.lmax == 5 and np.array_equal(small.C, model30.C[:6, :6])
    padded = small.truncated(9)
    assert padded.lmax == 9 and np.all(padded.C[6:] == 0)


def test_models_pickle(model30):
    again = pickle.loads(pickle.dumps(model30))
    assert again == model30
    assert np.array_equal(kugel.synthesize(again).values, kugel.synthesize(model30).values)


def test_spectrum_of_a_known_model():
    # degree variance S_l = sum_m (C_lm^2 + S_lm^2) in geodesy normalisation (common practice)
    model = random_model(12, seed=2)
    spec = kugel.spectrum(model)
    expected = (model.C ** 2 + model.S ** 2).sum(axis=1)
    np.testing.assert_allclose(spec["degree_variance"].values, expected, rtol=1e-14)
    assert list(spec["degree"].values) == list(range(13))


def test_without_xarray_results_are_numpy(monkeypatch, model30):
    from kugel import _grids
    monkeypatch.setattr(_grids, "_xr", None)
    out = kugel.synthesize(model30)
    assert type(out) is np.ndarray and out.shape == (31, 64)


def test_cached_plans_give_the_same_bits_from_many_threads(model30):
    # the first call builds the grid and plan, later ones (here from four threads at once,
    # and after other shapes pushed it out of the cache) take them from the native cache
    from concurrent.futures import ThreadPoolExecutor

    first = kugel.synthesize(model30).values
    grid = kugel.synthesize(model30)
    with ThreadPoolExecutor(4) as pool:
        maps = list(pool.map(lambda _: kugel.synthesize(model30).values, range(8)))
        models = list(pool.map(lambda _: kugel.analyze(grid), range(8)))
    for other in (6, 7, 8, 9, 10):
        kugel.synthesize(model30.truncated(other))
    maps.append(kugel.synthesize(model30).values)
    for m in maps:
        assert np.array_equal(m, first)
    for m in models:
        assert np.array_equal(m.C, models[0].C) and np.array_equal(m.S, models[0].S)


def test_reused_buffers_and_coordinates_keep_results_apart(model30):
    # large blocks freed by one call serve the next (the retaining allocator), and synthesis keeps
    # the coordinates of recent grids: alternating two fields of one shape, and changing a
    # result's coordinate attributes, must leave every other result as it was
    other = random_model(30, seed=7)
    map_a = kugel.synthesize(model30)
    map_b = kugel.synthesize(other)
    first = kugel.analyze(map_a.values, grid="gauss")
    kugel.analyze(map_b.values, grid="gauss")
    again = kugel.analyze(map_a.values, grid="gauss")
    assert np.array_equal(first.C, again.C) and np.array_equal(first.S, again.S)

    map_a.lat.attrs["note"] = "changed by the user"
    fresh = kugel.synthesize(model30)
    assert "note" not in fresh.lat.attrs and "note" not in map_b.lat.attrs
    assert np.array_equal(fresh.lat.values, map_a.lat.values)
    # the kept coordinate values cannot be changed in place through a result
    with pytest.raises(ValueError):
        map_a.lat.values[0] = 0.0
    assert fresh.lat.values[0] != 0.0


def test_engine_timing_hook_times_the_same_transform(model30):
    # the overhead benchmark's in-process reference: positive, finite seconds
    synthesis_s, analysis_s = kugel._native.engine_transform_seconds(model30)
    assert 0.0 < synthesis_s < 60.0 and 0.0 < analysis_s < 60.0


def test_maps_take_the_checked_direct_construction(model30):
    # `_grids._map_array` assembles results from xarray's parts once a template has been checked
    # against the documented shallow copy; with this xarray the check must pass and both must
    # give identical results (values, coordinates, attributes, name)
    from kugel import _grids
    out = kugel.synthesize(model30)
    key = (out.lat.values.tobytes(), out.lon.values.tobytes())
    template, direct = _grids._TEMPLATES[key]
    assert direct
    data = np.arange(out.size, dtype=float).reshape(out.shape)
    attrs = {"units": "m", "long_name": "a test"}
    fast = _grids._direct_copy(template, data, "x", attrs)
    public = _grids._public_copy(template, data, "x", attrs)
    assert fast.identical(public)
    assert fast.values is data
