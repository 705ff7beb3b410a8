"""Coupled synthesis: the convex optimizer with the available power of coupled ports in
place of radiated power (current space), checked against the closed-form maximum realized
gain (Cauchy-Schwarz / Rayleigh quotient) and against the uncoupled optimum under the same
sidelobe limit (the coupled optimum can only be better; Pozar, "The active element pattern",
IEEE TAP 42(8), 1994)."""

from __future__ import annotations

import numpy as np
import pytest

from steradian.array import Array, Steering
from steradian.coupling import coupled_problem, dipole_coupling, max_realized_gain_weights
from steradian.elements import Dipole
from steradian.errors import SteradianError
from steradian.geometry import rectangular
from steradian.optimize import max_directivity
from steradian.units import C0


def panel(theta=40.0, n=5):
    arr = Array(rectangular(n, n, 0.5, 0.5), C0, Dipole(0.48, "x", C0),
                steering=Steering(theta, 90))
    return arr, dipole_coupling(arr, radius=0.004, z0=73.0)


def test_unconstrained_equals_closed_form():
    """No limits: the optimizer's closed form with P = T^-H T^-1 / scale reaches the
    closed-form maximum realized gain (to 1e-9), and its objective is that realized gain."""
    arr, c = panel()
    cp = coupled_problem(arr, c)
    res = max_directivity(cp.array, power_matrix=cp.power_matrix, loading=0)
    g = float(cp.realized_gain(cp.waves(res.weights))[0])
    _, gmax = max_realized_gain_weights(arr, c, arr.steering.unit[None])
    assert g == pytest.approx(float(gmax[0]), rel=1e-9)


def test_sidelobe_limited_coupled_beats_uncoupled():
    """Under the same -20 dB sidelobe limit the coupling-aware optimum has at least the
    realized gain of the uncoupled optimum driven into the coupled ports; the certificate
    bounds the realized gain it reached (within the solver gap)."""
    arr, c = panel(30.0)
    cp = coupled_problem(arr, c)
    rc = max_directivity(cp.array, psl_db=-20, power_matrix=cp.power_matrix)
    ru = max_directivity(arr, psl_db=-20)
    g_c = float(cp.realized_gain(cp.waves(rc.weights))[0])
    g_u = float(cp.realized_gain(ru.weights)[0])
    assert g_c >= g_u * (1 - 1e-6)
    assert rc.psl_db <= -20 + 0.011
    bound = rc.certificate["directivity_bound_dbi"]
    assert 10 * np.log10(g_c) <= bound + 1e-3


def test_power_matrix_checked():
    arr, c = panel(n=3)
    with pytest.raises(SteradianError, match="3 x 3|9 x 9"):
        max_directivity(arr, power_matrix=np.eye(3))
    bad = np.eye(9, dtype=complex)
    bad[0, 1] = 1j
    with pytest.raises(SteradianError, match="Hermitian"):
        max_directivity(arr, power_matrix=bad)
    with pytest.raises(SteradianError, match="steering"):
        coupled_problem(arr.with_steering(None), c)
