"""``steradian figure``: draw one figure of a design (PNG, SVG or PDF by the file suffix)."""

from __future__ import annotations

from pathlib import Path

import click

from ._render import json_option

_KINDS = ("cuts", "polar", "uv", "theta-phi", "az-el", "3d", "layout", "coverage", "trade")


@click.command("figure")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@click.argument("kind", type=click.Choice(_KINDS))
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path),
              metavar="FILE", help="Figure file: .png, .svg or .pdf (default: "
                                   "<design name>_<kind>.png in the current folder).")
@click.option("--frequency", type=float, metavar="HZ",
              help="Evaluate at this frequency in Hz (default: the design's).")
@click.option("--beam", type=click.IntRange(min=0), metavar="N",
              help="layout: add a panel of beam N's phase codes (builds the beam table of "
                   "[channel] and [beams]).")
@json_option
def figure(design_file, kind, output, frequency, beam, as_json):
    """Draw one figure KIND of a TOML design.

    \b
    cuts       dB cuts over the whole circle; half-power width, worst sidelobe
    polar      polar cuts, dB relative to the peak
    uv         u-v map: visible circle, theta rings, grating lobes, lattice diagram
    theta-phi  directivity over theta and phi (whole sphere)
    az-el      directivity over azimuth and elevation (whole sphere)
    3d         3-D pattern view
    layout     elements coloured by amplitude and phase
    coverage   beam table ([channel], [beams]): gain, sidelobe, quantization lobe
    trade      trade curve from [synthesis]

    Every number printed on a figure is the analysis's (steradian analyze --json).
    """
    from ..io.design import load_design
    from ..plots import save_figure
    from ..report import design_figure
    from ..workflows import analyze_design
    from ._render import echo_written, emit_json

    design = load_design(design_file, read_taper_file=kind != "trade")
    summary = None if kind == "trade" else analyze_design(design, frequency)
    path = output or Path(f"{design.name}_{kind.replace('-', '_')}.png")
    build = None
    if beam is not None and kind == "layout":
        from ..workflows import beam_table_from_design

        build = beam_table_from_design(design)
    save_figure(design_figure(design, kind, summary, build=build, beam=beam or 0), path)
    if as_json:
        emit_json({"design": design.name, "kind": kind, "file": str(path)})
    else:
        echo_written([path])
