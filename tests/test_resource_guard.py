"""The resource guard (issue 10, item 2): sizes are estimated and refused before allocating.

Every reproducer of the issue (two elements 10^4 wavelengths apart, ``q = 1e6``, a 400-element
panel at 1e15 Hz, 10^9 elements, a 10^4 x 10^4 panel, a 60,001 x 35,901 beam grid) runs here
in milliseconds: the refusal comes from the sizes alone, before anything grows with the
problem. ``tracemalloc`` peaks prove it (a refused call stays under a few MiB where the
work would need gigabytes); where a case would fit the machine's budget, a small budget is set
with :func:`steradian.budget.limited` and restored afterwards. No test here allocates more
than about 50 MB.
"""

from __future__ import annotations

import math
import time
import tracemalloc
from contextlib import contextmanager

import numpy as np
import pytest
from click.testing import CliRunner

import steradian as st
from steradian import budget, geometry
from steradian.analysis import analyze
from steradian.beamtable import beams_from_table
from steradian.budget import format_size, limited, parse_size, require, set_budget
from steradian.cli import main
from steradian.directions import az_el_directions, theta_phi_directions
from steradian.elements import CosinePower, Isotropic
from steradian.engine import response_blocks, response_matrix
from steradian.errors import SteradianError
from steradian.geometry import principal_axes
from steradian.radiation import RadiatedPower, peak_directivity, power_matrix, radiated_power
from steradian.settings import AnalysisOptions
from steradian.sphere import SearchSet, rule_for, sphere_rule

C0 = 299_792_458.0
F = 1e9
LAM = C0 / F
MiB = 2**20
UNIT_POWER = RadiatedPower(1.0, 0.0, "closed_form")  # skip the power: test the search alone


@pytest.fixture(autouse=True)
def _no_budget_leak(monkeypatch):
    """Each test starts from the default budget and leaves it there."""
    monkeypatch.delenv(budget.ENV_VAR, raising=False)
    old = set_budget(None)
    yield
    set_budget(old)


@contextmanager
def refused_cheaply(pattern: str, peak_mib: float = 8.0, seconds: float = 2.0):
    """The block raises one SteradianError line matching ``pattern``, quickly, and peaks
    under ``peak_mib`` MiB of Python allocations (numpy included)."""
    tracemalloc.start()
    t0 = time.perf_counter()
    try:
        with pytest.raises(SteradianError, match=pattern) as exc:
            yield exc
    finally:
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
    assert "\n" not in str(exc.value)
    assert peak < peak_mib * MiB, f"{peak / MiB:.1f} MiB allocated before the refusal"
    assert time.perf_counter() - t0 < seconds


def two_elements(wavelengths: float, element=None) -> st.Array:
    pos = np.array([[0.0, 0.0, 0.0], [wavelengths * LAM, 0.0, 0.0]])
    return st.Array(geometry.Geometry(pos), F, element=element or Isotropic())


# ---------------------------------------------------------------------------- the budget
def test_sizes_parse_with_binary_and_decimal_prefixes():
    """IEC 80000-13 binary prefixes (KiB = 2^10) and SI decimal ones (kB = 10^3)."""
    assert parse_size("2GiB") == 2 * 2**30
    assert parse_size("500MB") == 500 * 10**6
    assert parse_size(" 1.5e9 ") == 1_500_000_000
    assert parse_size("64 KiB") == 65536
    assert parse_size(4096) == 4096
    for bad in ("", "2 parsecs", "-1GB", "0", "nan", "inf", "1e400", "٣GB", "2GiB extra"):
        with pytest.raises(SteradianError, match="STERADIAN_MEMORY_BUDGET"):
            parse_size(bad)


def test_sizes_format_in_binary_units():
    assert format_size(9.4 * 2**30) == "9.4 GiB"
    assert format_size(512 * MiB) == "512 MiB"
    assert format_size(12) == "12 B"
    assert format_size(math.inf) == "an unbounded amount"


def test_default_is_a_quarter_of_physical_memory():
    """Default: 1/4 of sysconf(SC_PAGE_SIZE) * sysconf(SC_PHYS_PAGES) (common practice for a
    tool sharing its machine)."""
    phys = budget.physical_memory()
    if phys is None:
        assert budget.budget() == 4 * 2**30
    else:
        assert budget.budget() == int(phys * budget.DEFAULT_FRACTION)


def test_environment_variable_and_set_budget_take_precedence(monkeypatch):
    monkeypatch.setenv(budget.ENV_VAR, "3GiB")
    assert budget.budget() == 3 * 2**30
    with limited("100MB"):
        assert budget.budget() == 100 * 10**6
        with limited(2**20):
            assert budget.budget() == 2**20
        assert budget.budget() == 100 * 10**6
    assert budget.budget() == 3 * 2**30
    monkeypatch.setenv(budget.ENV_VAR, "lots")
    with pytest.raises(SteradianError, match=r"STERADIAN_MEMORY_BUDGET: expected a size.*'lots'"):
        budget.budget()


def test_environment_budget_reaches_the_lattices(monkeypatch):
    monkeypatch.setenv(budget.ENV_VAR, "1MB")
    with refused_cheaply(r"300 x 300 rectangular lattice \(90,000 elements\) would need "
                         r"25\.7 MiB \(budget 977 KiB\)"):
        geometry.rectangular(300, 300, 0.1)


def test_require_message_is_one_line_with_cause_size_and_budget():
    with limited("6GiB"), pytest.raises(SteradianError) as exc:
        require(9.4 * 2**30, "a thing", "do less")
    assert str(exc.value) == "a thing would need 9.4 GiB (budget 6.0 GiB): do less"
    with limited("6GiB"):
        require(6 * 2**30, "exactly the budget")
        for huge in (10**400, math.inf, math.nan):
            with pytest.raises(SteradianError, match="would need"):
                require(huge, "x")


# ------------------------------------------------------------------ sphere rules, searches
def test_ten_thousand_wavelengths_refused_with_the_rule_size():
    """Issue 10: two elements 10^4 wavelengths apart asked for 9.4 GiB and failed. The rule
    size needed is named: n_theta = ceil(kR) + 20, n_phi = ceil(2 kR) + 40 (kR = 2 pi 5000)."""
    a = two_elements(1e4)
    kr = 2 * math.pi * 5000
    nt, npf = math.ceil(kr) + 20, math.ceil(2 * kr) + 40
    with refused_cheaply(rf"quadrature rule of {nt:,} x {npf:,} nodes \(electrical radius "
                         r"k R = 31,416, element degree 0\) would need \d+ GiB"):
        radiated_power(a, method="quadrature")
    with refused_cheaply(r"lobe search set of 1,2\d\d,\d{3},\d{3} directions"):
        peak_directivity(a, power=UNIT_POWER)


def test_rule_over_budget_switches_isotropic_power_to_the_closed_form():
    """Where a transform exists the guard does not refuse: radiated power of isotropic
    elements falls back to the O(N) sinc pair sum, P = 4 pi sum w_m w_n sinc(k r_mn)
    (R. J. Mailloux, Phased Array Antenna Handbook, 3rd ed., 2018, ch. 2)."""
    a = two_elements(1e4)
    p = radiated_power(a)
    kd = 2 * math.pi * 1e4
    assert p.method == "closed_form"
    assert p.value == pytest.approx(4 * math.pi * (2 + 2 * math.sin(kd) / kd), rel=1e-12)


def test_a_thousand_wavelengths_refused_under_a_small_budget():
    """Issue 10: 1,000 wavelengths apart took 64 s and 3.1 GB; within a 1 GiB budget it is
    refused at once (rule of 3,162 x 6,324 nodes at 160 B each = 3.0 GiB)."""
    a = two_elements(1e3)
    with limited("1GiB"):
        with refused_cheaply(r"quadrature rule of 3,162 x 6,324 nodes .* would need 3\.0 GiB "
                             r"\(budget 1\.0 GiB\)"):
            radiated_power(a, method="quadrature")
        # the search set is checked before the radiated-power integral is computed
        with refused_cheaply(r"lobe search set of 12,56\d,\d{3} directions .* would need 4\.7 GiB"):
            peak_directivity(a)


def test_cosine_power_q_1e6_refused_before_rule_sizing():
    """Issue 10: q = 1e6 hung for minutes computing a 500,000-node Gauss-Legendre rule."""
    a = st.Array(geometry.rectangular(4, 4, LAM / 2), F, element=CosinePower(1e6))
    with refused_cheaply(r"quadrature rule of 500,0\d\d x 1,000,0\d\d nodes .*element degree "
                         r"1,000,002\) would need [\d.]+ TiB"):
        radiated_power(a)
    with refused_cheaply(r"quadrature rule of 500,040 x 1,000,080 nodes"):
        sphere_rule(500_040, 1_000_080)


def test_extreme_exponents_reach_the_check_instead_of_overflowing():
    """q = 1e308 on the field (power exponent 2e308 = inf) gives a capped degree, so the rule
    check refuses it in one line instead of an OverflowError."""
    el = CosinePower(1e308, exponent_on="field")
    assert el.degree(1.0) >= 2**53
    a = st.Array(geometry.rectangular(2, 2, LAM / 2), F, element=el)
    with refused_cheaply(r"quadrature rule of .* would need"):
        rule_for(a)


def test_petahertz_panel_refused():
    """Issue 10: --frequency 1e15 on a 400-element panel hung in rule sizing."""
    a = st.Array(geometry.rectangular(20, 20, LAM / 2), F, element=CosinePower(1.0))
    with refused_cheaply(r"quadrature rule of [\d,]+ x [\d,]+ nodes .* would need [\d.]+ PiB"):
        radiated_power(a, frequency=1e15)
    iso = st.Array(geometry.rectangular(20, 20, LAM / 2), F)
    with refused_cheaply(r"lobe search set of [\d,]+ directions .* would need"):
        peak_directivity(iso, frequency=1e15, power=UNIT_POWER)


@pytest.mark.parametrize("spacing", [0.0, -1.0, math.nan, 1e-200])
def test_search_sets_refuse_degenerate_spacings(spacing):
    with refused_cheaply(r"lobe search set of .* directions"):
        SearchSet.fibonacci(spacing)
    with refused_cheaply(r"lobe search set of .* directions \(half great circle"):
        SearchSet.great_circle([0, 0, 1], [1, 0, 0], spacing)


# ----------------------------------------------------------------------------- positions
@pytest.mark.parametrize("build, pattern", [
    (lambda: geometry.linear(10**9, 0.1), r"a line \(1,000,000,000 elements\) would need 279 GiB"),
    (lambda: geometry.rectangular(10**4, 10**4, 0.1),
     r"a 10,000 x 10,000 rectangular lattice \(100,000,000 elements\) would need 27\.9 GiB"),
    (lambda: geometry.triangular(10**5, 10**4, 0.1), r"triangular lattice \(1,000,000,000"),
    (lambda: geometry.ring(10**9, 1.0), r"a ring \(1,000,000,000 elements\)"),
    (lambda: geometry.concentric_rings([1, 2], [10**9, 8], centre_element=True),
     r"2 concentric rings \(1,000,000,009 elements\)"),
])
def test_lattices_refused_before_allocating(build, pattern):
    """Issue 10: 10^9 elements and a 10^4 x 10^4 panel ended in MemoryError tracebacks."""
    with limited("16GiB"), refused_cheaply(pattern + r".*\(budget 16\.0 GiB\)"):
        build()


# ----------------------------------------------------------------------------- beam grids
def test_huge_beam_grid_refused_by_count():
    """Issue 10: a 60,001 x 35,901 beam grid (0.001 x 0.01 degree steps) ended in
    MemoryError; it is refused from the two axis lengths."""
    table = {"grid": "theta_phi", "theta_deg": {"start": 0, "stop": 60, "step": 0.001},
             "phi_deg": {"start": 0, "stop": 359, "step": 0.01}}
    with refused_cheaply(r"^beams: a theta-phi grid of 60,001 x 35,901 = 2,154,095,901 "
                         r"directions would need 257 GiB"):
        beams_from_table(table)
    with refused_cheaply(r"an az-el grid of 60,001 x 35,901"):
        az_el_directions(np.zeros(60_001), np.zeros(35_901))


def test_span_with_a_vanishing_step_refused():
    table = {"grid": "az_el", "az_deg": {"start": -60, "stop": 60, "step": 1e-300},
             "el_deg": [0]}
    with refused_cheaply(r"beams\.az_deg: a span of more than 4\.6e\+18 values"):
        beams_from_table(table)


def test_theta_phi_grid_keeps_poles_once_and_order():
    """The vectorised grid: theta = 0 and 180 appear once with phi = 0, others in order."""
    d = theta_phi_directions([0, 30, 180, 60], [10, 20])
    np.testing.assert_array_equal(d, [[0, 0], [30, 10], [30, 20], [180, 0], [60, 10], [60, 20]])
    np.testing.assert_array_equal(theta_phi_directions([0, 45], []), [[0, 0]])
    with pytest.raises(SteradianError, match="theta_deg values must be in"):
        theta_phi_directions([np.nan], [0])


# ---------------------------------------------------------------------- dense matrices
def test_response_matrix_uses_the_one_budget():
    a = st.Array(geometry.rectangular(10, 10, LAM / 2), F)
    d = np.tile([0.0, 0.0, 1.0], (1000, 1))
    with limited("1MiB"), refused_cheaply(
            r"response_matrix of 1,000 directions x 100 elements would need 3\.1 MiB "
            r"\(budget 1\.0 MiB\): use engine\.response_blocks"):
        response_matrix(a, d)
    with limited("1MiB"), refused_cheaply(r"response blocks of 1,000 directions x 100 elements"):
        next(response_blocks(a, d, rows=10**12))
    with limited("1MiB"):
        assert sum(len(b[0]) for _, b in [next(response_blocks(a, d, rows=100))]) == 100


def test_power_matrix_refused_by_element_count():
    a = st.Array(geometry.rectangular(50, 40, LAM / 2), F)
    with limited("100MB"), refused_cheaply(
            r"radiated-power matrix of 2,000 x 2,000 elements would need 244 MiB"):
        power_matrix(a)


def test_principal_axes_is_linear_in_memory():
    """Issue 10: the collinearity test of analyze took a full SVD (an N x N factor: 3.77 GiB
    for a 150 x 150 panel). The economy SVD of 22,500 points needs O(N): measured well under
    8 MiB (the N x N factor alone would be 3.8 GiB)."""
    pos = geometry.rectangular(150, 150, 0.015).positions
    tracemalloc.start()
    ax = principal_axes(pos)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    assert ax.dimension == 2
    assert peak < 8 * MiB, peak


def test_analyze_of_a_large_panel_stays_within_a_small_budget():
    """A 150 x 150 panel's analysis (metrics on) runs under a 1 GiB budget with a traced peak
    under 100 MiB: no N x N step (issue 10: it asked for 3.77 GiB; measured now 1.9 s, 57 MiB
    traced, 255 MiB resident on the development machine)."""
    a = st.Array(geometry.rectangular(150, 150, LAM / 2), F)
    analyze(st.Array(geometry.rectangular(4, 4, LAM / 2), F))  # compile outside the count
    tracemalloc.start()
    with limited("1GiB"):
        r = analyze(a, AnalysisOptions(metrics=True))
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    assert r.to_dict()["peak_directivity_dbi"] > 40
    assert peak < 100 * MiB, f"{peak / MiB:.0f} MiB"  # 57 MiB measured


# ------------------------------------------------------------------------ command line
def _design(tmp_path, **changes) -> str:
    from importlib.resources import files

    text = files("steradian").joinpath("data/demo.toml").read_text()
    for old, new in changes.items():
        assert old in text, old
        text = text.replace(old, new, 1)
    p = tmp_path / "d.toml"
    p.write_text(text)
    return str(p)


@pytest.mark.parametrize("changes, args, words", [
    ({"count_x = 16": "count_x = 10000", "count_y = 16": "count_y = 10000"}, (),
     "10,000 x 10,000 rectangular lattice"),
    ({"q = 1.2 ": "q = 1e6 "}, (), "quadrature rule of 500,0"),
    ({"frequency_hz = 10.0e9": "frequency_hz = 1e15", 'units = "wavelength"': 'units = "m"',
      "spacing_x = 0.5": "spacing_x = 0.015", "spacing_y = 0.5": "spacing_y = 0.015"}, (),
     "would need"),
])
def test_cli_refuses_in_one_line_with_exit_2(tmp_path, changes, args, words):
    t0 = time.perf_counter()
    r = CliRunner().invoke(main, ["analyze", _design(tmp_path, **changes), *args])
    assert r.exit_code == 2, r.output
    lines = r.stderr.strip().splitlines()  # a spacing warning may come first
    err = lines[-1]
    assert "Traceback" not in r.stderr and sum("error" in ln for ln in lines) == 1
    assert err.startswith("steradian: error:") and words in err and "budget" in err
    assert time.perf_counter() - t0 < 10


def test_beam_table_refused_by_beams_times_elements():
    """The beam table holds several (B, N) arrays: 185 B per beam and element measured."""
    from steradian.beamtable import build_beam_table
    from steradian.quantize import ChannelModel

    a = st.Array(geometry.rectangular(16, 16, LAM / 2), F)
    d = theta_phi_directions(np.arange(1.0, 61.0), np.arange(0.0, 360.0, 10.0))
    with limited("10MB"), refused_cheaply(
            r"a beam table of 2,160 beams x 256 elements would need 105 MiB"):
        build_beam_table(a, ChannelModel.build(phase_bits=6), d)


def test_gram_matrix_refused_by_element_count():
    from steradian.engine import gram_matrix

    pos = np.zeros((3000, 3))
    with limited("100MB"), refused_cheaply(r"a Gram matrix of 3,000 x 3,000 elements would "
                                           r"need 549 MiB \(budget 95\.4 MiB\)"):
        gram_matrix(pos, 1.0, np.array([[0.0, 0.0, 1.0]]), np.ones(1))


def test_analysis_with_metrics_refuses_an_oversized_search_up_front():
    """Issue 10, item 2: two elements 1,000 wavelengths apart with metrics ran for over a
    minute (radiated power and peak first) before the sidelobe search set was refused. The
    analysis now checks that search set first: refused at once under a 4 GiB budget, naming
    the search spacing (common practice: size the work before doing it)."""
    lam = 1.0
    geom = st.Geometry(np.array([[0.0, 0.0, 0.0], [1000.0 * lam, 0.0, 0.0]]))
    arr = st.Array(geom, st.C0 / lam)
    with limited("4GiB"), refused_cheaply("search|spacing", peak_mib=16.0):
        analyze(arr, AnalysisOptions(metrics=True))


def test_cli_memory_budget_option_refuses_and_restores(tmp_path):
    """The root option --memory-budget sets the one budget for a command: a 16 x 16 panel's
    analysis with metrics is refused in one line under 1 MiB (exit 2), runs under the
    default, and the caller's budget is restored afterwards (common practice: a CLI option
    does not leak into the process)."""
    from pathlib import Path

    demo = Path(__file__).resolve().parents[1] / "configs" / "harbour_radar_panel.toml"
    before = budget.budget()
    r = CliRunner().invoke(main, ["--memory-budget", "1MiB", "analyze", str(demo)])
    assert r.exit_code == 2
    assert "would need" in r.output and "budget 1" in r.output
    assert budget.budget() == before
    r = CliRunner().invoke(main, ["--memory-budget", "lots", "analyze", str(demo)])
    assert r.exit_code == 2 and "memory budget" in r.output
