"""Part of :mod:`steradian.beamtable` (see the package docstring): batched re-evaluation.

Peaks, sidelobes and quantization lobes of many beams are found by the package's one lobe
search (:mod:`steradian.sphere`): the pattern of every beam on one search set is a single
matrix product with element responses computed once, candidates are the highest local maxima
of each beam's samples, and all candidates of all beams are refined off the set together.
"""

from __future__ import annotations

import math

import numpy as np

from ..array import direction, steering_phases
from ..directions import Directions, angle_between_deg, angles_deg, fibonacci_directions
from ..elements import Isotropic
from ..engine import MEMORY_BUDGET, response_matrix
from ..errors import SteradianError
from ..geometry import principal_axes
from ..metrics import SUM_NULL_DB, coherent_level_db, difference_null
from ..radiation import power_matrix
from ..sphere import SearchSet, refine_best, refine_maxima
from ..units import db10, wrap_deg
from ..validate import positive
from ._metrics import METRIC_FIELDS, BeamMetrics

RESPONSE_BUDGET = 512 * 2**20
"""Default bytes of element responses on the search set a BeamEvaluator keeps (beyond that
they are recomputed chunk by chunk)."""

BEAM_CHUNK_BYTES = 256 * 2**20
"""Default bytes of (directions x beams) work arrays one evaluation pass may use."""

N_CANDIDATES = 24
"""Most local maxima of each beam's samples refined per search (sidelobe, quantization lobe)."""

WINDOW_DB = 3.0
"""Local maxima this far below a beam's highest sample are still refined: at the default six
samples per null width a sidelobe's peak can lie about 2 dB above its best sample."""


MAIN_LOBES = 2.2
"""A difference beam's two main lobes lie within this multiple of the offset of its peak
from the commanded direction: for a uniform line of length D the difference peak is about
0.7 lambda / D off the null and the next null about 1.43 lambda / D, the first difference
sidelobe about 1.9 lambda / D (common practice, from memory), so 2.2 x 0.7 = 1.54 holds both
main lobes and none of the sidelobes."""


def _mirror_element(array) -> bool:
    """True when the element pattern of a planar array (z = 0) has the same magnitude at
    every direction and its mirror image in the array plane (a horizontal dipole, an
    isotropic element): the array's intensity is then mirror-symmetric too, and a beam's
    twin behind the plane is the same beam, not a second peak. Checked on 64 directions."""
    if array.element.front_only:
        return False
    r = fibonacci_directions(64)
    m = r * np.array([1.0, 1.0, -1.0])
    A, B = (response_matrix(array, Directions.from_vectors(v)) for v in (r, m))
    ga = np.sum(np.abs(A[..., 0]) ** 2, axis=0)
    gb = np.sum(np.abs(B[..., 0]) ** 2, axis=0)
    return bool(np.allclose(ga, gb, rtol=1e-9, atol=1e-12 * max(float(ga.max()), 1e-300)))


def _coupling_matrices(n: int, scattering, ports):
    """Checked (S, T) of a coupled evaluator (None, None without coupling)."""
    if scattering is None:
        if ports is not None:
            raise SteradianError("a port-to-current map needs the scattering matrix")
        return None, None
    out = []
    for name, m in (("scattering matrix", scattering), ("port-to-current map", ports)):
        if m is None:
            out.append(None)
            continue
        m = np.asarray(m, complex)
        if m.shape != (n, n) or not np.all(np.isfinite(m)):
            raise SteradianError(f"the {name} must be a finite {n} x {n} matrix (one row and "
                                 f"column per element), got shape {m.shape}")
        out.append(m)
    return out[0], out[1]


class BeamEvaluator:
    """Re-evaluates many beams of one array, reusing the weight-independent work.

    Parameters
    ----------
    array : Array
        Geometry, element and design frequency (its weights are not used).
    per_null : float
        Search-set density: samples per main-lobe null width 2 pi / (k R). Sidelobe and
        quantization-lobe peaks are refined off the set, so this only has to be dense enough
        to separate adjacent lobes (default 6).
    efficiency : float
        Radiation efficiency xi for the gain, 0 < xi <= 1.
    response_budget : int
        Bytes of element responses on the search set kept for the evaluator's life (default
        :data:`RESPONSE_BUDGET`); beyond it they are recomputed chunk by chunk of directions.
    chunk_bytes : int
        Bytes of (directions x beams) work arrays one evaluation pass may use (default
        :data:`BEAM_CHUNK_BYTES`); more beams are evaluated in several passes.
    scattering : ndarray (N, N) complex, optional
        The ports' scattering matrix S (mutual coupling): weights are then incident port
        waves and the realized gain, radiated power and EIRP follow from the accepted power
        (see :class:`BeamMetrics`).
    ports : ndarray (N, N) complex, optional
        With ``scattering``: element currents = ``ports @ a`` (the coupling model's T), so
        the pattern is that of the coupled currents. Without it the pattern is the weights'
        own (the active-mismatch approximation of an S-only coupling).

    Notes
    -----
    The search set is a near-uniform Fibonacci set on the sphere (on the front hemisphere
    for front-radiating elements, and for planar arrays of isotropic elements whose pattern
    is mirror-symmetric in the array plane), or, for a collinear array of isotropic elements
    whose pattern depends only on the angle from the axis, a half great circle from the axis
    to its opposite (:class:`steradian.sphere.SearchSet`). Every pattern value comes from
    :func:`steradian.engine.response_matrix` and the power from
    :func:`steradian.radiation.power_matrix`.
    """

    def __init__(self, array, *, per_null: float = 6.0, efficiency: float = 1.0,
                 response_budget: int = RESPONSE_BUDGET, chunk_bytes: int = BEAM_CHUNK_BYTES,
                 scattering=None, ports=None):
        self.array = array
        self.S, self.T = _coupling_matrices(array.n, scattering, ports)
        self.efficiency = positive("radiation_efficiency", efficiency)
        if self.efficiency > 1:
            raise SteradianError(f"radiation_efficiency must be at most 1, got {efficiency}")
        per_null = positive("per_null", per_null)
        self.chunk_bytes = max(int(chunk_bytes), 1)
        self.Q = power_matrix(array)
        kr = max(array.electrical_radius(), 1.0)
        self.spacing = min(2 * np.pi / kr / per_null, 0.05)
        iso = isinstance(array.element, Isotropic) and array.geometry.orientations is None
        pa = principal_axes(array.positions)
        self.axis = None
        self.mirror = False
        # A collinear array's beam is a cone about its axis: its main lobe is the band of
        # cone angles about the peak's (as the analysis measures it), whatever the element.
        self.cone = pa.axes[0] if pa.dimension <= 1 and array.n > 1 else None
        if pa.dimension <= 1 and iso and array.n > 1:
            a = pa.axes[0]
            self.search = SearchSet.great_circle(
                a, np.cross(a, [0.0, 0.0, 1.0] if abs(a[2]) < 0.9 else [1.0, 0, 0]),
                self.spacing)
            self.axis = a
            self._cut_b = np.cross(self.search.normal, a)  # the circle's mid point
        else:
            front = array.element.front_only and array.geometry.orientations is None
            self.mirror = bool(array.geometry.is_planar and (iso or _mirror_element(array)))
            # Every lobe spans about three spacings or more: eight neighbours.
            self.search = SearchSet.fibonacci(self.spacing, front_only=front or self.mirror, k=8)
        self.dirs = self.search.directions
        self._cache = {}
        self._A0 = self._A1 = None
        self._vector = bool(array.element.vector)
        if len(self.dirs) * array.n * 16 * (2 if self._vector else 1) <= response_budget:
            A = response_matrix(array, Directions.from_vectors(self.dirs))
            self._A0 = np.ascontiguousarray(A[0])
            self._A1 = np.ascontiguousarray(A[1]) if self._vector else None

    @property
    def caches_responses(self) -> bool:
        """True when the element responses on the search set are kept in memory."""
        return self._A0 is not None

    # ---- pattern values ----------------------------------------------------------------
    def _grid(self, W):
        """Intensity on the search set, shape (M, B)."""
        if self._A0 is not None:
            out = np.abs(self._A0 @ W.T) ** 2
            if self._A1 is not None:
                out += np.abs(self._A1 @ W.T) ** 2
            return out
        # Responses too large to keep: recompute them chunk by chunk of directions.
        M = len(self.dirs)
        out = np.empty((M, len(W)))
        step = max(1, MEMORY_BUDGET // (32 * self.array.n))
        for i in range(0, M, step):
            A = response_matrix(self.array, Directions.from_vectors(self.dirs[i:i + step]))
            u = np.abs(A[0] @ W.T) ** 2
            if self._vector:
                u += np.abs(A[1] @ W.T) ** 2
            out[i:i + step] = u
        return out

    def _at(self, dirs, W):
        """Intensity at directions (K, 3) for per-row weights (K, N)."""
        K, N = W.shape
        out = np.empty(K)
        step = max(1, MEMORY_BUDGET // (32 * N))
        for i in range(0, K, step):
            A = response_matrix(self.array, Directions.from_vectors(dirs[i:i + step]))
            w = W[i:i + step]
            u = np.abs(np.einsum("kn,kn->k", A[0], w)) ** 2
            if self._vector:
                u += np.abs(np.einsum("kn,kn->k", A[1], w)) ** 2
            out[i:i + step] = u
        return out

    def _at_groups(self, points, W):
        """Intensity at points (A, S, 3), group a on the pattern of weights W (A, N)."""
        A, S, _ = points.shape
        N = W.shape[1]
        out = np.empty((A, S))
        step = max(1, MEMORY_BUDGET // (32 * N * S))
        for i in range(0, A, step):
            p = points[i:i + step].reshape(-1, 3)
            R = response_matrix(self.array, Directions.from_vectors(p))
            w = W[i:i + step]
            u = np.abs(np.einsum("asn,an->as", R[0].reshape(len(w), S, N), w)) ** 2
            if self._vector:
                u += np.abs(np.einsum("asn,an->as", R[1].reshape(len(w), S, N), w)) ** 2
            out[i:i + step] = u
        return out

    def power(self, W) -> np.ndarray:
        """Radiated power w^H Q w of each row of W (B, N)."""
        return np.einsum("bn,bn->b", W.conj(), W @ self.Q.T).real

    def radiating(self, W) -> np.ndarray:
        """The element excitations that radiate for weights W (B, N): the coupled currents
        ``W @ T.T`` with a port-to-current map, else W itself."""
        return W if self.T is None else W @ self.T.T

    def accepted_fraction(self, W) -> np.ndarray:
        """``a^H (I - S^H S) a / a^H a`` per row of port waves W (B, N); NaN without S."""
        if self.S is None:
            return np.full(len(W), np.nan)
        inc = np.sum(np.abs(W) ** 2, axis=1)
        ref = np.sum(np.abs(W @ self.S.T) ** 2, axis=1)
        return (inc - ref) / inc

    def sample_sidelobes(self, W) -> np.ndarray:
        """Peak sidelobe of each row of W (B, N) relative to its peak, from the search-set
        samples alone (linear intensity ratio; 0 without a sidelobe).

        A screen, not a measurement: a lobe's peak can lie up to about 2 dB above its best
        sample (:data:`WINDOW_DB`). The main lobe is the highest sample and what lies within
        1.5 spacings of it, as in the refined search.
        """
        W = self.radiating(np.atleast_2d(np.asarray(W, complex)))
        out = np.empty(len(W))
        chunk = max(1, int(self.chunk_bytes // (24 * len(self.dirs))))
        for i in range(0, len(W), chunk):
            I = self._grid(W[i:i + chunk])
            b = np.arange(I.shape[1])
            g = I.argmax(axis=0)
            allowed = (self.dirs @ self.dirs[g].T) < math.cos(1.5 * self.spacing)
            idx = self.search.local_maxima(I, 1, allowed)[:, 0]
            side = np.where(idx >= 0, I[np.maximum(idx, 0), b], 0.0)
            out[i:i + chunk] = side / I[g, b]
        return out

    def _refine(self, starts, W):
        """Refined maxima near ``starts`` (K, 3), start k on the pattern of weights W[k]."""
        def fun(points, rows):
            return self._at_groups(points, W[rows])

        return refine_maxima(fun, starts, self.spacing, normal=self.search.normal)

    def _best_lobes(self, I, W, allowed=None):
        """Highest refined local maximum of each beam's samples I (M, B) inside ``allowed``
        (M, B), with its direction (B, 3); value 0 (direction NaN) where there is none.

        Candidates are the local maxima within :data:`WINDOW_DB` of the beam's highest one
        (at most :data:`N_CANDIDATES`): a lobe's peak can lie that far above its best
        sample, so the highest sample need not be on the highest lobe.
        """
        B = len(W)
        cand = self.search.local_maxima(I, N_CANDIDATES, allowed)
        top = np.where(cand[:, 0] >= 0, I[np.maximum(cand[:, 0], 0), np.arange(B)], 0.0)
        level = np.where(cand >= 0, I[np.maximum(cand, 0), np.arange(B)[:, None]], -1.0)
        bi, ki = np.nonzero((cand >= 0) & (level >= top[:, None] * 10 ** (-WINDOW_DB / 10)))
        best = np.zeros(B)
        where = np.full((B, 3), np.nan)

        def fun(points, rows):
            return self._at_groups(points, W[bi[rows]])

        for b, (r, v) in refine_best(fun, self.dirs[cand[bi, ki]], bi, self.spacing,
                                     normal=self.search.normal).items():
            best[b], where[b] = v, r
        return best, where

    def _beam_peaks(self, W, steer):
        """Search-set intensity and the refined main peak (unit vectors, intensity)."""
        I = self._grid(W)
        g = I.argmax(axis=0)
        s = self._steer_start(steer)
        at_s = self._at(s, W)
        starts = np.where((at_s > I[g, np.arange(len(g))])[:, None], s, self.dirs[g])
        peak, v = self._refine(starts, W)
        return I, peak, v

    def _steer_start(self, steer):
        s = np.array(steer, float)
        if self.mirror:
            s[:, 2] = np.abs(s[:, 2])
        if self.axis is not None:
            c = np.clip(s @ self.axis, -1, 1)
            s = c[:, None] * self.axis + np.sqrt(1 - c**2)[:, None] * self._cut_b
        return s

    def _off_peak(self, peak, angle: float) -> np.ndarray:
        """(M, B): search-set samples farther than ``angle`` (rad) from each beam's peak; for
        a collinear array, farther than ``angle`` in cone angle about its axis (the cone
        through the peak is the main lobe, as the analysis has it)."""
        if self.cone is None:
            return (self.dirs @ peak.T) < math.cos(angle)
        c = np.arccos(np.clip(self.dirs @ self.cone, -1, 1))
        c0 = np.arccos(np.clip(np.asarray(peak) @ self.cone, -1, 1))
        return np.abs(c[:, None] - c0[None, :]) > angle

    def _near(self, r, peak, angle: float) -> np.ndarray:
        """(B,): refined maxima ``r`` within ``angle`` of their beam's peak (in cone angle
        for a collinear array); a zero vector (no maximum) is never near."""
        if self.cone is None:
            return np.sum(r * peak, axis=1) > math.cos(angle)
        ok = np.linalg.norm(r, axis=1) > 0.5
        c = np.arccos(np.clip(r @ self.cone, -1, 1))
        c0 = np.arccos(np.clip(peak @ self.cone, -1, 1))
        return ok & (np.abs(c - c0) < angle)

    def _sidelobe(self, I, W, peak):
        """Highest refined local maximum outside the main lobe, per beam (0 if none).

        Candidates lie farther than 1.5 spacings from the peak. A refined maximum that
        climbed back to within half a spacing of the peak is the main lobe, not a sidelobe
        (for a collinear array, in cone angle: the cone through the peak is the main lobe):
        for those beams every candidate is refined on its own and the ones that climbed
        back are dropped (a ring-shaped lobe's ascent can jump the null into the main lobe).
        """
        sp = self.spacing
        allowed = self._off_peak(peak, 1.5 * sp)
        v, r = self._best_lobes(I, W, allowed)
        back = np.flatnonzero(self._near(np.nan_to_num(r), peak, 0.5 * sp))
        if len(back):
            v[back] = self._lobes_off_peak(I[:, back], W[back], allowed[:, back], peak[back])
        return v

    def _lobes_off_peak(self, I, W, allowed, peak):
        """Highest refined maximum per beam among those that did not climb back to the
        peak: every candidate of :meth:`_best_lobes` refined separately (0 if none)."""
        B = len(W)
        cand = self.search.local_maxima(I, N_CANDIDATES, allowed)
        bi, ki = np.nonzero(cand >= 0)
        out = np.zeros(B)
        if not len(bi):
            return out

        def fun(points, rows):
            return self._at_groups(points, W[bi[rows]])

        r, val = refine_maxima(fun, self.dirs[cand[bi, ki]], self.spacing,
                               normal=self.search.normal)
        val = np.ravel(val)
        ok = ~self._near(np.nan_to_num(r), peak[bi], 0.5 * self.spacing)
        np.maximum.at(out, bi[ok], val[ok])
        return out

    def _qlobe(self, W0, W):
        """Peak intensity of the quantization-error pattern of each beam."""
        s = (np.einsum("bn,bn->b", W0.conj(), W) / np.einsum("bn,bn->b", W0.conj(), W0))
        err = W - s[:, None] * W0
        Ie = self._grid(err)
        v, _ = self._best_lobes(Ie, err)
        return np.maximum(v, Ie.max(axis=0)), s

    def _ideal(self, W0, steer, kinds):
        """Peak directivity, sidelobe level (dB) and pointing error (deg) of ideal beams,
        cached by content."""
        diff = kinds != "sum"
        key = (hash(W0.tobytes()), hash(steer.tobytes()), W0.shape, hash(tuple(kinds)))
        if key not in self._cache:
            I0, peak0, ipk0 = self._beam_peaks(W0, steer)
            psl0 = db10(self._lobes(I0, W0, peak0, steer, diff) / ipk0)
            d0 = db10(4 * np.pi * ipk0 / self.power(W0))
            pe0 = self.pointing_error_deg(peak0, steer)
            if diff.any():
                pe0[diff] = self.difference_nulls(W0[diff], steer[diff], kinds[diff])[0]
            if len(self._cache) > 8:
                self._cache.clear()
            self._cache[key] = (d0, psl0, pe0)
        return self._cache[key]

    def _lobes(self, I, W, peak, steer, diff):
        """Sidelobe intensity per beam: :meth:`_sidelobe` for sum beams; for difference beams
        (``diff``) the highest refined lobe of the same candidates farther than
        :data:`MAIN_LOBES` times the main-lobe peak's offset from the commanded direction
        (the two main lobes excluded; a lobe that refines back inside is not counted)."""
        out = self._sidelobe(I, W, peak)
        if diff.any():
            s = self._steer_start(steer[diff])
            off = np.clip(np.sum(peak[diff] * s, axis=1), -1, 1)
            lim = np.cos(np.minimum(MAIN_LOBES * np.arccos(off), np.pi))
            v, r = self._best_lobes(I[:, diff], W[diff], (self.dirs @ s.T) < lim)
            inside = np.sum(np.nan_to_num(r) * s, axis=1) >= lim
            out[diff] = np.where(inside & ~np.isnan(r[:, 0]), 0.0, v)
        return out

    def _refuse_difference(self, W, d, steer, peak) -> None:
        """Refuse a beam whose weights form a difference beam (sum-beam metrics would score
        its twin lobe as a 0 dB sidelobe): array factor at the commanded direction
        :data:`~steradian.metrics.SUM_NULL_DB` or more below its co-phased sum, with the peak
        within a null width of it (as :func:`steradian.metrics.check_sum_beam`)."""
        lvl = coherent_level_db(self.array.positions, self.array.k(), W, steer)
        near = self.pointing_error_deg(peak, steer) < np.rad2deg(
            2 * np.pi / max(self.array.electrical_radius(), 1.0))
        bad = np.flatnonzero((lvl <= SUM_NULL_DB) & near)
        if len(bad):
            b = int(bad[0])
            raise SteradianError(
                f"the beam at theta {d[b, 0]:g}, phi {d[b, 1]:g} deg has a boresight null "
                f"({lvl[b]:.1f} dB): its weights form a difference beam, but the beam is "
                "a sum beam (its twin lobe would score as a 0 dB sidelobe); "
                "use a sum taper and [beams] kinds = [\"sum\", \"difference_az\", ...] for "
                "difference beams")

    def difference_nulls(self, W, steer, kinds) -> tuple[np.ndarray, np.ndarray]:
        """Null offset (deg) and monopulse slope (per deg) of difference beams.

        ``W`` (K, N) weights, ``steer`` (K, 3) commanded unit vectors, ``kinds`` (K,) of
        "difference_az" (difference along x) or "difference_el" (along y; a line: its axis
        for both). The lobes and null come from :func:`steradian.metrics.difference_null`
        along the great circle through the commanded direction, the slope from its
        :meth:`~steradian.metrics.DifferenceNull.slope`, normalised by the uniform beam
        steered to the same direction (the definitions of :mod:`steradian.metrics`).

        Raises
        ------
        SteradianError
            A beam without two lobes beside the commanded direction along its axis, or
            commanded along its difference axis.
        """
        W = np.atleast_2d(W)
        K, N = W.shape
        arr = self.array
        on = np.ones(N, bool) if arr.enabled is None else np.asarray(arr.enabled, bool)
        pa = principal_axes(arr.positions[on])
        span = min(4 * np.pi / max(arr.electrical_radius(), 1.0), 0.5 * np.pi)
        P = self.power(W)
        offset, mono = np.full(K, np.nan), np.full(K, np.nan)
        for k in range(K):
            r0 = steer[k] / np.linalg.norm(steer[k])
            e = (pa.axes[0] if pa.dimension <= 1
                 else np.eye(3)[0 if kinds[k] == "difference_az" else 1])
            t = e - (e @ r0) * r0
            th, ph = angles_deg(r0)
            if np.linalg.norm(t) < 1e-6:
                raise SteradianError(f"the {kinds[k]} beam at theta {th:.2f}, phi {ph:.2f} deg "
                                     "points along its difference axis: no difference pattern")
            t /= np.linalg.norm(t)

            def g(v, w=W[k]):
                v = np.asarray(v, float)
                flat = v.reshape(-1, 3)
                return self._at(flat, np.broadcast_to(w, (len(flat), N))).reshape(v.shape[:-1])

            found = difference_null(g, r0, t, self.spacing, span, line=pa.dimension <= 1)
            if found is None:
                raise SteradianError(f"the {kinds[k]} beam at theta {th:.2f}, phi {ph:.2f} deg "
                                     "has no two lobes beside its commanded direction along "
                                     "its difference axis")
            offset[k] = float(angle_between_deg(found.null[None, :], r0[None, :])[0])
            slope = found.slope(lambda v, p=P[k]: 4 * np.pi * g(v) / p)
            uni = np.where(on, steering_phases(arr.positions, r0, arr.k()), 0.0)
            d_uni = 4 * np.pi * self._at(found.null[None, :], uni[None, :])[0] / self.power(
                uni[None, :])[0]
            mono[k] = slope * (np.pi / 180) / np.sqrt(d_uni)
        return offset, mono

    def pointing_error_deg(self, peak, steer) -> np.ndarray:
        """Angle between refined peaks and commanded directions (cone angle if collinear)."""
        s = self._steer_start(steer) if self.mirror else np.asarray(steer, float)
        if self.axis is not None:
            a = angle_between_deg(peak, self.axis[None, :])
            return np.abs(a - angle_between_deg(s, self.axis[None, :]))
        return angle_between_deg(peak, s)

    def _versus_ideal(self, W, ports, ideal, steer, kind, ipk):
        """Quantization lobe, ideal directivity, sidelobe and pointing, and the RMS phase
        error of the port weights against the ideal ones (W: radiating excitations)."""
        P0 = np.atleast_2d(np.asarray(ideal, complex))
        if P0.shape != W.shape:
            raise SteradianError(f"ideal weights have shape {P0.shape}, expected {W.shape}")
        W0 = self.radiating(P0)
        d0, psl0, pe0 = self._ideal(W0, steer, kind)
        ve, _ = self._qlobe(W0, W)
        s = (np.einsum("bn,bn->b", P0.conj(), ports) / np.einsum("bn,bn->b", P0.conj(), P0))
        ok = (np.abs(P0) > 0) & (np.abs(ports) > 0)
        ph = wrap_deg(np.angle(ports, deg=True) - np.angle(s[:, None] * P0, deg=True))
        rms = np.sqrt(np.nanmean(np.where(ok, ph, np.nan) ** 2, axis=1))
        return db10(ve / ipk), d0, psl0, pe0, rms

    def _power_figures(self, ports, dbi, commanded, element_power_w):
        """Drive loss, radiated power (dB), EIRP (dBW) and realized gain (dBi) per beam."""
        B, N = ports.shape
        p_in = np.sum(np.abs(ports) ** 2, axis=1)
        drive = np.full(B, np.nan) if commanded is None else -db10(
            np.sum(np.abs(np.atleast_2d(np.asarray(commanded, complex))) ** 2, axis=1) / N)
        accepted = self.accepted_fraction(ports)
        coupled = self.S is not None
        realized = dbi + db10(self.efficiency) + db10(accepted)
        radiated = db10(self.efficiency * (p_in * accepted if coupled else p_in) / N)
        eirp = np.full(B, np.nan) if element_power_w is None else (
            db10(positive("element_power_w", element_power_w) * p_in)
            + (realized if coupled else dbi + db10(self.efficiency)))
        return drive, radiated, eirp, realized

    def evaluate(self, W, directions, ideal=None, *, commanded=None,
                 element_power_w: float | None = None, kinds=None) -> BeamMetrics:
        """Metrics of beams with weights W (B, N) commanded to directions (B, 2) in degrees.

        ``ideal`` (B, N): the unquantized weights of each beam, for the loss, the
        quantization-lobe level and the phase error. ``commanded`` (B, N): the nominal
        channel states, for the drive loss; ``element_power_w``: each channel's power at
        full drive, for the EIRP (see :class:`BeamMetrics`). ``kinds`` (B,): each beam's
        kind (default all "sum"); a difference beam gets difference metrics, a "sum" beam
        whose weights form a difference beam is refused.
        """
        W = np.atleast_2d(np.asarray(W, complex))
        d = np.atleast_2d(np.asarray(directions, float))
        B, N = W.shape
        if N != self.array.n:
            raise SteradianError(f"beam weights have {N} elements per beam but the array has "
                                 f"{self.array.n}")
        if d.shape != (B, 2):
            raise SteradianError(f"directions must have shape ({B}, 2), got {d.shape}")
        kind = (np.full(B, "sum", dtype=object) if kinds is None
                else np.array(list(kinds), dtype=object))
        if kind.shape != (B,):
            raise SteradianError(f"kinds must be one per beam: {B} beams, got {kind.size}")
        diff = kind != "sum"
        chunk = max(1, int(self.chunk_bytes // (24 * len(self.dirs))))
        if B > chunk:  # bound the (directions x beams) work arrays
            W0 = None if ideal is None else np.atleast_2d(np.asarray(ideal, complex))
            C = None if commanded is None else np.atleast_2d(np.asarray(commanded, complex))
            parts = [self.evaluate(W[i:i + chunk], d[i:i + chunk],
                                   None if W0 is None else W0[i:i + chunk],
                                   commanded=None if C is None else C[i:i + chunk],
                                   element_power_w=element_power_w,
                                   kinds=None if kinds is None else list(kinds)[i:i + chunk])
                     for i in range(0, B, chunk)]
            return BeamMetrics(**{f: np.concatenate([getattr(p, f) for p in parts])
                                  for f in METRIC_FIELDS})
        steer = np.array([direction(t, p) for t, p in d]).reshape(B, 3)
        ports, W = W, self.radiating(W)
        P = self.power(W)
        if np.any(P <= 0):
            raise SteradianError(f"beam {int(np.flatnonzero(P <= 0)[0])} radiates no power")
        I, peak, ipk = self._beam_peaks(W, steer)
        if not diff.all():
            keep = ~diff
            self._refuse_difference((W if ideal is None else np.atleast_2d(ideal))[keep],
                                    d[keep], steer[keep], peak[keep])
        side = self._lobes(I, W, peak, steer, diff)
        null = np.where(diff, db10(self._at(self._steer_start(steer), W) / ipk), np.nan)
        D = 4 * np.pi * ipk / P
        nan = np.full(B, np.nan)
        qlobe, d0, psl0, pe0, rms = (nan,) * 5 if ideal is None else self._versus_ideal(
            W, ports, ideal, steer, kind, ipk)
        dbi = db10(D)
        th, phi = angles_deg(peak)
        pe, mono = self.pointing_error_deg(peak, steer), np.full(B, np.nan)
        if diff.any():
            pe[diff], mono[diff] = self.difference_nulls(W[diff], steer[diff], kind[diff])
        drive, radiated, eirp, realized = self._power_figures(ports, dbi, commanded,
                                                              element_power_w)
        return BeamMetrics(
            theta_deg=d[:, 0].copy(), phi_deg=d[:, 1].copy(), peak_theta_deg=th,
            peak_phi_deg=phi, directivity_dbi=dbi,
            gain_dbi=dbi + db10(self.efficiency),
            pointing_error_deg=pe,
            psl_db=db10(side / ipk), qlobe_db=qlobe, ideal_directivity_dbi=d0,
            ideal_psl_db=psl0, ideal_pointing_error_deg=pe0, loss_db=d0 - dbi,
            rms_phase_error_deg=rms, drive_loss_db=drive,
            radiated_power_db=radiated, eirp_dbw=eirp,
            null_depth_db=null, monopulse_slope_per_deg=mono, realized_gain_dbi=realized)


