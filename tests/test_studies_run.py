"""Running studies: identical results for any worker count and backend, result files
appended in order and resumed exactly after a kill, and the two commands."""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time

import pytest
from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from steradian.cli import main
from steradian.errors import FileFormatError
from steradian.io.study_files import open_results, read_results
from steradian.studies import tolerance_from_table
from steradian.studyrun import load_design_dict, run_tolerance

DESIGN = """
[design]
name = "tile16"
frequency_hz = 10e9

[geometry]
kind = "rectangular"
units = "wavelength"
count_x = 16
count_y = 16
spacing_x = 0.5
spacing_y = 0.5

[taper]
kind = "separable"
x = { kind = "taylor", nbar = 5, sll = 30.0 }
y = { kind = "taylor", nbar = 5, sll = 30.0 }

[steering]
theta_deg = 25.0
phi_deg = 10.0

[tolerance]
trials = 400
seed = 20261202
amplitude_db = 0.5
phase_deg = 4.0
failure_rate = 0.01
chunk = 50

[sweep]
axes = [{ keys = "steering.theta_deg", start = 0, stop = 40, count = 3 }]
metrics = "beam"
"""


@pytest.fixture(scope="module")
def design(tmp_path_factory):
    d = tmp_path_factory.mktemp("study")
    p = d / "tile16.toml"
    p.write_text(DESIGN)
    return p


@pytest.fixture(scope="module")
def reference(design):
    """The uninterrupted 400-trial run with one worker (in this process). The acceptance
    figure (2,000 trials) is run by benchmarks/bench_studies.py; 400 keeps this file's
    tests short and exercises the same tasks, files and backends."""
    doc, path = load_design_dict(design)
    spec = tolerance_from_table(doc["tolerance"])
    out = design.parent / "one.csv"
    run = run_tolerance(doc, spec, out, source=path, workers=1, progress=False)
    return doc, spec, run


def test_two_workers_give_the_same_file(design, reference):
    """Acceptance (at 400 trials): a 16 x 16 array with 1 and 2 local worker processes gives
    the same rows (byte for byte) and so the same statistics."""
    doc, spec, one = reference
    out = design.parent / "two.csv"
    two = run_tolerance(doc, spec, out, source=design, workers=2, progress=False)
    assert out.read_bytes() == one.output.read_bytes()
    assert two.summary == one.summary
    assert one.computed == 400 and len(one.rows) == 400


def test_dask_local_cluster_gives_the_same_file(design, reference):
    """Acceptance: the Dask backend (a local cluster of two processes) gives the same file."""
    pytest.importorskip("distributed", reason="dask[distributed] (the optional extra "
                        "'distributed') is not installed")
    doc, spec, one = reference
    out = design.parent / "dask.csv"
    run = run_tolerance(doc, spec, out, source=design, workers=2, backend="dask",
                        progress=False)
    assert out.read_bytes() == one.output.read_bytes()
    assert run.summary == one.summary


def test_killed_halfway_and_resumed_gives_the_same_file(design, reference):
    """Acceptance: a run killed (SIGKILL) halfway and started again finishes with exactly
    the file of an uninterrupted run; the second start computes only what was missing."""
    _, _, one = reference
    out = design.parent / "killed.csv"
    cmd = [sys.executable, "-c", "from steradian.cli import main; main()", "tolerance",
           str(design), "-o", str(out), "--workers", "1", "--json"]
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    rows_at_kill = 0
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline and proc.poll() is None:
        if out.exists():
            rows_at_kill = out.read_text().count("\n") - 3
            if rows_at_kill >= 150:
                break
        time.sleep(0.01)
    proc.send_signal(signal.SIGKILL)
    proc.wait()
    assert 0 < rows_at_kill < 400, "the run was not interrupted halfway"
    assert out.read_bytes() != one.output.read_bytes()
    # A torn last line, as a kill during a write leaves it.
    with open(out, "a") as fh:
        fh.write("1234,0,21.5")
    r = subprocess.run(cmd, capture_output=True, text=True, check=False)
    assert r.returncode == 0, r.stderr
    summary = json.loads(r.stdout)
    assert out.read_bytes() == one.output.read_bytes()
    assert 0 < summary["computed"] < 400
    assert summary["directivity_loss_db"] == one.summary["directivity_loss_db"]
    # Resuming a finished run adds nothing.
    r = subprocess.run(cmd, capture_output=True, text=True, check=False)
    assert json.loads(r.stdout)["computed"] == 0
    assert out.read_bytes() == one.output.read_bytes()


def test_result_file_round_trip_and_refusals(tmp_path):
    """Rows read back bit for bit (CSV and JSON lines); resuming another study's file, or a
    file that is not a result file, is one FileFormatError naming the file."""
    cols = ["trial", "psl_db", "pointing_error_deg"]
    rows = [{"trial": i, "psl_db": -25.0 - i / 3, "pointing_error_deg": None if i == 1
             else 0.1 * i} for i in range(3)]
    for name in ("r.csv", "r.jsonl"):
        f = open_results(tmp_path / name, {"kind": "x", "n": 1}, cols)
        f.append(rows[:2])
        f.append(rows[2:])
        study, columns, back = read_results(tmp_path / name)
        assert study == {"kind": "x", "n": 1} and columns == cols and back == rows
        again = open_results(tmp_path / name, {"kind": "x", "n": 1}, cols)
        assert again.rows == rows
        with pytest.raises(FileFormatError, match="another study"):
            open_results(tmp_path / name, {"kind": "x", "n": 2}, cols)
    (tmp_path / "other.csv").write_text("a,b\n1,2\n")
    with pytest.raises(FileFormatError, match="not a study result file"):
        open_results(tmp_path / "other.csv", {"kind": "x"}, cols)
    fresh = open_results(tmp_path / "other.csv", {"kind": "x"}, cols, resume=False)
    assert fresh.rows == [] and read_results(tmp_path / "other.csv")[2] == []


def test_tolerance_and_sweep_commands(design, tmp_path):
    """The commands: --help, a table summary, --json that parses, and one error line with
    exit 2 for a bad option value."""
    runner = CliRunner()
    for name in ("tolerance", "sweep"):
        r = runner.invoke(main, [name, "--help"])
        assert r.exit_code == 0 and "DESIGN.toml" in r.output
    out = tmp_path / "t.jsonl"
    r = runner.invoke(main, ["tolerance", str(design), "--trials", "40", "--chunk", "20",
                             "--workers", "1", "-o", str(out), "--json"])
    assert r.exit_code == 0, r.output
    s = json.loads(r.output)
    assert s["trials"] == 40 and s["computed"] == 40 and s["seed"] == 20261202
    assert s["psl_db"]["worst"]["trial"] in range(40)
    r = runner.invoke(main, ["tolerance", str(design), "--trials", "40", "--chunk", "20",
                             "--workers", "1", "-o", str(out)])
    assert r.exit_code == 0 and "0 trials computed now" in r.output
    assert "peak sidelobe (dB)" in r.output
    assert "trial/s" not in r.output and "%|" not in r.output  # no progress bar off a tty
    worst = s["psl_db"]["worst"]
    r = runner.invoke(main, ["tolerance", str(design), "--replay", str(worst["trial"]),
                             "--json"])
    assert r.exit_code == 0, r.output
    assert json.loads(r.output)["psl_db"] == pytest.approx(worst["value"], abs=0.02)
    r = runner.invoke(main, ["tolerance", str(design), "--trials", "40", "--chunk", "20",
                             "--workers", "1", "-o", str(out), "--figure",
                             str(tmp_path / "tol.svg")])
    assert r.exit_code == 0, r.output
    assert (tmp_path / "tol_psl_db.svg").stat().st_size > 0
    r = runner.invoke(main, ["sweep", str(design), "--workers", "1", "-o",
                             str(tmp_path / "s.csv"), "--json", "--figure",
                             str(tmp_path / "s.png")])
    assert r.exit_code == 0, r.output
    s = json.loads(r.output)
    assert [row["steering.theta_deg"] for row in s["rows"]] == [0.0, 20.0, 40.0]
    assert s["figure"] == str(tmp_path / "s.png") and (tmp_path / "s.png").stat().st_size
    r = runner.invoke(main, ["sweep", str(design), "--vary", "steering.theta_dg=0:10:2",
                             "-o", str(tmp_path / "bad.csv")])
    assert r.exit_code == 2
    assert "steering.theta_dg" in r.output and "Traceback" not in r.output


def test_interrupted_process_pool_leaves_a_prefix(design, tmp_path):
    """The file of a run killed while two workers run is a prefix of the finished file (rows
    are written in index order only)."""
    _, _, rows = read_results(design.parent / "one.csv") if (
        design.parent / "one.csv").exists() else (None, None, None)
    if rows is None:
        pytest.skip("needs the reference run of this module")
    out = tmp_path / "pool.csv"
    cmd = [sys.executable, "-c", "from steradian.cli import main; main()", "tolerance",
           str(design), "-o", str(out), "--workers", "2"]
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                            start_new_session=True)
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline and proc.poll() is None:
        if out.exists() and out.read_text().count("\n") > 100:
            break
        time.sleep(0.01)
    os.killpg(proc.pid, signal.SIGKILL)
    proc.wait()
    _, _, got = read_results(out)
    assert 0 < len(got) < 400 and got == rows[:len(got)]


def _marked(mark: str) -> list[int]:
    """Processes whose environment holds ``STERADIAN_TEST_MARK=mark``."""
    found = []
    for d in os.listdir("/proc"):
        if d.isdigit():
            try:
                with open(f"/proc/{d}/environ", "rb") as fh:
                    if f"STERADIAN_TEST_MARK={mark}".encode() in fh.read().split(b"\0"):
                        found.append(int(d))
            except OSError:
                continue
    return found


@pytest.mark.skipif(not os.path.isdir("/proc"), reason="reads the process table in /proc")
def test_killed_run_leaves_no_workers(design, tmp_path):
    """Common practice (bounded resources): when the process running a two-worker pool is
    killed (SIGKILL: no clean-up of its own), its workers and their start-up server end
    too, instead of idling on their memory."""
    out = tmp_path / "orphans.csv"
    mark = f"{os.getpid()}-{time.monotonic_ns()}"
    cmd = [sys.executable, "-c", "from steradian.cli import main; main()", "tolerance",
           str(design), "-o", str(out), "--workers", "2"]
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                            start_new_session=True,
                            env={**os.environ, "STERADIAN_TEST_MARK": mark})
    try:
        deadline = time.monotonic() + 120
        while time.monotonic() < deadline and proc.poll() is None:
            if out.exists() and out.read_text().count("\n") > 50:
                break
            time.sleep(0.01)
        assert len(_marked(mark)) >= 3, "the pool was not running"  # the run and 2 workers
        proc.send_signal(signal.SIGKILL)  # the run alone, not its process group
        proc.wait()
        deadline = time.monotonic() + 15
        while _marked(mark) and time.monotonic() < deadline:
            time.sleep(0.1)
        assert _marked(mark) == []
    finally:
        try:
            os.killpg(proc.pid, signal.SIGKILL)
        except ProcessLookupError:
            pass


def test_dask_scheduler_address(design, tmp_path):
    """A user-given Dask scheduler address (here a cluster started by the test) gives the
    same file as local processes."""
    distributed = pytest.importorskip("distributed", reason="dask[distributed] (the optional "
                                      "extra 'distributed') is not installed")
    doc, path = load_design_dict(design)
    spec = tolerance_from_table(doc["tolerance"], trials=60, chunk=20)
    local = run_tolerance(doc, spec, tmp_path / "local.csv", workers=1, progress=False)
    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=False,
                                  dashboard_address=None) as cluster:
        run_tolerance(doc, spec, tmp_path / "addr.csv", backend="dask",
                      scheduler=cluster.scheduler_address, progress=False)
    assert (tmp_path / "addr.csv").read_bytes() == local.output.read_bytes()


@settings(max_examples=60, deadline=None, derandomize=True, database=None,
          suppress_health_check=list(HealthCheck))
@given(data=st.data())
def test_mutated_result_files_resume_or_fail_in_one_line(tmp_path_factory, data):
    """Fuzz (byte flips, insertions, truncations, as tests/test_fuzz.py does for other
    formats): resuming a damaged result file either keeps the rows it can read or raises one
    FileFormatError naming the file; nothing else escapes."""
    d = tmp_path_factory.mktemp("fuzz")
    cols = ["trial", "psl_db", "avg_sll_db"]
    rows = [{"trial": i, "psl_db": -20.0 - i / 7, "avg_sll_db": -41.5 + i} for i in range(4)]
    name = data.draw(st.sampled_from(["r.csv", "r.jsonl"]))
    p = d / name
    open_results(p, {"kind": "fuzz"}, cols).append(rows)
    raw = bytearray(p.read_bytes())
    for _ in range(data.draw(st.integers(1, 4))):
        i = data.draw(st.integers(0, len(raw) - 1))
        op = data.draw(st.sampled_from(["flip", "insert", "cut"]))
        if op == "flip":
            raw[i] ^= 1 << data.draw(st.integers(0, 7))
        elif op == "insert":
            raw[i:i] = data.draw(st.sampled_from([b",", b"\n", b"\xff", b"#", b"nan", b'"']))
        else:
            del raw[i:]
            if not raw:
                raw = bytearray(b"x")
    p.write_bytes(bytes(raw))
    try:
        f = open_results(p, {"kind": "fuzz"}, cols)
    except FileFormatError as exc:
        assert str(p) in str(exc)
        return
    assert len(f.rows) <= 4
    for r in f.rows:
        assert list(r) == cols


@pytest.mark.skipif(sys.platform == "win32", reason="pseudo-terminals are POSIX")
def test_progress_bar_on_a_terminal_only(design, tmp_path):
    """On a terminal (a pseudo-terminal here, which reports no size) the tqdm progress bar is
    drawn on stderr; off a terminal nothing is (the CliRunner test above)."""
    import pty

    out = tmp_path / "tty.csv"
    main_fd, sub_fd = pty.openpty()
    cmd = [sys.executable, "-c", "from steradian.cli import main; main()", "tolerance",
           str(design), "--trials", "40", "--chunk", "20", "--workers", "1", "-o", str(out)]
    proc = subprocess.Popen(cmd, stdin=sub_fd, stdout=sub_fd, stderr=sub_fd, close_fds=True)
    os.close(sub_fd)
    text = b""
    while True:
        try:
            chunk = os.read(main_fd, 4096)
        except OSError:  # the child closed the terminal
            break
        if not chunk:
            break
        text += chunk
    proc.wait()
    os.close(main_fd)
    shown = text.decode(errors="replace")
    assert proc.returncode == 0, shown
    assert "40/40" in shown and "trial/s" in shown
