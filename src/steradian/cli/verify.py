"""``steradian verify``: re-evaluate the beams of a weight file against its design."""

from __future__ import annotations

from pathlib import Path

import click

from ..io.formats import WEIGHT_FORMATS
from ._render import json_option

_DB_METRICS = ("directivity_dbi", "gain_dbi", "psl_db", "qlobe_db", "ideal_directivity_dbi",
               "ideal_psl_db", "loss_db")


@click.command("verify")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@click.argument("weight_file", metavar="WEIGHTS", type=click.Path(path_type=Path))
@click.option("--format", "fmt", type=click.Choice(tuple(WEIGHT_FORMATS)),
              help="Weight-file format (default: from the suffix).")
@click.option("--tolerance-db", type=click.FloatRange(0, None), default=0.01,
              show_default=True,
              help="Largest accepted difference (dB) from the metrics stored in the file.")
@json_option
def verify(design_file, weight_file, fmt, tolerance_db, as_json):
    """Re-evaluate every beam of WEIGHTS (CSV, JSON, binary or C header) against DESIGN.toml.

    Reports the metrics of each beam as the hardware would radiate it. When the file stores
    predicted metrics (CSV, JSON, C header) they are compared; the exit status is 1 when one
    differs by more than --tolerance-db, 2 when the file does not fit the design.
    """
    from ..io.design import load_design
    from ..workflows import verify_weight_file
    from ._render import beam_summary_rows, emit_json, table

    design = load_design(design_file)
    tab, ver = verify_weight_file(design, weight_file, fmt)
    worst = {k: v for k, v in ver.differences.items() if k in _DB_METRICS}
    ok = all(v <= tolerance_db for v in worst.values())
    if as_json:
        out = {"design": design.name, "file": str(weight_file), "encoding": tab.encoding,
               "ok": ok, "tolerance_db": tolerance_db}
        out.update(ver.to_dict())
        emit_json(out)
    else:
        rows = [("design", design.name), ("file", f"{weight_file} ({tab.encoding})"),
                ("channel", tab.states.describe())] + beam_summary_rows(ver.metrics.summary())
        if ver.differences:
            big = max(worst.values(), default=0.0)
            rows.append(("vs file's metrics", f"largest level difference {big:.3g} dB "
                         f"({'within' if ok else 'OVER'} {tolerance_db:g} dB)"))
        else:
            rows.append(("vs file's metrics", "the file stores none"))
        click.echo(table(rows, "verification"))
        for n in ver.notes:
            click.echo(f"note: {n}")
    if not ok:
        click.get_current_context().exit(1)
