"""The package's import structure: parts with one job each, imports pointing down only.

Parses every module of ``src/steradian`` (module-level and function-level imports alike) and
fails on:

- an import cycle between modules;
- an import from a lower part of the package to a higher one (the layer table below, which
  DEVELOPERS.md describes);
- the use of another module's private name: ``from m import _name`` or ``m._name`` for a
  steradian module ``m``, and the import of a private module (``_kernels``) from outside the
  package that holds it;
- a test file importing a private module or name (tests use public names only).

The checker itself is exercised on small synthetic packages, so a passing run means the rules
were applied, not that the parser saw nothing.
"""

from __future__ import annotations

import ast
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SRC = ROOT / "src"
PACKAGE = "steradian"

# Lowest first. A module may import modules of its own layer or of lower layers. The longest
# matching prefix decides a module's layer.
LAYERS: list[tuple[str, tuple[str, ...]]] = [
    ("base values", ("steradian.errors", "steradian.version", "steradian.units",
                     "steradian.validate", "steradian.schema", "steradian.settings",
                     "steradian.budget")),
    ("directions", ("steradian.directions", "steradian.samples")),
    ("geometry and sphere rules", ("steradian.geometry", "steradian.sphere")),
    ("elements", ("steradian.elements",)),
    ("array", ("steradian.array",)),
    ("engine", ("steradian.engine",)),
    ("radiation", ("steradian.radiation", "steradian.aperture")),
    ("patterns and metrics", ("steradian.patterns", "steradian.metrics")),
    ("analysis", ("steradian.analysis", "steradian.requirements")),
    ("coupling", ("steradian.coupling",)),
    ("synthesis", ("steradian.tapers", "steradian.optimize")),
    ("hardware", ("steradian.quantize", "steradian.beamtable")),
    ("studies", ("steradian.studies",)),
    ("files", ("steradian.io",)),
    ("face", ("steradian.workflows", "steradian.plots", "steradian.report",
              "steradian.studyrun", "steradian.studypreload")),
    ("command line", ("steradian.cli",)),
    ("package root", ("steradian",)),
]

# Parts that may not use certain lower parts although the layers would allow it: files read
# and write values and never compute a pattern, a metric or a synthesis.
FORBIDDEN: dict[str, tuple[str, ...]] = {
    "steradian.io": ("steradian.engine", "steradian.sphere", "steradian.radiation",
                     "steradian.patterns", "steradian.metrics", "steradian.analysis",
                     "steradian.optimize"),
}

# The only imports allowed against the layers: deprecated methods kept so that names the
# README used keep working (each warns DeprecationWarning and names its replacement). Remove
# the method and its line here together.
DEPRECATED_SHIMS: dict[tuple[str, str], str] = {
    ("steradian.io.design", "steradian.workflows"): "Design.analyze",
    ("steradian.optimize._tradeoff", "steradian.io.trade_curve"): "TradeCurve.write_csv",
    ("steradian.optimize._tradeoff", "steradian.plots"): "TradeCurve.figure",
}


def layer_of(module: str, layers=LAYERS) -> int:
    best, rank = -1, None
    for i, (_, prefixes) in enumerate(layers):
        for p in prefixes:
            if (module == p or module.startswith(p + ".")) and len(p) > best:
                best, rank = len(p), i
    if rank is None:
        raise KeyError(f"module {module} is in no layer: add it to LAYERS")
    return rank


def _is_private(name: str) -> bool:
    return name.startswith("_") and not (name.startswith("__") and name.endswith("__"))


def module_sources(src: Path, package: str) -> dict[str, tuple[Path, bool]]:
    """{dotted module name: (file, is_package)} for every .py file of ``package``."""
    out = {}
    for p in sorted((src / package).rglob("*.py")):
        parts = p.relative_to(src).with_suffix("").parts
        is_pkg = parts[-1] == "__init__"
        name = ".".join(parts[:-1] if is_pkg else parts)
        out[name] = (p, is_pkg)
    return out


def _resolve(importer: str, is_pkg: bool, node: ast.ImportFrom) -> str:
    if not node.level:
        return node.module or ""
    base = importer.split(".") if is_pkg else importer.split(".")[:-1]
    if node.level > 1:
        base = base[: len(base) - (node.level - 1)]
    return ".".join(base + ([node.module] if node.module else []))


def analyse(src: Path, package: str):
    """Import edges, private-name uses and private-module imports of ``package``.

    Returns (modules, edges, problems): ``edges`` maps a module to the set of package
    modules it imports; ``problems`` lists private-name and private-module violations.
    """
    modules = module_sources(src, package)
    edges: dict[str, set[str]] = {m: set() for m in modules}
    problems: list[str] = []
    for mod, (path, is_pkg) in modules.items():
        tree = ast.parse(path.read_text(), str(path))
        aliases: dict[str, str] = {}  # local name -> package module it refers to
        for node in ast.walk(tree):
            targets: list[tuple[str, str | None]] = []  # (module, imported name or None)
            if isinstance(node, ast.Import):
                for a in node.names:
                    if a.name == package or a.name.startswith(package + "."):
                        targets.append((a.name, None))
                        if a.asname:
                            aliases[a.asname] = a.name
            elif isinstance(node, ast.ImportFrom):
                base = _resolve(mod, is_pkg, node)
                if not (base == package or base.startswith(package + ".")):
                    continue
                for a in node.names:
                    sub = f"{base}.{a.name}"
                    if sub in modules:  # "from . import engine": a module
                        targets.append((sub, None))
                        aliases[a.asname or a.name] = sub
                    else:
                        targets.append((base, a.name))
            for target, name in targets:
                if target not in modules:
                    problems.append(f"{mod}: imports {target}, which does not exist")
                    continue
                if target != mod and (mod, target) not in DEPRECATED_SHIMS:
                    edges[mod].add(target)
                if name is not None and _is_private(name):
                    problems.append(f"{mod}: imports private name {name} from {target}")
                # A private module may be imported by its own package only.
                parts = target.split(".")
                for i, part in enumerate(parts):
                    if _is_private(part):
                        owner = ".".join(parts[:i])
                        own_pkg = mod if is_pkg else mod.rsplit(".", 1)[0]
                        if not (own_pkg == owner or own_pkg.startswith(owner + ".")):
                            problems.append(f"{mod}: imports private module {target}")
                        break
        for node in ast.walk(tree):
            if (isinstance(node, ast.Attribute) and isinstance(node.value, ast.Name)
                    and node.value.id in aliases and _is_private(node.attr)):
                problems.append(f"{mod}: uses private name {aliases[node.value.id]}."
                                f"{node.attr}")
    return modules, edges, problems


def find_cycles(edges: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components with more than one module (Tarjan, iterative)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on: set[str] = set()
    out: list[list[str]] = []
    counter = 0
    for root in sorted(edges):
        if root in index:
            continue
        work = [(root, iter(sorted(edges[root])))]
        index[root] = low[root] = counter
        counter += 1
        stack.append(root)
        on.add(root)
        while work:
            v, it = work[-1]
            advanced = False
            for w in it:
                if w not in index:
                    index[w] = low[w] = counter
                    counter += 1
                    stack.append(w)
                    on.add(w)
                    work.append((w, iter(sorted(edges.get(w, ())))))
                    advanced = True
                    break
                if w in on:
                    low[v] = min(low[v], index[w])
            if advanced:
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[v])
            if low[v] == index[v]:
                comp = []
                while True:
                    w = stack.pop()
                    on.discard(w)
                    comp.append(w)
                    if w == v:
                        break
                if len(comp) > 1:
                    out.append(sorted(comp))
    return out


def upward_imports(edges, layers=LAYERS) -> list[str]:
    bad = []
    for mod, targets in sorted(edges.items()):
        lm = layer_of(mod, layers)
        for t in sorted(targets):
            # A package's __init__ may import its own submodules (its public face).
            if t.startswith(mod + "."):
                continue
            lt = layer_of(t, layers)
            if lt > lm:
                bad.append(f"{mod} ({layers[lm][0]}) imports {t} ({layers[lt][0]})")
    return bad


def forbidden_imports(edges, forbidden=FORBIDDEN) -> list[str]:
    bad = []
    for mod, targets in sorted(edges.items()):
        for part, banned in forbidden.items():
            if mod == part or mod.startswith(part + "."):
                bad += [f"{mod} may not import {t}" for t in sorted(targets)
                        if any(t == b or t.startswith(b + ".") for b in banned)]
    return bad


def check(src: Path, package: str, layers=LAYERS) -> list[str]:
    """Every structure problem of ``package`` under ``src``, one line each."""
    _, edges, problems = analyse(src, package)
    cycles = [f"import cycle: {' -> '.join(c)}" for c in find_cycles(edges)]
    return cycles + upward_imports(edges, layers) + problems


# --------------------------------------------------------------------------------------------
# The package itself
# --------------------------------------------------------------------------------------------
def test_every_module_has_a_layer():
    for mod in module_sources(SRC, PACKAGE):
        layer_of(mod)


def test_no_cycles():
    _, edges, _ = analyse(SRC, PACKAGE)
    assert find_cycles(edges) == []


def test_imports_point_down():
    _, edges, _ = analyse(SRC, PACKAGE)
    assert upward_imports(edges) == []


def test_files_never_compute():
    _, edges, _ = analyse(SRC, PACKAGE)
    assert forbidden_imports(edges) == []


def test_no_private_names_across_modules():
    _, _, problems = analyse(SRC, PACKAGE)
    assert problems == []


def test_tests_use_public_names_only():
    bad = []
    for path in sorted((ROOT / "tests").glob("*.py")):
        tree = ast.parse(path.read_text(), str(path))
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom) and node.module and node.level == 0 and (
                    node.module == PACKAGE or node.module.startswith(PACKAGE + ".")):
                if any(_is_private(p) for p in node.module.split(".")):
                    bad.append(f"{path.name}:{node.lineno} imports {node.module}")
                bad += [f"{path.name}:{node.lineno} imports {node.module}.{a.name}"
                        for a in node.names if _is_private(a.name)]
            elif isinstance(node, ast.Import):
                bad += [f"{path.name}:{node.lineno} imports {a.name}" for a in node.names
                        if a.name.startswith(PACKAGE) and any(
                            _is_private(p) for p in a.name.split("."))]
    assert bad == []


# --------------------------------------------------------------------------------------------
# The checker on synthetic packages: it does find what it is meant to find
# --------------------------------------------------------------------------------------------
_TOY_LAYERS = [("low", ("toy.low",)), ("high", ("toy.high",)), ("root", ("toy",))]


def _toy(tmp_path, files: dict[str, str]) -> Path:
    src = tmp_path / "src"
    for name, text in {"toy/__init__.py": "", **files}.items():
        p = src / name
        p.parent.mkdir(parents=True, exist_ok=True)
        p.write_text(text)
    return src


def test_checker_passes_a_clean_package(tmp_path):
    src = _toy(tmp_path, {"toy/low.py": "X = 1\n", "toy/high.py": "from .low import X\n"})
    assert check(src, "toy", _TOY_LAYERS) == []


def test_checker_finds_a_cycle(tmp_path):
    src = _toy(tmp_path, {"toy/low/__init__.py": "from .a import f\n",
                          "toy/low/a.py": "def f():\n    from .b import g\n",
                          "toy/low/b.py": "from . import a\n", "toy/high.py": ""})
    problems = check(src, "toy", _TOY_LAYERS)
    assert "import cycle: toy.low.a -> toy.low.b" in problems


def test_checker_finds_an_upward_import(tmp_path):
    src = _toy(tmp_path, {"toy/low.py": "def f():\n    import toy.high\n",
                          "toy/high.py": ""})
    assert check(src, "toy", _TOY_LAYERS) == ["toy.low (low) imports toy.high (high)"]


@pytest.mark.parametrize("text, expected", [
    ("from .low import _hidden\n", "toy.high: imports private name _hidden from toy.low"),
    ("from . import low\nY = low._hidden\n", "toy.high: uses private name toy.low._hidden"),
    ("from .low._impl import f\n", "toy.high: imports private module toy.low._impl"),
])
def test_checker_finds_private_use(tmp_path, text, expected):
    src = _toy(tmp_path, {"toy/low/__init__.py": "from ._impl import f\n",
                          "toy/low/_impl.py": "def f():\n    pass\n_hidden = 1\n",
                          "toy/high.py": text})
    assert check(src, "toy", _TOY_LAYERS) == [expected]


def test_public_names_resolve_on_first_use():
    """Every name of ``steradian.__all__`` resolves (imported on first use) to the object
    its home module defines, and a study worker's import leaves the synthesis and plotting
    parts unimported (checked in a fresh process)."""
    import importlib

    import steradian

    for name in steradian.__all__:
        value = getattr(steradian, name)
        assert value is not None and name in dir(steradian)
        home = getattr(value, "__module__", None)
        if home and home.startswith("steradian.") and not name.startswith("__"):
            assert getattr(importlib.import_module(home), name, value) is value
    with pytest.raises(AttributeError, match="no attribute 'no_such_name'"):
        steradian.no_such_name  # noqa: B018
    code = ("import sys, steradian.studyrun\n"
            "print(sorted(m for m in ('steradian.optimize', 'steradian.plots', "
            "'steradian.report', 'matplotlib') if m in sys.modules))\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True)
    assert out.stdout.strip() == "[]"
