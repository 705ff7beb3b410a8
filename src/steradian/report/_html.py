"""The design report as one self-contained HTML file (inline CSS and SVG figures; no external
files, fonts, scripts or network).

Every number comes from the analysis summary of :func:`steradian.workflows.analyze_design`
(the ``analyze --json`` dictionary) and its requirement verdicts; the only figure computed
here besides it is the taper efficiency (:func:`steradian.radiation.taper_efficiency`, which
the summary does not carry). Each number's cell carries ``data-key`` (its path in the
summary) and ``data-value`` (the full-precision value) so the report can be checked
against the JSON.
"""

from __future__ import annotations

import html
import math
from collections.abc import Mapping

import numpy as np

__all__ = ["metric_table", "verdict_table", "page", "REFERENCES", "CONVENTIONS", "fmt"]

REFERENCES = (
    "IEEE Std 145-2013, IEEE Standard for Definitions of Terms for Antennas (directivity, "
    "gain, realized gain, beamwidth, sidelobe level, EIRP).",
    "C. A. Balanis, Antenna Theory: Analysis and Design, 4th ed., Wiley, 2016, ch. 2 and 6 "
    "(radiation intensity, directivity, principal-plane cuts, array factor).",
    "R. J. Mailloux, Phased Array Antenna Handbook, 3rd ed., Artech House, 2018, ch. 2 "
    "(grating lobes of periodic lattices, scan loss).",
    "R. C. Hansen, Phased Array Antennas, 2nd ed., Wiley, 2009 (taper efficiency, "
    "sidelobe measures).",
    "P. J. Davis and P. Rabinowitz, Methods of Numerical Integration, 2nd ed., Academic "
    "Press, 1984 (Gauss-Legendre quadrature of the radiated power).",
)
"""Published sources of the methods the report's figures and numbers use."""

CONVENTIONS = (
    "Right-handed x, y, z; theta measured from +z, phi from +x in the x-y plane; time "
    "dependence exp(+j omega t); array factor sum of w_n exp(+j k r.r_n).",
    "Directivity D = 4 pi U / P_rad with P_rad integrated over the sphere (the integrator "
    "and its relative error estimate are stated below); gain = radiation efficiency x D; "
    "realized gain = gain x (1 - |Gamma|^2).",
    "Levels in dB are relative to the analysis peak; the peak and every lobe are found by "
    "a refined search on the sphere, never read off a plotted grid.",
    "Principal cuts are great circles through the beam axis: the plane holding the beam and "
    "z, and the orthogonal plane; angles are measured from the beam axis. The figures span "
    "the whole circle, so far sidelobes of a scanned beam are on them.",
    "Sidelobes: every local maximum outside the main lobe; the peak sidelobe level is the "
    "highest. Grating lobes are predicted from the lattice and the scan.",
    "u = sin(theta) cos(phi), v = sin(theta) sin(phi); azimuth-elevation: azimuth from +z "
    "toward +x, elevation toward +y.",
)


def fmt(value, digits: int = 2, unit: str = "") -> str:
    """A number rounded for people (``digits`` decimals, no negative zero), with its unit."""
    if value is None:
        return "n/a"
    if isinstance(value, bool):
        return "yes" if value else "no"
    x = float(value)
    if not math.isfinite(x):
        return str(x)
    text = f"{x:z.{digits}f}" if abs(x) < 1e5 else f"{x:.4g}"
    return text + (f" {unit}" if unit else "")


def cell(value, key: str | None = None, digits: int = 2, unit: str = "") -> str:
    """A table cell: the rounded number, with its summary path and full value as data."""
    attrs = ""
    if key is not None and value is not None and not isinstance(value, (dict, list)):
        attrs = f' data-key="{html.escape(key)}" data-value="{html.escape(_full(value))}"'
    return f"<td{attrs}>{html.escape(fmt(value, digits, unit))}</td>"


def _full(value) -> str:
    """The full value of a number cell: Python's repr of the float (numpy scalars too)."""
    if isinstance(value, bool) or not isinstance(value, (int, float, np.number)):
        return repr(value)
    return repr(float(value)) if isinstance(value, (float, np.floating)) else repr(int(value))


def _sci_cell(value, key: str) -> str:
    """:func:`cell` for a small number, in scientific notation (1.4e-12, not 0.00)."""
    if value is None:
        return cell(None, key)
    return (f'<td data-key="{html.escape(key)}" data-value="{html.escape(_full(value))}">'
            f"{value:.1e}</td>")


def _row(label: str, *cells: str) -> str:
    return f"<tr><th>{html.escape(label)}</th>{''.join(cells)}</tr>"


def _text(text: str) -> str:
    return f"<td>{html.escape(text)}</td>"


def _radiation_rows(s: Mapping, taper_eff: float | None) -> list[str]:
    rp = s["radiated_power"]
    rows = [
        _row("peak directivity", cell(s["peak_directivity_dbi"], "peak_directivity_dbi", 2,
                                      "dBi"),
             _text(f"at theta {fmt(s['peak_theta_deg'])} deg, phi {fmt(s['peak_phi_deg'])} "
                   "deg")),
        _row("gain", cell(s["gain_dbi"], "gain_dbi", 2, "dBi"),
             _text(f"radiation efficiency {fmt(s['radiation_efficiency'], 3)}")),
        _row("realized gain", cell(s["realized_gain_dbi"], "realized_gain_dbi", 2, "dBi"),
             _text(f"mismatch factor {fmt(s['mismatch_factor'], 4)}")),
    ]
    e = s.get("eirp")
    if e is not None:
        rows.append(_row("EIRP", cell(e["eirp_dbw"], "eirp.eirp_dbw", 2, "dBW"),
                         _text(f"{fmt(e['total_power_w'], 1)} W into the array. "
                               + s.get("rf_exposure_caution", e.get("caution", "")))))
    if taper_eff is not None:
        rows.append(_row("taper efficiency", cell(taper_eff, "taper_efficiency", 4),
                         _text("directivity over that of the same array with uniform "
                               "amplitude")))
    rows.append(_row("integrator", _text(rp["method"]),
                     _text(f"relative error estimate {rp['relative_error_estimate']:.1e}")))
    return rows


def _lobe_rows(m: Mapping) -> list[str]:
    rows = []
    for name, label in (("phi_plane", "phi plane"), ("cross_plane", "cross plane")):
        rows.append(_row(f"half-power beamwidth, {label}",
                         cell((m.get("hpbw_deg") or {}).get(name), f"metrics.hpbw_deg.{name}",
                              2, "deg"),
                         _text(f"first nulls {fmt((m.get('fnbw_deg') or {}).get(name))} deg "
                               "apart")))
    if m.get("psl_db") is not None:
        rows.append(_row("peak sidelobe level", cell(m["psl_db"], "metrics.psl_db", 2, "dB"),
                         _text(f"at theta {fmt(m['psl_theta_deg'])} deg, phi "
                               f"{fmt(m['psl_phi_deg'])} deg")))
    else:
        rows.append(_row("peak sidelobe level", _text("none found"), _text("")))
    if m.get("islr_db") is not None:
        rows.append(_row("integrated sidelobe ratio", cell(m["islr_db"], "metrics.islr_db", 2,
                                                           "dB"),
                         _text(f"main lobe holds {fmt(100 * m['main_lobe_power_fraction'], 1)}"
                               " % of the power")))
    if m.get("lattice"):
        free = m.get("grating_lobe_free_scan_deg")
        rows.append(_row("grating lobes predicted",
                         _text(str(len(m.get("grating_lobes_predicted") or []))),
                         _text("grating-lobe-free scan "
                               + ("none" if free is None else f"{fmt(free, 1)} deg")
                               + " from the lattice normal")))
    found = m.get("grating_lobes_found") or []
    rows.append(_row("grating lobes found", _text(str(len(found))), _text("; ".join(
        f"{fmt(g['level_db'])} dB at theta {fmt(g['theta_deg'], 1)}, phi "
        f"{fmt(g['phi_deg'], 1)} deg" for g in found) or "none")))
    return rows


def _scan_rows(m: Mapping) -> list[str]:
    rows = []
    if m.get("pointing_error_deg") is not None:
        rows.append(_row("pointing error", cell(m["pointing_error_deg"],
                                                "metrics.pointing_error_deg", 3, "deg"),
                         _text("beam axis from the commanded direction")))
    if m.get("scan_loss_db") is not None:
        loss = -m["scan_loss_db"]
        rows.append(_row("scan loss", f'<td data-key="metrics.scan_loss_db" data-value='
                                      f'"{m["scan_loss_db"]!r}">{html.escape(fmt(loss, 2))} '
                                      "dB</td>",
                         _text(f"peak {fmt(m.get('unsteered_peak_directivity_dbi'))} dBi "
                               "unsteered; a negative loss is a gain on scanning")))
    fb = m.get("front_to_back_db")
    if fb is not None:
        rows.append(_row("front-to-back ratio", _text("no radiation behind" if fb >= 299.99
                                                      else fmt(fb, 2, "dB")), _text("")))
    return rows


def metric_table(summary: Mapping, taper_eff: float | None = None) -> str:
    """The metrics table (radiation, lobes, scan) as HTML."""
    rows = _radiation_rows(summary, taper_eff)
    m = summary.get("metrics")
    if m:
        rows += _lobe_rows(m) + _scan_rows(m)
    return ('<table class="metrics"><thead><tr><th>figure</th><th>value</th><th>detail</th>'
            "</tr></thead><tbody>" + "".join(rows) + "</tbody></table>")


def coupling_table(c: Mapping) -> str:
    """The mutual-coupling section as HTML: the design excitation's match and realized gain,
    the power balance, and active VSWR and realized gain over the scan cuts (the
    ``coupling`` block of the analysis; every number a cell keyed to it)."""
    d = c.get("design_excitation") or {}
    z = c.get("self_impedance_ohm")
    rows = [_row("coupling", _text(f"{c.get('model')}: {c.get('source')}"),
                 _text(f"reference {fmt(c.get('z0_ohm'), 1)} ohm"
                       if not isinstance(c.get("z0_ohm"), list) else "reference per port"))]
    if z:
        rows.append(_row("self impedance", cell(z[0], "coupling.self_impedance_ohm.0", 2,
                                                "ohm (resistance)"),
                         cell(z[1], "coupling.self_impedance_ohm.1", 2, "ohm (reactance)")))
    if d:
        rows += [
            _row("worst active VSWR", cell(d.get("worst_active_vswr"),
                                           "coupling.design_excitation.worst_active_vswr", 2),
                 _text(f"element {d.get('worst_element')}, design excitation")),
            _row("mismatch loss", cell(d.get("mismatch_loss_db"),
                                       "coupling.design_excitation.mismatch_loss_db", 3, "dB"),
                 _text("1 - accepted / incident power")),
            _row("coupled realized gain", cell(d.get("realized_gain_dbi"),
                                               "coupling.design_excitation.realized_gain_dbi",
                                               2, "dBi"),
                 _text("peak, with the accepted power of the coupled ports (the metrics' "
                       "realized gain above uses the single mismatch factor)")),
            _row("power balance", _sci_cell(d.get("power_balance_relative_error"),
                                            "coupling.design_excitation."
                                            "power_balance_relative_error"),
                 _text("integrated radiated power against accepted power (relative)"))]
    head = ('<table class="metrics"><thead><tr><th>figure</th><th>value</th><th>detail</th>'
            "</tr></thead><tbody>" + "".join(rows) + "</tbody></table>")
    scan = c.get("scan") or []
    if not scan:
        return head
    cols = (("worst_active_vswr", "worst active VSWR", 2, ""),
            ("accepted_fraction", "accepted fraction", 3, ""),
            ("realized_gain_dbi", "realized gain (dBi)", 2, ""),
            ("uncoupled_optimum_realized_gain_dbi", "uncoupled optimum (dBi)", 2, ""),
            ("max_realized_gain_dbi", "coupling-aware max (dBi)", 2, ""))
    body = []
    for i, r in enumerate(scan):
        cells = "".join(cell(r.get(k), f"coupling.scan.{i}.{k}", dg, u) for k, _, dg, u in cols)
        body.append(f"<tr><th>{html.escape(fmt(r['theta_deg'], 1))} / "
                    f"{html.escape(fmt(r['phi_deg'], 1))} deg</th>{cells}"
                    f"<td>{'BLIND' if r.get('blind') else ''}</td></tr>")
    blind = c.get("blind_directions") or []
    note = (f"<p class=\"caution\">Scan blindness (|Gamma| near 1) at {len(blind)} "
            "direction(s) of the scan cuts.</p>" if blind else "")
    return (head + '<table class="metrics"><thead><tr><th>scan theta / phi</th>'
            + "".join(f"<th>{html.escape(t)}</th>" for _, t, _, _ in cols)
            + "<th>blind</th></tr></thead><tbody>" + "".join(body) + "</tbody></table>"
            + note)


def _limit_text(v: Mapping) -> str:
    if v["key"] == "no_grating_lobe_in_scan":
        return "|s| > 1 (no visible grating lobe)"
    sense = "at least" if v["key"].startswith("min_") else "at most"
    return f"{sense} {fmt(v['limit'], 2, v['unit'])}"


def verdict_table(block: Mapping | None) -> str:
    """The requirement verdicts (PASS/FAIL with margin; "not evaluated" with the reason)."""
    if not block:
        return "<p>The design states no [requirements]; nothing is judged.</p>"
    rows = []
    for i, v in enumerate(block["verdicts"]):
        status = v["status"]
        cls = {"PASS": "pass", "FAIL": "fail"}.get(status, "skip")
        if status == "not evaluated":
            detail = f"<td colspan=3>not evaluated here: {html.escape(v['note'])}</td>"
        else:
            detail = (cell(v["value"], f"requirements.verdicts.{i}.value", 3, v["unit"])
                      + _text(_limit_text(v))
                      + cell(v["margin"], f"requirements.verdicts.{i}.margin", 3, v["unit"]))
        rows.append(f'<tr class="{cls}"><td class="verdict">{html.escape(status)}</td>'
                    f"<th>{html.escape(v['label'])} <code>{html.escape(v['key'])}</code></th>"
                    f"{detail}</tr>")
    met = "all requirements met" if block["met"] else "a requirement FAILS"
    return (f'<p class="{"pass" if block["met"] else "fail"} summary">{met}</p>'
            '<table class="verdicts"><thead><tr><th>verdict</th><th>requirement</th>'
            "<th>measured</th><th>limit</th><th>margin (positive passes)</th></tr></thead>"
            "<tbody>" + "".join(rows) + "</tbody></table>")


CSS = """
body{font-family:"DejaVu Sans",Verdana,sans-serif;color:#22303c;margin:0;background:#f4f5f0}
main{max-width:980px;margin:0 auto;padding:24px 28px;background:#fff}
h1{font-size:22px;margin:0 0 4px;color:#1f5f7a}h2{font-size:16px;border-bottom:2px solid
#1f5f7a;padding-bottom:3px;margin-top:28px}p.sub{margin:0;color:#55636e}
table{border-collapse:collapse;width:100%;font-size:13px;margin:8px 0}
th,td{border-bottom:1px solid #dde2e5;padding:4px 8px;text-align:left;vertical-align:top}
thead th{background:#eef2f3}tr.pass td.verdict{color:#fff;background:#4d7f31;font-weight:bold}
tr.fail td.verdict{color:#fff;background:#a8324f;font-weight:bold}
tr.skip td.verdict{color:#55636e;background:#eceeee}
p.summary{font-weight:bold;padding:6px 10px;color:#fff}p.pass{background:#4d7f31}
p.fail{background:#a8324f}pre{background:#f6f7f4;border:1px solid #dde2e5;padding:10px;
font-size:12px;overflow-x:auto}figure{margin:18px 0;text-align:center}
figure svg{max-width:100%;height:auto}figcaption{font-size:12px;color:#55636e}
.caution{border-left:5px solid #c99a2e;background:#fbf5e6;padding:8px 12px;font-size:13px}
ol li,ul li{font-size:13px;margin:3px 0}
@media print{body{background:#fff}main{padding:0}pre{white-space:pre-wrap}
figure,tr{break-inside:avoid}}
"""


def page(title: str, sections: list[tuple[str, str]], subtitle: str = "") -> str:
    """The whole HTML document: a title and (heading, HTML body) sections."""
    body = "".join(f"<section><h2>{html.escape(h)}</h2>{b}</section>" for h, b in sections)
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f"<title>{html.escape(title)}</title><style>{CSS}</style></head><body><main>"
            f"<h1>{html.escape(title)}</h1><p class=\"sub\">{html.escape(subtitle)}</p>"
            f"{body}</main></body></html>\n")
