"""Mutual coupling model: induced-EMF dipole impedances, Z <-> S with per-port reference
resistances, reciprocity, passivity and the lossless power balance.

Outside references: the induced-EMF closed forms of Balanis, *Antenna Theory*, 4th ed.,
2016, eqs. 8-60a (self impedance), 8-71 (side by side) and 8-72 (collinear), written here
from memory and evaluated with scipy.special.sici; the radiation resistance as the far-field
integral of eq. 4-70 (scipy.integrate.quad); the echelon mutual impedance as the EMF
integral of the near field of eq. 8-54 done numerically (scipy.integrate.quad); power waves
(Kurokawa 1965) and the active impedance relation of Hansen, *Phased Array Antennas*, ch. 7.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad
from scipy.special import sici

from steradian.array import Array
from steradian.coupling import (
    accepted_power,
    accepted_power_matrix,
    active_reflection,
    dipole_coupling,
    feed_currents,
    mutual_impedance,
    passivity_margin,
    power_balance,
    reciprocity_error,
    s_to_z,
    self_impedance,
    vswr,
    z_to_s,
)
from steradian.elements import Dipole
from steradian.errors import SteradianError
from steradian.geometry import Geometry, rectangular
from steradian.units import C0, ETA0

K = 2 * np.pi  # wavelength 1 m


def balanis_side_by_side(d, length=0.5):
    """Balanis eq. 8-71a/b (from memory): parallel side-by-side half-wave dipoles."""
    u0, u1, u2 = K * d, K * (np.hypot(d, length) + length), K * (np.hypot(d, length) - length)
    s0, c0 = sici(u0)
    s1, c1 = sici(u1)
    s2, c2 = sici(u2)
    return ETA0 / (4 * np.pi) * (2 * c0 - c1 - c2) - 1j * ETA0 / (4 * np.pi) * (2 * s0 - s1 - s2)


def balanis_collinear(h, length=0.5):
    """Balanis eq. 8-72a/b (from memory): collinear half-wave dipoles, centres h apart."""
    v0, v1, v2, v3 = K * h, 2 * K * (h + length), 2 * K * (h - length), (h * h - length**2) / h**2

    def S(x):
        return sici(x)[0]

    def C(x):
        return sici(x)[1]

    e = ETA0 / (8 * np.pi)
    r = (-e * np.cos(v0) * (-2 * C(2 * v0) + C(v2) + C(v1) - np.log(v3))
         + e * np.sin(v0) * (2 * S(2 * v0) - S(v2) - S(v1)))
    x = (-e * np.cos(v0) * (2 * S(2 * v0) - S(v2) - S(v1))
         + e * np.sin(v0) * (2 * C(2 * v0) - C(v2) - C(v1) - np.log(v3)))
    return r + 1j * x


def test_half_wave_self_impedance():
    """Balanis eq. 8-60a and the textbook value 73.1 + j42.5 ohm of a thin half-wave dipole
    (a thin-wire value: the radius enters through sin(kl) = 0)."""
    z = self_impedance(K, 0.5, 1e-6)
    assert z.real == pytest.approx(73.08, abs=0.01)
    assert z.imag == pytest.approx(42.5, abs=0.05)


@pytest.mark.parametrize("length", [0.3, 0.45, 0.5, 0.62, 0.75])
def test_radiation_resistance_is_far_field_power(length):
    """Radiation resistance referred to the feed = Balanis eq. 4-70 far-field integral
    (scipy.integrate.quad) divided by sin^2(kl/2) (eq. 4-79)."""
    h = length / 2

    def f(t):
        return (np.cos(K * h * np.cos(t)) - np.cos(K * h)) ** 2 / np.sin(t)

    r_max = ETA0 / (2 * np.pi) * quad(f, 0, np.pi, epsabs=1e-13, limit=200)[0]
    assert self_impedance(K, length, 1e-4).real == pytest.approx(
        r_max / np.sin(K * h) ** 2, rel=1e-9)


@pytest.mark.parametrize("d", [0.05, 0.1, 0.25, 0.5, 0.75, 1.0, 1.5, 3.0])
def test_side_by_side_matches_balanis_closed_form(d):
    """Balanis eq. 8-71 (side by side, half-wave; sici) to 1e-12 relative."""
    z = mutual_impedance(K, 0.5, d)
    assert abs(z - balanis_side_by_side(d)) <= 1e-12 * abs(z) + 1e-12


@pytest.mark.parametrize("d, z_table", [(0.1, 67.3 + 7.5j), (0.25, 40.8 - 28.3j),
                                        (0.5, -12.5 - 29.9j), (1.0, 4.0 + 17.7j)])
def test_side_by_side_tabulated(d, z_table):
    """Tabulated mutual impedance of side-by-side half-wave dipoles (Balanis fig. 8.20 /
    Kraus' tables; values recalled from memory to 0.1 ohm)."""
    assert abs(mutual_impedance(K, 0.5, d) - z_table) < 0.15


@pytest.mark.parametrize("h", [0.55, 0.6, 0.75, 1.0, 1.5, 2.3])
def test_collinear_matches_balanis_closed_form(h):
    """Balanis eq. 8-72 (collinear half-wave dipoles; sici) to 1e-12 relative."""
    z = mutual_impedance(K, 0.5, 0.0, h)
    assert abs(z - balanis_collinear(h)) <= 1e-12 * abs(z) + 1e-12


def test_collinear_touching_ends():
    """Ends touching (s = 0): 26.4 + j20.2 ohm (Balanis fig. 8.21, from memory), the limit of
    eq. 8-72."""
    z = mutual_impedance(K, 0.5, 0.0, 0.5)
    assert abs(z - (26.4 + 20.2j)) < 0.06
    assert abs(z - balanis_collinear(0.5 + 1e-7)) < 1e-3


def numeric_emf(length, rho, dz):
    """-1/(I1 I2) int E_z1 I2 dz with E_z of Balanis eq. 8-54, by scipy.integrate.quad."""
    h = length / 2

    def ez(z):
        r1, r2, r0 = np.hypot(rho, z - h), np.hypot(rho, z + h), np.hypot(rho, z)
        return -1j * ETA0 / (4 * np.pi) * (np.exp(-1j * K * r1) / r1 + np.exp(-1j * K * r2) / r2
                                           - 2 * np.cos(K * h) * np.exp(-1j * K * r0) / r0)

    def g(z):
        return -ez(z) * np.sin(K * (h - abs(z - dz)))

    re = quad(lambda z: g(z).real, dz - h, dz + h, points=[dz], epsabs=1e-12, limit=400)[0]
    im = quad(lambda z: g(z).imag, dz - h, dz + h, points=[dz], epsabs=1e-12, limit=400)[0]
    return (re + 1j * im) / np.sin(K * h) ** 2


@pytest.mark.parametrize("length, rho, dz", [(0.5, 0.3, 0.4), (0.5, 0.5, 0.5),
                                             (0.4, 0.2, 0.9), (0.62, 0.7, 0.1),
                                             (0.5, 0.25, 0.0)])
def test_echelon_matches_numeric_emf_integral(length, rho, dz):
    """Echelon (and side-by-side) mutual impedance against the EMF integral done by quadrature
    (independent of the sici reduction)."""
    z = mutual_impedance(K, length, rho, dz)
    assert abs(z - numeric_emf(length, rho, dz)) < 1e-7 * max(abs(z), 1)


def test_overlapping_collinear_refused():
    with pytest.raises(SteradianError, match="overlap"):
        mutual_impedance(K, 0.5, 0.0, 0.3)
    with pytest.raises(SteradianError, match="feed point"):
        mutual_impedance(K, 1.0, 0.5)


def test_z_s_round_trip_per_port_reference():
    """S = D^-1 (Z - R)(Z + R)^-1 D (Kurokawa 1965) inverts exactly; one port reduces to
    Gamma = (Z - R)/(Z + R)."""
    rng = np.random.default_rng(3)
    Z = rng.normal(size=(5, 5)) * 20 + 1j * rng.normal(size=(5, 5)) * 20 + 80 * np.eye(5)
    r = np.array([50, 60, 75, 40, 100.0])
    assert np.allclose(s_to_z(z_to_s(Z, r), r), Z, atol=1e-10)
    z = 30 + 40j
    assert z_to_s([[z]], 50.0)[0, 0] == pytest.approx((z - 50) / (z + 50), abs=1e-15)


def test_active_reflection_equals_active_impedance_mismatch():
    """Gamma_active = (Z_active - R0)/(Z_active + R0) with Z_active,m = sum_n Z_mn I_n / I_m
    (Hansen, ch. 7, common practice), for a real Z0 equal on every port."""
    g = rectangular(4, 4, 0.5, 0.5)
    arr = Array(g, C0, Dipole(0.47, "x", C0))
    c = dipole_coupling(arr, radius=0.003, z0=60.0)
    a = np.exp(1j * np.linspace(0, 3, 16)) * np.linspace(1, 2, 16)
    current = feed_currents(c.Z, 60.0) @ a
    z_act = (c.Z @ current) / current
    assert np.allclose(active_reflection(c.S, a), (z_act - 60) / (z_act + 60), atol=1e-12)
    assert vswr(0.5) == pytest.approx(3.0)


def layouts():
    """Random parallel-dipole layouts: points on a coarse grid (no overlap), lengths 0.3..0.7
    wavelength, per-port reference resistances."""
    cells = st.lists(st.tuples(st.integers(-3, 3), st.integers(-3, 3), st.integers(-1, 1)),
                     min_size=2, max_size=7, unique=True)
    return st.tuples(cells, st.floats(0.3, 0.7), st.floats(1e-4, 1e-2),
                     st.lists(st.floats(20, 200), min_size=7, max_size=7))


@settings(max_examples=25, deadline=None)
@given(layouts())
def test_dipole_model_is_reciprocal_and_passive(case):
    """Reciprocity (S = S^T, also with unequal real references) and passivity (singular
    values of S <= 1, I - S^H S positive semidefinite) of the induced-EMF model (Pozar,
    *Microwave Engineering*, sec. 4.3)."""
    cells, length, radius, z0 = case
    pos = np.array(cells, float) * [length + 0.05, 0.37, 0.41]
    arr = Array(Geometry(pos), C0, Dipole(length, "x", C0))
    c = dipole_coupling(arr, radius=radius * length, z0=z0[:len(cells)])
    assert reciprocity_error(c.S) < 1e-12
    assert passivity_margin(c.S) > -1e-12
    assert np.linalg.eigvalsh(accepted_power_matrix(c.S)).min() > -1e-12


@pytest.mark.parametrize("length, z0", [(0.48, 50.0), (0.5, [40, 55, 73, 90, 60, 50])])
def test_power_balance_random_excitations(length, z0):
    """Lossless balance: the radiated power integrated with steradian's sphere rule equals
    a^H (I - S^H S) a to 1e-6 (measured 1e-13) over random excitations (side-by-side,
    collinear and echelon pairs)."""
    g = rectangular(3, 2, 0.5, 0.6)
    arr = Array(g, C0, Dipole(length, "x", C0))
    c = dipole_coupling(arr, radius=0.002, z0=z0)
    rng = np.random.default_rng(7)
    for _ in range(5):
        a = rng.normal(size=6) + 1j * rng.normal(size=6)
        b = power_balance(arr, c, a)
        assert b["relative_error"] < 1e-9
        assert b["accepted_w"] == pytest.approx(float(accepted_power(c.S, a)), rel=1e-14)


def test_dipole_model_needs_finite_parallel_dipoles():
    g = rectangular(2, 1, 0.5)
    with pytest.raises(SteradianError, match="model = 'dipole'"):
        dipole_coupling(Array(g, C0), radius=0.001)


def test_dipole_model_refused_over_budget():
    """The dense N x N model is refused before anything is built (steradian.budget)."""
    from steradian.budget import limited

    arr = Array(rectangular(64, 64, 0.5, 0.5), C0, Dipole(0.48, "x", C0))
    with limited("64MiB"), pytest.raises(SteradianError, match="impedance matrix of 4,096"):
        dipole_coupling(arr, radius=0.001)
