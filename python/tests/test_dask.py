"""Many epochs: kugel.xarray over an extra dimension, serially and on a dask cluster."""

import numpy as np
import pytest
import xarray as xr

import kugel
import kugel.xarray as kx
from conftest import random_model


def _series(epochs=12, lmax=20):
    """An invented monthly series: a slowly changing field on a 2-degree grid."""
    maps = [kugel.synthesize(random_model(lmax, seed=100 + k), grid=4.0) for k in range(epochs)]
    da = xr.concat(maps, dim="time")
    da = da.assign_coords(time=np.arange(epochs) * 30.0,
                          campaign=("time", [f"survey-{k % 3}" for k in range(epochs)]))
    da.name = "height_anomaly"
    da.attrs["units"] = "m"
    return da


def test_analyze_over_time_keeps_dims_and_equals_one_by_one():
    da = _series(epochs=4)
    ds = kx.analyze(da, lmax=20)
    assert ds["C"].dims == ("time", "degree", "order")
    assert np.array_equal(ds["time"].values, da["time"].values)
    assert list(ds["campaign"].values) == list(da["campaign"].values)
    assert ds.attrs["normalization"] == "geodesy" and ds["C"].attrs["units"] == "m"
    for k in range(4):
        one = kugel.analyze(da.isel(time=k), lmax=20)
        assert np.array_equal(ds["C"].values[k], one.C)
        assert np.array_equal(ds["S"].values[k], one.S)
    back = kx.synthesize(ds, grid=4.0)
    assert back.dims == ("time", "lat", "lon")
    np.testing.assert_allclose(back.values, da.values, atol=1e-12)
    assert back.attrs["units"] == "m"
    spec = kx.spectrum(ds)
    assert spec["degree_variance"].dims == ("time", "degree")
    assert np.array_equal(spec["degree_variance"].values[2],
                          kugel.spectrum(kx.dataset_to_model(ds.isel(time=2)))["degree_variance"].values)
    smooth = kx.filter(ds, "lowpass:5-10")
    assert np.all(smooth["C"].values[:, 11:] == 0)


def test_threaded_dask_equals_serial():
    dask = pytest.importorskip("dask")
    da = _series(epochs=6)
    serial = kx.analyze(da, lmax=20)
    lazy = kx.analyze(da.chunk({"time": 2}), lmax=20)
    assert lazy["C"].chunks is not None
    with dask.config.set(scheduler="threads"):
        computed = lazy.compute()
    assert np.array_equal(computed["C"].values, serial["C"].values)


def test_local_cluster_with_two_processes_equals_serial():
    distributed = pytest.importorskip("distributed")
    da = _series(epochs=12)
    serial_models = kx.analyze(da, lmax=20)
    serial_maps = kx.synthesize(kx.filter(serial_models, "gauss:1500"), grid=4.0)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        lazy = kx.analyze(da.chunk({"time": 3}), lmax=20)
        maps = kx.synthesize(kx.filter(lazy, "gauss:1500"), grid=4.0)
        models, maps = client.compute([lazy, maps], sync=True)
        assert len(client.scheduler_info()["workers"]) == 2
    assert np.array_equal(models["C"].values, serial_models["C"].values)
    assert np.array_equal(models["S"].values, serial_models["S"].values)
    assert np.array_equal(maps.values, serial_maps.values)
    assert list(maps["campaign"].values) == list(da["campaign"].values)
