"""Bad input from Python gives clear exceptions of the right type, never a crash."""

import threading

import numpy as np
import pytest
import xarray as xr

import kugel
import kugel.xarray as kx
from conftest import random_model


def _map(model, **kw):
    return kugel.synthesize(model, grid=2.0, **kw)


def test_wrong_shapes(model30):
    with pytest.raises(ValueError, match="square"):
        kugel.Model(np.zeros((3, 4)), np.zeros((3, 4)))
    with pytest.raises(ValueError, match=r"S has shape \(4, 4\)"):
        kugel.Model(np.zeros((3, 3)), np.zeros((4, 4)))
    with pytest.raises(ValueError, match=r"above the diagonal"):
        kugel.Model(np.ones((3, 3)), np.zeros((3, 3)))
    with pytest.raises(ValueError, match=r"1 dimension.*expected 2"):
        kugel.analyze(np.zeros(10), grid="gauss")
    with pytest.raises(ValueError, match=r"need \[5, 9\]"):
        kugel.analyze(np.zeros((5, 8)), lat=np.linspace(90, -90, 5), lon=np.arange(9) * 40.0)
    with pytest.raises(ValueError, match="one value per point|differ in shape"):
        kugel.evaluate(model30, [0.0, 1.0], [0.0])
    grid = _map(model30)
    with pytest.raises(ValueError, match="kugel.xarray.analyze"):
        kugel.analyze(xr.concat([grid, grid], dim="time"))


def test_non_finite_values(model30):
    C = np.tril(np.ones((3, 3)))
    C[2, 1] = np.nan
    with pytest.raises(ValueError, match=r"C_\{2,1\} is not finite"):
        kugel.Model(C, np.zeros((3, 3)))
    grid = _map(model30).copy()
    grid[10, 20] = np.nan
    with pytest.raises(ValueError, match="masked cell"):
        kugel.analyze(grid)
    grid[10, 20] = np.inf
    with pytest.raises(ValueError, match="infinite value"):
        kugel.analyze(grid)
    with pytest.raises(ValueError, match="lat must lie"):
        kugel.evaluate(model30, [np.nan], [0.0])


def test_coordinates_that_are_not_monotonic(model30):
    grid = _map(model30)
    lat = grid.lat.values.copy()
    lat[[3, 4]] = lat[[4, 3]]
    with pytest.raises(ValueError, match=r"latitude coordinate 'lat' is not monotonic: \[3\]"):
        kugel.analyze(grid.assign_coords(lat=lat))
    lon = grid.lon.values.copy()
    lon[[5, 6]] = lon[[6, 5]]
    with pytest.raises(ValueError, match="longitude coordinate 'lon' is not monotonic"):
        kugel.analyze(grid.assign_coords(lon=lon))
    with pytest.raises(ValueError, match="not global"):
        kugel.analyze(grid.isel(lat=slice(10, 40)))


def test_unsupported_dtypes(model30):
    with pytest.raises(TypeError, match="complex"):
        kugel.Model(np.zeros((3, 3), dtype=complex), np.zeros((3, 3)))
    with pytest.raises(TypeError, match="dtype"):
        kugel.analyze(np.array([["a", "b"], ["c", "d"]]), grid="gauss")
    with pytest.raises(TypeError, match="dtype"):
        kugel.evaluate(model30, np.array(["0"]), [0.0])
    with pytest.raises(TypeError, match="kugel.Model"):
        kugel.synthesize(np.zeros((3, 3)))
    # integers and float32 are real numbers: accepted
    grid = _map(model30)
    as32 = kugel.analyze(grid.astype(np.float32), lmax=10)
    assert as32.lmax == 10


def test_memory_beyond_the_machine(model30):
    with pytest.raises(MemoryError, match="MiB"):
        kugel.synthesize(model30, grid=0.0005)
    with pytest.raises(MemoryError, match="MiB"):
        model30.truncated(10_000_000)


def test_bad_options_name_what_is_expected(model30):
    with pytest.raises(ValueError, match="normalization"):
        model30.converted("fancy")
    with pytest.raises(ValueError, match="degree 30 only|exactly up to degree"):
        kugel.analyze(_map(model30), lmax=200)
    with pytest.raises(ValueError):
        kugel.synthesize(model30, quantity="gravity-anomaly")  # no GM: not a gravity model
    with pytest.raises(ValueError, match="filter"):
        kugel.filter(model30, "sharpen:3")
    with pytest.raises(ValueError, match="step"):
        kugel.synthesize(model30, grid=7.0)
    with pytest.raises(OSError, match="nowhere.nc"):
        kugel.read_model("/nonexistent/nowhere.nc")


def test_the_gil_is_released_during_a_transform():
    # a pure-Python thread keeps running while a transform computes in another thread
    model = random_model(400, seed=4)
    counter = [0]
    done = threading.Event()

    def count():
        while not done.is_set():
            counter[0] += 1

    side = threading.Thread(target=count)
    side.start()
    before = []
    try:
        before.append(counter[0])
        kugel.synthesize(model)
        kugel.synthesize(model)
        after = counter[0]
    finally:
        done.set()
        side.join()
    assert after - before[0] > 1000, after - before[0]


# Every public function × every class of bad input that applies to it: (function, class,
# call, exception, words of the message). Sizes that come from a model already in memory
# (spectra, rotation, complex form) cannot exceed memory on their own, so the memory class
# covers the functions that take a size from the caller.
def _cases():
    m = random_model(12, seed=5)
    lat, lon = np.linspace(-80, 80, 30), np.linspace(0, 350, 30)
    val = np.zeros(30)
    a, _, _ = m.to_complex("orthonormal")
    grid = kugel.synthesize(m, grid=10.0)
    series = xr.concat([grid, grid], dim="time")
    shuffled = series.assign_coords(lat=grid.lat.values[[1, 0] + list(range(2, grid.sizes["lat"]))])
    ds = kx.analyze(series, lmax=8)
    return [
        # wrong shapes
        ("fit", "shape", lambda: kugel.fit(lat, lon[:20], val, 3), ValueError, "differ|length|same"),
        ("fit", "shape", lambda: kugel.fit(lat, lon, val, 3, sigma=np.ones(4)), ValueError, "sigma|length"),
        ("rotate", "shape", lambda: kugel.rotate(m, pole=(10.0,)), ValueError, "pole must hold 2"),
        ("rotate", "shape", lambda: kugel.rotate(m, euler=(1.0, 2.0)), ValueError, "euler must hold 3"),
        ("tapers", "shape", lambda: kugel.tapers(20.0, 4, centre=(1.0, 2.0, 3.0)), ValueError, "centre must hold 2"),
        ("from_complex", "shape", lambda: kugel.Model.from_complex(a[:, :-1]), ValueError, r"\(L\+1, 2L\+1\)"),
        ("from_complex", "shape", lambda: kugel.Model.from_complex(a[0]), ValueError, "expected 2"),
        ("xarray.synthesize", "shape", lambda: kx.synthesize(ds, quantity="value,geoid"), ValueError, "one quantity"),
        # non-finite values
        ("fit", "non-finite", lambda: kugel.fit(lat, lon, np.full(30, np.nan), 3), ValueError, "finite|NaN|nan"),
        ("synthesize", "non-finite", lambda: kugel.synthesize(m, altitude_km=np.nan), ValueError, "altitude"),
        ("spectrum", "non-finite", lambda: kugel.spectrum(m, lowes_radius_km=np.inf), ValueError, "lowes_radius_km"),
        ("rotate", "non-finite", lambda: kugel.rotate(m, pole=(np.nan, 0.0)), ValueError, "pole latitude"),
        ("rotate", "non-finite", lambda: kugel.rotate(m, euler=(0.0, np.inf, 0.0)), ValueError, "finite"),
        ("tapers", "non-finite", lambda: kugel.tapers(np.nan, 4), ValueError, "region|radius"),
        ("tapers", "non-finite", lambda: kugel.tapers(20.0, 4, centre=(0.0, np.inf)), ValueError, "region|cap"),
        ("from_complex", "non-finite", lambda: kugel.Model.from_complex(np.where(a != 0, np.nan, a)), ValueError, "not finite"),
        ("analyze", "non-finite", lambda: kugel.analyze(grid.assign_coords(lat=np.where(grid.lat > 85, np.nan, grid.lat))), ValueError, "latitude coordinate"),
        ("xarray.analyze", "non-finite", lambda: kx.analyze(series.where(series.lon != 0)), ValueError, "masked cell"),
        # coordinates that are not monotonic
        ("xarray.analyze", "monotonic", lambda: kx.analyze(shuffled), ValueError, "not monotonic"),
        ("fit", "range", lambda: kugel.fit(lat + 20, lon, val, 3), ValueError, "lat"),
        # unsupported dtypes
        ("fit", "dtype", lambda: kugel.fit(lat.astype(str), lon, val, 3), TypeError, "dtype"),
        ("rotate", "dtype", lambda: kugel.rotate(m, pole=("north", "east")), TypeError, "real numbers"),
        ("rotate", "dtype", lambda: kugel.rotate(m, euler=(1j, 0, 0)), TypeError, "real numbers"),
        ("rotate", "dtype", lambda: kugel.rotate(np.zeros((3, 3)), euler=(0, 0, 0)), TypeError, "kugel.Model"),
        ("tapers", "dtype", lambda: kugel.tapers("wide", 4), TypeError, "real numbers"),
        ("tapers", "dtype", lambda: kugel.tapers(20.0, 4.5), TypeError, "whole number"),
        ("spectrum", "dtype", lambda: kugel.spectrum(m, region=5, window_lmax=4), TypeError, "region must be text"),
        ("compare", "dtype", lambda: kugel.compare(m, m, region="cap:0,0,30", window_lmax="4"), TypeError, "whole number"),
        ("from_complex", "dtype", lambda: kugel.Model.from_complex(a.astype(object)), TypeError, "dtype"),
        ("synthesize", "dtype", lambda: kugel.synthesize(m, grid=1j), TypeError, "grid"),
        # beyond memory
        ("tapers", "memory", lambda: kugel.tapers(20.0, 1_000_000), MemoryError, "MiB"),
        ("fit", "memory", lambda: kugel.fit(lat, lon, val, 2_000_000), MemoryError, "MiB"),
        ("xarray.synthesize", "memory", lambda: kx.synthesize(ds, grid=0.0005), MemoryError, "MiB"),
        # other options out of range
        ("rotate", "options", lambda: kugel.rotate(m), ValueError, "say which rotation"),
        ("rotate", "options", lambda: kugel.rotate(m, pole=(1, 2), euler=(0, 0, 0)), ValueError, "say which rotation"),
        ("rotate", "options", lambda: kugel.rotate(m, pole=(95.0, 0.0)), ValueError, "95"),
        ("tapers", "options", lambda: kugel.tapers(200.0, 4), ValueError, "cap radius"),
        ("tapers", "options", lambda: kugel.tapers(20.0, 4, keep=0), ValueError, "0 windows"),
        ("tapers", "options", lambda: kugel.tapers(20.0, -1), ValueError, ">= 0"),
        ("spectrum", "options", lambda: kugel.spectrum(m, region="cap:30,-60,15"), ValueError, "window_lmax"),
        ("spectrum", "options", lambda: kugel.spectrum(m, region="cap:30,-60,15", window_lmax=12), ValueError, "LW < L"),
        ("spectrum", "options", lambda: kugel.spectrum(m, region="disc:1,2,3", window_lmax=4), ValueError, "unknown kind"),
        ("spectrum", "options", lambda: kugel.spectrum(m, region="cap:30,-60", window_lmax=4), ValueError, "cap:LAT,LON,RADIUS_DEG"),
        ("spectrum", "options", lambda: kugel.spectrum(m, region="cap:30,-60,15", window_lmax=4, fit=(2, 8)), ValueError, "global"),
        ("spectrum", "options", lambda: kugel.spectrum(m, window_lmax=4), ValueError, "region"),
        ("compare", "options", lambda: kugel.compare(m, m, region="cap:30,-60,5", window_lmax=4, tapers=500), ValueError, "windows"),
        ("from_complex", "options", lambda: kugel.Model.from_complex(a * (1 + 0.5j)), ValueError, "real field"),
        ("from_complex", "options", lambda: kugel.Model.from_complex(a, normalization="fancy"), ValueError, "normali"),
        ("to_complex", "options", lambda: m.to_complex("fancy"), ValueError, "normali"),
    ]


_CASES = _cases()


@pytest.mark.parametrize("function,kind,call,error,words", _CASES,
                         ids=[f"{c[0]}-{c[1]}-{k}" for k, c in enumerate(_CASES)])
def test_every_function_refuses_bad_input(function, kind, call, error, words):
    with pytest.raises(error, match=words):
        call()
