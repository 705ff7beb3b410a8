"""Command line: demo, analyze, pattern (exit codes, parsed --json, one-line errors).

Reference values come from outside the package: the closed-form array factor of a uniform
line, |sin(N x)/(N sin x)| with x = (k d / 2) sin(theta) (C. A. Balanis, Antenna Theory,
4th ed., 2016, eq. 6-10), solved with scipy.optimize; the aperture directivity
4 pi A cos(theta0) / lambda^2 (common practice).
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
import textwrap

import numpy as np
import pytest
from click.testing import CliRunner
from scipy.optimize import brentq, minimize_scalar

from steradian.cli import COMMANDS, main
from steradian.io.pattern_csv import read_cuts, read_uv

C0 = 299_792_458.0

PANEL = """
[design]
name = "cli_panel"
frequency_hz = {f}

[geometry]
kind = "rectangular"
units = "wavelength"
count_x = 12
count_y = 12
spacing_x = 0.5
spacing_y = 0.5

[element]
model = "cosine_power"
q = 1.0

[steering]
theta_deg = {theta}
phi_deg = 0.0

[analysis]
radiation_efficiency = 0.8
vswr = 1.5
"""


def _panel(tmp_path, theta=0.0, name="panel.toml", f=C0):
    p = tmp_path / name
    p.write_text(PANEL.format(theta=theta, f=f))
    return p


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


@pytest.fixture(scope="module")
def broadside_json(tmp_path_factory):
    p = _panel(tmp_path_factory.mktemp("cli"))
    r = _run("analyze", p, "--json")
    assert r.exit_code == 0, r.output + r.stderr
    return json.loads(r.stdout)


def _af2(u, n=12):
    """|AF|^2 / N^2 of a uniform half-wave line at u = sin(theta) (Balanis eq. 6-10)."""
    x = 0.5 * math.pi * u
    if abs(math.sin(x)) < 1e-15:
        return 1.0
    return (math.sin(n * x) / (n * math.sin(x))) ** 2


def _power_cut(theta):
    """Principal-cut power of the 12 x 12 panel with a cos(theta) power element."""
    return _af2(math.sin(theta)) * math.cos(theta)


def test_analyze_json_beamwidths_and_sidelobe_against_closed_form(broadside_json):
    """HPBW from brentq on the closed-form cut; PSL from minimize_scalar over the first
    sidelobe (the highest for a uniform panel, common practice); both planes are the same cut
    for a square panel at broadside."""
    m = broadside_json["metrics"]
    t_hp = brentq(lambda t: _power_cut(t) - 0.5, 1e-6, 0.2)
    hpbw = 2 * math.degrees(t_hp)
    assert m["hpbw_deg"]["phi_plane"] == pytest.approx(hpbw, abs=1e-3)
    assert m["hpbw_deg"]["cross_plane"] == pytest.approx(hpbw, abs=1e-3)
    # first null at sin(theta) = 1/6 (N d = 6 wavelengths), first sidelobe just beyond
    t_null = math.asin(1 / 6)
    res = minimize_scalar(lambda t: -_power_cut(t), bounds=(t_null, math.asin(2 / 6)),
                          method="bounded", options={"xatol": 1e-10})
    psl = 10 * math.log10(-res.fun)
    assert m["psl_db"] == pytest.approx(psl, abs=2e-3)
    assert math.degrees(res.x) == pytest.approx(m["psl_theta_deg"], abs=0.05)


def test_analyze_json_directivity_gain_and_error(broadside_json):
    """Peak D near 4 pi A / lambda^2 (A = 36 lambda^2, within 0.4 dB, common practice) at
    broadside; gain = D + 10 log10(0.8); realized gain adds 10 log10(1 - 0.2^2) for VSWR 1.5
    (IEEE Std 145-2013 definitions); the integrator's error estimate is reported and small."""
    s = broadside_json
    assert s["n_elements"] == 144
    assert abs(s["peak_directivity_dbi"] - 10 * math.log10(4 * math.pi * 36)) < 0.4
    assert s["peak_theta_deg"] == pytest.approx(0.0, abs=1e-3)
    assert s["gain_dbi"] == pytest.approx(s["peak_directivity_dbi"] + 10 * math.log10(0.8),
                                          abs=1e-9)
    assert s["realized_gain_dbi"] == pytest.approx(s["gain_dbi"] + 10 * math.log10(0.96),
                                                   abs=1e-9)
    assert 0 <= s["integrator_error_estimate"] < 1e-8
    assert s["radiated_power"]["method"] == "quadrature"
    assert s["design"]["name"] == "cli_panel"


def test_analyze_json_steered_and_frequency_override(tmp_path):
    """Steered 25 deg: peak near theta0, D near 4 pi A cos(theta0) / lambda^2 (common
    practice, 0.4 dB). --frequency 1.05 f0 with phase steering: the beam squints toward
    broadside, sin(theta) = sin(theta0) f0 / f (common practice)."""
    p = _panel(tmp_path, theta=25.0)
    s = json.loads(_run("analyze", p, "--json").stdout)
    assert s["peak_theta_deg"] == pytest.approx(25.0, abs=0.5)
    assert s["peak_phi_deg"] == pytest.approx(0.0, abs=1e-3)
    ref = 10 * math.log10(4 * math.pi * 36 * math.cos(math.radians(25)))
    assert abs(s["peak_directivity_dbi"] - ref) < 0.4
    r = _run("analyze", p, "--json", "--frequency", 1.05 * C0)
    assert r.exit_code == 0, r.stderr
    s2 = json.loads(r.stdout)
    assert s2["frequency_hz"] == pytest.approx(1.05 * C0)
    squint = math.degrees(math.asin(math.sin(math.radians(25)) / 1.05))
    assert s2["metrics"]["beam_theta_deg"] == pytest.approx(squint, abs=0.6)
    assert s2["metrics"]["beam_theta_deg"] < s["metrics"]["beam_theta_deg"]


def test_analyze_table(tmp_path):
    """The human table names the key results."""
    r = _run("analyze", _panel(tmp_path))
    assert r.exit_code == 0, r.stderr
    for word in ("peak directivity", "dBi", "HPBW", "peak sidelobe", "integrator",
                 "realized gain"):
        assert word in r.stdout


@pytest.mark.parametrize("cmd", sorted(COMMANDS))
def test_every_command_has_help(cmd):
    """--help of every registered command exits 0 and shows its usage."""
    r = _run(cmd, "--help")
    assert r.exit_code == 0, r.output
    assert "Usage:" in r.output and cmd in r.output


def test_root_help_lists_commands():
    r = _run("--help")
    assert r.exit_code == 0
    for c in ("demo", "analyze", "pattern"):
        assert c in r.output


BAD = {
    "misspelled": (("spacing_x = 0.5", "spacng_x = 0.5"), "geometry.spacng_x",
                   "did you mean 'spacing_x'"),
    "wrong_type": (("count_x = 12", 'count_x = "twelve"'), "geometry.count_x", "whole number"),
    "negative_spacing": (("spacing_y = 0.5", "spacing_y = -0.5"), "geometry.spacing_y",
                         "positive"),
    "below_horizon": (("theta_deg = 0.0", "theta_deg = 95.0"), "steering.theta_deg", "horizon"),
    "nan": (("vswr = 1.5", "vswr = nan"), "analysis.vswr", "finite"),
}


@pytest.mark.parametrize("case", sorted(BAD))
def test_bad_design_exits_2_with_one_line_naming_the_key(tmp_path, case):
    """Bad designs: exit code 2, one line on stderr naming the key and the file, no
    traceback."""
    (old, new), key, words = BAD[case]
    p = tmp_path / "bad.toml"
    text = PANEL.format(theta=0.0, f=C0)
    assert old in text
    p.write_text(text.replace(old, new, 1))
    for args in (("analyze", p), ("pattern", p, "--cuts", tmp_path / "c.csv")):
        r = _run(*args)
        assert r.exit_code == 2, r.output
        err = r.stderr.strip()
        assert "\n" not in err and "Traceback" not in err
        assert key in err and words in err and str(p) in err
    assert not (tmp_path / "c.csv").exists()


def test_unreadable_positions_csv_names_its_line(tmp_path):
    """A positions CSV with a bad row: exit 2, the CSV path and line number on stderr."""
    (tmp_path / "pos.csv").write_text("# layout\nx_m,y_m\n0,0\n0.1,0\n0.2,abc\n")
    p = tmp_path / "d.toml"
    p.write_text(textwrap.dedent("""
        [design]
        frequency_hz = 1e9
        [geometry]
        kind = "csv"
        file = "pos.csv"
        """))
    r = _run("analyze", p, "--json")
    assert r.exit_code == 2
    err = r.stderr.strip()
    assert "\n" not in err
    assert f"{tmp_path / 'pos.csv'}:5:" in err and "'y_m'" in err


def test_missing_design_file_exits_2(tmp_path):
    r = _run("analyze", tmp_path / "nope.toml")
    assert r.exit_code == 2
    assert "nope.toml" in r.stderr and "\n" not in r.stderr.strip()


def test_pattern_writes_cuts_uv_and_png(tmp_path):
    """pattern: the cuts CSV peaks at the analysed peak directivity (within 1e-3 dB, the cut
    passes through the refined peak); the u-v CSV never exceeds it."""
    p = _panel(tmp_path, theta=20.0)
    cuts, uv, png = tmp_path / "c.csv", tmp_path / "uv.csv", tmp_path / "c.png"
    r = _run("pattern", p, "--cuts", cuts, "--uv", uv, "--uv-points", 61, "--png", png,
             "--json")
    assert r.exit_code == 0, r.stderr
    res = json.loads(r.stdout)
    assert sorted(res["files"]) == sorted(map(str, (cuts, uv, png)))
    cc = read_cuts(cuts)
    assert [c.name for c in cc] == ["phi_plane", "cross_plane"]
    for c in cc:
        assert c.directivity_dbi.max() == pytest.approx(res["peak_directivity_dbi"], abs=1e-3)
        assert len(c.angle_deg) == 721
    m = read_uv(uv)
    assert m.directivity_dbi.shape == (61, 61)
    assert np.nanmax(m.directivity_dbi) <= res["peak_directivity_dbi"] + 1e-9
    assert png.read_bytes()[:4] == b"\x89PNG"


def test_pattern_needs_an_output(tmp_path):
    r = _run("pattern", _panel(tmp_path))
    assert r.exit_code == 2
    assert "at least one output" in r.output


def test_demo_writes_png_and_json(tmp_path):
    """demo: summary table on stdout, cut and u-v PNGs and a JSON summary whose peak
    directivity is near eta_t 4 pi A cos(30 deg) / lambda^2 for the bundled 16 x 16 half-wave
    panel, eta_t = |sum w|^2 / (N sum |w|^2) the taper efficiency of its separable Taylor
    taper (scipy.signal.windows.taylor; both formulas common practice, within 0.3 dB), and
    whose sidelobes sit near the 30 dB design level."""
    from scipy.signal.windows import taylor

    out = tmp_path / "out"
    r = _run("demo", "--out", out)
    assert r.exit_code == 0, r.stderr
    assert "peak directivity" in r.stdout
    files = sorted(f.name for f in out.iterdir())
    assert files == ["demo_panel_cuts.png", "demo_panel_summary.json", "demo_panel_uv.png"]
    s = json.loads((out / "demo_panel_summary.json").read_text())
    w = np.outer(taylor(16, nbar=5, sll=30), taylor(16, nbar=5, sll=30)).ravel()
    eta = w.sum() ** 2 / (w.size * (w**2).sum())
    ref = 10 * math.log10(eta * 4 * math.pi * 64 * math.cos(math.radians(30)))
    assert abs(s["peak_directivity_dbi"] - ref) < 0.3
    assert -31.0 < s["metrics"]["psl_db"] < -27.0
    assert s["metrics"]["hpbw_deg"]["phi_plane"] > s["metrics"]["hpbw_deg"]["cross_plane"]


def test_help_does_not_import_numba_or_matplotlib():
    """`steradian --help` and `steradian analyze --help` stay light: no numba, no matplotlib
    in sys.modules (checked in a fresh interpreter)."""
    code = textwrap.dedent("""
        import sys
        from steradian.cli import main
        for args in (["--help"], ["analyze", "--help"], ["pattern", "--help"],
                     ["demo", "--help"]):
            try:
                main(args, standalone_mode=False)
            except SystemExit:
                pass
        print("HEAVY", sorted(m for m in ("numba", "matplotlib") if m in sys.modules))
        """)
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                       timeout=120)
    assert r.returncode == 0, r.stderr
    assert "HEAVY []" in r.stdout


def test_analyze_frequency_unit_slip_is_refused(tmp_path):
    """Issue 9 item 13: --frequency 28 (meant GHz) on a 28 GHz design analysed at 28 Hz with
    exit 0 before; more than 100x from the design frequency is refused in one line naming
    the frequency, exit 2 (unit slips are factors of 1000 or more: common practice). pattern
    --frequency takes the same rule."""
    p = _panel(tmp_path, f=28e9)
    r = _run("analyze", p, "--frequency", 28)
    assert r.exit_code == 2 and r.stderr.count("\n") == 1 and "Traceback" not in r.stderr
    assert "frequency = 28 Hz" in r.stderr and "times below the design frequency" in r.stderr
    r = _run("pattern", p, "--frequency", 28, "--cuts", tmp_path / "c.csv")
    assert r.exit_code == 2 and "frequency = 28 Hz" in r.stderr


def test_units_slip_warns_on_stderr_in_one_line(tmp_path):
    """Issue 9 item 13: units = "m" with spacings meant in wavelengths (0.55 m at 28 GHz is
    51.4 wavelengths, lambda = c0 / f: common practice) ran silently; the CLI now prints one
    "steradian: warning:" line naming the key and its value in wavelengths, then runs."""
    text = PANEL.format(theta=0.0, f=28e9).replace('units = "wavelength"', 'units = "m"')
    text = text.replace("count_x = 12", "count_x = 2").replace("count_y = 12", "count_y = 2")
    p = tmp_path / "m.toml"
    p.write_text(text.replace("= 0.5\n", "= 0.55\n"))
    r = _run("analyze", p, "--json")
    assert r.exit_code == 0, r.stderr
    lines = r.stderr.splitlines()
    assert len(lines) == 1 and lines[0].startswith("steradian: warning: geometry.spacing_x ")
    assert f"{0.55 * 28e9 / C0:.4g} wavelengths" in lines[0]
    json.loads(r.stdout)
