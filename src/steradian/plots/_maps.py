"""Pattern maps: u-v (with the lattice's grating-lobe diagram), theta-phi, az-el and 3-D.

Colour scales run from ``range_db`` below the analysis peak up to the analysis peak; the
beam, the worst sidelobe and predicted grating lobes are marked at the analysis's
directions (the ``metrics`` block of :func:`steradian.workflows.analyze_design`).
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np

from ._style import INK, new_figure, styled, title_lines

__all__ = ["uv_figure", "grating_diagram", "angle_map_figure", "pattern_3d_figure",
           "lattice_orders"]

_RING_DEG = (30, 60)


def _uv(theta_deg, phi_deg):
    t, p = np.deg2rad(theta_deg), np.deg2rad(phi_deg)
    return float(np.sin(t) * np.cos(p)), float(np.sin(t) * np.sin(p))


def _peak(peak_dbi, metrics, values):
    if peak_dbi is not None:
        return float(peak_dbi)
    if metrics and metrics.get("peak_directivity_dbi") is not None:
        return float(metrics["peak_directivity_dbi"])
    return float(np.nanmax(values))


def _marks(metrics, front: bool = True):
    """[(theta, phi, marker, label)] of the beam and the worst sidelobe."""
    out = []
    if metrics.get("beam_theta_deg") is not None:
        out.append((metrics["beam_theta_deg"], metrics["beam_phi_deg"], "P", "beam axis"))
    if metrics.get("psl_theta_deg") is not None:
        out.append((metrics["psl_theta_deg"], metrics["psl_phi_deg"], "v",
                    f"worst sidelobe {metrics['psl_db']:.2f} dB"))
    if front:
        out = [m for m in out if m[0] <= 90.0 + 1e-9]
    return out


def _mark(ax, x, y, marker, label):
    """The beam axis (white cross edged in ink) or the worst sidelobe (open ochre triangle),
    visible on dark and light colours alike."""
    if marker == "P":
        ax.plot([x], [y], "P", ms=11, mfc="white", mec=INK, mew=1.0, ls="none", label=label)
    else:
        ax.plot([x], [y], marker, ms=9, mfc="none", mec="#e8b43c", mew=2.0, ls="none",
                label=label)


def uv_figure(uvmap, *, peak_dbi: float | None = None, metrics: Mapping | None = None,
              lattice_uv=None, scan_uv=None, caption: str | None = None,
              range_db: float = 40.0):
    """Directivity over direction cosines u, v with the visible circle, theta rings, the
    beam, the worst sidelobe and the predicted grating lobes; with ``lattice_uv`` a second
    panel holds the lattice's grating-lobe diagram (:func:`grating_diagram`).

    Parameters
    ----------
    uvmap : UVMap
        :func:`steradian.patterns.uv_map`.
    peak_dbi : float, optional
        The analysis peak directivity: the top of the colour scale and the title's number.
    metrics : mapping, optional
        The analysis ``metrics`` block (beam, worst sidelobe, ``grating_lobes_predicted``).
    lattice_uv : array_like (K, 2), optional
        Grating-lobe orders lambda (p b1 + q b2) projected on u-v (:func:`lattice_orders`).
    scan_uv : array_like (B, 2), optional
        Scan directions (u, v) to show on the diagram (a beam table's beams).
    caption : str, optional
    range_db : float
        Colour range below the peak.
    """
    metrics = dict(metrics or {})
    d = np.asarray(uvmap.directivity_dbi, float)
    top = _peak(peak_dbi, metrics, d)
    with styled():
        fig = new_figure(10.4 if lattice_uv is not None else 6.4, 5.6)
        ax = fig.add_subplot(1, 2 if lattice_uv is not None else 1, 1)
        mesh = ax.pcolormesh(uvmap.u, uvmap.v, np.ma.masked_invalid(d), shading="nearest",
                             vmin=top - range_db, vmax=top, rasterized=True)
        _sine_space(ax, rings=True)
        front = getattr(uvmap, "hemisphere", 1) == 1
        for th, ph, mk, label in _marks(metrics, front):
            u, v = _uv(th, ph)
            _mark(ax, u, v, mk, label)
        gl = metrics.get("grating_lobes_predicted") or []
        if gl:
            ax.plot([g["u"] for g in gl], [g["v"] for g in gl], "D", ms=7, mfc="none",
                    mew=1.5, color="#e06a3b", ls="none",
                    label=f"predicted grating lobes ({len(gl)})")
        side = "front" if front else "back"
        ax.set_title(title_lines(caption, f"directivity over u-v, {side} hemisphere, "
                                          f"peak {top:.2f} dBi"))
        fig.colorbar(mesh, ax=ax, label="directivity (dBi)", shrink=0.85)
        if lattice_uv is not None:
            ax2 = fig.add_subplot(1, 2, 2)
            grating_diagram(ax2, lattice_uv, metrics, scan_uv)
        handles, labels = [], []
        for a in fig.axes:
            h, lab = a.get_legend_handles_labels()
            handles += h
            labels += lab
        if handles:
            fig.legend(handles, labels, loc="outside lower center", ncol=3, frameon=False)
    return fig


def _sine_space(ax, rings: bool):
    t = np.linspace(0, 2 * np.pi, 361)
    ax.plot(np.cos(t), np.sin(t), color=INK, lw=1.0)
    if rings:
        for th in _RING_DEG:
            s = np.sin(np.deg2rad(th))
            ax.plot(s * np.cos(t), s * np.sin(t), color="white", lw=0.6, alpha=0.7)
            ax.text(0.0, -s + 0.01, f"theta {th} deg", color="white", fontsize=7,
                    ha="center", va="bottom")
    ax.set_aspect("equal")
    ax.set_xlim(-1.05, 1.05)
    ax.set_ylim(-1.05, 1.05)
    ax.set_xlabel("u = sin(theta) cos(phi)")
    ax.set_ylabel("v = sin(theta) sin(phi)")
    ax.grid(False)


def lattice_orders(lattice, wavelength: float, reach: float = 2.5):
    """Grating-lobe orders lambda (p b1 + q b2), (p, q) != (0, 0), within ``reach`` of the
    origin of sine space, as u-v points (K, 2); None when the lattice is not in the x-y plane
    (its orders are not a u-v diagram).

    ``lattice``: the primitive vectors (rows, metres) of :attr:`steradian.geometry.Geometry.
    lattice`; b_i the reciprocal vectors of :func:`steradian.geometry.reciprocal_lattice`
    (Mailloux, ch. 2).
    """
    from ..geometry import reciprocal_lattice

    if lattice is None:
        return None
    L = np.atleast_2d(np.asarray(lattice, float))
    rec = reciprocal_lattice(L)
    if rec is None or np.any(np.abs(L[:, 2]) > 1e-9 * np.abs(L).max()):
        return None
    B = rec[0]
    lim = [int(np.ceil(reach * np.linalg.norm(a) / wavelength)) + 1 for a in L]
    pts = []
    for p in range(-lim[0], lim[0] + 1):
        for q in (range(-lim[1], lim[1] + 1) if len(L) == 2 else [0]):
            if p == 0 and q == 0:
                continue
            g = wavelength * (p * B[0] + (q * B[1] if len(L) == 2 else 0.0))
            if np.hypot(g[0], g[1]) <= reach:
                pts.append((g[0], g[1]))
    return np.asarray(pts, float).reshape(-1, 2)


def grating_diagram(ax, lattice_uv, metrics: Mapping | None = None, scan_uv=None):
    """The grating-lobe diagram in sine space: the visible circle, a unit circle about each
    grating-lobe order (a beam steered inside one has a visible grating lobe), the
    grating-lobe-free scan cone of the analysis and the scan directions.

    References
    ----------
    R. J. Mailloux, *Phased Array Antenna Handbook*, 3rd ed., Artech House, 2018, ch. 2.
    """
    metrics = dict(metrics or {})
    t = np.linspace(0, 2 * np.pi, 361)
    pts = np.asarray(lattice_uv, float).reshape(-1, 2)
    for i, (gu, gv) in enumerate(pts):
        ax.plot(gu + np.cos(t), gv + np.sin(t), color="#c0582f", lw=0.8, alpha=0.8,
                label="unit circles about the grating orders" if i == 0 else None)
        ax.plot([gu], [gv], ".", color="#c0582f", ms=4)
    ax.fill(np.cos(t), np.sin(t), color="#1f5f7a", alpha=0.08)
    ax.plot(np.cos(t), np.sin(t), color=INK, lw=1.3)
    free = metrics.get("grating_lobe_free_scan_deg")
    if free is not None and free > 0:
        s = np.sin(np.deg2rad(free))
        ax.plot(s * np.cos(t), s * np.sin(t), color="#5b8c3a", lw=1.4, ls="--",
                label=f"grating-lobe-free scan: {free:.1f} deg from normal")
    if scan_uv is not None:
        su = np.asarray(scan_uv, float).reshape(-1, 2)
        ax.plot(su[:, 0], su[:, 1], ".", color="#8a4f9e", ms=3, label="scan directions")
    elif metrics.get("beam_theta_deg") is not None:
        u, v = _uv(metrics["beam_theta_deg"], metrics["beam_phi_deg"])
        ax.plot([u], [v], "+", color=INK, ms=10, mew=1.8, label=None)
    ax.set_aspect("equal")
    ax.set_xlim(-2.2, 2.2)
    ax.set_ylim(-2.2, 2.2)
    ax.set_xlabel("u (sine space)")
    ax.set_ylabel("v (sine space)")
    ax.set_title("grating-lobe diagram of the lattice (beam +)", fontsize=9)


def angle_map_figure(a_deg, b_deg, directivity_dbi, *, kind: str = "theta_phi",
                     peak_dbi: float | None = None, metrics: Mapping | None = None,
                     caption: str | None = None, range_db: float = 40.0):
    """Directivity over a theta-phi or an az-el grid (the whole sphere).

    Parameters
    ----------
    a_deg, b_deg : array_like
        Columns and rows: phi and theta (``kind="theta_phi"``) or azimuth and elevation
        (``kind="az_el"``, :func:`steradian.directions.az_el_to_theta_phi`'s convention).
    directivity_dbi : array_like, shape (len(b_deg), len(a_deg))
    """
    from ..directions import unit_vectors_deg

    metrics = dict(metrics or {})
    d = np.asarray(directivity_dbi, float)
    top = _peak(peak_dbi, metrics, d)
    names = {"theta_phi": ("phi (deg)", "theta (deg)", "theta-phi"),
             "az_el": ("azimuth from +z toward +x (deg)", "elevation toward +y (deg)",
                       "azimuth-elevation")}
    xl, yl, what = names[kind]
    with styled():
        fig = new_figure(8.2, 5.0)
        ax = fig.add_subplot(1, 1, 1)
        mesh = ax.pcolormesh(a_deg, b_deg, d, shading="nearest", vmin=top - range_db,
                             vmax=top, rasterized=True)
        for th, ph, mk, label in _marks(metrics, front=False):
            if kind == "theta_phi":
                x, y = ph, th
            else:
                r = unit_vectors_deg(th, ph)
                x = float(np.rad2deg(np.arctan2(r[0], r[2])))
                y = float(np.rad2deg(np.arcsin(np.clip(r[1], -1, 1))))
            _mark(ax, x, y, mk, label)
        ax.set_xlabel(xl)
        ax.set_ylabel(yl)
        ax.set_xticks(np.arange(-180, 181, 45))
        ax.set_yticks(np.arange(0, 181, 30) if kind == "theta_phi" else np.arange(-90, 91, 30))
        if kind == "theta_phi":
            ax.invert_yaxis()
        ax.grid(True, color="white", alpha=0.25)
        ax.set_title(title_lines(caption, f"directivity over {what}, whole sphere, peak "
                                          f"{top:.2f} dBi"))
        fig.colorbar(mesh, ax=ax, label="directivity (dBi)", shrink=0.9)
        h, lab = ax.get_legend_handles_labels()
        if h:
            fig.legend(h, lab, loc="outside lower center", ncol=2, frameon=False)
    return fig


def pattern_3d_figure(theta_deg, phi_deg, directivity_dbi, *, peak_dbi: float | None = None,
                      caption: str | None = None, range_db: float = 30.0):
    """A 3-D view of the pattern: radius = level above ``range_db`` below the analysis peak
    (dB) in each direction, coloured by directivity (dBi). ``directivity_dbi`` has shape
    (len(theta_deg), len(phi_deg))."""
    from ..directions import unit_vectors_deg

    d = np.asarray(directivity_dbi, float)
    top = _peak(peak_dbi, None, d)
    t, p = np.meshgrid(theta_deg, phi_deg, indexing="ij")
    r = np.clip(d - (top - range_db), 0.0, None)
    xyz = unit_vectors_deg(t, p) * r[..., None]
    with styled():
        from matplotlib.colors import Normalize

        from ._style import sequential_cmap

        fig = new_figure(6.6, 6.0)
        ax = fig.add_subplot(1, 1, 1, projection="3d")
        norm = Normalize(top - range_db, top)
        cmap = sequential_cmap()
        ax.plot_surface(xyz[..., 0], xyz[..., 1], xyz[..., 2], facecolors=cmap(norm(d)),
                        rstride=1, cstride=1, linewidth=0, antialiased=False, shade=False)
        lim = max(float(np.abs(xyz).max()) * 1.05, 1.0)
        for axis_set in (ax.set_xlim, ax.set_ylim, ax.set_zlim):
            axis_set(-lim, lim)
        ax.set_box_aspect((1, 1, 1))
        ax.set_xlabel("x (dB above floor)")
        ax.set_ylabel("y (dB above floor)")
        ax.set_zlabel("z (dB above floor)")
        from matplotlib.cm import ScalarMappable

        fig.colorbar(ScalarMappable(norm=norm, cmap=cmap), ax=ax, shrink=0.6,
                     label="directivity (dBi)")
        ax.set_title(title_lines(caption, f"3-D pattern, radius = level above "
                                          f"{top - range_db:.1f} dBi, peak {top:.2f} dBi"))
    return fig
