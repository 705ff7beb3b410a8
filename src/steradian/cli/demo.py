"""``steradian demo``: analyse the bundled demo design and plot its principal cuts."""

from __future__ import annotations

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
    from ..io.design import demo_design
    from ..workflows import analyze_design, export_patterns, figure_title
    from ._render import echo_written, format_summary, write_json

    out_dir.mkdir(parents=True, exist_ok=True)  # --out names a folder: created (README)
    design = demo_design()
    summary = analyze_design(design)
    click.echo(format_summary(summary))
    files = export_patterns(design.array, png_path=out_dir / f"{design.name}_cuts.png",
                            uv_png_path=out_dir / f"{design.name}_uv.png",
                            title=figure_title(design), metrics=summary.get("metrics"))["files"]
    summary_path = out_dir / f"{design.name}_summary.json"
    write_json(summary_path, summary)
    echo_written([*files, str(summary_path)])
