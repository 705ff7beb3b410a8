"""Design files (TOML), positions CSV, weights CSV, pattern CSV and plots.

Outside facts used here: the aperture directivity 4 pi A / lambda^2 of a large uniform
half-wave panel (common practice; e.g. R. J. Mailloux, Phased Array Antenna Handbook, 3rd ed.,
2018, ch. 1), the isotropic-array radiated power sum_mn w_m w_n* j0(k r_mn) with j0 from
scipy.special, and plain-numpy sums and quadratures written independently of the package.
"""

from __future__ import annotations

import math
import os
import textwrap
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as hs
from scipy.special import spherical_jn

import steradian as st
from steradian.errors import DesignError, FileFormatError
from steradian.io.design import design_from_dict, load_design
from steradian.io.pattern_csv import read_cuts, read_uv, write_cuts, write_uv
from steradian.io.positions_csv import read_layout, read_positions, write_positions
from steradian.io.weights_csv import read_weights, read_weights_table, write_weights
from steradian.patterns import uv_map

C0 = st.C0


def _write(tmp_path: Path, text: str, name: str = "d.toml") -> Path:
    p = tmp_path / name
    p.write_text(textwrap.dedent(text), encoding="utf-8")
    return p


def _base(**over) -> dict:
    """A small valid design dictionary (8 x 4 half-wave panel at f = c0, lambda = 1 m)."""
    d = {
        "design": {"name": "t", "frequency_hz": C0},
        "geometry": {"kind": "rectangular", "units": "wavelength", "count_x": 8,
                     "count_y": 4, "spacing_x": 0.5},
        "element": {"model": "cosine_power", "q": 1.0},
    }
    for k, v in over.items():
        if v is None:
            d.pop(k, None)
        else:
            d[k] = v
    return d


def _err(d, match_key: str, source=None) -> DesignError:
    with pytest.raises(DesignError) as ei:
        design_from_dict(d, source)
    e = ei.value
    assert e.key == match_key, str(e)
    assert "\n" not in str(e)
    return e


# ---- geometry kinds and units ---------------------------------------------------------------
def test_rectangular_in_three_units_gives_the_same_positions():
    """units = wavelength / m / mm scale the same lattice (lambda = c0 / f, SI definition)."""
    f = 10e9
    lam = C0 / f
    geos = []
    for unit, s in (("wavelength", 0.5), ("m", 0.5 * lam), ("mm", 500 * lam)):
        d = _base(design={"name": "u", "frequency_hz": f},
                  geometry={"kind": "rectangular", "units": unit, "count_x": 5, "count_y": 3,
                            "spacing_x": s, "spacing_y": s})
        geos.append(design_from_dict(d).array.positions)
    ref = st.rectangular(5, 3, lam / 2).positions
    for g in geos:
        np.testing.assert_allclose(g, ref, rtol=1e-12, atol=1e-15)


@pytest.mark.parametrize("geometry, n, ref", [
    ({"kind": "linear", "count": 7, "spacing": 0.25, "axis": "y"}, 7,
     lambda: st.linear(7, 0.25, "y")),
    ({"kind": "triangular", "count_x": 6, "count_y": 5, "spacing_x": 0.6}, 30,
     lambda: st.triangular(6, 5, 0.6)),
    ({"kind": "ring", "count": 12, "radius": 1.5, "start_angle_deg": 15.0}, 12,
     lambda: st.ring(12, 1.5, 15.0)),
    ({"kind": "rings", "radii": [0.5, 1.0], "counts": [6, 12], "centre_element": True}, 19,
     lambda: st.concentric_rings([0.5, 1.0], [6, 12], True)),
])
def test_every_lattice_kind_matches_the_geometry_function(geometry, n, ref):
    """Each [geometry] kind builds the same layout as the geometry function (1 m wavelength)."""
    d = _base(geometry={**geometry, "units": "m"}, element={"model": "isotropic"})
    arr = design_from_dict(d).array
    assert arr.n == n
    np.testing.assert_allclose(arr.positions, ref().positions, atol=1e-15)


def test_disabled_elements_and_defaults():
    """disabled indices become the element mask; name defaults to the file name."""
    d = _base(design={"frequency_hz": C0})
    d["geometry"]["disabled"] = [0, 31]
    des = design_from_dict(d, source="/tmp/some_panel.toml")
    assert des.name == "some_panel"
    assert des.array.enabled is not None
    assert np.count_nonzero(~des.array.enabled) == 2
    assert not des.array.enabled[0] and not des.array.enabled[31]
    assert des.array.steering is None
    assert des.options.metrics is True and des.options.radiation_efficiency == 1.0


def test_facing_outward_ring_points_every_element_radially():
    """facing = "outward": element local z is the radial unit vector (conformal ring)."""
    d = _base(geometry={"kind": "ring", "units": "wavelength", "count": 8, "radius": 1.0,
                        "facing": "outward"})
    g = design_from_dict(d).array.geometry
    radial = g.positions / np.linalg.norm(g.positions, axis=1, keepdims=True)
    np.testing.assert_allclose(g.orientations[:, :, 2], radial, atol=1e-12)
    # default local_x_toward for outward is +z: local x axes are vertical
    np.testing.assert_allclose(g.orientations[:, :, 0], np.tile([0, 0, 1.0], (8, 1)),
                               atol=1e-12)


def test_conformal_ring_directivity_against_independent_quadrature():
    """Outward-facing cos^2 ring steered to the horizon: D at the beam direction equals
    4 pi |E|^2 / integral |E|^2 computed here with a plain-numpy field sum and a
    Gauss-Legendre (numpy.polynomial.legendre.leggauss) x uniform-phi rule."""
    d = _base(geometry={"kind": "ring", "units": "wavelength", "count": 16, "radius": 1.3,
                        "facing": "outward"},
              element={"model": "cosine_power", "q": 2.0},
              steering={"theta_deg": 90.0, "phi_deg": 30.0})
    arr = design_from_dict(d).array
    k = 2 * np.pi
    pos = arr.positions
    nrm = arr.geometry.orientations[:, :, 2]
    w = arr.weights()

    def efield(r):
        c = r @ nrm.T
        g = np.where(c > 0, c, 0.0)  # power cos^2 -> field cos
        return (g * np.exp(1j * k * (r @ pos.T))) @ w

    x, wx = np.polynomial.legendre.leggauss(160)
    phi = 2 * np.pi * np.arange(320) / 320
    ct, pp = np.meshgrid(x, phi, indexing="ij")
    stt = np.sqrt(1 - ct**2)
    r = np.stack([stt * np.cos(pp), stt * np.sin(pp), ct], -1).reshape(-1, 3)
    p = (np.abs(efield(r)) ** 2).reshape(ct.shape).sum(axis=1) @ wx * (2 * np.pi / 320)
    r0 = arr.steering.unit
    d_ref = 4 * np.pi * abs(efield(r0[None])[0]) ** 2 / p
    d_pkg = float(st.directivity(arr, r0[None])[0])
    assert d_pkg == pytest.approx(d_ref, rel=2e-3)


def test_uniform_panel_matches_aperture_directivity():
    """Uniform 16 x 16 half-wave panel of cos elements: D close to 4 pi A / lambda^2 with
    A = (16 lambda/2)^2 (common practice, aperture formula; within 0.3 dB)."""
    d = _base(geometry={"kind": "rectangular", "units": "wavelength", "count_x": 16,
                        "count_y": 16, "spacing_x": 0.5},
              steering={"theta_deg": 0.0})
    pk = st.peak_directivity(design_from_dict(d).array)
    ref_db = 10 * math.log10(4 * math.pi * 64.0)
    assert abs(pk.directivity_dbi - ref_db) < 0.3
    assert pk.theta_deg < 1e-3


def test_element_models_are_built_with_their_parameters():
    """Dipole length in wavelengths and metres agree; short dipole D = 1.5 (Balanis 4th ed.,
    sec. 4.2); patch and table models are reachable."""
    f = 3e9
    lam = C0 / f
    base = _base(design={"name": "e", "frequency_hz": f})
    a = design_from_dict({**base, "element": {"model": "dipole", "length_wl": 0.5}}).array
    b = design_from_dict({**base, "element": {"model": "dipole", "length_m": lam / 2,
                                              "axis": [0, 0, 2]}}).array
    assert a.element.length == pytest.approx(b.element.length, rel=1e-12)
    np.testing.assert_allclose(a.element.axis, b.element.axis)
    s = design_from_dict({**base, "element": {"model": "short_dipole", "axis": "y"},
                          "geometry": {"kind": "linear", "units": "m", "count": 1,
                                       "spacing": 1.0}}).array
    assert st.peak_directivity(s).directivity == pytest.approx(1.5, rel=1e-6)
    p = design_from_dict({**base, "element": {"model": "patch", "eps_r": 2.2,
                                              "height_m": 1.5e-3}}).array
    assert type(p.element).__name__ == "Patch"
    assert p.element.front_only


def test_table_element_from_a_design(tmp_path):
    """model = "table" reads an element pattern table; the file path resolves against the
    design's folder. A single element's directivity equals the table's peak partial gain
    (7.287 dBi in the example file, loss-free table; IEEE Std 145-2013 definitions)."""
    src = Path(__file__).resolve().parent.parent / "configs" / "data"
    (tmp_path / "el.csv").write_bytes((src / "element_patch_5800mhz_gain.csv").read_bytes())
    p = _write(tmp_path, """
        [design]
        frequency_hz = 5.8e9
        [geometry]
        kind = "linear"
        units = "m"
        count = 1
        spacing = 1.0
        [element]
        model = "table"
        file = "el.csv"
        """)
    arr = load_design(p).array
    assert type(arr.element).__name__ == "TabulatedElement"
    assert st.peak_directivity(arr).directivity_dbi == pytest.approx(7.287287, abs=1e-3)


def test_pass_through_sections_are_kept_raw():
    """[synthesis], [channel], [beams] are not validated here and come back unchanged."""
    d = _base(synthesis={"anything": [1, 2]}, beams={"grid": "x", "made_up": True})
    des = design_from_dict(d)
    assert dict(des.sections) == {"synthesis": {"anything": [1, 2]},
                                  "beams": {"grid": "x", "made_up": True}}


def test_analysis_section_reaches_the_options():
    """[analysis] keys map onto AnalysisOptions."""
    d = _base(analysis={"frequency_hz": 1.1 * C0, "radiation_efficiency": 0.6,
                        "return_loss_db": 14.0, "element_power_w": 2.0, "metrics": False})
    o = design_from_dict(d).options
    assert (o.frequency, o.radiation_efficiency, o.return_loss_db, o.element_power_w,
            o.metrics) == (1.1 * C0, 0.6, 14.0, 2.0, False)


def test_delegated_taper_kind_reaches_the_taper_module():
    """A kind other than uniform goes to steradian.tapers.from_spec (Taylor line taper: the
    weights are symmetric and peak at the centre, common practice)."""
    d = _base(geometry={"kind": "linear", "units": "wavelength", "count": 16, "spacing": 0.5},
              taper={"kind": "taylor", "nbar": 4, "sll": 30.0})
    w = np.abs(design_from_dict(d).array.taper)
    np.testing.assert_allclose(w, w[::-1], rtol=1e-12)
    assert w.max() == pytest.approx(1.0) and w[0] < w[7]


# ---- design errors ----------------------------------------------------------------------------
def test_misspelled_key_names_the_closest_key(tmp_path):
    """Unknown keys: DesignError with the dotted key, the file and a suggestion."""
    d = _base()
    d["geometry"]["spacng_x"] = d["geometry"].pop("spacing_x")
    e = _err(d, "geometry.spacng_x", source=tmp_path / "x.toml")
    assert "did you mean 'spacing_x'" in str(e)
    assert str(tmp_path / "x.toml") in str(e)


def test_misspelled_section_and_model_get_suggestions():
    """Unknown section and unknown choice values suggest the closest valid name."""
    e = _err({**_base(), "steerng": {"theta_deg": 10}}, "steerng")
    assert "did you mean 'steering'" in str(e)
    e = _err(_base(element={"model": "cosine_pwr", "q": 1}), "element.model")
    assert "did you mean 'cosine_power'" in str(e)
    e = _err(_base(element={"model": "cosine_power", "q": 1, "exponent": 2}), "element.exponent")
    assert "did you mean 'exponent_on'" in str(e)


@pytest.mark.parametrize("section, key, value, words", [
    ("geometry", "count_x", "16", "whole number"),
    ("geometry", "count_x", 16.0, "whole number"),
    ("geometry", "count_x", True, "whole number"),
    ("geometry", "spacing_x", "0.5", "number"),
    ("geometry", "spacing_x", -0.5, "positive"),
    ("geometry", "spacing_x", 0.0, "positive"),
    ("geometry", "spacing_x", float("nan"), "finite"),
    ("geometry", "spacing_x", float("inf"), "finite"),
    ("geometry", "units", "inch", "one of"),
    ("element", "q", -1.0, "zero or positive"),
    ("design", "frequency_hz", -5.0, "positive"),
    ("design", "frequency_hz", float("nan"), "finite"),
])
def test_wrong_types_and_values_name_the_key(section, key, value, words):
    """Wrong types, negative or zero spacing, NaN: DesignError naming section.key."""
    d = _base()
    d[section] = {**d[section], key: value}
    e = _err(d, f"{section}.{key}")
    assert words in str(e)


def test_missing_required_keys_and_sections():
    """Missing required keys or sections are named."""
    d = _base()
    del d["geometry"]["count_y"]
    _err(d, "geometry.count_y")
    d = _base()
    del d["design"]["frequency_hz"]
    _err(d, "design.frequency_hz")
    _err(_base(geometry=None), "geometry")
    _err(_base(design=None), "design")
    d = _base()
    del d["geometry"]["units"]
    _err(d, "geometry.units")


def test_steering_below_the_horizon_of_a_front_element_is_refused():
    """cosine_power radiates only in front (z > 0): theta_deg >= 90 is an error naming
    steering.theta_deg; an isotropic element may be steered there."""
    for th in (90.0, 120.0):
        e = _err(_base(steering={"theta_deg": th}), "steering.theta_deg")
        assert "horizon" in str(e)
    ok = design_from_dict(_base(element={"model": "isotropic"}, steering={"theta_deg": 120.0}))
    assert ok.array.steering.theta_deg == 120.0
    _err(_base(steering={"theta_deg": 181.0}), "steering.theta_deg")
    _err(_base(steering={"theta_deg": 10.0, "mode": "ttd"}), "steering.mode")


def test_steering_behind_every_conformal_element_is_refused():
    """All elements facing +x (tilted panel): a beam toward -x is behind every ground plane."""
    d = _base(steering={"theta_deg": 90.0, "phi_deg": 180.0})
    d["geometry"]["facing"] = [1.0, 0.0, 0.0]
    e = _err(d, "steering.theta_deg")
    assert "behind" in str(e)
    d["steering"] = {"theta_deg": 90.0, "phi_deg": 0.0}
    assert design_from_dict(d).array.geometry.orientations is not None


def test_other_design_errors():
    """Conflicting or out-of-range keys each name their key."""
    d = _base(analysis={"vswr": 1.5, "return_loss_db": 10.0})
    _err(d, "analysis.return_loss_db")
    _err(_base(analysis={"radiation_efficiency": 1.2}), "analysis.radiation_efficiency")
    _err(_base(analysis={"vswr": 0.9}), "analysis.vswr")
    d = _base()
    d["geometry"]["disabled"] = [3, 32]
    e = _err(d, "geometry.disabled[1]")
    assert "outside 0..31" in str(e)
    d = _base()
    d["geometry"]["radius"] = 1.0
    _err(d, "geometry.radius")
    _err(_base(element={"model": "dipole"}), "element.length_m")
    _err(_base(taper={"kind": "uniform", "sll": 20}), "taper.sll")
    _err(_base(geometry="rectangular"), "geometry")
    d = _base(geometry={"kind": "rings", "units": "m", "radii": [1.0], "counts": [4, 5]})
    _err(d, "geometry.counts")


def test_load_design_reports_toml_syntax_and_missing_files(tmp_path):
    """Invalid TOML is one line naming the file; a missing CSV names the key."""
    p = _write(tmp_path, "[design]\nname = \n")
    with pytest.raises(DesignError) as ei:
        load_design(p)
    assert str(p) in str(ei.value) and "TOML" in str(ei.value)
    assert "\n" not in str(ei.value)
    p = _write(tmp_path, """
        [design]
        frequency_hz = 1e9
        [geometry]
        kind = "csv"
        file = "nowhere.csv"
        """)
    with pytest.raises(DesignError) as ei:
        load_design(p)
    assert ei.value.key == "geometry.file" and "nowhere.csv" in str(ei.value)


# ---- positions CSV ----------------------------------------------------------------------------
def test_positions_csv_units_normals_and_enabled(tmp_path):
    """Column-name units (m, mm, wl), normal columns and the enabled column."""
    p = tmp_path / "pos.csv"
    p.write_text("# a comment\nelement,x_mm,y_mm,normal_x,normal_y,normal_z,enabled\n"
                 "0,0,0,0,0,2,1\n\n# comment between rows\n1,15,0,1,0,1,no\n2,30,0,0,0,1,yes\n")
    lay = read_layout(p)
    np.testing.assert_allclose(lay.geometry.positions[:, 0], [0, 0.015, 0.030])
    assert lay.enabled.tolist() == [True, False, True]
    np.testing.assert_allclose(lay.geometry.orientations[1][:, 2], [2**-0.5, 0, 2**-0.5])
    q = tmp_path / "wl.csv"
    q.write_text("y_wl,x_wl,z_wl\n1,0,0\n2,0,0.5\n")
    g = read_positions(q, wavelength=0.1)
    np.testing.assert_allclose(g.positions, [[0, 0.1, 0], [0, 0.2, 0.05]])


@pytest.mark.parametrize("text, line, words", [
    ("x_m,y_m\n0,0\n1,zero\n", 3, "not a number"),
    ("x_m,y_m\n0,0\n1,nan\n", 3, "not a finite"),
    ("x_m,y_m\n0,0\n1,0,0\n", 3, "expected 2 fields"),
    ("x,y\n0,0\n", 1, "has no unit"),
    ("x_m,y_mm\n0,0\n", 1, "mix units"),
    ("x_m,y_m\n0,0\n1,0\n0,0\n", 4, "same position as element 0"),
    ("# only a header\nx_m,y_m\n", 2, "no element rows"),
    ("x_m,y_m,enabld\n0,0,1\n", 1, "did you mean 'enabled'"),
    ("x_m,y_m,enabled\n0,0,maybe\n", 2, "'enabled'"),
    ("element,x_m,y_m\n0,0,0\n2,1,0\n", 3, "expected 1"),
    ("x_m,y_m,normal_x,normal_y,normal_z\n0,0,0,0,0\n", 2, "normal vector is zero"),
    ("x_wl,y_wl\n0,0\n", 1, "no wavelength"),
])
def test_positions_csv_errors_name_the_line(tmp_path, text, line, words):
    """Unparsable rows, NaN, wrong column count, missing unit, coincident elements, zero rows:
    FileFormatError with the file and the 1-based line number."""
    p = tmp_path / "bad.csv"
    p.write_text(text)
    with pytest.raises(FileFormatError) as ei:
        read_positions(p)
    assert ei.value.line == line, str(ei.value)
    assert words in str(ei.value)
    assert str(ei.value).startswith(f"{p}:{line}: ")


@settings(max_examples=25, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(hs.integers(1, 20), hs.integers(0, 2**32 - 1), hs.sampled_from(["m", "mm", "wl"]))
def test_positions_round_trip(tmp_path, n, seed, unit):
    """write_positions -> read_positions returns the positions (bit-exact in metres, to
    rounding of the unit scale otherwise) and the normals (invariant)."""
    rng = np.random.default_rng(seed)
    pos = rng.normal(size=(n, 3)) * 0.3
    R = st.rotation_to(rng.normal(size=(n, 3)) + [0, 0, 3.0])
    g = st.Geometry(pos, R)
    en = rng.random(n) < 0.8
    en[0] = True
    p = tmp_path / f"rt_{unit}.csv"
    write_positions(p, g, unit=unit, wavelength=0.03, enabled=en)
    lay = read_layout(p, wavelength=0.03)
    if unit == "m":
        np.testing.assert_array_equal(lay.geometry.positions, pos)
    else:
        np.testing.assert_allclose(lay.geometry.positions, pos, rtol=1e-14, atol=1e-16)
    np.testing.assert_allclose(lay.geometry.orientations[:, :, 2], R[:, :, 2], atol=1e-15)
    assert lay.enabled.tolist() == en.tolist()


def test_positions_write_is_atomic(tmp_path):
    """A failed write leaves no file and no temporary behind."""
    p = tmp_path / "p.csv"
    with pytest.raises(st.SteradianError):
        write_positions(p, st.linear(3, 1.0), unit="ft")
    with pytest.raises(st.SteradianError):
        write_positions(p, st.linear(3, 1.0), enabled=[True])
    assert os.listdir(tmp_path) == []


def test_csv_design_with_positions_file(tmp_path):
    """kind = "csv": relative path against the design's folder, enabled column honoured,
    disabled keys combined with it."""
    (tmp_path / "data").mkdir()
    write_positions(tmp_path / "data" / "p.csv", st.rectangular(4, 4, 0.5), unit="wl",
                    wavelength=1.0, enabled=[i != 5 for i in range(16)])
    p = _write(tmp_path, f"""
        [design]
        frequency_hz = {C0}
        [geometry]
        kind = "csv"
        file = "data/p.csv"
        disabled = [0]
        """)
    des = load_design(p)
    np.testing.assert_allclose(des.array.positions, st.rectangular(4, 4, 0.5).positions,
                               atol=1e-15)
    assert np.flatnonzero(~des.array.enabled).tolist() == [0, 5]
    assert isinstance(des.array.element, st.Isotropic)
    bad = _write(tmp_path, f"""
        [design]
        frequency_hz = {C0}
        [geometry]
        kind = "csv"
        units = "m"
        file = "data/p.csv"
        """, "bad.toml")
    with pytest.raises(DesignError) as ei:
        load_design(bad)
    assert ei.value.key == "geometry.units"


def test_csv_design_with_unreadable_row_names_the_csv_line(tmp_path):
    """A broken positions file referenced by a design: the error names the CSV line."""
    (tmp_path / "p.csv").write_text("x_m,y_m\n0,0\n0.5,oops\n")
    p = _write(tmp_path, """
        [design]
        frequency_hz = 1e9
        [geometry]
        kind = "csv"
        file = "p.csv"
        """)
    with pytest.raises(FileFormatError) as ei:
        load_design(p)
    assert ei.value.line == 3 and "p.csv:3" in str(ei.value)


# ---- weights CSV ------------------------------------------------------------------------------
@settings(max_examples=30, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(hs.lists(hs.complex_numbers(max_magnitude=1e6, allow_nan=False, allow_infinity=False),
                min_size=1, max_size=40), hs.booleans())
def test_weights_round_trip_is_bit_exact(tmp_path, ws, with_pos):
    """write_weights -> read_weights returns identical complex128 values (shortest-repr
    floats round-trip exactly, Python float repr guarantee)."""
    w = np.array(ws, complex)
    pos = np.arange(3 * len(w), dtype=float).reshape(-1, 3) * 0.01 if with_pos else None
    p = tmp_path / "w.csv"
    write_weights(p, w, pos, meta={"beam": "b0", "frequency_hz": 1e9})
    t = read_weights_table(p, len(w))
    np.testing.assert_array_equal(t.weights, w)
    assert t.meta == {"beam": "b0", "frequency_hz": "1000000000.0"}
    if with_pos:
        np.testing.assert_array_equal(t.positions, pos)


def test_weights_from_amplitude_and_phase_columns(tmp_path):
    """A hand-made file with amplitude (linear or dB) and phase: w = a exp(j phase)."""
    p = tmp_path / "w.csv"
    p.write_text("element,amplitude_db,phase_deg\n1,-6.020599913279624,90\n0,0,0\n2,-inf,0\n")
    w = read_weights(p, 3)
    np.testing.assert_allclose(w, [1.0, 0.5j, 0.0], atol=1e-15)
    q = tmp_path / "w2.csv"
    q.write_text("element,amplitude,amplitude_db,phase_deg\n0,0.5,-6.0206,180\n")
    np.testing.assert_allclose(read_weights(q), [-0.5], atol=1e-15)


@pytest.mark.parametrize("text, line, words", [
    ("element,real,imag\n0,1,0\n0,1,0\n", 3, "appears twice"),
    ("element,real,imag\n0,1,0\n5,1,0\n", 3, "outside 0..1"),
    ("element,real,imag\n0,1,x\n", 2, "not a number"),
    ("element,real,imag,amplitude\n0,1,0,2\n", 2, "'amplitude' disagrees"),
    ("element,real,imag,phase_deg\n0,0,1,45\n", 2, "'phase_deg' disagrees"),
    ("element,amplitude,amplitude_db,phase_deg\n0,1,-3,0\n", 2, "'amplitude_db' disagrees"),
    ("element,amplitude\n0,1\n", 1, "phase_deg"),
    ("element,real\n0,1\n", 1, "go together"),
    ("element,real,imag,amplitude\n0,1,0,-1\n", 2, "negative"),
])
def test_weights_errors_name_the_line(tmp_path, text, line, words):
    """Malformed or self-contradicting weight files: FileFormatError with the line."""
    p = tmp_path / "w.csv"
    p.write_text(text)
    with pytest.raises(FileFormatError) as ei:
        read_weights(p)
    assert ei.value.line == line, str(ei.value)
    assert words in str(ei.value)


def test_weights_count_mismatch(tmp_path):
    """read_weights(n=...) refuses a file for another array size."""
    p = tmp_path / "w.csv"
    write_weights(p, np.ones(4))
    with pytest.raises(FileFormatError, match="4 element rows, the array has 5"):
        read_weights(p, 5)


def test_taper_file_in_a_design_against_the_isotropic_closed_form(tmp_path):
    """[taper] file = weights.csv: the array uses the file's weights. Check D of a tapered
    isotropic ring against D = |sum w|^2 / sum_mn w_m w_n* j0(k r_mn), j0 from
    scipy.special.spherical_jn (isotropic-array power, e.g. Mailloux 3rd ed. ch. 2)."""
    g = st.ring(10, 0.9)
    rng = np.random.default_rng(3)
    w = (0.5 + rng.random(10)) * np.exp(1j * rng.normal(size=10) * 0.2)
    write_weights(tmp_path / "w.csv", w, g.positions)
    p = _write(tmp_path, f"""
        [design]
        frequency_hz = {C0}
        [geometry]
        kind = "ring"
        units = "m"
        count = 10
        radius = 0.9
        [taper]
        file = "w.csv"
        """)
    arr = load_design(p).array
    np.testing.assert_array_equal(arr.taper, w)
    r = np.linalg.norm(g.positions[:, None] - g.positions[None], axis=-1)
    p_ref = np.real(w @ spherical_jn(0, 2 * np.pi * r) @ w.conj())
    d_ref = abs(w.sum()) ** 2 / p_ref
    assert float(st.directivity(arr, [[0, 0, 1.0]])[0]) == pytest.approx(d_ref, rel=1e-10)
    # positions in the file that do not match the geometry are refused
    write_weights(tmp_path / "w.csv", w, g.positions + [0.01, 0, 0])
    with pytest.raises(DesignError) as ei:
        load_design(p)
    assert ei.value.key == "taper.file" and "differ" in str(ei.value)


# ---- pattern CSV and plots --------------------------------------------------------------------
def _small_array():
    return st.Array(st.rectangular(6, 4, 0.5), C0, element=st.CosinePower(1.0),
                    steering=st.Steering(20.0, 10.0))


def test_cuts_csv_round_trip(tmp_path):
    """write_cuts -> read_cuts returns the same samples (shortest-repr floats)."""
    from steradian.metrics import principal_cuts

    cuts = principal_cuts(_small_array(), n=181)
    p = tmp_path / "cuts.csv"
    write_cuts(p, cuts, {"design": "small"})
    back = read_cuts(p)
    assert [c.name for c in back] == ["phi_plane", "cross_plane"]
    for a, b in zip(cuts, back, strict=True):
        for attr in ("angle_deg", "theta_deg", "phi_deg", "directivity_dbi"):
            np.testing.assert_array_equal(getattr(a, attr), getattr(b, attr))
        np.testing.assert_allclose(b.directions, a.directions, atol=1e-12)


def test_uv_map_peak_and_round_trip(tmp_path):
    """The u-v map's largest value is within grid error of the refined peak directivity (and
    never above it); write_uv -> read_uv is exact on visible points."""
    arr = _small_array()
    m = uv_map(arr, 101)
    pk = st.peak_directivity(arr)
    top = float(np.nanmax(m.directivity_dbi))
    assert top <= pk.directivity_dbi + 1e-9
    assert top > pk.directivity_dbi - 0.5
    assert np.isnan(m.directivity_dbi[0, 0])  # (u, v) = (-1, -1) is invisible
    p = tmp_path / "uv.csv"
    write_uv(p, m)
    back = read_uv(p)
    np.testing.assert_array_equal(back.u, m.u)
    np.testing.assert_array_equal(back.directivity_dbi, m.directivity_dbi)


def test_plots_write_png_atomically(tmp_path):
    """plot_cuts and plot_uv write PNG files (PNG signature) and leave no temporaries."""
    from steradian.metrics import principal_cuts
    from steradian.plots import plot_cuts, plot_uv

    arr = _small_array()
    plot_cuts(principal_cuts(arr, n=181), tmp_path / "c.png", hpbw_deg=[20.0, 18.0],
              psl_db=-13.0)
    plot_uv(uv_map(arr, 41), tmp_path / "uv.png")
    assert sorted(os.listdir(tmp_path)) == ["c.png", "uv.png"]
    for f in ("c.png", "uv.png"):
        assert (tmp_path / f).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_deprecated_design_analyze_warns_and_matches():
    """Design.analyze (used by earlier READMEs) still works, warns, and gives what
    steradian.analyze_design gives (common practice: a deprecation keeps results)."""
    import steradian as st

    design = st.load_design(Path(__file__).resolve().parents[1] / "configs" / "link_line.toml")
    with pytest.warns(DeprecationWarning, match="analyze_design"):
        old = design.analyze()
    assert old == st.analyze_design(design)


# ---- issue 9 item 13: sanity checks on units and frequencies ---------------------------------
def test_spacing_in_metres_meant_as_wavelengths_warns():
    """units = "m" with spacing_x = 0.55 (meant in wavelengths) at 28 GHz puts the elements
    51 wavelengths apart (lambda = c0 / f = 10.7 mm, common practice); the design ran silently
    before. It now warns once, naming the key and its value in wavelengths. Half-wave spacing
    in any unit does not warn; 0.55 mm at 28 GHz (0.051 lambda) is just inside the range."""
    lam = C0 / 28e9
    geo = {"kind": "rectangular", "units": "m", "count_x": 4, "count_y": 4,
           "spacing_x": 0.55, "spacing_y": 0.55}
    d = _base(design={"name": "t", "frequency_hz": 28e9}, geometry=geo)
    with pytest.warns(UserWarning) as rec:
        design_from_dict(d)
    assert len(rec) == 1
    msg = str(rec[0].message)
    assert "geometry.spacing_x = 0.55 m" in msg and "geometry.units" in msg
    assert f"{0.55 / lam:.4g} wavelengths" in msg and "\n" not in msg
    for unit, s in (("m", lam / 2), ("mm", 1e3 * lam / 2), ("mm", 0.55), ("wavelength", 0.5)):
        geo = {**geo, "units": unit, "spacing_x": s, "spacing_y": s}
        design_from_dict(_base(design={"name": "t", "frequency_hz": 28e9}, geometry=geo))
    geo = {**geo, "units": "mm", "spacing_x": 0.3, "spacing_y": 0.3}   # 0.028 lambda
    with pytest.warns(UserWarning, match=r"spacing_x = 0.3 mm is 0.02802 wavelengths"):
        design_from_dict(_base(design={"name": "t", "frequency_hz": 28e9}, geometry=geo))
    geo = {**geo, "units": "wavelength", "spacing_x": 12.0, "spacing_y": 12.0}
    with pytest.warns(UserWarning, match=r"spacing_x = 12 wavelength is 12 wavelengths"):
        design_from_dict(_base(design={"name": "t", "frequency_hz": 28e9}, geometry=geo))


def test_ring_spacing_warning_names_the_nearest_elements():
    """Layouts without a spacing key (a ring) are judged by the nearest-element distance:
    8 elements on a 0.01-wavelength radius are 2 r sin(pi / 8) = 0.00765 wavelengths apart
    (chord length, common practice)."""
    geo = {"kind": "ring", "units": "wavelength", "count": 8, "radius": 0.01}
    with pytest.warns(UserWarning, match=r"nearest elements are 0.007654 wavelengths apart"):
        design_from_dict(_base(geometry=geo, element={"model": "isotropic"}))


def test_analysis_frequency_far_from_the_design_frequency_is_refused():
    """analysis.frequency_hz = 28 in a 28 GHz design (meant GHz) evaluated at 28 Hz before;
    more than 100x from the design frequency is now refused, naming the key (the widest-band
    arrays cover about a decade; unit slips are factors of 1000 or more: common practice)."""
    d = _base(design={"name": "t", "frequency_hz": 28e9}, analysis={"frequency_hz": 28.0},
              geometry={"kind": "rectangular", "units": "wavelength", "count_x": 4,
                        "count_y": 4, "spacing_x": 0.5})
    e = _err(d, "analysis.frequency_hz")
    assert "1e+09 times below" in str(e) and "28e9" in str(e)
    d["analysis"] = {"frequency_hz": 29e9}
    assert design_from_dict(d).options.frequency == 29e9
    from steradian.array import FREQUENCY_RATIO_LIMIT, check_frequency

    assert FREQUENCY_RATIO_LIMIT == 100
    assert check_frequency(0.27e9, 27e9) == pytest.approx(0.27e9)
    with pytest.raises(st.SteradianError, match="above the design frequency"):
        check_frequency(2.8e12, 27e9)


def test_steered_weights_file_under_steering_is_refused(tmp_path):
    """Issue 9 item 4 at the library level: a weights file saying steering_included = yes in
    a design with [steering] raises DesignError on taper.file; without [steering] it loads
    and the design records that its taper holds the steering phases."""
    w = tmp_path / "w.csv"
    write_weights(w, np.exp(1j * np.arange(32)), meta={"steering_included": "yes"})
    d = _base(taper={"file": "w.csv"}, steering={"theta_deg": 30.0})
    with pytest.raises(DesignError) as ei:
        design_from_dict(d, base_dir=tmp_path)
    assert ei.value.key == "taper.file"
    assert "[steering]" in str(ei.value) and "steered twice" in str(ei.value)
    design = design_from_dict(_base(taper={"file": "w.csv"}), base_dir=tmp_path)
    assert design.taper_steered and design.taper_file == w.resolve()
    write_weights(w, np.ones(32), meta={"steering_included": "no"})
    d = _base(taper={"file": "w.csv"}, steering={"theta_deg": 30.0})
    assert not design_from_dict(d, base_dir=tmp_path).taper_steered


def test_taper_file_left_unread_for_synthesis(tmp_path):
    """read_taper_file=False: a [taper] file that does not exist yet is named, not read (the
    taper is uniform); read normally it is "file not found"."""
    d = _base(taper={"file": "later.csv"})
    design = design_from_dict(d, base_dir=tmp_path, read_taper_file=False)
    assert design.taper_file == (tmp_path / "later.csv").resolve()
    assert np.all(design.array.taper == 1)
    with pytest.raises(DesignError, match="file not found"):
        design_from_dict(d, base_dir=tmp_path)


def test_verify_refuses_a_taper_that_already_holds_steering(tmp_path):
    """Issue 9 item 4 on the verify path: a design whose taper file says steering_included =
    yes would be steered a second time by the rebuilt table, so verify refuses it (common
    practice: a beam table steers an unsteered taper) before reading the weight file."""
    from steradian.workflows import verify_weight_file

    w = tmp_path / "w.csv"
    write_weights(w, np.exp(1j * np.arange(32)), meta={"steering_included": "yes"})
    design = design_from_dict(_base(taper={"file": "w.csv"}), base_dir=tmp_path)
    with pytest.raises(st.SteradianError, match="steer these excitations twice"):
        verify_weight_file(design, tmp_path / "absent.bin")


def test_designs_with_one_geometry_share_it_and_still_warn_each_time():
    """Two documents with the same geometry table (the points of a scan sweep) get the same
    Geometry object; one whose geometry warns (0.55 m spacing at 28 GHz) warns on every
    build, as a fresh build does."""
    geo = {"kind": "rectangular", "units": "wavelength", "count_x": 4, "count_y": 4,
           "spacing_x": 0.5, "spacing_y": 0.5}
    a = design_from_dict(_base(geometry=dict(geo), steering={"theta_deg": 10.0}))
    b = design_from_dict(_base(geometry=dict(geo), steering={"theta_deg": 20.0}))
    assert a.array.geometry is b.array.geometry
    assert a.array.steering.theta_deg == 10.0 and b.array.steering.theta_deg == 20.0
    far = {**geo, "units": "m", "spacing_x": 0.55, "spacing_y": 0.55}
    for _ in range(2):
        with pytest.warns(UserWarning, match="geometry.spacing_x = 0.55 m"):
            design_from_dict(_base(design={"name": "t", "frequency_hz": 28e9}, geometry=far))
