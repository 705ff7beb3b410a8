"""``steradian tradeoff``: maximum directivity against peak sidelobe level for a design."""

from __future__ import annotations

from pathlib import Path

import click

from ._render import json_option


@click.command("tradeoff")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@click.option("-o", "--output", type=click.Path(path_type=Path),
              help="PNG figure of the curve.")
@click.option("--csv", "csv_path", type=click.Path(path_type=Path), help="CSV table.")
@click.option("--start-db", type=float, help="Loosest sidelobe limit (default -15 dB).")
@click.option("--stop-db", type=float, help="Tightest sidelobe limit (default -45 dB).")
@click.option("--points", type=click.IntRange(min=2), help="Number of levels (default 20).")
@click.option("--weights", "weights_kind", type=click.Choice(["complex", "amplitude"]))
@json_option
def tradeoff(design_file, output, csv_path, start_db, stop_db, points, weights_kind,
             as_json):
    """Trade curve of a TOML design: the maximum directivity at each peak sidelobe limit,
    with the knee marked, as a table (or --json), a PNG and a CSV.

    Limits and levels come from [synthesis] and [synthesis.tradeoff]; options override.
    """
    from ..io.design import load_design
    from ..workflows import tradeoff_of_design
    from ._render import echo_written, emit_json

    design = load_design(design_file, read_taper_file=False)  # trade curves ignore the taper
    curve = tradeoff_of_design(design, start_db=start_db, stop_db=stop_db, points=points,
                               weights=weights_kind)
    if output is not None:
        from ..plots import plot_trade_curve

        plot_trade_curve(curve, output,
                         title=f"{design.name}: directivity against sidelobe level")
    if csv_path is not None:
        from ..io.trade_curve import write_trade_curve_csv

        write_trade_curve_csv(csv_path, curve)
    if as_json:
        emit_json({"design": design.name} | curve.to_dict()
                  | {"figure": None if output is None else str(output),
                     "csv": None if csv_path is None else str(csv_path)})
    else:
        click.echo(curve.table())
        echo_written([p for p in (output, csv_path) if p is not None], "written")
