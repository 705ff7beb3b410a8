"""``steradian synth``: synthesise weights for a design and write a weights CSV."""

from __future__ import annotations

import math
from pathlib import Path

import click

from ._render import json_option

_PATHS = {"interior": "dense interior point (real-field program)",
          "first_order": "first-order ADMM (real-field program)",
          "conic": "conic interior point (clarabel)"}


def path_lines(res) -> list[str]:
    """The solve path, the certified bound and gap, and the time per stage."""
    if not res.path:
        return []
    out = [f"path              {_PATHS.get(res.path, res.path)}"]
    if res.bound_dbi is not None:
        gap = "" if res.gap_db is None else f"; gap {res.gap_db:.4f} dB to the weights found"
        out.append(f"certified bound   {res.bound_dbi:.4f} dBi for weights meeting the limits "
                   f"within the tolerance{gap}")
    if res.stages:
        out.append("time per stage    " + ", ".join(f"{k} {v:.2f} s"
                                                   for k, v in res.stages.items()))
    return out


def _nulls(ctx, param, values):
    out = []
    for v in values:
        parts = v.split(",")
        try:
            nums = [float(p) for p in parts]
        except ValueError:
            raise click.BadParameter(f"{v!r}: expected THETA,PHI[,DEPTH_DB] in degrees and dB",
                                     ctx, param) from None
        if len(nums) not in (2, 3) or not all(math.isfinite(x) for x in nums):
            raise click.BadParameter(f"{v!r}: expected THETA,PHI[,DEPTH_DB]", ctx, param)
        out.append(tuple(nums))
    return out or None


@click.command("synth")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@click.option("-o", "--output", type=click.Path(path_type=Path),
              help="Weights CSV to write (default: the design's [taper] file, which is then "
                   "synth's product, not its input).")
@click.option("--method", type=click.Choice(["max_directivity", "min_sidelobe", "phase_only",
                                             "thin"]),
              help="Method (default: synthesis.method, else max_directivity).")
@click.option("--psl-db", type=float, help="Peak sidelobe limit, negative dB.")
@click.option("--loss-db", type=float, help="Directivity loss budget for min_sidelobe (dB).")
@click.option("--mainlobe", type=float,
              help="Main-lobe zone half-width in direction cosines.")
@click.option("--weights", "weights_kind", type=click.Choice(["complex", "amplitude"]),
              help="Free complex weights or an amplitude-only taper.")
@click.option("--symmetry", type=click.Choice(["auto", "none", "centro", "quadrant"]))
@click.option("--dynamic-range-db", type=float, help="Largest/smallest weight magnitude, dB.")
@click.option("--wng-min-db", type=float, help="White-noise-gain floor, dB.")
@click.option("--null", "nulls", multiple=True, callback=_nulls, metavar="THETA,PHI[,DB]",
              help="A null direction in degrees (repeatable); optional depth in dB.")
@click.option("--scan", type=click.Choice(["beams"]),
              help="One amplitude taper for every beam of the design's [beams] (scan-volume "
                   "synthesis: the worst beam's directivity maximised, --psl-db at each).")
@click.option("--steered", is_flag=True,
              help="Write the steered excitations (for use without [steering]); default "
                   "writes the taper, which the design's [steering] steers.")
@json_option
def synth(design_file, output, method, psl_db, loss_db, mainlobe, weights_kind, symmetry,
          dynamic_range_db, wng_min_db, nulls, scan, steered, as_json):
    """Synthesise weights for a TOML design and write them as a weights CSV.

    The method and its targets come from the design's [synthesis] table; options override
    them. The result is re-checked on a dense grid and summarised (table or --json).
    """
    from ..workflows import design_for_synthesis, synthesize_design, write_synthesis_weights
    from ._render import emit_json, result_rows, table

    design, output = design_for_synthesis(design_file, output, steered)
    res = synthesize_design(design, method=method, psl_db=psl_db, loss_db=loss_db,
                            mainlobe=mainlobe, weights=weights_kind, symmetry=symmetry,
                            dynamic_range_db=dynamic_range_db, wng_min_db=wng_min_db,
                            nulls=nulls, scan=scan)
    out = write_synthesis_weights(res, output, design.name, steered)
    if as_json:
        emit_json(res.summary() | {"design": design.name, "weights_file": str(output),
                                   "steering_included": out})
    else:
        click.echo(table(result_rows(res), title=f"steradian synthesis: {design.name}"))
        for line in path_lines(res):
            click.echo(line)
        for i, b in enumerate(res.beams):
            click.echo(f"  beam {i} (theta {b['theta_deg']:g}, phi {b['phi_deg']:g} deg): "
                       f"directivity {b['directivity_dbi']:.2f} dBi, PSL {b['psl_db']:.2f} dB"
                       + ("" if b["met"] else " (limit not met)"))
        how = (" (steered excitations)" if out else " (taper; the design's [steering] "
               "applies the steering)" if res.array.steering is not None else " (taper)")
        click.echo(f"weights written to {output}{how}")
