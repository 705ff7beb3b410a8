"""Part of :mod:`steradian.quantize` (see the package docstring): what codes mean, and
channel states from datasheet numbers."""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Literal, get_args

import numpy as np

from ..errors import SteradianError
from ..units import db20, from_db20, wrap_deg
from ..validate import choice, count

AmplitudeControl = Literal["none", "attenuator", "dac"]
OffsetMode = Literal["none", "random"]
PhaseReference = Literal["auto", "gain", "sidelobe"]

TOL = 1e-9

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
        if (n - 1) * step >= 360.0 - TOL * 360:
            raise SteradianError(
                f"{n} phase states of {step:g} deg span more than a full turn "
                f"(at most {math.ceil(360.0 / step - TOL)})")
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
        return abs(self.phase_states * self.phase_step_deg - 360.0) <= TOL * 360

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


# ---------------------------------------------------------------------------------------
# Construction from numbers or a design table
# ---------------------------------------------------------------------------------------
def raise_key(key: str, message: str):
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
        return step, math.ceil(360.0 / step - TOL)
    span = _number(fail, "phase_span_deg", phase_span_deg, positive=False)
    r = span / step
    if span < 0 or abs(r - round(r)) > 1e-6:
        fail("phase_span_deg", f"must be a whole number of {step:g} deg steps, got {span:g}")
    n_ph = round(r) + 1
    if (n_ph - 1) * step >= 360.0 - TOL * 360:
        fail("phase_span_deg", f"{span:g} deg reaches a full turn; the last state is at most "
             f"{360 - step:g} deg")
    return step, n_ph


def state_map(phase_bits, phase_step_deg, phase_span_deg, att_step, att_span, dac_bits,
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


