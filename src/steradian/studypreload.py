"""Warm start for the local study pool's worker processes (imported for its effect).

The local backend of :mod:`steradian.studyrun` starts its workers from a fork server where
the platform has one (multiprocessing's ``forkserver`` start method). The server imports
this module once, before it forks any worker: the modules a worker uses are then imported
and the compiled kernels of a small analysis and beam evaluation loaded, and every worker
forked from it starts warm instead of paying for both itself (about 0.6 s of CPU each).

Nothing else imports this module. The warm-up runs serial kernels only, so the server holds
no thread pool of numba or of the transforms when it forks; a warm-up that fails leaves the
workers to load what they need themselves, as spawned workers do.
"""

from __future__ import annotations


def warm() -> None:
    """Import the study modules and load the kernels of a 4 x 4 panel's analysis (with
    metrics) and of its beam evaluation."""
    from . import studyrun  # noqa: F401  (the job classes a worker unpickles)
    from .analysis import AnalysisOptions, analyze
    from .array import Array
    from .beamtable import BeamEvaluator
    from .elements import CosinePower
    from .geometry import rectangular

    a = Array(rectangular(4, 4, 0.015), 10e9, CosinePower(1.2))
    analyze(a, AnalysisOptions(metrics=True))
    BeamEvaluator(a).evaluate(a.weights()[None], [[20.0, 0.0]])


try:
    warm()
except Exception:  # noqa: BLE001  (a cold worker is slower, never wrong)
    pass
