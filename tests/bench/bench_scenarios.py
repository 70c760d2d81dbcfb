"""Benchmark: each bundled scenario - solve time (and per-step cost), analysis time, report time and size.

Run on demand:  python tests/bench/bench_scenarios.py [scenario.yaml ...]
Goals: each bundled scenario solved in under 1 s after import (issue 4), analysed in under 2 s including
path sampling (issue 5), its report written in under 2 s after the run (issue 6).
"""
from __future__ import annotations

import sys
import tempfile
import time
from collections import defaultdict
from pathlib import Path

from supercrit import steps as steps_pkg
from supercrit.analysis.analyze import analyze_scenario
from supercrit.io import write_atomic
from supercrit.runner import Run, build_report_html
from supercrit.scenario import load_scenario
from supercrit.steps.solve import ScenarioResult, solve_route

ROOT = Path(__file__).resolve().parents[2]


def main(files):
    cost = defaultdict(float)
    calls = defaultdict(int)
    original = dict(steps_pkg.RUNNERS)

    def timed(kind, fn):
        def run(spec, inlets, ctx):
            t0 = time.perf_counter()
            try:
                return fn(spec, inlets, ctx)
            finally:
                cost[kind] += time.perf_counter() - t0
                calls[kind] += 1
        return run

    for kind, fn in original.items():
        steps_pkg.RUNNERS[kind] = timed(kind, fn)
    print(f"{'scenario':34s} {'solve s':>8s} {'analyse s':>9s} {'report s':>8s} {'report MB':>9s}")
    for f in files:
        sc = load_scenario(f)
        t0 = time.perf_counter()
        routes = {rt.id: solve_route(sc, rt.id) for rt in sc.routes}
        t1 = time.perf_counter()
        result = ScenarioResult(sc, routes)
        analysis = analyze_scenario(sc, result)
        t2 = time.perf_counter()
        html = build_report_html(Run(sc, result, analysis))
        with tempfile.TemporaryDirectory() as d:
            p = write_atomic(Path(d) / "r.html", html)
            size = p.stat().st_size
        t3 = time.perf_counter()
        print(f"{Path(f).stem:34s} {t1 - t0:8.2f} {t2 - t1:9.2f} {t3 - t2:8.2f} {size / 1e6:9.2f}")
    print("\nper-step cost over all scenarios (solve only; recycles repeat steps):")
    for kind in sorted(cost, key=cost.get, reverse=True):
        print(f"  {kind:10s} {cost[kind]:8.2f} s in {calls[kind]:5d} calls, {cost[kind] / calls[kind] * 1e3:8.1f} ms/call")
    steps_pkg.RUNNERS.update(original)


if __name__ == "__main__":
    main(sys.argv[1:] or sorted(str(p) for p in (ROOT / "scenarios").glob("*.yaml")))
