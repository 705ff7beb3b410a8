r"""Convex synthesis: maximum directivity with sidelobe, mask, null and hardware constraints,
and its dual, the lowest peak sidelobe level for a directivity budget.

Formulation (the weights split into real unknowns, :math:`w = Tx`, see
:mod:`steradian.optimize._frame`):

.. math::
    \min_x\ x^T Q_s x \quad\text{s.t.}\quad c_0^T x = 1,\quad
    |E_i(x)| \le b_i \ \ (i \in \text{samples}),\quad E_j(x) = 0 \ \ (\text{nulls}),

with :math:`Q_s = \Re\,T^H(Q + \delta I)T` the (diagonally loaded) radiated-power matrix,
:math:`c_0^T x` the field toward the beam direction (so the objective is
:math:`4\pi/D`), :math:`|E_i|` a second-order cone (or, when the field is real up to a fixed
phase, two linear inequalities). Amplitude dynamic range is convex for amplitude-only
tapers (:math:`t/\rho \le x_j \le t`); for complex weights its lower bound is not, and is
replaced by its linearisation about the previous iterate's phases
(:math:`\Re(\bar{\hat w}_n w_n)/|\hat w_n| \ge t/\rho`), an inner approximation: every iterate
meets the true bound. A white-noise-gain floor is :math:`\sum_n g_n|w_n|^2 \le 1/G_{min}`.

The sidelobe region is sampled adaptively: solve on a coarse grid, re-check the pattern on a
shifted dense grid with off-grid refinement, add every local maximum that exceeds its bound by
more than the tolerance, and solve again, until none does.

References
----------
H. Lebret and S. Boyd, "Antenna array pattern synthesis via convex optimization," *IEEE
Trans. Signal Process.* 45 (1997) 526-532.
C. L. Dolph, *Proc. IRE* 34 (1946) 335-348 (the optimum the line-array case reproduces).
H. Cox, R. Zeskind and T. Kooij, "Practical supergain," *IEEE Trans. Acoust., Speech, Signal
Process.* 34 (1986) 393-398 (white-noise-gain constraint against superdirectivity).
"""

from __future__ import annotations

import math
import time

import numpy as np

from ..errors import SteradianError
from ..units import db10, db20, from_db10, from_db20
from ..validate import choice
from ._assemble import null_rows
from ._check import check_family, field_magnitude
from ._conic import Infeasible
from ._diagnose import SynthesisInfeasible, infeasible
from ._dispatch import SOLVERS, solve_round
from ._levels import below_peak, halfwidths, hardware_limits, notch_list, null_list, spacings
from ._masks import Mask
from ._problem import NotchFamily, Rows, Setup, SidelobeFamily, make_setup
from ._report import array_with, finish, with_path
from ._result import SynthesisResult

__all__ = ["max_directivity", "min_sidelobe", "max_directivity_on", "closed_form",
           "DEFAULT_LOADING"]

DEFAULT_LOADING = 1e-5
"""Diagonal loading of the radiated-power matrix, relative to its mean diagonal."""


def closed_form(setup: Setup):
    from scipy.linalg import cho_factor, cho_solve

    try:
        cf = cho_factor(setup.Qs)
    except np.linalg.LinAlgError:
        raise SteradianError("the radiated-power matrix is singular; set loading > 0") from None
    y = cho_solve(cf, setup.c0)
    x = y / float(setup.c0 @ y)
    return setup.weights(x), float(x @ setup.Qs @ x)


def max_directivity(array, *, psl_db: float | None = None, mainlobe=None,
                    mask: Mask | None = None, nulls=(), notches=(), weights: str = "complex",
                    symmetry: str = "auto", nonnegative: bool = True,
                    dynamic_range_db: float | None = None, wng_min_db: float | None = None,
                    loading: float = DEFAULT_LOADING, tol_db: float = 0.01,
                    max_rounds: int = 30, oversample: float | None = None,
                    dense_oversample: float | None = None,
                    power_matrix=None, solver: str = "auto") -> SynthesisResult:
    r"""Weights of maximum directivity toward the beam, under pattern and hardware limits.

    The beam direction is ``array.steering`` (broadside +z without steering). Geometry,
    element pattern, element mask and steering are the array's own.

    Parameters
    ----------
    array : Array
    psl_db : float, optional
        Peak sidelobe level (negative dB relative to the beam) outside the main-lobe zone.
    mainlobe : float or sequence of float, optional
        Half-width(s) of the main-lobe zone in direction cosines along the array's principal
        axes (one value or one per axis; for a line, :math:`|u - u_0| <` mainlobe). Default:
        the first null of a Dolph-Chebyshev line of the same extent and spacing at
        ``psl_db`` (at -25 dB when only a mask is given).
    mask : Mask, optional
        Upper envelope versus the angle from the beam (relative dB or absolute dBi; absolute
        masks are met by bisection on the directivity they are relative to).
    nulls : sequence
        :class:`Null`, ``(theta_deg, phi_deg)`` (exact zero) or ``(theta, phi, depth_db)``.
    notches : sequence of Notch
        Sectors held below a depth.
    weights : {"complex", "amplitude"}
        Free complex weights, or real amplitudes times the steering phases (amplitude-only
        taper; non-negative unless ``nonnegative=False``).
    symmetry : {"auto", "none", "centro", "quadrant"}
        "auto" uses the point symmetry of a centro-symmetric layout, which is exact (the
        optimum is conjugate-symmetric; half the unknowns and a real pattern). "quadrant"
        (amplitude only, planar layouts) also mirrors about both principal axes: a quarter
        of the unknowns; with a scanned beam this is a design restriction, not exact.
    dynamic_range_db : float, optional
        Largest over smallest weight magnitude (dB).
    wng_min_db : float, optional
        White-noise-gain floor (dB; 10 log10 N for uniform weights) against superdirectivity.
    loading : float
        Diagonal loading of the power matrix relative to its mean diagonal (1e-5 changes the
        directivity by well under 0.03 dB and keeps badly conditioned problems solvable).
    tol_db : float
        Allowed excess over the constraints on the dense re-check (dB).
    max_rounds : int
        Most adaptive rounds (solves).
    oversample, dense_oversample : float, optional
        Samples per :math:`\lambda/L` of the coarse constraint grid and of the dense check.
    power_matrix : ndarray (N, N), optional
        Hermitian matrix P replacing the radiated-power matrix in the objective, which
        becomes :math:`4\pi|E_0|^2 / w^H P w` (its bound is the certificate's
        ``directivity_bound_dbi``); the result's directivity figures stay the true
        directivity of the weights. For coupled ports:
        :class:`steradian.coupling.CoupledProblem` (realized gain).
    solver : {"auto", "interior", "first_order", "conic"}
        Solve path: "interior", a dense interior-point method for real-field problems
        (centro-symmetric or amplitude weights, sidelobe/mask/notch/depth-null limits) with
        its own dual certificate; "first_order", ADMM on the same problems (warm-started
        across rounds, same certificate); "conic", the general conic solver (any limit);
        "auto" picks interior below 3,000 unknowns and first-order above on real-field
        problems, conic otherwise. The result reports the path, the certified bound,
        the gap and the time per stage.

    Returns
    -------
    SynthesisResult
        With ``method="closed_form"`` when no constraint is given: then
        :math:`w \propto (Q + \delta I)^{-1} a_0^H`, the maximum-directivity weights.

    Raises
    ------
    SynthesisInfeasible
        No weights meet the constraints; the message gives the likely cause.

    Notes
    -----
    With no constraints the maximum directivity of an N-element uniform line of isotropic
    elements at half-wavelength spacing is N (its power matrix is :math:`4\pi I`); at
    smaller spacings it exceeds N with superdirective weights, and a warning says so. The
    formulation and its published references: :mod:`steradian.optimize._convex`.
    """
    t_start = time.perf_counter()
    level_db = below_peak("psl_db", psl_db)
    hardware_limits(dynamic_range_db, wng_min_db, tol_db, max_rounds)
    choice("solver", solver, SOLVERS)
    setup = make_setup(array, weights, symmetry, loading, power_matrix)
    return max_directivity_on(setup, t_start=t_start, psl_db=level_db, mainlobe=mainlobe,
                              mask=mask, nulls=nulls, notches=notches, nonnegative=nonnegative,
                              dynamic_range_db=dynamic_range_db, wng_min_db=wng_min_db,
                              tol_db=tol_db, max_rounds=max_rounds, oversample=oversample,
                              dense_oversample=dense_oversample, solver=solver,
                              stages={"setup": time.perf_counter() - t_start})[0]


def max_directivity_on(setup: Setup, *, t_start, psl_db, mainlobe, mask, nulls, notches,
                       nonnegative, dynamic_range_db, wng_min_db, tol_db, max_rounds,
                       oversample, dense_oversample, seed_dirs=None, solver="auto",
                       stages=None):
    """max_directivity on a prepared setup (the trade curve reuses one setup).

    Returns the result and the sidelobe sample directions of the final solve."""
    level_db = psl_db
    weights = setup.param.weights
    if mask is not None and not isinstance(mask, Mask):
        raise SteradianError("mask must be a steradian.optimize.Mask")
    dr, wng = hardware_limits(dynamic_range_db, wng_min_db, tol_db, max_rounds)
    nl = null_list(nulls)
    nt = notch_list(notches)
    coarse, dense = spacings(setup, oversample, dense_oversample)
    constrained = (level_db is not None or mask is not None or nl or nt or dr is not None
                   or wng is not None or (weights == "amplitude" and nonnegative))
    notes: list[str] = []
    if not constrained:
        w, _ = closed_form(setup)
        return finish(setup, w, method="closed_form", families=[], nulls=[], h=None,
                      dense_spacing=dense, tol_db=tol_db, limit_db=None,
                      certificate={"status": "closed form", "loading": setup.loading},
                      rounds=0, samples=0, notes=notes, t_start=t_start,
                      psl_limit=None), None
    tau = None if level_db is None else from_db20(level_db)
    families = []
    h = None
    if level_db is not None or mask is not None:
        h = halfwidths(setup, mainlobe, tau if tau is not None else from_db20(-25.0))
        families.append(SidelobeFamily(setup, h, level_db is not None, mask, coarse, dense))
    families += [NotchFamily(n, coarse, dense) for n in nt]
    nrows = null_rows(setup, nl)
    kw = dict(mode="max", tau=tau, nonneg=nonnegative, dr_lin=dr, wng_min=wng, p_max=None,
              tol_db=tol_db, max_rounds=int(max_rounds), solver=solver,
              stages=dict(stages or {}))
    rowsets = None
    if seed_dirs is not None and families:
        # Start from the coarse grid plus the maxima found for a neighbouring problem.
        rowsets = [Rows(f, setup) for f in families]
        rowsets[0].add(np.vstack([families[0].coarse(), seed_dirs]))
        for rs in rowsets[1:]:
            rs.add(rs.family.coarse())
    try:
        if mask is not None and mask.absolute:
            w, info, rounds, rowsets = _absolute_mask(setup, families, nrows, kw)
        else:
            w, _, info, rounds, rowsets = _adaptive(setup, families, nrows,
                                                    rowsets=rowsets, **kw)
    except Infeasible as exc:
        raise infeasible(exc, setup, families, nl, tau, h, dynamic_range_db, wng_min_db,
                         nonnegative and weights == "amplitude") from None
    t_fin = time.perf_counter()
    res = finish(setup, w, method="max_directivity", families=families, nulls=nl, h=h,
                 dense_spacing=dense, tol_db=tol_db, limit_db=level_db,
                 certificate=_certificate(info, "max", setup), rounds=rounds,
                 samples=sum(len(r) for r in rowsets), notes=notes, t_start=t_start,
                 psl_limit=tau)
    return with_path(res, info, kw["stages"], time.perf_counter() - t_fin), \
        (rowsets[0].dirs if rowsets else None)


def _absolute_mask(setup, families, nrows, kw):
    """Meet an absolute (dBi) mask: bisection on the directivity it is taken relative to.

    With the reference directivity D_ref the mask becomes relative, M - D_ref; the optimum
    f(D_ref) falls as D_ref rises. Any D_ref >= f(D_ref) gives weights meeting the absolute
    mask; the bisection finds the smallest such D_ref to 0.005 dB, starting from the
    unconstrained maximum (an upper bound).
    """
    _, pmin = closed_form(setup)
    hi = db10(4 * math.pi / pmin)
    fam = families[0]
    rowsets = None

    def run(ref):
        nonlocal rowsets
        fam.ref_dbi = ref
        if rowsets is not None:
            for rs in rowsets:
                rs.refresh_bounds()
        w, _, info, rounds, rowsets = _adaptive(setup, families, nrows, rowsets=rowsets,
                                                **kw)
        return w, info, rounds, db10(4 * math.pi / info["primal_objective"])

    best = run(hi)
    d = best[3]
    if d >= hi - 0.005:
        return best[0], best[1], best[2], rowsets
    lo = d
    total = best[2]
    for _ in range(12):
        mid = 0.5 * (lo + hi)
        try:
            res = run(mid)
        except Infeasible:
            lo = mid
            continue
        total += res[2]
        if res[3] <= mid + 1e-6:
            hi = mid
            best = res
        else:
            lo = mid
        if hi - lo < 0.005:
            break
    fam.ref_dbi = hi
    return best[0], best[1], total, rowsets


def min_sidelobe(array, *, loss_db: float | None = None,
                 min_directivity_dbi: float | None = None, mainlobe=None,
                 mask: Mask | None = None, nulls=(), notches=(), weights: str = "complex",
                 symmetry: str = "auto", nonnegative: bool = True,
                 dynamic_range_db: float | None = None, wng_min_db: float | None = None,
                 loading: float = DEFAULT_LOADING, tol_db: float = 0.01,
                 max_rounds: int = 30, oversample: float | None = None,
                 dense_oversample: float | None = None) -> SynthesisResult:
    r"""Lowest peak sidelobe level for a directivity budget (the dual of
    :func:`max_directivity`).

    .. math::
        \min_{x,\tau}\ \tau \quad\text{s.t.}\quad c_0^T x = 1,\ |E_i(x)| \le \tau,\
        x^TQ_sx \le 4\pi/D_{min},

    :math:`D_{min}` being the unconstrained maximum directivity less ``loss_db``, or
    ``min_directivity_dbi``. Give exactly one of the two. Other parameters as in
    :func:`max_directivity`; the default main-lobe zone follows the level found (a few
    outer iterations).
    """
    t_start = time.perf_counter()
    if (loss_db is None) == (min_directivity_dbi is None):
        raise SteradianError("give exactly one of loss_db and min_directivity_dbi")
    dr, wng = hardware_limits(dynamic_range_db, wng_min_db, tol_db, max_rounds)
    nl = null_list(nulls)
    nt = notch_list(notches)
    setup = make_setup(array, weights, symmetry, loading)
    coarse, dense = spacings(setup, oversample, dense_oversample)
    _, pmin = closed_form(setup)
    dmax_dbi = db10(4 * math.pi / pmin)
    if loss_db is not None:
        x = float(loss_db)
        if not (math.isfinite(x) and x >= 0):
            raise SteradianError(f"loss_db must be zero or positive dB, got {loss_db}")
        target = dmax_dbi - x
    else:
        target = float(min_directivity_dbi)
        if target > dmax_dbi + 1e-9:
            raise SynthesisInfeasible(
                f"infeasible: min_directivity_dbi={target:g} exceeds the maximum directivity "
                f"{dmax_dbi:.3f} dBi of this array", ["directivity budget above the maximum"])
    p_max = 4 * math.pi / from_db10(target)
    nrows = null_rows(setup, nl)
    level = from_db20(-30.0)
    info = {}
    h = None
    for _outer in range(4 if mainlobe is None else 1):
        h = halfwidths(setup, mainlobe, level)
        families = [SidelobeFamily(setup, h, True, mask, coarse, dense)]
        families += [NotchFamily(n, coarse, dense) for n in nt]
        try:
            w, tau, info, rounds, rowsets = _adaptive(
                setup, families, nrows, mode="dual", tau=None, nonneg=nonnegative,
                dr_lin=dr, wng_min=wng, p_max=p_max, tol_db=tol_db, max_rounds=int(max_rounds))
        except Infeasible as exc:
            raise infeasible(exc, setup, families, nl, None, h, dynamic_range_db, wng_min_db,
                              nonnegative and weights == "amplitude") from None
        if abs(db20(tau / level)) < 0.05:
            level = tau
            break
        level = tau
    res = finish(setup, w, method="min_sidelobe", families=families, nulls=nl, h=h,
                  dense_spacing=dense, tol_db=tol_db, limit_db=db20(level),
                  certificate=_certificate(info, "dual", setup), rounds=rounds,
                  samples=sum(len(r) for r in rowsets), notes=[], t_start=t_start,
                  psl_limit=level)
    return res


# ---- the adaptive loop ----------------------------------------------------------------------

def _adaptive(setup, families, nrows, *, mode, tau, nonneg, dr_lin, wng_min, p_max,
              tol_db, max_rounds, rowsets=None, solver="auto", stages=None):
    stages = {} if stages is None else stages
    t0 = time.perf_counter()
    if rowsets is None:
        rowsets = []
        for fam in families:
            rs = Rows(fam, setup)
            rs.add(fam.coarse())
            rowsets.append(rs)
    tol = from_db20(tol_db) - 1
    w_prev = None
    if dr_lin is not None and setup.param.weights == "complex":
        w_prev = setup.phases.copy()
    prev_obj = None
    info = {}
    rnd = 0
    _tick(stages, "samples", t0)
    paths = []
    warm: dict = {}
    while rnd < max_rounds:
        rnd += 1
        t0 = time.perf_counter()
        z, info, path = solve_round(setup, rowsets, nrows, mode=mode, tau=tau, nonneg=nonneg,
                                    dr_lin=dr_lin, w_prev=w_prev, wng_min=wng_min,
                                    p_max=p_max, solver=solver, relax=1 + tol, warm=warm)
        paths.append(path)
        t0 = _tick(stages, "solve", t0)
        x = z[: setup.n]
        t_now = z[-1] if mode == "dual" else tau
        w = setup.weights(x)
        arr = array_with(setup, w)
        e0 = field_magnitude(arr, setup.r0[None, :])[0]
        added = 0
        for rs in rowsets:
            chk = check_family(arr, rs.family, e0, t_now if rs.family.psl else None)
            viol = chk["ratio"] > 1 + tol
            added += rs.add(chk["dirs"][viol])
        _tick(stages, "check", t0)
        obj = info["primal_objective"]
        settled = True
        if w_prev is not None:
            settled = prev_obj is not None and abs(obj - prev_obj) <= 1e-5 * abs(obj)
            w_prev = w
        prev_obj = obj
        if added == 0 and settled:
            break
    info["path"] = paths[-1] if paths else "conic"
    if mode == "max":
        # The loaded objective of the weights reached, for the gap to the loaded bound.
        info["achieved_power"] = float(x @ setup.Qs @ x) / float(setup.c0 @ x) ** 2
    info["stages"] = stages
    return w, t_now, info, rnd, rowsets


def _tick(stages, key, t0):
    """Add the time since ``t0`` to ``stages[key]``; return now."""
    now = time.perf_counter()
    stages[key] = stages.get(key, 0.0) + now - t0
    return now


def _certificate(info, mode, setup):
    cert = {k: info[k] for k in ("status", "iterations", "primal_objective", "dual_objective",
                                 "relative_gap", "seconds", "constraints", "variables")}
    if mode == "max" and info["dual_objective"] > 0:
        cert["directivity_bound_dbi"] = db10(4 * math.pi / info["dual_objective"])
    cert["loading"] = setup.loading
    return cert


