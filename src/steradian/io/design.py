"""Design files: a phased-array design as a TOML document.

A design file names the array, its geometry, the element model, the taper, the steering and
what to analyse. :func:`load_design` reads one into a :class:`Design` holding a ready
:class:`~steradian.Array` and the ``[analysis]`` settings (:class:`AnalysisOptions`; the
recipes of :mod:`steradian.workflows` run the analysis). Every length in
``[geometry]`` is in the unit stated by ``geometry.units``; relative file paths resolve
against the design file's folder. The full schema is in the README ("Design files").

Sections validated here: ``[design]``, ``[geometry]``, ``[element]``, ``[taper]``,
``[steering]``, ``[analysis]``. Sections owned by other features (``[synthesis]``,
``[channel]``, ``[beams]``, ``[requirements]``) are passed through unvalidated in
:attr:`Design.sections`.

Every problem raises :class:`~steradian.errors.DesignError` naming the dotted key and the
file, in one line; unknown keys come with the closest valid key. Legal but doubtful values
(an element spacing outside :data:`SPACING_WARN_WL`, usually a slip of ``geometry.units``)
warn (``UserWarning``, one line naming the key and its value in wavelengths).
"""

from __future__ import annotations

import json
import tomllib
import warnings
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import Any

import numpy as np

from ..array import Array, Steering, check_frequency
from ..directions import ANGLE_LIMIT_DEG
from ..elements import ELEMENT_MODELS, Element
from ..errors import DesignError, FileFormatError, SteradianError, shown, suggest
from ..geometry import LATTICE_KINDS, Geometry, rotation_to
from ..schema import Section, type_name
from ..settings import BEAM_KINDS, AnalysisOptions
from ..units import C0
from .element_table import read_element_table
from .text import check_nesting, decode_text, read_bytes

__all__ = ["Design", "load_design", "design_from_dict", "demo_design", "weights_file_taper",
           "SECTIONS", "PASS_THROUGH_SECTIONS", "GEOMETRY_KINDS", "ELEMENT_MODELS", "LENGTH_UNITS",
           "SPACING_WARN_WL", "MAX_DESIGN_BYTES", "PHI_LIMIT_DEG", "WAVELENGTH_RANGE_M",
           "MIN_TAPER_PEAK", "read_toml"]

SECTIONS = ("design", "geometry", "element", "taper", "steering", "analysis")
"""Sections this module validates."""

PASS_THROUGH_SECTIONS = ("synthesis", "channel", "beams", "requirements", "coupling", "sweep",
                         "tolerance")
"""Sections owned (and validated) by other features; kept raw in :attr:`Design.sections`."""

LENGTH_UNITS = {"m": 1.0, "mm": 1e-3, "wavelength": None}
"""Values of ``geometry.units`` and their size in metres (wavelength: at the design
frequency)."""

PHI_LIMIT_DEG = ANGLE_LIMIT_DEG
"""``steering.phi_deg`` must lie in -720..720 (:data:`steradian.directions.ANGLE_LIMIT_DEG`,
the limit of every beam grid too)."""

WAVELENGTH_RANGE_M = (1e-9, 1e9)
"""The design wavelength (``speed_m_s / frequency_hz``) must lie in 1 nm .. 1e6 km: every
radio, sonar, acoustic and optical array lies well inside (common practice); outside it the
frequency is a slip of units, and lengths in wavelengths overflow."""

MIN_TAPER_PEAK = float(np.sqrt(np.finfo(float).tiny))
"""Smallest largest-weight magnitude of a taper file (1.5e-154): the power |w|^2 of a
smaller one is below the smallest normal double (IEEE 754 binary64, 2^-1022), so every
directivity would be 0/0. All-zero weights are refused too."""

MAX_DESIGN_BYTES = 16 * 2**20
"""Largest design file read: 16 MiB (the example designs are 1 to 3 kB; positions and
weights of large arrays live in CSV files the design names)."""

SPACING_WARN_WL = (0.05, 10.0)
"""Nearest-element spacing, in wavelengths at the design frequency, outside which a design
warns: elements closer than 0.05 wavelength are smaller than any practical radiator and
arrays sparser than 10 wavelengths are almost all grating lobes (common practice; half a
wavelength is the usual spacing). Outside this range the likely cause is a unit slip, such as
``units = "m"`` with spacings meant in wavelengths."""

# --------------------------------------------------------------------------------------------
# The result
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class Design:
    """A design read from a TOML file or dictionary.

    Attributes
    ----------
    name : str
        ``design.name`` (default: the file name without extension).
    description : str
        ``design.description`` (default empty).
    array : Array
        Geometry, element, taper, steering and element mask at the design frequency.
    options : AnalysisOptions
        From ``[analysis]``.
    sections : Mapping[str, Any]
        Raw tables of the pass-through sections present (``synthesis``, ``channel``,
        ``beams``, ``requirements``, ``coupling``, ``sweep``,
        ``tolerance``); their owners validate them.
    source : Path or None
        The design file.
    base_dir : Path
        Folder relative file paths resolve against (the design file's folder).
    taper_file : Path or None
        The weights file ``[taper] file`` names (resolved; None without one). When the design
        was read with ``read_taper_file=False`` the file was not read (it may not exist yet)
        and the taper is uniform.
    taper_steered : bool
        The taper came from a weights file that says ``steering_included = yes``: its weights
        already hold the steering phases (a beam table must not steer them again).
    """

    name: str
    description: str
    array: Array
    options: AnalysisOptions
    sections: Mapping[str, Any] = field(default_factory=dict)
    source: Path | None = None
    base_dir: Path = field(default_factory=Path.cwd)
    taper_file: Path | None = None
    taper_steered: bool = False

    def analyze(self, frequency: float | None = None) -> dict:
        """Deprecated: use :func:`steradian.workflows.analyze_design` (same result)."""
        import warnings

        from ..workflows import analyze_design  # deprecated shim (see DEVELOPERS)

        warnings.warn("Design.analyze is deprecated; use steradian.analyze_design(design)",
                      DeprecationWarning, stacklevel=2)
        return analyze_design(self, frequency)

    @property
    def wavelength(self) -> float:
        """Wavelength at the design frequency (m)."""
        return self.array.wavelength


# --------------------------------------------------------------------------------------------
# Typed access to one table, with errors naming the dotted key
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class _Context:
    """What section readers share (an :class:`~steradian.elements.DesignContext`)."""

    source: str | None
    base_dir: Path
    frequency: float
    speed: float
    read_element_table: Callable[[Path], Element] = read_element_table

    @property
    def wavelength(self) -> float:
        return self.speed / self.frequency


# --------------------------------------------------------------------------------------------
# [geometry]
# --------------------------------------------------------------------------------------------
_GEOMETRY_COMMON = ("kind", "units", "disabled", "facing", "local_x_toward")

GEOMETRY_KINDS: dict[str, tuple[str, ...]] = {
    **{kind: keys for kind, (keys, _) in LATTICE_KINDS.items()},
    "csv": ("file",),
}
"""Geometry kinds and their keys (besides kind, units, disabled, facing, local_x_toward): the
lattices of :data:`steradian.geometry.LATTICE_KINDS` and a positions file (``csv``)."""


def _geometry(t: Section, ctx: _Context) -> tuple[Geometry, np.ndarray | None]:
    kind = t.string("kind", choices=tuple(GEOMETRY_KINDS))
    t.only((*_GEOMETRY_COMMON, *GEOMETRY_KINDS[kind]), f"for kind = {shown(kind)}")
    enabled = None
    if kind == "csv":
        if "units" in t:
            raise t.error("units", "not used with kind = 'csv': the file's column names "
                          "state the unit (x_m, x_mm or x_wl)")
        from .positions_csv import read_layout

        path = t.path("file", ctx.base_dir)
        if "facing" in t and _csv_has_normals(path):
            raise t.error("facing", "the positions file already gives normals; remove one")
        ref = t.vector3("local_x_toward", np.array([1.0, 0.0, 0.0]))
        layout = read_layout(path, ctx.wavelength, ref)
        geom, enabled = layout.geometry, layout.enabled
    else:
        unit = t.string("units", choices=tuple(LENGTH_UNITS))
        s = LENGTH_UNITS[unit] or ctx.wavelength
        try:
            geom = LATTICE_KINDS[kind][1](t, s)
        except DesignError:
            raise
        except SteradianError as exc:
            raise t.error(None, str(exc)) from None
    geom = _facing(t, geom)
    _check_spacing(t, geom, ctx)
    if "disabled" in t:
        idx = t.integers("disabled", minimum=0, nonempty=False)
        mask = np.ones(geom.n, bool) if enabled is None else enabled.copy()
        first: dict[int, int] = {}
        for i, j in enumerate(idx):
            if j >= geom.n:
                raise t.error(f"disabled[{i}]", f"element index {j} is outside 0..{geom.n - 1}")
            if j in first:
                raise t.error(f"disabled[{i}]", f"element {j} is listed twice (first at "
                              f"disabled[{first[j]}])")
            first[j] = i
            mask[j] = False
        if not mask.any():
            raise t.error("disabled", "every element is disabled")
        enabled = mask
    return geom, enabled


GEOMETRY_MEMO_SIZE = 8
"""Geometries kept by :func:`_geometry_kept` (the points of a sweep share theirs)."""

_GEOMETRIES: dict = {}


def _geometry_kept(t: Section, ctx: _Context) -> tuple[Geometry, np.ndarray | None]:
    """:func:`_geometry`, kept for a section that reads no file and raised no warning: the
    points of a sweep that share a geometry build it once and share the object (so the
    arrays of a scan share their positions, and what is memoised on them)."""
    if t.data.get("kind") == "csv":
        return _geometry(t, ctx)
    try:
        key = (json.dumps(t.data, sort_keys=True), ctx.wavelength, str(ctx.base_dir))
    except (TypeError, ValueError):
        return _geometry(t, ctx)
    got = _GEOMETRIES.get(key)
    if got is not None:
        return got
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        got = _geometry(t, ctx)
    for w in caught:  # passed on as raised (and then not kept: each build warns again)
        warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    if not caught:
        if len(_GEOMETRIES) >= GEOMETRY_MEMO_SIZE:
            _GEOMETRIES.pop(next(iter(_GEOMETRIES)))
        _GEOMETRIES[key] = got
    return got


def _check_spacing(t: Section, geom: Geometry, ctx: _Context) -> None:
    """Warn when the nearest-element spacing is outside :data:`SPACING_WARN_WL`."""
    if geom.n < 2:
        return
    from scipy.spatial import cKDTree

    lam = ctx.wavelength
    nearest = float(cKDTree(geom.positions).query(geom.positions, k=2)[0][:, 1].min()) / lam
    lo, hi = SPACING_WARN_WL
    if lo <= nearest <= hi:
        return
    unit = t.data.get("units")
    size = (LENGTH_UNITS[unit] or lam) if unit in LENGTH_UNITS else None
    keys = [k for k in ("spacing", "spacing_x", "spacing_y") if k in t
            and isinstance(t.data[k], (int, float)) and size is not None]
    named = [k for k in keys if not lo <= t.data[k] * size / lam <= hi] or keys
    if named:
        what = ", ".join(f"geometry.{k} = {t.data[k]:g} {unit} is "
                         f"{t.data[k] * size / lam:.4g} wavelengths" for k in named)
        hint = "check geometry.units"
    else:
        what = f"geometry: the nearest elements are {nearest:.4g} wavelengths apart"
        hint = "check the positions' unit"
    side = "below" if nearest < lo else "above"
    warnings.warn(f"{what} at {ctx.frequency:.6g} Hz ({side} the usual {lo:g}..{hi:g} "
                  f"wavelengths; {hint})", stacklevel=2)


def _csv_has_normals(path: Path) -> bool:
    from .csv_table import read_table

    header = read_table(path)[0]
    return "normal_x" in header


def _facing(t: Section, geom: Geometry) -> Geometry:
    """Apply ``geometry.facing``: "broadside", "outward" (from the z axis) or a vector."""
    if "facing" not in t:
        if "local_x_toward" in t and geom.orientations is None:
            raise t.error("local_x_toward", "only used with geometry.facing or a positions "
                          "file with normal columns")
        return geom
    v = t.data["facing"]
    if isinstance(v, str):
        mode = t.string("facing", choices=("broadside", "outward"))
        if mode == "broadside":
            if "local_x_toward" in t:
                raise t.error("local_x_toward", "not used with facing = 'broadside'")
            return geom
        xy = geom.positions[:, :2]
        r = np.hypot(xy[:, 0], xy[:, 1])
        if np.any(r < 1e-12):
            i = int(np.argmin(r))
            raise t.error("facing", f"'outward' needs every element off the z axis; element "
                          f"{i} is on it")
        normals = np.column_stack([xy / r[:, None], np.zeros(geom.n)])
        ref = t.vector3("local_x_toward", np.array([0.0, 0.0, 1.0]))
    else:
        normals = np.broadcast_to(t.vector3("facing"), (geom.n, 3))
        ref = t.vector3("local_x_toward", np.array([1.0, 0.0, 0.0]))
    R = rotation_to(np.array(normals), ref)
    return Geometry(geom.positions, R, geom.lattice)


# --------------------------------------------------------------------------------------------
# [element]
# --------------------------------------------------------------------------------------------
def _element(t: Section, ctx: _Context) -> Element:
    model = t.string("model", choices=tuple(ELEMENT_MODELS))
    spec = ELEMENT_MODELS[model]
    t.only(("model", *spec.keys), f"for model = {shown(model)}")
    try:
        return spec.build(t, ctx)
    except (DesignError, FileFormatError):
        raise
    except SteradianError as exc:
        raise t.error(None, str(exc)) from None


# --------------------------------------------------------------------------------------------
# [taper], [steering], [analysis], [design]
# --------------------------------------------------------------------------------------------
def weights_file_taper(path, geometry: Geometry, wavelength: float,
                       steering: Steering | None):
    """The taper a weights CSV gives an array, and whether it holds steering phases.

    Reads ``path`` (:func:`~steradian.io.weights_csv.read_weights_table`, one row per
    element of ``geometry``), checks the file's positions against the geometry (within
    1e-6 wavelength) and its ``steering_included`` flag against ``steering``.

    Returns
    -------
    (ndarray of complex, bool)
        The weights and whether the file says ``steering_included = yes``.

    Raises
    ------
    SteradianError
        The positions differ, or the file holds steered excitations and ``steering`` is given:
        the beam would be steered twice (the pointing error is the sum of both steerings).
        The message does not name the file; callers prefix it.
    FileFormatError
        For a file that cannot be read.
    """
    from .weights_csv import read_weights_table

    path = Path(path)
    table = read_weights_table(path, geometry.n)
    peak = float(np.abs(table.weights).max())
    if not peak >= MIN_TAPER_PEAK:
        raise FileFormatError(path, "every weight is zero" if peak == 0 else
                              f"the largest weight magnitude is {peak:.3g}, below "
                              f"{MIN_TAPER_PEAK:.3g}: its power underflows (scale the weights)")
    if table.positions is not None:
        d = np.linalg.norm(table.positions - geometry.positions, axis=1)
        if d.max() > 1e-6 * wavelength:
            i = int(np.argmax(d))
            raise SteradianError(f"positions in {path.name} differ from the geometry by "
                                 f"{d[i]:.3g} m at element {i}")
    steered = table.steering_included is True
    if steered and steering is not None:
        raise SteradianError(
            f"{path.name} says steering_included = yes (steered excitations"
            + (f", {table.meta['steering']}" if "steering" in table.meta else "")
            + ") and the design also has [steering]: the beam would be steered twice; remove "
            "[steering] or write the taper (synth without --steered)")
    return table.weights, steered


def _taper(t: Section | None, geom: Geometry, ctx: _Context, steering: Steering | None,
           read_file: bool = True) -> tuple[np.ndarray | None, Path | None, bool]:
    """(taper, taper file, whether the file's weights hold the steering phases)."""
    if t is None:
        return None, None, False
    if "file" in t:
        t.only(("file",), "with taper.file (weights come from the file)")
        if not read_file:
            p = Path(t.string("file")).expanduser()
            return None, (p if p.is_absolute() else ctx.base_dir / p).resolve(), False
        path = t.path("file", ctx.base_dir)
        try:
            w, steered = weights_file_taper(path, geom, ctx.wavelength, steering)
        except (DesignError, FileFormatError):
            raise
        except SteradianError as exc:
            raise t.error("file", str(exc)) from None
        return w, path.resolve(), steered
    kind = t.string("kind", "uniform")
    if kind == "uniform":
        t.only(("kind",), "for kind = 'uniform'")
        return None, None, False
    from .. import tapers

    try:
        w = tapers.from_spec(geom, dict(t.data), ctx.wavelength)
    except DesignError as exc:
        if exc.source is None:
            key = exc.key if exc.key.startswith("taper") else f"taper.{exc.key}"
            msg = str(exc).split(": ", 1)[1] if ": " in str(exc) else str(exc)
            raise DesignError(key, msg, ctx.source) from None
        raise
    except SteradianError as exc:
        raise t.error(None, str(exc)) from None
    return np.asarray(w, complex), None, False


def _steering(t: Section | None) -> Steering | None:
    if t is None:
        return None
    t.only(("theta_deg", "phi_deg", "mode"))
    theta = t.number("theta_deg", 0.0, minimum=0, maximum=180)
    phi = t.number("phi_deg", 0.0, minimum=-PHI_LIMIT_DEG, maximum=PHI_LIMIT_DEG)
    mode = t.string("mode", "phase", choices=("phase", "delay"))
    return Steering(theta, phi, mode)


_ANALYSIS_KEYS = ("frequency_hz", "radiation_efficiency", "vswr", "return_loss_db",
                  "element_power_w", "metrics", "beam_kind")


def _analysis(t: Section | None) -> AnalysisOptions:
    if t is None:
        return AnalysisOptions()
    t.only(_ANALYSIS_KEYS)
    if "vswr" in t and "return_loss_db" in t:
        raise t.error("return_loss_db", "give analysis.vswr or analysis.return_loss_db, "
                      "not both")
    return AnalysisOptions(
        frequency=t.number("frequency_hz", None, above=0),
        radiation_efficiency=t.number("radiation_efficiency", 1.0, above=0, maximum=1),
        vswr=t.number("vswr", None, minimum=1),
        return_loss_db=t.number("return_loss_db", None, above=0),
        element_power_w=t.number("element_power_w", None, above=0),
        metrics=t.boolean("metrics", True),
        beam_kind=t.string("beam_kind", "sum", choices=BEAM_KINDS),
    )


def _check_horizon(steering: Steering | None, element: Element, geom: Geometry,
                   enabled: np.ndarray | None, t: Section | None) -> None:
    """Steering must point in front of the element's ground plane (front-half-space models)."""
    if steering is None or not element.front_only:
        return
    r0 = steering.unit
    R = geom.orientations
    if R is None:
        if r0[2] <= 1e-12:
            raise t.error(
                "theta_deg", f"{steering.theta_deg:g} deg is at or below the horizon of the "
                f"front-half-space element {shown(element.describe()['model'])} (must be "
                "below 90)")
        return
    facing = R[:, :, 2] @ r0 > 1e-12
    if enabled is not None:
        facing &= enabled
    if not facing.any():
        raise t.error(
            "theta_deg", f"direction (theta {steering.theta_deg:g}, phi {steering.phi_deg:g}) "
            "deg is behind every enabled element's ground plane")


# --------------------------------------------------------------------------------------------
# Entry points
# --------------------------------------------------------------------------------------------
def _check_sections(d, src) -> None:
    """Raise for a document that is not a table of known sections with [design] and
    [geometry]."""
    if not isinstance(d, Mapping):
        raise DesignError("", f"a design must be a table of sections, got {type_name(d)}", src)
    known = (*SECTIONS, *PASS_THROUGH_SECTIONS)
    for k, v in d.items():
        if k not in known:
            raise DesignError(k, f"unknown section{suggest(k, known)}; allowed: "
                              f"{', '.join(known)}", src)
        if k in SECTIONS and not isinstance(v, dict):
            hint = "" if k == "design" else f" (write it as a [{k}] table)"
            raise DesignError(k, f"must be a table, got {type_name(v)} {shown(v)}{hint}", src)
    if "design" not in d:
        raise DesignError("design", "missing section [design] (name, frequency_hz)", src)
    if "geometry" not in d:
        raise DesignError("geometry", "missing section [geometry]", src)


def design_from_dict(d: Mapping, source=None, *, base_dir=None,
                     read_taper_file: bool = True) -> Design:
    """Build a :class:`Design` from a parsed TOML dictionary.

    Parameters
    ----------
    d : mapping
        The document (top-level tables as in a design file).
    source : path-like, optional
        File the dictionary came from (named in error messages).
    base_dir : path-like, optional
        Folder for relative file paths (default: the folder of ``source``, else the current
        directory).
    read_taper_file : bool
        False leaves a ``[taper] file`` unread (it may not exist yet: ``synth`` is about to
        write it); the taper is then uniform and :attr:`Design.taper_file` names the file.

    Raises
    ------
    DesignError
        Naming the dotted key and the file, for unknown keys (with a suggestion), wrong
        types, out-of-range values (negative spacing, NaN, steering below the horizon of a
        front-half-space element, ``analysis.frequency_hz`` more than
        :data:`~steradian.array.FREQUENCY_RATIO_LIMIT` times away from the design frequency),
        missing required keys, and a ``[taper] file`` whose weights already hold steering
        phases (``steering_included = yes``) in a design that also has ``[steering]``.
    FileFormatError
        For a referenced CSV file that cannot be read (naming its line).
    """
    src = None if source is None else str(source)
    _check_sections(d, src)
    if base_dir is None:
        base_dir = Path(source).resolve().parent if source is not None else Path.cwd()
    base_dir = Path(base_dir)

    td = Section("design", d["design"], src)
    td.only(("name", "description", "frequency_hz", "speed_m_s"))
    default_name = Path(source).stem if source is not None else "design"
    name = td.string("name", default_name)
    if not name.strip():
        raise td.error("name", "must not be empty")
    description = td.string("description", "")
    ctx = _context(td, src, base_dir)

    geom, enabled = _geometry_kept(Section("geometry", d["geometry"], src), ctx)
    element = _element(Section("element", d.get("element", {"model": "isotropic"}), src), ctx)
    ts = Section("steering", d["steering"], src) if "steering" in d else None
    steering = _steering(ts)
    tt = Section("taper", d["taper"], src) if "taper" in d else None
    taper, taper_file, steered = _taper(tt, geom, ctx, steering, read_taper_file)
    ta = Section("analysis", d["analysis"], src) if "analysis" in d else None
    options = _analysis(ta)
    if options.frequency is not None:
        try:
            check_frequency(options.frequency, ctx.frequency)
        except SteradianError as exc:
            raise ta.error("frequency_hz", str(exc)) from None

    _check_horizon(steering, element, geom, enabled, ts)
    try:
        array = Array(geom, ctx.frequency, element, taper, steering, enabled, ctx.speed)
    except SteradianError as exc:
        raise DesignError("taper" if "taper" in str(exc) else "design", str(exc), src) from None
    sections = MappingProxyType({k: d[k] for k in PASS_THROUGH_SECTIONS if k in d})
    return Design(name, description, array, options, sections,
                  None if source is None else Path(source), base_dir, taper_file, steered)


def _context(td: Section, src: str | None, base_dir: Path) -> _Context:
    """The shared context of the sections, its wavelength checked against
    :data:`WAVELENGTH_RANGE_M`."""
    f, c = td.number("frequency_hz", above=0), td.number("speed_m_s", C0, above=0)
    lam = c / f
    lo, hi = WAVELENGTH_RANGE_M
    if not lo <= lam <= hi:
        size = f"{lam:.3g} m" if np.isfinite(lam) else "more than 1e308 m"
        raise td.error("frequency_hz", f"{f:g} Hz gives a wavelength of {size} at "
                       f"{c:g} m/s, outside {lo:g} .. {hi:g} m (frequencies are in Hz, e.g. "
                       "28e9 for 28 GHz)")
    return _Context(src, base_dir, f, c)


def load_design(path, *, read_taper_file: bool = True) -> Design:
    """Read a TOML design file into a :class:`Design`.

    Relative file paths inside the design (positions, weights, element tables) resolve
    against the design file's folder. See :func:`read_toml` for the checks made before
    parsing, :func:`design_from_dict` for ``read_taper_file`` and the errors.
    """
    path = Path(path)
    return design_from_dict(read_toml(path), path, read_taper_file=read_taper_file)


def read_toml(path) -> dict:
    """The TOML document of a design file, read defensively.

    The file is read as bytes first: larger than :data:`MAX_DESIGN_BYTES`, not UTF-8 (a
    byte-order mark is accepted), nested deeper than
    :data:`~steradian.io.text.MAX_NESTING` brackets or braces, or not TOML, it is refused
    with one :class:`~steradian.errors.DesignError` line naming the file (and line) before
    the parser's recursion could fail.
    """
    path = Path(path)
    try:
        text = decode_text(path, read_bytes(path, "design file", MAX_DESIGN_BYTES))
        check_nesting(path, text)
    except IsADirectoryError:
        raise DesignError("", "is a folder, not a design file", str(path)) from None
    except FileFormatError as exc:  # too large, not UTF-8 or nested too deep
        where = exc.path if exc.line is None else f"{exc.path}:{exc.line}"
        raise DesignError("", str(exc)[len(where) + 2:], where) from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError("", f"not valid TOML: {exc}", str(path)) from None
    except ValueError as exc:  # an integer of more than 4,300 digits
        raise DesignError("", f"not valid TOML: {str(exc).split(';')[0]}", str(path)) from None
    except RecursionError:  # pragma: no cover - check_nesting refuses these first
        raise DesignError("", "values nested too deep", str(path)) from None


def demo_design() -> Design:
    """The bundled demo design (package data ``steradian/data/demo.toml``)."""
    from importlib import resources

    res = resources.files("steradian").joinpath("data", "demo.toml")
    with resources.as_file(res) as p:
        return load_design(p)
