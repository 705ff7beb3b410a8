"""``steradian report``: a self-contained HTML design report (and optionally its PDF)."""

from __future__ import annotations

from pathlib import Path

import click

from ._render import json_option


@click.command("report")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path),
              metavar="FILE.html", help="HTML file (default: <design name>_report.html).")
@click.option("--pdf", "pdf_path", type=click.Path(dir_okay=False, path_type=Path),
              metavar="FILE.pdf", help="Also print the page to PDF (needs chromium).")
@click.option("--frequency", type=float, metavar="HZ",
              help="Evaluate at this frequency in Hz (default: the design's).")
@click.option("--weights", "weights_file", type=click.Path(path_type=Path), metavar="FILE",
              help="Weights CSV (e.g. written by synth) in place of the design's [taper].")
@json_option
def report(design_file, output, pdf_path, frequency, weights_file, as_json):
    """Write a self-contained HTML report of a TOML design: the job and its requirements
    (PASS/FAIL with margin), the metrics (EIRP with the RF-exposure caution), figures,
    the design file, assumptions, conventions and references.

    The numbers are those of `steradian analyze --json`. Exit status: 0, or 1 when a
    requirement FAILs (the report is still written), 2 for bad input.
    """
    from ..io.design import load_design
    from ..report import print_pdf, write_report
    from ..workflows import design_with_weights
    from ._render import echo_written, emit_json

    design = load_design(design_file, read_taper_file=weights_file is None)
    if weights_file is not None:
        design = design_with_weights(design, weights_file)
    path = output or Path(f"{design.name}_report.html")
    rep = write_report(design, path, frequency=frequency)
    files = [path] + ([print_pdf(path, pdf_path)] if pdf_path is not None else [])
    if as_json:
        emit_json({"design": design.name, "files": [str(p) for p in files],
                   "requirements_met": rep.met})
    else:
        echo_written(files)
        if rep.met is not None:
            click.echo("requirements: " + ("all met" if rep.met else "a requirement FAILS"))
    if rep.met is False:
        click.get_current_context().exit(1)
