"""Zero positions of Bayliss difference patterns: the published line-source fits (package data)
and, for the circular aperture, Bayliss's defining conditions solved numerically."""

from __future__ import annotations

import functools
import math
from importlib import resources

import numpy as np

from ..errors import SteradianError
from ..validate import count, doubtful
from ._common import sidelobe_ratio

__all__ = ["line_table_zeros", "circular_zeros", "circular_mu", "circular_zero_set",
           "circular_pattern", "FIT_RANGE_DB"]

FIT_RANGE_DB = (15.0, 40.0)
"""Sidelobe levels (dB) over which Bayliss's polynomial fits were made."""


@functools.lru_cache(maxsize=1)
def _table() -> dict[str, np.ndarray]:
    text = resources.files("steradian").joinpath("data/bayliss_1968_line.csv").read_text()
    rows = [ln for ln in text.splitlines() if ln.strip() and not ln.startswith("#")]
    out = {}
    for ln in rows[1:]:
        name, *coef = ln.split(",")
        out[name.strip()] = np.array([float(c) for c in coef])
    return out


def _fit(name: str, s: float) -> float:
    c = _table()[name]
    return float(sum(ci * s**i for i, ci in enumerate(c)))


def line_table_zeros(nbar: int, sll: float):
    r"""Bayliss's A and zero positions :math:`\xi_1..\xi_{\bar n}` (line source).

    :math:`\xi_1..\xi_4` and A from the published polynomial fits (package data
    ``data/bayliss_1968_line.csv``); :math:`\xi_n = \sqrt{A^2 + n^2}` for n >= 5.
    Returns ``(A, xi)`` with ``xi[n-1]`` = :math:`\xi_n`, n = 1 .. nbar.
    """
    sidelobe_ratio(sll)
    nbar = count("nbar", nbar, minimum=2)
    s = float(sll)
    lo, hi = FIT_RANGE_DB
    if not lo <= s <= hi:
        doubtful(f"bayliss: sll={s:g} dB is outside the {lo:g}-{hi:g} dB range of Bayliss's "
                 "fits; the sidelobes may miss the design level")
    A = _fit("A", s)
    xi = np.array([_fit(f"xi{n}", s) if n <= 4 else math.sqrt(A**2 + n**2)
                   for n in range(1, nbar + 1)])
    return A, xi


def circular_mu(nbar: int) -> np.ndarray:
    r"""mu_0, mu_1, ...: zeros of :math:`J_1'(\pi\mu)` (nbar + 8 of them)."""
    from scipy.special import jnp_zeros

    return jnp_zeros(1, nbar + 8) / np.pi


def circular_zero_set(A: float, xi_near, nbar: int):
    r"""The circular difference pattern's :math:`\mu_m` and its moved zeros :math:`z_n`.

    :math:`\xi_n` are ``xi_near`` then :math:`\sqrt{A^2 + n^2}` up to n = nbar;
    :math:`\sigma = \mu_{\bar n}/\xi_{\bar n}` and :math:`z_n = \sigma\xi_n`,
    n = 1 .. nbar-1. Returns ``(mu, z)``.
    """
    mu = circular_mu(nbar)
    xi = np.array([*xi_near] + [math.sqrt(A**2 + n**2) for n in range(len(xi_near) + 1,
                                                                         nbar + 1)])
    sigma = mu[nbar] / xi[nbar - 1]
    return mu, sigma * xi[: nbar - 1]


def circular_pattern(u, A, xi_near, nbar):
    """Bayliss circular difference pattern F(u) (unnormalised) and its zeros."""
    from scipy.special import jvp

    mu, z = circular_zero_set(A, xi_near, nbar)
    u = np.asarray(u, float)
    num = np.ones_like(u)
    for zn in z:
        num = num * (1 - (u / zn) ** 2)
    den = np.ones_like(u)
    for mn in mu[:nbar]:
        den = den * (1 - (u / mn) ** 2)
    return u * jvp(1, np.pi * u) * num / den, np.concatenate([z, mu[nbar:]])


def _lobe_peaks(fun, edges):
    from scipy.optimize import minimize_scalar

    out = []
    for a, b in zip(edges[:-1], edges[1:], strict=True):
        r = minimize_scalar(lambda x: -abs(float(fun(np.array([x]))[0])), bounds=(a, b),
                            method="bounded", options={"xatol": 1e-11})
        out.append(-r.fun)
    return np.array(out)


@functools.lru_cache(maxsize=64)
def circular_zeros(nbar: int, sll: float):
    r"""A and :math:`\xi_1..\xi_4` for Bayliss's circular-aperture difference pattern.

    Bayliss's defining condition, the four sidelobes next to the difference lobes at the
    design level with :math:`\xi_n = \sqrt{A^2+n^2}` beyond the fourth zero, is solved here
    for the requested :math:`\bar n` (Newton-type iteration from the line-source zeros, to
    1e-10), with A taken from the line-source fit; the later sidelobes then fall below the
    level. Bayliss also tabulated fits for this case; they are not reproduced here.
    """
    from scipy.optimize import fsolve

    nbar = count("nbar", nbar, minimum=5)
    A, xi_line = line_table_zeros(nbar, sll)
    log_level = -math.log(sidelobe_ratio(sll))

    def residual(near):
        if np.any(np.diff(np.concatenate([[0.0], near, [math.sqrt(A**2 + 25)]])) <= 0):
            return np.full(4, 10.0)
        _, z = circular_pattern(np.zeros(1), A, near, nbar)
        pk = _lobe_peaks(lambda u: circular_pattern(u, A, near, nbar)[0],
                         np.concatenate([[0.0], z[:5]]))
        return np.log(pk[1:5] / pk[0]) - log_level

    sol, _, ier, msg = fsolve(residual, xi_line[:4], xtol=1e-10, full_output=True)
    if ier != 1 or np.max(np.abs(residual(sol))) > 1e-6:
        raise SteradianError(f"bayliss_circular: could not meet sll={sll} dB with nbar={nbar} "
                             f"({msg.strip()})")
    return A, tuple(float(x) for x in sol)
