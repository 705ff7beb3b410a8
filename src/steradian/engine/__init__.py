"""The pattern engine: the one place in steradian that sums element contributions.

:func:`field` evaluates an :class:`~steradian.array.Array` at arbitrary directions or on a
theta-phi or u-v grid. Everything else in the project (integrator, metrics, synthesis, beam
tables, plots) calls it, or the lower-level :func:`array_factor` / :func:`response_matrix`,
so faster paths slot in here without touching any caller.

Conventions: time dependence exp(+j w t); AF(r) = sum_n w_n exp(+j k r . r_n).

Paths (``method``), one registry entry each (``_paths.PATHS``), picked by a cost model
(``_cost``) from the number of elements and directions, the structure of positions and
grid, and the tolerance:

``"reference"``
    The plain-numpy definition; every other path is tested against it.
``"direct"``
    numba direct summation (``_kernels``, listed with their plain meaning in
    :data:`KERNELS`); exact to rounding.
``"fft"``
    Planar lattices (rows of equally spaced elements) onto regular u-v grids by chirp-z
    transforms (``_fft``, :func:`czt`); exact to rounding.
``"nufft"``
    Arbitrary positions by non-uniform FFTs (``_nufft``): type 1 onto regular u-v grids for
    planar layouts, type 3 onto anything else; accurate to ``tol``.

Planar arrays (constant z) evaluated on a theta-phi grid that is symmetric about the horizon
(full-sphere Gauss-Legendre rules) are summed on the upper half only: the planar sum depends
on (u, v) alone, and the mirror direction differs by the exact factor exp(-2jk w z0).

Layout: ``_evaluate`` (array factor, path choice), ``_paths`` (the registry), ``_direct``
(exact paths), ``_fft``, ``_nufft``, ``_kernels``, ``_cost``, ``_layout`` (what the cost
model knows about positions), ``_cache`` (the one memo), ``_field`` (fields and responses),
``_power`` (pair sums for radiated power).
"""

from __future__ import annotations

from ._direct import LATTICE_MIN, MEMORY_BUDGET, exact_rows
from ._evaluate import DEFAULT_TOL, PathChoice, array_factor, choose_path
from ._field import Field, field, field_many, field_of_beams, response_blocks, response_matrix
from ._power import (
    dense_gram_matrix,
    field_seconds,
    gram_matrix,
    lattice_gram_matrix,
    lattice_gram_seconds,
    lattice_gram_table,
    sinc_matrix_seconds,
    sinc_power_seconds,
    sinc_power_sum,
)

__all__ = ["Field", "field", "field_of_beams", "field_many", "array_factor", "response_matrix",
           "response_blocks",
           "dense_gram_matrix", "lattice_gram_matrix", "lattice_gram_table",
           "lattice_gram_seconds",
           "MEMORY_BUDGET", "LATTICE_MIN", "exact_rows", "DEFAULT_TOL", "PathChoice", "choose_path",
           "clear_plan_cache", "plan_cache_info", "sinc_power_sum", "gram_matrix",
           "sinc_power_seconds", "sinc_matrix_seconds", "field_seconds", "czt",
           "detect_rows", "Rows", "KERNELS",
           "set_threads", "transform_threads"]

_LIMITS: list = []  # the BLAS/OpenMP limit object, kept so the limit holds


def transform_threads() -> int:
    """Threads the non-uniform FFTs use in this process (see :func:`set_threads`)."""
    from . import _nufft

    return _nufft.nthreads()


def set_threads(n: int) -> None:
    """Run the engine's threaded work on at most ``n`` threads in this process: the
    non-uniform FFTs, the numba kernels and BLAS/OpenMP (by threadpoolctl).

    A process that is one of several workers sharing the machine's cores calls this with 1:
    threads of several processes competing for the same cores run slower than one thread
    each (measured: two study workers on two cores each took twice as long per point with
    their default threads).
    """
    from . import _nufft

    n = max(1, int(n))
    _nufft.cap_threads(n)
    import numba
    from threadpoolctl import threadpool_limits

    numba.set_num_threads(min(n, numba.config.NUMBA_NUM_THREADS))
    _LIMITS[:] = [threadpool_limits(limits=n)]


def clear_plan_cache() -> None:
    """Forget cached non-uniform FFT plans (they are reused while positions and directions
    stay the same)."""
    from . import _nufft

    _nufft.clear_cache()


def plan_cache_info() -> dict:
    """Cached non-uniform FFT plans: {"plans", "hits", "misses"} since the last clear."""
    from . import _nufft

    return _nufft.cache_info()


# Names whose modules import numba or scipy.fft: loaded on first use (keeps ``import
# steradian`` and ``--help`` fast).
_LAZY = {"KERNELS": "_kernels", "czt": "_fft", "detect_rows": "_fft", "Rows": "_fft"}


def __getattr__(name):
    if name in _LAZY:
        import importlib

        return getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
