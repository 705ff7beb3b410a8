"""The project's figure look and figure files: colours, fonts, titles, PNG/SVG/PDF writing.

Every figure of :mod:`steradian.plots` is built inside :func:`styled` (a matplotlib
``rc_context`` of :data:`STYLE`), from :class:`matplotlib.figure.Figure` directly (no pyplot,
no global backend state), and written by :func:`save_figure` (format from the file suffix,
atomically).
"""

from __future__ import annotations

import contextlib
import io
from pathlib import Path

from ..errors import SteradianError
from ..io.atomic import write_bytes

__all__ = ["COLORS", "STYLE", "FIGURE_FORMATS", "styled", "new_figure", "save_figure",
           "figure_bytes", "sequential_cmap", "frequency_text", "title_lines", "place_legend"]

COLORS = ("#1f5f7a", "#c0582f", "#5b8c3a", "#8a4f9e", "#c99a2e", "#3d4f63", "#b03a5b")
"""The project's line colours, in order: deep teal, rust, moss, plum, ochre, slate, berry."""

INK = "#22303c"
"""Text, axes and marker colour."""

STYLE = {
    "axes.prop_cycle": None,  # filled in by styled() (cycler import kept lazy)
    "font.size": 9.0, "axes.titlesize": 9.5, "axes.labelsize": 9.0,
    "xtick.labelsize": 8.0, "ytick.labelsize": 8.0, "legend.fontsize": 7.5,
    "axes.edgecolor": INK, "axes.labelcolor": INK, "text.color": INK,
    "xtick.color": INK, "ytick.color": INK,
    "axes.spines.top": False, "axes.spines.right": False,
    "axes.grid": True, "grid.color": "#9aa7b0", "grid.alpha": 0.35, "grid.linewidth": 0.6,
    "lines.linewidth": 1.3, "legend.framealpha": 0.92, "legend.edgecolor": "#c8d0d6",
    "figure.facecolor": "white", "axes.facecolor": "#fbfbf8", "savefig.facecolor": "white",
    "svg.fonttype": "path", "image.cmap": "viridis",
}
"""matplotlib rc values of every steradian figure."""

FIGURE_FORMATS = {".png": "png", ".svg": "svg", ".pdf": "pdf"}
"""Figure file suffixes and their matplotlib formats."""

DPI = 130


@contextlib.contextmanager
def styled():
    """Context in which figures get the project's look."""
    import matplotlib as mpl
    from cycler import cycler

    rc = dict(STYLE, **{"axes.prop_cycle": cycler(color=list(COLORS)),
                        "image.cmap": sequential_cmap().name})
    with mpl.rc_context(rc):
        yield


def sequential_cmap():
    """The project's colour map for levels in dB: night blue through teal and sand to cream."""
    import matplotlib as mpl
    from matplotlib.colors import LinearSegmentedColormap

    name = "steradian_levels"
    if name not in mpl.colormaps:
        mpl.colormaps.register(LinearSegmentedColormap.from_list(
            name, ["#0d1b2a", "#1f4e79", "#1f7a7a", "#6aa84f", "#e0c25a", "#fbf3dc"]))
    return mpl.colormaps[name]


def new_figure(width: float, height: float):
    """A :class:`matplotlib.figure.Figure` of the given size (inches), constrained layout."""
    from matplotlib.figure import Figure

    return Figure(figsize=(width, height), layout="constrained")


def figure_format(path) -> str:
    """The matplotlib format of ``path`` from its suffix (png, svg or pdf)."""
    suffix = Path(path).suffix.lower()
    if suffix not in FIGURE_FORMATS:
        raise SteradianError(f"figure file {path}: unknown suffix {suffix or '(none)'!r}; use "
                             + ", ".join(FIGURE_FORMATS))
    return FIGURE_FORMATS[suffix]


def figure_bytes(fig, fmt: str = "png") -> bytes:
    """The figure as PNG, SVG or PDF bytes (SVG text is UTF-8; fonts drawn as paths)."""
    buf = io.BytesIO()
    with styled():
        meta = {"Date": None} if fmt in ("svg", "pdf") else {}
        if fmt == "pdf":
            meta = {"CreationDate": None, "ModDate": None}
        fig.savefig(buf, format=fmt, dpi=DPI, metadata=meta)
    return buf.getvalue()


def save_figure(fig, path) -> Path:
    """Write ``fig`` to ``path`` (PNG, SVG or PDF by suffix), atomically; returns the path."""
    fmt = figure_format(path)
    write_bytes(path, figure_bytes(fig, fmt))
    return Path(path)


def frequency_text(f: float) -> str:
    """A frequency with its SI prefix, to four significant digits (``9.41 GHz``)."""
    for scale, unit in ((1e12, "THz"), (1e9, "GHz"), (1e6, "MHz"), (1e3, "kHz")):
        if abs(f) >= scale:
            return f"{f / scale:.4g} {unit}"
    return f"{f:.4g} Hz"


TITLE_WIDTH = 78
"""Characters per title line: a longer design caption wraps at a comma."""


def title_lines(caption: str | None, what: str, width: int = TITLE_WIDTH) -> str:
    """The title: the design caption (name, frequency, scan, taper; wrapped after a comma
    when longer than ``width`` characters), then ``what``."""
    if not caption:
        return what
    lines, line = [], ""
    for part in caption.split(", "):
        if line and len(line) + 2 + len(part) > width:
            lines.append(line + ",")
            line = part
        else:
            line = f"{line}, {part}" if line else part
    return "\n".join([*lines, line, what])


def place_legend(ax, **kw):
    """A legend outside the plot area (below it), so it never covers data."""
    handles, labels = ax.get_legend_handles_labels()
    if not handles:
        return None
    ncol = kw.pop("ncol", min(len(handles), 2))
    return ax.legend(handles, labels, loc="upper center", bbox_to_anchor=(0.5, -0.16),
                     ncol=ncol, frameon=False, **kw)
