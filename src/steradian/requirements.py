r"""Requirements and verdicts: the design file's ``[requirements]`` table judged against
what ``analyze``, ``beams`` and ``verify`` measure.

A requirement is a limit on one measured figure. Each is judged to a :class:`Verdict`:
``PASS`` or ``FAIL`` with the measured value, the limit and the margin (positive = pass:
``value - limit`` for a minimum, ``limit - value`` for a maximum; a value exactly at its
limit passes), and, for a beam table, the worst beam. A requirement a command does not
measure is reported as ``not evaluated`` with the reason, and never fails.

Keys (:data:`REQUIREMENTS`), what they measure, and where:

============================== =================================== ============= ==============
key                            measured                            analyze       beams, verify
============================== =================================== ============= ==============
``min_gain_dbi``               peak gain (dBi)                     the beam      lowest beam
``min_directivity_dbi``        peak directivity (dBi)              the beam      lowest beam
``min_eirp_dbw``               EIRP (dBW; needs element_power_w)   the beam      lowest beam
``max_psl_db``                 peak sidelobe level (dB)            the beam      highest beam
``max_qlobe_db``               quantization-lobe level (dB)        not evaluated highest beam
``max_pointing_error_deg``     pointing error (deg)                steered beam  highest beam
``max_hpbw_deg``               half-power beamwidth, wider cut     the beam      not evaluated
``max_loss_db``                directivity loss vs ideal (dB)      not evaluated highest beam
``max_drive_loss_db``          commanded amplitude loss (dB)       not evaluated highest beam
``no_grating_lobe_in_scan``    nearest grating lobe (sine space)   steering      every beam
``grating_lobe_free_scan_deg`` grating-lobe-free scan cone (deg)   the lattice   the lattice
============================== =================================== ============= ==============

Grating lobes (Mailloux, ch. 2): with primitive lattice vectors :math:`a_i` and reciprocal
vectors :math:`b_i` (:func:`steradian.geometry.reciprocal_lattice`), a beam steered to the
projected direction :math:`s_0` has lobes at :math:`s_0 + \lambda(p b_1 + q b_2)`, visible
when :math:`|s_0 + \lambda(p b_1 + q b_2)| \le 1`. ``no_grating_lobe_in_scan = true``
measures, over the scan (the beams of a table; the design's steering direction, or
broadside, in ``analyze``), the smallest :math:`|s_0 + \lambda(p b_1 + q b_2)|` over the
orders :math:`(p, q) \ne (0, 0)`; it passes when that exceeds 1 (a lobe exactly on the
horizon is visible), margin = value - 1. ``grating_lobe_free_scan_deg`` is the largest
scan from the lattice normal (from broadside for a line) with no visible grating lobe at
any azimuth, :math:`\arcsin(\min|\lambda(p b_1 + q b_2)| - 1)`, as the ``analyze`` metric
of the same name. Both need a lattice (``geometry.lattice``); without one they are not
evaluated.

References
----------
R. J. Mailloux, *Phased Array Antenna Handbook*, 3rd ed., Artech House, 2018, ch. 2
(grating lobes of periodic lattices).
IEEE Std 145-2013, *IEEE Standard for Definitions of Terms for Antennas* (gain, directivity,
sidelobe level, beamwidth).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from .directions import unit_vectors_deg
from .geometry import reciprocal_lattice
from .schema import Section

__all__ = ["REQUIREMENTS", "Requirement", "Verdict", "requirements_from_table",
           "judge_analysis", "judge_beams", "requirements_met", "verdicts_dict",
           "grating_clearance", "PASS", "FAIL", "NOT_EVALUATED"]

PASS, FAIL, NOT_EVALUATED = "PASS", "FAIL", "not evaluated"


@dataclass(frozen=True)
class Requirement:
    """One kind of requirement.

    ``sense``: ``"min"`` (the value must be at least the limit), ``"max"`` (at most) or
    ``"flag"`` (a true/false key; ``false`` asks for nothing). ``analysis``: the value from
    an analysis summary, or the reason ``analyze`` does not measure it (a string).
    ``beam_field``: the :class:`~steradian.beamtable.BeamMetrics` field judged over every
    beam, or the reason a beam table does not carry it.
    """

    key: str
    label: str
    unit: str
    sense: str
    analysis: Callable | str
    beam_field: str


def _metric(name):
    def get(summary, array):
        m = summary.get("metrics")
        if m is None:
            return None, "the analysis ran without pattern metrics ([analysis] metrics = false)"
        return m.get(name), None
    return get


def _psl(summary, array):
    """The peak sidelobe level; for a difference beam (``beam_kind`` not ``"sum"``, when the
    metrics say so) its difference sidelobe level, the twin lobes being its main lobe."""
    m = summary.get("metrics")
    if m is not None and m.get("beam_kind", "sum") != "sum":
        return m.get("difference_sidelobe_db"), None
    return _metric("psl_db")(summary, array)


def _hpbw(summary, array):
    v, why = _metric("hpbw_deg")(summary, array)
    if why:
        return None, why
    widths = [x for x in (v or {}).values() if x is not None]
    if not widths:
        return None, "no half-power beamwidth found in either principal cut"
    return max(widths), None


def _pointing(summary, array):
    v, why = _metric("pointing_error_deg")(summary, array)
    if why is None and v is None:
        return None, "the design has no [steering]: there is no commanded direction"
    return v, why


def _eirp(summary, array):
    e = summary.get("eirp")
    if e is None:
        return None, "the design has no analysis.element_power_w"
    return e["eirp_dbw"], None


_NO_QUANT = "analyze evaluates the ideal weights; beams and verify measure the quantized ones"
_NO_TABLE = "a beam table carries no beamwidth; steradian analyze measures it"

REQUIREMENTS: dict[str, Requirement] = {r.key: r for r in (
    Requirement("min_gain_dbi", "gain", "dBi", "min",
                lambda s, a: (s["gain_dbi"], None), "gain_dbi"),
    Requirement("min_directivity_dbi", "directivity", "dBi", "min",
                lambda s, a: (s["peak_directivity_dbi"], None), "directivity_dbi"),
    Requirement("min_eirp_dbw", "EIRP", "dBW", "min", _eirp, "eirp_dbw"),
    Requirement("max_psl_db", "peak sidelobe", "dB", "max", _psl, "psl_db"),
    Requirement("max_qlobe_db", "quantization lobe", "dB", "max", _NO_QUANT, "qlobe_db"),
    Requirement("max_pointing_error_deg", "pointing error", "deg", "max", _pointing,
                "pointing_error_deg"),
    Requirement("max_hpbw_deg", "half-power beamwidth", "deg", "max", _hpbw, _NO_TABLE),
    Requirement("max_loss_db", "loss vs ideal", "dB", "max", _NO_QUANT, "loss_db"),
    Requirement("max_drive_loss_db", "drive loss", "dB", "max", _NO_QUANT, "drive_loss_db"),
    Requirement("no_grating_lobe_in_scan", "nearest grating lobe", "", "flag", "", ""),
    Requirement("grating_lobe_free_scan_deg", "grating-lobe-free scan", "deg", "min", "", ""),
)}
"""Every ``[requirements]`` key, in report order."""


@dataclass(frozen=True)
class Verdict:
    """The judgement of one requirement.

    ``status`` is :data:`PASS`, :data:`FAIL` or :data:`NOT_EVALUATED` (``note`` says why).
    ``value`` is the measured figure (the worst beam's for a beam table; None when not
    measured), ``limit`` the required one, ``margin`` positive when it passes (in ``unit``),
    ``worst_beam`` the index of the worst beam of a table (None otherwise).
    """

    key: str
    label: str
    unit: str
    status: str
    value: float | None = None
    limit: float | bool | None = None
    margin: float | None = None
    worst_beam: int | None = None
    note: str = ""

    @property
    def failed(self) -> bool:
        return self.status == FAIL

    def to_dict(self) -> dict:
        return {"key": self.key, "label": self.label, "status": self.status,
                "value": self.value, "limit": self.limit, "margin": self.margin,
                "unit": self.unit, "worst_beam": self.worst_beam, "note": self.note}


def requirements_from_table(raw, source: str | None = None) -> dict:
    """Read a ``[requirements]`` table: ``{key: limit}`` in :data:`REQUIREMENTS` order.

    Limits are finite numbers (``grating_lobe_free_scan_deg`` and the maxima of angles and
    losses zero or positive, a scan angle at most 90 deg, a beamwidth or pointing error at
    most 180 deg; ``max_psl_db`` and ``max_qlobe_db`` at most 0 dB: levels relative to the
    beam peak, so a positive one is a sign slip); ``no_grating_lobe_in_scan`` is true
    or false (false asks for nothing and is dropped).

    Raises
    ------
    DesignError
        An unknown key (with the closest valid one), a wrong type or an out-of-range limit,
        naming ``requirements.<key>``.
    """
    if raw is None:
        return {}
    sec = Section("requirements", raw, source)
    sec.only(REQUIREMENTS)
    out = {}
    for key, r in REQUIREMENTS.items():
        if key not in sec:
            continue
        if r.sense == "flag":
            if sec.boolean(key):
                out[key] = True
        elif r.unit == "deg":
            out[key] = sec.number(key, minimum=0, maximum=90 if "scan" in key else 180)
        elif key in ("max_loss_db", "max_drive_loss_db"):
            out[key] = sec.number(key, minimum=0)
        elif key in ("max_psl_db", "max_qlobe_db"):
            out[key] = sec.number(key)
            if out[key] > 0:  # a sign slip: 20 meant as -20 would pass every beam
                raise sec.error(key, f"must be at most 0 dB (a level relative to the beam "
                                     f"peak, e.g. -{out[key]:g}), got {out[key]:g}")
        else:
            out[key] = sec.number(key)
    return out


def _judge(r: Requirement, value, limit, worst_beam=None, note="") -> Verdict:
    if value is None or not math.isfinite(value):
        if r.key == "max_psl_db":  # no lobe outside the main lobe: nothing to exceed
            return Verdict(r.key, r.label, r.unit, PASS, None, limit, None, worst_beam,
                           note or "no sidelobe found")
        return Verdict(r.key, r.label, r.unit, FAIL, None, limit, None, worst_beam,
                       note or "not measurable")
    value = float(value)
    margin = value - limit if r.sense == "min" else limit - value
    return Verdict(r.key, r.label, r.unit, PASS if margin >= 0 else FAIL, value, limit,
                   margin, worst_beam, note)


def _skipped(r: Requirement, limit, why: str) -> Verdict:
    return Verdict(r.key, r.label, r.unit, NOT_EVALUATED, None, limit, note=why)


# --------------------------------------------------------------------------------------------
# Grating lobes
# --------------------------------------------------------------------------------------------
def grating_clearance(lattice, wavelength: float, directions=None, scale: float = 1.0):
    r"""Nearest grating lobe of each scan direction, and the free scan cone of a lattice.

    Parameters
    ----------
    lattice : array_like, shape (1 or 2, 3)
        Primitive lattice vectors (m), rows.
    wavelength : float
        Wavelength (m) at which the pattern is evaluated.
    directions : array_like, shape (B, 3), optional
        Unit vectors of the scan (steering) directions; default broadside only.
    scale : float
        Factor on the projected steering direction (``f0 / f`` for phase steering evaluated
        off its design frequency: the beam squints).

    Returns
    -------
    (nearest, free_deg) or None
        ``nearest`` (B,): the smallest :math:`|s_0 + \lambda(p b_1 + q b_2)|`,
        :math:`(p, q) \ne 0`, per direction (a lobe is visible where it is at most 1);
        ``free_deg``: the free scan cone in degrees (None when lobes are visible even at
        broadside). None for a degenerate lattice.
    """
    L = np.atleast_2d(np.asarray(lattice, float))
    rec = reciprocal_lattice(L)
    if rec is None:
        return None
    B, P = rec
    s0 = np.zeros((1, 3)) if directions is None else np.atleast_2d(directions) @ P.T * scale
    reach = 2.0 + wavelength * max(np.linalg.norm(b) for b in B)
    lim = [int(math.ceil(np.linalg.norm(a) * reach / wavelength)) for a in L]
    orders = [(p, q) for p in range(-lim[0], lim[0] + 1)
              for q in (range(-lim[1], lim[1] + 1) if len(L) == 2 else (0,))
              if (p, q) != (0, 0)]
    g = wavelength * np.array([p * B[0] + (q * B[1] if len(L) == 2 else 0.0)
                               for p, q in orders])
    nearest = np.min(np.linalg.norm(s0[:, None, :] + g[None, :, :], axis=-1), axis=1)
    free = float(np.min(np.linalg.norm(g, axis=1))) - 1.0
    free_deg = None if free < 0 else float(np.rad2deg(np.arcsin(min(free, 1.0))))
    return nearest, free_deg


def _grating_verdicts(reqs: dict, array, frequency, directions, scale,
                      per_beam: bool) -> dict:
    """Verdicts of the two grating-lobe requirements (those asked for)."""
    asked = [k for k in ("no_grating_lobe_in_scan", "grating_lobe_free_scan_deg")
             if k in reqs]
    if not asked:
        return {}
    lattice = array.geometry.lattice
    res = None if lattice is None else grating_clearance(
        lattice, 2 * np.pi / array.k(frequency), directions, scale)
    out = {}
    for key in asked:
        r = REQUIREMENTS[key]
        if res is None:
            out[key] = _skipped(r, reqs[key], "the geometry has no lattice (no grating-lobe "
                                              "prediction)")
        elif key == "grating_lobe_free_scan_deg":
            out[key] = _judge(r, res[1], reqs[key], note="" if res[1] is not None else
                              "grating lobes are visible even at broadside")
        else:
            i = int(np.argmin(res[0]))
            v = float(res[0][i])
            out[key] = Verdict(key, r.label, "", PASS if v > 1.0 else FAIL, v, 1.0,
                               v - 1.0, i if per_beam else None,
                               "grating lobe in visible space" if v <= 1.0 else "")
    return out


# --------------------------------------------------------------------------------------------
# Judging
# --------------------------------------------------------------------------------------------
def judge_analysis(reqs: dict, summary: dict, array) -> list[Verdict]:
    """Judge ``reqs`` (from :func:`requirements_from_table`) against an analysis summary.

    ``summary`` is :meth:`steradian.analysis.Analysis.to_dict` of ``array`` (its
    ``frequency_hz`` is used for the grating lobes; the scan is the steering direction, or
    broadside when unsteered).
    """
    f = summary.get("frequency_hz", array.frequency)
    st = array.steering
    d, scale = None, 1.0
    if st is not None:
        d = st.unit[None, :]
        scale = 1.0 if st.mode == "delay" else array.k() / array.k(f)
    grating = _grating_verdicts(reqs, array, f, d, scale, False)
    out = []
    for key, limit in reqs.items():
        r = REQUIREMENTS[key]
        if key in grating:
            out.append(grating[key])
        elif isinstance(r.analysis, str):
            out.append(_skipped(r, limit, r.analysis))
        else:
            value, why = r.analysis(summary, array)
            out.append(_skipped(r, limit, why) if why else _judge(r, value, limit))
    return out


def judge_beams(reqs: dict, metrics, array) -> list[Verdict]:
    """Judge ``reqs`` over every beam of a table.

    ``metrics`` is a :class:`~steradian.beamtable.BeamMetrics` (its ``theta_deg``,
    ``phi_deg`` are the commanded directions, the scan); each requirement takes its worst
    beam (lowest value for a minimum, highest for a maximum; beams without a value are
    skipped). The tables are evaluated at ``array``'s design frequency.
    """
    d = unit_vectors_deg(np.asarray(metrics.theta_deg, float),
                         np.asarray(metrics.phi_deg, float))
    grating = _grating_verdicts(reqs, array, None, np.atleast_2d(d), 1.0, True)
    out = []
    for key, limit in reqs.items():
        r = REQUIREMENTS[key]
        if key in grating:
            out.append(grating[key])
            continue
        vals = getattr(metrics, r.beam_field, None) if r.beam_field.isidentifier() else None
        if vals is None:
            out.append(_skipped(r, limit, r.beam_field))
            continue
        vals = np.asarray(vals, float)
        if key == "max_psl_db" and getattr(metrics, "null_depth_db", None) is not None:
            # Sum beams only: a difference beam's psl_db is its difference sidelobe level.
            vals = np.where(np.isfinite(np.asarray(metrics.null_depth_db, float)), np.nan, vals)
        if not np.any(np.isfinite(vals)):
            out.append(_skipped(r, limit, _no_values(key)) if key != "max_psl_db"
                       else _judge(r, None, limit))
            continue
        i = int(np.nanargmin(vals) if r.sense == "min" else np.nanargmax(vals))
        out.append(_judge(r, vals[i], limit, worst_beam=i))
    return out


def _no_values(key: str) -> str:
    if key == "min_eirp_dbw":
        return ("no beam of this table has an EIRP (steradian beams computes it from "
                "analysis.element_power_w)")
    return "no beam of this table has this value (no ideal or commanded weights)"


def requirements_met(verdicts) -> bool:
    """True when no verdict is a FAIL (not-evaluated ones do not fail)."""
    return not any(v.failed for v in verdicts)


def verdicts_dict(verdicts) -> dict:
    """The ``requirements`` block of a JSON report: ``met`` and one dict per verdict."""
    verdicts = list(verdicts)
    return {"met": requirements_met(verdicts), "verdicts": [v.to_dict() for v in verdicts]}
