"""Core benchmark: direct pattern evaluation and directivity against the naive numpy baseline.

Writes benchmarks/results/core.md. Run: ``.venv/bin/python benchmarks/bench_core.py``.

Rates are element-direction terms per second. The baseline is the naive numpy expression
``np.exp(1j*k*(pos @ dirs.T)) @ w`` timed in the same run on the same inputs.
"""

from __future__ import annotations

import subprocess
import sys
import time
from pathlib import Path

import numpy as np

import steradian as st
from steradian.engine import array_factor
from steradian.radiation import closed_form_power, radiated_power

HERE = Path(__file__).resolve().parent


def best_of(fn, repeat=3):
    best = np.inf
    out = None
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t)
    return best, out


def naive(pos, w, k, dirs):
    return np.exp(1j * k * (dirs @ pos.T)) @ w


def pattern_rows():
    rng = np.random.default_rng(1)
    rows = []
    k = 2 * np.pi
    for n, m in [(64, 200_000), (1024, 50_000), (10_000, 10_000)]:
        side = np.sqrt(n) / 2
        pos = np.column_stack([rng.uniform(-side, side, (n, 2)), np.zeros(n)])
        w = rng.normal(size=n) + 1j * rng.normal(size=n)
        d = rng.normal(size=(m, 3))
        d /= np.linalg.norm(d, axis=1, keepdims=True)
        array_factor(pos, w, k, d[:8], method="direct")  # compile / load cache
        # Naive numpy on a slice sized to ~40 MB of complex temporaries.
        mm = max(1, min(m, 2_500_000 // n))
        t_naive, ref = best_of(lambda mm=mm, pos=pos, w=w, d=d: naive(pos, w, k, d[:mm]))
        t_direct, out = best_of(
            lambda pos=pos, w=w, d=d: array_factor(pos, w, k, d, method="direct"))
        err = np.abs(out[:mm] - ref).max() / np.abs(ref).max()
        r_naive = n * mm / t_naive
        r_direct = n * m / t_direct
        rows.append((n, m, r_naive, r_direct, r_direct / r_naive, err))
    return rows


def directivity_rows():
    rows = []
    f = st.C0
    a = st.Array(st.rectangular(32, 32, 0.5), f)
    st.peak_directivity(a)  # warm up kernels
    t_peak, pk = best_of(lambda: st.peak_directivity(a))
    exact = 4 * np.pi * 1024**2 / closed_form_power(a.positions, a.weights(), a.k())
    rows.append(("32x32 isotropic, peak directivity (closed-form P, refined peak)", t_peak,
                 abs(pk.directivity - exact) / exact))
    t_q, q = best_of(lambda: radiated_power(a, method="quadrature"))
    exact_p = closed_form_power(a.positions, a.weights(), a.k())
    rows.append((f"32x32 isotropic, P_rad by quadrature ({q.n_theta} x {q.n_phi} nodes, "
                 "two rules)", t_q, abs(q.value - exact_p) / exact_p))
    b = st.Array(st.rectangular(32, 32, 0.5), f, element=st.CosinePower(1.0),
                 steering=st.Steering(30, 20))
    st.peak_directivity(b)
    t_b, pb = best_of(lambda: st.peak_directivity(b))
    rows.append(("32x32 cos-element scanned 30 deg, peak directivity (quadrature P)", t_b,
                 pb.power.error))
    return rows


def help_time():
    exe = Path(sys.executable).with_name("steradian")
    cmd = [str(exe), "--help"] if exe.exists() else [sys.executable, "-m", "steradian.cli",
                                                     "--help"]
    best = np.inf
    for _ in range(5):
        t = time.perf_counter()
        subprocess.run(cmd, check=True, capture_output=True)
        best = min(best, time.perf_counter() - t)
    return best


def main():
    prow = pattern_rows()
    drow = directivity_rows()
    th = help_time()
    lines = ["## Core: direct pattern evaluation and directivity\n",
             "Command: `.venv/bin/python benchmarks/bench_core.py`. Arbitrary planar positions, "
             "random directions, numba direct summation (`method=\"direct\"`) vs the naive numpy "
             "expression on the same inputs (best of 3).\n",
             "| N | M | naive numpy (terms/s) | numba direct (terms/s) | ratio | max rel. diff |",
             "|---:|---:|---:|---:|---:|---:|"]
    for n, m, rn, rd, ratio, err in prow:
        lines.append(f"| {n} | {m} | {rn:.3g} | {rd:.3g} | {ratio:.1f}x | {err:.1e} |")
    lines += ["", "| task | time (s) | relative error |", "|---|---:|---:|"]
    for name, t, err in drow:
        lines.append(f"| {name} | {t:.3f} | {err:.1e} |")
    lines += ["", f"`steradian --help` (fresh process, best of 5): {th:.3f} s.", ""]
    out = "\n".join(lines)
    (HERE / "results").mkdir(exist_ok=True)
    (HERE / "results" / "core.md").write_text(out)
    print(out)


if __name__ == "__main__":
    main()
