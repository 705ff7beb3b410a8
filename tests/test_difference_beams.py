"""Difference (monopulse) beams: beam kinds, the boresight null, the difference sidelobe level
and the difference slope (issue 9 item 7 and "Beam kinds").

Outside references:

- E. T. Bayliss, "Design of monopulse antenna difference patterns with low sidelobes," Bell
  Syst. Tech. J. 47 (1968) 623-650: an odd distribution has an exact boresight null, and the
  sidelobes of Bayliss's line distribution sit at the design level to the precision of his
  fitted zeros (0.3 dB on these half-wave lines, as tests/test_tapers.py checks on the array
  factor alone).
- The difference slope from the aperture's first moment (derived here, common practice):
  for isotropic elements at x_n on a line along x, steered to theta_0 in the x-z plane, the
  array factor is AF(u) = sum_n w_n exp(j k x_n (u - u_0)), u = sin(theta), so at boresight
  AF = sum_n w_n = 0 for odd weights and dAF/du = j k sum_n w_n x_n. At half-wave spacing the
  radiated power is 4 pi sum_n |w_n|^2 (the sinc cross terms vanish), so the field normalised
  to directivity, |E| = sqrt(D) = |AF| / sqrt(sum |w_n|^2), rises from the null with slope
  d|E|/d theta = k |sum_n w_n x_n| cos(theta_0) / sqrt(sum_n |w_n|^2) per radian. The
  uniform sum beam of the same line has directivity N at boresight, so the monopulse slope
  (difference slope over the sum field, Sherman and Barton, Monopulse Principles and
  Techniques, 2nd ed., 2011) is that divided by sqrt(N). By Cauchy-Schwarz the linear odd
  distribution w_n = x_n has the largest slope for a given power (common practice).
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from click.testing import CliRunner

import steradian as st
from steradian import tapers
from steradian.cli import main
from steradian.errors import DesignError, SteradianError
from steradian.metrics import pattern_metrics

F = st.C0  # 1 m wavelength
K = 2 * np.pi


def _line(w, theta=0.0):
    steer = st.Steering(theta, 0.0) if theta else None
    return st.Array(st.linear(len(w), 0.5), F, taper=np.asarray(w, complex), steering=steer)


def _slope_ref(w, x, theta):
    """d sqrt(D) / d theta at boresight per degree, from the first moment (module notes)."""
    w = np.asarray(w, float)
    return (K * abs(np.sum(w * x)) * np.cos(np.deg2rad(theta)) / np.sqrt(np.sum(w**2))
            * np.pi / 180)


@pytest.mark.parametrize("n,nbar,sll", [(32, 5, 30.0), (48, 6, 35.0)])
def test_bayliss_line_null_and_design_sidelobe_level(n, nbar, sll):
    """Bayliss (1968): the boresight null is exact (below -100 dB here; the floor is -300),
    the two difference lobes are equal, and the difference sidelobe level (highest lobe
    outside both lobes) is the design level within 0.3 dB."""
    m = pattern_metrics(_line(tapers.bayliss(n, nbar, sll)), beam_kind="difference_az")
    assert m.beam_kind == "difference_az"
    assert m.boresight_null_db < -100
    assert len(m.difference_lobes) == 2
    a, b = m.difference_lobes
    assert a.level_db == pytest.approx(b.level_db, abs=1e-6)
    assert a.theta_deg == pytest.approx(b.theta_deg, abs=1e-6)  # either side of broadside
    assert m.difference_peak_dbi == pytest.approx(max(a.directivity_dbi, b.directivity_dbi))
    assert abs(m.difference_sidelobe_db + sll) < 0.3
    assert m.psl_db == pytest.approx(m.difference_sidelobe_db, abs=1e-9)  # the same lobe
    assert m.grating_lobes_found == ()
    assert m.main_lobe_model.startswith("difference")


@pytest.mark.parametrize("theta", [0.0, 30.0, -40.0])
@pytest.mark.parametrize("taper", ["bayliss", "linear_odd"])
def test_difference_slope_is_the_aperture_first_moment(taper, theta):
    """The measured difference and monopulse slopes equal the first-moment values of the
    module notes (relative 1e-6), at broadside and scanned; the linear odd distribution has
    the larger slope (Cauchy-Schwarz)."""
    n = 24
    x = (np.arange(n) - (n - 1) / 2) * 0.5
    w = tapers.bayliss(n, 5, 30.0) if taper == "bayliss" else x
    m = pattern_metrics(_line(w, abs(theta)), beam_kind="difference_az")
    ref = _slope_ref(w, x, theta)
    assert m.difference_slope_per_deg == pytest.approx(ref, rel=1e-6)
    assert m.monopulse_slope_per_deg == pytest.approx(ref / np.sqrt(n), rel=1e-6)
    if theta:
        assert m.pointing_error_deg < 1e-6  # the null sits on the steering direction
    lin = _slope_ref(x, x, theta) / np.sqrt(n)
    assert m.monopulse_slope_per_deg <= lin * (1 + 1e-9)


def _bayliss_taylor(g, x="bayliss", y="taylor"):
    return tapers.from_spec(g, {"kind": "separable", "x": {"kind": x, "sll": 30},
                                "y": {"kind": y, "sll": 30}}, 1.0)


def test_bayliss_times_taylor_panel_is_not_a_zero_db_sidelobe():
    """Issue 9 item 7 regression: a Bayliss x Taylor panel scored as a sum beam reported "peak
    sidelobe 0.00 dB" and its twin lobe as a grating lobe found. Now the declared sum beam is
    refused in one line naming the fix, and as a difference beam both lobes are the main lobe:
    the sidelobe level is that of the tapers (below -25 dB; Bayliss 1968, Taylor 1955 at
    30 dB), no grating lobe, the null exact on the steering direction."""
    g = st.rectangular(16, 12, 0.5)
    arr = st.Array(g, F, taper=_bayliss_taylor(g), steering=st.Steering(20, 30))
    with pytest.raises(SteradianError, match="difference beam.*beam_kind = 'difference_az'"):
        pattern_metrics(arr)
    m = pattern_metrics(arr, beam_kind="difference_az")
    assert -40 < m.psl_db < -25 and m.difference_sidelobe_db == pytest.approx(m.psl_db)
    assert m.grating_lobes_found == ()
    assert m.boresight_null_db < -100 and m.pointing_error_deg < 1e-6
    a, b = m.difference_lobes
    assert a.level_db == pytest.approx(b.level_db, abs=1e-6)
    d = m.to_dict()
    assert d["beam_kind"] == "difference_az" and len(d["difference_lobes"]) == 2


def test_elevation_difference_equals_azimuth_difference_of_the_turned_panel():
    """difference_el (antisymmetric about the x-z plane) measures the same beam as
    difference_az on the panel turned by 90 degrees (geometry, common practice)."""
    az = st.rectangular(10, 8, 0.5)
    el = st.rectangular(8, 10, 0.5)
    m_az = pattern_metrics(st.Array(az, F, taper=_bayliss_taylor(az)), beam_kind="difference_az")
    m_el = pattern_metrics(st.Array(el, F, taper=_bayliss_taylor(el, "taylor", "bayliss")),
                           beam_kind="difference_el")
    for key in ("difference_peak_dbi", "difference_sidelobe_db", "difference_slope_per_deg",
                "monopulse_slope_per_deg"):
        assert getattr(m_el, key) == pytest.approx(getattr(m_az, key), rel=1e-6, abs=1e-6)
    with pytest.raises(SteradianError, match="no difference lobe along y"):
        pattern_metrics(st.Array(az, F, taper=_bayliss_taylor(az)), beam_kind="difference_el")


def test_declared_difference_on_a_sum_taper_is_refused():
    """A sum taper has no boresight null: declaring it a difference beam is an error, not a
    slope of a beam peak."""
    g = st.rectangular(8, 8, 0.5)
    with pytest.raises(SteradianError, match="no boresight null"):
        pattern_metrics(st.Array(g, F), beam_kind="difference_az")
    with pytest.raises(SteradianError, match="beam_kind must be one of"):
        pattern_metrics(st.Array(g, F), beam_kind="delta")


def test_sum_beams_are_unchanged():
    """A sum beam keeps its metrics (the first sidelobe of the uniform 8-element factor
    |sin(N psi/2) / (N sin(psi/2))|, Balanis, Antenna Theory, 4th ed., eq. 6-10c, sampled
    finely here); the difference fields are empty."""
    m = pattern_metrics(st.Array(st.rectangular(8, 8, 0.5), F))
    assert m.beam_kind == "sum" and m.boresight_null_db is None and m.difference_lobes == ()
    psi = np.linspace(2 * np.pi / 8, np.pi, 200001)  # from the first null to the edge
    ref = 20 * np.log10(np.max(np.abs(np.sin(8 * psi / 2) / (8 * np.sin(psi / 2)))))
    assert m.psl_db == pytest.approx(ref, abs=1e-6)


PANEL = """
[design]
name = "monopulse"
frequency_hz = 299792458.0

[geometry]
kind = "rectangular"
units = "wavelength"
count_x = 16
count_y = 12
spacing_x = 0.5
spacing_y = 0.5

[taper]
kind = "separable"
x = {{ kind = "bayliss", sll = 30 }}
y = {{ kind = "taylor", sll = 30 }}
{analysis}
"""


def test_design_file_and_cli_declare_the_beam_kind(tmp_path):
    """Issue 9 item 7 through a design file: without [analysis] beam_kind, analyze refuses in
    one line (exit 2, no traceback); with beam_kind = "difference_az" it reports the
    difference metrics; an unknown kind names the key."""
    p = tmp_path / "d.toml"
    p.write_text(PANEL.format(analysis=""))
    r = CliRunner().invoke(main, ["analyze", str(p), "--json"])
    assert r.exit_code == 2 and "Traceback" not in r.stderr
    assert r.stderr.count("\n") == 1 and r.stderr.startswith("steradian: error:")
    assert "beam_kind = 'difference_az'" in r.stderr
    p.write_text(PANEL.format(analysis='[analysis]\nbeam_kind = "difference_az"'))
    r = CliRunner().invoke(main, ["analyze", str(p), "--json"])
    assert r.exit_code == 0, r.stderr
    m = json.loads(r.stdout)["metrics"]
    assert m["beam_kind"] == "difference_az" and m["boresight_null_db"] < -100
    assert m["psl_db"] < -25 and m["grating_lobes_found"] == []
    with pytest.raises(DesignError, match="analysis.beam_kind"):
        st.design_from_dict({"design": {"frequency_hz": F},
                             "geometry": {"kind": "linear", "count": 4, "spacing": 0.5,
                                          "units": "wavelength"},
                             "analysis": {"beam_kind": "difference"}})


def test_beam_table_of_a_difference_taper_is_refused(tmp_path):
    """Issue 9 item 7 in beam tables: `steradian beams` on a Bayliss x Taylor design printed
    "peak sidelobe worst 0.00 dB" and a 6 deg pointing error with exit 0 and wrote the
    files. Beam tables score sum beams only, so the difference table is refused in one line
    (exit 2) and nothing is written."""
    p = tmp_path / "d.toml"
    p.write_text(PANEL.format(analysis="") + """
[channel]
phase_bits = 6
attenuator_step_db = 0.5
attenuator_span_db = 31.5

[beams]
grid = "theta_phi"
theta_deg = [0, 20]
phi_deg = [0]
""")
    out = tmp_path / "table"
    r = CliRunner().invoke(main, ["beams", str(p), "-o", str(out)])
    assert r.exit_code == 2 and "Traceback" not in r.stderr
    assert r.stderr.count("\n") == 1 and "difference beam" in r.stderr
    assert not list(tmp_path.glob("table*"))


def test_difference_null_squints_off_frequency_like_a_phase_steered_beam():
    """Phase steering off the design frequency moves the difference null to
    sin(theta) = sin(theta_0) f_0 / f, as it moves a sum beam (Mailloux, Phased Array Antenna
    Handbook, 3rd ed., 2018, ch. 1: beam squint); the pointing error of a difference beam is
    that of its null, and the null depth at the commanded direction becomes shallow."""
    arr = _line(tapers.bayliss(32, 5, 30.0), 30.0)
    m = pattern_metrics(arr, frequency=1.1 * F, beam_kind="difference_az")
    squint = 30.0 - np.rad2deg(np.arcsin(np.sin(np.deg2rad(30.0)) / 1.1))
    assert m.pointing_error_deg == pytest.approx(squint, abs=1e-6)
    assert m.boresight_null_db > -20


def test_pattern_plot_of_a_declared_difference_beam(tmp_path):
    """The principal-cut PNG annotates the declared kind's sidelobe level: `steradian
    pattern --png` on a design with [analysis] beam_kind = "difference_az" runs (it
    measured the beam as a sum beam and was refused)."""
    p = tmp_path / "d.toml"
    p.write_text(PANEL.format(analysis='[analysis]\nbeam_kind = "difference_az"'))
    r = CliRunner().invoke(main, ["pattern", str(p), "--png", str(tmp_path / "c.png")])
    assert r.exit_code == 0, r.stderr
    assert (tmp_path / "c.png").stat().st_size > 0


def test_circular_bayliss_in_both_planes():
    """Bayliss's circular difference distribution (Bayliss 1968, section on circular
    apertures) cos(phi - phi_0) g(rho): phi_0 = 0 is an azimuth difference, phi_0 = 90 deg an
    elevation one with the same figures on a layout symmetric under the 90 deg turn; an
    exact boresight null, and the wrong plane is refused."""
    g = st.rectangular(16, 16, 0.5)
    keep = np.hypot(g.positions[:, 0], g.positions[:, 1]) <= 4.0
    circ = st.Geometry(g.positions[keep])
    m_az = pattern_metrics(st.Array(circ, F, taper=tapers.bayliss_circular(circ, 5, 30.0)),
                           beam_kind="difference_az")
    el = st.Array(circ, F, taper=tapers.bayliss_circular(circ, 5, 30.0, phi_deg=90.0))
    m_el = pattern_metrics(el, beam_kind="difference_el")
    assert m_az.boresight_null_db < -100 and m_el.boresight_null_db < -100
    for key in ("difference_peak_dbi", "difference_sidelobe_db", "monopulse_slope_per_deg"):
        assert getattr(m_el, key) == pytest.approx(getattr(m_az, key), rel=1e-6, abs=1e-6)
    with pytest.raises(SteradianError, match="no difference lobe along x"):
        pattern_metrics(el, beam_kind="difference_az")
