"""Shared CLI helpers: JSON output, human tables, atomic text writes."""

from __future__ import annotations

import json
import math
from pathlib import Path

import click
import numpy as np

json_option = click.option("--json", "as_json", is_flag=True,
                           help="Print machine-readable JSON instead of a table.")


def to_jsonable(obj):
    """Convert numpy scalars/arrays and non-finite floats for json.dumps."""
    if isinstance(obj, dict):
        return {str(k): to_jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [to_jsonable(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return to_jsonable(obj.tolist())
    if isinstance(obj, (np.integer,)):
        return int(obj)
    if isinstance(obj, (np.floating, float)):
        x = float(obj)
        return x if math.isfinite(x) else None
    if isinstance(obj, (np.bool_,)):
        return bool(obj)
    if isinstance(obj, complex):
        return {"re": obj.real, "im": obj.imag}
    if isinstance(obj, Path):
        return str(obj)
    return obj


def emit_json(obj) -> None:
    """Print ``obj`` as indented JSON."""
    click.echo(json.dumps(to_jsonable(obj), indent=2))


def table(rows: list[tuple[str, str]], title: str | None = None) -> str:
    """Two-column aligned text table."""
    width = max((len(k) for k, _ in rows), default=0)
    lines = [title, "-" * len(title)] if title else []
    lines += [f"{k:<{width}}  {v}" for k, v in rows]
    return "\n".join(lines)
