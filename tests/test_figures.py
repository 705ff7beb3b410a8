"""Figures: every plotted curve, map and marker is the computed pattern or the analysis's
number; the cuts span the whole circle (the worst sidelobe of a scanned beam is on them);
files are PNG, SVG or PDF by suffix; the ``figure`` command."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st

from steradian.cli import main
from steradian.directions import unit_vectors_deg
from steradian.errors import SteradianError
from steradian.io.design import design_from_dict, load_design
from steradian.metrics import principal_cuts
from steradian.patterns import uv_map
from steradian.plots import (
    coverage_figure,
    cuts_figure,
    full_cuts,
    histogram_figure,
    lattice_orders,
    layout_figure,
    locate_on_cut,
    polar_figure,
    save_figure,
    sphere_map,
    summary_peak,
    sweep_figure,
    uv_figure,
)
from steradian.radiation import directivity
from steradian.report import FIGURE_KINDS, design_figure
from steradian.workflows import analyze_design

ROOT = Path(__file__).resolve().parents[1]


def _design(name="fig_test", *, geometry, element=None, steering=None, taper=None, **extra):
    d = {"design": {"name": name, "frequency_hz": 3e9}, "geometry": geometry,
         "element": element or {"model": "isotropic"}}
    if steering:
        d["steering"] = steering
    if taper:
        d["taper"] = taper
    d.update(extra)
    return design_from_dict(d)


def _line(n=8, d=0.5, theta=None):
    return _design(geometry={"kind": "linear", "units": "wavelength", "count": n,
                             "spacing": d, "axis": "x"},
                   steering=None if theta is None else {"theta_deg": theta, "phi_deg": 0.0})


def _scanned_panel():
    """A 12 x 8 panel of cos elements at 0.6 wavelength scanned 45 deg: its worst lobe lies
    more than 90 deg from the beam, off a cut of half-span 90 deg."""
    return _design("panel_12x8", geometry={"kind": "rectangular", "units": "wavelength",
                                           "count_x": 12, "count_y": 8, "spacing_x": 0.6,
                                           "spacing_y": 0.6},
                   element={"model": "cosine_power", "q": 1.0},
                   steering={"theta_deg": 45.0, "phi_deg": 0.0})


def test_cut_curve_is_the_closed_form_line_array_pattern():
    """The plotted cut of an 8-element half-wave line of isotropic radiators equals
    D(psi) = |sin(N psi / 2) / sin(psi / 2)|^2 / N with psi = k d cos(angle from the axis)
    (Balanis, Antenna Theory, 4th ed., sec. 6.2-6.3: uniform array factor; D = N at
    half-wave spacing, sec. 6.4), over the whole circle."""
    des = _line()
    s = analyze_design(des)
    assert s["peak_directivity_dbi"] == pytest.approx(10 * np.log10(8), abs=1e-9)
    fig = design_figure(des, "cuts", s)
    ax = fig.axes[0]
    cuts = full_cuts(des.array, summary_peak(s), s["metrics"], s["frequency_hz"])
    c0 = cuts[0]
    x, y = ax.lines[0].get_data()
    np.testing.assert_array_equal(x, c0.angle_deg)
    np.testing.assert_array_equal(y, c0.directivity_dbi)
    assert x.min() == -180.0 and x.max() == 180.0
    psi = np.pi * c0.directions[:, 0]  # k d cos(angle from x) with d = lambda / 2
    with np.errstate(invalid="ignore", divide="ignore"):
        af = np.where(np.abs(np.sin(psi / 2)) < 1e-12, 8.0 ** 2,
                      (np.sin(8 * psi / 2) / np.sin(psi / 2)) ** 2)
    ref = 10 * np.log10(np.maximum(af / 8, 1e-30))
    ok = ref > -60
    np.testing.assert_allclose(y[ok], ref[ok], atol=1e-9)
    assert f"peak {s['peak_directivity_dbi']:.2f} dBi" in ax.get_title()


def test_scanned_panel_worst_sidelobe_is_on_the_cut():
    """A 12 x 8 panel scanned 45 deg whose worst lobe is beyond the horizon side (theta
    about 70 deg, phi 180 deg: 115 deg from the beam, as lambda / d - sin 45 deg places it,
    Mailloux ch. 2): it is on the cut figure, marked at the analysis's level, and the curve
    reaches that level there."""
    des = _scanned_panel()
    s = analyze_design(des)
    m = s["metrics"]
    assert m["psl_theta_deg"] > 60 and abs(abs(m["psl_phi_deg"]) - 180) < 1e-6
    fig = design_figure(des, "cuts", s)
    ax = fig.axes[0]
    peak = s["peak_directivity_dbi"]
    marks = [ln for ln in ax.lines if ln.get_label().startswith("worst sidelobe")]
    assert len(marks) == 1
    (a,), (lvl,) = marks[0].get_data()
    assert abs(a) > 90.0
    assert lvl == pytest.approx(peak + m["psl_db"], abs=1e-12)
    assert ax.get_xlim()[0] <= a <= ax.get_xlim()[1]
    assert ax.get_ylim()[0] < lvl < ax.get_ylim()[1]
    x, y = ax.lines[0].get_data()
    near = np.abs(x - a) < 2.0
    assert np.max(y[near]) == pytest.approx(lvl, abs=0.05)
    assert f"{m['psl_db']:.2f} dB" in marks[0].get_label()
    psl_line = [ln for ln in ax.lines if ln.get_label().startswith("peak sidelobe level")]
    assert psl_line[0].get_ydata()[0] == pytest.approx(lvl)
    legend = [t.get_text() for t in fig.legends[0].get_texts()]
    assert any(f"phi = {m['beam_phi_deg'] + 0.0:z.1f} deg" in t for t in legend)


def test_sidelobe_plane_added_when_the_worst_lobe_is_off_both_principal_planes():
    """When the worst sidelobe lies on neither principal cut, a third cut through the beam
    axis and that lobe is drawn; its samples are the pattern (direct evaluation)."""
    des = load_design(ROOT / "configs" / "buoy_conformal.toml")
    s = analyze_design(des)
    cuts = full_cuts(des.array, summary_peak(s), s["metrics"], s["frequency_hz"])
    assert [c.name for c in cuts] == ["phi_plane", "cross_plane", "sidelobe_plane"]
    c = cuts[2]
    d = 10 * np.log10(directivity(des.array, _dirs(c.directions[::97]),
                                  power=summary_peak(s).power))
    np.testing.assert_allclose(c.directivity_dbi[::97], d, atol=1e-9)
    m = s["metrics"]
    on = np.max(c.directions @ unit_vectors_deg(m["psl_theta_deg"], m["psl_phi_deg"]))
    assert on > np.cos(np.deg2rad(0.2))


def _dirs(v):
    from steradian.directions import Directions

    return Directions.from_vectors(np.asarray(v))


def test_uv_title_peak_is_the_analysis_peak_and_map_is_the_pattern():
    """The u-v title's peak is the analysis's (not the grid maximum), the colour scale
    tops at it, and the mesh is :func:`uv_map` of the design."""
    des = _scanned_panel()
    s = analyze_design(des)
    fig = design_figure(des, "uv", s, uv_points=61)
    ax = fig.axes[0]
    assert f"peak {s['peak_directivity_dbi']:.2f} dBi" in ax.get_title()
    mesh = ax.collections[0]
    assert mesh.get_clim()[1] == s["peak_directivity_dbi"]
    ref = uv_map(des.array, 61, power=summary_peak(s).power).directivity_dbi
    got = np.ma.filled(mesh.get_array(), np.nan).reshape(ref.shape)
    np.testing.assert_array_equal(np.isnan(got), np.isnan(ref))
    np.testing.assert_allclose(got[~np.isnan(ref)], ref[~np.isnan(ref)], atol=1e-12)
    assert np.nanmax(ref) <= s["peak_directivity_dbi"] + 1e-9


def test_uv_grating_lobes_at_the_textbook_positions():
    """A 0.9-wavelength line steered 30 deg: the predicted grating lobe is drawn at
    u = sin 30 - lambda / d (Mailloux, Phased Array Antenna Handbook, ch. 2), and the
    diagram's orders are at u = p lambda / d."""
    des = _line(12, 0.9, theta=30.0)
    s = analyze_design(des)
    fig = design_figure(des, "uv", s, uv_points=41)
    ax = fig.axes[0]
    gl = [ln for ln in ax.lines if ln.get_label().startswith("predicted grating lobes")]
    assert len(gl) == 1
    u, v = gl[0].get_data()
    assert u[0] == pytest.approx(0.5 - 1 / 0.9, abs=1e-9)
    assert v[0] == pytest.approx(0.0, abs=1e-9)
    orders = lattice_orders(des.array.geometry.lattice, s["wavelength_m"])
    np.testing.assert_allclose(np.sort(orders[:, 0]),
                               [p / 0.9 for p in (-2, -1, 1, 2)], atol=1e-9)
    assert len(fig.axes) == 3  # map, colour bar, diagram


def test_lattice_orders_of_a_triangular_lattice():
    """Rectangular lattice dx = dy = lambda / 2: orders at (2p, 2q) in sine space (the
    reciprocal lattice; Mailloux ch. 2); a lattice out of the x-y plane gives none."""
    lam = 0.1
    pts = lattice_orders([[0.05, 0.0, 0.0], [0.0, 0.05, 0.0]], lam, reach=2.9)
    assert sorted(map(tuple, np.round(pts, 9))) == sorted(
        (2.0 * p, 2.0 * q) for p in (-1, 0, 1) for q in (-1, 0, 1) if (p, q) != (0, 0))
    assert lattice_orders([[0.05, 0.0, 0.0], [0.0, 0.0, 0.05]], lam) is None
    assert lattice_orders(None, lam) is None


@pytest.mark.parametrize("kind", ["theta_phi", "az_el"])
def test_sphere_maps_are_the_pattern(kind):
    """theta-phi and az-el maps: the plotted grid is the directivity in each direction
    (az-el by the project's convention, directions.az_el_to_theta_phi), below the analysis
    peak, and within 0.2 dB of it at a 1 deg step (a half-wave line's main lobe is wide)."""
    from steradian.directions import az_el_to_theta_phi

    des = _line(6, 0.5, theta=40.0)
    s = analyze_design(des)
    a, b, d = sphere_map(des.array, s, kind, 3.0)
    j, i = 7, 11
    if kind == "theta_phi":
        th, ph = b[j], a[i]
    else:
        th, ph = az_el_to_theta_phi(a[i], b[j])
    ref = 10 * np.log10(directivity(des.array, _dirs(unit_vectors_deg(th, ph)[None, :]),
                                    power=summary_peak(s).power))[0]
    assert d[j, i] == pytest.approx(ref, abs=1e-9)
    assert np.max(d) <= s["peak_directivity_dbi"] + 1e-9
    fig = design_figure(des, kind.replace("_", "-"), s)
    assert fig.axes[0].collections[0].get_clim()[1] == s["peak_directivity_dbi"]
    assert f"peak {s['peak_directivity_dbi']:.2f} dBi" in fig.axes[0].get_title()


def test_polar_radius_is_level_above_the_floor():
    """Polar cuts: radius = D - peak + range (dB), clipped at zero."""
    des = _line()
    s = analyze_design(des)
    cuts = principal_cuts(des.array, peak=summary_peak(s), span_deg=180.0, n=361)
    fig = polar_figure(cuts, metrics=s["metrics"], peak_dbi=s["peak_directivity_dbi"],
                       range_db=40.0)
    t, r = fig.axes[0].lines[0].get_data()
    np.testing.assert_allclose(t, np.deg2rad(cuts[0].angle_deg))
    np.testing.assert_allclose(r, np.clip(cuts[0].directivity_dbi
                                          - s["peak_directivity_dbi"] + 40.0, 0, None))


def test_layout_colours_are_amplitude_and_phase_of_the_weights():
    """Layout panels: colours = 20 log10 |w| / max |w| and arg w (deg) of the steered
    excitation; disabled elements drawn apart."""
    des = _design(geometry={"kind": "rectangular", "units": "wavelength", "count_x": 4,
                            "count_y": 3, "spacing_x": 0.5, "spacing_y": 0.5},
                  steering={"theta_deg": 20.0, "phi_deg": 30.0},
                  taper={"kind": "taylor", "sll": 25.0, "nbar": 3})
    w = des.array.weights()
    fig = layout_figure(des.array.positions, w)
    amp = fig.axes[0].collections[0].get_array()
    np.testing.assert_allclose(amp, 20 * np.log10(np.abs(w) / np.abs(w).max()), atol=1e-8)
    ph = fig.axes[2].collections[0].get_array()  # axes: amp, its colour bar, phase, ...
    np.testing.assert_allclose(ph, np.rad2deg(np.angle(w)), atol=1e-9)
    on = np.ones(12, bool)
    on[[1, 5]] = False
    fig = layout_figure(des.array.positions, w, enabled=on, states=np.arange(12))
    assert len(fig.axes[0].collections[0].get_array()) == 10
    np.testing.assert_array_equal(fig.axes[4].collections[0].get_array(),
                                  np.arange(12)[on])


def test_curves_from_plain_rows():
    """Sweep curves and tolerance histograms take plain rows (dictionaries) and plot their
    values; a histogram counts every finite trial."""
    rows = [{"f": 1.0, "d": 10.0, "psl": -13.0}, {"f": 2.0, "d": 11.0, "psl": None},
            {"f": 3.0, "d": 12.5, "psl": -14.0}]
    fig = sweep_figure(rows, "f", ["d", "psl"], labels={"f": "frequency (GHz)"},
                       limits={"psl": -13.5})
    x, y = fig.axes[0].lines[0].get_data()
    np.testing.assert_array_equal(x, [1, 2, 3])
    np.testing.assert_array_equal(y, [10, 11, 12.5])
    x, y = fig.axes[1].lines[0].get_data()
    np.testing.assert_array_equal(x, [1, 3])
    assert fig.axes[0].get_xlabel() == "frequency (GHz)"
    rng = np.random.default_rng(3)
    vals = rng.normal(-20, 1, 500)
    fig = histogram_figure([{"psl_db": v} for v in vals] + [{"psl_db": None}],
                           label="psl_db", limit=-18.0)
    heights = [p.get_height() for p in fig.axes[0].patches]
    assert sum(heights) == 500
    assert f"mean {vals.mean():.3f}" in [ln.get_label() for ln in fig.axes[0].lines]


def test_coverage_colours_are_the_beam_rows():
    """Coverage map: each beam at (sin theta cos phi, sin theta sin phi), coloured by the
    table's own per-beam gain, PSL and quantization lobe; beams over a limit ringed."""
    rows = [{"theta_deg": 0.0, "phi_deg": 0.0, "gain_dbi": 20.0, "psl_db": -25.0,
             "qlobe_db": -40.0},
            {"theta_deg": 30.0, "phi_deg": 90.0, "gain_dbi": 19.0, "psl_db": -19.0,
             "qlobe_db": None}]
    fig = coverage_figure(rows, requirements={"max_psl_db": -20.0})
    sc = fig.axes[0].collections[0]
    np.testing.assert_allclose(sc.get_offsets(), [[0, 0], [0, 0.5]], atol=1e-12)
    np.testing.assert_array_equal(sc.get_array(), [20.0, 19.0])
    psl_axes = fig.axes[2]
    np.testing.assert_array_equal(psl_axes.collections[0].get_array(), [-25.0, -19.0])
    np.testing.assert_allclose(psl_axes.collections[1].get_offsets(), [[0, 0.5]], atol=1e-12)
    assert len(fig.axes[4].collections[0].get_array()) == 1  # the beam without a qlobe


def test_design_coverage_from_a_small_beam_table():
    """design_figure('coverage') plots the beam table's metrics rows (build of the design);
    'layout' with a build adds the phase codes of one beam."""
    from steradian.workflows import beam_table_from_design

    des = _design(geometry={"kind": "rectangular", "units": "wavelength", "count_x": 4,
                            "count_y": 4, "spacing_x": 0.5, "spacing_y": 0.5},
                  channel={"phase_bits": 4}, beams={"grid": "list", "directions": [[0, 0], [20, 0],
                                                    [40, 90]]})
    build = beam_table_from_design(des)
    fig = design_figure(des, "coverage", analyze_design(des), build=build)
    rows = build.metrics.rows()
    np.testing.assert_array_equal(fig.axes[0].collections[0].get_array(),
                                  [r["gain_dbi"] for r in rows])
    fig = design_figure(des, "layout", analyze_design(des), build=build, beam=2)
    np.testing.assert_array_equal(fig.axes[4].collections[0].get_array(),
                                  build.table.codes[2][:, 0])
    with pytest.raises(SteradianError, match="beam 3 is not in the table"):
        design_figure(des, "layout", analyze_design(des), build=build, beam=3)


def test_cuts_requirement_lines():
    """max_psl_db is drawn as a level line at peak + limit; max_hpbw_deg as +-limit/2 on the
    main-beam panels."""
    des = _line()
    s = analyze_design(des)
    cuts = full_cuts(des.array, summary_peak(s), s["metrics"], s["frequency_hz"])
    fig = cuts_figure(cuts, metrics=s["metrics"], peak_dbi=s["peak_directivity_dbi"],
                      requirements={"max_psl_db": -20.0, "max_hpbw_deg": 14.0})
    req = [ln for ln in fig.axes[0].lines if ln.get_label().startswith("requirement")]
    assert req[0].get_ydata()[0] == pytest.approx(s["peak_directivity_dbi"] - 20.0)
    xs = sorted(ln.get_xdata()[0] for ln in fig.axes[1].lines
                if ln.get_color() == "#b03a5b")
    assert xs == [-7.0, 7.0]
    hp = s["metrics"]["planes"]["phi_plane"]["half_power_deg"]
    bars = [ln for ln in fig.axes[1].lines if list(ln.get_xdata()) == list(hp)]
    assert bars and bars[0].get_ydata()[0] == pytest.approx(s["peak_directivity_dbi"] - 3)


@pytest.mark.parametrize("suffix,magic", [(".png", b"\x89PNG"), (".svg", b"<?xml"),
                                          (".pdf", b"%PDF")])
def test_save_figure_formats(tmp_path, suffix, magic):
    """PNG, SVG and PDF by suffix (file signatures of the formats), written atomically."""
    fig = uv_figure(uv_map(_line(4).array, 21))
    p = save_figure(fig, tmp_path / f"f{suffix}")
    assert p.read_bytes().startswith(magic)
    assert sorted(x.name for x in tmp_path.iterdir()) == [f"f{suffix}"]


def test_save_figure_refuses_unknown_suffix(tmp_path):
    with pytest.raises(SteradianError, match="unknown suffix '.gif'"):
        save_figure(uv_figure(uv_map(_line(4).array, 11)), tmp_path / "f.gif")


def test_unknown_kind_suggests():
    with pytest.raises(SteradianError, match="did you mean 'polar'"):
        design_figure(_line(4), "polr")


def test_figure_cli_every_kind(tmp_path):
    """steradian figure writes each kind (exit 0, --json names the file); a design without a
    beam table refuses coverage in one line (exit 2)."""
    design = ROOT / "configs" / "link_line.toml"
    r = CliRunner()
    for kind in FIGURE_KINDS:
        if kind in ("coverage", "trade"):
            continue
        out = tmp_path / f"{kind}.svg"
        res = r.invoke(main, ["figure", str(design), kind, "-o", str(out), "--json"])
        assert res.exit_code == 0, res.output
        assert json.loads(res.output)["file"] == str(out)
        assert out.read_bytes().startswith(b"<?xml")
    res = r.invoke(main, ["figure", str(design), "coverage", "-o", str(tmp_path / "c.png")])
    assert res.exit_code == 2
    assert "steradian: error:" in res.output and "[channel]" in res.output
    res = r.invoke(main, ["figure", "--help"])
    assert res.exit_code == 0 and "theta-phi" in res.output


def test_coverage_of_horizon_beams_is_drawn_over_theta_phi():
    """Beams beyond 60 deg from +z (a conformal array's horizon beams) are drawn over
    (phi, theta), so beams mirrored about the horizon stay apart."""
    rows = [{"theta_deg": t, "phi_deg": 20.0, "gain_dbi": 15.0 + i, "psl_db": -10.0,
             "qlobe_db": -30.0} for i, t in enumerate((75.0, 90.0, 105.0))]
    fig = coverage_figure(rows)
    np.testing.assert_allclose(fig.axes[0].collections[0].get_offsets(),
                               [[20.0, 75.0], [20.0, 90.0], [20.0, 105.0]])
    assert fig.axes[0].get_ylabel() == "theta (deg)"


def test_trade_curve_figure_plots_the_rows():
    """The trade curve: feasible rows as (PSL, directivity), the knee and the unconstrained
    level at the curve's numbers, infeasible limits as bands."""
    from types import SimpleNamespace

    from steradian.plots import trade_curve_figure

    rows = [{"limit_db": -15.0, "psl_db": -15.0, "directivity_dbi": 20.0},
            {"limit_db": -20.0, "psl_db": -20.01, "directivity_dbi": 19.5},
            {"limit_db": -40.0, "psl_db": None, "directivity_dbi": None}]
    curve = SimpleNamespace(rows=rows, knee=rows[1], max_directivity_dbi=20.4)
    fig = trade_curve_figure(curve)
    ax = fig.axes[0]
    x, y = ax.lines[0].get_data()
    np.testing.assert_array_equal(x, [-15.0, -20.01])
    np.testing.assert_array_equal(y, [20.0, 19.5])
    assert ax.lines[1].get_ydata()[0] == 20.4
    assert list(ax.lines[2].get_data()[0]) == [-20.01]
    labels = [t.get_text() for t in fig.legends[0].get_texts()]
    assert "knee: limit -20.0 dB, 19.50 dBi" in labels and "infeasible limit" in labels


def test_3d_view_radius_is_level_above_the_floor():
    """3-D view: radius = level above the floor (peak - range, dB), so the peak sits at
    radius range_db; the title carries the analysis peak and the floor."""
    from steradian.plots import pattern_3d_figure

    th = np.array([0.0, 45.0, 90.0])
    ph = np.array([0.0, 90.0])
    d = np.array([[10.0, 10.0], [5.0, 4.0], [-40.0, -40.0]])
    fig = pattern_3d_figure(th, ph, d, peak_dbi=10.0, range_db=30.0)
    ax = fig.axes[0]
    assert "peak 10.00 dBi" in ax.get_title() and "-20.0 dBi" in ax.get_title()
    # the peak at theta 0 has radius 30 dB: the cube holds it with 5 % room on every axis
    for lim in (ax.get_xlim(), ax.get_ylim(), ax.get_zlim()):
        assert lim == pytest.approx((-31.5, 31.5))


@settings(max_examples=60, deadline=None)
@given(theta=st.floats(0.5, 179.5), phi=st.floats(-179.0, 179.0),
       k=st.integers(0, 360))
def test_locate_on_cut_inverts_the_cut(theta, phi, k):
    """Invariant: a direction sampled on a great-circle cut is located on it (distance 0) at
    its own signed angle; rotated off the circle by a known angle, the distance is that
    angle (spherical geometry of a great circle)."""
    from steradian.patterns import cut_frame
    from steradian.samples import Cut

    r0 = unit_vectors_deg(theta, phi)
    t = cut_frame(r0)[0]
    a = np.linspace(-180.0, 180.0, 361)
    dirs = r0[None, :] * np.cos(np.deg2rad(a))[:, None] + t[None, :] * np.sin(
        np.deg2rad(a))[:, None]
    from steradian.directions import angles_deg

    th, ph = angles_deg(dirs)
    c = Cut("c", a, dirs, np.zeros(361), th, ph)
    ang, off = locate_on_cut(c, th[k], ph[k])
    assert off == pytest.approx(0.0, abs=1e-6)
    assert ang == pytest.approx(a[k], abs=1e-6) or abs(abs(ang) - 180.0) < 1e-6
    n = np.cross(r0, t)
    d = np.cos(np.deg2rad(3.0)) * dirs[k] + np.sin(np.deg2rad(3.0)) * n
    t2, p2 = angles_deg(d[None, :])
    assert locate_on_cut(c, t2[0], p2[0])[1] == pytest.approx(3.0, abs=1e-6)


def test_study_figures_from_rows():
    """Sweep curves and tolerance histograms drawn from a study's rows: one line per value
    of the second axis with the rows' values in order, the dB floor (no sidelobe found) not
    drawn; one histogram per metric holding every trial."""
    from steradian.report import sweep_result_figure, tolerance_result_figure

    rows = [{"s": s, "phi": p, "directivity_dbi": 10 + s + p / 100, "psl_db": -13.0 if s < 0.7
             else -300.0, "pointing_error_deg": 0.01 * s}
            for p in (45.0, 60.0) for s in (0.5, 0.6, 0.7)]
    fig = sweep_result_figure(rows, ["s", "phi"])
    d_ax, psl_ax = fig.axes[0], fig.axes[1]
    assert len(d_ax.lines) == 2
    assert list(d_ax.lines[1].get_ydata()) == [10 + s + 0.6 for s in (0.5, 0.6, 0.7)]
    assert list(psl_ax.lines[0].get_ydata()) == [-13.0, -13.0]  # the floor is left out
    trials = [{"directivity_loss_db": 0.01 * i, "psl_db": -30 + 0.01 * i,
               "pointing_error_deg": 0.001 * i} for i in range(50)]
    figs = tolerance_result_figure(trials)
    assert len(figs) == 3
    counts = sum(p.get_height() for p in figs[0].axes[0].patches)
    assert counts == 50
