"""Speed of strayline against baselines timed in the same run.

    python benchmarks/run.py [--sizes 1e4,1e5,1e6,1e7] [--quick] [--check]

Each line prints the median of several repeats, the baseline and their ratio beside the target,
with "ok" or "SHORT". Timings on a shared machine are noisy; ratios against a baseline measured
in the same run are what to read. ``--check`` exits non-zero when a target marked as stable at
small sizes is missed: λ agreeing with scipy, the exact ESD statistics and the bytes sent to the
browser (CI runs ``--quick --check``); speed ratios are printed, never checked, as timings on a
shared machine are noisy.
"""

from __future__ import annotations

import argparse
import gc
import json
import os
import sys
import time
import tracemalloc
from collections.abc import Callable
from typing import Any

import numpy as np
import pandas as pd
from scipy import stats as sps

import strayline
from strayline.stats import location, rules
from strayline.stats.medcouple import medcouple_sorted
from strayline.stats.normality import normality_sorted
from strayline.stats.qq import fit_line, normal_quantiles
from strayline.stats.transform import boxcox_lambda, yeojohnson_lambda

FAILURES: list[str] = []


def timed(fn: Callable[[], Any], repeats: int = 5) -> float:
    times = []
    for _ in range(repeats):
        gc.collect()
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return float(np.median(times))


def report(name: str, n: int, t: float, base: float, base_name: str, target: str,
           ok: bool | None, stable: bool = False) -> None:
    """One line: our time, the baseline's, and time / baseline (or baseline / time, marked
    'x faster', when the target is a speed-up)."""
    faster = "faster" in target
    ratio = (base / t if t > 0 else float("inf")) if faster else (
        t / base if base > 0 else float("inf"))
    what = "x faster" if faster else "x slower"
    mark = "" if ok is None else ("ok" if ok else "SHORT")
    print(f"{name:<24} n={n:>10,}  {t * 1e3:10.2f} ms  {base_name:<22} {base * 1e3:10.2f} ms  "
          f"{ratio:8.2f}{what}  target {target:<20} {mark}")
    if stable and ok is False:
        FAILURES.append(f"{name} at n={n}: ratio {ratio:.2f}, target {target}")


def full_screen(x: np.ndarray) -> None:
    """Everything one column's screen computes, from the raw values, as the Screen does it:
    one sort, the Q–Q line (whose r is the PPCC), both fences, both kinds of z-scores, the
    moments and the normality tests."""
    s = np.sort(x)
    m = normal_quantiles(s.size)
    r = fit_line(m, s)[2]
    rules.sorted_fences(s, 1.5)
    rules.sorted_adjusted_fences(s, 1.5)
    med, mad = rules.robust_center_scale(s)
    (x - med) / mad
    mean, sd = rules.zscore_center_scale(s, ascending=True)
    (x - mean) / sd
    normality_sorted(s, ppcc=r, m=location.moments(s, ascending=True))


def bench_full(sizes: list[int], rng: np.random.Generator) -> None:
    print("\n# full screen of one column vs one numpy.sort")
    for n in sizes:
        x = rng.lognormal(size=n)
        reps = 3 if n >= 10**7 else 5
        base = timed(lambda x=x: np.sort(x), reps)
        normal_quantiles(n)  # depends on n alone: cached, as in the panel
        t = timed(lambda x=x: full_screen(x), reps)
        report("full screen", n, t, base, "numpy.sort", "<= 3x slower (1e6+)",
               None if n < 10**6 else t / base <= 3)
        if n >= 10**6:
            breakdown(x, base, reps)


def breakdown(x: np.ndarray, base: float, reps: int) -> None:
    """Where the full screen's time goes, each part in sorts of the same array."""
    s = np.sort(x)
    m = normal_quantiles(s.size)
    mom = location.moments(s, ascending=True)
    parts = {
        "Q-Q line and r": lambda: fit_line(m, s),
        "medcouple, adjusted fences": lambda: rules.sorted_adjusted_fences(s, 1.5),
        "z-scores of every row (both)": lambda: ((x - 1.0) / 2.0, (x - 1.0) / 2.0),
        "moments": lambda: location.moments(s, ascending=True),
        "normality tests (A², K²)": lambda: normality_sorted(s, ppcc=0.99, m=mom),
    }
    line = ", ".join(f"{name} {timed(fn, reps) / base:.1f}" for name, fn in parts.items())
    print(f"  in sorts: sort 1.0, {line}")


def pairwise_medcouple(s: np.ndarray) -> float:
    from statsmodels.stats.stattools import _medcouple_1d_legacy

    return float(_medcouple_1d_legacy(s))


def bench_medcouple(sizes: list[int], rng: np.random.Generator, quick: bool) -> None:
    print("\n# medcouple: ours (O(n log n)) vs statsmodels and the pairwise definition")
    from statsmodels.stats.stattools import medcouple as sm_medcouple

    for n in sizes:
        s = np.sort(rng.lognormal(size=n))
        t = timed(lambda s=s: medcouple_sorted(s), 3 if n >= 10**6 else 5)
        if n <= 20_000:
            base = timed(lambda s=s: pairwise_medcouple(s), 1)
            report("medcouple", n, t, base, "pairwise O(n^2)", "faster", t < base)
        if n <= (20_000 if quick else 200_000):
            base = timed(lambda s=s: sm_medcouple(s), 1)
            report("medcouple", n, t, base, "statsmodels", "faster", t < base)
        if n >= 10**7:
            print(f"{'medcouple at 1e7':<34} {t:.2f} s  target under 5 s  "
                  f"{'ok' if t < 5 else 'SHORT'}")
    print("  largest n run for statsmodels here:", 20_000 if quick else 200_000,
          "(its memory grows as n^2 / 4 pairs in the pairwise form)")


def naive_gesd(x: np.ndarray, r: int) -> np.ndarray:
    """Straightforward generalized ESD: recompute mean and SD after each removal."""
    y = x.copy()
    stats_ = np.empty(r)
    for i in range(r):
        mean, sd = y.mean(), y.std(ddof=1)
        j = int(np.argmax(np.abs(y - mean)))
        stats_[i] = abs(y[j] - mean) / sd
        y = np.delete(y, j)
    return stats_


def bench_gesd(n: int, r: int, rng: np.random.Generator) -> None:
    print(f"\n# generalized ESD, max_outliers = {r}")
    x = rng.normal(size=n)
    x[:20] += 8
    t = timed(lambda: rules.gesd(x, r), 3)
    base = timed(lambda: naive_gesd(x, r), 1)
    np.testing.assert_allclose(rules.gesd(x, r).statistics, naive_gesd(x, r), rtol=1e-9)
    report("gesd", n, t, base, "loop recomputing SD", ">= 50x faster (1e6)",
           None if n < 10**6 else base / t >= 50)


def bench_lambda(n: int, rng: np.random.Generator) -> None:
    print("\n# Box–Cox and Yeo–Johnson lambda vs scipy")
    x = rng.lognormal(0.5, 0.6, size=n)
    t = timed(lambda: boxcox_lambda(x), 3)
    base = timed(lambda: sps.boxcox(x), 3)
    diff = abs(boxcox_lambda(x) - sps.boxcox(x)[1])
    report("boxcox lambda", n, t, base, "scipy.stats.boxcox", ">= 5x faster",
           base / t >= 5)
    _agrees("boxcox", diff)
    y = x - 1.2
    t = timed(lambda: yeojohnson_lambda(y), 3)
    base = timed(lambda: sps.yeojohnson(y), 3)
    diff = abs(yeojohnson_lambda(y) - sps.yeojohnson(y)[1])
    report("yeojohnson lambda", n, t, base, "scipy.stats.yeojohnson", ">= 5x faster",
           base / t >= 5)
    _agrees("yeojohnson", diff)


def _agrees(name: str, diff: float) -> None:
    ok = diff < 1e-4
    print(f"  |lambda - scipy| = {diff:.2e}  target < 1e-4  {'ok' if ok else 'SHORT'}")
    if not ok:
        FAILURES.append(f"{name} lambda differs from scipy by {diff:.2e}")


def bench_region(sizes: list[int], rng: np.random.Generator) -> None:
    print("\n# Screen.mark_region and the mask vs one numpy boolean pass")
    for n in sizes:
        df = pd.DataFrame({"x": rng.normal(size=n), "y": rng.lognormal(size=n)})
        s = strayline.Screen(df)
        s.mask_array()
        x = df["x"].to_numpy()
        base = timed(lambda x=x: (x > 1.0) | (x < -1.0), 5)
        flip = iter(range(10**9))

        def region(s: strayline.Screen = s, flip: Any = flip) -> None:
            k = next(flip) % 2
            s.mark_region(0.5 + k * 0.1, 2.0, -10, 10, mode="replace")

        t = timed(region, 5)
        big = n >= 10**6  # the target is set at a million rows and more
        report("mark_region", n, t, base, "numpy boolean pass", "<= 5x slower (1e6+)",
               t / base <= 5 if big else None)

        def mask(s: strayline.Screen = s) -> None:
            s._changed("x")
            s.mask_array()

        t = timed(mask, 5)
        report("mask recomputation", n, t, base, "numpy boolean pass", "<= 5x slower (1e6+)",
               t / base <= 5 if big else None)


def bench_bytes(sizes: list[int], rng: np.random.Generator) -> None:
    print("\n# bytes sent to the browser (first render; one brush update)")
    import comm
    from comm.base_comm import BaseComm

    log: list[int] = []

    class Recording(BaseComm):
        def __init__(self, *a: Any, **k: Any) -> None:
            self.kernel = object()
            super().__init__(*a, **k)

        def publish_msg(self, msg_type: str, data: Any = None, metadata: Any = None,
                        buffers: Any = None, **keys: Any) -> None:
            log.append(len(json.dumps(data, default=str))
                       + sum(memoryview(b).nbytes for b in buffers or []))

    original = comm.create_comm
    comm.create_comm = lambda *a, **k: Recording(*a, **k)
    try:
        for n in sizes:
            df = pd.DataFrame({"x": rng.lognormal(size=n), "y": rng.normal(size=n)})
            log.clear()
            p = strayline.panel(df, mask="m", namespace={})
            first, biggest_first = sum(log), max(log)
            log.clear()
            p.brush(0.5, 3.0, -1e9, 1e9)
            brush, biggest = sum(log), max(log)
            ok = biggest_first < 1_000_000 and biggest < 1_000_000
            print(f"{'bytes':<34} n={n:>10,}  first render {first / 1e3:9.1f} kB "
                  f"(largest message {biggest_first / 1e3:7.1f} kB)  brush {brush / 1e3:8.1f} kB "
                  f"(largest {biggest / 1e3:7.1f} kB)  target < 1 MB each  "
                  f"{'ok' if ok else 'SHORT'}")
            if not ok:
                FAILURES.append(f"bytes at n={n}")
    finally:
        comm.create_comm = original


def bench_memory(n: int, rng: np.random.Generator) -> None:
    print("\n# peak memory of a full screen, as a multiple of the column's bytes")
    x = rng.lognormal(size=n)
    df = pd.DataFrame({"x": x})
    gc.collect()
    tracemalloc.start()
    s = strayline.Screen(df)
    s.configure(rule="adjusted_fences")
    s.mask_array()
    s.qq_coordinates()
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    ratio = peak / x.nbytes
    mark = "" if n < 10**7 else ("ok" if ratio <= 4 else "SHORT")  # the target is set at 1e7
    print(f"{'peak memory':<34} n={n:>10,}  {peak / 1e6:9.1f} MB  column {x.nbytes / 1e6:.1f} MB"
          f"  ratio {ratio:5.2f}  target <= 4x (1e7)  {mark}")


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="1e4,1e5,1e6,1e7")
    ap.add_argument("--quick", action="store_true", help="small sizes, under a minute")
    ap.add_argument("--check", action="store_true", help="exit 1 if a stable target is missed")
    args = ap.parse_args(argv)
    sizes = [int(float(s)) for s in args.sizes.split(",")]
    if args.quick:
        sizes = [s for s in sizes if s <= 10**5] or [10**4, 10**5]
    rng = np.random.default_rng(20261202)
    print(f"strayline {strayline.__version__}, numpy {np.__version__}, {os.cpu_count()} cores, "
          f"python {sys.version.split()[0]}")
    big = max(sizes)
    bench_full(sizes, rng)
    bench_medcouple(sizes, rng, args.quick)
    bench_gesd(min(big, 10**6) if not args.quick else 10**5, 1000 if not args.quick else 200, rng)
    bench_lambda(10**6 if not args.quick else 10**5, rng)
    bench_region(sizes, rng)
    bench_bytes([s for s in sizes if s <= 10**7], rng)
    bench_memory(big, rng)
    if FAILURES:
        print("\nmissed stable targets:\n  " + "\n  ".join(FAILURES))
    return 1 if (args.check and FAILURES) else 0


if __name__ == "__main__":
    raise SystemExit(main())
