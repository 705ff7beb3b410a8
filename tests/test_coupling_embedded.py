"""Tabulated embedded element patterns (per element and per class) against the induced-EMF
dipole model they are sampled from.

Outside references: the embedded (active element) pattern of port m is the array pattern
with port m driven and the others terminated (Pozar, "The active element pattern", IEEE TAP
42(8), 1994); in a lossless array it integrates to the power port m accepts alone,
1 - sum_n |S_nm|^2 (Hannan, IEEE TAP 12(4), 1964). The dipole model's own realized gain and
power balance (tests/test_coupling.py) are the reference.
"""

from __future__ import annotations

import numpy as np
import pytest

from steradian.array import Array
from steradian.coupling import (
    dipole_coupling,
    element_classes,
    embedded_coupling,
    max_realized_gain_weights,
    power_balance,
    realized_gain_toward,
)
from steradian.directions import ThetaPhiGrid, unit_vectors_deg
from steradian.elements import Dipole, TabulatedElement
from steradian.errors import DesignError, SteradianError
from steradian.geometry import Geometry, linear, rectangular
from steradian.io.design import design_from_dict
from steradian.io.element_table import write_element_table
from steradian.io.touchstone import Network, write_touchstone
from steradian.units import C0
from steradian.workflows import analyze_design


def exact_tables(arr, c, step=1.0):
    """Embedded pattern of every port of the dipole model, phase at its own element."""
    th, ph = np.arange(0, 180 + step / 2, step), np.arange(0, 360, step)
    g = ThetaPhiGrid(np.radians(th), np.radians(ph))
    TH, PH = np.meshgrid(np.radians(th), np.radians(ph), indexing="ij")
    et, ep = arr.element.pattern(TH.ravel(), PH.ravel())
    out = {}
    for m in range(arr.n):
        af = np.exp(1j * arr.k() * (g.vectors @ (arr.positions - arr.positions[m]).T)) @ \
            c.currents[:, m]
        out[f"e{m}"] = TabulatedElement(th, ph, (et * af).reshape(TH.shape),
                                        (ep * af).reshape(TH.shape))
    return out


@pytest.fixture(scope="module")
def model():
    arr = Array(rectangular(3, 3, 0.5, 0.5), C0, Dipole(0.48, "x", C0))
    c = dipole_coupling(arr, radius=0.004, z0=73.0)
    return arr, c, exact_tables(arr, c)


def test_per_element_tables_reproduce_the_model(model):
    """One exact table per element, levelled by each port's lone accepted power: realized
    gain equals the dipole model's (to the 1-degree spline, 1e-7), the power balance holds
    for any excitation (1e-7), and the closed-form maximum agrees (1e-7)."""
    arr, c, tables = model
    ce = embedded_coupling(arr, c.S, c.z0, tables, [f"e{m}" for m in range(9)])
    rng = np.random.default_rng(0)
    a = rng.normal(size=(9, 5)) + 1j * rng.normal(size=(9, 5))
    d = unit_vectors_deg(np.array([0, 20, 40, 60, 75.0]), np.array([0, 30, 90, 200, 10.0]))
    assert np.allclose(realized_gain_toward(arr, ce, a, d), realized_gain_toward(arr, c, a, d),
                       rtol=1e-7)
    for k in range(3):
        assert power_balance(arr, ce, a[:, k])["relative_error"] < 1e-7
    assert np.allclose(max_realized_gain_weights(arr, ce, d)[1],
                       max_realized_gain_weights(arr, c, d)[1], rtol=1e-7)


def test_element_classes_from_the_lattice():
    """Corner, edge and centre counts of a 4 x 3 lattice (4, 6, 2); a line's ends are edges;
    a layout without lattice vectors is refused."""
    cls = element_classes(rectangular(4, 3, 0.5, 0.5))
    assert (cls.count("corner"), cls.count("edge"), cls.count("centre")) == (4, 6, 2)
    assert element_classes(linear(5, 0.5)) == ["edge", "centre", "centre", "centre", "edge"]
    with pytest.raises(SteradianError, match="classes"):
        element_classes(Geometry(np.random.default_rng(1).normal(size=(4, 3))))


def _panel_doc(coupling: dict) -> dict:
    """The 3 x 3 dipole panel of these tests as a design document with ``coupling``."""
    return {"design": {"name": "t", "frequency_hz": C0},
            "geometry": {"kind": "rectangular", "count_x": 3, "count_y": 3, "spacing_x": 0.5,
                         "spacing_y": 0.5, "units": "wavelength"},
            "element": {"model": "dipole", "length_wl": 0.48, "axis": "x"},
            "coupling": coupling}


def test_design_with_class_tables(model, tmp_path):
    """A design with a Touchstone S and centre/edge/corner tables (the exact patterns of the
    centre, one edge and one corner port, 2-degree grid): analyze reports the embedded
    figures, the power balance of the class approximation and the coupling-aware maximum."""
    arr, c, tables = model
    write_touchstone(tmp_path / "p.s9p", Network(np.array([C0]), c.S[None], c.z0))
    for name, port in (("centre", 4), ("edge", 1), ("corner", 0)):
        write_element_table(tmp_path / f"{name}.csv", tables[f"e{port}"], theta_step_deg=2,
                            phi_step_deg=2)
    doc = _panel_doc({"model": "touchstone", "file": "p.s9p",
                      "patterns": {"centre": "centre.csv", "edge": "edge.csv",
                                   "corner": "corner.csv"},
                      "scan_theta_max_deg": 40, "scan_theta_step_deg": 20})
    doc["analysis"] = {"metrics": False}
    s = analyze_design(design_from_dict(doc, tmp_path / "t.toml", base_dir=tmp_path))
    cb = s["coupling"]
    assert cb["embedded_patterns"] is True
    assert 0 < cb["design_excitation"]["power_balance_relative_error"] < 0.2
    row = cb["scan"][0]
    assert row["max_realized_gain_dbi"] >= row["realized_gain_dbi"] - 1e-9
    bad = {**doc, "coupling": {**doc["coupling"], "patterns": {"centre": "centre.csv",
                                                                "egde": "edge.csv"}}}
    with pytest.raises(DesignError) as e:
        analyze_design(design_from_dict(bad, tmp_path / "t.toml", base_dir=tmp_path))
    assert e.value.key == "coupling.patterns.egde" and "edge" in str(e.value)


def test_beam_tables_refuse_tabulated_patterns(model, tmp_path):
    """`beams` on a design whose [coupling] has tabulated embedded patterns refuses in one
    line naming coupling.patterns (a table's figures would be the isolated element's)."""
    from steradian.errors import DesignError
    from steradian.workflows import beam_table_from_design

    arr, c, tables = model
    write_touchstone(tmp_path / "p.s9p", Network(np.array([C0]), c.S[None], c.z0))
    write_element_table(tmp_path / "centre.csv", tables["e4"], theta_step_deg=2,
                        phi_step_deg=2)
    doc = _panel_doc({"model": "touchstone", "file": "p.s9p",
                      "patterns": {"centre": "centre.csv"}})
    doc |= {"channel": {"phase_bits": 6},
            "beams": {"grid": "theta_phi", "theta_deg": [0, 20], "phi_deg": [0]}}
    with pytest.raises(DesignError, match="tabulated embedded patterns") as e:
        beam_table_from_design(design_from_dict(doc, tmp_path / "t.toml", base_dir=tmp_path))
    assert e.value.key == "coupling.patterns"
