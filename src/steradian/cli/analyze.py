"""``steradian analyze``: directivity, gain, beamwidths and sidelobes of a TOML design."""

from __future__ import annotations

from pathlib import Path

import click

from ._render import json_option


@click.command("analyze")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@json_option
@click.option("--frequency", type=float, metavar="HZ",
              help="Evaluate at this frequency in Hz (default: analysis.frequency_hz or the "
                   "design frequency; refused beyond 100x from the design frequency).")
@click.option("--weights", "weights_file", type=click.Path(path_type=Path), metavar="FILE",
              help="Weights CSV (e.g. written by synth) in place of the design's [taper].")
def analyze(design_file, as_json, frequency, weights_file):
    """Analyse a TOML design: peak directivity and its direction, gain, realized gain,
    beamwidths, sidelobe levels and the integrator's error estimate.

    Prints a table, or with --json the full analysis dictionary. With a [requirements]
    table, a PASS/FAIL line per requirement follows (in --json: the "requirements" block).
    Exit status: 0, or 1 when a requirement FAILs, 2 for bad input.
    """
    from ..io.design import load_design
    from ..workflows import analyze_design, design_with_weights
    from ._render import emit_json, format_summary, requirement_lines

    design = load_design(design_file, read_taper_file=weights_file is None)
    if weights_file is not None:
        design = design_with_weights(design, weights_file)
    summary = analyze_design(design, frequency)
    reqs = summary.get("requirements")
    if as_json:
        emit_json(summary)
    else:
        click.echo(format_summary(summary))
        if reqs is not None:
            click.echo("\n".join(["", *requirement_lines(reqs)]))
    if reqs is not None and not reqs["met"]:
        click.get_current_context().exit(1)
