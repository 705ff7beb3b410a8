"""``steradian beams``: quantized beam table of a design, written as firmware weight files."""

from __future__ import annotations

from pathlib import Path

import click

from ..io.formats import WEIGHT_FORMATS
from ._render import json_option

FORMAT_NAMES = tuple(WEIGHT_FORMATS)


@click.command("beams")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@click.option("-o", "--output", "prefix", metavar="PREFIX", type=click.Path(path_type=Path),
              help="Output path without suffix (default: out/<design name>-beams); with a "
                   "format's suffix (out/tile.bin), that one file.")
@click.option("-f", "--format", "formats", multiple=True, type=click.Choice(FORMAT_NAMES),
              help="Format to write (repeatable; default all: csv, json, bin, h).")
@click.option("--bin-encoding", type=click.Choice(("codes", "iq")), default="codes",
              show_default=True,
              help="Binary state encoding: phase/amplitude codes, or I/Q in Q1.15.")
@click.option("--c-prefix", default="strd", show_default=True,
              help="Identifier prefix of the C header's arrays and macros.")
@click.option("--weights", "weights_file", type=click.Path(path_type=Path), metavar="FILE",
              help="Weights CSV (e.g. written by synth) in place of the design's [taper].")
@click.option("--worst", type=click.IntRange(min=1), metavar="N",
              help="Also list the N worst beams of each metric.")
@json_option
def beams(design_file, prefix, formats, bin_encoding, c_prefix, weights_file, worst, as_json):
    """Build the quantized beam table of DESIGN.toml and write its weight files.

    The design's [channel] table describes the beamformer channel and [beams] the steering
    grid. Every beam is quantized and re-evaluated: peak directivity and gain, pointing
    error, peak sidelobe, quantization-lobe level, loss against the ideal beam, drive loss,
    radiated power and (with analysis.element_power_w) EIRP. With a [requirements] table, a
    PASS/FAIL line per requirement follows, judged on the worst beam. Exit status: 0, or 1
    when a requirement FAILs (the files are still written, for inspection), 2 for bad input.
    """
    from ..io.design import load_design
    from ..io.formats import write_beam_files
    from ..requirements import verdicts_dict
    from ..workflows import (
        beam_table_from_design,
        beam_verdicts,
        design_with_weights,
        requirements_of_design,
    )
    from ._render import (
        beam_summary_rows,
        echo_written,
        emit_json,
        requirement_lines,
        table,
        worst_beams,
    )

    design = load_design(design_file, read_taper_file=weights_file is None)
    if weights_file is not None:
        design = design_with_weights(design, weights_file)
    reqs = requirements_of_design(design)
    build = beam_table_from_design(design)
    if prefix is None:
        prefix = Path("out") / f"{design.name}-beams"
    files = write_beam_files(build.table, prefix, formats or None,
                             bin_encoding=bin_encoding, c_prefix=c_prefix)
    summary = build.metrics.summary()
    verdicts = verdicts_dict(beam_verdicts(design, build.metrics, reqs)) if reqs else None
    if as_json:
        out = {"design": design.name, "channel": build.table.metadata["channel"],
               "files": {k: str(v) for k, v in files.items()}, "summary": summary,
               "notes": list(build.notes)}
        if "rf_exposure_caution" in build.table.metadata:
            out["rf_exposure_caution"] = build.table.metadata["rf_exposure_caution"]
        if verdicts is not None:
            out["requirements"] = verdicts
        emit_json({**out, "beams": build.metrics.rows()})
    else:
        rows = [("design", design.name), ("channel", build.table.states.describe()),
                ("elements", str(build.table.n_elements))] + beam_summary_rows(summary)
        click.echo(table(rows, "beam table"))
        for note in build.notes:
            click.echo(f"note: {note}")
        if worst:
            click.echo(worst_beams(build.metrics.rows(), worst))
        if verdicts is not None:
            click.echo("\n".join(["", *requirement_lines(verdicts)]))
        echo_written(files.values())
    if verdicts is not None and not verdicts["met"]:
        click.get_current_context().exit(1)
