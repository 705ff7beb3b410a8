"""Radiated power, directivity, gain: against handbook formulas and scipy.integrate."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as hs
from scipy import integrate

import steradian as st
from steradian.radiation import (
    RF_EXPOSURE_CAUTION,
    closed_form_power,
    mismatch_factor,
    power_matrix,
    radiated_power,
)
from steradian.sphere import sphere_rule
from steradian.units import C0

F1 = C0  # 1 m wavelength


def uniform_line_directivity(n: int, kd: float, beta: float) -> float:
    """Directivity of a uniform line of isotropic elements with progressive phase beta.

    D = N^2 / [N + 2 sum_{m=1}^{N-1} (N - m) sin(m k d)/(m k d) cos(m beta)],
    valid when the beam maximum |AF| = N lies in visible space (|beta| <= kd). This is the
    standard closed form (C. A. Balanis, Antenna Theory: Analysis and Design, 4th ed., Wiley,
    2016, ch. 6, directivity of uniform linear arrays; formula recalled from memory and
    re-derived from P = 4 pi sum_mn w_m w_n* sinc(k r_mn)).
    """
    m = np.arange(1, n)
    return n**2 / (n + 2 * np.sum((n - m) * np.sinc(m * kd / np.pi) * np.cos(m * beta)))


@pytest.mark.parametrize("n", [2, 5, 16, 40])
def test_half_wave_broadside_line_has_d_equal_n(n):
    """D = N for a uniform half-wavelength broadside line of isotropic elements (Balanis ch. 6)."""
    a = st.Array(st.linear(n, 0.5), F1)
    assert st.peak_directivity(a).directivity == pytest.approx(n, rel=1e-9)


@pytest.mark.parametrize("n, d, theta0", [(10, 0.3, 0.0), (10, 0.7, 0.0), (12, 0.5, 40.0),
                                          (8, 0.25, 90.0), (20, 0.4, 90.0)])
def test_uniform_line_directivity_formula(n, d, theta0):
    """Uniform line, any spacing, scanned and end-fire, against the closed form (Balanis ch. 6).

    The line is along z and the beam is steered to theta0 (theta0 = 0 is end-fire along +z,
    90 is broadside). Progressive phase beta = -k d cos(theta0).
    """
    g = st.linear(n, d, axis="z")
    a = st.Array(g, F1, steering=st.Steering(theta0, 0.0))
    kd = 2 * np.pi * d
    # The line is along z: the steered direction's cosine with the axis is cos(theta0).
    expect = uniform_line_directivity(n, kd, -kd * np.cos(np.radians(theta0)))
    pk = st.peak_directivity(a)
    assert pk.directivity == pytest.approx(expect, rel=1e-8)


def test_endfire_large_n_approximation():
    """Ordinary end-fire, d = lambda/4: D approaches 4 N d / lambda for large N (Balanis ch. 6)."""
    n = 60
    a = st.Array(st.linear(n, 0.25, axis="z"), F1, steering=st.Steering(0.0, 0.0))
    assert st.peak_directivity(a).directivity == pytest.approx(4 * n * 0.25, rel=0.03)


def test_large_planar_array_aperture_directivity():
    """Uniform planar array at lambda/2 over a ground plane: D ~ 4 pi A / lambda^2.

    A = N dx dy (common practice; e.g. R. J. Mailloux, Phased Array Antenna Handbook, 3rd
    ed., ch. 2). The cos(theta) power element stands for the element in a large array over a
    ground plane; edge effects leave a few tenths of a dB.
    """
    n = 24
    a = st.Array(st.rectangular(n, n, 0.5), F1, element=st.CosinePower(1.0))
    d = st.peak_directivity(a).directivity
    expect = 4 * np.pi * n * n * 0.25
    assert 10 * np.log10(d / expect) == pytest.approx(0.0, abs=0.15)


@pytest.mark.parametrize("n", [4, 12, 32])
def test_quadrature_matches_closed_form_sinc(n):
    """Quadrature P_rad equals the exact 4 pi sum w_m w_n* sinc(k r_mn) to 1e-9 (N x N up to 32)."""
    rng = np.random.default_rng(n)
    a = st.Array(st.rectangular(n, n, 0.5), F1,
                 taper=rng.uniform(0.2, 1, n * n) * np.exp(1j * rng.uniform(0, 6, n * n)),
                 steering=st.Steering(25, 60))
    q = radiated_power(a, method="quadrature")
    c = radiated_power(a, method="closed_form")
    assert q.value == pytest.approx(c.value, rel=1e-9)
    assert q.error < 1e-9


def test_closed_form_against_numpy_sinc(rng):
    """The numba closed form equals a numpy evaluation with np.sinc (reference library)."""
    pos = rng.uniform(-2, 2, (30, 3))
    w = rng.normal(size=30) + 1j * rng.normal(size=30)
    r = np.linalg.norm(pos[:, None] - pos[None], axis=2)
    ref = 4 * np.pi * np.real(w @ np.sinc(2 * np.pi * r / np.pi) @ w.conj())
    assert closed_form_power(pos, w, 2 * np.pi) == pytest.approx(ref, rel=1e-12)


def _scipy_power(arr):
    """Radiated power by scipy.integrate.dblquad over theta, phi (independent reference)."""
    def f(theta, phi):
        d = np.array([[np.sin(theta) * np.cos(phi), np.sin(theta) * np.sin(phi),
                       np.cos(theta)]])
        return float(st.field(arr, d).intensity[0]) * np.sin(theta)

    tmax = np.pi / 2 if arr.element.front_only else np.pi
    val, _ = integrate.dblquad(f, 0, 2 * np.pi, 0, tmax, epsabs=1e-11, epsrel=1e-10)
    return val


@pytest.mark.parametrize("element", [st.ShortDipole("x"), st.CosinePower(2.5),
                                     st.Dipole(0.7, (1, 1, 0), F1)])
def test_quadrature_against_scipy_integrate(element):
    """Random small arrays with element patterns: quadrature equals scipy.integrate.dblquad."""
    rng = np.random.default_rng(7)
    pos = rng.uniform(-0.6, 0.6, (4, 3))
    if element.front_only:
        pos[:, 2] = 0
    a = st.Array(st.Geometry(pos), F1, element=element,
                 taper=rng.normal(size=4) + 1j * rng.normal(size=4))
    assert radiated_power(a).value == pytest.approx(_scipy_power(a), rel=1e-7)


def test_power_matrix_quadratic_form(rng):
    """w^H Q w equals the integrated radiated power, for isotropic and vector elements."""
    pos = rng.uniform(-1, 1, (10, 3))
    w = rng.normal(size=10) + 1j * rng.normal(size=10)
    for el in (st.Isotropic(), st.ShortDipole("y")):
        a = st.Array(st.Geometry(pos), F1, element=el, taper=w)
        Q = power_matrix(a)
        np.testing.assert_allclose(Q, Q.conj().T, atol=1e-12)
        assert np.real(w.conj() @ Q @ w) == pytest.approx(
            radiated_power(a, method="quadrature").value, rel=1e-10)


positions = hs.integers(2, 12).flatmap(
    lambda n: hs.lists(hs.tuples(*[hs.floats(-1.5, 1.5)] * 3), min_size=n, max_size=n,
                       unique_by=lambda p: tuple(round(c, 2) for c in p)))


@settings(max_examples=20, deadline=None)
@given(pts=positions, seed=hs.integers(0, 2**32 - 1))
def test_mean_directivity_is_one(pts, seed):
    """The average of D over the sphere is 1 (definition of D, IEEE Std 145-2013).

    Integrated with an independent, finer product rule than the one behind P_rad.
    """
    rng = np.random.default_rng(seed)
    a = st.Array(st.Geometry(np.array(pts)), F1, element=st.ShortDipole("z"),
                 taper=rng.normal(size=len(pts)) + 1j * rng.normal(size=len(pts)))
    p = radiated_power(a, method="quadrature")
    rule = sphere_rule(p.n_theta + 7, p.n_phi + 13)
    d = st.directivity(a, rule.grid, power=p)
    assert rule.integrate(d) / (4 * np.pi) == pytest.approx(1.0, rel=1e-9)


@settings(max_examples=15, deadline=None)
@given(pts=positions, seed=hs.integers(0, 2**32 - 1),
       shift=hs.tuples(*[hs.floats(-5, 5)] * 3), scale=hs.floats(1e-3, 1e3),
       phase=hs.floats(0, 2 * np.pi))
def test_directivity_invariances(pts, seed, shift, scale, phase):
    """Translation, global phase and weight scaling leave D unchanged; D_max >= 1.

    Invariants of D = 4 pi U / P_rad (IEEE Std 145-2013 definitions).
    """
    rng = np.random.default_rng(seed)
    pos = np.array(pts)
    w = rng.uniform(0.1, 1, len(pos)) * np.exp(1j * rng.uniform(0, 6, len(pos)))
    dirs = rng.normal(size=(25, 3))
    a = st.Array(st.Geometry(pos), F1, taper=w)
    b = st.Array(st.Geometry(pos + np.array(shift)), F1, taper=scale * np.exp(1j * phase) * w)
    da = st.directivity(a, dirs)
    db = st.directivity(b, dirs)
    np.testing.assert_allclose(db, da, rtol=1e-9, atol=1e-12)
    assert st.peak_directivity(a).directivity >= 1.0 - 1e-12


def test_gain_and_realized_gain():
    """G = xi D; realized gain G (1 - |Gamma|^2) with |Gamma| = (VSWR-1)/(VSWR+1).

    IEEE Std 145-2013 definitions; VSWR 2 gives |Gamma|^2 = 1/9 (common practice).
    """
    assert st.gain(100.0, 0.8) == pytest.approx(80.0)
    assert st.realized_gain(80.0, vswr=2.0) == pytest.approx(80.0 * 8 / 9)
    assert mismatch_factor(return_loss_db=10.0) == pytest.approx(0.9)
    with pytest.raises(st.SteradianError, match="at most 1"):
        st.gain(10.0, 1.2)
    with pytest.raises(st.SteradianError, match="vswr"):
        mismatch_factor(vswr=0.5)


def test_eirp_carries_caution():
    """EIRP = total input power x realized gain, with the RF exposure caution."""
    e = st.eirp(100.0, 2.0, np.ones(16))
    assert e["total_power_w"] == pytest.approx(32.0)
    assert e["eirp_dbw"] == pytest.approx(10 * np.log10(3200.0))
    assert e["caution"] == RF_EXPOSURE_CAUTION


def test_beam_solid_angle_and_taper_efficiency():
    """Omega_A = 4 pi / D; taper efficiency |sum w|^2 / (N sum |w|^2) at lambda/2 (Mailloux)."""
    assert st.beam_solid_angle(4 * np.pi) == pytest.approx(1.0)
    w = np.hanning(18)[1:-1]
    a = st.Array(st.linear(16, 0.5), F1, taper=w)
    expect = w.sum() ** 2 / (16 * (w**2).sum())
    assert st.taper_efficiency(a) == pytest.approx(expect, rel=1e-9)
