"""Array figures with coupling: active reflection over scan, realized gain, the uncoupled
limit, maximum realized gain weights, the [coupling] design table, analyze and the demo.

Outside references: realized gain = D x (accepted / available power) (IEEE Std 145-2013
definitions; Pozar, "The active element pattern", IEEE TAP 42(8), 1994); active reflection
Gamma_m = sum_n S_mn a_n / a_m (Hansen, *Phased Array Antennas*, 2nd ed., ch. 7); the
Rayleigh-quotient maximum of |b^T a|^2 / |a|^2 (Cauchy-Schwarz), checked against random
excitations.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from steradian.analysis import analyze
from steradian.array import Array, Steering
from steradian.cli import main
from steradian.coupling import (
    coupled_beam_weights,
    coupled_summary,
    coupling_spec,
    dipole_coupling,
    max_realized_gain_weights,
    realized_gain_toward,
    scan_excitations,
    scan_map,
    scattering_coupling,
)
from steradian.directions import Directions, unit_vectors_deg
from steradian.elements import CosinePower, Dipole
from steradian.errors import DesignError
from steradian.geometry import rectangular
from steradian.io.design import design_from_dict, load_design
from steradian.radiation import directivity
from steradian.units import C0
from steradian.workflows import analyze_design

DEMO = Path(__file__).resolve().parent.parent / "configs" / "relay_mast_coupled_dipoles.toml"


def panel(n=4, length=0.47):
    return Array(rectangular(n, n, 0.5, 0.5), C0, Dipole(length, "x", C0))


def test_zero_coupling_is_todays_analysis():
    """S = 0 with identical (isolated) patterns: active VSWR 1 everywhere, accepted power
    = available power, and the realized gain equals the uncoupled analysis exactly (same
    peak) and the directivity toward every scan direction (to 1e-8: the power matrix and
    radiated_power use rules of different size)."""
    arr = Array(rectangular(5, 4, 0.012, 0.014), 10e9, CosinePower(1.5),
                taper=np.linspace(0.5, 1, 20), steering=Steering(20, 30))
    c = scattering_coupling(np.zeros((20, 20)), 50.0, frequency=10e9)
    res = analyze(arr)
    spec = coupling_spec({"model": "dipole"}, wavelength=0.03, base_dir=Path("."))
    s = coupled_summary(arr, c, spec, peak=res.peak)
    d = s["design_excitation"]
    assert d["realized_gain_dbi"] == res.realized_gain_dbi
    assert d["worst_active_vswr"] == 1.0 and d["accepted_fraction"] == 1.0
    th, ph = np.array([0.0, 20, 40, 55]), np.array([0.0, 30, 90, 200])
    m = scan_map(arr, c, th, ph)
    assert np.all(m.worst_vswr == 1.0) and np.all(m.mismatch == 1.0)
    for i in range(4):
        steered = arr.with_steering(Steering(th[i], ph[i]))
        d_ref = float(directivity(steered, Directions.from_angles(th[i], ph[i])).ravel()[0])
        assert 10 ** (m.realized_gain_dbi[i] / 10) == pytest.approx(d_ref, rel=1e-8)


def test_active_reflection_definition_over_scan():
    """Gamma_m(theta0, phi0) = sum_n S_mn a_n / a_m, by an explicit loop (Hansen ch. 7)."""
    arr = panel(3)
    c = dipole_coupling(arr, radius=0.003, z0=73.0)
    th, ph = np.array([0.0, 30, 60]), np.array([0.0, 45, 90])
    m = scan_map(arr, c, th, ph)
    a = scan_excitations(arr, th, ph)
    for k in range(3):
        for i in range(9):
            ref = sum(c.S[i, j] * a[j, k] for j in range(9)) / a[i, k]
            assert m.gamma[i, k] == pytest.approx(ref, abs=1e-14)
        g = np.abs(m.gamma[:, k]).max()
        assert m.worst_vswr[k] == pytest.approx((1 + g) / (1 - g))


def test_realized_gain_is_directivity_times_mismatch_for_embedded_patterns():
    """With embedded patterns, 4 pi U / P_avail (the model's physical scale) equals
    D(current array) x a^H (I - S^H S) a / a^H a (lossless balance; IEEE 145 definitions)."""
    arr = panel(4)
    c = dipole_coupling(arr, radius=0.003, z0=50.0)
    th, ph = np.array([10.0, 45]), np.array([0.0, 90])
    a = scan_excitations(arr, th, ph)
    g = realized_gain_toward(arr, c, a, unit_vectors_deg(th, ph))
    for k in range(2):
        cur = Array(arr.geometry, C0, arr.element, taper=c.currents @ a[:, k])
        d = float(directivity(cur, Directions.from_angles(th[k], ph[k])).ravel()[0])
        frac = (np.sum(np.abs(a[:, k]) ** 2) - np.sum(np.abs(c.S @ a[:, k]) ** 2)) / np.sum(
            np.abs(a[:, k]) ** 2)
        assert g[k] == pytest.approx(d * frac, rel=1e-9)


def test_max_realized_gain_weights_are_optimal():
    """The closed-form weights reach the largest eigenvalue (Cauchy-Schwarz): their realized
    gain equals the reported maximum and no random or steered excitation beats it."""
    arr = panel(4)
    c = dipole_coupling(arr, radius=0.003, z0=73.0)
    v = unit_vectors_deg(np.array([0.0, 40, 65]), np.array([0.0, 90, 30]))
    w, gmax = max_realized_gain_weights(arr, c, v)
    assert np.allclose(realized_gain_toward(arr, c, w, v), gmax, rtol=1e-10)
    rng = np.random.default_rng(5)
    for k in range(3):
        a = rng.normal(size=(16, 200)) + 1j * rng.normal(size=(16, 200))
        g = realized_gain_toward(arr, c, a, np.repeat(v[k:k + 1], 200, axis=0))
        assert g.max() <= gmax[k] * (1 + 1e-12)


def test_demo_active_vswr_rises_and_coupling_aware_taper_wins():
    """Acceptance: the demo panel's worst active VSWR rises toward wide scan in both principal
    planes, and the coupling-aware weights beat the uniform taper and the uncoupled optimum
    at the edge of scan (70 degrees)."""
    s = analyze_design(load_design(DEMO))["coupling"]
    assert s["design_excitation"]["power_balance_relative_error"] < 1e-9
    for phi in (0.0, 90.0):
        rows = [r for r in s["scan"] if r["phi_deg"] == phi]
        assert rows[-1]["theta_deg"] == 70
        assert rows[-1]["worst_active_vswr"] > 2.5 * rows[0]["worst_active_vswr"]
        edge = rows[-1]
        assert edge["max_realized_gain_dbi"] > edge["realized_gain_dbi"]
        assert edge["max_realized_gain_dbi"] > edge["uncoupled_optimum_realized_gain_dbi"] + 1
    h = [r for r in s["scan"] if r["phi_deg"] == 90.0][-1]
    assert h["max_realized_gain_dbi"] - h["realized_gain_dbi"] > 0.5


DESIGN = {
    "design": {"name": "t", "frequency_hz": 3e8},
    "geometry": {"kind": "rectangular", "count_x": 3, "count_y": 2, "spacing_x": 0.5,
                 "spacing_y": 0.5, "units": "wavelength"},
    "element": {"model": "dipole", "length_wl": 0.48, "axis": "x"},
    "analysis": {"metrics": False},
}


def design(**coupling):
    return design_from_dict({**DESIGN, "coupling": coupling}, "t.toml", base_dir=Path("."))


@pytest.mark.parametrize("table, key, words", [
    ({"model": "dipole", "radius_wll": 0.01}, "coupling.radius_wll", "radius_wl"),
    ({"model": "dipol"}, "coupling.model", "dipole"),
    ({"model": "dipole", "z0_ohm": "fifty"}, "coupling.z0_ohm", "number"),
    ({"model": "dipole", "z0_ohm": -5}, "coupling.z0_ohm", "positive"),
    ({"model": "dipole", "scan_theta_max_deg": 95}, "coupling.scan_theta_max_deg", "90"),
    ({"model": "dipole", "ports": [1, 2]}, "coupling.ports", "touchstone"),
    ({"model": "touchstone", "file": "missing.s6p"}, "coupling.file", "not found"),
])
def test_coupling_table_errors(table, key, words):
    """Unknown keys get the closest valid one; wrong types and ranges name the key."""
    with pytest.raises(DesignError) as e:
        analyze_design(design(**table))
    assert e.value.key == key and words in str(e.value)


def test_cli_analyze_json_has_coupling(tmp_path):
    """``analyze --json`` carries the coupling block; the table shows the scan rows."""
    r = CliRunner().invoke(main, ["analyze", str(DEMO), "--json"])
    assert r.exit_code == 0, r.output
    c = json.loads(r.output)["coupling"]
    assert c["model"] == "dipole" and len(c["scan"]) == 16
    assert c["self_impedance_ohm"][0] == pytest.approx(73.08, abs=0.01)
    r = CliRunner().invoke(main, ["analyze", str(DEMO)])
    assert r.exit_code == 0 and "scan 70/90 deg" in r.output and "active match" in r.output


def test_max_realized_gain_respects_the_mask():
    """A disabled element is a terminated port: zero incident wave, and the optimum over the
    others still beats random excitations of the others (Cauchy-Schwarz)."""
    arr = panel(4)
    mask = np.ones(16, bool)
    mask[[0, 5]] = False
    arr_m = Array(arr.geometry, C0, arr.element, enabled=mask)
    c = dipole_coupling(arr, radius=0.003, z0=73.0)
    v = unit_vectors_deg(np.array([30.0]), np.array([90.0]))
    w, g = max_realized_gain_weights(arr_m, c, v)
    assert np.all(w[~mask] == 0)
    a = np.random.default_rng(2).normal(size=(16, 100)) * mask[:, None] + 0j
    assert realized_gain_toward(arr, c, a, np.repeat(v, 100, axis=0)).max() <= g[0]
    f = coupled_beam_weights(arr_m, c)
    assert np.allclose(f(30.0, 90.0), w[:, 0] / np.abs(w[:, 0]).max())


BEAMS = """
[channel]
phase_bits = 6
attenuator_step_db = 0.5
attenuator_span_db = 31.5

[beams]
grid = "theta_phi"
theta_deg = [0, 40]
phi_deg = [0, 90]
"""


def test_beam_table_from_coupled_weights(tmp_path):
    """``[coupling] beam_weights = "max_realized_gain"``: ``beams`` writes the coupling-aware
    weights of every beam and ``verify`` rebuilds the same table (exit 0); the states differ
    from the taper's table."""
    text = DEMO.read_text().replace("count_x = 8", "count_x = 4").replace(
        "count_y = 8", "count_y = 4") + BEAMS
    (tmp_path / "taper.toml").write_text(text)
    (tmp_path / "coupled.toml").write_text(text.replace(
        "scan_phi_deg = [0, 90]", 'scan_phi_deg = [0, 90]\nbeam_weights = "max_realized_gain"'))
    runner = CliRunner()
    for name in ("taper", "coupled"):
        r = runner.invoke(main, ["beams", str(tmp_path / f"{name}.toml"), "-o",
                                 str(tmp_path / name), "--format", "json"])
        assert r.exit_code == 0, r.output
        r = runner.invoke(main, ["verify", str(tmp_path / f"{name}.toml"),
                                 str(tmp_path / f"{name}.json")])
        assert r.exit_code == 0, r.output
    a = json.loads((tmp_path / "taper.json").read_text())
    b = json.loads((tmp_path / "coupled.json").read_text())
    assert a["beams"] != b["beams"]


def test_beam_weights_need_embedded_patterns():
    with pytest.raises(DesignError) as e:
        analyze_design(design(model="touchstone", file=str(DEMO),
                              beam_weights="max_realized_gain"))
    assert e.value.key == "coupling.beam_weights"
