"""kugel: spherical-harmonic modelling on numpy and xarray.

    import kugel
    model = kugel.analyze(field)                    # xarray.DataArray on lat/lon → Model
    grav = kugel.synthesize(model, grid=0.5, quantity="gravity-anomaly", normal_field="grs80")
    spec = kugel.spectrum(model)                    # xarray.Dataset over degree
    local = kugel.spectrum(model, region="cap:30,-60,15", window_lmax=10)
    turned = kugel.rotate(model, pole=(35.0, -120.0))

The numbers are the command line's: the same library functions run on the same inputs. The
GIL is released while they run. ``kugel.xarray`` applies the transforms over extra dimensions
(time, ensemble member) with dask.
"""

from . import _native
from ._grids import analyze, synthesize
from ._model import EARTH_MEAN_RADIUS_M, Model, read_model
from ._points import FitResult, evaluate, fit
from ._regional import rotate, tapers
from ._spectra import compare, filter, filter_weights, spectrum

__version__ = _native.__version__

__all__ = [
    "EARTH_MEAN_RADIUS_M",
    "FitResult",
    "Model",
    "analyze",
    "compare",
    "evaluate",
    "filter",
    "filter_weights",
    "fit",
    "read_model",
    "rotate",
    "spectrum",
    "synthesize",
    "tapers",
]
