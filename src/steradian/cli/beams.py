"""``steradian beams``: quantized beam table of a design, written as firmware weight files."""

from __future__ import annotations

from pathlib import Path

import click

from ._common import json_option, table

FORMAT_NAMES = ("csv", "json", "bin", "h")


def summary_rows(summary: dict) -> list[tuple[str, str]]:
    """Human rows for a :meth:`BeamMetrics.summary` dictionary."""
    def f(key, fmt, unit=""):
        v = summary.get(key)
        return "-" if v is None else f"{v:{fmt}}{unit}"

    def at(key):
        b = summary.get(f"{key}_beam")
        return "" if b is None else f" (beam {b})"

    return [
        ("beams", str(summary["beams"])),
        ("peak directivity", f"{f('directivity_dbi_min', '.3f')} .. "
                             f"{f('directivity_dbi_max', '.3f')} dBi"),
        ("loss vs ideal", f"mean {f('loss_db_mean', '.4f')} dB, worst "
                          f"{f('loss_db_max', '.4f')} dB{at('loss_db_max')}"),
        ("peak sidelobe", f"worst {f('psl_db_max', '.2f')} dB{at('psl_db_max')}"),
        ("quantization lobe", f"worst {f('qlobe_db_max', '.2f')} dB{at('qlobe_db_max')}"),
        ("pointing error", f"worst {f('pointing_error_deg_max', '.4f')} deg"
                           f"{at('pointing_error_deg_max')}"),
        ("RMS phase error", f"worst {f('rms_phase_error_deg_max', '.3f')} deg"),
    ]


@click.command("beams")
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(path_type=Path))
@click.option("-o", "--output", "prefix", metavar="PREFIX", type=click.Path(path_type=Path),
              help="Output path without suffix (default: out/<design name>-beams).")
@click.option("-f", "--format", "formats", multiple=True, type=click.Choice(FORMAT_NAMES),
              help="Format to write (repeatable; default all: csv, json, bin, h).")
@click.option("--bin-encoding", type=click.Choice(("codes", "iq")), default="codes",
              show_default=True,
              help="Binary state encoding: phase/amplitude codes, or I/Q in Q1.15.")
@click.option("--c-prefix", default="strd", show_default=True,
              help="Identifier prefix of the C header's arrays and macros.")
@json_option
def beams(design_file, prefix, formats, bin_encoding, c_prefix, as_json):
    """Build the quantized beam table of DESIGN.toml and write its weight files.

    The design's [channel] table describes the beamformer channel and [beams] the steering
    grid. Every beam is quantized and re-evaluated: peak directivity and gain, pointing
    error, peak sidelobe, quantization-lobe level, loss against the ideal beam.
    """
    from ..beamtable import beam_table_from_design, write_beam_files
    from ..io.design import load_design
    from ._common import emit_json

    design = load_design(design_file)
    build = beam_table_from_design(design)
    if prefix is None:
        prefix = Path("out") / f"{design.name}-beams"
    files = write_beam_files(build.table, prefix, formats or FORMAT_NAMES,
                             bin_encoding=bin_encoding, c_prefix=c_prefix)
    summary = build.metrics.summary()
    if as_json:
        emit_json({"design": design.name, "channel": build.table.metadata["channel"],
                   "files": {k: str(v) for k, v in files.items()}, "summary": summary,
                   "beams": build.metrics.rows()})
        return
    rows = [("design", design.name), ("channel", build.table.states.describe()),
            ("elements", str(build.table.n_elements))] + summary_rows(summary)
    click.echo(table(rows, "beam table"))
    for p in files.values():
        click.echo(f"wrote {p}")
