r"""What analyses of one aperture share, so that a family of beams is analysed once.

Arrays that differ only in their weights (taper and steering) share positions,
orientations, element model, enabled elements, speed and evaluation frequency: their
*aperture* (:func:`aperture_key`). A sweep over scan angles, or over taper levels, analyses
many beams of one aperture. :class:`Aperture` keeps what does not depend on the weights and
hands it to :func:`steradian.analysis.analyze` (``aperture=``):

- the radiated-power matrices :math:`Q` of the two sphere rules the integrator uses
  (:func:`steradian.radiation.power_matrix` at the default margin and ten nodes more), so
  each beam's radiated power is :math:`w^H Q w`: the same quadrature as
  :func:`steradian.radiation.radiated_power`, with the same value, error estimate and rule
  size, summed over element pairs instead of directions. Used where the engine's cost model
  says the matrices for the family's ``beams`` cost less than integrating each beam: a
  planar row lattice (one value per distinct separation; isotropic elements by the closed
  form), within a share of the memory budget; elsewhere each beam is integrated as before.
  The choice depends on the sizes alone, never on timing, so results are reproducible;
- the lobe-search sets (Fibonacci sets of the peak search and the sidelobe search);
- the peak of the unsteered beam that scan loss is measured against, per distinct taper.

Every metric is computed by the same functions with or without an aperture; the aperture
only changes how often the weight-independent parts are built. Results agree with a
stand-alone :func:`~steradian.analysis.analyze` to rounding (about 1e-12 relative).
"""

from __future__ import annotations

import hashlib
import json

import numpy as np

from .budget import budget
from .elements import Isotropic
from .errors import SteradianError
from .sphere import DEFAULT_MARGIN, SearchSet

__all__ = ["Aperture", "aperture_key", "POWER_SHARE"]

POWER_SHARE = 8
"""The two shared power matrices may take at most 1/POWER_SHARE of the memory budget."""

QUADRATURE_FACTOR = 1.7
"""Measured seconds of a radiated-power quadrature over the engine's estimate for its field
evaluation (the rule sum and element pattern on top; 16 x 16 to 64 x 64 panels)."""

MARGIN_STEP = 10
"""Extra nodes of the finer rule of the radiated-power error estimate (as
:func:`steradian.radiation.radiated_power`)."""


def aperture_key(array, frequency=None) -> str:
    """What an analysis depends on besides the weights: positions, orientations, element,
    enabled elements, speed and evaluation frequency (arrays with equal keys share one
    :class:`Aperture`)."""
    g = array.geometry
    h = hashlib.sha256()
    for part in (g.positions, g.orientations, array.enabled):
        h.update(b"-" if part is None else np.ascontiguousarray(part).tobytes())
    f = array.frequency if frequency is None else float(frequency)
    h.update(json.dumps([array.element.describe(), type(array.element).__name__,
                         repr(array.speed), repr(f)], sort_keys=True, default=str).encode())
    return h.hexdigest()


class Aperture:
    """The weight-independent work of analyses of arrays sharing ``array``'s aperture at
    ``frequency`` (None: each array's design frequency, which must then agree).

    Parameters
    ----------
    array : Array
        Any member of the family (its weights are not used).
    frequency : float, optional
        Evaluation frequency in Hz.
    beams : int
        How many beams the family will analyse (decides whether shared power matrices pay).
    """

    def __init__(self, array, frequency=None, *, beams: int = 1):
        self.key = aperture_key(array, frequency)
        self.frequency = frequency
        self.beams = max(1, int(beams))
        self._array = array
        self._sets: dict = {}
        self._memo: dict = {}
        self._q = None  # (Q coarse, Q fine, rule sizes, method) or False (not shared)

    def check(self, array, frequency=None) -> None:
        """Refuse an array of another aperture (a programming error, named in one line)."""
        if frequency != self.frequency or aperture_key(array, frequency) != self.key:
            raise SteradianError("this Aperture belongs to arrays with other positions, "
                                 "element, enabled elements or frequency")

    # ---- lobe-search sets ----------------------------------------------------------------
    def search_set(self, spacing: float, **kw) -> SearchSet:
        """:meth:`SearchSet.fibonacci` ``(spacing, **kw)``, built once per argument set."""
        key = (float(spacing), tuple(sorted((k, _hashable(v)) for k, v in kw.items())))
        got = self._sets.get(key)
        if got is None:
            got = self._sets[key] = SearchSet.fibonacci(spacing, **kw)
        return got

    # ---- radiated power ------------------------------------------------------------------
    def _power_matrices(self):
        if self._q is None:
            self._q = self._build_power()
        return self._q

    def _build_power(self):
        from .engine import (
            field_seconds,
            lattice_gram_seconds,
            sinc_matrix_seconds,
            sinc_power_seconds,
        )
        from .radiation import power_matrix
        from .sphere import rule_for

        a, f = self._array, self.frequency
        n = a.n
        iso = isinstance(a.element_at(f), Isotropic)
        if self.beams < 2 or 2 * 64 * n * n > budget() / POWER_SHARE:
            return False
        if iso:
            if self.beams * 2 * sinc_power_seconds(n) < sinc_matrix_seconds(n):
                return False
            return power_matrix(a, frequency=f), None, (0, 0), "closed_form"
        if a.geometry.orientations is not None:
            return False
        t_share, t_each = 0.0, 0.0
        for margin in (DEFAULT_MARGIN, DEFAULT_MARGIN + MARGIN_STEP):
            rule = rule_for(a, f, margin)
            t = lattice_gram_seconds(a.positions, a.k(f), rule.n_theta * rule.n_phi)
            if t is None:
                return False  # a dense Gram matrix costs more than integrating each beam
            t_share += t
            t_each += QUADRATURE_FACTOR * field_seconds(a.positions, a.k(f), rule.grid,
                                                        lattice=a.geometry.lattice)
        if self.beams * t_each < t_share:
            return False
        qc = power_matrix(a, frequency=f, margin=DEFAULT_MARGIN)
        qf = power_matrix(a, frequency=f, margin=DEFAULT_MARGIN + MARGIN_STEP)
        fine = rule_for(a, f, DEFAULT_MARGIN + MARGIN_STEP)
        return qc, qf, (fine.n_theta, fine.n_phi), "quadrature"

    @property
    def shares_power(self) -> bool:
        """True when radiated power comes from the shared matrices (else per beam)."""
        return self._power_matrices() is not False

    def radiated_power(self, array):
        """:func:`steradian.radiation.radiated_power` of ``array`` at this frequency."""
        from .radiation import RadiatedPower, radiated_power

        self.check(array, self.frequency)
        got = self._power_matrices()
        if got is False:
            return radiated_power(array, frequency=self.frequency)
        qc, qf, (nt, nph), method = got
        w = array.weights(self.frequency)
        p = float(np.real(np.vdot(w, qc @ w)))
        if method == "closed_form":
            return RadiatedPower(p, array.n * np.finfo(float).eps, "closed_form")
        pf = float(np.real(np.vdot(w, qf @ w)))
        return RadiatedPower(pf, abs(p - pf) / pf if pf > 0 else np.inf, "quadrature", nt,
                             nph)

    # ---- results memoised by the weights -------------------------------------------------
    def memo(self, what: str, array, compute):
        """``compute()`` once per ``what`` and distinct weights of ``array``."""
        w = np.ascontiguousarray(array.weights(self.frequency))
        key = (what, hashlib.sha256(w.tobytes()).hexdigest())
        if key not in self._memo:
            self._memo[key] = compute()
        return self._memo[key]


def _hashable(v):
    if v is None or isinstance(v, (bool, int, float, str)):
        return v
    return np.asarray(v, float).tobytes()
