"""Scale benchmark: every pattern-engine path against the naive numpy baseline and the
machine's ceilings, measured in the same run.

Usage: ``python benchmarks/bench_scale.py`` (writes ``benchmarks/results/scale.md``), or as
part of ``python benchmarks/run.py``.

Rates are element-direction terms per second, N * M / time. The baseline is the naive numpy
expression ``np.exp(1j*k*(pos @ dirs.T)) @ w``; where it (or direct summation) would take
too long it runs on a subsample of directions and its time is extrapolated linearly in M
(said so in the table). Ceilings: sin/cos pairs per second of the inlined polynomial used by
direct summation (each term needs one pair), and complex multiply-adds per second of a large
complex matrix product (what a brute-force product of phase matrix and weights could reach).
Every timing is of a warm path (compiled kernels loaded, first call discarded) and the best
of a few repeats unless marked one-shot.
"""

from __future__ import annotations

import datetime
import os
import platform
import sys
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "src"))

import steradian as st  # noqa: E402
from steradian import engine, radiation  # noqa: E402
from steradian.directions import UVGrid  # noqa: E402

K = 2 * np.pi  # 1 m wavelength
F1 = st.C0
RNG = np.random.default_rng(20261202)


def best(fn, reps=3):
    """Best wall time of ``reps`` calls (s) and the last result."""
    out, tbest = None, np.inf
    for _ in range(reps):
        t = time.perf_counter()
        out = fn()
        tbest = min(tbest, time.perf_counter() - t)
    return tbest, out


def disc(n, density=4.0):
    """n random elements in a disc, mean density ``density`` per square wavelength."""
    radius = np.sqrt(n / density / np.pi)
    r = radius * np.sqrt(RNG.random(n))
    a = 2 * np.pi * RNG.random(n)
    return np.column_stack([r * np.cos(a), r * np.sin(a), np.zeros(n)])


def sphere_dirs(m):
    v = RNG.normal(size=(m, 3))
    return v / np.linalg.norm(v, axis=1, keepdims=True)


def naive(pos, w, dirs):
    return np.exp(1j * K * (pos @ dirs.T).T) @ w


# ---- ceilings ----------------------------------------------------------------------------

def sincos_ceiling():
    """Polynomial sin/cos pairs per second on all threads (the direct-summation ceiling)."""
    from numba import njit, prange

    from steradian.engine import KERNELS

    sincos = KERNELS["sincos"].function

    @njit(parallel=True, fastmath=True)
    def burn(x, reps):
        acc = 0.0
        for r in prange(reps):
            s = 0.0
            for i in range(x.shape[0]):
                a, b = sincos(x[i] + r)
                s += a + b
            acc += s
        return acc

    x = RNG.uniform(-300, 300, 1_000_000)
    burn(x[:10], 2)
    reps = 64
    t, _ = best(lambda: burn(x, reps), 3)
    return reps * len(x) / t


def cmac_ceiling(n=1536):
    """Complex multiply-adds per second of an n x n complex matrix product (BLAS)."""
    a = RNG.normal(size=(n, n)) + 1j * RNG.normal(size=(n, n))
    b = RNG.normal(size=(n, n)) + 1j * RNG.normal(size=(n, n))
    a @ b
    t, _ = best(lambda: a @ b, 3)
    return n**3 / t


# ---- tasks -------------------------------------------------------------------------------

ROWS: list[dict] = []


def record(task, path, n, m, t, err=None, note=""):
    ROWS.append({"task": task, "path": path, "n": n, "m": m, "t": t, "rate": n * m / t,
                 "err": err, "note": note})


def compare_paths(task, pos, w, where, m, sample_dirs, *, naive_sample=2000,
                  direct_sample=None, lattice=None):
    """Time auto, direct (maybe subsampled) and naive (subsampled) on one task."""
    n = len(pos)
    pc = engine.choose_path(pos, K, where, lattice=lattice)
    engine.array_factor(pos, w, K, where)  # warm (kernels, FFT twiddles)

    def cold():
        engine.clear_plan_cache()  # every call plans its transform afresh
        return engine.array_factor(pos, w, K, where)

    t_auto, got = best(cold, 3)
    t_one = t_auto
    # Accuracy: the fast result at the sample against direct summation there.
    idx, dvec = sample_dirs
    exact = engine.array_factor(pos, w, K, dvec, method="direct")
    e = float(np.abs(got[idx] - exact).max() / np.abs(w).sum())
    e_peak = float(np.abs(got[idx] - exact).max() / np.abs(exact).max())
    record(task, f"auto: {pc.method} ({pc.detail})", n, m, t_one,
           e, f"one-shot (plan included); error vs direct on {len(idx)} directions "
              f"{e:.1e} of sum|w|, {e_peak:.1e} of the sampled peak")
    vec = where.vectors if not isinstance(where, np.ndarray) else where
    if direct_sample is None or direct_sample >= m:
        t_dir, _ = best(lambda: engine.array_factor(pos, w, K, vec, method="direct"), 2)
        record(task, "direct (numba)", n, m, t_dir)
    else:
        sub = vec[:direct_sample]
        engine.array_factor(pos, w, K, sub, method="direct")
        t_s, _ = best(lambda: engine.array_factor(pos, w, K, sub, method="direct"), 2)
        t_dir = t_s * m / direct_sample
        record(task, "direct (numba)", n, m, t_dir,
               note=f"extrapolated from {direct_sample} directions")
    sub = vec[:naive_sample]
    t_s, _ = best(lambda: naive(pos, w, sub), 2)
    t_naive = t_s * m / len(sub)
    record(task, "naive numpy", n, m, t_naive,
           note=f"extrapolated from {len(sub)} directions" if len(sub) < m else "")
    return t_auto, t_dir, t_naive


def task_planar_million():
    n, m = 10_000, 1_000_000
    pos = disc(n)
    w = RNG.random(n) * np.exp(2j * np.pi * RNG.random(n))
    dirs = sphere_dirs(m)
    idx = RNG.choice(m, 2000, replace=False)
    task = "10,000 random planar elements -> 1,000,000 random directions"
    res = compare_paths(task, pos, w, dirs, m, (idx, dirs[idx]), direct_sample=20_000)
    # Plan reuse: same positions and directions, new weights (synthesis loop, beam table).
    w2 = RNG.random(n) * np.exp(2j * np.pi * RNG.random(n))
    engine.array_factor(pos, w, K, dirs)
    t_re, _ = best(lambda: engine.array_factor(pos, w2, K, dirs), 3)
    record(task, "auto, cached plan, new weights", n, m, t_re,
           note="positions and directions fixed (synthesis loop, beam table)")
    return res


def task_lattice_uv():
    geo = st.rectangular(64, 64, 0.5)
    g = UVGrid.square(512)
    m = 512 * 512
    idx = RNG.choice(m, 2000, replace=False)
    dv = g.vectors[idx]
    out = {}
    for label, taper in (("uniform (separable)", np.ones(geo.n)),
                         ("random taper", RNG.random(geo.n) + 0.2)):
        arr = st.Array(geo, F1, taper=taper, steering=st.Steering(20.0, 30.0))
        w = arr.weights()
        task = f"64 x 64 lattice -> 512 x 512 u-v grid, {label}"
        out[label] = compare_paths(task, geo.positions, w, g, m, (idx, dv), direct_sample=40_000,
                                   lattice=geo.lattice)
        st.field(arr, g)
        t_f, _ = best(lambda arr=arr: st.field(arr, g), 3)
        record(task, "field() end to end (auto)", geo.n, m, t_f,
               note="array factor, element, visibility mask")
    return out


def task_planar_uv():
    n = 10_000
    pos = disc(n)
    w = RNG.random(n) * np.exp(2j * np.pi * RNG.random(n))
    g = UVGrid(np.linspace(-0.83, 0.97, 512), np.linspace(-1.0, 0.61, 512))
    m = 512 * 512
    idx = RNG.choice(m, 2000, replace=False)
    return compare_paths("10,000 random planar elements -> 512 x 512 u-v grid (off-centre)",
                         pos, w, g, m, (idx, g.vectors[idx]), direct_sample=20_000)


def task_volume():
    n, m = 10_000, 200_000
    pos = RNG.uniform(-4, 4, (n, 3))
    w = RNG.random(n) * np.exp(2j * np.pi * RNG.random(n))
    dirs = sphere_dirs(m)
    idx = RNG.choice(m, 2000, replace=False)
    return compare_paths("10,000 random elements in an 8-wavelength cube -> 200,000 directions",
                         pos, w, dirs, m, (idx, dirs[idx]), direct_sample=20_000)


def task_power_and_peak():
    """Radiated power and peak directivity of 10,000 random planar elements."""
    out = []
    pos = disc(10_000)
    for label, el in (("isotropic", st.Isotropic()), ("cos^1.3 element", st.CosinePower(1.3))):
        arr = st.Array(st.Geometry(pos), F1, element=el, steering=st.Steering(25.0, 40.0))
        radiation.radiated_power(arr)  # warm (kernels, rules)
        radiation.peak_directivity(arr)
        arr = st.Array(st.Geometry(pos), F1, element=el, steering=st.Steering(25.0, 40.0))
        st.sphere.gauss_legendre.cache_clear()  # cold rules and plans: the first-call cost
        engine.clear_plan_cache()
        t0 = time.perf_counter()
        p = radiation.radiated_power(arr)
        t1 = time.perf_counter()
        pk = radiation.peak_directivity(arr, power=p)
        t2 = time.perf_counter()
        if label == "isotropic":
            exact = radiation.radiated_power(arr, method="closed_form").value
            ref_note = "closed form 4 pi sum w w* sinc"
        else:
            fine = st.sphere.rule_for(arr, margin=30)
            exact = fine.integrate(engine.field(arr, fine.grid, method="direct").intensity)
            ref_note = "margin-30 rule by direct summation"
        u = engine.field(arr, [pk.unit], method="direct").intensity[0]
        d_direct = 4 * np.pi * u / exact
        out.append({"label": label, "t_power": t1 - t0, "t_peak": t2 - t1, "method": p.method,
                    "rule": f"{p.n_theta} x {p.n_phi}", "p_err": abs(p.value - exact) / exact,
                    "d_err": abs(pk.directivity - d_direct) / d_direct, "ref": ref_note,
                    "d_dbi": pk.directivity_dbi})
    return out


def crossover():
    """Small and medium tasks: auto must never be slower than direct summation."""
    rows = []
    cases = [("planar", 16, 100), ("planar", 64, 1000), ("planar", 256, 4096),
             ("planar", 1024, 16384), ("planar", 4096, 65536), ("3-D", 256, 4096),
             ("3-D", 2048, 32768)]
    for kind, n, m in cases:
        pos = disc(n) if kind == "planar" else RNG.uniform(-2, 2, (n, 3))
        w = RNG.normal(size=n) + 1j * RNG.normal(size=n)
        dirs = sphere_dirs(m)
        rows.append(_cross_row(f"{kind}, random directions", pos, w, dirs, n, m))
    for nx, nu in ((8, 32), (16, 64), (32, 128)):
        geo = st.rectangular(nx, nx, 0.5)
        w = RNG.random(geo.n) + 0.1 + 0j
        g = UVGrid.square(nu)
        rows.append(_cross_row(f"{nx} x {nx} lattice, {nu} x {nu} u-v", geo.positions, w, g,
                               geo.n, nu * nu))
    for nt in (12, 40):
        pos = disc(nt * nt // 2)
        w = RNG.normal(size=len(pos)) + 0j
        rule = st.sphere.sphere_rule(nt, 2 * nt)
        rows.append(_cross_row(f"planar, {nt} x {2 * nt} sphere rule", pos, w, rule.grid,
                               len(pos), nt * 2 * nt))
    return rows


def _cross_row(label, pos, w, where, n, m):
    pc = engine.choose_path(pos, K, where)
    engine.array_factor(pos, w, K, where)
    engine.array_factor(pos, w, K, where, method="direct")
    reps = 20 if n * m < 1e7 else 3
    t_auto, _ = best(lambda: engine.array_factor(pos, w, K, where), reps)
    t_dir, _ = best(lambda: engine.array_factor(pos, w, K, where, method="direct"), reps)
    return {"label": label, "n": n, "m": m, "method": pc.method, "t_auto": t_auto,
            "t_dir": t_dir}


def library_comparison():
    """ducc0 against finufft, type 3, when finufft happens to be installed (not a dependency)."""
    try:
        import finufft
    except ImportError:
        return None
    import ducc0
    import ducc0.nufft as nf

    plan3 = getattr(nf, "plan3", None) or nf.experimental.plan3

    n, m = 10_000, 1_000_000
    pos = disc(n)
    w = RNG.normal(size=n) + 1j * RNG.normal(size=n)
    d = sphere_dirs(m)
    idx = RNG.choice(m, 1000, replace=False)
    exact = engine.array_factor(pos, w, K, d[idx], method="direct")
    src = np.ascontiguousarray(K * pos[:, :2])
    dst = np.ascontiguousarray(d[:, :2])
    nt = len(os.sched_getaffinity(0))
    rows = []
    for tol in (1e-9, 1e-12):
        def fin(tol=tol):
            return finufft.nufft2d3(src[:, 0].copy(), src[:, 1].copy(), w, dst[:, 0].copy(),
                                    dst[:, 1].copy(), isign=1, eps=tol, nthreads=nt)

        def duc(tol=tol):
            return plan3(coord_in=src, coord_out=dst, epsilon=tol,
                         nthreads=nt).exec(forward=False, points_in=w)

        for name, fn in (("finufft " + finufft.__version__, fin),
                         ("ducc0 " + ducc0.__version__, duc)):
            fn()
            t, out = best(fn, 2)
            e = float(np.abs(out[idx] - exact).max() / np.abs(w).sum())
            rows.append((name, tol, t, e))
    return rows


# ---- report ------------------------------------------------------------------------------

def fmt_t(t):
    return f"{t * 1e3:.1f} ms" if t < 1 else f"{t:.2f} s"


def main() -> int:
    t_start = time.perf_counter()
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    print("ceilings ...", flush=True)
    sc = sincos_ceiling()
    cm = cmac_ceiling()
    print("tasks ...", flush=True)
    t1 = task_planar_million()
    t3 = task_lattice_uv()
    task_planar_uv()
    task_volume()
    pw = task_power_and_peak()
    print("crossover ...", flush=True)
    cx = crossover()
    print("libraries ...", flush=True)
    libs = library_comparison()
    load_end = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")

    L = ["## Scale: pattern-engine paths\n",
         "Produced by `python benchmarks/bench_scale.py` on "
         f"{datetime.date.today().isoformat()}, {platform.machine()}, "
         f"{os.cpu_count()} CPUs, Python {platform.python_version()}, numpy "
         f"{np.__version__}; load average {load:.1f} at the start and {load_end:.1f} at the "
         "end (above 0.5 means other work shared the cores and the times are provisional). "
         f"Whole run {time.perf_counter() - t_start:.0f} s.\n",
         "Ceilings measured in this run: "
         f"**{sc:.2e} sin/cos pairs/s** (inlined polynomial, all threads: the most direct "
         f"summation can reach, one pair per term) and **{cm:.2e} complex multiply-adds/s** "
         "(1536 x 1536 complex matrix product: the most a brute-force phase-matrix product "
         "can reach).\n",
         "| task | path | N | M | time | terms/s | vs naive | of ceiling | notes |",
         "|---|---|---:|---:|---:|---:|---:|---:|---|"]
    naive_t = {r["task"]: r["t"] for r in ROWS if r["path"] == "naive numpy"}
    for r in ROWS:
        ceil = sc if r["path"].startswith("direct") else cm
        frac = r["rate"] / ceil
        L.append(f"| {r['task']} | {r['path']} | {r['n']:,} | {r['m']:,} | {fmt_t(r['t'])} | "
                 f"{r['rate']:.2e} | {naive_t[r['task']] / r['t']:.0f}x | {frac:.2g} | "
                 f"{r['note']} |")
    L.append("\n'of ceiling' divides terms/s by the sin/cos ceiling for direct summation and by "
             "the complex multiply-add ceiling otherwise; transforms exceed 1 because they do "
             "fewer operations than N x M.\n")
    L.append("### Radiated power and peak directivity, 10,000 random planar elements\n")
    L.append("| element | P_rad path (rule) | P_rad time | peak time | total | P_rad error | "
             "D_peak error | D_peak | reference |")
    L.append("|---|---|---:|---:|---:|---:|---:|---:|---|")
    for p in pw:
        L.append(f"| {p['label']} | {p['method']} ({p['rule']}) | {fmt_t(p['t_power'])} | "
                 f"{fmt_t(p['t_peak'])} | {fmt_t(p['t_power'] + p['t_peak'])} | "
                 f"{p['p_err']:.1e} | {p['d_err']:.1e} | {p['d_dbi']:.2f} dBi | {p['ref']} |")
    L.append("\nErrors are relative; D_peak is compared with direct summation at the refined "
             "peak direction over the reference P_rad.\n")
    L.append("### Crossover: the cost model on small and medium tasks\n")
    L.append("| case | N | M | auto picks | auto | direct | auto / direct |")
    L.append("|---|---:|---:|---|---:|---:|---:|")
    worst = 0.0
    for c in cx:
        ratio = c["t_auto"] / c["t_dir"]
        worst = max(worst, ratio)
        L.append(f"| {c['label']} | {c['n']:,} | {c['m']:,} | {c['method']} | "
                 f"{c['t_auto'] * 1e3:.3f} ms | {c['t_dir'] * 1e3:.3f} ms | {ratio:.2f} |")
    L.append(f"\nWorst auto / direct ratio: {worst:.2f} (1.00 when auto is direct; the "
             "same-path rows differ only by timing noise).\n")
    if libs:
        L.append("### Non-uniform FFT libraries, type 3, 10,000 planar -> 1,000,000 "
                 "directions\n")
        L.append("| library | tol | time (plan + execute) | max error / sum abs w |")
        L.append("|---|---:|---:|---:|")
        for name, tol, t, e in libs:
            L.append(f"| {name} | {tol:g} | {fmt_t(t)} | {e:.1e} |")
        L.append("\n(finufft is not a dependency; this section appears only where it is "
                 "installed.)\n")
    t_auto1, t_dir1, t_naive1 = t1
    tu = t3["random taper"][0]
    tot = [p["t_power"] + p["t_peak"] for p in pw]
    L.append("### Targets\n")
    L.append(f"- 10,000 planar -> 1,000,000 directions under 0.5 s with error under 1e-9: "
             f"{fmt_t(t_auto1)}, error {ROWS[0]['err']:.1e} "
             f"({'met' if t_auto1 < 0.5 and ROWS[0]['err'] < 1e-9 else 'NOT met'}).")
    L.append(f"- Radiated power and peak directivity of 10,000 planar elements under 0.5 s to "
             f"1e-9: {', '.join(fmt_t(t) for t in tot)} "
             f"({'met' if max(tot) < 0.5 and all(p['p_err'] < 1e-9 and p['d_err'] < 1e-9 for p in pw) else 'NOT met'}).")  # noqa: E501
    L.append(f"- 64 x 64 lattice -> 512 x 512 u-v under 20 ms: {fmt_t(tu)} with a random taper, "
             f"{fmt_t(t3['uniform (separable)'][0])} separable "
             f"({'met' if tu < 0.02 else 'NOT met'}).")
    L.append(f"- No task slower than direct: worst auto/direct {worst:.2f} "
             f"({'met' if worst < 1.25 else 'NOT met'}; ratios up to about 1.2 are timing "
             "noise on a shared machine).")
    text = "\n".join(L) + "\n"
    (HERE / "results").mkdir(exist_ok=True)
    out = HERE / "results" / "scale.md"
    tmp = out.with_suffix(".md.tmp")
    tmp.write_text(text)
    tmp.replace(out)
    print(text)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
