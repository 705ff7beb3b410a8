"""The sphere: quadrature rules for integrals over directions, and the lobe/peak search.

Two jobs, one module each, both working on callables and direction sets only (never on an
array or an element):

- :mod:`steradian.sphere._rules`: Gauss-Legendre(cos theta) x uniform(phi) product rules
  sized for an array's band limit (:func:`sphere_rule`, :func:`rule_for`,
  :func:`gauss_legendre`).
- :mod:`steradian.sphere._lobes`: THE off-grid maximum search used by every caller (peak
  directivity, pattern metrics, beam tables, the optimizer's dense check, element tables):
  :class:`SearchSet` (a Fibonacci set, a half great circle or any set, with neighbours),
  :meth:`SearchSet.local_maxima` (candidates, optionally inside an allowed region, for one
  or many patterns), :func:`refine_maxima` (batched safeguarded Newton ascent),
  :func:`refine_best` (coarse to fine, the best of each group of starts),
  :func:`find_maxima` and :func:`peak_value` (the two steps together).

Both refuse, before building anything, a rule or a search set over the memory budget
(:mod:`steradian.budget`); :func:`require_rule` and :func:`require_search` make the same
check alone, for callers that want to refuse before other work.
"""

from ._lobes import (
    SearchSet,
    find_maxima,
    find_maxima_many,
    peak_value,
    pointwise,
    refine_best,
    refine_maxima,
    require_search,
    search_spacing,
)
from ._rules import (
    DEFAULT_MARGIN,
    SphereRule,
    gauss_legendre,
    require_rule,
    rule_for,
    sphere_rule,
)

__all__ = ["SphereRule", "sphere_rule", "rule_for", "gauss_legendre", "DEFAULT_MARGIN",
           "SearchSet", "search_spacing", "refine_maxima", "refine_best", "find_maxima",
           "find_maxima_many",
           "peak_value", "pointwise", "require_rule", "require_search"]
