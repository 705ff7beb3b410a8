"""Grating lobes predicted from the lattice and the scan (see :mod:`steradian.metrics`).

References
----------
R. J. Mailloux, *Phased Array Antenna Handbook*, 3rd ed., Artech House, 2018, ch. 2
(grating lobes of rectangular and triangular lattices).
"""

from __future__ import annotations

import numpy as np

from ..directions import angles_deg
from ..geometry import reciprocal_lattice
from ..patterns import cut_frame
from ._beam import Beam, rel_db
from ._results import GratingLobe

__all__ = ["grating_prediction", "MAX_PREDICTED"]

MAX_PREDICTED = 100
"""Predicted grating lobes listed."""


def grating_prediction(array, frequency, beam: Beam):
    """Predicted grating lobes, free scan cone and free scan in the phi plane (degrees)."""
    L = array.geometry.lattice
    if L is None:
        return None, None, None
    L = np.asarray(L, float)
    rec = reciprocal_lattice(L)
    if rec is None:
        return None, None, None
    B, P = rec  # rows b_i with b_i . a_j = delta_ij; projector onto the lattice span
    lam = 2 * np.pi / array.k(frequency)
    if array.steering is None:
        s0 = np.zeros(3)
    else:
        ratio = 1.0 if array.steering.mode == "delay" else array.k() / array.k(frequency)
        s0 = ratio * (P @ array.steering.unit)
    r0 = beam.r0
    if len(L) == 2:
        nrm = np.cross(L[0], L[1])
        nrm /= np.linalg.norm(nrm)
        if r0 @ nrm < -1e-12 or (abs(r0 @ nrm) <= 1e-12 and nrm[2] < 0):
            nrm = -nrm
    else:
        perp = r0 - P @ r0
        nrm = perp / np.linalg.norm(perp) if np.linalg.norm(perp) > 1e-9 else cut_frame(
            L[0] / np.linalg.norm(L[0]))[0]
    lim = [int(np.floor(2 * np.linalg.norm(a) / lam)) + 1 for a in L]
    qs = range(-lim[1], lim[1] + 1) if len(L) == 2 else [0]
    lobes = []
    shortest = np.inf
    # Scan direction of the phi plane in the lattice plane: the projected beam axis, or at
    # broadside the projected cut-0 tangent.
    e_hat = None
    for t in (P @ r0, P @ beam.t0):
        if np.linalg.norm(t) > 1e-9:
            e_hat = t / np.linalg.norm(t)
            break
    free_plane = 1.0
    for p in range(-lim[0], lim[0] + 1):
        for q in qs:
            if p == 0 and q == 0:
                continue
            g = lam * (p * B[0] + (q * B[1] if len(L) == 2 else 0.0))
            gn = float(np.linalg.norm(g))
            shortest = min(shortest, gn)
            if e_hat is not None:
                bq, cq = float(e_hat @ g), gn**2 - 1.0
                disc = bq**2 - cq
                if disc >= 0:
                    roots = [x for x in (-bq - np.sqrt(disc), -bq + np.sqrt(disc)) if x >= 0]
                    if cq <= 0:
                        roots = [0.0]
                    if roots:
                        free_plane = min(free_plane, min(roots))
            s = s0 + g
            sn = float(np.linalg.norm(s))
            if sn <= 1.0 + 1e-12:
                d = s + np.sqrt(max(1.0 - sn**2, 0.0)) * nrm
                d /= np.linalg.norm(d)
                th, ph = angles_deg(d)
                lobes.append(GratingLobe(p, q, th, ph, float(d[0]),
                                         float(d[1]), rel_db(beam.g(d[None, :])[0])))
    lobes.sort(key=lambda x: (-x.level_db, abs(x.p) + abs(x.q)))
    free = shortest - 1.0
    free_deg = None if free < 0 else float(np.rad2deg(np.arcsin(min(free, 1.0))))
    if len(L) == 1:  # a line: every scan plane containing the axis is the same
        fp_deg = free_deg
    else:
        fp_deg = None if e_hat is None else float(np.rad2deg(np.arcsin(min(free_plane, 1.0))))
    return tuple(lobes[:MAX_PREDICTED]), free_deg, fp_deg
