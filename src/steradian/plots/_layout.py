"""The element layout coloured by excitation amplitude and phase (or by hardware state)."""

from __future__ import annotations

import numpy as np

from ._style import INK, new_figure, styled, title_lines

__all__ = ["layout_figure", "layout_plane"]


def layout_plane(positions):
    """In-plane coordinates (N, 2) to draw a layout, their axis labels, and whether the
    layout was flattened by unrolling a cylinder.

    A layout in a plane of constant z is drawn in x, y; any other planar layout in its own
    principal axes; a layout around the z axis (a cylinder or cone: all points well off the
    axis) is unrolled to (azimuth arc on the mean radius, z); anything else in x, y."""
    from ..geometry import principal_axes

    pos = np.asarray(positions, float)
    span = float(np.ptp(pos, axis=0).max()) or 1.0
    if np.ptp(pos[:, 2]) <= 1e-9 * span:
        return pos[:, :2], ("x (m)", "y (m)"), False
    pa = principal_axes(pos)
    if pa.dimension <= 2:
        c = pos - pos.mean(axis=0)
        return np.column_stack([c @ pa.axes[0], c @ pa.axes[1]]), \
            ("along the layout's first axis (m)", "along its second axis (m)"), False
    rho = np.hypot(pos[:, 0], pos[:, 1])
    if rho.min() > 0.2 * rho.max() > 0:
        az = np.arctan2(pos[:, 1], pos[:, 0])
        return np.column_stack([az * rho.mean(), pos[:, 2]]), \
            ("arc around z at the mean radius (m), from +x", "z (m)"), True
    return pos[:, :2], ("x (m)", "y (m)"), False


def layout_figure(positions, weights, *, enabled=None, states=None, state_label: str = "",
                  state_cyclic: bool = False, caption: str | None = None):
    """Element positions coloured by excitation amplitude (dB re the largest) and phase
    (deg), and optionally by a hardware state per element (a beam's phase codes).

    Parameters
    ----------
    positions : array_like (N, 3)
        Metres.
    weights : array_like (N,)
        Complex excitations (e.g. :meth:`steradian.array.Array.weights`: taper with steering).
    enabled : array_like (N,) of bool, optional
        Disabled elements are drawn as grey crosses.
    states : array_like (N,), optional
        A third panel coloured by these values (e.g. phase codes of one beam).
    state_label : str
        Colour-bar label of ``states``.
    state_cyclic : bool
        The states wrap around (phase codes): a cyclic colour map.
    caption : str, optional

    Returns
    -------
    Figure
        Panel k holds one scatter whose colours are the plotted values: amplitude (dB),
        phase (deg), state.
    """
    xy, (xl, yl), unrolled = layout_plane(positions)
    w = np.asarray(weights, complex)
    on = np.ones(len(w), bool) if enabled is None else np.asarray(enabled, bool)
    amp = np.abs(w)
    ref = amp[on].max() if np.any(on) and amp[on].max() > 0 else 1.0
    amp_db = np.round(20 * np.log10(np.maximum(amp / ref, 1e-6)), 9) + 0.0
    phase = np.rad2deg(np.angle(w))
    low = float(amp_db[on].min()) if np.any(on) else -60.0
    panels = [(amp_db, "amplitude (dB re largest)", None,
               (max(min(np.floor(low), -1.0), -60.0), 0.0)),
              (phase, "phase (deg)", "twilight", (-180.0, 180.0))]
    if states is not None:
        s = np.asarray(states, float)
        panels.append((s, state_label or "state", "twilight" if state_cyclic else "cividis",
                       (np.nanmin(s), np.nanmax(s))))
    ext = np.ptp(xy, axis=0)
    aspect = float(ext[1] / ext[0]) if ext[0] > 0 else 1.0
    size = float(np.clip(9000.0 / max(len(w), 1), 8.0, 110.0))
    with styled():
        fig = new_figure(4.2 * len(panels) + 0.4, 2.4 + 3.2 * min(max(aspect, 0.35), 1.3))
        for k, (vals, label, cmap, (lo, hi)) in enumerate(panels):
            ax = fig.add_subplot(1, len(panels), k + 1)
            sc = ax.scatter(xy[on, 0], xy[on, 1], c=vals[on], s=size, cmap=cmap, vmin=lo,
                            vmax=hi if hi > lo else lo + 1.0, edgecolors=INK,
                            linewidths=0.3)
            if not np.all(on):
                ax.scatter(xy[~on, 0], xy[~on, 1], marker="x", s=size, color="#8d969c",
                           label=f"{int((~on).sum())} disabled")
                ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.0), frameon=False,
                          fontsize=7)
            ax.set_aspect("equal" if not unrolled else "auto")
            ax.set_xlabel(xl)
            ax.set_ylabel(yl)
            fig.colorbar(sc, ax=ax, label=label, shrink=0.85, location="bottom")
            ax.grid(True, alpha=0.2)
        n_on = int(on.sum())
        fig.suptitle(title_lines(caption, f"element layout: {len(w)} elements ({n_on} "
                                          "enabled), excitation with steering"), fontsize=9,
                     color=INK)
    return fig
