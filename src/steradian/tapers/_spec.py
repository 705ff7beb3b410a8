"""Design-file taper tables: ``[taper]`` with ``kind`` and the published-symbol parameters.

Every kind is one entry of :data:`REGISTRY`: its keys (type and default) and how it is
built, either as N samples of an equally spaced line, as a continuous aperture function, or
directly on a planar layout. :func:`from_spec` (what the design-file reader calls for every
kind except "uniform") reads the table through :class:`steradian.schema.Section`, so a bad
key or value raises :class:`~steradian.errors.DesignError` naming ``taper.<key>`` (with the
closest valid key for a misspelling).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from ..errors import DesignError, SteradianError
from ..geometry import Geometry, principal_axes
from ..schema import MISSING, Section
from . import _line, _planar
from ._common import aperture_positions, axis_coordinates, normalise_peak

__all__ = ["from_spec", "KINDS", "REGISTRY", "TaperKind", "REQUIRED"]

REQUIRED = MISSING
"""Default of a key the table must give."""


@dataclass(frozen=True)
class TaperKind:
    """One design-file taper kind.

    Attributes
    ----------
    keys : dict
        ``{key: (type, default)}``; type one of "number", "int", "str", "numbers", "table";
        default :data:`REQUIRED` for a required key, None for an optional one without a value.
    samples : callable, optional
        ``samples(n, params, d_over_lambda)``: n weights of an equally spaced line.
    aperture : callable, optional
        ``aperture(t, params)``: the continuous line distribution at normalised positions t
        (such kinds are sampled at any coordinates and serve as radial profiles).
    planar : callable, optional
        ``planar(geometry, params, wavelength, section)``: weights of a planar layout (kinds
        that are not line kinds).
    on_plane : str, optional
        Why the line kind cannot be applied separably on a planar layout (None: it can).
    """

    keys: dict = field(default_factory=dict)
    samples: Callable | None = None
    aperture: Callable | None = None
    planar: Callable | None = None
    on_plane: str | None = None

    @property
    def line(self) -> bool:
        return self.samples is not None or self.aperture is not None


_READ = {
    "number": lambda s, k, d: s.number(k, d),
    "int": lambda s, k, d: s.integer(k, d),
    "str": lambda s, k, d: s.string(k, d),
    "numbers": lambda s, k, d: s.numbers(k, d, nonempty=False),
    "table": lambda s, k, d: s.child(k, d),
}


def _separable(geometry, p, wavelength, section):
    if _layout(geometry, section)[0] != "planar":
        raise section.error("kind", "'separable' needs a planar layout")
    pos = geometry.positions
    return (_axis(p["x"], pos[:, 0], wavelength) * _axis(p["y"], pos[:, 1], wavelength))


def _radial(geometry, p, wavelength, section):
    name, pp = _read(p["profile"], CONTINUOUS)
    return _planar.radial(geometry, lambda t: REGISTRY[name].aperture(t, pp), p["radius"])


_SLL = ("number", 30.0)
REGISTRY: dict[str, TaperKind] = {
    "uniform": TaperKind(aperture=lambda t, p: np.ones_like(t)),
    "binomial": TaperKind(samples=lambda n, p, d: _line.binomial(n)),
    "dolph_chebyshev": TaperKind(
        {"sll": ("number", REQUIRED)},
        samples=lambda n, p, d: _line.dolph_chebyshev(n, p["sll"], d)),
    "taylor": TaperKind(
        {"nbar": ("int", 4), "sll": _SLL},
        aperture=lambda t, p: _line.taylor_aperture(t, p["nbar"], p["sll"])),
    "bayliss": TaperKind(
        {"nbar": ("int", 5), "sll": _SLL},
        aperture=lambda t, p: _line.bayliss_aperture(t, p["nbar"], p["sll"]),
        on_plane="'bayliss' on a planar layout is ambiguous: use 'bayliss_circular', or "
                 "'separable' with x or y = bayliss"),
    "cosine_pedestal": TaperKind(
        {"pedestal": ("number", 0.1), "exponent": ("number", 2.0)},
        aperture=lambda t, p: _line.cosine_pedestal_aperture(t, p["pedestal"], p["exponent"])),
    "window": TaperKind(
        {"name": ("str", REQUIRED), "params": ("numbers", [])},
        samples=lambda n, p, d: _line.window(p["name"], n, *p["params"])),
    "taylor_circular": TaperKind(
        {"nbar": ("int", 4), "sll": _SLL, "radius": ("number", None)},
        planar=lambda g, p, lam, s: _planar.taylor_circular(g, p["nbar"], p["sll"],
                                                            p["radius"])),
    "bayliss_circular": TaperKind(
        {"nbar": ("int", 5), "sll": _SLL, "radius": ("number", None),
         "phi_deg": ("number", 0.0)},
        planar=lambda g, p, lam, s: _planar.bayliss_circular(g, p["nbar"], p["sll"],
                                                             p["radius"], p["phi_deg"])),
    "separable": TaperKind({"x": ("table", REQUIRED), "y": ("table", REQUIRED)},
                           planar=_separable),
    "radial": TaperKind({"profile": ("table", REQUIRED), "radius": ("number", None)},
                        planar=_radial),
}
"""Every design-file taper kind: name -> :class:`TaperKind`."""

KINDS: dict[str, dict[str, tuple[str, object]]] = {k: dict(v.keys) for k, v in REGISTRY.items()}
"""Kind -> ``{key: (type, default)}`` (the design-file keys of each kind)."""

LINE_KINDS = tuple(k for k, v in REGISTRY.items() if v.line)
CONTINUOUS = tuple(k for k, v in REGISTRY.items() if v.aperture is not None)


def _read(section: Section, allowed) -> tuple[str, dict]:
    """The kind named by ``section`` (one of ``allowed``) and its parameters."""
    name = section.string("kind", choices=allowed)
    kind = REGISTRY[name]
    section.only(("kind", *kind.keys), f"for kind {name!r}")
    return name, {key: _READ[typ](section, key, default)
                  for key, (typ, default) in kind.keys.items()}


def _line_weights(name, p, coords, wavelength, section):
    """Weights of a line kind at 1-D coordinates (m), any order."""
    kind = REGISTRY[name]
    vals, idx = axis_coordinates(coords)
    if kind.aperture is not None:
        return normalise_peak(kind.aperture(aperture_positions(vals), p))[idx]
    n = len(vals)
    if n > 2:
        sp = np.diff(vals)
        if sp.max() - sp.min() > 1e-6 * sp.mean():
            raise section.error("kind", f"{name!r} needs equally spaced elements; spacings "
                                f"range {sp.min():.6g}-{sp.max():.6g} m (use 'taylor' or the "
                                "optimizer for uneven layouts)")
    d = float(np.mean(np.diff(vals))) / wavelength if n > 1 else 0.5
    return kind.samples(n, p, d)[idx]


def _layout(geometry: Geometry, section):
    """("line", coordinates along it) or ("planar", None) for a layout in the x-y plane."""
    pos = geometry.positions
    pa = principal_axes(pos)
    if pa.dimension <= 1:
        return "line", (pos - pa.centroid) @ pa.axes[0]
    if np.ptp(pos[:, 2]) <= 1e-9 * max(np.ptp(pos), 1e-300):
        return "planar", None
    raise section.error("kind", "closed-form tapers need a line or a planar layout in the x-y "
                        "plane; use the optimizer for 3-D layouts")


def _build(geometry, section: Section, wavelength):
    name, p = _read(section, tuple(REGISTRY))
    kind = REGISTRY[name]
    try:
        if kind.planar is not None:
            return kind.planar(geometry, p, wavelength, section)
        layout, coord = _layout(geometry, section)
        if layout == "line":
            return _line_weights(name, p, coord, wavelength, section)
        if kind.on_plane:
            raise section.error("kind", kind.on_plane)
        pos = geometry.positions
        return (_line_weights(name, p, pos[:, 0], wavelength, section)
                * _line_weights(name, p, pos[:, 1], wavelength, section))
    except DesignError:
        raise
    except SteradianError as exc:
        raise section.error(None, str(exc)) from None


def _axis(section: Section, coords, wavelength):
    """A line kind (sub-table of a separable taper) along one axis."""
    name, p = _read(section, LINE_KINDS)
    try:
        return _line_weights(name, p, coords, wavelength, section)
    except DesignError:
        raise
    except SteradianError as exc:
        raise section.error(None, str(exc)) from None


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
    w = np.asarray(_build(geometry, Section("taper", spec, None), wavelength), float)
    return w / np.max(np.abs(w))
