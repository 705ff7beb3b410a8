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

    [synthesis.tradeoff]
    start_db = -15.0
    stop_db = -45.0
    points = 20

Every key is validated; a bad one raises :class:`~steradian.errors.DesignError` naming
``synthesis.<key>`` (with the closest valid key for a misspelling).
"""

from __future__ import annotations

import difflib
import math

from ..errors import DesignError, SteradianError
from ._convex import max_directivity, min_sidelobe
from ._masks import Mask, Notch, Null, itu_s465
from ._nonconvex import phase_only, thin
from ._tradeoff import tradeoff

__all__ = ["synthesize", "tradeoff_from_spec", "METHODS", "spec_mask"]

_COMMON = {"mainlobe", "nulls", "oversample", "dense_oversample"}
_CONVEX = _COMMON | {"notches", "mask", "weights", "symmetry", "nonnegative",
                     "dynamic_range_db", "wng_min_db", "loading", "tol_db", "max_rounds"}
METHODS: dict[str, set] = {
    "max_directivity": _CONVEX | {"psl_db"},
    "min_sidelobe": _CONVEX | {"loss_db", "min_directivity_dbi"},
    "phase_only": _COMMON | {"psl_db", "hops", "seed", "tol_db", "max_rounds"},
    "thin": {"mainlobe", "fill", "generations", "seed", "symmetric", "oversample",
             "dense_oversample"},
}
"""Method -> the keys it accepts (besides ``method`` and the ``tradeoff`` sub-table)."""

_TRADEOFF_KEYS = {"start_db", "stop_db", "points", "levels_db"}
_NUMBER = {"psl_db", "loss_db", "min_directivity_dbi", "dynamic_range_db", "wng_min_db",
           "loading", "tol_db", "oversample", "dense_oversample"}
_INT = {"max_rounds", "hops", "seed", "fill", "generations"}
_BOOL = {"nonnegative", "symmetric"}
_STR = {"weights", "symmetry"}


def _hint(word, options) -> str:
    m = difflib.get_close_matches(str(word), sorted(options), n=1)
    return f" (did you mean {m[0]!r}?)" if m else ""


def _num(key, v):
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
        raise DesignError(f"synthesis.{key}", f"must be a finite number, got {v!r}")
    return float(v)


def spec_mask(m) -> Mask:
    """Build a :class:`Mask` from its table form (see the module docstring)."""
    if not isinstance(m, dict):
        raise DesignError("synthesis.mask", f"must be a table, got {m!r}")
    kind = m.get("kind", "table")
    allowed = {"table": {"kind", "angles_deg", "levels_db", "absolute"},
               "log_envelope": {"kind", "a_dbi", "b", "start_deg", "floor_dbi"},
               "itu_s465": {"kind", "d_over_lambda"}}
    if kind not in allowed:
        raise DesignError("synthesis.mask.kind", f"unknown mask kind {kind!r}; one of "
                          + ", ".join(allowed) + _hint(kind, allowed))
    for k in m:
        if k not in allowed[kind]:
            raise DesignError(f"synthesis.mask.{k}", f"unknown key for mask kind {kind!r}; "
                              "valid keys: " + ", ".join(sorted(allowed[kind]))
                              + _hint(k, allowed[kind]))
    try:
        if kind == "table":
            for k in ("angles_deg", "levels_db"):
                if k not in m:
                    raise DesignError(f"synthesis.mask.{k}", "required for a table mask")
            return Mask.table(m["angles_deg"], m["levels_db"], bool(m.get("absolute", False)))
        if kind == "log_envelope":
            for k in ("a_dbi", "b", "start_deg"):
                if k not in m:
                    raise DesignError(f"synthesis.mask.{k}", "required for a log_envelope "
                                      "mask")
            return Mask.log_envelope(m["a_dbi"], m["b"], m["start_deg"], m.get("floor_dbi"))
        return itu_s465(m.get("d_over_lambda"))
    except DesignError:
        raise
    except (SteradianError, TypeError, ValueError) as exc:
        raise DesignError("synthesis.mask", str(exc)) from None


def _nulls(v):
    if not isinstance(v, list):
        raise DesignError("synthesis.nulls", f"must be a list, got {v!r}")
    out = []
    for i, n in enumerate(v):
        key = f"synthesis.nulls[{i}]"
        try:
            if isinstance(n, dict):
                bad = set(n) - {"theta_deg", "phi_deg", "depth_db"}
                if bad:
                    k = sorted(bad)[0]
                    raise DesignError(f"{key}.{k}", "unknown key; valid keys: theta_deg, "
                                      "phi_deg, depth_db" + _hint(k, ["theta_deg", "phi_deg",
                                                                      "depth_db"]))
                out.append(Null(float(n["theta_deg"]), float(n["phi_deg"]),
                                None if n.get("depth_db") is None else float(n["depth_db"])))
            else:
                out.append(Null(*[float(x) for x in n]))
        except DesignError:
            raise
        except KeyError as exc:
            raise DesignError(f"{key}.{exc.args[0]}", "required") from None
        except (SteradianError, TypeError, ValueError) as exc:
            raise DesignError(key, f"must be {{theta_deg, phi_deg[, depth_db]}} ({exc})") \
                from None
    return out


def _notches(v):
    if not isinstance(v, list):
        raise DesignError("synthesis.notches", f"must be a list, got {v!r}")
    out = []
    for i, n in enumerate(v):
        key = f"synthesis.notches[{i}]"
        if not isinstance(n, dict):
            raise DesignError(key, "must be a table {theta_deg = [min, max], phi_deg = [min, "
                              "max], depth_db}")
        bad = set(n) - {"theta_deg", "phi_deg", "depth_db"}
        if bad:
            k = sorted(bad)[0]
            raise DesignError(f"{key}.{k}", "unknown key; valid keys: theta_deg, phi_deg, "
                              "depth_db" + _hint(k, ["theta_deg", "phi_deg", "depth_db"]))
        try:
            out.append(Notch(tuple(n["theta_deg"]), tuple(n["phi_deg"]), float(n["depth_db"])))
        except KeyError as exc:
            raise DesignError(f"{key}.{exc.args[0]}", "required") from None
        except (SteradianError, TypeError, ValueError) as exc:
            raise DesignError(key, str(exc)) from None
    return out


def _kwargs(spec: dict, allowed: set) -> dict:
    kw = {}
    for k, v in spec.items():
        if k in ("method", "tradeoff"):
            continue
        if k not in allowed:
            raise DesignError(f"synthesis.{k}", "unknown key for this method; valid keys: "
                              + ", ".join(sorted(allowed)) + _hint(k, allowed))
        if k in _NUMBER:
            kw[k] = _num(k, v)
        elif k in _INT:
            if isinstance(v, bool) or not isinstance(v, int):
                raise DesignError(f"synthesis.{k}", f"must be a whole number, got {v!r}")
            kw[k] = v
        elif k in _BOOL:
            if not isinstance(v, bool):
                raise DesignError(f"synthesis.{k}", f"must be true or false, got {v!r}")
            kw[k] = v
        elif k in _STR:
            if not isinstance(v, str):
                raise DesignError(f"synthesis.{k}", f"must be a string, got {v!r}")
            kw[k] = v
        elif k == "mainlobe":
            if isinstance(v, list):
                kw[k] = [_num(k, x) for x in v]
            else:
                kw[k] = _num(k, v)
        elif k == "nulls":
            kw[k] = _nulls(v)
        elif k == "notches":
            kw[k] = _notches(v)
        elif k == "mask":
            kw[k] = spec_mask(v)
    return kw


def _method(spec) -> str:
    if not isinstance(spec, dict):
        raise DesignError("synthesis", f"must be a table, got {spec!r}")
    m = spec.get("method", "max_directivity")
    if m not in METHODS:
        raise DesignError("synthesis.method", f"unknown method {m!r}; one of "
                          + ", ".join(METHODS) + _hint(m, METHODS))
    return m


def synthesize(array, spec: dict | None = None, **overrides):
    """Run the method a ``[synthesis]`` table asks for on ``array``.

    ``overrides`` (keyword arguments of the method, e.g. from command-line options) replace
    the table's values; ``method`` may be overridden too. Returns a
    :class:`~steradian.optimize.SynthesisResult`.
    """
    spec = dict(spec or {})
    if overrides.get("method") is not None:
        spec["method"] = overrides.pop("method")
    overrides.pop("method", None)
    method = _method(spec)
    kw = _kwargs(spec, METHODS[method])
    for k, v in overrides.items():
        if v is None:
            continue
        if k not in METHODS[method]:
            raise SteradianError(f"option {k} does not apply to method {method!r}")
        kw[k] = v
    fn = {"max_directivity": max_directivity, "min_sidelobe": min_sidelobe,
          "phase_only": phase_only, "thin": thin}[method]
    if method == "min_sidelobe" and "loss_db" not in kw and "min_directivity_dbi" not in kw:
        raise DesignError("synthesis.loss_db", "min_sidelobe needs loss_db or "
                          "min_directivity_dbi")
    return fn(array, **kw)


def tradeoff_from_spec(array, spec: dict | None = None, **overrides):
    """Trade curve from ``[synthesis]`` (its limits) and ``[synthesis.tradeoff]`` (levels).

    Keys of ``[synthesis]`` that a trade curve cannot use (``psl_db``, ``mask``, the
    non-convex methods' keys) are ignored; ``overrides`` replace table values.
    """
    spec = dict(spec or {})
    tt = spec.get("tradeoff", {})
    if not isinstance(tt, dict):
        raise DesignError("synthesis.tradeoff", f"must be a table, got {tt!r}")
    for k in tt:
        if k not in _TRADEOFF_KEYS:
            raise DesignError(f"synthesis.tradeoff.{k}", "unknown key; valid keys: "
                              + ", ".join(sorted(_TRADEOFF_KEYS)) + _hint(k, _TRADEOFF_KEYS))
    usable = (_CONVEX - {"mask"})
    base = {k: v for k, v in spec.items() if k in usable}
    kw = _kwargs(base, usable)
    for k in ("start_db", "stop_db"):
        if k in tt:
            kw[k] = _num(f"tradeoff.{k}", tt[k])
    if "points" in tt:
        if isinstance(tt["points"], bool) or not isinstance(tt["points"], int):
            raise DesignError("synthesis.tradeoff.points", "must be a whole number")
        kw["points"] = tt["points"]
    if "levels_db" in tt:
        if not isinstance(tt["levels_db"], list):
            raise DesignError("synthesis.tradeoff.levels_db", "must be a list of numbers")
        kw["levels_db"] = [_num("tradeoff.levels_db", x) for x in tt["levels_db"]]
    for k, v in overrides.items():
        if v is not None:
            kw[k] = v
    try:
        return tradeoff(array, **kw)
    except DesignError:
        raise
    except SteradianError as exc:
        raise DesignError("synthesis.tradeoff", str(exc)) from None
