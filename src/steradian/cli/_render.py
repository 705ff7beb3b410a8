"""How the command line shows results: the ``--json`` option, JSON output, text tables.

The one rendering module of the command line: every command computes through
:mod:`steradian.workflows` and shows the result with these functions, so commands never
import each other. Nothing here computes.
"""

from __future__ import annotations

import json
import math

import click

json_option = click.option("--json", "as_json", is_flag=True,
                           help="Print machine-readable JSON instead of a table.")

_PREFIX = ((1e12, "THz"), (1e9, "GHz"), (1e6, "MHz"), (1e3, "kHz"), (1.0, "Hz"))


# --------------------------------------------------------------------------------------------
# JSON
# --------------------------------------------------------------------------------------------
def json_text(obj) -> str:
    """``obj`` as indented JSON text (numpy values and non-finite floats normalised by
    :func:`steradian.beamtable.jsonable`)."""
    from ..beamtable import jsonable

    return json.dumps(jsonable(obj), indent=2)


def emit_json(obj) -> None:
    """Print ``obj`` as indented JSON."""
    click.echo(json_text(obj))


def write_json(path, obj) -> None:
    """Write ``obj`` as indented JSON to ``path`` (atomically)."""
    from ..io.atomic import write_text

    write_text(path, json_text(obj) + "\n")


def echo_written(paths, verb: str = "wrote") -> None:
    """One ``wrote PATH`` line per file."""
    for p in paths:
        click.echo(f"{verb} {p}")


# --------------------------------------------------------------------------------------------
# Text tables
# --------------------------------------------------------------------------------------------
def table(rows: list[tuple[str, str]], title: str | None = None) -> str:
    """Two-column aligned text table."""
    width = max((len(k) for k, _ in rows), default=0)
    lines = [title, "-" * len(title)] if title else []
    lines += [f"{k:<{width}}  {v}" for k, v in rows]
    return "\n".join(lines)


def hz(f: float) -> str:
    """A frequency with its SI prefix (``10 GHz``)."""
    for scale, unit in _PREFIX:
        if abs(f) >= scale:
            return f"{f / scale:.6g} {unit}"
    return f"{f:.6g} Hz"


def num(v) -> str:
    """A number for a table cell: four significant digits in fixed point (a 5.357 mm dipole
    reads 0.005357, not 0.005), exponent form below 1e-3 and from 1e5; never "-0"."""
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
    if x != 0 and (abs(x) < 1e-3 or abs(x) >= 1e5):
        return f"{x:.4g}"
    digits = 3 if x == 0 else max(0, 3 - math.floor(math.log10(abs(x))))
    return f"{x:z.{digits}f}"


def _deg(v) -> str:
    return "n/a" if v is None else f"{v:z.3f} deg"


# --------------------------------------------------------------------------------------------
# Analysis summary (analyze, demo)
# --------------------------------------------------------------------------------------------
def metric_rows(m: dict) -> list[tuple[str, str]]:
    """Rows for the ``metrics`` block of an analysis summary."""
    rows = []
    hp, fn = m.get("hpbw_deg") or {}, m.get("fnbw_deg") or {}
    rows.append(("HPBW", f"{_deg(hp.get('phi_plane'))} (phi plane), "
                 f"{_deg(hp.get('cross_plane'))} (cross plane)"))
    rows.append(("first-null BW", f"{_deg(fn.get('phi_plane'))} (phi plane), "
                 f"{_deg(fn.get('cross_plane'))} (cross plane)"))
    if m.get("psl_db") is None:
        rows.append(("peak sidelobe", "none found"))
    else:
        rows.append(("peak sidelobe", f"{m['psl_db']:.2f} dB at theta {m['psl_theta_deg']:z.2f}"
                     f" deg, phi {m['psl_phi_deg']:z.2f} deg"))
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
            f"{g['level_db']:.2f} dB at ({g['theta_deg']:z.1f}, {g['phi_deg']:z.1f}) deg"
            for g in found)))
    if m.get("pointing_error_deg") is not None:
        rows.append(("pointing error", f"{m['pointing_error_deg']:.4f} deg"))
    fb = m["front_to_back_db"]
    rows.append(("front-to-back", f"{fb:.2f} dB" if fb < 299.99 else "no radiation behind"))
    rows.append(("scan loss", _scan_loss(m)))
    rows += difference_rows(m)
    for note in m.get("notes") or []:
        rows.append(("note", str(note)))
    return rows


def _scan_loss(m: dict) -> str:
    """Scan loss as a loss (positive when the steered peak is lower), with the unsteered
    peak it is measured against; the summary's ``scan_loss_db`` is the change in peak
    directivity (negative for a loss)."""
    loss = -m["scan_loss_db"]
    ref = m.get("unsteered_peak_directivity_dbi")
    side = "below" if loss >= 0 else "above"
    tail = "" if ref is None else f" (steered peak {abs(loss):.3f} dB {side} the unsteered " \
                                  f"{ref:.3f} dBi)"
    return f"{loss:z.3f} dB{tail}"


def difference_rows(m: dict) -> list[tuple[str, str]]:
    """Rows of a difference beam's metrics (none for a sum beam)."""
    if m.get("beam_kind", "sum") == "sum":
        return []
    return [("beam kind", m["beam_kind"]),
            ("boresight null",
             f"{m['boresight_null_db']:.2f} dB relative to the difference peak"),
            ("difference peak", f"{m['difference_peak_dbi']:.3f} dBi"),
            ("difference SLL", "none found" if m["difference_sidelobe_db"] is None
             else f"{m['difference_sidelobe_db']:.2f} dB"),
            ("monopulse slope", f"{m['monopulse_slope_per_deg']:.4f} /deg (difference slope "
             f"{m['difference_slope_per_deg']:.4f} sqrt(D)/deg)")]


def _design_rows(s: dict) -> list[tuple[str, str]]:
    rows: list[tuple[str, str]] = []
    d = s.get("design")
    if d:
        rows.append(("design", d["name"] + (f"  ({d['source']})" if d.get("source") else "")))
        if d.get("description"):
            rows.append(("description", d["description"]))
    rows.append(("elements", f"{s['n_elements']} ({s['n_enabled']} enabled)"))
    f, f0 = s["frequency_hz"], s["design_frequency_hz"]
    rows.append(("frequency", hz(f) + ("" if f == f0 else f"  (design {hz(f0)})")
                 + f", wavelength {s['wavelength_m'] * 1e3:.4g} mm"))
    el = dict(s["element"])
    model = el.pop("model", "?")
    rows.append(("element", model + ("  " + ", ".join(f"{k}={num(v)}" for k, v in el.items())
                                     if el else "")))
    st = s.get("steering")
    rows.append(("steering", "none (unsteered)" if not st else
                 f"theta {st['theta_deg'] + 0.0:g} deg, phi {st['phi_deg'] + 0.0:g} deg "
                 f"({st['mode']})"))
    return rows


def coupling_rows(c: dict) -> list[tuple[str, str]]:
    """Rows of the ``coupling`` block of an analysis (:func:`steradian.coupling.coupled_summary`):
    the model, the design excitation's active match and realized gain, one row per scan."""
    z0 = c["z0_ohm"]
    rows = [("coupling", f"{c['model']} ({c['source']}), z0 "
             f"{num(z0) if not isinstance(z0, list) else 'per port'} ohm, reciprocity "
             f"{c['reciprocity_error']:.1e}, passivity margin {c['passivity_margin']:.3g}")]
    if "self_impedance_ohm" in c:
        r, x = c["self_impedance_ohm"]
        rows.append(("self impedance", f"{r:.2f} {'+' if x >= 0 else '-'} j{abs(x):.2f} ohm"))
    d = c["design_excitation"]
    rows.append(("active match", f"worst VSWR {d['worst_active_vswr']:.3g} (element "
                 f"{d['worst_element']}), mean |gamma| {d['mean_active_gamma']:.3f}, "
                 f"mismatch loss {d['mismatch_loss_db']:.3f} dB"))
    rows.append(("coupled realized gain", f"{d['realized_gain_dbi']:.3f} dBi at theta "
                 f"{d['peak_theta_deg']:.2f} deg, phi {d['peak_phi_deg']:.2f} deg"))
    if "power_balance_relative_error" in d:
        rows.append(("power balance", f"radiated vs accepted power, relative difference "
                     f"{d['power_balance_relative_error']:.1e}"))
    for r in c["scan"]:
        best = r.get("max_realized_gain_dbi")
        rows.append((f"scan {r['theta_deg']:g}/{r['phi_deg']:g} deg",
                     f"worst active VSWR {r['worst_active_vswr']:.3g}, realized gain "
                     f"{r['realized_gain_dbi']:.2f} dBi"
                     + ("" if best is None else
                        f" (uncoupled optimum {r['uncoupled_optimum_realized_gain_dbi']:.2f},"
                        f" coupling-aware max {best:.2f} dBi)")
                     + ("  BLIND" if r["blind"] else "")))
    return rows


def summary_rows(s: dict) -> list[tuple[str, str]]:
    """Rows of the human summary table for an analysis dictionary
    (:func:`steradian.workflows.analyze_design`)."""
    rows = _design_rows(s)
    rows.append(("peak directivity", f"{s['peak_directivity_dbi']:.3f} dBi at theta "
                 f"{s['peak_theta_deg']:z.3f} deg, phi {s['peak_phi_deg']:z.3f} deg"))
    rows.append(("gain", f"{s['gain_dbi']:.3f} dBi (radiation efficiency "
                 f"{s['radiation_efficiency']:.3g})"))
    rows.append(("realized gain", f"{s['realized_gain_dbi']:.3f} dBi (mismatch factor "
                 f"{s['mismatch_factor']:.4g})"))
    rp = s["radiated_power"]
    rule = f", rule {rp['n_theta']} x {rp['n_phi']}" if rp.get("n_theta") else ""
    rows.append(("integrator", f"{rp['method']}{rule}, relative error estimate "
                 f"{rp['relative_error_estimate']:.2g}"))
    if "metrics" in s:
        rows += metric_rows(s["metrics"])
    if "coupling" in s:
        rows += coupling_rows(s["coupling"])
    if "eirp" in s:
        e = s["eirp"]
        rows.append(("EIRP", f"{e['eirp_dbw']:.2f} dBW ({num(e['eirp_w'])} W) from "
                     f"{num(e['total_power_w'])} W input"))
        rows.append(("RF exposure", s.get("rf_exposure_caution", e.get("caution", ""))))
    return rows


def format_summary(s: dict) -> str:
    """The human summary table for an analysis dictionary."""
    name = (s.get("design") or {}).get("name", "")
    return table(summary_rows(s), title=f"steradian analysis: {name}")


# --------------------------------------------------------------------------------------------
# Beam tables (beams, verify)
# --------------------------------------------------------------------------------------------
def beam_summary_rows(summary: dict) -> list[tuple[str, str]]:
    """Human rows for a :meth:`BeamMetrics.summary` dictionary.

    The power rows (drive loss, radiated power, EIRP) appear when the table has them; the
    EIRP row is followed by the RF exposure caution
    (:data:`steradian.radiation.RF_EXPOSURE_CAUTION`), as in ``analyze``.
    """
    def f(key, fmt, unit=""):
        v = summary.get(key)
        return "-" if v is None else f"{v:{fmt}}{unit}"

    def at(key):
        b = summary.get(f"{key}_beam")
        return "" if b is None else f" (beam {b})"

    return _quality_rows(summary, f, at) + _power_rows(summary, f, at)


def _power_rows(summary: dict, f, at) -> list[tuple[str, str]]:
    """Drive loss, radiated power and EIRP rows of a beam-table summary (when present)."""
    from ..radiation import RF_EXPOSURE_CAUTION

    rows = []
    if summary.get("drive_loss_db_max") is not None:
        rows.append(("drive loss", f"worst {f('drive_loss_db_max', 'z.3f')} dB"
                     f"{at('drive_loss_db_max')} below full drive"))
    if summary.get("radiated_power_db_min") is not None:
        rows.append(("radiated power", f"lowest {f('radiated_power_db_min', 'z.3f')} dB"
                     f"{at('radiated_power_db_min')} re all channels at full drive"))
    if summary.get("null_depth_db_max") is not None:
        rows.append(("difference null", f"shallowest {f('null_depth_db_max', '.2f')} dB"
                     f"{at('null_depth_db_max')} re its peak (difference beams)"))
    if summary.get("difference_sll_db_max") is not None:
        rows.append(("difference sidelobe", f"worst {f('difference_sll_db_max', '.2f')} dB "
                     "re its peak (difference beams; peak sidelobe above is the sum beams')"))
    if summary.get("monopulse_slope_per_deg_min") is not None:
        rows.append(("monopulse slope", f"lowest {f('monopulse_slope_per_deg_min', '.4f')} "
                     f"/deg{at('monopulse_slope_per_deg_min')} (difference beams)"))
    if summary.get("eirp_dbw_min") is not None:
        rows.append(("EIRP", f"lowest {f('eirp_dbw_min', '.2f')} dBW{at('eirp_dbw_min')}"))
        rows.append(("RF exposure", RF_EXPOSURE_CAUTION))
    return rows


def _quality_rows(summary: dict, f, at) -> list[tuple[str, str]]:
    realized = [] if summary.get("realized_gain_dbi_min") is None else [
        ("realized gain", f"lowest {f('realized_gain_dbi_min', '.3f')} dBi"
                          f"{at('realized_gain_dbi_min')} (mutual coupling: accepted power)")]
    return [
        ("beams", str(summary["beams"])),
        ("peak directivity", f"{f('directivity_dbi_min', '.3f')} .. "
                             f"{f('directivity_dbi_max', '.3f')} dBi"),
        *realized,
        ("loss vs ideal", f"mean {f('loss_db_mean', '.4f')} dB, worst "
                          f"{f('loss_db_max', '.4f')} dB{at('loss_db_max')}"),
        ("peak sidelobe", f"worst {f('psl_db_max', '.2f')} dB{at('psl_db_max')}"),
        ("quantization lobe", f"worst {f('qlobe_db_max', '.2f')} dB{at('qlobe_db_max')}"),
        ("pointing error", f"worst {f('pointing_error_deg_max', '.4f')} deg"
                           f"{at('pointing_error_deg_max')}"),
        ("RMS phase error", f"worst {f('rms_phase_error_deg_max', '.3f')} deg"),
    ]


def _req_number(v, unit: str) -> str:
    if v is None:
        return "-"
    return f"{v:.3f}" + (f" {unit}" if unit else "")


def requirement_lines(block: dict) -> list[str]:
    """Human lines of a ``requirements`` block (:func:`steradian.requirements.verdicts_dict`):
    a title with the counts, then one line per requirement: PASS/FAIL, the key, the
    measured value, the limit, the margin (positive = pass) and the worst beam; or "not
    evaluated here" and why."""
    verdicts = block["verdicts"]
    count = {s: sum(v["status"] == s for v in verdicts)
             for s in ("FAIL", "PASS", "not evaluated")}
    title = "requirements: " + ", ".join(f"{n} {s}" for s, n in count.items() if n)
    lines = [title, "-" * len(title)]
    width = max((len(v["key"]) for v in verdicts), default=0)
    for v in verdicts:
        head = f"{v['status'] if v['status'] != 'not evaluated' else '--':<4}  " \
               f"{v['key']:<{width}}  "
        if v["status"] == "not evaluated":
            lines.append(head + f"not evaluated here: {v['note']}")
            continue
        u = v["unit"]
        if v["key"] == "no_grating_lobe_in_scan":
            text = (f"nearest grating lobe at |s| = {_req_number(v['value'], '')}, limit "
                    f"> 1 (visible space), margin {v['margin']:+.3f}")
        else:
            limit = _req_number(v["limit"], u)
            text = (f"{_req_number(v['value'], u)}, limit {limit}, margin "
                    + ("-" if v["margin"] is None else f"{v['margin']:+.3f}"
                       + (f" {u}" if u else "")))
        if v.get("worst_beam") is not None:
            text += f", worst beam {v['worst_beam']}"
        if v.get("note"):
            text += f" ({v['note']})"
        lines.append(head + text)
    return lines


def _versus_design(ver) -> str:
    """The "vs design" row of ``steradian verify``."""
    c = ver.compared
    parts = (("directions", c.get("directions")), ("element states", c.get("states")))
    what = " and ".join(k for k, on in parts if on)
    skipped = " and ".join(k for k, on in parts if not on)
    if not what:
        return "nothing compared (the design has no [channel] and no [beams])"
    tail = f"; {skipped} NOT compared" if skipped else ""
    if ver.matches_design:
        return f"{what} match{tail}"
    return (f"DIFFERS: {c.get('total', len(ver.mismatches))} difference(s), "
            f"{c.get('elements_differing', 0)} element state(s) in "
            f"{c.get('beams_differing', 0)} beam(s){tail}")


def verification_lines(name, path, tab, ver, worst: dict, tolerance_db: float) -> list[str]:
    """Human output of ``steradian verify``: the table, the first difference, the notes."""
    rows = [("design", name), ("file", f"{path} ({tab.encoding})"),
            ("channel", tab.states.describe())] + beam_summary_rows(ver.metrics.summary())
    rows.append(("vs design", _versus_design(ver)))
    if ver.differences:
        big = max(worst.values(), default=0.0)
        ok = all(v <= tolerance_db for v in worst.values())
        rows.append(("vs file's metrics", f"largest level difference {big:.3g} dB "
                     f"({'within' if ok else 'OVER'} {tolerance_db:g} dB)"))
    else:
        rows.append(("vs file's metrics", "the file stores none"))
    out = [table(rows, "verification")]
    if ver.first_difference is not None:
        out.append(f"first difference: {ver.first_difference}")
    return out + [f"note: {n}" for n in ver.notes]


_WORST = (("loss_db", "loss vs ideal", "dB", True, None),
          ("psl_db", "peak sidelobe", "dB", True, "sum"),
          ("psl_db", "difference sidelobe", "dB", True, "difference"),
          ("qlobe_db", "quantization lobe", "dB", True, None),
          ("pointing_error_deg", "pointing error", "deg", True, "sum"),
          ("pointing_error_deg", "null offset", "deg", True, "difference"),
          ("monopulse_slope_per_deg", "monopulse slope", "/deg", False, "difference"),
          ("gain_dbi", "peak gain", "dBi", False, "sum"),
          ("rms_phase_error_deg", "RMS phase error", "deg", True, None),
          ("drive_loss_db", "drive loss", "dB", True, None),
          ("radiated_power_db", "radiated power", "dB", False, None),
          ("eirp_dbw", "EIRP", "dBW", False, "sum"))
"""Per-beam metrics ``beams --worst`` lists: (row key, label, unit, whether high is bad,
beams it applies to: "sum", "difference" or None for all). A difference beam is a row with
a finite ``null_depth_db``."""


def _is_difference(row: dict) -> bool:
    v = row.get("null_depth_db")
    return isinstance(v, (int, float)) and math.isfinite(v)


def worst_beams(rows: list[dict], n: int) -> str:
    """The ``n`` worst beams of each metric in :data:`_WORST`, from
    :meth:`BeamMetrics.rows` (beams without a value for a metric are skipped; sum and
    difference beams are ranked apart where their figures mean different things)."""
    lines = []
    for key, label, unit, high, kind in _WORST:
        vals = [(float(r[key]), r) for r in rows
                if isinstance(r.get(key), (int, float)) and math.isfinite(r[key])
                and (kind is None or _is_difference(r) == (kind == "difference"))]
        if not vals:
            continue
        vals.sort(key=lambda t: (-t[0] if high else t[0], t[1]["beam"]))
        what = " (difference beams)" if kind == "difference" else (
            " (sum beams)" if kind == "sum" and any(map(_is_difference, rows)) else "")
        lines.append(f"worst {min(n, len(vals))} by {label}{what}:")
        lines += [f"  beam {r['beam']:>4}  theta {r['theta_deg']:z7.2f} deg  phi "
                  f"{r['phi_deg']:z7.2f} deg  {v:z9.4f} {unit}" for v, r in vals[:n]]
    return "\n".join(lines)


# --------------------------------------------------------------------------------------------
# Synthesis (synth)
# --------------------------------------------------------------------------------------------
def _fmt_db(x) -> str:
    return "n/a" if x is None else f"{x:.3f} dB"


def _solver_rows(cert: dict) -> list[tuple[str, str]]:
    if cert.get("status") and cert.get("status") != "closed form":
        rows = [("solver", f"{cert['status']}, {cert['iterations']} iterations, relative "
                           f"gap {cert['relative_gap']:.2g}")]
        if "directivity_bound_dbi" in cert:
            rows.append(("bound", f"no weights meeting the constraints exceed "
                                  f"{cert['directivity_bound_dbi']:.3f} dBi"))
        return rows
    if cert.get("status"):
        return [("solver", "closed form (Q^-1 a0)")]
    return []


def result_rows(res) -> list[tuple[str, str]]:
    """Human summary rows of a SynthesisResult."""
    rows = [("method", res.method),
            ("directivity", f"{res.directivity_dbi:.3f} dBi toward the beam (peak "
                            f"{res.peak_directivity_dbi:.3f} dBi)"),
            ("taper efficiency", f"{res.taper_efficiency:.4f}"),
            ("peak sidelobe", _fmt_db(res.psl_db)
             + ("" if res.psl_direction is None else
                f" at theta {res.psl_direction[0]:z.2f}, phi {res.psl_direction[1]:z.2f} deg")
             + " (dense re-check)")]
    if res.limit_db is not None:
        rows.append(("limit", f"{res.limit_db:.3f} dB; worst excess {res.margin_db:.4f} dB; "
                              + ("met" if res.met else "NOT met")))
    rows.append(("white-noise gain", f"{res.white_noise_gain_db:.2f} dB"))
    rows.append(("dynamic range", f"{res.dynamic_range_db:.2f} dB"))
    for i, d in enumerate(res.null_depths_db):
        rows.append((f"null {i}", f"{d:.1f} dB"))
    rows += _solver_rows(res.certificate)
    rows.append(("problem", f"{res.unknowns} real unknowns ({res.symmetry} symmetry), "
                            f"{res.samples} samples, {res.rounds} rounds, {res.seconds:.2f} s"))
    for n in res.notes:
        rows.append(("note", n))
    return rows
