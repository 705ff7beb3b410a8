"""Monte Carlo tolerance trials: seeded streams, error draws, the fast path against the plain
path, and the trial means against the published expressions for random errors."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import steradian as sr
from steradian.errors import DesignError, SteradianError
from steradian.quantize import ChannelModel
from steradian.studies import (
    ErrorModel,
    ToleranceStudy,
    draw_errors,
    tolerance_from_table,
    trial_rng,
    trial_statistics,
)
from steradian.tapers import taylor


def _line(n=64, steer=30.0, taper=True):
    t = taylor(n, 5, 30.0) if taper else np.ones(n)
    return sr.Array(sr.linear(n, 0.5), sr.C0, taper=t, steering=sr.Steering(steer, 0.0))


def _panel(n=8, steer=(20.0, 0.0)):
    t = taylor(n, 4, 25.0)
    return sr.Array(sr.rectangular(n, n, 0.5), sr.C0, taper=np.outer(t, t).ravel(),
                    steering=sr.Steering(*steer))


def _mean_se(x):
    x = np.asarray(x, float)
    return x.mean(), x.std(ddof=1) / math.sqrt(len(x))


# ---------------------------------------------------------------------------------------
# Random streams
# ---------------------------------------------------------------------------------------
def test_trial_stream_is_the_spawned_child_of_the_run_seed():
    """numpy's SeedSequence.spawn (reference library): trial i's stream is the i-th child of
    the run's seed sequence, so it can be rebuilt from (seed, i) alone."""
    kids = np.random.SeedSequence(1234).spawn(6)
    for i in (0, 3, 5):
        want = np.random.Generator(np.random.PCG64(kids[i])).random(5)
        assert np.array_equal(trial_rng(1234, i).random(5), want)


@settings(max_examples=25, deadline=None)
@given(seed=st.integers(0, 2**32), index=st.integers(0, 10**6),
       rate=st.floats(0, 0.5), amp=st.floats(0, 2), ph=st.floats(0, 30))
def test_draws_depend_on_seed_and_index_only(seed, index, rate, amp, ph):
    """Invariant: a trial's draws are the same whatever else ran before, and switching an
    error source on leaves the other sources' values unchanged (draws are made in full)."""
    m = ErrorModel(amplitude_db=amp, phase_deg=ph, failure_rate=rate)
    a = draw_errors(m, 16, trial_rng(seed, index))
    trial_rng(seed, index + 1).random(100)  # unrelated work in between
    b = draw_errors(m, 16, trial_rng(seed, index))
    assert np.array_equal(a.factor, b.factor) and np.array_equal(a.failed, b.failed)
    c = draw_errors(ErrorModel(amplitude_db=amp, phase_deg=ph, position_mm=1.0,
                               failure_rate=rate), 16, trial_rng(seed, index))
    assert np.array_equal(a.factor, c.factor) and np.array_equal(a.failed, c.failed)


def test_failure_count_and_stuck_mode():
    """A count fails exactly that many elements; a stuck element keeps its amplitude (with
    its amplitude error) and takes a random phase."""
    arr = _panel(8)
    s = ToleranceStudy(arr, ErrorModel(amplitude_db=0.3, failure_count=5,
                                       failure_mode="stuck"), seed=3)
    for i in range(5):
        e = s.errors(i)
        assert np.count_nonzero(e.failed) == 5
        w = s.trial_weights(i)
        nom = arr.weights()
        np.testing.assert_allclose(np.abs(w), np.abs(nom * e.factor), rtol=1e-12)
        np.testing.assert_allclose(np.angle(w[e.failed]), np.angle(np.exp(
            1j * e.stuck_phase[e.failed])), atol=1e-12)
    rows = s.evaluate(range(4))
    assert [r["n_failed"] for r in rows] == [5] * 4


def test_statistics_do_not_depend_on_row_order():
    """Invariant: the summary is a function of the set of rows; the worst trial carries the
    run seed and its index."""
    rng = np.random.default_rng(0)
    rows = [{"trial": i, "n_failed": int(rng.integers(3)), "directivity_dbi": rng.normal(20),
             "directivity_loss_db": rng.normal(), "gain_dbi": rng.normal(19),
             "psl_db": rng.normal(-25), "avg_sll_db": rng.normal(-40),
             "pointing_error_deg": abs(rng.normal())} for i in range(40)]
    a = trial_statistics(rows, 9)
    b = trial_statistics(rows[::-1], 9)
    assert a == b
    worst = max(rows, key=lambda r: r["psl_db"])
    assert a["psl_db"]["worst"] == {"value": worst["psl_db"], "trial": worst["trial"],
                                    "seed": 9}
    x = np.array([r["psl_db"] for r in rows])
    assert a["psl_db"]["mean"] == pytest.approx(x.mean(), rel=1e-15)
    assert a["psl_db"]["p95"] == pytest.approx(np.percentile(x, 95), rel=1e-15)


# ---------------------------------------------------------------------------------------
# Fast path against the plain path
# ---------------------------------------------------------------------------------------
@pytest.mark.parametrize("model, quantize", [
    (ErrorModel(amplitude_db=0.8, phase_deg=6.0), False),
    (ErrorModel(amplitude_db=0.3, phase_deg=3.0, failure_rate=0.05), True),
    (ErrorModel(phase_deg=4.0, failure_count=3, failure_mode="stuck"), False),
])
def test_fast_path_equals_plain_analysis(model, quantize):
    """The batched evaluation (shared element responses and power matrix) against each trial
    built as an Array and analysed alone by steradian.analysis.analyze."""
    ch = ChannelModel.build(phase_bits=5, attenuator_step_db=0.5,
                            attenuator_span_db=31.5) if quantize else None
    s = ToleranceStudy(_panel(8), model, seed=21, channel=ch)
    fast = s.evaluate(range(6))
    ref = s.evaluate_reference(range(6))
    for f, r in zip(fast, ref, strict=True):
        assert f["trial"] == r["trial"] and f["n_failed"] == r["n_failed"]
        assert f["directivity_dbi"] == pytest.approx(r["directivity_dbi"], abs=1e-9)
        assert f["psl_db"] == pytest.approx(r["psl_db"], abs=0.02)
        assert f["avg_sll_db"] == pytest.approx(r["avg_sll_db"], abs=1e-6)
        assert f["pointing_error_deg"] == pytest.approx(r["pointing_error_deg"], abs=1e-4)


def test_quantization_loss_matches_the_beam_table_evaluator():
    """Error-free trials with quantization: the directivity loss equals the beam-table
    evaluator's loss of the same quantized beam (the package's other quantization path).
    Uniform amplitude: a phase-only channel has no amplitude states."""
    arr = sr.Array(sr.rectangular(8, 8, 0.5), sr.C0, steering=sr.Steering(23.0, 17.0))
    ch = ChannelModel.build(phase_bits=3)
    row = ToleranceStudy(arr, ErrorModel(), channel=ch).evaluate([0])[0]
    q = ch.quantize(arr.weights())
    ev = sr.BeamEvaluator(arr.with_steering(None))
    m = ev.evaluate(q.realised, [[23.0, 17.0]], ideal=arr.weights()[None, :])
    assert row["directivity_loss_db"] == pytest.approx(float(m.loss_db[0]), abs=1e-6)
    assert row["directivity_loss_db"] > 0.05


def test_phase_only_channel_refuses_a_taper():
    """Quantization goes through the beam-table path: a tapered design on a phase-only
    channel is refused (common practice: a phase-only beamformer cannot realise an amplitude
    taper) unless the channel accepts dropping it."""
    with pytest.raises(SteradianError, match="phase only"):
        ToleranceStudy(_panel(8), ErrorModel(), channel=ChannelModel.build(phase_bits=4))
    s = ToleranceStudy(_panel(8), ErrorModel(),
                       channel=ChannelModel.build(phase_bits=4, drop_taper=True))
    w = s.trial_weights(0)
    np.testing.assert_allclose(np.abs(w), np.abs(w).max(), rtol=1e-9)


def test_position_errors_take_the_plain_path():
    """Position errors displace the elements: the row equals an analysis of the displaced
    array built by hand (positions + the trial's offsets, phases set for the nominal
    positions)."""
    arr = _panel(6)
    s = ToleranceStudy(arr, ErrorModel(position_mm=20.0), seed=4)  # lambda = 1 m here
    row = s.evaluate([2])[0]
    e = s.errors(2)
    moved = sr.Array(sr.Geometry(arr.positions + e.offsets), sr.C0,
                     taper=arr.weights(), steering=None)
    pk = sr.peak_directivity(moved)
    assert row["directivity_dbi"] == pytest.approx(pk.directivity_dbi, abs=1e-9)
    assert np.abs(e.offsets).max() > 0.005


# ---------------------------------------------------------------------------------------
# Against the published expressions
# ---------------------------------------------------------------------------------------
def test_directivity_and_average_sidelobe_against_random_error_theory():
    """Mailloux, Phased Array Antenna Handbook (3rd ed., ch. 7, random errors; recalled from
    memory): for small independent amplitude and phase errors of total variance
    sigma^2 = sigma_a^2 + sigma_phi^2 the expected directivity ratio is 1/(1 + sigma^2), and
    the average sidelobe level rises by sigma^2/(N eta) relative to the peak, eta the taper
    efficiency. A half-wave line of isotropic elements has orthogonal element patterns
    (sinc(k n d) = 0), the case the expressions assume. Checked within four standard errors
    of the 400-trial mean plus the expressions' own first-order error."""
    arr = _line(64)
    m = ErrorModel(amplitude_db=0.5, phase_deg=5.0)
    s = ToleranceStudy(arr, m, seed=2026)
    rows = s.evaluate(range(400))
    nominal = ToleranceStudy(arr, ErrorModel()).evaluate([0])[0]
    d0 = 10 ** (nominal["directivity_dbi"] / 10)
    ratio = [10 ** (r["directivity_dbi"] / 10) / d0 for r in rows]
    mean, se = _mean_se(ratio)
    assert mean == pytest.approx(1 / (1 + m.sigma2), abs=4 * se + m.sigma2**2)
    t = arr.taper.real
    eta = t.sum() ** 2 / (len(t) * (t**2).sum())
    ideal = 10 ** (nominal["avg_sll_db"] / 10)
    excess = [10 ** (r["avg_sll_db"] / 10) - ideal for r in rows]
    mean, se = _mean_se(excess)
    want = m.sigma2 / (len(t) * eta)
    assert mean == pytest.approx(want, abs=4 * se + 0.03 * want)


def test_failed_elements_directivity_against_theory():
    """Failed elements (off) with probability 1 - P: E|sum w'|^2 = P^2 |sum w|^2 +
    P(1 - P) sum |w|^2 and E sum|w'|^2 = P sum|w|^2, so the expected directivity ratio is
    about P + (1 - P)/(N eta) (Mailloux, ch. 7, recalled from memory; common practice:
    directivity follows the number of working elements)."""
    arr = _line(64, taper=False)
    p_fail = 0.1
    s = ToleranceStudy(arr, ErrorModel(failure_rate=p_fail), seed=77)
    rows = s.evaluate(range(300))
    d0 = 10 ** (ToleranceStudy(arr, ErrorModel()).evaluate([0])[0]["directivity_dbi"] / 10)
    mean, se = _mean_se([10 ** (r["directivity_dbi"] / 10) / d0 for r in rows])
    P = 1 - p_fail
    assert mean == pytest.approx(P + (1 - P) / 64, abs=4 * se + 2e-3)
    nf, se_nf = _mean_se([r["n_failed"] for r in rows])
    assert nf == pytest.approx(64 * p_fail, abs=4 * se_nf)


# ---------------------------------------------------------------------------------------
# The [tolerance] table
# ---------------------------------------------------------------------------------------
def test_tolerance_table_is_checked():
    """Unknown keys name the dotted key with the closest valid one; wrong types and
    contradictory failure settings are refused; a good table reads back."""
    with pytest.raises(DesignError, match="did you mean 'phase_deg'") as e:
        tolerance_from_table({"phase_dg": 3.0}, "d.toml")
    assert e.value.key == "tolerance.phase_dg"
    with pytest.raises(DesignError, match="must be a whole number"):
        tolerance_from_table({"trials": 2.5}, "d.toml")
    with pytest.raises(SteradianError, match="failure_rate or failure_count"):
        tolerance_from_table({"failure_rate": 0.1, "failure_count": 2}, "d.toml")
    with pytest.raises(DesignError, match="failure_mode"):
        tolerance_from_table({"failure_mode": "stuk"}, "d.toml")
    spec = tolerance_from_table({"trials": 20, "seed": 4, "phase_deg": 2.0}, "d.toml",
                                trials=30)
    assert spec.trials == 30 and spec.seed == 4 and spec.model.phase_deg == 2.0
    assert spec.model.sigma2 == pytest.approx(math.radians(2.0) ** 2)
