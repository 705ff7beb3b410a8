r"""Beamformer channel model: what phase and amplitude states a channel can realise.

A beamformer channel behind each element has a phase control (a digital phase shifter of
``b`` bits, or any step in degrees over a span) and an amplitude control (a step attenuator
in dB, a linear DAC of ``b`` bits, or none). :class:`ChannelModel` maps ideal complex weights
to the nearest states those controls can realise, and tells what the array then radiates.

Signal model (per element n, one beam)::

    realised_n = mask_n * cal_n * exp(j off_n) * A(a_n) * exp(j P(p_n))

- ``p_n``, ``a_n``: the phase and amplitude codes loaded into the hardware.
  :math:`P(p) = p\,\Delta_\phi` (degrees, state 0 at 0 deg); the attenuator gives
  :math:`A(a) = 10^{-a\,\Delta_{dB}/20}` (code 0 is no attenuation); the DAC gives
  :math:`A(a) = a / (2^b - 1)`; with no amplitude control A = 1.
- ``cal_n``: the measured complex response of channel n relative to nominal (optional
  calibration file). Ideal weights are divided by it before rounding, so the hardware's own
  errors are compensated to the resolution of the controls.
- ``off_n``: a known fixed phase of each channel path (the randomised-offset mode below).
- ``mask_n``: 0 for disabled elements. A disabled element is *off*: its commanded state is
  exactly zero and its codes are the off flag ``(OFF_CODE, OFF_CODE)`` (both 0xFFFF), never a
  weak attenuator state.

Rounding is per control: phase to the circularly nearest phase state, amplitude to the
nearest state in the control's own unit (dB for an attenuator, linear for a DAC). Per beam the
strongest channel is set to ``gain_offset_db`` below full scale (0 dB: code 0 of the
attenuator, full scale of the DAC); weaker channels follow the taper, and any weaker than the
control's range reaches its last state.

Common phase reference
----------------------
A common phase added to every channel of a beam leaves its pattern unchanged, but it moves
the element phases against the rounding boundaries. Rounding against a fixed reference (the
array centre) makes the result depend on where those boundaries fall: near
:math:`\sin\theta_0 = 2^{1-b}` at half-wave spacing every element phase of a symmetric
array sits next to a boundary, and the two halves round in opposite directions (a split,
squinted beam). Each beam is therefore rounded with the common offset, among
:data:`COMMON_OFFSET_CANDIDATES` offsets ``(k + 1/2) step / K`` spread over one phase step,
that minimises the quantization error power :math:`\lVert w_q - s\,w_0\rVert^2` (``s`` the
least-squares complex scale; equivalently, as the amplitudes do not depend on the offset, the
largest :math:`|w_0^H w_q|`, the beam's field in the commanded direction per unit drive).
Error power is the quantity the directivity loss and the total quantization-lobe energy grow
with (Mailloux, 2018, ch. 7), and it is a smooth, deterministic criterion: near-ties within
1e-12 go to the lowest ``k``, so the choice does not depend on rounding noise. The half-step
shift of the candidates keeps exact ties of a symmetric array off the boundaries.

Dead and clipped channels
-------------------------
With a calibration, a channel whose measured gain lies more than ``dead_channel_db`` (20 dB)
below the median enabled channel is *dead*: it cannot be compensated, and dividing by its
gain would push every other channel to the bottom of its range. It is left out of the
per-beam level, driven at its taper level without amplitude compensation, and named in a
warning. Any enabled channel asked for more than full scale is clipped to full scale and
named in a warning (common practice: a channel failure is flagged, not silently absorbed).

Randomised phase offsets
------------------------
A uniform phase ramp rounded by a ``b``-bit shifter leaves a periodic (sawtooth) error, whose
harmonics radiate *quantization lobes* of about :math:`2^{-2b}` relative to the beam. Adding a
known, different phase to each channel path before rounding decorrelates the errors from
element to element, spreading that energy into a low, even floor (Miller, 1964; Mailloux,
2018, ch. 7). With ``phase_offsets="random"`` each channel n is given an offset drawn
uniformly from ``[0, offset_span_deg)`` (default one phase step) from a seeded generator; the
code is chosen for ``ideal - off_n`` and the channel's own path adds ``off_n`` back. The
offsets must exist in the hardware (a line length, or a phase the firmware adds to every
command); they are recorded in every weight file so firmware and verification can apply them.

References
----------
C. J. Miller, "Minimizing the effects of phase quantization errors in an electronically
scanned array," *Proc. Symp. Electronically Scanned Array Techniques and Applications*,
RADC-TDR-64-225, vol. 1, 1964, pp. 17-38.

R. J. Mailloux, *Phased Array Antenna Handbook*, 3rd ed., Artech House, 2018, ch. 7
(phase-shifter quantization: RMS error, gain loss, quantization lobes and their
decorrelation).

B. Widrow and I. Kollar, *Quantization Noise*, Cambridge University Press, 2008, ch. 4
(uniform quantizer: error uniform over one step, variance step^2 / 12).
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Literal, get_args

import numpy as np

from .errors import DesignError, SteradianError
from .schema import Section
from .units import db20, from_db20, wrap_deg
from .validate import choice, count

__all__ = [
    "StateMap",
    "ChannelModel",
    "QuantizedWeights",
    "AmplitudeControl",
    "OffsetMode",
    "channel_from_table",
    "CHANNEL_KEYS",
    "OFF_CODE",
    "COMMON_OFFSET_CANDIDATES",
    "DEAD_CHANNEL_DB",
]

AmplitudeControl = Literal["none", "attenuator", "dac"]
OffsetMode = Literal["none", "random"]

_TOL = 1e-9

OFF_CODE = 0xFFFF
"""Off flag: a disabled element's phase and amplitude codes are both OFF_CODE (65535)."""

COMMON_OFFSET_CANDIDATES = 16
"""Common phase offsets tried per beam, ``(k + 1/2) / K`` of one phase step each."""

DEAD_CHANNEL_DB = 20.0
"""Default: a calibrated gain this far below the median channel marks a dead channel."""


@dataclass(frozen=True)
class StateMap:
    """What the codes of a channel mean: the part of the channel a weight file carries.

    Parameters
    ----------
    phase_step_deg : float
        Phase step between adjacent phase codes (degrees, > 0). Code p means p * step.
    phase_states : int
        Number of phase codes (0 .. phase_states - 1); they may not exceed a full turn.
    amplitude : {"none", "attenuator", "dac"}
        Amplitude control. "attenuator": code a means ``a * amplitude_step`` dB of
        attenuation; "dac": code a means linear amplitude ``a / (amplitude_states - 1)``;
        "none": one state of amplitude 1.
    amplitude_step : float
        dB per code (attenuator) or linear amplitude per code (DAC, 1 / (states - 1)); 0 for
        "none".
    amplitude_states : int
        Number of amplitude codes (1 for "none").
    """

    phase_step_deg: float
    phase_states: int
    amplitude: AmplitudeControl = "none"
    amplitude_step: float = 0.0
    amplitude_states: int = 1

    def __post_init__(self):
        step = float(self.phase_step_deg)
        if not math.isfinite(step) or step <= 0 or step > 360:
            raise SteradianError(f"phase_step_deg must be in (0, 360], got {self.phase_step_deg}")
        object.__setattr__(self, "phase_step_deg", step)
        n = count("phase_states", self.phase_states)
        if (n - 1) * step >= 360.0 - _TOL * 360:
            raise SteradianError(
                f"{n} phase states of {step:g} deg span more than a full turn "
                f"(at most {math.ceil(360.0 / step - _TOL)})")
        object.__setattr__(self, "phase_states", n)
        choice("amplitude", self.amplitude, get_args(AmplitudeControl))
        m = count("amplitude_states", self.amplitude_states)
        a_step = float(self.amplitude_step)
        if self.amplitude == "none":
            if m != 1 or a_step != 0.0:
                raise SteradianError("amplitude 'none' has one state and step 0, got "
                                     f"{m} states of step {a_step}")
        elif self.amplitude == "attenuator":
            if not math.isfinite(a_step) or a_step <= 0:
                raise SteradianError(f"attenuator step must be positive dB, got {a_step}")
        else:
            if m < 2:
                raise SteradianError(f"a DAC needs at least 2 states, got {m}")
            want = 1.0 / (m - 1)
            if abs(a_step - want) > 1e-12:
                raise SteradianError(f"DAC with {m} states has step 1/{m - 1} = {want!r}, "
                                     f"got {a_step!r}")
            a_step = want
        object.__setattr__(self, "amplitude_step", a_step)
        object.__setattr__(self, "amplitude_states", m)

    # ---- meaning of codes ------------------------------------------------------------
    @property
    def full_circle(self) -> bool:
        """True when the phase states cover the whole turn evenly (360 / step states)."""
        return abs(self.phase_states * self.phase_step_deg - 360.0) <= _TOL * 360

    def phase_deg(self, codes) -> np.ndarray:
        """Phase (degrees) of phase codes."""
        return np.asarray(codes, float) * self.phase_step_deg

    def amplitude_lin(self, codes) -> np.ndarray:
        """Linear amplitude (full scale 1) of amplitude codes."""
        c = np.asarray(codes, float)
        if self.amplitude == "none":
            return np.ones_like(c)
        if self.amplitude == "attenuator":
            return from_db20(-c * self.amplitude_step)
        return c / (self.amplitude_states - 1)

    def commanded(self, phase_codes, amplitude_codes) -> np.ndarray:
        """Complex state ``A(a) exp(j P(p))`` of code pairs (the channel's nominal output)."""
        return self.amplitude_lin(amplitude_codes) * np.exp(
            1j * np.deg2rad(self.phase_deg(phase_codes)))

    # ---- rounding -----------------------------------------------------------------------
    def nearest_phase_code(self, phase_deg) -> np.ndarray:
        """Code of the circularly nearest phase state."""
        step, n = self.phase_step_deg, self.phase_states
        p = np.mod(np.asarray(phase_deg, float), 360.0)
        if self.full_circle:
            return np.rint(p / step).astype(np.int64) % n
        # Limited span: the nearest state is the rounded one inside the span, or one of the
        # two ends across the gap.
        cands = np.stack([np.clip(np.rint(p / step), 0, n - 1), np.zeros_like(p),
                          np.full_like(p, n - 1)])
        dist = np.abs(wrap_deg(cands * step - p))
        return np.take_along_axis(cands, dist.argmin(axis=0)[None], 0)[0].astype(np.int64)

    def nearest_amplitude_code(self, amplitude) -> np.ndarray:
        """Code of the nearest amplitude state (in dB for an attenuator, linear for a DAC)."""
        a = np.asarray(amplitude, float)
        m = self.amplitude_states
        if self.amplitude == "none":
            return np.zeros(a.shape, np.int64)
        if self.amplitude == "attenuator":
            att = -db20(np.where(a > 0, a, 1.0))
            c = np.where(a > 0, np.rint(att / self.amplitude_step), m - 1)
            return np.clip(c, 0, m - 1).astype(np.int64)
        return np.clip(np.rint(a * (m - 1)), 0, m - 1).astype(np.int64)

    def check_codes(self, phase_codes, amplitude_codes, where: str | None = None) -> None:
        """Raise naming the first code outside the channel's range (beam, element, code)."""
        for name, codes, n in (("phase", phase_codes, self.phase_states),
                               ("amplitude", amplitude_codes, self.amplitude_states)):
            c = np.asarray(codes)
            bad = (c < 0) | (c >= n)
            if bad.any():
                idx = tuple(int(i) for i in np.argwhere(bad)[0])
                loc = (f"beam {idx[0]}, element {idx[1]}" if len(idx) == 2
                       else f"element {idx[0]}")
                pre = f"{where}: " if where else ""
                raise SteradianError(
                    f"{pre}{name} code {int(c[idx])} at {loc} is out of range 0..{n - 1}")

    # ---- description -----------------------------------------------------------------
    def to_dict(self) -> dict:
        """JSON-friendly description (exact: floats kept as given)."""
        return {"phase_step_deg": self.phase_step_deg, "phase_states": self.phase_states,
                "amplitude": self.amplitude, "amplitude_step": self.amplitude_step,
                "amplitude_states": self.amplitude_states}

    @classmethod
    def from_dict(cls, d: dict) -> StateMap:
        """Inverse of :meth:`to_dict`."""
        keys = {"phase_step_deg", "phase_states", "amplitude", "amplitude_step",
                "amplitude_states"}
        if not isinstance(d, dict) or set(d) != keys:
            got = sorted(d) if isinstance(d, dict) else type(d).__name__
            raise SteradianError(f"state map needs keys {sorted(keys)}, got {got}")
        return cls(**d)

    def describe(self) -> str:
        """One line for people."""
        ph = f"phase {self.phase_states} states of {self.phase_step_deg:g} deg"
        if self.amplitude == "attenuator":
            am = (f"attenuator {self.amplitude_states} states of {self.amplitude_step:g} dB "
                  f"(0 to {(self.amplitude_states - 1) * self.amplitude_step:g} dB)")
        elif self.amplitude == "dac":
            am = f"linear DAC {self.amplitude_states} states"
        else:
            am = "no amplitude control"
        return f"{ph}; {am}"


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
        states = _state_map(phase_bits, phase_step_deg, phase_span_deg, attenuator_step_db,
                            attenuator_span_db, dac_bits, _raise)
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

    def quantize(self, weights, *, mask=None, phase_offsets_deg=None) -> QuantizedWeights:
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
        pc, common = self._phase_codes(np.angle(t, deg=True) - off, ac, w, off, m)
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

    def _phase_codes(self, ph, ac, w, off, m):
        """Phase codes (B, N) and the common offset (B,) of least quantization error power.

        See the module notes: offsets ``(k + 1/2) step / K``, K = COMMON_OFFSET_CANDIDATES;
        the score is ``|w0^H w_q|`` (amplitudes fixed), the lowest k within 1e-12 wins.
        """
        st = self.states
        K = COMMON_OFFSET_CANDIDATES
        cands = (np.arange(K) + 0.5) * st.phase_step_deg / K
        amp = st.amplitude_lin(ac)
        if self.calibration is not None:
            amp = amp * self.calibration
        w0 = np.where(m, w, 0.0).conj()
        codes = [st.nearest_phase_code(ph + c) for c in cands]
        score = np.stack([np.abs(np.einsum("bn,bn->b", w0, np.where(
            m, amp * np.exp(1j * np.deg2rad(st.phase_deg(pc) + off)), 0.0)))
            for pc in codes])  # (K, B)
        best = np.argmax(score >= score.max(axis=0) * (1 - 1e-12), axis=0)
        pc = np.stack(codes)[best, np.arange(len(best))]
        return pc, cands[best]

    # ---- description -----------------------------------------------------------------
    def describe(self) -> dict:
        """JSON-friendly description of the channel (for file metadata and reports)."""
        d = {"states": self.states.to_dict(), "summary": self.states.describe(),
             "gain_offset_db": self.gain_offset_db, "phase_offsets": self.phase_offsets}
        if self.drop_taper:
            d["drop_taper"] = True
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


# ---------------------------------------------------------------------------------------
# Construction from numbers or a design table
# ---------------------------------------------------------------------------------------
def _raise(key: str, message: str):
    raise SteradianError(f"{key}: {message}")


def _number(fail, key, v, positive=True) -> float:
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        fail(key, f"must be a number, got {v!r}")
    v = float(v)
    if not math.isfinite(v) or (positive and v <= 0):
        fail(key, f"must be a positive number, got {v!r}")
    return v


def _bits(fail, key, v, hi) -> int:
    if isinstance(v, bool) or not isinstance(v, int):
        fail(key, f"must be a whole number of bits, got {v!r}")
    if not 1 <= v <= hi:
        fail(key, f"must be 1 .. {hi}, got {v}")
    return v


def _phase_states(fail, phase_bits, phase_step_deg, phase_span_deg) -> tuple[float, int]:
    """(step in degrees, number of states) of the phase shifter."""
    if phase_bits is not None and phase_step_deg is not None:
        fail("phase_step_deg", "give phase_bits or phase_step_deg, not both")
    if phase_bits is not None:
        b = _bits(fail, "phase_bits", phase_bits, 16)
        if phase_span_deg is not None:
            fail("phase_span_deg", "a b-bit shifter covers the full turn; give "
                 "phase_step_deg to set a span")
        return 360.0 / 2**b, 2**b
    if phase_step_deg is None:
        fail("phase_bits", "the channel needs phase_bits or phase_step_deg")
    step = _number(fail, "phase_step_deg", phase_step_deg)
    if step > 360:
        fail("phase_step_deg", f"must be at most 360, got {step}")
    if phase_span_deg is None:
        return step, math.ceil(360.0 / step - _TOL)
    span = _number(fail, "phase_span_deg", phase_span_deg, positive=False)
    r = span / step
    if span < 0 or abs(r - round(r)) > 1e-6:
        fail("phase_span_deg", f"must be a whole number of {step:g} deg steps, got {span:g}")
    n_ph = round(r) + 1
    if (n_ph - 1) * step >= 360.0 - _TOL * 360:
        fail("phase_span_deg", f"{span:g} deg reaches a full turn; the last state is at most "
             f"{360 - step:g} deg")
    return step, n_ph


def _state_map(phase_bits, phase_step_deg, phase_span_deg, att_step, att_span, dac_bits,
               fail: Callable[[str, str], None]) -> StateMap:
    """StateMap from datasheet numbers; ``fail(key, message)`` raises for bad ones."""
    step, n_ph = _phase_states(fail, phase_bits, phase_step_deg, phase_span_deg)
    if dac_bits is not None and (att_step is not None or att_span is not None):
        fail("dac_bits", "give an attenuator (attenuator_step_db, attenuator_span_db) or "
             "dac_bits, not both")
    if dac_bits is not None:
        b = _bits(fail, "dac_bits", dac_bits, 16)
        return StateMap(step, n_ph, "dac", 1.0 / (2**b - 1), 2**b)
    if att_step is None and att_span is None:
        return StateMap(step, n_ph)
    if att_step is None or att_span is None:
        fail("attenuator_step_db" if att_step is None else "attenuator_span_db",
             "an attenuator needs both attenuator_step_db and attenuator_span_db")
    a_step = _number(fail, "attenuator_step_db", att_step)
    a_span = _number(fail, "attenuator_span_db", att_span, positive=False)
    r = a_span / a_step
    if a_span < 0 or abs(r - round(r)) > 1e-6:
        fail("attenuator_span_db", f"must be a whole number of {a_step:g} dB steps, got "
             f"{a_span:g}")
    n_a = round(r) + 1
    if n_a > 65536:
        fail("attenuator_span_db", f"{n_a} states exceed 65536")
    return StateMap(step, n_ph, "attenuator", a_step, n_a)


CHANNEL_KEYS = (
    "phase_bits", "phase_step_deg", "phase_span_deg",
    "attenuator_step_db", "attenuator_span_db", "dac_bits",
    "calibration_file", "gain_offset_db",
    "phase_offsets", "offset_seed", "offset_span_deg",
    "dead_channel_db", "drop_taper",
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
    amplitude control drops the design's amplitude taper).

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
    states = _state_map(g("phase_bits"), g("phase_step_deg"), g("phase_span_deg"),
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
