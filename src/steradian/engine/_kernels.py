"""numba kernels for direct summation. Imported lazily by the engine only.

Every kernel here has an entry in :data:`KERNELS`: its plain-numpy meaning and small random
inputs. The tests run every entry against its meaning, with the JIT on and (in CI) with
``NUMBA_DISABLE_JIT=1``, and check that every jitted function of the package has an entry: a
new kernel is one decorated function plus one :class:`Kernel` entry. The code stays valid
with the JIT disabled.

The complex exponential uses an inlined polynomial sine/cosine that LLVM can vectorise: the
phase is reduced to [-pi, pi] by rounding, halved into [-pi/2, pi/2], evaluated by truncated
Taylor series (degree 19 for sine, 20 for cosine, truncation error below 3e-16) and doubled
back with sin x = 2 s c, cos x = c^2 - s^2. Absolute error per term is a few 1e-16, well
below the 1e-12 relative accuracy the integrator needs.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numba import njit, prange

__all__ = ["Kernel", "KERNELS", "af_direct", "af_direct_serial", "af_rows", "af_rows_serial",
           "af_lattice", "af_lattice_serial", "lattice_chunks", "LATTICE_CHUNK",
           "phase_matrix", "sinc_power",
           "sinc_power_serial", "sincos"]

_TWO_PI = 2.0 * np.pi
_INV_TWO_PI = 1.0 / _TWO_PI
# Cody-Waite split of 2*pi for an accurate reduction.
_TWO_PI_HI = 6.28318530717958623200e00
_TWO_PI_LO = 2.44929359829470635445e-16

# Taylor coefficients (-1)^k / (2k+1)! and (-1)^k / (2k)!
_S = [(-1.0) ** k / float(np.prod(np.arange(1, 2 * k + 2))) for k in range(10)]
_C = [(-1.0) ** k / float(np.prod(np.arange(1, 2 * k + 1))) if k else 1.0 for k in range(11)]
S1, S3, S5, S7, S9, S11, S13, S15, S17, S19 = _S
C0_, C2, C4, C6, C8, C10, C12, C14, C16, C18, C20 = _C


@njit(inline="always", fastmath=True, cache=True)
def _sincos(ph):
    q = np.floor(ph * _INV_TWO_PI + 0.5)
    x = (ph - q * _TWO_PI_HI) - q * _TWO_PI_LO
    h = 0.5 * x
    h2 = h * h
    s = h * (S1 + h2 * (S3 + h2 * (S5 + h2 * (S7 + h2 * (S9 + h2 * (S11 + h2 * (
        S13 + h2 * (S15 + h2 * (S17 + h2 * S19)))))))))
    c = C0_ + h2 * (C2 + h2 * (C4 + h2 * (C6 + h2 * (C8 + h2 * (C10 + h2 * (C12 + h2 * (
        C14 + h2 * (C16 + h2 * (C18 + h2 * C20)))))))))
    return 2.0 * s * c, c * c - s * s


@njit(inline="always", fastmath=True, cache=True)
def _af_one(a, b, c, px, py, pz, wr, wi):
    """sum_n w_n exp(+j (a x_n + b y_n + c z_n)) as (real, imag)."""
    sr = 0.0
    si = 0.0
    for n in range(px.shape[0]):
        sn, cs = _sincos(a * px[n] + b * py[n] + c * pz[n])
        sr += wr[n] * cs - wi[n] * sn
        si += wr[n] * sn + wi[n] * cs
    return sr, si


@njit(parallel=True, fastmath=True, cache=True)
def af_direct(px, py, pz, wr, wi, k, ux, uy, uz, out_re, out_im):  # pragma: no cover - jitted
    """out[m] = sum_n w_n exp(+j k (u_m . r_n)) by direct summation (all threads)."""
    for m in prange(ux.shape[0]):
        out_re[m], out_im[m] = _af_one(k * ux[m], k * uy[m], k * uz[m], px, py, pz, wr, wi)


@njit(fastmath=True, cache=True)
def af_direct_serial(px, py, pz, wr, wi, k, ux, uy, uz, out_re, out_im):  # pragma: no cover
    """As :func:`af_direct` on one thread: small problems skip the thread pool's wake-up
    (and, on a loaded machine, its barrier waits)."""
    for m in range(ux.shape[0]):
        out_re[m], out_im[m] = _af_one(k * ux[m], k * uy[m], k * uz[m], px, py, pz, wr, wi)


@njit(parallel=True, fastmath=True, cache=True)
def af_rows(px, py, pz, wr, wi, k, ux, uy, uz, owner, out_re, out_im):  # pragma: no cover
    """out[m] = sum_n W[owner[m], n] exp(+j k (u_m . r_n)): each direction with its own row
    of the weight matrix W = wr + j wi (B, N), by direct summation (all threads)."""
    for m in prange(ux.shape[0]):
        b = owner[m]
        out_re[m], out_im[m] = _af_one(k * ux[m], k * uy[m], k * uz[m], px, py, pz, wr[b],
                                       wi[b])


@njit(fastmath=True, cache=True)
def af_rows_serial(px, py, pz, wr, wi, k, ux, uy, uz, owner, out_re, out_im):  # pragma: no cover
    """As :func:`af_rows` on one thread."""
    for m in range(ux.shape[0]):
        b = owner[m]
        out_re[m], out_im[m] = _af_one(k * ux[m], k * uy[m], k * uz[m], px, py, pz, wr[b],
                                       wi[b])


LATTICE_CHUNK = 64
"""Most directions of one chunk of the lattice kernels (one beam per chunk)."""


def lattice_chunks(owner_sorted: np.ndarray) -> np.ndarray:
    """Chunk boundaries (C + 1,) of directions sorted by beam: a new chunk where the beam
    changes and every :data:`LATTICE_CHUNK` directions of one beam."""
    ob = np.asarray(owner_sorted)
    m = len(ob)
    idx = np.arange(m)
    change = np.ones(m, bool)
    change[1:] = ob[1:] != ob[:-1]
    run_start = np.maximum.accumulate(np.where(change, idx, 0))
    first = change | ((idx - run_start) % LATTICE_CHUNK == 0)
    return np.append(np.flatnonzero(first), m).astype(np.int64)


@njit(inline="always", fastmath=True, cache=True)
def _lattice_chunk(lo, hi, b, wr, wi, x0, dx, dy, y0, z0, k, ux, uy, uz, out_re, out_im,
                   cr, ci, rr, ri, tr, ti):
    """Directions lo..hi-1, all of beam b, of a planar lattice of rows
    r_ji = (x0[j] + i dx, y0 + j dy, z0): the phase separates into a column factor
    exp(jk u_x i dx) and a row factor, so a direction costs nx + ny sine/cosine pairs and
    one complex product per element instead of a pair per element; the loops run along
    the directions (vectorised)."""
    nx = wr.shape[2]
    n_d = hi - lo
    for i in range(nx):
        for t in range(n_d):
            ci[i, t], cr[i, t] = _sincos(k * ux[lo + t] * (i * dx))
    for j in range(wr.shape[1]):
        for t in range(n_d):
            m = lo + t
            ri[j, t], rr[j, t] = _sincos(k * ux[m] * x0[j] + k * uy[m] * (y0 + j * dy)
                                         + k * uz[m] * z0)
    for t in range(n_d):
        out_re[lo + t] = 0.0
        out_im[lo + t] = 0.0
    for j in range(wr.shape[1]):
        for t in range(n_d):
            tr[t] = 0.0
            ti[t] = 0.0
        for i in range(nx):
            a = wr[b, j, i]
            c = wi[b, j, i]
            if a == 0.0 and c == 0.0:
                continue
            for t in range(n_d):
                tr[t] += a * cr[i, t] - c * ci[i, t]
                ti[t] += a * ci[i, t] + c * cr[i, t]
        for t in range(n_d):
            out_re[lo + t] += tr[t] * rr[j, t] - ti[t] * ri[j, t]
            out_im[lo + t] += tr[t] * ri[j, t] + ti[t] * rr[j, t]


@njit(parallel=True, fastmath=True, cache=True)
def af_lattice(wr, wi, x0, dx, dy, y0, z0, k, ux, uy, uz, owner, starts, out_re,
               out_im):  # pragma: no cover - jitted
    """out[m] = sum_(j,i) W[owner[m], j, i] exp(+j k u_m . r_ji) for a planar lattice of rows,
    r_ji = (x0[j] + i dx, y0 + j dy, z0), W = wr + j wi (B, ny, nx), zero where no element
    sits; directions sorted by ``owner``, in the chunks ``starts`` of
    :func:`lattice_chunks` (all threads)."""
    nx, ny = wr.shape[2], wr.shape[1]
    for c in prange(len(starts) - 1):
        L = LATTICE_CHUNK
        cr, ci = np.empty((nx, L)), np.empty((nx, L))
        rr, ri = np.empty((ny, L)), np.empty((ny, L))
        tr, ti = np.empty(L), np.empty(L)
        _lattice_chunk(starts[c], starts[c + 1], owner[starts[c]], wr, wi, x0, dx, dy, y0,
                       z0, k, ux, uy, uz, out_re, out_im, cr, ci, rr, ri, tr, ti)


@njit(fastmath=True, cache=True)
def af_lattice_serial(wr, wi, x0, dx, dy, y0, z0, k, ux, uy, uz, owner, starts, out_re,
                      out_im):  # pragma: no cover - jitted
    """As :func:`af_lattice` on one thread."""
    nx, ny, L = wr.shape[2], wr.shape[1], LATTICE_CHUNK
    cr, ci = np.empty((nx, L)), np.empty((nx, L))
    rr, ri = np.empty((ny, L)), np.empty((ny, L))
    tr, ti = np.empty(L), np.empty(L)
    for c in range(len(starts) - 1):
        _lattice_chunk(starts[c], starts[c + 1], owner[starts[c]], wr, wi, x0, dx, dy, y0,
                       z0, k, ux, uy, uz, out_re, out_im, cr, ci, rr, ri, tr, ti)


@njit(parallel=True, fastmath=True, cache=True)
def phase_matrix(px, py, pz, k, ux, uy, uz, out):  # pragma: no cover - jitted
    """out[m, n] = exp(+j k (u_m . r_n))."""
    m_count = ux.shape[0]
    n_count = px.shape[0]
    for m in prange(m_count):
        a = k * ux[m]
        b = k * uy[m]
        c = k * uz[m]
        for n in range(n_count):
            sn, cs = _sincos(a * px[n] + b * py[n] + c * pz[n])
            out[m, n] = complex(cs, sn)


@njit(inline="always", fastmath=True, cache=True)
def _sinc_row(m, px, py, pz, wr, wi, k):
    """2 sum_{n > m} Re(w_m conj(w_n)) sinc(k |r_m - r_n|)."""
    s = 0.0
    for n in range(m + 1, px.shape[0]):
        dx = px[m] - px[n]
        dy = py[m] - py[n]
        dz = pz[m] - pz[n]
        x = k * np.sqrt(dx * dx + dy * dy + dz * dz)
        if x < 1e-8:
            sc = 1.0 - x * x / 6.0
        else:
            sn, cs = _sincos(x)
            sc = sn / x
        s += (wr[m] * wr[n] + wi[m] * wi[n]) * sc
    return 2.0 * s


@njit(parallel=True, fastmath=True, cache=True)
def sinc_power(px, py, pz, wr, wi, k):  # pragma: no cover - jitted
    """sum_mn w_m conj(w_n) sinc(k |r_m - r_n|), sinc(x) = sin(x)/x (real part).

    The matrix is symmetric: the diagonal plus twice the upper triangle. Rows m and N-1-m are
    paired in one parallel iteration so every iteration does about N terms.
    """
    n_count = px.shape[0]
    half = (n_count + 1) // 2
    acc = np.zeros(half)
    for t in prange(half):
        s = _sinc_row(t, px, py, pz, wr, wi, k)
        m2 = n_count - 1 - t
        if m2 != t:
            s += _sinc_row(m2, px, py, pz, wr, wi, k)
        acc[t] = s
    return acc.sum() + (wr * wr + wi * wi).sum()


@njit(fastmath=True, cache=True)
def sinc_power_serial(px, py, pz, wr, wi, k):  # pragma: no cover - jitted
    """As :func:`sinc_power` on one thread (small arrays skip the thread pool)."""
    s = 0.0
    for m in range(px.shape[0]):
        s += _sinc_row(m, px, py, pz, wr, wi, k)
    return s + (wr * wr + wi * wi).sum()


sincos = _sincos  # the public name of the polynomial sine/cosine (benchmarks call it)


# ---- registry: every kernel with its plain-numpy meaning ------------------------------------

@dataclass(frozen=True, eq=False)
class Kernel:
    """One numba kernel and what it means.

    Attributes
    ----------
    name : str
        Registry key.
    function : callable
        The jitted function (a plain Python function when the JIT is disabled).
    inputs : callable
        ``inputs(rng)``: a tuple of small random arguments.
    run : callable
        ``run(function, args)``: calls the kernel (allocating its output arrays) and returns
        its result as an array.
    meaning : callable
        ``meaning(args)``: the same result written in plain numpy (the definition).
    tolerance : callable
        ``tolerance(args)``: the largest absolute difference allowed.
    """

    name: str
    function: Callable
    inputs: Callable
    run: Callable
    meaning: Callable
    tolerance: Callable


def _case(rng, n=23, m=17, half=1.5):
    """Positions (3 columns), weights (real, imaginary), k and directions (3 columns)."""
    pos = rng.uniform(-half, half, (n, 3))
    w = rng.normal(size=n) + 1j * rng.normal(size=n)
    d = rng.normal(size=(m, 3))
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    return (*(np.ascontiguousarray(c) for c in pos.T), w.real.copy(), w.imag.copy(),
            2 * np.pi, *(np.ascontiguousarray(c) for c in d.T))


def _phase_meaning(a):
    """exp(+j k (u_m . r_n)) for arguments (px, py, pz, k, ux, uy, uz)."""
    px, py, pz, k, ux, uy, uz = a
    return np.exp(1j * k * (np.outer(ux, px) + np.outer(uy, py) + np.outer(uz, pz)))


def _af_meaning(a):
    return _phase_meaning(a[:3] + a[5:]) @ (a[3] + 1j * a[4])


def _phase_run(f, a):
    out = np.empty((len(a[4]), len(a[0])), complex)
    f(*a, out)
    return out


def _rows_case(rng, beams=3):
    """As :func:`_case` with a weight matrix (beams, N) and an owner row per direction."""
    c = _case(rng)
    n, m = len(c[0]), len(c[6])
    W = rng.normal(size=(beams, n)) + 1j * rng.normal(size=(beams, n))
    owner = rng.integers(0, beams, m).astype(np.int64)
    return (*c[:3], np.ascontiguousarray(W.real), np.ascontiguousarray(W.imag), *c[5:], owner)


def _rows_meaning(a):
    phase = _phase_meaning(a[:3] + a[5:9])
    W = a[3] + 1j * a[4]
    return np.einsum("mn,mn->m", phase, W[a[9]])


def _rows_run(f, a):
    out_re, out_im = np.empty(len(a[6])), np.empty(len(a[6]))
    f(*a, out_re, out_im)
    return out_re + 1j * out_im


def _lattice_case(rng, beams=3, nx=5, ny=4, m=150):
    """Weight grids (beams, ny, nx) with an empty cell, row offsets, steps, directions, and
    owners sorted with their chunks, for the lattice kernels."""
    W = rng.normal(size=(beams, ny, nx)) + 1j * rng.normal(size=(beams, ny, nx))
    W[:, 0, -1] = 0.0  # an empty cell
    d = rng.normal(size=(m, 3))
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    x0 = rng.uniform(-1.0, 0.0, ny)
    owner = np.sort(rng.integers(0, beams, m)).astype(np.int64)
    return (np.ascontiguousarray(W.real), np.ascontiguousarray(W.imag), x0, 0.6, 0.55, -0.8,
            0.3, 2 * np.pi, *(np.ascontiguousarray(c) for c in d.T), owner,
            lattice_chunks(owner))


def _lattice_meaning(a):
    wr, wi, x0, dx, dy, y0, z0, k, ux, uy, uz, owner = a[:12]
    ny, nx = wr.shape[1:]
    jj, ii = np.meshgrid(np.arange(ny), np.arange(nx), indexing="ij")
    pos = np.stack([x0[jj] + ii * dx, y0 + jj * dy, np.full(jj.shape, z0)], -1).reshape(-1, 3)
    d = np.stack([ux, uy, uz], -1)
    W = (wr + 1j * wi).reshape(len(wr), -1)
    return np.einsum("mn,mn->m", np.exp(1j * k * (d @ pos.T)), W[owner])


def _lattice_run(f, a):
    out_re, out_im = np.empty(len(a[8])), np.empty(len(a[8]))
    f(*a, out_re, out_im)
    return out_re + 1j * out_im


def _chunk_case(rng):
    """One chunk of one beam: (lo, hi, b, lattice arguments, outputs, scratch)."""
    a = _lattice_case(rng, m=40)
    m = len(a[8])
    L, nx, ny = LATTICE_CHUNK, a[0].shape[2], a[0].shape[1]
    lo = int(rng.integers(0, m - 10))
    hi = lo + int(rng.integers(1, min(L, m - lo) + 1))
    return (lo, hi, int(rng.integers(0, 3)), *a[:11], np.zeros(m), np.zeros(m),
            np.empty((nx, L)), np.empty((nx, L)), np.empty((ny, L)), np.empty((ny, L)),
            np.empty(L), np.empty(L))


def _chunk_run(f, a):
    f(*a)
    lo, hi = a[0], a[1]
    return a[14][lo:hi] + 1j * a[15][lo:hi]


def _chunk_meaning(a):
    lo, hi, b = a[0], a[1], a[2]
    one = tuple(c[lo:hi] for c in a[11:14])
    return _lattice_meaning((*a[3:11], *one, np.full(hi - lo, b)))


def _af_run(f, a):
    out_re, out_im = np.empty(len(a[6])), np.empty(len(a[6]))
    f(*a, out_re, out_im)
    return out_re + 1j * out_im


def _sinc_matrix(px, py, pz, k):
    """sinc(k |r_m - r_n|) with sinc(x) = sin(x)/x (numpy's sinc is sin(pi x)/(pi x))."""
    r = np.sqrt(np.subtract.outer(px, px) ** 2 + np.subtract.outer(py, py) ** 2
                + np.subtract.outer(pz, pz) ** 2)
    return np.sinc(k * r / np.pi)


def _sinc_meaning(a):
    px, py, pz, wr, wi, k = a
    w = wr + 1j * wi
    return np.real(w @ _sinc_matrix(px, py, pz, k) @ w.conj())


def _sinc_row_meaning(a):
    m, px, py, pz, wr, wi, k = a
    w = wr + 1j * wi
    s = _sinc_matrix(px, py, pz, k)[m, m + 1:]
    return 2 * np.real(w[m] * w[m + 1:].conj()) @ s


def _w_scale(a, off=3):
    return 1e-12 * np.abs(a[off] + 1j * a[off + 1]).sum()


def _entry(name, function, inputs, run, meaning, tolerance):
    return name, Kernel(name, function, inputs, run, meaning, tolerance)


KERNELS: dict[str, Kernel] = dict([
    _entry("sincos", _sincos, lambda rng: (rng.uniform(-1e4, 1e4, 64),),
           lambda f, a: np.array([f(x) for x in a[0]]).T,
           lambda a: np.array([np.sin(a[0]), np.cos(a[0])]),
           lambda a: 2e-15 + 4e-16 * np.abs(a[0])),
    _entry("af_one", _af_one, lambda rng: (*rng.normal(0, 9, 3), *_case(rng)[:5]),
           lambda f, a: complex(*f(*a)),
           lambda a: np.exp(1j * (a[0] * a[3] + a[1] * a[4] + a[2] * a[5])) @ (a[6] + 1j * a[7]),
           lambda a: _w_scale(a, 6)),
    _entry("af_direct", af_direct, _case, _af_run, _af_meaning, _w_scale),
    _entry("af_direct_serial", af_direct_serial, _case, _af_run, _af_meaning, _w_scale),
    _entry("af_rows", af_rows, _rows_case, _rows_run, _rows_meaning,
           lambda a: 1e-12 * np.abs(a[3] + 1j * a[4]).sum(axis=1).max()),
    _entry("af_rows_serial", af_rows_serial, _rows_case, _rows_run, _rows_meaning,
           lambda a: 1e-12 * np.abs(a[3] + 1j * a[4]).sum(axis=1).max()),
    _entry("lattice_chunk", _lattice_chunk, _chunk_case, _chunk_run, _chunk_meaning,
           lambda a: 1e-12 * np.abs(a[3] + 1j * a[4]).sum(axis=(1, 2)).max()),
    _entry("af_lattice", af_lattice, _lattice_case, _lattice_run, _lattice_meaning,
           lambda a: 1e-12 * np.abs(a[0] + 1j * a[1]).sum(axis=(1, 2)).max()),
    _entry("af_lattice_serial", af_lattice_serial, _lattice_case, _lattice_run,
           _lattice_meaning, lambda a: 1e-12 * np.abs(a[0] + 1j * a[1]).sum(axis=(1, 2)).max()),
    _entry("phase_matrix", phase_matrix, lambda rng: (c := _case(rng))[:3] + c[5:],
           _phase_run, _phase_meaning, lambda a: 1e-14),
    _entry("sinc_row", _sinc_row, lambda rng: (int(rng.integers(0, 22)), *_case(rng)[:6]),
           lambda f, a: f(*a), _sinc_row_meaning, lambda a: 1e-12 * len(a[1])),
    _entry("sinc_power", sinc_power, lambda rng: _case(rng)[:6], lambda f, a: f(*a),
           _sinc_meaning, lambda a: 1e-12 * len(a[0]) * (a[3] ** 2 + a[4] ** 2).sum()),
    _entry("sinc_power_serial", sinc_power_serial, lambda rng: _case(rng)[:6],
           lambda f, a: f(*a), _sinc_meaning,
           lambda a: 1e-12 * len(a[0]) * (a[3] ** 2 + a[4] ** 2).sum()),
])
"""Every numba kernel of the package by name (see :class:`Kernel`)."""
