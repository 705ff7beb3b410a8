r"""FFT path of the pattern engine: planar lattices onto regular u-v grids.

A planar layout whose elements sit on rows of constant y, equally spaced by :math:`d_y`, each
row equally spaced by a common :math:`d_x` but with its own offset :math:`x_{0j}` (rectangular,
triangular and any skew lattice with one primitive vector along x; missing elements are zero
weights), evaluated on the grid :math:`u_p = u_0 + p\Delta u`, :math:`v_q = v_0 + q\Delta v`:

.. math::

    AF_{qp} = e^{jkwz_0} \sum_j e^{jkv_q y_j}\, e^{jku_p x_{0j}}
              \sum_i W_{ji}\, e^{jku_p\, i\, d_x}

Both inner sums are chirp-z transforms :math:`X_p = \sum_i x_i e^{j\alpha p i}` with
:math:`\alpha = k\Delta u\, d_x` (and :math:`k\Delta v\, d_y`), computed by Bluestein's
algorithm with scipy.fft on all cores: exact for any ratio of grid spacing to element spacing
(no zero padding to a multiple, no resampling) and any grid centre. When the weights are
separable, :math:`W = b\,a^T` (tapers that are products of 1-D tapers, phase steering on a
rectangular lattice) and every row has the same offset, the result is the outer product of
two 1-D transforms.

The chirp :math:`e^{j\alpha t^2/2}` has phases up to :math:`\alpha (n+m)^2/2` radians; they
are formed in extended precision (``np.longdouble``) and reduced modulo :math:`2\pi` before
rounding to double, so their error stays at the level of one rounding instead of growing
with :math:`t^2`.

References
----------
L. I. Bluestein, "A linear filtering approach to the computation of the discrete Fourier
transform," *IEEE Trans. Audio Electroacoust.* 18 (1970) 451-455.
L. R. Rabiner, R. W. Schafer and C. M. Rader, "The chirp z-transform algorithm," *IEEE Trans.
Audio Electroacoust.* 17 (1969) 86-92.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.fft as sfft

from ._cache import LRU

__all__ = ["Rows", "detect_rows", "uniform_step", "czt", "lattice_uv", "height_phase"]

_EPS = np.finfo(float).eps
_TWO_PI_L = 8 * np.arctan(np.longdouble(1))  # 2 pi in extended precision where available


@dataclass(frozen=True, eq=False)
class Rows:
    """Row structure of a planar layout: element n at (x0[j_n] + i_n dx, y0 + j_n dy, z0)."""

    i: np.ndarray
    j: np.ndarray
    nx: int
    ny: int
    dx: float
    dy: float
    x0: np.ndarray  # (ny,) row offsets
    y0: float
    z0: float

    @property
    def cells(self) -> int:
        """Size of the padded weight grid (ny * nx)."""
        return self.nx * self.ny

    @property
    def common_offset(self) -> bool:
        return bool(np.all(self.x0 == self.x0[0]))

    def grid(self, weights: np.ndarray) -> np.ndarray:
        """Weights on the padded (ny, nx) grid (zeros where no element sits)."""
        W = np.zeros((self.ny, self.nx), complex)
        np.add.at(W, (self.j, self.i), weights)
        return W

    def factors(self, weights: np.ndarray, tol: float):
        """(b, a) with the weight grid equal to outer(b, a) within tol/10 of sum |w|, when
        every row shares one offset (the chirp-z path then needs two 1-D transforms); else
        None."""
        return _rank1(self.grid(np.asarray(weights, complex)), tol) if self.common_offset \
            else None


def _fit_step(rel: np.ndarray, rough: float, slack: float) -> tuple[float, np.ndarray] | None:
    """Step s and integer indices i with |rel - i s| <= slack (rel >= 0), or None.

    The rough step (a hint or the smallest gap) fixes the indices; the step is then refitted
    from the farthest point so rounding in the rough step does not grow with the index.
    """
    if not rough or rough <= slack:
        return None
    idx = np.round(rel / rough)
    far = int(np.argmax(idx))
    step = float(rel[far] / idx[far]) if idx[far] > 0 else float(rough)
    idx = np.round(rel / step)
    if np.abs(rel - idx * step).max(initial=0.0) > slack:
        return None
    return step, idx.astype(int)


def _slack(pos: np.ndarray, k: float, tol: float) -> float:
    """Largest position error treated as on-lattice: a phase error below tol/10, or rounding."""
    return max(0.1 * tol / k, 16 * _EPS * float(np.abs(pos).max(initial=0.0)))


def detect_rows(positions: np.ndarray, k: float, tol: float,
                hint: tuple[float | None, float | None] | None = None) -> Rows | None:
    """Row structure of ``positions`` within the phase tolerance, or None.

    ``hint`` gives the expected (dx, dy) (from the geometry's lattice vectors); otherwise the
    smallest gaps are tried.
    """
    pos = np.asarray(positions, float)
    n = len(pos)
    if n < 2:
        return None
    slack = _slack(pos, k, tol)
    hx, hy = hint if hint else (None, None)
    z = pos[:, 2]
    if np.ptp(z) > slack:
        return None
    y = pos[:, 1]
    order = np.argsort(y, kind="stable")
    ys = y[order]
    breaks = np.flatnonzero(np.diff(ys) > slack) + 1
    row_vals = np.concatenate([[ys[0]], ys[breaks]])
    if len(row_vals) == 1:
        dy, jr = 1.0, np.zeros(1, int)
    else:
        fit = None
        for rough in (hy, float(np.diff(row_vals).min())):
            fit = _fit_step(row_vals - row_vals[0], rough, slack)
            if fit is not None:
                break
        if fit is None:
            return None
        dy, jr = fit
    ny = int(jr[-1]) + 1
    row_of = np.empty(n, int)
    row_of[order] = np.repeat(np.arange(len(row_vals)), np.diff(np.r_[0, breaks, n]))
    j = jr[row_of]
    x = pos[:, 0]
    xo = np.lexsort((x, j))
    xs, js = x[xo], j[xo]
    same = js[1:] == js[:-1]
    gaps = (xs[1:] - xs[:-1])[same]
    gaps = gaps[gaps > slack]
    roughs = [hx] + ([float(gaps.min())] if len(gaps) else [])
    # One offset for every row if the rows share the x lattice, else one offset per row.
    first = np.ones(len(xs), bool)
    first[1:] = ~same
    per_row = np.zeros(ny)
    per_row[js[first]] = xs[first]
    common = np.full(ny, float(x.min()))
    for x0 in (common, per_row):
        rel = x - x0[j]
        if len(gaps) == 0:  # one element per row
            dx = float(hx) if hx else 1.0
            if np.abs(rel).max() <= slack:
                return Rows(np.zeros(n, int), j, 1, ny, dx, float(dy), x0,
                            float(row_vals[0]), float(z.mean()))
            continue
        for rough in roughs:
            fit = _fit_step(rel, rough, slack)
            if fit is not None:
                dx, i = fit
                # Rows with no elements keep an arbitrary offset; harmless (zero weights).
                return Rows(i, j, int(i.max()) + 1, ny, float(dx), float(dy), x0,
                            float(row_vals[0]), float(z.mean()))
    return None


def uniform_step(vals: np.ndarray) -> float | None:
    """Step of an equally spaced 1-D grid (None if not equally spaced)."""
    v = np.asarray(vals, float)
    if len(v) == 1:
        return 0.0
    step = (v[-1] - v[0]) / (len(v) - 1)
    if step == 0:
        return None
    dev = np.abs(v - (v[0] + step * np.arange(len(v)))).max()
    return float(step) if dev <= 8 * _EPS * max(1.0, np.abs(v).max()) else None


def _chirp(alpha: float, t: np.ndarray) -> np.ndarray:
    """exp(j alpha t^2 / 2) with the phase reduced mod 2 pi in extended precision."""
    tl = t.astype(np.longdouble)
    ph = np.longdouble(alpha) * tl * tl / 2
    ph = ph - _TWO_PI_L * np.round(ph / _TWO_PI_L)
    return np.exp(1j * ph.astype(float))


_KERNELS = LRU(size=32)  # Bluestein chirps and kernel spectra by (alpha, n, m)


def _bluestein(alpha: float, n: int, m: int):
    """Chirps and the FFT of the convolution kernel for an n -> m transform (memoised)."""
    got = _KERNELS.get((alpha, n, m))
    if got is None:
        got = _bluestein_make(alpha, n, m)
        _KERNELS.put((alpha, n, m), got)
    return got


def _bluestein_make(alpha: float, n: int, m: int):
    L = sfft.next_fast_len(n + m - 1)
    c_in = _chirp(alpha, np.arange(n))
    c_out = _chirp(alpha, np.arange(m))
    h = np.zeros(L, complex)
    h[:m] = np.conj(c_out)
    if n > 1:
        h[L - n + 1:] = np.conj(_chirp(alpha, np.arange(n - 1, 0, -1)))
    H = sfft.fft(h)
    for a in (c_in, c_out, H):
        a.setflags(write=False)
    return L, c_in, c_out, H


def czt(x: np.ndarray, alpha: float, m: int, axis: int = -1, workers: int = -1,
        post: np.ndarray | None = None) -> np.ndarray:
    r""":math:`X_p = c_p \sum_{i=0}^{n-1} x_i e^{j\alpha p i}` for p = 0..m-1 along ``axis``.

    Bluestein: :math:`pi = (p^2 + i^2 - (p - i)^2)/2` turns the sum into a convolution of
    :math:`x_i e^{j\alpha i^2/2}` with :math:`e^{-j\alpha t^2/2}`, done by FFTs of length
    :math:`\ge n + m - 1`. ``post`` (length m, default ones) is the optional output factor
    :math:`c_p`, folded into the output chirp.
    """
    x = np.asarray(x, complex)
    axis = axis % x.ndim
    n = x.shape[axis]
    L, c_in, c_out, H = _bluestein(float(alpha), n, int(m))
    shape = [1] * x.ndim
    shape[axis] = -1
    if post is not None:
        c_out = c_out * post
    y = sfft.fft(x * c_in.reshape(shape), n=L, axis=axis, workers=workers)
    y *= H.reshape(shape)
    y = sfft.ifft(y, axis=axis, workers=workers, overwrite_x=True)
    y = y[(slice(None),) * axis + (slice(0, m),)]
    y *= c_out.reshape(shape)
    return y


def _rank1(W: np.ndarray, tol: float):
    """(b, a) with W = outer(b, a) to within tol/10 of sum |W| (l1), or None."""
    jj, ii = np.unravel_index(np.argmax(np.abs(W)), W.shape)
    piv = W[jj, ii]
    if piv == 0:
        return None
    a = W[jj, :].copy()
    b = W[:, ii] / piv
    err = np.abs(W - np.outer(b, a)).sum()
    if err > 0.1 * tol * np.abs(W).sum():
        return None
    return b, a


def lattice_uv(rows: Rows, weights: np.ndarray, k: float, u0: float, du: float, nu: int,
               v0: float, dv: float, nv: int, hemisphere: int, tol: float,
               workers: int = -1) -> np.ndarray:
    """Array factor on the (nv, nu) u-v grid for a row-structured layout; flat (nv*nu,)."""
    W = rows.grid(np.asarray(weights, complex))
    sep = _rank1(W, tol) if rows.common_offset else None
    u = u0 + du * np.arange(nu)
    v = v0 + dv * np.arange(nv)
    # exp(jk u_p i dx) = exp(jk u0 dx i) exp(j (k du dx) p i); likewise for rows. The row
    # height y0 and the common x offset become output factors of the two transforms.
    ai = np.exp(1j * k * u0 * rows.dx * np.arange(rows.nx))
    bj = np.exp(1j * k * v0 * rows.dy * np.arange(rows.ny))
    pu = np.exp(1j * k * rows.x0[0] * u)
    pv = np.exp(1j * k * rows.y0 * v)
    alpha_u = k * du * rows.dx
    alpha_v = k * dv * rows.dy
    if sep is not None:
        b, a = sep
        A = czt(a * ai, alpha_u, nu, workers=workers, post=pu)
        B = czt(b * bj, alpha_v, nv, workers=workers, post=pv)
        out = np.multiply.outer(B, A)
    else:
        S = czt(W * ai, alpha_u, nu, axis=1, workers=workers, post=pu)  # (ny, nu)
        if not rows.common_offset:
            S *= np.exp(1j * k * np.outer(rows.x0 - rows.x0[0], u))
        S *= bj[:, None]
        out = czt(S, alpha_v, nv, axis=0, workers=workers, post=pv)
    height_phase(out, k, rows.z0, u, v, hemisphere)
    return out.ravel()


def height_phase(s: np.ndarray, k: float, z0: float, u, v, hemisphere: int) -> None:
    """Multiply the planar sum ``s`` (nv, nu) on a u-v grid in place by exp(jk w z0), w the
    third direction cosine on the grid's hemisphere (nothing to do for z0 = 0)."""
    if z0 != 0.0:
        w2 = 1.0 - np.asarray(u)[None, :] ** 2 - np.asarray(v)[:, None] ** 2
        s *= np.exp(1j * k * z0 * hemisphere * np.sqrt(np.clip(w2, 0.0, None)))
