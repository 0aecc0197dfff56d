"""Checks on arrays handed to kugel: real numbers, the expected number of dimensions.

numpy arrays of float64 are passed to the engine as they are (any strides, no copy); other
real dtypes are converted once to float64. Complex, object, string and boolean arrays are
refused with a TypeError that names the argument.
"""

import numpy as np


def real_array(value, what, ndim=None):
    """``value`` as a float64 numpy array; TypeError for dtypes that are not real numbers."""
    array = np.asarray(value)
    if array.dtype.kind not in "fiu":
        raise TypeError(
            f"{what} has dtype {array.dtype}; expected real numbers (float or integer)"
        )
    if ndim is not None and array.ndim != ndim:
        raise ValueError(
            f"{what} has {array.ndim} dimension(s) (shape {array.shape}); expected {ndim}"
        )
    return array.astype(np.float64, copy=False)
