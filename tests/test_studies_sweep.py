"""Parameter sweeps: grating-lobe onset, beam squint, scan loss, the batched (beam) metrics
against the per-point analysis, and the [sweep] table."""

from __future__ import annotations

import math

import numpy as np
import pytest

import steradian as sr
from steradian.errors import DesignError, SteradianError
from steradian.studies import (
    SweepAxis,
    evaluate_points,
    evaluation_key,
    group_points,
    parse_axis,
    sweep_from_table,
)
from steradian.studyrun import run_sweep


def _line_doc(n=32, theta=40.0, mode="phase"):
    return {"design": {"name": "line", "frequency_hz": 3e9},
            "geometry": {"kind": "linear", "units": "wavelength", "count": n,
                         "spacing": 0.5},
            "steering": {"theta_deg": theta, "phi_deg": 0.0, "mode": mode}}


def _onset(rows, key, label):
    return next((r[label] for r in rows if (r[key] or 0) > 0), None)


@pytest.mark.parametrize("metrics", ["full", "beam"])
def test_grating_lobe_onset_of_a_spacing_sweep(tmp_path, metrics):
    """Standard phased-array result (e.g. Mailloux, Phased Array Antenna Handbook, ch. 1):
    a line steered to theta_0 is free of grating lobes while d/lambda < 1/(1 + |sin
    theta_0|). A 32-element line steered to 40 deg, spacing swept in 0.01-wavelength steps:
    the first spacing with a lobe within 3 dB of the peak found in the pattern, and (full
    metrics) the first with a lobe predicted from the lattice, lie within one step of
    1/(1 + sin 40 deg) = 0.6087."""
    doc = _line_doc()
    step = 0.01
    spec = sweep_from_table({"metrics": metrics}, axes=[parse_axis(
        "geometry.spacing=0.50:0.75:26")])
    run = run_sweep(doc, spec, tmp_path / "s.csv", workers=1, progress=False)
    limit = 1 / (1 + math.sin(math.radians(40)))
    found = _onset(run.rows, "grating_lobe_found", "geometry.spacing")
    assert found == pytest.approx(limit, abs=step)
    if metrics == "full":
        predicted = _onset(run.rows, "grating_lobes_predicted", "geometry.spacing")
        assert predicted == pytest.approx(limit, abs=step)
        assert predicted > limit  # the first point past the limit
    assert run.summary["first_grating_lobe"]["geometry.spacing"] == found


def _squint_rows(mode, ratios, f0=3e9, theta0=30.0):
    doc = {"design": {"name": "panel", "frequency_hz": f0},
           "geometry": {"kind": "rectangular", "units": "wavelength", "count_x": 12,
                        "count_y": 12, "spacing_x": 0.5, "spacing_y": 0.5},
           "steering": {"theta_deg": theta0, "phi_deg": 0.0, "mode": mode}}
    from steradian.io.design import design_from_dict

    arr = design_from_dict(doc).array
    return evaluate_points([arr] * len(ratios), [f0 * r for r in ratios], "beam")


def test_frequency_sweep_squint_law_for_phase_steering_and_none_for_delay():
    """Standard result (e.g. Mailloux, ch. 1; Hansen, Phased Array Antennas, ch. 2): a
    phase-steered array squints by delta theta ~ -(delta f / f) tan theta_0; true-time delay
    does not squint. A 12 x 12 half-wave panel of isotropic elements steered to 30 deg:
    the measured squint is within 2 % of the law at +-0.5 % and +-1 % offsets (where the
    first-order law holds), equals the exact sin theta = (f0/f) sin theta_0 at +-5 %, and
    the delay-steered beam stays on target."""
    ratios = [0.95, 0.99, 0.995, 1.0, 1.005, 1.01, 1.05]
    rows = _squint_rows("phase", ratios)
    for r, row in zip(ratios, rows, strict=True):
        got = row["peak_theta_deg"] - 30.0
        exact = math.degrees(math.asin(math.sin(math.radians(30)) / r)) - 30.0
        assert got == pytest.approx(exact, abs=1e-3)
        if r != 1.0 and abs(r - 1) <= 0.01:
            law = -math.degrees((r - 1) * math.tan(math.radians(30)))
            assert got == pytest.approx(law, rel=0.02)
    for row in _squint_rows("delay", ratios):
        assert row["pointing_error_deg"] < 1e-4


def test_scan_loss_of_cosine_elements_follows_the_projected_aperture():
    """Projected-aperture law (common practice; Mailloux, ch. 1): a large array of elements
    with power pattern cos theta loses directivity as cos theta_0 when scanned. A 16 x 16
    half-wave panel: within 0.06 dB to 45 deg, within 0.2 dB at 60 deg (the finite edge)."""
    g = sr.rectangular(16, 16, 0.5)
    el = sr.CosinePower(q=1.0)
    angles = (0.0, 15.0, 30.0, 45.0, 60.0)
    arrs = [sr.Array(g, sr.C0, el, steering=sr.Steering(t, 0.0)) for t in angles]
    rows = evaluate_points(arrs, [None] * len(arrs), "beam")
    for t, r in zip(angles, rows, strict=True):
        want = 10 * math.log10(math.cos(math.radians(t)))
        got = r["directivity_dbi"] - rows[0]["directivity_dbi"]
        assert got == pytest.approx(want, abs=0.06 if t <= 45 else 0.2)


def test_beam_metrics_equal_the_per_point_analysis():
    """The batched evaluator (one set of element responses for a scan axis) against
    steradian.analysis.analyze point by point: directivity, peak sidelobe level and pointing
    error."""
    g = sr.rectangular(10, 10, 0.55)
    el = sr.CosinePower(q=1.3)
    t = sr.tapers.taylor(10, 4, 25.0)
    arrs = [sr.Array(g, sr.C0, el, taper=np.outer(t, t).ravel(),
                     steering=sr.Steering(th, 30.0)) for th in (0.0, 20.0, 40.0)]
    beam = evaluate_points(arrs, [None] * 3, "beam")
    full = evaluate_points(arrs, [None] * 3, "full")
    for b, f in zip(beam, full, strict=True):
        assert b["directivity_dbi"] == pytest.approx(f["directivity_dbi"], abs=1e-8)
        assert b["psl_db"] == pytest.approx(f["psl_db"], abs=0.02)
        assert b["peak_theta_deg"] == pytest.approx(f["peak_theta_deg"], abs=1e-3)
    assert len({evaluation_key(a, None) for a in arrs}) == 1


def test_batches_depend_on_the_points_only():
    """Tasks are consecutive points with one evaluation key, at most `batch` each."""
    keys = ["a", "a", "b", "a", "b", "c"]
    assert group_points(keys, 2) == [[0, 1], [3], [2, 4], [5]]
    assert group_points(keys, 10) == [[0, 1, 3], [2, 4], [5]]


def test_sweep_table_and_axis_option_are_checked():
    """[sweep] keys are checked with a suggestion; --vary parses both forms; a grid of
    three is refused; point values run with the last axis fastest."""
    with pytest.raises(DesignError, match="did you mean 'metrics'") as e:
        sweep_from_table({"metric": "full", "axes": []}, "d.toml")
    assert e.value.key == "sweep.metric"
    with pytest.raises(DesignError, match="sweep.axes"):
        sweep_from_table({"axes": [{"keys": "steering.theta_deg"}]}, "d.toml")
    with pytest.raises(SteradianError, match="--vary"):
        parse_axis("steering.theta_deg=0:10")
    a = parse_axis("geometry.spacing_x+geometry.spacing_y=0.5:0.7:3")
    assert a.keys == ("geometry.spacing_x", "geometry.spacing_y")
    np.testing.assert_allclose(a.values, [0.5, 0.6, 0.7])
    b = parse_axis("steering.theta_deg=0,10")
    with pytest.raises(DesignError, match="one axis or a grid of 2"):
        sweep_from_table({}, axes=[a, b, SweepAxis(("x.y",), (1.0,), "other")])
    spec = sweep_from_table({"axes": [{"keys": ["steering.theta_deg"], "values": [0, 10]},
                                      {"keys": "analysis.frequency_hz", "start": 1e9,
                                       "stop": 2e9, "count": 3}]})
    assert spec.n_points == 6
    assert spec.point_values(4) == (10.0, 1.5e9)


def test_a_bad_point_names_the_key_and_the_point(tmp_path):
    """A sweep value the design reader refuses is one DesignError naming the point."""
    spec = sweep_from_table({}, axes=[parse_axis("geometry.spacing=0.5,-1")])
    with pytest.raises(DesignError, match=r"sweep point 1 \(geometry.spacing = -1\)"):
        run_sweep(_line_doc(8), spec, tmp_path / "s.csv", workers=1, progress=False)


def test_frequency_by_steering_mode_grid(tmp_path):
    """Standard result (Mailloux, ch. 1): one frequency sweep comparing phase shifters with
    true-time delay, as a grid over steering.mode (words) and analysis.frequency_hz: the
    phase rows squint by the exact sin theta = (f0/f) sin theta_0, the delay rows do not;
    the word column reads back from the result file as text."""
    doc = {"design": {"name": "p", "frequency_hz": 3e9},
           "geometry": {"kind": "rectangular", "units": "wavelength", "count_x": 8,
                        "count_y": 8, "spacing_x": 0.5, "spacing_y": 0.5},
           "steering": {"theta_deg": 30.0, "phi_deg": 0.0}}
    spec = sweep_from_table({"metrics": "beam", "axes": [
        {"keys": "steering.mode", "values": ["phase", "delay"], "label": "mode"},
        {"keys": "analysis.frequency_hz", "values": [2.85e9, 3e9, 3.15e9]}]})
    for name in ("g.csv", "g.jsonl"):
        run = run_sweep(doc, spec, tmp_path / name, workers=1, progress=False)
        assert [r["mode"] for r in run.rows] == ["phase"] * 3 + ["delay"] * 3
        for r in run.rows:
            f = r["analysis.frequency_hz"]
            want = 30.0 if r["mode"] == "delay" else math.degrees(
                math.asin(0.5 * 3e9 / f))
            assert r["peak_theta_deg"] == pytest.approx(want, abs=1e-3)
    with pytest.raises(SteradianError, match="single words"):
        parse_axis("steering.mode=phase,two words")


def test_count_taper_and_element_keys(tmp_path):
    """Any numeric design key can be swept: element count (directivity of a uniform
    half-wave line of isotropic elements is N, Balanis, Antenna Theory, ch. 6), Taylor
    design level (T. T. Taylor, IRE Trans. AP-3, 1955: the peak sidelobe follows the
    design level; sampled on 12 elements it lies within about 1 dB of it, common practice)
    and the element exponent (D of a cos^q element alone is 2(q + 1), Balanis ch. 2)."""
    line = _line_doc(4, 0.0)
    spec = sweep_from_table({"metrics": "beam"}, axes=[parse_axis("geometry.count=4,8,16")])
    rows = run_sweep(line, spec, tmp_path / "n.csv", workers=1, progress=False).rows
    for r in rows:
        assert r["directivity_dbi"] == pytest.approx(
            10 * math.log10(r["geometry.count"]), abs=1e-6)
    panel = {"design": {"name": "p", "frequency_hz": 3e9},
             "geometry": {"kind": "rectangular", "units": "wavelength", "count_x": 12,
                          "count_y": 12, "spacing_x": 0.5, "spacing_y": 0.5},
             "taper": {"kind": "separable", "x": {"kind": "taylor", "nbar": 5, "sll": 25.0},
                       "y": {"kind": "taylor", "nbar": 5, "sll": 25.0}}}
    spec = sweep_from_table({"metrics": "full"}, axes=[
        parse_axis("taper.x.sll+taper.y.sll=25,35")])
    rows = run_sweep(panel, spec, tmp_path / "t.csv", workers=1, progress=False).rows
    for r in rows:
        assert r["psl_db"] == pytest.approx(-r["taper.x.sll"], abs=1.0)
    assert rows[0]["psl_db"] - rows[1]["psl_db"] > 8.0
    single = {"design": {"name": "e", "frequency_hz": 3e9},
              "geometry": {"kind": "linear", "units": "wavelength", "count": 1,
                           "spacing": 0.5},
              "element": {"model": "cosine_power", "q": 1.0}}
    spec = sweep_from_table({"metrics": "beam"}, axes=[parse_axis("element.q=1,2,4")])
    for r in run_sweep(single, spec, tmp_path / "q.csv", workers=1, progress=False).rows:
        assert r["directivity_dbi"] == pytest.approx(
            10 * math.log10(2 * (r["element.q"] + 1)), abs=1e-6)


def test_sweep_axis_keeps_the_grid_decimals():
    """Common practice: a swept value is the grid's own decimal (0.6, not
    0.6000000000000001), so result files and their headers carry clean numbers."""
    ax = SweepAxis.linspace(("geometry.spacing",), 0.4, 0.9, 11)
    assert ax.values[4] == 0.6 and ax.values[7] == 0.75 and ax.values[-1] == 0.9
    assert [repr(v) for v in ax.values[:3]] == ["0.4", "0.45", "0.5"]


def test_sweep_figure_names_what_is_swept(tmp_path):
    """The caption shows swept quantities as swept (not the design file's value), and the
    second axis names the legend once, its entries being the values."""
    from steradian.io.design import design_from_dict
    from steradian.report import sweep_result_figure
    from steradian.workflows import figure_title

    design = design_from_dict(_line_doc(16, 30.0))
    cap = figure_title(design, swept=["steering.theta_deg"])
    assert "theta swept" in cap and "theta 30" not in cap and "phi 0 deg" in cap
    assert "frequency swept" in figure_title(design, swept=["analysis.frequency_hz"])
    rows = [{"spacing": d, "steering.theta_deg": t, "directivity_dbi": 10 + d + t / 100,
             "psl_db": -13.0, "pointing_error_deg": 0.0}
            for d in (0.5, 0.6) for t in (0.0, 20.0)]
    fig = sweep_result_figure(rows, ["spacing", "steering.theta_deg"], caption=cap)
    leg = fig.legends[0]
    assert leg.get_title().get_text() == "steering.theta_deg"
    assert [t.get_text() for t in leg.get_texts()] == ["0", "20"]
    line = fig.axes[0].get_lines()[1]
    assert list(line.get_xdata()) == [0.5, 0.6]
    assert list(line.get_ydata()) == pytest.approx([10.7, 10.8])
