"""Points: model quantities at scattered points (``evaluate``) and the least-squares fit of a
model to observations (``fit``), as ``kugel evaluate`` and ``kugel fit`` compute them."""

import numpy as np

from . import _native
from ._arrays import real_array
from ._grids import _check_model, field_arguments
from ._model import EARTH_MEAN_RADIUS_M, Model


def _points(lat, lon, altitude_km):
    lat = np.atleast_1d(real_array(lat, "lat"))
    lon = np.atleast_1d(real_array(lon, "lon"))
    if lat.shape != lon.shape:
        raise ValueError(f"lat {lat.shape} and lon {lon.shape} differ in shape")
    altitude = np.broadcast_to(real_array(altitude_km, "altitude_km"), lat.shape)
    return lat.shape, lat.ravel(), lon.ravel(), np.ascontiguousarray(altitude).ravel()


def evaluate(model, lat, lon, altitude_km=0.0, quantity="value", *, ellipsoid=None,
             filter=None, normal_field=None, downward=None, max_amplification=1e3):
    """Quantities of ``model`` at points: ``lat``, ``lon`` in degrees (geocentric; geodetic
    with ``ellipsoid``), ``altitude_km`` above the reference sphere (with ``ellipsoid``: the
    ellipsoidal height in km). Returns an array shaped like ``lat`` for one quantity, a dict of
    them for several."""
    _check_model(model)
    shape, lat, lon, altitude = _points(lat, lon, altitude_km)
    options = field_arguments(quantity, None, None, filter, normal_field, downward,
                              max_amplification)
    del options["altitude_km"], options["radius_km"]
    values = _native.evaluate_points(model, lat, lon, altitude, ellipsoid=ellipsoid, **options)
    out = {name: np.asarray(v).reshape(shape) for name, v in values}
    return next(iter(out.values())) if len(out) == 1 else out


class FitResult:
    """What ``fit`` returns: the model and the fit's statistics."""

    def __init__(self, model, stats):
        self.model = model
        self.residual_rms = stats["residual_rms"]
        self.chi2_per_dof = stats["chi2_per_dof"]
        self.condition_estimate = stats["condition_estimate"]
        self.lambda_ = stats["lambda"]
        self.effective_parameters = stats["effective_parameters"]
        self.sigmas_scaled = stats["sigmas_scaled"]
        self.residuals = stats["residuals"]
        self.warnings = list(stats["warnings"])
        self.points_used = stats["points_used"]

    def __repr__(self):
        return (f"kugel.FitResult(lmax={self.model.lmax}, points_used={self.points_used}, "
                f"residual_rms={self.residual_rms:.6g}, chi2_per_dof={self.chi2_per_dof:.4g})")


def fit(lat, lon, value, lmax, sigma=None, *, regularization="none",
        reference_radius_m=EARTH_MEAN_RADIUS_M, units="1"):
    """Fits a model of degree ``lmax`` to observations by weighted, regularised least squares
    (regularization: ``none``, ``damping:λ``, ``kaula:A,p``, ``kaula:A,p:gcv`` or ``gcv``).
    Points are checked and duplicates merged as for a file. Returns a ``FitResult``."""
    lat = real_array(lat, "lat", ndim=1)
    lon = real_array(lon, "lon", ndim=1)
    value = real_array(value, "value", ndim=1)
    if sigma is not None:
        sigma = real_array(sigma, "sigma", ndim=1)
    fields, stats = _native.fit_points(lat, lon, value, int(lmax), sigma, str(regularization),
                                       float(reference_radius_m), str(units))
    return FitResult(Model._from_native(fields), stats)
