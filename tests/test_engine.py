"""Pattern engine: the numba direct path against the plain-numpy definition."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as hs

import steradian as st
from steradian.budget import limited
from steradian.engine import array_factor, response_blocks, response_matrix
from steradian.errors import SteradianError


def _random_case(rng, n, m, planar=False):
    pos = rng.uniform(-3, 3, (n, 3))
    if planar:
        pos[:, 2] = 0
    w = rng.normal(size=n) + 1j * rng.normal(size=n)
    d = rng.normal(size=(m, 3))
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    return pos, w, d


@pytest.mark.nojit
@pytest.mark.parametrize("n, m", [(1, 5), (7, 33), (64, 500)])
def test_direct_equals_reference(rng, n, m):
    """Direct summation (numba, polynomial sin/cos) equals exp(1j*k*(pos @ dirs.T)) @ w."""
    pos, w, d = _random_case(rng, n, m)
    a = array_factor(pos, w, 2 * np.pi, d, method="direct")
    b = array_factor(pos, w, 2 * np.pi, d, method="reference")
    np.testing.assert_allclose(a, b, rtol=0, atol=1e-12 * np.abs(w).sum())


@pytest.mark.nojit
def test_direct_large_phases(rng):
    """Accuracy holds for phases of thousands of radians (a 100-wavelength aperture)."""
    pos, w, d = _random_case(rng, 50, 200)
    pos *= 30
    a = array_factor(pos, w, 2 * np.pi, d, method="direct")
    b = array_factor(pos, w, 2 * np.pi, d, method="reference")
    np.testing.assert_allclose(a, b, rtol=0, atol=1e-11 * np.abs(w).sum())


@settings(max_examples=30, deadline=None)
@given(x=hs.floats(-1e4, 1e4, allow_nan=False))
def test_kernel_sincos_against_numpy(x):
    """The inlined polynomial sin/cos matches numpy's libm to 1e-15 absolute (+ eps|x|)."""
    from steradian.engine import KERNELS

    s, c = KERNELS["sincos"].function(x)
    tol = 2e-15 + 4e-16 * abs(x)
    assert abs(s - np.sin(x)) <= tol and abs(c - np.cos(x)) <= tol


def test_field_matches_response_matrix(rng, f1):
    """field(array) equals response_matrix(array) @ weights for a vector element."""
    pos, w, d = _random_case(rng, 9, 40)
    a = st.Array(st.Geometry(pos), f1, element=st.ShortDipole("x"), taper=w)
    fld = st.field(a, d)
    A = response_matrix(a, d)
    np.testing.assert_allclose(fld.e_theta, A[0] @ w, atol=1e-12)
    np.testing.assert_allclose(fld.e_phi, A[1] @ w, atol=1e-12)


def test_uv_grid_invisible_is_nan(f1):
    """u-v grids: NaN outside the unit circle, shaped (len(v), len(u))."""
    a = st.Array(st.rectangular(3, 3, 0.5), f1)
    g = st.UVGrid(np.linspace(-1, 1, 11), np.linspace(-1, 1, 7))
    fld = st.field(a, g)
    assert fld.e_theta.shape == (7, 11)
    assert np.isnan(fld.e_theta[0, 0]) and np.isfinite(fld.e_theta[3, 5])
    assert abs(fld.e_theta[3, 5]) == pytest.approx(9.0)


def test_theta_phi_grid_shape(f1):
    """theta-phi grids give (n_theta, n_phi) results; broadside AF of a uniform array is N."""
    a = st.Array(st.rectangular(4, 2, 0.5), f1)
    g = st.ThetaPhiGrid.degrees([0, 30, 60], [0, 90])
    fld = st.field(a, g)
    assert fld.intensity.shape == (3, 2)
    assert fld.intensity[0, 0] == pytest.approx(64.0)


def test_response_matrix_chunks_and_blocks(rng, f1):
    """response_matrix filled chunk by chunk equals one block per direction chunk of
    response_blocks, and both equal the definition exp(+jk r.r_n) times the element
    pattern (here a short dipole rotated per element: two orientation groups)."""
    pos, w, d = _random_case(rng, 11, 57)
    R = np.stack([np.eye(3) if i % 2 else st.rotation_to((1.0, 0, 0), (0, 0, 1.0))
                  for i in range(11)])
    a = st.Array(st.Geometry(pos, orientations=R), f1, element=st.ShortDipole("x"), taper=w)
    A = response_matrix(a, d)
    B = np.concatenate([blk for _, blk in response_blocks(a, d, rows=10)], axis=1)
    np.testing.assert_array_equal(A, B)
    fld = st.field(a, d, method="reference")
    np.testing.assert_allclose(A[0] @ w, fld.e_theta, atol=1e-12)
    np.testing.assert_allclose(A[1] @ w, fld.e_phi, atol=1e-12)


def test_response_matrix_refuses_a_result_over_budget(f1):
    """A result larger than the memory budget (steradian.budget) is refused in one line
    saying what it would need, before anything is allocated."""
    a = st.Array(st.rectangular(40, 40, 0.5), f1)
    m = 2 * 2**30 // (2 * 16 * a.n) + 1
    d = np.tile([0.0, 0.0, 1.0], (m, 1))
    with limited("2GiB"), pytest.raises(
            SteradianError, match=r"would need 2\.0 GiB \(budget 2\.0 GiB\).*response_blocks"):
        response_matrix(a, d)


def _beam_family(f1, n=12, thetas=(0.0, 20.0, 45.0, 60.0)):
    g = st.rectangular(n, n, 0.6 * st.C0 / f1)
    el = st.CosinePower(q=1.2)
    t = np.hanning(n + 2)[1:-1]
    return [st.Array(g, f1, el, taper=np.outer(t, t).ravel(),
                     steering=st.Steering(th, 30.0 * i)) for i, th in enumerate(thetas)]


def test_field_of_beams_is_each_beams_sum(rng, f1):
    """Many beams of one aperture at their own directions, in one call, against the
    definition E = e(theta, phi) * sum_n w_n exp(+j k r . r_n) per beam (plain numpy; the
    array factor of Balanis, Antenna Theory, 4th ed., 2016, eq. 6-1 generalised): beams
    with few directions go through the rows kernel, the one with 8,000 on its own path."""
    from steradian.engine import field_of_beams

    beams = _beam_family(f1)
    counts = [7, 40, 8000, 1]
    owner = np.repeat(np.arange(4), counts)
    rng.shuffle(owner)
    d = rng.normal(size=(len(owner), 3))
    d[:, 2] = np.abs(d[:, 2])
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    got = field_of_beams(beams, d, owner)
    el = beams[0].element
    e_t, _ = el.pattern(np.arccos(d[:, 2]), np.arctan2(d[:, 1], d[:, 0]))
    for b, a in enumerate(beams):
        sel = owner == b
        af = np.exp(1j * a.k() * (d[sel] @ a.positions.T)) @ a.weights()
        scale = np.abs(a.weights()).sum()
        np.testing.assert_allclose(got.e_theta[sel], e_t[sel] * af, rtol=0,
                                   atol=1e-9 * scale)
        np.testing.assert_allclose(got.e_theta[sel], st.field(a, d[sel]).e_theta, rtol=0,
                                   atol=1e-9 * scale)


def test_field_of_beams_of_other_apertures_is_each_field(rng, f1):
    """Arrays that differ in more than their weights (here positions and element) are
    evaluated one by one: each value is field() of its own array."""
    a = _beam_family(f1, thetas=(10.0,))[0]
    b = st.Array(st.rectangular(5, 5, 0.5 * st.C0 / f1), f1, st.ShortDipole("x"))
    d = rng.normal(size=(30, 3))
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    owner = np.arange(30) % 2
    from steradian.engine import field_of_beams

    got = field_of_beams([a, b], d, owner)
    for i, arr in enumerate((a, b)):
        want = st.field(arr, d[owner == i])
        np.testing.assert_array_equal(got.e_theta[owner == i], want.e_theta)
        np.testing.assert_array_equal(got.e_phi[owner == i], want.e_phi)
    with pytest.raises(SteradianError, match="owners"):
        field_of_beams([a, b], d, owner[:-1])


@pytest.mark.parametrize("make", ["rectangular", "triangular", "thinned"])
def test_direct_sum_on_a_lattice_equals_the_definition(rng, f1, make):
    """The direct path on a planar lattice of rows (the separable lattice kernels: a column
    and a row phase factor per direction) equals exp(1j*k*(dirs @ pos.T)) @ w for a
    rectangular, a triangular (offset rows) and a thinned lattice, single and many beams."""
    from steradian.engine import LATTICE_MIN, exact_rows, field_of_beams

    lam = st.C0 / f1
    g = (st.triangular(11, 9, 0.6 * lam) if make == "triangular"
         else st.rectangular(12, 10, 0.55 * lam, 0.6 * lam))
    if make == "thinned":
        keep = np.ones(g.n, bool)
        keep[[5, 17, 60, 61]] = False
        g = st.Geometry(g.positions[keep] + np.array([0.01, -0.02, 0.003]))
    assert g.n >= LATTICE_MIN and exact_rows(g.positions, 2 * np.pi / lam) is not None
    w = rng.normal(size=g.n) + 1j * rng.normal(size=g.n)
    d = rng.normal(size=(700, 3))
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    k = 2 * np.pi / lam
    want = np.exp(1j * k * (d @ g.positions.T)) @ w
    got = array_factor(g.positions, w, k, d, method="direct")
    np.testing.assert_allclose(got, want, rtol=0, atol=1e-12 * np.abs(w).sum())
    beams = [st.Array(g, f1, taper=w * np.exp(1j * b)) for b in range(3)]
    owner = rng.integers(0, 3, len(d))
    many = field_of_beams(beams, d, owner).e_theta
    np.testing.assert_allclose(many, want * np.exp(1j * owner), rtol=0,
                               atol=1e-12 * np.abs(w).sum())


@pytest.mark.parametrize("m", [300, 2500, 6000])
def test_field_many_is_each_beams_field(rng, f1, m):
    """Beams of one aperture at the same directions (a lobe-search set), one transform plan
    and execution for all of them where that is estimated cheaper: each row equals the
    definition E = e(theta, phi) * sum_n w_n exp(+j k r . r_n) (plain numpy) to the engine's
    tolerance (1e-9 of sum |w|), and field() of that beam."""
    from steradian.engine import field_many

    beams = _beam_family(f1, n=16)
    d = rng.normal(size=(m, 3))
    d[:, 2] = np.abs(d[:, 2])
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    got = field_many(beams, d)
    assert got.e_theta.shape == (len(beams), m)
    e_t, _ = beams[0].element.pattern(np.arccos(d[:, 2]), np.arctan2(d[:, 1], d[:, 0]))
    for b, a in enumerate(beams):
        af = np.exp(1j * a.k() * (d @ a.positions.T)) @ a.weights()
        scale = np.abs(a.weights()).sum()
        np.testing.assert_allclose(got.e_theta[b], e_t * af, rtol=0, atol=1e-9 * scale)
        np.testing.assert_allclose(got.e_theta[b], st.field(a, d).e_theta, rtol=0,
                                   atol=1e-9 * scale)
