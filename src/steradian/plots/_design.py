"""Pattern samples of a design's figures, taken with the analysis's own peak and radiated
power (so every number a figure prints is the analysis's number), and the design caption.
:func:`steradian.report.design_figure` draws them."""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np

from ..samples import Cut

__all__ = ["design_caption", "taper_text", "summary_peak",
           "full_cuts", "sphere_map", "MAP_STEP_DEG"]

MAP_STEP_DEG = 1.0
"""Grid step of the theta-phi, az-el and 3-D maps (degrees)."""


def _spec_text(spec) -> str:
    """A taper table in words: ``taylor (nbar 5, sll 30)``; nested tables the same way."""
    if not isinstance(spec, Mapping):
        return f"{spec:g}" if isinstance(spec, float) else str(spec)
    kind = spec.get("kind", "uniform")
    keys = ", ".join(f"{k} {_spec_text(v)}" for k, v in spec.items() if k != "kind")
    return f"{kind}" + (f" ({keys})" if keys else "")


def taper_text(design) -> str:
    """The taper in a few words: the ``[taper]`` kind and its keys, or the weights file."""
    if design.taper_file is not None:
        return f"taper from {design.taper_file.name}"
    if design.source is None:
        return "uniform taper" if design.array.taper is None else "taper given in Python"
    from ..io.design import read_toml

    try:
        raw = read_toml(design.source).get("taper") or {}
    except (OSError, ValueError):
        return "taper of the design file"
    if not raw:
        return "uniform taper"
    text = _spec_text(raw)
    head, _, rest = text.partition(" ")
    return f"{head} taper" + (f" {rest}" if rest else "")


def design_caption(design, summary: Mapping) -> str:
    """The first title line of every figure of a design: name, frequency, scan, taper.

    ``summary["swept"]`` (optional): design keys a study varies; the parts they set are
    shown as swept instead of the design file's values (``steering.theta_deg`` -> "theta
    swept", ``analysis.frequency_hz`` -> "frequency swept", ``taper.*`` -> "taper swept").
    """
    from ._style import frequency_text

    swept = set(summary.get("swept") or ())
    st = summary.get("steering")

    def part(key, text):
        return f"{key} swept" if f"steering.{key}_deg" in swept or f"steering.{key}" in swept \
            else text

    if st is None and not any(k.startswith("steering.") for k in swept):
        scan = "unsteered"
    else:
        st = st or {"theta_deg": 0.0, "phi_deg": 0.0, "mode": "phase"}
        theta = part("theta", "theta {:g}".format(st["theta_deg"]))
        phi = part("phi", "phi {:g}".format(st["phi_deg"]))
        scan = f"scan {theta}, {phi} deg ({part('mode', st['mode'])})"
    freq = ("frequency swept" if swept & {"analysis.frequency_hz", "design.frequency_hz"}
            else frequency_text(summary["frequency_hz"]))
    taper = ("taper swept" if any(k.startswith("taper.") for k in swept)
             else taper_text(design))
    return f"{design.name}: {freq}, {scan}, {taper}"


def summary_peak(summary: Mapping):
    """The analysis's :class:`~steradian.radiation.Peak` (directivity, direction, radiated
    power) rebuilt from its summary, to normalise pattern samples exactly as it did."""
    from ..radiation import Peak, RadiatedPower

    rp = summary["radiated_power"]
    power = RadiatedPower(float(rp["value"]), float(rp["relative_error_estimate"]),
                          rp["method"], int(rp.get("n_theta") or 0), int(rp.get("n_phi") or 0))
    return Peak(float(summary["peak_directivity"]), float(summary["peak_theta_deg"]),
                float(summary["peak_phi_deg"]), power)


def full_cuts(array, peak, metrics: Mapping | None = None, frequency: float | None = None,
              n: int = 1441) -> list[Cut]:
    """The two principal cuts over the whole great circle (span 180 deg) and, when the
    worst sidelobe of ``metrics`` (the analysis ``metrics`` block) lies on neither, the cut
    through the beam axis and it (``"sidelobe_plane"``). ``peak``: the analysis's
    :class:`~steradian.radiation.Peak` (:func:`summary_peak`), whose radiated power
    normalises every sample."""
    from ..directions import angles_deg, unit_vectors_deg
    from ..metrics import principal_cuts
    from ..patterns import directivity_dbi, intensity
    from ._cuts import ON_CUT_DEG, locate_on_cut

    f = frequency
    pk = peak
    cuts = principal_cuts(array, frequency=f, peak=pk, n=n, span_deg=180.0)
    m = metrics or {}
    if m.get("psl_theta_deg") is None:
        return cuts
    if min(locate_on_cut(c, m["psl_theta_deg"], m["psl_phi_deg"])[1] for c in cuts) \
            <= ON_CUT_DEG:
        return cuts
    r0 = cuts[0].directions[int(np.argmin(np.abs(cuts[0].angle_deg)))]
    d = unit_vectors_deg(m["psl_theta_deg"], m["psl_phi_deg"])
    t = d - (d @ r0) * r0
    t /= np.linalg.norm(t)
    a = np.deg2rad(cuts[0].angle_deg)[:, None]
    dirs = r0[None, :] * np.cos(a) + t[None, :] * np.sin(a)
    dirs /= np.linalg.norm(dirs, axis=1, keepdims=True)
    th, ph = angles_deg(dirs)
    db = directivity_dbi(intensity(array, dirs, f), pk.power.value)
    return [*cuts, Cut("sidelobe_plane", cuts[0].angle_deg.copy(), dirs, db, th, ph)]


def sphere_map(array, summary: Mapping, kind: str = "theta_phi",
               step_deg: float = MAP_STEP_DEG):
    """(columns, rows, directivity dBi) over the whole sphere: phi x theta, or azimuth x
    elevation, at ``step_deg``, normalised by the analysis's radiated power."""
    from ..directions import az_el_to_theta_phi, unit_vectors_deg
    from ..patterns import directivity_dbi, intensity

    f = summary["frequency_hz"]
    pk = summary_peak(summary)
    if kind == "theta_phi":
        a = np.arange(-180.0, 180.0 + step_deg / 2, step_deg)
        b = np.arange(0.0, 180.0 + step_deg / 2, step_deg)
        bb, aa = np.meshgrid(b, a, indexing="ij")
        vec = unit_vectors_deg(bb, aa)
    else:
        a = np.arange(-180.0, 180.0 + step_deg / 2, step_deg)
        b = np.arange(-90.0, 90.0 + step_deg / 2, step_deg)
        bb, aa = np.meshgrid(b, a, indexing="ij")
        th, ph = az_el_to_theta_phi(aa, bb)
        vec = unit_vectors_deg(th, ph)
    return a, b, directivity_dbi(intensity(array, vec, f), pk.power.value)
