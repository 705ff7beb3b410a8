"""Design-file recipes: what the command line does, as Python functions.

Each recipe takes a :class:`~steradian.io.design.Design` (read by
:func:`~steradian.io.design.load_design`) and strings together the computing parts
(analysis, metrics, synthesis, beam tables) and the file parts (:mod:`steradian.io`):

- :func:`analyze_design`: the analysis summary of a design (``steradian analyze``), with
  the verdicts of its ``[requirements]``;
- :func:`requirements_of_design`, :func:`analysis_verdicts` and :func:`beam_verdicts`: the
  ``[requirements]`` table judged against an analysis or a beam table
  (:mod:`steradian.requirements`; ``analyze``, ``beams``, ``verify``);
- :func:`coupling_spec_of_design`, :func:`coupling_of_design` and
  :func:`design_beam_weights`: the ``[coupling]`` table, its
  :class:`~steradian.coupling.Coupling` (the ``coupling`` block of ``analyze``) and the
  coupling-aware beam weights of ``beams`` and ``verify``;
- :func:`export_patterns` and :func:`uv_map`: pattern cuts and u-v maps to CSV and PNG
  (``steradian pattern``, ``steradian demo``);
- :func:`design_for_synthesis`, :func:`synthesize_design` and
  :func:`write_synthesis_weights`: synthesis from ``[synthesis]`` and its weights CSV
  (``steradian synth``), which may be the file the design's ``[taper] file`` names, so one
  design carries the chain synth -> analyze -> beams;
- :func:`design_with_weights`: a design with a weights CSV in place of its taper
  (``--weights FILE`` of ``analyze`` and ``beams``);
- :func:`tradeoff_of_design`: the directivity / sidelobe trade curve (``steradian tradeoff``);
- :func:`channel_of_design`, :func:`beam_table_from_design` and :func:`verify_weight_file`:
  quantized beam tables from ``[channel]`` and ``[beams]``, and re-evaluating a weight file
  against its design (``steradian beams``, ``steradian verify``).

The command line only parses options, calls one of these and renders the result.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import numpy as np

from .analysis import analyze
from .array import check_frequency
from .beamtable import (
    BeamBuild,
    BeamEvaluator,
    BeamTable,
    Verification,
    beam_kinds_from_table,
    beams_from_table,
    build_beam_table,
    verify_beam_table,
)
from .coupling import coupled_beam_weights, coupled_summary, coupling_of, coupling_spec
from .errors import DesignError, SteradianError
from .io.calibration_csv import read_calibration
from .io.design import load_design, read_toml, weights_file_taper
from .io.directions_csv import read_directions
from .io.element_table import read_element_table
from .io.fileset import check_manifest, manifest_path
from .io.formats import read_weight_file
from .io.pattern_csv import write_cuts, write_uv
from .io.touchstone import read_touchstone
from .io.weights_csv import write_weights
from .patterns import uv_map
from .quantize import ChannelModel, channel_from_table
from .requirements import judge_analysis, judge_beams, requirements_from_table, verdicts_dict

__all__ = ["analyze_design", "design_block", "design_with_weights", "export_patterns", "uv_map",
           "design_for_synthesis", "synthesize_design", "write_synthesis_weights",
           "tradeoff_of_design", "channel_of_design", "check_taper_steerable",
           "design_metadata", "beam_table_from_design", "verify_weight_file",
           "requirements_of_design", "analysis_verdicts", "beam_verdicts",
           "coupling_spec_of_design", "coupling_of_design", "design_beam_weights",
           "beam_evaluator_of_design", "beam_directions_of_design", "figure_title"]


# --------------------------------------------------------------------------------------------
# Analysis
# --------------------------------------------------------------------------------------------
def design_block(design) -> dict:
    """The ``design`` block of a summary: name, description and source file."""
    return {"name": design.name, "description": design.description,
            "source": None if design.source is None else str(design.source)}


def analyze_design(design, frequency: float | None = None) -> dict:
    """Run :func:`steradian.analysis.analyze` with the design's ``[analysis]`` options.

    ``frequency`` (Hz) overrides ``analysis.frequency_hz``; it is refused when more than
    :data:`steradian.array.FREQUENCY_RATIO_LIMIT` times away from the design frequency (a
    unit slip: ``28`` meant as GHz). The returned dictionary is the analysis summary with a
    ``design`` block (name, description, source) first and, when the design has
    ``[requirements]``, a ``requirements`` block last (:func:`analysis_verdicts`;
    ``met`` and one verdict per requirement). The table is read before the analysis runs,
    so a bad key fails at once. A ``[coupling]`` table adds the ``coupling`` block
    (:func:`steradian.coupling.coupled_summary`: active reflection, accepted power, realized
    gain over scan).
    """
    reqs = requirements_of_design(design)
    spec = coupling_spec_of_design(design)
    opt = design.options
    if frequency is not None:
        opt = replace(opt, frequency=check_frequency(frequency, design.array.frequency))
    result = analyze(design.array, opt)
    out = {"design": design_block(design), **result.to_dict()}
    if spec is not None:
        out["coupling"] = coupled_summary(
            design.array, coupling_of_design(design, opt.frequency, spec), spec,
            frequency=opt.frequency, efficiency=opt.radiation_efficiency, peak=result.peak)
    if reqs:
        out["requirements"] = verdicts_dict(judge_analysis(reqs, out, design.array))
    return out


def coupling_spec_of_design(design):
    """The design's ``[coupling]`` table checked (:func:`steradian.coupling.coupling_spec`),
    or None without one."""
    table = design.sections.get("coupling")
    if table is None:
        return None
    return coupling_spec(table, wavelength=design.array.wavelength, base_dir=design.base_dir,
                         source=None if design.source is None else str(design.source))


def coupling_of_design(design, frequency: float | None = None, spec=None):
    """The :class:`~steradian.coupling.Coupling` of the design's ``[coupling]`` table at
    ``frequency`` (default the design frequency); a Touchstone file is read here."""
    spec = coupling_spec_of_design(design) if spec is None else spec
    if spec is None:
        raise DesignError("coupling", "the design has no [coupling] table",
                          None if design.source is None else str(design.source))
    network = None if spec.file is None else read_touchstone(spec.file)
    tables = None if spec.patterns is None else {
        name: read_element_table(path) for name, path in spec.patterns.items()}
    return coupling_of(spec, design.array, frequency=frequency, network=network,
                       tables=tables)


def _table_coupling(design) -> tuple:
    """``(spec, coupling)`` of the design's ``[coupling]`` for its beam tables, built once
    for the weights and the evaluator (``(None, None)`` without one)."""
    spec = coupling_spec_of_design(design)
    return spec, (None if spec is None else coupling_of_design(design, spec=spec))


def design_beam_weights(design, coupled: tuple | None = None):
    """The per-beam weight source ``[coupling] beam_weights`` asks for: None (the design's
    taper steered) or the coupling-aware weights of maximum realized gain
    (:func:`steradian.coupling.coupled_beam_weights`), for ``beams`` and ``verify`` alike.
    ``coupled``: the design's ``(spec, coupling)`` when already built."""
    spec = coupling_spec_of_design(design) if coupled is None else coupled[0]
    if spec is None or spec.beam_weights == "taper":
        return None
    c = coupling_of_design(design, spec=spec) if coupled is None else coupled[1]
    return coupled_beam_weights(design.array, c)


def beam_evaluator_of_design(design, coupled: tuple | None = None) -> BeamEvaluator:
    """The :class:`~steradian.beamtable.BeamEvaluator` of the design's beam tables: with a
    ``[coupling]`` table the weights are port waves, evaluated with the ports' S (realized
    gain, accepted power) and, when the model gives it, the port-to-current map T (the
    pattern of the coupled currents).

    Raises
    ------
    DesignError
        ``[coupling] patterns`` (tabulated embedded patterns): a beam table cannot yet
        evaluate a pattern that differs from element to element, and would report the
        isolated element's figures.
    """
    eff = design.options.radiation_efficiency
    spec, c = _table_coupling(design) if coupled is None else coupled
    if spec is None:
        return BeamEvaluator(design.array, efficiency=eff)
    if c.patterns is not None:
        raise DesignError("coupling.patterns", "beam tables do not evaluate tabulated "
                          "embedded patterns (each element's own pattern) yet; their figures "
                          "would be the isolated element's. Analyse those beams with "
                          "`steradian analyze`, or build the table without [coupling]",
                          None if design.source is None else str(design.source))
    return BeamEvaluator(design.array, efficiency=eff, scattering=c.S, ports=c.currents)


def requirements_of_design(design) -> dict:
    """The design's ``[requirements]`` as ``{key: limit}`` (empty when it has none).

    Raises
    ------
    DesignError
        An unknown key (with the closest valid one), a wrong type or an out-of-range
        limit (:func:`steradian.requirements.requirements_from_table`).
    """
    src = None if design.source is None else str(design.source)
    return requirements_from_table(design.sections.get("requirements"), src)


def analysis_verdicts(design, summary: dict, reqs: dict | None = None) -> list:
    """Verdicts of the design's ``[requirements]`` on an analysis summary of it
    (:func:`steradian.requirements.judge_analysis`); ``reqs`` defaults to
    :func:`requirements_of_design`."""
    reqs = requirements_of_design(design) if reqs is None else reqs
    return judge_analysis(reqs, summary, design.array)


def beam_verdicts(design, metrics, reqs: dict | None = None) -> list:
    """Verdicts of the design's ``[requirements]`` over every beam of a table
    (``metrics``: the :class:`~steradian.beamtable.BeamMetrics` of a build or of a verified
    file; :func:`steradian.requirements.judge_beams`); ``reqs`` defaults to
    :func:`requirements_of_design`."""
    reqs = requirements_of_design(design) if reqs is None else reqs
    return judge_beams(reqs, metrics, design.array)


def design_with_weights(design, path):
    """``design`` with the weights CSV ``path`` in place of its taper (``--weights FILE``).

    The file's positions must match the geometry, and a file whose weights already hold the
    steering phases (``steering_included = yes``) is refused when the design has
    ``[steering]`` (:func:`steradian.io.design.weights_file_taper`).

    Raises
    ------
    SteradianError
        Naming the file, for either refusal; FileFormatError for a file that cannot be read.
    """
    path = Path(path)
    arr = design.array
    try:
        w, steered = weights_file_taper(path, arr.geometry, arr.wavelength, arr.steering)
    except SteradianError as exc:
        if type(exc) is not SteradianError:
            raise
        raise SteradianError(f"weights file {path}: {exc}") from None
    return replace(design, array=arr.with_taper(w), taper_file=path.resolve(),
                   taper_steered=steered)


# --------------------------------------------------------------------------------------------
# Pattern export
# --------------------------------------------------------------------------------------------
def figure_title(design, frequency: float | None = None, swept=()) -> str:
    """The first title line of a design's figures (name, frequency, scan, taper; as
    :func:`steradian.plots.design_caption`), from the design alone; the parts set by the
    design keys ``swept`` (a study's axes) are shown as swept."""
    from .plots import design_caption

    st = design.array.steering
    return design_caption(design, {
        "frequency_hz": design.array.frequency if frequency is None else frequency,
        "steering": None if st is None else {"theta_deg": st.theta_deg,
                                             "phi_deg": st.phi_deg, "mode": st.mode},
        "swept": tuple(swept)})


def export_patterns(array, *, cuts_path=None, uv_path=None, png_path=None, uv_png_path=None,
                    uv_points: int = 201, span_deg: float = 90.0,
                    frequency: float | None = None, meta: dict | None = None,
                    title: str | None = None, metrics: dict | None = None,
                    beam_kind: str = "sum") -> dict:
    """Compute the principal cuts and/or the u-v map of ``array`` and write the files asked.

    Parameters
    ----------
    array : Array
    cuts_path, uv_path : path-like, optional
        CSV outputs (cuts of :func:`steradian.metrics.principal_cuts`; :func:`uv_map`).
    png_path, uv_png_path : path-like, optional
        Figure outputs (PNG, SVG or PDF by suffix): the cuts over the whole great circle
        (:func:`steradian.plots.cuts_figure`: half-power edges, worst sidelobe wherever it
        is) and the u-v map (:func:`steradian.plots.plot_uv`), both titled with the
        analysis peak.
    uv_points : int
        u-v grid points per axis.
    span_deg : float
        Half-span of each cut about the beam axis (deg, at most 180).
    frequency : float, optional
        Evaluation frequency (Hz; refused beyond
        :data:`~steradian.array.FREQUENCY_RATIO_LIMIT` times the design frequency).
    meta : dict, optional
        ``# key = value`` lines for the CSV headers.
    title : str, optional
        Plot title prefix.
    metrics : dict, optional
        ``PatternMetrics.to_dict()`` of this array at ``frequency`` (e.g. the ``metrics``
        block of :func:`analyze_design`) for the plot annotations; computed with
        :func:`steradian.metrics.pattern_metrics` when omitted and ``png_path`` is given.
    beam_kind : str
        The beam's kind for those metrics (a design's ``[analysis] beam_kind``).

    Returns
    -------
    dict
        ``peak_directivity_dbi``, ``peak_theta_deg``, ``peak_phi_deg`` and ``files`` (paths
        written, in order).
    """
    from .metrics import principal_cuts
    from .radiation import peak_directivity, radiated_power

    if frequency is not None:
        frequency = check_frequency(frequency, array.frequency)
    power = radiated_power(array, frequency=frequency)
    pk = peak_directivity(array, frequency=frequency, power=power)
    m = {"frequency_hz": array.frequency if frequency is None else frequency, **(meta or {})}
    written = []
    if cuts_path is not None or png_path is not None:
        cuts = principal_cuts(array, frequency=frequency, peak=pk, span_deg=span_deg)
        if cuts_path is not None:
            write_cuts(cuts_path, cuts, m)
            written.append(str(cuts_path))
        if png_path is not None:
            _plot_cuts(array, cuts, png_path, frequency, pk, title, metrics, beam_kind)
            written.append(str(png_path))
    if uv_path is not None or uv_png_path is not None:
        uvm = uv_map(array, uv_points, frequency=frequency, power=power)
        if uv_path is not None:
            write_uv(uv_path, uvm, m)
            written.append(str(uv_path))
        if uv_png_path is not None:
            from .plots import save_figure, uv_figure

            if metrics is None:
                from .metrics import pattern_metrics

                metrics = pattern_metrics(array, frequency=frequency, peak=pk,
                                          beam_kind=beam_kind).to_dict()
            save_figure(uv_figure(uvm, peak_dbi=pk.directivity_dbi, metrics=metrics,
                                  caption=title), uv_png_path)
            written.append(str(uv_png_path))
    return {"peak_directivity_dbi": pk.directivity_dbi, "peak_theta_deg": pk.theta_deg,
            "peak_phi_deg": pk.phi_deg, "files": written}


def _plot_cuts(array, cuts, path, frequency, pk, title, metrics, beam_kind="sum") -> None:
    """The cut figure: the whole great circle whatever the CSV span (so the worst sidelobe
    of a scanned beam is on it), the half-power edges and the worst sidelobe of the
    metrics, levels relative to the analysis peak."""
    from .plots import cuts_figure, full_cuts, save_figure

    if metrics is None:
        from .metrics import pattern_metrics

        metrics = pattern_metrics(array, frequency=frequency, peak=pk,
                                  beam_kind=beam_kind).to_dict()
    cuts = full_cuts(array, pk, metrics, frequency)
    save_figure(cuts_figure(cuts, metrics=metrics, peak_dbi=pk.directivity_dbi,
                            caption=title), path)


# --------------------------------------------------------------------------------------------
# Synthesis
# --------------------------------------------------------------------------------------------
def design_for_synthesis(path, output=None, steered: bool = False):
    """Read the design ``synth`` works on and decide the weights file it writes.

    When the design's ``[taper] file`` is the output (``output`` omitted, or naming the same
    file), that file is synth's product, not its input: it is not read (it need not exist)
    and the synthesis starts from the uniform taper, so running synth twice gives the same
    weights. A ``[taper] file`` naming another file is an input (the amplitudes of
    ``phase_only``, the taper ``thin`` switches) and must exist.

    Returns
    -------
    (Design, Path)
        The design and the weights file to write.

    Raises
    ------
    SteradianError
        No output given and no ``[taper] file``; or ``steered`` excitations would be written
        into the design's own taper file while it has ``[steering]`` (steered twice).
    """
    design = load_design(path, read_taper_file=False)
    own = design.taper_file
    if output is None:
        if own is None:
            raise SteradianError("no weights file to write: give --output FILE or name it in "
                                 "the design's [taper] file")
        output = own
    output = Path(output)
    if own is not None and output.resolve() != own:
        design = load_design(path)
    elif own is not None and steered and design.array.steering is not None:
        raise DesignError("taper.file", f"--steered would write steered excitations into "
                          f"{own.name}, which this design's [steering] would steer again; "
                          "drop --steered (the taper is written and [steering] steers it)",
                          None if design.source is None else str(design.source))
    return design, output


def synthesize_design(design, **overrides):
    """Run the synthesis the design's ``[synthesis]`` table asks for.

    ``overrides`` (keyword arguments of :func:`steradian.optimize.synthesize`: ``method``,
    ``psl_db``, ``nulls``, ``scan`` ...) replace the table's values; ``None`` values are left
    to the table. ``scan = "beams"`` (table or override) is the design's ``[beams]`` set:
    one amplitude taper for every beam of the table
    (:func:`steradian.optimize.max_worst_directivity`). Returns a
    :class:`~steradian.optimize.SynthesisResult`.

    Raises
    ------
    DesignError
        ``scan = "beams"`` and the design has no ``[beams]`` table.
    """
    from .optimize import synthesize

    spec = design.sections.get("synthesis")
    scan = overrides.get("scan")
    if scan is None and isinstance(spec, dict):
        scan = spec.get("scan")
    if isinstance(scan, str) and scan == "beams":
        d = _design_directions(design)
        if d is None:
            raise DesignError("synthesis.scan", 'scan = "beams" needs the design\'s [beams] '
                              "table (the beam directions); add it or list the directions",
                              None if design.source is None else str(design.source))
        overrides["scan"] = d
    return synthesize(design.array, spec, **overrides)


def write_synthesis_weights(res, path, name: str, steered: bool = False) -> bool:
    """Write a synthesis result's weights CSV; returns whether the steering phases are in it.

    Without ``steered`` the taper is written, which the design's ``[steering]`` then steers;
    with it (and a steered array), the steered excitations. The file's
    ``steering_included`` line says which (``no`` for an unsteered array: its weights hold no
    steering phases), so a design that would steer them again refuses the file. When the
    synthesis had a sidelobe target, ``psl_target_db`` records it (a beam table built from
    the taper reports every beam above it); a scan-volume taper also records its ``scan``
    directions.
    """
    arr = res.array
    include = bool(steered) and arr.steering is not None
    w = res.weights if include or arr.steering is None else arr.taper
    meta = {"design": name, "method": res.method,
            "directivity_dbi": f"{res.directivity_dbi:.6f}",
            "psl_db": "" if res.psl_db is None else f"{res.psl_db:.6f}",
            "steering_included": "yes" if include else "no"}
    if res.limit_db is not None:
        meta["psl_target_db"] = f"{res.limit_db:.6f}"
    if arr.steering is not None:
        meta["steering"] = f"theta {arr.steering.theta_deg:g} deg, phi {arr.steering.phi_deg:g} deg"
    if res.beams:
        meta["scan"] = "; ".join(f"theta {b['theta_deg']:g} deg, phi {b['phi_deg']:g} deg"
                                 for b in res.beams)
    write_weights(path, w, positions=arr.positions, meta=meta)
    return include


def tradeoff_of_design(design, **overrides):
    """Trade curve of the design from ``[synthesis]`` and ``[synthesis.tradeoff]``
    (:func:`steradian.optimize.tradeoff_from_spec`; ``overrides`` replace table values)."""
    from .optimize import tradeoff_from_spec

    return tradeoff_from_spec(design.array, design.sections.get("synthesis"), **overrides)


# --------------------------------------------------------------------------------------------
# Beam tables
# --------------------------------------------------------------------------------------------
def channel_of_design(design) -> ChannelModel | None:
    """The design's ``[channel]`` as a :class:`ChannelModel` (None when it has none)."""
    raw = design.sections.get("channel")
    if raw is None:
        return None
    return channel_from_table(raw, design.array.n, source=design.source,
                              base_dir=design.base_dir, read_file=read_calibration)


def design_metadata(design) -> dict:
    """What a beam table records of its design: the design block and the raw ``[taper]``,
    ``[synthesis]``, ``[beams]`` and ``[coupling]`` tables of the design file (when it can be
    read)."""
    meta = {"design": design_block(design)}
    if design.source is not None:
        try:
            doc = read_toml(design.source)
        except (OSError, ValueError):
            doc = {}
        for key in ("taper", "synthesis", "beams", "coupling"):
            if key in doc:
                meta[f"{key}_spec"] = doc[key]
    return meta


def check_taper_steerable(design) -> None:
    """Refuse a design whose taper already holds steering phases (its weights file says
    ``steering_included = yes``) where a beam table steers the taper to every beam.

    Raises
    ------
    SteradianError
        Naming the weights file: the excitations would be steered twice.
    """
    if design.taper_steered:
        raise SteradianError(f"{design.taper_file}: says steering_included = yes: a beam "
                             "table steers the taper to every beam and would steer these "
                             "excitations twice; use the taper (synth without --steered)")


def beam_table_from_design(design, *, weights=None,
                           evaluator: BeamEvaluator | None = None) -> BeamBuild:
    """Build the beam table a design asks for (its ``[channel]`` and ``[beams]`` tables).

    The ideal weights are the design's taper (``[taper]``, which may come from synthesis)
    steered to each beam (a taper whose file says ``steering_included = yes`` is refused:
    it would be steered twice), unless ``weights`` is given (see
    :func:`steradian.beamtable.steered_weights`). The gain uses
    ``analysis.radiation_efficiency``.

    Raises
    ------
    DesignError
        When ``[channel]`` or ``[beams]`` is missing or malformed (naming the key).
    """
    ch = channel_of_design(design)
    src = None if design.source is None else str(design.source)
    coupled = _table_coupling(design) if weights is None or evaluator is None else None
    weights = design_beam_weights(design, coupled) if weights is None else weights
    if weights is None:
        check_taper_steerable(design)
    if ch is None:
        raise DesignError("channel", "the design has no [channel] table; a beam table needs "
                          "the beamformer channel (phase_bits or phase_step_deg, ...)", src)
    d = _design_directions(design)
    if d is None:
        raise DesignError("beams", "the design has no [beams] table; give the steering grid "
                          "(grid = 'theta_phi', 'az_el' or 'list')", src)
    eff = design.options.radiation_efficiency
    evaluator = evaluator or beam_evaluator_of_design(design, coupled)
    build = build_beam_table(design.array, ch, d, weights=weights, efficiency=eff,
                             evaluator=evaluator, metadata=design_metadata(design),
                             element_power_w=design.options.element_power_w,
                             kinds=_design_kinds(design))
    return build if weights is not None else _against_synthesis_target(design, build)


PSL_TARGET_TOL_DB = 0.1
"""A beam's peak sidelobe this far (dB) above its taper's synthesis target is reported: the
dense re-checks of synthesis and beam table differ by far less (both refine off-grid with
the one lobe search), so more is the pattern, not the measurement."""


def _psl_target(design) -> float | None:
    """The PSL target the design's taper file records (``psl_target_db``), if any."""
    from .io.weights_csv import read_weights_table

    if design.taper_file is None:
        return None
    try:
        raw = read_weights_table(design.taper_file, design.array.n).meta.get("psl_target_db")
        return None if raw in (None, "") else float(raw)
    except (OSError, ValueError):
        return None


def _against_synthesis_target(design, build: BeamBuild) -> BeamBuild:
    """Compare every beam's peak sidelobe with the synthesis target of the design's taper.

    A taper synthesised for one direction and steered elsewhere can lose its sidelobe level
    (issue 9 item 6: a -30 dB taper synthesised at 45 deg, about -19 dB at broadside). The
    table's metadata gets ``synthesis_target``: the target, the beams whose ideal (steered,
    unquantized) taper is above it and those whose quantized beam is. Beams of the first
    kind make a note and a warning naming the worst; quantization alone is left to the
    quantization-lobe figures and ``[requirements]`` (a few tenths of a dB over a synthesis
    target is common practice for a quantized table).
    """
    import warnings

    target = _psl_target(design)
    if target is None or build.metrics is None:
        return build
    psl = np.asarray(build.metrics.psl_db, float)
    ideal = np.asarray(build.metrics.ideal_psl_db, float)
    over = np.flatnonzero(ideal > target + PSL_TARGET_TOL_DB)
    build.table.metadata["synthesis_target"] = {
        "psl_target_db": target, "taper_file": str(design.taper_file),
        "beams_over_target": over.tolist(),
        "quantized_beams_over_target": np.flatnonzero(
            psl > target + PSL_TARGET_TOL_DB).tolist()}
    if len(over) == 0:
        return build
    i = int(over[np.argmax(ideal[over])])
    t, p = build.metrics.theta_deg[i], build.metrics.phi_deg[i]
    note = (f"{len(over)} of {len(psl)} beams exceed the synthesis target PSL {target:.2f} dB "
            f"of {Path(design.taper_file).name} before quantization: worst beam {i} (theta "
            f"{t:g}, phi {p:g} deg) {ideal[i]:.2f} dB ({psl[i]:.2f} dB quantized); the taper "
            "was synthesised for other directions: synthesise it over the table's scan set "
            '([synthesis] scan = "beams")')
    warnings.warn(note, UserWarning, stacklevel=3)
    notes = tuple(build.notes) + (note,)
    build.table.metadata["notes"] = list(notes)
    return replace(build, notes=notes)


def beam_directions_of_design(design) -> np.ndarray | None:
    """The (theta, phi) beam directions in degrees, shape (B, 2), of the design's
    ``[beams]`` (None when it has none)."""
    return _design_directions(design)


def _design_directions(design) -> np.ndarray | None:
    """The beam directions of the design's ``[beams]`` (None when it has none)."""
    raw = design.sections.get("beams")
    if raw is None:
        return None
    src = None if design.source is None else str(design.source)
    return beams_from_table(raw, source=src, base_dir=design.base_dir,
                            read_file=read_directions)


def _design_kinds(design) -> tuple:
    """The beam kinds per direction of the design's ``[beams]`` (``kinds``; default sum)."""
    raw = design.sections.get("beams")
    if raw is None:
        return ("sum",)
    return beam_kinds_from_table(raw, source=None if design.source is None
                                 else str(design.source))


def verify_weight_file(design, path, fmt: str | None = None, *, weights=None,
                       evaluator: BeamEvaluator | None = None) -> tuple[BeamTable, Verification]:
    """Read any weight file, compare it with the table ``design`` gives and re-evaluate it.

    The design's table is rebuilt as ``steradian beams`` builds it (its ``[channel]``,
    ``[beams]`` and taper, or ``weights``) and every beam's direction and every element's
    state compared with the file (:func:`steradian.beamtable.verify_beam_table`).

    What cannot be rebuilt is not compared, and a note says so:

    - without ``[channel]`` the design gives no states: the file's own states are evaluated
      as they are (no calibration), the states are not compared;
    - without ``[beams]`` the design gives no directions: the file's directions are taken as
      commanded (states are still compared beam by beam when there is a ``[channel]``).

    Returns
    -------
    (BeamTable, Verification)
    """
    coupled = _table_coupling(design) if weights is None or evaluator is None else None
    weights = design_beam_weights(design, coupled) if weights is None else weights
    if weights is None:
        check_taper_steerable(design)
    table = read_weight_file(path, fmt)
    own = channel_of_design(design)
    ch = own if own is not None else ChannelModel(table.states)
    notes = []
    if own is None:
        notes.append("the design has no [channel] table: the element states are NOT compared "
                     "with the design (it gives none); the file's states are evaluated as "
                     "they are, without calibration")
    d = _design_directions(design)
    if d is None:
        notes.append("the design has no [beams] table: the number and directions of the "
                     "beams are NOT compared; the file's directions are taken as commanded")
    eff = design.options.radiation_efficiency
    evaluator = evaluator or beam_evaluator_of_design(design, coupled)
    v = verify_beam_table(design.array, ch, table, weights=weights, efficiency=eff,
                          element_power_w=design.options.element_power_w,
                          evaluator=evaluator, directions=d,
                          compare_states=own is not None, kinds=_design_kinds(design))
    mism, notes = _manifest_check(Path(path), v.mismatches, notes)
    compared = dict(v.compared, total=v.compared.get("total", len(v.mismatches))
                    + len(mism) - len(v.mismatches))
    return table, replace(v, notes=notes + list(v.notes), mismatches=mism, compared=compared)


def _manifest_check(path: Path, mismatches: tuple, notes: list) -> tuple[tuple, list]:
    """The file's entry in the manifest written beside it (``<prefix>.manifest.json``), if
    any: a file that is not the one its set recorded is a difference (put first); problems
    of the other files of the set are notes."""
    man = manifest_path(path.with_suffix(""))
    if not man.is_file():
        return mismatches, notes
    problems = check_manifest(man)
    mine = [p for p in problems if Path(p.split(": ", 1)[0]).name == path.name]
    others = [p for p in problems if p not in mine]
    notes = notes + [f"file set {man.name}: {p}" for p in others]
    return tuple(f"file set {man.name}: {p}" for p in mine) + tuple(mismatches), notes
