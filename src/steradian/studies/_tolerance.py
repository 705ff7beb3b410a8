"""Part of :mod:`steradian.studies` (see the package docstring): Monte Carlo tolerance trials.

Each trial draws its errors from its own random stream, derived from the run seed and the
trial's index alone (:func:`trial_rng`), so a trial's result does not depend on which worker
ran it, in which order, or with which other trials. The draws are made in a fixed order and
always in full (amplitude, phase, failures, stuck phases, positions), so enabling one error
source never changes another source's values for the same trial.

Two evaluations of the same trials:

- :meth:`ToleranceStudy.evaluate` (the fast path): the weight-independent work is done once
  per study by :class:`steradian.beamtable.BeamEvaluator` (element responses on the lobe
  search set, the power matrix Q), so a trial is a few matrix-vector products and a refined
  lobe search shared by the whole batch;
- :meth:`ToleranceStudy.evaluate_reference` (the plain path): each trial's array is built
  and analysed by :func:`steradian.analysis.analyze` with pattern metrics, one at a time.

Trials with position errors change the element responses: they always take the plain path.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from ..analysis import AnalysisOptions, analyze
from ..array import Array, direction, steering_phases
from ..beamtable import BeamEvaluator, build_beam_table
from ..directions import Directions, fibonacci_directions
from ..elements import Isotropic
from ..engine import response_matrix
from ..errors import SteradianError
from ..geometry import Geometry, principal_axes
from ..units import db10
from ..validate import positive

__all__ = ["ErrorModel", "trial_rng", "TrialErrors", "draw_errors", "apply_errors",
           "ToleranceStudy", "TRIAL_FIELDS", "FAILURE_MODES"]

FAILURE_MODES = ("off", "stuck")
"""How a failed element behaves: ``off`` radiates nothing; ``stuck`` keeps its amplitude
with its phase shifter stuck at a random state (uniform over the turn)."""

TRIAL_FIELDS = ("trial", "n_failed", "directivity_dbi", "directivity_loss_db", "gain_dbi",
                "psl_db", "avg_sll_db", "pointing_error_deg", "peak_theta_deg",
                "peak_phi_deg")
"""Columns of one trial's result row, in file order."""

AVG_SET_PER_NULL = 1.5
"""Samples per null width of the set the average sidelobe level is taken on (near-uniform
Fibonacci set: the mean of its samples estimates the average over the sidelobe region)."""


@dataclass(frozen=True)
class ErrorModel:
    """Random errors of one tolerance study (all optional, zero by default).

    Attributes
    ----------
    amplitude_db : float
        Standard deviation of each element's amplitude error, dB (normal in dB).
    phase_deg : float
        Standard deviation of each element's phase error, degrees (normal).
    position_mm : float
        Standard deviation of each position coordinate (x, y and z), millimetres.
    failure_rate : float
        Probability that an element has failed (independent per element), 0 <= p < 1.
    failure_count : int
        Instead of a rate: exactly this many failed elements per trial (chosen at random).
    failure_mode : {"off", "stuck"}
        See :data:`FAILURE_MODES`.
    """

    amplitude_db: float = 0.0
    phase_deg: float = 0.0
    position_mm: float = 0.0
    failure_rate: float = 0.0
    failure_count: int = 0
    failure_mode: str = "off"

    def __post_init__(self):
        for name in ("amplitude_db", "phase_deg", "position_mm", "failure_rate"):
            v = float(getattr(self, name))
            if not math.isfinite(v) or v < 0:
                raise SteradianError(f"{name} must be zero or positive, got {v}")
            object.__setattr__(self, name, v)
        if self.failure_rate >= 1:
            raise SteradianError(f"failure_rate must be below 1, got {self.failure_rate}")
        if int(self.failure_count) != self.failure_count or self.failure_count < 0:
            raise SteradianError(f"failure_count must be a whole number >= 0, got "
                                 f"{self.failure_count}")
        object.__setattr__(self, "failure_count", int(self.failure_count))
        if self.failure_rate and self.failure_count:
            raise SteradianError("give failure_rate or failure_count, not both")
        if self.failure_mode not in FAILURE_MODES:
            raise SteradianError(f"failure_mode must be one of {', '.join(FAILURE_MODES)}, "
                                 f"got {self.failure_mode!r}")

    @property
    def sigma2(self) -> float:
        """Total small-error variance sigma^2 = sigma_a^2 + sigma_phi^2 (amplitude as a
        relative voltage error, phase in radians)."""
        sa = self.amplitude_db * math.log(10) / 20
        return sa**2 + math.radians(self.phase_deg) ** 2

    def describe(self) -> dict:
        return {"amplitude_db": self.amplitude_db, "phase_deg": self.phase_deg,
                "position_mm": self.position_mm, "failure_rate": self.failure_rate,
                "failure_count": self.failure_count, "failure_mode": self.failure_mode}


def trial_rng(seed: int, index: int) -> np.random.Generator:
    """The random stream of trial ``index`` of a run seeded ``seed``.

    It is ``np.random.SeedSequence(seed).spawn(index + 1)[index]`` (the ``index``-th child of
    the run's seed sequence, whose spawn key is ``(index,)``), built directly, so a trial is
    replayed from the two numbers alone.
    """
    if int(seed) != seed or seed < 0 or int(index) != index or index < 0:
        raise SteradianError(f"seed and trial index must be whole numbers >= 0, got "
                             f"{seed!r}, {index!r}")
    return np.random.Generator(np.random.PCG64(
        np.random.SeedSequence(int(seed), spawn_key=(int(index),))))


@dataclass(frozen=True)
class TrialErrors:
    """One trial's draws: complex factor per element, failed mask, random phases of stuck
    elements (radians) and position offsets (metres, (N, 3))."""

    factor: np.ndarray
    failed: np.ndarray
    stuck_phase: np.ndarray
    offsets: np.ndarray


def draw_errors(model: ErrorModel, n: int, rng: np.random.Generator) -> TrialErrors:
    """Draw one trial's errors for ``n`` elements (always every source, in a fixed order)."""
    a = rng.standard_normal(n) * model.amplitude_db
    ph = rng.standard_normal(n) * math.radians(model.phase_deg)
    u = rng.random(n)
    stuck = rng.random(n) * 2 * np.pi
    pos = rng.standard_normal((n, 3)) * (model.position_mm * 1e-3)
    if model.failure_count:
        if model.failure_count > n:
            raise SteradianError(f"failure_count {model.failure_count} exceeds the "
                                 f"{n} elements")
        failed = np.zeros(n, bool)
        failed[np.argsort(u, kind="stable")[:model.failure_count]] = True
    else:
        failed = u < model.failure_rate
    return TrialErrors(10 ** (a / 20) * np.exp(1j * ph), failed, stuck, pos)


def apply_errors(w: np.ndarray, e: TrialErrors, mode: str) -> np.ndarray:
    """Weights ``w`` (N,) with one trial's amplitude, phase and failure errors."""
    out = w * e.factor
    if mode == "off":
        return np.where(e.failed, 0.0, out)
    return np.where(e.failed, np.abs(out) * np.exp(1j * e.stuck_phase), out)


@dataclass(frozen=True)
class _Nominal:
    directivity_dbi: float
    psl_db: float
    peak: np.ndarray
    exclude_rad: float


class ToleranceStudy:
    """Monte Carlo trials of one array's beam under random errors.

    Parameters
    ----------
    array : Array
        The design: geometry, element, taper, steering and element mask.
    model : ErrorModel
        The random errors.
    seed : int
        Run seed; trial i draws from :func:`trial_rng` ``(seed, i)``.
    channel : ChannelModel, optional
        Quantize the nominal weights to this beamformer channel's states first, as
        :func:`steradian.beamtable.build_beam_table` does for the commanded direction (a
        tapered design on a phase-only channel is refused unless the channel says
        ``drop_taper``); the errors then act on the realised states.
    efficiency : float
        Radiation efficiency for the gain.

    Notes
    -----
    Directivity loss is relative to the error-free, unquantized beam. The average sidelobe
    level is the mean intensity over a near-uniform set of directions outside the nominal
    beam's main lobe (a cone of the first-null radius about the nominal peak, and its mirror
    image where the pattern is mirror-symmetric), relative to the trial's peak.
    """

    def __init__(self, array: Array, model: ErrorModel, seed: int = 0, *, channel=None,
                 efficiency: float = 1.0):
        self.array, self.model, self.seed = array, model, int(seed)
        trial_rng(self.seed, 0)  # checks the seed
        self.efficiency = positive("radiation_efficiency", efficiency)
        st = array.steering
        self.direction = np.array([0.0, 0.0] if st is None else [st.theta_deg, st.phi_deg])
        self.ideal = array.weights()
        self.nominal = self.ideal
        if channel is not None:  # exactly what a beam table of this direction loads
            b = build_beam_table(array, channel, [self.direction], evaluate=False)
            self.nominal = np.asarray(b.quantized.realised, complex).reshape(-1)
        self.bare = replace(array, steering=None, taper=np.ones(array.n))
        self.ref = self._reference_nominal()
        self._avg_setup()
        self._ev = None

    # ---- set-up ------------------------------------------------------------------------
    def _reference_nominal(self) -> _Nominal:
        res = analyze(self.array, AnalysisOptions(metrics=True))
        m = res.metrics
        fn = [p.fnbw_deg for p in m.planes if p.fnbw_deg is not None]
        excl = math.radians(max(fn) / 2) if fn else 2 * math.pi / max(
            self.array.electrical_radius(), 1.0)
        pk = res.peak
        return _Nominal(pk.directivity_dbi, m.psl_db,
                        np.asarray(pk.unit, float).reshape(3), excl)

    def _avg_setup(self) -> None:
        a = self.bare
        iso = isinstance(a.element, Isotropic) and a.geometry.orientations is None
        pa = principal_axes(a.positions)
        self._axis = pa.axes[0] if (pa.dimension <= 1 and iso and a.n > 1) else None
        front = (a.element.front_only and a.geometry.orientations is None) or bool(
            a.geometry.is_planar and iso)
        kr = max(a.electrical_radius(), 1.0)
        spacing = 2 * np.pi / kr / AVG_SET_PER_NULL
        n = max(int(4 * np.pi / spacing**2 / (2 if front else 1)), 200)
        d = fibonacci_directions(n, front)
        self._avg_dirs = d
        self._avg_mask = self._outside_main_lobe(d, self.ref.peak)
        self._avg_A = None

    def _outside_main_lobe(self, d, peak) -> np.ndarray:
        r = self.ref.exclude_rad
        if self._axis is not None:  # a line: the main lobe is a cone band about its axis
            c = np.arccos(np.clip(d @ self._axis, -1, 1))
            c0 = math.acos(max(-1.0, min(1.0, float(peak @ self._axis))))
            return np.abs(c - c0) > r
        p = peak.copy()
        if self.bare.geometry.is_planar and isinstance(self.bare.element, Isotropic):
            p[2] = abs(p[2])
        return d @ p < math.cos(r)

    @property
    def evaluator(self) -> BeamEvaluator:
        """The shared evaluator (built on first use)."""
        if self._ev is None:
            self._ev = BeamEvaluator(self.bare, efficiency=self.efficiency)
        return self._ev

    # ---- trials ------------------------------------------------------------------------
    def errors(self, index: int) -> TrialErrors:
        """Trial ``index``'s draws (replayable from the run seed and the index)."""
        return draw_errors(self.model, self.array.n, trial_rng(self.seed, index))

    def trial_weights(self, index: int) -> np.ndarray:
        """Realised weights of trial ``index``."""
        return apply_errors(self.nominal, self.errors(index), self.model.failure_mode)

    def _avg_sll(self, A, W, ipk) -> np.ndarray:
        """Average sidelobe level (dB) of weights W (B, N) on the averaging set."""
        u = np.abs(A[0] @ W.T) ** 2 + np.abs(A[1] @ W.T) ** 2
        return db10(u[self._avg_mask].mean(axis=0) / ipk)

    def _row(self, i, e, D, psl, avg, pe, th, ph) -> dict:
        return {"trial": int(i), "n_failed": int(np.count_nonzero(e.failed)),
                "directivity_dbi": float(D), "directivity_loss_db": self.ref.directivity_dbi
                - float(D), "gain_dbi": float(D + db10(self.efficiency)), "psl_db": float(psl),
                "avg_sll_db": float(avg), "pointing_error_deg": float(pe),
                "peak_theta_deg": float(th), "peak_phi_deg": float(ph)}

    def evaluate(self, indices) -> list[dict]:
        """Result rows (:data:`TRIAL_FIELDS`) of trials ``indices``, on the fast path (the
        plain path when the model has position errors)."""
        idx = [int(i) for i in indices]
        if self.model.position_mm > 0:
            return self.evaluate_reference(idx)
        if not idx:
            return []
        errs = [self.errors(i) for i in idx]
        W = np.array([apply_errors(self.nominal, e, self.model.failure_mode) for e in errs])
        live = np.abs(W).sum(axis=1) > 0
        if not live.all():
            raise SteradianError(f"trial {idx[int(np.flatnonzero(~live)[0])]} has every "
                                 "element failed; lower the failure rate")
        ev = self.evaluator
        m = ev.evaluate(W, np.tile(self.direction, (len(idx), 1)))
        ipk = 10 ** (m.directivity_dbi / 10) * ev.power(W) / (4 * np.pi)
        if self._avg_A is None:
            self._avg_A = response_matrix(self.bare, Directions.from_vectors(self._avg_dirs))
        avg = self._avg_sll(self._avg_A, W, ipk)
        pe = m.pointing_error_deg
        return [self._row(i, e, m.directivity_dbi[b], m.psl_db[b], avg[b], pe[b],
                          m.peak_theta_deg[b], m.peak_phi_deg[b])
                for b, (i, e) in enumerate(zip(idx, errs, strict=True))]

    def trial_array(self, index: int) -> Array:
        """Trial ``index`` as an :class:`Array` whose weights are the trial's realised weights
        (steered as the design, the phase shifters set for the nominal positions; displaced
        positions when the model has position errors)."""
        e = self.errors(index)
        w = apply_errors(self.nominal, e, self.model.failure_mode)
        a = self.array
        if self.model.position_mm > 0:
            g = a.geometry
            a = replace(a, geometry=Geometry(g.positions + e.offsets, g.orientations))
        st = a.steering
        if st is not None:  # the taper that, steered, gives w (sum-beam checks need it)
            w = w / steering_phases(a.positions, st.unit, a.k())
        return a.with_taper(w)

    def evaluate_reference(self, indices) -> list[dict]:
        """The same rows as :meth:`evaluate`, each trial built and analysed alone by
        :func:`steradian.analysis.analyze` (pattern metrics on)."""
        rows = []
        for i in indices:
            e = self.errors(i)
            a = self.trial_array(i)
            if not np.any(a.weights()):
                raise SteradianError(f"trial {i} has every element failed; lower the "
                                     "failure rate")
            res = analyze(a, AnalysisOptions(metrics=True))
            pk = res.peak
            ipk = pk.directivity * pk.power.value / (4 * np.pi)
            A = response_matrix(a, Directions.from_vectors(self._avg_dirs))
            avg = self._avg_sll(A, a.weights()[None, :], np.array([ipk]))[0]
            pe = self.evaluator.pointing_error_deg(pk.unit[None, :],
                                                   direction(*self.direction)[None, :])[0]
            rows.append(self._row(i, e, pk.directivity_dbi, res.metrics.psl_db, avg, pe,
                                  pk.theta_deg, pk.phi_deg))
        return rows
