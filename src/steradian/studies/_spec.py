"""Part of :mod:`steradian.studies` (see the package docstring): the ``[sweep]`` and
``[tolerance]`` design-file tables, read with :class:`steradian.schema.Section`."""

from __future__ import annotations

import re
from dataclasses import dataclass

from ..errors import SteradianError
from ..schema import Section
from ._sweep import SWEEP_MODES, SweepAxis
from ._tolerance import FAILURE_MODES, ErrorModel

__all__ = ["SweepSpec", "ToleranceSpec", "SWEEP_KEYS", "AXIS_KEYS", "TOLERANCE_KEYS",
           "sweep_from_table", "tolerance_from_table", "parse_axis", "MAX_AXES",
           "DEFAULT_CHUNK"]

SWEEP_KEYS = ("axes", "metrics", "output", "batch")
AXIS_KEYS = ("keys", "start", "stop", "count", "values", "label")
TOLERANCE_KEYS = ("trials", "seed", "amplitude_db", "phase_deg", "position_mm",
                  "failure_rate", "failure_count", "failure_mode", "quantize", "chunk",
                  "output")
MAX_AXES = 2
"""A sweep varies one parameter or a grid of two."""

DEFAULT_CHUNK = 100
"""Trials per task (the unit of work, of progress and of resuming)."""

DEFAULT_BATCH = 16
"""Sweep points per task at most (beam mode: points sharing one evaluator)."""


@dataclass(frozen=True)
class SweepSpec:
    """A sweep: one or two axes (the last varies fastest), the metric set, the output file
    (None: chosen by the caller) and the largest batch of points per task."""

    axes: tuple[SweepAxis, ...]
    metrics: str = "full"
    output: str | None = None
    batch: int = DEFAULT_BATCH

    @property
    def n_points(self) -> int:
        n = 1
        for a in self.axes:
            n *= len(a.values)
        return n

    def point_values(self, index: int) -> tuple[float, ...]:
        """The axis values of point ``index`` (first axis outermost)."""
        out = []
        for a in reversed(self.axes):
            index, r = divmod(index, len(a.values))
            out.append(a.values[r])
        return tuple(reversed(out))

    def describe(self) -> dict:
        return {"axes": [{"keys": list(a.keys), "label": a.label, "values": list(a.values)}
                         for a in self.axes], "metrics": self.metrics, "batch": self.batch}


@dataclass(frozen=True)
class ToleranceSpec:
    """A tolerance run: trial count, seed, error model, whether to quantize with the
    design's ``[channel]``, trials per task and the output file."""

    trials: int
    seed: int
    model: ErrorModel
    quantize: bool = False
    chunk: int = DEFAULT_CHUNK
    output: str | None = None

    def describe(self) -> dict:
        return {"trials": self.trials, "seed": self.seed, "errors": self.model.describe(),
                "quantize": self.quantize, "chunk": self.chunk}


def _axis(t: Section) -> SweepAxis:
    t.only(AXIS_KEYS, "of a sweep axis")
    keys = t.data.get("keys")
    if isinstance(keys, str):
        keys = [keys]
    if not isinstance(keys, list) or not keys or not all(isinstance(k, str) and k
                                                         for k in keys):
        raise t.error("keys", "must be a design key or an array of design keys, e.g. "
                      "[\"geometry.spacing_x\", \"geometry.spacing_y\"]")
    label = t.string("label", "")
    if "values" in t:
        if any(k in t for k in ("start", "stop", "count")):
            raise t.error("values", "give values or start/stop/count, not both")
        v = t.data["values"]
        if isinstance(v, list) and v and all(isinstance(x, str) for x in v):
            try:
                return SweepAxis(tuple(keys), tuple(v), label)
            except SteradianError as exc:
                raise t.error("values", str(exc)) from None
        return SweepAxis(tuple(keys), tuple(t.numbers("values")), label)
    try:
        return SweepAxis.linspace(keys, t.number("start"), t.number("stop"),
                                  t.integer("count", minimum=1), label)
    except SteradianError as exc:
        raise t.error("count", str(exc)) from None


def sweep_from_table(table, source=None, *, axes=None) -> SweepSpec:
    """A :class:`SweepSpec` from a design's ``[sweep]`` table (``axes`` given: they replace
    the table's)."""
    t = Section("sweep", table if table is not None else {}, source)
    t.only(SWEEP_KEYS)
    if axes is None:
        raw = t.data.get("axes")
        if raw is None:
            raise t.error("axes", "required key is missing (or give --vary)")
        if not isinstance(raw, list) or not raw:
            raise t.error("axes", "must be an array of tables, e.g. "
                          "[{keys = \"steering.theta_deg\", start = 0, stop = 60, count = 13}]")
        axes = [_axis(Section(f"sweep.axes[{i}]", a, source)) for i, a in enumerate(raw)]
    if not 1 <= len(axes) <= MAX_AXES:
        raise t.error("axes", f"a sweep has one axis or a grid of {MAX_AXES}, got {len(axes)}")
    labels = [a.label for a in axes]
    if len(set(labels)) != len(labels):
        raise t.error("axes", f"two axes share the column name {labels[0]!r} (set label)")
    out = t.data.get("output")
    return SweepSpec(tuple(axes), t.string("metrics", "full", choices=SWEEP_MODES),
                     None if out is None else t.string("output"),
                     t.integer("batch", DEFAULT_BATCH, minimum=1))


def tolerance_from_table(table, source=None, **overrides) -> ToleranceSpec:
    """A :class:`ToleranceSpec` from a design's ``[tolerance]`` table; ``overrides`` (keys of
    :data:`TOLERANCE_KEYS`, None ignored) replace table values."""
    data = dict(table or {})
    data.update({k: v for k, v in overrides.items() if v is not None})
    t = Section("tolerance", data, source)
    t.only(TOLERANCE_KEYS)
    try:
        model = ErrorModel(t.number("amplitude_db", 0.0, minimum=0),
                           t.number("phase_deg", 0.0, minimum=0),
                           t.number("position_mm", 0.0, minimum=0),
                           t.number("failure_rate", 0.0, minimum=0, maximum=0.999),
                           t.integer("failure_count", 0, minimum=0),
                           t.string("failure_mode", "off", choices=FAILURE_MODES))
    except SteradianError as exc:
        if getattr(exc, "key", None):
            raise
        raise t.error("failure_count", str(exc)) from None
    out = data.get("output")
    return ToleranceSpec(t.integer("trials", 1000, minimum=1), t.integer("seed", 0, minimum=0),
                         model, t.boolean("quantize", False),
                         t.integer("chunk", DEFAULT_CHUNK, minimum=1),
                         None if out is None else t.string("output"))


_AXIS = re.compile(r"^\s*([A-Za-z0-9_.+\s]+?)\s*=\s*(.+?)\s*$")


def parse_axis(text: str) -> SweepAxis:
    """A sweep axis from ``KEY[+KEY...]=START:STOP:COUNT`` or ``KEY[+KEY...]=V1,V2,...``
    (numbers, or words such as ``steering.mode=phase,delay``)."""
    m = _AXIS.match(text)
    if not m:
        raise SteradianError(f"--vary {text!r}: expected KEY=START:STOP:COUNT or "
                             "KEY=V1,V2,... (several keys joined by +)")
    keys = tuple(k.strip() for k in m.group(1).split("+") if k.strip())
    body = m.group(2)
    if ":" in body:
        try:
            a, b, c = (float(x) for x in body.split(":"))
            if c != int(c):
                raise ValueError
        except (ValueError, OverflowError):
            raise SteradianError(f"--vary {text!r}: START:STOP:COUNT must be numbers with a "
                                 "whole COUNT") from None
        return SweepAxis.linspace(keys, a, b, int(c))
    parts = [v.strip() for v in body.split(",")]
    try:
        numbers = tuple(float(v) for v in parts)
    except ValueError:
        return SweepAxis(keys, tuple(parts))  # words (checked there)
    return SweepAxis(keys, numbers)
