"""Why a convex synthesis problem is infeasible: the likely causes, named for the user."""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from ..directions import angles_deg, unit_vectors_deg
from ..errors import SteradianError
from ..geometry import reciprocal_lattice
from ..units import db10, db20
from ._check import field_magnitude
from ._frame import chebyshev_crossing
from ._problem import Setup, SidelobeFamily

__all__ = ["SynthesisInfeasible", "diagnose", "infeasible"]


class SynthesisInfeasible(SteradianError):
    """No weights meet the constraints; ``causes`` lists the likely reasons found."""

    def __init__(self, message: str, causes: list[str], status: str = ""):
        self.causes = causes
        self.status = status
        super().__init__(message)


def diagnose(setup: Setup, families, nulls, level, h, dr_db, wng_min_db, nonneg):
    causes = []
    fr = setup.frame
    uni = replace(setup.array, taper=np.ones(setup.array.n, complex))
    e0 = field_magnitude(uni, setup.r0[None, :])[0]
    for fam in families:
        if not isinstance(fam, SidelobeFamily):
            continue
        d = fam.dense()
        coef, fixed = fam.bounds(d)
        out = (coef > 0) | np.isfinite(fixed)
        if np.any(out):
            v = field_magnitude(uni, d[out])
            i = int(np.argmax(v))
            if v[i] >= 0.98 * e0:
                th, ph = angles_deg(d[out][i])
                causes.append(f"a grating lobe at theta={th:.1f}, phi={ph:.1f} deg lies in the "
                              "sidelobe region: no taper can lower it (reduce the spacing or "
                              "the scan angle, or exclude it from the region)")
    if level is not None:
        causes += _grating_skirts(setup, families, level, uni, e0)
    if level is not None and h is not None:
        for i in range(fr.rank):
            n = max(int(round(fr.lengths[i] / fr.spacing)), 2)
            need = chebyshev_crossing(level, n, fr.lengths[i] / n / setup.wavelength)
            if h[i] < need:
                causes.append(
                    f"the main-lobe zone half-width {h[i]:.4g} (direction cosines, axis "
                    f"{i + 1}) is narrower than the narrowest main lobe that reaches "
                    f"{db20(level):.1f} dB for this aperture (Dolph-Chebyshev: "
                    f"{need:.4g}); widen mainlobe or raise the level")
    for nl in nulls:
        u = unit_vectors_deg(nl.theta_deg, nl.phi_deg)
        for fam in families:
            if isinstance(fam, SidelobeFamily) and fam.in_zone(u[None, :])[0]:
                causes.append(f"the null at theta={nl.theta_deg:g}, phi={nl.phi_deg:g} deg lies "
                              "inside the main-lobe zone")
                break
    exact = sum(1 for nl in nulls if nl.depth_db is None)
    if exact * (1 if setup.param.symmetry != "none" else 2) >= setup.n:
        causes.append(f"{exact} exact nulls leave no freedom for {setup.n} real unknowns")
    ne = len(setup.enabled)
    if wng_min_db is not None and wng_min_db > db10(ne) + 1e-9:
        causes.append(f"white-noise gain cannot exceed {db10(ne):.2f} dB "
                      f"(N = {ne}); wng_min_db={wng_min_db:g}")
    if dr_db is not None:
        causes.append(f"the amplitude dynamic range limit of {dr_db:g} dB may be too tight for "
                      "the other constraints")
    if nonneg and setup.param.weights == "amplitude":
        causes.append("amplitude-only weights are held non-negative (nonnegative=True)")
    for fam in families:
        if isinstance(fam, SidelobeFamily) and fam.mask is not None:
            causes.append("the mask may be lower, near the main lobe, than this aperture can "
                          f"reach ({fam.mask.description})")
    if not causes:
        causes.append("the constraints conflict: the level may be lower than this layout "
                      "reaches outside the main-lobe zone (widen mainlobe or raise the level)")
    return causes


def _grating_skirts(setup: Setup, families, level, uni, e0) -> list[str]:
    """Grating lobes just outside visible space whose main lobe reaches into it.

    A grating lobe at transverse direction cosines s (|s| > 1, so "0 predicted visible")
    is a copy of the main beam; its main lobe spans, at the sidelobe ``level``, at least the
    Dolph-Chebyshev half-width about s (the narrowest any taper allows, Dolph 1946). When
    |s| - 1 is smaller, the skirt near the horizon in the direction of s lies above the level
    for every taper: a high lobe near the horizon whose cause is the invisible grating lobe.
    Grating-lobe positions: s = s0 + lambda (p b1 + q b2) with b the reciprocal lattice
    (R. J. Mailloux, Phased Array Antenna Handbook, 3rd ed., 2018, ch. 2).
    """
    L = setup.array.geometry.lattice
    fr = setup.frame
    if L is None or fr.rank > 2:
        return []
    L = np.asarray(L, float)
    rec = reciprocal_lattice(L)
    if rec is None:
        return []
    B, P = rec
    lam = setup.wavelength
    s0 = P @ setup.r0
    E = fr.axes[:, : fr.rank]
    need = np.array([chebyshev_crossing(level, max(int(round(fr.lengths[i] / fr.spacing)), 2),
                                        fr.spacing / lam) for i in range(fr.rank)])
    perp = setup.r0 - s0
    nrm = perp / np.linalg.norm(perp) if np.linalg.norm(perp) > 1e-9 else fr.axes[:, -1]
    out = []
    qs = range(-2, 3) if len(L) == 2 else (0,)
    for p in range(-2, 3):
        for q in qs:
            if p == q == 0:
                continue
            sv = s0 + lam * (p * B[0] + (q * B[1] if len(L) == 2 else 0.0))
            r = float(np.linalg.norm(sv))
            if r <= 1.0:
                continue
            e = sv / r
            width = 1.0 / float(np.sqrt(np.sum(((e @ E) / need) ** 2)))
            if r - 1.0 >= width:
                continue
            rho = np.linspace(max(r - width, 0.0), 1.0, 16)[1:-1]
            d = rho[:, None] * e + np.sqrt(1.0 - rho**2)[:, None] * nrm
            if not any(isinstance(f, SidelobeFamily) and np.any(f.bounds(d)[0] > 0)
                       for f in families):
                continue
            v = field_magnitude(uni, d) / e0
            j = int(np.argmax(v))
            th, ph = angles_deg(d[j])
            u = sv @ E
            where = ", ".join(f"{x:.3f}" for x in u)
            out.append(
                f"a grating lobe just outside visible space (direction cosines ({where}) along "
                f"the array axes, {r - 1:.3f} beyond the horizon) reaches into it: its main "
                f"lobe, at least {width:.3f} wide at {db20(level):.1f} dB for any taper "
                f"(Dolph-Chebyshev), makes the lobe near theta={th:.1f}, phi={ph:.1f} deg "
                f"({db20(v[j]):.1f} dB with uniform weights); reduce the spacing or the scan "
                "angle, or exclude that region")
    return out


def infeasible(exc, setup, families, nulls, level, h, dr_db, wng_min_db, nonneg):
    causes = diagnose(setup, families, nulls, level, h, dr_db, wng_min_db, nonneg)
    msg = "infeasible: no weights meet the constraints (" + exc.status + "); likely cause: " \
        + "; ".join(causes)
    return SynthesisInfeasible(msg, causes, exc.status)
