r"""Beam-table binary files for firmware: a fixed little-endian layout with CRC-32 checks.

All multi-byte fields are little-endian; floats are IEEE-754 binary64 (float64). A file is
a 64-byte header followed by the payload, which starts at the header-size field's offset.

Header (64 bytes)::

    offset size type      field
    0      8    bytes     magic: 53 52 42 57 0D 0A 1A 0A  ("SRBW\r\n\x1a\n")
    8      2    uint16    layout version (3 for a table with difference beams, else 2;
                                 versions 1 and 2 are read)
    10     2    uint16    header size in bytes (64): the payload starts here
    12     4    uint32    N, elements per beam
    16     4    uint32    B, beams
    20     1    uint8     state encoding: 1 = codes, 2 = I/Q in Q1.15
    21     1    uint8     amplitude control: 0 = none, 1 = step attenuator, 2 = linear DAC
    22     1    uint8     flags: bit 0 = element positions block present,
                                 bit 1 = phase offsets block present,
                                 bit 2 = enable mask block present (version >= 2),
                                 bit 3 = beam kind block present (version 3); others 0
    23     1    uint8     reserved (0)
    24     4    uint32    phase states (codes 0 .. phase states - 1)
    28     4    uint32    amplitude states (codes 0 .. amplitude states - 1)
    32     8    float64   phase step, degrees (code p means p * step)
    40     8    float64   amplitude step: dB per code (attenuator), 1/(states-1) (DAC), 0 (none)
    48     4    uint32    payload size in bytes
    52     4    uint32    CRC-32 of the payload
    56     4    uint32    reserved (0)
    60     4    uint32    CRC-32 of header bytes 0 .. 59

CRC-32 is the ISO-HDLC / IEEE 802.3 CRC (zlib.crc32): polynomial 0x04C11DB7 (reflected
0xEDB88320), initial value 0xFFFFFFFF, input and output reflected, final XOR 0xFFFFFFFF;
check value CRC-32("123456789") = 0xCBF43926. Reserved fields and padding bytes are 0 and a
reader refuses other values.

Payload, in this order::

    beam directions   B x (float64 theta_deg, float64 phi_deg), beams in table order
    positions         N x (float64 x_m, float64 y_m, float64 z_m)     if flag bit 0
    phase offsets     N x float64 degrees                                if flag bit 1
    enable mask       N x uint8 (1 = on, 0 = off), then zero bytes up
                      to a multiple of 8 bytes: 8 ceil(N / 8) bytes      if flag bit 2
    beam kinds        B x uint8 (0 = sum, 1 = difference_az, 2 = difference_el), then
                      zero bytes up to a multiple of 8: 8 ceil(B / 8) bytes if flag bit 3
    states            B x N x 4 bytes, beam-major, elements in order:
                        codes: uint16 phase code, uint16 amplitude code;
                               an off element holds the off flag 0xFFFF, 0xFFFF
                        I/Q:   int16 I, int16 Q; Q1.15, value = integer / 32768
                               (range -1 .. 1 - 2^-15); an off element holds 0, 0

Element n of beam b is therefore at payload offset ``16 B + (24 N if positions) +
(8 N if offsets) + (8 ceil(N / 8) if mask) + (8 ceil(B / 8) if kinds) + 4 (b N + n)``.
Without a mask block every element is on (version 1 has none); without a kind block every
beam is a sum beam (a table of sum beams only is written as version 2, byte for byte as
before). Q1.15 values are value * 32768 rounded to the nearest
integer (ties to even, the IEEE-754 default) and saturated to -32768 .. 32767: +1.0 becomes
32767, -1.0 is -32768. A file
is refused with a clear message when the magic, version, header CRC, sizes, reserved fields
or payload CRC do not match, a code is out of range, or an off element's state is not the
off flag.
"""

from __future__ import annotations

import struct
import zlib
from pathlib import Path

import numpy as np

from ..beamtable import BEAM_KINDS, BeamTable, Encoding
from ..errors import FileFormatError, SteradianError, shown
from ..quantize import StateMap
from .atomic import write_bytes
from .formats import BIN_MAGIC, not_a
from .text import read_bytes

__all__ = ["write_beams_bin", "read_beams_bin", "MAGIC", "LAYOUT_VERSION", "HEADER_SIZE",
           "MAX_BIN_BYTES"]

MAGIC = BIN_MAGIC
LAYOUT_VERSION = 3
READS = (1, 2, 3)
HEADER_SIZE = 64

MAX_BIN_BYTES = 2**30
"""Largest binary weight file read (1 GiB: 4,000 beams x 65,536 elements of 4-byte states);
a larger file is refused before it is read."""
_HEAD = struct.Struct("<8sHHIIBBBBIIddIIII")  # the 64-byte header above

_ENC = {"codes": 1, "iq": 2}
_AMP = {"none": 0, "attenuator": 1, "dac": 2}


def _mask_size(n):
    return 8 * ((n + 7) // 8)


def _payload_size(n, nb, flags):
    return (16 * nb + (24 * n if flags & 1 else 0) + (8 * n if flags & 2 else 0)
            + (_mask_size(n) if flags & 4 else 0) + (_mask_size(nb) if flags & 8 else 0)
            + 4 * nb * n)


def write_beams_bin(path, table: BeamTable, encoding: Encoding | None = None,
                    layout_version: int = LAYOUT_VERSION) -> None:
    """Write ``table`` in the binary layout (atomically).

    Parameters
    ----------
    encoding : {"codes", "iq"}, optional
        State encoding; default the table's own. Converting codes to I/Q rounds each state
        to Q1.15.
    layout_version : {3, 2, 1}
        3 (default) carries the beam kinds, but only when the table holds a difference beam:
        a table of sum beams only is written as 2 (readable by version-2 readers). 2 carries
        the enable mask; 1, for readers of the old layout, has none and is refused for a
        table with disabled elements. 1 and 2 are refused for a table with difference beams.
    """
    t = table if encoding is None else table.as_encoding(encoding)
    st = t.states
    if layout_version == 3 and not t.has_difference:
        layout_version = 2
    if layout_version in (1, 2) and t.has_difference:
        raise SteradianError(f"binary layout version {layout_version} has no beam kinds; the "
                             "table holds difference beams: write version 3")
    if layout_version not in READS:
        raise SteradianError(f"binary layout_version must be one of {READS}, got "
                             f"{shown(layout_version)}")
    if layout_version == 1 and not t.enabled.all():
        raise SteradianError("binary layout version 1 has no enable mask; the table has "
                             f"{t.n_elements - t.n_enabled} disabled element(s): write version 2")
    if st.phase_states > 65536 or st.amplitude_states > 65536:
        raise SteradianError("the binary layout stores codes as uint16 (at most 65536 states)")
    flags = ((1 if t.positions is not None else 0) | (2 if np.any(t.phase_offsets_deg) else 0)
             | (4 if layout_version >= 2 else 0) | (8 if layout_version >= 3 else 0))
    parts = [np.ascontiguousarray(t.directions, "<f8").tobytes()]
    if flags & 1:
        parts.append(np.ascontiguousarray(t.positions, "<f8").tobytes())
    if flags & 2:
        parts.append(np.ascontiguousarray(t.phase_offsets_deg, "<f8").tobytes())
    if flags & 4:
        mask = np.zeros(_mask_size(t.n_elements), np.uint8)
        mask[:t.n_elements] = t.enabled
        parts.append(mask.tobytes())
    if flags & 8:
        kinds = np.zeros(_mask_size(t.n_beams), np.uint8)
        kinds[:t.n_beams] = [BEAM_KINDS.index(k) for k in t.beam_kinds]
        parts.append(kinds.tobytes())
    dt = "<u2" if t.encoding == "codes" else "<i2"
    parts.append(np.ascontiguousarray(t.codes, dt).tobytes())
    payload = b"".join(parts)
    head = _HEAD.pack(MAGIC, layout_version, HEADER_SIZE, t.n_elements, t.n_beams,
                      _ENC[t.encoding], _AMP[st.amplitude], flags, 0, st.phase_states,
                      st.amplitude_states, st.phase_step_deg, st.amplitude_step, len(payload),
                      zlib.crc32(payload), 0, 0)
    head = head[:60] + struct.pack("<I", zlib.crc32(head[:60]))
    write_bytes(path, head + payload)


def read_beams_bin(path) -> BeamTable:
    """Read a binary beam-table file, checking both CRC-32 values.

    Raises
    ------
    FileFormatError
        For a wrong magic or version, a header or payload CRC-32 mismatch (a corrupted
        file), a size that does not match the counts, codes or beam kinds out of range.
    """
    data = read_bytes(path := Path(path), "bin weight file", MAX_BIN_BYTES)
    if not data.startswith(MAGIC):
        raise FileFormatError(path, not_a("bin", f"magic {shown(data[:8])}, expected "
                                          f"{shown(MAGIC)}"))
    if len(data) < HEADER_SIZE:
        raise FileFormatError(path, f"file is {len(data)} bytes, shorter than the "
                              f"{HEADER_SIZE}-byte header")
    (magic, ver, hsize, n, nb, enc, amp, flags, res, n_ph, n_amp, ph_step, amp_step,
     psize, pcrc, res2, hcrc) = _HEAD.unpack_from(data)
    if magic != MAGIC:
        raise FileFormatError(path, not_a("bin", f"magic {shown(magic)}, expected {shown(MAGIC)}"))
    if ver not in READS:
        raise FileFormatError(path, f"layout version {ver} is not supported (this steradian "
                              f"reads {' and '.join(map(str, READS))})")
    got = zlib.crc32(data[:60])
    if got != hcrc:
        raise FileFormatError(path, f"header CRC-32 mismatch: stored 0x{hcrc:08x}, computed "
                              f"0x{got:08x}; the header is corrupted")
    if hsize != HEADER_SIZE:
        raise FileFormatError(path, f"header size {hsize} is not {HEADER_SIZE}")
    if enc not in (1, 2) or amp not in (0, 1, 2) or flags & ~{1: 3, 2: 7}.get(ver, 15):
        raise FileFormatError(path, f"unknown encoding {enc}, amplitude control {amp} or "
                              f"flags 0x{flags:02x}")
    if res or res2:
        raise FileFormatError(path, f"reserved header fields must be 0, got {res} (byte 23) "
                              f"and {res2} (bytes 56..59)")
    if n < 1 or nb < 1:
        raise FileFormatError(path, f"element count {n} and beam count {nb} must be >= 1")
    want = _payload_size(n, nb, flags)
    if psize != want:
        raise FileFormatError(path, f"header payload size {psize} does not match {nb} beams x "
                              f"{n} elements ({want} bytes)")
    if len(data) != HEADER_SIZE + psize:
        what = "is truncated" if len(data) < HEADER_SIZE + psize else "has trailing bytes"
        raise FileFormatError(path, f"file {what}: {len(data)} bytes, expected "
                              f"{HEADER_SIZE + psize}")
    payload = data[HEADER_SIZE:]
    got = zlib.crc32(payload)
    if got != pcrc:
        raise FileFormatError(path, f"payload CRC-32 mismatch: header says 0x{pcrc:08x}, "
                              f"payload has 0x{got:08x}; the file is corrupted")
    try:
        states = StateMap(ph_step, n_ph, ("none", "attenuator", "dac")[amp], amp_step, n_amp)
    except SteradianError as exc:
        raise FileFormatError(path, f"header states: {exc}") from None
    o = 0
    dirs = np.frombuffer(payload, "<f8", 2 * nb, o).reshape(nb, 2).astype(float)
    o += 16 * nb
    pos = None
    if flags & 1:
        pos = np.frombuffer(payload, "<f8", 3 * n, o).reshape(n, 3).astype(float)
        o += 24 * n
    off = np.zeros(n)
    if flags & 2:
        off = np.frombuffer(payload, "<f8", n, o).astype(float)
        o += 8 * n
    on = None
    if flags & 4:
        raw = np.frombuffer(payload, np.uint8, _mask_size(n), o)
        if np.any(raw[:n] > 1) or np.any(raw[n:]):
            raise FileFormatError(path, "enable mask bytes must be 0 or 1 and its padding 0")
        on = raw[:n].astype(bool)
        o += _mask_size(n)
    kinds = _kind_block(path, payload, nb, o) if flags & 8 else None
    codes = np.frombuffer(payload, "<u2" if enc == 1 else "<i2", 2 * nb * n,
                          psize - 4 * nb * n).reshape(nb, n, 2).astype(np.int64)  # the last block
    try:
        return BeamTable(states, dirs, codes, "codes" if enc == 1 else "iq", off, pos,
                         enabled=on, kinds=kinds)
    except SteradianError as exc:
        raise FileFormatError(path, str(exc)) from None


def _kind_block(path, payload: bytes, nb: int, o: int) -> tuple:
    """The beam kinds of the kind block at payload offset ``o``."""
    raw = np.frombuffer(payload, np.uint8, _mask_size(nb), o)
    if np.any(raw[:nb] >= len(BEAM_KINDS)) or np.any(raw[nb:]):
        raise FileFormatError(path, f"beam kind bytes must be 0 .. {len(BEAM_KINDS) - 1} and "
                              "their padding 0")
    return tuple(BEAM_KINDS[int(k)] for k in raw[:nb])
