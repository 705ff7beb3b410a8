"""Hostile and malformed input (issue 10): every reproducer ends in one SteradianError line
naming the file, line or key (library) or exit 2 with one ``steradian: error:`` line and no
traceback (CLI), never a RecursionError, OverflowError, TypeError, UnicodeDecodeError or a
quiet acceptance of a value that cannot be meant."""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from steradian.beamtable import BeamTable
from steradian.cli import main
from steradian.errors import DesignError, FileFormatError, SteradianError, shown
from steradian.io.csv_table import parse_float
from steradian.io.design import load_design
from steradian.io.element_table import read_element_table
from steradian.io.formats import read_weight_file, write_weight_file
from steradian.io.positions_csv import read_positions
from steradian.io.weights_csv import read_weights
from steradian.quantize import StateMap

LINE = """[design]
name = "h"
frequency_hz = 1e9

[geometry]
kind = "linear"
units = "wavelength"
count = 4
spacing = 0.5
axis = "x"
"""


def _cli(*args):
    """Run the CLI; returns (exit code, stderr lines)."""
    r = CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)
    return r.exit_code, [s for s in r.stderr.splitlines() if s.strip()]


def _one_error_line(args):
    code, err = _cli(*args)
    assert code == 2, err
    assert len(err) == 1 and err[0].startswith("steradian: error: "), err
    assert "Traceback" not in err[0]
    return err[0]


def _design(tmp_path, extra="", base=LINE, name="d.toml"):
    p = tmp_path / name
    p.write_text(base + extra, encoding="utf-8")
    return p


def _table(tmp_path, suffix, **kw):
    t = BeamTable(StateMap(22.5, 16), np.array([[0.0, 0.0], [10.0, 0.0]]),
                  np.zeros((2, 4, 2), np.int64), "codes", np.zeros(4), None, {"a": 1},
                  kw.get("metrics"))
    p = tmp_path / f"t{suffix}"
    write_weight_file(p, t)
    return p


def _edit(p: Path, old: str, new: str, count: int = 1):
    text = p.read_text(encoding="utf-8")
    assert old in text, (old, text[:400])
    p.write_text(text.replace(old, new, count), encoding="utf-8")
    return p


def _refused(path, match=None):
    with pytest.raises(FileFormatError) as info:
        read_weight_file(path)
    assert str(path) in str(info.value)
    if match:
        assert re.search(match, str(info.value)), str(info.value)
    return str(info.value)


# --------------------------------------------------------------------------------------------
# TOML depth and size (item 1: RecursionError before any check)
# --------------------------------------------------------------------------------------------
def test_toml_array_nested_1000_deep_is_refused(tmp_path):
    p = _design(tmp_path, "[analysis]\nmetrics = " + "[" * 1000 + "]" * 1000 + "\n")
    with pytest.raises(DesignError, match=r"d\.toml.*nest"):
        load_design(p)


def test_toml_inline_table_nested_600_deep_is_refused(tmp_path):
    p = _design(tmp_path, "[analysis]\nx = " + "{a = " * 600 + "1" + "}" * 600 + "\n")
    with pytest.raises(DesignError, match=r"d\.toml.*nest"):
        load_design(p)


def test_toml_deep_nesting_through_the_cli(tmp_path):
    p = _design(tmp_path, "[analysis]\nmetrics = " + "[" * 1000 + "]" * 1000 + "\n")
    assert "d.toml" in _one_error_line(["analyze", p])


def test_toml_brackets_inside_strings_do_not_count(tmp_path):
    """The depth scan skips strings and comments: a name of 200 brackets is a name."""
    p = _design(tmp_path, base=LINE.replace('name = "h"', 'name = "' + "[" * 200 + '"')
                + "# " + "{" * 200 + "\n")
    assert load_design(p).name == "[" * 200


def test_oversized_design_file_is_refused_before_parsing(tmp_path):
    p = _design(tmp_path, "# " + "x" * (17 * 2**20) + "\n")
    with pytest.raises(DesignError, match=r"d\.toml.*MiB"):
        load_design(p)


# --------------------------------------------------------------------------------------------
# Weight files (item 1)
# --------------------------------------------------------------------------------------------
def test_weight_csv_non_number_in_states_line(tmp_path):
    p = _edit(_table(tmp_path, ".csv"), '"phase_step_deg": 22.5', '"phase_step_deg": "x"')
    _refused(p, r":7: states")


def test_weight_csv_states_not_a_table(tmp_path):
    p = _edit(_table(tmp_path, ".csv"), '# states = {', '# states = [{')
    p = _edit(p, '"amplitude_states": 1}', '"amplitude_states": 1}]')
    _refused(p, r":7: states")


@pytest.mark.parametrize("suffix", [".csv", ".json", ".h"])
def test_weight_file_code_of_two_to_the_70(tmp_path, suffix):
    p = _table(tmp_path, suffix)
    big = str(2**70)
    if suffix == ".csv":
        text = p.read_text().splitlines()
        text[-1] = text[-1].rsplit(",", 2)[0] + f",{big},0"
        p.write_text("\n".join(text) + "\n")
    elif suffix == ".json":
        _edit(p, '"phase_code": [0, 0, 0, 0]', f'"phase_code": [{big}, 0, 0, 0]')
    else:
        _edit(p, "{0, 0}, {0, 0}, {0, 0}, {0, 0},", f"{{{big}, 0}}, {{0, 0}}, {{0, 0}}, {{0, 0}},")
    _refused(p)


@pytest.mark.parametrize("what", ["metrics = 5", "metadata = [1]", "metrics = [1, 2]",
                                  "metrics = {}"])
def test_weight_csv_metrics_or_metadata_of_the_wrong_type(tmp_path, what):
    p = _table(tmp_path, ".csv")
    _edit(p, "# metadata = {\"a\": 1}", f"# {what}")
    _refused(p)


@pytest.mark.parametrize("what", ['"metrics": 5', '"metadata": [1]'])
def test_weight_json_metrics_or_metadata_of_the_wrong_type(tmp_path, what):
    p = _table(tmp_path, ".json")
    _edit(p, '"metadata": {\n  "a": 1\n }', what)
    if "metrics" in what:
        _edit(p, '"beam": 0,', '"metrics": 5, "beam": 0,')
        _edit(p, '"beam": 1,', '"metrics": 5, "beam": 1,')
    _refused(p)


def test_weight_csv_superscript_digit_count(tmp_path):
    p = _edit(_table(tmp_path, ".csv"), "# n_beams = 2", "# n_beams = \u00b3")
    _refused(p, r":6: n_beams")


def test_weight_json_nested_5000_deep(tmp_path):
    p = _edit(_table(tmp_path, ".json"), '"metadata": {\n  "a": 1\n }',
              '"metadata": {"a": ' + "[" * 5000 + "]" * 5000 + "}")
    _refused(p, "nest")


def test_weight_csv_json_line_nested_5000_deep(tmp_path):
    p = _edit(_table(tmp_path, ".csv"), '# metadata = {"a": 1}',
              '# metadata = {"a": ' + "[" * 5000 + "]" * 5000 + "}")
    _refused(p, r":8: .*nest")


@pytest.mark.parametrize("suffix", [".csv", ".json", ".h"])
def test_weight_file_with_one_ff_byte(tmp_path, suffix):
    p = _table(tmp_path, suffix)
    data = bytearray(p.read_bytes())
    data[len(data) // 2] = 0xFF
    p.write_bytes(bytes(data))
    _refused(p, "UTF-8")


def test_weight_file_one_ff_byte_through_the_cli(tmp_path):
    p = _table(tmp_path, ".json")
    p.write_bytes(p.read_bytes().replace(b'"a": 1', b'"a": "\xff"'))
    d = _design(tmp_path, '\n[element]\nmodel = "isotropic"\n')
    assert "t.json" in _one_error_line(["verify", d, p])


def test_metrics_count_message_names_the_beams_and_the_count(tmp_path):
    p = _table(tmp_path, ".csv", metrics=[{"x": 1.0}, {"x": 2.0}])
    _edit(p, '# metrics = [{"x": 1.0}, {"x": 2.0}]', '# metrics = [{"x": 1.0}, {"x": 2.0}, {}]')
    msg = _refused(p, r":9: metrics")
    assert "n_beams = 2" in msg and "got 3 entries" in msg


def test_beam_table_metrics_count_message():
    with pytest.raises(SteradianError, match=r"2 beams, got 3 entries"):
        BeamTable(StateMap(22.5, 16), np.zeros((2, 2)), np.zeros((2, 4, 2), np.int64), "codes",
                  np.zeros(4), None, {}, ({}, {}, {}))


def test_trailing_bytes_message_reads_well(tmp_path):
    p = _table(tmp_path, ".bin")
    p.write_bytes(p.read_bytes() + b"\0\0")
    msg = _refused(p)
    assert "is has" not in msg


# --------------------------------------------------------------------------------------------
# Positions, element tables, element models (item 1)
# --------------------------------------------------------------------------------------------
def test_positions_csv_with_1e300(tmp_path):
    p = tmp_path / "pos.csv"
    p.write_text("x_m,y_m,z_m\n0,0,0\n1e300,0,0\n0.5,0,0\n")
    with pytest.raises(FileFormatError, match=r"pos\.csv:3"):
        read_positions(p)


def test_positions_csv_with_1e300_through_the_cli(tmp_path):
    (tmp_path / "pos.csv").write_text("x_m,y_m,z_m\n0,0,0\n1e300,0,0\n0.5,0,0\n")
    d = _design(tmp_path, base=LINE.split("[geometry]")[0] + '[geometry]\nkind = "csv"\n'
                'file = "pos.csv"\n')
    assert "pos.csv:3" in _one_error_line(["analyze", d])


def _element_table(tmp_path, value, bom=b""):
    p = tmp_path / "el.csv"
    rows = "".join(f"{t},{ph},{value},0\n" for t in (0, 90, 180) for ph in (0, 90, 180, 270, 360))
    p.write_bytes(bom + ("# quantity = field\n# components = scalar\n# columns = theta_deg, "
                         "phi_deg, re_e, im_e\n" + rows).encode())
    return p


def test_element_table_of_1e308_values_is_a_relative_pattern(tmp_path):
    """Field tables are relative: 1e308 everywhere is the isotropic pattern, no overflow."""
    e = read_element_table(_element_table(tmp_path, "1e308"))
    eth, eph = e.pattern(np.array([0.0, np.pi / 2, np.pi]), np.zeros(3))
    mag = np.hypot(np.abs(eth), np.abs(eph))
    assert np.all(np.isfinite(mag)) and np.allclose(mag, mag[0])


@pytest.mark.parametrize("value", ["1e-320", "0"])
def test_element_table_of_denormal_or_zero_values_is_refused(tmp_path, value):
    with pytest.raises(FileFormatError, match=r"el\.csv.*(zero|smallest)"):
        read_element_table(_element_table(tmp_path, value))


def test_element_table_with_a_byte_order_mark_is_read(tmp_path):
    read_element_table(_element_table(tmp_path, "1", bom=b"\xef\xbb\xbf"))


@pytest.mark.parametrize("value", ["1_5", "\u0663"])
def test_element_table_strict_numbers(tmp_path, value):
    with pytest.raises(FileFormatError, match=r"el\.csv:4"):
        read_element_table(_element_table(tmp_path, value))


def test_dipole_length_1e308(tmp_path):
    d = _design(tmp_path, '\n[element]\nmodel = "dipole"\nlength_wl = 1e308\n')
    with pytest.raises(DesignError, match=r"element.*length"):
        load_design(d)
    assert "length" in _one_error_line(["analyze", d])


# --------------------------------------------------------------------------------------------
# One strict number parser (input hygiene)
# --------------------------------------------------------------------------------------------
@pytest.mark.parametrize("text", ["1_5", "\u0663", "\uff11", "1e", "0x10", "inf", "nan",
                                  "1.5.2", "", " ", "1 5", "--1", "\u00b2"])
def test_parse_float_refuses_all_but_ascii_decimal(text):
    with pytest.raises(FileFormatError, match=r"f\.csv:4"):
        parse_float("f.csv", 4, "x", text)


@pytest.mark.parametrize("text, value", [("+8", 8.0), ("-8", -8.0), ("1.5e3", 1500.0),
                                         (".5", 0.5), ("5.", 5.0), ("1E-3", 1e-3),
                                         ("-0", 0.0)])
def test_parse_float_accepts_ascii_decimal_with_sign_and_exponent(text, value):
    assert parse_float("f.csv", 4, "x", text) == value


def test_weights_csv_number_with_underscore_is_refused(tmp_path):
    p = tmp_path / "w.csv"
    p.write_text("element,real,imag\n0,1_5,0\n1,1,0\n")
    with pytest.raises(FileFormatError, match=r"w\.csv:2"):
        read_weights(p)


def test_positions_csv_arabic_indic_digit_is_refused(tmp_path):
    p = tmp_path / "pos.csv"
    p.write_text("x_m,y_m,z_m\n0,0,0\n\u0663,0,0\n")
    with pytest.raises(FileFormatError, match=r"pos\.csv:3"):
        read_positions(p)


@pytest.mark.parametrize("reader", [read_positions, read_weights, read_element_table])
def test_every_csv_reader_names_the_file_for_a_bad_byte(tmp_path, reader):
    p = tmp_path / "bad.csv"
    p.write_bytes(b"x_m,y_m,z_m\n0,0,\xff\n")
    with pytest.raises(FileFormatError, match=r"bad\.csv.*UTF-8"):
        reader(p)


# --------------------------------------------------------------------------------------------
# Quiet acceptance (item 4)
# --------------------------------------------------------------------------------------------
def test_disabled_duplicate_index(tmp_path):
    d = _design(tmp_path, "disabled = [0, 0]\n")
    with pytest.raises(DesignError, match=r"geometry\.disabled\[1\].*twice"):
        load_design(d)


@pytest.mark.parametrize("value", ["-9.2e18", "721", "1e300"])
def test_absurd_phi_is_refused(tmp_path, value):
    d = _design(tmp_path, f"\n[steering]\ntheta_deg = 10\nphi_deg = {value}\n")
    with pytest.raises(DesignError, match=r"steering\.phi_deg"):
        load_design(d)


def test_phi_within_two_turns_is_accepted(tmp_path):
    d = _design(tmp_path, "\n[steering]\ntheta_deg = 10\nphi_deg = -720\n")
    assert load_design(d).array.steering.phi_deg == -720


def test_cli_frequency_1e_minus_300(tmp_path):
    d = _design(tmp_path, '\n[element]\nmodel = "isotropic"\n')
    msg = _one_error_line(["analyze", d, "--frequency", "1e-300"])
    assert "frequency" in msg and "more than 1e300 times below" in msg and "inf" not in msg


def test_design_frequency_1e_minus_300(tmp_path):
    d = _design(tmp_path, base=LINE.replace("1e9", "1e-300"))
    with pytest.raises(DesignError, match=r"design\.frequency_hz"):
        load_design(d)


@pytest.mark.parametrize("value", ["0.0", "1e-320", "1e-200"])
def test_all_zero_or_denormal_weights_file(tmp_path, value):
    (tmp_path / "w.csv").write_text("element,real,imag\n" + "".join(
        f"{i},{value},0\n" for i in range(4)))
    d = _design(tmp_path, '\n[taper]\nfile = "w.csv"\n')
    with pytest.raises(FileFormatError, match=r"w\.csv"):
        load_design(d)
    assert "w.csv" in _one_error_line(["analyze", d])


def test_messages_never_show_numpy_reprs():
    assert shown(np.float64(0.5)) == "0.5"
    assert "np." not in shown(np.array([1.0, np.nan]))
    assert shown(np.int64(3)) == "3"


def test_messages_truncate_long_values(tmp_path):
    d = _design(tmp_path, f'\n[steering]\nmode = "{"x" * 5000}"\n')
    with pytest.raises(DesignError) as info:
        load_design(d)
    assert len(str(info.value)) < 300
    d = _design(tmp_path, f'\n[steering]\ntheta_deg = [{", ".join(["1"] * 3000)}]\n')
    with pytest.raises(DesignError) as info:
        load_design(d)
    assert len(str(info.value)) < 300


def test_a_million_row_weights_file_is_not_read_whole(tmp_path):
    p = tmp_path / "w.csv"
    row = "0,1,0\n"
    p.write_text("element,real,imag\n" + row * 1_000_000)
    import time

    t0 = time.perf_counter()
    with pytest.raises(FileFormatError, match=r"w\.csv.*4 elements"):
        read_weights(p, 4)
    assert time.perf_counter() - t0 < 1.0


def test_shown_is_used_by_steradian_errors():
    """The one helper: validate's guards and schema.Section both pass values through it."""
    with pytest.raises(SteradianError) as info:
        from steradian.validate import positive

        positive("x", np.float64(-1.0))
    assert "np." not in str(info.value)


# --------------------------------------------------------------------------------------------
# More of the same classes: elements, C headers, byte-order marks, line ends, keys
# --------------------------------------------------------------------------------------------
@pytest.mark.parametrize("keys, words", [
    ("eps_r = 1e308\nheight_m = 0.001", "eps_r"),
    ("eps_r = 2.2\nheight_m = 1e308", "height_m"),
    ("eps_r = 2.2\nheight_m = 1e-320", "height_m"),
    ("eps_r = 2.2\nheight_m = 0.001\nwidth_m = 1e308", "width_m"),
])
def test_patch_of_absurd_size_is_refused(tmp_path, keys, words):
    d = _design(tmp_path, f'\n[element]\nmodel = "patch"\n{keys}\n')
    msg = _one_error_line(["analyze", d])
    assert words in msg and "nan" not in msg and " inf " not in msg


def test_dipole_of_1e_minus_320_wavelengths_is_a_short_dipole(tmp_path):
    """A wire far shorter than a wavelength has the short-dipole pattern sin(psi) (Balanis,
    Antenna Theory, ch. 4), not 0/0."""
    from steradian.elements import Dipole

    d = Dipole(1e-320, "z", 1e9)
    eth, _ = d.pattern(np.array([np.pi / 2, np.pi / 6]), np.zeros(2))
    np.testing.assert_allclose(np.abs(eth), [1.0, 0.5], rtol=1e-12)


def test_dipole_product_form_matches_the_cosine_difference():
    """cos(x c) - cos(x) = 2 sin(x(1+c)/2) sin(x(1-c)/2) (sum-to-product identity): the
    half-wave dipole pattern is unchanged, cos(pi/2 cos t)/sin t (Balanis, ch. 4)."""
    from steradian.elements import Dipole
    from steradian.units import C0

    d = Dipole(0.5, "z", C0)
    t = np.linspace(0.1, np.pi - 0.1, 7)
    eth, _ = d.pattern(t, np.zeros_like(t))
    np.testing.assert_allclose(np.abs(eth), np.cos(np.pi / 2 * np.cos(t)) / np.sin(t),
                               rtol=1e-12)


def test_geometry_refuses_a_coordinate_beyond_1e8_m():
    from steradian.geometry import Geometry

    with pytest.raises(SteradianError, match=r"element 1 has x = 1e\+300 m"):
        Geometry(np.array([[0.0, 0, 0], [1e300, 0, 0]]))


@pytest.mark.parametrize("old, new", [
    ("STEP_DEG 22.5", "STEP_DEG 2_2.5"),
    ("{0, 0}, {0, 0}, {0, 0}, {0, 0},", "{1_0, 0}, {0, 0}, {0, 0}, {0, 0},"),
])
def test_c_header_strict_numbers(tmp_path, old, new):
    p = _edit(_table(tmp_path, ".h"), old, new)
    _refused(p, "not a")


@pytest.mark.parametrize("suffix", [".csv", ".json", ".h"])
def test_weight_files_with_a_byte_order_mark_are_read(tmp_path, suffix):
    p = _table(tmp_path, suffix)
    p.write_bytes(b"\xef\xbb\xbf" + p.read_bytes())
    assert read_weight_file(p).n_beams == 2


def test_weight_csv_with_crlf_line_ends_is_read(tmp_path):
    p = _table(tmp_path, ".csv")
    p.write_bytes(p.read_bytes().replace(b"\n", b"\r\n"))
    assert read_weight_file(p).n_beams == 2


def test_weight_csv_underscore_in_a_code_is_refused(tmp_path):
    p = _table(tmp_path, ".csv")
    text = p.read_text().splitlines()
    text[-1] = text[-1].rsplit(",", 2)[0] + ",1_0,0"
    p.write_text("\n".join(text) + "\n")
    _refused(p, r":17: column 'phase_code'")


def test_design_file_with_a_byte_order_mark_is_read(tmp_path):
    p = tmp_path / "d.toml"
    p.write_bytes(b"\xef\xbb\xbf" + LINE.encode())
    assert load_design(p).name == "h"


def test_design_file_with_one_ff_byte(tmp_path):
    p = tmp_path / "d.toml"
    p.write_bytes(LINE.encode().replace(b'"h"', b'"\xff"'))
    msg = _one_error_line(["analyze", p])
    assert "d.toml" in msg and "UTF-8" in msg and "0xff" in msg


def test_a_5000_character_key_is_cut_in_the_message(tmp_path):
    d = _design(tmp_path, "k" * 5000 + " = 1\n")
    with pytest.raises(DesignError) as info:
        load_design(d)
    assert len(str(info.value)) < 600


def test_positions_csv_plus_sign_is_accepted(tmp_path):
    """A leading + is accepted everywhere (strtod and every spreadsheet write it)."""
    p = tmp_path / "pos.csv"
    p.write_text("x_m,y_m,z_m\n0,0,0\n+0.5,0,0\n")
    assert read_positions(p).positions[1, 0] == 0.5


def test_weight_csv_disagreement_message_shows_plain_numbers(tmp_path):
    p = _table(tmp_path, ".csv")
    text = p.read_text().splitlines()
    f = text[-1].split(",")
    f[6] = "8.0"
    text[-1] = ",".join(f)
    p.write_text("\n".join(text) + "\n")
    msg = _refused(p, r":17: column 'amplitude' \(8\.0\) disagrees")
    assert "np." not in msg


def test_weight_csv_long_field_is_cut_in_the_message(tmp_path):
    p = _table(tmp_path, ".csv")
    text = p.read_text().splitlines()
    f = text[-1].split(",")
    f[5] = "[" * 5000
    text[-1] = ",".join(f)
    p.write_text("\n".join(text) + "\n")
    assert len(_refused(p, r":17: column 'enabled'")) < 300


def test_a_5000_character_file_name(tmp_path):
    d = _design(tmp_path, base=LINE.split("[geometry]")[0] + '[geometry]\nkind = "csv"\n'
                f'file = "{"y" * 5000}"\n')
    with pytest.raises(DesignError, match=r"geometry\.file: cannot use"):
        load_design(d)


def test_a_message_quoting_a_huge_number_is_cut(tmp_path):
    p = _edit(_table(tmp_path, ".csv"), '"phase_step_deg": 22.5',
              '"phase_step_deg": 1' + "0" * 3000)
    assert len(_refused(p, r":7: states")) < 600


def test_toml_integer_of_5000_digits(tmp_path):
    d = _design(tmp_path, "\n[steering]\nphi_deg = 1" + "0" * 5000 + "\n")
    with pytest.raises(DesignError, match=r"d\.toml.*4300 digits"):
        load_design(d)


@pytest.mark.parametrize("suffix", [".csv", ".json", ".h"])
def test_weight_file_json_integer_of_5000_digits(tmp_path, suffix):
    p = _table(tmp_path, suffix)
    old = {".csv": '# metadata = {"a": 1}', ".json": '"a": 1',
           ".h": 'steradian-metadata: {"a":1}'}[suffix]
    _edit(p, old, old.replace("1", "1" + "0" * 5000))
    _refused(p, "4300 digits")


def test_calibration_gain_of_1e308_db(tmp_path):
    from steradian.io.calibration_csv import read_calibration

    p = tmp_path / "cal.csv"
    p.write_text("element,gain_db,phase_deg\n0,0,0\n1,1e308,0\n")
    with pytest.raises(FileFormatError, match=r"cal\.csv:3: column 'gain_db'"):
        read_calibration(p, 2)


def test_calibration_file_of_many_rows_stops_early(tmp_path):
    from steradian.io.calibration_csv import read_calibration

    p = tmp_path / "cal.csv"
    p.write_text("element,gain_db,phase_deg\n" + "0,0,0\n" * 100_000)
    with pytest.raises(FileFormatError, match=r"cal\.csv:6: .*4 elements"):
        read_calibration(p, 4)


def test_read_bytes_stops_at_the_limit(tmp_path):
    """The size limit reads at most limit + 1 bytes, then refuses naming the file."""
    from steradian.io.text import read_bytes

    p = tmp_path / "big.bin"
    p.write_bytes(b"x" * 5000)
    with pytest.raises(FileFormatError, match=r"big\.bin: .*larger than"):
        read_bytes(p, "test file", 4096)
    assert len(read_bytes(p, "test file", 5000)) == 5000


def _gain_table(tmp_path, value, column):
    p = tmp_path / "g.csv"
    rows = [[t, ph, 0.0, 0.0] for t in (0, 90, 180) for ph in (0, 90, 180, 270, 360)]
    rows[7][column] = value
    p.write_text("# quantity = gain_dbi\n# components = scalar\n# columns = theta_deg, phi_deg, "
                 "gain_dbi, phase_deg\n" + "".join(",".join(map(str, r)) + "\n" for r in rows))
    return p


@pytest.mark.parametrize("value, column, words", [("1e308", 2, "above 300 dBi"),
                                                  ("1e308", 1, "phi_deg=1e\\+308 is outside")])
def test_element_table_absurd_gain_or_phi(tmp_path, value, column, words):
    """No overflow warning (tests run with warnings as errors): one line naming the line."""
    with pytest.raises(FileFormatError, match=rf"g\.csv:11: .*{words}"):
        read_element_table(_gain_table(tmp_path, value, column))


def test_positions_csv_normal_of_1e300_is_a_direction(tmp_path):
    from steradian.io.positions_csv import read_layout

    p = tmp_path / "pos.csv"
    p.write_text("x_m,y_m,z_m,normal_x,normal_y,normal_z\n0,0,0,1e300,0,1e300\n"
                 "0.5,0,0,0,0,1\n")
    layout = read_layout(p)
    assert np.all(np.isfinite(layout.geometry.orientations))


@pytest.mark.parametrize("suffix, old, new", [
    (".json", '"phase_code": [0, 0, 0, 0]', f'"phase_code": [{2**70}, 0, 0, 0]'),
    (".json", '"metadata": {\n  "a": 1\n }', '"metadata": ' + "[" * 5000 + "]" * 5000),
    (".csv", "# n_beams = 2", "# n_beams = \u00b3"),
    (".csv", '# metadata = {"a": 1}', "# metadata = [1]"),
    (".h", "{0, 0}, {0, 0}, {0, 0}, {0, 0},", f"{{{2**70}, 0}}, {{0, 0}}, {{0, 0}}, {{0, 0}},"),
])
def test_hostile_weight_files_through_verify(tmp_path, suffix, old, new):
    """The real command: exit 2, one ``steradian: error:`` line naming the file."""
    p = _edit(_table(tmp_path, suffix), old, new)
    d = _design(tmp_path, '\n[element]\nmodel = "isotropic"\n')
    assert p.name in _one_error_line(["verify", d, p])


def test_all_zero_weights_through_analyze_weights_option(tmp_path):
    w = tmp_path / "w.csv"
    w.write_text("element,real,imag\n" + "".join(f"{i},1e-320,0\n" for i in range(4)))
    d = _design(tmp_path, '\n[element]\nmodel = "isotropic"\n')
    msg = _one_error_line(["analyze", d, "--weights", w])
    assert "w.csv" in msg and "nan" not in msg and "np." not in msg


@pytest.mark.parametrize("pattern", ['"\\', '"""\\"', "'''\"", "'"])
def test_nesting_scan_is_linear_for_unterminated_strings(tmp_path, pattern):
    """Quotes that never close must not make the depth scan quadratic (2 MB in well under a
    second; a backtracking scan took minutes)."""
    import time

    from steradian.io.text import check_nesting

    text = pattern * (2**21 // len(pattern)) + "[" * 10
    t0 = time.perf_counter()
    check_nesting("x.toml", text)
    assert time.perf_counter() - t0 < 2.0


@pytest.mark.parametrize("count", [2**70, 10**9])
def test_weight_json_absurd_element_count(tmp_path, count):
    """No list of ``n_elements`` is built before the file's own lists are counted."""
    p = _edit(_table(tmp_path, ".json"), '"n_elements": 4', f'"n_elements": {count}')
    _refused(p)
    p = _edit(p, '"layout_version": 2', '"layout_version": 1')
    _edit(p, '"enabled": [1, 1, 1, 1], ', "")
    _refused(p)


@pytest.mark.parametrize("layout", ["9" * 5000, "\u0662"])
def test_c_header_layout_macro_of_5000_digits_or_arabic_indic(tmp_path, layout):
    p = _edit(_table(tmp_path, ".h"), "#define STRD_WEIGHTS_LAYOUT 2",
              f"#define STRD_WEIGHTS_LAYOUT {layout}")
    assert len(_refused(p)) < 600


def test_taper_sll_beyond_double_precision_is_refused_in_one_line(tmp_path):
    """Issue 10 (found by the input-hygiene mutation run): ``sll = 1e308`` overflowed in the
    taper (an internal error, exit 3). A design sidelobe level beyond 300 dB, far below
    double-precision rounding of the weights, is refused naming the taper (common
    practice)."""
    from steradian.tapers import taylor

    with pytest.raises(SteradianError, match="sll must be at most 300 dB"):
        taylor(16, sll=1e308)
    with pytest.raises(SteradianError, match="nbar must be at most"):
        taylor(16, nbar=1e308)


@pytest.mark.parametrize("beams", [
    {"grid": "theta_phi", "theta_deg": [10.0], "phi_deg": [-9.2e18]},
    {"grid": "az_el", "az_deg": [1e9], "el_deg": [0.0]},
])
def test_beam_grid_angles_beyond_two_turns_are_refused(beams):
    """Issue 10 item 4 for beam grids: an azimuth or phi of -9.2e18 degrees is a slip, not an
    angle; the [beams] key is named (common practice: two turns either way is the most any
    angle is written as)."""
    from steradian.beamtable import beams_from_table

    with pytest.raises(DesignError, match="within"):
        beams_from_table(beams)
