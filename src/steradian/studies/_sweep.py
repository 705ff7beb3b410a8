"""Part of :mod:`steradian.studies` (see the package docstring): sweep points and their
metrics.

A sweep point is an :class:`~steradian.array.Array` and the frequency it is evaluated at.
Two ways to evaluate points, both by existing analysis code:

- ``"full"``: every metric of ``steradian analyze`` (beamwidths, ISLR, grating lobes
  predicted from the lattice and found in the pattern, scan loss, front-to-back): points
  that share an aperture (positions, element, enabled mask and frequency: a scan or taper
  axis) are analysed together by :func:`steradian.analysis.analyze_many` with one
  :class:`steradian.aperture.Aperture` (radiated-power matrices, search sets and the
  unsteered reference beam built once per group, radials and lobes refined in one pass),
  each point exactly as :func:`~steradian.analysis.analyze` alone to rounding;
- ``"beam"``: points that share positions, element, enable mask and frequency (a scan or a
  taper axis) are evaluated together by one :class:`steradian.beamtable.BeamEvaluator`
  (element responses on the search set and the power matrix computed once per group; each
  point one beam): directivity, gain, refined peak, pointing error, peak sidelobe level.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np

from ..analysis import AnalysisOptions, analyze_many
from ..aperture import Aperture, aperture_key
from ..array import Array
from ..beamtable import BeamEvaluator
from ..errors import SteradianError
from ..units import grid_decimals

__all__ = ["SweepAxis", "SWEEP_MODES", "sweep_fields", "evaluation_key", "group_points",
           "evaluate_points", "GRATING_LOBE_DB"]

_WORD = re.compile(r"^[A-Za-z0-9_.-]+$")

SWEEP_MODES = ("full", "beam")
"""Metric sets of a sweep (see the module notes)."""

GRATING_LOBE_DB = 3.0
"""A lobe outside the main lobe within this many dB of the peak is a grating lobe found in
the pattern (the ``grating_lobe_db`` of :func:`steradian.metrics.pattern_metrics`)."""

BEAM_FIELDS = ("directivity_dbi", "gain_dbi", "peak_theta_deg", "peak_phi_deg",
               "pointing_error_deg", "psl_db", "grating_lobe_found")
FULL_FIELDS = BEAM_FIELDS + ("hpbw_phi_plane_deg", "hpbw_cross_plane_deg", "islr_db",
                             "grating_lobes_predicted", "grating_lobe_free_scan_deg",
                             "scan_loss_db", "front_to_back_db")


def sweep_fields(mode: str) -> tuple[str, ...]:
    """Metric columns of a sweep row for ``mode`` (:data:`SWEEP_MODES`)."""
    if mode not in SWEEP_MODES:
        raise SteradianError(f"sweep metrics must be one of {', '.join(SWEEP_MODES)}, "
                             f"got {mode!r}")
    return FULL_FIELDS if mode == "full" else BEAM_FIELDS


@dataclass(frozen=True)
class SweepAxis:
    """One swept parameter: the design keys it sets (all to the same value) and its values:
    numbers, or words for a text key (``steering.mode`` = phase, delay: a frequency sweep
    comparing phase shifters with true-time delay).

    ``label`` names the column (default: the first key).
    """

    keys: tuple[str, ...]
    values: tuple[float, ...] | tuple[str, ...]
    label: str = ""

    def __post_init__(self):
        keys = tuple(str(k) for k in self.keys)
        if not keys or any(not k for k in keys):
            raise SteradianError("a sweep axis needs at least one design key")
        raw = tuple(self.values)
        if raw and all(isinstance(v, str) for v in raw):
            bad = [v for v in raw if not _WORD.match(v)]
            if bad:
                raise SteradianError(f"sweep axis {keys[0]}: text values are single words "
                                     f"(letters, digits, _ . -), got {bad[0]!r}")
            vals = raw
        else:
            try:
                vals = tuple(float(v) for v in raw)
            except (TypeError, ValueError):
                raise SteradianError(f"sweep axis {keys[0]}: values must be all numbers or "
                                     "all words") from None
            if not vals or not all(math.isfinite(v) for v in vals):
                raise SteradianError(f"sweep axis {keys[0]}: values must be finite and "
                                     "non-empty")
        object.__setattr__(self, "keys", keys)
        object.__setattr__(self, "values", vals)
        object.__setattr__(self, "label", self.label or keys[0])

    @property
    def is_text(self) -> bool:
        """True for an axis of words (such as ``steering.mode``: phase, delay)."""
        return isinstance(self.values[0], str)

    @classmethod
    def linspace(cls, keys, start: float, stop: float, count: int, label: str = ""):
        """``count`` equally spaced values from ``start`` to ``stop`` inclusive, with the
        grid's own decimals (:func:`steradian.units.grid_decimals`)."""
        if int(count) != count or count < 1:
            raise SteradianError(f"sweep axis {keys[0]}: count must be a whole number >= 1")
        vals = np.linspace(start, stop, int(count))
        if count > 1:  # the grid's own decimals (0.6, not 0.6000000000000001)
            vals = grid_decimals(vals, (stop - start) / (count - 1))
        return cls(tuple(keys), tuple(float(v) for v in vals), label)


evaluation_key = aperture_key
"""What a point's evaluation depends on besides its weights (points with equal keys share one
evaluator): :func:`steradian.aperture.aperture_key`."""


def group_points(keys, max_batch: int) -> list[list[int]]:
    """Point indices in batches: consecutive runs of points with the same evaluation key (in
    index order of their first point), at most ``max_batch`` each. The batches depend on the
    keys alone, never on the number of workers."""
    order: dict[str, list[int]] = {}
    for i, k in enumerate(keys):
        order.setdefault(k, []).append(i)
    out = []
    for idx in order.values():
        out += [idx[j:j + max_batch] for j in range(0, len(idx), max(1, int(max_batch)))]
    return out


def _full_rows(arrays, frequencies, efficiency: float) -> list[dict]:
    """Every analysis metric of points sharing one aperture (one Aperture for them all)."""
    ap = Aperture(arrays[0], frequencies[0], beams=len(arrays))
    res = analyze_many(arrays, AnalysisOptions(frequency=frequencies[0], metrics=True,
                                               radiation_efficiency=efficiency), aperture=ap)
    return [_full_row(r) for r in res]


def _full_row(res) -> dict:
    m, pk = res.metrics, res.peak
    hp = m.hpbw_deg
    return {"directivity_dbi": pk.directivity_dbi, "gain_dbi": res.gain_dbi,
            "peak_theta_deg": pk.theta_deg, "peak_phi_deg": pk.phi_deg,
            "pointing_error_deg": m.pointing_error_deg, "psl_db": m.psl_db,
            "grating_lobe_found": len(m.grating_lobes_found),
            "hpbw_phi_plane_deg": hp.get("phi_plane"),
            "hpbw_cross_plane_deg": hp.get("cross_plane"), "islr_db": m.islr_db,
            "grating_lobes_predicted": (None if m.grating_lobes_predicted is None
                                        else len(m.grating_lobes_predicted)),
            "grating_lobe_free_scan_deg": m.grating_lobe_free_scan_deg,
            "scan_loss_db": m.scan_loss_db, "front_to_back_db": m.front_to_back_db}


def _beam_rows(arrays, frequencies, efficiency: float) -> list[dict]:
    """One evaluator for points sharing an evaluation key; each point one beam."""
    a0, f0 = arrays[0], frequencies[0]
    f = a0.frequency if f0 is None else float(f0)
    bare = Array(a0.geometry, f, a0.element_at(f), None, None, a0.enabled, a0.speed)
    ev = BeamEvaluator(bare, efficiency=efficiency)
    W = np.array([a.weights(fq) for a, fq in zip(arrays, frequencies, strict=True)])
    d = np.array([[0.0, 0.0] if a.steering is None else
                  [a.steering.theta_deg, a.steering.phi_deg] for a in arrays])
    m = ev.evaluate(W, d)
    pe = np.where([a.steering is None for a in arrays], np.nan, m.pointing_error_deg)
    return [{"directivity_dbi": m.directivity_dbi[b], "gain_dbi": m.gain_dbi[b],
             "peak_theta_deg": m.peak_theta_deg[b], "peak_phi_deg": m.peak_phi_deg[b],
             "pointing_error_deg": pe[b], "psl_db": m.psl_db[b],
             "grating_lobe_found": int(m.psl_db[b] >= -GRATING_LOBE_DB)}
            for b in range(len(arrays))]


def evaluate_points(arrays, frequencies, mode: str = "full", *,
                    efficiency: float = 1.0) -> list[dict]:
    """Metric rows (:func:`sweep_fields`) of sweep points ``arrays`` evaluated at
    ``frequencies`` (None: the design frequency), in the given order.

    Points with the same :func:`evaluation_key` are evaluated together: by one evaluator in
    ``"beam"`` mode, with one :class:`~steradian.aperture.Aperture` in ``"full"`` mode. The
    results of a point may depend on the batch it is in, in the last bits: callers that need
    reproducible rows pass fixed batches, as :func:`group_points` makes them.
    """
    fields = sweep_fields(mode)
    arrays, frequencies = list(arrays), list(frequencies)
    if not arrays:
        return []
    rows_of = _full_rows if mode == "full" else _beam_rows
    keys = [evaluation_key(a, f) for a, f in zip(arrays, frequencies, strict=True)]
    rows = [None] * len(arrays)
    for group in group_points(keys, len(arrays)):
        for i, r in zip(group, rows_of([arrays[i] for i in group],
                                       [frequencies[i] for i in group], efficiency),
                        strict=True):
            rows[i] = r
    return [{k: _plain(r[k]) for k in fields} for r in rows]


def _plain(v):
    if v is None:
        return None
    if isinstance(v, (bool, np.bool_)):
        return int(v)
    if isinstance(v, (int, np.integer)):
        return int(v)
    v = float(v)
    return v if math.isfinite(v) else None

