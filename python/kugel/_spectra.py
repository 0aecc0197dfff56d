"""Per-degree tables and filters: ``spectrum``, ``compare`` (→ ``xarray.Dataset`` over
``degree``) and ``filter``, as ``kugel spectrum``, ``kugel compare`` and ``kugel filter``
compute them."""

import numpy as np

from . import _native
from ._arrays import whole_number
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


def _window_arguments(region, window_lmax, tapers, global_only):
    """The checked ``region``, ``window_lmax`` and ``tapers`` of a localised estimate."""
    if not isinstance(region, str):
        raise TypeError(f"region must be text such as 'cap:30,-60,15', got {region!r}")
    if window_lmax is None:
        raise ValueError("region needs window_lmax (the windows' bandwidth L_W, below the model's degree)")
    given = [name for name, value in global_only.items() if value]
    if given:
        raise ValueError(f"{', '.join(given)} appl{'y' if len(given) > 1 else 'ies'} to the global "
                         "estimate only, not with region")
    return region, whole_number(window_lmax, "window_lmax"), None if tapers is None else whole_number(tapers, "tapers")


def spectrum(model, *, confidence=0.95, fit=None, lowes_radius_km=None, region=None,
             window_lmax=None, tapers=None):
    """The degree-variance spectrum of ``model`` with its χ² confidence band; ``fit=(lmin,
    lmax)`` adds a power-law fit, ``lowes_radius_km`` the Lowes–Mauersberger spectrum.

    With ``region`` (the command line's ``--region`` syntax, e.g. ``"cap:30,-60,15"``) and
    ``window_lmax`` (the windows' bandwidth L_W < L), the localised multitaper spectrum inside
    the region instead (Wieczorek & Simons 2005, 2007), with its standard error, the spectrum
    expected there from the model's global spectrum, and ``reliable`` = 0 at degrees below L_W
    and above L − L_W; ``tapers`` takes the first K windows (default: every window with
    concentration ≥ 0.99). As ``kugel spectrum --region``."""
    _check_model(model)
    if region is not None:
        region, window_lmax, tapers = _window_arguments(
            region, window_lmax, tapers,
            {"fit": fit is not None, "lowes_radius_km": lowes_radius_km is not None,
             "confidence": confidence != 0.95})
        return table_to_dataset(_native.localised_spectrum(model, region, window_lmax, tapers))
    if window_lmax is not None or tapers is not None:
        raise ValueError("window_lmax and tapers go with region=")
    fit_range = None if fit is None else (int(fit[0]), int(fit[1]))
    return table_to_dataset(_native.spectrum(model, float(confidence), fit_range, lowes_radius_km))


def compare(a, b, *, confidence=0.95, force=False, labels=("A", "B"), region=None,
            window_lmax=None, tapers=None):
    """Degree-by-degree comparison of a reference model ``a`` and a model ``b``.

    With ``region`` and ``window_lmax`` (as for ``spectrum``), the localised comparison inside
    the region: both localised spectra, cross power, correlation and admittance of A on B with
    their standard errors (jackknife over the windows), as ``kugel compare --region``."""
    _check_model(a)
    _check_model(b)
    if region is not None:
        region, window_lmax, tapers = _window_arguments(
            region, window_lmax, tapers, {"confidence": confidence != 0.95, "force": bool(force)})
        return table_to_dataset(_native.localised_compare(a, b, region, window_lmax, tapers))
    if window_lmax is not None or tapers is not None:
        raise ValueError("window_lmax and tapers go with region=")
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
