r"""Cost model of the pattern engine: which path evaluates an array factor fastest.

Each path has an estimated run time in seconds from the problem's sizes; the engine takes the
cheapest path that meets the tolerance, and keeps direct summation unless another path is
estimated at least :data:`MARGIN` times faster (so an estimate that is off by that factor still
never makes a task slower than direct summation). The constants were fitted to timings on the
2-core development machine (``benchmarks/bench_scale.py`` checks the choices against measured
times); only their ratios matter for the choice.

Sizes: N elements, M directions; for the transforms the half-widths :math:`X_i` of the scaled
positions :math:`k r_{n,i}` and :math:`S_i` of the direction cosines set the size of the
oversampled grid, :math:`n_i \approx 2\sigma X_i S_i/\pi + w` per dimension, with kernel width
w from the tolerance.
"""

from __future__ import annotations

import math
import os

__all__ = ["MARGIN", "reference", "direct", "lattice", "nufft3", "nufft1", "fft_lattice",
           "kernel_width",
           "lattice_gram", "sinc_matrix",
           "grid3", "SERIAL_TERMS", "SINC_SERIAL_PAIRS", "NUFFT_OVERHEAD", "FFT_OVERHEAD",
           "GRID_LIMIT", "sinc_pairs",
           "per_direction", "THREADS_FROM"]

MARGIN = 1.5
"""A fast path must be estimated this many times faster than direct summation."""

# Direct summation (numba, inlined polynomial sin/cos): terms per second and call overhead.
SERIAL_TERMS = 2_000_000  # below this many terms, one thread (no pool wake-up)
_R_SERIAL = 4.0e8
_R_PARALLEL = 6.0e8
_C_SERIAL = 4e-6
_C_PARALLEL = 6e-5
# Direct summation on a planar lattice of rows (the lattice kernels): weight-grid cells and
# row and column phase factors per second, per direction (one thread; 16 x 16 and 64 x 64
# panels).
_R_LATTICE_CELL = 1.7e9
_R_LATTICE_FACTOR = 1.5e8
# Plain numpy reference.
_R_NUMPY = 1.4e7
_C_NUMPY = 1e-5
# Non-uniform FFT (ducc0): overhead, per source and target (per kernel-width**d), per grid
# cell and log2 of the grid. Below THREADS_FROM seconds the transform runs on one thread:
# waking ducc0's pool costs about 2 ms here, more than small transforms take.
_C_NUFFT = 3e-4
_A_SPREAD = {1: 2e-9, 2: 6.5e-10, 3: 2.5e-10}
_B_GRID = {1: 3e-10, 2: 3e-10, 3: 7e-10}
_SIGMA = 2.0
THREADS_FROM = 0.02
# Chirp-z FFT path: overhead and per (FFT length x log2 length) unit.
_C_FFT = 4e-4
_B_FFT = 1.0e-9

NUFFT_OVERHEAD = _C_NUFFT
"""Fixed seconds of one non-uniform FFT (plan and pool)."""
FFT_OVERHEAD = _C_FFT
"""Fixed seconds of one chirp-z transform."""
"""Fixed costs of the transform paths (s): below these, direct summation always wins."""

GRID_LIMIT = 2**26
"""Largest oversampled transform grid (cells) the non-uniform FFT may use (1 GiB)."""


def kernel_width(tol: float) -> int:
    """Spreading-kernel width (grid points per dimension) for tolerance ``tol``."""
    return max(2, math.ceil(-math.log10(max(tol, 1e-16)))) + 1


def reference(n: int, m: int) -> float:
    """Plain numpy: exp of an (M, N) block and a matrix-vector product."""
    return _C_NUMPY + n * m / _R_NUMPY


# With NUMBA_DISABLE_JIT=1 (the CI job that checks kernels against their plain meaning) the
# kernels run as Python loops, about a thousand times slower.
_JIT_OFF = os.environ.get("NUMBA_DISABLE_JIT", "0").strip() not in ("", "0")


def direct(n: int, m: int) -> float:
    """numba direct summation (one thread below SERIAL_TERMS terms)."""
    t = n * m * (1000 if _JIT_OFF else 1)
    if t < SERIAL_TERMS:
        return _C_SERIAL + t / _R_SERIAL
    return _C_PARALLEL + t / _R_PARALLEL


def lattice(cells: int, factors: int, m: int) -> float:
    """Direct summation over a planar lattice of rows: ``cells`` weight-grid cells and
    ``factors`` (columns + rows) phase factors per direction, ``m`` directions."""
    per = (cells / _R_LATTICE_CELL + factors / _R_LATTICE_FACTOR) * (1000 if _JIT_OFF else 1)
    t = m * per
    if cells * m < SERIAL_TERMS:
        return _C_SERIAL + t
    return _C_PARALLEL + t * _R_SERIAL / _R_PARALLEL


def grid3(x_half, s_half, tol: float) -> float:
    """Cells of the oversampled type-3 grid for source and target half-widths per dimension."""
    w = kernel_width(tol)
    g = 1.0
    for x, s in zip(x_half, s_half, strict=True):
        g *= _SIGMA * (2 * _SIGMA * x * s / math.pi + w)
    return g


def nufft3(n: int, m: int, x_half, s_half, tol: float) -> float:
    """Type-3 transform of N sources onto M targets in len(x_half) dimensions."""
    d = len(x_half)
    if d == 0:
        return 0.0
    w = kernel_width(tol)
    g = grid3(x_half, s_half, tol)
    if g > GRID_LIMIT:
        return math.inf
    return (_C_NUFFT + _A_SPREAD[d] * (n + m) * w**d
            + _B_GRID[d] * g * math.log2(max(g, 2.0)))


def nufft1(n: int, nu: int, nv: int, tol: float) -> float:
    """Type-1 transform of N planar sources onto an (nv, nu) grid of modes."""
    w = kernel_width(tol)
    g = (_SIGMA * nu + w) * (_SIGMA * nv + w)
    if g > GRID_LIMIT:
        return math.inf
    return _C_NUFFT + _A_SPREAD[2] * n * w**2 + _B_GRID[2] * g * math.log2(max(g, 2.0))


_R_SINC = (2.2e8, 3.5e8)  # sinc pairs per second: one thread, both threads
SINC_SERIAL_PAIRS = 2_000_000
"""Below this many element pairs the sinc pair sum runs on one thread (no pool wake-up)."""
_PER_DIRECTION = 1.5e-7  # field(): element pattern, angles, intensity per direction


def sinc_pairs(n: int) -> float:
    """Closed-form radiated power of isotropic elements: N (N - 1) / 2 sinc pairs."""
    pairs = n * (n - 1) / 2
    return 5e-5 + pairs / _R_SINC[0 if pairs < SINC_SERIAL_PAIRS else 1]


def per_direction(m: int) -> float:
    """Work per direction outside the array factor (element pattern, intensity, rule sum)."""
    return m * _PER_DIRECTION


_R_GRAM = 2.5e9  # flops per second of the lattice Gram table's complex matrix products
_C_GATHER = 2.5e-7  # seconds per matrix entry: separation index, gather, Hermitian part


def lattice_gram(m: int, nx: int, ny: int, n: int, offsets: int = 1) -> float:
    """The lattice form of a Gram matrix: one (2nx-1) x M by M x (2ny-1) complex product per
    distinct row offset over M directions, then the N x N gather (measured on 16 x 16 to
    64 x 64 panels)."""
    return offsets * 8.0 * m * (2 * nx - 1) * (2 * ny - 1) / _R_GRAM + _C_GATHER * n * n


def sinc_matrix(n: int) -> float:
    """The closed-form N x N power matrix of isotropic elements (distances, sinc, kept)."""
    return _C_GATHER * n * n


def _fft_len(n: int) -> float:
    return n * math.log2(max(n, 2))


def fft_lattice(nx: int, ny: int, nu: int, nv: int, separable: bool, offsets: bool) -> float:
    """Chirp-z transforms of an (ny, nx) weight grid onto an (nv, nu) u-v grid."""
    l1 = nx + nu
    l2 = ny + nv
    if separable:
        work = 2 * (_fft_len(l1) + _fft_len(l2)) + nu * nv / 8
    else:
        work = 2 * (ny * _fft_len(l1) + nu * _fft_len(l2)) + (ny * nu * 4 if offsets else 0)
    return _C_FFT + _B_FFT * work + nu * nv * 2e-9
