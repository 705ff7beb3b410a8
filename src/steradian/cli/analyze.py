"""``steradian analyze``: directivity, gain, beamwidths and sidelobes of a TOML design."""

from __future__ import annotations

import math
from pathlib import Path

import click

from ._common import json_option, table

_PREFIX = ((1e12, "THz"), (1e9, "GHz"), (1e6, "MHz"), (1e3, "kHz"), (1.0, "Hz"))


def _hz(f: float) -> str:
    for scale, unit in _PREFIX:
        if abs(f) >= scale:
            return f"{f / scale:.6g} {unit}"
    return f"{f:.6g} Hz"


def _num(v) -> str:
    if isinstance(v, bool) or v is None:
        return str(v)
    if isinstance(v, int):
        return str(v)
    try:
        x = float(v)
    except (TypeError, ValueError):
        return str(v)
    if not math.isfinite(x):
        return str(x)
    return f"{x:.4g}" if (x != 0 and (abs(x) < 1e-3 or abs(x) >= 1e5)) else f"{x:.3f}"


def _flatten(prefix: str, obj, rows: list[tuple[str, str]]) -> None:
    if isinstance(obj, dict):
        for k, v in obj.items():
            _flatten(f"{prefix}.{k}" if prefix else str(k), v, rows)
    elif isinstance(obj, (list, tuple)):
        if all(not isinstance(v, (dict, list, tuple)) for v in obj):
            rows.append((prefix, "[" + ", ".join(_num(v) for v in obj) + "]"))
        else:
            for i, v in enumerate(obj):
                _flatten(f"{prefix}[{i}]", v, rows)
    else:
        rows.append((prefix, _num(obj)))


def _deg(v) -> str:
    return "n/a" if v is None else f"{v:.3f} deg"


def _metric_rows(m: dict) -> list[tuple[str, str]]:
    rows = []
    hp, fn = m.get("hpbw_deg") or {}, m.get("fnbw_deg") or {}
    rows.append(("HPBW", f"{_deg(hp.get('phi_plane'))} (phi plane), "
                 f"{_deg(hp.get('cross_plane'))} (cross plane)"))
    rows.append(("first-null BW", f"{_deg(fn.get('phi_plane'))} (phi plane), "
                 f"{_deg(fn.get('cross_plane'))} (cross plane)"))
    if m.get("psl_db") is None:
        rows.append(("peak sidelobe", "none found"))
    else:
        rows.append(("peak sidelobe", f"{m['psl_db']:.2f} dB at theta {m['psl_theta_deg']:.2f}"
                     f" deg, phi {m['psl_phi_deg']:.2f} deg"))
    if m.get("islr_db") is not None:
        rows.append(("integrated SLR", f"{m['islr_db']:.2f} dB (main lobe holds "
                     f"{100 * m['main_lobe_power_fraction']:.1f} % of the power)"))
    if m.get("lattice"):
        free = m.get("grating_lobe_free_scan_deg")
        n_gl = len(m.get("grating_lobes_predicted") or [])
        rows.append(("grating lobes", f"{n_gl} predicted visible; grating-lobe-free scan "
                     + ("none" if free is None else f"{free:.2f} deg")))
    found = m.get("grating_lobes_found") or []
    if found:
        rows.append(("grating lobes found", ", ".join(
            f"{g['level_db']:.2f} dB at ({g['theta_deg']:.1f}, {g['phi_deg']:.1f}) deg"
            for g in found)))
    if m.get("pointing_error_deg") is not None:
        rows.append(("pointing error", f"{m['pointing_error_deg']:.4f} deg"))
    fb = m["front_to_back_db"]
    rows.append(("front-to-back", f"{fb:.2f} dB" if fb < 299.99 else "no radiation behind"))
    rows.append(("scan loss", f"{m['scan_loss_db']:.3f} dB"))
    for note in m.get("notes") or []:
        rows.append(("note", str(note)))
    return rows


def summary_rows(s: dict) -> list[tuple[str, str]]:
    """Rows of the human summary table for an analysis dictionary (``Design.analyze``)."""
    rows: list[tuple[str, str]] = []
    d = s.get("design")
    if d:
        rows.append(("design", d["name"] + (f"  ({d['source']})" if d.get("source") else "")))
        if d.get("description"):
            rows.append(("description", d["description"]))
    rows.append(("elements", f"{s['n_elements']} ({s['n_enabled']} enabled)"))
    f, f0 = s["frequency_hz"], s["design_frequency_hz"]
    rows.append(("frequency", _hz(f) + ("" if f == f0 else f"  (design {_hz(f0)})")
                 + f", wavelength {s['wavelength_m'] * 1e3:.4g} mm"))
    el = dict(s["element"])
    model = el.pop("model", "?")
    rows.append(("element", model + ("  " + ", ".join(f"{k}={_num(v)}" for k, v in el.items())
                                     if el else "")))
    st = s.get("steering")
    rows.append(("steering", "none (unsteered)" if not st else
                 f"theta {st['theta_deg']:g} deg, phi {st['phi_deg']:g} deg ({st['mode']})"))
    rows.append(("peak directivity", f"{s['peak_directivity_dbi']:.3f} dBi at theta "
                 f"{s['peak_theta_deg']:.3f} deg, phi {s['peak_phi_deg']:.3f} deg"))
    rows.append(("gain", f"{s['gain_dbi']:.3f} dBi (radiation efficiency "
                 f"{s['radiation_efficiency']:.3g})"))
    rows.append(("realized gain", f"{s['realized_gain_dbi']:.3f} dBi (mismatch factor "
                 f"{s['mismatch_factor']:.4g})"))
    rp = s["radiated_power"]
    rule = f", rule {rp['n_theta']} x {rp['n_phi']}" if rp.get("n_theta") else ""
    rows.append(("integrator", f"{rp['method']}{rule}, relative error estimate "
                 f"{rp['relative_error_estimate']:.2g}"))
    if "metrics" in s:
        rows += _metric_rows(s["metrics"])
    if "eirp" in s:
        e = s["eirp"]
        rows.append(("EIRP", f"{e['eirp_dbw']:.2f} dBW ({_num(e['eirp_w'])} W) from "
                     f"{_num(e['total_power_w'])} W input"))
        rows.append(("caution", s.get("rf_exposure_caution", e.get("caution", ""))))
    return rows


def format_summary(s: dict) -> str:
    """The human summary table for an analysis dictionary."""
    name = (s.get("design") or {}).get("name", "")
    return table(summary_rows(s), title=f"steradian analysis: {name}")


@click.command("analyze")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@json_option
@click.option("--frequency", type=float, metavar="HZ",
              help="Evaluate at this frequency in Hz (default: analysis.frequency_hz or the "
                   "design frequency).")
def analyze(design_file, as_json, frequency):
    """Analyse a TOML design: peak directivity and its direction, gain, realized gain,
    beamwidths, sidelobe levels and the integrator's error estimate.

    Prints a table, or with --json the full analysis dictionary.
    """
    from ..io.design import load_design
    from ._common import emit_json

    summary = load_design(design_file).analyze(frequency)
    if as_json:
        emit_json(summary)
    else:
        click.echo(format_summary(summary))
