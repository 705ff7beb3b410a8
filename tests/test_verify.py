"""``steradian verify`` decides: a well-formed but tampered weight file exits 1.

Issue 9, item 12: verify re-evaluated a file and printed, but accepted with exit 0 a binary
rewritten with valid CRCs after adding 180 deg to 3 of 6 elements of beam 0, with two beam
directions swapped or with 2 of 3 beams dropped, and JSON files with swapped, renumbered,
dropped or duplicated beams. Each case below is such a file, written with the project's own
writers (so CRCs and counts are valid); each exited 0 before the comparison with the
rebuilt table. Comparing a delivered table against the reference it was built from, state
by state and in firmware beam order, before loading it is common practice.
"""

from __future__ import annotations

import json
from dataclasses import replace

import numpy as np
import pytest
from click.testing import CliRunner

import steradian as st
from steradian.cli import main
from steradian.io.design import load_design
from steradian.io.formats import read_weight_file, write_weight_file

DESIGN = """
[design]
name = "six"
frequency_hz = 299792458.0

[geometry]
kind = "linear"
units = "wavelength"
count = 6
spacing = 0.5
{extra}
"""

CHANNEL = """
[channel]
phase_bits = 3
attenuator_step_db = 1.0
attenuator_span_db = 7.0
"""

BEAMS = """
[beams]
grid = "list"
directions = [[12.0, 0.0], [0.0, 0.0], [30.0, 0.0]]
"""


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)


def _design(tmp_path, name="six.toml", extra=CHANNEL + BEAMS):
    p = tmp_path / name
    p.write_text(DESIGN.format(extra=extra))
    return p


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    """The 6-element line's 3-beam table in every format, and its design."""
    tmp = tmp_path_factory.mktemp("verify")
    design = _design(tmp)
    r = _run("beams", design, "-o", tmp / "six", "--json")
    assert r.exit_code == 0, r.output
    _run("beams", design, "-o", tmp / "six_iq", "-f", "bin", "--bin-encoding", "iq")
    return tmp, design, read_weight_file(tmp / "six.bin")


def _verify(design, path, *extra):
    r = _run("verify", design, path, "--json", *extra)
    return r.exit_code, json.loads(r.output)


def _first(design, path):
    """Exit status and the human output's first-difference line."""
    r = _run("verify", design, path)
    lines = [ln for ln in r.output.splitlines() if ln.startswith("first difference: ")]
    return r.exit_code, (lines[0].removeprefix("first difference: ") if lines else None)


# ---------------------------------------------------------------------------------------
# The untouched files pass
# ---------------------------------------------------------------------------------------
@pytest.mark.parametrize("name", ["six.csv", "six.json", "six.bin", "six.h", "six_iq.bin"])
def test_untouched_files_match(built, name):
    tmp, design, _ = built
    code, out = _verify(design, tmp / name)
    assert code == 0, out
    assert out["ok"] and out["matches_design"] and out["first_difference"] is None
    assert out["compared"] == {"directions": True, "states": True, "beams_differing": 0,
                               "elements_differing": 0, "missing": 0, "extra": 0,
                               "duplicated": 0, "out_of_order": 0, "total": 0}
    r = _run("verify", design, tmp / name)
    assert r.exit_code == 0 and "directions and element states match" in r.output


# ---------------------------------------------------------------------------------------
# Binary files rewritten with valid CRCs
# ---------------------------------------------------------------------------------------
def test_binary_with_half_the_elements_turned_180_deg(built, tmp_path):
    tmp, design, table = built
    codes = np.array(table.codes)
    want = codes[0, 0, 0]
    codes[0, :3, 0] = (codes[0, :3, 0] + 4) % 8  # +180 deg on a 3-bit shifter
    p = write_weight_file(tmp_path / "t.bin", replace(table, codes=codes))
    code, first = _first(design, p)
    assert code == 1
    assert first == (f"beam 0 (theta 12.0, phi 0.0), element 0: file has phase code "
                     f"{(want + 4) % 8}, design gives {want} (3 of 6 elements differ)")
    code, out = _verify(design, p)
    assert code == 1 and not out["ok"] and out["metrics_ok"]  # the binary stores no metrics
    assert out["compared"]["elements_differing"] == 3 and out["compared"]["beams_differing"] == 1
    assert out["beams"][0]["pointing_error_deg"] > 10  # the beam the hardware would radiate


def test_binary_with_beam_directions_swapped(built, tmp_path):
    tmp, design, table = built
    d = np.array(table.directions)
    d[[0, 1]] = d[[1, 0]]
    p = write_weight_file(tmp_path / "t.bin", replace(table, directions=d))
    code, first = _first(design, p)
    assert code == 1
    assert first == "beam 0 (theta 0.0, phi 0.0) is beam 1 of the design (beams out of order)"
    code, out = _verify(design, p)
    assert out["compared"]["out_of_order"] == 2
    # the states under each direction are another beam's: reported too
    assert out["compared"]["beams_differing"] == 2


def test_binary_with_two_of_three_beams_dropped(built, tmp_path):
    tmp, design, table = built
    p = write_weight_file(tmp_path / "t.bin", replace(table, directions=table.directions[:1],
                                                      codes=table.codes[:1]))
    code, first = _first(design, p)
    assert code == 1 and first == "the file holds 1 beam, the design gives 3"
    code, out = _verify(design, p)
    assert out["mismatches"][1:] == [
        "beam 1 (theta 0.0, phi 0.0) of the design is missing from the file",
        "beam 2 (theta 30.0, phi 0.0) of the design is missing from the file"]


def test_iq_within_one_lsb_passes_beyond_fails(built, tmp_path):
    """Q1.15 I/Q: one unit of 2^-15 per component is the rounding bound."""
    tmp, design, _ = built
    table = read_weight_file(tmp / "six_iq.bin")
    iq = np.array(table.codes)
    iq[2, 4] += 1
    p = write_weight_file(tmp_path / "one.bin", replace(table, codes=iq))
    assert _verify(design, p)[0] == 0
    was = tuple(int(x) for x in table.codes[2, 4])
    iq[2, 4, 1] += 1
    p = write_weight_file(tmp_path / "two.bin", replace(table, codes=iq))
    code, first = _first(design, p)
    assert code == 1
    assert first == (f"beam 2 (theta 30.0, phi 0.0), element 4: file has I/Q "
                     f"({was[0] + 1}, {was[1] + 2}), design gives {was} (Q1.15)")


# ---------------------------------------------------------------------------------------
# JSON files edited by hand (still well formed)
# ---------------------------------------------------------------------------------------
def _edit_json(built, tmp_path, edit):
    tmp, design, _ = built
    doc = json.loads((tmp / "six.json").read_text())
    edit(doc)
    for i, b in enumerate(doc["beams"]):  # renumber, so the reader accepts the file
        b["beam"] = i
    doc["n_beams"] = len(doc["beams"])
    p = tmp_path / "t.json"
    p.write_text(json.dumps(doc))
    return design, p


def _swap(doc):
    doc["beams"][0], doc["beams"][2] = doc["beams"][2], doc["beams"][0]


def _rotate(doc):
    doc["beams"].insert(0, doc["beams"].pop())


def _directions(doc):
    a, b = doc["beams"][0], doc["beams"][2]
    a["theta_deg"], b["theta_deg"] = b["theta_deg"], a["theta_deg"]


def _drop(doc):
    del doc["beams"][1]


def _duplicate(doc):
    doc["beams"][1] = dict(doc["beams"][0])


def _append_copy(doc):
    doc["beams"].append(dict(doc["beams"][0]))


@pytest.mark.parametrize(("edit", "first"), [
    (_swap, "beam 0 (theta 30.0, phi 0.0) is beam 2 of the design (beams out of order)"),
    (_rotate, "beam 0 (theta 30.0, phi 0.0) is beam 2 of the design (beams out of order)"),
    # theta edited, codes and metrics kept: already exit 1 before (the stored metrics no
    # longer match), but without saying which beam; now the first difference is named
    (_directions, "beam 0 (theta 30.0, phi 0.0) is beam 2 of the design (beams out of order)"),
    (_drop, "the file holds 2 beams, the design gives 3"),
    (_duplicate, "beam 1 (theta 0.0, phi 0.0) of the design is missing from the file"),
    (_append_copy, "the file holds 4 beams, the design gives 3"),
])
def test_edited_json_exits_1(built, tmp_path, edit, first):
    design, p = _edit_json(built, tmp_path, edit)
    code, line = _first(design, p)
    assert code == 1 and line == first
    code, out = _verify(design, p)
    assert code == 1 and out["first_difference"] == first and not out["ok"]


def test_duplicated_beam_named(built, tmp_path):
    design, p = _edit_json(built, tmp_path, _duplicate)
    out = _verify(design, p)[1]
    assert "beam 1 (theta 12.0, phi 0.0) repeats the direction of beam 0" in out["mismatches"]
    assert out["compared"]["duplicated"] == 1 and out["compared"]["missing"] == 1


def test_directions_swapped_in_json_also_shows_the_states(built, tmp_path):
    """Theta edited, codes kept: the states under each direction are another beam's."""
    design, p = _edit_json(built, tmp_path, _directions)
    out = _verify(design, p)[1]
    states = [m for m in out["mismatches"] if ", element " in m]
    assert states and states[0].startswith("beam 0 (theta 30.0, phi 0.0), element ")


def test_out_of_order_beam_numbers_stay_malformed(built, tmp_path):
    """A JSON whose 'beam' numbers are not 0, 1, 2 in order is refused as malformed (2)."""
    tmp, design, _ = built
    doc = json.loads((tmp / "six.json").read_text())
    doc["beams"][0]["beam"] = 5
    p = tmp_path / "bad.json"
    p.write_text(json.dumps(doc))
    r = CliRunner().invoke(main, ["verify", str(design), str(p)])
    assert r.exit_code == 2 and "beams must be numbered" in r.output
    assert "Traceback" not in r.output


# ---------------------------------------------------------------------------------------
# What cannot be rebuilt is not compared, and said so
# ---------------------------------------------------------------------------------------
def test_design_without_channel_compares_directions_only(built, tmp_path):
    tmp, _, table = built
    design = _design(tmp_path, "nochannel.toml", extra=BEAMS)
    code, out = _verify(design, tmp / "six.bin")
    assert code == 0 and out["compared"]["states"] is False
    assert out["compared"]["directions"] is True
    assert any("element states are NOT compared" in n for n in out["notes"])
    codes = np.array(table.codes)
    codes[0, :3, 0] = (codes[0, :3, 0] + 4) % 8
    p = write_weight_file(tmp_path / "t.bin", replace(table, codes=codes))
    assert _verify(design, p)[0] == 0  # nothing to compare the states with
    p = write_weight_file(tmp_path / "d.bin", replace(table, directions=table.directions[:1],
                                                      codes=table.codes[:1]))
    code, first = _first(design, p)
    assert code == 1 and first == "the file holds 1 beam, the design gives 3"
    r = _run("verify", design, tmp / "six.bin")
    assert "note: the design has no [channel] table" in r.output
    assert "directions match; element states NOT compared" in r.output


def test_design_without_beams_compares_states_beam_by_beam(built, tmp_path):
    tmp, _, table = built
    design = _design(tmp_path, "nobeams.toml", extra=CHANNEL)
    code, out = _verify(design, tmp / "six.bin")
    assert code == 0 and out["compared"]["directions"] is False
    assert any("[beams] table" in n for n in out["notes"])
    d = np.array(table.directions)
    d[[0, 1]] = d[[1, 0]]
    p = write_weight_file(tmp_path / "t.bin", replace(table, directions=d))
    code, first = _first(design, p)
    assert code == 1 and first.startswith("beam 0 (theta 0.0, phi 0.0), element ")


# ---------------------------------------------------------------------------------------
# The Python API
# ---------------------------------------------------------------------------------------
def test_verify_beam_table_api(built):
    tmp, design_path, table = built
    design = load_design(design_path)
    _, ver = st.verify_weight_file(design, tmp / "six.bin")
    assert ver.matches_design and ver.first_difference is None
    arr = design.array
    ch = st.ChannelModel.build(phase_bits=3, attenuator_step_db=1.0, attenuator_span_db=7.0)
    v = st.verify_beam_table(arr, ch, table, directions=table.directions[::-1])
    assert not v.matches_design
    assert v.first_difference == ("beam 0 (theta 12.0, phi 0.0) is beam 2 of the design "
                                  "(beams out of order)")
    v = st.verify_beam_table(arr, ch, table)  # no directions: states on the file's own
    assert v.matches_design and v.compared["directions"] is False


def test_a_design_that_repeats_a_direction_is_matched_beam_for_beam(tmp_path):
    """A list grid may name a direction twice; the file that repeats it as well matches."""
    beams = BEAMS.replace("[30.0, 0.0]]", "[12.0, 0.0]]")
    design = _design(tmp_path, extra=CHANNEL + beams)
    assert _run("beams", design, "-o", tmp_path / "rep", "-f", "json").exit_code == 0
    code, out = _verify(design, tmp_path / "rep.json")
    assert code == 0 and out["matches_design"]


def test_a_table_built_with_another_taper_is_named(built, tmp_path):
    """States differ because the file was built from other weights: a note says so."""
    tmp, design, _ = built
    tapered = _design(tmp_path, "taylor.toml",
                      extra=CHANNEL + BEAMS + '\n[taper]\nkind = "taylor"\nnbar = 3\nsll = 25.0\n')
    assert _run("beams", tapered, "-o", tmp_path / "tay", "-f", "json").exit_code == 0
    code, out = _verify(design, tmp_path / "tay.json")
    assert code == 1 and ", element " in out["first_difference"]
    assert any("records another taper" in n for n in out["notes"])
    assert not any("records another taper" in n for n in _verify(design, tmp / "six.json")[1]
                   ["notes"])


def test_binary_with_an_element_switched_off_is_named(built, tmp_path):
    """Issue 9, items 1 and 12 together: a file that switches element 2 off (the off flag in
    every beam and the enable mask, a well-formed layout-2 binary) is not the design's table:
    exit 1, the enable mask named first (common practice: the delivered element states,
    on/off included, must be the reference's)."""
    from steradian.quantize import OFF_CODE

    tmp, design, table = built
    codes = np.array(table.codes)
    codes[:, 2, :] = OFF_CODE
    enabled = np.ones(table.n_elements, bool)
    enabled[2] = False
    p = write_weight_file(tmp_path / "off.bin", replace(table, codes=codes, enabled=enabled))
    code, first = _first(design, p)
    assert code == 1
    assert first == ("element 2: the file has it off, the design on (1 element(s) differ in "
                     "the enable mask)")


def test_a_file_replaced_beside_its_manifest_is_a_difference(tmp_path):
    """Issue 10's file sets meet issue 9's verify: ``beams`` writes a manifest with each
    file's SHA-256; a weight file later replaced by another table (here the same design at
    another phase resolution, a well-formed file of the same layout) is named as not the file
    of its set and verify exits 1 (common practice: check a delivery against its manifest
    before loading it)."""
    design = _design(tmp_path)
    assert _run("beams", design, "-o", tmp_path / "six").exit_code == 0
    other = _design(tmp_path, "other.toml",
                    extra=CHANNEL + BEAMS.replace("[30.0, 0.0]", "[20.0, 0.0]"))
    assert _run("beams", other, "-o", tmp_path / "other", "-f", "json").exit_code == 0
    (tmp_path / "six.json").write_bytes((tmp_path / "other.json").read_bytes())
    code, out = _verify(design, tmp_path / "six.json")
    assert code == 1
    first = out["first_difference"]
    assert first.startswith(f"file set six.manifest.json: {tmp_path / 'six.json'}: not the "
                            "file of this set")
    code, out = _verify(design, tmp_path / "six.bin")  # untouched file of the set
    assert code == 0 and out["first_difference"] is None
    assert any("six.json" in n for n in out["notes"])  # the replaced sibling is noted
