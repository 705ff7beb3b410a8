"""Beam-table benchmark: build, write every format, read back, verify from every file.

Writes benchmarks/results/beamtable.md. Run: ``.venv/bin/python benchmarks/bench_beamtable.py``.

The design is configs/balloon_downlink_tile.toml: a 16 x 16 half-wave tile of cosine
elements, Taylor 28 dB taper, 6-bit phase shifters, 0.5 dB attenuators over 31.5 dB,
measured calibration and randomised path offsets, 231 beams over +-50 deg az x +-25 deg el.

Baselines in the same run: (a) the naive numpy expression ``np.exp(1j*k*(dirs @ pos.T)) @ w``
evaluating each beam on the same search set (the step the batched evaluator does as one
matrix product with element responses computed once); (b) the straightforward per-beam path
of the library's single-beam functions (``radiated_power`` + ``peak_directivity`` +
``pattern_metrics``) on a few beams, scaled to the table.
"""

from __future__ import annotations

import os
import tempfile
import time
from pathlib import Path

import numpy as np

import steradian as st
from steradian.beamtable import BeamEvaluator
from steradian.io.design import load_design
from steradian.io.formats import read_weight_file, write_beam_files, write_weight_file
from steradian.workflows import beam_table_from_design, channel_of_design, verify_weight_file

HERE = Path(__file__).resolve().parent
DESIGN = HERE.parent / "configs" / "balloon_downlink_tile.toml"
LEVELS = ("directivity_dbi", "psl_db", "qlobe_db", "loss_db")


class Clock:
    def __init__(self):
        self.rows = []

    def __call__(self, name, fn):
        t = time.perf_counter()
        out = fn()
        self.rows.append((name, time.perf_counter() - t))
        return out


def fixed_point_bounds(ev, channel, table_iq, metrics):
    """First-order worst-case change (dB) of each level metric from Q1.15 rounding.

    Each I/Q component is within half an LSB (one LSB where +1.0 saturates), so
    |delta c_n| <= eps = 2^-15 and |delta E| <= eps * sum |cal_n| at any direction (element
    patterns peak at 1); the radiated power moves by at most 2 ||Q w|| eps ||cal||.
    """
    eps = 1.0 / 32768
    cal = np.ones(table_iq.n_elements) if channel.calibration is None else channel.calibration
    s = float(np.abs(cal).sum())
    w = channel.realise(table_iq.commanded(), table_iq.phase_offsets_deg, ev.array.enabled)
    P = ev.power(w)
    dP = 2 * np.linalg.norm(w @ ev.Q.T, axis=1) * eps * np.linalg.norm(cal) / P
    e_pk = np.sqrt(10 ** (metrics.directivity_dbi / 10) * P / (4 * np.pi))
    rel_pk = eps * s / e_pk

    def lvl(level_db):
        return 8.686 * (eps * s / (e_pk * 10 ** (level_db / 20)) + rel_pk)

    return {"directivity_dbi": 8.686 * rel_pk + 4.343 * dP,
            "loss_db": 8.686 * rel_pk + 4.343 * dP,
            "psl_db": lvl(metrics.psl_db), "qlobe_db": lvl(metrics.qlobe_db)}


def naive_grid(ev, W, n_beams):
    """Naive numpy: each beam on the search set, recomputing the phase terms per beam."""
    pos, k, dirs = ev.array.positions, ev.array.k(), ev.dirs
    el = ev.array.element.pattern(np.arccos(np.clip(dirs[:, 2], -1, 1)),
                                  np.arctan2(dirs[:, 1], dirs[:, 0]))[0]
    out = np.empty((len(dirs), n_beams))
    for b in range(n_beams):
        out[:, b] = np.abs(el * (np.exp(1j * k * (dirs @ pos.T)) @ W[b])) ** 2
    return out


def per_beam_library(array, W, n):
    for b in range(n):
        a = array.with_taper(W[b]).with_steering(None)
        pk = st.peak_directivity(a, power=st.radiated_power(a))
        st.pattern_metrics(a, peak=pk)


def main():
    load0 = os.getloadavg()
    clock = Clock()
    t_all = time.perf_counter()
    design = clock("load design", lambda: load_design(DESIGN))
    ch = channel_of_design(design)
    ev = clock("evaluator: power matrix Q + element responses on the search set",
               lambda: BeamEvaluator(design.array,
                                     efficiency=design.options.radiation_efficiency))
    build = clock("build: quantize + re-evaluate quantized and ideal beams",
                  lambda: beam_table_from_design(design, evaluator=ev))
    table = build.table
    nb, n = table.n_beams, table.n_elements
    tmp = Path(tempfile.mkdtemp(prefix="bench-beams-"))
    files = clock("write csv, json, bin (codes), h",
                  lambda: write_beam_files(table, tmp / "tile"))
    files["bin_iq"] = clock("write bin (Q1.15 I/Q)", lambda: write_weight_file(
        tmp / "tile_iq.bin", table, "bin", encoding="iq"))
    sizes = {k: p.stat().st_size for k, p in files.items()}
    same = {}
    for k, p in files.items():
        back = clock(f"read {p.name}", lambda p=p: read_weight_file(p))
        want = table.as_encoding("iq") if k == "bin_iq" else table
        same[k] = back.same_weights(want) and (k.startswith("bin") or (
            back.metadata == table.metadata and back.metrics == table.metrics))
    reports = {}
    for k, p in files.items():
        reports[k] = clock(f"verify from {p.name} (shared evaluator)",
                           lambda p=p: verify_weight_file(design, p, evaluator=ev)[1])
    total = time.perf_counter() - t_all
    fresh = Clock()
    fresh("verify from tile_iq.bin with a fresh evaluator (what the CLI does)",
          lambda: verify_weight_file(design, files["bin_iq"]))

    # Binary (Q1.15) report against the JSON (exact codes) report.
    mj, mb = reports["json"].metrics, reports["bin_iq"].metrics
    bounds = fixed_point_bounds(ev, ch, read_weight_file(files["bin_iq"]), mj)
    cmp_rows = []
    for f in LEVELS:
        d = np.abs(getattr(mj, f) - getattr(mb, f))
        cmp_rows.append((f, float(d.max()), float(np.max(d / bounds[f])),
                         float(np.max(bounds[f]))))
    dp = float(np.abs(mj.pointing_error_deg - mb.pointing_error_deg).max())
    exact_same = all(max(r.differences.values(), default=0.0) == 0.0
                     for k, r in reports.items() if k != "bin_iq")
    exact_codes = all(np.array_equal(getattr(reports[k].metrics, f), getattr(mj, f))
                      for k in ("csv", "h", "bin") for f in LEVELS)

    # Baselines.
    W = build.quantized.realised
    k_naive = 8
    t0 = time.perf_counter()
    naive_grid(ev, W, k_naive)
    t_naive = (time.perf_counter() - t0) / k_naive
    t0 = time.perf_counter()
    ev._grid(W)
    t_batched = (time.perf_counter() - t0) / nb
    k_lib = 3
    t0 = time.perf_counter()
    per_beam_library(design.array, W, k_lib)
    t_lib = (time.perf_counter() - t0) / k_lib
    t_eval = dict(clock.rows)["build: quantize + re-evaluate quantized and ideal beams"]
    t_verify = dict(clock.rows)["verify from tile.json (shared evaluator)"]
    load1 = os.getloadavg()

    s = build.metrics.summary()
    lines = [
        "## Beam tables: build, write, read back, verify\n",
        "Command: `.venv/bin/python benchmarks/bench_beamtable.py`. Design "
        "`configs/balloon_downlink_tile.toml`: 16 x 16 tile, Taylor 28 dB, 6-bit phase, "
        f"0.5 dB attenuator steps over 31.5 dB, calibration and random path offsets, {nb} "
        f"beams x {n} elements; search set of {len(ev.dirs)} directions. Load average "
        f"(1 min) {load0[0]:.2f} at start, {load1[0]:.2f} at end: the machine is shared, so "
        "times are provisional.\n",
        "| step | time (s) |", "|---|---:|"]
    lines += [f"| {name} | {t:.3f} |" for name, t in clock.rows]
    lines += [f"| **total, everything above** | **{total:.2f}** |",
              f"| {fresh.rows[0][0]} | {fresh.rows[0][1]:.3f} |", ""]
    lines += ["| file | bytes | read back identically |", "|---|---:|---|"]
    lines += [f"| {files[k].name} | {sizes[k]} | {'yes' if same[k] else 'NO'} |"
              for k in files]
    lines += ["", f"Table as built: peak directivity {s['directivity_dbi_min']:.3f} to "
              f"{s['directivity_dbi_max']:.3f} dBi, loss vs ideal mean {s['loss_db_mean']:.4f} "
              f"dB (worst {s['loss_db_max']:.4f} dB), worst PSL {s['psl_db_max']:.2f} dB, worst "
              f"quantization lobe {s['qlobe_db_max']:.2f} dB, worst RMS phase error "
              f"{s['rms_phase_error_deg_max']:.2f} deg.", "",
              "Verification reports from the CSV, C header and binary (codes) files equal the "
              f"JSON report exactly: {'yes' if exact_codes else 'NO'}; every stored metric "
              f"reproduced exactly: {'yes' if exact_same else 'NO'}. Binary with Q1.15 I/Q "
              "against JSON (exact codes), largest difference over the beams and its ratio to "
              "the fixed-point bound (|delta c| <= 2^-15 per weight, first order):", "",
              "| metric | max difference (dB) | max difference / bound | largest bound (dB) |",
              "|---|---:|---:|---:|"]
    lines += [f"| {f} | {d:.2e} | {r:.3f} | {b:.2e} |" for f, d, r, b in cmp_rows]
    lines += ["", f"Pointing error: max difference {dp:.1e} deg (beamwidth about 7 deg).", "",
              "Speed against the baselines (per beam):", "",
              "| evaluation | time per beam (s) | ratio |", "|---|---:|---:|",
              f"| naive numpy pattern on the search set | {t_naive:.2e} | 1x |",
              f"| batched: one product with precomputed responses | {t_batched:.2e} | "
              f"{t_naive / t_batched:.0f}x |",
              f"| per-beam library path (radiated_power + peak_directivity + pattern_metrics) "
              f"| {t_lib:.2e} | 1x |",
              f"| batched full re-evaluation (quantized + ideal, all metrics) | "
              f"{t_eval / nb:.2e} | {t_lib / (t_eval / nb):.0f}x |",
              f"| verification from a file (shared evaluator, ideal cached) | "
              f"{t_verify / nb:.2e} | {t_lib / (t_verify / nb):.0f}x |", ""]
    out = "\n".join(lines)
    (HERE / "results").mkdir(exist_ok=True)
    (HERE / "results" / "beamtable.md").write_text(out)
    print(out)


if __name__ == "__main__":
    main()
