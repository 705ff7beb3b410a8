"""Pattern metrics checked against handbook formulas and general-purpose reference libraries."""

from __future__ import annotations

import functools
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st_h

import steradian as st
from steradian.errors import SteradianError
from steradian.metrics import DB_FLOOR, cut, pattern_metrics, principal_cuts

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


# ---- pattern metrics ----------------------------------------------------------------------


def _af2(n, d, u):
    """|AF|^2 of a uniform line, u = cosine of the angle from the line (Balanis eq. 6-10)."""
    x = np.pi * d / LAM * u
    s = np.sin(x)
    small = np.abs(s) < 1e-14
    return np.where(small, n * n, (np.sin(n * x) / np.where(small, 1.0, s)) ** 2)


def _half_power_psi(n):
    """Root of |sin(N psi/2) / (N sin(psi/2))|^2 = 1/2 (the exact half-power point)."""
    from scipy.optimize import brentq

    return brentq(lambda x: (np.sin(n * x / 2) / (n * np.sin(x / 2))) ** 2 - 0.5,
                  1e-9, 2 * np.pi / n, xtol=1e-15)


@pytest.mark.parametrize("n", [16, 100])
def test_uniform_line_first_sidelobe(n):
    """First sidelobe of a uniform line: -13.26 dB for large N (common practice; Balanis,
    Antenna Theory, 4th ed., sec. 6.3); for finite N the maximum of the array factor between
    its first and second nulls, found here with scipy.optimize."""
    from scipy.optimize import minimize_scalar

    m = pattern_metrics(st.Array(st.linear(n, 0.5), F))
    res = minimize_scalar(lambda x: -(np.sin(n * x / 2) / (n * np.sin(x / 2))) ** 2,
                          bounds=(2 * np.pi / n, 4 * np.pi / n), method="bounded",
                          options={"xatol": 1e-14})
    assert m.psl_db == pytest.approx(10 * np.log10(-res.fun), abs=1e-7)
    if n >= 100:
        assert m.psl_db == pytest.approx(-13.26, abs=0.01)
    # The sidelobe lies next to the main lobe: sin(theta) = 3 lambda / (2 N d) approximately.
    assert np.sin(np.deg2rad(m.psl_theta_deg)) == pytest.approx(3 / n, rel=0.05)


@pytest.mark.parametrize("n", [8, 32])
def test_uniform_line_hpbw_and_fnbw(n):
    """Broadside beamwidths of a uniform half-wave line: exact HPBW from the array-factor root,
    the large-N formula 0.886 lambda / (N d) rad, FNBW = 2 arcsin(lambda / (N d)) and its
    small-angle form 2 lambda / (N d) (Balanis, Antenna Theory, 4th ed., table 6.1; common
    practice)."""
    d = 0.5
    m = pattern_metrics(st.Array(st.linear(n, d), F))
    kd = 2 * np.pi * d / LAM
    exact = np.rad2deg(2 * np.arcsin(_half_power_psi(n) / kd))
    assert m.hpbw_deg["phi_plane"] == pytest.approx(exact, abs=1e-9)
    assert m.fnbw_deg["phi_plane"] == pytest.approx(
        np.rad2deg(2 * np.arcsin(LAM / (n * d))), abs=1e-9)
    if n >= 32:
        assert m.hpbw_deg["phi_plane"] == pytest.approx(
            np.rad2deg(0.886 * LAM / (n * d)), rel=2e-3)
        assert m.fnbw_deg["phi_plane"] == pytest.approx(
            np.rad2deg(2 * LAM / (n * d)), rel=2e-3)
    # The cross plane runs along the cone of the collinear array: no beamwidth there.
    assert m.hpbw_deg["cross_plane"] is None and m.fnbw_deg["cross_plane"] is None
    assert m.main_lobe_model == "band"
    half = m.planes[0].half_power_deg
    assert half[0] == pytest.approx(-half[1], abs=1e-9)


def test_scanned_line_beamwidth_follows_the_cone():
    """A line steered to theta0 in its own plane: half-power points at
    sin(theta) = sin(theta0) +- psi_h / (k d) (Balanis, Antenna Theory, 4th ed., sec. 6.3,
    the array factor in psi = k d sin(theta) - k d sin(theta0)); the beam broadens roughly as
    1/cos(theta0) (common practice)."""
    n, d, th0 = 16, 0.5, 40.0
    m = pattern_metrics(st.Array(st.linear(n, d), F, steering=st.Steering(th0, 0)))
    dc = _half_power_psi(n) / (2 * np.pi * d / LAM)
    s0 = np.sin(np.deg2rad(th0))
    exact = np.rad2deg(np.arcsin(s0 + dc) - np.arcsin(s0 - dc))
    assert m.hpbw_deg["phi_plane"] == pytest.approx(exact, abs=1e-9)
    assert m.beam_theta_deg == pytest.approx(th0, abs=1e-9) and m.pointing_error_deg < 1e-6
    m0 = pattern_metrics(st.Array(st.linear(n, d), F))
    ratio = m.hpbw_deg["phi_plane"] / m0.hpbw_deg["phi_plane"]
    assert ratio == pytest.approx(1 / np.cos(np.deg2rad(th0)), rel=0.03)


@pytest.mark.parametrize("sll", [30.0, 50.0])
def test_dolph_chebyshev_psl_at_design_level(sll):
    """Dolph-Chebyshev weights from scipy.signal.windows.chebwin give equal sidelobes at the
    design level on a half-wave line (Balanis, Antenna Theory, 4th ed., sec. 6.8.3)."""
    from scipy.signal.windows import chebwin

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)  # scipy's note on spectral analysis
        w = chebwin(16, sll)
    m = pattern_metrics(st.Array(st.linear(16, 0.5), F, taper=w))
    assert m.psl_db == pytest.approx(-sll, abs=0.05)
    assert all(lb.level_db == pytest.approx(-sll, abs=0.05) for lb in m.sidelobes)


def test_islr_uniform_line_against_scipy_quad():
    """ISLR of a uniform line: sidelobe over main-lobe power, integrating |AF(u)|^2 over the
    cosine u of the angle from the line with scipy.integrate.quad (dOmega = 2 pi du)."""
    from scipy.integrate import quad

    n, d = 10, 0.5
    u1 = LAM / (n * d)
    inner = quad(lambda u: _af2(n, d, u), -u1, u1, epsabs=0, epsrel=1e-13, limit=200)[0]
    total = quad(lambda u: _af2(n, d, u), -1, 1, points=[k * u1 for k in range(-4, 5)],
                 epsabs=0, epsrel=1e-13, limit=400)[0]
    m = pattern_metrics(st.Array(st.linear(n, d), F))
    assert m.islr_db == pytest.approx(10 * np.log10((total - inner) / inner), abs=1e-8)
    assert m.main_lobe_power_fraction == pytest.approx(inner / total, rel=1e-9)


def test_islr_uniform_square_against_scipy_dblquad():
    """ISLR of a uniform square panel of cosine elements (front half-space): the first-null
    main lobe is the square |u|, |v| < lambda / (N d) and, with U = cos(theta) |AF|^2 and
    dOmega = du dv / cos(theta), its power is the integral of |AF_x(u)|^2 |AF_y(v)|^2 over
    the square (scipy.integrate.dblquad); P_rad from steradian's quadrature."""
    from scipy.integrate import dblquad

    n, d = 6, 0.5
    u1 = LAM / (n * d)
    arr = st.Array(st.rectangular(n, n, d), F, element=st.CosinePower(1.0))
    p_main = dblquad(lambda v, u: _af2(n, d, u) * _af2(n, d, v), -u1, u1, -u1, u1,
                     epsabs=0, epsrel=1e-11)[0]
    p_rad = st.radiated_power(arr).value
    m = pattern_metrics(arr)
    assert m.main_lobe_model == "radial"
    assert m.islr_db == pytest.approx(10 * np.log10((p_rad - p_main) / p_main), abs=1e-5)


def test_islr_isotropic_square_counts_the_mirror_lobe():
    """A planar array of isotropic elements radiates the same beam on both sides of its plane
    (common practice), so both lobes are main lobe: P_main = 2 x the square integral of
    |AF|^2 / cos(theta) (scipy.integrate.dblquad); P_rad in closed form (Mailloux, Phased
    Array Antenna Handbook, 3rd ed., ch. 2)."""
    from scipy.integrate import dblquad

    n, d = 6, 0.5
    u1 = LAM / (n * d)
    arr = st.Array(st.rectangular(n, n, d), F)
    p_main = 2 * dblquad(lambda v, u: _af2(n, d, u) * _af2(n, d, v) / np.sqrt(1 - u * u - v * v),
                         -u1, u1, -u1, u1, epsabs=0, epsrel=1e-11)[0]
    p_rad = st.radiated_power(arr).value
    m = pattern_metrics(arr)
    assert m.main_lobe_model == "radial+mirror"
    assert m.islr_db == pytest.approx(10 * np.log10((p_rad - p_main) / p_main), abs=1e-5)
    assert m.front_to_back_db == pytest.approx(0.0, abs=1e-9)
    # First sidelobe of the 6-element uniform factor, in the principal planes.
    assert m.psl_db == pytest.approx(float(np.max(10 * np.log10(
        _af2(n, d, np.linspace(u1, 2 * u1, 20001)) / n**2))), abs=1e-6)


def test_mirror_peak_behind_a_flat_array_is_reflected_to_the_front():
    """A flat array of x-directed short dipoles radiates the same beam on both sides of its
    plane (common practice: the dipole pattern and the array factor are both even in
    cos(theta)). A peak reported behind the plane is the mirror of the steered beam: the
    metrics and cuts use the front beam, so the pointing error is small."""
    arr = st.Array(st.rectangular(6, 6, 0.5), F, element=st.ShortDipole("x"),
                   steering=st.Steering(25, 130))
    front = st.peak_directivity(arr)
    t_back = 180.0 - front.theta_deg if front.theta_deg < 90 else front.theta_deg
    back = type(front)(front.directivity, t_back, front.phi_deg, front.power)
    m = pattern_metrics(arr, peak=back)
    assert m.beam_theta_deg < 90 and m.pointing_error_deg < 2.0
    assert m.peak_directivity_dbi == pytest.approx(front.directivity_dbi, abs=1e-6)
    c0, _ = principal_cuts(arr, peak=back, n=181)
    assert c0.theta_deg[90] == pytest.approx(m.beam_theta_deg, abs=1e-9)


def test_grating_lobe_of_a_scanned_line():
    """Spacing d scanned to theta0 has a grating lobe at sin(theta) = sin(theta0) - lambda/d
    and is free of them for d/lambda < 1/(1 + |sin(theta0)|) (common practice; Mailloux,
    Phased Array Antenna Handbook, 3rd ed., ch. 2)."""
    d, th0 = 0.8, 30.0
    m = pattern_metrics(st.Array(st.linear(16, d), F, steering=st.Steering(th0, 0)))
    s_gl = np.sin(np.deg2rad(th0)) - LAM / d
    (gl,) = m.grating_lobes_predicted
    assert (gl.p, gl.q) == (-1, 0)
    assert gl.u == pytest.approx(s_gl, abs=1e-12)
    assert gl.level_db == pytest.approx(0.0, abs=1e-9)  # isotropic: full-height lobe
    (found,) = m.grating_lobes_found
    u_found = np.sin(np.deg2rad(found.theta_deg)) * np.cos(np.deg2rad(found.phi_deg))
    assert u_found == pytest.approx(s_gl, abs=1e-6)
    assert m.psl_db == pytest.approx(0.0, abs=1e-6)
    free = np.rad2deg(np.arcsin(LAM / d - 1))
    assert m.grating_lobe_free_scan_deg == pytest.approx(free, abs=1e-9)
    assert 1 / (1 + np.sin(np.deg2rad(free))) == pytest.approx(d / LAM, abs=1e-12)


@pytest.mark.parametrize(("d", "th0", "visible"), [(0.6, 40.0, False), (0.6, 43.0, True),
                                                   (0.5, 89.0, False), (1.0, 0.0, True)])
def test_line_no_grating_lobe_condition(d, th0, visible):
    """Grating lobes appear exactly when d/lambda >= 1/(1 + |sin(theta0)|) (common practice).
    Lobes at the horizon count as visible."""
    arr = st.Array(st.linear(8, d), F, steering=st.Steering(th0, 0))
    m = pattern_metrics(arr)
    assert bool(m.grating_lobes_predicted) is visible
    assert bool(d / LAM >= 1 / (1 + np.sin(np.deg2rad(th0)))) is visible


def test_rectangular_lattice_grating_lobes_in_uv():
    """Rectangular lattice: lobes at (u, v) = (u0 + p lambda/dx, v0 + q lambda/dy) inside the
    unit circle (Mailloux, Phased Array Antenna Handbook, 3rd ed., ch. 2; common practice);
    the one found in the pattern of cosine elements matches the prediction."""
    dx, th0 = 0.7, 40.0
    arr = st.Array(st.rectangular(10, 10, dx), F, element=st.CosinePower(1.0),
                   steering=st.Steering(th0, 0))
    m = pattern_metrics(arr)
    u0 = np.sin(np.deg2rad(th0))
    want = {(p, q) for p in range(-3, 4) for q in range(-3, 4) if (p, q) != (0, 0)
            and (u0 + p / dx) ** 2 + (q / dx) ** 2 <= 1}
    assert {(g.p, g.q) for g in m.grating_lobes_predicted} == want == {(-1, 0)}
    (gl,) = m.grating_lobes_predicted
    assert (gl.u, gl.v) == pytest.approx((u0 - LAM / dx, 0.0), abs=1e-12)
    assert m.grating_lobe_free_scan_deg == pytest.approx(np.rad2deg(np.arcsin(1 / dx - 1)))
    (found,) = m.grating_lobes_found
    assert found.level_db > -3 and abs(found.theta_deg - gl.theta_deg) < 2.0


def test_triangular_lattice_scan_limit():
    """Equilateral triangular lattice of spacing d is free of grating lobes for
    d/lambda < (2/sqrt(3)) / (1 + sin(theta0)) = 1.1547 / (1 + sin(theta0)) at every azimuth
    (Mailloux, Phased Array Antenna Handbook, 3rd ed., ch. 2; recalled from memory: the
    shortest reciprocal-lattice vector has length 2 / (sqrt(3) d)). A square lattice of the
    same spacing allows 1 / (1 + sin(theta0))."""
    d = 0.6
    tri = pattern_metrics(st.Array(st.triangular(6, 6, d), F, element=st.CosinePower(1.0)))
    sq = pattern_metrics(st.Array(st.rectangular(6, 6, d), F, element=st.CosinePower(1.0)))
    s_tri = np.sin(np.deg2rad(tri.grating_lobe_free_scan_deg))
    assert d / LAM == pytest.approx(2 / np.sqrt(3) / (1 + s_tri), abs=1e-12)
    s_sq = np.sin(np.deg2rad(sq.grating_lobe_free_scan_deg))
    assert d / LAM == pytest.approx(1 / (1 + s_sq), abs=1e-12)
    # Just beyond the limit, scanned toward the nearest reciprocal vector, a lobe appears.
    th_tri = tri.grating_lobe_free_scan_deg
    over = pattern_metrics(st.Array(st.triangular(6, 6, d), F, element=st.CosinePower(1.0),
                                    steering=st.Steering(th_tri + 1.0, 90.0)))
    assert over.grating_lobes_predicted


@pytest.mark.parametrize(("th0", "tol_db"), [(30.0, 0.1), (60.0, 0.3)])
def test_scan_loss_of_cosine_elements(th0, tol_db):
    """Scan loss of a half-wave panel of cos(theta) power-pattern elements is about
    cos(theta0), the projected aperture (common practice; Hansen, Phased Array Antennas, 2nd
    ed., ch. 2). The finite 12 x 12 panel departs from it more at wide scan."""
    arr = st.Array(st.rectangular(12, 12, 0.5), F, element=st.CosinePower(1.0),
                   steering=st.Steering(th0, 0))
    m = pattern_metrics(arr)
    assert m.scan_loss_db == pytest.approx(10 * np.log10(np.cos(np.deg2rad(th0))), abs=tol_db)
    assert m.scan_loss_db == pytest.approx(
        m.peak_directivity_dbi - m.unsteered_peak_directivity_dbi, abs=1e-12)
    # The element pattern pulls the peak toward broadside (common practice).
    assert 0 < m.pointing_error_deg < 2 and m.beam_theta_deg < th0
    # Front-half-space elements: nothing behind the panel.
    assert m.front_to_back_db == pytest.approx(-DB_FLOOR)
    assert np.cos(np.deg2rad(m.psl_theta_deg)) >= 0


def test_beam_squint_is_pointing_error():
    """Phase-steered arrays squint off-frequency: sin(theta) = (f0/f) sin(theta0); true time
    delay does not (common practice; Mailloux, Phased Array Antenna Handbook, 3rd ed.,
    ch. 1)."""
    g = st.rectangular(8, 8, 0.5)
    f2 = 1.1 * F
    ph = pattern_metrics(st.Array(g, F, steering=st.Steering(30, 0)), frequency=f2)
    want = 30 - np.rad2deg(np.arcsin(np.sin(np.deg2rad(30)) / 1.1))
    assert ph.pointing_error_deg == pytest.approx(want, abs=1e-6)
    tt = pattern_metrics(st.Array(g, F, steering=st.Steering(30, 0, mode="delay")),
                         frequency=f2)
    assert tt.pointing_error_deg == pytest.approx(0.0, abs=1e-6)


def test_front_to_back_of_an_endfire_line():
    """Ordinary endfire line, d = lambda/4, progressive phase -k d: the backward direction is
    an exact null of the array factor for even N (Balanis, Antenna Theory, 4th ed.,
    sec. 6.3.2), and the first null lies at cos(theta) = 1 - lambda/(N d)."""
    n, d = 8, 0.25
    m = pattern_metrics(st.Array(st.linear(n, d), F, steering=st.Steering(90, 0)))
    assert m.front_to_back_db > 200
    assert m.fnbw_deg["phi_plane"] == pytest.approx(
        2 * np.rad2deg(np.arccos(1 - LAM / (n * d))), abs=1e-8)


def test_metrics_run_on_rings_and_3d_layouts():
    """Rings and arbitrary 3-D layouts: no lattice, finite values, JSON-safe report. A uniform
    ring's broadside pattern is J0 for many elements: first sidelobe -7.90 dB
    (scipy.special.j0 maximised with scipy.optimize; Balanis, Antenna Theory, 4th ed.,
    sec. 6.10)."""
    import json

    from scipy.optimize import minimize_scalar
    from scipy.special import j0

    ring = pattern_metrics(st.Array(st.ring(24, 1.0), F))
    j = minimize_scalar(lambda x: -j0(x) ** 2, bounds=(3, 6), method="bounded",
                        options={"xatol": 1e-12}).fun
    assert ring.psl_db == pytest.approx(10 * np.log10(-j), abs=1e-4)
    assert ring.psl_db == pytest.approx(-7.90, abs=0.005)
    assert ring.grating_lobes_predicted is None and not ring.lattice
    rng = np.random.default_rng(7)
    geo = st.Geometry(rng.uniform(-1.0, 1.0, (20, 3)))
    m = pattern_metrics(st.Array(geo, F, steering=st.Steering(40, 20)))
    assert m.pointing_error_deg < 1e-6
    for mm in (ring, m):
        text = json.dumps(mm.to_dict(), allow_nan=False)
        assert "NaN" not in text and "Infinity" not in text
    assert m.psl_db < 0 and m.main_lobe_power_fraction < 1


@settings(max_examples=4, deadline=None, derandomize=True)
@given(offset=st_h.lists(st_h.floats(-5.0, 5.0), min_size=3, max_size=3),
       scale=st_h.floats(0.1, 10.0), phase=st_h.floats(-np.pi, np.pi))
def test_metrics_invariant_under_weight_scaling_and_translation(offset, scale, phase):
    """Invariants (definitions): a complex scale of all weights and a translation of the array
    change no metric."""
    g = st.rectangular(5, 4, 0.6)
    other = st.Array(g.translated(offset), F, element=st.CosinePower(1.0),
                     taper=np.full(g.n, scale * np.exp(1j * phase)),
                     steering=st.Steering(20, 30))
    a, b = _base_metrics(), pattern_metrics(other).to_dict()
    for k in ("peak_directivity_dbi", "psl_db", "islr_db", "scan_loss_db", "beam_theta_deg",
              "front_to_back_hemisphere_db", "grating_lobe_free_scan_deg"):
        assert a[k] == pytest.approx(b[k], abs=1e-6)
    for k in ("phi_plane", "cross_plane"):
        assert a["hpbw_deg"][k] == pytest.approx(b["hpbw_deg"][k], abs=1e-6)
        assert a["fnbw_deg"][k] == pytest.approx(b["fnbw_deg"][k], abs=1e-6)


@functools.lru_cache(maxsize=1)
def _base_metrics():
    """Metrics of the untranslated, unit-weight panel of the invariance test."""
    base = st.Array(st.rectangular(5, 4, 0.6), F, element=st.CosinePower(1.0),
                    steering=st.Steering(20, 30))
    return pattern_metrics(base).to_dict()


def test_metrics_bad_input():
    arr = st.Array(st.linear(4, 0.5), F)
    with pytest.raises(SteradianError, match="grating_lobe_db"):
        pattern_metrics(arr, grating_lobe_db=-1)
    with pytest.raises(SteradianError, match="peak must be"):
        pattern_metrics(arr, peak="broadside")


def test_psl_finds_a_lobe_next_to_a_higher_neighbour():
    """PSL against an independent brute-force search: local maxima of D on a dense u-v grid.

    An 8 x 8 Taylor panel (scipy.signal.windows.taylor, nbar 5, 25 dB) of cos elements steered
    to theta = 20 deg has its highest sidelobe at theta ~ 31.8 deg, phi = 180, next to a
    slightly lower lobe: the search must not let the neighbour hide it. The reference is the
    second-highest local maximum (scipy.ndimage.maximum_filter) on an 801 x 801 grid; the
    refined PSL may only be higher (the grid under-samples) and by little.
    """
    from scipy.ndimage import maximum_filter
    from scipy.signal.windows import taylor

    t = taylor(8, nbar=5, sll=25)
    a = st.Array(st.rectangular(8, 8, 0.5), F, element=st.CosinePower(1.0),
                 taper=np.outer(t, t).ravel(), steering=st.Steering(20, 0))
    pk = st.peak_directivity(a)
    m = pattern_metrics(a, peak=pk)
    g = st.UVGrid(np.linspace(-1, 1, 801), np.linspace(-1, 1, 801))
    d = np.nan_to_num(st.directivity(a, g, power=pk.power), nan=0.0)
    peaks = np.sort(d[(d == maximum_filter(d, size=5, mode="constant")) & (d > 0)])[::-1]
    ref = 10 * np.log10(peaks[1] / pk.directivity)
    assert ref - 1e-3 <= m.psl_db <= ref + 0.02


def test_every_metric_field_comes_from_one_registered_metric():
    """The registry of metric functions fills each PatternMetrics field exactly once (notes
    aside), and pattern_metrics reports what the registry computes."""
    import dataclasses

    from steradian.metrics import METRICS, PatternMetrics

    filled = [f for m in METRICS for f in m.fields]
    assert len(filled) == len(set(filled))
    assert set(filled) == {f.name for f in dataclasses.fields(PatternMetrics)} - {"notes"}


def test_analysis_result_is_frozen_and_reads_as_its_summary():
    """analyze returns a frozen Analysis whose to_dict() is the summary (JSON-friendly, the
    keys the command line prints) and which reads as that mapping."""
    import dataclasses
    import json

    from steradian.analysis import Analysis, AnalysisOptions, analyze

    arr = st.Array(st.rectangular(4, 4, 0.5), F, steering=st.Steering(10, 0))
    res = analyze(arr, AnalysisOptions(element_power_w=0.5))
    assert isinstance(res, Analysis)
    d = res.to_dict()
    assert json.loads(json.dumps(d)) == d
    assert list(d)[:3] == ["n_elements", "n_enabled", "design_frequency_hz"]
    assert list(d)[-3:] == ["eirp", "rf_exposure_caution", "metrics"]
    assert dict(res) == d and res["gain_dbi"] == d["gain_dbi"]
    with pytest.raises(dataclasses.FrozenInstanceError):
        res.gain_dbi = 0.0
