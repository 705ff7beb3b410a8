"""The metric functions, one per metric, and the registry :func:`pattern_metrics` iterates.

To add a metric: write ``def my_metric(ctx: Context) -> dict`` returning its fields, decorate
it with ``@metric("my_metric", "field_a", "field_b")``, and add the fields to
:class:`~steradian.metrics.PatternMetrics` (``to_dict`` follows the fields by itself).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..directions import angle_between_deg, angles_deg
from ..radiation import peak_directivity
from ._beam import plane_widths, rel_db
from ._context import PRINCIPAL_RADIALS, Context
from ._grating import grating_prediction

__all__ = ["Metric", "METRICS", "metric", "MAX_REPORTED"]

MAX_REPORTED = 8
"""Sidelobes listed in the result."""


@dataclass(frozen=True)
class Metric:
    """A registered metric: its name, the :class:`PatternMetrics` fields it fills, and the
    function ``compute(ctx) -> {field: value}``."""

    name: str
    fields: tuple[str, ...]
    compute: Callable[[Context], dict]


METRICS: list[Metric] = []
"""The registered metrics, in the order they are computed and reported."""


def metric(name: str, *fields: str):
    """Decorator registering ``fn(ctx) -> dict`` as the metric ``name`` filling ``fields``."""
    def register(fn):
        METRICS.append(Metric(name, tuple(fields), fn))
        return fn
    return register


@metric("beam", "peak_directivity_dbi", "beam_theta_deg", "beam_phi_deg")
def beam(ctx: Context) -> dict:
    """Directivity at the beam axis and the axis direction."""
    th, ph = angles_deg(ctx.r0)
    return {"peak_directivity_dbi": ctx.beam.dbi(1.0), "beam_theta_deg": th,
            "beam_phi_deg": ph}


@metric("beamwidths", "planes")
def beamwidths(ctx: Context) -> dict:
    """HPBW and FNBW in the two principal cuts (radials 0, 1/4, 1/2, 3/4 of the march)."""
    hp, null = ctx.radials
    i0, i1, i2, i3 = PRINCIPAL_RADIALS
    return {"planes": (plane_widths("phi_plane", hp[i0], hp[i2], null[i0], null[i2]),
                       plane_widths("cross_plane", hp[i1], hp[i3], null[i1], null[i3]))}


@metric("sidelobes", "psl_db", "psl_theta_deg", "psl_phi_deg", "sidelobes", "islr_db",
        "main_lobe_power_fraction", "main_lobe_model")
def sidelobes(ctx: Context) -> dict:
    """Peak sidelobe level and direction, the highest sidelobes, ISLR and the main lobe."""
    _, p_main, model, _ = ctx.main_lobe
    lobes = ctx.outside_lobes
    p_rad = ctx.peak.power.value
    out = {"psl_db": None, "psl_theta_deg": None, "psl_phi_deg": None,
           "sidelobes": tuple(lobes[:MAX_REPORTED]),
           "islr_db": None if not lobes else rel_db(max(p_rad - p_main, 0.0) / p_main),
           "main_lobe_power_fraction": float(min(p_main / p_rad, 1.0)),
           "main_lobe_model": model}
    if lobes:
        out.update(psl_db=lobes[0].level_db, psl_theta_deg=lobes[0].theta_deg,
                   psl_phi_deg=lobes[0].phi_deg)
    else:
        ctx.notes.append("no direction lies outside the main lobe: no sidelobes")
    return out


@metric("grating_lobes", "lattice", "grating_lobes_predicted", "grating_lobe_free_scan_deg",
        "grating_lobe_free_scan_phi_plane_deg", "grating_lobes_found")
def grating_lobes(ctx: Context) -> dict:
    """Grating lobes predicted from the lattice, and lobes found within
    ``grating_lobe_db`` of the peak outside the main lobe."""
    predicted, free_deg, free_plane_deg = grating_prediction(ctx.array, ctx.frequency, ctx.beam)
    found = tuple(lb for lb in ctx.outside_lobes if lb.level_db >= -ctx.grating_lobe_db)
    return {"lattice": ctx.array.geometry.lattice is not None,
            "grating_lobes_predicted": predicted, "grating_lobe_free_scan_deg": free_deg,
            "grating_lobe_free_scan_phi_plane_deg": free_plane_deg,
            "grating_lobes_found": found}


@metric("pointing", "pointing_error_deg")
def pointing(ctx: Context) -> dict:
    """Angle between the beam axis (a difference beam's null) and the steering direction
    (None when unsteered)."""
    st = ctx.array.steering
    axis = ctx.r0 if ctx.difference is None else ctx.difference.null
    return {"pointing_error_deg": None if st is None
            else float(angle_between_deg(axis, st.unit))}


@metric("difference", "beam_kind", "boresight_null_db", "difference_peak_dbi",
        "difference_lobes", "difference_sidelobe_db", "difference_slope_per_deg",
        "monopulse_slope_per_deg")
def difference(ctx: Context) -> dict:
    """Boresight null depth, the two difference lobes, the difference sidelobe level and the
    difference and monopulse slopes (None for a sum beam)."""
    d = ctx.difference
    out = {"beam_kind": ctx.beam_kind, "boresight_null_db": None,
           "difference_peak_dbi": None, "difference_lobes": (),
           "difference_sidelobe_db": None, "difference_slope_per_deg": None,
           "monopulse_slope_per_deg": None}
    if d is None:
        return out
    g_pk = float(d.peak_g.max())
    side = ctx.outside
    per_deg = np.pi / 180.0
    out.update(
        boresight_null_db=rel_db(d.boresight_g / g_pk),
        difference_peak_dbi=ctx.beam.dbi(g_pk),
        difference_lobes=tuple(ctx.beam.lobe(p, gv) for p, gv in zip(d.peaks, d.peak_g,
                                                                       strict=True)),
        difference_sidelobe_db=rel_db(side[0][1] / g_pk) if side else None,
        difference_slope_per_deg=d.slope_per_rad * per_deg,
        monopulse_slope_per_deg=d.slope_per_rad * per_deg / 10 ** (d.sum_reference_dbi / 20))
    return out


@metric("front_to_back", "front_to_back_db", "front_to_back_hemisphere_db")
def front_to_back(ctx: Context) -> dict:
    """U0 / U(-r0), and U0 over the largest U more than 90 degrees from the beam axis."""
    back = ctx.back
    rear_max = max([back] + [f for _, f in ctx.rear])
    return {"front_to_back_db": 0.0 - rel_db(back),
            "front_to_back_hemisphere_db": 0.0 - rel_db(rear_max)}


@metric("scan_loss", "scan_loss_db", "unsteered_peak_directivity_dbi")
def scan_loss(ctx: Context) -> dict:
    """Peak directivity minus that of the same array unsteered (0 when unsteered)."""
    if ctx.array.steering is None:
        return {"scan_loss_db": 0.0,
                "unsteered_peak_directivity_dbi": float(ctx.peak.directivity_dbi)}
    bare, f, ap = ctx.array.with_steering(None), ctx.frequency, ctx.aperture
    un = (peak_directivity(bare, frequency=f) if ap is None else
          ap.memo("unsteered peak", bare,
                  lambda: peak_directivity(bare, frequency=f, aperture=ap)))
    return {"scan_loss_db": float(ctx.beam.dbi(1.0) - un.directivity_dbi),
            "unsteered_peak_directivity_dbi": float(un.directivity_dbi)}
