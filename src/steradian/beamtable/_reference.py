"""Part of :mod:`steradian.beamtable` (see the package docstring): each beam's common phase
offset chosen on its pattern (the channel's ``phase_reference``)."""

from __future__ import annotations

import warnings
from collections.abc import Callable

import numpy as np

from ..errors import SteradianError
from ..quantize import ChannelModel

SCREEN_LOSS_DB = 0.1
"""Roundings whose main-beam field lies within this (dB) of the best-gain rounding are
screened for their sidelobes; more would trade gain for sidelobes unasked."""

SCREEN_CANDIDATES = 64
"""Most roundings screened per beam (spread evenly over the phase step when there are more)."""

SCREEN_REFINED = 3
"""Roundings per beam measured with the refined lobe search after the sample screen."""

SCREEN_WORK = 2.0e9
"""Complex multiply-adds the ``"auto"`` phase reference may spend on the screen; beyond it
the gain rule is used and a note says what the screen would have needed."""

TIE_DB = 0.01
"""Peak sidelobes closer than this (dB) are equal: the rounding of smaller gain loss wins."""


def _spread(idx: np.ndarray, most: int) -> np.ndarray:
    """At most ``most`` of the sorted indices ``idx``, evenly spread."""
    if len(idx) <= most:
        return idx
    return idx[np.unique(np.linspace(0, len(idx) - 1, most).round().astype(int))]


def sidelobe_offsets(channel: ChannelModel, w0: np.ndarray, mask, directions, kinds,
                     evaluator: Callable[[], object]) -> tuple[np.ndarray | None, list[str]]:
    """Each beam's common phase offset of lowest peak sidelobe (the channel's
    ``phase_reference``), or None for the channel's gain rule.

    A common phase leaves the ideal pattern unchanged but moves every element against the
    rounding boundaries; as it sweeps one step each element's rounding changes once, so
    there are at most N distinct roundings (:meth:`ChannelModel.offset_candidates`). The
    rounding of least error power (the gain rule) can put the error's wrap mid-aperture and
    split the beam (see :mod:`steradian.quantize`). Here the roundings within
    :data:`SCREEN_LOSS_DB` of the best gain are screened on the search-set samples
    (:meth:`BeamEvaluator.sample_sidelobes`), the :data:`SCREEN_REFINED` best (and the
    best-gain one) measured with the refined lobe search, and the lowest peak sidelobe kept
    (ties within :data:`TIE_DB`: the smaller gain loss). Sum beams only: a difference beam
    keeps the gain rule.

    Parameters
    ----------
    channel : ChannelModel
    w0 : ndarray, shape (B, N)
        Ideal weights of the beams.
    mask : array_like of bool, shape (N,), or None
        Enabled elements.
    directions : ndarray, shape (B, 2)
        Commanded (theta_deg, phi_deg) per beam.
    kinds : sequence of str, shape (B,)
        Beam kinds.
    evaluator : callable
        Returns the :class:`BeamEvaluator` of the array (made only when the screen runs).

    Returns
    -------
    offsets : ndarray, shape (B,), or None
        Common offsets (degrees) for :meth:`ChannelModel.quantize`; None: the gain rule.
    notes : list of str
        Why the screen did not run, when ``"auto"`` fell back to the gain rule.

    Raises
    ------
    SteradianError
        ``phase_reference = "sidelobe"`` with a screen larger than :data:`SCREEN_WORK`.
    """
    mode = channel.phase_reference
    if mode == "gain" or channel.phase_offsets != "none":
        return None, []
    cands, loss = channel.offset_candidates(w0, mask=mask)
    B, N = w0.shape
    # The gain rule's own choice: the first rounding within 1e-9 of the best score.
    best = np.argmax(np.nan_to_num(loss, nan=np.inf) <= -20 * np.log10(1 - 1e-9), axis=1)
    chosen = cands[np.arange(B), best]
    rows = []  # (beam, candidate offset, its loss)
    for b in range(B):
        if kinds[b] != "sum":
            continue
        ok = np.flatnonzero(np.isfinite(loss[b]) & (loss[b] <= SCREEN_LOSS_DB))
        if len(ok) > 1:
            rows += [(b, cands[b, j], loss[b, j]) for j in _spread(ok, SCREEN_CANDIDATES)]
    if not rows:
        return chosen, []
    ev = evaluator()
    work = float(len(rows)) * len(ev.dirs) * N
    if work > SCREEN_WORK:
        what = (f"screening {len(rows):,} roundings on {len(ev.dirs):,} directions x {N:,} "
                f"elements needs about {work / 1e9:.1f} G multiply-adds (limit "
                f"{SCREEN_WORK / 1e9:.1f} G)")
        if mode == "sidelobe":
            raise SteradianError(f"channel.phase_reference = 'sidelobe': {what}; use 'gain' "
                                 "or fewer beams")
        return None, [f"phase reference: the gain rule ('auto': {what})"]
    bi = np.array([r[0] for r in rows])
    off = np.array([r[1] for r in rows])
    ls = np.array([r[2] for r in rows])
    with warnings.catch_warnings():  # dead or clipped channels: the final quantize warns
        warnings.simplefilter("ignore", UserWarning)
        W = channel.quantize(w0[bi], mask=mask, common_offset_deg=off).realised
    screen = ev.sample_sidelobes(W)
    pick = []
    for b in np.unique(bi):
        mine = np.flatnonzero(bi == b)
        top = mine[np.argsort(screen[mine], kind="stable")[:SCREEN_REFINED]]
        gain_best = mine[np.argmin(ls[mine])]
        pick += sorted(set(top.tolist()) | {int(gain_best)})
    pick = np.array(pick)
    psl = ev.evaluate(W[pick], directions[bi[pick]]).psl_db
    for b in np.unique(bi[pick]):
        mine = np.flatnonzero(bi[pick] == b)
        low = psl[mine].min()
        near = mine[psl[mine] <= low + TIE_DB]
        j = pick[near[np.argmin(ls[pick[near]])]]
        chosen[b] = off[j]
    return chosen, []
