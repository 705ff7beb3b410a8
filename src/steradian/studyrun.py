"""Running studies: sweeps and tolerance runs of a design over processes or a Dask cluster,
with a progress bar, result files appended as points finish, and resuming.

The computation is :mod:`steradian.studies`; the result files are
:mod:`steradian.io.study_files`. Work is cut into tasks that depend on the study alone (a
fixed number of trials, or a batch of sweep points sharing an evaluator), never on the
number of workers, and every trial draws from its own seeded stream: results are identical
for any worker count and backend. Rows are written in index order as soon as the rows
before them are written, so an interrupted run leaves a prefix of the finished file;
resuming reruns only the tasks not yet complete in it.

Backends: ``"local"`` (default): ``workers`` processes (default: every core), forked
warm from a fork server where the platform has one (else spawned), each running its
numerical libraries on one thread (one worker: this process, all
threads); ``"dask"``: a Dask distributed cluster, at ``scheduler`` (an address such as
``tcp://host:8786``) or a local cluster of ``workers`` processes started for the run. Dask
is an optional extra (``pip install steradian[distributed]``).

Progress is shown by tqdm on standard error when it is a terminal (``progress=True`` forces
it, ``False`` hides it).
"""

from __future__ import annotations

import copy
import hashlib
import json
import math
import os
import sys
from collections.abc import Iterator
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from dataclasses import dataclass
from pathlib import Path

from .budget import require
from .errors import DesignError, SteradianError
from .io.design import design_from_dict, read_toml
from .io.study_files import open_results, read_results
from .studies import (
    TRIAL_FIELDS,
    ErrorModel,
    SweepSpec,
    ToleranceSpec,
    ToleranceStudy,
    evaluate_points,
    evaluation_key,
    group_points,
    sweep_fields,
    trial_statistics,
)

__all__ = ["BACKENDS", "StudyRun", "run_tolerance", "run_sweep", "load_design_dict",
           "tolerance_of_file", "sweep_of_file", "sweep_summary", "replay_of_file",
           "point_design", "replay_trial", "tolerance_study_of", "study_of_design_dict"]

BACKENDS = ("local", "dask")

ROW_BYTES = 1100
"""Memory per result row held by a run: a row of ten numbers is about 520 bytes as a Python
dict (measured with tracemalloc), kept twice (written rows and the file read back)."""

POINT_BYTES = 4096
"""Memory per sweep point's array besides 64 bytes per element (positions, taper, weights
and the Array object; estimated from their sizes)."""


@dataclass(frozen=True)
class StudyRun:
    """What a run produced: the result file, its rows (all of them, in index order), how
    many were computed now (the rest were in the file already) and, for a tolerance run,
    the statistics and the error-free reference."""

    output: Path
    rows: list
    computed: int
    summary: dict


# ---------------------------------------------------------------------------------------
# Designs as dictionaries (a sweep point changes keys of the document)
# ---------------------------------------------------------------------------------------
def load_design_dict(path) -> tuple[dict, Path]:
    """The TOML document of a design file and the file (for messages and relative paths)."""
    path = Path(path)
    return read_toml(path), path


def _set_key(doc: dict, key: str, value: float, source) -> None:
    parts = key.split(".")
    if len(parts) < 2 or not all(parts):
        raise DesignError("sweep.axes", f"{key!r} is not a design key of the form "
                          "section.key (e.g. geometry.spacing_x)", source)
    t = doc
    for p in parts[:-1]:
        t = t.setdefault(p, {})
        if not isinstance(t, dict):
            raise DesignError(key, "is not inside a table", source)
    old = t.get(parts[-1])
    if isinstance(value, str):
        t[parts[-1]] = value
        return
    if isinstance(old, int) and not isinstance(old, bool) and float(value).is_integer():
        value = int(value)
    elif "count" in parts[-1] and float(value).is_integer():
        value = int(value)
    t[parts[-1]] = value


def point_design(doc: dict, spec: SweepSpec, index: int, source=None):
    """The :class:`~steradian.io.design.Design` of sweep point ``index``."""
    d = copy.deepcopy(doc)
    values = spec.point_values(index)
    for axis, v in zip(spec.axes, values, strict=True):
        for k in axis.keys:
            _set_key(d, k, v, source)
    try:
        return design_from_dict(d, source, base_dir=None if source is None
                                else Path(source).resolve().parent)
    except DesignError as exc:
        where = ", ".join(f"{a.label} = {v if isinstance(v, str) else format(v, 'g')}"
                          for a, v in zip(spec.axes, values, strict=True))
        text = str(exc)
        lead = f"{exc.source}: " if exc.source else ""
        lead += f"{exc.key}: " if exc.key else ""
        text = text[len(lead):] if text.startswith(lead) else text
        raise DesignError(exc.key, f"sweep point {index} ({where}): {text}",
                          exc.source) from None


def _digest(doc) -> str:
    return hashlib.sha256(json.dumps(doc, sort_keys=True, default=str).encode()).hexdigest()


# ---------------------------------------------------------------------------------------
# Jobs: picklable descriptions of the work, built once per process
# ---------------------------------------------------------------------------------------
_BUILT: dict = {}


@dataclass(frozen=True)
class _ToleranceJob:
    key: str
    array: object
    model: ErrorModel
    seed: int
    channel: object
    efficiency: float

    def run(self, task):
        study = _BUILT.get(self.key)
        if study is None:
            _BUILT.clear()
            study = _BUILT[self.key] = ToleranceStudy(
                self.array, self.model, self.seed, channel=self.channel,
                efficiency=self.efficiency)
        return study.evaluate(task)


@dataclass(frozen=True)
class _SweepJob:
    key: str
    mode: str
    efficiency: float

    def run(self, task):
        idx, arrays, freqs = task
        rows = evaluate_points(arrays, freqs, self.mode, efficiency=self.efficiency)
        return [{"point": i, **r} for i, r in zip(idx, rows, strict=True)]


def _execute(job, task, threads: int | None = None):
    """Run one task of ``job`` (in a worker process or in this one); a worker sharing the
    cores with others runs on ``threads`` threads (:func:`steradian.engine.set_threads`)."""
    if threads is not None:
        from .engine import set_threads

        set_threads(threads)
    return job.run(task)


# ---------------------------------------------------------------------------------------
# Backends
# ---------------------------------------------------------------------------------------
def _workers(workers) -> int:
    if workers is None:
        return os.cpu_count() or 1
    if int(workers) != workers or workers < 1:
        raise SteradianError(f"workers must be a whole number >= 1, got {workers}")
    return int(workers)


def _pool_context():
    """The local pool's start method, its server started: a fork server that imported
    :mod:`steradian.studypreload` (the workers fork warm) where the platform has one, else
    spawn. Started at the beginning of a run, the server warms up while this process
    builds the run's tasks."""
    import multiprocessing as mp

    if "forkserver" not in mp.get_all_start_methods():
        return mp.get_context("spawn")
    from multiprocessing import forkserver

    ctx = mp.get_context("forkserver")
    ctx.set_forkserver_preload(["steradian.studypreload"])
    forkserver.ensure_running()
    return ctx


def _prestart(opts, work: int) -> None:
    """Start the local pool's server now when the run will use more than one worker
    (``work``: the run's tasks or points; one alone runs in this process)."""
    if (opts.get("backend") or "local") != "local" or opts.get("scheduler") or work <= 1:
        return
    try:
        if _workers(opts.get("workers")) > 1:
            _pool_context()
    except SteradianError:
        return  # an invalid worker count is refused with its message where it is used


def _local(job, tasks, workers: int) -> Iterator[list]:
    if workers == 1 or len(tasks) <= 1:
        try:
            for t in tasks:
                yield _execute(job, t)
        finally:
            _BUILT.clear()  # the evaluator of a large array is not kept past the run
        return
    ctx = _pool_context()
    alive, keep = ctx.Pipe(duplex=False)  # ``keep`` open here only: closed when this dies
    try:
        yield from _pool_results(job, tasks, workers, ctx, alive)
    finally:
        keep.close()
        alive.close()


def _exit_with(alive) -> None:
    """Worker initializer: end this worker when the process that started the pool ends,
    also when it is killed (its end of the ``alive`` pipe closes): a killed run leaves no
    idle workers holding memory."""
    import threading

    def watch():
        try:
            alive.recv()
        except (EOFError, OSError):
            pass
        os._exit(0)

    threading.Thread(target=watch, name="steradian-run-watch", daemon=True).start()


def _pool_results(job, tasks, workers: int, ctx, alive) -> Iterator[list]:
    with ProcessPoolExecutor(max_workers=min(workers, len(tasks)), mp_context=ctx,
                             initializer=_exit_with, initargs=(alive,)) as pool:
        pending = {pool.submit(_execute, job, t, 1) for t in tasks}
        try:
            while pending:
                done, pending = wait(pending, return_when=FIRST_COMPLETED)
                for f in done:
                    yield f.result()
        finally:
            for f in pending:
                f.cancel()


def _dask(job, tasks, workers: int, scheduler) -> Iterator[list]:
    try:
        from distributed import Client, LocalCluster, as_completed
    except ImportError:
        raise SteradianError("the dask backend needs the optional extra: pip install "
                             "'steradian[distributed]'") from None
    cluster = None
    if scheduler:
        client = Client(scheduler)
    else:
        cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True,
                               dashboard_address=None)
        client = Client(cluster)
    try:
        futures = [client.submit(_execute, job, t, 1, pure=False) for t in tasks]
        for f in as_completed(futures):
            yield f.result()
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


def _results(job, tasks, backend: str, workers, scheduler) -> Iterator[list]:
    if backend not in BACKENDS:
        raise SteradianError(f"backend must be one of {', '.join(BACKENDS)}, got {backend!r}")
    n = _workers(workers)
    if backend == "dask":
        return _dask(job, tasks, n, scheduler)
    if scheduler:
        raise SteradianError("a scheduler address needs backend = 'dask'")
    return _local(job, tasks, n)


def _bar(total: int, initial: int, unit: str, progress):
    import shutil

    from tqdm import tqdm

    # A terminal that reports no size (0 x 0, as some pseudo-terminals do) would hide the
    # bar: take the size with the usual 80 x 24 fallback instead.
    size = shutil.get_terminal_size()
    return tqdm(total=total, initial=initial, unit=unit, file=sys.stderr,
                ncols=min(size.columns, 100), nrows=max(size.lines, 2),
                disable=None if progress is None else not progress)


def _drive(job, tasks, file, key: str, total: int, unit: str, opts) -> int:
    """Run ``tasks``, appending rows to ``file`` in index order; returns rows computed."""
    have = len(file.rows)
    pending: dict[int, dict] = {}
    nxt, computed = have, 0
    with _bar(total, have, unit, opts.get("progress")) as bar:
        for rows in _results(job, tasks, opts.get("backend") or "local", opts.get("workers"),
                             opts.get("scheduler")):
            for r in rows:
                if r[key] >= have:
                    pending[r[key]] = r
            ready = []
            while nxt in pending:
                ready.append(pending.pop(nxt))
                nxt += 1
            file.append(ready)
            computed += len(ready)
            bar.update(len(ready))
    return computed


def _check_prefix(file, key: str) -> None:
    for i, r in enumerate(file.rows):
        if r.get(key) != i:
            raise SteradianError(f"{file.path}: row {i + 1} holds {key} {r.get(key)}, expected "
                                 f"{i}; the file was edited (start afresh with --fresh)")


# ---------------------------------------------------------------------------------------
# Tolerance
# ---------------------------------------------------------------------------------------
def tolerance_study_of(design, spec: ToleranceSpec) -> ToleranceStudy:
    """The :class:`~steradian.studies.ToleranceStudy` of a design and a spec."""
    return ToleranceStudy(design.array, spec.model, spec.seed,
                          channel=_channel(design) if spec.quantize else None,
                          efficiency=design.options.radiation_efficiency)


def _channel(design):
    from .workflows import channel_of_design

    ch = channel_of_design(design)
    if ch is None:
        raise DesignError("tolerance.quantize", "needs a [channel] table in the design",
                          None if design.source is None else str(design.source))
    return ch


def run_tolerance(doc: dict, spec: ToleranceSpec, output, *, source=None, resume=True,
                  **opts) -> StudyRun:
    """Monte Carlo tolerance run of the design document ``doc``: ``spec.trials`` trials in
    tasks of ``spec.chunk``, rows appended to ``output`` (``.csv`` or ``.jsonl``), then
    the statistics (:func:`~steradian.studies.trial_statistics`) of every row in the file.

    ``opts``: ``backend`` ("local" or "dask"), ``workers``, ``scheduler`` (Dask address),
    ``progress`` (None: when standard error is a terminal).
    """
    require(ROW_BYTES * spec.trials, f"a tolerance run of {spec.trials:,} trials",
            "run fewer trials")
    _prestart(opts, math.ceil(spec.trials / spec.chunk))
    design = design_from_dict(doc, source)
    channel = _channel(design) if spec.quantize else None
    describe = {"kind": "tolerance", "design": _digest(doc), **spec.describe()}
    file = open_results(output, describe, TRIAL_FIELDS, resume=resume)
    _check_prefix(file, "trial")
    job = _ToleranceJob(_digest(describe), design.array, spec.model, spec.seed, channel,
                        design.options.radiation_efficiency)
    first = len(file.rows) // spec.chunk * spec.chunk
    tasks = [list(range(s, min(s + spec.chunk, spec.trials)))
             for s in range(first, spec.trials, spec.chunk)]
    computed = _drive(job, tasks, file, "trial", spec.trials, "trial", opts)
    _, _, rows = read_results(output)
    summary = trial_statistics(rows, spec.seed)
    summary["errors"] = spec.model.describe()
    summary["sigma2"] = spec.model.sigma2
    return StudyRun(Path(output), rows, computed, summary)


def replay_trial(doc: dict, spec: ToleranceSpec, index: int, *, source=None) -> dict:
    """Trial ``index`` of a tolerance run, recomputed alone on the plain path (for the
    worst trial a summary names)."""
    design = design_from_dict(doc, source)
    return tolerance_study_of(design, spec).evaluate_reference([index])[0]


# ---------------------------------------------------------------------------------------
# Sweeps
# ---------------------------------------------------------------------------------------
def study_of_design_dict(doc: dict, spec: SweepSpec, source=None):
    """Every sweep point's array and evaluation frequency, and the task batches."""
    n = design_from_dict(doc, source).array.n
    require((POINT_BYTES + 64 * n + 2 * ROW_BYTES) * spec.n_points,
            f"a sweep of {spec.n_points:,} points of {n:,} elements",
            "sweep fewer points (or split the sweep)")
    arrays, freqs = [], []
    eff = None
    for i in range(spec.n_points):
        d = point_design(doc, spec, i, source)
        arrays.append(d.array)
        freqs.append(d.options.frequency)
        eff = d.options.radiation_efficiency if eff is None else eff
    keys = [evaluation_key(a, f) for a, f in zip(arrays, freqs, strict=True)]
    return arrays, freqs, group_points(keys, spec.batch), eff


def run_sweep(doc: dict, spec: SweepSpec, output, *, source=None, resume=True,
              **opts) -> StudyRun:
    """Sweep of the design document ``doc`` over ``spec``'s axes; one row per point
    (``point``, the axis values, the metrics of :func:`~steradian.studies.sweep_fields`)
    appended to ``output``. ``opts`` as for :func:`run_tolerance`."""
    _prestart(opts, spec.n_points)
    arrays, freqs, batches, eff = study_of_design_dict(doc, spec, source)
    labels = [a.label for a in spec.axes]
    columns = ["point", *labels, *sweep_fields(spec.metrics)]
    describe = {"kind": "sweep", "design": _digest(doc), **spec.describe()}
    file = open_results(output, describe, columns, resume=resume,
                        text=[a.label for a in spec.axes if a.is_text])
    _check_prefix(file, "point")
    have = len(file.rows)
    job = _SweepJob(_digest(describe), spec.metrics, eff)
    tasks = [(b, [arrays[i] for i in b], [freqs[i] for i in b]) for b in batches
             if max(b) >= have]

    class _WithAxes:
        """Adds the axis values to each row before it is written."""

        def __init__(self, f):
            self.f, self.rows, self.path = f, f.rows, f.path

        def append(self, rows):
            self.f.append([{"point": r["point"], **dict(zip(labels, spec.point_values(
                r["point"]), strict=True)), **{k: v for k, v in r.items() if k != "point"}}
                for r in rows])

    computed = _drive(job, tasks, _WithAxes(file), "point", spec.n_points, "point", opts)
    _, _, rows = read_results(output)
    return StudyRun(Path(output), rows, computed, sweep_summary(rows, spec))


def sweep_summary(rows, spec: SweepSpec) -> dict:
    """Range of each metric over the sweep, and the first point where a grating lobe is
    found in the pattern and where one is predicted from the lattice (full metrics)."""
    out = {"points": len(rows), "axes": [a.label for a in spec.axes]}
    for f in sweep_fields(spec.metrics):
        v = [r[f] for r in rows if r.get(f) is not None and math.isfinite(float(r[f]))]
        out[f] = None if not v else {"min": min(v), "max": max(v)}
    for name, key in (("first_grating_lobe", "grating_lobe_found"),
                      ("first_grating_lobe_predicted", "grating_lobes_predicted")):
        first = next((r for r in rows if (r.get(key) or 0) > 0), None)
        out[name] = None if first is None else {
            a.label: first[a.label] for a in spec.axes} | {"point": first["point"]}
    return out


# ---------------------------------------------------------------------------------------
# From a design file (the command line's recipes)
# ---------------------------------------------------------------------------------------
def _output(given, from_table, path: Path, what: str) -> Path:
    if given is not None:
        return Path(given)
    if from_table is not None:
        p = Path(from_table).expanduser()
        return p if p.is_absolute() else path.resolve().parent / p
    return Path(f"{path.stem}_{what}.csv")


def tolerance_of_file(path, *, output=None, resume: bool = True, overrides=None,
                      **opts) -> tuple[StudyRun, ToleranceSpec]:
    """Tolerance run of a design file: ``[tolerance]`` with ``overrides`` (keys of
    :data:`~steradian.studies.TOLERANCE_KEYS`); rows to ``output`` (default: the table's
    ``output`` beside the design, else ``<design>_tolerance.csv`` here)."""
    from .studies import tolerance_from_table

    doc, path = load_design_dict(path)
    design = design_from_dict(doc, path)
    spec = tolerance_from_table(design.sections.get("tolerance"), str(path),
                                **(overrides or {}))
    out = _output(output, spec.output, path, "tolerance")
    return run_tolerance(doc, spec, out, source=path, resume=resume, **opts), spec


def sweep_of_file(path, *, axes=None, metrics=None, output=None, resume: bool = True,
                  **opts) -> tuple[StudyRun, SweepSpec]:
    """Sweep of a design file: ``[sweep]``, its axes replaced by ``axes`` (from
    :func:`~steradian.studies.parse_axis`) and its metric set by ``metrics`` when given."""
    from dataclasses import replace

    from .studies import sweep_from_table

    doc, path = load_design_dict(path)
    design = design_from_dict(doc, path)
    spec = sweep_from_table(design.sections.get("sweep"), str(path), axes=axes or None)
    if metrics is not None:
        spec = replace(spec, metrics=metrics)
    out = _output(output, spec.output, path, "sweep")
    return run_sweep(doc, spec, out, source=path, resume=resume, **opts), spec


def replay_of_file(path, index: int, *, overrides=None) -> dict:
    """Trial ``index`` of a design file's tolerance run (``[tolerance]`` with
    ``overrides``), recomputed alone on the plain path: replays a worst trial."""
    from .studies import tolerance_from_table

    doc, path = load_design_dict(path)
    design = design_from_dict(doc, path)
    spec = tolerance_from_table(design.sections.get("tolerance"), str(path),
                                **(overrides or {}))
    if not 0 <= index < spec.trials:
        raise SteradianError(f"--replay {index}: the run has trials 0 .. {spec.trials - 1}")
    return replay_trial(doc, spec, index, source=path) | {"seed": spec.seed}
