"""Result types of :func:`steradian.metrics.pattern_metrics` (plain frozen values)."""

from __future__ import annotations

from dataclasses import dataclass, fields

__all__ = ["PlaneWidths", "Lobe", "GratingLobe", "PatternMetrics", "plain"]


def plain(value):
    """JSON-friendly form of a metric value: ``to_dict()`` of result objects, lists for
    tuples, everything else as is."""
    if hasattr(value, "to_dict"):
        return value.to_dict()
    if isinstance(value, tuple):
        return [plain(v) for v in value]
    return value


@dataclass(frozen=True)
class PlaneWidths:
    """Beamwidths in one principal cut.

    Attributes
    ----------
    name : str
        ``"phi_plane"`` or ``"cross_plane"`` (see :func:`steradian.patterns.principal_cuts`).
    hpbw_deg : float or None
        Half-power beamwidth: angle between the two -3.01 dB (half-intensity) points either
        side of the peak. None when a side never falls to half power before its first null.
    fnbw_deg : float or None
        First-null beamwidth: angle between the first nulls either side. None when a side has
        no null on its half great circle (a flat cut, e.g. along the cone of a collinear array).
    half_power_deg, first_null_deg : tuple of (float or None)
        Signed cut angles (negative side, positive side) of those points.
    """

    name: str
    hpbw_deg: float | None
    fnbw_deg: float | None
    half_power_deg: tuple[float | None, float | None]
    first_null_deg: tuple[float | None, float | None]

    def to_dict(self) -> dict:
        return {"hpbw_deg": self.hpbw_deg, "fnbw_deg": self.fnbw_deg,
                "half_power_deg": list(self.half_power_deg),
                "first_null_deg": list(self.first_null_deg)}


@dataclass(frozen=True)
class Lobe:
    """A local maximum of the pattern outside the main lobe.

    ``level_db`` is 10 log10(U / U_peak) (negative); ``directivity_dbi`` its directivity.
    """

    theta_deg: float
    phi_deg: float
    level_db: float
    directivity_dbi: float

    def to_dict(self) -> dict:
        return {"theta_deg": self.theta_deg, "phi_deg": self.phi_deg,
                "level_db": self.level_db, "directivity_dbi": self.directivity_dbi}


@dataclass(frozen=True)
class GratingLobe:
    """A grating lobe predicted from the lattice and the scan.

    Attributes
    ----------
    p, q : int
        Reciprocal-lattice indices (q = 0 for a one-dimensional lattice).
    theta_deg, phi_deg : float
        Direction of the lobe. For a planar lattice the lobe on the beam's side of the lattice
        plane; for a one-dimensional lattice the lobe is a cone about the lattice axis and this
        is its direction in the plane of the beam axis and the lattice axis.
    u, v : float
        Direction cosines sin(theta) cos(phi), sin(theta) sin(phi) of that direction.
    level_db : float
        Pattern level there relative to the peak (includes the element pattern).
    """

    p: int
    q: int
    theta_deg: float
    phi_deg: float
    u: float
    v: float
    level_db: float

    def to_dict(self) -> dict:
        return {"p": self.p, "q": self.q, "theta_deg": self.theta_deg,
                "phi_deg": self.phi_deg, "u": self.u, "v": self.v, "level_db": self.level_db}


@dataclass(frozen=True)
class PatternMetrics:
    """Metrics of one beam. Every definition is given in :mod:`steradian.metrics`.

    Angles in degrees, levels in dB (relative to the peak unless ``_dbi``); None marks a
    metric that does not exist for this pattern (e.g. no sidelobe region). Each field is
    computed by one registered metric function (:data:`steradian.metrics.METRICS`).
    """

    peak_directivity_dbi: float
    beam_theta_deg: float
    beam_phi_deg: float
    planes: tuple[PlaneWidths, PlaneWidths]
    psl_db: float | None
    psl_theta_deg: float | None
    psl_phi_deg: float | None
    sidelobes: tuple[Lobe, ...]
    islr_db: float | None
    main_lobe_power_fraction: float
    main_lobe_model: str
    lattice: bool
    grating_lobes_predicted: tuple[GratingLobe, ...] | None
    grating_lobe_free_scan_deg: float | None
    grating_lobe_free_scan_phi_plane_deg: float | None
    grating_lobes_found: tuple[Lobe, ...]
    pointing_error_deg: float | None
    front_to_back_db: float
    front_to_back_hemisphere_db: float
    scan_loss_db: float
    unsteered_peak_directivity_dbi: float
    beam_kind: str = "sum"
    boresight_null_db: float | None = None
    difference_peak_dbi: float | None = None
    difference_lobes: tuple[Lobe, ...] = ()
    difference_sidelobe_db: float | None = None
    difference_slope_per_deg: float | None = None
    monopulse_slope_per_deg: float | None = None
    notes: tuple[str, ...] = ()

    @property
    def hpbw_deg(self) -> dict:
        """Half-power beamwidth per principal plane."""
        return {p.name: p.hpbw_deg for p in self.planes}

    @property
    def fnbw_deg(self) -> dict:
        """First-null beamwidth per principal plane."""
        return {p.name: p.fnbw_deg for p in self.planes}

    def to_dict(self) -> dict:
        """JSON-friendly dictionary (floats, ints, strings, lists, None), in field order;
        ``planes`` is preceded by the ``hpbw_deg`` and ``fnbw_deg`` summaries."""
        out = {}
        for f in fields(self):
            value = getattr(self, f.name)
            if f.name == "planes":
                out["hpbw_deg"] = self.hpbw_deg
                out["fnbw_deg"] = self.fnbw_deg
                out["planes"] = {p.name: p.to_dict() for p in value}
            else:
                out[f.name] = plain(value)
        return out
