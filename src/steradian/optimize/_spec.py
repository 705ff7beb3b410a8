"""Design-file ``[synthesis]`` tables: the method, its targets and limits.

::

    [synthesis]
    method = "max_directivity"      # or "min_sidelobe", "phase_only", "thin"
    psl_db = -30.0                  # peak sidelobe limit (negative dB)
    weights = "amplitude"           # amplitude-only taper ("complex" by default)
    symmetry = "quadrant"
    nulls = [{ theta_deg = 40.0, phi_deg = 0.0 }]
    notches = [{ theta_deg = [60.0, 70.0], phi_deg = [-10.0, 10.0], depth_db = -50.0 }]
    mask = { angles_deg = [5.0, 20.0, 90.0], levels_db = [-25.0, -35.0, -45.0] }
    scan = [[0.0, 0.0], [45.0, 0.0]]  # max_directivity over a scan set (or "beams")
    solver = "auto"                 # max_directivity: "interior", "conic" or "auto"

    [synthesis.tradeoff]
    start_db = -15.0
    stop_db = -45.0
    points = 20

With ``scan`` (method ``max_directivity`` only) the result is one amplitude taper that
maximises the worst beam's directivity with ``psl_db`` held at every listed direction
(:func:`~steradian.optimize.max_worst_directivity`); ``scan = "beams"`` names the design's
``[beams]`` set, which the design recipe (:func:`steradian.workflows.synthesize_design`)
resolves. It takes ``psl_db``, ``mainlobe``, ``weights`` ("amplitude", the default with
``scan``), ``symmetry``, ``nonnegative``, ``dynamic_range_db``, ``loading``, ``tol_db``,
``max_rounds``, ``oversample`` and ``dense_oversample``.

Every key is read through :class:`steradian.schema.Section`; a bad one raises
:class:`~steradian.errors.DesignError` naming ``synthesis.<key>`` (with the closest valid key
for a misspelling).
"""

from __future__ import annotations

from typing import get_args

from ..errors import DesignError, SteradianError
from ..schema import Section
from ._convex import max_directivity, min_sidelobe
from ._dispatch import SOLVERS
from ._levels import null_list, nulls_in_front
from ._masks import Mask, Notch, itu_s465
from ._nonconvex import phase_only, thin
from ._problem import SymmetryKind, WeightsKind
from ._scan import max_worst_directivity, scan_directions
from ._tradeoff import tradeoff

__all__ = ["synthesize", "tradeoff_from_spec", "METHODS", "spec_mask"]

_COMMON = {"mainlobe", "nulls", "oversample", "dense_oversample"}
_CONVEX = _COMMON | {"notches", "mask", "weights", "symmetry", "nonnegative",
                     "dynamic_range_db", "wng_min_db", "loading", "tol_db", "max_rounds"}
METHODS: dict[str, set] = {
    "max_directivity": _CONVEX | {"psl_db", "scan", "solver"},
    "min_sidelobe": _CONVEX | {"loss_db", "min_directivity_dbi"},
    "phase_only": _COMMON | {"psl_db", "hops", "seed", "tol_db", "max_rounds"},
    "thin": {"mainlobe", "fill", "generations", "seed", "symmetric", "oversample",
             "dense_oversample"},
}
"""Method -> the keys it accepts (besides ``method`` and the ``tradeoff`` sub-table)."""

_FUNCTIONS = {"max_directivity": max_directivity, "min_sidelobe": min_sidelobe,
              "phase_only": phase_only, "thin": thin}
_TRADEOFF_KEYS = ("start_db", "stop_db", "points", "levels_db")
_MASK_KEYS = {"table": ("kind", "angles_deg", "levels_db", "absolute"),
              "log_envelope": ("kind", "a_dbi", "b", "start_deg", "floor_dbi"),
              "itu_s465": ("kind", "d_over_lambda")}
_NOTCH_KEYS = ("theta_deg", "phi_deg", "depth_db")
_SCAN_KEYS = {"psl_db", "mainlobe", "weights", "symmetry", "nonnegative", "dynamic_range_db",
              "loading", "tol_db", "max_rounds", "oversample", "dense_oversample"}


def spec_mask(m, name: str = "synthesis.mask", source: str | None = None) -> Mask:
    """Build a :class:`Mask` from its table form (see the module docstring)."""
    s = m if isinstance(m, Section) else Section(name, m, source)
    kind = s.string("kind", "table", choices=tuple(_MASK_KEYS))
    s.only(_MASK_KEYS[kind], f"for mask kind {kind!r}")
    try:
        if kind == "table":
            return Mask.table(s.numbers("angles_deg"), s.numbers("levels_db"),
                              s.boolean("absolute", False))
        if kind == "log_envelope":
            return Mask.log_envelope(s.number("a_dbi"), s.number("b"), s.number("start_deg"),
                                     s.number("floor_dbi", None))
        return itu_s465(s.number("d_over_lambda", None))
    except DesignError:
        raise
    except SteradianError as exc:
        raise s.error(None, str(exc)) from None


def _array(s: Section, key: str) -> list:
    v = s.data[key]
    if not isinstance(v, list):
        raise s.error(key, f"must be an array, got {v!r}")
    return v


def _notches(s: Section, key: str) -> list[Notch]:
    out = []
    for i, n in enumerate(_array(s, key)):
        t = Section(f"{s.name}.{key}[{i}]", n, s.source)
        t.only(_NOTCH_KEYS)
        try:
            out.append(Notch(tuple(t.numbers("theta_deg")), tuple(t.numbers("phi_deg")),
                             t.number("depth_db")))
        except DesignError:
            raise
        except SteradianError as exc:
            raise t.error(None, str(exc)) from None
    return out


def _scan(s: Section, key: str):
    """``"beams"`` (resolved by the design recipe) or a list of [theta_deg, phi_deg]."""
    v = s.data[key]
    if isinstance(v, str):
        return s.string(key, choices=("beams",))
    if not isinstance(v, list) or not all(isinstance(p, list) for p in v):
        raise s.error(key, f'must be "beams" or a list of [theta_deg, phi_deg] pairs, got {v!r}')
    try:
        return scan_directions(v)
    except SteradianError as exc:
        raise s.error(key, str(exc)) from None


def _mainlobe(s: Section, key: str):
    return s.numbers(key) if isinstance(s.data[key], list) else s.number(key)


_GET = {
    **{k: Section.number for k in ("psl_db", "loss_db", "min_directivity_dbi",
                                   "dynamic_range_db", "wng_min_db", "loading", "tol_db",
                                   "oversample", "dense_oversample")},
    **{k: Section.integer for k in ("max_rounds", "hops", "seed", "fill", "generations")},
    **{k: Section.boolean for k in ("nonnegative", "symmetric")},
    "weights": lambda s, k: s.string(k, choices=get_args(WeightsKind)),
    "symmetry": lambda s, k: s.string(k, choices=get_args(SymmetryKind)),
    "mainlobe": _mainlobe,
    "nulls": lambda s, k: null_list(_array(s, k), k, s.error),
    "notches": _notches,
    "mask": lambda s, k: spec_mask(s.child(k)),
    "scan": _scan,
    "solver": lambda s, k: s.string(k, choices=SOLVERS),
}
"""Key -> reader of its value from a :class:`Section`."""


def _kwargs(s: Section, allowed) -> dict:
    s.only(sorted(set(allowed) | {"method", "tradeoff"}), "for this method")
    return {k: _GET[k](s, k) for k in s.data if k not in ("method", "tradeoff")}


def synthesize(array, spec: dict | None = None, **overrides):
    """Run the method a ``[synthesis]`` table asks for on ``array``.

    ``overrides`` (keyword arguments of the method, e.g. from command-line options) replace
    the table's values; ``method`` may be overridden too. A null at or behind the ground
    plane of a front-half-space element is refused, naming ``synthesis.nulls[i]`` (or
    ``nulls[i]`` for an override). Returns a :class:`~steradian.optimize.SynthesisResult`.
    """
    s = Section("synthesis", {} if spec is None else spec, None)
    if overrides.get("method") is not None:
        s = Section(s.name, {**s.data, "method": overrides["method"]}, s.source)
    overrides.pop("method", None)
    method = s.string("method", "max_directivity", choices=tuple(METHODS))
    kw = _kwargs(s, METHODS[method])
    for k, v in overrides.items():
        if v is None:
            continue
        if k not in METHODS[method]:
            raise SteradianError(f"option {k} does not apply to method {method!r}")
        kw[k] = v
    if method == "min_sidelobe" and "loss_db" not in kw and "min_directivity_dbi" not in kw:
        raise s.error("loss_db", "min_sidelobe needs loss_db or min_directivity_dbi")
    if kw.get("scan") is not None:
        return _scan_synthesis(array, s, kw)
    if kw.get("nulls"):
        if overrides.get("nulls") is None:
            nulls_in_front(array, kw["nulls"], "nulls", s.error)
        else:
            nulls_in_front(array, kw["nulls"])
    return _FUNCTIONS[method](array, **kw)


def _scan_synthesis(array, s: Section, kw: dict):
    """``max_directivity`` over a scan set: the keys it takes, then the synthesis."""
    scan = kw.pop("scan")
    if isinstance(scan, str):
        raise s.error("scan", 'scan = "beams" names the design\'s [beams] set; run it on a '
                      "design (steradian synth) or give the directions")
    extra = sorted(k for k in kw if k not in _SCAN_KEYS)
    if extra:
        raise s.error(extra[0], "does not apply with scan (scan-volume synthesis takes "
                      + ", ".join(sorted(_SCAN_KEYS)) + ")")
    if kw.get("weights", "amplitude") != "amplitude":
        raise s.error("weights", "scan-volume synthesis designs one amplitude taper for every "
                      "beam: weights must be 'amplitude'")
    try:
        scan = scan_directions(scan)
    except SteradianError as exc:
        raise s.error("scan", str(exc)) from None
    return max_worst_directivity(array, scan, **kw)


def tradeoff_from_spec(array, spec: dict | None = None, **overrides):
    """Trade curve from ``[synthesis]`` (its limits) and ``[synthesis.tradeoff]`` (levels).

    Keys of ``[synthesis]`` that a trade curve cannot use (``psl_db``, ``mask``, the
    non-convex methods' keys) are ignored; ``overrides`` replace table values.
    """
    s = Section("synthesis", {} if spec is None else spec, None)
    usable = _CONVEX - {"mask"}
    kw = _kwargs(Section(s.name, {k: v for k, v in s.data.items() if k in usable}, s.source),
                 usable)
    tt = s.child("tradeoff", None)
    if tt is not None:
        tt.only(_TRADEOFF_KEYS)
        kw |= {k: tt.number(k) for k in ("start_db", "stop_db") if k in tt}
        if "points" in tt:
            kw["points"] = tt.integer("points")
        if "levels_db" in tt:
            kw["levels_db"] = tt.numbers("levels_db", nonempty=False)
    kw |= {k: v for k, v in overrides.items() if v is not None}
    try:
        return tradeoff(array, **kw)
    except DesignError:
        raise
    except SteradianError as exc:
        raise s.error("tradeoff", str(exc)) from None
