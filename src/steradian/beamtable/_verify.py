"""Part of :mod:`steradian.beamtable` (see the package docstring): verifying a table read
from a file against the design."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import SteradianError
from ..quantize import ChannelModel
from ..units import wrap_deg
from ._build import WeightSource, steered_weights
from ._evaluate import BeamEvaluator, BeamMetrics
from ._table import BeamTable


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
        for f in (k for k in rows[0] if k != "beam"):  # the metric fields, in order
            vals = [(r[f], s.get(f)) for r, s in zip(rows, table.metrics, strict=True)]
            dv = [abs(a - b) for a, b in vals
                  if isinstance(a, (int, float)) and isinstance(b, (int, float))]
            if dv:
                diffs[f] = max(dv)
    return Verification(m, diffs, notes)


