"""From solver weights to a :class:`SynthesisResult`: normalisation, the independent dense
re-check of every constraint, directivity from the radiation module, and the notes
(superdirectivity, elements switched off, tolerance not met). Also the stand-alone dense
peak-sidelobe check of any array."""

from __future__ import annotations

import math
import time
import warnings
from dataclasses import replace

import numpy as np

from ..directions import angles_deg, unit_vectors_deg
from ..radiation import peak_directivity, radiated_power
from ..units import db10, db20, from_db10
from ._check import check_family, field_magnitude, main_peak
from ._levels import halfwidths, spacings
from ._problem import Setup, SidelobeFamily, make_setup
from ._result import SynthesisResult

__all__ = ["finish", "array_with", "direction_of", "peak_sidelobe", "with_path"]

_SUPERDIRECTIVE_DB = 6.0  # warn when the white-noise gain is this far below N
_OFF = 1e-4  # weights this far below the largest (-80 dB) count as switched off


def direction_of(d) -> tuple[float, float] | None:
    """(theta, phi) in degrees of a unit vector, or None."""
    return None if d is None else angles_deg(d)


def _normalise(setup: Setup, w: np.ndarray) -> np.ndarray:
    taper = w * np.conj(setup.phases)
    s = taper.sum()
    rot = np.exp(-1j * np.angle(s)) if abs(s) > 1e-12 * np.abs(taper).sum() else 1.0
    w = w * rot
    m = np.max(np.abs(w))
    return w / m if m > 0 else w


def array_with(setup: Setup, w: np.ndarray):
    """The setup's array with element weights ``w`` (steering phases taken out of the taper;
    exactly real for amplitude-only weights)."""
    arr = setup.array
    taper = w * np.conj(setup.phases) if arr.steering is not None else w
    if setup.param.weights == "amplitude":
        taper = taper.real + 0j  # amplitude-only: exactly real
    return replace(arr, taper=taper)


def _psl_family(setup, h, dense_spacing):
    return SidelobeFamily(setup, h, True, None, dense_spacing, dense_spacing)


def _first_null_halfwidths(arr, setup: Setup, step: float) -> np.ndarray:
    """Main-lobe half-widths along each principal axis: distance to the first minimum.

    A side that reaches the edge of visible space before a minimum (a beam scanned toward
    the horizon) gives no width; the other side's is used (a clipped direction repeats the
    horizon's value, which looked like a minimum there and made the main lobe's own skirt a
    "sidelobe")."""
    fr = setup.frame
    dom = setup.domain
    out = []
    for i in range(fr.rank):
        lam_L = setup.wavelength / fr.lengths[i]
        t = np.arange(1, int(math.ceil(8 * lam_L / step)) + 2) * step
        widths = []
        for sgn in (1.0, -1.0):
            q = setup.r0 + sgn * np.outer(t, fr.axes[:, i])
            if dom.kind == "line":
                inside = np.abs(q @ dom.e1) <= 1.0
                d = dom.from_u(q @ dom.e1)
            elif dom.kind == "plane":
                s = 1.0 if setup.r0 @ dom.e3 >= 0 else -1.0
                inside = np.hypot(q @ dom.e1, q @ dom.e2) <= 1.0
                d = dom.from_uv(q @ dom.e1, q @ dom.e2, s)
            else:
                inside = np.ones(len(t), bool)
                d = q / np.linalg.norm(q, axis=1, keepdims=True)
            m = len(t) if inside.all() else int(np.argmin(inside))
            v = field_magnitude(arr, d[:m])
            k = np.flatnonzero((v[1:-1] <= v[:-2]) & (v[1:-1] <= v[2:]))
            if len(k):
                widths.append(t[k[0] + 1])
            elif m == len(t):
                widths.append(t[-1])
        out.append(min(widths) if widths else t[-1])
    return np.array(out)


def peak_sidelobe(array, mainlobe=None, *, dense_oversample: float | None = None):
    """Peak sidelobe level of any array from a dense, refined check.

    Parameters
    ----------
    array : Array
    mainlobe : float or sequence, optional
        Main-lobe zone half-width(s) in direction cosines along the array's principal axes.
        Default: the distance to the first pattern minimum along each axis.
    dense_oversample : float, optional
        Grid density (samples per lambda/L); defaults as in :func:`max_directivity`.

    Returns
    -------
    dict
        ``psl_db`` (relative to the main-beam peak), ``direction`` (theta, phi deg) and
        ``mainlobe`` (the half-widths used).
    """
    setup = make_setup(array, "complex", "none", 0.0)
    _, dense = spacings(setup, None, dense_oversample)
    e_peak, _ = main_peak(array, setup, dense)
    h = (_first_null_halfwidths(array, setup, dense / 4) if mainlobe is None
         else halfwidths(setup, mainlobe, None))
    chk = check_family(array, _psl_family(setup, h, dense), e_peak, 1.0)
    return {"psl_db": db20(chk["worst"]), "direction": direction_of(chk["worst_dir"]),
            "mainlobe": h.tolist()}


def _directivity(arr, r0):
    """Directivity toward ``r0`` (linear), the field there and the radiated power."""
    power = radiated_power(arr)
    e0 = field_magnitude(arr, r0[None, :])[0]
    return 4 * math.pi * e0**2 / power.value, e0, power


def _constraint_check(arr, setup, families, nulls, e0, e_peak, psl_limit, tol_db):
    """Worst excess over the constraints (dB), null depths (dB) and whether all are met."""
    margin = 0.0
    for fam in families:
        chk = check_family(arr, fam, e0, psl_limit if fam.psl else None)
        margin = max(margin, chk["worst"])
    margin_db = db20(margin)
    depths = [db20(field_magnitude(arr, unit_vectors_deg(nl.theta_deg, nl.phi_deg)[None, :])[0]
                   / e_peak) for nl in nulls]
    met = margin_db <= tol_db + 1e-9 and all(
        d <= (nl.depth_db if nl.depth_db is not None else -100.0) + tol_db
        for d, nl in zip(depths, nulls, strict=True))
    return margin_db, depths, met


def _weight_notes(setup, w, notes):
    """White-noise gain (linear) and dynamic range (dB) of ``w``, with their notes."""
    wng = setup.wng(w)
    ne = len(setup.enabled)
    if wng < ne * from_db10(-_SUPERDIRECTIVE_DB):
        msg = (f"superdirective weights: white-noise gain {db10(wng):.1f} dB is "
               f"{db10(ne / wng):.1f} dB below uniform weights' ({db10(ne):.1f} dB); the "
               "pattern is very sensitive to weight errors; limit it with wng_min_db")
        notes.append(msg)
        warnings.warn(msg, UserWarning, stacklevel=4)
    mags = np.abs(w)[setup.enabled]
    nz = mags[mags > _OFF * mags.max()]
    if len(nz) < len(mags):
        notes.append(f"{len(mags) - len(nz)} element(s) below {db20(_OFF):.0f} dB "
                     "(effectively off; left out of the dynamic range)")
    return wng, db20(nz.max() / nz.min())


def finish(setup: Setup, w, *, method, families, nulls, h, dense_spacing, tol_db, limit_db,
           certificate, rounds, samples, notes, t_start, psl_limit) -> SynthesisResult:
    """The result record of weights ``w``: every value from an independent evaluation."""
    w = _normalise(setup, w)
    arr = array_with(setup, w)
    w = arr.weights()
    d0, e0, power = _directivity(arr, setup.r0)
    pk = peak_directivity(arr, power=power)
    du, _, _ = _directivity(replace(arr, taper=np.ones(arr.n, complex)), setup.r0)
    e_peak, _ = main_peak(arr, setup, dense_spacing)
    margin_db, depths, met = _constraint_check(arr, setup, families, nulls, e0, e_peak,
                                               psl_limit, tol_db)
    hw = h if h is not None else _first_null_halfwidths(arr, setup, dense_spacing / 4)
    chk = check_family(arr, _psl_family(setup, hw, dense_spacing), e_peak, 1.0)
    if not met:
        notes.append(f"constraints not met to {tol_db:g} dB on the dense check (worst excess "
                     f"{margin_db:.3f} dB)")
    wng, dr_db = _weight_notes(setup, w, notes)
    return SynthesisResult(
        array=arr, weights=w, method=method,
        directivity_dbi=db10(d0), peak_directivity_dbi=pk.directivity_dbi,
        taper_efficiency=d0 / du, psl_db=db20(chk["worst"]),
        psl_direction=direction_of(chk["worst_dir"]), limit_db=limit_db,
        margin_db=margin_db, met=bool(met), white_noise_gain_db=db10(wng),
        dynamic_range_db=dr_db, null_depths_db=depths, mainlobe=[float(x) for x in hw],
        certificate=certificate, rounds=rounds, samples=samples, unknowns=setup.n,
        symmetry=setup.param.symmetry, notes=notes, seconds=time.perf_counter() - t_start)


def with_path(res: SynthesisResult, info: dict, stages: dict, finish_s: float):
    """``res`` with the solve path, the certified bound, the gap and the stage times."""
    bound = res.certificate.get("directivity_bound_dbi")
    cp = info.get("certified_power")
    if cp is not None:
        bound = db10(4 * math.pi / cp) if cp > 0 else math.inf
    st = dict(stages) | {"finish": finish_s}
    gap = None
    cert = dict(res.certificate)
    ap = info.get("achieved_power")
    if bound is not None and ap:
        # Bound and reached value on one objective (the loaded power matrix); the loading's
        # own effect on the reached directivity is reported beside it.
        reached = db10(4 * math.pi / ap)
        gap = bound - reached
        cert["loading_effect_db"] = res.directivity_dbi - reached
    if cp is not None:
        cert["certified_bound_dbi"] = bound
    return replace(res, path=info.get("path", ""), bound_dbi=bound, gap_db=gap, stages=st,
                   certificate=cert)
