"""The coefficient model: ``kugel.Model`` and the model files.

C and S are numpy arrays of shape (L+1, L+1) indexed [l, m], zero above the diagonal (m > l);
S[l, 0] is always 0. The normalisation names are the engine's (docs/conventions.md):
``geodesy`` (4π), ``schmidt``, ``orthonormal``, ``unnormalized``; the Condon–Shortley phase
(−1)^m is carried separately. A Model is a plain Python object, so it pickles (dask workers).
"""

import os

import numpy as np

from . import _native
from ._arrays import real_array

#: Mean Earth radius in metres (IUGG R1 rounded; common practice): the default reference radius.
EARTH_MEAN_RADIUS_M = 6_371_000.0

_DEFAULT_PHASE = {"orthonormal": True}


def _square(value, what, lmax):
    array = real_array(value, what, ndim=2)
    if array.shape != (lmax + 1, lmax + 1):
        raise ValueError(
            f"{what} has shape {array.shape}; a model of degree {lmax} needs ({lmax + 1}, {lmax + 1})"
        )
    return array


def _check_triangle(array, what):
    upper = np.triu(array, k=1)
    if np.any(upper != 0):
        l, m = np.argwhere(upper != 0)[0]
        raise ValueError(
            f"{what}[{l}, {m}] = {array[l, m]} lies above the diagonal (m > l) and must be 0"
        )
    bad = ~np.isfinite(np.tril(array))
    if np.any(bad):
        l, m = np.argwhere(bad)[0]
        raise ValueError(f"coefficient {what}_{{{l},{m}}} is not finite ({array[l, m]})")


def _conventions(normalization, condon_shortley_phase, reference_radius_m):
    """The normalisation name, phase (default: customary for it) and a checked radius."""
    normalization = str(normalization).strip().lower()
    if condon_shortley_phase is None:
        condon_shortley_phase = _DEFAULT_PHASE.get(normalization, False)
    reference_radius_m = float(reference_radius_m)
    if not (np.isfinite(reference_radius_m) and reference_radius_m > 0):
        raise ValueError(
            f"reference_radius_m must be a positive radius in metres, got {reference_radius_m}"
        )
    return normalization, condon_shortley_phase, reference_radius_m


class Model:
    """A real spherical-harmonic model: C, S (and optionally their σ) with its conventions.

    Build one with ``kugel.Model(C, S, normalization="geodesy", reference_radius_m=R, ...)``,
    read one with ``kugel.read_model(path)``, or get one from ``kugel.analyze`` /
    ``kugel.fit``.
    """

    def __init__(
        self,
        C,
        S,
        *,
        C_sigma=None,
        S_sigma=None,
        normalization="geodesy",
        condon_shortley_phase=None,
        reference_radius_m=EARTH_MEAN_RADIUS_M,
        gm_m3_s2=None,
        units="1",
        attributes=None,
    ):
        C = real_array(C, "C", ndim=2)
        if C.shape[0] == 0 or C.shape[0] != C.shape[1]:
            raise ValueError(f"C has shape {C.shape}; expected a square (L+1, L+1) array")
        lmax = C.shape[0] - 1
        S = _square(S, "S", lmax)
        _check_triangle(C, "C")
        _check_triangle(S, "S")
        if np.any(S[:, 0] != 0):
            l = int(np.argwhere(S[:, 0] != 0)[0][0])
            raise ValueError(f"S[{l}, 0] = {S[l, 0]}: the sine coefficients of order 0 must be 0")
        if (C_sigma is None) != (S_sigma is None):
            raise ValueError("give both C_sigma and S_sigma, or neither")
        if C_sigma is not None:
            C_sigma = _square(C_sigma, "C_sigma", lmax)
            S_sigma = _square(S_sigma, "S_sigma", lmax)
        normalization, condon_shortley_phase, reference_radius_m = _conventions(
            normalization, condon_shortley_phase, reference_radius_m)
        self.C = C
        self.S = S
        self.C_sigma = C_sigma
        self.S_sigma = S_sigma
        self.normalization = normalization
        self.condon_shortley_phase = bool(condon_shortley_phase)
        self.reference_radius_m = reference_radius_m
        self.gm_m3_s2 = None if gm_m3_s2 is None else float(gm_m3_s2)
        self.units = str(units)
        self.attributes = {str(k): str(v) for k, v in (attributes or {}).items()}
        # the normalisation name and the arrays as the engine will read them
        _native.check_model(self)

    @classmethod
    def _from_native(cls, fields):
        model = cls.__new__(cls)
        model.__dict__.update(fields)
        return model

    @property
    def lmax(self):
        """The model's degree L."""
        return self.C.shape[0] - 1

    def converted(self, normalization="geodesy", condon_shortley=None):
        """The model in another normalisation (and phase; default: customary for it)."""
        return Model._from_native(_native.convert_model(self, normalization, condon_shortley))

    def truncated(self, lmax):
        """The model truncated to degree ``lmax`` (zero-padded when ``lmax`` is larger)."""
        lmax = int(lmax)
        if lmax < 0:
            raise ValueError(f"lmax must be >= 0, got {lmax}")
        return Model._from_native(_native.resize_model(self, lmax))

    def to_complex(self, normalization=None, condon_shortley=None):
        """The complex coefficients a_lm (m = −l..l) of the same field, as ``kugel convert
        --form complex`` writes them: a complex array of shape (L+1, 2L+1) indexed
        [l, L + m], zero where |m| > l. ``normalization`` defaults to the model's; the phase
        to the model's when the normalisation stays, else to the customary one for the new
        normalisation. Returns ``(a, normalization, condon_shortley)`` (conventions in
        docs/conventions.md)."""
        re, im, normalization, phase = _native.to_complex(self, normalization, condon_shortley)
        a = np.empty(re.shape, dtype=np.complex128)
        a.real = re
        a.imag = im
        return a, normalization, phase

    @classmethod
    def from_complex(cls, a, normalization="orthonormal", condon_shortley_phase=None, *,
                     reference_radius_m=EARTH_MEAN_RADIUS_M, gm_m3_s2=None, units="1"):
        """The real model of the field that complex coefficients ``a`` (shape (L+1, 2L+1),
        indexed [l, L + m]) describe, in the same normalisation and phase, as a complex table
        is read. ``a`` must describe a real field: a_{l,−m} = (−1)^m conj(a_lm) with the
        Condon–Shortley phase, conj(a_lm) without it."""
        array = np.asarray(a)
        if array.dtype.kind not in "fiuc":
            raise TypeError(f"a has dtype {array.dtype}; expected complex or real numbers")
        if array.ndim != 2:
            raise ValueError(f"a has {array.ndim} dimension(s) (shape {array.shape}); expected 2")
        normalization, condon_shortley_phase, reference_radius_m = _conventions(
            normalization, condon_shortley_phase, reference_radius_m)
        fields = _native.from_complex(
            np.ascontiguousarray(array.real, dtype=np.float64),
            np.ascontiguousarray(array.imag, dtype=np.float64),
            normalization, bool(condon_shortley_phase), reference_radius_m,
            None if gm_m3_s2 is None else float(gm_m3_s2), str(units),
        )
        return cls._from_native(fields)

    def to_netcdf(self, path):
        """Writes the model as CF NetCDF-4 (written to a temporary file, then renamed)."""
        path = os.fspath(path)
        if not path.lower().endswith((".nc", ".nc4", ".cdf", ".netcdf")):
            raise ValueError(f"{path}: a NetCDF model file name ends in .nc")
        _native.write_model(self, path, "kugel Python package: Model.to_netcdf")

    def to_file(self, path):
        """Writes the model: NetCDF-4 for ``.nc``, the text table otherwise."""
        _native.write_model(self, os.fspath(path), "kugel Python package: Model.to_file")

    def __eq__(self, other):
        if not isinstance(other, Model):
            return NotImplemented
        def same(a, b):
            if a is None or b is None:
                return a is None and b is None
            return np.array_equal(a, b)
        return (
            same(self.C, other.C)
            and same(self.S, other.S)
            and same(self.C_sigma, other.C_sigma)
            and same(self.S_sigma, other.S_sigma)
            and (self.normalization, self.condon_shortley_phase, self.reference_radius_m,
                 self.gm_m3_s2, self.units)
            == (other.normalization, other.condon_shortley_phase, other.reference_radius_m,
                other.gm_m3_s2, other.units)
        )

    __hash__ = None

    def __repr__(self):
        gm = "" if self.gm_m3_s2 is None else f", gm_m3_s2={self.gm_m3_s2:g}"
        sigma = ", with sigma" if self.C_sigma is not None else ""
        return (
            f"kugel.Model(lmax={self.lmax}, normalization={self.normalization!r}, "
            f"condon_shortley_phase={self.condon_shortley_phase}, "
            f"reference_radius_m={self.reference_radius_m:g}{gm}, units={self.units!r}{sigma})"
        )


def read_model(path):
    """Reads a model file: NetCDF (recognised by its signature) or a text table."""
    return Model._from_native(_native.read_model(os.fspath(path)))
