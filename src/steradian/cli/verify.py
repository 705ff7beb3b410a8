"""``steradian verify``: compare a weight file with its design's table, re-evaluate its beams."""

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
    """Compare WEIGHTS (CSV, JSON, binary or C header) with the table DESIGN.toml gives.

    The design's table is rebuilt (its [channel], [beams] and taper) and every beam's
    direction and every element's state compared with the file: codes exactly, Q1.15 I/Q
    within one unit of 2^-15 per component. Beam order counts; a missing, extra or repeated
    beam is a difference. The file's beams are re-evaluated as the hardware would radiate
    them and, when the file stores predicted metrics (CSV, JSON, C header), compared with
    them. Exit status: 0 when all agree, 1 on the first difference (printed in one line) or
    a metric off by more than --tolerance-db, 2 when the file does not fit the design or is
    malformed. Without [channel] the states cannot be compared, without [beams] the
    directions; a note says so. With a [requirements] table, a PASS/FAIL line per
    requirement follows, judged on the file's beams as re-evaluated; a FAIL exits 1 too.
    """
    from ..io.design import load_design
    from ..requirements import verdicts_dict
    from ..workflows import beam_verdicts, requirements_of_design, verify_weight_file
    from ._render import emit_json, requirement_lines, verification_lines

    design = load_design(design_file)
    reqs = requirements_of_design(design)
    tab, ver = verify_weight_file(design, weight_file, fmt)
    worst = {k: v for k, v in ver.differences.items() if k in _DB_METRICS}
    metrics_ok = all(v <= tolerance_db for v in worst.values())
    verdicts = verdicts_dict(beam_verdicts(design, ver.metrics, reqs)) if reqs else None
    ok = metrics_ok and ver.matches_design and (verdicts is None or verdicts["met"])
    if as_json:
        out = {"design": design.name, "file": str(weight_file), "encoding": tab.encoding,
               "ok": ok, "metrics_ok": metrics_ok, "tolerance_db": tolerance_db}
        out.update(ver.to_dict())
        if verdicts is not None:
            out["requirements"] = verdicts
        emit_json(out)
    else:
        for line in verification_lines(design.name, weight_file, tab, ver, worst,
                                       tolerance_db):
            click.echo(line)
        if verdicts is not None:
            click.echo("\n".join(["", *requirement_lines(verdicts)]))
    if not ok:
        click.get_current_context().exit(1)
