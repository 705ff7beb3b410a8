"""``steradian demo``: analyse the bundled demo design and plot its principal cuts."""

from __future__ import annotations

import json
from pathlib import Path

import click


@click.command("demo")
@click.option("--out", "out_dir", type=click.Path(file_okay=False, path_type=Path),
              default=Path("out"), show_default=True, help="Folder for the PNG and JSON files.")
def demo(out_dir):
    """Analyse the bundled demo design (a 16 x 16 panel steered to 30 deg).

    Prints the summary table and writes OUT/<name>_cuts.png, OUT/<name>_uv.png and
    OUT/<name>_summary.json.
    """
    from ..io._atomic import write_text
    from ..io.design import demo_design
    from ..io.pattern_csv import export_patterns
    from ._common import to_jsonable
    from .analyze import format_summary

    design = demo_design()
    summary = design.analyze()
    click.echo(format_summary(summary))
    files = export_patterns(design.array, png_path=out_dir / f"{design.name}_cuts.png",
                            uv_png_path=out_dir / f"{design.name}_uv.png",
                            title=design.name, metrics=summary.get("metrics"))["files"]
    summary_path = out_dir / f"{design.name}_summary.json"
    write_text(summary_path, json.dumps(to_jsonable(summary), indent=2) + "\n")
    for p in [*files, str(summary_path)]:
        click.echo(f"wrote {p}")
