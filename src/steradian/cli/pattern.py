"""``steradian pattern``: export pattern cuts and u-v maps of a design to CSV and PNG."""

from __future__ import annotations

from pathlib import Path

import click

from ._render import json_option

_file = click.Path(dir_okay=False, path_type=Path)


@click.command("pattern")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@click.option("--cuts", "cuts_path", type=_file, metavar="FILE.csv",
              help="Write both principal cuts (directivity in dBi against angle) to this CSV.")
@click.option("--uv", "uv_path", type=_file, metavar="FILE.csv",
              help="Write the front-hemisphere u-v directivity map to this CSV.")
@click.option("--uv-points", type=click.IntRange(3, 2001), default=201, show_default=True,
              help="u-v grid points per axis.")
@click.option("--png", "png_path", type=_file, metavar="FILE.png",
              help="Plot the principal cuts over the whole circle, whatever --span (HPBW and "
                   "the worst sidelobe annotated; PNG, SVG or PDF by suffix).")
@click.option("--uv-png", "uv_png_path", type=_file, metavar="FILE.png",
              help="Plot the u-v directivity map.")
@click.option("--span", "span_deg", type=click.FloatRange(0, 180, min_open=True), default=90.0,
              show_default=True, help="Half-span of each cut about the beam axis (deg).")
@click.option("--frequency", type=float, metavar="HZ",
              help="Evaluate at this frequency in Hz (default: the design's).")
@json_option
def pattern(design_file, cuts_path, uv_path, uv_points, png_path, uv_png_path, span_deg,
            frequency, as_json):
    """Export pattern cuts and u-v grids of a TOML design to CSV (and PNG plots).

    At least one of --cuts, --uv, --png, --uv-png is needed.
    """
    if not any((cuts_path, uv_path, png_path, uv_png_path)):
        raise click.UsageError("give at least one output: --cuts, --uv, --png or --uv-png")
    from ..io.design import load_design
    from ..workflows import export_patterns, figure_title
    from ._render import echo_written, emit_json

    design = load_design(design_file)
    f = frequency if frequency is not None else design.options.frequency
    res = export_patterns(design.array, cuts_path=cuts_path, uv_path=uv_path,
                          png_path=png_path, uv_png_path=uv_png_path, uv_points=uv_points,
                          span_deg=span_deg, frequency=f, meta={"design": design.name},
                          title=figure_title(design, f), beam_kind=design.options.beam_kind)
    if as_json:
        emit_json(res)
    else:
        click.echo(f"peak {res['peak_directivity_dbi']:.3f} dBi at theta "
                   f"{res['peak_theta_deg']:z.3f} deg, phi {res['peak_phi_deg']:z.3f} deg")
        echo_written(res["files"])
