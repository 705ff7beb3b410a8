"""Fast paths of the pattern engine (FFT, NUFFT, cost model, mirror symmetry) against direct
summation and the plain-numpy definition.

Outside references: the array-factor definition AF = sum_n w_n exp(+j k r.r_n) evaluated by
plain numpy (``method="reference"``, written as the textbook sum); the closed form of the
uniform linear array (C. A. Balanis, *Antenna Theory*, 4th ed., Wiley, 2016, eq. 6-10);
scipy.signal.czt for the chirp-z transform; scipy.special.roots_legendre and the moments
int x^(2j) dx = 2/(2j+1) for the Gauss-Legendre rule; the closed-form radiated power of
isotropic arrays (R. J. Mailloux, *Phased Array Antenna Handbook*, 3rd ed., 2018, ch. 2).
Wavelength 1 m (f = c0) throughout.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.signal
import scipy.special
from hypothesis import given, settings
from hypothesis import strategies as hst

import steradian as st
from steradian import engine, radiation
from steradian.directions import Directions, ThetaPhiGrid, UVGrid
from steradian.engine import DEFAULT_TOL, array_factor, choose_path, czt, detect_rows
from steradian.errors import SteradianError
from steradian.sphere import gauss_legendre, sphere_rule

F1 = st.C0
K = 2 * np.pi


def disc(rng, n, radius, z=0.0):
    r = radius * np.sqrt(rng.random(n))
    a = 2 * np.pi * rng.random(n)
    return np.column_stack([r * np.cos(a), r * np.sin(a), np.full(n, z)])


def cube(rng, n, half):
    return rng.uniform(-half, half, (n, 3))


def sphere_dirs(rng, m):
    v = rng.normal(size=(m, 3))
    return v / np.linalg.norm(v, axis=1, keepdims=True)


def cweights(rng, n):
    return rng.normal(size=n) + 1j * rng.normal(size=n)


def err(a, b, w):
    """Largest difference relative to sum |w| (the largest |AF| can be)."""
    return float(np.nanmax(np.abs(np.asarray(a) - np.asarray(b))) / np.abs(w).sum())


# Rounding allowance of direct summation and the chirp-z path (exact paths).
EXACT = 1e-13

LAYOUTS = {
    "planar disc": lambda rng: disc(rng, 300, 6.0),
    "planar disc at z=0.4": lambda rng: disc(rng, 300, 6.0, z=0.4),
    "3-D cube": lambda rng: cube(rng, 250, 2.0),
    "rectangular lattice": lambda rng: st.rectangular(14, 11, 0.5, 0.63).positions,
    "triangular lattice": lambda rng: st.triangular(13, 12, 0.58).positions,
    "linear along x": lambda rng: st.linear(40, 0.45).positions,
}

WHERE = {
    "random directions": lambda rng: Directions.from_vectors(sphere_dirs(rng, 1500)),
    "u-v centred": lambda rng: UVGrid.square(41),
    # off-centre, unequal steps whose ratio to the element spacing is not an integer
    "u-v off-centre": lambda rng: UVGrid(np.linspace(-0.31, 0.97, 37),
                                         np.linspace(-0.88, 0.23, 29)),
    "u-v back": lambda rng: UVGrid(np.linspace(-0.6, 0.7, 23), np.linspace(-0.5, 0.4, 19), -1),
    "theta-phi rule": lambda rng: sphere_rule(24, 30).grid,
    "theta-phi cut": lambda rng: ThetaPhiGrid.degrees(np.linspace(0, 120, 31), [0, 45, 90]),
}


@pytest.mark.parametrize("layout", list(LAYOUTS))
@pytest.mark.parametrize("where", list(WHERE))
@pytest.mark.parametrize("steer", [None, (33.0, 120.0)])
def test_every_path_matches_reference(layout, where, steer, rng):
    """Every applicable path equals the plain-numpy array factor (the definition) to its
    tolerance: direct and FFT to rounding, NUFFT to tol * sum|w|."""
    pos = LAYOUTS[layout](rng)
    w = cweights(rng, len(pos))
    if steer is not None:
        w = w * st.array.steering_phases(pos, st.direction(*steer), K)
    g = WHERE[where](rng)
    ref = array_factor(pos, w, K, g, method="reference")
    assert err(array_factor(pos, w, K, g, method="direct"), ref, w) < EXACT
    assert err(array_factor(pos, w, K, g, method="nufft"), ref, w) < DEFAULT_TOL
    assert err(array_factor(pos, w, K, g), ref, w) < DEFAULT_TOL
    lattice = "lattice" in layout or "linear" in layout
    if isinstance(g, UVGrid) and lattice:
        assert err(array_factor(pos, w, K, g, method="fft"), ref, w) < EXACT
    elif isinstance(g, UVGrid) and "z=" not in layout and "3-D" not in layout:
        with pytest.raises(SteradianError, match="method='fft' needs a planar lattice"):
            array_factor(pos, w, K, g, method="fft")


def test_separable_weights_use_outer_product(rng):
    """A product taper on a rectangular lattice (separable) through the FFT path equals the
    reference, and equals the product of the two 1-D array factors (Balanis 4th ed.,
    sec. 6.10: planar array factor of separable excitations)."""
    nx, ny, dx, dy = 24, 9, 0.5, 0.71
    geo = st.rectangular(nx, ny, dx, dy)
    a = scipy.signal.windows.taylor(nx, nbar=4, sll=30) + 0j
    b = scipy.signal.windows.chebwin(ny, at=50) + 0j
    w = np.outer(b, a).ravel()  # element order is x fastest
    g = UVGrid(np.linspace(-0.77, 0.91, 53), np.linspace(-0.4, 0.35, 17))
    af = array_factor(geo.positions, w, K, g, method="fft").reshape(g.shape)
    x = (np.arange(nx) - (nx - 1) / 2) * dx
    y = (np.arange(ny) - (ny - 1) / 2) * dy
    fu = np.exp(1j * K * np.outer(g.u, x)) @ a
    fv = np.exp(1j * K * np.outer(g.v, y)) @ b
    assert err(af, np.outer(fv, fu), w) < EXACT
    assert detect_rows(geo.positions, K, DEFAULT_TOL).factors(w, 1e-12) is not None


@pytest.mark.parametrize("method", ["fft", "nufft", "direct"])
@pytest.mark.parametrize("n, d", [(8, 0.5), (25, 0.37), (60, 0.81)])
def test_uniform_line_closed_form(method, n, d):
    """Uniform linear array along x: AF(u) = sin(N psi/2) / sin(psi/2), psi = k d u, for a
    centred array (Balanis 4th ed., eq. 6-10), on a u grid whose step is no divisor of
    anything in particular."""
    geo = st.linear(n, d)
    u = np.linspace(-0.93, 0.999, 301)
    g = UVGrid(u, np.array([0.0]))
    af = array_factor(geo.positions, np.ones(n), K, g, method=method)
    psi = K * d * u
    with np.errstate(invalid="ignore", divide="ignore"):
        exact = np.where(np.abs(np.sin(psi / 2)) < 1e-12, n,
                         np.sin(n * psi / 2) / np.sin(psi / 2))
    # Where sin(psi/2) vanishes the limit is +-N; compare away from those points.
    ok = np.abs(np.sin(psi / 2)) > 1e-6
    assert np.abs(af[ok] - exact[ok]).max() / n < 1e-12


def test_type1_folding_far_from_origin(rng):
    """Type-1 inputs k du x_n far outside [-pi, pi) (an array 40 wavelengths off the origin)
    are folded exactly: the result matches the reference to the tolerance plus the rounding of
    the large phases themselves (|k u x| eps)."""
    pos = disc(rng, 200, 3.0) + np.array([37.3, -41.9, 0.0])
    w = cweights(rng, 200)
    g = UVGrid(np.linspace(-0.8, 0.6, 33), np.linspace(-0.2, 0.9, 27))
    ref = array_factor(pos, w, K, g, method="reference")
    assert err(array_factor(pos, w, K, g, method="nufft"), ref, w) < DEFAULT_TOL + 1e-13


@pytest.mark.parametrize("element", [
    st.ShortDipole("x"),
    st.HalfWaveDipole(F1, "y"),
    st.CosinePower(1.7),
])
@pytest.mark.parametrize("steering", [None, st.Steering(25.0, 60.0)])
def test_field_with_element_patterns(element, steering, rng):
    """field() on the fast paths equals the reference path component by component, with
    vector (dipole) and scalar (cos^q) element patterns, steered and unsteered."""
    arr = st.Array(st.Geometry(disc(rng, 400, 7.0)), F1, element=element, steering=steering,
                   taper=rng.random(400) + 0.2)
    for where in (sphere_rule(30, 40).grid, UVGrid.square(33),
                  Directions.from_vectors(sphere_dirs(rng, 700))):
        fast = st.field(arr, where, method="nufft")
        ref = st.field(arr, where, method="reference")
        scale = np.abs(arr.weights()).sum()
        for a, b in ((fast.e_theta, ref.e_theta), (fast.e_phi, ref.e_phi)):
            assert np.array_equal(np.isnan(a), np.isnan(b))
            assert np.nanmax(np.abs(a - b)) / scale < DEFAULT_TOL


def test_field_lattice_fft_with_element(rng):
    """A steered, tapered triangular lattice with a cos-power element on a u-v grid: the auto
    path is a transform, and it and the chirp-z path equal the reference."""
    geo = st.triangular(20, 18, 0.55)
    arr = st.Array(geo, F1, element=st.CosinePower(1.2), taper=rng.random(geo.n) + 0.5,
                   steering=st.Steering(30.0, 10.0))
    g = UVGrid(np.linspace(-1, 1, 64), np.linspace(-0.9, 1, 57))
    assert choose_path(geo.positions, arr.k(), g, lattice=geo.lattice).method in ("fft", "nufft")
    ref = st.field(arr, g, method="reference")
    scale = np.abs(arr.weights()).sum()
    assert np.nanmax(np.abs(st.field(arr, g, method="fft").e_theta - ref.e_theta)) / scale \
        < EXACT
    assert np.nanmax(np.abs(st.field(arr, g).e_theta - ref.e_theta)) / scale < DEFAULT_TOL


def test_conformal_groups_on_fast_paths(rng):
    """Elements on a cylinder with per-element orientation (groups of equal orientation) and
    half-wave dipoles: every group's transform adds up to the reference field."""
    n_az, n_z = 24, 6
    phi = 2 * np.pi * np.arange(n_az) / n_az
    pos, nrm = [], []
    for z in np.arange(n_z) * 0.5:
        for p in phi:
            pos.append([3 * np.cos(p), 3 * np.sin(p), z])
            nrm.append([np.cos(p), np.sin(p), 0.0])
    geo = st.Geometry(np.array(pos), orientations=st.rotation_to(np.array(nrm), (0, 0, 1)))
    arr = st.Array(geo, F1, element=st.HalfWaveDipole(F1, "x"), taper=rng.random(geo.n) + 0.3)
    where = Directions.from_vectors(sphere_dirs(rng, 900))
    fast = st.field(arr, where, method="nufft")
    ref = st.field(arr, where, method="reference")
    scale = np.abs(arr.weights()).sum()
    assert np.abs(fast.e_theta - ref.e_theta).max() / scale < DEFAULT_TOL
    assert np.abs(fast.e_phi - ref.e_phi).max() / scale < DEFAULT_TOL


def test_mirror_half_grid_is_used_and_exact(rng):
    """A planar array on a full-sphere Gauss-Legendre rule is summed on the upper half (the
    planar sum depends on u, v only); the mirrored rows, including the exp(jk w z0) factor of
    an array at height z0, equal the reference."""
    g = sphere_rule(61, 60).grid
    for z0 in (0.0, 0.83):
        pos = disc(rng, 600, 4.0, z=z0)
        w = cweights(rng, 600)
        pc = choose_path(pos, K, g)
        assert "upper half" in pc.detail
        for m in ("auto", "nufft"):
            got = array_factor(pos, w, K, g, method=m)
            assert err(got, array_factor(pos, w, K, g, method="reference"), w) < DEFAULT_TOL
    front = sphere_rule(20, 20, front_only=True).grid  # hemisphere rule: no symmetry
    assert "upper half" not in choose_path(disc(rng, 600, 4.0), K, front).detail


def exact_dft(x, alpha, m):
    """sum_i x_i exp(j alpha p i) with the phases reduced mod 2 pi in extended precision."""
    p = np.arange(m).astype(np.longdouble)
    i = np.arange(len(x)).astype(np.longdouble)
    two_pi = 8 * np.arctan(np.longdouble(1))
    ph = np.longdouble(alpha) * np.outer(p, i)
    ph = ph - two_pi * np.round(ph / two_pi)
    return np.exp(1j * ph.astype(float)) @ x


def test_czt_against_scipy(rng):
    """The Bluestein chirp-z transform equals scipy.signal.czt (points a w^-k, a = 1,
    w = exp(j alpha)) for non-integer steps, m > n and m < n, to scipy's own accuracy
    (measured: scipy loses about 4e-13 at n = 300, alpha = 2.371), and the exactly summed
    DFT to rounding."""
    for n, m, alpha in ((50, 173, 0.0123 * np.pi), (300, 41, 2.371), (7, 7, -0.5)):
        x = cweights(rng, n)
        ours = czt(x, alpha, m)
        ref = scipy.signal.czt(x, m=m, w=np.exp(1j * alpha), a=1.0)
        assert np.abs(ours - ref).max() / np.abs(x).sum() < 2e-12
        assert np.abs(ours - exact_dft(x, alpha, m)).max() / np.abs(x).sum() < 1e-15


def test_long_czt_keeps_rounding_accuracy(rng):
    """A 2000 -> 1500 point transform (chirp phases up to 2e6 rad) stays at rounding level
    against the exactly summed DFT: the chirps are formed in extended precision."""
    x = cweights(rng, 2000)
    alpha = 0.7 * np.pi / 1000 * 3.3
    got = czt(x, alpha, 1500)
    assert np.abs(got - exact_dft(x, alpha, 1500)).max() / np.abs(x).sum() < 1e-14


@pytest.mark.parametrize("n", [1, 2, 5, 16, 61, 200])
def test_gauss_legendre_against_scipy_and_moments(n):
    """Nodes match scipy.special.roots_legendre; the rule integrates x^(2j) exactly
    (int_-1^1 x^(2j) dx = 2/(2j+1)) up to degree 2n-1; exactly symmetric."""
    x, w = gauss_legendre(n)
    xs, _ = scipy.special.roots_legendre(n)
    assert np.abs(x - xs).max() < 1e-14
    for j in range(0, n):
        assert abs((w * x ** (2 * j)).sum() - 2 / (2 * j + 1)) < 1e-14 * 2
    assert np.array_equal(x, -x[::-1])
    assert not x.flags.writeable


def test_radiated_power_fast_quadrature_matches_closed_form(rng):
    """Radiated power of 3000 random planar isotropic elements: the quadrature (rule grids on
    the NUFFT, halved by mirror symmetry) equals the closed form 4 pi sum w_m w_n* sinc(k r_mn)
    (Mailloux 3rd ed., ch. 2) to 1e-9 relative; so does the peak directivity computed from
    each."""
    arr = st.Array(st.Geometry(disc(rng, 3000, 13.0)), F1, steering=st.Steering(20.0, 75.0))
    rule = st.sphere.rule_for(arr)
    assert choose_path(arr.positions, arr.k(), rule.grid).method == "nufft"
    q = radiation.radiated_power(arr, method="quadrature")
    c = radiation.radiated_power(arr, method="closed_form")
    assert abs(q.value - c.value) / c.value < 1e-9
    d = engine.field(arr, [st.direction(20.0, 75.0)], method="direct").intensity[0]
    assert abs(4 * np.pi * d / q.value - 4 * np.pi * d / c.value) / (4 * np.pi * d / c.value) \
        < 1e-9


def test_directivity_fast_vs_direct_with_element(rng):
    """Cos-power elements (front half-space rule): quadrature on the fast path equals the same
    rule summed by direct summation to 1e-9 relative, and the peak directivity agrees."""
    arr = st.Array(st.Geometry(disc(rng, 1500, 9.0)), F1, element=st.CosinePower(1.3),
                   steering=st.Steering(15.0, 200.0))
    fast = radiation.radiated_power(arr)
    fine = st.sphere.rule_for(arr, margin=30)
    slow = fine.integrate(engine.field(arr, fine.grid, method="direct").intensity)
    assert abs(fast.value - slow) / slow < 1e-9
    pk = radiation.peak_directivity(arr, power=fast)
    u_dir = engine.field(arr, [pk.unit], method="direct").intensity[0]
    assert abs(pk.directivity - 4 * np.pi * u_dir / slow) / pk.directivity < 1e-9


def test_plan_cache_reuse(rng):
    """Fixed positions and directions with new weights reuse the cached type-3 plan (synthesis
    loops, beam tables) and give the same values as a fresh plan."""
    engine.clear_plan_cache()
    pos = disc(rng, 500, 6.0)
    dirs = sphere_dirs(rng, 4000)
    w1, w2 = cweights(rng, 500), cweights(rng, 500)
    a1 = array_factor(pos, w1, K, dirs, method="nufft")
    a2 = array_factor(pos, w2, K, dirs, method="nufft")
    info = engine.plan_cache_info()
    assert info["plans"] == 1 and info["hits"] == 1 and info["misses"] == 1
    engine.clear_plan_cache()
    assert np.array_equal(a2, array_factor(pos, w2, K, dirs, method="nufft"))
    pos2 = pos.copy()
    pos2[0, 0] += 1e-3  # moved element: a new plan
    array_factor(pos2, w1, K, dirs, method="nufft")
    assert engine.plan_cache_info()["misses"] == 2
    ref = array_factor(pos, w1, K, dirs, method="reference")
    assert err(a1, ref, w1) < DEFAULT_TOL


def test_cost_model_choices(rng):
    """Representative cases: small problems stay on direct summation (or numpy), lattices on
    u-v grids take the FFT, large arbitrary layouts take the NUFFT, 3-D layouts with few
    directions stay direct, tolerances below the transform's floor stay direct."""
    small = disc(rng, 16, 1.0)
    assert choose_path(small, K, sphere_dirs(rng, 10)).method in ("reference", "direct")
    assert choose_path(small, K, UVGrid.square(16)).method in ("reference", "direct")
    assert choose_path(small[:1], K, UVGrid.square(64)).method in ("reference", "direct")
    big = disc(rng, 10_000, 28.0)
    pc = choose_path(big, K, sphere_dirs(rng, 200_000))
    assert pc.method == "nufft" and pc.estimates["nufft"] < pc.estimates["direct"] / 10
    lat = st.rectangular(64, 64, 0.5)
    assert choose_path(lat.positions, K, UVGrid.square(512), lattice=lat.lattice).method \
        == "fft"
    assert choose_path(disc(rng, 2000, 10.0), K, UVGrid.square(256)).detail \
        == "type 1, u-v grid"
    assert choose_path(cube(rng, 100, 3.0), K, sphere_dirs(rng, 1000)).method == "direct"
    tight = choose_path(big[:3000], K, sphere_dirs(rng, 30_000), tol=1e-16)
    assert tight.method == "direct" and "nufft" not in tight.estimates


def test_bad_method_and_tolerance(rng):
    """Unknown methods, out-of-range tolerances and transforms that do not apply are refused
    with a message naming the value."""
    pos = disc(rng, 30, 2.0)
    w = np.ones(30)
    d = sphere_dirs(rng, 5)
    with pytest.raises(SteradianError, match="method must be one of"):
        array_factor(pos, w, K, d, method="fast")
    with pytest.raises(SteradianError, match="tol must be in"):
        array_factor(pos, w, K, d, tol=0.0)
    with pytest.raises(SteradianError, match="tol must be a number"):
        array_factor(pos, w, K, d, tol="tight")
    with pytest.raises(SteradianError, match="method='fft' does not apply"):
        array_factor(pos, w, K, d, method="fft")
    with pytest.raises(SteradianError, match="method='nufft' needs tol"):
        array_factor(pos, w, K, d, method="nufft", tol=1e-17)


@settings(max_examples=25, deadline=None)
@given(n=hst.integers(1, 60), nu=hst.integers(1, 40), nv=hst.integers(1, 30),
       u0=hst.floats(-1.2, 0.5), du=hst.floats(0.003, 0.09), seed=hst.integers(0, 2**31))
def test_uv_paths_random_grids(n, nu, nv, u0, du, seed):
    """Invariant: on random regular u-v grids (any centre, any step), the FFT path of a
    random-size lattice and the type-1 NUFFT of a random layout equal the reference."""
    rng = np.random.default_rng(seed)
    g = UVGrid(u0 + du * np.arange(nu), -0.3 + 0.7 * du * np.arange(nv))
    lat = st.rectangular(max(1, n // 5), 5, 0.47, 0.52).positions
    w = cweights(rng, len(lat))
    assert err(array_factor(lat, w, K, g, method="fft"),
               array_factor(lat, w, K, g, method="reference"), w) < EXACT
    pos = disc(rng, n, 3.0)
    w = cweights(rng, n)
    assert err(array_factor(pos, w, K, g, method="nufft"),
               array_factor(pos, w, K, g, method="reference"), w) < DEFAULT_TOL


@pytest.mark.parametrize("element, planar", [(st.ShortDipole("x"), True),
                                             (st.CosinePower(1.5), True),
                                             (st.HalfWaveDipole(F1, "z"), False)])
def test_power_matrix_common_orientation(element, planar, rng):
    """Q of elements sharing one orientation (intensity-weighted Gram matrix, mirror-folded for
    planar arrays) equals the plain sum over the rule nodes of a_i^H a_i written out with
    numpy (the definition), and w^H Q w equals the quadrature radiated power at the same
    rule."""
    pos = disc(rng, 60, 2.0) if planar else cube(rng, 60, 1.0)
    arr = st.Array(st.Geometry(pos), F1, element=element)
    Q = radiation.power_matrix(arr)
    rule = st.sphere.rule_for(arr)
    th, ph = np.meshgrid(rule.theta, rule.phi, indexing="ij")
    e_t, e_p = element.pattern(th.ravel(), ph.ravel())
    dirs = rule.grid.vectors
    A = np.exp(1j * K * dirs @ pos.T)
    om = (rule.w_theta[:, None] * rule.w_phi * np.ones(rule.n_phi)).ravel()
    ref = sum((c[:, None] * A).conj().T @ ((om * c)[:, None] * A) for c in (e_t, e_p))
    assert np.abs(Q - ref).max() / np.abs(ref).max() < 1e-13
    w = cweights(rng, 60)
    p = rule.integrate(np.abs(A @ w) ** 2 * (np.abs(e_t) ** 2 + np.abs(e_p) ** 2))
    assert abs(np.real(w.conj() @ Q @ w) - p) / p < 1e-12


# ---- the Gram matrix (radiated-power matrix) on a lattice ------------------------------------
@settings(max_examples=25, deadline=None)
@given(nx=hst.integers(1, 9), ny=hst.integers(1, 7), dx=hst.floats(0.2, 1.3),
       dy=hst.floats(0.2, 1.3), tri=hst.booleans(), hole=hst.booleans(),
       seed=hst.integers(0, 2**16))
def test_lattice_gram_matches_the_dense_gram(nx, ny, dx, dy, tri, hole, seed):
    """The lattice form of the Gram matrix (one value per distinct separation; translation
    invariance, R. M. Gray 2006) equals the plain rank-k accumulation over the directions to
    1e-13 relative, on rectangular and triangular lattices, with or without a missing
    element; any weights and directions."""
    from steradian.directions import fibonacci_directions
    from steradian.engine import dense_gram_matrix, lattice_gram_matrix
    from steradian.geometry import rectangular, triangular

    g = (triangular if tri else rectangular)(nx, ny, dx, dy)
    pos = g.positions
    if hole and len(pos) > 2:
        pos = np.delete(pos, len(pos) // 2, axis=0)
    rng = np.random.default_rng(seed)
    d = fibonacci_directions(400)
    w = rng.uniform(0, 1, 400) * (rng.uniform(size=400) > 0.1)
    k = 2 * np.pi
    G = lattice_gram_matrix(pos, k, d, w)
    ref = dense_gram_matrix(pos, k, d, w)
    if len(pos) > 1:
        assert G is not None
        assert np.abs(G - ref).max() <= 1e-13 * np.abs(ref).max()


def test_gram_off_a_lattice_is_the_dense_gram():
    """Positions on no row lattice (random, or out of the plane): gram_matrix falls back to
    the dense form exactly."""
    from steradian.directions import fibonacci_directions
    from steradian.engine import dense_gram_matrix, gram_matrix, lattice_gram_matrix

    rng = np.random.default_rng(3)
    pos = rng.normal(size=(20, 3))
    d = fibonacci_directions(200)
    w = np.ones(200)
    assert lattice_gram_matrix(pos, 2.0, d, w) is None
    assert np.array_equal(gram_matrix(pos, 2.0, d, w), dense_gram_matrix(pos, 2.0, d, w))
