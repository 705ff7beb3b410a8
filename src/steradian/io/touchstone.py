"""Touchstone version 1 files (``.sNp``): N-port scattering parameters against frequency.

The open Touchstone File Format Specification (version 1.1, IBIS Open Forum, 2002): ``!``
starts a comment; the option line ``# <unit> <parameter> <format> R <n>`` gives the frequency
unit (Hz, kHz, MHz, GHz; default GHz), the parameter (S is read here), the number format (RI
real-imaginary, MA magnitude-angle in degrees, DB dB-angle; default MA) and the reference
resistance of every port (default 50 ohm). Each frequency is followed by N^2 number pairs:
row by row for N >= 3 (at most four pairs per line, every row on a new line), and in the
order 11, 21, 12, 22 for two ports. Two-port files may end with noise parameters (five
numbers a line), which are skipped. Version 2 keywords (``[Version]``) are refused.

Own reader (no extra dependency); ``tests/test_touchstone.py`` checks it by round trip and,
when scikit-rf is installed, against scikit-rf's reader.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import FileFormatError, SteradianError
from .atomic import atomic_open

__all__ = ["Network", "read_touchstone", "write_touchstone", "UNITS", "NUMBER_FORMATS"]

UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
NUMBER_FORMATS = ("RI", "MA", "DB")
_SUFFIX = re.compile(r"\.s(\d+)p$", re.IGNORECASE)


@dataclass(frozen=True, eq=False)
class Network:
    """Scattering parameters of an N-port: ``s`` (F, N, N) at ``frequencies`` (F,) in Hz,
    reference resistance ``z0`` (N,) in ohm, and the file's comment lines."""

    frequencies: np.ndarray
    s: np.ndarray
    z0: np.ndarray
    comments: tuple = ()

    @property
    def n_ports(self) -> int:
        return self.s.shape[1]


def _ports(path: Path) -> int:
    m = _SUFFIX.search(path.name)
    if not m or int(m.group(1)) < 1:
        raise FileFormatError(path, "a Touchstone file name ends in .sNp (N the number of "
                              "ports), e.g. panel.s16p")
    return int(m.group(1))


def _options(tokens, path, line):
    unit, fmt, r = "ghz", "MA", 50.0
    i = 0
    while i < len(tokens):
        t = tokens[i].lower()
        if t in UNITS:
            unit = t
        elif t.upper() in NUMBER_FORMATS:
            fmt = t.upper()
        elif t in ("y", "z", "g", "h"):
            raise FileFormatError(path, f"{t.upper()}-parameters are not read; convert the "
                                  "file to S-parameters", line)
        elif t == "s":
            pass
        elif t == "r" and i + 1 < len(tokens):
            try:
                r = float(tokens[i + 1])
            except ValueError:
                r = math.nan
            if not (math.isfinite(r) and r > 0):
                raise FileFormatError(path, f"reference resistance R {tokens[i + 1]!r} must "
                                      "be a positive number", line)
            i += 1
        else:
            raise FileFormatError(path, f"unknown option {tokens[i]!r} in the option line "
                                  "(# <Hz|kHz|MHz|GHz> S <RI|MA|DB> R <ohm>)", line)
        i += 1
    return UNITS[unit], fmt, r


def _lines(path: Path):
    """(line number, tokens) of the data lines, the option line's tokens and the comments."""
    try:
        text = path.read_text(encoding="utf-8", errors="strict")
    except UnicodeDecodeError:
        raise FileFormatError(path, "not a Touchstone file (not UTF-8/ASCII text)") from None
    except OSError as exc:
        raise FileFormatError(path, f"cannot read: {exc.strerror or exc}") from None
    data, option, comments = [], None, []
    for no, raw in enumerate(text.splitlines(), 1):
        body, _, comment = raw.partition("!")
        if _:
            comments.append(comment.strip())
        body = body.strip()
        if not body:
            continue
        if body.startswith("["):
            raise FileFormatError(path, "Touchstone version 2 keywords are not read (save "
                                  "the file as version 1)", no)
        if body.startswith("#"):
            if option is None:
                option = (no, body[1:].split())
            continue
        data.append((no, body.split()))
    return data, option, comments


def _to_complex(x, y, fmt):
    if fmt == "RI":
        return x + 1j * y
    mag = x if fmt == "MA" else 10 ** (x / 20)
    return mag * np.exp(1j * np.radians(y))


def read_touchstone(path) -> Network:
    """Read a Touchstone v1 ``.sNp`` file.

    Raises
    ------
    FileFormatError
        Naming the file and line: a bad option line, a number that is not one, a frequency
        that does not increase, an incomplete last record.
    """
    path = Path(path)
    n = _ports(path)
    data, option, comments = _lines(path)
    scale, fmt, r = _options(option[1] if option else [], path, option[0] if option else None)
    per = 1 + 2 * n * n
    values, where = [], []
    for no, toks in data:
        if n == 2 and len(toks) == 5 and values and len(values) % per == 0:
            break  # noise parameters
        for t in toks:
            try:
                v = float(t)
            except ValueError:
                raise FileFormatError(path, f"{t!r} is not a number", no) from None
            if not math.isfinite(v):
                raise FileFormatError(path, f"{t!r} is not a finite number", no)
            values.append(v)
            where.append(no)
    if not values:
        raise FileFormatError(path, "no data: not a Touchstone file")
    if len(values) % per:
        raise FileFormatError(path, f"the last record is incomplete ({len(values) % per} of "
                              f"{per} numbers for {n} ports)", where[-1])
    rec = np.asarray(values).reshape(-1, per)
    freqs = rec[:, 0] * scale
    bad = np.flatnonzero(np.diff(freqs) <= 0)
    if bad.size:
        raise FileFormatError(path, "frequencies must increase", where[(bad[0] + 1) * per])
    if freqs[0] < 0:
        raise FileFormatError(path, "frequencies must not be negative", where[0])
    pairs = rec[:, 1:].reshape(-1, n * n, 2)
    s = _to_complex(pairs[..., 0], pairs[..., 1], fmt).reshape(-1, n, n)
    if n == 2:
        s = np.swapaxes(s, 1, 2)  # 11, 21, 12, 22
    return Network(freqs, s, np.full(n, r), tuple(comments))


def _pair(z, fmt):
    if fmt == "RI":
        return z.real, z.imag
    ang = math.degrees(math.atan2(z.imag, z.real))
    mag = abs(z)
    if fmt == "MA":
        return mag, ang
    return (20 * math.log10(mag) if mag > 0 else -400.0), ang


def _g(x) -> str:
    return f"{x:.17g}"


def write_touchstone(path, network: Network, *, number_format: str = "RI",
                     unit: str = "Hz", comments=()) -> None:
    """Write ``network`` as a Touchstone v1 file (atomically); the name must end in .sNp
    with N its number of ports. Numbers carry 17 significant digits (RI round-trips
    exactly)."""
    path = Path(path)
    s = np.asarray(network.s, complex)
    n = s.shape[1]
    if _ports(path) != n:
        raise SteradianError(f"{path.name}: a {n}-port network is written to a .s{n}p file")
    fmt = number_format.upper()
    if fmt not in NUMBER_FORMATS:
        raise SteradianError(f"number_format must be one of {', '.join(NUMBER_FORMATS)}")
    if unit.lower() not in UNITS:
        raise SteradianError(f"unit must be one of Hz, kHz, MHz, GHz, got {unit!r}")
    z0 = np.asarray(network.z0, float)
    if np.any(z0 != z0[0]):
        raise SteradianError("Touchstone version 1 holds one reference resistance for every "
                             "port; these ports have several")
    scale = UNITS[unit.lower()]
    with atomic_open(path, "w", encoding="utf-8") as fh:
        for c in (*network.comments, *comments):
            fh.write(f"! {c}\n")
        fh.write(f"# {unit} S {fmt} R {_g(z0[0])}\n")
        for f, m in zip(network.frequencies, s, strict=True):
            order = m.T.ravel() if n == 2 else m.ravel()
            nums = [v for z in order for v in _pair(complex(z), fmt)]
            if n <= 2:
                fh.write(" ".join([_g(f / scale), *map(_g, nums)]) + "\n")
                continue
            lead = _g(f / scale)
            for row in range(n):
                rn = nums[2 * n * row: 2 * n * (row + 1)]
                for i in range(0, len(rn), 8):
                    fh.write(lead + " " + " ".join(map(_g, rn[i:i + 8])) + "\n")
                    lead = " "
