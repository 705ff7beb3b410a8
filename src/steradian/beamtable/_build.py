"""Part of :mod:`steradian.beamtable` (see the package docstring)."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..array import Steering
from ..budget import require
from ..errors import SteradianError
from ..quantize import ChannelModel
from ..radiation import RF_EXPOSURE_CAUTION
from ..units import db20
from ._evaluate import BeamEvaluator
from ._metrics import BeamMetrics
from ._reference import sidelobe_offsets
from ._table import BEAM_KINDS, BeamTable

# ---------------------------------------------------------------------------------------
# Building (verifying a table read from a file is in _verify.py)
# ---------------------------------------------------------------------------------------
WeightSource = np.ndarray | Callable[[float, float], np.ndarray] | None


def steered_weights(array, directions, weights: WeightSource = None) -> np.ndarray:
    """Ideal weights (B, N) of ``array`` steered to each (theta_deg, phi_deg).

    ``weights``: ``None`` uses the array's own taper (and mask) with its steering mode;
    an (N,) array is a taper to steer instead; a callable ``f(theta_deg, phi_deg)`` returns
    each beam's weights directly (e.g. a per-beam optimizer result), masked by the array.
    """
    d = np.atleast_2d(np.asarray(directions, float))
    # 185 B per beam and element measured (tracemalloc) for a table without evaluation.
    require(200 * len(d) * array.n, f"a beam table of {len(d):,} beams x {array.n:,} elements",
            "use fewer beams or raise the memory budget (STERADIAN_MEMORY_BUDGET)")
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


def difference_signs(positions, kind: str, enabled=None) -> np.ndarray:
    """Per-element sign (N,) that turns sum weights into a ``kind`` beam.

    ``"sum"``: all +1. ``"difference_az"``: -1 on the elements with x below the centroid of
    the enabled elements, +1 above, 0 on the axis (within 1e-9 of the extent);
    ``"difference_el"``: the same in y. Sum weights times these signs are the comparator
    difference beam of a monopulse array (common practice; S. M. Sherman and D. K. Barton,
    *Monopulse Principles and Techniques*, 2nd ed., Artech House, 2011 -- from memory).
    """
    pos = np.asarray(positions, float)
    if kind == "sum":
        return np.ones(len(pos))
    if kind not in BEAM_KINDS:
        raise SteradianError(f"beam kind {kind!r} is not one of {', '.join(BEAM_KINDS)}")
    on = np.ones(len(pos), bool) if enabled is None else np.asarray(enabled, bool)
    c = pos[:, 0 if kind == "difference_az" else 1]
    u = c - c[on].mean()
    tol = 1e-9 * max(float(np.ptp(pos[on], axis=0).max()), 1e-300)
    sign = np.where(np.abs(u) <= tol, 0.0, np.sign(u))
    if not np.any(sign[on] > 0):
        raise SteradianError(f"beam kind {kind!r}: the enabled elements have no extent in "
                             f"{'x' if kind == 'difference_az' else 'y'}, so there is no such "
                             "difference beam")
    return sign


def expand_kinds(directions, kinds) -> tuple[np.ndarray, tuple]:
    """Beams of a table with ``kinds`` per direction: (directions (B K, 2), kinds (B K,)),
    direction-major, kind-minor (beam ``b K + k`` is kind ``k`` of direction ``b``)."""
    d = np.atleast_2d(np.asarray(directions, float))
    ks = ("sum",) if kinds is None else tuple(kinds)
    if not ks or len(set(ks)) != len(ks) or any(k not in BEAM_KINDS for k in ks):
        raise SteradianError(f"beam kinds must be distinct values of {', '.join(BEAM_KINDS)}, "
                             f"got {list(ks)}")
    return np.repeat(d, len(ks), axis=0), ks * len(d)


def kind_weights(array, directions, kinds, weights: WeightSource = None) -> np.ndarray:
    """Ideal weights (B, N) of beams of the given kinds (B,): :func:`steered_weights` times
    :func:`difference_signs` of each beam's kind."""
    w = steered_weights(array, directions, weights)
    if len(kinds) != len(w):
        raise SteradianError(f"kinds must be one per beam: {len(w)} beams, got {len(kinds)}")
    for k in set(kinds) - {"sum"}:
        rows = np.array([x == k for x in kinds])
        w[rows] *= difference_signs(array.positions, k, array.enabled)
    return w


def _array_metadata(array, channel: ChannelModel, efficiency: float) -> dict:
    from ..version import VERSION as __version__

    g = array.geometry
    amp = np.abs(array.taper)
    amp_db = db20(amp / amp.max(), floor=None)
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
    """Result of :func:`build_beam_table`: the table and how its beams perform.

    ``notes``: what a report must say besides the metrics (a dropped taper, dead or clipped
    channels; the last two are also issued as warnings). They are in the table's metadata
    under ``"notes"`` too.
    """

    table: BeamTable
    metrics: BeamMetrics
    quantized: object
    ideal: np.ndarray
    notes: tuple = ()


TAPER_SPREAD_DB = 0.05
"""An amplitude spread over the enabled elements above this (dB) is a taper a phase-only
channel cannot realise."""


def channel_ideal(channel: ChannelModel, w0: np.ndarray, enabled) -> tuple[np.ndarray, list]:
    """The ideal weights a channel without amplitude control is asked for, and notes.

    A phase-only beamformer cannot realise an amplitude taper (common practice): building
    its table from a tapered design is refused unless the channel says ``drop_taper``; then
    the ideal becomes the taper's phases at uniform amplitude and a note says so.
    """
    if channel.states.amplitude != "none":
        return w0, []
    on = np.ones(w0.shape[1], bool) if enabled is None else np.asarray(enabled, bool)
    a = np.abs(w0[:, on])
    spread = db20(a.max(axis=1) / np.maximum(a.min(axis=1), 1e-300), floor=None)
    worst = float(np.max(spread))
    if worst <= TAPER_SPREAD_DB:
        return w0, []
    if not channel.drop_taper:
        raise SteradianError(
            f"[channel] has no amplitude control (phase only) but the [taper] varies the "
            f"amplitude by {min(worst, 999.0):.2f} dB over the enabled elements: a phase-only "
            "beamformer cannot realise it; add an attenuator or DAC to [channel], use a "
            "uniform [taper], or set drop_taper = true in [channel] to build the table "
            "without the taper")
    w = np.where(np.abs(w0) > 0, w0 / np.where(np.abs(w0) > 0, np.abs(w0), 1.0), 0.0)
    w = np.where(on, np.where(np.abs(w0) > 0, w, 1.0), 0.0)
    return w, [f"amplitude taper dropped (drop_taper = true): the phase-only channel drives "
               f"every enabled element at full amplitude; the design's taper spans "
               f"{min(worst, 999.0):.2f} dB and the ideal beams are its uniform-amplitude "
               "version"]


def build_beam_table(array, channel: ChannelModel, directions, *,
                     weights: WeightSource = None, efficiency: float = 1.0,
                     evaluator: BeamEvaluator | None = None, metadata: dict | None = None,
                     evaluate: bool = True, element_power_w: float | None = None,
                     kinds=None, beam_kinds=None) -> BeamBuild:
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
    element_power_w : float, optional
        Power of one channel at full drive (W), for each beam's EIRP; the table's metadata
        then carries the RF exposure caution.
    kinds : sequence of str, optional
        Beam kinds per direction, of ``"sum"``, ``"difference_az"``, ``"difference_el"``
        (default sum only). The table then holds one beam per direction and kind, direction-
        major, kind-minor (see :func:`expand_kinds`); a difference beam's ideal weights are
        the sum weights times :func:`difference_signs`.
    beam_kinds : sequence of str, optional
        Instead of ``kinds``: the kind of each of the B beams of ``directions`` (to rebuild
        a file's table beam by beam).

    Returns
    -------
    BeamBuild

    Raises
    ------
    SteradianError
        A tapered design on a channel without amplitude control, unless the channel says
        ``drop_taper`` (see :func:`channel_ideal`).

    Warns
    -----
    UserWarning
        Dead or clipped channels, naming the elements (from the quantizer).
    """
    if beam_kinds is None:
        d, ks = expand_kinds(directions, kinds)
    else:
        d, ks = np.atleast_2d(np.asarray(directions, float)), tuple(beam_kinds)
    w0, notes = channel_ideal(channel, kind_weights(array, d, ks, weights), array.enabled)
    made = []

    def make_evaluator():
        if not made:
            made.append(evaluator or BeamEvaluator(array, efficiency=efficiency))
        return made[0]

    common, more = sidelobe_offsets(channel, w0, array.enabled, d, ks, make_evaluator)
    notes += more
    q = channel.quantize(w0, mask=array.enabled, common_offset_deg=common)
    notes += list(q.notes)
    codes = np.stack([q.phase_codes, q.amplitude_codes], -1)
    meta = _array_metadata(array, channel, efficiency)
    if notes:
        meta["notes"] = notes
    if element_power_w is not None:
        meta["element_power_w"] = element_power_w
        meta["rf_exposure_caution"] = RF_EXPOSURE_CAUTION
    meta.update(metadata or {})
    metrics = None
    if evaluate:
        metrics = make_evaluator().evaluate(q.realised, d, ideal=w0, commanded=q.commanded,
                              element_power_w=element_power_w, kinds=ks)
    table = BeamTable(channel.states, d, codes, "codes", q.phase_offsets_deg,
                      array.positions, meta, None if metrics is None else metrics.rows(),
                      q.enabled, ks)
    return BeamBuild(table, metrics, q, w0, tuple(notes))
