"""The design report: its numbers are the ``analyze --json`` numbers, every requirement
verdict is shown, the page is self-contained, and it opens in a real headless browser."""

from __future__ import annotations

import json
import re
import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from steradian.cli import main
from steradian.io.design import load_design
from steradian.radiation import RF_EXPOSURE_CAUTION
from steradian.report import BROWSER_FLAGS, design_report, print_pdf, write_report
from steradian.workflows import analyze_design

ROOT = Path(__file__).resolve().parents[1]

REQUIREMENTS = """
[requirements]
min_gain_dbi = 29.0
max_psl_db = -20.0
max_hpbw_deg = 6.0
min_eirp_dbw = 50.0
no_grating_lobe_in_scan = true
max_qlobe_db = -30.0
"""


@pytest.fixture(scope="module")
def design_file(tmp_path_factory):
    """The harbour panel with requirements: four PASS, one FAIL (PSL), one not evaluated."""
    d = tmp_path_factory.mktemp("report")
    text = (ROOT / "configs" / "harbour_radar_panel.toml").read_text()
    p = d / "harbour_req.toml"
    p.write_text(text.replace("[geometry]", REQUIREMENTS + "\n[geometry]", 1))
    return p


@pytest.fixture(scope="module")
def written(design_file):
    """The report written by the CLI, and the CLI's analyze --json of the same design."""
    out = design_file.parent / "harbour_report.html"
    r = CliRunner()
    res = r.invoke(main, ["report", str(design_file), "-o", str(out), "--json"])
    ana = r.invoke(main, ["analyze", str(design_file), "--json"])
    return res, out, json.loads(ana.output), ana.exit_code


class _Cells(HTMLParser):
    def __init__(self):
        super().__init__()
        self.cells = []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if "data-key" in a:
            self.cells.append((a["data-key"], a["data-value"]))


def _path(obj, key):
    for part in key.split("."):
        obj = obj[int(part)] if isinstance(obj, list) else obj[part]
    return obj


def test_report_numbers_are_the_analyze_json_numbers(written):
    """Every number cell carries its path in the analysis summary and its full value; each
    equals the ``analyze --json`` value exactly (one analysis, never a second way)."""
    res, out, ana, code = written
    assert res.exit_code == 1 and code == 1  # the PSL requirement fails in both
    page = out.read_text()
    p = _Cells()
    p.feed(page)
    keys = {k for k, _ in p.cells}
    for must in ("peak_directivity_dbi", "gain_dbi", "realized_gain_dbi", "eirp.eirp_dbw",
                 "metrics.psl_db", "metrics.hpbw_deg.phi_plane", "metrics.hpbw_deg.cross_plane",
                 "metrics.islr_db", "metrics.scan_loss_db", "metrics.pointing_error_deg",
                 "taper_efficiency"):
        assert must in keys, must
    for key, value in p.cells:
        if key == "taper_efficiency":
            assert float(value) == pytest.approx(1.0, abs=1e-9)  # uniform taper: 1 exactly
            continue
        assert float(value) == _path(ana, key), key
    assert f"{ana['peak_directivity_dbi']:.2f} dBi" in page
    assert f"{ana['metrics']['psl_db']:.2f} dB" in page


def test_report_shows_every_verdict_with_margin(written):
    """One row per requirement: PASS/FAIL with measured value, limit and margin (the
    ``analyze`` verdicts), or "not evaluated" with its reason."""
    _, out, ana, _ = written
    page = out.read_text()
    verdicts = ana["requirements"]["verdicts"]
    rows = re.findall(r'<tr class="(pass|fail|skip)"><td class="verdict">([^<]+)</td>', page)
    assert [s for _, s in rows] == [v["status"] for v in verdicts]
    assert [v["status"] for v in verdicts].count("FAIL") == 1
    for v in verdicts:
        assert f"<code>{v['key']}</code>" in page
        if v["margin"] is not None:
            assert f"{v['margin']:.3f}" in page
    assert "a requirement FAILS" in page


def test_report_is_self_contained_with_caution_and_figures(written):
    """No external resource (no script, link, remote image or font), the RF-exposure caution
    beside EIRP, figures inline as SVG, the design file echoed, references listed."""
    _, out, ana, _ = written
    page = out.read_text()
    assert "<script" not in page and "<link" not in page
    assert not re.search(r'(src|href)="(https?:|//)', page)
    assert "url(http" not in page and "@import" not in page
    eirp_row = re.search(r"<tr><th>EIRP</th>.*?</tr>", page).group(0)
    assert RF_EXPOSURE_CAUTION in eirp_row
    assert page.count("<svg") >= 5
    assert "max_psl_db = -20.0" in page  # the design file, echoed
    assert "Mailloux" in page and "IEEE Std 145-2013" in page


def test_design_report_api_matches_summary():
    """design_report with a given summary shows that summary (no second analysis)."""
    des = load_design(ROOT / "configs" / "link_line.toml")
    s = analyze_design(des)
    rep = design_report(des, summary=s, figures=("cuts",))
    assert rep.summary == s and rep.met is None
    assert "states no [requirements]" in rep.html
    assert f'data-value="{s["gain_dbi"]!r}"' in rep.html


def test_report_refuses_unknown_figure():
    from steradian.errors import SteradianError

    des = load_design(ROOT / "configs" / "link_line.toml")
    with pytest.raises(SteradianError, match="unknown figure kind 'cutz'"):
        design_report(des, figures=("cutz",))


# ---- a real browser ---------------------------------------------------------------------
CHROMIUM = shutil.which("chromium")
needs_chromium = pytest.mark.skipif(
    CHROMIUM is None, reason="Debian's chromium is not installed (.ci/run installs it with "
                             "apt-get; the package could not be installed here)")


def _browser(tmp_path, *args):
    cmd = [CHROMIUM, *BROWSER_FLAGS, f"--user-data-dir={tmp_path / 'profile'}", *args]
    return subprocess.run(cmd, capture_output=True, timeout=240, check=False)


@needs_chromium
def test_report_in_headless_chromium(written, tmp_path):
    """The report opens in headless Chromium: the screenshot is not blank (many colours,
    dark text on the page) and the rendered DOM holds the key numbers and every verdict."""
    from matplotlib.image import imread

    _, out, ana, _ = written
    shot = tmp_path / "shot.png"
    run = _browser(tmp_path, "--window-size=1100,2400", f"--screenshot={shot}",
                   out.resolve().as_uri())
    assert shot.exists(), run.stderr.decode()[-500:]
    img = imread(shot)[..., :3]
    assert img.shape[0] >= 2000 and img.shape[1] >= 1000
    assert img.std() > 0.05
    flat = (img * 255).astype(np.uint8).reshape(-1, 3)
    assert len(np.unique(flat, axis=0)) > 200
    assert (img.mean(axis=2) < 0.3).mean() > 0.005  # text and plot ink
    dom = _browser(tmp_path, "--dump-dom", out.resolve().as_uri()).stdout.decode()
    assert "<main>" in dom
    for text in (f"{ana['peak_directivity_dbi']:.2f} dBi", f"{ana['gain_dbi']:.2f} dBi",
                 f"{ana['eirp']['eirp_dbw']:.2f} dBW", f"{ana['metrics']['psl_db']:.2f} dB",
                 RF_EXPOSURE_CAUTION):
        assert text in dom, text
    statuses = re.findall(r'<td class="verdict">([^<]+)</td>', dom)
    assert statuses == [v["status"] for v in ana["requirements"]["verdicts"]]


@needs_chromium
def test_report_pdf(tmp_path):
    """The report printed to PDF by Chromium (file signature %PDF, several pages)."""
    des = load_design(ROOT / "configs" / "link_line.toml")
    html = tmp_path / "r.html"
    write_report(des, html, figures=("cuts",))
    pdf = print_pdf(html, tmp_path / "r.pdf")
    data = pdf.read_bytes()
    assert data.startswith(b"%PDF") and data.count(b"/Type /Page") >= 2


# ---- numbers for people in the terminal and in CSV reading columns ----------------------
def test_terminal_numbers_rounded_for_people():
    """analyze's table: no negative zero, the caution once under an "RF exposure" label, scan
    loss as a positive loss (Mailloux ch. 2: a scanned planar array loses directivity),
    metre values to four significant digits (a 5.8 GHz half-wave dipole is 25.84 mm)."""
    r = CliRunner()
    out = r.invoke(main, ["analyze", str(ROOT / "configs" / "harbour_radar_panel.toml")]).output
    assert "-0.0" not in out
    assert "caution  Caution" not in out
    assert re.search(r"^RF exposure\s+" + re.escape(RF_EXPOSURE_CAUTION), out, re.M)
    ana = json.loads(r.invoke(main, ["analyze", str(ROOT / "configs" /
                                                    "harbour_radar_panel.toml"),
                                     "--json"]).output)
    loss = -ana["metrics"]["scan_loss_db"]
    assert loss > 0
    assert re.search(rf"^scan loss\s+{loss:.3f} dB \(steered peak", out, re.M)
    out = r.invoke(main, ["analyze", str(ROOT / "configs" / "link_line.toml")]).output
    lam = 299792458.0 / 5.8e9
    assert f"length_m={lam / 2:.4g}" in out


def test_beams_csv_reading_columns_without_float_noise(tmp_path):
    """The beams CSV's reading columns (amplitude, dB, phase) carry no float noise; the
    codes are the exact states and the file still reads back to the same table."""
    from steradian.io.beams_csv import read_beams_csv
    from steradian.io.design import design_from_dict
    from steradian.workflows import beam_table_from_design

    des = design_from_dict({"design": {"name": "t", "frequency_hz": 3e9},
                            "geometry": {"kind": "rectangular", "units": "wavelength",
                                         "count_x": 4, "count_y": 4, "spacing_x": 0.5,
                                         "spacing_y": 0.5},
                            "element": {"model": "isotropic"},
                            "channel": {"phase_bits": 6},
                            "beams": {"grid": "list", "directions": [[0, 0], [37, 20]]}})
    table = beam_table_from_design(des).table
    p = tmp_path / "b.csv"
    from steradian.io.beams_csv import write_beams_csv

    write_beams_csv(p, table)
    rows = [ln.split(",") for ln in p.read_text().splitlines() if not ln.startswith("#")]
    col = rows[0].index("phase_deg")
    for f in rows[1:]:
        text = f[col]
        assert len(text.split(".")[-1]) <= 8, text  # 5.625 deg steps: at most 3 decimals
        assert float(text) % 5.625 == pytest.approx(0.0, abs=1e-9) or \
            float(text) % 5.625 == pytest.approx(5.625, abs=1e-9)
    back = read_beams_csv(p)
    np.testing.assert_array_equal(back.codes, table.codes)


def test_trade_curve_csv_limit_column_reads_as_asked():
    """The trade-curve CSV writes the asked level as people typed it (-9.0, not
    -9.000000000000002 from evenly spaced levels); measured columns keep full precision."""
    from types import SimpleNamespace

    from steradian.io.trade_curve import trade_curve_csv

    levels = [-3 * 3.0000000000000004, -15.0, -16.57894736842105]  # 3 x 3-step noise
    assert repr(levels[0]) == "-9.000000000000002"
    rows = [{"limit_db": v, "psl_db": v - 1e-13 / 3} for v in levels]
    text = trade_curve_csv(SimpleNamespace(columns=["limit_db", "psl_db"], rows=rows))
    lines = text.splitlines()[1:]
    assert [ln.split(",")[0] for ln in lines] == ["-9.0", "-15.0", "-16.578947368"]
    assert [float(ln.split(",")[1]) for ln in lines] == [r["psl_db"] for r in rows]


def test_pdf_without_chromium_is_one_clear_error(tmp_path, monkeypatch):
    """Without chromium on the PATH, --pdf fails in one line (exit 2) after the HTML is
    written; the HTML needs nothing."""
    monkeypatch.setenv("PATH", str(tmp_path))
    out = tmp_path / "r.html"
    res = CliRunner().invoke(main, ["report", str(ROOT / "configs" / "link_line.toml"), "-o",
                                    str(out), "--pdf", str(tmp_path / "r.pdf")])
    assert res.exit_code == 2
    assert "steradian: error: PDF output needs Debian's chromium" in res.output
    assert out.exists() and not (tmp_path / "r.pdf").exists()


def test_coupled_design_report_shows_active_match_over_scan(tmp_path):
    """Issue 13: the report of a coupled design has the coupling section -- active VSWR,
    accepted fraction and realized gain per scan direction, the design excitation's match
    and the power balance -- every number equal to `analyze --json` of the same design."""
    design = load_design(ROOT / "configs" / "relay_mast_coupled_dipoles.toml")
    ana = json.loads(json.dumps(analyze_design(design)))
    rep = write_report(design, tmp_path / "r.html", figures=("cuts",))
    page = (tmp_path / "r.html").read_text()
    p = _Cells()
    p.feed(page)
    keys = [k for k, _ in p.cells if k.startswith("coupling.")]
    n = len(ana["coupling"]["scan"])
    assert {f"coupling.scan.{i}.worst_active_vswr" for i in range(n)} <= set(keys)
    assert "coupling.design_excitation.power_balance_relative_error" in keys
    for key, value in p.cells:
        if key.startswith("coupling."):
            assert float(value) == _path(ana, key), key
    assert "Mutual coupling" in page and rep.summary["coupling"]
    assert "e-1" in page  # the power balance in scientific notation (about 1e-12)
