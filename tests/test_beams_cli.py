"""``steradian beams`` and ``steradian verify``: exit codes, JSON output, clear errors."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from steradian.cli import main
from steradian.io.formats import WEIGHT_FORMATS

CONFIGS = Path(__file__).resolve().parent.parent / "configs"

DESIGN = """
[design]
name = "cli_tile"
frequency_hz = 299792458.0

[geometry]
kind = "rectangular"
units = "wavelength"
count_x = {nx}
count_y = {nx}
spacing_x = 0.5
spacing_y = 0.5

[element]
model = "cosine_power"
q = 1.0

[analysis]
radiation_efficiency = 0.5
{extra}
"""

CHANNEL = """
[channel]
phase_bits = 5
attenuator_step_db = 0.5
attenuator_span_db = 15.5
phase_offsets = "random"
offset_seed = 4

[beams]
grid = "theta_phi"
theta_deg = [0, 20]
phi_deg = [0, 90]
"""


def _design(tmp_path, name="d.toml", nx=6, extra=CHANNEL):
    p = tmp_path / name
    p.write_text(DESIGN.format(nx=nx, extra=extra))
    return p


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("beams")
    design = _design(tmp)
    res = _run("beams", design, "-o", tmp / "tile", "--bin-encoding", "iq", "--json")
    return tmp, design, res


def test_help():
    for cmd in ("beams", "verify"):
        r = _run(cmd, "--help")
        assert r.exit_code == 0 and "DESIGN.toml" in r.output
    r = _run("--help")
    assert "beams" in r.output and "verify" in r.output


def test_beams_writes_every_format(built):
    tmp, _, res = built
    assert res.exit_code == 0, res.output
    out = json.loads(res.output)
    assert set(out["files"]) == set(WEIGHT_FORMATS)  # every registered format
    assert all(Path(p).is_file() for p in out["files"].values())
    assert out["summary"]["beams"] == 3 and len(out["beams"]) == 3
    b = out["beams"][0]
    # Gain = efficiency x directivity (analysis.radiation_efficiency = 0.5).
    assert b["gain_dbi"] == pytest.approx(b["directivity_dbi"] - 3.0103, abs=1e-4)
    assert out["channel"]["states"]["phase_states"] == 32


@pytest.mark.parametrize("suffix", [".csv", ".json", ".bin", ".h"])
def test_verify_each_file(built, suffix):
    tmp, design, res = built
    r = _run("verify", design, tmp / f"tile{suffix}", "--json")
    assert r.exit_code == 0, r.output
    out = json.loads(r.output)
    assert out["ok"] is True
    built_beams = json.loads(res.output)["beams"]
    tol = 1e-12 if suffix != ".bin" else 1e-3  # the binary holds Q1.15 I/Q
    for a, b in zip(out["beams"], built_beams, strict=True):
        assert a["directivity_dbi"] == pytest.approx(b["directivity_dbi"], abs=tol)
        assert a["psl_db"] == pytest.approx(b["psl_db"], abs=tol)
    assert out["encoding"] == ("iq" if suffix == ".bin" else "codes")
    human = _run("verify", design, tmp / f"tile{suffix}")
    assert human.exit_code == 0 and "quantization lobe" in human.output


def test_verify_flags_an_edited_file(built, tmp_path):
    tmp, design, _ = built
    doc = json.loads((tmp / "tile.json").read_text())
    codes = doc["beams"][1]["phase_code"]
    doc["beams"][1]["phase_code"] = [(c + 8) % 32 if i < 18 else c
                                     for i, c in enumerate(codes)]
    p = tmp_path / "edited.json"
    p.write_text(json.dumps(doc))
    r = _run("verify", design, p, "--json")
    assert r.exit_code == 1
    out = json.loads(r.output)
    assert out["ok"] is False and out["matches_design"] is False
    assert out["first_difference"].startswith("beam 1 (theta 20.0, phi 0.0), element 0: file "
                                              "has phase code ")
    assert out["compared"]["elements_differing"] == 18


def test_errors_are_one_line_exit_2(built, tmp_path):
    tmp, _, _ = built
    r = CliRunner().invoke(main, ["beams", str(_design(tmp_path, "a.toml", extra=""))])
    assert r.exit_code == 2 and "channel: the design has no [channel] table" in r.output
    bad = CHANNEL.replace("phase_bits", "phase_bitz")
    r = CliRunner().invoke(main, ["beams", str(_design(tmp_path, "b.toml", extra=bad))])
    assert r.exit_code == 2 and "channel.phase_bitz" in r.output
    assert "did you mean 'phase_bits'" in r.output and "Traceback" not in r.output
    small = _design(tmp_path, "c.toml", nx=5)
    r = CliRunner().invoke(main, ["verify", str(small), str(tmp / "tile.bin")])
    assert r.exit_code == 2
    assert "holds 36 weights per beam but the design has 25 elements" in r.output
    doc = json.loads((tmp / "tile.json").read_text())
    doc["beams"][2]["phase_code"][4] = 40
    p = tmp_path / "range.json"
    p.write_text(json.dumps(doc))
    r = CliRunner().invoke(main, ["verify", str(tmp_path / "missing.toml"), str(p)])
    assert r.exit_code == 2 and "missing.toml" in r.output
    r = CliRunner().invoke(main, ["verify", str(built[1]), str(p)])
    assert r.exit_code == 2
    assert "phase code 40 at beam 2, element 4 is out of range 0..31" in r.output


def test_example_design(tmp_path):
    """The example 16 x 16 tile in configs/ builds its 231-beam table."""
    r = _run("beams", CONFIGS / "balloon_downlink_tile.toml", "-o", tmp_path / "tile",
             "-f", "bin", "--json")
    assert r.exit_code == 0, r.output
    out = json.loads(r.output)
    assert out["summary"]["beams"] == 231 and list(out["files"]) == ["bin"]
    assert out["summary"]["loss_db_max"] < 0.05
    assert out["summary"]["qlobe_db_max"] < -30
    r = _run("verify", CONFIGS / "balloon_downlink_tile.toml", tmp_path / "tile.bin", "--json")
    assert r.exit_code == 0, r.output
    out = json.loads(r.output)
    assert out["matches_design"] and out["compared"]["directions"] and out["compared"]["states"]


def test_output_with_a_format_suffix_writes_that_file(tmp_path):
    """`-o out/tile.bin` writes out/tile.bin (and its manifest), not tile.bin.csv and three
    more; verify then matches it."""
    r = _run("beams", CONFIGS / "balloon_downlink_tile.toml", "-o", tmp_path / "tile.bin", "--json")
    assert r.exit_code == 0, r.output
    assert json.loads(r.output)["files"] == {"bin": str(tmp_path / "tile.bin")}
    assert sorted(p.name for p in tmp_path.iterdir()) == ["tile.bin", "tile.manifest.json"]
    r = _run("verify", CONFIGS / "balloon_downlink_tile.toml", tmp_path / "tile.bin")
    assert r.exit_code == 0, r.output
