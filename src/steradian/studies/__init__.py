r"""Studies: parameter sweeps and Monte Carlo tolerance trials of one design.

The computation only: values in, rows of metrics out. Running many points or trials over
processes or a Dask cluster, with progress, result files and resuming, is
:mod:`steradian.studyrun`; the result files are :mod:`steradian.io.study_files`.

Sweeps (:mod:`._sweep`): a point is an array and an evaluation frequency. Points sharing
positions, element and frequency are evaluated as a group: every analysis metric by
:func:`steradian.analysis.analyze_many` with one :class:`steradian.aperture.Aperture`
(``"full"``), or the beam metrics by one :class:`steradian.beamtable.BeamEvaluator`
(``"beam"``).

Tolerance (:mod:`._tolerance`): random amplitude (dB) and phase (degrees) errors, position
errors, element failures (a rate or a count; off, or stuck at a random phase) and the
quantization of the weights to a beamformer channel. Trial ``i`` of a run seeded ``s`` draws
from ``SeedSequence(s, spawn_key=(i,))`` (:func:`trial_rng`), so results do not depend on
workers or order. Statistics (:func:`trial_statistics`): mean, standard deviation, 5/50/95th
percentiles, extremes and the worst trial with the seed and index that replay it.

Expected values for small independent errors (used by the tests): with
:math:`\sigma^2 = \sigma_a^2 + \sigma_\phi^2` (relative amplitude and phase, radians), the
expected directivity ratio is about :math:`1/(1+\sigma^2)` and the average sidelobe level
about :math:`\sigma^2 / (N \eta)` relative to the peak, :math:`\eta` the taper efficiency.

References
----------
R. J. Mailloux, *Phased Array Antenna Handbook*, 3rd ed., Artech House, 2018, ch. 7 (effects
of random amplitude and phase errors; recalled from memory).
J. Ruze, "The effect of aperture errors on the antenna radiation pattern," Nuovo Cimento
Suppl. 9 (1952) 364-380.
"""

from __future__ import annotations

from ._spec import (
    AXIS_KEYS,
    DEFAULT_CHUNK,
    MAX_AXES,
    SWEEP_KEYS,
    TOLERANCE_KEYS,
    SweepSpec,
    ToleranceSpec,
    parse_axis,
    sweep_from_table,
    tolerance_from_table,
)
from ._stats import PERCENTILES, WORST, trial_statistics
from ._sweep import (
    GRATING_LOBE_DB,
    SWEEP_MODES,
    SweepAxis,
    evaluate_points,
    evaluation_key,
    group_points,
    sweep_fields,
)
from ._tolerance import (
    FAILURE_MODES,
    TRIAL_FIELDS,
    ErrorModel,
    ToleranceStudy,
    TrialErrors,
    apply_errors,
    draw_errors,
    trial_rng,
)

__all__ = ["ErrorModel", "ToleranceStudy", "TrialErrors", "draw_errors", "apply_errors",
           "trial_rng", "TRIAL_FIELDS", "FAILURE_MODES", "trial_statistics", "PERCENTILES",
           "WORST", "SweepAxis", "SWEEP_MODES", "GRATING_LOBE_DB", "sweep_fields",
           "evaluation_key", "group_points", "evaluate_points", "SweepSpec", "ToleranceSpec",
           "sweep_from_table", "tolerance_from_table", "parse_axis", "SWEEP_KEYS",
           "AXIS_KEYS", "TOLERANCE_KEYS", "MAX_AXES", "DEFAULT_CHUNK"]
