"""Pattern metrics checked against handbook formulas and general-purpose reference libraries."""

from __future__ import annotations

import numpy as np
import pytest

import steradian as st
from steradian.errors import SteradianError
from steradian.metrics import DB_FLOOR, cut, principal_cuts

F = st.C0  # 1 m wavelength
LAM = 1.0


def _ula_af_db(n, d, angle_rad):
    """Normalised uniform-array factor |sin(N psi/2) / (N sin(psi/2))|^2 in dB, psi = k d sin.

    Source: C. A. Balanis, Antenna Theory, 4th ed., 2016, eq. (6-10c).
    """
    psi = 2 * np.pi / LAM * d * np.sin(angle_rad)
    with np.errstate(invalid="ignore", divide="ignore"):
        af = np.sin(n * psi / 2) / (n * np.sin(psi / 2))
    af = np.where(np.abs(np.sin(psi / 2)) < 1e-12, 1.0, af)
    return np.maximum(10 * np.log10(np.maximum(af**2, 1e-30)), DB_FLOOR)


def test_principal_cuts_of_uniform_line_follow_the_array_factor():
    """Cut 0 of a broadside line along x is the x-z plane and follows the uniform array
    factor (Balanis, Antenna Theory, 4th ed., eq. 6-10c); cut 1 (y-z plane) is the flat
    cone of the collinear array."""
    arr = st.Array(st.linear(8, 0.5), F)
    c0, c1 = principal_cuts(arr, n=181)
    assert (c0.name, c1.name) == ("phi_plane", "cross_plane")
    assert c0.angle_deg[0] == -90 and c0.angle_deg[-1] == 90 and len(c0.angle_deg) == 181
    peak = c0.directivity_dbi[90]
    ref = _ula_af_db(8, 0.5, np.deg2rad(c0.angle_deg))
    sel = ref > -80
    np.testing.assert_allclose(c0.directivity_dbi[sel] - peak, ref[sel], atol=1e-9)
    np.testing.assert_allclose(np.abs(c0.directions[:, 1]), 0, atol=1e-15)  # x-z plane
    np.testing.assert_allclose(np.abs(c1.directions[:, 0]), 0, atol=1e-15)  # y-z plane
    np.testing.assert_allclose(c1.directivity_dbi, peak, atol=1e-9)
    assert np.all(np.isfinite(c0.directivity_dbi)) and c0.directivity_dbi.min() >= DB_FLOOR
    # Closed-form directivity of the uniform half-wave line is N (Balanis eq. 6-47 area).
    assert peak == pytest.approx(10 * np.log10(8), abs=1e-9)


def test_principal_cuts_are_orthogonal_great_circles_through_a_scanned_peak():
    """Geometry of the cuts (definition, common practice): cut 0 contains the beam axis and z,
    cut 1 is orthogonal to it; both pass through the peak at angle 0."""
    arr = st.Array(st.rectangular(6, 6, 0.5), F, steering=st.Steering(30, 45))
    c0, c1 = principal_cuts(arr, n=121, span_deg=60)
    r0 = st.direction(30, 45)
    np.testing.assert_allclose(c0.directions[60], r0, atol=1e-12)
    np.testing.assert_allclose(c1.directions[60], r0, atol=1e-12)
    n0 = np.cross(c0.directions[0], c0.directions[-1])
    n1 = np.cross(c1.directions[0], c1.directions[-1])
    assert abs(n0 @ np.array([0, 0, 1.0])) < 1e-12  # plane 0 contains z
    assert abs(n0 @ n1) < 1e-12
    np.testing.assert_allclose(np.abs(c0.directions @ n0 / np.linalg.norm(n0)), 0, atol=1e-12)
    np.testing.assert_allclose(c0.phi_deg[60:], 45, atol=1e-9)
    assert c0.directivity_dbi[60] == pytest.approx(c0.directivity_dbi.max(), abs=1e-9)


def test_plain_cut_signed_theta():
    """A plain cut at phi = 0 with negative theta lies at phi = 180 (convention)."""
    arr = st.Array(st.linear(4, 0.5), F)
    c = cut(arr, 0.0, [-20.0, 0.0, 20.0])
    np.testing.assert_allclose(c.theta_deg, [20, 0, 20])
    np.testing.assert_allclose(c.phi_deg, [180, 0, 0])
    ref = _ula_af_db(4, 0.5, np.deg2rad(c.angle_deg))
    np.testing.assert_allclose(c.directivity_dbi - c.directivity_dbi[1], ref, atol=1e-9)


def test_cut_bad_input():
    arr = st.Array(st.linear(4, 0.5), F)
    with pytest.raises(SteradianError, match="span_deg"):
        principal_cuts(arr, span_deg=200)
    with pytest.raises(SteradianError, match="theta_deg"):
        cut(arr, 0.0, [0.0, np.nan])
