"""Beam kinds in a beam table (issue 9, "a table may hold both kinds per direction"): sum and
monopulse difference beams per direction, carried by every weight format.

The difference beams are the comparator differences of a monopulse array: the sum weights
with the sign flipped on one half of the aperture (common practice; S. M. Sherman and D. K.
Barton, Monopulse Principles and Techniques, 2nd ed., Artech House, 2011 -- from memory).
"""

from __future__ import annotations

import struct
import zlib

import numpy as np
import pytest

from steradian.beamtable import BEAM_KINDS, BeamTable
from steradian.errors import FileFormatError, SteradianError
from steradian.io.beams_bin import HEADER_SIZE, write_beams_bin
from steradian.io.formats import WEIGHT_FORMATS, read_weight_file, write_weight_file
from steradian.quantize import OFF_CODE, ChannelModel

SUFFIXES = tuple(f.suffix for f in WEIGHT_FORMATS.values())
MIXED = ("sum", "difference_az", "difference_el", "sum", "difference_el", "difference_az")


def _table(n=7, nb=6, enc="codes", kinds=MIXED, off=(2,)):
    sm = ChannelModel.build(phase_bits=6, attenuator_step_db=0.5, attenuator_span_db=31.5,
                            ).states
    rng = np.random.default_rng(3)
    codes = np.stack([rng.integers(0, 64, (nb, n)), rng.integers(0, 64, (nb, n))], -1)
    on = np.ones(n, bool)
    on[list(off)] = False
    codes[:, ~on] = OFF_CODE
    t = BeamTable(sm, np.column_stack([np.arange(nb) * 5.0, np.zeros(nb)]), codes, "codes",
                  rng.uniform(0, 5.625, n), rng.normal(size=(n, 3)), {"design": "kinds"},
                  enabled=on, kinds=kinds)
    return t.as_encoding(enc)


def test_default_kind_is_sum_and_bad_kinds_are_refused():
    t = _table(kinds=None)
    assert t.beam_kinds == ("sum",) * 6 and not t.has_difference
    assert BEAM_KINDS == ("sum", "difference_az", "difference_el")
    with pytest.raises(SteradianError, match="beam 1: kind 'delta'"):
        _table(kinds=("sum", "delta", "sum", "sum", "sum", "sum"))
    with pytest.raises(SteradianError, match="one per beam"):
        _table(kinds=("sum",))
    assert not _table().same_weights(_table(kinds=None))


@pytest.mark.parametrize("suffix", SUFFIXES)
@pytest.mark.parametrize("enc", ["codes", "iq"])
def test_mixed_kinds_round_trip_in_every_format(tmp_path, suffix, enc):
    """Every registered weight format carries the per-beam kind bit-exactly."""
    t = _table(enc=enc)
    p = tmp_path / f"w{suffix}"
    write_weight_file(p, t)
    back = read_weight_file(p)
    assert back.beam_kinds == MIXED
    assert back.same_weights(t)


@pytest.mark.parametrize("suffix", SUFFIXES)
def test_sum_only_tables_keep_the_layout_2_files(tmp_path, suffix):
    """A table of sum beams only is written as before (layout 2): old readers still read it."""
    t = _table(kinds=None)
    p = tmp_path / f"w{suffix}"
    write_weight_file(p, t)
    if suffix == ".bin":
        assert struct.unpack_from("<H", p.read_bytes(), 8)[0] == 2
    else:
        text = p.read_text()
        assert "layout_version = 3" not in text and '"layout_version": 3' not in text
        assert "WEIGHTS_LAYOUT 3" not in text
    assert read_weight_file(p).beam_kinds == ("sum",) * 6


def test_binary_kind_block_as_documented(tmp_path):
    """Layout 3: flag bit 3 and B kind bytes (0 sum, 1 difference_az, 2 difference_el),
    padded to a multiple of 8, right after the enable mask."""
    t = _table()
    p = tmp_path / "w.bin"
    write_beams_bin(p, t)
    data = p.read_bytes()
    ver = struct.unpack_from("<H", data, 8)[0]
    n, nb = struct.unpack_from("<II", data, 12)
    flags = data[22]
    assert ver == 3 and flags & 8 and flags & 4
    o = HEADER_SIZE + 16 * nb + (24 * n if flags & 1 else 0) + (8 * n if flags & 2 else 0)
    o += 8 * ((n + 7) // 8)
    kinds = data[o:o + 8 * ((nb + 7) // 8)]
    assert list(kinds[:nb]) == [BEAM_KINDS.index(k) for k in MIXED]
    assert not any(kinds[nb:])
    assert len(data) == o + len(kinds) + 4 * nb * n
    with pytest.raises(SteradianError, match="write version 3"):
        write_beams_bin(tmp_path / "v2.bin", t, layout_version=2)
    # a kind byte out of range is refused in one line (CRC fixed so only the byte is wrong)
    bad = bytearray(data)
    bad[o] = 7
    payload = bytes(bad[HEADER_SIZE:])
    struct.pack_into("<I", bad, 52, zlib.crc32(payload))
    struct.pack_into("<I", bad, 60, zlib.crc32(bytes(bad[:60])))
    (tmp_path / "bad.bin").write_bytes(bytes(bad))
    with pytest.raises(FileFormatError, match="beam kind bytes"):
        read_weight_file(tmp_path / "bad.bin")


def test_c_header_has_the_beam_kind_array(tmp_path):
    t = _table()
    p = tmp_path / "w.h"
    write_weight_file(p, t)
    text = p.read_text()
    assert "#define STRD_WEIGHTS_LAYOUT 3" in text
    assert "static const uint8_t strd_beam_kind[STRD_N_BEAMS]" in text
    assert "#define STRD_BEAM_KIND_DIFFERENCE_EL 2" in text
    body = text.split("strd_beam_kind[STRD_N_BEAMS] = {")[1].split("};")[0]
    vals = [int(v) for v in body.split("*/")[-1].replace(",", " ").split()]
    assert vals == [0, 1, 2, 0, 2, 1]


DESIGN = """
[design]
name = "monopulse table"
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
x = {{ kind = "taylor", sll = 30 }}
y = {{ kind = "taylor", sll = 30 }}

[channel]
phase_bits = 6
attenuator_step_db = 0.5
attenuator_span_db = 31.5

[beams]
grid = "theta_phi"
theta_deg = [0, 20]
phi_deg = [0]
{kinds}
"""


def _design(tmp_path, kinds='kinds = ["sum", "difference_az", "difference_el"]'):
    from steradian.io.design import load_design

    p = tmp_path / "d.toml"
    p.write_text(DESIGN.format(kinds=kinds))
    return load_design(p)


def _difference_psl_reference(n=16, sll=30.0):
    """Highest lobe outside the two main lobes of the split Taylor line (x-cut), by a dense
    direct array-factor sum (numpy; 0.5 lambda spacing, isotropic elements)."""
    from steradian.tapers import taylor

    w = taylor(n, 4, sll)
    x = (np.arange(n) - (n - 1) / 2) * 0.5
    w = w * np.sign(x)
    u = np.linspace(0, 1, 200001)
    af = np.abs(np.exp(2j * np.pi * np.outer(u, x)) @ w) ** 2
    pk = np.flatnonzero((af[1:-1] > af[:-2]) & (af[1:-1] >= af[2:])) + 1
    lv = np.sort(af[pk])[::-1]
    return 10 * np.log10(lv[1] / lv[0])  # lv[0]: the main lobe (u > 0 side)


def test_design_table_holds_every_kind_per_direction(tmp_path):
    """[beams] kinds: direction-major, kind-minor; the difference weights are the sum
    weights with one half of the aperture negated (common practice; Sherman and Barton,
    Monopulse Principles and Techniques, 2011, from memory)."""
    from steradian.workflows import beam_table_from_design

    d = _design(tmp_path)
    b = beam_table_from_design(d)
    t = b.table
    assert t.beam_kinds == ("sum", "difference_az", "difference_el") * 2
    assert np.allclose(t.directions, [[0, 0]] * 3 + [[20, 0]] * 3)
    pos = d.array.positions
    cx, cy = pos[:, 0].mean(), pos[:, 1].mean()
    for i in (0, 3):
        assert np.allclose(b.ideal[i + 1], b.ideal[i] * np.sign(pos[:, 0] - cx))
        assert np.allclose(b.ideal[i + 2], b.ideal[i] * np.sign(pos[:, 1] - cy))
    m = b.metrics
    assert np.isnan(m.null_depth_db[[0, 3]]).all()
    # ideal difference weights are odd: an exact boresight null (Bayliss 1968)
    assert m.null_depth_db[1] < -60 and m.null_depth_db[2] < -60
    # a difference beam's pointing error is its null's offset: none for the ideal odd
    # weights (symmetry), a tenth of a degree at most after 6-bit quantization
    assert np.all(m.ideal_pointing_error_deg[[1, 2, 4, 5]] < 1e-6)
    assert np.all(m.pointing_error_deg[[1, 2, 4, 5]] < 0.2)
    assert np.isnan(m.monopulse_slope_per_deg[[0, 3]]).all()
    assert np.all(m.monopulse_slope_per_deg[[1, 2, 4, 5]] > 0)
    assert m.pointing_error_deg[0] < 0.01
    # difference sidelobe level: separable taper, so the x-cut of the split Taylor line
    # (the y factor's sidelobes are 30 dB down) -- checked against a dense numpy sum
    ref = _difference_psl_reference()
    assert abs(m.ideal_psl_db[1] - ref) < 0.1
    assert m.psl_db[0] < -28  # the sum beams keep their sum metrics


def test_design_kinds_key_is_checked(tmp_path):
    from steradian.errors import DesignError
    from steradian.workflows import beam_table_from_design

    with pytest.raises(DesignError, match="beams.kinds"):
        beam_table_from_design(_design(tmp_path, 'kinds = ["sum", "delta"]'))
    with pytest.raises(DesignError, match="beams.kinds"):
        beam_table_from_design(_design(tmp_path, 'kinds = ["sum", "sum"]'))


@pytest.mark.parametrize("suffix", SUFFIXES)
def test_verify_compares_the_beam_kinds(tmp_path, suffix):
    """A file whose beam has another kind than the design's is a difference line."""
    from dataclasses import replace

    from steradian.workflows import beam_table_from_design, verify_weight_file

    d = _design(tmp_path)
    t = beam_table_from_design(d).table
    good = tmp_path / f"good{suffix}"
    write_weight_file(good, t)
    _, v = verify_weight_file(d, good)
    assert v.matches_design, v.mismatches
    assert np.isfinite(v.metrics.null_depth_db[1])
    k = list(t.beam_kinds)
    k[3], k[4] = "difference_az", "sum"  # swap the kinds of two beams of direction 20 deg
    bad = tmp_path / f"bad{suffix}"
    write_weight_file(bad, replace(t, kinds=tuple(k), metrics=None))
    _, v = verify_weight_file(d, bad)
    assert v.first_difference == ("beam 3 (theta 20.0, phi 0.0): file has kind "
                                  "difference_az, design gives sum")


def test_cli_builds_and_verifies_a_mixed_table(tmp_path):
    """`steradian beams` writes the mixed table (every format) and reports the shallowest
    difference null; `steradian verify` accepts its files (exit 0)."""
    from click.testing import CliRunner

    from steradian.cli import main

    p = tmp_path / "d.toml"
    p.write_text(DESIGN.format(kinds='kinds = ["sum", "difference_el"]'))
    r = CliRunner().invoke(main, ["beams", str(p), "-o", str(tmp_path / "t")])
    assert r.exit_code == 0, r.output
    assert "difference null" in r.output
    for suffix in SUFFIXES:
        assert read_weight_file(tmp_path / f"t{suffix}").beam_kinds == (
            "sum", "difference_el") * 2
        v = CliRunner().invoke(main, ["verify", str(p), str(tmp_path / f"t{suffix}")])
        assert v.exit_code == 0, v.output


def test_difference_signs_on_axis_zero_and_no_extent_refused():
    """Elements exactly on the axis get 0; a line with no extent in y has no elevation
    difference beam (refused in one line, not a 'radiates no power')."""
    from steradian.beamtable import difference_signs

    pos = np.array([[-1.0, 0, 0], [0.0, 0, 0], [1.0, 0, 0]])
    assert difference_signs(pos, "difference_az").tolist() == [-1.0, 0.0, 1.0]
    assert difference_signs(pos, "sum").tolist() == [1.0, 1.0, 1.0]
    with pytest.raises(SteradianError, match="no extent in y"):
        difference_signs(pos, "difference_el")


def test_mixed_table_reports_sum_and_difference_sidelobes_apart(tmp_path):
    """A mixed table's worst peak sidelobe and the [requirements] max_psl_db judge the sum
    beams only; the difference beams' sidelobe level is reported on its own (common
    practice: sum and difference patterns have separate sidelobe specifications)."""
    from steradian.requirements import judge_beams, requirements_from_table
    from steradian.workflows import beam_table_from_design

    d = _design(tmp_path)
    m = beam_table_from_design(d).metrics
    s = m.summary()
    psl = np.asarray(m.psl_db, float)
    diff = np.isfinite(np.asarray(m.null_depth_db, float))
    assert s["psl_db_max"] == pytest.approx(np.max(psl[~diff]))
    assert s["difference_sll_db_max"] == pytest.approx(np.max(psl[diff]))
    assert s["psl_db_max_beam"] in np.flatnonzero(~diff)
    (v,) = judge_beams(requirements_from_table({"max_psl_db": -25.0}), m, d.array)
    assert v.value == pytest.approx(np.max(psl[~diff])) and not v.failed


@pytest.mark.parametrize("theta", [0.0, 30.0])
def test_table_difference_null_and_monopulse_slope_match_the_first_moment(theta):
    """A table's difference beam gets the analysis's null offset and monopulse slope (one
    null search, steradian.metrics.difference_null): for isotropic elements on a half-wave
    line the difference slope is k |sum w_n x_n| cos(theta0) / sqrt(sum |w_n|^2) per radian
    (the aperture's first moment; derived in tests/test_difference_beams.py, common
    practice), the monopulse slope that over sqrt(N) (Sherman and Barton, Monopulse
    Principles and Techniques, 2011); the null sits on the commanded direction. Checked
    against the formula to 1e-6 and against pattern_metrics of the same weights."""
    import steradian as st
    from steradian import tapers
    from steradian.beamtable import BeamEvaluator
    from steradian.metrics import pattern_metrics

    n = 24
    x = (np.arange(n) - (n - 1) / 2) * 0.5
    w = tapers.bayliss(n, 5, 30.0).astype(complex)
    arr = st.Array(st.linear(n, 0.5), st.C0)
    a = st.Array(st.linear(n, 0.5), st.C0, taper=w,
                 steering=st.Steering(theta, 0.0) if theta else None)
    m = BeamEvaluator(arr).evaluate(a.weights()[None, :], [[theta, 0.0]],
                                    kinds=["difference_az"])
    k = 2 * np.pi
    ref = (k * abs(np.sum(w.real * x)) * np.cos(np.radians(theta))
           / np.sqrt(np.sum(np.abs(w) ** 2)) * np.pi / 180 / np.sqrt(n))
    assert m.monopulse_slope_per_deg[0] == pytest.approx(ref, rel=1e-6)
    assert m.pointing_error_deg[0] < 1e-6
    pm = pattern_metrics(a, beam_kind="difference_az")
    assert m.monopulse_slope_per_deg[0] == pytest.approx(pm.monopulse_slope_per_deg, rel=1e-6)


def test_table_difference_null_offset_follows_a_tilted_difference():
    """A difference beam whose two halves are driven 8.6 deg apart in phase has its null off the
    commanded direction; the table reports the offset the analysis measures for the same
    weights (pointing error of a difference beam = its null's angle from the steering
    direction, steradian.metrics)."""
    import steradian as st
    from steradian.beamtable import BeamEvaluator
    from steradian.metrics import pattern_metrics

    n = 16
    x = (np.arange(n) - (n - 1) / 2)
    w = np.sign(x) * np.where(x > 0, np.exp(0.15j), 1.0)
    arr = st.Array(st.linear(n, 0.5), st.C0)
    m = BeamEvaluator(arr).evaluate(w[None, :], [[0.0, 0.0]], kinds=["difference_az"])
    pm = pattern_metrics(st.Array(st.linear(n, 0.5), st.C0, taper=w,
                                  steering=st.Steering(0.0, 0.0)), beam_kind="difference_az")
    assert m.pointing_error_deg[0] > 0.1
    assert m.pointing_error_deg[0] == pytest.approx(pm.pointing_error_deg, abs=1e-4)
