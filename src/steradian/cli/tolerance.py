"""``steradian tolerance``: Monte Carlo tolerance run of a design."""

from __future__ import annotations

from pathlib import Path

import click

from ._render import json_option
from ._studies import run_options


@click.command("tolerance")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@click.option("--trials", type=click.IntRange(min=1), help="Number of trials.")
@click.option("--seed", type=click.IntRange(min=0), help="Run seed (trial i replays from it).")
@click.option("--amplitude-db", type=float, help="Amplitude error, standard deviation in dB.")
@click.option("--phase-deg", type=float, help="Phase error, standard deviation in degrees.")
@click.option("--position-mm", type=float, help="Position error per axis, std in mm.")
@click.option("--failure-rate", type=float, help="Probability that an element has failed.")
@click.option("--failure-count", type=click.IntRange(min=0), help="Failed elements per trial.")
@click.option("--failure-mode", type=click.Choice(["off", "stuck"]), help="off or stuck phase.")
@click.option("--quantize/--no-quantize", default=None,
              help="Quantize the weights to the design's [channel] first.")
@click.option("--chunk", type=click.IntRange(min=1), help="Trials per task.")
@click.option("--replay", type=click.IntRange(min=0), metavar="TRIAL",
              help="Recompute one trial alone (e.g. the worst one) and show its metrics.")
@click.option("--figure", "figure_prefix", type=click.Path(path_type=Path), metavar="PREFIX",
              help="Also draw histograms: PREFIX_<metric>.png (or the suffix given: "
                   "out/tol.svg gives out/tol_<metric>.svg).")
@run_options
@json_option
def tolerance(design_file, trials, seed, amplitude_db, phase_deg, position_mm, failure_rate,
              failure_count, failure_mode, quantize, chunk, replay, figure_prefix, output,
              summary_path, workers, backend, scheduler, fresh, progress, as_json):
    """Monte Carlo tolerance run of a TOML design: random amplitude, phase and position
    errors, element failures and quantization; statistics of directivity loss, gain, peak
    and average sidelobe level and pointing error, with the worst trial and its seed.

    Driven by the design's [tolerance] table; options override it. Rows are appended to the
    result file as trials finish; an interrupted run resumes where it stopped.
    """
    from ..studyrun import replay_of_file, tolerance_of_file
    from ._render import echo_written, emit_json, num, table, write_json
    from ._studies import tolerance_rows

    overrides = {"trials": trials, "seed": seed, "amplitude_db": amplitude_db,
                 "phase_deg": phase_deg, "position_mm": position_mm,
                 "failure_rate": failure_rate, "failure_count": failure_count,
                 "failure_mode": failure_mode, "quantize": quantize, "chunk": chunk}
    if replay is not None:
        row = replay_of_file(design_file, replay, overrides=overrides)
        if as_json:
            emit_json(row)
        else:
            click.echo(table([(k, num(v)) for k, v in row.items()],
                             f"Trial {replay} of {Path(design_file).name}"))
        return
    run, _ = tolerance_of_file(design_file, output=output, resume=not fresh,
                               overrides=overrides, workers=workers, backend=backend,
                               scheduler=scheduler, progress=progress)
    summary = run.summary | {"output": str(run.output), "computed": run.computed}
    if summary_path is not None:
        write_json(summary_path, summary)
    figures = []
    if figure_prefix is not None:
        from ..io.design import load_design
        from ..plots import save_figure
        from ..report import TOLERANCE_COLUMNS, tolerance_result_figure
        from ..workflows import figure_title

        rows = run.rows
        cols = [c for c, _ in TOLERANCE_COLUMNS if any(r.get(c) is not None for r in rows)]
        suffix = figure_prefix.suffix or ".png"
        stem = figure_prefix.with_suffix("") if figure_prefix.suffix else figure_prefix
        for col, fig in zip(cols, tolerance_result_figure(
                rows, caption=figure_title(load_design(design_file))), strict=True):
            path = Path(f"{stem}_{col}{suffix}")
            save_figure(fig, path)
            figures.append(path)
        summary["figures"] = [str(p) for p in figures]
    if as_json:
        emit_json(summary)
        return
    click.echo(table(tolerance_rows(summary), f"Tolerance: {Path(design_file).name}"))
    click.echo(f"{run.computed} trials computed now")
    echo_written([run.output] + ([summary_path] if summary_path else []) + figures)
