r"""Non-convex synthesis: phase-only weights and array thinning.

Neither problem is convex, so neither result is certified optimal; each uses scipy's
optimisers with the stopping rule stated below, and every result is re-checked on the dense
grid like the convex ones (the reported PSL is the dense value).

* **Phase-only** (:func:`phase_only`): amplitudes fixed (the array's taper), phases free.
  Objective: the largest ratio :math:`|E_i|/(|E_0|\,b_i)` over the sidelobe samples (and
  null directions), smoothed as a log-sum-exp of :math:`p\log` ratios with the sharpness
  p raised 8 -> 32 -> 128, each stage minimised by L-BFGS-B with the analytic gradient
  (stop: projected gradient 1e-9 or 200 iterations), then a final p = 512 stage. Escape from
  local minima by :func:`scipy.optimize.basinhopping` at p = 128 (random phase kicks of
  0.3 rad, ``hops`` hops, stop early after 5 hops without improvement or once the target is
  met, fixed seed). The sidelobe samples grow adaptively
  from the dense check, as in the convex methods (at most ``max_rounds`` rounds).
* **Thinning** (:func:`thin`): each element on (weight = its taper) or off; elements related
  by the layout's point symmetry switch together. Objective: the sampled peak sidelobe ratio,
  plus a penalty when a fill count is asked. Minimised by
  :func:`scipy.optimize.differential_evolution` with integer variables (population 15 per
  variable, ``generations`` generations at most, stop when the population's energy spread
  falls below 1e-3 of its mean, fixed seed), then the dense check.

References
----------
R. L. Haupt, "Thinned arrays using genetic algorithms," *IEEE Trans. Antennas Propag.* 42
(1994) 993-999.
R. Storn and K. Price, "Differential evolution - a simple and efficient heuristic for global
optimization over continuous spaces," *J. Global Optim.* 11 (1997) 341-359.
D. J. Wales and J. P. K. Doye, "Global optimization by basin-hopping ...," *J. Phys. Chem. A*
101 (1997) 5111-5116.
"""

from __future__ import annotations

import math
import time
from dataclasses import replace

import numpy as np

from ..directions import Directions, unit_vectors_deg
from ..engine import response_matrix
from ..errors import SteradianError
from ..units import from_db20
from ..validate import count
from ._check import check_family, field_magnitude
from ._frame import orbits, symmetry_maps
from ._levels import below_peak, halfwidths, null_list, spacings
from ._problem import SidelobeFamily, make_setup
from ._report import finish
from ._result import SynthesisResult

__all__ = ["phase_only", "thin"]


def _responses(array, dirs):
    A = response_matrix(array, Directions.from_vectors(dirs))
    return A[0], (A[1] if array.element.vector else None)


class _Samples:
    """Sidelobe and null samples with their complex responses and bounds."""

    def __init__(self, setup, family, tau, nulls):
        self.setup = setup
        self.family = family
        self.tau = tau
        self.dirs = np.zeros((0, 3))
        self.b = np.zeros(0)
        self.A0 = None
        self.A1 = None
        self.null_dirs = np.array([unit_vectors_deg(n.theta_deg, n.phi_deg)
                                   for n in nulls]).reshape(-1, 3)
        self.null_b = np.array([from_db20(n.depth_db if n.depth_db is not None else -60.0)
                                for n in nulls])
        a0, a1 = _responses(setup.array, setup.r0[None, :])
        self.beam0, self.beam1 = a0, a1
        if len(self.null_dirs):
            self._append(self.null_dirs, self.null_b)

    def _append(self, dirs, b):
        a0, a1 = _responses(self.setup.array, dirs)
        self.dirs = np.vstack([self.dirs, dirs])
        self.b = np.concatenate([self.b, b])
        self.A0 = a0 if self.A0 is None else np.vstack([self.A0, a0])
        if a1 is not None:
            self.A1 = a1 if self.A1 is None else np.vstack([self.A1, a1])

    def add(self, dirs):
        dirs = np.asarray(dirs, float).reshape(-1, 3)
        if len(dirs) == 0:
            return 0
        coef, fixed = self.family.bounds(dirs)
        b = np.minimum(np.where(coef > 0, coef * self.tau, np.inf), fixed)
        keep = np.isfinite(b)
        if np.any(keep):
            self._append(dirs[keep], b[keep])
        return int(keep.sum())

    def fields(self, W):
        """|E_i|^2 for weight columns W (N, P) and |E_0|^2: ((M, P), (P,))."""
        e = np.abs(self.A0 @ W) ** 2
        e0 = np.abs(self.beam0 @ W) ** 2
        if self.A1 is not None:
            e = e + np.abs(self.A1 @ W) ** 2
            e0 = e0 + np.abs(self.beam1 @ W) ** 2
        return e, e0[0] if e0.ndim == 2 else e0


def _logsumexp(z):
    m = np.max(z)
    return m + math.log(np.sum(np.exp(z - m)))


def _phase_objective(samples, amp, idx, p):
    """Soft maximum of log((|E_i|/|E_0| b_i)^2) over the samples, and its gradient."""
    A0 = samples.A0[:, idx]
    A1 = None if samples.A1 is None else samples.A1[:, idx]
    b0 = samples.beam0[0, idx]
    b1 = None if samples.beam1 is None else samples.beam1[0, idx]
    lb2 = 2 * np.log(samples.b)

    def f(phi):
        w = amp * np.exp(1j * phi)
        E = A0 @ w
        e2 = np.abs(E) ** 2
        E0 = b0 @ w
        e02 = abs(E0) ** 2
        if A1 is not None:
            F = A1 @ w
            e2 = e2 + np.abs(F) ** 2
            F0 = b1 @ w
            e02 += abs(F0) ** 2
        e2 = np.maximum(e2, 1e-300)
        z = p * (np.log(e2) - lb2 - math.log(e02))
        val = _logsumexp(z) / p
        s = np.exp(z - np.max(z))
        s /= s.sum()
        # d|E_i|^2/dphi_n = -2 Im(conj(E_i) A_in w_n)
        g_e = -2 * np.imag(np.conj(E)[:, None] * A0 * w[None, :])
        g0 = -2 * np.imag(np.conj(E0) * b0 * w)
        if A1 is not None:
            g_e = g_e - 2 * np.imag(np.conj(F)[:, None] * A1 * w[None, :])
            g0 = g0 - 2 * np.imag(np.conj(F0) * b1 * w)
        grad = (s / e2) @ g_e - g0 / e02
        return val, grad

    return f


_LOCAL = {"jac": True, "method": "L-BFGS-B", "options": {"maxiter": 200, "gtol": 1e-9}}


def _descend(samples, amp, idx, phi, first: bool, hops: int, seed: int, target):
    """One sampling round of the phase search: the sharpening L-BFGS-B stages (8, 32, 128 in
    the first round, 128 after), basin hopping in the first round, then p = 512.

    Returns the phases and the basin-hopping stopping note ("" when it did not run)."""
    from scipy.optimize import basinhopping, minimize

    stop = ""
    for p in ((8.0, 32.0, 128.0) if first else (128.0,)):
        phi = minimize(_phase_objective(samples, amp, idx, p), phi, **_LOCAL).x
    if hops and first:
        f = _phase_objective(samples, amp, idx, 128.0)
        state = {"best": f(phi)[0]}

        def cb(x, fx, accept, state=state):
            state["best"] = min(state["best"], fx)
            return target is not None and state["best"] <= target

        bh = basinhopping(f, phi, niter=hops, stepsize=0.3, niter_success=5, seed=seed,
                          minimizer_kwargs=_LOCAL, callback=cb)
        phi = bh.x
        stop = f"basin hopping: {bh.nit} hops ({bh.message[0] if bh.message else ''})"
    return minimize(_phase_objective(samples, amp, idx, 512.0), phi, **_LOCAL).x, stop


def _add_maxima(array, setup, samples, fam, w, tol_db) -> int:
    """Add the dense-check maxima of weights ``w`` that exceed the largest sidelobe ratio on
    the current samples (nulls excluded) by more than the tolerance; return how many."""
    arr = replace(array, taper=w * np.conj(setup.phases) if array.steering is not None else w)
    e0 = field_magnitude(arr, setup.r0[None, :])[0]
    chk = check_family(arr, fam, e0, 1.0)
    e2, _ = samples.fields(w[:, None])
    k = len(samples.null_b)
    cur = math.sqrt(float(np.max(e2[k:, 0]))) / e0 if len(e2) > k else 0.0
    viol = chk["ratio"] > cur * from_db20(tol_db)
    return samples.add(chk["dirs"][viol])


def phase_only(array, *, psl_db: float | None = None, mainlobe=None, nulls=(),
               hops: int = 10, seed: int = 0, tol_db: float = 0.01, max_rounds: int = 4,
               oversample: float | None = None,
               dense_oversample: float | None = None) -> SynthesisResult:
    """Phase-only synthesis: lowest peak sidelobe level with the array's amplitudes fixed.

    Parameters
    ----------
    array : Array
        Its taper magnitudes (and element mask) are kept; its steering gives the beam.
    psl_db : float, optional
        Target level (negative dB); the optimiser stops improving once the sampled peak is
        below it. Default: minimise the peak sidelobe level.
    mainlobe : float or sequence, optional
        Main-lobe zone half-width(s) in direction cosines; default the Dolph-Chebyshev first
        null at ``psl_db`` (or at -20 dB).
    nulls : sequence
        Directions to suppress, as in :func:`max_directivity`; phase-only nulls are held at
        their ``depth_db`` (default -60 dB) inside the same minimax objective.
    hops : int
        Basin-hopping hops (0: local search only).
    seed : int
        Seed of the random phase kicks (results are reproducible).

    Returns
    -------
    SynthesisResult
        ``method="phase_only"``; ``certificate`` is empty (no optimality certificate) and
        ``notes`` states the stopping rule that ended the search.
    """
    t_start = time.perf_counter()
    level_db = below_peak("psl_db", psl_db)
    nl = null_list(nulls)
    hops = count("hops", hops, minimum=0)
    setup = make_setup(array, "complex", "none", 0.0)
    # Denser starting samples than the convex methods: a local optimiser exploits gaps.
    coarse, dense = spacings(setup, oversample if oversample is not None else 2.0,
                             dense_oversample)
    tau = from_db20(level_db if level_db is not None else -20.0)
    h = halfwidths(setup, mainlobe, tau)
    fam = SidelobeFamily(setup, h, True, None, coarse, dense)
    samples = _Samples(setup, fam, 1.0, nl)
    samples.add(fam.coarse())
    idx = setup.enabled
    amp = np.abs(array.taper[idx])
    if not np.any(amp > 0):
        raise SteradianError("phase_only needs non-zero taper amplitudes")
    phi = np.angle(setup.phases[idx] * array.taper[idx]) if np.any(
        np.iscomplex(array.taper)) else np.angle(setup.phases[idx])
    rng = np.random.default_rng(seed)
    phi = phi + 0.05 * rng.standard_normal(len(phi))
    target = None if level_db is None else 2 * level_db / 20 * math.log(10)
    notes = []
    stop = ""
    rounds = 0
    for rounds in range(1, max_rounds + 1):  # noqa: B007 (rounds reported)
        phi, stop_now = _descend(samples, amp, idx, phi, rounds == 1, hops, seed, target)
        stop = stop_now or stop
        w = np.zeros(array.n, complex)
        w[idx] = amp * np.exp(1j * phi)
        if _add_maxima(array, setup, samples, fam, w, tol_db) == 0:
            break
    notes.append("phase-only (non-convex): L-BFGS-B with a sharpening soft maximum "
                 "(p = 8, 32, 128 then 512; gtol 1e-9, 200 iterations per stage)"
                 + (f"; {stop}" if stop else "") + f"; {rounds} sampling round(s)")
    res = finish(setup, w, method="phase_only", families=[fam] if level_db is not None
                 else [], nulls=nl, h=h, dense_spacing=dense, tol_db=tol_db,
                 limit_db=level_db, certificate={}, rounds=rounds, samples=len(samples.b),
                 notes=notes, t_start=t_start, psl_limit=tau if level_db is not None else None)
    return res


def _thinning_energy(array, samples, idx, G, fill):
    """Vectorised objective of thinning: sampled peak sidelobe ratio of the on/off columns
    (group variables, expanded by ``G``), plus 0.05 per element off the asked fill."""
    ngroups = G.shape[1]
    base = np.zeros(array.n, complex)
    base[idx] = array.weights()[idx]
    A = samples.A0[:, idx] * base[idx][None, :]
    B0 = samples.beam0[0, idx] * base[idx]
    A1 = None if samples.A1 is None else samples.A1[:, idx] * base[idx][None, :]
    B1 = None if samples.beam1 is None else samples.beam1[0, idx] * base[idx]

    def energy(X):
        X = np.atleast_2d(X)
        if X.shape[0] != ngroups:
            X = X.T
        on = G @ np.round(X)  # (ne, P)
        e = np.abs(A @ on) ** 2
        e0 = np.abs(B0 @ on) ** 2
        if A1 is not None:
            e = e + np.abs(A1 @ on) ** 2
            e0 = e0 + np.abs(B1 @ on) ** 2
        val = np.sqrt(e.max(axis=0) / np.maximum(e0, 1e-300))
        cnt = on.sum(axis=0)
        if fill is not None:
            val = val + 0.05 * np.abs(cnt - fill)
        val = np.where(cnt >= 2, val, 10.0)
        return val

    return energy


def thin(array, *, fill: int | None = None, mainlobe=None, generations: int = 300,
         seed: int = 0, symmetric: bool = True, oversample: float | None = None,
         dense_oversample: float | None = None) -> SynthesisResult:
    """Thinning: switch elements off to lower the peak sidelobe level.

    Parameters
    ----------
    array : Array
        Candidate layout; elements keep their taper when on. Already disabled elements stay
        off.
    fill : int, optional
        Number of elements to keep on (a penalty enforces it); default free.
    mainlobe : float or sequence, optional
        Main-lobe zone half-width(s) in direction cosines; default the first null of the
        full (unthinned) aperture's uniform pattern, widened by 20 percent.
    generations : int
        Most differential-evolution generations.
    seed : int
        Random seed (results are reproducible).
    symmetric : bool
        Switch point-symmetric element pairs together (halves the search space).

    Returns
    -------
    SynthesisResult
        ``method="thinning"``; ``array.enabled`` holds the on/off pattern.
    """
    from scipy.optimize import differential_evolution

    t_start = time.perf_counter()
    generations = count("generations", generations)
    setup = make_setup(array, "complex", "none", 0.0)
    idx = setup.enabled
    ne = len(idx)
    if fill is not None:
        fill = count("fill", fill, minimum=2)
        if fill > ne:
            raise SteradianError(f"fill={fill} exceeds the {ne} enabled elements")
    coarse, dense = spacings(setup, oversample if oversample is not None else 2.0,
                             dense_oversample)
    if mainlobe is None:
        h = 1.2 * setup.wavelength / setup.frame.lengths
    else:
        h = halfwidths(setup, mainlobe, None)
    fam = SidelobeFamily(setup, h, True, None, coarse, dense)
    samples = _Samples(setup, fam, 1.0, [])
    samples.add(fam.coarse())
    maps = symmetry_maps(array.positions[idx], setup.frame) if symmetric else {"centro": None}
    groups = (orbits(ne, [maps["centro"]]) if maps["centro"] is not None
              else [np.array([i]) for i in range(ne)])
    G = np.zeros((ne, len(groups)))
    for j, g in enumerate(groups):
        G[g, j] = 1.0
    energy = _thinning_energy(array, samples, idx, G, fill)

    res = differential_evolution(
        energy, [(0, 1)] * len(groups), integrality=np.ones(len(groups), bool),
        maxiter=generations, popsize=15, tol=1e-3, seed=seed, polish=False,
        vectorized=True, updating="deferred", init="sobol")
    on = G @ np.round(res.x) > 0.5
    enabled = np.zeros(array.n, bool)
    enabled[idx[on]] = True
    arr = replace(array, enabled=enabled)
    setup2 = make_setup(arr, "complex", "none", 0.0)
    w = arr.weights()
    notes = [f"thinning (non-convex): differential evolution, {res.nit} generations "
             f"(stop: {res.message}); {int(on.sum())} of {ne} elements on"]
    return finish(setup2, w, method="thinning", families=[], nulls=[], h=h,
                  dense_spacing=dense, tol_db=0.01, limit_db=None, certificate={},
                  rounds=1, samples=len(samples.b), notes=notes, t_start=t_start,
                  psl_limit=None)
