"""Design-file taper tables: ``[taper]`` with ``kind`` and the published-symbol parameters.

:func:`from_spec` is what the design-file reader calls for every kind except "uniform". Keys
are validated here; a bad key or value raises :class:`~steradian.errors.DesignError` naming
``taper.<key>`` (with the closest valid key for a misspelling).
"""

from __future__ import annotations

import difflib
import math

import numpy as np

from ..errors import DesignError, SteradianError
from ..geometry import Geometry
from . import _line, _planar

__all__ = ["from_spec", "KINDS"]

# kind -> {key: (type, default)}; default None = required. "number" accepts int or float.
KINDS: dict[str, dict[str, tuple[str, object]]] = {
    "uniform": {},
    "binomial": {},
    "dolph_chebyshev": {"sll": ("number", None)},
    "taylor": {"nbar": ("int", 4), "sll": ("number", 30.0)},
    "bayliss": {"nbar": ("int", 5), "sll": ("number", 30.0)},
    "cosine_pedestal": {"pedestal": ("number", 0.1), "exponent": ("number", 2.0)},
    "window": {"name": ("str", None), "params": ("list", [])},
    "taylor_circular": {"nbar": ("int", 4), "sll": ("number", 30.0),
                        "radius": ("number", None)},
    "bayliss_circular": {"nbar": ("int", 5), "sll": ("number", 30.0),
                         "radius": ("number", None), "phi_deg": ("number", 0.0)},
    "separable": {"x": ("table", None), "y": ("table", None)},
    "radial": {"profile": ("table", None), "radius": ("number", None)},
}
_OPTIONAL_NONE = {("taylor_circular", "radius"), ("bayliss_circular", "radius"),
                  ("radial", "radius")}
_LINE_KINDS = ("uniform", "binomial", "dolph_chebyshev", "taylor", "bayliss",
               "cosine_pedestal", "window")
_CONTINUOUS = {"uniform": lambda t, p: np.ones_like(t),
               "taylor": lambda t, p: _line.taylor_aperture(t, p["nbar"], p["sll"]),
               "bayliss": lambda t, p: _line.bayliss_aperture(t, p["nbar"], p["sll"]),
               "cosine_pedestal": lambda t, p: _line.cosine_pedestal_aperture(
                   t, p["pedestal"], p["exponent"])}


def _suggest(word, options) -> str:
    hint = difflib.get_close_matches(str(word), list(options), n=1)
    return f" (did you mean {hint[0]!r}?)" if hint else ""


def _check(prefix: str, spec, allowed_kinds) -> tuple[str, dict]:
    if not isinstance(spec, dict):
        raise DesignError(prefix, f"must be a table, got {spec!r}")
    if "kind" not in spec:
        raise DesignError(f"{prefix}.kind", "missing; one of " + ", ".join(allowed_kinds))
    kind = spec["kind"]
    if kind not in allowed_kinds:
        raise DesignError(f"{prefix}.kind", f"unknown kind {kind!r}; one of "
                          + ", ".join(allowed_kinds) + _suggest(kind, allowed_kinds))
    schema = KINDS[kind]
    params = {}
    for key, value in spec.items():
        if key == "kind":
            continue
        if key not in schema:
            valid = sorted(schema) or ["(none)"]
            raise DesignError(f"{prefix}.{key}", f"unknown key for kind {kind!r}; valid keys: "
                              + ", ".join(valid) + _suggest(key, schema))
        typ = schema[key][0]
        ok = {"number": isinstance(value, (int, float)) and not isinstance(value, bool),
              "int": isinstance(value, int) and not isinstance(value, bool),
              "str": isinstance(value, str),
              "list": isinstance(value, list),
              "table": isinstance(value, dict)}[typ]
        if not ok or (typ == "number" and not math.isfinite(value)):
            want = {"number": "a number", "int": "a whole number", "str": "a string",
                    "list": "a list", "table": "a table"}[typ]
            raise DesignError(f"{prefix}.{key}", f"must be {want}, got {value!r}")
        params[key] = value
    for key, (_, default) in schema.items():
        if key not in params:
            if default is None and (kind, key) not in _OPTIONAL_NONE:
                raise DesignError(f"{prefix}.{key}", f"required for kind {kind!r}")
            params[key] = default
    return kind, params


def _line_samples(kind, p, coords, wavelength, prefix):
    """Weights of a line kind at 1-D coordinates (m), any order."""
    vals, idx = _planar.axis_coordinates(coords)
    n = len(vals)
    if kind in _CONTINUOUS:
        L = _planar._aperture_length(vals)
        t = (vals - 0.5 * (vals[0] + vals[-1])) / L
        w = _CONTINUOUS[kind](t, p)
        m = np.max(np.abs(w))
        w = w / m if m > 0 else w
        if kind == "taylor":
            w = w / np.max(np.abs(w))
        return w[idx]
    if n > 2:
        sp = np.diff(vals)
        if sp.max() - sp.min() > 1e-6 * sp.mean():
            raise DesignError(f"{prefix}.kind", f"{kind!r} needs equally spaced elements; "
                              f"spacings range {sp.min():.6g}-{sp.max():.6g} m (use 'taylor' "
                              "or the optimizer for uneven layouts)")
    if kind == "binomial":
        w = _line.binomial(n)
    elif kind == "dolph_chebyshev":
        d = float(np.mean(np.diff(vals))) / wavelength if n > 1 else 0.5
        w = _line.dolph_chebyshev(n, p["sll"], d)
    else:  # window
        w = _line.window(p["name"], n, *p["params"])
    return w[idx]


def _layout(geometry: Geometry, prefix):
    pos = geometry.positions
    c = pos - pos.mean(axis=0)
    if geometry.n == 1:
        return "line", np.zeros(1)
    _, s, vt = np.linalg.svd(c, full_matrices=False)
    if s[1] <= 1e-9 * max(s[0], 1e-300):
        return "line", c @ vt[0]
    if np.ptp(pos[:, 2]) <= 1e-9 * max(np.ptp(pos), 1e-300):
        return "planar", None
    raise DesignError(f"{prefix}.kind", "closed-form tapers need a line or a planar layout in "
                      "the x-y plane; use the optimizer for 3-D layouts")


def _build(geometry, spec, wavelength, prefix, allowed):
    kind, p = _check(prefix, spec, allowed)
    try:
        if kind == "taylor_circular":
            return _planar.taylor_circular(geometry, p["nbar"], p["sll"], p["radius"])
        if kind == "bayliss_circular":
            return _planar.bayliss_circular(geometry, p["nbar"], p["sll"], p["radius"],
                                            p["phi_deg"])
        if kind == "radial":
            pk, pp = _check(f"{prefix}.profile", p["profile"], tuple(_CONTINUOUS))
            return _planar.radial(geometry, lambda t: _CONTINUOUS[pk](t, pp), p["radius"])
        layout, coord = _layout(geometry, prefix)
        if kind == "separable":
            if layout != "planar":
                raise DesignError(f"{prefix}.kind", "'separable' needs a planar layout")
            pos = geometry.positions
            wx = _build_axis(p["x"], pos[:, 0], wavelength, f"{prefix}.x")
            wy = _build_axis(p["y"], pos[:, 1], wavelength, f"{prefix}.y")
            return wx * wy
        if layout == "line":
            return _line_samples(kind, p, coord, wavelength, prefix)
        if kind == "bayliss":
            raise DesignError(f"{prefix}.kind", "'bayliss' on a planar layout is ambiguous: use "
                              "'bayliss_circular', or 'separable' with x or y = bayliss")
        pos = geometry.positions
        return (_line_samples(kind, p, pos[:, 0], wavelength, prefix)
                * _line_samples(kind, p, pos[:, 1], wavelength, prefix))
    except DesignError:
        raise
    except SteradianError as exc:
        raise DesignError(prefix, str(exc)) from None


def _build_axis(spec, coords, wavelength, prefix):
    kind, p = _check(prefix, spec, _LINE_KINDS)
    try:
        return _line_samples(kind, p, coords, wavelength, prefix)
    except DesignError:
        raise
    except SteradianError as exc:
        raise DesignError(prefix, str(exc)) from None


def from_spec(geometry: Geometry, spec: dict, wavelength: float) -> np.ndarray:
    """Weights (one per element, element order) for a design file's ``[taper]`` table.

    Parameters
    ----------
    geometry : Geometry
        The array layout.
    spec : dict
        The raw table: ``kind`` and the kind's parameters, named by their published symbols
        (``sll`` in dB below the peak, positive; ``nbar``; ``pedestal``, ``exponent``;
        ``name`` and ``params`` of a scipy window; ``radius`` in metres; ``phi_deg``).
        ``separable`` takes sub-tables ``x`` and ``y`` of line kinds; ``radial`` a sub-table
        ``profile`` of a continuous line kind (uniform, taylor, bayliss, cosine_pedestal).
    wavelength : float
        Design wavelength (m), for spacing-dependent kinds (Dolph-Chebyshev below half a
        wavelength).

    Returns
    -------
    ndarray, shape (N,)
        Real weights, largest magnitude 1.

    Raises
    ------
    DesignError
        Key ``taper.<key>`` for an unknown or missing key or a bad value.

    Notes
    -----
    A line kind on a line layout is sampled along the line (elements in any order; discrete
    kinds such as Dolph-Chebyshev need equal spacing, continuous ones such as Taylor are
    evaluated at the true positions). A line kind on a planar layout is applied separably
    with the same parameters along x and y.
    """
    if not isinstance(geometry, Geometry):
        raise SteradianError("from_spec needs a steradian.Geometry")
    try:
        wavelength = float(wavelength)
    except (TypeError, ValueError):
        raise SteradianError(f"wavelength must be a number, got {wavelength!r}") from None
    w = _build(geometry, spec, wavelength, "taper", tuple(KINDS))
    w = np.asarray(w, float)
    return w / np.max(np.abs(w))
