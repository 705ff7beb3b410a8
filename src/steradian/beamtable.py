r"""Beam tables: steering grids, quantized weights per beam, and their re-evaluation.

A beam table is what a beamformer loads: for each steering direction, one hardware state
per element. :func:`build_beam_table` computes each beam's ideal weights (the array's taper,
or any weights you supply, steered), rounds them with a :class:`~steradian.quantize.ChannelModel`
and re-evaluates what the quantized beam really radiates. :func:`verify_beam_table` does the
re-evaluation for a table read from a file, so a file produced elsewhere or edited by hand is
checked against the design before it reaches hardware.

Per beam the evaluation reports (levels in dB, angles in degrees):

- ``directivity_dbi``, ``gain_dbi``: peak directivity of the realised beam and gain
  :math:`G = \xi D` with the radiation efficiency :math:`\xi` given;
- ``peak_theta_deg``, ``peak_phi_deg`` and ``pointing_error_deg``: the refined peak and its
  angle from the commanded direction (for a collinear array of isotropic elements, the error
  of the cone angle from the array axis);
- ``psl_db``: highest sidelobe (any local maximum outside the main lobe, quantization and
  grating lobes included) relative to the peak;
- ``qlobe_db``: *quantization-lobe level*, the peak of the pattern radiated by the
  quantization error alone, :math:`e = w_q - s\,w_0` with :math:`s = w_0^H w_q / w_0^H w_0`
  the least-squares scale of the ideal weights :math:`w_0`, relative to the realised peak;
- ``ideal_directivity_dbi``, ``ideal_psl_db``, ``ideal_pointing_error_deg`` and ``loss_db``:
  the ideal beam's peak directivity, sidelobe level and pointing error, and the directivity
  lost to quantization (ideal minus realised peak directivity);
- ``rms_phase_error_deg``: RMS phase difference between realised and best-fit ideal weights.

Speed: work that does not depend on the weights is done once per array by
:class:`BeamEvaluator`: the radiated-power matrix :math:`Q` (so :math:`P = w^H Q w` per
beam), and the element responses on a search set of directions (so every beam's pattern on
it is one matrix product). Peaks are then refined off the grid by a few batched Newton steps
on :math:`\ln U` in the tangent plane.

Direction conventions: theta from +z, phi from +x toward +y. Azimuth-elevation grids use
:math:`\hat r = (\cos el \sin az,\ \sin el,\ \cos el \cos az)`: azimuth turns from +z toward
+x in the x-z plane, elevation lifts toward +y, so (0, 0) is broadside of a planar array.
"""

from __future__ import annotations

import csv
import difflib
import io
import json
import math
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Literal, get_args

import numpy as np

from ._validate import check_table_keys, choice, positive
from .array import Steering, direction
from .elements import Isotropic
from .engine import MEMORY_BUDGET, response_matrix
from .errors import DesignError, FileFormatError, SteradianError
from .grids import Directions
from .quantize import ChannelModel, StateMap, wrap_deg
from .radiation import fibonacci_directions, power_matrix

__all__ = [
    "BeamTable",
    "BeamMetrics",
    "BeamBuild",
    "Verification",
    "BeamEvaluator",
    "Encoding",
    "IQ_SCALE",
    "FORMATS",
    "DB_FLOOR",
    "span",
    "theta_phi_directions",
    "az_el_directions",
    "az_el_to_theta_phi",
    "read_directions",
    "beams_from_table",
    "BEAMS_KEYS",
    "steered_weights",
    "build_beam_table",
    "verify_beam_table",
    "read_weight_file",
    "write_weight_file",
    "write_beam_files",
    "channel_of_design",
    "beam_table_from_design",
    "verify_weight_file",
]

Encoding = Literal["codes", "iq"]

IQ_SCALE = 32768
"""Fixed-point I/Q is Q1.15: value = integer / 32768, integers in [-32768, 32767]."""

DB_FLOOR = -300.0
"""Lowest level reported (dB) instead of -inf."""

RESPONSE_BUDGET = 512 * 2**20
"""Bytes of element responses on the search set a BeamEvaluator keeps (beyond: recomputed)."""

BEAM_CHUNK_BYTES = 256 * 2**20
"""Bytes of (directions x beams) work arrays one evaluation pass may use."""

FORMATS = {".csv": "csv", ".json": "json", ".bin": "bin", ".h": "h"}
"""File suffix -> weight-file format name."""


def _db(x):
    x = np.asarray(x, float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.maximum(10 * np.log10(np.maximum(x, 0.0)), DB_FLOOR)


def _jsonable(obj):
    """numpy / tuples / non-finite floats -> plain JSON types (non-finite -> None)."""
    if isinstance(obj, dict):
        return {str(k): _jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_jsonable(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return _jsonable(obj.tolist())
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        x = float(obj)
        return x if math.isfinite(x) else None
    if isinstance(obj, Path):
        return str(obj)
    if obj is None or isinstance(obj, str):
        return obj
    return str(obj)


def _normal_json(obj):
    return json.loads(json.dumps(_jsonable(obj)))


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
    """

    states: StateMap
    directions: np.ndarray
    codes: np.ndarray
    encoding: Encoding = "codes"
    phase_offsets_deg: np.ndarray | None = None
    positions: np.ndarray | None = None
    metadata: dict = field(default_factory=dict)
    metrics: tuple | None = None

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
        if self.encoding == "codes":
            self.states.check_codes(c[..., 0], c[..., 1])
        else:
            bad = (c < -IQ_SCALE) | (c >= IQ_SCALE)
            if bad.any():
                b, n, k = (int(i) for i in np.argwhere(bad)[0])
                raise SteradianError(f"beam {b}, element {n}: {'IQ'[k]} value {int(c[b, n, k])}"
                                     f" is outside the Q1.15 range -32768..32767")
        n = c.shape[1]
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
                        ("positions", pos)):
            if a is not None:
                a = np.ascontiguousarray(a)
                a.setflags(write=False)
            object.__setattr__(self, name, a)
        object.__setattr__(self, "metadata", _normal_json(dict(self.metadata or {})))
        if self.metrics is not None:
            m = _normal_json(list(self.metrics))
            if len(m) != len(d) or not all(isinstance(x, dict) for x in m):
                raise SteradianError(f"metrics must be one dict per beam ({len(d)}), got "
                                     f"{len(m)}")
            object.__setattr__(self, "metrics", tuple(m))

    @property
    def n_beams(self) -> int:
        return self.codes.shape[0]

    @property
    def n_elements(self) -> int:
        return self.codes.shape[1]

    def commanded(self) -> np.ndarray:
        """Nominal complex channel states, shape (B, N)."""
        if self.encoding == "codes":
            return self.states.commanded(self.codes[..., 0], self.codes[..., 1])
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
            new = np.stack([pc, ac], -1)
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
                and eq(self.positions, other.positions))

    def units(self) -> np.ndarray:
        """Commanded directions as unit vectors, shape (B, 3)."""
        return np.array([direction(t, p) for t, p in self.directions])


# ---------------------------------------------------------------------------------------
# Steering grids
# ---------------------------------------------------------------------------------------
def span(start: float, stop: float, step: float) -> np.ndarray:
    """Values start, start + step, ... up to stop inclusive (to 1e-9 of a step)."""
    step = positive("step", step)
    if stop < start:
        raise SteradianError(f"stop {stop} is below start {start}")
    n = math.floor((stop - start) / step + 1e-9) + 1
    return start + step * np.arange(n)


def theta_phi_directions(theta_deg, phi_deg) -> np.ndarray:
    """Product grid of theta and phi values (degrees), shape (B, 2).

    theta = 0 (and 180) is one direction whatever phi, so it appears once (phi = 0).
    """
    th = np.atleast_1d(np.asarray(theta_deg, float))
    ph = np.atleast_1d(np.asarray(phi_deg, float))
    if np.any((th < 0) | (th > 180)):
        raise SteradianError(f"theta_deg values must be in [0, 180], got {th.min()}..{th.max()}")
    out = []
    for t in th:
        if t in (0.0, 180.0):
            out.append((t, 0.0))
        else:
            out.extend((t, p) for p in ph)
    return np.array(out, float).reshape(-1, 2)


def az_el_to_theta_phi(az_deg, el_deg) -> tuple[np.ndarray, np.ndarray]:
    """Azimuth-elevation (degrees) to theta-phi (degrees); see the module conventions."""
    az, el = np.deg2rad(np.asarray(az_deg, float)), np.deg2rad(np.asarray(el_deg, float))
    x, y, z = np.cos(el) * np.sin(az), np.sin(el), np.cos(el) * np.cos(az)
    theta = np.rad2deg(np.arccos(np.clip(z, -1, 1)))
    phi = np.where(np.hypot(x, y) > 1e-15, np.rad2deg(np.arctan2(y, x)), 0.0)
    return theta, phi


def az_el_directions(az_deg, el_deg) -> np.ndarray:
    """Product grid of azimuth by elevation values (degrees) as (theta, phi), shape (B, 2)."""
    az = np.atleast_1d(np.asarray(az_deg, float))
    el = np.atleast_1d(np.asarray(el_deg, float))
    if np.any(np.abs(el) > 90):
        raise SteradianError(f"el_deg values must be in [-90, 90], got {el.min()}..{el.max()}")
    a, e = np.meshgrid(az, el, indexing="ij")
    t, p = az_el_to_theta_phi(a.ravel(), e.ravel())
    return np.column_stack([t, p])


def read_directions(path) -> np.ndarray:
    """Beam directions from a CSV file, shape (B, 2) as (theta_deg, phi_deg).

    Columns ``theta_deg,phi_deg`` or ``az_deg,el_deg`` (one pair, any order; ``#`` comment
    lines and blank lines ignored).
    """
    path = Path(path)
    header, rows = None, []
    for lineno, line in enumerate(path.read_text(encoding="utf-8-sig").splitlines(), 1):
        s = line.strip()
        if not s or s.startswith("#"):
            continue
        f = [x.strip() for x in next(csv.reader(io.StringIO(s)))]
        if header is None:
            header = f
            pairs = ({"theta_deg", "phi_deg"}, {"az_deg", "el_deg"})
            if set(header) not in pairs:
                raise FileFormatError(path, f"columns must be theta_deg,phi_deg or az_deg,"
                                      f"el_deg, got {','.join(header)}", lineno)
            continue
        if len(f) != 2:
            raise FileFormatError(path, f"expected 2 fields, got {len(f)}", lineno)
        try:
            vals = dict(zip(header, map(float, f), strict=True))
        except ValueError:
            raise FileFormatError(path, f"not a number in {s!r}", lineno) from None
        if not all(math.isfinite(v) for v in vals.values()):
            raise FileFormatError(path, f"non-finite angle in {s!r}", lineno)
        if "theta_deg" in vals and not 0 <= vals["theta_deg"] <= 180:
            raise FileFormatError(path, f"theta_deg {vals['theta_deg']} is outside [0, 180]",
                                  lineno)
        if "el_deg" in vals and abs(vals["el_deg"]) > 90:
            raise FileFormatError(path, f"el_deg {vals['el_deg']} is outside [-90, 90]",
                                  lineno)
        rows.append(vals)
    if not rows:
        raise FileFormatError(path, "no directions (need a header and one row per beam)")
    if "theta_deg" in header:
        return np.array([[r["theta_deg"], r["phi_deg"]] for r in rows], float)
    t, p = az_el_to_theta_phi([r["az_deg"] for r in rows], [r["el_deg"] for r in rows])
    return np.column_stack([t, p])


BEAMS_KEYS = ("grid", "theta_deg", "phi_deg", "az_deg", "el_deg", "file", "directions",
              "max_scan_deg")
"""Keys of a design file's ``[beams]`` table."""

GridKind = Literal["theta_phi", "az_el", "list"]


def beams_from_table(table: dict, *, source=None, base_dir=None,
                     section: str = "beams") -> np.ndarray:
    """Beam directions (theta_deg, phi_deg), shape (B, 2), from a design's ``[beams]`` table.

    ``grid = "theta_phi"`` with ``theta_deg`` and ``phi_deg``; ``grid = "az_el"`` with
    ``az_deg`` and ``el_deg``; each axis a list of values or ``{start, stop, step}``.
    ``grid = "list"`` with ``file`` (CSV, see :func:`read_directions`) or ``directions``
    (``[[theta, phi], ...]``). Optional ``max_scan_deg`` drops beams with larger theta.

    Raises
    ------
    DesignError
        Naming ``beams.<key>``, with the closest valid key for an unknown one.
    """
    src = None if source is None else str(source)
    check_table_keys(section, table, BEAMS_KEYS, src)
    kinds = get_args(GridKind)
    grid = table.get("grid")
    if grid not in kinds:
        hint = difflib.get_close_matches(str(grid), kinds, n=1)
        extra = f" (did you mean {hint[0]!r}?)" if hint else ""
        raise DesignError(f"{section}.grid", f"must be one of {', '.join(map(repr, kinds))}, "
                          f"got {grid!r}{extra}", src)
    need = {"theta_phi": ("theta_deg", "phi_deg"), "az_el": ("az_deg", "el_deg"), "list": ()}
    allowed = set(need[grid]) | {"grid", "max_scan_deg"} | (
        {"file", "directions"} if grid == "list" else set())
    for k in table:
        if k not in allowed:
            raise DesignError(f"{section}.{k}", f"does not apply to grid = {grid!r}", src)

    def axis(key):
        if key not in table:
            raise DesignError(f"{section}.{key}", f"is required for grid = {grid!r}", src)
        v = table[key]
        try:
            if isinstance(v, dict):
                extra = set(v) - {"start", "stop", "step"}
                if extra or len(v) != 3:
                    raise SteradianError("give start, stop and step")
                return span(float(v["start"]), float(v["stop"]), float(v["step"]))
            if isinstance(v, list) and v and all(
                    isinstance(x, (int, float)) and not isinstance(x, bool) for x in v):
                return np.array(v, float)
            raise SteradianError("must be a list of numbers or {start, stop, step}")
        except (SteradianError, TypeError, ValueError) as exc:
            raise DesignError(f"{section}.{key}", f"{exc} (got {v!r})", src) from None

    try:
        if grid == "theta_phi":
            d = theta_phi_directions(axis("theta_deg"), axis("phi_deg"))
        elif grid == "az_el":
            d = az_el_directions(axis("az_deg"), axis("el_deg"))
        else:
            if ("file" in table) == ("directions" in table):
                raise DesignError(f"{section}.file", "grid = 'list' needs file or "
                                  "directions (one of them)", src)
            if "file" in table:
                p = Path(str(table["file"]))
                if not p.is_absolute() and base_dir is not None:
                    p = Path(base_dir) / p
                if not p.is_file():
                    raise DesignError(f"{section}.file", f"file not found: {p}", src)
                d = read_directions(p)
            else:
                v = table["directions"]
                try:
                    d = np.array(v, float)
                except (TypeError, ValueError):
                    d = np.zeros((0, 0))
                if d.ndim != 2 or d.shape[1] != 2 or len(d) == 0:
                    raise DesignError(f"{section}.directions",
                                      "must be a list of [theta_deg, phi_deg] pairs", src)
                if np.any((d[:, 0] < 0) | (d[:, 0] > 180)) or not np.all(np.isfinite(d)):
                    raise DesignError(f"{section}.directions",
                                      "theta_deg values must be in [0, 180]", src)
    except DesignError:
        raise
    except SteradianError as exc:
        raise DesignError(section, str(exc), src) from None
    if "max_scan_deg" in table:
        m = table["max_scan_deg"]
        if isinstance(m, bool) or not isinstance(m, (int, float)) or not 0 <= m <= 180:
            raise DesignError(f"{section}.max_scan_deg", f"must be a number in [0, 180], "
                              f"got {m!r}", src)
        d = d[d[:, 0] <= m + 1e-9]
        if len(d) == 0:
            raise DesignError(f"{section}.max_scan_deg", f"{m} leaves no beams", src)
    return d


# ---------------------------------------------------------------------------------------
# Evaluation
# ---------------------------------------------------------------------------------------
_METRIC_FIELDS = ("theta_deg", "phi_deg", "peak_theta_deg", "peak_phi_deg", "directivity_dbi",
                  "gain_dbi", "pointing_error_deg", "psl_db", "qlobe_db",
                  "ideal_directivity_dbi", "ideal_psl_db", "ideal_pointing_error_deg", "loss_db",
                  "rms_phase_error_deg")


@dataclass(frozen=True, eq=False)
class BeamMetrics:
    """Per-beam metrics of a beam table, each an array of shape (B,) (see the module notes).

    ``qlobe_db``, ``ideal_*``, ``loss_db`` and ``rms_phase_error_deg`` are NaN when no ideal
    weights were given.
    """

    theta_deg: np.ndarray
    phi_deg: np.ndarray
    peak_theta_deg: np.ndarray
    peak_phi_deg: np.ndarray
    directivity_dbi: np.ndarray
    gain_dbi: np.ndarray
    pointing_error_deg: np.ndarray
    psl_db: np.ndarray
    qlobe_db: np.ndarray
    ideal_directivity_dbi: np.ndarray
    ideal_psl_db: np.ndarray
    ideal_pointing_error_deg: np.ndarray
    loss_db: np.ndarray
    rms_phase_error_deg: np.ndarray

    def __len__(self) -> int:
        return len(self.theta_deg)

    def rows(self) -> list[dict]:
        """One JSON-friendly dict per beam (``beam`` index first)."""
        cols = {f: np.asarray(getattr(self, f), float) for f in _METRIC_FIELDS}
        return [{"beam": i, **{f: _jsonable(cols[f][i]) for f in _METRIC_FIELDS}}
                for i in range(len(self))]

    def summary(self) -> dict:
        """Worst cases over the table."""
        def mx(a):
            a = np.asarray(a, float)
            return None if np.all(np.isnan(a)) else float(np.nanmax(a))

        def mn(a):
            a = np.asarray(a, float)
            return None if np.all(np.isnan(a)) else float(np.nanmin(a))

        def arg(a):
            a = np.asarray(a, float)
            return None if np.all(np.isnan(a)) else int(np.nanargmax(a))

        return {"beams": len(self),
                "directivity_dbi_min": mn(self.directivity_dbi),
                "directivity_dbi_max": mx(self.directivity_dbi),
                "gain_dbi_min": mn(self.gain_dbi),
                "loss_db_max": mx(self.loss_db), "loss_db_max_beam": arg(self.loss_db),
                "loss_db_mean": (None if np.all(np.isnan(self.loss_db))
                                 else float(np.nanmean(self.loss_db))),
                "psl_db_max": mx(self.psl_db), "psl_db_max_beam": arg(self.psl_db),
                "qlobe_db_max": mx(self.qlobe_db), "qlobe_db_max_beam": arg(self.qlobe_db),
                "pointing_error_deg_max": mx(self.pointing_error_deg),
                "pointing_error_deg_max_beam": arg(self.pointing_error_deg),
                "rms_phase_error_deg_max": mx(self.rms_phase_error_deg)}


def _normalise(v):
    return v / np.linalg.norm(v, axis=-1, keepdims=True)


def _frames(r):
    """Orthonormal tangent vectors (e1, e2) at unit vectors r (K, 3)."""
    a = np.where((np.abs(r[:, 2]) < 0.9)[:, None], [0.0, 0.0, 1.0], [1.0, 0.0, 0.0])
    e1 = _normalise(np.cross(a, r))
    return e1, np.cross(r, e1)


def _angle_between(a, b):
    """Angle (degrees) between unit vectors, row-wise, accurate for small angles."""
    return np.rad2deg(np.arctan2(np.linalg.norm(np.cross(a, b), axis=-1),
                                 np.sum(a * b, axis=-1)))


class BeamEvaluator:
    """Re-evaluates many beams of one array, reusing the weight-independent work.

    Parameters
    ----------
    array : Array
        Geometry, element and design frequency (its weights are not used).
    per_null : float
        Search-set density: samples per main-lobe null width 2 pi / (k R). Sidelobe and
        quantization-lobe peaks are refined off the set, so this only has to be dense enough
        to separate adjacent lobes (default 6).
    efficiency : float
        Radiation efficiency xi for the gain, 0 < xi <= 1.

    Notes
    -----
    The search set is a near-uniform Fibonacci set on the sphere (on the front hemisphere
    for front-radiating elements, and for planar arrays of isotropic elements whose pattern
    is mirror-symmetric in the array plane), or, for a collinear array of isotropic elements
    whose pattern depends only on the angle from the axis, a half great circle from the axis
    to its opposite. Every pattern value comes from :func:`steradian.engine.response_matrix`
    and the power from :func:`steradian.radiation.power_matrix`.
    """

    def __init__(self, array, *, per_null: float = 6.0, efficiency: float = 1.0):
        self.array = array
        self.efficiency = positive("radiation_efficiency", efficiency)
        if self.efficiency > 1:
            raise SteradianError(f"radiation_efficiency must be at most 1, got {efficiency}")
        per_null = positive("per_null", per_null)
        self.Q = power_matrix(array)
        kr = max(array.electrical_radius(), 1.0)
        self.spacing = min(2 * np.pi / kr / per_null, 0.05)
        pos = array.positions - array.positions.mean(axis=0)
        iso = isinstance(array.element, Isotropic) and array.geometry.orientations is None
        sv = np.linalg.svd(pos, full_matrices=False)
        collinear = array.n == 1 or sv[1][1] <= 1e-9 * max(sv[1][0], 1e-300)
        self.axis = None
        self.mirror = False
        if collinear and iso and array.n > 1:
            a = sv[2][0]
            b = _normalise(np.cross(a, [0.0, 0.0, 1.0] if abs(a[2]) < 0.9 else [1.0, 0, 0]))
            t = np.linspace(0.0, np.pi, max(int(math.ceil(np.pi / self.spacing)) + 1, 8))
            self.dirs = np.cos(t)[:, None] * a + np.sin(t)[:, None] * b
            self.axis, self._cut_b = a, b
            self.normal = np.cross(a, b)
            idx = np.arange(len(t))
            self.nbr = np.stack([np.maximum(idx - 1, 0), np.minimum(idx + 1, len(t) - 1)], 1)
        else:
            front = array.element.front_only and array.geometry.orientations is None
            self.mirror = bool(array.geometry.is_planar and iso)
            half = front or self.mirror
            m = int(4 * np.pi / self.spacing**2 / (2 if half else 1))
            self.dirs = fibonacci_directions(m, half)
            from scipy.spatial import cKDTree

            self.nbr = cKDTree(self.dirs).query(self.dirs, k=9)[1][:, 1:]
        self._cache = {}
        self._A0 = self._A1 = None
        self._vector = bool(array.element.vector)
        if len(self.dirs) * array.n * 16 * (2 if self._vector else 1) <= RESPONSE_BUDGET:
            A = response_matrix(array, Directions.from_vectors(self.dirs))
            self._A0 = np.ascontiguousarray(A[0])
            self._A1 = np.ascontiguousarray(A[1]) if self._vector else None

    # ---- pattern values ----------------------------------------------------------------
    def _grid(self, W):
        """Intensity on the search set, shape (M, B)."""
        if self._A0 is not None:
            out = np.abs(self._A0 @ W.T) ** 2
            if self._A1 is not None:
                out += np.abs(self._A1 @ W.T) ** 2
            return out
        # Responses too large to keep: recompute them chunk by chunk of directions.
        M = len(self.dirs)
        out = np.empty((M, len(W)))
        step = max(1, MEMORY_BUDGET // (32 * self.array.n))
        for i in range(0, M, step):
            A = response_matrix(self.array, Directions.from_vectors(self.dirs[i:i + step]))
            u = np.abs(A[0] @ W.T) ** 2
            if self._vector:
                u += np.abs(A[1] @ W.T) ** 2
            out[i:i + step] = u
        return out

    def _at(self, dirs, W):
        """Intensity at directions (K, 3) for per-row weights (K, N)."""
        K, N = W.shape
        out = np.empty(K)
        step = max(1, MEMORY_BUDGET // (32 * N))
        for i in range(0, K, step):
            A = response_matrix(self.array, Directions.from_vectors(dirs[i:i + step]))
            w = W[i:i + step]
            u = np.abs(np.einsum("kn,kn->k", A[0], w)) ** 2
            if self._vector:
                u += np.abs(np.einsum("kn,kn->k", A[1], w)) ** 2
            out[i:i + step] = u
        return out

    def power(self, W) -> np.ndarray:
        """Radiated power w^H Q w of each row of W (B, N)."""
        return np.einsum("bn,bn->b", W.conj(), W @ self.Q.T).real

    def _refine(self, starts, W, iters: int = 5):
        """Local maxima of the intensity near ``starts`` (K, 3) for weights W (K, N).

        Newton steps on ln U in the tangent plane from a finite-difference stencil of
        half-width h (centre, +-h along each tangent, one diagonal); a step that is not
        uphill-definite or leaves the stencil moves to the best stencil point instead and
        keeps h, otherwise h shrinks fourfold.
        """
        r = _normalise(np.asarray(starts, float))
        K = len(r)
        if K == 0:
            return r, np.zeros(0)
        h = np.full(K, 0.5 * self.spacing)
        one_d = self.axis is not None
        if one_d:
            sx, sy = np.array([0.0, 1.0, -1.0]), np.zeros(3)
        else:
            sx = np.array([0.0, 1.0, -1.0, 0.0, 0.0, 1.0])
            sy = np.array([0.0, 0.0, 0.0, 1.0, -1.0, 1.0])
        S = len(sx)
        Wr = np.repeat(W, S, axis=0)
        for _ in range(iters):
            if one_d:
                e1 = _normalise(np.cross(self.normal, r))
                e2 = np.zeros_like(e1)
            else:
                e1, e2 = _frames(r)
            pts = _normalise(r[:, None, :] + h[:, None, None] * (
                sx[None, :, None] * e1[:, None, :] + sy[None, :, None] * e2[:, None, :]))
            f = np.log(self._at(pts.reshape(-1, 3), Wr).reshape(K, S) + 1e-300)
            g1 = (f[:, 1] - f[:, 2]) / (2 * h)
            h11 = (f[:, 1] - 2 * f[:, 0] + f[:, 2]) / h**2
            best = f.argmax(axis=1)
            if one_d:
                ok = h11 < 0
                x1 = np.where(ok, -g1 / np.where(ok, h11, -1.0), 0.0)
                x2 = np.zeros(K)
            else:
                g2 = (f[:, 3] - f[:, 4]) / (2 * h)
                h22 = (f[:, 3] - 2 * f[:, 0] + f[:, 4]) / h**2
                h12 = (f[:, 5] - f[:, 1] - f[:, 3] + f[:, 0]) / h**2
                det = h11 * h22 - h12**2
                ok = (h11 < 0) & (det > 0)
                dd = np.where(ok, det, 1.0)
                x1 = np.where(ok, -(h22 * g1 - h12 * g2) / dd, 0.0)
                x2 = np.where(ok, -(h11 * g2 - h12 * g1) / dd, 0.0)
            ok &= np.hypot(x1, x2) <= 1.5 * h
            x1 = np.where(ok, x1, sx[best] * h)
            x2 = np.where(ok, x2, sy[best] * h)
            r = _normalise(r + x1[:, None] * e1 + x2[:, None] * e2)
            h = np.where(ok, 0.25 * h, h)
        return r, self._at(r, W)

    def _local_max(self, I):
        """Boolean (M, B): samples not below any of their neighbours."""
        nmax = I[self.nbr[:, 0]]
        for j in range(1, self.nbr.shape[1]):
            np.maximum(nmax, I[self.nbr[:, j]], out=nmax)
        return I >= nmax

    def _candidates(self, I, k, exclude, radius):
        """Indices (B, k) of the k highest local maxima of I (M, B) farther than ``radius``
        (rad) from ``exclude`` (B, 3); -1 where there are fewer."""
        M, B = I.shape
        out = np.full((B, k), -1, np.int64)
        chunk = max(1, int(2**24 // (8 * M)))
        cosr = math.cos(radius)
        kk = min(k, M)
        for b0 in range(0, B, chunk):
            Ib = I[:, b0:b0 + chunk]
            v = np.where(self._local_max(Ib), Ib, -np.inf)
            v[(self.dirs @ exclude[b0:b0 + chunk].T) > cosr] = -np.inf
            top = np.argpartition(-v, kk - 1, axis=0)[:kk] if kk < M else np.argsort(-v, 0)
            vals = np.take_along_axis(v, top, 0)
            order = np.argsort(-vals, axis=0)
            top = np.take_along_axis(top, order, 0)
            vals = np.take_along_axis(vals, order, 0)
            out[b0:b0 + chunk, :kk] = np.where(np.isfinite(vals), top, -1).T
        return out

    def _beam_peaks(self, W, steer):
        """Search-set intensity and the refined main peak (unit vectors, intensity)."""
        I = self._grid(W)
        g = I.argmax(axis=0)
        s = self._steer_start(steer)
        at_s = self._at(s, W)
        starts = np.where((at_s > I[g, np.arange(len(g))])[:, None], s, self.dirs[g])
        peak, v = self._refine(starts, W)
        return I, peak, v

    def _steer_start(self, steer):
        s = np.array(steer, float)
        if self.mirror:
            s[:, 2] = np.abs(s[:, 2])
        if self.axis is not None:
            c = np.clip(s @ self.axis, -1, 1)
            s = c[:, None] * self.axis + np.sqrt(1 - c**2)[:, None] * self._cut_b
        return s

    def _sidelobe(self, I, W, peak, k: int = 2):
        """Highest refined local maximum outside the main lobe, per beam (0 if none)."""
        B = len(W)
        cand = self._candidates(I, k, peak, 1.5 * self.spacing)
        bi, ki = np.nonzero(cand >= 0)
        best = np.zeros(B)
        if len(bi):
            r, v = self._refine(self.dirs[cand[bi, ki]], W[bi])
            # A start that climbed back into the main lobe is not a sidelobe.
            v = np.where(np.sum(r * peak[bi], axis=1) > math.cos(0.5 * self.spacing), 0.0, v)
            np.maximum.at(best, bi, v)
        return best

    def _ideal(self, W0, steer):
        """Peak directivity and sidelobe level (dB) of ideal beams, cached by content."""
        key = (hash(W0.tobytes()), hash(steer.tobytes()), W0.shape)
        if key not in self._cache:
            I0, peak0, ipk0 = self._beam_peaks(W0, steer)
            psl0 = _db(self._sidelobe(I0, W0, peak0) / ipk0)
            d0 = _db(4 * np.pi * ipk0 / self.power(W0))
            pe0 = self.pointing_error_deg(peak0, steer)
            if len(self._cache) > 8:
                self._cache.clear()
            self._cache[key] = (d0, psl0, pe0)
        return self._cache[key]

    def pointing_error_deg(self, peak, steer) -> np.ndarray:
        """Angle between refined peaks and commanded directions (cone angle if collinear)."""
        s = self._steer_start(steer) if self.mirror else np.asarray(steer, float)
        if self.axis is not None:
            a = np.rad2deg(np.arccos(np.clip(peak @ self.axis, -1, 1)))
            b = np.rad2deg(np.arccos(np.clip(s @ self.axis, -1, 1)))
            return np.abs(a - b)
        return _angle_between(peak, s)

    def evaluate(self, W, directions, ideal=None) -> BeamMetrics:
        """Metrics of beams with weights W (B, N) commanded to directions (B, 2) in degrees.

        ``ideal`` (B, N): the unquantized weights of each beam, for the loss, the
        quantization-lobe level and the phase error.
        """
        W = np.atleast_2d(np.asarray(W, complex))
        d = np.atleast_2d(np.asarray(directions, float))
        B, N = W.shape
        if N != self.array.n:
            raise SteradianError(f"beam weights have {N} elements per beam but the array has "
                                 f"{self.array.n}")
        if d.shape != (B, 2):
            raise SteradianError(f"directions must have shape ({B}, 2), got {d.shape}")
        chunk = max(1, int(BEAM_CHUNK_BYTES // (24 * len(self.dirs))))
        if B > chunk:  # bound the (directions x beams) work arrays
            W0 = None if ideal is None else np.atleast_2d(np.asarray(ideal, complex))
            parts = [self.evaluate(W[i:i + chunk], d[i:i + chunk],
                                   None if W0 is None else W0[i:i + chunk])
                     for i in range(0, B, chunk)]
            return BeamMetrics(**{f: np.concatenate([getattr(p, f) for p in parts])
                                  for f in _METRIC_FIELDS})
        steer = np.array([direction(t, p) for t, p in d]).reshape(B, 3)
        P = self.power(W)
        if np.any(P <= 0):
            raise SteradianError(f"beam {int(np.flatnonzero(P <= 0)[0])} radiates no power")
        I, peak, ipk = self._beam_peaks(W, steer)
        side = self._sidelobe(I, W, peak)
        D = 4 * np.pi * ipk / P
        nan = np.full(B, np.nan)
        qlobe, d0, psl0, pe0, rms = nan, nan, nan, nan, nan
        if ideal is not None:
            W0 = np.atleast_2d(np.asarray(ideal, complex))
            if W0.shape != W.shape:
                raise SteradianError(f"ideal weights have shape {W0.shape}, expected {W.shape}")
            d0, psl0, pe0 = self._ideal(W0, steer)
            s = (np.einsum("bn,bn->b", W0.conj(), W) / np.einsum("bn,bn->b", W0.conj(), W0))
            err = W - s[:, None] * W0
            Ie = self._grid(err)
            _, ve = self._refine(self.dirs[Ie.argmax(axis=0)], err)
            qlobe = _db(np.maximum(ve, Ie.max(axis=0)) / ipk)
            ok = (np.abs(W0) > 0) & (np.abs(W) > 0)
            ph = wrap_deg(np.angle(W, deg=True) - np.angle(s[:, None] * W0, deg=True))
            rms = np.sqrt(np.nanmean(np.where(ok, ph, np.nan) ** 2, axis=1))
        dbi = _db(D)
        th = np.rad2deg(np.arccos(np.clip(peak[:, 2], -1, 1)))
        phi = np.where(np.hypot(peak[:, 0], peak[:, 1]) > 1e-12,
                       np.rad2deg(np.arctan2(peak[:, 1], peak[:, 0])), 0.0)
        return BeamMetrics(
            theta_deg=d[:, 0].copy(), phi_deg=d[:, 1].copy(), peak_theta_deg=th,
            peak_phi_deg=phi, directivity_dbi=dbi,
            gain_dbi=dbi + 10 * np.log10(self.efficiency),
            pointing_error_deg=self.pointing_error_deg(peak, steer),
            psl_db=_db(side / ipk), qlobe_db=qlobe, ideal_directivity_dbi=d0,
            ideal_psl_db=psl0, ideal_pointing_error_deg=pe0, loss_db=d0 - dbi,
            rms_phase_error_deg=rms)


# ---------------------------------------------------------------------------------------
# Building and verifying
# ---------------------------------------------------------------------------------------
WeightSource = np.ndarray | Callable[[float, float], np.ndarray] | None


def steered_weights(array, directions, weights: WeightSource = None) -> np.ndarray:
    """Ideal weights (B, N) of ``array`` steered to each (theta_deg, phi_deg).

    ``weights``: ``None`` uses the array's own taper (and mask) with its steering mode;
    an (N,) array is a taper to steer instead; a callable ``f(theta_deg, phi_deg)`` returns
    each beam's weights directly (e.g. a per-beam optimizer result), masked by the array.
    """
    d = np.atleast_2d(np.asarray(directions, float))
    mode = array.steering.mode if array.steering is not None else "phase"
    base = array if weights is None or callable(weights) else array.with_taper(weights)
    out = np.empty((len(d), array.n), complex)
    for i, (t, p) in enumerate(d):
        if callable(weights):
            w = np.asarray(weights(float(t), float(p)), complex).reshape(-1)
            if w.shape != (array.n,):
                raise SteradianError(f"weights for beam {i} have {w.size} entries, the array "
                                     f"has {array.n} elements")
            if array.enabled is not None:
                w = np.where(array.enabled, w, 0.0)
            out[i] = w
        else:
            out[i] = base.with_steering(Steering(float(t), float(p), mode)).weights()
    return out


def _array_metadata(array, channel: ChannelModel, efficiency: float) -> dict:
    from . import __version__

    g = array.geometry
    amp = np.abs(array.taper)
    with np.errstate(divide="ignore"):
        amp_db = 20 * np.log10(amp / amp.max())
    return {
        "steradian_version": __version__,
        "design_frequency_hz": array.frequency,
        "speed_m_s": array.speed,
        "wavelength_m": array.wavelength,
        "geometry": {"n_elements": g.n,
                     "n_enabled": int(g.n if array.enabled is None
                                      else np.count_nonzero(array.enabled)),
                     "extent_m": g.extent().tolist(),
                     "lattice_m": None if g.lattice is None else g.lattice.tolist(),
                     "planar": g.is_planar},
        "element": array.element.describe(),
        "taper": {"amplitude_min_db": float(np.min(amp_db)),
                  "phase_spread_deg": float(np.ptp(np.angle(array.taper, deg=True))),
                  # |sum w|^2 / (N sum |w|^2): the broadside taper efficiency of an equally
                  # spaced planar array (common practice).
                  "illumination_efficiency": float(abs(array.taper.sum()) ** 2 / (
                      g.n * np.sum(np.abs(array.taper) ** 2)))},
        "steering_mode": array.steering.mode if array.steering is not None else "phase",
        "channel": channel.describe(),
        "radiation_efficiency": efficiency,
    }


@dataclass(frozen=True, eq=False)
class BeamBuild:
    """Result of :func:`build_beam_table`: the table and how its beams perform."""

    table: BeamTable
    metrics: BeamMetrics
    quantized: object
    ideal: np.ndarray


def build_beam_table(array, channel: ChannelModel, directions, *,
                     weights: WeightSource = None, efficiency: float = 1.0,
                     evaluator: BeamEvaluator | None = None, metadata: dict | None = None,
                     evaluate: bool = True) -> BeamBuild:
    """Quantized beam table of ``array`` over ``directions`` (B, 2) in degrees.

    Parameters
    ----------
    array : Array
        The design (geometry, element, taper, mask, design frequency).
    channel : ChannelModel
        Beamformer channel.
    directions : array_like, shape (B, 2)
        (theta_deg, phi_deg) per beam, e.g. from :func:`theta_phi_directions`.
    weights : None, array (N,) or callable
        Ideal weights, see :func:`steered_weights`.
    efficiency : float
        Radiation efficiency for the reported gain.
    evaluator : BeamEvaluator, optional
        Reuse one across calls on the same array.
    metadata : dict, optional
        Extra metadata merged into the table's (e.g. the design file and its taper spec).
    evaluate : bool
        Re-evaluate the quantized beams (the predicted metrics stored in the table).

    Returns
    -------
    BeamBuild
    """
    d = np.atleast_2d(np.asarray(directions, float))
    w0 = steered_weights(array, d, weights)
    q = channel.quantize(w0, mask=array.enabled)
    codes = np.stack([q.phase_codes, q.amplitude_codes], -1)
    meta = _array_metadata(array, channel, efficiency)
    meta.update(metadata or {})
    metrics = None
    if evaluate:
        ev = evaluator or BeamEvaluator(array, efficiency=efficiency)
        metrics = ev.evaluate(q.realised, d, ideal=w0)
    table = BeamTable(channel.states, d, codes, "codes", q.phase_offsets_deg,
                      array.positions, meta, None if metrics is None else metrics.rows())
    return BeamBuild(table, metrics, q, w0)


@dataclass(frozen=True, eq=False)
class Verification:
    """Result of :func:`verify_beam_table`.

    Attributes
    ----------
    metrics : BeamMetrics
        Re-evaluated from the file's states.
    differences : dict
        Largest absolute difference per metric against the metrics stored in the file
        (empty when the file stores none).
    notes : list of str
        Things worth knowing that are not errors (e.g. offsets differing from the design's).
    """

    metrics: BeamMetrics
    differences: dict
    notes: list

    def to_dict(self) -> dict:
        return {"summary": self.metrics.summary(), "differences_vs_file": self.differences,
                "notes": list(self.notes), "beams": self.metrics.rows()}


def verify_beam_table(array, channel: ChannelModel, table: BeamTable, *,
                      weights: WeightSource = None, efficiency: float = 1.0,
                      evaluator: BeamEvaluator | None = None) -> Verification:
    """Re-evaluate the beams a weight file holds against the design.

    The realised weights are the file's states (codes, or I/Q) through the design's channel
    (calibration) with the file's phase offsets and the design's element mask. The ideal
    beam for the loss is the design's (or ``weights``) steered to each commanded direction.

    Raises
    ------
    SteradianError
        When the file does not fit the design: a different element count, different channel
        states, or element positions that differ from the design's.
    """
    n = array.n
    if table.n_elements != n:
        raise SteradianError(f"weight file holds {table.n_elements} weights per beam but the "
                             f"design has {n} elements")
    if table.states != channel.states:
        a, b = table.states.to_dict(), channel.states.to_dict()
        diff = [f"{k} {a[k]!r} (file) vs {b[k]!r} (design)" for k in a if a[k] != b[k]]
        raise SteradianError("weight file states differ from the design's channel: "
                             + "; ".join(diff))
    notes = []
    if table.positions is not None:
        tol = 1e-9 * max(1.0, float(np.abs(array.positions).max()))
        dev = np.abs(table.positions - array.positions).max(axis=1)
        if np.any(dev > tol):
            i = int(np.argmax(dev))
            raise SteradianError(
                f"element {i} is at {table.positions[i].tolist()} m in the weight file but at "
                f"{array.positions[i].tolist()} m in the design")
    own = channel.offsets_deg(n)
    dev = np.abs(wrap_deg(table.phase_offsets_deg - own))
    if np.any(dev > 1e-9):
        notes.append(f"phase offsets in the file differ from the design's channel by up to "
                     f"{dev.max():.4g} deg; the file's offsets are used")
    real = channel.realise(table.commanded(), table.phase_offsets_deg, array.enabled)
    w0 = steered_weights(array, table.directions, weights)
    ev = evaluator or BeamEvaluator(array, efficiency=efficiency)
    m = ev.evaluate(real, table.directions, ideal=w0)
    diffs = {}
    if table.metrics is not None:
        rows = m.rows()
        for f in _METRIC_FIELDS:
            vals = [(r[f], s.get(f)) for r, s in zip(rows, table.metrics, strict=True)]
            dv = [abs(a - b) for a, b in vals
                  if isinstance(a, (int, float)) and isinstance(b, (int, float))]
            if dv:
                diffs[f] = max(dv)
    return Verification(m, diffs, notes)


# ---------------------------------------------------------------------------------------
# File dispatch
# ---------------------------------------------------------------------------------------
def _format_of(path, fmt):
    if fmt is not None:
        return choice("format", fmt, tuple(FORMATS.values()))
    suf = Path(path).suffix.lower()
    if suf not in FORMATS:
        raise SteradianError(f"{path}: cannot tell the weight-file format from the suffix "
                             f"{suf!r}; use one of {', '.join(FORMATS)} or give the format")
    return FORMATS[suf]


def write_weight_file(path, table: BeamTable, fmt: str | None = None, **options) -> Path:
    """Write ``table`` to ``path`` in ``fmt`` ("csv", "json", "bin", "h"; default from the
    suffix). Options go to the format's writer (``encoding`` for bin, ``prefix`` for h)."""
    kind = _format_of(path, fmt)
    if kind == "csv":
        from .io.beams_csv import write_beams_csv as w
    elif kind == "json":
        from .io.beams_json import write_beams_json as w
    elif kind == "bin":
        from .io.beams_bin import write_beams_bin as w
    else:
        from .io.beams_cheader import write_beams_cheader as w
    w(path, table, **options)
    return Path(path)


def write_beam_files(table: BeamTable, prefix, formats=("csv", "json", "bin", "h"), *,
                     bin_encoding: Encoding | None = None, c_prefix: str = "strd") -> dict:
    """Write ``table`` as ``<prefix>.csv``, ``.json``, ``.bin``, ``.h`` (those in ``formats``).

    ``bin_encoding`` chooses codes or Q1.15 I/Q for the binary file (default the table's);
    ``c_prefix`` names the C header's identifiers. Returns ``{format: path}``.
    """
    ext = {v: k for k, v in FORMATS.items()}
    out = {}
    for f in formats:
        choice("format", f, tuple(ext))
        path = Path(f"{prefix}{ext[f]}")
        opts = {"bin": {"encoding": bin_encoding}, "h": {"prefix": c_prefix}}.get(f, {})
        out[f] = write_weight_file(path, table, f, **opts)
    return out


def read_weight_file(path, fmt: str | None = None) -> BeamTable:
    """Read a weight file written by :func:`write_weight_file` (format from the suffix)."""
    kind = _format_of(path, fmt)
    if kind == "csv":
        from .io.beams_csv import read_beams_csv as r
    elif kind == "json":
        from .io.beams_json import read_beams_json as r
    elif kind == "bin":
        from .io.beams_bin import read_beams_bin as r
    else:
        from .io.beams_cheader import read_beams_cheader as r
    return r(path)


# ---------------------------------------------------------------------------------------
# From a design file
# ---------------------------------------------------------------------------------------
def channel_of_design(design) -> ChannelModel | None:
    """The design's ``[channel]`` as a :class:`ChannelModel` (None when it has none)."""
    from .quantize import channel_from_table

    raw = design.sections.get("channel")
    if raw is None:
        return None
    return channel_from_table(raw, design.array.n, source=design.source,
                              base_dir=design.base_dir)


def _design_metadata(design) -> dict:
    meta = {"design": {"name": design.name, "description": design.description,
                       "source": None if design.source is None else str(design.source)}}
    if design.source is not None:
        import tomllib

        try:
            doc = tomllib.loads(Path(design.source).read_text(encoding="utf-8"))
        except (OSError, ValueError):
            doc = {}
        for key in ("taper", "synthesis", "beams"):
            if key in doc:
                meta[f"{key}_spec"] = doc[key]
    return meta


def beam_table_from_design(design, *, weights: WeightSource = None,
                           evaluator: BeamEvaluator | None = None) -> BeamBuild:
    """Build the beam table a design asks for (its ``[channel]`` and ``[beams]`` tables).

    The ideal weights are the design's taper (``[taper]``, which may come from synthesis)
    steered to each beam, unless ``weights`` is given (see :func:`steered_weights`). The
    gain uses ``analysis.radiation_efficiency``.

    Raises
    ------
    DesignError
        When ``[channel]`` or ``[beams]`` is missing or malformed (naming the key).
    """
    ch = channel_of_design(design)
    src = None if design.source is None else str(design.source)
    if ch is None:
        raise DesignError("channel", "the design has no [channel] table; a beam table needs "
                          "the beamformer channel (phase_bits or phase_step_deg, ...)", src)
    if "beams" not in design.sections:
        raise DesignError("beams", "the design has no [beams] table; give the steering grid "
                          "(grid = 'theta_phi', 'az_el' or 'list')", src)
    d = beams_from_table(design.sections["beams"], source=src, base_dir=design.base_dir)
    eff = design.options.radiation_efficiency
    return build_beam_table(design.array, ch, d, weights=weights, efficiency=eff,
                            evaluator=evaluator, metadata=_design_metadata(design))


def verify_weight_file(design, path, fmt: str | None = None, *,
                       weights: WeightSource = None,
                       evaluator: BeamEvaluator | None = None) -> tuple[BeamTable, Verification]:
    """Read any weight file and re-evaluate its beams against ``design``.

    Without a ``[channel]`` table in the design the file's own states are used with no
    calibration (a note says so).

    Returns
    -------
    (BeamTable, Verification)
    """
    table = read_weight_file(path, fmt)
    ch = channel_of_design(design)
    notes = []
    if ch is None:
        ch = ChannelModel(table.states)
        notes.append("the design has no [channel] table: the file's states are used, "
                     "without calibration")
    eff = design.options.radiation_efficiency
    v = verify_beam_table(design.array, ch, table, weights=weights, efficiency=eff,
                          evaluator=evaluator)
    return table, replace(v, notes=notes + list(v.notes))
