r"""Tabulated element patterns: a theta-phi grid of complex far field, read from CSV.

File layout (an original steradian format, one file per element pattern)
-------------------------------------------------------------------------
Comment lines start with ``#``. Before the first data row, comment lines of the form
``# key = value`` are header keys; other comment lines are free text. Keys:

``quantity`` (required)
    ``field``: complex field, real and imaginary parts; ``gain_dbi``: partial gain in dBi
    with phase in degrees (``-inf`` dBi is a zero field).
``components`` (optional, default ``theta_phi``)
    ``theta_phi``: the two polarised components E_theta, E_phi (a vector model);
    ``scalar``: one scalar field (acoustic transducers, unpolarised models).
``columns`` (required)
    The column names in file order, comma separated; exactly the set below for the quantity
    and components, in any order.
``front_only`` (optional, ``true``/``false``, default ``false``)
    ``true``: the element radiates only into its local front half-space; the table then
    covers theta 0..90 and the pattern is zero behind.
``frequency_hz`` (optional), ``note`` (optional)
    Recorded in :meth:`TabulatedElement.describe`.

=================  ==========  ===============================================================
quantity           components  columns
=================  ==========  ===============================================================
field              theta_phi   theta_deg, phi_deg, re_e_theta, im_e_theta, re_e_phi, im_e_phi
field              scalar      theta_deg, phi_deg, re_e, im_e
gain_dbi           theta_phi   theta_deg, phi_deg, gain_theta_dbi, phase_theta_deg,
                               gain_phi_dbi, phase_phi_deg
gain_dbi           scalar      theta_deg, phi_deg, gain_dbi, phase_deg
=================  ==========  ===============================================================

Each data row is one direction (theta, phi) in the element's local frame (degrees, theta from
+z, phi from +x toward +y), comma separated, in any order. The rows must form the full product
of equally spaced theta values from 0 to 180 (0 to 90 when ``front_only``) and equally spaced
phi values around the full circle (a closing column at phi_0 + 360 may repeat the first).

Example::

    # steradian element pattern table
    # quantity = field
    # columns = theta_deg, phi_deg, re_e_theta, im_e_theta, re_e_phi, im_e_phi
    0,0,1,0,0,0
    0,90,0,0,-1,0
    ...
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import SteradianError, shown
from ..sphere import peak_value
from ..validate import doubtful
from ._base import Element, angles_of, spherical_basis, unit_vectors

__all__ = ["TabulatedElement", "COLUMNS", "table_grid", "peak_intensity"]

COLUMNS: dict[tuple[str, str], tuple[str, ...]] = {
    ("field", "theta_phi"): ("theta_deg", "phi_deg", "re_e_theta", "im_e_theta", "re_e_phi",
                             "im_e_phi"),
    ("field", "scalar"): ("theta_deg", "phi_deg", "re_e", "im_e"),
    ("gain_dbi", "theta_phi"): ("theta_deg", "phi_deg", "gain_theta_dbi", "phase_theta_deg",
                                "gain_phi_dbi", "phase_phi_deg"),
    ("gain_dbi", "scalar"): ("theta_deg", "phi_deg", "gain_dbi", "phase_deg"),
}
"""Column names for each (quantity, components) pair."""

TABLE_KEYS = ("quantity", "components", "columns", "front_only", "frequency_hz", "note")
_PAD = 12          # rows/columns of periodic or pole-reflected padding around the spline grid
GRID_TOL = 1e-6   # degrees: tolerance for "equally spaced" and "ends at 0/90/180/360"
SAME_TOL = 1e-3   # relative: two samples of one direction (poles, closing column) must agree


# ---- peak of a model (shared with the analytic models) ----------------------------------------

def peak_intensity(pattern, front_only: bool, starts=()) -> float:
    """Largest ``|E_theta|^2 + |E_phi|^2`` of ``pattern(theta, phi)`` over the sphere (front
    hemisphere), by the package's lobe search (:func:`steradian.sphere.peak_value`) from
    3000 Fibonacci samples plus ``starts`` (unit vectors)."""
    def inten(v):
        a, b = pattern(*angles_of(v))
        return np.abs(a) ** 2 + np.abs(b) ** 2

    return peak_value(inten, front_only=front_only, starts=starts)


# ---- the model ------------------------------------------------------------------------------

def _equal_steps(name: str, x: np.ndarray) -> float:
    d = np.diff(x)
    if len(d) == 0:
        raise SteradianError(f"{name} needs at least 2 values, got {len(x)}")
    if np.any(d <= 0):
        raise SteradianError(f"{name} values must be strictly increasing")
    step = (x[-1] - x[0]) / len(d)
    bad = np.flatnonzero(np.abs(d - step) > GRID_TOL)
    if len(bad):
        i = int(bad[0])
        raise SteradianError(
            f"{name} must be equally spaced: step {d[i]:g} deg between {x[i]:g} and "
            f"{x[i + 1]:g}, but the grid average is {step:g} deg")
    return float(step)


class TabulatedElement(Element):
    r"""Element pattern given on a regular theta-phi grid of complex far field.

    The samples are interpolated by bicubic splines on the Cartesian components of the field
    vector :math:`\mathbf E = E_\theta\hat\theta + E_\phi\hat\phi` (which, unlike
    :math:`E_\theta` and :math:`E_\phi`, are smooth through the poles). The spline grid is
    padded periodically in phi and, across each pole, with the samples of the great circle
    continuing through it (the direction :math:`(-\theta, \phi)` is :math:`(\theta, \phi+\pi)`),
    so the interpolant is smooth everywhere on the sphere. A front-half-space table stops at
    theta = 90 deg and is zero behind. The pattern is peak-normalised (the peak of the
    interpolant, found by refinement, not the largest sample).

    Parameters
    ----------
    theta_deg : array_like, shape (n_theta,)
        Equally spaced, from 0 to 180 (0 to 90 with ``front_only``).
    phi_deg : array_like, shape (n_phi,)
        Equally spaced around the full circle; a closing value ``phi_deg[0] + 360`` may repeat
        the first column.
    e_theta, e_phi : array_like of complex, shape (n_theta, n_phi)
        Field components (any common scale and phase). ``e_phi=None`` makes a scalar model
        whose field is ``e_theta``.
    front_only : bool
        The element radiates only into its local front half-space.
    source : str, optional
        Where the table came from (recorded in :meth:`describe`).
    quantity : str, optional
        What a file held (``"field"`` or ``"gain_dbi"``), recorded in :meth:`describe`.
    frequency_hz : float, optional
        Frequency stated in a file header (informational), recorded in :meth:`describe`.

    Notes
    -----
    Interpolation error of a cubic spline is :math:`O(\Delta^4)` in the grid step
    :math:`\Delta`. :meth:`degree` is the band limit the grid can represent, twice its
    Nyquist degree :math:`\lceil 180/\Delta_{max}\rceil` (the power pattern is a product of
    two fields).

    References
    ----------
    C. de Boor, *A Practical Guide to Splines*, rev. ed., Springer, 2001, ch. XVII (tensor
    product splines).
    """

    quantity: str | None = None
    """What the file held ("field" or "gain_dbi"), when read from a file."""
    frequency_hz: float | None = None
    """Frequency stated in the file header, if any (informational)."""

    def __init__(self, theta_deg, phi_deg, e_theta, e_phi, front_only: bool = False,
                 source=None, *, quantity: str | None = None,
                 frequency_hz: float | None = None):
        th = np.asarray(theta_deg, float).ravel()
        ph = np.asarray(phi_deg, float).ravel()
        if not (np.all(np.isfinite(th)) and np.all(np.isfinite(ph))):
            raise SteradianError("theta_deg and phi_deg must be finite")
        self.front_only = bool(front_only)
        self.vector = e_phi is not None
        self.source = None if source is None else str(source)
        self.quantity = None if quantity is None else str(quantity)
        self.frequency_hz = None if frequency_hz is None else float(frequency_hz)
        comps = [np.asarray(e_theta, complex)] + ([np.asarray(e_phi, complex)]
                                                  if self.vector else [])
        for name, c in zip(("e_theta", "e_phi"), comps, strict=False):
            if c.shape != (len(th), len(ph)):
                raise SteradianError(f"{name} must have shape (n_theta, n_phi) = "
                                     f"({len(th)}, {len(ph)}), got {c.shape}")
            if not np.all(np.isfinite(c)):
                idx = tuple(np.argwhere(~np.isfinite(c))[0].tolist())
                raise SteradianError(f"{name} contains NaN or infinity at index {idx}")
        # Patterns are relative: scale by the largest component first, so values near the
        # float limits (1e308, 1e-320) neither overflow when squared nor lose their bits.
        big = max(max(float(np.abs(c.real).max()), float(np.abs(c.imag).max())) for c in comps)
        if big == 0:
            raise SteradianError("the tabulated field is zero everywhere")
        if big < np.finfo(float).tiny:
            raise SteradianError(f"the tabulated field is at most {big:.3g}, below the "
                                 "smallest normal double (2.2e-308): scale the table")
        comps = [c / big for c in comps]

        th, ph, comps, dth, dph = self._regular_axes(th, ph, comps)
        self._theta_deg = th
        self._phi_deg = ph
        self._dth, self._dph = dth, dph
        nt, npf = len(th), len(ph)
        t, p = np.meshgrid(np.deg2rad(th), np.deg2rad(ph), indexing="ij")
        if self.vector:
            bt, bp = spherical_basis(t, p)
            cart = comps[0][..., None] * bt + comps[1][..., None] * bp      # (nt, np, 3)
        else:
            cart = comps[0][..., None]                                      # (nt, np, 1)
        # One direction, many phi: the pole rows must agree; use their mean.
        for row in ([0] if self.front_only else [0, nt - 1]):
            dev = cart[row] - cart[row].mean(axis=0)
            self._check_same([cart], [dev], f"the samples at theta={th[row]:g}")
            cart[row] = cart[row].mean(axis=0)
        peak0 = float(np.sqrt((np.abs(cart) ** 2).sum(axis=-1)).max())
        if peak0 == 0:
            raise SteradianError("the tabulated field is zero everywhere")
        cart = cart / peak0

        self._fit_splines(cart, th, ph)

        self._norm = 1.0
        i_best = np.argsort((np.abs(cart) ** 2).sum(axis=-1).ravel())[::-1][:3]
        starts = unit_vectors(np.deg2rad(th[i_best // npf]), np.deg2rad(ph[i_best % npf]))
        self._norm = 1.0 / math.sqrt(peak_intensity(self.pattern, self.front_only, starts))

    def _regular_axes(self, th, ph, comps):
        """Check the theta and phi samples; drop a closing phi column (averaged into the
        first). Returns (theta, phi, comps, theta step, phi step), angles in degrees."""
        # theta: 0 .. 180 (or 90), equally spaced
        top = 90.0 if self.front_only else 180.0
        if abs(th[0]) > GRID_TOL:
            raise SteradianError(f"theta must start at 0 deg (the +z pole), got {th[0]:g}")
        if abs(th[-1] - top) > GRID_TOL:
            hint = ("" if self.front_only or abs(th[-1] - 90) > GRID_TOL else
                    " (a front-half-space table ending at 90 must declare front_only)")
            raise SteradianError(
                f"theta must end at {top:g} deg to cover the "
                f"{'front half-space' if self.front_only else 'sphere'}, got {th[-1]:g}{hint}")
        if len(th) < 3:
            raise SteradianError(f"theta needs at least 3 values, got {len(th)}")
        dth = _equal_steps("theta", th)
        th = np.linspace(0.0, top, len(th))

        # phi: equally spaced round the full circle, optional closing column
        if len(ph) >= 2 and abs(ph[-1] - ph[0] - 360.0) <= GRID_TOL:
            same = [c[:, -1] - c[:, 0] for c in comps]
            self._check_same(comps, same, f"the closing column phi={ph[-1]:g} and "
                             f"phi={ph[0]:g}")
            comps = [np.concatenate([(0.5 * (c[:, :1] + c[:, -1:])), c[:, 1:-1]], axis=1)
                     for c in comps]
            ph = ph[:-1]
        if len(ph) < 4:
            raise SteradianError(f"phi needs at least 4 values around the circle, got {len(ph)}")
        dph = _equal_steps("phi", ph)
        if abs(dph * len(ph) - 360.0) > GRID_TOL * len(ph):
            raise SteradianError(
                f"phi must cover the full circle in equal steps: {len(ph)} values {dph:g} deg "
                f"apart from {ph[0]:g} to {ph[-1]:g} leave a gap of "
                f"{360.0 - dph * (len(ph) - 1):g} deg before {ph[0] + 360:g}")
        ph = ph[0] + 360.0 * np.arange(len(ph)) / len(ph)

        return th, ph, comps, dth, dph

    def _fit_splines(self, cart, th, ph):
        """Bicubic splines of the Cartesian field components, padded periodically in phi
        and across the poles with the great circle continuing through them."""
        from scipy.interpolate import RectBivariateSpline

        nt, npf = len(th), len(ph)
        # Values at phi + 180 deg (for continuation through the poles).
        if npf % 2 == 0:
            shifted = np.roll(cart, -npf // 2, axis=1)
        else:  # trigonometric interpolation: exact for content below the phi Nyquist limit
            m = np.fft.fftfreq(npf, 1.0 / npf)
            shifted = np.fft.ifft(np.fft.fft(cart, axis=1) * ((-1.0) ** m)[None, :, None],
                                  axis=1)
        pad = min(_PAD, nt - 1)
        rad = np.deg2rad(th)
        t_ext = [-rad[pad:0:-1], rad]
        v_ext = [shifted[pad:0:-1], cart]
        if not self.front_only:
            t_ext.append(2 * np.pi - rad[-2:-2 - pad:-1])
            v_ext.append(shifted[-2:-2 - pad:-1])
        t_ext = np.concatenate(t_ext)
        v_ext = np.concatenate(v_ext, axis=0)
        j = np.arange(-_PAD, npf + _PAD)
        p_ext = np.deg2rad(ph[0]) + 2 * np.pi * j / npf
        v_ext = v_ext[:, j % npf]
        self._phi0 = float(np.deg2rad(ph[0]))
        self._splines = []
        for c in range(cart.shape[-1]):
            for part in (v_ext[..., c].real, v_ext[..., c].imag):
                self._splines.append(RectBivariateSpline(t_ext, p_ext, part, kx=3, ky=3, s=0))


    @staticmethod
    def _check_same(ref, diffs, what):
        scale = max(float(np.abs(c).max()) for c in ref)
        worst = max(float(np.abs(d).max()) for d in diffs)
        if scale > 0 and worst > SAME_TOL * scale:
            doubtful(f"{what} sample one direction but differ by {worst / scale:.3g} of the "
                     "peak field; using their mean")

    # ---- read-only views -------------------------------------------------------------------
    @property
    def theta_deg(self) -> np.ndarray:
        """Grid theta values (degrees)."""
        return self._theta_deg.copy()

    @property
    def phi_deg(self) -> np.ndarray:
        """Grid phi values (degrees), without a closing column."""
        return self._phi_deg.copy()

    @property
    def steps_deg(self) -> tuple[float, float]:
        """Grid steps (theta, phi) in degrees."""
        return self._dth, self._dph

    # ---- Element interface ---------------------------------------------------------------
    def _cartesian(self, theta, phi):
        t = np.clip(theta, 0.0, np.pi)
        p = self._phi0 + np.mod(phi - self._phi0, 2 * np.pi)
        vals = [s.ev(t, p) for s in self._splines]
        return np.stack([vals[2 * c] + 1j * vals[2 * c + 1] for c in range(len(vals) // 2)],
                        axis=-1)

    def pattern(self, theta, phi):
        theta, phi = np.broadcast_arrays(np.asarray(theta, float), np.asarray(phi, float))
        shape = theta.shape
        t, p = theta.ravel(), phi.ravel()
        e_t = np.zeros(t.shape, complex)
        e_p = np.zeros(t.shape, complex)
        live = np.cos(t) >= 0 if self.front_only else np.ones(t.shape, bool)
        if live.any():
            cart = self._cartesian(t[live], p[live]) * self._norm
            if self.vector:
                bt, bp = spherical_basis(t[live], p[live])
                e_t[live] = (cart * bt).sum(axis=-1)
                e_p[live] = (cart * bp).sum(axis=-1)
            else:
                e_t[live] = cart[:, 0]
        return e_t.reshape(shape), e_p.reshape(shape)

    def degree(self, k=None):
        return 2 * math.ceil(180.0 / max(self._dth, self._dph) - 1e-9) + 2

    def describe(self):
        return {"model": "table", "source": self.source, "front_only": self.front_only,
                "vector": self.vector, "n_theta": len(self._theta_deg),
                "n_phi": len(self._phi_deg), "theta_step_deg": self._dth,
                "phi_step_deg": self._dph, "quantity": self.quantity,
                "frequency_hz": self.frequency_hz}

    @classmethod
    def from_element(cls, element: Element, theta_step_deg: float = 2.0,
                     phi_step_deg: float = 2.0) -> TabulatedElement:
        """Sample any element model on a regular grid (e.g. to test or export it)."""
        th, ph = table_grid(element.front_only, theta_step_deg, phi_step_deg)
        t, p = np.meshgrid(np.deg2rad(th), np.deg2rad(ph), indexing="ij")
        e_t, e_p = element.pattern(t, p)
        return cls(th, ph, e_t, e_p if element.vector else None, element.front_only,
                   source=f"sampled {type(element).__name__}")


def table_grid(front_only, dth, dph):
    """Theta and phi samples (degrees) of a regular table grid with the given steps."""
    top = 90.0 if front_only else 180.0
    nt = round(top / dth)
    npf = round(360.0 / dph)
    if nt < 2 or abs(nt * dth - top) > GRID_TOL:
        raise SteradianError(f"theta_step_deg must divide {top:g} into at least 2 steps, "
                             f"got {shown(dth)}")
    if npf < 4 or abs(npf * dph - 360.0) > GRID_TOL:
        raise SteradianError(f"phi_step_deg must divide 360 into at least 4 steps, got "
                             f"{shown(dph)}")
    return np.linspace(0.0, top, nt + 1), 360.0 * np.arange(npf) / npf
