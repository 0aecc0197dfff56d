"""Rotation and regional analysis: ``rotate`` (as ``kugel rotate``) and ``tapers`` (as
``kugel tapers``); the localised spectra are ``spectrum(..., region=...)`` and
``compare(..., region=...)``. The same library functions as the command line run, so the
numbers are the same bit for bit."""

import warnings

import numpy as np

from . import _native
from ._arrays import real_numbers, whole_number
from ._grids import _check_model, _xr
from ._model import Model


def rotate(model, pole=None, azimuth_deg=0.0, *, euler=None):
    """``model`` rotated, in its own normalisation and phase, as ``kugel rotate`` does.

    ``pole=(lat, lon)`` (degrees) moves that point to the north pole, then turns the result
    eastwards by ``azimuth_deg`` about the new pole: R = Rz(azimuth) Ry(−(90° − lat)) Rz(−lon);
    with azimuth 0 the old north pole lands on longitude 180°. ``euler=(a, b, g)`` (degrees) is
    the active z-y-z rotation R = Rz(a) Ry(b) Rz(g) about axes fixed in space; the rotated
    model g satisfies g(R p) = f(p), and the inverse of ``euler=(a, b, g)`` is
    ``euler=(-g, -b, -a)``. Give one of ``pole`` and ``euler``. Standard errors are dropped
    (rotating them needs their covariances), with a warning.
    """
    _check_model(model)
    if (pole is None) == (euler is None):
        raise ValueError("say which rotation: pole=(lat, lon) or euler=(a, b, g), one of them")
    azimuth_deg = real_numbers([azimuth_deg], 1, "azimuth_deg", "(degrees)")[0]
    if euler is not None:
        if azimuth_deg != 0.0:
            raise ValueError("azimuth_deg goes with pole=(lat, lon); put the turn into euler=(a, b, g)")
        euler = real_numbers(euler, 3, "euler", "(a, b, g in degrees)")
    else:
        pole = real_numbers(pole, 2, "pole", "(lat, lon in degrees)")
    fields, dropped = _native.rotate_model(model, pole, azimuth_deg, euler)
    if dropped:
        warnings.warn("standard errors were dropped (rotating them needs their covariances)",
                      stacklevel=2)
    return Model._from_native(fields)


_TAPER_COORDS = {
    "taper": "window number, best concentrated first",
    "degree": "spherical-harmonic degree l",
    "order": "spherical-harmonic order m",
}


def tapers(cap_radius_deg, lmax, centre=None, *, keep=None):
    """The windows of bandwidth ``lmax`` best concentrated in the spherical cap of radius
    ``cap_radius_deg`` about ``centre`` = (lat, lon) in degrees (default the north pole),
    best concentrated first; ``keep`` keeps the first K. As ``kugel tapers`` writes them:
    an ``xarray.Dataset`` with ``concentration(taper)``, ``C`` and ``S`` (taper, degree,
    order) in geodesy normalisation without the Condon–Shortley phase (each window of unit
    mean square), the Shannon number, region and centre as attributes (a dict of arrays
    without xarray). Spherical-cap windows after Simons, Dahlen & Wieczorek (2006)."""
    radius = real_numbers([cap_radius_deg], 1, "cap_radius_deg", "(degrees)")[0]
    lmax = whole_number(lmax, "lmax")
    if centre is not None:
        centre = real_numbers(centre, 2, "centre", "(lat, lon in degrees)")
    if keep is not None:
        keep = whole_number(keep, "keep")
    out = _native.cap_tapers(radius, lmax, centre, keep)
    if _xr is None:
        return {"concentration": out["concentration"], "C": out["C"], "S": out["S"],
                **out["attributes"]}
    k, l1 = out["C"].shape[0], out["C"].shape[1]
    sizes = {"taper": k, "degree": l1, "order": l1}
    coords = {name: (name, np.arange(n, dtype=np.int32), {"long_name": _TAPER_COORDS[name], "units": "1"})
              for name, n in sizes.items()}
    dims = ("taper", "degree", "order")
    data = {
        "concentration": ("taper", out["concentration"],
                          {"long_name": "fraction of the window's energy inside the region", "units": "1"}),
        "C": (dims, out["C"], {"long_name": "cosine coefficient C_lm of the window", "units": "1"}),
        "S": (dims, out["S"], {"long_name": "sine coefficient S_lm of the window", "units": "1"}),
    }
    attrs = dict(out["attributes"])
    attrs["title"] = f"windows concentrated in {attrs['region']}"
    attrs["Conventions"] = "CF-1.8"
    return _xr.Dataset(data, coords=coords, attrs=attrs)
