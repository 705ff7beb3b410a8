"""Pattern CSV files: principal cuts and u-v directivity maps, long format.

Cuts file (one row per sample, both cuts in one file)::

    # steradian pattern cuts
    # frequency_hz = 10000000000.0
    cut,angle_deg,theta_deg,phi_deg,directivity_dbi
    phi_plane,-90.0,...

u-v file (one row per visible grid point; points with u^2 + v^2 > 1 are left out)::

    # steradian u-v directivity map
    # hemisphere = front
    u,v,theta_deg,phi_deg,directivity_dbi
    -1.0,0.0,...

Numbers are written with Python's shortest round-trip representation, so reading a file back
returns the same floats. The cuts and maps themselves are computed by
:func:`steradian.metrics.principal_cuts` and :func:`steradian.patterns.uv_map`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..directions import unit_vectors_deg
from ..errors import FileFormatError, SteradianError, shown
from ..samples import Cut, UVMap
from .atomic import write_text
from .csv_table import check_columns, parse_float, read_table

__all__ = ["write_cuts", "read_cuts", "write_uv", "read_uv"]

_CUT_COLUMNS = ["cut", "angle_deg", "theta_deg", "phi_deg", "directivity_dbi"]
_UV_COLUMNS = ["u", "v", "theta_deg", "phi_deg", "directivity_dbi"]


def _fmt(x) -> str:
    return repr(float(x))


def _meta_lines(title: str, meta: dict | None) -> list[str]:
    lines = [f"# {title}"]
    for k, v in (meta or {}).items():
        v = str(v)
        if "\n" in v or "\r" in v:
            raise SteradianError(f"meta value of {shown(k)} must fit on one line")
        lines.append(f"# {k} = {v}")
    return lines


def write_cuts(path, cuts, meta: dict | None = None) -> None:
    """Write pattern cuts (e.g. :func:`steradian.metrics.principal_cuts`) atomically.

    Parameters
    ----------
    path : path-like
    cuts : sequence of Cut
        Each with ``name``, ``angle_deg``, ``theta_deg``, ``phi_deg``, ``directivity_dbi``.
    meta : dict, optional
        ``# key = value`` header lines (design name, frequency, ...).
    """
    lines = _meta_lines("steradian pattern cuts", meta)
    lines.append(",".join(_CUT_COLUMNS))
    for c in cuts:
        if "," in c.name or not c.name:
            raise SteradianError(f"cut name {shown(c.name)} must be non-empty and without commas")
        for a, t, p, d in zip(c.angle_deg, c.theta_deg, c.phi_deg, c.directivity_dbi,
                              strict=True):
            lines.append(f"{c.name},{_fmt(a)},{_fmt(t)},{_fmt(p)},{_fmt(d)}")
    write_text(path, "\n".join(lines) + "\n")


def read_cuts(path) -> list:
    """Read a cuts file back into :class:`steradian.metrics.Cut` objects (file order)."""
    path = Path(path)
    header, rows, hline, _ = read_table(path)
    col = check_columns(path, header, _CUT_COLUMNS, _CUT_COLUMNS, hline)
    if not rows:
        raise FileFormatError(path, "no rows after the header", hline)
    data: dict[str, list] = {}
    for lineno, f in rows:
        vals = [parse_float(path, lineno, c, f[col[c]]) for c in _CUT_COLUMNS[1:4]]
        vals.append(parse_float(path, lineno, "directivity_dbi", f[col["directivity_dbi"]],
                                allow_inf=True))
        data.setdefault(f[col["cut"]], []).append(vals)
    out = []
    for name, vals in data.items():
        a = np.array(vals)
        dirs = unit_vectors_deg(a[:, 1], a[:, 2])
        out.append(Cut(name, a[:, 0], dirs, a[:, 3], a[:, 1], a[:, 2]))
    return out


def write_uv(path, uvmap: UVMap, meta: dict | None = None) -> None:
    """Write a :class:`UVMap` atomically (visible points only)."""
    m = dict(meta or {})
    m.setdefault("hemisphere", "front" if uvmap.hemisphere == 1 else "back")
    m.setdefault("grid", f"{len(uvmap.u)} x {len(uvmap.v)}")
    lines = _meta_lines("steradian u-v directivity map", m)
    lines.append(",".join(_UV_COLUMNS))
    uu, vv = np.meshgrid(uvmap.u, uvmap.v, indexing="xy")
    s = np.hypot(uu, vv)
    # theta from arcsin |(u, v)|, not arccos w (directions.angles_deg): exact near the pole.
    theta = np.rad2deg(np.arcsin(np.clip(s, 0.0, 1.0)))
    if uvmap.hemisphere == -1:
        theta = 180.0 - theta
    phi = np.where(s > 0, np.rad2deg(np.arctan2(vv, uu)), 0.0)
    d = uvmap.directivity_dbi
    for iv in range(len(uvmap.v)):
        for iu in range(len(uvmap.u)):
            if np.isnan(d[iv, iu]):
                continue
            lines.append(f"{_fmt(uu[iv, iu])},{_fmt(vv[iv, iu])},{_fmt(theta[iv, iu])},"
                         f"{_fmt(phi[iv, iu])},{_fmt(d[iv, iu])}")
    write_text(path, "\n".join(lines) + "\n")


def read_uv(path) -> UVMap:
    """Read a u-v file back into a :class:`UVMap` (missing grid points become NaN)."""
    path = Path(path)
    header, rows, hline, comments = read_table(path)
    col = check_columns(path, header, _UV_COLUMNS, ("u", "v", "directivity_dbi"), hline)
    if not rows:
        raise FileFormatError(path, "no rows after the header", hline)
    pts = np.array([[parse_float(path, ln, "u", f[col["u"]]),
                     parse_float(path, ln, "v", f[col["v"]]),
                     parse_float(path, ln, "directivity_dbi", f[col["directivity_dbi"]],
                                 allow_inf=True)] for ln, f in rows])
    u = np.unique(pts[:, 0])
    v = np.unique(pts[:, 1])
    d = np.full((len(v), len(u)), np.nan)
    d[np.searchsorted(v, pts[:, 1]), np.searchsorted(u, pts[:, 0])] = pts[:, 2]
    hemi = 1
    for c in comments:
        if c.replace(" ", "") == "hemisphere=back":
            hemi = -1
    return UVMap(u, v, d, hemi)
