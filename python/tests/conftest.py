"""Shared fixtures: the command-line binary to compare against, random band-limited models."""

import os
import pathlib
import subprocess

import numpy as np
import pytest

import kugel

REPO = pathlib.Path(__file__).resolve().parents[2]


def _find_cli():
    given = os.environ.get("KUGEL_BIN")
    if given:
        return pathlib.Path(given)
    for profile in ("debug", "release"):
        candidate = REPO / "target" / profile / "kugel"
        if candidate.exists():
            return candidate
    return None


@pytest.fixture(scope="session")
def kugel_cli():
    """Runs the `kugel` binary (KUGEL_BIN, else target/debug or target/release) and returns
    its completed process; fails the test when the binary is missing."""
    binary = _find_cli()
    if binary is None or not binary.exists():
        pytest.fail("the kugel binary was not found: build it (cargo build) or set KUGEL_BIN")

    def run(*args, check=True):
        done = subprocess.run([str(binary), "--quiet", *map(str, args)], capture_output=True,
                              text=True)
        if check and done.returncode != 0:
            raise AssertionError(f"kugel {' '.join(map(str, args))} failed ({done.returncode}):\n{done.stderr}")
        return done

    return run


def random_model(lmax, seed=1, normalization="geodesy", decay=2.0, **metadata):
    """A band-limited model with coefficients ~ l^-decay (invented, reproducible)."""
    rng = np.random.default_rng(seed)
    degree = np.arange(lmax + 1, dtype=float)[:, None]
    scale = np.where(degree > 0, np.maximum(degree, 1.0) ** -decay, 1.0)
    C = np.tril(rng.standard_normal((lmax + 1, lmax + 1)) * scale)
    S = np.tril(rng.standard_normal((lmax + 1, lmax + 1)) * scale)
    S[:, 0] = 0.0
    return kugel.Model(C, S, normalization=normalization, **metadata)


@pytest.fixture
def model30():
    return random_model(30, seed=7, reference_radius_m=6_371_000.0, units="m")
