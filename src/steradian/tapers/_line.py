r"""Closed-form line distributions: samples for N equally spaced elements and, where the
published distribution is a continuous aperture function, that function itself.

Conventions: ``sll`` and the normalised aperture coordinate t are those of
:mod:`steradian.tapers._common`. Sampled tapers are returned as real numpy arrays of length
N, element 0 at the most negative coordinate, normalised to a largest magnitude of 1 unless a
function says otherwise (``taylor(norm=True)`` follows scipy and sets the centre to 1).
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from ..errors import SteradianError
from ..validate import count, doubtful, nonneg, positive
from ._bayliss import line_table_zeros
from ._common import cell_centres, normalise_peak, sidelobe_ratio

__all__ = ["uniform", "binomial", "dolph_chebyshev", "taylor", "taylor_aperture",
           "taylor_coefficients", "bayliss", "bayliss_aperture", "bayliss_coefficients",
           "cosine_pedestal", "cosine_pedestal_aperture", "window"]


def uniform(N: int) -> np.ndarray:
    """Uniform taper: N ones.

    Examples
    --------
    >>> uniform(3)
    array([1., 1., 1.])
    """
    return np.ones(count("N", N))


def binomial(N: int) -> np.ndarray:
    r"""Binomial taper: :math:`w_n = \binom{N-1}{n}`, scaled to a peak of 1.

    The pattern :math:`(1 + e^{j\psi})^{N-1}` has no sidelobes for spacings up to half a
    wavelength (the price is a wide main lobe and a large amplitude spread).

    References
    ----------
    J. S. Stone, U.S. Patents 1,643,323 and 1,715,433 (1927, 1929); C. A. Balanis, *Antenna
    Theory: Analysis and Design*, 4th ed., Wiley, 2016, sec. 6.8.2.

    Examples
    --------
    >>> binomial(5) * 6
    array([1., 4., 6., 4., 1.])
    """
    N = count("N", N)
    from scipy.special import comb

    return normalise_peak(comb(N - 1, np.arange(N), exact=False))


def _chebyshev_t(m: int, x: np.ndarray) -> np.ndarray:
    """Chebyshev polynomial :math:`T_m(x)` for real x of any magnitude."""
    x = np.asarray(x, float)
    out = np.empty_like(x)
    inside = np.abs(x) <= 1
    out[inside] = np.cos(m * np.arccos(x[inside]))
    hi = x > 1
    out[hi] = np.cosh(m * np.arccosh(x[hi]))
    lo = x < -1
    out[lo] = (-1.0) ** m * np.cosh(m * np.arccosh(-x[lo]))
    return out


def _weights_from_pattern(pattern, N: int) -> np.ndarray:
    r"""Excitations of an N-element line whose array factor is ``pattern(psi)``.

    ``pattern`` must be a trigonometric polynomial :math:`\sum_n w_n e^{j(n-(N-1)/2)\psi}`;
    sampling it at N points :math:`\psi_l = 2\pi l/N` and inverting the DFT is exact.
    """
    psi = 2 * np.pi * np.arange(N) / N
    f = pattern(psi) * np.exp(0.5j * (N - 1) * psi)
    w = np.fft.fft(f) / N  # w_n = (1/N) sum_l f_l exp(-j n psi_l)
    return w.real


def dolph_chebyshev(N: int, sll: float = 30.0, d: float = 0.5) -> np.ndarray:
    r"""Dolph-Chebyshev taper: equal sidelobes at ``sll`` dB, narrowest main lobe.

    Parameters
    ----------
    N : int
        Number of elements.
    sll : float
        Sidelobe level in dB below the peak (positive); :math:`R = 10^{sll/20}`.
    d : float
        Element spacing in wavelengths. For :math:`d \ge 1/2` the taper does not depend on d
        (Dolph). For :math:`d < 1/2` and odd N, Riblet's generalisation is used: it maps the
        visible region onto the whole equal-ripple interval, giving a narrower beam than
        Dolph's mapping at the same level. Even N at :math:`d < 1/2` keeps Dolph's mapping
        (sidelobes still at or below the level; the beam is then not the narrowest).

    Returns
    -------
    ndarray, shape (N,)
        Real taper with a largest magnitude of 1 (elements may alternate in sign for
        Riblet designs at small spacing).

    Notes
    -----
    Dolph: :math:`AF(\psi) = T_{N-1}(x_0\cos(\psi/2))`, :math:`\psi = kd\cos\theta`,
    :math:`T_{N-1}(x_0) = R`. Riblet (odd :math:`N = 2M+1`):
    :math:`AF(\psi) = T_M(a\cos\psi + b)` with :math:`a + b = x_0`, :math:`T_M(x_0) = R`, and
    :math:`a\cos(kd) + b = -1` (endfire maps to -1). At :math:`d = 1/2` the two coincide.
    The excitations follow from the pattern by an exact inverse DFT (not the scipy code).
    Above :math:`d_{max}/\lambda = 1 - \arccos(1/x_0)/\pi` the broadside pattern rises
    above the level near endfire; a warning says so.

    References
    ----------
    C. L. Dolph, "A current distribution for broadside arrays which optimizes the relationship
    between beam width and side-lobe level," *Proc. IRE* 34 (1946) 335-348.
    H. J. Riblet, discussion of Dolph's paper, *Proc. IRE* 35 (1947) 489-492.

    Examples
    --------
    >>> w = dolph_chebyshev(5, 20)
    >>> [round(float(x), 4) for x in w]
    [0.5176, 0.8326, 1.0, 0.8326, 0.5176]
    """
    N = count("N", N)
    R = sidelobe_ratio(sll)
    d = positive("spacing d", d, " wavelengths")
    if N == 1:
        return np.ones(1)
    if N == 2:
        return np.ones(2)
    kd = 2 * np.pi * d
    if d < 0.5 and N % 2 == 1:
        M = (N - 1) // 2
        x0 = math.cosh(math.acosh(R) / M)
        a = (x0 + 1.0) / (1.0 - math.cos(kd))
        b = x0 - a
        w = _weights_from_pattern(lambda psi: _chebyshev_t(M, a * np.cos(psi) + b), N)
        return normalise_peak(w)
    x0 = math.cosh(math.acosh(R) / (N - 1))
    if d < 0.5:
        doubtful(f"dolph_chebyshev: Riblet's generalisation for d={d:g} < 1/2 needs an odd N; "
                 f"N={N} keeps Dolph's mapping (level met, main lobe not the narrowest)")
    else:
        dmax = 1.0 - math.acos(1.0 / x0) / math.pi
        if d > dmax + 1e-12:
            doubtful(f"dolph_chebyshev: spacing d={d:g} wavelengths exceeds {dmax:.4f}, above "
                     f"which the broadside pattern rises over -{float(sll):g} dB near endfire")
    w = _weights_from_pattern(lambda psi: _chebyshev_t(N - 1, x0 * np.cos(psi / 2)), N)
    return normalise_peak(w)


def _taylor_params(nbar: int, sll: float):
    R = sidelobe_ratio(sll)
    nbar = count("nbar", nbar)
    A = math.acosh(R) / math.pi
    sigma2 = nbar**2 / (A**2 + (nbar - 0.5) ** 2)
    return A, sigma2, nbar


def taylor_coefficients(nbar: int, sll: float) -> np.ndarray:
    r"""Taylor line-source coefficients :math:`F_m`, m = 1 .. nbar-1.

    .. math::
        F_m = \frac{(-1)^{m+1}\prod_{n=1}^{\bar n-1}\left(1 - \frac{m^2}{\sigma^2(A^2 +
        (n-1/2)^2)}\right)}{2\prod_{n=1, n\ne m}^{\bar n-1}\left(1 - m^2/n^2\right)},
        \quad A = \frac{\operatorname{arccosh} R}{\pi},\quad
        \sigma^2 = \frac{\bar n^2}{A^2 + (\bar n - 1/2)^2}.
    """
    _, _, nbar = _taylor_params(nbar, sll)  # checked (one clear message) before the cache
    return _taylor_table(nbar, float(sll)).copy()


@lru_cache(maxsize=64)
def _taylor_table(nbar, sll) -> np.ndarray:
    """:func:`taylor_coefficients`, computed once per (nbar, sll): a sweep builds the same
    taper for every point."""
    A, sigma2, nbar = _taylor_params(nbar, sll)
    m = np.arange(1, nbar)
    n = np.arange(1, nbar)
    F = np.empty(nbar - 1)
    for i, mi in enumerate(m):
        num = np.prod(1 - mi**2 / (sigma2 * (A**2 + (n - 0.5) ** 2)))
        others = n[n != mi]
        den = 2 * np.prod(1 - mi**2 / others.astype(float) ** 2)
        F[i] = (-1.0) ** (mi + 1) * num / den
    return F


def taylor_aperture(t, nbar: int = 4, sll: float = 30.0) -> np.ndarray:
    r"""Taylor n-bar line-source distribution at normalised positions ``t`` in [-1/2, 1/2].

    :math:`g(t) = 1 + 2\sum_{m=1}^{\bar n-1} F_m\cos(2\pi m t)` with the coefficients of
    :func:`taylor_coefficients`; :math:`g(0)` is close to but not exactly 1.

    References
    ----------
    T. T. Taylor, "Design of line-source antennas for narrow beamwidth and low side lobes,"
    *IRE Trans. Antennas Propag.* AP-3 (1955) 16-28.
    """
    t = np.asarray(t, float)
    F = taylor_coefficients(nbar, sll)
    m = np.arange(1, len(F) + 1)
    return 1.0 + 2.0 * np.cos(2 * np.pi * np.multiply.outer(t, m)) @ F


def taylor(N: int, nbar: int = 4, sll: float = 30.0, norm: bool = True) -> np.ndarray:
    r"""Taylor n-bar taper for N equally spaced elements.

    The continuous distribution :func:`taylor_aperture` sampled at the cell centres
    :math:`t_n = (n - (N-1)/2)/N` (aperture length L = N d).

    Parameters
    ----------
    N : int
        Number of elements.
    nbar : int
        Number of nearly equal sidelobes next to the main lobe (:math:`\bar n`).
    sll : float
        Design sidelobe level in dB below the peak (positive).
    norm : bool
        Scale so the distribution's value at the aperture centre is 1 (as
        :func:`scipy.signal.windows.taylor` does); otherwise return the raw samples.

    References
    ----------
    T. T. Taylor, *IRE Trans. Antennas Propag.* AP-3 (1955) 16-28.

    Examples
    --------
    >>> w = taylor(8, nbar=4, sll=30)
    >>> round(float(w[0]), 4), round(float(w[3]), 4)
    (0.2793, 0.9756)
    """
    N = count("N", N)
    if N == 1:
        return np.ones(1)
    w = taylor_aperture(cell_centres(N), nbar, sll)
    if norm:
        w = w / taylor_aperture(0.0, nbar, sll)
    return w


# ---- Bayliss difference distribution (line source) ----------------------------------------

def bayliss_coefficients(nbar: int, sll: float) -> np.ndarray:
    r"""Coefficients :math:`B_m \propto F(m + 1/2)`, m = 0 .. nbar-1, of Bayliss's line source.

    The difference pattern is

    .. math::
        F(u) = \pi u\cos(\pi u)\,\frac{\prod_{n=1}^{\bar n-1}\left(1 - (u/\sigma\xi_n)^2\right)}
        {\prod_{n=0}^{\bar n-1}\left(1 - (u/(n+1/2))^2\right)},
        \qquad \sigma = \frac{\bar n + 1/2}{\xi_{\bar n}},

    u = (L/λ) sin θ, with :math:`\xi_1..\xi_4` and A from Bayliss's polynomial fits in the
    sidelobe level and :math:`\xi_n = \sqrt{A^2 + n^2}` beyond. Its samples at the
    half-integers give the Fourier-sine coefficients of the aperture distribution (the
    0/0 limit there is taken analytically: :math:`\cos(\pi u)/(1 - u^2/u_m^2) \to
    (-1)^m \pi u_m / 2`).
    """
    nbar = count("nbar", nbar, minimum=2)
    _, xi = line_table_zeros(nbar, sll)
    sigma = (nbar + 0.5) / xi[nbar - 1]
    um = np.arange(nbar) + 0.5
    zeros = sigma * xi[: nbar - 1]
    B = np.empty(nbar)
    for m in range(nbar):
        u = um[m]
        num = np.prod(1 - (u / zeros) ** 2)
        others = um[np.arange(nbar) != m]
        den = np.prod(1 - (u / others) ** 2)
        B[m] = np.pi * u * (-1.0) ** m * (np.pi * u / 2) * num / den
    return B


def bayliss_aperture(t, nbar: int = 5, sll: float = 30.0) -> np.ndarray:
    r"""Bayliss difference distribution at normalised positions ``t`` in [-1/2, 1/2].

    :math:`g(t) = \sum_{m=0}^{\bar n-1} B_m \sin(2\pi(m + 1/2)t)`, odd in t, positive for
    small t > 0 (unnormalised).

    References
    ----------
    E. T. Bayliss, "Design of monopulse antenna difference patterns with low sidelobes,"
    *Bell Syst. Tech. J.* 47 (1968) 623-650.
    """
    t = np.asarray(t, float)
    B = bayliss_coefficients(nbar, sll)
    m = np.arange(len(B)) + 0.5
    g = np.sin(2 * np.pi * np.multiply.outer(t, m)) @ B
    sign = 1.0 if B.sum() >= 0 else -1.0  # orient: positive just right of the centre
    return sign * g


def bayliss(N: int, nbar: int = 5, sll: float = 30.0) -> np.ndarray:
    r"""Bayliss difference taper for N equally spaced elements (odd: w[N-1-n] = -w[n]).

    The distribution :func:`bayliss_aperture` at the cell centres, scaled to a largest
    magnitude of 1. The array's difference pattern is zero on boresight and its first
    ``nbar - 1`` sidelobes are near ``sll`` dB below the difference-lobe peaks.

    References
    ----------
    E. T. Bayliss, *Bell Syst. Tech. J.* 47 (1968) 623-650.
    """
    N = count("N", N)
    if N < 2:
        raise SteradianError(f"a difference taper needs at least 2 elements, got N={N}")
    return normalise_peak(bayliss_aperture(cell_centres(N), nbar, sll))


# ---- cosine on a pedestal -------------------------------------------------------------------

def cosine_pedestal_aperture(t, pedestal: float = 0.1, exponent: float = 2.0) -> np.ndarray:
    r"""Cosine-on-a-pedestal distribution :math:`p + (1 - p)\cos^n(\pi t)`, t in [-1/2, 1/2].

    ``pedestal`` p is the edge amplitude relative to the centre (0 <= p <= 1); ``exponent``
    n = 1 is the cosine, n = 2 the cosine-squared ("raised cosine") on a pedestal.

    References
    ----------
    R. C. Hansen, *Phased Array Antennas*, 2nd ed., Wiley, 2009, ch. 3 (pedestal
    distributions); common practice.
    """
    p = nonneg("pedestal", pedestal)
    if p > 1:
        raise SteradianError(f"pedestal is the edge amplitude (0..1), got pedestal={pedestal}")
    n = nonneg("exponent", exponent)
    t = np.asarray(t, float)
    return p + (1 - p) * np.abs(np.cos(np.pi * t)) ** n


def cosine_pedestal(N: int, pedestal: float = 0.1, exponent: float = 2.0) -> np.ndarray:
    """Cosine on a pedestal sampled at the N cell centres, peak 1 (see the aperture form)."""
    return normalise_peak(cosine_pedestal_aperture(cell_centres(N), pedestal, exponent))


# ---- scipy windows ---------------------------------------------------------------------------

def window(name: str, N: int, *params) -> np.ndarray:
    """A standard window from :mod:`scipy.signal.windows` as an N-element taper.

    ``name`` and ``params`` are passed to :func:`scipy.signal.windows.get_window` as
    ``(name, *params)`` with ``fftbins=False`` (symmetric window), e.g.
    ``window("kaiser", 16, 6.0)`` or ``window("hann", 16)``. Peak scaled to 1.

    References
    ----------
    F. J. Harris, "On the use of windows for harmonic analysis with the discrete Fourier
    transform," *Proc. IEEE* 66 (1978) 51-83.
    """
    from scipy.signal.windows import get_window

    N = count("N", N)
    spec = (str(name), *params) if params else str(name)
    try:
        w = get_window(spec, N, fftbins=False)
    except (ValueError, TypeError) as exc:
        raise SteradianError(f"window {name!r} with parameters {list(params)}: {exc}") from None
    return normalise_peak(np.asarray(w, float))
