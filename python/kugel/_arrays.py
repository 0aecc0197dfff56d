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


def real_numbers(value, count, what, shape):
    """``value`` as a tuple of ``count`` floats; ValueError or TypeError naming ``what``."""
    try:
        items = tuple(value)
    except TypeError:
        raise TypeError(f"{what} must be a sequence of {count} numbers {shape}, got {value!r}") from None
    if len(items) != count:
        raise ValueError(f"{what} must hold {count} numbers {shape}, got {len(items)}: {value!r}")
    out = []
    for v in items:
        if isinstance(v, (str, bytes, complex, np.complexfloating)) or isinstance(v, bool):
            raise TypeError(f"{what} must hold real numbers {shape}, got {v!r}")
        out.append(float(v))
    return tuple(out)


def whole_number(value, what):
    """A non-negative whole number (an int, or a float that is one); TypeError for anything
    else, ValueError below 0."""
    whole_float = isinstance(value, (float, np.floating)) and float(value).is_integer()
    if isinstance(value, bool) or not (isinstance(value, (int, np.integer)) or whole_float):
        raise TypeError(f"{what} must be a whole number, got {value!r}")
    n = int(value)
    if n < 0:
        raise ValueError(f"{what} must be >= 0, got {n}")
    return n
