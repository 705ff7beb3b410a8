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
import warnings
from dataclasses import replace

import numpy as np

from ..errors import SteradianError
from ..radiation import peak_directivity, radiated_power
from ._check import check_family, field_magnitude, main_peak
from ._conic import ConicProgram, Infeasible
from ._frame import chebyshev_crossing
from ._masks import Mask, Notch, Null
from ._problem import NotchFamily, Rows, Setup, SidelobeFamily, make_setup, rows_at
from ._result import SynthesisResult

__all__ = ["max_directivity", "min_sidelobe", "SynthesisInfeasible", "peak_sidelobe",
           "DEFAULT_LOADING"]

DEFAULT_LOADING = 1e-5
"""Diagonal loading of the radiated-power matrix, relative to its mean diagonal."""

_SUPERDIRECTIVE_DB = 6.0  # warn when the white-noise gain is this far below N
_OFF = 1e-4  # weights this far below the largest (-80 dB) count as switched off


class SynthesisInfeasible(SteradianError):
    """No weights meet the constraints; ``causes`` lists the likely reasons found."""

    def __init__(self, message: str, causes: list[str], status: str = ""):
        self.causes = causes
        self.status = status
        super().__init__(message)


# ---- input normalisation ---------------------------------------------------------------------

def _nulls(nulls) -> list[Null]:
    out = []
    for i, n in enumerate(nulls or ()):
        if isinstance(n, Null):
            out.append(n)
        elif isinstance(n, dict):
            try:
                out.append(Null(float(n["theta_deg"]), float(n["phi_deg"]),
                                None if n.get("depth_db") is None else float(n["depth_db"])))
            except KeyError as exc:
                raise SteradianError(f"nulls[{i}] needs theta_deg and phi_deg") from exc
        else:
            t = tuple(n)
            if len(t) not in (2, 3):
                raise SteradianError(f"nulls[{i}] must be (theta_deg, phi_deg[, depth_db]), "
                                     f"got {n!r}")
            out.append(Null(float(t[0]), float(t[1]), None if len(t) == 2 else float(t[2])))
    return out


def _notches(notches) -> list[Notch]:
    out = []
    for i, n in enumerate(notches or ()):
        if isinstance(n, Notch):
            out.append(n)
        elif isinstance(n, dict):
            try:
                out.append(Notch(tuple(n["theta_deg"]), tuple(n["phi_deg"]),
                                 float(n["depth_db"])))
            except KeyError as exc:
                raise SteradianError(f"notches[{i}] needs theta_deg, phi_deg, depth_db") \
                    from exc
        else:
            raise SteradianError(f"notches[{i}] must be a Notch or a dict, got {n!r}")
    return out


def _level(name, v) -> float | None:
    if v is None:
        return None
    x = float(v)
    if not (math.isfinite(x) and x < 0):
        raise SteradianError(f"{name} is a level below the main-beam peak and must be negative "
                             f"dB, got {name}={v!r}" + (f" (did you mean {-x:g}?)" if x > 0
                                                        else ""))
    return x


def _unit(theta_deg, phi_deg) -> np.ndarray:
    t, p = math.radians(theta_deg), math.radians(phi_deg)
    return np.array([math.sin(t) * math.cos(p), math.sin(t) * math.sin(p), math.cos(t)])


def _spacings(setup: Setup, oversample, dense_oversample):
    lam = setup.wavelength
    L = float(np.max(setup.frame.lengths))
    kind = setup.domain.kind
    os_c = oversample if oversample is not None else {"line": 0.5, "plane": 1.5,
                                                      "sphere": 1.2}[kind]
    os_d = dense_oversample if dense_oversample is not None else {"line": 16.0, "plane": 6.0,
                                                                  "sphere": 4.0}[kind]
    if os_c <= 0 or os_d <= 0:
        raise SteradianError("oversampling factors must be positive")
    return lam / (os_c * L), lam / (os_d * L)


def _halfwidths(setup: Setup, mainlobe, level) -> np.ndarray:
    r = setup.frame.rank
    if mainlobe is None:
        return setup.halfwidths(level)
    h = np.broadcast_to(np.asarray(mainlobe, float), (r,)).copy() if np.ndim(mainlobe) == 0 \
        else np.asarray(mainlobe, float).reshape(-1)
    if h.shape != (r,) or not np.all(np.isfinite(h)) or np.any(h <= 0):
        raise SteradianError(f"mainlobe must be a positive half-width in direction cosines (or "
                             f"one per principal axis, {r} here), got {mainlobe!r}")
    return h


# ---- assembly --------------------------------------------------------------------------------

def _cholesky(M: np.ndarray, what: str) -> np.ndarray:
    try:
        return np.linalg.cholesky(M)
    except np.linalg.LinAlgError:
        raise SteradianError(f"the {what} matrix is not positive definite; raise the diagonal "
                             "loading") from None


def _assemble(setup: Setup, rowsets, null_rows, *, mode: str, tau, nonneg: bool,
              dr_lin: float | None, w_prev, wng_min: float | None, p_max: float | None):
    n = setup.n
    extra_t = dr_lin is not None
    nv = n + int(extra_t) + int(mode == "dual")
    it = n if extra_t else None
    itau = nv - 1 if mode == "dual" else None
    prog = ConicProgram(nv)

    def pad(A):
        A = np.atleast_2d(A)
        return np.hstack([A, np.zeros((A.shape[0], nv - n))])

    prog.zero(pad(setup.c0), 1.0)
    # Nulls: exact (equalities) or to a depth (cones).
    for real, H, V, depth in null_rows:
        if depth is None:
            prog.zero(pad(H) if real else pad(V[0]), 0.0)
        elif real:
            prog.leq(np.vstack([pad(H), -pad(H)]), depth)
        else:
            prog.socs(np.zeros((1, nv)), [depth], np.concatenate(
                [V, np.zeros((1, V.shape[1], nv - n))], axis=2))
    for rs in rowsets:
        if len(rs) == 0:
            continue
        re, H, V, coef, fixed = rs.real, rs.H, rs.V, rs.coef, rs.fixed
        Vp = np.concatenate([V, np.zeros((len(V), V.shape[1], nv - n))], axis=2)
        Hp = pad(H)
        if mode == "max":
            b = fixed.copy()
            if tau is not None:
                ps = coef > 0
                b[ps] = np.minimum(b[ps], coef[ps] * tau)
            ok = np.isfinite(b)
            r = re & ok
            prog.leq(np.vstack([Hp[r], -Hp[r]]), np.concatenate([b[r], b[r]]))
            c = ~re & ok
            if np.any(c):
                prog.socs(np.zeros((int(c.sum()), nv)), b[c], Vp[c])
        else:
            ps = coef > 0
            for sel, trow, tconst in ((ps, True, None), (np.isfinite(fixed), False, fixed)):
                r = re & sel
                if np.any(r):
                    G = np.vstack([Hp[r], -Hp[r]])
                    if trow:
                        G[:, itau] = -np.concatenate([coef[r], coef[r]])
                        prog.leq(G, 0.0)
                    else:
                        prog.leq(G, np.concatenate([tconst[r], tconst[r]]))
                c = ~re & sel
                if np.any(c):
                    m = int(c.sum())
                    if trow:
                        tr = np.zeros((m, nv))
                        tr[:, itau] = coef[c]
                        prog.socs(tr, np.zeros(m), Vp[c])
                    else:
                        prog.socs(np.zeros((m, nv)), tconst[c], Vp[c])
    groups = setup.param.magnitude_groups
    if nonneg and setup.param.weights == "amplitude":
        prog.leq(-np.eye(n, nv), 0.0)
    if extra_t:
        if setup.param.weights == "amplitude":
            G = np.zeros((2 * n, nv))
            G[:n, :n] = np.eye(n)
            G[:n, it] = -1.0
            G[n:, :n] = -np.eye(n)
            G[n:, it] = 1.0 / dr_lin
            prog.leq(G, 0.0)
        else:
            Vs = np.zeros((len(groups), 2, nv))
            tr = np.zeros((len(groups), nv))
            tr[:, it] = 1.0
            Gl = np.zeros((len(groups), nv))
            xp = np.linalg.lstsq(setup.param.T, w_prev, rcond=None)[0].real
            for gi, g in enumerate(groups):
                for k, j in enumerate(g):
                    Vs[gi, k, j] = 1.0
                xg = xp[g]
                nrm = np.linalg.norm(xg)
                Gl[gi, g] = -(xg / nrm if nrm > 0 else np.ones(len(g)) / math.sqrt(len(g)))
                Gl[gi, it] = 1.0 / dr_lin
            prog.socs(tr, np.zeros(len(groups)), Vs)
            prog.leq(Gl, 0.0)
    if wng_min is not None:
        Gw = np.real(setup.param.T.conj().T @ (setup.g_wng[:, None] * setup.param.T))
        L = _cholesky(0.5 * (Gw + Gw.T) + 1e-300 * np.eye(n), "weight-norm")
        prog.socs(np.zeros((1, nv)), [math.sqrt(1.0 / wng_min)],
                  np.concatenate([L.T, np.zeros((n, nv - n))], axis=1)[None])
    # The objective / power constraint are written in whitened variables y = L^T x
    # (ConicProgram.solve maps the other blocks through x = L^{-T} y).
    if mode == "dual":
        prog.socs(np.zeros((1, nv)), [math.sqrt(p_max)],
                  np.concatenate([np.linalg.inv(_whitener(setup)), np.zeros((n, nv - n))],
                                 axis=1)[None])
        q = np.zeros(nv)
        q[itau] = 1.0
        return prog, None, q
    P = np.zeros((nv, nv))
    P[:n, :n] = 2.0 * np.eye(n)
    return prog, P, None


def _whitener(setup: Setup) -> np.ndarray:
    """L^{-T} with L L^T = Q_s (cached on the setup)."""
    Li = getattr(setup, "_whiten", None)
    if Li is None:
        L = _cholesky(setup.Qs, "radiated-power")
        from scipy.linalg import solve_triangular

        Li = solve_triangular(L, np.eye(setup.n), lower=True).T
        setup._whiten = Li
    return Li


# ---- result assembly ------------------------------------------------------------------------

def _normalise(setup: Setup, w: np.ndarray) -> np.ndarray:
    taper = w * np.conj(setup.phases)
    s = taper.sum()
    rot = np.exp(-1j * np.angle(s)) if abs(s) > 1e-12 * np.abs(taper).sum() else 1.0
    w = w * rot
    m = np.max(np.abs(w))
    return w / m if m > 0 else w


def _array_with(setup: Setup, w: np.ndarray):
    arr = setup.array
    taper = w * np.conj(setup.phases) if arr.steering is not None else w
    if setup.param.weights == "amplitude":
        taper = taper.real + 0j  # amplitude-only: exactly real
    return replace(arr, taper=taper)


def _psl_family(setup, h, dense_spacing):
    return SidelobeFamily(setup, h, True, None, dense_spacing, dense_spacing)


def _first_null_halfwidths(arr, setup: Setup, step: float) -> np.ndarray:
    """Main-lobe half-widths along each principal axis: distance to the first minimum."""
    fr = setup.frame
    dom = setup.domain
    out = []
    for i in range(fr.rank):
        lam_L = setup.wavelength / fr.lengths[i]
        t = np.arange(1, int(math.ceil(8 * lam_L / step)) + 2) * step
        widths = []
        for sgn in (1.0, -1.0):
            q = setup.r0 + sgn * np.outer(t, fr.axes[:, i])
            if dom.kind == "line":
                d = dom.from_u(q @ dom.e1)
            elif dom.kind == "plane":
                s = 1.0 if setup.r0 @ dom.e3 >= 0 else -1.0
                d = dom.from_uv(q @ dom.e1, q @ dom.e2, s)
            else:
                d = q / np.linalg.norm(q, axis=1, keepdims=True)
            v = field_magnitude(arr, d)
            k = np.flatnonzero((v[1:-1] <= v[:-2]) & (v[1:-1] <= v[2:]))
            widths.append(t[k[0] + 1] if len(k) else t[-1])
        out.append(min(widths))
    return np.array(out)


def peak_sidelobe(array, mainlobe=None, *, dense_oversample: float | None = None):
    """Peak sidelobe level of any array from a dense, refined check.

    Parameters
    ----------
    array : Array
    mainlobe : float or sequence, optional
        Main-lobe zone half-width(s) in direction cosines along the array's principal axes.
        Default: the distance to the first pattern minimum along each axis.
    dense_oversample : float, optional
        Grid density (samples per lambda/L); defaults as in :func:`max_directivity`.

    Returns
    -------
    dict
        ``psl_db`` (relative to the main-beam peak), ``direction`` (theta, phi deg) and
        ``mainlobe`` (the half-widths used).
    """
    setup = make_setup(array, "complex", "none", 0.0)
    _, dense = _spacings(setup, None, dense_oversample)
    e_peak, _ = main_peak(array, setup, dense)
    h = (_first_null_halfwidths(array, setup, dense / 4) if mainlobe is None
         else _halfwidths(setup, mainlobe, None))
    chk = check_family(array, _psl_family(setup, h, dense), e_peak, 1.0)
    return {"psl_db": 20 * math.log10(max(chk["worst"], 1e-300)),
            "direction": _angles(chk["worst_dir"]), "mainlobe": h.tolist()}


def _angles(d):
    if d is None:
        return None
    th = math.degrees(math.acos(float(np.clip(d[2], -1, 1))))
    ph = math.degrees(math.atan2(d[1], d[0])) if th > 1e-9 else 0.0
    return (th, ph)


def _finish(setup: Setup, w, *, method, families, nulls, h, dense_spacing, tol_db, limit_db,
            certificate, rounds, samples, notes, t_start, psl_limit):
    w = _normalise(setup, w)
    arr = _array_with(setup, w)
    w = arr.weights()
    power = radiated_power(arr)
    e0 = field_magnitude(arr, setup.r0[None, :])[0]
    d0 = 4 * math.pi * e0**2 / power.value
    pk = peak_directivity(arr, power=power)
    uni = replace(arr, taper=np.ones(arr.n, complex))
    pu = radiated_power(uni)
    eu = field_magnitude(uni, setup.r0[None, :])[0]
    du = 4 * math.pi * eu**2 / pu.value
    e_peak, _ = main_peak(arr, setup, dense_spacing)
    margin = 0.0
    for fam in families:
        chk = check_family(arr, fam, e0, psl_limit if fam.psl else None)
        margin = max(margin, chk["worst"])
    margin_db = 20 * math.log10(margin) if margin > 0 else -math.inf
    hw = h if h is not None else _first_null_halfwidths(arr, setup, dense_spacing / 4)
    chk = check_family(arr, _psl_family(setup, hw, dense_spacing), e_peak, 1.0)
    psl_db = 20 * math.log10(max(chk["worst"], 1e-300))
    depths = []
    for nl in nulls:
        v = field_magnitude(arr, _unit(nl.theta_deg, nl.phi_deg)[None, :])[0]
        depths.append(20 * math.log10(max(v / e_peak, 1e-300)))
    met = margin_db <= tol_db + 1e-9 and all(
        d <= (nl.depth_db if nl.depth_db is not None else -100.0) + tol_db
        for d, nl in zip(depths, nulls, strict=True))
    if not met:
        notes.append(f"constraints not met to {tol_db:g} dB on the dense check (worst excess "
                     f"{margin_db:.3f} dB)")
    wng = setup.wng(w)
    ne = len(setup.enabled)
    if wng < ne * 10 ** (-_SUPERDIRECTIVE_DB / 10):
        msg = (f"superdirective weights: white-noise gain {10 * math.log10(wng):.1f} dB is "
               f"{10 * math.log10(ne / wng):.1f} dB below uniform weights' "
               f"({10 * math.log10(ne):.1f} dB); the pattern is very sensitive to weight "
               "errors; limit it with wng_min_db")
        notes.append(msg)
        warnings.warn(msg, UserWarning, stacklevel=3)
    mags = np.abs(w)[setup.enabled]
    nz = mags[mags > _OFF * mags.max()]
    if len(nz) < len(mags):
        notes.append(f"{len(mags) - len(nz)} element(s) below {20 * math.log10(_OFF):.0f} dB "
                     "(effectively off; left out of the dynamic range)")
    return SynthesisResult(
        array=arr, weights=w, method=method,
        directivity_dbi=10 * math.log10(d0), peak_directivity_dbi=pk.directivity_dbi,
        taper_efficiency=d0 / du, psl_db=psl_db, psl_direction=_angles(chk["worst_dir"]),
        limit_db=limit_db, margin_db=margin_db, met=bool(met),
        white_noise_gain_db=10 * math.log10(max(wng, 1e-300)),
        dynamic_range_db=20 * math.log10(nz.max() / nz.min()),
        null_depths_db=depths, mainlobe=[float(x) for x in hw], certificate=certificate,
        rounds=rounds, samples=samples, unknowns=setup.n, symmetry=setup.param.symmetry,
        notes=notes, seconds=time.perf_counter() - t_start)


# ---- infeasibility diagnosis ---------------------------------------------------------------

def _diagnose(setup: Setup, families, nulls, level, h, dr_db, wng_min_db, nonneg):
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
                th, ph = _angles(d[out][i])
                causes.append(f"a grating lobe at theta={th:.1f}, phi={ph:.1f} deg lies in the "
                              "sidelobe region: no taper can lower it (reduce the spacing or "
                              "the scan angle, or exclude it from the region)")
    if level is not None and h is not None:
        for i in range(fr.rank):
            n = max(int(round(fr.lengths[i] / fr.spacing)), 2)
            need = chebyshev_crossing(level, n, fr.lengths[i] / n / setup.wavelength)
            if h[i] < need:
                causes.append(
                    f"the main-lobe zone half-width {h[i]:.4g} (direction cosines, axis "
                    f"{i + 1}) is narrower than the narrowest main lobe that reaches "
                    f"{20 * math.log10(level):.1f} dB for this aperture (Dolph-Chebyshev: "
                    f"{need:.4g}); widen mainlobe or raise the level")
    for nl in nulls:
        u = _unit(nl.theta_deg, nl.phi_deg)
        for fam in families:
            if isinstance(fam, SidelobeFamily) and fam.in_zone(u[None, :])[0]:
                causes.append(f"the null at theta={nl.theta_deg:g}, phi={nl.phi_deg:g} deg lies "
                              "inside the main-lobe zone")
                break
    exact = sum(1 for nl in nulls if nl.depth_db is None)
    if exact * (1 if setup.param.symmetry != "none" else 2) >= setup.n:
        causes.append(f"{exact} exact nulls leave no freedom for {setup.n} real unknowns")
    ne = len(setup.enabled)
    if wng_min_db is not None and wng_min_db > 10 * math.log10(ne) + 1e-9:
        causes.append(f"white-noise gain cannot exceed {10 * math.log10(ne):.2f} dB "
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


def _infeasible(exc, setup, families, nulls, level, h, dr_db, wng_min_db, nonneg):
    causes = _diagnose(setup, families, nulls, level, h, dr_db, wng_min_db, nonneg)
    msg = "infeasible: no weights meet the constraints (" + exc.status + "); likely cause: " \
        + "; ".join(causes)
    return SynthesisInfeasible(msg, causes, exc.status)


# ---- the adaptive loop ----------------------------------------------------------------------

def _adaptive(setup, families, null_rows, *, mode, tau, nonneg, dr_lin, wng_min, p_max,
              tol_db, max_rounds, rowsets=None):
    if rowsets is None:
        rowsets = []
        for fam in families:
            rs = Rows(fam, setup)
            rs.add(fam.coarse())
            rowsets.append(rs)
    tol = 10 ** (tol_db / 20) - 1
    w_prev = None
    if dr_lin is not None and setup.param.weights == "complex":
        w_prev = setup.phases.copy()
    prev_obj = None
    info = {}
    rnd = 0
    while rnd < max_rounds:
        rnd += 1
        prog, P, q = _assemble(setup, rowsets, null_rows, mode=mode, tau=tau, nonneg=nonneg,
                               dr_lin=dr_lin, w_prev=w_prev, wng_min=wng_min, p_max=p_max)
        z, info = prog.solve(P, q, whiten=_whitener(setup))
        x = z[: setup.n]
        t_now = z[-1] if mode == "dual" else tau
        w = setup.weights(x)
        arr = _array_with(setup, w)
        e0 = field_magnitude(arr, setup.r0[None, :])[0]
        added = 0
        for rs in rowsets:
            chk = check_family(arr, rs.family, e0, t_now if rs.family.psl else None)
            viol = chk["ratio"] > 1 + tol
            added += rs.add(chk["dirs"][viol])
        obj = info["primal_objective"]
        settled = True
        if w_prev is not None:
            settled = prev_obj is not None and abs(obj - prev_obj) <= 1e-5 * abs(obj)
            w_prev = w
        prev_obj = obj
        if added == 0 and settled:
            break
    return w, t_now, info, rnd, rowsets


def _null_rows(setup, nulls):
    out = []
    for nl in nulls:
        real, H, V = rows_at(setup, _unit(nl.theta_deg, nl.phi_deg)[None, :])
        depth = None if nl.depth_db is None else 10 ** (nl.depth_db / 20)
        out.append((bool(real[0]), H, V, depth))
    return out


def _certificate(info, mode, setup):
    cert = {k: info[k] for k in ("status", "iterations", "primal_objective", "dual_objective",
                                 "relative_gap", "seconds", "constraints", "variables")}
    if mode == "max" and info["dual_objective"] > 0:
        cert["directivity_bound_dbi"] = 10 * math.log10(4 * math.pi / info["dual_objective"])
    cert["loading"] = setup.loading
    return cert


def _check_common(dynamic_range_db, wng_min_db, tol_db, max_rounds):
    dr = None
    if dynamic_range_db is not None:
        x = float(dynamic_range_db)
        if not (math.isfinite(x) and x > 0):
            raise SteradianError(f"dynamic_range_db must be positive dB, got {dynamic_range_db}")
        dr = 10 ** (x / 20)
    wng = None
    if wng_min_db is not None:
        x = float(wng_min_db)
        if not math.isfinite(x):
            raise SteradianError(f"wng_min_db must be finite, got {wng_min_db}")
        wng = 10 ** (x / 10)
    if not (math.isfinite(float(tol_db)) and float(tol_db) > 0):
        raise SteradianError(f"tol_db must be positive, got {tol_db}")
    if int(max_rounds) < 1:
        raise SteradianError(f"max_rounds must be at least 1, got {max_rounds}")
    return dr, wng


def _closed_form(setup: Setup):
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
                    dense_oversample: float | None = None) -> SynthesisResult:
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
        White-noise-gain floor (dB; 10 log10 N for uniform weights), against superdirective,
        tolerance-sensitive weights.
    loading : float
        Diagonal loading of the radiated-power matrix relative to its mean diagonal (default
        1e-5, which changes the directivity by well under 0.03 dB and keeps badly conditioned
        problems solvable).
    tol_db : float
        Allowed excess over the constraints on the dense re-check (dB).
    max_rounds : int
        Most adaptive rounds (solves).
    oversample, dense_oversample : float, optional
        Samples per :math:`\lambda/L` of the coarse constraint grid and of the dense check.

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
    smaller spacings it exceeds N with superdirective weights, and a warning says so.

    References
    ----------
    See :mod:`steradian.optimize._convex`.
    """
    t_start = time.perf_counter()
    level_db = _level("psl_db", psl_db)
    _check_common(dynamic_range_db, wng_min_db, tol_db, max_rounds)
    if mask is not None and not isinstance(mask, Mask):
        raise SteradianError("mask must be a steradian.optimize.Mask")
    setup = make_setup(array, weights, symmetry, loading)
    return _max_directivity(setup, t_start=t_start, psl_db=level_db, mainlobe=mainlobe,
                            mask=mask, nulls=nulls, notches=notches, nonnegative=nonnegative,
                            dynamic_range_db=dynamic_range_db, wng_min_db=wng_min_db,
                            tol_db=tol_db, max_rounds=max_rounds, oversample=oversample,
                            dense_oversample=dense_oversample)[0]


def _max_directivity(setup: Setup, *, t_start, psl_db, mainlobe, mask, nulls, notches,
                     nonnegative, dynamic_range_db, wng_min_db, tol_db, max_rounds,
                     oversample, dense_oversample, seed_dirs=None):
    """max_directivity on a prepared setup (the trade curve reuses one setup).

    Returns the result and the sidelobe sample directions of the final solve."""
    level_db = psl_db
    weights = setup.param.weights
    dr, wng = _check_common(dynamic_range_db, wng_min_db, tol_db, max_rounds)
    nl = _nulls(nulls)
    nt = _notches(notches)
    coarse, dense = _spacings(setup, oversample, dense_oversample)
    constrained = (level_db is not None or mask is not None or nl or nt or dr is not None
                   or wng is not None or (weights == "amplitude" and nonnegative))
    notes: list[str] = []
    if not constrained:
        w, _ = _closed_form(setup)
        return _finish(setup, w, method="closed_form", families=[], nulls=[], h=None,
                       dense_spacing=dense, tol_db=tol_db, limit_db=None,
                       certificate={"status": "closed form", "loading": setup.loading},
                       rounds=0, samples=0, notes=notes, t_start=t_start,
                       psl_limit=None), None
    tau = None if level_db is None else 10 ** (level_db / 20)
    families = []
    h = None
    if level_db is not None or mask is not None:
        h = _halfwidths(setup, mainlobe, tau if tau is not None else 10 ** (-25 / 20))
        families.append(SidelobeFamily(setup, h, level_db is not None, mask, coarse, dense))
    families += [NotchFamily(n, coarse, dense) for n in nt]
    null_rows = _null_rows(setup, nl)
    kw = dict(mode="max", tau=tau, nonneg=nonnegative, dr_lin=dr, wng_min=wng, p_max=None,
              tol_db=tol_db, max_rounds=int(max_rounds))
    rowsets = None
    if seed_dirs is not None and families:
        # Start from the coarse grid plus the maxima found for a neighbouring problem.
        rowsets = [Rows(f, setup) for f in families]
        rowsets[0].add(np.vstack([families[0].coarse(), seed_dirs]))
        for rs in rowsets[1:]:
            rs.add(rs.family.coarse())
    try:
        if mask is not None and mask.absolute:
            w, info, rounds, rowsets = _absolute_mask(setup, families, null_rows, kw)
        else:
            w, _, info, rounds, rowsets = _adaptive(setup, families, null_rows,
                                                    rowsets=rowsets, **kw)
    except Infeasible as exc:
        raise _infeasible(exc, setup, families, nl, tau, h, dynamic_range_db, wng_min_db,
                          nonnegative and weights == "amplitude") from None
    res = _finish(setup, w, method="max_directivity", families=families, nulls=nl, h=h,
                  dense_spacing=dense, tol_db=tol_db, limit_db=level_db,
                  certificate=_certificate(info, "max", setup), rounds=rounds,
                  samples=sum(len(r) for r in rowsets), notes=notes, t_start=t_start,
                  psl_limit=tau)
    return res, (rowsets[0].dirs if rowsets else None)


def _absolute_mask(setup, families, null_rows, kw):
    """Meet an absolute (dBi) mask: bisection on the directivity it is taken relative to.

    With the reference directivity D_ref the mask becomes relative, M - D_ref; the optimum
    f(D_ref) falls as D_ref rises. Any D_ref >= f(D_ref) gives weights meeting the absolute
    mask; the bisection finds the smallest such D_ref to 0.005 dB, starting from the
    unconstrained maximum (an upper bound).
    """
    _, pmin = _closed_form(setup)
    hi = 10 * math.log10(4 * math.pi / pmin)
    fam = families[0]
    rowsets = None

    def run(ref):
        nonlocal rowsets
        fam.ref_dbi = ref
        if rowsets is not None:
            for rs in rowsets:
                rs.refresh_bounds()
        w, _, info, rounds, rowsets = _adaptive(setup, families, null_rows, rowsets=rowsets,
                                                **kw)
        return w, info, rounds, 10 * math.log10(4 * math.pi / info["primal_objective"])

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
    dr, wng = _check_common(dynamic_range_db, wng_min_db, tol_db, max_rounds)
    nl = _nulls(nulls)
    nt = _notches(notches)
    setup = make_setup(array, weights, symmetry, loading)
    coarse, dense = _spacings(setup, oversample, dense_oversample)
    _, pmin = _closed_form(setup)
    dmax_dbi = 10 * math.log10(4 * math.pi / pmin)
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
    p_max = 4 * math.pi / 10 ** (target / 10)
    null_rows = _null_rows(setup, nl)
    level = 10 ** (-30 / 20)
    info = {}
    h = None
    for _outer in range(4 if mainlobe is None else 1):
        h = _halfwidths(setup, mainlobe, level)
        families = [SidelobeFamily(setup, h, True, mask, coarse, dense)]
        families += [NotchFamily(n, coarse, dense) for n in nt]
        try:
            w, tau, info, rounds, rowsets = _adaptive(
                setup, families, null_rows, mode="dual", tau=None, nonneg=nonnegative,
                dr_lin=dr, wng_min=wng, p_max=p_max, tol_db=tol_db, max_rounds=int(max_rounds))
        except Infeasible as exc:
            raise _infeasible(exc, setup, families, nl, None, h, dynamic_range_db, wng_min_db,
                              nonnegative and weights == "amplitude") from None
        if abs(20 * math.log10(tau / level)) < 0.05:
            level = tau
            break
        level = tau
    res = _finish(setup, w, method="min_sidelobe", families=families, nulls=nl, h=h,
                  dense_spacing=dense, tol_db=tol_db, limit_db=20 * math.log10(level),
                  certificate=_certificate(info, "dual", setup), rounds=rounds,
                  samples=sum(len(r) for r in rowsets), notes=[], t_start=t_start,
                  psl_limit=level)
    return res
