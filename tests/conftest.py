"""Shared fixtures. Units: metres and hertz; most tests use a 1 m wavelength (f = c0)."""

from __future__ import annotations

import os

import matplotlib
import numpy as np
import pytest

matplotlib.use("Agg")
os.environ.setdefault("MPLBACKEND", "Agg")

from steradian.units import C0  # noqa: E402

F1 = C0
"""Frequency with a 1 m wavelength."""


@pytest.fixture
def f1() -> float:
    return F1


@pytest.fixture
def rng():
    return np.random.default_rng(20261202)
