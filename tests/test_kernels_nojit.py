"""Every numba kernel against its plain-numpy meaning (also run with NUMBA_DISABLE_JIT=1).

The registry ``steradian.engine.KERNELS`` lists each kernel with small random inputs and its
meaning written in plain numpy: the array-factor sum AF = sum_n w_n exp(+j k u . r_n) (the
textbook definition), the phase matrix, sin/cos (numpy's libm), and the sinc pair sum
sum_mn w_m w_n* sin(k r_mn)/(k r_mn) (R. J. Mailloux, *Phased Array Antenna Handbook*, 3rd
ed., 2018, ch. 2), whose distances are checked here against scipy.spatial.distance.pdist.
A second test makes sure no jitted function of the package is missing from the registry.
"""

from __future__ import annotations

import ast
from pathlib import Path

import numpy as np
import pytest

import steradian
from steradian.engine import KERNELS

pytestmark = pytest.mark.nojit

JIT_DECORATORS = {"njit", "jit", "vectorize", "guvectorize", "stencil", "cfunc"}


@pytest.mark.parametrize("name", sorted(KERNELS))
def test_kernel_equals_its_meaning(name):
    """The kernel (parallel or one-thread, or an inlined helper) equals its plain meaning on
    three sets of small random inputs."""
    entry = KERNELS[name]
    rng = np.random.default_rng(20261202)
    for _ in range(3):
        args = entry.inputs(rng)
        got = np.asarray(entry.run(entry.function, args))
        want = np.asarray(entry.meaning(args))
        assert got.shape == want.shape
        assert np.all(np.abs(got - want) <= entry.tolerance(args)), name


def test_sinc_meaning_against_scipy_distances():
    """The sinc pair sum's plain meaning uses the same distances as scipy's pdist
    (sum_mn w_m w_n* sinc(k r_mn), numpy's sinc(x) = sin(pi x)/(pi x))."""
    from scipy.spatial.distance import pdist, squareform

    entry = KERNELS["sinc_power"]
    args = entry.inputs(np.random.default_rng(7))
    px, py, pz, wr, wi, k = args
    w = wr + 1j * wi
    S = np.sinc(k * squareform(pdist(np.column_stack([px, py, pz]))) / np.pi)
    exact = float(np.real(w @ S @ w.conj()))
    assert abs(entry.meaning(args) - exact) < 1e-13 * (np.abs(w) ** 2).sum() * len(w)


def _jitted_functions() -> set[tuple[str, str]]:
    """(module file, function name) of every function the package decorates with numba."""
    found = set()
    root = Path(steradian.__file__).resolve().parent
    for path in sorted(root.rglob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(), str(path))):
            if not isinstance(node, ast.FunctionDef):
                continue
            for dec in node.decorator_list:
                target = dec.func if isinstance(dec, ast.Call) else dec
                name = target.attr if isinstance(target, ast.Attribute) else getattr(
                    target, "id", "")
                if name in JIT_DECORATORS:
                    found.add((path.relative_to(root).as_posix(), node.name))
    return found


def test_every_jitted_function_is_registered():
    """Each function decorated by numba anywhere in the package has a KERNELS entry (so the
    JIT-disabled run covers it), and each entry is such a function."""
    jitted = _jitted_functions()
    assert jitted, "the scan found no numba kernels at all"
    registered = set()
    for entry in KERNELS.values():
        f = getattr(entry.function, "py_func", entry.function)
        mod = f.__module__.split(".")
        registered.add(("/".join(mod[1:]) + ".py", f.__name__))
    assert jitted == registered
