"""The design report: assembling the page, writing it, printing it to PDF."""

from __future__ import annotations

import html
import re
import shutil
import subprocess
import tempfile
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

from ..errors import SteradianError
from ..version import VERSION
from . import _html
from ._figures import FIGURE_KINDS, design_figure

__all__ = ["REPORT_FIGURES", "Report", "design_report", "write_report", "print_pdf",
           "BROWSER_FLAGS"]

REPORT_FIGURES = ("cuts", "uv", "theta-phi", "polar", "layout")
"""Figure kinds a report shows by default, in order."""

BROWSER_FLAGS = ("--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
                 "--no-first-run", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync")
"""Chromium flags for printing a report: headless, no network services, no profile sync."""


@dataclass(frozen=True)
class Report:
    """A design report: the HTML page, the analysis summary it shows, and whether every
    requirement is met (None when the design states none)."""

    html: str
    summary: dict
    met: bool | None


def _svg(fig, salt: str) -> str:
    """The figure as inline SVG (no XML prolog; ids salted so figures never share ids)."""
    import matplotlib as mpl

    from ..plots import figure_bytes

    with mpl.rc_context({"svg.hashsalt": salt}):
        text = figure_bytes(fig, "svg").decode("utf-8")
    start = text.find("<svg")
    return text[start:]


def _element_text(el: Mapping) -> str:
    """``cosine_power (q 1.2, exponent_on power)``: the model and its parameters."""
    el = dict(el)
    model = str(el.pop("model", "?"))
    return model + (" (" + ", ".join(f"{k} {v}" for k, v in el.items()) + ")" if el else "")


def _job(design, s: Mapping) -> str:
    from ..plots import frequency_text, taper_text

    st = s.get("steering")
    scan = ("unsteered" if not st else f"theta {_html.fmt(st['theta_deg'], 1)} deg, phi "
            f"{_html.fmt(st['phi_deg'], 1)} deg ({st['mode']} steering)")
    items = [("design", design.name), ("description", design.description or "-"),
             ("frequency", frequency_text(s["frequency_hz"])
              + ("" if s["frequency_hz"] == s["design_frequency_hz"] else
                 f" (design {frequency_text(s['design_frequency_hz'])})")
              + f", wavelength {s['wavelength_m'] * 1e3:.4g} mm"),
             ("elements", f"{s['n_elements']} ({s['n_enabled']} enabled)"),
             ("element model", _element_text(s["element"])),
             ("beam", scan), ("taper", taper_text(design))]
    rows = "".join(f"<tr><th>{html.escape(k)}</th><td>{html.escape(str(v))}</td></tr>"
                   for k, v in items)
    return f'<table class="job">{rows}</table>'


def _echo(design) -> str:
    if design.source is None:
        return "<p>The design was built in Python (no design file).</p>"
    try:
        text = Path(design.source).read_text(encoding="utf-8")
    except OSError as exc:
        return f"<p>The design file {html.escape(str(design.source))} cannot be read: " \
               f"{html.escape(str(exc))}</p>"
    return (f"<p>From <code>{html.escape(str(design.source))}</code>:</p>"
            f"<pre>{html.escape(text)}</pre>")


def _figures(design, summary, kinds: Sequence[str]) -> str:
    out = []
    for k in kinds:
        fig = design_figure(design, k, summary)
        out.append(f'<figure id="figure-{k}">{_svg(fig, f"{design.name}-{k}")}'
                   f"<figcaption>{html.escape(FIGURE_KINDS[k])}</figcaption></figure>")
    return "".join(out)


def _assumptions(s: Mapping) -> str:
    rp = s["radiated_power"]
    items = list(_html.CONVENTIONS)
    items.append(f"Radiated power by {rp['method']}"
                 + (f" ({rp['n_theta']} x {rp['n_phi']} nodes)" if rp.get("n_theta") else "")
                 + f", relative error estimate {rp['relative_error_estimate']:.1e}.")
    items.append("Element pattern: the model above, identical for every element"
                 + ("; mutual coupling as in its section (ports driven by incident waves)"
                    if s.get("coupling") else " (mutual coupling is not modelled)")
                 + "; weights as designed, without quantization.")
    for note in (s.get("metrics") or {}).get("notes") or []:
        items.append(str(note))
    return "<ul>" + "".join(f"<li>{html.escape(i)}</li>" for i in items) + "</ul>"


def design_report(design, *, summary: Mapping | None = None, frequency: float | None = None,
                  figures: Sequence[str] = REPORT_FIGURES) -> Report:
    """The report of ``design`` as one self-contained HTML page.

    ``summary``: the design's analysis (:func:`steradian.workflows.analyze_design`, computed
    at ``frequency`` when omitted); every number in the page is from it, with
    ``data-key``/``data-value`` attributes giving its path and full value.
    ``figures``: kinds of :data:`FIGURE_KINDS` shown inline as SVG.
    """
    from ..radiation import taper_efficiency
    from ..workflows import analyze_design

    bad = [k for k in figures if k not in FIGURE_KINDS]
    if bad:
        raise SteradianError(f"unknown figure kind {bad[0]!r}; kinds: {', '.join(FIGURE_KINDS)}")
    s = dict(analyze_design(design, frequency) if summary is None else summary)
    eff = taper_efficiency(design.array, frequency=s["frequency_hz"])
    reqs = s.get("requirements")
    caution = s.get("rf_exposure_caution")
    sections = [
        ("The job and its requirements", _job(design, s) + _html.verdict_table(reqs)),
        ("Metrics", _html.metric_table(s, eff)
         + (f'<p class="caution">{html.escape(caution)}</p>' if caution else "")),
        *([("Mutual coupling: active match and realized gain over scan",
             _html.coupling_table(s["coupling"]))] if s.get("coupling") else []),
        ("Figures", _figures(design, s, figures)),
        ("The design, echoed back", _echo(design)),
        ("Assumptions and conventions", _assumptions(s)),
        ("References", "<ol>" + "".join(f"<li>{html.escape(r)}</li>"
                                        for r in _html.REFERENCES) + "</ol>"),
    ]
    sub = f"design report, steradian {VERSION}"
    page = _html.page(f"{design.name}", sections, sub)
    return Report(page, s, None if reqs is None else bool(reqs["met"]))


def write_report(design, path, **kwargs) -> Report:
    """Write :func:`design_report` to ``path`` (atomically) and return it."""
    from ..io.atomic import write_text

    rep = design_report(design, **kwargs)
    write_text(path, rep.html)
    return rep


def _browser() -> str:
    exe = shutil.which("chromium")
    if exe is None:
        raise SteradianError("PDF output needs Debian's chromium to print the page "
                             "(apt-get install chromium); the HTML report needs nothing")
    return exe


def print_pdf(html_path, pdf_path, *, timeout_s: float = 180.0) -> Path:
    """Print the HTML file ``html_path`` to ``pdf_path`` with headless Chromium.

    Raises
    ------
    SteradianError
        No ``chromium`` on the PATH, or the browser failed or wrote no PDF.
    """
    from ..io.atomic import write_bytes

    exe = _browser()
    src = Path(html_path).resolve()
    with tempfile.TemporaryDirectory(prefix="steradian-pdf-") as tmp:
        out = Path(tmp) / "report.pdf"
        cmd = [exe, *BROWSER_FLAGS, f"--user-data-dir={tmp}/profile",
               "--no-pdf-header-footer", f"--print-to-pdf={out}", src.as_uri()]
        try:
            run = subprocess.run(cmd, capture_output=True, timeout=timeout_s, check=False)
        except subprocess.TimeoutExpired:
            raise SteradianError(f"chromium did not print {src.name} within "
                                 f"{timeout_s:g} s") from None
        if not out.exists() or out.stat().st_size == 0:
            err = re.sub(r"\s+", " ", run.stderr.decode("utf-8", "replace"))[-300:]
            raise SteradianError(f"chromium wrote no PDF of {src.name} (exit "
                                 f"{run.returncode}): {err}")
        write_bytes(pdf_path, out.read_bytes())
    return Path(pdf_path)
