"""``steradian synth``: synthesise weights for a design and write a weights CSV."""

from __future__ import annotations

import math
from pathlib import Path

import click

from ._common import json_option, table


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


def _fmt_db(x) -> str:
    return "n/a" if x is None else f"{x:.3f} dB"


def result_rows(res) -> list[tuple[str, str]]:
    """Human summary rows of a SynthesisResult."""
    rows = [("method", res.method),
            ("directivity", f"{res.directivity_dbi:.3f} dBi toward the beam (peak "
                            f"{res.peak_directivity_dbi:.3f} dBi)"),
            ("taper efficiency", f"{res.taper_efficiency:.4f}"),
            ("peak sidelobe", _fmt_db(res.psl_db)
             + ("" if res.psl_direction is None else
                f" at theta {res.psl_direction[0]:.2f}, phi {res.psl_direction[1]:.2f} deg")
             + " (dense re-check)")]
    if res.limit_db is not None:
        rows.append(("limit", f"{res.limit_db:.3f} dB; worst excess {res.margin_db:.4f} dB; "
                              + ("met" if res.met else "NOT met")))
    rows.append(("white-noise gain", f"{res.white_noise_gain_db:.2f} dB"))
    rows.append(("dynamic range", f"{res.dynamic_range_db:.2f} dB"))
    for i, d in enumerate(res.null_depths_db):
        rows.append((f"null {i}", f"{d:.1f} dB"))
    cert = res.certificate
    if cert.get("status") and cert.get("status") != "closed form":
        rows.append(("solver", f"{cert['status']}, {cert['iterations']} iterations, relative "
                               f"gap {cert['relative_gap']:.2g}"))
        if "directivity_bound_dbi" in cert:
            rows.append(("bound", f"no weights meeting the constraints exceed "
                                  f"{cert['directivity_bound_dbi']:.3f} dBi"))
    elif cert.get("status"):
        rows.append(("solver", "closed form (Q^-1 a0)"))
    rows.append(("problem", f"{res.unknowns} real unknowns ({res.symmetry} symmetry), "
                            f"{res.samples} samples, {res.rounds} rounds, {res.seconds:.2f} s"))
    for n in res.notes:
        rows.append(("note", n))
    return rows


@click.command("synth")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@click.option("-o", "--output", type=click.Path(path_type=Path), required=True,
              help="Weights CSV to write (read back by [taper] file = ...).")
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
@click.option("--steered", is_flag=True,
              help="Write the steered excitations (for use without [steering]); default "
                   "writes the taper, which the design's [steering] steers.")
@json_option
def synth(design_file, output, method, psl_db, loss_db, mainlobe, weights_kind, symmetry,
          dynamic_range_db, wng_min_db, nulls, steered, as_json):
    """Synthesise weights for a TOML design and write them as a weights CSV.

    The method and its targets come from the design's [synthesis] table; options override
    them. The result is re-checked on a dense grid and summarised (table or --json).
    """
    from ..io.design import load_design
    from ..optimize import synthesize
    from ._common import emit_json

    design = load_design(design_file)
    res = synthesize(design.array, design.sections.get("synthesis"), method=method,
                     psl_db=psl_db, loss_db=loss_db, mainlobe=mainlobe, weights=weights_kind,
                     symmetry=symmetry, dynamic_range_db=dynamic_range_db,
                     wng_min_db=wng_min_db, nulls=nulls)
    out = write_result(res, output, design.name, steered)
    if as_json:
        emit_json(res.summary() | {"design": design.name, "weights_file": str(output),
                                   "steering_included": out})
    else:
        click.echo(table(result_rows(res), title=f"steradian synthesis: {design.name}"))
        click.echo(f"weights written to {output}"
                   + (" (steered excitations)" if out else " (taper; the design's [steering] "
                                                           "applies the steering)"))


def write_result(res, path, name: str, steered: bool) -> bool:
    """Write a result's weights CSV; returns whether the steering phases are included."""
    from ..io.weights_csv import write_weights

    arr = res.array
    include = bool(steered) or arr.steering is None
    w = res.weights if include else arr.taper
    meta = {"design": name, "method": res.method,
            "directivity_dbi": f"{res.directivity_dbi:.6f}",
            "psl_db": "" if res.psl_db is None else f"{res.psl_db:.6f}",
            "steering_included": "yes" if include else "no"}
    if arr.steering is not None:
        meta["steering"] = f"theta {arr.steering.theta_deg:g} deg, phi {arr.steering.phi_deg:g} deg"
    write_weights(path, w, positions=arr.positions, meta=meta)
    return include
