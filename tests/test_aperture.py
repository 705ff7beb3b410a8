"""Analyses sharing an aperture (steradian.aperture), the k-section finishing step of the
beamwidth search, and the thread cap of study workers."""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st_h

import steradian as sr
from steradian.analysis import AnalysisOptions, analyze
from steradian.aperture import Aperture, aperture_key
from steradian.errors import SteradianError
from steradian.metrics import BOUNDARY_SHRINK, KSECTION_MINIMUM, ksection
from steradian.radiation import closed_form_power, radiated_power
from steradian.studies import evaluate_points

F = 10e9
NOISE = ("relative_error_estimate", "integrator_error_estimate")


def _numbers(d, path=""):
    """Every number in a summary dictionary, by its path (error estimates left out: they
    are differences of two rules, rounding noise at the 1e-12 level)."""
    if isinstance(d, dict):
        for k, v in d.items():
            if k not in NOISE:
                yield from _numbers(v, f"{path}.{k}")
    elif isinstance(d, (list, tuple)):
        for i, v in enumerate(d):
            yield from _numbers(v, f"{path}[{i}]")
    elif isinstance(d, (int, float)) and not isinstance(d, bool):
        yield path, float(d)


def _panel(n=10, spacing=0.55, q=1.3):
    g = sr.rectangular(n, n, spacing * sr.C0 / F)
    t = sr.tapers.taylor(n, 4, 25.0)
    return g, sr.CosinePower(q=q), np.outer(t, t).ravel()


def _same_summary(a, b, rel=1e-9):
    got = dict(_numbers(b))
    for path, v in _numbers(a):
        assert got[path] == pytest.approx(v, rel=rel, abs=1e-9), path


@settings(max_examples=6, deadline=None)
@given(theta=st_h.floats(0.0, 55.0), phi=st_h.floats(0.0, 90.0),
       sll=st_h.floats(20.0, 35.0))
def test_shared_aperture_gives_the_stand_alone_analysis(theta, phi, sll):
    """Invariant: an analysis with a shared Aperture (power matrices, search sets and the
    unsteered reference) equals the stand-alone analysis of the same beam in every number
    of its summary (1e-9 relative), for any steering and taper of one panel."""
    g, el, _ = _panel()
    t = sr.tapers.taylor(10, 4, sll)
    arr = sr.Array(g, F, el, taper=np.outer(t, t).ravel(), steering=sr.Steering(theta, phi))
    ap = Aperture(sr.Array(g, F, el), beams=13)
    opt = AnalysisOptions(metrics=True)
    _same_summary(analyze(arr, opt).to_dict(), analyze(arr, opt, aperture=ap).to_dict())
    assert ap.shares_power


def test_shared_power_is_the_integrator_and_the_closed_form():
    """The shared power matrices give radiated_power's value and rule size (lattice of
    cos^q elements), and for isotropic elements the closed form 4 pi sum w_m w_n* sinc(k
    r_mn) (Mailloux, Phased Array Antenna Handbook, ch. 2)."""
    g, el, taper = _panel()
    arr = sr.Array(g, F, el, taper=taper, steering=sr.Steering(35.0, 20.0))
    ap = Aperture(arr, beams=13)
    assert ap.shares_power
    p, ref = ap.radiated_power(arr), radiated_power(arr)
    assert p.value == pytest.approx(ref.value, rel=1e-11)
    assert (p.method, p.n_theta, p.n_phi) == (ref.method, ref.n_theta, ref.n_phi)
    iso = sr.Array(g, F, sr.Isotropic(), taper=taper, steering=sr.Steering(35.0, 20.0))
    got = Aperture(iso, beams=40).radiated_power(iso)
    want = closed_form_power(iso.positions, iso.weights(), iso.k())
    assert got.method == "closed_form" and got.value == pytest.approx(want, rel=1e-12)


def test_irregular_apertures_integrate_each_beam():
    """Without a lattice the dense power matrix costs more than integrating each beam: the
    aperture says so and the power is radiated_power's."""
    rng = np.random.default_rng(7)
    pos = np.column_stack([rng.uniform(0, 0.1, 40), rng.uniform(0, 0.1, 40), np.zeros(40)])
    arr = sr.Array(sr.Geometry(pos), F, sr.CosinePower(q=1.0), steering=sr.Steering(20, 0))
    ap = Aperture(arr, beams=100)
    assert not ap.shares_power
    assert ap.radiated_power(arr).value == radiated_power(arr).value


def test_power_is_shared_only_where_it_pays():
    """The cost model decides from the sizes: one beam never builds the matrices; a scan of
    13 beams of a 16 x 16 panel does; a 64 x 64 panel's matrices (N^2 entries twice) do not
    pay for 13 beams."""
    for n, beams, want in ((16, 1, False), (16, 13, True), (64, 13, False)):
        a = sr.Array(sr.rectangular(n, n, 0.5 * sr.C0 / F), F, sr.CosinePower(q=1.2))
        assert Aperture(a, beams=beams).shares_power is want, (n, beams)


def test_aperture_refuses_another_aperture():
    g, el, taper = _panel()
    arr = sr.Array(g, F, el, taper=taper)
    ap = Aperture(arr)
    other = sr.Array(_panel(spacing=0.6)[0], F, el, taper=taper)
    assert aperture_key(arr) != aperture_key(other)
    with pytest.raises(SteradianError, match="other positions"):
        analyze(other, AnalysisOptions(metrics=True), aperture=ap)
    with pytest.raises(SteradianError, match="other positions"):
        analyze(arr, AnalysisOptions(frequency=1.1 * F), aperture=ap)


def test_full_sweep_rows_equal_the_point_by_point_analysis():
    """A full-metric sweep shares one aperture per spacing: its rows equal analyze point by
    point (the sweep's documented definition) to 1e-9."""
    g, el, taper = _panel(8)
    arrs = [sr.Array(g, F, el, taper=taper, steering=sr.Steering(th, 0.0))
            for th in (0.0, 25.0, 50.0)]
    g2 = _panel(8, spacing=0.7)[0]
    arrs.append(sr.Array(g2, F, el, taper=taper, steering=sr.Steering(25.0, 0.0)))
    rows = evaluate_points(arrs, [None] * 4, "full")
    for a, r in zip(arrs, rows, strict=True):
        res = analyze(a, AnalysisOptions(metrics=True))
        assert r["directivity_dbi"] == pytest.approx(res.peak.directivity_dbi, abs=1e-9)
        assert r["psl_db"] == pytest.approx(res.metrics.psl_db, abs=1e-9)
        assert r["scan_loss_db"] == pytest.approx(res.metrics.scan_loss_db, abs=1e-9)
        assert r["islr_db"] == pytest.approx(res.metrics.islr_db, abs=1e-9)
        assert r["hpbw_phi_plane_deg"] == pytest.approx(res.metrics.hpbw_deg["phi_plane"],
                                                        abs=1e-9)


def test_ksection_finishes_crossings_and_minima_to_rounding():
    """The finishing interpolation against closed forms: cos^2 x crosses 1/2 at pi/4; the
    pattern |sin(4(x - x0))|^2 (a true null, as of an array factor) has its minimum at x0;
    a smooth non-zero minimum 1 + (x - x1)^2 + (x - x1)^3 at x1. Brackets as the beam march
    gives them (one and two steps of 0.02)."""
    x0, x1 = 0.3123456789, 0.71234
    funs = {0: lambda x: np.cos(x) ** 2,
            1: lambda x: np.sin(4 * (x - x0)) ** 2,
            2: lambda x: 1 + (x - x1) ** 2 + (x - x1) ** 3}
    a = np.array([np.pi / 4 - 0.013, x0 - 0.017, x1 - 0.021])
    b = a + np.array([0.02, 0.04, 0.04])
    kind = np.array([0, KSECTION_MINIMUM, KSECTION_MINIMUM])
    calls = []

    def fun(act, x):
        calls.append(len(act))
        return np.stack([funs[int(i)](row) for i, row in zip(act, x, strict=True)])

    got = ksection(fun, a, b, kind)
    assert got[0] == pytest.approx(np.pi / 4, abs=1e-13)
    assert got[1] == pytest.approx(x0, abs=1e-11)
    assert got[2] == pytest.approx(x1, abs=1e-8)  # a flat minimum: sqrt(eps) resolution
    assert len(calls) <= 5


def test_ksection_with_known_ends_and_a_coarse_finish():
    """The bracket ends' values, when given (as the beam march gives them), spare their
    evaluation and change nothing: every call then samples only the k - 1 interior points,
    and the refined points equal those found without them. A null finished at
    BOUNDARY_SHRINK (the main-lobe boundary off the principal cuts) from a bracket as wide
    as the march's lies within 1e-7 rad of the true zero of sin^2(4 (x - x0)) (closed
    form)."""
    x0 = 0.3123456789
    funs = {0: lambda x: np.cos(x) ** 2, 1: lambda x: np.sin(4 * (x - x0)) ** 2}
    a = np.array([np.pi / 4 - 0.013, x0 - 0.017])
    b = a + np.array([0.02, 0.04])
    kind = np.array([0, KSECTION_MINIMUM])
    widths = []

    def fun(act, x):
        widths.append(x.shape[1])
        return np.stack([funs[int(i)](row) for i, row in zip(act, x, strict=True)])

    plain = ksection(fun, a, b, kind)
    widths.clear()
    ends = ksection(fun, a, b, kind, fa=[funs[0](a[0]), funs[1](a[1])],
                    fb=[funs[0](b[0]), funs[1](b[1])])
    assert set(widths) == {7}  # k = 8: nine samples, the two ends known
    assert np.array_equal(ends, plain)
    lo = np.array([x0 - 0.005])  # two march steps of a 16 x 16 panel (kr about 60)
    coarse = ksection(lambda act, x: funs[1](x), lo, lo + 0.013, kind[1:],
                      shrink=np.array([BOUNDARY_SHRINK]))
    assert abs(coarse[0] - x0) < 1e-7


def test_set_threads_caps_every_pool():
    """A study worker's thread cap reaches the transforms, numba and BLAS (checked in a
    fresh process, so this test process keeps its threads)."""
    code = ("import numba, threadpoolctl\n"
            "from steradian.engine import set_threads, transform_threads\n"
            "set_threads(1)\n"
            "info = threadpoolctl.threadpool_info()\n"
            "assert transform_threads() == 1 and numba.get_num_threads() == 1\n"
            "assert all(i['num_threads'] == 1 for i in info), info\n"
            "print('ok')\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True)
    assert out.stdout.strip() == "ok"


def test_grid_decimals_keep_a_grids_own_digits():
    """Common practice: grid values carry their own decimals; the beam-table span and the
    sweep axes share this one rounding rule."""
    from steradian.units import grid_decimals

    v = 0.4 + 0.05 * np.arange(11)
    assert v[4] != 0.6 and grid_decimals(v, 0.05)[4] == 0.6
    assert grid_decimals(3.0 * np.arange(4), 3.0)[3] == 9.0
    assert np.array_equal(grid_decimals([1e300], 1.0), [1e300])  # too many digits: kept


def test_analyze_many_takes_beams_of_any_apertures():
    """Beams of different apertures in one call are batched only with their own kind:
    each result is its stand-alone analysis (a 16-element line and a 6 x 6 panel)."""
    line = sr.Array(sr.linear(16, 0.5 * sr.C0 / F), F, steering=sr.Steering(20.0, 0.0))
    g, el, _ = _panel(6)
    panel = [sr.Array(g, F, el, steering=sr.Steering(t, 0.0)) for t in (0.0, 30.0)]
    opt = AnalysisOptions(metrics=True)
    from steradian.analysis import analyze_many

    many = analyze_many([panel[0], line, panel[1]], opt)
    for a, m in zip([panel[0], line, panel[1]], many, strict=True):
        alone = analyze(a, opt).metrics
        assert m.metrics.psl_db == pytest.approx(alone.psl_db, abs=1e-9)
        assert m.metrics.islr_db == pytest.approx(alone.islr_db, abs=1e-9)
        assert m.metrics.hpbw_deg["phi_plane"] == pytest.approx(alone.hpbw_deg["phi_plane"],
                                                                abs=1e-9)


def test_peaks_of_a_family_are_each_beams_peak():
    """peak_directivity_many (the candidates of every beam refined together) gives each
    beam's stand-alone peak_directivity: direction and directivity to rounding."""
    from steradian.radiation import peak_directivity, peak_directivity_many

    g, el, t = _panel(8)
    beams = [sr.Array(g, F, el, taper=t, steering=sr.Steering(th, ph))
             for th, ph in ((0.0, 0.0), (25.0, 40.0), (50.0, 90.0))]
    beams.append(sr.Array(g, F, el, taper=t))  # unsteered
    for a, pk in zip(beams, peak_directivity_many(beams), strict=True):
        alone = peak_directivity(a)
        assert pk.directivity == pytest.approx(alone.directivity, rel=1e-12)
        assert pk.theta_deg == pytest.approx(alone.theta_deg, abs=1e-9)
        assert pk.phi_deg == pytest.approx(alone.phi_deg, abs=1e-9)
