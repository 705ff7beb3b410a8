"""Array value object: weights, steering, masks, validation."""

from __future__ import annotations

import numpy as np
import pytest

import steradian as st
from steradian.errors import SteradianError


def test_steering_phases_point_the_beam(f1):
    """Phase steering: w_n = exp(-j k r0.r_n), so AF(r0) = sum |w_n| (common practice)."""
    a = st.Array(st.rectangular(4, 4, 0.5), f1, steering=st.Steering(30, 45))
    af = st.field(a, a.steering.unit[None, :]).e_theta[0]
    assert abs(af) == pytest.approx(16.0, rel=1e-12)
    assert af.real == pytest.approx(16.0, rel=1e-12)


def test_phase_steering_squints_and_delay_does_not(f1):
    """Off-frequency: phase steering moves the beam (squint), true time delay does not.

    For a line along x steered to theta0 with phase shifters set at f0, the beam at f points
    where sin(theta) = (f0/f) sin(theta0) (common practice, e.g. Mailloux, Phased Array
    Antenna Handbook, 3rd ed., ch. 1).
    """
    g = st.linear(64, 0.5)
    f = 1.1 * f1
    th = np.linspace(0, 89.9, 40001)
    d = st.Directions.from_angles(th, 0.0)
    for mode, expect in [("phase", np.degrees(np.arcsin(np.sin(np.radians(30)) / 1.1))),
                         ("delay", 30.0)]:
        a = st.Array(g, f1, steering=st.Steering(30, 0, mode))
        inten = st.field(a, d, frequency=f).intensity
        assert th[np.argmax(inten)] == pytest.approx(expect, abs=0.01)


def test_mask_zeroes_weights(f1):
    """Disabled elements get zero weight."""
    m = np.ones(8, bool)
    m[[0, 3]] = False
    a = st.Array(st.linear(8, 0.5), f1, enabled=m)
    w = a.weights()
    assert np.count_nonzero(w) == 6
    assert w[0] == 0 and w[3] == 0


@pytest.mark.parametrize(
    "kwargs, match",
    [
        ({"taper": np.ones(5)}, "5 weights"),
        ({"taper": [1, 1, 1, np.nan, 1, 1, 1, 1]}, "NaN"),
        ({"enabled": np.zeros(8, bool)}, "disabled"),
        ({"frequency": -1.0}, "frequency"),
    ],
)
def test_bad_array_input(f1, kwargs, match):
    """Bad weights, masks and frequencies raise SteradianError naming the problem."""
    args = {"geometry": st.linear(8, 0.5), "frequency": f1}
    args.update(kwargs)
    with pytest.raises(SteradianError, match=match):
        st.Array(**args)


def test_steering_below_horizon_of_front_element(f1):
    """Steering a front-half-space element array past the horizon is an error."""
    with pytest.raises(SteradianError, match="horizon"):
        st.Array(st.rectangular(2, 2, 0.5), f1, element=st.CosinePower(1.0),
                 steering=st.Steering(95, 0))


def test_bad_steering_mode():
    """Unknown steering mode names the allowed set."""
    with pytest.raises(SteradianError, match="'phase', 'delay'"):
        st.Steering(10, 0, "dealy")


def test_an_unpickled_array_is_analysed_exactly_as_the_original():
    """A study worker gets its arrays by pickle: their arrays come back read-only, and the
    analysis of the copy equals the original's bit for bit (results must not depend on the
    number of worker processes)."""
    import pickle

    f = 10e9
    t = np.hanning(18)[1:-1]
    a = st.Array(st.rectangular(16, 16, 0.5 * st.C0 / f), f, st.CosinePower(q=1.2),
                 taper=np.outer(t, t).ravel(), steering=st.Steering(25.0, 10.0))
    b = pickle.loads(pickle.dumps(a))
    assert not (b.positions.flags.writeable or b.taper.flags.writeable)
    from steradian.analysis import AnalysisOptions, analyze

    opt = AnalysisOptions(metrics=True)
    assert analyze(b, opt).to_dict() == analyze(a, opt).to_dict()
