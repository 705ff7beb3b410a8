"""Part of :mod:`steradian.beamtable` (see the package docstring)."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

from ..errors import DesignError
from ..quantize import ChannelModel
from ._build import (
    BeamBuild,
    Verification,
    WeightSource,
    build_beam_table,
    verify_beam_table,
)
from ._evaluate import BeamEvaluator
from ._files import read_weight_file
from ._grids import beams_from_table
from ._table import BeamTable


# ---------------------------------------------------------------------------------------
# From a design file
# ---------------------------------------------------------------------------------------
def channel_of_design(design) -> ChannelModel | None:
    """The design's ``[channel]`` as a :class:`ChannelModel` (None when it has none)."""
    from ..quantize import channel_from_table

    raw = design.sections.get("channel")
    if raw is None:
        return None
    return channel_from_table(raw, design.array.n, source=design.source,
                              base_dir=design.base_dir)


def _design_metadata(design) -> dict:
    meta = {"design": {"name": design.name, "description": design.description,
                       "source": None if design.source is None else str(design.source)}}
    if design.source is not None:
        import tomllib

        try:
            doc = tomllib.loads(Path(design.source).read_text(encoding="utf-8"))
        except (OSError, ValueError):
            doc = {}
        for key in ("taper", "synthesis", "beams"):
            if key in doc:
                meta[f"{key}_spec"] = doc[key]
    return meta


def beam_table_from_design(design, *, weights: WeightSource = None,
                           evaluator: BeamEvaluator | None = None) -> BeamBuild:
    """Build the beam table a design asks for (its ``[channel]`` and ``[beams]`` tables).

    The ideal weights are the design's taper (``[taper]``, which may come from synthesis)
    steered to each beam, unless ``weights`` is given (see :func:`steered_weights`). The
    gain uses ``analysis.radiation_efficiency``.

    Raises
    ------
    DesignError
        When ``[channel]`` or ``[beams]`` is missing or malformed (naming the key).
    """
    ch = channel_of_design(design)
    src = None if design.source is None else str(design.source)
    if ch is None:
        raise DesignError("channel", "the design has no [channel] table; a beam table needs "
                          "the beamformer channel (phase_bits or phase_step_deg, ...)", src)
    if "beams" not in design.sections:
        raise DesignError("beams", "the design has no [beams] table; give the steering grid "
                          "(grid = 'theta_phi', 'az_el' or 'list')", src)
    d = beams_from_table(design.sections["beams"], source=src, base_dir=design.base_dir)
    eff = design.options.radiation_efficiency
    return build_beam_table(design.array, ch, d, weights=weights, efficiency=eff,
                            evaluator=evaluator, metadata=_design_metadata(design))


def verify_weight_file(design, path, fmt: str | None = None, *,
                       weights: WeightSource = None,
                       evaluator: BeamEvaluator | None = None) -> tuple[BeamTable, Verification]:
    """Read any weight file and re-evaluate its beams against ``design``.

    Without a ``[channel]`` table in the design the file's own states are used with no
    calibration (a note says so).

    Returns
    -------
    (BeamTable, Verification)
    """
    table = read_weight_file(path, fmt)
    ch = channel_of_design(design)
    notes = []
    if ch is None:
        ch = ChannelModel(table.states)
        notes.append("the design has no [channel] table: the file's states are used, "
                     "without calibration")
    eff = design.options.radiation_efficiency
    v = verify_beam_table(design.array, ch, table, weights=weights, efficiency=eff,
                          evaluator=evaluator)
    return table, replace(v, notes=notes + list(v.notes))
