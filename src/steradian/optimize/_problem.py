"""The synthesis problem on the array's real geometry: beam direction, weight parametrisation,
power matrix, per-sample constraint rows and the constraint families."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal, get_args

import numpy as np

from ..array import steering_phases
from ..directions import (
    Directions,
    angle_between_deg,
    angles_of,
    fibonacci_directions,
    unit_vectors,
)
from ..engine import response_matrix
from ..errors import SteradianError
from ..units import from_db20
from ..validate import choice
from ._domain import Domain, choose_domain
from ._frame import Frame, Param, chebyshev_null, frame_of, parametrise, symmetry_maps
from ._masks import Mask, Notch
from ._power import reduced_power, reference_reduced_power

__all__ = ["Setup", "make_setup", "reduced_power_matrix", "Rows", "rows_at", "SidelobeFamily",
           "NotchFamily", "WeightsKind", "SymmetryKind", "cholesky"]

WeightsKind = Literal["complex", "amplitude"]
SymmetryKind = Literal["auto", "none", "centro", "quadrant"]

_REAL_TOL = 1e-9
_CHUNK = 2048


def cholesky(M: np.ndarray, what: str) -> np.ndarray:
    """Lower Cholesky factor of ``M``, or an error naming the ``what`` matrix."""
    try:
        return np.linalg.cholesky(M)
    except np.linalg.LinAlgError:
        raise SteradianError(f"the {what} matrix is not positive definite; raise the diagonal "
                             "loading") from None


@dataclass(eq=False)
class Setup:
    """Everything the solvers share for one array."""

    array: object
    enabled: np.ndarray
    r0: np.ndarray
    phases: np.ndarray
    frame: Frame
    domain: Domain
    param: Param
    Q: np.ndarray | None  # not kept (the reduced Qs is built without it)
    Qs: np.ndarray
    loading: float
    c0: np.ndarray
    g_wng: np.ndarray
    vector: bool
    _whiten: np.ndarray | None = None

    @property
    def n(self) -> int:
        return self.param.n

    @property
    def wavelength(self) -> float:
        return self.array.wavelength

    def weights(self, x) -> np.ndarray:
        return self.param.T @ np.asarray(x, float)

    def wng(self, w) -> float:
        """White-noise gain |E0|^2 / sum g_n |w_n|^2 (N for uniform weights)."""
        e0 = self.e0(w)
        den = float(np.sum(self.g_wng * np.abs(w) ** 2))
        return e0**2 / den if den > 0 else 0.0

    def e0(self, w) -> float:
        A = response_matrix(self.array, Directions.from_vectors(self.r0[None, :]))
        e = A[:, 0, :] @ w
        return float(np.sqrt(np.sum(np.abs(e) ** 2)))

    def whitener(self) -> np.ndarray:
        """L^{-T} with L L^T = Q_s (computed once)."""
        if self._whiten is None:
            from scipy.linalg import solve_triangular

            L = cholesky(self.Qs, "radiated-power")
            self._whiten = solve_triangular(L, np.eye(self.n), lower=True).T
        return self._whiten

    def halfwidths(self, level: float) -> np.ndarray:
        """Default main-lobe zone: first null of the equivalent Dolph-Chebyshev line along
        each principal axis at ``level`` (linear)."""
        fr = self.frame
        out = []
        for L in fr.lengths:
            n = max(int(round(L / fr.spacing)), 2)
            out.append(chebyshev_null(level, n, L / n / self.wavelength))
        return np.array(out)


def _beam(array) -> np.ndarray:
    if array.steering is not None:
        return array.steering.unit
    return np.array([0.0, 0.0, 1.0])


def rows_at(setup_like, dirs: np.ndarray, T: np.ndarray | None = None):
    """Constraint rows at unit vectors ``dirs`` (M, 3).

    Returns ``(real, H, V)``: ``real`` (M,) bool marks samples whose field is a fixed complex
    vector times a real linear form ``H[i] @ x`` (then |E| = |H[i] x|); ``V`` (M, k, n) holds
    the real and imaginary parts of the field components (|E| = ||V[i] x||) for every sample.
    """
    array = setup_like.array
    T = setup_like.param.T if T is None else T
    vector = setup_like.vector
    M = len(dirs)
    n = T.shape[1]
    k = 4 if vector else 2
    real = np.zeros(M, bool)
    H = np.zeros((M, n))
    V = np.zeros((M, k, n))
    for s in range(0, M, _CHUNK):
        d = dirs[s:s + _CHUNK]
        A = response_matrix(array, Directions.from_vectors(d))
        B = _times(A, T)  # (2, m, n)
        nrm2 = np.abs(B[0]) ** 2 + np.abs(B[1]) ** 2
        j = np.argmax(nrm2, axis=1)
        m = len(d)
        ii = np.arange(m)
        big = np.sqrt(nrm2[ii, j])
        u = B[:, ii, j] / np.where(big > 0, big, 1.0)  # (2, m)
        h = (np.conj(u[0])[:, None] * B[0] + np.conj(u[1])[:, None] * B[1]).real
        resid = np.abs(B - u[:, :, None] * h[None]).max(axis=(0, 2))
        # A sample where every column's field vanishes (an exact null of the layout) is
        # real too: its constraint holds for any x.
        real[s:s + m] = resid <= _REAL_TOL * np.maximum(big, 1e-3 * float(big.max(initial=0)))
        H[s:s + m] = h
        V[s:s + m, 0] = B[0].real
        V[s:s + m, 1] = B[0].imag
        if vector:
            V[s:s + m, 2] = B[1].real
            V[s:s + m, 3] = B[1].imag
    return real, H, V


def given_power(P, n: int) -> np.ndarray:
    """A caller's power matrix checked: N x N, finite, Hermitian to 1e-9 (returned exactly
    Hermitian)."""
    P = np.asarray(P, complex)
    if P.shape != (n, n) or not np.all(np.isfinite(P)):
        raise SteradianError(f"power_matrix must be a finite {n} x {n} matrix, got shape "
                             f"{P.shape}")
    if np.abs(P - P.conj().T).max() > 1e-9 * np.abs(P).max():
        raise SteradianError("power_matrix must be Hermitian")
    return 0.5 * (P + P.conj().T)


def _times(A: np.ndarray, T) -> np.ndarray:
    """A @ T for responses A (2, m, N) and the parametrisation T (N, n), using T's sparsity
    (a few non-zeros per column: symmetry orbits) when that is cheaper."""
    import scipy.sparse as sp

    if not sp.issparse(T):
        nnz = np.count_nonzero(T)
        if nnz > 0.05 * T.size:
            return A @ T
        T = sp.csr_matrix(T)
    Tt = T.T.tocsr()
    return np.stack([(Tt @ A[c].T).T for c in range(A.shape[0])])


@dataclass(eq=False)
class _Probe:
    array: object
    param: Param
    vector: bool


def make_setup(array, weights: str = "complex", symmetry: str = "auto",
               loading: float = 1e-5, power_matrix=None) -> Setup:
    """Prepare the problem data for ``array`` (beam = its steering direction, else +z).

    ``power_matrix`` (N x N Hermitian positive definite, engine units) replaces the
    radiated-power matrix in the objective (e.g. the available power of coupled ports
    expressed in element currents, :class:`steradian.coupling.CoupledProblem`); with it,
    ``symmetry="auto"`` uses no symmetry (a complex Hermitian P breaks the conjugate
    symmetry of the optimum)."""
    return _prepare(array, weights, symmetry, loading, "auto", power_matrix)


def _prepare(array, weights, symmetry, loading, power_form, power_matrix=None) -> Setup:
    choice("weights", weights, get_args(WeightsKind))
    choice("symmetry", symmetry, get_args(SymmetryKind))
    if not (math.isfinite(float(loading)) and float(loading) >= 0):
        raise SteradianError(f"loading must be zero or positive, got {loading}")
    N = array.n
    enabled = np.arange(N) if array.enabled is None else np.flatnonzero(array.enabled)
    pos = array.positions
    frame = frame_of(pos[enabled])
    r0 = _beam(array)
    phases = steering_phases(pos, r0, array.k())
    vector = bool(array.element.vector)
    if symmetry == "quadrant" and weights != "amplitude":
        raise SteradianError("symmetry='quadrant' applies to amplitude-only tapers "
                             "(weights='amplitude')")
    if symmetry == "quadrant" and frame.rank != 2:
        raise SteradianError("symmetry='quadrant' needs a planar layout")
    resolved = symmetry
    if symmetry == "auto" and power_matrix is not None:
        resolved = "none"  # the conjugate-symmetric optimum needs a real power matrix
    elif symmetry == "auto":
        maps = symmetry_maps(pos[enabled], frame)
        resolved = "centro" if maps["centro"] is not None else "none"
    param = parametrise(pos, enabled, phases, frame, weights, resolved)
    if symmetry == "auto" and resolved == "centro":
        # The conjugate-symmetric reduction is exact only when every sample's field is a
        # fixed vector times a real form; check on probe directions (else keep all unknowns).
        probe = np.vstack([r0[None, :], fibonacci_directions(48)])
        real, _, _ = rows_at(_Probe(array, param, vector), probe)
        if not real.all():
            resolved = "none"
            param = parametrise(pos, enabled, phases, frame, weights, "none")
    if power_matrix is not None:
        Qs, delta = reference_reduced_power(array, param.T, enabled, loading,
                                            given_power(power_matrix, N))
    else:
        Qs, delta = reduced_power(array, param.T, enabled, loading, power_form)
    A0 = response_matrix(array, Directions.from_vectors(r0[None, :]))
    g = np.abs(A0[0, 0]) ** 2 + np.abs(A0[1, 0]) ** 2
    g = np.where(np.isin(np.arange(N), enabled), g, 0.0)
    if not np.any(g > 0):
        raise SteradianError("the elements do not radiate toward the beam direction")
    _, H0, V0 = rows_at(_Probe(array, param, vector), r0[None, :])
    c0 = H0[0]
    domain = choose_domain(array, frame, r0)
    return Setup(array, enabled, r0, phases, frame, domain, param, None, Qs, delta, c0, g,
                 vector)


def reduced_power_matrix(array, weights: str = "complex", symmetry: str = "auto",
                         loading: float = 1e-5, form: str = "auto") -> np.ndarray:
    """The loaded radiated-power matrix in the synthesis unknowns, :math:`\\Re\\,T^H(Q +
    \\delta I)T`, by ``form`` "structured" (one kernel value per distinct element
    separation, never the N x N matrix), "dense" (the plain product with
    :func:`steradian.radiation.power_matrix`) or "auto" (the one synthesis uses)."""
    return _prepare(array, weights, symmetry, loading, form).Qs


# ---- constraint families ---------------------------------------------------------------------

class SidelobeFamily:
    """Sidelobe level and/or mask over the domain outside the main-lobe zone.

    Bounds are field ratios relative to the field at the beam direction: ``coef * tau`` for
    the peak-sidelobe constraint (coef 1 where it applies), ``fixed`` for the mask.
    """

    name = "sidelobes"

    def __init__(self, setup: Setup, halfwidths, psl: bool, mask: Mask | None,
                 coarse_spacing: float, dense_spacing: float):
        self.setup = setup
        self.domain = setup.domain
        self.h = np.asarray(halfwidths, float)
        self.psl = bool(psl)
        self.mask = mask
        self.ref_dbi: float | None = None
        self.coarse_spacing = coarse_spacing
        self.dense_spacing = dense_spacing

    def in_zone(self, dirs) -> np.ndarray:
        E = self.setup.frame.axes[:, : self.setup.frame.rank]
        q = (dirs - self.setup.r0) @ E
        return np.sum((q / self.h) ** 2, axis=1) < 1.0

    def _mask_linear(self, dirs) -> np.ndarray:
        r0 = self.setup.r0
        dom = self.domain

        def rel(gamma):
            return from_db20(self.mask.relative_db(gamma, self.ref_dbi))

        def gam(d):
            return angle_between_deg(d, r0)

        if dom.symmetric == "mirror":
            e3 = dom.e3
            mirror = dirs - 2 * np.outer(dirs @ e3, e3)
            return np.minimum(rel(gam(dirs)), rel(gam(mirror)))
        if dom.symmetric == "cone":
            u = dirs @ dom.e1
            u0 = r0 @ dom.e1
            phi = np.linspace(0, np.pi, 37)
            c = (np.multiply.outer(u * u0, np.ones_like(phi))
                 + np.multiply.outer(np.sqrt(1 - u**2) * math.sqrt(max(1 - u0**2, 0)),
                                     np.cos(phi)))
            g = np.degrees(np.arccos(np.clip(c, -1, 1)))
            return rel(g).min(axis=1)
        return rel(gam(dirs))

    def bounds(self, dirs):
        """(coef, fixed) per direction; zone directions get coef 0 and fixed inf."""
        zone = self.in_zone(dirs)
        coef = np.where(zone, 0.0, 1.0 if self.psl else 0.0)
        fixed = np.full(len(dirs), np.inf)
        if self.mask is not None:
            fixed = np.where(zone, np.inf, self._mask_linear(dirs))
        return coef, fixed

    def coarse(self) -> np.ndarray:
        d = np.vstack([self.domain.grid(self.coarse_spacing),
                       self.domain.zone_ring(self.h * (1 + 1e-9), self.coarse_spacing)])
        return self.fold(d)

    def fold(self, dirs) -> np.ndarray:
        """Constraint samples less those the weights' symmetry makes repeat.

        A quadrant-symmetric amplitude taper of isotropic elements radiates a field that
        depends on :math:`|u - u_0|` and :math:`|v - v_0|` alone (a sum of
        :math:`\\cos k(u-u_0)x_a \\cos k(v-v_0)y_a` terms), so a sample whose mirror image
        about :math:`u = u_0` (or :math:`v = v_0`) is visible carries the same constraint as
        that image: only one is kept (about a quarter of the samples at broadside). The
        dense check still covers every direction. Sidelobe limits only (a mask depends on
        the angle from the beam, which the mirror changes)."""
        st = self.setup
        dom = self.domain
        if (st.param.symmetry != "quadrant" or dom.kind != "plane"
                or dom.symmetric != "mirror" or self.mask is not None or len(dirs) == 0):
            return dirs
        u, v = dirs @ dom.e1, dirs @ dom.e2
        u0, v0 = st.r0 @ dom.e1, st.r0 @ dom.e2
        drop_u = (u < u0) & ((2 * u0 - u) ** 2 + v**2 <= 1.0)
        drop_v = (v < v0) & (u**2 + (2 * v0 - v) ** 2 <= 1.0)
        return dirs[~(drop_u | drop_v)]

    def dense(self) -> np.ndarray:
        return np.vstack([self.domain.grid(self.dense_spacing, shifted=True),
                          self.domain.zone_ring(self.h * (1 + 1e-9), self.dense_spacing)])

    def neighbourhood(self, dirs, step, m=3):
        """Domain neighbourhoods with points inside the main-lobe zone moved onto its
        boundary (so a maximum on the boundary is reached, not rejected)."""
        cand = self.domain.neighbourhood(dirs, step, m)
        dom = self.domain
        if dom.kind == "sphere":
            return cand
        K, P, _ = cand.shape
        flat = cand.reshape(-1, 3)
        inside = self.in_zone(flat)
        if not np.any(inside):
            return cand
        r0 = self.setup.r0
        if dom.kind == "line":
            u0 = r0 @ dom.e1
            q = flat[inside] @ dom.e1 - u0
            sgn = np.where(q >= 0, 1.0, -1.0)
            flat[inside] = dom.from_u(u0 + sgn * self.h[0] * (1 + 1e-9))
        else:
            u0, v0 = r0 @ dom.e1, r0 @ dom.e2
            q = np.column_stack([flat[inside] @ dom.e1 - u0, flat[inside] @ dom.e2 - v0])
            rho = np.sqrt(np.sum((q / self.h[:2]) ** 2, axis=1))
            q = q / np.maximum(rho, 1e-300)[:, None] * (1 + 1e-9)
            q = np.where(rho[:, None] > 0, q, np.array([[self.h[0] * (1 + 1e-9), 0.0]]))
            s = np.where(flat[inside] @ dom.e3 < 0, -1.0, 1.0)
            flat[inside] = dom.from_uv(u0 + q[:, 0], v0 + q[:, 1], s)
        return flat.reshape(K, P, 3)

    def keys(self, dirs):
        dom = self.domain
        if dom.kind == "line":
            return (dirs @ dom.e1)[:, None]
        if dom.kind == "plane":
            return np.column_stack([dirs @ dom.e1, dirs @ dom.e2, 4.0 * np.sign(dirs @ dom.e3)])
        return dirs


class NotchFamily:
    """A sector held below a depth (relative to the field at the beam direction)."""

    psl = False

    def __init__(self, notch: Notch, coarse_spacing: float, dense_spacing: float):
        self.notch = notch
        self.name = (f"notch theta {notch.theta_deg[0]:g}-{notch.theta_deg[1]:g}, phi "
                     f"{notch.phi_deg[0]:g}-{notch.phi_deg[1]:g}")
        self.depth = from_db20(notch.depth_db)
        self.coarse_spacing = coarse_spacing
        self.dense_spacing = dense_spacing

    def bounds(self, dirs):
        inside = self.notch.contains(dirs)
        return np.zeros(len(dirs)), np.where(inside, self.depth, np.inf)

    def coarse(self):
        return self.notch.samples(self.coarse_spacing)

    def dense(self):
        return self.notch.samples(self.dense_spacing)

    def neighbourhood(self, dirs, step, m=3):
        """Local (theta, phi) grids clipped into the sector, so its edges are reachable."""
        d = np.asarray(dirs, float).reshape(-1, 3)
        th, ph = angles_of(d)
        lo = math.radians(self.notch.phi_deg[0])
        ph = lo + np.mod(ph - lo, 2 * math.pi)
        o = step * np.arange(-m, m + 1)
        oa, ob = np.meshgrid(o, o, indexing="ij")
        t = th[:, None] + oa.ravel()[None, :]
        p = ph[:, None] + ob.ravel()[None, :] / np.maximum(np.sin(th), 1e-3)[:, None]
        t = np.clip(t, *np.radians(self.notch.theta_deg))
        p = np.clip(p, *np.radians(self.notch.phi_deg))
        return unit_vectors(t, p)

    def keys(self, dirs):
        return dirs


class Rows:
    """Accumulated constraint samples of one family with their rows and bounds."""

    def __init__(self, family, setup: Setup):
        self.family = family
        self.setup = setup
        self.dirs = np.zeros((0, 3))
        self.real = np.zeros(0, bool)
        self.H = np.zeros((0, setup.n))
        self.V = np.zeros((0, 4 if setup.vector else 2, setup.n))
        self.coef = np.zeros(0)
        self.fixed = np.zeros(0)

    def add(self, dirs) -> int:
        dirs = np.asarray(dirs, float).reshape(-1, 3)
        if len(dirs) == 0:
            return 0
        coef, fixed = self.family.bounds(dirs)
        keep = (coef > 0) | np.isfinite(fixed)
        dirs, coef, fixed = dirs[keep], coef[keep], fixed[keep]
        if len(dirs) == 0:
            return 0
        real, H, V = rows_at(self.setup, dirs)
        self.dirs = np.vstack([self.dirs, dirs])
        self.real = np.concatenate([self.real, real])
        self.H = np.vstack([self.H, H])
        self.V = np.concatenate([self.V, V])
        self.coef = np.concatenate([self.coef, coef])
        self.fixed = np.concatenate([self.fixed, fixed])
        return len(dirs)

    def refresh_bounds(self) -> None:
        """Recompute bounds (after an absolute mask's reference directivity changed)."""
        if len(self.dirs):
            self.coef, self.fixed = self.family.bounds(self.dirs)

    def __len__(self):
        return len(self.dirs)
