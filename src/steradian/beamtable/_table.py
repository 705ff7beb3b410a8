"""Part of :mod:`steradian.beamtable` (see the package docstring)."""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Literal, get_args

import numpy as np

from ..array import direction
from ..errors import SteradianError
from ..quantize import OFF_CODE, StateMap
from ..validate import choice

Encoding = Literal["codes", "iq"]

BEAM_KINDS = ("sum", "difference_az", "difference_el")
"""Beam kinds a table holds, in the order of their file codes (0, 1, 2): a sum beam, and the
comparator difference beams of a monopulse array in azimuth (sign flipped on the half
x < centroid) and elevation (y < centroid)."""

IQ_SCALE = 32768
"""Fixed-point I/Q is Q1.15: value = integer / 32768, integers in [-32768, 32767]."""


def jsonable(obj):
    """``obj`` with plain JSON types only: the one JSON normaliser of the package.

    numpy scalars and arrays become Python numbers and lists, tuples become lists, non-finite
    floats become None, complex numbers ``{"re": .., "im": ..}``, paths and any other object
    their ``str``. Used for beam-table metadata and metrics, and for the command line's JSON.
    """
    if isinstance(obj, dict):
        return {str(k): jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [jsonable(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return jsonable(obj.tolist())
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        x = float(obj)
        return x if math.isfinite(x) else None
    if isinstance(obj, (complex, np.complexfloating)):
        return {"re": jsonable(obj.real), "im": jsonable(obj.imag)}
    if obj is None or isinstance(obj, str):
        return obj
    return str(obj)


# ---------------------------------------------------------------------------------------
# The weight-file content
# ---------------------------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class BeamTable:
    """Hardware states of B beams over N elements: what every weight file holds.

    Parameters
    ----------
    states : StateMap
        Meaning of the codes.
    directions : array_like, shape (B, 2)
        Commanded (theta_deg, phi_deg) of each beam.
    codes : array_like of int, shape (B, N, 2)
        ``encoding="codes"``: (phase code, amplitude code) per beam and element.
        ``encoding="iq"``: the (I, Q) integers of the commanded state in Q1.15
        (value = integer / :data:`IQ_SCALE`).
    encoding : {"codes", "iq"}
    phase_offsets_deg : array_like, shape (N,), optional
        Channel path phases the hardware adds (zeros by default).
    positions : array_like, shape (N, 3), optional
        Element positions (m), carried for reference and checked against the design.
    metadata : dict, optional
        JSON-friendly description (design frequency, geometry, taper, channel, version ...).
    metrics : sequence of dict, optional
        Predicted metrics of each beam (as built).
    enabled : array_like of bool, shape (N,), optional
        Element enable mask (default all on). A disabled element is *off* in every beam:
        its codes are the off flag ``(OFF_CODE, OFF_CODE)`` = (65535, 65535), its I/Q
        exactly (0, 0), and its commanded state zero.
    kinds : sequence of str, length B, optional
        Kind of each beam, one of :data:`BEAM_KINDS` (default all ``"sum"``). Stored as a
        tuple, or None when every beam is a sum beam (so a table of sum beams is the same
        whatever was given); :attr:`beam_kinds` always gives the B kinds.
    """

    states: StateMap
    directions: np.ndarray
    codes: np.ndarray
    encoding: Encoding = "codes"
    phase_offsets_deg: np.ndarray | None = None
    positions: np.ndarray | None = None
    metadata: dict = field(default_factory=dict)
    metrics: tuple | None = None
    enabled: np.ndarray | None = None
    kinds: tuple | None = None

    def __post_init__(self):
        if not isinstance(self.states, StateMap):
            raise SteradianError("states must be a StateMap")
        choice("encoding", self.encoding, get_args(Encoding))
        d = np.asarray(self.directions, float)
        if d.ndim != 2 or d.shape[1] != 2 or len(d) == 0:
            raise SteradianError(f"directions must have shape (B, 2) with B >= 1, got {d.shape}")
        if not np.all(np.isfinite(d)):
            raise SteradianError("beam directions contain NaN or infinity")
        bad = (d[:, 0] < 0) | (d[:, 0] > 180)
        if bad.any():
            b = int(np.flatnonzero(bad)[0])
            raise SteradianError(f"beam {b}: theta_deg {d[b, 0]} is outside [0, 180]")
        raw = np.asarray(self.codes)
        if raw.ndim != 3 or raw.shape[2] != 2 or raw.shape[0] != len(d) or raw.shape[1] == 0:
            raise SteradianError(f"codes must have shape ({len(d)}, N, 2), got {raw.shape}")
        if raw.dtype.kind == "f":
            if not np.all(np.isfinite(raw)) or np.any(raw != np.rint(raw)):
                raise SteradianError("codes must be whole numbers")
        elif raw.dtype.kind not in "iu":
            raise SteradianError(f"codes must be integers, got dtype {raw.dtype}")
        c = raw.astype(np.int64)
        n = c.shape[1]
        on = _mask(self.enabled, n)
        _check_states(self.states, self.encoding, c, on)
        off = (np.zeros(n) if self.phase_offsets_deg is None
               else np.asarray(self.phase_offsets_deg, float).reshape(-1))
        if off.shape != (n,) or not np.all(np.isfinite(off)):
            raise SteradianError(f"phase offsets must be {n} finite values, got shape "
                                 f"{off.shape}")
        pos = None
        if self.positions is not None:
            pos = np.asarray(self.positions, float)
            if pos.shape != (n, 3) or not np.all(np.isfinite(pos)):
                raise SteradianError(f"positions must be finite with shape ({n}, 3), got "
                                     f"{pos.shape}")
        for name, a in (("directions", d), ("codes", c), ("phase_offsets_deg", off),
                        ("positions", pos), ("enabled", on)):
            if a is not None:
                a = np.ascontiguousarray(a)
                a.setflags(write=False)
            object.__setattr__(self, name, a)
        object.__setattr__(self, "kinds", _kinds(self.kinds, len(d)))
        object.__setattr__(self, "metadata", jsonable(dict(self.metadata or {})))
        if self.metrics is not None:
            m = jsonable(list(self.metrics))
            if len(m) != len(d):
                raise SteradianError(f"metrics must be one dict per beam: {len(d)} beams, got "
                                     f"{len(m)} entries")
            if not all(isinstance(x, dict) for x in m):
                b = next(i for i, x in enumerate(m) if not isinstance(x, dict))
                raise SteradianError(f"metrics[{b}] must be a dict, got {type(m[b]).__name__}")
            object.__setattr__(self, "metrics", tuple(m))

    @property
    def n_beams(self) -> int:
        return self.codes.shape[0]

    @property
    def n_elements(self) -> int:
        return self.codes.shape[1]

    @property
    def n_enabled(self) -> int:
        """Number of enabled (not off) elements."""
        return int(np.count_nonzero(self.enabled))

    def commanded(self) -> np.ndarray:
        """Nominal complex channel states, shape (B, N); exactly 0 for disabled elements."""
        if self.encoding == "codes":
            c = np.where(self.enabled[:, None], self.codes, 0)
            return np.where(self.enabled, self.states.commanded(c[..., 0], c[..., 1]), 0.0)
        return (self.codes[..., 0] + 1j * self.codes[..., 1]) / IQ_SCALE

    def as_encoding(self, encoding: Encoding) -> BeamTable:
        """The same table in the other encoding.

        codes -> iq rounds each commanded state to Q1.15 (saturating at 32767);
        iq -> codes takes the nearest phase and amplitude state of each I/Q value.
        """
        choice("encoding", encoding, get_args(Encoding))
        if encoding == self.encoding:
            return self
        c = self.commanded()
        if encoding == "iq":
            iq = np.stack([c.real, c.imag], -1) * IQ_SCALE
            new = np.clip(np.rint(iq), -IQ_SCALE, IQ_SCALE - 1).astype(np.int64)
        else:
            pc = self.states.nearest_phase_code(np.angle(c, deg=True))
            ac = self.states.nearest_amplitude_code(np.abs(c))
            new = np.where(self.enabled[:, None], np.stack([pc, ac], -1), OFF_CODE)
        return replace(self, codes=new, encoding=encoding)

    def same_weights(self, other: BeamTable) -> bool:
        """Exact equality of everything a weight file carries (metadata aside)."""
        def eq(a, b):
            if a is None or b is None:
                return a is None and b is None
            return a.shape == b.shape and bool(np.all(a == b))
        return (self.states == other.states and self.encoding == other.encoding
                and eq(self.directions, other.directions) and eq(self.codes, other.codes)
                and eq(self.phase_offsets_deg, other.phase_offsets_deg)
                and eq(self.positions, other.positions) and eq(self.enabled, other.enabled)
                and self.kinds == other.kinds)

    @property
    def beam_kinds(self) -> tuple:
        """The kind of every beam (B,), "sum" unless :attr:`kinds` says otherwise."""
        return ("sum",) * self.n_beams if self.kinds is None else self.kinds

    @property
    def has_difference(self) -> bool:
        """True when any beam is not a sum beam."""
        return self.kinds is not None

    def units(self) -> np.ndarray:
        """Commanded directions as unit vectors, shape (B, 3)."""
        return np.array([direction(t, p) for t, p in self.directions])




def _kinds(kinds, nb: int) -> tuple:
    """The per-beam kinds as a tuple of str, checked (None when all are "sum")."""
    if kinds is None:
        return None
    k = tuple(str(x) for x in (kinds.tolist() if isinstance(kinds, np.ndarray) else kinds))
    if len(k) != nb:
        raise SteradianError(f"kinds must be one per beam: {nb} beams, got {len(k)}")
    for b, x in enumerate(k):
        if x not in BEAM_KINDS:
            raise SteradianError(f"beam {b}: kind {x!r} is not one of "
                                 f"{', '.join(BEAM_KINDS)}")
    return None if all(x == "sum" for x in k) else k


def _mask(enabled, n: int) -> np.ndarray:
    """The enable mask as bool (N,) (all on by default)."""
    if enabled is None:
        return np.ones(n, bool)
    e = np.asarray(enabled)
    if e.shape != (n,) or (e.dtype.kind not in "bui") or not np.all((e == 0) | (e == 1)):
        raise SteradianError(f"enabled must be {n} values of 0/1 or true/false, got shape "
                             f"{e.shape}")
    if not e.any():
        raise SteradianError("every element is disabled")
    return e.astype(bool)


def _check_states(states: StateMap, encoding: str, c: np.ndarray, on: np.ndarray) -> None:
    """Raise naming the first state out of range, or an off state that disagrees with the
    enable mask (beam, element)."""
    off = (OFF_CODE, OFF_CODE) if encoding == "codes" else (0, 0)
    bad = ~on[None, :] & np.any(c != off, axis=2)
    if bad.any():
        b, n = (int(i) for i in np.argwhere(bad)[0])
        what = "the off flag (65535, 65535)" if encoding == "codes" else "I/Q (0, 0)"
        raise SteradianError(f"beam {b}, element {n}: element is disabled but holds "
                             f"{c[b, n].tolist()}, not {what}")
    c = np.where(on[None, :, None], c, 0)
    if encoding == "codes":
        flag = on[None, :] & np.all(c == OFF_CODE, axis=2)
        flag &= (states.phase_states <= OFF_CODE) | (states.amplitude_states <= OFF_CODE)
        if flag.any():
            b, n = (int(i) for i in np.argwhere(flag)[0])
            raise SteradianError(f"beam {b}, element {n} holds the off flag (65535, 65535) "
                                 "but the enable mask says the element is on")
        states.check_codes(c[..., 0], c[..., 1])
        return
    bad = (c < -IQ_SCALE) | (c >= IQ_SCALE)
    if bad.any():
        b, n, k = (int(i) for i in np.argwhere(bad)[0])
        raise SteradianError(f"beam {b}, element {n}: {'IQ'[k]} value {int(c[b, n, k])}"
                             f" is outside the Q1.15 range -32768..32767")
