r"""Pattern metrics: beamwidths, sidelobes, grating lobes, pointing, front-to-back, scan loss,
and the difference (monopulse) beam's null, lobes and slope.

Every pattern value comes from :func:`steradian.engine.field`. Angles are in degrees, levels
in dB, floored at :data:`DB_FLOOR` so reports never hold NaN or infinity. Crossings and nulls
are refined by k-section root finding, lobes by the package's lobe search
(:mod:`steradian.sphere`), never read off a sampling grid.

Layout: one function per metric in ``_measures.py``, registered in :data:`METRICS`, which
:func:`pattern_metrics` iterates; the work they share (beam axis, radials, main lobe, lobe
search) is in ``_context.py``; cuts, u-v maps, the beam axis and the symmetry test are in
:mod:`steradian.patterns`.

Definitions (after IEEE Std 145-2013 where it defines the term); beam axis and principal
cuts as in :mod:`steradian.patterns`:

- *Radial*: the great-circle arc :math:`\hat r_0\cos\rho + \hat t(\psi)\sin\rho` leaving the
  beam axis in tangent direction :math:`\hat t(\psi) = \hat t_0\cos\psi + \hat t_1\sin\psi`.
- *First null* along a radial: the first local minimum of U (a true zero or a shallow
  minimum); *half-power point*: the first angle where U falls to half the peak.
- *Main lobe*: the directions reached from the beam axis along a radial before its first null,
  :math:`\rho < \rho_{null}(\psi)`. Two symmetric cases are treated exactly: for a collinear
  array the main lobe is the band of cone angles about the array axis between the first nulls
  of the cut containing the axis; when the array is planar and its pattern is mirror symmetric
  about the array plane (isotropic elements), the mirror image of the main lobe is main lobe
  too.
- **HPBW / FNBW** per principal cut: the angle between the half-power points (k-section on
  U - U_0/2) or between the first nulls (k-section minimisation of U) either side of the
  peak, searched along the whole half great circle.
- **Main-lobe boundary**: the first null along 96 radials, :math:`\rho_{null}(\psi)`,
  interpolated linearly (periodic) in between.
- **PSL** (peak sidelobe level): :math:`10\log_{10}(\max_{outside} U / U_0)` over all
  directions outside the main lobe (front hemisphere only for front-half-space elements,
  where U is zero behind). Found by the lobe search of :mod:`steradian.sphere`: a Fibonacci
  set with 3 samples per null width of the array's electrical size, the 16 best local maxima
  (one per lobe) refined by the batched safeguarded Newton ascent with the main lobe
  excluded. Its direction is reported.
- **ISLR** (integrated sidelobe ratio): :math:`(P_{rad} - P_{main}) / P_{main}` in dB,
  :math:`P_{main} = \int_0^{2\pi}\int_0^{\rho_{null}(\psi)} U \sin\rho\,d\rho\,d\psi`
  (Gauss-Legendre in :math:`\rho`, trapezoid in :math:`\psi`) and :math:`P_{rad}` from
  ``peak.power``. The main lobe's share :math:`P_{main}/P_{rad}` is reported as well.
- **Grating lobes predicted** from ``geometry.lattice``: with primitive vectors
  :math:`a_i` and reciprocal vectors :math:`b_i` (:math:`a_i\cdot b_j = \delta_{ij}`, in
  the lattice plane), the lobe :math:`(p, q) \ne (0, 0)` sits where the projection of the
  direction on the lattice plane is :math:`s_0 + \lambda(p b_1 + q b_2)`, visible when
  its length is at most 1. :math:`s_0` is the projection of the steering direction (times
  :math:`f_0/f` for phase steering evaluated off the design frequency: the beam squints).
  For a lattice in the x-y plane this is :math:`(u, v) = (u_0, v_0) + \lambda(p b_1 +
  q b_2)`. The **free scan cone** is the largest :math:`\theta_0` (from the lattice normal;
  from broadside for a line) with no visible grating lobe at any azimuth,
  :math:`\sin\theta_0 < \min_{(p,q)\ne 0}|\lambda(p b_1 + q b_2)| - 1`
  (None when lobes are visible even at broadside); the **free scan in the phi plane** is
  the same limit for scans along the phi-plane cut only. For a line of spacing d this is
  :math:`d/\lambda < 1/(1 + |\sin\theta_0|)`.
- **Grating lobes found**: refined lobes outside the main lobe within ``grating_lobe_db``
  of the peak.
- **Pointing error**: angle between the beam axis and the steering direction (None when
  unsteered); it shows beam squint off-frequency and the pull of the element pattern.
- **Front-to-back ratio**: :math:`U_0 / U(-\hat r_0)` in dB; **front-to-back
  (hemisphere)**: :math:`U_0` over the largest U more than 90 degrees from the beam axis.
  Both are capped at -DB_FLOOR (300 dB) when the rear is dark.
- **Scan loss**: peak directivity of the array minus that of the same array with its
  steering removed, in dB (negative when steering costs directivity; 0 when unsteered).
- **Beam kind** (``beam_kind``): ``"sum"``, ``"difference_az"`` (excitation antisymmetric
  about the y-z plane through the array centre: the difference axis is x) or
  ``"difference_el"`` (about the x-z plane: the axis is y); for a collinear array the axis is
  the line's. *Boresight* :math:`\hat r_b` is the steering direction, else broadside (the
  +z-side normal of a planar array; the perpendicular of a line nearest +z). A declared
  **sum** beam is refused when its excitation is a difference: the array factor at
  :math:`\hat r_b`, :math:`|\sum_n w_n e^{jk\hat r_b\cdot r_n}|`, is 20 dB or more below
  :math:`\sum_n|w_n|` and the beam axis lies within a null width :math:`2\pi/kR` of
  :math:`\hat r_b` (its "sidelobe" would be its twin lobe at 0 dB); an unsteered
  three-dimensional array has no boresight and is not checked.
- **Difference lobes**: the two highest local maxima of U on the great circle through
  :math:`\hat r_b` along the difference axis' tangent :math:`\hat t`, sampled within two null
  widths either side, refined by the lobe search (on that great circle for a line). A
  declared difference beam is refused when its excitation has no boresight null (the array
  factor test above above -20 dB) or a lobe is more than 10 dB below the pattern's peak (the
  difference is in the other plane). The **main lobe** of a difference beam is the union of
  the main lobes (as above) about both difference lobes; PSL, ISLR and grating lobes found
  use it.
- **Boresight null depth**: :math:`10\log_{10}(U(\hat r_b)/U_\Delta)`, :math:`U_\Delta` the
  higher difference lobe; **difference peak**: its directivity; **difference sidelobe
  level**: the highest lobe outside the main lobe relative to :math:`U_\Delta`. The *null*
  is the k-section minimum of U between the lobes; the **pointing error** of a difference
  beam is its angle from the steering direction (it squints off-frequency as a sum beam
  does).
- **Difference slope**: :math:`s = d|E_\Delta|/d\rho` at the null along the great circle
  through the lobes, :math:`|E_\Delta| = \sqrt{D_\Delta}` the field normalised to
  directivity, per degree, from :math:`(|E(\delta)| + |E(-\delta)|)/2\delta` (exact for a
  field linear through the null) at :math:`\delta` and :math:`2\delta` with Richardson
  extrapolation. For isotropic elements on a half-wave line steered to :math:`\theta_0` it
  is :math:`k|\sum_n w_n x_n|\cos\theta_0/\sqrt{\sum_n|w_n|^2}` per radian (the aperture's
  first moment). **Monopulse slope**: :math:`s/\sqrt{D_\Sigma}` at the null, the slope of
  :math:`\Delta/\Sigma` with both patterns normalised to directivity, :math:`\Sigma` the
  uniform-amplitude beam of the same enabled elements and steering (Sherman and Barton).

References
----------
IEEE Std 145-2013, *IEEE Standard for Definitions of Terms for Antennas* (beamwidth,
sidelobe level, front-to-back ratio, grating lobe).
R. J. Mailloux, *Phased Array Antenna Handbook*, 3rd ed., Artech House, 2018, ch. 1-3
(grating lobes of rectangular and triangular lattices; scan loss).
R. C. Hansen, *Phased Array Antennas*, 2nd ed., Wiley, 2009, ch. 2-3 (beamwidth, sidelobes,
integrated sidelobe ratio).
C. A. Balanis, *Antenna Theory: Analysis and Design*, 4th ed., Wiley, 2016, ch. 2 and 6.
E. T. Bayliss, "Design of monopulse antenna difference patterns with low sidelobes," Bell
Syst. Tech. J. 47 (1968) 623-650 (difference patterns).
S. M. Sherman and D. K. Barton, *Monopulse Principles and Techniques*, 2nd ed., Artech House,
2011 (difference slope, normalised monopulse slope).
"""

from __future__ import annotations

from ..errors import SteradianError
from ..patterns import Cut, beam_axis_many, cut, principal_cuts, resolve_peak, symmetry_many
from ..radiation import Peak
from ..units import DB_FLOOR
from ..validate import positive
from ._beam import BOUNDARY_SHRINK, KSECTION_MINIMUM, ksection
from ._context import Context, prepare_lobes, require_metrics_search
from ._difference import (
    BEAM_KINDS,
    SUM_NULL_DB,
    DifferenceNull,
    check_beam_kind,
    check_sum_beam,
    coherent_level_db,
    difference_null,
)
from ._measures import METRICS, Metric, metric
from ._results import GratingLobe, Lobe, PatternMetrics, PlaneWidths

__all__ = ["Cut", "principal_cuts", "cut", "DB_FLOOR", "PatternMetrics", "PlaneWidths", "Lobe",
           "GratingLobe", "pattern_metrics", "METRICS", "Metric", "metric", "BEAM_KINDS",
           "check_sum_beam", "coherent_level_db", "SUM_NULL_DB", "require_metrics_search",
           "DifferenceNull", "difference_null", "ksection", "KSECTION_MINIMUM",
           "BOUNDARY_SHRINK", "pattern_metrics_many"]


def pattern_metrics(array, *, frequency: float | None = None, peak: Peak | None = None,
                    grating_lobe_db: float = 3.0, beam_kind: str = "sum",
                    aperture=None) -> PatternMetrics:
    """Beamwidths, sidelobes, grating lobes, pointing, front-to-back and scan loss of a beam.

    Parameters
    ----------
    array : Array
        Any geometry (linear, planar, 3-D, rings), steered or not, any element model.
    frequency : float, optional
        Evaluation frequency in Hz (default: the design frequency).
    peak : Peak, optional
        :func:`steradian.radiation.peak_directivity` at ``frequency`` (computed when omitted);
        its radiated power normalises every directivity.
    grating_lobe_db : float
        A lobe outside the main lobe within this many dB of the peak is reported as a grating
        lobe found in the pattern (default 3 dB).
    aperture : Aperture, optional
        Work shared with other beams of the same aperture (:mod:`steradian.aperture`):
        search sets and the unsteered reference beam of the scan loss.

    Returns
    -------
    PatternMetrics
        Every registered metric (:data:`METRICS`) of the beam; the definitions are in
        :mod:`steradian.metrics`.

    Raises
    ------
    SteradianError
        For a sum beam whose excitation is a difference (see :func:`check_sum_beam`), and a
        difference beam without a boresight null.
    """
    return pattern_metrics_many([array], frequency=frequency,
                                peaks=None if peak is None else [peak],
                                grating_lobe_db=grating_lobe_db, beam_kind=beam_kind,
                                aperture=aperture)[0]


def pattern_metrics_many(arrays, *, frequency: float | None = None, peaks=None,
                         grating_lobe_db: float = 3.0, beam_kind: str = "sum",
                         aperture=None) -> list[PatternMetrics]:
    """:func:`pattern_metrics` of several arrays of one aperture (differing only in their
    weights, as the beams of a scan or taper sweep), in order.

    Every metric is computed by the same functions as for one array; the sidelobe and rear
    lobe refinements of all the beams run together (one safeguarded ascent for all their
    candidates, each on its own beam's pattern), which saves the per-step work of separate
    refinements; a candidate's result does not depend on the others refined with it.
    ``peaks`` (one per array) as ``peak`` of :func:`pattern_metrics`.
    """
    grating_lobe_db = positive("grating_lobe_db", grating_lobe_db, " dB")
    kind = check_beam_kind(beam_kind)
    peaks = [None] * len(arrays) if peaks is None else list(peaks)
    if aperture is not None:
        for array in arrays:
            aperture.check(array, frequency)
    peaks = [resolve_peak(a, frequency, pk, aperture) for a, pk in zip(arrays, peaks,
                                                                       strict=True)]
    syms = symmetry_many(arrays, frequency)
    axes = beam_axis_many(arrays, peaks, frequency, syms)
    ctxs = []
    for array, peak, sym, (r0, u0) in zip(arrays, peaks, syms, axes, strict=True):
        ctx = Context(array, frequency, peak, grating_lobe_db, kind, axis=r0,
                      aperture=aperture, sym=sym, u0=u0)
        if kind == "sum":
            check_sum_beam(ctx)
        ctxs.append(ctx)
    prepare_lobes(ctxs)
    return [_metrics_of(ctx) for ctx in ctxs]


def _metrics_of(ctx) -> PatternMetrics:
    values: dict = {}
    for m in METRICS:
        out = m.compute(ctx)
        if set(out) != set(m.fields):
            raise SteradianError(f"metric {m.name!r} returned {sorted(out)}, expected "
                                 f"{sorted(m.fields)}")
        values.update(out)
    return PatternMetrics(**values, notes=tuple(ctx.notes))
