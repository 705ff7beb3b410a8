"""``steradian sweep``: a design's metrics over one parameter or a grid of two."""

from __future__ import annotations

from pathlib import Path

import click

from ._render import json_option
from ._studies import run_options


@click.command("sweep")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@click.option("--vary", "vary", multiple=True, metavar="KEY=START:STOP:COUNT",
              help="A swept design key (KEY=V1,V2,... also; several keys joined by +); "
                   "give it once or twice; replaces the [sweep] axes.")
@click.option("--metrics", type=click.Choice(["full", "beam"]), default=None,
              help="full: every analysis metric per point; beam: directivity, PSL and "
                   "pointing, points sharing an array evaluated together.")
@click.option("--figure", "figure_path", type=click.Path(path_type=Path), metavar="FILE",
              help="Also draw the sweep curves (directivity, PSL, pointing against the "
                   "first axis; one line per value of a second) as PNG, SVG or PDF.")
@run_options
@json_option
def sweep(design_file, vary, metrics, figure_path, output, summary_path, workers, backend,
          scheduler, fresh, progress, as_json):
    """Sweep a TOML design over one numeric design key or a grid of two (spacing, count,
    scan angle, analysis frequency, taper level, element exponent...) and tabulate the
    analysis metrics of each point.

    Driven by the design's [sweep] table; options override it. Rows are appended to the
    result file as points finish; an interrupted run resumes where it stopped.
    """
    from ..studies import parse_axis
    from ..studyrun import sweep_of_file
    from ._render import echo_written, emit_json, write_json
    from ._studies import sweep_lines

    axes = [parse_axis(v) for v in vary]
    run, spec = sweep_of_file(design_file, axes=axes, metrics=metrics, output=output,
                              resume=not fresh, workers=workers, backend=backend,
                              scheduler=scheduler, progress=progress)
    summary = run.summary | {"output": str(run.output), "computed": run.computed}
    if summary_path is not None:
        write_json(summary_path, summary)
    if figure_path is not None:
        from ..io.design import load_design
        from ..plots import save_figure
        from ..report import sweep_result_figure
        from ..workflows import figure_title

        save_figure(sweep_result_figure(run.rows, [a.label for a in spec.axes],
                                        caption=figure_title(
                                            load_design(design_file),
                                            swept=[k for a in spec.axes for k in a.keys])),
                    figure_path)
        summary["figure"] = str(figure_path)
    if as_json:
        emit_json(summary | {"rows": run.rows})
        return
    click.echo(sweep_lines(run.rows, run.summary, [a.label for a in spec.axes]))
    click.echo(f"{run.computed} points computed now")
    echo_written([run.output] + ([summary_path] if summary_path else [])
                 + ([figure_path] if figure_path else []))
