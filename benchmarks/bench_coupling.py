"""Coupling benchmark: a 16 x 16 induced-EMF dipole panel, active reflection over a 61 x 61
scan grid and maximum-realized-gain weights for 231 beams.

Writes benchmarks/results/coupling.md. Run: ``.venv/bin/python benchmarks/bench_coupling.py``.

Panel: 16 x 16 parallel 0.48-wavelength dipoles on a half-wave square lattice, 73 ohm ports.
Baselines in the same run, plain numpy one scan or one beam at a time: (a) for each scan,
the steering vector, b = S a and Gamma = b / a; (b) for each beam, the embedded responses
``np.exp(1j*k*(pos @ r)) * e(r)`` through T, then the 2 x 2 eigenproblem. Results agree with
the batched functions to rounding (checked here).
"""

from __future__ import annotations

import time
from pathlib import Path

import numpy as np

from steradian.array import Array
from steradian.coupling import dipole_coupling, max_realized_gain_weights, scan_map
from steradian.directions import unit_vectors_deg
from steradian.elements import Dipole
from steradian.geometry import rectangular
from steradian.units import C0

HERE = Path(__file__).resolve().parent


def timed(fn, repeat=3):
    best, out = np.inf, None
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t)
    return out, best


def naive_gamma(arr, c, th, ph):
    k, pos = arr.k(), arr.positions
    out = np.empty((arr.n, th.size), complex)
    for i, u in enumerate(unit_vectors_deg(th, ph)):
        a = np.exp(-1j * k * (pos @ u))
        out[:, i] = (c.S @ a) / a
    return out


def naive_best(arr, c, v):
    k, pos, el = arr.k(), arr.positions, arr.element
    g = np.empty(len(v))
    for i, r in enumerate(v):
        th, ph = np.arccos(r[2]), np.arctan2(r[1], r[0])
        et, ep = el.pattern(np.array([th]), np.array([ph]))
        ph_n = np.exp(1j * k * (pos @ r))
        B = np.stack([et[0] * ph_n, ep[0] * ph_n]) @ c.currents
        g[i] = 4 * np.pi * c.scale * np.linalg.eigvalsh(B @ B.conj().T)[-1]
    return g


def main():
    arr = Array(rectangular(16, 16, 0.5, 0.5), C0, Dipole(0.48, "x", C0))
    c, t_model = timed(lambda: dipole_coupling(arr, radius=0.004, z0=73.0))
    th, ph = (x.ravel() for x in np.meshgrid(np.linspace(0, 60, 61), np.linspace(0, 360, 61)))
    m, t_gamma = timed(lambda: scan_map(arr, c, th, ph, gain=False))
    ref, t_gamma0 = timed(lambda: naive_gamma(arr, c, th, ph), 1)
    assert np.allclose(m.gamma, ref, atol=1e-12)
    _, t_gain = timed(lambda: scan_map(arr, c, th, ph))
    bt, bp = np.meshgrid(np.linspace(0, 60, 11), np.linspace(0, 360, 21))
    v = unit_vectors_deg(bt.ravel(), bp.ravel())
    (w, g), t_best = timed(lambda: max_realized_gain_weights(arr, c, v))
    g0, t_best0 = timed(lambda: naive_best(arr, c, v), 1)
    assert np.allclose(g, g0, rtol=1e-10)
    rows = [
        ("impedance matrix, S, wave-to-current matrix (256 ports)", t_model, None),
        ("active reflection, 61 x 61 = 3721 scans", t_gamma, t_gamma0),
        ("active reflection + realized gain, 3721 scans", t_gain, None),
        (f"max realized gain weights, {len(v)} beams", t_best, t_best0),
    ]
    lines = ["## Coupling: 16 x 16 induced-EMF dipole panel", "",
             "Command: `.venv/bin/python benchmarks/bench_coupling.py`. Best of 3 (baselines "
             "once); baselines are plain numpy loops, one scan or beam at a time.", "",
             "| step | time (s) | baseline (s) | ratio |", "|---|---:|---:|---:|"]
    for name, t, t0 in rows:
        lines.append(f"| {name} | {t:.3f} | " + ("-" if t0 is None else f"{t0:.3f}") + " | "
                     + ("-" if t0 is None else f"{t0 / t:.1f}x") + " |")
    text = "\n".join(lines) + "\n"
    (HERE / "results").mkdir(exist_ok=True)
    (HERE / "results" / "coupling.md").write_text(text, encoding="utf-8")
    print(text)


if __name__ == "__main__":
    main()
