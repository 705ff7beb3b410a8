"""Weight files: exact round trips of every format, the documented binary layout, CRC checks,
hand-edit detection, atomic writes and a C compiler reading the header."""

from __future__ import annotations

import json
import shutil
import struct
import subprocess
import tempfile
import zlib
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as hs

from steradian.beamtable import IQ_SCALE, BeamTable
from steradian.errors import FileFormatError, SteradianError
from steradian.io.beams_bin import HEADER_SIZE, MAGIC, read_beams_bin, write_beams_bin
from steradian.io.beams_cheader import write_beams_cheader
from steradian.io.formats import WEIGHT_FORMATS, read_weight_file, write_weight_file
from steradian.quantize import OFF_CODE, ChannelModel, StateMap

SUFFIXES = tuple(f.suffix for f in WEIGHT_FORMATS.values())  # every registered format

_text = hs.text(hs.characters(codec="utf-8"), max_size=12) | hs.sampled_from(
    ["*/ end of comment", "a/b//c", "line\nbreak", "tab\there", "quote\"s", ""])
_value = (hs.floats(allow_nan=False, allow_infinity=False) | hs.integers(-10**6, 10**6)
          | _text | hs.booleans() | hs.none())


@hs.composite
def states(draw):
    if draw(hs.booleans()):
        b = draw(hs.integers(1, 10))
        step, n_ph = 360.0 / 2**b, 2**b
    else:
        step = draw(hs.floats(0.5, 180.0))
        n_ph = draw(hs.integers(1, int(np.ceil(360.0 / step - 1e-9))))
    kind = draw(hs.sampled_from(["none", "attenuator", "dac"]))
    if kind == "none":
        return StateMap(step, n_ph)
    if kind == "attenuator":
        return StateMap(step, n_ph, "attenuator", draw(hs.floats(0.01, 3.0)),
                        draw(hs.integers(1, 128)))
    b = draw(hs.integers(1, 12))
    return StateMap(step, n_ph, "dac", 1.0 / (2**b - 1), 2**b)


@hs.composite
def tables(draw):
    """Random tables: element and beam counts, states, codes or I/Q, angles, offsets,
    positions, metadata and metrics."""
    n = draw(hs.integers(1, 12))
    nb = draw(hs.integers(1, 5))
    sm = draw(states())
    enc = draw(hs.sampled_from(["codes", "iq"]))
    rng = np.random.default_rng(draw(hs.integers(0, 2**32 - 1)))
    if enc == "codes":
        codes = np.stack([rng.integers(0, sm.phase_states, (nb, n)),
                          rng.integers(0, sm.amplitude_states, (nb, n))], -1)
    else:
        codes = rng.integers(-IQ_SCALE, IQ_SCALE, (nb, n, 2))
    on = None
    if n > 1 and draw(hs.booleans()):  # some elements off: the off flag, I/Q exactly 0
        on = rng.uniform(size=n) < 0.6
        on[0] = True
        codes[:, ~on] = OFF_CODE if enc == "codes" else 0
    dirs = np.column_stack([rng.uniform(0, 180, nb), rng.uniform(-360, 360, nb)])
    dirs[0, 0] = draw(hs.sampled_from([0.0, 180.0, 1e-300, 90.0, float(dirs[0, 0])]))
    off = rng.uniform(0, 360, n) * draw(hs.sampled_from([0.0, 1.0]))
    pos = None
    if draw(hs.booleans()):
        pos = rng.normal(0, 1, (n, 3)) * 10.0 ** draw(hs.integers(-6, 3))
        pos[0, 0] = draw(hs.floats(-1e300, 1e300, allow_nan=False))
    meta = draw(hs.dictionaries(_text, _value, max_size=4))
    metrics = None
    if draw(hs.booleans()):
        metrics = [{"psl_db": float(rng.normal(-20, 5)), "loss_db": None, "note": "x*/y"}
                   for _ in range(nb)]
    return BeamTable(sm, dirs, codes, enc, off, pos, meta, metrics, on)


def _roundtrip(table, suffix):
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / f"t{suffix}"
        write_weight_file(p, table)
        return read_weight_file(p)


@pytest.mark.parametrize("suffix", SUFFIXES)
@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(table=tables())
def test_roundtrip_is_exact(suffix, table):
    """Write then read returns bit-identical states, angles, offsets and positions (and, in
    the text formats, the metadata and metrics)."""
    back = _roundtrip(table, suffix)
    assert back.same_weights(table)
    assert np.array_equal(back.commanded(), table.commanded())
    if suffix != ".bin":
        assert back.metadata == table.metadata
        assert back.metrics == table.metrics


def test_fixed_point_iq_inverts_for_the_demo_channel():
    """Every (phase, attenuator) state of a 6-bit, 0.5 dB x 64 channel survives Q1.15 I/Q:
    codes -> I/Q -> codes is the identity, and the I/Q values are within half an LSB per
    component (one LSB where +1.0 saturates to 32767 / 32768)."""
    sm = ChannelModel.build(phase_bits=6, attenuator_step_db=0.5,
                            attenuator_span_db=31.5).states
    p, a = np.meshgrid(np.arange(64), np.arange(64), indexing="ij")
    codes = np.stack([p.ravel(), a.ravel()], -1)[None]
    t = BeamTable(sm, [[0.0, 0.0]], codes)
    iq = t.as_encoding("iq")
    c = t.commanded()
    err = np.abs(iq.commanded() - c) * IQ_SCALE
    full = (np.abs(c.real) > 1 - 1e-12) | (np.abs(c.imag) > 1 - 1e-12)
    assert err[~full].max() <= np.sqrt(0.5) + 1e-9
    assert err[full].max() <= 1.0 + 1e-9
    assert iq.as_encoding("codes").same_weights(t)


def _table(n=5, nb=3, enc="codes", off=(), kinds=None):
    sm = ChannelModel.build(phase_bits=6, attenuator_step_db=0.5, attenuator_span_db=31.5,
                            ).states
    rng = np.random.default_rng(1)
    codes = np.stack([rng.integers(0, 64, (nb, n)), rng.integers(0, 64, (nb, n))], -1)
    on = np.ones(n, bool)
    on[list(off)] = False
    codes[:, ~on] = OFF_CODE
    t = BeamTable(sm, np.column_stack([np.arange(nb) * 10.0, np.zeros(nb)]), codes, "codes",
                  rng.uniform(0, 5.625, n), rng.normal(size=(n, 3)), {"design": "test"},
                  enabled=on, kinds=kinds)
    return t.as_encoding(enc)


@pytest.mark.parametrize("enc", ["codes", "iq"])
def test_binary_layout_as_documented(tmp_path, enc):
    """Decode the file with struct at the offsets the module docstring documents (layout 2:
    the enable mask block after the offsets), CRC-32 by zlib (the ISO-HDLC CRC-32). Edited
    for the layout-2 bump (issue 9): layout 1 had no enable mask."""
    t = _table(enc=enc, off=(1,))
    p = tmp_path / "w.bin"
    write_beams_bin(p, t)
    data = p.read_bytes()
    assert data[:8] == b"SRBW\r\n\x1a\n" == MAGIC
    ver, hsize, n, nb = struct.unpack_from("<HHII", data, 8)
    encoding, amp, flags, res = struct.unpack_from("<BBBB", data, 20)
    n_ph, n_amp = struct.unpack_from("<II", data, 24)
    ph_step, amp_step = struct.unpack_from("<dd", data, 32)
    psize, pcrc, res2, hcrc = struct.unpack_from("<IIII", data, 48)
    assert (ver, hsize, n, nb) == (2, 64, 5, 3)
    assert (encoding, amp, flags, res, res2) == ({"codes": 1, "iq": 2}[enc], 1, 7, 0, 0)
    assert (n_ph, n_amp, ph_step, amp_step) == (64, 64, 5.625, 0.5)
    payload = data[HEADER_SIZE:]
    mask_at, mask_size = 16 * nb + 24 * n + 8 * n, 8
    assert len(payload) == psize == mask_at + mask_size + 4 * nb * n
    assert pcrc == zlib.crc32(payload) and hcrc == zlib.crc32(data[:60])
    assert np.array_equal(np.frombuffer(payload, "<f8", 2 * nb).reshape(nb, 2), t.directions)
    assert list(payload[mask_at:mask_at + mask_size]) == [1, 0, 1, 1, 1, 0, 0, 0]
    fmt = "<HH" if enc == "codes" else "<hh"
    for b in range(nb):
        for e in range(n):
            off = mask_at + mask_size + 4 * (b * n + e)
            assert list(struct.unpack_from(fmt, payload, off)) == t.codes[b, e].tolist()
    assert list(struct.unpack_from(fmt, payload, mask_at + 8 + 4 * (2 * n + 1))) == (
        [OFF_CODE, OFF_CODE] if enc == "codes" else [0, 0])


def test_crc32_parameters_check_value():
    """CRC-32 as documented: reflected polynomial 0xEDB88320, init and final XOR 0xFFFFFFFF;
    check value of "123456789" is 0xCBF43926 (the ISO-HDLC CRC-32 of the CRC RevEng
    catalogue, common practice). A bitwise implementation from those parameters alone agrees
    with zlib on a written header."""
    def crc(data):
        c = 0xFFFFFFFF
        for byte in data:
            c ^= byte
            for _ in range(8):
                c = (c >> 1) ^ (0xEDB88320 if c & 1 else 0)
        return c ^ 0xFFFFFFFF

    assert crc(b"123456789") == 0xCBF43926 == zlib.crc32(b"123456789")
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "w.bin"
        write_beams_bin(p, _table())
        data = p.read_bytes()
    assert crc(data[:60]) == struct.unpack_from("<I", data, 60)[0]


def test_disabled_elements_are_off_in_every_format(tmp_path):
    """Issue 9, case 1: a 9-element line with disabled = [0, 3] on an attenuator channel.
    Before, elements 0 and 3 were written as the weakest attenuator state (codes (0, 63),
    I = 872) and no file said which elements were off. Now every format carries the enable
    mask, the codes are the off flag and the I/Q exactly zero (common practice: a disabled
    channel is switched off, not attenuated)."""
    import steradian as st
    from steradian.beamtable import build_beam_table

    on = np.ones(9, bool)
    on[[0, 3]] = False
    arr = st.Array(st.linear(9, 0.5), st.C0, enabled=on)
    ch = ChannelModel.build(phase_bits=6, attenuator_step_db=0.5, attenuator_span_db=31.5)
    t = build_beam_table(arr, ch, [[0.0, 0.0], [20.0, 0.0]], evaluate=False).table
    assert t.enabled.tolist() == on.tolist() and t.n_enabled == 7
    assert np.all(t.codes[:, [0, 3]] == OFF_CODE)
    assert np.all(t.commanded()[:, [0, 3]] == 0) and np.all(t.commanded()[:, on] != 0)
    iq = t.as_encoding("iq")
    assert np.all(iq.codes[:, [0, 3]] == 0) and iq.as_encoding("codes").same_weights(t)
    for enc in ("codes", "iq"):
        for suffix in SUFFIXES:
            p = tmp_path / f"w_{enc}{suffix}"
            write_weight_file(p, t, encoding=enc)
            back = read_weight_file(p)
            assert back.enabled.tolist() == on.tolist() and back.encoding == enc
            assert back.same_weights(t.as_encoding(enc))
    doc = json.loads((tmp_path / "w_codes.json").read_text())
    assert doc["elements"]["enabled"] == on.astype(int).tolist() and doc["n_enabled"] == 7
    assert doc["beams"][1]["amplitude_code"][3] == OFF_CODE
    rows = [ln.split(",") for ln in (tmp_path / "w_codes.csv").read_text().splitlines()
            if ln[:1].isdigit()]
    assert {r[3]: r[8] for r in rows} == {str(i): str(int(on[i])) for i in range(9)}
    h = (tmp_path / "w_iq.h").read_text()
    assert "#define STRD_N_ENABLED 7" in h and "#define STRD_OFF_CODE 0xFFFF" in h
    # A disabled element holding a real state, or the off flag on an enabled one, is refused.
    bad = t.codes.copy()
    bad[0, 3] = [0, 63]
    with pytest.raises(SteradianError, match="element 3: element is disabled"):
        BeamTable(t.states, t.directions, bad, enabled=on)
    with pytest.raises(SteradianError, match="binary layout version 1 has no enable mask"):
        write_beams_bin(tmp_path / "v1.bin", t, layout_version=1)


def test_layout_1_files_are_still_read(tmp_path):
    """Files of the previous layout (no enable mask) read with every element on."""
    t = _table()
    p = tmp_path / "w.bin"
    write_beams_bin(p, t, layout_version=1)
    assert struct.unpack_from("<H", p.read_bytes(), 8)[0] == 1
    assert read_beams_bin(p).same_weights(t)
    write_weight_file(tmp_path / "w.json", t)
    doc = json.loads((tmp_path / "w.json").read_text())
    doc["layout_version"] = 1
    del doc["n_enabled"], doc["elements"]["enabled"]
    (tmp_path / "w.json").write_text(json.dumps(doc))
    assert read_weight_file(tmp_path / "w.json").same_weights(t)
    write_weight_file(tmp_path / "w.csv", t)
    lines = (tmp_path / "w.csv").read_text().splitlines()
    hdr = next(i for i, ln in enumerate(lines) if ln.startswith("beam,"))
    col = lines[hdr].split(",").index("enabled")
    old = [ln.replace("layout_version = 2", "layout_version = 1") for ln in lines[:hdr]]
    for ln in lines[hdr:]:
        f = ln.split(",")
        del f[col]
        old.append(",".join(f))
    (tmp_path / "w.csv").write_text("\n".join(old) + "\n")
    assert read_weight_file(tmp_path / "w.csv").same_weights(t)
    write_weight_file(tmp_path / "w.h", t)
    h = (tmp_path / "w.h").read_text().replace("WEIGHTS_LAYOUT 2", "WEIGHTS_LAYOUT 1")
    a = h.index("static const uint8_t strd_element_enabled")
    h = h[:a] + h[h.index("};", a) + 2:]
    (tmp_path / "w.h").write_text(h)
    assert read_weight_file(tmp_path / "w.h").same_weights(t)


@pytest.mark.parametrize("fmt", ["csv", "json", "h"])
def test_binary_given_to_a_text_reader_is_one_line(tmp_path, fmt):
    """Issue 9, case 9: a binary named .csv/.json/.h, or read with --format csv, gave a
    UnicodeDecodeError traceback; every reader now refuses with one FileFormatError line."""
    b = tmp_path / "w.bin"
    write_beams_bin(b, _table())
    named = tmp_path / f"w.{fmt}"
    named.write_bytes(b.read_bytes())
    for path, how in ((named, None), (b, fmt)):
        with pytest.raises(FileFormatError, match=f"is not a {fmt} weight file: it is a "
                           "steradian binary"):
            read_weight_file(path, how)
    junk = tmp_path / f"junk.{fmt}"
    junk.write_bytes(bytes(range(128, 256)))
    with pytest.raises(FileFormatError, match=f"is not a {fmt} weight file: not UTF-8"):
        read_weight_file(junk)
    for other in ("csv", "json", "h"):  # a text weight file of another kind
        if other != fmt:
            write_weight_file(tmp_path / f"o.{other}", _table())
            with pytest.raises(FileFormatError, match=f"is not a {fmt} weight file"):
                read_weight_file(tmp_path / f"o.{other}", fmt)
    with pytest.raises(FileFormatError, match="is not a bin weight file: magic"):
        read_weight_file(tmp_path / "o.csv" if fmt != "csv" else tmp_path / "o.json", "bin")


def test_verify_on_a_misnamed_binary_exits_2_in_one_line(tmp_path):
    """The command line: one 'steradian: error:' line naming the file, exit 2."""
    from click.testing import CliRunner

    from steradian.cli import main

    design = Path(__file__).resolve().parent.parent / "configs" / "balloon_downlink_tile.toml"
    b = tmp_path / "w.bin"
    write_beams_bin(b, _table())
    (tmp_path / "w.csv").write_bytes(b.read_bytes())
    for args in (["verify", design, tmp_path / "w.csv"],
                 ["verify", design, b, "--format", "csv"]):
        res = CliRunner().invoke(main, [str(a) for a in args])
        assert res.exit_code == 2, res.output
        lines = res.output.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("steradian: error: ")
        assert "is not a csv weight file" in lines[0] and "Traceback" not in res.output


def test_every_format_writes_iq(tmp_path):
    """Issue 9, case 10: the C header's ENCODING macro documents I/Q but the writer took no
    encoding (a raw TypeError). Every writer now takes encoding="iq"."""
    from steradian.io.formats import write_beam_files

    t = _table(off=(2,))
    for suffix in SUFFIXES:
        p = tmp_path / f"w{suffix}"
        write_weight_file(p, t, encoding="iq")
        assert read_weight_file(p).same_weights(t.as_encoding("iq"))
    files = write_beam_files(t, tmp_path / "all", h_encoding="iq", bin_encoding="iq")
    assert read_weight_file(files["h"]).encoding == "iq"
    assert "#define STRD_ENCODING 2" in files["h"].read_text()


@settings(max_examples=40, deadline=None)
@given(where=hs.integers(0, 10**6), bit=hs.integers(0, 7))
def test_corrupted_binary_is_refused(where, bit):
    """Any single flipped bit is refused: in the payload by its CRC-32 with a clear message,
    in the header by the magic, version or header CRC-32."""
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "w.bin"
        write_beams_bin(p, _table())
        data = bytearray(p.read_bytes())
        i = where % len(data)
        data[i] ^= 1 << bit
        p.write_bytes(bytes(data))
        with pytest.raises(FileFormatError) as exc:
            read_beams_bin(p)
    msg = str(exc.value)
    if i >= HEADER_SIZE:
        assert "payload CRC-32 mismatch" in msg and "corrupted" in msg
    else:
        assert "CRC-32" in msg or "magic" in msg or "layout version" in msg


def test_truncated_and_padded_binary(tmp_path):
    p = tmp_path / "w.bin"
    write_beams_bin(p, _table())
    data = p.read_bytes()
    p.write_bytes(data[:-3])
    with pytest.raises(FileFormatError, match="truncated"):
        read_beams_bin(p)
    p.write_bytes(data + b"\0")
    with pytest.raises(FileFormatError, match="trailing bytes"):
        read_beams_bin(p)
    p.write_bytes(data[:10])
    with pytest.raises(FileFormatError, match="shorter than the 64-byte header"):
        read_beams_bin(p)


def test_csv_hand_edits_are_caught(tmp_path):
    p = tmp_path / "w.csv"
    write_weight_file(p, _table())
    lines = p.read_text().splitlines()
    hdr = next(i for i, ln in enumerate(lines) if ln.startswith("beam,"))
    cols = lines[hdr].split(",")

    def edited(row, col, value):
        out = list(lines)
        f = out[hdr + 1 + row].split(",")
        f[cols.index(col)] = value
        out[hdr + 1 + row] = ",".join(f)
        p.write_text("\n".join(out) + "\n")
        return hdr + 2 + row  # 1-based line number

    line = edited(4, "phase_deg", "12.5")
    with pytest.raises(FileFormatError, match=rf"w.csv:{line}: column 'phase_deg'.*edit the "
                       "state columns"):
        read_weight_file(p)
    line = edited(2, "phase_code", "64")
    with pytest.raises(FileFormatError, match=rf"w.csv:{line}: phase code 64 at beam 0, "
                       r"element 2 is out of range 0\.\.63"):
        read_weight_file(p)
    line = edited(7, "theta_deg", "3.0")
    with pytest.raises(FileFormatError, match=rf"w.csv:{line}: beam 1 direction differs"):
        read_weight_file(p)
    line = edited(3, "element", "2")
    with pytest.raises(FileFormatError, match=rf"w.csv:{line}: beam 0, element 2 appears "
                       "twice"):
        read_weight_file(p)


def test_json_errors(tmp_path):
    p = tmp_path / "w.json"
    write_weight_file(p, _table())
    doc = json.loads(p.read_text())
    doc["beams"][1]["amplitude_code"][3] = 70
    p.write_text(json.dumps(doc))
    with pytest.raises(FileFormatError, match="amplitude code 70 at beam 1, element 3"):
        read_weight_file(p)
    doc["beams"][1]["amplitude_code"] = [0, 0]
    p.write_text(json.dumps(doc))
    with pytest.raises(FileFormatError, match=r"beams\[1\]\.amplitude_code has 2 entries but "
                       "n_elements is 5"):
        read_weight_file(p)
    p.write_text('{"format": "steradian-beam-weights",\n "layout_version": 1,,}')
    with pytest.raises(FileFormatError, match=r"w.json:2: not valid JSON"):
        read_weight_file(p)


def test_writes_are_atomic(tmp_path, monkeypatch):
    """An export interrupted before the rename leaves the old file and no temporary file."""
    import steradian.io.atomic as atomic

    for suffix in SUFFIXES:
        p = tmp_path / f"w{suffix}"
        p.write_bytes(b"old")

        def boom(fd):
            raise OSError("disk full")

        monkeypatch.setattr(atomic.os, "fsync", boom)
        with pytest.raises(OSError, match="disk full"):
            write_weight_file(p, _table())
        monkeypatch.undo()
        assert p.read_bytes() == b"old"
    assert sorted(x.name for x in tmp_path.iterdir()) == sorted(f"w{s}" for s in SUFFIXES)


def test_unknown_suffix_and_bad_prefix(tmp_path):
    with pytest.raises(SteradianError, match="cannot tell the weight-file format"):
        write_weight_file(tmp_path / "w.txt", _table())
    with pytest.raises(SteradianError, match="C identifier"):
        write_beams_cheader(tmp_path / "w.h", _table(), prefix="9bad")


@pytest.mark.skipif(shutil.which("cc") is None, reason="no C compiler")
@pytest.mark.parametrize("enc", ["codes", "iq"])
def test_c_header_compiles_and_holds_the_values(tmp_path, enc):
    """The system C compiler (C99, -pedantic) reads the header: counts, states and angles
    printed by a C program equal the table's."""
    t = _table(n=7, nb=4, enc=enc, off=(5,))
    write_beams_cheader(tmp_path / "panel.h", t, prefix="panel")
    (tmp_path / "main.c").write_text(
        '#include <stdio.h>\n#include "panel.h"\n'
        "int main(void) {\n"
        '  printf("%d %d %d %d %d %.17g %.17g %d %d %d %d %d\\n", PANEL_N_BEAMS, PANEL_N_ELEMENTS,'
        " PANEL_ENCODING, (int)panel_state[2][5][0], (int)panel_state[2][5][1],"
        " panel_beam_theta_deg[3], panel_phase_offset_deg[6] + panel_beam_phi_deg[0]"
        " + panel_element_position_m[1][2], PANEL_N_ENABLED, (int)panel_element_enabled[5],"
        " (int)panel_element_enabled[4], PANEL_OFF_CODE, (int)panel_state[2][4][0]);\n"
        "  return 0;\n}\n")
    exe = tmp_path / "main"
    subprocess.run(["cc", "-std=c99", "-pedantic", "-Wall", "-o", str(exe),
                    str(tmp_path / "main.c")], check=True, capture_output=True)
    out = subprocess.run([str(exe)], check=True, capture_output=True, text=True).stdout.split()
    off = ["65535", "65535"] if enc == "codes" else ["0", "0"]
    assert out[:5] == ["4", "7", "1" if enc == "codes" else "2", *off]
    assert float(out[5]) == t.directions[3, 0]
    assert float(out[6]) == (t.phase_offsets_deg[6] + t.directions[0, 1] + t.positions[1, 2])
    assert out[7:] == ["6", "0", "1", "65535", str(t.codes[2, 4, 0])]


C_READER = r"""
/* A binary weight-file reader written from the README's layout alone (C99). */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <stdint.h>

static const unsigned char *d;
static uint32_t u16(size_t o) { return (uint32_t)d[o] | ((uint32_t)d[o + 1] << 8); }
static uint32_t u32(size_t o) { return u16(o) | (u16(o + 2) << 16); }
static int32_t s16(size_t o) {
    uint32_t v = u16(o); return v >= 32768u ? (int32_t)v - 65536 : (int32_t)v;
}
static double f64(size_t o) {
    uint64_t v = 0; double x; int i;
    for (i = 7; i >= 0; i--) v = (v << 8) | d[o + (size_t)i];
    memcpy(&x, &v, 8); return x;
}
static uint32_t crc32(const unsigned char *p, size_t n) {
    uint32_t c = 0xFFFFFFFFu; size_t i; int k;
    for (i = 0; i < n; i++) {
        c ^= p[i];
        for (k = 0; k < 8; k++) c = (c >> 1) ^ ((c & 1u) ? 0xEDB88320u : 0u);
    }
    return c ^ 0xFFFFFFFFu;
}
int main(int argc, char **argv) {
    FILE *f; long size; unsigned char *buf;
    uint32_t n, nb, b, e, hsize, flags, psize; size_t o, mask_at, kinds_at, states_at;
    if (argc != 2 || !(f = fopen(argv[1], "rb"))) return 2;
    fseek(f, 0, SEEK_END); size = ftell(f); fseek(f, 0, SEEK_SET);
    buf = malloc((size_t)size);
    if (fread(buf, 1, (size_t)size, f) != (size_t)size) return 2;
    fclose(f); d = buf;
    if (memcmp(d, "SRBW\r\n\x1a\n", 8) != 0) return 3;
    if (crc32(d, 60) != u32(60)) return 4;
    hsize = u16(10); n = u32(12); nb = u32(16); flags = d[22]; psize = u32(48);
    if (d[23] != 0 || u32(56) != 0) return 5;
    if ((long)(hsize + psize) != size || crc32(d + hsize, psize) != u32(52)) return 6;
    o = hsize;
    printf("version %u encoding %u n %u beams %u\n", u16(8), d[20], n, nb);
    for (b = 0; b < nb; b++) printf("dir %.17g %.17g\n", f64(o + 16 * b), f64(o + 16 * b + 8));
    o += 16 * (size_t)nb;
    if (flags & 1) o += 24 * (size_t)n;
    if (flags & 2) {
        for (e = 0; e < n; e++) printf("off %.17g\n", f64(o + 8 * e));
        o += 8 * (size_t)n;
    }
    mask_at = o;
    if (flags & 4) o += 8 * (((size_t)n + 7) / 8);
    kinds_at = o;
    if (flags & 8) o += 8 * (((size_t)nb + 7) / 8);
    states_at = o;
    for (e = 0; e < n; e++) printf("on %d\n", (flags & 4) ? d[mask_at + e] : 1);
    for (b = 0; b < nb; b++) printf("kind %d\n", (flags & 8) ? d[kinds_at + b] : 0);
    for (b = 0; b < nb; b++)
        for (e = 0; e < n; e++) {
            size_t at = states_at + 4 * ((size_t)b * n + e);
            if (d[20] == 1) printf("s %ld %ld\n", (long)u16(at), (long)u16(at + 2));
            else printf("s %ld %ld\n", (long)s16(at), (long)s16(at + 2));
        }
    free(buf);
    return 0;
}
"""


@pytest.mark.skipif(shutil.which("cc") is None, reason="no C compiler")
@pytest.mark.parametrize("kinds", [None, ("sum", "difference_az", "difference_el")],
                         ids=["sum-only", "sum-and-difference"])
def test_c_reader_from_the_documentation_decodes_the_binary(tmp_path, kinds):
    """A C program written from the README's binary layout alone (offsets, IEEE-754 float64,
    the documented CRC-32 parameters, the enable mask and its padding, the beam-kind block
    and its padding, the off flag) decodes binaries in both encodings, with disabled
    elements, sum-only (layout 2) and with difference beams (layout 3), and agrees exactly
    with the JSON file of the same table."""
    src = tmp_path / "reader.c"
    src.write_text(C_READER)
    exe = tmp_path / "reader"
    subprocess.run(["cc", "-std=c99", "-pedantic", "-Wall", "-o", str(exe), str(src)],
                   check=True, capture_output=True)
    names = ("sum", "difference_az", "difference_el")  # the documented kind numbers 0, 1, 2
    for enc in ("codes", "iq"):
        t = _table(n=11, nb=3, enc=enc, off=(0, 7), kinds=kinds)
        write_weight_file(tmp_path / f"t_{enc}.bin", t)
        write_weight_file(tmp_path / f"t_{enc}.json", t)
        doc = json.loads((tmp_path / f"t_{enc}.json").read_text())
        out = subprocess.run([str(exe), str(tmp_path / f"t_{enc}.bin")], check=True,
                             capture_output=True, text=True).stdout.splitlines()
        version = 2 if kinds is None else 3
        assert out[0] == f"version {version} encoding {1 if enc == 'codes' else 2} n 11 beams 3"
        dirs = [tuple(map(float, ln.split()[1:])) for ln in out if ln.startswith("dir ")]
        assert dirs == [(bm["theta_deg"], bm["phi_deg"]) for bm in doc["beams"]]
        offs = [float(ln.split()[1]) for ln in out if ln.startswith("off ")]
        assert offs == doc["elements"]["phase_offset_deg"]
        assert [int(ln.split()[1]) for ln in out if ln.startswith("on ")] == \
            doc["elements"]["enabled"]
        got = [names[int(ln.split()[1])] for ln in out if ln.startswith("kind ")]
        assert got == [bm.get("kind", "sum") for bm in doc["beams"]]
        assert got == list(kinds or ("sum",) * 3)
        keys = ("phase_code", "amplitude_code") if enc == "codes" else ("i_q15", "q_q15")
        states = [tuple(map(int, ln.split()[1:])) for ln in out if ln.startswith("s ")]
        assert states == [pair for bm in doc["beams"]
                          for pair in zip(bm[keys[0]], bm[keys[1]], strict=True)]


LINE_DESIGN = """
[design]
name = "line9"
frequency_hz = 299792458.0

[geometry]
kind = "linear"
units = "wavelength"
count = 9
spacing = 0.5
disabled = [0, 3]

[element]
model = "isotropic"

[taper]
{taper}

[channel]
{channel}

[beams]
grid = "theta_phi"
theta_deg = [0, 20]
phi_deg = [0]
"""


def test_design_chain_disabled_elements_and_phase_only_taper(tmp_path):
    """Issue 9, cases 1 and 2 from a design file through `steradian beams`: the 9-element
    line with disabled = [0, 3] writes elements 0 and 3 as off in every file (before: codes
    (0, 63), I = 872); a Taylor taper on a phase-only channel is refused in one line naming
    [channel] and [taper], exit 2, and accepted with drop_taper = true."""
    from click.testing import CliRunner

    from steradian.cli import main

    def run(taper, channel):
        p = tmp_path / "line.toml"
        p.write_text(LINE_DESIGN.format(taper=taper, channel=channel))
        return CliRunner().invoke(main, ["beams", str(p), "-o", str(tmp_path / "out"),
                                         "--bin-encoding", "iq"])

    att = "phase_bits = 6\nattenuator_step_db = 0.5\nattenuator_span_db = 31.5"
    res = run('kind = "uniform"', att)
    assert res.exit_code == 0, res.output
    for suffix in SUFFIXES:
        t = read_weight_file(tmp_path / f"out{suffix}")
        assert t.enabled.tolist() == [i not in (0, 3) for i in range(9)]
        assert np.all(t.commanded()[:, [0, 3]] == 0)
    assert np.all(read_weight_file(tmp_path / "out.bin").codes[:, [0, 3]] == 0)  # I/Q
    assert np.all(read_weight_file(tmp_path / "out.json").codes[:, [0, 3]] == OFF_CODE)
    taylor = 'kind = "taylor"\nnbar = 3\nsll = 25.0'
    res = run(taylor, "phase_bits = 4")
    assert res.exit_code == 2
    lines = res.output.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("steradian: error: [channel] has no "
                                                   "amplitude control")
    assert "[taper]" in lines[0] and "drop_taper = true" in lines[0]
    res = run(taylor, "phase_bits = 4\ndrop_taper = true")
    assert res.exit_code == 0, res.output
    notes = json.loads((tmp_path / "out.json").read_text())["metadata"]["notes"]
    assert "amplitude taper dropped" in notes[0]
