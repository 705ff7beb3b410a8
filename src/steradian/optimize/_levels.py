"""Arguments every synthesis method shares, checked and converted once: sidelobe levels,
nulls and notches, hardware limits, main-lobe zones and sampling densities."""

from __future__ import annotations

import math

import numpy as np

from ..directions import unit_vectors_deg
from ..errors import SteradianError, suggest
from ..units import from_db10, from_db20
from ._masks import Notch, Null

__all__ = ["below_peak", "null_list", "nulls_in_front", "notch_list", "hardware_limits",
           "spacings", "halfwidths"]

_NULL_KEYS = ("theta_deg", "phi_deg", "depth_db")


def below_peak(name, v) -> float | None:
    """A level below the main-beam peak (negative dB), or None."""
    if v is None:
        return None
    x = float(v)
    if not (math.isfinite(x) and x < 0):
        raise SteradianError(f"{name} is a level below the main-beam peak and must be negative "
                             f"dB, got {name}={v!r}" + (f" (did you mean {-x:g}?)" if x > 0
                                                        else ""))
    return x


def _null(n) -> Null:
    if isinstance(n, Null):
        return n
    if isinstance(n, dict):
        bad = sorted(set(n) - set(_NULL_KEYS))
        if bad:
            raise KeyError(bad[0], "unknown")
        if "theta_deg" not in n or "phi_deg" not in n:
            raise KeyError("theta_deg" if "theta_deg" not in n else "phi_deg", "required")
        return Null(float(n["theta_deg"]), float(n["phi_deg"]),
                    None if n.get("depth_db") is None else float(n["depth_db"]))
    t = tuple(n)
    if len(t) not in (2, 3):
        raise ValueError(f"got {len(t)} values")
    return Null(float(t[0]), float(t[1]), None if len(t) == 2 else float(t[2]))


def null_list(nulls, name: str = "nulls", error=None) -> list[Null]:
    """:class:`Null` objects from Nulls, ``{theta_deg, phi_deg[, depth_db]}`` tables or
    ``(theta_deg, phi_deg[, depth_db])`` tuples.

    ``error(key, message)`` makes the exception for a bad entry (``key`` such as
    ``nulls[0].phi_deg``); by default a :class:`SteradianError` naming the key.
    """
    def fail(key, message):
        return error(key, message) if error else SteradianError(f"{key}: {message}")

    out = []
    for i, n in enumerate(nulls or ()):
        key = f"{name}[{i}]"
        try:
            out.append(_null(n))
        except KeyError as exc:
            k = exc.args[0]
            what = ("unknown key; valid keys: " + ", ".join(_NULL_KEYS) + suggest(k, _NULL_KEYS)
                    if exc.args[1] == "unknown" else "required")
            raise fail(f"{key}.{k}", what) from None
        except (SteradianError, TypeError, ValueError) as exc:
            raise fail(key, "must be {theta_deg, phi_deg[, depth_db]} or (theta_deg, phi_deg"
                       f"[, depth_db]) ({exc})") from None
    return out


def nulls_in_front(array, nulls, name: str = "nulls", error=None) -> None:
    """Refuse a null at or behind the ground plane of every enabled element.

    A front-half-space element (``element.front_only``) radiates nothing there, so such a
    null is met by any weights and its reported depth (the field floor, thousands of dB) means
    nothing: the user almost always meant another direction (common practice). ``error`` as
    in :func:`null_list`.
    """
    if not array.element.front_only:
        return
    R = array.geometry.orientations
    for i, nl in enumerate(null_list(nulls, name, error)):
        u = unit_vectors_deg(nl.theta_deg, nl.phi_deg)
        if R is None:
            front = bool(u[2] > 1e-12)
        else:
            facing = R[:, :, 2] @ u > 1e-12
            if array.enabled is not None:
                facing &= array.enabled
            front = bool(facing.any())
        if not front:
            key = f"{name}[{i}]"
            msg = (f"the null at theta {nl.theta_deg:g}, phi {nl.phi_deg:g} deg is at or behind "
                   f"the ground plane of every enabled front-half-space element "
                   f"({array.element.describe()['model']!r} radiates nothing there, so the "
                   "null is met by any weights); give a direction in front of the array")
            raise error(key, msg) if error else SteradianError(f"{key}: {msg}")


def notch_list(notches) -> list[Notch]:
    """:class:`Notch` objects from Notches or ``{theta_deg, phi_deg, depth_db}`` tables."""
    out = []
    for i, n in enumerate(notches or ()):
        if isinstance(n, Notch):
            out.append(n)
        elif isinstance(n, dict):
            try:
                out.append(Notch(tuple(n["theta_deg"]), tuple(n["phi_deg"]),
                                 float(n["depth_db"])))
            except KeyError as exc:
                raise SteradianError(f"notches[{i}] needs theta_deg, phi_deg, depth_db") \
                    from exc
        else:
            raise SteradianError(f"notches[{i}] must be a Notch or a dict, got {n!r}")
    return out


def hardware_limits(dynamic_range_db, wng_min_db, tol_db, max_rounds):
    """Check the limits the convex methods share; return the dynamic range (field ratio) and
    the white-noise-gain floor (power ratio), each None when not asked."""
    dr = None
    if dynamic_range_db is not None:
        x = float(dynamic_range_db)
        if not (math.isfinite(x) and x > 0):
            raise SteradianError(f"dynamic_range_db must be positive dB, got {dynamic_range_db}")
        dr = from_db20(x)
    wng = None
    if wng_min_db is not None:
        x = float(wng_min_db)
        if not math.isfinite(x):
            raise SteradianError(f"wng_min_db must be finite, got {wng_min_db}")
        wng = from_db10(x)
    if not (math.isfinite(float(tol_db)) and float(tol_db) > 0):
        raise SteradianError(f"tol_db must be positive, got {tol_db}")
    if int(max_rounds) < 1:
        raise SteradianError(f"max_rounds must be at least 1, got {max_rounds}")
    return dr, wng


def spacings(setup, oversample, dense_oversample):
    """Coarse constraint and dense check sample spacings (direction cosines or radians)."""
    lam = setup.wavelength
    L = float(np.max(setup.frame.lengths))
    kind = setup.domain.kind
    os_c = oversample if oversample is not None else {"line": 0.5, "plane": 1.5,
                                                      "sphere": 1.2}[kind]
    os_d = dense_oversample if dense_oversample is not None else {"line": 16.0, "plane": 6.0,
                                                                  "sphere": 4.0}[kind]
    if os_c <= 0 or os_d <= 0:
        raise SteradianError("oversampling factors must be positive")
    return lam / (os_c * L), lam / (os_d * L)


def halfwidths(setup, mainlobe, lvl) -> np.ndarray:
    """Main-lobe zone half-widths: ``mainlobe`` checked (one value or one per principal
    axis), or by default the Dolph-Chebyshev first null at level ``lvl`` (field ratio)."""
    r = setup.frame.rank
    if mainlobe is None:
        return setup.halfwidths(lvl)
    h = np.broadcast_to(np.asarray(mainlobe, float), (r,)).copy() if np.ndim(mainlobe) == 0 \
        else np.asarray(mainlobe, float).reshape(-1)
    if h.shape != (r,) or not np.all(np.isfinite(h)) or np.any(h <= 0):
        raise SteradianError(f"mainlobe must be a positive half-width in direction cosines (or "
                             f"one per principal axis, {r} here), got {mainlobe!r}")
    return h
