"""Command line: synth and tradeoff (help, exit codes, parsed --json, files written and read
back by the analysis, one-line errors). Reference values: the directivity N of a half-wave
uniform line (closed form, common practice) and scipy.signal.windows.chebwin."""

from __future__ import annotations

import json
import math
import textwrap
import warnings
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner
from scipy.signal.windows import chebwin

from steradian.cli import COMMANDS, SHORT_HELP, main
from steradian.io.design import load_design
from steradian.io.weights_csv import read_weights, read_weights_table
from steradian.workflows import analyze_design

C0 = 299_792_458.0
CONFIG = Path(__file__).resolve().parent.parent / "configs" / "glacier_radar_synth.toml"

LINE = """
[design]
name = "cli_line"
frequency_hz = {f}

[geometry]
kind = "linear"
units = "wavelength"
count = 16
spacing = 0.5

[steering]
theta_deg = 20.0
phi_deg = 0.0
{extra}
"""


def _design(tmp_path, extra="", name="line.toml"):
    p = tmp_path / name
    p.write_text(textwrap.dedent(LINE.format(f=C0, extra=extra)))
    return p


def _run(args):
    return CliRunner().invoke(main, args, catch_exceptions=False)


def test_commands_registered_and_help():
    """Both commands are in the lazy registry with a short help, and --help works."""
    for name in ("synth", "tradeoff"):
        assert name in COMMANDS and SHORT_HELP[name]
        r = _run([name, "--help"])
        assert r.exit_code == 0 and "DESIGN.toml" in r.output


def test_synth_example_design_writes_weights_the_analysis_reads_back(tmp_path):
    """The example design's [synthesis] runs; the weights file (taper, steered by the
    design's [steering]) read back through [taper] file = ... reproduces the directivity."""
    out = tmp_path / "w.csv"
    r = _run(["synth", str(CONFIG), "-o", str(out), "--json"])
    assert r.exit_code == 0, r.output
    s = json.loads(r.output)
    assert s["method"] == "max_directivity" and s["met"] and s["limit_db"] == -28.0
    assert s["psl_db"] <= -28 + 0.01 and s["symmetry"] == "quadrant"
    assert max(s["null_depths_db"]) < -100
    assert s["steering_included"] is False
    table = read_weights_table(out, 144)
    assert table.meta["method"] == "max_directivity"
    assert np.allclose(table.weights.imag, 0) and np.all(table.weights.real >= -1e-12)
    text = CONFIG.read_text().split("[synthesis]")[0]
    text += f'\n[taper]\nfile = "{out.as_posix()}"\n'
    back = tmp_path / "back.toml"
    back.write_text(text)
    d = load_design(back)
    a = analyze_design(d)
    assert a["peak_directivity_dbi"] == pytest.approx(s["peak_directivity_dbi"], abs=2e-3)


def test_synth_options_override_and_dolph_optimum(tmp_path):
    """Options override the design: at -30 dB with the Chebyshev first-null zone, a
    broadside half-wave line's optimum weights are Dolph-Chebyshev's (chebwin)."""
    p = tmp_path / "bs.toml"
    p.write_text(textwrap.dedent(LINE.format(f=C0, extra="")).replace(
        "theta_deg = 20.0", "theta_deg = 0.0"))
    from steradian.optimize import chebyshev_null

    h = chebyshev_null(10 ** -1.5, 16, 0.5)
    out = tmp_path / "w.csv"
    r = _run(["synth", str(p), "-o", str(out), "--psl-db", "-30", "--mainlobe", repr(h)])
    assert r.exit_code == 0, r.output
    assert "peak sidelobe" in r.output and "met" in r.output
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)
        ref = chebwin(16, 30)
    w = np.abs(read_weights(out, 16))
    assert np.allclose(w / w.max(), ref, atol=3e-3)


def test_synth_unconstrained_is_n_and_steered_output(tmp_path):
    """No targets: closed form, directivity N (10 log10 16 dBi); --steered writes the
    excitations with the steering phases."""
    p = _design(tmp_path)
    out = tmp_path / "w.csv"
    r = _run(["synth", str(p), "-o", str(out), "--steered", "--json"])
    assert r.exit_code == 0, r.output
    s = json.loads(r.output)
    assert s["method"] == "closed_form" and s["steering_included"] is True
    assert s["directivity_dbi"] == pytest.approx(10 * math.log10(16), abs=1e-6)
    w = read_weights(out, 16)
    x = (np.arange(16) - 7.5) * 0.5
    np.testing.assert_allclose(w * np.exp(2j * np.pi * x * math.sin(math.radians(20))),
                               np.ones(16) * w[0] * np.exp(2j * np.pi * x[0] * math.sin(
                                   math.radians(20))), atol=1e-6)


def test_synth_errors_are_one_line(tmp_path):
    """Bad keys, values and infeasible targets: exit 2, one line naming the key or cause."""
    p = _design(tmp_path, "[synthesis]\npsl_bd = -30.0\n")
    r = CliRunner().invoke(main, ["synth", str(p), "-o", str(tmp_path / "w.csv")])
    assert r.exit_code == 2
    assert "synthesis.psl_bd" in r.output and "did you mean 'psl_db'" in r.output
    assert r.output.count("\n") == 1 and "Traceback" not in r.output
    p = _design(tmp_path, '[synthesis]\nmethod = "maximum"\n', "m.toml")
    r = CliRunner().invoke(main, ["synth", str(p), "-o", str(tmp_path / "w.csv")])
    assert r.exit_code == 2 and "synthesis.method" in r.output
    p = _design(tmp_path, "", "g.toml")
    r = CliRunner().invoke(main, ["synth", str(p), "-o", str(tmp_path / "w.csv"),
                                  "--psl-db", "-45", "--mainlobe", "0.05"])
    assert r.exit_code == 2 and "infeasible" in r.output and "main-lobe zone" in r.output
    r = CliRunner().invoke(main, ["synth", str(p), "-o", str(tmp_path / "w.csv"),
                                  "--null", "40,x"])
    assert r.exit_code == 2 and "THETA,PHI" in r.output
    assert not (tmp_path / "w.csv").exists()


def test_tradeoff_command_writes_table_figure_and_csv(tmp_path):
    """The trade curve: --json rows, a PNG and a CSV; the first (loosest) level loses the
    least directivity against the unconstrained N."""
    p = _design(tmp_path, "[synthesis]\nweights = \"amplitude\"\n[synthesis.tradeoff]\n"
                          "start_db = -15.0\nstop_db = -35.0\npoints = 4\n")
    png, csv = tmp_path / "t.png", tmp_path / "t.csv"
    r = _run(["tradeoff", str(p), "-o", str(png), "--csv", str(csv), "--json"])
    assert r.exit_code == 0, r.output
    s = json.loads(r.output)
    assert s["max_directivity_dbi"] == pytest.approx(10 * math.log10(16), abs=1e-3)
    assert [row["limit_db"] for row in s["rows"]] == pytest.approx([-15, -21.6667, -28.3333,
                                                                    -35], abs=1e-3)
    losses = [row["loss_db"] for row in s["rows"]]
    assert losses == sorted(losses) and losses[0] > 0
    assert png.read_bytes()[:4] == b"\x89PNG" and len(csv.read_text().splitlines()) == 5
    r = _run(["tradeoff", str(p), "--points", "3"])
    assert r.exit_code == 0 and "knee" in r.output
    bad = _design(tmp_path, "[synthesis.tradeoff]\npoints = 3\nstrat_db = -10.0\n", "b.toml")
    r = CliRunner().invoke(main, ["tradeoff", str(bad)])
    assert r.exit_code == 2 and "synthesis.tradeoff.strat_db" in r.output
