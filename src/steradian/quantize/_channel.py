"""Part of :mod:`steradian.quantize` (see the package docstring): the channel model,
quantization and the design file's ``[channel]`` table."""

from __future__ import annotations

import math
import warnings
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import get_args

import numpy as np

from ..errors import DesignError, SteradianError
from ..schema import Section
from ..units import db20, from_db20, wrap_deg
from ..validate import choice, count
from ._states import (
    COMMON_OFFSET_CANDIDATES,
    DEAD_CHANNEL_DB,
    OFF_CODE,
    OffsetMode,
    PhaseReference,
    StateMap,
    raise_key,
    state_map,
)


@dataclass(frozen=True, eq=False)
class QuantizedWeights:
    """Result of :meth:`ChannelModel.quantize` for B beams of N elements.

    Attributes
    ----------
    phase_codes, amplitude_codes : ndarray of int64, shape (B, N)
        Hardware codes.
    commanded : ndarray of complex, shape (B, N)
        Nominal channel states ``A(a) exp(j P(p))`` (full scale 1).
    realised : ndarray of complex, shape (B, N)
        What the array radiates: commanded times calibration, offsets and mask.
    ideal : ndarray of complex, shape (B, N)
        The ideal weights quantized.
    scale : ndarray of complex, shape (B,)
        Per-beam factor taking ideal weights to the realised level (strongest channel at
        ``gain_offset_db``) and common phase (the chosen common offset), so
        ``realised ~ scale * ideal``.
    phase_offsets_deg : ndarray, shape (N,)
        Channel path phases added back after rounding (zeros without offsets).
    enabled : ndarray of bool, shape (N,)
        Element mask; disabled elements hold the off flag and a zero commanded state.
    common_offset_deg : ndarray, shape (B,)
        Common phase added to each beam before rounding (see the module notes).
    notes : tuple of str
        Dead or clipped channels (also issued as warnings).
    """

    phase_codes: np.ndarray
    amplitude_codes: np.ndarray
    commanded: np.ndarray
    realised: np.ndarray
    ideal: np.ndarray
    scale: np.ndarray
    phase_offsets_deg: np.ndarray
    enabled: np.ndarray | None = None
    common_offset_deg: np.ndarray | None = None
    notes: tuple = ()

    def phase_error_deg(self) -> np.ndarray:
        """Realised minus ideal phase (degrees, wrapped; the beam's common offset, which
        changes no pattern, taken out), NaN where either weight is zero."""
        ok = (np.abs(self.ideal) > 0) & (np.abs(self.realised) > 0)
        ref = np.angle(self.ideal * np.exp(1j * np.angle(self.scale))[:, None], deg=True)
        d = wrap_deg(np.angle(self.realised, deg=True) - ref)
        return np.where(ok, d, np.nan)

    def amplitude_error_db(self) -> np.ndarray:
        """Realised over scaled ideal amplitude (dB), NaN where either weight is zero."""
        ref = np.abs(self.ideal) * np.abs(self.scale)[:, None]
        ok = (ref > 0) & (np.abs(self.realised) > 0)
        r = np.where(ok, np.abs(self.realised), 1.0) / np.where(ok, ref, 1.0)
        return np.where(ok, db20(r), np.nan)

    def rms_phase_error_deg(self) -> np.ndarray:
        """RMS phase error per beam (degrees) over elements with non-zero weights."""
        e = self.phase_error_deg()
        return np.sqrt(np.nanmean(e**2, axis=1))


def offset_intervals(x, g, active, step_deg: float) -> tuple[np.ndarray, np.ndarray]:
    """Every distinct rounding ``k_n = round(x_n + c)`` as ``c`` sweeps one step, with its
    score ``|sum_n g_n exp(j k_n step)|``.

    As ``c`` sweeps one step each active element's rounded value rises by one exactly once,
    at ``c_n = floor(x_n + 1/2) + 1/2 - x_n``: sorting these crossings gives every distinct
    rounding and, by a cumulative sum, its score, in O(N log N) per beam.

    Parameters
    ----------
    x : ndarray, shape (B, N)
        Element phases in steps.
    g : ndarray of complex, shape (B, N)
        ``conj(w0_n)`` times the element's amplitude, calibration and path phase.
    active : ndarray of bool, shape (N,)
        Elements taking part (the others neither cross nor score).
    step_deg : float
        The phase step.

    Returns
    -------
    middle : ndarray, shape (B, N)
        The middle of each rounding's interval of ``c`` (steps), in crossing order.
    score : ndarray, shape (B, N)
        Its score; -1 for intervals narrower than 1e-9 step (crossings equal up to rounding
        noise, which no offset can select reliably).
    """
    k0 = np.floor(x + 0.5)
    cn = np.where(active, np.clip(k0 + 0.5 - x, 0.0, 1.0), 1.0)
    rot = np.exp(1j * np.deg2rad(step_deg))
    term = np.where(active, g * np.exp(1j * np.deg2rad(step_deg) * k0), 0.0)
    order = np.argsort(cn, axis=1, kind="stable")
    cs = np.take_along_axis(cn, order, 1)
    inc = np.take_along_axis(term * (rot - 1.0), order, 1)
    S = term.sum(axis=1)[:, None] + np.concatenate(
        [np.zeros((len(x), 1)), np.cumsum(inc[:, :-1], axis=1)], axis=1)  # j crossings done
    lo = np.concatenate([cs[:, -1:] - 1.0, cs[:, :-1]], axis=1)
    score = np.where(cs - lo > 1e-9, np.abs(S), -1.0)
    return 0.5 * (lo + cs), score


def best_common_offset(x, g, active, step_deg: float) -> np.ndarray:
    """Common offset (in phase steps, per beam) maximising ``|sum_n g_n exp(j k_n step)|``
    over every rounding ``k_n = round(x_n + c)``, ``c`` over one step
    (:func:`offset_intervals`).

    The result is the middle of the first interval whose score is within 1e-9 of the best,
    so it lies well inside its interval and does not depend on rounding noise.
    """
    mid, score = offset_intervals(x, g, active, step_deg)
    best = np.argmax(score >= score.max(axis=1, keepdims=True) * (1 - 1e-9), axis=1)
    return mid[np.arange(len(x)), best]


def _path_offsets(n: int, span: float, seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    return rng.uniform(0.0, span, n)


@dataclass(frozen=True, eq=False)
class ChannelModel:
    """A beamformer channel: its states, calibration, level and path offsets.

    Build one with :meth:`build` (from bits or steps) or :func:`channel_from_table` (from a
    design file's ``[channel]`` table).

    Parameters
    ----------
    states : StateMap
        Phase and amplitude states.
    calibration : array_like of complex, shape (N,), optional
        Measured response of each channel relative to nominal (1 = perfect).
    gain_offset_db : float
        Level of the strongest channel of each beam relative to full scale, dB (<= 0).
    phase_offsets : {"none", "random"}
        Randomised channel path phases (see the module notes).
    offset_seed : int
        Seed of the offset generator (the offsets are reproducible from it).
    offset_span_deg : float, optional
        Offsets are uniform over [0, span); default one phase step.
    calibration_source : str, optional
        Where the calibration came from (for reports).
    dead_channel_db : float
        A calibrated gain more than this below the median enabled channel is a dead channel
        (see the module notes).
    drop_taper : bool
        The user accepts that a channel without amplitude control drops an amplitude taper
        (a beam table refuses a tapered design on a phase-only channel otherwise).
    phase_reference : {"auto", "gain", "sidelobe"}
        How a beam table picks each beam's common phase offset: ``"gain"`` the rounding of
        least error power (:meth:`quantize`'s default); ``"sidelobe"`` the rounding of lowest
        peak sidelobe among those within a tenth of a dB of it (a pattern screen, see
        :func:`steradian.beamtable.sidelobe_offsets`); ``"auto"`` (default) the sidelobe
        screen when its work is small, else the gain rule with a note. Quantizing weights
        alone (:meth:`quantize`) always uses the gain rule unless given offsets.
    """

    states: StateMap
    calibration: np.ndarray | None = None
    gain_offset_db: float = 0.0
    phase_offsets: OffsetMode = "none"
    offset_seed: int = 0
    offset_span_deg: float | None = None
    calibration_source: str | None = field(default=None)
    dead_channel_db: float = DEAD_CHANNEL_DB
    drop_taper: bool = False
    phase_reference: PhaseReference = "auto"

    def __post_init__(self):
        if not isinstance(self.states, StateMap):
            raise SteradianError("states must be a StateMap")
        dd = float(self.dead_channel_db)
        if not math.isfinite(dd) or dd <= 0:
            raise SteradianError(f"dead_channel_db must be a positive number of dB, got {dd}")
        object.__setattr__(self, "dead_channel_db", dd)
        object.__setattr__(self, "drop_taper", bool(self.drop_taper))
        g = float(self.gain_offset_db)
        if not math.isfinite(g) or g > 0:
            raise SteradianError(
                f"gain_offset_db must be zero or negative (dB below full scale), got {g}")
        object.__setattr__(self, "gain_offset_db", g)
        choice("phase_offsets", self.phase_offsets, get_args(OffsetMode))
        choice("phase_reference", self.phase_reference, get_args(PhaseReference))
        object.__setattr__(self, "offset_seed", count("offset_seed", self.offset_seed, 0))
        if self.offset_span_deg is not None:
            s = float(self.offset_span_deg)
            if not math.isfinite(s) or not 0 < s <= 360:
                raise SteradianError(f"offset_span_deg must be in (0, 360], got {s}")
            object.__setattr__(self, "offset_span_deg", s)
        if self.calibration is not None:
            c = np.asarray(self.calibration, complex).reshape(-1)
            if not np.all(np.isfinite(c)) or np.any(c == 0):
                i = int(np.flatnonzero(~np.isfinite(c) | (c == 0))[0])
                raise SteradianError(f"calibration of element {i} must be finite and non-zero,"
                                     f" got {c[i]}")
            c = c.copy()
            c.setflags(write=False)
            object.__setattr__(self, "calibration", c)

    @classmethod
    def build(cls, *, phase_bits: int | None = None, phase_step_deg: float | None = None,
              phase_span_deg: float | None = None, attenuator_step_db: float | None = None,
              attenuator_span_db: float | None = None, dac_bits: int | None = None,
              **kwargs) -> ChannelModel:
        """Channel from the usual datasheet numbers.

        Parameters
        ----------
        phase_bits : int, optional
            A ``b``-bit shifter: 2^b states of 360 / 2^b degrees over the full turn.
        phase_step_deg, phase_span_deg : float, optional
            Instead of bits: the step and the span from the first to the last state
            (default: the largest whole number of steps below 360 deg).
        attenuator_step_db, attenuator_span_db : float, optional
            Step attenuator: span / step + 1 states (span a whole number of steps).
        dac_bits : int, optional
            Linear amplitude DAC of 2^b states instead of an attenuator.
        **kwargs
            The other :class:`ChannelModel` fields.
        """
        states = state_map(phase_bits, phase_step_deg, phase_span_deg, attenuator_step_db,
                            attenuator_span_db, dac_bits, raise_key)
        return cls(states, **kwargs)

    # ---- per-element data ----------------------------------------------------------------
    def _check_n(self, n: int) -> None:
        if self.calibration is not None and self.calibration.size != n:
            raise SteradianError(f"calibration has {self.calibration.size} channels but the "
                                 f"array has {n} elements")

    def offsets_deg(self, n: int) -> np.ndarray:
        """Channel path phases (degrees) for ``n`` elements: zeros, or the seeded offsets."""
        if self.phase_offsets == "none":
            return np.zeros(n)
        span = self.offset_span_deg or self.states.phase_step_deg
        return _path_offsets(n, span, self.offset_seed)

    def realise(self, commanded, phase_offsets_deg=None, mask=None) -> np.ndarray:
        """What the array radiates for nominal channel states ``commanded`` (B, N) or (N,)."""
        c = np.asarray(commanded, complex)
        n = c.shape[-1]
        self._check_n(n)
        out = c.copy()
        if self.calibration is not None:
            out = out * self.calibration
        if phase_offsets_deg is not None:
            out = out * np.exp(1j * np.deg2rad(np.asarray(phase_offsets_deg, float)))
        if mask is not None:
            out = np.where(np.asarray(mask, bool), out, 0.0)
        return out

    def quantize(self, weights, *, mask=None, phase_offsets_deg=None,
                 common_offset_deg=None) -> QuantizedWeights:
        """Nearest realisable states for ideal weights of shape (N,) or (B, N).

        Parameters
        ----------
        weights : array_like of complex
            Ideal weights, element order, one row per beam.
        mask : array_like of bool, shape (N,), optional
            Enabled elements; disabled ones are off: zero commanded state and the off flag
            (:data:`OFF_CODE`) as both codes.
        phase_offsets_deg : array_like, shape (N,), optional
            Channel path phases; default :meth:`offsets_deg`.
        common_offset_deg : array_like, shape (B,), optional
            The common phase offset of each beam (e.g. one of :meth:`offset_candidates`);
            default: the offset of least quantization error power (see the module notes).

        Returns
        -------
        QuantizedWeights

        Warns
        -----
        UserWarning
            Naming dead channels (calibration) and channels clipped at full scale.
        """
        w, off, m = self._inputs(weights, mask, phase_offsets_deg)
        t = w if self.calibration is None else w / self.calibration
        t = np.where(m, t, 0.0)
        amp, s, notes = self._levels(w, t, m)
        ac = self.states.nearest_amplitude_code(amp)
        if common_offset_deg is not None:
            common_offset_deg = np.asarray(common_offset_deg, float).reshape(-1)
            if common_offset_deg.shape != (len(w),) or not np.all(
                    np.isfinite(common_offset_deg)):
                raise SteradianError(f"common_offset_deg must be {len(w)} finite offsets "
                                     f"(one per beam), got shape {common_offset_deg.shape}")
        pc, common = self._phase_codes(np.angle(t, deg=True) - off, ac, w, off, m,
                                       common_offset_deg)
        cmd = np.where(m, self.states.commanded(pc, ac), 0.0)
        real = self.realise(cmd, off, m)
        pc = np.where(m, pc, OFF_CODE)
        ac = np.where(m, ac, OFF_CODE)
        scale = s * np.exp(1j * np.deg2rad(common))  # realised ~ cal * (t * scale) = w * scale
        for n in notes:
            warnings.warn(n, UserWarning, stacklevel=2)
        return QuantizedWeights(pc, ac, cmd, real, np.where(m, w, 0.0), scale, off, m,
                                common, tuple(notes))

    def _inputs(self, weights, mask, phase_offsets_deg):
        """Checked (weights (B, N), path offsets (N,), mask (N,))."""
        w = np.atleast_2d(np.asarray(weights, complex))
        if w.ndim != 2 or w.shape[1] == 0:
            raise SteradianError(f"weights must have shape (N,) or (B, N), got {w.shape}")
        if not np.all(np.isfinite(w)):
            b, n = np.argwhere(~np.isfinite(w))[0]
            raise SteradianError(f"weight of beam {b}, element {n} is not finite")
        n = w.shape[1]
        self._check_n(n)
        off = (self.offsets_deg(n) if phase_offsets_deg is None
               else np.asarray(phase_offsets_deg, float).reshape(-1))
        if off.shape != (n,):
            raise SteradianError(f"phase offsets have {off.size} entries, array has {n}")
        m = np.ones(n, bool) if mask is None else np.asarray(mask, bool).reshape(-1)
        if m.shape != (n,):
            raise SteradianError(f"mask has {m.size} entries, array has {n} elements")
        return w, off, m

    def dead_channels(self, mask=None) -> np.ndarray:
        """Enabled channels whose calibrated gain lies more than ``dead_channel_db`` below
        the median enabled channel (bool, shape (N,)); none without a calibration."""
        if self.calibration is None:
            return np.zeros(0 if mask is None else np.size(mask), bool)
        g = np.abs(self.calibration)
        m = np.ones(g.size, bool) if mask is None else np.asarray(mask, bool).reshape(-1)
        ref = np.median(g[m]) if m.any() else 1.0
        return m & (g < ref * from_db20(-self.dead_channel_db))

    def _levels(self, w, t, m):
        """Requested amplitudes (B, N), per-beam scale (B,) and notes on dead or clipped
        channels. The strongest live channel of each beam sits at ``gain_offset_db``."""
        dead = self.dead_channels(m) if self.calibration is not None else np.zeros_like(m)
        live = m & ~dead
        peak = np.abs(np.where(live, t, 0.0)).max(axis=1)
        if np.any(peak == 0):
            raise SteradianError(f"beam {int(np.flatnonzero(peak == 0)[0])} has no non-zero "
                                 "weight on an enabled" + (", live" if dead.any() else "")
                                 + " element")
        s = from_db20(self.gain_offset_db) / peak
        amp = np.abs(t) * s[:, None]
        notes = []
        if dead.any():
            ref = np.median(np.abs(self.calibration[m]))
            amp[:, dead] = np.abs(w[:, dead]) * s[:, None] / ref
            idx = np.flatnonzero(dead)
            g = db20(np.abs(self.calibration[idx]) / ref, floor=None)
            notes.append(
                "calibration: dead channel(s) at element(s) "
                + ", ".join(f"{i} ({x:.1f} dB)" for i, x in zip(idx.tolist(), g, strict=True))
                + f", more than {self.dead_channel_db:g} dB below the median channel: not "
                "compensated in amplitude and left out of the beam level; repair the channel "
                "or disable the element")
        over = m & np.any(amp > 1.0 + 1e-9, axis=0)
        if over.any():
            idx = np.flatnonzero(over)
            worst = db20(amp[:, idx].max(axis=0), floor=None)
            notes.append("channel(s) clipped at full scale: element(s) " + ", ".join(
                f"{i} (asked {x:+.2f} dB)" for i, x in zip(idx.tolist(), worst, strict=True)))
        return amp, s, notes

    def _phase_codes(self, ph, ac, w, off, m, common=None):
        """Phase codes (B, N) and the common offset (B,) of least quantization error power,
        or the given ``common`` offsets (B,) in degrees.

        The score is ``|w0^H w_q|`` (the amplitudes do not depend on the offset, so this is
        the least error power). Full-turn shifters: every distinct rounding over one step is
        scored exactly (:func:`best_common_offset`); limited spans: the offsets
        ``(k + 1/2) step / K``, K = COMMON_OFFSET_CANDIDATES. Ties within 1e-9 go to the
        first candidate. With randomised path offsets no offset is searched.
        """
        st = self.states
        if common is None and self.phase_offsets != "none":
            return st.nearest_phase_code(ph), np.zeros(len(ph))
        if common is None:
            cands, score = self._candidates(ph, self._score_weights(w, ac, off, m), m)
            best = np.argmax(score >= score.max(axis=1, keepdims=True) * (1 - 1e-9), axis=1)
            common = cands[np.arange(len(ph)), best]
        return st.nearest_phase_code(ph + common[:, None]), common

    def _score_weights(self, w, ac, off, m):
        """``g`` of :func:`offset_intervals`: conj(w0) times amplitude, path and calibration."""
        g = np.where(m, w, 0.0).conj() * self.states.amplitude_lin(ac) * np.exp(
            1j * np.deg2rad(off))
        return g if self.calibration is None else g * self.calibration

    def _candidates(self, ph, g, m):
        """Candidate common offsets (B, J) in degrees and their scores (B, J) (-1: none)."""
        st = self.states
        if st.full_circle:
            mid, score = offset_intervals(ph / st.phase_step_deg, g, m, st.phase_step_deg)
            return mid * st.phase_step_deg, score
        K = COMMON_OFFSET_CANDIDATES
        cands = (np.arange(K) + 0.5) * st.phase_step_deg / K
        score = np.stack([np.abs(np.sum(g * np.exp(1j * np.deg2rad(
            st.phase_deg(st.nearest_phase_code(ph + c)))), axis=1)) for c in cands], axis=1)
        return np.broadcast_to(cands, score.shape).copy(), score

    def offset_candidates(self, weights, *, mask=None,
                          phase_offsets_deg=None) -> tuple[np.ndarray, np.ndarray]:
        """Every common phase offset worth trying per beam, with its main-beam loss.

        Returns
        -------
        offsets_deg : ndarray, shape (B, J)
            One offset inside each distinct rounding (full-turn shifters: every distinct
            rounding over one phase step, J = N; limited spans: the
            :data:`COMMON_OFFSET_CANDIDATES` fixed offsets). With randomised path offsets:
            the single offset 0.
        loss_db : ndarray, shape (B, J)
            ``20 log10`` of the best score ``|w0^H w_q|`` over this one's: the field lost in
            the commanded direction against the best-gain rounding (0 for that one; NaN for
            an offset that cannot select its rounding reliably).
        """
        w, off, m = self._inputs(weights, mask, phase_offsets_deg)
        t = w if self.calibration is None else w / self.calibration
        t = np.where(m, t, 0.0)
        amp, _, _ = self._levels(w, t, m)
        ac = self.states.nearest_amplitude_code(amp)
        if self.phase_offsets != "none":
            return np.zeros((len(w), 1)), np.zeros((len(w), 1))
        cands, score = self._candidates(np.angle(t, deg=True) - off,
                                        self._score_weights(w, ac, off, m), m)
        best = score.max(axis=1, keepdims=True)
        with np.errstate(divide="ignore", invalid="ignore"):
            loss = np.where(score > 0, db20(best / np.where(score > 0, score, 1.0),
                                            floor=None), np.nan)
        return cands, loss

    # ---- description -----------------------------------------------------------------
    def describe(self) -> dict:
        """JSON-friendly description of the channel (for file metadata and reports)."""
        d = {"states": self.states.to_dict(), "summary": self.states.describe(),
             "gain_offset_db": self.gain_offset_db, "phase_offsets": self.phase_offsets}
        if self.drop_taper:
            d["drop_taper"] = True
        d["phase_reference"] = self.phase_reference
        if self.phase_offsets != "none":
            d["offset_seed"] = self.offset_seed
            d["offset_span_deg"] = self.offset_span_deg or self.states.phase_step_deg
        if self.calibration is not None:
            c = self.calibration
            d["calibration"] = {
                "source": self.calibration_source, "channels": int(c.size),
                "gain_db_range": [float(np.min(db20(c, floor=None))),
                                  float(np.max(db20(c, floor=None)))],
                "phase_deg_rms": float(np.sqrt(np.mean(np.angle(c, deg=True) ** 2))),
                "dead_channel_db": self.dead_channel_db,
                "dead_channels": np.flatnonzero(self.dead_channels()).tolist()}
        return d



CHANNEL_KEYS = (
    "phase_bits", "phase_step_deg", "phase_span_deg",
    "attenuator_step_db", "attenuator_span_db", "dac_bits",
    "calibration_file", "gain_offset_db",
    "phase_offsets", "offset_seed", "offset_span_deg",
    "dead_channel_db", "drop_taper", "phase_reference",
)
"""Keys of a design file's ``[channel]`` table."""


def channel_from_table(table: dict, n_elements: int | None = None, *, source=None,
                       base_dir=None, section: str = "channel",
                       read_file: Callable[..., np.ndarray] | None = None) -> ChannelModel:
    """Channel model from a design file's ``[channel]`` table.

    Keys: ``phase_bits`` or ``phase_step_deg`` (+ ``phase_span_deg``); optionally
    ``attenuator_step_db`` and ``attenuator_span_db``, or ``dac_bits``; ``calibration_file``
    (CSV, relative to ``base_dir``, read by ``read_file(path, n_elements)``:
    :func:`steradian.io.calibration_csv.read_calibration`); ``gain_offset_db``;
    ``phase_offsets`` ("none" or "random"), ``offset_seed``, ``offset_span_deg``;
    ``dead_channel_db`` (default 20); ``drop_taper`` (true: accept that a channel without
    amplitude control drops the design's amplitude taper); ``phase_reference`` ("auto",
    "gain" or "sidelobe", see :class:`ChannelModel`).

    Raises
    ------
    DesignError
        Naming ``channel.<key>``, with the closest valid key for an unknown one.
    """
    t = Section(section, table, None if source is None else str(source))
    t.only(CHANNEL_KEYS)

    def fail(key, msg):
        raise t.error(key, msg)

    g = table.get
    states = state_map(g("phase_bits"), g("phase_step_deg"), g("phase_span_deg"),
                        g("attenuator_step_db"), g("attenuator_span_db"), g("dac_bits"), fail)
    cal = cal_src = None
    if "calibration_file" in t:
        path = t.path("calibration_file", Path(base_dir) if base_dir is not None else Path())
        if read_file is None:
            raise t.error("calibration_file", "reading a calibration file needs read_file "
                          "(e.g. steradian.io.calibration_csv.read_calibration)")
        cal, cal_src = read_file(path, n_elements), table["calibration_file"]
    kw = {k: t.number(k) for k in ("gain_offset_db", "offset_span_deg", "dead_channel_db")
          if k in t}
    if "drop_taper" in t:
        kw["drop_taper"] = t.boolean("drop_taper")
    if "phase_offsets" in t:
        kw["phase_offsets"] = t.string("phase_offsets", choices=get_args(OffsetMode))
    if "phase_reference" in t:
        kw["phase_reference"] = t.string("phase_reference", choices=get_args(PhaseReference))
    if "offset_seed" in t:
        kw["offset_seed"] = t.integer("offset_seed", minimum=0)
    try:
        return ChannelModel(states, cal, calibration_source=cal_src, **kw)
    except DesignError:
        raise
    except SteradianError as exc:
        key = next((k for k in ("gain_offset_db", "offset_span_deg", "dead_channel_db")
                    if k in str(exc)), None)
        raise t.error(key, str(exc)) from None
