r"""Scan-volume synthesis: one real amplitude taper for a whole set of beams.

A beam table steers one taper to every beam by phase: beam :math:`b` radiates the weights
:math:`w_b = \mathrm{diag}(e^{-jk\hat r_b\cdot r_n})\,x` with the real taper :math:`x`. Each
steered beam is linear in :math:`x` (its field at any direction, its main-beam field
:math:`\alpha_b\hat c^Tx`), and its radiated power is the quadratic form
:math:`x^TQ_{s,b}x`, :math:`Q_{s,b} = \Re\,T_b^H(Q+\delta I)T_b` (a different matrix per beam).
With elements of one orientation the main-beam rows of all beams are parallel
(:math:`c_b = \alpha_b\hat c`), so fixing :math:`\hat c^Tx = 1` fixes every beam's main-beam
field to :math:`\alpha_b`, and the directivity of beam :math:`b` is
:math:`4\pi\alpha_b^2/x^TQ_{s,b}x`. Maximising the worst beam's directivity under the
sidelobe limit at every beam is then the second-order cone program

.. math::
    \min_{x,t}\ t\quad\text{s.t.}\quad \hat c^Tx = 1,\quad
    \|L_b^Tx\|/|\alpha_b| \le t,\quad |E^b_i(x)| \le \tau|\alpha_b|,\quad x \ge 0,

(:math:`L_bL_b^T = Q_{s,b}`; :math:`i` over beam :math:`b`'s sidelobe samples), whose
optimum :math:`t^*` gives the worst-beam directivity :math:`4\pi/t^{*2}` exactly: the
epigraph form of a maximum of convex functions (Boyd and Vandenberghe 2004, 4.2.5 and 4.4.2).
With one beam it is :func:`~steradian.optimize.max_directivity` with amplitude weights (the
same minimiser), which for a line is the Dolph-Chebyshev taper (Dolph 1946).

The sidelobe samples of every beam are chosen adaptively as in
:func:`~steradian.optimize.max_directivity`: each beam is re-checked on its own dense grid
with the package's one lobe search (:mod:`steradian.optimize._check`), every local maximum
over its bound is added to that beam's samples, and the program is solved again until no
beam has one.

References
----------
H. Lebret and S. Boyd, "Antenna array pattern synthesis via convex optimization," *IEEE
Trans. Signal Process.* 45 (1997) 526-532.
S. Boyd and L. Vandenberghe, *Convex Optimization*, Cambridge University Press (2004).
C. L. Dolph, *Proc. IRE* 34 (1946) 335-348.
"""

from __future__ import annotations

import math
import time
from dataclasses import replace

import numpy as np

from ..array import Steering
from ..errors import SteradianError
from ..units import db10, from_db20
from ._assemble import assemble_scan
from ._check import check_family, field_magnitude
from ._conic import Infeasible
from ._diagnose import SynthesisInfeasible, diagnose
from ._levels import below_peak, halfwidths, hardware_limits, spacings
from ._problem import Rows, SidelobeFamily, make_setup
from ._report import array_with, finish
from ._result import SynthesisResult

__all__ = ["max_worst_directivity", "scan_directions"]

_PARALLEL_TOL = 1e-9


def scan_directions(directions) -> np.ndarray:
    """Scan directions as a (B, 2) array of (theta_deg, phi_deg), checked."""
    try:
        d = np.asarray(directions, float)
    except (TypeError, ValueError):
        raise SteradianError(f"scan directions must be [theta_deg, phi_deg] pairs, got "
                             f"{directions!r}") from None
    if d.ndim == 1 and d.size == 2:
        d = d[None, :]
    if d.ndim != 2 or d.shape[1] != 2 or len(d) == 0:
        raise SteradianError(f"scan directions must be a non-empty list of [theta_deg, "
                             f"phi_deg] pairs, got shape {d.shape}")
    if not np.all(np.isfinite(d)) or np.any((d[:, 0] < 0) | (d[:, 0] > 180)):
        raise SteradianError("scan directions need finite angles with theta_deg in [0, 180]")
    return d


def _setups(array, dirs, symmetry, loading):
    """One amplitude-only setup per beam, all with the same parametrisation of the taper,
    and each beam's main-beam scale alpha_b (c_b = alpha_b c_hat)."""
    mode = array.steering.mode if array.steering is not None else "phase"
    setups = []
    for t, p in dirs:
        arr = array.with_steering(Steering(float(t), float(p), mode))
        # the symmetry the first beam resolves holds for every beam (orbits of positions)
        sym = symmetry if not setups else setups[0].param.symmetry
        setups.append(make_setup(arr, "amplitude", sym, loading))
    c0 = setups[0].c0
    c_hat = c0 / np.linalg.norm(c0) * (1.0 if c0.sum() >= 0 else -1.0)
    alphas = []
    for i, s in enumerate(setups):
        a = float(s.c0 @ c_hat)
        if abs(a) <= 0 or np.linalg.norm(s.c0 - a * c_hat) > _PARALLEL_TOL * np.linalg.norm(
                s.c0):
            raise SteradianError(
                f"scan-volume synthesis needs elements that all see scan direction {i} "
                f"(theta {dirs[i, 0]:g}, phi {dirs[i, 1]:g} deg) alike (one orientation, "
                "radiating there); this layout's elements do not")
        alphas.append(a)
    return setups, np.array(alphas)


def _solve(setups, alphas, families, tau, nonneg, dr, tol_db, max_rounds):
    """The adaptive loop: solve, re-check every beam densely, add its violations, repeat."""
    rowsets = []
    for s, f in zip(setups, families, strict=True):
        rs = []
        if f is not None:
            rs.append(Rows(f, s))
            rs[0].add(f.coarse())
        rowsets.append(rs)
    tol = from_db20(tol_db) - 1
    rnd = 0
    while rnd < max_rounds:
        rnd += 1
        prog, P, q = assemble_scan(setups, rowsets, alphas, tau=tau, nonneg=nonneg,
                                   dr_lin=dr)
        z, info = prog.solve(P, q)
        x = z[: setups[0].n]
        added = 0
        for s, rs in zip(setups, rowsets, strict=True):
            if not rs:
                continue
            arr = array_with(s, s.weights(x))
            e0 = field_magnitude(arr, s.r0[None, :])[0]
            chk = check_family(arr, rs[0].family, e0, tau)
            added += rs[0].add(chk["dirs"][chk["ratio"] > 1 + tol])
        if added == 0:
            break
    return x, info, rnd, sum(len(r) for rs in rowsets for r in rs)


def max_worst_directivity(array, directions, *, psl_db: float | None = None, mainlobe=None,
                          weights: str = "amplitude", symmetry: str = "auto",
                          nonnegative: bool = True, dynamic_range_db: float | None = None,
                          loading: float = 1e-5, tol_db: float = 0.01, max_rounds: int = 30,
                          oversample: float | None = None,
                          dense_oversample: float | None = None) -> SynthesisResult:
    r"""One amplitude taper maximising the worst directivity over a set of scan directions,
    with the peak sidelobe limit held at every one of them.

    The formulation and its references: :mod:`steradian.optimize._scan`. Every beam is the
    taper steered by phase (``array.steering.mode`` is kept; the array's own steering
    direction is not one of the beams unless listed).

    Parameters
    ----------
    array : Array
    directions : array_like, shape (B, 2)
        (theta_deg, phi_deg) of each beam of the scan set (e.g. a beam table's directions).
    psl_db : float, optional
        Peak sidelobe level (negative dB below each beam's main-beam field) outside each
        beam's main-lobe zone.
    mainlobe, symmetry, nonnegative, dynamic_range_db, loading, tol_db, max_rounds,
    oversample, dense_oversample
        As in :func:`~steradian.optimize.max_directivity` (the main-lobe zone is taken about
        each beam's direction).
    weights : {"amplitude"}
        A scan-volume taper is an amplitude taper (complex weights are not one taper for
        every beam).

    Returns
    -------
    SynthesisResult
        ``method = "max_worst_directivity"``; ``array`` is the input array with the taper
        (its own steering kept); the headline figures are those of the worst beam (lowest
        directivity; highest PSL and margin over all beams; ``met`` when every beam meets the
        limit on its dense re-check); ``beams`` has each beam's figures.

    Raises
    ------
    SynthesisInfeasible
        No taper meets the limit at every beam; the causes found beam by beam.
    """
    t_start = time.perf_counter()
    if weights != "amplitude":
        raise SteradianError(f"scan-volume synthesis designs one amplitude taper for every "
                             f"beam: weights must be 'amplitude', got {weights!r}")
    level_db = below_peak("psl_db", psl_db)
    dr, _ = hardware_limits(dynamic_range_db, None, tol_db, max_rounds)
    dirs = scan_directions(directions)
    setups, alphas = _setups(array, dirs, symmetry, loading)
    coarse, dense = spacings(setups[0], oversample, dense_oversample)
    tau = None if level_db is None else from_db20(level_db)
    hs = [None if tau is None else halfwidths(s, mainlobe, tau) for s in setups]
    families = [None if h is None else SidelobeFamily(s, h, True, None, coarse, dense)
                for s, h in zip(setups, hs, strict=True)]
    try:
        x, info, rounds, samples = _solve(setups, alphas, families, tau, nonnegative, dr,
                                          tol_db, int(max_rounds))
    except Infeasible as exc:
        raise _infeasible(exc, setups, families, dirs, tau, hs, dynamic_range_db,
                          nonnegative) from None
    cert = {k: info[k] for k in ("status", "iterations", "primal_objective", "dual_objective",
                                 "relative_gap", "seconds", "constraints", "variables")}
    if info["dual_objective"] > 0:
        cert["worst_directivity_bound_dbi"] = db10(4 * math.pi / info["dual_objective"] ** 2)
    cert["loading"] = setups[0].loading
    per = [finish(s, s.weights(x), method="max_worst_directivity",
                  families=[] if f is None else [f], nulls=[], h=h, dense_spacing=dense,
                  tol_db=tol_db, limit_db=level_db, certificate=cert, rounds=rounds,
                  samples=samples, notes=[], t_start=t_start, psl_limit=tau)
           for s, f, h in zip(setups, families, hs, strict=True)]
    return _combine(array, per, dirs, t_start)


def _combine(array, per, dirs, t_start) -> SynthesisResult:
    """The headline result: the taper on the input array, the worst beam's figures."""
    taper = per[0].array.taper
    arr = array.with_taper(taper / np.max(np.abs(taper)))
    worst = min(range(len(per)), key=lambda i: per[i].directivity_dbi)
    spsl = max(range(len(per)), key=lambda i: -np.inf if per[i].psl_db is None
               else per[i].psl_db)
    beams = [{"theta_deg": float(t), "phi_deg": float(p), "directivity_dbi": r.directivity_dbi,
              "psl_db": r.psl_db,
              "psl_direction_deg": list(r.psl_direction) if r.psl_direction else None,
              "margin_db": r.margin_db, "met": r.met}
             for (t, p), r in zip(dirs, per, strict=True)]
    notes = []
    for i, r in enumerate(per):
        notes += [f"beam {i} (theta {dirs[i, 0]:g}, phi {dirs[i, 1]:g} deg): {n}"
                  for n in r.notes]
    bound = per[worst].certificate.get("worst_directivity_bound_dbi")
    return replace(per[worst], array=arr, weights=arr.weights(), psl_db=per[spsl].psl_db,
                   psl_direction=per[spsl].psl_direction,
                   margin_db=max(r.margin_db for r in per), met=all(r.met for r in per),
                   notes=notes, beams=beams, seconds=time.perf_counter() - t_start,
                   path="conic", bound_dbi=bound,
                   gap_db=None if bound is None else bound - per[worst].directivity_dbi)


def _infeasible(exc, setups, families, dirs, tau, hs, dr_db, nonneg):
    """The causes found for each beam on its own, named by beam."""
    causes = []
    for i, (s, f, h) in enumerate(zip(setups, families, hs, strict=True)):
        for c in diagnose(s, [] if f is None else [f], [], tau, h, dr_db, None, nonneg):
            causes.append(f"beam {i} (theta {dirs[i, 0]:g}, phi {dirs[i, 1]:g} deg): {c}")
    msg = ("infeasible: no one amplitude taper meets the constraints at every scan direction ("
           + exc.status + "); likely cause: " + "; ".join(causes))
    return SynthesisInfeasible(msg, causes, exc.status)
