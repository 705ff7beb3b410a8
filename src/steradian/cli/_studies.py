"""How ``sweep`` and ``tolerance`` show their results (tables and the shared run options).

Nothing here computes: the runs are :mod:`steradian.studyrun`.
"""

from __future__ import annotations

import click

from ._render import num, table

TOLERANCE_METRICS = (("directivity_loss_db", "directivity loss (dB)"),
                     ("directivity_dbi", "directivity (dBi)"), ("gain_dbi", "gain (dBi)"),
                     ("psl_db", "peak sidelobe (dB)"), ("avg_sll_db", "average sidelobe (dB)"),
                     ("pointing_error_deg", "pointing error (deg)"),
                     ("n_failed", "failed elements"))


def run_options(f):
    """The options every study command shares: output, workers, backend, resuming,
    progress and a summary JSON file."""
    opts = [
        click.option("-o", "--output", type=click.Path(), default=None,
                     help="Result rows, .csv or .jsonl (default: the table's output, else "
                          "DESIGN_<command>.csv here)."),
        click.option("--summary", "summary_path", type=click.Path(), default=None,
                     help="Also write the summary as JSON to this file."),
        click.option("--workers", type=click.IntRange(min=1), default=None,
                     help="Worker processes (default: every core)."),
        click.option("--backend", type=click.Choice(["local", "dask"]), default="local",
                     show_default=True, help="local processes, or a Dask cluster."),
        click.option("--scheduler", default=None,
                     help="Dask scheduler address (default: a local cluster)."),
        click.option("--fresh", is_flag=True,
                     help="Start afresh instead of resuming an existing result file."),
        click.option("--progress/--no-progress", default=None,
                     help="Progress bar (default: when stderr is a terminal)."),
    ]
    for o in reversed(opts):
        f = o(f)
    return f


def tolerance_rows(summary: dict) -> list[tuple[str, str]]:
    """Mean, spread, percentiles and the worst trial of each metric."""
    e = summary.get("errors", {})
    rows = [("trials", str(summary["trials"])), ("seed", str(summary["seed"])),
            ("errors", ", ".join(f"{k} {v}" for k, v in e.items() if v not in (0, 0.0))
             or "none"),
            ("sigma^2 (amplitude + phase)", num(summary.get("sigma2")))]
    for key, label in TOLERANCE_METRICS:
        s = summary.get(key)
        if not s:
            continue
        w = s["worst"]
        rows.append((label, f"mean {num(s['mean'])}  std {num(s['std'])}  p5 {num(s['p5'])}"
                     f"  p50 {num(s['p50'])}  p95 {num(s['p95'])}  worst {num(w['value'])} "
                     f"(trial {w['trial']}, seed {w['seed']})"))
    return rows


def sweep_lines(rows: list[dict], summary: dict, labels, limit: int = 60) -> str:
    """The sweep as a text table (first ``limit`` points) and its summary."""
    cols = [*labels, "directivity_dbi", "psl_db", "pointing_error_deg", "grating_lobe_found"]
    head = ["point", *cols]
    body = [[str(r["point"]), *(num(r.get(c)) for c in cols)] for r in rows[:limit]]
    width = [max(len(h), *(len(b[i]) for b in body)) if body else len(h)
             for i, h in enumerate(head)]
    out = ["  ".join(h.rjust(w) for h, w in zip(head, width, strict=True))]
    out += ["  ".join(c.rjust(w) for c, w in zip(b, width, strict=True)) for b in body]
    if len(rows) > limit:
        out.append(f"... {len(rows) - limit} more points in the result file")
    first = summary.get("first_grating_lobe")
    extra = [("points", str(summary["points"])),
             ("first grating lobe found", "none" if first is None else ", ".join(
                 f"{k} = {num(v)}" for k, v in first.items()))]
    for f in ("directivity_dbi", "psl_db", "pointing_error_deg"):
        s = summary.get(f)
        if s:
            extra.append((f, f"{num(s['min'])} .. {num(s['max'])}"))
    return "\n".join(out) + "\n\n" + table(extra, "Sweep")
