"""Per-degree tables and filters: ``spectrum``, ``compare`` (→ ``xarray.Dataset`` over
``degree``) and ``filter``, as ``kugel spectrum``, ``kugel compare`` and ``kugel filter``
compute them."""

import numpy as np

from . import _native
from ._grids import _check_model, _filter_specs, _xr
from ._model import Model


def table_to_dataset(table):
    """A native per-degree table as an ``xarray.Dataset`` (a dict of arrays without xarray)."""
    columns = table["columns"]
    degree = np.asarray(columns[0]["values"]).astype(np.int64)
    if _xr is None:
        out = {c["name"]: c["values"] for c in columns[1:]}
        out["degree"] = degree
        return out
    data = {
        c["name"]: ("degree", c["values"], {"units": c["units"], "long_name": c["long_name"]})
        for c in columns[1:]
    }
    attrs = dict(table["attributes"])
    attrs["summary"] = table["summary"]
    return _xr.Dataset(data, coords={"degree": ("degree", degree, {"long_name": "spherical-harmonic degree"})},
                       attrs=attrs)


def spectrum(model, *, confidence=0.95, fit=None, lowes_radius_km=None):
    """The degree-variance spectrum of ``model`` with its χ² confidence band; ``fit=(lmin,
    lmax)`` adds a power-law fit, ``lowes_radius_km`` the Lowes–Mauersberger spectrum."""
    _check_model(model)
    fit_range = None if fit is None else (int(fit[0]), int(fit[1]))
    return table_to_dataset(_native.spectrum(model, float(confidence), fit_range, lowes_radius_km))


def compare(a, b, *, confidence=0.95, force=False, labels=("A", "B")):
    """Degree-by-degree comparison of a reference model ``a`` and a model ``b``."""
    _check_model(a)
    _check_model(b)
    return table_to_dataset(
        _native.compare(a, b, float(confidence), bool(force), str(labels[0]), str(labels[1]))
    )


def filter(model, spec):
    """``model`` with degree-domain filters applied: one spec or a list (``"gauss:300"``,
    ``"lowpass:40-50"``, …, chained with ``+``), as ``kugel filter --filter``."""
    _check_model(model)
    specs = _filter_specs(spec)
    fields, _weights, _description = _native.filter_model(model, specs)
    return Model._from_native(fields)


def filter_weights(model, spec):
    """The combined weight per degree (0..lmax) of a filter chain for ``model``."""
    _check_model(model)
    _fields, weights, _description = _native.filter_model(model, _filter_specs(spec))
    return np.asarray(weights)
