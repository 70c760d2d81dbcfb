"""Resource checks: a scenario with 500 steps and a sweep of 10,000 variants run within memory.

Each check prints its wall time and peak memory.

Run on demand:
    python tests/bench/bench_resources.py [n_steps]               # the long chain (default 500 steps)
    python tests/bench/bench_resources.py --sweep 10000 [2000 ...] [--jobs 2] [--no-report]

The sweep check writes a scenario of its own (nitrogen, Peng-Robinson, heated then cooled: a cheap route;
settings invented for this check) whose ``sweep:`` section gives exactly N variants and raises the
scenario's own ``max_variants`` guard to N, then runs it with :func:`supercrit.sweep.run_sweep` exactly as
``supercrit sweep FILE --jobs 2 --out <temporary folder>`` does (table and HTML report included). Each count
runs in a fresh interpreter so that the high-water marks of one do not hide those of the next. Printed per
count: variants done and failed, wall time, variants/s; the parent's tracemalloc peak (Python allocations)
while the variants run and while the table and report are written, and the memory it still holds when the
last variant is in; the parent's and the largest worker's peak resident memory (``ru_maxrss`` of
RUSAGE_SELF and RUSAGE_CHILDREN); the size of each output on disk. With two counts or more the growth of
the parent's peaks per variant is printed: results stream to the log on disk, so the parent should hold
only the compact records and the tidy table, a few kB per variant.
"""
from __future__ import annotations

import argparse
import json
import math
import os
import resource
import subprocess
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

from supercrit.runner import run_scenario


def scenario_text(n_steps: int) -> str:
    lines = ["name: long-chain", "fluid: {components: N2, model: peng-robinson}",
             "feed: {T: 20 degC, p: 50 bar, flow: 1 kg/s}", "routes:", "  - id: chain", "    steps:",
             "      - {id: f, kind: feed}"]
    for i in range(n_steps - 2):
        kind, T = ("heat", 40) if i % 2 == 0 else ("cool", 20)
        lines.append(f"      - {{id: s{i}, kind: {kind}, T_out: {T} degC, dp: 0.01 bar}}")
    lines.append("      - {id: end, kind: sink}")
    return "\n".join(lines) + "\n"


def main(n_steps=500):
    tracemalloc.start()
    t0 = time.perf_counter()
    run = run_scenario(scenario_text(n_steps))
    dt = time.perf_counter() - t0
    _, peak = tracemalloc.get_traced_memory()
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    rr = run.result.routes["chain"]
    print(f"{n_steps} steps: solved and analysed in {dt:.1f} s; verdict {run.analysis.routes[0].verdict.level}; "
          f"balance mass {rr.balance.mass:.1e}, energy {rr.balance.energy:.1e}")
    print(f"peak Python allocations {peak / 1e6:.0f} MB; peak resident memory {rss:.0f} MB")


# --- the sweep check -------------------------------------------------------------------------------------

def grid_shape(n: int) -> tuple[int, int]:
    """(heater values, cooler values) with product ``n``, as square as ``n`` allows."""
    a = max(d for d in range(1, math.isqrt(n) + 1) if n % d == 0)
    return a, n // a


def _axis(setting: str, start_degC: float, span_K: float, n: int) -> str:
    if n == 1:
        return f"    - setting: {setting}\n      values: [{start_degC} degC]\n"
    step = span_K / n
    return (f"    - setting: {setting}\n      range: {{from: {start_degC} degC, to: {start_degC + (n - 1) * step!r} degC,"
            f" step: {step!r} K}}\n")


def sweep_scenario_text(n_variants: int) -> str:
    """A scenario whose sweep has exactly ``n_variants`` variants: heater outlet 40..90 degC x cooler outlet
    -40..0 degC (settings invented for this check; cooler outlets below the default lowest metal temperature,
    -29 degC, make those variants infeasible, so the table holds more than one verdict and reason)."""
    nh, nc = grid_shape(n_variants)
    return ("# Resource check of a sweep (tests/bench/bench_resources.py); settings invented for the check.\n"
            "name: sweep-resources\n"
            "description: nitrogen heated then cooled, heater outlet x cooler outlet\n"
            "fluid: {components: N2, model: peng-robinson}\n"
            "feeds:\n  - {id: gas, T: 20 degC, p: 10 bar, flow: 1 kg/s}\n"
            "routes:\n  - id: heat-and-cool\n    steps:\n"
            "      - {id: in, kind: feed}\n"
            "      - {id: heater, kind: heat, T_out: 60 degC, dp: 0.2 bar}\n"
            "      - {id: cooler, kind: cool, T_out: 30 degC, dp: 0.2 bar}\n"
            "      - {id: out, kind: sink}\n"
            f"sweep:\n  max_variants: {n_variants}\n  vary:\n"
            + _axis("steps.heater.T_out", 40.0, 50.0, nh) + _axis("steps.cooler.T_out", -40.0, 40.0, nc))


def _mb(nbytes: float) -> str:
    return f"{nbytes / 1e6:.1f} MB"


def sweep_once(n_variants: int, jobs: int = 2, report: bool = True) -> dict:
    """Run the sweep of ``n_variants`` in this process (workers forked from it) and measure it.

    The parent traces its Python allocations with tracemalloc; the workers do not (tracing stops in each
    child right after the fork, so they run at full speed). ``write_results`` is wrapped only to read the
    tracemalloc counters when the last variant is in; what it does is unchanged.
    """
    import supercrit.sweep.table as table
    from supercrit.sweep import run_sweep

    phases = {}
    real_write = table.write_results

    def write_results(outcome, paths, *, report=True):
        phases["held_after_variants"], phases["peak_variants"] = tracemalloc.get_traced_memory()
        tracemalloc.reset_peak()
        try:
            return real_write(outcome, paths, report=report)
        finally:
            phases["peak_write"] = tracemalloc.get_traced_memory()[1]

    table.write_results = write_results
    os.register_at_fork(after_in_child=tracemalloc.stop)
    with tempfile.TemporaryDirectory(prefix="supercrit-sweep-bench-") as tmp:
        src = Path(tmp) / "sweep-resources.yaml"
        src.write_text(sweep_scenario_text(n_variants), encoding="utf-8")
        tracemalloc.start()
        t0 = time.perf_counter()
        out = run_sweep(src, Path(tmp) / "output", jobs=jobs, report=report,
                        announce=lambda text: print(f"  {text}", flush=True))
        dt = time.perf_counter() - t0
        tracemalloc.stop()
        sizes = {k: p.stat().st_size for k, p in out.paths.items() if p.exists()}
        assert out.spec.count == n_variants, (out.spec.count, n_variants)
        rows = sum(1 for _ in open(out.paths["csv"], encoding="utf-8")) - 1
    kinds = {}
    for rec in out.records.values():
        for rr in rec["routes"]:
            kinds[rr["verdict"]] = kinds.get(rr["verdict"], 0) + 1
    return {"variants": n_variants, "jobs": jobs, "computed": out.computed, "failed": out.failed,
            "stopped": out.stopped, "wall_s": dt, "rate": out.computed / dt, "rows": rows, "verdicts": kinds,
            **phases, "rss_self_kB": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss,
            "rss_children_kB": resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss, "sizes": sizes}


def print_sweep(m: dict) -> None:
    n = m["variants"]
    print(f"{n} variants, {m['jobs']} processes: {m['computed']} done, {m['failed']} failed"
          f"{' (stopped early)' if m['stopped'] else ''}; {m['wall_s']:.1f} s wall, {m['rate']:.1f} variants/s; "
          f"{m['rows']} table rows; verdicts {m['verdicts']}")
    print(f"  parent, tracemalloc: peak {_mb(m['peak_variants'])} while the variants ran, "
          f"{_mb(m['held_after_variants'])} held when the last one was in "
          f"({m['held_after_variants'] / n / 1e3:.1f} kB/variant), peak {_mb(m['peak_write'])} while writing "
          f"the table{' and report' if 'html' in m['sizes'] else ''}")
    print(f"  peak resident memory (ru_maxrss): parent {m['rss_self_kB'] / 1024:.0f} MB, largest worker "
          f"{m['rss_children_kB'] / 1024:.0f} MB")
    print("  on disk: " + ", ".join(f"{k} {_mb(s)}" for k, s in m["sizes"].items()))


def main_sweep(counts, jobs: int = 2, report: bool = True) -> list[dict]:
    """Each count in a fresh interpreter; then the growth of the parent's memory per variant."""
    print(f"cores: {os.cpu_count()}; load average before: {os.getloadavg()[0]:.2f}")
    results = []
    for n in counts:
        cmd = [sys.executable, __file__, "--sweep-once", str(n), "--jobs", str(jobs)] + ([] if report else ["--no-report"])
        proc = subprocess.run(cmd, stdout=subprocess.PIPE, text=True, check=True)
        lines = proc.stdout.splitlines()
        for line in lines[:-1]:
            print(line)
        m = json.loads(lines[-1])
        print_sweep(m)
        results.append(m)
    if len(results) >= 2:
        a, b = results[0], results[-1]
        dn = b["variants"] - a["variants"]
        for key, what in (("peak_variants", "peak while the variants ran"), ("held_after_variants", "held at the end"),
                          ("peak_write", "peak while writing")):
            print(f"parent {what}: {_mb(a[key])} at {a['variants']} -> {_mb(b[key])} at {b['variants']} variants; "
                  f"{(b[key] - a[key]) / dn / 1e3:.2f} kB per added variant")
        drss = (b["rss_self_kB"] - a["rss_self_kB"]) * 1024 / dn
        print(f"parent ru_maxrss: {a['rss_self_kB'] / 1024:.0f} -> {b['rss_self_kB'] / 1024:.0f} MB; "
              f"{drss / 1e3:.2f} kB per added variant")
    print(f"load average after: {os.getloadavg()[0]:.2f}")
    return results


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("n_steps", nargs="?", type=int, default=500, help="steps of the long chain (default 500)")
    ap.add_argument("--sweep", type=int, nargs="+", metavar="N", help="run the sweep check with N variants")
    ap.add_argument("--sweep-once", type=int, help=argparse.SUPPRESS)  # one count, in this interpreter
    ap.add_argument("--jobs", type=int, default=2, help="worker processes of the sweep (default 2)")
    ap.add_argument("--no-report", action="store_true", help="skip the sweep's HTML report")
    args = ap.parse_args()
    if args.sweep_once:
        print(json.dumps(sweep_once(args.sweep_once, args.jobs, not args.no_report)))
    elif args.sweep:
        main_sweep(args.sweep, args.jobs, not args.no_report)
    else:
        main(args.n_steps)
