"""``[requirements]``: PASS/FAIL verdicts with value, limit, margin and worst beam in
``analyze``, ``beams`` and ``verify``; exit codes 0 / 1 / 2; the beam-table power rows."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from click.testing import CliRunner
from scipy.optimize import brentq, minimize_scalar

from steradian.cli import main
from steradian.errors import DesignError
from steradian.io.design import design_from_dict
from steradian.radiation import RF_EXPOSURE_CAUTION
from steradian.requirements import (
    FAIL,
    NOT_EVALUATED,
    PASS,
    REQUIREMENTS,
    grating_clearance,
    judge_analysis,
    requirements_from_table,
)
from steradian.workflows import analyze_design

N = 16

LINE = """
[design]
name = "req_line"
frequency_hz = 1.0e10

[geometry]
kind = "linear"
units = "wavelength"
count = {n}
spacing = {d}

[element]
model = "isotropic"
{extra}
"""

CHANNEL = """
[channel]
phase_bits = 3
attenuator_step_db = 0.5
attenuator_span_db = 31.5

[beams]
grid = "theta_phi"
theta_deg = {thetas}
phi_deg = [0.0]
"""


def _uniform_af2(psi, n=N):
    """|AF|^2 / N^2 of a uniform line, psi = k d cos(angle from the axis) (Balanis 6.3)."""
    return (np.sin(n * psi / 2) / (n * np.sin(psi / 2))) ** 2


def _uniform_psl_db(n=N) -> float:
    """First sidelobe of the uniform line, found between its first two nulls 2pi/n, 4pi/n
    (scipy as reference optimizer; tends to -13.26 dB for large n, Balanis 6.3)."""
    r = minimize_scalar(lambda p: -_uniform_af2(p, n), bounds=(2 * np.pi / n * 1.0001,
                        4 * np.pi / n * 0.9999), method="bounded", options={"xatol": 1e-12})
    return 10 * np.log10(-r.fun)


def _uniform_hpbw_deg(n=N) -> float:
    """Half-power beamwidth of the broadside half-wave uniform line: |AF|^2 = 1/2 at psi_h,
    psi = pi sin(angle from broadside) (Balanis 6.3; brentq as reference root finder)."""
    ph = brentq(lambda p: _uniform_af2(p, n) - 0.5, 1e-9, 2 * np.pi / n)
    return 2 * np.degrees(np.arcsin(ph / np.pi))


def _write(tmp_path, extra="", n=N, d=0.5, name="d.toml"):
    p = tmp_path / name
    p.write_text(LINE.format(n=n, d=d, extra=extra))
    return p


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def _limits(values: dict, margin: float) -> str:
    """``[requirements]`` lines whose limits leave ``margin`` (positive = pass) to each value:
    a minimum's limit below the value, a maximum's above it."""
    return "".join(f"{k} = {float(v) - margin if k.startswith('min') else float(v) + margin!r}\n"
                   for k, v in values.items())


def _verdicts(out: str) -> dict:
    return {v["key"]: v for v in json.loads(out)["requirements"]["verdicts"]}


# --------------------------------------------------------------------------------------------
# analyze
# --------------------------------------------------------------------------------------------
def _analyze(tmp_path, req: str, steering="", analysis="", *args):
    p = _write(tmp_path, extra=steering + analysis + "\n[requirements]\n" + req)
    return _run("analyze", p, "--json", *args)


def test_uniform_line_psl_directivity_gain_hpbw_pass_and_fail(tmp_path):
    """Uniform half-wave line of 16 isotropic elements: D = N exactly (Balanis 6.10 / Hansen,
    half-wave spacing), G = xi D, first sidelobe and HPBW from the array factor solved with
    scipy (the sidelobe tends to -13.26 dB, Balanis 6.3). Each limit 0.05 either side of the
    independent value: PASS with margin +0.05, FAIL with margin -0.05."""
    psl, hpbw = _uniform_psl_db(), _uniform_hpbw_deg()
    assert abs(psl + 13.26) < 0.15  # Balanis' large-N value, for N = 16
    d_dbi = 10 * math.log10(N)
    g_dbi = d_dbi + 10 * math.log10(0.5)
    truth = {"min_directivity_dbi": d_dbi, "min_gain_dbi": g_dbi, "max_psl_db": psl,
             "max_hpbw_deg": hpbw}
    analysis = "\n[analysis]\nradiation_efficiency = 0.5\n"
    for sign, status in ((1, PASS), (-1, FAIL)):
        # a passing limit lies below a minimum's value and above a maximum's
        req = _limits(truth, sign * 0.05)
        r = _analyze(tmp_path, req, "", analysis)
        assert r.exit_code == (0 if status == PASS else 1), r.output
        got = _verdicts(r.output)
        assert list(got) == [k for k in REQUIREMENTS if k in truth]  # registry order
        for k, v in truth.items():
            assert got[k]["status"] == status, got[k]
            assert got[k]["value"] == pytest.approx(v, abs=2e-3), k
            assert got[k]["margin"] == pytest.approx(sign * 0.05, abs=2e-3), k
            assert got[k]["worst_beam"] is None


def test_pointing_error_against_the_squint_formula(tmp_path):
    """Phase steering evaluated at f = 1.1 f0 squints to sin(theta) = (f0/f) sin(theta0)
    (common practice; Mailloux ch. 1): a 30 deg beam lands at 27.036 deg."""
    squint = 30.0 - math.degrees(math.asin(0.5 / 1.1))
    steer = "\n[steering]\ntheta_deg = 30.0\nphi_deg = 0.0\n"
    for limit, code in ((squint + 0.01, 0), (squint - 0.01, 1)):
        r = _analyze(tmp_path, f"max_pointing_error_deg = {limit}\n", steer, "",
                     "--frequency", "1.1e10")
        assert r.exit_code == code, r.output
        v = _verdicts(r.output)["max_pointing_error_deg"]
        assert v["value"] == pytest.approx(squint, abs=1e-3)
        assert v["margin"] == pytest.approx(limit - squint, abs=1e-3)


def test_grating_lobe_requirements_against_the_line_formula(tmp_path):
    """Line of spacing d: grating-lobe free while sin(theta0) < lambda/d - 1 (Mailloux ch. 2):
    0.7 lambda gives 25.38 deg. A beam at 20 deg has its nearest grating lobe at
    |sin 20 - 1/0.7| = 1.0866 (PASS), at 30 deg at 0.9286 (visible: FAIL)."""
    free = math.degrees(math.asin(1 / 0.7 - 1))
    for theta, code in ((20.0, 0), (30.0, 1)):
        steer = f"\n[steering]\ntheta_deg = {theta}\nphi_deg = 0.0\n"
        req = f"no_grating_lobe_in_scan = true\ngrating_lobe_free_scan_deg = {free - 0.01}\n"
        p = _write(tmp_path, extra=steer + "\n[requirements]\n" + req, d=0.7)
        r = _run("analyze", p, "--json")
        assert r.exit_code == code, r.output
        got = _verdicts(r.output)
        near = abs(math.sin(math.radians(theta)) - 1 / 0.7)
        assert got["no_grating_lobe_in_scan"]["value"] == pytest.approx(near, abs=1e-9)
        assert got["no_grating_lobe_in_scan"]["margin"] == pytest.approx(near - 1, abs=1e-9)
        assert got["no_grating_lobe_in_scan"]["status"] == (PASS if code == 0 else FAIL)
        assert got["grating_lobe_free_scan_deg"]["value"] == pytest.approx(free, abs=1e-9)
        assert got["grating_lobe_free_scan_deg"]["status"] == PASS
    r = _run("analyze", _write(tmp_path, extra="\n[requirements]\ngrating_lobe_free_scan_deg "
                               f"= {free + 0.01}\n", d=0.7), "--json")
    assert r.exit_code == 1
    assert _verdicts(r.output)["grating_lobe_free_scan_deg"]["margin"] == pytest.approx(
        -0.01, abs=1e-9)


def test_grating_clearance_of_a_square_lattice():
    """Square lattice of spacing d: reciprocal vectors x/d, y/d; at broadside the nearest
    grating lobe is at lambda/d, scanned to u0 along x at lambda/d - u0 (Mailloux ch. 2)."""
    lat = np.array([[0.6, 0, 0], [0, 0.6, 0]])
    u = np.array([[0, 0, 1.0], [0.5, 0, math.sqrt(0.75)]])
    near, free = grating_clearance(lat, 1.0, u)
    assert near == pytest.approx([1 / 0.6, 1 / 0.6 - 0.5], abs=1e-12)
    assert free == pytest.approx(math.degrees(math.asin(1 / 0.6 - 1)), abs=1e-9)


def test_analyze_reports_what_it_does_not_measure_and_passes(tmp_path):
    """max_qlobe_db / max_loss_db need a quantized table, max_pointing_error_deg a steering
    direction, min_eirp_dbw element_power_w: "not evaluated" with the reason, exit 0."""
    req = ("max_qlobe_db = -100\nmax_loss_db = 0\nmax_drive_loss_db = 0\n"
           "max_pointing_error_deg = 0\nmin_eirp_dbw = 1000\n")
    r = _analyze(tmp_path, req)
    assert r.exit_code == 0, r.output
    got = _verdicts(r.output)
    assert {v["status"] for v in got.values()} == {NOT_EVALUATED}
    assert "quantized" in got["max_qlobe_db"]["note"]
    assert "[steering]" in got["max_pointing_error_deg"]["note"]
    assert "element_power_w" in got["min_eirp_dbw"]["note"]
    assert json.loads(r.output)["requirements"]["met"] is True
    text = _run("analyze", _write(tmp_path, extra="\n[requirements]\n" + req))
    assert text.exit_code == 0
    assert "--    max_qlobe_db" in text.output and "not evaluated here:" in text.output


def test_analyze_eirp_requirement(tmp_path):
    """EIRP = P_in G (common practice): 16 channels of 0.5 W into D = 16 gives
    10 log10(8) + 10 log10(16) dBW; printed with the RF exposure caution."""
    eirp = 10 * math.log10(8.0) + 10 * math.log10(16)
    analysis = "\n[analysis]\nelement_power_w = 0.5\n"
    r = _analyze(tmp_path, f"min_eirp_dbw = {eirp + 0.01}\n", "", analysis)
    assert r.exit_code == 1
    v = _verdicts(r.output)["min_eirp_dbw"]
    assert v["value"] == pytest.approx(eirp, abs=1e-6) and v["status"] == FAIL
    text = _run("analyze", _write(tmp_path, extra=analysis + f"\n[requirements]\nmin_eirp_dbw "
                                  f"= {eirp - 0.01}\n"))
    assert text.exit_code == 0
    assert RF_EXPOSURE_CAUTION in text.output and "PASS  min_eirp_dbw" in text.output


def test_analyze_table_prints_one_line_per_requirement(tmp_path):
    """The text report: a requirements block, one PASS/FAIL line each with value, limit and
    margin (common practice for verification reports)."""
    p = _write(tmp_path, extra="\n[requirements]\nmax_psl_db = -14.0\nmin_directivity_dbi = "
               "10.0\n")
    r = _run("analyze", p)
    assert r.exit_code == 1
    lines = r.output.splitlines()
    i = next(i for i, ln in enumerate(lines) if ln.startswith("requirements:"))
    assert lines[i] == "requirements: 1 FAIL, 1 PASS"
    assert lines[i + 2].startswith("PASS  min_directivity_dbi")
    assert lines[i + 3].startswith("FAIL  max_psl_db")
    assert "limit -14.000 dB, margin -0.8" in lines[i + 3]


# --------------------------------------------------------------------------------------------
# Bad tables: exit 2, one line, the key named
# --------------------------------------------------------------------------------------------
@pytest.mark.parametrize("req, key, words", [
    ("max_psl = -20\n", "requirements.max_psl", "did you mean 'max_psl_db'"),
    ("min_gain_dbi = 'high'\n", "requirements.min_gain_dbi", "must be a number"),
    ("no_grating_lobe_in_scan = 1\n", "requirements.no_grating_lobe_in_scan", "true or false"),
    ("max_pointing_error_deg = -1\n", "requirements.max_pointing_error_deg", "zero or positive"),
    ("grating_lobe_free_scan_deg = 95\n", "requirements.grating_lobe_free_scan_deg",
     "at most 90"),
    ("max_psl_db = 20\n", "requirements.max_psl_db", "at most 0 dB"),
    ("[requirements.max_qlobe_db]\n", "requirements.max_qlobe_db", "must be a number"),
])
def test_bad_requirements_exit_2_naming_the_key(tmp_path, req, key, words):
    """Unknown keys with the closest valid one, wrong types, out-of-range limits (common
    practice: refuse, do not guess)."""
    p = _write(tmp_path, extra="\n[requirements]\n" + req + CHANNEL.format(thetas="[0.0]"))
    for cmd in ("analyze", "beams"):
        args = [cmd, p] + (["-o", tmp_path / "t"] if cmd == "beams" else [])
        r = _run(*args)
        assert r.exit_code == 2, r.output
        err = r.output.strip().splitlines()
        assert len(err) == 1 and err[0].startswith("steradian: error:")
        assert key in err[0] and words in err[0]
    assert not list(tmp_path.glob("t.*"))  # refused before anything is written


def test_requirements_from_table_api():
    """The Python reader: keys in registry order, false flags dropped, DesignError.key."""
    got = requirements_from_table({"no_grating_lobe_in_scan": False, "max_psl_db": -20,
                                   "min_gain_dbi": 3})
    assert got == {"min_gain_dbi": 3.0, "max_psl_db": -20.0}
    assert list(REQUIREMENTS)[0] == "min_gain_dbi"
    with pytest.raises(DesignError) as e:
        requirements_from_table({"max_qlobe": -20}, "x.toml")
    assert e.value.key == "requirements.max_qlobe"
    d = design_from_dict({"design": {"frequency_hz": 1e9}, "geometry": {
        "kind": "linear", "units": "wavelength", "count": 4, "spacing": 0.5},
        "requirements": {"max_psl_db": 0.0}})
    out = analyze_design(d)
    assert out["requirements"]["met"] is True
    assert list(out)[-1] == "requirements"


# --------------------------------------------------------------------------------------------
# beams and verify
# --------------------------------------------------------------------------------------------
def _table_design(tmp_path, req, thetas="[0.0, 20.0, 40.0]", analysis=""):
    return _write(tmp_path, extra=analysis + CHANNEL.format(thetas=thetas)
                  + "\n[requirements]\n" + req)


def test_beams_worst_beam_pass_and_fail(tmp_path):
    """Each beam-table requirement is judged on its worst beam: the lowest gain, the highest
    PSL, quantization lobe, pointing error and loss (the per-beam columns of the same run)."""
    keys = {"min_gain_dbi": "gain_dbi", "max_psl_db": "psl_db", "max_qlobe_db": "qlobe_db",
            "max_pointing_error_deg": "pointing_error_deg", "max_loss_db": "loss_db",
            "min_directivity_dbi": "directivity_dbi"}
    p = _table_design(tmp_path, "max_psl_db = 0.0\n")
    base = _run("beams", p, "-o", tmp_path / "b", "--json")
    assert base.exit_code == 0, base.output
    rows = json.loads(base.output)["beams"]
    worst = {}
    for k, col in keys.items():
        vals = [r[col] for r in rows]
        i = int(np.argmin(vals) if k.startswith("min") else np.argmax(vals))
        worst[k] = (i, vals[i])
    for sign, code in ((1, 0), (-1, 1)):
        req = _limits({k: v for k, (_, v) in worst.items()}, sign * 0.01)
        p = _table_design(tmp_path, req)
        r = _run("beams", p, "-o", tmp_path / "b", "--json")
        assert r.exit_code == code, r.output
        got = _verdicts(r.output)
        for k, (i, v) in worst.items():
            assert got[k]["worst_beam"] == i, k
            assert got[k]["value"] == pytest.approx(v, abs=1e-12), k
            assert got[k]["margin"] == pytest.approx(sign * 0.01, abs=1e-9), k
            assert got[k]["status"] == (PASS if code == 0 else FAIL)
    assert (tmp_path / "b.bin").is_file()  # written even on FAIL, for inspection


def test_beams_grating_lobe_in_the_scan(tmp_path):
    """A 0.7 lambda line is free to 25.4 deg (Mailloux ch. 2): a table scanned to 40 deg has
    a visible grating lobe at its last beam, |sin 40 - 1/0.7| = 0.786."""
    p = _write(tmp_path, d=0.7, extra=CHANNEL.format(thetas="[0.0, 20.0, 40.0]")
               + "\n[requirements]\nno_grating_lobe_in_scan = true\nmax_hpbw_deg = 1.0\n")
    r = _run("beams", p, "-o", tmp_path / "g", "--json")
    assert r.exit_code == 1, r.output
    got = _verdicts(r.output)
    v = got["no_grating_lobe_in_scan"]
    assert v["status"] == FAIL and v["worst_beam"] == 2
    assert v["value"] == pytest.approx(abs(math.sin(math.radians(40)) - 1 / 0.7), abs=1e-9)
    assert got["max_hpbw_deg"]["status"] == NOT_EVALUATED


def test_beams_power_rows_eirp_caution_and_notes(tmp_path):
    """The beam table's power figures in the terminal: drive loss, radiated power and EIRP
    (EIRP = P_in G, common practice: one broadside beam of 16 channels of 0.5 W at full drive
    into D = 16), the RF exposure caution, and the build's notes as note: lines."""
    analysis = "\n[analysis]\nelement_power_w = 0.5\n"
    eirp = 10 * math.log10(8.0) + 10 * math.log10(16)
    p = _table_design(tmp_path, f"min_eirp_dbw = {eirp - 0.01}\n", "[0.0]", analysis)
    r = _run("beams", p, "-o", tmp_path / "e")
    assert r.exit_code == 0, r.output
    assert "drive loss" in r.output and "radiated power" in r.output
    assert f"EIRP               lowest {eirp:.2f} dBW (beam 0)" in r.output
    assert RF_EXPOSURE_CAUTION in r.output
    assert "PASS  min_eirp_dbw" in r.output
    j = _run("beams", p, "-o", tmp_path / "e", "--json")
    out = json.loads(j.output)
    assert out["rf_exposure_caution"] == RF_EXPOSURE_CAUTION
    assert out["summary"]["eirp_dbw_min"] == pytest.approx(eirp, abs=1e-9)
    # A phase-only channel that drops a Taylor taper says so in a note: line.
    tap = tmp_path / "tap.toml"
    tap.write_text(LINE.format(n=N, d=0.5, extra="""
[taper]
kind = "taylor"
nbar = 4
sll = 30.0

[channel]
phase_bits = 4
drop_taper = true

[beams]
grid = "theta_phi"
theta_deg = [0.0]
phi_deg = [0.0]
"""))
    r = _run("beams", tap, "-o", tmp_path / "n")
    assert r.exit_code == 0, r.output
    assert "note: amplitude taper dropped" in r.output
    assert "EIRP" not in r.output  # no element_power_w: no EIRP row, no caution
    assert json.loads(_run("beams", tap, "-o", tmp_path / "n", "--json").output)["notes"]


def test_verify_judges_the_files_beams(tmp_path):
    """verify applies the same requirements to the file's re-evaluated beams: exit 0 when
    they pass, 1 when one fails although the file matches the design."""
    p = _table_design(tmp_path, "max_psl_db = 0.0\n")
    assert _run("beams", p, "-o", tmp_path / "v").exit_code == 0
    r = _run("verify", p, tmp_path / "v.bin", "--json")
    assert r.exit_code == 0, r.output
    out = json.loads(r.output)
    assert out["ok"] and out["requirements"]["met"] and out["matches_design"]
    strict = _table_design(tmp_path, "max_psl_db = -40.0\nmax_hpbw_deg = 1.0\n")
    r = _run("verify", strict, tmp_path / "v.bin", "--json")
    assert r.exit_code == 1, r.output
    out = json.loads(r.output)
    assert out["matches_design"] and not out["ok"] and not out["requirements"]["met"]
    got = _verdicts(r.output)
    assert got["max_psl_db"]["status"] == FAIL
    assert got["max_hpbw_deg"]["status"] == NOT_EVALUATED
    text = _run("verify", strict, tmp_path / "v.bin")
    assert text.exit_code == 1 and "FAIL  max_psl_db" in text.output


def test_difference_beam_psl_is_its_difference_sidelobe_level():
    """A difference beam's twin lobes are its main lobe (Bayliss 1968): max_psl_db judges its
    difference sidelobe level, not a 0 dB "sidelobe" (issue 9 item 7; a synthetic summary)."""
    d = design_from_dict({"design": {"frequency_hz": 1e9}, "geometry": {
        "kind": "linear", "units": "wavelength", "count": 4, "spacing": 0.5}})
    summary = {"gain_dbi": 5.0, "peak_directivity_dbi": 5.0, "frequency_hz": 1e9,
               "metrics": {"beam_kind": "difference_az", "psl_db": 0.0,
                           "difference_sidelobe_db": -25.0}}
    (v,) = judge_analysis({"max_psl_db": -20.0}, summary, d.array)
    assert v.status == PASS and v.value == -25.0 and v.margin == 5.0
    summary["metrics"]["beam_kind"] = "sum"
    (v,) = judge_analysis({"max_psl_db": -20.0}, summary, d.array)
    assert v.status == FAIL and v.value == 0.0
