"""Channel model and quantization: rounding to realisable states, calibration, offsets."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as hs

from steradian.errors import DesignError, FileFormatError, SteradianError
from steradian.io.calibration_csv import read_calibration
from steradian.quantize import OFF_CODE, ChannelModel, StateMap, channel_from_table
from steradian.units import wrap_deg


def _uniform_phases(rng, n):
    return np.exp(1j * rng.uniform(-np.pi, np.pi, n))


@pytest.mark.parametrize("bits", [2, 3, 4, 6])
def test_rms_phase_error_of_uniform_quantizer(rng, bits):
    """RMS phase error of a uniform b-bit phase quantizer is (2 pi / 2^b) / sqrt(12).

    Source: the uniform-quantizer noise model, error uniform over one step of variance
    step^2 / 12 (B. Widrow and I. Kollar, *Quantization Noise*, Cambridge University Press,
    2008, ch. 4), for phases spread evenly over the turn (common practice).
    """
    ch = ChannelModel.build(phase_bits=bits)
    q = ch.quantize(_uniform_phases(rng, 40_000))
    err = q.phase_error_deg().ravel()
    step = 360.0 / 2**bits
    assert np.sqrt(np.mean(err**2)) == pytest.approx(step / np.sqrt(12), rel=0.015)
    assert np.abs(err).max() <= step / 2 + 1e-9
    # The error is uniform over one step: its fourth moment is step^4 / 80.
    assert np.mean(err**4) == pytest.approx(step**4 / 80, rel=0.04)


@settings(max_examples=60, deadline=None)
@given(step=hs.floats(0.5, 90.0), phase=hs.floats(-720.0, 720.0))
def test_nearest_phase_state_full_turn(step, phase):
    """The chosen state is the circularly nearest one of the span (checked by brute force)."""
    sm = StateMap(step, int(np.ceil(360.0 / step - 1e-9)))
    code = int(sm.nearest_phase_code(phase))
    states = sm.phase_deg(np.arange(sm.phase_states))
    best = np.abs(wrap_deg(states - phase)).min()
    assert abs(wrap_deg(states[code] - phase)) <= best + 1e-9


def test_limited_phase_span_rounds_across_the_gap():
    """A span short of the full turn rounds to the nearer end across the gap."""
    sm = ChannelModel.build(phase_step_deg=10.0, phase_span_deg=180.0).states
    assert sm.phase_states == 19 and not sm.full_circle
    codes = sm.nearest_phase_code([350.0, 195.0, 263.0, 277.0, -5.0, 94.0])
    assert codes.tolist() == [0, 18, 18, 0, 0, 9]


def test_attenuator_rounds_in_db_and_clamps():
    """Step attenuator: nearest state in dB, within half a step inside the range, the last
    state beyond it (0.5 dB steps over 31.5 dB = 64 states, a common 6-bit part)."""
    ch = ChannelModel.build(phase_bits=6, attenuator_step_db=0.5, attenuator_span_db=31.5)
    sm = ch.states
    assert sm.amplitude_states == 64
    att = np.linspace(0, 31.5, 1001)
    codes = sm.nearest_amplitude_code(10 ** (-att / 20))
    assert np.abs(codes * 0.5 - att).max() <= 0.25 + 1e-9
    assert sm.nearest_amplitude_code([10 ** (-40 / 20), 0.0]).tolist() == [63, 63]
    assert sm.amplitude_lin(63) == pytest.approx(10 ** (-31.5 / 20))


def test_dac_rounds_linearly():
    """Linear DAC of b bits: amplitude error at most 1 / (2 (2^b - 1))."""
    sm = ChannelModel.build(phase_bits=5, dac_bits=6).states
    a = np.linspace(0, 1, 777)
    codes = sm.nearest_amplitude_code(a)
    assert np.abs(sm.amplitude_lin(codes) - a).max() <= 0.5 / 63 + 1e-12
    assert sm.amplitude_lin(0) == 0.0 and sm.amplitude_lin(63) == 1.0


def test_calibration_is_compensated(rng):
    """Dividing by the measured channel response before rounding: with fine controls the
    realised weights equal the ideal ones up to the per-beam scale."""
    n = 64
    cal = 10 ** (rng.normal(0, 0.5, n) / 20) * np.exp(1j * np.deg2rad(rng.normal(0, 8, n)))
    ch = ChannelModel.build(phase_bits=16, dac_bits=16, calibration=cal)
    w = rng.uniform(0.2, 1.0, (3, n)) * _uniform_phases(rng, (3, n))
    q = ch.quantize(w)
    rel = np.abs(q.realised - q.scale[:, None] * w) / np.abs(q.scale[:, None] * w)
    assert rel.max() < 1e-3
    # The strongest compensated channel of each beam is at full scale.
    assert np.abs(q.commanded).max(axis=1) == pytest.approx(np.ones(3), abs=1e-4)


def test_gain_offset_backs_off_the_strongest_channel(rng):
    """gain_offset_db = -3 puts the strongest channel 3 dB below full scale (code 6 of a
    0.5 dB attenuator)."""
    ch = ChannelModel.build(phase_bits=4, attenuator_step_db=0.5, attenuator_span_db=31.5,
                            gain_offset_db=-3.0)
    q = ch.quantize(np.array([1.0, 0.5, 0.25]))
    assert q.amplitude_codes.tolist() == [[6, 18, 30]]
    with pytest.raises(SteradianError, match="gain_offset_db"):
        ChannelModel.build(phase_bits=4, gain_offset_db=1.0)


def test_random_offsets_are_recorded_and_decorrelate_errors():
    """Randomised path offsets: realised phase = offset + P(code); the error of a uniform
    phase ramp becomes uncorrelated from element to element, while without offsets it is a
    periodic sawtooth (C. J. Miller, 1964; R. J. Mailloux, Phased Array Antenna Handbook,
    3rd ed., 2018, ch. 7)."""
    n = 4000
    ramp = np.exp(1j * np.deg2rad(0.37 * np.arange(n)))
    plain = ChannelModel.build(phase_bits=3).quantize(ramp)
    ch = ChannelModel.build(phase_bits=3, phase_offsets="random", offset_seed=11)
    dith = ch.quantize(ramp)
    assert np.array_equal(dith.phase_offsets_deg, ch.offsets_deg(n))  # reproducible
    assert np.all((dith.phase_offsets_deg >= 0) & (dith.phase_offsets_deg < 45.0))
    real_ph = dith.phase_offsets_deg + ch.states.phase_deg(dith.phase_codes[0])
    assert np.allclose(wrap_deg(np.angle(dith.realised[0], deg=True) - real_ph), 0, atol=1e-9)

    def lag1(e):
        e = e - e.mean()
        return float(np.mean(e[1:] * e[:-1]) / np.mean(e**2))

    assert lag1(plain.phase_error_deg()[0]) > 0.9
    assert abs(lag1(dith.phase_error_deg()[0])) < 0.05
    step = 45.0
    assert np.sqrt(np.mean(dith.phase_error_deg() ** 2)) == pytest.approx(step / np.sqrt(12),
                                                                          rel=0.04)


def test_mask_zeroes_disabled_elements(rng):
    w = _uniform_phases(rng, 8)
    mask = np.array([1, 1, 0, 1, 1, 1, 0, 1], bool)
    q = ChannelModel.build(phase_bits=4, dac_bits=4).quantize(w, mask=mask)
    assert np.all(q.realised[0, ~mask] == 0) and np.all(q.realised[0, mask] != 0)
    # Off, not weakest (issue 9): zero commanded state and the off flag as both codes.
    assert np.all(q.commanded[0, ~mask] == 0)
    assert np.all(q.phase_codes[0, ~mask] == OFF_CODE) and np.all(q.amplitude_codes[0, ~mask]
                                                                  == OFF_CODE)
    with pytest.raises(SteradianError, match="no non-zero weight"):
        ChannelModel.build(phase_bits=4).quantize(np.zeros(4))


def test_state_map_validation():
    with pytest.raises(SteradianError, match="full turn"):
        StateMap(10.0, 37)
    with pytest.raises(SteradianError, match="DAC"):
        StateMap(10.0, 36, "dac", 0.1, 16)
    with pytest.raises(SteradianError, match="amplitude must be one of"):
        StateMap(10.0, 36, "vga", 1.0, 4)
    sm = StateMap(10.0, 36, "attenuator", 0.25, 9)
    assert StateMap.from_dict(sm.to_dict()) == sm
    with pytest.raises(SteradianError, match="phase code 36 at beam 0, element 1"):
        sm.check_codes([[0, 36]], [[0, 0]])


def test_channel_table_keys_and_errors(tmp_path):
    ch = channel_from_table({"phase_bits": 5, "attenuator_step_db": 0.25,
                             "attenuator_span_db": 15.75})
    assert ch.states == StateMap(11.25, 32, "attenuator", 0.25, 64)
    with pytest.raises(DesignError, match=r"channel\.phase_bitz.*did you mean 'phase_bits'"):
        channel_from_table({"phase_bitz": 5})
    with pytest.raises(DesignError, match=r"channel\.phase_step_deg.*not both"):
        channel_from_table({"phase_bits": 5, "phase_step_deg": 11.25})
    with pytest.raises(DesignError, match=r"channel\.attenuator_span_db.*whole number"):
        channel_from_table({"phase_bits": 5, "attenuator_step_db": 0.5,
                            "attenuator_span_db": 10.2})
    with pytest.raises(DesignError, match=r"channel\.attenuator_span_db.*needs both"):
        channel_from_table({"phase_bits": 5, "attenuator_step_db": 0.5})
    with pytest.raises(DesignError, match=r"channel\.phase_offsets.*did you mean 'random'"):
        channel_from_table({"phase_bits": 5, "phase_offsets": "randon"})
    with pytest.raises(DesignError, match=r"channel\.phase_bits.*needs phase_bits"):
        channel_from_table({"dac_bits": 4})
    with pytest.raises(DesignError, match=r"channel\.calibration_file.*not found"):
        channel_from_table({"phase_bits": 5, "calibration_file": "nope.csv"},
                           base_dir=tmp_path)


def test_calibration_csv(tmp_path):
    """Calibration rows give gain (dB) and phase (deg); any order, each element once."""
    p = tmp_path / "cal.csv"
    p.write_text("# channel response\nelement,gain_db,phase_deg\n1,-6.0206,90\n0,0,0\n")
    cal = read_calibration(p, 2)
    assert cal[0] == pytest.approx(1.0)
    assert cal[1] == pytest.approx(0.5j, abs=1e-5)
    ch = channel_from_table({"phase_bits": 3, "calibration_file": "cal.csv"}, 2,
                            base_dir=tmp_path, read_file=read_calibration)
    assert np.allclose(ch.calibration, cal)
    p.write_text("element,gain_db,phase_deg\n0,0,0\n0,1,1\n")
    with pytest.raises(FileFormatError, match=r"cal.csv:3: element 0 appears twice"):
        read_calibration(p)
    p.write_text("element,gain_db,phase\n0,0,0\n")
    with pytest.raises(FileFormatError, match="did you mean 'phase_deg'"):
        read_calibration(p)
    p.write_text("element,gain_db,phase_deg\n0,0,x\n")
    with pytest.raises(FileFormatError, match=r":2: column 'phase_deg'"):
        read_calibration(p)
    p.write_text("element,gain_db,phase_deg\n0,0,0\n1,0,0\n")
    with pytest.raises(FileFormatError, match="has 2 channel rows, the array has 3"):
        read_calibration(p, 3)


def test_dead_channel_threshold_and_keys():
    """A calibrated gain more than dead_channel_db below the median channel is dead (named
    in a warning, left out of the beam level); channels within it are compensated as
    before (common practice: failed channels are flagged, not compensated)."""
    cal = np.ones(8, complex)
    cal[2] = 10 ** (-25 / 20)
    ch = ChannelModel.build(phase_bits=4, dac_bits=8, calibration=cal)
    assert ch.dead_channels().tolist() == [i == 2 for i in range(8)]
    with pytest.warns(UserWarning, match=r"element\(s\) 2 \(-25\.0 dB\)"):
        q = ch.quantize(np.ones(8))
    assert np.abs(q.commanded[0]).max() == pytest.approx(1.0)
    lax = ChannelModel.build(phase_bits=4, dac_bits=8, calibration=cal, dead_channel_db=30)
    assert not lax.dead_channels().any()
    q = lax.quantize(np.ones(8))  # compensated: the others backed off by 25 dB
    assert np.abs(q.commanded[0, 0]) == pytest.approx(10 ** (-25 / 20), abs=1 / 255)
    ch = channel_from_table({"phase_bits": 4, "dead_channel_db": 12.5})
    assert ch.dead_channel_db == 12.5
    with pytest.raises(DesignError, match=r"channel\.dead_channel_db"):
        channel_from_table({"phase_bits": 4, "dead_channel_db": -1})


def test_dead_channel_at_the_taper_peak_is_also_clipped():
    """A dead channel asked for more than full scale (it sits at the taper's peak, the live
    channels set the level) is named twice: dead, and clipped at full scale."""
    cal = np.array([1, 1, 1, 1e-20], complex)
    ch = ChannelModel.build(phase_bits=4, dac_bits=8, calibration=cal)
    with pytest.warns(UserWarning) as rec:
        q = ch.quantize(np.array([0.5, 0.5, 0.5, 1.0]))
    msgs = [str(r.message) for r in rec]
    assert any("dead channel(s) at element(s) 3" in m for m in msgs)
    assert any("clipped at full scale: element(s) 3 (asked +6.02 dB)" in m for m in msgs)
    assert q.notes == tuple(msgs)
    assert np.abs(q.commanded[0]) == pytest.approx([1, 1, 1, 1])
