"""Geometry: lattices, rings, orientation helpers and bad-input errors."""

from __future__ import annotations

import numpy as np
import pytest

import steradian as st
from steradian.errors import SteradianError


def test_linear_is_centred_and_spaced():
    """A uniform line: n elements, spacing d, centroid at the origin (common practice)."""
    g = st.linear(8, 0.5)
    x = g.positions[:, 0]
    assert g.n == 8
    np.testing.assert_allclose(np.diff(x), 0.5)
    np.testing.assert_allclose(g.centroid, 0.0, atol=1e-15)
    np.testing.assert_allclose(g.lattice, [[0.5, 0, 0]])


def test_rectangular_order_and_extent():
    """Rectangular lattice: x fastest, extent (nx-1)dx by (ny-1)dy."""
    g = st.rectangular(4, 3, 0.5, 0.7)
    assert g.n == 12
    np.testing.assert_allclose(g.extent(), [1.5, 1.4, 0.0])
    np.testing.assert_allclose(g.positions[1] - g.positions[0], [0.5, 0, 0])
    np.testing.assert_allclose(g.positions[4] - g.positions[0], [0, 0.7, 0])
    assert g.is_planar


def test_triangular_is_equilateral_by_default():
    """Equilateral triangular lattice: every nearest-neighbour distance equals dx (geometry)."""
    g = st.triangular(6, 6, 0.6)
    from scipy.spatial import cKDTree

    d, _ = cKDTree(g.positions).query(g.positions, k=2)
    np.testing.assert_allclose(d[:, 1], 0.6, rtol=1e-12)
    np.testing.assert_allclose(g.lattice[1], [0.3, 0.6 * np.sqrt(3) / 2, 0])


def test_rings():
    """Ring and concentric rings: radii and counts as asked."""
    g = st.ring(12, 2.0)
    np.testing.assert_allclose(np.linalg.norm(g.positions, axis=1), 2.0)
    c = st.concentric_rings([1.0, 2.0], [6, 12], centre_element=True)
    assert c.n == 19
    r = np.sort(np.linalg.norm(c.positions, axis=1))
    np.testing.assert_allclose(r[:7], [0, 1, 1, 1, 1, 1, 1], atol=1e-15)


@pytest.mark.parametrize(
    "make, match",
    [
        (lambda: st.Geometry(np.zeros((0, 3))), "zero elements"),
        (lambda: st.Geometry([[0, 0, 0], [0, 0, 0]]), "same position"),
        (lambda: st.Geometry([[0, 0, np.nan]]), "NaN"),
        (lambda: st.linear(4, -0.5), "dx=-0.5|d=-0.5"),
        (lambda: st.linear(0, 0.5), "at least 1"),
        (lambda: st.rectangular(4, 4, 0.5, 0.0), "dy"),
        (lambda: st.Geometry(np.zeros((3, 4))), r"shape \(N, 3\)"),
        (lambda: st.concentric_rings([1.0], [3, 4]), "equal length"),
    ],
)
def test_bad_geometry_is_refused(make, match):
    """Impossible geometry raises SteradianError naming the problem."""
    with pytest.raises(SteradianError, match=match):
        make()


def test_rotation_to_gives_orthonormal_frames(rng):
    """rotation_to(normal): a rotation whose local z is the normal."""
    n = rng.normal(size=(20, 3))
    R = st.rotation_to(n)
    np.testing.assert_allclose(np.einsum("nji,njk->nik", R, R), np.broadcast_to(np.eye(3),
                               (20, 3, 3)), atol=1e-12)
    np.testing.assert_allclose(np.linalg.det(R), 1.0, atol=1e-12)
    np.testing.assert_allclose(R[:, :, 2], n / np.linalg.norm(n, axis=1, keepdims=True),
                               atol=1e-12)


def test_orientation_must_be_rotation():
    """Non-orthonormal orientation matrices are refused."""
    with pytest.raises(SteradianError, match="rotation"):
        st.Geometry([[0, 0, 0]], orientations=np.array([2 * np.eye(3)]))


def test_radius_about_centroid():
    """radius() is the largest distance from the centroid."""
    g = st.linear(5, 1.0).translated([10, 0, 0])
    assert g.radius() == pytest.approx(2.0)
