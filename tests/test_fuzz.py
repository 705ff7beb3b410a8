"""Fuzz suite (issue 10): mutated design files and weight files through the real command line.

Mutants of every design in configs/ (key deletions, type swaps, value extremes, unknown keys,
byte flips, truncations) go through ``steradian analyze``; byte flips and truncations of
every weight-file format written by ``steradian beams`` go through ``steradian verify``. Every
case must keep the command-line contract (README "Exit codes"):

- exit status 0, 1 or 2 (3 is a bug, anything else a crash);
- no ``Traceback`` anywhere in the output;
- every stderr line starts ``steradian: warning: `` or ``steradian: error: ``; at most one error
  line, the last one, and exit 2 exactly when there is one;
- each case ends within :data:`CASE_SECONDS` (a hard alarm, beside hypothesis's deadline).

The number of examples is bounded so the default run takes well under a minute
(``STERADIAN_FUZZ_SCALE=10`` runs ten times as many; the ``slow`` test runs a few cases in a
subprocess under an address-space limit). The runs are derandomized: a failure reproduces.
Mutation classes as in the issue's attack; hypothesis (Hypothesis documentation,
https://hypothesis.readthedocs.io) draws them.
"""

from __future__ import annotations

import json
import math
import os
import random
import shutil
import signal
import subprocess
import sys
import tomllib
import warnings
from datetime import timedelta
from pathlib import Path

import pytest
from click.testing import CliRunner
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st

from steradian.cli import main
from steradian.io.formats import WEIGHT_FORMATS

ROOT = Path(__file__).resolve().parent.parent
CONFIGS = sorted((ROOT / "configs").glob("*.toml"))
SCALE = max(1, int(os.environ.get("STERADIAN_FUZZ_SCALE", "1")))
CASE_SECONDS = 20
DEADLINE = timedelta(seconds=10)


def _settings(n):
    return settings(max_examples=n * SCALE, deadline=DEADLINE, derandomize=True,
                    phases=(Phase.explicit, Phase.generate), database=None,
                    suppress_health_check=list(HealthCheck))


class CaseTimeout(BaseException):
    """A case ran past CASE_SECONDS (BaseException: the CLI's handlers do not catch it)."""


def _alarm(signum, frame):
    raise CaseTimeout(f"case ran past {CASE_SECONDS} s")


def run_cli(args):
    """Invoke the real entry point with the warning filters a user has (pytest's "error"
    filter would turn numpy's warnings into exceptions)."""
    old = signal.signal(signal.SIGALRM, _alarm)
    signal.alarm(CASE_SECONDS)
    try:
        with warnings.catch_warnings():
            warnings.resetwarnings()
            warnings.simplefilter("default")
            return CliRunner().invoke(main, [str(a) for a in args])
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)


def contract_problem(r) -> str | None:
    """What breaks the command-line contract in result ``r``, or None."""
    text = r.stdout + r.stderr
    if r.exit_code not in (0, 1, 2):
        last = r.stderr.strip().splitlines()[-1:] or [repr(r.exception)]
        return f"exit {r.exit_code}: {last[0][:300]}"
    if "Traceback" in text:
        return "traceback in output"
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    bad = [ln for ln in lines if not ln.startswith(("steradian: warning: ",
                                                    "steradian: error: "))]
    if bad:
        return f"stray stderr line: {bad[0][:300]}"
    errors = [ln for ln in lines if ln.startswith("steradian: error: ")]
    if len(errors) > 1 or (errors and lines[-1] != errors[0]):
        return f"{len(errors)} error lines"
    if (r.exit_code == 2) != bool(errors):
        return f"exit {r.exit_code} with {len(errors)} error lines"
    return None


# -- a small TOML writer (the mutants are dictionaries; tomllib only reads) ------------------

def _toml_value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v)
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{json.dumps(k)} = {_toml_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(type(v))


def to_toml(doc: dict) -> str:
    lines = [f"{json.dumps(k)} = {_toml_value(v)}" for k, v in doc.items()
             if not isinstance(v, dict)]
    for k, v in doc.items():
        if isinstance(v, dict):
            lines.append(f"\n[{json.dumps(k)}]")
            lines += [f"{json.dumps(kk)} = {_toml_value(vv)}" for kk, vv in v.items()]
    return "\n".join(lines) + "\n"


# -- design mutations ------------------------------------------------------------------------

EXTREMES = [0, -1, 1, 2**63 - 1, -2**63, 2**70, 0.0, -0.0, 1e308, -1e308, 5e-324, 1e-300,
            math.inf, -math.inf, math.nan, 1.5, 0.5]
SWAPS = ["", "x" * 300, "1.0", True, False, [], [1, 2, 3], [[1, [2]]], {}, {"a": 1}, 3, 2.5,
         ["a", 1], [math.nan]]


def _paths(doc, prefix=()):
    for k, v in doc.items():
        yield (*prefix, k)
        if isinstance(v, dict):
            yield from _paths(v, (*prefix, k))


def _parent(doc, path):
    for k in path[:-1]:
        doc = doc[k]
    return doc


def mutate_design(text: str, kind: str, rnd: random.Random) -> bytes:
    """One mutant of the design ``text`` of the given kind."""
    if kind == "byte_flip":
        data = bytearray(text.encode())
        for _ in range(rnd.randint(1, 4)):
            data[rnd.randrange(len(data))] = rnd.randrange(256)
        return bytes(data)
    if kind == "truncate":
        data = text.encode()
        return data[:rnd.randrange(len(data))]
    doc = tomllib.loads(text)
    paths = list(_paths(doc))
    path = rnd.choice(paths)
    parent = _parent(doc, path)
    if kind == "delete":
        del parent[path[-1]]
    elif kind == "swap":
        parent[path[-1]] = rnd.choice(SWAPS)
    elif kind == "extreme":
        leaves = [p for p in paths if not isinstance(_parent(doc, p)[p[-1]], dict)]
        path = rnd.choice(leaves)
        parent, old = _parent(doc, path), _parent(doc, path)[path[-1]]
        new = rnd.choice(EXTREMES)
        if isinstance(old, list) and old:
            old[rnd.randrange(len(old))] = new
        else:
            parent[path[-1]] = new
    elif kind == "unknown":
        target = _parent(doc, path) if rnd.random() < 0.8 else doc
        target[rnd.choice(["colour", "frequncy", "count", "x" * 40])] = rnd.choice(SWAPS)
    return to_toml(doc).encode()


DESIGN_KINDS = ("delete", "swap", "extreme", "unknown", "byte_flip", "truncate")


@pytest.fixture(scope="module")
def fuzz_dir(tmp_path_factory):
    """A folder holding configs/data, so the designs' relative data files resolve."""
    d = tmp_path_factory.mktemp("fuzz")
    shutil.copytree(ROOT / "configs" / "data", d / "data")
    return d


@pytest.mark.parametrize("config", CONFIGS, ids=[c.stem for c in CONFIGS])
def test_design_mutants(config, fuzz_dir):
    text = config.read_text()
    assert run_cli(["analyze", config]).exit_code == 0  # the original is fine
    path = fuzz_dir / config.name

    @_settings(50)
    @given(kind=st.sampled_from(DESIGN_KINDS), seed=st.integers(0, 2**32 - 1))
    def case(kind, seed):
        path.write_bytes(mutate_design(text, kind, random.Random(seed)))
        r = run_cli(["analyze", path])
        problem = contract_problem(r)
        assert problem is None, f"{config.name} {kind} seed {seed}: {problem}"

    case()


# -- weight-file mutations ------------------------------------------------------------------

WDESIGN = """
[design]
name = "fuzz_tile"
frequency_hz = 299792458.0

[geometry]
kind = "rectangular"
units = "wavelength"
count_x = 3
count_y = 2
spacing_x = 0.5
spacing_y = 0.5

[element]
model = "isotropic"

[channel]
phase_bits = 4
attenuator_step_db = 1.0
attenuator_span_db = 7.0

[beams]
grid = "theta_phi"
theta_deg = [0, 30]
phi_deg = [0, 90]
"""

WEIGHT_SUFFIXES = tuple(f.suffix for f in WEIGHT_FORMATS.values())  # every registered format


@pytest.fixture(scope="module")
def weight_files(tmp_path_factory):
    d = tmp_path_factory.mktemp("wfuzz")
    design = d / "d.toml"
    design.write_text(WDESIGN)
    r = run_cli(["beams", design, "-o", d / "t"])
    assert r.exit_code == 0, r.output
    for s in WEIGHT_SUFFIXES:
        assert run_cli(["verify", design, d / f"t{s}"]).exit_code == 0
    return d, design


def mutate_bytes(data: bytes, kind: str, rnd: random.Random) -> bytes:
    if kind == "truncate":
        return data[:rnd.randrange(len(data))]
    out = bytearray(data)
    for _ in range(rnd.randint(1, 3)):
        i = rnd.randrange(len(out))
        out[i] = out[i] ^ (1 << rnd.randrange(8)) if rnd.random() < 0.5 else rnd.randrange(256)
    return bytes(out)


@pytest.mark.parametrize("suffix", WEIGHT_SUFFIXES)
def test_weight_file_mutants(suffix, weight_files):
    d, design = weight_files
    original = (d / f"t{suffix}").read_bytes()
    path = d / f"m{suffix}"

    @_settings(60)
    @given(kind=st.sampled_from(("flip", "truncate")), seed=st.integers(0, 2**32 - 1))
    def case(kind, seed):
        path.write_bytes(mutate_bytes(original, kind, random.Random(seed)))
        r = run_cli(["verify", design, path])
        problem = contract_problem(r)
        assert problem is None, f"{suffix} {kind} seed {seed}: {problem}"

    case()


# -- a few cases under an address-space limit -------------------------------------------------

_LIMITED = """
import resource, sys
resource.setrlimit(resource.RLIMIT_AS, (int(sys.argv[1]), int(sys.argv[1])))
from click.testing import CliRunner
from steradian.cli import main
r = CliRunner().invoke(main, ["analyze", sys.argv[2]])
bad = "Traceback" in r.stderr or r.exit_code not in (0, 1, 2)
print(f"{r.exit_code}{'!' if bad else ''}")
"""

OVERSIZED = [("geometry", "count_x", 150), ("geometry", "count_x", 10**9),
             ("geometry", "count_y", 2**40), ("design", "frequency_hz", 1e15),
             ("geometry", "spacing_x", 1e6), ("element", "q", 1e6)]


@pytest.mark.parametrize("table, key, value", OVERSIZED)
def test_oversized_mutant_under_a_memory_limit(fuzz_dir, table, key, value):
    """An oversized mutant of harbour_radar_panel in a subprocess limited to 3 GiB of address
    space ends within 60 s with exit 0, 1 or 2 and no traceback (refused up front by the
    resource guard, or a MemoryError shown as one line, exit 2)."""
    doc = tomllib.loads((ROOT / "configs" / "harbour_radar_panel.toml").read_text())
    doc[table][key] = value
    p = fuzz_dir / f"big_{key}.toml"
    p.write_text(to_toml(doc))
    env = {**os.environ, "PYTHONPATH": str(ROOT / "src")}
    r = subprocess.run([sys.executable, "-c", _LIMITED, str(3 << 30), str(p)],
                       capture_output=True, text=True, env=env, timeout=60)
    assert r.returncode == 0 and "!" not in r.stdout, (r.stdout, r.stderr[-1000:])


# -- Touchstone mutations (the [coupling] S-parameter file) ---------------------------------

TSDESIGN = """
[design]
name = "fuzz_coupled"
frequency_hz = 299792458.0

[geometry]
kind = "rectangular"
units = "wavelength"
count_x = 2
count_y = 2
spacing_x = 0.5
spacing_y = 0.5

[element]
model = "dipole"
length_wl = 0.48
axis = "x"

[coupling]
model = "touchstone"
file = "p.s4p"
ports = [2, 1, 4, 3]
scan_theta_max_deg = 30
"""


@pytest.fixture(scope="module")
def touchstone_files(tmp_path_factory):
    from steradian.array import Array
    from steradian.coupling import dipole_coupling
    from steradian.elements import Dipole
    from steradian.geometry import rectangular
    from steradian.io.touchstone import Network, write_touchstone

    d = tmp_path_factory.mktemp("tsfuzz")
    c = 299792458.0
    arr = Array(rectangular(2, 2, 0.5, 0.5), c, Dipole(0.48, "x", c))
    s = dipole_coupling(arr, radius=0.004).S
    write_touchstone(d / "p.s4p", Network([0.9 * c, 1.1 * c], [s, s], [50.0] * 4),
                     number_format="MA", unit="MHz")
    (d / "d.toml").write_text(TSDESIGN)
    assert run_cli(["analyze", d / "d.toml"]).exit_code == 0
    return d


def test_touchstone_mutants(touchstone_files):
    d = touchstone_files
    original = (d / "p.s4p").read_bytes()

    @_settings(60)
    @given(kind=st.sampled_from(("flip", "truncate")), seed=st.integers(0, 2**32 - 1))
    def case(kind, seed):
        (d / "p.s4p").write_bytes(mutate_bytes(original, kind, random.Random(seed)))
        r = run_cli(["analyze", d / "d.toml"])
        problem = contract_problem(r)
        assert problem is None, f"s4p {kind} seed {seed}: {problem}"

    case()
