"""Touchstone v1 files: round trip, the open specification's layout rules, errors naming the
line, scikit-rf as a reference reader (when installed), and a design whose coupling comes
from a Touchstone file with its port order mapped to the elements.

Outside references: Touchstone File Format Specification, version 1.1 (IBIS Open Forum,
2002): option line defaults (GHz, S, MA, R 50), the 11 21 12 22 order of two-port data, rows
of four pairs for N >= 3; scikit-rf's reader (``skrf.Network``) as a reference library.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from steradian.array import Array
from steradian.coupling import dipole_coupling, scan_map
from steradian.elements import Dipole
from steradian.errors import FileFormatError, SteradianError
from steradian.geometry import rectangular
from steradian.io.design import design_from_dict
from steradian.io.touchstone import Network, read_touchstone, write_touchstone
from steradian.units import C0
from steradian.workflows import analyze_design, coupling_of_design


def random_network(n, f, seed=0, z0=50.0):
    rng = np.random.default_rng(seed)
    s = (rng.normal(size=(len(f), n, n)) + 1j * rng.normal(size=(len(f), n, n))) * 0.2
    return Network(np.asarray(f, float), s, np.full(n, z0))


@settings(max_examples=20, deadline=None)
@given(st.integers(1, 6), st.integers(1, 4), st.sampled_from(["Hz", "kHz", "MHz", "GHz"]))
def test_ri_round_trip_is_exact(tmp_path_factory, n, nf, unit):
    """RI with 17 significant digits round-trips every number exactly (any port count, any
    unit)."""
    path = tmp_path_factory.mktemp("ts") / f"x.s{n}p"
    net = random_network(n, 1e9 + 1e6 * np.arange(nf), seed=n * 10 + nf, z0=75.0)
    write_touchstone(path, net, unit=unit)
    back = read_touchstone(path)
    assert np.array_equal(back.s, net.s) and np.array_equal(back.z0, net.z0)
    assert np.allclose(back.frequencies, net.frequencies, rtol=1e-15, atol=0)


@pytest.mark.parametrize("fmt", ["MA", "DB"])
def test_ma_db_round_trip(tmp_path, fmt):
    """Magnitude-angle and dB-angle round-trip to rounding."""
    net = random_network(3, [1e9, 2e9], seed=2)
    write_touchstone(tmp_path / "x.s3p", net, number_format=fmt)
    assert np.allclose(read_touchstone(tmp_path / "x.s3p").s, net.s, rtol=1e-13, atol=1e-15)


def test_two_port_order_and_defaults(tmp_path):
    """Two-port data run 11 21 12 22; without an option line the unit is GHz, numbers are
    MA and R is 50 (Touchstone 1.1); noise parameters after the data are skipped."""
    p = tmp_path / "amp.s2p"
    p.write_text("! two-port\n"
                 "1.0 0.5 0 0.1 90 0.2 -90 0.4 180\n"
                 "2.0 0.5 0 0.1 90 0.2 -90 0.4 180 ! trailing comment\n"
                 "1.0 2.0 0.3 45 0.5\n", encoding="utf-8")
    net = read_touchstone(p)
    assert np.allclose(net.frequencies, [1e9, 2e9]) and net.z0.tolist() == [50.0, 50.0]
    assert net.s[0, 1, 0] == pytest.approx(0.1j) and net.s[0, 0, 1] == pytest.approx(-0.2j)
    assert net.s[0, 1, 1] == pytest.approx(-0.4) and net.comments[0] == "two-port"


def test_four_port_rows_wrap(tmp_path):
    """N >= 3: each row of the matrix starts a line, at most four pairs a line."""
    p = tmp_path / "q.s4p"
    rows = "\n".join(" ".join(f"{10 * i + j} 0" for j in range(1, 5)) for i in range(1, 5))
    p.write_text("# MHz S RI R 75\n100 " + rows + "\n", encoding="utf-8")
    net = read_touchstone(p)
    assert net.frequencies[0] == 1e8 and net.z0[0] == 75
    assert net.s[0, 2, 3].real == 34 and net.s[0, 3, 2].real == 43


@pytest.mark.parametrize("text, line, words", [
    ("# GHz Z RI R 50\n1 1 0\n", 1, "Z-parameters"),
    ("# GHz S RI R -5\n1 1 0\n", 1, "positive"),
    ("# GHz S XY\n1 1 0\n", 1, "unknown option"),
    ("# GHz S RI\n1 1 zero\n", 2, "not a number"),
    ("# GHz S RI\n2 1 0\n1 1 0\n", 3, "increase"),
    ("# GHz S RI\n1 1\n", 2, "incomplete"),
    ("[Version] 2.0\n", 1, "version 2"),
])
def test_errors_name_the_line(tmp_path, text, line, words):
    p = tmp_path / "e.s1p"
    p.write_text(text, encoding="utf-8")
    with pytest.raises(FileFormatError) as e:
        read_touchstone(p)
    assert e.value.line == line and words in str(e.value)


def test_suffix_and_port_count(tmp_path):
    with pytest.raises(FileFormatError, match=r"\.sNp"):
        read_touchstone(tmp_path / "x.txt")
    with pytest.raises(SteradianError, match="3-port"):
        write_touchstone(tmp_path / "x.s2p", random_network(3, [1e9]))


def test_against_scikit_rf(tmp_path):
    """scikit-rf (a reference reader) reads our files to the same S, frequencies and z0, and
    we read its files to the same values."""
    skrf = pytest.importorskip("skrf")
    for n, fmt in ((2, "RI"), (5, "MA"), (3, "DB")):
        net = random_network(n, [1e9, 1.5e9, 2e9], seed=n, z0=60.0)
        path = tmp_path / f"ours{n}.s{n}p"
        write_touchstone(path, net, number_format=fmt, unit="MHz")
        ref = skrf.Network(str(path))
        assert np.allclose(ref.s, net.s, rtol=1e-12, atol=1e-14)
        assert np.allclose(ref.f, net.frequencies) and np.allclose(ref.z0, 60.0)
        theirs = skrf.Network(frequency=skrf.Frequency.from_f(net.frequencies, unit="Hz"),
                              s=net.s, z0=60.0)
        theirs.write_touchstone(str(tmp_path / f"theirs{n}"))
        back = read_touchstone(tmp_path / f"theirs{n}.s{n}p")
        assert np.allclose(back.s, net.s, rtol=1e-9, atol=1e-12)
        assert np.allclose(back.frequencies, net.frequencies) and back.z0[0] == 60.0


def test_design_from_touchstone_maps_ports(tmp_path):
    """A design's [coupling] from a Touchstone file of the induced-EMF panel, written in a
    shuffled port order and mapped back with ``ports``, gives the same active reflection as
    the built-in model; a frequency between samples is interpolated linearly."""
    arr = Array(rectangular(3, 2, 0.5, 0.5), C0, Dipole(0.48, "x", C0))
    c = dipole_coupling(arr, radius=0.004, z0=50.0)
    perm = np.array([4, 2, 0, 5, 1, 3])  # file port p+1 holds element perm[p]
    s_file = c.S[np.ix_(perm, perm)]
    write_touchstone(tmp_path / "panel.s6p",
                     Network(np.array([0.9 * C0, 1.1 * C0]), np.stack([s_file, s_file]),
                             np.full(6, 50.0)))
    ports = [int(np.flatnonzero(perm == e)[0]) + 1 for e in range(6)]
    d = design_from_dict({
        "design": {"name": "t", "frequency_hz": C0},
        "geometry": {"kind": "rectangular", "count_x": 3, "count_y": 2, "spacing_x": 0.5,
                     "spacing_y": 0.5, "units": "wavelength"},
        "element": {"model": "dipole", "length_wl": 0.48, "axis": "x"},
        "coupling": {"model": "touchstone", "file": "panel.s6p", "ports": ports},
        "analysis": {"metrics": False}}, tmp_path / "t.toml", base_dir=tmp_path)
    ct = coupling_of_design(d)
    assert np.allclose(ct.S, c.S, atol=1e-15) and not ct.embedded
    th, ph = np.array([0.0, 45]), np.array([0.0, 90])
    assert np.allclose(scan_map(arr, ct, th, ph, gain=False).gamma,
                       scan_map(arr, c, th, ph, gain=False).gamma, atol=1e-13)
    s = analyze_design(d)["coupling"]
    assert s["embedded_patterns"] is False and "max_realized_gain_dbi" not in s["scan"][0]
    with pytest.raises(SteradianError, match="outside"):
        coupling_of_design(d, frequency=2 * C0)


def test_doubtful_file_warns(tmp_path):
    """A file whose S is not passive or not reciprocal is read with a one-line warning
    naming the key (a passive reciprocal array cannot produce it; Pozar sec. 4.3)."""
    s = np.array([[0.9, 0.5], [0.1, 0.2]], complex)
    write_touchstone(tmp_path / "b.s2p", Network(np.array([C0]), s[None], np.full(2, 50.0)))
    d = design_from_dict({
        "design": {"name": "t", "frequency_hz": C0},
        "geometry": {"kind": "linear", "count": 2, "spacing": 0.5, "units": "wavelength"},
        "coupling": {"model": "touchstone", "file": "b.s2p"}},
        tmp_path / "t.toml", base_dir=tmp_path)
    with pytest.warns(UserWarning, match="coupling.file") as rec:
        coupling_of_design(d)
    text = " ".join(str(w.message) for w in rec)
    assert "not passive" in text and "not reciprocal" in text
