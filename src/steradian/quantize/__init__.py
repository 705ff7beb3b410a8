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
array centre) lets the boundaries decide: at :math:`\sin\theta_0 = 2^{1-b}` at half-wave
spacing every element phase of a symmetric array lies on a boundary, the two halves round in
opposite directions (a split, squinted beam) and floating-point noise picks the codes. Each
beam is therefore rounded with the common offset, over one phase step, that minimises the
quantization error power :math:`\lVert w_q - s\,w_0\rVert^2` (``s`` the least-squares
complex scale), i.e., as the amplitudes do not depend on the offset, that maximises
:math:`|w_0^H w_q|`, the beam's field in the commanded direction per unit drive. Error power
is what the directivity loss and the total quantization-lobe energy grow with (Mailloux,
2018, ch. 7) and it never prefers a worse-matched beam. For full-turn shifters the search is
exact: every distinct rounding over one step is scored
(``best_common_offset``, O(N log N) per beam) and the
offset is the middle of the best interval, so the result does not depend on rounding noise;
for limited spans :data:`COMMON_OFFSET_CANDIDATES` offsets ``(k + 1/2) step / K`` are tried.
Ties within 1e-9 go to the interval containing (or the candidate nearest) zero offset. With
randomised path offsets (below) no offset is searched: the rounding is then already
decorrelated from any reference, and the published loss statistics hold.

Least error power is not least sidelobe: when the phase progression is close to a whole
number of steps per element (3 bits, 32 elements at half-wave spacing, theta0 near 14 deg),
the error is a slow ramp with one wrap, and the best-gain rounding puts the wrap mid-array:
two half-apertures a step apart, a split beam with a -9.4 dB lobe. A beam table therefore
screens every distinct rounding within 0.1 dB of the best gain on its pattern and keeps the
one of lowest peak sidelobe (the channel's ``phase_reference``, default "auto";
:func:`steradian.beamtable.sidelobe_offsets`); :meth:`ChannelModel.offset_candidates` lists
the roundings.

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

from ._channel import CHANNEL_KEYS, ChannelModel, QuantizedWeights, channel_from_table
from ._states import (
    COMMON_OFFSET_CANDIDATES,
    DEAD_CHANNEL_DB,
    OFF_CODE,
    AmplitudeControl,
    OffsetMode,
    PhaseReference,
    StateMap,
)

__all__ = [
    "StateMap",
    "ChannelModel",
    "QuantizedWeights",
    "AmplitudeControl",
    "OffsetMode",
    "PhaseReference",
    "channel_from_table",
    "CHANNEL_KEYS",
    "OFF_CODE",
    "COMMON_OFFSET_CANDIDATES",
    "DEAD_CHANNEL_DB",
]
