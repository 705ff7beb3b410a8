"""Beam-table JSON files: every beam's states with all the metadata.

Layout (one JSON object; each beam on one line)::

    {
     "format": "steradian-beam-weights",
     "layout_version": 2,
     "steradian_version": "0.1.0",
     "encoding": "codes",                 # or "iq"
     "iq_format": "Q1.15",                # only for "iq"
     "n_elements": 256,
     "n_beams": 231,
     "n_enabled": 254,
     "states": {"phase_step_deg": 5.625, "phase_states": 64, "amplitude": "attenuator",
                "amplitude_step": 0.5, "amplitude_states": 64},
     "elements": {"enabled": [1, 1, 0, ...], "phase_offset_deg": [...],
                  "positions_m": [[x, y, z], ...] or null},
     "beams": [
      {"beam": 0, "theta_deg": 0.0, "phi_deg": 0.0, "kind": "sum", "phase_code": [...],
       "amplitude_code": [...], "metrics": {...}},
      ...
     ],
     "metadata": {...}
    }

For ``"iq"`` each beam holds ``"i_q15"`` and ``"q_q15"`` (integers, value = integer / 32768)
instead of the two code lists. ``elements.enabled`` is the enable mask (1 on, 0 off); an off
element holds the off flag 65535 in both code lists (0 in both I/Q lists) in every beam, and
``n_enabled`` counts the elements that are on. Layout 1 files (no mask) are still read, with
every element on. ``kind`` (layout 3) is the beam's kind: "sum", "difference_az" or
"difference_el"; it is written on every beam of a table that holds a difference beam (then
``layout_version`` is 3), and a table of sum beams only is written as layout 2, without it
(a beam without ``kind`` is a sum beam). ``metrics`` (the predicted metrics of the beam as built) is
present on every beam or on none. Floats are written in Python's shortest round-trip form, so
a write-read cycle returns bit-identical tables.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np

from ..beamtable import BEAM_KINDS, BeamTable
from ..errors import FileFormatError, shown
from ..quantize import StateMap
from .atomic import write_text
from .formats import CODE_LIMIT, check_extras, not_a, weight_text
from .text import check_nesting

__all__ = ["write_beams_json", "read_beams_json", "FORMAT_ID", "LAYOUT_VERSION"]

FORMAT_ID = "steradian-beam-weights"
LAYOUT_VERSION = 3
READS = (1, 2, 3)

_TOP = ("format", "layout_version", "steradian_version", "encoding", "iq_format",
        "n_elements", "n_beams", "n_enabled", "states", "elements", "beams", "metadata")


def _dump(v) -> str:
    return json.dumps(v, separators=(", ", ": "), allow_nan=False)


def write_beams_json(path, table: BeamTable, encoding=None) -> None:
    """Write ``table`` as JSON (atomically), in ``encoding`` ("codes" or "iq"; default the
    table's own)."""
    from ..version import VERSION as __version__

    table = table if encoding is None else table.as_encoding(encoding)
    enc = table.encoding
    codes = table.codes
    beams = []
    for b in range(table.n_beams):
        d = {"beam": b, "theta_deg": float(table.directions[b, 0]),
             "phi_deg": float(table.directions[b, 1])}
        if table.has_difference:
            d["kind"] = table.beam_kinds[b]
        if enc == "codes":
            d["phase_code"] = codes[b, :, 0].tolist()
            d["amplitude_code"] = codes[b, :, 1].tolist()
        else:
            d["i_q15"] = codes[b, :, 0].tolist()
            d["q_q15"] = codes[b, :, 1].tolist()
        if table.metrics is not None:
            d["metrics"] = table.metrics[b]
        beams.append(d)
    top = {"format": FORMAT_ID, "layout_version": LAYOUT_VERSION if table.has_difference else 2,
           "steradian_version": __version__, "encoding": enc}
    if enc == "iq":
        top["iq_format"] = "Q1.15"
    top.update({"n_elements": table.n_elements, "n_beams": table.n_beams,
                "n_enabled": table.n_enabled, "states": table.states.to_dict(),
                "elements": {"enabled": table.enabled.astype(int).tolist(),
                             "phase_offset_deg": table.phase_offsets_deg.tolist(),
                             "positions_m": None if table.positions is None
                             else table.positions.tolist()}})
    lines = ["{"]
    for k, v in top.items():
        lines.append(f" {json.dumps(k)}: {_dump(v)},")
    lines.append(' "beams": [')
    lines.append(",\n".join("  " + _dump(b) for b in beams))
    lines.append(" ],")
    meta = json.dumps(table.metadata, indent=1, allow_nan=False).replace("\n", "\n ")
    lines.append(f' "metadata": {meta}')
    lines.append("}")
    write_text(path, "\n".join(lines) + "\n")


def read_beams_json(path) -> BeamTable:
    """Read a beam-table JSON file.

    Raises
    ------
    FileFormatError
        For invalid JSON (with its line), a missing or unknown key, counts that do not match,
        or codes outside the states' range.
    """
    path = Path(path)
    text = weight_text(path, "json")
    check_nesting(path, text)
    try:
        doc = json.loads(text)
    except json.JSONDecodeError as exc:
        if not text.lstrip().startswith("{"):
            raise FileFormatError(path, not_a("json", f"not a JSON object ({exc.msg})"),
                                  exc.lineno) from None
        raise FileFormatError(path, f"not valid JSON: {exc.msg}", exc.lineno) from None
    except ValueError as exc:  # an integer of more than 4,300 digits
        raise FileFormatError(path, f"not valid JSON: {str(exc).split(';')[0]}") from None
    enc, n, nb = _top(path, doc)
    try:
        states = StateMap.from_dict(doc["states"])
    except (ValueError, TypeError, OverflowError) as exc:  # SteradianError is a ValueError
        raise FileFormatError(path, f"'states': {exc}") from None
    off, pos, on = _elements(path, doc["elements"], n, doc["layout_version"])
    if "n_enabled" in doc and doc["n_enabled"] != int(np.count_nonzero(on)):
        raise FileFormatError(path, f"'n_enabled' is {shown(doc['n_enabled'])} but "
                              f"'elements.enabled' turns {int(np.count_nonzero(on))} on")
    beams = doc["beams"]
    if not isinstance(beams, list) or len(beams) != nb:
        got = len(beams) if isinstance(beams, list) else type(beams).__name__
        raise FileFormatError(path, f"'beams' must list n_beams = {nb} beams, got {got}")
    dirs, codes, metrics, kinds = [], [], [], []
    for b, d in enumerate(beams):
        direction, pair = _beam(path, b, d, enc, n)
        kind = d.get("kind", "sum") if doc["layout_version"] >= 3 else "sum"
        if kind not in BEAM_KINDS:
            raise FileFormatError(path, f"beams[{b}].kind must be one of "
                                  f"{', '.join(BEAM_KINDS)}, got {shown(kind)}")
        kinds.append(kind)
        dirs.append(direction)
        codes.append(list(zip(*pair, strict=True)))
        metrics.append(d.get("metrics"))
    has_m = [m is not None for m in metrics]
    if any(has_m) and not all(has_m):
        raise FileFormatError(path, f"beams[{has_m.index(not has_m[0])}]: metrics must be on "
                              "every beam or none")
    check_extras(path, doc.get("metadata"), metrics if all(has_m) else None, nb)
    try:
        return BeamTable(states, np.array(dirs, float), np.array(codes, np.int64), enc,
                         np.array(off, float), None if pos is None else np.array(pos, float),
                         doc.get("metadata") or {}, tuple(metrics) if all(has_m) else None,
                         on, tuple(kinds))
    except (TypeError, ValueError, OverflowError) as exc:  # SteradianError is a ValueError
        raise FileFormatError(path, str(exc)) from None


def _top(path, doc) -> tuple[str, int, int]:
    """Check the top-level keys; returns (encoding, n_elements, n_beams)."""
    if not isinstance(doc, dict):
        raise FileFormatError(path, not_a("json", "the file must hold one JSON object"))
    if doc.get("format") != FORMAT_ID:
        raise FileFormatError(path, not_a("json", f"'format' must be {shown(FORMAT_ID)}, got "
                                          f"{shown(doc.get('format'))}"))
    ver = doc.get("layout_version")
    if isinstance(ver, bool) or ver not in READS:
        raise FileFormatError(path, f"layout_version {shown(ver)} is not supported (this "
                              f"steradian reads {' and '.join(map(str, READS))})")
    for k in doc:
        if k not in _TOP:
            raise FileFormatError(path, f"unknown key {shown(k)}")
    for k in ("encoding", "n_elements", "n_beams", "states", "elements", "beams"):
        if k not in doc:
            raise FileFormatError(path, f"missing key {shown(k)}")
    enc = doc["encoding"]
    if enc not in ("codes", "iq"):
        raise FileFormatError(path, f"'encoding' must be 'codes' or 'iq', got {shown(enc)}")
    if enc == "iq" and doc.get("iq_format") != "Q1.15":
        raise FileFormatError(path, f"'iq_format' must be 'Q1.15', got "
                              f"{shown(doc.get('iq_format'))}")
    n, nb = doc["n_elements"], doc["n_beams"]
    for k, v in (("n_elements", n), ("n_beams", nb)):
        if isinstance(v, bool) or not isinstance(v, int) or v < 1:
            raise FileFormatError(path, f"{shown(k)} must be a whole number >= 1, got {shown(v)}")
    return enc, n, nb


def _elements(path, el, n: int, version: int):
    """(phase offsets, positions or None, enable mask) of the ``elements`` object."""
    keys = {"phase_offset_deg", "positions_m"} | ({"enabled"} if version >= 2 else set())
    if not isinstance(el, dict) or set(el) != keys:
        raise FileFormatError(path, f"'elements' must hold {', '.join(sorted(keys))}")
    on = el.get("enabled")  # absent in layout 1: every element on
    if on is not None and (not isinstance(on, list) or len(on) != n
                           or not all(type(x) is int and x in (0, 1) for x in on)):
        raise FileFormatError(path, f"'elements.enabled' must list {n} values of 0 or 1")
    off = el["phase_offset_deg"]
    if not isinstance(off, list) or len(off) != n:
        raise FileFormatError(path, f"'elements.phase_offset_deg' must list {n} values")
    pos = el["positions_m"]
    if pos is not None and (not isinstance(pos, list) or len(pos) != n):
        raise FileFormatError(path, f"'elements.positions_m' must list {n} [x, y, z] triples "
                              "or be null")
    return off, pos, np.ones(len(off), bool) if on is None else np.array(on, bool)


def _beam(path, b: int, d, enc: str, n: int):
    """((theta, phi), [state lists]) of beam ``b``."""
    keys = ("phase_code", "amplitude_code") if enc == "codes" else ("i_q15", "q_q15")
    allowed = {"beam", "theta_deg", "phi_deg", "metrics", "kind", *keys}
    if not isinstance(d, dict):
        raise FileFormatError(path, f"beams[{b}] must be an object")
    for k in d:
        if k not in allowed:
            raise FileFormatError(path, f"beams[{b}]: unknown key {shown(k)} for encoding "
                                  f"{shown(enc)}")
    if d.get("beam") != b:
        raise FileFormatError(path, f"beams[{b}] has 'beam' = {shown(d.get('beam'))}; beams must "
                              "be numbered 0, 1, 2, ... in order")
    for k in ("theta_deg", "phi_deg"):
        v = d.get(k)
        if isinstance(v, bool) or not isinstance(v, (int, float)) or abs(v) > 1e300:
            raise FileFormatError(path, f"beams[{b}].{k} must be a number, got {shown(v)}")
    pair = []
    for k in keys:
        v = d.get(k)
        if not isinstance(v, list):
            raise FileFormatError(path, f"beams[{b}].{k} is missing or not a list")
        if len(v) != n:
            raise FileFormatError(path, f"beams[{b}].{k} has {len(v)} entries but n_elements "
                                  f"is {n}")
        if not all(isinstance(x, int) and not isinstance(x, bool)
                   and -CODE_LIMIT <= x < CODE_LIMIT for x in v):
            raise FileFormatError(path, f"beams[{b}].{k} must hold whole numbers in "
                                  f"-2^31..2^31-1")
        pair.append(v)
    return (float(d["theta_deg"]), float(d["phi_deg"])), pair
