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
    assert t.kinds == ("sum",) * 6 and not t.has_difference
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
    assert back.kinds == MIXED
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
    assert read_weight_file(p).kinds == ("sum",) * 6


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
