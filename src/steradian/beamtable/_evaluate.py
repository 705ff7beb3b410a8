"""Part of :mod:`steradian.beamtable` (see the package docstring)."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..array import direction
from ..directions import Directions
from ..elements import Isotropic
from ..engine import MEMORY_BUDGET, response_matrix
from ..errors import SteradianError
from ..quantize import wrap_deg
from ..radiation import fibonacci_directions, power_matrix
from ..validate import positive
from . import _table
from ._table import _db, _jsonable

# ---------------------------------------------------------------------------------------
# Evaluation
# ---------------------------------------------------------------------------------------
_METRIC_FIELDS = ("theta_deg", "phi_deg", "peak_theta_deg", "peak_phi_deg", "directivity_dbi",
                  "gain_dbi", "pointing_error_deg", "psl_db", "qlobe_db",
                  "ideal_directivity_dbi", "ideal_psl_db", "ideal_pointing_error_deg", "loss_db",
                  "rms_phase_error_deg")


@dataclass(frozen=True, eq=False)
class BeamMetrics:
    """Per-beam metrics of a beam table, each an array of shape (B,) (see the module notes).

    ``qlobe_db``, ``ideal_*``, ``loss_db`` and ``rms_phase_error_deg`` are NaN when no ideal
    weights were given.
    """

    theta_deg: np.ndarray
    phi_deg: np.ndarray
    peak_theta_deg: np.ndarray
    peak_phi_deg: np.ndarray
    directivity_dbi: np.ndarray
    gain_dbi: np.ndarray
    pointing_error_deg: np.ndarray
    psl_db: np.ndarray
    qlobe_db: np.ndarray
    ideal_directivity_dbi: np.ndarray
    ideal_psl_db: np.ndarray
    ideal_pointing_error_deg: np.ndarray
    loss_db: np.ndarray
    rms_phase_error_deg: np.ndarray

    def __len__(self) -> int:
        return len(self.theta_deg)

    def rows(self) -> list[dict]:
        """One JSON-friendly dict per beam (``beam`` index first)."""
        cols = {f: np.asarray(getattr(self, f), float) for f in _METRIC_FIELDS}
        return [{"beam": i, **{f: _jsonable(cols[f][i]) for f in _METRIC_FIELDS}}
                for i in range(len(self))]

    def summary(self) -> dict:
        """Worst cases over the table."""
        def mx(a):
            a = np.asarray(a, float)
            return None if np.all(np.isnan(a)) else float(np.nanmax(a))

        def mn(a):
            a = np.asarray(a, float)
            return None if np.all(np.isnan(a)) else float(np.nanmin(a))

        def arg(a):
            a = np.asarray(a, float)
            return None if np.all(np.isnan(a)) else int(np.nanargmax(a))

        return {"beams": len(self),
                "directivity_dbi_min": mn(self.directivity_dbi),
                "directivity_dbi_max": mx(self.directivity_dbi),
                "gain_dbi_min": mn(self.gain_dbi),
                "loss_db_max": mx(self.loss_db), "loss_db_max_beam": arg(self.loss_db),
                "loss_db_mean": (None if np.all(np.isnan(self.loss_db))
                                 else float(np.nanmean(self.loss_db))),
                "psl_db_max": mx(self.psl_db), "psl_db_max_beam": arg(self.psl_db),
                "qlobe_db_max": mx(self.qlobe_db), "qlobe_db_max_beam": arg(self.qlobe_db),
                "pointing_error_deg_max": mx(self.pointing_error_deg),
                "pointing_error_deg_max_beam": arg(self.pointing_error_deg),
                "rms_phase_error_deg_max": mx(self.rms_phase_error_deg)}


def _normalise(v):
    return v / np.linalg.norm(v, axis=-1, keepdims=True)


def _frames(r):
    """Orthonormal tangent vectors (e1, e2) at unit vectors r (K, 3)."""
    a = np.where((np.abs(r[:, 2]) < 0.9)[:, None], [0.0, 0.0, 1.0], [1.0, 0.0, 0.0])
    e1 = _normalise(np.cross(a, r))
    return e1, np.cross(r, e1)


def _angle_between(a, b):
    """Angle (degrees) between unit vectors, row-wise, accurate for small angles."""
    return np.rad2deg(np.arctan2(np.linalg.norm(np.cross(a, b), axis=-1),
                                 np.sum(a * b, axis=-1)))


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

    Notes
    -----
    The search set is a near-uniform Fibonacci set on the sphere (on the front hemisphere
    for front-radiating elements, and for planar arrays of isotropic elements whose pattern
    is mirror-symmetric in the array plane), or, for a collinear array of isotropic elements
    whose pattern depends only on the angle from the axis, a half great circle from the axis
    to its opposite. Every pattern value comes from :func:`steradian.engine.response_matrix`
    and the power from :func:`steradian.radiation.power_matrix`.
    """

    def __init__(self, array, *, per_null: float = 6.0, efficiency: float = 1.0):
        self.array = array
        self.efficiency = positive("radiation_efficiency", efficiency)
        if self.efficiency > 1:
            raise SteradianError(f"radiation_efficiency must be at most 1, got {efficiency}")
        per_null = positive("per_null", per_null)
        self.Q = power_matrix(array)
        kr = max(array.electrical_radius(), 1.0)
        self.spacing = min(2 * np.pi / kr / per_null, 0.05)
        pos = array.positions - array.positions.mean(axis=0)
        iso = isinstance(array.element, Isotropic) and array.geometry.orientations is None
        sv = np.linalg.svd(pos, full_matrices=False)
        collinear = array.n == 1 or sv[1][1] <= 1e-9 * max(sv[1][0], 1e-300)
        self.axis = None
        self.mirror = False
        if collinear and iso and array.n > 1:
            a = sv[2][0]
            b = _normalise(np.cross(a, [0.0, 0.0, 1.0] if abs(a[2]) < 0.9 else [1.0, 0, 0]))
            t = np.linspace(0.0, np.pi, max(int(math.ceil(np.pi / self.spacing)) + 1, 8))
            self.dirs = np.cos(t)[:, None] * a + np.sin(t)[:, None] * b
            self.axis, self._cut_b = a, b
            self.normal = np.cross(a, b)
            idx = np.arange(len(t))
            self.nbr = np.stack([np.maximum(idx - 1, 0), np.minimum(idx + 1, len(t) - 1)], 1)
        else:
            front = array.element.front_only and array.geometry.orientations is None
            self.mirror = bool(array.geometry.is_planar and iso)
            half = front or self.mirror
            m = int(4 * np.pi / self.spacing**2 / (2 if half else 1))
            self.dirs = fibonacci_directions(m, half)
            from scipy.spatial import cKDTree

            self.nbr = cKDTree(self.dirs).query(self.dirs, k=9)[1][:, 1:]
        self._cache = {}
        self._A0 = self._A1 = None
        self._vector = bool(array.element.vector)
        if len(self.dirs) * array.n * 16 * (2 if self._vector else 1) <= _table.RESPONSE_BUDGET:
            A = response_matrix(array, Directions.from_vectors(self.dirs))
            self._A0 = np.ascontiguousarray(A[0])
            self._A1 = np.ascontiguousarray(A[1]) if self._vector else None

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

    def power(self, W) -> np.ndarray:
        """Radiated power w^H Q w of each row of W (B, N)."""
        return np.einsum("bn,bn->b", W.conj(), W @ self.Q.T).real

    def _refine(self, starts, W, iters: int = 5):
        """Local maxima of the intensity near ``starts`` (K, 3) for weights W (K, N).

        Newton steps on ln U in the tangent plane from a finite-difference stencil of
        half-width h (centre, +-h along each tangent, one diagonal); a step that is not
        uphill-definite or leaves the stencil moves to the best stencil point instead and
        keeps h, otherwise h shrinks fourfold.
        """
        r = _normalise(np.asarray(starts, float))
        K = len(r)
        if K == 0:
            return r, np.zeros(0)
        h = np.full(K, 0.5 * self.spacing)
        one_d = self.axis is not None
        if one_d:
            sx, sy = np.array([0.0, 1.0, -1.0]), np.zeros(3)
        else:
            sx = np.array([0.0, 1.0, -1.0, 0.0, 0.0, 1.0])
            sy = np.array([0.0, 0.0, 0.0, 1.0, -1.0, 1.0])
        S = len(sx)
        Wr = np.repeat(W, S, axis=0)
        for _ in range(iters):
            if one_d:
                e1 = _normalise(np.cross(self.normal, r))
                e2 = np.zeros_like(e1)
            else:
                e1, e2 = _frames(r)
            pts = _normalise(r[:, None, :] + h[:, None, None] * (
                sx[None, :, None] * e1[:, None, :] + sy[None, :, None] * e2[:, None, :]))
            f = np.log(self._at(pts.reshape(-1, 3), Wr).reshape(K, S) + 1e-300)
            g1 = (f[:, 1] - f[:, 2]) / (2 * h)
            h11 = (f[:, 1] - 2 * f[:, 0] + f[:, 2]) / h**2
            best = f.argmax(axis=1)
            if one_d:
                ok = h11 < 0
                x1 = np.where(ok, -g1 / np.where(ok, h11, -1.0), 0.0)
                x2 = np.zeros(K)
            else:
                g2 = (f[:, 3] - f[:, 4]) / (2 * h)
                h22 = (f[:, 3] - 2 * f[:, 0] + f[:, 4]) / h**2
                h12 = (f[:, 5] - f[:, 1] - f[:, 3] + f[:, 0]) / h**2
                det = h11 * h22 - h12**2
                ok = (h11 < 0) & (det > 0)
                dd = np.where(ok, det, 1.0)
                x1 = np.where(ok, -(h22 * g1 - h12 * g2) / dd, 0.0)
                x2 = np.where(ok, -(h11 * g2 - h12 * g1) / dd, 0.0)
            ok &= np.hypot(x1, x2) <= 1.5 * h
            x1 = np.where(ok, x1, sx[best] * h)
            x2 = np.where(ok, x2, sy[best] * h)
            r = _normalise(r + x1[:, None] * e1 + x2[:, None] * e2)
            h = np.where(ok, 0.25 * h, h)
        return r, self._at(r, W)

    def _local_max(self, I):
        """Boolean (M, B): samples not below any of their neighbours."""
        nmax = I[self.nbr[:, 0]]
        for j in range(1, self.nbr.shape[1]):
            np.maximum(nmax, I[self.nbr[:, j]], out=nmax)
        return I >= nmax

    def _candidates(self, I, k, exclude, radius):
        """Indices (B, k) of the k highest local maxima of I (M, B) farther than ``radius``
        (rad) from ``exclude`` (B, 3); -1 where there are fewer."""
        M, B = I.shape
        out = np.full((B, k), -1, np.int64)
        chunk = max(1, int(2**24 // (8 * M)))
        cosr = math.cos(radius)
        kk = min(k, M)
        for b0 in range(0, B, chunk):
            Ib = I[:, b0:b0 + chunk]
            v = np.where(self._local_max(Ib), Ib, -np.inf)
            v[(self.dirs @ exclude[b0:b0 + chunk].T) > cosr] = -np.inf
            top = np.argpartition(-v, kk - 1, axis=0)[:kk] if kk < M else np.argsort(-v, 0)
            vals = np.take_along_axis(v, top, 0)
            order = np.argsort(-vals, axis=0)
            top = np.take_along_axis(top, order, 0)
            vals = np.take_along_axis(vals, order, 0)
            out[b0:b0 + chunk, :kk] = np.where(np.isfinite(vals), top, -1).T
        return out

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

    def _sidelobe(self, I, W, peak, k: int = 2):
        """Highest refined local maximum outside the main lobe, per beam (0 if none)."""
        B = len(W)
        cand = self._candidates(I, k, peak, 1.5 * self.spacing)
        bi, ki = np.nonzero(cand >= 0)
        best = np.zeros(B)
        if len(bi):
            r, v = self._refine(self.dirs[cand[bi, ki]], W[bi])
            # A start that climbed back into the main lobe is not a sidelobe.
            v = np.where(np.sum(r * peak[bi], axis=1) > math.cos(0.5 * self.spacing), 0.0, v)
            np.maximum.at(best, bi, v)
        return best

    def _ideal(self, W0, steer):
        """Peak directivity and sidelobe level (dB) of ideal beams, cached by content."""
        key = (hash(W0.tobytes()), hash(steer.tobytes()), W0.shape)
        if key not in self._cache:
            I0, peak0, ipk0 = self._beam_peaks(W0, steer)
            psl0 = _db(self._sidelobe(I0, W0, peak0) / ipk0)
            d0 = _db(4 * np.pi * ipk0 / self.power(W0))
            pe0 = self.pointing_error_deg(peak0, steer)
            if len(self._cache) > 8:
                self._cache.clear()
            self._cache[key] = (d0, psl0, pe0)
        return self._cache[key]

    def pointing_error_deg(self, peak, steer) -> np.ndarray:
        """Angle between refined peaks and commanded directions (cone angle if collinear)."""
        s = self._steer_start(steer) if self.mirror else np.asarray(steer, float)
        if self.axis is not None:
            a = np.rad2deg(np.arccos(np.clip(peak @ self.axis, -1, 1)))
            b = np.rad2deg(np.arccos(np.clip(s @ self.axis, -1, 1)))
            return np.abs(a - b)
        return _angle_between(peak, s)

    def evaluate(self, W, directions, ideal=None) -> BeamMetrics:
        """Metrics of beams with weights W (B, N) commanded to directions (B, 2) in degrees.

        ``ideal`` (B, N): the unquantized weights of each beam, for the loss, the
        quantization-lobe level and the phase error.
        """
        W = np.atleast_2d(np.asarray(W, complex))
        d = np.atleast_2d(np.asarray(directions, float))
        B, N = W.shape
        if N != self.array.n:
            raise SteradianError(f"beam weights have {N} elements per beam but the array has "
                                 f"{self.array.n}")
        if d.shape != (B, 2):
            raise SteradianError(f"directions must have shape ({B}, 2), got {d.shape}")
        chunk = max(1, int(_table.BEAM_CHUNK_BYTES // (24 * len(self.dirs))))
        if B > chunk:  # bound the (directions x beams) work arrays
            W0 = None if ideal is None else np.atleast_2d(np.asarray(ideal, complex))
            parts = [self.evaluate(W[i:i + chunk], d[i:i + chunk],
                                   None if W0 is None else W0[i:i + chunk])
                     for i in range(0, B, chunk)]
            return BeamMetrics(**{f: np.concatenate([getattr(p, f) for p in parts])
                                  for f in _METRIC_FIELDS})
        steer = np.array([direction(t, p) for t, p in d]).reshape(B, 3)
        P = self.power(W)
        if np.any(P <= 0):
            raise SteradianError(f"beam {int(np.flatnonzero(P <= 0)[0])} radiates no power")
        I, peak, ipk = self._beam_peaks(W, steer)
        side = self._sidelobe(I, W, peak)
        D = 4 * np.pi * ipk / P
        nan = np.full(B, np.nan)
        qlobe, d0, psl0, pe0, rms = nan, nan, nan, nan, nan
        if ideal is not None:
            W0 = np.atleast_2d(np.asarray(ideal, complex))
            if W0.shape != W.shape:
                raise SteradianError(f"ideal weights have shape {W0.shape}, expected {W.shape}")
            d0, psl0, pe0 = self._ideal(W0, steer)
            s = (np.einsum("bn,bn->b", W0.conj(), W) / np.einsum("bn,bn->b", W0.conj(), W0))
            err = W - s[:, None] * W0
            Ie = self._grid(err)
            _, ve = self._refine(self.dirs[Ie.argmax(axis=0)], err)
            qlobe = _db(np.maximum(ve, Ie.max(axis=0)) / ipk)
            ok = (np.abs(W0) > 0) & (np.abs(W) > 0)
            ph = wrap_deg(np.angle(W, deg=True) - np.angle(s[:, None] * W0, deg=True))
            rms = np.sqrt(np.nanmean(np.where(ok, ph, np.nan) ** 2, axis=1))
        dbi = _db(D)
        th = np.rad2deg(np.arccos(np.clip(peak[:, 2], -1, 1)))
        phi = np.where(np.hypot(peak[:, 0], peak[:, 1]) > 1e-12,
                       np.rad2deg(np.arctan2(peak[:, 1], peak[:, 0])), 0.0)
        return BeamMetrics(
            theta_deg=d[:, 0].copy(), phi_deg=d[:, 1].copy(), peak_theta_deg=th,
            peak_phi_deg=phi, directivity_dbi=dbi,
            gain_dbi=dbi + 10 * np.log10(self.efficiency),
            pointing_error_deg=self.pointing_error_deg(peak, steer),
            psl_db=_db(side / ipk), qlobe_db=qlobe, ideal_directivity_dbi=d0,
            ideal_psl_db=psl0, ideal_pointing_error_deg=pe0, loss_db=d0 - dbi,
            rms_phase_error_deg=rms)


