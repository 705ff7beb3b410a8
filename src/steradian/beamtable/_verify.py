"""Part of :mod:`steradian.beamtable` (see the package docstring): verifying a table read
from a file against the design.

Verification decides, it does not only re-evaluate: the design's table is rebuilt (same
channel, same steering directions, same weights) and every beam's direction and every
element's state of the file is compared with it. Codes must be equal; Q1.15 I/Q may differ
by one unit of the last place per component (the rounding of the commanded state to 2^-15).
Beam order is part of the file (firmware selects a beam by its index), so a beam at another
index than in the design is a difference, as is a missing, extra or repeated direction.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import SteradianError
from ..quantize import ChannelModel
from ..units import wrap_deg
from ._build import WeightSource, build_beam_table, channel_ideal, expand_kinds, kind_weights
from ._evaluate import BeamEvaluator
from ._metrics import BeamMetrics
from ._table import BeamTable

DIRECTION_TOLERANCE_DEG = 1e-6
"""Two beam directions are the same when theta and phi agree within this (phi is ignored at
the poles). Every weight format stores directions exactly (float64 or shortest round-trip
text), so the tolerance only absorbs arithmetic noise of a rebuild."""

IQ_TOLERANCE_LSB = 1
"""Largest accepted difference per I/Q component, in units of 2^-15 (Q1.15): the rounding of
the commanded state to the nearest integer on another machine or by another writer."""

MAX_LISTED = 100
"""At most this many difference lines are kept (the counts cover all of them)."""


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
        Things worth knowing that are not errors (e.g. offsets differing from the design's,
        or what could not be compared).
    mismatches : tuple of str
        One line per difference between the file and the table the design gives, the first
        difference first (at most :data:`MAX_LISTED`); empty when the file is the design's.
    compared : dict
        What was compared (``directions``, ``states``: bool) and the counts of differences
        (``beams_differing``, ``elements_differing``, ``missing``, ``extra``, ``duplicated``,
        ``out_of_order``, ``total``).
    """

    metrics: BeamMetrics
    differences: dict
    notes: list
    mismatches: tuple = ()
    compared: dict = field(default_factory=dict)

    @property
    def matches_design(self) -> bool:
        """True when no direction, beam or element state differs from the design's table."""
        return not self.mismatches

    @property
    def first_difference(self) -> str | None:
        """The first difference in one line (None when the file matches the design)."""
        return self.mismatches[0] if self.mismatches else None

    def to_dict(self) -> dict:
        return {"summary": self.metrics.summary(), "differences_vs_file": self.differences,
                "matches_design": self.matches_design,
                "first_difference": self.first_difference,
                "mismatches": list(self.mismatches), "compared": dict(self.compared),
                "notes": list(self.notes), "beams": self.metrics.rows()}


def verify_beam_table(array, channel: ChannelModel, table: BeamTable, *,
                      weights: WeightSource = None, efficiency: float = 1.0,
                      evaluator: BeamEvaluator | None = None, directions=None,
                      compare_states: bool = True,
                      element_power_w: float | None = None, kinds=None) -> Verification:
    """Compare the beams a weight file holds with the design's, and re-evaluate them.

    The design's table is rebuilt with :func:`build_beam_table` (``channel``, ``weights``,
    ``directions``) and compared with ``table``: each beam's direction and index, each
    element's state (codes exactly, Q1.15 I/Q within :data:`IQ_TOLERANCE_LSB`). The
    differences are in :attr:`Verification.mismatches`, the first one first.

    The realised weights are the file's states (codes, or I/Q) through the design's channel
    (calibration) with the file's phase offsets and the design's element mask. The ideal
    beam for the loss is the design's (or ``weights``) steered to each commanded direction.

    Parameters
    ----------
    directions : array_like, shape (B, 2), optional
        The design's beam directions (theta_deg, phi_deg). ``None``: the file's directions
        are taken as the commanded ones and neither their number nor their values compared.
    compare_states : bool
        Compare the element states with the rebuilt table (False when ``channel`` is not the
        design's, e.g. the file's own states for a design without a channel).
    element_power_w : float, optional
        Power of one channel at full drive (W): each beam's EIRP is then evaluated.
    kinds : sequence of str, optional
        The design's beam kinds per direction (see :func:`build_beam_table`; default sum
        only). With ``directions`` each beam's kind is compared with the design's; without,
        the file's kinds are taken as commanded. Each beam is evaluated as the kind the
        file says.

    Raises
    ------
    SteradianError
        When the file does not fit the design: a different element count, different channel
        states, or element positions that differ from the design's.
    """
    _check_fit(array, channel, table)
    notes = []
    own = channel.offsets_deg(array.n)
    dev = np.abs(wrap_deg(table.phase_offsets_deg - own))
    if np.any(dev > 1e-9):
        notes.append(f"phase offsets in the file differ from the design's channel by up to "
                     f"{dev.max():.4g} deg; the file's offsets are used")
    real = channel.realise(table.commanded(), table.phase_offsets_deg, array.enabled)
    # The ideal beams as the build made them (a phase-only channel with drop_taper drops the
    # taper there too), so loss figures compare like with like.
    w0, _ = channel_ideal(channel, kind_weights(array, table.directions, table.beam_kinds, weights),
                          array.enabled)
    ev = evaluator or BeamEvaluator(array, efficiency=efficiency)
    m = ev.evaluate(real, table.directions, ideal=w0, commanded=table.commanded(),
                    element_power_w=element_power_w, kinds=table.beam_kinds)
    ref_dirs, ref_kinds = table.directions, table.beam_kinds
    if directions is not None:
        ref_dirs, ref_kinds = expand_kinds(directions, kinds)
    ref_codes = None
    if compare_states:
        ref = build_beam_table(array, channel, ref_dirs, weights=weights, evaluate=False,
                               beam_kinds=ref_kinds, evaluator=ev).table
        ref_codes = ref.as_encoding(table.encoding).codes
    mism, compared = _compare(table, None if directions is None else ref_dirs, ref_codes,
                              ref_kinds)
    mism, compared = _compare_mask(table, array.enabled, mism, compared)
    if compared["beams_differing"]:
        notes += _taper_hint(table, ref)
    return Verification(m, _metric_differences(m, table), notes, mism, compared)


def _taper_hint(table: BeamTable, ref: BeamTable) -> list[str]:
    """A note when the taper summary the file records is not the design's (states differ
    because the table was built from other weights, e.g. another taper file)."""
    a, b = table.metadata.get("taper"), ref.metadata.get("taper")
    if not isinstance(a, dict) or not isinstance(b, dict):
        return []
    keys = [k for k in b if isinstance(b[k], (int, float)) and isinstance(a.get(k), (int, float))]
    off = [k for k in keys if not np.isclose(a[k], b[k], rtol=1e-9, atol=1e-9)]
    if not off:
        return []
    shown = ", ".join(f"{k} {a[k]:.4g} (file) vs {b[k]:.4g} (design)" for k in off[:2])
    return [f"the file records another taper than the design's ({shown}): it was probably "
            "built from other weights"]


def _check_fit(array, channel: ChannelModel, table: BeamTable) -> None:
    """Raise when the file cannot belong to the design (count, states, positions)."""
    n = array.n
    if table.n_elements != n:
        raise SteradianError(f"weight file holds {table.n_elements} weights per beam but the "
                             f"design has {n} elements")
    if table.states != channel.states:
        a, b = table.states.to_dict(), channel.states.to_dict()
        diff = [f"{k} {a[k]!r} (file) vs {b[k]!r} (design)" for k in a if a[k] != b[k]]
        raise SteradianError("weight file states differ from the design's channel: "
                             + "; ".join(diff))
    if table.positions is not None:
        tol = 1e-9 * max(1.0, float(np.abs(array.positions).max()))
        dev = np.abs(table.positions - array.positions).max(axis=1)
        if np.any(dev > tol):
            i = int(np.argmax(dev))
            raise SteradianError(
                f"element {i} is at {table.positions[i].tolist()} m in the weight file but at "
                f"{array.positions[i].tolist()} m in the design")


def _metric_differences(m: BeamMetrics, table: BeamTable) -> dict:
    """Largest absolute difference per metric between ``m`` and the file's stored metrics."""
    diffs = {}
    if table.metrics is not None:
        rows = m.rows()
        for f in (k for k in rows[0] if k != "beam"):  # the metric fields, in order
            vals = [(r[f], s.get(f)) for r, s in zip(rows, table.metrics, strict=True)]
            dv = [abs(a - b) for a, b in vals
                  if isinstance(a, (int, float)) and isinstance(b, (int, float))]
            if dv:
                diffs[f] = max(dv)
    return diffs


# ---------------------------------------------------------------------------------------
# The comparison
# ---------------------------------------------------------------------------------------
def _num(x) -> str:
    return repr(round(float(x), 6) + 0.0)


def _where(b: int, d) -> str:
    return f"beam {b} (theta {_num(d[0])}, phi {_num(d[1])})"


def _same_directions(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """(len(a), len(b)) bool: the directions are the same (phi ignored at the poles)."""
    tol = DIRECTION_TOLERANCE_DEG
    same_t = np.abs(a[:, None, 0] - b[None, :, 0]) <= tol
    pole = np.minimum(a[:, 0], 180.0 - a[:, 0]) <= tol
    same_p = np.abs(wrap_deg(a[:, None, 1] - b[None, :, 1])) <= tol
    return same_t & (same_p | pole[:, None])


def _match_beams(file_dirs: np.ndarray, ref_dirs: np.ndarray):
    """Match the file's beams to the design's by direction.

    Each design beam is taken by at most one file beam. Returns (match, lines, counts):
    ``match[j]`` is the design beam of file beam ``j`` (-1 when none, or when it repeats a
    direction already taken), the difference lines (beam count, missing, extra, repeated,
    out-of-order beams) and their counts.
    """
    same = _same_directions(file_dirs, ref_dirs)
    nf, nr = len(file_dirs), len(ref_dirs)
    lines = []
    if nf != nr:
        lines.append(f"the file holds {nf} beam{'s' * (nf != 1)}, the design gives {nr}")
    match = np.full(nf, -1)
    taken = {}  # design beam -> the file beam that holds it
    duplicated = []
    for j in range(nf):
        cand = [int(k) for k in np.flatnonzero(same[j])]
        free = [k for k in cand if k not in taken]
        if free:  # the design's beam at the same index first (a design may repeat a direction)
            k = j if j in free else free[0]
            match[j], taken[k] = k, j
        elif cand:
            duplicated.append((j, taken[cand[0]]))
    missing = [k for k in range(nr) if k not in taken]
    extra = [j for j in range(nf) if not same[j].any()]
    lines += [f"{_where(k, ref_dirs[k])} of the design is missing from the file"
              for k in missing]
    lines += [f"{_where(j, file_dirs[j])} of the file is not a beam of the design"
              for j in extra]
    lines += [f"{_where(j, file_dirs[j])} repeats the direction of beam {i}"
              for j, i in duplicated]
    moved = [j for j in range(nf) if match[j] >= 0 and match[j] != j]
    lines += [f"{_where(j, file_dirs[j])} is beam {int(match[j])} of the design (beams out "
              f"of order)" for j in moved]
    return match, lines, {"missing": len(missing), "extra": len(extra),
                          "duplicated": len(duplicated), "out_of_order": len(moved)}


def _element_line(table: BeamTable, j: int, n: int, got, want, count: int) -> str:
    """The difference line of file beam ``j``, first differing element ``n``."""
    head = f"{_where(j, table.directions[j])}, element {n}: "
    if table.encoding == "iq":
        text = (f"file has I/Q ({int(got[0])}, {int(got[1])}), design gives "
                f"({int(want[0])}, {int(want[1])}) (Q1.15)")
    else:
        idx = [i for i in range(2) if got[i] != want[i]]
        kind = ("phase code", "amplitude code")
        text = (f"file has {' and '.join(f'{kind[i]} {int(got[i])}' for i in idx)}, "
                f"design gives {' and '.join(str(int(want[i])) for i in idx)}")
    more = f" ({count} of {table.n_elements} elements differ)" if count > 1 else ""
    return head + text + more


def _compare_mask(table: BeamTable, enabled, mism: tuple, compared: dict):
    """Put a difference of the file's element enable mask from the design's first: a file
    that switches another element off (or on) is not the design's table, whatever its
    states."""
    own = np.ones(table.n_elements, bool) if enabled is None else np.asarray(enabled, bool)
    bad = np.flatnonzero(table.enabled != own)
    if not bad.size:
        return mism, compared
    n = int(bad[0])
    line = (f"element {n}: the file has it {'on' if table.enabled[n] else 'off'}, the design "
            f"{'on' if own[n] else 'off'} ({bad.size} element(s) differ in the enable mask)")
    compared = dict(compared, mask_differing=int(bad.size),
                    total=compared.get("total", len(mism)) + 1)
    return (line, *mism)[:MAX_LISTED], compared


def _compare(table: BeamTable, ref_dirs, ref_codes, ref_kinds=None) -> tuple[tuple, dict]:
    """Differences of ``table`` from the design's directions and states (either None: not
    compared). Returns (lines, compared)."""
    compared = {"directions": ref_dirs is not None, "states": ref_codes is not None,
                "beams_differing": 0, "elements_differing": 0, "missing": 0, "extra": 0,
                "duplicated": 0, "out_of_order": 0}
    lines = []
    match = np.arange(table.n_beams)
    if ref_dirs is not None:
        match, lines, counts = _match_beams(table.directions, ref_dirs)
        compared.update(counts)
    if ref_codes is not None or ref_kinds is not None:
        tol = IQ_TOLERANCE_LSB if table.encoding == "iq" else 0
        for j in range(table.n_beams):
            k = int(match[j])
            if k < 0:
                continue  # already reported: not a beam of the design, or a repeat
            if ref_kinds is not None and table.beam_kinds[j] != ref_kinds[k]:
                lines.append(f"{_where(j, table.directions[j])}: file has kind "
                             f"{table.beam_kinds[j]}, design gives {ref_kinds[k]}")
                compared["beams_differing"] += 1
                continue
            if ref_codes is None:
                continue
            bad = np.flatnonzero(np.any(np.abs(table.codes[j] - ref_codes[k]) > tol, axis=1))
            if bad.size:
                n = int(bad[0])
                lines.append(_element_line(table, j, n, table.codes[j, n], ref_codes[k, n],
                                           bad.size))
                compared["beams_differing"] += 1
                compared["elements_differing"] += int(bad.size)
    compared["total"] = len(lines)
    return tuple(lines[:MAX_LISTED]), compared
