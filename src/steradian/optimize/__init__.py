"""Numerical synthesis on the array's real geometry, element pattern and steering.

Convex problems (radiated-power objective with sidelobe, mask, null and hardware limits) are
solved to a certified optimum: real-field problems (centro-symmetric or amplitude weights
under sidelobe, mask, notch and depth-null limits) by a dense interior-point method
(``_qp``) or, past 3,000 unknowns, a first-order ADMM method (``_admm``), both
certified by an explicit dual bound; everything else by a conic interior-point solver
(clarabel, ``_conic``). ``_dispatch`` picks the path per round. Non-convex problems
(phase-only, thinning) go to scipy's global and local optimisers with a stated stopping rule.
A scan-volume taper (one amplitude taper for a set of beams, the worst beam's directivity
maximised under the sidelobe limit at each) is the same conic machinery over several
steered copies of the array. Every result is re-checked on a dense grid independent of the
constraint samples.
"""

from ._conic import Infeasible, SolverFailure
from ._convex import DEFAULT_LOADING, max_directivity, min_sidelobe
from ._diagnose import SynthesisInfeasible
from ._frame import chebyshev_null
from ._masks import Mask, Notch, Null, itu_s465
from ._nonconvex import phase_only, thin
from ._problem import reduced_power_matrix
from ._report import peak_sidelobe
from ._result import SynthesisResult
from ._scan import max_worst_directivity, scan_directions
from ._spec import METHODS, spec_mask, synthesize, tradeoff_from_spec
from ._tradeoff import TradeCurve, tradeoff

__all__ = [
    "max_directivity",
    "max_worst_directivity",
    "scan_directions",
    "min_sidelobe",
    "peak_sidelobe",
    "tradeoff",
    "phase_only",
    "thin",
    "synthesize",
    "tradeoff_from_spec",
    "spec_mask",
    "METHODS",
    "TradeCurve",
    "SynthesisResult",
    "SynthesisInfeasible",
    "SolverFailure",
    "Infeasible",
    "Mask",
    "Null",
    "Notch",
    "itu_s465",
    "DEFAULT_LOADING",
    "chebyshev_null",
    "reduced_power_matrix",
]
