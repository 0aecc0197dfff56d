"""Bad input from Python gives clear exceptions of the right type, never a crash."""

import threading

import numpy as np
import pytest
import xarray as xr

import kugel
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
