"""kugel over the extra dimensions of xarray objects (time, ensemble member, ...), with dask.

Each helper wraps one kugel function in ``xarray.apply_ufunc(..., dask="parallelized")``: on
numpy-backed data it loops over the extra dimensions at once; on dask-backed (chunked) data it
builds a lazy graph whose tasks run on whatever scheduler is active — threads, processes or a
``dask.distributed`` cluster. Every extra dimension and its coordinates are kept. Models are
represented as an ``xarray.Dataset`` with ``C`` and ``S`` over (..., ``degree``, ``order``)
and the model's conventions as attributes; only numpy arrays and plain values travel to the
workers, so everything pickles.
"""

import numpy as np
import xarray as xr

from . import _grids, _native, _spectra
from ._coords import lat_lon_dims
from ._model import EARTH_MEAN_RADIUS_M, Model

_MODEL_ATTRS = ("normalization", "condon_shortley_phase", "reference_radius_m", "gm_m3_s2", "units")


def _model_attrs(model):
    attrs = {
        "normalization": model.normalization,
        "condon_shortley_phase": int(model.condon_shortley_phase),
        "reference_radius_m": model.reference_radius_m,
        "units": model.units,
        "lmax": model.lmax,
    }
    if model.gm_m3_s2 is not None:
        attrs["gm_m3_s2"] = model.gm_m3_s2
    return attrs


def _model_kwargs(attrs):
    """Keyword arguments of ``kugel.Model`` from a model Dataset's attributes."""
    return dict(
        normalization=str(attrs.get("normalization", "geodesy")),
        condon_shortley_phase=bool(int(attrs.get("condon_shortley_phase", 0))),
        reference_radius_m=float(attrs.get("reference_radius_m", EARTH_MEAN_RADIUS_M)),
        gm_m3_s2=None if attrs.get("gm_m3_s2") is None else float(attrs["gm_m3_s2"]),
        units=str(attrs.get("units", "1")),
    )


def _loop(func, arrays, core_ndim, n_out):
    """Applies ``func`` (2-D arrays → tuple of arrays) over the leading dims of ``arrays``."""
    lead = arrays[0].shape[: arrays[0].ndim - core_ndim]
    flat = [a.reshape((-1,) + a.shape[a.ndim - core_ndim:]) for a in arrays]
    results = [func(*(a[i] for a in flat)) for i in range(flat[0].shape[0])]
    outs = []
    for k in range(n_out):
        if results:
            stacked = np.stack([r[k] for r in results])
        else:
            raise ValueError("nothing to compute: an extra dimension has length 0")
        outs.append(stacked.reshape(lead + stacked.shape[1:]))
    return tuple(outs)


def _single_chunk(obj, dims):
    if getattr(obj, "chunks", None):
        return obj.chunk({d: -1 for d in dims})
    return obj


def model_to_dataset(model):
    """A ``kugel.Model`` as a Dataset with ``C``, ``S`` (and σ) over (degree, order)."""
    coords = {"degree": np.arange(model.lmax + 1), "order": np.arange(model.lmax + 1)}
    data = {"C": (("degree", "order"), model.C), "S": (("degree", "order"), model.S)}
    if model.C_sigma is not None:
        data["C_sigma"] = (("degree", "order"), model.C_sigma)
        data["S_sigma"] = (("degree", "order"), model.S_sigma)
    return xr.Dataset(data, coords=coords, attrs=_model_attrs(model))


def dataset_to_model(ds):
    """The ``kugel.Model`` of a model Dataset without extra dimensions."""
    extra = [d for d in ds["C"].dims if d not in ("degree", "order")]
    if extra:
        raise ValueError(f"the Dataset has extra dimension(s) {extra}; select one model with .isel(...)")
    sigma = {}
    if "C_sigma" in ds and "S_sigma" in ds:
        sigma = dict(C_sigma=ds["C_sigma"].values, S_sigma=ds["S_sigma"].values)
    return Model(ds["C"].values, ds["S"].values, **sigma, **_model_kwargs(ds.attrs))


def analyze(da, lmax=None, *, lat=None, lon=None, normalization="geodesy", condon_shortley=None,
            reference_radius_m=None):
    """``kugel.analyze`` of every (lat, lon) field of ``da`` → a Dataset with ``C`` and ``S``
    of dims (..., degree, order) and the model's attributes."""
    lat_dim, lon_dim = lat_lon_dims(da, lat, lon)
    lat_values = np.asarray(da[lat_dim].values, dtype=np.float64)
    lon_values = np.asarray(da[lon_dim].values, dtype=np.float64)
    _kind, max_degree = _native.grid_layout(lat_values, lon_values, lat_dim, lon_dim)
    lmax = max_degree if lmax is None else int(lmax)
    reference_radius_m = _grids._reference_radius(da.attrs, reference_radius_m)
    units = str(da.attrs.get("units", "1"))
    name = str(da.name) if da.name is not None else "field"
    # a template on the first field's coordinates gives the output's attributes up front
    template = Model(np.zeros((lmax + 1, lmax + 1)), np.zeros((lmax + 1, lmax + 1)),
                     reference_radius_m=reference_radius_m or EARTH_MEAN_RADIUS_M, units=units)
    template = template.converted(normalization, condon_shortley)

    def one(field):
        values = xr.DataArray(field, dims=(lat_dim, lon_dim),
                              coords={lat_dim: lat_values, lon_dim: lon_values}, name=name,
                              attrs={"units": units})
        model = _grids.analyze(values, lmax, normalization=normalization,
                               condon_shortley=condon_shortley,
                               reference_radius_m=reference_radius_m)
        return model.C, model.S

    def block(values):
        return _loop(one, [values], 2, 2)

    C, S = xr.apply_ufunc(
        block, _single_chunk(da, (lat_dim, lon_dim)),
        input_core_dims=[[lat_dim, lon_dim]],
        output_core_dims=[["degree", "order"], ["degree", "order"]],
        dask="parallelized",
        output_dtypes=[np.float64, np.float64],
        dask_gufunc_kwargs={"output_sizes": {"degree": lmax + 1, "order": lmax + 1}},
        keep_attrs=False,
    )
    ds = xr.Dataset({"C": C, "S": S})
    ds = ds.assign_coords(degree=np.arange(lmax + 1), order=np.arange(lmax + 1))
    for v in ("C", "S"):
        ds[v].attrs["units"] = units
    ds.attrs = _model_attrs(template)
    return ds


def _per_model(ds, func, output_core_dims, output_sizes, n_out):
    """Applies ``func(model)`` → tuple of arrays over the extra dims of a model Dataset."""
    kwargs = _model_kwargs(ds.attrs)
    has_sigma = "C_sigma" in ds and "S_sigma" in ds
    names = ["C", "S"] + (["C_sigma", "S_sigma"] if has_sigma else [])

    def one(*arrays):
        sigma = dict(C_sigma=arrays[2], S_sigma=arrays[3]) if has_sigma else {}
        return func(Model(arrays[0], arrays[1], **sigma, **kwargs))

    def block(*arrays):
        outs = _loop(one, list(arrays), 2, n_out)
        return outs[0] if n_out == 1 else outs

    inputs = [_single_chunk(ds[n], ("degree", "order")) for n in names]
    return xr.apply_ufunc(
        block, *inputs,
        input_core_dims=[["degree", "order"]] * len(names),
        output_core_dims=output_core_dims,
        dask="parallelized",
        output_dtypes=[np.float64] * n_out,
        dask_gufunc_kwargs={"output_sizes": output_sizes},
        keep_attrs=False,
    )


def _template(ds):
    lmax = ds.sizes["degree"] - 1
    ones = np.tril(np.ones((lmax + 1, lmax + 1)))
    s = ones.copy()
    s[:, 0] = 0.0
    sigma = {}
    if "C_sigma" in ds and "S_sigma" in ds:
        sigma = dict(C_sigma=ones, S_sigma=s)
    return Model(ones, s, **sigma, **_model_kwargs(ds.attrs))


def synthesize(ds, grid="gauss", quantity="value", altitude_km=0.0, filter=None,
               normal_field=None, **options):
    """``kugel.synthesize`` of every model in ``ds`` (from ``analyze``) → a DataArray of dims
    (..., lat, lon) with CF attributes; one quantity per call."""
    if "," in str(quantity) or isinstance(quantity, (list, tuple)):
        raise ValueError("kugel.xarray.synthesize computes one quantity per call")
    lmax = ds.sizes["degree"] - 1
    lat, lon = _native.grid_coordinates(lmax, _grids._grid_argument(grid))
    lat, lon = np.asarray(lat)[::-1], np.asarray(lon)
    def one(model):
        out = _grids.synthesize_arrays(model, grid, quantity, altitude_km, filter, normal_field,
                                       **options)
        return (out["variables"][0]["data"][::-1],)  # ascending latitude, as synthesize

    values = _per_model(ds, one, [["lat", "lon"]], {"lat": lat.size, "lon": lon.size}, 1)
    # names, units and cautions from the same call on a small template model
    head = _grids.synthesize_arrays(_template(ds).truncated(2), 90.0, quantity, altitude_km,
                                    filter, normal_field, **options)
    info = head["variables"][0]
    attrs = {"long_name": info["long_name"], "units": info["units"], "Conventions": "CF-1.8"}
    if info["standard_name"]:
        attrs["standard_name"] = info["standard_name"]
    if info["caution"]:
        attrs["caution"] = attrs["comment"] = info["caution"]
    values = values.assign_coords(lat=("lat", lat, _grids.LAT_ATTRS), lon=("lon", lon, _grids.LON_ATTRS))
    values.attrs = attrs
    return values.rename(info["name"])


def filter(ds, spec):
    """``kugel.filter`` of every model in ``ds`` → a model Dataset of the same dims."""
    lmax = ds.sizes["degree"] - 1

    def one(model):
        out = _spectra.filter(model, spec)
        return out.C, out.S

    C, S = _per_model(ds, one, [["degree", "order"], ["degree", "order"]],
                      {"degree": lmax + 1, "order": lmax + 1}, 2)
    out = xr.Dataset({"C": C, "S": S}).assign_coords(degree=ds["degree"], order=ds["order"])
    for v in ("C", "S"):
        out[v].attrs = dict(ds["C"].attrs)
    out.attrs = dict(ds.attrs)
    out.attrs["kugel_filter"] = " + ".join(_grids._filter_specs(spec))
    return out


def spectrum(ds, *, confidence=0.95, lowes_radius_km=None):
    """``kugel.spectrum`` of every model in ``ds`` → a Dataset of the spectrum's columns over
    (..., degree)."""
    lmax = ds.sizes["degree"] - 1
    template = _spectra.spectrum(_template(ds), confidence=confidence,
                                 lowes_radius_km=lowes_radius_km)
    names = list(template.data_vars)

    def one(model):
        table = _native.spectrum(model, float(confidence), None, lowes_radius_km)
        columns = {c["name"]: np.asarray(c["values"]) for c in table["columns"]}
        return tuple(columns[n] for n in names)

    outs = _per_model(ds, one, [["degree"]] * len(names),
                      {"degree": lmax + 1}, len(names))
    if not isinstance(outs, tuple):
        outs = (outs,)
    result = xr.Dataset({n: o for n, o in zip(names, outs)})
    result = result.assign_coords(degree=template["degree"])
    for n in names:
        result[n].attrs = dict(template[n].attrs)
    return result
