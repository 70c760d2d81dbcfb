"""Benchmark: variants per second of the bundled sweeps with 1 and 2 local processes, and the scaling ratio.

Run on demand:  python tests/bench/bench_sweep.py [--variants N] [scenario.yaml ...]
Default: N = 8 variants spread evenly over each bundled sweep (the extraction loop, 528 variants, and the
captured-CO2 conditioning, 42 variants); the full sweeps run with ``supercrit sweep FILE``.
Goals (issue 8): >= 1.7x from 1 to 2 processes on 2 cores; >= 20 variants/s per core for the extraction loop.
Each variant evaluates every route of the sweep (2 routes in both bundled sweeps). The 2-process pool is
forked from this process after the 1-process pass, so neither pass pays for imports.
"""
from __future__ import annotations

import argparse
import os
import time
from pathlib import Path

from supercrit.sweep.evaluate import make_task
from supercrit.sweep.run import _execute, _read_source
from supercrit.sweep.variants import iter_variants

ROOT = Path(__file__).resolve().parents[2]
BUNDLED = [ROOT / "scenarios" / "co2_extraction_loop.yaml", ROOT / "scenarios" / "captured_co2_conditioning.yaml"]


def bench(path, n: int):
    sc, data, hint = _read_source(path)
    variants = list(iter_variants(sc.sweep))
    pick = sorted({round(i * (len(variants) - 1) / max(n - 1, 1)) for i in range(n)})
    tasks = [make_task(data, sc, hint, variants[i].index, variants[i].values) for i in pick]
    # warm-up: the scenario read once, first-call costs paid (the first and last variants: between them they
    # build the per-process caches, e.g. the pseudo-critical line, which a sweep of hundreds of variants
    # builds once per process)
    list(_execute([tasks[0], tasks[-1]], 1, None))
    out = {}
    for jobs in (1, 2):
        t0 = time.perf_counter()
        recs = list(_execute(tasks, jobs, None))
        dt = time.perf_counter() - t0
        failed = sum(1 for r in recs if r["error"])
        out[jobs] = (len(recs) / dt, dt, failed)
    return sc, len(tasks), out


def _spin(n: int) -> int:
    s = 0
    for i in range(n):
        s += i * i
    return s


def machine_scaling(n: int = 4_000_000) -> float:
    """Control: the 2-process speed-up of plain Python arithmetic on this machine right now (other work on
    the machine lowers it; the sweep cannot scale better than this)."""
    from concurrent.futures import ProcessPoolExecutor

    t0 = time.perf_counter()
    for _ in range(4):
        _spin(n)
    t1 = time.perf_counter() - t0
    with ProcessPoolExecutor(2) as ex:
        list(ex.map(_spin, [n]))
        t0 = time.perf_counter()
        list(ex.map(_spin, [n] * 4))
        t2 = time.perf_counter() - t0
    return t1 / t2


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("files", nargs="*", default=[str(p) for p in BUNDLED])
    ap.add_argument("--variants", type=int, default=8)
    args = ap.parse_args(argv)
    print(f"cores: {os.cpu_count()}; load average before: {os.getloadavg()[0]:.2f}")
    for f in args.files:
        sc, n, out = bench(f, args.variants)
        r1, t1, f1 = out[1]
        r2, t2, f2 = out[2]
        print(f"{sc.name}: {n} of {sc.sweep.count} variants x {len(sc.sweep.routes)} routes")
        print(f"  1 process : {r1:8.3f} variants/s ({t1:6.1f} s, {f1} failed)  = {r1:.3f} variants/s per core"
              f"   goal >= 20 per core{'' if 'extraction' in sc.name else ' (stated for the extraction loop)'}")
        print(f"  2 processes: {r2:8.3f} variants/s ({t2:6.1f} s, {f2} failed)")
        print(f"  scaling 2/1: {r2 / r1:.2f}x   goal >= 1.7x   (control, plain Python arithmetic on this machine "
              f"now: {machine_scaling():.2f}x)")
    print(f"load average after: {os.getloadavg()[0]:.2f} (other work on the machine lowers both numbers)")


if __name__ == "__main__":
    main()
