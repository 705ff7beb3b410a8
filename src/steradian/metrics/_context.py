"""What the metrics of one beam share: the beam, its radials, main lobe and lobe search.

Each piece is computed on first use (a metric asks for what it needs) and kept, so the
registered metric functions do not repeat work and do not depend on their order.
"""

from __future__ import annotations

from functools import cached_property

import numpy as np

from ..directions import Directions
from ..engine import field_many
from ..errors import SteradianError
from ..patterns import beam_axis, resolve_peak, symmetry
from ..radiation import search_spacing
from ..sphere import SearchSet, refine_maxima, require_search
from ._beam import N_RADIALS, BandLobe, Beam, RadialLobe, arc, dot_rows, g_of, march_beams
from ._difference import difference_beam

__all__ = ["Context", "SEARCH_PER_NULL", "PRINCIPAL_RADIALS", "N_REFINE", "N_REAR",
           "require_metrics_search", "refine_lobes", "prepare_lobes"]

SEARCH_PER_NULL = 3.0
_MIN_SEARCH = 2000
"""Sidelobe search samples per main-lobe null width."""

PRINCIPAL_RADIALS = np.arange(4) * (N_RADIALS // 4)
"""The radials along the principal cuts (psi = 0, 90, 180, 270 degrees): the only ones whose
half-power angle a metric uses (the beamwidths)."""

N_REFINE = 16
"""Sidelobe candidates refined by the lobe search."""

N_REAR = 4
"""Rear-hemisphere candidates refined for the front-to-back ratio."""


class Context:
    """One beam of ``array`` at ``frequency`` and the work its metrics share."""

    def __init__(self, array, frequency, peak, grating_lobe_db: float, beam_kind: str = "sum",
                 axis=None, aperture=None, sym=None, u0=None):
        if sym is not None:  # the caller's :func:`~steradian.patterns.symmetry_many` result
            self.__dict__["symmetry"] = sym
        self.array = array
        self.aperture = aperture
        self.frequency = frequency
        self.grating_lobe_db = grating_lobe_db
        self.beam_kind = beam_kind
        self.peak = resolve_peak(array, frequency, peak, aperture)
        self.r0 = (beam_axis(array, self.peak, frequency, self.symmetry) if axis is None
                   else np.asarray(axis, float))
        # u0: the intensity at ``axis`` when the caller has it (beam_axis_many)
        self.beam = Beam(array, frequency, self.r0, self.peak.power.value, u0)
        self.kr = max(array.electrical_radius(frequency), 1.0)
        self.h = 2 * np.pi / self.kr / 16  # radial march: 16 samples per null width
        self.notes: list[str] = []

    @cached_property
    def symmetry(self):
        return symmetry(self.array, self.frequency)

    @cached_property
    def radials(self):
        """(rho_hp, rho_null) along N_RADIALS radials, psi = 2 pi i / N_RADIALS; rho_hp
        only along the principal cuts' radials (:data:`PRINCIPAL_RADIALS`), NaN elsewhere."""
        return march_beams([self.beam], [self.radial_tangents()], self.h, [np.pi],
                           [PRINCIPAL_RADIALS])[0]

    def radial_tangents(self) -> np.ndarray:
        """Tangents (N_RADIALS, 3) of the radials at psi = 2 pi i / N_RADIALS."""
        b = self.beam
        psi = 2 * np.pi * np.arange(N_RADIALS) / N_RADIALS
        return b.t0[None, :] * np.cos(psi)[:, None] + b.t1[None, :] * np.sin(psi)[:, None]

    @cached_property
    def back(self) -> float:
        """g straight behind the beam axis, at -r0 (front-to-back ratio)."""
        return float(self.beam.g(-self.r0[None, :])[0])

    @cached_property
    def difference(self):
        """The difference beam's lobes, null and slope (:class:`DifferenceBeam`), None for a
        sum beam."""
        return None if self.beam_kind == "sum" else difference_beam(self)

    @cached_property
    def main_lobe(self):
        """(model, main-lobe power, name, key): ``key`` maps a direction to the one that
        represents its lobe (a cone's point in the plane of the beam and array axes; the
        front image of a mirror lobe). For a difference beam the main lobe is the union of
        its two difference lobes (each bounded by its first nulls, the boresight null one of
        them)."""
        if self.difference is not None:
            return self.difference.main_lobe(self._sum_main_lobe()[3])
        return self._sum_main_lobe()

    @cached_property
    def radial_lobe(self):
        """The main lobe bounded by the radials' first nulls (with its mirror image when the
        pattern is mirror symmetric); None for a collinear array (a band)."""
        kind, vec = self.symmetry
        if kind == "band":
            return None
        return RadialLobe(self.beam, self.radials[1], vec if kind == "mirror" else None)

    @cached_property
    def radial_lobe_power(self) -> float:
        return self.radial_lobe.power(self.kr)

    def _sum_main_lobe(self):
        kind, vec = self.symmetry
        if kind == "band":
            return self._band(vec)
        lobe = self.radial_lobe
        if kind != "mirror":
            return lobe, self.radial_lobe_power, "radial", lambda x: x
        self.notes.append("planar array with a mirror-symmetric pattern: the mirror image of "
                          "the main lobe behind the array plane counts as main lobe")
        r0 = self.r0

        def key(x):
            flip = (x @ vec) * (r0 @ vec if abs(r0 @ vec) > 1e-12 else 1.0) < 0
            return np.where(flip[:, None], lobe.mirror(x), x)
        return lobe, self.radial_lobe_power, "radial+mirror", key

    def _band(self, a):
        """Main lobe of a collinear array: the band of cone angles between the first nulls
        of the cut containing the array axis."""
        r0, beam = self.r0, self.beam
        c0 = float(np.clip(r0 @ a, -1.0, 1.0))
        perp = a - c0 * r0
        if np.linalg.norm(perp) > 1e-9:
            tp = perp / np.linalg.norm(perp)
            lims = (float(np.arccos(c0)), np.pi - float(np.arccos(c0)))
        else:  # endfire: both directions of the cut lead away from the axis
            tp, lims = beam.t0, (np.pi, np.pi)
        _, rn = beam.march(np.array([tp, -tp]), self.h, np.array(lims))
        cs = [np.nan if not np.isfinite(x) else float(arc(r0, t[None, :], [x])[0] @ a)
              for x, t in zip(rn, (tp, -tp), strict=True)]
        if np.linalg.norm(perp) > 1e-9:
            c_lo = -1.0 if np.isnan(cs[1]) else cs[1]
            c_hi = 1.0 if np.isnan(cs[0]) else cs[0]
        elif not np.isfinite(cs).any():
            c_lo, c_hi = -1.0, 1.0
        elif c0 > 0:
            c_lo, c_hi = float(np.nanmax(cs)), 1.0
        else:
            c_lo, c_hi = -1.0, float(np.nanmin(cs))
        lobe = BandLobe(beam, a, c_lo, c_hi)
        p_main = lobe.power(self.array.k(self.frequency) * float(np.ptp(self.array.positions @ a)))
        self.notes.append("collinear array: the pattern is a cone about the array axis; the "
                          "main lobe is the band of cone angles between the first nulls")
        side = r0 - c0 * a  # unit normal to the axis in the plane of r0 and the axis
        side = side / np.linalg.norm(side) if np.linalg.norm(side) > 1e-9 else beam.t0

        def key(x):
            c = np.clip(x @ a, -1.0, 1.0)
            return c[:, None] * a + np.sqrt(1 - c**2)[:, None] * side
        return lobe, p_main, "band", key

    @cached_property
    def search(self):
        """(SearchSet, relative intensity g on it) for sidelobes and the rear hemisphere."""
        s = self.search_set()
        return s, self.beam.g(s.directions)

    def search_set(self) -> SearchSet:
        """The sidelobe search set (shared by the beams of one aperture)."""
        front = self.array.element.front_only and self.array.geometry.orientations is None
        sp = search_spacing(self.array, self.frequency, per_null=SEARCH_PER_NULL)
        make = SearchSet.fibonacci if self.aperture is None else self.aperture.search_set
        return make(sp, front_only=front, min_points=_MIN_SEARCH)

    def lobes(self, allowed, count: int, key):
        """Refined local maxima of g where ``allowed`` (the refinement kept there), one per
        lobe (``key`` identifies a lobe), highest first: list of (direction, g); the
        extension point for a metric that needs lobes of its own region
        (:func:`refine_lobes` of this beam)."""
        return refine_lobes([self], [[(allowed, count, key)]])[0][0]

    def lobe_regions(self):
        """The regions of :attr:`outside` and :attr:`rear` (for :func:`refine_lobes`)."""
        lobe, _, _, key = self.main_lobe
        rear = _Rear(self.r0)
        return [(_Outside(lobe), N_REFINE, key), (rear, N_REAR, _same, rear.project)]

    @cached_property
    def _outside_and_rear(self):
        return refine_lobes([self], [self.lobe_regions()])[0]

    @property
    def outside(self):
        """Refined lobes outside the main lobe (list of (direction, g), highest first)."""
        return self._outside_and_rear[0]

    @cached_property
    def outside_lobes(self):
        """:attr:`outside` as reported :class:`Lobe` records (each at its lobe's
        representative direction, ``main_lobe``'s key), highest first."""
        key = self.main_lobe[3]
        return tuple(self.beam.lobe(key(x[None, :])[0], f) for x, f in self.outside)

    @property
    def rear(self):
        """Refined maxima at least 90 degrees from the beam axis (list of (direction, g),
        highest first): lobes of the rear hemisphere, or the highest point of its edge."""
        return self._outside_and_rear[1]


def refine_lobes(ctxs, regions_of) -> list[list[list]]:
    """Refined lobes of several beams at once: for beam ``ctxs[b]`` and each of its regions
    ``regions_of[b] = [(allowed, count, key[, project]), ...]``, the local maxima of g where
    ``allowed`` (the refinement kept there), one per lobe (``key`` identifies a lobe),
    highest first, as lists of (direction, g).

    Candidates are the ``count`` best distinct local maxima of each beam's search samples in
    the region; all of them, of every beam and region, are refined by one
    :func:`steradian.sphere.refine_maxima` (one ascent step evaluates every beam's points),
    each start on its own beam's pattern. ``project(points) -> points`` maps directions onto
    a closed region whose maximum may lie on its edge (the refinement then reaches the edge
    exactly instead of creeping toward it). A start's result does not depend on the other
    starts refined with it.
    """
    spacing = ctxs[0].search[0].spacing
    if any(c.search[0].spacing != spacing for c in ctxs):
        raise SteradianError("refine_lobes: the beams' search sets differ in spacing; "
                             "refine beams of one aperture together")
    starts, owner = [], []  # owner: (beam, region) of each start
    for b, (ctx, regions) in enumerate(zip(ctxs, regions_of, strict=True)):
        search, vals = ctx.search
        d = search.directions
        for r, (allowed, count, key, *_) in enumerate(regions):
            m = np.asarray(allowed(d), bool)
            if not m.any():
                continue
            # Samples outside the region do not compete with those inside it.
            cand = search.local_maxima(np.where(m, vals, 0.0), 4 * count, m)
            cand = cand[cand >= 0]
            keys = key(d[cand]) if len(cand) else np.zeros((0, 3))
            picked = _distinct(keys, 0.5 * search.spacing, count)
            starts.append(d[cand[picked]])
            owner += [(b, r)] * len(picked)
    out = [[[] for _ in regions] for regions in regions_of]
    if not owner:
        return out
    owner = np.asarray(owner, int).reshape(-1, 2)
    pairs = sorted({tuple(o) for o in owner.tolist()})

    beams = [c.beam for c in ctxs]

    def fun(points, rows):
        ob = owner[rows, 0]
        g = g_of(beams, points, ob[:, None])
        for r, sel in _by_region(owner[rows, 1]):
            g[sel] *= _regions_apply(regions_of, 0, r, points[sel], ob[sel][:, None])
        return g

    projected = [(b, r) for b, r in pairs if len(regions_of[b][r]) > 3]

    def project(points, rows):
        q = points.copy()
        rr = owner[rows, 1]
        for r in {r for _, r in projected}:
            sel = np.flatnonzero(rr == r)
            q[sel] = _regions_apply(regions_of, 3, r, points[sel][:, None, :],
                                    owner[rows[sel], 0][:, None])[:, 0]
        return q

    xs, fs = refine_maxima(fun, np.concatenate(starts), spacing,
                           project=project if projected else None)
    for b, r in pairs:
        key = regions_of[b][r][2]
        mine = np.flatnonzero((owner[:, 0] == b) & (owner[:, 1] == r))
        order = mine[np.argsort(-fs[mine], kind="stable")]
        for i in _distinct(key(xs[order]), 0.05 * spacing, len(order)):
            out[b][r].append((xs[order[i]], float(fs[order[i]])))
    return out


class _Outside:
    """Region of the sidelobe search: outside the main lobe ``lobe``."""

    def __init__(self, lobe):
        self.lobe = lobe

    def __call__(self, x):
        return ~self.lobe.inside(x)

    @staticmethod
    def many(regions, x, which):
        """The test of ``regions[which[i]]`` at ``x[i]`` for all at once, or None where the
        lobes' models have no common form (each region is then tested on its own)."""
        lobes = [r.lobe for r in regions]
        if not all(type(lb) is RadialLobe and len(lb.rho) == len(lobes[0].rho)
                   for lb in lobes):
            return None
        return ~RadialLobe.inside_many(lobes, x, which)


class _Rear:
    """Region of the rear-lobe search: the closed hemisphere behind the beam axis ``r0`` (its
    maximum may lie on the 90 degree circle, reached by projecting onto it)."""

    def __init__(self, r0):
        self.r0 = np.asarray(r0, float)

    def __call__(self, x):
        return dot_rows(x, self.r0) <= 1e-12

    def project(self, x):
        return x - np.maximum(dot_rows(x, self.r0), 0.0)[:, None] * self.r0

    @staticmethod
    def many(regions, x, which):
        return dot_rows(x, np.stack([r.r0 for r in regions])[which]) <= 1e-12

    @staticmethod
    def project_many(regions, x, which):
        r0 = np.stack([r.r0 for r in regions])[which]
        return x - np.maximum(dot_rows(x, r0), 0.0)[:, None] * r0


def _same(x):
    return x


def _by_region(region_of_row):
    """(region index, row indices) of each region present."""
    for r in np.unique(region_of_row):
        yield int(r), np.flatnonzero(region_of_row == r)


def _regions_apply(regions_of, slot: int, r: int, points, beam_of):
    """Slot ``slot`` (0: the allowed test, 3: the projection) of region ``r`` of each beam,
    applied to ``points`` (A, S, 3) of beams ``beam_of`` (A, 1): one batched call when every
    beam's region has a batched form (:class:`_Outside`, :class:`_Rear`), else one call per
    beam."""
    shape = points.shape
    flat = points.reshape(-1, 3)
    which = np.broadcast_to(beam_of, shape[:-1]).reshape(-1)
    fns = [regions[r][slot] if len(regions[r]) > slot else _same for regions in regions_of]
    owners = [getattr(f, "__self__", f) for f in fns]  # a bound project(): its region
    kind = type(owners[0])
    batch = None
    if all(type(o) is kind for o in owners):
        many = getattr(kind, "many" if slot == 0 else "project_many", None)
        batch = None if many is None else many(owners, flat, which)
    if batch is None:
        batch = np.empty((len(flat), 3) if slot == 3 else len(flat),
                         float if slot == 3 else bool)
        for b in np.unique(which):
            sel = which == b
            batch[sel] = fns[b](flat[sel])
    return batch.reshape(shape if slot == 3 else shape[:-1])


def prepare_lobes(ctxs) -> None:
    """March the radials of several beams together, then refine their sidelobes and rear
    lobes together (:func:`march_beams`, :func:`refine_lobes`), before their metrics ask
    for them. Beams are batched with those of the same march step and search spacing (one
    aperture: all of them); their values behind the axis come from one call."""
    todo = [c for c in ctxs if "back" not in c.__dict__]
    if len(todo) > 1:
        back = g_of([c.beam for c in todo], np.stack([-c.r0 for c in todo]),
                    np.arange(len(todo)))
        for c, v in zip(todo, back, strict=True):
            c.__dict__["back"] = float(v)
    for group in _by(ctxs, lambda c: c.h, lambda c: "radials" not in c.__dict__):
        got = march_beams([c.beam for c in group], [c.radial_tangents() for c in group],
                          group[0].h, [np.pi] * len(group),
                          [PRINCIPAL_RADIALS] * len(group))
        for c, r in zip(group, got, strict=True):
            c.__dict__["radials"] = r
    _searches(ctxs)
    for group in _by(ctxs, lambda c: c.kr, lambda c: "radial_lobe_power" not in c.__dict__
                     and c.radial_lobe is not None):
        for c, p in zip(group, RadialLobe.power_many([c.radial_lobe for c in group],
                                                      group[0].kr), strict=True):
            c.__dict__["radial_lobe_power"] = p
    for group in _by(ctxs, lambda c: c.search[0].spacing,
                     lambda c: "_outside_and_rear" not in c.__dict__):
        for c, got in zip(group, refine_lobes(group, [c.lobe_regions() for c in group]),
                          strict=True):
            c.__dict__["_outside_and_rear"] = got


def _searches(ctxs) -> None:
    """The search samples of beams of one aperture (their search set and frequency shared),
    in one engine call (:func:`steradian.engine.field_many`), each as
    :attr:`Context.search` gives it."""
    for group in _by(ctxs, lambda c: (id(c.search_set()), c.frequency),
                     lambda c: "search" not in c.__dict__ and c.aperture is not None):
        s = group[0].search_set()
        d = s.directions
        u = field_many([c.array for c in group], Directions(d, (len(d),)),
                       frequency=group[0].frequency).intensity
        for c, row in zip(group, u, strict=True):
            c.__dict__["search"] = (s, row / c.beam.u0)


def _by(ctxs, key, todo) -> list[list]:
    """Contexts still to do, grouped by ``key`` (groups of two or more)."""
    groups: dict = {}
    for c in ctxs:
        if todo(c):
            groups.setdefault(key(c), []).append(c)
    return [g for g in groups.values() if len(g) > 1]


def _distinct(keys, sep: float, count: int) -> list[int]:
    """Indices of ``keys`` (in order) farther than ``sep`` from every one taken before, at
    most ``count``."""
    keys = np.asarray(keys, float).reshape(len(keys), -1)
    near = np.sum((keys[:, None, :] - keys[None, :, :]) ** 2, axis=-1) <= sep * sep
    picked: list[int] = []
    taken = np.zeros(len(keys), bool)  # within sep of one already picked
    for i in range(len(keys)):
        if len(picked) >= count:
            break
        if not taken[i]:
            picked.append(i)
            taken |= near[i]
    return picked


def require_metrics_search(array, frequency=None) -> None:
    """Refuse, before any other work, an array whose sidelobe search set would exceed the
    memory budget (:func:`steradian.sphere.require_search`), so an analysis with metrics
    fails in milliseconds instead of after its radiated power and peak."""
    front = array.element.front_only and array.geometry.orientations is None
    require_search(search_spacing(array, frequency, per_null=SEARCH_PER_NULL),
                   front_only=front, min_points=_MIN_SEARCH)
