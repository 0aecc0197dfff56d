"""Writes tests/fixtures/observe/points.nc, a NetCDF-4 point file made by the reference
netCDF C library (through netCDF4-python; version printed below), read by
tests/observe_points.rs. Five observations along dimension `obs` with upper-case variable
names, the fourth value masked with _FillValue (so validation must report it as not finite).

Run from the repository root:  python3 tests/reference/observe_points_netcdf.py
"""
import netCDF4
import numpy as np

print("netCDF4-python", netCDF4.__version__, "library", netCDF4.__netcdf4libversion__)
with netCDF4.Dataset("tests/fixtures/observe/points.nc", "w", format="NETCDF4") as ds:
    ds.createDimension("obs", 5)
    lat = ds.createVariable("LAT", "f8", ("obs",))
    lon = ds.createVariable("LON", "f8", ("obs",))
    g = ds.createVariable("G", "f4", ("obs",), fill_value=np.float32(-9999.0))
    err = ds.createVariable("ERR", "f8", ("obs",))
    lat[:] = [10.0, -45.5, 89.0, 0.0, -90.0]
    lon[:] = [-170.0, 200.0, 0.0, 359.0, 12.0]
    g[:] = np.ma.masked_array([1.5, -2.25, 3.0, 0.0, 4.0], mask=[0, 0, 0, 1, 0])
    err[:] = [0.1, 0.2, 0.3, 0.4, 0.5]
